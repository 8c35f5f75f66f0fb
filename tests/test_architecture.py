"""The layout of zfit/ stays readable: no module over 800 lines, no import
cycle, and no stage that reaches back upstream (docs/architecture.md).

The stage order is the data flow: a sweep is read (io) into the measured
objects (data), fitted (fit), identified (identification); captures
(capture) end in a sweep too; outputs present results; lots (lot) run many
identifications and write through outputs; the command line (cli) sits on
top. A module may import from its own stage and from any stage before it,
never from one after it (function-level imports included).
"""

import ast
from pathlib import Path

PACKAGE = Path(__file__).resolve().parent.parent / "zfit"

#: Stages in data-flow order; "" is the package's own base modules (errors, units, JSON, atomic writes).
STAGES = ("", "data", "io", "fit", "identification", "capture", "outputs", "lot", "cli")

#: A module past this is probably two (issue 10; ARCHITECTURE.md, rules of thumb).
MAX_LINES = 800


def _module(path: Path) -> str:
    parts = list(path.relative_to(PACKAGE.parent).with_suffix("").parts)
    if parts[-1] == "__init__":
        parts = parts[:-1]
    return ".".join(parts)


def _imports():
    """Yield (module, imported module, at module level) for every zfit import."""
    for path in sorted(PACKAGE.rglob("*.py")):
        name = _module(path)
        package = name if path.name == "__init__.py" else name.rpartition(".")[0]
        tree = ast.parse(path.read_text(encoding="utf-8"))
        top = set(map(id, tree.body))
        for node in ast.walk(tree):
            if isinstance(node, ast.ImportFrom) and node.level:
                base = package.split(".")[: len(package.split(".")) - (node.level - 1)]
                target = ".".join(base + ([node.module] if node.module else []))
                names = [target] if node.module else [f"{target}.{a.name}" for a in node.names]
            elif isinstance(node, ast.ImportFrom):
                names = [node.module or ""]
            elif isinstance(node, ast.Import):
                names = [a.name for a in node.names]
            else:
                continue
            for target in names:
                if target == "zfit" or target.startswith("zfit."):
                    yield name, target, id(node) in top


def _stage(module: str) -> str:
    parts = module.split(".")
    return parts[1] if len(parts) > 2 or (len(parts) == 2 and not parts[1].startswith("_")) else ""


def test_no_module_exceeds_800_lines():
    long = {str(p.relative_to(PACKAGE.parent)): n for p in PACKAGE.rglob("*.py")
            if (n := len(p.read_text(encoding="utf-8").splitlines())) > MAX_LINES}
    assert long == {}


def test_no_import_cycle_at_module_level():
    graph: dict[str, set[str]] = {}
    for a, b, top in _imports():
        if top and a != b:
            graph.setdefault(a, set()).add(b)
    # Depth-first search for a back edge (Tarjan 1972 style colouring).
    colour: dict[str, int] = {}
    cycles = []

    def visit(node, path):
        colour[node] = 1
        for nxt in sorted(graph.get(node, ())):
            if colour.get(nxt) == 1:
                cycles.append(path[path.index(nxt):] + [nxt] if nxt in path else [node, nxt])
            elif colour.get(nxt) is None:
                visit(nxt, path + [nxt])
        colour[node] = 2

    for node in sorted(graph):
        if colour.get(node) is None:
            visit(node, [node])
    assert cycles == []


def test_no_stage_imports_a_later_stage():
    order = {s: i for i, s in enumerate(STAGES)}
    upstream = sorted({(a, b) for a, b, _ in _imports()
                       if _stage(a) in order and _stage(b) in order and order[_stage(b)] > order[_stage(a)]
                       and a != "zfit" and a != "zfit.__main__"})
    assert upstream == []


def test_the_checks_see_the_package():
    # Guards the three tests above against passing on an empty walk.
    imports = list(_imports())
    assert len(imports) > 100
    assert {_stage(a) for a, _, _ in imports} >= set(STAGES)

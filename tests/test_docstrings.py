"""Every public function and class documents each of its parameters (numpydoc)."""

import inspect

import pytest

import zfit


def _documented(doc: str, name: str) -> bool:
    # numpydoc allows "a, b : type" lines; a parameter counts when it heads such a line.
    for line in doc.splitlines():
        head = line.strip().split(" : ")[0]
        names = [n.strip().lstrip("*") for n in head.split(",")]
        if name in names and (" : " in line or line.strip() in (name, f"*{name}", f"**{name}")):
            return True
    return False


def _callables(name, obj):
    if inspect.isfunction(obj):
        yield name, obj
    elif inspect.isclass(obj) and not issubclass(obj, BaseException):
        yield name, obj
        for meth_name, meth in vars(obj).items():
            if not meth_name.startswith("_") and inspect.isfunction(meth):
                yield f"{name}.{meth_name}", meth


def _undocumented(name, obj):
    doc = inspect.getdoc(obj) or ""
    if not doc.strip():
        return ["(no docstring)"]
    try:
        sig = inspect.signature(obj)
    except (TypeError, ValueError):
        return []
    return [p for p in sig.parameters if p not in ("self", "cls") and not p.startswith("_") and not _documented(doc, p)]


@pytest.mark.parametrize("public", [n for n in zfit.__all__ if not n.startswith("_")])
def test_public_parameters_are_documented(public):
    obj = getattr(zfit, public)
    problems = {n: m for n, o in _callables(public, obj) if (m := _undocumented(n, o))}
    assert not problems, f"parameters not documented: {problems}"

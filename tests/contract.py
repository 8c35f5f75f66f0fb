"""The demo's file outputs in a form that can be compared across versions.

`contract_outputs` runs ``zfit demo`` (every part) and ``zfit info --json`` on
each demo sweep into a folder, and returns each JSON, netlist and Touchstone
text with the run's own paths and the version number replaced by fixed
markers, so that a committed copy (``tests/data/demo_contract/``) shows any
change to a contract byte for byte.
"""

from __future__ import annotations

import os
import re
from pathlib import Path

from typer.testing import CliRunner

DEMO = Path(__file__).resolve().parent.parent / "demo_sweeps"
SNAPSHOT = Path(__file__).resolve().parent / "data" / "demo_contract"

#: The sweeps given to ``zfit info``, with the connection each needs.
INFO_FILES = (
    ("ind_2u2_reflection.s1p", ()),
    ("ind_10u_series_thru.s2p", ("--connection", "series-thru")),
    ("cap_100n_shunt_thru.s2p", ("--connection", "shunt-thru")),
    ("choke_470u_winding_resonance.ts", ("--connection", "series-thru")),
    ("ind_47u_lcr_ls_rs.txt", ()),
    ("ind_100u_analyser_zphase.csv", ()),
    ("cap_4u7_lcr_cp_d.csv", ()),
)


def _normalised(text: str, sweeps: Path) -> str:
    import zfit

    for root in (str(sweeps),):
        text = text.replace(root + os.sep, "<dir>/").replace(root, "<dir>")
    text = re.sub(r'("zfit_version": )"[^"]*"', r'\1"<version>"', text)
    return text.replace(f"zfit {zfit.__version__}", "zfit <version>")


def contract_outputs(folder: Path) -> dict[str, str]:
    """Return {file name: normalised text} of the demo's contract outputs.

    The demo files are copied to a folder whose path has the same length on
    every machine (``/tmp/zfit-contract-XXXXXXXX``): a netlist header wraps
    the source path at a fixed width, so the path's length must not vary.
    """
    import shutil
    import tempfile

    from zfit.cli._app import app

    runner = CliRunner()
    old = os.getcwd()
    sweeps = Path(tempfile.mkdtemp(prefix="zfit-contract-", dir="/tmp"))
    try:
        for p in DEMO.iterdir():
            if p.is_file():
                shutil.copy2(p, sweeps / p.name)
        os.chdir(folder)
        r = runner.invoke(app, ["demo", "--sweeps", str(sweeps), "--out", "demo"])
        assert r.exit_code == 0, r.output
        for name, options in INFO_FILES:
            r = runner.invoke(app, ["info", str(sweeps / name), *options, "--json", f"info-{name}.json"])
            assert r.exit_code == 0, r.output
        out = {}
        for path in sorted([*(folder / "demo").iterdir(), *folder.glob("info-*.json")]):
            if path.suffix in (".json", ".cir", ".s1p"):
                out[path.name] = _normalised(path.read_text(encoding="utf-8"), sweeps)
    finally:
        os.chdir(old)
        shutil.rmtree(sweeps, ignore_errors=True)
    return out


if __name__ == "__main__":
    import shutil
    import sys
    import tempfile

    with tempfile.TemporaryDirectory() as tmp:
        outputs = contract_outputs(Path(tmp))
    if SNAPSHOT.exists():
        shutil.rmtree(SNAPSHOT)
    SNAPSHOT.mkdir(parents=True)
    for name, text in outputs.items():
        (SNAPSHOT / name).write_text(text, encoding="utf-8")
    sys.stdout.write(f"{len(outputs)} files written to {SNAPSHOT}\n")

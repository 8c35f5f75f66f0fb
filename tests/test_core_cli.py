"""``zfit core`` on the command line: outputs, the JSON contract zfit.core/1, one-line errors with exit status 2.

The winding and the bead are generated from the forms written out in tests/core_sweeps.py;
the schema is checked with the validator of tests/test_identify_schema.py.
"""

import json
import math
from pathlib import Path

import numpy as np
import pytest
from typer.testing import CliRunner

from core_sweeps import bead_z, debye_winding, measured
from test_identify_schema import validate
from zfit.cli._app import app

SCHEMA = json.loads((Path(__file__).parents[1] / "zfit" / "schemas" / "core.schema.json").read_text())


def run(*args):
    return CliRunner().invoke(app, [str(a) for a in args])


@pytest.fixture(scope="module")
def core_file(tmp_path_factory):
    f = np.geomspace(1e3, 3e7, 301)
    return measured(tmp_path_factory.mktemp("core"), f, debye_winding(f, 2000, 40, 1e6, 5, 0.02, 3e-12),
                    "reflection", 7).source


def test_core_command_writes_json_and_plot(core_file, tmp_path):
    out, png = tmp_path / "c.json", tmp_path / "c.png"
    res = run("core", core_file, "--turns", 5, "--od", 25, "--id", 15, "--height", 10, "--json", out, "--plot", png)
    assert res.exit_code == 0, res.output
    doc = json.loads(out.read_text())
    validate(doc, SCHEMA)
    assert doc["schema"] == "zfit.core/1" and doc["kind"] == "core"
    # Generated with mu_i = 2000 and f_r = 1 MHz (Debye): 3 % and 5 % (issue 13).
    assert doc["figures"]["mu_i"]["value"] == pytest.approx(2000, rel=0.03)
    assert doc["figures"]["mu_imag_peak"]["value_hz"] == pytest.approx(1e6, rel=0.05)
    assert png.stat().st_size > 10_000
    # Nothing the user owns is overwritten without --force.
    again = run("core", core_file, "--turns", 5, "--od", 25, "--id", 15, "--height", 10, "--json", out)
    assert again.exit_code == 2 and "exists already" in again.output


def test_bead_command_writes_netlist(tmp_path):
    f = np.geomspace(1e6, 3e9, 401)
    p = measured(tmp_path, f, bead_z(f), "series-thru", 3, name="bead").source
    out, cir = tmp_path / "b.json", tmp_path / "b.cir"
    res = run("core", p, "--bead", "-c", "series-thru", "--json", out, "--netlist", cir)
    assert res.exit_code == 0, res.output
    doc = json.loads(out.read_text())
    validate(doc, SCHEMA)
    assert doc["kind"] == "bead" and doc["bead"]["model"]["n_sections"] == 2
    # |Z| at 100 MHz of the generating circuit, within 3 % (issue 13).
    assert doc["bead"]["spot"][0]["z_abs_ohm"] == pytest.approx(abs(bead_z([100e6])[0]), rel=0.03)
    assert ".subckt bead a b" in cir.read_text()


def _one_line_error(res, text):
    assert res.exit_code == 2, res.output
    lines = [ln for ln in res.output.splitlines() if ln.strip()]
    assert len(lines) == 1 and lines[0].startswith("zfit: error:") and text in lines[0], res.output
    assert "Traceback" not in res.output


def test_inner_diameter_not_below_outer(core_file):
    _one_line_error(run("core", core_file, "-N", 5, "--od", 15, "--id", 15, "--height", 10), "--id (15 mm) must be below --od")


def test_zero_turns(core_file):
    _one_line_error(run("core", core_file, "-N", 0, "--od", 25, "--id", 15, "--height", 10), "--turns must be a whole number")


def test_no_inductive_region(tmp_path):
    # A 100 nF capacitor, 1/(j omega C) (definition): capacitive over the whole sweep.
    f = np.geomspace(1e3, 1e6, 101)
    z = 1 / (2j * math.pi * f * 100e-9) + 0.01
    p = tmp_path / "cap.csv"
    p.write_text("f,R,X\n" + "".join(f"{a:.8g},{b.real:.8g},{b.imag:.8g}\n" for a, b in zip(f, z)))
    res = run("core", p, "--columns", "f=1,Rs=2,Xs=3", "-N", 5, "--od", 25, "--id", 15, "--height", 10)
    _one_line_error(res, "no inductive region")
    res = run("core", p, "--columns", "f=1,Rs=2,Xs=3", "--bead")
    _one_line_error(res, "no inductive region")

"""The ``zfit step`` command on the demo captures.

Reference values: the invented coil's element values written in
demo_sweeps/make_demo_capture.py (L = 4.7 mH, R_w = 12 ohm, C_p = 38 pF),
and Thomson's formula f = 1/(2 pi sqrt(L C)) for its ringing.
"""

import csv
import json
import math
import re
from pathlib import Path

import numpy as np
import pytest
from typer.testing import CliRunner

from zfit.cli._app import app

DEMO = Path(__file__).resolve().parent.parent / "demo_sweeps"
SQUARE = DEMO / "coil_4m7_square_1k.csv"
RING = DEMO / "coil_4m7_ring_100k.csv"
RING_ADDED = DEMO / "coil_4m7_ring_100k_plus_100p.csv"


def _validate(d):
    # The step schema, with its "impedance" resolved to the identify schema (jsonschema, a reference library).
    jsonschema = pytest.importorskip("jsonschema")
    referencing = pytest.importorskip("referencing")
    from importlib.resources import files

    step = json.loads(files("zfit").joinpath("schemas/step.schema.json").read_text())
    ident = json.loads(files("zfit").joinpath("schemas/identify.schema.json").read_text())
    registry = referencing.Registry().with_resource(ident["$id"], referencing.Resource.from_contents(ident))
    jsonschema.Draft202012Validator(step, registry=registry).validate(d)


def run(*args):
    return CliRunner().invoke(app, ["step", *map(str, args)])


def test_shunt_identifies_the_demo_coil(tmp_path):
    out = tmp_path / "r.json"
    resp = tmp_path / "h.csv"
    res = run(SQUARE, "--input", "CH1", "--output", "CH2", "--shunt", "1k", "--json", out, "--response", resp)
    assert res.exit_code == 0, res.output
    assert "time const.:" in res.output and "L " in res.output
    d = json.loads(out.read_text())
    assert d["schema"] == "zfit.step/1" and d["edges"] == 19
    _validate(d)
    p = d["impedance"]["parameters"]
    # The invented coil's values from the demo script: within 3 % (L) and 8 % (C_p).
    assert p["L"]["value"] == pytest.approx(4.7e-3, rel=0.03)
    assert p["C_p"]["value"] == pytest.approx(38e-12, rel=0.08)
    # The identified values agree with the invented ones within 3 standard uncertainties.
    assert abs(p["L"]["value"] - 4.7e-3) < 3 * p["L"]["std"]
    assert abs(p["C_p"]["value"] - 38e-12) < 3 * p["C_p"]["std"]
    # tau of H = R/(R + R_w + sL) with the stray C: near L/(R + R_w) = 4.64 us, within 3 %.
    assert d["time_constant_s"] == pytest.approx(4.7e-3 / 1012.0, rel=0.03)
    rows = list(csv.reader(line for line in resp.read_text().splitlines() if not line.startswith("#")))
    assert rows[0] == ["f_hz", "mag_db", "phase_deg", "mag_db_std", "phase_std_deg", "coherence", "usable"]
    f = np.array([float(r[0]) for r in rows[1:]])
    usable = np.array([int(r[6]) for r in rows[1:]], bool)
    assert f[usable][0] == pytest.approx(d["usable_band_hz"][0]) and f[usable][-1] == pytest.approx(d["usable_band_hz"][1])
    # Nothing is overwritten without --force: exit status 2 and one line.
    again = run(SQUARE, "--input", "CH1", "--output", "CH2", "--json", out)
    assert again.exit_code == 2 and "exists already" in again.output


def test_single_step_with_shunt(tmp_path):
    # QA's case: one edge (not a square wave) with --shunt used to fail the
    # sweep's passivity check; the capture is the lsim reference of
    # tests/test_step.py (coil 4.7 mH, 12 ohm, 38 pF with a 1 kohm sense resistor).
    from test_step import single_step_coil_capture

    (L, _rw, Cp, _rs), _, cap = single_step_coil_capture(3)
    path = tmp_path / "cap.csv"
    t = np.arange(cap.n_samples) * cap.dt
    np.savetxt(path, np.column_stack([t, cap.channels["CH1"], cap.channels["CH2"]]), delimiter=",",
               header="Time,CH1,CH2", comments="", fmt="%.9g")
    out = tmp_path / "r.json"
    res = run(path, "--input", "CH1", "--output", "CH2", "--shunt", "1k", "--json", out)
    assert res.exit_code == 0, res.output
    p = json.loads(out.read_text())["impedance"]["parameters"]
    # The lsim reference's element values: L within 3 %, C_p within 8 % (issue 4).
    assert p["L"]["value"] == pytest.approx(L, rel=0.03)
    assert p["C_p"]["value"] == pytest.approx(Cp, rel=0.08)


def test_two_resonance_method_on_the_demo(tmp_path):
    res = run(RING, "-i", "2", "-o", "3", "--added-capture", RING_ADDED, "--added-capacitance", "100p",
              "--json", tmp_path / "s.json")
    assert res.exit_code == 0, res.output
    d = json.loads((tmp_path / "s.json").read_text())
    s = d["stray_capacitance"]
    assert s["method"] == "two resonances"
    assert s["value_f"] == pytest.approx(38e-12, rel=0.03)
    assert s["inductance_h"] == pytest.approx(4.7e-3, rel=0.03)
    f0 = 1 / (2 * math.pi * math.sqrt(4.7e-3 * 38e-12))
    assert d["ringing"]["natural_hz"] == pytest.approx(f0, rel=0.01)


def test_errors_are_one_line(tmp_path):
    bad = tmp_path / "bad.csv"
    bad.write_text("Time,CH1\n0,1\n1e-6,2\n2e-6,x\n" + "".join(f"{k}e-6,1\n" for k in range(3, 40)))
    res = run(bad, "--output", "CH1")
    assert res.exit_code == 2
    assert res.output.strip().splitlines()[-1].startswith(f"zfit: error: {bad}:4:")
    res = run(SQUARE, "--output", "CH7")
    assert res.exit_code == 2 and "no channel named 'CH7'" in res.output
    res = run(SQUARE, "-i", "CH1", "-o", "CH2", "--added-capacitance", "100p")
    assert res.exit_code == 2 and "go together" in res.output
    res = run(SQUARE, "-i", "CH1", "-o", "CH2", "--netlist", tmp_path / "x.cir")
    assert res.exit_code == 2 and "--shunt" in res.output and not (tmp_path / "x.cir").exists()


def test_help_carries_the_safety_caution():
    res = CliRunner().invoke(app, ["step", "--help"])
    assert res.exit_code == 0
    text = " ".join(res.output.split())
    assert "ground clip is tied to mains earth" in text and "local codes" in text


def test_json_to_standard_output():
    res = CliRunner().invoke(app, ["step", str(RING), "-i", "CH1", "-o", "CH2", "--json", "-"])
    assert res.exit_code == 0
    d = json.loads(res.stdout)
    f0 = 1 / (2 * math.pi * math.sqrt(4.7e-3 * 38e-12))
    # Thomson's formula for the demo coil: the damped ringing within 1 % of it.
    assert d["ringing_hz"] == pytest.approx(f0, rel=0.01)


def test_outputs_are_checked_before_anything_is_written(tmp_path):
    # An existing plot refuses the run before the JSON is written (nothing half done).
    (tmp_path / "x.png").write_bytes(b"mine")
    res = run(RING, "-i", "CH1", "-o", "CH2", "--json", tmp_path / "a.json", "--plot", tmp_path / "x.png")
    assert res.exit_code == 2
    assert res.output.strip().splitlines()[-1] == f"zfit: error: {tmp_path / 'x.png'}: exists already; give --force to overwrite it"
    assert not (tmp_path / "a.json").exists() and (tmp_path / "x.png").read_bytes() == b"mine"
    # A folder given as the file, and a file given as a folder, even with --force.
    (tmp_path / "d.png").mkdir()
    res = run(RING, "-i", "CH1", "-o", "CH2", "--plot", tmp_path / "d.png", "--force")
    assert res.exit_code == 2
    assert res.output.strip() == f"zfit: error: {tmp_path / 'd.png'}: is a folder; give the name of a file to write"
    res = run(RING, "-i", "CH1", "-o", "CH2", "--json", tmp_path / "x.png" / "a.json")
    assert res.exit_code == 2
    assert res.output.strip() == (f"zfit: error: {tmp_path / 'x.png' / 'a.json'}: cannot write here: "
                                  f"{tmp_path / 'x.png'} is a file, not a folder")


def test_summary_says_why_a_figure_is_missing_and_rounds_percent_as_gum():
    from zfit.outputs._views import percent_std as _percent

    # GUM (JCGM 100:2008, 7.2.6): two digits of the uncertainty, the value to the same place.
    assert _percent(8.198770868, 0.0826699) == "8.199 ± 0.083 %"
    assert _percent(0.48612, 0.0431) == "0.486 ± 0.043 %"
    assert _percent(12.345, 1.7) == "12.3 ± 1.7 %"
    res = CliRunner().invoke(app, ["step", str(RING), "-i", "CH1", "-o", "CH2"])
    assert res.exit_code == 0
    assert "time const.:  n/a" in res.output
    assert "note:         the output follows the input's edge" in res.output


def test_response_csv_header_in_engineering_notation(tmp_path):
    res = run(RING, "-i", "CH1", "-o", "CH2", "--response", tmp_path / "r.csv")
    assert res.exit_code == 0
    head = (tmp_path / "r.csv").read_text().splitlines()[1]
    # 25 MSa/s, 2000-sample segments: 12.5 kHz bins; the usable band starts at the first bin.
    assert head.startswith("# usable band 12.5 kHz to ") and head.endswith("Hz; uncertainties are standard (k=1)")


def test_levels_line_says_how_well_the_levels_are_known():
    # The demo capture (make_demo_capture.py) is 256 codes over 6 V, lsb 23.4 mV, with half a code of
    # noise before rounding: spread sqrt(0.5^2 + 1/12) lsb = 13.6 mV (uniform rounding noise, lsb^2/12).
    res = CliRunner().invoke(app, ["step", str(SQUARE), "-i", "CH1", "-o", "CH2"])
    assert res.exit_code == 0
    line = next(ln for ln in res.output.splitlines() if ln.startswith("levels:"))
    m = re.search(r"\[settled samples spread (\d+) mV / (\d+) mV rms\]", line)
    assert m and all(12 <= int(v) <= 15 for v in m.groups()), line

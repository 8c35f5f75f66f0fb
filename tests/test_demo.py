"""``zfit demo``: runs end to end on demo_sweeps/, names its folder, never
overwrites, and what it writes is consistent (ngspice on the netlist agrees
with the Touchstone file of the same model)."""

import json
import re
from pathlib import Path

import numpy as np
import pytest
from typer.testing import CliRunner

from zfit.cli._app import app

DEMO = Path(__file__).resolve().parent.parent / "demo_sweeps"
pytestmark = pytest.mark.skipif(not (DEMO / "cap_100n_shunt_thru.s2p").is_file(), reason="demo_sweeps/ not present")


def _run(args, cwd):
    import os

    old = os.getcwd()
    os.chdir(cwd)
    try:
        return CliRunner().invoke(app, ["demo", *args])
    finally:
        os.chdir(old)


def test_demo_part_end_to_end(tmp_path):
    r = _run(["--part", "C-0342_100nF"], tmp_path)
    assert r.exit_code == 0, r.output
    out = tmp_path / "zfit-demo-output"
    assert "results in zfit-demo-output/" in r.output
    assert "$ zfit identify" in r.output and "--connection shunt-thru" in r.output
    names = sorted(p.name for p in out.iterdir())
    assert names == sorted(["C-0342_100nF.json", "C-0342_100nF.png", "C-0342_100nF-esr-d.png", "C-0342_100nF.cir",
                            "C-0342_100nF.s1p", "C-0342_100nF.html", "index.html"])
    data = json.loads((out / "C-0342_100nF.json").read_text())
    assert data["schema"] == "zfit.identify/1" and data["model"] == "capacitor"
    # demo_sweeps/README.md: C-0342 is 100 nF, 8 mohm, 0.9 nH; common practice: within a few sigma of the truth.
    p = data["parameters"]
    assert abs(p["C"]["value"] - 100e-9) < 4 * p["C"]["std"] + 1e-3 * 100e-9
    assert abs(p["ESR"]["value"] - 8e-3) < 0.05 * 8e-3
    # An explicit folder that holds files is refused without --force.
    r3 = _run(["--part", "C-0342_100nF", "--out", "zfit-demo-output"], tmp_path)
    assert r3.exit_code == 2 and "zfit-demo-output: holds files already; give --force to write into it" in r3.output


@pytest.mark.ngspice
def test_demo_netlist_and_touchstone_agree_in_ngspice(tmp_path):
    import skrf

    from ngspice import run_ac

    r = _run(["--part", "L-0117_10uH"], tmp_path)
    assert r.exit_code == 0, r.output
    out = tmp_path / "zfit-demo-output"
    text = (out / "L-0117_10uH.cir").read_text()
    name = re.search(r"^\.subckt (\S+) a b$", text, re.M).group(1)
    net = skrf.Network(str(out / "L-0117_10uH.s1p"))
    f, z = run_ac(text + f"X1 n1 0 {name}\n", net.f[0], net.f[-1], 20)
    # The admittance of a parallel-resonant part is smooth where Z peaks, so it
    # is what is interpolated between the file's 801 points onto ngspice's grid.
    y = 1 / net.z[:, 0, 0]
    y_ts = np.interp(np.log(f), np.log(net.f), y.real) + 1j * np.interp(np.log(f), np.log(net.f), y.imag)
    np.testing.assert_allclose(z, 1 / y_ts, rtol=1e-3)  # issue 5: 0.1 %


def test_demo_never_reuses_a_folder_that_holds_files(tmp_path, monkeypatch):
    from zfit.cli._demo import _fresh_folder
    from zfit._errors import ZfitInputError

    monkeypatch.chdir(tmp_path)
    assert _fresh_folder(None, False) == Path("zfit-demo-output")
    (tmp_path / "zfit-demo-output").mkdir()
    assert _fresh_folder(None, False) == Path("zfit-demo-output")  # empty: used
    (tmp_path / "zfit-demo-output" / "x").write_text("mine")
    assert _fresh_folder(None, False) == Path("zfit-demo-output-2")
    (tmp_path / "zfit-demo-output-2").mkdir()
    assert _fresh_folder(None, False) == Path("zfit-demo-output-3")
    assert _fresh_folder(None, True) == Path("zfit-demo-output")  # --force: the default folder
    with pytest.raises(ZfitInputError, match="holds files already; give --force"):
        _fresh_folder(tmp_path / "zfit-demo-output", False)
    # A file given as the folder, or inside the path, is one line, not 'Not a directory'.
    with pytest.raises(ZfitInputError) as info:
        _fresh_folder(tmp_path / "zfit-demo-output" / "x", False)
    assert str(info.value) == f"{tmp_path / 'zfit-demo-output' / 'x'}: is a file; --out names the folder the results go into"
    with pytest.raises(ZfitInputError) as info:
        _fresh_folder(tmp_path / "zfit-demo-output" / "x" / "y", False)
    assert str(info.value) == (f"{tmp_path / 'zfit-demo-output' / 'x' / 'y'}: cannot make this folder: "
                               f"{tmp_path / 'zfit-demo-output' / 'x'} is a file")


def test_demo_rejects_unknown_part(tmp_path):
    r = _run(["--part", "nope"], tmp_path)
    assert r.exit_code == 2 and "the demo parts are" in r.output


def test_demo_without_files_says_so(tmp_path):
    r = _run(["--sweeps", str(tmp_path / "empty")], tmp_path)
    assert r.exit_code == 2 and "demo files missing" in r.output


def test_demo_index_promises_only_the_files_written(tmp_path):
    # The index said every identified part has a Touchstone file; the capture has none.
    r = _run(["--part", "L-0233_4m7H_capture", "--out", "o"], tmp_path)
    assert r.exit_code == 0, r.output
    out = tmp_path / "o"
    assert not list(out.glob("*.s1p")) and (out / "L-0233_4m7H_capture.cir").is_file()
    index = (out / "index.html").read_text()
    assert "the analyser sweeps also a one-port Touchstone file (.s1p) of the model" in index


def test_demo_lot_and_plan(tmp_path):
    # Issue 15: the demo runs the whole job, a lot against limits and a plan too.
    # The demo's invented lot (zfit/cli/_demo.py): C-0342-007 is 82 nF against 100 nF +-5 %
    # (below 95 nF), C-0342-011 has 40 mohm ESR against a 15 mohm maximum; the other ten sit
    # well inside both limits (C within about 4 % at 1.2 % spread, ESR near 8 mohm).
    from zfit.cli import _demo

    folder = tmp_path / "o"
    folder.mkdir()
    import contextlib
    import io

    buf = io.StringIO()
    with contextlib.redirect_stdout(buf):
        _demo._demo_lot(folder, force=False)
        _demo._demo_plan()
    text = buf.getvalue()
    rows = {r["file"].rsplit("/", 1)[-1]: r for r in _csv_rows(folder / "lot" / "summary.csv")}
    assert len(rows) == 12
    assert {k for k, r in rows.items() if r["verdict"] != "pass"} == {"C-0342-007.s2p", "C-0342-011.s2p"}
    assert "C = 82 nF below min 95 nF" in text and "lot: 12 parts: 10 pass, 2 fail" in text
    assert "recommended: " in text
    # The lot report, as `zfit batch --report` writes it, with the command that reproduces it.
    report = (folder / "lot" / "lot-report.html").read_text(encoding="utf-8")
    assert "C-0342-007" in report and "--report" in report and "zfit demo" not in report


def _csv_rows(path):
    import csv

    with open(path, newline="", encoding="utf-8") as fh:
        return list(csv.DictReader(fh))


def test_demo_parts_with_frequency_dependent_losses(tmp_path):
    # demo_sweeps/make_demo_loss_parts.py writes out the truths: L-0455 33 uH, R_dc 0.12 ohm, f_c 40 kHz,
    # 6 pF; C-0520 220 uF, D 0.09, ESR_0 35 mohm, ESL 12 nH; L-0731 L_i 220 uH, mu_inf/mu_i 0.03, f_r 600 kHz,
    # R_dc 80 mohm, 3.5 pF.  Tolerances of issue 12 (L, C 3 %, ESL 10 %, R_dc 20 %) and, for the rest, 5 %
    # (common practice for a model that holds over most of the band).
    r = _run(["--part", "L-0455_33uH_skin", "--part", "C-0520_220uF_electrolytic", "--part", "L-0731_220uH_ferrite",
              "--out", "o"], tmp_path)
    assert r.exit_code == 0, r.output
    out = tmp_path / "o"
    expected = {
        "L-0455_33uH_skin": ("series L with skin-effect winding and parallel C_p",
                             {"L": (33e-6, 0.03), "R_dc": (0.12, 0.2), "f_c": (40e3, 0.1), "C_p": (6e-12, 0.05)}),
        "C-0520_220uF_electrolytic": ("capacitor with constant loss tangent and ESL",
                                      {"C": (220e-6, 0.03), "D": (0.09, 0.05), "ESR_0": (0.035, 0.05),
                                       "ESL": (12e-9, 0.1)}),
        "L-0731_220uH_ferrite": ("core with relaxing permeability, winding resistance and parallel C_p",
                                 {"L_i": (220e-6, 0.03), "L_inf": (6.6e-6, 0.05), "f_r": (600e3, 0.05),
                                  "R_dc": (0.08, 0.2), "C_p": (3.5e-12, 0.05)}),
    }
    for stem, (topology, truths) in expected.items():
        data = json.loads((out / f"{stem}.json").read_text())
        assert data["topology"] == topology and data["choice"]["model_used"] == topology
        for key, (truth, rel) in truths.items():
            assert data["parameters"][key]["value"] == pytest.approx(truth, rel=rel), (stem, key)
        assert (out / f"{stem}.cir").is_file() and (out / f"{stem}.html").is_file()
    # The electrolytic's D at 120 Hz from the measurement against the form's Re Z/-Im Z there (omega ESL = 9 uohm
    # is negligible; the plateau ESR_0 adds omega C ESR_0 = 0.0058 to the oxide's 0.09): 15 % (issue 12).
    spot = json.loads((out / "C-0520_220uF_electrolytic.json").read_text())["spot"][0]
    w, c, d, esr0 = 2 * np.pi * 120, 220e-6, 0.09, 0.035
    z = esr0 + 1 / (1j * w * c * (1 - 1j * d))
    assert spot["f_hz"] == 120 and spot["measurement"]["D"]["value"] == pytest.approx(z.real / -z.imag, rel=0.15)

"""``zfit bias`` on the command line: outputs, the verdict's exit status, and bad input in one line."""

import json

import pytest
from typer.testing import CliRunner

from bias_sets import CURRENTS_A, I_S, N_L, capacitor_set, fall_bias, inductor_set
from zfit.cli._app import app


@pytest.fixture(scope="module")
def sweeps(tmp_path_factory):
    root = tmp_path_factory.mktemp("bias_cli")
    return root, inductor_set(root / "L")


def _run(*args):
    r = CliRunner().invoke(app, ["bias", *map(str, args)])
    assert "Traceback" not in r.output
    return r


def test_bias_list_and_manifest_give_the_same_figures(sweeps, tmp_path):
    root, files = sweeps
    # The list in the order of the files as given (a glob's matches in natural order: L_0.5A before L_1A ... L_4A).
    r = _run(root / "L" / "*.csv", "--bias", ",".join(f"{i:g}" for i in CURRENTS_A), "--bias-unit", "A",
             "-o", tmp_path / "a", "-j", "1", "-q", "--no-plot")
    assert r.exit_code == 0, r.output
    a = json.loads((tmp_path / "a" / "bias.json").read_text())
    man = tmp_path / "set.csv"  # paths relative to the manifest's folder
    man.write_text("file,I_dc (mA)\n" + "".join(f"../{root.name}/L/{p.name},{i * 1000:g}\n"
                                                 for p, i in zip(files, CURRENTS_A)))
    r = _run("--manifest", man, "--bias-column", "I_dc", "-o", tmp_path / "b", "-j", "2", "-q")
    assert r.exit_code == 0, r.output
    b = json.loads((tmp_path / "b" / "bias.json").read_text())
    assert (tmp_path / "b" / "bias.png").stat().st_size > 10_000
    # I_sat_20 = I_s (0.25)^(1/n) (algebra of L0/(1+(I/I_s)^n)), within 3 %; both ways alike to 1e-12.
    want = fall_bias(I_S, N_L, 0.2)
    assert a["figures"]["I_sat_20"]["value"] == pytest.approx(want, rel=0.03)
    assert b["figures"]["I_sat_20"]["value"] == pytest.approx(a["figures"]["I_sat_20"]["value"], rel=1e-12)
    assert [p["bias"] for p in b["points"]] == pytest.approx(list(CURRENTS_A), rel=1e-12)
    assert "I_sat_20 (L down 20 %) = " in r.output
    # Outputs are not overwritten without --force.
    r = _run("--manifest", man, "--bias-column", "I_dc", "-o", tmp_path / "b", "-q")
    assert r.exit_code == 2 and "exists already; give --force" in r.output


def test_failed_bias_limit_gives_exit_status_1(sweeps, tmp_path):
    root, _ = sweeps
    lim = tmp_path / "lim.toml"
    lim.write_text('[limit.I_sat_20]\nmin = "1.5A"\n')  # I_sat_20 is 1.17 A (see above): fail
    r = _run(root / "L", "--bias-from-name", r"L_(?P<bias>[0-9.]+)A", "--bias-unit", "A", "--limits", lim,
             "-o", tmp_path / "o", "-q", "--no-plot")
    assert r.exit_code == 1 and "verdict: fail" in r.output and "below min 1.5 A" in r.output


@pytest.mark.parametrize("args, message", [
    (["{L}/*.s1p", "--bias", "0,1,2", "--bias-unit", "A"], "no file matches the pattern"),
    (["{L}", "--bias", "0,1,2", "--bias-unit", "A"], "--bias has 3 value(s) but the set has 8 file(s)"),
    (["{L}", "--bias-from-name", "L_([0-9.]+)A", "--bias-unit", "A"], "needs a group named bias"),
    (["{L}", "--bias-from-name", "X_(?P<bias>[0-9.]+)A", "--bias-unit", "A"],
     "L_0A.csv: the file name does not match --bias-from-name"),
    (["{L}", "--bias", "0,0.5,1,1.5,2,2.5,3,3", "--bias-unit", "A"], "L_4A.csv: bias 3 A is given twice"),
    (["{L}", "--bias", "0,0.5,1,1.5,2,2.5,3,4"], "give the unit of the biases with --bias-unit"),
    (["{L}", "--bias", "0,0.5,1,1.5,2,2.5,3,4", "--bias-unit", "W"], "--bias-unit 'W'"),
    ([], "give the bias of each sweep one way"),
])
def test_bad_input_is_one_line_with_exit_status_2(sweeps, tmp_path, args, message):
    root, _ = sweeps
    r = _run(*[a.replace("{L}", str(root / "L")) for a in args], "-o", tmp_path / "o", "-q")
    assert r.exit_code == 2, r.output
    lines = [x for x in r.output.splitlines() if x.startswith("zfit: error:")]
    assert len(lines) == 1 and message in lines[0], r.output


def test_mixed_families_and_a_wrong_bias_unit_are_named(sweeps, tmp_path):
    root, files = sweeps
    caps = capacitor_set(tmp_path / "C", voltages=(0.0, 4.0))
    r = _run(*files[:3], caps[1], "--bias", "0,0.5,1,4", "--bias-unit", "A", "-o", tmp_path / "o", "-q", "-j", "1")
    assert r.exit_code == 2
    assert "C_4V.csv: identified as a capacitor, but " in r.output and "as a inductor" not in r.output
    r = _run(*files[:3], "--bias", "0,1,2", "--bias-unit", "V", "-o", tmp_path / "o2", "-q", "-j", "1")
    assert r.exit_code == 2 and "the sweeps are of an inductor, biased with a current (A), but the biases are in V" in r.output


def test_manifest_errors_name_the_file_and_line(sweeps, tmp_path):
    root, files = sweeps
    man = tmp_path / "m.csv"
    man.write_text("file,bias\n" + "".join(f"{p},{i:g}\n" for p, i in zip(files[:3], CURRENTS_A)))
    r = _run("--manifest", man, "-o", tmp_path / "o", "-q")
    assert r.exit_code == 2 and f"{man}:1: the unit of the bias column 'bias' is not stated" in r.output
    r = _run(*files[:4], "--manifest", man, "--bias-unit", "A", "-o", tmp_path / "o", "-q")
    assert r.exit_code == 2 and f"{files[3]}: not listed in the manifest" in r.output
    man.write_text("file,bias (V)\n" + "".join(f"{p},{i:g}\n" for p, i in zip(files[:3], CURRENTS_A)))
    r = _run("--manifest", man, "--bias-unit", "A", "-o", tmp_path / "o", "-q")
    assert r.exit_code == 2 and "the bias column is in V but --bias-unit is A" in r.output
    man.write_text("file,bias (A)\n" + f"{files[0]},0\n{files[1]},x\n{files[2]},1\n")
    r = _run("--manifest", man, "-o", tmp_path / "o", "-q")
    assert r.exit_code == 2 and f"{man}:3: " in r.output

"""``zfit info`` on good and bad files: one-line errors with file and line,
exit status 2, no traceback; every demo file and fixture reads."""

from __future__ import annotations

import json
import re
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from typer.testing import CliRunner

from zfit import read_sweep
from zfit.cli._app import app

ROOT = Path(__file__).parent.parent
TS = Path(__file__).parent / "data" / "touchstone"
TAB = Path(__file__).parent / "data" / "tables"
DEMO = ROOT / "demo_sweeps"


def run(*args):
    return CliRunner().invoke(app, [str(a) for a in args])


def assert_error(result, path, line, message):
    assert result.exit_code == 2, result.output
    assert "Traceback" not in result.output
    assert isinstance(result.exception, SystemExit)
    where = f"{path}:{line}: " if line is not None else f"{path}: "
    assert result.stderr.startswith(f"zfit: error: {where}"), result.stderr
    assert re.search(message, result.stderr), result.stderr
    assert result.stderr.count("\n") == 1  # one line


BAD = [
    # (file, extra args, line, message) -- one per class of bad input
    (TS / "bad_token.s1p", (), 6, "is not a number"),
    (TS / "bad_csv_rows_named_s1p.s1p", (), 2, "separates numbers by spaces"),
    (TS / "bad_short_row.s2p", ("-c", "series-thru"), 5, "expected 9 numbers per frequency"),
    (TS / "bad_option.s1p", (), 1, "unknown option 'XY'"),
    (TS / "bad_option_after_data.s1p", (), 4, "option line after the first data line"),
    (TS / "bad_nan.s1p", (), 9, "not a finite number"),
    (TS / "bad_negative_frequency.s1p", (), 2, "is not positive"),
    (TAB / "bad_zero_frequency.csv", (), 2, "frequency 0 Hz is not positive"),
    (TS / "bad_ports_differ.s2p", ("-c", "series-thru"), 1, "different reference impedances"),
    (TS / "bad_table_named_s2p.s2p", ("-c", "series-thru"), 1, "not a Touchstone file although its extension says so"),
    (TAB / "bad_touchstone_named_csv.csv", (), None, "is a Touchstone file although its extension says table"),
    (TS / "bad_binary.s1p", (), None, "binary file"),
    (TS / "bad_empty.s1p", (), None, "no data"),
    (TS / "bad_v2_no_network_data.ts", (), None, r"without a \[Network Data\]"),
    (TS / "bad_v2_count.ts", (), 4, r"\[Number of Frequencies\] says 20"),
    (TS / "bad_three_port.s3p", (), None, "3-port data"),
    (TS / "bad_v1_ts_extension.ts", (), None, "must be Touchstone 2.0"),
    (TS / "v1_ri_ghz.s1p", ("-c", "shunt-thru"), None, "S11 only, which is a reflection measurement"),
    (TS / "v1_series_ma_mhz.s2p", ("-c", "sideways"), None, "unknown connection 'sideways'"),
    (TS / "v1_ri_ghz.s1p", ("--columns", "f,zmag,phase"), None, "--columns applies to tables"),
    (TAB / "zphase_header_units.csv", ("-c", "series-thru"), None, "a table holds impedance already"),
    (TAB / "bad_ambiguous_l.csv", (), 1, "does not say series or parallel mode.*columns seen: 'f', 'L', 'R'"),
    (TAB / "no_header.csv", (), 1, "no header line.*give --columns"),
    (TAB / "bad_text_in_data.csv", (), 7, "'overload' is not a number"),
    (TAB / "bad_ragged.csv", (), 5, "2 columns where the first data row has 3"),
    (TAB / "bad_phase_no_unit.csv", (), 1, "could be degrees or radians"),
    (TAB / "bad_unknown_columns.csv", (), 1, "no frequency column but a time column \\('time \\(s\\)'.*zfit step"),
    (TAB / "bad_unit.csv", (), 1, "unknown unit 'furlong'"),
    (TAB / "bad_duplicate_frequency_column.csv", (), 1, "both look like frequency"),
    (TAB / "no_header.csv", ("--columns", "f,L,R"), None, "say Ls or Lp"),
    (ROOT / "nothing_here.s1p", (), None, "no such file"),
    (TAB / "zphase_header_units.xlsx", (), None, "unknown file kind '.xlsx'"),
]


@pytest.mark.parametrize("path, args, line, message", BAD, ids=[f"{b[0].name}{'+' if b[1] else ''}" for b in BAD])
def test_bad_input_is_one_line_exit_2(path, args, line, message):
    assert_error(run("info", path, *args), path, line, message)


def test_bad_input_through_the_console_script():
    """The real process: exit status 2, one line on stderr, no traceback."""
    path = TS / "bad_token.s1p"
    proc = subprocess.run([sys.executable, "-m", "zfit", "info", str(path)], capture_output=True, text=True)
    assert proc.returncode == 2
    assert proc.stderr == f"zfit: error: {path}:6: '-4.688659684658x-01' is not a number\n"
    assert proc.stdout == ""


def test_repeated_frequencies_are_a_warning_on_stderr(tmp_path):
    lines = (TS / "v1_ri_ghz.s1p").read_text().splitlines()
    path = tmp_path / "dup.s1p"
    # An identical copy of a row, in Touchstone as in a table: dropped with a warning line.
    path.write_text("\n".join(lines[:5] + [lines[4]] + lines[5:]) + "\n")
    r = run("info", path)
    assert r.exit_code == 0, r.output
    assert re.search(r"^zfit: warning: .*1 repeated frequencies dropped \(line 6\)", r.stderr, re.M)
    tab = (TAB / "zphase_header_units.csv").read_text().splitlines()
    path = tmp_path / "dup.csv"
    path.write_text("\n".join(tab + [tab[5]]) + "\n")
    r = run("info", path)
    assert r.exit_code == 0, r.output
    assert re.search(r"^zfit: warning: .*1 repeated frequencies dropped \(line 15\)", r.stderr, re.M)
    assert "note" in r.stdout and "repeated frequencies dropped" in r.stdout


def test_files_once_refused_are_read(tmp_path):
    # Out of order (rows 7 and 8 swapped): sorted, with a note.
    r = run("info", TS / "bad_decreasing.s2p", "-c", "series-thru")
    assert r.exit_code == 0, r.output
    assert "rows were not in frequency order; sorted" in r.stdout
    # Five points: read; too few to estimate the noise, said in a note.
    r = run("info", TS / "bad_few_points.s1p", "--json", tmp_path / "few.json")
    assert r.exit_code == 0, r.output
    d = json.loads((tmp_path / "few.json").read_text())
    assert d["points"] == 5 and d["noise"]["source"] == "default"
    assert "only 5 points (fewer than 15): too few to estimate the noise from the data" in r.stdout
    # |S11| = 1.5 at one point: flagged and kept, one warning line.
    r = run("info", TS / "bad_active.s1p")
    assert r.exit_code == 0, r.output
    assert re.search(r"^zfit: warning: .*1 of \d+ points look active \(\|S11\| > 1 beyond their uncertainty\) at 3.3 ?M ?Hz:",
                     r.stderr, re.M)
    # A two-port file without --connection whose data say series-thru.
    r = run("info", TS / "v1_series_ma_mhz.s2p")
    assert r.exit_code == 0, r.output
    assert "connection   series-thru" in r.stdout and "it looks like series-thru" in r.stdout


def test_bom_touchstone_is_read(tmp_path):
    path = tmp_path / "bom.s1p"
    path.write_bytes(b"\xef\xbb\xbf" + (TS / "v1_ri_ghz.s1p").read_bytes())
    r = run("info", path)
    assert r.exit_code == 0, r.output
    assert "reflection" in r.stdout


#: Noise terms the demo tables were made with (demo_sweeps/make_demo_sweeps.py); the
#: analyser files have 1e-3 |S| + 1e-5.
DEMO_NOISE = {"ind_47u_lcr_ls_rs.txt": (5e-4, 2e-4), "cap_4u7_lcr_cp_d.csv": (5e-4, 2e-4),
              "ind_100u_analyser_zphase.csv": (1e-3, 1e-4),
              # demo_sweeps/make_demo_loss_parts.py: magnitude and phase terms in quadrature (the
              # analyser's at the median 1.25 of their edge growth), the floor as written there.
              "ind_33u_skin_analyser.csv": (1.48e-3, 2e-4), "ind_220u_ferrite_analyser.csv": (1.48e-3, 2e-4),
              "cap_220u_electrolytic_shunt_thru.s2p": (6.97e-4, 3.2e-5)}


def demo_files():
    return sorted(p for p in DEMO.iterdir() if p.suffix in (".s1p", ".s2p", ".ts", ".csv", ".txt")
                  and not p.name.startswith(("capture", "coil_4m7_")))


def test_info_on_a_scope_capture_points_to_step():
    # The demo captures are time records, not sweeps: info says which command reads them.
    r = run("info", DEMO / "coil_4m7_square_1k.csv")
    assert r.exit_code == 2
    assert re.search(r"coil_4m7_square_1k\.csv:\d+: no frequency column but a time column .*zfit step", r.stderr)
    assert "Traceback" not in r.stderr


def demo_connection(path):
    if path.suffix in (".s2p", ".ts"):
        return "shunt-thru" if "shunt" in path.name else "series-thru"
    return None


@pytest.mark.parametrize("path", demo_files(), ids=lambda p: p.name)
def test_info_reads_every_demo_file(path, tmp_path):
    conn = demo_connection(path)
    args = ["info", path] + (["-c", conn] if conn else []) + ["--json", tmp_path / "info.json"]
    r = run(*args)
    assert r.exit_code == 0, r.output
    d = json.loads((tmp_path / "info.json").read_text())
    assert d["schema"] == "zfit.info/1"
    assert d["points"] >= 41
    assert d["connection"] == (conn or ("reflection" if path.suffix == ".s1p" else "impedance"))
    assert f"format       {d['data_format']}" in r.stdout
    if path.suffix in (".s1p", ".s2p", ".ts"):
        assert d["reference_ohm"] == 50.0 and "reference    50 Ω" in r.stdout
        assert d["noise"]["on"] == "S"
    else:
        assert d["reference_ohm"] is None and d["noise"]["on"] == "Z"
    # The demo files were invented with the noise terms of demo_sweeps/make_demo_sweeps.py:
    # the estimate from their scatter, at the median point, within 25 % of them (issue 11).
    assert d["noise"]["source"] == "estimated from the data"
    rel, floor = DEMO_NOISE.get(path.name, (1e-3, 1e-5))
    sw = read_sweep(path, conn)
    x = np.abs(sw.s_param if sw.s_param is not None else sw.z_ohm)
    ratio = (d["noise"]["rel"] * x + d["noise"]["floor"]) / (rel * x + floor)
    assert float(np.median(ratio)) == pytest.approx(1.0, abs=0.25)
    # Invented data were made with the default noise model: sigma is a fraction of a per cent
    # of |Z| at most points (median), never beyond 50 %.
    assert 1e-4 < d["sigma_rel_median"] < 5e-3
    assert d["sigma_rel_max"] < 0.5


@pytest.mark.parametrize("path", sorted(TS.glob("v*")) + sorted(TAB.glob("[!b]*")), ids=lambda p: p.name)
def test_info_reads_every_good_fixture(path):
    conn = "shunt-thru" if ("shunt" in path.name or "wrapped" in path.name) else "series-thru"
    args = ["info", path] + (["-c", conn] if path.suffix in (".s2p", ".ts") and "one_port" not in path.name else [])
    if path.name == "no_header.csv":
        args += ["--columns", "f,zmag,phase[deg]"]
    r = run(*args)
    assert r.exit_code == 0, r.output
    assert "points       12" in r.stdout


def test_info_prints_what_was_understood():
    r = run("info", TS / "v1_shunt_db_khz_r75.s2p", "-c", "shunt-thru", "--noise-rel", "2e-3")
    assert r.exit_code == 0, r.output
    out = r.stdout
    assert "format       Touchstone 1.x, S, DB, kHz, R 75; S21 used" in out
    assert "reference    75 Ω" in out
    assert "connection   shunt-thru" in out
    assert "band         1 MHz .. 68 MHz" in out
    assert "sigma(S) = 0.002 * |S| + 1e-05" in out


def test_poor_conditioning_is_one_warning_line(tmp_path):
    """A 5 milliohm part by reflection: |S11| ~ 1, warned on stderr."""
    import numpy as np

    f = np.geomspace(1e5, 1e7, 20)
    s = (0.005 - 50) / (0.005 + 50)
    path = tmp_path / "short.s1p"
    path.write_text("# Hz S RI R 50\n" + "".join(f"{x:.6f} {s:.12f} 0\n" for x in f))
    r = run("info", path)
    assert r.exit_code == 0, r.output
    warn = [ln for ln in r.stderr.splitlines() if ln.startswith("zfit: warning:")]
    assert len(warn) == 1 and "poorly conditioned reflection measurement at 100 % of the points" in warn[0]


def test_json_output_is_not_overwritten_without_force(tmp_path):
    out = tmp_path / "info.json"
    out.write_text("keep")
    r = run("info", TS / "v1_ri_ghz.s1p", "--json", out)
    assert_error(r, out, None, "exists already; give --force")
    assert out.read_text() == "keep"
    r = run("info", TS / "v1_ri_ghz.s1p", "--json", out, "--force")
    assert r.exit_code == 0
    assert json.loads(out.read_text())["points"] == 12

"""Every numeric option and every value read is bounded to where the computation means something (issue 15).

Each refused case asserts what a bench engineer is owed: exit status 2, one
``zfit: error:`` line that states the range (by its text), no traceback.
Each accepted extreme asserts that it is computed without a floating-point
warning (pyproject turns warnings into errors, so one would fail the test).
The ranges are common practice, stated where they are defined
(`zfit.data._sweep.ELEMENT_RANGES`, `SAMPLE_INTERVAL_RANGE_S`,
`FREQUENCY_RANGE_HZ`, `zfit.io._touchstone.REFERENCE_RANGE_OHM`).
"""

from __future__ import annotations

import itertools
import re
import struct
import warnings
from pathlib import Path

import numpy as np
import pytest
from typer.testing import CliRunner

from zfit.cli._app import app

ROOT = Path(__file__).parent.parent
DEMO = ROOT / "demo_sweeps"
S1P = DEMO / "ind_2u2_reflection.s1p"
RING = DEMO / "coil_4m7_ring_100k.csv"
RING_PLUS = DEMO / "coil_4m7_ring_100k_plus_100p.csv"
ZPHASE = DEMO / "ind_100u_analyser_zphase.csv"
INDUCTOR = ("plan", "inductor", "--points", "21")
CAPACITOR = ("plan", "capacitor", "--points", "21")


def run(*args):
    return CliRunner().invoke(app, [str(a) for a in args])


def assert_refused(result, message: str):
    """Exit status 2, one ``zfit: error:`` line matching `message`, no traceback."""
    assert result.exit_code == 2, (result.exit_code, result.output)
    assert "Traceback" not in result.output
    assert result.stderr.startswith("zfit: error: "), result.stderr
    assert result.stderr.count("\n") == 1, result.stderr
    assert re.search(message, result.stderr), result.stderr


# ------------------------------------------------------------------ plan


@pytest.mark.parametrize("args, message", [
    # The cases; the range is ELEMENT_RANGES (1 fH .. 1 kH, 1 aF .. 1 kF, 1 nohm .. 1 Pohm).
    (CAPACITOR[:2] + ("--C", "1e300", "--ESR", "5m", "--ESL", "500p"),
     r"--C 1e\+300 F is out of range: give a value between 1 aF and 1 kF$"),
    (INDUCTOR[:2] + ("--L", "1e300", "--R_s", "50m", "--C_p", "5p"),
     r"--L 1e\+300 H is out of range: give a value between 1 fH and 1 kH$"),
    (INDUCTOR[:2] + ("--L", "1e-300", "--R_s", "50m", "--C_p", "5p"),
     r"--L 1e-300 H is out of range: give a value between 1 fH and 1 kH$"),
    (INDUCTOR[:2] + ("--L", "1e-320", "--R_s", "50m", "--C_p", "5p"), r"--L .* is out of range"),  # denormal
    (INDUCTOR[:2] + ("--L", "10u", "--R_s", "1e300", "--C_p", "5p"),
     r"--R_s 1e\+300 Ω is out of range: give a value between 1 nΩ and 1 PΩ$"),
    (INDUCTOR[:2] + ("--L", "10u", "--R_s", "50m", "--C_p", "5p", "--R_p", "1e-300"), r"--R_p 1e-300 Ω is out of range"),
    (CAPACITOR[:2] + ("--C", "100n", "--ESR", "5m", "--ESL", "1e300"), r"--ESL 1e\+300 H is out of range"),
    (CAPACITOR[:2] + ("--C", "100n", "--ESR", "5m", "--ESL", "500p", "--R_leak", "1e300"), r"--R_leak 1e\+300 Ω is out of range"),
    (CAPACITOR[:2] + ("--C", "100n", "--ESR", "5m", "--ESL", "500p", "--reference", "1e300"),
     r"the reference impedance 1e\+300 Ω is out of range: give a value between 1 mΩ and 1 MΩ$"),
    (CAPACITOR[:2] + ("--C", "100n", "--ESR", "5m", "--ESL", "500p", "--reference", "1e-300"),
     r"the reference impedance 1e-300 Ω is out of range"),
    (CAPACITOR[:2] + ("--C", "100n", "--ESR", "5m", "--ESL", "500p", "--band", "1e-300:1G"),
     r"--band 1e-300 Hz is out of range: give a value between 1 µHz and 10 THz$"),
    (CAPACITOR[:2] + ("--C", "100n", "--ESR", "5m", "--ESL", "500p", "--noise-rel", "2"),
     r"--noise-rel 2 is out of range: give a value between 0 and 1$"),
    (CAPACITOR[:2] + ("--C", "nan", "--ESR", "5m", "--ESL", "500p"), r"--C: cannot read 'nan' as a number"),
])
def test_plan_values_are_bounded(args, message):
    assert_refused(run(*args), message)


@pytest.mark.parametrize("model, keys", [("inductor", ("L", "C_p", "R_s")), ("capacitor", ("ESL", "C", "ESR"))])
def test_plan_computes_at_every_corner_of_the_element_ranges(model, keys):
    # The claim in ELEMENT_RANGES: at its corners the plan is computed without a
    # floating-point warning (any would be an error here) and with finite SRF.
    from zfit.data._sweep import ELEMENT_RANGES
    from zfit.identification._plan import plan_measurement

    units = ("H", "F", "ohm")
    for corner in itertools.product(*(ELEMENT_RANGES[u] for u in units)):
        params = dict(zip(keys, corner))
        with warnings.catch_warnings():
            warnings.simplefilter("error")
            plan = plan_measurement(model, params, points=21)
        assert plan.recommended in ("reflection", "shunt-thru", "series-thru", "impedance"), params
        # Thomson's formula, f0 = 1 / (2 pi sqrt(L C)), where the resonance is underdamped.
        if plan.srf_hz is not None:
            assert np.isfinite(plan.srf_hz) and plan.srf_hz > 0


# ------------------------------------------------------------------ step


@pytest.mark.parametrize("args, message", [
    (("--shunt", "1e-300"), r"--shunt 1e-300 Ω is out of range: give a value between 1 mΩ and 1 GΩ$"),
    (("--shunt", "1e300"), r"--shunt 1e\+300 Ω is out of range: give a value between 1 mΩ and 1 GΩ$"),
    (("--inductance", "1e300"), r"--inductance 1e\+300 H is out of range: give a value between 1 fH and 1 kH$"),
    (("--inductance", "1e-320"), r"--inductance .* H is out of range"),
    (("--dt", "1e-300"), r"--dt 1e-300 s is out of range: give a value between 1 fs and 1 ks$"),
    (("--dt", "1e300"), r"--dt 1e\+300 s is out of range"),
    (("--added-capture", RING_PLUS, "--added-capacitance", "1e300"),
     r"--added-capacitance 1e\+300 F is out of range: give a value between 1 aF and 1 kF$"),
])
def test_step_options_are_bounded(args, message):
    assert_refused(run("step", RING, "-i", "CH1", "-o", "CH2", *args), message)


def _npz(tmp_path, name="cap.npz", **arrays):
    # A 250 kHz square wave through a first-order lag, sampled at 10 ns: written out here.
    t = np.arange(4000) * 1e-8
    x = np.where((t % 4e-6) < 2e-6, 1.0, 0.0)
    arrays = {"CH1": x, "CH2": 0.9 * x, **arrays}
    p = tmp_path / name
    np.savez(p, **arrays)
    return p


@pytest.mark.parametrize("arrays, message", [
    ({"dt": np.array(1e-320)}, r"sample interval 1e-320 s is outside 1 fs \.\. 1 ks, the range zfit computes in"),
    ({"dt": np.array(1e300)}, r"sample interval 1e\+300 s is outside 1 fs \.\. 1 ks"),
    ({"t": np.arange(4000) * 1e292}, r"the time column's sample interval 1e\+292 s is outside 1 fs \.\. 1 ks"),
    ({"t": np.arange(4000) * 1e-318}, r"the time column's sample interval .* s is outside 1 fs \.\. 1 ks"),
    # A start 1e20 s away from the trigger leaves no digit of a 10 ns interval (double has 16).
    ({"t": 1e20 + np.arange(4000) * 1e-8}, r"(the time column does not increase|start time 100E s is more than 1e\+12 sample intervals)"),
    ({"dt": np.array(1e-8), "t0": np.array(1e10)}, r"start time 10 Gs is more than 1e\+12 sample intervals \(10 ns\) from zero"),
])
def test_capture_time_base_is_bounded(tmp_path, arrays, message):
    p = _npz(tmp_path, **arrays)
    assert_refused(run("step", p, "-i", "CH1", "-o", "CH2"), re.escape(str(p)) + ": " + message)


def test_npy_header_with_a_negative_shape_is_one_line(tmp_path):
    # The shape field of the .npy header (NumPy's format description, NEP 1) edited to (-5, 2).
    p = tmp_path / "x.npy"
    np.save(p, np.zeros((1000, 2)))
    raw = p.read_bytes()
    n = struct.unpack("<H", raw[8:10])[0]
    header = raw[10:10 + n].decode().replace("(1000, 2)", "(-5, 2)").encode()
    p.write_bytes(raw[:8] + struct.pack("<H", len(header)) + header + raw[10 + n:])
    assert_refused(run("step", p), re.escape(str(p)) + r": the file declares shape \(-5, 2\): not a shape of an array")


# ------------------------------------------------------------------ identify, batch


@pytest.mark.parametrize("args, message", [
    (("--band", "1e-300:1G"), r"--band 1e-300 Hz is out of range: give a value between 1 µHz and 10 THz$"),
    (("--band", "1k:1e300"), r"--band 1e\+300 Hz is out of range"),
    (("--at", "1e-320"), r"--at .* Hz is out of range: give a value between 1 µHz and 10 THz$"),
    (("--rdc", "1e300"), r"--rdc 1e\+300 Ω is out of range: give a value between 1 nΩ and 1 PΩ$"),
    (("--rdc", "1e-300"), r"--rdc 1e-300 Ω is out of range"),
    # An ohmmeter's uncertainty lies between 1e-6 of its reading and the reading (common practice).
    (("--rdc", "25m", "--rdc-std", "1e-300"), r"--rdc-std 1e-300 Ω is out of range: give a value between 25 nΩ and 25 mΩ$"),
    (("--rdc", "25m", "--rdc-std", "1"), r"--rdc-std 1 Ω is out of range"),
])
def test_identify_options_are_bounded(args, message):
    assert_refused(run("identify", S1P, *args), message)


def test_batch_spot_frequency_is_bounded(tmp_path):
    r = run("batch", S1P, "-o", tmp_path / "out", "--at", "1e300", "-q", "-j", "1")
    assert_refused(r, r"--at 1e\+300 Hz is out of range: give a value between 1 µHz and 10 THz$")
    assert not (tmp_path / "out").exists()  # refused before any work


# ------------------------------------------------------------------ values read


def _zphase_rows(tmp_path, name, edit):
    """The demo |Z|-phase table with row i's |Z| replaced by edit(i, |Z|) (text)."""
    lines = ZPHASE.read_text().splitlines()
    out = lines[:3]
    for i, row in enumerate(lines[3:]):
        f, z, ph = row.split(",")
        out.append(",".join((f, edit(i, z), ph)))
    p = tmp_path / name
    p.write_text("\n".join(out) + "\n")
    return p


def test_zero_impedance_rows_are_set_aside_with_a_warning(tmp_path):
    # Every other |Z| written as 0 (an underrange code, a blank cell read as zero):
    # the 200 rows are set aside and said, the 201 others identified, the plot drawn.
    p = _zphase_rows(tmp_path, "half.csv", lambda i, z: "0" if i % 2 else z)
    png = tmp_path / "half.png"
    r = run("identify", p, "--plot", png)
    assert r.exit_code == 0, r.output
    assert "Traceback" not in r.output
    assert f"zfit: warning: {p}: 200 point(s) with |Z| = 0 exactly set aside (line 5, 7, 9, 11, 13 ...)" in r.stderr
    assert png.stat().st_size > 10_000
    assert "401 points" not in r.output and "201 points" in r.output


def test_zero_impedance_everywhere_is_one_line(tmp_path):
    p = _zphase_rows(tmp_path, "zero.csv", lambda i, z: "0")
    assert_refused(run("identify", p, "--plot", tmp_path / "z.png"),
                   re.escape(str(p)) + r": \|Z\| is zero at every one of the 401 points: nothing usable to identify")
    assert not (tmp_path / "z.png").exists()


def test_rows_decades_off_are_identified_without_overflow(tmp_path):
    # Six good rows, then |Z| = 10 pohm-scale values (1e-11 ohm, inside the range read):
    # a jump of ten decades the local smoothing must not turn into exp(huge).
    p = _zphase_rows(tmp_path, "jump.csv", lambda i, z: z if i < 6 else "1e-11")
    r = run("identify", p, "--plot", tmp_path / "j.png")
    assert r.exit_code == 0, r.output
    assert "Traceback" not in r.output
    assert "is not resolved by this sweep" in r.stderr


@pytest.mark.parametrize("value, message", [
    ("1e38", r":4: 1\.22627e\+37 is beyond 1e30: no impedance measurement gives it"),
    ("1e300", r":4: 1\.22627e\+299 is beyond 1e30"),
    ("1e-300", r":4: \|Z\| = 1\.23e-301 ohm is outside 1 pΩ \.\. 1 TΩ, the range zfit computes in"),
])
def test_table_values_near_the_float_limits_are_one_line(tmp_path, value, message):
    # |Z| column scaled by 1e38 / 1e300 / 1e-300 (the demo file's first |Z| is 0.122627 ohm).
    p = _zphase_rows(tmp_path, "x.csv", lambda i, z: repr(float(z) * float(value)))
    assert_refused(run("identify", p), re.escape(str(p)) + message)


def test_touchstone_frequencies_in_the_denormal_range_are_one_line(tmp_path):
    # Frequencies in Hz of 3e-310 .. (subnormal doubles, IEEE 754): a unit error, not a sweep.
    lines = S1P.read_text().splitlines()
    i = lines.index("# GHz S RI R 50")
    lines[i] = "# Hz S RI R 50"
    for k in range(i + 2, len(lines)):
        parts = lines[k].split()
        lines[k] = " ".join([repr(float(parts[0]) * 1e-306)] + parts[1:])
    p = tmp_path / "den.s1p"
    p.write_text("\n".join(lines) + "\n")
    assert_refused(run("info", p), re.escape(str(p)) + r":6: frequency .* Hz is outside 1 µHz \.\. 10 THz")


@pytest.mark.parametrize("column, text", [(2, "Rs"), (1, "Ls")])
def test_an_exact_zero_resistance_or_reactance_in_a_table_is_read(tmp_path, column, text):
    # An LCR meter prints 0.000 for a resistance (or inductance) below its last digit: the
    # point is a measurement (Q or D infinite there), not an error; nothing divides by it.
    lines = (DEMO / "ind_47u_lcr_ls_rs.txt").read_text().splitlines()
    cells = lines[10].split("\t")
    cells[column] = "0"
    lines[10] = "\t".join(cells)
    p = tmp_path / f"zero_{text}.txt"
    p.write_text("\n".join(lines) + "\n")
    r = run("identify", p, "--at", "1k", "--plot", tmp_path / "x.png", "--report", tmp_path / "x.html")
    assert r.exit_code == 0, r.output
    assert "Traceback" not in r.output and "divide" not in r.output
    assert (tmp_path / "x.png").stat().st_size > 10_000


LIMITS = '''title = "t"
model = "inductor"
guard_band_k = {gb}
[limit.L]
nominal = {nom}
tolerance_percent = {tol}
[limit.R_s]
max = {mx}
[limit.SRF]
min = {srf}
[[limit.Q]]
at = {at}
min = 150
'''
LIMITS_OK = dict(gb="2", nom='"10u"', tol="10", mx='"250m"', srf='"20M"', at='"1M"')


@pytest.mark.parametrize("key, value, message", [
    # JCGM 106:2012 works with guard bands of 1 to 3 standard uncertainties; 10 is the bound.
    ("gb", "1e300", r":3: guard_band_k 1e\+300 is out of range: give a value between 0 and 10$"),
    ("nom", "1e300", r":5: limit L: nominal 1e\+300 H is out of range: give a value between 1 fH and 1 kH$"),
    ("tol", "1e300", r":6: limit L: tolerance_percent 1e\+300 % is out of range: give a value between 0 % and 1000 %$"),
    ("tol", "[-20, 1e300]", r":6: limit L: tolerance_percent 1e\+300 % is out of range"),
    ("mx", "-1", r":8: limit R_s: max -1 Ω is out of range: give a value between 0 Ω and 1 PΩ$"),
    ("srf", "1e300", r":10: limit SRF: min 1e\+300 Hz is out of range: give a value between 0 Hz and 10 THz$"),
    ("at", "1e-320", r":12: limit Q: at .* Hz is out of range: give a value between 1 µHz and 10 THz$"),
])
def test_limits_file_values_are_bounded(tmp_path, key, value, message):
    p = tmp_path / "limits.toml"
    p.write_text(LIMITS.format(**{**LIMITS_OK, key: value}))
    r = run("batch", S1P, "-o", tmp_path / "out", "--limits", p, "-q", "-j", "1")
    assert_refused(r, re.escape(str(p)) + message)
    assert not (tmp_path / "out").exists()


def test_limits_file_within_the_bounds_reads(tmp_path):
    from zfit.io._limits_file import read_limits

    p = tmp_path / "limits.toml"
    p.write_text(LIMITS.format(**{**LIMITS_OK, "tol": "[-20, 80]"}))
    lim = read_limits(p)
    low, high = next((x.lower, x.upper) for x in lim.limits if x.name == "L")
    assert low == pytest.approx(8e-6, rel=1e-12) and high == pytest.approx(18e-6, rel=1e-12)  # 10 uH -20 %/+80 %


def test_the_part_given_as_its_own_short_is_one_line():
    # Z - Z_short = 0 at every point (open/short compensation, the part's file twice).
    r = run("identify", S1P, "--short", S1P)
    assert_refused(r, re.escape(str(S1P)) + r": compensation leaves Z = 0 exactly at every point: the part measures "
                   r"exactly as the short standard")



@pytest.mark.parametrize("grid, message", [
    ("1e-300:1G", r"--touchstone-grid 1e-300 Hz is out of range: give a value between 1 µHz and 10 THz$"),
    ("1k:1e300:11", r"--touchstone-grid 1e\+300 Hz is out of range"),
    ("0:1e300:11lin", r"--touchstone-grid 1e\+300 Hz is out of range"),
])
def test_touchstone_grid_is_bounded(tmp_path, grid, message):
    r = run("identify", S1P, "--touchstone", tmp_path / "m.s1p", "--touchstone-grid", grid)
    assert_refused(r, message)
    assert not (tmp_path / "m.s1p").exists()


def test_linear_touchstone_grid_from_zero_still_written(tmp_path):
    # 0:1G:11lin is 0, 100M, ..., 1G; the 0 Hz row is dropped (no S11 at DC): 10 rows.
    out = tmp_path / "m.s1p"
    r = run("identify", S1P, "--touchstone", out, "--touchstone-grid", "0:1G:11lin")
    assert r.exit_code == 0, r.output
    rows = [x for x in out.read_text().splitlines() if x and x[0].isdigit()]
    assert len(rows) == 10 and float(rows[0].split()[0]) == pytest.approx(1e8, rel=1e-12)


@pytest.mark.parametrize("jobs", ["0", "100000000"])
def test_batch_jobs_are_bounded(tmp_path, jobs):
    r = run("batch", S1P, "-o", tmp_path / "out", "-j", jobs, "-q")
    assert_refused(r, rf"--jobs {jobs} is out of range: give 1 to 1024 worker processes$")
    assert not (tmp_path / "out").exists()


def test_series_thru_s21_within_1e12_of_an_open_names_the_value(tmp_path):
    # |S21| = 1e-200 in series-thru: Z = 2 Z0 (1 - S21) / S21 ~ 1e202 ohm (docs/reading.md's formula),
    # beyond any measurement; the message gives the value instead of calling it zero.
    lines = (DEMO / "ind_10u_series_thru.s2p").read_text().splitlines()
    cells = lines[10].split()
    cells[3] = cells[5] = "1e-200"
    lines[10] = " ".join(cells)
    p = tmp_path / "open.s2p"
    p.write_text("\n".join(lines) + "\n")
    assert_refused(run("info", p, "--connection", "series-thru"),
                   re.escape(str(p)) + r":11: \|S21 - 0\| = 1e-200, within 1e-12 of an open in series: \|Z\| would "
                   r"exceed 1e12 times the reference impedance$")


#: Every numeric option of every command, with what else the command needs to reach it.
NUMERIC_OPTIONS = [
    *((("info", S1P), o) for o in ("--noise-rel", "--noise-floor", "--port-delay", "--port-loss")),
    (("info", S1P, "--open", S1P, "--short", S1P, "--load", S1P), "--load-value"),
    *((("identify", S1P), o) for o in ("--at", "--rdc")),
    (("identify", S1P, "--rdc", "25m"), "--rdc-std"),
    *((("step", RING, "-i", "CH1", "-o", "CH2"), o) for o in ("--shunt", "--inductance", "--dt")),
    (("step", RING, "-i", "CH1", "-o", "CH2", "--added-capture", RING_PLUS), "--added-capacitance"),
    *((INDUCTOR[:2] + ("--L", "10u", "--R_s", "50m", "--C_p", "5p"), o)
      for o in ("--L", "--R_s", "--C_p", "--R_p", "--noise-rel", "--noise-floor", "--table-rel", "--table-floor",
                "--reference")),
    *((CAPACITOR[:2] + ("--C", "100n", "--ESR", "5m", "--ESL", "500p"), o) for o in ("--C", "--ESR", "--ESL", "--R_leak")),
]


@pytest.mark.parametrize("value", ["1e300", "-1e300"])
@pytest.mark.parametrize("prefix, option", NUMERIC_OPTIONS, ids=[f"{p[0]}{o}" for p, o in NUMERIC_OPTIONS])
def test_every_numeric_option_refuses_a_value_beyond_its_range(tmp_path, prefix, option, value):
    # No option of zfit means anything at 1e300 or -1e300 of its unit (every range is stated
    # where it is defined); each is refused in one line that gives the range.
    args = [*prefix]
    if option in args:  # the option given in the prefix is replaced, not repeated
        args[args.index(option) + 1] = value
    else:
        args += [option, value]
    r = run(*args)
    if option == "--reference":
        # Named as test_plan.py's check of --reference 0 has it ("must be a positive number of ohm").
        assert_refused(r, r"the reference impedance (.* is out of range: give a value between 1 mΩ and 1 MΩ"
                          r"|must be a positive number of ohm)")
        return
    assert_refused(r, rf"{re.escape(option)} .*is out of range: give a value (between|of at least|of at most) ")

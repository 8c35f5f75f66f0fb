"""Hostile and unusual inputs to the readers and their options (issues 15 and 16).

Each case asserts the clean outcome a bench engineer is owed: exit status 2
and one ``zfit: error:`` line saying what is wrong (the message by its
text), no traceback, and the bytes of every file that was there unchanged;
or a read with a stated note.  Files are made from the demo sweeps by small
edits written out here.
"""

from __future__ import annotations

import hashlib
import re
from pathlib import Path

import numpy as np
import pytest
from typer.testing import CliRunner

from zfit.cli._app import app

ROOT = Path(__file__).parent.parent
DEMO = ROOT / "demo_sweeps"
S1P = DEMO / "ind_2u2_reflection.s1p"


def run(*args):
    return CliRunner().invoke(app, [str(a) for a in args])


def folder_bytes(folder: Path) -> dict:
    """Digest of every file under `folder`, to show that nothing was changed."""
    return {p: hashlib.sha256(p.read_bytes()).hexdigest() for p in sorted(Path(folder).rglob("*")) if p.is_file()}


def assert_refused(result, message: str, before: dict | None = None, folder: Path | None = None):
    """Exit status 2, one ``zfit: error:`` line matching `message`, no traceback, files unchanged."""
    assert result.exit_code == 2, (result.exit_code, result.output)
    assert "Traceback" not in result.output
    assert result.stderr.startswith("zfit: error: "), result.stderr
    assert result.stderr.count("\n") == 1, result.stderr  # one line, no usage block
    assert re.search(message, result.stderr), result.stderr
    if before is not None:
        assert folder_bytes(folder) == before


def assert_read(result):
    assert result.exit_code == 0, result.output
    assert "Traceback" not in result.output


# ------------------------------------------------------------------ options


@pytest.mark.parametrize("args, message", [
    # Engineering notation everywhere, bounds stated (issue 15; ranges from
    # zfit.io._prepared.READING_OPTION_RANGES, common practice).
    (("--noise-rel", "abc"), r"--noise-rel: cannot read 'abc' as a number"),
    (("--port-delay", "1"), r"--port-delay 1 s is out of range: give a value between -100 ns and 100 ns"),
    (("--port-loss", "1k"), r"--port-loss 1000 dB is out of range: give a value between 0 dB and 100 dB"),
    (("--noise-floor", "-1"), r"--noise-floor -1 is out of range"),
    (("--noise-floor", "2"), r"--noise-floor 2 is out of range: give a value between 0 and 1$"),  # |S| <= 1
    (("--noise-rel", "1e300"), r"--noise-rel 1e\+300 is out of range"),
])
def test_reading_options_are_bounded_with_one_line(tmp_path, args, message):
    before = folder_bytes(DEMO)
    assert_refused(run("info", S1P, *args), message, before, DEMO)


def test_engineering_notation_in_noise_rel():
    # 1m is 1e-3 (SI prefix milli): the noise model given is 0.001 * |S|.
    r = run("info", S1P, "--noise-rel", "1m", "--noise-floor", "10u")
    assert_read(r)
    assert re.search(r"sigma\(S\) = 0\.001 \* \|S\| \+ 1e-05", r.output), r.output


def test_bad_value_of_a_parsed_option_is_one_line():
    # click's own refusal (an integer option given text) is one zfit line, not a usage block.
    r = run("plan", "inductor", "--L", "10u", "--R_s", "50m", "--C_p", "5p", "--points", "abc")
    assert_refused(r, r"Invalid value for '--points'")


def test_table_floor_names_itself():
    r = run("plan", "inductor", "--L", "10u", "--R_s", "50m", "--C_p", "5p", "--table-floor", "-1")
    assert_refused(r, r"--table-floor -1 Ω is out of range: give a value between 0 Ω and 1 GΩ")


def test_shunt_range_helper():
    # The bound each command applies to --shunt (zfit.cli._common.SHUNT_RANGE_OHM).
    from zfit._errors import ZfitInputError
    from zfit.cli._common import SHUNT_RANGE_OHM, quantity

    assert quantity("2.2k", "--shunt", *SHUNT_RANGE_OHM, unit="ohm") == pytest.approx(2200.0, rel=1e-15)
    for text in ("1e-300", "1e300"):
        with pytest.raises(ZfitInputError, match=r"--shunt .* is out of range: give a value between 1 mΩ and 1 GΩ"):
            quantity(text, "--shunt", *SHUNT_RANGE_OHM, unit="ohm")


# ------------------------------------------------------------------ Touchstone

S1P_LINES = S1P.read_text().splitlines()
OPTION = S1P_LINES.index("# GHz S RI R 50")
TS2 = DEMO / "choke_470u_winding_resonance.ts"
TS2_LINES = TS2.read_text().splitlines()


def s1p_with(tmp_path, option=None, extra=None, at=None, name="x.s1p"):
    """The demo reflection file with its option line replaced and/or a line inserted at index `at`."""
    lines = list(S1P_LINES)
    if option is not None:
        lines[OPTION] = option
    if extra is not None:
        lines.insert(at, extra)
    p = tmp_path / name
    p.write_text("\n".join(lines) + "\n")
    return p


def ts2_with(tmp_path, replace=None, insert=None, drop=None, name="x.ts"):
    """The demo 2.0 file edited: lines replaced {old: new}, inserted [(index, text)], dropped (by text)."""
    lines = [replace.get(x, x) if replace else x for x in TS2_LINES]
    lines = [x for x in lines if x != drop]
    for at, text in sorted(insert or (), reverse=True):
        lines.insert(at if at >= 0 else len(lines) + at + 1, text)
    p = tmp_path / name
    p.write_text("\n".join(lines) + "\n")
    return p


@pytest.mark.parametrize("option, message", [
    ("# GHz S RI R 50 75", r":4: 2 reference impedances \(50, 75 ohm\) for a one-port file; give one"),
    ("# GHz MHz S RI R 50", r":4: option line: two frequency units \(GHz and MHz\); give one"),
    ("# GHz S RI MA R 50", r":4: option line: two data formats \(RI and MA\); give one"),
    ("# GHz S RI R 1e-300", r":4: reference impedance 1e-300 ohm is outside 0.001 .. 1e\+06 ohm"),
    ("# GHz S RI R 1e300", r":4: reference impedance 1e\+300 ohm is outside 0.001 .. 1e\+06 ohm"),
])
def test_ambiguous_or_extreme_option_line_is_refused(tmp_path, option, message):
    p = s1p_with(tmp_path, option)
    before = folder_bytes(tmp_path)
    assert_refused(run("info", p), re.escape(str(p)) + message, before, tmp_path)


def test_second_option_line_inside_the_data_is_refused(tmp_path):
    p = s1p_with(tmp_path, extra="# MHz S RI R 50", at=OPTION + 10)
    assert_refused(run("info", p), rf"{re.escape(str(p))}:{OPTION + 11}: a second option line '# MHz S RI R 50', "
                   r"different from the first \('# GHz S RI R 50' at line 4\)")


def test_repeated_identical_option_line_is_a_note(tmp_path):
    p = s1p_with(tmp_path, extra="# GHz S RI R 50", at=OPTION + 10)
    r = run("info", p)
    assert_read(r)
    assert f"option line repeated at line {OPTION + 11} (same as line 4)" in r.output


def _ma_file(tmp_path, mag, ang):
    # A 1 mH-ish reflection point set in MA: |S11| = 0.9, angles spread (invented values).
    rows = [f"{f:g} {mag if i == 5 else 0.9} {ang if i == 5 else 10.0 + i}" for i, f in enumerate(np.geomspace(1, 100, 30))]
    p = tmp_path / "ma.s1p"
    p.write_text("# MHz S MA R 50\n" + "\n".join(rows) + "\n")
    return p


def test_negative_magnitude_in_ma_is_refused(tmp_path):
    p = _ma_file(tmp_path, -0.5, 10.0)
    assert_refused(run("info", p), rf"{re.escape(str(p))}:7: magnitude -0.5 is negative \(MA format")


def test_angle_beyond_360_degrees_is_refused(tmp_path):
    p = _ma_file(tmp_path, 0.9, 1000.0)
    assert_refused(run("info", p), rf"{re.escape(str(p))}:7: angle 1000 deg is beyond \+-360 deg")


def test_angle_of_270_degrees_is_read_with_a_note(tmp_path):
    p = _ma_file(tmp_path, 0.9, 270.0)
    r = run("info", p, "--json", tmp_path / "i.json")
    assert_read(r)
    assert "1 angle(s) between 180 and 360 deg (first at line 7) read as the same direction" in r.output


@pytest.mark.parametrize("edit, message", [
    (dict(drop="[Number of Frequencies] 1001"), r":4: Touchstone 2.0 file without \[Number of Frequencies\]"),
    (dict(replace={"[Two-Port Data Order] 12_21": "[Two-Port Data Order] 13_31"}),
     r":7: \[Two-Port Data Order\] '13_31': expected 12_21 or 21_12"),
    (dict(insert=[(10, "[Matrix Format] Full")]), r":11: \[Matrix Format\] given twice \(first at line 10\)"),
    (dict(insert=[(-2, "[Network Data]")]), r":\d+: \[Network Data\] given twice \(first at line 11\)"),
    (dict(insert=[(8, "[Number of Noise Frequencies] 3")]),
     r":9: \[Number of Noise Frequencies\] is given but there is no \[Noise Data\]"),
    (dict(insert=[(8, "[Colour] blue")]), r":9: unknown Touchstone 2.0 keyword \[Colour\]$"),
    (dict(insert=[(-1, "200000001 0 0 0 0 0 0")]), r":\d+: data after \[End\] \(line \d+\)"),
    (dict(replace={TS2_LINES[20]: TS2_LINES[20].replace("e-01", "_0", 1)}), r":21: '\S*_0' is not a number"),
])
def test_touchstone_2_violations_are_refused(tmp_path, edit, message):
    p = ts2_with(tmp_path, **edit)
    r = run("info", p)
    assert_refused(r, re.escape(str(p)) + message)
    assert "ValueError" not in r.output


@pytest.mark.parametrize("row, message", [
    ("1_0 0.5 0.1", r"'1_0' is not a number"),  # Python's float() would read 10
    ("1e-310 -0.98 0.16", r"frequency 1e-301 Hz is outside 1 µHz \.\. 10 THz"),  # denormal, in GHz
])
def test_bad_data_row_is_named_by_its_line(tmp_path, row, message):
    lines = list(S1P_LINES)
    lines[OPTION + 5] = row
    p = tmp_path / "r.s1p"
    p.write_text("\n".join(lines) + "\n")
    assert_refused(run("info", p), rf"{re.escape(str(p))}:{OPTION + 6}: " + message)


def test_bom_touchstone_is_read(tmp_path):
    p = tmp_path / "b.s1p"
    p.write_bytes(b"\xef\xbb\xbf" + S1P.read_bytes())
    assert_read(run("info", p))


# ------------------------------------------------------------------ tables

ZPH = DEMO / "ind_100u_analyser_zphase.csv"
ZPH_LINES = ZPH.read_text().splitlines()  # line 3 is the header, data from line 4


def table_with(tmp_path, lines, name="t.csv"):
    p = tmp_path / name
    p.write_text("\n".join(lines) + "\n")
    return p


def info_json(tmp_path, p):
    import json

    r = run("info", p, "--json", tmp_path / "i.json", "--force")
    assert_read(r)
    return json.loads((tmp_path / "i.json").read_text()), r


def test_table_variants_read_as_the_original(tmp_path):
    # The same data with a units row, German header names, an end marker and
    # CR-only line endings: the same points as the demo table (exactly: same numbers).
    ref, _ = info_json(tmp_path, ZPH)
    body = ZPH_LINES[3:]
    variants = {
        "units.csv": ["Frequency,|Z|,Phase", "Hz,Ohm,deg"] + body,
        "german.csv": ["Frequenz (Hz),Impedanz (Ohm),Phase (deg)"] + body,
        "french.csv": ["Fréquence (Hz),Impédance (Ohm),Déphasage (deg)"] + body,
        "end.csv": ZPH_LINES + ["END"],
    }
    for name, lines in variants.items():
        got, r = info_json(tmp_path, table_with(tmp_path, lines, name))
        assert got["points"] == ref["points"] == 401, name
        for key in ("f_min_hz", "f_max_hz", "z_min_ohm", "z_max_ohm"):
            assert got[key] == ref[key], (name, key)
    assert "units taken from the row under the header (line 2)" in info_json(tmp_path, tmp_path / "units.csv")[1].output
    assert "1 text line(s) after the data ignored (line 405: 'END')" in info_json(tmp_path, tmp_path / "end.csv")[1].output
    cr = tmp_path / "cr.csv"
    cr.write_bytes("\r".join(ZPH_LINES).encode() + b"\r")
    got, _ = info_json(tmp_path, cr)
    assert got["points"] == 401 and got["f_max_hz"] == ref["f_max_hz"] and got["z_max_ohm"] == ref["z_max_ohm"]


def test_overrange_code_in_a_table_is_a_missing_point(tmp_path):
    lines = list(ZPH_LINES)
    lines[10] = lines[10].split(",")[0] + ",9.9E37,9.9E37"
    got, r = info_json(tmp_path, table_with(tmp_path, lines))
    assert got["points"] == 400  # 401 rows, one code dropped
    assert "1 row(s) with the instrument's overrange code (9.9e+37) dropped as missing points (line 11)" in r.output


@pytest.mark.parametrize("value, message", [
    ("-0.5", r":12: \|Z\| = -0.5 is negative"),
    ("1e300", r":12: 1e\+300 is beyond 1e30: no impedance measurement gives it"),
    ("1e38", r":12: 1e\+38 is beyond 1e30"),
    ("1e15", r":12: \|Z\| = 1e\+15 ohm is outside 1 pΩ \.\. 1 TΩ"),
    ("1e-300", r":12: \|Z\| = 1e-300 ohm is outside"),
])
def test_extreme_or_negative_magnitude_in_a_table_is_refused(tmp_path, value, message):
    lines = list(ZPH_LINES)
    f, _, ph = lines[11].split(",")
    lines[11] = f"{f},{value},{ph}"
    p = table_with(tmp_path, lines)
    before = folder_bytes(tmp_path)
    assert_refused(run("info", p), re.escape(str(p)) + message, before, tmp_path)


def test_table_of_zero_impedance_is_refused(tmp_path):
    lines = ZPH_LINES[:3] + [f"{ln.split(',')[0]},0,0" for ln in ZPH_LINES[3:]]
    p = table_with(tmp_path, lines)
    assert_refused(run("info", p), re.escape(str(p)) + r": \|Z\| is zero at every one of the 401 points: nothing usable")


def test_long_header_line_is_read_in_linear_time(tmp_path):
    import time

    # A 120 kB header field of slashes and brackets took 51 s with the old pattern (issue 16).
    p = table_with(tmp_path, ["a/(" * 40000 + "," + ZPH_LINES[2]] + [f"1,{x}" for x in ZPH_LINES[3:]])
    t = time.perf_counter()
    r = run("info", p)
    assert time.perf_counter() - t < 2.0  # common practice: well under a second here
    assert r.exit_code in (0, 2) and "Traceback" not in r.output


# ------------------------------------------------------------------ limits files

LIMITS = 'title = "goods-in"\n[limit.L]\nnominal = "2.2u"\ntolerance_percent = 10\n[limit.SRF]\nmin = "20M"\n'


def test_limits_file_with_a_byte_order_mark_is_read(tmp_path):
    from zfit.io._limits_file import read_limits

    p = tmp_path / "l.toml"
    p.write_bytes(b"\xef\xbb\xbf" + LIMITS.encode())
    lim = read_limits(p)
    # 2.2 uH +-10 %: 1.98 uH .. 2.42 uH (arithmetic).
    assert lim.limits[0].lower == pytest.approx(1.98e-6, rel=1e-12)
    assert lim.limits[0].upper == pytest.approx(2.42e-6, rel=1e-12)
    assert lim.limits[1].lower == pytest.approx(20e6, rel=1e-15)


def test_limits_file_with_a_byte_order_mark_through_batch(tmp_path):
    p = tmp_path / "l.toml"
    p.write_bytes(b"\xef\xbb\xbf" + LIMITS.encode())
    r = run("batch", S1P, "--limits", p, "--out", tmp_path / "out")
    assert r.exit_code in (0, 1), r.output  # a verdict, not a refusal of the file
    assert "not valid TOML" not in r.output and "Traceback" not in r.output


@pytest.mark.parametrize("text, line, message", [
    (LIMITS.replace('"2.2u"', '"2.2uF"'), 3, r"limit L: nominal '2.2uF' is in F, but this quantity is in H"),
    (LIMITS.replace('"20M"', '"20 MOhm"'), 6, r"limit SRF: min '20 MOhm' is in ohm, but this quantity is in Hz"),
    (LIMITS.replace('"2.2u"', '"0"'), 3, r"limit L: nominal '0' must be positive"),
    (LIMITS.replace('"2.2u"', '"-2.2u"'), 3, r"limit L: nominal '-2.2u' must be positive"),
])
def test_limits_values_are_checked_against_the_quantity(tmp_path, text, line, message):
    from zfit._errors import ZfitInputError
    from zfit.io._limits_file import read_limits

    p = tmp_path / "l.toml"
    p.write_text(text)
    with pytest.raises(ZfitInputError) as info:
        read_limits(p)
    assert info.value.line == line
    assert re.fullmatch(message, info.value.message), info.value.message


# ------------------------------------------------------------------ binary captures

RING = DEMO / "coil_4m7_ring_100k.csv"


def _good_npz(tmp_path, **extra):
    # A 1 kHz sine on CH1 sampled at 1 MHz (invented values).
    t = np.arange(2000) * 1e-6
    p = tmp_path / "cap.npz"
    np.savez(p, t=t, CH1=np.sin(2 * np.pi * 1e3 * t), **extra)
    return p


def test_good_npz_still_reads(tmp_path):
    from zfit.io._capture import read_capture

    cap = read_capture(_good_npz(tmp_path))
    assert cap.n_samples == 2000
    assert cap.sample_rate_hz == pytest.approx(1e6, rel=1e-9)  # dt = 1 us as written


def test_truncated_npz_is_one_line(tmp_path):
    p = _good_npz(tmp_path)
    p.write_bytes(p.read_bytes()[:3000])
    before = folder_bytes(tmp_path)
    r = run("step", p, "-i", "CH1", "-o", "CH1")
    assert_refused(r, re.escape(str(p)) + r": cannot read as a numpy archive \(\.npz\): the zip file is truncated", before,
                   tmp_path)


def test_truncated_added_capture_is_one_line(tmp_path):
    p = _good_npz(tmp_path)
    p.write_bytes(p.read_bytes()[:3000])
    r = run("step", RING, "-i", "CH1", "-o", "CH2", "--added-capture", p, "--added-capacitance", "100p")
    assert_refused(r, re.escape(str(p)) + r": cannot read as a numpy archive")


def test_npy_header_claiming_1e12_rows_is_refused_before_loading(tmp_path):
    from numpy.lib import format as npy

    p = tmp_path / "big.npy"
    with open(p, "wb") as fh:
        npy.write_array_header_1_0(fh, {"descr": "<f8", "fortran_order": False, "shape": (10**12, 3)})
        fh.write(b"\0" * 4800)
    assert_refused(run("step", p, "-i", "col2", "-o", "col3"),
                   re.escape(str(p)) + r": the file declares shape \(1000000000000, 3\) of float64 \(2\.24e\+04 GiB\), "
                   r"beyond the 2 GiB zfit loads")


def test_npy_header_claiming_more_than_the_file_holds_is_refused(tmp_path):
    p = tmp_path / "short.npy"
    np.save(p, np.zeros((1000, 3)))
    p.write_bytes(p.read_bytes()[:-800])
    assert_refused(run("step", p, "-i", "col2", "-o", "col3"),
                   r"declares shape \(1000, 3\) of float64 \(24000 bytes\) but holds 23200 bytes of data: truncated")


def test_garbage_npy_does_not_suggest_allow_pickle(tmp_path, rng):
    p = tmp_path / "g.npy"
    p.write_bytes(rng.integers(0, 256, 4096, dtype=np.uint8).tobytes())
    r = run("step", p, "-i", "col2", "-o", "col3")
    assert_refused(r, re.escape(str(p)) + r": the file is not a numpy \.npy array \(no readable numpy header\)")
    assert "pickle" not in r.output


def test_zip_bomb_npz_is_refused_by_declared_size(tmp_path, monkeypatch):
    import zfit.io._capture as capture

    # 16 MB of zeros deflate to ~16 kB; with the budget set to 1 MB the
    # archive's declared sizes refuse it before a byte is inflated.
    p = tmp_path / "bomb.npz"
    np.savez_compressed(p, t=np.arange(10) * 1e-6, CH1=np.zeros(2 * 1024**2))
    assert p.stat().st_size < 100_000
    monkeypatch.setattr(capture, "MEMORY_BUDGET_BYTES", 1024**2)
    assert_refused(run("step", p, "-i", "CH1", "-o", "CH1"),
                   re.escape(str(p)) + r": the archive declares 0\.0156 GiB of arrays, beyond the 0\.000977 GiB")


@pytest.mark.parametrize("extra, message", [
    (dict(CH2=np.array(["a", "b", "c"])), r"array 'CH2' holds <U1 values, not real numbers"),
    (dict(CH2=np.zeros((2000, 2))), r"array 'CH2' has shape \(2000, 2\): a channel is one row of samples"),
])
def test_bad_channel_in_npz_is_named(tmp_path, extra, message):
    p = _good_npz(tmp_path, **extra)
    assert_refused(run("step", p, "-i", "CH1", "-o", "CH2"), re.escape(str(p)) + ": " + message)


# ------------------------------------------------------------------ text captures


def test_capture_with_carriage_returns_only_reads_as_the_original(tmp_path):
    from zfit.io._capture import read_capture

    p = tmp_path / "cr.csv"
    p.write_bytes(RING.read_bytes().replace(b"\r\n", b"\n").replace(b"\n", b"\r"))
    a, b = read_capture(RING), read_capture(p)
    assert b.n_samples == a.n_samples == 10000
    assert b.sample_rate_hz == pytest.approx(a.sample_rate_hz, rel=1e-12)  # 25 MSa/s as written
    np.testing.assert_array_equal(b.channel("CH2"), a.channel("CH2"))


def _side_capture(tmp_path, rows=5000, bad_row=None):
    # Settings in columns 1-3 beside time and voltage in 4-5, a step at t = 0
    # sampled every 40 ns (invented values).
    t = np.arange(rows) * 4e-8 - 1e-5
    v = np.where(t > 0, 1.0, 0.0)
    meta = [("Record Length", "5000", "Points"), ("Sample Interval", "4e-08", "s"), ("Trigger Point", "250", "Samples"),
            ("Source", "CH1", ""), ("Vertical Units", "V", "")]
    lines = []
    for i in range(rows):
        a, b, c = meta[i] if i < len(meta) else ("", "", "")
        lines.append(f"{a},{b},{c},{t[i]:.6e},{v[i]:.5f},")
    if bad_row is not None:
        lines[bad_row] = ",,,-1.0e-06,oops,"
    p = tmp_path / "side.csv"
    p.write_text("\n".join(lines) + "\n")
    return p


def test_capture_with_settings_beside_the_samples(tmp_path):
    from zfit.io._capture import read_capture

    cap = read_capture(_side_capture(tmp_path))
    assert cap.n_samples == 5000
    assert cap.sample_rate_hz == pytest.approx(25e6, rel=1e-9)  # 1 / 40 ns as written
    assert cap.t0 == pytest.approx(-1e-5, rel=1e-9)
    assert "settings read from columns 1-3 beside the samples" in cap.notes


def test_capture_with_settings_beside_a_bad_row_names_its_line(tmp_path):
    p = _side_capture(tmp_path, bad_row=100)
    assert_refused(run("step", p, "-i", "col1", "-o", "col2"), re.escape(str(p)) + r":101: ")


def test_plan_band_is_bounded():
    r = run("plan", "inductor", "--L", "10u", "--R_s", "50m", "--C_p", "5p", "--band", "1e-300:1e300")
    assert_refused(r, r"--band 1e-300 Hz is out of range: give a value between 1 µHz and 10 THz")


def test_system_error_without_a_file_name_is_one_clean_line(monkeypatch):
    # "No space left on device" raised with no file name: no empty ': ' before the reason.
    import errno

    import zfit.io._sweep_file as sweep_file

    def full(*args, **kwargs):
        raise OSError(errno.ENOSPC, "No space left on device")

    monkeypatch.setattr(sweep_file, "read_sweep", full)
    r = run("info", S1P)
    assert r.exit_code == 2 and r.stderr == "zfit: error: No space left on device\n", r.stderr


def test_long_blank_metadata_line_of_a_capture_is_read_in_linear_time(tmp_path):
    import time

    from zfit.io._capture import read_capture

    # A 60 kB line of blanks above the demo capture took 18 s with the old key = value pattern.
    p = tmp_path / "long.csv"
    p.write_text("a" + " " * 60000 + "b\n" + RING.read_text())
    t = time.perf_counter()
    cap = read_capture(p)
    assert time.perf_counter() - t < 2.0  # common practice: well under a second here
    assert cap.n_samples == 10000

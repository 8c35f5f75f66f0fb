"""Analyser and LCR-meter tables: every column set, units, delimiters,
--columns, and the errors for what cannot be told apart."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from typer.testing import CliRunner

from zfit import MeasurementWarning, ZfitInputError, read_sweep
from zfit.cli._app import app
from zfit.io._table import PAIRS, parse_columns

DATA = Path(__file__).parent / "data" / "tables"
F = np.geomspace(1e3, 3e7, 25)


def part_z(f):
    # Invented: 0.2 ohm + 22 uH with 6 pF across (SRF ~ 14 MHz inside the band).
    s = 2j * np.pi * f
    return 1 / (1 / (0.2 + s * 22e-6) + s * 6e-12)


def model_z(f):
    # The invented part of the fixture files (tests/data/make_fixtures.py).
    s = 2j * np.pi * np.asarray(f, dtype=float)
    return 1 / (1 / (0.5 + s * 1e-6) + s * 10e-12)


def columns_of(z, f):
    """Every quantity the trade tabulates, from its definition (common practice:
    series mode Z = Rs + jXs, parallel mode Y = G + jB = 1/Rp - j/Xp;
    Q = |X|/R = |B|/G, D = 1/Q; Ls = Xs/w, Cs = -1/(w Xs), Lp = -1/(w B), Cp = B/w)."""
    w = 2 * np.pi * f
    y = 1 / z
    rs, xs, g, b = z.real, z.imag, y.real, y.imag
    return {
        "zmag": np.abs(z), "phase": np.degrees(np.angle(z)), "zdb": 20 * np.log10(np.abs(z)),
        "rs": rs, "xs": xs, "ls": xs / w, "cs": -1 / (w * xs), "rp": 1 / g, "xp": -1 / b,
        "lp": -1 / (w * b), "cp": b / w, "g": g, "b": b,
        "q_series": np.abs(xs) / rs, "d_series": rs / np.abs(xs), "q_par": np.abs(b) / g, "d_par": g / np.abs(b),
    }


HEADER = {"zmag": "|Z| (Ohm)", "phase": "Phase (deg)", "zdb": "|Z| (dBOhm)", "rs": "Rs (Ohm)", "xs": "Xs (Ohm)",
          "ls": "Ls (H)", "cs": "Cs (F)", "rp": "Rp (Ohm)", "xp": "Xp (Ohm)", "lp": "Lp (H)", "cp": "Cp (F)",
          "g": "G (S)", "b": "B (S)", "q": "Q", "d": "D"}


def write_table(path, names, cols, delim=",", header=True, f_unit=("Hz", 1.0)):
    lines = []
    if header:
        lines.append(delim.join([f"Freq ({f_unit[0]})"] + names))
    for i in range(F.size):
        lines.append(delim.join([f"{F[i] / f_unit[1]:.15e}"] + [f"{c[i]:.15e}" for c in cols]))
    path.write_text("\n".join(lines) + "\n")
    return path


@pytest.mark.parametrize("pair", PAIRS, ids=lambda p: "+".join(p))
def test_every_column_pair_round_trips(tmp_path, pair):
    z = part_z(F)
    c = columns_of(z, F)
    mode = "series" if pair[0] in ("ls", "cs") else "par"
    cols = [c[q] if q not in ("q", "d") else c[f"{q}_{mode}"] for q in pair]
    path = write_table(tmp_path / "t.csv", [HEADER[q] for q in pair], cols)
    sw = read_sweep(path)
    # 16 printed digits: the conversion must hold to 1e-9.
    np.testing.assert_allclose(sw.z_ohm, z, rtol=1e-9)
    assert sw.connection == "impedance" and sw.reference_ohm is None
    r = CliRunner().invoke(app, ["info", str(path)])
    assert r.exit_code == 0 and "points       25" in r.stdout, r.output


@pytest.mark.parametrize("delim", [",", ";", "\t", "  "], ids=["comma", "semicolon", "tab", "spaces"])
@pytest.mark.parametrize("f_unit", [("Hz", 1.0), ("kHz", 1e3), ("MHz", 1e6), ("GHz", 1e9)], ids=lambda u: u[0])
def test_delimiters_and_frequency_units(tmp_path, delim, f_unit):
    z = part_z(F)
    path = write_table(tmp_path / "t.txt", ["R (Ohm)", "X (Ohm)"], [z.real, z.imag], delim, f_unit=f_unit)
    sw = read_sweep(path)
    np.testing.assert_allclose(sw.f_hz, F, rtol=1e-12)
    np.testing.assert_allclose(sw.z_ohm, z, rtol=1e-9)


@pytest.mark.parametrize("header, scale", [
    ("Ls (uH)", 1e-6), ("Ls [nH]", 1e-9), ("Ls_mH", 1e-3), ("L s / uH", 1e-6),
])
def test_inductance_units_from_header(tmp_path, header, scale):
    z = part_z(F)
    c = columns_of(z, F)
    path = write_table(tmp_path / "t.csv", [header, "Rs (mOhm)"], [c["ls"] / scale, c["rs"] * 1e3])
    np.testing.assert_allclose(read_sweep(path).z_ohm, z, rtol=1e-9)


def test_capacitance_and_resistance_units(tmp_path):
    z = part_z(F)
    c = columns_of(z, F)
    path = write_table(tmp_path / "t.csv", ["Cp (pF)", "Rp (kOhm)"], [c["cp"] * 1e12, c["rp"] / 1e3])
    np.testing.assert_allclose(read_sweep(path).z_ohm, z, rtol=1e-9)
    path = write_table(tmp_path / "u.csv", ["Cs [nF]", "D [%]"], [c["cs"] * 1e9, c["d_series"] * 100])
    np.testing.assert_allclose(read_sweep(path).z_ohm, z, rtol=1e-9)


def test_phase_in_radians_and_db_magnitude(tmp_path):
    z = part_z(F)
    path = write_table(tmp_path / "t.csv", ["Z (dB)", "Theta (rad)"], [20 * np.log10(np.abs(z)), np.angle(z)])
    np.testing.assert_allclose(read_sweep(path).z_ohm, z, rtol=1e-9)


def test_phase_without_unit_is_degrees_when_it_can_only_be(tmp_path):
    z = part_z(F)  # reaches nearly +-90 degrees: beyond pi/2, so degrees
    path = write_table(tmp_path / "t.csv", ["|Z|", "phase"], [np.abs(z), np.degrees(np.angle(z))])
    np.testing.assert_allclose(read_sweep(path).z_ohm, z, rtol=1e-9)


TABLE_FIXTURES = {
    "zphase_header_units.csv": "f [kHz], |Z| [ohm], phase [deg]",
    "rx_semicolon_decimal_comma.csv": "semicolon (decimal comma)",
    "ls_rs_tab.txt": "Ls [uH], Rs [mohm] (series mode)",
    "cp_d_whitespace.dat": "Cp [pF], D (parallel mode)",
    "zdb_phase_rad.csv": "|Z|dB [dBohm], phase [rad]",
}


@pytest.mark.parametrize("name", sorted(TABLE_FIXTURES))
def test_table_fixtures(name):
    sw = read_sweep(DATA / name)
    np.testing.assert_allclose(sw.z_ohm, model_z(sw.f_hz), rtol=1e-9)
    assert TABLE_FIXTURES[name] in sw.data_format
    assert sw.n_points == 12


def test_preamble_lines_noted():
    sw = read_sweep(DATA / "cp_d_whitespace.dat")
    assert any("2 text line(s) before the header skipped" in n for n in sw.notes)


@pytest.mark.parametrize("columns", [
    "f,zmag,phase[deg]",
    "f[Hz],|Z|,phase(deg)",
    "freq_Hz,Zmag,phase_deg",
    "f=1,zmag=2,phase[deg]=3",
    "phase[deg]=3,f=1,zmag=2",
])
def test_columns_option_on_headerless_table(columns):
    sw = read_sweep(DATA / "no_header.csv", columns=columns)
    np.testing.assert_allclose(sw.z_ohm, model_z(sw.f_hz), rtol=1e-9)
    assert "columns from --columns" in sw.data_format


def test_columns_by_header_name_and_skip(tmp_path):
    z = part_z(F)
    c = columns_of(z, F)
    path = write_table(tmp_path / "t.csv", ["Vac (V)", "L", "R"], [np.ones_like(F), c["lp"], c["rp"]])
    with pytest.raises(ZfitInputError, match="does not say series or parallel mode"):
        read_sweep(path)
    np.testing.assert_allclose(read_sweep(path, columns="f,-,Lp,Rp").z_ohm, z, rtol=1e-9)
    np.testing.assert_allclose(read_sweep(path, columns="f=1,lp=L,rp='R'").z_ohm, z, rtol=1e-9)
    # A unit in --columns overrides the header's.
    path = write_table(tmp_path / "u.csv", ["Ls (H)", "Rs"], [c["ls"] * 1e6, c["rs"]])
    np.testing.assert_allclose(read_sweep(path, columns="f,ls[uH],rs").z_ohm, z, rtol=1e-9)


@pytest.mark.parametrize("text, message", [
    ("", "--columns is empty"),
    ("f,L,R", "say Ls or Lp"),
    ("f=1,zmag", "not a mix"),
    ("f=1,zmag=7,phase=3", "column 7"),
    ("f=1,zmag=Impedance,phase=3", "no column named 'Impedance'"),
    ("f,f,zmag", "given twice"),
    ("f,volts,zmag", "unknown quantity 'volts'"),
])
def test_columns_syntax_errors(text, message):
    with pytest.raises(ZfitInputError, match=message):
        parse_columns(text, ["a", "b", "c"], 3)


def test_unsorted_and_repeated_rows(tmp_path):
    z = part_z(F)
    order = np.r_[np.arange(10, 25), np.arange(0, 10), 3]  # shuffled, row 4 repeated at the end
    lines = ["f (Hz),R (ohm),X (ohm)"] + [f"{F[i]:.15e},{z[i].real:.15e},{z[i].imag:.15e}" for i in order]
    path = tmp_path / "t.csv"
    path.write_text("\n".join(lines) + "\n")
    with pytest.warns(MeasurementWarning, match="1 repeated frequencies dropped"):
        sw = read_sweep(path)
    np.testing.assert_allclose(sw.f_hz, F, rtol=1e-14)
    np.testing.assert_allclose(sw.z_ohm, z, rtol=1e-9)
    assert any("sorted" in n for n in sw.notes)


def test_default_noise_on_tables_and_override():
    from zfit import InstrumentNoise
    from zfit.io._sweep_file import TABLE_NOISE_DEFAULT, default_noise

    assert default_noise(DATA / "ls_rs_tab.txt") == TABLE_NOISE_DEFAULT == InstrumentNoise(1e-3, 1e-4)
    sw = read_sweep(DATA / "ls_rs_tab.txt")
    np.testing.assert_allclose(sw.sigma_ohm, 1e-3 * np.abs(sw.z_ohm) + 1e-4, rtol=1e-12)
    sw = read_sweep(DATA / "ls_rs_tab.txt", noise=InstrumentNoise(1e-2, 0.0))
    np.testing.assert_allclose(sw.sigma_ohm, 1e-2 * np.abs(sw.z_ohm), rtol=1e-12)
    assert sw.noise == InstrumentNoise(1e-2, 0.0)


def test_spreadsheet_quirks(tmp_path):
    """Quoted fields, a delimiter closing each row, decimal commas with tabs, UTF-16 text."""
    z = model_z(F)
    rows = [f'"{f:.15e}","{a:.15e}","{b:.15e}",' for f, a, b in zip(F, z.real, z.imag)]
    path = tmp_path / "quoted.csv"
    path.write_text('"Freq (Hz)","R (Ohm)","X (Ohm)",\n' + "\n".join(rows) + "\n")
    np.testing.assert_allclose(read_sweep(path).z_ohm, z, rtol=1e-9)
    rows = [f"{f:.15e}\t{a:.15e}\t{b:.15e}".replace(".", ",") for f, a, b in zip(F, z.real, z.imag)]
    path = tmp_path / "comma.txt"
    path.write_text("Freq (Hz)\tR (Ohm)\tX (Ohm)\n" + "\n".join(rows) + "\n")
    sw = read_sweep(path)
    np.testing.assert_allclose(sw.z_ohm, z, rtol=1e-9)
    assert "tab (decimal comma)" in sw.data_format
    path = tmp_path / "wide.csv"
    path.write_bytes(("Freq (Hz),R (Ohm),X (Ohm)\n" + "\n".join(f"{f:.15e},{a:.15e},{b:.15e}" for f, a, b in
                                                            zip(F, z.real, z.imag)) + "\n").encode("utf-16"))
    np.testing.assert_allclose(read_sweep(path).z_ohm, z, rtol=1e-9)


def test_header_that_does_not_line_up_is_an_error(tmp_path):
    z = model_z(F)
    path = tmp_path / "t.dat"
    path.write_text("Frequency (Hz)  Real part (ohm)  Imag part (ohm)\n"
                    + "\n".join(f"{f:.15e} {a:.15e} {b:.15e}" for f, a, b in zip(F, z.real, z.imag)) + "\n")
    with pytest.raises(ZfitInputError, match=r"t.dat:1: the header has 5 fields .* data rows have 3 columns"):
        read_sweep(path)
    np.testing.assert_allclose(read_sweep(path, columns="f,rs,xs").z_ohm, z, rtol=1e-9)

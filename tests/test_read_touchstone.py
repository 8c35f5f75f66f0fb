"""Touchstone reading: round trips through scikit-rf's writer, the fixture
cases, agreement of the fast 1.x parser with scikit-rf, and conversion to
impedance checked against ngspice and textbook formulas."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from ngspice import run_ac
from typer.testing import CliRunner
from zfit.cli._app import app
from zfit import read_sweep
from zfit.io._touchstone import read_touchstone

DATA = Path(__file__).parent / "data" / "touchstone"


def model_z(f):
    # Same invented part as tests/data/make_fixtures.py: 0.5 ohm + 1 uH, 10 pF across.
    s = 2j * np.pi * np.asarray(f, dtype=float)
    return 1 / (1 / (0.5 + s * 1e-6) + s * 10e-12)


# Textbook one-port-in-a-two-port S-parameters, written out here rather than
# taken from zfit (Pozar, Microwave Engineering, 4th ed., 2012: eq. 2.35 for
# the reflection coefficient; Table 4.1 ABCD of a series impedance / shunt
# admittance, converted to S with Table 4.2's ABCD->S formulas; equation and
# table numbers from memory).
def textbook_two_port(z, connection, z0):
    if connection == "reflection":
        s11 = (z - z0) / (z + z0)
        return s11, np.zeros_like(s11)
    if connection == "series-thru":  # A=1, B=Z, C=0, D=1
        d = z + 2 * z0
        return z / d, 2 * z0 / d
    d = 2 * z + z0  # shunt-thru: A=1, B=0, C=1/Z, D=1
    return -z0 / d, 2 * z / d


def skrf_network(f, z, connection, z0):
    import skrf

    s11, s21 = textbook_two_port(z, connection, z0)
    if connection == "reflection":
        s = s11[:, None, None]
    else:
        s = np.empty((f.size, 2, 2), dtype=complex)
        s[:, 0, 0] = s[:, 1, 1] = s11
        s[:, 1, 0] = s[:, 0, 1] = s21
    return skrf.Network(frequency=skrf.Frequency.from_f(f, unit="hz"), s=s, z0=z0)


F = np.geomspace(1e5, 3e8, 41)


@pytest.mark.parametrize("version", ["1.0", "2.0"])
@pytest.mark.parametrize("connection", ["reflection", "series-thru", "shunt-thru"])
@pytest.mark.parametrize("form", ["ri", "ma", "db"])
@pytest.mark.parametrize("unit", ["hz", "khz", "mhz", "ghz"])
def test_round_trip_through_skrf_writer(tmp_path, version, connection, form, unit):
    z0 = 75.0 if form == "ma" else 50.0
    z = model_z(F)
    net = skrf_network(F, z, connection, z0)
    net.frequency.unit = unit
    net.write_touchstone("part", dir=str(tmp_path), form=form, version=version)
    path = next(tmp_path.iterdir())
    sw = read_sweep(path, connection if path.suffix != ".s1p" else None)
    assert sw.connection == connection
    assert sw.reference_ohm == z0
    np.testing.assert_allclose(sw.f_hz, F, rtol=1e-12)
    # skrf writes full float precision: the round trip must hold to 1e-9.
    np.testing.assert_allclose(sw.z_ohm, z, rtol=1e-9)
    assert sw.data_format.startswith(f"Touchstone {'1.x' if version == '1.0' else '2.0'}, S, {form.upper()}")
    # zfit info reads every variant and prints back what it understood.
    args = ["info", str(path)] + ([] if path.suffix == ".s1p" else ["-c", connection])
    r = CliRunner().invoke(app, args)
    assert r.exit_code == 0, r.output
    assert f"format       {sw.data_format}" in r.stdout and f"reference    {z0:g} Ω" in r.stdout


# A shunt part has a Z matrix and a series part a Y matrix (the other is singular).
@pytest.mark.parametrize("parameter, connection", [("Z", "reflection"), ("Y", "reflection"), ("Z", "shunt-thru"),
                                                   ("Y", "series-thru")])
@pytest.mark.parametrize("version", ["1.0", "2.0"])
def test_round_trip_non_s_parameters(tmp_path, parameter, connection, version):
    z = model_z(F)
    net = skrf_network(F, z, connection, 50.0)
    net.write_touchstone("part", dir=str(tmp_path), form="ri", parameter=parameter, version=version)
    path = next(tmp_path.iterdir())
    sw = read_sweep(path, connection if path.suffix not in (".s1p", ".z1p", ".y1p") else None)
    np.testing.assert_allclose(sw.z_ohm, z, rtol=1e-9)
    assert f"Touchstone {'1.x' if version == '1.0' else '2.0'}, {parameter}," in sw.data_format


GOOD = {
    # file: (connection, reference ohm, format text it must report)
    "v1_ri_ghz.s1p": (None, 50, "Touchstone 1.x, S, RI, GHz, R 50"),
    "v1_ma_mhz_r75.s1p": (None, 75, "Touchstone 1.x, S, MA, MHz, R 75"),
    "v1_db_khz.s1p": (None, 50, "Touchstone 1.x, S, DB, kHz, R 50"),
    "v1_ri_hz.s1p": (None, 50, "Touchstone 1.x, S, RI, Hz, R 50"),
    "v1_comments_between_data.s1p": (None, 50, "RI, MHz"),
    "v1_blank_lines_before_option.s1p": (None, 50, "MA, GHz"),
    "v1_no_option_line.s1p": (None, 50, "Touchstone 1.x, S, MA, GHz, R 50"),
    "v1_options_any_order.s1p": (None, 75, "Touchstone 1.x, S, RI, MHz, R 75"),
    "v1_lowercase_trailing_comments.s1p": (None, 50, "DB, MHz"),
    "v1_tabs.s1p": (None, 50, "RI, GHz"),
    "v1_latin1_comment.s1p": (None, 50, "RI, GHz"),
    "v1_series_ma_mhz.s2p": ("series-thru", 50, "Touchstone 1.x, S, MA, MHz, R 50; S21 used"),
    "v1_shunt_db_khz_r75.s2p": ("shunt-thru", 75, "Touchstone 1.x, S, DB, kHz, R 75"),
    "v1_series_ri_hz.s2p": ("series-thru", 50, "RI, Hz"),
    "v1_with_noise_block.s2p": ("series-thru", 50, "RI, MHz"),
    "v1_wrapped_rows.s2p": ("shunt-thru", 50, "RI, MHz"),
    "v2_full_series.ts": ("series-thru", 50, "Touchstone 2.0, S, RI, MHz, R 50, 2 ports"),
    "v2_upper_series.ts": ("series-thru", 50, "upper matrix"),
    "v2_lower_series.ts": ("series-thru", 50, "lower matrix"),
    "v2_upper_no_order.ts": ("series-thru", 50, "upper matrix"),
    "v2_reference_next_line.ts": ("series-thru", 50, "Touchstone 2.0"),
    "v2_one_port_r75.ts": (None, 75, "Touchstone 2.0, S, DB, GHz, R 75, 1 port"),
    "v2_in_s2p_extension.s2p": ("series-thru", 50, "Touchstone 2.0"),
}


@pytest.mark.parametrize("name", sorted(GOOD))
def test_fixture_cases(name):
    connection, z0, fmt = GOOD[name]
    sw = read_sweep(DATA / name, connection)
    # Fixtures hold 12-digit numbers of the model: 1e-9 covers the rounding.
    np.testing.assert_allclose(sw.z_ohm, model_z(sw.f_hz), rtol=1e-9)
    assert sw.n_points == 12
    assert sw.reference_ohm == z0
    assert fmt in sw.data_format


def test_fixture_notes():
    assert any("defaults GHz, S, MA, R 50" in n for n in read_sweep(DATA / "v1_no_option_line.s1p").notes)
    assert any("noise-parameter block from line 15" in n
               for n in read_sweep(DATA / "v1_with_noise_block.s2p", "series-thru").notes)


# scikit-rf 2.2 requires the option-line order "unit parameter format R n";
# the any-order fixture is checked against the model above instead.
@pytest.mark.parametrize("name", [n for n in sorted(GOOD) if not n.startswith("v2") and "any_order" not in n])
def test_fast_parser_agrees_with_skrf(name):
    """The vectorised 1.x path gives what scikit-rf's own reader gives."""
    import skrf

    ours = read_touchstone(DATA / name, 2 if name.endswith(".s2p") else 1)
    theirs = skrf.Network(str(DATA / name))
    np.testing.assert_allclose(ours.f_hz, theirs.f, rtol=1e-14)
    np.testing.assert_allclose(ours.s, theirs.s, rtol=1e-12, atol=1e-15)


def test_triangle_matrix_agrees_with_skrf_where_skrf_is_right():
    # scikit-rf fills an Upper matrix correctly when the 12_21 order is given.
    import skrf.io.touchstone as ts

    ours = read_touchstone(DATA / "v2_upper_series.ts")
    theirs = ts.Touchstone(str(DATA / "v2_upper_series.ts"))
    np.testing.assert_allclose(ours.s, theirs.s, rtol=1e-12)


@pytest.mark.ngspice
@pytest.mark.parametrize("connection", ["reflection", "series-thru", "shunt-thru"])
def test_ngspice_rlc_through_touchstone(tmp_path, connection):
    """ngspice's Z of a known R-L-C one-port -> textbook S -> Touchstone -> zfit -> Z, to 1e-6."""
    elements = "R1 n1 n2 0.25\nL1 n2 0 4.7u\nC1 n1 0 22p\nRp n1 0 15k"
    f, z_spice = run_ac(elements, 1e4, 1e9, 20)
    net = skrf_network(f, z_spice, connection, 50.0)
    net.write_touchstone("rlc", dir=str(tmp_path), form="ma")
    path = next(tmp_path.iterdir())
    sw = read_sweep(path, None if connection == "reflection" else connection)
    np.testing.assert_allclose(sw.f_hz, f, rtol=1e-12)
    np.testing.assert_allclose(sw.z_ohm, z_spice, rtol=1e-6)
    # And the spice impedance is that of the textbook circuit (a sanity link between the two).
    s = 2j * np.pi * f
    z_book = 1 / (1 / (0.25 + s * 4.7e-6) + s * 22e-12 + 1 / 15e3)
    np.testing.assert_allclose(z_spice, z_book, rtol=1e-6)


@pytest.mark.parametrize("connection", ["reflection", "series-thru", "shunt-thru"])
def test_monte_carlo_sigma(tmp_path, connection):
    """Propagated sigma(Z) matches the spread of Z over 4,000 noisy S draws within 10 %."""
    from zfit import InstrumentNoise

    rng = np.random.default_rng(7 + len(connection))
    f = np.geomspace(1e5, 1e8, 12)
    z = model_z(f)
    noise = InstrumentNoise(2e-3, 1e-4)
    net = skrf_network(f, z, connection, 50.0)
    net.write_touchstone("mc", dir=str(tmp_path), form="ri")
    path = next(tmp_path.iterdir())
    sw = read_sweep(path, None if connection == "reflection" else connection, noise=noise)
    s11, s21 = textbook_two_port(z, connection, 50.0)
    s = s11 if connection == "reflection" else s21
    n = 4000
    sigma_s = 2e-3 * np.abs(s) + 1e-4
    ds = sigma_s / np.sqrt(2) * (rng.standard_normal((n, f.size)) + 1j * rng.standard_normal((n, f.size)))
    sn = s + ds
    # Inverse formulas written out (Pozar 2012, as above), not zfit's.
    z0 = 50.0
    if connection == "reflection":
        zn = z0 * (1 + sn) / (1 - sn)
    elif connection == "series-thru":
        zn = 2 * z0 * (1 - sn) / sn
    else:
        zn = z0 * sn / (2 * (1 - sn))
    spread = np.sqrt(np.mean(np.abs(zn - z) ** 2, axis=0))
    np.testing.assert_allclose(sw.sigma_ohm, spread, rtol=0.10)


def test_two_port_without_connection_names_the_three(tmp_path):
    from zfit import ZfitInputError

    # Clear data: the connection is taken from them, with a note.
    sw = read_sweep(DATA / "v1_series_ma_mhz.s2p")
    assert sw.connection == "series-thru"
    assert any("looks like series-thru" in n for n in sw.notes)
    # Ambiguous data (S21 = S11 = 0.5: neither identity holds): refused, naming the three.
    lines = ["# MHz S RI R 50"] + [f"{1 + k} 0.3 0.1 0.5 0 0.5 0 0.3 0.1" for k in range(20)]
    path = tmp_path / "odd.s2p"
    path.write_text("\n".join(lines) + "\n")
    with pytest.raises(ZfitInputError) as err:
        read_sweep(path)
    text = str(err.value)
    for word in ("reflection", "shunt-thru", "series-thru", "S11 + S21 = 1", "fits neither closely"):
        assert word in text

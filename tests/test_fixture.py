"""Fixture compensation and port extension against ngspice-simulated fixtures.

The fixture is a test board of our own: lead resistance and inductance in
series, a pad capacitance across the part (an L-section, for which the
open/short correction is exact) and, for the "pi" board, a second pad at the
analyser's side (for which only the open/short/load correction is exact).
ngspice (batch mode, harness tests/ngspice.py) gives the impedance at the
analyser's terminals for the open, short, load and part, and of the part
alone as the reference.  The analyser's noise is added on S11 with the
package's noise model.
"""

import numpy as np
import pytest

import zfit
from ngspice import run_ac
from zfit.data._connection import InstrumentNoise, impedance_from_s, s_from_impedance, sigma_z_from_s
from zfit._errors import ZfitInputError
from zfit.data._fixture import compensated, corrected_impedance, fixture_on_grid, port_extended
from zfit.io._standards import compensate_from_files
from zfit.data._sweep import make_sweep

F0, F1, PPD = 1e3, 1e8, 30
NOISE = InstrumentNoise(1e-3, 1e-5)

# Lead 0.35 ohm + 12 nH, pad 3 pF across the part (L-section); the pi board
# adds 1.5 pF at the analyser's side.
FIXTURE_L = "Rlead n1 a 0.35\nLlead a b 12n\nCpad b 0 3p\n"
FIXTURE_PI = "Cin n1 0 1.5p\n" + FIXTURE_L
# The part: 1 uH with 0.2 ohm winding resistance and 2 pF across it.
PART = "Rw {n} c 0.2\nLw c 0 1u\nCw {n} 0 2p\n"
OPEN, SHORT, LOAD, RES = "", "Vshort b 0 0\n", "Rload b 0 50\n", "Rknown b 0 100\n"


@pytest.fixture(scope="module")
def sims():
    out = {}
    for board, fx in (("L", FIXTURE_L), ("pi", FIXTURE_PI)):
        for name, dut in (("open", OPEN), ("short", SHORT), ("load", LOAD), ("part", PART.format(n="b")), ("res", RES)):
            f, z = run_ac(fx + dut, F0, F1, PPD)
            out[board, name] = z
    f, z = run_ac(PART.format(n="n1"), F0, F1, PPD)
    out["f"], out["true"] = f, z
    return out


def noisy(z, rng, noise=NOISE):
    """Z and sigma as a reflection measurement with noise on S11 would give."""
    s = s_from_impedance(z, "reflection")
    s = s + noise.sigma(s) * (rng.normal(size=s.size) + 1j * rng.normal(size=s.size)) / np.sqrt(2)
    return impedance_from_s(s, "reflection"), sigma_z_from_s(s, "reflection", 50.0, noise), s


def write_s1p(path, f, s):
    lines = ["! simulated fixture standard (ngspice)", "# Hz S RI R 50"]
    lines += [f"{fi:.12g} {si.real:.12g} {si.imag:.12g}" for fi, si in zip(f, s)]
    path.write_text("\n".join(lines) + "\n")
    return path


def test_open_short_load_recovers_the_part_through_the_pi_board(sims):
    # Reference: ngspice's impedance of the part alone.  Three standards fix
    # any linear fixture (bilinear map, three unknowns), so the error is
    # ngspice's 12-digit output only.
    z = corrected_impedance(sims["pi", "part"], sims["pi", "open"], sims["pi", "short"], sims["pi", "load"], 50.0)
    err = np.abs(z - sims["true"]) / np.abs(sims["true"])
    assert err.max() < 1e-6


def test_open_short_is_exact_for_an_l_section_and_off_by_2_zs_over_zo_otherwise(sims):
    z = corrected_impedance(sims["L", "part"], sims["L", "open"], sims["L", "short"])
    assert (np.abs(z - sims["true"]) / np.abs(sims["true"])).max() < 1e-6
    # The pi board breaks the L-section assumption.  For a reciprocal
    # fixture with ABCD matrix [[A, B], [C, D]] the open/short result is
    # Z / D^2 (docs/fixtures.md); the pi board's D = 1 + Y_in Z_lead
    # (Pozar, Microwave Engineering, 4th ed., Table 4.1: cascade of a shunt
    # admittance, a series impedance and a shunt admittance).
    z = corrected_impedance(sims["pi", "part"], sims["pi", "open"], sims["pi", "short"])
    w = 2 * np.pi * sims["f"]
    d = 1 + 1j * w * 1.5e-12 * (0.35 + 1j * w * 12e-9)
    assert np.abs(z / sims["true"] - 1)[-1] > 1e-4
    np.testing.assert_allclose(z, sims["true"] / d**2, rtol=1e-6)


def test_compensation_recovers_the_part_within_its_propagated_sigma(sims, rng, tmp_path):
    # Each standard and the part measured once with noise on S11, through
    # files read by the package's readers.  If sigma is honest, the
    # normalised error |Z - Z_true| / sigma of a circular Gaussian has
    # E[e^2] = 1 (the mean of 151 exponential variables: +-0.08 at 1 sd).
    f = sims["f"]
    paths = {}
    for name in ("open", "short", "load", "part"):
        _, _, s = noisy(sims["pi", name], rng)
        paths[name] = write_s1p(tmp_path / f"{name}.s1p", f, s)
    part = zfit.read_sweep(paths["part"])
    comp = compensate_from_files(part, paths["open"], paths["short"], paths["load"], 50.0)
    e = np.abs(comp.z_ohm - sims["true"]) / comp.sigma_ohm
    assert 0.7 < np.mean(e**2) < 1.35
    assert e.max() < 4.5  # P(e > 4.5) = exp(-20) per point
    # The fixture's noise matters: sigma grew beyond the part's own
    # propagated through the correction alone.
    alone = np.abs(compensated(part.z_ohm, part.sigma_ohm, (sims["pi", "open"], 1e-30),
                               (sims["pi", "short"], 1e-30), (sims["pi", "load"], 1e-30), 50.0)[1])
    assert np.median(comp.sigma_ohm / alone) > 1.2
    assert "open/short/load" in comp.notes[-1]


def test_sigma_propagation_over_many_realisations(sims, rng):
    # Pool 8 noisy realisations of the four measurements (1208 points):
    # E[e^2] = 1 within +-0.1 (3.5 sd); also for open/short on the L board.
    for board, use_load in (("pi", True), ("L", False)):
        e2 = []
        for _ in range(8):
            m = {k: noisy(sims[board, k], rng)[:2] for k in ("open", "short", "load", "part")}
            z, sig = compensated(*m["part"], m["open"], m["short"], m["load"] if use_load else None, 50.0 if use_load else None)
            e2.append(np.abs(z - sims["true"]) ** 2 / sig**2)
        assert abs(np.mean(e2) - 1) < 0.1, board


def test_known_resistor_comes_back_flat_in_value_and_phase(sims, rng):
    # 100 ohm through the pi board: the raw reading is off by the leads and
    # pads (tens of degrees at 100 MHz); open/short/load restores 100 ohm, 0 deg.
    raw = sims["pi", "res"]
    assert np.degrees(np.abs(np.angle(raw))).max() > 10
    z = corrected_impedance(raw, sims["pi", "open"], sims["pi", "short"], sims["pi", "load"], 50.0)
    assert np.abs(np.abs(z) / 100 - 1).max() < 1e-7
    assert np.degrees(np.abs(np.angle(z))).max() < 1e-5
    # With noise: flat within the propagated sigma at every point.
    m = {k: noisy(sims["pi", k], rng)[:2] for k in ("open", "short", "load", "res")}
    z, sig = compensated(*m["res"], m["open"], m["short"], m["load"], 50.0)
    assert (np.abs(z - 100) / sig).max() < 4.5
    assert abs(np.average(z.real, weights=sig**-2) - 100) < 0.02  # ohm, ~4 sd of the mean


def test_fixture_on_a_coarser_grid_is_interpolated(sims):
    # The standards measured at 10 points per decade, the part at 30: PCHIP
    # of log|Z| and phase on log f keeps the error far below the noise.
    f = sims["f"]
    coarse = {}
    for name, dut in (("open", OPEN), ("short", SHORT), ("load", LOAD)):
        fc, zc = run_ac(FIXTURE_PI + dut, F0, F1, 10)
        sw = make_sweep(fc, zc, 1e-9 * np.abs(zc) + 1e-12, source=f"{name} (10/decade)")
        coarse[name] = fixture_on_grid(sw, f, name)
    z = corrected_impedance(sims["pi", "part"], coarse["open"][0], coarse["short"][0], coarse["load"][0], 50.0)
    err = np.abs(z / sims["true"] - 1)
    _, sig, _ = noisy(sims["true"], np.random.default_rng(0))
    assert err.max() < 2e-3
    assert np.median(np.abs(z - sims["true"]) / sig) < 0.1


def test_fixture_band_narrower_than_the_part_is_an_error_naming_the_overlap(sims, tmp_path):
    f = sims["f"]
    s = s_from_impedance(sims["pi", "open"], "reflection")
    inside = (f >= 1e4 * (1 - 1e-9)) & (f <= 1e7 * (1 + 1e-9))
    op = write_s1p(tmp_path / "open_narrow.s1p", f[inside], s[inside])
    sh = write_s1p(tmp_path / "short.s1p", f, s_from_impedance(sims["pi", "short"], "reflection"))
    pt = write_s1p(tmp_path / "part.s1p", f, s_from_impedance(sims["pi", "part"], "reflection"))
    part = zfit.read_sweep(pt)
    with pytest.raises(ZfitInputError) as info:
        compensate_from_files(part, op, sh)
    msg = str(info.value)
    assert "open_narrow.s1p" in msg
    assert "covers 10 kHz to 10 MHz" in msg and "1 kHz to 100 MHz" in msg
    assert "overlap in 10 kHz to 10 MHz" in msg


def test_load_needs_open_short_and_value(sims, tmp_path):
    f = sims["f"]
    p = write_s1p(tmp_path / "p.s1p", f, s_from_impedance(sims["pi", "part"], "reflection"))
    part = zfit.read_sweep(p)
    with pytest.raises(ZfitInputError, match="needs --open and --short"):
        compensate_from_files(part, None, p, p, 50.0)
    with pytest.raises(ZfitInputError, match="--load-value"):
        compensate_from_files(part, p, p, p, None)


def test_port_extension_removes_an_ngspice_line():
    # The part behind 35 ps of 50-ohm lossless line (ngspice's T element):
    # S11 exp(+j 2 w tau) gives back the part alone.
    f, z_line = run_ac("T1 n1 0 n2 0 Z0=50 TD=35p\n" + PART.format(n="n2"), 1e5, 1e9, 20)
    _, z_true = run_ac(PART.format(n="n1"), 1e5, 1e9, 20)
    s = s_from_impedance(z_line, "reflection")
    sw = make_sweep(f, z_line, sigma_z_from_s(s, "reflection", 50.0, NOISE), connection="reflection", s_param=s,
                    reference_ohm=50.0, noise=NOISE, source="line.s1p")
    assert np.abs(z_line[-1] / z_true[-1] - 1) > 0.1
    out = port_extended(sw, 35e-12)
    np.testing.assert_allclose(out.z_ohm, z_true, rtol=1e-6)
    # sigma follows the noise model at the part's plane (|S| unchanged by a lossless line).
    np.testing.assert_allclose(out.sigma_ohm, sigma_z_from_s(s_from_impedance(z_true, "reflection"), "reflection", 50.0, NOISE),
                               rtol=1e-5)
    assert "port extension" in out.notes[-1]


def test_port_extension_with_skin_effect_loss():
    # Reference: scikit-rf's transmission line with attenuation
    # alpha = a0 sqrt(f / 1 GHz) per unit length (a line whose loss in dB
    # grows as sqrt(f), the skin-effect model the option documents).  The
    # line's "length" is its delay: gamma per second, beta = w.
    skrf = pytest.importorskip("skrf")
    f = np.geomspace(1e6, 3e9, 121)
    freq = skrf.Frequency.from_f(f, unit="hz")
    tau, loss_db = 40e-12, 0.3  # one-way delay, one-way dB at 1 GHz
    alpha = loss_db / (20 * np.log10(np.e)) * np.sqrt(f / 1e9) / tau  # Np per second of delay
    media = skrf.media.DefinedGammaZ0(freq, z0=50, gamma=alpha + 2j * np.pi * f)
    z_part = 5.0 + 2j * np.pi * f * 2e-9
    load = media.load((z_part - 50) / (z_part + 50))
    s = (media.line(tau, unit="m") ** load).s[:, 0, 0]
    z = impedance_from_s(s, "reflection")
    sw = make_sweep(f, z, sigma_z_from_s(s, "reflection", 50.0, NOISE), connection="reflection", s_param=s,
                    reference_ohm=50.0, noise=NOISE)
    out = port_extended(sw, tau, loss=loss_db)
    np.testing.assert_allclose(out.z_ohm, z_part, rtol=1e-6)


def test_port_extension_refuses_what_it_cannot_do(sims):
    f = sims["f"]
    z = sims["true"]
    table = make_sweep(f, z, 1e-3 * np.abs(z), connection="impedance")
    with pytest.raises(ZfitInputError, match="reflection"):
        port_extended(table, 10e-12)
    s = s_from_impedance(z, "reflection")
    sw = make_sweep(f, z, sigma_z_from_s(s, "reflection"), connection="reflection", s_param=s, reference_ohm=50.0,
                    noise=NOISE)
    comp = compensated(sw.z_ohm, sw.sigma_ohm, short=(np.full(f.size, 0.01 + 0j), np.full(f.size, 1e-4)))
    import dataclasses

    with pytest.raises(ZfitInputError, match="before fixture compensation"):
        port_extended(dataclasses.replace(sw, z_ohm=comp[0]), 10e-12)
    with pytest.raises(ZfitInputError, match="non-negative"):
        port_extended(sw, -1e-12)


def test_identify_through_the_pi_board_from_the_command_line(sims, rng, tmp_path):
    # End to end: files of the four measurements, `zfit identify` with
    # open/short/load compensation, the part's ngspice values back within
    # 4 of their reported standard uncertainties (1 uH, 0.2 ohm, 2 pF).
    import json

    from typer.testing import CliRunner

    from zfit.cli._app import app

    f = sims["f"]
    paths = {}
    for name in ("open", "short", "load", "part"):
        _, _, s = noisy(sims["pi", name], rng)
        paths[name] = write_s1p(tmp_path / f"{name}.s1p", f, s)
    out = tmp_path / "part.json"
    args = ["identify", str(paths["part"]), "--model", "inductor", "--open", str(paths["open"]),
            "--short", str(paths["short"]), "--load", str(paths["load"]), "--load-value", "50", "--json", str(out)]
    r = CliRunner().invoke(app, args)
    assert r.exit_code == 0, r.output
    params = json.loads(out.read_text())["parameters"]
    for key, true in (("L", 1e-6), ("R_s", 0.2), ("C_p", 2e-12)):
        assert abs(params[key]["value"] - true) < 4 * params[key]["std"], (key, params[key])
    # Uncompensated, the pads' 4.5 pF land in C_p.
    r = CliRunner().invoke(app, ["identify", str(paths["part"]), "--model", "inductor", "--json", str(tmp_path / "raw.json")])
    raw = json.loads((tmp_path / "raw.json").read_text())["parameters"]
    assert raw["C_p"]["value"] > 5e-12
    # A narrower fixture band is a one-line error with exit status 2.
    inside = (f >= 1e4 * (1 - 1e-9)) & (f <= 1e7 * (1 + 1e-9))
    narrow = write_s1p(tmp_path / "narrow_open.s1p", f[inside], s_from_impedance(sims["pi", "open"], "reflection")[inside])
    r = CliRunner().invoke(app, ["info", str(paths["part"]), "--open", str(narrow), "--short", str(paths["short"])])
    assert r.exit_code == 2 and "narrow_open.s1p" in r.output and "overlap in 10 kHz to 10 MHz" in r.output


def test_a_rewritten_standard_is_read_again(sims, tmp_path):
    # Standards are cached by file identity for lots; a new measurement in
    # the same file must be used.  Reference: the array computation.
    f = sims["f"]
    part = zfit.read_sweep(write_s1p(tmp_path / "part.s1p", f, s_from_impedance(sims["L", "part"], "reflection")))
    sh = write_s1p(tmp_path / "short.s1p", f, s_from_impedance(sims["L", "short"], "reflection"))
    op = write_s1p(tmp_path / "open.s1p", f, s_from_impedance(sims["L", "open"], "reflection"))
    first = compensate_from_files(part, op, sh).z_ohm
    np.testing.assert_allclose(first, sims["true"], rtol=1e-6)
    path = write_s1p(tmp_path / "open.s1p", f, s_from_impedance(sims["pi", "open"], "reflection"))
    path.write_text(path.read_text() + "! measured again\n")
    second = compensate_from_files(part, op, sh).z_ohm
    np.testing.assert_allclose(second, corrected_impedance(part.z_ohm, sims["pi", "open"], sims["L", "short"]), rtol=1e-6)

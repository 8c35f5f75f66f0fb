"""Transfer functions fitted to gain/phase readings (`analyse_response`).

Reference networks: the textbook voltage transfers of passive R-C, L-R and
R-L-C dividers (common practice; e.g. K. Ogata, *Modern Control Engineering*,
5th ed., 2010, ch. 7, from memory), evaluated by scipy.signal.freqs, an
implementation independent of zfit.  The readings carry Gaussian noise of a
stated size on the gain in dB and on the phase in degrees (a lock-in or a
scope's averaged measurement; the sizes are common practice), seeded.
"""

import math
import warnings

import numpy as np
import pytest
from scipy.signal import freqs

from zfit._errors import MeasurementWarning
from zfit.capture._response_result import analyse_response
from zfit.capture._swept_sine import gain_phase_points
from zfit.io._response_table import ResponseTable

SQRT3 = math.sqrt(3.0)


def readings(b, a, f, rng, noise_db=0.05, noise_deg=0.3):
    """A table of H = b(s)/a(s) at f with Gaussian noise of noise_db on 20 log|H| and noise_deg on the phase."""
    f = np.asarray(f, float)
    _, h = freqs(b, a, 2 * np.pi * f)
    g_db = 20 * np.log10(np.abs(h)) + rng.normal(0.0, noise_db, f.size)
    ph = np.angle(h) + np.radians(rng.normal(0.0, noise_deg, f.size))
    # The phase as a scope reads it: within +-180 degrees.
    ph = (ph + np.pi) % (2 * np.pi) - np.pi
    return ResponseTable(f, 10 ** (g_db / 20), ph, np.arange(f.size) + 2, source="simulated")


def analysed(table, noise_db=0.05, noise_deg=0.3, **kw):
    # The accuracy options are bounds of a rectangular distribution, u = a/sqrt(3) (GUM 4.3.7): a = sqrt(3) u.
    pts = gain_phase_points(table, SQRT3 * noise_db, SQRT3 * noise_deg)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", MeasurementWarning)
        return analyse_response(pts, **kw)


def test_rc_low_pass_tau_and_f3db(rng):
    # R = 4.7 kohm, C = 22 nF: H = 1/(1 + s R C), tau = R C, f_3dB = 1/(2 pi R C) (the definition).
    tau = 4.7e3 * 22e-9
    r = analysed(readings([1.0], [tau, 1.0], np.geomspace(100, 100e3, 10), rng))
    d = r.to_dict()
    assert d["model"]["structure"] == "1 pole"
    assert d["time_constants_s"][0]["value"] == pytest.approx(tau, rel=0.01)
    assert d["f_3db_hz"]["value_hz"] == pytest.approx(1 / (2 * math.pi * tau), rel=0.01)
    assert d["f_3db_hz"]["edge"] == "upper" and d["f_3db_hz"]["in_band"]
    assert d["dc_gain"]["value"] == pytest.approx(1.0, abs=0.01)
    # The stated uncertainty covers the error (3 standard uncertainties).
    assert abs(d["time_constants_s"][0]["value"] - tau) < 3 * d["time_constants_s"][0]["std"]


def test_lr_low_pass_from_eight_uneven_points(rng):
    # Series L = 2.2 mH, output across R = 470 ohm: H = R/(R + s L), tau = L/R (common practice).
    tau = 2.2e-3 / 470.0
    f = np.sort(np.exp(rng.uniform(math.log(2e3), math.log(500e3), 8)))
    r = analysed(readings([1.0], [tau, 1.0], f, rng))
    assert r.model.structure.order == 1
    assert r.figures.poles[0].tau.value == pytest.approx(tau, rel=0.01)
    assert r.figures.f_3db.frequency.value == pytest.approx(1 / (2 * math.pi * tau), rel=0.01)


def test_rc_high_pass_has_a_zero_at_the_origin(rng):
    # Series C = 10 nF, output across R = 10 kohm: H = s R C / (1 + s R C); the -3 dB edge is the lower one.
    tau = 10e3 * 10e-9
    r = analysed(readings([tau, 0.0], [tau, 1.0], np.geomspace(50, 50e3, 12), rng))
    d = r.to_dict()
    assert d["model"]["origin_zeros"] == 1 and d["model"]["poles"] == 1
    assert d["time_constants_s"][0]["value"] == pytest.approx(tau, rel=0.01)
    assert d["f_3db_hz"]["edge"] == "lower"
    assert d["f_3db_hz"]["value_hz"] == pytest.approx(1 / (2 * math.pi * tau), rel=0.01)
    assert d["dc_gain"] is None and d["high_frequency_gain"]["value"] == pytest.approx(1.0, abs=0.01)


@pytest.mark.parametrize("r_ohm, n", [(20.0, 40), (100.0, 20), (150.0, 12)])
def test_rlc_low_pass_omega_n_and_zeta(rng, r_ohm, n):
    # Series R-L-C, output across C: H = 1/(L C s^2 + R C s + 1), omega_n = 1/sqrt(L C),
    # zeta = (R/2) sqrt(C/L) (Ogata 2010, ch. 7, from memory).  L = 1 mH, C = 100 nF.
    L, C = 1e-3, 100e-9
    wn, zeta = 1 / math.sqrt(L * C), r_ohm / 2 * math.sqrt(C / L)
    r = analysed(readings([1.0], [L * C, r_ohm * C, 1.0], np.geomspace(1e3, 100e3, n), rng))
    pair = [p for p in r.figures.poles if p.kind == "pair"]
    assert r.model.structure.pole_pairs == 1 and r.model.structure.order == 2 and len(pair) == 1
    assert pair[0].omega.value == pytest.approx(wn, rel=0.02)
    assert pair[0].zeta.value == pytest.approx(zeta, rel=0.02)
    # The -3 dB frequency of a second-order low pass (standard result, from memory):
    # omega_3dB = omega_n sqrt(1 - 2 zeta^2 + sqrt(4 zeta^4 - 4 zeta^2 + 2)).
    w3 = wn * math.sqrt(1 - 2 * zeta**2 + math.sqrt(4 * zeta**4 - 4 * zeta**2 + 2))
    assert r.figures.f_3db.frequency.value == pytest.approx(w3 / (2 * math.pi), rel=0.01)
    # Predicted step: overshoot exp(-pi zeta / sqrt(1 - zeta^2)) of the final value (Ogata 2010, 5-3, from memory).
    over = 100 * math.exp(-math.pi * zeta / math.sqrt(1 - zeta**2))
    assert r.figures.step.overshoot_pct.value == pytest.approx(over, rel=0.05)


def test_rlc_band_pass(rng):
    # Series R-L-C, output across R = 50 ohm: H = R C s/(L C s^2 + R C s + 1); peak gain 1 at omega_n,
    # -3 dB edges at omega_n (sqrt(1 + zeta^2) -+ zeta) (common practice).  L = 1 mH, C = 100 nF.
    L, C, R = 1e-3, 100e-9, 50.0
    wn, zeta = 1 / math.sqrt(L * C), R / 2 * math.sqrt(C / L)
    r = analysed(readings([R * C, 0.0], [L * C, R * C, 1.0], np.geomspace(1e3, 200e3, 24), rng))
    pair = [p for p in r.figures.poles if p.kind == "pair"][0]
    assert pair.omega.value == pytest.approx(wn, rel=0.02)
    assert pair.zeta.value == pytest.approx(zeta, rel=0.02)
    assert r.figures.reference == "peak gain"
    edges = {c.edge: c.frequency.value * 2 * math.pi for c in r.figures.cutoffs}
    assert edges["lower"] == pytest.approx(wn * (math.sqrt(1 + zeta**2) - zeta), rel=0.01)
    assert edges["upper"] == pytest.approx(wn * (math.sqrt(1 + zeta**2) + zeta), rel=0.01)


def test_handbook_rc_low_pass(rng):
    # The R-C low pass of P. Horowitz and W. Hill, The Art of Electronics, 3rd ed., Cambridge University
    # Press, 2015, section 1.7.1 (from memory): R = 1.0 kohm, C = 0.16 uF, so f_3dB = 1/(2 pi R C) = 995 Hz
    # ("about 1 kHz").  Read at the 1-2-5 frequencies a bench user steps through, 100 Hz to 20 kHz.
    R, C = 1.0e3, 0.16e-6
    f = np.array([100, 200, 500, 1e3, 2e3, 5e3, 10e3, 20e3])
    r = analysed(readings([1.0], [R * C, 1.0], f, rng))
    assert r.figures.f_3db.frequency.value == pytest.approx(995.0, rel=0.01)
    assert r.figures.poles[0].tau.value == pytest.approx(R * C, rel=0.01)


def test_three_readings_are_enough_for_a_first_order_network(rng):
    # Three frequencies around the corner of an R-C low pass (R C = 1 ms): tau within 2 %.
    tau = 1e-3
    r = analysed(readings([1.0], [tau, 1.0], [50.0, 160.0, 500.0], rng))
    assert r.model.structure.order == 1
    assert r.figures.poles[0].tau.value == pytest.approx(tau, rel=0.02)


def test_repeated_readings_give_the_uncertainty(rng):
    # Three readings at each of 8 frequencies, scatter 0.1 dB and 0.5 deg (stated here), no accuracy given:
    # the pooled scatter over 16 degrees of freedom, divided by sqrt(3), is each point's uncertainty (GUM 4.2.8).
    tau = 50e-6
    f = np.repeat(np.geomspace(300, 300e3, 8), 3)
    table = readings([1.0], [tau, 1.0], f, rng, noise_db=0.1, noise_deg=0.5)
    pts = gain_phase_points(table)
    assert pts.n_points == 8 and list(pts.readings) == [3] * 8
    assert "repeated readings" in pts.uncertainty_source
    # The pooled standard deviation of 16 degrees of freedom is within 35 % of the true one (chi-square, 99 %).
    assert pts.gain_db_std[0] * SQRT3 == pytest.approx(0.1, rel=0.35)
    assert math.degrees(pts.sigma_phase_rad[0]) * SQRT3 == pytest.approx(0.5, rel=0.35)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", MeasurementWarning)
        r = analyse_response(pts)
    assert r.figures.poles[0].tau.value == pytest.approx(tau, rel=0.01)
    assert r.to_dict()["response"]["averages"] == 3


def test_phase_readings_wrapped_at_180_degrees(rng):
    # A third-order R-C ladder lags past -180 degrees; the readings wrap to +-180 as a scope shows them.
    # Three equal sections buffered (no loading): H = 1/(1 + s tau)^3 with tau = 10 us.
    tau = 10e-6
    a = np.polymul(np.polymul([tau, 1.0], [tau, 1.0]), [tau, 1.0])
    r = analysed(readings([1.0], a, np.geomspace(1e3, 1e6, 30), rng), max_order=3)
    assert r.model.structure.order == 3
    # Three equal poles are hard to split (into three real ones or a real one and a pair); the geometric
    # mean of the three roots' magnitudes, the cube root of the constant term, is well determined.
    w = [p.omega.value for p in r.figures.poles for _ in range(p.order)]
    assert len(w) == 3 and math.exp(np.mean(np.log(w))) == pytest.approx(1 / tau, rel=0.02)


def test_a_resistive_divider_is_a_gain_alone(rng):
    # 1 kohm over 1 kohm + 3 kohm: H = 1/4 at every frequency (Ohm's law), read at 6 frequencies.
    r = analysed(readings([0.25], [1.0], np.geomspace(100, 1e6, 6), rng))
    assert r.model.structure.order == 0 and r.figures.poles == () and r.figures.cutoffs == ()
    assert r.figures.dc_gain.value == pytest.approx(0.25, rel=0.01)
    assert r.figures.step.v == pytest.approx(np.full(r.figures.step.v.size, r.figures.dc_gain.value))
    d = r.to_dict()
    assert d["f_3db_hz"] is None and d["time_constants_s"] == [] and d["model"]["structure"].startswith("a gain alone")

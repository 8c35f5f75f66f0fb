"""Figures read from the measurement (zfit.identification._measured).

Data are generated from published physical forms written out here (not from
zfit's circuits) with an instrument error model written out here: relative
magnitude noise 0.3 % and phase noise 0.2 degree, both growing by a factor
up to 3 at the band edges (common practice for analyser specifications).
"""

import math

import numpy as np
import pytest

from zfit.identification._measured import (
    low_frequency_value,
    measured_figures,
    measured_srf,
    spot_figures,
)


def _noisy(f, z, rng, rel=3e-3, phase_deg=0.2):
    """Return (z_measured, sigma) with magnitude and phase noise growing at the band edges."""
    t = (np.log(f) - np.log(f[0])) / (np.log(f[-1]) - np.log(f[0]))
    grow = 1.0 + 2.0 * (2.0 * t - 1.0) ** 8
    sm, sp = rel * grow, math.radians(phase_deg) * grow
    zm = z * (1.0 + sm * rng.standard_normal(f.size)) * np.exp(1j * sp * rng.standard_normal(f.size))
    return zm, np.abs(z) * np.hypot(sm, sp)


def _skin_coil(f, L=22e-6, r_dc=0.040, f_c=50e3, c_p=8e-12):
    """Round-wire winding R_dc*sqrt(1 + j f/f_c) (Wheeler 1942) in series with L, parallel C_p."""
    w = 2 * np.pi * f
    zs = r_dc * np.sqrt(1 + 1j * f / f_c) + 1j * w * L
    return 1.0 / (1.0 / zs + 1j * w * c_p)


def _lossy_capacitor(f, C=100e-6, D=0.08, esr0=0.02, esl=15e-9):
    """Constant loss tangent 1/(j w C (1 - j D)) plus ESR_0 and ESL (electrolytic form)."""
    w = 2 * np.pi * f
    return esr0 + 1j * w * esl + 1.0 / (1j * w * C * (1 - 1j * D))


def test_low_frequency_inductance_and_srf_of_skin_coil():
    rng = np.random.default_rng(12)
    f = np.geomspace(1e3, 30e6, 301)
    zm, sig = _noisy(f, _skin_coil(f), rng)
    lf = low_frequency_value(f, zm, sig)
    # L_eff at 1 kHz = L + internal inductance Im(R_dc sqrt(1+jf/fc))/w ~ L (exact form above).
    assert lf.family == "inductor" and lf.resolved
    assert lf.value == pytest.approx(22e-6, rel=0.03)
    srf = measured_srf(f, zm, sig)
    # Parallel resonance where Im Z = 0; about 1/(2 pi sqrt(L C_p)) for this Q (from the form, solved below).
    w = 2 * np.pi * np.geomspace(5e6, 20e6, 200001)
    ff = w / 2 / np.pi
    truth = ff[np.argmin(np.abs(_skin_coil(ff).imag) / np.abs(_skin_coil(ff)))]
    assert srf.in_band and srf.kind == "parallel"
    assert srf.value_hz == pytest.approx(truth, rel=0.01)


def test_capacitor_c_esr_and_d_on_a_linear_sweep():
    rng = np.random.default_rng(3)
    f = np.linspace(100.0, 2e6, 1601)  # linear sweep (issue 11)
    zm, sig = _noisy(f, _lossy_capacitor(f), rng)
    lf = low_frequency_value(f, zm, sig)
    assert lf.family == "capacitor"
    # C_eff = -1/(w X) = C (1 + D^2) at low frequency for the constant-D form, D^2 = 0.0064.
    assert lf.value == pytest.approx(100e-6 * (1 + 0.08**2), rel=0.03)
    for at in (120.0, 1e3):
        sp = spot_figures(f, zm, sig, at)
        zt = _lossy_capacitor(np.array([at]))[0]
        # Spot D against the form, D >= 0.01 here (15 %).
        assert sp["D"].value == pytest.approx(zt.real / abs(zt.imag), rel=0.15)
        assert sp["R"].value == pytest.approx(zt.real, rel=0.15)
    srf = measured_srf(f, zm, sig)
    # Series resonance 1/(2 pi sqrt(ESL C)) = 129.95 kHz (Im Z = 0 of the form: w ESL = 1/(w C (1+D^2))).
    truth = 1 / (2 * np.pi * math.sqrt(15e-9 * 100e-6 * (1 + 0.08**2)))
    assert srf.kind == "series" and srf.value_hz == pytest.approx(truth, rel=0.01)


def test_noise_only_reactance_is_not_resolved_and_no_srf():
    rng = np.random.default_rng(5)
    f = np.geomspace(1e3, 1e6, 201)
    z = np.full(f.size, 0.01 + 0j) + 1j * 2 * np.pi * f * 1e-13  # a short: X far below its noise
    zm, sig = _noisy(f, z, rng, rel=0.05, phase_deg=3.0)
    lf = low_frequency_value(f, zm, sig)
    assert not lf.resolved and math.isnan(lf.value)  # 'not resolved', never a value
    srf = measured_srf(f, zm, sig)
    assert not srf.in_band and srf.lower_bound_hz == pytest.approx(1e6)  # exact: top of band


def test_loss_below_resolution_is_a_bound_not_negative():
    rng = np.random.default_rng(8)
    f = np.geomspace(1e4, 1e6, 101)
    z = 1e-6 + 1j * 2 * np.pi * f * 1e-6  # 1 uH with 1 micro-ohm: far below 0.3 % of |Z|
    zm, sig = _noisy(f, z, rng)
    fig = measured_figures(f, zm, sig)
    for i in range(0, f.size, 10):
        r = fig.resistance(i)
        assert not r.resolved and r.upper_bound > 0  # exact: a bound, positive
    sp = spot_figures(f, zm, sig, 1e5)
    assert sp["L"].value == pytest.approx(1e-6, rel=0.01)  # truth 1 uH


def test_coverage_of_stated_uncertainties():
    # Truth within 3 sigma in >= 95 % of seeded draws (normal: 99.7 %).
    f = np.geomspace(1e3, 1e6, 121)
    zt = _lossy_capacitor(f, C=1e-6, D=0.02, esr0=0.05, esl=2e-9)
    hits = {"R": 0, "X": 0, "C": 0}
    n = 200
    for seed in range(n):
        zm, sig = _noisy(f, zt, np.random.default_rng(1000 + seed))
        sp = spot_figures(f, zm, sig, 3.3e3)
        ref = _lossy_capacitor(np.array([3.3e3]), C=1e-6, D=0.02, esr0=0.05, esl=2e-9)[0]
        hits["R"] += abs(sp["R"].value - ref.real) < 3 * sp["R"].std
        hits["X"] += abs(sp["X"].value - ref.imag) < 3 * sp["X"].std
        lf = low_frequency_value(f, zm, sig)
        c_ref = -1 / (2 * np.pi * lf.f_hz * _lossy_capacitor(np.array([lf.f_hz]), C=1e-6, D=0.02, esr0=0.05, esl=2e-9)[0].imag)
        hits["C"] += abs(lf.value - c_ref) < 3 * lf.std
    for k, v in hits.items():
        assert v / n >= 0.95, (k, v)


def test_the_whole_sweep_grid_equals_the_pointwise_smoothing():
    # The vectorised smoothing of a whole sweep (_smooth_grid) is the same local quadratic as the
    # point-by-point definition (_smooth), on a log sweep, a linear sweep and a short one; to rounding.
    from zfit.identification import _measured as M

    rng = np.random.default_rng(11)
    for f in (np.geomspace(1e3, 1e8, 201), np.linspace(1e3, 1e7, 401), np.geomspace(1e3, 1e8, 7)):
        w = 2 * np.pi * f
        z = 1 / (1 / (0.1 + 1j * w * 1e-5) + 1j * w * 3e-12) * (1 + 1e-3 * rng.standard_normal(f.size))
        s = np.abs(z) * 1e-3 / np.sqrt(2)
        x, h = np.log(f), 0.04 * np.log(10)
        ref = np.array([M._smooth(x, z.real, z.imag, s, xi, h) for xi in x]).T
        got = np.array(M._smooth_grid(x, z.real, z.imag, s, h))
        np.testing.assert_allclose(got, ref, rtol=1e-9)

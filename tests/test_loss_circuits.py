"""Loss models with frequency dependence (zfit.fit._loss_circuits).

Generated data come from the published forms written out here, not from
zfit's circuits; noise is relative 0.3 % and 0.2 degree (common practice
for an analyser's specification), written out here.
"""

import math

import numpy as np
import pytest

from zfit.fit._loss_circuits import (
    ConstantLossCapacitor,
    RelaxingCoreInductor,
    ResonantSections,
    SkinEffectInductor,
    skin_depth_m,
)
from zfit.fit._lsq import Observation, refine

TWO_PI = 2 * math.pi


def _noisy(f, z, seed, rel=3e-3, phase_deg=0.2):
    rng = np.random.default_rng(seed)
    sp = math.radians(phase_deg)
    zm = z * (1 + rel * rng.standard_normal(f.size)) * np.exp(1j * sp * rng.standard_normal(f.size))
    return zm, np.abs(z) * math.hypot(rel, sp)


def test_skin_depth_of_copper_at_1_mhz():
    # Handbook value, from memory: copper (rho = 1.72e-8 ohm m) has delta ~ 66 um at 1 MHz.
    assert skin_depth_m(1e6, 1.72e-8) == pytest.approx(66e-6, rel=0.02)


def test_debye_loss_peak_and_constant_d_esr():
    # Debye form: mu'' = (mu_i - mu_inf) x/(1 + x^2), x = f/f_r, peaks at f_r with (mu_i - mu_inf)/2 (exact).
    l_i, l_inf, f_r = 10e-6, 0.5e-6, 2e6
    core = RelaxingCoreInductor()
    f = np.geomspace(f_r / 30, f_r * 30, 2001)
    p = [l_i, l_inf, f_r, 1e-9, 1e-30]
    loss = (core.impedance(p, f).real - 1e-9) / (TWO_PI * f)  # = L_0 mu''
    assert f[np.argmax(loss)] == pytest.approx(f_r, rel=0.01)
    assert loss.max() == pytest.approx((l_i - l_inf) / 2, rel=1e-4)
    # Constant-D capacitor: ESR = D/(omega C (1 + D^2)) ~ D/(omega C) (exact form).
    cap = ConstantLossCapacitor()
    z = cap.impedance([1e-6, 0.01, 1e-12, 1e-15], np.array([1e3]))[0]
    assert z.real == pytest.approx(0.01 / (TWO_PI * 1e3 * 1e-6), rel=2e-4)


CASES = [
    (SkinEffectInductor(), [22e-6, 0.04, 50e3, 8e-12]),
    (RelaxingCoreInductor(), [10e-6, 0.3e-6, 2e6, 0.05, 3e-12]),
    (ConstantLossCapacitor(), [100e-6, 0.08, 0.02, 15e-9]),
    (ResonantSections(1), [0.05, 300.0, 1e-6, 2e-12]),
    (ResonantSections(2), [0.05, 300.0, 1e-6, 2e-12, 50.0, 50e-9, 1e-12]),
    (ResonantSections(3), [0.05, 300.0, 1e-6, 2e-12, 50.0, 50e-9, 1e-12, 10.0, 5e-9, 0.5e-12]),
]


@pytest.mark.parametrize("circuit,p", CASES, ids=lambda c: getattr(c, "topology", ""))
def test_log_jacobian_against_finite_differences(circuit, p):
    f = np.geomspace(1e2, 1e9, 57)
    J = circuit.log_jacobian(np.array(p), f)
    for k in range(len(p)):
        h = 1e-6
        up, dn = np.array(p, float), np.array(p, float)
        up[k] *= math.exp(h)
        dn[k] *= math.exp(-h)
        fd = (circuit.impedance(up, f) - circuit.impedance(dn, f)) / (2 * h)
        # Central differences, error O(h^2): rtol 1e-6 relative to the column scale.
        np.testing.assert_allclose(J[:, k], fd, rtol=1e-6, atol=1e-6 * np.max(np.abs(fd)) + 1e-300)


def _fit(circuit, f, zm, sig):
    obs = Observation(f, zm, sig)
    return refine(circuit, obs, circuit.starts(f, zm, sig))


def test_skin_effect_coil_recovered():
    f = np.geomspace(100.0, 40e6, 241)
    w = TWO_PI * f
    # Wheeler 1942 round-wire winding, series L, parallel C_p (form written out).
    zs = 0.04 * np.sqrt(1 + 1j * f / 50e3) + 1j * w * 22e-6
    z = 1 / (1 / zs + 1j * w * 8e-12)
    zm, sig = _noisy(f, z, 1)
    r = _fit(SkinEffectInductor(), f, zm, sig)
    v = dict(zip(r.circuit.keys, r.values))
    assert v["L"] == pytest.approx(22e-6, rel=0.03)
    assert v["C_p"] == pytest.approx(8e-12, rel=0.03)
    assert v["R_dc"] == pytest.approx(0.04, rel=0.20)


def test_relaxing_core_recovered():
    f = np.geomspace(1e3, 100e6, 241)
    w = TWO_PI * f
    # Debye permeability mu_inf/mu_i = 0.03, L_i = 10 uH, f_r = 2 MHz; R_dc 50 mohm, C_p 3 pF.
    zc = 1j * w * (0.3e-6 + 9.7e-6 / (1 + 1j * f / 2e6))
    z = 1 / (1 / (0.05 + zc) + 1j * w * 3e-12)
    zm, sig = _noisy(f, z, 2)
    r = _fit(RelaxingCoreInductor(), f, zm, sig)
    v = dict(zip(r.circuit.keys, r.values))
    assert v["L_i"] == pytest.approx(10e-6, rel=0.03)
    assert v["C_p"] == pytest.approx(3e-12, rel=0.03)
    assert v["R_dc"] == pytest.approx(0.05, rel=0.20)


def test_electrolytic_with_constant_d_recovered():
    f = np.geomspace(20.0, 10e6, 241)
    w = TWO_PI * f
    # Constant loss tangent D = 0.08 (Jonscher), ESR_0 20 mohm, ESL 15 nH.
    z = 0.02 + 1j * w * 15e-9 + 1 / (1j * w * 100e-6 * (1 - 0.08j))
    zm, sig = _noisy(f, z, 3)
    r = _fit(ConstantLossCapacitor(), f, zm, sig)
    v = dict(zip(r.circuit.keys, r.values))
    assert v["C"] == pytest.approx(100e-6, rel=0.03)
    assert v["ESL"] == pytest.approx(15e-9, rel=0.10)
    assert v["D"] == pytest.approx(0.08, rel=0.15)
    assert r.circuit.srf_hz(r.values) == pytest.approx(1 / (TWO_PI * math.sqrt(15e-9 * 100e-6 * 1.0064)), rel=0.01)


def test_two_section_bead_recovered():
    f = np.geomspace(1e5, 3e9, 241)
    s = 1j * TWO_PI * f
    # Bead: R_dc + two parallel R-L-C sections (form written out).
    sec = lambda r, l, c: 1 / (1 / r + 1 / (s * l) + s * c)  # noqa: E731
    z = 0.05 + sec(300.0, 1e-6, 2e-12) + sec(50.0, 50e-9, 1e-12)
    zm, sig = _noisy(f, z, 4)
    r = _fit(ResonantSections(2), f, zm, sig)
    model = r.circuit.impedance(r.values, np.array([1e8]))[0]
    truth = 0.05 + 1 / (1 / 300 + 1 / (1j * TWO_PI * 1e8 * 1e-6) + 1j * TWO_PI * 1e8 * 2e-12) + 1 / (
        1 / 50 + 1 / (1j * TWO_PI * 1e8 * 50e-9) + 1j * TWO_PI * 1e8 * 1e-12)
    assert abs(model) == pytest.approx(abs(truth), rel=0.05)  # |Z| at 100 MHz (issue 12: 5 %)

"""Complex permeability of a wound core (zfit.identification._core_material).

The windings are generated from the Debye form written out in tests/core_sweeps.py (not
from zfit's circuits), measured by reflection and series-thru with an analyser's noise
written out there, and read back from Touchstone files.
"""

import math

import numpy as np
import pytest

from core_sweeps import H, ID, MU0, OD, debye_winding, measured
from zfit.identification._core_geometry import core_constant
from zfit.identification._core_material import core_material
from zfit.io._core_spec import core_spec


def crossover(mu_i, mu_inf, f_r):
    # mu' = mu'' for the Debye form: mu_inf u^2 - D u + (mu_inf + D) = 0, D = mu_i - mu_inf, u = f/f_r (algebra).
    d = mu_i - mu_inf
    if mu_inf == 0:
        return f_r
    return f_r * (d - math.sqrt(d * d - 4 * mu_inf * (mu_inf + d))) / (2 * mu_inf)


# (mu_i, f_r, turns, R_dc, C_p): fewer turns for the faster materials, as on the bench.
CASES = [
    (10000.0, 100e3, 10, 0.05, 8e-12),
    (2000.0, 1e6, 5, 0.02, 3e-12),
    (300.0, 10e6, 3, 0.01, 1.5e-12),
    (100.0, 100e6, 1, 0.005, 0.5e-12),
]


@pytest.mark.parametrize("connection", ["reflection", "series-thru"])
@pytest.mark.parametrize("mu_i,f_r,turns,r_dc,c_p", CASES)
def test_debye_core_figures(tmp_path, connection, mu_i, f_r, turns, r_dc, c_p):
    mu_inf = 0.02 * mu_i
    f = np.geomspace(f_r / 300, f_r * 10, 301)
    z = debye_winding(f, mu_i, mu_inf, f_r, turns, r_dc, c_p)
    sweep = measured(tmp_path, f, z, connection, seed=int(mu_i) + (0 if connection == "reflection" else 1))
    const = core_constant(core_spec(turns, "25", "15", "10"))
    mat = core_material(sweep, const)
    # Issue 13 tolerances: mu_i within 3 %, the mu'' peak (at f_r for Debye, exact) and mu' = mu'' within 5 %.
    assert mat.mu_i == pytest.approx(mu_i, rel=0.03)
    assert mat.mu_imag_peak.found and mat.mu_imag_peak.value_hz == pytest.approx(f_r, rel=0.05)
    assert mat.crossover.found and mat.crossover.value_hz == pytest.approx(crossover(mu_i, mu_inf, f_r), rel=0.05)
    # The winding's parts are found within three of their stated standard uncertainties (common practice).
    assert mat.c_p_removed
    assert abs(mat.c_p_f - c_p) <= 3 * mat.c_p_std_f
    assert abs(mat.r_dc_ohm - r_dc) <= 3 * mat.r_dc_std_ohm


def test_uncertainty_of_mu_i_covers_the_geometry():
    # A 2 % tolerance (rectangular, u = 2 %/sqrt(3) per dimension, JCGM 100 4.3.7) on a 25/15/10 mm ring:
    # u(C1)/C1 = 0.0115 sqrt(1 + 2/ln^2(25/15)) = 0.034 (algebra), which dominates mu_i's uncertainty here.
    f_r, mu_i = 1e6, 2000.0
    f = np.geomspace(f_r / 300, f_r * 10, 301)
    z = debye_winding(f, mu_i, 40.0, f_r, 5, 0.02, 3e-12)
    rng = np.random.default_rng(5)
    from zfit.data._sweep import make_sweep

    zn = z * (1 + 1e-4 * rng.standard_normal(f.size))
    sweep = make_sweep(f, zn, 1e-4 * np.abs(z) * math.sqrt(2))
    mat = core_material(sweep, core_constant(core_spec(5, 25, 15, 10)))
    rel = 0.02 / math.sqrt(3) * math.sqrt(1 + 2 / math.log(25 / 15) ** 2)
    assert mat.mu_i_std / mat.mu_i == pytest.approx(rel, rel=0.05)
    assert mat.constant.rel_std == pytest.approx(rel, rel=1e-12)


def test_given_rdc_is_removed_as_given(tmp_path):
    f_r, mu_i = 1e6, 2000.0
    f = np.geomspace(f_r / 300, f_r * 10, 301)
    z = debye_winding(f, mu_i, 40.0, f_r, 5, 0.5, 3e-12)
    sweep = measured(tmp_path, f, z, "reflection", seed=11)
    mat = core_material(sweep, core_constant(core_spec(5, 25, 15, 10)), rdc=0.5, rdc_std=0.005)
    assert mat.r_dc_source == "given" and mat.r_dc_ohm == 0.5
    # Loss factor at the decade points below half the peak: tan d = mu''/mu' of the Debye form
    # (D u/(mu_inf (1 + u^2) + D), u = f/f_r), within 5 % where it is resolved.
    for lf in mat.loss_factors:
        u = lf.f_hz / f_r
        d = mu_i - 40.0
        td = d * u / (40.0 * (1 + u * u) + d)
        if lf.tan_delta > 5 * lf.tan_delta_std:
            assert lf.tan_delta == pytest.approx(td, rel=0.05)
    assert [lf.f_hz for lf in mat.loss_factors] == [1e4, 1e5]


def test_cole_cole_core_is_recognised(tmp_path):
    # Cole-Cole form (Cole and Cole 1941), written out: mu = mu_inf + D/(1 + (j f/f_r)^(1 - alpha)); its mu''
    # peaks at f_r (symmetric in ln f, exact). The choice rule (BIC lower by 10, alpha resolved) must pick it.
    mu_i, mu_inf, f_r, alpha = 800.0, 10.0, 3e6, 0.3
    f = np.geomspace(f_r / 300, f_r * 10, 301)
    c1 = 2 * math.pi / (H * math.log(OD / ID))
    l0 = MU0 * 16 / c1
    mu = mu_inf + (mu_i - mu_inf) / (1 + (1j * f / f_r) ** (1 - alpha))
    z = 1 / (1 / (0.01 + 2j * math.pi * f * l0 * mu) + 2j * math.pi * f * 1e-12)
    mat = core_material(measured(tmp_path, f, z, "reflection", 99), core_constant(core_spec(4, 25, 15, 10)))
    assert mat.relaxation.form == "Cole-Cole"
    assert mat.relaxation.alpha == pytest.approx(alpha, abs=0.02)
    assert mat.mu_i == pytest.approx(mu_i, rel=0.03)
    assert mat.mu_imag_peak.value_hz == pytest.approx(f_r, rel=0.05)


def test_debye_core_is_not_given_a_distribution(tmp_path):
    f_r, mu_i = 1e6, 2000.0
    f = np.geomspace(f_r / 300, f_r * 10, 301)
    z = debye_winding(f, mu_i, 40.0, f_r, 5, 0.02, 3e-12)
    mat = core_material(measured(tmp_path, f, z, "series-thru", 12), core_constant(core_spec(5, 25, 15, 10)))
    # The choice rule keeps one relaxation time for data made with one (zfit.fit._relaxation).
    assert mat.relaxation.form == "Debye" and mat.relaxation.alpha == 0.0
    assert mat.relaxation.f_r_hz == pytest.approx(f_r, rel=0.01)

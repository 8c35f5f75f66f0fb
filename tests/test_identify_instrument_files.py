"""Identifying files as real instruments write them (issue 11, the identification half).

The files come from tests/instrument_files.py: truths from the circuit
formulas written out there, errors from an error box, trace noise,
magnitude and phase errors, segmented sweeps and digit rounding written out
there or here, never from zfit's noise model or circuits.
"""

import math
import warnings

import numpy as np
import pytest

import instrument_files as inst
from zfit import identify, read_sweep
from zfit._errors import MeasurementWarning
from zfit.data._connection import InstrumentNoise

# A wound inductor: SRF = 1/(2 pi sqrt(L C_p)) sqrt(1 - R^2 C_p / L) (X = 0 of the formula in instrument_files).
L, R, CP = 10e-6, 2.0, 3e-12
SRF = 1 / (2 * math.pi * math.sqrt(L * CP)) * math.sqrt(1 - R**2 * CP / L)


def _quiet(fn, *args, **kwargs):
    """Run `fn` and return (result, warning texts)."""
    with warnings.catch_warnings(record=True) as got:
        warnings.simplefilter("always")
        out = fn(*args, **kwargs)
    return out, [str(w.message) for w in got]


def _identified(path, **read):
    sweep, read_notes = _quiet(read_sweep, path, **read)
    result, fit_notes = _quiet(identify, sweep)
    return result, read_notes + fit_notes + list(sweep.notes)


def _check_inductor(result, r_tol=0.15):
    p = result.parameters
    assert result.model == "inductor"
    assert p["L"].value == pytest.approx(L, rel=0.02)  # the 2 % on L
    assert p["C_p"].value == pytest.approx(CP, rel=0.02)  # the 2 % on C
    assert result.srf.value_hz == pytest.approx(SRF, rel=0.005)  # the 0.5 % on the SRF
    if r_tol is not None:
        assert p["R_s"].value == pytest.approx(R, rel=r_tol)  # the 15 % on R_s


def _mag_phase_errors(rng, z, rel_mag, phase_deg):
    """Z with Gaussian errors of relative magnitude `rel_mag` and phase `phase_deg` (an LCR meter's accuracy terms)."""
    return z * (1 + rel_mag * rng.standard_normal(z.shape)) * np.exp(1j * np.radians(phase_deg) * rng.standard_normal(z.shape))


def _disagreement(a, b, key):
    """|a - b| in units of the combined standard uncertainty of two independent results."""
    pa, pb = a.parameters[key], b.parameters[key]
    return abs(pa.value - pb.value) / math.hypot(pa.std, pb.std)


def test_linear_and_log_sweeps_of_one_part_give_the_same_values(tmp_path, rng):
    out = {}
    for name, f in (("log", np.geomspace(1e5, 1e8, 801)), ("linear", np.linspace(1e5, 1e8, 801))):
        z = inst.inductor_z(f, L, R, CP)
        s = inst.reflection(z)
        path = inst.write_s1p(tmp_path / f"{name}.s1p", f, s + inst.circular_noise(rng, 2e-3 * np.abs(s) + 1e-4))
        out[name], _ = _identified(path)
        _check_inductor(out[name])
    for key in ("L", "R_s", "C_p"):
        # Independent noise: the difference within 3 combined standard uncertainties (Gaussian, 99.7 %).
        assert _disagreement(out["log"], out["linear"], key) < 3
    assert out["linear"].srf.value_hz == pytest.approx(out["log"].srf.value_hz,
                                                      abs=3 * math.hypot(out["linear"].srf.std_hz, out["log"].srf.std_hz))


def test_a_linear_sweep_whose_top_decade_is_above_the_srf_keeps_the_inductor(tmp_path, rng):
    # 50 nH of leads in series: a series resonance with C_p at 411 MHz, where no R_s-L || C_p holds.  A linear
    # sweep to 1 GHz puts 90 % of its points above 100 MHz; the band of validity is judged in log frequency.
    f = np.linspace(1e5, 1e9, 801)
    z = inst.inductor_z(f, L, R, CP) + 2j * np.pi * f * 50e-9
    s = inst.reflection(z)
    path = inst.write_s1p(tmp_path / "leads.s1p", f, s + inst.circular_noise(rng, 2e-3 * np.abs(s) + 1e-4))
    result, notes = _identified(path)
    assert result.model == "inductor" and result.topology.startswith("series R_s-L")
    assert result.parameters["L"].value == pytest.approx(L + 50e-9, rel=0.02)  # the 2 %: L and the leads
    assert any("describes the data to within the noise only from 100 kHz" in n for n in notes)


def test_segmented_linear_sweep_with_repeated_joins(tmp_path, rng):
    # Three linear segments, each join measured twice, each segment with its own tracking (a small analyser).
    bands, points = ((1e5, 1e6), (1e6, 1e7), (1e7, 1e8)), (201, 201, 201)
    f = inst.segmented_linear(bands, points)
    z = inst.inductor_z(f, L, R, CP)
    tracking = np.concatenate([np.full(n, t) for n, t in zip(points, (1.0, 1.001, 0.999))])
    s = inst.error_box(inst.reflection(z), e00=0, e11=0, e10e01=tracking)
    path = inst.write_s1p(tmp_path / "seg.s1p", f, s + inst.circular_noise(rng, 1e-3 * np.abs(s) + 1e-4))
    result, notes = _identified(path)
    _check_inductor(result)
    assert any("2 repeated frequencies" in n and "merged" in n for n in notes)


def test_active_points_near_a_short_are_kept_and_l_identified(tmp_path, rng):
    # 0.2 ohm + 100 nH by reflection with a tracking residual growing to 1 % at 100 MHz: |S11| > 1 at the top.
    f = np.geomspace(1e5, 1e8, 401)
    z = 0.2 + 2j * np.pi * f * 100e-9
    track = 1 + 0.01 * (f / f[-1])
    s = inst.error_box(inst.reflection(z), e00=0, e11=0, e10e01=track)
    path = inst.write_s1p(tmp_path / "short.s1p", f, s + inst.circular_noise(rng, 2e-4 * np.abs(s) + 1e-5))
    result, notes = _identified(path)
    assert any("look active" in n for n in notes)
    assert result.model == "inductor"
    assert result.parameters["L"].value == pytest.approx(100e-9, rel=0.02)  # the 2 %
    # R_s: reflection does not resolve 0.2 ohm under a 1 % tracking residual; not asserted (the issue's
    # "where the connection resolves them").


def test_two_port_connection_taken_from_the_data(tmp_path, rng):
    # Series-thru of the inductor (S21 = 2 Z0 / (2 Z0 + Z), S11 = Z / (2 Z0 + Z): Pozar 2012, Table 4.1).
    f = np.geomspace(1e5, 1e8, 801)
    z = inst.inductor_z(f, L, R, CP)
    s21 = 2 * inst.Z0 / (2 * inst.Z0 + z)
    s11 = z / (2 * inst.Z0 + z)
    n = lambda s: inst.circular_noise(rng, 1e-3 * np.abs(s) + 1e-5)  # noqa: E731
    path = inst.write_s2p(tmp_path / "thru.s2p", f, s11 + n(s11), s21 + n(s21))
    result, notes = _identified(path)
    assert result.sweep.connection == "series-thru"
    assert any("connection series-thru taken from the data" in n for n in notes)
    _check_inductor(result)


@pytest.mark.parametrize("rel_mag, phase_deg", [(3e-3, 0.2), (5e-3, 0.3)])
def test_default_options_agree_with_the_true_noise_given(tmp_path, rng, rel_mag, phase_deg):
    f = np.geomspace(1e5, 1e8, 401)
    z = inst.inductor_z(f, L, R, CP)
    path = inst.write_zphase_table(tmp_path / "meter.csv", f, _mag_phase_errors(rng, z, rel_mag, phase_deg), digits=7)
    default, _ = _identified(path)
    # The true noise: E|dZ|^2 = |Z|^2 (rel_mag^2 + phase^2), complex-circular to first order.
    true = InstrumentNoise(math.hypot(rel_mag, math.radians(phase_deg)), 0.0)
    given, _ = _identified(path, noise=true)
    assert default.sweep.noise_estimate.source == "estimated from the data"
    assert given.sweep.noise_estimate.source == "given"
    assert default.to_dict()["noise"]["source"] == "estimated from the data"
    _check_inductor(default, r_tol=None)
    for key in ("L", "R_s", "C_p"):
        d, g = default.parameters[key], given.parameters[key]
        # The same data: the values within one standard uncertainty of each other, the uncertainties within 30 %.
        assert abs(d.value - g.value) < g.std
        assert d.std == pytest.approx(g.std, rel=0.3)


def test_coverage_with_the_noise_estimated(tmp_path):
    # 200 seeded draws of a 201-point table with 0.3 % noise, the noise estimated from each draw.
    f = np.geomspace(1e5, 1e8, 201)
    z = inst.inductor_z(f, L, R, CP)
    truth = {"L": L, "R_s": R, "C_p": CP}
    within2 = dict.fromkeys(truth, 0)
    within3 = dict.fromkeys(truth, 0)
    for seed in range(200):
        rng = np.random.default_rng(1000 + seed)
        path = inst.write_zphase_table(tmp_path / "cov.csv", f, z + inst.circular_noise(rng, 3e-3 * np.abs(z)), digits=8)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", MeasurementWarning)
            result = identify(read_sweep(path))
        assert result.sweep.noise_estimate.source == "estimated from the data"
        for key, value in truth.items():
            e = result.parameters[key]
            within2[key] += abs(e.value - value) < 2 * e.std
            within3[key] += abs(e.value - value) < 3 * e.std
    for key in truth:
        # The coverage: 2 sigma in at least 90 % (Gaussian 95.4 %), 3 sigma in at least 99 % (99.7 %).
        assert within2[key] >= 180, (key, within2)
        assert within3[key] >= 198, (key, within3)


@pytest.mark.parametrize("factor", [0.5, 2.0])
def test_reduced_chi_square_scaling_stays_on_top_of_a_given_noise_model(tmp_path, rng, factor):
    # A given model wrong by a constant factor: the fit's reduced-chi-square scaling (common practice for
    # weighted least squares with a scale taken from the residuals) gives the same values and uncertainties.
    f = np.geomspace(1e5, 1e8, 401)
    z = inst.inductor_z(f, L, R, CP)
    path = inst.write_zphase_table(tmp_path / "t.csv", f, z + inst.circular_noise(rng, 3e-3 * np.abs(z)), digits=8)
    right, _ = _identified(path, noise=InstrumentNoise(3e-3, 0.0))
    wrong, _ = _identified(path, noise=InstrumentNoise(3e-3 * factor, 0.0))
    estimated, _ = _identified(path)
    assert wrong.fit.reduced_chi_square == pytest.approx(right.fit.reduced_chi_square / factor**2, rel=1e-6)
    assert estimated.fit.reduced_chi_square == pytest.approx(1.0, abs=0.25)  # noise estimated: chi2/dof near 1
    for key in ("L", "R_s", "C_p"):
        assert wrong.parameters[key].value == pytest.approx(right.parameters[key].value, rel=1e-6)
        assert wrong.parameters[key].std == pytest.approx(right.parameters[key].std, rel=1e-4)


def test_linear_shunt_thru_sweep_of_a_capacitor_above_its_srf_for_most_points(tmp_path, rng):
    # 10 uF, 10 mohm, 1 nH: SRF = 1/(2 pi sqrt(ESL C)) = 1.59 MHz.  A linear sweep from 10 kHz to 100 MHz has
    # 98 % of its points above the SRF (inductive); the family is still read from the bottom of the band.
    from zfit.identification._rational import looks_capacitive

    C, ESR, ESL = 10e-6, 0.01, 1e-9
    srf = 1 / (2 * math.pi * math.sqrt(C * ESL))
    out = {}
    for name, f in (("log", np.geomspace(1e4, 1e8, 801)), ("linear", np.linspace(1e4, 1e8, 801))):
        z = inst.capacitor_z(f, C, ESR, ESL)
        s21, s11 = 2 * z / (2 * z + inst.Z0), -inst.Z0 / (2 * z + inst.Z0)  # shunt part: Pozar 2012, Table 4.1
        n = lambda s: inst.circular_noise(rng, 1e-3 * np.abs(s) + 1e-5)  # noqa: E731
        path = inst.write_s2p(tmp_path / f"{name}.s2p", f, s11 + n(s11), s21 + n(s21))
        result, notes = _identified(path)
        assert looks_capacitive(result.sweep)
        assert any("connection shunt-thru taken from the data" in t for t in notes)
        p = result.parameters
        assert result.topology == "series C-ESR-ESL"
        assert p["C"].value == pytest.approx(C, rel=0.02)  # the 2 % on C
        assert p["ESR"].value == pytest.approx(ESR, rel=0.15)  # the 15 % on ESR (shunt-thru resolves it)
        assert result.srf.value_hz == pytest.approx(srf, rel=0.005)  # the 0.5 % on the SRF
        out[name] = result
    for key in ("C", "ESR", "ESL"):
        assert _disagreement(out["log"], out["linear"], key) < 3  # independent noise: 3 combined sigma

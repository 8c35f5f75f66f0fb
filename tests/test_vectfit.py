"""Tests of relaxed vector fitting (zfit.fit._vectfit) against known rational
functions, scikit-rf's VectorFitting, statistics of the weighted fit and the
passivity check."""

import warnings

import numpy as np
import pytest
from scipy.optimize import brentq, linear_sum_assignment

from zfit import FitError, RationalModel, vector_fit
from zfit.fit._passivity import PassivityViolation
from zfit.fit._poles import starting_poles
from zfit.fit._vectfit import fit_impedance

TWO_PI = 2 * np.pi


def _pairs(values):
    """Real values stay, complex ones get their conjugate right after."""
    out = []
    for v in values:
        out.append(v)
        if np.imag(v) != 0:
            out.append(np.conj(v))
    return np.array(out, dtype=complex)


def _matched(ref, got):
    """Indices into `got` matching `ref`, regardless of order (assignment on |difference|)."""
    cost = np.abs(ref[:, None] - got[None, :])
    rows, cols = linear_sum_assignment(cost)
    return cols[np.argsort(rows)]


def _response(f, poles, residues, d=0.0, e=0.0, r0=0.0):
    s = 1j * TWO_PI * np.asarray(f)
    h = (residues[None, :] / (s[:, None] - poles[None, :])).sum(axis=1) + d + s * e
    return h + (r0 / s if r0 else 0.0)


def _noise(rng, sigma):
    # complex-circular: sigma/sqrt(2) on each of Re and Im (the Sweep convention)
    return sigma / np.sqrt(2) * (rng.standard_normal(sigma.shape) + 1j * rng.standard_normal(sigma.shape))


# A test function like the 18-pole example of Gustavsen & Semlyen 1999
# (doi:10.1109/61.772353, sec. 5), as distributed with their published code;
# values from memory: 2 real poles and 8 complex pairs (Hz-scaled, times 2 pi),
# two pairs sharing the same resonance frequency, a constant and an s-term.
GS_POLES = _pairs(
    TWO_PI
    * np.array(
        [-4500, -41000, -100 + 5000j, -120 + 15000j, -3000 + 35000j, -200 + 45000j,
         -1500 + 45000j, -500 + 70000j, -1000 + 73000j, -2000 + 90000j]
    )
)
GS_RESIDUES = _pairs(
    TWO_PI
    * np.array(
        [-3000, -83000, -5 + 7000j, -20 + 18000j, 6000 + 45000j, 40 + 60000j,
         90 + 10000j, 50000 + 80000j, 1000 + 45000j, -5000 + 92000j]
    )
)
GS_D, GS_E = 0.2, 2e-5


def test_recovers_poles_and_residues_of_known_function():
    f = np.geomspace(1.0, 1e5, 1001)
    h = _response(f, GS_POLES, GS_RESIDUES, GS_D, GS_E)
    m = vector_fit(f, h, n_poles=18, n_real_poles=2)
    assert m.converged
    idx = _matched(GS_POLES, m.poles)
    # 1e-8 relative on noise-free data (the requirement)
    np.testing.assert_allclose(m.poles[idx], GS_POLES, rtol=1e-8)
    np.testing.assert_allclose(m.residues[idx], GS_RESIDUES, rtol=1e-8)
    assert m.constant == pytest.approx(GS_D, rel=1e-8)
    assert m.proportional == pytest.approx(GS_E, rel=1e-8)
    # pairs are exactly conjugate, and stable
    up = m.poles.imag > 0
    np.testing.assert_array_equal(m.poles[np.flatnonzero(up) + 1], np.conj(m.poles[up]))
    np.testing.assert_array_equal(m.residues[np.flatnonzero(up) + 1], np.conj(m.residues[up]))
    assert np.all(m.poles.real < 0)
    # evaluation out of band agrees with the truth too
    f2 = np.geomspace(0.1, 1e6, 50)
    np.testing.assert_allclose(m(f2), _response(f2, GS_POLES, GS_RESIDUES, GS_D, GS_E), rtol=1e-8)
    # diagnostics: the pole movement history ends below the tolerance
    assert m.iterations[-1].max_relative_pole_change < 1e-10
    assert len(m.iterations) <= 30


def test_unstable_starting_poles_are_flipped_and_origin_pole_recovered():
    # A capacitor with dielectric absorption: ESR + sESL + 1/(sC) + one
    # R-C branch (a real pole); exact rational function.
    f = np.geomspace(100.0, 1e8, 600)
    p, r = np.array([-2e4 + 0j]), np.array([3e4 + 0j])
    h = _response(f, p, r, d=0.05, e=2e-9, r0=1e6)
    m = vector_fit(f, h, initial_poles=[+5e5], constant=True, proportional=True, origin_pole=True)
    assert m.poles[0] == pytest.approx(-2e4, rel=1e-8)
    assert m.residues[0].real == pytest.approx(3e4, rel=1e-8)
    assert m.origin_residue == pytest.approx(1e6, rel=1e-8)
    assert m.constant == pytest.approx(0.05, rel=1e-8)
    assert m.proportional == pytest.approx(2e-9, rel=1e-8)


def test_agrees_with_scikit_rf_vector_fitting():
    skrf = pytest.importorskip("skrf")
    from skrf.vectorFitting import VectorFitting

    # A one-port "S-parameter" that is itself rational: 2 real poles, 2 pairs,
    # constant and proportional terms; both fitters should reproduce it.
    f = np.geomspace(1e6, 1e9, 801)
    poles = _pairs([-2e7, -3e8, -1e7 + TWO_PI * 1e8j, -5e7 + TWO_PI * 4e8j])
    residues = _pairs([1e7, -4e8, 2e7 + 3e7j, 1e8 - 5e7j])
    h = _response(f, poles, residues, d=0.3, e=1e-10)
    net = skrf.Network(frequency=skrf.Frequency.from_f(f, unit="hz"), s=h.reshape(-1, 1, 1))
    vf = VectorFitting(net)
    vf.vector_fit(n_poles_real=2, n_poles_cmplx=2, init_pole_spacing="log", parameter_type="s",
                  fit_constant=True, fit_proportional=True)
    h_skrf = vf.get_model_response(0, 0, f)
    m = vector_fit(f, h, n_poles=6, n_real_poles=2)
    # both converge on this function (skrf to about 1e-13 here)
    assert np.max(np.abs(h_skrf - h) / np.abs(h)) < 1e-9
    np.testing.assert_allclose(m(f), h_skrf, rtol=1e-9)
    skrf_poles = _pairs(vf.poles)  # skrf keeps one member of each pair
    idx = _matched(skrf_poles, m.poles)
    np.testing.assert_allclose(m.poles[idx], skrf_poles, rtol=1e-8)
    assert m.constant == pytest.approx(float(np.ravel(vf.constant_coeff)[0]), rel=1e-8)
    assert m.proportional == pytest.approx(float(np.ravel(vf.proportional_coeff)[0]), rel=1e-8)


def _inductor(f, L=10e-6, R=0.5, C=5e-12):
    s = 1j * TWO_PI * f
    return 1.0 / (1.0 / (R + s * L) + s * C)


def test_inductor_options_give_the_physical_pole_pair():
    # Z = (R + sL) || 1/(sC) = (R + sL) / (LC s^2 + RC s + 1): its poles are the
    # roots of the denominator (circuit theory; reference numpy.roots).
    f = np.geomspace(1e5, 1e8, 401)
    L, R, C = 10e-6, 0.5, 5e-12
    m = fit_impedance(f, _inductor(f, L, R, C), kind="inductor")
    assert m.n_poles == 2
    ref = np.roots([L * C, R * C, 1.0])
    np.testing.assert_allclose(np.sort_complex(m.poles), np.sort_complex(ref), rtol=1e-9)
    # DC value -sum r/p = R
    assert np.real(-np.sum(m.residues / m.poles)) == pytest.approx(R, rel=1e-8)
    assert m.is_passive


def test_capacitor_options_need_no_pole():
    f = np.geomspace(1e3, 1e9, 500)
    s = 1j * TWO_PI * f
    C, esr, esl = 100e-9, 0.02, 2e-9
    z = esr + s * esl + 1 / (s * C)
    m = fit_impedance(f, z, 1e-4 * np.abs(z), kind="capacitor")
    assert m.n_poles == 0
    assert 1 / m.origin_residue == pytest.approx(C, rel=1e-9)
    assert m.constant == pytest.approx(esr, rel=1e-8)
    assert m.proportional == pytest.approx(esl, rel=1e-9)


def test_weighted_fit_chi2_and_coverage_of_impedance_std(rng):
    # Heteroscedastic noise: 0.3 % of |Z| plus a 50 milliohm floor, |Z| from
    # ohms to ~1 Mohm at resonance. Monte Carlo of 200 realisations.
    f = np.geomspace(1e5, 1e8, 401)
    z0 = _inductor(f)
    sigma = 0.003 * np.abs(z0) + 0.05
    fc = np.array([3e5, 3e6, 2.0e7, 2.25e7, 3e7, 8e7])  # 2.25e7 is at the SRF
    zc = _inductor(fc)
    chi2, hit, hit_fixed, rms = [], [], [], []
    for _ in range(200):
        m = fit_impedance(f, z0 + _noise(rng, sigma), sigma, kind="inductor", n_poles=2)
        chi2.append(m.chi2_reduced)
        rms.append(m.rms_normalized_residual)
        err = m(fc) - zc
        for cov, out in ((m.impedance_covariance(fc), hit),
                         (m.impedance_covariance(fc, include_poles=False), hit_fixed)):
            out.append(np.concatenate([np.abs(err.real) < 2 * np.sqrt(cov[:, 0, 0]),
                                       np.abs(err.imag) < 2 * np.sqrt(cov[:, 1, 1])]))
    # E[chi2_red] = 1; over 200 fits with dof ~ 794 its mean has std ~0.0036
    assert np.mean(chi2) == pytest.approx(1.0, abs=0.015)
    assert np.mean(rms) == pytest.approx(1.0, abs=0.015)
    # +-2 sigma should cover 95.4 % (normal); binomial std 1.5 % per point,
    # 0.4 % pooled over 12 point-components
    cover = np.mean(hit, axis=0)
    assert np.all((cover >= 0.90) & (cover <= 0.99)), cover
    assert 0.935 <= cover.mean() <= 0.975
    # with the poles held fixed the coverage at the resonance collapses
    assert np.min(np.mean(hit_fixed, axis=0)) < 0.5
    # the complex-circular std is sqrt(var Re + var Im)
    cov = m.impedance_covariance(fc)
    np.testing.assert_allclose(m.impedance_std(fc), np.sqrt(cov[:, 0, 0] + cov[:, 1, 1]))


def test_automatic_pole_count_finds_two_pairs(rng):
    # Two resonances (a winding with a second, distributed resonance): two pairs.
    f = np.geomspace(1e5, 1e9, 801)
    poles = _pairs([-2e5 + TWO_PI * 2e7j, -3e6 + TWO_PI * 3e8j])
    residues = _pairs([4e9 + 1e8j, 2e10 - 3e9j])
    z0 = _response(f, poles, residues)
    sigma = 0.002 * np.abs(z0) + 0.01
    m = vector_fit(f, z0 + _noise(rng, sigma), sigma, constant=False, proportional=False)
    assert m.n_poles == 4 and m.n_real_poles == 0
    assert [n for n, _ in m.pole_count_trials] == [1, 2, 4, 3]  # grow by pairs, then try one fewer
    assert m.rms_normalized_residual < 1.1
    idx = _matched(poles, m.poles)
    np.testing.assert_allclose(m.poles[idx], poles, rtol=1e-3)


def test_too_few_points_is_a_plain_fit_error():
    f = np.geomspace(1e5, 1e7, 6)
    with pytest.raises(FitError, match=r"too few frequency points.*6 points give 12 real equations.*fewer poles"):
        vector_fit(f, _inductor(f), n_poles=6)
    with pytest.raises(FitError, match="too few frequency points"):
        vector_fit(f[:1], _inductor(f[:1]))
    # the automatic count stops before the unknowns outnumber the data
    m = vector_fit(f, _inductor(f), constant=False, proportional=False)
    assert 2 * f.size > 2 * m.n_poles + 1


def test_passivity_check_flags_a_non_passive_model():
    # One damped resonance with real residue minus a constant 0.5 ohm:
    # Re H(j w) = -0.5 + r a/(a^2 + (w-b)^2) + r a/(a^2 + (w+b)^2), negative
    # away from the resonance. Crossings from brentq on this formula.
    a, b, r, d = 1e5, TWO_PI * 1e6, 2e5, -0.5
    m = RationalModel(poles=np.array([-a + 1j * b, -a - 1j * b]), residues=np.array([r, r], dtype=complex),
                      constant=d, has_constant=True, f_min_hz=1e5, f_max_hz=1e7, reference_omega=b)

    def re_h(w):
        return d + r * a / (a**2 + (w - b) ** 2) + r * a / (a**2 + (w + b) ** 2)

    w1, w2 = brentq(re_h, 0, b), brentq(re_h, b, 10 * b)
    np.testing.assert_allclose(m.real_part_crossings_hz(), np.array([w1, w2]) / TWO_PI, rtol=1e-9)
    v = m.passivity_violations()
    assert [x.kind for x in v] == ["real part", "real part"]
    assert v[0].f_lo_hz == 0.0 and v[0].f_hi_hz == pytest.approx(w1 / TWO_PI, rel=1e-9)
    assert v[1].f_hi_hz == np.inf and v[1].worst_value == pytest.approx(d, rel=1e-6)
    assert v[0].worst_value == pytest.approx(re_h(0.0), rel=1e-9)
    assert not m.is_passive
    # sampled at given frequencies: the same two bands
    f = np.geomspace(1e4, 1e8, 400)
    vs = m.passivity_violations(f)
    assert len(vs) == 2 and vs[0].f_hi_hz < w1 / TWO_PI < f[np.searchsorted(f, vs[0].f_hi_hz) + 1]
    # a negative capacitance at the origin is flagged even though Re H >= 0
    neg_c = RationalModel(poles=np.zeros(0), residues=np.zeros(0), constant=1.0, origin_residue=-1e6,
                          has_constant=True, has_origin_pole=True, f_min_hz=1.0, f_max_hz=10.0)
    assert [x.kind for x in neg_c.passivity_violations()] == ["origin residue"]
    # and a passive model reports nothing
    ok = RationalModel(poles=m.poles, residues=m.residues, constant=0.0, has_constant=True,
                       f_min_hz=1e5, f_max_hz=1e7, reference_omega=b)
    assert ok.passivity_violations() == () and ok.is_passive
    assert isinstance(v[0], PassivityViolation)


def test_starting_poles_are_log_spaced_weakly_damped_pairs():
    p = starting_poles(1e3, 1e6, 5)
    assert p.size == 5 and np.count_nonzero(p.imag == 0) == 1
    up = p[p.imag > 0]
    np.testing.assert_allclose(np.diff(np.log(up.imag)), np.log(1e3) / 2)
    np.testing.assert_allclose(-up.real / up.imag, 0.01)


def test_result_is_frozen_and_inputs_checked():
    f = np.geomspace(1e5, 1e8, 100)
    m = fit_impedance(f, _inductor(f), kind="inductor", n_poles=2)
    with pytest.raises(Exception):
        m.constant = 1.0
    with pytest.raises(ValueError):
        m.poles[0] = 0
    from zfit import ZfitInputError

    with pytest.raises(ZfitInputError, match="different|frequencies but"):
        vector_fit(f, _inductor(f)[:-1])
    with pytest.raises(ZfitInputError, match="positive"):
        vector_fit(-f, _inductor(f))
    with pytest.raises(ZfitInputError, match="uncertainties"):
        vector_fit(f, _inductor(f), sigma=0.0)


def test_sigma_update_restores_the_noise_level_for_s_derived_impedance():
    # A high-Q inductor measured in reflection: near the SRF |Z| >> 50 ohm and
    # sigma_z evaluated at the noisy S11 is itself noisy (the connection barely
    # resolves Z there). Re-evaluating sigma at the model brings the residual of
    # the right model back to the noise (~1) and the count to the physical 2.
    from zfit.data._connection import InstrumentNoise, impedance_from_s, s_from_impedance, sigma_z_from_s
    from zfit.fit._vectfit import sigma_update_for

    rng = np.random.default_rng(3)
    f = np.geomspace(1e5, 1e9, 801)
    z0 = _inductor(f, L=1.8e-3, R=50.9, C=0.964e-12)
    noise = InstrumentNoise(1e-3, 1e-5)
    s0 = s_from_impedance(z0, "reflection")
    s = s0 + _noise(rng, noise.sigma(s0))
    z, sig = impedance_from_s(s, "reflection"), sigma_z_from_s(s, "reflection", noise=noise)
    truth_rms = np.sqrt(np.mean(np.abs(z - z0) ** 2 / sig**2))
    assert truth_rms > 1.3  # the noisy-point sigma misjudges the noise
    m = fit_impedance(f, z, sig, kind="inductor", sigma_update=sigma_update_for("reflection", noise))
    assert m.reweight_passes == 2
    assert m.n_poles == 2
    assert m.rms_normalized_residual == pytest.approx(1.0, abs=0.1)
    # SRF = 1/(2 pi sqrt(LC)) (handbook formula) from the pole pair, within 0.1 %
    srf = np.abs(m.poles[0]) / TWO_PI
    assert srf == pytest.approx(1 / (TWO_PI * np.sqrt(1.8e-3 * 0.964e-12)), rel=1e-3)


def test_violation_within_its_uncertainty_is_marked():
    def model(d, var):
        return RationalModel(poles=np.zeros(0), residues=np.zeros(0), constant=d, has_constant=True,
                             coefficients=np.array([d]), coefficient_names=("constant",),
                             covariance=np.array([[var]]), full_covariance=np.array([[var]]),
                             f_min_hz=1.0, f_max_hz=10.0)

    (v,) = model(-1e-6, 1e-10).passivity_violations()  # -1 uohm +- 10 uohm
    assert v.kind == "real part" and v.worst_value == pytest.approx(-1e-6)
    assert v.worst_std == pytest.approx(1e-5) and v.within_uncertainty
    (v,) = model(-1e-6, 1e-16).passivity_violations()  # -1 uohm +- 10 nohm
    assert not v.within_uncertainty


def test_public_parameters_are_documented():
    import inspect

    from zfit.fit import _poles, _rational, _vectfit

    # The public names of vector fitting, wherever the split put them.
    public = [(m, n) for m in (_vectfit, _rational, _poles) for n in ("vector_fit", "fit_impedance", "RationalModel",
              "VFIteration", "PassivityViolation", "starting_poles", "sigma_update_for") if n in m.__all__]
    assert len(public) == 7
    for module, name in public:
        obj = getattr(module, name)
        targets = [obj] if inspect.isfunction(obj) else []
        if inspect.isclass(obj):
            targets += [m for k, m in vars(obj).items() if inspect.isfunction(m) and not k.startswith("_")]
        for fn in targets:
            doc = inspect.getdoc(fn) or ""
            for p in list(inspect.signature(fn).parameters)[0:]:
                if p in ("self",) or p.startswith("*"):
                    continue
                if p == "options":
                    p = "**options"
                assert p in doc, f"{name}.{fn.__name__}: parameter {p} not documented"


def test_convergence_history_shows_the_poles_settling():
    # Noise-free inductor: relocation converges; the pole movement ends below
    # pole_tol and the relaxation constant d~ tends to 1 (Gustavsen 2006: at
    # convergence sigma(s) -> 1).
    f = np.geomspace(1e5, 1e8, 300)
    m = fit_impedance(f, _inductor(f), kind="inductor", n_poles=2)
    hist = m.convergence()
    assert hist["iteration"].tolist() == list(range(1, len(m.iterations) + 1))
    assert hist["max_relative_pole_change"][-1] < 1e-10
    assert hist["sigma_constant"][-1] == pytest.approx(1.0, abs=1e-8)
    assert m.converged


def test_agrees_with_scikit_rf_on_a_reflection_measurement():
    skrf = pytest.importorskip("skrf")
    from skrf.vectorFitting import VectorFitting

    # The inductor as S11 = (Z - 50)/(Z + 50), itself rational with one pole
    # pair (the zeros of N + 50 D for Z = N/D). scikit-rf fits S11; zfit fits
    # both S11 (same options) and Z; all must agree with each other.
    f = np.geomspace(1e5, 1e8, 601)
    z = _inductor(f)
    s11 = (z - 50) / (z + 50)
    net = skrf.Network(frequency=skrf.Frequency.from_f(f, unit="hz"), s=s11.reshape(-1, 1, 1), z0=50)
    vf = VectorFitting(net)
    with warnings.catch_warnings():
        # scikit-rf 2.2 and later warn that its own unconstrained fit of this
        # (passive) S11 is not passive; that is scikit-rf's remark on its own
        # model, expected here, and not what this test compares.
        warnings.filterwarnings("ignore", message="The fitted network is passive, but the vector fit is not passive")
        vf.vector_fit(n_poles_real=0, n_poles_cmplx=1, init_pole_spacing="log", parameter_type="s",
                      fit_constant=True, fit_proportional=False)
    s_skrf = vf.get_model_response(0, 0, f)
    ms = vector_fit(f, s11, n_poles=2, constant=True, proportional=False)
    np.testing.assert_allclose(ms(f), s_skrf, rtol=1e-9, atol=1e-12)
    np.testing.assert_allclose(np.sort_complex(ms.poles), np.sort_complex(_pairs(vf.poles)), rtol=1e-9)
    mz = fit_impedance(f, z, kind="inductor", n_poles=2)
    z_skrf = 50 * (1 + s_skrf) / (1 - s_skrf)
    np.testing.assert_allclose(mz(f), z_skrf, rtol=1e-8)

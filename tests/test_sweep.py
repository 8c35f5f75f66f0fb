import numpy as np
import pytest

from zfit.data._connection import (
    InstrumentNoise,
    dz_ds,
    impedance_from_s,
    s_from_impedance,
    sigma_z_from_s,
)
from zfit._errors import MeasurementWarning, ZfitInputError
from zfit.data._sweep import make_sweep


def _arrays(n=20):
    f = np.logspace(3, 7, n)
    z = 1.0 + 2j * np.pi * f * 1e-6
    return f, z, np.full(n, 1e-3)


def test_make_sweep_sorts_and_drops_repeats():
    f, z, s = _arrays()
    f = np.concatenate([f[::-1], f[:1]])
    z = np.concatenate([z[::-1], z[:1]])
    s = np.concatenate([s, s[:1]])
    with pytest.warns(MeasurementWarning, match="1 repeated frequencies dropped"):
        sw = make_sweep(f, z, s, source="x.csv", lines=np.arange(5, 5 + f.size))
    assert np.all(np.diff(sw.f_hz) > 0)
    assert sw.n_points == 20
    assert not sw.f_hz.flags.writeable


def test_make_sweep_names_line_of_nan():
    f, z, s = _arrays()
    z[3] = np.nan
    with pytest.raises(ZfitInputError, match=r"^x\.csv:13: value is not a finite number"):
        make_sweep(f, z, s, source="x.csv", lines=np.arange(10, 30))


def test_make_sweep_flags_active_points_and_keeps_them():
    f, z, s = _arrays()
    z[7] = -1.0 + 0j  # Re Z = -1 ohm against sigma = 1 mohm: active beyond any noise
    with pytest.warns(MeasurementWarning, match=r"1 of 20 points look active \(Re Z < 0 beyond their uncertainty\) "
                      r"at 29.76 kHz: a calibration residual or a phase error"):
        sw = make_sweep(f, z, s, source="x.csv")
    assert sw.n_points == 20 and sw.active.sum() == 1 and sw.active[7]
    assert sw.z_ohm[7] == -1.0 and sw.sigma_ohm[7] == 1e-3  # kept, with its uncertainty
    assert any("look active" in n for n in sw.notes)


def test_make_sweep_refuses_only_when_every_point_is_active():
    f, z, s = _arrays()
    with pytest.raises(ZfitInputError, match="every point looks active .* nothing passive to identify"):
        make_sweep(f, -z.real + 1j * z.imag, s, source="x.csv")


def test_make_sweep_needs_two_points():
    f, z, s = _arrays(2)
    assert make_sweep(f, z, s, source="x.csv").n_points == 2
    with pytest.raises(ZfitInputError, match=r"only 1 distinct frequency point\(s\); at least 2"):
        make_sweep(f[:1], z[:1], s[:1], source="x.csv")


def test_make_sweep_copies_the_callers_arrays():
    f, z, s = _arrays()
    sw = make_sweep(f, z, s, source="x.csv")
    assert f.flags.writeable and z.flags.writeable and not sw.z_ohm.flags.writeable
    z[0] = 99.0
    assert sw.z_ohm[0] != 99.0


def test_make_sweep_merges_repeats_with_their_spread():
    f, z, s = _arrays()
    # A segmented sweep: the join frequency measured twice, 1 % apart.
    f2, z2, s2 = np.insert(f, 10, f[10]), np.insert(z, 10, z[10] * 1.01), np.insert(s, 10, s[10])
    sw = make_sweep(f2, z2, s2, source="x.csv")
    assert sw.n_points == 20
    # Mean of the two, spread = rms distance from the mean = |dz|/2 (definition).
    np.testing.assert_allclose(sw.z_ohm[10], z[10] * 1.005, rtol=1e-12)
    np.testing.assert_allclose(sw.sigma_ohm[10], np.hypot(1e-3, 0.005 * abs(z[10])), rtol=1e-12)
    assert any("1 repeated frequencies (1 extra row(s), at" in n and "merged" in n for n in sw.notes)


@pytest.mark.parametrize("connection", ["reflection", "shunt-thru", "series-thru"])
def test_connection_formulas_invert_and_derivative(connection):
    z = np.array([0.005, 1.0 + 3j, 50.0, 2e3 - 5e3j, 5e4j])
    s = s_from_impedance(z, connection, 50.0)
    # 1e-9, not 1e-15: recovering 5 milliohm in series-thru goes through 1 - S ~ 5e-5.
    np.testing.assert_allclose(impedance_from_s(s, connection, 50.0), z, rtol=1e-9)
    # Central difference of the holomorphic map Z(S) (definition of the derivative).
    h = 1e-7 * np.maximum(np.abs(s), 1e-3)
    num = (impedance_from_s(s + h, connection) - impedance_from_s(s - h, connection)) / (2 * h)
    np.testing.assert_allclose(dz_ds(s, connection), num, rtol=1e-5)


def test_reflection_of_milliohms_is_noise_dominated():
    # Common practice: a 5 milliohm part measured by reflection at 50 ohm is
    # unresolvable; the propagated sigma exceeds the value itself.
    s = s_from_impedance(np.array([0.005]), "reflection")
    sig = sigma_z_from_s(s, "reflection", 50.0, InstrumentNoise(1e-3, 1e-5))
    # |dZ/dS| = 2 Z0 / |1 - S|^2 ~ 25 ohm at S = -1, times sigma(S) = 1e-3 + 1e-5
    # -> 25.25 milliohm, five times the part's value.
    assert sig[0] == pytest.approx(0.02525, rel=1e-3)


def test_passivity_check_does_not_reject_honest_noise(rng):
    # A lossless capacitor (Re Z = 0) measured with circular Gaussian noise:
    # Re Z is negative at half the points, by chance. Over 200 sweeps of 801
    # points, the chance of a false rejection at k = sqrt(2 ln N) + 2 ~ 5.66 is
    # about 801 * P(N(0,1) < -5.66) ~ 6e-6 per sweep (normal tail, common practice).
    f = np.logspace(3, 8, 801)
    z0 = 1 / (2j * np.pi * f * 100e-9)
    sigma = 1e-3 * np.abs(z0)
    rejected = 0
    for _ in range(200):
        noise = (rng.standard_normal(f.size) + 1j * rng.standard_normal(f.size)) * sigma / np.sqrt(2)
        try:
            make_sweep(f, z0 + noise, sigma, source="mc")
        except ZfitInputError:
            rejected += 1
    assert rejected == 0

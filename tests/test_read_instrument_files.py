"""Reading files as real instruments write them (issue 11, the reading half).

The files come from tests/instrument_files.py: truths from circuit formulas,
errors from an error box, trace noise, segmented sweeps and digit rounding
written out there, not from zfit's noise model.
"""

import json

import numpy as np
import pytest
from typer.testing import CliRunner

import instrument_files as inst
from zfit import read_sweep
from zfit._errors import MeasurementWarning
from zfit.cli._app import app
from zfit.data._noise import fitted_noise, local_sigma


def _noisy_table_z(rng, f, rel):
    z = inst.inductor_z(f, 10e-6, 0.05, 3e-12)  # SRF = 1/(2 pi sqrt(LC)) ~ 29 MHz
    return z, rel * np.abs(z), z + inst.circular_noise(rng, rel * np.abs(z))


SWEEPS = {
    "log": lambda: np.logspace(3, 8, 801),
    "linear": lambda: np.linspace(100e3, 100e6, 801),  # 90 % of the points in the top decade
}


@pytest.mark.parametrize("rel", [5e-4, 2e-3, 2e-2])
@pytest.mark.parametrize("spacing", ["log", "linear"])
def test_noise_estimate_of_a_table_within_25_percent(rng, rel, spacing):
    f = SWEEPS[spacing]()
    z, sigma_true, zm = _noisy_table_z(rng, f, rel)
    est = fitted_noise(f, zm, "Z")
    assert est is not None and est.source == "estimated from the data"
    model = est.rel * np.abs(zm) + est.floor
    # The tolerance: sigma within 25 % of the injected sigma over the whole band.
    np.testing.assert_array_less(np.abs(model / sigma_true - 1), 0.25)


@pytest.mark.parametrize("rel", [5e-4, 2e-3, 2e-2])
@pytest.mark.parametrize("spacing", ["log", "linear"])
def test_noise_estimate_of_a_reflection_file_within_25_percent(tmp_path, rng, rel, spacing):
    f = SWEEPS[spacing]()
    z = inst.inductor_z(f, 100e-9, 10.0, 0.1e-12)  # |S11| 0.67 .. 0.87: far from |S11| = 1
    s = inst.error_box(inst.reflection(z))
    floor = 1e-3 if rel >= 2e-3 else 1e-5  # -60 dB where it does not hide the relative term
    sigma_true = rel * np.abs(s) + floor
    path = inst.write_s1p(tmp_path / "c.s1p", f, s + inst.circular_noise(rng, sigma_true))
    sw = read_sweep(path)
    est = sw.noise_estimate
    assert est.source == "estimated from the data" and est.on == "S"
    model = est.rel * np.abs(sw.s_param) + est.floor
    np.testing.assert_array_less(np.abs(model / sigma_true - 1), 0.25)  # the 25 %
    # Read: sigma of Z through the reflection formula from the estimated model.
    assert sw.noise.rel == est.rel and "estimated from the data" in sw.noise_model


def test_local_sigma_follows_noise_growing_at_the_band_edges(rng):
    f = np.logspace(3, 8, 1601)
    z = inst.inductor_z(f, 10e-6, 0.05, 3e-12)
    sigma_true = inst.edge_rel(f, 1e-3, growth=8.0) * np.abs(z)  # 9x larger at the edges
    sig = local_sigma(f, z + inst.circular_noise(rng, sigma_true))
    # Median over each twentieth of the band within 25 % (a MAD over 42 residuals scatters
    # by ~18 % point by point: Hampel 1974; the median over 80 points averages that down).
    for part in np.array_split(np.arange(f.size), 20):
        assert np.median(sig[part] / sigma_true[part]) == pytest.approx(1.0, abs=0.25)


def test_segmented_linear_sweep_with_repeated_joins(tmp_path, rng):
    # Three linear segments; each join measured twice, by two segments with different tracking.
    bands, points = [(1e6, 10e6), (10e6, 50e6), (50e6, 200e6)], [91, 81, 151]
    f = inst.segmented_linear(bands, points)
    z = inst.inductor_z(f, 100e-9, 5.0, 0.5e-12)
    seg = np.repeat(np.arange(3), points)
    tracking = np.array([1.0, 1.002 * np.exp(0.001j), 0.998])[seg]  # +/- 0.02 dB steps between segments
    s = inst.error_box(inst.reflection(z), e10e01=tracking)
    sigma_true = 2e-3 * np.abs(s) + 1e-5
    path = inst.write_s1p(tmp_path / "seg.s1p", f, s + inst.circular_noise(rng, sigma_true))
    sw = read_sweep(path)
    assert sw.n_points == f.size - 2  # the two joins merged
    assert np.all(np.diff(sw.f_hz) > 0)
    assert any(n.startswith("2 repeated frequencies (2 extra row(s), at 10 MHz") and "merged" in n for n in sw.notes)
    j = np.flatnonzero(np.isin(sw.f_hz, [10e6, 50e6]))
    # The spread of the two readings is in the uncertainty at the joins: sigma there is at
    # least half the distance between them (rms distance from the mean of two values).
    assert np.all(sw.sigma_ohm[j] > sw.sigma_ohm[j - 1])


def test_rows_out_of_order_are_sorted_with_a_note(tmp_path, rng):
    f = np.logspace(5, 8, 101)
    z = inst.inductor_z(f, 1e-6, 0.1, 2e-12)
    order = np.r_[50:101, 0:50]  # two segments written high band first
    path = inst.write_zphase_table(tmp_path / "t.csv", f[order], z[order], digits=7)
    sw = read_sweep(path)
    np.testing.assert_allclose(sw.f_hz, f, rtol=1e-6)  # 7 digits printed
    assert "rows were not in frequency order; sorted" in sw.notes


def test_rounded_table_is_read_and_its_noise_is_the_rounding(tmp_path, rng):
    f = np.logspace(2, 7, 301)
    z = inst.inductor_z(f, 47e-6, 0.08, 3e-12)
    path = inst.write_zphase_table(tmp_path / "za.csv", f, z, digits=4)  # no noise but 4 digits
    sw = read_sweep(path)
    est = sw.noise_estimate
    assert est.source == "estimated from the data"
    # Rounding |Z| to 4 digits is a uniform error of 0.5e-3 .. 0.5e-4 relative, sd a
    # 1/sqrt(3) of that (common practice), the phase likewise: the estimate is of that order.
    median_rel = float(np.median((est.rel * np.abs(sw.z_ohm) + est.floor) / np.abs(sw.z_ohm)))
    assert 2e-5 < median_rel < 1e-3


def test_low_impedance_by_reflection_with_active_points(tmp_path, rng):
    # A 0.2 ohm + 100 nH part by reflection: |S11| ~ 0.992; a tracking residual growing to
    # 1 % (0.09 dB) at the top of the band makes |S11m| > 1 there (the calibration residual
    # the issue describes), not below.
    f = np.logspace(5, 8, 401)
    z = 0.2 + 2j * np.pi * f * 100e-9
    s = inst.error_box(inst.reflection(z), e00=0, e11=0, e10e01=1 + 0.01 * f / f[-1])
    sigma_true = 1e-4 * np.abs(s) + 1e-5
    path = inst.write_s1p(tmp_path / "low.s1p", f, s + inst.circular_noise(rng, sigma_true))
    with pytest.warns(MeasurementWarning, match=r"points look active \(\|S11\| > 1 beyond their uncertainty\) "
                      r"between .*: a calibration residual or a phase error .* connection poorly suited"):
        sw = read_sweep(path)
    assert 0 < sw.active.sum() < f.size // 2 and sw.n_points == f.size  # flagged, none dropped
    assert sw.active[-1] and not sw.active[0]
    assert np.all(np.abs(sw.s_param[sw.active]) > 1)
    assert sw.z_ohm.real[sw.active].max() < 0


def test_a_file_with_nothing_passive_is_refused(tmp_path):
    f = np.logspace(5, 8, 101)
    s = 1.05 * inst.reflection(0.01 + 2j * np.pi * f * 1e-9)  # |S11| = 1.05 everywhere
    path = inst.write_s1p(tmp_path / "gain.s1p", f, s)
    from zfit import ZfitInputError

    with pytest.raises(ZfitInputError, match=r"every point looks active \(\|S11\| > 1"):
        read_sweep(path, noise=inst_noise())


def inst_noise():
    from zfit import InstrumentNoise

    return InstrumentNoise(1e-3, 1e-5)


def test_two_point_lcr_table_is_read_and_info_works(tmp_path):
    f = np.array([1e3, 10e3])
    z = inst.inductor_z(f, 47e-6, 0.08, 3e-12)
    path = inst.write_ls_rs_table(tmp_path / "two.csv", f, z, digits=5)
    r = CliRunner().invoke(app, ["info", str(path), "--json", str(tmp_path / "two.json")])
    assert r.exit_code == 0, r.output
    d = json.loads((tmp_path / "two.json").read_text())
    assert d["points"] == 2 and d["noise"]["source"] == "default"
    assert d["f_min_hz"] == 1e3 and d["f_max_hz"] == 10e3
    assert "only 2 points (fewer than 15): too few to estimate the noise" in r.stdout


def test_shunt_thru_file_without_connection_is_read(tmp_path, rng):
    f = np.logspace(4, 8, 201)
    z = inst.capacitor_z(f, 100e-9, 0.01, 1e-9)
    s21 = 2 * z / (2 * z + inst.Z0)  # shunt admittance on a matched line (Pozar 2012, Table 4.1)
    s11 = s21 - 1
    path = inst.write_s2p(tmp_path / "c.s2p", f, s11, s21)
    r = CliRunner().invoke(app, ["info", str(path)])
    assert r.exit_code == 0, r.output
    assert "connection   shunt-thru" in r.stdout and "connection shunt-thru taken from the data" in r.stdout

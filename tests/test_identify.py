"""identify(): decision rules, the DC-resistance constraint, the valid band, figures,
errors and the command line.  Parts are simulated by ngspice (an independent
simulator) or, for the rules that do not need a simulator, by the handbook
formulas checked in test_circuits.py."""

import json
import re
import math
import pickle
import warnings

import numpy as np
import pytest
from typer.testing import CliRunner

from ngspice import run_ac
from zfit.fit._circuits import CapacitorCircuit, InductorCircuit
from zfit.data._connection import InstrumentNoise
from zfit._errors import MeasurementWarning, ZfitInputError
from zfit.identification._pipeline import identify

from test_identify_ngspice import noisy_sweep

TWO_PI = 2 * math.pi


def _quiet(*args, **kwargs):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", MeasurementWarning)
        return identify(*args, **kwargs)


def _synthetic(circuit, p, f, connection, seed, source="synthetic"):
    rng = np.random.default_rng(seed)
    return noisy_sweep(f, circuit.impedance(np.asarray(p, float), f), connection, rng, source)


@pytest.mark.ngspice
def test_second_resonance_limits_the_valid_band_and_keeps_the_rational_model():
    # A winding in two sections (each an R-L with its own C across it) has a second
    # parallel resonance; one R_s-L || C_p circuit holds only below it.
    net = (
        "L1 n1 a 10e-6\nR1 a m 0.3\nC1 n1 m 4e-12\n"
        "L2 m b 1e-6\nR2 b 0 0.2\nC2 m 0 0.5e-12\n"
    )
    f, z = run_ac(net, 1e5, 1e9, 100)
    sweep = noisy_sweep(f, z, "reflection", np.random.default_rng(5), "two-section winding")
    with pytest.warns(MeasurementWarning, match="within the noise only from"):
        r = identify(sweep)
    assert r.model == "inductor"
    lo, hi = r.fit.valid_band_hz
    # The second resonance of this netlist lies near 1/(2 pi sqrt(1e-6 * 0.5e-12)) = 225 MHz.
    assert lo == pytest.approx(1e5, rel=1e-6) and 10e6 < hi < 225e6
    assert r.fit.fitted_band_hz[1] <= hi * 1.0001 and r.fit.worse_than_rational
    # Below both resonances the part is L1 + L2 = 11 uH in series with 0.5 ohm.
    assert r.parameters["L"].value == pytest.approx(11e-6, rel=0.02)
    # The rational model still describes the full band to the noise.
    assert r.fit.rational_rms_normalized_residual < 1.3
    d = r.to_dict()
    assert d["fit"]["worse_than_rational"] is True and any("rational model" in w for w in d["warnings"])


@pytest.mark.ngspice
def test_dielectric_absorption_limits_the_valid_band_from_below():
    # An electrolytic with dielectric absorption: two R-C branches across C (a common
    # equivalent of the absorption, from memory) whose loss shows below a few hundred Hz.
    net = "R1 n1 a 0.05\nL1 a b 5e-9\nC1 b 0 100e-6\nR2 b c 200\nC2 c 0 5e-6\nR3 b d 2000\nC3 d 0 5e-6\n"
    f, z = run_ac(net, 10, 1e6, 100)
    sweep = noisy_sweep(f, z, "shunt-thru", np.random.default_rng(5), "electrolytic")
    with pytest.warns(MeasurementWarning, match="within the noise only from"):
        r = identify(sweep)
    assert r.model == "capacitor"
    lo, hi = r.fit.valid_band_hz
    # The branches' corners are 1/(2 pi 200 5u) = 159 Hz and 16 Hz.
    assert 100 < lo < 3e3 and hi == pytest.approx(1e6, rel=1e-6)
    assert r.parameters["C"].value == pytest.approx(100e-6, rel=0.01)
    assert r.parameters["ESL"].value == pytest.approx(5e-9, rel=0.03)
    assert r.parameters["ESR"].value == pytest.approx(0.05, rel=0.10)
    assert r.fit.rational_rms_normalized_residual < 1.3


@pytest.mark.ngspice
def test_measured_dc_resistance_constrains_r_s():
    # 22 uH with 30 mohm measured in reflection between 10 kHz and 10 MHz: the sweep alone
    # resolves R_s poorly; a four-wire reading of 30.0 +- 0.3 mohm pins it.
    net = "L1 n1 a 22e-6\nR1 a 0 0.030\nC1 n1 0 3e-12"
    f, z = run_ac(net, 1e4, 1e7, 100)
    sweep = noisy_sweep(f, z, "reflection", np.random.default_rng(9), "coil")
    free = _quiet(sweep, "inductor")
    pinned = identify(sweep, "inductor", rdc=0.030, rdc_std=0.0003)
    assert free.parameters["R_s"].std > 5 * pinned.parameters["R_s"].std
    assert pinned.parameters["R_s"].std <= 0.0003
    assert abs(pinned.parameters["R_s"].value - 0.030) <= 3 * pinned.parameters["R_s"].std
    assert pinned.parameters["L"].value == pytest.approx(22e-6, rel=0.01)
    assert pinned.to_dict()["rdc"] == {"value": 0.030, "std": 0.0003, "unit": "ohm"}
    # Default uncertainty: 1 % of the reading.
    assert identify(sweep, "inductor", rdc=0.030).rdc.std == pytest.approx(0.0003)
    # A reading the sweep contradicts is reported.
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", MeasurementWarning)
        bad = identify(_synthetic(InductorCircuit(), [22e-6, 3.0, 3e-12], f, "series-thru", 1), "inductor", rdc=0.030)
    assert any("disagree" in str(w.message) for w in caught)
    assert any("disagree" in w for w in bad.warnings)


def test_values_within_their_tolerance_band_are_reported_as_measured():
    # Common practice: a part's actual value lies anywhere within its tolerance (here a
    # 4.7 uH +-10 % inductor); zfit reports the part's own value, not the nominal.
    f = np.geomspace(1e5, 3e8, 401)
    for k, dev in enumerate((-0.08, -0.04, 0.0, 0.03, 0.07, 0.095)):
        L = 4.7e-6 * (1 + dev)
        r = identify(_synthetic(InductorCircuit(), [L, 0.4, 2e-12], f, "series-thru", 40 + k))
        assert r.parameters["L"].value == pytest.approx(L, rel=0.01)
        assert abs(r.parameters["L"].value / 4.7e-6 - 1) <= 0.10 + 0.01
        assert not r.warnings


def test_figures_follow_their_definitions():
    f = np.geomspace(1e4, 3e8, 501)
    ind = identify(_synthetic(InductorCircuit(), [10e-6, 0.5, 5e-12], f, "series-thru", 2), at=(1e5,))
    L, R = ind.parameters["L"].value, ind.parameters["R_s"].value
    q = ind.figures.q_model_at_q_peak
    assert q.value == pytest.approx(TWO_PI * q.f_hz * L / R, rel=1e-9)
    assert ind.q_model([1e6])[0] == pytest.approx(TWO_PI * 1e6 * L / R, rel=1e-12)
    # Measured Q (|X|/R) peaks below the SRF, and there it is below the model's omega L / R_s.
    assert ind.figures.q_peak.f_hz < ind.srf.value_hz and ind.figures.q_peak.value < q.value
    sp = ind.spot[0]
    assert sp.L_eff.value == pytest.approx(sp.X.value / (TWO_PI * 1e5), rel=1e-12)
    assert sp.Q.value == pytest.approx(abs(sp.X.value) / sp.R.value, rel=1e-12)
    assert sp.D.value == pytest.approx(1 / sp.Q.value, rel=1e-12)
    cv = ind.curves
    assert cv.f_hz[0] == pytest.approx(1e4) and cv.f_hz[-1] == pytest.approx(3e8) and cv.d_model is None
    assert np.allclose(cv.q_model, TWO_PI * cv.f_hz * L / R, rtol=1e-12)
    below = cv.f_hz < 0.1 * ind.srf.value_hz  # far below the SRF the two Q definitions agree
    assert np.allclose(cv.q_measured[below], cv.q_model[below], rtol=0.05)
    assert np.allclose(cv.d_measured, cv.esr_ohm / np.abs(cv.x_ohm), rtol=1e-12)
    cap = identify(_synthetic(CapacitorCircuit(), [100e-9, 0.02, 1e-9], f, "shunt-thru", 3))
    assert np.allclose(cap.curves.d_model, TWO_PI * cap.curves.f_hz * 100e-9 * 0.02, rtol=0.05)
    C, ESR = cap.parameters["C"].value, cap.parameters["ESR"].value
    dm = cap.figures.d_model_at_f_min
    assert dm.value == pytest.approx(TWO_PI * 1e4 * C * ESR, rel=1e-9)
    assert cap.figures.d_at_f_min.value == pytest.approx(dm.value, rel=0.05)
    # ESR is smallest at the series resonance and equals the ESR there.
    assert cap.figures.esr_min.value == pytest.approx(0.02, rel=0.05)
    assert cap.figures.z_at_srf.value == pytest.approx(0.02, rel=0.05)


def test_srf_above_the_band_gives_the_band_edge_as_lower_bound():
    f = np.geomspace(1e4, 1e7, 301)  # SRF of 10 uH || 5 pF is 22.5 MHz
    r = identify(_synthetic(InductorCircuit(), [10e-6, 0.5, 5e-12], f, "series-thru", 4))
    assert r.srf.where == "above-band" and r.srf.bound_hz == pytest.approx(1e7)
    assert abs(r.srf.value_hz - 22.507e6) <= 3 * r.srf.std_hz


def test_rational_model_and_spot_outside_the_band():
    f = np.geomspace(1e4, 3e8, 401)
    sweep = _synthetic(CapacitorCircuit(), [100e-9, 0.02, 1e-9], f, "shunt-thru", 5)
    r = identify(sweep, "rational", at=(1e6,))
    assert r.model == "rational" and not r.parameters and r.rational is not None
    assert r.srf.source == "rational" and r.srf.value_hz == pytest.approx(1 / (TWO_PI * math.sqrt(1e-16)), rel=0.003)
    assert r.impedance([1e6])[0] == pytest.approx(r.rational.impedance([1e6])[0])
    with pytest.warns(MeasurementWarning, match="outside the band"):
        out = identify(sweep, "capacitor", at=(1e9,))
    assert out.spot[0].in_band is False and out.spot[0].source == "circuit"


def test_impedance_table_is_fitted_on_z():
    from zfit.data._sweep import make_sweep

    f = np.geomspace(1e3, 1e7, 301)
    cap = CapacitorCircuit()
    z = cap.impedance(np.array([1e-6, 0.05, 5e-9]), f)
    rng = np.random.default_rng(6)
    sig = 1e-3 * np.abs(z)
    zm = z + sig * (rng.standard_normal(f.size) + 1j * rng.standard_normal(f.size)) / math.sqrt(2)
    sweep = make_sweep(f, zm, sig, source="table", connection="impedance", noise=InstrumentNoise(1e-3, 1e-9))
    r = identify(sweep)
    assert r.fit.domain == "Z" and r.model == "capacitor"
    for k, t in {"C": 1e-6, "ESR": 0.05, "ESL": 5e-9}.items():
        assert abs(r.parameters[k].value - t) <= 3 * r.parameters[k].std


def test_bad_arguments_are_refused():
    f = np.geomspace(1e4, 3e8, 101)
    sweep = _synthetic(InductorCircuit(), [10e-6, 0.5, 5e-12], f, "series-thru", 7)
    with pytest.raises(ZfitInputError, match="unknown model"):
        identify(sweep, "resistor")
    with pytest.raises(ZfitInputError, match="spot frequency"):
        identify(sweep, at=(-1.0,))
    with pytest.raises(ZfitInputError, match="--rdc"):
        identify(sweep, rdc=0.0)
    with pytest.raises(ZfitInputError, match="needs --rdc"):
        identify(sweep, rdc_std=0.1)


def test_result_is_frozen_and_picklable():
    f = np.geomspace(1e4, 3e8, 201)
    r = identify(_synthetic(InductorCircuit(), [10e-6, 0.5, 5e-12], f, "series-thru", 8))
    with pytest.raises(Exception):
        r.model = "capacitor"
    with pytest.raises(AttributeError):
        r.parameters.x = 1
    back = pickle.loads(pickle.dumps(r))
    assert back.to_dict() == r.to_dict()
    assert dict(back.parameters.values_si()) == pytest.approx({k: v.value for k, v in r.parameters.items()})


def _s1p(tmp_path, seed=11):
    from zfit.io._touchstone_export import touchstone_text

    f = np.geomspace(1e4, 3e8, 401)
    sweep = _synthetic(InductorCircuit(), [10e-6, 0.5, 5e-12], f, "reflection", seed)
    path = tmp_path / "coil.s1p"
    path.write_text(touchstone_text(f, sweep.z_ohm))
    return path


def test_cli_prints_the_table_and_writes_json(tmp_path):
    from zfit.cli._app import app

    path = _s1p(tmp_path)
    out = tmp_path / "coil.json"
    res = CliRunner().invoke(app, ["identify", str(path), "--at", "1M", "--json", str(out)])
    assert res.exit_code == 0, res.output
    assert "inductor: series R_s-L with parallel C_p" in res.output
    assert "SRF:" in res.output and "Q peak:" in res.output and "±" in res.output
    d = json.loads(out.read_text())
    assert d["schema"] == "zfit.identify/1" and d["parameters"]["L"]["value"] == pytest.approx(10e-6, rel=0.01)
    assert d["spot"][0]["f_hz"] == 1e6
    # Nothing is overwritten without --force; bad options give one line and status 2.
    again = CliRunner().invoke(app, ["identify", str(path), "--json", str(out)])
    assert again.exit_code == 2 and "exists already" in again.output
    bad = CliRunner().invoke(app, ["identify", str(path), "--at", "fast"])
    assert bad.exit_code == 2 and "--at" in bad.output and "Traceback" not in bad.output
    assert CliRunner().invoke(app, ["identify", str(path), "--json", str(out), "--force", "--rdc", "0.5"]).exit_code == 0


def test_cli_writes_outputs_and_json_to_stdout(tmp_path):
    from zfit.cli._app import app

    path = _s1p(tmp_path, seed=12)
    net = tmp_path / "coil.cir"
    ts = tmp_path / "model.s1p"
    res = CliRunner().invoke(app, ["identify", str(path), "--netlist", str(net), "--touchstone", str(ts),
                                   "--touchstone-grid", "1M:100M:11"])
    assert res.exit_code == 0, res.output
    assert net.exists() and ".subckt" in net.read_text().lower()
    rows = [ln for ln in ts.read_text().splitlines() if ln.strip() and ln.lstrip()[0].isdigit()]
    assert len(rows) == 11
    # --json - : the standard output is the JSON object alone.
    out = CliRunner().invoke(app, ["identify", str(path), "--json", "-"])
    assert out.exit_code == 0
    assert json.loads(out.stdout)["model"] == "inductor"


def test_cli_refuses_bad_outputs_before_the_work(tmp_path):
    from zfit.cli._app import app

    path = _s1p(tmp_path, seed=13)
    (tmp_path / "plots.png").mkdir()
    cases = [
        (["--plot", str(tmp_path / "plots.png")], r"plots\.png: is a folder; give the name of a file to write"),
        (["--plot", str(tmp_path / "plots")], r"plots: plot file must end in \.png or \.svg"),
        (["--netlist", str(tmp_path / "coil.txt")], r"coil\.txt"),
        (["--touchstone-grid", "1M:10M:5"], r"--touchstone-grid needs --touchstone PATH"),
        (["--load-value", "50"], r"--load-value goes with --load"),
    ]
    for extra, message in cases:
        res = CliRunner().invoke(app, ["identify", str(path), *extra])
        assert res.exit_code == 2, (extra, res.output)
        assert re.search(message, res.output), (extra, res.output)
        assert "Traceback" not in res.output and "model:" not in res.output  # refused before fitting

"""Sweep sets against DC bias: the saturation figures, the fitted curve, the limits verdict.

The sets are written in tests/bias_sets.py from published roll-off forms and
an impedance analyser's error model (not zfit's noise model).
"""

import json
import math
from pathlib import Path

import numpy as np
import pytest

from bias_sets import (C0, CURRENTS_A, I_S, L0, N_L, V0, VOLTAGES_V, capacitance, capacitor_set, fall_bias,
                       inductance, inductor_set)
from zfit.identification._bias_curve import bias_curve, curve_band, fall_point
from zfit.io._limits_file import parse_limits
from zfit._errors import ZfitInputError
from zfit.lot._bias_inputs import bias_points
from zfit.lot._bias_set import run_bias_set
from zfit.lot._conformity import decide

SCHEMA = Path(__file__).parents[1] / "zfit" / "schemas" / "bias.schema.json"


@pytest.fixture(scope="module")
def inductor_result(tmp_path_factory):
    root = tmp_path_factory.mktemp("ind")
    inductor_set(root / "sweeps")
    pts, unit = bias_points([str(root / "sweeps" / "*.csv")], from_name=r"L_(?P<bias>[0-9.]+)A", unit="A")
    lim = parse_limits('[limit.I_sat_20]\nmin = "1.1A"\n[limit.I_sat_30]\nmin = "1.6A"\n')
    return run_bias_set(pts, unit, root / "out", jobs=2, limits=lim, progress=False), root


def test_inductor_saturation_currents_within_3_percent(inductor_result):
    res, _ = inductor_result
    assert res.family == "inductor" and res.unit == "A" and len(res.rows) == 8
    for f in res.figures:
        # The 10/20/30 % currents of L0/(1+(I/I_s)^n): I_s (p/(1-p))^(1/n) (algebra of the form).
        want = fall_bias(I_S, N_L, res.fall_of(f.key))
        assert f.point.value == pytest.approx(want, rel=0.03), f.key
        assert f.point.std is not None and 0 < f.point.std < 0.03 * want
        assert f.curve_value == pytest.approx(want, rel=0.03)
    # The identified L follows the model within 1 % (the analyser's 0.08 % accuracy, averaged).
    for r in res.rows:
        assert r.value[0] == pytest.approx(inductance(r.bias), rel=0.01)
        assert r.loss[0] == pytest.approx(0.035, rel=0.2)  # the winding resistance of the model
    assert res.curve.y0 == pytest.approx(L0, rel=0.01)
    assert res.curve.n == pytest.approx(N_L, rel=0.05)
    assert res.reference_source == "zero-bias sweep"


def test_inductor_limits_verdict_on_bias_figures(inductor_result):
    res, _ = inductor_result
    # I_sat_20 = 2.2 (0.25)^(1/2.2) = 1.17 A >= 1.1 A passes; I_sat_30 = 1.50 A < 1.6 A fails.
    by = {d.limit.name: d.verdict for d in res.decision.decisions}
    assert by == {"I_sat_20": "pass", "I_sat_30": "fail"}
    assert res.decision.verdict == "fail"


def test_json_contract_matches_its_schema(inductor_result):
    from test_identify_schema import validate

    res, root = inductor_result
    d = json.loads(json.dumps(res.to_dict()))
    validate(d, json.loads(SCHEMA.read_text()))
    assert d["schema"] == "zfit.bias/1" and d["figures"]["I_sat_20"]["method"] == "log-log"
    assert d["figures"]["I_sat_20"]["value"] == pytest.approx(fall_bias(I_S, N_L, 0.2), rel=0.03)
    # Each sweep's identify JSON is beside it (zfit.identify/1).
    first = json.loads((root / "out" / d["points"][0]["result"]).read_text())
    assert first["schema"] == "zfit.identify/1"


def test_capacitor_voltages_within_3_percent(tmp_path):
    capacitor_set(tmp_path / "c")
    pts, unit = bias_points([str(tmp_path / "c")], from_name=r"C_(?P<bias>[0-9.]+)V", unit="V")
    res = run_bias_set(pts, unit, tmp_path / "out", jobs=1, progress=False)
    assert res.family == "capacitor" and res.value_key == "C" and res.loss_key == "ESR"
    got = {f.key: f for f in res.figures}
    # C0/(1+(V/V0)^2): down 20 % at V0/2, down 50 % at V0 (algebra of the form).
    assert got["V_bias_20"].point.value == pytest.approx(V0 * 0.5, rel=0.03)
    assert got["V_bias_50"].point.value == pytest.approx(V0, rel=0.03)
    assert res.curve.n == pytest.approx(2.0, rel=0.05)
    assert res.rows[0].value[0] == pytest.approx(C0, rel=0.01)


def test_fall_point_exact_for_the_roll_off_form_and_bound_when_not_reached():
    x = np.array(CURRENTS_A)
    y = inductance(x)
    s = 1e-4 * y
    for fall in (0.1, 0.2, 0.3):
        # Exact (to rounding) in ln(y0/y-1) against ln x for this form: 1e-9 relative.
        assert fall_point(x, y, s, fall).value == pytest.approx(fall_bias(I_S, N_L, fall), rel=1e-9)
    # Up to 1.5 A, L has fallen 30 % (L(1.5 A) = 0.70 L0): a 50 % fall is not reached, and lies above 1.5 A.
    p = fall_point(x[:4], y[:4], s[:4], 0.5)
    assert p.value is None and p.bound == 1.5 and p.method == "not-reached"
    # A relative bias uncertainty of 1 % adds 1 % of the value in quadrature (GUM, law of propagation).
    a = fall_point(x, y, s, 0.2)
    b = fall_point(x, y, s, 0.2, bias_rel_std=0.01)
    assert b.std == pytest.approx(math.hypot(a.std, 0.01 * a.value), rel=1e-9)


def test_curve_fit_recovers_the_capacitor_form_with_a_calibrated_band():
    rng = np.random.default_rng(3)
    x = np.array(VOLTAGES_V)
    s = 2e-3 * capacitance(x)
    hits = 0
    for _ in range(200):
        y = capacitance(x) + s * rng.standard_normal(x.size)
        c = bias_curve(x, y, s)
        v, u = curve_band(c, [4.0])
        hits += abs(v[0] - capacitance(4.0)) < 2 * u[0]
    # A 2-sigma band covers about 95 % (normal law); 200 draws: 0.95 +- 0.03 (binomial, 2 sigma).
    assert hits / 200 == pytest.approx(0.95, abs=0.04)


def test_limits_file_takes_bias_figures_and_batch_skips_them_for_one_sweep():
    lim = parse_limits('[limit.L]\nnominal = "10u"\ntolerance_percent = 20\n[limit.I_sat_20]\nmin = "3A"\n')
    assert [x.is_bias for x in lim.limits] == [False, True] and lim.limits[1].unit == "A"
    # A single sweep (zfit batch) has no bias figure: only its L is checked (10.1u +- 0.05u in 8u..12u: pass).
    d = decide(lim, {"L": (10.1e-6, 0.05e-6), "SRF": (20e6, 1e4, None)})
    assert d.verdict == "pass" and [x.limit.name for x in d.decisions] == ["L"]
    # Not reached by 4 A: the figure lies above the largest bias, which is >= min 3 A: pass.
    d = decide(lim, {"L": (10.1e-6, 0.05e-6), "I_sat_20": (None, None, 4.0)})
    assert d.verdict == "pass" and "above the largest bias" in d.decisions[1].reason
    # Measured 2.9 +- 0.02 A below min 3 A: fail (JCGM 106 guarded acceptance: the value is outside).
    d = decide(lim, {"L": (10.1e-6, 0.05e-6), "I_sat_20": (2.9, 0.02, None)})
    assert d.verdict == "fail"
    with pytest.raises(ZfitInputError, match="I_sat_20 is an inductor bias figure but the file is for model 'capacitor'"):
        parse_limits('model = "capacitor"\n[limit.I_sat_20]\nmin = "3A"\n')
    with pytest.raises(ZfitInputError, match="is in V, but this quantity is in A"):
        parse_limits('[limit.I_sat_20]\nmin = "3V"\n')


def test_batch_with_a_bias_limit_checks_and_counts_only_the_sweep_figures(tmp_path):
    from zfit.lot._run import run_batch

    inductor_set(tmp_path / "s", currents=(0.0,))
    lim = parse_limits('[limit.L]\nnominal = "10u"\ntolerance_percent = 5\n[limit.I_sat_20]\nmin = "1A"\n')
    res = run_batch([str(tmp_path / "s")], tmp_path / "o", limits=lim, jobs=1, progress=False)
    # L = 10 uH within 1 % of the model (see above), inside 10u +- 5 %: pass; I_sat_20 is not a sweep's figure.
    assert [r.verdict for r in res.rows] == ["pass"]
    assert [q.name for q in res.lot.quantities] == ["L"]

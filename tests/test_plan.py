"""The measurement planner against a Monte Carlo of the identification, and its CLI.

The planner predicts each parameter's uncertainty per connection from the
Fisher information of the noise model (the Cramer-Rao bound, Kay,
*Fundamentals of Statistical Signal Processing: Estimation Theory*, 1993,
ch. 3; from memory).  The reference here is outside that computation: the
spread of `zfit.identify` over independent noisy realisations of the same
measurement, the noise drawn in this file from the analyser noise model
(circular Gaussian on S, or on Z for the table).
"""

import json
import math
import re
import warnings

import numpy as np
import pytest
from typer.testing import CliRunner

from zfit.cli._app import app
from zfit._errors import MeasurementWarning, ZfitInputError
from zfit.identification._pipeline import identify
from zfit.fit._simulate import simulated_sweep
from zfit.data._connection import InstrumentNoise
from zfit.identification._plan import NA_NOISE_DEFAULT, TABLE_ACCURACY_DEFAULT, plan_measurement

CAP = ("capacitor", {"C": 100e-9, "ESR": 5e-3, "ESL": 0.5e-9})
# 10 uH resonating at 20 MHz (C_p = 1 / ((2 pi 20 MHz)^2 10 uH) = 6.33 pF),
# with 50 kohm of core loss across it: a realistic peak.
IND = ("inductor", {"L": 10e-6, "R_s": 50e-3, "C_p": 6.33e-12, "R_p": 50e3})
BAND, POINTS, RUNS = (1e3, 1e9), 201, 100


def noisy_sweep(model, params, connection, f, rng):
    noise = TABLE_ACCURACY_DEFAULT if connection == "impedance" else NA_NOISE_DEFAULT
    return simulated_sweep(model, params, connection, f, noise, 50.0, rng=rng)


@pytest.fixture(scope="module")
def plans():
    return {m: plan_measurement(m, p, BAND, points=POINTS) for m, p in (CAP, IND)}


@pytest.mark.parametrize("part", [CAP, IND], ids=["capacitor", "inductor"])
def test_predicted_uncertainty_agrees_with_a_monte_carlo_of_identify(part, plans):
    # 100 realisations per connection: the sample standard deviation is
    # itself uncertain by 1/sqrt(2 * 99) = 7 %, so 25 % is 3.5 of those.
    # Compared for the parameters the plan resolves (relative uncertainty
    # below 1/3), where the first-order theory applies.
    model, params = part
    plan = plans[model]
    f = np.geomspace(*BAND, POINTS)
    rng = np.random.default_rng(7)
    compared = 0
    for cp in plan.connections:
        values = {k: [] for k in params}
        srfs = []
        for _ in range(RUNS):
            sw = noisy_sweep(model, params, cp.connection, f, rng)
            with warnings.catch_warnings():
                warnings.simplefilter("ignore", MeasurementWarning)
                ident = identify(sw, model=model)
            for k in params:
                if k in ident.parameters:
                    values[k].append(ident.parameters[k].value)
            if ident.srf.value_hz is not None:
                srfs.append(ident.srf.value_hz)
        for k, p in cp.parameters.items():
            if not p.resolved:
                continue
            assert len(values[k]) >= 0.95 * RUNS, (cp.connection, k)
            mc = float(np.std(values[k], ddof=1))
            assert abs(mc / p.std - 1) < 0.25, (cp.connection, k, mc, p.std)
            # and the estimates are centred on the truth (4 standard errors)
            assert abs(np.mean(values[k]) - params[k]) < 4 * mc / math.sqrt(len(values[k])) + 1e-9 * params[k]
            compared += 1
        # The SRF, propagated through the same covariance.
        assert len(srfs) == RUNS
        assert abs(np.std(srfs, ddof=1) / cp.srf_std_hz - 1) < 0.25, (cp.connection, "SRF")
    assert compared >= 3 * len(plan.connections) - 1


def test_capacitor_plan_prefers_shunt_thru_over_reflection(plans):
    # Common practice: milliohm impedances are measured shunt-thru (the part
    # across the line, S21 ~ 2Z/Z0), not in reflection, where S11 ~ -1 and
    # the ESR hides in 1 + S11; nor on an impedance analyser whose compensated
    # short leaves some 10 milliohm at tens of MHz (from memory).  That analyser
    # is planned with --table-floor 10m; the default table accuracy is the
    # readers' (0.1 % + 0.1 milliohm, TABLE_NOISE_DEFAULT), see the next test.
    plan = plan_measurement(*CAP, BAND, points=POINTS, table_accuracy=InstrumentNoise(1e-3, 1e-2))
    assert plan.recommended == "shunt-thru"
    assert plan.ranking.index("shunt-thru") < plan.ranking.index("reflection")
    esr_shunt = plan.connection("shunt-thru").parameters["ESR"].relative_std
    esr_refl = plan.connection("reflection").parameters["ESR"].relative_std
    assert esr_refl > 10 * esr_shunt
    assert "shunt-thru" in plan.reason and "ESR" in plan.reason
    # The reason says where the ESR is determined: at the SRF, |Z| = ESR = 5 milliohm,
    # a decade and more below Z0 = 50 ohm (shunt-thru's range).
    assert "it wins on ESR" in plan.reason and "a low impedance, shunt-thru's range" in plan.reason
    lo, hi = plan.connection("shunt-thru").determined_ohm["ESR"]
    # |Z| >= ESR = 5 milliohm everywhere (Z = ESR + jX); the information sits within a
    # decade of it and below Z0 / 10 = 5 ohm.
    assert 5e-3 * (1 - 1e-9) <= lo < 5e-2 and hi < 5.0, (lo, hi)


def test_capacitor_plan_with_the_readers_table_accuracy():
    # With the readers' table accuracy, 0.1 % + 0.1 milliohm, a point at the SRF
    # (|Z| = 5 milliohm) has sigma(Z) = 0.105 milliohm; shunt-thru's has
    # sigma(Z) = |dZ/dS| sigma(S) = (Z0 / 2)(1e-5 + 1e-3 * 2e-4) = 0.255 milliohm
    # (S21 = 2Z/(2Z + Z0) ~ 2e-4; Pozar 2012, sec. 4.3, the formula in docs/reading.md).
    # The table's ESR is then the more certain, by about that ratio.
    plan = plan_measurement(*CAP, BAND, points=POINTS)
    assert TABLE_ACCURACY_DEFAULT == InstrumentNoise(1e-3, 1e-4)
    assert plan.recommended == "impedance"
    ratio = plan.connection("impedance").parameters["ESR"].std / plan.connection("shunt-thru").parameters["ESR"].std
    assert 0.105 / 0.255 * 0.5 < ratio < 0.105 / 0.255 * 2  # a factor 2: the other points count too


def test_inductor_plan_prefers_series_thru_or_table_over_shunt_thru(plans):
    # Common practice: an inductor near its SRF is a high impedance, which
    # shunt-thru cannot see (S21 ~ 1) and series-thru or an impedance
    # analyser can.
    plan = plans["inductor"]
    assert plan.recommended in ("series-thru", "impedance")
    assert plan.ranking.index(plan.recommended) < plan.ranking.index("shunt-thru")
    rp = {c.connection: c.parameters["R_p"].relative_std for c in plan.connections}
    assert rp["shunt-thru"] > 10 * min(rp["series-thru"], rp["impedance"])


def test_plan_json_and_text_from_the_cli(tmp_path):
    out = tmp_path / "plan.json"
    r = CliRunner().invoke(app, ["plan", "capacitor", "--C", "100n", "--ESR", "5m", "--ESL", "500p",
                                 "--band", "1k:1G", "--points", "101", "--table-floor", "10m", "--json", str(out)])
    assert r.exit_code == 0, r.output
    assert "recommended: shunt-thru\n" in r.output
    assert "below resolution, <" in r.output  # series-thru cannot see 5 milliohm
    d = json.loads(out.read_text())
    assert d["schema"] == "zfit.plan/1" and d["recommended"] == "shunt-thru"
    assert set(d["connections"]) == {"reflection", "shunt-thru", "series-thru", "impedance"}
    esr = d["connections"]["series-thru"]["parameters"]["ESR"]
    assert esr["resolved"] is False and esr["resolution_limit"] > 5e-3
    assert d["parameters"] == {"C": 100e-9, "ESR": 5e-3, "ESL": 0.5e-9}
    # Not overwritten without --force.
    r = CliRunner().invoke(app, ["plan", "capacitor", "--C", "100n", "--ESR", "5m", "--ESL", "500p", "--json", str(out)])
    assert r.exit_code == 2 and "--force" in r.output


def test_case_sensitive_options_are_told_apart():
    # --L, --C, --C_p and -h are distinct options (typer/click keep the case).
    r = CliRunner().invoke(app, ["plan", "inductor", "--L", "10u", "--C_p", "6.33p", "--R_s", "50m", "--points", "41",
                                 "--band", "10k:100M"])
    assert r.exit_code == 0, r.output
    assert "L = 10 µH" in r.output and "C_p = 6.33 pF" in r.output
    r = CliRunner().invoke(app, ["plan", "inductor", "--C", "10u", "--C_p", "6.33p", "--R_s", "50m"])
    assert r.exit_code != 0 and "--C" in r.output
    r = CliRunner().invoke(app, ["plan", "capacitor", "-h"])
    assert r.exit_code == 0 and "--ESL" in r.output and "--R_leak" in r.output


def test_bad_plan_input_is_one_line_error():
    r = CliRunner().invoke(app, ["plan", "capacitor", "--C", "100n", "--ESR", "5m", "--ESL", "500p", "--band", "1G:1k"])
    assert r.exit_code == 2 and "zfit: error:" in r.output and "band" in r.output
    with pytest.raises(ZfitInputError, match="needs --ESL"):
        plan_measurement("capacitor", {"C": 1e-7, "ESR": 1e-3})


def test_plan_json_validates_against_its_schema(plans):
    # The schema shipped in zfit/schemas/plan.schema.json (JSON Schema 2020-12,
    # checked by the jsonschema library).
    jsonschema = pytest.importorskip("jsonschema")
    from pathlib import Path

    import zfit

    schema = json.loads((Path(zfit.__file__).parent / "schemas" / "plan.schema.json").read_text())
    jsonschema.Draft202012Validator.check_schema(schema)
    for plan in plans.values():
        doc = json.loads(json.dumps(plan.to_dict()))
        jsonschema.Draft202012Validator(schema).validate(doc)
    bad = json.loads(json.dumps(plans["capacitor"].to_dict()))
    bad["connections"]["shunt-thru"]["parameters"]["ESR"]["resolved"] = "yes"
    with pytest.raises(jsonschema.ValidationError):
        jsonschema.Draft202012Validator(schema).validate(bad)


@pytest.mark.parametrize("args, message", [
    (["--band", "1G:1k"], "band must be two frequencies low:high with 0 < low < high, got 1 GHz:1 kHz"),
    (["--points", "100000000"], "a plan takes at most 100001 points (more than any analyser sweeps), got 100000000"),
    (["--reference", "0"], "the reference impedance must be a positive number of ohm, got 0"),
])
def test_bad_plan_options_are_refused_before_any_work(args, message):
    r = CliRunner().invoke(app, ["plan", "inductor", "--L", "10u", "--C_p", "5p", "--R_s", "50m", *args])
    assert r.exit_code == 2 and "Traceback" not in r.output
    assert r.stderr == f"zfit: error: {message}\n"


def test_plan_text_writes_values_as_the_other_commands_do():
    # Issue 7 check part: C = 100n, ESL = 500p resonates at 1/(2 pi sqrt(L C)) = 22.51 MHz (Thomson's formula);
    # "22.51 MHz" and "±" as in zfit identify (one formatter, zfit._units), not "22.51MHz" and "+-".
    r = CliRunner().invoke(app, ["plan", "capacitor", "--C", "100n", "--ESR", "5m", "--ESL", "500p", "--points", "41"])
    assert r.exit_code == 0, r.output
    assert "(SRF 22.51 MHz)" in r.output and "band 1 kHz to 1 GHz, 41 log-spaced points" in r.output
    assert "+-" not in r.output and "±" in r.output


NA = ("reflection", "shunt-thru", "series-thru")


@pytest.mark.parametrize("model, params, band, expected", [
    # An inductor without core loss: what is hard is R_s = 50 milliohm, seen at the bottom
    # of the band where |Z| = |R_s + j w L| is 0.09-0.4 ohm (w L = 63 milliohm at 1 kHz).
    ("inductor", {"L": 10e-6, "R_s": 50e-3, "C_p": 5e-12}, (1e3, 1e9), "shunt-thru"),
    # With 50 kohm of core loss the hard one is R_p, seen at the resonance peak (|Z| ~ R_p).
    ("inductor", {"L": 10e-6, "R_s": 50e-3, "C_p": 6.33e-12, "R_p": 50e3}, (1e3, 1e9), "series-thru"),
    # A 47 ohm + 1 nF snubber: its impedance sits near 50 ohm above 3.4 MHz (1/(2 pi 47 ohm 1 nF)).
    ("capacitor", {"C": 1e-9, "ESR": 47.0, "ESL": 1e-9}, (1e5, 1e9), "reflection"),
])
def test_network_analyser_choice_follows_the_impedance_where_the_part_is_determined(model, params, band, expected):
    # Common practice (docs/reading.md, "Each connection is good where Z is comparable
    # to its Z0 scale"): shunt-thru for impedances well below Z0, series-thru for those
    # well above, reflection near Z0.  The planner's choice among the network-analyser
    # connections agrees, and its reason says where the deciding parameter is determined.
    from zfit.identification._plan import impedance_range

    plan = plan_measurement(model, params, band, points=101, connections=NA)
    assert plan.recommended == expected
    best = plan.connection(expected)
    key = plan.reason.split("it wins on ")[1].split(" ")[0]
    lo, hi = best.determined_ohm[key]
    assert impedance_range(math.sqrt(lo * hi), 50.0) == expected, (key, lo, hi)
    assert f"{expected}'s range" in plan.reason


def test_impedance_ranges_are_a_decade_from_z0():
    # Common practice: a decade from Z0 (5 ohm and 500 ohm for 50 ohm ports).
    from zfit.identification._plan import impedance_range

    assert [impedance_range(z, 50.0) for z in (4.9, 5.1, 50.0, 499.0, 501.0)] == [
        "shunt-thru", "reflection", "reflection", "reflection", "series-thru"]


def test_option_aliases_in_any_case_and_the_usage_line():
    # --c-p, --r-s, --esr as people type them, the parameter keys still work (issue 15).
    r = CliRunner().invoke(app, ["plan", "inductor", "--l", "10u", "--c-p", "6.33p", "--r-s", "50m", "--points", "41",
                                 "--band", "10k:100M"])
    assert r.exit_code == 0, r.output
    assert "L = 10 µH" in r.output and "C_p = 6.33 pF" in r.output and "R_s = 50 mΩ" in r.output
    r = CliRunner().invoke(app, ["plan", "capacitor", "--c", "100n", "--esr", "5m", "--Esl", "500p", "--R-LEAK", "1G",
                                 "--points", "41"])
    assert r.exit_code == 0, r.output
    assert "ESR = 5 mΩ" in r.output and "R_leak = 1 GΩ" in r.output
    # The usage line names the required options; no typer placeholders in any help.
    r = CliRunner().invoke(app, ["plan", "inductor", "-h"])
    assert "plan inductor --L HENRY --C_p FARAD --R_s OHM [OPTIONS]" in r.output
    for cmd in (["info"], ["identify"], ["step"], ["batch"], ["plan", "capacitor"], ["plan", "inductor"], ["demo"]):
        out = CliRunner().invoke(app, [*cmd, "--help"]).output
        assert not re.search(r"<[a-z\[\]]+>|\{[a-z]+\}", out), (cmd, out)

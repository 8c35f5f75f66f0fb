"""Identification of few-point tables (LCR meters at their standard frequencies; issue 11).

The tables come from tests/instrument_files.py: truths from the circuit
formulas written out there, errors from relative noise on |Z| drawn here and
the digits an LCR meter prints, not from zfit's noise model or circuits.
"""

import json
from pathlib import Path

import numpy as np
import pytest
from typer.testing import CliRunner

import instrument_files as inst
from zfit import identify, read_sweep
from zfit._errors import MeasurementWarning
from zfit.cli._app import app

# The standard test frequencies of LCR meters (common practice).
METER_HZ = np.array([100.0, 120.0, 1e3, 10e3, 100e3])
SCHEMA = Path(__file__).resolve().parent.parent / "zfit" / "schemas" / "identify.schema.json"


def _meter_table(tmp_path, rng, f, z, rel=1e-3, kind="ls_rs"):
    """A table of `z` at `f` with relative noise `rel` on |Z| (complex-circular), rounded to 5 digits."""
    zm = z + inst.circular_noise(rng, rel * np.abs(z))
    if kind == "ls_rs":
        return inst.write_ls_rs_table(tmp_path / "meter.csv", f, zm, digits=5)
    return inst.write_zphase_table(tmp_path / "meter.csv", f, zm, digits=5)


def _identified(path):
    with pytest.warns(MeasurementWarning) as got:
        result = identify(read_sweep(path))
    return result, [str(w.message) for w in got]


def test_two_points_give_series_l_and_r_with_the_series_equivalent_at_each(tmp_path, rng):
    # 47 uH, 0.12 ohm, 20 pF: SRF = 1/(2 pi sqrt(LC)) = 5.2 MHz, far above 10 kHz.
    f = METER_HZ[[2, 3]]
    result, warned = _identified(_meter_table(tmp_path, rng, f, inst.inductor_z(f, 47e-6, 0.12, 20e-12)))
    p = result.parameters
    assert result.model == "inductor" and result.topology == "series R_s-L"
    assert p["L"].value == pytest.approx(47e-6, rel=0.02)  # the 2 % on L
    assert p["R_s"].value == pytest.approx(0.12, rel=0.15)  # the 15 % on R_s
    assert p["L"].std > 0 and p["R_s"].std > 0
    assert not p["C_p"].resolved and p["C_p"].std is None
    assert result.srf.value_hz is None and result.srf.where == "above-band"
    assert result.srf.bound_hz == pytest.approx(10e3, rel=1e-12)  # the top of the band: a lower bound only
    assert any("2 points: the series equivalent at each point, at 1 kHz: L_s = " in w for w in warned)
    assert any("do not resolve C_p" in w and "SRF > 10 kHz" in w for w in warned)
    assert any("too few for vector fitting" in w for w in warned)


def test_two_points_of_a_capacitor_give_c_and_esr(tmp_path, rng):
    # 4.7 uF, ESR 50 mohm, ESL 2 nH: SRF 1.64 MHz, above the 10 kHz top.
    f = METER_HZ[[2, 3]]
    z = inst.capacitor_z(f, 4.7e-6, 0.05, 2e-9)
    result, warned = _identified(_meter_table(tmp_path, rng, f, z, kind="zphase"))
    p = result.parameters
    assert result.model == "capacitor" and result.topology == "series C-ESR"
    assert p["C"].value == pytest.approx(4.7e-6, rel=0.02)  # the 2 % on C
    assert p["ESR"].value == pytest.approx(0.05, rel=0.15)  # the 15 % on ESR
    assert any("C_s = " in w for w in warned) and any("do not resolve ESL" in w for w in warned)


@pytest.mark.parametrize("seed", range(5))
def test_five_meter_points_give_l_and_r_within_tolerance(tmp_path, seed):
    rng = np.random.default_rng(seed)
    z = inst.inductor_z(METER_HZ, 470e-6, 1.5, 15e-12)  # SRF 1.9 MHz
    result, warned = _identified(_meter_table(tmp_path, rng, METER_HZ, z, rel=3e-3))
    p = result.parameters
    assert p["L"].value == pytest.approx(470e-6, rel=0.02)  # the 2 %
    assert p["R_s"].value == pytest.approx(1.5, rel=0.15)  # the 15 %
    # Truth within 3 standard uncertainties (Gaussian: 99.7 %; 5 seeds).
    assert abs(p["L"].value - 470e-6) < 3 * p["L"].std
    assert result.srf.value_hz is None or result.srf.where == "above-band"
    assert any("SRF > 100 kHz" in w for w in warned) or result.parameters["C_p"].resolved


def test_nine_points_reaching_the_resonance_resolve_c_p(tmp_path, rng):
    # 100 uH, 2 ohm, 50 pF: SRF 2.25 MHz; nine points up to 1.5 MHz see C_p raise the apparent L by 2.2x.
    f = np.array([1e3, 10e3, 50e3, 100e3, 200e3, 500e3, 800e3, 1.2e6, 1.5e6])
    z = inst.inductor_z(f, 100e-6, 2.0, 50e-12)
    result, _ = _identified(_meter_table(tmp_path, rng, f, z, rel=1e-3, kind="zphase"))
    p = result.parameters
    assert result.topology == "series R_s-L with parallel C_p" and p["C_p"].resolved
    assert p["L"].value == pytest.approx(100e-6, rel=0.02)  # the 2 %
    assert p["C_p"].value == pytest.approx(50e-12, rel=0.05)  # from memory: 3 mm of rounding at 0.1 %
    srf = 1 / (2 * np.pi * np.sqrt(100e-6 * 50e-12)) * np.sqrt(1 - 2.0**2 * 50e-12 / 100e-6)  # X = 0 of the formula
    assert result.srf.value_hz == pytest.approx(srf, rel=0.02)  # extrapolated beyond 1.5 MHz: 2 %, not 0.5 %


@pytest.mark.parametrize("n", [2, 5])
def test_zfit_identify_on_a_meter_table_exits_0_with_valid_json(tmp_path, rng, n):
    jsonschema = pytest.importorskip("jsonschema")
    f = METER_HZ[:n] if n == 5 else METER_HZ[[2, 4]]
    path = _meter_table(tmp_path, rng, f, inst.inductor_z(f, 47e-6, 0.12, 20e-12))
    out = tmp_path / "out.json"
    r = CliRunner().invoke(app, ["identify", str(path), "--json", str(out), "--netlist", str(tmp_path / "p.cir")])
    assert r.exit_code == 0, r.output
    doc = json.loads(out.read_text())
    jsonschema.validate(doc, json.loads(SCHEMA.read_text()))
    assert doc["topology"] == "series R_s-L" and doc["fit"]["points"] == n
    assert doc["parameters"]["L"]["value"] == pytest.approx(47e-6, rel=0.02)  # the 2 %
    assert doc["noise"]["source"] == "default" and doc["noise"]["on"] == "Z"  # too few points to estimate

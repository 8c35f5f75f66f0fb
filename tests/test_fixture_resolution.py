"""Resolution limits and the shunt-thru ground-loop check.

References: the weighted mean and its standard error (J. R. Taylor, *An
Introduction to Error Analysis*, 2nd ed., 1997, ch. 7: sigma = 1/sqrt(sum w)),
and ngspice (batch mode, tests/ngspice.py) for a shunt-thru measurement with
a cable-shield ground loop.
"""

import math
import warnings

import numpy as np
import pytest

from ngspice import run_ac
from zfit.fit._simulate import simulated_sweep
from zfit.fit._circuits import circuit_impedance
from zfit.data._connection import InstrumentNoise, impedance_from_s, s_from_impedance, sigma_z_from_s
from zfit._errors import MeasurementWarning
from zfit.identification._pipeline import identify
from zfit.fit._fisher import (
    fisher_uncertainties, is_resolved, limits_for, resolution_entries, resolution_limits,
    unresolved_text,
)
from zfit.data._sweep import Sweep
from zfit.identification._diagnostics import ground_loop_warning

NOISE = InstrumentNoise(1e-3, 1e-5)
CAP = {"C": 100e-9, "ESR": 5e-3, "ESL": 0.5e-9}


def _sigma(params, f, connection):
    z = circuit_impedance("capacitor", params, f)
    return sigma_z_from_s(s_from_impedance(z, connection), connection, 50.0, NOISE)


@pytest.mark.parametrize("connection", ["reflection", "series-thru", "shunt-thru"])
def test_esr_limit_is_three_standard_errors_of_a_weighted_mean(connection):
    # In Z = ESR + j(w ESL - 1/(w C)) the ESR moves only Re Z and C, ESL
    # only Im Z: the Fisher information is block-diagonal and std(ESR) is
    # the standard error of the weighted mean of Re Z, 1/sqrt(sum 2/sigma^2)
    # (Re Z carries sigma^2/2).  The limit X solves X = 3 std(ESR; ESR = X),
    # sigma following the noise model; solved here by fixed-point iteration.
    f = np.geomspace(1e3, 1e9, 201)
    x = 5e-3
    for _ in range(60):
        x = 3.0 / math.sqrt(np.sum(2.0 / _sigma(dict(CAP, ESR=x), f, connection) ** 2))
    std = fisher_uncertainties("capacitor", CAP, f, _sigma(CAP, f, connection))["ESR"]
    assert std == pytest.approx(1.0 / math.sqrt(np.sum(2.0 / _sigma(CAP, f, connection) ** 2)), rel=1e-6)
    lim = limits_for("capacitor", CAP, f, _sigma(CAP, f, connection), connection, 50.0, NOISE)
    assert lim["ESR"] == pytest.approx(x, rel=2e-3)


def test_resolution_limits_of_an_identification_and_the_resolved_flag(rng):
    # 5 milliohm ESR: far below what series-thru resolves (its S21 ~ 1 hides
    # it), well above what shunt-thru does.
    f = np.geomspace(1e3, 1e9, 201)
    out = {}
    for conn in ("series-thru", "shunt-thru"):
        sw = simulated_sweep("capacitor", CAP, conn, f, NOISE, 50.0, rng=rng)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", MeasurementWarning)
            ident = identify(sw, model="capacitor")
        out[conn] = (ident, resolution_limits(sw, ident))
        if conn == "series-thru":
            sw_series = sw
    ident, lim = out["series-thru"]
    assert lim["ESR"] > 2 * 5e-3
    assert not is_resolved("ESR", 5e-3, lim["ESR"])
    entries = resolution_entries(sw_series, out["series-thru"][0])
    assert entries["ESR"] == {"resolved": False, "resolution_limit": lim["ESR"]}
    assert entries["C"]["resolved"] is True
    assert unresolved_text("ESR", lim["ESR"], "ohm").startswith("below resolution, < ")
    assert unresolved_text("R_leak", 2e6, "ohm") == "not resolved, > 2 MΩ"
    ident, lim = out["shunt-thru"]
    assert lim["ESR"] < 5e-3 / 10
    assert is_resolved("ESR", ident.parameters["ESR"].value, lim["ESR"])
    # Consistency with the identification's own uncertainty: at the estimate,
    # 3 std is of the order of the limit (the limit moves sigma with ESR).
    assert lim["ESR"] == pytest.approx(3 * ident.parameters["ESR"].std, rel=0.3)


def test_parallel_losses_have_an_upper_limit():
    # R_leak vanishes as it grows: a leakage above the limit is an open.
    f = np.geomspace(100, 1e7, 121)
    params = dict(CAP, R_leak=1e6)
    table = InstrumentNoise(1e-3, 1e-3)
    sig = table.sigma(circuit_impedance("capacitor", params, f))
    lim = limits_for("capacitor", params, f, sig, "impedance", None, table)["R_leak"]
    # At the limit the relative uncertainty is 1/3, by definition.
    p = dict(params, R_leak=lim)
    rel = fisher_uncertainties("capacitor", p, f, table.sigma(circuit_impedance("capacitor", p, f)))["R_leak"] / lim
    assert rel == pytest.approx(1 / 3, rel=1e-3)
    assert is_resolved("R_leak", 0.5 * lim, lim) and not is_resolved("R_leak", 2 * lim, lim)


def _shunt_thru_deck(dut, rsh):
    # Port 1: 1 V behind 50 ohm; port 2: a 50-ohm receiver; both on the
    # analyser's chassis (node 0).  Each cable is its centre conductor and
    # shield as coupled inductors (k = 0.9999, dotted ends at the analyser)
    # with the shield's resistance; the part sits from the line node a to the
    # board ground g, where both shields meet: the ground loop.  E1 copies
    # the receiver's voltage to n1, the node the harness reads; S21 = 2 V(n1).
    return f"""Vs src 0 AC 1
Rsrc src p1 50
Lc1 p1 a 0.5u
Ls1 0 s1 0.5u
Rs1 s1 g {rsh}
K1 Lc1 Ls1 0.9999
Lc2 p2 a 0.5u
Ls2 0 s2 0.5u
Rs2 s2 g {rsh}
K2 Lc2 Ls2 0.9999
Rrx p2 0 50
{dut}
E1 n1 0 p2 0 1
"""


def _measured(dut, rsh, rng):
    f, v = run_ac(_shunt_thru_deck(dut, rsh), 100, 1e7, 20)
    s = 2 * v
    s = s + NOISE.sigma(s) * (rng.standard_normal(f.size) + 1j * rng.standard_normal(f.size)) / math.sqrt(2)
    sw = Sweep(f, impedance_from_s(s, "shunt-thru"), sigma_z_from_s(s, "shunt-thru", 50.0, NOISE),
               connection="shunt-thru", reference_ohm=50.0, s_param=s, noise=NOISE, source="sim.s2p")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", MeasurementWarning)
        return sw, identify(sw, model="capacitor")


BULK = "Resr a d 5m\nLesl d e 2n\nCbulk e g 100u"  # 100 uF, 5 milliohm, 2 nH: SRF 356 kHz


def test_ground_loop_floor_is_flagged(rng):
    # 20 milliohm per shield: below the loop's corner (R/L, a few kHz) the
    # analyser sees the part plus the two shields in parallel, 10 milliohm.
    sw, ident = _measured(BULK, 20e-3, rng)
    text = ground_loop_warning(sw, ident)
    assert text is not None and "ground-loop" in text and "not ESR" in text
    floor = float(text.split("flat floor ")[1].split(" mΩ")[0]) * 1e-3
    assert floor == pytest.approx(10e-3, rel=0.15)


def test_no_ground_loop_no_flag_and_dielectric_loss_is_not_a_floor(rng):
    sw, ident = _measured(BULK, 1e-9, rng)
    assert ground_loop_warning(sw, ident) is None
    # Dielectric loss, D = 2 % (Re Z = D / (w C), rising as 1/f): modelled as
    # a parallel R that scales with 1/f is not available in SPICE AC, so the
    # excess is added to the simulated impedance directly.
    f = sw.f_hz
    z = circuit_impedance("capacitor", {"C": 100e-6, "ESR": 5e-3, "ESL": 2e-9}, f) + 0.02 / (2 * np.pi * f * 100e-6)
    s = s_from_impedance(z, "shunt-thru")
    s = s + NOISE.sigma(s) * (rng.standard_normal(f.size) + 1j * rng.standard_normal(f.size)) / math.sqrt(2)
    sw2 = Sweep(f, impedance_from_s(s, "shunt-thru"), sigma_z_from_s(s, "shunt-thru", 50.0, NOISE),
                connection="shunt-thru", reference_ohm=50.0, s_param=s, noise=NOISE)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", MeasurementWarning)
        ident2 = identify(sw2, model="capacitor")
    assert ground_loop_warning(sw2, ident2) is None


def test_ground_loop_check_applies_to_shunt_thru_capacitors_only(rng):
    sw, ident = _measured(BULK, 20e-3, rng)
    import dataclasses

    assert ground_loop_warning(dataclasses.replace(sw, connection="series-thru"), ident) is None

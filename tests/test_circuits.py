"""Equivalent circuits: impedance against ngspice, analytic Jacobians, SRF, Q and D
against handbook formulas, initial guesses."""

import math

import numpy as np
import pytest

from ngspice import run_ac
from zfit.fit._circuits import (
    CapacitorCircuit,
    InductorCircuit,
    circuit_for,
    circuit_impedance,
    sharp_resonance,
)
from zfit._errors import ZfitInputError

TWO_PI = 2 * math.pi

CASES = [
    (InductorCircuit(False), {"L": 10e-6, "R_s": 0.5, "C_p": 5e-12}, "L1 n1 a 10e-6\nR1 a 0 0.5\nC1 n1 0 5e-12"),
    (InductorCircuit(True), {"L": 10e-6, "R_s": 0.5, "C_p": 5e-12, "R_p": 20e3},
     "L1 n1 a 10e-6\nR1 a 0 0.5\nC1 n1 0 5e-12\nR2 n1 0 20e3"),
    (CapacitorCircuit(False), {"C": 100e-9, "ESR": 0.02, "ESL": 1e-9}, "R1 n1 a 0.02\nL1 a b 1e-9\nC1 b 0 100e-9"),
    (CapacitorCircuit(True), {"C": 100e-9, "ESR": 0.02, "ESL": 1e-9, "R_leak": 1e4},
     "R1 n1 a 0.02\nL1 a b 1e-9\nC1 b 0 100e-9\nR2 b 0 1e4"),
]


@pytest.mark.ngspice
@pytest.mark.parametrize("circuit,params,netlist", CASES, ids=[c[0].topology for c in CASES])
def test_impedance_agrees_with_ngspice(circuit, params, netlist):
    # Reference: ngspice AC analysis of the same elements (12 significant digits written).
    f, z_ref = run_ac(netlist, 1e3, 1e9, 20)
    z = circuit_impedance(circuit.family, params, f)
    assert np.max(np.abs(z / z_ref - 1)) < 1e-8


@pytest.mark.parametrize("circuit,params,netlist", CASES, ids=[c[0].topology for c in CASES])
def test_log_jacobian_matches_central_differences(circuit, params, netlist):
    p = circuit.vector(params)
    f = np.geomspace(1e3, 1e9, 200)
    jac = circuit.log_jacobian(p, f)
    h = 1e-6
    for k in range(p.size):
        up, dn = p.copy(), p.copy()
        up[k] *= math.exp(h)
        dn[k] *= math.exp(-h)
        num = (circuit.impedance(up, f) - circuit.impedance(dn, f)) / (2 * h)
        # Central differences are good to O(h^2) relative to the column's scale.
        assert np.max(np.abs(num - jac[:, k])) <= 1e-6 * np.max(np.abs(jac[:, k]))


def test_series_rlc_resonance_formula_worked_example():
    # f0 = 1 / (2 pi sqrt(L C)) for a series R-L-C (P. Horowitz and W. Hill, The Art of
    # Electronics, 3rd ed., 2015, section 1.7.14, from memory).  Worked example by hand:
    # L = 10 uH, C = 100 pF: sqrt(LC) = 3.16228e-8 s, f0 = 5.03292 MHz.
    cap = CapacitorCircuit()
    p = cap.vector({"C": 100e-12, "ESR": 0.3, "ESL": 10e-6})
    f0 = cap.srf_hz(p)
    assert f0 == pytest.approx(5.03292e6, rel=1e-5)
    assert f0 == pytest.approx(1 / (TWO_PI * math.sqrt(10e-6 * 100e-12)), rel=1e-12)
    # The reactance is zero there and changes sign across it.
    z = cap.impedance(p, np.array([f0 * 0.999, f0, f0 * 1.001]))
    assert abs(z[1].imag) < 1e-9 * abs(z[1]) and z[0].imag < 0 < z[2].imag


def test_inductor_srf_is_where_the_reactance_vanishes():
    # Z = (R + jwL) / (1 - w^2 L C + jwRC); Im Z = 0 at w^2 = 1/(LC) - (R/L)^2 (from the
    # numerator of Im Z: wL(1 - w^2 LC) - w R^2 C = 0), which for a lossless coil is the
    # parallel-resonance formula 1/(2 pi sqrt(L C_p)).
    ind = InductorCircuit()
    for R in (0.0 + 1e-12, 5.0, 500.0):
        p = ind.vector({"L": 10e-6, "R_s": R, "C_p": 5e-12})
        f0 = ind.srf_hz(p)
        assert f0 == pytest.approx(math.sqrt(1 / (10e-6 * 5e-12) - (R / 10e-6) ** 2) / TWO_PI, rel=1e-12)
        z = ind.impedance(p, np.array([f0 * (1 - 1e-4), f0 * (1 + 1e-4)]))
        assert z[0].imag > 0 > z[1].imag
    # Heavily damped: the reactance never crosses zero.
    assert ind.srf_hz(ind.vector({"L": 10e-6, "R_s": 2e3, "C_p": 5e-12})) is None


def test_quality_factor_formula_worked_example():
    # Q = omega L / R (F. E. Terman, Radio Engineers' Handbook, 1943, section 2, from memory);
    # L = 10 uH, R = 0.5 ohm at 1 MHz: Q = 2 pi 1e6 1e-5 / 0.5 = 125.66.
    ind = InductorCircuit()
    p = ind.vector({"L": 10e-6, "R_s": 0.5, "C_p": 5e-12})
    assert ind.model_q(p, np.array([1e6]))[0] == pytest.approx(125.664, rel=1e-5)
    # Far below the SRF the part's |X|/R equals it; near resonance C_p makes them differ.
    z = ind.impedance(p, np.array([1e5, 0.7 * ind.srf_hz(p)]))
    q_part = np.abs(z.imag) / z.real
    q_model = ind.model_q(p, np.array([1e5, 0.7 * ind.srf_hz(p)]))
    assert q_part[0] == pytest.approx(q_model[0], rel=1e-3)
    assert abs(q_part[1] / q_model[1] - 1) > 0.3


def test_dissipation_factor_formula_worked_example():
    # D = tan(delta) = omega C ESR for a capacitor with series loss (IEC 60384-1, tangent of
    # loss angle, from memory); C = 100 nF, ESR = 20 mohm at 10 kHz: D = 1.2566e-4.
    cap = CapacitorCircuit()
    p = cap.vector({"C": 100e-9, "ESR": 0.02, "ESL": 1e-9})
    assert cap.model_d(p, np.array([1e4]))[0] == pytest.approx(1.25664e-4, rel=1e-5)
    # The part's R/|X| equals it well below the SRF (ESL negligible there).
    z = cap.impedance(p, np.array([1e4]))[0]
    assert z.real / abs(z.imag) == pytest.approx(1.25664e-4, rel=1e-4)
    # With leakage the parallel loss adds 1/(omega C R_leak): 1/(2 pi 1e4 1e-7 1e4) = 1.5915e-2.
    leaky = CapacitorCircuit(True)
    q = leaky.vector({"C": 100e-9, "ESR": 0.02, "ESL": 1e-9, "R_leak": 1e4})
    assert leaky.model_d(q, np.array([1e4]))[0] == pytest.approx(1.25664e-4 + 1.59155e-2, rel=1e-4)


def test_topology_follows_the_keys_given():
    assert circuit_for("inductor", {"L": 1e-6, "R_s": 1, "C_p": 1e-12}).topology == "series R_s-L with parallel C_p"
    assert circuit_for("inductor", {"L": 1e-6, "R_s": 1, "C_p": 1e-12, "R_p": 1e4}).topology == (
        "series R_s-L with parallel C_p and R_p")
    assert circuit_for("inductor", {"L": 1e-6, "R_s": 1, "C_p": 1e-12, "R_p": None}).optional is None
    assert circuit_for("capacitor", {"C": 1e-6, "ESR": 1, "ESL": 1e-9, "R_leak": math.inf}).optional is None
    assert circuit_for("capacitor", {"C": 1e-6, "ESR": 1, "ESL": 1e-9, "R_leak": 1e6}).topology == (
        "series ESR-ESL with C shunted by R_leak")
    # A huge R_p and R_leak leave the impedance of the base circuit (to 1e-9 here).
    f = np.geomspace(1e3, 1e9, 50)
    a = circuit_impedance("inductor", {"L": 1e-6, "R_s": 1, "C_p": 1e-12}, f)
    b = circuit_impedance("inductor", {"L": 1e-6, "R_s": 1, "C_p": 1e-12, "R_p": 1e15}, f)
    assert np.max(np.abs(b / a - 1)) < 1e-9


def test_bad_parameters_are_refused():
    with pytest.raises(ZfitInputError, match="missing"):
        circuit_impedance("inductor", {"L": 1e-6, "C_p": 1e-12}, [1e6])
    with pytest.raises(ZfitInputError, match="positive"):
        circuit_impedance("capacitor", {"C": -1e-6, "ESR": 1, "ESL": 1e-9}, [1e6])
    with pytest.raises(ZfitInputError, match="unknown model"):
        circuit_impedance("resistor", {"R": 1}, [1e6])


@pytest.mark.parametrize("circuit,params,netlist", CASES, ids=[c[0].topology for c in CASES])
def test_guesses_from_data_and_rational_model_land_near_the_truth(circuit, params, netlist):
    from zfit.fit._vectfit import fit_impedance

    f = np.geomspace(1e4, 3e8, 400)
    p = circuit.vector(params)
    z = circuit.impedance(p, f)
    sigma = 1e-3 * np.abs(z)
    g = circuit.guess_from_data(f, z, sigma)
    # Asymptote guesses: the reactive elements within 10 %, losses within a factor 3.
    for k, key in enumerate(circuit.keys):
        tol = 0.1 if key in ("L", "C", "C_p", "ESL") else 2.0
        assert abs(g[k] / p[k] - 1) <= tol, (key, g[k], p[k])
    rm = fit_impedance(f, z, sigma, kind=circuit.family)
    gr = circuit.guess_from_rational(rm, f)
    assert gr is not None
    for k, key in enumerate(circuit.keys[:3]):
        # From the pole pair / origin pole: the three main elements within 5 %.
        assert abs(gr[k] / p[k] - 1) <= 0.05, (key, gr[k], p[k])


def test_sharp_resonance_is_recognised():
    f = np.geomspace(1e6, 1e8, 401)
    ind = InductorCircuit()
    sharp = ind.impedance(ind.vector({"L": 10e-6, "R_s": 0.05, "C_p": 5e-12}), f)  # Q ~ 28000
    broad = ind.impedance(ind.vector({"L": 10e-6, "R_s": 200.0, "C_p": 5e-12}), f)  # Q ~ 7
    assert sharp_resonance("inductor", sharp) and not sharp_resonance("inductor", broad)

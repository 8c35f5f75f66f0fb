"""Netlists: SPICE numbers, equivalent circuits and the Foster synthesis of a
rational model, each checked by running ngspice on the written text."""

import math
import re

import numpy as np
import pytest
import scipy.signal

from ngspice import run_ac
from zfit.fit._realisation import SynthesisError, foster_branches, rational_elements
from zfit.fit._realisation import network_impedance as netlist_impedance
from zfit.outputs._netlist import (
    circuit_elements,
    circuit_netlist,
    rational_netlist,
    spice_value,
    subckt_name,
)


def _ngspice_z(netlist: str, f_start: float, f_stop: float, ppd: int = 20):
    name = re.search(r"^\.subckt (\S+) a b$", netlist, re.M).group(1)
    return run_ac(netlist + f"X1 n1 0 {name}\n", f_start, f_stop, ppd)


def _check_portable(netlist: str):
    # Only full-line comments, .subckt/.ends and R/L/C lines with three fields.
    for line in netlist.splitlines():
        if line.startswith("*") or line.startswith(".subckt ") or line.startswith(".ends"):
            continue
        fields = line.split()
        assert fields[0][0] in "RLC" and len(fields) == 4, line
        assert re.fullmatch(r"[0-9.]+(e-?[0-9]+)?(f|p|n|u|m|k|meg|g|t)?", fields[3]), line


@pytest.mark.parametrize(
    "value,text",
    [
        (1.5e6, "1.5meg"),  # SPICE: M is milli, mega is MEG (SPICE3 manual, common practice)
        (25e-3, "25m"),
        (4.7e-9, "4.7n"),
        (2.2e3, "2.2k"),
        (1e-15, "1f"),
        (3.3e-12, "3.3p"),
        (10e-6, "10u"),
        (47.0, "47"),
        (1e9, "1g"),
        (1.2e12, "1.2t"),
        (999.99999999999, "1k"),
        (1e-18, "1e-18"),
        (2e15, "2e15"),
        (0.0, "0"),
    ],
)
def test_spice_value_text(value, text):
    assert spice_value(value) == text


@pytest.mark.ngspice
@pytest.mark.parametrize("value", [1.5e6, 0.0253, 47.3, 2.2e3, 1.0e9, 12.3456789e-3, 3.14159265e12])
def test_ngspice_reads_back_resistor_values_exactly(value):
    # A resistor driven by 1 A AC reads V = R: ngspice must parse the suffix
    # as meant (meg, not milli). 1e-11 relative is ngspice's 12-digit output.
    f, z = run_ac(f"R1 n1 0 {spice_value(value)}", 1e3, 1e4, 1)
    np.testing.assert_allclose(z.real, value, rtol=1e-11)


@pytest.mark.ngspice
@pytest.mark.parametrize("c", [1e-15, 4.7e-12, 100e-9, 1.5e-3])
def test_ngspice_reads_back_capacitor_values(c):
    # Z = 1/(j w C) of an ideal capacitor (circuit theory).
    f, z = run_ac(f"C1 n1 0 {spice_value(c)}\nRdc n1 0 1e30", 1e3, 1e4, 1)
    np.testing.assert_allclose(z, 1 / (2j * np.pi * f * c), rtol=1e-10)


def test_subckt_name_is_spice_safe():
    assert subckt_name("demo_sweeps/coil-10uH.s2p") == "demo_sweeps_coil_10uH_s2p"
    assert subckt_name("100nF cap") == "z100nF_cap"


# Equivalent circuits of the interface contract (zfit/_circuits.py):
#   inductor: Z = (R_s + sL) || 1/(sC_p) [|| R_p]
#   capacitor: Z = ESR + sESL + (1/(sC) [|| R_leak])
def _inductor_z(f, L, R_s, C_p, R_p=None):
    s = 2j * np.pi * f
    y = 1 / (R_s + s * L) + s * C_p + (0 if R_p is None else 1 / R_p)
    return 1 / y


def _capacitor_z(f, C, ESR, ESL, R_leak=None):
    s = 2j * np.pi * f
    zc = 1 / (s * C) if R_leak is None else 1 / (s * C + 1 / R_leak)
    return ESR + s * ESL + zc


CIRCUITS = [
    ("inductor", {"L": 10.2e-6, "R_s": 0.083, "C_p": 4.1e-12}, 1e3, 1e9),
    ("inductor", {"L": 2.2e-3, "R_s": 1.7, "C_p": 21e-12, "R_p": 180e3}, 100, 1e8),
    ("capacitor", {"C": 100e-9, "ESR": 0.012, "ESL": 0.9e-9}, 1e3, 1e9),
    ("capacitor", {"C": 470e-6, "ESR": 0.045, "ESL": 6e-9, "R_leak": 2.0e6}, 0.1, 1e8),
]


@pytest.mark.ngspice
@pytest.mark.parametrize("model,params,f0,f1", CIRCUITS)
def test_circuit_netlist_matches_model_in_ngspice(model, params, f0, f1):
    text = circuit_netlist(model, params, name="dut", header={"source": "x.s2p", "band of validity": "1k..1G Hz"})
    _check_portable(text)
    assert "* source: x.s2p" in text
    f, z = _ngspice_z(text, f0, f1)
    ref = _inductor_z(f, **params) if model == "inductor" else _capacitor_z(f, **params)
    # Issue 5 asks for 0.1 %; the netlist is exact to 10 digits and ngspice's
    # complex LU keeps ~1e-5 at 0.1 Hz across 470 uF / 6 nH, so 1e-4 here.
    np.testing.assert_allclose(z, ref, rtol=1e-4)
    # Nodal analysis of a series chain loses a few digits to conditioning.
    np.testing.assert_allclose(netlist_impedance(circuit_elements(model, params), f), ref, rtol=1e-6)


@pytest.mark.ngspice
@pytest.mark.parametrize("model,params,f0,f1", CIRCUITS)
def test_circuit_netlist_matches_zfit_circuit_impedance(model, params, f0, f1):
    circuits = pytest.importorskip("zfit.fit._circuits")
    text = circuit_netlist(model, params, name="dut")
    f, z = _ngspice_z(text, f0, f1, 10)
    np.testing.assert_allclose(z, circuits.circuit_impedance(model, params, f), rtol=1e-3)


def test_circuit_netlist_rejects_negative_value():
    with pytest.raises(ValueError, match="R_s"):
        circuit_netlist("inductor", {"L": 1e-6, "R_s": -0.1, "C_p": 1e-12})


# A reference impedance built from known elements, decomposed into partial
# fractions by scipy.signal.residue (reference library), synthesised, and
# simulated: ngspice must reproduce scipy.signal.freqs of the same rational
# function.
W0 = 2 * np.pi * 1e6  # frequency scaling keeps the polynomials well conditioned


def _poly_parallel_rc(R, C):
    # R/(1+sRC) in s_n = s/W0: num R, den 1 + s_n W0 R C
    return np.array([R]), np.array([W0 * R * C, 1.0])


def _poly_resonant(C, Rp, L, Rs):
    # 1/(sC + 1/Rp + 1/(sL+Rs)) = (sL+Rs) / ((sC+1/Rp)(sL+Rs) + 1)
    num = np.array([W0 * L, Rs])
    den = np.polyadd(np.polymul([W0 * C, 1 / Rp], [W0 * L, Rs]), [1.0])
    return num, den


def _sum(terms):
    num, den = np.array([0.0]), np.array([1.0])
    for n, d in terms:
        num, den = np.polyadd(np.polymul(num, d), np.polymul(n, den)), np.polymul(den, d)
    return num, den


def _reference_model(with_origin: bool):
    terms = [
        (np.array([0.35]), np.array([1.0])),  # series R
        (np.array([W0 * 120e-9, 0.0]), np.array([1.0])),  # series L: s L
        _poly_parallel_rc(12.0, 2e-9),
        _poly_resonant(3e-12, 25e3, 8e-6, 0.4),
        _poly_resonant(0.5e-12, 3e3, 0.9e-6, 2.0),
    ]
    if with_origin:
        terms.append((np.array([1.0]), np.array([W0 * 47e-9, 0.0])))  # 1/(sC)
    num, den = _sum(terms)
    r, p, k = scipy.signal.residue(num, den)
    origin = np.abs(p) < 1e-9
    r0 = float(r[origin].real.sum()) * W0 if with_origin else 0.0

    class Model:
        poles = p[~origin] * W0
        residues = r[~origin] * W0
        constant = float(k[-1].real)
        proportional = float(k[0].real) / W0 if len(k) > 1 else 0.0
        origin_residue = r0

    return Model, num, den


@pytest.mark.ngspice
@pytest.mark.parametrize("with_origin", [False, True])
def test_rational_netlist_reproduces_rational_function_in_ngspice(with_origin):
    model, num, den = _reference_model(with_origin)
    text = rational_netlist(model, name="vfmodel", header={"source": "ref"})
    _check_portable(text)
    f, z = _ngspice_z(text, 1e3, 1e9, 20)
    _, ref = scipy.signal.freqs(num, den, worN=f / 1e6)
    np.testing.assert_allclose(z, ref, rtol=1e-3)  # issue 5: 0.1 %
    np.testing.assert_allclose(netlist_impedance(rational_elements(model), f), ref, rtol=1e-6)
    # The element values come back: 12 ohm || 2 nF real pole, and 8 uH / 3 pF pair.
    br = foster_branches(model.poles, model.residues, model.constant, model.proportional, model.origin_residue)
    real = [b for b in br if b.kind == "real"][0]
    assert real.values["R"] == pytest.approx(12.0, rel=1e-6)
    assert real.values["C"] == pytest.approx(2e-9, rel=1e-6)
    pair = [b for b in br if b.kind == "complex"][0]
    for key, ref_value in (("C", 3e-12), ("R_p", 25e3), ("L", 8e-6), ("R_s", 0.4)):
        assert pair.values[key] == pytest.approx(ref_value, rel=1e-6)
    assert [b for b in br if b.kind == "constant"][0].values["R"] == pytest.approx(0.35, rel=1e-9)
    assert [b for b in br if b.kind == "proportional"][0].values["L"] == pytest.approx(120e-9, rel=1e-9)
    if with_origin:
        assert [b for b in br if b.kind == "origin"][0].values["C"] == pytest.approx(47e-9, rel=1e-9)


def test_lossless_pair_has_no_resistors():
    # An ideal L || C: Z = (s/C) / (s^2 + 1/(LC)); poles +-j w0, residues 1/(2C).
    L, C = 1e-6, 1e-9
    w = 1 / math.sqrt(L * C)
    br = foster_branches([1j * w - 1e-30, -1j * w - 1e-30], [1 / (2 * C), 1 / (2 * C)])
    assert br[0].values["C"] == pytest.approx(C, rel=1e-12)
    assert br[0].values["L"] == pytest.approx(L, rel=1e-12)
    assert br[0].values["R_s"] < 1e-20 and br[0].values["R_p"] > 1e20


def test_refuses_negative_branch_and_names_it():
    # Pair at 1 MHz whose residue makes b0 < 0: Re Z < 0 at low frequency.
    p = -2 * np.pi * 1e5 + 2j * np.pi * 1e6
    r = 1e6 + 5e7j
    with pytest.raises(SynthesisError, match=r"complex pole pair at 1\.005 MHz.*negative series resistance R_s.*equivalent-circuit"):
        foster_branches([p, np.conj(p)], [r, np.conj(r)])
    with pytest.raises(SynthesisError, match="real pole at 1 MHz"):
        foster_branches([-2 * np.pi * 1e6], [-3.0])
    with pytest.raises(SynthesisError, match="constant term"):
        foster_branches([], [], constant=-0.5)


def test_refusal_names_the_negative_value_in_engineering_notation():
    # Was "(-0.5 ohm)" and "(-1e-09 H)"; the house style is engineering notation (zfit._units).
    with pytest.raises(SynthesisError, match=r"negative series resistance \(-500 mΩ\)"):
        foster_branches([], [], constant=-0.5)
    with pytest.raises(SynthesisError, match=r"negative series inductance \(-1 nH\)"):
        foster_branches([], [], proportional=-1e-9)

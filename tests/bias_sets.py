"""Bias sets for the tests of ``zfit bias``: sweeps of parts whose L or C falls with DC bias.

Written out here, not taken from zfit: the published roll-off forms, the
circuits' impedances, and an impedance analyser's error model.
"""

from pathlib import Path

import numpy as np

#: An inductor: L(I) = L0 / (1 + (I/I_s)^n), the roll-off form that
#: powder-core makers publish for permeability against DC magnetising force
#: (1/(a + b H^c) with a = 1; from memory).
L0, I_S, N_L = 10e-6, 2.2, 2.2
#: A class-II ceramic capacitor: C(V) = C0 / (1 + (V/V0)^2) (the issue's form;
#: the quadratic onset of a ferroelectric's field dependence, from memory).
C0, V0 = 10e-6, 7.3

CURRENTS_A = (0.0, 0.5, 1.0, 1.5, 2.0, 2.5, 3.0, 4.0)
VOLTAGES_V = (0.0, 2.0, 4.0, 6.0, 8.0, 10.0, 12.0, 16.0)


def inductance(i):
    return L0 / (1 + (i / I_S) ** N_L)


def capacitance(v):
    return C0 / (1 + (v / V0) ** 2)


def fall_bias(scale, n, fall):
    """The bias where y0/(1+(x/scale)^n) has fallen by `fall`: scale * (fall/(1-fall))^(1/n)."""
    return scale * (fall / (1 - fall)) ** (1 / n)


def inductor_z(f, L, R_s=0.035, C_p=4.7e-12, R_p=25e3):
    """(R_s + jwL) || jwC_p || R_p: winding resistance, inter-winding C, core loss."""
    s = 2j * np.pi * f
    return 1 / (1 / (R_s + s * L) + s * C_p + 1 / R_p)


def capacitor_z(f, C, ESR=0.004, ESL=0.8e-9):
    """ESR + jw ESL + 1/(jwC)."""
    s = 2j * np.pi * f
    return ESR + s * ESL + 1 / (s * C)


def analyser_reading(rng, z):
    """|Z| and phase (deg) with an impedance analyser's stated accuracy as the
    standard deviation (common practice for such data sheets): relative
    A = 0.08 % + Z_s/|Z| + Y_o |Z|, short residual Z_s = 1 mohm, open residual
    Y_o = 50 nS; the phase error in radians has the same standard deviation.
    Printed to 6 significant digits and 0.001 deg."""
    mag = np.abs(z)
    a = 8e-4 + 1e-3 / mag + 50e-9 * mag
    m = mag * (1 + a * rng.standard_normal(mag.shape))
    ph = np.degrees(np.angle(z) + a * rng.standard_normal(mag.shape))
    return np.array([float(f"{v:.5e}") for v in m]), np.round(ph, 3)


def write_table(path: Path, f, z, rng):
    mag, ph = analyser_reading(rng, z)
    rows = ["Frequency (Hz),|Z| (Ohm),Phase (deg)"] + [f"{a:.6e},{b:.6e},{c:.3f}" for a, b, c in zip(f, mag, ph)]
    path.write_text("\n".join(rows) + "\n")
    return path


def inductor_set(folder: Path, seed=7, currents=CURRENTS_A):
    """Write L_<I>A.csv per current: 1 kHz .. 40 MHz, 161 points; return the paths."""
    rng = np.random.default_rng(seed)
    folder.mkdir(parents=True, exist_ok=True)
    f = np.geomspace(1e3, 40e6, 161)
    return [write_table(folder / f"L_{i:g}A.csv", f, inductor_z(f, inductance(i)), rng) for i in currents]


def capacitor_set(folder: Path, seed=11, voltages=VOLTAGES_V):
    """Write C_<V>V.csv per voltage: 100 Hz .. 20 MHz, 161 points; return the paths."""
    rng = np.random.default_rng(seed)
    folder.mkdir(parents=True, exist_ok=True)
    f = np.geomspace(100, 20e6, 161)
    return [write_table(folder / f"C_{v:g}V.csv", f, capacitor_z(f, capacitance(v)), rng) for v in voltages]

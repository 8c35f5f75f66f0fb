"""Measured windings on cores and beads, for the core and bead tests.

The impedances are the published forms, written out here: the Debye
permeability ``mu = mu_inf + (mu_i - mu_inf)/(1 + j f/f_r)`` (Debye 1929;
Snoek 1948) of a toroid, ``Z = (R_dc + j omega mu_0 N^2/C1 mu) || 1/(j omega C_p)``
with ``C1 = 2 pi/(h ln(OD/ID))``; a bead of parallel R-L-C sections,
``Z = R_dc + sum_k (1/R_k + 1/(j omega L_k) + j omega C_k)^-1`` (the usual
circuit of a bead, common practice). They are "measured" by reflection,
``S11 = (Z - Z0)/(Z + Z0)``, or series-thru, ``S21 = 2 Z0/(2 Z0 + Z)``,
``S11 = Z/(Z + 2 Z0)`` (Pozar, *Microwave Engineering*, 4th ed., 2012,
Tables 4.1-4.2), written to Touchstone files and read back as a user's
files are. Noise: an analyser's trace noise in the form its specification
usually states (common practice): 0.005 dB on |S| and 0.05 degree on its
phase, gaussian, plus a complex-circular floor of 2e-5 (-94 dB), seeded.
"""

import math

import numpy as np

from zfit.io._sweep_file import read_sweep

MU0 = 4e-7 * math.pi
Z0 = 50.0
OD, ID, H = 25e-3, 15e-3, 10e-3
#: The two sections of the test bead (R, L, C) and its winding resistance.
SECTIONS = [(300.0, 1.0e-6, 1.5e-12), (80.0, 0.15e-6, 0.8e-12)]
R_DC = 0.02


def debye_winding(f, mu_i, mu_inf, f_r, turns, r_dc, c_p):
    """Z of `turns` on the 25/15/10 mm toroid of a Debye material, with R_dc and C_p."""
    c1 = 2 * math.pi / (H * math.log(OD / ID))
    l0 = MU0 * turns**2 / c1
    mu = mu_inf + (mu_i - mu_inf) / (1 + 1j * f / f_r)
    zw = r_dc + 2j * math.pi * f * l0 * mu
    return 1 / (1 / zw + 2j * math.pi * f * c_p)


def bead_z(f, scale=1.0):
    """Z of the test bead, its section resistances scaled by `scale`."""
    s = 2j * math.pi * np.asarray(f, float)
    z = R_DC + 0 * s
    for r, l, c in SECTIONS:
        z = z + 1 / (1 / (r * scale) + 1 / (s * l) + s * c)
    return z


def analyser_noise(s, rng):
    """S with 0.005 dB, 0.05 degree and a 2e-5 complex-circular floor of noise."""
    mag_db = 0.005 * rng.standard_normal(s.shape)
    ph = math.radians(0.05) * rng.standard_normal(s.shape)
    floor = 2e-5 / math.sqrt(2) * (rng.standard_normal(s.shape) + 1j * rng.standard_normal(s.shape))
    return s * 10 ** (mag_db / 20) * np.exp(1j * ph) + floor


def write_touchstone(path, f, columns):
    lines = ["# Hz S RI R 50"]
    for i in range(f.size):
        lines.append(f"{f[i]:.10g} " + " ".join(f"{c[i].real:.9e} {c[i].imag:.9e}" for c in columns))
    path.write_text("\n".join(lines) + "\n")
    return path


def measured(folder, f, z, connection, seed, name="core"):
    """The sweep of Z measured by `connection` with the analyser noise, through a Touchstone file in `folder`."""
    rng = np.random.default_rng(seed)
    if connection == "reflection":
        return read_sweep(write_touchstone(folder / f"{name}.s1p", f, [analyser_noise((z - Z0) / (z + Z0), rng)]))
    n21 = analyser_noise(2 * Z0 / (2 * Z0 + z), rng)
    n11 = analyser_noise(z / (z + 2 * Z0), rng)
    return read_sweep(write_touchstone(folder / f"{name}.s2p", f, [n11, n21, n21, n11]), "series-thru")

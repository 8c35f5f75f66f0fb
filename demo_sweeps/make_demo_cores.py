"""Make the invented core and bead files in demo_sweeps/ (the ``zfit core`` part).

Scenario: the incoming-inspection bench of the invented lab "Larkspur Yard
power electronics" finds a box of unmarked ferrite rings and a reel of
unmarked beads. Every part, material and value is invented.

* R-0907: a ring of 25 mm outer, 15 mm inner diameter, 10 mm high, of an
  invented ferrite whose permeability relaxes with one time constant
  (Debye): ``mu = mu_inf + (mu_i - mu_inf)/(1 + j f/f_r)`` with mu_i = 2300,
  mu_inf = 30, f_r = 1.4 MHz; wound with 8 turns (R_dc = 35 mohm, C_p =
  4.2 pF across the winding). Measured series-thru, as a winding of up to a
  kilohm is best measured (``S21 = 2 Z0/(2 Z0 + Z)``, ``S11 = Z/(Z + 2 Z0)``).
* B-0612: a bead, a winding resistance of 15 mohm with two parallel R-L-C
  sections (330 ohm, 1.1 uH, 1.3 pF and 90 ohm, 0.12 uH, 0.7 pF). Measured
  series-thru too.

The analyser's noise is written out here, in the form its specification
usually states (common practice, not any instrument's figures): 0.005 dB on
|S| and 0.05 degree on its phase, gaussian, plus a complex-circular floor of
2e-5 (-94 dB); drawn from a seeded generator, so the files are remade byte
for byte. S-parameters are printed to nine significant digits.

Run from anywhere:  python demo_sweeps/make_demo_cores.py
(It overwrites only the two files it makes.)
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
SEED = 20261213
Z0 = 50.0
MU0 = 4e-7 * math.pi


def ring_winding(f):
    """R-0907 with 8 turns: (R_dc + j omega L_0 mu) || C_p, L_0 = mu_0 N^2 h ln(OD/ID)/(2 pi)."""
    od, id_, h, turns = 25e-3, 15e-3, 10e-3, 8
    l0 = MU0 * turns**2 * h * math.log(od / id_) / (2 * math.pi)
    mu = 30.0 + (2300.0 - 30.0) / (1 + 1j * f / 1.4e6)
    s = 2j * math.pi * f
    return 1 / (1 / (0.035 + s * l0 * mu) + s * 4.2e-12)


def bead(f):
    """B-0612: R_dc + two parallel R-L-C sections."""
    s = 2j * math.pi * f
    z = 0.015 + 0 * s
    for r, l, c in ((330.0, 1.1e-6, 1.3e-12), (90.0, 0.12e-6, 0.7e-12)):
        z = z + 1 / (1 / r + 1 / (s * l) + s * c)
    return z


def analyser_noise(s, rng):
    """0.005 dB and 0.05 degree of trace noise, and a 2e-5 complex-circular floor."""
    mag_db = 0.005 * rng.standard_normal(s.shape)
    phase = math.radians(0.05) * rng.standard_normal(s.shape)
    floor = 2e-5 / math.sqrt(2) * (rng.standard_normal(s.shape) + 1j * rng.standard_normal(s.shape))
    return s * 10 ** (mag_db / 20) * np.exp(1j * phase) + floor


def touchstone(f, columns, header):
    out = [f"! {h}" for h in header] + ["# MHz S RI R 50"]
    for i in range(f.size):
        out.append(f"{f[i] / 1e6:.10g} " + " ".join(f"{c[i].real: .9e} {c[i].imag: .9e}" for c in columns))
    return "\n".join(out) + "\n"


def main():
    rng = np.random.default_rng(SEED)
    f = np.geomspace(1e3, 50e6, 601)
    z = ring_winding(f)
    s21 = analyser_noise(2 * Z0 / (2 * Z0 + z), rng)
    s11 = analyser_noise(z / (z + 2 * Z0), rng)
    (HERE / "core_ring_8t_series_thru.s2p").write_text(touchstone(f, [s11, s21, s21, s11], [
        "Larkspur Yard incoming inspection: R-0907 unmarked ferrite ring 25/15/10 mm, 8 turns",
        "Network analyser, series-thru fixture, calibrated at the fixture, 601 points 1 kHz - 50 MHz",
    ]), encoding="utf-8", newline="\n")
    f = np.geomspace(1e6, 3e9, 601)
    z = bead(f)
    s21 = analyser_noise(2 * Z0 / (2 * Z0 + z), rng)
    s11 = analyser_noise(z / (z + 2 * Z0), rng)
    (HERE / "bead_series_thru.s2p").write_text(touchstone(f, [s11, s21, s21, s11], [
        "Larkspur Yard incoming inspection: B-0612 unmarked ferrite bead",
        "Network analyser, series-thru fixture, 601 points 1 MHz - 3 GHz",
    ]), encoding="utf-8", newline="\n")
    print("wrote core_ring_8t_series_thru.s2p, bead_series_thru.s2p")


if __name__ == "__main__":
    main()

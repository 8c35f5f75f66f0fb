"""Reflection Touchstone files of an invented inductor, for the batch tests.

The impedance is the published one of a series R-L with a parallel C,
Z = (R + j w L) || 1 / (j w C), seen through the reflection coefficient
Gamma = (Z - Z0) / (Z + Z0) (Pozar, Microwave Engineering, 4th ed., 2012,
eq. 2.35), with seeded Gaussian noise of 1e-4 on Gamma (a calibrated
analyser's trace noise, order of magnitude from memory).
"""

from pathlib import Path

import numpy as np


def reflection_s1p(path: Path, L: float, R: float = 0.05, C: float = 2e-12, seed: int = 1) -> Path:
    """Write a reflection .s1p of (R + j w L) || 1/(j w C), 1 kHz - 100 MHz, 151 points."""
    f = np.logspace(3, 8, 151)
    w = 2 * np.pi * f
    zs = R + 1j * w * L
    z = zs / (1 + 1j * w * C * zs)
    g = (z - 50) / (z + 50)
    rng = np.random.default_rng(seed)
    g = g + 1e-4 * (rng.standard_normal(f.size) + 1j * rng.standard_normal(f.size))
    lines = ["! invented part for a test", "# Hz S RI R 50"]
    lines += [f"{fi:.9e} {gi.real:.12e} {gi.imag:.12e}" for fi, gi in zip(f, g)]
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text("\n".join(lines) + "\n")
    return path

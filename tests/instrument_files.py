"""Instrument-like bench files for the reading tests, with their own error terms.

Nothing here uses zfit's noise model or zfit's circuits: the truths are
equivalent-circuit formulas written out below, and the measurement errors
are the ones a bench produces, each written out:

* one-port calibration residuals as an error box (directivity ``e00``,
  source match ``e11``, reflection tracking ``e10e01``) applied to the true
  reflection coefficient: ``S11m = e00 + e10e01 S11 / (1 - e11 S11)``
  (the one-port error model of a vector network analyser: Marks, "Formulations
  of the basic vector network analyzer error model including switch terms",
  ARFTG 50, 1997; common practice);
* trace noise: complex-circular Gaussian noise of standard deviation
  ``rel(f) |S| + floor``, with a floor near -60 dB and ``rel`` growing
  towards the band edges (a quartic in log f: an analyser's source power and
  IF filtering degrade at the ends of its range; a model of this test, not a
  datasheet);
* segmented linear sweeps, each segment with its own tracking and noise,
  the join frequency measured by both segments;
* tables rounded to the digits an instrument prints.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

Z0 = 50.0


def inductor_z(f, L, R, C):
    """Series R-L with a parallel C (a wound inductor): ``Z = 1 / (1/(R + jwL) + jwC)``."""
    w = 2 * np.pi * np.asarray(f, dtype=float)
    return 1.0 / (1.0 / (R + 1j * w * L) + 1j * w * C)


def capacitor_z(f, C, esr, esl):
    """Series R-L-C (a capacitor with ESR and ESL): ``Z = ESR + jwESL + 1/(jwC)``."""
    w = 2 * np.pi * np.asarray(f, dtype=float)
    return esr + 1j * w * esl + 1.0 / (1j * w * C)


def reflection(z):
    """The true S11 of impedance `z` on a Z0 port (definition of the reflection coefficient)."""
    return (z - Z0) / (z + Z0)


def error_box(s11, e00=0.003 + 0.002j, e11=0.01 - 0.015j, e10e01=1.0):
    """The S11 an analyser with calibration residuals reports: ``e00 + e10e01 S / (1 - e11 S)``."""
    s11 = np.asarray(s11, dtype=complex)
    return e00 + e10e01 * s11 / (1 - e11 * s11)


def edge_rel(f, rel, growth=0.0):
    """Relative trace noise ``rel (1 + growth u^4)``, u = -1 .. 1 across the band in log f."""
    x = np.log(np.asarray(f, dtype=float))
    u = (2 * x - x.min() - x.max()) / (x.max() - x.min())
    return rel * (1 + growth * u**4)


def circular_noise(rng, sigma):
    """Complex-circular Gaussian noise with ``E|n|^2 = sigma^2``."""
    sigma = np.asarray(sigma, dtype=float)
    return sigma / np.sqrt(2) * (rng.standard_normal(sigma.shape) + 1j * rng.standard_normal(sigma.shape))


def segmented_linear(bands, points):
    """Frequencies of a segmented linear sweep: each (start, stop) band linear, joins repeated."""
    return np.concatenate([np.linspace(a, b, n) for (a, b), n in zip(bands, points)])


def write_s1p(path: Path, f, s11, comment="invented test file") -> Path:
    """Write a Touchstone 1.x one-port file (Hz, RI, R 50), rows in the order given."""
    rows = [f"! {comment}", "# Hz S RI R 50"] + [f"{fi:.10g} {s.real:.10e} {s.imag:.10e}" for fi, s in zip(f, s11)]
    Path(path).write_text("\n".join(rows) + "\n")
    return Path(path)


def write_s2p(path: Path, f, s11, s21, comment="invented test file") -> Path:
    """Write a Touchstone 1.x two-port file of a symmetric reciprocal part (Hz, RI, R 50)."""
    rows = [f"! {comment}", "# Hz S RI R 50"]
    for fi, a, b in zip(f, s11, s21):
        rows.append(f"{fi:.10g} {a.real:.10e} {a.imag:.10e} {b.real:.10e} {b.imag:.10e} "
                    f"{b.real:.10e} {b.imag:.10e} {a.real:.10e} {a.imag:.10e}")
    Path(path).write_text("\n".join(rows) + "\n")
    return Path(path)


def write_zphase_table(path: Path, f, z, digits=6) -> Path:
    """Write an analyser table ``f (Hz), |Z| (ohm), phase (deg)`` rounded to `digits` significant digits."""
    rows = ["Frequency (Hz),|Z| (ohm),Phase (deg)"]
    for fi, zi in zip(f, z):
        rows.append(f"{fi:.{digits}g},{abs(zi):.{digits}g},{np.degrees(np.angle(zi)):.{digits}g}")
    Path(path).write_text("\n".join(rows) + "\n")
    return Path(path)


def write_ls_rs_table(path: Path, f, z, digits=5) -> Path:
    """Write an LCR-meter table ``Freq (kHz), Ls (uH), Rs (ohm)`` (series mode) rounded to `digits`."""
    w = 2 * np.pi * np.asarray(f)
    rows = ["Freq (kHz),Ls (uH),Rs (ohm)"]
    for fi, wi, zi in zip(f, w, z):
        rows.append(f"{fi / 1e3:.{digits}g},{zi.imag / wi * 1e6:.{digits}g},{zi.real:.{digits}g}")
    Path(path).write_text("\n".join(rows) + "\n")
    return Path(path)

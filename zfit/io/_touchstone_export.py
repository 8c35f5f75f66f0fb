"""Touchstone export of a fitted model, for tools that take S-parameters.

The one-port S11 of an impedance Z against a real reference R0 is
``(Z - R0) / (Z + R0)`` (the reflection coefficient; Pozar, Microwave
Engineering, 4th ed., eq. 2.35).  The file is written by scikit-rf's own
Touchstone writer, so that what comes out is what the common library reads.
"""

from __future__ import annotations

import math
import re
import warnings
from typing import Callable, Sequence

import numpy as np

from .._errors import MeasurementWarning, ZfitInputError
from .._units import ascii_text, bounded, format_band, parse_quantity
from ..data._sweep import FREQUENCY_RANGE_HZ

__all__ = ["parse_grid", "touchstone_text", "write_touchstone"]

_GRID = re.compile(r"^\s*([^:]+):([^:]+)(?::\s*(\d+)\s*(/dec|lin)?)?\s*$")


#: Most points a Touchstone grid may have: a million rows is some 50 MB of
#: text, far beyond any use; larger requests are typing slips.
MAX_GRID_POINTS = 1_000_001


def parse_grid(text: str, what: str = "--touchstone-grid") -> np.ndarray:
    """Return a frequency grid in Hz from its text.

    Parameters
    ----------
    text : str
        ``START:STOP`` (801 points, logarithmic), ``START:STOP:N``
        (N points, logarithmic), ``START:STOP:N/dec`` (N points per decade)
        or ``START:STOP:Nlin`` (N points, linear); START and STOP in
        engineering notation, e.g. ``1k:1G:801`` or ``100k:3G:50/dec``.
    what : str
        Name of the option, for the error message.

    Raises
    ------
    ZfitInputError
        When the text does not describe a grid of positive, increasing
        frequencies with at least 2 points.
    """
    m = _GRID.match(str(text))
    if not m:
        raise ZfitInputError(f"{what}: cannot read {text!r} as a grid (examples: 1k:1G, 1k:1G:801, 100k:3G:50/dec, 0:1G:1001lin)")
    lo = parse_quantity(m.group(1), what)
    hi = parse_quantity(m.group(2), what)
    n = int(m.group(3)) if m.group(3) else 801
    mode = m.group(4) or "log"
    # The frequencies zfit computes with; a linear grid may start at 0 (dropped: DC has no S11 row).
    for x in (hi,) if mode == "lin" and lo == 0 else (lo, hi):
        bounded(x, what, *FREQUENCY_RANGE_HZ, unit="Hz")
    if mode == "/dec" and 0 < lo < hi:
        n = max(2, int(math.ceil(n * math.log10(hi / lo))) + 1)
    if n > MAX_GRID_POINTS:
        raise ZfitInputError(f"{what}: {text!r} asks for {n} points; at most {MAX_GRID_POINTS} are written")
    if mode == "lin":
        if not (0 <= lo < hi) or n < 2:
            raise ZfitInputError(f"{what}: a linear grid needs 0 <= START < STOP and at least 2 points")
        f = np.linspace(lo, hi, n)
        return f[f > 0] if f[0] == 0 else f
    if not (0 < lo < hi):
        raise ZfitInputError(f"{what}: a logarithmic grid needs 0 < START < STOP (got {text!r})")
    if n < 2:
        raise ZfitInputError(f"{what}: at least 2 points are needed")
    return np.geomspace(lo, hi, n)


def touchstone_text(f_hz, z_ohm, *, reference_ohm: float = 50.0, comments: Sequence[str] = ()) -> str:
    """Return a one-port Touchstone 1.x file of an impedance, written by scikit-rf.

    Parameters
    ----------
    f_hz : array_like
        Frequencies in Hz, increasing.
    z_ohm : array_like
        Complex impedance at each frequency.
    reference_ohm : float
        Real reference impedance R0 of the S-parameters.
    comments : sequence of str
        Comment lines placed at the top (ASCII; ``!`` is added).

    Returns
    -------
    str
        The file's text: ``# Hz S RI R <R0>`` and one line per frequency
        with 12 significant digits.
    """
    import skrf

    f = np.asarray(f_hz, dtype=float).ravel()
    z = np.asarray(z_ohm, dtype=complex).ravel()
    if f.size != z.size or f.size < 1:
        raise ZfitInputError("frequency and impedance arrays differ in length or are empty")
    if not (reference_ohm > 0 and math.isfinite(reference_ohm)):
        raise ZfitInputError(f"reference impedance {reference_ohm!r} is not a positive number")
    s11 = (z - reference_ohm) / (z + reference_ohm)
    net = skrf.Network(frequency=skrf.Frequency.from_f(f, unit="hz"), s=s11.reshape(-1, 1, 1), z0=reference_ohm, name="zfit")
    net.comments = "\n".join(ascii_text(c) for c in comments)
    return net.write_touchstone(
        return_string=True, form="ri", skrf_comment=False,
        format_spec_A="{:.12g}", format_spec_B="{:.12g}", format_spec_freq="{:.12g}",
    )


def write_touchstone(
    path,
    impedance: Callable[[np.ndarray], np.ndarray],
    f_hz,
    *,
    reference_ohm: float = 50.0,
    comments: Sequence[str] = (),
    valid_band_hz: tuple[float, float] | None = None,
    force: bool = False,
):
    """Write a model's impedance as a one-port Touchstone file on a chosen grid.

    Parameters
    ----------
    path : str or os.PathLike
        Output file, normally ``.s1p``.
    impedance : callable
        The model: frequencies in Hz -> complex impedance in ohm.
    f_hz : array_like
        The grid to write (see `parse_grid`).
    reference_ohm : float
        Reference impedance of the file.
    comments : sequence of str
        Header comment lines (source, model, band of validity).
    valid_band_hz : (float, float), optional
        Band the model is known to describe; a grid reaching beyond it
        gives a `MeasurementWarning` (the file then holds an extrapolation).
    force : bool
        Whether an existing file may be replaced.

    Returns
    -------
    pathlib.Path
        The path written.
    """
    from .._atomic import check_writable, write_atomic

    check_writable(path, force)
    f = np.asarray(f_hz, dtype=float).ravel()
    if f.size < 1 or np.any(f <= 0) or np.any(np.diff(f) <= 0):
        raise ZfitInputError("the Touchstone grid must hold positive, increasing frequencies", path=path)
    comments = list(comments)
    if valid_band_hz is not None:
        lo, hi = valid_band_hz
        if f[0] < lo * (1 - 1e-9) or f[-1] > hi * (1 + 1e-9):
            text = (f"Touchstone grid {format_band(f[0], f[-1])} reaches beyond the band the model "
                    f"describes ({format_band(lo, hi)}): those points are an extrapolation")
            warnings.warn(text, MeasurementWarning, stacklevel=2)
            comments.append("WARNING: " + text)
    z = np.asarray(impedance(f), dtype=complex)
    return write_atomic(path, touchstone_text(f, z, reference_ohm=reference_ohm, comments=comments), force)

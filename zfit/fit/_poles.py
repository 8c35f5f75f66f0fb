"""Pole sets of vector fitting: the starting poles, splitting a complete set
into real poles and pair members, joining them again, and how far they moved.
"""

from __future__ import annotations

import math

import numpy as np

from .._errors import ZfitInputError
from ._basis import TWO_PI

__all__ = ["starting_poles", "split_poles", "join_poles", "pole_change"]


def starting_poles(f_min_hz: float, f_max_hz: float, n_poles: int, n_real: int | None = None, damping: float = 0.01):
    """Return the usual starting poles of vector fitting, in rad/s.

    Complex pairs ``-damping * beta +- j beta`` with beta log-spaced over the
    band (common practice, Gustavsen & Semlyen 1999, sec. 5: weakly damped
    poles spread over the band), and real poles ``-beta`` log-spaced over
    the band.

    Parameters
    ----------
    f_min_hz, f_max_hz : float
        The band.
    n_poles : int
        Total number of poles (a pair counts two).
    n_real : int, optional
        How many of them are real; by default ``n_poles % 2`` (all pairs but
        one real pole for an odd count).
    damping : float
        Ratio -Re p / Im p of the starting pairs.

    Returns
    -------
    numpy.ndarray
        Complex poles, real ones first, then pairs (positive-imaginary first).
    """
    if n_real is None:
        n_real = n_poles % 2
    if n_real < 0 or n_real > n_poles or (n_poles - n_real) % 2:
        raise ZfitInputError(f"{n_poles} poles cannot have {n_real} real ones (the rest come in pairs)")
    n_pairs = (n_poles - n_real) // 2
    lo, hi = math.log(TWO_PI * f_min_hz), math.log(TWO_PI * f_max_hz)

    def spread(m):
        return np.exp(lo + (hi - lo) * (np.arange(m) + 0.5) / m) if m else np.zeros(0)

    beta = spread(n_pairs)
    pairs = -damping * beta + 1j * beta
    real = -spread(n_real)
    out = [real.astype(complex)]
    for p in pairs:
        out.append(np.array([p, p.conjugate()]))
    return np.concatenate(out)


def split_poles(poles):
    """Complete complex set -> (real poles as float, positive-imag pair members),
    with the pairs made exactly conjugate and all poles stable (Re flipped)."""
    poles = np.asarray(poles, dtype=complex)
    tol = 1e-12 * np.maximum(np.abs(poles), 1e-300)
    real = np.abs(poles.imag) <= tol
    preal = np.sort(-np.abs(poles[real].real))[::-1]
    up = poles[(~real) & (poles.imag > 0)]
    down = poles[(~real) & (poles.imag < 0)]
    if up.size != down.size:
        raise ZfitInputError("complex starting poles must come in conjugate pairs")
    pc = -np.abs(up.real) + 1j * up.imag
    pc = pc[np.argsort(pc.imag)]
    return preal, pc


def join_poles(preal, pcplx):
    out = np.empty(preal.size + 2 * pcplx.size, complex)
    out[: preal.size] = preal
    out[preal.size :: 2] = pcplx
    out[preal.size + 1 :: 2] = pcplx.conj()
    return out


def pole_change(oreal, ocplx, nreal, ncplx):
    """Largest relative movement of a pole between two split pole sets."""
    if oreal.size != nreal.size or ocplx.size != ncplx.size:
        return math.inf
    if oreal.size + ocplx.size == 0:
        return 0.0
    a = np.concatenate([oreal, ocplx])
    b = np.concatenate([nreal, ncplx])
    return float(np.max(np.abs(a - b) / np.abs(a)))

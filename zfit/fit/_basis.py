"""The basis functions of a pole-residue model, in real arithmetic.

Each real pole has one column ``1/(s - p)``; each conjugate pair two,
``1/(s-p) + 1/(s-p*)`` and ``j/(s-p) - j/(s-p*)``, so that real coefficients
give exactly conjugate residues (Gustavsen & Semlyen 1999).  Also the
derivatives with respect to the poles and the columns of the optional terms.
"""

from __future__ import annotations

import math

import numpy as np

__all__ = ["TWO_PI", "pole_basis", "pole_jacobian", "extra_columns", "real_rows"]

TWO_PI = 2.0 * math.pi


def pole_basis(s, preal, pcplx):
    """Real-coefficient basis of the pole part: one column per real pole,
    two per pair (1/(s-p) + 1/(s-p*), j/(s-p) - j/(s-p*)), so that real
    coefficients (c1, c2) give the conjugate residues c1 +- j c2 exactly."""
    n = s.size
    out = np.empty((n, preal.size + 2 * pcplx.size), complex)
    out[:, : preal.size] = 1.0 / (s[:, None] - preal[None, :])
    if pcplx.size:
        a = 1.0 / (s[:, None] - pcplx[None, :])
        b = 1.0 / (s[:, None] - pcplx.conj()[None, :])
        out[:, preal.size :: 2] = a + b
        out[:, preal.size + 1 :: 2] = 1j * (a - b)
    return out


def pole_jacobian(s, preal, pcplx, rreal, rcplx):
    """dH/d(pole parameters): real pole value; (Re, Im) of each pair."""
    n = s.size
    out = np.empty((n, preal.size + 2 * pcplx.size), complex)
    out[:, : preal.size] = rreal[None, :] / (s[:, None] - preal[None, :]) ** 2
    if pcplx.size:
        a = rcplx[None, :] / (s[:, None] - pcplx[None, :]) ** 2
        b = rcplx.conj()[None, :] / (s[:, None] - pcplx.conj()[None, :]) ** 2
        out[:, preal.size :: 2] = a + b
        out[:, preal.size + 1 :: 2] = 1j * (a - b)
    return out


def extra_columns(s, constant, proportional, origin_pole):
    cols = []
    if constant:
        cols.append(np.ones(s.size, complex))
    if proportional:
        cols.append(s)
    if origin_pole:
        cols.append(1.0 / s)
    return np.stack(cols, axis=1) if cols else np.zeros((s.size, 0), complex)


def real_rows(A):
    """Complex rows -> real rows (real parts on top of imaginary parts)."""
    return np.concatenate([A.real, A.imag], axis=0)

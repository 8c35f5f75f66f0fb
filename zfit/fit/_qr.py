"""Linear algebra of the weighted least-squares problems of vector fitting:
column scaling, the R factor of a QR factorisation, and the inverse Gram
matrix (J^T J)^-1 that becomes a covariance.
"""

from __future__ import annotations

import numpy as np

__all__ = ["col_norms", "r_factor", "pinv_gram", "gram_inverse"]


def col_norms(A):
    n = np.sqrt(np.einsum("ij,ij->j", A, A))
    n[n == 0] = 1.0
    return n


def r_factor(A, overwrite=False):
    """Upper-triangular R of A = QR (Householder, LAPACK geqrf); A may be
    destroyed when `overwrite`."""
    m = A.shape[1]
    if A.shape[0] < m:
        return np.linalg.qr(A, mode="r")
    qr = _LAPACK.dgeqrf(A, overwrite_a=overwrite)[0]
    return np.triu(qr[:m, :m])


class _Lapack:
    """scipy.linalg.lapack, imported on first use (keeps `import zfit` light)."""

    def __getattr__(self, name):
        from scipy.linalg import lapack

        return getattr(lapack, name)


_LAPACK = _Lapack()


def pinv_gram(As):
    """(As^T As)^-1 by SVD, with directions below round-off dropped."""
    _, sv, Vt = np.linalg.svd(As, full_matrices=False)
    keep = sv > sv[0] * 1e-14
    inv = np.where(keep, 1.0 / np.where(keep, sv, 1.0), 0.0)
    return (Vt.T * inv) @ (Vt * inv[:, None]), Vt, inv


def gram_inverse(J):
    """(J^T J)^-1 from the R factor of the column-scaled J (SVD if rank-deficient)."""
    norms = col_norms(J)
    Js = J / norms
    R = r_factor(Js)
    d = np.abs(np.diag(R))
    if d.size and d.min() > 1e-10 * d.max():
        Ri = np.linalg.inv(R)
        G = Ri @ Ri.T
    else:
        G = pinv_gram(Js)[0]
    return G / np.outer(norms, norms)

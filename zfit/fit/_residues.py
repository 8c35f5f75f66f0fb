"""Residues with the poles fixed: the final weighted linear least squares of
vector fitting, its covariance (poles fixed, and poles as parameters too),
and the `RationalModel` in SI units.
"""

from __future__ import annotations

import math

import numpy as np

from ._basis import extra_columns, pole_basis, pole_jacobian, real_rows
from ._poles import join_poles
from ._qr import col_norms, gram_inverse, pinv_gram, r_factor
from ._rational import RationalModel

__all__ = ["fixed_pole_fit", "model_from_poles"]


def fixed_pole_fit(s, h, w, preal, pcplx, flags):
    """Linear residue identification with the poles fixed: weighted least
    squares by QR of [A | b]; returns the complex design matrix, the
    coefficients, chi-square and (A^T W A)^-1."""
    extras = extra_columns(s, *flags)
    phi = pole_basis(s, preal, pcplx)
    A = np.concatenate([phi, extras], axis=1)
    n, m = A.shape
    # Complex-circular sigma: each of Re and Im carries sigma/sqrt(2).
    rw = (math.sqrt(2.0) * w)[:, None]
    Ab = np.empty((2 * n, m + 1))
    Ab[:n, :m] = A.real * rw
    Ab[n:, :m] = A.imag * rw
    Ab[:n, m] = h.real * rw[:, 0]
    Ab[n:, m] = h.imag * rw[:, 0]
    norms = col_norms(Ab[:, :m])
    Ab[:, :m] /= norms
    R = r_factor(Ab)
    R11 = R[:m, :m]
    d = np.abs(np.diag(R11))
    if d.size and d.min() > 1e-10 * d.max():
        Ri = np.linalg.inv(R11)
        xs = Ri @ R[:m, m]
        chi2 = float(R[m, m] ** 2)
        G = Ri @ Ri.T
    else:
        G = pinv_gram(Ab[:, :m])[0]
        xs = G @ (Ab[:, :m].T @ Ab[:, m])
        r = Ab[:, :m] @ xs - Ab[:, m]
        chi2 = float(r @ r)
    return A, xs / norms, chi2, G / np.outer(norms, norms)


def model_from_poles(s, h, w, preal, pcplx, flags, w0, absolute_sigma, extra):
    """Final linear fit -> RationalModel in SI units."""
    A, x, chi2, cov_n = fixed_pole_fit(s, h, w, preal, pcplx, flags)
    constant, proportional, origin_pole = flags
    nr, nc = preal.size, pcplx.size
    npole = nr + 2 * nc
    n = s.size
    # Back to SI: s = w0 s_n; r/(s - p) = (r_n w0)/(s - p_n w0); e s_n = (e/w0) s.
    conv = np.concatenate(
        [np.full(npole, w0), [1.0] * constant, [1.0 / w0] * proportional, [w0] * origin_pole]
    )
    coef = x * conv
    cov = cov_n * np.outer(conv, conv)
    preal_si, pcplx_si = preal * w0, pcplx * w0
    rreal = coef[:nr]
    rc = coef[nr:npole:2] + 1j * coef[nr + 1 : npole : 2]
    poles = join_poles(preal_si, pcplx_si)
    residues = join_poles(rreal, rc)
    k = npole
    d = float(coef[k]) if constant else 0.0
    k += constant
    e = float(coef[k]) if proportional else 0.0
    k += proportional
    r0 = float(coef[k]) if origin_pole else 0.0
    names = [f"residue[{i}]" for i in range(nr)]
    for i in range(nc):
        names += [f"Re residue[{nr + 2 * i}]", f"Im residue[{nr + 2 * i}]"]
    names += ["constant"] * constant + ["proportional"] * proportional + ["origin_residue"] * origin_pole
    n_unknown = npole + constant + proportional + origin_pole + npole
    dof = 2 * n - n_unknown
    chi2_red = chi2 / dof if dof > 0 else float("nan")
    factor = 1.0 if absolute_sigma or not np.isfinite(chi2_red) else chi2_red
    # Full covariance (coefficients + poles) from the Jacobian of the nonlinear model.
    Jp = pole_jacobian(s * w0, preal_si, pcplx_si, rreal, rc)
    Jfull = np.concatenate([A / conv[None, :], Jp], axis=1) * (math.sqrt(2.0) * w)[:, None]
    full = gram_inverse(real_rows(Jfull))
    return RationalModel(
        poles=poles,
        residues=residues,
        constant=d,
        proportional=e,
        origin_residue=r0,
        has_constant=bool(constant),
        has_proportional=bool(proportional),
        has_origin_pole=bool(origin_pole),
        coefficients=coef,
        coefficient_names=tuple(names),
        covariance=cov * factor,
        full_covariance=full * factor,
        rms_normalized_residual=math.sqrt(chi2 / (2 * n)),
        chi2_reduced=chi2_red,
        n_points=n,
        dof=int(dof),
        absolute_sigma=bool(absolute_sigma),
        reference_omega=w0,
        **extra,
    )

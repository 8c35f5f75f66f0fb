"""Relaxation models of a complex permeability, fitted to measured mu'(f) - j mu''(f).

Forms
-----
Debye [1]_: ``mu(f) = mu_inf + (mu_i - mu_inf) / (1 + j f/f_r)``: one
relaxation time; mu'' peaks at f_r with the value ``(mu_i - mu_inf)/2``.

Cole-Cole [2]_: ``mu(f) = mu_inf + (mu_i - mu_inf) / (1 + (j f/f_r)^(1 - alpha))``,
``0 <= alpha < 1``: a symmetric distribution of relaxation times about
1/(2 pi f_r); alpha = 0 is Debye. Sintered ferrites whose grains differ in
size often show it: a wider, lower mu'' peak than one time constant gives.

Choice rule
-----------
The Debye form is fitted first. The Cole-Cole form replaces it only when
the data demand it: its Bayesian information criterion
``BIC = chi^2 + k ln(n)`` [3]_ (n residual rows, k parameters) is lower by
more than 10 ("very strong" evidence on the scale of Kass and Raftery [4]_)
and alpha is resolved (above twice its standard uncertainty).

Fit
---
Weighted least squares on the real and imaginary parts of mu, each point
weighted by the standard uncertainty of its noise (the geometry's scale
error is common to all points and does not enter the fit), unknowns
``(ln mu_i, mu_inf/mu_i, ln f_r[, alpha])`` with ``0 <= mu_inf/mu_i < 1``
and ``0 <= alpha < 1`` (scipy's trust-region reflective method [5]_). The
covariance is ``(J^T J)^-1`` scaled by the reduced chi-square when that is
above one (the model or the noise estimate is imperfect: the spread of the
residuals is then the better measure, JCGM 100:2008, 4.2).

References
----------
.. [1] P. Debye, *Polar Molecules*, Chemical Catalog Co., New York, 1929.
.. [2] K. S. Cole and R. H. Cole, "Dispersion and absorption in
   dielectrics I", J. Chem. Phys. 9(4), 341-351, 1941, doi:10.1063/1.1750906.
.. [3] G. Schwarz, "Estimating the dimension of a model", Ann. Statist.
   6(2), 461-464, 1978, doi:10.1214/aos/1176344136.
.. [4] R. E. Kass and A. E. Raftery, "Bayes factors", J. Amer. Statist.
   Assoc. 90(430), 773-795, 1995, doi:10.1080/01621459.1995.10476572.
.. [5] M. A. Branch, T. F. Coleman and Y. Li, "A subspace, interior, and
   conjugate gradient method for large-scale bound-constrained minimization
   problems", SIAM J. Sci. Comput. 21(1), 1-23, 1999, doi:10.1137/S1064827595289108.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.optimize import least_squares

__all__ = ["Relaxation", "WindingParts", "relaxation_permeability", "fitted_relaxation", "fitted_winding_parts",
           "BIC_MARGIN"]

#: BIC margin for the Cole-Cole form (Kass and Raftery 1995: > 10 is very strong evidence).
BIC_MARGIN = 10.0


def relaxation_permeability(f_hz, mu_i: float, mu_inf: float, f_r: float, alpha: float = 0.0) -> np.ndarray:
    """Return the complex permeability ``mu' - j mu''`` of the Cole-Cole form (Debye for alpha = 0).

    Parameters
    ----------
    f_hz : array_like
        Frequencies.
    mu_i, mu_inf : float
        Low- and high-frequency limits of mu'.
    f_r : float
        Relaxation frequency.
    alpha : float
        Cole-Cole distribution parameter, 0 <= alpha < 1.
    """
    jf = 1j * np.asarray(f_hz, float) / f_r
    return mu_inf + (mu_i - mu_inf) / (1.0 + jf ** (1.0 - alpha))


@dataclass(frozen=True)
class Relaxation:
    """A relaxation model fitted to a measured permeability.

    Attributes
    ----------
    form : {'Debye', 'Cole-Cole'}
    mu_i, mu_inf, f_r_hz, alpha : float
        The parameters (alpha = 0 for Debye).
    mu_i_std, mu_inf_std, f_r_std_hz, alpha_std : float
        Their standard uncertainties from the fit (noise and model only).
    band_hz : tuple of float
        The band of the data fitted: where the model holds.
    reduced_chi2 : float
        chi^2 / (rows - parameters) of the chosen form.
    bic : dict
        BIC of each form tried, by name.
    max_rel_deviation : float
        Largest ``|mu_model - mu| / |mu|`` over the points of the band whose
        noise is below 1 % of |mu| (NaN when there are none).
    """

    form: str
    mu_i: float
    mu_inf: float
    f_r_hz: float
    alpha: float
    mu_i_std: float
    mu_inf_std: float
    f_r_std_hz: float
    alpha_std: float
    band_hz: tuple
    reduced_chi2: float
    bic: dict
    max_rel_deviation: float

    def permeability(self, f_hz) -> np.ndarray:
        """Return the model's ``mu' - j mu''`` at `f_hz`.

        Parameters
        ----------
        f_hz : array_like
            Frequencies in Hz.
        """
        return relaxation_permeability(f_hz, self.mu_i, self.mu_inf, self.f_r_hz, self.alpha)

    def to_dict(self) -> dict:
        """Return the ``relaxation`` object of the ``zfit.core/1`` JSON."""
        return {"form": self.form, "mu_i": self.mu_i, "mu_i_std": self.mu_i_std, "mu_inf": self.mu_inf,
                "mu_inf_std": self.mu_inf_std, "f_r_hz": self.f_r_hz, "f_r_std_hz": self.f_r_std_hz,
                "alpha": self.alpha, "alpha_std": self.alpha_std, "band_hz": list(self.band_hz),
                "reduced_chi2": self.reduced_chi2, "bic": dict(self.bic),
                "max_rel_deviation": self.max_rel_deviation}


def _model(theta, f, cole):
    mu_i, ratio, f_r = math.exp(theta[0]), theta[1], math.exp(theta[2])
    alpha = theta[3] if cole else 0.0
    return relaxation_permeability(f, mu_i, ratio * mu_i, f_r, alpha)


def _fit(f, mu, s, theta0, cole):
    def resid(theta):
        d = (_model(theta, f, cole) - mu) / s
        return np.concatenate([d.real, d.imag])

    lo = [-np.inf, 0.0, -np.inf] + ([0.0] if cole else [])
    hi = [np.inf, 0.999, np.inf] + ([0.95] if cole else [])
    t0 = np.clip(np.array(theta0[: 4 if cole else 3], float), np.array(lo) + 1e-9, np.array(hi) - 1e-9)
    sol = least_squares(resid, t0, bounds=(lo, hi), method="trf", x_scale="jac", max_nfev=400)
    chi2 = float(sol.fun @ sol.fun)
    rows = sol.fun.size
    k = t0.size
    red = chi2 / max(rows - k, 1)
    J = sol.jac
    try:
        cov = np.linalg.pinv(J.T @ J, rcond=1e-12) * max(red, 1.0)
    except np.linalg.LinAlgError:
        cov = np.full((k, k), np.inf)
    return sol.x, cov, chi2, rows, red


def fitted_relaxation(f_hz, mu, sigma_part) -> Relaxation | None:
    """Return the relaxation model the data call for (see the choice rule), or None.

    Parameters
    ----------
    f_hz : array_like
        Frequencies of the band where the permeability is measured.
    mu : array_like of complex
        ``mu' - j mu''`` at each frequency.
    sigma_part : array_like
        Standard uncertainty of each of mu' and mu'' from the noise.

    Returns
    -------
    Relaxation or None
        None with fewer than eight points or when no fit converges.
    """
    f = np.asarray(f_hz, float)
    mu = np.asarray(mu, complex)
    s = np.asarray(sigma_part, float)
    if f.size < 8:
        return None
    mu_lo = float(np.median(mu.real[: min(3, f.size)]))
    if not mu_lo > 0:
        return None
    mu2 = -mu.imag
    k = int(np.argmax(mu2))
    f_r0 = float(f[k]) if 0 < k < f.size - 1 else float(f[-1] if k > 0 else f[0])
    ratio0 = float(np.clip(mu.real[-1] / mu_lo, 1e-3, 0.5))
    theta0 = [math.log(mu_lo), ratio0, math.log(f_r0), 0.1]
    fits = {}
    try:
        fits["Debye"] = _fit(f, mu, s, theta0, False)
        theta_c = list(fits["Debye"][0]) + [0.1]
        fits["Cole-Cole"] = _fit(f, mu, s, theta_c, True)
    except (ValueError, np.linalg.LinAlgError):
        if "Debye" not in fits:
            return None
    bic = {name: float(v[2] + v[0].size * math.log(v[3])) for name, v in fits.items()}
    form = "Debye"
    if "Cole-Cole" in fits:
        x, cov = fits["Cole-Cole"][:2]
        a_std = math.sqrt(max(cov[3, 3], 0.0))
        if bic["Cole-Cole"] < bic["Debye"] - BIC_MARGIN and x[3] > 2.0 * a_std:
            form = "Cole-Cole"
    x, cov, chi2, rows, red = fits[form]
    mu_i, f_r = math.exp(x[0]), math.exp(x[2])
    sd = np.sqrt(np.clip(np.diag(cov), 0.0, None))
    # mu_inf = ratio * mu_i: first-order propagation with the covariance of (ln mu_i, ratio).
    g = np.array([x[1] * mu_i, mu_i])
    mu_inf_std = math.sqrt(max(float(g @ cov[:2, :2] @ g), 0.0))
    # The deviation where the data resolve it: points of relative noise below 1 %.
    sharp = s / np.abs(mu) < 0.01
    dev_all = np.abs(_model(x, f, form == "Cole-Cole") - mu) / np.abs(mu)
    dev = float(np.max(dev_all[sharp])) if np.any(sharp) else math.nan
    return Relaxation(form, mu_i, float(x[1] * mu_i), f_r, float(x[3]) if form == "Cole-Cole" else 0.0,
                      mu_i * float(sd[0]), mu_inf_std, f_r * float(sd[2]),
                      float(sd[3]) if form == "Cole-Cole" else 0.0, (float(f[0]), float(f[-1])), float(red), bic, dev)


@dataclass(frozen=True)
class WindingParts:
    """R_dc and C_p of a winding fitted together with a Cole-Cole core.

    Attributes
    ----------
    r_dc_ohm, r_dc_std_ohm : float
        Series resistance (the given value and its uncertainty when fixed).
    c_p_f, c_p_std_f : float
        Parallel capacitance.
    reduced_chi2 : float
    """

    r_dc_ohm: float
    r_dc_std_ohm: float
    c_p_f: float
    c_p_std_f: float
    reduced_chi2: float


def fitted_winding_parts(f_hz, z_ohm, sigma_part, l0_h: float, r_dc: float, c_p: float, relaxation: Relaxation,
                         *, r_dc_fixed: bool = False) -> WindingParts | None:
    """Return R_dc and C_p fitted with the core's Cole-Cole permeability, on the impedance.

    ``Z = (R_dc + j omega L_0 mu(f)) || 1/(j omega C_p)``, mu of the Cole-Cole
    form; all of R_dc, C_p, mu_i, mu_inf, f_r and alpha free (R_dc fixed
    when measured). A Debye circuit fitted to a core whose relaxation is
    distributed puts the misfit into R_dc and C_p; this fit does not.

    Parameters
    ----------
    f_hz, z_ohm : array_like
        The winding's sweep over the band of validity.
    sigma_part : array_like
        Standard uncertainty of each of R and X.
    l0_h : float
        ``mu_0 N^2 / C1``.
    r_dc, c_p : float
        Starting values.
    relaxation : Relaxation
        Starting permeability.
    r_dc_fixed : bool
        Keep R_dc at `r_dc` (measured by the user).

    Returns
    -------
    WindingParts or None
        None when the fit fails.
    """
    f = np.asarray(f_hz, float)
    z = np.asarray(z_ohm, complex)
    s = np.asarray(sigma_part, float)
    w = 2.0 * math.pi * f

    def unpack(t):
        rd = r_dc if r_dc_fixed else math.exp(t[0])
        return rd, math.exp(t[1]), t[2:]

    def resid(t):
        rd, cp, m = unpack(t)
        mu = _model(m, f, True)
        zm = 1.0 / (1.0 / (rd + 1j * w * l0_h * mu) + 1j * w * cp)
        d = (zm - z) / s
        return np.concatenate([d.real, d.imag])

    rel = relaxation
    t0 = np.array([math.log(max(r_dc, 1e-9)), math.log(max(c_p, 1e-18)), math.log(rel.mu_i),
                   min(rel.mu_inf / rel.mu_i, 0.99), math.log(rel.f_r_hz), min(rel.alpha, 0.9)])
    lo = [-np.inf, -np.inf, -np.inf, 0.0, -np.inf, 0.0]
    hi = [np.inf, np.inf, np.inf, 0.999, np.inf, 0.95]
    try:
        sol = least_squares(resid, t0, bounds=(lo, hi), method="trf", x_scale="jac", max_nfev=600)
    except (ValueError, np.linalg.LinAlgError):
        return None
    chi2 = float(sol.fun @ sol.fun)
    k = 5 if r_dc_fixed else 6
    red = chi2 / max(sol.fun.size - k, 1)
    J = sol.jac[:, 1:] if r_dc_fixed else sol.jac
    cov = np.linalg.pinv(J.T @ J, rcond=1e-12) * max(red, 1.0)
    sd = np.sqrt(np.clip(np.diag(cov), 0.0, None))
    rd, cp, _ = unpack(sol.x)
    if r_dc_fixed:
        return WindingParts(rd, math.nan, cp, cp * float(sd[0]), red)
    return WindingParts(rd, rd * float(sd[0]), cp, cp * float(sd[1]), red)

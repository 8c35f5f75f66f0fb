"""The model-error term of a circuit's uncertainties: the same circuit fitted over two halves of its band.

A circuit that is not the part's exact form can stay near the noise (a
reduced chi-square of 1.1, say) and still bias its parameters by many of
their standard uncertainties, which the reduced-chi-square scaling of the
least squares (`zfit.fit._lsq.refine`) barely widens: a skin-effect winding
fitted as a constant R_s moves L by 0.1 % where its uncertainty is 0.01 %.
A circuit that is the part's form gives the same parameters from any part
of the band, to within the uncertainty of the part used.

So the reported circuit is refitted, from its own values, over the lower and
the upper 60 % of its fitted band's log-frequency span.  For an efficient
estimator and a consistent one on a subset of the data, the difference has
the variance of the difference of their variances (Hausman 1978); for each
half, with ``d`` the difference of the log-values, ``H = d^T (V_half - V_full)^+ d``
is chi-square with as many degrees of freedom as the rank of the difference.
Only the parameters the half determines well (relative uncertainty below
10 %) enter: one it barely sees strays there beyond its linearised
uncertainty.  Where H exceeds its 99.9 % point
the model's form shows through, and each parameter's squared bias, what
``d^2`` exceeds its own chance variance by, is added to its log-variance,
the larger of the two halves'.  Everything derived from the circuit (SRF, Q, spot
readouts) inherits the widened covariance.

References
----------
.. [1] J. A. Hausman, "Specification tests in econometrics",
   Econometrica 46(6), 1251-1271, 1978, doi:10.2307/1913827.
.. [2] R. T. Birge, "The calculation of errors by the method of least
   squares", Phys. Rev. 40(2), 207-227, 1932 (the reduced-chi-square
   scaling applied first).
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np
from scipy.special import chdtri

from .._errors import FitError

if TYPE_CHECKING:
    from ..fit._lsq import Observation, Prior, Refinement

__all__ = ["SplitBandCheck", "split_band_check", "split_band_note"]

# Each half spans this fraction of the fitted band's log-frequency span.
_HALF_SPAN = 0.6
# The joint test of a half rejects the circuit's form at this level: one in
# a thousand halves of a part the circuit describes exactly widens its
# uncertainties (a lot of a few hundred exact parts keeps its verdicts).
_ALPHA = 1e-3
# A parameter enters the test of a half where the half determines it to this
# relative uncertainty: a weakly determined one (C_p from the low end of a
# coil's sweep, at 20 %) strays beyond its linearised uncertainty there.
_RESOLVED = 0.1


def _hausman(d, v) -> tuple[float, int]:
    """Return ``d^T V^+ d`` and the rank of V (its degrees of freedom), V the difference of covariances."""
    w, u = np.linalg.eigh(0.5 * (v + v.T))
    keep = w > 1e-12 * max(float(np.max(np.abs(w))), 1e-300)
    if not keep.any():
        return 0.0, 0
    proj = u[:, keep].T @ d
    return float(np.sum(proj**2 / w[keep])), int(keep.sum())


@dataclass(frozen=True)
class SplitBandCheck:
    """The circuit refitted over the lower and upper part of its band.

    Attributes
    ----------
    refinement : Refinement
        The reported circuit with the model-error variance added to its
        log-covariance (the circuit itself unchanged where nothing was added).
    widened : tuple of (str, float)
        ``(key, factor)`` of each parameter whose uncertainty was widened,
        the factor by which its standard uncertainty grew.
    halves : int
        How many halves could be refitted (0, 1 or 2).
    """

    refinement: Refinement
    widened: tuple
    halves: int

    def to_dict(self) -> dict:
        """Return the ``split_band_check`` object of the JSON contract."""
        return {"halves_refitted": self.halves, "widened": {k: float(x) for k, x in self.widened},
                "method": "Hausman difference of the fits over the lower and upper 60 % of the band"}


def split_band_check(chosen: Refinement, obs: Observation, mask=None, prior: Prior | None = None) -> SplitBandCheck:
    """Return the circuit with its model-error term (module notes).

    Parameters
    ----------
    chosen : Refinement
        The reported circuit fit.
    obs : Observation
        The full sweep as the circuits see it.
    mask : array_like of bool, optional
        The points the circuit was fitted to (all by default).
    prior : Prior, optional
        The measured DC resistance the fit used.
    """
    from ..fit._lsq import refine

    n = obs.f_hz.size
    fitted = np.ones(n, bool) if mask is None else np.asarray(mask, bool)
    logf = np.log(obs.f_hz)
    lo, hi = float(logf[fitted].min()), float(logf[fitted].max())
    span = hi - lo
    k = chosen.circuit.n_params
    min_pts = max(10, 4 * k + 2)
    var_full = np.diag(chosen.log_cov)
    extra = np.zeros(k)
    halves = 0
    for half in (fitted & (logf <= lo + _HALF_SPAN * span), fitted & (logf >= hi - _HALF_SPAN * span)):
        if half.sum() < min_pts:
            continue
        try:
            sub = refine(chosen.circuit, obs.subset(half), [chosen.values], prior=prior, n_best=1, max_nfev=100)
        except (FitError, ValueError, ArithmeticError, np.linalg.LinAlgError):
            continue
        halves += 1
        with np.errstate(all="ignore"):
            d = np.log(sub.values) - np.log(chosen.values)
            # Both covariances on the full fit's noise scale: each was scaled by its own reduced chi-square.
            v = np.asarray(sub.log_cov, float) * (chosen.reduced_chi2 / sub.reduced_chi2) - np.asarray(chosen.log_cov, float)
        # Only what the half resolves is compared: an element it does not see wanders there.
        with np.errstate(all="ignore"):
            sel = np.isfinite(d) & (np.sqrt(np.clip(np.diag(sub.log_cov), 0.0, None)) < _RESOLVED)
        if not sel.any() or not np.all(np.isfinite(v[np.ix_(sel, sel)])):
            continue
        h, dof = _hausman(d[sel], v[np.ix_(sel, sel)])
        if dof and h > chdtri(dof, _ALPHA):
            # The squared bias: what the difference exceeds its own chance variance by.
            excess = np.where(sel, d**2 - np.clip(np.diag(v), 0.0, None), 0.0)
            extra = np.maximum(extra, np.where(np.isfinite(excess), excess, 0.0))
    if not np.any(extra > 0):
        return SplitBandCheck(chosen, (), halves)
    log_cov = np.array(chosen.log_cov, float)
    log_cov[np.diag_indices(k)] += extra
    with np.errstate(all="ignore"):
        factor = np.sqrt(np.diag(log_cov) / var_full)
    widened = tuple((key, float(factor[i])) for i, key in enumerate(chosen.circuit.keys) if extra[i] > 0)
    return SplitBandCheck(dataclasses.replace(chosen, log_cov=log_cov), widened, halves)


def split_band_note(check: SplitBandCheck, topology: str) -> str:
    """Return the warning that names the parameters whose uncertainty the split-band check widened."""
    what = ", ".join(f"{k} x{x:.2g}" for k, x in check.widened)
    return (f"the {topology} fitted over the lower and the upper part of its band disagrees beyond the "
            f"uncertainties on {what} (its form does not quite describe the part); those uncertainties include "
            "the difference")

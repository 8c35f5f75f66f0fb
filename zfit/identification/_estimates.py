"""The parameter estimates of a circuit fit: values, uncertainties, resolution, correlation.

Each parameter of the reported circuit becomes a `ParameterEstimate` with
its standard uncertainty from the fit's covariance and, where the sweep
comes near not resolving it, its resolution floor from `zfit.fit._fisher`
(the value at which the relative uncertainty predicted from the noise
model reaches 1/3).

References
----------
.. [1] S. M. Kay, *Fundamentals of Statistical Signal Processing:
   Estimation Theory*, Prentice Hall, 1993, ch. 3 (from memory).
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING

import numpy as np

from ._merit import ParameterEstimate
from ._result import ParameterMap

if TYPE_CHECKING:
    from ..data._sweep import Sweep
    from ..fit._lsq import Refinement

__all__ = ["parameter_estimates", "resolution_of", "correlation_of"]

# Resolution floors are solved in full only for parameters whose relative
# uncertainty from the noise model exceeds this (half the 1/3 threshold).
_RESOLUTION_SOLVE = 1.0 / 6.0


def parameter_estimates(ref: Refinement, sweep: Sweep, mask=None) -> ParameterMap:
    """Return the parameters of a fit with their uncertainties and resolution.

    Parameters
    ----------
    ref : Refinement
        The reported circuit fit.
    sweep : Sweep
        The measurement.
    mask : array_like of bool, optional
        The points the circuit was fitted to (all by default).
    """
    from ..fit._fisher import RESOLUTION_KIND

    stds = ref.stds
    floors = resolution_of(ref, sweep, mask)
    return ParameterMap(
        (k, ParameterEstimate(
            float(v), float(s) if math.isfinite(s) else None, ref.circuit.units[k],
            resolved=floors.get(k, (True, None))[0], resolution_limit=floors.get(k, (True, None))[1],
            limit_kind=RESOLUTION_KIND.get(k, "lower"),
        ))
        for k, v, s in zip(ref.circuit.keys, ref.values, stds)
    )


def resolution_of(ref: Refinement, sweep: Sweep, mask=None) -> dict:
    """Return ``{key: (resolved, floor)}`` for each parameter of a circuit fit.

    The resolution floor is that of `zfit.fit._fisher` (the value at which
    the parameter's relative uncertainty, predicted from the Fisher
    information of the sweep's noise model with the noise following the
    value, is 1/3; an upper limit for R_p and R_leak).  Solving for it costs
    several Fisher evaluations per parameter, so it is solved only where it
    matters: for a parameter whose relative uncertainty from the noise model
    (the fit's covariance without the reduced chi-square factor) exceeds
    `_RESOLUTION_SOLVE` (half the threshold).  A parameter below that is
    resolved by a wide margin and gets no floor (None): a first-order guess
    such as ``3 std`` would be wrong by decades for L or C, whose noise
    follows the value through the connection (measured: 1e-12 H against
    2e-11 H for a 100 nH coil in reflection), and solving costs more than
    the whole identification.

    Parameters
    ----------
    ref : Refinement
        The reported circuit fit.
    sweep : Sweep
        The measurement (frequencies, sigma, connection, noise model).
    mask : array_like of bool, optional
        The points the circuit was fitted to (all by default).
    """
    from ..fit._fisher import is_resolved, limits_for

    circuit = ref.circuit
    values = np.asarray(ref.values, float)
    red = ref.reduced_chi2 if math.isfinite(ref.reduced_chi2) and ref.reduced_chi2 > 0 else 1.0
    with np.errstate(all="ignore"):
        rel = np.sqrt(np.clip(np.diag(ref.log_cov), 0.0, None) / red)
    # Solving for a floor costs more than the whole identification: only for
    # the parameters whose uncertainty comes near it.
    needed = [key for i, key in enumerate(circuit.keys) if not (math.isfinite(rel[i]) and rel[i] < _RESOLUTION_SOLVE)]
    floors = {}
    sel = slice(None) if mask is None else np.asarray(mask, bool)
    for key in needed:
        try:
            floors.update(limits_for(
                circuit, circuit.mapping(values), np.asarray(sweep.f_hz, float)[sel],
                np.asarray(sweep.sigma_ohm, float)[sel], sweep.connection, sweep.reference_ohm, sweep.noise,
                keys=(key,),
            ))
        except (ValueError, ArithmeticError, np.linalg.LinAlgError):
            pass  # no floor for this parameter: reported as null
    out = {}
    for i, key in enumerate(circuit.keys):
        floor = floors.get(key)
        if floor is not None and not (math.isfinite(floor) and floor > 0):
            floor = None
        out[key] = (bool(is_resolved(key, float(values[i]), floor)), None if floor is None else float(floor))
    return out


def correlation_of(ref: Refinement) -> np.ndarray:
    """Return the correlation matrix of a fit's log-parameters."""
    c = ref.log_cov
    d = np.sqrt(np.clip(np.diag(c), 1e-300, None))
    corr = c / np.outer(d, d)
    return np.clip(corr, -1.0, 1.0)


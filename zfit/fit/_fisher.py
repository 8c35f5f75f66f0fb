"""What a sweep can resolve: resolution limits of circuit parameters.

Resolution limit
    For a circuit parameter ``p`` (``ESR``, ``R_s``, ``C_p``...), the value
    ``X`` at which the parameter's standard uncertainty, predicted from the
    Fisher information of the sweep's noise, equals a third of it:
    ``std(p = X) = X / 3``, the other parameters held at their estimates.
    Below ``X`` an estimate is mostly noise ("below resolution, < X").  The
    factor 3 is the usual three-sigma detection threshold (common practice).
    Parallel losses (``R_p``, ``R_leak``) vanish as they grow, so for them
    the limit is the *largest* resolvable value: a resistance above it
    cannot be told from an open ("not resolved, > X").  In logarithmic
    parameters the two cases are one: the relative uncertainty
    ``std(p)/p = std(1/p)/(1/p)`` reaches 1/3.

    The noise model follows the candidate value: for S-parameter sweeps the
    sweep's sigma is scaled by ``sigma_model(Z(X)) / sigma_model(Z_fit)``,
    where ``sigma_model`` carries the instrument noise through the
    connection (`zfit.data._connection.sigma_z_from_s`), so that a reflection
    measurement near the short circuit, or a shunt-thru measurement of a
    large impedance, counts for what it is worth at the candidate value too.

References
----------
.. [1] S. M. Kay, *Fundamentals of Statistical Signal Processing: Estimation
   Theory*, Prentice Hall, 1993, ch. 3 (Cramer-Rao bound, Fisher information
   for complex Gaussian data; recalled from memory).
.. [2] JCGM 100:2008 (GUM), section 5.1.2.
"""

from __future__ import annotations

import math

import numpy as np

from ..data._connection import NA_CONNECTIONS, InstrumentNoise, s_from_impedance, sigma_z_from_s
from .._units import format_eng
from .._parameters import PARAMETER_KEYS, RESOLUTION_KIND

__all__ = [
    "PARAMETER_KEYS",
    "RESOLUTION_KIND",
    "fisher_log_covariance",
    "fisher_uncertainties",
    "resolution_limits",
    "limits_for",
    "is_resolved",
    "resolution_entries",
    "unresolved_text",
    "sigma_at_impedance",
]

#: The relative uncertainty at the resolution limit.
_THRESHOLD = 1.0 / 3.0


def _circuit_of(model, params):
    """The circuit: `model` itself when it is one, else the family's circuit whose keys `params` has."""
    from ._circuits import Circuit, circuit_for

    return model if isinstance(model, Circuit) else circuit_for(model, params)


def _impedance(model, params, f):
    circuit = _circuit_of(model, params)
    return np.asarray(circuit.impedance(circuit.vector(params), np.asarray(f, dtype=float)), dtype=complex)


def fisher_log_covariance(model: str, params, f_hz, sigma_ohm):
    """Return the inverse Fisher information of a circuit's log-parameters.

    Parameters
    ----------
    model : {'inductor', 'capacitor'} or Circuit
        The equivalent circuit (`zfit.fit._circuits.circuit_impedance`), or
        a circuit itself.
    params : mapping
        Parameter values in SI units (the keys present choose the topology).
    f_hz : array_like
        Frequencies, Hz.
    sigma_ohm : array_like
        Standard uncertainty of each measured impedance, complex-circular
        (``sigma / sqrt(2)`` on each of Re and Im), ohm.

    Returns
    -------
    keys : tuple of str
        The circuit's parameters, in the order of the matrix.
    log_cov : numpy.ndarray
        Covariance of ``ln(theta)``; rows and columns of a parameter the
        sweep does not determine are ``inf``.

    Notes
    -----
    For data ``Z_k = Z(f_k; theta) + e_k`` with independent circular Gaussian
    ``e_k`` of variance ``sigma_k^2``, the Fisher information is
    ``F = 2 Re(J^H diag(1/sigma^2) J)`` with ``J = dZ/d ln(theta)`` (the
    circuit's analytic log-Jacobian); its inverse is the covariance an
    efficient (weighted least-squares) estimator reaches, the Cramer-Rao
    bound.

    References
    ----------
    .. [1] S. M. Kay, *Fundamentals of Statistical Signal Processing:
       Estimation Theory*, Prentice Hall, 1993, sec. 15.7 (complex data;
       from memory).
    """
    circuit = _circuit_of(model, params)
    keys = circuit.keys
    theta = circuit.vector(params)
    f = np.asarray(f_hz, dtype=float)
    w = 1.0 / np.asarray(sigma_ohm, dtype=float) ** 2
    j = circuit.log_jacobian(theta, f)
    fisher = 2.0 * np.real(j.conj().T @ (w[:, None] * j))
    # Scaled to unit diagonal so that parameters decades apart invert cleanly;
    # an element the sweep does not see at all gets an infinite uncertainty.
    d = np.sqrt(np.clip(np.diag(fisher), 0.0, None))
    good = np.isfinite(d) & (d > 0)
    cov = np.full((len(keys), len(keys)), np.inf)
    if good.any():
        fg = fisher[np.ix_(good, good)] / np.outer(d[good], d[good])
        if np.all(np.isfinite(fg)):
            try:
                inv = np.linalg.inv(fg)
            except np.linalg.LinAlgError:
                inv = None
            # A (near-)singular information leaves a parameter undetermined:
            # its inverse diagonal is huge, negative or not finite.
            if inv is not None and np.all(np.isfinite(inv)) and np.all(np.diag(inv) > 0) and np.max(np.diag(inv)) < 1e15:
                cov[np.ix_(good, good)] = inv / np.outer(d[good], d[good])
    return keys, cov


def fisher_uncertainties(model: str, params, f_hz, sigma_ohm) -> dict[str, float]:
    """Return each parameter's standard uncertainty from the Fisher information.

    Parameters
    ----------
    model : {'inductor', 'capacitor'}
        The equivalent circuit (`zfit.fit._circuits.circuit_impedance`).
    params : mapping
        Parameter values in SI units (the keys present choose the topology).
    f_hz : array_like
        Frequencies, Hz.
    sigma_ohm : array_like
        Standard uncertainty of each measured impedance, complex-circular, ohm.

    Returns
    -------
    dict
        ``{key: std}`` in the parameter's unit (``value * std(ln value)``,
        first order); ``inf`` for a parameter the sweep does not determine
        (see `fisher_log_covariance`).
    """
    keys, cov = fisher_log_covariance(model, params, f_hz, sigma_ohm)
    out = {}
    for i, k in enumerate(keys):
        var = cov[i, i]
        out[k] = float(abs(float(params[k])) * math.sqrt(var)) if np.isfinite(var) and var >= 0 else math.inf
    return out


def sigma_at_impedance(z, connection, z0, noise):
    """Return the noise model's sigma of Z (ohm) were the part's impedance `z`.

    The one "sigma at the model": for an analyser connection the
    instrument noise on S at the S that `z` would give, carried to Z
    through the connection (`zfit.data._connection.sigma_z_from_s`); for
    an impedance table the noise model applied to `z` itself.  None
    without a noise model.

    Parameters
    ----------
    z : array_like of complex
        Model impedances in ohm.
    connection : str
        How the part was connected.
    z0 : float
        Reference impedance in ohm (analyser connections).
    noise : InstrumentNoise or None
        The sweep's noise model.
    """
    if noise is None:
        return None
    if connection in NA_CONNECTIONS:
        return sigma_z_from_s(s_from_impedance(z, connection, z0), connection, z0, noise)
    return noise.sigma(z)


def _fit_points(sweep, identification):
    f = np.asarray(sweep.f_hz, dtype=float)
    fit = getattr(identification, "fit", None)
    band = getattr(fit, "fitted_band_hz", None)
    lo, hi = band if band is not None else (getattr(fit, "f_min_hz", None), getattr(fit, "f_max_hz", None))
    keep = np.ones(f.size, bool)
    if lo is not None:
        keep &= f >= float(lo) * (1 - 1e-12)
    if hi is not None:
        keep &= f <= float(hi) * (1 + 1e-12)
    if keep.sum() < 3:
        keep[:] = True
    return keep


def _params_of(identification):
    keys = PARAMETER_KEYS.get(getattr(identification, "model", None), ())
    return {k: float(identification.parameters[k].value) for k in keys if k in identification.parameters}


def resolution_limits(sweep, identification) -> dict[str, float | None]:
    """Return the resolution limit of each circuit parameter of `identification`.

    Parameters
    ----------
    sweep : Sweep
        The measurement that was identified (its frequencies, sigma,
        connection and noise model).
    identification : Identification
        The result of `zfit.identify` on it.

    Returns
    -------
    dict
        ``{key: limit}`` in the parameter's unit: the value at which the
        parameter's predicted uncertainty is a third of it (module notes).
        For ``R_p`` and ``R_leak`` the limit is an upper bound
        (`RESOLUTION_KIND`).  None where no value within 15 decades of the
        estimate reaches the threshold, or for a rational model (no circuit).

    References
    ----------
    .. [1] S. M. Kay, *Fundamentals of Statistical Signal Processing:
       Estimation Theory*, Prentice Hall, 1993, ch. 3 (from memory).
    """
    params = _params_of(identification)
    if not params:
        return {}
    keep = _fit_points(sweep, identification)
    return limits_for(
        identification.model, params, np.asarray(sweep.f_hz)[keep], np.asarray(sweep.sigma_ohm)[keep],
        sweep.connection, sweep.reference_ohm, sweep.noise,
    )


def limits_for(model, params, f_hz, sigma_ohm, connection="impedance", reference_ohm=None, noise=None, keys=None):
    """Return the resolution limit of each parameter of a circuit measured as described.

    The pure computation behind `resolution_limits`, also used by the planner.

    Parameters
    ----------
    model : {'inductor', 'capacitor'} or Circuit
        The equivalent circuit: a family (the keys of `params` choose its
        topology) or a circuit itself (the loss models of
        `zfit.fit._loss_circuits`).
    params : mapping
        Parameter values in SI units (the point at which the limits are taken).
    f_hz, sigma_ohm : array_like
        Frequencies (Hz) and standard uncertainties (ohm, circular) of the
        points that carry the information.
    connection : str
        How the impedance is measured (decides how sigma moves with Z).
    reference_ohm : float, optional
        Reference impedance of S-parameter data (50 ohm when None).
    noise : InstrumentNoise, optional
        The instrument noise; None keeps sigma fixed while the value moves
        (the analyser default is assumed for S-parameter connections).
    keys : iterable of str, optional
        Solve only for these parameters (each solve costs a few Fisher
        evaluations); all of them when None.

    Returns
    -------
    dict
        ``{key: limit or None}`` as for `resolution_limits`.
    """
    f = np.asarray(f_hz, dtype=float)
    sigma = np.asarray(sigma_ohm, dtype=float)
    own = _circuit_of(model, params).keys if not isinstance(model, str) else PARAMETER_KEYS[model]
    params = {k: float(v) for k, v in params.items() if k in own and v is not None and np.isfinite(v)}
    z0 = 50.0 if reference_ohm is None else float(reference_ohm)
    if noise is None and connection in NA_CONNECTIONS:
        noise = InstrumentNoise()
    base = sigma_at_impedance(_impedance(model, params, f), connection, z0, noise)

    def rel_std(key, x):
        p = dict(params)
        p[key] = x
        sig = sigma
        if base is not None:
            with np.errstate(all="ignore"):
                sig = sigma * sigma_at_impedance(_impedance(model, p, f), connection, z0, noise) / base
        if not np.all(np.isfinite(sig) & (sig > 0)):
            return math.inf
        return fisher_uncertainties(model, p, f, sig)[key] / x

    out = {}
    for key, value in params.items():
        if keys is not None and key not in keys:
            continue
        out[key] = _limit(lambda x, key=key: rel_std(key, x), abs(value) if value != 0 else 1e-3, RESOLUTION_KIND[key])
    return out


def _limit(rel_std, x0, kind):
    """Solve ``rel_std(x) = 1/3`` for x > 0, starting at `x0`.

    First by fixed-point iteration on the absolute uncertainty of ``x``
    (lower kind) or of ``1/x`` (upper kind), which is nearly independent of
    the value when the noise does not follow it: ``x <- x * 3 rel_std(x)``
    (or ``x <- x / (3 rel_std(x))``), a few evaluations.  Where that does
    not settle, by bracketing in decades and Brent's method on ``log x``.
    """
    from scipy.optimize import brentq

    sign = 1.0 if kind == "lower" else -1.0
    x = x0
    for _ in range(8):
        r = rel_std(x)
        if not (np.isfinite(r) and r > 0):
            break
        step = sign * math.log(3.0 * r)
        if abs(step) > math.log(1e3):
            break
        x = x * math.exp(step)
        if abs(step) < 1e-4:
            return float(x)

    def g(lx):
        r = rel_std(math.exp(lx))
        return math.log(3.0 * r) if np.isfinite(r) and r > 0 else 50.0

    lx0 = math.log(x0)
    g0 = g(lx0)
    # Lower kind: the relative uncertainty falls as the value grows; upper kind: it rises.
    step = math.log(10.0) * ((1 if g0 > 0 else -1) if kind == "lower" else (-1 if g0 > 0 else 1))
    a, ga = lx0, g0
    for _ in range(15):
        b = a + step
        gb = g(b)
        if (ga > 0) != (gb > 0):
            root = brentq(g, min(a, b), max(a, b), xtol=1e-3)
            return float(math.exp(root))
        a, ga = b, gb
    return None


def is_resolved(key: str, value: float, limit: float | None) -> bool:
    """Return whether an estimate `value` of parameter `key` is resolved.

    Parameters
    ----------
    key : str
        Parameter name (``"ESR"``, ``"R_leak"``...).
    value : float
        The estimate.
    limit : float or None
        Its resolution limit from `resolution_limits`; None counts as resolved.
    """
    if limit is None or not np.isfinite(value):
        return limit is None
    if RESOLUTION_KIND.get(key, "lower") == "upper":
        return abs(value) <= limit
    return abs(value) >= limit


def resolution_entries(sweep, identification) -> dict[str, dict]:
    """Return the JSON additions of each parameter: resolved or not, and the limit.

    Parameters
    ----------
    sweep : Sweep
        The measurement.
    identification : Identification
        Its identification.

    Returns
    -------
    dict
        ``{key: {"resolved": bool, "resolution_limit": float or None}}`` for
        every circuit parameter (empty for a rational model), ready to merge
        into the ``parameters`` entries of the ``zfit.identify/1`` JSON.
    """
    limits = resolution_limits(sweep, identification)
    out = {}
    for key, limit in limits.items():
        value = float(identification.parameters[key].value)
        out[key] = {
            "resolved": bool(is_resolved(key, value, limit)),
            "resolution_limit": None if limit is None or not math.isfinite(limit) else float(limit),
        }
    return out


def unresolved_text(key: str, limit: float, unit: str = "") -> str:
    """Return what the table prints for an unresolved parameter.

    Parameters
    ----------
    key : str
        Parameter name.
    limit : float
        Its resolution limit.
    unit : str
        Its unit.

    Returns
    -------
    str
        ``"below resolution, < 4.5m ohm"``, or for ``R_p`` / ``R_leak``
        ``"not resolved, > 1.9M ohm"``.
    """
    if RESOLUTION_KIND.get(key, "lower") == "upper":
        return f"not resolved, > {format_eng(limit, unit)}"
    return f"below resolution, < {format_eng(limit, unit)}"

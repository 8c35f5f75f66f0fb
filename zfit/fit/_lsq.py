"""Weighted nonlinear least squares of an equivalent circuit, with covariance.

The unknowns are the logarithms of the element values, so every element
stays positive (and the circuit passive) without bounds that would distort
the covariance.  Each point contributes two residual rows,
``sqrt(2) Re(Z_model - Z) / sigma`` and ``sqrt(2) Im(Z_model - Z) / sigma``:
``sigma`` is complex-circular (``sigma/sqrt(2)`` on each of Re and Im), so each
row has unit variance when the noise model is right.  A measured DC
resistance enters as one more row, ``(R - R_dc) / u(R_dc)``.

The covariance of the log-parameters is ``(J^T J)^-1`` with the data rows
scaled by the reduced chi-square ``s^2 = chi^2 / (2N - k)`` (the usual
weighted-least-squares estimate when the noise level is known only up to a
factor), the prior row not scaled (its uncertainty is what the user stated).

References
----------
.. [1] W. H. Press, S. A. Teukolsky, W. T. Vetterling and B. P. Flannery,
   *Numerical Recipes*, 3rd ed., Cambridge University Press, 2007,
   section 15.5 (nonlinear models, covariance from the Jacobian).
.. [2] JCGM 100:2008, *Evaluation of measurement data -- Guide to the
   expression of uncertainty in measurement*, section 5.1 (propagation).
.. [3] D. W. Marquardt, "An algorithm for least-squares estimation of
   nonlinear parameters", J. SIAM 11(2), 431-441, 1963,
   doi:10.1137/0111030 (the minimiser, `_levenberg_marquardt`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .._errors import FitError
from ..data._connection import NA_CONNECTIONS, ds_dz, impedance_from_s, s_from_impedance
from ._circuits import Circuit

__all__ = ["Observation", "Prior", "best_start_chi2", "Refinement", "refine", "log_gradient", "optional_element_gain"]

_SQRT2 = math.sqrt(2.0)
# Log-parameters may move at most this far from their start (e^25 ~ 7e10):
# wide enough for any guess, narrow enough that an unresolved element
# cannot run off to 1e-300.
_LOG_SPAN = 25.0


@dataclass(frozen=True)
class Observation:
    """The data a circuit is fitted to, in the domain where the noise is Gaussian.

    For a network-analyser sweep whose impedances still follow from its
    S-parameters, the residuals are taken on S (``(S_model - S) / sigma_S``):
    where the part's impedance sits in the small difference ``1 - S`` (a
    kilohm-level peak in shunt-thru, milliohms in series-thru), the
    first-order propagation of the analyser's noise to Z no longer holds,
    the measured Z is biased and heavy-tailed, and a Z-domain fit would
    trust those points far too much.  Elsewhere the two are the same to first
    order.  Tables and captures are fitted on Z with the sweep's sigma.

    Attributes
    ----------
    f_hz, z_ohm, sigma_ohm : numpy.ndarray
        The sweep (or the part of it that is used).
    connection : str or None
        The analyser connection when fitting on S, else None.
    z0 : float or None
        Reference impedance when fitting on S.
    s : numpy.ndarray or None
        The measured S11 or S21 when fitting on S.
    sigma_s : numpy.ndarray or None
        Its complex-circular standard uncertainty.
    """

    f_hz: np.ndarray
    z_ohm: np.ndarray
    sigma_ohm: np.ndarray
    connection: str | None = None
    z0: float | None = None
    s: np.ndarray | None = None
    sigma_s: np.ndarray | None = None

    @classmethod
    def from_sweep(cls, sweep, mask=None) -> "Observation":
        """Return the observation of a `Sweep` (on S when that is sound).

        Parameters
        ----------
        sweep : Sweep
            The measurement.
        mask : array_like of bool, optional
            The points to use (all by default).
        """
        sel = slice(None) if mask is None else np.asarray(mask, bool)
        f, z, sig = sweep.f_hz[sel], sweep.z_ohm[sel], sweep.sigma_ohm[sel]
        s = sweep.s_param
        if (
            s is not None and sweep.noise is not None and sweep.reference_ohm is not None
            and sweep.connection in NA_CONNECTIONS
        ):
            s = np.asarray(s)[sel]
            with np.errstate(all="ignore"):
                zs = impedance_from_s(s, sweep.connection, sweep.reference_ohm)
            # Only when Z still is the plain conversion of S (no fixture correction since).
            if np.all(np.isfinite(zs)) and np.allclose(zs, z, rtol=1e-7, atol=0.0):
                return cls(f, z, sig, sweep.connection, float(sweep.reference_ohm), s, sweep.noise.sigma(s))
        return cls(f, z, sig)

    @property
    def on_s(self) -> bool:
        """Whether residuals are taken on S."""
        return self.connection is not None

    def subset(self, mask) -> "Observation":
        """Return the observation restricted to the points in `mask`.

        Parameters
        ----------
        mask : array_like of bool
            The points to keep.
        """
        m = np.asarray(mask, bool)
        pick = lambda a: None if a is None else a[m]  # noqa: E731
        return Observation(self.f_hz[m], self.z_ohm[m], self.sigma_ohm[m], self.connection, self.z0, pick(self.s), pick(self.sigma_s))

    def _s_and_slope(self, z_model):
        """The S the model predicts and dS/dZ there."""
        return (s_from_impedance(z_model, self.connection, self.z0),
                ds_dz(z_model, self.connection, self.z0))

    def normalized(self, z_model) -> np.ndarray:
        """Return the complex normalised residual of a model impedance.

        ``(S_model - S) / sigma_S`` on S, ``(Z_model - Z) / sigma`` on Z; its
        squared magnitude has mean 1 per point for a right model.

        Parameters
        ----------
        z_model : array_like of complex
            The model's impedance at `f_hz`.
        """
        z_model = np.asarray(z_model, complex)
        if self.on_s:
            sm, _ = self._s_and_slope(z_model)
            return (sm - self.s) / self.sigma_s
        return (z_model - self.z_ohm) / self.sigma_ohm

    def slope(self, z_model) -> np.ndarray:
        """Return d(normalised residual)/dZ_model at each point.

        Parameters
        ----------
        z_model : array_like of complex
            The model's impedance at `f_hz`.
        """
        if self.on_s:
            _, ds = self._s_and_slope(np.asarray(z_model, complex))
            return ds / self.sigma_s
        return 1.0 / self.sigma_ohm


@dataclass(frozen=True)
class Prior:
    """An independent measurement of one parameter (e.g. a four-wire R_dc).

    Attributes
    ----------
    key : str
        The parameter it constrains (``R_s`` or ``ESR``).
    value : float
        The measured value in SI units.
    std : float
        Its standard uncertainty.
    """

    key: str
    value: float
    std: float


@dataclass(frozen=True)
class Refinement:
    """The result of refining a circuit.

    Attributes
    ----------
    circuit : Circuit
        The circuit that was fitted.
    values : numpy.ndarray
        Best element values in `circuit.keys` order, SI units.
    log_cov : numpy.ndarray
        Covariance of the natural logarithms of the values.
    chi2 : float
        Sum of squared normalised data residual rows (prior row excluded).
    rows : int
        Number of data residual rows (twice the points used).
    rms_normalized_residual : float
        RMS over the points used of ``|Z_model - Z| / sigma``.
    reduced_chi2 : float
        ``chi2 / (rows - n_params)``.
    starts : int
        How many starting points were tried.
    nfev : int
        Function evaluations over all starts.
    prior_pull : float or None
        ``(value - prior) / prior std`` of the constrained parameter at the
        optimum, None without a prior.
    """

    circuit: Circuit
    values: np.ndarray
    log_cov: np.ndarray
    chi2: float
    rows: int
    rms_normalized_residual: float
    reduced_chi2: float
    starts: int
    nfev: int
    prior_pull: float | None = None

    def __post_init__(self):
        for name in ("values", "log_cov"):
            a = np.array(getattr(self, name), dtype=float)
            a.flags.writeable = False
            object.__setattr__(self, name, a)

    @property
    def stds(self) -> np.ndarray:
        """Standard uncertainty of each value (first order: ``value * std(ln value)``)."""
        return self.values * np.sqrt(np.clip(np.diag(self.log_cov), 0.0, None))

    @property
    def cov(self) -> np.ndarray:
        """Covariance of the values themselves (first order)."""
        return self.log_cov * np.outer(self.values, self.values)

    def impedance(self, f_hz) -> np.ndarray:
        """Return the fitted circuit's impedance at `f_hz`.

        Parameters
        ----------
        f_hz : array_like
            Frequencies in Hz.
        """
        return self.circuit.impedance(self.values, f_hz)

    def std_of(self, fn) -> float:
        """Return the standard uncertainty of a derived figure ``fn(values)``.

        First-order propagation through a central-difference gradient in the
        log-parameters (JCGM 100:2008, 5.1.2).

        Parameters
        ----------
        fn : callable
            Maps a parameter vector to a float.
        """
        g = log_gradient(fn, self.values)
        if g is None:
            return math.nan
        return float(math.sqrt(max(g @ self.log_cov @ g, 0.0)))


def log_gradient(fn, values, step: float = 1e-6):
    """Return ``d fn / d ln(p_k)`` by central differences, or None if fn fails.

    Parameters
    ----------
    fn : callable
        Maps a parameter vector to a float (may return None where undefined).
    values : array_like
        The parameter vector.
    step : float
        Relative step in each parameter.
    """
    values = np.asarray(values, float)
    g = np.empty(values.size)
    for k in range(values.size):
        up, dn = values.copy(), values.copy()
        up[k] *= math.exp(step)
        dn[k] *= math.exp(-step)
        a, b = fn(up), fn(dn)
        if a is None or b is None:
            return None
        g[k] = (a - b) / (2.0 * step)
    return g


def _rows(theta, circuit, obs, prior_index, prior):
    p = np.exp(theta)
    d = obs.normalized(circuit.impedance(p, obs.f_hz)) * _SQRT2
    r = np.concatenate([d.real, d.imag])
    if prior is not None:
        r = np.append(r, (p[prior_index] - prior.value) / prior.std)
    return r


def _jac(theta, circuit, obs, prior_index, prior):
    p = np.exp(theta)
    zm = circuit.impedance(p, obs.f_hz)
    j = circuit.log_jacobian(p, obs.f_hz) * (_SQRT2 * obs.slope(zm))[:, None]
    out = np.concatenate([j.real, j.imag], axis=0)
    if prior is not None:
        row = np.zeros((1, theta.size))
        row[0, prior_index] = p[prior_index] / prior.std
        out = np.concatenate([out, row], axis=0)
    return out


class _Problem:
    """Residuals and Jacobian of one circuit on one observation, sharing work.

    The model impedance, the S-parameter slope and the residual of the last
    point evaluated are kept, so that the Jacobian at an accepted point costs
    no second evaluation of the model; the normal equations are formed from
    the complex rows directly (``J^T J = Re(J_c^H J_c)``), never stacking
    real and imaginary parts.
    """

    def __init__(self, circuit, obs, prior_index, prior):
        self.circuit, self.obs, self.prior_index, self.prior = circuit, obs, prior_index, prior
        self._theta = None

    def cost(self, theta):
        """Return 0.5 * (sum of squared rows) at `theta` (inf where not finite)."""
        p = np.exp(theta)
        zm = self.circuit.impedance(p, self.obs.f_hz)
        obs = self.obs
        if obs.on_s:
            sm, ds = obs._s_and_slope(zm)
            d = (sm - obs.s) / obs.sigma_s
            slope = ds / obs.sigma_s
        else:
            d = (zm - obs.z_ohm) / obs.sigma_ohm
            slope = 1.0 / obs.sigma_ohm
        c = 2.0 * float(np.vdot(d, d).real)
        if self.prior is not None:
            c += ((p[self.prior_index] - self.prior.value) / self.prior.std) ** 2
        self._theta, self._p, self._d, self._slope = theta.copy(), p, d, slope
        return 0.5 * c if math.isfinite(c) else math.inf

    def normal(self, theta):
        """Return (J^T J, J^T r) at `theta` (the point last given to `cost`, or evaluated anew)."""
        if self._theta is None or not np.array_equal(theta, self._theta):
            self.cost(theta)
        p = self._p
        jc = self.circuit.log_jacobian(p, self.obs.f_hz) * self._slope[:, None]
        a = 2.0 * (jc.conj().T @ jc).real
        g = 2.0 * (jc.conj().T @ self._d).real
        if self.prior is not None:
            k = self.prior_index
            row = p[k] / self.prior.std
            a[k, k] += row * row
            g[k] += row * (p[k] - self.prior.value) / self.prior.std
        return a, g


@dataclass(frozen=True)
class _Solution:
    x: np.ndarray
    cost: float
    nfev: int


def _levenberg_marquardt(problem, theta0, lower, upper, max_nfev, xtol=1e-8, ftol=1e-8, gtol=1e-8):
    """Minimise the problem's cost from `theta0` within box bounds.

    Levenberg-Marquardt with Marquardt's scaling of the damping by the
    diagonal of the normal matrix (the log-parameters' curvatures span
    decades) and Nielsen's update of it (gain ratio of actual to predicted
    decrease), inside a trust region on the largest component of the step:
    1 at first (a factor e on an element value), doubled after a step the
    model predicted well, halved after a rejected one.  A parameter the
    data barely see cannot then leap decades on one step onto a plateau
    where its gradient vanishes.  A step that leaves the box is clipped to it.  It stops as
    ``scipy.optimize.least_squares`` does: relative cost change below
    `ftol` on an accepted step, step below ``xtol * (xtol + |x|)``, or the
    gradient small against the residual (cosine below `gtol`).  For a
    handful of parameters and thousands of rows it is several times cheaper
    than a general trust-region solver: one model evaluation per step and
    normal equations of the size of the parameter vector.

    References
    ----------
    .. [1] D. W. Marquardt, "An algorithm for least-squares estimation of
       nonlinear parameters", J. SIAM 11(2), 431-441, 1963,
       doi:10.1137/0111030.
    .. [2] H. B. Nielsen, "Damping parameter in Marquardt's method",
       IMM-REP-1999-05, Technical University of Denmark, 1999.
    """
    x = np.clip(np.asarray(theta0, float), lower, upper)
    cost = problem.cost(x)
    nfev = 1
    if not math.isfinite(cost):
        return _Solution(x, cost, nfev)
    a, g = problem.normal(x)
    mu = 1e-3
    nu = 2.0
    radius = 1.0
    while nfev < max_nfev:
        if not np.all(np.isfinite(a)):
            break
        d = np.sqrt(np.maximum(np.diag(a), 1e-300))
        if np.max(np.abs(g) / d) <= gtol * math.sqrt(max(2.0 * cost, 1e-300)):
            break
        try:
            step = np.linalg.solve(a + mu * np.diag(d * d), -g)
        except np.linalg.LinAlgError:
            mu = max(mu, 1e-300) * nu
            nu *= 2.0
            continue
        big = float(np.max(np.abs(step)))
        if big > radius:
            step *= radius / big
        xn = np.clip(x + step, lower, upper)
        step = xn - x
        if np.linalg.norm(step) <= xtol * (xtol + np.linalg.norm(x)):
            break
        cn = problem.cost(xn)
        nfev += 1
        pred = -(g @ step + 0.5 * step @ a @ step)
        rho = (cost - cn) / pred if pred > 0 else -1.0
        if math.isfinite(cn) and cn < cost and rho > 0:
            done = (cost - cn) <= ftol * cost
            x, cost = xn, cn
            a, g = problem.normal(x)
            mu *= max(1.0 / 3.0, 1.0 - (2.0 * rho - 1.0) ** 3)
            nu = 2.0
            if rho > 0.75:
                radius = min(2.0 * radius, 1e3)
            if done:
                break
        else:
            mu = max(mu, 1e-300) * nu
            nu *= 2.0
            radius = max(0.5 * radius, 1e-12)
            if mu > 1e300:
                break
    return _Solution(x, cost, nfev)


def best_start_chi2(circuit: Circuit, obs: "Observation", starts, *, prior: "Prior | None" = None) -> float:
    """Return the lowest chi-square among starting points, without refining any.

    Parameters
    ----------
    circuit : Circuit
        The equivalent circuit.
    obs : Observation
        The data.
    starts : sequence of array_like
        Parameter vectors (SI units, positive).
    prior : Prior, optional
        An independent measurement of one parameter.
    """
    prior_index = None if prior is None else circuit.keys.index(prior.key)
    best = math.inf
    for p0 in starts:
        p0 = np.asarray(p0, float)
        if p0.shape != (circuit.n_params,) or not np.all(np.isfinite(p0)) or np.any(p0 <= 0):
            continue
        with np.errstate(all="ignore"):
            r = _rows(np.log(p0), circuit, obs, prior_index, prior)
        c = float(r @ r)
        if math.isfinite(c):
            best = min(best, c)
    return best


def optional_element_gain(ref: "Refinement", obs: "Observation", prior: "Prior | None" = None) -> float:
    """Return the chi-square drop that the family's optional element could bring, to first order.

    The score (Lagrange-multiplier) test of Rao (1948) at the base fit: the
    optional element enters as a conductance ``G >= 0`` (``G = 1/R_p`` across
    the inductor, ``G = 1/R_leak`` across the capacitance), which is zero in
    the base circuit.  The model is linearised in ``G`` and in the base
    log-parameters at the fitted point; the best non-negative step of the
    linearised problem lowers chi-square by ``(j_G' r)^2 / |j_G'|^2``, with
    ``j_G'`` the Jacobian column of ``G`` with the base columns projected
    out and ``r`` the residual rows (already orthogonal to the base columns
    at the optimum).  Zero when the data pull ``G`` negative.

    Parameters
    ----------
    ref : Refinement
        The fit of the family's base circuit (no optional element).
    obs : Observation
        The data it was fitted to.
    prior : Prior, optional
        The prior measurement used in that fit.

    References
    ----------
    .. [1] C. R. Rao, "Large sample tests of statistical hypotheses
       concerning several parameters with applications to problems of
       estimation", Proc. Cambridge Philos. Soc. 44(1), 50-57, 1948,
       doi:10.1017/S0305004100023987.
    """
    circuit = ref.circuit
    if circuit.optional is not None:
        raise FitError(f"{circuit.topology} already has its optional element")
    theta = np.log(np.asarray(ref.values, float))
    prior_index = None if prior is None else circuit.keys.index(prior.key)
    problem = _Problem(circuit, obs, prior_index, prior)
    problem.cost(theta)
    p, d, slope = problem._p, problem._d, problem._slope
    zm = circuit.impedance(p, obs.f_hz)
    if circuit.family == "inductor":
        dz = -zm * zm
    else:
        zc = 1.0 / (1j * 2.0 * math.pi * obs.f_hz * p[0])
        dz = -zc * zc
    # Inner products of the real rows from the complex ones: u.v = 2 Re(u_c^H v_c)
    # (rows sqrt(2) Re, sqrt(2) Im); the prior row has no G component.
    jg = slope * dz
    jc = circuit.log_jacobian(p, obs.f_hz) * slope[:, None]
    with np.errstate(all="ignore"):
        a, g = problem.normal(theta)
        jg_j = 2.0 * (jc.conj().T @ jg).real
        jg_r = 2.0 * float(np.vdot(jg, d).real)
        jg_jg = 2.0 * float(np.vdot(jg, jg).real)
        try:
            sol = np.linalg.solve(a, np.column_stack([jg_j, g]))
        except np.linalg.LinAlgError:
            return math.inf
        # Projections of j_G and r off the base columns: j_G'.r = j_G.r - j_G.J a^-1 J.r, |j_G'|^2 likewise.
        num = jg_r - float(jg_j @ sol[:, 1])
        den = jg_jg - float(jg_j @ sol[:, 0])
    if not (math.isfinite(num) and math.isfinite(den)) or den <= 1e-12 * max(jg_jg, 1e-300):
        return math.inf
    # G >= 0: the step -num/den must be positive.
    return num * num / den if num < 0 else 0.0


def refine(
    circuit: Circuit, obs: Observation, starts, *, extra_starts=None, prior: Prior | None = None, n_best: int = 3,
    max_nfev: int = 200,
) -> Refinement:
    """Return the weighted least-squares fit of `circuit` to a sweep.

    The starting points are ranked by their cost; the `n_best` lowest are
    refined (stopping as soon as one reaches the noise), then, if none did,
    the same with `extra_starts`; refinement is by Levenberg-Marquardt (analytic Jacobian,
    box bounds of +-25 around the start) in log-parameters, and the refined one with the
    lowest cost is kept.

    Parameters
    ----------
    circuit : Circuit
        The equivalent circuit.
    obs : Observation
        The data (see `Observation.from_sweep`).
    starts : sequence of array_like
        Initial parameter vectors (SI units, positive).
    extra_starts : sequence of array_like or callable, optional
        Further starts (or a function returning them), ranked and refined
        only if no fit from `starts` reaches the noise.
    prior : Prior, optional
        An independent measurement of one parameter.
    n_best : int
        How many of the best-ranked starts are refined.
    max_nfev : int
        Largest number of function evaluations per start.

    Raises
    ------
    FitError
        When no start is usable or there are fewer residual rows than
        parameters.
    """
    k = circuit.n_params
    rows = 2 * obs.f_hz.size
    if rows <= k:
        raise FitError(f"{circuit.topology}: {obs.f_hz.size} points cannot determine {k} parameters")
    prior_index = None
    if prior is not None:
        if prior.key not in circuit.keys:
            raise FitError(f"{circuit.topology} has no parameter {prior.key}")
        prior_index = circuit.keys.index(prior.key)

    def rank(candidates):
        out = []
        for p0 in candidates:
            p0 = np.asarray(p0, float)
            if p0.shape != (k,) or not np.all(np.isfinite(p0)) or np.any(p0 <= 0):
                continue
            theta0 = np.log(p0)
            if prior is not None:
                theta0[prior_index] = math.log(max(prior.value, 1e-300))
            with np.errstate(all="ignore"):
                r0 = _rows(theta0, circuit, obs, prior_index, prior)
            c0 = float(r0 @ r0)
            if math.isfinite(c0):
                out.append((c0, len(out), theta0))
        out.sort(key=lambda t: (t[0], t[1]))
        return out

    best = None
    nfev = 0
    used = 0
    problem = _Problem(circuit, obs, prior_index, prior)
    # Further starts are refined only while the best fit so far is worse than
    # the noise by more than five standard deviations of chi-square: a fit at
    # the noise level leaves no better valley worth the time.  The extra
    # starts are not even ranked unless the first ones fall short.
    good_enough = 0.5 * (rows + 5.0 * math.sqrt(2.0 * rows))
    agreed = False
    for tier in (starts, extra_starts):
        if tier is None or agreed or (best is not None and best.cost <= good_enough):
            continue
        ranked = rank(tier() if callable(tier) else tier)
        used += len(ranked)
        for _, _, theta0 in ranked[: max(1, n_best)]:
            if best is not None and best.cost <= good_enough:
                break
            try:
                with np.errstate(all="ignore"):
                    sol = _levenberg_marquardt(problem, theta0, theta0 - _LOG_SPAN, theta0 + _LOG_SPAN, max_nfev)
            except (ValueError, FloatingPointError, np.linalg.LinAlgError):
                continue
            nfev += sol.nfev
            same_valley = best is not None and abs(sol.cost - best.cost) <= 1e-6 * best.cost
            if np.isfinite(sol.cost) and (best is None or sol.cost < best.cost):
                best = sol
            if same_valley:
                # Two starts led to the same valley: it is the one the data
                # point to, and a spread of further starts would only find it again.
                agreed = True
                break
    if best is None:
        raise FitError(f"{circuit.topology}: no usable starting point for the refinement")

    theta = best.x
    data_only = _Problem(circuit, obs, None, None)
    data_only.cost(theta)
    d = data_only._d
    chi2 = 2.0 * float(np.vdot(d, d).real)
    red = chi2 / (rows - k)
    a_data, _ = data_only.normal(theta)
    # Data rows scaled by the reduced chi-square, the prior row by the user's own uncertainty.
    info = a_data / max(red, 1e-300)
    pull = None
    if prior is not None:
        pv = math.exp(theta[prior_index])
        row = np.zeros(k)
        row[prior_index] = pv / prior.std
        info = info + np.outer(row, row)
        pull = float((pv - prior.value) / prior.std)
    # Equilibrated before the inversion: an element the data cannot see (its
    # log-column nearly zero, e.g. an ESL driven towards zero) keeps its
    # first-order uncertainty instead of being cut off by the pseudo-inverse.
    scale = 1.0 / np.sqrt(np.clip(np.diag(info), 1e-300, None))
    try:
        log_cov = np.linalg.pinv(info * np.outer(scale, scale), rcond=1e-13, hermitian=True) * np.outer(scale, scale)
    except np.linalg.LinAlgError:
        log_cov = np.full((k, k), np.inf)
    return Refinement(
        circuit=circuit,
        values=np.exp(theta),
        log_cov=log_cov,
        chi2=chi2,
        rows=rows,
        rms_normalized_residual=math.sqrt(chi2 / rows),
        reduced_chi2=red,
        starts=used,
        nfev=nfev,
        prior_pull=pull,
    )

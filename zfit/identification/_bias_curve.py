"""L against DC current, C against DC voltage: the smooth curve and the fall points.

Pure computation on arrays: the values of L (or C) identified at each bias,
with their standard uncertainties, in; the fitted saturation curve and the
bias where the value has fallen by a given fraction from zero bias, out.

The curve is the roll-off form

    y(x) = y_0 / (1 + (x / x_s)^n)

with ``y_0`` the zero-bias value, ``x_s`` the bias where it has halved and
``n`` the sharpness of the knee.  It is the form powder-core makers publish
for permeability against DC magnetising force (``1 / (a + b H^c)`` with
``a = 1``), and it also describes the fall of a class-II ceramic
capacitor's C with DC voltage (``n = 2`` is the quadratic onset of the
ferroelectric's field dependence).  Three parameters, monotone, positive,
flat at zero bias: enough to carry the shape of eight or ten readings
without following their noise.

The fall points that the figures report are *interpolated* between the two
measured points that bracket them, linearly in ``ln(y_0/y - 1)`` against
``ln x``: the coordinates in which every curve of the form above is a
straight line, so that the interpolation is exact for it and stays local
(two points) for a part that does not follow it.  The fitted curve's own
fall points are reported beside them as a check.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

__all__ = ["BiasCurve", "FallPoint", "bias_curve", "fall_point", "curve_band"]


@dataclass(frozen=True)
class BiasCurve:
    """The fitted roll-off ``y_0 / (1 + (x/x_s)^n)``.

    Attributes
    ----------
    y0, x_s, n : float
        Zero-bias value, half-value bias, knee sharpness.
    cov_log : ndarray, shape (3, 3)
        Covariance of ``(ln y0, ln x_s, ln n)``, scaled by the Birge ratio
        squared when the scatter exceeds the stated uncertainties.
    chi2 : float
        Weighted sum of squared residuals.
    dof : int
        Points minus 3.
    """

    y0: float
    x_s: float
    n: float
    cov_log: np.ndarray
    chi2: float
    dof: int

    @property
    def std(self) -> tuple[float, float, float]:
        """Standard uncertainties of ``y0, x_s, n`` (first order in the logarithms)."""
        d = np.sqrt(np.clip(np.diag(self.cov_log), 0, None))
        return (self.y0 * d[0], self.x_s * d[1], self.n * d[2])

    def value(self, x) -> np.ndarray:
        """Return the curve at biases `x`."""
        u = (np.abs(np.asarray(x, dtype=float)) / self.x_s) ** self.n
        return self.y0 / (1.0 + u)

    def gradient_log(self, x) -> np.ndarray:
        """Return d y / d (ln y0, ln x_s, ln n) at biases `x`, shape (len(x), 3)."""
        x = np.abs(np.atleast_1d(np.asarray(x, dtype=float)))
        y = self.value(x)
        with np.errstate(divide="ignore", invalid="ignore"):
            lr = np.where(x > 0, np.log(np.where(x > 0, x, 1.0) / self.x_s), 0.0)
        u = np.where(x > 0, np.exp(self.n * lr), 0.0)
        w = u / (1.0 + u)
        return np.column_stack([y, y * self.n * w, -y * self.n * lr * w])

    def fall_bias(self, fall: float) -> tuple[float, float]:
        """Return the bias where the curve has fallen by `fall` (0.2 = 20 %), and its std."""
        r = math.log(fall / (1.0 - fall))
        x = self.x_s * math.exp(r / self.n)
        g = np.array([0.0, 1.0, -r / self.n])  # d ln x / d(ln y0, ln x_s, ln n)
        return x, x * float(np.sqrt(max(g @ self.cov_log @ g, 0.0)))


@dataclass(frozen=True)
class FallPoint:
    """The bias where the measured value has fallen by a fraction from zero bias.

    Attributes
    ----------
    fall : float
        The fraction (0.2 = 20 %).
    value, std : float or None
        The interpolated bias and its standard uncertainty; None when the
        fall is not reached within the measured biases.
    bound : float or None
        When not reached: the largest measured bias (the fall lies above it).
    method : str
        ``log-log`` (interpolated in ``ln(y0/y - 1)`` against ``ln x``) or
        ``linear`` (from the zero-bias point, where the logarithm is not defined),
        ``not-reached``, or ``below-lowest-bias`` (already fallen at the
        lowest bias measured, when there is no zero-bias sweep).
    """

    fall: float
    value: float | None
    std: float | None
    bound: float | None
    method: str


def _start(x, y, y0):
    """Starting (x_s, n) from the points' straight line in ln(y0/y - 1) against ln x."""
    q = y0 / y - 1.0
    ok = (x > 0) & (q > 0.01) & (q < 100.0)
    if ok.sum() >= 2:
        n, c = np.polyfit(np.log(x[ok]), np.log(q[ok]), 1)
        if n > 0.2:
            return math.exp(-c / n), float(n)
    return float(x.max()) if x.max() > 0 else 1.0, 2.0


def bias_curve(x, y, sigma) -> BiasCurve:
    """Return the roll-off curve fitted to values `y` (std `sigma`) at biases `x`.

    Weighted least squares (Levenberg-Marquardt, scipy) in the logarithms of
    the three parameters, which keeps them positive; the covariance is
    ``(J^T W J)^-1``, multiplied by ``chi2/dof`` when that exceeds 1 (the
    Birge ratio: the spread between sweeps, from repeatability and
    temperature drift, is not in each sweep's own uncertainty).

    Parameters
    ----------
    x : array_like
        Bias magnitudes (A or V), at least three distinct.
    y : array_like
        L (H) or C (F) at each bias, positive.
    sigma : array_like
        Their standard uncertainties (a missing or zero one is replaced by
        1e-3 of the value: common practice for an LCR reading).

    Returns
    -------
    BiasCurve

    References
    ----------
    .. [1] R. T. Birge, "The calculation of errors by the method of least
       squares", Phys. Rev. 40, 207-227 (1932).
    .. [2] J. J. More, "The Levenberg-Marquardt algorithm: implementation
       and theory", Lecture Notes in Mathematics 630, 105-116 (1978).
    """
    from scipy.optimize import least_squares

    x = np.abs(np.asarray(x, dtype=float))
    y = np.asarray(y, dtype=float)
    s = np.asarray(sigma, dtype=float)
    s = np.where(np.isfinite(s) & (s > 0), s, 1e-3 * np.abs(y))
    y0 = float(y[np.argmin(x)])
    xs0, n0 = _start(x, y, y0)

    def resid(t):
        c = BiasCurve(math.exp(t[0]), math.exp(t[1]), math.exp(t[2]), np.zeros((3, 3)), 0.0, 0)
        return (c.value(x) - y) / s

    def jac(t):
        c = BiasCurve(math.exp(t[0]), math.exp(t[1]), math.exp(t[2]), np.zeros((3, 3)), 0.0, 0)
        return c.gradient_log(x) / s[:, None]

    t0 = np.array([math.log(y0), math.log(xs0), math.log(n0)])
    # The knee sharpness stays between 0.3 and 20: beyond, the form is a step, not a curve.
    sol = least_squares(resid, t0, jac=jac, method="trf", x_scale="jac",
                        bounds=([-np.inf, -np.inf, math.log(0.3)], [np.inf, np.inf, math.log(20.0)]))
    t = sol.x
    J = jac(t)
    chi2 = float(np.sum(sol.fun ** 2))
    dof = x.size - 3
    cov = np.linalg.pinv(J.T @ J)
    if dof > 0 and chi2 / dof > 1.0:
        cov = cov * (chi2 / dof)
    return BiasCurve(math.exp(t[0]), math.exp(t[1]), math.exp(t[2]), cov, chi2, dof)


def curve_band(curve: BiasCurve, x) -> tuple[np.ndarray, np.ndarray]:
    """Return the curve at `x` and its standard uncertainty (first-order propagation)."""
    g = curve.gradient_log(x)
    var = np.einsum("ij,jk,ik->i", g, curve.cov_log, g)
    return curve.value(x), np.sqrt(np.clip(var, 0, None))


def _crossing(x, y, y0, target):
    """The bias where the points first reach `target`, and how it was interpolated."""
    below = np.nonzero(y <= target)[0]
    if below.size == 0 or below[0] == 0:
        # Not reached, or already passed at the lowest bias (a zero-bias value from the curve).
        return None, "not-reached" if below.size == 0 else "below-lowest-bias"
    b = int(below[0])
    a = b - 1
    if x[a] > 0 and y[a] < y0:
        la, lb = math.log(x[a]), math.log(x[b])
        qa, qb, qt = math.log(y0 / y[a] - 1), math.log(y0 / y[b] - 1), math.log(y0 / target - 1)
        if qb > qa:
            return math.exp(la + (qt - qa) * (lb - la) / (qb - qa)), "log-log"
    return x[a] + (target - y[a]) * (x[b] - x[a]) / (y[b] - y[a]), "linear"


def fall_point(x, y, sigma, fall: float, *, y0: float | None = None, y0_std: float | None = None,
               bias_rel_std: float = 0.0) -> FallPoint:
    """Return the bias where `y` has fallen by `fall` from its zero-bias value.

    Parameters
    ----------
    x : array_like
        Bias magnitudes, ascending, distinct.
    y, sigma : array_like
        The values and their standard uncertainties.
    fall : float
        The fraction, 0 < fall < 1 (0.2 = 20 %).
    y0, y0_std : float, optional
        The zero-bias value when `x` has no zero (from the fitted curve);
        by default ``y[0]`` at ``x[0] == 0``.
    bias_rel_std : float
        Relative standard uncertainty of the bias readings (the supply's
        accuracy), added in quadrature.

    Returns
    -------
    FallPoint
        The first crossing in order of bias; the uncertainty is propagated
        to first order from the values of the two bracketing points and the
        zero-bias value (central differences of the interpolation).
    """
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    s = np.asarray(sigma, dtype=float)
    s = np.where(np.isfinite(s) & (s > 0), s, 0.0)
    own = y0 is None
    if own:
        y0, y0_std = float(y[0]), 0.0
    y0_std = float(y0_std or 0.0)

    def at(yv, ref):
        return _crossing(x, yv, ref, ref * (1.0 - fall))

    value, method = at(y, y0)
    if value is None:
        return FallPoint(fall, None, None, float(x.max()) if method == "not-reached" else None, method)
    var = 0.0
    for i in range(y.size):
        if s[i] == 0.0:
            continue
        h = s[i] * 1e-3
        yp, ym = y.copy(), y.copy()
        yp[i] += h
        ym[i] -= h
        vp = at(yp, float(yp[0]) if own else y0)[0]
        vm = at(ym, float(ym[0]) if own else y0)[0]
        if vp is not None and vm is not None:
            var += ((vp - vm) / (2 * h) * s[i]) ** 2
    if not own and y0_std > 0:
        h = y0_std * 1e-3
        vp, vm = at(y, y0 + h)[0], at(y, y0 - h)[0]
        if vp is not None and vm is not None:
            var += ((vp - vm) / (2 * h) * y0_std) ** 2
    var += (bias_rel_std * value) ** 2
    return FallPoint(fall, float(value), math.sqrt(var), None, method)

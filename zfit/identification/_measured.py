"""Figures read from the measurement itself, whatever model describes it.

At every frequency: R, X, |Z|, phase, L_eff = X/omega (inductive) or
C_eff = -1/(omega X) (capacitive), Q = |X|/R, D = R/|X| (ESR = R for a
capacitor), each with its standard uncertainty propagated from the
per-point noise of Z. The self-resonance where Im Z changes sign in band,
and the low-frequency L or C, are read from the same data.

Smoothing
---------
R and X are smoothed by a weighted local quadratic in ln f (a
Savitzky-Golay-type local polynomial [1]_ with the tricube kernel and
inverse-variance weights of local regression [2]_). The window is a span in
log-frequency (``half_span_decades``, default 0.04 decade either side),
widened where needed to hold at least two neighbours on each side, so that a
linear sweep (dense at the top, sparse at the bottom) is smoothed over the
same relative bandwidth everywhere, and narrowed on a dense sweep to hold
about 64 points (`_MAX_WINDOW`). The figures of a whole sweep are computed
for all windows at once (`_smooth_grid`). The estimate is linear in the data,
``y_hat = sum a_i y_i``, so its variance ``sum a_i^2 s_i^2`` carries the
variance reduction of the smoothing. Where the local quadratic does not hold
(reduced chi-square of the window above 4: a resonance narrower than the
window), the raw point and its raw uncertainty are used instead, so that the
smoothing never trades noise for bias.

Resolution
----------
A loss figure (R, ESR, D, 1/Q) whose value is below twice its standard
uncertainty is below resolution: it is reported as an upper bound
``max(value, 0) + 2 std``, never as a negative number.

Self-resonance rule
-------------------
A sign change of the smoothed X counts as the self-resonance when (a) it
has the family's direction (+ to - for an inductor's parallel resonance,
- to + for a capacitor's series resonance); (b) the sign persists on
``persist`` points on each side of the crossing and on each side at least
one of them is beyond 3 standard uncertainties (not a crossing of X within
its own noise), all but one point of each side keeping the sign (noise
flips single points near a series resonance down in the analyser's floor);
(c) |Z| there is above its measured value at the low end (inductor) or
below it (capacitor), and within a factor 2 of the |Z| maximum (minimum)
over a factor 2 in frequency either side: a parallel resonance is a peak of
|Z|, a series one a dip, however lossy (a bead's, a ferrite core's, whose
|Z| at resonance lies far below the low-frequency omega L_0 extrapolated),
while a calibration offset near a short crosses X = 0 nowhere near one. The crossing is refined by a weighted quadratic fit of
``Im(1/Z)`` (inductor) or ``Im Z`` (capacitor), both smooth and nearly
linear through their zero, over up to three raw points each side; the
root's uncertainty is propagated from the fit covariance through the slope.

References
----------
.. [1] A. Savitzky and M. J. E. Golay, "Smoothing and differentiation of data
   by simplified least squares procedures", Anal. Chem. 36(8), 1627-1639,
   1964, doi:10.1021/ac60214a047.
.. [2] W. S. Cleveland, "Robust locally weighted regression and smoothing
   scatterplots", J. Amer. Statist. Assoc. 74(368), 829-836, 1979,
   doi:10.1080/01621459.1979.10481038.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

__all__ = [
    "MeasuredValue",
    "MeasuredFigures",
    "MeasuredSRF",
    "LowFrequencyValue",
    "measured_figures",
    "spot_figures",
    "measured_srf",
    "low_frequency_value",
]

_LN10 = math.log(10.0)
_RESOLVED_K = 2.0  # a loss figure below 2 std is below resolution
_NOISE_K = 3.0  # a reactance beyond 3 std is resolved
_ZRATIO = 1.0  # |Z| at a resonance against its value at the low end
_ZWINDOW = 2.0  # a resonance is within 2x of the |Z| extremum over a factor 2 in f either side
# The smoothing window holds at most about this many points: on a dense sweep
# (20 001 linear points) 0.04 decades would hold thousands and cost O(N^2)
# for a variance already far below what a few dozen points give.
_MAX_WINDOW = 64


@dataclass(frozen=True)
class MeasuredValue:
    """A figure read from the measurement, or an upper bound on it.

    Attributes
    ----------
    name : str
        What it is (``"R"``, ``"D"``, ``"L"``, ...).
    unit : str
        SI unit (``""`` for ratios).
    value : float
        The estimate (may be below zero for a loss figure that is not resolved;
        use `upper_bound` then).
    std : float
        Its standard uncertainty.
    resolved : bool
        False when the figure is below resolution.
    upper_bound : float or None
        For an unresolved loss figure, ``max(value, 0) + 2 std``: report
        'below resolution, < upper_bound'.
    """

    name: str
    unit: str
    value: float
    std: float
    resolved: bool = True
    upper_bound: float | None = None


def _loss_value(name, unit, value, std) -> MeasuredValue:
    if np.isfinite(value) and value >= _RESOLVED_K * std:
        return MeasuredValue(name, unit, float(value), float(std))
    bound = max(float(value), 0.0) + _RESOLVED_K * float(std) if np.isfinite(value) else math.inf
    return MeasuredValue(name, unit, float(value), float(std), False, bound)


def _local_weights(x, s, x0, half_span, min_points=5):
    """Return the weights a (y_hat(x0) = a @ y) of the local quadratic, and the window."""
    d = np.abs(x - x0)
    order = np.argsort(d)
    # At least `min_points` points (two neighbours each side in the interior), at most about `_MAX_WINDOW`.
    h = min(half_span, d[order[min(_MAX_WINDOW - 1, x.size - 1)]] * 1.0001)
    h = max(h, d[order[min(min_points - 1, x.size - 1)]] * 1.0001)
    idx = np.nonzero(d <= h)[0]
    u = (x[idx] - x0) / h
    w = (1.0 - np.abs(u) ** 3) ** 3 + 1e-3  # tricube, never exactly zero at the edge
    w = w / s[idx] ** 2
    deg = min(2, idx.size - 1)
    A = np.vander(u, deg + 1, increasing=True)
    M = A.T @ (w[:, None] * A)
    a = np.linalg.solve(M, (A * w[:, None]).T)[0]
    return idx, a, A, w


def _power_slope(x, y, s):
    """Weighted log-log slope of |y| over the points, 0 where y changes sign or vanishes."""
    if x.size < 2 or not (np.all(y > 0) or np.all(y < 0)):
        return 0.0
    wm = (y / s) ** 2
    xm = np.sum(wm * x) / np.sum(wm)
    den = np.sum(wm * (x - xm) ** 2)
    return float(np.sum(wm * (x - xm) * np.log(np.abs(y))) / den) if den > 0 else 0.0


def _smooth_part(x, y, s, x0, half_span, min_points):
    """Return (y_hat, var, chi2, dof) of one real part at x0.

    The data are first divided by their local power law ``(f/f0)^k`` (k the
    weighted log-log slope over the window, held fixed; the factor is 1 at
    f0), so that the quadratic has only the departure from it to follow: a
    capacitor's 1/f or an inductor's f is then followed exactly even over
    the sparse low end of a linear sweep.
    """
    idx0 = _local_weights(x, s, x0, half_span, min_points)[0]
    k = _power_slope(x[idx0], y[idx0], s[idx0])
    # Saturated at e^300 (1e130), far beyond the factor of any point a window uses: a
    # jump of decades in the data (a row off by a unit) must not overflow y and s.
    scale = np.exp(np.clip(-k * (x - x0), -300.0, 300.0))
    y, s = y * scale, s * scale
    idx, a, A, w = _local_weights(x, s, x0, half_span, min_points)
    var = float(np.sum(a**2 * s[idx] ** 2))
    dof = idx.size - A.shape[1]
    sw = np.sqrt(w)
    coef = np.linalg.lstsq(A * sw[:, None], y[idx] * sw, rcond=None)[0]
    chi2 = float(np.sum(((y[idx] - A @ coef) / s[idx]) ** 2))
    return float(a @ y[idx]), var, chi2, dof


def _smooth(x, r, xr, s_part, x0, half_span, min_points=5):
    """Return (R_hat, X_hat, var) at x0 and the reduced chi-square of the window."""
    rh, vr, cr, dof = _smooth_part(x, r, s_part, x0, half_span, min_points)
    xh, vx, cx, _ = _smooth_part(x, xr, s_part, x0, half_span, min_points)
    # R and X share the weights' support; the larger variance is stated for both (circular noise).
    chi = (cr + cx) / (2 * dof) if dof > 0 else math.nan
    return rh, xh, max(vr, vx), chi


def _smooth_grid(x, r, xr, s, half_span, min_points=5):
    """`_smooth` at every point of the sweep at once: (R_hat, X_hat, var, chi) arrays.

    The same local quadratic after the local power law as `_smooth_part`,
    computed for many windows together on a padded (points x window) array
    (the windows are contiguous runs of the sorted log-frequencies), in
    blocks of rows that keep the array near a million entries.
    """
    n = x.size
    # The window's half-width: `half_span`, narrowed to hold about `_MAX_WINDOW` points on a dense
    # sweep, widened to hold `min_points` (as `_local_weights`).
    def kth_distance(k):
        off = np.arange(-(k - 1), k)
        nb = np.arange(n)[:, None] + off[None, :]
        dn = np.where((nb >= 0) & (nb < n), np.abs(x[np.clip(nb, 0, n - 1)] - x[:, None]), np.inf)
        return np.sort(dn, axis=1)[:, min(k, n) - 1] * 1.0001

    h = np.maximum(np.minimum(half_span, kth_distance(_MAX_WINDOW)), kth_distance(min_points))
    lo = np.searchsorted(x, x - h, "left") - 1
    hi = np.searchsorted(x, x + h, "right") + 1
    out = np.empty((4, n))
    rows = max(1, 1_000_000 // int(np.max(hi - lo)))
    for a in range(0, n, rows):
        b = min(n, a + rows)
        out[:, a:b] = _smooth_rows(x, r, xr, s, h[a:b], lo[a:b], hi[a:b], np.arange(a, b))
    return out[0], out[1], out[2], out[3]


def _smooth_rows(x, r, xr, s, h, lo, hi, at):
    """`_smooth_grid` for the windows centred on the points `at`."""
    n = x.size
    x0 = x[at]
    cols = lo[:, None] + np.arange(int(np.max(hi - lo)))[None, :]
    inside = (cols >= 0) & (cols < n)
    cols = np.clip(cols, 0, n - 1)
    xw = x[cols]
    m = inside & (np.abs(xw - x0[:, None]) <= h[:, None])
    count = m.sum(axis=1)
    u = np.where(m, (xw - x0[:, None]) / h[:, None], 0.0)
    tri = np.where(m, (1.0 - np.abs(u) ** 3) ** 3 + 1e-3, 0.0)
    sw = s[cols]
    u2 = u * u
    powers = (1.0, u, u2, u2 * u, u2 * u2)

    def part(y):
        yw = y[cols]
        # The local power law (`_power_slope`), 0 where y changes sign in the window.
        same = np.all(np.where(m, yw > 0, True), axis=1) | np.all(np.where(m, yw < 0, True), axis=1)
        wm = np.where(m, (yw / sw) ** 2, 0.0)
        with np.errstate(all="ignore"):
            xm = np.sum(wm * xw, axis=1) / np.sum(wm, axis=1)
            dx = np.where(m, xw - xm[:, None], 0.0)
            den = np.sum(wm * dx**2, axis=1)
            ly = np.where(m, np.log(np.abs(np.where(m, yw, 1.0))), 0.0)
            k = np.sum(wm * dx * ly, axis=1) / den
        k = np.where(same & (count >= 2) & (den > 0) & np.isfinite(k), k, 0.0)
        scale = np.exp(np.clip(-k[:, None] * (xw - x0[:, None]), -300.0, 300.0))  # saturated as `_smooth_part`
        ys, ss = yw * scale, sw * scale
        w = np.where(m, tri / ss**2, 0.0)
        # Normal equations of the weighted quadratic from the moments sum(w u^p).
        mom = [np.sum(w * u2p, axis=1) for u2p in powers]
        M = np.stack([np.stack(mom[i:i + 3], axis=-1) for i in range(3)], axis=-2)
        wy = w * ys
        b = np.stack([np.sum(wy, axis=1), np.sum(wy * u, axis=1), np.sum(wy * u2, axis=1)], axis=-1)
        with np.errstate(all="ignore"):
            try:
                minv = np.linalg.inv(M)
            except np.linalg.LinAlgError:  # a window of data decades apart: its quadratic is singular
                minv = np.linalg.pinv(M)
        c0 = minv[:, 0, :]
        a = w * (c0[:, :1] + c0[:, 1:2] * u + c0[:, 2:] * u2)
        coef = np.einsum("nij,nj->ni", minv, b)
        fit = coef[:, :1] + coef[:, 1:2] * u + coef[:, 2:] * u2
        resid = np.where(m, (ys - fit) / ss, 0.0)
        return np.sum(a * ys, axis=1), np.sum(a**2 * ss**2, axis=1), np.sum(resid**2, axis=1)

    rh, vr, cr = part(r)
    xh, vx, cx = part(xr)
    dof = count - 3
    with np.errstate(all="ignore"):
        chi = np.where(dof > 0, (cr + cx) / (2 * dof), np.nan)
    return rh, xh, np.maximum(vr, vx), chi


@dataclass(frozen=True)
class MeasuredFigures:
    """Per-frequency figures of the measured impedance (SI units).

    Attributes
    ----------
    f_hz : numpy.ndarray
        Frequencies.
    r_ohm, x_ohm : numpy.ndarray
        Smoothed resistance and reactance.
    std_ohm : numpy.ndarray
        Standard uncertainty of each of R and X (the same for both: the noise
        of Z is circular).
    smoothed : numpy.ndarray of bool
        False where the local quadratic did not hold and the raw point is used.
    half_span_decades : float
        The smoothing half-window in decades.
    source : str
        Always ``"measurement"``.
    """

    f_hz: np.ndarray
    r_ohm: np.ndarray
    x_ohm: np.ndarray
    std_ohm: np.ndarray
    smoothed: np.ndarray
    half_span_decades: float
    source: str = "measurement"

    @property
    def omega(self) -> np.ndarray:
        """Angular frequency, rad/s."""
        return 2.0 * math.pi * self.f_hz

    @property
    def abs_z_ohm(self) -> np.ndarray:
        """|Z| (its standard uncertainty is `std_ohm`)."""
        return np.hypot(self.r_ohm, self.x_ohm)

    @property
    def phase_rad(self) -> np.ndarray:
        """Phase of Z in radians."""
        return np.arctan2(self.x_ohm, self.r_ohm)

    @property
    def phase_std_rad(self) -> np.ndarray:
        """Standard uncertainty of the phase."""
        return self.std_ohm / self.abs_z_ohm

    @property
    def l_eff_h(self) -> np.ndarray:
        """X/omega where inductive (X > 0), NaN elsewhere."""
        return np.where(self.x_ohm > 0, self.x_ohm / self.omega, np.nan)

    @property
    def l_eff_std_h(self) -> np.ndarray:
        """Standard uncertainty of `l_eff_h`."""
        return np.where(self.x_ohm > 0, self.std_ohm / self.omega, np.nan)

    @property
    def c_eff_f(self) -> np.ndarray:
        """-1/(omega X) where capacitive (X < 0), NaN elsewhere."""
        with np.errstate(divide="ignore"):
            return np.where(self.x_ohm < 0, -1.0 / (self.omega * self.x_ohm), np.nan)

    @property
    def c_eff_std_f(self) -> np.ndarray:
        """Standard uncertainty of `c_eff_f`."""
        with np.errstate(divide="ignore"):
            return np.where(self.x_ohm < 0, self.std_ohm / (self.omega * self.x_ohm**2), np.nan)

    @property
    def d(self) -> np.ndarray:
        """Dissipation factor R/|X| (infinite where a file gives X = 0 exactly)."""
        with np.errstate(divide="ignore", invalid="ignore"):
            return self.r_ohm / np.abs(self.x_ohm)

    @property
    def d_std(self) -> np.ndarray:
        """Standard uncertainty of `d` (first order)."""
        # Written through 1/R, which an exact R = 0 in a file (an LCR meter's 0.000) divides
        # by; there the first-order value is std / |X| (dD/dR = 1/|X|, dD/dX = 0).
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.where(self.r_ohm == 0, self.std_ohm / np.abs(self.x_ohm),
                            np.abs(self.d) * self.std_ohm * np.sqrt(1.0 / self.x_ohm**2 + 1.0 / self.r_ohm**2))

    @property
    def q(self) -> np.ndarray:
        """Quality factor |X|/R (infinite where a file gives R = 0 exactly)."""
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.abs(self.x_ohm) / self.r_ohm

    @property
    def q_std(self) -> np.ndarray:
        """Standard uncertainty of `q` (first order)."""
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.abs(self.q) * self.std_ohm * np.sqrt(1.0 / self.x_ohm**2 + 1.0 / self.r_ohm**2)

    def resistance(self, i: int) -> MeasuredValue:
        """R (= ESR of a capacitor) at point `i`, or its bound when below resolution.

        Parameters
        ----------
        i : int
            Index of the sweep point.
        """
        return _loss_value("R", "ohm", self.r_ohm[i], self.std_ohm[i])

    def dissipation(self, i: int) -> MeasuredValue:
        """D = R/|X| at point `i`, or its bound when below resolution.

        Parameters
        ----------
        i : int
            Index of the sweep point.
        """
        return _loss_value("D", "", self.d[i], self.d_std[i])


def _arrays(f_hz, z_ohm, sigma_ohm):
    f = np.asarray(f_hz, float)
    z = np.asarray(z_ohm, complex)
    s = np.broadcast_to(np.asarray(sigma_ohm, float), f.shape) / math.sqrt(2.0)  # per part
    return f, z, np.asarray(s, float)


def measured_figures(f_hz, z_ohm, sigma_ohm, half_span_decades: float = 0.04) -> MeasuredFigures:
    """Return the smoothed per-frequency figures of a measured impedance.

    Parameters
    ----------
    f_hz, z_ohm : array_like
        Frequencies (increasing) and complex impedance.
    sigma_ohm : array_like
        Circular complex standard deviation of Z per point (`Sweep.sigma_ohm`).
    half_span_decades : float
        Half-width of the smoothing window in decades (widened to hold two
        neighbours on each side).
    """
    f, z, s = _arrays(f_hz, z_ohm, sigma_ohm)
    x = np.log(f)
    h = half_span_decades * _LN10
    if f.size < 5:
        rh, xh, var, chi = (np.array(v) for v in zip(*(_smooth(x, z.real, z.imag, s, xi, h) for xi in x)))
    else:
        rh, xh, var, chi = _smooth_grid(x, z.real, z.imag, s, h)
    ok = np.isfinite(chi) & (chi <= 4.0) & np.isfinite(rh) & np.isfinite(xh) & np.isfinite(var)
    rh, xh, var = np.where(ok, rh, z.real), np.where(ok, xh, z.imag), np.where(ok, var, s**2)
    return MeasuredFigures(f, rh, xh, np.sqrt(var), ok, float(half_span_decades))


def spot_figures(f_hz, z_ohm, sigma_ohm, at_hz: float, half_span_decades: float = 0.04) -> dict:
    """Return R, X, L_eff or C_eff, Q, D at one frequency in band by local interpolation.

    Parameters
    ----------
    f_hz : array_like
        Measured frequencies in Hz, increasing.
    z_ohm : array_like
        Measured complex impedance in ohm.
    sigma_ohm : array_like
        Its complex-circular standard uncertainty in ohm (`Sweep.sigma_ohm`).
    at_hz : float
        The frequency (Hz), inside the measured band.
    half_span_decades : float
        Half-width of the smoothing window in decades (at least 5 points).

    Returns
    -------
    dict
        ``{"f_hz", "R", "X", "L" or "C", "Q", "D"}``: MeasuredValue records
        (R and D as bounds when below resolution).
    """
    f, z, s = _arrays(f_hz, z_ohm, sigma_ohm)
    if not f[0] <= at_hz <= f[-1]:
        raise ValueError(f"spot frequency {at_hz:g} Hz is outside the measured band {f[0]:g}..{f[-1]:g} Hz")
    rh, xh, var, chi = _smooth(np.log(f), z.real, z.imag, s, math.log(at_hz), half_span_decades * _LN10)
    if not np.isfinite(chi) or chi > 4.0:
        # The smoothing window does not hold a local quadratic: interpolate through the
        # three nearest points instead (no smoothing, no variance reduction).
        rh, xh, var, _ = _smooth(np.log(f), z.real, z.imag, s, math.log(at_hz), 0.0, min_points=3)
    sd = math.sqrt(var)
    w = 2.0 * math.pi * at_hz
    out = {"f_hz": float(at_hz), "R": _loss_value("R", "ohm", rh, sd), "X": MeasuredValue("X", "ohm", xh, sd)}
    if xh > 0:
        out["L"] = MeasuredValue("L", "H", xh / w, sd / w, abs(xh) > _NOISE_K * sd)
    else:
        out["C"] = MeasuredValue("C", "F", -1.0 / (w * xh), sd / (w * xh**2), abs(xh) > _NOISE_K * sd)
    d = rh / abs(xh)
    d_sd = abs(d) * sd * math.sqrt(1.0 / xh**2 + 1.0 / rh**2) if rh != 0 else sd / abs(xh)
    out["D"] = _loss_value("D", "", d, d_sd)
    out["Q"] = MeasuredValue("Q", "", 1.0 / d if d > 0 else math.inf, d_sd / d**2 if d > 0 else math.inf, out["D"].resolved)
    return out


@dataclass(frozen=True)
class LowFrequencyValue:
    """L (inductor) or C (capacitor) at the low end of the band.

    Attributes
    ----------
    family : {'inductor', 'capacitor'} or None
        From the sign of Im Z at low frequency; None when not resolved.
    name : {'L', 'C'} or None
    value, std : float
        In H or F (NaN when not resolved).
    f_hz : float
        The frequency it holds at (the lowest frequency where X is resolved).
    resolved : bool
        False when X is within its noise over the low end ('not resolved').
    """

    family: str | None
    name: str | None
    value: float
    std: float
    f_hz: float
    resolved: bool


def low_frequency_value(f_hz, z_ohm, sigma_ohm, figures: MeasuredFigures | None = None) -> LowFrequencyValue:
    """Return L or C at the low end of the band, or 'not resolved'.

    The family is the sign that the smoothed X agrees on, weighted by
    ``|X|/std``, over the points of the lowest tenth of the band (in
    log-frequency) where it is beyond 3 standard uncertainties; the value is
    read at the lowest of them with that sign.  An inductive sweep is an
    inductor, a capacitive one a capacitor.

    Parameters
    ----------
    f_hz : array_like
        Measured frequencies in Hz, increasing.
    z_ohm : array_like
        Measured complex impedance in ohm.
    sigma_ohm : array_like
        Its complex-circular standard uncertainty in ohm (`Sweep.sigma_ohm`).
    figures : MeasuredFigures, optional
        The sweep's smoothed figures when already computed (`measured_figures`).
    """
    fig = figures if figures is not None else measured_figures(f_hz, z_ohm, sigma_ohm)
    f, x, sd = fig.f_hz, fig.x_ohm, fig.std_ohm
    lim = math.exp(math.log(f[0]) + 0.1 * (math.log(f[-1]) - math.log(f[0])))
    low = np.nonzero(f <= max(lim, f[min(2, f.size - 1)]))[0]
    resolved = low[np.abs(x[low]) > _NOISE_K * sd[low]]
    if resolved.size == 0:
        return LowFrequencyValue(None, None, math.nan, math.nan, float(f[0]), False)
    # The family is the sign the resolved points agree on, weighted by how far each is beyond its noise:
    # one point flipped by a noise spike or an overrange code does not make an inductor a capacitor.
    inductive = float(np.sum(x[resolved] / sd[resolved])) > 0
    i = int(next(k for k in resolved if (x[k] > 0) == inductive))
    w = 2.0 * math.pi * f[i]
    if inductive:
        return LowFrequencyValue("inductor", "L", x[i] / w, sd[i] / w, float(f[i]), True)
    return LowFrequencyValue("capacitor", "C", -1.0 / (w * x[i]), sd[i] / (w * x[i] ** 2), float(f[i]), True)


@dataclass(frozen=True)
class MeasuredSRF:
    """The self-resonance read from the sign change of Im Z.

    Attributes
    ----------
    value_hz, std_hz : float
        The resonance and its standard uncertainty (NaN when not in band).
    kind : {'parallel', 'series'}
        Parallel for an inductor, series for a capacitor.
    in_band : bool
        False: no accepted crossing; `lower_bound_hz` is then the top of
        the band ('above the measured band: lower bound only').
    lower_bound_hz : float or None
    rejected_hz : tuple of float
        Sign changes seen and rejected by the rule (module docstring).
    """

    value_hz: float
    std_hz: float
    kind: str
    in_band: bool
    lower_bound_hz: float | None = None
    rejected_hz: tuple = ()


def _refined_root(f, y, sy, i):
    """Root of a weighted quadratic (or line) fit of y(ln f) around the bracket (i, i+1)."""
    lo, hi = max(0, i - 2), min(f.size, i + 4)
    u0 = 0.5 * (math.log(f[i]) + math.log(f[i + 1]))
    u = np.log(f[lo:hi]) - u0
    deg = 2 if hi - lo >= 5 else 1
    A = np.vander(u, deg + 1, increasing=True)
    W = 1.0 / sy[lo:hi] ** 2
    cov = np.linalg.inv(A.T @ (W[:, None] * A))
    c = cov @ (A.T @ (W * y[lo:hi]))
    roots = np.roots(c[::-1])
    roots = roots[np.isreal(roots)].real
    a, b = math.log(f[i]) - u0, math.log(f[i + 1]) - u0
    inside = roots[(roots >= a - 1e-12) & (roots <= b + 1e-12)]
    if inside.size == 0:  # fall back to the chord through the bracket
        t = y[i] / (y[i] - y[i + 1])
        r = a + t * (b - a)
        dr = (b - a) * math.hypot((1 - t) * sy[i], t * sy[i + 1]) / abs(y[i] - y[i + 1])
        return math.exp(u0 + r), math.exp(u0 + r) * dr
    r = float(inside[0])
    slope = sum(k * c[k] * r ** (k - 1) for k in range(1, deg + 1))
    J = -np.array([r**k for k in range(deg + 1)]) / slope
    dr = math.sqrt(float(J @ cov @ J))
    return math.exp(u0 + r), math.exp(u0 + r) * dr


def measured_srf(f_hz, z_ohm, sigma_ohm, persist: int = 3, figures: MeasuredFigures | None = None) -> MeasuredSRF:
    """Return the self-resonance where Im Z changes sign in band, or a lower bound.

    Parameters
    ----------
    f_hz, z_ohm, sigma_ohm : array_like
        The sweep (sigma: circular complex standard deviation of Z).
    persist : int
        Points on each side over which the sign must persist.
    figures : MeasuredFigures, optional
        The smoothed figures, when already computed.
    """
    f, z, s = _arrays(f_hz, z_ohm, sigma_ohm)
    fig = figures if figures is not None else measured_figures(f, z, np.sqrt(2.0) * s)
    lf = low_frequency_value(f, z, None, figures=fig)
    if not lf.resolved:
        return MeasuredSRF(math.nan, math.nan, "parallel", False, float(f[-1]))
    inductor = lf.family == "inductor"
    kind = "parallel" if inductor else "series"
    x, sd = fig.x_ohm, fig.std_ohm
    z_low = fig.abs_z_ohm[np.searchsorted(f, lf.f_hz)]
    rejected = []
    sign = 1.0 if inductor else -1.0
    for i in np.nonzero((sign * x[:-1] > 0) & (sign * x[1:] <= 0))[0]:
        before = slice(max(0, i - persist + 1), i + 1)
        after = slice(i + 1, min(f.size, i + 1 + persist))
        fc = math.sqrt(f[i] * f[i + 1])
        # All but one point of each side keep the sign: near a series resonance whose |Z| is down
        # in the analyser's floor, noise flips single points.
        need = max(1, persist - 1)
        persists = (
            int(np.sum(sign * x[before] > 0)) >= min(need, x[before].size)
            and int(np.sum(sign * x[after] < 0)) >= min(need, x[after].size)
            and np.any(np.abs(x[before]) > _NOISE_K * sd[before])
            and np.any(np.abs(x[after]) > _NOISE_K * sd[after])
        )
        absz = fig.abs_z_ohm
        zc = 0.5 * (absz[i] + absz[i + 1])
        near = (f >= fc / _ZWINDOW) & (f <= fc * _ZWINDOW)
        if inductor:
            contrast = zc > _ZRATIO * z_low and zc >= 0.5 * float(np.max(absz[near]))
        else:
            contrast = zc < z_low / _ZRATIO and zc <= 2.0 * float(np.min(absz[near]))
        if not (persists and contrast):
            rejected.append(float(fc))
            continue
        if inductor:  # Im(1/Z) is smooth through a parallel resonance; its sigma is sigma_Z/|Z|^2
            y, sy = (1.0 / z).imag, s / np.abs(z) ** 2
        else:
            y, sy = z.imag, s
        val, std = _refined_root(f, y, sy, int(i))
        return MeasuredSRF(float(val), float(std), kind, True, None, tuple(rejected))
    return MeasuredSRF(math.nan, math.nan, kind, False, float(f[-1]), tuple(rejected))

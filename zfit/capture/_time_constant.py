"""The dominant time constant of a step response: an exponential fitted to
each edge (to the output itself, or to the step response of H = V_out/V_in
deconvolved from the measured input), with the fitted curve for plots.

References
----------
A. S. Sedra and K. C. Smith, *Microelectronic Circuits*, 7th ed., Oxford
University Press, 2015, appendix E (single-time-constant networks: 10-90 %
rise time tau ln 9 ~ 2.2 tau, 50 % time tau ln 2).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ._edges import aligned_rows, rising_edge_times, row_blocks

__all__ = ["LN2", "LN9", "TimeConstantFit", "time_constant_fit", "exponential_fit", "first_order_response",
           "deconvolved_steps"]

LN2 = math.log(2.0)
LN9 = math.log(9.0)
# The first-order fit uses at most this many samples (rows x length): a few
# hundred edges fix a time constant far better than the model holds anyway.
_FIT_SAMPLES = 1 << 18
# Part of the time constant skipped after the input edge before the fit, so
# that a fast parasitic transient (a coil's stray C passing the edge straight
# to the sense resistor) does not pull the dominant time constant.
_FIT_SKIP_TAU = 0.2
# The fit spans this many time constants after the edge (or up to the next edge).
_FIT_SPAN_TAU = 7.0


def exponential_fit(rows, dt, tau0, fit_from, fit_to):
    """Per-row time constants of ``v = b + c exp(-n dt / tau)`` (grid search in log tau).

    The sum of squares counts samples ``fit_from[row] <= n < fit_to``.  The
    grid spans a factor of 6 either side of `tau0`, then zooms twice on where
    the rows' minima lie; a parabola in log tau through the three best grid
    points of each row gives its estimate, and its curvature the variance.

    Returns
    -------
    tau, tau_std, rms, at_edge, (b, c)
        Per-row estimates, their uncertainties, the RMS residual, whether the
        minimum sat on the grid's end, and the linear coefficients at the
        median tau.
    """
    nrow, m = rows.shape
    col = np.arange(m)
    mask = ((col[None, :] >= fit_from[:, None]) & (col[None, :] < fit_to)).astype(float)
    npts = mask.sum(axis=1)
    s0 = npts
    r0 = np.einsum("rm,rm->r", mask, rows)

    def sse(tau):
        e = np.exp(-col * (dt / tau))
        me = mask * e[None, :]
        s1 = me.sum(axis=1)
        s2 = me @ e
        r1 = np.einsum("rm,rm->r", me, rows)
        det = s0 * s2 - s1 * s1
        with np.errstate(divide="ignore", invalid="ignore"):
            b = (r0 * s2 - r1 * s1) / det
            c = (s0 * r1 - s1 * r0) / det
        # The residual itself, not |v|^2 - r.theta, which cancels to nothing
        # when the fit is good to a part in 1e10.
        res = mask * (rows - b[:, None] - c[:, None] * e[None, :])
        return np.einsum("rm,rm->r", res, res), (b, c)

    table = {float(t): sse(float(t))[0] for t in np.geomspace(tau0 / 6.0, tau0 * 6.0, 25)}
    for span in (1.3, 1.06):
        grid = np.array(sorted(table))
        best = grid[np.argmin(np.stack([table[t] for t in grid]), axis=0)]
        lo, hi = np.percentile(best, 5) / span, np.percentile(best, 95) * span
        for t in np.geomspace(lo, hi, 13):
            table.setdefault(float(t), sse(float(t))[0])
    grid = np.array(sorted(table))
    s = np.stack([table[t] for t in grid])
    jmin = np.argmin(s, axis=0)
    j = np.clip(jmin, 1, grid.size - 2)
    r = np.arange(nrow)
    lt = np.log(grid)
    x0, x1, x2 = lt[j - 1], lt[j], lt[j + 1]
    y0, y1, y2 = s[j - 1, r], s[j, r], s[j + 1, r]
    d01, d12, d02 = x1 - x0, x2 - x1, x2 - x0
    a2 = ((y2 - y1) / d12 - (y1 - y0) / d01) / d02
    a1 = (y1 - y0) / d01 - a2 * (x0 + x1)
    with np.errstate(divide="ignore", invalid="ignore"):
        xm = np.where(a2 > 0, -a1 / (2 * a2), x1)
    xm = np.clip(xm, x0, x2)
    tau = np.exp(xm)
    smin = np.maximum(a2 * xm**2 + a1 * xm + (y1 - a2 * x1**2 - a1 * x1), 0.0)
    s2 = smin / np.maximum(npts - 3, 1)
    with np.errstate(divide="ignore", invalid="ignore"):
        # SSE ~ SSE_min + a2 (ln tau - ln tau_hat)^2 and var(ln tau) = s^2 / a2.
        std = np.where(a2 > 0, tau * np.sqrt(s2 / a2), np.nan)
    at_edge = (jmin == 0) | (jmin == grid.size - 1)
    _, coef = sse(float(np.median(tau)))
    return tau, std, np.sqrt(s2), at_edge, coef


def first_order_response(x, tau, dt):
    """Response of 1/(1 + s tau) to `x` (linear between samples), settled at x[0] before.

    The first-order-hold recursion ``y[n+1] = a y[n] + b0 x[n+1] + b1 x[n]``
    as a convolution with its impulse response, by FFT.
    """
    a = math.exp(-dt / tau)
    k = tau / dt * (1.0 - a)
    b0, b1 = 1.0 - k, k - a
    n = x.size
    # Settled before the start: the input's first value held long enough that
    # its response has decayed (40 time constants, or the segment's length).
    pad = int(min(40.0 * tau / dt, 4 * n)) + 1
    xp = np.concatenate([np.full(pad, x[0]), x])
    h = np.empty(xp.size)
    h[0] = b0
    h[1:] = (b1 + a * b0) * a ** np.arange(xp.size - 1)
    m = 1 << int(math.ceil(math.log2(2 * xp.size)))
    y = np.fft.irfft(np.fft.rfft(xp, m) * np.fft.rfft(h, m), m)[: xp.size]
    return y[pad:]


def deconvolved_steps(x, y, starts, seg_len, dt, noise_x, f_cut):
    """Rows of the response of H = V_out/V_in to an ideal step at sample 0.

    Each edge's output derivative spectrum is divided by its input's
    (regularised where the input sinks into its noise) and tapered to zero
    between `f_cut` and twice that; the inverse transform, summed, is the
    step response of H band-limited to the input's band.  The generator's
    output resistance and the input's sag under load divide out.
    """
    f = np.fft.rfftfreq(seg_len, dt)
    w = np.ones_like(f)
    top = min(2.0 * f_cut, 0.5 / dt)
    ramp = (f > f_cut) & (f < top)
    w[ramp] = 0.5 * (1.0 + np.cos(np.pi * (f[ramp] - f_cut) / (top - f_cut)))
    w[f >= top] = 0.0
    lam = seg_len * 4.0 * np.sin(np.pi * f * dt) ** 2 * noise_x**2
    out = np.empty((starts.size, seg_len))
    idx = np.arange(seg_len + 1)
    for b0, b1 in row_blocks(starts.size, seg_len + 1):
        st = starts[b0:b1]
        X = np.fft.rfft(np.diff(x[st[:, None] + idx[None, :]], axis=1), axis=1)
        Y = np.fft.rfft(np.diff(y[st[:, None] + idx[None, :]], axis=1), axis=1)
        Hk = Y * np.conj(X) / (X.real**2 + X.imag**2 + lam[None, :])
        out[b0:b1] = np.cumsum(np.fft.irfft(Hk * w[None, :], n=seg_len, axis=1), axis=1)
    return out


@dataclass(frozen=True)
class TimeConstantFit:
    """The dominant time constant fitted to the edges.

    Attributes
    ----------
    tau_s, tau_std_s : float or None
        The time constant and its standard uncertainty (None when the edges
        admit no single time constant).
    method : str
        How it was obtained.
    fit_v : numpy.ndarray or None
        The fitted response on the averaged output edge (NaN outside the fit).
    step_at : numpy.ndarray or None
        Single channel: the fractional sample of each row at which the fitted
        exponential leaves the low level (the generator's step).
    midpoint : tuple of (float, float or None), or None
        Single channel: the low-to-midpoint time / ln 2 from those instants,
        and its uncertainty.
    """

    tau_s: float | None
    tau_std_s: float | None
    method: str
    fit_v: np.ndarray | None = None
    step_at: np.ndarray | None = None
    midpoint: tuple[float, float | None] | None = None


def time_constant_fit(x, y, starts, pol, seg_len, edge_frac, t10, good, tau0, dt, in_lv, out_lv, warn, resp):
    """Dominant time constant by an exponential fitted to each edge.

    Two channels: to each edge's step response of H = V_out/V_in (the
    output deconvolved by the measured input, `deconvolved_steps`).  One
    channel: to the output itself from its 10 % instant, the response to the
    generator's (ideal) step, which includes the generator's resistance.
    """
    idx = np.flatnonzero(good)
    two = x is not None
    length = seg_len + 1
    if two:
        # Band for the deconvolution: where the input is well above its noise.
        lvl = resp.input_level_db
        strong = resp.f_hz[lvl >= -20.0]
        f_cut = float(min(strong.max() if strong.size else resp.f_hz[-1], 0.2 / dt))
        skip = max(_FIT_SKIP_TAU * tau0, 2.0 / f_cut) / dt
        span = int(min(seg_len, math.ceil(skip + _FIT_SPAN_TAU * tau0 / dt) + 2))
        max_rows = max(4, _FIT_SAMPLES // seg_len)
        if idx.size > max_rows:
            idx = idx[np.linspace(0, idx.size - 1, max_rows).round().astype(int)]
        rows = deconvolved_steps(x, y, starts[idx], seg_len, dt, in_lv.noise, f_cut)[:, :span]
        fit_from = np.full(idx.size, int(math.ceil(skip)))
        amplitude = float(np.median(np.abs(rows[:, -max(3, span // 20):].mean(axis=1)))) * in_lv.amplitude
        rows = rows * in_lv.amplitude  # in volts of output per input step, for the residual check
        method = ("exponential fitted to each edge's step response of H = V_out/V_in "
                  "(the output deconvolved by the measured input)")
        if f_cut < 5.0 / (2 * np.pi * tau0):
            warn("the input's bandwidth is too low to resolve the time constant")
    else:
        span = int(min(length, math.ceil(np.nanmax(t10[idx]) + _FIT_SPAN_TAU * tau0 / dt) + 2))
        max_rows = max(4, _FIT_SAMPLES // max(span, 1))
        if idx.size > max_rows:
            idx = idx[np.linspace(0, idx.size - 1, max_rows).round().astype(int)]
        rows = aligned_rows(y, starts[idx], span, pol[idx], out_lv)
        fit_from = np.ceil(t10[idx]).astype(int)
        amplitude = out_lv.amplitude
        method = "exponential fitted to each edge from its 10 % instant (single channel: includes the source resistance)"
    if np.any(span - fit_from < 8):
        warn("the time constant is too long for the edge spacing (or too short for the sample rate) to be fitted")
        return TimeConstantFit(None, None, method)
    tau_k, std_k, rms_k, at_edge, (bb, cc) = exponential_fit(rows, dt, tau0, fit_from, span)
    if np.mean(at_edge) > 0.5:
        warn("the exponential fit found no time constant within a factor of 6 of the midpoint estimate")
        return TimeConstantFit(None, None, method)
    quality = float(np.median(rms_k)) / max(abs(amplitude), 1e-300)
    if quality > 0.05:
        warn(f"the edges are not first order (fit residual {100 * quality:.2g} % of the amplitude): "
             "no dominant time constant")
        return TimeConstantFit(None, None, method)
    tau = float(np.mean(tau_k))
    if tau_k.size >= 3:
        tau_std = float(np.std(tau_k, ddof=1) / math.sqrt(tau_k.size))
    else:
        s = std_k[np.isfinite(std_k)]
        tau_std = float(1.0 / math.sqrt(np.sum(1.0 / s**2))) if s.size else None
    # The fitted curve on the averaged output edge, for plots.
    fit_curve = np.full(length, np.nan)
    col = np.arange(span)
    a = math.exp(-dt / tau)
    if two:
        # The first-order response to the averaged input, scaled to the output.
        mx = aligned_rows(x, starts[idx], span, pol[idx], in_lv).mean(axis=0)
        my = aligned_rows(y, starts[idx], span, pol[idx], out_lv).mean(axis=0)
        fx = first_order_response(mx, tau, dt)
        lo_fit = int(math.ceil(np.mean(edge_frac[idx]) + fit_from[0]))
        if lo_fit < span - 2:
            sel = slice(lo_fit, span)
            A = np.stack([fx[sel], np.ones(span - lo_fit)], axis=1)
            coef, *_ = np.linalg.lstsq(A, my[sel], rcond=None)
            fit_curve[sel] = A @ coef
    else:
        lo_fit = int(np.min(fit_from))
        fit_curve[lo_fit:span] = float(np.median(bb)) + float(np.median(cc)) * a ** col[lo_fit:span]
    mid = None
    if not two:
        # Single channel: each fitted exponential leaves the low level at the
        # instant of the generator's step; it anchors the phase of H and the
        # low-to-midpoint cross-check.
        with np.errstate(divide="ignore", invalid="ignore"):
            n_start = np.log((out_lv.low - bb) / cc) / math.log(a)
        step_at = np.where(np.isfinite(t10), t10, edge_frac).astype(float)
        ok = np.isfinite(n_start)
        step_at[idx[ok]] = n_start[ok]
        t50_rows = rising_edge_times(rows, out_lv, 0)[1]
        dmid = (t50_rows - n_start) * dt
        dmid = dmid[np.isfinite(dmid)]
        if dmid.size:
            mid = (float(np.mean(dmid)) / LN2,
                   float(np.std(dmid, ddof=1) / math.sqrt(dmid.size)) / LN2 if dmid.size > 1 else None)
        return TimeConstantFit(tau, tau_std, method, fit_curve, step_at, mid)
    return TimeConstantFit(tau, tau_std, method, fit_curve)

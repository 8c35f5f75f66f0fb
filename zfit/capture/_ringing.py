"""Ringing after the edges: damped exponential modes by the matrix-pencil
method, and the dominant oscillation of an averaged edge with its uncertainty.

References
----------
Y. Hua and T. K. Sarkar, "Matrix pencil method for estimating parameters of
exponentially damped/undamped sinusoids in noise", IEEE Trans. Acoustics,
Speech and Signal Processing 38(5), 814-824, 1990, doi:10.1109/29.56027.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

__all__ = ["matrix_pencil", "Ringing", "ringing_of"]


def matrix_pencil(y, dt: float, *, noise: float = 0.0, max_order: int = 12):
    """Return the damped exponential modes of `y` by the matrix-pencil method.

    ``y[k] = sum_i R_i z_i^k`` with ``z_i = exp((-alpha_i + j 2 pi f_i) dt)``.
    The model order is the number of singular values of the Hankel data
    matrix above twice the level white noise would give.

    Parameters
    ----------
    y : array_like
        Uniform samples.
    dt : float
        Sample interval in s.
    noise : float
        Standard deviation of the white noise in `y` (sets the order).
    max_order : int
        Largest model order.

    Returns
    -------
    freq_hz, alpha, amplitude : numpy.ndarray
        Frequency (Hz, >= 0), damping (1/s) and peak amplitude (V) of each
        mode; a conjugate pair is one mode with twice the residue's modulus.
    energy : numpy.ndarray
        Energy of each mode over the record (sum of squares), for ranking.

    References
    ----------
    Y. Hua and T. K. Sarkar, IEEE Trans. ASSP 38(5), 814-824, 1990,
    doi:10.1109/29.56027 (the SVD-based pencil, section IV).
    """
    y = np.asarray(y, dtype=float)
    n = y.size
    L = max(2, n // 3)  # the pencil parameter between N/3 and N/2 minimises the variance (Hua & Sarkar)
    rows = n - L
    idx = np.arange(rows)[:, None] + np.arange(L + 1)[None, :]
    Y = y[idx]
    # The right singular vectors and singular values of Y from the eigen-
    # decomposition of the small Gram matrix Y^T Y: several times faster than
    # the SVD of Y, and exact enough for singular values above 1e-7 of the largest.
    lam, vec = np.linalg.eigh(Y.T @ Y)
    order = np.argsort(lam)[::-1]
    s = np.sqrt(np.maximum(lam[order], 0.0))
    vh = vec[:, order].T
    floor = 2.0 * noise * (math.sqrt(rows) + math.sqrt(L + 1))
    m = int(np.count_nonzero(s > max(floor, s[0] * 1e-7)))
    m = int(np.clip(m, 1, min(max_order, L - 1)))
    v = vh[:m]
    v1, v2 = v[:, :-1], v[:, 1:]
    # v2 pinv(v1) with pinv(v1) = v1^T (v1 v1^T)^-1 (v1 has full row rank).
    z = np.linalg.eigvals(np.linalg.solve((v1 @ v1.T).T, (v2 @ v1.T).T).T)
    k = np.arange(n)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        V = z[None, :] ** k[:, None]
        res, *_ = np.linalg.lstsq(V, y.astype(complex), rcond=None)
    ang = np.angle(z)
    mag = np.abs(z)
    keep = ang >= -1e-12  # one of each conjugate pair (and the real modes)
    pair = ang > 1e-9
    freq = ang[keep] / (2 * np.pi * dt)
    with np.errstate(divide="ignore"):
        alpha = -np.log(np.maximum(mag[keep], 1e-300)) / dt
    amp = np.abs(res[keep]) * np.where(pair[keep], 2.0, 1.0)
    with np.errstate(over="ignore", invalid="ignore"):
        r2 = np.maximum(mag[keep], 1e-300) ** 2
        geo = np.where(np.abs(r2 - 1) < 1e-12, n, (1 - r2**n) / (1 - r2))
    energy = amp**2 * np.abs(geo) * np.where(pair[keep], 0.5, 1.0)
    return freq, alpha, amp, energy


@dataclass(frozen=True)
class Ringing:
    """A damped oscillation after the edges.

    Attributes
    ----------
    frequency_hz : float
        Damped (observed) ringing frequency.
    frequency_std_hz : float
        Its standard uncertainty.
    natural_hz : float
        Undamped natural frequency ``sqrt(f^2 + (alpha/2pi)^2)``: the
        resonance ``1/(2 pi sqrt(L C))`` of the tank that rings.
    natural_std_hz : float
        Its standard uncertainty.
    damping_ratio : float
        ``alpha / (2 pi natural_hz)``.
    amplitude_v : float
        Peak amplitude of the oscillation in the averaged edge (V).
    """

    frequency_hz: float
    frequency_std_hz: float
    natural_hz: float
    natural_std_hz: float
    damping_ratio: float
    amplitude_v: float


def strongest_oscillation(y, dt, noise, window_s):
    f, alpha, amp, energy = matrix_pencil(y, dt, noise=noise)
    nyq = 0.5 / dt
    # An oscillation: at least a cycle and a half in the window, clear of
    # the Nyquist limit, Q above about 1, and well above the noise.
    ok = (f > 1.5 / window_s) & (f < 0.8 * nyq) & (alpha >= -0.1 / window_s)
    with np.errstate(divide="ignore", invalid="ignore"):
        zeta = alpha / np.hypot(2 * np.pi * f, alpha)
    ok &= (zeta < 0.5) & (amp > 4.0 * noise)
    if not ok.any():
        return None
    i = int(np.argmax(np.where(ok, energy, -1.0)))
    return float(f[i]), float(alpha[i]), float(amp[i])


def ringing_of(avg: np.ndarray, dt: float, noise: float, groups: list[np.ndarray], group_noise: float):
    """Ringing of an averaged, edge-aligned waveform that starts where the edge arrives."""
    n = avg.size
    if n < 24:
        return None
    q = max(1, int(math.ceil(n / 400)))

    def decimate(v, q):
        m = (v.size // q) * q
        return v[:m].reshape(-1, q).mean(axis=1)

    first = strongest_oscillation(decimate(avg, q), dt * q, noise / math.sqrt(q), n * dt)
    if first is None:
        return None
    f, alpha, amp = first
    # Zoom in: about eight decay times (or the whole window), at a rate that
    # gives at least 16 samples per cycle, for the accurate estimate.
    span = n if alpha <= 0 else min(n, int(8.0 / (alpha * dt)) + 8)
    q2 = max(1, min(q, int(1.0 / (16 * f * dt))))
    span = min(span, 400 * q2)
    res = strongest_oscillation(decimate(avg[:span], q2), dt * q2, noise / math.sqrt(q2), span * dt)
    if res is None:
        res = first
        span, q2 = n, q
    f, alpha, amp = res
    fn = math.hypot(f, alpha / (2 * np.pi))
    # Uncertainty: the spread of the same estimate on independent groups of edges.
    est = []
    for g in groups:
        r = strongest_oscillation(decimate(g[:span], q2), dt * q2, group_noise / math.sqrt(q2), span * dt)
        if r is not None and abs(r[0] - f) < 0.2 * f:
            est.append((r[0], math.hypot(r[0], r[1] / (2 * np.pi))))
    if len(est) >= 3:
        e = np.array(est)
        sf = float(np.std(e[:, 0], ddof=1) / math.sqrt(len(est)))
        sn = float(np.std(e[:, 1], ddof=1) / math.sqrt(len(est)))
    else:
        # Cramér-Rao-like bound of a sinusoid's frequency in white noise,
        # var(omega dt) ~ 24 sigma^2 / (A^2 N^3), with N the samples within one
        # decay time (from memory; rough for strongly damped ringing).
        neff = span / q2 if alpha <= 0 else min(span / q2, 1.0 / (alpha * dt * q2))
        sd = math.sqrt(24.0) * (noise / math.sqrt(q2)) / (max(amp, 1e-300) * max(neff, 3.0) ** 1.5)
        sf = sn = sd / (2 * np.pi * dt * q2)
    return Ringing(f, sf, fn, sn, float(alpha / (2 * np.pi * fn)), amp)

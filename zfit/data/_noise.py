"""Noise estimated from the data: the scatter of a dense sweep about a local smooth fit.

A dense sweep of a passive part is smooth on the scale of a few points, so
what a local low-order polynomial (in log frequency) through the
neighbours of a point does not explain is, there, noise.  The local scatter
is turned into a robust point-by-point sigma, and the two terms of the
instrument model (`InstrumentNoise`: ``rel * |X| + floor``, on S for
analyser data, on Z for tables) are fitted to it.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ._connection import InstrumentNoise

__all__ = ["NoiseEstimate", "local_sigma", "fitted_noise", "noise_block", "MIN_POINTS_ESTIMATE",
           "SOURCE_GIVEN", "SOURCE_ESTIMATED", "SOURCE_DEFAULT"]

#: With fewer points the local fits have no neighbours to spare: the
#: estimate is not made and the format's default noise model is used.
MIN_POINTS_ESTIMATE = 15

SOURCE_GIVEN = "given"
SOURCE_ESTIMATED = "estimated from the data"
SOURCE_DEFAULT = "default"

# Half-width of the window of neighbours of a local fit, and its degree: a
# cubic through 2 x 4 neighbours follows a resonance sampled at a few points
# per 3 dB bandwidth and leaves the noise alone (the leave-one-out prediction
# inflates it by sqrt(1 + h), corrected below).
_HALF = 4
_DEGREE = 3
# Half-width of the window of normalised residuals whose median absolute
# deviation gives sigma at a point.
_MAD_HALF = 10
# 1 / Phi^-1(3/4): the MAD of a Gaussian sample times this is its sigma.
_MAD_TO_SIGMA = 1.482602218505602


@dataclass(frozen=True)
class NoiseEstimate:
    """The noise model a sweep's uncertainty came from, and where it came from.

    Attributes
    ----------
    source : {'given', 'estimated from the data', 'default'}
        Given by the user (``--noise-rel``, ``--noise-floor``), estimated from
        the scatter of the data (`fitted_noise`), or the format's default
        (too few points to estimate).
    rel, floor : float
        The two terms of the model ``sigma = rel * |X| + floor``.
    on : {'S', 'Z'}
        What the model is on: the measured S-parameter or the impedance.
    band_hz : tuple of float
        The band the model was estimated over (or applies to).
    points : int
        Points the estimate used (0 when not estimated).
    """

    source: str
    rel: float
    floor: float
    on: str
    band_hz: tuple[float, float]
    points: int = 0

    @property
    def noise(self) -> InstrumentNoise:
        """The model as `InstrumentNoise`."""
        return InstrumentNoise(self.rel, self.floor)

    def to_dict(self) -> dict:
        """Return the ``noise`` block of the JSON outputs (``source``, the terms, the band)."""
        return {"source": self.source, "on": self.on, "rel": self.rel, "floor": self.floor,
                "f_min_hz": self.band_hz[0], "f_max_hz": self.band_hz[1], "points": self.points}


def local_sigma(f_hz, values) -> np.ndarray:
    """Return the standard deviation of the noise on `values`, point by point.

    The scatter is measured twice, on the values and on their logarithm
    (``ln|X| + j arg X``, whose noise is ``dX / X``: a power law ``f^n`` is a
    straight line there, so sparse tables of capacitors and inductors are
    followed where a polynomial in X itself is not); at each point the
    smaller of the two is kept, the one whose smoother followed the data
    better.  In each domain, at each point, a polynomial of degree 3 in ``log f`` is fitted by least
    squares to its 8 nearest neighbours (the point itself left out) and
    predicts the point; the residual ``r``, divided by ``sqrt(1 + h)``
    (``h`` the variance of the prediction in units of the noise variance),
    has the variance of the noise whatever the spacing of the points.  The
    real and imaginary parts of these normalised residuals in a window of 21
    points give sigma through their median absolute deviation, so that the
    few points where the local cubic cannot follow the data (a sharp
    resonance, a step between sweep segments) do not count.

    Parameters
    ----------
    f_hz : array_like of float
        Increasing frequencies (Hz), at least `MIN_POINTS_ESTIMATE`.
    values : array_like of complex
        The measured quantity (S-parameter or impedance).

    Returns
    -------
    numpy.ndarray
        Complex-circular sigma (``E|dX|^2 = sigma^2``) at each point.

    References
    ----------
    .. [1] T. Gasser, L. Sroka and C. Jennen-Steinmetz, "Residual variance
       and residual pattern in nonlinear regression", *Biometrika* 73(3),
       625-633, 1986 (pseudo-residuals of a local fit, normalised to the
       noise variance; here with a local cubic instead of a line).
    .. [2] F. R. Hampel, "The influence curve and its role in robust
       estimation", *J. Amer. Statist. Assoc.* 69(346), 383-393, 1974 (the
       median absolute deviation).
    """
    x = np.log(np.asarray(f_hz, dtype=float))
    y = np.asarray(values, dtype=complex)
    if x.size < 2 * _HALF + 1:
        raise ValueError(f"local_sigma needs at least {2 * _HALF + 1} points, got {x.size}")
    sigma = _scatter(x, y)
    mag = np.abs(y)
    if np.all(mag > 0):
        logs = mag * _scatter(x, np.log(mag) + 1j * np.unwrap(np.angle(y)))
        sigma = np.fmin(sigma, logs)
    return sigma


def _scatter(x: np.ndarray, y: np.ndarray) -> np.ndarray:
    """Robust local sigma of `y` about a local cubic in `x` (see `local_sigma`)."""
    n = x.size
    # Neighbour windows (shifted inwards at the ends), centre left out.
    lo = np.clip(np.arange(n) - _HALF, 0, n - 2 * _HALF - 1)
    idx = lo[:, None] + np.arange(2 * _HALF + 1)[None, :]
    centre = np.arange(n)
    keep = idx != centre[:, None]
    nb = idx[keep].reshape(n, 2 * _HALF)
    # Local coordinates, scaled to the window: well-conditioned Vandermonde.
    u = x[nb] - x[:, None]
    scale = np.max(np.abs(u), axis=1, keepdims=True)
    u = u / scale
    v = np.stack([u**k for k in range(_DEGREE + 1)], axis=2)  # (n, 8, 4)
    vtv = np.einsum("nik,nil->nkl", v, v)
    vty = np.einsum("nik,ni->nk", v, y[nb])
    coef = np.linalg.solve(vtv, vty[..., None])[..., 0]
    pred = coef[:, 0]  # the polynomial at the centre, u = 0
    h = np.linalg.solve(vtv, np.eye(_DEGREE + 1)[None, :, 0:1].repeat(n, axis=0))[:, 0, 0]
    r = (y - pred) / np.sqrt(1.0 + h)
    parts = np.abs(np.concatenate([r.real[:, None], r.imag[:, None]], axis=1))
    m = min(_MAD_HALF, (n - 1) // 2)
    lo = np.clip(np.arange(n) - m, 0, n - 2 * m - 1)
    win = lo[:, None] + np.arange(2 * m + 1)[None, :]
    mad = np.median(parts[win].reshape(n, -1), axis=1)
    # Each part carries sigma / sqrt(2) of complex-circular noise.
    return np.sqrt(2.0) * _MAD_TO_SIGMA * mad


def fitted_noise(f_hz, values, on: str) -> NoiseEstimate | None:
    """Return the instrument noise model fitted to the scatter of the data.

    The two terms ``rel`` and ``floor`` of ``sigma = rel * |X| + floor`` are
    fitted, non-negative, to `local_sigma` by least squares on the relative
    misfit ``(model - sigma_i) / model`` (iterated from a first pass
    weighted by ``1 / sigma_i``); points more than three times above the
    model (where the local fit could not follow the data) are left out of
    the next pass.

    Parameters
    ----------
    f_hz : array_like of float
        Increasing frequencies (Hz).
    values : array_like of complex
        The measured quantity the model is on: S-parameter or impedance.
    on : {'S', 'Z'}
        Which of the two `values` is.

    Returns
    -------
    NoiseEstimate or None
        None with fewer than `MIN_POINTS_ESTIMATE` points, or when the data
        show no scatter at all (a noiseless simulation).

    References
    ----------
    .. [1] C. L. Lawson and R. J. Hanson, *Solving Least Squares Problems*,
       Prentice-Hall, 1974, chapter 23 (non-negative least squares).
    """
    from scipy.optimize import nnls

    f = np.asarray(f_hz, dtype=float)
    y = np.asarray(values, dtype=complex)
    if f.size < MIN_POINTS_ESTIMATE:
        return None
    sig = local_sigma(f, y)
    mag = np.abs(y)
    ok = np.isfinite(sig) & (sig > 0) & np.isfinite(mag)
    if ok.sum() < MIN_POINTS_ESTIMATE // 2:
        return None
    # A scale for the floor column keeps the two columns of like size.
    tiny = float(np.median(sig[ok]))
    weight = 1.0 / sig
    coef = None
    for _ in range(6):
        # Relative misfit against the model of the last pass (against the
        # estimates themselves at first): weighting by 1/sigma_i would pull
        # the fit towards the estimates that came out low.
        a = np.column_stack([mag[ok], np.full(int(ok.sum()), tiny)]) * weight[ok, None]
        coef, _res = nnls(a, sig[ok] * weight[ok])
        model = coef[0] * mag + coef[1] * tiny
        if not np.all(model[ok] > 0):
            break
        weight = 1.0 / model
        inlier = np.isfinite(sig) & (sig > 0) & (sig < 3.0 * model)
        if inlier.sum() >= MIN_POINTS_ESTIMATE // 2:
            ok = inlier
    rel, floor = float(coef[0]), float(coef[1] * tiny)
    if not (rel > 0 or floor > 0):
        return None
    return NoiseEstimate(SOURCE_ESTIMATED, rel, floor, on, (float(f[0]), float(f[-1])), int(ok.sum()))


def noise_block(sweep) -> dict | None:
    """Return the ``noise`` block of the JSON outputs for `sweep` (``zfit info`` and ``zfit identify``).

    ``{"on": "S"|"Z", "rel", "floor"}``, with ``source`` ('given',
    'estimated from the data' or 'default'), the band of the estimate
    (``f_min_hz``, ``f_max_hz``) and the ``points`` it used when the sweep
    records where its model came from (`Sweep.noise_estimate`); None when
    the sweep carries its own sigma without a model.

    Parameters
    ----------
    sweep : Sweep
        The measurement.
    """
    if sweep.noise is None:
        return None
    block = {"on": "S" if sweep.s_param is not None else "Z", "rel": sweep.noise.rel, "floor": sweep.noise.floor}
    if sweep.noise_estimate is not None:
        est = sweep.noise_estimate.to_dict()
        block.update(source=est["source"], f_min_hz=est["f_min_hz"], f_max_hz=est["f_max_hz"], points=est["points"])
    return block

"""The criteria identification judges models by: the BIC and the test of a valid band.

References
----------
.. [1] G. Schwarz, "Estimating the dimension of a model", Ann. Statist.
   6(2), 461-464, 1978, doi:10.1214/aos/1176344136.
"""

from __future__ import annotations

import math

import numpy as np

__all__ = ["bic", "valid_mask", "longest_run"]


def bic(chi2: float, rows: int, k: int) -> float:
    """Schwarz's criterion for Gaussian residuals with a common unknown scale.

    ``n ln(chi2 / n) + k ln n`` (Schwarz 1978): the noise level is taken from
    the data rather than trusted blindly, so a noise model that is off by a
    constant factor does not bias the choice.

    Parameters
    ----------
    chi2 : float
        The fit's chi-square.
    rows : int
        Number of real residuals (twice the complex points).
    k : int
        Number of parameters.
    """
    return rows * math.log(max(chi2, 1e-300) / rows) + k * math.log(rows)


def longest_run(ok) -> tuple[int, int]:
    """Return (start, stop) indices of the longest run of True in `ok`."""
    best = (0, 0)
    n = ok.size
    if n == 0:
        return best
    d = np.diff(np.concatenate([[0], ok.astype(np.int8), [0]]))
    starts, stops = np.flatnonzero(d == 1), np.flatnonzero(d == -1)
    if starts.size == 0:
        return best
    i = int(np.argmax(stops - starts))
    return int(starts[i]), int(stops[i])


def _window_mean(e, w):
    c = np.concatenate([[0.0], np.cumsum(e)])
    n = e.size
    h = w // 2
    lo = np.clip(np.arange(n) - h, 0, n)
    hi = np.clip(np.arange(n) + h + 1, 0, n)
    return (c[hi] - c[lo]) / (hi - lo), hi - lo


def valid_mask(e_circuit, e_rational=None) -> np.ndarray:
    """Return the points where a circuit's residual is within the noise.

    Over a sliding window of ``max(9, N/25)`` points the mean squared
    normalised residual of the circuit is compared with the noise level
    (1, or the rational model's own level where that is higher: a noise
    model that is too optimistic is then not held against the circuit).
    A point passes when the circuit's window mean is below
    ``level * (1 + 5 / sqrt(w))``: the mean of w unit-mean exponential
    terms has a standard deviation of ``1 / sqrt(w)``, so a right model fails
    a window only by a five-sigma fluctuation.

    Parameters
    ----------
    e_circuit : array_like
        ``|normalised residual|^2`` of the circuit at each point.
    e_rational : array_like, optional
        The same for the rational model.
    """
    e = np.asarray(e_circuit, float)
    n = e.size
    w = max(9, n // 25)
    if w % 2 == 0:
        w += 1
    mc, cnt = _window_mean(e, w)
    level = np.ones(n)
    if e_rational is not None:
        mr, _ = _window_mean(np.asarray(e_rational, float), w)
        level = np.maximum(level, mr)
    return mc <= level * (1.0 + 5.0 / np.sqrt(cnt))


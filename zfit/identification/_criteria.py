"""The criteria identification judges models by: the BIC and the test of a valid band.

Bands are measured in log-frequency span, not in points: a linear sweep puts
90 % of its points in the top decade, and a rule that counted points would
judge such a sweep by its top decade alone.  Each point stands for its cell
of ``ln f`` (`log_cells`), and windows, runs and fractions of the band are
spans of ``ln f``; on a sweep evenly spaced in log frequency every cell is
the same and the rules count points as before.

References
----------
.. [1] G. Schwarz, "Estimating the dimension of a model", Ann. Statist.
   6(2), 461-464, 1978, doi:10.1214/aos/1176344136.
"""

from __future__ import annotations

import math

import numpy as np

__all__ = ["bic", "valid_mask", "longest_run", "log_cells", "span_of"]


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


def log_cells(f_hz) -> np.ndarray:
    """Return the span of ``ln f`` each point stands for.

    Half the distance to each neighbour, the whole distance to the one
    neighbour at either end (so that every cell of an evenly log-spaced
    sweep is the same); one point alone stands for a cell of 1.

    Parameters
    ----------
    f_hz : array_like
        Increasing frequencies in Hz.
    """
    x = np.log(np.asarray(f_hz, dtype=float))
    if x.size < 2:
        return np.ones(x.size)
    d = np.diff(x)
    return np.concatenate([[d[0]], 0.5 * (d[:-1] + d[1:]), [d[-1]]])


def span_of(cells, start: int, stop: int) -> float:
    """Return the log-frequency span of points ``start:stop`` (their cells summed)."""
    return float(np.sum(np.asarray(cells, float)[start:stop]))


def longest_run(ok, cells=None) -> tuple[int, int]:
    """Return (start, stop) indices of the widest run of True in `ok`.

    Widest in log-frequency span when the points' `cells` are given (the
    first of runs equally wide within a quarter of the mean cell), in points
    otherwise.
    """
    best = (0, 0)
    n = ok.size
    if n == 0:
        return best
    d = np.diff(np.concatenate([[0], ok.astype(np.int8), [0]]))
    starts, stops = np.flatnonzero(d == 1), np.flatnonzero(d == -1)
    if starts.size == 0:
        return best
    if cells is None:
        i = int(np.argmax(stops - starts))
    else:
        c = np.concatenate([[0.0], np.cumsum(np.asarray(cells, float))])
        width = c[stops] - c[starts]
        # Runs within a quarter of the mean cell are equally wide (the
        # rounding of printed frequencies): the first wins, as by points.
        i = int(np.flatnonzero(width >= width.max() - 0.25 * c[-1] / n)[0])
    return int(starts[i]), int(stops[i])


def _window_mean(e, lo, hi):
    c = np.concatenate([[0.0], np.cumsum(e)])
    return (c[hi] - c[lo]) / (hi - lo), hi - lo


def _windows(n, w, f_hz):
    """Return the (lo, hi) index bounds of each point's window.

    ``w`` points centred on the point without frequencies; with them, the
    points within the log-frequency span that ``w`` points cover on average
    (``(w - 1) / 2`` mean log spacings either side), and at least 4
    neighbours either side where the sweep is sparse (the bottom decades of
    a linear sweep).
    """
    h = w // 2
    idx = np.arange(n)
    lo = np.clip(idx - h, 0, n)
    hi = np.clip(idx + h + 1, 0, n)
    if f_hz is None or n < 3:
        return lo, hi
    x = np.log(np.asarray(f_hz, dtype=float))
    # Half a spacing beyond the h-th neighbour: an evenly log-spaced sweep
    # gets its w points whatever the rounding of its printed frequencies.
    half = (h + 0.5) * (x[-1] - x[0]) / (n - 1)
    lo_f = np.searchsorted(x, x - half, side="left")
    hi_f = np.searchsorted(x, x + half, side="right")
    lo = np.minimum(lo_f, np.clip(idx - 4, 0, n))
    hi = np.maximum(hi_f, np.clip(idx + 5, 0, n))
    return lo, hi


def valid_mask(e_circuit, e_rational=None, f_hz=None) -> np.ndarray:
    """Return the points where a circuit's residual is within the noise.

    Over a sliding window of ``max(9, N/25)`` points (with `f_hz`: the
    log-frequency span such a window covers on average, at least 9 points)
    the mean squared normalised residual of the circuit is compared with
    the noise level (1, or the rational model's own level where that is
    higher: a noise model that is too optimistic is then not held against
    the circuit).  A point passes when the circuit's window mean is below
    ``level * (1 + 5 / sqrt(w))``: the mean of w unit-mean exponential
    terms has a standard deviation of ``1 / sqrt(w)``, so a right model fails
    a window only by a five-sigma fluctuation.

    Parameters
    ----------
    e_circuit : array_like
        ``|normalised residual|^2`` of the circuit at each point.
    e_rational : array_like, optional
        The same for the rational model.
    f_hz : array_like, optional
        The points' frequencies: windows of equal log-frequency span.
    """
    e = np.asarray(e_circuit, float)
    n = e.size
    w = max(9, n // 25)
    if w % 2 == 0:
        w += 1
    lo, hi = _windows(n, w, f_hz)
    mc, cnt = _window_mean(e, lo, hi)
    level = np.ones(n)
    if e_rational is not None:
        mr, _ = _window_mean(np.asarray(e_rational, float), lo, hi)
        level = np.maximum(level, mr)
    return mc <= level * (1.0 + 5.0 / np.sqrt(cnt))

"""State levels and transitions of a bilevel waveform, after IEEE Std 181.

State levels by the histogram method, and the edges between them found with
hysteresis at the 10 % and 90 % reference levels.

References
----------
IEEE Std 181-2011, *IEEE Standard for Transitions, Pulses, and Related
Waveforms*, doi:10.1109/IEEESTD.2011.6016198 (state levels by histogram,
reference levels, transition duration).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

__all__ = ["Levels", "state_levels", "find_edges"]

# State levels and noise are judged on at most this many samples.
_LEVEL_SAMPLES = 1 << 21


@dataclass(frozen=True)
class Levels:
    """The two state levels of a bilevel waveform (IEEE Std 181-2011, 5.2).

    Attributes
    ----------
    low, high : float
        Low and high state levels in V.
    low_noise, high_noise : float
        Standard deviation of the samples settled at each level (V): the
        noise and quantisation of the channel.
    """

    low: float
    high: float
    low_noise: float
    high_noise: float

    @property
    def amplitude(self) -> float:
        """``high - low`` in V."""
        return self.high - self.low

    def reference(self, fraction: float) -> float:
        """Return the reference level at `fraction` of the amplitude.

        Parameters
        ----------
        fraction : float
            0.1, 0.5 and 0.9 give the 10 %, 50 % and 90 % reference levels.
        """
        return self.low + fraction * self.amplitude

    @property
    def noise(self) -> float:
        """The larger of the two level noises."""
        return max(self.low_noise, self.high_noise)


def state_levels(x, *, bins: int | None = None) -> Levels:
    """Return the state levels of a bilevel waveform by the histogram method.

    The histogram of the samples (every k-th of a record longer than two
    million) is split at the middle of the range; the mode of each half is a
    state level (IEEE Std 181-2011, 5.2.1.1, the histogram mode method),
    refined by the mean of the samples within 2 % of the range around the
    mode, which keeps the resolution of the samples rather than that of the
    bins.  The noise of each level is the RMS difference of consecutive
    samples inside that window, over sqrt 2 (the first two million samples).

    Parameters
    ----------
    x : array_like
        Samples in V.
    bins : int, optional
        Histogram bins (default: 4 per expected 8-bit code, fewer for short
        records so that each bin holds enough samples).

    References
    ----------
    IEEE Std 181-2011, doi:10.1109/IEEESTD.2011.6016198, 5.2.1.
    """
    x = np.asarray(x, dtype=float)
    lo, hi = float(x.min()), float(x.max())
    if hi <= lo:
        return Levels(lo, hi, 0.0, 0.0)
    # The histogram of a long record from every k-th sample (at most 2
    # million): the modes and the means around them are then known to far
    # better than the noise, and the pass costs a fraction.
    k = max(1, int(math.ceil(x.size / _LEVEL_SAMPLES)))
    xs = x[::k]
    nb = bins or int(np.clip(xs.size // 40, 32, 1024))
    scale = nb / (hi - lo)
    idx = np.minimum(((xs - lo) * scale).astype(np.intp), nb - 1)
    counts = np.bincount(idx, minlength=nb)
    sums = np.bincount(idx, weights=xs, minlength=nb)
    half = nb // 2
    w = max(1, int(round(0.02 * nb)))

    def level(lo_bin, hi_bin):
        m = lo_bin + int(np.argmax(counts[lo_bin:hi_bin]))
        a, b = max(lo_bin, m - w), min(hi_bin, m + w + 1)
        c = counts[a:b].sum()
        return sums[a:b].sum() / c, (lo + a / scale, lo + b / scale)

    low, (la, lb) = level(0, half)
    high, (ha, hb) = level(half, nb)
    # The noise from differences of consecutive settled samples: a slow
    # approach to the level (an R-C tail) inflates the spread of the samples
    # around the level, but not their differences.
    xn = x[:_LEVEL_SAMPLES]  # consecutive samples for the differences
    d = np.diff(xn)

    def noise(a, b):
        inside = (xn >= a) & (xn <= b)
        pair = inside[:-1] & inside[1:]
        k = int(np.count_nonzero(pair))
        return math.sqrt(float(np.dot(d[pair], d[pair])) / (2.0 * k)) if k else 0.0

    return Levels(float(low), float(high), noise(la, lb), noise(ha, hb))


def find_edges(x, levels: Levels, *, low_ref: float = 0.1, high_ref: float = 0.9):
    """Return the transitions of `x` between its states, with hysteresis.

    A transition is counted only when the waveform leaves one reference
    level and reaches the other (10 % and 90 % by default), so noise near
    either level makes no false edge.

    Parameters
    ----------
    x : numpy.ndarray
        Samples in V.
    levels : Levels
        The state levels.
    low_ref, high_ref : float
        Reference levels as fractions of the amplitude.

    Returns
    -------
    polarity : numpy.ndarray of int
        +1 for a rising, -1 for a falling edge.
    t_first, t_mid, t_last : numpy.ndarray of float
        Fractional sample indices where the edge crosses the reference level
        it leaves, the 50 % level, and the reference level it reaches.
    """
    x = np.asarray(x, dtype=float)
    lref, href, mid = levels.reference(low_ref), levels.reference(high_ref), levels.reference(0.5)
    state = (x >= href).view(np.int8) - (x <= lref).view(np.int8)
    # Run-length form: the state changes only a few times per edge, so the
    # runs are few even in a record of ten million samples.
    c = np.flatnonzero(state[1:] != state[:-1]) + 1
    run_start = np.concatenate([[0], c])
    run_end = np.concatenate([c, [x.size]]) - 1
    run_val = state[run_start]
    kept = run_val != 0
    run_start, run_end, run_val = run_start[kept], run_end[kept], run_val[kept]
    change = np.flatnonzero(run_val[1:] != run_val[:-1])
    d = run_end[change]          # last sample in the old state
    a = run_start[change + 1]    # first sample in the new state
    pol = run_val[change + 1].astype(int)
    if d.size == 0:
        empty = np.zeros(0)
        return np.zeros(0, dtype=int), empty, empty, empty
    r_first = np.where(pol > 0, lref, href)
    r_last = np.where(pol > 0, href, lref)
    t_first = d + (r_first - x[d]) / (x[d + 1] - x[d])
    t_last = (a - 1) + (r_last - x[a - 1]) / (x[a] - x[a - 1])
    # The 50 % crossing: the first one after the waveform left its old state.
    below = x < mid
    cross = np.flatnonzero(below[:-1] != below[1:])
    j = np.searchsorted(cross, d)
    j = np.minimum(j, cross.size - 1)
    i = cross[j]
    t_mid = i + (mid - x[i]) / (x[i + 1] - x[i])
    return pol, t_first, t_mid, t_last

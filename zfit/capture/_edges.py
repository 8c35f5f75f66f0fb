"""Edge-aligned rows of a record: each edge's segment cut out and flipped to
rise, the 10/50/90 % instants of each row, and the blocks in which rows are
gathered so that a long record never sits in memory as one matrix.
"""

from __future__ import annotations

import numpy as np

from ._levels import Levels

__all__ = ["aligned_rows", "row_crossing", "rising_edge_times", "row_blocks"]

# Rows are gathered into blocks of at most this many samples.
_BLOCK_SAMPLES = 1 << 21


def aligned_rows(x, starts, length, pol, levels: Levels):
    """Rows of `x` from each start, flipped so that every edge rises."""
    rows = x[starts[:, None] + np.arange(length)[None, :]]
    flip = pol < 0
    if flip.any():
        rows[flip] = (levels.low + levels.high) - rows[flip]
    return rows


def row_crossing(rows, idx, level):
    """Fractional index where each row crosses `level` between idx and idx + 1."""
    r = np.arange(rows.shape[0])
    i = np.clip(idx, 0, rows.shape[1] - 2)
    v0, v1 = rows[r, i], rows[r, i + 1]
    with np.errstate(divide="ignore", invalid="ignore"):
        return i + (level - v0) / (v1 - v0)


def rising_edge_times(rows, levels: Levels, begin: int):
    """Per row: (t10, t50, t90, arrival index) of the final transition into the high state.

    The last sample at or below 10 % (from `begin` on) starts the edge and the
    first sample at or above 90 % after it ends it, so a fast spike ahead of
    the main transition (stray C passing the edge) does not count as the edge.
    """
    n, m = rows.shape
    lref, mid, href = levels.reference(0.1), levels.reference(0.5), levels.reference(0.9)
    col = np.arange(m)[None, :]
    low = (rows <= lref) & (col >= begin)
    has_low = low.any(axis=1)
    last_low = np.where(has_low, m - 1 - np.argmax(low[:, ::-1], axis=1), begin)
    high = (rows >= href) & (col > last_low[:, None])
    has_high = high.any(axis=1)
    arrive = np.argmax(high, axis=1)
    ok = has_high & (arrive > 0)
    below_mid = (rows < mid) & (col < arrive[:, None]) & (col >= last_low[:, None])
    last_below = np.where(below_mid.any(axis=1), m - 1 - np.argmax(below_mid[:, ::-1], axis=1), last_low)
    t10 = row_crossing(rows, last_low, lref)
    t50 = row_crossing(rows, last_below, mid)
    t90 = row_crossing(rows, arrive - 1, href)
    bad = ~ok | ~has_low
    for t in (t10, t50, t90):
        t[bad] = np.nan
    return t10, t50, t90, np.where(bad, -1, arrive)


def row_blocks(n_rows, length):
    per = max(1, _BLOCK_SAMPLES // max(length, 1))
    return [(i, min(n_rows, i + per)) for i in range(0, n_rows, per)]

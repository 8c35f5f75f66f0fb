"""The time base of a text capture: a uniform grid from a time column, or from an index and its increment."""

from __future__ import annotations

import math
import warnings

import numpy as np

from .._errors import MeasurementWarning, ZfitInputError
from .._units import format_eng
from ._capture_record import check_finite, check_time_base

__all__ = ["uniform_time", "JITTER_WARN"]

#: Time steps may scatter around the mean by this much (rms, relative to dt)
#: before a warning says so; scope time bases are far better than this, so a
#: larger scatter means a logger with a jittery clock or a file pieced together.
JITTER_WARN = 0.02


def uniform_time(t: np.ndarray, path, first_line: int):
    """Return (dt, t0, notes) of a time column, raising if it is not uniform.

    A scope prints its time column rounded; when the rounding is coarser than
    the sample interval, consecutive times repeat and the step is only known
    from the span, which is still exact for a uniform time base.
    """
    n = t.size
    if not np.all(np.isfinite(t[[0, -1]])):
        check_finite(t, "time", path, first_line)
    dt = (t[-1] - t[0]) / (n - 1)
    if not dt > 0:
        raise ZfitInputError("the time column does not increase", path, first_line)
    check_time_base(dt, float(t[0]), path, first_line, "the time column's sample interval")
    # The span over the count carries float rounding (4.0000000000000001e-08):
    # snap to the interval the instrument set when it is that within 1e-9.
    snapped = float(f"{dt:.9g}")
    if abs(snapped - dt) <= 1e-9 * dt:
        dt = snapped
    notes = []
    step = 1 << 20
    max_res = 0.0
    sum_sq = 0.0
    min_pos = math.inf
    blocks = []  # (start, smallest step, largest step) of each block
    base = dt * np.arange(min(step, n))
    buf = np.empty(min(step, n))
    for i in range(0, n, step):
        m = min(step, n - i)
        seg = t[i:i + m + 1]
        d = np.diff(seg)
        if d.size:
            dmin, dmax = float(d.min()), float(d.max())
            if dmin < 0:
                k = i + int(np.argmax(d < 0)) + 1
                raise ZfitInputError("time goes backwards", path, first_line + k)
            min_pos = min(min_pos, dmin if dmin > 0 else float(d[d > 0].min(initial=math.inf)))
            blocks.append((i, dmin, dmax))
        # Residual from the uniform grid, in place (no temporaries of the block's size).
        r = buf[:m]
        np.subtract(seg[:m], t[0] + dt * i, out=r)
        r -= base[:m]
        max_res = max(max_res, float(np.abs(r).max()))
        sum_sq += float(np.dot(r, r))
    rms = math.sqrt(sum_sq / n)
    resolution = max(dt, min_pos if math.isfinite(min_pos) else dt)
    coarse = resolution > 1.5 * dt
    # A step of more than 1.5 intervals (a missing sample) or of zero (a
    # repeated one) breaks the grid, unless the printout is coarser than dt.
    too_long = 1.5 * resolution + 1e-9 * resolution
    for i, dmin, dmax in blocks:
        if dmax > too_long or (dmin <= 0.5 * dt and not coarse):
            d = np.diff(t[i:i + step + 1])
            bad = (d > too_long) | ((d <= 0.5 * dt) & (not coarse))
            k = i + int(np.flatnonzero(bad)[0]) + 1
            raise ZfitInputError(
                f"non-uniform time steps: step of {format_eng(d[k - i - 1], 's', 6)} where the record averages {format_eng(dt, 's', 6)} "
                f"(missing or repeated samples, or a pieced-together record)", path, first_line + k)
    # A coarse printout rounds the two end points too, which anchor the grid.
    if max_res > (1.0 if coarse else 0.5) * resolution * 1.02 + 1e-12 * max(abs(t[0]), abs(t[-1])):
        raise ZfitInputError(
            f"non-uniform time steps: times drift up to {max_res / dt:.3g} sample intervals from a uniform grid "
            f"(dt = {format_eng(dt, 's', 6)})", path, first_line)
    if coarse:
        notes.append(f"time column printed with {format_eng(resolution, 's', 3)} resolution, coarser than the {format_eng(dt, 's', 6)} sample "
                     "interval; uniform sampling assumed, interval from the span")
    elif rms > JITTER_WARN * dt:
        msg = (f"{path}: time steps jitter by {100 * rms / dt:.3g} % rms of the {format_eng(dt, 's', 6)} sample interval; "
               "the analysis assumes uniform sampling")
        notes.append(msg)
        warnings.warn(msg, MeasurementWarning, stacklevel=4)
    return float(dt), float(t[0]), notes

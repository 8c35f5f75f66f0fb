"""Where a measured curve crosses zero or peaks, with the uncertainty of that frequency.

Used for the material figures of a core (the mu'' peak, mu' = mu'') and of
a bead (R = X): each is read from the data, not from a model.

Crossing rule: the first change of sign of ``y`` from + to - (rising
frequency) whose sign persists on ``persist`` points on each side, with at
least one point on each side beyond 3 standard uncertainties (not a
crossing of the noise). The root is refined by the weighted quadratic of
`zfit.identification._measured` through the bracket.

Peak rule: the largest value, away from the band's two edge points; the
vertex of a weighted quadratic in ln f over the points within
``half_span_decades`` of it (at least five), recentred on the vertex and
refitted until it settles; its uncertainty by first-order propagation of
the quadratic's covariance (JCGM 100:2008, 5.1.2) through
``x_v = -b/(2c)``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ._measured import _refined_root

__all__ = ["Located", "first_falling_crossing", "peak_frequency"]

_NOISE_K = 3.0


@dataclass(frozen=True)
class Located:
    """A frequency read from the data.

    Attributes
    ----------
    value_hz, std_hz : float
        The frequency and its standard uncertainty (NaN when not found).
    where : {'in-band', 'below-band', 'above-band'}
        ``in-band`` when found; otherwise on which side of the band it lies.
    """

    value_hz: float
    std_hz: float
    where: str

    @property
    def found(self) -> bool:
        """Whether the frequency lies in the band."""
        return self.where == "in-band"

    def to_dict(self) -> dict:
        """Return ``{"value_hz", "std_hz", "where"}``."""
        return {"value_hz": self.value_hz, "std_hz": self.std_hz, "where": self.where}


def first_falling_crossing(f_hz, y, sy, persist: int = 3) -> Located:
    """Return the first frequency where `y` turns from positive to negative.

    Parameters
    ----------
    f_hz : array_like
        Increasing frequencies.
    y, sy : array_like
        The curve and its standard uncertainty at each frequency.
    persist : int
        Points on each side over which the sign must persist.
    """
    f, y, sy = (np.asarray(a, float) for a in (f_hz, y, sy))
    for i in np.nonzero((y[:-1] > 0) & (y[1:] <= 0))[0]:
        before = slice(max(0, i - persist + 1), i + 1)
        after = slice(i + 1, min(f.size, i + 1 + persist))
        if (np.all(y[before] > 0) and np.all(y[after] < 0)
                and np.any(np.abs(y[before]) > _NOISE_K * sy[before])
                and np.any(np.abs(y[after]) > _NOISE_K * sy[after])):
            v, s = _refined_root(f, y, sy, int(i))
            return Located(float(v), float(s), "in-band")
    # Not found: positive all along means it lies above the band.
    return Located(math.nan, math.nan, "above-band" if y[-1] > 0 else "below-band")


def _vertex(x, y, sy, x0, h, min_points=5):
    d = np.abs(x - x0)
    h = max(h, np.sort(d)[min(min_points, x.size) - 1] * 1.0001)
    idx = np.nonzero(d <= h)[0]
    u = x[idx] - x0
    A = np.vander(u, 3, increasing=True)
    W = 1.0 / sy[idx] ** 2
    cov = np.linalg.inv(A.T @ (W[:, None] * A))
    a, b, c = cov @ (A.T @ (W * y[idx]))
    if c >= 0:
        return None
    xv = -b / (2 * c)
    J = np.array([0.0, -1.0 / (2 * c), b / (2 * c * c)])
    return x0 + xv, math.sqrt(max(float(J @ cov @ J), 0.0)), x[idx[0]], x[idx[-1]]


def peak_frequency(f_hz, y, sy, half_span_decades: float = 0.25) -> Located:
    """Return the frequency where `y` peaks in band (see the module docstring).

    Parameters
    ----------
    f_hz : array_like
        Increasing frequencies.
    y, sy : array_like
        The curve (smoothed or raw) and its standard uncertainty.
    half_span_decades : float
        Half-width of the quadratic's window.
    """
    f, y, sy = (np.asarray(a, float) for a in (f_hz, y, sy))
    x = np.log(f)
    k = int(np.argmax(y))
    if f.size < 5 or k <= 1:
        return Located(math.nan, math.nan, "below-band")
    if k >= f.size - 2:
        return Located(math.nan, math.nan, "above-band")
    x0, h = x[k], half_span_decades * math.log(10.0)
    out = None
    for _ in range(6):
        got = _vertex(x, y, sy, x0, h)
        if got is None or not (x[0] < got[0] < x[-1]):
            break
        moved = abs(got[0] - x0)
        out, x0 = got, got[0]
        if moved < 1e-4:
            break
    if out is None:
        return Located(math.nan, math.nan, "above-band" if k > f.size // 2 else "below-band")
    v = math.exp(out[0])
    return Located(v, v * out[1], "in-band")

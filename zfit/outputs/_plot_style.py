"""The house style of zfit's plots and the helpers every plot shares.

Greyscale-safe colours and line styles, engineering-notation tick labels,
the matplotlib settings, the figure layout in inches (margins, title,
legend rows below the axes), axis styling and the shading of the band that
was not fitted.  Matplotlib is imported on first use with the Agg backend,
so that importing zfit stays fast and no display is needed.

House style
-----------
* Axis tick labels in engineering notation with the unit (``10 kHz``,
  ``2.2 kΩ``, ``50 µs``), so that the axis titles name the quantity only.
* Readable in greyscale: the measurement is black with open markers, the
  equivalent circuit a solid dark line, the rational model a dashed line,
  limits and marks dotted; colour only repeats what the line style says.
* No chart junk: no top/right frame, a faint major grid on log axes only,
  legends without frames, one title line saying what the figure is.
"""

from __future__ import annotations

import math
from typing import Sequence

import numpy as np

from .._units import PREFIXES

__all__ = [
    "eng_tick", "envelope", "pyplot", "styled", "figure_grid", "apply_layout", "set_title", "legend_below",
    "style_axis", "markevery", "shade_outside", "INK", "CIRCUIT", "RATIONAL", "MARK", "BAND", "SHADE",
]


# Greyscale-safe styles: (colour, linestyle, marker).  The colours are dark
# enough to print as distinct greys and differ also in line style.
INK = "#111111"
CIRCUIT = "#1f4e8c"
RATIONAL = "#b3541e"
MARK = "#555555"
BAND = "#c8c8c8"
SHADE = "#ececec"

_UNIT_GLYPH = {"ohm": "Ω", "deg": "°"}


def eng_tick(x: float, unit: str = "", digits: int = 3) -> str:
    """Return a tick label in engineering notation, e.g. ``"10 kHz"``, ``"2.2 kΩ"``.

    Parameters
    ----------
    x : float
        The value in SI units.
    unit : str
        Unit symbol (``"Hz"``, ``"ohm"`` prints as ``Ω``); empty for a pure number.
    digits : int
        Significant digits at most.
    """
    unit = _UNIT_GLYPH.get(unit, unit)
    if x == 0 or not math.isfinite(x):
        return f"0 {unit}".strip() if x == 0 else ""
    e = int(math.floor(math.log10(abs(x)) / 3.0)) * 3
    e = max(min(e, 15), -18)
    m = x / 10.0**e
    if abs(float(f"{m:.{digits}g}")) >= 1000 and e < 15:
        e += 3
        m = x / 10.0**e
    prefix = PREFIXES[e].replace("u", "µ")
    text = f"{m:.{digits}g}"
    sep = " " if (prefix + unit) else ""
    return f"{text}{sep}{prefix}{unit}"


def envelope(x, y, buckets: int = 1500):
    """Return a min/max envelope of a long record for plotting.

    A record of millions of samples is cut into `buckets` runs; each run
    contributes its minimum and maximum (in time order), so that every peak
    and edge stays visible while the figure holds a few thousand points.

    Parameters
    ----------
    x, y : array_like
        The record (x increasing).
    buckets : int
        Number of runs.

    Returns
    -------
    (numpy.ndarray, numpy.ndarray)
        The envelope; the input itself when it is short enough.
    """
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    n = y.size
    if n <= 2 * buckets:
        return x, y
    k = n // buckets
    m = k * buckets
    yb = y[:m].reshape(buckets, k)
    xb = x[:m].reshape(buckets, k)
    imin = np.argmin(yb, axis=1)
    imax = np.argmax(yb, axis=1)
    first = np.minimum(imin, imax)
    second = np.maximum(imin, imax)
    rows = np.arange(buckets)
    xe = np.column_stack([xb[rows, first], xb[rows, second]]).ravel()
    ye = np.column_stack([yb[rows, first], yb[rows, second]]).ravel()
    if m < n:
        xe = np.concatenate([xe, x[m:][[0, -1]]])
        ye = np.concatenate([ye, y[m:][[0, -1]]])
    return xe, ye


def pyplot():
    import matplotlib

    matplotlib.use("Agg", force=False)
    import matplotlib.pyplot as plt

    return plt


_RC = {
    "font.size": 8.5,
    "axes.titlesize": 9.5,
    "axes.labelsize": 8.5,
    "axes.linewidth": 0.7,
    "axes.spines.top": False,
    "axes.spines.right": False,
    "axes.edgecolor": "#333333",
    "xtick.color": "#333333",
    "ytick.color": "#333333",
    "xtick.major.width": 0.6,
    "ytick.major.width": 0.6,
    "xtick.minor.width": 0.4,
    "ytick.minor.width": 0.4,
    "xtick.direction": "out",
    "ytick.direction": "out",
    "legend.frameon": True,
    "legend.framealpha": 0.85,
    "legend.facecolor": "white",
    "legend.edgecolor": "none",
    "legend.fancybox": False,
    "legend.fontsize": 7.5,
    "lines.linewidth": 1.2,
    "svg.fonttype": "none",
    "figure.dpi": 100,
    "savefig.dpi": 150,
}


def styled(fn):
    """Run a plotting function inside the house style's rc settings."""
    import functools

    @functools.wraps(fn)
    def wrapper(*args, **kwargs):
        import matplotlib

        pyplot()
        with matplotlib.rc_context(_RC):
            return fn(*args, **kwargs)

    return wrapper


# Fixed margins in inches (left, right, top, bottom), applied for the
# figure's size when it is saved.  A layout engine would find them by
# measuring every tick label, which costs two thirds of the rendering time.
_MARGINS_IN = (0.78, 0.3, 0.12, 0.42)
_TITLE_IN = 0.24
_LEGEND_ROW_IN = 0.17


def figure_grid(width_in: float, height_in: float, rows: Sequence[float], cols: int = 1, sharex: bool = True):
    import matplotlib

    plt = pyplot()
    with matplotlib.rc_context(_RC):
        fig = plt.figure(figsize=(width_in, height_in))
        gs = fig.add_gridspec(len(rows), cols, height_ratios=list(rows), hspace=0.1)
        axes = []
        for i in range(len(rows)):
            ax = fig.add_subplot(gs[i, 0], sharex=axes[0] if (axes and sharex) else None)
            axes.append(ax)
    fig._zfit_layout = {"gs": gs, "title": False, "legend_rows": 0}
    apply_layout(fig)
    return fig, axes


def apply_layout(fig) -> None:
    """Set the subplot margins for the figure's current size (see `_MARGINS_IN`)."""
    lay = getattr(fig, "_zfit_layout", None)
    if lay is None:
        return
    w, h = fig.get_size_inches()
    left, right, top, bottom = _MARGINS_IN
    top += _TITLE_IN if lay["title"] else 0.0
    bottom += _LEGEND_ROW_IN * lay["legend_rows"] + (0.06 if lay["legend_rows"] else 0.0)
    lay["gs"].update(left=left / w, right=1 - right / w, top=1 - top / h, bottom=min(bottom / h, 0.6))


def set_title(fig, text: str) -> None:
    """A one-line title at the top left of the figure.

    The title carries the user's file name: it is drawn as plain text, never
    parsed as matplotlib's maths markup (a name like ``L_$1.s1p`` would
    otherwise raise or be drawn as a formula).
    """
    fig.suptitle(text, x=0.01, y=0.995, ha="left", va="top", fontsize=9.5, parse_math=False)
    fig._zfit_layout["title"] = True
    apply_layout(fig)


def legend_below(fig, handles, labels, ncols: int) -> None:
    """The legend under the axes, where it never hides the data."""
    import math as _m

    fig.legend(handles, labels, loc="lower center", bbox_to_anchor=(0.5, 0.0), ncols=ncols, handlelength=2.6,
               frameon=False)
    fig._zfit_layout["legend_rows"] = _m.ceil(len(labels) / ncols)
    apply_layout(fig)


def style_axis(ax, xunit: str | None = None, yunit: str | None = None, xlog=True, ylog=False, grid=True):
    from matplotlib.ticker import FuncFormatter, LogLocator, NullFormatter

    if xlog:
        ax.set_xscale("log")
        ax.xaxis.set_major_locator(LogLocator(base=10, numticks=12))
        ax.xaxis.set_minor_formatter(NullFormatter())
    if ylog:
        ax.set_yscale("log")
        ax.yaxis.set_major_locator(LogLocator(base=10, numticks=10))
        ax.yaxis.set_minor_formatter(NullFormatter())
    if xunit is not None:
        ax.xaxis.set_major_formatter(FuncFormatter(lambda v, _pos, u=xunit: eng_tick(v, u)))
    if yunit is not None:
        ax.yaxis.set_major_formatter(FuncFormatter(lambda v, _pos, u=yunit: eng_tick(v, u)))
    for spine in ("top", "right"):
        ax.spines[spine].set_visible(False)
    ax.tick_params(labelsize=7.5)
    if grid:
        ax.grid(True, which="major", color="#dddddd", linewidth=0.5)
        ax.set_axisbelow(True)


def markevery(n: int) -> int:
    return max(1, n // 40)


def shade_outside(ax, f, band, label=None, gid=None):
    """Shade the parts of the frequency axis outside `band` (lo, hi)."""
    lo, hi = band
    first = True
    for a, b in ((f[0], lo), (hi, f[-1])):
        if b > a * (1 + 1e-9):
            span = ax.axvspan(a, b, color=SHADE, zorder=0, lw=0, label=label if first else None)
            if gid:
                span.set_gid(gid)
            first = False

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
    "style_axis", "markevery", "shade_outside", "band_label", "percent_text", "place_label", "INK", "CIRCUIT", "RATIONAL", "MARK", "BAND", "SHADE",
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
        The envelope, every point a sample of the record, the record's last
        sample last; the input itself when it is short enough.
    """
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    n = y.size
    if n <= 2 * buckets:
        return x, y
    # Every sample belongs to a run: the last run is padded with copies of
    # the last sample (which change neither its minimum nor its maximum), so
    # that the samples past the last whole run are drawn like the others,
    # not collapsed into a straight line from the first to the last of them.
    k = -(-n // buckets)
    runs = -(-n // k)
    yb = np.pad(y, (0, runs * k - n), mode="edge").reshape(runs, k)
    imin = np.argmin(yb, axis=1)
    imax = np.argmax(yb, axis=1)
    start = np.arange(runs) * k
    first = np.minimum(start + np.minimum(imin, imax), n - 1)
    second = np.minimum(start + np.maximum(imin, imax), n - 1)
    idx = np.column_stack([first, second]).ravel()
    # The record's last sample closes the envelope where the axis ends.
    if idx[-1] != n - 1:
        idx = np.append(idx, n - 1)
    return x[idx], y[idx]


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


def band_label(of: str) -> str:
    """Return the legend text of a +-2 sigma band: whose uncertainty it is.

    Parameters
    ----------
    of : {'point', 'model'}
        ``'point'``: the uncertainty of one measured point (what the scatter
        of the points lies in, about 95 % of them for normal noise);
        ``'model'``: that of the smooth model curve the band surrounds.
    """
    if of == "point":
        return "±2σ of one measured point"
    if of == "model":
        return "±2σ of the rational model"
    raise ValueError(f"band of {of!r}: use 'point' or 'model'")


def percent_text(fraction: float) -> str:
    """Return a fraction as a per-cent text with two significant digits (``0.0021`` -> ``"0.21 %"``)."""
    if not math.isfinite(fraction):
        return "? %"
    return f"{100.0 * fraction:.2g} %"


def _crossings(box, ax, renderer) -> int:
    """Count the plotted points (and points along each segment) of `ax`'s lines inside `box` (display units)."""
    n = 0
    for line in ax.get_lines():
        if not line.get_visible() or line.get_gid() in (None, ""):
            continue
        xy = line.get_transform().transform(np.column_stack([line.get_xdata(), line.get_ydata()]).astype(float))
        xy = xy[np.isfinite(xy).all(axis=1)]
        if xy.shape[0] >= 2:
            # Points along each segment too, so that a sparse line is not stepped over.
            t = np.linspace(0.0, 1.0, 5)[:, None, None]
            xy = (xy[:-1][None] * (1 - t) + xy[1:][None] * t).reshape(-1, 2)
        n += int(np.count_nonzero((xy[:, 0] >= box.x0) & (xy[:, 0] <= box.x1) & (xy[:, 1] >= box.y0)
                                  & (xy[:, 1] <= box.y1)))
    return n


def place_label(ax, xy, text: str, gid: str | None = None):
    """Annotate the data point `xy` where the text crosses no plotted line, the legend or the frame.

    Tries positions around the point, nearest first, and keeps the first
    whose box (with a small margin) holds no point of any line with a gid
    and overlaps no legend; the least crowded one when none is free.  A
    leader line joins a label set away from its point.  Call it after the
    limits and the layout are final.

    Returns
    -------
    matplotlib.text.Annotation
    """
    fig = ax.figure
    apply_layout(fig)
    fig.draw_without_rendering()  # where a loc="best" legend went
    renderer = fig.canvas.get_renderer()
    legends = [lg.get_window_extent(renderer) for lg in (ax.get_legend(), *fig.legends) if lg is not None]
    frame = ax.get_window_extent(renderer)
    best = None
    for dx, dy in ((8, 8), (-8, 8), (8, -16), (-8, -16), (0, 22), (0, -28), (30, 22), (-30, 22), (30, -30),
                   (-30, -30), (0, 40), (0, -44), (60, 34), (-60, 34), (60, -44), (-60, -44)):
        # A leader line joins a label set away from its point.
        far = abs(dx) > 8 or abs(dy) > 16
        ann = ax.annotate(text, xy=xy, xytext=(dx, dy), textcoords="offset points", ha="left" if dx >= 0 else "right",
                          va="bottom" if dy >= 0 else "top", fontsize=7.5, zorder=6,
                          arrowprops={"arrowstyle": "-", "lw": 0.6, "color": MARK, "shrinkA": 0, "shrinkB": 4}
                          if far else None,
                          bbox={"boxstyle": "square,pad=0.15", "fc": "white", "ec": "none", "alpha": 0.9})
        box = ann.get_window_extent(renderer).expanded(1.04, 1.15)
        inside = frame.x0 <= box.x0 and box.x1 <= frame.x1 and frame.y0 <= box.y0 and box.y1 <= frame.y1
        score = _crossings(box, ax, renderer) + (0 if inside else 10_000) + 1000 * sum(
            box.overlaps(lg) for lg in legends)
        if best is None or score < best[0]:
            if best is not None:
                best[1].remove()
            best = (score, ann)
        else:
            ann.remove()
        if score == 0:
            break
    ann = best[1]
    if gid:
        ann.set_gid(gid)
    return ann

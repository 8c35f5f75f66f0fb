"""The histogram of one limited quantity over a lot, with its limits and guard bands (`plot_lot_histogram`).

Each plotted artist carries a ``gid`` naming what it shows, as in
`zfit.outputs._plots`.
"""

from __future__ import annotations

import math

import numpy as np

from ._plot_style import BAND, CIRCUIT, INK, MARK, eng_tick, figure_grid, legend_below, set_title, styled

__all__ = ["plot_lot_histogram"]

#: Bars by verdict, in stacking order: fill colour and hatch (distinct in greyscale).
_VERDICT_STYLE = {"pass": ("#8c8c8c", ""), "indeterminate": ("white", "////"), "fail": (INK, "")}


def _bins(values: np.ndarray, lo: float, hi: float) -> np.ndarray:
    # Freedman-Diaconis width from the parts (numpy's 'fd'), over a range that holds the limits too.
    n = values.size
    iqr = float(np.subtract(*np.percentile(values, [75, 25]))) if n >= 4 else 0.0
    width = 2.0 * iqr / n ** (1.0 / 3.0) if iqr > 0 else 0.0
    count = int(math.ceil((hi - lo) / width)) if width > 0 else 10
    return np.linspace(lo, hi, min(max(count, 8), 60) + 1)


@styled
def plot_lot_histogram(
    values,
    verdicts,
    *,
    name: str,
    unit: str = "",
    lower: float | None = None,
    upper: float | None = None,
    guard_band: float | None = None,
    mean: float | None = None,
    title: str = "",
    width_in: float = 3.6,
    height_in: float = 2.4,
):
    """Return the histogram of one quantity over a lot, bars stacked by verdict.

    Parameters
    ----------
    values : array_like
        The parts' values in SI units (one per part with a value).
    verdicts : sequence of str
        Each part's verdict on this quantity's limit (``pass``,
        ``indeterminate``, ``fail``; ``unchecked`` without limits).
    name : str
        The quantity (``L``, ``Q@1MHz``), for the axis label.
    unit : str
        Its unit, for the tick labels.
    lower, upper : float, optional
        The limits, drawn as solid lines.
    guard_band : float, optional
        Width of the guard band ``k u`` in SI units (with ``u`` the RMS of
        the parts' standard uncertainties), shaded inside each limit: a part
        whose value lies there is not shown to conform (JCGM 106:2012,
        8.3.2, guarded acceptance).
    mean : float, optional
        The lot's mean, drawn dotted.
    title : str
        Figure title.
    width_in, height_in : float
        Figure size in inches.

    Returns
    -------
    matplotlib.figure.Figure
        Artists' gids: ``bars-<verdict>`` (each bar of that verdict's stack),
        ``limit-lower``, ``limit-upper``, ``guard-lower``, ``guard-upper``,
        ``mean``.

    References
    ----------
    D. Freedman and P. Diaconis, "On the histogram as a density estimator:
    L2 theory", Z. Wahrscheinlichkeitstheorie verw. Gebiete 57 (1981)
    453-476 (the bin width); JCGM 106:2012, section 8.3.2 (guard bands).
    """
    v = np.asarray(values, dtype=float)
    verdicts = np.asarray(list(verdicts), dtype=object)
    fig, (ax,) = figure_grid(width_in, height_in, [1.0])
    ends = [x for x in (lower, upper, *(v.tolist() if v.size else ())) if x is not None and math.isfinite(x)]
    lo, hi = (min(ends), max(ends)) if ends else (0.0, 1.0)
    pad = 0.06 * (hi - lo) if hi > lo else (abs(lo) * 0.05 or 1.0)
    lo, hi = lo - pad, hi + pad
    if v.size:
        edges = _bins(v, lo, hi)
        bottom = np.zeros(edges.size - 1)
        kinds = [k for k in ("pass", "indeterminate", "fail") if (verdicts == k).any()]
        if not kinds:
            kinds = ["all"]
        for kind in kinds:
            sel = v if kind == "all" else v[verdicts == kind]
            counts, _ = np.histogram(sel, edges)
            colour, hatch = _VERDICT_STYLE.get(kind, ("#8c8c8c", ""))
            ax.bar(edges[:-1], counts, width=np.diff(edges), bottom=bottom, align="edge", color=colour,
                          hatch=hatch, edgecolor=INK, linewidth=0.5, label=kind if kind != "all" else "parts",
                          zorder=3, gid=f"bars-{kind}")
            bottom = bottom + counts
        ax.set_ylim(0, max(1.0, float(bottom.max())) * 1.15)
    ax.set_xlim(lo, hi)
    for side, x, sign in (("lower", lower, 1.0), ("upper", upper, -1.0)):
        if x is None or not math.isfinite(x):
            continue
        ax.axvline(x, color=CIRCUIT, lw=1.4, gid=f"limit-{side}", zorder=4,
                   label="limits" if side == "lower" or lower is None else None)
        if guard_band is not None and guard_band > 0:
            a, b = sorted((x, x + sign * guard_band))
            span = ax.axvspan(a, b, color=BAND, lw=0, zorder=1,
                              label="guard band k·u_rms" if side == "lower" or lower is None else None)
            span.set_gid(f"guard-{side}")
    if mean is not None and math.isfinite(mean):
        ax.axvline(mean, color=MARK, ls=(0, (1, 1.5)), lw=1.0, gid="mean", zorder=4, label="lot mean")
    ax.set_facecolor("white")
    for s in ("top", "right"):
        ax.spines[s].set_visible(False)
    from matplotlib.ticker import FuncFormatter, MaxNLocator

    ax.xaxis.set_major_locator(MaxNLocator(nbins=5))
    ax.xaxis.set_major_formatter(FuncFormatter(lambda x, _pos, u=unit: eng_tick(x, u, 4)))
    ax.yaxis.set_major_locator(MaxNLocator(integer=True, nbins=4))
    ax.tick_params(labelsize=7.5)
    ax.grid(True, axis="y", color="#e4e4e4", linewidth=0.5)
    ax.set_axisbelow(True)
    ax.set_xlabel(name)
    ax.set_ylabel("parts")
    handles, labels = ax.get_legend_handles_labels()
    legend_below(fig, handles, labels, 3)
    if title:
        set_title(fig, title)
    return fig

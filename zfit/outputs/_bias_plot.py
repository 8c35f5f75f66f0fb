"""The plot of a bias set: L (or C) against bias with the fitted curve and its band, R_s (or ESR), SRF."""

from __future__ import annotations

import numpy as np

from ..identification._bias_curve import curve_band
from ._plot_style import figure_grid, legend_below, set_title, style_axis

__all__ = ["bias_figure", "write_bias_plot"]

#: Coverage of the drawn band: two standard uncertainties (about 95 %, GUM practice).
BAND_K = 2.0


def bias_figure(result, title: str = ""):
    """Return the matplotlib figure of a bias set.

    Top: the identified values with their 2-sigma error bars, the fitted
    curve and its 2-sigma band (first-order propagation of the fit's
    covariance), the fall figures as vertical lines.  Middle: the series
    loss; bottom: the SRF (a bound where the resonance lies above the band).

    Parameters
    ----------
    result : BiasSet
    title : str
    """
    x = np.array([r.bias for r in result.rows])
    fig, (ax, axl, axs) = figure_grid(6.4, 6.2, [2.2, 1.0, 1.0])
    vu = "H" if result.family == "inductor" else "F"
    unit = result.unit
    k = BAND_K

    def err(pairs):
        v = np.array([np.nan if p[0] is None else p[0] for p in pairs], dtype=float)
        e = np.array([0.0 if p[1] is None else k * p[1] for p in pairs], dtype=float)
        return v, e

    handles, labels = [], []
    v, e = err([r.value for r in result.rows])
    h = ax.errorbar(x, v, yerr=e, fmt="o", ms=4, color="#1f4e79", capsize=2, lw=0.8)
    handles.append(h)
    labels.append(f"{result.value_key} identified (± {k:g} u)")
    if result.curve is not None:
        xs = np.linspace(0.0, x.max() * 1.05, 300)
        yc, uc = curve_band(result.curve, xs)
        band = ax.fill_between(xs, yc - k * uc, yc + k * uc, color="#f4a261", alpha=0.35, lw=0)
        (line,) = ax.plot(xs, yc, color="#c0392b", lw=1.2)
        handles += [line, band]
        labels += [f"fit {result.value_key}0/(1+(x/x_s)^n)", f"fit ± {k:g} u"]
    for f in result.figures:
        if f.point.value is not None:
            ax.axvline(f.point.value, color="#555555", lw=0.7, ls="--")
            ax.annotate(f.key, (f.point.value, ax.get_ylim()[1]), rotation=90, va="top", ha="right", fontsize=7,
                        annotation_clip=False)
    style_axis(ax, unit, vu, xlog=False)
    ax.set_ylabel(result.value_key)
    lv, le = err([r.loss for r in result.rows])
    axl.errorbar(x, lv, yerr=le, fmt="s", ms=3.5, color="#2a9d8f", capsize=2, lw=0.8)
    style_axis(axl, unit, "ohm", xlog=False)
    axl.set_ylabel(result.loss_key)
    sv, se = err([r.srf[:2] for r in result.rows])
    axs.errorbar(x, sv, yerr=se, fmt="D", ms=3.5, color="#6a4c93", capsize=2, lw=0.8)
    bounds = [(r.bias, r.srf[2]) for r in result.rows if r.srf[0] is None and r.srf[2] is not None]
    if bounds:
        bx, by = zip(*bounds)
        axs.plot(bx, by, "^", ms=4, color="#6a4c93", mfc="none")
    style_axis(axs, unit, "Hz", xlog=False)
    axs.set_ylabel("SRF")
    axs.set_xlabel(f"DC bias ({unit})")
    for a in (ax, axl):
        a.tick_params(labelbottom=False)
    if title:
        set_title(fig, title)
    legend_below(fig, handles, labels, ncols=3)
    return fig


def write_bias_plot(result, path, *, title: str = "", force: bool = False):
    """Write the plot of a bias set to `path` (.png or .svg), atomically; return the path."""
    from ._plot_files import save_figure

    return save_figure(bias_figure(result, title), path, force=force)

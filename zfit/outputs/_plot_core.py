"""Plots of a core's complex permeability and of a winding's or bead's |Z|, R and X.

Each function returns a matplotlib `Figure` (`zfit.outputs._plot_files.save_figure`
writes it); every artist carries a ``gid`` naming what it shows, so that a
test can check the data on the figure against the arrays it came from.
"""

from __future__ import annotations

import math

import numpy as np

from ._plot_style import BAND, CIRCUIT, INK, MARK, RATIONAL, eng_tick, figure_grid, set_title, style_axis, styled

__all__ = ["plot_core", "plot_bead"]


def _positive(a):
    a = np.asarray(a, float)
    return np.where(a > 0, a, np.nan)


def _mark(ax, f, y, text, gid):
    ax.plot([f], [y], ls="none", marker="v", ms=6, color=INK, gid=gid, zorder=6)
    ax.annotate(text, xy=(f, y), xytext=(6, 6), textcoords="offset points", fontsize=7.5,
                bbox={"boxstyle": "square,pad=0.15", "fc": "white", "ec": "none", "alpha": 0.85})


def _impedance_axis(ax, fig_meas, marks=()):
    f = fig_meas.f_hz
    ax.plot(f, fig_meas.abs_z_ohm, color=INK, lw=1.2, label="|Z|", gid="z-abs")
    ax.plot(f, _positive(fig_meas.r_ohm), color=CIRCUIT, lw=1.1, label="R", gid="z-r")
    ax.plot(f, _positive(fig_meas.x_ohm), color=RATIONAL, lw=1.1, label="X (where > 0)", gid="z-x")
    ax.plot(f, _positive(-fig_meas.x_ohm), color=RATIONAL, lw=1.0, ls=(0, (2, 2)), label="-X (where < 0)",
            gid="z-x-neg")
    for f0, y0, text, gid in marks:
        _mark(ax, f0, y0, text, gid)
    style_axis(ax, xunit="Hz", yunit="ohm", ylog=True)
    ax.set_ylabel("impedance")
    ax.set_xlim(f[0], f[-1])
    ax.legend(loc="best", fontsize=7.5, handlelength=2.4)


@styled
def plot_core(material, *, title: str = "", width_in: float = 7.2, height_in: float = 6.4):
    """Return the figure of mu' and mu'' (with +-2 sigma bands and the crossover) over the winding's |Z|, R, X.

    Parameters
    ----------
    material : CoreMaterial
        The core's permeability (`core_material`).
    title : str
        Figure title.
    width_in, height_in : float
        Figure size in inches.

    Returns
    -------
    matplotlib.figure.Figure
        Artists' gids: ``mu-real``, ``mu-imag``, ``mu-real-band``, ``mu-imag-band``,
        ``mu-model-real``, ``mu-model-imag``, ``mu-crossover``, ``mu-peak``,
        ``z-abs``, ``z-r``, ``z-x``, ``z-x-neg``.
    """
    m = material
    fig, (ax, az) = figure_grid(width_in, height_in, [1.3, 1.0], sharex=False)
    f = m.f_hz
    shown = []
    for y, s, color, name in ((m.mu_real, m.mu_real_std, INK, "real"), (m.mu_imag, m.mu_imag_std, CIRCUIT, "imag")):
        # Drawn where resolved (above twice its uncertainty): below, a log axis would show only noise.
        y = np.where(y > 2 * s, y, np.nan)
        shown.append(y[np.isfinite(y)])
        b = ax.fill_between(f, np.maximum(y - 2 * s, 0.3 * y), y + 2 * s, color=BAND, lw=0, alpha=0.8, zorder=1)
        b.set_gid(f"mu-{name}-band")
        ax.plot(f, y, color=color, lw=1.3, label="μ'" if name == "real" else "μ''", gid=f"mu-{name}", zorder=3)
    b.set_label("±2σ")
    values = np.concatenate(shown)
    if values.size:
        ax.set_ylim(max(0.3 * float(values.min()), 1e-4 * float(values.max())), 3.0 * float(values.max()))
    if m.relaxation is not None:
        mu = m.relaxation.permeability(f)
        ax.plot(f, mu.real, color=RATIONAL, lw=1.0, ls=(0, (6, 2)), label=f"{m.relaxation.form} fit", gid="mu-model-real",
                zorder=4)
        ax.plot(f, -mu.imag, color=RATIONAL, lw=1.0, ls=(0, (6, 2)), gid="mu-model-imag", zorder=4)
    if m.crossover.found:
        y0 = float(np.interp(math.log(m.crossover.value_hz), np.log(f), m.mu_real))
        _mark(ax, m.crossover.value_hz, y0, f"μ' = μ'' at {eng_tick(m.crossover.value_hz, 'Hz', 4)}", "mu-crossover")
    if m.mu_imag_peak.found:
        ax.plot([m.mu_imag_peak.value_hz], [m.mu_imag_peak_value], ls="none", marker="^", ms=5, color=MARK,
                gid="mu-peak", zorder=6, label="μ'' peak")
    style_axis(ax, xunit="Hz", ylog=True)
    ax.set_xlim(f[0], f[-1])
    ax.set_ylabel("relative permeability")
    ax.legend(loc="lower left", fontsize=7.5, handlelength=2.4)
    _impedance_axis(az, m.winding)
    az.set_xlabel("frequency")
    set_title(fig, title or f"{m.source}: complex permeability, {m.constant.turns} turns")
    return fig


@styled
def plot_bead(bead, *, title: str = "", width_in: float = 7.2, height_in: float = 3.6):
    """Return the figure of a bead's |Z|, R and X with the R = X frequency and the spot values marked.

    Parameters
    ----------
    bead : BeadFigures
        The bead's figures (`bead_figures`).
    title : str
        Figure title.
    width_in, height_in : float
        Figure size in inches.

    Returns
    -------
    matplotlib.figure.Figure
        Artists' gids: ``z-abs``, ``z-r``, ``z-x``, ``z-x-neg``, ``bead-rx``, ``bead-spot-<i>``.
    """
    fig, (ax,) = figure_grid(width_in, height_in, [1.0])
    meas = bead.measured
    marks = []
    if bead.r_equals_x.found:
        f0 = bead.r_equals_x.value_hz
        y0 = float(np.interp(math.log(f0), np.log(meas.f_hz), meas.r_ohm))
        marks.append((f0, y0, f"R = X at {eng_tick(f0, 'Hz', 4)}", "bead-rx"))
    for i, s in enumerate(bead.spot):
        if s.in_band:
            marks.append((s.f_hz, s.z_abs_ohm, f"|Z| {eng_tick(s.z_abs_ohm, 'Ω', 4)} at {eng_tick(s.f_hz, 'Hz', 4)}",
                          f"bead-spot-{i}"))
    _impedance_axis(ax, meas, marks)
    ax.set_xlabel("frequency")
    set_title(fig, title or f"{bead.source}: bead impedance")
    return fig

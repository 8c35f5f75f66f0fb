"""The plot of a fitted frequency response: Bode plot of the readings and the model, and the predicted step.

`plot_response` draws the readings with their ±2σ bars, the model over the
measured band and a decade beyond it (dashed where it extrapolates), the
band where the model stays within the readings' uncertainty, the -3 dB
frequencies, and the step response the model predicts with its ±2σ band.
Each artist carries a ``gid`` naming what it shows, as in
`zfit.outputs._plots`.
"""

from __future__ import annotations

import math

import numpy as np

from ._plot_style import BAND, CIRCUIT, INK, MARK, eng_tick, figure_grid, legend_below, set_title, shade_outside, style_axis, styled

__all__ = ["plot_response"]


@styled
def plot_response(result, *, title: str | None = None, width_in: float = 7.2, height_in: float = 7.0):
    """Return the figure of a `ResponseResult`: gain, phase and the predicted step response.

    Parameters
    ----------
    result : ResponseResult
        What `analyse_response` returned.
    title : str, optional
        Figure title (default: the file and the model's structure).
    width_in, height_in : float
        Figure size in inches.

    Returns
    -------
    matplotlib.figure.Figure
        Artists' gids: ``gain-db``, ``phase``, ``model-gain-db``,
        ``model-phase``, ``outside-valid-band``, ``cutoff``, ``step``,
        ``step-band``.
    """
    p, m, fig_ = result.points, result.model, result.figures
    fig, (ax_g, ax_p, ax_s) = figure_grid(width_in, height_in, [2.0, 1.4, 1.6], sharex=False)
    ax_p.sharex(ax_g)
    # Room between the Bode panels and the step panel for the frequency axis' labels.
    fig._zfit_layout["gs"].update(hspace=0.38)
    f = p.f_hz
    grid = np.geomspace(f[0] / 10.0, f[-1] * 10.0, 600)
    lh = m.log_response(grid)
    model_db = 20.0 / math.log(10.0) * lh.real
    model_deg = np.degrees(lh.imag)
    inside = (grid >= f[0]) & (grid <= f[-1])
    for sel, ls, label in ((inside, "-", "model"), (grid < f[0], "--", "model, extrapolated"), (grid > f[-1], "--", None)):
        ax_g.plot(grid[sel], model_db[sel], color=CIRCUIT, lw=1.4, ls=ls, label=label, gid="model-gain-db", zorder=3)
        ax_p.plot(grid[sel], model_deg[sel], color=CIRCUIT, lw=1.4, ls=ls, gid="model-phase", zorder=3)
    # The readings' phase on the model's branch (a phase read modulo 360 degrees).
    at = m.log_response(f).imag
    ph = p.phase_rad + 2.0 * math.pi * np.round((at - p.phase_rad) / (2.0 * math.pi))
    gdb = 20.0 * np.log10(p.gain)
    ax_g.errorbar(f, gdb, yerr=2.0 * p.gain_db_std, ls="none", marker="o", ms=3.5, mfc="white", mec=INK, mew=0.8,
                  ecolor=INK, elinewidth=0.7, capsize=1.5, label="readings ±2σ", gid="gain-db", zorder=4)
    ax_p.errorbar(f, np.degrees(ph), yerr=2.0 * np.degrees(p.sigma_phase_rad), ls="none", marker="o", ms=3.5,
                  mfc="white", mec=INK, mew=0.8, ecolor=INK, elinewidth=0.7, capsize=1.5, gid="phase", zorder=4)
    band = fig_.valid_band_hz
    if all(math.isfinite(b) for b in band):
        for ax in (ax_g, ax_p):
            shade_outside(ax, grid, band, label="outside the valid band" if ax is ax_g else None,
                          gid="outside-valid-band")
    for c in fig_.cutoffs:
        ax_g.axvline(c.frequency.value, color=MARK, ls=(0, (1, 1.5)), lw=0.9, gid="cutoff",
                     label=f"-3 dB at {eng_tick(c.frequency.value, 'Hz', 4)}")
    style_axis(ax_g)
    style_axis(ax_p, xunit="Hz")
    ax_g.tick_params(labelbottom=False)
    ax_g.set_ylabel("gain |H| (dB)")
    ax_p.set_ylabel("phase of H (°)")
    ax_p.set_xlabel("frequency")
    ax_g.set_xlim(grid[0], grid[-1])
    st = fig_.step
    ax_s.fill_between(st.t_s, st.v - 2.0 * st.v_std, st.v + 2.0 * st.v_std, color=BAND, lw=0, label="model step ±2σ",
                      gid="step-band", zorder=1)
    ax_s.plot(st.t_s, st.v, color=CIRCUIT, lw=1.3, label="predicted step response (per volt of V_in)", gid="step",
              zorder=3)
    style_axis(ax_s, xunit="s", xlog=False)
    ax_s.set_xlabel("time after the step")
    ax_s.set_ylabel("V_out / V_in step")
    ax_s.set_xlim(0.0, st.t_s[-1])
    handles, labels = [], []
    for ax in (ax_g, ax_s):
        h, lab = ax.get_legend_handles_labels()
        handles += h
        labels += lab
    legend_below(fig, handles, labels, 2)
    set_title(fig, title if title is not None else f"{result.source}: {m.structure.describe()}")
    return fig

"""Plots of a capture's analysis: the Bode plot of its frequency response with
the usable band and the coherence (`plot_bode`), and the time record with
the averaged edge and its fitted response (`plot_time_record`).

Each plotted artist carries a ``gid`` naming what it shows, as in
`zfit.outputs._plots`.
"""

from __future__ import annotations

import numpy as np

from ._plot_style import (
    BAND, CIRCUIT, INK, MARK, RATIONAL, eng_tick, envelope, figure_grid, legend_below, markevery, set_title,
    style_axis, styled,
)

__all__ = ["plot_bode", "plot_time_record"]


@styled
def plot_bode(
    f_hz,
    h,
    coherence,
    *,
    usable_band_hz: tuple[float, float] | None = None,
    h_std=None,
    h_model=None,
    usable=None,
    model_label: str = "fitted model",
    title: str = "",
    width_in: float = 7.2,
    height_in: float = 5.2,
):
    """Return the Bode figure of a measured response with its coherence.

    Parameters
    ----------
    f_hz : array_like
        Frequencies in Hz (positive).
    h : array_like
        Complex response H = V_out / V_in.
    coherence : array_like
        Magnitude-squared coherence, 0..1, per bin.
    usable_band_hz : (float, float), optional
        The band the capture supports; shaded on every panel.
    h_std : array_like, optional
        Standard uncertainty of |H| (linear); a +-2 sigma band is drawn in dB.
    h_model : array_like, optional
        A model's response at `f_hz` to overlay.
    usable : array_like of bool, optional
        Which bins the estimate may be used at (input energy and coherence
        high enough).  The measured curves and their band join only these;
        the other bins are drawn as faint dots (a square wave has no energy
        at its even harmonics, so every other bin is noise).  All bins are
        joined when None.
    model_label : str
        Legend text of the model.
    title : str
        Figure title.
    width_in, height_in : float
        Figure size in inches.

    Returns
    -------
    matplotlib.figure.Figure
        Artists' gids: ``h-mag-db``, ``h-band``, ``h-phase``, ``h-model-mag-db``,
        ``h-model-phase``, ``coherence``, ``usable-band``.
    """
    f = np.asarray(f_hz, dtype=float)
    h = np.asarray(h, dtype=complex)
    coh = np.asarray(coherence, dtype=float)
    fig, (ax_m, ax_p, ax_c) = figure_grid(width_in, height_in, [2.2, 1.4, 1.0])
    mag_db = 20 * np.log10(np.maximum(np.abs(h), 1e-300))
    phase = np.degrees(np.angle(h))
    use = np.ones(f.size, dtype=bool) if usable is None else np.asarray(usable, dtype=bool)
    if h_std is not None:
        s = np.asarray(h_std, dtype=float)[use]
        a = np.abs(h)[use]
        lo = 20 * np.log10(np.maximum(a - 2 * s, a * 1e-3 + 1e-300))
        hi = 20 * np.log10(a + 2 * s)
        b = ax_m.fill_between(f[use], lo, hi, color=BAND, lw=0, label="measured ±2σ", zorder=1)
        b.set_gid("h-band")
    me = markevery(int(np.count_nonzero(use)))
    ax_m.plot(f[use], mag_db[use], color=INK, lw=0.8, marker="o", ms=3, mfc="white", mew=0.7, markevery=me,
              label="measured (H1)", gid="h-mag-db", zorder=3)
    ax_p.plot(f[use], phase[use], color=INK, lw=0.8, marker="o", ms=3, mfc="white", mew=0.7, markevery=me,
              gid="h-phase", zorder=3)
    if not use.all():
        faint = dict(ls="none", marker=".", ms=2.0, color="#9a9a9a", zorder=2)
        ax_m.plot(f[~use], mag_db[~use], label="bins not used", gid="h-mag-db-unused", **faint)
        ax_p.plot(f[~use], phase[~use], gid="h-phase-unused", **faint)
    if h_model is not None:
        hm = np.asarray(h_model, dtype=complex)
        ax_m.plot(f, 20 * np.log10(np.abs(hm)), color=CIRCUIT, lw=1.4, label=model_label, gid="h-model-mag-db", zorder=4)
        ax_p.plot(f, np.degrees(np.angle(hm)), color=CIRCUIT, lw=1.4, gid="h-model-phase", zorder=4)
    if use.all():
        ax_c.plot(f, coh, color=INK, lw=0.9, gid="coherence", zorder=3)
    else:
        # Every bin's coherence (it is why a bin is not used), as points.
        ax_c.plot(f, coh, ls="none", marker=".", ms=2.5, color=INK, gid="coherence", zorder=3)
    if usable_band_hz is not None:
        for ax in (ax_m, ax_p, ax_c):
            span = ax.axvspan(usable_band_hz[0], usable_band_hz[1], color="#e4ecf5", lw=0, zorder=0,
                              label="usable band" if ax is ax_m else None)
            span.set_gid("usable-band" if ax is ax_m else None)
    style_axis(ax_m)
    style_axis(ax_p)
    style_axis(ax_c, xunit="Hz")
    ax_m.set_ylabel("|H| (dB)")
    ax_p.set_ylabel("phase of H (°)")
    ax_p.set_yticks([-180, -90, 0, 90, 180])
    ax_p.set_ylim(-190, 190)
    ax_c.set_ylabel("coherence γ²")
    ax_c.set_ylim(0, 1.05)
    ax_c.set_yticks([0, 0.5, 1.0])
    ax_c.set_xlabel("frequency")
    for ax in (ax_m, ax_p):
        ax.tick_params(labelbottom=False)
    ax_m.set_xlim(f[0], f[-1])
    ax_m.legend(loc="best", handlelength=2.6)
    if title:
        set_title(fig, title)
    return fig


@styled
def plot_time_record(
    t_s,
    channels: dict,
    *,
    levels_v: dict | None = None,
    edges_s=None,
    fitted: dict | None = None,
    window_s: tuple[float, float] | None = None,
    title: str = "",
    width_in: float = 7.2,
    height_in: float = 3.4,
):
    """Return the figure of a time record with its levels, edges and fitted response.

    Parameters
    ----------
    t_s : array_like
        Sample times in seconds.
    channels : dict of str to array_like
        Voltage records by label (``{"input": v_in, "output": v_out}``); up to
        three, drawn in black, dark blue and brown with different line styles.
    levels_v : dict of str to (float, float), optional
        Detected (low, high) state levels per channel label; dashed lines.
    edges_s : array_like, optional
        Edge times (mid-reference crossings) in seconds; small ticks at the top.
    fitted : dict of str to (array_like, array_like), optional
        Fitted response curves, label -> (t, v), drawn dotted-dashed on top.
    window_s : (float, float), optional
        Time range to show (e.g. two periods around the first edge); the
        whole record by default.
    title : str
        Figure title.
    width_in, height_in : float
        Figure size in inches.

    Returns
    -------
    matplotlib.figure.Figure
        Artists' gids: ``record-<label>``, ``level-<label>-low``,
        ``level-<label>-high``, ``edges``, ``fit-<label>``.
    """
    t = np.asarray(t_s, dtype=float)
    fig, (ax,) = figure_grid(width_in, height_in, [1.0])
    styles = [(INK, "-"), (CIRCUIT, (0, (4, 1.5))), (RATIONAL, (0, (1, 1)))]
    if window_s is not None:
        sel = (t >= window_s[0]) & (t <= window_s[1])
    else:
        sel = np.ones(t.size, dtype=bool)
    for k, (label, v) in enumerate(channels.items()):
        colour, ls = styles[k % len(styles)]
        te, ve = envelope(t[sel], np.asarray(v, dtype=float)[sel])
        text = label
        if levels_v and label in levels_v:
            low, high = levels_v[label]
            text = f"{label}; levels {eng_tick(low, 'V')}, {eng_tick(high, 'V')}"
            ax.axhline(low, color=colour, ls=(0, (6, 3)), lw=0.6, gid=f"level-{label}-low", zorder=2)
            ax.axhline(high, color=colour, ls=(0, (6, 3)), lw=0.6, gid=f"level-{label}-high", zorder=2)
        ax.plot(te, ve, color=colour, ls=ls, lw=0.9, label=text, gid=f"record-{label}", zorder=3)
    if edges_s is not None:
        e = np.asarray(edges_s, dtype=float)
        if window_s is not None:
            e = e[(e >= window_s[0]) & (e <= window_s[1])]
        ax.plot(e, np.full(e.size, 1.0), ls="none", marker="|", ms=8, mew=1.0, color=MARK,
                transform=ax.get_xaxis_transform(), gid="edges", label="edges", zorder=4, clip_on=False)
    for label, (tf, vf) in (fitted or {}).items():
        ax.plot(np.asarray(tf, dtype=float), np.asarray(vf, dtype=float), color=RATIONAL, ls=(0, (6, 2, 1, 2)), lw=1.3,
                label=f"fit: {label}", gid=f"fit-{label}", zorder=5)
    style_axis(ax, xunit="s", yunit="V", xlog=False, grid=False)
    ax.set_xlabel("time")
    ax.set_ylabel("voltage")
    if sel.any():
        ax.set_xlim(t[sel][0], t[sel][-1])
    # Below the axes, so that it never hides the record.
    from matplotlib.ticker import MaxNLocator

    ax.xaxis.set_major_locator(MaxNLocator(nbins=max(3, int(width_in * 1.2)), steps=[1, 2, 2.5, 5, 10]))
    handles, labels = ax.get_legend_handles_labels()
    legend_below(fig, handles, labels, 2 if width_in >= 5.0 else 1)
    if title:
        set_title(fig, title)
    return fig

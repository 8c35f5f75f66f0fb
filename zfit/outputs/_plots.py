"""Plots of a sweep and its fitted models: |Z| and phase with the residuals
(`plot_sweep`), Q (`plot_q`), ESR and D (`plot_esr_d`).

Every function takes plain arrays in SI units and returns a matplotlib
`Figure` (`zfit.outputs._plot_files.save_figure` writes it).  Each plotted
artist carries a ``gid`` naming what it shows (``"measured-mag"``,
``"circuit-mag"``, ``"residual-circuit"``, ...), so that a test can check the
data on the figure against the arrays it came from.  The style is in
`zfit.outputs._plot_style`.
"""

from __future__ import annotations

import math

import numpy as np

from ._plot_style import (
    BAND, CIRCUIT, INK, MARK, RATIONAL, SHADE, band_label, eng_tick, figure_grid, legend_below, markevery, percent_text,
    place_label, set_title, shade_outside, style_axis, styled,
)

__all__ = ["plot_sweep", "plot_q", "plot_esr_d"]


@styled
def plot_sweep(
    f_hz,
    z_ohm,
    sigma_ohm,
    *,
    circuit_ohm=None,
    rational_ohm=None,
    srf_hz: float | None = None,
    valid_band_hz: tuple[float, float] | None = None,
    circuit_label: str = "equivalent circuit",
    title: str = "",
    width_in: float = 7.2,
    height_in: float = 6.4,
):
    """Return the sweep figure: |Z| and phase with models, and the normalised residual.

    Parameters
    ----------
    f_hz : array_like
        Measured frequencies in Hz.
    z_ohm : array_like
        Measured complex impedance in ohm.
    sigma_ohm : array_like
        Its complex-circular standard uncertainty in ohm; the band drawn is
        +-2 standard uncertainties of |Z| (sigma/sqrt 2) and of the phase.
    circuit_ohm : array_like, optional
        The equivalent circuit's impedance at `f_hz`.
    rational_ohm : array_like, optional
        The rational model's impedance at `f_hz`.
    srf_hz : float, optional
        Self-resonant frequency to mark (drawn when inside the plotted band).
    valid_band_hz : (float, float), optional
        Band where the circuit describes the part within the noise; outside it
        is shaded.
    circuit_label : str
        Legend text of the circuit (its topology).
    title : str
        Figure title (the part, the file).
    width_in, height_in : float
        Figure size in inches.

    Returns
    -------
    matplotlib.figure.Figure
        Artists' gids: ``measured-mag``, ``measured-band``, ``circuit-mag``,
        ``rational-mag``, ``measured-phase``, ``circuit-phase``,
        ``rational-phase``, ``residual-circuit``, ``residual-rational``,
        ``srf``, ``outside-band``.
    """
    f = np.asarray(f_hz, dtype=float)
    z = np.asarray(z_ohm, dtype=complex)
    sig = np.asarray(sigma_ohm, dtype=float)
    # A short figure (a report's) gives phase and residual a larger share, so
    # that each keeps the 0.7 in its five tick labels need.
    fig, (ax_m, ax_p, ax_r) = figure_grid(width_in, height_in, [3.2, 1.4, 1.3] if height_in >= 5.5 else [2.1, 1.3, 1.3])
    mag = np.abs(z)
    s_mag = sig / math.sqrt(2.0)
    lo = np.maximum(mag - 2 * s_mag, mag * 1e-3)
    # On a log axis spanning decades a 0.1 % band is thinner than the line:
    # the legend says how wide it is, so that its absence is not read as none.
    rel = float(np.median(2 * s_mag / np.maximum(mag, 1e-300))) if f.size else 0.0
    band = ax_m.fill_between(f, lo, mag + 2 * s_mag, color=BAND, lw=0,
                             label=f"measured ±2σ (median ±{percent_text(rel)} of |Z|)", zorder=1)
    band.set_gid("measured-band")
    me = markevery(f.size)
    ax_m.plot(f, mag, color=INK, lw=0.8, marker="o", ms=3, mfc="white", mew=0.7, markevery=me,
              label="measured", gid="measured-mag", zorder=3)
    phase = np.degrees(np.angle(z))
    s_ph = np.degrees(s_mag / np.maximum(mag, 1e-300))
    pb = ax_p.fill_between(f, phase - 2 * s_ph, phase + 2 * s_ph, color=BAND, lw=0, zorder=1)
    pb.set_gid("measured-phase-band")
    ax_p.plot(f, phase, color=INK, lw=0.8, marker="o", ms=3, mfc="white", mew=0.7, markevery=me,
              gid="measured-phase", zorder=3)
    models = []
    if circuit_ohm is not None:
        models.append(("circuit", np.asarray(circuit_ohm, dtype=complex), circuit_label, CIRCUIT, "-", 1.5))
    if rational_ohm is not None:
        models.append(("rational", np.asarray(rational_ohm, dtype=complex), "rational model (vector fit)", RATIONAL, (0, (5, 2.5)), 1.2))
    for key, zm, label, colour, ls, lw in models:
        ax_m.plot(f, np.abs(zm), color=colour, ls=ls, lw=lw, label=label, gid=f"{key}-mag", zorder=4)
        ax_p.plot(f, np.degrees(np.angle(zm)), color=colour, ls=ls, lw=lw, gid=f"{key}-phase", zorder=4)
        res = np.abs(zm - z) / sig
        ax_r.plot(f, res, color=colour, ls=ls, lw=lw * 0.9, label=label, gid=f"residual-{key}", zorder=4)
    ax_r.axhline(1.0, color=MARK, ls=":", lw=0.8, zorder=2, gid="noise-1sigma")
    ax_r.axhline(3.0, color=MARK, ls=":", lw=0.8, zorder=2, gid="noise-3sigma")
    if models:
        # A legend entry for the dotted levels, on the |Z| legend.
        ax_m.plot([], [], color=MARK, ls=":", lw=0.8, label="1σ and 3σ residual levels")
    if valid_band_hz is not None and circuit_ohm is not None:
        for ax in (ax_m, ax_p, ax_r):
            shade_outside(ax, f, valid_band_hz, label="outside the circuit's band" if ax is ax_m else None, gid="outside-band")
    if srf_hz is not None and math.isfinite(srf_hz) and f[0] <= srf_hz <= f[-1]:
        for ax in (ax_m, ax_p, ax_r):
            ax.axvline(srf_hz, color=MARK, ls=(0, (1, 2)), lw=0.9, gid="srf" if ax is ax_m else None, zorder=2)
        ax_m.annotate(f"SRF {eng_tick(srf_hz, 'Hz', 4)}", xy=(srf_hz, 1.0), xycoords=("data", "axes fraction"),
                      xytext=(3, -2), textcoords="offset points", ha="left", va="top", fontsize=7.5, color=INK)
    style_axis(ax_m, yunit="ohm", ylog=True)
    style_axis(ax_p)
    style_axis(ax_r, xunit="Hz", ylog=True)
    ax_m.set_ylabel("|Z|")
    ax_p.set_ylabel("phase (°)")
    ax_p.set_ylim(-100, 100)
    ax_p.set_yticks([-90, -45, 0, 45, 90])
    ax_r.set_ylabel("|ΔZ| / σ")
    from matplotlib.ticker import LogLocator

    # Few labels: the panel is short and the residual can span many decades.
    ax_r.yaxis.set_major_locator(LogLocator(base=10, numticks=4))
    ax_r.set_xlabel("frequency")
    rmax = [np.max(np.abs(m[1] - z) / sig) for m in models] or [10.0]
    ax_r.set_ylim(max(min(1e-2, 0.5 * min(np.min(np.abs(m[1] - z) / sig) for m in models) if models else 1e-2), 1e-3),
                  max(10.0, 2.0 * max(rmax)))
    for ax in (ax_m, ax_p):
        ax.tick_params(labelbottom=False)
    ax_m.set_xlim(f[0], f[-1])
    # Below the panels, so that it never hides the data.
    handles, labels = ax_m.get_legend_handles_labels()
    legend_below(fig, handles, labels, 3 if width_in >= 5.0 else 2)
    if title:
        set_title(fig, title)
    return fig


@styled
def plot_q(
    f_hz,
    q_measured,
    *,
    q_std=None,
    q_circuit=None,
    q_textbook=None,
    q_rational=None,
    peak: tuple[float, float] | None = None,
    f_max_hz: float | None = None,
    band_of: str = "point",
    title: str = "",
    width_in: float = 7.2,
    height_in: float = 2.8,
):
    """Return the figure of an inductor's quality factor against frequency.

    Parameters
    ----------
    f_hz : array_like
        Frequencies in Hz.
    q_measured : array_like
        Q of the measured part, |X|/R at each point (points with R <= 0 are
        left out of the plot: their Q is undefined).
    q_std : array_like, optional
        Standard uncertainty drawn as a +-2 sigma band around `q_rational`
        if given, else around `q_measured`; `band_of` says whose it is.
    q_circuit : array_like, optional
        |X|/R of the equivalent circuit's impedance (follows the resonance).
    q_textbook : array_like, optional
        omega L / R_s of the circuit's elements (the textbook definition,
        which ignores C_p and keeps rising).
    q_rational : array_like, optional
        |X|/R of the rational model: the measurement without its noise.
        When given, `q_measured` is drawn as dots and this as the line.
    peak : (float, float), optional
        (f_hz, Q) of the peak to mark.
    f_max_hz : float, optional
        Highest frequency shown, normally the SRF: above it the part is
        capacitive and an inductor's Q means nothing.
    band_of : {'point', 'model'}
        Whose uncertainty `q_std` is: ``'point'``, that of one measured
        point (the band the scatter of the dots lies in), or ``'model'``,
        that of the smooth curve itself (the rational model's, from its
        covariance, much narrower).  The legend says which.
    title : str
        Figure title.
    width_in, height_in : float
        Figure size in inches.

    Returns
    -------
    matplotlib.figure.Figure
        Artists' gids: ``q-measured``, ``q-band``, ``q-rational``, ``q-circuit``,
        ``q-textbook``, ``q-peak``.
    """
    f = np.asarray(f_hz, dtype=float)
    q = np.asarray(q_measured, dtype=float)
    keep = np.ones(f.size, dtype=bool) if f_max_hz is None else f <= f_max_hz
    if keep.sum() < 2:
        keep[:] = True

    def cut(a):
        return None if a is None else np.asarray(a, dtype=float)[keep]

    f, q = f[keep], q[keep]
    q_std, q_circuit, q_textbook, q_rational = cut(q_std), cut(q_circuit), cut(q_textbook), cut(q_rational)
    fig, (ax,) = figure_grid(width_in, height_in, [1.0])
    ok = np.isfinite(q) & (q > 0)
    qm = np.where(ok, q, np.nan)
    if q_std is not None:
        c = q if q_rational is None else q_rational
        okc = np.isfinite(c) & (c > 0)
        # Where Q - 2 sigma <= 0 the band reaches below the axis.
        lo = np.where(okc, np.maximum(c - 2 * q_std, c * 1e-9), np.nan)
        b = ax.fill_between(f, lo, np.where(okc, c + 2 * q_std, np.nan), color=BAND, lw=0, label=band_label(band_of),
                            zorder=1)
        b.set_gid("q-band")
    if q_rational is None:
        ax.plot(f, qm, color=INK, lw=0.8, marker="o", ms=3, mfc="white", mew=0.7, markevery=markevery(f.size),
                label="measured |X|/R", gid="q-measured", zorder=3)
    else:
        # Raw points as dots (noisy where R is small), the smoothed measurement as the line.
        ax.plot(f, qm, ls="none", color="#777777", marker=".", ms=2.0, label="measured |X|/R, each point",
                gid="q-measured", zorder=2)
        ax.plot(f, q_rational, color=INK, lw=1.1, label="measured |X|/R, rational model", gid="q-rational", zorder=3)
    if q_circuit is not None:
        ax.plot(f, q_circuit, color=CIRCUIT, lw=1.5, ls=(0, (8, 2)), label="circuit |X|/R", gid="q-circuit", zorder=4)
    if q_textbook is not None:
        ax.plot(f, q_textbook, color=RATIONAL, ls=(0, (2, 2)), lw=1.2,
                label="ωL/R_s of the circuit", gid="q-textbook", zorder=4)
    has_peak = peak is not None and all(map(math.isfinite, peak))
    if has_peak:
        ax.plot([peak[0]], [peak[1]], ls="none", marker="v", ms=6, color=INK, gid="q-peak", zorder=5)
    style_axis(ax, xunit="Hz", ylog=True)
    from matplotlib.ticker import FuncFormatter

    ax.yaxis.set_major_formatter(FuncFormatter(lambda v, _pos: f"{v:g}"))
    # Scale to the smooth curves where there are any: raw Q spikes where R is noise.
    ref = [a for a in (q_rational, q_circuit) if a is not None] or [qm]
    finite = np.concatenate([a[np.isfinite(a) & (a > 0)] for a in ref])
    if finite.size:
        top = max(float(np.max(finite)), peak[1] if peak else 0.0)
        ax.set_ylim(max(float(np.min(finite)) * 0.5, top * 1e-6), top * 4)
    ax.set_xlim(f[0], f[-1])
    ax.set_ylabel("quality factor Q")
    ax.set_xlabel("frequency")
    ax.legend(loc="best", handlelength=2.6)
    if title:
        set_title(fig, title)
    if has_peak:
        # Placed last, where it crosses no curve and no legend (limits and layout are final).
        qtext = f"{peak[1]:.0f}" if peak[1] >= 100 else f"{peak[1]:.3g}"
        label = place_label(ax, peak, f"peak Q {qtext} at {eng_tick(peak[0], 'Hz', 4)}", gid="q-peak-label")
        renderer = fig.canvas.get_renderer()
        box = label.get_window_extent(renderer)
        # A small figure may leave the label no free place but the legend's: the legend moves.
        for loc in ("lower left", "lower right", "lower center", "upper left", "center left", "center right"):
            if not ax.get_legend().get_window_extent(renderer).overlaps(box):
                break
            ax.legend(loc=loc, handlelength=2.6)
            fig.draw_without_rendering()
    return fig


@styled
def plot_esr_d(
    f_hz,
    esr_measured,
    d_measured,
    *,
    esr_std=None,
    esr_circuit=None,
    d_circuit=None,
    esr_rational=None,
    d_rational=None,
    srf_hz: float | None = None,
    band_of: str = "point",
    title: str = "",
    width_in: float = 7.2,
    height_in: float = 4.0,
):
    """Return the figure of a capacitor's ESR and dissipation factor against frequency.

    Parameters
    ----------
    f_hz : array_like
        Frequencies in Hz.
    esr_measured : array_like
        Re Z of the measured part in ohm.
    d_measured : array_like
        D = tan(delta) = Re Z / |Im Z| of the measured part.
    esr_std : array_like, optional
        Standard uncertainty drawn as a +-2 sigma band around `esr_rational`
        if given, else around `esr_measured`; `band_of` says whose it is.
    esr_circuit, d_circuit : array_like, optional
        The same figures of the equivalent circuit.
    esr_rational, d_rational : array_like, optional
        The same figures of the rational model (the measurement without its
        noise); when given, the measured points are drawn as dots and these
        as the lines.
    srf_hz : float, optional
        The self-resonant frequency: above it the part is inductive and a
        capacitor's D = R/|X| describes no capacitor, so D is not drawn
        there (the panel says so).
    band_of : {'point', 'model'}
        Whose uncertainty `esr_std` is: ``'point'``, that of one measured
        point (sigma/sqrt 2 of Re Z: the band the scatter lies in), or
        ``'model'``, that of the smooth curve itself.  The legend says which.
    title : str
        Figure title.
    width_in, height_in : float
        Figure size in inches.

    Returns
    -------
    matplotlib.figure.Figure
        Artists' gids: ``esr-measured``, ``esr-band``, ``esr-circuit``,
        ``esr-rational``, ``d-measured``, ``d-circuit``, ``d-rational``,
        ``d-above-srf`` (the shaded band where D is not drawn, and its note).
    """
    f = np.asarray(f_hz, dtype=float)
    esr = np.asarray(esr_measured, dtype=float)
    above = np.zeros(f.size, dtype=bool)
    if srf_hz is not None and math.isfinite(srf_hz) and f.size and f[0] < srf_hz < f[-1]:
        above = f > srf_hz

    def below_srf(a):
        return None if a is None else np.where(above, np.nan, np.asarray(a, dtype=float))

    d, d_circuit, d_rational = below_srf(d_measured), below_srf(d_circuit), below_srf(d_rational)
    fig, (ax_e, ax_d) = figure_grid(width_in, height_in, [1.0, 1.0])
    me = markevery(f.size)
    pos = np.where(esr > 0, esr, np.nan)
    if esr_std is not None:
        s = np.asarray(esr_std, dtype=float)
        c = esr if esr_rational is None else np.asarray(esr_rational, dtype=float)
        b = ax_e.fill_between(f, np.maximum(c - 2 * s, np.abs(c) * 1e-2 + 1e-300), c + 2 * s, color=BAND, lw=0,
                              label=band_label(band_of), zorder=1)
        b.set_gid("esr-band")
    dpos = np.where(d > 0, d, np.nan)
    if esr_rational is None:
        ax_e.plot(f, pos, color=INK, lw=0.8, marker="o", ms=3, mfc="white", mew=0.7, markevery=me, label="measured Re Z",
                  gid="esr-measured", zorder=3)
        ax_d.plot(f, dpos, color=INK, lw=0.8, marker="o", ms=3, mfc="white", mew=0.7, markevery=me, label="measured",
                  gid="d-measured", zorder=3)
    else:
        ax_e.plot(f, pos, ls="none", color="#777777", marker=".", ms=2.0, label="measured Re Z, each point",
                  gid="esr-measured", zorder=2)
        ax_d.plot(f, dpos, ls="none", color="#777777", marker=".", ms=2.0, gid="d-measured", zorder=2)
        ax_e.plot(f, np.asarray(esr_rational, dtype=float), color=INK, lw=1.1, label="measured, rational model",
                  gid="esr-rational", zorder=3)
        if d_rational is not None:
            ax_d.plot(f, np.asarray(d_rational, dtype=float), color=INK, lw=1.1, gid="d-rational", zorder=3)
    if esr_circuit is not None:
        ax_e.plot(f, np.asarray(esr_circuit, dtype=float), color=CIRCUIT, lw=1.5, ls=(0, (8, 2)), label="circuit",
                  gid="esr-circuit", zorder=4)
    if d_circuit is not None:
        ax_d.plot(f, np.asarray(d_circuit, dtype=float), color=CIRCUIT, lw=1.5, ls=(0, (8, 2)), label="circuit",
                  gid="d-circuit", zorder=4)
    style_axis(ax_e, yunit="ohm", ylog=True)
    style_axis(ax_d, xunit="Hz", ylog=True)
    # Scale to the part, not to the noise of points where R is tiny.
    for ax, meas, models in ((ax_e, esr, (esr_circuit, esr_rational)), (ax_d, d, (d_circuit, d_rational))):
        good = meas[np.isfinite(meas) & (meas > 0)]
        ref = [np.percentile(good, [10, 99])] if good.size else []
        for model in models:
            if model is None:
                continue
            m = np.asarray(model, dtype=float)
            m = m[np.isfinite(m) & (m > 0)]
            if m.size:
                ref.append([m.min(), m.max()])
        if ref:
            lo = min(r[0] for r in ref)
            hi = max(r[1] for r in ref)
            ax.set_ylim(lo / 3, hi * 3)
    if above.any():
        span = ax_d.axvspan(srf_hz, f[-1], color=SHADE, lw=0, zorder=0,
                            label="above the SRF (the part is inductive): D not shown")
        span.set_gid("d-above-srf")
        ax_d.legend(loc="best", handlelength=2.6)
    ax_e.tick_params(labelbottom=False)
    ax_e.set_ylabel("ESR (Re Z)")
    ax_d.set_ylabel("D = tan δ")
    ax_d.set_xlabel("frequency")
    ax_e.set_xlim(f[0], f[-1])
    ax_e.legend(loc="best", handlelength=2.6)
    if title:
        set_title(fig, title)
    return fig

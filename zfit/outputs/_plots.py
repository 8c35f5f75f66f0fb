"""Plots of sweeps, fitted models, figures of merit and captures.

Every function takes plain arrays in SI units and returns a matplotlib
`Figure`; `save_figure` writes it as PNG or SVG by the file's extension.
Each plotted artist carries a ``gid`` naming what it shows (``"measured-mag"``,
``"circuit-mag"``, ``"residual-circuit"``, ...), so that a test can check the
data on the figure against the arrays it came from.

House style
-----------
* Axis tick labels in engineering notation with the unit (``10 kHz``,
  ``2.2 kΩ``, ``50 µs``), so that the axis titles name the quantity only.
* Readable in greyscale: the measurement is black with open markers, the
  equivalent circuit a solid dark line, the rational model a dashed line,
  limits and marks dotted; colour only repeats what the line style says.
* No chart junk: no top/right frame, a faint major grid on log axes only,
  legends without frames, one title line saying what the figure is.

Matplotlib is imported inside the functions (with the Agg backend) so that
importing zfit stays fast and no display is needed.
"""

from __future__ import annotations

import math
from typing import Sequence

import numpy as np

from .._units import PREFIXES

__all__ = [
    "eng_tick",
    "envelope",
    "plot_sweep",
    "plot_q",
    "plot_esr_d",
    "plot_bode",
    "plot_time_record",
    "plot_schematic",
    "save_figure",
    "figure_bytes",
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


def _pyplot():
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


def _styled(fn):
    """Run a plotting function inside the house style's rc settings."""
    import functools

    @functools.wraps(fn)
    def wrapper(*args, **kwargs):
        import matplotlib

        _pyplot()
        with matplotlib.rc_context(_RC):
            return fn(*args, **kwargs)

    return wrapper


# Fixed margins in inches (left, right, top, bottom), applied for the
# figure's size when it is saved.  A layout engine would find them by
# measuring every tick label, which costs two thirds of the rendering time.
_MARGINS_IN = (0.78, 0.3, 0.12, 0.42)
_TITLE_IN = 0.24
_LEGEND_ROW_IN = 0.17


def _figure(width_in: float, height_in: float, rows: Sequence[float], cols: int = 1, sharex: bool = True):
    import matplotlib

    plt = _pyplot()
    with matplotlib.rc_context(_RC):
        fig = plt.figure(figsize=(width_in, height_in))
        gs = fig.add_gridspec(len(rows), cols, height_ratios=list(rows), hspace=0.1)
        axes = []
        for i in range(len(rows)):
            ax = fig.add_subplot(gs[i, 0], sharex=axes[0] if (axes and sharex) else None)
            axes.append(ax)
    fig._zfit_layout = {"gs": gs, "title": False, "legend_rows": 0}
    _apply_layout(fig)
    return fig, axes


def _apply_layout(fig) -> None:
    """Set the subplot margins for the figure's current size (see `_MARGINS_IN`)."""
    lay = getattr(fig, "_zfit_layout", None)
    if lay is None:
        return
    w, h = fig.get_size_inches()
    left, right, top, bottom = _MARGINS_IN
    top += _TITLE_IN if lay["title"] else 0.0
    bottom += _LEGEND_ROW_IN * lay["legend_rows"] + (0.06 if lay["legend_rows"] else 0.0)
    lay["gs"].update(left=left / w, right=1 - right / w, top=1 - top / h, bottom=min(bottom / h, 0.6))


def _title(fig, text: str) -> None:
    """A one-line title at the top left of the figure."""
    fig.suptitle(text, x=0.01, y=0.995, ha="left", va="top", fontsize=9.5)
    fig._zfit_layout["title"] = True
    _apply_layout(fig)


def _legend_below(fig, handles, labels, ncols: int) -> None:
    """The legend under the axes, where it never hides the data."""
    import math as _m

    fig.legend(handles, labels, loc="lower center", bbox_to_anchor=(0.5, 0.0), ncols=ncols, handlelength=2.6,
               frameon=False)
    fig._zfit_layout["legend_rows"] = _m.ceil(len(labels) / ncols)
    _apply_layout(fig)


def _style_axis(ax, xunit: str | None = None, yunit: str | None = None, xlog=True, ylog=False, grid=True):
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


def _markevery(n: int) -> int:
    return max(1, n // 40)


def _shade_outside(ax, f, band, label=None, gid=None):
    """Shade the parts of the frequency axis outside `band` (lo, hi)."""
    lo, hi = band
    first = True
    for a, b in ((f[0], lo), (hi, f[-1])):
        if b > a * (1 + 1e-9):
            span = ax.axvspan(a, b, color=SHADE, zorder=0, lw=0, label=label if first else None)
            if gid:
                span.set_gid(gid)
            first = False


@_styled
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
    fig, (ax_m, ax_p, ax_r) = _figure(width_in, height_in, [3.2, 1.4, 1.3])
    mag = np.abs(z)
    s_mag = sig / math.sqrt(2.0)
    lo = np.maximum(mag - 2 * s_mag, mag * 1e-3)
    band = ax_m.fill_between(f, lo, mag + 2 * s_mag, color=BAND, lw=0, label="measured ±2σ", zorder=1)
    band.set_gid("measured-band")
    me = _markevery(f.size)
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
            _shade_outside(ax, f, valid_band_hz, label="outside the circuit's band" if ax is ax_m else None, gid="outside-band")
    if srf_hz is not None and math.isfinite(srf_hz) and f[0] <= srf_hz <= f[-1]:
        for ax in (ax_m, ax_p, ax_r):
            ax.axvline(srf_hz, color=MARK, ls=(0, (1, 2)), lw=0.9, gid="srf" if ax is ax_m else None, zorder=2)
        ax_m.annotate(f"SRF {eng_tick(srf_hz, 'Hz', 4)}", xy=(srf_hz, 1.0), xycoords=("data", "axes fraction"),
                      xytext=(3, -2), textcoords="offset points", ha="left", va="top", fontsize=7.5, color=INK)
    _style_axis(ax_m, yunit="ohm", ylog=True)
    _style_axis(ax_p)
    _style_axis(ax_r, xunit="Hz", ylog=True)
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
    _legend_below(fig, handles, labels, 3 if width_in >= 5.0 else 2)
    if title:
        _title(fig, title)
    return fig


@_styled
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
        Standard uncertainty of `q_rational` if given, else of `q_measured`;
        a +-2 sigma band is drawn around that curve.
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
    fig, (ax,) = _figure(width_in, height_in, [1.0])
    ok = np.isfinite(q) & (q > 0)
    qm = np.where(ok, q, np.nan)
    if q_std is not None:
        c = q if q_rational is None else q_rational
        okc = np.isfinite(c) & (c > 0)
        lo = np.where(okc, np.maximum(c - 2 * q_std, c * 1e-2), np.nan)
        b = ax.fill_between(f, lo, np.where(okc, c + 2 * q_std, np.nan), color=BAND, lw=0, label="measured ±2σ", zorder=1)
        b.set_gid("q-band")
    if q_rational is None:
        ax.plot(f, qm, color=INK, lw=0.8, marker="o", ms=3, mfc="white", mew=0.7, markevery=_markevery(f.size),
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
    if peak is not None and all(map(math.isfinite, peak)):
        ax.plot([peak[0]], [peak[1]], ls="none", marker="v", ms=6, color=INK, gid="q-peak", zorder=5)
        right = math.log(peak[0] / f[0]) > 0.6 * math.log(f[-1] / f[0])
        qtext = f"{peak[1]:.0f}" if peak[1] >= 100 else f"{peak[1]:.3g}"
        ax.annotate(f"peak Q {qtext} at {eng_tick(peak[0], 'Hz', 4)}", xy=peak, xytext=(-6 if right else 6, 6),
                    textcoords="offset points", ha="right" if right else "left", fontsize=7.5,
                    bbox={"boxstyle": "square,pad=0.15", "fc": "white", "ec": "none", "alpha": 0.85})
    _style_axis(ax, xunit="Hz", ylog=True)
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
        _title(fig, title)
    return fig


@_styled
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
        Standard uncertainty of `esr_rational` if given, else of
        `esr_measured` (sigma/sqrt 2); a +-2 sigma band around that curve.
    esr_circuit, d_circuit : array_like, optional
        The same figures of the equivalent circuit.
    esr_rational, d_rational : array_like, optional
        The same figures of the rational model (the measurement without its
        noise); when given, the measured points are drawn as dots and these
        as the lines.
    title : str
        Figure title.
    width_in, height_in : float
        Figure size in inches.

    Returns
    -------
    matplotlib.figure.Figure
        Artists' gids: ``esr-measured``, ``esr-band``, ``esr-circuit``,
        ``esr-rational``, ``d-measured``, ``d-circuit``, ``d-rational``.
    """
    f = np.asarray(f_hz, dtype=float)
    esr = np.asarray(esr_measured, dtype=float)
    d = np.asarray(d_measured, dtype=float)
    fig, (ax_e, ax_d) = _figure(width_in, height_in, [1.0, 1.0])
    me = _markevery(f.size)
    pos = np.where(esr > 0, esr, np.nan)
    if esr_std is not None:
        s = np.asarray(esr_std, dtype=float)
        c = esr if esr_rational is None else np.asarray(esr_rational, dtype=float)
        b = ax_e.fill_between(f, np.maximum(c - 2 * s, np.abs(c) * 1e-2 + 1e-300), c + 2 * s, color=BAND, lw=0,
                              label="measured ±2σ", zorder=1)
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
    _style_axis(ax_e, yunit="ohm", ylog=True)
    _style_axis(ax_d, xunit="Hz", ylog=True)
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
    ax_e.tick_params(labelbottom=False)
    ax_e.set_ylabel("ESR (Re Z)")
    ax_d.set_ylabel("D = tan δ")
    ax_d.set_xlabel("frequency")
    ax_e.set_xlim(f[0], f[-1])
    ax_e.legend(loc="best", handlelength=2.6)
    if title:
        _title(fig, title)
    return fig


@_styled
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
    fig, (ax_m, ax_p, ax_c) = _figure(width_in, height_in, [2.2, 1.4, 1.0])
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
    me = _markevery(int(np.count_nonzero(use)))
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
    _style_axis(ax_m)
    _style_axis(ax_p)
    _style_axis(ax_c, xunit="Hz")
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
        _title(fig, title)
    return fig


@_styled
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
    fig, (ax,) = _figure(width_in, height_in, [1.0])
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
    _style_axis(ax, xunit="s", yunit="V", xlog=False, grid=False)
    ax.set_xlabel("time")
    ax.set_ylabel("voltage")
    if sel.any():
        ax.set_xlim(t[sel][0], t[sel][-1])
    # Below the axes, so that it never hides the record.
    from matplotlib.ticker import MaxNLocator

    ax.xaxis.set_major_locator(MaxNLocator(nbins=max(3, int(width_in * 1.2)), steps=[1, 2, 2.5, 5, 10]))
    handles, labels = ax.get_legend_handles_labels()
    _legend_below(fig, handles, labels, 2 if width_in >= 5.0 else 1)
    if title:
        _title(fig, title)
    return fig


def figure_bytes(fig, fmt: str, *, salt: str = "zfit") -> bytes:
    """Return the figure encoded as PNG or SVG.

    Parameters
    ----------
    fig : matplotlib.figure.Figure
        The figure.
    fmt : {'png', 'svg'}
        Output format.
    salt : str
        Seed of the SVG element ids, so that several figures inlined in one
        HTML page have distinct ids and the output is reproducible.
    """
    import io

    import matplotlib

    buf = io.BytesIO()
    _apply_layout(fig)  # the figure may have been resized since it was drawn
    with matplotlib.rc_context({"svg.hashsalt": salt, "svg.fonttype": "none"}):
        fig.savefig(buf, format=fmt, metadata={"Date": None} if fmt == "svg" else {"Software": None})
    return buf.getvalue()


def save_figure(fig, path, *, force: bool = False):
    """Write the figure as PNG or SVG by the file's extension, atomically.

    Parameters
    ----------
    fig : matplotlib.figure.Figure
        The figure (closed after writing).
    path : str or os.PathLike
        Output file ending in ``.png`` or ``.svg``.
    force : bool
        Whether an existing file may be replaced.

    Returns
    -------
    pathlib.Path
        The path written.
    """
    from pathlib import Path

    from .._atomic import write_atomic
    from .._errors import ZfitInputError

    path = Path(path)
    fmt = path.suffix.lower().lstrip(".")
    if fmt not in ("png", "svg"):
        raise ZfitInputError("plot file must end in .png or .svg", path=path)
    try:
        return write_atomic(path, figure_bytes(fig, fmt, salt=path.stem), force)
    finally:
        _pyplot().close(fig)


# ---------------------------------------------------------------- schematic ---

_EL_W, _EL_H, _GAP = 1.0, 0.44, 0.2


def _size(node):
    kind = node[0]
    if kind in ("R", "L", "C"):
        return _EL_W, _EL_H
    sizes = [_size(c) for c in node[1]]
    if kind == "series":
        return sum(w for w, _ in sizes), max(h for _, h in sizes)
    # parallel: leads of _GAP on each side
    return max(w for w, _ in sizes) + 2 * _GAP, sum(h for _, h in sizes) + _GAP * (len(sizes) - 1)


def _draw_element(ax, kind, label, x0, y, w):
    """Draw one symbol centred on the wire at height y, from x0 to x0 + w."""
    import matplotlib.patches as mp

    body = min(0.5 * w, 0.5 * _EL_W)
    xa, xb = x0 + (w - body) / 2, x0 + (w + body) / 2
    ax.plot([x0, xa], [y, y], color=INK, lw=1.0)
    ax.plot([xb, x0 + w], [y, y], color=INK, lw=1.0)
    if kind == "R":
        ax.add_patch(mp.Rectangle((xa, y - 0.07), body, 0.14, fill=False, ec=INK, lw=1.0))
    elif kind == "L":
        n = 4
        r = body / (2 * n)
        for k in range(n):
            ax.add_patch(mp.Arc((xa + r * (2 * k + 1), y), 2 * r, 2 * r, theta1=0, theta2=180, ec=INK, lw=1.0))
    else:
        gap = 0.06
        xm = x0 + w / 2
        ax.plot([xa, xm - gap / 2], [y, y], color=INK, lw=1.0)
        ax.plot([xm + gap / 2, xb], [y, y], color=INK, lw=1.0)
        for xp in (xm - gap / 2, xm + gap / 2):
            ax.plot([xp, xp], [y - 0.12, y + 0.12], color=INK, lw=1.4)
    t = ax.text(x0 + w / 2, y + 0.13, label, ha="center", va="bottom", fontsize=6.0, color=INK)
    t.set_gid(f"element-{label.split('=')[0].strip()}")
    t.zfit_room = w  # the width the label may take, for _fit_labels


def _draw(ax, node, x0, y, width):
    """Draw `node` with its wire entering at (x0, y) and leaving at (x0 + width, y)."""
    kind = node[0]
    if kind in ("R", "L", "C"):
        _draw_element(ax, kind, node[1], x0, y, width)
        return
    w, h = _size(node)
    if kind == "series":
        scale = width / w
        x = x0
        for child in node[1]:
            cw = _size(child)[0] * scale
            _draw(ax, child, x, y, cw)
            x += cw
        return
    # Parallel: branches stacked downwards from the entry height.
    inner = width - 2 * _GAP
    ytop = y
    ys = []
    for child in node[1]:
        ch = _size(child)[1]
        ys.append(ytop)
        _draw(ax, child, x0 + _GAP, ytop, inner)
        ytop -= ch + _GAP
    ax.plot([x0, x0 + _GAP], [y, y], color=INK, lw=1.0)
    ax.plot([x0 + width - _GAP, x0 + width], [y, y], color=INK, lw=1.0)
    for xr in (x0 + _GAP, x0 + width - _GAP):
        ax.plot([xr, xr], [ys[0], ys[-1]], color=INK, lw=1.0)
        ax.plot([xr] * len(ys), ys, ls="none", marker="o", ms=2.2, color=INK)


@_styled
def _fit_labels(fig, ax) -> None:
    """Shrink element labels wider than their element, so that neighbours never overlap."""
    renderer = fig.canvas.get_renderer()
    x_lo, x_hi = ax.get_xlim()
    per_pixel = (x_hi - x_lo) / max(ax.bbox.width, 1e-9)
    labels = [t for t in ax.texts if getattr(t, "zfit_room", None) is not None]
    if not labels:
        return
    # One size for every label (the one the widest needs), for an even drawing.
    scale = min(1.0, *(0.94 * t.zfit_room / max(t.get_window_extent(renderer).width * per_pixel, 1e-12)
                       for t in labels))
    if scale < 1.0:
        for t in labels:
            t.set_fontsize(max(3.5, t.get_fontsize() * scale))


def plot_schematic(tree, *, title: str = "", width_in: float = 3.4, height_in: float | None = None):
    """Return a drawing of a series-parallel R-L-C network with its element values.

    Parameters
    ----------
    tree : tuple
        The network: ``("R" | "L" | "C", label)`` for an element,
        ``("series", [nodes])`` or ``("parallel", [nodes])`` for a
        combination; drawn between the terminals a (left) and b (right).
    title : str
        Figure title.
    width_in : float
        Figure width in inches.
    height_in : float, optional
        Figure height; by default from the drawing's aspect.

    Returns
    -------
    matplotlib.figure.Figure
        Each element's label is a text artist with gid ``element-<name>``
        (the label's text before ``=``).
    """
    plt = _pyplot()
    w, h = _size(tree)
    total_w = w + 0.6
    top, bottom = 0.42, -(h - _EL_H / 2) - 0.14
    if height_in is None:
        height_in = max(0.55, width_in * (top - bottom) / (total_w + 0.1))
    fig = plt.figure(figsize=(width_in, height_in))
    ax = fig.add_axes((0.0, 0.0, 1.0, 1.0))
    ax.set_axis_off()
    y0 = 0.0
    ax.plot([-0.3, 0.0], [y0, y0], color=INK, lw=1.0)
    ax.plot([w, w + 0.3], [y0, y0], color=INK, lw=1.0)
    ax.plot([-0.3, w + 0.3], [y0, y0], ls="none", marker="o", ms=4, mfc="white", mec=INK, mew=1.0, zorder=5)
    ax.text(-0.3, y0 - 0.12, "a", ha="center", va="top", fontsize=7.5)
    ax.text(w + 0.3, y0 - 0.12, "b", ha="center", va="top", fontsize=7.5)
    _draw(ax, tree, 0.0, y0, w)
    # Limits in the figure's own aspect, so that symbols keep their shape.
    ax.set_xlim(-0.35, w + 0.35)
    ax.set_ylim(y0 + top - (w + 0.7) * height_in / width_in, y0 + top)
    _fit_labels(fig, ax)
    if title:
        ax.set_title(title, loc="left")
    return fig

"""The plots of a result: which matplotlib figures an identification or a step analysis gets.

The arrays come from the result (`zfit.identification._traces.sweep_traces`
for a sweep, the step result's own record for a capture); the drawing is
`_plots`.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from .._errors import ZfitInputError
from ._views import pretty, pretty_std

__all__ = ["identification_plots", "point_std", "step_plots", "step_page_data"]


def point_std(traces) -> tuple:
    """Return the standard uncertainty of one measured point's Q (or ESR), to draw around the smooth curve.

    The sweep's ``sigma`` is complex-circular: each of Re Z and Im Z has
    ``sigma/sqrt 2``.  ESR = Re Z carries that; Q = |X|/R carries, to first
    order, ``(sigma/sqrt 2)/|R| * sqrt(1 + Q^2)`` (the two components'
    contributions added in quadrature).  This is the band the scatter of
    the measured points lies in; the rational model's own band (its
    covariance) is far narrower, and is not what the dots are compared to.

    Returns
    -------
    (numpy.ndarray or None, numpy.ndarray or None)
        Per-point std of Q (inductor traces) and of ESR (loss traces).

    References
    ----------
    JCGM 100:2008 (GUM), 5.1.2: the law of propagation of uncertainty.
    """
    s = np.asarray(traces.sigma_ohm, dtype=float) / np.sqrt(2.0)
    q_std = esr_std = None
    with np.errstate(divide="ignore", invalid="ignore"):
        if traces.q is not None:
            ref = traces.rational_ohm if traces.rational_ohm is not None else traces.z_ohm
            q = np.abs(ref.imag) / np.abs(ref.real)
            q_std = s / np.abs(ref.real) * np.sqrt(1.0 + q * q)
        if traces.losses is not None:
            esr_std = s
    return q_std, esr_std


def identification_plots(result, titles: bool = True, sizes: dict | None = None) -> dict:
    """Return the plots of an identification by name.

    Parameters
    ----------
    result : Identification
        The result of `zfit.identify`.
    titles : bool
        Whether the plots carry titles (a report has its own headings).
    sizes : dict, optional
        Plot sizes in inches by name (``{"sweep": (7.3, 4.4)}``): a plot is
        drawn at the size it is shown, so that its labels are placed for it.

    Returns
    -------
    dict of str to matplotlib.figure.Figure
        ``"sweep"`` (|Z|, phase, normalised residual with the circuit and the
        rational model), and ``"q"`` for an inductor or ``"esr_d"`` for a
        capacitor, whose +-2 sigma band is that of one measured point.
    """
    from ..identification._traces import sweep_traces
    from ._plots import plot_esr_d, plot_q, plot_sweep

    sizes = sizes or {}

    def size(name):
        return {"width_in": sizes[name][0], "height_in": sizes[name][1]} if name in sizes else {}

    sw = result.sweep
    tr = sweep_traces(result)
    circuit = tr.circuit_ohm
    name = Path(str(sw.source)).name or "sweep"
    title = f"{name}: {result.model}, {result.topology} ({sw.connection})" if titles else ""
    plots = {
        "sweep": plot_sweep(
            tr.f_hz, tr.z_ohm, tr.sigma_ohm, circuit_ohm=circuit, rational_ohm=tr.rational_ohm, srf_hz=tr.srf_hz,
            valid_band_hz=tuple(result.fit.valid_band_hz) if circuit is not None else None,
            circuit_label=result.topology if circuit is not None else "equivalent circuit", title=title,
            **size("sweep"),
        )
    }
    q_std, esr_std = point_std(tr)
    if tr.q is not None:
        q = tr.q
        plots["q"] = plot_q(tr.f_hz, q.q, q_std=q_std, q_rational=q.q_rational, q_circuit=q.q_circuit,
                            q_textbook=q.q_model, peak=q.peak, f_max_hz=tr.srf_hz, band_of="point",
                            title="Quality factor below the self-resonance" if titles else "", **size("q"))
    else:
        ls = tr.losses
        plots["esr_d"] = plot_esr_d(tr.f_hz, ls.esr, ls.d, esr_std=esr_std, esr_circuit=ls.esr_circuit,
                                    d_circuit=ls.d_circuit, esr_rational=ls.esr_rational, d_rational=ls.d_rational,
                                    srf_hz=tr.srf_hz, band_of="point",
                                    title="ESR and dissipation factor" if titles else "", **size("esr_d"))
    return plots


def step_page_data(result) -> dict:
    """Return what the capture plots and the page need, taken from a `StepResult`."""
    cap = result.capture
    ew = result.edge_waveform
    out_name = result.output_name
    in_name = result.input_name
    if cap is None:
        raise ZfitInputError("the step result carries no capture to plot")
    n = int(result.n_samples)
    dt = 1.0 / float(result.sample_rate_hz)
    t = np.arange(n) * dt
    channels = {}
    levels = {}
    if in_name is not None:
        channels[f"input ({in_name})"] = cap.channels[in_name]
        if result.input_levels_v is not None:
            levels[f"input ({in_name})"] = tuple(result.input_levels_v)
    channels[f"output ({out_name})"] = cap.channels[out_name]
    levels[f"output ({out_name})"] = tuple(result.levels_v)
    edges = np.asarray(result.edge_times_s, dtype=float)
    # Show about two periods from just before the first analysed edge.
    if edges.size >= 3:
        half = float(np.median(np.diff(edges)))
        window = (max(0.0, edges[0] - 0.3 * half), min(t[-1], edges[0] + 3.7 * half))
    else:
        window = None
    fitted = {}
    if ew is not None and ew.fit_v is not None and np.isfinite(ew.fit_v).any():
        ref = cap.channels[in_name if in_name is not None else out_name]
        ref_levels = result.input_levels_v if in_name is not None else result.levels_v
        mid = 0.5 * (ref_levels[0] + ref_levels[1])
        ok = np.isfinite(ew.fit_v)
        tf_all, vf_all = [], []
        for e in edges:
            if window is not None and not (window[0] <= e <= window[1]):
                continue
            i = min(int(round(e / dt)) + 3, n - 1)
            if ref[i] > mid:  # a rising edge: the averaged edge is rising
                tf_all.append(np.concatenate([e + ew.t_s[ok], [np.nan]]))
                vf_all.append(np.concatenate([ew.fit_v[ok], [np.nan]]))
        if tf_all:
            fitted[f"first-order response, output"] = (np.concatenate(tf_all), np.concatenate(vf_all))
    resp = result.response
    d = {
        "t_s": t, "channels": channels, "levels": levels, "edges_s": edges, "fitted": fitted, "window_s": window,
        "title": f"{Path(str(result.source)).name}: {result.edges} edges at {pretty(result.sample_rate_hz, 'Hz')} sampling",
        "source": result.source,
        "identification": result.identification,
        "f_hz": None,
    }
    if resp is not None and resp.f_hz.size:
        pos = resp.f_hz > 0
        d.update({"f_hz": resp.f_hz[pos], "h": resp.h[pos], "coherence": resp.coherence[pos],
                  "h_std": resp.h_std[pos], "usable": resp.usable[pos],
                  "usable_band_hz": tuple(result.usable_band_hz)})
    d["subtitle"] = (f"{Path(str(result.source)).name} · input {in_name or 'none (single channel)'} · output {out_name} · "
                     f"{result.n_samples} samples at {pretty(result.sample_rate_hz, 'Hz')}"
                     + (f" · sense resistor {pretty(result.shunt_ohm, 'ohm')}" if result.shunt_ohm else ""))
    bits = []
    if result.time_constant_s is not None:
        bits.append(f"time constant {pretty_std(result.time_constant_s, result.time_constant_std_s, 's')}")
    if result.ringing is not None:
        bits.append(f"ringing at {pretty_std(result.ringing.frequency_hz, result.ringing.frequency_std_hz, 'Hz')}")
    lo, hi = result.usable_band_hz
    if lo and hi:
        bits.append(f"usable band {pretty(lo, 'Hz')} to {pretty(hi, 'Hz')}")
    v = "; ".join(bits)
    d["verdict"] = (v[:1].upper() + v[1:] + ".") if v else ""
    return d


def step_plots(result, titles: bool = True, impedance: bool = True, sizes: dict | None = None) -> dict:
    """Return the plots of a step (capture) analysis by name.

    Parameters
    ----------
    result : StepResult
        The result of `zfit.analyse_capture`.
    titles : bool
        Whether the plots carry titles (a report has its own headings).
    impedance : bool
        Whether to add the impedance plots when a sense resistor gave one.
    sizes : dict, optional
        Plot sizes in inches by name (``{"time": (3.6, 2.5)}``); the plot
        functions' defaults otherwise.

    Returns
    -------
    dict of str to matplotlib.figure.Figure
        ``"time"`` (the record with levels, edges and fitted response) and
        ``"bode"`` (H with the usable band and coherence); ``"sweep"`` and
        ``"q"``/``"esr_d"`` as for a sweep when the impedance was identified.
    """
    from ._plot_capture import plot_bode, plot_time_record

    d = step_page_data(result)
    sizes = sizes or {}

    def size(name):
        return {"width_in": sizes[name][0], "height_in": sizes[name][1]} if name in sizes else {}

    plots = {
        "time": plot_time_record(d["t_s"], d["channels"], levels_v=d["levels"], edges_s=d["edges_s"],
                                 fitted=d["fitted"], window_s=d["window_s"], title=d["title"] if titles else "",
                                 **size("time")),
    }
    if d.get("f_hz") is not None:
        plots["bode"] = plot_bode(d["f_hz"], d["h"], d["coherence"], usable_band_hz=d["usable_band_hz"],
                                 h_std=d.get("h_std"), usable=d.get("usable"),
                                 title="Response H = V_out / V_in (H1 estimate)" if titles else "", **size("bode"))
    ident = d.get("identification")
    if ident is not None and impedance:
        plots.update(identification_plots(ident, titles=titles, sizes=sizes))
    return plots

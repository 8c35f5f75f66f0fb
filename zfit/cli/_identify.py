"""``zfit identify``: the equivalent circuit of one part, with uncertainties."""

from __future__ import annotations

import warnings
from pathlib import Path
from typing import List, Optional

import typer

from ._common import (
    ColumnsOpt,
    ConnectionOpt,
    ForceOpt,
    LoadOpt,
    LoadValueOpt,
    NoiseFloorOpt,
    NoiseRelOpt,
    OpenOpt,
    PortDelayOpt,
    PortLossOpt,
    ShortOpt,
    app,
    command_line,
    echo,
    emit_json,
    guarded,
    quantities,
    quantity,
    warn_line,
)


@app.command("identify")
@guarded
def identify_command(
    sweep: Path = typer.Argument(..., help="Touchstone (.s1p/.s2p) file or impedance-analyser table (.csv/.txt/.tsv)."),
    model: str = typer.Option("auto", "--model", "-m", help="auto | inductor | capacitor | rational."),
    at: Optional[List[str]] = typer.Option(None, "--at", help="Spot frequency for R, X, L_eff, C_eff, Q, D readouts, e.g. 100k; repeatable."),
    rdc: Optional[str] = typer.Option(None, "--rdc", help="Measured DC resistance in ohm (four-wire ohmmeter), e.g. 25m: constrains R_s or ESR."),
    rdc_std: Optional[str] = typer.Option(None, "--rdc-std", help="Standard uncertainty of --rdc in ohm (default 1 % of it)."),
    json_path: Optional[Path] = typer.Option(None, "--json", help="Write the zfit.identify/1 JSON result here ('-' for standard output)."),
    plot: Optional[Path] = typer.Option(None, "--plot", help="Write a plot of data, models and residuals (.png or .svg)."),
    netlist: Optional[Path] = typer.Option(None, "--netlist", help="Write a SPICE subcircuit of the model (.cir, .sp or .lib)."),
    netlist_kind: str = typer.Option(
        "auto", "--netlist-kind",
        help="What --netlist holds: circuit (the equivalent circuit's elements), rational (the full-band rational "
             "model as a passive R-L-C network) or auto (the reported model).",
    ),
    touchstone: Optional[Path] = typer.Option(None, "--touchstone", help="Write the model's impedance as a one-port Touchstone file (.s1p)."),
    touchstone_grid: Optional[str] = typer.Option(None, "--touchstone-grid", help="Grid of the Touchstone file START:STOP[:N] (log) or START:STOP:Nlin, e.g. 1k:1G:801 (default: the sweep's)."),
    report: Optional[Path] = typer.Option(None, "--report", help="Write a self-contained HTML report (.html)."),
    connection: ConnectionOpt = None,
    noise_rel: NoiseRelOpt = None,
    noise_floor: NoiseFloorOpt = None,
    columns: ColumnsOpt = None,
    open_: OpenOpt = None,
    short: ShortOpt = None,
    load: LoadOpt = None,
    load_value: LoadValueOpt = None,
    port_delay: PortDelayOpt = None,
    port_loss: PortLossOpt = None,
    force: ForceOpt = False,
):
    """Identify the equivalent circuit of the part in SWEEP.

    Prints the circuit values with their standard uncertainties, the
    self-resonant frequency, Q or D, the fit quality and any warning, and
    writes the zfit.identify/1 JSON with --json.  The method, the decision
    rules and every JSON key are described in docs/identify.md.

    Safety: discharge a capacitor before connecting it to an analyser; follow
    local codes and licensed practice for parts taken from mains-powered
    equipment.
    """
    from .._atomic import check_writable
    from ._common import sweep_from_options
    from .._errors import MeasurementWarning, ZfitInputError
    from ..identification._pipeline import identify
    from ..outputs._outputs import check_output_suffix

    # Refuse before any work if an output exists or cannot be written there
    # (nothing is overwritten without --force).
    if json_path is not None and str(json_path) != "-":
        check_writable(json_path, force)
    for out, kind in ((plot, "plot"), (netlist, "netlist"), (touchstone, "touchstone"), (report, "report")):
        if out is not None:
            check_writable(check_output_suffix(out, kind), force)
    if touchstone_grid is not None and touchstone is None:
        raise ZfitInputError("--touchstone-grid needs --touchstone PATH (the file the grid is for)")
    if netlist_kind not in ("auto", "circuit", "rational"):
        raise ZfitInputError(f"--netlist-kind {netlist_kind!r}: use circuit, rational or auto")
    if netlist_kind != "auto" and netlist is None:
        raise ZfitInputError("--netlist-kind needs --netlist PATH")
    freqs = quantities(at, "--at")
    r_dc = quantity(rdc, "--rdc")
    r_dc_std = quantity(rdc_std, "--rdc-std")
    s = sweep_from_options(
        sweep, connection, noise_rel, noise_floor, columns, open_, short, load, load_value, port_delay,
        port_loss=port_loss,
    )
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", MeasurementWarning)
        result = identify(s, model, freqs, rdc=r_dc, rdc_std=r_dc_std)
    # identify's own warnings are in result.warnings; others (from reading) are passed on.
    own = set(result.warnings)
    for w in caught:
        text = str(w.message)
        if not any(text.endswith(o) for o in own):
            warn_line(text)

    to_stdout = json_path is not None and str(json_path) == "-"
    if not to_stdout:  # with --json - the standard output is the JSON alone
        for line in summary_lines(result):
            echo(line)
    for text in result.warnings:
        warn_line(text)

    if json_path is not None:
        emit_json(result.to_dict(), json_path, force)
    if any(x is not None for x in (plot, netlist, touchstone, report)):
        from ..outputs._outputs import write_outputs

        written = write_outputs(
            result, plot=plot, netlist=netlist, touchstone=touchstone, touchstone_grid=touchstone_grid,
            report=report, force=force, command=command_line(),
            netlist_kind=netlist_kind,
        )
        for path in written:
            typer.echo(f"wrote {path}", err=to_stdout)


def summary_lines(result) -> list[str]:
    """Return the readable table of an identification, line by line.

    Parameters
    ----------
    result : Identification
        What `zfit.identify` returned.
    """
    from .._units import format_eng, format_value_std

    fit = result.fit
    out = [
        f"part:       {result.sweep.source}  ({result.sweep.connection}, {result.sweep.n_points} points, "
        f"{format_eng(fit.f_min_hz, 'Hz')} to {format_eng(fit.f_max_hz, 'Hz')})",
        f"model:      {result.model}: {result.topology}",
    ]
    if len(result.parameters):
        out.append("parameters (value ± standard uncertainty):")
        for key, est in result.parameters.items():
            text = est.unresolved_text() if hasattr(est, "unresolved_text") else None
            if text is not None:
                # A number that is only noise is not printed.
                out.append(f"  {key:<7}{text}")
                continue
            rel = ""
            if est.std is not None and est.value:
                rel = f"  ({100 * est.std / abs(est.value):.2g} %)"
            out.append(f"  {key:<7}{format_value_std(est.value, est.std, est.unit)}{rel}")
    if result.rdc is not None:
        out.append(f"  (DC resistance given: {format_value_std(result.rdc.value, result.rdc.std, 'ohm')})")
    srf = result.srf
    if srf.where == "none":
        out.append("SRF:        none (the reactance does not cross zero)")
    else:
        val = format_value_std(srf.value_hz, srf.std_hz, "Hz")
        if srf.where == "in-band":
            out.append(f"SRF:        {val}  (in band)")
        elif srf.where == "above-band":
            out.append(f"SRF:        above {format_eng(srf.bound_hz, 'Hz')} (top of the band); the {srf.source} puts it at {val}")
        else:
            out.append(f"SRF:        below {format_eng(srf.bound_hz, 'Hz')} (bottom of the band); the {srf.source} puts it at {val}")
    fig = result.figures
    if fig.z_at_srf is not None:
        out.append(f"|Z| at SRF: {format_value_std(fig.z_at_srf.value, fig.z_at_srf.std, 'ohm')}")
    if fig.q_peak is not None:
        out.append(
            f"Q peak:     {format_value_std(fig.q_peak.value, fig.q_peak.std)} at {format_eng(fig.q_peak.f_hz, 'Hz')}"
            f"  [{fig.q_peak.definition}]"
        )
        if fig.q_model_at_q_peak is not None:
            q = fig.q_model_at_q_peak
            out.append(f"            {format_value_std(q.value, q.std)} there  [{q.definition}]")
    if fig.esr_min is not None:
        out.append(f"ESR min:    {format_value_std(fig.esr_min.value, fig.esr_min.std, 'ohm')} at {format_eng(fig.esr_min.f_hz, 'Hz')}")
    if fig.d_at_f_min is not None:
        d = fig.d_at_f_min
        out.append(f"D:          {format_value_std(d.value, d.std)} at {format_eng(d.f_hz, 'Hz')}  [{d.definition}]")
        if fig.d_model_at_f_min is not None:
            dm = fig.d_model_at_f_min
            out.append(f"            {format_value_std(dm.value, dm.std)} there  [{dm.definition}]")
    band = fit.valid_band_hz
    whole = band[0] == fit.f_min_hz and band[1] == fit.f_max_hz
    out.append(
        f"fit:        normalised RMS residual {fit.rms_normalized_residual:.3g} over {fit.points} points "
        f"(1 = noise level; residuals on {fit.domain})"
    )
    if fit.rational_rms_normalized_residual is not None:
        out.append(f"            rational model: {fit.rational_poles} poles, residual {fit.rational_rms_normalized_residual:.3g}")
    if result.model != "rational":
        if whole:
            out.append("            the circuit holds over the whole band")
        else:
            out.append(f"            valid band {format_eng(band[0], 'Hz')} to {format_eng(band[1], 'Hz')}")
    if result.spot:
        out.append("spot readouts (from the " + ", ".join(sorted({s.source for s in result.spot})) + " model):")
        out.append(f"  {'f':>10}  {'R':>22}  {'X':>22}  {'L_eff / C_eff':>24}  {'Q':>16}  {'D':>16}")
        for sp in result.spot:
            eff = sp.L_eff if sp.X.value >= 0 else sp.C_eff
            out.append(
                f"  {format_eng(sp.f_hz, 'Hz'):>10}  {format_value_std(sp.R.value, sp.R.std, 'ohm'):>22}  "
                f"{format_value_std(sp.X.value, sp.X.std, 'ohm'):>22}  {format_value_std(eff.value, eff.std, eff.unit):>24}  "
                f"{format_value_std(sp.Q.value, sp.Q.std):>16}  {format_value_std(sp.D.value, sp.D.std):>16}"
                + ("" if sp.in_band else "  (outside the band)")
            )
    return out

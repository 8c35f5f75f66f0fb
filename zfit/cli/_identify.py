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
    model: str = typer.Option("auto", "--model", "-m", help="auto | inductor | capacitor | rational, or one circuit by its short name "
                                   "(skin-effect-coil, relaxing-core, constant-loss-capacitor, bead) or its descriptive "
                                   "name as the JSON 'topology' gives it (quoted)."),
    band: Optional[str] = typer.Option(None, "--band", help="Fit over FMIN:FMAX only, e.g. 1k:10M (the figures read from the measurement still cover the whole file)."),
    at: Optional[List[str]] = typer.Option(None, "--at", help="Spot frequency for R, X, L_eff, C_eff, Q, D readouts, e.g. 100k; repeatable."),
    rdc: Optional[str] = typer.Option(None, "--rdc", help="Measured DC resistance in ohm (four-wire ohmmeter), e.g. 25m: constrains R_s or ESR."),
    rdc_std: Optional[str] = typer.Option(None, "--rdc-std", help="Standard uncertainty of --rdc in ohm (default 1 % of it)."),
    json_path: Optional[Path] = typer.Option(None, "--json", help="Write the zfit.identify/1 JSON result here ('-' for standard output)."),
    plot: Optional[Path] = typer.Option(None, "--plot", help="Write the plots (.png or .svg): --plot x.png writes x.png (|Z|, phase, residuals) and x-q.png (inductor) or x-esr-d.png (capacitor); each file written is listed."),
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
    from ..data._sweep import ELEMENT_RANGES, FREQUENCY_RANGE_HZ
    from ..identification._pipeline import identify
    from ..outputs._outputs import check_output_suffix
    from ..outputs._views import identification_summary

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
    freqs = quantities(at, "--at", *FREQUENCY_RANGE_HZ, unit="Hz")
    fit_band = None
    if band is not None:
        parts = band.split(":")
        if len(parts) != 2:
            raise ZfitInputError(f"--band {band!r}: give FMIN:FMAX, e.g. 1k:10M")
        fit_band = (quantity(parts[0], "--band", *FREQUENCY_RANGE_HZ, unit="Hz"),
                    quantity(parts[1], "--band", *FREQUENCY_RANGE_HZ, unit="Hz"))
    r_dc = quantity(rdc, "--rdc", *ELEMENT_RANGES["ohm"], unit="ohm")
    # An ohmmeter is at best some 1e-6 of its reading (common practice); an uncertainty above the reading says nothing.
    r_dc_std = quantity(rdc_std, "--rdc-std", None if r_dc is None else 1e-6 * r_dc, r_dc, unit="ohm")
    s = sweep_from_options(
        sweep, connection, noise_rel, noise_floor, columns, open_, short, load, load_value, port_delay,
        port_loss=port_loss,
    )
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", MeasurementWarning)
        result = identify(s, model, freqs, rdc=r_dc, rdc_std=r_dc_std, band=fit_band)
    # identify's own warnings are in result.warnings; others (from reading) are passed on.
    own = set(result.warnings)
    for w in caught:
        text = str(w.message)
        if not any(text.endswith(o) for o in own):
            warn_line(text)

    to_stdout = json_path is not None and str(json_path) == "-"
    if not to_stdout:  # with --json - the standard output is the JSON alone
        for line in identification_summary(result):
            echo(line)
        if result.bead is not None:
            from ..outputs._core_views import bead_summary

            for line in bead_summary(result.bead)[1:]:
                echo(line)
    for text in result.warnings:
        warn_line(text)

    files = any(x is not None for x in (plot, netlist, touchstone, report))
    # The JSON belongs to the set of files written together (all or none), unless it goes to standard output.
    json_in_set = files and json_path is not None and not to_stdout
    if json_path is not None and not json_in_set:
        emit_json(result.to_dict(), json_path, force)
    if files:
        from ..outputs._outputs import write_outputs

        written = write_outputs(
            result, plot=plot, netlist=netlist, touchstone=touchstone, touchstone_grid=touchstone_grid,
            report=report, force=force, command=command_line(),
            netlist_kind=netlist_kind, json_path=json_path if json_in_set else None,
        )
        for path in written:
            typer.echo(f"wrote {path}", err=to_stdout)

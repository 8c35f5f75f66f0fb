"""``zfit core``: the complex permeability of a wound core, or the impedance figures of a bead."""

from __future__ import annotations

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
    echo,
    emit_json,
    guarded,
    quantities,
    quantity,
    warn_line,
)

_NAMES = {"turns": "--turns", "od": "--od", "id": "--id", "height": "--height", "core_constant": "--core-constant",
          "le": "--le", "ae": "--ae", "geometry_tol": "--geometry-tol", "rdc": "--rdc"}


@app.command("core")
@guarded
def core_command(
    sweep: Path = typer.Argument(..., help="The winding's (or bead's) sweep: Touchstone (.s1p/.s2p) or impedance table."),
    turns: Optional[str] = typer.Option(None, "--turns", "-N", help="Number of turns of the winding."),
    od: Optional[str] = typer.Option(None, "--od", help="Toroid outer diameter (mm by default; 25, 25mm or 25m)."),
    id_: Optional[str] = typer.Option(None, "--id", help="Toroid inner diameter (mm by default)."),
    height: Optional[str] = typer.Option(None, "--height", help="Toroid height (mm by default)."),
    core_constant: Optional[str] = typer.Option(None, "--core-constant", help="Core constant C1 = sum l/A in 1/m, instead of the dimensions."),
    le: Optional[str] = typer.Option(None, "--le", help="Effective magnetic length (mm by default), with --ae."),
    ae: Optional[str] = typer.Option(None, "--ae", help="Effective area (mm^2 by default, or m^2 in engineering notation, e.g. 48u), with --le."),
    geometry_tol: str = typer.Option("2%", "--geometry-tol", help="Tolerance of each dimension (or of the given constant), e.g. 2% or 0.02."),
    rdc: Optional[str] = typer.Option(None, "--rdc", help="Measured DC resistance of the winding in ohm (default: estimated from the low end)."),
    rdc_std: Optional[str] = typer.Option(None, "--rdc-std", help="Standard uncertainty of --rdc in ohm (default 1 % of it)."),
    at: Optional[List[str]] = typer.Option(None, "--at", help="Frequency for the loss factor (core) or |Z| (bead, default 100M); repeatable."),
    bead: bool = typer.Option(False, "--bead", help="The part is a bead: |Z|, R, X, the R = X frequency, |Z| at --at, the multi-section model."),
    json_path: Optional[Path] = typer.Option(None, "--json", help="Write the zfit.core/1 JSON result here ('-' for standard output)."),
    plot: Optional[Path] = typer.Option(None, "--plot", help="Write the plot (.png or .svg): mu' and mu'' over |Z|, R, X; a bead's |Z|, R, X."),
    netlist: Optional[Path] = typer.Option(None, "--netlist", help="With --bead: write the multi-section model as a SPICE subcircuit (.cir, .sp or .lib)."),
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
    """Find the complex permeability mu' - j mu'' of the core a winding is on, and its material figures.

    Give the turns and the core: a toroid's --od, --id and --height, or
    --core-constant, or --le with --ae. Prints the initial permeability
    mu_i, the frequency of the mu'' peak and of mu' = mu'', tan(delta)/mu_i,
    and the fitted relaxation (Debye, or Cole-Cole where the data demand it),
    with uncertainties from the noise and --geometry-tol. With --bead, prints
    a bead's R = X frequency and |Z| at 100 MHz (or --at) and fits its
    multi-section model. Method and JSON keys: docs/cores.md.
    """
    from .._atomic import check_writable, write_atomic
    from .._errors import ZfitInputError
    from ..data._sweep import FREQUENCY_RANGE_HZ
    from ..identification._core_result import core_document
    from ..outputs._outputs import check_output_suffix
    from ._common import sweep_from_options

    if json_path is not None and str(json_path) != "-":
        check_writable(json_path, force)
    if plot is not None:
        check_writable(check_output_suffix(plot, "plot"), force)
    if netlist is not None:
        if not bead:
            raise ZfitInputError("--netlist is for a bead (--bead): a core's figures are its material, not a circuit; "
                                 "zfit identify writes the winding's netlist")
        check_writable(check_output_suffix(netlist, "netlist"), force)
    freqs = quantities(at, "--at", *FREQUENCY_RANGE_HZ, unit="Hz")
    if bead:
        given = [n for n, v in (("--turns", turns), ("--od", od), ("--id", id_), ("--height", height),
                                ("--core-constant", core_constant), ("--le", le), ("--ae", ae), ("--rdc", rdc)) if v]
        if given:
            raise ZfitInputError(f"{given[0]} is for a wound core, not with --bead")
    else:
        from ..io._core_spec import core_spec

        spec = core_spec(turns, od, id_, height, core_constant, le, ae, geometry_tol, rdc, names=_NAMES)
    s = sweep_from_options(sweep, connection, noise_rel, noise_floor, columns, open_, short, load, load_value,
                           port_delay, port_loss=port_loss)
    if bead:
        from ..identification._bead import DEFAULT_BEAD_AT_HZ, bead_figures
        from ..outputs._core_views import bead_netlist, bead_summary

        result = bead_figures(s, at=freqs or (DEFAULT_BEAD_AT_HZ,))
        doc = core_document(s, bead=result)
        lines = bead_summary(result)
    else:
        from ..identification._core_geometry import core_constant as constant_of
        from ..identification._core_material import core_material
        from ..outputs._core_views import core_summary

        r_std = quantity(rdc_std, "--rdc-std", 0.0, None, "ohm")
        result = core_material(s, constant_of(spec), rdc=spec.rdc_ohm, rdc_std=r_std, at=freqs)
        doc = core_document(s, material=result)
        lines = core_summary(result)
    to_stdout = json_path is not None and str(json_path) == "-"
    if not to_stdout:
        for line in lines:
            echo(line)
    for text in result.warnings:
        warn_line(text)
    if json_path is not None:
        emit_json(doc, json_path, force)
    if plot is not None:
        from ..outputs._plot_core import plot_bead, plot_core
        from ..outputs._plot_files import save_figure

        fig = plot_bead(result) if bead else plot_core(result)
        typer.echo(f"wrote {save_figure(fig, plot, force=force)}", err=to_stdout)
    if netlist is not None:
        if result.model is None:
            raise ZfitInputError("no multi-section model could be fitted: no netlist written", netlist)
        write_atomic(netlist, bead_netlist(result, name=Path(sweep).stem), force)
        typer.echo(f"wrote {netlist}", err=to_stdout)

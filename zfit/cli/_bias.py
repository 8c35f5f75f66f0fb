"""``zfit bias``: a set of sweeps against DC bias: L(I) or C(V) and the saturation figures."""

from __future__ import annotations

from pathlib import Path
from typing import List, Optional

import typer

from ._common import (
    ColumnsOpt,
    ConnectionOpt,
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
    guarded,
    quantity,
    read_options,
)

#: What the set writes in --out besides each sweep's identify JSON.
BIAS_JSON_NAME = "bias.json"


@app.command("bias")
@guarded
def bias_command(
    inputs: Optional[List[str]] = typer.Argument(None, help="Sweep files, folders or glob patterns of the set (may be left out with --manifest)."),
    out: Path = typer.Option(..., "--out", "-o", help="Output folder: bias.json, bias.png and each sweep's identify JSON."),
    bias: Optional[str] = typer.Option(None, "--bias", help="The bias of each file, comma separated, in the order of the files (e.g. 0,0.5,1,2)."),
    bias_unit: Optional[str] = typer.Option(None, "--bias-unit", help="Unit of the biases: A, mA, V, mV ... (a manifest may state it in its header)."),
    manifest: Optional[Path] = typer.Option(None, "--manifest", help="CSV with a 'file' column (relative to the CSV) and a bias column."),
    bias_column: str = typer.Option("bias", "--bias-column", help="The manifest's bias column."),
    bias_from_name: Optional[str] = typer.Option(None, "--bias-from-name", help="Regular expression with a group named bias, searched in each file name, e.g. 'L_(?P<bias>[0-9.]+)A'."),
    bias_accuracy: Optional[str] = typer.Option(None, "--bias-accuracy", help="Standard uncertainty of the bias readings in percent (default 0: the supply's readback taken as exact)."),
    model: str = typer.Option("auto", "--model", "-m", help="auto | inductor | capacitor."),
    limits: Optional[Path] = typer.Option(None, "--limits", help="Limits file (docs/batch.md); bias figures such as I_sat_20 are checked, with the zero-bias sweep's L, R_s, SRF."),
    jobs: Optional[int] = typer.Option(None, "--jobs", "-j", help="Local worker processes (default: all cores; 1 = in this process)."),
    cluster: Optional[str] = typer.Option(None, "--cluster", help="Address of a Dask distributed scheduler, as for zfit batch."),
    plot: bool = typer.Option(True, "--plot/--no-plot", help="Write the plot of the set (bias.png)."),
    plot_format: str = typer.Option("png", "--plot-format", help="png | svg."),
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
    force: bool = typer.Option(False, "--force", help="Overwrite files in --out that exist."),
    quiet: bool = typer.Option(False, "--quiet", "-q", help="No progress display."),
):
    """Identify each sweep of a set measured at several DC biases and report L(I) or C(V).

    Prints, per sweep, L (or C), R_s (or ESR) and the SRF with their
    standard uncertainties; the zero-bias value; the fitted curve
    y0/(1+(x/x_s)^n) (weighted least squares, covariance scaled by the
    Birge ratio); the biases where L has fallen 10, 20, 30 % (I_sat_10,
    I_sat_20, I_sat_30) or C 20, 50 % (V_bias_20, V_bias_50), interpolated
    between the bracketing sweeps, with the curve's value as a check.
    Writes bias.json (zfit.bias/1, docs/bias.md) and bias.png.

    Exit status: 0, or 1 when --limits is given and the set fails or is
    indeterminate; 2 on bad input (the file is named).

    Safety: discharge capacitors after a DC-bias measurement before
    handling them; keep within the part's rated current and voltage.
    """
    from .._atomic import check_writable, write_atomic
    from .._errors import ZfitInputError
    from .._json import json_text
    from ..io._limits_file import read_limits
    from ..lot._bias_inputs import bias_points
    from ..lot._bias_set import run_bias_set
    from ..outputs._bias_views import bias_text

    if plot_format not in ("png", "svg"):
        raise ZfitInputError(f"--plot-format {plot_format!r}: use png or svg")
    values = None if bias is None else [v for v in bias.replace(";", ",").split(",") if v.strip()]
    if values is not None and not values:
        raise ZfitInputError("--bias is empty: give one value per file, e.g. 0,0.5,1")
    points, unit = bias_points(inputs or [], bias=values, manifest=manifest, column=bias_column,
                               from_name=bias_from_name, unit=bias_unit)
    rel = (quantity(bias_accuracy, "--bias-accuracy", 0, 50, "%") or 0.0) / 100.0
    lim = read_limits(limits) if limits is not None else None
    json_path = out / BIAS_JSON_NAME
    plot_path = out / f"bias.{plot_format}"
    check_writable(json_path, force)
    if plot:
        check_writable(plot_path, force)
    read = read_options(
        connection=connection, noise_rel=noise_rel, noise_floor=noise_floor, columns=columns, open_=open_,
        short=short, load=load, load_value=load_value, port_delay=port_delay, port_loss=port_loss,
    )
    result = run_bias_set(points, unit, out, model=model, read=read, jobs=jobs, cluster=cluster, limits=lim,
                          bias_rel_std=rel, force=force, progress=False if quiet else None)
    echo(bias_text(result))
    write_atomic(json_path, json_text(result.to_dict()), force)
    wrote = [json_path]
    if plot:
        from ..outputs._bias_plot import write_bias_plot

        title = f"{result.value_key} against DC bias, {len(points)} sweeps: {points[0].name} to {points[-1].name}"
        wrote.append(write_bias_plot(result, plot_path, title=title, force=force))
    echo("wrote " + ", ".join(str(p) for p in wrote))
    if result.decision is not None and result.decision.verdict != "pass":
        raise typer.Exit(1)

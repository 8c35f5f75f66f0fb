"""``zfit info``: what was read from a sweep file."""

from __future__ import annotations

from pathlib import Path
from typing import Annotated, Optional

import typer

from ._common import (
    ColumnsOpt, ConnectionOpt, ForceOpt, LoadOpt, LoadValueOpt, NoiseFloorOpt, NoiseRelOpt, OpenOpt, PortDelayOpt,
    PortLossOpt, ShortOpt, app, echo, emit_json, guarded, sweep_from_options,
)

@app.command("info")
@guarded
def info_command(
    sweep: Annotated[Path, typer.Argument(help="Touchstone (.s1p/.s2p/.ts) file or analyser table (.csv/.tsv/.txt/.dat).")],
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
    json_path: Annotated[Optional[Path], typer.Option("--json", help="Also write what was read as JSON (zfit.info/1) to this file.")] = None,
    force: ForceOpt = False,
):
    """Print what was read from SWEEP: format and reference impedance understood, points, band,
    |Z| range, connection, noise model and notes, with a warning when the connection is
    poorly conditioned for this part.

    Safety: discharge capacitors before connecting them to the analyser.
    """
    import warnings

    from .._errors import MeasurementWarning
    from ..outputs._views import info_dict, info_lines

    s = sweep_from_options(
        sweep, connection, noise_rel, noise_floor, columns, open_, short, load, load_value, port_delay, port_loss
    )
    d = info_dict(s)
    to_stdout = json_path is not None and str(json_path) == "-"
    for line in info_lines(d):  # with --json - the standard output is the JSON alone
        typer.echo(line, err=to_stdout)
    for w in d["warnings"]:
        warnings.warn(w, MeasurementWarning)
    if json_path is not None:
        emit_json(d, json_path, force)

"""``zfit info``: what was read from a sweep file."""

from __future__ import annotations

from pathlib import Path

import typer

from ._cli_common import app, echo, guarded


@app.command("info")
@guarded
def info_command(
    sweep: Path = typer.Argument(..., help="Touchstone (.s1p/.s2p) file or analyser table (.csv/.txt/.tsv)."),
    connection: str = typer.Option(None, "--connection", "-c", help="reflection | shunt-thru | series-thru (needed for .s2p)."),
):
    """Print what was read from SWEEP: points, band, |Z| range, connection, noise model."""
    from ._readers import read_sweep

    s = read_sweep(sweep, connection=connection)
    echo(repr(s))

"""The ``zfit`` command: a thin shell over the Python API."""

from __future__ import annotations

import importlib
import os

import typer

from ._common import app
from .._version import __version__

# Each module registers its command(s) on `app` when imported.
_COMMAND_MODULES = (
    "_info",
    "_step",
    "_response",
    "_identify",
    "_batch",
    "_bias",
    "_plan",
    "_demo",
    "_core",
)


def _version(value: bool):
    if value:
        typer.echo(f"zfit {__version__}")
        raise typer.Exit()


@app.callback()
def _root(
    version: bool = typer.Option(False, "--version", callback=_version, is_eager=True, help="Print the version and exit."),
):
    """Equivalent circuits of inductors and capacitors from bench measurements."""


for _name in _COMMAND_MODULES:
    importlib.import_module(f"zfit.cli.{_name}")


def main() -> None:
    """Entry point of the ``zfit`` console script."""
    # zfit's linear algebra is many small problems: a threaded BLAS only adds
    # contention (measured: three times the CPU per part). Set before numpy
    # loads; a value the user exported wins.
    for var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
        os.environ.setdefault(var, "1")
    app()

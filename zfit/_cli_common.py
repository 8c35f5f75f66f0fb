"""What every command of the command line shares: the app, error handling,
option parsing in engineering notation.

Command modules (``_cli_<name>.py``) import `app` from here and register
their command with ``@app.command()`` and ``@guarded``.  They import the
heavy parts of zfit inside the command body, so that ``zfit --help``
stays fast.
"""

from __future__ import annotations

import functools
import warnings

import typer

from ._errors import MeasurementWarning, ZfitError, ZfitInputError
from ._units import parse_quantity

__all__ = ["app", "guarded", "quantity", "quantities", "echo", "warn_line"]

app = typer.Typer(
    name="zfit",
    help=(
        "Equivalent circuits, uncertainties and simulator models of inductors and "
        "capacitors from network-analyser sweeps, impedance-analyser tables and "
        "oscilloscope captures.\n\n"
        "Safety: discharge capacitors before connecting them; an oscilloscope's ground "
        "clip is tied to mains earth. For mains or high-voltage work follow local codes "
        "and licensed practice."
    ),
    add_completion=False,
    no_args_is_help=True,
    pretty_exceptions_enable=False,
    rich_markup_mode=None,
    context_settings={"help_option_names": ["-h", "--help"]},
)


def echo(text: str = "") -> None:
    """Print a line of the result to standard output."""
    typer.echo(text)


def warn_line(text: str) -> None:
    """Print one warning line to standard error."""
    typer.echo(f"zfit: warning: {text}", err=True)


def _show_warning(message, category, filename, lineno, file=None, line=None):
    warn_line(str(message))


def guarded(fn):
    """Wrap a command so that zfit's errors become one line and exit status 2.

    Warnings about the measurement are printed as one line each on standard
    error; no traceback reaches the user for an error zfit raised on purpose
    or for a file that cannot be opened.
    """

    @functools.wraps(fn)
    def wrapper(*args, **kwargs):
        with warnings.catch_warnings():
            warnings.simplefilter("always", MeasurementWarning)
            warnings.showwarning = _show_warning
            try:
                return fn(*args, **kwargs)
            except ZfitError as exc:
                text = exc.one_line() if isinstance(exc, ZfitInputError) else str(exc)
                typer.echo(f"zfit: error: {text}", err=True)
                raise typer.Exit(2) from None
            except OSError as exc:
                name = exc.filename if exc.filename is not None else ""
                typer.echo(f"zfit: error: {name}: {exc.strerror or exc}", err=True)
                raise typer.Exit(2) from None

    return wrapper


def quantity(text: str | None, what: str) -> float | None:
    """Parse an option value in engineering notation (None stays None)."""
    if text is None:
        return None
    return parse_quantity(text, what)


def quantities(texts, what: str) -> tuple[float, ...]:
    """Parse a repeated option (``--at 100k --at 1M``)."""
    return tuple(parse_quantity(t, what) for t in (texts or ()))

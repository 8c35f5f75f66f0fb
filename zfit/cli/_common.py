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
from pathlib import Path
from typing import Annotated, Optional

import typer
from typer.core import TyperCommand, TyperGroup

from .._errors import MeasurementWarning, ZfitError, ZfitInputError
from .._units import bounded, parse_quantity

__all__ = [
    "app", "CommandGroup", "guarded", "command_line", "emit_json", "quantity", "quantities", "SHUNT_RANGE_OHM", "echo", "warn_line", "sweep_from_options",
    "ConnectionOpt", "NoiseRelOpt", "NoiseFloorOpt", "ColumnsOpt", "OpenOpt", "ShortOpt",
    "LoadOpt", "LoadValueOpt", "PortDelayOpt", "PortLossOpt", "ForceOpt",
]


class _OneLineError(typer.BadParameter):
    """A bad option value, shown as zfit's one ``zfit: error:`` line with exit status 2."""

    exit_code = 2

    def show(self, file=None) -> None:
        typer.echo(f"zfit: error: {self.message}", err=True)


class _Commands(TyperGroup):
    """zfit's command group: a value the parser refuses is one line, not a usage block.

    Click reports a bad option value (``--points x``, a path that does not
    exist) as a usage block of three lines; a bench engineer scanning a log
    wants the one line zfit prints for every other error.  Missing options
    and unknown ones keep click's usage block, which says how to call.
    """

    def invoke(self, ctx):
        try:
            return super().invoke(ctx)
        except typer.BadParameter as exc:
            raise _OneLineError(exc.format_message()) from None


#: The placeholder of an option's value in help, by its Python type, where the
#: option does not name its own (``--L HENRY``): typer's own are ``<str>``,
#: ``<list[str]>``, ``<path>``, which read as code, not as what to type.
_METAVAR_BY_TYPE = {"str": "VALUE", "int": "N", "float": "VALUE", "Path": "PATH", "bool": ""}


#: Placeholders by option name, for options whose declaration names none:
#: what to type, in the words of docs/ (one vocabulary for every command).
_METAVAR_BY_NAME = {
    "--model": "MODEL", "--band": "FMIN:FMAX", "--at": "FREQ", "--rdc": "OHM", "--rdc-std": "OHM",
    "--netlist-kind": "KIND", "--touchstone-grid": "START:STOP[:N]", "--plot-format": "FORMAT",
    "--cluster": "ADDRESS", "--part": "NAME", "--jobs": "N", "--limits": "FILE", "--out": "DIR",
    "--sweeps": "DIR",
}


def _metavar(param) -> str:
    """The placeholder of an option's value: its own metavar, else one by its name or type."""
    if param.metavar:
        return param.metavar
    for opt in param.opts:
        if opt in _METAVAR_BY_NAME:
            return _METAVAR_BY_NAME[opt]
    annotation = getattr(getattr(param, "type_descriptor", None), "annotation", None)
    name = getattr(annotation, "__name__", str(annotation))
    for key, word in _METAVAR_BY_TYPE.items():
        if key in name:
            return word
    return "VALUE"


class _Command(TyperCommand):
    """A zfit command: its usage line names the required options, its help plain placeholders.

    ``Usage: zfit plan inductor --L HENRY --C_p FARAD --R_s OHM [OPTIONS]``
    says how to call at a glance; an argument is written ``SWEEP`` (``[SWEEP]``
    when optional), as POSIX utility syntax does, not ``{sweep}``.
    """

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        for param in self.params:
            if param.param_type_name == "option" and not param.is_flag and not param.metavar:
                param.metavar = _metavar(param) or None

    def collect_usage_pieces(self, ctx):
        required = [f"{p.opts[0]} {_metavar(p)}".rstrip() for p in self.get_params(ctx)
                    if p.param_type_name == "option" and p.required]
        arguments = []
        for p in self.get_params(ctx):
            if p.param_type_name == "argument":
                name = (p.metavar or p.name).upper() + ("..." if p.nargs != 1 else "")
                arguments.append(name if p.required else f"[{name}]")
        return required + [self.options_metavar] + arguments

    def format_options(self, ctx, formatter):
        arguments, options = [], []
        for p in self.get_params(ctx):
            if p.param_type_name == "argument":
                name = (p.metavar or p.name).upper() + ("..." if p.nargs != 1 else "")
                arguments.append((name, (p.help or "") + ("  [required]" if p.required else "")))
            else:
                record = p.get_help_record(ctx)
                if record is not None:
                    options.append(record)
        if arguments:
            with formatter.section("Arguments"):
                formatter.write_dl(arguments)
        if options:
            with formatter.section("Options"):
                formatter.write_dl(options)


class CommandGroup(typer.Typer):
    """A typer app whose commands are `_Command` (zfit's usage line and placeholders)."""

    def command(self, *args, cls=None, **kwargs):
        return super().command(*args, cls=cls or _Command, **kwargs)


app = CommandGroup(
    name="zfit",
    cls=_Commands,
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


def _ascii_fallback(exc: UnicodeError):
    """Spell a sign the stream's encoding lacks in ASCII (``µ`` -> ``u``, ``Ω`` -> ``ohm``): an encoding error handler."""
    from .._units import ascii_text

    if not isinstance(exc, UnicodeEncodeError):
        raise exc
    return ascii_text(exc.object[exc.start:exc.end]), exc.end


def _text_for_the_terminal() -> None:
    """Write µ, Ω and ± where the output encoding has them, their ASCII spelling where it has not.

    The decision is per sign and per stream (a cp1252 console has µ but not
    Ω), made by the encoder of the stream itself.
    """
    import codecs
    import sys

    try:
        codecs.lookup_error("zfit-ascii")
    except LookupError:
        codecs.register_error("zfit-ascii", _ascii_fallback)
    for stream in (sys.stdout, sys.stderr):
        if hasattr(stream, "reconfigure") and getattr(stream, "errors", "strict") == "strict":
            try:
                stream.reconfigure(errors="zfit-ascii")
            except (ValueError, OSError):
                pass


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
        _text_for_the_terminal()
        with warnings.catch_warnings():
            warnings.simplefilter("always", MeasurementWarning)
            warnings.showwarning = _show_warning
            try:
                return fn(*args, **kwargs)
            except ZfitError as exc:
                text = exc.one_line() if isinstance(exc, ZfitInputError) else str(exc)
                typer.echo(f"zfit: error: {text}", err=True)
                raise typer.Exit(2) from None
            except BrokenPipeError:
                # The reader of our output (`| head`) has gone: not an error of ours.
                raise typer.Exit(0) from None
            except OSError as exc:
                # An error of the system names the file when it knows one ("No space left on device" may not).
                where = f"{exc.filename}: " if exc.filename else ""
                typer.echo(f"zfit: error: {where}{exc.strerror or exc}", err=True)
                raise typer.Exit(2) from None

    return wrapper


def command_line() -> str:
    """Return the command line that is running, quoted so that it can be rerun."""
    import shlex
    import sys

    return "zfit " + " ".join(shlex.quote(a) for a in sys.argv[1:])


def emit_json(data: dict, json_path, force: bool, say=None) -> None:
    """Write a result's JSON to `json_path`, or to standard output for ``-``.

    With ``-`` the standard output holds the JSON alone, so that it can be
    piped; otherwise the file is written atomically and `say` reports it.
    """
    import sys

    from .._atomic import write_atomic
    from .._json import json_text

    text = json_text(data)
    if str(json_path) == "-":
        sys.stdout.write(text)
        return
    write_atomic(json_path, text, force)
    (say or echo)(f"wrote {json_path}")


def quantity(text: str | float | None, what: str, lo: float | None = None, hi: float | None = None,
             unit: str = "") -> float | None:
    """Parse an option value in engineering notation (None stays None).

    Parameters
    ----------
    text : str, float or None
        What the user wrote.
    what : str
        The option's name, for the message (``"--shunt"``).
    lo, hi : float, optional
        The range where the computation the option feeds is meaningful
        (inclusive); outside it a one-line error states the range.
    unit : str
        The option's unit, for the message.

    Raises
    ------
    ZfitInputError
        For text that is not a number, or a value outside ``[lo, hi]``.
    """
    if text is None:
        return None
    return bounded(parse_quantity(text, what), what, lo, hi, unit)


def quantities(texts, what: str, lo: float | None = None, hi: float | None = None, unit: str = "") -> tuple[float, ...]:
    """Parse a repeated option (``--at 100k --at 1M``), each value within ``[lo, hi]``."""
    return tuple(quantity(t, what, lo, hi, unit) for t in (texts or ()))


#: A sense resistor (``zfit step --shunt``) from 1 mohm to 1 Gohm: below, the
#: sense voltage drowns in the scope's offset; above, in its 1 Mohm input
#: (common practice).  Used as ``quantity(text, "--shunt", *SHUNT_RANGE_OHM, unit="ohm")``.
SHUNT_RANGE_OHM = (1e-3, 1e9)


# Options shared by every command that reads a sweep (info, identify, batch).
# Declared once so that the commands spell them the same way.
ConnectionOpt = Annotated[
    Optional[str],
    typer.Option(
        "--connection", "-c", metavar="CONNECTION",
        help="How the analyser saw the part: reflection (S11), shunt-thru (S21, part to ground) "
        "or series-thru (S21, part in series). Needed for .s2p files.",
    ),
]
NoiseRelOpt = Annotated[
    Optional[str],
    typer.Option("--noise-rel", metavar="REL", help="Relative noise of the measured S (or Z for tables), e.g. 1e-3. Default: common practice, see docs/reading.md."),
]
NoiseFloorOpt = Annotated[
    Optional[str],
    typer.Option("--noise-floor", metavar="FLOOR", help="Noise floor: linear |S| for S-parameters (1e-5 = -100 dB), ohm for tables."),
]
ColumnsOpt = Annotated[
    Optional[str],
    typer.Option("--columns", metavar="MAPPING", help="Column mapping of a table, e.g. 'f=1,Ls=2,Rs=3' or 'freq_kHz,Zmag,phase_deg'; overrides the guess."),
]
OpenOpt = Annotated[Optional[Path], typer.Option("--open", metavar="FILE", help="Open-fixture measurement for compensation.")]
ShortOpt = Annotated[Optional[Path], typer.Option("--short", metavar="FILE", help="Short-fixture measurement for compensation.")]
LoadOpt = Annotated[Optional[Path], typer.Option("--load", metavar="FILE", help="Load-standard measurement (open/short/load compensation).")]
LoadValueOpt = Annotated[Optional[str], typer.Option("--load-value", metavar="OHM", help="Known impedance of the load standard in ohm, e.g. 50 or 100.")]
PortDelayOpt = Annotated[Optional[str], typer.Option("--port-delay", metavar="SECONDS", help="Port extension for reflection: one-way delay of the line to remove, e.g. 35p.")]
PortLossOpt = Annotated[
    Optional[str],
    typer.Option("--port-loss", metavar="DB", help="With --port-delay: one-way loss of that line in dB at 1 GHz, scaled with sqrt(f)."),
]
ForceOpt = Annotated[bool, typer.Option("--force", help="Overwrite output files that exist.")]


def sweep_from_options(*args, **kwargs):
    """Return the `Sweep` that the shared reading options describe.

    The command-line spelling of `zfit.io._prepared.prepared_sweep`; see there
    for the parameters.

    Parameters
    ----------
    *args, **kwargs
        As `zfit.io._prepared.prepared_sweep`.
    """
    from ..io._prepared import prepared_sweep

    return prepared_sweep(*args, **kwargs)


def read_options(*, connection=None, noise_rel=None, noise_floor=None, columns=None, open_=None, short=None,
                 load=None, load_value=None, port_delay=None, port_loss=None):
    """Return the lot's `ReadOptions` for the shared reading options of a command that runs many sweeps.

    The fixture files are made absolute, so that a worker (another process,
    a Dask worker) finds them whatever its working folder.
    """
    from ..lot._tasks import ReadOptions

    absolute = lambda p: None if p is None else str(Path(p).resolve())  # noqa: E731
    return ReadOptions(
        connection=connection, noise_rel=noise_rel, noise_floor=noise_floor, columns=columns,
        open_=absolute(open_), short=absolute(short), load=absolute(load),
        load_value=load_value, port_delay=port_delay, port_loss=port_loss,
    )

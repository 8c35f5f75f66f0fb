"""``zfit plan inductor|capacitor``: which connection to measure a part with.

Simulates the part's equivalent circuit through each connection with the
same noise model as real files, runs the same identification, and prints
the expected uncertainty of every parameter per connection with a
recommendation.  Option names are the parameter keys (``--L``, ``--C_p``,
``--ESR``); each is also accepted in any case and with a hyphen for the
underscore (``--c-p``, ``--esr``, ``--R-s``), as people type them.
"""

from __future__ import annotations

from pathlib import Path
from typing import Annotated, Optional

import typer

from ._common import CommandGroup, ForceOpt, app, echo, emit_json, guarded, quantity


def _option_token(name: str) -> str:
    """An option name as the parser compares it: lower case, ``_`` as ``-`` (``--C_p`` is ``--c-p``).

    No two options of a plan differ only in case or in ``_``/``-``, so the
    aliases cannot collide; a misspelt name is still refused.
    """
    return name.lower().replace("_", "-")


plan_app = CommandGroup(
    name="plan",
    help=(
        "Plan a measurement: simulate the part through reflection, shunt-thru, series-thru and an analyser "
        "table, and print the expected uncertainty of each parameter with a recommendation."
    ),
    no_args_is_help=True,
    rich_markup_mode=None,
    context_settings={"help_option_names": ["-h", "--help"], "token_normalize_func": _option_token},
)
app.add_typer(plan_app, name="plan")

BandOpt = Annotated[str, typer.Option("--band", metavar="FMIN:FMAX", help="Swept band low:high in Hz, engineering notation, e.g. 1k:1G.")]
PointsOpt = Annotated[int, typer.Option("--points", metavar="N", help="Log-spaced points of the sweep (10 to 100001).")]
JsonOpt = Annotated[Optional[Path], typer.Option("--json", metavar="PATH", help="Write the plan as zfit.plan/1 JSON to this file ('-' for standard output).")]
NaRelOpt = Annotated[Optional[str], typer.Option("--noise-rel", metavar="REL", help="Network analyser: relative noise on S (default 1e-3).")]
NaFloorOpt = Annotated[Optional[str], typer.Option("--noise-floor", metavar="FLOOR", help="Network analyser: noise floor, linear |S| (default 1e-5 = -100 dB).")]
TabRelOpt = Annotated[Optional[str], typer.Option("--table-rel", metavar="REL", help="Analyser table: relative accuracy on Z (default 1e-3 = 0.1 %).")]
TabFloorOpt = Annotated[Optional[str], typer.Option("--table-floor", metavar="OHM", help="Analyser table: accuracy floor in ohm (default 100u, as the readers').")]
RefOpt = Annotated[str, typer.Option("--reference", metavar="OHM", help="Reference impedance of the analyser ports, ohm (1m to 1M).")]


def _band(text: str):
    from .._errors import ZfitInputError
    from ..data._sweep import FREQUENCY_RANGE_HZ

    parts = text.split(":")
    if len(parts) != 2:
        raise ZfitInputError(f"--band must be low:high, e.g. 1k:1G (got {text!r})")
    return tuple(quantity(p, "--band", *FREQUENCY_RANGE_HZ, unit="Hz") for p in parts)


def _run(model, params, band, points, json_path, noise_rel, noise_floor, table_rel, table_floor, reference, force):
    from ..data._connection import InstrumentNoise
    from ..identification._plan import NA_NOISE_DEFAULT, TABLE_ACCURACY_DEFAULT, format_plan, plan_measurement

    noise = InstrumentNoise(
        NA_NOISE_DEFAULT.rel if noise_rel is None else quantity(noise_rel, "--noise-rel", 0.0, 1.0),
        NA_NOISE_DEFAULT.floor if noise_floor is None else quantity(noise_floor, "--noise-floor", 0.0, 1.0),
    )
    table = InstrumentNoise(
        TABLE_ACCURACY_DEFAULT.rel if table_rel is None else quantity(table_rel, "--table-rel", 0.0, 1.0),
        TABLE_ACCURACY_DEFAULT.floor if table_floor is None else quantity(table_floor, "--table-floor", 0.0, 1e9, "ohm"),
    )
    to_stdout = json_path is not None and str(json_path) == "-"
    if json_path is not None and not to_stdout:
        from .._atomic import check_writable

        check_writable(json_path, force)
    plan = plan_measurement(
        model, params, _band(band), points=points, noise=noise, table_accuracy=table,
        reference_ohm=quantity(reference, "--reference"),
    )
    typer.echo(format_plan(plan), err=to_stdout)  # with --json - the standard output is the JSON alone
    if json_path is not None:
        emit_json(plan.to_dict(), json_path, force)


@plan_app.command("inductor")
@guarded
def plan_inductor(
    L: Annotated[str, typer.Option("--L", "--l", metavar="HENRY", help="Inductance, e.g. 10u (H).")],
    C_p: Annotated[str, typer.Option("--C_p", "--c-p", metavar="FARAD", help="Parallel (inter-winding) capacitance, e.g. 5p (F).")],
    R_s: Annotated[str, typer.Option("--R_s", "--r-s", metavar="OHM", help="Series (winding) resistance, e.g. 50m (ohm).")],
    R_p: Annotated[Optional[str], typer.Option("--R_p", "--r-p", metavar="OHM", help="Parallel (core-loss) resistance, ohm; omit for none.")] = None,
    band: BandOpt = "1k:1G",
    points: PointsOpt = 201,
    json_path: JsonOpt = None,
    noise_rel: NaRelOpt = None,
    noise_floor: NaFloorOpt = None,
    table_rel: TabRelOpt = None,
    table_floor: TabFloorOpt = None,
    reference: RefOpt = "50",
    force: ForceOpt = False,
):
    """Plan the measurement of an inductor: series R_s-L with parallel C_p (and R_p).

    Prints, per connection, the expected standard uncertainty of each
    parameter (or "below resolution, < X") and the recommended connection
    with its reason.  Nothing is measured: the part is simulated.
    """
    params = {"L": quantity(L, "--L"), "R_s": quantity(R_s, "--R_s"), "C_p": quantity(C_p, "--C_p"),
              "R_p": quantity(R_p, "--R_p")}
    _run("inductor", params, band, points, json_path, noise_rel, noise_floor, table_rel, table_floor, reference, force)


@plan_app.command("capacitor")
@guarded
def plan_capacitor(
    C: Annotated[str, typer.Option("--C", "--c", metavar="FARAD", help="Capacitance, e.g. 100n (F).")],
    ESR: Annotated[str, typer.Option("--ESR", "--esr", metavar="OHM", help="Equivalent series resistance, e.g. 5m (ohm).")],
    ESL: Annotated[str, typer.Option("--ESL", "--esl", metavar="HENRY", help="Equivalent series inductance, e.g. 500p (H).")],
    R_leak: Annotated[Optional[str], typer.Option("--R_leak", "--r-leak", metavar="OHM", help="Leakage resistance across C, ohm; omit for none.")] = None,
    band: BandOpt = "1k:1G",
    points: PointsOpt = 201,
    json_path: JsonOpt = None,
    noise_rel: NaRelOpt = None,
    noise_floor: NaFloorOpt = None,
    table_rel: TabRelOpt = None,
    table_floor: TabFloorOpt = None,
    reference: RefOpt = "50",
    force: ForceOpt = False,
):
    """Plan the measurement of a capacitor: series C-ESR-ESL (C shunted by R_leak).

    Prints, per connection, the expected standard uncertainty of each
    parameter (or "below resolution, < X") and the recommended connection
    with its reason.  Nothing is measured: the part is simulated.  Discharge
    a capacitor before connecting it to an analyser.
    """
    params = {"C": quantity(C, "--C"), "ESR": quantity(ESR, "--ESR"), "ESL": quantity(ESL, "--ESL"),
              "R_leak": quantity(R_leak, "--R_leak")}
    _run("capacitor", params, band, points, json_path, noise_rel, noise_floor, table_rel, table_floor, reference, force)

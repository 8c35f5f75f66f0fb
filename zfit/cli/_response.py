"""``zfit response``: the transfer function of a swept-sine gain/phase table, and the part behind a divider."""

from __future__ import annotations

from pathlib import Path
from typing import Optional

import typer

from ._common import SHUNT_RANGE_OHM, ForceOpt, app, echo, emit_json, guarded, quantity

_HELP = """Fit a transfer function to a table of gain and phase against frequency.

TABLE is delimited text with a header: a frequency column, the gain (a ratio,
or in dB) and the phase of V_out against V_in (degrees or radians), or the
amplitudes of V_in and V_out (and their phases) separately; units from the
header ('Freq (kHz)', 'Gain [dB]', 'phase_rad') or --columns.  Three
frequencies are enough; uneven spacing is normal.  The CSV that
`zfit step --response` writes is read as it is.

Rows repeated at one frequency are averaged and their scatter is the
uncertainty of each point; otherwise --gain-accuracy and --phase-accuracy (or
the uncertainties in the table) are used.

Prints the poles and zeros, the DC gain, the -3 dB frequency, the time
constant tau = 1/omega_p of each real pole and omega_n, zeta of each complex
pair, each with its standard uncertainty, and the step response the model
predicts.  With --divider series:R (the part in series with a known
resistor R; --across says whether V_out is taken across the resistor or
across the part) or --shunt R (the same, across the resistor, as in
`zfit step`), the part's impedance is identified as `zfit identify` does.

Safety: an oscilloscope's ground clip is tied to mains earth through the scope's
power cord; measure mains-referenced or floating circuits only with differential
probes or an isolated setup, and follow your local codes and licensed practice.
Keep drive levels within the ratings of the part, the resistor and the probes,
and discharge capacitors before you connect them.
"""


def _divider(divider: str | None, across: str | None, shunt: str | None):
    """(resistor in ohm, output across) from the options, or (None, None)."""
    from .._errors import ZfitInputError

    if divider is not None and shunt is not None:
        raise ZfitInputError("give either --divider or --shunt, not both (--shunt R is --divider series:R --across resistor)")
    if shunt is not None:
        if across not in (None, "resistor"):
            raise ZfitInputError("--shunt is the resistor at the part's return with V_out across it: --across part "
                                 "does not go with it; use --divider series:R --across part")
        return quantity(shunt, "--shunt", *SHUNT_RANGE_OHM, unit="ohm"), "resistor"
    if divider is None:
        if across is not None:
            raise ZfitInputError("--across needs --divider series:R")
        return None, None
    kind, _, value = divider.partition(":")
    if kind.strip().lower() != "series" or not value.strip():
        raise ZfitInputError(f"--divider {divider!r}: write series:R, the resistor in series with the part (e.g. series:1k)")
    if across not in ("resistor", "part"):
        raise ZfitInputError("--divider needs --across resistor (V_out across the resistor) or --across part "
                             "(V_out across the part)")
    return quantity(value.strip(), "--divider", *SHUNT_RANGE_OHM, unit="ohm"), across


@app.command("response", help=_HELP)
@guarded
def response_command(
    table: Path = typer.Argument(..., help="The gain/phase table (delimited text with a header)."),
    columns: Optional[str] = typer.Option(None, "--columns", help="Column mapping, e.g. 'f[kHz],gain[dB],phase[deg]' or 'f=1,vin[V]=2,vout[V]=3,phase[deg]=4'."),
    gain_accuracy: Optional[str] = typer.Option(None, "--gain-accuracy", help="Accuracy of the gain in dB, a bound (default 0.2 dB when the table gives no uncertainty and no repeats)."),
    phase_accuracy: Optional[str] = typer.Option(None, "--phase-accuracy", help="Accuracy of the phase in degrees, a bound (default 1 degree likewise)."),
    max_order: int = typer.Option(3, "--max-order", help="Most poles tried (1 to 6)."),
    divider: Optional[str] = typer.Option(None, "--divider", help="The network: series:R, the part in series with the resistor R (e.g. series:1k)."),
    across: Optional[str] = typer.Option(None, "--across", help="With --divider: where V_out is taken, 'resistor' or 'part'."),
    shunt: Optional[str] = typer.Option(None, "--shunt", help="Sense resistor in ohm at the part's return, V_out across it (as in zfit step)."),
    model: str = typer.Option("auto", "--model", help="With a divider: auto | inductor | capacitor | rational (as for identify)."),
    json_path: Optional[Path] = typer.Option(None, "--json", help="Write the zfit.response/1 JSON result here ('-' for standard output)."),
    plot: Optional[Path] = typer.Option(None, "--plot", help="Write the Bode plot of readings and model with the predicted step (.png or .svg); with a divider also <stem>-impedance."),
    step_response: Optional[Path] = typer.Option(None, "--step-response", help="Write the model's predicted step response (CSV: t_s, v_out, v_out_std)."),
    netlist: Optional[Path] = typer.Option(None, "--netlist", help="With a divider: write a SPICE subcircuit of the identified part."),
    force: ForceOpt = False,
):
    from .._atomic import write_atomic
    from .._errors import ZfitInputError
    from ..capture._response_result import analyse_response
    from ..capture._swept_sine import gain_phase_points
    from ..io._response_table import read_response_table
    from ..outputs._outputs import check_output_path, check_output_suffix
    from ..outputs._response_views import response_summary, step_response_csv

    resistor, side = _divider(divider, across, shunt)
    g_acc = quantity(gain_accuracy, "--gain-accuracy", 1e-6, 20.0, unit="dB")
    p_acc = quantity(phase_accuracy, "--phase-accuracy", 1e-6, 90.0, unit="deg")
    if netlist is not None and resistor is None:
        raise ZfitInputError("--netlist needs the part's impedance: give the network with --divider or --shunt")
    if step_response is not None and step_response.suffix.lower() not in (".csv", ".txt"):
        raise ZfitInputError("the step response is written as CSV: give a .csv path", step_response)
    to_stdout = json_path is not None and str(json_path) == "-"
    for p in (None if to_stdout else json_path, step_response):
        if p is not None:
            check_output_path(p, force)
    for p, kind in ((plot, "plot"), (netlist, "netlist")):
        if p is not None:
            check_output_suffix(p, kind)
            check_output_path(p, force)
    if plot is not None and resistor is not None:
        check_output_path(plot.with_name(f"{plot.stem}-impedance{plot.suffix}"), force)

    points = gain_phase_points(read_response_table(table, columns), g_acc, p_acc)
    result = analyse_response(points, max_order=max_order, resistor_ohm=resistor, output_across=side or "resistor",
                              model=model)

    def say(text):
        typer.echo(text, err=to_stdout)

    if not to_stdout:
        for line in response_summary(result):
            echo(line)
    if json_path is not None:
        emit_json(result.to_dict(), json_path, force, say)
    if step_response is not None:
        write_atomic(step_response, step_response_csv(result), force)
        say(f"wrote {step_response}")
    if plot is not None:
        from ..outputs._plot_files import save_figure
        from ..outputs._plot_response import plot_response

        save_figure(plot_response(result), plot, force=force)
        say(f"wrote {plot}")
    if result.identification is not None and (plot is not None or netlist is not None):
        from ..outputs._outputs import write_outputs

        extra = None if plot is None else plot.with_name(f"{plot.stem}-impedance{plot.suffix}")
        for path in write_outputs(result.identification, plot=extra, netlist=netlist, force=force):
            say(f"wrote {path}")

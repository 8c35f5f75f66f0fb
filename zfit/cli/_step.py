"""``zfit step``: time-domain figures, frequency response and part values from a scope capture."""

from __future__ import annotations

from pathlib import Path
from typing import Optional

import typer

from ._common import SHUNT_RANGE_OHM, ForceOpt, app, command_line, echo, emit_json, guarded, quantity

_HELP = """Analyse an oscilloscope capture of a square wave (or one step) driven through a part.

Prints the IEEE Std 181 figures of the output (state levels, 10-90 % transition
duration, overshoot), the dominant time constant (of H = V_out/V_in with two
channels, so that the generator's output resistance drops out), the ringing
frequency, and the band over which the frequency response is usable.  With
--shunt the output channel is the voltage across a sense resistor at the part's
return and the input the drive at its other terminal: the part's impedance
Z = R (V_in - V_out)/V_out is identified exactly as `zfit identify` does for a sweep.

CAPTURE is delimited text as oscilloscopes export it (metadata lines, a header,
a time column or the sample interval in the header), or .npy/.npz arrays.
Channels are chosen by header name or 1-based column number.

Safety: an oscilloscope's ground clip is tied to mains earth through the scope's
power cord.  Clipping it onto a mains-referenced or floating circuit short-circuits
that circuit through the scope; measure such circuits only with differential
probes or an isolated setup, and follow your local codes and licensed practice.
Keep drive levels low enough that the part, the sense resistor and the probes stay
within their ratings, and discharge capacitors before you connect them.
"""


@app.command("step", help=_HELP)
@guarded
def step_command(
    capture: Path = typer.Argument(..., help="The capture: delimited text export, .npy or .npz."),
    input: Optional[str] = typer.Option(None, "--input", "-i", metavar="CHANNEL", help="Drive channel (name or 1-based column); omit for a single-channel capture."),
    output: Optional[str] = typer.Option(None, "--output", "-o", metavar="CHANNEL", help="Response channel (name or 1-based column); may be omitted when there is one channel."),
    shunt: Optional[str] = typer.Option(None, "--shunt", metavar="OHM", help="Sense resistor in ohm at the part's return (e.g. 100, 2.2k): identify the part's impedance."),
    json_path: Optional[Path] = typer.Option(None, "--json", help="Write the zfit.step/1 JSON result here ('-' for standard output)."),
    response: Optional[Path] = typer.Option(None, "--response", help="Write the frequency response (CSV: f, |H| dB, phase, uncertainties, coherence, usable)."),
    plot: Optional[Path] = typer.Option(None, "--plot", help="Write the figures (.png or .svg): --plot x.png writes x.png (time record) and x-bode.png, and with --shunt x-sweep.png and x-q.png (or x-esr-d.png); each file written is listed."),
    netlist: Optional[Path] = typer.Option(None, "--netlist", help="With --shunt: write a SPICE subcircuit of the identified part (.cir, .sp or .lib)."),
    report: Optional[Path] = typer.Option(None, "--report", help="Write a self-contained HTML report (.html)."),
    inductance: Optional[str] = typer.Option(None, "--inductance", metavar="HENRY", help="The coil's inductance in H (e.g. 25m): turns the ringing into its stray capacitance."),
    added_capture: Optional[Path] = typer.Option(None, "--added-capture", help="Capture of the same coil with a known capacitor across it (two-resonance method)."),
    added_capacitance: Optional[str] = typer.Option(None, "--added-capacitance", metavar="FARAD", help="That capacitor in F (e.g. 100p)."),
    model: str = typer.Option("auto", "--model", metavar="MODEL", help="With --shunt: auto | inductor | capacitor | rational (as for identify)."),
    dt: Optional[str] = typer.Option(None, "--dt", metavar="SECONDS", help="Sample interval (e.g. 40n) when the file has neither a time column nor the interval in its header."),
    force: ForceOpt = False,
):
    from .._atomic import write_atomic
    from ..io._capture import read_capture
    from .._errors import ZfitInputError
    from ..capture._analysis import analyse_capture
    from ..data._sweep import ELEMENT_RANGES, SAMPLE_INTERVAL_RANGE_S
    from ..outputs._views import response_csv, step_summary

    shunt_ohm = quantity(shunt, "--shunt", *SHUNT_RANGE_OHM, unit="ohm")
    inductance_h = quantity(inductance, "--inductance", *ELEMENT_RANGES["H"], unit="H")
    added_f = quantity(added_capacitance, "--added-capacitance", *ELEMENT_RANGES["F"], unit="F")
    dt_s = quantity(dt, "--dt", *SAMPLE_INTERVAL_RANGE_S, unit="s")
    if (added_capture is None) != (added_f is None):
        raise ZfitInputError("--added-capture and --added-capacitance go together")
    if response is not None and response.suffix.lower() not in (".csv", ".txt"):
        raise ZfitInputError("the response file is written as CSV: give a .csv path", response)
    if netlist is not None and shunt_ohm is None:
        raise ZfitInputError("--netlist needs the part's impedance: give the sense resistor with --shunt")
    # Fail before the work, not after it, when an output exists or cannot be written.
    from ..outputs._outputs import check_output_path, check_output_suffix

    to_stdout = json_path is not None and str(json_path) == "-"
    for p in (None if to_stdout else json_path, response):
        if p is not None:
            check_output_path(p, force)
    for p, kind in ((plot, "plot"), (netlist, "netlist"), (report, "report")):
        if p is not None:
            check_output_path(check_output_suffix(p, kind), force)

    cap = read_capture(capture, dt=dt_s)
    added = read_capture(added_capture, dt=dt_s) if added_capture is not None else None
    result = analyse_capture(cap, input=input, output=output, shunt_ohm=shunt_ohm, inductance_h=inductance_h,
                             added_capture=added, added_capacitance_f=added_f, model=model)
    # With --json - the standard output is the JSON alone; the rest goes to standard error.
    def say(text):
        typer.echo(text, err=to_stdout)

    if not to_stdout:
        for line in step_summary(result):
            echo(line)
    files = plot is not None or netlist is not None or report is not None
    # The JSON belongs to the set of files written together (all or none), unless it goes to standard output.
    json_in_set = files and json_path is not None and not to_stdout
    if files:
        from ..outputs._outputs import write_outputs

        for path in write_outputs(result, plot=plot, netlist=netlist, report=report, force=force,
                                  command=command_line(), json_path=json_path if json_in_set else None):
            say(f"wrote {path}")

    if json_path is not None and not json_in_set:
        emit_json(result.to_dict(), json_path, force, say)
    if response is not None:
        write_atomic(response, response_csv(result), force)
        say(f"wrote {response}")

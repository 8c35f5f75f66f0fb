"""``zfit batch``: identify a lot of parts, check them against limits, summarise the lot."""

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
    quantities,
    read_options,
    warn_line,
)


@app.command("batch")
@guarded
def batch_command(
    inputs: List[str] = typer.Argument(..., help="Sweep files, folders (searched recursively) or glob patterns ('lot7/*.s1p')."),
    out: Path = typer.Option(..., "--out", "-o", help="Output folder: per-part JSON (and plots), summary.csv, lot.csv, lot.json."),
    limits: Optional[Path] = typer.Option(None, "--limits", help="Limits file (TOML, layout in docs/batch.md): pass / fail / indeterminate per part."),
    model: Optional[str] = typer.Option(None, "--model", "-m", help="auto | inductor | capacitor | rational (default: the limits file's model, else auto)."),
    at: Optional[List[str]] = typer.Option(None, "--at", help="Extra spot frequency for the summary (R, X, L_eff or C_eff, Q or D), e.g. 1M; repeatable."),
    jobs: Optional[int] = typer.Option(None, "--jobs", "-j", help="Local worker processes (default: all cores; 1 = in this process)."),
    cluster: Optional[str] = typer.Option(None, "--cluster", help="Address of a Dask distributed scheduler (tcp://host:8786) to run the parts on; needs the 'cluster' extra and the same file paths on every worker."),
    plot: bool = typer.Option(False, "--plot", help="Also write the plots of each part into --out: PART.png and PART-q or PART-esr-d (as identify --plot; here a flag, the names come from the parts)."),
    plot_format: str = typer.Option("png", "--plot-format", help="png | svg."),
    report: Optional[Path] = typer.Option(None, "--report", help="Write the lot report here (.html): one self-contained page with a histogram of each limited quantity (limits, guard bands), the capability table and the parts that did not pass."),
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
    force: bool = typer.Option(False, "--force", help="Identify every part again, even where its result is up to date, and replace files in --out that the batch did not write."),
    quiet: bool = typer.Option(False, "--quiet", "-q", help="No progress display."),
):
    """Identify every part in INPUTS, check each against --limits, and summarise the lot.

    Writes the zfit.identify/1 JSON of each part, summary.csv (one row per
    part: values with uncertainties, SRF, figures at the limit frequencies,
    verdict and failed limits, or the error of a bad file), and lot.csv /
    lot.json (count, verdicts, mean, std, min, max, Cpk per limited
    quantity), then prints the lot summary.

    Decision rule: guarded acceptance per JCGM 106:2012 with a guard band of
    2 standard uncertainties: pass only when value +- 2 u lies inside the
    limits, fail when the value lies outside, indeterminate otherwise.

    The batch writes over only its own files in --out (listed in its
    .zfit-batch.json); another file in the way is refused without --force.
    A rerun with the same --out skips parts whose sweep bytes and reading
    options are those of their stored result; --force identifies them all
    again. One bad file is reported and
    does not stop the run. Exit status: 0 when every part has a result and
    passes (or there are no limits), 1 when some part failed, is
    indeterminate or has no result, 2 on bad usage or when an output file
    cannot be written (the lot summary is printed first).

    Safety: discharge capacitors before connecting them to an analyser; for
    parts on mains or high voltage follow local codes and licensed practice.
    """
    from ..data._sweep import FREQUENCY_RANGE_HZ
    from ..io._limits_file import read_limits
    from ..lot._run import run_batch

    if model is not None and model not in ("auto", "inductor", "capacitor", "rational"):
        from .._errors import ZfitInputError

        raise ZfitInputError(f"--model {model!r}: use auto, inductor, capacitor or rational")
    if jobs is not None and not 1 <= jobs <= 1024:
        from .._errors import ZfitInputError

        # More worker processes than 1024 is more than any machine's cores: a typing slip.
        raise ZfitInputError(f"--jobs {jobs} is out of range: give 1 to 1024 worker processes")
    lim = read_limits(limits) if limits is not None else None
    report_path = _report_target(report, out, force) if report is not None else None
    read = read_options(
        connection=connection, noise_rel=noise_rel, noise_floor=noise_floor, columns=columns, open_=open_,
        short=short, load=load, load_value=load_value, port_delay=port_delay, port_loss=port_loss,
    )
    result = run_batch(
        inputs, out, limits=lim, model=model, at=quantities(at, "--at", *FREQUENCY_RANGE_HZ, unit="Hz"), read=read, jobs=jobs,
        cluster=cluster, plot=plot, plot_format=plot_format, force=force, progress=False if quiet else None,
    )
    from ..lot._lot_files import lot_text, verdict_lines

    for line in verdict_lines(result.rows):
        echo(line)
    n_warn = sum(1 for r in result.rows if r.warnings)
    if n_warn:
        warn_line(f"{n_warn} part(s) have measurement warnings: see the 'warnings' column of {result.summary_path}")
    echo(lot_text(result.lot))
    echo(f"{result.identified} identified, {result.skipped} up to date (skipped), {result.errors} error, "
         f"in {result.seconds:.1f} s ({result.workers})")
    if result.unwritten:
        from .._errors import ZfitInputError

        # The summary above is what the run has; the file that could not be written is named.
        more = f" (and {len(result.unwritten) - 1} more file(s))" if len(result.unwritten) > 1 else ""
        raise ZfitInputError(result.unwritten[0] + more)
    echo(f"wrote {result.summary_path}, {result.lot_csv_path.name}, {result.lot_json_path.name}")
    if report_path is not None:
        _write_report(report_path, result, lim, out)
        echo(f"wrote {report_path}")
    v = result.lot.verdicts
    if v.get("error", 0) or v.get("fail", 0) or v.get("indeterminate", 0):
        raise typer.Exit(1)


def _report_target(report: Path, out: Path, force: bool) -> Path:
    """Return the lot report's path once it may be written, else raise (before the run).

    In the output folder the report is one of the batch's files (its
    manifest lists it, so a rerun replaces it); elsewhere it is the user's
    file like any other output, replaced only with --force.
    """
    import os

    from ..lot._manifest import read_manifest
    from ..outputs._outputs import check_output_path, check_output_suffix

    path = check_output_suffix(report, "report")
    if _inside(path, out) and os.path.lexists(path) and not force:
        if not read_manifest(out).owns(path):
            from .._errors import OutputExistsError

            raise OutputExistsError(path)
        return path
    return check_output_path(path, force)


def _inside(path: Path, folder: Path) -> bool:
    try:
        path.resolve().relative_to(folder.resolve())
    except ValueError:
        return False
    return True


def _write_report(path: Path, result, limits, out: Path, command: str | None = None) -> None:
    import hashlib

    from .._atomic import write_atomic
    from ..lot._manifest import MANIFEST_NAME, manifest_text, read_manifest
    from ..outputs._lot_report import lot_report_html
    from ._common import command_line

    from ..lot._lot_files import DECISION_RULE, MEASUREMENT_LIMITED_RULE

    text = lot_report_html(result.rows, result.lot, limits, decision_rule=DECISION_RULE,
                           limited_rule=MEASUREMENT_LIMITED_RULE, command=command or command_line())
    write_atomic(path, text, force=True)  # checked before the run (_report_target)
    if _inside(path, out):
        manifest = read_manifest(out, force=True)
        manifest.record(path, hashlib.sha256(text.encode("utf-8")).hexdigest())
        write_atomic(out / MANIFEST_NAME, manifest_text(manifest), force=True)

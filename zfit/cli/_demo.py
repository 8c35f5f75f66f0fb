"""``zfit demo``: the whole job, end to end, on the invented bench files in demo_sweeps/.

Seven parts of an invented incoming-inspection bench: an inductor measured
series-thru, a capacitor measured shunt-thru, a choke whose winding has a
second resonance, a coil captured on an oscilloscope through a sense
resistor, and three parts whose losses depend on frequency (a coil with a
skin-effect winding, an aluminium electrolytic with a constant loss
tangent, a ferrite-core inductor whose permeability relaxes).  Each is
identified exactly as ``zfit identify`` / ``zfit step`` would do it; the
tables are printed, and the JSON, plots, SPICE netlists, Touchstone files
and one-page reports are written into one folder, with an index page; a lot
of capacitors is run against limits with its lot report.
"""

from __future__ import annotations

import json
import sys
import time
from dataclasses import dataclass
from pathlib import Path
from typing import Optional

import typer

from ..outputs._demo_index import demo_headline, demo_index_html
from ._common import app, echo, guarded, warn_line

DEFAULT_OUT = "zfit-demo-output"


@dataclass(frozen=True)
class DemoPart:
    """One part of the demo.

    Attributes
    ----------
    stem : str
        Base name of its output files.
    title : str
        What the part is, in words.
    file : str
        Its bench file in demo_sweeps/.
    kind : {'sweep', 'capture'}
        Analyser sweep or oscilloscope capture.
    args : tuple of str
        The command-line options that reproduce it.
    story : str
        Why it is in the demo: what to look at.
    """

    stem: str
    title: str
    file: str
    kind: str
    args: tuple
    story: str


PARTS = (
    DemoPart("L-0117_10uH", "L-0117: 10 µH power inductor", "ind_10u_series_thru.s2p", "sweep",
             ("--connection", "series-thru", "--at", "100k", "--at", "1M"),
             "a high impedance measured series-thru: SRF inside the band, core loss chosen by BIC"),
    DemoPart("C-0342_100nF", "C-0342: 100 nF ceramic capacitor", "cap_100n_shunt_thru.s2p", "sweep",
             ("--connection", "shunt-thru", "--at", "1M"),
             "milliohm ESR resolved by a shunt-thru measurement"),
    DemoPart("CH-0021_470uH", "CH-0021: 470 µH choke with a winding resonance", "choke_470u_winding_resonance.ts", "sweep",
             ("--connection", "series-thru"),
             "one circuit does not describe the whole band: its valid band is reported, and the rational model, "
             "synthesised as a passive network, covers the rest"),
    DemoPart("L-0233_4m7H_capture", "L-0233: 4.7 mH coil from an oscilloscope capture", "coil_4m7_square_1k.csv", "capture",
             ("--input", "CH1", "--output", "CH2", "--shunt", "1k"),
             "no analyser: a square wave through the coil and a 1 kohm sense resistor"),
    DemoPart("L-0455_33uH_skin", "L-0455: 33 µH air-cored coil with a skin-effect winding", "ind_33u_skin_analyser.csv",
             "sweep", ("--at", "100k", "--at", "1M"),
             "the winding resistance rises as sqrt(f): the skin-effect model is chosen over the lumped circuit, "
             "and the band where it holds within the noise is stated"),
    DemoPart("C-0520_220uF_electrolytic", "C-0520: 220 µF aluminium electrolytic", "cap_220u_electrolytic_shunt_thru.s2p",
             "sweep", ("--connection", "shunt-thru", "--at", "120", "--at", "100k"),
             "a constant loss tangent: ESR falls as D/(omega C) to a plateau; D at 120 Hz from the measurement"),
    DemoPart("L-0731_220uH_ferrite", "L-0731: 220 µH ferrite-core inductor", "ind_220u_ferrite_analyser.csv", "sweep",
             ("--at", "100k", "--at", "3M"),
             "the core's permeability relaxes (Debye): L falls 33-fold above 600 kHz while its loss peaks"),
)


def demo_sweeps_dir() -> Path:
    """Return the demo_sweeps/ folder of the checkout zfit runs from.

    Raises
    ------
    ZfitInputError
        When the folder is not there (zfit installed without its demo files).
    """
    from .._errors import ZfitInputError

    package = Path(__file__).resolve().parent.parent
    for candidate in (package.parent / "demo_sweeps", package / "demo_sweeps"):
        if (candidate / PARTS[0].file).is_file():
            return candidate
    raise ZfitInputError(
        "the demo files are not installed with this copy of zfit: demo_sweeps/ was looked for next to the "
        f"package ({package.parent / 'demo_sweeps'}); run from a checkout of the repository "
        "(pip install -e .) or give --sweeps DIR"
    )


def _fresh_folder(out: Optional[Path], force: bool) -> Path:
    """Return the output folder: the one asked for, or a fresh default name."""
    from .._errors import ZfitInputError

    if out is not None:
        if out.exists() and not out.is_dir():
            raise ZfitInputError("is a file; --out names the folder the results go into", out)
        for parent in out.parents:
            if parent.exists():
                if not parent.is_dir():
                    raise ZfitInputError(f"cannot make this folder: {parent} is a file", out)
                break
        if out.exists() and any(out.iterdir()) and not force:
            raise ZfitInputError("holds files already; give --force to write into it (the demo's own files are "
                                 "replaced, others left alone) or another --out", out)
        return out
    base = Path(DEFAULT_OUT)
    if force or not base.exists() or not any(base.iterdir()):
        return base
    k = 2
    while Path(f"{DEFAULT_OUT}-{k}").exists():
        k += 1
    return Path(f"{DEFAULT_OUT}-{k}")


def _command(part: DemoPart, sweeps: Path, outputs: dict) -> list[str]:
    cmd = ["zfit", "identify" if part.kind == "sweep" else "step", str(sweeps / part.file), *part.args]
    for opt, name in outputs.items():
        if opt in _step_options() or part.kind == "sweep":
            cmd += [opt, name]
    return cmd


def _step_options() -> set:
    """The output options ``zfit step`` has (the demo writes the rest itself)."""
    import typer.main

    from ._common import app as _app

    # Typer's own command group (newer typer vendors click: do not import it).
    command = typer.main.get_command(_app)
    step = getattr(command, "commands", {}).get("step")
    if step is None:
        return {"--json", "--plot"}
    return {o for p in step.params for o in getattr(p, "opts", ())}


def _quoted(cmd) -> str:
    import shlex

    return " ".join(shlex.quote(c) for c in cmd)


def _run_part(part: DemoPart, sweeps: Path, folder: Path, force: bool):
    """Identify one part, write its files; return (result, identification, written, notes)."""
    import warnings

    from .._errors import MeasurementWarning
    from ..fit._realisation import SynthesisError
    from ..outputs._outputs import write_outputs

    path = sweeps / part.file
    notes = []
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", MeasurementWarning)
        if part.kind == "sweep":
            from ..identification._pipeline import identify
            from ..io._sweep_file import read_sweep
            from .._units import parse_quantity

            opts = dict(zip(part.args[::2], part.args[1::2]))
            at = tuple(parse_quantity(v, "--at") for k, v in zip(part.args[::2], part.args[1::2]) if k == "--at")
            sweep = read_sweep(path, connection=opts.get("--connection"))
            result = identify(sweep, "auto", at)
            ident = result
        else:
            from ..io._capture import read_capture
            from ..capture._analysis import analyse_capture
            from .._units import parse_quantity

            opts = dict(zip(part.args[::2], part.args[1::2]))
            cap = read_capture(path)
            result = analyse_capture(cap, input=opts["--input"], output=opts["--output"],
                                     shunt_ohm=parse_quantity(opts["--shunt"], "--shunt"))
            ident = result.identification
    notes += [str(w.message) for w in caught]

    out = {"--json": f"{part.stem}.json", "--plot": f"{part.stem}.png", "--report": f"{part.stem}.html"}
    if ident is not None:
        out["--netlist"] = f"{part.stem}.cir"
        if part.kind == "sweep":
            out["--touchstone"] = f"{part.stem}.s1p"
    written = []
    from .._atomic import write_atomic

    try:
        written += write_outputs(
            result, plot=folder / out["--plot"], report=folder / out["--report"],
            netlist=folder / out["--netlist"] if "--netlist" in out else None,
            touchstone=folder / out["--touchstone"] if "--touchstone" in out else None,
            force=force, command=_quoted(_command(part, sweeps, out)), json_path=folder / out["--json"],
        )
    except SynthesisError as exc:
        # The demo shows the refusal as a user meets it, then writes what can be written.
        notes.append(f"netlist: {exc}")
        out.pop("--netlist", None)
        written += write_outputs(
            result, plot=folder / out["--plot"], report=folder / out["--report"],
            touchstone=folder / out["--touchstone"] if "--touchstone" in out else None,
            force=force, command=_quoted(_command(part, sweeps, out)), json_path=folder / out["--json"],
        )
    if ident is not None and ident.model != "rational" and ident.rational is not None:
        lo, hi = ident.fit.valid_band_hz
        f0, f1 = ident.sweep.band_hz
        if lo > f0 * (1 + 1e-9) or hi < f1 * (1 - 1e-9):
            # The circuit holds over part of the band only: the full band's
            # rational model as a passive network too.
            from ..outputs._netlist import identification_netlist

            try:
                text = identification_netlist(ident, "rational", name=f"{Path(part.file).stem}_full_band")
                written.append(write_atomic(folder / f"{part.stem}-full-band.cir", text, force))
            except SynthesisError as exc:
                notes.append(f"full-band netlist: {exc}")
    return result, ident, written, notes, _command(part, sweeps, out)


@app.command("demo")
@guarded
def demo_command(
    out: Optional[Path] = typer.Option(None, "--out", help=f"Folder for the results (default: ./{DEFAULT_OUT}, or a fresh "
                                       f"{DEFAULT_OUT}-N if that one is taken)."),
    sweeps: Optional[Path] = typer.Option(None, "--sweeps", help="The demo files' folder (default: demo_sweeps/ of the checkout)."),
    force: bool = typer.Option(False, "--force", help="Write into --out even if it holds files (replacing the demo's own)."),
    part: Optional[list[str]] = typer.Option(None, "--part", help="Run only this part (its file stem, e.g. C-0342_100nF); "
                                             "repeatable. Default: all of them."),
):
    """Run zfit end to end on the invented bench files of demo_sweeps/.

    Identifies an inductor measured series-thru, a capacitor measured
    shunt-thru, a choke with a second resonance, a coil captured on an
    oscilloscope through a sense resistor, and three parts with
    frequency-dependent losses (skin-effect coil, electrolytic, ferrite-core
    inductor); runs a lot against limits with its report; prints each
    table and the command that reproduces it, and writes JSON, plots, SPICE
    netlists, Touchstone files and one-page HTML reports into one folder,
    named at the end.

    Safety: the demo touches no instrument.  On the bench, discharge
    capacitors before connecting them, and remember that an oscilloscope's
    ground clip is tied to mains earth; follow local codes and licensed
    practice for mains or high-voltage work.
    """
    from .._errors import ZfitInputError

    t0 = time.perf_counter()
    src = sweeps if sweeps is not None else demo_sweeps_dir()
    missing = [p.file for p in PARTS if not (src / p.file).is_file()]
    if missing:
        raise ZfitInputError(f"demo files missing from {src}: {', '.join(missing)}")
    chosen = PARTS
    whole_job = not part
    if part:
        known = {p.stem: p for p in PARTS}
        bad = [name for name in part if name not in known]
        if bad:
            raise ZfitInputError(f"--part {bad[0]!r}: the demo parts are {', '.join(known)}")
        chosen = tuple(known[name] for name in dict.fromkeys(part))
    folder = _fresh_folder(out, force)
    folder.mkdir(parents=True, exist_ok=True)
    jobs, lot = _run_all(chosen, src, folder, force, with_lot=whole_job)
    rows = []
    n_files = 0
    for k, (part, job) in enumerate(zip(chosen, jobs), 1):
        echo(f"=== {k}/{len(chosen)}  {part.title}")
        echo(f"    ({part.story})")
        echo(f"$ {_quoted(job['command'])}")
        for line in job["lines"]:
            echo(line)
        for text in job["warnings"]:
            warn_line(text)
        echo("wrote " + ", ".join(job["written"]))
        echo()
        n_files += len(job["written"])
        rows.append((part, None, job["headline"], job["command"]))
    if whole_job:  # the whole job: a lot against limits, and a plan before the next part is measured
        sys.stdout.write(lot["text"])
        n_files += lot["files"]
        _demo_plan()
    from .._atomic import write_atomic
    from ..outputs._report import Report

    write_atomic(folder / "index.html", demo_index_html(rows, Report("x").generated), force)
    n_files += 1
    dt = time.perf_counter() - t0
    echo(f"zfit demo: {len(chosen)} parts, {n_files} files in {dt:.1f} s")
    echo(f"results in {folder}{'/' if not str(folder).endswith('/') else ''}  (open {folder / 'index.html'})")


#: The demo lot: twelve invented 100 nF capacitors of one reel, measured shunt-thru,
#: against the incoming-inspection limits below (C-0342-007 was mixed in from
#: another reel; C-0342-011 has a poor termination).
LOT_LIMITS = """\
model = "capacitor"

[limit.C]
nominal = "100n"
tolerance_percent = 5

[limit.ESR]
max = "15m"
"""


def _demo_lot(folder: Path, force: bool) -> int:
    """Write the invented lot, run ``zfit batch`` on it, print its summary; return the file count."""
    import numpy as np

    from ..io._limits_file import parse_limits
    from ..lot._lot_files import lot_text, verdict_lines
    from ..lot._run import run_batch
    from ..lot._simulated_lot import SimulatedPart, write_simulated_lot
    from ..lot._tasks import ReadOptions

    rng = np.random.default_rng(342)
    parts = [SimulatedPart(f"C-0342-{i:03d}.s2p", "capacitor",
                           {"C": 100e-9 * (1 + rng.normal(0, 0.012)), "ESR": 8e-3 * (1 + rng.normal(0, 0.08)),
                            "ESL": 0.9e-9 * (1 + rng.normal(0, 0.03))}) for i in range(12)]
    parts[7] = SimulatedPart("C-0342-007.s2p", "capacitor", {"C": 82e-9, "ESR": 9e-3, "ESL": 0.9e-9})
    parts[11] = SimulatedPart("C-0342-011.s2p", "capacitor", {"C": 99e-9, "ESR": 40e-3, "ESL": 0.9e-9})
    lot = folder / "lot"
    write_simulated_lot(lot / "sweeps", parts, np.geomspace(1e4, 3e8, 201), seed=342, connection="shunt-thru")
    from .._atomic import write_atomic

    limits_path = write_atomic(lot / "limits.toml", LOT_LIMITS, force=True)
    report = lot / "lot-report.html"
    cmd = (f"zfit batch {lot / 'sweeps'} --out {lot} --limits {limits_path} --connection shunt-thru "
           f"--report {report}")
    echo("=== lot  C-0342: twelve 100 nF capacitors of one reel against incoming-inspection limits")
    echo("    (a lot: a verdict per part with guarded acceptance, the lot's statistics and Cpk)")
    echo(f"$ {cmd}")
    limits = parse_limits(LOT_LIMITS, str(limits_path))
    result = run_batch([lot / "sweeps"], lot, limits=limits, read=ReadOptions(connection="shunt-thru"), jobs=1,
                       force=force, progress=False)
    for line in verdict_lines(result.rows):
        echo(line)
    echo(lot_text(result.lot))
    # The lot report as `zfit batch --report` writes it (recorded in the lot's manifest).
    from ._batch import _write_report

    _write_report(report, result, limits, lot, command=cmd)
    echo(f"wrote {lot}/ (summary.csv, lot.csv, lot.json, lot-report.html and a JSON per part)")
    echo()
    return len(parts) + 1 + sum(1 for p in lot.iterdir() if p.is_file() and not p.name.startswith("."))


def _demo_plan() -> None:
    """Print the plan for the next part on the bench: which connection suits a 10 uH inductor."""
    from ..identification._plan import format_plan, plan_measurement

    echo("=== plan  before the next part is on the bench: a 10 µH inductor with 5 pF stray C")
    echo("$ zfit plan inductor --L 10u --R_s 50m --C_p 5p")
    echo(format_plan(plan_measurement("inductor", {"L": 10e-6, "R_s": 50e-3, "C_p": 5e-12})))
    echo()


def _part_job(part: DemoPart, sweeps: Path, folder: Path, force: bool) -> dict:
    """Run one part and return what the command prints about it (picklable)."""
    from ..outputs._views import identification_summary, step_summary

    result, ident, written, notes, cmd = _run_part(part, sweeps, folder, force)
    own = tuple(ident.warnings) if ident is not None else ()
    return {
        "command": cmd,
        "lines": identification_summary(result) if part.kind == "sweep" else step_summary(result),
        "warnings": list(own) + [t for t in notes if not any(t.endswith(o) for o in own)],
        "written": [p.name for p in written],
        "headline": demo_headline(ident),
    }


def _lot_job(folder: Path, force: bool) -> dict:
    """Run the demo lot and return what it prints and its file count (picklable, for a worker)."""
    import contextlib
    import io

    buf = io.StringIO()
    with contextlib.redirect_stdout(buf):
        files = _demo_lot(folder, force)
    return {"text": buf.getvalue(), "files": files}


def _run_all(parts, sweeps: Path, folder: Path, force: bool, with_lot: bool = False) -> tuple:
    """Run the parts (and the lot), two at a time where the machine has the cores; return (part jobs, lot job)."""
    import multiprocessing
    import os
    from concurrent.futures import ProcessPoolExecutor

    workers = min(2, os.cpu_count() or 1, len(parts) + with_lot)
    if workers < 2 or "fork" not in multiprocessing.get_all_start_methods():
        jobs = [_part_job(p, sweeps, folder, force) for p in parts]
        return jobs, _lot_job(folder, force) if with_lot else None
    # Import the heavy parts once, before the fork, so the workers start warm.
    import matplotlib  # noqa: F401

    from ..capture import _analysis  # noqa: F401
    from ..identification import _pipeline  # noqa: F401
    from ..outputs import _plots  # noqa: F401

    matplotlib.use("Agg")
    # The lot and the slowest parts first, so the two workers finish together.
    order = sorted(range(len(parts)), key=lambda i: parts[i].kind != "capture")
    with ProcessPoolExecutor(workers, mp_context=multiprocessing.get_context("fork")) as pool:
        lot = pool.submit(_lot_job, folder, force) if with_lot else None
        futures = {i: pool.submit(_part_job, parts[i], sweeps, folder, force) for i in order}
        return [futures[i].result() for i in range(len(parts))], lot.result() if lot is not None else None

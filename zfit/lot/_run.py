"""A batch run: identify every part of a lot, check it against limits, write the summaries.

The work of one part (`zfit.lot._worker`) is a pure function of its task,
run in a local process pool, in this process, or on the workers of a Dask
distributed scheduler (`zfit.lot._executors`): the summary files are built
in the calling process from the per-part summaries, sorted by file name, so
they are byte-identical whichever way the work was spread.
"""

from __future__ import annotations

import hashlib
import os
import time
from dataclasses import dataclass
from pathlib import Path
from typing import Sequence

from .._atomic import write_atomic
from .._errors import ZfitInputError
from ..io._limits_file import Limits
from ._executors import local_jobs, run_parts
from ._inputs import expand_inputs, output_names
from ._lot_files import LOT_CSV_NAME, LOT_JSON_NAME, SUMMARY_NAME, lot_csv_text, lot_json_text, summary_csv_text
from ._manifest import MANIFEST_NAME, manifest_text, read_manifest
from ._progress import Progress, Quiet
from ._reuse import input_key, read_options_digest, reusable_summary
from ._rows import part_row
from ._statistics import LotSummary, lot_summary
from ._tasks import PartOutcome, PartTask, ReadOptions

__all__ = ["BatchResult", "run_batch"]


@dataclass(frozen=True)
class BatchResult:
    """What a batch run produced.

    Attributes
    ----------
    rows : tuple of PartRow
        One per part, sorted by file name.
    lot : LotSummary
        The lot statistics.
    out_dir : pathlib.Path
        The output folder.
    summary_path, lot_csv_path, lot_json_path : pathlib.Path
        The summary files.
    identified : int
        Parts identified in this run.
    skipped : int
        Parts whose up-to-date result was reused.
    errors : int
        Parts without a result.
    seconds : float
        Wall-clock time of the run.
    workers : str
        How the work was run (``in-process``, ``2 local processes``, a
        Dask scheduler's address).
    unwritten : tuple of str
        One line per output file that could not be written (a full disk),
        naming the file; the other files were written.
    """

    rows: tuple
    lot: LotSummary
    out_dir: Path
    summary_path: Path
    lot_csv_path: Path
    lot_json_path: Path
    identified: int
    skipped: int
    errors: int
    seconds: float
    workers: str
    unwritten: tuple = ()


def run_batch(
    inputs: Sequence,
    out,
    *,
    limits: Limits | None = None,
    model: str | None = None,
    at: Sequence[float] = (),
    read: ReadOptions | None = None,
    jobs: int | None = None,
    cluster: str | None = None,
    plot: bool = False,
    plot_format: str = "png",
    force: bool = False,
    progress=None,
) -> BatchResult:
    """Identify every part of a lot, check it against limits, write the summaries.

    Parameters
    ----------
    inputs : sequence of str or os.PathLike
        Files, folders and glob patterns (see `expand_inputs`).
    out : str or os.PathLike
        Output folder (created; it holds the run's results).
    limits : Limits, optional
        Limits of the lot (`zfit.io._limits_file.read_limits`).
    model : str, optional
        ``auto``, ``inductor``, ``capacitor`` or ``rational``; default: the
        limits file's model, else ``auto``.
    at : sequence of float
        Extra spot frequencies (Hz) for the summary, beyond the limits'.
    read : ReadOptions, optional
        How to read the sweeps.
    jobs : int, optional
        Local worker processes (default: all cores); 1 runs in this process.
    cluster : str, optional
        Address of a Dask distributed scheduler (``tcp://host:8786``) to run
        the parts on instead; its workers must see the same file paths.
    plot : bool
        Also write a plot per part.
    plot_format : {'png', 'svg'}
        Its file type.
    force : bool
        Identify every part again, even where an up-to-date result exists,
        and replace files in the output folder that the batch did not write.
    progress : Progress or False, optional
        Progress display; default a `Progress` on standard error, False for none.

    Returns
    -------
    BatchResult
        Rows sorted by file name, lot statistics and the summary paths.

    Raises
    ------
    ZfitInputError
        When the inputs name nothing, or the Dask scheduler cannot be reached.
    OutputExistsError
        When a file the run would write is in the output folder and is not the
        batch's own (`zfit.lot._manifest`), and `force` is false.
    """
    t0 = time.perf_counter()
    n_jobs = local_jobs(jobs)
    out = Path(out)
    items = expand_inputs(inputs, exclude=out)
    if model is None:
        model = limits.model if limits is not None and limits.model else "auto"
    if model not in ("auto", "inductor", "capacitor", "rational"):
        raise ZfitInputError(f"model {model!r}: use auto, inductor, capacitor or rational")
    if plot_format not in ("png", "svg"):
        raise ZfitInputError(f"plot format {plot_format!r}: use png or svg")
    read = read or ReadOptions()
    freqs = tuple(sorted({*(limits.frequencies_hz if limits else ()), *(float(f) for f in at)}))
    stems = output_names(items)
    core = limits.core if limits is not None else None
    core_at = tuple(lim.f_hz for lim in limits.limits if lim.quantity == "loss_factor") if limits else ()
    bead = bool(limits) and any(lim.quantity == "f_RX" for lim in limits.limits)
    tasks = []
    for i, ((path, name), stem) in enumerate(zip(items, stems)):
        base = out / stem
        tasks.append(PartTask(
            i, str(path), name, str(base.with_name(base.name + ".json")),
            str(base.with_name(base.name + "." + plot_format)) if plot else None, model, freqs, read,
            core, core_at, bead))
    out.mkdir(parents=True, exist_ok=True)
    manifest = read_manifest(out, force)
    digest = read_options_digest(read)
    keys = {t.index: input_key(t.path, digest) for t in tasks}

    outcomes: dict[int, PartOutcome] = {}
    todo = []
    for t in tasks:
        stored = reusable_summary(t, keys[t.index], manifest, force)
        if stored is None:
            todo.append(t)
        else:
            outcomes[t.index] = PartOutcome(t.index, t.name, stored, skipped=True)
    summary_paths = (out / SUMMARY_NAME, out / LOT_CSV_NAME, out / LOT_JSON_NAME)
    claimed = [*summary_paths, *(p for t in todo for p in t.output_paths())]
    if not force:
        # The batch replaces only what it wrote: anything else in the way is the user's.
        manifest.refuse_foreign(claimed)
    # Claimed before the work starts, so that the files of an interrupted run
    # stay the batch's own (and are redone) on a rerun.  A file of the user's
    # that --force lets the run replace is not claimed: it is the batch's once
    # written, and is never removed.
    manifest.claim([p for p in claimed if not os.path.lexists(p) or manifest.owns(p)])
    manifest_path = out / MANIFEST_NAME
    write_atomic(manifest_path, manifest_text(manifest), force=True)

    if progress is None:
        progress = Progress(len(tasks))
    elif progress is False:
        progress = Quiet()
    if outcomes:
        progress.skip(len(outcomes))
    by_index = {t.index: t for t in tasks}

    def on_done(outs):
        bad = 0
        for o in outs:
            outcomes[o.index] = o
            if o.error is not None:
                bad += 1
                progress.message(f"zfit: error: {o.error}")
                # No result: no file of the part's may stay beside its 'error' row.
                manifest.remove_owned(by_index[o.index].output_paths())
            else:
                task = by_index[o.index]
                for path, sha in o.written:
                    manifest.record(path, sha, keys[o.index] if path == task.json_path else None)
                # A figure this part no longer has (another model than last time) goes.
                done = {path for path, _ in o.written}
                manifest.remove_owned(p for p in task.output_paths() if p not in done)
        progress.update(len(outs), bad)

    try:
        workers = run_parts(todo, cluster, n_jobs, on_done, progress)
    except BaseException:
        # Interrupted: keep what is done, so that a rerun resumes from it.
        _write_quietly(manifest_path, manifest_text(manifest))
        raise

    rows = tuple(part_row(outcomes[t.index], limits) for t in tasks)
    lot = lot_summary(rows, limits)
    texts = (summary_csv_text(rows, limits, at=tuple(float(f) for f in at)), lot_csv_text(lot), lot_json_text(lot))
    unwritten = []
    for path, text in zip(summary_paths, texts):
        # One file that cannot be written (a full disk) must not cost the others.
        try:
            write_atomic(path, text, force=True)
        except ZfitInputError as exc:
            unwritten.append(exc.one_line())
        else:
            manifest.record(path, hashlib.sha256(text.encode("utf-8")).hexdigest())
    try:
        write_atomic(manifest_path, manifest_text(manifest), force=True)
    except ZfitInputError as exc:
        unwritten.append(exc.one_line())
    skipped = sum(1 for o in outcomes.values() if o.skipped)
    errors = sum(1 for r in rows if r.error is not None)
    return BatchResult(rows, lot, out, *summary_paths, len(tasks) - skipped - errors, skipped,
                       errors, time.perf_counter() - t0, workers, tuple(unwritten))


def _write_quietly(path, text) -> None:
    try:
        write_atomic(path, text, force=True)
    except ZfitInputError:
        pass

"""A batch run: identify every part of a lot, check it against limits, write the summaries.

The work of one part (`zfit.lot._worker`) is a pure function of its task,
run in a local process pool, in this process, or on the workers of a Dask
distributed scheduler (`zfit.lot._executors`): the summary files are built
in the calling process from the per-part summaries, sorted by file name, so
they are byte-identical whichever way the work was spread.
"""

from __future__ import annotations

import os
import time
import warnings
from dataclasses import dataclass
from pathlib import Path
from typing import Sequence

from .._atomic import write_atomic
from .._errors import ZfitInputError
from ..io._limits_file import Limits
from ._executors import import_all, preload_modules, run_tasks
from ._inputs import expand_inputs, output_names
from ._lot_files import LOT_CSV_NAME, LOT_JSON_NAME, SUMMARY_NAME, lot_csv_text, lot_json_text, summary_csv_text
from ._progress import Progress, Quiet
from ._reuse import reusable_summary
from ._rows import part_row
from ._statistics import LotSummary, lot_summary
from ._tasks import PartOutcome, PartTask, ReadOptions
from ._threads import blas_threads, restore_blas_threads

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
        Identify every part again, even where an up-to-date result exists.
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
    """
    t0 = time.perf_counter()
    n_jobs = jobs if jobs is not None else (len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity")
                                             else (os.cpu_count() or 1))
    if n_jobs < 1:
        raise ZfitInputError(f"--jobs {n_jobs}: give 1 or more")
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
    tasks = []
    for i, ((path, name), stem) in enumerate(zip(items, stems)):
        base = out / stem
        tasks.append(PartTask(
            i, str(path), name, str(base.with_name(base.name + ".json")),
            str(base.with_name(base.name + "." + plot_format)) if plot else None, model, freqs, read))
    out.mkdir(parents=True, exist_ok=True)

    if progress is None:
        progress = Progress(len(tasks))
    elif progress is False:
        progress = Quiet()
    outcomes: dict[int, PartOutcome] = {}
    todo = []
    for t in tasks:
        stored = reusable_summary(t, force)
        if stored is None:
            todo.append(t)
        else:
            outcomes[t.index] = PartOutcome(t.index, t.name, stored, skipped=True)
    if outcomes:
        progress.skip(len(outcomes))

    def on_done(outs):
        bad = 0
        for o in outs:
            outcomes[o.index] = o
            if o.error is not None:
                bad += 1
                progress.message(f"zfit: error: {o.error}")
        progress.update(len(outs), bad)

    # The workers route warnings to their parts (see `zfit.lot._warning_routing`); in
    # this process that changes the warning filters, which are put back here.
    # One BLAS thread for the parts run in this process (and in Dask threads
    # here); put back afterwards.  Worker processes set theirs at start.
    blas = []
    if todo and (cluster or n_jobs == 1 or len(todo) == 1):
        # numpy and scipy each load their own OpenBLAS: import them first.
        import_all(preload_modules())
        blas = blas_threads(1)
    try:
        with warnings.catch_warnings():
            workers = run_tasks(todo, cluster, n_jobs, on_done, progress)
    finally:
        restore_blas_threads(blas)

    rows = tuple(part_row(outcomes[t.index], limits) for t in tasks)
    lot = lot_summary(rows, limits)
    summary = write_atomic(out / SUMMARY_NAME, summary_csv_text(rows, limits, at=tuple(float(f) for f in at)), force=True)
    lot_csv = write_atomic(out / LOT_CSV_NAME, lot_csv_text(lot), force=True)
    lot_json = write_atomic(out / LOT_JSON_NAME, lot_json_text(lot), force=True)
    skipped = sum(1 for o in outcomes.values() if o.skipped)
    errors = sum(1 for r in rows if r.error is not None)
    return BatchResult(rows, lot, out, summary, lot_csv, lot_json, len(tasks) - skipped - errors, skipped,
                       errors, time.perf_counter() - t0, workers)

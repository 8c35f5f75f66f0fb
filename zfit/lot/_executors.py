"""Where the parts run: in this process, in local worker processes, or on a Dask cluster.

Each executor takes the tasks and calls ``on_done`` with every finished
batch of outcomes, in whatever order they finish; the run sorts them.
"""

from __future__ import annotations

import math
import os
import threading
import warnings

from .._errors import ZfitInputError
from ._tasks import PartOutcome
from ._threads import blas_threads, restore_blas_threads
from ._worker import identify_chunk, identify_part, worker_init

__all__ = ["run_tasks", "run_parts", "local_jobs", "preload_modules", "import_all"]


def _chunks(tasks: list, size: int) -> list[list]:
    return [tasks[i:i + size] for i in range(0, len(tasks), size)]


def _chunk_size(n: int, workers: int) -> int:
    # Several chunks per worker keep the load balanced at the end of the run;
    # a chunk of a few parts makes the per-task overhead (pickling, queueing)
    # negligible against a part's identification.
    return max(1, min(16, math.ceil(n / (8 * max(1, workers)))))


def _needs_skrf(tasks, sample: int = 8) -> bool:
    """Whether the lot looks like Touchstone 2.0 (read through scikit-rf):
    a peek at the head of the first few files."""
    for t in tasks[:sample]:
        try:
            with open(t.path, "rb") as fh:
                head = fh.read(4096).lower()
        except OSError:
            continue
        if b"[version]" in head:
            return True
    return False


def preload_modules(plot: bool = False, skrf: bool = False) -> list[str]:
    """Return the modules a worker needs, to import once before the workers start.

    Parameters
    ----------
    plot : bool
        Whether parts are plotted (matplotlib).
    skrf : bool
        Whether the lot holds Touchstone 2.0 files (scikit-rf).
    """
    # What the first part of a worker would otherwise import (measured with
    # ``python -X importtime``: scipy.optimize and friends are about 0.4 s;
    # matplotlib another 0.5 s when plotting; scikit-rf, for Touchstone 2.0
    # only, up to a second).
    mods = ["zfit.lot._worker", "zfit.cli._common", "zfit.io._sweep_file", "zfit.io._touchstone", "zfit.io._table",
            "zfit.fit._vectfit", "zfit.fit._circuits", "zfit.fit._lsq", "zfit.identification._merit", "zfit.identification._pipeline",
            "scipy.optimize", "scipy.linalg"]
    if plot:
        mods += ["zfit.outputs._outputs", "zfit.outputs._plots", "matplotlib", "matplotlib.pyplot"]
    if skrf:
        mods += ["skrf", "skrf.io.touchstone", "skrf.network"]
    return mods


def import_all(modules) -> None:
    """Import `modules`, skipping those that are not installed."""
    import importlib

    for m in modules:
        try:
            importlib.import_module(m)
        except ImportError:
            pass


def _run_local(tasks, jobs, on_done):
    import concurrent.futures as cf
    import importlib.util
    import multiprocessing as mp

    # Workers must not pay for a fresh interpreter and its imports (numpy,
    # scipy, zfit: about a second each).  In a process without other threads
    # (the command line) a plain fork shares what this process has imported;
    # where threads run (a notebook, a test session with a Dask cluster) a
    # fork is unsafe, so workers fork from a forkserver that preloads zfit.
    mods = preload_modules(any(t.plot_path for t in tasks), _needs_skrf(tasks))
    methods = mp.get_all_start_methods()
    if "fork" in methods and threading.active_count() == 1:
        ctx = mp.get_context("fork")
        import_all(mods)
    elif "forkserver" in methods:
        ctx = mp.get_context("forkserver")
        ctx.set_forkserver_preload([m for m in mods if importlib.util.find_spec(m) is not None])
    else:  # pragma: no cover - Windows
        ctx = mp.get_context("spawn")
    size = _chunk_size(len(tasks), jobs)
    chunks = _chunks(tasks, size)
    pool = cf.ProcessPoolExecutor(max_workers=jobs, mp_context=ctx, initializer=worker_init)
    try:
        pending = {}
        it = iter(chunks)
        # A bounded number of chunks in flight: memory stays flat for a lot
        # of thousands of parts.
        for chunk in it:
            pending[pool.submit(identify_chunk, chunk)] = chunk
            if len(pending) >= 4 * jobs:
                break
        while pending:
            done, _ = cf.wait(pending, return_when=cf.FIRST_COMPLETED)
            for fut in done:
                chunk = pending.pop(fut)
                try:
                    outs = fut.result()
                except Exception as exc:  # a worker died (out of memory, killed)
                    outs = [PartOutcome(t.index, t.name, None, f"worker lost: {type(exc).__name__}: {exc}")
                            for t in chunk]
                on_done(outs)
                nxt = next(it, None)
                if nxt is not None:
                    pending[pool.submit(identify_chunk, nxt)] = nxt
    except BaseException:
        # Interrupted (Ctrl-C): drop the queued parts instead of finishing
        # them; the parts already written stay, and a rerun resumes.
        pool.shutdown(wait=False, cancel_futures=True)
        raise
    pool.shutdown(wait=True)


def _run_dask(tasks, address, on_done):
    try:
        from distributed import Client, as_completed
    except ImportError:
        raise ZfitInputError(
            "--cluster needs dask.distributed: pip install 'zfit-passives[cluster]'") from None
    try:
        client = Client(address, timeout=10, set_as_default=False)
    except (OSError, TimeoutError, ValueError) as exc:
        raise ZfitInputError(f"cannot reach the Dask scheduler at {address}: {exc}") from None
    try:
        n = sum(w.get("nthreads", 1) for w in client.scheduler_info().get("workers", {}).values()) or 1
        chunks = _chunks(tasks, _chunk_size(len(tasks), n))
        futures = {}
        for chunk in chunks:
            futures[client.submit(identify_chunk, chunk, pure=False)] = chunk
        for fut in as_completed(list(futures), loop=client.loop):
            chunk = futures.pop(fut)
            try:
                outs = fut.result()
            except Exception as exc:
                outs = [PartOutcome(t.index, t.name, None, f"worker lost: {type(exc).__name__}: {exc}")
                        for t in chunk]
            on_done(outs)
            fut.release()
        return f"Dask scheduler {address} ({n} threads)"
    finally:
        client.close()


def run_tasks(todo, cluster, n_jobs, on_done, progress) -> str:
    """Run the parts, calling `on_done` with each finished batch of outcomes;
    return how the work was run, in words."""
    try:
        if not todo:
            return "nothing to do"
        if cluster:
            return _run_dask(todo, cluster, on_done)
        if n_jobs == 1 or len(todo) == 1:
            for t in todo:
                on_done([identify_part(t)])
            return "in-process"
        n = min(n_jobs, len(todo))
        _run_local(todo, n, on_done)
        return f"{n} local processes"
    finally:
        progress.close()


def local_jobs(jobs: int | None) -> int:
    """Return the number of local worker processes: `jobs`, or all the cores this process may use."""
    n = jobs if jobs is not None else (len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity")
                                       else (os.cpu_count() or 1))
    if n < 1:
        raise ZfitInputError(f"--jobs {n}: give 1 or more")
    return n


def run_parts(todo, cluster, n_jobs, on_done, progress) -> str:
    """Run the parts as `run_tasks` does, with the thread and warning settings of this process put back.

    The workers route warnings to their parts (see `zfit.lot._warning_routing`); in
    this process that changes the warning filters, which are put back here.
    One BLAS thread for the parts run in this process (and in Dask threads
    here); put back afterwards.  Worker processes set theirs at start.
    """
    blas = []
    if todo and (cluster or n_jobs == 1 or len(todo) == 1):
        # numpy and scipy each load their own OpenBLAS: import them first.
        import_all(preload_modules())
        blas = blas_threads(1)
    try:
        with warnings.catch_warnings():
            return run_tasks(todo, cluster, n_jobs, on_done, progress)
    finally:
        restore_blas_threads(blas)

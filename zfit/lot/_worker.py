"""The work of one part: read its sweep, identify it, write its JSON (and plot).

A pure function of its `PartTask`, so that it runs alike in this process, in
a local worker process or on a Dask worker; it never raises: one bad part
must not stop the lot, so an error becomes one line of its `PartOutcome`.
"""

from __future__ import annotations

import hashlib
import os
import threading
import time
from pathlib import Path
from typing import Sequence

from .._errors import ZfitError, ZfitInputError
from .._json import json_text
from ._part_summary import part_summary
from ._tasks import PartOutcome, PartTask
from ._threads import blas_threads
from ._warning_routing import collect_warnings

__all__ = ["identify_part", "identify_chunk", "worker_init"]


def _one_line(exc: BaseException, task: PartTask) -> str:
    if isinstance(exc, ZfitInputError):
        text = exc.one_line()
    elif isinstance(exc, OSError):
        text = f"{exc.filename or task.path}: {exc.strerror or exc}"
    elif isinstance(exc, ZfitError):
        text = str(exc)
    else:
        text = f"internal error: {type(exc).__name__}: {exc}"
    text = " ".join(text.split())
    return text.replace(task.path, task.name)


def _read_sweep(task: PartTask):
    from ..io._prepared import prepared_sweep

    r = task.read
    opt = lambda p: None if p is None else Path(p)  # noqa: E731
    return prepared_sweep(
        Path(task.path), connection=r.connection, noise_rel=r.noise_rel, noise_floor=r.noise_floor,
        columns=r.columns, open_=opt(r.open_), short=opt(r.short), load=opt(r.load),
        load_value=r.load_value, port_delay=r.port_delay, port_loss=r.port_loss,
    )

def identify_part(task: PartTask) -> PartOutcome:
    """Return what identifying one part produced, having written its files.

    Parameters
    ----------
    task : PartTask
        The part.
    """
    from .._atomic import write_atomic
    from ..identification._pipeline import identify

    from ._manifest import file_sha256

    t0 = time.perf_counter()
    summary = error = None
    written = []
    with collect_warnings() as caught:
        try:
            sweep = _read_sweep(task)
            ident = identify(sweep, model=task.model, at=task.at)
            raw = json_text(ident.to_dict()).encode("utf-8")
            write_atomic(task.json_path, raw, force=True)
            # The batch owns what it wrote (`zfit.lot._manifest`): the hash of these bytes.
            written.append((task.json_path, hashlib.sha256(raw).hexdigest()))
            if task.plot_path is not None:
                from ..outputs._outputs import write_outputs

                for p in write_outputs(ident, plot=task.plot_path, force=True):
                    written.append((str(p), file_sha256(p)))
            summary = part_summary(ident)
            if task.core is not None or task.bead:
                summary = _with_material(summary, sweep, task)
        except Exception as exc:  # one bad part must not stop the lot
            summary, error = None, _one_line(exc, task)
    seen = []
    for w in caught:
        w = " ".join(w.replace(task.path, task.name).split())
        # The summary row names the file already.
        w = w[len(task.name) + 2:] if w.startswith(task.name + ": ") else w
        if w not in seen:
            seen.append(w)
    return PartOutcome(task.index, task.name, summary, error, tuple(seen), False, time.perf_counter() - t0,
                       tuple(written) if error is None else ())


def _with_material(summary, sweep, task: PartTask):
    """The summary with the core's material figures or the bead's R = X frequency (docs/cores.md)."""
    from dataclasses import replace

    from ..io._limits_file import figure_name

    figs = dict(summary.figures)
    if task.core is not None:
        from ..identification._core_geometry import core_constant
        from ..identification._core_material import core_material

        mat = core_material(sweep, core_constant(task.core), rdc=task.core.rdc_ohm, at=task.core_at)
        figs.update(mat.figures())
        for lf in mat.loss_factors:
            figs[figure_name("loss_factor", lf.f_hz)] = (lf.tan_delta_over_mu_i, lf.tan_delta_over_mu_i_std)
    if task.bead:
        from ..identification._bead import bead_figures

        figs.update(bead_figures(sweep, at=(), model=False).figures())
    return replace(summary, figures=figs)


#: How often a worker looks whether its parent is still there, in seconds.
_WATCH_PERIOD_S = 0.25


def _watch_parent(parent: int) -> None:
    # A parent killed with SIGKILL (or by the out-of-memory killer) cannot tell
    # its workers; they would wait for work on their pipe forever.  When the
    # parent dies, the worker is given to another process (init, a subreaper),
    # so its parent pid changes: then it ends at once, without cleanup that
    # could block on the dead parent's pipes.
    while True:
        time.sleep(_WATCH_PERIOD_S)
        if os.getppid() != parent:
            os._exit(1)


def worker_init() -> None:
    """Start a worker process: one BLAS thread (see `zfit.lot._threads`), and a
    watchdog that ends the worker when its parent process is gone."""
    blas_threads(1)
    threading.Thread(target=_watch_parent, args=(os.getppid(),), name="zfit-parent-watch", daemon=True).start()


def identify_chunk(tasks: Sequence[PartTask]) -> list[PartOutcome]:
    """Return the outcomes of a few parts, identified one after the other.

    Parameters
    ----------
    tasks : sequence of PartTask
        The parts.
    """
    return [identify_part(t) for t in tasks]

"""Reuse of an earlier run: a part whose stored result is up to date is not redone."""

from __future__ import annotations

import json
import os

from ._part_summary import PartSummary, part_summary_from_json
from ._tasks import PartTask

__all__ = ["reusable_summary"]


def _close(a: float, b: float) -> bool:
    return abs(a - b) <= 1e-9 * max(abs(a), abs(b))


def reusable_summary(task: PartTask, force: bool) -> PartSummary | None:
    """Return the summary of the stored result of `task`, or None when it must be redone.

    A stored result is reused when it is newer than the input (and the plot
    too, when one is asked), was written by this version of zfit, and covers
    what is asked (model, spot frequencies).

    Parameters
    ----------
    task : PartTask
        The part.
    force : bool
        Never reuse.
    """
    if force:
        return None
    try:
        t_in = os.stat(task.path).st_mtime_ns
        if os.stat(task.json_path).st_mtime_ns <= t_in:
            return None
        if task.plot_path is not None and os.stat(task.plot_path).st_mtime_ns <= t_in:
            return None
        with open(task.json_path, encoding="utf-8") as fh:
            result = json.load(fh)
    except (OSError, ValueError):
        return None
    if not isinstance(result, dict) or result.get("schema") != "zfit.identify/1":
        return None
    from .._version import __version__

    # Another version of zfit may identify differently: its result is redone.
    if result.get("zfit_version", __version__) != __version__:
        return None
    if task.model != "auto" and result.get("model") != task.model:
        return None
    have = [s.get("f_hz") for s in result.get("spot") or () if isinstance(s, dict)]
    for f in task.at:
        if not any(isinstance(h, (int, float)) and _close(f, h) for h in have):
            return None
    return part_summary_from_json(result)

"""Reuse of an earlier run: a part whose stored result is up to date is not redone.

Up to date means made from the same content: the key of a part is the
SHA-256 of its sweep's bytes and of every reading option (connection, noise
model, columns, port extension, the load value and the bytes of the fixture
files), so a sweep replaced by other data with an older modification time
(``cp -p``, an archive extracted) or a changed reading option is redone.
The key is stored beside the result in the batch's manifest
(`zfit.lot._manifest`).
"""

from __future__ import annotations

import dataclasses
import hashlib
import json
import os

from ._manifest import Manifest, file_sha256
from ._part_summary import PartSummary, part_summary_from_json
from ._tasks import PartTask, ReadOptions

__all__ = ["read_options_digest", "input_key", "reusable_summary"]

#: Fields of `ReadOptions` that name a file: their bytes enter the key, not only their name.
_FILE_OPTIONS = ("open_", "short", "load")


def _close(a: float, b: float) -> bool:
    return abs(a - b) <= 1e-9 * max(abs(a), abs(b))


def read_options_digest(read: ReadOptions) -> str:
    """Return the SHA-256 (hex) of every reading option, fixture files by their bytes.

    Parameters
    ----------
    read : ReadOptions
        How the sweeps are read.
    """
    doc = {}
    for f in dataclasses.fields(read):
        v = getattr(read, f.name)
        if f.name in _FILE_OPTIONS and v is not None:
            v = {"path": os.fspath(v), "sha256": file_sha256(v)}
        doc[f.name] = v
    return hashlib.sha256(json.dumps(doc, sort_keys=True).encode("utf-8")).hexdigest()


def input_key(path, options_digest: str) -> str | None:
    """Return the key of one part's input: its sweep's bytes and the reading options.

    None when the sweep cannot be read (the part is then always tried again).

    Parameters
    ----------
    path : str or os.PathLike
        The sweep file.
    options_digest : str
        `read_options_digest` of the run.
    """
    sha = file_sha256(path)
    if sha is None:
        return None
    return hashlib.sha256(f"zfit.batch-input/1\n{sha}\n{options_digest}".encode("ascii")).hexdigest()


def reusable_summary(task: PartTask, key: str | None, manifest: Manifest, force: bool) -> PartSummary | None:
    """Return the summary of the stored result of `task`, or None when it must be redone.

    A stored result is reused when the manifest lists it (and the plot, when
    one is asked) as written by the batch from an input of the same `key`,
    unchanged since; it is newer than the sweep (touching a sweep redoes
    it); it was written by this version of zfit; and it covers what is asked
    (model, spot frequencies).

    Parameters
    ----------
    task : PartTask
        The part.
    key : str or None
        `input_key` of the part's input now.
    manifest : Manifest
        The output folder's manifest.
    force : bool
        Never reuse.
    """
    if force or key is None or manifest.input_key(task.json_path) != key:
        return None
    if task.core is not None or task.bead:
        # The material figures (docs/cores.md) are not in the stored zfit.identify/1 file: redone.
        return None
    if not manifest.owns(task.json_path):
        return None
    if task.plot_path is not None and not (os.path.exists(task.plot_path) and manifest.owns(task.plot_path)):
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

"""The files a batch owns in its output folder, and the content they were made from.

An output folder may hold files of the user's (a ``summary.csv`` of their
own, notes): the batch replaces or removes only what it wrote itself.  It
keeps the list in ``.zfit-batch.json`` beside its results: each file's name
(relative to the folder), the SHA-256 of the bytes it wrote and, for a
part's result, the key of the input it was made from (`zfit.lot._reuse`).
A file whose bytes no longer match was changed by someone else and is the
user's again.  A file claimed before a run and not yet written has no hash
(``null``): an interrupted run leaves it claimed, and a rerun redoes it.
"""

from __future__ import annotations

import hashlib
import json
import os
import stat
from dataclasses import dataclass, field
from pathlib import Path
from typing import Iterable

from .._errors import OutputExistsError
from .._json import json_text

__all__ = ["MANIFEST_NAME", "Manifest", "file_sha256", "read_manifest", "manifest_text"]

#: The manifest of a run, in its output folder (hidden: it is not a result).
MANIFEST_NAME = ".zfit-batch.json"

_SCHEMA = "zfit.batch-manifest/1"

#: Read in pieces: a sweep or a plot can be large, memory stays flat.
_CHUNK = 1 << 20


def file_sha256(path) -> str | None:
    """Return the SHA-256 (hex) of a regular file's bytes, None when there is no regular file.

    A device or FIFO is never read (``/dev/zero`` has no end).
    """
    try:
        with open(path, "rb") as fh:
            if not stat.S_ISREG(os.fstat(fh.fileno()).st_mode):
                return None
            h = hashlib.sha256()
            for block in iter(lambda: fh.read(_CHUNK), b""):
                h.update(block)
    except OSError:
        return None
    return h.hexdigest()


@dataclass
class Manifest:
    """The files a batch owns in one output folder (mutable while the run goes on).

    Attributes
    ----------
    folder : pathlib.Path
        The output folder.
    files : dict
        Name relative to the folder (POSIX) -> ``{"sha256": hex or None, "input": key or None}``.
    """

    folder: Path
    files: dict = field(default_factory=dict)

    def name_of(self, path) -> str:
        """Return the manifest's name of `path` (relative to the folder)."""
        p = Path(path)
        try:
            return p.relative_to(self.folder).as_posix()
        except ValueError:
            return Path(os.path.relpath(p, self.folder)).as_posix()

    def owns(self, path) -> bool:
        """Whether the file at `path` is the batch's own: listed, and unchanged since written."""
        entry = self.files.get(self.name_of(path))
        if entry is None:
            return False
        return entry.get("sha256") is None or file_sha256(path) == entry.get("sha256")

    def input_key(self, path) -> str | None:
        """Return the key of the input the file at `path` was made from, None if unknown."""
        entry = self.files.get(self.name_of(path))
        return None if entry is None else entry.get("input")

    def refuse_foreign(self, paths: Iterable) -> None:
        """Raise `OutputExistsError` for the first of `paths` that exists and is not the batch's own."""
        for p in paths:
            if os.path.lexists(p) and not self.owns(p):
                raise OutputExistsError(p)

    def claim(self, paths: Iterable) -> None:
        """List `paths` as the batch's, about to be written (no hash yet)."""
        for p in paths:
            self.files[self.name_of(p)] = {"sha256": None, "input": None}

    def record(self, path, sha256: str | None, input_key: str | None = None) -> None:
        """List `path` as written with these bytes (and made from this input)."""
        self.files[self.name_of(path)] = {"sha256": sha256, "input": input_key}

    def remove_owned(self, paths: Iterable) -> list[Path]:
        """Delete those of `paths` the batch owns; return the paths deleted."""
        gone = []
        for p in paths:
            if os.path.lexists(p) and self.owns(p):
                try:
                    os.unlink(p)
                except OSError:
                    continue
                gone.append(Path(p))
            if not os.path.lexists(p):
                self.files.pop(self.name_of(p), None)
        return gone


def read_manifest(folder, force: bool = False) -> Manifest:
    """Return the manifest of an output folder (empty when there is none).

    Parameters
    ----------
    folder : str or os.PathLike
        The output folder.
    force : bool
        Whether a file in the manifest's place that is not a manifest may be
        replaced (else it is refused: it is not the batch's).

    Raises
    ------
    OutputExistsError
        When ``.zfit-batch.json`` exists but is not a batch manifest, and
        `force` is false.
    """
    folder = Path(folder)
    path = folder / MANIFEST_NAME
    if not os.path.lexists(path):
        return Manifest(folder)
    try:
        with open(path, encoding="utf-8") as fh:
            doc = json.load(fh)
    except (OSError, ValueError):
        doc = None
    files = doc.get("files") if isinstance(doc, dict) and doc.get("schema") == _SCHEMA else None
    if not isinstance(files, dict):
        if force:
            return Manifest(folder)
        raise OutputExistsError(path)
    clean = {}
    for name, entry in files.items():
        if isinstance(name, str) and isinstance(entry, dict):
            sha, key = entry.get("sha256"), entry.get("input")
            clean[name] = {"sha256": sha if isinstance(sha, str) else None,
                           "input": key if isinstance(key, str) else None}
    return Manifest(folder, clean)


def manifest_text(manifest: Manifest) -> str:
    """Return the manifest as JSON (``"schema": "zfit.batch-manifest/1"``), files sorted by name."""
    return json_text({"schema": _SCHEMA, "files": {k: manifest.files[k] for k in sorted(manifest.files)}})


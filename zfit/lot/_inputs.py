"""The sweep files of a lot: files, folders and glob patterns, and their output names."""

from __future__ import annotations

import glob
import os
from pathlib import Path
from typing import Sequence

from .._errors import ZfitInputError
from ..io._sweep_file import TABLE_EXTENSIONS, TOUCHSTONE_EXTENSIONS
from ._lot_files import LOT_JSON_NAME

__all__ = ["SWEEP_SUFFIXES", "expand_inputs", "output_names"]

#: File suffixes taken from a folder given as input: every kind the readers read.
SWEEP_SUFFIXES = (*TOUCHSTONE_EXTENSIONS, *TABLE_EXTENSIONS)


def _is_batch_output(folder: Path) -> bool:
    try:
        with open(folder / LOT_JSON_NAME, "rb") as fh:
            return b'"zfit.batch-lot/1"' in fh.read(256)
    except OSError:
        return False


def expand_inputs(inputs: Sequence, exclude=None) -> list[tuple[Path, str]]:
    """Return the sweep files named by `inputs`, sorted and without repeats.

    Parameters
    ----------
    inputs : sequence of str or os.PathLike
        Files, folders (searched recursively for `SWEEP_SUFFIXES`; hidden
        entries and the output folders of earlier runs skipped) and glob
        patterns (``lot7/*.s1p``, ``**`` allowed).
    exclude : str or os.PathLike, optional
        A folder whose content is never taken (the output folder).

    Returns
    -------
    list of (pathlib.Path, str)
        The absolute path and the name shown in the summary (as given, or
        the folder joined with the file's relative path), sorted by name.

    Raises
    ------
    ZfitInputError
        When an input names nothing that exists, or no sweep file is found.
    """
    ex = None if exclude is None else Path(exclude).resolve()
    found: dict[Path, str] = {}

    def take(path: Path, name: str):
        resolved = path.resolve()
        if ex is not None and (resolved == ex or ex in resolved.parents):
            return
        found.setdefault(resolved, Path(name).as_posix())

    for item in inputs:
        text = os.fspath(item)
        p = Path(text)
        if p.is_dir():
            for root, dirs, files in os.walk(p):
                if LOT_JSON_NAME in files and _is_batch_output(Path(root)):
                    dirs[:] = []  # an earlier run's output folder: its CSVs are not sweeps
                    continue
                dirs[:] = sorted(d for d in dirs if not d.startswith("."))
                for fn in sorted(files):
                    if not fn.startswith(".") and Path(fn).suffix.lower() in SWEEP_SUFFIXES:
                        full = Path(root) / fn
                        take(full, str(full))
        elif p.is_file():
            take(p, text)
        elif glob.has_magic(text):
            hits = sorted(glob.glob(text, recursive=True))
            files = [h for h in hits if Path(h).is_file()]
            if not files:
                raise ZfitInputError(f"no file matches the pattern {text!r}")
            for h in files:
                take(Path(h), h)
        else:
            raise ZfitInputError("no such file or folder", text)
    if not found:
        raise ZfitInputError(
            f"no sweep files found in {', '.join(os.fspath(i) for i in inputs)} "
            f"(looked for {', '.join(SWEEP_SUFFIXES)})")
    return sorted(((p, n) for p, n in found.items()), key=lambda pn: (pn[1], str(pn[0])))


def output_names(items: Sequence[tuple[Path, str]]) -> list[str]:
    """Return the output stems, one per input: the path relative to the inputs' common
    folder, without its suffix (with it where two inputs would collide)."""
    paths = [p for p, _ in items]
    root = Path(os.path.commonpath([str(p.parent) for p in paths])) if paths else Path(".")
    rels = [p.relative_to(root) for p in paths]
    plain = [r.with_suffix("").as_posix() for r in rels]
    count: dict[str, int] = {}
    for p in plain:
        count[p] = count.get(p, 0) + 1
    return [plain[i] if count[plain[i]] == 1 else rels[i].as_posix() for i in range(len(rels))]

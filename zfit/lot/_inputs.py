"""The sweep files of a lot: files, folders and glob patterns, and their output names."""

from __future__ import annotations

import glob
import os
from pathlib import Path
from typing import Sequence

from .._errors import ZfitInputError
from ..io._sweep_file import TABLE_EXTENSIONS, TOUCHSTONE_EXTENSIONS
from ._lot_files import LOT_CSV_NAME, LOT_JSON_NAME, SUMMARY_NAME
from ._manifest import MANIFEST_NAME, read_manifest

__all__ = ["SWEEP_SUFFIXES", "batch_outputs", "expand_inputs", "output_names"]

#: File suffixes taken from a folder given as input: every kind the readers read.
SWEEP_SUFFIXES = (*TOUCHSTONE_EXTENSIONS, *TABLE_EXTENSIONS)


def _is_batch_output(folder: Path) -> bool:
    try:
        with open(folder / LOT_JSON_NAME, "rb") as fh:
            return b'"zfit.batch-lot/1"' in fh.read(256)
    except OSError:
        return False


def batch_outputs(folder) -> set[Path]:
    """Return the files of a batch's output folder that are the batch's own (resolved paths).

    Those its manifest lists, and the summary files of a folder whose
    ``lot.json`` is a batch's (also of a run before manifests were kept).
    """
    folder = Path(folder)
    own: set[Path] = set()
    if (folder / MANIFEST_NAME).is_file():
        try:
            own |= {(folder / name).resolve() for name in read_manifest(folder).files}
        except ZfitInputError:
            pass
        own.add((folder / MANIFEST_NAME).resolve())
    if _is_batch_output(folder):
        own |= {(folder / n).resolve() for n in (SUMMARY_NAME, LOT_CSV_NAME, LOT_JSON_NAME)}
    return own


def expand_inputs(inputs: Sequence, exclude=None) -> list[tuple[Path, str]]:
    """Return the sweep files named by `inputs`, sorted and without repeats.

    Parameters
    ----------
    inputs : sequence of str or os.PathLike
        Files, folders (searched recursively for `SWEEP_SUFFIXES`; hidden
        entries skipped) and glob
        patterns (``lot7/*.s1p``, ``**`` allowed).  The files a batch wrote
        (`batch_outputs`: ``summary.csv`` is a table too) are never taken.
    exclude : str or os.PathLike, optional
        The output folder of this run: its own files are never taken, the
        sweeps in it are (it may lie above the inputs).

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
    own: set[Path] = set() if exclude is None else batch_outputs(exclude)
    looked: set[Path] = set()
    passed_over: list[str] = []
    found: dict[Path, str] = {}

    def take(path: Path, name: str):
        resolved = path.resolve()
        if resolved.parent not in looked:
            looked.add(resolved.parent)
            own.update(batch_outputs(resolved.parent))
        if resolved in own:
            passed_over.append(Path(name).as_posix())
            return
        found.setdefault(resolved, Path(name).as_posix())

    for item in inputs:
        text = os.fspath(item)
        p = Path(text)
        if p.is_dir():
            for root, dirs, files in os.walk(p):
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
        where = ", ".join(os.fspath(i) for i in inputs)
        if passed_over:
            shown = ", ".join(passed_over[:3]) + (f" and {len(passed_over) - 3} more" if len(passed_over) > 3 else "")
            raise ZfitInputError(
                f"no sweep files found in {where}: {shown} {'is' if len(passed_over) == 1 else 'are'} "
                f"written by zfit batch, not sweeps")
        raise ZfitInputError(f"no sweep files found in {where} (looked for {', '.join(SWEEP_SUFFIXES)})")
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

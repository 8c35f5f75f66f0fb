"""The sweeps of a bias set and the DC bias of each: from a list, a manifest or the file names.

Three ways a bench records the bias of each sweep, each checked so that a
sweep never gets another sweep's bias silently:

* a list (``--bias 0,0.5,1,2``) in the order of the files as given (a
  glob's or a folder's matches in natural order: ``L_2A`` before ``L_10A``);
* a column of a manifest CSV (a ``file`` column, paths relative to the
  manifest, and the bias column);
* a regular expression with a group named ``bias`` searched in each file
  name (``L_(?P<bias>[0-9.]+)A``); ``0p5`` is read as 0.5, as file names write it.
"""

from __future__ import annotations

import csv
import io
import math
import os
import re
from dataclasses import dataclass
from pathlib import Path
from typing import Sequence

from .._errors import ZfitInputError
from .._units import parse_quantity
from ._inputs import expand_inputs

__all__ = ["BiasPoint", "bias_unit", "natural_key", "set_files", "bias_points"]

_PREFIX = {"": 1.0, "p": 1e-12, "n": 1e-9, "u": 1e-6, "µ": 1e-6, "m": 1e-3, "k": 1e3}


@dataclass(frozen=True)
class BiasPoint:
    """One sweep of the set and its DC bias.

    Attributes
    ----------
    path : pathlib.Path
        The sweep file (absolute).
    name : str
        The file as the user named it.
    bias : float
        The DC bias in SI units (A or V).
    """

    path: Path
    name: str
    bias: float


def bias_unit(text: str, what: str = "--bias-unit") -> tuple[float, str]:
    """Return (scale to SI, SI unit) of a bias unit such as ``A``, ``mA``, ``V``, ``kV``."""
    t = (text or "").strip()
    m = re.fullmatch(r"([pnuµmk]?)([AV])", t)
    if not m:
        raise ZfitInputError(f"{what} {text!r}: give a current (A, mA, uA) or a voltage (V, mV, kV)")
    return _PREFIX[m.group(1)], m.group(2)


def natural_key(name: str) -> tuple:
    """Sort key comparing runs of digits as numbers (``L_2A`` before ``L_10A``)."""
    return tuple((0, float(p), "") if p[:1].isdigit() else (1, 0.0, p)
                 for p in re.split(r"(\d+(?:\.\d+)?)", name) if p)


def set_files(inputs: Sequence) -> list[tuple[Path, str]]:
    """Return the sweep files of `inputs` in the order given (each glob or folder in natural order).

    Raises
    ------
    ZfitInputError
        For no inputs, an input naming nothing, or a file named twice.
    """
    if not inputs:
        raise ZfitInputError("no sweep files: give the files (or a glob, a folder) of the set")
    out: list[tuple[Path, str]] = []
    seen: dict[Path, str] = {}
    for item in inputs:
        found = sorted(expand_inputs([item]), key=lambda pn: natural_key(pn[1]))
        for path, name in found:
            if path in seen:
                raise ZfitInputError(f"named twice in the set (also as {seen[path]})", name)
            seen[path] = name
            out.append((path, name))
    return out


def _value(text: str, scale: float, what: str, where) -> float:
    t = text.strip()
    if re.fullmatch(r"\d+p\d+", t):
        t = t.replace("p", ".")
    try:
        x = parse_quantity(t, what) * scale
    except ZfitInputError as exc:
        raise ZfitInputError(exc.message, where) from None
    if not math.isfinite(x) or x < 0:
        raise ZfitInputError(f"{what} {text!r}: a bias is a magnitude, 0 or more", where)
    return x


def _from_list(files, values: Sequence[str], scale: float) -> list[BiasPoint]:
    if len(values) != len(files):
        shown = ", ".join(n for _, n in files[:3]) + (" ..." if len(files) > 3 else "")
        raise ZfitInputError(f"--bias has {len(values)} value(s) but the set has {len(files)} file(s) ({shown})")
    return [BiasPoint(p, n, _value(v, scale, "--bias", n)) for (p, n), v in zip(files, values)]


def _from_name(files, pattern: str, scale: float) -> list[BiasPoint]:
    try:
        rx = re.compile(pattern)
    except re.error as exc:
        raise ZfitInputError(f"--bias-from-name {pattern!r}: not a regular expression ({exc})") from None
    if "bias" not in rx.groupindex:
        raise ZfitInputError(f"--bias-from-name {pattern!r}: needs a group named bias, e.g. 'L_(?P<bias>[0-9.]+)A'")
    out = []
    for p, n in files:
        m = rx.search(Path(n).name)
        if m is None or m.group("bias") is None:
            raise ZfitInputError(f"the file name does not match --bias-from-name {pattern!r}", n)
        out.append(BiasPoint(p, n, _value(m.group("bias"), scale, "bias in the file name", n)))
    return out


def _header_unit(header: str) -> str | None:
    m = re.search(r"[\[(]\s*([^\])]+?)\s*[\])]\s*$", header)
    return m.group(1) if m else None


def _from_manifest(files, manifest: Path, column: str, unit: str | None) -> tuple[list[BiasPoint], str]:
    try:
        text = manifest.read_bytes().decode("utf-8-sig")
    except OSError as exc:
        raise ZfitInputError(f"cannot read the manifest: {exc.strerror or exc}", manifest) from None
    except UnicodeDecodeError:
        raise ZfitInputError("not UTF-8 text: a manifest is a CSV file", manifest) from None
    rows = [r for r in csv.reader(io.StringIO(text)) if r and any(c.strip() for c in r)]
    if not rows:
        raise ZfitInputError("empty manifest: give a header with a file column and a bias column", manifest)
    header = [h.strip() for h in rows[0]]
    bare = [re.sub(r"\s*[\[(].*$", "", h).lower() for h in header]
    if "file" not in bare:
        raise ZfitInputError(f"no 'file' column in the header ({', '.join(header)})", manifest, 1)
    if column.lower() not in bare:
        raise ZfitInputError(f"no bias column {column!r} in the header ({', '.join(header)}); "
                             f"name it with --bias-column", manifest, 1)
    fi, bi = bare.index("file"), bare.index(column.lower())
    written = _header_unit(header[bi])
    if written is not None and unit is not None and bias_unit(written, "unit in the header") != bias_unit(unit):
        raise ZfitInputError(f"the bias column is in {written} but --bias-unit is {unit}", manifest, 1)
    unit = unit or written
    if unit is None:
        raise ZfitInputError(f"the unit of the bias column {header[bi]!r} is not stated: "
                             f"write it in the header ('{column} (A)') or give --bias-unit", manifest, 1)
    scale, si = bias_unit(unit, "unit in the header")
    folder = manifest.resolve().parent
    by_path: dict[Path, tuple[str, int, str]] = {}
    for line, r in enumerate(rows[1:], start=2):
        if max(fi, bi) >= len(r):
            raise ZfitInputError(f"the row has {len(r)} column(s), the header {len(header)}", manifest, line)
        p = (folder / r[fi].strip()).resolve()
        if p in by_path:
            raise ZfitInputError(f"{r[fi].strip()} is listed twice (first on line {by_path[p][1]})", manifest, line)
        by_path[p] = (r[bi], line, r[fi].strip())
    if not files:
        files = [(p, os.path.relpath(p)) for p in by_path]
        for p, n in files:
            if not p.is_file():
                raise ZfitInputError(f"no such file (listed on line {by_path[p][1]} of {manifest})", n)
    out = []
    for p, n in files:
        if p not in by_path:
            raise ZfitInputError(f"not listed in the manifest {manifest}", n)
        val, line, _ = by_path[p]
        out.append(BiasPoint(p, n, _value(val, scale, f"bias {column!r}", f"{manifest}:{line}")))
    return out, si


def bias_points(inputs: Sequence, *, bias: Sequence[str] | None = None, manifest=None,
                column: str = "bias", from_name: str | None = None, unit: str | None = None
                ) -> tuple[tuple[BiasPoint, ...], str]:
    """Return the sweeps of the set with their biases, ascending in bias, and the bias unit (A or V).

    Parameters
    ----------
    inputs : sequence of str
        Files, globs, folders; may be empty with a manifest (its files are taken).
    bias : sequence of str, optional
        One bias per file, in the order of the files.
    manifest : str or os.PathLike, optional
        A CSV with a ``file`` column and the bias column.
    column : str
        The manifest's bias column.
    from_name : str, optional
        A regular expression with a group named ``bias``.
    unit : str, optional
        The unit of the biases (``A``, ``mA``, ``V``); a manifest may state it in its header.

    Raises
    ------
    ZfitInputError
        Naming the file: no files, a list whose length is not the number of
        files, a pattern without a ``bias`` group or a name it does not
        match, a file the manifest does not list, a bias given twice, none
        or more than one source of biases.
    """
    given = [s for s, on in (("--bias", bias), ("--manifest", manifest), ("--bias-from-name", from_name)) if on]
    if len(given) != 1:
        raise ZfitInputError("give the bias of each sweep one way: --bias, --manifest or --bias-from-name"
                             + (f" (got {', '.join(given)})" if given else ""))
    if manifest is not None:
        files = set_files(inputs) if inputs else []
        points, si = _from_manifest(files, Path(manifest), column, unit)
    else:
        if unit is None:
            raise ZfitInputError("give the unit of the biases with --bias-unit (A, mA, V ...)")
        scale, si = bias_unit(unit)
        files = set_files(inputs)
        points = _from_list(files, bias, scale) if bias else _from_name(files, from_name, scale)
    if len(points) < 3:
        raise ZfitInputError(f"a bias set needs at least 3 sweeps, got {len(points)}")
    first: dict[float, str] = {}
    for p in points:
        if p.bias in first:
            raise ZfitInputError(f"bias {p.bias:g} {si} is given twice (also for {first[p.bias]})", p.name)
        first[p.bias] = p.name
    return tuple(sorted(points, key=lambda p: p.bias)), si

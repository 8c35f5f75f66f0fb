"""Oscilloscope captures: read from a scope's export (text, ``.npy``, ``.npz``) into a `Capture`.

A capture is a set of channels sampled on one uniform time grid
``t0 + k dt`` (`zfit.io._capture_record`).  Text exports are read by
`zfit.io._capture_text` (layout, metadata, the numeric block), their time
base by `zfit.io._capture_time`; this module dispatches on the file kind and
reads the binary arrays.
"""

from __future__ import annotations

import math
import re
import warnings
from pathlib import Path

import numpy as np

from .._errors import ZfitInputError
from ._capture_record import MIN_SAMPLES, Capture, check_finite, clipped_fraction, make_capture
from ._capture_text import read_capture_text
from ._capture_time import uniform_time

__all__ = ["Capture", "make_capture", "read_capture", "clipped_fraction", "MIN_SAMPLES"]


#: Memory a binary capture may take once loaded: 2 GiB, 268 million float64
#: samples, beyond the record length of bench oscilloscopes (common practice);
#: a header or archive that declares more is refused before anything is read.
MEMORY_BUDGET_BYTES = 2 * 1024**3


def _npy_header(fh, what: str, path, stored_bytes: int | None):
    """Shape, Fortran order and dtype of a ``.npy`` stream, checked before its data is read.

    The declared size must fit `MEMORY_BUDGET_BYTES` and, when the stored
    size is known (the file's, or the archive member's), match it: a header
    that claims more than the bytes behind it is a damaged or hostile file.
    """
    from numpy.lib import format as npy

    try:
        version = npy.read_magic(fh)
        reader = npy.read_array_header_1_0 if version == (1, 0) else npy.read_array_header_2_0
        with warnings.catch_warnings():
            # numpy's note that a header needed its Python 2 parser is not news to the
            # user: the header is checked below like any other.
            warnings.simplefilter("ignore", UserWarning)
            shape, fortran, dtype = reader(fh, max_header_size=10000)
    except (ValueError, OSError, EOFError, SyntaxError, TypeError):
        raise ZfitInputError(f"{what} is not a numpy .npy array (no readable numpy header)", path) from None
    if not all(isinstance(k, int) and k >= 0 for k in shape):
        raise ZfitInputError(f"{what} declares shape {shape}: not a shape of an array (damaged header)", path)
    if dtype.hasobject:
        raise ZfitInputError(f"{what} holds Python objects, not numbers: zfit reads numeric arrays only", path)
    n = math.prod(shape)
    declared = n * dtype.itemsize
    if declared > MEMORY_BUDGET_BYTES:
        raise ZfitInputError(
            f"{what} declares shape {shape} of {dtype} ({declared / 2**30:.3g} GiB), beyond the "
            f"{MEMORY_BUDGET_BYTES / 2**30:.3g} GiB zfit loads; split the record", path)
    if stored_bytes is not None and stored_bytes - fh.tell() != declared:
        raise ZfitInputError(
            f"{what} declares shape {shape} of {dtype} ({declared} bytes) but holds {max(stored_bytes - fh.tell(), 0)} "
            "bytes of data: truncated or damaged; copy it again", path)
    return shape, fortran, dtype


def _read_npy(path: Path, dt_given, t0_given):
    with open(path, "rb") as fh:
        _npy_header(fh, "the file", path, path.stat().st_size)
    try:
        a = np.load(path, allow_pickle=False)
    except (ValueError, OSError, EOFError):
        raise ZfitInputError("cannot read the numpy array (damaged file)", path) from None
    a = _numeric(a, "the array", path)
    if a.ndim == 1:
        a = a[:, None]
    if a.ndim != 2:
        raise ZfitInputError(f"expected a 1-D or 2-D array, got shape {a.shape}", path)
    if a.shape[0] < a.shape[1]:
        a = a.T  # channels along the first axis: one row per channel
    cols = [a[:, j] for j in range(a.shape[1])]
    notes = []
    t0 = 0.0
    if dt_given is None:
        if len(cols) < 2:
            raise ZfitInputError("a single column and no sample interval; give dt", path)
        dt, t0, tn = uniform_time(cols[0], path, 1)
        notes.extend(["column 1 of the array is time"] + tn)
        cols, first = cols[1:], 2
    else:
        dt, first = float(dt_given), 1
    if t0_given is not None:
        t0 = float(t0_given)
    names = [f"col{first + j}" for j in range(len(cols))]
    return make_capture(dict(zip(names, cols)), dt, t0=t0, source=str(path), notes=notes,
                        file_columns=list(range(first, first + len(cols))))


def _numeric(a, what: str, path) -> np.ndarray:
    """`a` as float, or a one-line error when it holds text or objects."""
    a = np.asarray(a)
    if not (np.issubdtype(a.dtype, np.number) or a.dtype == bool) or np.issubdtype(a.dtype, np.complexfloating):
        raise ZfitInputError(f"{what} holds {a.dtype} values, not real numbers (voltages or times)", path)
    return a.astype(float, copy=False)


def _npz_arrays(path: Path) -> dict:
    """The arrays of a ``.npz`` archive, each member's header checked before it is inflated.

    A zip archive declares each member's uncompressed size; a compressed
    archive of a few megabytes can declare gigabytes of zeros (a "zip
    bomb").  Every member must be a ``.npy`` whose header matches its size,
    and all of them together must fit `MEMORY_BUDGET_BYTES`.
    """
    import zipfile

    try:
        with zipfile.ZipFile(path) as zf:
            members = zf.infolist()
            total = sum(m.file_size for m in members)
            if total > MEMORY_BUDGET_BYTES:
                raise ZfitInputError(
                    f"the archive declares {total / 2**30:.3g} GiB of arrays, beyond the "
                    f"{MEMORY_BUDGET_BYTES / 2**30:.3g} GiB zfit loads", path)
            out = {}
            for m in members:
                name = m.filename[:-4] if m.filename.endswith(".npy") else m.filename
                with zf.open(m) as fh:
                    shape, fortran, dtype = _npy_header(fh, f"array {name!r}", path, m.file_size)
                    data = fh.read()
                a = np.frombuffer(data, dtype=dtype, count=math.prod(shape))
                out[name] = a.reshape(shape, order="F" if fortran else "C").copy()
            return out
    except ZfitInputError:
        raise
    except (zipfile.BadZipFile, zipfile.LargeZipFile, EOFError, OSError, ValueError, NotImplementedError):
        raise ZfitInputError("cannot read as a numpy archive (.npz): the zip file is truncated or damaged; "
                             "copy it again", path) from None


def _read_npz(path: Path, dt_given, t0_given):
    z = _npz_arrays(path)
    keys = list(z)
    lower = {k.lower(): k for k in keys}
    tkey = next((lower[k] for k in ("t", "time", "time_s", "t_s") if k in lower), None)
    dkey = next((lower[k] for k in ("dt", "dt_s", "sample_interval", "sample_interval_s") if k in lower), None)
    okey = next((lower[k] for k in ("t0", "t0_s", "start", "start_s") if k in lower), None)
    notes = []
    t0 = float(_numeric(z[okey], f"array {okey!r}", path).ravel()[0]) if okey else 0.0
    if dt_given is not None:
        dt = float(dt_given)
    elif dkey is not None:
        dt = float(_numeric(z[dkey], f"array {dkey!r}", path).ravel()[0])
        notes.append(f"sample interval from the array {dkey!r}")
    elif tkey is not None:
        dt, t0, tn = uniform_time(_numeric(z[tkey], f"array {tkey!r}", path).ravel(), path, None)
        notes.extend(tn)
    else:
        raise ZfitInputError("no time array ('t') and no sample interval ('dt') in the archive; give dt", path)
    if t0_given is not None:
        t0 = float(t0_given)
    chans = {}
    for k in keys:
        if k in (tkey, dkey, okey):
            continue
        v = np.asarray(z[k])
        if v.size <= 1:
            continue  # a scalar: metadata of the export (a scale, a units text), not a channel
        if v.ndim != 1:
            raise ZfitInputError(f"array {k!r} has shape {v.shape}: a channel is one row of samples (1-D)", path)
        chans[k] = _numeric(v, f"array {k!r}", path)
    return make_capture(chans, dt, t0=t0, source=str(path), notes=notes)


def _refuse_sweep_table(path: Path) -> None:
    """Refuse an analyser table (a header starting with a frequency column over rows of numbers)."""
    with open(path, "rb") as fh:
        lines = fh.read(8192).decode("latin-1").splitlines()[:60]
    for i in range(len(lines) - 1):
        head = [c.strip().strip('"').lower() for c in re.split(r"[,;\t]", lines[i])]
        if len(head) < 3 or not (head[0].startswith("freq") or re.fullmatch(r"f(\s*[\[(/_].*)?", head[0])):
            continue
        row = [c.strip() for c in re.split(r"[,;\t]", lines[i + 1])]
        try:
            [float(c.replace(",", ".")) for c in row if c]
        except ValueError:
            continue
        if len(row) == len(head) and not any(c.startswith(("time", "t [", "t(", "t/", "t_")) or c == "t" for c in head):
            first = re.split(r"[,;\t]", lines[i])[0].strip().strip('"')
            raise ZfitInputError(f"the header starts with a frequency column ({first!r}): "
                                 "this is an analyser sweep, not an oscilloscope capture; analyse it with "
                                 "'zfit identify'", path, i + 1)


def read_capture(path, *, dt: float | None = None, t0: float | None = None, time_column=None,
                 delimiter: str | None = None, accelerate: bool | None = None) -> Capture:
    """Return the capture stored in an oscilloscope export.

    Text files: optional metadata lines (``key,value``, ``key: value`` or
    ``key = value``), an optional header of channel names (and an optional
    units row under it), then rows of numbers separated by commas,
    semicolons, tabs or white space (a decimal comma is recognised with
    semicolon or tab separators).  A column named like time, or else the
    first column when no sample interval is given, is the time; otherwise the
    sample interval (and start time) come from the metadata (a sample interval,
    increment or time step, or a sample rate) or from `dt`.  ``.npy``: a 2-D
    array whose first column is time (or all channels when `dt` is given).
    ``.npz``: 1-D arrays, one per channel, plus ``t`` or ``dt`` (and ``t0``).

    Parameters
    ----------
    path : str or os.PathLike
        The file.
    dt : float, optional
        Sample interval in s; needed when the file has neither a time column
        nor the interval in its header, and then all columns are channels.
    t0 : float, optional
        Time of the first sample in s (overrides the file's).
    time_column : int, str or False, optional
        The time column by 1-based number or name; False when the file has
        none.  Default: guessed from the header.
    delimiter : str, optional
        Field separator; guessed when omitted.
    accelerate : bool or None
        Use pandas' C reader for the numeric block when pandas is importable
        (faster than numpy's ``loadtxt``, which is used otherwise); None
        (default) does so for files above 32 MB, where the faster parse pays
        for importing pandas.

    Returns
    -------
    Capture

    Raises
    ------
    ZfitInputError
        When the file cannot be read as a capture: no numeric block, a row
        with the wrong number of fields (named by line), time steps that are
        not uniform (missing, repeated or drifting samples), non-finite
        samples, too few samples, no time base.

    Warns
    -----
    MeasurementWarning
        When the time steps jitter by more than 2 % rms of the interval.
    """
    path = Path(path)
    if dt is not None and not (math.isfinite(float(dt)) and float(dt) > 0):
        raise ZfitInputError(f"sample interval {dt!r} is not a positive number", path)
    if not path.is_file():
        raise ZfitInputError("no such file" if not path.exists() else "is not a file", path)
    suffix = path.suffix.lower()
    if re.fullmatch(r"\.[syzgh]\d+p|\.ts", suffix):
        raise ZfitInputError("is a Touchstone sweep, not an oscilloscope capture: analyse it with "
                             "'zfit identify' (or look at it with 'zfit info')", path)
    if suffix not in (".npy", ".npz"):
        _refuse_sweep_table(path)
    if suffix == ".npy":
        return _read_npy(path, dt, t0)
    if suffix == ".npz":
        return _read_npz(path, dt, t0)
    return read_capture_text(path, delimiter, None if dt is None else float(dt), t0, time_column, accelerate)

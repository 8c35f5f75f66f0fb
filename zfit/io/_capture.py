"""Oscilloscope captures: uniformly sampled channels read from a scope's export.

A capture is a set of channels sampled on one uniform time grid
``t0 + k dt``.  Oscilloscopes export it as delimited text (metadata lines,
a header with the channel names, then a time column and one column per
channel, or no time column and the sample interval in the metadata) or as
binary arrays.  The numeric block of a text file is parsed by numpy's C
reader (``numpy.loadtxt``, C-implemented since numpy 1.23; pandas' C
tokenizer instead for large files when pandas is importable, being faster
still; numpy's ``fromstring`` over translated chunks for decimal commas and
to name the line of a bad row): no Python loop touches a line of
the data, so that records of ten million samples per channel read in seconds.
"""

from __future__ import annotations

import math
import re
import types
import warnings
from dataclasses import dataclass, field
from pathlib import Path
from typing import Mapping

import numpy as np

from .._errors import MeasurementWarning, ZfitInputError
from .._units import format_eng

__all__ = ["Capture", "make_capture", "read_capture", "clipped_fraction", "MIN_SAMPLES"]

#: A record shorter than this cannot hold an edge with its settled levels.
MIN_SAMPLES = 16

# Parse this many bytes of the numeric block at a time: large enough that the
# per-chunk overhead vanishes, small enough that the translated copy of the
# chunk stays a few percent of the parsed arrays.
_CHUNK_BYTES = 1 << 24
# Above this size the import of pandas pays for itself (see docs/perf_capture.md).
_PANDAS_MIN_BYTES = 32 << 20
# How much of the start of a text file is searched for the metadata and the header.
_HEAD_BYTES = 1 << 16
# Time steps may scatter around the mean by this much (rms, relative to dt)
# before a warning says so; scope time bases are far better than this, so a
# larger scatter means a logger with a jittery clock or a file pieced together.
_JITTER_WARN = 0.02


@dataclass(frozen=True)
class Capture:
    """Channels sampled on one uniform time grid.

    Attributes
    ----------
    t0 : float
        Time of the first sample in s.
    dt : float
        Sample interval in s (positive).
    channels : Mapping[str, numpy.ndarray]
        Voltage of each channel in V, 1-D float arrays of one length, read-only.
    names : tuple of str
        Channel names in file order (the keys of `channels`).
    source : str
        The file the capture came from, or a description.
    notes : tuple of str
        What the reader understood or assumed (sample interval from the
        header, time column printed coarsely, ...).
    file_columns : tuple of int
        The 1-based column of the file each channel came from, so that a
        channel can be chosen by the column number the user sees in the file.
    """

    t0: float
    dt: float
    channels: Mapping[str, np.ndarray]
    names: tuple[str, ...]
    source: str = ""
    notes: tuple[str, ...] = ()
    file_columns: tuple[int, ...] = field(default=())

    def __post_init__(self):
        chans = {}
        for name in self.names:
            a = np.asarray(self.channels[name], dtype=float)
            if a.flags.writeable:
                a = a.view()
                a.flags.writeable = False
            chans[name] = a
        object.__setattr__(self, "channels", types.MappingProxyType(chans))
        if not self.file_columns:
            object.__setattr__(self, "file_columns", tuple(range(1, len(self.names) + 1)))

    @property
    def n_samples(self) -> int:
        """Number of samples per channel."""
        return int(next(iter(self.channels.values())).size) if self.channels else 0

    @property
    def sample_rate_hz(self) -> float:
        """Sample rate ``1/dt`` in Hz."""
        return 1.0 / self.dt

    @property
    def duration_s(self) -> float:
        """Length of the record ``n dt`` in s."""
        return self.n_samples * self.dt

    def time(self) -> np.ndarray:
        """Return the sample times ``t0 + k dt`` in s."""
        return self.t0 + self.dt * np.arange(self.n_samples)

    def channel_name(self, key) -> str:
        """Return the name of the channel that `key` designates.

        Parameters
        ----------
        key : str or int
            A channel name (case-insensitive), or the 1-based column number
            in the file (``"2"`` or ``2``).

        Raises
        ------
        ZfitInputError
            When no channel matches.
        """
        if isinstance(key, str):
            text = key.strip()
            for name in self.names:
                if name == text:
                    return name
            for name in self.names:
                if name.lower() == text.lower():
                    return name
            if not re.fullmatch(r"\d+", text):
                raise ZfitInputError(
                    f"no channel named {key!r}; the channels are {', '.join(self.names)} "
                    f"(columns {', '.join(map(str, self.file_columns))})",
                    self.source,
                )
            key = int(text)
        key = int(key)
        for name, col in zip(self.names, self.file_columns):
            if col == key:
                return name
        raise ZfitInputError(
            f"column {key} is not a voltage channel; the channels are "
            + ", ".join(f"{c}={n}" for n, c in zip(self.names, self.file_columns)),
            self.source,
        )

    def channel(self, key) -> np.ndarray:
        """Return the samples of the channel that `key` designates (see `channel_name`).

        Parameters
        ----------
        key : str or int
            Channel name or 1-based file column.
        """
        return self.channels[self.channel_name(key)]


def make_capture(channels, dt, *, t0: float = 0.0, names=None, source: str = "", notes=(), file_columns=()) -> Capture:
    """Return a validated `Capture` from arrays.

    Parameters
    ----------
    channels : Mapping[str, array_like] or sequence of array_like
        The voltage of each channel in V, all of one length.
    dt : float
        Sample interval in s.
    t0 : float
        Time of the first sample in s.
    names : sequence of str, optional
        Channel names when `channels` is a sequence (default ``CH1``, ``CH2``, ...).
    source : str
        Where the data came from, used in messages.
    notes : sequence of str
        Notes kept in the capture.
    file_columns : sequence of int
        The 1-based file column of each channel (default 1, 2, ...).

    Raises
    ------
    ZfitInputError
        On a non-positive or non-finite interval, channels of different
        lengths, fewer than `MIN_SAMPLES` samples or non-finite samples.
    """
    if isinstance(channels, Mapping):
        names = tuple(str(k) for k in channels)
        arrays = [channels[k] for k in channels]
    else:
        arrays = list(channels)
        names = tuple(names) if names is not None else tuple(f"CH{i + 1}" for i in range(len(arrays)))
    if not arrays:
        raise ZfitInputError("the capture has no voltage channel", source)
    if len(set(names)) != len(names):
        raise ZfitInputError(f"channel names repeat: {', '.join(names)}", source)
    dt = float(dt)
    if not (math.isfinite(dt) and dt > 0):
        raise ZfitInputError(f"sample interval {dt!r} s is not a positive number", source)
    if not math.isfinite(float(t0)):
        raise ZfitInputError("start time is not a finite number", source)
    arrs = []
    for name, a in zip(names, arrays):
        a = np.asarray(a, dtype=float)
        if a.ndim != 1:
            raise ZfitInputError(f"channel {name}: expected a 1-D array of samples, got shape {a.shape}", source)
        arrs.append(a)
    n = arrs[0].size
    for name, a in zip(names, arrs):
        if a.size != n:
            raise ZfitInputError(f"channel {name} has {a.size} samples where {names[0]} has {n}", source)
    if n < MIN_SAMPLES:
        raise ZfitInputError(f"only {n} samples; at least {MIN_SAMPLES} are needed", source)
    for name, a in zip(names, arrs):
        _check_finite(a, name, source)
    return Capture(float(t0), dt, dict(zip(names, arrs)), names, source=str(source), notes=tuple(notes),
                   file_columns=tuple(file_columns))


#: Largest magnitude taken as a sample (V, or A through a current probe): a
#: value beyond it is a unit or column mistake, and would overflow the
#: spectra (squares of 1e300 are infinite).
MAX_SAMPLE = 1e12


def _check_finite(a: np.ndarray, name: str, source, first_line: int | None = None):
    # The sum is finite exactly when every sample is (barring overflow, which
    # the exact scan below then sorts out): one fast pass for the usual case.
    if a.size and math.isfinite(float(np.sum(a))):
        if max(float(a.max()), -float(a.min())) <= MAX_SAMPLE:
            return
    # Block-wise, so that a 10-million-sample channel needs no 10-million bool temporary.
    step = 1 << 20
    for i in range(0, a.size, step):
        bad = ~np.isfinite(a[i:i + step])
        if bad.any():
            k = i + int(np.flatnonzero(bad)[0])
            line = None if first_line is None else first_line + k
            where = "" if line is not None else f" (sample {k})"
            raise ZfitInputError(f"channel {name}: sample is not a finite number (NaN, inf or an overrange mark){where}",
                                 source, line)
    for i in range(0, a.size, step):
        big = np.abs(a[i:i + step]) > MAX_SAMPLE
        if big.any():
            k = i + int(np.flatnonzero(big)[0])
            line = None if first_line is None else first_line + k
            where = "" if line is not None else f" (sample {k})"
            raise ZfitInputError(f"channel {name}: sample {a[k]:.3g} is beyond {MAX_SAMPLE:.0e} in magnitude, not a "
                                 f"voltage (a wrong column or unit?){where}", source, line)


def clipped_fraction(x: np.ndarray) -> tuple[float, float]:
    """Return the fractions of samples that sit flat at the lowest and highest value.

    A channel clipped by the scope's vertical range piles its samples up at
    one code at the rail: the extreme value then holds far more samples than
    the next code inside, unlike a noisy plateau, whose extreme codes are its
    rarest.  When both extremes pile up alike, the record is taken as clean
    and nearly noiseless (each level on one code), not as clipped.

    Parameters
    ----------
    x : numpy.ndarray
        The samples of one channel.

    Returns
    -------
    (float, float)
        Fraction of all samples pinned at the bottom and at the top rail; zero
        for a rail that does not look clipped.
    """
    x = np.asarray(x)
    if x.size > 1 << 21:
        x = x[:: int(math.ceil(x.size / (1 << 21)))]  # fractions need no more samples than this
    lo, hi = float(x.min()), float(x.max())
    if hi <= lo:
        return 0.0, 0.0
    # Counts at, and just inside, each rail: a 256-bin histogram resolves the
    # codes of an 8-bit scope and costs one pass.
    counts, edges = np.histogram(x, bins=256, range=(lo, hi))
    at_lo = int(np.count_nonzero(x == lo))
    at_hi = int(np.count_nonzero(x == hi))
    n = x.size

    def pinned(at, inside):
        # The rail holds more than half a percent of the record, and more than
        # three times what the neighbouring bins hold: a pile-up, not a tail.
        return at > 0.005 * n and at > 3.0 * max(inside, 1) and np.count_nonzero(counts) > 4

    inside_lo = int(counts[1:4].max()) if counts.size > 4 else 0
    inside_hi = int(counts[-4:-1].max()) if counts.size > 4 else 0
    f_lo = at_lo / n if pinned(at_lo, inside_lo) else 0.0
    f_hi = at_hi / n if pinned(at_hi, inside_hi) else 0.0
    if f_lo and f_hi and max(f_lo, f_hi) < 3.0 * min(f_lo, f_hi):
        # Both extremes piled up alike: a clean, nearly noiseless record whose
        # levels each sit on one code, not a clipped one.
        return 0.0, 0.0
    if f_lo and f_hi:
        return (f_lo, 0.0) if f_lo > f_hi else (0.0, f_hi)
    return f_lo, f_hi


# --------------------------------------------------------------------------- text files

_DT_KEYS = re.compile(
    r"(sampl\w*\s*(interval|period|time|spacing))|(x\s*-?\s*incr\w*)|(time\s*(step|interval|per\s*(point|sample)|resolution|increment))"
    r"|(^dt(\s*\(s\))?$)|(^delta\s*-?\s*t$)|(^(horizontal\s*)?interval$)|(^time\s*base\s*step$)"
)
_RATE_KEYS = re.compile(r"(sampl\w*\s*rate)|(^fs$)|(^sample\s*frequency$)")
_T0_KEYS = re.compile(r"(^t0$)|(start\s*time)|(x\s*-?\s*(origin|zero|start))|(time\s*(offset|origin|of\s*first))|(first\s*(point|sample)\s*time)")
_TIME_NAMES = re.compile(r"^(t|time|times|sec|second|seconds|s|x|zeit|temps|tiempo)([\s_\-(\[/].*)?$", re.IGNORECASE)


def _parse_number(text: str) -> float | None:
    from .._units import parse_quantity

    text = text.strip().strip('"').strip("'").strip()
    text = re.sub(r"\s*(sa/s|s/s|sps|sa/sec|samples/s)\s*$", "", text, flags=re.IGNORECASE)
    if not text:
        return None
    try:
        return float(text)
    except ValueError:
        pass
    try:
        return parse_quantity(text)
    except ZfitInputError:
        return None


def _split_line(line: str, delim: str | None) -> list[str]:
    if delim is None:
        return line.split()
    return [f.strip() for f in line.split(delim)]


def _is_number(field: str, decimal_comma: bool) -> bool:
    f = field.strip().strip('"')
    if decimal_comma:
        f = f.replace(",", ".")
    try:
        float(f)
    except ValueError:
        return False
    return True


def _numeric_row(line: str, delim, decimal_comma) -> int:
    """Number of fields when every field is a number, else 0."""
    fields = _split_line(line, delim)
    if delim is not None and fields and fields[-1] == "":
        fields = fields[:-1]  # a trailing delimiter, as some scopes write
    if not fields or not all(_is_number(f, decimal_comma) for f in fields):
        return 0
    return len(fields)


def _guess_layout(lines: list[str], delimiter):
    """Return (delimiter, decimal_comma, first data line index, number of fields)."""
    candidates = [delimiter] if delimiter is not None else ["\t", ";", ",", None]
    best = None
    for delim in candidates:
        for dec in (False, True):
            if dec and delim == ",":
                continue
            # The data begins at the first line from which the next few lines
            # are all numbers with one field count.
            counts = [_numeric_row(ln, delim, dec) for ln in lines]
            for i, c in enumerate(counts):
                if c == 0:
                    continue
                # Most of the next lines are numbers with one field count; a
                # bad row among them is the data's fault, reported by line later.
                run = counts[i:i + 8]
                good = sum(r == c for r in run)
                if (good >= max(3, len(run) - 1) or (good == len(run) and i + len(run) == len(counts))):
                    if c >= 2 or delim is None:
                        cand = (delim, dec, i, c)
                        # More fields per line wins: "1,5;2,5" with ';' and decimal comma
                        # beats two lines of one number split by ','.
                        if best is None or c > best[3] or (c == best[3] and i < best[2]):
                            best = cand
                    break
        if best is not None and delimiter is None and best[0] == delim and best[3] >= 2:
            break
    if best is None:
        raise ZfitInputError("no block of numeric rows found (is this an oscilloscope export?)")
    return best


def _metadata(preamble: list[str], delim) -> dict[str, str]:
    meta = {}
    for line in preamble:
        text = line.strip().lstrip("#%;!*").strip()
        if not text:
            continue
        m = re.match(r"^([^=:]+?)\s*[=:]\s*(.+)$", text)
        parts = None
        if delim is not None and delim in text:
            fields = [f.strip().strip('"') for f in text.split(delim)]
            values = [f for f in fields[1:] if f]
            if values:
                parts = (fields[0], values[0])
        if parts is None and m:
            parts = (m.group(1), m.group(2))
        if parts is None:
            fields = text.split()
            if len(fields) >= 2:
                parts = (" ".join(fields[:-1]), fields[-1])
        if parts:
            key = re.sub(r"\s+", " ", parts[0].strip().strip('"').lower())
            meta.setdefault(key, parts[1].strip())
    return meta


def _meta_value(meta: dict[str, str], pattern) -> tuple[str, float] | None:
    for key, value in meta.items():
        if pattern.search(key):
            v = _parse_number(value)
            if v is not None:
                return key, v
    return None


def _header(preamble: list[str], delim, ncols: int):
    """Return (names or None, units or None) from the lines just above the data."""
    rows = [ln for ln in preamble if ln.strip()]
    if not rows:
        return None, None

    def fields(ln):
        f = [x.strip().strip('"').strip() for x in _split_line(ln.strip().lstrip("#%").strip(), delim)]
        if delim is not None and f and f[-1] == "" and len(f) == ncols + 1:
            f = f[:-1]
        return f

    last = fields(rows[-1])
    if len(last) != ncols or any(_is_number(f, False) for f in last if f):
        # A metadata line ("Sample interval,4e-08") is no header of names.
        return None, None
    unitlike = all(re.fullmatch(r"[\(\[]?\s*(s|v|a|sec|volt|volts|ms|us|ns|mv|)\s*[\)\]]?", x, re.IGNORECASE) for x in last)
    if unitlike and len(rows) >= 2:
        above = fields(rows[-2])
        if len(above) == ncols:
            return above, last
    return last, None


def _line_offsets(head: bytes, n_lines: int) -> int:
    pos = 0
    for _ in range(n_lines):
        nl = head.find(b"\n", pos)
        if nl < 0:
            return len(head)
        pos = nl + 1
    return pos


def _pandas_available() -> bool:
    try:
        import pandas  # noqa: F401
    except Exception:
        return False
    return True


def _parse_block_numpy(fh, ncols: int, est_rows: int, delim, decimal_comma: bool, path, first_line: int):
    """Parse the numeric block from the current position of `fh` into per-column arrays."""
    seps = b",;\t\"'\r" if not decimal_comma else b";\t\"'\r"
    table = bytes.maketrans(seps, b" " * len(seps))
    if decimal_comma:
        table = bytes.maketrans(seps + b",", b" " * len(seps) + b".")
    cap = max(est_rows, 1024)
    cols = [np.empty(cap) for _ in range(ncols)]
    rows = 0
    line = first_line
    rest = b""
    while True:
        block = fh.read(_CHUNK_BYTES)
        last = not block
        data = rest + block
        if not last:
            cut = data.rfind(b"\n")
            if cut < 0:
                rest = data
                continue
            data, rest = data[: cut + 1], data[cut + 1:]
        else:
            rest = b""
        if data.strip():
            with warnings.catch_warnings():
                warnings.simplefilter("error", DeprecationWarning)
                try:
                    # numpy's C parser; whitespace (newlines included) separates numbers.
                    vals = np.fromstring(data.translate(table), sep=" ")
                    failed = False
                except (DeprecationWarning, ValueError):
                    failed = True
            if failed or vals.size % ncols:
                _raise_bad_line(data, ncols, delim, decimal_comma, path, line)
            k = vals.size // ncols
            if rows + k > cap:
                cap = max(int(cap * 1.25), rows + k)
                cols = [np.resize(c, cap) for c in cols]
            v = vals.reshape(k, ncols)
            for j in range(ncols):
                cols[j][rows:rows + k] = v[:, j]
            rows += k
            line += data.count(b"\n")
            del vals, v
        if last:
            break
    return [c[:rows] if rows == cap else c[:rows].copy() for c in cols]


def _parse_block_pandas(path, offset_lines: int, ncols: int, delim, decimal_comma: bool):
    import pandas as pd

    sep = {None: r"\s+"}.get(delim, delim)
    kw = dict(sep=sep, header=None, skiprows=offset_lines, dtype=np.float64, engine="c",
              quotechar='"', skip_blank_lines=True, decimal="," if decimal_comma else ".")
    try:
        df = pd.read_csv(path, **kw)
    except (ValueError, pd.errors.ParserError):
        return None
    if df.shape[1] == ncols + 1 and df.iloc[:, -1].isna().all():
        df = df.iloc[:, :ncols]
    if df.shape[1] != ncols:
        return None
    arr = [np.ascontiguousarray(df.iloc[:, j].to_numpy(dtype=np.float64)) for j in range(ncols)]
    del df
    return arr


def _parse_block_loadtxt(path, skip_lines: int, ncols: int, delim):
    """Parse the numeric block with numpy's C reader; None when a row is bad.

    The channels are returned as column views of the parsed block, so that
    no second copy of the record is made.
    """
    try:
        a = np.loadtxt(path, delimiter=delim, skiprows=skip_lines, usecols=range(ncols), quotechar='"',
                       ndmin=2, dtype=np.float64, encoding="latin-1")
    except ValueError:
        return None
    return [a[:, j] for j in range(ncols)]


def _raise_bad_line(data: bytes, ncols, delim, decimal_comma, path, first_line):
    # Only on the error path: find the offending line of this chunk in Python.
    text = data.decode("utf-8", errors="replace").split("\n")
    for i, ln in enumerate(text):
        if not ln.strip():
            continue
        c = _numeric_row(ln, delim, decimal_comma)
        if c != ncols:
            what = "is not a row of numbers" if c == 0 else f"has {c} numbers where the data has {ncols}"
            raise ZfitInputError(f"{what}: {ln.strip()[:60]!r}", path, first_line + i)
    raise ZfitInputError("the numeric block cannot be parsed", path, first_line)


def _read_text(path: Path, delimiter, dt_given, t0_given, time_column, accelerate: bool):
    size = path.stat().st_size
    with open(path, "rb") as fh:
        head = fh.read(_HEAD_BYTES)
    if not head.strip():
        raise ZfitInputError("the file is empty", path)
    if head[:2] in (b"\xff\xfe", b"\xfe\xff"):
        # The fast C parser reads 8-bit text; a 10-million-sample UTF-16 file is better converted once.
        raise ZfitInputError("is UTF-16 text; save it as ASCII or UTF-8 (for example: iconv -f UTF-16 -t UTF-8 "
                             "IN > OUT.csv)", path)
    if b"\x00" in head[:4096]:
        raise ZfitInputError("binary file; expected delimited text, .npy or .npz", path)
    text = head.decode("utf-8", errors="replace")
    if text.startswith("\ufeff"):
        text = text[1:]
    lines = text.split("\n")
    if len(head) == _HEAD_BYTES and len(lines) > 1:
        lines = lines[:-1]  # the last line of the head may be cut
    lines = [ln.rstrip("\r") for ln in lines]
    while lines and not lines[-1].strip():
        lines.pop()
    try:
        # The metadata and the header sit in the first lines: judging the
        # layout on 400 of them is plenty, and keeps the guess fast.
        delim, dec, start, ncols = _guess_layout(lines[:400], delimiter)
    except ZfitInputError as exc:
        raise ZfitInputError(exc.message, path) from None
    preamble = lines[:start]
    meta = _metadata(preamble, delim)
    names, _units = _header(preamble, delim, ncols)
    notes = []
    if delim is None:
        notes.append("columns separated by white space")
    if dec:
        notes.append("decimal comma")

    # The time base: a given dt wins; else a time column; else the metadata.
    meta_dt = _meta_value(meta, _DT_KEYS)
    if meta_dt is None:
        rate = _meta_value(meta, _RATE_KEYS)
        if rate is not None and rate[1] > 0:
            meta_dt = (rate[0], 1.0 / rate[1])
    meta_t0 = _meta_value(meta, _T0_KEYS)

    tcol = None
    guessed = False
    if time_column is False:
        tcol = None
    elif time_column is not None:
        tcol = _resolve_time_column(time_column, names, ncols, path)
    elif names is not None and _TIME_NAMES.match(names[0] or ""):
        tcol = 0
    elif names is not None and any(_TIME_NAMES.match(n or "") for n in names):
        tcol = next(i for i, n in enumerate(names) if _TIME_NAMES.match(n or ""))
    elif dt_given is None and meta_dt is None:
        if ncols < 2:
            raise ZfitInputError("one column and no sample interval in the file; give the sample interval (dt)", path)
        tcol = 0  # no time name and no interval: the first column is time, as scopes write it
        guessed = True
    offset = _line_offsets(head, start)

    # Estimated rows, for one allocation: file size over the typical line length.
    sample = lines[start:start + 200]
    avg = max(1.0, sum(len(s) + 1 for s in sample) / max(len(sample), 1))
    est = int((size - offset) / avg * 1.02) + 16
    cols = None
    if accelerate is None:
        # pandas' reader is faster, but importing it costs about half a
        # second: worth it only for large files.
        accelerate = size > _PANDAS_MIN_BYTES
    if accelerate and _pandas_available():
        cols = _parse_block_pandas(path, start, ncols, delim, dec)
        if cols is not None:
            notes.append("numeric block parsed by pandas' C reader")
    if cols is None and not dec:
        cols = _parse_block_loadtxt(path, start, ncols, delim)
    if cols is None:
        # Decimal commas, or a bad row to locate: numpy's number parser over
        # translated chunks, which names the line of a bad row.
        with open(path, "rb") as fh:
            fh.seek(offset)
            cols = _parse_block_numpy(fh, ncols, est, delim, dec, path, start + 1)
    n = cols[0].size
    if n < MIN_SAMPLES:
        raise ZfitInputError(f"only {n} rows of samples; at least {MIN_SAMPLES} are needed", path)

    if names is None:
        names = [f"col{j + 1}" for j in range(ncols)]
    names = [nm if nm else f"col{j + 1}" for j, nm in enumerate(names)]
    seen = {}
    for j, nm in enumerate(names):
        if nm in seen:
            names[j] = f"{nm}_{j + 1}"
        seen[nm] = j

    if tcol is None and time_column is None and ncols >= 2 and (dt_given or meta_dt):
        # An interval in the header and, besides, a first column that steps by
        # it: that column is the time, not a channel.
        step_ = dt_given or meta_dt[1]
        d0 = np.diff(cols[0][:1024])
        if d0.size and np.all(np.abs(d0 - step_) < 0.01 * step_):
            tcol = 0
    t0 = 0.0
    if tcol is not None:
        if guessed and not np.all(np.diff(cols[tcol][: 1 << 12]) >= 0):
            raise ZfitInputError("no time column (column 1 does not increase) and no sample interval in the header; "
                                 "give the sample interval (dt)", path)
        tdt, tt0, tnotes = _uniform_time(cols[tcol], path, start + 1)
        notes.extend(tnotes)
        dt, t0 = tdt, tt0
        if dt_given is not None:
            if abs(dt_given - tdt) > 1e-3 * tdt:
                raise ZfitInputError(
                    f"the time column steps by {format_eng(tdt, 's', 6)} but a sample interval of {format_eng(dt_given, 's', 6)} was given", path)
        elif meta_dt is not None and abs(meta_dt[1] - tdt) > 1e-3 * tdt:
            notes.append(f"header {meta_dt[0]!r} = {format_eng(meta_dt[1], 's', 6)} disagrees with the time column ({format_eng(tdt, 's', 6)}); the time column is used")
    elif dt_given is not None:
        dt = float(dt_given)
        notes.append(f"sample interval {format_eng(dt, 's', 6)} given by the caller")
    elif meta_dt is not None:
        dt = meta_dt[1]
        notes.append(f"sample interval {format_eng(dt, 's', 6)} from the header line {meta_dt[0]!r}")
        if meta_t0 is not None:
            t0 = meta_t0[1]
    else:
        raise ZfitInputError("no time column and no sample interval in the header; give the sample interval (dt)", path)
    if t0_given is not None:
        t0 = float(t0_given)

    chan_idx = [j for j in range(ncols) if j != tcol]
    if not chan_idx:
        raise ZfitInputError("the file has a time column but no voltage column", path)
    chans = {}
    for j in chan_idx:
        _check_finite(cols[j], names[j], path, start + 1)
        chans[names[j]] = cols[j]
    del cols
    return make_capture(chans, dt, t0=t0, source=str(path), notes=notes, file_columns=[j + 1 for j in chan_idx])


def _resolve_time_column(key, names, ncols, path) -> int:
    if isinstance(key, (int, np.integer)) or (isinstance(key, str) and key.strip().isdigit()):
        j = int(key) - 1
        if not 0 <= j < ncols:
            raise ZfitInputError(f"time column {key} is outside 1..{ncols}", path)
        return j
    if names is not None:
        for j, nm in enumerate(names):
            if nm.lower() == str(key).lower():
                return j
    raise ZfitInputError(f"no column named {key!r} for the time", path)


def _uniform_time(t: np.ndarray, path, first_line: int):
    """Return (dt, t0, notes) of a time column, raising if it is not uniform.

    A scope prints its time column rounded; when the rounding is coarser than
    the sample interval, consecutive times repeat and the step is only known
    from the span, which is still exact for a uniform time base.
    """
    n = t.size
    if not np.all(np.isfinite(t[[0, -1]])):
        _check_finite(t, "time", path, first_line)
    dt = (t[-1] - t[0]) / (n - 1)
    if not dt > 0:
        raise ZfitInputError("the time column does not increase", path, first_line)
    # The span over the count carries float rounding (4.0000000000000001e-08):
    # snap to the interval the instrument set when it is that within 1e-9.
    snapped = float(f"{dt:.9g}")
    if abs(snapped - dt) <= 1e-9 * dt:
        dt = snapped
    notes = []
    step = 1 << 20
    max_res = 0.0
    sum_sq = 0.0
    min_pos = math.inf
    blocks = []  # (start, smallest step, largest step) of each block
    base = dt * np.arange(min(step, n))
    buf = np.empty(min(step, n))
    for i in range(0, n, step):
        m = min(step, n - i)
        seg = t[i:i + m + 1]
        d = np.diff(seg)
        if d.size:
            dmin, dmax = float(d.min()), float(d.max())
            if dmin < 0:
                k = i + int(np.argmax(d < 0)) + 1
                raise ZfitInputError("time goes backwards", path, first_line + k)
            min_pos = min(min_pos, dmin if dmin > 0 else float(d[d > 0].min(initial=math.inf)))
            blocks.append((i, dmin, dmax))
        # Residual from the uniform grid, in place (no temporaries of the block's size).
        r = buf[:m]
        np.subtract(seg[:m], t[0] + dt * i, out=r)
        r -= base[:m]
        max_res = max(max_res, float(np.abs(r).max()))
        sum_sq += float(np.dot(r, r))
    rms = math.sqrt(sum_sq / n)
    resolution = max(dt, min_pos if math.isfinite(min_pos) else dt)
    coarse = resolution > 1.5 * dt
    # A step of more than 1.5 intervals (a missing sample) or of zero (a
    # repeated one) breaks the grid, unless the printout is coarser than dt.
    too_long = 1.5 * resolution + 1e-9 * resolution
    for i, dmin, dmax in blocks:
        if dmax > too_long or (dmin <= 0.5 * dt and not coarse):
            d = np.diff(t[i:i + step + 1])
            bad = (d > too_long) | ((d <= 0.5 * dt) & (not coarse))
            k = i + int(np.flatnonzero(bad)[0]) + 1
            raise ZfitInputError(
                f"non-uniform time steps: step of {format_eng(d[k - i - 1], 's', 6)} where the record averages {format_eng(dt, 's', 6)} "
                f"(missing or repeated samples, or a pieced-together record)", path, first_line + k)
    # A coarse printout rounds the two end points too, which anchor the grid.
    if max_res > (1.0 if coarse else 0.5) * resolution * 1.02 + 1e-12 * max(abs(t[0]), abs(t[-1])):
        raise ZfitInputError(
            f"non-uniform time steps: times drift up to {max_res / dt:.3g} sample intervals from a uniform grid "
            f"(dt = {format_eng(dt, 's', 6)})", path, first_line)
    if coarse:
        notes.append(f"time column printed with {format_eng(resolution, 's', 3)} resolution, coarser than the {format_eng(dt, 's', 6)} sample "
                     "interval; uniform sampling assumed, interval from the span")
    elif rms > _JITTER_WARN * dt:
        msg = (f"{path}: time steps jitter by {100 * rms / dt:.3g} % rms of the {format_eng(dt, 's', 6)} sample interval; "
               "the analysis assumes uniform sampling")
        notes.append(msg)
        warnings.warn(msg, MeasurementWarning, stacklevel=4)
    return float(dt), float(t[0]), notes


# --------------------------------------------------------------------------- binary files

def _read_npy(path: Path, dt_given, t0_given):
    try:
        a = np.load(path, allow_pickle=False)
    except ValueError as exc:
        raise ZfitInputError(f"cannot read as a numpy array: {exc}", path) from None
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
        dt, t0, tn = _uniform_time(cols[0], path, 1)
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


def _read_npz(path: Path, dt_given, t0_given):
    try:
        # Read every array and close the archive at once (an open one leaks its file on an error).
        with np.load(path, allow_pickle=False) as archive:
            z = {k: archive[k] for k in archive.files}
    except ValueError as exc:
        raise ZfitInputError(f"cannot read as a numpy archive: {exc}", path) from None
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
        dt, t0, tn = _uniform_time(_numeric(z[tkey], f"array {tkey!r}", path).ravel(), path, None)
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
        if v.ndim == 1 and v.size > 1 and np.issubdtype(v.dtype, np.number):
            chans[k] = v.astype(float)
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
    return _read_text(path, delimiter, None if dt is None else float(dt), t0, time_column, accelerate)

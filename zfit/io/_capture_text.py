"""Oscilloscope exports as delimited text: layout, metadata, header and the numeric block.

Oscilloscope captures: uniformly sampled channels read from a scope's export.

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

import re
import warnings
from pathlib import Path

import numpy as np

from .._errors import ZfitInputError
from .._units import format_eng
from ._capture_record import MIN_SAMPLES, Capture, check_finite, make_capture
from ._capture_time import uniform_time
from ._text import is_number

__all__ = ["read_capture_text"]

# Parse this many bytes of the numeric block at a time: large enough that the
# per-chunk overhead vanishes, small enough that the translated copy of the
# chunk stays a few percent of the parsed arrays.
_CHUNK_BYTES = 1 << 24
# Above this size the import of pandas pays for itself (see docs/perf_capture.md).
_PANDAS_MIN_BYTES = 32 << 20
# How much of the start of a text file is searched for the metadata and the header.
_HEAD_BYTES = 1 << 16


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



def _numeric_row(line: str, delim, decimal_comma) -> int:
    """Number of fields when every field is a number, else 0."""
    fields = _split_line(line, delim)
    if delim is not None and fields and fields[-1] == "":
        fields = fields[:-1]  # a trailing delimiter, as some scopes write
    if not fields or not all(is_number(f, decimal_comma) for f in fields):
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


def _side_layout(lines: list[str], delimiter):
    """Return (delimiter, first data line, metadata columns, fields, metadata) of a side-metadata export, or None.

    Some scopes write the settings beside the samples rather than above
    them: every row has the same fields, the first few hold ``Sample
    Interval,4e-08,s`` on the first rows and are empty below, the last ones
    hold time and voltage.  Recognised when at least 90 % of the first rows
    end in two or more numbers after the same number of leading fields that
    are text or empty, and some of those leading fields are empty.
    """
    rows = [ln for ln in lines[:400] if ln.strip()]
    if len(rows) < MIN_SAMPLES:
        return None
    for delim in ([delimiter] if delimiter is not None else [",", ";", "\t"]):
        shapes = []
        for ln in rows:
            f = [x.strip().strip('"') for x in ln.split(delim)]
            if f and f[-1] == "":
                f = f[:-1]
            k = len(f)
            while k > 0 and is_number(f[k - 1]):
                k -= 1
            shapes.append((len(f), k, all(x == "" for x in f[:k])))
        n, k = max(set((a, b) for a, b, _ in shapes), key=lambda nk: sum((a, b) == nk for a, b, _ in shapes))
        same = [sh for sh in shapes if sh[:2] == (n, k)]
        if k >= 1 and n - k >= 2 and len(same) >= 0.9 * len(shapes) and any(blank for *_, blank in same):
            first = next((i for i, ln in enumerate(lines) if ln.strip() and _side_fields(ln, delim, k, n) is not None),
                         None)
            if first is None:
                continue
            meta = {}
            for ln in lines[first:first + 400]:
                f = [x.strip().strip('"') for x in ln.split(delim)][:k]
                if len(f) >= 2 and f[0] and f[1]:
                    meta.setdefault(re.sub(r"\s+", " ", f[0].lower()), f[1])
            return delim, first, k, n, meta
    return None


def _side_fields(line: str, delim, k: int, n: int):
    """The numeric fields of a side-metadata row, or None when it is not one."""
    f = [x.strip().strip('"') for x in line.split(delim)]
    if f and f[-1] == "" and len(f) == n + 1:
        f = f[:-1]
    if len(f) != n or not all(is_number(x) for x in f[k:]):
        return None
    return f[k:]


def _parse_block_side(source, first: int, k: int, n: int, delim, path):
    """The numeric columns of a side-metadata export (numpy's C reader, the leading fields unread)."""
    try:
        a = np.loadtxt(source, delimiter=delim, skiprows=first, usecols=range(k, n), quotechar='"', ndmin=2,
                       dtype=np.float64, encoding="latin-1")
    except ValueError:
        if hasattr(source, "seek"):
            source.seek(0)
        with _stream(source.read() if hasattr(source, "read") else source) as fh:
            for i, raw in enumerate(fh.read().decode("latin-1").split("\n")):
                if i >= first and raw.strip() and _side_fields(raw.rstrip("\r"), delim, k, n) is None:
                    raise ZfitInputError(f"is not a row of {n} fields ending in {n - k} numbers: {raw.strip()[:60]!r}",
                                         path, i + 1) from None
        raise ZfitInputError("the numeric block cannot be parsed", path, first + 1) from None
    return [a[:, j] for j in range(n - k)]


def _key_value(text: str) -> tuple[str, str] | None:
    """``'dt = 40 ns'`` -> ``('dt', '40 ns')``: split at the first ``=`` or ``:``, else None.

    Written out rather than as a regular expression: a lazy key followed by
    optional blanks backtracks quadratically on a long line of blanks
    (60 kB took 18 s).
    """
    cut = min((i for i in (text.find("="), text.find(":")) if i >= 0), default=-1)
    if cut <= 0:
        return None
    key, value = text[:cut].strip(), text[cut + 1:].strip()
    return (key, value) if key and value else None


def _metadata(preamble: list[str], delim) -> dict[str, str]:
    meta = {}
    for line in preamble:
        text = line.strip().lstrip("#%;!*").strip()
        if not text:
            continue
        m = _key_value(text)
        parts = None
        if delim is not None and delim in text:
            fields = [f.strip().strip('"') for f in text.split(delim)]
            values = [f for f in fields[1:] if f]
            if values:
                parts = (fields[0], values[0])
        if parts is None and m:
            parts = m
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
    if len(last) != ncols or any(is_number(f, False) for f in last if f):
        # A metadata line ("Sample interval,4e-08") is no header of names.
        return None, None
    unitlike = all(re.fullmatch(r"[\(\[]?\s*(s|v|a|sec|volt|volts|ms|us|ns|mv|)\s*[\)\]]?", x, re.IGNORECASE) for x in last)
    if unitlike and len(rows) >= 2:
        above = fields(rows[-2])
        if len(above) == ncols:
            return above, last
    return last, None


def _start_increment(preamble: list[str], delim, ncols: int):
    """Return (names, start, increment) of a two-line header that carries the time base, or None.

    Some scopes write ``X,CH1,CH2,Start,Increment,`` over
    ``Sequence,Volt,Volt,0,4e-08``: channel names with the start time and
    the sample interval appended, the first column a sample index.
    """
    rows = [ln for ln in preamble if ln.strip()]
    for a, b in zip(rows[:-1], rows[1:]):
        top = [x.strip().strip('"').lower() for x in _split_line(a.strip(), delim)]
        low = [x.strip().strip('"') for x in _split_line(b.strip(), delim)]
        if "increment" not in top:
            continue
        k = top.index("increment")
        if k >= len(low) or _parse_number(low[k]) is None:
            continue
        start = 0.0
        if "start" in top and top.index("start") < len(low):
            start = _parse_number(low[top.index("start")]) or 0.0
        names = [x.strip().strip('"') for x in _split_line(a.strip(), delim)][:ncols]
        if len(names) == ncols and _parse_number(low[k]) > 0:
            return names, float(start), float(_parse_number(low[k]))
    return None


def _is_sample_index(t: np.ndarray, name: str | None) -> bool:
    """Whether a first column counts samples (consecutive integers) rather than giving seconds."""
    if name and re.search(r"[\(\[/_\s](s|sec|seconds?|ms|us|ns)[\)\]]?$", name.strip(), re.IGNORECASE):
        return False  # a time column in seconds that happens to step by 1 s
    head = t[: 1 << 12]
    return bool(head.size > 1 and np.all(np.diff(head) == 1.0) and np.all(head == np.round(head)))


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


def read_capture_text(path: Path, delimiter, dt_given, t0_given, time_column, accelerate: bool) -> Capture:
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
    source = path
    if b"\r" in head and b"\n" not in head:
        # Lines ended by a carriage return alone (old Macintosh software):
        # read as line feeds, from a translated copy in memory.
        source = path.read_bytes().replace(b"\r", b"\n")
        head, size = source[:_HEAD_BYTES], len(source)
    text = head.decode("utf-8", errors="replace")
    if text.startswith("\ufeff"):
        text = text[1:]
    lines = text.split("\n")
    if len(head) == _HEAD_BYTES and len(lines) > 1:
        lines = lines[:-1]  # the last line of the head may be cut
    lines = [ln.rstrip("\r") for ln in lines]
    while lines and not lines[-1].strip():
        lines.pop()
    side = _side_layout(lines, delimiter)
    if side is not None:
        delim, start, side_k, side_n, side_meta = side
        dec, ncols = False, side_n - side_k
    else:
        try:
            # The metadata and the header sit in the first lines: judging the
            # layout on 400 of them is plenty, and keeps the guess fast.
            delim, dec, start, ncols = _guess_layout(lines[:400], delimiter)
        except ZfitInputError as exc:
            raise ZfitInputError(exc.message, path) from None
    preamble = lines[:start]
    meta = _metadata(preamble, delim)
    names, _units = _header(preamble, delim, ncols)
    if side is not None:
        meta.update(side_meta)
        notes_side = [f"settings read from columns 1-{side_k} beside the samples"]
    layout = _start_increment(preamble, delim, ncols)
    if layout is not None and names is None:
        names = layout[0]
    notes = notes_side if side is not None else []
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
    if layout is not None:
        meta_dt, meta_t0 = ("Increment", layout[2]), ("Start", layout[1])

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
    if side is not None:
        cols = _parse_block_side(_readable(source), start, side_k, side_n, delim, path)
    if cols is None and accelerate and _pandas_available():
        cols = _parse_block_pandas(_readable(source), start, ncols, delim, dec)
        if cols is not None:
            notes.append("numeric block parsed by pandas' C reader")
    if cols is None and not dec:
        cols = _parse_block_loadtxt(_readable(source), start, ncols, delim)
    if cols is None:
        # Decimal commas, or a bad row to locate: numpy's number parser over
        # translated chunks, which names the line of a bad row.
        with _stream(source) as fh:
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
    if tcol is not None and _is_sample_index(cols[tcol], names[tcol]):
        step_ = dt_given if dt_given is not None else (meta_dt[1] if meta_dt is not None else None)
        if step_ is None:
            raise ZfitInputError(
                f"column {tcol + 1} ({names[tcol]!r}) counts samples (0, 1, 2, ...) rather than time, and the file "
                "gives no sample interval; give the sample interval (dt)", path, start + 1)
        origin = meta_t0[1] if (meta_t0 is not None and dt_given is None) else 0.0
        dt, t0 = float(step_), origin + float(cols[tcol][0]) * float(step_)
        notes.append(f"column {tcol + 1} ({names[tcol]!r}) is a sample index; sample interval {format_eng(dt, 's', 6)} "
                     + ("given by the caller" if dt_given is not None else f"from the header's {meta_dt[0]!r}"))
    elif tcol is not None:
        if guessed and not np.all(np.diff(cols[tcol][: 1 << 12]) >= 0):
            raise ZfitInputError("no time column (column 1 does not increase) and no sample interval in the header; "
                                 "give the sample interval (dt)", path)
        tdt, tt0, tnotes = uniform_time(cols[tcol], path, start + 1)
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
        check_finite(cols[j], names[j], path, start + 1)
        chans[names[j]] = cols[j]
    del cols
    return make_capture(chans, dt, t0=t0, source=str(path), notes=notes, file_columns=[j + 1 for j in chan_idx])


def _readable(source):
    """What numpy's and pandas' readers take: the file's path, or its translated copy in memory."""
    import io

    return io.BytesIO(source) if isinstance(source, bytes) else source


def _stream(source):
    """A binary file object over the file, or over its translated copy in memory."""
    import io

    return io.BytesIO(source) if isinstance(source, bytes) else open(source, "rb")


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

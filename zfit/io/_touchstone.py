"""Reading Touchstone files (versions 1.x and 2.0) into S-parameter arrays.

Two paths, one result:

* plain Touchstone 1.x S-parameter files (the bulk of what analysers write)
  are parsed here, vectorised, keeping the file line of every frequency row
  so that an error can point at it;
* Touchstone 2.0 files (keywords in brackets: ``[Version]``,
  ``[Matrix Format]``, ``[Reference]`` ...) and files holding Y, Z, G or H
  parameters go through scikit-rf's reader, whose exceptions are turned into
  one-line errors naming the file and the line at fault (found by our own
  scan of the file where scikit-rf does not say).

The tests check that the two paths agree on every 1.x variant.

References
----------
.. [1] EIA/IBIS Open Forum, *Touchstone File Format Specification*,
   version 1.1 (2002) and version 2.0 (2009).
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from .._errors import ZfitInputError
from ._text import file_text, is_number

__all__ = ["TouchstoneData", "read_touchstone", "looks_like_touchstone", "REFERENCE_RANGE_OHM"]

_UNITS = {"hz": 1.0, "khz": 1e3, "mhz": 1e6, "ghz": 1e9}
_PARAMS = ("s", "y", "z", "g", "h")
_FORMATS = ("ri", "ma", "db")
_KEYWORD = re.compile(r"^\s*\[([^\]]*)\]", re.ASCII)


@dataclass(frozen=True)
class TouchstoneData:
    """What a Touchstone file holds, as a one-port reader needs it.

    Attributes
    ----------
    f_hz : numpy.ndarray
        Frequencies in Hz, in file order.
    s : numpy.ndarray
        S-parameters, shape ``(n_f, n_ports, n_ports)``, ``s[:, 1, 0]`` is S21.
    reference_ohm : float
        Reference impedance, the same on every port.
    n_ports : int
        Number of ports (1 or 2).
    lines : numpy.ndarray
        1-based file line where each frequency row starts.
    data_format : str
        What was understood, e.g. ``"Touchstone 1.x, S, MA, MHz, R 75"``.
    notes : tuple of str
        Things the user should know (defaults taken, noise data skipped).
    """

    f_hz: np.ndarray
    s: np.ndarray
    reference_ohm: float
    n_ports: int
    lines: np.ndarray
    data_format: str
    notes: tuple[str, ...] = field(default=())


def looks_like_touchstone(text: str) -> bool:
    """Return whether `text` starts like a Touchstone file.

    True when, before the first data line, there is an option line
    (``# GHz S MA R 50``) or a ``[Version]`` keyword.
    """
    for raw in text.splitlines()[:200]:
        s = raw.partition("!")[0].strip()
        if not s:
            continue
        if s.startswith("#"):
            toks = s[1:].lower().split()
            return all(t in _UNITS or t in _PARAMS or t in _FORMATS or t == "r" or is_number(t) for t in toks)
        return bool(_KEYWORD.match(s)) and s.lower().startswith("[version]")
    return False



@dataclass
class _Options:
    unit: str = "ghz"
    param: str = "s"
    fmt: str = "ma"
    resistance: tuple[float, ...] = (50.0,)
    line: int | None = None
    given: bool = False


def _parse_option_line(body: str, path: Path, line: int) -> _Options:
    """Return the options of a 1.x option line (tokens in any order, spec 1.1).

    Each kind of option (frequency unit, parameter, format, reference) may
    appear once: a second one (``# GHz MHz``) would leave the reading to
    whichever came last, a factor of 1000 in frequency, so it is refused.
    """
    opt = _Options(line=line, given=True)
    toks = body[1:].split()
    seen: dict[str, str] = {}

    def once(kind: str, token: str) -> None:
        if kind in seen:
            raise ZfitInputError(
                f"option line: two {kind}s ({seen[kind]} and {token}); give one", path, line
            )
        seen[kind] = token

    i = 0
    while i < len(toks):
        t = toks[i].lower()
        if t in _UNITS:
            once("frequency unit", toks[i])
            opt.unit = t
        elif t in _PARAMS:
            once("parameter type", toks[i])
            opt.param = t
        elif t in _FORMATS:
            once("data format", toks[i])
            opt.fmt = t
        elif t == "r":
            once("reference impedance", toks[i])
            values = []
            while i + 1 < len(toks) and is_number(toks[i + 1]):
                values.append(float(toks[i + 1]))
                i += 1
            if not values:
                raise ZfitInputError("option line: 'R' must be followed by the reference impedance in ohm", path, line)
            opt.resistance = tuple(values)
        else:
            raise ZfitInputError(
                f"option line: unknown option {toks[i]!r} (expected a frequency unit Hz/kHz/MHz/GHz, "
                "a parameter S/Y/Z/G/H, a format RI/MA/DB and 'R <ohm>')",
                path,
                line,
            )
        i += 1
    return opt


#: Reference impedances zfit computes with: 1 mohm .. 1 Mohm.  Analysers use
#: 50 or 75 ohm, renormalised files 1 .. 1000 ohm; beyond this range the
#: S <-> Z formulas lose every digit of the impedance (common practice).
REFERENCE_RANGE_OHM = (1e-3, 1e6)


def _reference(values, path: Path, line: int | None, n_ports: int) -> float:
    values = np.asarray(values, dtype=complex).ravel()
    if np.any(values.imag != 0):
        raise ZfitInputError("complex reference impedance is not supported; renormalise the file to a real one", path, line)
    r = values.real
    if np.any(r <= 0) or not np.all(np.isfinite(r)):
        raise ZfitInputError(f"reference impedance must be positive, not {r[0]:g} ohm", path, line)
    if n_ports == 1 and r.size > 1:
        raise ZfitInputError(
            f"{r.size} reference impedances ({', '.join(f'{x:g}' for x in r)} ohm) for a one-port file; give one",
            path, line)
    lo, hi = REFERENCE_RANGE_OHM
    out = (r < lo) | (r > hi)
    if np.any(out):
        raise ZfitInputError(
            f"reference impedance {r[out][0]:g} ohm is outside {lo:g} .. {hi:g} ohm, where the S <-> Z "
            "formulas keep the impedance's digits", path, line)
    if n_ports == 2 and np.ptp(r) > 1e-12 * r.max():
        raise ZfitInputError(
            f"ports have different reference impedances ({', '.join(f'{x:g}' for x in r)} ohm); "
            "the one-port formulas need the same on both ports",
            path,
            line,
        )
    return float(r[0])


def _describe(version: str, param: str, fmt: str, unit: str, r: float, extra: str = "") -> str:
    unit_name = {"hz": "Hz", "khz": "kHz", "mhz": "MHz", "ghz": "GHz"}[unit]
    text = f"Touchstone {version}, {param.upper()}, {fmt.upper()}, {unit_name}, R {r:g}"
    return text + (f", {extra}" if extra else "")


def _complex_pairs(a: np.ndarray, b: np.ndarray, fmt: str) -> np.ndarray:
    if fmt == "ri":
        return a + 1j * b
    mag = 10.0 ** (a / 20.0) if fmt == "db" else a
    return mag * np.exp(1j * np.deg2rad(b))


def read_touchstone(path, n_ports: int | None = None) -> TouchstoneData:
    """Return the S-parameters of a Touchstone 1.x or 2.0 file.

    Parameters
    ----------
    path : str or os.PathLike
        The file (``.s1p``, ``.s2p`` or ``.ts``).
    n_ports : int, optional
        Number of ports the extension promises; read from the
        ``[Number of Ports]`` keyword for 2.0 files when None.

    Returns
    -------
    TouchstoneData

    Raises
    ------
    ZfitInputError
        With the file and line, for anything the file does not do as the
        specification says: unknown options, bad numbers, rows of the wrong
        length, missing data.  Frequencies out of order or repeated are
        kept as they are: `zfit.data._sweep.cleaned_rows` sorts and merges.

    References
    ----------
    .. [1] EIA/IBIS Open Forum, *Touchstone File Format Specification*,
       version 2.0, 2009, sections "Option line", "Network data".
    """
    path = Path(path)
    text = file_text(path, "Touchstone text file")
    lines = text.splitlines()
    body = [ln.partition("!")[0].strip() for ln in lines]
    if text and text[-1] not in "\r\n":
        _check_last_line(path, body)
    version2 = "[version]" in text[:65536].lower() and any(b[:9].lower() == "[version]" for b in body[:400] if b)
    if version2:
        return _read_v2(path, body)
    if n_ports is None:
        raise ZfitInputError("a .ts file must be Touchstone 2.0 (a '[Version] 2.0' line); for 1.x use .s1p or .s2p", path)
    return _read_v1(path, body, n_ports)


def _check_last_line(path: Path, body: list[str]) -> None:
    """Refuse a file cut off in the middle of its last data line.

    A file that stops without a line break may have been cut by a full disk
    or an interrupted copy.  Instruments print every row alike, so a last row
    with fewer numbers, or a last number with fewer characters than the same
    column of the row before, is taken as cut off.
    """
    rows = [i for i, b in enumerate(body) if b and b[0] not in "#["]
    if len(rows) < 2:
        return
    last, prev = body[rows[-1]].split(), body[rows[-2]].split()
    if len(last) < len(prev) or (len(last) == len(prev) and len(last[-1]) < len(prev[-1])):
        raise ZfitInputError(
            "the file ends in the middle of this line (no line break after it, and it is shorter than the "
            "line before): the file looks truncated; copy it again from the instrument",
            path,
            rows[-1] + 1,
        )


def _first_data_line(body) -> int | None:
    for i, b in enumerate(body):
        if b and b[0] not in "#[":
            return i
    return None


def _read_v1(path: Path, body: list[str], n_ports: int) -> TouchstoneData:
    opt = _Options()
    notes = []
    first = _first_data_line(body)
    for i, b in enumerate(body):
        if b.startswith("#"):
            if first is not None and i > first:
                raise ZfitInputError("option line after the first data line (it must come before the data)", path, i + 1)
            opt = _parse_option_line(b, path, i + 1)
            _check_later_option_lines(path, body, i, notes)
            break
        if b.startswith("["):
            raise ZfitInputError(f"keyword {b.split(']')[0]}] in a file without [Version] 2.0", path, i + 1)
    if not opt.given:
        notes.append("no option line: Touchstone defaults GHz, S, MA, R 50 taken")
    if first is None:
        raise ZfitInputError("no data lines (only comments and options)", path)
    r0 = _reference(opt.resistance, path, opt.line, n_ports)
    if opt.param in ("g", "h"):
        raise ZfitInputError(
            f"{opt.param.upper()} (hybrid) parameters are not read; export S, Y or Z parameters", path, opt.line
        )

    idx = np.array([i for i, b in enumerate(body) if b and b[0] != "#"], dtype=int)
    data = [body[i] for i in idx]
    for j, b in enumerate(data):
        if b[0] == "[":
            raise ZfitInputError("keyword line in a Touchstone 1.x file (no [Version] 2.0 line)", path, int(idx[j]) + 1)
    per_row = 1 + 2 * n_ports * n_ports
    values = _plain_rows(data, per_row)
    if values is not None:
        return _v1_result(path, opt, values, idx + 1, n_ports, r0, notes)
    counts = np.fromiter((len(b.split()) for b in data), dtype=int, count=len(data))
    # Touchstone 1.x two-port files may end with a noise-parameter block: rows of
    # five numbers whose first frequency is not above the last network frequency.
    if n_ports == 2:
        five = np.flatnonzero(counts == 5)
        if five.size and np.all(counts[five[0]:] == 5) and five[0] > 0:
            k = int(five[0])
            try:
                f_noise, f_last = float(data[k].split()[0]), float(data[k - 1].split()[0])
            except ValueError:
                f_noise, f_last = 1.0, 0.0
            if f_noise <= f_last:
                notes.append(f"noise-parameter block from line {idx[k] + 1} ignored")
                idx, data, counts = idx[:k], data[:k], counts[:k]
    if np.all(counts == per_row):
        values = _numbers_table(path, data, idx, per_row)
        row_lines = idx + 1
    else:
        values, row_lines = _numbers_wrapped(path, data, idx, counts, per_row, n_ports)
    return _v1_result(path, opt, values, row_lines, n_ports, r0, notes)


def _check_later_option_lines(path: Path, body: list[str], first: int, notes: list) -> None:
    """Refuse a second option line that differs from the first; note a repeated one.

    The 1.1 specification reads the first option line and ignores the rest;
    a different one further down (files concatenated, a unit changed by
    hand) leaves the data ambiguous.
    """
    words = body[first].lower().split()
    for j in range(first + 1, len(body)):
        b = body[j]
        if not b.startswith("#"):
            continue
        if b.lower().split() != words:
            raise ZfitInputError(
                f"a second option line {b!r}, different from the first ({body[first]!r} at line {first + 1}): "
                "which applies to the data is ambiguous (files joined?); keep one", path, j + 1)
        notes.append(f"option line repeated at line {j + 1} (same as line {first + 1})")


def _checked_pairs(path: Path, values: np.ndarray, fmt: str, row_lines, notes: list) -> np.ndarray:
    """The complex values of data rows, after the checks of magnitude and angle.

    A magnitude (MA) below zero is not a magnitude: refused with its line.
    An angle between 180 and 360 degrees (either sign) is the same direction
    as one within +-180 and is read so, with a note; beyond +-360 degrees no
    analyser writes it (a shifted column, a value in another unit?):
    refused.  Numbers beyond 1e30 (or a dB value whose magnitude overflows)
    are refused: no passive network has such an S, Y or Z.
    """
    a, b = values[:, 1::2], values[:, 2::2]

    def line_of(mask) -> int:
        return int(row_lines[int(np.flatnonzero(mask.any(axis=1))[0])])

    with np.errstate(invalid="ignore"):
        huge = np.isfinite(values) & (np.abs(values) > 1e30)
        if fmt == "db":
            huge[:, 1::2] |= a > 600
    if np.any(huge):
        raise ZfitInputError("a number beyond 1e30 (or a dB value beyond 600 dB): no passive network measures so; "
                             "an instrument's overrange code?", path, line_of(huge))
    if fmt == "ma" and np.any(a < 0):  # NaN compares False: the finiteness check names it later
        raise ZfitInputError(f"magnitude {a[a < 0][0]:g} is negative (MA format: magnitude, angle)", path, line_of(a < 0))
    if fmt in ("ma", "db"):
        beyond = np.abs(b) > 360.0
        if np.any(beyond):
            raise ZfitInputError(
                f"angle {b[beyond][0]:g} deg is beyond +-360 deg: no analyser writes it (a column shifted, or an "
                "angle in another unit?)", path, line_of(beyond))
        wrapped = np.abs(b) > 180.0
        if np.any(wrapped):
            notes.append(f"{int(wrapped.sum())} angle(s) between 180 and 360 deg (first at line {line_of(wrapped)}) "
                         "read as the same direction within +-180 deg")
    with np.errstate(all="ignore"):
        return _complex_pairs(a, b, fmt)


def _plain_rows(data, per_row):
    """The common case, one row per line: parsed by numpy's C reader, or None."""
    try:
        values = np.loadtxt(data, ndmin=2, dtype=float, comments=None)
    except ValueError:
        return None
    return values if values.shape[1] == per_row else None


def _v1_result(path, opt, values, row_lines, n_ports, r0, notes) -> TouchstoneData:
    notes = list(notes)
    pairs = _checked_pairs(path, values, opt.fmt, row_lines, notes)  # the frequencies bounded too
    f = values[:, 0] * _UNITS[opt.unit]
    m = pairs.reshape(-1, n_ports, n_ports)
    if n_ports == 2:
        # 1.x two-port order is X11 X21 X12 X22: column-major.
        m = m.transpose(0, 2, 1)
    extra = ""
    if opt.param != "s":
        # 1.x Z and Y data are normalised to R (spec 1.1, "Option line"):
        # z = Z / R and y = Y R.  The S matrix for reference R on each port is
        # S = (z - 1)(z + 1)^-1 = (1 - y)(1 + y)^-1 (Pozar 2012, section 4.3).
        eye = np.eye(n_ports)
        num, den = (m - eye, m + eye) if opt.param == "z" else (eye - m, eye + m)
        try:
            # S den = num  <=>  den^T S^T = num^T.
            with np.errstate(all="ignore"):
                s = np.linalg.solve(den.transpose(0, 2, 1), num.transpose(0, 2, 1)).transpose(0, 2, 1)
        except np.linalg.LinAlgError:
            raise ZfitInputError(f"{opt.param.upper()} matrix cannot be converted to S (singular)", path) from None
        extra = "converted to S"
    else:
        s = m
    return TouchstoneData(
        f_hz=f,
        s=s,
        reference_ohm=r0,
        n_ports=n_ports,
        lines=row_lines,
        data_format=_describe("1.x", opt.param, opt.fmt, opt.unit, r0, extra),
        notes=tuple(notes),
    )


def _bad_token(path: Path, data, idx):
    """Raise for the first token that is not a number (error path only)."""
    for j, b in enumerate(data):
        for tok in b.split():
            if not is_number(tok):
                hint = " (Touchstone separates numbers by spaces, not commas or semicolons)" if ("," in tok or ";" in tok) else ""
                raise ZfitInputError(f"{tok!r} is not a number{hint}", path, int(idx[j]) + 1)
    raise ZfitInputError("data cannot be read as numbers", path)


def _numbers_table(path: Path, data, idx, per_row: int) -> np.ndarray:
    try:
        return np.loadtxt(data, ndmin=2, dtype=float).reshape(-1, per_row)
    except ValueError:
        _bad_token(path, data, idx)


def _numbers_wrapped(path, data, idx, counts, per_row, n_ports):
    """Rows of `per_row` numbers, possibly wrapped over several lines."""
    starts = np.concatenate([[0], np.cumsum(counts)[:-1]])
    total = int(counts.sum())
    row_starts = np.arange(0, total, per_row)
    pos = np.searchsorted(starts, row_starts)
    misaligned = (pos >= starts.size) | (starts[np.minimum(pos, starts.size - 1)] != row_starts)
    what = "frequency and 1 complex value (S11)" if n_ports == 1 else "frequency and 4 complex values (S11 S21 S12 S22)"
    if misaligned.any() or total % per_row:
        # The row before the first misaligned one started on a line of its own
        # (row 0 always does): that row, begun on that line, has the wrong length.
        r = int(np.flatnonzero(misaligned)[0]) - 1 if misaligned.any() else row_starts.size - 1
        k = int(pos[max(r, 0)])
        hint = ""
        if n_ports == 1 and np.all(counts == 9):
            hint, k = "; every line has 9, as a two-port file: rename it .s2p", 0
        elif n_ports == 2 and np.all(counts == 3):
            hint, k = "; every line has 3, as a one-port file: rename it .s1p", 0
        raise ZfitInputError(
            f"expected {per_row} numbers per frequency ({what}), found {int(counts[k])} on this line{hint}",
            path,
            int(idx[k]) + 1,
        )
    try:
        flat = np.array(" ".join(data).split(), dtype=float)
    except ValueError:
        _bad_token(path, data, idx)
    return flat.reshape(-1, per_row), idx[pos] + 1


#: The keywords of Touchstone 2.0 and 2.1 (spec 2.0 section "Keywords"; 2.1
#: adds none that a one- or two-port file uses).
_V2_KEYWORDS = frozenset({
    "version", "number of ports", "two-port data order", "number of frequencies", "number of noise frequencies",
    "reference", "matrix format", "mixed-mode order", "begin information", "end information", "network data",
    "noise data", "end",
})


def _scan_v2(path: Path, body: list[str]):
    """Our own scan of a 2.0 file: keywords, the network-data lines and their counts.

    Used to give line numbers to rows and to errors scikit-rf reports without
    one, and to refuse what the 2.0 specification does not allow: an unknown
    keyword, a keyword given twice, data after ``[End]``.
    """
    keys = {}
    net_start = net_end = None
    opt = None
    in_reference = False
    ended = None
    for i, b in enumerate(body):
        if not b:
            continue
        if ended is not None:
            raise ZfitInputError(f"data after [End] (line {ended}): the file should stop there (files joined?)",
                                 path, i + 1)
        if in_reference and b[0] not in "#[":
            continue  # [Reference] values may continue on the following lines
        in_reference = False
        if b.startswith("#"):
            if opt is not None:
                raise ZfitInputError(f"a second option line (the first is at line {opt.line}); keep one", path, i + 1)
            opt = _parse_option_line(b, path, i + 1)
            continue
        m = _KEYWORD.match(b)
        if m:
            name = " ".join(m.group(1).split()).lower()
            if name not in _V2_KEYWORDS:
                raise ZfitInputError(f"unknown Touchstone 2.0 keyword [{m.group(1).strip()}]", path, i + 1)
            if name in keys and name not in ("begin information", "end information"):
                raise ZfitInputError(f"[{m.group(1).strip()}] given twice (first at line {keys[name][0]})", path, i + 1)
            keys.setdefault(name, (i + 1, b[m.end():].strip()))
            in_reference = name == "reference" and net_start is None
            if name == "network data":
                net_start = i + 1
            elif net_start is not None and net_end is None:
                net_end = i
            if name == "end":
                ended = i + 1
            continue
        if net_start is None:
            raise ZfitInputError("data line before [Network Data] in a Touchstone 2.0 file", path, i + 1)
    if net_start is None:
        raise ZfitInputError("Touchstone 2.0 file without a [Network Data] keyword", path)
    if opt is None:
        raise ZfitInputError("Touchstone 2.0 file without an option line (# Hz S RI R 50)", path)
    if "number of ports" not in keys:
        raise ZfitInputError("Touchstone 2.0 file without [Number of Ports]", path, keys["version"][0])
    if "number of frequencies" not in keys:
        raise ZfitInputError("Touchstone 2.0 file without [Number of Frequencies] (required by the 2.0 "
                             "specification: it tells a complete file from a cut one)", path, keys["version"][0])
    if "number of noise frequencies" in keys and "noise data" not in keys:
        raise ZfitInputError("[Number of Noise Frequencies] is given but there is no [Noise Data]", path,
                             keys["number of noise frequencies"][0])
    if "two-port data order" in keys:
        line, value = keys["two-port data order"]
        if value.split()[:1] not in (["12_21"], ["21_12"]):
            raise ZfitInputError(f"[Two-Port Data Order] {value!r}: expected 12_21 or 21_12", path, line)
    line, value = keys["number of ports"]
    try:
        n_ports = int(value.split()[0])
    except (ValueError, IndexError):
        raise ZfitInputError(f"[Number of Ports] must be followed by an integer, not {value!r}", path, line) from None
    net_end = len(body) if net_end is None else net_end
    idx = np.array([i for i in range(net_start, net_end) if body[i]], dtype=int)
    return keys, opt, n_ports, idx


def _read_v2(path: Path, body: list[str]) -> TouchstoneData:
    keys, opt, n_ports, idx = _scan_v2(path, body)
    if opt.param in ("g", "h"):
        raise ZfitInputError(
            f"{opt.param.upper()} (hybrid) parameters are not read; export S, Y or Z parameters", path, opt.line
        )
    line, value = keys["version"]
    if value.split()[:1] not in (["2.0"], ["2.1"]):
        raise ZfitInputError(f"[Version] {value!r}: only Touchstone 2.0 and 2.1 have a [Version] keyword", path, line)
    version = value.split()[0]
    if n_ports not in (1, 2):
        raise ZfitInputError(f"{n_ports}-port data: a one-port part is measured with 1 or 2 ports", path, keys["number of ports"][0])
    matrix = keys.get("matrix format", (None, "full"))[1].split()[:1] or ["full"]
    matrix = matrix[0].lower()
    if matrix not in ("full", "lower", "upper"):
        raise ZfitInputError(f"[Matrix Format] {matrix!r}: expected Full, Lower or Upper", path, keys["matrix format"][0])
    n_values = n_ports * n_ports if matrix == "full" else n_ports * (n_ports + 1) // 2
    per_row = 1 + 2 * n_values
    data = [body[i] for i in idx]
    counts = np.fromiter((len(b.split()) for b in data), dtype=int, count=len(data))
    if not data:
        raise ZfitInputError("no network data after [Network Data]", path, keys["network data"][0])
    values, row_lines = _numbers_wrapped(path, data, idx, counts, per_row, n_ports) if np.any(counts != per_row) else (
        _numbers_table(path, data, idx, per_row), idx + 1)
    if "number of frequencies" in keys:
        nline, nvalue = keys["number of frequencies"]
        try:
            n_expected = int(nvalue.split()[0])
        except (ValueError, IndexError):
            raise ZfitInputError(f"[Number of Frequencies] must be an integer, not {nvalue!r}", path, nline) from None
        if n_expected != values.shape[0]:
            raise ZfitInputError(
                f"[Number of Frequencies] says {n_expected} but the network data has {values.shape[0]} rows", path, nline
            )
    if "reference" in keys:
        rline = keys["reference"][0]
        j = rline - 1
        ref_tokens = keys["reference"][1].split()
        while len(ref_tokens) < n_ports and j + 1 < len(body):
            j += 1
            ref_tokens += body[j].split()
        try:
            ref = [float(t) for t in ref_tokens[:n_ports]]
        except ValueError:
            raise ZfitInputError(f"[Reference] needs {n_ports} numbers (ohm)", path, rline) from None
        r0 = _reference(ref, path, rline, n_ports)
    else:
        r0 = _reference(opt.resistance, path, opt.line, n_ports)
    notes: list[str] = []
    _checked_pairs(path, values, opt.fmt, row_lines, notes)
    ts = _skrf_touchstone(path)
    extra = [f"{n_ports} port" + ("s" if n_ports > 1 else "")]
    if matrix != "full":
        extra.append(f"{matrix} matrix")
    if n_ports == 2 and "two-port data order" in keys:
        extra.append("order " + keys["two-port data order"][1].split()[0])
    s = _skrf_s(ts, path, row_lines)
    if matrix != "full" and n_ports > 1:
        # scikit-rf 2.2 drops the off-diagonal terms of a Lower/Upper two-port
        # matrix unless "[Two-Port Data Order] 12_21" is given: fill it here.
        s = _triangle_matrix(values, opt, matrix, n_ports, r0)
    return TouchstoneData(
        f_hz=np.asarray(ts.f, dtype=float),
        s=s,
        reference_ohm=r0,
        n_ports=n_ports,
        lines=row_lines,
        data_format=_describe(version, opt.param, opt.fmt, opt.unit, r0, ", ".join(extra)),
        notes=tuple(notes),
    )


def _triangle_matrix(values, opt, matrix, n_ports, r0) -> np.ndarray:
    """The S matrix of rows holding one triangle of a symmetric matrix (2.0 spec)."""
    with np.errstate(all="ignore"):  # a NaN or inf stays one: the sweep names its line
        pairs = _complex_pairs(values[:, 1::2], values[:, 2::2], opt.fmt)
    rows, cols = np.tril_indices(n_ports) if matrix == "lower" else np.triu_indices(n_ports)
    m = np.zeros((values.shape[0], n_ports, n_ports), dtype=complex)
    m[:, rows, cols] = pairs
    m[:, cols, rows] = pairs
    if opt.param != "s":
        import skrf.network as network

        z0 = np.full((values.shape[0], n_ports), r0, dtype=complex)
        m = getattr(network, f"{opt.param}2s")(m, z0)
    return m


def _skrf_touchstone(path: Path):
    import skrf.io.touchstone as ts_module

    source = str(path)
    with open(path, "rb") as fh:
        head = fh.read(3)
    if head[:2] in (b"\xff\xfe", b"\xfe\xff") or head == b"\xef\xbb\xbf":
        # scikit-rf guesses among 8-bit encodings only and takes a byte-order
        # mark for text: hand it the decoded text.
        import io

        source = io.StringIO(file_text(path, "Touchstone text file"))
        source.name = path.name
    try:
        return ts_module.Touchstone(source)
    except ZfitInputError:
        raise
    except Exception as exc:  # scikit-rf raises bare ValueError/IndexError/KeyError
        # Our scan found nothing wrong that we know how to point at; the
        # library's own wording (a Python exception's) would not help the user.
        raise ZfitInputError("cannot be read as Touchstone 2.0 although its keywords and rows look right; "
                             "check it against the 2.0 specification", path) from None


def _skrf_s(ts, path: Path, row_lines) -> np.ndarray:
    s = np.asarray(ts.s, dtype=complex)
    if s.shape[0] != len(row_lines):
        raise ZfitInputError(
            f"scikit-rf read {s.shape[0]} frequencies where the file has {len(row_lines)} data rows", path
        )
    return s

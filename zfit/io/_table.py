"""Reading delimited tables from impedance analysers and LCR meters.

A table has a frequency column and two columns that together give the
complex impedance in one of the forms the trade uses: magnitude and phase,
series resistance and reactance, magnitude in dB-ohm and phase, or an
equivalent-circuit pair of the meter's series or parallel mode (Ls+Rs,
Cp+D, Lp+Q ...).  Columns are recognised from a header line, with units
taken from it (``Freq (kHz)``, ``L [uH]``, ``Rs_mOhm``); an explicit column
mapping (``--columns``, see `parse_columns`) overrides the guess.  When the
header does not say enough (``L`` without series or parallel mode, no header
at all) the reader stops with an error listing the columns it saw.

Conversions (``w = 2 pi f``; series mode gives ``Z = Rs + j Xs``, parallel
mode gives ``Y = G + j B = 1/Rp + j B`` and ``Z = 1/Y``; ``D = 1/Q``):

========  ==============================================================
Ls, Rs    ``Z = Rs + j w Ls``
Ls, Q     ``Rs = w |Ls| / Q``  (Q = Xs / Rs)
Cs, Rs    ``Z = Rs + 1 / (j w Cs)``
Cs, D     ``Rs = D / (w |Cs|)``  (D = Rs / |Xs| = w Cs Rs)
Lp, Rp    ``Y = 1/Rp + 1 / (j w Lp)``
Lp, Q     ``G = 1 / (Q w |Lp|)``  (Q = Rp / (w Lp) = |B| / G)
Cp, Rp    ``Y = 1/Rp + j w Cp``
Cp, D     ``G = D w |Cp|``  (D = G / |B|)
========  ==============================================================

These are the definitions of the series and parallel equivalent circuits
and of Q and D (common practice; e.g. the IEC 60050-131 definitions of
quality factor and loss tangent).
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from .._errors import ZfitInputError
from ._text import file_text, is_number

__all__ = ["TableData", "read_table", "parse_columns", "column_items", "numeric_block", "NumericBlock", "QUANTITIES", "PAIRS"]

#: Canonical quantity names, with what they are and their SI unit.
QUANTITIES = {
    "f": ("frequency", "Hz"),
    "zmag": ("impedance magnitude |Z|", "ohm"),
    "zdb": ("impedance magnitude in dB re 1 ohm", "dBohm"),
    "phase": ("impedance phase", "deg"),
    "rs": ("series resistance (R of R+jX, ESR)", "ohm"),
    "xs": ("series reactance (X of R+jX)", "ohm"),
    "ls": ("series-mode inductance", "H"),
    "lp": ("parallel-mode inductance", "H"),
    "cs": ("series-mode capacitance", "F"),
    "cp": ("parallel-mode capacitance", "F"),
    "rp": ("parallel-mode resistance", "ohm"),
    "xp": ("parallel-mode reactance", "ohm"),
    "g": ("parallel conductance", "S"),
    "b": ("parallel susceptance", "S"),
    "d": ("dissipation factor D", ""),
    "q": ("quality factor Q", ""),
}

#: Column pairs that give Z, in the order of preference when a table has several.
PAIRS = (
    ("rs", "xs"), ("zmag", "phase"), ("zdb", "phase"),
    ("ls", "rs"), ("ls", "q"), ("ls", "d"), ("cs", "rs"), ("cs", "d"), ("cs", "q"),
    ("lp", "rp"), ("lp", "q"), ("lp", "d"), ("lp", "g"),
    ("cp", "rp"), ("cp", "d"), ("cp", "q"), ("cp", "g"),
    ("g", "b"), ("rp", "xp"),
)

_DISPLAY = {"f": "f", "zmag": "|Z|", "zdb": "|Z|dB", "phase": "phase", "rs": "Rs", "xs": "Xs", "ls": "Ls", "lp": "Lp",
            "cs": "Cs", "cp": "Cp", "rp": "Rp", "xp": "Xp", "g": "G", "b": "B", "d": "D", "q": "Q"}

# Header names (lower case, spaces, '|' and '_' removed) -> quantity.  The
# ambiguous ones ("l", "c", "r") are resolved against the rest of the header.
_ALIASES = {
    "f": "f", "freq": "f", "frequency": "f", "fhz": "f",
    "z": "zmag", "zmag": "zmag", "magz": "zmag", "absz": "zmag", "zabs": "zmag", "mag": "zmag",
    "impedance": "zmag", "magnitude": "zmag", "mag(z)": "zmag", "abs(z)": "zmag",
    "zdb": "zdb", "db": "zdb", "magdb": "zdb", "zmagdb": "zdb", "z(db)": "zdb", "dbz": "zdb",
    "phase": "phase", "theta": "phase", "θ": "phase", "thetaz": "phase", "angle": "phase", "phi": "phase",
    "arg": "phase", "argz": "phase", "arg(z)": "phase", "phase(z)": "phase", "zphase": "phase", "phasez": "phase",
    "rs": "rs", "esr": "rs", "re": "rs", "real": "rs", "re(z)": "rs", "rez": "rs", "zreal": "rs", "real(z)": "rs",
    "xs": "xs", "x": "xs", "im": "xs", "imag": "xs", "im(z)": "xs", "imz": "xs", "zimag": "xs", "imag(z)": "xs",
    "reactance": "xs",
    "ls": "ls", "esl": "ls", "lp": "lp", "cs": "cs", "cp": "cp", "rp": "rp", "xp": "xp",
    "g": "g", "gp": "g", "conductance": "g", "b": "b", "bp": "b", "susceptance": "b",
    "d": "d", "df": "d", "tand": "d", "tanδ": "d", "dissipation": "d", "dissipationfactor": "d",
    "q": "q", "qfactor": "q", "quality": "q",
    "l": "l?", "c": "c?", "r": "r?", "inductance": "l?", "capacitance": "c?", "resistance": "r?",
    # The same names as bench software localised to German, French and
    # Spanish writes them (accents kept and dropped).
    "frequenz": "f", "fréquence": "f", "frequence": "f", "frecuencia": "f",
    "impedanz": "zmag", "betrag": "zmag", "impédance": "zmag", "module": "zmag", "impedancia": "zmag",
    "phasenwinkel": "phase", "winkel": "phase", "phase(°)": "phase", "déphasage": "phase", "dephasage": "phase",
    "fase": "phase", "ángulo": "phase", "angulo": "phase",
    "wirkwiderstand": "rs", "realteil": "rs", "blindwiderstand": "xs", "imaginärteil": "xs", "imaginaerteil": "xs",
    "réactance": "xs", "reactancia": "xs", "güte": "q", "guete": "q", "verlustfaktor": "d",
    "induktivität": "l?", "induktivitaet": "l?", "inductancia": "l?", "kapazität": "c?", "kapazitaet": "c?",
    "capacité": "c?", "capacite": "c?", "capacidad": "c?", "widerstand": "r?", "résistance": "r?",
    "resistencia": "r?",
}

#: The SCPI codes for a value beyond the instrument's range (SCPI 1999,
#: volume 1, 7.2.1.5: 9.9E37 for infinity, 9.91E37 for not-a-number); any
#: other huge value is refused by the sweep's range check.
OVERRANGE = 9.9e37
_OVERRANGE_CODES = (9.9e37, 9.91e37)

_PREFIX = {"": 1.0, "p": 1e-12, "n": 1e-9, "u": 1e-6, "m": 1e-3, "k": 1e3, "M": 1e6, "G": 1e9, "f": 1e-15}
_BASE = {"f": "hz", "zmag": "ohm", "rs": "ohm", "xs": "ohm", "rp": "ohm", "xp": "ohm", "ls": "h", "lp": "h",
         "l?": "h", "cs": "f", "cp": "f", "c?": "f", "r?": "ohm", "g": "s", "b": "s"}


@dataclass(frozen=True)
class TableData:
    """Impedance read from a table.

    Attributes
    ----------
    f_hz, z_ohm : numpy.ndarray
        Frequencies (Hz) and complex impedances (ohm), in file order.
    lines : numpy.ndarray
        1-based file line of each row.
    data_format : str
        What was understood, e.g. ``"table, comma, f [kHz], Ls [uH], Rs [ohm] (series mode)"``.
    notes : tuple of str
        Assumptions and choices made (units taken as SI, other column sets ignored).
    """

    f_hz: np.ndarray
    z_ohm: np.ndarray
    lines: np.ndarray
    data_format: str
    notes: tuple[str, ...] = field(default=())


def _norm_unit(u: str) -> str:
    u = u.strip().replace("Ω", "ohm").replace("µ", "u").replace("μ", "u").replace("°", "deg")
    u = re.sub(r"(?i)ohms?$", "ohm", u)
    return u.replace(" ", "")


def _scale(q: str, unit: str | None, what: str, path, line):
    """Return (factor to SI, unit text) of quantity `q` written in `unit`."""
    if unit is None or unit == "":
        return 1.0, None
    u = _norm_unit(unit)
    if q == "phase":
        if u.lower() in ("deg", "degree", "degrees", "deg."):
            return np.pi / 180.0, "deg"
        if u.lower() in ("rad", "radian", "radians"):
            return 1.0, "rad"
    elif q == "zdb":
        if u.lower() in ("db", "dbohm", "db(ohm)", "dbω"):
            return 1.0, "dBohm"
    elif q in ("d", "q"):
        if u == "%" and q == "d":
            return 0.01, "%"
        if u in ("", "1"):
            return 1.0, None
    elif q in _BASE:
        base = _BASE[q]
        low = u.lower()
        if q == "f":
            # Frequency: "MHz", "mhz", "MHZ" all mean megahertz (millihertz does not occur here).
            for p, k in (("", 1.0), ("k", 1e3), ("m", 1e6), ("g", 1e9)):
                if low == p + "hz":
                    return k, u
        elif low == base:
            return 1.0, u
        elif low.endswith(base) and len(u) == len(base) + 1 and u[0] in _PREFIX:
            return _PREFIX[u[0]], u
        elif low == "meg" + base or low == "mega" + base:
            return 1e6, u
        elif q in ("g", "b") and low == "mho":
            return 1.0, u
    raise ZfitInputError(f"unknown unit {unit!r} for {what}", path, line)


def _name_and_unit(text: str):
    """``'Freq (kHz)'`` -> ``('Freq', 'kHz')``, ``'f / Hz'`` -> ``('f', 'Hz')``, else ``(text, None)``.

    Written out rather than as one regular expression: the pattern with a
    lazy name and two alternatives backtracks quadratically on a long header
    field (120 kB took 51 s); this is one pass from the right.
    """
    t = text.rstrip()
    if t.endswith((")", "]")):
        k = max(t.rfind("("), t.rfind("["))
        inner = t[k + 1:-1]
        if k > 0 and ")" not in inner and "]" not in inner:
            return t[:k].rstrip(), inner
    k = t.rfind("/")
    if k > 0 and t[k + 1:].strip():
        return t[:k].rstrip(), t[k + 1:].strip()
    return text, None


def _split_name(text: str):
    """``'Freq (kHz)'`` -> ``('freq', 'kHz')``; ``'Rs_mOhm'`` -> ``('rs', 'mOhm')``."""
    text = text.strip().strip('"').strip("'").strip()
    unit = None
    name, found = _name_and_unit(text)
    if found is not None and name:
        text, unit = name, found
    elif "_" in text:
        head, _, tail = text.rpartition("_")
        if head and _looks_like_unit(tail):
            text, unit = head, tail
    key = text.lower().replace(" ", "").replace("|", "").replace("_", "").replace("-", "")
    return key, unit, text


def _looks_like_unit(tail: str) -> bool:
    u = _norm_unit(tail).lower()
    return bool(re.fullmatch(r"(p|n|u|m|k|meg|g)?(hz|ohm|h|f|s)|deg|rad|db|dbohm|%", u))


def _quantity(key: str) -> str | None:
    if key in _ALIASES:
        return _ALIASES[key]
    if key in QUANTITIES:
        return key
    return None


# ------------------------------------------------------------------ --columns


def parse_columns(text: str, header: list[str] | None = None, n_columns: int | None = None, path=None):
    """Return ``{quantity: (column_index, unit or None)}`` from a ``--columns`` text.

    Syntax (items separated by commas):

    * positional: one item per column in file order, ``f[kHz],Ls[uH],Rs``;
      ``-`` (or ``skip``) skips a column, columns after the last item are
      ignored;
    * by column: ``QUANTITY[UNIT]=COLUMN`` where COLUMN is the 1-based column
      number or the header text of that column, ``f=1,Ls[nH]=3,Rs=4`` or
      ``phase[rad]="Theta"``.

    A unit is written in brackets ``[kHz]``, parentheses ``(kHz)`` or after an
    underscore ``freq_kHz``; without one, the unit of the header applies, and
    without that the SI unit.  Quantity names: ``f``, ``zmag`` (or ``|Z|``),
    ``zdb``, ``phase`` (``deg`` or ``rad``), ``rs`` (or ``R``, ``ESR``),
    ``xs`` (or ``X``), ``ls``, ``lp``, ``cs``, ``cp``, ``rp``, ``xp``, ``g``,
    ``b``, ``d``, ``q`` (case does not matter).

    Parameters
    ----------
    text : str
        The mapping.
    header : list of str, optional
        The header names, to resolve columns given by name.
    n_columns : int, optional
        Number of columns in the file, to check column numbers.
    path : path-like, optional
        The file, for error messages.
    """
    out = {}
    for key, unit, shown, col in column_items(text, header, path, "f[kHz],zmag,phase[deg]"):
        q = _quantity(key)
        if q is None or q.endswith("?"):
            hint = " (say Ls or Lp, Cs or Cp, Rs or Rp: the meter's series or parallel mode)" if q else ""
            raise ZfitInputError(f"--columns: unknown quantity {shown!r}{hint}; known: {', '.join(QUANTITIES)}", path)
        if n_columns is not None and not 0 <= col < n_columns:
            raise ZfitInputError(f"--columns: column {col + 1} for {shown!r} but the file has {n_columns} columns", path)
        if q in out:
            raise ZfitInputError(f"--columns: {_DISPLAY[q]} given twice", path)
        if unit is None and header is not None and col < len(header):
            unit = _split_name(header[col])[1]
        out[q] = (col, unit)
    return out


def column_items(text: str, header: list[str] | None, path, example: str):
    """Yield ``(key, unit, shown, column index)`` for each item of a ``--columns`` text, skipped columns left out.

    The syntax of `parse_columns`; `key` is the item's name normalised
    (lower case, no spaces, ``|``, ``_`` or ``-``), `shown` as written.

    Parameters
    ----------
    text : str
        The mapping.
    header : list of str or None
        The header names, to resolve columns given by name.
    path : path-like or None
        The file, for error messages.
    example : str
        A mapping to show when `text` is empty.
    """
    items = [t.strip() for t in _split_items(text) if t.strip()]
    if not items:
        raise ZfitInputError(f"--columns is empty; example: --columns {example!r}", path)
    named = ["=" in t for t in items]
    if any(named) and not all(named):
        raise ZfitInputError(f"--columns {text!r}: give either every column in order or every item as QUANTITY=COLUMN, not a mix", path)
    for pos, item in enumerate(items):
        if named[pos]:
            left, _, right = item.partition("=")
            right = right.strip().strip('"').strip("'")
            if re.fullmatch(r"\d+", right):
                col = int(right) - 1
            else:
                names = [h.strip().strip('"') for h in (header or [])]
                lowered = [h.lower() for h in names]
                if right.lower() not in lowered:
                    seen = ", ".join(repr(h) for h in names) if names else "none (no header line)"
                    raise ZfitInputError(f"--columns: no column named {right!r}; columns seen: {seen}", path)
                col = lowered.index(right.lower())
        else:
            left, col = item, pos
            if left.lower() in ("-", "skip", "_"):
                continue
        key, unit, shown = _split_name(left)
        yield key, unit, shown, col


def _split_items(text: str):
    # Commas separate items except inside quotes.
    return re.findall(r'(?:[^,"\']|"[^"]*"|\'[^\']*\')+', text)


# ------------------------------------------------------------------ reading



def _fields(line: str, delim: str | None) -> list[str]:
    if delim is None:
        toks = line.split()
        # "Freq (kHz)" split on whitespace: glue a unit group to its name.
        out = []
        for t in toks:
            if out and t[0] in "([":
                out[-1] += t
            else:
                out.append(t)
        return out
    return [t.strip() for t in line.split(delim)]


def _delimiter(line: str):
    if "\t" in line:
        return "\t", "tab"
    if ";" in line:
        return ";", "semicolon"
    if "," in line:
        return ",", "comma"
    return None, "whitespace"


@dataclass(frozen=True)
class NumericBlock:
    """The block of numbers of a delimited table, with the header above it.

    Attributes
    ----------
    values : numpy.ndarray
        The numbers, rows by columns.
    data_idx : numpy.ndarray
        0-based file line of each row.
    header : list of str or None
        The header fields (with the units of a units row merged in).
    header_line : int or None
        Its 1-based file line.
    delimiter : str or None
        The field separator (None for whitespace).
    delimiter_name : str
        ``"comma"``, ``"semicolon"``, ``"tab"`` or ``"whitespace"``.
    decimal_comma : bool
        Whether a comma was read as the decimal mark.
    notes : tuple of str
        Lines skipped and units taken from a units row.
    comments : tuple of str
        The text of the comment lines (``#``, ``!``), in file order.
    """

    values: np.ndarray
    data_idx: np.ndarray
    header: list[str] | None
    header_line: int | None
    delimiter: str | None
    delimiter_name: str
    decimal_comma: bool
    notes: tuple[str, ...]
    comments: tuple[str, ...]


def numeric_block(path, what: str = "frequency and impedance", columns_given: bool = False) -> NumericBlock:
    """Return the numbers of a delimited table and the header above them.

    The first line that is all numbers starts the data; the line before it
    (if text) is the header, with a units row under it merged in; text lines
    before are a preamble, up to three text lines after the data a trailer.

    Parameters
    ----------
    path : str or os.PathLike
        The table.
    what : str
        What the table should hold, for the message when it has no numbers.
    columns_given : bool
        Whether the columns are mapped explicitly (a header that does not
        line up with the data is then not an error).

    Raises
    ------
    ZfitInputError
        With the file and line: no numbers, text among the numbers, rows of
        different lengths, a header that does not line up with the data.
    """

    path = Path(path)
    lines = file_text(path, "text table").splitlines()
    # Quotes around fields (spreadsheet exports) carry no meaning here.
    stripped = [ln.replace('"', "").strip() for ln in lines]
    content = [i for i, s in enumerate(stripped) if s and s[0] not in "#!"]
    if not content:
        raise ZfitInputError("no data: the file is empty or only comments", path)

    # The first line that is all numbers starts the data; the line before it
    # (if text) is the header; text lines before that are a preamble.
    first = None
    delim = None
    dname = "whitespace"
    decimal_comma = False
    for k, i in enumerate(content):
        s = stripped[i]
        if s[0] not in "0123456789+-.":
            continue
        d, name = _delimiter(s)
        if d is not None and s.endswith(d):
            s = s[: -len(d)].rstrip()  # a delimiter closing every row
        toks = _fields(s, d)
        dc = d != "," and any("," in t for t in toks)
        if dc:
            toks = [t.replace(",", ".") for t in toks]
        if len(toks) >= 2 and all(is_number(t) for t in toks):
            first, delim, dname, decimal_comma = k, d, name, dc
            break
    if first is None:
        raise ZfitInputError(f"no row of numbers found (is this a table of {what}?)", path, content[0] + 1)
    header = None
    header_line = None
    preamble = first
    trailing = delim is not None and stripped[content[first]].endswith(delim)
    if trailing:
        for i in content:
            if stripped[i].endswith(delim):
                stripped[i] = stripped[i][: -len(delim)].rstrip()
    units_note = None
    if first > 0:
        hi = content[first - 1]
        cand = _fields(stripped[hi], delim)
        n_data = len(_fields(stripped[content[first]], delim))
        if first > 1 and len(cand) == n_data and _is_units_row(cand):
            above = _fields(stripped[content[first - 2]], delim)
            if len(above) == n_data:
                # A header with a units row under it (``Freq,Z,Phase`` then ``Hz,Ohm,deg``).
                units_note = f"units taken from the row under the header (line {hi + 1})"
                cand = [_with_unit(h, u) for h, u in zip(above, cand)]
                hi, first = content[first - 2], first - 1
        if len(cand) == n_data:
            header, header_line, preamble = cand, hi + 1, first - 1
        elif not columns_given and len(cand) > 1 and len(cand) in range(n_data - 1, n_data + 4):
            # Looks like a header, but does not line up with the data.
            raise ZfitInputError(
                f"the header has {len(cand)} fields ({', '.join(repr(c) for c in cand)}) but the data rows have "
                f"{n_data} columns (names with spaces in a whitespace-separated table?); give --columns",
                path,
                hi + 1,
            )
    notes = [units_note] if units_note else []
    if preamble:
        notes.append(f"{preamble} text line(s) before the {'header' if header else 'data'} skipped")

    data_rows = content[first + (1 if units_note else 0):]
    data_rows, trailer = _without_trailer(data_rows, stripped, delim)
    if trailer:
        notes.append(f"{len(trailer)} text line(s) after the data ignored (line {trailer[0] + 1}: "
                     f"{stripped[trailer[0]][:40]!r})")
    data_idx = np.array(data_rows, dtype=int)
    rows = [stripped[i] for i in data_idx]
    if decimal_comma:
        rows = [r.replace(",", ".") for r in rows]
    try:
        values = np.loadtxt(rows, delimiter=delim, ndmin=2, dtype=float, comments=None)
    except ValueError:
        _locate_bad_row(path, rows, data_idx, delim)
    comments = [s.lstrip("#!").strip() for s in stripped if s[:1] in ("#", "!")]
    return NumericBlock(values, data_idx, header, header_line, delim, dname, decimal_comma, tuple(notes),
                        tuple(comments))


def read_table(path, columns: str | None = None) -> TableData:
    """Return the impedance in an analyser or LCR-meter table.

    Parameters
    ----------
    path : str or os.PathLike
        The table: comma, semicolon, tab or whitespace separated; ``#`` and
        ``!`` start comment lines; a header line or none; text lines before
        the header (instrument settings) are skipped.
    columns : str, optional
        A column mapping in the syntax of `parse_columns`; overrides the
        header.  Needed for a table without a header.

    Returns
    -------
    TableData

    Raises
    ------
    ZfitInputError
        With the file and line: no numbers, text among the numbers, rows of
        different lengths, columns that cannot be told apart or that do not
        give an impedance.
    """
    block = numeric_block(path, columns_given=columns is not None)
    values, data_idx, header, header_line = block.values, block.data_idx, block.header, block.header_line
    dname, decimal_comma, notes = block.delimiter_name, block.decimal_comma, list(block.notes)
    n_cols = values.shape[1]

    if columns is not None:
        mapping = parse_columns(columns, header, n_cols, path)
        source = "--columns"
    elif header is None:
        raise ZfitInputError(
            f"no header line: cannot tell what the {n_cols} columns are; give --columns, "
            "e.g. --columns 'f[Hz],zmag,phase[deg]' or 'f[kHz],Ls[uH],Rs'",
            path,
            int(data_idx[0]) + 1,
        )
    else:
        mapping = _mapping_from_header(header, path, header_line)
        source = "header"

    line_for_units = header_line
    seen = ", ".join(repr(h) for h in header) if header else f"{n_cols} unnamed columns"
    if "f" not in mapping:
        if header and any(h.strip().lower().split("(")[0].split("[")[0].strip() in ("time", "t", "time_s", "seconds") for h in header):
            raise ZfitInputError(
                f"no frequency column but a time column ({seen}): this looks like an oscilloscope "
                "capture; analyse it with 'zfit step'",
                path,
                line_for_units,
            )
        raise ZfitInputError(f"no frequency column; columns seen: {seen}; give --columns", path, line_for_units)
    pair = None
    usable = [p for p in PAIRS if p[0] in mapping and p[1] in mapping]
    if not usable:
        found = ", ".join(_DISPLAY[q] for q in mapping) or "none"
        raise ZfitInputError(
            f"no pair of columns that gives the impedance (recognised: {found}; columns seen: {seen}); "
            "expected e.g. |Z|+phase, R+X, Ls+Rs, Cp+D; give --columns",
            path,
            line_for_units,
        )
    pair = usable[0]
    if len(usable) > 1:
        notes.append(
            f"impedance taken from {_DISPLAY[pair[0]]}+{_DISPLAY[pair[1]]}; also present: "
            + ", ".join(f"{_DISPLAY[a]}+{_DISPLAY[b]}" for a, b in usable[1:])
        )

    unitless = []

    def column(q):
        col, unit = mapping[q]
        f_si, shown = _scale(q, unit, f"column {_DISPLAY[q]}", path, line_for_units)
        if shown is None and QUANTITIES[q][1] not in ("", "deg"):
            unitless.append(f"{_DISPLAY[q]} ({QUANTITIES[q][1]})")
        return values[:, col] * f_si, shown

    values, data_idx = _without_overrange(values, data_idx, [mapping[q][0] for q in ("f",) + pair], path, notes)
    f, f_unit = column("f")
    a, a_unit = column(pair[0])
    b, b_unit = column(pair[1])
    if pair[0] == "zmag" and np.any(a < 0):
        i = int(np.flatnonzero(a < 0)[0])
        raise ZfitInputError(f"|Z| = {values[i, mapping['zmag'][0]]:g} is negative: a magnitude is not "
                             "(is the column a reactance or a dB value?)", path, int(data_idx[i]) + 1)
    if "phase" in pair and b_unit is None:
        b, b_unit = _phase_without_unit(path, values[:, mapping["phase"][0]], line_for_units, seen)
    z = _impedance(pair, f, a, b)
    if unitless:
        notes.append("no unit given, SI taken: " + ", ".join(unitless))
    mode = {"ls": "series mode", "cs": "series mode", "lp": "parallel mode", "cp": "parallel mode",
            "g": "parallel mode", "rp": "parallel mode"}.get(pair[0], "")
    parts = [f"{_DISPLAY['f']} [{f_unit or 'Hz'}]"]
    for q, u in ((pair[0], a_unit), (pair[1], b_unit)):
        si = QUANTITIES[q][1]
        parts.append(f"{_DISPLAY[q]} [{u or si}]" if (u or si) else _DISPLAY[q])
    fmt = f"table, {dname}{' (decimal comma)' if decimal_comma else ''}, columns from {source}: " + ", ".join(parts)
    if mode:
        fmt += f" ({mode})"
    return TableData(f_hz=f, z_ohm=z, lines=data_idx + 1, data_format=fmt, notes=tuple(notes))


def _without_overrange(values, data_idx, cols, path, notes):
    """The rows without an instrument's overrange code (9.9E37, 9.91E37) in the columns used, with a note.

    Any other number beyond 1e30 is refused with its line: no impedance
    measurement reaches it, and its products overflow.
    """
    with np.errstate(invalid="ignore"):
        a = np.abs(values[:, cols])
        over = np.any((np.abs(a - _OVERRANGE_CODES[0]) <= 1e-6 * OVERRANGE)
                      | (np.abs(a - _OVERRANGE_CODES[1]) <= 1e-6 * OVERRANGE), axis=1)
    huge = np.isfinite(a) & (a > 1e30) & ~over[:, None]
    if huge.any():
        i = int(np.flatnonzero(huge.any(axis=1))[0])
        raise ZfitInputError(f"{values[i, cols][huge[i]][0]:g} is beyond 1e30: no impedance measurement gives it "
                             "(an instrument's overrange code other than 9.9E37?)", path, int(data_idx[i]) + 1)
    if not over.any():
        return values, data_idx
    if over.all():
        raise ZfitInputError(f"every row holds the overrange code {OVERRANGE:g} (the instrument was out of range "
                             "throughout): nothing measured", path, int(data_idx[0]) + 1)
    lines = ", ".join(str(int(x) + 1) for x in data_idx[over][:5]) + (" ..." if over.sum() > 5 else "")
    notes.append(f"{int(over.sum())} row(s) with the instrument's overrange code ({OVERRANGE:g}) dropped as "
                 f"missing points (line {lines})")
    return values[~over], data_idx[~over]


def _is_units_row(fields: list[str]) -> bool:
    """Whether a row of fields holds units only (``Hz, Ohm, deg`` or ``[kHz], [uH], []``)."""
    units = [f.strip().strip("[]()").strip() for f in fields]
    return any(units) and all(u in ("", "-", "1") or _looks_like_unit(u) for u in units)


def _with_unit(name: str, unit: str) -> str:
    """A header field with the unit of the row under it, unless it carries one already."""
    u = unit.strip().strip("[]()").strip()
    if not u or u in ("-", "1") or _split_name(name)[1] is not None:
        return name
    return f"{name} [{u}]"


def _without_trailer(rows: list[int], stripped: list[str], delim) -> tuple[list[int], list[int]]:
    """The data rows without the text lines that end some exports (``END``, ``[EOF]``, a count).

    Up to three lines whose first field is not a number, after the last
    row of numbers, are an end marker; text among the rows is not, and is
    reported by the number parse.
    """
    k = len(rows)
    while k > 0 and len(rows) - k < 3 and not is_number(_fields(stripped[rows[k - 1]], delim)[0] or "x"):
        k -= 1
    if k == len(rows) or k == 0 or not is_number(_fields(stripped[rows[k - 1]], delim)[0] or "x"):
        return rows, []
    return rows[:k], rows[k:]


def _phase_without_unit(path, theta, line, seen):
    m = float(np.nanmax(np.abs(theta))) if theta.size else 0.0
    # A passive impedance has |phase| <= 90 deg = pi/2 rad: values beyond pi/2
    # (with a margin for noise) can only be degrees.
    if m > 1.05 * np.pi / 2:
        return np.deg2rad(theta), "deg"
    raise ZfitInputError(
        f"the phase column has no unit and its values (|phase| <= {m:.3g}) could be degrees or radians; "
        f"write the unit in the header ('phase (deg)') or give --columns with phase[deg] or phase[rad] (columns seen: {seen})",
        path,
        line,
    )


def _locate_bad_row(path, rows, idx, delim):
    n0 = len(_fields(rows[0], delim))
    for j, r in enumerate(rows):
        toks = _fields(r, delim)
        if len(toks) != n0:
            raise ZfitInputError(f"{len(toks)} columns where the first data row has {n0}", path, int(idx[j]) + 1)
        for t in toks:
            if not is_number(t):
                what = "an empty field" if t == "" else f"{t!r} is not a number"
                raise ZfitInputError(f"{what} (in a data row)", path, int(idx[j]) + 1)
    raise ZfitInputError("the data rows cannot be read as numbers", path, int(idx[0]) + 1)


def _mapping_from_header(header, path, line):
    found = {}
    unknown = []
    for col, h in enumerate(header):
        key, unit, shown = _split_name(h)
        q = _quantity(key)
        if q == "zmag" and unit and _norm_unit(unit).lower().startswith("db"):
            q = "zdb"
        if q is None:
            unknown.append(h)
            continue
        if q in found:
            raise ZfitInputError(
                f"columns {found[q][0] + 1} ({header[found[q][0]]!r}) and {col + 1} ({h!r}) both look like "
                f"{QUANTITIES.get(q, ('?',))[0] if q in QUANTITIES else h}; give --columns",
                path,
                line,
            )
        found[q] = (col, unit)
    seen = ", ".join(repr(h) for h in header)
    # Resolve names that do not say series or parallel mode.
    for amb, kind in (("l?", "L"), ("c?", "C")):
        if amb in found:
            raise ZfitInputError(
                f"column {header[found[amb][0]]!r} does not say series or parallel mode ({kind}s or {kind}p give "
                f"different impedances); columns seen: {seen}; give --columns, e.g. "
                f"--columns 'f=1,{kind.lower()}s={found[amb][0] + 1},...'",
                path,
                line,
            )
    if "r?" in found:
        col, unit = found.pop("r?")
        if "xs" in found or any(k in found for k in ("ls", "cs")):
            target = "rs"
        elif any(k in found for k in ("lp", "cp", "xp")):
            target = "rp"
        else:
            target = None
        if target is not None:
            if target in found:
                raise ZfitInputError(f"two resistance columns ({header[col]!r} and {header[found[target][0]]!r}); give --columns", path, line)
            found[target] = (col, unit)
    return found


def _impedance(pair, f, a, b) -> np.ndarray:
    w = 2 * np.pi * f
    # Overflow and division by zero leave inf or NaN, which the sweep's
    # validation names by line: no numpy warning reaches the user.
    with np.errstate(all="ignore"):
        p = pair
        if p == ("rs", "xs"):
            return a + 1j * b
        if p in (("zmag", "phase"), ("zdb", "phase")):
            mag = 10.0 ** (a / 20.0) if p[0] == "zdb" else a
            return mag * np.exp(1j * b)
        if p[0] in ("ls", "cs"):
            xs = w * a if p[0] == "ls" else -1.0 / (w * a)
            if p[1] == "rs":
                rs = b
            elif p[1] == "q":
                rs = np.abs(xs) / np.abs(b)
            else:
                rs = np.abs(xs) * np.abs(b)
            return rs + 1j * xs
        if p == ("g", "b"):
            return 1.0 / (a + 1j * b)
        if p == ("rp", "xp"):
            return 1.0 / (1.0 / a - 1j / b)
        # Parallel mode: admittance G + jB.
        bp = -1.0 / (w * a) if p[0] == "lp" else w * a
        if p[1] == "rp":
            g = 1.0 / b
        elif p[1] == "g":
            g = b
        elif p[1] == "q":
            g = np.abs(bp) / np.abs(b)
        else:
            g = np.abs(bp) * np.abs(b)
        return 1.0 / (g + 1j * bp)

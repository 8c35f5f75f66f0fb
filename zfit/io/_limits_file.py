"""Reading a limits file: the tolerance of each quantity a lot is checked against.

The limits file is TOML (read with the standard library's `tomllib`) in a
layout of zfit's own, described in ``docs/batch.md``::

    title = "Incoming inspection, 10 uH choke"
    model = "inductor"          # optional: the family to identify
    guard_band_k = 2            # optional: guard band in standard uncertainties

    [limit.L]
    nominal = "10u"
    tolerance_percent = 10      # or [-20, 80], or tolerance = "0.5u"

    [limit.R_s]
    max = "250m"

    [limit.SRF]
    min = "20M"

    [[limit.Q]]                 # a figure at a frequency: one table per frequency
    at = "1M"
    min = 150

    [limit.I_sat_20]            # a figure of a sweep set against DC bias (docs/bias.md)
    min = "3A"

A lot of wound cores adds a ``[core]`` table (turns and geometry, the
options of ``zfit core``) and may then limit the material figures ``mu_i``,
``f_mu_peak``, ``f_mu_cross`` and ``loss_factor`` (at a frequency); a lot
of beads may limit ``f_RX`` and ``Z_mag`` at 100 MHz (docs/cores.md).

The decision rule that checks a part against these limits is in
`zfit.lot._conformity`.
"""

from __future__ import annotations

import math
import re
import tomllib
from dataclasses import dataclass
from pathlib import Path

from .._errors import ZfitInputError
from .._units import bounded, format_eng, parse_quantity, written_unit
from ..data._sweep import ELEMENT_RANGES, FREQUENCY_RANGE_HZ
from .._parameters import BIAS_FIGURES, FAMILY_OF, PARAMETER_KEYS, UNITS
from ._core_spec import CORE_TABLE_KEYS, CoreSpec, core_spec

__all__ = [
    "Limit",
    "Limits",
    "read_limits",
    "parse_limits",
    "figure_name",
    "SPOT_UNITS",
    "DEFAULT_GUARD_K",
    "CORE_FIGURES",
]

#: Figures read at a named frequency (``at = ...``), with their units.
#: ``ESR`` at a frequency is the real part of Z there (not the circuit's ESR).
SPOT_UNITS = {"Q": "", "D": "", "ESR": "ohm", "R": "ohm", "X": "ohm", "L_eff": "H", "C_eff": "F", "Z_mag": "ohm"}
#: A core's loss factor tan(delta)/mu_i at a frequency (docs/cores.md); needs the ``[core]`` table.
SPOT_UNITS["loss_factor"] = ""

#: Figures that need the ``[core]`` table (the winding's turns and the core's geometry).
CORE_FIGURES = ("mu_i", "f_mu_peak", "f_mu_cross", "loss_factor")

_LIMIT_KEYS = {"nominal", "tolerance_percent", "tolerance", "min", "max", "at", "guard_band_k"}
_TOP_KEYS = {"title", "model", "guard_band_k", "limit", "core"}
_MODELS = tuple(PARAMETER_KEYS)

#: Guard band in standard uncertainties when the file gives none (JCGM 106:2012, 8.3.2).
DEFAULT_GUARD_K = 2.0



def figure_name(quantity: str, f_hz: float | None = None) -> str:
    """Return the name of a figure in results and summaries, e.g. ``Q@1MHz``.

    Parameters
    ----------
    quantity : str
        A parameter key, ``SRF``, or a spot quantity (``Q``, ``D``, ...).
    f_hz : float, optional
        The frequency of a spot figure; None for parameters and SRF.
    """
    if f_hz is None:
        return quantity
    return f"{quantity}@{format_eng(f_hz, digits=6)}Hz"


@dataclass(frozen=True)
class Limit:
    """One limit on one quantity.

    Attributes
    ----------
    name : str
        The figure it checks (``L``, ``SRF``, ``Q@1MHz``): also its summary column.
    quantity : str
        A parameter key, ``SRF`` or a spot quantity.
    f_hz : float or None
        Frequency of a spot figure.
    lower, upper : float or None
        The tolerance interval ``[T_L, T_U]`` in SI units (None: unbounded).
    nominal : float or None
        The nominal value, when the limit was given as nominal and tolerance.
    unit : str
        SI unit of the quantity.
    guard_band_k : float
        Guard band in standard uncertainties (2 by default, 0 = simple acceptance).
    line : int or None
        Line of the limits file where the limit is written.
    text : str
        The limit as the user wrote it, in words (``10u -10 %/+10 %``).
    """

    name: str
    quantity: str
    f_hz: float | None
    lower: float | None
    upper: float | None
    nominal: float | None
    unit: str
    guard_band_k: float = DEFAULT_GUARD_K
    line: int | None = None
    text: str = ""

    @property
    def is_spot(self) -> bool:
        """Whether the limit is on a figure at a frequency."""
        return self.f_hz is not None

    @property
    def is_bias(self) -> bool:
        """Whether the limit is on a figure of a sweep set against DC bias (``I_sat_20``)."""
        return self.quantity in BIAS_FIGURES


@dataclass(frozen=True)
class Limits:
    """A parsed limits file.

    Attributes
    ----------
    limits : tuple of Limit
        In the order of the file.
    path : str
        The file they came from.
    title : str
        The title line of the file, or "".
    model : str or None
        The family the file is for (``inductor``/``capacitor``), if stated.
    guard_band_k : float
        The file's default guard band in standard uncertainties.
    core : CoreSpec or None
        The ``[core]`` table: turns and geometry of the lot's cores (docs/cores.md).
    """

    limits: tuple[Limit, ...]
    path: str = ""
    title: str = ""
    model: str | None = None
    guard_band_k: float = DEFAULT_GUARD_K
    core: CoreSpec | None = None

    @property
    def frequencies_hz(self) -> tuple[float, ...]:
        """The distinct frequencies of spot limits, ascending."""
        return tuple(sorted({lim.f_hz for lim in self.limits if lim.f_hz is not None}))

    @property
    def names(self) -> tuple[str, ...]:
        """The figure names of the limits, in file order."""
        return tuple(lim.name for lim in self.limits)


# ---------------------------------------------------------------------------
# Reading the file

_HEADER = re.compile(r"^\s*(\[\[?)\s*(.+?)\s*\]\]?\s*(?:#.*)?$")
_KEY = re.compile(r"""^\s*("[^"]*"|'[^']*'|[A-Za-z0-9_-]+)\s*=""")


def _split_key(text: str) -> tuple[str, ...]:
    parts = re.findall(r"""\s*("[^"]*"|'[^']*'|[^.\s]+)\s*(?:\.|$)""", text)
    return tuple(p[1:-1] if p[:1] in "\"'" else p for p in parts)


class _Lines:
    """Where things are in the TOML text, for error messages (tomllib keeps
    no positions)."""

    def __init__(self, text: str):
        self.tables: list[tuple[tuple[str, ...], int]] = [((), 1)]
        self.keys: list[tuple[int, str, int]] = []  # (table index, key, line)
        for n, line in enumerate(text.splitlines(), start=1):
            m = _HEADER.match(line)
            if m and not line.lstrip().startswith("#"):
                self.tables.append((_split_key(m.group(2)), n))
                continue
            k = _KEY.match(line)
            if k:
                key = k.group(1)
                key = key[1:-1] if key[:1] in "\"'" else key
                self.keys.append((len(self.tables) - 1, key, n))

    def first(self, name: str) -> int | None:
        """Line where the top-level key or table `name` first appears."""
        for ti, k, n in self.keys:
            if ti == 0 and k == name:
                return n
        for p, n in self.tables[1:]:
            if p[:1] == (name,):
                return n
        return None

    def table(self, path: tuple[str, ...], occurrence: int = 0) -> int | None:
        hits = [i for i, (p, _) in enumerate(self.tables) if p == path]
        if occurrence < len(hits):
            return hits[occurrence]
        return None

    def line(self, path: tuple[str, ...], key: str | None = None, occurrence: int = 0) -> int | None:
        """Line of `key` in table `path` (its `occurrence`-th copy for arrays
        of tables), or of the table header; else of an inline definition."""
        t = self.table(path, occurrence)
        if t is not None:
            if key is None:
                return self.tables[t][1]
            for ti, k, n in self.keys:
                if ti == t and k == key:
                    return n
            return self.tables[t][1]
        # Inline tables: ``L = { ... }`` under the parent table.
        if path:
            parent = self.table(path[:-1])
            for ti, k, n in self.keys:
                if ti == parent and k == path[-1]:
                    return n
        return None


def _number(value, what: str, where, unit: str | None = None) -> float:
    """The SI value of a limits-file value; with `unit`, a unit written in it must be that one."""
    if isinstance(value, bool):
        raise where(f"{what}: expected a number, got {value!r}")
    if isinstance(value, (int, float)):
        x = float(value)
    elif isinstance(value, str):
        try:
            x = parse_quantity(value, what)
        except ZfitInputError as exc:
            raise where(exc.message) from None
    else:
        raise where(f"{what}: expected a number or a string like \"4.7n\", got {value!r}")
    if not math.isfinite(x):
        raise where(f"{what}: {value!r} is not a finite number")
    written = written_unit(value)
    if unit is not None and written is not None and written != unit:
        raise where(f"{what} {value!r} is in {written}, but this quantity is in {unit or 'no unit (a ratio)'}")
    return x


#: A guard band of more than 10 standard uncertainties refuses every part a
#: real measurement gives (JCGM 106:2012 works with k of 1 to 3).
GUARD_K_MAX = 10.0

#: A tolerance of more than 1000 % is no tolerance (-20 %/+80 % is the widest
#: in common use, for electrolytic capacitors).
TOLERANCE_PERCENT_MAX = 1000.0


def _within(x: float, what: str, where, lo: float | None, hi: float | None, unit: str = "") -> float:
    """`x` when within ``[lo, hi]``, else the one-line error of `where` that states the range."""
    try:
        return bounded(x, what, lo, hi, unit)
    except ZfitInputError as exc:
        raise where(exc.message) from None


def _value_range(quantity: str, unit: str) -> tuple:
    """Where a limit's value means something: an element's range, the band for an SRF, else unbounded."""
    if quantity in UNITS and unit in ELEMENT_RANGES:
        return (0.0, ELEMENT_RANGES[unit][1])
    if quantity == "SRF" or unit == "Hz":
        return (0.0, FREQUENCY_RANGE_HZ[1])
    return (None, None)


def _percent(value, what: str, where) -> float:
    if isinstance(value, str) and value.strip().endswith("%"):
        value = value.strip()[:-1]
    x = _number(value, what, where)
    return _within(abs(x), what, where, 0.0, TOLERANCE_PERCENT_MAX, "%") * (1 if x >= 0 else -1)


def _one_limit(quantity: str, table, occurrence: int, lines: _Lines,
               path: str, default_k: float, model: str | None) -> Limit:
    tpath = ("limit", quantity)

    def where_for(key=None):
        def make(message):
            return ZfitInputError(f"limit {quantity}: {message}", path, lines.line(tpath, key, occurrence))
        return make

    if not isinstance(table, dict):
        raise where_for()(f"expected a table of nominal/tolerance_percent or min/max, got {table!r}")
    for key in table:
        if key not in _LIMIT_KEYS:
            raise where_for(key)(f"unknown key {key!r}; use {', '.join(sorted(_LIMIT_KEYS))}")
    f_hz = None
    if "at" in table:
        if quantity not in SPOT_UNITS:
            raise where_for("at")(
                f"'at' is for figures at a frequency ({', '.join(SPOT_UNITS)}); {quantity} is not one")
        f_hz = _number(table["at"], "at", where_for("at"), "Hz")
        if f_hz <= 0:
            raise where_for("at")(f"frequency {table['at']!r} is not positive")
        _within(f_hz, "at", where_for("at"), *FREQUENCY_RANGE_HZ, "Hz")
        unit = SPOT_UNITS[quantity]
    elif quantity in UNITS:
        unit = UNITS[quantity]
        if model is not None and FAMILY_OF[quantity] in _MODELS and FAMILY_OF[quantity] != model:
            family = FAMILY_OF[quantity]
            article = "an" if family[0] in "aeiou" else "a"
            raise where_for()(f"{quantity} is {article} {family} parameter but the file is for model {model!r}")
    elif quantity == "SRF":
        unit = "Hz"
    elif quantity in BIAS_FIGURES:
        unit = BIAS_FIGURES[quantity].unit
        if model is not None and BIAS_FIGURES[quantity].family != model:
            family = BIAS_FIGURES[quantity].family
            article = "an" if family[0] in "aeiou" else "a"
            raise where_for()(f"{quantity} is {article} {family} bias figure but the file is for model {model!r}")
    elif quantity in SPOT_UNITS:
        raise where_for()(f"{quantity} is read at a frequency: give at = \"1M\" (say)")
    else:
        known = ", ".join([*UNITS, "SRF", *(q + " (with at)" for q in SPOT_UNITS if q != "ESR"), *BIAS_FIGURES])
        raise where_for()(f"unknown quantity {quantity!r}; limits can name {known}")

    k = default_k
    if "guard_band_k" in table:
        k = _number(table["guard_band_k"], "guard_band_k", where_for("guard_band_k"))
        if k < 0:
            raise where_for("guard_band_k")("guard_band_k must be >= 0")
        _within(k, "guard_band_k", where_for("guard_band_k"), 0.0, GUARD_K_MAX)

    has_tol = "tolerance_percent" in table or "tolerance" in table
    has_minmax = "min" in table or "max" in table
    nominal = None
    if "nominal" in table:
        nominal = _number(table["nominal"], "nominal", where_for("nominal"), unit)
        if nominal <= 0 and quantity != "X":
            # Every part would fail a tolerance about zero or a negative value:
            # a sign or a unit lost in the file, not a specification.
            raise where_for("nominal")(f"nominal {table['nominal']!r} must be positive")
        if quantity in UNITS and unit in ELEMENT_RANGES:
            _within(nominal, "nominal", where_for("nominal"), *ELEMENT_RANGES[unit], unit)
        elif quantity == "SRF" or unit == "Hz":
            _within(nominal, "nominal", where_for("nominal"), *FREQUENCY_RANGE_HZ, "Hz")
        if not has_tol:
            raise where_for("nominal")("a nominal needs tolerance_percent = N (or [-minus, plus]) or tolerance = VALUE")
        if has_minmax:
            raise where_for("min" if "min" in table else "max")(
                "give either nominal with a tolerance or min/max, not both")
        if "tolerance_percent" in table and "tolerance" in table:
            raise where_for("tolerance")("give tolerance_percent or tolerance, not both")
        if "tolerance_percent" in table:
            tol = table["tolerance_percent"]
            w = where_for("tolerance_percent")
            if isinstance(tol, list):
                if len(tol) != 2:
                    raise w("an asymmetric tolerance is [-minus, plus], e.g. [-20, 80]")
                minus, plus = (_percent(t, "tolerance_percent", w) for t in tol)
                if minus > 0 or plus < 0:
                    raise w(f"asymmetric tolerance [{tol[0]}, {tol[1]}] must be [-minus, plus] with minus, plus >= 0")
                minus = -minus
                text = f"{format_eng(nominal, unit)} -{minus:g} %/+{plus:g} %"
            else:
                minus = plus = _percent(tol, "tolerance_percent", w)
                if minus < 0:
                    raise w("tolerance_percent must be >= 0 (for an asymmetric one write [-minus, plus])")
                text = f"{format_eng(nominal, unit)} ±{plus:g} %"
            span = abs(nominal)
            lower, upper = nominal - span * minus / 100.0, nominal + span * plus / 100.0
        else:
            tol = _number(table["tolerance"], "tolerance", where_for("tolerance"), unit)
            if tol < 0:
                raise where_for("tolerance")("tolerance must be >= 0")
            lower, upper = nominal - tol, nominal + tol
            text = f"{format_eng(nominal, unit)} ±{format_eng(tol, unit)}"
    else:
        if has_tol:
            raise where_for("tolerance_percent" if "tolerance_percent" in table else "tolerance")(
                "a tolerance needs a nominal = VALUE")
        if not has_minmax:
            raise where_for()("give nominal with tolerance_percent, or min and/or max")
        lower = _number(table["min"], "min", where_for("min"), unit) if "min" in table else None
        upper = _number(table["max"], "max", where_for("max"), unit) if "max" in table else None
        # An element or an SRF is positive: a negative bound is a lost sign, every part would fail it.
        for key, v in (("min", lower), ("max", upper)):
            if v is not None:
                _within(v, key, where_for(key), *_value_range(quantity, unit), unit)
        if lower is not None and upper is not None and lower > upper:
            raise where_for("min")(f"min {table['min']!r} is above max {table['max']!r}")
        text = " ".join(
            ([f"min {format_eng(lower, unit)}"] if lower is not None else [])
            + ([f"max {format_eng(upper, unit)}"] if upper is not None else []))
    return Limit(
        name=figure_name(quantity, f_hz), quantity=quantity, f_hz=f_hz, lower=lower, upper=upper,
        nominal=nominal, unit=unit, guard_band_k=k, line=lines.line(tpath, None, occurrence), text=text,
    )


def parse_limits(text: str, path: str = "<limits>") -> Limits:
    """Return the limits written in `text` (the content of a limits file).

    Parameters
    ----------
    text : str
        TOML text in the layout of ``docs/batch.md``.
    path : str
        The file name, for error messages.

    Raises
    ------
    ZfitInputError
        Naming the file and line: TOML syntax errors (line from `tomllib`),
        unknown keys or quantities, values that are not numbers in
        engineering notation, a nominal without a tolerance, min above max,
        a limit named twice.
    """
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        msg = str(exc)
        m = re.search(r"\(at line (\d+), column (\d+)\)", msg)
        line = int(m.group(1)) if m else None
        msg = re.sub(r"\s*\(at line \d+, column \d+\)", "", msg) if m else msg
        if m:
            msg += f" (column {m.group(2)})"
        raise ZfitInputError(f"not valid TOML: {msg}", path, line) from None
    lines = _Lines(text)
    for key in data:
        if key not in _TOP_KEYS:
            raise ZfitInputError(f"unknown key {key!r}; a limits file has {', '.join(sorted(_TOP_KEYS))}",
                                 path, lines.first(key))
    title = data.get("title", "")
    if not isinstance(title, str):
        raise ZfitInputError("title must be a string", path, lines.line((), "title"))
    model = data.get("model")
    if model is not None and model not in _MODELS:
        raise ZfitInputError(f"model {model!r}: use one of {', '.join(_MODELS)}", path, lines.line((), "model"))
    k = DEFAULT_GUARD_K
    if "guard_band_k" in data:
        def w(message):
            return ZfitInputError(message, path, lines.line((), "guard_band_k"))
        k = _number(data["guard_band_k"], "guard_band_k", w)
        if k < 0:
            raise w("guard_band_k must be >= 0")
        _within(k, "guard_band_k", w, 0.0, GUARD_K_MAX)
    core = _core_table(data.get("core"), lines, str(path))
    table = data.get("limit")
    if not isinstance(table, dict) or not table:
        raise ZfitInputError("no limits: add tables such as [limit.L] with nominal and tolerance_percent",
                             path, lines.line(("limit",)))
    out: list[Limit] = []
    seen: dict[str, Limit] = {}
    for quantity, entry in table.items():
        entries = entry if isinstance(entry, list) else [entry]
        if isinstance(entry, list) and quantity not in SPOT_UNITS:
            raise ZfitInputError(
                f"limit {quantity}: only figures at a frequency may be given several times ([[limit.Q]] with at)",
                path, lines.line(("limit", quantity)))
        for i, item in enumerate(entries):
            lim = _one_limit(quantity, item, i, lines, str(path), k, model)
            if lim.name in seen:
                raise ZfitInputError(f"limit {lim.name} is given twice (first on line {seen[lim.name].line})",
                                     path, lim.line)
            seen[lim.name] = lim
            out.append(lim)
    needs_core = next((lim for lim in out if lim.quantity in CORE_FIGURES), None)
    if needs_core is not None and core is None:
        raise ZfitInputError(f"limit {needs_core.quantity} needs the cores' turns and geometry: add a [core] table "
                             "with turns and od, id, height (or core_constant)", path, needs_core.line)
    return Limits(tuple(out), path=str(path), title=title, model=model, guard_band_k=k, core=core)


def _core_table(table, lines: _Lines, path: str) -> CoreSpec | None:
    """The ``[core]`` table as a `CoreSpec` (keys as the options of ``zfit core``)."""
    if table is None:
        return None
    if not isinstance(table, dict):
        raise ZfitInputError("core must be a table: [core] with turns, od, id, height", path, lines.first("core"))
    for key in table:
        if key not in CORE_TABLE_KEYS:
            raise ZfitInputError(f"core: unknown key {key!r}; use {', '.join(CORE_TABLE_KEYS)}", path,
                                 lines.line(("core",), key))

    def fail(message):
        return ZfitInputError(f"core: {message}", path, lines.line(("core",)))

    return core_spec(table.get("turns"), table.get("od"), table.get("id"), table.get("height"),
                     table.get("core_constant"), table.get("le"), table.get("ae"), table.get("geometry_tol"),
                     table.get("rdc"), fail=fail)


def read_limits(path) -> Limits:
    """Return the limits in the TOML file at `path`.

    Parameters
    ----------
    path : str or os.PathLike
        The limits file (layout in ``docs/batch.md``).

    Raises
    ------
    ZfitInputError
        On a file that cannot be read or is not a valid limits file; the
        message names the file and the line.
    """
    p = Path(path)
    try:
        raw = p.read_bytes()
    except OSError as exc:
        raise ZfitInputError(f"cannot read the limits file: {exc.strerror or exc}", p) from None
    try:
        text = raw.decode("utf-8-sig")  # a byte-order mark (Windows editors) is not TOML
    except UnicodeDecodeError as exc:
        line = raw[: exc.start].count(b"\n") + 1
        raise ZfitInputError("not UTF-8 text: a limits file is TOML", p, line) from None
    return parse_limits(text, str(p))

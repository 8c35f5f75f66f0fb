"""Engineering notation: SI values inside, ``4.7n``, ``25 mΩ``, ``100 kHz`` outside.

One notation for every number zfit writes for a person (terminal, warnings,
report pages, CSV headers, the text fields of the JSON):

- a value alone: engineering notation with the prefix attached to its unit
  and a space before them, ``100 kHz``, ``4.7 µH``, ``25 mΩ`` (BIPM, The
  International System of Units, 9th ed., 2019, 5.4.3: a space separates
  the number from the unit);
- a value with its standard uncertainty: both in one prefix, the
  uncertainty to two significant digits and the value to the same decimal
  place, ``10.00032 ± 0.00037 µH`` (JCGM 100:2008, 7.2.6);
- a dimensionless figure (Q, D, a ratio): no prefix, since SI prefixes
  belong to units and are not attached to the unit one (BIPM 2019,
  section 3; from memory), plain decimals from 0.001 up to 10 000 and a common power of ten
  beyond: ``0.005055 ± 0.000015``, ``(50.37 ± 0.15)e-6``.

The text is Unicode (``µ``, ``Ω``, ``±``, ``°``); `ascii_text` writes it for
an output that needs ASCII (SPICE netlists, Touchstone comments, a terminal
whose encoding lacks a sign, see `ASCII_EQUIVALENTS`).
"""

from __future__ import annotations

import math
import re

from ._errors import ZfitInputError

__all__ = [
    "format_eng", "format_value_std", "format_dimensionless", "format_percent", "format_band",
    "ascii_text", "ASCII_EQUIVALENTS", "parse_quantity", "bounded", "written_unit", "PREFIXES",
]

#: SI prefix symbols by power of ten; ``u`` stands for micro (the text is
#: written with ``µ``; `ascii_text` turns it back into ``u``).
PREFIXES = {
    -18: "a", -15: "f", -12: "p", -9: "n", -6: "u", -3: "m",
    0: "", 3: "k", 6: "M", 9: "G", 12: "T", 15: "P",
}
_EXPONENTS = {v: k for k, v in PREFIXES.items() if v}
_EXPONENTS.update({"µ": -6, "μ": -6, "meg": 6, "Meg": 6, "MEG": 6})
_UNITS = ("ohms", "ohm", "Ohm", "Ω", "Hz", "hz", "H", "F", "s", "V", "A")
_NUMBER = re.compile(r"^\s*([+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?)\s*(.*?)\s*$")

#: The ASCII spelling of each non-ASCII sign zfit writes, for outputs that
#: must be ASCII (SPICE, Touchstone) or a terminal that cannot show the sign.
ASCII_EQUIVALENTS = {
    "µ": "u", "μ": "u", "Ω": "ohm", "±": "+/-", "°": "deg", "σ": "sigma", "²": "^2", "√": "sqrt",
    "—": "-", "–": "-", "≤": "<=", "≥": ">=", "×": "x", "→": "->", "…": "...",
}

#: Units that take no SI prefix (a "kdB" is not a unit).
_NO_PREFIX = ("dB", "%", "deg", "°")

#: The symbol of a unit as written for a person.
_SYMBOLS = {"ohm": "Ω", "ohms": "Ω", "Ohm": "Ω", "deg": "°"}


def ascii_text(text: str) -> str:
    """Return `text` with every sign of `ASCII_EQUIVALENTS` spelt in ASCII (``µH`` -> ``uH``).

    Anything else outside ASCII becomes ``?``.
    """
    for a, b in ASCII_EQUIVALENTS.items():
        if a in text:
            text = text.replace(a, b)
    return text.encode("ascii", "replace").decode("ascii")


def _symbol(unit: str) -> str:
    # "ohm", "ohm rms", "V rms": the leading word is the unit.
    head, sep, tail = unit.partition(" ")
    return _SYMBOLS.get(head, head) + sep + tail


def _with_unit(number: str, prefix: str, unit: str) -> str:
    """``number prefixunit``: the prefix stays with its unit (``100 kHz``); a bare number keeps it (``4.7n``)."""
    prefix = "µ" if prefix == "u" else prefix
    if not unit:
        return number + prefix
    return f"{number} {prefix}{_symbol(unit)}"


def _exponent3(x: float) -> int:
    if x == 0 or not math.isfinite(x):
        return 0
    e = int(math.floor(math.log10(abs(x)) / 3.0)) * 3
    return max(min(e, 15), -18)


def _decimals(std: float) -> int:
    """Decimal places that show `std` to two significant digits (JCGM 100:2008, 7.2.6)."""
    return min(max(0, 1 - int(math.floor(math.log10(std)))), 9)


def format_eng(x: float | None, unit: str = "", digits: int = 4) -> str:
    """Return `x` in engineering notation: ``4.7n`` without a unit, ``2.2 kΩ``, ``100 kHz`` with one.

    Parameters
    ----------
    x : float or None
        The value in SI units; None prints as ``n/a``, non-finite values as
        ``inf`` or ``nan``.
    unit : str
        ``"H"``, ``"F"``, ``"Hz"``, ``"s"``, ``"V"``, ``"ohm"`` (written
        ``Ω``), ``"deg"`` (``°``); empty for a bare number, which keeps its
        prefix (``4.7n``, as an option is typed).
    digits : int
        Significant digits.
    """
    if x is None:
        return "n/a"
    x = float(x)
    if not math.isfinite(x):
        text = "nan" if math.isnan(x) else ("-inf" if x < 0 else "inf")
        return _with_unit(text, "", unit)
    e = _exponent3(x)
    if (x != 0 and not (1e-18 <= abs(x) < 999.5e15)) or unit in _NO_PREFIX:
        # Beyond the prefixes a plain exponent, never "1e+285P"; no prefix on a dB or a %.
        return _with_unit(f"{x:.{digits}g}", "", unit)
    m = x / 10.0**e
    # Rounding can carry the mantissa to 1000 (999.96 -> 1000): move up a prefix.
    if abs(float(f"{m:.{digits}g}")) >= 1000 and e < 15:
        e += 3
        m = x / 10.0**e
    return _with_unit(f"{m:.{digits}g}", PREFIXES[e], unit)


def format_value_std(value: float | None, std: float | None, unit: str = "") -> str:
    """Return ``value ± std unit`` in one prefix, e.g. ``10.02 ± 0.05 µH``.

    The uncertainty is shown to two significant digits and the value to the
    same decimal place (JCGM 100:2008, 7.2.6); without a usable uncertainty
    (None, zero, not finite) the value alone, to four digits.  An empty
    `unit` is a dimensionless figure, written by `format_dimensionless`.

    Parameters
    ----------
    value : float or None
        The estimate in SI units.
    std : float or None
        Its standard uncertainty.
    unit : str
        As for `format_eng`.
    """
    if not unit:
        return format_dimensionless(value, std)
    if value is None or std is None or not math.isfinite(std) or std <= 0 or not math.isfinite(value):
        return format_eng(value, unit)
    e = _exponent3(value if value != 0 else std)
    if not (1e-18 <= abs(value if value != 0 else std) < 999.5e15):
        e = 0 if abs(value if value != 0 else std) < 1e-18 else 15
    scale = 10.0**e
    d = _decimals(std / scale)
    number = f"{value / scale:.{d}f} ± {std / scale:.{d}f}"
    return _with_unit(number, PREFIXES[e], unit)


def format_dimensionless(value: float | None, std: float | None = None) -> str:
    """Return a dimensionless figure (Q, D, a ratio), with its uncertainty when one is given.

    Plain decimals for 0.001 <= |value| < 10 000 (``0.01760 ± 0.00030``,
    ``275 ± 12``); beyond, both in one power of ten that is a multiple of
    three, ``(50.37 ± 0.15)e-6``; the uncertainty to two significant digits
    and the value to the same place (JCGM 100:2008, 7.2.6).

    Parameters
    ----------
    value : float or None
        The figure; None prints ``n/a``.
    std : float, optional
        Its standard uncertainty; None or zero prints the value alone to
        four significant digits.
    """
    if value is None:
        return "n/a"
    v = float(value)
    if not math.isfinite(v):
        return "nan" if math.isnan(v) else ("-inf" if v < 0 else "inf")
    plain = v == 0 or 1e-3 <= abs(v) < 1e4
    if std is None or not math.isfinite(std) or std <= 0:
        if plain:
            return f"{v:.4g}" if abs(v) >= 1 or v == 0 else f"{v:.{3 - int(math.floor(math.log10(abs(v))))}f}"
        e = int(math.floor(math.log10(abs(v)) / 3.0)) * 3
        return f"{v / 10.0**e:.4g}e{e}"
    u = float(std)
    if plain and (v != 0 or u >= 1e-3):
        d = _decimals(u)
        return f"{v:.{d}f} ± {u:.{d}f}"
    e = int(math.floor(math.log10(abs(v) if v else u) / 3.0)) * 3
    m, mu = v / 10.0**e, u / 10.0**e
    d = _decimals(mu)
    return f"({m:.{d}f} ± {mu:.{d}f})e{e}"


def format_percent(value: float | None, std: float | None = None) -> str:
    """Return a percentage, ``8.199 ± 0.083 %``: both to the uncertainty's second digit (JCGM 100:2008, 7.2.6).

    Parameters
    ----------
    value : float or None
        In percent; None prints ``n/a``.
    std : float, optional
        Its standard uncertainty in percent; without one, three digits.
    """
    if value is None:
        return "n/a"
    if not std or not math.isfinite(std) or std <= 0:
        return f"{value:.3g} %"
    d = _decimals(std)
    return f"{value:.{d}f} ± {std:.{d}f} %"


def format_band(lo: float | None, hi: float | None, digits: int = 4) -> str:
    """Return a frequency band as ``10 kHz to 200 MHz`` (``n/a`` when an end is unknown)."""
    if lo is None or hi is None:
        return "n/a"
    return f"{format_eng(lo, 'Hz', digits)} to {format_eng(hi, 'Hz', digits)}"


def parse_quantity(text: str | float, what: str = "value") -> float:
    """Return the SI value of a number written in engineering notation.

    Accepts plain numbers (``1e-6``), prefixes (``4.7n``, ``2.2k``, ``1M``,
    ``1meg``; ``m`` is milli and ``M`` mega) and an optional unit (``10uH``,
    ``100 kHz``, ``50 ohm``).

    Parameters
    ----------
    text : str or float
        What the user wrote.
    what : str
        Name of the option or field, used in the error message.

    Raises
    ------
    ZfitInputError
        When the text is not a number in engineering notation.
    """
    if isinstance(text, (int, float)):
        return float(text)
    m = _NUMBER.match(str(text))
    if not m:
        raise ZfitInputError(f"{what}: cannot read {text!r} as a number (examples: 4.7n, 25m, 2.2k, 1e-6)")
    number, rest = float(m.group(1)), m.group(2)
    for unit in _UNITS:
        if rest.endswith(unit) and rest != unit[:0]:
            candidate = rest[: -len(unit)].strip()
            if candidate == "" or candidate in _EXPONENTS:
                rest = candidate
                break
    if rest == "":
        return number
    if rest in _EXPONENTS:
        # Through the decimal text, so that 4.7n is exactly float("4.7e-9").
        mantissa, _, exp = m.group(1).lower().partition("e")
        return float(f"{mantissa}e{int(exp or 0) + _EXPONENTS[rest]}")
    raise ZfitInputError(f"{what}: cannot read {text!r}: unknown prefix or unit {rest!r}")


def bounded(value: float, what: str, lo: float | None = None, hi: float | None = None, unit: str = "") -> float:
    """Return `value` when it is finite and within ``[lo, hi]``, else raise a one-line error.

    The range is where the computation the value feeds is meaningful; the
    message states it, so that the user can correct the value.

    Parameters
    ----------
    value : float
        The value in SI units.
    what : str
        Its name, for the message (``"--shunt"``).
    lo, hi : float, optional
        Inclusive bounds; None for none.
    unit : str
        The unit, for the message.

    Raises
    ------
    ZfitInputError
        For a value that is not finite or lies outside the range.
    """
    value = float(value)
    if math.isfinite(value) and (lo is None or value >= lo) and (hi is None or value <= hi):
        return value
    if lo is not None and hi is not None:
        span = f"between {format_eng(lo, unit)} and {format_eng(hi, unit)}"
    elif lo is not None:
        span = f"of at least {format_eng(lo, unit)}"
    elif hi is not None:
        span = f"of at most {format_eng(hi, unit)}"
    else:
        span = "that is a finite number"
    raise ZfitInputError(f"{what} {format_eng(value, unit)} is out of range: give a value {span}")


_CANONICAL_UNIT = {"ohms": "ohm", "ohm": "ohm", "Ohm": "ohm", "Ω": "ohm", "Hz": "Hz", "hz": "Hz"}


def written_unit(text: str | float) -> str | None:
    """Return the unit written after a number in engineering notation, or None.

    ``"2.2uF"`` -> ``"F"``, ``"20 MOhm"`` -> ``"ohm"``, ``"100k"`` -> None;
    the spelling is made canonical (``Ohm``, ``ohms``, ``Ω`` -> ``ohm``).
    Used to check a value against the unit of the quantity it is given for,
    which `parse_quantity` does not know.

    Parameters
    ----------
    text : str or float
        What the user wrote (a number has no unit).
    """
    if isinstance(text, (int, float)):
        return None
    m = _NUMBER.match(str(text))
    if not m:
        return None
    rest = m.group(2)
    for unit in _UNITS:
        if rest.endswith(unit) and (rest[: -len(unit)].strip() in _EXPONENTS or rest[: -len(unit)].strip() == ""):
            return _CANONICAL_UNIT.get(unit, unit)
    return None

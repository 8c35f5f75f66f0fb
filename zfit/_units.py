"""Engineering notation: SI values inside, ``4.7n``, ``25m``, ``2.2k`` outside."""

from __future__ import annotations

import math
import re

from ._errors import ZfitInputError

__all__ = ["format_eng", "format_value_std", "parse_quantity", "bounded", "written_unit", "PREFIXES"]

#: SI prefix letters by power of ten; ``u`` stands for micro so that the text
#: stays ASCII.
PREFIXES = {
    -18: "a", -15: "f", -12: "p", -9: "n", -6: "u", -3: "m",
    0: "", 3: "k", 6: "M", 9: "G", 12: "T", 15: "P",
}
_EXPONENTS = {v: k for k, v in PREFIXES.items() if v}
_EXPONENTS.update({"µ": -6, "μ": -6, "meg": 6, "Meg": 6, "MEG": 6})
_UNITS = ("ohms", "ohm", "Ohm", "Ω", "Hz", "hz", "H", "F", "s", "V", "A")
_NUMBER = re.compile(r"^\s*([+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?)\s*(.*?)\s*$")


def _exponent3(x: float) -> int:
    if x == 0 or not math.isfinite(x):
        return 0
    e = int(math.floor(math.log10(abs(x)) / 3.0)) * 3
    return max(min(e, 15), -18)


def format_eng(x: float | None, unit: str = "", digits: int = 4) -> str:
    """Return `x` in engineering notation, e.g. ``4.7n`` or ``2.2k ohm``.

    Parameters
    ----------
    x : float or None
        The value in SI units; None and non-finite values print as ``n/a``,
        ``inf`` or ``nan``.
    unit : str
        Unit appended after a space (``"H"``, ``"ohm"``); empty for none.
    digits : int
        Significant digits.
    """
    if x is None:
        return "n/a"
    x = float(x)
    if not math.isfinite(x):
        text = "nan" if math.isnan(x) else ("-inf" if x < 0 else "inf")
        return f"{text} {unit}".rstrip()
    e = _exponent3(x)
    if x != 0 and not (1e-18 <= abs(x) < 999.5e15):
        # Beyond the prefixes: a plain exponent, never "1e+285P".
        return f"{x:.{digits}g} {unit}".rstrip()
    m = x / 10.0**e
    # Rounding can carry the mantissa to 1000 (999.96 -> 1000): move up a prefix.
    if abs(float(f"{m:.{digits}g}")) >= 1000 and e < 15:
        e += 3
        m = x / 10.0**e
    text = f"{m:.{digits}g}" + PREFIXES[e]
    return f"{text} {unit}".rstrip()


def format_value_std(value: float | None, std: float | None, unit: str = "") -> str:
    """Return ``value ± std`` in one engineering prefix, e.g. ``10.02u ± 0.05u H``.

    The uncertainty is shown to two significant digits and the value to the
    same decimal place (GUM practice, JCGM 100:2008 section 7.2.6).

    Parameters
    ----------
    value : float or None
        The estimate in SI units.
    std : float or None
        Its standard uncertainty; None prints the value alone.
    unit : str
        Unit appended at the end.
    """
    if value is None or std is None or not math.isfinite(std) or std <= 0 or not math.isfinite(value):
        return format_eng(value, unit)
    e = _exponent3(value if value != 0 else std)
    scale = 10.0**e
    s = std / scale
    decimals = max(0, 1 - int(math.floor(math.log10(s))))
    decimals = min(decimals, 9)
    p = PREFIXES[e]
    return f"{value / scale:.{decimals}f}{p} ± {s:.{decimals}f}{p} {unit}".rstrip()


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

"""The description of a wound core as a user writes it: turns, geometry, tolerance.

The same description comes from the command line (``zfit core --turns 10
--od 25 --id 15 --height 10``) and from the ``[core]`` table of a limits file
(docs/cores.md), so it is parsed once, here, into a `CoreSpec` in SI units.
The core constant itself is computed in `zfit.identification._core_geometry`.

Lengths
-------
A bare number is in millimetres (what a caliper reads); a number with an
SI prefix is in metres in engineering notation (``25m`` = 25 mm, ``800u`` =
0.8 mm); ``mm`` may be written out (``25mm``, ``25 mm``).
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

from .._errors import ZfitInputError
from .._units import parse_quantity

__all__ = ["CoreSpec", "length_m", "core_spec", "DEFAULT_GEOMETRY_TOL", "CORE_TABLE_KEYS"]

#: Default tolerance of each measured dimension (half-width, relative): a
#: caliper on a coated ferrite ring, common practice.
DEFAULT_GEOMETRY_TOL = 0.02

#: Keys of the ``[core]`` table of a limits file (the command-line options without ``--``).
CORE_TABLE_KEYS = ("turns", "od", "id", "height", "core_constant", "le", "ae", "geometry_tol", "rdc")

_PLAIN = re.compile(r"^\s*[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?\s*$")
_MM = re.compile(r"^\s*(.+?)\s*mm\s*$")


def length_m(text, what: str) -> float:
    """Return a length in metres from what the user wrote (see the module docstring).

    Parameters
    ----------
    text : str or float
        ``"25"`` or 25 (mm), ``"25mm"``, ``"25m"`` (engineering notation, metres).
    what : str
        The option or key, for the message.

    Raises
    ------
    ZfitInputError
        For text that is not a length, or a length that is not positive and finite.
    """
    if isinstance(text, bool):
        raise ZfitInputError(f"{what}: expected a length, got {text!r}")
    if isinstance(text, (int, float)):
        value = float(text) * 1e-3
    else:
        s = str(text)
        m = _MM.match(s)
        if m:
            value = parse_quantity(m.group(1), what) * 1e-3
        elif _PLAIN.match(s):
            value = float(s) * 1e-3
        else:
            value = parse_quantity(s, what)
    if not math.isfinite(value) or value <= 0:
        raise ZfitInputError(f"{what}: a length must be positive, got {text!r}")
    return value


@dataclass(frozen=True)
class CoreSpec:
    """A winding on a core as described by the user (SI units).

    Exactly one of the three descriptions of the core is given: a toroid of
    rectangular section (`od_m`, `id_m`, `height_m`), the core constant
    `core_constant_per_m` (C1 = sum l/A), or the effective length and area
    (`le_m`, `ae_m2`).

    Attributes
    ----------
    turns : int
        Number of turns of the winding (a bead: 1).
    od_m, id_m, height_m : float or None
        Outer and inner diameter and height of a toroid.
    core_constant_per_m : float or None
        C1 in 1/m.
    le_m, ae_m2 : float or None
        Effective magnetic length and area.
    geometry_tol : float
        Relative tolerance (half-width) of each dimension, or of the given
        constant (0.02 = 2 %).
    rdc_ohm : float or None
        The winding's measured DC resistance, when given.
    """

    turns: int
    od_m: float | None = None
    id_m: float | None = None
    height_m: float | None = None
    core_constant_per_m: float | None = None
    le_m: float | None = None
    ae_m2: float | None = None
    geometry_tol: float = DEFAULT_GEOMETRY_TOL
    rdc_ohm: float | None = None

    @property
    def kind(self) -> str:
        """``toroid``, ``core-constant`` or ``effective-parameters``."""
        if self.od_m is not None:
            return "toroid"
        return "core-constant" if self.core_constant_per_m is not None else "effective-parameters"


def _positive(value, what, fail) -> float:
    try:
        x = parse_quantity(value, what)
    except ZfitInputError as exc:
        raise fail(exc.message) from None
    if not math.isfinite(x) or x <= 0:
        raise fail(f"{what} must be positive, got {value!r}")
    return x


def _default_fail(message):
    return ZfitInputError(message)


def core_spec(turns=None, od=None, id_=None, height=None, core_constant=None, le=None, ae=None,
              geometry_tol=None, rdc=None, *, names=None, fail=_default_fail) -> CoreSpec:
    """Return the `CoreSpec` of values as written (text or numbers), checked.

    Parameters
    ----------
    turns : str or int
        Number of turns (a positive whole number).
    od, id_, height : str or float, optional
        Toroid dimensions (lengths, see `length_m`).
    core_constant : str or float, optional
        C1 in 1/m.
    le, ae : str or float, optional
        Effective length (a length) and area (m^2, engineering notation, or
        a bare number in mm^2).
    geometry_tol : str or float, optional
        Relative tolerance: ``0.02``, ``"2%"`` (default 2 %).
    rdc : str or float, optional
        DC resistance of the winding in ohm.
    names : mapping, optional
        How each key is called where it was written (``{"od": "--od"}``).
    fail : callable
        Makes the exception for a message (to add the file and line).

    Raises
    ------
    ZfitInputError
        Zero or negative turns, an inner diameter not below the outer one,
        missing or conflicting descriptions of the core, values that are not
        numbers.
    """
    name = lambda k: (names or {}).get(k, k)  # noqa: E731

    def length(value, key):
        try:
            return length_m(value, name(key))
        except ZfitInputError as exc:
            raise fail(exc.message) from None

    if turns is None:
        raise fail(f"{name('turns')} is needed: the number of turns of the winding")
    try:
        n = float(turns) if not isinstance(turns, str) else float(turns.strip())
    except ValueError:
        raise fail(f"{name('turns')}: {turns!r} is not a number of turns") from None
    if isinstance(turns, bool) or not math.isfinite(n) or n != int(n) or n < 1:
        raise fail(f"{name('turns')} must be a whole number of turns, 1 or more, got {turns!r}")
    toroid = [v is not None for v in (od, id_, height)]
    given = sum([any(toroid), core_constant is not None, le is not None or ae is not None])
    if given == 0:
        raise fail(f"give the core: {name('od')}, {name('id')} and {name('height')} of a toroid, "
                   f"or {name('core_constant')}, or {name('le')} and {name('ae')}")
    if given > 1:
        raise fail(f"give one description of the core: toroid dimensions, {name('core_constant')}, "
                   f"or {name('le')} with {name('ae')}, not several")
    kw = {}
    if any(toroid):
        if not all(toroid):
            missing = [name(k) for k, v in (("od", od), ("id", id_), ("height", height)) if v is None]
            raise fail(f"a toroid needs {name('od')}, {name('id')} and {name('height')}; missing {', '.join(missing)}")
        kw = {"od_m": length(od, "od"), "id_m": length(id_, "id"), "height_m": length(height, "height")}
        if kw["id_m"] >= kw["od_m"]:
            raise fail(f"{name('id')} ({kw['id_m'] * 1e3:g} mm) must be below {name('od')} ({kw['od_m'] * 1e3:g} mm)")
    elif core_constant is not None:
        kw = {"core_constant_per_m": _positive(core_constant, name("core_constant"), fail)}
    else:
        if le is None or ae is None:
            raise fail(f"effective parameters need both {name('le')} and {name('ae')}")
        if isinstance(ae, (int, float)) or _PLAIN.match(str(ae)):
            a = float(ae) * 1e-6  # a bare number is mm^2, like the lengths
            if not math.isfinite(a) or a <= 0:
                raise fail(f"{name('ae')} must be positive, got {ae!r}")
        else:
            a = _positive(ae, name("ae"), fail)
        kw = {"le_m": length(le, "le"), "ae_m2": a}
    tol = DEFAULT_GEOMETRY_TOL
    if geometry_tol is not None:
        text = str(geometry_tol).strip()
        pct = text.endswith("%")
        tol = _positive(text[:-1] if pct else geometry_tol, name("geometry_tol"), fail) if text not in ("0", "0%") else 0.0
        tol = tol / 100.0 if pct else tol
        if tol >= 0.5:
            raise fail(f"{name('geometry_tol')} {geometry_tol!r}: a relative tolerance below 0.5 (50 %) is expected")
    r = None if rdc is None else _positive(rdc, name("rdc"), fail)
    return CoreSpec(int(n), geometry_tol=tol, rdc_ohm=r, **kw)

"""The stray (self-) capacitance of a coil from the frequency it rings at:
with a known inductance, or from two resonances (alone and with a known
added capacitor).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .._errors import FitError, ZfitInputError
from .._units import format_eng

__all__ = ["StrayCapacitance", "stray_capacitance_from_inductance", "stray_capacitance_two_resonances"]


@dataclass(frozen=True)
class StrayCapacitance:
    """Stray (self-) capacitance of a coil from its ringing.

    Attributes
    ----------
    value_f, std_f : float
        Capacitance and its standard uncertainty in F.
    method : str
        ``"ringing with known inductance"`` or ``"two resonances"``.
    inductance_h, inductance_std_h : float or None
        The inductance the two-resonance method implies (None for the other).
    added_ringing_hz : float or None
        Natural frequency with the added capacitor (two-resonance method).
    """

    value_f: float
    std_f: float
    method: str
    inductance_h: float | None = None
    inductance_std_h: float | None = None
    added_ringing_hz: float | None = None


def stray_capacitance_from_inductance(f_hz: float, f_std_hz: float, inductance_h: float) -> StrayCapacitance:
    """Return ``C = 1 / ((2 pi f)^2 L)`` with its uncertainty ``2 C sigma_f / f``.

    Parameters
    ----------
    f_hz, f_std_hz : float
        The natural (undamped) ringing frequency and its uncertainty.
    inductance_h : float
        The coil's inductance, taken as exact.

    References
    ----------
    The resonance of an L-C tank, f = 1/(2 pi sqrt(L C)) (Thomson's formula;
    any circuits text, e.g. Terman, *Radio Engineers' Handbook*, McGraw-Hill,
    1943, section 3).
    """
    if not (inductance_h > 0 and math.isfinite(inductance_h)):
        raise ZfitInputError(f"the inductance must be positive, not {inductance_h!r} H")
    c = 1.0 / ((2 * np.pi * f_hz) ** 2 * inductance_h)
    return StrayCapacitance(float(c), float(2.0 * c * f_std_hz / f_hz), "ringing with known inductance")


def stray_capacitance_two_resonances(f1_hz: float, f1_std_hz: float, f2_hz: float, f2_std_hz: float,
                                     added_f: float) -> StrayCapacitance:
    """Return a coil's stray capacitance from its resonance alone and with a known added C.

    With ``f1 = 1/(2 pi sqrt(L C0))`` and ``f2 = 1/(2 pi sqrt(L (C0 + Ca)))``,
    ``(f1/f2)^2 = (C0 + Ca)/C0``, so ``C0 = Ca / ((f1/f2)^2 - 1)`` without
    knowing L, and then ``L = 1/((2 pi f1)^2 C0)``.  The uncertainty follows
    from first-order propagation of those of f1 and f2 (Ca taken as exact).

    Parameters
    ----------
    f1_hz, f1_std_hz : float
        Natural ringing frequency of the coil alone, and its uncertainty.
    f2_hz, f2_std_hz : float
        With the capacitor `added_f` across it, and its uncertainty.
    added_f : float
        The added capacitance in F.

    References
    ----------
    The two-frequency (substitution) method for the self-capacitance of a
    coil: F. E. Terman, *Radio Engineers' Handbook*, McGraw-Hill, 1943,
    section on the distributed capacitance of coils (from memory); it is
    the elimination of L between the two resonance conditions above.
    """
    if not (added_f > 0 and math.isfinite(added_f)):
        raise ZfitInputError(f"the added capacitance must be positive, not {added_f!r} F")
    if not f2_hz < f1_hz:
        raise FitError(
            f"with the capacitor added the coil rings at {format_eng(f2_hz, 'Hz', 6)}, not below {format_eng(f1_hz, 'Hz', 6)} without it: "
            "check the added capacitance and the captures")
    r2 = (f1_hz / f2_hz) ** 2
    c0 = added_f / (r2 - 1.0)
    dc_dr2 = -added_f / (r2 - 1.0) ** 2
    s_r2 = r2 * 2.0 * math.hypot(f1_std_hz / f1_hz, f2_std_hz / f2_hz)
    s_c0 = abs(dc_dr2) * s_r2
    L = 1.0 / ((2 * np.pi * f1_hz) ** 2 * c0)
    # L = (r2 - 1) / ((2 pi f1)^2 Ca): propagate f1 and f2 directly.
    dl_df1 = L * (2.0 * r2 / (r2 - 1.0) - 2.0) / f1_hz
    dl_df2 = L * (-2.0 * r2 / (r2 - 1.0)) / f2_hz
    s_l = math.hypot(dl_df1 * f1_std_hz, dl_df2 * f2_std_hz)
    return StrayCapacitance(float(c0), float(s_c0), "two resonances", float(L), float(s_l), float(f2_hz))

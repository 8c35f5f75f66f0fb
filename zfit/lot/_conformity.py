"""The decision rule: whether a part conforms to its limits, given its uncertainty.

Decision rule: guarded acceptance (JCGM 106:2012, *Evaluation of
measurement data -- The role of measurement uncertainty in conformity
assessment*, section 8.3.2, "guarded acceptance") with a guard band of
``w = k u`` and ``k = 2`` by default.  With ``y`` the measured value, ``u``
its standard uncertainty and ``[T_L, T_U]`` the tolerance interval:

* ``pass`` when ``[y - k u, y + k u]`` lies inside ``[T_L, T_U]`` (the
  acceptance interval ``[T_L + w, T_U - w]`` contains ``y``);
* ``fail`` when ``y`` itself lies outside ``[T_L, T_U]``;
* ``indeterminate`` otherwise: the value is inside, but only the
  uncertainty's width away from a limit, so conformity is not shown.

A value without an uncertainty (``std`` null) cannot be shown to conform:
it is ``indeterminate`` when inside the limits (``fail`` when outside),
unless that limit asks for simple acceptance with ``guard_band_k = 0``
(JCGM 106:2012 section 8.2), which accepts any value inside the limits.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Mapping

from .._units import format_eng
from ..io._limits_file import DEFAULT_GUARD_K, Limit, Limits

__all__ = [
    "LimitDecision",
    "PartDecision",
    "conformity",
    "decide",
    "VERDICTS",
]

#: Verdicts, from best to worst.
VERDICTS = ("pass", "indeterminate", "fail", "error")


@dataclass(frozen=True)
class LimitDecision:
    """The verdict on one limit for one part.

    Attributes
    ----------
    limit : Limit
    value, std : float or None
        The measured value and its standard uncertainty.
    verdict : {'pass', 'indeterminate', 'fail'}
    reason : str
        Why, in words (for the reader of a failed part).
    """

    limit: Limit
    value: float | None
    std: float | None
    verdict: str
    reason: str


@dataclass(frozen=True)
class PartDecision:
    """The verdict on a part: the worst of its limits.

    Attributes
    ----------
    verdict : {'pass', 'indeterminate', 'fail'}
    decisions : tuple of LimitDecision
    """

    verdict: str
    decisions: tuple[LimitDecision, ...]

    @property
    def failed(self) -> tuple[str, ...]:
        """Names of the limits that failed."""
        return tuple(d.limit.name for d in self.decisions if d.verdict == "fail")

    @property
    def indeterminate(self) -> tuple[str, ...]:
        """Names of the limits whose conformity was not shown."""
        return tuple(d.limit.name for d in self.decisions if d.verdict == "indeterminate")


def _finite(x) -> bool:
    return x is not None and isinstance(x, (int, float)) and math.isfinite(x)


def conformity(value, std, lower=None, upper=None, k: float = DEFAULT_GUARD_K) -> str:
    """Return the verdict of guarded acceptance for one measured value.

    Parameters
    ----------
    value : float or None
        The measured value ``y``; None (or NaN) when it could not be measured.
    std : float or None
        Its standard uncertainty ``u``; None when it has none.
    lower, upper : float or None
        Tolerance limits ``T_L`` and ``T_U``; None for a one-sided limit.
    k : float
        Guard band in standard uncertainties, ``w = k u`` (2 by default;
        0 is simple acceptance).

    Returns
    -------
    {'pass', 'indeterminate', 'fail'}
        ``fail`` when ``y`` lies outside ``[T_L, T_U]``; ``pass`` when
        ``[y - k u, y + k u]`` lies inside it; ``indeterminate`` otherwise,
        and whenever `value` is missing, or `std` is missing with ``k > 0``.

    References
    ----------
    JCGM 106:2012, Evaluation of measurement data -- The role of measurement
    uncertainty in conformity assessment, sections 8.2 (simple acceptance)
    and 8.3.2 (guarded acceptance).
    """
    if not _finite(value):
        return "indeterminate"
    if (lower is not None and value < lower) or (upper is not None and value > upper):
        return "fail"
    if k == 0:
        return "pass"
    if not _finite(std) or std < 0:
        return "indeterminate"
    w = k * std
    if (lower is not None and value - w < lower) or (upper is not None and value + w > upper):
        return "indeterminate"
    return "pass"


def _reason(lim: Limit, value, std, verdict: str) -> str:
    unit = lim.unit
    if not _finite(value):
        return f"{lim.name}: not in the result"
    shown = format_eng(value, unit)
    if verdict == "fail":
        if lim.lower is not None and value < lim.lower:
            return f"{lim.name} = {shown} below min {format_eng(lim.lower, unit)}"
        return f"{lim.name} = {shown} above max {format_eng(lim.upper, unit)}"
    if verdict == "indeterminate":
        if not _finite(std):
            return f"{lim.name} = {shown} has no uncertainty"
        return (f"{lim.name} = {shown} is inside but within {lim.guard_band_k:g} standard "
                f"uncertainties ({format_eng(lim.guard_band_k * std, unit)}) of a limit")
    return f"{lim.name} = {shown} inside {lim.text}"


def decide(limits: Limits, figures: Mapping[str, tuple]) -> PartDecision:
    """Return the verdict on one part.

    Parameters
    ----------
    limits : Limits
        The limits of the lot.
    figures : mapping
        Figure name (`Limit.name`) -> ``(value, std)`` of the part; a
        figure that is missing counts as not measured. The SRF may carry a
        third item, its lower bound in Hz when the resonance lies above the
        band (``where == 'above-band'``): a minimum SRF at or below that
        bound passes, since no resonance was seen below it.  A bias figure
        (``I_sat_20``) may carry the same bound, the largest bias measured
        when the fall was not reached; a limit on a bias figure that is not
        among `figures` (a single sweep of ``zfit batch``) is not checked.

    Returns
    -------
    PartDecision
        The worst verdict of all limits (fail > indeterminate > pass).
    """
    out = []
    for lim in limits.limits:
        if lim.is_bias and lim.name not in figures:
            # A figure of a sweep set against bias (`zfit bias`): one sweep has none to check.
            continue
        got = figures.get(lim.name) or (None, None)
        value, std = got[0], got[1]
        bound = got[2] if len(got) > 2 else None
        if (lim.quantity == "SRF" and _finite(bound) and lim.upper is None
                and lim.lower is not None and bound >= lim.lower):
            verdict = "pass"
            reason = f"SRF above the band, > {format_eng(bound, 'Hz')} >= min {format_eng(lim.lower, 'Hz')}"
        elif (lim.is_bias and _finite(bound) and lim.upper is None
                and lim.lower is not None and bound >= lim.lower):
            # Not fallen that far at the largest bias measured: the figure lies above it.
            verdict = "pass"
            reason = (f"{lim.name} above the largest bias, > {format_eng(bound, lim.unit)} "
                      f">= min {format_eng(lim.lower, lim.unit)}")
        else:
            verdict = conformity(value, std, lim.lower, lim.upper, lim.guard_band_k)
            reason = _reason(lim, value, std, verdict)
        out.append(LimitDecision(lim, value if _finite(value) else None,
                                 std if _finite(std) else None, verdict, reason))
    worst = max((VERDICTS.index(d.verdict) for d in out), default=0)
    return PartDecision(VERDICTS[worst], tuple(out))

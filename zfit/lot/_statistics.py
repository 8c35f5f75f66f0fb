"""Statistics of a lot: mean, spread, extremes and process capability per quantity.

Process capability of a normal distribution (Montgomery, *Introduction to
Statistical Quality Control*, 7th ed., Wiley, 2013, section 8.3; the
indices of ISO 22514-2:2017)::

    Cp  = (USL - LSL) / (6 s)
    Cpk = min(USL - mean, mean - LSL) / (3 s)

with the lot's sample standard deviation ``s`` (one-sided limits use the
one side that exists).  With no rational subgroups, ``s`` is the overall
spread, which ISO 22514-2 calls a *performance* index (Ppk); it includes
the measurement's own uncertainty, so the figure is conservative.

A capability index describes the process only when the measurement resolves
the part-to-part spread.  The rule used here (common practice of
measurement-system capability, AIAG *Measurement Systems Analysis*, 4th
ed., 2010, and ISO 22514-7:2021): when the lot's sample standard deviation
``s`` is not larger than the RMS of the parts' standard uncertainties
``u_rms``, the observed spread is what the measurement alone would give, and
the Cpk is *limited by the measurement*, not a property of the process.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Sequence

from .._parameters import PARAMETERS, UNITS
from ..io._limits_file import SPOT_UNITS, Limits
from ._conformity import VERDICTS
from ._rows import PartRow

__all__ = ["QuantityStats", "LotSummary", "process_capability", "limited_by_measurement", "lot_summary"]


def limited_by_measurement(std: float | None, u_rms: float | None) -> bool | None:
    """Return whether the lot's spread is not resolved by the measurement: ``std <= u_rms``.

    Parameters
    ----------
    std : float or None
        Sample standard deviation of the lot.
    u_rms : float or None
        RMS of the parts' standard uncertainties.

    Returns
    -------
    bool or None
        True when the part-to-part spread is not larger than the measurement
        uncertainty of each part (the capability then describes the
        measurement, not the process); None when either is unknown.

    References
    ----------
    AIAG, Measurement Systems Analysis, 4th ed., 2010 (the measurement must
    resolve the process variation); ISO 22514-7:2021, Capability of
    measurement processes.
    """
    if std is None or u_rms is None or not (math.isfinite(std) and math.isfinite(u_rms)):
        return None
    return bool(std <= u_rms)


def process_capability(mean: float, std: float, lower: float | None, upper: float | None) -> tuple:
    """Return (Cp, Cpk) of a normal distribution against the limits.

    Parameters
    ----------
    mean, std : float
        Sample mean and standard deviation of the lot.
    lower, upper : float or None
        Specification limits (None: that side is open).

    Returns
    -------
    (float or None, float or None)
        ``Cp = (USL - LSL) / (6 std)`` (two-sided limits only) and
        ``Cpk = min(USL - mean, mean - LSL) / (3 std)`` over the sides that
        exist; None when ``std`` is not positive.

    References
    ----------
    D. C. Montgomery, Introduction to Statistical Quality Control, 7th ed.,
    Wiley, 2013, section 8.3 (process capability ratios); ISO 22514-2:2017,
    Statistical methods in process management -- Capability and
    performance -- Part 2.
    """
    if not (std > 0 and math.isfinite(std)) or (lower is None and upper is None):
        return None, None
    cp = (upper - lower) / (6.0 * std) if lower is not None and upper is not None else None
    sides = []
    if upper is not None:
        sides.append((upper - mean) / (3.0 * std))
    if lower is not None:
        sides.append((mean - lower) / (3.0 * std))
    return cp, min(sides)


def _ppm_out(mean, std, lower, upper):
    if not (std > 0 and math.isfinite(std)):
        return None
    p = 0.0
    if upper is not None:
        p += 0.5 * math.erfc((upper - mean) / (std * math.sqrt(2.0)))
    if lower is not None:
        p += 0.5 * math.erfc((mean - lower) / (std * math.sqrt(2.0)))
    return 1e6 * p


@dataclass(frozen=True)
class QuantityStats:
    """Statistics of one quantity over the lot.

    Attributes
    ----------
    name : str
        Figure name (``L``, ``SRF``, ``Q@1MHz``).
    unit : str
    lower, upper : float or None
        Its limits (None: not limited on that side).
    limit_text : str
        The limit in words, "" when not limited.
    n : int
        Parts with a value.
    n_pass, n_fail, n_indeterminate : int
        Verdicts on this limit.
    mean, std, min, max : float or None
        Sample mean, standard deviation (n - 1), extremes.
    u_rms : float or None
        RMS of the parts' standard uncertainties: when it is a sizeable part
        of `std`, the measurement, not the process, sets the spread.
    cp, cpk : float or None
        Process capability (see `process_capability`).
    ppm_out : float or None
        Expected fraction outside the limits of a normal distribution with
        this mean and std, in parts per million.
    measurement_limited : bool or None
        Whether `std` is not larger than `u_rms` (see `limited_by_measurement`):
        then Cp and Cpk say how good the measurement is, not the process.
    """

    name: str
    unit: str
    lower: float | None
    upper: float | None
    limit_text: str
    n: int
    n_pass: int
    n_fail: int
    n_indeterminate: int
    mean: float | None
    std: float | None
    min: float | None
    max: float | None
    u_rms: float | None
    cp: float | None
    cpk: float | None
    ppm_out: float | None
    measurement_limited: bool | None = None


@dataclass(frozen=True)
class LotSummary:
    """The lot at a glance.

    Attributes
    ----------
    count : int
        Parts in the lot.
    verdicts : dict
        Count of each verdict (``pass``, ``indeterminate``, ``fail``,
        ``error``, ``unchecked``).
    quantities : tuple of QuantityStats
        One per limited quantity (per parameter when there are no limits).
    limits_path : str
        The limits file, "" without limits.
    guard_band_k : float or None
        The file's guard band (None without limits).
    """

    count: int
    verdicts: dict
    quantities: tuple
    limits_path: str = ""
    guard_band_k: float | None = None


def _unit_of(name: str) -> str:
    q = name.split("@", 1)[0]
    if "@" in name:
        return SPOT_UNITS.get(q, "")
    return "Hz" if q == "SRF" else UNITS.get(q, "")


def lot_summary(rows: Sequence[PartRow], limits: Limits | None = None) -> LotSummary:
    """Return the statistics of the lot.

    Parameters
    ----------
    rows : sequence of PartRow
        The parts, in summary order.
    limits : Limits, optional
        The lot's limits: statistics and capability for each limited
        quantity; without limits, statistics of each parameter.
    """
    import numpy as np

    verdicts = {v: 0 for v in (*VERDICTS, "unchecked")}
    for r in rows:
        verdicts[r.verdict] = verdicts.get(r.verdict, 0) + 1
    if limits is not None:
        # A bias figure (``I_sat_20``) belongs to a set of sweeps (`zfit bias`): the
        # decision rule passes over it where no part has it, and so do the statistics.
        targets = [(lim.name, lim) for lim in limits.limits
                   if not lim.is_bias or any(lim.name in r.figures for r in rows)]
    else:
        keys = {k for r in rows for k in r.figures if k in PARAMETERS}
        targets = [(k, None) for k in PARAMETERS if k in keys]
        if any(r.figures.get("SRF", (None,))[0] is not None for r in rows):
            targets.append(("SRF", None))
    stats = []
    for name, lim in targets:
        vals, stds = [], []
        n_pass = n_fail = n_ind = 0
        for r in rows:
            if r.error is not None:
                continue
            v = r.figures.get(name, (None, None))
            if v[0] is not None:
                vals.append(v[0])
                if v[1] is not None:
                    stds.append(v[1])
            if lim is not None:
                if name in r.failed:
                    n_fail += 1
                elif name in r.indeterminate:
                    n_ind += 1
                else:
                    n_pass += 1
        a = np.asarray(vals, dtype=float)
        mean = float(np.mean(a)) if a.size else None
        std = float(np.std(a, ddof=1)) if a.size >= 2 else None
        lower = lim.lower if lim is not None else None
        upper = lim.upper if lim is not None else None
        cp = cpk = ppm = None
        if std is not None:
            cp, cpk = process_capability(mean, std, lower, upper)
            if lim is not None:
                ppm = _ppm_out(mean, std, lower, upper)
        u_rms = float(np.sqrt(np.mean(np.square(stds)))) if stds else None
        stats.append(QuantityStats(
            name, lim.unit if lim is not None else _unit_of(name), lower, upper,
            lim.text if lim is not None else "", int(a.size), n_pass, n_fail, n_ind, mean, std,
            float(a.min()) if a.size else None, float(a.max()) if a.size else None, u_rms, cp, cpk, ppm,
            limited_by_measurement(std, u_rms)))
    return LotSummary(len(rows), verdicts, tuple(stats), limits.path if limits else "",
                      limits.guard_band_k if limits else None)

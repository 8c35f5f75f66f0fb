"""The summary files of a lot: summary.csv, lot.csv, lot.json (columns in docs/batch.md).

Pure text: the run writes it atomically with `zfit._atomic.write_atomic`.
Numbers are written with ten significant digits, far below any uncertainty,
so that the files are byte-identical however the work was spread.
"""

from __future__ import annotations

import csv
import io
from typing import Sequence

from .._json import json_text
from .._parameters import PARAMETERS
from ..io._limits_file import Limits, figure_name
from ._part_summary import SPOT_READOUTS
from ._rows import PartRow
from ._statistics import LotSummary, QuantityStats

__all__ = [
    "verdict_lines",
    "SUMMARY_NAME",
    "LOT_CSV_NAME",
    "LOT_JSON_NAME",
    "DECISION_RULE",
    "summary_csv_text",
    "lot_csv_text",
    "lot_json_text",
    "lot_text",
]

#: Spot readouts in the order of the summary's columns.
_SPOT_KEYS = (*SPOT_READOUTS, "ESR", "loss_factor")

#: The summary files of a run, in its output folder.
SUMMARY_NAME, LOT_CSV_NAME, LOT_JSON_NAME = "summary.csv", "lot.csv", "lot.json"

#: When a capability figure describes the measurement rather than the process, as lot.json states it.
MEASUREMENT_LIMITED_RULE = (
    "true when std <= u_rms: the lot's spread is not larger than the measurement uncertainty of each part, "
    "so Cp and Cpk are limited by the measurement, not the process (AIAG MSA 4th ed.; ISO 22514-7)"
)

#: The decision rule in words, as lot.json states it.
DECISION_RULE = (
    "guarded acceptance (JCGM 106:2012, 8.3.2): pass when value +- k u lies inside the limits, "
    "fail when the value lies outside, indeterminate otherwise"
)


def _num(x) -> str:
    # Ten significant digits: far below any uncertainty, and it keeps the
    # summary byte-identical across runs even if a worker's BLAS rounds the
    # last bit differently.
    if x is None:
        return ""
    return format(float(x), ".10g")


def _spot_columns(rows: Sequence[PartRow], limits: Limits | None, at: Sequence[float]) -> list[str]:
    freqs = sorted({*(limits.frequencies_hz if limits else ()), *at})
    models = {r.model for r in rows}
    cols = []
    limited = set(limits.names) if limits else set()
    for f in freqs:
        for q in _SPOT_KEYS:
            name = figure_name(q, f)
            ind, cap = "inductor" in models, "capacitor" in models
            asked = f in at and (q in ("R", "X") or (q == "L_eff" and ind) or (q == "C_eff" and cap))
            if name in limited or asked or (q == "Q" and ind) or (q == "D" and cap):
                cols.append(name)
    return cols


def summary_csv_text(rows: Sequence[PartRow], limits: Limits | None = None, at: Sequence[float] = ()) -> str:
    """Return the summary CSV: one row per part, values in SI units.

    Columns: ``file, verdict, model, topology``, each parameter and its
    ``_std``, ``SRF_hz, SRF_std_hz, SRF_where, SRF_bound_hz``, figures at
    the limit frequencies (``Q@1MHz, Q@1MHz_std``), ``fit_rms``,
    ``failed_limits, indeterminate_limits`` (``;``-separated names),
    ``warnings`` and ``error``.

    Parameters
    ----------
    rows : sequence of PartRow
        The parts, in summary order.
    limits : Limits, optional
        The lot's limits (decide the spot columns).
    at : sequence of float
        Extra spot frequencies asked for.
    """
    keys = {k for r in rows for k in r.figures}
    if limits:
        keys |= {lim.name for lim in limits.limits if not lim.is_spot}
    params = [k for k in PARAMETERS if k in keys]
    spots = _spot_columns(rows, limits, at)
    header = ["file", "verdict", "model", "topology"]
    for k in params:
        header += [k, f"{k}_std"]
    header += ["SRF_hz", "SRF_std_hz", "SRF_where", "SRF_bound_hz"]
    for s in spots:
        header += [s, f"{s}_std"]
    header += ["fit_rms", "failed_limits", "indeterminate_limits", "warnings", "error"]
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(header)
    for r in rows:
        line = [r.name, r.verdict, r.model, r.topology]
        for k in params:
            v = r.figures.get(k, (None, None))
            line += [_num(v[0]), _num(v[1])]
        srf = r.figures.get("SRF", (None, None, None))
        bound = srf[2] if len(srf) > 2 else None
        line += [_num(srf[0]), _num(srf[1]), r.srf_where, _num(bound)]
        for s in spots:
            v = r.figures.get(s, (None, None))
            line += [_num(v[0]), _num(v[1])]
        line += [_num(r.fit_rms), ";".join(r.failed), ";".join(r.indeterminate), " | ".join(r.warnings),
                 r.error or ""]
        w.writerow(line)
    return buf.getvalue()


_LOT_FIELDS = ("quantity", "unit", "limits", "lower", "upper", "n", "pass", "fail", "indeterminate",
               "mean", "std", "min", "max", "u_rms", "Cp", "Cpk", "ppm_out", "limited_by_measurement")


def _stat_values(q: QuantityStats) -> list:
    return [q.name, q.unit, q.limit_text, q.lower, q.upper, q.n, q.n_pass, q.n_fail, q.n_indeterminate,
            q.mean, q.std, q.min, q.max, q.u_rms, q.cp, q.cpk, q.ppm_out, q.measurement_limited]


def _cell(x) -> str:
    if isinstance(x, bool):
        return "true" if x else "false"  # as lot.json writes it
    return _num(x) if isinstance(x, float) or x is None else x


def lot_csv_text(lot: LotSummary) -> str:
    """Return the lot statistics as CSV, one row per quantity.

    Parameters
    ----------
    lot : LotSummary
        The statistics.
    """
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(_LOT_FIELDS)
    for q in lot.quantities:
        w.writerow([_cell(x) for x in _stat_values(q)])
    return buf.getvalue()


def lot_json_text(lot: LotSummary) -> str:
    """Return the lot statistics as JSON (``"schema": "zfit.batch-lot/1"``).

    Parameters
    ----------
    lot : LotSummary
        The statistics.
    """
    from .._version import __version__

    def clean(x):
        return float(_num(x)) if isinstance(x, float) else x

    doc = {
        "schema": "zfit.batch-lot/1",
        "zfit_version": __version__,
        "count": lot.count,
        "verdicts": dict(lot.verdicts),
        "decision_rule": DECISION_RULE if lot.limits_path else None,
        "guard_band_k": lot.guard_band_k,
        "limits_file": lot.limits_path or None,
        "capability": "Cp = (USL-LSL)/(6 s), Cpk = min(USL-mean, mean-LSL)/(3 s), s = sample std of the lot "
                      "(Montgomery 2013, 8.3; ISO 22514-2)",
        "limited_by_measurement": MEASUREMENT_LIMITED_RULE,
        "quantities": [{k: clean(v) for k, v in zip(_LOT_FIELDS, _stat_values(q))} for q in lot.quantities],
    }
    return json_text(doc)


def lot_text(lot: LotSummary) -> str:
    """Return the lot summary as the command line prints it.

    Parameters
    ----------
    lot : LotSummary
        The statistics.
    """
    from .._units import format_eng

    v = lot.verdicts
    if lot.limits_path:
        head = (f"lot: {lot.count} parts: {v.get('pass', 0)} pass, {v.get('fail', 0)} fail, "
                f"{v.get('indeterminate', 0)} indeterminate, {v.get('error', 0)} error")
    else:
        head = f"lot: {lot.count} parts: {lot.count - v.get('error', 0)} identified, {v.get('error', 0)} error"
    lines = [head]
    if lot.limits_path:
        lines.append(f"decision rule: guarded acceptance per JCGM 106:2012 (8.3.2), guard band "
                     f"{lot.guard_band_k:g} standard uncertainties; indeterminate = inside but not shown to conform")
    table = [("quantity", "limits", "n", "pass", "fail", "indet", "mean", "std", "min", "max", "u_rms", "Cpk")]
    for q in lot.quantities:
        e = lambda x: format_eng(x, q.unit) if x is not None else "-"  # noqa: E731
        table.append((q.name, q.limit_text or "-", str(q.n),
                      *((str(q.n_pass), str(q.n_fail), str(q.n_indeterminate)) if q.limit_text else ("-",) * 3),
                      e(q.mean), e(q.std), e(q.min), e(q.max), e(q.u_rms),
                      f"{q.cpk:.2f}" if q.cpk is not None else "-"))
    if len(table) > 1:
        widths = [max(len(row[i]) for row in table) for i in range(len(table[0]))]
        for row in table:
            lines.append("  ".join(c.ljust(wd) if i < 2 else c.rjust(wd) for i, (c, wd) in enumerate(zip(row, widths))).rstrip())
        lines.append("Cpk = min(USL - mean, mean - LSL) / (3 s), normal distribution, s = lot std "
                     "(Montgomery 2013, 8.3; ISO 22514-2); u_rms = RMS measurement uncertainty")
    for q in lot.quantities:
        if q.cpk is not None and q.measurement_limited:
            lines.append(f"Cpk of {q.name} limited by the measurement uncertainty, not the process "
                         f"(lot std {format_eng(q.std, q.unit)} <= u_rms {format_eng(q.u_rms, q.unit)})")
    return "\n".join(lines)


def verdict_lines(rows: Sequence[PartRow]) -> list[str]:
    """Return one line per part that did not pass: its verdict and why (or its error).

    Parameters
    ----------
    rows : sequence of PartRow
        The lot's rows, in order.
    """
    out = []
    for row in rows:
        if row.verdict == "error":
            out.append(f"{row.name}: error: {row.error}")
        elif row.verdict in ("fail", "indeterminate"):
            out.append(f"{row.name}: {row.verdict}: " + "; ".join(row.reasons))
    return out

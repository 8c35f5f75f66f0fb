"""The lot report: one self-contained HTML page of a batch run (`lot_report`, `lot_report_html`).

What a lot's page shows: the verdict counts and the decision rule, the
capability table of every limited quantity (with the note where the
capability is limited by the measurement, not the process), a histogram of
each limited quantity with its limits and guard bands, and the parts that
did not pass with the reason.  Every number is the lot's own
(`zfit.lot._statistics.LotSummary` and the parts' `PartRow`): nothing is
recomputed here.  The page is rendered by `zfit.outputs._report` (inline
SVG, no external file).
"""

from __future__ import annotations

from typing import Sequence

__all__ = ["lot_report", "lot_report_html"]


def _num(x, unit: str) -> str:
    from ._views import pretty

    return "-" if x is None else pretty(x, unit)


def _ratio(x) -> str:
    return "-" if x is None else f"{x:.2f}"


def _capability_table(lot):
    from ._report import Table

    rows = []
    for q in lot.quantities:
        limited = bool(q.cpk is not None and q.measurement_limited)
        rows.append((
            q.name, q.limit_text or "-", str(q.n),
            *((str(q.n_pass), str(q.n_fail), str(q.n_indeterminate)) if q.limit_text else ("-",) * 3),
            _num(q.mean, q.unit), _num(q.std, q.unit), _num(q.min, q.unit), _num(q.max, q.unit),
            _num(q.u_rms, q.unit), _ratio(q.cp), _ratio(q.cpk),
            "limited by the measurement" if limited else "",
        ))
    return Table(("quantity", "limits", "n", "pass", "fail", "indet.", "mean", "std", "min", "max", "u_rms", "Cp",
                  "Cpk", "note"), tuple(rows), numeric=tuple(range(2, 13)), nowrap=(0,),
                 caption="Statistics and process capability per quantity")


def _verdict_of(row, name: str, limited: bool) -> str:
    if not limited:
        return "unchecked"
    if name in row.failed:
        return "fail"
    if name in row.indeterminate:
        return "indeterminate"
    return "pass"


def _histograms(rows, lot, limits) -> tuple:
    from ._pages import _svg
    from ._plot_lot import plot_lot_histogram
    from ._report import FigureBlock

    by_name = {lim.name: lim for lim in (limits.limits if limits is not None else ())}
    blocks = []
    for i, q in enumerate(lot.quantities):
        values, verdicts = [], []
        for r in rows:
            if r.error is not None:
                continue
            v = r.figures.get(q.name, (None, None))
            if v[0] is not None:
                values.append(v[0])
                verdicts.append(_verdict_of(r, q.name, q.name in by_name))
        lim = by_name.get(q.name)
        k = lim.guard_band_k if lim is not None else None
        guard = k * q.u_rms if k and q.u_rms is not None else None
        fig = plot_lot_histogram(values, verdicts, name=q.name, unit=q.unit, lower=q.lower, upper=q.upper,
                                 guard_band=guard, mean=q.mean)
        cap = f"{q.name}: {q.n} parts"
        if q.limit_text:
            cap += f"; limits {q.limit_text}"
        if guard is not None:
            cap += f"; guard band {k:g} u_rms = {_num(guard, q.unit)} inside each limit"
        blocks.append(FigureBlock(_svg(fig, f"hist{i}", f"histogram of {q.name}"), cap))
    return tuple(blocks)


def _not_passed(rows):
    from ._report import Table

    bad = [r for r in rows if r.verdict in ("fail", "indeterminate", "error")]
    if not bad:
        return None
    order = {"fail": 0, "error": 1, "indeterminate": 2}
    cells = tuple((r.name, r.verdict, r.error if r.verdict == "error" else "; ".join(r.reasons))
                  for r in sorted(bad, key=lambda r: (order[r.verdict], r.name)))
    return Table(("part", "verdict", "why"), cells, nowrap=(1,), caption=f"{len(bad)} part(s) did not pass")


def lot_report(rows: Sequence, lot, limits=None, *, decision_rule: str = "", limited_rule: str = "", command=None,
               title: str = ""):
    """Return the `Report` of a lot.

    Parameters
    ----------
    rows : sequence of PartRow
        The parts, in summary order (`BatchResult.rows`).
    lot : LotSummary
        Their statistics (`BatchResult.lot`).
    limits : Limits, optional
        The limits the lot was checked against (their guard bands are drawn).
    decision_rule, limited_rule : str
        The decision rule and the rule of a measurement-limited capability
        in words, as the lot's files state them
        (`zfit.lot._lot_files.DECISION_RULE`, `MEASUREMENT_LIMITED_RULE`;
        the lot stage comes after this one, so the caller passes them).
    command : str or sequence of str, optional
        The command line that reproduced the run.
    title : str
        The headline; the limits file's title, else "Lot of N parts".
    """
    from ._pages import _command_text
    from ._report import Report, Section

    v = lot.verdicts
    title = title or (limits.title if limits is not None and limits.title else "") or f"Lot of {lot.count} parts"
    if lot.limits_path:
        verdict = (f"{v.get('pass', 0)} pass, {v.get('fail', 0)} fail, {v.get('indeterminate', 0)} indeterminate, "
                   f"{v.get('error', 0)} without a result, of {lot.count} parts.")
    else:
        verdict = f"{lot.count - v.get('error', 0)} identified, {v.get('error', 0)} without a result (no limits)."
    sections = []
    facts = [("parts", str(lot.count))]
    facts += [(k, str(v.get(k, 0))) for k in ("pass", "indeterminate", "fail", "error") if lot.limits_path or k == "error"]
    if lot.limits_path:
        facts += [("limits file", lot.limits_path), ("guard band", f"k = {lot.guard_band_k:g} standard uncertainties"),
                  ("decision rule", decision_rule)]
    sections.append(Section("Verdicts", facts=tuple(facts), css_class="full twocol"))
    limited = [q for q in lot.quantities if q.cpk is not None and q.measurement_limited]
    notes = ["Cp = (USL - LSL)/(6 s), Cpk = min(USL - mean, mean - LSL)/(3 s), s = the lot's sample standard "
             "deviation, for a normal distribution (Montgomery 2013, 8.3; ISO 22514-2); u_rms = RMS of the parts' "
             "standard uncertainties."]
    if limited:
        notes.append("Limited by the measurement: " + (limited_rule + ". Here: " if limited_rule else "")
                     + "; ".join(f"{q.name} (lot std {_num(q.std, q.unit)} <= u_rms {_num(q.u_rms, q.unit)})"
                                 for q in limited) + ".")
    sections.append(Section("Capability", tables=(_capability_table(lot),), notes=tuple(notes), css_class="full"))
    bad = _not_passed(rows)
    if bad is not None:
        sections.append(Section("Parts that did not pass", tables=(bad,), css_class="full"))
    for block in _histograms(rows, lot, limits):
        name = block.caption.split(":", 1)[0]
        sections.append(Section(f"Distribution of {name}", figures=(block,)))
    sub = f"{lot.count} parts" + (f" · limits {lot.limits_path}" if lot.limits_path else " · no limits")
    return Report(title=title, subtitle=sub, verdict=verdict, sections=tuple(sections), command=_command_text(command))


def lot_report_html(rows: Sequence, lot, limits=None, *, decision_rule: str = "", limited_rule: str = "",
                    command=None, title: str = "") -> str:
    """Return the lot report as one self-contained HTML page.

    Parameters
    ----------
    rows, lot, limits, decision_rule, limited_rule, command, title : see `lot_report`
        The lot's rows, its summary, the limits, the
        texts of the decision rule and of the measurement-limited note, the
        command line and the page title.
    """
    from ._report import report_html

    return report_html(lot_report(rows, lot, limits, decision_rule=decision_rule, limited_rule=limited_rule,
                                  command=command, title=title))

"""The summary row of a part: its figures and the verdict of the decision rule on them."""

from __future__ import annotations

from dataclasses import dataclass

from ..io._limits_file import Limits
from ._conformity import decide
from ._tasks import PartOutcome

__all__ = ["PartRow", "part_row"]


@dataclass(frozen=True)
class PartRow:
    """One row of the summary: a part and its verdict.

    Attributes
    ----------
    name : str
        The file.
    model, topology : str
        What was identified ("" on error).
    figures : dict
        Figure name -> (value, std[, bound]).
    srf_where : str
        Where the SRF lies (``in-band``, ``above-band``, ...).
    fit_rms : float or None
        RMS normalised residual of the circuit fit.
    verdict : {'pass', 'indeterminate', 'fail', 'error', 'unchecked'}
        ``unchecked`` when the run has no limits.
    failed, indeterminate : tuple of str
        Names of the limits that failed / whose conformity was not shown.
    reasons : tuple of str
        One line per limit that did not pass.
    error : str or None
        Why the part has no result.
    warnings : tuple of str
        Measurement warnings.
    """

    name: str
    model: str
    topology: str
    figures: dict
    srf_where: str
    fit_rms: float | None
    verdict: str
    failed: tuple = ()
    indeterminate: tuple = ()
    reasons: tuple = ()
    error: str | None = None
    warnings: tuple = ()


def part_row(outcome: PartOutcome, limits: Limits | None = None) -> PartRow:
    """Return the summary row of one part: its figures and its verdict.

    Parameters
    ----------
    outcome : PartOutcome
        What the part's work produced.
    limits : Limits, optional
        The lot's limits; without them the verdict is ``unchecked``.
    """
    res = outcome.result
    if res is None:
        return PartRow(outcome.name, "", "", {}, "", None, "error", error=outcome.error or "no result",
                       warnings=outcome.warnings)
    said = list(res.warnings)
    said += [w for w in outcome.warnings if w not in said]
    if limits is None:
        verdict, failed, ind, reasons = "unchecked", (), (), ()
    else:
        dec = decide(limits, res.figures)
        verdict, failed, ind = dec.verdict, dec.failed, dec.indeterminate
        reasons = tuple(d.reason for d in dec.decisions if d.verdict != "pass")
    return PartRow(outcome.name, res.model, res.topology, res.figures, res.srf_where, res.fit_rms,
                   verdict, failed, ind, reasons, None, tuple(said))

"""The analysis of a measured frequency response, `ResponseResult`, and its ``zfit.response/1`` JSON object.

`analyse_response` takes the points of a gain/phase table (or of the CSV
that ``zfit step --response`` writes), fits the transfer function the BIC
prefers, reads its figures and, with the network given (a part in series
with a known resistor), identifies the part's impedance as any sweep is.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, field
from typing import TYPE_CHECKING

import numpy as np

from .._errors import FitError, MeasurementWarning, ZfitInputError
from .._units import format_eng
from ._swept_sine import OUTPUT_ACROSS, GainPhasePoints, divider_impedance_sweep
from ._transfer_figures import DEFAULT_MAX_ORDER, Candidate, TransferFigures, chosen_transfer, transfer_figures

if TYPE_CHECKING:
    from ..data._sweep import Sweep
    from ..fit._transfer import TransferModel
    from ..identification._result import Identification

__all__ = ["RESPONSE_SCHEMA", "ResponseResult", "analyse_response", "MAX_ORDER"]

RESPONSE_SCHEMA = "zfit.response/1"
#: Most poles `analyse_response` accepts (beyond this the factored fit is no longer the tool: use a sweep).
MAX_ORDER = 6


@dataclass(frozen=True)
class ResponseResult:
    """Everything `analyse_response` found in a frequency response.

    Attributes
    ----------
    points : GainPhasePoints
        The readings, averaged per frequency, with their uncertainty.
    model : TransferModel
        The transfer function chosen.
    candidates : tuple of Candidate
        Every structure tried, with its chi-square and BIC.
    figures : TransferFigures
        Poles, zeros, gains, -3 dB frequencies, valid band, step response.
    resistor_ohm : float or None
        The divider's resistor, when the network was given.
    output_across : str or None
        ``"resistor"`` or ``"part"``.
    sweep : Sweep or None
        The part's impedance derived through the divider.
    identification : Identification or None
        Its identification (the ``impedance`` object of the JSON).
    warnings, notes : tuple of str
        What the user should know, and what was assumed or done.
    """

    points: GainPhasePoints
    model: TransferModel
    candidates: tuple[Candidate, ...]
    figures: TransferFigures
    resistor_ohm: float | None = None
    output_across: str | None = None
    sweep: Sweep | None = field(default=None, repr=False)
    identification: Identification | None = field(default=None, repr=False)
    warnings: tuple[str, ...] = ()
    notes: tuple[str, ...] = ()

    @property
    def source(self) -> str:
        """The file read."""
        return self.points.source

    def response_block(self) -> dict:
        """Return the ``response`` object, the same keys as that of ``zfit.step/1``.

        ``method``, ``averages`` (the fewest readings averaged at one
        frequency), ``bin_hz`` (null: a table has no uniform bins),
        ``dc_gain`` (the model's H(0)) and ``coherence_min_in_band`` (null
        unless the table gives a coherence).
        """
        dc = self.figures.dc_gain
        return {
            "method": self.points.method,
            "averages": int(np.min(self.points.readings)),
            "bin_hz": None,
            "dc_gain": None if dc is None else _num(dc.value),
            "coherence_min_in_band": _num(self.points.coherence_min),
        }

    def to_dict(self) -> dict:
        """Return the ``zfit.response/1`` JSON object (SI units; see docs/response.md)."""
        p, m, fig = self.points, self.model, self.figures

        def e(x):
            return None if x is None else x.to_dict()

        f3 = fig.f_3db
        step = fig.step
        d = {
            "schema": RESPONSE_SCHEMA,
            "source": p.source,
            "data_format": p.data_format,
            "points": p.n_points,
            "readings": int(np.sum(p.readings)),
            "f_min_hz": float(p.f_hz[0]),
            "f_max_hz": float(p.f_hz[-1]),
            "uncertainty": {
                "source": p.uncertainty_source,
                "gain_db_median": float(np.median(p.gain_db_std)),
                "phase_deg_median": float(np.degrees(np.median(p.sigma_phase_rad))),
                "gain_accuracy_db": _num(p.gain_accuracy_db),
                "phase_accuracy_deg": _num(p.phase_accuracy_deg),
            },
            "response": self.response_block(),
            "model": {
                "structure": m.structure.describe(),
                "poles": m.structure.order,
                "zeros": m.structure.zero_order,
                "origin_zeros": m.structure.origin_zeros,
                "parameters": m.structure.n_params,
                "chi2": float(m.chi2),
                "dof": int(m.dof),
                "rms_normalized_residual": float(m.rms_normalized_residual),
                "uncertainty_scale": float(math.sqrt(m.cov_scale)),
                "valid_band_hz": [_num(fig.valid_band_hz[0]), _num(fig.valid_band_hz[1])],
                "candidates": [{"structure": c.structure, "parameters": c.n_params, "chi2": _num(c.chi2),
                                "bic": _num(c.bic), "rejected": c.why_not} for c in self.candidates],
            },
            "gain_coefficient": e(fig.gain_coefficient),
            "dc_gain": e(fig.dc_gain),
            "high_frequency_gain": e(fig.hf_gain),
            "poles": [x.to_dict() for x in fig.poles],
            "zeros": [x.to_dict() for x in fig.zeros],
            "time_constants_s": [e(x.tau) for x in fig.poles if x.tau is not None],
            "f_3db_hz": None if f3 is None else f3.to_dict(),
            "cutoffs": {"reference": fig.reference, "edges": [c.to_dict() for c in fig.cutoffs]},
            "step_response": {
                "final_value": float(step.final_value),
                "rise_10_90_s": e(step.rise_10_90),
                "overshoot_pct": e(step.overshoot_pct),
                "t_end_s": float(step.t_s[-1]),
            },
            "divider": None if self.resistor_ohm is None else {
                "resistor_ohm": float(self.resistor_ohm), "output_across": self.output_across},
        }
        if self.identification is not None:
            d["impedance"] = self.identification.to_dict()
        d["warnings"] = list(self.warnings)
        d["notes"] = list(self.notes)
        return d


def _num(v):
    return None if v is None or not math.isfinite(v) else float(v)


def analyse_response(points: GainPhasePoints, *, max_order: int = DEFAULT_MAX_ORDER, resistor_ohm: float | None = None,
                     output_across: str = "resistor", model: str = "auto") -> ResponseResult:
    """Return the transfer function of a measured response, its figures and, with a divider, the part.

    Parameters
    ----------
    points : GainPhasePoints
        What `gain_phase_points` returned.
    max_order : int
        Most poles tried (1 to `MAX_ORDER`).
    resistor_ohm : float, optional
        The known resistor in series with the part: convert H to the part's
        impedance and identify it.
    output_across : {'resistor', 'part'}
        Where V_out is taken on the divider.
    model : str
        The identification's model (as for `zfit.identify`).

    Warns
    -----
    MeasurementWarning
        For each entry of ``ResponseResult.warnings``.
    """
    from scipy.stats import chi2 as chi2_dist

    if not (isinstance(max_order, int) and 1 <= max_order <= MAX_ORDER):
        raise ZfitInputError(f"the most poles tried must be 1 to {MAX_ORDER}, not {max_order!r}")
    if output_across not in OUTPUT_ACROSS:
        raise ZfitInputError(f"the output is across the 'resistor' or the 'part', not {output_across!r}")
    try:
        chosen, candidates = chosen_transfer(points, max_order)
    except FitError as exc:
        raise ZfitInputError(str(exc), points.source) from None
    figs = transfer_figures(chosen, points)
    warn, notes = [], list(points.notes)
    if math.sqrt(chosen.cov_scale) >= 1.01:
        notes.append(f"uncertainties of the figures scaled by sqrt(chi2/dof) = {math.sqrt(chosen.cov_scale):.3g}")
    # A chi-square above its 99.9 % quantile is more than the noise: say so.
    if chosen.dof > 0 and chosen.chi2 > chi2_dist.ppf(0.999, chosen.dof):
        warn.append(f"the model leaves {math.sqrt(chosen.cov_scale):.3g} times the stated uncertainty: the "
                    "uncertainties of the figures are scaled by it (a model too simple, or an accuracy stated too "
                    "small)")
    if points.n_points < 2 * chosen.structure.n_params:
        notes.append(f"{points.n_points} frequencies for {chosen.structure.n_params} unknowns: few readings, "
                     "so the choice of structure rests on little evidence")
    lo, hi = figs.valid_band_hz
    if not (lo == points.f_hz[0] and hi == points.f_hz[-1]):
        where = "nowhere" if not math.isfinite(lo) else f"{format_eng(lo, 'Hz')} to {format_eng(hi, 'Hz')}"
        warn.append(f"the model stays within the readings' uncertainty only from {where}")
    for c in figs.cutoffs:
        if not c.in_band:
            notes.append(f"the {c.edge} -3 dB frequency ({format_eng(c.frequency.value, 'Hz')}) lies outside the "
                         "measured band: extrapolated by the model")
    sweep = ident = None
    if resistor_ohm is not None:
        from ..identification._pipeline import identify

        sweep = divider_impedance_sweep(points, resistor_ohm, output_across)
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always", MeasurementWarning)
            ident = identify(sweep, model=model)
        for w in caught:
            if issubclass(w.category, MeasurementWarning):
                warn.append(f"impedance: {w.message}")
            else:
                warnings.warn_explicit(w.message, w.category, w.filename, w.lineno)
    for w in warn:
        warnings.warn(w, MeasurementWarning, stacklevel=2)
    return ResponseResult(points, chosen, candidates, figs, resistor_ohm=resistor_ohm,
                          output_across=output_across if resistor_ohm is not None else None, sweep=sweep,
                          identification=ident, warnings=tuple(warn), notes=tuple(notes))

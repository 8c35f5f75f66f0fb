"""Identification: from a sweep to the equivalent circuit, its uncertainties and figures of merit.

`identify` runs named stages, each a function of its own module that
returns a frozen record (docs/identify.md gives the reasons and the
references):

0. measurement -- what the data say before any model, over the whole file:
   smoothed figures, the SRF from the sign change of Im Z, the
   low-frequency L or C, spot readouts (`_measured_report.measured_readings`
   -> `MeasuredReadings`); then the sweep restricted to ``band`` if given;
1. options -- the model, spot frequencies and DC resistance checked;
2. rational -- a rational model of Z(s) by vector fitting, weighted by the
   sweep's sigma, with the pole count chosen automatically
   (`_rational.rational_stage` -> `RationalStage`);
3. candidates -- each candidate circuit refined by weighted nonlinear least
   squares in log-parameters, from the rational model's and the data's
   initial guesses (`_candidates.candidate_fits` -> `CandidateFits`);
4. choice -- the family (inductor or capacitor) chosen by the Bayesian
   information criterion (never against the measured sign of Im Z), the optional element (R_p, R_leak) kept only if
   it lowers the criterion by more than `BIC_MARGIN`
   (`_candidates.choice` -> `Choice`);
5. valid band -- the band where the circuit's residual is within the noise;
   where the circuit does not hold over the whole band it is refitted over
   its valid band, and the rational model stays the description of the full
   band (`_band.valid_band` -> `ValidBand`), then the rational model refitted
   with the noise at the circuit (`_rational.reweighted_rational`);
   Then the adequacy: where the circuit holds within the noise and the
   model-error factor of its uncertainties (`_adequacy.adequacy` -> `Adequacy`);
6. merit -- SRF, Q, ESR, D and spot readouts with their uncertainties
   (`_merit`, read through a `ModelEvaluator` -> `Readings`), the SRF
   replaced by the measured one where the model's is outside the band or
   disagrees (`_measured_report.srf_with_measurement`);
7. result -- the `Identification` with its parameter estimates
   (`_estimates`) and warnings (`_diagnostics`).
"""

from __future__ import annotations

import dataclasses
import math
import warnings
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from .._errors import FitError, MeasurementWarning, ZfitInputError
from .._units import format_eng
from ._merit import SRF, Curves, Estimate, Merits, ModelEvaluator, SpotReadout
from ._result import SCHEMA, Candidate, FitQuality, Identification, ModelChoice, ParameterMap

if TYPE_CHECKING:
    from ..data._sweep import Sweep
    from ..fit._lsq import Observation
    from ._measured_report import MeasuredReadings
    from ._rational import RationalStage

__all__ = [
    "identify",
    "Identification",
    "FitQuality",
    "Candidate",
    "ParameterMap",
    "Estimate",
    "Readings",
    "MODELS",
    "SCHEMA",
    "BIC_MARGIN",
    "DEFAULT_RDC_REL",
]

#: The `model` argument's choices.
MODELS = ("auto", "inductor", "capacitor", "rational")

#: An optional element is kept only when it lowers the BIC by more than this
#: ("very strong" evidence on the scale of Kass & Raftery 1995, a difference
#: above 10).
BIC_MARGIN = 10.0

#: Default relative uncertainty of a measured DC resistance when none is
#: given: 1 % of reading, common practice for a bench four-wire ohmmeter
#: reading of a winding (meter accuracy, lead contact and self-heating).
DEFAULT_RDC_REL = 0.01


@dataclass(frozen=True)
class Readings:
    """The figures of merit of a model, read where each model holds.

    Attributes
    ----------
    srf : SRF
        The self-resonance.
    spot : tuple of SpotReadout
        The readouts at the frequencies asked for.
    merit : Merits
        Q peak, ESR, D, |Z| at resonance.
    curves : Curves
        Q(f), ESR(f), D(f) over the band.
    """

    srf: SRF
    spot: tuple[SpotReadout, ...]
    merit: Merits
    curves: Curves


def _checked_options(sweep, model, at, rdc, rdc_std):
    """Return (at, rdc, rdc_std) checked and in SI floats; raise ZfitInputError on bad options."""
    from ..fit._models import named_models

    if model not in MODELS:
        try:
            named_models(model)
        except ZfitInputError as exc:
            raise ZfitInputError(str(exc), sweep.source) from None
    at = tuple(float(x) for x in np.atleast_1d(np.asarray(() if at is None else at, dtype=float)))
    for x in at:
        if not (math.isfinite(x) and x > 0):
            raise ZfitInputError(f"spot frequency {format_eng(x, 'Hz')} is not a positive number")
    if rdc is not None:
        rdc = float(rdc)
        if not (math.isfinite(rdc) and rdc > 0):
            raise ZfitInputError(f"--rdc must be a positive resistance, got {format_eng(rdc, 'ohm')}")
        rdc_std = DEFAULT_RDC_REL * rdc if rdc_std is None else float(rdc_std)
        if not (math.isfinite(rdc_std) and rdc_std > 0):
            raise ZfitInputError(f"--rdc-std must be a positive resistance, got {format_eng(rdc_std, 'ohm')}")
    elif rdc_std is not None:
        raise ZfitInputError("--rdc-std needs --rdc")
    return at, rdc, rdc_std


def readings(family: str, srf: SRF, evaluator: ModelEvaluator, at, extrapolated: str,
             measured: MeasuredReadings | None = None) -> tuple[Readings, list[str]]:
    """Return the figures of merit read through `evaluator`, and the notes on spots outside the band.

    Parameters
    ----------
    family : {'inductor', 'capacitor', 'rational'}
        The model reported.
    srf : SRF
        Its self-resonance.
    evaluator : ModelEvaluator
        Which model is read where.
    at : tuple of float
        Spot frequencies in Hz.
    extrapolated : str
        What a spot outside the band is extrapolated from (for the note).
    measured : MeasuredReadings, optional
        What the data say: where they contain the resonance, ``|Z|`` at the
        SRF is theirs (`_measured_report.merits_with_measurement`).
    """
    from ._measured_report import merits_with_measurement
    from ._merit import curves_of, merits_of, spot_readout

    spots = tuple(spot_readout(x, evaluator) for x in at)
    notes = [f"spot readout at {format_eng(s.f_hz, 'Hz')} is outside the band: {extrapolated}"
             for s in spots if not s.in_band]
    merits = merits_of(family, srf, evaluator)
    if measured is not None:
        merits = merits_with_measurement(merits, measured)
    return Readings(srf, spots, merits, curves_of(evaluator)), notes


def _rational_result(sweep: Sweep, obs: Observation, stage: RationalStage, at, rdc, notes,
                     measured: MeasuredReadings) -> Identification:
    """The result when the rational model alone is reported (its notes appended to `notes`)."""
    from ._measured_report import srf_with_measurement
    from ._merit import srf_of_rational
    from ._rational import n_poles_of, rational_k

    rational, score = stage.rational, stage.score
    band = sweep.band_hz
    if rdc is not None:
        notes.append("--rdc does not apply to the rational model; ignored")
    srf = srf_with_measurement(srf_of_rational(rational, band), measured.srf)
    read, spot_notes = readings("rational", srf, ModelEvaluator(band, rational=rational), at,
                                "the rational model is extrapolated", measured)
    notes.extend(spot_notes)
    k = rational_k(rational)
    fit = FitQuality(
        rms_normalized_residual=score.rms, points=sweep.n_points, f_min_hz=band[0], f_max_hz=band[1],
        valid_band_hz=band, fitted_band_hz=band,
        reduced_chi_square=float(2 * score.energy.sum() / max(2 * sweep.n_points - k, 1)),
        domain="S" if obs.on_s else "Z", rational_rms_normalized_residual=score.rms,
        rational_poles=n_poles_of(rational),
    )
    return Identification(
        sweep=sweep, model="rational", topology=f"rational model with {n_poles_of(rational)} poles",
        parameters=ParameterMap(), rational=rational, srf=srf, fit=fit, spot=read.spot,
        figures=read.merit, curves=read.curves, rdc=None, measurement=measured,
    )


def identify(
    sweep,
    model: str = "auto",
    at=(),
    *,
    rdc: float | None = None,
    rdc_std: float | None = None,
    n_poles: int | None = None,
    margin: float = BIC_MARGIN,
    band: tuple[float, float] | None = None,
) -> Identification:
    """Return the equivalent circuit of a part with uncertainties, SRF, Q and D.

    Parameters
    ----------
    sweep : Sweep
        The measured impedance with its per-point uncertainty.
    model : str
        ``auto`` chooses the family by the BIC and adds the optional element
        (R_p, R_leak) or a frequency-dependent loss model (skin-effect
        winding, relaxing core, resonant sections, constant loss tangent)
        only when it lowers the BIC by more than `margin`;
        ``inductor`` / ``capacitor`` fix the family (the rest is still
        chosen); ``rational`` reports the vector-fitting model alone; any
        circuit's descriptive name (its ``topology``) or a short name of
        `zfit.fit._models.SHORT_NAMES` (``bead``, ``skin-effect-coil``,
        ``relaxing-core``, ``constant-loss-capacitor``) fits that circuit.
    at : float or sequence of float
        Frequencies (Hz) for spot readouts of R, X, L_eff, C_eff, Q and D.
    rdc : float, optional
        A measured DC resistance in ohm (four-wire ohmmeter): it constrains
        R_s (inductor) or ESR (capacitor) as a prior measurement.
    rdc_std : float, optional
        Its standard uncertainty in ohm (default `DEFAULT_RDC_REL` of `rdc`).
    n_poles : int, optional
        Pole count of the rational model (automatic by default).
    margin : float
        BIC difference an optional element must win by.
    band : (float, float), optional
        Restrict the fit to ``fmin <= f <= fmax`` (Hz); the figures read
        from the measurement still cover the whole sweep.

    Returns
    -------
    Identification
        The result; ``to_dict()`` is the ``zfit.identify/1`` JSON object.

    Raises
    ------
    ZfitInputError
        On an unknown model, non-positive spot frequencies or DC resistance.
    FitError
        When neither the rational model nor any circuit can be fitted.

    Warns
    -----
    MeasurementWarning
        For each entry of ``Identification.warnings`` (a circuit worse than
        the rational model, a narrower valid band, parameters the sweep does
        not resolve, spot readouts outside the band, a DC resistance that
        disagrees with the sweep).

    References
    ----------
    .. [1] B. Gustavsen and A. Semlyen, "Rational approximation of frequency
       domain responses by vector fitting", IEEE Trans. Power Delivery 14(3),
       1052-1061, 1999, doi:10.1109/61.772353.
    .. [2] G. Schwarz, "Estimating the dimension of a model", Ann. Statist.
       6(2), 461-464, 1978, doi:10.1214/aos/1176344136.
    .. [3] R. E. Kass and A. E. Raftery, "Bayes factors", J. Amer. Statist.
       Assoc. 90(430), 773-795, 1995, doi:10.1080/01621459.1995.10476572.
    """
    from ..fit._models import family_choice
    from ._measured_report import measured_readings

    model = family_choice(model)
    at, _, _ = _checked_options(sweep, model, at, rdc, rdc_std)
    # What the measurement says is read first, over the whole file, whatever model and band follow.
    measured = measured_readings(sweep, at)
    fitted = sweep if band is None else sweep_in_band(sweep, band)
    result = _identify(fitted, model, at, rdc, rdc_std, n_poles, margin, measured)
    return dataclasses.replace(result, choice=model_choice(model, band, result, margin))


def sweep_in_band(sweep: Sweep, band) -> Sweep:
    """Return the sweep restricted to ``band[0] <= f <= band[1]``; ZfitInputError if too few points remain."""
    lo, hi = (float(x) for x in band)
    if not (math.isfinite(lo) and math.isfinite(hi) and 0 < lo < hi):
        raise ZfitInputError(f"--band {format_eng(lo, 'Hz')}:{format_eng(hi, 'Hz')} is not an increasing pair of "
                             "positive frequencies", sweep.source)
    m = (sweep.f_hz >= lo) & (sweep.f_hz <= hi)
    if int(m.sum()) < 10:
        raise ZfitInputError(f"--band {format_eng(lo, 'Hz')}:{format_eng(hi, 'Hz')} holds {int(m.sum())} points of "
                             f"the sweep; at least 10 are needed for a fit", sweep.source)
    arrays = {k: getattr(sweep, k)[m] for k in ("f_hz", "z_ohm", "sigma_ohm", "s_param", "active")
              if getattr(sweep, k) is not None}
    return dataclasses.replace(sweep, **arrays)


def model_choice(model: str, band, result: Identification, margin: float) -> ModelChoice:
    """Return which band and model were used, and why."""
    lo, hi = result.sweep.band_hz
    if model == "auto" and result.model == "rational":
        why = "no equivalent circuit describes the part within the noise over enough of the band (see warnings)"
    elif model == "auto":
        why = (f"the lowest BIC of {len(result.candidates)} candidate circuits, an extra element kept only when it "
               f"lowers the BIC by more than {margin:g}; the family from the sign of Im Z at low frequency")
    else:
        why = f"asked for (model {model!r})"
    return ModelChoice(model, result.topology, why, (lo, hi), "asked for (band)" if band is not None else "the whole sweep")


def _identify(sweep, model, at, rdc, rdc_std, n_poles, margin, measured) -> Identification:
    """`identify` over the (restricted) sweep, with the measurement already read."""
    from ..fit._lsq import Observation
    from ._adequacy import adequacy, adequacy_notes
    from ._band import band_decades, lumped_if_as_wide, valid_band, widest_family_band
    from ._candidates import candidate_fits, choice, rdc_prior
    from ._criteria import bic
    from ._diagnostics import adequacy_note, ground_loop_warning, parameter_notes, rdc_note
    from ._estimates import correlation_of, parameter_estimates
    from ._few_points import FEW_POINTS, few_point_identification
    from ._measured_report import srf_with_measurement
    from ._merit import srf_of_circuit
    from ._model_error import split_band_check, split_band_note
    from ._rational import looks_capacitive, n_poles_of, rational_stage, reweighted_rational

    from ..fit._loss_circuits import ResonantSections
    from ..fit._models import named_models

    at, rdc, rdc_std = _checked_options(sweep, model, at, rdc, rdc_std)
    named = None if model in MODELS else named_models(model)
    # Too few points for vector fitting and windowed bands: what they resolve, by least squares alone.
    if sweep.n_points < FEW_POINTS and model != "rational":
        return _finish(*few_point_identification(sweep, model if named is None else named[0].family, at, rdc, rdc_std))
    band = sweep.band_hz
    obs = Observation.from_sweep(sweep)
    rows_full = 2 * sweep.n_points

    stage = rational_stage(sweep, model, obs, n_poles)
    notes = list(stage.notes)
    if model == "rational":
        return _finish(_rational_result(sweep, obs, stage, at, rdc, notes, measured), notes)

    # An inductive sweep (Im Z > 0 at low frequency, resolved) is an inductor, a capacitive one a capacitor.
    likely = measured.family or ("capacitor" if looks_capacitive(sweep) else "inductor")
    fits = candidate_fits(model, likely, obs, stage.rational, rdc, rdc_std, margin, named=named)
    notes.extend(fits.notes)
    if not fits.base:
        if stage.rational is None:
            raise FitError(f"{sweep.source}: neither a rational model nor an equivalent circuit could be fitted")
        return _finish(_identify(sweep, "rational", at, None, None, n_poles, margin, measured), notes)
    picked = choice(fits, rows_full, margin, rdc, rdc_std, required=measured.family if model == "auto" else None)

    e_rat = None if stage.score is None else stage.score.energy
    vb = valid_band(sweep, obs, picked, e_rat, stage.rational, margin)
    picked, vb = widest_family_band(sweep, obs, fits, picked, vb, e_rat, stage.rational, margin)
    picked, vb = lumped_if_as_wide(sweep, obs, fits, picked, vb, e_rat, stage.rational, margin, rows_full)
    chosen, i0, i1, fitted_mask = vb.chosen, vb.start, vb.stop, vb.fitted_mask
    stage = reweighted_rational(sweep, stage, chosen, vb.inside(sweep.n_points), obs)
    rational = stage.rational
    rat_rms = None if stage.score is None else stage.score.rms
    bic_rat = None if stage.score is None else stage.score.bic

    valid = (float(sweep.f_hz[i0]), float(sweep.f_hz[max(i1 - 1, i0)])) if i1 > i0 else (math.nan, math.nan)
    fitted_band = band if fitted_mask is None else (float(sweep.f_hz[fitted_mask][0]), float(sweep.f_hz[fitted_mask][-1]))
    bic_c_full = bic(float(2 * vb.energy.sum()), rows_full, chosen.circuit.n_params)
    worse = bic_rat is not None and bic_c_full > bic_rat + margin
    decades = band_decades(sweep.f_hz, i0, i1)
    if model == "auto" and rational is not None and ((i1 - i0) < 10 or decades[0] < 0.25 * decades[1]):
        notes.append(
            f"no equivalent circuit describes this part: the best, {chosen.circuit.topology}, is within the noise "
            f"over {decades[0]:.2g} of {decades[1]:.2g} decades ({i1 - i0} of {sweep.n_points} points) only; "
            "the rational model is reported"
        )
        return _finish(_identify(sweep, "rational", at, None, None, n_poles, margin, measured), notes)
    if worse:
        notes.append(adequacy_note(chosen.circuit.topology, vb.energy, rat_rms, valid, i1 - i0, sweep.n_points,
                                   fitted_mask is not None))

    # Where the circuit holds within the noise, and the model error its uncertainties then carry.
    adq = adequacy(sweep.f_hz, vb.energy, chosen.reduced_chi2, chosen.rows - chosen.circuit.n_params)
    if (i0, i1) == (0, sweep.n_points):  # a narrower valid band has its own note (_band)
        notes.extend(adequacy_notes(adq, chosen.circuit.topology))
    # The model-error terms: the least squares scales its covariance by the reduced chi-square
    # (fit/_lsq.refine); the same circuit over two halves of its band widens what its form biases.
    split = split_band_check(chosen, obs, fitted_mask, picked.prior)
    chosen = split.refinement
    if split.widened:
        notes.append(split_band_note(split, chosen.circuit.topology))
    est = parameter_estimates(chosen, sweep, fitted_mask)
    notes.extend(parameter_notes(est, rdc))
    pull = rdc_note(chosen, picked.prior, rdc)
    lumped = fits.base.get(picked.family)
    if pull is None and lumped is not None and lumped is not chosen and picked.prior is not None:
        # A loss model may reconcile the DC reading with the sweep; the constant-loss circuit's pull says it did.
        pull = rdc_note(lumped, rdc_prior(lumped.circuit, rdc, rdc_std), rdc)
        if pull is not None:
            pull += f"; the sweep is described by the {chosen.circuit.topology} instead"
    if pull is not None:
        notes.append(pull)
    srf = srf_with_measurement(srf_of_circuit(chosen, band), measured.srf, holds_hz=valid)
    evaluator = ModelEvaluator(
        band, rational=rational, refinement=chosen,
        circuit_band=valid if i1 > i0 else None,
    )
    # Figures read from the circuit inside its valid band are the measured part to within the noise.
    read, spot_notes = readings(picked.family, srf, evaluator, at, "extrapolated from the circuit", measured)
    notes.extend(spot_notes)
    n_fit = sweep.n_points if fitted_mask is None else int(fitted_mask.sum())
    fit = FitQuality(
        rms_normalized_residual=chosen.rms_normalized_residual, points=n_fit, f_min_hz=band[0], f_max_hz=band[1],
        valid_band_hz=valid, fitted_band_hz=fitted_band, reduced_chi_square=chosen.reduced_chi2,
        domain="S" if obs.on_s else "Z", rational_rms_normalized_residual=rat_rms,
        rational_poles=None if rational is None else n_poles_of(rational), worse_than_rational=bool(worse),
        starts=chosen.starts, adequacy=adq, split_band=split,
    )
    candidates = tuple(
        Candidate(ref.circuit.topology, ref.circuit.n_params, b, ref.rms_normalized_residual,
                  chosen=(ref.circuit == chosen.circuit))
        for b, ref in picked.ranked
    )
    result = Identification(
        sweep=sweep, model=picked.family, topology=chosen.circuit.topology, parameters=est, rational=rational,
        srf=srf, fit=fit, spot=read.spot, figures=read.merit, curves=read.curves, candidates=candidates,
        correlation=correlation_of(chosen), rdc=None if rdc is None else Estimate(rdc, rdc_std, "ohm"),
        refinement=chosen, measurement=measured,
    )
    if isinstance(chosen.circuit, ResonantSections):
        result = dataclasses.replace(result, bead=_bead_of(sweep, at))
    # A flat resistive floor of a shunt-thru capacitor is the cable-shield ground loop, not ESR.
    loop = ground_loop_warning(sweep, result)
    if loop is not None:
        notes.append(loop)
    return _finish(result, notes)


def _bead_of(sweep, at):
    """A bead's figures from the measurement (R = X, |Z| at `at` or 100 MHz), None without an inductive region."""
    from ._bead import DEFAULT_BEAD_AT_HZ, bead_figures

    try:
        return bead_figures(sweep, at=at or (DEFAULT_BEAD_AT_HZ,), model=False)
    except ZfitInputError:
        return None


def _finish(result: Identification, notes) -> Identification:
    """Attach the new warnings to the result and raise them as MeasurementWarning."""
    new = tuple(notes)
    for text in new:
        warnings.warn(f"{result.sweep.source}: {text}" if result.sweep.source else text, MeasurementWarning, stacklevel=3)
    return dataclasses.replace(result, warnings=tuple(new) + tuple(result.warnings))

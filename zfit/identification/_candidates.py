"""The candidate circuits of identification: fitted per family, and the choice between them.

The family the data look like is fitted first; the other is refined only
if its best starting point comes within a factor `_SCREEN_START` of the
first's fitted chi-square, and given its optional element (R_p, R_leak)
only within `_SCREEN_RATIO`: a circuit of the wrong family is far off and
slow to converge.  (A capacitor with leakage and an inductor whose R_s
plays the leak can look alike where ESL and ESR are not resolved: then both
are refined, and the families are compared by the better of their two
circuits.)  Where the best lumped circuit of a family leaves a residual
above the noise (reduced chi-square over `_LOSS_SCREEN`), the family's
frequency-dependent loss models (`zfit.fit._models.loss_models_of`: a
skin-effect winding, a relaxing core, resonant sections; a constant loss
tangent) are refined too: on a part the lumped circuit describes, none of
them can win the margin, and they are not worth their cost.  The family,
the optional element and the loss model are then chosen by the Bayesian
information criterion, anything beyond the base circuit with a margin.

References
----------
.. [1] G. Schwarz, "Estimating the dimension of a model", Ann. Statist.
   6(2), 461-464, 1978, doi:10.1214/aos/1176344136.
.. [2] R. E. Kass and A. E. Raftery, "Bayes factors", J. Amer. Statist.
   Assoc. 90(430), 773-795, 1995, doi:10.1080/01621459.1995.10476572.
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from .._errors import FitError
from ._criteria import bic

if TYPE_CHECKING:
    from ..fit._lsq import Observation, Prior, Refinement
    from ..fit._vectfit import RationalModel

__all__ = ["CandidateFits", "Choice", "candidate_fits", "choice", "circuit_bic", "rdc_prior"]

# Screening of the second family: refined only if its best starting point
# comes within _SCREEN_START of the first family's fitted chi-square, first
# from one start and at most _SCREEN_NFEV evaluations, fully and with its
# optional element only if it then comes within _SCREEN_RATIO.
_SCREEN_START = 100.0
_SCREEN_RATIO = 10.0
_SCREEN_NFEV = 30

# The optional element is refined only when the score test predicts at least
# this fraction of the BIC gain it must reach (see _optional_may_help).
_OPTIONAL_SCREEN = 0.25

# The loss models are refined only when the best lumped circuit's reduced
# chi-square exceeds this: below it the residual has too little structure
# for four or five parameters to win the BIC margin.
_LOSS_SCREEN = 1.3

# A loss model competes only when the sweep resolves the parameters that make
# it one to this relative uncertainty (the resolution threshold of
# zfit.fit._fisher).
_LOSS_RESOLVED = 1.0 / 3.0

# The series loss a measured DC resistance constrains, by circuit key.
_PRIOR_KEYS = ("R_s", "ESR", "R_dc", "ESR_0")
_PRIOR_KEY = {"inductor": "R_s", "capacitor": "ESR"}


@dataclass(frozen=True)
class CandidateFits:
    """The circuits fitted for each family.

    Attributes
    ----------
    likely : {'inductor', 'capacitor'}
        The family the data look like (sign of the low-frequency reactance).
    base : dict
        Family -> the refined base circuit.
    optional : dict
        Family -> the refined circuit with its optional element, or None
        where it was not tried or failed.
    notes : tuple of str
        Families that could not be fitted.
    loss : dict
        Family -> the refined loss models (tuple, empty where they were
        screened out).
    """

    likely: str
    base: dict
    optional: dict
    notes: tuple[str, ...] = ()
    loss: dict = dataclasses.field(default_factory=dict)


@dataclass(frozen=True)
class Choice:
    """The circuit chosen and the ranking that chose it.

    Attributes
    ----------
    family : {'inductor', 'capacitor'}
        The family reported.
    chosen : Refinement
        The circuit reported (base or with its optional element).
    prior : Prior or None
        The measured DC resistance as a prior on the family's series loss.
    ranked : tuple of (float, Refinement)
        Every circuit fitted with its BIC over the full band, in fitting order.
    """

    family: str
    chosen: Refinement
    prior: Prior | None
    ranked: tuple


def rdc_prior(family, rdc: float | None, rdc_std: float | None) -> Prior | None:
    """Return the prior of a measured DC resistance on a circuit's series loss (None without one).

    Parameters
    ----------
    family : {'inductor', 'capacitor'} or Circuit
        The family (its lumped circuit's R_s or ESR) or the circuit itself
        (its R_s, ESR, R_dc or ESR_0).
    rdc, rdc_std : float or None
        The measured DC resistance and its uncertainty.
    """
    from ..fit._lsq import Prior

    if rdc is None:
        return None
    if isinstance(family, str):
        return Prior(_PRIOR_KEY[family], rdc, rdc_std)
    key = next((k for k in _PRIOR_KEYS if k in family.keys), None)
    return None if key is None else Prior(key, rdc, rdc_std)


def circuit_bic(ref: Refinement, rows: int) -> float:
    """Return the BIC of a circuit fit over `rows` real residuals."""
    return bic(ref.chi2, rows, ref.circuit.n_params)


def _fit_base(family, obs, rational, prior, max_nfev=200, seed=None, spread=True):
    """Refine the base circuit of a family (several starts for a sharp resonance)."""
    from ..fit._circuits import circuits_of, sharp_resonance
    from ..fit._lsq import refine

    base, _ = circuits_of(family)
    first = ([] if seed is None else [seed]) + base.starts(obs.f_hz, obs.z_ohm, obs.sigma_ohm, rational, spread=False)
    more = None
    if spread and sharp_resonance(family, obs.z_ohm):
        def more():
            return base.starts(obs.f_hz, obs.z_ohm, obs.sigma_ohm, rational)[len(first):]
    return refine(base, obs, first, extra_starts=more, prior=prior, n_best=3 if spread else 1, max_nfev=max_nfev)


def _screened_out(family, obs, rational, prior, best_chi2) -> bool:
    """Whether a family's best start is so far off that it cannot compete."""
    from ..fit._circuits import circuits_of
    from ..fit._lsq import best_start_chi2

    base, _ = circuits_of(family)
    starts = base.starts(obs.f_hz, obs.z_ohm, obs.sigma_ohm, rational, spread=False)
    return best_start_chi2(base, obs, starts, prior=prior) > _SCREEN_START * best_chi2


def _fit_optional(rb, obs, rational, prior):
    """Refine the family's circuit with its optional element, starting from the base fit."""
    from ..fit._circuits import circuits_of, sharp_resonance
    from ..fit._lsq import refine

    family = rb.circuit.family
    _, full = circuits_of(family)
    f, z, sig = obs.f_hz, obs.z_ohm, obs.sigma_ohm
    # The optional element small, middling and large against the part's impedance.
    if family == "inductor":
        zmax = float(np.max(np.abs(z)))
        extra = [zmax * 100.0, zmax * 3.0, zmax]
    else:
        c = rb.values[0]
        extra = [x / (2 * math.pi * f[0] * c) for x in (1e4, 1e2, 10.0)]
    starts = [np.append(rb.values, e) for e in extra] + full.starts(f, z, sig, rational, spread=False)
    n_best = 3 if sharp_resonance(family, z) else 1
    try:
        return refine(full, obs, starts, prior=prior, n_best=n_best)
    except FitError:
        return None


def _optional_may_help(rb, obs, prior, margin) -> bool:
    """Whether the family's optional element could win the BIC margin at all.

    The score test (`zfit.fit._lsq.optional_element_gain`) predicts the
    chi-square drop of the optional element from the base fit alone; it is
    refined only when that drop, as a BIC gain ``rows ln(chi2 / (chi2 -
    drop))``, reaches `_OPTIONAL_SCREEN` of what it must win by (the margin
    plus the ``ln rows`` its extra parameter costs).  On the benchmark and
    test parts the prediction matched the refined drop to a few percent
    (the optional element enters nearly linearly where it is small), so the
    factor of four leaves a wide berth.
    """
    from ..fit._lsq import optional_element_gain

    try:
        drop = optional_element_gain(rb, obs, prior)
    except (FitError, ValueError, np.linalg.LinAlgError):
        return True
    rows = rb.rows
    gain = math.inf if drop >= rb.chi2 else rows * math.log(rb.chi2 / (rb.chi2 - drop))
    return gain >= _OPTIONAL_SCREEN * (margin + math.log(rows))


def _fit_loss(circuit, obs, rdc, rdc_std):
    """Refine a circuit from its own data guesses; None if it fails."""
    from ..fit._lsq import refine

    try:
        return refine(circuit, obs, circuit.starts(obs.f_hz, obs.z_ohm, obs.sigma_ohm), n_best=3,
                      prior=rdc_prior(circuit, rdc, rdc_std))
    except (FitError, ValueError, ArithmeticError, np.linalg.LinAlgError):
        return None


def _loss_resolved(ref, band) -> bool:
    """Whether the parameters that make a loss model what it is are resolved, its corner near the band.

    Relative uncertainties below `_LOSS_RESOLVED`, and a skin-effect corner
    f_c or a relaxation f_r within a decade of the band: a corner far below
    it leaves only ``R_dc / sqrt(f_c)`` determined (the winding is all
    sqrt(f) there), whatever the linearised uncertainties say.
    """
    from ..fit._models import characteristic_keys

    idx = [ref.circuit.keys.index(k) for k in characteristic_keys(ref.circuit)]
    with np.errstate(all="ignore"):
        rel = np.sqrt(np.diag(ref.log_cov))[idx]
    values = ref.circuit.mapping(ref.values)
    corners = [values[k] for k in ("f_c", "f_r") if k in values]
    near = all(band[0] / 10.0 <= fc <= band[1] * 10.0 for fc in corners)
    return bool(near and np.all(np.isfinite(rel) & (rel < _LOSS_RESOLVED)))


def _loss_fits(circuits, obs, rdc, rdc_std, resolved_only: bool = True) -> tuple:
    """Refine each circuit in turn; the resonant sections together, grown one section at a time (`_bead.section_fits`).

    With `resolved_only`, a fit whose characteristic parameters
    (`zfit.fit._models.characteristic_keys`) the sweep does not resolve is
    dropped: a relaxation or a skin-effect corner outside the band only
    mimics a lumped element (a Debye core relaxing below the band is a
    series resistance), which the lumped circuits already say more simply.
    """
    from ..fit._loss_circuits import ResonantSections
    from ._bead import section_fits

    counts = tuple(c.n_sections for c in circuits if isinstance(c, ResonantSections))
    # The sections are grown on the sweep alone, without the prior of a measured DC resistance.
    sections = section_fits(obs, counts) if counts else {}
    out = []
    for circuit in circuits:
        ref = sections.get(circuit.n_sections) if isinstance(circuit, ResonantSections) else \
            _fit_loss(circuit, obs, rdc, rdc_std)
        if ref is None:
            continue
        # A core whose permeability would rise with frequency is an active part: a calibration error, not a core.
        if circuit.is_passive(ref.values) and (not resolved_only or _loss_resolved(ref, (obs.f_hz[0], obs.f_hz[-1]))):
            out.append(ref)
    return tuple(out)


def _named_fits(circuits, obs, rdc, rdc_std) -> CandidateFits:
    """The circuits asked for by name: the first is the base, the rest compete with it by the BIC."""
    family = circuits[0].family
    fitted = _loss_fits(circuits, obs, rdc, rdc_std, resolved_only=False)
    if not fitted:
        return CandidateFits(family, {}, {}, (f"{circuits[0].topology} could not be fitted",))
    return CandidateFits(family, {family: fitted[0]}, {family: None}, (), {family: tuple(fitted[1:])})


def candidate_fits(model: str, likely: str, obs: Observation, rational: RationalModel | None,
                   rdc: float | None, rdc_std: float | None, margin: float, named=None) -> CandidateFits:
    """Return the circuits of each family that compete (module notes).

    Parameters
    ----------
    model : {'auto', 'inductor', 'capacitor'} or str
        ``auto`` fits both families, a family only the one asked for, a
        model name (with `named`) only the circuits it stands for.
    likely : {'inductor', 'capacitor'}
        The family the data look like, fitted first.
    obs : Observation
        The sweep as the circuits see it.
    rational : RationalModel or None
        The rational model the starting points are drawn from.
    rdc, rdc_std : float or None
        A measured DC resistance and its uncertainty.
    margin : float
        BIC difference an optional element must win by.
    named : tuple of Circuit, optional
        The circuits a model name stands for (`zfit.fit._models.named_models`).
    """
    from ..fit._models import loss_models_of

    if named:
        return _named_fits(named, obs, rdc, rdc_std)
    families = (likely, "inductor" if likely == "capacitor" else "capacitor") if model == "auto" else (model,)
    fitted, optional, loss, notes = {}, {}, {}, []
    best_chi2 = math.inf
    for idx, fam in enumerate(families):
        prior = rdc_prior(fam, rdc, rdc_std)
        try:
            if idx > 0 and _screened_out(fam, obs, rational, prior, best_chi2):
                continue
            if idx == 0:
                rb = _fit_base(fam, obs, rational, prior)
            else:
                # One start only, unless it turns out to compete.
                rb = _fit_base(fam, obs, rational, prior, spread=False, max_nfev=_SCREEN_NFEV)
                if rb.chi2 <= _SCREEN_RATIO * best_chi2:
                    rb = _fit_base(fam, obs, rational, prior, seed=rb.values)
        except FitError as exc:
            notes.append(f"{fam} circuit could not be fitted: {exc}")
            continue
        fitted[fam] = rb
        optional[fam] = None
        if rb.chi2 <= _SCREEN_RATIO * best_chi2 and _optional_may_help(rb, obs, prior, margin):
            optional[fam] = _fit_optional(rb, obs, rational, prior)
        best_chi2 = min(best_chi2, rb.chi2, math.inf if optional[fam] is None else optional[fam].chi2)
        lumped = min((r for r in (rb, optional[fam]) if r is not None), key=lambda r: r.chi2)
        loss[fam] = ()
        if lumped.chi2 <= _SCREEN_RATIO * best_chi2 and lumped.reduced_chi2 > _LOSS_SCREEN:
            loss[fam] = _loss_fits(loss_models_of(fam), obs, rdc, rdc_std)
            best_chi2 = min([best_chi2] + [r.chi2 for r in loss[fam]])
    return CandidateFits(likely, fitted, optional, tuple(notes), loss)


def choice(fits: CandidateFits, rows: int, margin: float, rdc: float | None, rdc_std: float | None,
           required: str | None = None) -> Choice:
    """Return the family and circuit chosen by the BIC.

    The family the data look like (sign of the low-frequency reactance)
    unless the other describes them better by the margin: a series R-L is
    also a capacitor with an infinite C, and such ties go to what the data
    look like.  The optional element is kept only when it lowers the BIC by
    more than the margin.

    Parameters
    ----------
    fits : CandidateFits
        The circuits fitted (at least one).
    rows : int
        Number of real residuals of the full band.
    margin : float
        BIC difference an optional element (or the other family) must win by.
    rdc, rdc_std : float or None
        A measured DC resistance and its uncertainty.
    required : {'inductor', 'capacitor'} or None
        The family the measurement resolves (sign of Im Z at low frequency):
        the other is then ranked but never chosen, since a series R-L fitted
        as a capacitor has a C that runs to infinity.
    """
    fitted, likely = fits.base, fits.likely
    allowed = [fam for fam in fitted if required is None or fam == required] or list(fitted)

    def extras(fam):
        return [r for r in (fits.optional.get(fam),) + tuple(fits.loss.get(fam, ())) if r is not None]

    def family_bic(fam):
        return min([circuit_bic(fitted[fam], rows)] + [circuit_bic(r, rows) + margin for r in extras(fam)])

    family = min(allowed, key=family_bic)
    if likely in allowed and family != likely and family_bic(family) > family_bic(likely) - margin:
        family = likely
    ranked = []
    for fam in fitted:
        ranked += [(circuit_bic(r, rows), r) for r in [fitted[fam]] + extras(fam)]
    # Anything beyond the base circuit must lower the BIC by more than the margin.
    chosen = min([fitted[family]] + extras(family),
                 key=lambda r: circuit_bic(r, rows) + (0.0 if r is fitted[family] else margin))
    return Choice(family, chosen, rdc_prior(chosen.circuit, rdc, rdc_std), tuple(ranked))

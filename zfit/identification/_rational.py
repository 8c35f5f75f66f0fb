"""The rational stage of identification: a vector-fitting model of the full band.

The rational model is the description of the measured part that follows the
data to within the noise wherever a circuit does not: the circuits start
from it, their valid band is judged against its residual, and the figures of
merit outside the circuit's valid band are read from it.  This module fits
it for a sweep (the simplest model of the family's form first, the
automatic pole count otherwise), scores it in the fit's own domain, and
refits it with the analyser noise at the circuit's impedance once the
circuit is known.

References
----------
.. [1] B. Gustavsen and A. Semlyen, "Rational approximation of frequency
   domain responses by vector fitting", IEEE Trans. Power Delivery 14(3),
   1052-1061, 1999, doi:10.1109/61.772353.
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
    from ..data._sweep import Sweep
    from ..fit._lsq import Observation, Refinement
    from ..fit._vectfit import RationalModel

__all__ = ["RationalStage", "RationalScore", "rational_stage", "rational_score", "reweighted_rational",
           "looks_capacitive", "rational_k", "n_poles_of"]

# Pole count of the simplest rational model of each family's form.
_SIMPLE_POLES = {"inductor": 2, "capacitor": 0}


@dataclass(frozen=True)
class RationalScore:
    """How well a rational model describes the sweep, in the fit's domain.

    Attributes
    ----------
    energy : numpy.ndarray
        ``|normalised residual|^2`` at each sweep point.
    rms : float
        RMS of the normalised residual.
    bic : float
        Schwarz's criterion over the full band.
    """

    energy: np.ndarray
    rms: float
    bic: float


@dataclass(frozen=True)
class RationalStage:
    """The rational model of the full band and what the pipeline needs of it.

    Attributes
    ----------
    rational : RationalModel or None
        The model (None when vector fitting failed and a circuit is asked for).
    kind : {'inductor', 'capacitor', 'general'}
        The form it was fitted with (chosen by the model asked for, or by
        what the data look like).
    score : RationalScore or None
        Its residual (None without a model).
    notes : tuple of str
        What the user should know (a failed fit).
    """

    rational: RationalModel | None
    kind: str
    score: RationalScore | None
    notes: tuple[str, ...] = ()


def looks_capacitive(sweep: Sweep) -> bool:
    """Whether the reactance at the bottom of the band is negative.

    Negative for a capacitor below its SRF (and for an inductor measured
    only above its SRF, which the model choice then sorts out).  The median
    over the bottom 5 % of the band in log frequency (at least 3 points):
    the bottom 5 % of the points of a linear sweep would reach far into its
    top decade.
    """
    x = np.log(sweep.f_hz)
    # Strictly inside 5 % of the span, half a mean spacing short: an evenly
    # log-spaced sweep keeps its bottom N/20 points whatever the rounding.
    edge = x[0] + 0.05 * (x[-1] - x[0]) - 0.5 * (x[-1] - x[0]) / max(x.size - 1, 1)
    n = max(3, int(np.count_nonzero(x < edge)))
    return bool(np.median(sweep.z_ohm[:n].imag) < 0)


def rational_k(rm: RationalModel) -> int:
    """Return the number of real parameters of a rational model."""
    n_points = int(getattr(rm, "n_points", 0) or 0)
    dof = int(getattr(rm, "dof", 0) or 0)
    if n_points and dof:
        return 2 * n_points - dof
    extra = int(bool(rm.constant)) + int(bool(rm.proportional)) + int(bool(rm.origin_residue))
    return 2 * len(rm.poles) + extra


def n_poles_of(rm: RationalModel) -> int:
    """Return the number of poles of a rational model (besides an origin pole)."""
    return int(len(rm.poles))


def rational_score(rm: RationalModel | None, obs: Observation) -> RationalScore | None:
    """Return the residual of a rational model over the whole sweep (None without a model).

    Parameters
    ----------
    rm : RationalModel or None
        The model.
    obs : Observation
        The sweep as the circuits see it (on S for analyser data).
    """
    if rm is None:
        return None
    e = np.abs(obs.normalized(rm.impedance(obs.f_hz))) ** 2
    rows = 2 * e.size
    return RationalScore(e, float(math.sqrt(np.mean(e))), bic(float(2 * e.sum()), rows, rational_k(rm)))


def _resonance_poles(sweep):
    """Starting poles of the one-pair rational model of an inductor, from the data.

    The roots of ``s^2 + (R_s/L) s + 1/(L C_p)``, the denominator of
    ``(R_s + sL) || 1/(sC_p)``, with the elements of the asymptote guess
    (`InductorCircuit.guess_from_data`): the pair then starts at the
    resonance instead of at the middle of the band, and the relocation
    needs a few steps instead of many for a high-Q part.  None when the
    guess is not usable.
    """
    from ..fit._circuits import InductorCircuit

    try:
        L, R, C = InductorCircuit(False).guess_from_data(sweep.f_hz, sweep.z_ohm, sweep.sigma_ohm)[:3]
    except (ValueError, ArithmeticError, FloatingPointError):
        return None
    if not (np.isfinite([L, R, C]).all() and L > 0 and R > 0 and C > 0):
        return None
    roots = np.roots([1.0, R / L, 1.0 / (L * C)]).astype(complex)
    if not np.all(np.isfinite(roots)) or np.any(roots.real >= 0):
        return None
    if abs(roots[0].imag) > 0:
        up = roots[np.argmax(roots.imag)]
        return np.array([up, up.conjugate()])
    return np.sort(roots.real).astype(complex)


def _rational_fit(sweep, kind, n_poles, initial_poles=None, n_iter=None):
    from ..fit._vectfit import fit_impedance

    # Relocations per pole count: 15 (vector fitting's default is 30).  Where the
    # poles still move after 15 (noise-dominated points, a pole count too large)
    # more relocations cost far more time than they gain accuracy, and the
    # model is refitted from its own poles after the circuit fit anyway.
    extra = {"n_iter": 15} if initial_poles is None else {"initial_poles": initial_poles, "n_iter": n_iter or 8}
    return fit_impedance(sweep.f_hz, sweep.z_ohm, sweep.sigma_ohm, kind=kind, n_poles=n_poles, **extra)


def _second_order_sigma(sweep):
    """The sweep with the second-order error of the S-to-Z conversion added to sigma.

    Z = g(S) with g a Moebius map: where the analyser noise is comparable to
    the distance of S from the pole of g (relative uncertainty
    ``rho = sigma / |Z|`` near 1 or above), the measured Z carries an error
    of order ``rho * sigma`` beyond the first-order sigma; it is added in
    quadrature, ``sigma * sqrt(1 + rho^2)``, for the rational fit on Z only
    (the circuits are fitted on S, where the noise is Gaussian).
    """
    rho = sweep.sigma_ohm / np.abs(sweep.z_ohm)
    if not np.any(rho > 0.1):
        return sweep
    return dataclasses.replace(sweep, sigma_ohm=sweep.sigma_ohm * np.sqrt(1.0 + rho**2))


def rational_stage(sweep: Sweep, model: str, obs: Observation, n_poles: int | None = None) -> RationalStage:
    """Return the rational model of the full band.

    The simplest rational model of the family's form first (one pole pair
    for an inductor, only the origin pole and the constant and s terms for a
    capacitor); the automatic pole count only when that one does not
    describe the measurement within the noise, judged in the fit's own
    domain (on S for analyser data, where the Z-domain residual of vector
    fitting overstates the misfit of points in the analyser's noise).

    Parameters
    ----------
    sweep : Sweep
        The measurement.
    model : {'auto', 'inductor', 'capacitor', 'rational'}
        The model asked for (chooses the form).
    obs : Observation
        The sweep as the circuits see it.
    n_poles : int, optional
        A fixed pole count.

    Raises
    ------
    FitError
        When vector fitting fails and only the rational model was asked for.
    """
    kind = {"inductor": "inductor", "capacitor": "capacitor", "rational": "general"}.get(model)
    if kind is None:
        kind = "capacitor" if looks_capacitive(sweep) else "inductor"
    rational = None
    notes = []
    rm_sweep = _second_order_sigma(sweep) if obs.on_s else sweep
    simple = _SIMPLE_POLES.get(kind) if n_poles is None else None
    tol = 1.0 + max(0.1, 3.0 / math.sqrt(4.0 * sweep.n_points))
    try:
        if simple is not None:
            try:
                start = _resonance_poles(rm_sweep) if kind == "inductor" else None
                if start is not None and start.size == simple:
                    rational = _rational_fit(rm_sweep, kind, None, initial_poles=start, n_iter=15)
                else:
                    rational = _rational_fit(rm_sweep, kind, simple)
            except FitError:
                rational = None
            if rational is not None and rational_score(rational, obs).rms > tol:
                rational = None
        if rational is None:
            rational = _rational_fit(rm_sweep, kind, n_poles)
    except FitError as exc:
        if model == "rational":
            raise
        notes.append(f"no rational model of the sweep ({exc}); figures are read from the circuit")
    return RationalStage(rational, kind, rational_score(rational, obs), tuple(notes))


def _at_noise(e) -> bool:
    """Whether squared normalised residuals average to the noise (within 5 sigma of their mean)."""
    n = max(int(np.size(e)), 1)
    return float(np.mean(e)) <= 1.0 + 5.0 / math.sqrt(n)


def reweighted_rational(sweep: Sweep, stage: RationalStage, chosen: Refinement, inside: np.ndarray,
                        obs: Observation) -> RationalStage:
    """Return the rational stage refitted with the noise at the circuit's impedance, where that is better.

    Weighted with the analyser noise at the circuit's impedance where that
    is larger than at the measured one, inside the band where the circuit
    holds: where the part's impedance sits in the analyser's noise (1 - S
    within the noise) the measured Z is biased and its first-order sigma
    far too small, and those points would otherwise distort the whole
    rational model.  The refit is kept only if it describes the measured S
    better (within 2 % of the first model's RMS residual).

    Parameters
    ----------
    sweep : Sweep
        The measurement.
    stage : RationalStage
        The first rational model.
    chosen : Refinement
        The circuit reported.
    inside : numpy.ndarray of bool
        The points where the circuit holds.
    obs : Observation
        The sweep as the circuits see it.
    """
    from ..fit._fisher import sigma_at_impedance

    rational, score = stage.rational, stage.score
    if rational is None or not obs.on_s or not inside.any() or _at_noise(score.energy[inside]):
        return stage
    with np.errstate(all="ignore"):
        sig_model = sigma_at_impedance(chosen.impedance(sweep.f_hz), sweep.connection, sweep.reference_ohm, sweep.noise)
    sig_model = np.where(inside, sig_model, 0.0)
    base_sig = _second_order_sigma(sweep).sigma_ohm
    sig = np.fmax(base_sig, np.where(np.isfinite(sig_model), sig_model, np.inf))
    sig = np.where(np.isfinite(sig), sig, 1e6 * np.max(sweep.sigma_ohm))
    if not np.any(sig > 1.5 * sweep.sigma_ohm):
        return stage
    try:
        # From the first model's poles: the same count, and few relocations.
        poles = np.asarray(rational.poles)
        refit = _rational_fit(
            dataclasses.replace(sweep, sigma_ohm=sig), stage.kind, None, initial_poles=poles if poles.size else None
        )
    except FitError:
        return stage
    new = rational_score(refit, obs)
    if new.rms <= score.rms * 1.02:
        return dataclasses.replace(stage, rational=refit, score=new)
    return stage

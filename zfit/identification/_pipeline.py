"""Identification: from a sweep to the equivalent circuit, its uncertainties and figures.

The steps (docs/identify.md gives the reasons and the references):

1. a rational model of Z(s) by vector fitting, weighted by the sweep's sigma,
   with the pole count chosen automatically;
2. each candidate circuit refined by weighted nonlinear least squares in
   log-parameters, from the rational model's and the data's initial guesses
   (several starts where the resonance is sharp);
3. the family (inductor or capacitor) chosen by the Bayesian information
   criterion, the optional element (R_p, R_leak) kept only if it lowers the
   criterion by more than `BIC_MARGIN`;
4. the band where the circuit's residual is within the noise (compared with
   the rational model's over sliding windows); where the circuit does not
   hold over the whole band, it is refitted over its valid band, and the
   rational model stays the description of the full band;
5. SRF, Q, ESR, D and spot readouts with their uncertainties.
"""

from __future__ import annotations

import math
import warnings
from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np

from .._errors import FitError, MeasurementWarning, ZfitInputError
from ._merit import SRF, Estimate, Figures, _num
from .._units import format_eng

__all__ = [
    "identify",
    "Identification",
    "FitQuality",
    "Candidate",
    "ParameterMap",
    "Estimate",
    "MODELS",
    "SCHEMA",
    "BIC_MARGIN",
    "DEFAULT_RDC_REL",
]

#: The `model` argument's choices.
MODELS = ("auto", "inductor", "capacitor", "rational")

#: Identifier of the JSON contract.
SCHEMA = "zfit.identify/1"

#: An optional element is kept only when it lowers the BIC by more than this
#: ("very strong" evidence on the scale of Kass & Raftery 1995, a difference
#: above 10).
BIC_MARGIN = 10.0

#: Default relative uncertainty of a measured DC resistance when none is
#: given: 1 % of reading, common practice for a bench four-wire ohmmeter
#: reading of a winding (meter accuracy, lead contact and self-heating).
DEFAULT_RDC_REL = 0.01

#: A parameter whose relative uncertainty exceeds this is reported as not
#: resolved by the sweep.
UNRESOLVED_REL = 0.5

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

# Resolution limits are solved in full only for parameters whose relative
# uncertainty from the noise model exceeds this (half the 1/3 threshold).
_RESOLUTION_SOLVE = 1.0 / 6.0

# Pole count of the simplest rational model of each family's form.
_SIMPLE_POLES = {"inductor": 2, "capacitor": 0}

_PRIOR_KEY = {"inductor": "R_s", "capacitor": "ESR"}


class ParameterMap(Mapping):
    """An immutable, picklable mapping of parameter key to `Estimate`.

    Parameters
    ----------
    items : iterable of (str, Estimate)
        The entries, in the circuit's order.
    """

    __slots__ = ("_items", "_index")

    def __init__(self, items=()):
        items = tuple((str(k), v) for k, v in items)
        object.__setattr__(self, "_items", items)
        object.__setattr__(self, "_index", {k: i for i, (k, _) in enumerate(items)})

    def __setattr__(self, name, value):
        raise AttributeError("ParameterMap is immutable")

    def __getitem__(self, key):
        return self._items[self._index[key]][1]

    def __iter__(self):
        return (k for k, _ in self._items)

    def __len__(self):
        return len(self._items)

    def __repr__(self):
        return f"ParameterMap({dict(self._items)!r})"

    def __reduce__(self):
        return (ParameterMap, (self._items,))

    def values_si(self) -> dict:
        """Return ``{key: value}`` in SI units (what `circuit_impedance` takes)."""
        return {k: v.value for k, v in self._items}


@dataclass(frozen=True)
class Candidate:
    """One circuit that was fitted while choosing the model.

    Attributes
    ----------
    topology : str
        The circuit.
    n_params : int
        Its number of parameters.
    bic : float
        Its Bayesian information criterion on the fitted points.
    rms_normalized_residual : float
        RMS of the normalised residual.
    chosen : bool
        Whether it is the reported circuit.
    """

    topology: str
    n_params: int
    bic: float
    rms_normalized_residual: float
    chosen: bool = False

    def to_dict(self) -> dict:
        """Return the JSON object of the candidate."""
        return {
            "topology": self.topology, "n_params": int(self.n_params), "bic": _num(self.bic),
            "rms_normalized_residual": _num(self.rms_normalized_residual), "chosen": bool(self.chosen),
        }


@dataclass(frozen=True)
class FitQuality:
    """How well the reported model describes the sweep.

    Attributes
    ----------
    rms_normalized_residual : float
        RMS over the fitted points of ``|Z_model - Z| / sigma`` (taken on S
        for analyser data, see `domain`): about 1 when only noise is left.
    points : int
        Number of points the reported model was fitted to.
    f_min_hz, f_max_hz : float
        The band of the sweep.
    valid_band_hz : tuple of float
        The band where the model's residual is within the noise.
    fitted_band_hz : tuple of float
        The band the reported values were fitted over.
    reduced_chi_square : float
        Chi-square per degree of freedom of the fit.
    domain : {'S', 'Z'}
        Whether residuals were taken on the measured S-parameter or on Z.
    criterion : str
        The model-choice criterion (``"BIC"``).
    rational_rms_normalized_residual : float or None
        The same RMS for the rational model over the full band.
    rational_poles : int or None
        Its number of poles (besides an origin pole).
    worse_than_rational : bool
        Whether the circuit describes the full band worse than the rational
        model by the criterion.
    starts : int
        Starting points ranked for the refinement of the reported circuit.
    """

    rms_normalized_residual: float
    points: int
    f_min_hz: float
    f_max_hz: float
    valid_band_hz: tuple
    fitted_band_hz: tuple
    reduced_chi_square: float
    domain: str
    criterion: str = "BIC"
    rational_rms_normalized_residual: float | None = None
    rational_poles: int | None = None
    worse_than_rational: bool = False
    starts: int = 0

    def to_dict(self) -> dict:
        """Return the ``fit`` object of the JSON contract."""
        return {
            "rms_normalized_residual": _num(self.rms_normalized_residual),
            "points": int(self.points),
            "f_min_hz": float(self.f_min_hz),
            "f_max_hz": float(self.f_max_hz),
            "valid_band_hz": [_num(self.valid_band_hz[0]), _num(self.valid_band_hz[1])],
            "fitted_band_hz": [_num(self.fitted_band_hz[0]), _num(self.fitted_band_hz[1])],
            "reduced_chi_square": _num(self.reduced_chi_square),
            "domain": self.domain,
            "criterion": self.criterion,
            "rational_rms_normalized_residual": _num(self.rational_rms_normalized_residual),
            "rational_poles": None if self.rational_poles is None else int(self.rational_poles),
            "worse_than_rational": bool(self.worse_than_rational),
            "starts": int(self.starts),
        }


@dataclass(frozen=True)
class Identification:
    """The result of `identify`.

    Attributes
    ----------
    sweep : Sweep
        The measurement.
    model : {'inductor', 'capacitor', 'rational'}
        The model reported.
    topology : str
        The circuit's descriptive name (or ``"rational model with N poles"``).
    parameters : ParameterMap
        Key -> `Estimate` (empty for the rational model).
    rational : RationalModel or None
        The vector-fitting model of the full band (None only if it failed).
    srf : SRF
        The self-resonant frequency and where it lies.
    fit : FitQuality
        Residuals, points, band, valid band.
    spot : tuple of SpotReadout
        Readouts at the frequencies asked for.
    warnings : tuple of str
        What the user should know about this result.
    figures : Figures
        Q peak, ESR, D, |Z| at resonance.
    curves : Curves or None
        Q(f), ESR(f), D(f) on a log grid over the band, measured and model.
    candidates : tuple of Candidate
        The circuits compared while choosing the model.
    correlation : numpy.ndarray or None
        Correlation matrix of the parameters, in `parameters` order.
    rdc : Estimate or None
        The measured DC resistance that constrained R_s or ESR.
    refinement : Refinement or None
        The circuit fit itself (values, log-covariance), for further use.
    """

    sweep: object
    model: str
    topology: str
    parameters: ParameterMap
    rational: object
    srf: SRF
    fit: FitQuality
    spot: tuple = ()
    warnings: tuple = ()
    figures: Figures = Figures()
    curves: object = None
    candidates: tuple = ()
    correlation: np.ndarray | None = None
    rdc: Estimate | None = None
    refinement: object = None

    def __post_init__(self):
        if self.correlation is not None:
            c = np.array(self.correlation, float)
            c.flags.writeable = False
            object.__setattr__(self, "correlation", c)

    @property
    def circuit(self):
        """The fitted `Circuit`, or None for the rational model."""
        return None if self.refinement is None else self.refinement.circuit

    def impedance(self, f_hz) -> np.ndarray:
        """Return the reported model's impedance (ohm) at `f_hz`.

        The equivalent circuit's, or the rational model's when ``model`` is
        ``"rational"``.

        Parameters
        ----------
        f_hz : array_like
            Frequencies in Hz.
        """
        f = np.asarray(f_hz, dtype=float)
        if self.refinement is not None:
            return self.refinement.impedance(f)
        return self.rational.impedance(f)

    def measured_impedance(self, f_hz) -> np.ndarray:
        """Return the rational model's impedance: the measured part, smoothed.

        Parameters
        ----------
        f_hz : array_like
            Frequencies in Hz.
        """
        if self.rational is None:
            return self.impedance(f_hz)
        return self.rational.impedance(np.asarray(f_hz, dtype=float))

    def q_measured(self, f_hz) -> np.ndarray:
        """Return the measured Q, ``|X| / R``, at `f_hz` (from the rational model).

        Parameters
        ----------
        f_hz : array_like
            Frequencies in Hz.
        """
        z = self.measured_impedance(f_hz)
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.abs(z.imag) / z.real

    def q_model(self, f_hz) -> np.ndarray | None:
        """Return the inductor model's ``omega L / R_s`` at `f_hz` (None otherwise).

        Parameters
        ----------
        f_hz : array_like
            Frequencies in Hz.
        """
        if self.model != "inductor":
            return None
        return self.circuit.model_q(self.refinement.values, np.asarray(f_hz, dtype=float))

    def esr(self, f_hz) -> np.ndarray:
        """Return ESR(f) = Re Z of the measured part (rational model), ohm.

        Parameters
        ----------
        f_hz : array_like
            Frequencies in Hz.
        """
        return self.measured_impedance(f_hz).real

    def dissipation(self, f_hz) -> np.ndarray:
        """Return the measured D(f) = ``R / |X|`` (rational model).

        Parameters
        ----------
        f_hz : array_like
            Frequencies in Hz.
        """
        z = self.measured_impedance(f_hz)
        with np.errstate(divide="ignore", invalid="ignore"):
            return z.real / np.abs(z.imag)

    def dissipation_model(self, f_hz) -> np.ndarray | None:
        """Return the capacitor model's ``omega C ESR`` at `f_hz` (None otherwise).

        Parameters
        ----------
        f_hz : array_like
            Frequencies in Hz.
        """
        if self.model != "capacitor":
            return None
        return self.circuit.model_d(self.refinement.values, np.asarray(f_hz, dtype=float))

    def normalized_residual(self) -> np.ndarray:
        """Return ``|Z_model - Z| / sigma`` of the reported model at each sweep point.

        Taken in the fit's domain (on S for analyser data), so it is what
        the fit minimised; about 1 where only noise is left.
        """
        from ..fit._lsq import Observation

        obs = Observation.from_sweep(self.sweep)
        return np.abs(obs.normalized(self.impedance(self.sweep.f_hz)))

    def to_dict(self) -> dict:
        """Return the ``zfit.identify/1`` JSON object (see docs/identify.md).

        Floats are numbers in SI units; a missing value is null, never a
        string.
        """
        from .._version import __version__

        corr = None
        if self.correlation is not None and len(self.parameters):
            corr = {
                "keys": list(self.parameters),
                "matrix": [[_num(v) for v in row] for row in self.correlation],
            }
        return {
            "schema": SCHEMA,
            "zfit_version": __version__,
            "source": str(self.sweep.source),
            "connection": self.sweep.connection,
            "model": self.model,
            "topology": self.topology,
            "parameters": {k: v.to_dict() for k, v in self.parameters.items()},
            "correlation": corr,
            "srf": self.srf.to_dict(),
            "figures": self.figures.to_dict(),
            "curves": None if self.curves is None else self.curves.to_dict(),
            "fit": self.fit.to_dict(),
            "candidates": [c.to_dict() for c in self.candidates],
            "rational": _rational_dict(self.rational),
            "rdc": None if self.rdc is None else self.rdc.to_dict(),
            "spot": [s.to_dict() for s in self.spot],
            "warnings": list(self.warnings),
            "notes": list(self.sweep.notes),
        }


def _rational_dict(rm):
    if rm is None:
        return None
    poles = np.asarray(rm.poles, complex)
    res = np.asarray(rm.residues, complex)
    return {
        "poles_rad_per_s": [[float(p.real), float(p.imag)] for p in poles],
        "residues": [[float(r.real), float(r.imag)] for r in res],
        "constant_ohm": float(rm.constant),
        "proportional_h": float(rm.proportional),
        "origin_residue": float(rm.origin_residue),
        "rms_normalized_residual": _num(getattr(rm, "rms_normalized_residual", None)),
        "passive": bool(_passive(rm)),
    }


def _passive(rm) -> bool:
    try:
        return bool(rm.is_passive)
    except (AttributeError, ValueError, ArithmeticError):
        return True


def _bic(chi2: float, rows: int, k: int) -> float:
    """Schwarz's criterion for Gaussian residuals with a common unknown scale.

    ``n ln(chi2 / n) + k ln n`` (Schwarz 1978): the noise level is taken from
    the data rather than trusted blindly, so a noise model that is off by a
    constant factor does not bias the choice.
    """
    return rows * math.log(max(chi2, 1e-300) / rows) + k * math.log(rows)


def _run_length_band(ok):
    """Return (start, stop) indices of the longest run of True in `ok`."""
    best = (0, 0)
    n = ok.size
    if n == 0:
        return best
    d = np.diff(np.concatenate([[0], ok.astype(np.int8), [0]]))
    starts, stops = np.flatnonzero(d == 1), np.flatnonzero(d == -1)
    if starts.size == 0:
        return best
    i = int(np.argmax(stops - starts))
    return int(starts[i]), int(stops[i])


def _window_mean(e, w):
    c = np.concatenate([[0.0], np.cumsum(e)])
    n = e.size
    h = w // 2
    lo = np.clip(np.arange(n) - h, 0, n)
    hi = np.clip(np.arange(n) + h + 1, 0, n)
    return (c[hi] - c[lo]) / (hi - lo), hi - lo


def valid_mask(e_circuit, e_rational=None) -> np.ndarray:
    """Return the points where a circuit's residual is within the noise.

    Over a sliding window of ``max(9, N/25)`` points the mean squared
    normalised residual of the circuit is compared with the noise level
    (1, or the rational model's own level where that is higher: a noise
    model that is too optimistic is then not held against the circuit).
    A point passes when the circuit's window mean is below
    ``level * (1 + 5 / sqrt(w))``: the mean of w unit-mean exponential
    terms has a standard deviation of ``1 / sqrt(w)``, so a right model fails
    a window only by a five-sigma fluctuation.

    Parameters
    ----------
    e_circuit : array_like
        ``|normalised residual|^2`` of the circuit at each point.
    e_rational : array_like, optional
        The same for the rational model.
    """
    e = np.asarray(e_circuit, float)
    n = e.size
    w = max(9, n // 25)
    if w % 2 == 0:
        w += 1
    mc, cnt = _window_mean(e, w)
    level = np.ones(n)
    if e_rational is not None:
        mr, _ = _window_mean(np.asarray(e_rational, float), w)
        level = np.maximum(level, mr)
    return mc <= level * (1.0 + 5.0 / np.sqrt(cnt))


def _looks_capacitive(sweep) -> bool:
    # Reactance at the bottom of the band: negative for a capacitor below its
    # SRF (and for an inductor measured only above its SRF, which the model
    # choice then sorts out).
    n = max(3, sweep.n_points // 20)
    return bool(np.median(sweep.z_ohm[:n].imag) < 0)


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
    from ..fit import _vectfit

    # Relocations per pole count: 15 (vector fitting's default is 30).  Where the
    # poles still move after 15 (noise-dominated points, a pole count too large)
    # more relocations cost far more time than they gain accuracy, and the
    # model is refitted from its own poles after the circuit fit anyway.
    extra = {"n_iter": 15} if initial_poles is None else {"initial_poles": initial_poles, "n_iter": n_iter or 8}
    fit = getattr(_vectfit, "fit_impedance", None)
    if fit is not None:
        return fit(sweep.f_hz, sweep.z_ohm, sweep.sigma_ohm, kind=kind, n_poles=n_poles, **extra)
    opts = {"inductor": dict(constant=False, proportional=False, origin_pole=False),
            "capacitor": dict(constant=True, proportional=True, origin_pole=True),
            "general": dict(constant=True, proportional=True, origin_pole=False)}[kind]
    return _vectfit.vector_fit(sweep.f_hz, sweep.z_ohm, sweep.sigma_ohm, n_poles, **opts, **extra)


def _second_order_sigma(sweep):
    """The sweep with the second-order error of the S-to-Z conversion added to sigma.

    Z = g(S) with g a Moebius map: where the analyser noise is comparable to
    the distance of S from the pole of g (relative uncertainty
    ``rho = sigma / |Z|`` near 1 or above), the measured Z carries an error
    of order ``rho * sigma`` beyond the first-order sigma; it is added in
    quadrature, ``sigma * sqrt(1 + rho^2)``, for the rational fit on Z only
    (the circuits are fitted on S, where the noise is Gaussian).
    """
    import dataclasses

    rho = sweep.sigma_ohm / np.abs(sweep.z_ohm)
    if not np.any(rho > 0.1):
        return sweep
    return dataclasses.replace(sweep, sigma_ohm=sweep.sigma_ohm * np.sqrt(1.0 + rho**2))


def _at_noise(e) -> bool:
    """Whether squared normalised residuals average to the noise (within 5 sigma of their mean)."""
    n = max(int(np.size(e)), 1)
    return float(np.mean(e)) <= 1.0 + 5.0 / math.sqrt(n)


def _reweighted_rational(sweep, ref, kind, n_poles, inside, rational):
    """The rational model refitted with sigma at the circuit's S (where `inside`), if that matters."""
    from ..data._connection import dz_ds, s_from_impedance

    s_model = s_from_impedance(ref.impedance(sweep.f_hz), sweep.connection, sweep.reference_ohm)
    with np.errstate(all="ignore"):
        sig_model = np.abs(dz_ds(s_model, sweep.connection, sweep.reference_ohm)) * sweep.noise.sigma(s_model)
    sig_model = np.where(inside, sig_model, 0.0)
    base_sig = _second_order_sigma(sweep).sigma_ohm
    sig = np.fmax(base_sig, np.where(np.isfinite(sig_model), sig_model, np.inf))
    sig = np.where(np.isfinite(sig), sig, 1e6 * np.max(sweep.sigma_ohm))
    if not np.any(sig > 1.5 * sweep.sigma_ohm):
        return None
    import dataclasses

    try:
        # From the first model's poles: the same count, and few relocations.
        poles = np.asarray(rational.poles)
        return _rational_fit(
            dataclasses.replace(sweep, sigma_ohm=sig), kind, None, initial_poles=poles if poles.size else None
        )
    except FitError:
        return None


def _rational_k(rm) -> int:
    n_points = int(getattr(rm, "n_points", 0) or 0)
    dof = int(getattr(rm, "dof", 0) or 0)
    if n_points and dof:
        return 2 * n_points - dof
    extra = int(bool(rm.constant)) + int(bool(rm.proportional)) + int(bool(rm.origin_residue))
    return 2 * len(rm.poles) + extra


def _n_poles(rm) -> int:
    return int(len(rm.poles))


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


def _summary(ref, rows):
    return _bic(ref.chi2, rows, ref.circuit.n_params)


def _estimates(ref, sweep=None, mask=None):
    """The parameters of a fit with their uncertainties and, given the sweep, their resolution."""
    from ._merit import ParameterEstimate
    from ..fit._fisher import RESOLUTION_KIND

    stds = ref.stds
    limits = {} if sweep is None else resolution_limits_of(ref, sweep, mask)
    return ParameterMap(
        (k, ParameterEstimate(
            float(v), float(s) if math.isfinite(s) else None, ref.circuit.units[k],
            resolved=limits.get(k, (True, None))[0], resolution_limit=limits.get(k, (True, None))[1],
            limit_kind=RESOLUTION_KIND.get(k, "lower"),
        ))
        for k, v, s in zip(ref.circuit.keys, ref.values, stds)
    )


def resolution_limits_of(ref, sweep, mask=None) -> dict:
    """Return ``{key: (resolved, limit)}`` for each parameter of a circuit fit.

    The resolution limit is that of `zfit.fit._fisher` (the value at which
    the parameter's relative uncertainty, predicted from the Fisher
    information of the sweep's noise model with the noise following the
    value, is 1/3; an upper limit for R_p and R_leak).  Solving for it costs
    several Fisher evaluations per parameter, so it is solved only where it
    matters: for a parameter whose relative uncertainty from the noise model
    (the fit's covariance without the reduced chi-square factor) exceeds
    `_RESOLUTION_SOLVE` (half the threshold).  A parameter below that is
    resolved by a wide margin and gets no limit (None): a first-order guess
    such as ``3 std`` would be wrong by decades for L or C, whose noise
    follows the value through the connection (measured: 1e-12 H against
    2e-11 H for a 100 nH coil in reflection), and solving costs more than
    the whole identification.

    Parameters
    ----------
    ref : Refinement
        The reported circuit fit.
    sweep : Sweep
        The measurement (frequencies, sigma, connection, noise model).
    mask : array_like of bool, optional
        The points the circuit was fitted to (all by default).
    """
    from ..fit._fisher import is_resolved, limits_for

    circuit = ref.circuit
    values = np.asarray(ref.values, float)
    red = ref.reduced_chi2 if math.isfinite(ref.reduced_chi2) and ref.reduced_chi2 > 0 else 1.0
    with np.errstate(all="ignore"):
        rel = np.sqrt(np.clip(np.diag(ref.log_cov), 0.0, None) / red)
    # Solving for a limit costs more than the whole identification: only for
    # the parameters whose uncertainty comes near it.
    needed = [key for i, key in enumerate(circuit.keys) if not (math.isfinite(rel[i]) and rel[i] < _RESOLUTION_SOLVE)]
    limits = {}
    sel = slice(None) if mask is None else np.asarray(mask, bool)
    for key in needed:
        try:
            limits.update(limits_for(
                circuit.family, circuit.mapping(values), np.asarray(sweep.f_hz, float)[sel],
                np.asarray(sweep.sigma_ohm, float)[sel], sweep.connection, sweep.reference_ohm, sweep.noise,
                keys=(key,),
            ))
        except (ValueError, ArithmeticError, np.linalg.LinAlgError):
            pass  # no limit for this parameter: reported as null
    out = {}
    for i, key in enumerate(circuit.keys):
        limit = limits.get(key)
        if limit is not None and not (math.isfinite(limit) and limit > 0):
            limit = None
        out[key] = (bool(is_resolved(key, float(values[i]), limit)), None if limit is None else float(limit))
    return out


def _correlation(ref):
    c = ref.log_cov
    d = np.sqrt(np.clip(np.diag(c), 1e-300, None))
    corr = c / np.outer(d, d)
    return np.clip(corr, -1.0, 1.0)


def identify(
    sweep,
    model: str = "auto",
    at=(),
    *,
    rdc: float | None = None,
    rdc_std: float | None = None,
    n_poles: int | None = None,
    margin: float = BIC_MARGIN,
) -> Identification:
    """Return the equivalent circuit of a part with uncertainties, SRF, Q and D.

    Parameters
    ----------
    sweep : Sweep
        The measured impedance with its per-point uncertainty.
    model : {'auto', 'inductor', 'capacitor', 'rational'}
        ``auto`` chooses the family by the BIC and adds the optional element
        (R_p, R_leak) only when it lowers the BIC by more than `margin`;
        ``inductor`` / ``capacitor`` fix the family (the optional element is
        still chosen); ``rational`` reports the vector-fitting model alone.
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
    from ._merit import MeasuredReader, curves_of, figures_of, spot_readout, srf_of_circuit, srf_of_rational
    from ..fit._lsq import Observation, Prior, refine

    if model not in MODELS:
        raise ZfitInputError(f"unknown model {model!r}; use one of {', '.join(MODELS)}", sweep.source)
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

    notes = []
    band = sweep.band_hz
    obs = Observation.from_sweep(sweep)
    rows_full = 2 * sweep.n_points

    # 1. The rational model of the full band.
    kind = {"inductor": "inductor", "capacitor": "capacitor", "rational": "general"}.get(model)
    if kind is None:
        kind = "capacitor" if _looks_capacitive(sweep) else "inductor"
    scored = {}

    def rational_scores(rm):
        if rm is None:
            return None, None, None
        if id(rm) in scored and scored[id(rm)][0] is rm:
            return scored[id(rm)][1]
        e = np.abs(obs.normalized(rm.impedance(sweep.f_hz))) ** 2
        out = e, float(math.sqrt(np.mean(e))), _bic(float(2 * e.sum()), rows_full, _rational_k(rm))
        scored[id(rm)] = (rm, out)
        return out

    # The simplest rational model of the family's form first (one pole pair for
    # an inductor, only the origin pole and the constant and s terms for a
    # capacitor); the automatic pole count only when that one does not describe
    # the measurement within the noise, judged in the fit's own domain (on S for
    # analyser data, where the Z-domain residual of vector fitting overstates
    # the misfit of points in the analyser's noise).
    rational = None
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
            if rational is not None and rational_scores(rational)[1] > tol:
                rational = None
        if rational is None:
            rational = _rational_fit(rm_sweep, kind, n_poles)
    except FitError as exc:
        if model == "rational":
            raise
        notes.append(f"no rational model of the sweep ({exc}); figures are read from the circuit")
    e_rat, rat_rms, bic_rat = rational_scores(rational)

    if model == "rational":
        if rdc is not None:
            notes.append("--rdc does not apply to the rational model; ignored")
        srf = srf_of_rational(rational, band)
        reader = MeasuredReader(band, rational=rational)
        spots = tuple(spot_readout(x, reader) for x in at)
        for s in spots:
            if not s.in_band:
                notes.append(f"spot readout at {format_eng(s.f_hz, 'Hz')} is outside the band: the rational model is extrapolated")
        k = _rational_k(rational)
        fit = FitQuality(
            rms_normalized_residual=rat_rms, points=sweep.n_points, f_min_hz=band[0], f_max_hz=band[1],
            valid_band_hz=band, fitted_band_hz=band,
            reduced_chi_square=float(2 * e_rat.sum() / max(rows_full - k, 1)),
            domain="S" if obs.on_s else "Z", rational_rms_normalized_residual=rat_rms,
            rational_poles=_n_poles(rational),
        )
        return _finish(Identification(
            sweep=sweep, model="rational", topology=f"rational model with {_n_poles(rational)} poles",
            parameters=ParameterMap(), rational=rational, srf=srf, fit=fit, spot=spots,
            figures=figures_of("rational", srf, reader), curves=curves_of(reader), rdc=None,
        ), notes)

    # 2-3. Circuits of each family, the family and the optional element by BIC.
    # The family the data look like is fitted first; the other is refined only
    # if its best starting point comes within a factor _SCREEN_START of the
    # first's fitted chi-square, and given its optional element only within
    # _SCREEN_RATIO: a circuit of the wrong family is far off and slow to converge.
    # (A capacitor with leakage and an inductor whose R_s plays the leak can
    # look alike where ESL and ESR are not resolved: then both are refined,
    # and the families are compared by the better of their two circuits.)
    likely = "capacitor" if _looks_capacitive(sweep) else "inductor"
    families = (likely, "inductor" if likely == "capacitor" else "capacitor") if model == "auto" else (model,)
    fitted, optional = {}, {}
    notes_screened = []
    best_chi2 = math.inf
    for idx, fam in enumerate(families):
        prior = None if rdc is None else Prior(_PRIOR_KEY[fam], rdc, rdc_std)
        try:
            if idx > 0 and _screened_out(fam, obs, rational, prior, best_chi2):
                notes_screened.append(fam)
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
    if not fitted:
        if rational is None:
            raise FitError(f"{sweep.source}: neither a rational model nor an equivalent circuit could be fitted")
        return _finish(identify(sweep, "rational", at, n_poles=n_poles), notes)

    def family_bic(fam):
        b = _summary(fitted[fam], rows_full)
        rf = optional[fam]
        return b if rf is None else min(b, _summary(rf, rows_full) + margin)

    # The family the data look like (sign of the low-frequency reactance) unless
    # the other describes them better by the margin: a series R-L is also a
    # capacitor with an infinite C, and such ties go to what the data look like.
    family = min(fitted, key=family_bic)
    if likely in fitted and family != likely and family_bic(family) > family_bic(likely) - margin:
        family = likely
    prior = None if rdc is None else Prior(_PRIOR_KEY[family], rdc, rdc_std)
    rb, rf = fitted[family], optional[family]
    cands = []
    for fam in fitted:
        cands.append((_summary(fitted[fam], rows_full), fitted[fam]))
        if optional[fam] is not None:
            cands.append((_summary(optional[fam], rows_full), optional[fam]))
    chosen = rb
    if rf is not None and _summary(rf, rows_full) < _summary(rb, rows_full) - margin:
        chosen = rf

    # 4. The band where the circuit holds; refit over it when it is not the whole band.
    def residual_energy(ref):
        return np.abs(obs.normalized(ref.impedance(sweep.f_hz))) ** 2

    e_c = residual_energy(chosen)
    i0, i1 = _run_length_band(valid_mask(e_c, e_rat))
    fitted_mask = None
    k = chosen.circuit.n_params
    n = sweep.n_points
    min_pts = max(10, 4 * k + 2)
    if (i1 - i0) < 0.97 * n:
        from ..fit._circuits import circuits_of

        base, full = circuits_of(family)

        def sub_fit(circuit, mask, seed=None):
            sub = obs.subset(mask)
            starts = ([] if seed is None else [seed]) + circuit.starts(sub.f_hz, sub.z_ohm, sub.sigma_ohm, rational)
            try:
                ref = refine(circuit, sub, starts, prior=prior, n_best=2)
            except FitError:
                return None
            e = residual_energy(ref)
            return ref, e, _run_length_band(valid_mask(e, e_rat)), mask

        # Sub-bands to try: the valid run found, the band below each further
        # resonance of the rational model, the upper or lower part of the band,
        # and the widest band from either end found by bisection.
        logf = np.log(sweep.f_hz)
        span = logf[-1] - logf[0]
        masks = []
        if i1 - i0 >= min_pts:
            m = np.zeros(n, bool)
            m[i0:i1] = True
            masks.append(m)
        if rational is not None:
            fr = np.sort(np.abs(np.asarray(rational.poles)[np.asarray(rational.poles).imag > 0])) / (2 * math.pi)
            fr = fr[(fr > band[0]) & (fr < band[1])]
            for fa, fb in zip(fr[:-1], fr[1:]):
                masks.append(sweep.f_hz <= math.sqrt(fa * fb))
        for frac in (0.75, 0.5):
            masks.append(logf <= logf[0] + frac * span)
            masks.append(logf >= logf[-1] - frac * span)
        best = None

        def consider(got):
            nonlocal best
            if got is not None and (best is None or (got[2][1] - got[2][0], got[3].sum()) > (best[2][1] - best[2][0], best[3].sum())):
                best = got

        for m in masks:
            if m.sum() >= min_pts:
                consider(sub_fit(base, m))
        # The widest band from either end over which the circuit, fitted
        # there, stays within the noise: a bisection on the other end.
        for from_bottom in (True, False):
            good, lo_n, hi_n = None, min_pts, n - 1
            while hi_n - lo_n > max(2, n // 64):
                mid = (lo_n + hi_n) // 2
                m = np.zeros(n, bool)
                if from_bottom:
                    m[:mid] = True
                else:
                    m[n - mid:] = True
                got = sub_fit(chosen.circuit, m)
                if got is not None and valid_mask(got[1], e_rat)[m].mean() >= 0.97:
                    good, lo_n = got, mid
                else:
                    hi_n = mid
            consider(good)
        if best is not None and (best[2][1] - best[2][0]) > (i1 - i0):
            # Refit over the valid run found, and decide the optional element there.
            j0, j1 = best[2]
            m = np.zeros(n, bool)
            m[j0:j1] = True
            if m.sum() >= min_pts:
                got_b = sub_fit(base, m, best[0].values) or best
                got_f = sub_fit(full, m, np.append(got_b[0].values, np.max(np.abs(sweep.z_ohm)) * 10)
                                if family == "inductor" else None)
                pick = got_b
                if got_f is not None:
                    rows_m = 2 * int(m.sum())
                    if _summary(got_f[0], rows_m) < _summary(got_b[0], rows_m) - margin:
                        pick = got_f
                if (pick[2][1] - pick[2][0]) >= (best[2][1] - best[2][0]):
                    best = pick
            chosen, e_c, (i0, i1), fitted_mask = best
            k = chosen.circuit.n_params
    if i1 <= i0:
        i0, i1 = 0, 0
    # The rational model again, weighted with the analyser noise at the circuit's
    # impedance where that is larger than at the measured one, inside the band
    # where the circuit holds: where the part's impedance sits in the analyser's
    # noise (1 - S within the noise) the measured Z is biased and its
    # first-order sigma far too small, and those points would otherwise distort
    # the whole rational model.  Kept only if it describes the measured S better.
    inside = np.zeros(sweep.n_points, bool)
    inside[i0:i1] = True
    if rational is not None and obs.on_s and i1 > i0 and not _at_noise(e_rat[inside]):
        refit_rm = _reweighted_rational(sweep, chosen, kind, n_poles, inside, rational)
        if refit_rm is not None:
            scores = rational_scores(refit_rm)
            if scores[1] <= rat_rms * 1.02:
                rational = refit_rm
                e_rat, rat_rms, bic_rat = scores

    valid_band = (float(sweep.f_hz[i0]), float(sweep.f_hz[max(i1 - 1, i0)])) if i1 > i0 else (math.nan, math.nan)
    fitted_band = band if fitted_mask is None else (float(sweep.f_hz[fitted_mask][0]), float(sweep.f_hz[fitted_mask][-1]))
    bic_c_full = _bic(float(2 * e_c.sum()), rows_full, k)
    worse = bic_rat is not None and bic_c_full > bic_rat + margin
    if model == "auto" and rational is not None and (i1 - i0) < max(10, 0.25 * sweep.n_points):
        notes.append(
            f"no equivalent circuit describes this part: the best, {chosen.circuit.topology}, is within the noise "
            f"over {i1 - i0} of {sweep.n_points} points only; the rational model is reported"
        )
        res = identify(sweep, "rational", at, n_poles=n_poles)
        return _finish(res, notes)
    if worse:
        rms_full = float(math.sqrt(np.mean(e_c)))
        if i1 <= i0:
            notes.append(
                f"the {chosen.circuit.topology} does not describe the data to within the noise anywhere in the band "
                f"(normalised RMS residual {format_eng(rms_full, '', 3)}, rational model {format_eng(rat_rms, '', 3)}); its values are not reliable"
            )
        elif fitted_mask is not None or (i1 - i0) < sweep.n_points:
            notes.append(
                f"the {chosen.circuit.topology} describes the data to within the noise only from "
                f"{format_eng(valid_band[0], 'Hz')} to {format_eng(valid_band[1], 'Hz')} (normalised RMS residual {format_eng(rms_full, '', 3)} over the "
                f"full band, rational model {format_eng(rat_rms, '', 3)}); the rational model describes the full band"
            )
        else:
            notes.append(
                f"the {chosen.circuit.topology} fits worse than the rational model (normalised RMS residual "
                f"{format_eng(rms_full, '', 3)} against {format_eng(rat_rms, '', 3)}); its values carry a model error beyond the noise"
            )

    # 5. Figures.
    est = _estimates(chosen, sweep, fitted_mask)
    for key, e in est.items():
        hint = " (a four-wire --rdc measurement can pin it)" if key in ("R_s", "ESR") and rdc is None else ""
        text = e.unresolved_text()
        if text is not None:
            notes.append(f"{key}: {text} (where its relative uncertainty from the noise model reaches 1/3); "
                         f"the fitted value is only noise{hint}")
        elif e.std is None or not (e.std <= UNRESOLVED_REL * abs(e.value)):
            if e.std is None:
                rel = "unknown"
            elif e.std > 10 * abs(e.value):
                rel = "more than ten times the value"
            else:
                rel = f"{100 * e.std / abs(e.value):.0f} %"
            notes.append(f"{key} is not resolved by this sweep (relative uncertainty {rel}){hint}")
    if prior is not None and chosen.prior_pull is not None and abs(chosen.prior_pull) > 3.0:
        notes.append(
            f"the DC resistance given ({format_eng(rdc, 'ohm')}) and the sweep disagree: the fitted {prior.key} is "
            f"{chosen.prior_pull:+.1f} standard uncertainties from it (skin effect or a different part?)"
        )
    srf = srf_of_circuit(chosen, band)
    reader = MeasuredReader(
        band, rational=rational, refinement=chosen,
        circuit_band=valid_band if (obs.on_s and i1 > i0) else None,
    )
    spots = tuple(spot_readout(x, reader) for x in at)
    for s in spots:
        if not s.in_band:
            notes.append(f"spot readout at {format_eng(s.f_hz, 'Hz')} is outside the band: extrapolated from the circuit")
    # Figures read from the circuit inside its valid band are the measured part to within the noise.
    figures = figures_of(family, srf, reader)
    n_fit = sweep.n_points if fitted_mask is None else int(fitted_mask.sum())
    fit = FitQuality(
        rms_normalized_residual=chosen.rms_normalized_residual, points=n_fit, f_min_hz=band[0], f_max_hz=band[1],
        valid_band_hz=valid_band, fitted_band_hz=fitted_band, reduced_chi_square=chosen.reduced_chi2,
        domain="S" if obs.on_s else "Z", rational_rms_normalized_residual=rat_rms,
        rational_poles=None if rational is None else _n_poles(rational), worse_than_rational=bool(worse),
        starts=chosen.starts,
    )
    candidates = tuple(
        Candidate(ref.circuit.topology, ref.circuit.n_params, b, ref.rms_normalized_residual,
                  chosen=(ref.circuit == chosen.circuit))
        for b, ref in cands
    )
    result = Identification(
        sweep=sweep, model=family, topology=chosen.circuit.topology, parameters=est, rational=rational,
        srf=srf, fit=fit, spot=spots, figures=figures, curves=curves_of(reader), candidates=candidates,
        correlation=_correlation(chosen), rdc=None if rdc is None else Estimate(rdc, rdc_std, "ohm"),
        refinement=chosen,
    )
    # A flat resistive floor of a shunt-thru capacitor is the cable-shield ground loop, not ESR.
    from ..fit._fisher import ground_loop_warning

    loop = ground_loop_warning(sweep, result)
    if loop is not None:
        notes.append(loop)
    return _finish(result, notes)


def _finish(result: Identification, notes) -> Identification:
    """Attach the new warnings to the result and raise them as MeasurementWarning."""
    import dataclasses

    new = tuple(notes)
    for text in new:
        warnings.warn(f"{result.sweep.source}: {text}" if result.sweep.source else text, MeasurementWarning, stacklevel=3)
    return dataclasses.replace(result, warnings=tuple(new) + tuple(result.warnings))

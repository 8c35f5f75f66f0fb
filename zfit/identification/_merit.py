"""The figures engineers quote: SRF, Q, ESR, D, |Z| at resonance, spot readouts.

Definitions (stated with every number, because users compare them):

* self-resonant frequency (SRF): where the reactance X = Im Z crosses zero;
  for the inductor circuit ``omega^2 = 1/(L C_p) - (R_s/L)^2``, for the
  capacitor ``omega^2 = 1/(ESL C)`` (minus ``1/(R_leak C)^2`` with leakage);
* measured Q: ``|X| / R`` of the part's impedance (read from the rational
  model, which follows the data to within the noise); the model Q:
  ``omega L / R_s`` of the series branch of the inductor circuit.  They agree
  well below resonance and differ near it, where C_p takes over;
* ESR(f): ``Re Z`` of the part; D(f) = ``tan(delta) = R / |X|`` of the part
  (measured), ``omega C ESR`` of the capacitor circuit (model), the handbook
  definition for a capacitor with series loss;
* effective inductance and capacitance at a frequency: ``L_eff = X / omega``,
  ``C_eff = -1 / (omega X)``.

Uncertainties of figures read from the rational model come from its
covariance (with the poles' own uncertainty, where the vector-fitting model
provides it); those of circuit figures from the circuit's covariance by
first-order propagation (JCGM 100:2008, 5.1.2).

References
----------
.. [1] C. Bowick, *RF Circuit Design*, 2nd ed., Newnes, 2008, ch. 1 (Q of
   real inductors, self-resonance).
.. [2] IEC 60384-1:2021, *Fixed capacitors for use in electronic equipment --
   Part 1: Generic specification*, tangent of loss angle (from memory: the
   definition D = ESR / |X_C| = omega C ESR).
.. [3] JCGM 100:2008, *Guide to the expression of uncertainty in
   measurement*, section 5.1.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from typing import TYPE_CHECKING

import numpy as np

if TYPE_CHECKING:
    from ..fit._lsq import Refinement
    from ..fit._vectfit import RationalModel

__all__ = [
    "Estimate",
    "ParameterEstimate",
    "Merit",
    "SRF",
    "SpotReadout",
    "Merits",
    "srf_of_circuit",
    "srf_of_rational",
    "rational_reading",
    "spot_readout",
    "ModelEvaluator",
    "merits_of",
    "Curves",
    "curves_of",
    "Q_MEASURED",
    "Q_MODEL",
    "D_MEASURED",
    "D_MODEL",
    "ESR_MEASURED",
]

_TWO_PI = 2.0 * math.pi

#: Definitions printed next to each figure.
# The figures of this module are read from a model (the circuit in its valid
# band, the rational model elsewhere); the measurement's own are in
# `_measured_report` and say so.
Q_MEASURED = "|X|/R of the model of the measured impedance"
Q_MODEL = "omega L / R_s of the equivalent circuit"
D_MEASURED = "R/|X| of the model of the measured impedance"
D_MODEL = "omega C ESR (+ 1/(omega C R_leak)) of the equivalent circuit"
ESR_MEASURED = "Re Z of the model of the measured impedance"


def _num(x):
    if x is None:
        return None
    x = float(x)
    return x if math.isfinite(x) else None


@dataclass(frozen=True)
class Estimate:
    """A value with its standard uncertainty and unit.

    Attributes
    ----------
    value : float
        The estimate in SI units.
    std : float or None
        Its standard uncertainty (None when it cannot be given).
    unit : str
        ``"H"``, ``"F"``, ``"ohm"``, ``"Hz"``, ``"deg"`` or ``""``.
    """

    value: float
    std: float | None
    unit: str = ""

    def to_dict(self) -> dict:
        """Return ``{"value": float, "std": float|null, "unit": str}``."""
        return {"value": _num(self.value), "std": _num(self.std), "unit": self.unit}


@dataclass(frozen=True)
class ParameterEstimate(Estimate):
    """A circuit parameter: an `Estimate` and whether the sweep resolves it.

    Attributes
    ----------
    value, std, unit : float, float or None, str
        As for `Estimate`.
    resolved : bool
        Whether the value lies on the resolved side of `resolution_limit`.
    resolution_limit : float or None
        The value at which the parameter's relative uncertainty, predicted
        from the noise model, is 1/3 (`zfit.fit._fisher`): the smallest
        resolvable value, or for ``R_p`` and ``R_leak`` the largest; None
        where no such value exists.
    limit_kind : {'lower', 'upper'}
        ``"lower"``: values below the limit are not resolved; ``"upper"``
        (parallel losses): values above it.
    """

    resolved: bool = True
    resolution_limit: float | None = None
    limit_kind: str = "lower"

    def to_dict(self) -> dict:
        """Return ``{"value", "std", "unit", "resolved", "resolution_limit"}``."""
        out = Estimate.to_dict(self)
        out["resolved"] = bool(self.resolved)
        out["resolution_limit"] = _num(self.resolution_limit)
        return out

    def unresolved_text(self) -> str | None:
        """Return ``"below resolution, < X"`` (``"not resolved, > X"`` for an upper limit), or None when resolved."""
        if self.resolved or self.resolution_limit is None:
            return None
        from .._units import format_eng

        if self.limit_kind == "upper":
            return f"not resolved, > {format_eng(self.resolution_limit, self.unit)}"
        return f"below resolution, < {format_eng(self.resolution_limit, self.unit)}"


@dataclass(frozen=True)
class Merit:
    """A derived figure at a frequency, with its definition.

    Attributes
    ----------
    value : float
        The figure in SI units.
    std : float or None
        Its standard uncertainty.
    unit : str
        Its unit (``""`` for Q and D).
    f_hz : float or None
        The frequency it refers to.
    definition : str
        What was computed, in words.
    source : {'rational', 'circuit'}
        Which model it was read from.
    """

    value: float
    std: float | None
    unit: str
    f_hz: float | None
    definition: str
    source: str

    def to_dict(self) -> dict:
        """Return the JSON object of the figure."""
        return {
            "value": _num(self.value), "std": _num(self.std), "unit": self.unit,
            "f_hz": _num(self.f_hz), "definition": self.definition, "source": self.source,
        }


@dataclass(frozen=True)
class SRF:
    """The self-resonant frequency and where it lies.

    Attributes
    ----------
    value_hz : float or None
        The estimate (from the model; None when the reactance never crosses
        zero).
    std_hz : float or None
        Its standard uncertainty.
    where : {'in-band', 'above-band', 'below-band', 'none'}
        Whether the data contain it.
    bound_hz : float or None
        Outside the band, the bound the data themselves set: a lower bound
        (the top of the band) for ``above-band``, an upper bound (the bottom
        of the band) for ``below-band``; None in band or without an SRF.
    source : {'circuit', 'rational', 'measurement'}
        Where `value_hz` comes from: ``measurement`` when the model's
        resonance lies outside the band or disagrees with the sign change of
        Im Z in the data (`_measured_report.srf_with_measurement`).
    measured : MeasuredSRF or None
        The resonance read from the data (`_measured.measured_srf`).
    model_value_hz, model_std_hz : float or None
        The model's resonance, kept beside the measured one.
    model_source : str or None
        Which model that is.
    """

    value_hz: float | None
    std_hz: float | None
    where: str
    bound_hz: float | None
    source: str = "circuit"
    measured: object | None = None
    model_value_hz: float | None = None
    model_std_hz: float | None = None
    model_source: str | None = None

    def to_dict(self) -> dict:
        """Return the ``srf`` object of the JSON contract."""
        def hz(value, std):
            # The {value, std, unit} shape of every value with an uncertainty (issue 15).
            return None if _num(value) is None else {"value": _num(value), "std": _num(std), "unit": "Hz"}

        out = {
            "value_hz": _num(self.value_hz), "std_hz": _num(self.std_hz), "where": self.where,
            "bound_hz": _num(self.bound_hz), "source": self.source, "frequency": hz(self.value_hz, self.std_hz),
        }
        m = self.measured
        if m is not None:
            out["model_value_hz"] = _num(self.model_value_hz)
            out["model_std_hz"] = _num(self.model_std_hz)
            out["model_source"] = self.model_source
            out["model_frequency"] = hz(self.model_value_hz, self.model_std_hz)
            out["measured"] = {
                "frequency": hz(m.value_hz, m.std_hz),
                "value_hz": _num(m.value_hz), "std_hz": _num(m.std_hz), "kind": m.kind, "in_band": bool(m.in_band),
                "lower_bound_hz": _num(m.lower_bound_hz), "rejected_hz": [float(x) for x in m.rejected_hz],
                "source": "measurement",
            }
        return out


@dataclass(frozen=True)
class SpotReadout:
    """Readings of the part at one frequency.

    Attributes
    ----------
    f_hz : float
        The frequency asked for.
    in_band : bool
        Whether it lies inside the measured band (outside, the values are
        the circuit's extrapolation).
    source : {'rational', 'circuit'}
        Which model the values were read from.
    R, X, Z_mag : Estimate
        Resistance, reactance and magnitude of Z in ohm.
    Z_phase_deg : Estimate
        Phase of Z in degrees.
    L_eff : Estimate
        ``X / omega`` in H (negative where the part is capacitive).
    C_eff : Estimate
        ``-1 / (omega X)`` in F (negative where the part is inductive).
    Q : Estimate
        ``|X| / R``.
    D : Estimate
        ``R / |X|``.
    """

    f_hz: float
    in_band: bool
    source: str
    R: Estimate
    X: Estimate
    Z_mag: Estimate
    Z_phase_deg: Estimate
    L_eff: Estimate
    C_eff: Estimate
    Q: Estimate
    D: Estimate

    def to_dict(self) -> dict:
        """Return one entry of the ``spot`` list of the JSON contract."""
        out = {"f_hz": float(self.f_hz), "in_band": bool(self.in_band), "source": self.source}
        for key in ("R", "X", "Z_mag", "Z_phase_deg", "L_eff", "C_eff", "Q", "D"):
            out[key] = getattr(self, key).to_dict()
        return out


@dataclass(frozen=True)
class Merits:
    """The derived figures of an identification (None where not applicable).

    Attributes
    ----------
    z_at_srf : Merit or None
        ``|Z|`` at the self-resonance: where the data contain it, the
        measured point nearest the SRF (`_measured_report.merits_with_measurement`);
        otherwise the model's value there.
    q_peak : Merit or None
        Peak of the measured Q, ``|X|/R``, below the SRF (inductors).
    q_model_at_q_peak : Merit or None
        The model's ``omega L / R_s`` at the frequency of `q_peak`.
    esr_min : Merit or None
        The smallest ESR in the band and where (capacitors).
    d_at_f_min : Merit or None
        The measured D at the lowest frequency of the band (capacitors).
    d_model_at_f_min : Merit or None
        The model's ``omega C ESR`` there.
    z_model_at_srf : Merit or None
        The model's ``|Z|`` at the SRF, when `z_at_srf` is the measured one.
    """

    z_at_srf: Merit | None = None
    q_peak: Merit | None = None
    q_model_at_q_peak: Merit | None = None
    esr_min: Merit | None = None
    d_at_f_min: Merit | None = None
    d_model_at_f_min: Merit | None = None
    z_model_at_srf: Merit | None = None

    def to_dict(self) -> dict:
        """Return the ``figures`` object of the JSON contract."""
        names = ("z_at_srf", "q_peak", "q_model_at_q_peak", "esr_min", "d_at_f_min", "d_model_at_f_min",
                 "z_model_at_srf")
        return {n: (None if getattr(self, n) is None else getattr(self, n).to_dict()) for n in names}


def _where(value, band):
    lo, hi = band
    if value is None:
        return "none", None
    if value > hi:
        return "above-band", hi
    if value < lo:
        return "below-band", lo
    return "in-band", None


def srf_of_circuit(refinement, band) -> SRF:
    """Return the SRF of a refined circuit with its propagated uncertainty.

    Parameters
    ----------
    refinement : Refinement
        The fitted circuit.
    band : tuple of float
        The measured band ``(f_min, f_max)`` in Hz.
    """
    circuit = refinement.circuit
    value = circuit.srf_hz(refinement.values)
    std = None
    if value is not None:
        std = refinement.std_of(circuit.srf_hz)
    where, bound = _where(value, band)
    return SRF(value, std, where, bound, "circuit")


def rational_reading(rational, f_hz):
    """Return (Z, cov) of the rational model: values and 2x2 covariances of (R, X).

    The poles' uncertainty is included where the model provides it.

    Parameters
    ----------
    rational : RationalModel
        The vector-fitting model.
    f_hz : array_like
        Frequencies in Hz.
    """
    f = np.atleast_1d(np.asarray(f_hz, float))
    z = rational.impedance(f)
    cov = None
    fn = getattr(rational, "impedance_covariance", None)
    if fn is not None:
        try:
            cov = np.asarray(fn(f, include_poles=True), float)
        except (TypeError, ValueError, np.linalg.LinAlgError):
            cov = None
        if cov is not None and not np.all(np.isfinite(cov)):
            cov = None
    if cov is None:
        s2 = np.asarray(rational.impedance_std(f), float) ** 2 / 2.0
        cov = np.zeros((f.size, 2, 2))
        cov[:, 0, 0] = cov[:, 1, 1] = s2
    return z, cov


def _crossings(f, x):
    """Indices i where x changes sign between f[i] and f[i+1]."""
    sgn = np.sign(x)
    return np.flatnonzero((sgn[:-1] != 0) & (sgn[:-1] != sgn[1:]))


def _refine_crossing(fn, a, b):
    from scipy.optimize import brentq

    try:
        return float(brentq(lambda lf: float(fn(np.array([math.exp(lf)]))[0]), math.log(a), math.log(b), xtol=1e-12))
    except ValueError:
        return None


def srf_of_rational(rational, band, f_hz=None) -> SRF:
    """Return the first frequency where the rational model's X crosses zero.

    Searched on the band first; when the band holds no crossing, up to a
    decade beyond each edge (an extrapolation, reported as above- or
    below-band with the band edge as the bound).

    Parameters
    ----------
    rational : RationalModel
        The vector-fitting model.
    band : tuple of float
        The measured band in Hz.
    f_hz : array_like, optional
        Frequencies to scan (default: 2000 points log-spaced over the band).
    """
    lo, hi = band
    xfn = lambda f: rational.impedance(f).imag  # noqa: E731
    grids = [
        (np.geomspace(lo, hi, 2000) if f_hz is None else np.asarray(f_hz, float), "in-band"),
        (np.geomspace(hi, 10 * hi, 400), "above-band"),
        (np.geomspace(lo / 10, lo, 400)[::-1], "below-band"),
    ]
    for grid, where in grids:
        x = xfn(grid)
        idx = _crossings(grid, x)
        if idx.size:
            i = int(idx[0])
            a, b = sorted((grid[i], grid[i + 1]))
            lf = _refine_crossing(xfn, a, b)
            if lf is None:
                continue
            f0 = math.exp(lf)
            # std of X at the crossing over the slope dX/df there.
            _, cov = rational_reading(rational, [f0])
            h = 1e-6 * f0
            slope = float((xfn(np.array([f0 + h])) - xfn(np.array([f0 - h])))[0] / (2 * h))
            std = math.sqrt(max(cov[0, 1, 1], 0.0)) / abs(slope) if slope != 0 else None
            bound = None if where == "in-band" else (hi if where == "above-band" else lo)
            return SRF(f0, std, where, bound, "rational")
    return SRF(None, None, "none", None, "rational")


def _readout(f, z, cov):
    """Readings at one frequency from Z and the 2x2 covariance of (R, X)."""
    w = _TWO_PI * f
    r, x = float(z.real), float(z.imag)
    mag = math.hypot(r, x)

    def prop(grad):
        # First order; None where the figure is singular (D at X = 0, say).
        g = np.asarray(grad, float)
        if not np.all(np.isfinite(g)):
            return None
        with np.errstate(all="ignore"):
            v = float(g @ cov @ g)
        return math.sqrt(max(v, 0.0)) if math.isfinite(v) else None

    ax = abs(x)
    sx = math.copysign(1.0, x)
    with np.errstate(all="ignore"):
        q = float(np.divide(ax, r)) if r != 0 else math.inf
        d = float(np.divide(r, ax)) if ax != 0 else math.inf
    ar = r if r != 0 else math.nan
    axs = ax if ax != 0 else math.nan
    out = dict(
        R=Estimate(r, prop([1, 0]), "ohm"),
        X=Estimate(x, prop([0, 1]), "ohm"),
        Z_mag=Estimate(mag, prop([r / mag, x / mag]) if mag > 0 else None, "ohm"),
        Z_phase_deg=Estimate(math.degrees(math.atan2(x, r)), math.degrees(prop([-x / mag**2, r / mag**2])) if mag > 0 else None, "deg"),
        L_eff=Estimate(x / w, prop([0, 1 / w]), "H"),
        C_eff=Estimate(-1.0 / (w * x) if x != 0 else math.inf, prop([0, 1.0 / (w * x * x)]) if x != 0 else None, "F"),
        Q=Estimate(q, prop([-q / ar, sx / ar]), ""),
        D=Estimate(d, prop([1 / axs, -sx * d / axs]), ""),
    )
    return out


@dataclass(frozen=True)
class ModelEvaluator:
    """Where the figures of the measured part are read from, frequency by frequency.

    Inside `circuit_band` (the band where the fitted circuit is within the
    noise) the circuit's value is read: for a sweep fitted on S it was
    fitted where the noise is Gaussian, whereas the rational model, fitted on
    Z, carries the bias of the S-to-Z conversion wherever the part's
    impedance sits in the analyser's noise; on any sweep, a rational model of
    automatic order bends away from a frequency-dependent loss near the
    band's edges (a constant loss tangent read 5 standard uncertainties low
    at 120 Hz), where a circuit within the noise does not.  Its uncertainty there is the
    circuit's plus the rational model's (covariances added): the circuit's
    alone assumes its own structure is exact, the rational model's says what
    the data near that frequency support.  Elsewhere in the band the
    rational model is read; outside the band, the circuit (an extrapolation).

    Attributes
    ----------
    band : tuple of float
        The measured band in Hz.
    rational : RationalModel or None
        The vector-fitting model.
    refinement : Refinement or None
        The fitted circuit.
    circuit_band : tuple of float or None
        Where the circuit is read in preference to the rational model.
    """

    band: tuple[float, float]
    rational: RationalModel | None = None
    refinement: Refinement | None = None
    circuit_band: tuple[float, float] | None = None

    def source(self, f_hz: float) -> str:
        """Return ``"circuit"`` or ``"rational"``: which model is read at `f_hz`.

        Parameters
        ----------
        f_hz : float
            Frequency in Hz.
        """
        lo, hi = self.band
        if self.refinement is not None:
            cb = self.circuit_band
            if cb is not None and cb[0] <= f_hz <= cb[1]:
                return "circuit"
            if self.rational is None or not lo <= f_hz <= hi:
                return "circuit"
        if self.rational is None:
            raise ValueError("a readout needs a rational model or a circuit")
        return "rational"

    def impedance(self, f_hz) -> np.ndarray:
        """Return the impedance read at each of `f_hz`.

        Parameters
        ----------
        f_hz : array_like
            Frequencies in Hz.
        """
        f = np.atleast_1d(np.asarray(f_hz, float))
        use_c = np.array([self.source(x) == "circuit" for x in f]) if f.size < 64 else self._mask(f)
        z = np.empty(f.size, complex)
        if use_c.any():
            z[use_c] = self.refinement.impedance(f[use_c])
        if (~use_c).any():
            z[~use_c] = self.rational.impedance(f[~use_c])
        return z

    def _mask(self, f):
        lo, hi = self.band
        if self.refinement is None:
            return np.zeros(f.size, bool)
        m = (f < lo) | (f > hi) if self.rational is not None else np.ones(f.size, bool)
        if self.circuit_band is not None:
            m |= (f >= self.circuit_band[0]) & (f <= self.circuit_band[1])
        return m

    def read(self, f_hz: float):
        """Return (Z, 2x2 covariance of (R, X), source) at one frequency.

        Parameters
        ----------
        f_hz : float
            Frequency in Hz.
        """
        f = float(f_hz)
        src = self.source(f)
        if src == "rational":
            z, cov = rational_reading(self.rational, [f])
            return complex(z[0]), cov[0], src
        circuit, p = self.refinement.circuit, self.refinement.values
        z = complex(circuit.impedance(p, np.array([f]))[0])
        jac = circuit.log_jacobian(p, np.array([f]))[0]
        jr = np.stack([jac.real, jac.imag])
        cov = jr @ self.refinement.log_cov @ jr.T
        lo, hi = self.band
        if self.rational is not None and lo <= f <= hi:
            cov = cov + rational_reading(self.rational, [f])[1][0]
        return z, cov, src


def spot_readout(f_hz: float, evaluator: ModelEvaluator) -> SpotReadout:
    """Return the figures at one frequency, with their uncertainties.

    Parameters
    ----------
    f_hz : float
        The frequency in Hz.
    evaluator : ModelEvaluator
        Which model to read where.
    """
    f = float(f_hz)
    lo, hi = evaluator.band
    z, cov, src = evaluator.read(f)
    return SpotReadout(f, lo <= f <= hi, src, **_readout(f, z, cov))


def _q_peak(evaluator, srf_hz, n=2000):
    lo, hi = evaluator.band
    top = hi if srf_hz is None or not (lo < srf_hz < hi) else srf_hz
    grid = np.geomspace(lo, top, n)
    z = evaluator.impedance(grid)
    ok = (z.imag > 0) & (z.real > 0)
    if not ok.any():
        return None
    q = np.where(ok, z.imag / np.where(z.real > 0, z.real, 1.0), -np.inf)
    return float(grid[int(np.argmax(q))])


def merits_of(family: str, srf: SRF, evaluator: ModelEvaluator) -> Merits:
    """Return the derived figures of an identification.

    Parameters
    ----------
    family : {'inductor', 'capacitor', 'rational'}
        The model chosen.
    srf : SRF
        The self-resonance already found.
    evaluator : ModelEvaluator
        Which model to read where.
    """
    lo, hi = evaluator.band
    refinement = evaluator.refinement
    out = {}
    if srf.value_hz is not None:
        f0 = srf.value_hz
        if srf.where == "in-band" or refinement is not None:
            sp = spot_readout(f0, evaluator)
            text = "|Z| at the SRF" + ("" if sp.in_band else " (circuit, outside the band)")
            out["z_at_srf"] = Merit(sp.Z_mag.value, sp.Z_mag.std, "ohm", f0, text, sp.source)
    if family == "inductor":
        fq = _q_peak(evaluator, srf.value_hz)
        if fq is not None:
            sp = spot_readout(fq, evaluator)
            out["q_peak"] = Merit(sp.Q.value, sp.Q.std, "", fq, Q_MEASURED, sp.source)
            if refinement is not None:
                circuit = refinement.circuit
                fn = lambda p: float(circuit.model_q(p, np.array([fq]))[0])  # noqa: E731
                out["q_model_at_q_peak"] = Merit(fn(refinement.values), refinement.std_of(fn), "", fq, Q_MODEL, "circuit")
    if family == "capacitor":
        grid = np.geomspace(lo, hi, 2000)
        i = int(np.argmin(evaluator.impedance(grid).real))
        sp = spot_readout(float(grid[i]), evaluator)
        out["esr_min"] = Merit(sp.R.value, sp.R.std, "ohm", float(grid[i]), ESR_MEASURED, sp.source)
        sp = spot_readout(lo, evaluator)
        out["d_at_f_min"] = Merit(sp.D.value, sp.D.std, "", lo, D_MEASURED, sp.source)
        if refinement is not None:
            circuit = refinement.circuit
            fn = lambda p: float(circuit.model_d(p, np.array([lo]))[0])  # noqa: E731
            out["d_model_at_f_min"] = Merit(fn(refinement.values), refinement.std_of(fn), "", lo, D_MODEL, "circuit")
    return Merits(**out)


@dataclass(frozen=True)
class Curves:
    """Q(f), ESR(f) and D(f) on a log grid over the band, measured and model.

    Attributes
    ----------
    f_hz : numpy.ndarray
        The grid (41 points, log-spaced over the band, by default).
    esr_ohm : numpy.ndarray
        ``Re Z`` of the measured impedance (see `ModelEvaluator`).
    x_ohm : numpy.ndarray
        ``Im Z`` of the measured impedance.
    q_measured : numpy.ndarray
        ``|X| / R`` of the measured impedance.
    d_measured : numpy.ndarray
        ``R / |X|`` of the measured impedance.
    q_model : numpy.ndarray or None
        ``omega L / R_s`` of the inductor circuit (None otherwise).
    d_model : numpy.ndarray or None
        ``omega C ESR (+ 1/(omega C R_leak))`` of the capacitor circuit (None otherwise).
    """

    f_hz: np.ndarray
    esr_ohm: np.ndarray
    x_ohm: np.ndarray
    q_measured: np.ndarray
    d_measured: np.ndarray
    q_model: np.ndarray | None = None
    d_model: np.ndarray | None = None

    def to_dict(self) -> dict:
        """Return the ``curves`` object of the JSON contract (lists; null where undefined)."""
        def lst(a):
            return None if a is None else [_num(v) for v in np.asarray(a, float)]

        return {
            "f_hz": lst(self.f_hz), "esr_ohm": lst(self.esr_ohm), "x_ohm": lst(self.x_ohm),
            "q_measured": lst(self.q_measured), "d_measured": lst(self.d_measured),
            "q_model": lst(self.q_model), "d_model": lst(self.d_model),
        }


def curves_of(evaluator: ModelEvaluator, n: int = 41) -> Curves:
    """Return Q(f), ESR(f), D(f) of the measured part and of the model.

    Parameters
    ----------
    evaluator : ModelEvaluator
        Which model to read where (measured curves).
    n : int
        Number of log-spaced frequencies over the band.
    """
    lo, hi = evaluator.band
    f = np.geomspace(lo, hi, n)
    z = evaluator.impedance(f)
    with np.errstate(divide="ignore", invalid="ignore"):
        q = np.where(z.real > 0, np.abs(z.imag) / z.real, np.nan)
        d = np.where(z.imag != 0, z.real / np.abs(z.imag), np.nan)
    q_model = d_model = None
    ref = evaluator.refinement
    if ref is not None:
        if ref.circuit.family == "inductor":
            q_model = ref.circuit.model_q(ref.values, f)
        else:
            d_model = ref.circuit.model_d(ref.values, f)
    return Curves(f, z.real, z.imag, q, d, q_model, d_model)

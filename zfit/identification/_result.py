"""The result of an identification and its JSON contract, ``zfit.identify/1``.

`Identification` holds what `zfit.identify` found: the circuit and its
parameter estimates (`ParameterMap`), the rational model, the SRF, the
figures of merit, the fit quality and the candidates compared; ``to_dict``
writes the ``zfit.identify/1`` object (docs/identify.md), the one place its
keys are spelled.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from functools import cached_property
from typing import TYPE_CHECKING

import numpy as np

from ._merit import SRF, Curves, Estimate, ParameterEstimate, Merits, SpotReadout, _num

if TYPE_CHECKING:
    from ..data._sweep import Sweep
    from ..fit._circuits import Circuit
    from ..fit._lsq import Refinement
    from ..fit._realisation import Realisation
    from ..fit._vectfit import RationalModel
    from ._adequacy import Adequacy
    from ._measured_report import MeasuredReadings
    from ._bead import BeadFigures
    from ._model_error import SplitBandCheck

__all__ = ["Identification", "FitQuality", "Candidate", "ModelChoice", "ParameterMap", "SCHEMA", "DEPRECATED_IDENTIFY_KEYS"]

#: Identifier of the JSON contract.
SCHEMA = "zfit.identify/1"


#: The flat SRF keys of ``zfit.identify/1`` that a ``{value, std, unit}``
#: object replaces; written for this version only and listed in the JSON's
#: ``deprecated`` (docs/identify.md).
DEPRECATED_IDENTIFY_KEYS = {
    "srf.value_hz": "srf.frequency.value",
    "srf.std_hz": "srf.frequency.std",
    "srf.model_value_hz": "srf.model_frequency.value",
    "srf.model_std_hz": "srf.model_frequency.std",
    "srf.measured.value_hz": "srf.measured.frequency.value",
    "srf.measured.std_hz": "srf.measured.frequency.std",
}


class ParameterMap(Mapping[str, ParameterEstimate]):
    """An immutable, picklable mapping of parameter key to `ParameterEstimate`.

    Parameters
    ----------
    items : iterable of (str, ParameterEstimate)
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
    adequacy : Adequacy or None
        Where the circuit holds within the noise (log-frequency span) and the
        model-error factor of its uncertainties (`_adequacy`).
    split_band : SplitBandCheck or None
        The circuit refitted over the lower and upper part of its band, and
        the parameters whose uncertainty that widened (`_model_error`).
    """

    rms_normalized_residual: float
    points: int
    f_min_hz: float
    f_max_hz: float
    valid_band_hz: tuple[float, float]
    fitted_band_hz: tuple[float, float]
    reduced_chi_square: float
    domain: str
    criterion: str = "BIC"
    rational_rms_normalized_residual: float | None = None
    rational_poles: int | None = None
    worse_than_rational: bool = False
    starts: int = 0
    adequacy: Adequacy | None = None
    split_band: SplitBandCheck | None = None

    def to_dict(self) -> dict:
        """Return the ``fit`` object of the JSON contract."""
        out = {
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
        if self.adequacy is not None:
            out.update(self.adequacy.to_dict())
        if self.split_band is not None:
            out["split_band_check"] = self.split_band.to_dict()
        return out


@dataclass(frozen=True)
class ModelChoice:
    """Which band and model were used, and why.

    Attributes
    ----------
    asked : str
        The ``model`` argument.
    used : str
        The model reported (its descriptive name).
    why : str
        Why it was chosen.
    band_hz : tuple of float
        The band it was fitted over.
    band_why : str
        ``"asked for (band)"`` or ``"the whole sweep"``.
    """

    asked: str
    used: str
    why: str
    band_hz: tuple[float, float]
    band_why: str

    def to_dict(self) -> dict:
        """Return the ``choice`` object of the JSON contract."""
        return {"model_asked": self.asked, "model_used": self.used, "why": self.why,
                "band_hz": [float(self.band_hz[0]), float(self.band_hz[1])], "band_why": self.band_why}


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
        Key -> `ParameterEstimate` (empty for the rational model).
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
    figures : Merits
        The figures of merit: Q peak, ESR, D, |Z| at resonance.
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
    measurement : MeasuredReadings or None
        What the measurement itself says over the whole file (figures, SRF,
        low-frequency value, spot readouts), reported beside the model.
    choice : ModelChoice or None
        Which band and model were used, and why.
    bead : BeadFigures or None
        For resonant sections (a bead or a multi-resonant winding): R = X
        and |Z| at the spot frequencies (100 MHz by default) from the
        measurement (`_bead.bead_figures`); None otherwise.
    """

    sweep: Sweep
    model: str
    topology: str
    parameters: ParameterMap
    rational: RationalModel | None
    srf: SRF
    fit: FitQuality
    spot: tuple[SpotReadout, ...] = ()
    warnings: tuple[str, ...] = ()
    figures: Merits = Merits()
    curves: Curves | None = None
    candidates: tuple[Candidate, ...] = ()
    correlation: np.ndarray | None = None
    rdc: Estimate | None = None
    refinement: Refinement | None = None
    measurement: MeasuredReadings | None = None
    choice: ModelChoice | None = None
    bead: BeadFigures | None = None

    def __post_init__(self):
        if self.correlation is not None:
            c = np.array(self.correlation, float)
            c.flags.writeable = False
            object.__setattr__(self, "correlation", c)

    @property
    def circuit(self) -> Circuit | None:
        """The fitted `Circuit`, or None for the rational model."""
        return None if self.refinement is None else self.refinement.circuit

    @cached_property
    def realisation(self) -> Realisation:
        """The rational model realised as a passive R-L-C network (computed once, on first use).

        Raises
        ------
        ZfitInputError
            When there is no rational model.
        SynthesisError
            When it cannot be realised with non-negative elements
            (`zfit.fit._realisation.passive_realisation`).
        """
        from .._errors import ZfitInputError
        from ..fit._realisation import passive_realisation

        if self.rational is None:
            raise ZfitInputError("there is no rational model to realise as a network")
        return passive_realisation(self.rational, self.sweep)

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

    def to_dict(self) -> dict:
        """Return the ``zfit.identify/1`` JSON object (see docs/identify.md).

        Floats are numbers in SI units; a missing value is null, never a
        string.
        """
        from .._version import __version__
        from ..data._noise import noise_block

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
            "figures": self._figures_dict(),
            "curves": None if self.curves is None else self.curves.to_dict(),
            "fit": self.fit.to_dict(),
            "candidates": [c.to_dict() for c in self.candidates],
            "rational": _rational_dict(self.rational),
            "rdc": None if self.rdc is None else self.rdc.to_dict(),
            "spot": self._spot_dicts(),
            "warnings": list(self.warnings),
            "notes": list(self.sweep.notes),
            "noise": noise_block(self.sweep),
            "low_frequency": None if self.measurement is None else self.measurement.low_frequency_dict(),
            "choice": None if self.choice is None else self.choice.to_dict(),
            **({} if self.bead is None else {"bead": self.bead.to_dict()}),
            "deprecated": [dict(key=k, replaced_by=v) for k, v in DEPRECATED_IDENTIFY_KEYS.items()],
        }

    def _figures_dict(self) -> dict:
        out = self.figures.to_dict()
        m = self.measurement
        if m is not None:
            family = m.family or (self.model if self.model in ("inductor", "capacitor") else None)
            out["measurement"] = m.figure_dicts(family)
        return out

    def _spot_dicts(self) -> list:
        out = [s.to_dict() for s in self.spot]
        if self.measurement is not None:
            for entry, meas in zip(out, self.measurement.spot_dicts()):
                entry["measurement"] = meas
        return out


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


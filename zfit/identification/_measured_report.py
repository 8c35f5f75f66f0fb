"""What the measurement itself says, as reported beside the model.

The figures of `_measured` (smoothed R, X and what follows from them, the
self-resonance from the sign change of Im Z, the low-frequency L or C) read
once per identification and put in the form the result reports: spot
readouts at the frequencies asked for, the figures of merit of the part's
family, and the SRF that is reported when the model's resonance lies
outside the band or disagrees with the measured one.  Every entry is
labelled ``source: "measurement"``; a loss figure that is below resolution
is an upper bound ('below resolution, < X'), never a negative number.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from typing import TYPE_CHECKING

import numpy as np

from ._measured import (
    LowFrequencyValue,
    MeasuredFigures,
    MeasuredSRF,
    MeasuredValue,
    low_frequency_value,
    measured_figures,
    measured_srf,
    spot_figures,
)
from ._merit import SRF, Merit, Merits, _num

if TYPE_CHECKING:
    from ..data._sweep import Sweep

__all__ = [
    "MeasuredReadings",
    "measured_readings",
    "srf_with_measurement",
    "merits_with_measurement",
    "SRF_AGREEMENT_K",
    "SRF_AGREEMENT_REL",
]

#: The model's SRF disagrees with the measured one when they differ by more
#: than this many combined standard uncertainties ...
SRF_AGREEMENT_K = 3.0
#: ... and by more than this fraction: a model that describes the data puts its
#: resonance within a few per cent of the sign change; an artefact (a rational
#: pole, a calibration offset near a short) is far from it.
SRF_AGREEMENT_REL = 0.05

SOURCE = "measurement"

Z_AT_SRF_MEASURED = "|Z| of the measured impedance at the point nearest the SRF"


@dataclass(frozen=True)
class MeasuredReadings:
    """The measurement's figures of one sweep.

    Attributes
    ----------
    figures : MeasuredFigures
        Smoothed R, X and their uncertainty at every point.
    srf : MeasuredSRF
        The self-resonance from the sign change of Im Z.
    low : LowFrequencyValue
        L or C at the low end of the band.
    spot : tuple of (dict or None)
        `spot_figures` at each spot frequency asked for (None outside the band).
    """

    figures: MeasuredFigures
    srf: MeasuredSRF
    low: LowFrequencyValue
    spot: tuple

    @property
    def family(self) -> str | None:
        """``"inductor"`` or ``"capacitor"`` from the sign of Im Z at low frequency; None if not resolved."""
        return self.low.family

    def z_at_srf(self) -> tuple[MeasuredValue, float]:
        """Return (``|Z|``, its frequency) at the measured point nearest the measured SRF (which must be in band)."""
        fig = self.figures
        i = int(np.argmin(np.abs(np.log(fig.f_hz / self.srf.value_hz))))
        return MeasuredValue("|Z|", "ohm", float(fig.abs_z_ohm[i]), float(fig.std_ohm[i])), float(fig.f_hz[i])

    def spot_dicts(self) -> list:
        """Return the ``measurement`` object of each spot readout (None outside the band)."""
        return [None if s is None else _spot_dict(s) for s in self.spot]

    def low_frequency_dict(self) -> dict:
        """Return the ``low_frequency`` object of the JSON contract."""
        lo = self.low
        unit = {"L": "H", "C": "F"}.get(lo.name, "")
        return {
            "family": lo.family, "name": lo.name, "value": _num(lo.value) if lo.resolved else None,
            "std": _num(lo.std) if lo.resolved else None, "unit": unit, "f_hz": _num(lo.f_hz),
            "resolved": bool(lo.resolved), "text": None if lo.resolved else "not resolved", "source": SOURCE,
        }

    def figure_dicts(self, family: str | None) -> dict:
        """Return the ``figures.measurement`` object: the family's figures read from the data.

        Parameters
        ----------
        family : {'inductor', 'capacitor'} or None
            The part's family (the measured one when resolved).
        """
        fig = self.figures
        out = {}
        i0 = 0
        lo = self.low
        if lo.resolved:
            unit = "H" if lo.name == "L" else "F"
            what = "X/omega" if lo.name == "L" else "-1/(omega X)"
            out[f"{lo.name}_low_frequency"] = _entry(
                MeasuredValue(lo.name, unit, lo.value, lo.std), lo.f_hz,
                f"{what} of the measured impedance at the lowest frequency where X is resolved")
            i0 = int(np.searchsorted(fig.f_hz, lo.f_hz))
        if self.srf.in_band:
            v, f = self.z_at_srf()
            out["z_at_srf"] = _entry(v, f, Z_AT_SRF_MEASURED)
        top = self.srf.value_hz if self.srf.in_band else math.inf
        below = fig.f_hz < top
        if family == "inductor":
            out["r_at_f_min"] = _entry(fig.resistance(i0), float(fig.f_hz[i0]), "Re Z of the measured impedance")
            ok = below & (fig.x_ohm > 0) & (fig.r_ohm > 2.0 * fig.std_ohm)
            if ok.any():
                # The peak of Q - 2 std(Q): a noise spike of a barely resolved R is not a peak.
                with np.errstate(divide="ignore", invalid="ignore"):  # X or R zero where not `ok`
                    score = np.where(ok, fig.q - 2.0 * fig.q_std, -np.inf)
                i = int(np.argmax(score))
                out["q_peak"] = _entry(MeasuredValue("Q", "", float(fig.q[i]), float(fig.q_std[i])), float(fig.f_hz[i]),
                                       "|X|/R of the measured impedance, its largest resolved value below the SRF")
        elif family == "capacitor":
            out["esr_at_f_min"] = _entry(fig.resistance(i0), float(fig.f_hz[i0]), "Re Z of the measured impedance")
            out["d_at_f_min"] = _entry(fig.dissipation(i0), float(fig.f_hz[i0]), "R/|X| of the measured impedance")
            i = int(np.argmin(fig.r_ohm + 2.0 * fig.std_ohm))
            out["esr_min"] = _entry(fig.resistance(i), float(fig.f_hz[i]),
                                    "Re Z of the measured impedance, its smallest value in the band")
        return out


def _value_dict(v: MeasuredValue) -> dict:
    from .._units import format_value_std

    text = None if v.resolved else (
        f"below resolution, < {format_value_std(v.upper_bound, None, v.unit)}" if v.upper_bound is not None else "not resolved")
    return {
        "value": _num(v.value) if v.resolved else None, "std": _num(v.std), "unit": v.unit,
        "resolved": bool(v.resolved), "upper_bound": _num(v.upper_bound), "text": text,
    }


def _entry(v: MeasuredValue, f_hz: float, definition: str) -> dict:
    return {**_value_dict(v), "f_hz": _num(f_hz), "definition": definition, "source": SOURCE}


def _spot_dict(s: dict) -> dict:
    r, x = s["R"], s["X"]
    rv = r.value
    mag = math.hypot(rv, x.value)
    out = {"source": SOURCE, "R": _value_dict(r), "X": _value_dict(x),
           "Z_mag": _value_dict(MeasuredValue("|Z|", "ohm", mag, x.std)),
           "Z_phase_deg": _value_dict(MeasuredValue("phase", "deg", math.degrees(math.atan2(x.value, rv)),
                                                    math.degrees(x.std / mag) if mag > 0 else math.inf))}
    if "L" in s:
        out["L_eff"] = _value_dict(s["L"])
    else:
        out["C_eff"] = _value_dict(s["C"])
        out["ESR"] = _value_dict(replace(r, name="ESR"))
    out["Q"] = _value_dict(s["Q"])
    out["D"] = _value_dict(s["D"])
    return out


def measured_readings(sweep: Sweep, at=()) -> MeasuredReadings:
    """Return the measurement's figures over the whole sweep and at the spot frequencies.

    Parameters
    ----------
    sweep : Sweep
        The measurement (the whole file, whatever band the model is fitted over).
    at : sequence of float
        Spot frequencies in Hz; those outside the band get None.
    """
    f, z, s = sweep.f_hz, sweep.z_ohm, sweep.sigma_ohm
    fig = measured_figures(f, z, s)
    low = low_frequency_value(f, z, s, figures=fig)
    srf = measured_srf(f, z, s, figures=fig)
    lo, hi = sweep.band_hz
    spot = tuple(spot_figures(f, z, s, x) if lo <= x <= hi else None for x in at)
    return MeasuredReadings(fig, srf, low, spot)


def srf_with_measurement(model: SRF, measured: MeasuredSRF, holds_hz: tuple[float, float] | None = None) -> SRF:
    """Return the SRF to report: the model's, or the measured one where the model's is outside the band or disagrees.

    The measured resonance (the sign change of Im Z in the data) is the
    part's; a model's resonance outside the band, or one that differs from
    the measured by more than `SRF_AGREEMENT_K` combined standard
    uncertainties and `SRF_AGREEMENT_REL`, is the model's extrapolation or
    its artefact (a rational pole, a calibration offset near a short), and
    is kept beside it as ``model_value_hz``.  So is a circuit's resonance
    that lies beyond the band where the circuit holds (`holds_hz`): there the
    circuit is an extrapolation even inside the measured band.

    Parameters
    ----------
    model : SRF
        The model's SRF.
    measured : MeasuredSRF
        The one read from the data.
    holds_hz : tuple of float, optional
        The band where the model describes the data (a circuit's valid
        band); None for the whole band.
    """
    out = replace(model, measured=measured, model_value_hz=model.value_hz, model_std_hz=model.std_hz,
                  model_source=model.source)
    if not measured.in_band:
        return out
    beyond = holds_hz is not None and model.value_hz is not None and not (
        holds_hz[0] <= model.value_hz <= holds_hz[1])
    if model.where == "in-band" and model.value_hz is not None and not beyond:
        diff = abs(model.value_hz - measured.value_hz)
        comb = math.hypot(model.std_hz or 0.0, measured.std_hz)
        if diff <= max(SRF_AGREEMENT_K * comb, SRF_AGREEMENT_REL * measured.value_hz):
            return out
    return replace(out, value_hz=measured.value_hz, std_hz=measured.std_hz, where="in-band", bound_hz=None,
                   source=SOURCE)


def merits_with_measurement(merits: Merits, measured: MeasuredReadings) -> Merits:
    """Return `merits` with ``|Z|`` at the SRF read from the data where the data contain the resonance.

    A model's ``|Z|`` at its resonance is set by the losses it assigns
    there, and where the data are sparse or noisy near the peak (a capture's
    bins, an analyser's floor) it can lie far above anything measured; the
    measured point nearest the SRF is what the part showed.  The model's
    value is kept as ``z_model_at_srf``.

    Parameters
    ----------
    merits : Merits
        The figures read from the models (`_merit.merits_of`).
    measured : MeasuredReadings
        What the data say.
    """
    if not measured.srf.in_band:
        return merits
    v, f = measured.z_at_srf()
    here = Merit(v.value, v.std, "ohm", f, Z_AT_SRF_MEASURED, SOURCE)
    return replace(merits, z_at_srf=here, z_model_at_srf=merits.z_at_srf)

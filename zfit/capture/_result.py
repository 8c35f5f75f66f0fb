"""The result of a capture's analysis, `StepResult`, and its ``zfit.step/1``
JSON object.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import TYPE_CHECKING

import numpy as np

from ._response import FrequencyResponse
from ._ringing import Ringing
from ._stray import StrayCapacitance

if TYPE_CHECKING:
    from ..data._sweep import Sweep
    from ..identification._result import Identification
    from ..io._capture import Capture

__all__ = ["STEP_SCHEMA", "DEPRECATED_STEP_KEYS", "EdgeWaveform", "StepResult"]

STEP_SCHEMA = "zfit.step/1"

#: The flat keys of ``zfit.step/1`` that a ``{value, std, unit}`` object
#: replaces, and where the value now is; written for this version only, and
#: listed in the JSON's ``deprecated`` (docs/capture.md).
DEPRECATED_STEP_KEYS = {
    "transition_10_90_s": "transition_10_90.value",
    "transition_10_90_std_s": "transition_10_90.std",
    "overshoot_pct": "overshoot.value",
    "overshoot_std_pct": "overshoot.std",
    "time_constant_s": "time_constant.value",
    "time_constant_std_s": "time_constant.std",
    "ringing_hz": "ringing.frequency.value",
    "midpoint_time_constant_s": "midpoint_time_constant.value",
    "midpoint_time_constant_std_s": "midpoint_time_constant.std",
    "ringing.frequency_hz": "ringing.frequency.value",
    "ringing.frequency_std_hz": "ringing.frequency.std",
    "ringing.natural_hz": "ringing.natural.value",
    "ringing.natural_std_hz": "ringing.natural.std",
    "stray_capacitance.value_f": "stray_capacitance.capacitance.value",
    "stray_capacitance.std_f": "stray_capacitance.capacitance.std",
    "stray_capacitance.inductance_h": "stray_capacitance.inductance.value",
    "stray_capacitance.inductance_std_h": "stray_capacitance.inductance.std",
}


@dataclass(frozen=True)
class EdgeWaveform:
    """The average of all edges, aligned at the reference edge and made rising.

    Attributes
    ----------
    t_s : numpy.ndarray
        Time from the reference edge's 50 % instant in s.
    input_v : numpy.ndarray or None
        Averaged input (None for a single channel).
    output_v : numpy.ndarray
        Averaged output.
    fit_v : numpy.ndarray or None
        The fitted first-order response over the fit window (NaN outside).
    """

    t_s: np.ndarray
    input_v: np.ndarray | None
    output_v: np.ndarray
    fit_v: np.ndarray | None = None


@dataclass(frozen=True)
class StepResult:
    """Everything `analyse_capture` found in a capture.

    Attributes
    ----------
    source : str
        The capture file.
    sample_rate_hz : float
        ``1/dt``.
    n_samples : int
        Samples per channel.
    input_name, output_name : str or None
        The channels used (input None for a single channel).
    edges : int
        Edges analysed (those whose whole segment lies in the record).
    edges_rising, edges_falling : int
        Of which rising / falling.
    edge_times_s : numpy.ndarray
        50 % instants of the reference edges (input, or output alone) in s.
    levels_v : tuple of float
        Output (low, high) state levels in V.
    levels_noise_v : tuple of float
        Noise (standard deviation) of the output at each level.
    input_levels_v : tuple of float or None
        Input state levels.
    transition_10_90_s, transition_10_90_std_s : float or None
        Output 10-90 % transition duration (mean over edges) and its uncertainty.
    overshoot_pct, overshoot_std_pct : float or None
        Output overshoot of the averaged edge, percent of the amplitude.
    time_constant_s, time_constant_std_s : float or None
        Dominant time constant (of H with two channels) and its uncertainty.
    time_constant_method : str
        How it was obtained.
    midpoint_time_constant_s, midpoint_time_constant_std_s : float or None
        The cross-check: low-to-midpoint time / ln 2.
    ringing : Ringing or None
        The ringing after the edges.
    stray_capacitance : StrayCapacitance or None
        From the ringing with ``inductance_h`` or the two-resonance method.
    response : FrequencyResponse
        H(f) with uncertainty and coherence.
    usable_band_hz : tuple of float
        The band the capture supports.
    shunt_ohm : float or None
        The sense resistor.
    sweep : Sweep or None
        The impedance derived with the sense resistor.
    identification : Identification or None
        The identification of that sweep (the ``impedance`` object of the
        JSON).
    edge_waveform : EdgeWaveform
        The averaged edge, for plots.
    capture : Capture
        The capture analysed (for plots of the record).
    warnings : tuple of str
        What the user should know (also issued as MeasurementWarning).
    notes : tuple of str
        What was assumed or done.
    """

    source: str
    sample_rate_hz: float
    n_samples: int
    input_name: str | None
    output_name: str
    edges: int
    edges_rising: int
    edges_falling: int
    edge_times_s: np.ndarray
    levels_v: tuple[float, float]
    levels_noise_v: tuple[float, float]
    input_levels_v: tuple[float, float] | None
    transition_10_90_s: float | None
    transition_10_90_std_s: float | None
    overshoot_pct: float | None
    overshoot_std_pct: float | None
    time_constant_s: float | None
    time_constant_std_s: float | None
    time_constant_method: str
    midpoint_time_constant_s: float | None
    midpoint_time_constant_std_s: float | None
    ringing: Ringing | None
    stray_capacitance: StrayCapacitance | None
    response: FrequencyResponse
    usable_band_hz: tuple[float, float]
    shunt_ohm: float | None
    sweep: Sweep | None
    identification: Identification | None
    edge_waveform: EdgeWaveform
    capture: Capture | None = field(repr=False, default=None)
    warnings: tuple[str, ...] = ()
    notes: tuple[str, ...] = ()

    @property
    def ringing_hz(self) -> float | None:
        """The damped ringing frequency in Hz, or None."""
        return None if self.ringing is None else self.ringing.frequency_hz

    def to_dict(self) -> dict:
        """Return the ``zfit.step/1`` JSON object (SI units, floats as numbers).

        The keys of the contract come first: ``schema``, ``source``,
        ``sample_rate_hz``, ``edges``, ``levels_v``, ``transition_10_90_s``,
        ``overshoot_pct``, ``time_constant_s``, ``time_constant_std_s``,
        ``ringing_hz``, ``usable_band_hz``; then ``zfit_version`` and, with a
        sense resistor, ``impedance`` (the ``zfit.identify/1`` object).
        Further keys add the uncertainties and the cross-checks.  Each value
        with an uncertainty is also given as ``{value, std, unit}``, the
        shape of ``zfit.identify/1`` (``time_constant``, ``ringing.frequency``,
        ...); the flat ``*_std`` keys it replaces are listed in
        ``deprecated`` and are kept for this version only.
        """
        from .._version import __version__

        def num(v):
            return None if v is None or not math.isfinite(v) else float(v)

        def q(value, std, unit):
            return None if num(value) is None else {"value": num(value), "std": num(std), "unit": unit}

        r = self.ringing
        sc = self.stray_capacitance
        d = {
            "schema": STEP_SCHEMA,
            "source": self.source,
            "sample_rate_hz": float(self.sample_rate_hz),
            "edges": int(self.edges),
            "levels_v": [float(self.levels_v[0]), float(self.levels_v[1])],
            "transition_10_90_s": num(self.transition_10_90_s),
            "overshoot_pct": num(self.overshoot_pct),
            "time_constant_s": num(self.time_constant_s),
            "time_constant_std_s": num(self.time_constant_std_s),
            "ringing_hz": None if r is None else float(r.frequency_hz),
            "usable_band_hz": [num(self.usable_band_hz[0]), num(self.usable_band_hz[1])],
            # After the keys of the contract, whose order is fixed.
            "zfit_version": __version__,
        }
        if self.identification is not None:
            d["impedance"] = self.identification.to_dict()
        d.update({
            "input": self.input_name,
            "output": self.output_name,
            "n_samples": int(self.n_samples),
            "edges_rising": int(self.edges_rising),
            "edges_falling": int(self.edges_falling),
            "levels_noise_v": [float(self.levels_noise_v[0]), float(self.levels_noise_v[1])],
            "input_levels_v": None if self.input_levels_v is None else [float(v) for v in self.input_levels_v],
            "transition_10_90": q(self.transition_10_90_s, self.transition_10_90_std_s, "s"),
            "overshoot": q(self.overshoot_pct, self.overshoot_std_pct, "%"),
            "time_constant": q(self.time_constant_s, self.time_constant_std_s, "s"),
            "midpoint_time_constant": q(self.midpoint_time_constant_s, self.midpoint_time_constant_std_s, "s"),
            "transition_10_90_std_s": num(self.transition_10_90_std_s),
            "overshoot_std_pct": num(self.overshoot_std_pct),
            "time_constant_method": self.time_constant_method,
            "midpoint_time_constant_s": num(self.midpoint_time_constant_s),
            "midpoint_time_constant_std_s": num(self.midpoint_time_constant_std_s),
            "ringing": None if r is None else {
                "frequency": q(r.frequency_hz, r.frequency_std_hz, "Hz"),
                "natural": q(r.natural_hz, r.natural_std_hz, "Hz"),
                "frequency_hz": float(r.frequency_hz), "frequency_std_hz": num(r.frequency_std_hz),
                "natural_hz": float(r.natural_hz), "natural_std_hz": num(r.natural_std_hz),
                "damping_ratio": float(r.damping_ratio), "amplitude_v": float(r.amplitude_v),
            },
            "stray_capacitance": None if sc is None else {
                "capacitance": q(sc.value_f, sc.std_f, "F"),
                "inductance": q(sc.inductance_h, sc.inductance_std_h, "H"),
                "value_f": float(sc.value_f), "std_f": num(sc.std_f),
                "method": sc.method,
                "inductance_h": num(sc.inductance_h),
                "inductance_std_h": num(sc.inductance_std_h),
                "added_ringing_hz": num(sc.added_ringing_hz),
            },
            "response": {
                "method": self.response.method,
                "averages": int(self.response.n_averages),
                "bin_hz": float(1.0 / self.response.segment_s),
                "dc_gain": num(self.response.dc_gain),
                "coherence_min_in_band": num(float(self.response.coherence[self.response.usable].min())
                                             if self.response.usable.any() else None),
            },
            "shunt_ohm": num(self.shunt_ohm),
            "warnings": list(self.warnings),
            "notes": list(self.notes),
            "deprecated": [dict(key=k, replaced_by=v) for k, v in DEPRECATED_STEP_KEYS.items()],
        })
        return d

"""The figures of merit at every sweep point: the traces a plot of an identification draws.

Q, ESR and D are read at the measured frequencies from the measurement
itself (``|X| / R``, ``Re Z``, ``R / |X|``), from the rational model (with
the band of its own uncertainty), from the circuit, and for an inductor the
textbook ``omega L / R_s`` of the circuit's series branch (see `_merit` for
the definitions).  An inductor (or a rational model of a mostly inductive
part) gets the Q traces, a capacitor the loss traces.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

if TYPE_CHECKING:
    from ._result import Identification

__all__ = ["QTraces", "LossTraces", "SweepTraces", "sweep_traces"]


@dataclass(frozen=True)
class QTraces:
    """Q at the sweep's frequencies.

    Attributes
    ----------
    q : numpy.ndarray
        ``|X| / R`` of the measurement.
    q_std : numpy.ndarray or None
        Standard uncertainty of the rational model's Q.
    q_rational, q_circuit : numpy.ndarray or None
        The same of the rational model and of the circuit.
    q_model : numpy.ndarray or None
        ``omega L / R_s`` of the inductor circuit.
    peak : tuple of float or None
        ``(f_hz, Q)`` of the reported Q peak.
    """

    q: np.ndarray
    q_std: np.ndarray | None
    q_rational: np.ndarray | None
    q_circuit: np.ndarray | None
    q_model: np.ndarray | None
    peak: tuple[float, float] | None


@dataclass(frozen=True)
class LossTraces:
    """ESR and D at the sweep's frequencies.

    Attributes
    ----------
    esr, d : numpy.ndarray
        ``Re Z`` and ``R / |X|`` of the measurement.
    esr_std : numpy.ndarray
        Standard uncertainty of ESR (the rational model's, else the sweep's).
    esr_circuit, d_circuit : numpy.ndarray or None
        The same of the circuit.
    esr_rational, d_rational : numpy.ndarray or None
        The same of the rational model.
    """

    esr: np.ndarray
    d: np.ndarray
    esr_std: np.ndarray
    esr_circuit: np.ndarray | None
    d_circuit: np.ndarray | None
    esr_rational: np.ndarray | None
    d_rational: np.ndarray | None


@dataclass(frozen=True)
class SweepTraces:
    """The measurement and its models at the sweep's frequencies.

    Attributes
    ----------
    f_hz, z_ohm, sigma_ohm : numpy.ndarray
        The sweep.
    circuit_ohm : numpy.ndarray or None
        The circuit's impedance (None for a rational result).
    rational_ohm : numpy.ndarray or None
        The rational model's impedance.
    srf_hz : float or None
        The SRF when it lies in the band.
    q : QTraces or None
        For an inductor (or a mostly inductive rational result).
    losses : LossTraces or None
        Otherwise.
    """

    f_hz: np.ndarray
    z_ohm: np.ndarray
    sigma_ohm: np.ndarray
    circuit_ohm: np.ndarray | None
    rational_ohm: np.ndarray | None
    srf_hz: float | None
    q: QTraces | None = None
    losses: LossTraces | None = None


def _mostly_inductive(z) -> bool:
    return bool(np.median(np.sign(z.imag)) > 0)


def sweep_traces(result: Identification) -> SweepTraces:
    """Return the measurement, its models and their figures of merit at the sweep's frequencies.

    Parameters
    ----------
    result : Identification
        The result of `zfit.identify`.
    """
    sw = result.sweep
    f, z, sig = sw.f_hz, sw.z_ohm, sw.sigma_ohm
    circuit = result.impedance(f) if result.model != "rational" else None
    rational = result.rational.impedance(f) if result.rational is not None else None
    srf = result.srf.value_hz if result.srf is not None and result.srf.where == "in-band" else None
    q_traces = losses = None
    with np.errstate(divide="ignore", invalid="ignore"):
        if result.model == "inductor" or (result.model == "rational" and _mostly_inductive(z)):
            q = np.abs(z.imag) / z.real
            qr = np.abs(rational.imag) / rational.real if rational is not None else None
            q_std = None
            if result.rational is not None:
                # Band of the smooth (rational) Q from the model's own uncertainty.
                try:
                    s_r = result.rational.impedance_std(f)
                    q_std = s_r / math.sqrt(2.0) / np.abs(rational.real) * np.sqrt(1 + qr * qr)
                except Exception:  # pragma: no cover - a model without covariance
                    q_std = None
            qc = np.abs(circuit.imag) / circuit.real if circuit is not None else None
            qt = result.q_model(f) if result.model == "inductor" else None
            peak = None
            qp = result.figures.q_peak if result.figures is not None else None
            if qp is not None and qp.f_hz is not None and qp.value is not None:
                peak = (float(qp.f_hz), float(qp.value))
            q_traces = QTraces(q, q_std, qr, qc, qt, peak)
        else:
            esr = z.real
            d = z.real / np.abs(z.imag)
            esr_c = circuit.real if circuit is not None else None
            d_c = circuit.real / np.abs(circuit.imag) if circuit is not None else None
            esr_r = rational.real if rational is not None else None
            d_r = rational.real / np.abs(rational.imag) if rational is not None else None
            esr_s = sig / math.sqrt(2.0)
            if result.rational is not None:
                try:
                    esr_s = result.rational.impedance_std(f) / math.sqrt(2.0)
                except Exception:  # pragma: no cover - a model without covariance
                    esr_r = d_r = None
            losses = LossTraces(esr, d, esr_s, esr_c, d_c, esr_r, d_r)
    return SweepTraces(f, z, sig, circuit, rational, srf, q_traces, losses)

"""Swept-sine readings as points of a frequency response, with their uncertainty, and the part behind a divider.

Each frequency of a gain/phase table becomes one point: the mean of its
readings (of ``ln |H|``, and of the phase on the branch of the first
reading) with a standard uncertainty from, in order of preference,

1. repeated readings: the scatter of the readings about their frequency's
   mean, pooled over every repeated frequency (GUM 4.2.8: a pooled
   estimate has far more degrees of freedom than the two or three readings
   at one frequency), divided by the square root of the readings at each
   point (GUM 4.2.3);
2. the uncertainties the table states per reading (``zfit step --response``
   writes them);
3. the instrument's accuracy, a bound ``a`` read as a rectangular
   distribution, ``u = a / sqrt 3`` (GUM 4.3.7).

Accuracies the user states explicitly are combined in quadrature with 1 or 2
(GUM 5.1.2); the defaults apply only when neither is available.

With the network known, the part's impedance follows from ``H``: a part in
series with a resistor ``R``, the output across the resistor, gives
``Z = R (1/H - 1)`` (this is the sense resistor of ``zfit step --shunt``);
the output across the part gives ``Z = R H / (1 - H)``.  The uncertainty is
propagated to first order, ``u(Z) = |dZ/dH| u(H)`` (GUM 5.1.2), with the
complex-circular ``u(H) = |H| sqrt(u(ln|H|)^2 + u(phase)^2)``; the
resistor's own tolerance scales every impedance alike and is not included.

References
----------
.. [1] JCGM 100:2008, *Evaluation of measurement data -- Guide to the
   expression of uncertainty in measurement*, sections 4.2.3, 4.2.8, 4.3.7
   and 5.1.2.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, field

import numpy as np

from .._errors import MeasurementWarning, ZfitInputError
from .._units import format_eng

__all__ = [
    "GainPhasePoints", "gain_phase_points", "divider_impedance_sweep",
    "DEFAULT_GAIN_ACCURACY_DB", "DEFAULT_PHASE_ACCURACY_DEG", "OUTPUT_ACROSS",
]

#: Accuracy of an amplitude ratio of two oscilloscope channels, in dB, when
#: nothing better is known (common practice: each channel's vertical gain is
#: specified to 1-3 %, of which the ratio keeps the difference).
DEFAULT_GAIN_ACCURACY_DB = 0.2
#: Accuracy of the phase between two channels in degrees (common practice for
#: a bench oscilloscope's channel-to-channel skew well below its bandwidth).
DEFAULT_PHASE_ACCURACY_DEG = 1.0
#: Where the output of a series divider is taken.
OUTPUT_ACROSS = ("resistor", "part")

_DB_PER_NEPER = 20.0 / math.log(10.0)


@dataclass(frozen=True)
class GainPhasePoints:
    """A frequency response at distinct frequencies with per-point standard uncertainties.

    Attributes
    ----------
    f_hz : numpy.ndarray
        Increasing distinct frequencies in Hz.
    gain : numpy.ndarray
        ``|H|`` at each (geometric mean of the readings).
    phase_rad : numpy.ndarray
        Phase of H in rad (mean of the readings).
    sigma_ln : numpy.ndarray
        Standard uncertainty of ``ln |H|`` (relative gain uncertainty).
    sigma_phase_rad : numpy.ndarray
        Standard uncertainty of the phase in rad.
    readings : numpy.ndarray of int
        Readings averaged into each point.
    lines : numpy.ndarray of int
        File line of each point's first reading.
    uncertainty_source : str
        Where the uncertainties come from, in words.
    gain_accuracy_db, phase_accuracy_deg : float or None
        The instrument accuracies that entered (bounds), None when none did.
    coherence_min : float or None
        Lowest coherence of the readings, when the table gives it.
    source : str
        The file.
    data_format : str
        What the reader understood.
    method : str
        How the response was measured.
    notes : tuple of str
        What was assumed or done.
    """

    f_hz: np.ndarray
    gain: np.ndarray
    phase_rad: np.ndarray
    sigma_ln: np.ndarray
    sigma_phase_rad: np.ndarray
    readings: np.ndarray
    lines: np.ndarray
    uncertainty_source: str
    gain_accuracy_db: float | None = None
    phase_accuracy_deg: float | None = None
    coherence_min: float | None = None
    source: str = ""
    data_format: str = ""
    method: str = ""
    notes: tuple[str, ...] = field(default=())

    def __post_init__(self):
        for name in ("f_hz", "gain", "phase_rad", "sigma_ln", "sigma_phase_rad", "readings", "lines"):
            a = np.array(getattr(self, name))
            a.flags.writeable = False
            object.__setattr__(self, name, a)

    @property
    def n_points(self) -> int:
        """Distinct frequencies."""
        return int(self.f_hz.size)

    @property
    def h(self) -> np.ndarray:
        """The complex response ``|H| e^{j phase}``."""
        return self.gain * np.exp(1j * self.phase_rad)

    @property
    def h_sigma(self) -> np.ndarray:
        """Complex-circular standard uncertainty of `h`, ``|H| sqrt(u_ln^2 + u_phase^2)``."""
        return self.gain * np.hypot(self.sigma_ln, self.sigma_phase_rad)

    @property
    def gain_db_std(self) -> np.ndarray:
        """Standard uncertainty of the gain in dB."""
        return _DB_PER_NEPER * self.sigma_ln


def _wrap(a):
    return (np.asarray(a) + math.pi) % (2.0 * math.pi) - math.pi


def gain_phase_points(table, gain_accuracy_db: float | None = None, phase_accuracy_deg: float | None = None,
                      ) -> GainPhasePoints:
    """Return the points of a `ResponseTable`: readings at one frequency averaged, with their uncertainty.

    Parameters
    ----------
    table : ResponseTable
        What `read_response_table` returned.
    gain_accuracy_db : float, optional
        Accuracy (a bound) of the gain in dB; default `DEFAULT_GAIN_ACCURACY_DB`
        when neither repeats nor the table give an uncertainty.
    phase_accuracy_deg : float, optional
        Accuracy (a bound) of the phase in degrees; default
        `DEFAULT_PHASE_ACCURACY_DEG` likewise.

    Raises
    ------
    ZfitInputError
        For a non-positive accuracy, or fewer than 3 distinct frequencies.
    """
    for name, v in (("--gain-accuracy", gain_accuracy_db), ("--phase-accuracy", phase_accuracy_deg)):
        if v is not None and not (v > 0 and math.isfinite(v)):
            raise ZfitInputError(f"{name} must be a positive number, not {v!r}")
    order = np.argsort(table.f_hz, kind="stable")
    f = np.asarray(table.f_hz, float)[order]
    ln_g = np.log(np.asarray(table.gain, float))[order]
    ph = np.asarray(table.phase_rad, float)[order]
    lines = np.asarray(table.lines)[order]
    # Readings at one frequency: equal to 1e-9 (the printing of a frequency).
    new = np.concatenate([[True], np.diff(f) > 1e-9 * f[1:]])
    group = np.cumsum(new) - 1
    n_pts = int(group[-1]) + 1
    if n_pts < 3:
        raise ZfitInputError(f"only {n_pts} distinct frequencies: a transfer function needs at least 3", table.source)
    count = np.bincount(group, minlength=n_pts)
    first = np.flatnonzero(new)
    ln_mean = np.bincount(group, weights=ln_g, minlength=n_pts) / count
    # Phases about the first reading of their frequency, wrapped: 179 and -179 degrees average to 180.
    dph = _wrap(ph - ph[first][group])
    ph_mean = ph[first] + np.bincount(group, weights=dph, minlength=n_pts) / count
    notes = list(table.notes)
    repeated = count > 1
    s_ln = np.zeros(n_pts)
    s_ph = np.zeros(n_pts)
    sources = []
    missing: set[str] = set()
    if repeated.any():
        dof = int(np.sum(count - 1))
        ss_ln = float(np.sum((ln_g - ln_mean[group]) ** 2))
        ss_ph = float(np.sum((dph - (ph_mean - ph[first])[group]) ** 2))
        pooled_ln, pooled_ph = math.sqrt(ss_ln / dof), math.sqrt(ss_ph / dof)
        if pooled_ln == 0.0 and pooled_ph == 0.0:
            raise ZfitInputError("repeated readings at one frequency are identical: their scatter gives no "
                                 "uncertainty; give --gain-accuracy and --phase-accuracy instead, or drop the copies",
                                 table.source, int(lines[np.flatnonzero(repeated[group])[0]]))
        s_ln = pooled_ln / np.sqrt(count)
        s_ph = pooled_ph / np.sqrt(count)
        sources.append(f"scatter of repeated readings ({int(repeated.sum())} frequencies repeated, pooled over "
                       f"{dof} degrees of freedom: {_DB_PER_NEPER * pooled_ln:.3g} dB, "
                       f"{math.degrees(pooled_ph):.3g} deg per reading)")
        for name, pooled in (("gain", pooled_ln), ("phase", pooled_ph)):
            if pooled == 0.0:
                # Repeats that agree to the last digit shown: the display's resolution, not the
                # scatter, limits them; the accuracy bound stands in for the scatter.
                notes.append(f"the repeated {name} readings agree exactly: its uncertainty is the accuracy bound")
                missing.add(name)
    elif table.gain_std_db is not None or table.phase_std_rad is not None:
        if table.gain_std_db is None or table.phase_std_rad is None:
            raise ZfitInputError("the table gives the uncertainty of only one of gain and phase; give both columns, "
                                 "or neither and --gain-accuracy / --phase-accuracy", table.source)
        g_std = np.asarray(table.gain_std_db, float)[order] / _DB_PER_NEPER
        p_std = np.asarray(table.phase_std_rad, float)[order]
        s_ln = np.sqrt(np.bincount(group, weights=g_std**2, minlength=n_pts)) / count
        s_ph = np.sqrt(np.bincount(group, weights=p_std**2, minlength=n_pts)) / count
        sources.append("standard uncertainties stated in the table")
    given = gain_accuracy_db is not None or phase_accuracy_deg is not None
    if given or not sources or missing:
        a_db = DEFAULT_GAIN_ACCURACY_DB if gain_accuracy_db is None else float(gain_accuracy_db)
        a_deg = DEFAULT_PHASE_ACCURACY_DEG if phase_accuracy_deg is None else float(phase_accuracy_deg)
        # A bound of a rectangular distribution: u = a / sqrt(3) (GUM 4.3.7).
        b_ln, b_ph = a_db / _DB_PER_NEPER / math.sqrt(3.0), math.radians(a_deg) / math.sqrt(3.0)
        if given or not sources or "gain" in missing:
            s_ln = np.hypot(s_ln, b_ln)
        if given or not sources or "phase" in missing:
            s_ph = np.hypot(s_ph, b_ph)
        default = "" if given else " (common-practice defaults for a two-channel oscilloscope)"
        sources.append(f"instrument accuracy +-{a_db:g} dB, +-{a_deg:g} deg as rectangular bounds{default}")
    else:
        a_db = a_deg = None
    bad = ~(np.isfinite(s_ln) & np.isfinite(s_ph) & (s_ln > 0) & (s_ph > 0))
    if bad.any():
        raise ZfitInputError("a reading has a zero or missing uncertainty", table.source, int(lines[first][bad][0]))
    if repeated.any():
        notes.append(f"{int(np.sum(count - 1))} repeated reading(s) averaged into their frequency's point")
    coh = None if table.coherence is None else float(np.min(table.coherence))
    method = table.method or f"swept sine: {f.size} readings of gain and phase at {n_pts} frequencies"
    return GainPhasePoints(
        f_hz=f[first], gain=np.exp(ln_mean), phase_rad=ph_mean, sigma_ln=s_ln, sigma_phase_rad=s_ph,
        readings=count, lines=lines[first], uncertainty_source="; ".join(sources),
        gain_accuracy_db=a_db, phase_accuracy_deg=a_deg, coherence_min=coh, source=table.source,
        data_format=table.data_format, method=method, notes=tuple(notes))


def divider_impedance_sweep(points: GainPhasePoints, resistor_ohm: float, across: str = "resistor"):
    """Return the impedance of a part in series with a known resistor, from the divider's response, as a `Sweep`.

    Parameters
    ----------
    points : GainPhasePoints
        ``H = V_out / V_in`` of the divider.
    resistor_ohm : float
        The series resistor in ohm.
    across : {'resistor', 'part'}
        Where V_out is taken: across the resistor (``Z = R (1/H - 1)``)
        or across the part (``Z = R H / (1 - H)``).

    Raises
    ------
    ZfitInputError
        For a resistor that is not a positive number, an unknown `across`,
        or readings that no passive divider gives (a gain that makes Re Z
        negative beyond its uncertainty is left to the sweep's active-point
        flag; ``H = 1`` across the part is refused).
    """
    from ..data._sweep import make_sweep

    if not (resistor_ohm > 0 and math.isfinite(resistor_ohm)):
        raise ZfitInputError(f"the divider's resistor must be a positive number of ohm, not {resistor_ohm!r}")
    if across not in OUTPUT_ACROSS:
        raise ZfitInputError(f"the output is across the 'resistor' or the 'part', not {across!r}")
    h = points.h
    u_h = points.h_sigma
    r = float(resistor_ohm)
    with np.errstate(divide="ignore", invalid="ignore"):
        if across == "resistor":
            z = r * (1.0 / h - 1.0)
            dz = r / np.abs(h) ** 2
            formula = "Z = R (1/H - 1)"
        else:
            z = r * h / (1.0 - h)
            dz = r / np.abs(1.0 - h) ** 2
            formula = "Z = R H / (1 - H)"
    bad = ~np.isfinite(z)
    if bad.any():
        raise ZfitInputError("H = 1 across the part means no current: the part's impedance cannot be found",
                             points.source, int(points.lines[bad][0]))
    notes = list(points.notes) + [
        f"impedance from a divider with R = {format_eng(r, 'ohm', 6)}, output across the {across}: {formula}; "
        f"uncertainty propagated from the gain and phase ({points.uncertainty_source})"]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", MeasurementWarning)
        return make_sweep(points.f_hz, z, dz * u_h, source=points.source, connection="impedance",
                          lines=points.lines, notes=notes,
                          data_format=f"{points.data_format}; converted through the divider",
                          noise_model="gain and phase uncertainty of the readings, propagated through the divider")

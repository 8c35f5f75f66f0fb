"""What the user should know about an identification: adequacy, resolution, the ground loop.

Each function returns the text of a warning (or a list of them), never
raises one: the pipeline attaches them to the result and raises them as
`MeasurementWarning` in one place.

Adequacy
    A circuit that describes the full band worse than the rational model
    by the criterion is reported with the band where it holds, or with a
    note that its values carry a model error beyond the noise.

Resolution
    A parameter whose relative uncertainty from the noise model reaches 1/3
    at its value is below the sweep's resolution floor (`zfit.fit._fisher`);
    one whose fitted relative uncertainty exceeds `UNRESOLVED_REL` is not
    resolved either.  A measured DC resistance that disagrees with the
    sweep by more than three standard uncertainties is named.

Ground loop of shunt-thru
    In a shunt-thru measurement both port cables' shields are tied to the
    part's ground and, through the analyser's chassis, to each other: a
    ground loop.  At low frequency the return current of port 1 divides
    between its own shield and the loop through port 2's shield (by their
    resistances), and the voltage it drops across the resistance of port
    2's shield adds to what port 2 receives.  The analyser sees the part in
    series with a few milliohms of shield resistance: a flat resistive floor.
    Above the shield's corner frequency (loop resistance over loop
    inductance, typically tens of kHz to a few MHz) the mutual inductance of
    centre conductor and shield forces the return current back onto its own
    shield and the error fades.  In a low-impedance capacitor this floor at
    low frequency looks like ESR but is not (common practice in
    power-distribution impedance measurement; remedies: ferrite cores or a
    common-mode choke on a port cable, or an isolating transformer).

References
----------
.. [1] JCGM 100:2008 (GUM), section 5.1.2.
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING

import numpy as np

from .._units import format_eng

if TYPE_CHECKING:
    from ..data._sweep import Sweep
    from ..fit._lsq import Prior, Refinement
    from ._result import Identification, ParameterMap

__all__ = ["UNRESOLVED_REL", "parameter_notes", "rdc_note", "adequacy_note", "ground_loop_warning"]

#: A parameter whose relative uncertainty exceeds this is reported as not
#: resolved by the sweep.
UNRESOLVED_REL = 0.5


def parameter_notes(estimates: ParameterMap, rdc: float | None) -> list[str]:
    """Return a note for each parameter the sweep does not resolve.

    Parameters
    ----------
    estimates : ParameterMap
        The parameters of the reported circuit.
    rdc : float or None
        The measured DC resistance given (without one, the notes on R_s and
        ESR suggest measuring it).
    """
    notes = []
    for key, e in estimates.items():
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
    return notes


def rdc_note(chosen: Refinement, prior: Prior | None, rdc: float | None) -> str | None:
    """Return a note when the measured DC resistance and the sweep disagree (more than 3 sigma), else None."""
    if prior is not None and chosen.prior_pull is not None and abs(chosen.prior_pull) > 3.0:
        return (
            f"the DC resistance given ({format_eng(rdc, 'ohm')}) and the sweep disagree: the fitted {prior.key} is "
            f"{chosen.prior_pull:+.1f} standard uncertainties from it (skin effect or a different part?)"
        )
    return None


def adequacy_note(topology: str, energy: np.ndarray, rational_rms: float, valid_band_hz: tuple[float, float],
                  n_valid: int, n_points: int, refitted: bool) -> str:
    """Return the note on a circuit that describes the full band worse than the rational model.

    Parameters
    ----------
    topology : str
        The circuit's name.
    energy : numpy.ndarray
        Its ``|normalised residual|^2`` over the full band.
    rational_rms : float
        The rational model's RMS normalised residual.
    valid_band_hz : tuple of float
        The band where the circuit holds.
    n_valid : int
        Number of points in it (0: nowhere).
    n_points : int
        Number of points of the sweep.
    refitted : bool
        Whether the circuit was refitted over a sub-band.
    """
    rms_full = float(math.sqrt(np.mean(energy)))
    if n_valid <= 0:
        return (
            f"the {topology} does not describe the data to within the noise anywhere in the band "
            f"(normalised RMS residual {format_eng(rms_full, '', 3)}, rational model {format_eng(rational_rms, '', 3)}); its values are not reliable"
        )
    if refitted or n_valid < n_points:
        return (
            f"the {topology} describes the data to within the noise only from "
            f"{format_eng(valid_band_hz[0], 'Hz')} to {format_eng(valid_band_hz[1], 'Hz')} (normalised RMS residual {format_eng(rms_full, '', 3)} over the "
            f"full band, rational model {format_eng(rational_rms, '', 3)}); the rational model describes the full band"
        )
    return (
        f"the {topology} fits worse than the rational model (normalised RMS residual "
        f"{format_eng(rms_full, '', 3)} against {format_eng(rational_rms, '', 3)}); its values carry a model error beyond the noise"
    )


def ground_loop_warning(sweep: Sweep, identification: Identification) -> str | None:
    """Return a warning when a shunt-thru capacitor shows a ground-loop floor.

    A capacitor measured shunt-thru whose real part, below a fifth of its
    series resonance, sits on a flat floor above the identified ESR, by
    more than five standard uncertainties of the floor and by more than
    half the ESR, is flagged as the cable-shield ground-loop error (module
    notes).  The floor is judged over the lowest decade of the sweep: a
    constant there must fit the excess better than ``1/f`` (dielectric
    loss, ``Re Z = D / (w C)``; leakage rises faster still), which is not
    flagged.

    Parameters
    ----------
    sweep : Sweep
        The measurement.
    identification : Identification
        Its identification (model ``"capacitor"`` for the check to apply).

    Returns
    -------
    str or None
        One line naming the floor, its band and the remedy; None when the
        check does not apply or finds nothing.
    """
    if sweep.connection != "shunt-thru" or identification.model != "capacitor":
        return None
    params = {k: float(v.value) for k, v in identification.parameters.items()}
    # The constant-loss capacitor's series plateau ESR_0 plays the ESR here.
    esr_key = "ESR" if "ESR" in params else "ESR_0"
    if not {"C", "ESL", esr_key} <= set(params):
        return None
    c, esl, esr = params["C"], params["ESL"], params[esr_key]
    srf = getattr(getattr(identification, "srf", None), "value_hz", None)
    if srf is None or not np.isfinite(srf):
        srf = 1.0 / (2 * math.pi * math.sqrt(abs(esl * c))) if esl > 0 and c > 0 else None
    if srf is None:
        return None
    f = np.asarray(sweep.f_hz, dtype=float)
    low = f < srf / 5.0
    if low.sum() < 8:
        return None
    fl = f[low]
    # The excess of the measured real part over the ESR: a ground-loop floor
    # is flat in the lowest decade, dielectric loss (Re Z = D / (w C)) rises
    # as 1/f and leakage as 1/f^2.  Two one-parameter weighted fits decide.
    resid = np.asarray(sweep.z_ohm)[low].real - esr
    w = 2.0 / np.asarray(sweep.sigma_ohm, dtype=float)[low] ** 2  # 1 / var(Re Z)
    dec = fl <= 10.0 * fl[0]
    if dec.sum() < 5:
        dec = np.ones(fl.size, bool)
    r, wd, fd = resid[dec], w[dec], fl[dec]
    floor = float(np.sum(wd * r) / np.sum(wd))
    std = float(1.0 / math.sqrt(np.sum(wd)))
    chi_flat = float(np.sum(wd * (r - floor) ** 2))
    k = float(np.sum(wd * r / fd) / np.sum(wd / fd**2))
    chi_inv = float(np.sum(wd * (r - k / fd) ** 2))
    if not (floor > 5.0 * std and floor > 0.5 * abs(esr) and chi_flat < chi_inv):
        return None
    above = (resid > 0.5 * floor) & (resid > 2.0 / np.sqrt(w))
    top = float(fl[above][-1]) if above.any() else float(fd[-1])
    return (
        f"shunt-thru: the real part up to {format_eng(top, 'Hz')} sits on a flat floor "
        f"{format_eng(floor, 'ohm')} (± {format_eng(std, 'ohm')}) above the ESR (fitted {format_eng(esr, 'ohm')}): "
        "the known cable-shield ground-loop error of shunt-thru, not ESR; break the loop (ferrite cores or a "
        "common-mode choke on a port cable, or an isolating transformer) and measure again"
    )

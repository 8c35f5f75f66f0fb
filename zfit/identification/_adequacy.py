"""Adequacy that does not flatter: where the reported circuit holds within the noise, and its model error.

Where it holds
    The normalised residual ``|Z_model - Z| / sigma`` (on S for analyser
    data) has mean square 1 where only noise is left.  Its local RMS over a
    window of ``WINDOW_DECADES`` either side in log-frequency (at least
    ``WINDOW_MIN_POINTS`` points, so that a window of pure noise exceeds the
    threshold with a probability of about 1e-4: chi-square of 30 degrees
    of freedom over 30 above 2.25) is compared with ``HOLDS_RMS`` = 1.5: the
    circuit holds where it is at or below.  The band where it holds is the
    longest run of such points measured in log-frequency span (decades), not
    in point count, so that the dense top of a linear sweep does not
    outweigh its sparse low decades.  The circuit 'holds over the whole
    band' only when that run is the whole sweep.

Model error
    A circuit that is not the part's exact form leaves a structured residual,
    and the covariance of the fit, which assumes the form exact, understates
    the uncertainty of its parameters.  Each parameter's standard
    uncertainty is multiplied by the Birge ratio ``sqrt(chi2_red)`` [1]_
    [2]_, the factor that makes the residual consistent with the stated
    noise, when the reduced chi-square of the fit exceeds what noise alone
    gives at three standard deviations (``1 + 3 sqrt(2/dof)``); below that
    the factor is 1, so a part the circuit describes exactly keeps the
    uncertainty the noise model predicts.  It is the simplest model-error
    term that needs no further fit (a bootstrap over sub-bands would need
    one per sub-band) and it is the one the fitted residual itself supports.

References
----------
.. [1] R. T. Birge, "The calculation of errors by the method of least
   squares", Phys. Rev. 40(2), 207-227, 1932, doi:10.1103/PhysRev.40.207.
.. [2] JCGM 100:2008 (GUM), annex H.3 (a Type A uncertainty from the
   residual of a fit).
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass

import numpy as np

__all__ = ["Adequacy", "adequacy", "adequacy_notes", "HOLDS_RMS", "WINDOW_DECADES", "WINDOW_MIN_POINTS"]

#: Local RMS of the normalised residual up to which the circuit holds (issue 12: 'say > 1.5').
HOLDS_RMS = 1.5
#: Half-width of the local window in decades.
WINDOW_DECADES = 0.25
#: Fewest points in a window.
WINDOW_MIN_POINTS = 15


@dataclass(frozen=True)
class Adequacy:
    """Where the reported circuit holds and the model-error factor of its uncertainties.

    Attributes
    ----------
    holds_band_hz : tuple of float
        The longest band (in decades) where the local RMS residual is at or
        below `HOLDS_RMS`; (NaN, NaN) where it holds nowhere.
    holds_decades, band_decades : float
        Its span and the sweep's, in decades.
    whole_band : bool
        Whether it holds over the whole sweep.
    worst_rms : float
        The largest local RMS residual, and `worst_hz` where.
    worst_hz : float
    model_error_scale : float
        The Birge ratio sqrt(chi2_red) that the parameter uncertainties carry
        beyond what noise alone explains (1 when the residual is consistent
        with noise); the least squares applies it (`zfit.fit._lsq.refine`).
    """

    holds_band_hz: tuple[float, float]
    holds_decades: float
    band_decades: float
    whole_band: bool
    worst_rms: float
    worst_hz: float
    model_error_scale: float

    def to_dict(self) -> dict:
        """Return the adequacy keys of the ``fit`` object."""
        def num(x):
            return float(x) if math.isfinite(x) else None

        return {
            "holds_band_hz": [num(self.holds_band_hz[0]), num(self.holds_band_hz[1])],
            "holds_decades": num(self.holds_decades), "band_decades": num(self.band_decades),
            "holds_over_whole_band": bool(self.whole_band), "holds_rms_threshold": HOLDS_RMS,
            "worst_local_rms": num(self.worst_rms), "worst_local_rms_hz": num(self.worst_hz),
            "model_error_scale": num(self.model_error_scale),
        }


def _local_rms(f, energy):
    x = np.log10(f)
    out = np.empty(f.size)
    for i in range(f.size):
        d = np.abs(x - x[i])
        h = max(WINDOW_DECADES, np.sort(d)[min(WINDOW_MIN_POINTS, f.size) - 1])
        out[i] = math.sqrt(float(np.mean(energy[d <= h])))
    return out


def adequacy(f_hz, energy, reduced_chi2: float, dof: int) -> Adequacy:
    """Return where the circuit holds and its model-error factor.

    Parameters
    ----------
    f_hz : array_like
        The sweep's frequencies (increasing).
    energy : array_like
        ``|normalised residual|^2`` of the circuit at each point (mean 1 for noise).
    reduced_chi2 : float
        Reduced chi-square of the circuit's fit.
    dof : int
        Its degrees of freedom.
    """
    f = np.asarray(f_hz, float)
    e = np.asarray(energy, float)
    rms = _local_rms(f, e)
    ok = rms <= HOLDS_RMS
    best, span = (None, None), 0.0
    i = 0
    while i < f.size:
        if not ok[i]:
            i += 1
            continue
        j = i
        while j + 1 < f.size and ok[j + 1]:
            j += 1
        s = math.log10(f[j] / f[i])
        if best[0] is None or s > span:
            best, span = (i, j), s
        i = j + 1
    band = math.log10(f[-1] / f[0])
    holds = (math.nan, math.nan) if best[0] is None else (float(f[best[0]]), float(f[best[1]]))
    k = int(np.argmax(rms))
    chi = float(reduced_chi2)
    scale = math.sqrt(chi) if dof > 0 and math.isfinite(chi) and chi > 1.0 + 3.0 * math.sqrt(2.0 / dof) else 1.0
    return Adequacy(holds, span if best[0] is not None else 0.0, band, bool(ok.all()), float(rms[k]),
                    float(f[k]), scale)


def adequacy_notes(adq: Adequacy, topology: str) -> list[str]:
    """Return the warning of a circuit that does not hold within the noise over the whole band.

    The model-error factor is not a warning: it is in the ``fit`` object and
    in the table beside the uncertainties it scales.
    """
    from .._units import format_eng

    if adq.whole_band:
        return []
    where = ("nowhere" if not math.isfinite(adq.holds_band_hz[0]) else
             f"from {format_eng(adq.holds_band_hz[0], 'Hz')} to {format_eng(adq.holds_band_hz[1], 'Hz')} "
             f"({adq.holds_decades:.2g} of {adq.band_decades:.2g} decades)")
    return [
        f"the {topology} does not hold within the noise over the whole band: its local RMS residual reaches "
        f"{adq.worst_rms:.3g} at {format_eng(adq.worst_hz, 'Hz')} (> {HOLDS_RMS}); it holds {where}"
    ]

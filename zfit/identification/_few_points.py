"""Identification from a few points: what an LCR meter's standard frequencies can resolve.

An LCR meter is used at a handful of frequencies (100 Hz, 120 Hz, 1 kHz,
10 kHz, 100 kHz): too few for vector fitting (which needs more real
equations than the unknowns of its poles and residues) and for a band of
validity judged over sliding windows.  What the points determine is found
by weighted least squares (`zfit.fit._lsq.refine`) with fewer parameters
than points:

* the series circuit of the family, ``R_s + sL`` or ``ESR + 1/(sC)``, from
  two points up (two complex points give four real equations for two
  unknowns); with two points the series equivalent at each point is stated
  too, with its uncertainty;
* the family's three-element circuit (C_p across the winding, ESL in series
  with the capacitor) from three points up, kept only when the points
  resolve the third element: its relative uncertainty below 1/3 and the
  chi-square lower by more than 9 (a three-sigma improvement for one added
  parameter).

Otherwise the third element is reported at a value with no effect in the
band, flagged as not resolved with the smallest value the points could
resolve (`zfit.fit._fisher`), and the SRF as a lower bound only: a band that
ends below the resonance cannot place it.

The uncertainties are those of the noise model, inflated by the reduced
chi-square where that exceeds 1 but never shrunk by it: with two to eight
degrees of freedom the reduced chi-square itself scatters by a factor of
two (its standard deviation is ``sqrt(2 / dof)``), so a lucky draw must
not promise an accuracy the instrument does not have (the Birge ratio used
only to inflate: common practice in the adjustment of constants).

References
----------
.. [1] K. Levenberg, "A method for the solution of certain non-linear
   problems in least squares", Quart. Appl. Math. 2(2), 164-168, 1944.
.. [2] R. T. Birge, "The calculation of errors by the method of least
   squares", Phys. Rev. 40(2), 207-227, 1932.
"""

from __future__ import annotations

import dataclasses
import math
from typing import TYPE_CHECKING

import numpy as np

from .._errors import FitError
from .._units import format_eng
from ..fit._circuits import Circuit, circuits_of

if TYPE_CHECKING:
    from ..data._sweep import Sweep
    from ..fit._lsq import Refinement
    from ._result import Identification

__all__ = ["FEW_POINTS", "few_point_identification"]

#: Below this many points the sweep is identified here: vector fitting and
#: the sliding-window band rules need more.
FEW_POINTS = 10

# An element that is not resolved is reported where its resonance with the
# main element lies this many times above the top of the band: its effect
# in the band is below 1e-12 of |Z|.
_FAR = 1e6

_TWO_PI = 2.0 * math.pi


class _SeriesCircuit(Circuit):
    """The two-element series circuit of a family: ``R_s + sL`` or ``ESR + 1/(sC)``."""

    def __init__(self, family: str):
        object.__setattr__(self, "family", family)
        object.__setattr__(self, "topology", "series R_s-L" if family == "inductor" else "series C-ESR")
        object.__setattr__(self, "keys", ("L", "R_s") if family == "inductor" else ("C", "ESR"))
        object.__setattr__(self, "optional", None)

    def impedance(self, p, f_hz) -> np.ndarray:
        s = 1j * _TWO_PI * np.asarray(f_hz, dtype=float)
        if self.family == "inductor":
            return p[1] + s * p[0]
        return p[1] + 1.0 / (s * p[0])

    def log_jacobian(self, p, f_hz) -> np.ndarray:
        s = 1j * _TWO_PI * np.asarray(f_hz, dtype=float)
        one = np.ones_like(s)
        main = s * p[0] if self.family == "inductor" else -1.0 / (s * p[0])
        return np.stack([main, one * p[1]], axis=-1)

    def srf_hz(self, p) -> float | None:
        return None

    def starts(self, f_hz, z_ohm, sigma_ohm, rational=None, spread: bool = True) -> list:
        """Series equivalents at each point, their median, and that median spread by decades."""
        w = _TWO_PI * np.asarray(f_hz, dtype=float)
        z = np.asarray(z_ohm, dtype=complex)
        main = z.imag / w if self.family == "inductor" else -1.0 / (w * z.imag)
        good = main[np.isfinite(main) & (main > 0)]
        m = float(np.median(good)) if good.size else 1e-6
        r = float(np.median(np.abs(z.real)))
        r = r if r > 0 else 1e-3 * float(np.median(np.abs(z)))
        return [np.array([m * a, r * b]) for a in (1.0, 0.5, 2.0) for b in (1.0, 0.1, 10.0)]


def _series_values(family: str, f_hz, z_ohm, sigma_ohm) -> list[str]:
    """Return the series equivalent at each point with its uncertainty, as text.

    ``L_s = X / w`` or ``C_s = -1 / (w X)`` and ``R_s = R``; each of R and X
    carries ``sigma / sqrt(2)`` of complex-circular noise (GUM, JCGM
    100:2008, 5.1, to first order).
    """
    out = []
    for f, z, sig in zip(f_hz, z_ohm, sigma_ohm):
        w = _TWO_PI * f
        sx = sig / math.sqrt(2.0)
        if family == "inductor":
            main = format_eng(z.imag / w, "H", digits=4) + " ± " + format_eng(sx / w, "H", digits=2)
            name = "L_s"
        else:
            c = -1.0 / (w * z.imag)
            main = format_eng(c, "F", digits=4) + " ± " + format_eng(abs(c) * sx / abs(z.imag), "F", digits=2)
            name = "C_s"
        res = "R_s" if family == "inductor" else "ESR"
        out.append(f"at {format_eng(f, 'Hz')}: {name} = {main}, {res} = {format_eng(z.real, 'ohm', digits=4)} ± "
                   f"{format_eng(sx, 'ohm', digits=2)}")
    return out


def _floor_scaled(ref: Refinement) -> Refinement:
    """The fit with its covariance scaled by max(reduced chi-square, 1) instead of the reduced chi-square."""
    red = ref.reduced_chi2
    if not (math.isfinite(red) and red > 0):
        return ref
    return dataclasses.replace(ref, log_cov=ref.log_cov * (max(red, 1.0) / red))


def _embedded(series: Refinement, full: Circuit, f_top: float) -> Refinement:
    """The series fit as the family's three-element circuit, the third element without effect in the band."""
    main, loss = float(series.values[0]), float(series.values[1])
    third = 1.0 / (main * (_TWO_PI * _FAR * f_top) ** 2)
    values = np.array([main, loss, third])
    cov = np.zeros((3, 3))
    cov[:2, :2] = series.log_cov
    # Held, not fitted: no variance of its own (its std is reported as null,
    # and it moves no figure read in the band).
    return dataclasses.replace(series, circuit=full, values=values, log_cov=cov)


def few_point_identification(sweep: Sweep, model: str, at, rdc: float | None, rdc_std: float | None
                             ) -> tuple[Identification, list[str]]:
    """Return the identification of a sweep of fewer than `FEW_POINTS` points, and its notes.

    Parameters
    ----------
    sweep : Sweep
        The measurement (at least 2 points).
    model : {'auto', 'inductor', 'capacitor'}
        The family asked for (``auto``: by the sign of the reactance at the
        lowest frequencies).
    at : tuple of float
        Spot frequencies (Hz).
    rdc, rdc_std : float or None
        A measured DC resistance and its uncertainty (a prior on R_s / ESR).

    Raises
    ------
    FitError
        When not even the series circuit can be fitted.
    """
    from ..fit._lsq import Observation, refine
    from ._candidates import rdc_prior
    from ._criteria import bic
    from ._diagnostics import parameter_notes, rdc_note
    from ._estimates import correlation_of, parameter_estimates, resolution_of
    from ._merit import SRF, Estimate, ModelEvaluator, srf_of_circuit
    from ._pipeline import readings
    from ._rational import looks_capacitive
    from ._result import Candidate, FitQuality, Identification, ParameterMap

    family = model if model in ("inductor", "capacitor") else ("capacitor" if looks_capacitive(sweep) else "inductor")
    obs = Observation.from_sweep(sweep)
    n = sweep.n_points
    rows = 2 * n
    band = sweep.band_hz
    prior = rdc_prior(family, rdc, rdc_std)
    series_circuit = _SeriesCircuit(family)
    full = circuits_of(family)[0]
    third_key = full.keys[2]
    try:
        series = refine(series_circuit, obs, series_circuit.starts(sweep.f_hz, sweep.z_ohm, sweep.sigma_ohm),
                        prior=prior, n_best=3)
    except FitError as exc:
        raise FitError(f"{sweep.source}: {n} points: not even the {series_circuit.topology} could be fitted ({exc})")
    series = _floor_scaled(series)
    fmt_pts = ", ".join(format_eng(float(f), "Hz") for f in sweep.f_hz)
    notes = [f"{n} points ({fmt_pts}): too few for vector fitting (at least {FEW_POINTS}); "
             f"the circuit values they determine are fitted by weighted least squares"]
    if n == 2:
        notes.append("2 points: the series equivalent at each point, "
                     + "; ".join(_series_values(family, sweep.f_hz, sweep.z_ohm, sweep.sigma_ohm)))

    ranked = [(bic(series.chi2, rows, 2), series)]
    chosen = resolved_third = None
    if rows - 3 >= 3:
        # The third element from the series fit's values and a spread of resonances above the band.
        starts = [np.array([series.values[0], series.values[1],
                            1.0 / (series.values[0] * (_TWO_PI * k * band[1]) ** 2)]) for k in (1.5, 3.0, 10.0, 30.0)]
        try:
            three = _floor_scaled(refine(full, obs, starts, prior=prior, n_best=4))
        except FitError:
            three = None
        if three is not None:
            ranked.append((bic(three.chi2, rows, 3), three))
            rel3 = float(np.sqrt(max(three.log_cov[2, 2], 0.0)))
            if rel3 < 1.0 / 3.0 and series.chi2 - three.chi2 > 9.0:
                chosen = resolved_third = three
    if chosen is None:
        chosen = _embedded(series, full, band[1])
        est = parameter_estimates(chosen, sweep)
        unknown = chosen.log_cov.copy()
        unknown[2, 2] = math.inf
        limit = resolution_of(dataclasses.replace(chosen, log_cov=unknown), sweep)[third_key][1]
        third = dataclasses.replace(est[third_key], std=None, resolved=False, resolution_limit=limit)
        est = ParameterMap((k, third if k == third_key else v) for k, v in est.items())
        # The top of the band is the only bound the points set: the resolution
        # limit of the third element is where its uncertainty reaches 1/3, not
        # a bound on its value, so no SRF bound is derived from it.
        srf = SRF(None, None, "above-band", band[1], "circuit")
        what = (f"smallest value they would resolve: {format_eng(limit, third.unit)}" if limit is not None
                else "no resolvable value")
        notes.append(
            f"the points do not resolve {third_key} ({what}) nor the SRF: a band that ends at "
            f"{format_eng(band[1], 'Hz')} sets a lower bound only, SRF > {format_eng(band[1], 'Hz')}; "
            f"{series_circuit.topology} reported"
        )
    else:
        est = parameter_estimates(chosen, sweep)
        notes.extend(parameter_notes(est, rdc))
        srf = srf_of_circuit(chosen, band)
    pull = rdc_note(chosen, prior, rdc)
    if pull is not None:
        notes.append(pull)
    evaluator = ModelEvaluator(band, rational=None, refinement=chosen)
    read, spot_notes = readings(family, srf, evaluator, at, "extrapolated from the circuit")
    notes.extend(spot_notes)
    fit = FitQuality(
        rms_normalized_residual=chosen.rms_normalized_residual, points=n, f_min_hz=band[0], f_max_hz=band[1],
        valid_band_hz=band, fitted_band_hz=band, reduced_chi_square=chosen.reduced_chi2,
        domain="S" if obs.on_s else "Z", starts=chosen.starts,
    )
    reported = 2 if resolved_third is None else 3
    candidates = tuple(
        Candidate(ref.circuit.topology, ref.circuit.n_params, b, ref.rms_normalized_residual,
                  chosen=(ref.circuit.n_params == reported))
        for b, ref in sorted(ranked, key=lambda t: t[0])
    )
    topology = chosen.circuit.topology if reported == 3 else series_circuit.topology
    with np.errstate(all="ignore"):
        corr = correlation_of(chosen) if reported == 3 else _padded_correlation(series)
    result = Identification(
        sweep=sweep, model=family, topology=topology, parameters=est, rational=None, srf=srf, fit=fit,
        spot=read.spot, figures=read.merit, curves=read.curves, candidates=candidates, correlation=corr,
        rdc=None if rdc is None else Estimate(rdc, rdc_std, "ohm"), refinement=chosen,
    )
    return result, notes


def _padded_correlation(series: Refinement) -> np.ndarray:
    """The series fit's correlation, with the undetermined third element uncorrelated."""
    from ._estimates import correlation_of

    c = np.eye(3)
    c[:2, :2] = correlation_of(series)
    return c

"""The valid band of identification: where the chosen circuit holds, and its refit there.

A circuit's band of validity is the widest run of points (in log-frequency
span, so that a linear sweep is judged as a log sweep of the same part) where
its residual is within the noise (`zfit.identification._criteria.valid_mask`,
compared with the rational model's over sliding windows).  Where that is
not nearly the whole band, the circuit is refitted over sub-bands (the
valid run found, the band below each further resonance of the rational
model, the upper or lower part of the band, and the widest band from either
end found by bisection) and the widest valid band wins; the rational model
stays the description of the full band.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from .._errors import FitError
from ._candidates import circuit_bic
from ._criteria import log_cells, longest_run, span_of, valid_mask

if TYPE_CHECKING:
    from ..data._sweep import Sweep
    from ..fit._lsq import Observation, Refinement
    from ..fit._vectfit import RationalModel
    from ._candidates import Choice

__all__ = ["ValidBand", "valid_band", "band_decades", "widest_family_band"]


@dataclass(frozen=True)
class ValidBand:
    """The circuit reported and the band where it holds.

    Attributes
    ----------
    chosen : Refinement
        The circuit fit (refitted over a sub-band where that is wider).
    energy : numpy.ndarray
        Its ``|normalised residual|^2`` at every sweep point.
    start, stop : int
        Index range of the valid band (``start == stop`` where none).
    fitted_mask : numpy.ndarray of bool or None
        The points it was fitted to (None: all).
    """

    chosen: Refinement
    energy: np.ndarray
    start: int
    stop: int
    fitted_mask: np.ndarray | None = None

    def inside(self, n: int) -> np.ndarray:
        """Return the mask of the valid band over `n` points."""
        m = np.zeros(n, bool)
        m[self.start:self.stop] = True
        return m


def band_decades(f_hz, start: int, stop: int) -> tuple[float, float]:
    """Return the decades of points ``start:stop`` and of the whole sweep (log-frequency cells summed)."""
    cells = log_cells(f_hz) / math.log(10.0)
    return span_of(cells, start, stop), float(cells.sum())


def valid_band(sweep: Sweep, obs: Observation, picked: Choice, e_rat: np.ndarray | None,
               rational: RationalModel | None, margin: float) -> ValidBand:
    """Return the band where the chosen circuit holds, refitting it over a sub-band where that is wider.

    Parameters
    ----------
    sweep : Sweep
        The measurement.
    obs : Observation
        The sweep as the circuits see it.
    picked : Choice
        The circuit chosen over the full band.
    e_rat : numpy.ndarray or None
        The rational model's ``|normalised residual|^2`` (the noise level it reaches).
    rational : RationalModel or None
        The rational model (its resonances bound the sub-bands tried).
    margin : float
        BIC difference the optional element must win by in a sub-band.
    """
    from ..fit._circuits import circuits_of
    from ..fit._lsq import refine
    from ..fit._models import is_lumped

    family, chosen, prior = picked.family, picked.chosen, picked.prior
    band = sweep.band_hz

    def residual_energy(ref):
        return np.abs(obs.normalized(ref.impedance(sweep.f_hz))) ** 2

    f = sweep.f_hz
    n = sweep.n_points
    cells = log_cells(f)
    total = float(cells.sum())

    def run_of(e):
        return longest_run(valid_mask(e, e_rat, f), cells)

    # Spans in mean cells, to 0.01: on an evenly log-spaced sweep these are
    # point counts, and runs of equal count tie whatever the rounding of the
    # printed frequencies (the first found wins, as by points).
    cell = total / n

    def width(run):
        return round(span_of(cells, run[0], run[1]) / cell, 2)

    def weight(mask):
        return round(float(cells[mask].sum()) / cell, 2)

    e_c = residual_energy(chosen)
    i0, i1 = run_of(e_c)
    fitted_mask = None
    k = chosen.circuit.n_params
    # A count of points, not a span: the equations a fit needs.
    min_pts = max(10, 4 * k + 2)
    if width((i0, i1)) < 0.97 * n:
        # A loss model is refitted as itself: it has no optional element to decide.
        base, full = circuits_of(family) if is_lumped(chosen.circuit) else (chosen.circuit, None)

        def sub_fit(circuit, mask, seed=None):
            sub = obs.subset(mask)
            starts = ([] if seed is None else [seed]) + circuit.starts(sub.f_hz, sub.z_ohm, sub.sigma_ohm, rational)
            try:
                ref = refine(circuit, sub, starts, prior=prior, n_best=2)
            except FitError:
                return None
            e = residual_energy(ref)
            return ref, e, run_of(e), mask

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
            if got is not None and (best is None or (width(got[2]), weight(got[3])) >
                                    (width(best[2]), weight(best[3]))):
                best = got

        for m in masks:
            if m.sum() >= min_pts:
                consider(sub_fit(base, m))
        # The widest band from either end over which the circuit, fitted
        # there, stays within the noise: a bisection on the other end.
        for from_bottom in (True, False):
            good, lo_n, hi_n = None, min_pts, n - 1
            # Down to a 64th of the band's log span (and 2 points).
            while hi_n - lo_n > 2 and (span_of(cells, lo_n, hi_n) if from_bottom
                                       else span_of(cells, n - hi_n, n - lo_n)) > total / 64:
                mid = (lo_n + hi_n) // 2
                m = np.zeros(n, bool)
                if from_bottom:
                    m[:mid] = True
                else:
                    m[n - mid:] = True
                got = sub_fit(chosen.circuit, m)
                if got is not None and cells[m][valid_mask(got[1], e_rat, f)[m]].sum() >= 0.97 * cells[m].sum():
                    good, lo_n = got, mid
                else:
                    hi_n = mid
            consider(good)
        if best is not None and width(best[2]) > width((i0, i1)):
            # Refit over the valid run found, and decide the optional element there.
            j0, j1 = best[2]
            m = np.zeros(n, bool)
            m[j0:j1] = True
            if m.sum() >= min_pts:
                got_b = sub_fit(base, m, best[0].values) or best
                got_f = None if full is None else sub_fit(
                    full, m, np.append(got_b[0].values, np.max(np.abs(sweep.z_ohm)) * 10) if family == "inductor" else None)
                pick = got_b
                if got_f is not None:
                    rows_m = 2 * int(m.sum())
                    if circuit_bic(got_f[0], rows_m) < circuit_bic(got_b[0], rows_m) - margin:
                        pick = got_f
                if width(pick[2]) >= width(best[2]):
                    best = pick
            chosen, e_c, (i0, i1), fitted_mask = best
    if i1 <= i0:
        i0, i1 = 0, 0
    return ValidBand(chosen, e_c, i0, i1, fitted_mask)


def widest_family_band(sweep: Sweep, obs: Observation, fits, picked: Choice, vb: ValidBand, e_rat, rational,
                       margin: float) -> tuple[Choice, ValidBand]:
    """Return the family whose valid band is wider in log frequency, when the chosen one holds over little of it.

    The family is chosen by the BIC over all points; a linear sweep puts 90 %
    of them in its top decade, where the part may look like the other
    family (above its SRF).  When the chosen circuit holds over less than a
    quarter of the band's log span, the other family's circuit is tried for
    its valid band, and the family valid over the wider span is reported.

    Parameters
    ----------
    sweep, obs, e_rat, rational, margin
        As for `valid_band`.
    fits : CandidateFits
        The circuits fitted for each family.
    picked : Choice
        The family chosen by the BIC.
    vb : ValidBand
        Its valid band.
    """
    from ._candidates import Choice, circuit_bic, rdc_prior

    own, total = band_decades(sweep.f_hz, vb.start, vb.stop)
    others = [fam for fam in fits.base if fam != picked.family]
    if own >= 0.25 * total or not others:
        return picked, vb
    other = others[0]
    rows = 2 * sweep.n_points
    base, opt = fits.base[other], fits.optional.get(other)
    chosen = opt if opt is not None and circuit_bic(opt, rows) < circuit_bic(base, rows) - margin else base
    prior = None if picked.prior is None else rdc_prior(other, picked.prior.value, picked.prior.std)
    alt = Choice(other, chosen, prior, picked.ranked)
    alt_vb = valid_band(sweep, obs, alt, e_rat, rational, margin)
    if band_decades(sweep.f_hz, alt_vb.start, alt_vb.stop)[0] > own:
        return alt, alt_vb
    return picked, vb


def lumped_if_as_wide(sweep: Sweep, obs: Observation, fits, picked: Choice, vb: ValidBand, e_rat, rational,
                      margin: float, rows: int) -> tuple[Choice, ValidBand]:
    """Return the lumped circuit instead of a loss model that holds over no wider a band.

    The BIC over all points can prefer a loss model on a part that neither
    describes over the whole band (a dielectric absorption below a few
    hundred hertz, say); then the band each holds decides, in log-frequency
    span, and a tie goes to the lumped circuit, which has fewer parameters.

    Parameters
    ----------
    sweep, obs, e_rat, rational, margin
        As for `valid_band`.
    fits : CandidateFits
        The circuits fitted for each family.
    picked : Choice
        The circuit chosen by the BIC.
    vb : ValidBand
        Its valid band.
    rows : int
        Number of real residuals of the full band.
    """
    import dataclasses

    from ..fit._models import is_lumped
    from ._candidates import choice, rdc_prior

    if is_lumped(vb.chosen.circuit) or (vb.start, vb.stop) == (0, sweep.n_points):
        return picked, vb
    lumped = choice(dataclasses.replace(fits, loss={}), rows, margin, None, None, required=picked.family)
    if picked.prior is not None:
        lumped = dataclasses.replace(lumped, prior=rdc_prior(lumped.chosen.circuit, picked.prior.value, picked.prior.std))
    lumped_vb = valid_band(sweep, obs, lumped, e_rat, rational, margin)
    if band_decades(sweep.f_hz, lumped_vb.start, lumped_vb.stop)[0] >= band_decades(sweep.f_hz, vb.start, vb.stop)[0]:
        return lumped, lumped_vb
    return picked, vb

"""The figures of a ferrite bead (or any part whose resistance dominates over a band).

A bead is specified by its impedance, not by an inductance: |Z|, R and X
against frequency, |Z| at spot frequencies (100 MHz is the usual datasheet
figure), and the frequency where R = X, above which the bead absorbs more
than it reflects. All of these are read from the measurement itself
(`zfit.identification._measured`: local smoothing with the per-point
uncertainty; `zfit.identification._crossings`: the R = X crossing of the
raw X - R, whose standard uncertainty is the circular sigma of Z).

The multi-section model (winding resistance with N parallel R-L-C
sections, `zfit.fit._loss_circuits.ResonantSections`) is fitted for N = 1,
2, 3 (each N grown from the fit of N - 1 by one section placed across the
band, then N - 1 refitted from the N fit with each section dropped, so that
every N reaches its best minimum) and the N of lowest Bayesian information criterion
``BIC = chi^2 + k ln(n)`` [1]_ (n residual rows, k parameters) is kept; its
passive network (exact, `zfit.fit._loss_networks.loss_network`) gives the
netlist.

References
----------
.. [1] G. Schwarz, "Estimating the dimension of a model", Ann. Statist.
   6(2), 461-464, 1978, doi:10.1214/aos/1176344136.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

import numpy as np

from .._errors import FitError, ZfitInputError
from ..io._limits_file import figure_name
from ..fit._loss_circuits import ResonantSections
from ..fit._loss_networks import LossNetwork, loss_network
from ..fit._lsq import Observation, refine
from ._crossings import Located, first_falling_crossing
from ._measured import MeasuredFigures, measured_figures, spot_figures

__all__ = ["BeadFigures", "BeadSpot", "BeadModel", "bead_figures", "DEFAULT_BEAD_AT_HZ"]

#: The usual datasheet spot frequency of a bead's impedance.
DEFAULT_BEAD_AT_HZ = 100e6

_TWO_PI = 2.0 * math.pi


@dataclass(frozen=True)
class BeadSpot:
    """|Z|, R and X at one frequency, read from the measurement.

    Attributes
    ----------
    f_hz : float
    in_band : bool
        False when the frequency lies outside the sweep (values NaN).
    z_abs_ohm, r_ohm, x_ohm : float
    std_ohm : float
        Standard uncertainty of each of |Z|, R and X (circular noise).
    """

    f_hz: float
    in_band: bool
    z_abs_ohm: float
    r_ohm: float
    x_ohm: float
    std_ohm: float

    def to_dict(self) -> dict:
        """Return the entry of ``bead.spot``."""
        return dict(self.__dict__)


@dataclass(frozen=True)
class BeadModel:
    """The multi-section model chosen by BIC and its network.

    Attributes
    ----------
    refinement : Refinement
        The fit of `ResonantSections` with the chosen number of sections.
    bic : dict
        BIC by number of sections tried.
    network : LossNetwork
        Its passive R-L-C network over the sweep's band.
    """

    refinement: object
    bic: dict
    network: LossNetwork

    @property
    def n_sections(self) -> int:
        """Number of parallel R-L-C sections."""
        return self.refinement.circuit.n_sections

    def to_dict(self) -> dict:
        """Return ``bead.model``."""
        r = self.refinement
        return {"topology": r.circuit.topology, "n_sections": self.n_sections,
                "parameters": {k: {"value": float(v), "std": float(s), "unit": r.circuit.units[k]}
                               for k, v, s in zip(r.circuit.keys, r.values, r.stds)},
                "reduced_chi2": float(r.reduced_chi2), "bic": {str(k): v for k, v in self.bic.items()},
                "network_max_rel_error": self.network.max_rel_error}


@dataclass(frozen=True)
class BeadFigures:
    """The impedance figures of a bead.

    Attributes
    ----------
    source : str
    measured : MeasuredFigures
        Smoothed R, X (and |Z|) against frequency with uncertainties.
    r_equals_x : Located
        The frequency where R = X (X above R below it).
    spot : tuple of BeadSpot
    model : BeadModel or None
        None when no number of sections could be fitted.
    warnings : tuple of str
    """

    source: str
    measured: MeasuredFigures = field(repr=False)
    r_equals_x: Located
    spot: tuple
    model: BeadModel | None
    warnings: tuple = ()

    def figures(self) -> dict:
        """Return the lot's figures: ``f_RX`` and ``Z_mag@...`` -> ``(value, std)``."""
        out = {}
        if self.r_equals_x.found:
            out["f_RX"] = (self.r_equals_x.value_hz, self.r_equals_x.std_hz)
        for s in self.spot:
            if s.in_band:
                out[figure_name("Z_mag", s.f_hz)] = (s.z_abs_ohm, s.std_ohm)
        return out

    def to_dict(self) -> dict:
        """Return the ``bead`` object of the ``zfit.core/1`` JSON (docs/cores.md)."""
        return {
            "r_equals_x": self.r_equals_x.to_dict(),
            "spot": [s.to_dict() for s in self.spot],
            "model": None if self.model is None else self.model.to_dict(),
        }


def _spot(f, z, sigma, at_hz) -> BeadSpot:
    if not f[0] <= at_hz <= f[-1]:
        return BeadSpot(float(at_hz), False, math.nan, math.nan, math.nan, math.nan)
    sp = spot_figures(f, z, sigma, at_hz)
    r, x = sp["R"].value, sp["X"].value
    return BeadSpot(float(at_hz), True, math.hypot(r, x), r, x, sp["X"].std)


def _section_starts(f, z, n):
    """Starts with the n resonances spread over the band where R is large."""
    r = z.real
    lo, hi = math.log(f[0]), math.log(f[-1])
    k = int(np.argmax(r))
    out = []
    r_dc = max(float(np.min(r[: max(3, f.size // 50)])), 1e-4)
    x_low = max(float(z.imag[0]), 1e-12)
    l_tot = x_low / (_TWO_PI * f[0])
    for spread in (0.5, 1.0, 1.5):
        centres = [math.exp(min(hi, max(lo, math.log(f[k]) + spread * (j - (n - 1) / 2.0)))) for j in range(n)]
        p = [r_dc]
        for fc in centres:
            lk = l_tot / n
            rk = max(float(np.interp(math.log(fc), np.log(f), r)), 1e-2)
            p += [rk, lk, 1.0 / ((_TWO_PI * fc) ** 2 * lk)]
        out.append(np.array(p))
    return out


def _grown_starts(f, z, previous, n_new=12):
    """Starts of N sections from the fit of N - 1: one section added at each of `n_new` log-spaced frequencies.

    The added section has the measured |Z| there as its R and resonates
    there with a characteristic impedance of |Z|/2 or |Z|/10, so that it
    changes the impedance near its resonance only; a greedy growth of the model that
    avoids the local minima of a cold start.
    """
    out = []
    mag = np.abs(z)
    for fk in np.geomspace(f[0], f[-1], n_new + 2)[1:-1]:
        zk = float(np.interp(math.log(fk), np.log(f), mag))
        wk = _TWO_PI * fk
        for share in (0.5, 0.1):
            lk = share * zk / wk
            out.append(np.concatenate([previous, [zk, lk, 1.0 / (wk * wk * lk)]]))
    return out


def _best_refinement(circ, obs, starts, n_refined=6, n_final=3, short_nfev=25):
    """The lowest-chi^2 refinement from the `n_refined` best-ranked starts.

    Each start is first taken a short way on its own (`short_nfev`
    evaluations), then the `n_final` best of those are refined to their
    minimum: not stopped once one reaches the noise, as `refine` does for
    speed, since the number of sections is chosen by BIC, which needs each
    N at its best minimum.
    """
    ranked = []
    for p in starts:
        p = np.asarray(p, float)
        if p.shape != (circ.n_params,) or not np.all(np.isfinite(p)) or np.any(p <= 0):
            continue
        with np.errstate(all="ignore"):
            cost = float(np.sum(np.abs(obs.normalized(circ.impedance(p, obs.f_hz))) ** 2))
        if math.isfinite(cost):
            ranked.append((cost, len(ranked), p))
    ranked.sort(key=lambda t: (t[0], t[1]))

    def run(p, nfev):
        try:
            with np.errstate(all="ignore"):
                return refine(circ, obs, [p], n_best=1, max_nfev=nfev)
        except FitError:
            return None

    short = [r for r in (run(p, short_nfev) for _, _, p in ranked[:n_refined]) if r is not None]
    short.sort(key=lambda r: r.chi2)
    best = None
    for r in short[:n_final]:
        ref = run(r.values, 200)
        if ref is not None and (best is None or ref.chi2 < best.chi2):
            best = ref
    return best


def _sorted_sections(ref):
    """The refinement with its sections in order of rising resonance ``1/(2 pi sqrt(L_k C_k))``."""
    v = ref.values
    n = ref.circuit.n_sections
    order = sorted(range(n), key=lambda k: v[2 + 3 * k] * v[3 + 3 * k], reverse=True)
    perm = [0] + [1 + 3 * k + j for k in order for j in range(3)]
    return replace(ref, values=v[perm], log_cov=ref.log_cov[np.ix_(perm, perm)])


def section_fits(obs, counts=(1, 2, 3)) -> dict:
    """Return ``{n: Refinement}`` of R_dc with n parallel R-L-C sections, each at its best minimum found.

    Grown one section at a time from the fit with one fewer (`_grown_starts`)
    and from starts spread where R is large, then backed down: n sections
    started from the n + 1 fit with each section dropped.  Also the
    resonant-section candidates of `zfit.identify`.

    Parameters
    ----------
    obs : Observation
        The sweep as the circuits see it.
    counts : sequence of int
        The section counts wanted (of 1, 2, 3).
    """
    f, z, s = obs.f_hz, obs.z_ohm, obs.sigma_ohm
    fits = {}
    previous = None
    for n in range(1, max(counts) + 1):
        circ = ResonantSections(n)
        if 2 * f.size <= circ.n_params + 1:
            break
        starts = _section_starts(f, z, n) + circ.starts(f, z, s)
        if previous is not None:
            starts = _grown_starts(f, z, previous) + starts
        ref = _best_refinement(circ, obs, starts, n_refined=len(starts))
        if ref is None:
            continue
        fits[n] = ref
        previous = ref.values
    # Back down: N sections started from the N + 1 fit with one section dropped, so
    # that a smaller model caught in a local minimum gets the valley the larger one found.
    for n in sorted(fits, reverse=True):
        if n - 1 not in fits:
            continue
        circ = fits[n - 1].circuit
        pruned = [np.delete(fits[n].values, [1 + 3 * k, 2 + 3 * k, 3 + 3 * k]) for k in range(n)]
        ref = _best_refinement(circ, obs, pruned, n_refined=n)
        if ref is not None and ref.chi2 < fits[n - 1].chi2:
            fits[n - 1] = ref
    return {n: _sorted_sections(ref) for n, ref in fits.items() if n in counts}


def _fitted_sections(sweep):
    f = sweep.f_hz
    fits = section_fits(Observation.from_sweep(sweep))
    if not fits:
        return None
    bic = {n: float(ref.chi2 + ref.circuit.n_params * math.log(ref.rows)) for n, ref in fits.items()}
    best = min(bic, key=bic.get)
    ref = fits[best]
    return BeadModel(ref, bic, loss_network(ref.circuit, ref.values, (float(f[0]), float(f[-1]))))


def bead_figures(sweep, at=(DEFAULT_BEAD_AT_HZ,), *, model: bool = True) -> BeadFigures:
    """Return |Z|, R, X, the R = X frequency, |Z| at spot frequencies and the multi-section model.

    Parameters
    ----------
    sweep : Sweep
        The bead's impedance (any connection; fixture compensation applied).
    at : sequence of float
        Spot frequencies for |Z| (default 100 MHz); one outside the band is
        reported as such, not extrapolated.
    model : bool
        Fit the multi-section model (False: the measured figures only, as a
        lot's check needs).

    Raises
    ------
    ZfitInputError
        When the sweep has no inductive region: a bead is inductive below
        the band where its loss dominates.
    """
    f, z, sigma = sweep.f_hz, sweep.z_ohm, sweep.sigma_ohm
    fig = measured_figures(f, z, sigma)
    if not np.any(fig.x_ohm > 3.0 * fig.std_ohm):
        raise ZfitInputError("no inductive region: X is nowhere above its noise; a bead is inductive "
                             "below the band where its loss dominates", sweep.source or None)
    warn = []
    cross = first_falling_crossing(f, z.imag - z.real, sigma)
    if not cross.found:
        warn.append("R does not rise above X in band: no R = X frequency"
                    + (" (X stays above R: it lies above the band)" if cross.where == "above-band" else
                       " (R is above X from the lowest frequency)"))
    spots = tuple(_spot(f, z, sigma, float(a)) for a in at)
    for s in spots:
        if not s.in_band:
            warn.append(f"|Z| at {s.f_hz:.4g} Hz: outside the measured band {f[0]:.4g} .. {f[-1]:.4g} Hz")
    fitted = _fitted_sections(sweep) if model else None
    if model and fitted is None:
        warn.append("no multi-section model could be fitted")
    return BeadFigures(sweep.source, fig, cross, spots, fitted, tuple(warn))

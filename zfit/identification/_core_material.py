"""The complex permeability of a wound core and its material figures, from a sweep.

Method
------
The winding on the core is ``Z = (R_dc + j omega L_0 mu(f)) || 1/(j omega C_p)``
with ``mu = mu' - j mu''`` and ``L_0 = mu_0 N^2 / C1`` (`zfit.identification._core_geometry`).
The sweep is first fitted with the relaxing-core circuit
(`zfit.fit._loss_circuits.RelaxingCoreInductor`) to find the winding's
parallel capacitance C_p and, unless it is given (``--rdc``, then a prior
of the fit), its resistance R_dc: both are seen at the ends of the band
(R_dc at the low end, where the core loss vanishes as f^2; C_p at the top).
Then, point by point,

    ``Z_w = Z / (1 - j omega C_p Z)``,  ``Z_core = Z_w - R_dc``,
    ``mu' = X_core / (omega L_0)``,  ``mu'' = R_core / (omega L_0)``.

C_p is removed where the data show it: when the fitted C_p is above three
standard uncertainties; otherwise it is left at zero and said so. When the
permeability then calls for a distribution of relaxation times (Cole-Cole,
`zfit.fit._relaxation`), the Debye circuit has put its misfit into R_dc and
C_p: both are fitted again together with the Cole-Cole core on the
impedance, and the permeability is computed with those.

Band of validity
----------------
The lowest contiguous band where the capacitive correction is small,
``|omega C_p Z_w| <= 0.3`` (near and above the winding's self-resonance
mu would be the small difference of two large numbers), and where the
core is inductive (``X_core > 0``). At least eight points are needed.

Figures
-------
* ``mu_i``, the initial permeability: the low-frequency limit of the
  fitted relaxation (`zfit.fit._relaxation`); the measured mu' at the lowest
  frequency of the band is given beside it (``mu_low``).
* The frequency of the mu'' peak and of ``mu' = mu''`` (the crossover), read
  from the data by the rules of `zfit.identification._crossings`.
* The loss factor ``tan(delta)/mu_i`` with ``tan(delta) = mu''/mu'`` at the
  asked frequencies (default: each decade frequency in the band below half
  the mu'' peak where mu'' is resolved), from the local smoothing of `zfit.identification._measured`.

Uncertainty
-----------
Noise: propagated from the sweep's per-point uncertainty through the C_p
correction (``dZ_w/dZ = 1/(1 - j omega C_p Z)^2``). R_dc and C_p: each
moved by its standard uncertainty and the figures recomputed (central
differences, JCGM 100:2008 5.1.2 with the sensitivity evaluated
numerically). Geometry: the relative uncertainty of C1 scales mu', mu'' and
mu_i (not the frequencies, nor tan(delta)). The components are independent
and added in quadrature.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

import numpy as np

from .._errors import FitError, ZfitInputError
from ..fit._loss_circuits import RelaxingCoreInductor
from ..fit._lsq import Observation, Prior, refine
from ..fit._relaxation import Relaxation, fitted_relaxation, fitted_winding_parts
from ._core_geometry import CoreConstant
from ._crossings import Located, first_falling_crossing, peak_frequency
from ._measured import MeasuredFigures, low_frequency_value, measured_figures, spot_figures

__all__ = ["CoreMaterial", "LossFactor", "core_material", "MAX_CP_CORRECTION", "CORE_SCHEMA"]

#: Largest capacitive correction ``|omega C_p Z_w|`` inside the band of validity.
MAX_CP_CORRECTION = 0.3

#: Name of the JSON contract (docs/cores.md, zfit/schemas/core.schema.json).
CORE_SCHEMA = "zfit.core/1"

_MIN_POINTS = 8
_TWO_PI = 2.0 * math.pi


@dataclass(frozen=True)
class LossFactor:
    """tan(delta) and tan(delta)/mu_i at one frequency.

    Attributes
    ----------
    f_hz : float
    mu_real, mu_real_std, mu_imag, mu_imag_std : float
        mu' and mu'' there, with uncertainties (geometry included).
    tan_delta, tan_delta_std : float
        ``mu''/mu'``.
    tan_delta_over_mu_i, tan_delta_over_mu_i_std : float
        The loss factor.
    """

    f_hz: float
    mu_real: float
    mu_real_std: float
    mu_imag: float
    mu_imag_std: float
    tan_delta: float
    tan_delta_std: float
    tan_delta_over_mu_i: float
    tan_delta_over_mu_i_std: float

    def to_dict(self) -> dict:
        """Return the entry of ``figures.loss_factors``."""
        return dict(self.__dict__)


@dataclass(frozen=True)
class CoreMaterial:
    """The permeability of a core and its material figures (SI units; mu relative).

    Attributes
    ----------
    source : str
        The sweep's file.
    constant : CoreConstant
        The core's effective parameters.
    r_dc_ohm, r_dc_std_ohm : float
        The winding resistance removed.
    r_dc_source : {'given', 'fitted'}
        From ``--rdc`` or from the relaxing-core fit (the low end).
    c_p_f, c_p_std_f : float
        The winding capacitance of the fit (NaN without a fit).
    c_p_removed : bool
        Whether C_p was removed (resolved by the fit).
    winding_fit : Refinement or None
        The relaxing-core circuit fitted to the whole sweep.
    f_hz : numpy.ndarray
        Frequencies of the band of validity.
    mu_real, mu_real_std, mu_imag, mu_imag_std : numpy.ndarray
        Smoothed mu' and mu'' with their total standard uncertainties.
    mu_i, mu_i_std : float
        Initial permeability.
    mu_low, mu_low_std, mu_low_f_hz : float
        Measured mu' at the lowest frequency of the band.
    mu_imag_peak : Located
        Where mu'' peaks.
    mu_imag_peak_value : float
        mu'' there (smoothed, NaN when not in band).
    crossover : Located
        Where mu' = mu''.
    loss_factors : tuple of LossFactor
    relaxation : Relaxation or None
        The fitted relaxation model.
    winding : MeasuredFigures
        |Z|, R and X of the whole sweep (the winding as measured).
    warnings : tuple of str
    """

    source: str
    constant: CoreConstant
    r_dc_ohm: float
    r_dc_std_ohm: float
    r_dc_source: str
    c_p_f: float
    c_p_std_f: float
    c_p_removed: bool
    winding_fit: object
    f_hz: np.ndarray
    mu_real: np.ndarray
    mu_real_std: np.ndarray
    mu_imag: np.ndarray
    mu_imag_std: np.ndarray
    mu_i: float
    mu_i_std: float
    mu_low: float
    mu_low_std: float
    mu_low_f_hz: float
    mu_imag_peak: Located
    mu_imag_peak_value: float
    crossover: Located
    loss_factors: tuple
    relaxation: Relaxation | None
    winding: MeasuredFigures = field(repr=False)
    warnings: tuple = ()

    @property
    def band_hz(self) -> tuple:
        """The band of validity of the permeability."""
        return (float(self.f_hz[0]), float(self.f_hz[-1]))

    def figures(self) -> dict:
        """Return the lot's figures of the core: name -> ``(value, std)`` (SI; names of `zfit._parameters`)."""
        out = {"mu_i": (self.mu_i, self.mu_i_std)}
        if self.mu_imag_peak.found:
            out["f_mu_peak"] = (self.mu_imag_peak.value_hz, self.mu_imag_peak.std_hz)
        if self.crossover.found:
            out["f_mu_cross"] = (self.crossover.value_hz, self.crossover.std_hz)
        return out

    def to_dict(self) -> dict:
        """Return the material part of the ``zfit.core/1`` JSON (docs/cores.md)."""
        fit = None
        if self.winding_fit is not None:
            r = self.winding_fit
            fit = {"topology": r.circuit.topology,
                   "parameters": {k: {"value": float(v), "std": float(s), "unit": r.circuit.units[k]}
                                  for k, v, s in zip(r.circuit.keys, r.values, r.stds)},
                   "reduced_chi2": float(r.reduced_chi2)}
        return {
            "core": self.constant.to_dict(),
            "winding": {
                "r_dc": {"value": self.r_dc_ohm, "std": self.r_dc_std_ohm, "source": self.r_dc_source},
                "c_p": {"value": self.c_p_f, "std": self.c_p_std_f, "removed": self.c_p_removed},
                "fit": fit,
            },
            "band_hz": list(self.band_hz),
            "figures": {
                "mu_i": {"value": self.mu_i, "std": self.mu_i_std},
                "mu_low": {"value": self.mu_low, "std": self.mu_low_std, "f_hz": self.mu_low_f_hz},
                "mu_imag_peak": {**self.mu_imag_peak.to_dict(), "mu_imag": self.mu_imag_peak_value},
                "crossover": self.crossover.to_dict(),
                "loss_factors": [lf.to_dict() for lf in self.loss_factors],
            },
            "relaxation": None if self.relaxation is None else self.relaxation.to_dict(),
            "permeability": {
                "f_hz": self.f_hz.tolist(), "mu_real": self.mu_real.tolist(), "mu_real_std": self.mu_real_std.tolist(),
                "mu_imag": self.mu_imag.tolist(), "mu_imag_std": self.mu_imag_std.tolist(),
            },
        }


def _smoothed_starts(f, z, sigma):
    """Starts of the relaxing-core fit read from the smoothed data (robust to a noisy low end).

    L_i from the smoothed X/omega at the low end; f_r where it has fallen to
    half; C_p such that its correction at the top of the band is 5 %.
    """
    fig = measured_figures(f, z, sigma)
    l_eff = fig.x_ohm / fig.omega
    seen = np.nonzero(fig.x_ohm > 3.0 * fig.std_ohm)[0]
    if seen.size == 0:
        return []
    l_i = float(np.median(l_eff[seen[:5]]))
    half = np.nonzero((l_eff < 0.5 * l_i) & (np.arange(f.size) > seen[0]))[0]
    f_r = float(f[half[0]]) if half.size else float(f[-1])
    r0 = max(float(np.median(fig.r_ohm[seen[:5]])), 1e-3 * abs(complex(fig.r_ohm[seen[0]], fig.x_ohm[seen[0]])))
    c_p = 0.05 / (fig.omega[-1] * fig.abs_z_ohm[-1])
    return [np.array([l_i, l_i / k, f_r, r0, c_p]) for k in (30.0, 100.0)]


def _winding_fit(sweep, rdc, rdc_std):
    circ = RelaxingCoreInductor()
    f, z, s = sweep.f_hz, sweep.z_ohm, sweep.sigma_ohm
    prior = None if rdc is None else Prior("R_dc", rdc, rdc_std)
    starts = _smoothed_starts(f, z, s) + circ.starts(f, z, s)
    if rdc is not None:
        for p in starts:
            p[3] = rdc
    try:
        with np.errstate(all="ignore"):
            return refine(circ, Observation.from_sweep(sweep), starts, prior=prior)
    except FitError:
        return None


def _core_impedance(f, z, sigma, r_dc, c_p):
    """Z_core = Z/(1 - j w C_p Z) - R_dc, its circular sigma, and |j w C_p Z_w|."""
    s = 1j * _TWO_PI * f
    den = 1.0 - s * c_p * z
    zw = z / den
    return zw - r_dc, sigma / np.abs(den) ** 2, np.abs(s * c_p * zw)


def _valid_band(zc, corr):
    ok = (corr <= MAX_CP_CORRECTION) & (zc.imag > 0)
    if not ok[0]:
        return np.zeros(ok.size, bool)
    first_bad = np.nonzero(~ok)[0]
    end = first_bad[0] if first_bad.size else ok.size
    mask = np.zeros(ok.size, bool)
    mask[:end] = True
    return mask


@dataclass(frozen=True)
class _Pass:
    """The permeability and figures for one choice of R_dc and C_p."""

    mu_real: np.ndarray
    mu_imag: np.ndarray
    noise: np.ndarray
    scalars: dict
    relaxation: Relaxation | None
    spots: list


def _spot_mu(fv, zv, sv, l0, at):
    """(mu', mu'', std of each) at each frequency of `at`, by the local smoothing of the core's impedance."""
    out = []
    for fa in at:
        sp = spot_figures(fv, zv, sv, fa)
        wa = _TWO_PI * fa
        out.append((sp["X"].value / (wa * l0), sp["R"].value / (wa * l0), sp["X"].std / (wa * l0)))
    return out


def _one_pass(f, z, sigma, mask, r_dc, c_p, l0, at):
    """The permeability over the band `mask` and its figures, for one choice of R_dc and C_p."""
    zc, sc, _ = _core_impedance(f, z, sigma, r_dc, c_p)
    fv, zv, sv = f[mask], zc[mask], sc[mask]
    w = _TWO_PI * fv
    fig = measured_figures(fv, zv, sv)
    mu1, mu2, noise = fig.x_ohm / (w * l0), fig.r_ohm / (w * l0), fig.std_ohm / (w * l0)
    raw = zv / (1j * w * l0)  # mu' - j mu''
    raw_std = sv / math.sqrt(2.0) / (w * l0)
    rel = fitted_relaxation(fv, raw, raw_std)
    peak = peak_frequency(fv, -raw.imag, raw_std)
    cross = first_falling_crossing(fv, raw.real + raw.imag, math.sqrt(2.0) * raw_std)
    mu_i = rel.mu_i if rel is not None else float(mu1[0])
    spots = _spot_mu(fv, zv, sv, l0, at)
    scalars = {"mu_i": mu_i, "peak": peak.value_hz, "cross": cross.value_hz, "mu_low": float(mu1[0])}
    return _Pass(mu1, mu2, noise, {**scalars, "_peak": peak, "_cross": cross}, rel, spots)


def _default_loss_frequencies(band, peak_hz, f, mu_imag, noise):
    """Decade frequencies in the band below half the mu'' peak where mu'' is resolved (above 2 sigma)."""
    top = 0.5 * peak_hz if math.isfinite(peak_hz) else band[1]
    k0, k1 = math.ceil(math.log10(band[0]) - 1e-9), math.floor(math.log10(min(band[1], top)) + 1e-9)
    out = []
    for k in range(k0, k1 + 1):
        i = int(np.argmin(np.abs(np.log(f) - k * math.log(10.0))))
        if mu_imag[i] > 2.0 * noise[i]:
            out.append(10.0**k)
    return tuple(out)


def core_material(sweep, constant: CoreConstant, *, rdc: float | None = None, rdc_std: float | None = None,
                  at=()) -> CoreMaterial:
    """Return the complex permeability of the core and its material figures.

    Parameters
    ----------
    sweep : Sweep
        The winding's impedance (any connection; fixture compensation applied).
    constant : CoreConstant
        The core's effective parameters and turns (`core_constant`).
    rdc : float, optional
        Measured DC resistance of the winding (ohm); estimated from the low end otherwise.
    rdc_std : float, optional
        Its standard uncertainty (default 1 % of it).
    at : sequence of float
        Frequencies for the loss factor (default: decade frequencies, see the module docstring).

    Raises
    ------
    ZfitInputError
        When the sweep has no inductive region (a winding on a core is
        inductive below its self-resonance), or too few points in it.

    References
    ----------
    .. [1] IEC 60205 (effective parameters; from memory), see `zfit.identification._core_geometry`.
    .. [2] JCGM 100:2008 (GUM), 5.1.2.
    """
    f, z, sigma = sweep.f_hz, sweep.z_ohm, sweep.sigma_ohm
    where = sweep.source or None
    lf = low_frequency_value(f, z, sigma)
    if lf.family != "inductor":
        raise ZfitInputError("no inductive region: the reactance at the low end is not above its noise and "
                             "positive; a winding on a core is inductive below its self-resonance", where)
    warn = []
    if rdc is not None and rdc_std is None:
        rdc_std = 0.01 * rdc
    fit = _winding_fit(sweep, rdc, rdc_std)
    if rdc is not None:
        r_dc, r_dc_std, r_src = float(rdc), float(rdc_std), "given"
    elif fit is not None:
        r_dc, r_dc_std, r_src = float(fit.values[3]), float(fit.stds[3]), "fitted"
    else:
        k = min(3, f.size)
        r_dc, r_dc_std, r_src = float(np.median(z.real[:k])), float(np.max(sigma[:k])), "low end"
        warn.append("the relaxing-core circuit could not be fitted: R_dc is the median R of the lowest points "
                    "and C_p is not removed")
    c_p, c_p_std = (float(fit.values[4]), float(fit.stds[4])) if fit is not None else (math.nan, math.nan)
    l0 = constant.l0_h

    def band_and_pass(r_dc, c_p, c_p_std):
        removed = math.isfinite(c_p_std) and c_p > 3.0 * c_p_std
        c_used = c_p if removed else 0.0
        zc, _, corr = _core_impedance(f, z, sigma, r_dc, c_used)
        mask = _valid_band(zc, corr)
        if mask.sum() < _MIN_POINTS:
            raise ZfitInputError(f"no inductive region of at least {_MIN_POINTS} points where the winding "
                                 f"capacitance is a small correction (|omega C_p Z| <= {MAX_CP_CORRECTION:g})", where)
        return removed, c_used, mask, _one_pass(f, z, sigma, mask, r_dc, c_used, l0, ())

    removed, c_used, mask, nominal = band_and_pass(r_dc, c_p, c_p_std)
    if nominal.relaxation is not None and nominal.relaxation.form == "Cole-Cole":
        # The Debye circuit misreads R_dc and C_p of a distributed relaxation: fit them again with it.
        parts = fitted_winding_parts(f, z, sigma / math.sqrt(2.0), l0, r_dc, c_p if math.isfinite(c_p) else 0.0,
                                     nominal.relaxation, r_dc_fixed=rdc is not None)
        if parts is not None:
            if rdc is None:
                r_dc, r_dc_std, r_src = parts.r_dc_ohm, parts.r_dc_std_ohm, "fitted"
            c_p, c_p_std = parts.c_p_f, parts.c_p_std_f
            removed, c_used, mask, nominal = band_and_pass(r_dc, c_p, c_p_std)
    if fit is not None and not removed:
        warn.append("the winding capacitance C_p is not resolved by the data: it is not removed")
    if not mask[-1]:
        warn.append(f"mu is given up to {f[mask][-1]:.4g} Hz only: above, the winding capacitance dominates "
                    "or the core is no longer inductive")
    fv = f[mask]
    band = (float(fv[0]), float(fv[-1]))
    if at:
        freqs = tuple(float(x) for x in at)
        outside = [x for x in freqs if not band[0] <= x <= band[1]]
        if outside:
            raise ZfitInputError(f"loss factor at {outside[0]:g} Hz: outside the band of validity "
                                 f"{band[0]:.4g} .. {band[1]:.4g} Hz", where)
    else:
        freqs = _default_loss_frequencies(band, nominal.scalars["peak"], fv, nominal.mu_imag, nominal.noise)
    zc, sc, _ = _core_impedance(f, z, sigma, r_dc, c_used)
    nominal = replace(nominal, spots=_spot_mu(fv, zc[mask], sc[mask], l0, freqs))

    # Systematic components: R_dc and C_p each moved by one standard uncertainty.
    shifts = []
    for dr, dc in ((r_dc_std, 0.0), (0.0, c_p_std if removed else 0.0)):
        if not (math.isfinite(dr) and math.isfinite(dc)) or (dr == 0 and dc == 0):
            continue
        hi = _one_pass(f, z, sigma, mask, r_dc + dr, c_used + dc, l0, freqs)
        lo = _one_pass(f, z, sigma, mask, max(r_dc - dr, 0.0), max(c_used - dc, 0.0), l0, freqs)
        shifts.append((hi, lo))

    def sys_sq(get):
        total = 0.0
        for hi, lo in shifts:
            d = 0.5 * (np.asarray(get(hi), float) - np.asarray(get(lo), float))
            total = total + np.where(np.isfinite(d), d, 0.0) ** 2
        return total

    g = constant.rel_std
    n = nominal
    mu1_std = np.sqrt(n.noise**2 + sys_sq(lambda p: p.mu_real) + (g * n.mu_real) ** 2)
    mu2_std = np.sqrt(n.noise**2 + sys_sq(lambda p: p.mu_imag) + (g * n.mu_imag) ** 2)
    rel = n.relaxation
    mu_i = n.scalars["mu_i"]
    fit_sd = rel.mu_i_std if rel is not None else float(n.noise[0])
    mu_i_std = math.sqrt(fit_sd**2 + float(sys_sq(lambda p: p.scalars["mu_i"])) + (g * mu_i) ** 2)
    if rel is None:
        warn.append("no relaxation model could be fitted: mu_i is the measured mu' at the lowest frequency")

    def located(key, loc):
        if not loc.found:
            return loc
        extra = float(sys_sq(lambda p: p.scalars[key]))
        return Located(loc.value_hz, math.sqrt(loc.std_hz**2 + extra), loc.where)

    peak = located("peak", n.scalars["_peak"])
    cross = located("cross", n.scalars["_cross"])
    peak_value = float(np.interp(math.log(peak.value_hz), np.log(fv), n.mu_imag)) if peak.found else math.nan
    losses = []
    for j, fa in enumerate(freqs):
        m1, m2, sd = n.spots[j]
        s1 = math.sqrt(sd**2 + float(sys_sq(lambda p: p.spots[j][0])) + (g * m1) ** 2)
        s2 = math.sqrt(sd**2 + float(sys_sq(lambda p: p.spots[j][1])) + (g * m2) ** 2)
        td = m2 / m1
        td_sys = float(sys_sq(lambda p: p.spots[j][1] / p.spots[j][0]))
        # d(td) = d(mu'')/mu' - td d(mu')/mu', the noise of the two parts independent.
        td_std = math.sqrt((sd / abs(m1)) ** 2 * (1.0 + td * td) + td_sys)
        lf_v = td / mu_i
        lf_std = abs(lf_v) * math.sqrt((td_std / td) ** 2 + (mu_i_std / mu_i) ** 2) if td != 0 else td_std / mu_i
        losses.append(LossFactor(float(fa), m1, s1, m2, s2, td, td_std, lf_v, lf_std))
    winding = measured_figures(f, z, sigma)
    return CoreMaterial(
        source=sweep.source, constant=constant, r_dc_ohm=r_dc, r_dc_std_ohm=r_dc_std, r_dc_source=r_src,
        c_p_f=c_p, c_p_std_f=c_p_std, c_p_removed=bool(removed), winding_fit=fit, f_hz=fv,
        mu_real=n.mu_real, mu_real_std=mu1_std, mu_imag=n.mu_imag, mu_imag_std=mu2_std,
        mu_i=float(mu_i), mu_i_std=float(mu_i_std), mu_low=n.scalars["mu_low"],
        mu_low_std=float(mu1_std[0]), mu_low_f_hz=float(fv[0]), mu_imag_peak=peak, mu_imag_peak_value=peak_value,
        crossover=cross, loss_factors=tuple(losses), relaxation=rel, winding=winding, warnings=tuple(warn),
    )

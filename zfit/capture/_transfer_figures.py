"""The transfer function of a measured response and what an engineer reads from it.

`chosen_transfer` fits every proper structure up to a given order to the
points (`zfit.fit._transfer`) and keeps the one Schwarz's criterion (BIC,
`criterion`) prefers; a more complex structure must beat a simpler one by more than
`PARSIMONY_MARGIN` (Kass & Raftery 1995: a BIC difference below 2 is "not
worth more than a bare mention").  Fits in which a corner or a damping ratio
runs to its bound, or a complex pair comes out overdamped (two real poles
fit it as well), are not candidates.

`transfer_figures` reads from the chosen model, each with its standard
uncertainty by first-order propagation of the parameters' covariance:
poles and zeros, the time constant ``tau = 1/omega_p`` of each real pole,
the natural frequency ``omega_n`` and damping ratio ``zeta`` (and
``Q = 1/(2 zeta)``) of each complex pair, the DC and high-frequency gains,
the -3 dB frequencies, and the step response the model predicts with its
10-90 % rise time and overshoot (IEEE Std 181 definitions), to set against
a capture's.

References
----------
.. [1] G. Schwarz, "Estimating the dimension of a model", Ann. Statist.
   6(2), 461-464, 1978, doi:10.1214/aos/1176344136.
.. [2] R. E. Kass and A. E. Raftery, "Bayes factors", J. Amer. Statist.
   Assoc. 90(430), 773-795, 1995, doi:10.1080/01621459.1995.10476572.
.. [3] JCGM 100:2008 (GUM), section 5.1.2 (propagation of uncertainty).
.. [4] IEEE Std 181-2011, *IEEE Standard for Transitions, Pulses, and
   Related Waveforms* (transition duration, overshoot).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .._errors import FitError
from ..fit._transfer import (
    DECADES_OUT, LN_ZETA_RANGE, TransferModel, fit_transfer_structure, transfer_structures, vector_fit_roots,
)
from ..identification._criteria import bic, log_cells, longest_run, valid_mask
from ..identification._merit import Estimate

__all__ = [
    "Candidate", "Factor", "Cutoff", "StepPrediction", "TransferFigures", "chosen_transfer", "transfer_figures",
    "PARSIMONY_MARGIN", "DEFAULT_MAX_ORDER", "criterion",
]

#: BIC a structure with more unknowns must win by (Kass & Raftery 1995).
PARSIMONY_MARGIN = 2.0
#: Most poles tried by default: R-C, L-R and R-L-C networks with one stray element.
DEFAULT_MAX_ORDER = 3
#: The search stops once this many more unknowns than the best structure's have not helped.
_MORE_UNKNOWNS = 2
#: Standard uncertainty of a log-parameter beyond which its factor is unresolved.
_UNRESOLVED = 1.0
_TWO_PI = 2.0 * math.pi
_LEVEL_3DB = 1.0 / math.sqrt(2.0)


@dataclass(frozen=True)
class Candidate:
    """One structure tried: its description, unknowns, chi-square and BIC (None when it was not a candidate)."""

    structure: str
    n_params: int
    chi2: float | None
    bic: float | None
    why_not: str | None = None


def chosen_transfer(points, max_order: int = DEFAULT_MAX_ORDER, structure=None):
    """Return (model, candidates): the transfer function the BIC prefers among all structures up to `max_order`.

    Parameters
    ----------
    points : GainPhasePoints
        The measured response.
    max_order : int
        Most poles tried.
    structure : TransferStructure, optional
        Fit this structure only.

    Raises
    ------
    FitError
        When no structure can be fitted.
    """
    f, g, ph = points.f_hz, points.gain, points.phase_rad
    s_ln, s_ph = points.sigma_ln, points.sigma_phase_rad
    n = points.n_points
    structures = [structure] if structure is not None else transfer_structures(max_order, n)
    if not structures:
        raise FitError(f"{n} readings determine no transfer function (at least 3 are needed)")
    starts: dict[tuple[int, bool], object] = {}
    fitted, candidates = [], []
    k_best, b_best = None, math.inf
    for s in structures:
        if k_best is not None and s.n_params > k_best + _MORE_UNKNOWNS:
            # Two more unknowns than the best so far have not helped: more will not either.
            break
        key = (s.order, s.zero_order == s.order)
        if key not in starts:
            starts[key] = (vector_fit_roots(f, points.h, points.h_sigma, s.order, key[1])
                           if 0 < s.order and n >= s.order + 2 else None)
        try:
            m = fit_transfer_structure(s, f, g, ph, s_ln, s_ph, starts=[starts[key]] if starts[key] else ())
        except FitError as e:
            candidates.append(Candidate(s.describe(), s.n_params, None, None, str(e)))
            continue
        why = _why_not(m) if structure is None else None
        b = criterion(m.chi2, 2 * n, s.n_params)
        candidates.append(Candidate(s.describe(), s.n_params, m.chi2, b, why))
        if why is None:
            fitted.append((b, m))
            if b < b_best - PARSIMONY_MARGIN or k_best is None:
                k_best, b_best = s.n_params, min(b, b_best)
    if not fitted:
        raise FitError(f"no transfer function of up to {max_order} poles fits the readings with every factor "
                       "resolved (a phase of the wrong sign, or a network of higher order?)")
    best = min(b for b, _ in fitted)
    near = [(m.structure.n_params, b, i, m) for i, (b, m) in enumerate(fitted) if b <= best + PARSIMONY_MARGIN]
    return min(near, key=lambda t: (t[0], t[1], t[2]))[3], tuple(candidates)


def _why_not(model: TransferModel) -> str | None:
    """Why a fitted structure is not a candidate, or None."""
    f = model.factors()
    for _, z in f["pole_pairs"] + f["zero_pairs"]:
        if z >= 1.0:
            return "a complex pair came out overdamped (two real corners fit it as well)"
        if math.log(z) <= LN_ZETA_RANGE[0] + 1e-3:
            return "a damping ratio ran to its bound"
    sd = np.sqrt(np.abs(np.diag(model.covariance)))[1:]
    if np.any(~np.isfinite(sd)) or np.any(sd > _UNRESOLVED):
        return "a factor the readings do not resolve (its corner or damping uncertain by more than a factor e)"
    if _cancels(f):
        return "a pole and a zero cancel (within a few percent of each other)"
    f_lo, f_hi = model.band_hz
    ws = f["zeros"] + f["poles"] + [w for w, _ in f["zero_pairs"] + f["pole_pairs"]]
    out = 10.0 ** (DECADES_OUT - 0.01)
    for w in ws:
        fc = w / _TWO_PI
        if fc < f_lo / out or fc > f_hi * out:
            return "a corner ran far outside the band"
    return None


def criterion(chi2: float, rows: int, k: int) -> float:
    """Schwarz's criterion with the noise scale known up to a factor of at least 1.

    The readings' uncertainties are stated bounds or measured scatter: the
    true noise is not below them, and may be above (a model too simple, an
    accuracy stated too small).  The likelihood maximised over a scale
    ``c >= 1`` gives ``chi2 + k ln n`` while ``chi2 <= n`` and the criterion of
    `zfit.identification._criteria.bic` (plus ``n``, to join continuously)
    above, so that noise below the stated level is not taken for structure.

    Parameters
    ----------
    chi2 : float
        The fit's chi-square with the stated uncertainties.
    rows : int
        Real residuals (twice the points).
    k : int
        Unknowns.
    """
    if chi2 <= rows:
        return chi2 + k * math.log(rows)
    return bic(chi2, rows, k) + rows


def _cancels(fac, rel: float = 0.05) -> bool:
    """Whether a real pole meets a real zero, or a pole pair a zero pair, within `rel`."""
    for p in fac["poles"]:
        if any(abs(math.log(p / z)) < rel for z in fac["zeros"]):
            return True
    for w, zeta in fac["pole_pairs"]:
        if any(abs(math.log(w / w2)) < rel and abs(math.log(zeta / z2)) < 4 * rel for w2, z2 in fac["zero_pairs"]):
            return True
    return False


@dataclass(frozen=True)
class Factor:
    """A pole or zero of the model.

    Attributes
    ----------
    kind : {'real', 'pair', 'origin'}
        A real root, a complex-conjugate pair, or roots at s = 0.
    root : complex
        The root in rad/s (the upper member of a pair; 0 at the origin).
    corner : Estimate or None
        ``|root| / 2 pi`` in Hz (the corner, or the natural frequency of a pair).
    omega : Estimate or None
        ``|root|`` in rad/s.
    tau : Estimate or None
        ``1 / |root|`` in s, for a real pole or zero.
    zeta : Estimate or None
        Damping ratio of a pair.
    q : Estimate or None
        ``1 / (2 zeta)`` of a pair.
    order : int
        Multiplicity (of the roots at the origin; 1 or 2 otherwise).
    """

    kind: str
    root: complex
    corner: Estimate | None = None
    omega: Estimate | None = None
    tau: Estimate | None = None
    zeta: Estimate | None = None
    q: Estimate | None = None
    order: int = 1

    def to_dict(self) -> dict:
        """Return the JSON object of the factor (see docs/response.md)."""
        def e(x):
            return None if x is None else x.to_dict()
        return {"kind": self.kind, "order": self.order, "s_rad_s": [float(self.root.real), float(self.root.imag)],
                "corner_hz": e(self.corner), "omega_rad_s": e(self.omega), "tau_s": e(self.tau),
                "zeta": e(self.zeta), "q": e(self.q)}


@dataclass(frozen=True)
class Cutoff:
    """A -3 dB frequency: where |H| is the reference gain over sqrt 2.

    Attributes
    ----------
    edge : {'upper', 'lower'}
        Above or below the passband.
    frequency : Estimate
        In Hz.
    in_band : bool
        Whether it lies within the measured band (else it is extrapolated).
    """

    edge: str
    frequency: Estimate
    in_band: bool

    def to_dict(self) -> dict:
        """Return ``{"edge", "value_hz", "std_hz", "in_band"}``."""
        return {"edge": self.edge, "value_hz": float(self.frequency.value),
                "std_hz": None if self.frequency.std is None else float(self.frequency.std), "in_band": self.in_band}


@dataclass(frozen=True)
class StepPrediction:
    """The model's response to a unit step of V_in, with its standard uncertainty.

    Attributes
    ----------
    t_s, v, v_std : numpy.ndarray
        Time from the step (s), V_out per volt of step, and its uncertainty.
    final_value : float
        The settled value (the DC gain; 0 for a high pass).
    rise_10_90 : Estimate or None
        10-90 % transition duration, when the response settles to a non-zero
        value and does not jump past 10 % of it at the step.
    overshoot_pct : Estimate or None
        Peak above the final value, percent of it.
    """

    t_s: np.ndarray
    v: np.ndarray
    v_std: np.ndarray
    final_value: float
    rise_10_90: Estimate | None
    overshoot_pct: Estimate | None


@dataclass(frozen=True)
class TransferFigures:
    """What the model says, each figure with its standard uncertainty.

    Attributes
    ----------
    gain_coefficient : Estimate
        The gain ``k`` of the factored form (V/V times (rad/s)^-m with m zeros at the origin).
    dc_gain : Estimate or None
        ``H(0)`` (None with zeros at the origin: it is 0).
    hf_gain : Estimate or None
        ``H(infinity)`` when the model has as many zeros as poles.
    poles, zeros : tuple of Factor
        Poles and zeros, real ones first, by corner frequency.
    cutoffs : tuple of Cutoff
        The -3 dB frequencies relative to `reference`.
    reference : str
        What the -3 dB is relative to: ``"dc gain"``, ``"high-frequency gain"`` or ``"peak gain"``.
    valid_band_hz : tuple of float
        Where the model's residuals stay within the readings' uncertainty.
    step : StepPrediction
        The predicted step response.
    """

    gain_coefficient: Estimate
    dc_gain: Estimate | None
    hf_gain: Estimate | None
    poles: tuple[Factor, ...]
    zeros: tuple[Factor, ...]
    cutoffs: tuple[Cutoff, ...]
    reference: str
    valid_band_hz: tuple[float, float]
    step: StepPrediction

    @property
    def f_3db(self) -> Cutoff | None:
        """The main -3 dB frequency: the upper edge of a low pass, the lower of a high pass."""
        if not self.cutoffs:
            return None
        want = "lower" if self.reference == "high-frequency gain" else "upper"
        return next((c for c in self.cutoffs if c.edge == want), self.cutoffs[0])


def _estimate(model, fn, unit):
    v = float(fn(model.theta))
    s = model.std_of(fn)
    return Estimate(v, s if math.isfinite(s) else None, unit)


def _factor_list(model, which):
    """The real corners and pairs of `which` ('poles' or 'zeros') as Factors."""
    fac = model.factors()
    reals, pairs = fac[which], fac["pole_pairs" if which == "poles" else "zero_pairs"]
    out = []
    for i, w in enumerate(reals):
        out.append(Factor(
            "real", complex(-w, 0.0),
            corner=_estimate(model, lambda th, i=i: model.factors(th)[which][i] / _TWO_PI, "Hz"),
            omega=_estimate(model, lambda th, i=i: model.factors(th)[which][i], "rad/s"),
            tau=_estimate(model, lambda th, i=i: 1.0 / model.factors(th)[which][i], "s")))
    key = "pole_pairs" if which == "poles" else "zero_pairs"
    for i, (w, z) in enumerate(pairs):
        root = complex(-z * w, w * math.sqrt(max(1.0 - z * z, 0.0)))
        out.append(Factor(
            "pair", root,
            corner=_estimate(model, lambda th, i=i: model.factors(th)[key][i][0] / _TWO_PI, "Hz"),
            omega=_estimate(model, lambda th, i=i: model.factors(th)[key][i][0], "rad/s"),
            zeta=_estimate(model, lambda th, i=i: model.factors(th)[key][i][1], ""),
            q=_estimate(model, lambda th, i=i: 0.5 / model.factors(th)[key][i][1], ""), order=2))
    out.sort(key=lambda x: (x.kind != "real", abs(x.root)))
    if which == "zeros" and model.structure.origin_zeros:
        out.insert(0, Factor("origin", 0j, order=model.structure.origin_zeros))
    return tuple(out)


def _reference(model, theta, f_lo, f_hi):
    """(what, |H| reference) for the -3 dB points."""
    s = model.structure
    fac = model.factors(theta)
    if s.origin_zeros == 0:
        return "dc gain", abs(fac["gain"])
    if s.zero_order == s.order:
        return "high-frequency gain", abs(_hf_gain(model, theta))
    grid = np.geomspace(f_lo / 1e3, f_hi * 1e3, 4001)
    return "peak gain", float(np.max(np.abs(model.response(grid, theta))))


def _hf_gain(model, theta):
    num, den = model.polynomials(theta)
    return float(num[0] / den[0]) if num.size == den.size else 0.0


def _crossings(model, theta, f_lo, f_hi):
    """[(edge, f_hz)] where |H| crosses the reference over sqrt 2, searched three decades beyond the band."""
    from scipy.optimize import brentq

    what, ref = _reference(model, theta, f_lo, f_hi)
    if not ref > 0:
        return what, []
    grid = np.geomspace(f_lo / 1e3, f_hi * 1e3, 4001)

    def level(f):
        return float(np.abs(model.response(np.array([f]), theta))[0] / ref - _LEVEL_3DB)

    d = np.abs(model.response(grid, theta)) / ref - _LEVEL_3DB
    idx = np.flatnonzero(np.sign(d[:-1]) * np.sign(d[1:]) < 0)
    out = []
    for i in idx:
        fc = brentq(level, grid[i], grid[i + 1], xtol=1e-14 * grid[i], rtol=1e-13)
        out.append(("upper" if d[i] > 0 else "lower", float(fc)))
    if what == "dc gain":
        out = [c for c in out if c[0] == "upper"][:1]
    elif what == "high-frequency gain":
        out = [c for c in out if c[0] == "lower"][-1:]
    else:
        lower = [c for c in out if c[0] == "lower"][:1]
        upper = [c for c in out if c[0] == "upper"][-1:]
        out = lower + upper
    return what, out


def _cutoffs(model, f_lo, f_hi):
    what, found = _crossings(model, model.theta, f_lo, f_hi)
    out = []
    for k, (edge, fc) in enumerate(found):
        def fn(th, edge=edge, fc=fc):
            _, c = _crossings(model, th, f_lo, f_hi)
            same = [x[1] for x in c if x[0] == edge]
            return min(same, key=lambda v: abs(math.log(v / fc))) if same else float("nan")
        s = model.std_of(fn)
        out.append(Cutoff(edge, Estimate(fc, s if math.isfinite(s) else None, "Hz"), bool(f_lo <= fc <= f_hi)))
    return what, tuple(out)


def _step(model, theta, t):
    from scipy.signal import lti, step

    num, den = model.polynomials(theta)
    _, y = step(lti(num, den), T=t)
    return np.asarray(y, float)


def _rise_and_overshoot(t, y, final):
    if not final or not math.isfinite(final):
        return float("nan"), float("nan")
    r = y / final
    if r[0] >= 0.1:
        # The step jumps past 10 % at once (as many zeros as poles): no transition duration to give.
        return float("nan"), 100.0 * max(float(np.max(r)) - 1.0, 0.0)
    # First crossings of 10 % and 90 % of the final value, interpolated linearly.
    def first(level):
        i = np.flatnonzero(r >= level)
        if i.size == 0 or i[0] == 0:
            return float("nan") if i.size == 0 else float(t[0])
        k = i[0]
        return float(t[k - 1] + (level - r[k - 1]) * (t[k] - t[k - 1]) / (r[k] - r[k - 1]))
    return first(0.9) - first(0.1), 100.0 * max(float(np.max(r)) - 1.0, 0.0)


def _step_prediction(model, dc):
    fac = model.factors()
    modes = [(w, 1.0) for w in fac["poles"]] + [(w, z) for w, z in fac["pole_pairs"]]
    if not modes:
        # A gain alone: the step is the gain at once (drawn over a period of the lowest frequency read).
        t = np.linspace(0.0, 1.0 / model.band_hz[0], 801)
        k = float(fac["gain"])
        return StepPrediction(t, np.full(t.size, k), np.full(t.size, model.std_of(lambda th: model.factors(th)["gain"])),
                              k, None, None)
    # Seven of the slowest settling time constants (1/(zeta omega) of a pair), sampled at least
    # 20 times per period of the fastest ringing and twice per fastest time constant.
    t_end = max(7.0 / (min(z, 1.0) * w) for w, z in modes)
    fine = min([1.0 / (2.0 * w) for w in fac["poles"]] + [_TWO_PI / (20.0 * w) for w, _ in fac["pole_pairs"]])
    t = np.linspace(0.0, t_end, int(np.clip(math.ceil(t_end / fine) + 1, 801, 8001)))
    y = _step(model, model.theta, t)
    y_std = model.std_of(lambda th: _step(model, th, t))
    final = 0.0 if dc is None else dc.value
    rise = over = None
    if dc is not None and dc.value != 0.0:
        def figs(th):
            d = model.factors(th)["gain"]
            return np.array(_rise_and_overshoot(t, _step(model, th, t), d))
        r0, o0 = _rise_and_overshoot(t, y, final)
        if math.isfinite(o0):
            g = model.gradient(figs)
            with np.errstate(invalid="ignore"):
                sd = np.sqrt(np.maximum(np.diag(g.T @ model.covariance @ g), 0.0))
            if math.isfinite(r0):
                rise = Estimate(r0, float(sd[0]) if math.isfinite(sd[0]) else None, "s")
            over = Estimate(o0, float(sd[1]) if o0 > 0 and math.isfinite(sd[1]) else None, "%")
    return StepPrediction(t, y, y_std, float(final), rise, over)


def transfer_figures(model: TransferModel, points) -> TransferFigures:
    """Return the poles, zeros, gains, -3 dB frequencies, valid band and step response of a fitted model.

    Parameters
    ----------
    model : TransferModel
        The chosen fit.
    points : GainPhasePoints
        The readings it was fitted to (for the band and the residuals).
    """
    f_lo, f_hi = float(points.f_hz[0]), float(points.f_hz[-1])
    s = model.structure
    k = _estimate(model, lambda th: model.factors(th)["gain"] / model.omega_ref ** s.origin_zeros,
                  "" if s.origin_zeros == 0 else f"(rad/s)^-{s.origin_zeros}")
    dc = _estimate(model, lambda th: model.factors(th)["gain"], "") if s.origin_zeros == 0 else None
    hf = _estimate(model, lambda th: _hf_gain(model, th), "") if s.zero_order == s.order else None
    what, cut = _cutoffs(model, f_lo, f_hi)
    n = points.n_points
    r = np.asarray(model.residuals)
    e = 0.5 * (r[:n] ** 2 + r[n:] ** 2) / model.cov_scale
    ok = valid_mask(e, None, points.f_hz)
    a, b = longest_run(ok, log_cells(points.f_hz))
    band = (float(points.f_hz[a]), float(points.f_hz[b - 1])) if b > a else (float("nan"), float("nan"))
    return TransferFigures(k, dc, hf, _factor_list(model, "poles"), _factor_list(model, "zeros"), cut, what,
                           band, _step_prediction(model, dc))

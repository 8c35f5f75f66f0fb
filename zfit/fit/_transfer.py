"""Low-order transfer functions in factored (Bode) form, fitted to gain and phase.

The model of a network's voltage transfer ``H = V_out / V_in`` is

    H(s) = k x^m  prod_i (1 + x/a_i)  prod_j (1 + 2 z_j x/b_j + (x/b_j)^2)
              / [ prod_i (1 + x/c_i)  prod_j (1 + 2 zeta_j x/w_j + (x/w_j)^2) ]

with ``x = s / omega_ref`` (``omega_ref`` the geometric centre of the band),
``m`` zeros at the origin, real corners ``a_i`` (zeros) and ``c_i`` (poles),
and complex pairs of natural frequency ``w_j`` and damping ``zeta_j``.  Every
corner and damping ratio enters by its logarithm, so poles and zeros stay in
the left half plane (the networks are passive and of minimum phase) and the
time constants ``tau = 1/omega_p`` come straight out.

The residuals are those of what the instruments measure: the natural log of
the gain over its standard uncertainty, and the phase difference (wrapped to
a half turn, so that a phase read modulo 360 degrees needs no unwrapping)
over its standard uncertainty.  The weighted nonlinear least squares is
solved with scipy's trust-region reflective method; the covariance of the
parameters is ``(J^T J)^-1`` scaled by the reduced chi-square when that
exceeds 1 (the model, or the stated accuracy, leaves more than the noise).

Starting values come from relaxed vector fitting of the complex response at
the structure's pole count (its poles and the zeros of its numerator), and
from corners spread over the band; the best fit wins.

References
----------
.. [1] B. Gustavsen and A. Semlyen, "Rational approximation of frequency
   domain responses by vector fitting", IEEE Trans. Power Delivery 14(3),
   1052-1061, 1999, doi:10.1109/61.772353 (the starting poles).
.. [2] W. H. Press, S. A. Teukolsky, W. T. Vetterling and B. P. Flannery,
   *Numerical Recipes*, 3rd ed., Cambridge University Press, 2007, section
   15.5 (covariance of a nonlinear least-squares fit).
.. [3] K. Ogata, *Modern Control Engineering*, 5th ed., Prentice Hall, 2010,
   sections 7-2 (Bode form of first- and second-order factors; from memory).
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, field

import numpy as np

from .._errors import FitError

__all__ = ["TransferStructure", "TransferModel", "transfer_structures", "fit_transfer_structure", "vector_fit_roots",
           "DECADES_OUT", "LN_ZETA_RANGE"]

_TWO_PI = 2.0 * math.pi
#: Corners may sit at most this many decades outside the band, damping
#: ratios within LN_ZETA_RANGE (natural logs): far enough for any network the
#: band says anything about, near enough that an unresolved corner cannot run
#: off to 1e-300 (fits beyond are refused, or not candidates).
DECADES_OUT = 4.0
LN_ZETA_RANGE = (math.log(1e-4), math.log(1e3))


@dataclass(frozen=True)
class TransferStructure:
    """Which factors a transfer function has.

    Attributes
    ----------
    origin_zeros : int
        Zeros at s = 0 (a high pass or band pass: a series capacitor).
    real_zeros, zero_pairs : int
        Real zeros and complex zero pairs.
    real_poles, pole_pairs : int
        Real poles and complex pole pairs.
    """

    origin_zeros: int = 0
    real_zeros: int = 0
    zero_pairs: int = 0
    real_poles: int = 1
    pole_pairs: int = 0

    @property
    def order(self) -> int:
        """The number of poles (the network's order)."""
        return self.real_poles + 2 * self.pole_pairs

    @property
    def zero_order(self) -> int:
        """The number of zeros, those at the origin included."""
        return self.origin_zeros + self.real_zeros + 2 * self.zero_pairs

    @property
    def n_params(self) -> int:
        """Real unknowns: the gain, one per real corner, two per pair."""
        return 1 + self.real_zeros + 2 * self.zero_pairs + self.real_poles + 2 * self.pole_pairs

    def describe(self) -> str:
        """Return the structure in words, e.g. ``"2 poles (1 complex pair), 1 zero at the origin"``."""
        def part(n, pairs, reals, what):
            if n == 0:
                return f"no {what}s"
            bits = [f"{pairs} complex pair{'s' if pairs > 1 else ''}" if pairs else "",
                    f"{reals} real" if reals and pairs else ""]
            extra = ", ".join(b for b in bits if b)
            return f"{n} {what}{'s' if n > 1 else ''}" + (f" ({extra})" if extra else "")
        if self.order == 0:
            return "a gain alone (no poles or zeros)"
        text = part(self.order, self.pole_pairs, self.real_poles, "pole")
        nz = self.real_zeros + 2 * self.zero_pairs
        if nz:
            text += ", " + part(nz, self.zero_pairs, self.real_zeros, "zero")
        if self.origin_zeros:
            text += f", {self.origin_zeros} zero{'s' if self.origin_zeros > 1 else ''} at the origin"
        return text


def transfer_structures(max_order: int, n_points: int) -> list[TransferStructure]:
    """Return every proper structure up to `max_order` poles that `n_points` readings can determine.

    Proper: no more zeros than poles (a gain alone, no pole, is the first).  Determined: fewer unknowns than the
    ``2 n_points`` real residuals.  Ordered by the number of unknowns, real
    factors before pairs, so that among equally good fits the simplest
    comes first.

    Parameters
    ----------
    max_order : int
        Most poles.
    n_points : int
        Distinct frequencies.
    """
    # A gain alone first: a resistive divider, or a network measured where it is flat.
    out = [TransferStructure(0, 0, 0, 0, 0)]
    for p in range(1, max_order + 1):
        for pp in range(p // 2 + 1):
            for zd in range(p + 1):
                for m in range(zd + 1):
                    for zp in range((zd - m) // 2 + 1):
                        s = TransferStructure(m, zd - m - 2 * zp, zp, p - 2 * pp, pp)
                        if s.n_params < 2 * n_points:
                            out.append(s)
    out.sort(key=lambda s: (s.n_params, s.order, s.pole_pairs + s.zero_pairs, s.zero_order))
    return out


@dataclass(frozen=True, eq=False)
class TransferModel:
    """A fitted transfer function in factored form, with the covariance of its parameters.

    Attributes
    ----------
    structure : TransferStructure
        Its factors.
    theta : numpy.ndarray
        ``[ln k, ln(a_i/omega_ref)..., (ln(b_j/omega_ref), ln z_j)...,
        ln(c_i/omega_ref)..., (ln(w_j/omega_ref), ln zeta_j)...]``.
    covariance : numpy.ndarray
        Covariance of `theta` (scaled by `cov_scale`).
    sign : float
        +1, or -1 for an inverting network.
    omega_ref : float
        The reference angular frequency in rad/s.
    chi2 : float
        Sum of squared normalised residuals.
    n_points : int
        Readings fitted (distinct frequencies).
    cov_scale : float
        ``max(1, chi2 / dof)``: the factor applied to the covariance.
    residuals : numpy.ndarray
        Normalised residuals, gain rows then phase rows.
    band_hz : tuple of float
        Lowest and highest frequency fitted.
    converged : bool
        Whether the minimiser met its tolerance.
    """

    structure: TransferStructure
    theta: np.ndarray
    covariance: np.ndarray
    sign: float
    omega_ref: float
    chi2: float
    n_points: int
    cov_scale: float
    residuals: np.ndarray = field(repr=False)
    band_hz: tuple[float, float] = (float("nan"), float("nan"))
    converged: bool = True

    def __post_init__(self):
        for name in ("theta", "covariance", "residuals"):
            a = np.array(getattr(self, name), dtype=float)
            a.flags.writeable = False
            object.__setattr__(self, name, a)

    @property
    def dof(self) -> int:
        """Degrees of freedom, ``2 n_points - n_params``."""
        return 2 * self.n_points - self.structure.n_params

    @property
    def rms_normalized_residual(self) -> float:
        """``sqrt(chi2 / (2 n_points))``: about 1 when the model leaves only the noise."""
        return math.sqrt(self.chi2 / (2 * self.n_points))

    def factors(self, theta=None) -> dict:
        """Return the factors in rad/s: ``gain``, ``zeros``, ``zero_pairs``, ``poles``, ``pole_pairs``.

        ``zeros`` and ``poles`` are corner angular frequencies (the root is at
        minus the corner); pairs are ``(omega_n, zeta)``; ``gain`` is ``k``
        times the sign, the coefficient of ``(s/omega_ref)^m``.

        Parameters
        ----------
        theta : array_like, optional
            The parameter vector (the fitted one by default).
        """
        return _factors(self.structure, self.theta if theta is None else np.asarray(theta, float), self.omega_ref,
                        self.sign)

    def log_response(self, f_hz, theta=None) -> np.ndarray:
        """Return ``ln H(j 2 pi f)`` (complex; its imaginary part is the phase, continuous in f).

        Parameters
        ----------
        f_hz : array_like
            Frequencies in Hz.
        theta : array_like, optional
            The parameter vector (the fitted one by default).
        """
        th = self.theta if theta is None else np.asarray(theta, float)
        return _log_h(self.structure, th, _x(f_hz, self.omega_ref), self.sign)

    def response(self, f_hz, theta=None) -> np.ndarray:
        """Return ``H(j 2 pi f)``.

        Parameters
        ----------
        f_hz : array_like
            Frequencies in Hz.
        theta : array_like, optional
            The parameter vector (the fitted one by default).
        """
        return np.exp(self.log_response(f_hz, theta))

    def gradient(self, fn, step: float = 1e-6) -> np.ndarray:
        """Return d fn(theta) / d theta by central differences (fn returns a float or an array).

        Parameters
        ----------
        fn : callable
            Maps a parameter vector to a float or an array.
        step : float
            The central-difference step in each parameter.
        """
        th = np.array(self.theta)
        rows = []
        for i in range(th.size):
            h = step * max(1.0, abs(th[i]))
            up, dn = th.copy(), th.copy()
            up[i] += h
            dn[i] -= h
            rows.append((np.asarray(fn(up), float) - np.asarray(fn(dn), float)) / (2.0 * h))
        return np.array(rows)

    def std_of(self, fn) -> float | np.ndarray:
        """Return the standard uncertainty of ``fn(theta)`` by first-order propagation (GUM 5.1.2).

        Parameters
        ----------
        fn : callable
            Maps a parameter vector to a float or an array.
        """
        g = self.gradient(fn)
        if g.ndim == 1:
            return float(math.sqrt(max(float(g @ self.covariance @ g), 0.0)))
        return np.sqrt(np.maximum(np.einsum("it,ij,jt->t", g, self.covariance, g), 0.0))

    def polynomials(self, theta=None) -> tuple[np.ndarray, np.ndarray]:
        """Return (numerator, denominator) coefficients in s, highest power first (for scipy.signal).

        Parameters
        ----------
        theta : array_like, optional
            The parameter vector (the fitted one by default).
        """
        fac = self.factors(theta)
        wr = self.omega_ref
        num = np.poly1d([fac["gain"] / wr ** self.structure.origin_zeros]) * np.poly1d([1.0] + [0.0] * self.structure.origin_zeros)
        den = np.poly1d([1.0])
        for a in fac["zeros"]:
            num = num * np.poly1d([1.0 / a, 1.0])
        for w, z in fac["zero_pairs"]:
            num = num * np.poly1d([1.0 / w**2, 2.0 * z / w, 1.0])
        for c in fac["poles"]:
            den = den * np.poly1d([1.0 / c, 1.0])
        for w, z in fac["pole_pairs"]:
            den = den * np.poly1d([1.0 / w**2, 2.0 * z / w, 1.0])
        return np.asarray(num.coeffs, float), np.asarray(den.coeffs, float)


def _x(f_hz, omega_ref):
    return 1j * _TWO_PI * np.asarray(f_hz, dtype=float) / omega_ref


def _split(structure: TransferStructure, theta):
    s = structure
    i = 1
    rz = theta[i:i + s.real_zeros]
    i += s.real_zeros
    zp = theta[i:i + 2 * s.zero_pairs].reshape(-1, 2)
    i += 2 * s.zero_pairs
    rp = theta[i:i + s.real_poles]
    i += s.real_poles
    pp = theta[i:i + 2 * s.pole_pairs].reshape(-1, 2)
    return rz, zp, rp, pp


def _factors(structure, theta, omega_ref, sign):
    rz, zp, rp, pp = _split(structure, theta)
    return {
        "gain": float(sign * math.exp(theta[0])),
        "zeros": [float(omega_ref * math.exp(v)) for v in rz],
        "zero_pairs": [(float(omega_ref * math.exp(w)), float(math.exp(z))) for w, z in zp],
        "poles": [float(omega_ref * math.exp(v)) for v in rp],
        "pole_pairs": [(float(omega_ref * math.exp(w)), float(math.exp(z))) for w, z in pp],
    }


def _log_h(structure, theta, x, sign=1.0):
    rz, zp, rp, pp = _split(structure, theta)
    out = np.full(x.shape, complex(theta[0], 0.0 if sign > 0 else math.pi))
    if structure.origin_zeros:
        out = out + structure.origin_zeros * np.log(x)
    for v in rz:
        out = out + np.log1p(x / math.exp(v))
    for w, z in zp:
        u = x / math.exp(w)
        out = out + np.log(1.0 + 2.0 * math.exp(z) * u + u * u)
    for v in rp:
        out = out - np.log1p(x / math.exp(v))
    for w, z in pp:
        u = x / math.exp(w)
        out = out - np.log(1.0 + 2.0 * math.exp(z) * u + u * u)
    return out


def _jacobian(structure, theta, x):
    """d ln H / d theta (complex, points x parameters)."""
    rz, zp, rp, pp = _split(structure, theta)
    cols = [np.ones(x.shape, complex)]
    for sgn, reals, pairs in ((1.0, rz, zp), (-1.0, rp, pp)):
        block = []
        for v in reals:
            u = x / math.exp(v)
            block.append(sgn * (-u) / (1.0 + u))
        pair_cols = []
        for w, z in pairs:
            u = x / math.exp(w)
            zz = math.exp(z)
            q = 1.0 + 2.0 * zz * u + u * u
            pair_cols += [sgn * (-2.0 * zz * u - 2.0 * u * u) / q, sgn * (2.0 * zz * u) / q]
        cols += block + pair_cols
    return np.column_stack(cols)


def _wrap(a):
    return (a + math.pi) % (2.0 * math.pi) - math.pi


def _residuals(structure, theta, x, ln_gain, phase, s_ln, s_ph, sign):
    lh = _log_h(structure, theta, x, sign)
    return np.concatenate([(lh.real - ln_gain) / s_ln, _wrap(lh.imag - phase) / s_ph])


def _theta_from_roots(structure, zeros, poles, omega_ref):
    """Starting log-parameters (without the gain) from roots in rad/s, regrouped to the structure's factors."""
    def corners(roots, n_real, n_pairs):
        # Units: a conjugate pair (omega_n, zeta) or one real corner, by magnitude.
        roots = list(roots)
        pairs = [(abs(r), max(-r.real / abs(r), 1e-3)) for r in roots if r.imag > 1e-9 * abs(r)]
        reals = sorted(max(abs(r), 1e-30) for r in roots if abs(r.imag) <= 1e-9 * abs(r))
        pairs.sort()
        while len(pairs) > n_pairs:
            w, _ = pairs.pop()
            reals += [w, w]
        reals.sort()
        while len(pairs) < n_pairs and len(reals) >= 2:
            # Merge the two closest real corners into an overdamped pair.
            k = int(np.argmin(np.diff(np.log(reals)))) if len(reals) > 2 else 0
            a, b = reals.pop(k), reals.pop(k)
            pairs.append((math.sqrt(a * b), (a + b) / (2.0 * math.sqrt(a * b))))
        while len(pairs) < n_pairs:
            pairs.append((omega_ref, 0.5))
        # Too many reals: drop the farthest from the band; too few: put them at the reference.
        reals.sort(key=lambda r: abs(math.log(r / omega_ref)))
        reals = reals[:n_real] + [omega_ref] * max(0, n_real - len(reals))
        return sorted(reals), pairs

    # The zeros nearest the origin stand for the structure's zeros at the origin.
    zeros = sorted(zeros, key=abs)[structure.origin_zeros:]
    zr, zpairs = corners(zeros, structure.real_zeros, structure.zero_pairs)
    pr, ppairs = corners(poles, structure.real_poles, structure.pole_pairs)
    th = [0.0]
    th += [math.log(v / omega_ref) for v in zr]
    for w, z in zpairs:
        th += [math.log(w / omega_ref), math.log(min(max(z, 1e-3), 50.0))]
    th += [math.log(v / omega_ref) for v in pr]
    for w, z in ppairs:
        th += [math.log(w / omega_ref), math.log(min(max(z, 1e-3), 50.0))]
    return np.array(th)


def _spread_start(structure, w_lo, w_hi):
    """Corners spread over the band in log frequency, poles and zeros interleaved, pairs at zeta = 0.5."""
    n = structure.real_zeros + structure.zero_pairs + structure.real_poles + structure.pole_pairs
    q = np.geomspace(w_lo, w_hi, n + 2)[1:-1] if n else np.zeros(0)
    roots_z, roots_p = [], []
    kinds = (["rz"] * structure.real_zeros + ["zp"] * structure.zero_pairs + ["rp"] * structure.real_poles
             + ["pp"] * structure.pole_pairs)
    # Poles below zeros: the low-pass-like order most passive networks have.
    order = sorted(range(n), key=lambda k: kinds[k] not in ("rp", "pp"))
    for pos, k in zip(q, order):
        kind = kinds[k]
        w = float(pos)
        if kind == "rz":
            roots_z.append(-w + 0j)
        elif kind == "rp":
            roots_p.append(-w + 0j)
        else:
            r = w * complex(-0.5, math.sqrt(0.75))
            (roots_z if kind == "zp" else roots_p).extend([r, r.conjugate()])
    return roots_z, roots_p


def fit_transfer_structure(structure: TransferStructure, f_hz, gain, phase_rad, sigma_ln, sigma_phase,
                           starts=()) -> TransferModel:
    """Return the weighted least-squares fit of one structure to gain and phase readings.

    Parameters
    ----------
    structure : TransferStructure
        The factors to fit.
    f_hz : array_like
        Distinct frequencies in Hz.
    gain : array_like
        ``|H|`` (ratio) at each frequency.
    phase_rad : array_like
        Phase of H in rad (any branch: residuals are wrapped).
    sigma_ln : array_like
        Standard uncertainty of ``ln |H|`` (relative gain uncertainty).
    sigma_phase : array_like
        Standard uncertainty of the phase in rad.
    starts : sequence of (zeros, poles)
        Roots in rad/s to start from (e.g. of a vector fit), besides the
        corners spread over the band.

    Raises
    ------
    FitError
        When the structure has as many unknowns as real residuals, or no
        start converges to a finite fit.
    """
    from scipy.optimize import least_squares

    f = np.asarray(f_hz, float)
    n = f.size
    if structure.n_params >= 2 * n:
        raise FitError(f"{structure.describe()}: {structure.n_params} unknowns from {n} readings")
    omega_ref = _TWO_PI * math.sqrt(f.min() * f.max())
    w_lo, w_hi = _TWO_PI * f.min(), _TWO_PI * f.max()
    x = _x(f, omega_ref)
    ln_g = np.log(np.asarray(gain, float))
    ph = np.asarray(phase_rad, float)
    s_ln = np.asarray(sigma_ln, float) * np.ones(n)
    s_ph = np.asarray(sigma_phase, float) * np.ones(n)
    # The plausible range of each log-parameter: starts are clipped into it,
    # and a fit that ends far beyond it has diverged.
    span = math.log(w_hi / w_lo) / 2.0 + DECADES_OUT * math.log(10.0)
    lo, hi = [-np.inf], [np.inf]
    for kind in (["c"] * structure.real_zeros + ["p"] * structure.zero_pairs + ["c"] * structure.real_poles
                 + ["p"] * structure.pole_pairs):
        lo.append(-span)
        hi.append(span)
        if kind == "p":
            lo.append(LN_ZETA_RANGE[0])
            hi.append(LN_ZETA_RANGE[1])
    lo, hi = np.array(lo), np.array(hi)
    all_starts = [_theta_from_roots(structure, z, p, omega_ref) for z, p in starts]
    all_starts.append(_theta_from_roots(structure, *_spread_start(structure, w_lo, w_hi), omega_ref))
    w = 1.0 / s_ln**2
    best = None
    for th0 in all_starts:
        th0 = np.clip(th0, lo + 1e-9, hi - 1e-9)
        th0[0] = 0.0
        rest = _log_h(structure, th0, x)
        # The gain and the sign that best match the start's shape (linear in ln k).
        th0[0] = float(np.sum(w * (ln_g - rest.real)) / np.sum(w))
        sign = 1.0 if np.mean(np.cos(ph - rest.imag)) >= 0 else -1.0

        def fun(th, sign=sign):
            return _residuals(structure, th, x, ln_g, ph, s_ln, s_ph, sign)

        def jac(th):
            d = _jacobian(structure, th, x)
            return np.vstack([d.real / s_ln[:, None], d.imag / s_ph[:, None]])

        with warnings.catch_warnings():
            warnings.simplefilter("ignore", RuntimeWarning)
            try:
                # Levenberg-Marquardt (MINPACK) without bounds: the corners and
                # damping ratios are logarithms, free on the whole line; fits
                # that run one far out of the band are judged by the caller.
                sol = least_squares(fun, th0, jac=jac, method="lm", x_scale="jac", xtol=1e-10, ftol=1e-10,
                                    gtol=1e-10, max_nfev=200 * th0.size)
            except (ValueError, np.linalg.LinAlgError, OverflowError):
                continue
            if not np.all(np.isfinite(sol.x)) or np.any(sol.x[1:] < lo[1:] - 5) or np.any(sol.x[1:] > hi[1:] + 5):
                continue
        chi2 = float(sol.fun @ sol.fun)
        if math.isfinite(chi2) and (best is None or chi2 < best[1] * (1 - 1e-9)):
            best = (sol, chi2, sign)
    if best is None:
        raise FitError(f"{structure.describe()}: no start converged")
    sol, chi2, sign = best
    j = sol.jac
    dof = 2 * n - structure.n_params
    scale = max(1.0, chi2 / dof)
    _, sv, vt = np.linalg.svd(j, full_matrices=False)
    tiny = sv <= sv[0] * 1e-12
    inv = np.where(tiny, np.inf, 1.0 / np.where(tiny, 1.0, sv) ** 2)
    with np.errstate(invalid="ignore"):
        cov = (vt.T * inv) @ vt if not tiny.any() else np.full((sv.size, sv.size), np.inf)
    return TransferModel(structure, sol.x, cov * scale, sign, omega_ref, chi2, n, scale, sol.fun,
                         band_hz=(float(f.min()), float(f.max())), converged=bool(sol.status > 0))


def vector_fit_roots(f_hz, h, sigma, n_poles: int, proper_constant: bool):
    """Return (zeros, poles) in rad/s of a relaxed vector fit with `n_poles` poles, or None when it fails.

    The numerator of the pole-residue form, ``d prod(s - p) + sum_k r_k
    prod_{j != k} (s - p_j)``, gives the zeros.

    Parameters
    ----------
    f_hz, h, sigma : array_like
        Frequencies (Hz), complex response and its complex-circular uncertainty.
    n_poles : int
        Pole count.
    proper_constant : bool
        Fit the constant term (as many zeros as poles); else one zero fewer.
    """
    from ._vectfit import vector_fit

    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            m = vector_fit(f_hz, h, sigma, n_poles, constant=proper_constant, proportional=False,
                           origin_pole=False, absolute_sigma=True)
    except (FitError, ValueError, np.linalg.LinAlgError):
        return None
    p = np.asarray(m.poles, complex)
    num = np.poly1d([m.constant]) * np.poly1d(np.poly(p)) if proper_constant else np.poly1d([0.0])
    for k in range(p.size):
        num = num + np.poly1d([complex(m.residues[k])]) * np.poly1d(np.poly(np.delete(p, k)))
    coeffs = np.trim_zeros(np.asarray(num.coeffs), "f")
    zeros = np.roots(coeffs) if coeffs.size > 1 else np.zeros(0, complex)
    return zeros, p

"""Rational models of a one-port response by relaxed vector fitting.

The model is the pole-residue form

    H(s) = sum_k r_k / (s - p_k)  +  d  +  s e  +  r_0 / s

with stable poles ``p_k`` (real, or complex in exactly conjugate pairs with
conjugate residues), an optional constant ``d``, proportional term ``e`` and
a pole at the origin with residue ``r_0`` (the ``1/(sC)`` of a capacitor).

The poles are found by relaxed vector fitting: starting poles are relocated
to the zeros of a weighting function sigma(s) fitted together with sigma*H
in one linear least-squares problem, until they stop moving; the residues
and the other linear terms are then identified by weighted linear least
squares with the poles fixed, which also gives their covariance.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from .._errors import FitError, ZfitInputError

__all__ = [
    "vector_fit",
    "fit_impedance",
    "RationalModel",
    "VFIteration",
    "PassivityViolation",
    "starting_poles",
    "sigma_update_for",
    "IMPEDANCE_FIT_OPTIONS",
]

TWO_PI = 2.0 * math.pi

#: Options of `vector_fit` that suit the impedance of each kind of part; used by
#: `fit_impedance`.  Why: an inductor with parallel C, (R + sL) || 1/(sC), is a
#: strictly proper function of s (Z -> R at DC, Z -> 1/(sC) at high frequency):
#: one complex pole pair near the SRF (so the automatic count starts at 2) and no
#: constant or proportional term; a fitted constant would only add noise (and, if
#: it came out negative, a non-passive model at high frequency).  A capacitor, ESR + sESL + 1/(sC), has a
#: pole at the origin, a constant and a proportional term and needs no other
#: pole at all; dielectric absorption or leakage adds real poles.
IMPEDANCE_FIT_OPTIONS = {
    "inductor": dict(constant=False, proportional=False, origin_pole=False, min_poles=2),
    "capacitor": dict(constant=True, proportional=True, origin_pole=True),
    "general": dict(constant=True, proportional=True, origin_pole=False),
}


# --------------------------------------------------------------------------
# results
# --------------------------------------------------------------------------


@dataclass(frozen=True, eq=False)
class VFIteration:
    """One pole relocation of vector fitting.

    Attributes
    ----------
    index : int
        1-based iteration number.
    poles : numpy.ndarray
        The relocated poles in rad/s after this iteration (pairs both present).
    max_relative_pole_change : float
        Largest ``|p_new - p_old| / |p_old|`` over the poles (inf when the
        number of real poles changed).
    rms_normalized_residual : float
        RMS over the points of ``|sigma H - (sigma H)_fit| / sigma_point`` in the
        relocation problem; it tends to the model's own residual as sigma(s) -> 1.
    sigma_constant : float
        The constant of the relaxed weighting function sigma(s) (1 at convergence
        for a good fit).
    """

    index: int
    poles: np.ndarray
    max_relative_pole_change: float
    rms_normalized_residual: float
    sigma_constant: float


@dataclass(frozen=True)
class PassivityViolation:
    """A band where the model is not passive.

    Attributes
    ----------
    kind : {'real part', 'origin residue', 'proportional term'}
        What is violated: Re H(j omega) < 0 over the band below; or a negative
        coefficient of 1/s or of s (a negative capacitance or inductance at the
        asymptote), which is not positive-real whatever the real part.
    f_lo_hz, f_hi_hz : float
        The band of the violation in Hz (0 and inf at the asymptotes).
    worst_f_hz : float
        Frequency of the most negative real part found in the band.
    worst_value : float
        The most negative value (Re H in ohm, or the offending coefficient).
    worst_std : float
        The model's standard uncertainty of that value (of Re H at
        `worst_f_hz`, poles included, or of the coefficient); NaN when the
        model carries no covariance.
    """

    kind: str
    f_lo_hz: float
    f_hi_hz: float
    worst_f_hz: float
    worst_value: float
    worst_std: float = float("nan")

    @property
    def within_uncertainty(self) -> bool:
        """True when the violation is smaller than twice its standard
        uncertainty: the data do not show the model to be non-passive there,
        though the model as it stands is (and a circuit synthesised from it
        would need a negative element)."""
        return bool(np.isfinite(self.worst_std) and -self.worst_value <= 2.0 * self.worst_std)


@dataclass(frozen=True, eq=False)
class RationalModel:
    """A rational model of a one-port response, from `vector_fit`.

    ``H(s) = sum_k residues[k] / (s - poles[k]) + constant + s proportional
    + origin_residue / s`` with ``s = j 2 pi f``.

    Attributes
    ----------
    poles : numpy.ndarray
        Complex poles in rad/s, Re < 0; real poles first, then each complex
        pair with the positive-imaginary member first; conjugates both present.
    residues : numpy.ndarray
        Complex residues in ohm rad/s, in the order of `poles`.
    constant : float
        The constant term in ohm (0.0 when not fitted).
    proportional : float
        The coefficient of s in H (0.0 when not fitted): an inductance for an
        impedance.
    origin_residue : float
        The coefficient of 1/s (0.0 when no origin pole): 1/C for an impedance.
    has_constant, has_proportional, has_origin_pole : bool
        Which of the optional terms were fitted.
    coefficients : numpy.ndarray
        The real linear unknowns of the final fit, named by `coefficient_names`:
        one residue per real pole, (Re, Im) of the residue of the
        positive-imaginary member of each pair, then the optional terms.
    coefficient_names : tuple of str
        Names of `coefficients`.
    covariance : numpy.ndarray
        Covariance of `coefficients` with the poles held fixed, scaled by the
        reduced chi-square `chi2_reduced` (unless `absolute_sigma`).
    full_covariance : numpy.ndarray
        Covariance of `coefficients` followed by the pole parameters (value of
        each real pole, (Re, Im) of each pair's positive-imaginary member), from
        the Jacobian of the full nonlinear model, scaled the same way.
    rms_normalized_residual : float
        ``sqrt(mean(|H_model - H|^2 / sigma^2))``: about 1 when the model leaves
        only the noise.
    chi2_reduced : float
        Chi-square per degree of freedom (real and imaginary parts counted
        separately, each with variance sigma^2/2).
    n_points : int
        Number of frequency points fitted.
    dof : int
        Degrees of freedom: 2 n_points minus the number of real unknowns
        (linear coefficients and pole parameters).
    f_min_hz, f_max_hz : float
        The fitted band.
    weighting : {'sigma', 'relative'}
        Whether per-point uncertainties were given, or weights were 1/|H|.
    absolute_sigma : bool
        Whether `covariance` uses the given sigma as is (True) or scaled.
    iterations : tuple of VFIteration
        Pole relocation history of the chosen fit.
    converged : bool
        Whether the poles stopped moving (relative change below the tolerance)
        within the allowed iterations.
    pole_count_trials : tuple of (int, float)
        For an automatic pole count: each count tried and its RMS normalised
        residual; empty when the count was given.
    reference_omega : float
        The angular frequency (rad/s) by which s was scaled in the solver.
    reweight_passes : int
        How many times the fit was repeated with sigma re-evaluated at the
        model (`vector_fit`'s `sigma_update`); 0 when not.
    """

    poles: np.ndarray
    residues: np.ndarray
    constant: float = 0.0
    proportional: float = 0.0
    origin_residue: float = 0.0
    has_constant: bool = False
    has_proportional: bool = False
    has_origin_pole: bool = False
    coefficients: np.ndarray = field(default_factory=lambda: np.zeros(0), repr=False)
    coefficient_names: tuple = ()
    covariance: np.ndarray = field(default_factory=lambda: np.zeros((0, 0)), repr=False)
    full_covariance: np.ndarray = field(default_factory=lambda: np.zeros((0, 0)), repr=False)
    rms_normalized_residual: float = float("nan")
    chi2_reduced: float = float("nan")
    n_points: int = 0
    dof: int = 0
    f_min_hz: float = float("nan")
    f_max_hz: float = float("nan")
    weighting: str = "sigma"
    absolute_sigma: bool = False
    iterations: tuple = field(default=(), repr=False)
    converged: bool = True
    pole_count_trials: tuple = ()
    reference_omega: float = 1.0
    reweight_passes: int = 0

    def __post_init__(self):
        for name in ("poles", "residues", "coefficients", "covariance", "full_covariance"):
            value = np.array(getattr(self, name))
            value.flags.writeable = False
            object.__setattr__(self, name, value)

    # -- structure ---------------------------------------------------------

    @property
    def n_poles(self) -> int:
        """Number of poles, not counting the origin pole (pairs count two)."""
        return int(self.poles.size)

    @property
    def full_parameter_names(self) -> tuple:
        """Names of the rows of `full_covariance`: `coefficient_names`, then
        ``pole[i]`` for each real pole and ``Re pole[i]``, ``Im pole[i]`` for
        each pair (i: the index in `poles` of its positive-imaginary member)."""
        names = list(self.coefficient_names)
        for i, p in enumerate(self.poles):
            if p.imag == 0:
                names.append(f"pole[{i}]")
            elif p.imag > 0:
                names += [f"Re pole[{i}]", f"Im pole[{i}]"]
        return tuple(names)

    @property
    def n_real_poles(self) -> int:
        """Number of real poles (origin pole not counted)."""
        return int(np.count_nonzero(self.poles.imag == 0))

    def convergence(self) -> dict:
        """Return the relocation history as arrays, for a convergence plot.

        Returns
        -------
        dict
            ``iteration`` (int), ``max_relative_pole_change``,
            ``rms_normalized_residual`` and ``sigma_constant`` (float arrays,
            one entry per relocation; empty when there was none).
        """
        its = self.iterations
        return {
            "iteration": np.array([i.index for i in its], dtype=int),
            "max_relative_pole_change": np.array([i.max_relative_pole_change for i in its], dtype=float),
            "rms_normalized_residual": np.array([i.rms_normalized_residual for i in its], dtype=float),
            "sigma_constant": np.array([i.sigma_constant for i in its], dtype=float),
        }

    def _split(self):
        real = self.poles.imag == 0
        upper = self.poles.imag > 0
        return self.poles[real].real, self.poles[upper]

    # -- evaluation --------------------------------------------------------

    def impedance(self, f_hz) -> np.ndarray:
        """Return the model value H(j 2 pi f).

        Parameters
        ----------
        f_hz : array_like
            Frequencies in Hz (0 allowed only without an origin pole).

        Returns
        -------
        numpy.ndarray
            Complex model values (ohm for an impedance), shaped like `f_hz`.
        """
        f = np.asarray(f_hz, dtype=float)
        s = 1j * TWO_PI * f.ravel()
        h = np.full(s.shape, complex(self.constant))
        if self.poles.size:
            h = h + (self.residues[None, :] / (s[:, None] - self.poles[None, :])).sum(axis=1)
        if self.proportional:
            h = h + s * self.proportional
        if self.origin_residue:
            with np.errstate(divide="ignore", invalid="ignore"):
                h = h + self.origin_residue / s
        return h.reshape(f.shape)

    __call__ = impedance

    def design_matrix(self, f_hz, include_poles: bool = False) -> np.ndarray:
        """Return dH/d(parameters) at each frequency (complex, points x parameters).

        Parameters
        ----------
        f_hz : array_like
            Frequencies in Hz.
        include_poles : bool
            Append the columns for the pole parameters (the order of
            `full_covariance`).

        Returns
        -------
        numpy.ndarray
            Complex matrix; with poles fixed, H is linear in `coefficients` and
            ``H = design_matrix(f) @ coefficients``.
        """
        f = np.asarray(f_hz, dtype=float).ravel()
        s = 1j * TWO_PI * f
        preal, pcplx = self._split()
        with np.errstate(divide="ignore", invalid="ignore"):
            cols = [_pole_basis(s, preal, pcplx)]
            if self.has_constant:
                cols.append(np.ones((s.size, 1), complex))
            if self.has_proportional:
                cols.append(s[:, None])
            if self.has_origin_pole:
                cols.append(1.0 / s[:, None])
            if include_poles:
                rreal = self.residues[self.poles.imag == 0].real
                rcplx = self.residues[self.poles.imag > 0]
                cols.append(_pole_jacobian(s, preal, pcplx, rreal, rcplx))
        return np.concatenate(cols, axis=1)

    def impedance_covariance(self, f_hz, include_poles: bool = True) -> np.ndarray:
        """Return the 2 x 2 covariance of (Re H, Im H) of the model at each frequency.

        Parameters
        ----------
        f_hz : array_like
            Frequencies in Hz.
        include_poles : bool
            True (the default): propagating the uncertainty of the poles too,
            from `full_covariance`.  False: with the poles held fixed, from
            `covariance`; this understates the uncertainty badly near a
            resonance, where a small shift of the pole pair moves H by far
            more than its residues can (see `impedance_std`).

        Returns
        -------
        numpy.ndarray
            Shape ``(n, 2, 2)``: ``[[var Re, cov], [cov, var Im]]`` in ohm^2.
        """
        J = self.design_matrix(f_hz, include_poles=include_poles)
        C = self.full_covariance if include_poles else self.covariance
        Jr, Ji = J.real, J.imag
        vrr = np.einsum("ij,jk,ik->i", Jr, C, Jr)
        vii = np.einsum("ij,jk,ik->i", Ji, C, Ji)
        vri = np.einsum("ij,jk,ik->i", Jr, C, Ji)
        out = np.empty((J.shape[0], 2, 2))
        out[:, 0, 0], out[:, 1, 1] = vrr, vii
        out[:, 0, 1] = out[:, 1, 0] = vri
        return out

    def impedance_std(self, f_hz, include_poles: bool = True) -> np.ndarray:
        """Return the standard uncertainty of the model value, complex-circular.

        ``sqrt(var Re H + var Im H)``, the same convention as `Sweep.sigma_ohm`
        (E|dH|^2 = std^2).

        Parameters
        ----------
        f_hz : array_like
            Frequencies in Hz.
        include_poles : bool
            True (the default): the poles' uncertainty is propagated too (from
            `full_covariance`).  False: poles held fixed (from `covariance`).
            In a Monte Carlo of a noisy inductor sweep (tests/test_vectfit.py)
            the fixed-pole interval covered the truth at the resonance in only
            a few percent of realisations instead of 95 %, while the full one
            covered it as it should; use False only away from resonances or to
            compare.

        Returns
        -------
        numpy.ndarray
            Standard uncertainties in ohm, shaped like `f_hz`.
        """
        f = np.asarray(f_hz, dtype=float)
        cov = self.impedance_covariance(f, include_poles=include_poles)
        return np.sqrt(np.maximum(cov[:, 0, 0] + cov[:, 1, 1], 0.0)).reshape(f.shape)

    # -- passivity ---------------------------------------------------------

    def real_part_crossings_hz(self) -> np.ndarray:
        """Return the frequencies (Hz, sorted) where Re H(j omega) changes sign.

        Exact: with y = omega^2, ``Re H = d + sum_k c_k / (y - q_k)`` where
        ``q_k = -p_k^2`` and ``c_k = -r_k p_k`` (the proportional and origin
        terms are imaginary on the j omega axis), a pole-residue function of y
        of half the order in s: its zeros are the generalised eigenvalues of
        the pencil ``([[diag q, 1], [c^T, d]], diag(1, ..., 1, 0))``, the
        scalar form of the half-size passivity test matrix.  The real,
        non-negative zeros are the crossings.
        """
        if self.poles.size == 0:
            return np.zeros(0)
        w0 = self.reference_omega
        p = self.poles / w0
        r = self.residues / w0
        q = -(p**2)
        c = -r * p
        n = p.size
        M = np.zeros((n + 1, n + 1), complex)
        M[np.arange(n), np.arange(n)] = q
        M[:n, n] = 1.0
        M[n, :n] = c
        M[n, n] = self.constant
        B = np.eye(n + 1)
        B[n, n] = 0.0
        import scipy.linalg

        with np.errstate(all="ignore"):
            y = scipy.linalg.eigvals(M, B)
        y = y[np.isfinite(y)]
        ok = (np.abs(y.imag) <= 1e-7 * np.maximum(np.abs(y), 1e-300)) & (y.real > 0)
        return np.sort(np.sqrt(y[ok].real) * w0 / TWO_PI)

    def passivity_violations(self, f_hz=None, *, tol_ohm: float = 0.0) -> tuple:
        """Return where the model is not passive (empty tuple when it is).

        Passive means positive-real: Re H(j omega) >= 0 at every frequency,
        and non-negative coefficients of s and 1/s.  Nothing is changed: the
        caller decides what to do with a violation.

        Parameters
        ----------
        f_hz : array_like, optional
            Check only these frequencies (grouping consecutive negative points
            into bands).  By default the whole axis 0 <= f < inf is checked:
            the exact real-part crossings (`real_part_crossings_hz`) split it
            into bands whose sign is read at an interior point, and a sampled
            cross-check runs on a log grid from 1/1000 of the lowest to 1000
            times the highest fitted frequency (40 points per decade, plus the
            asymptotes 0 and inf), which catches a real part that touches zero
            without a clean crossing.
        tol_ohm : float
            Real parts down to ``-tol_ohm`` are accepted (for round-off).

        Returns
        -------
        tuple of PassivityViolation
            Sorted by frequency; coefficient violations first.
        """
        return tuple(self._with_std(v) for v in self._violations(f_hz, tol_ohm))

    def _with_std(self, v):
        import dataclasses

        C = self.full_covariance
        if C.size == 0 or not np.all(np.isfinite(C)):
            return v
        names = self.coefficient_names
        if v.kind == "origin residue" and "origin_residue" in names:
            k = names.index("origin_residue")
            return dataclasses.replace(v, worst_std=float(math.sqrt(max(C[k, k], 0.0))))
        if v.kind == "proportional term" and "proportional" in names:
            k = names.index("proportional")
            return dataclasses.replace(v, worst_std=float(math.sqrt(max(C[k, k], 0.0))))
        if v.kind == "real part":
            if math.isinf(v.worst_f_hz):
                if "constant" not in names:
                    return v
                k = names.index("constant")
                return dataclasses.replace(v, worst_std=float(math.sqrt(max(C[k, k], 0.0))))
            f = max(v.worst_f_hz, 1e-300)
            if v.worst_f_hz == 0.0 and self.has_origin_pole:
                f = self.f_min_hz * 1e-6
            var = self.impedance_covariance(np.array([f]))[0, 0, 0]
            return dataclasses.replace(v, worst_std=float(math.sqrt(max(var, 0.0))))
        return v

    def _violations(self, f_hz, tol_ohm):
        out = []
        if self.has_origin_pole and self.origin_residue < 0:
            out.append(PassivityViolation("origin residue", 0.0, 0.0, 0.0, float(self.origin_residue)))
        if self.has_proportional and self.proportional < 0:
            out.append(PassivityViolation("proportional term", math.inf, math.inf, math.inf, float(self.proportional)))
        if f_hz is not None:
            f = np.sort(np.asarray(f_hz, dtype=float).ravel())
            out.extend(_negative_bands(f, self.impedance(f).real, tol_ohm))
            return out
        fmin = self.f_min_hz if np.isfinite(self.f_min_hz) else 1.0
        fmax = self.f_max_hz if np.isfinite(self.f_max_hz) else fmin
        ndec = max(math.log10(fmax / fmin) + 6.0, 1.0)
        grid = np.geomspace(fmin * 1e-3, fmax * 1e3, int(40 * ndec) + 1)
        cross = self.real_part_crossings_hz()
        edges = np.concatenate([[0.0], cross, [math.inf]])
        bands = []
        for lo, hi in zip(edges[:-1], edges[1:]):
            inside = grid[(grid > lo) & (grid < hi)]
            if hi == math.inf:
                probe = np.concatenate([inside, [max(lo, grid[-1]) * 10.0]])
            elif lo == 0.0:
                probe = np.concatenate([[min(hi, grid[0]) * 0.1], inside])
            else:
                probe = np.concatenate([[math.sqrt(lo * hi)], inside])
            vals = self.impedance(probe).real
            if hi == math.inf:
                vals = np.append(vals, self.constant)
                probe = np.append(probe, math.inf)
            if lo == 0.0:
                vals = np.insert(vals, 0, self._re_at_dc())
                probe = np.insert(probe, 0, 0.0)
            k = int(np.argmin(vals))
            if vals[k] < -tol_ohm:
                bands.append(PassivityViolation("real part", float(lo), float(hi), float(probe[k]), float(vals[k])))
        out.extend(bands)
        # Sampled cross-check; a band already reported is not reported twice.
        sampled = _negative_bands(grid, self.impedance(grid).real, tol_ohm)
        for v in sampled:
            if not any(b.f_lo_hz <= v.worst_f_hz <= b.f_hi_hz for b in bands):
                out.append(v)
        return out

    @property
    def is_passive(self) -> bool:
        """True when `passivity_violations()` finds nothing (strictly: a
        violation within its uncertainty still counts; see
        `PassivityViolation.within_uncertainty`)."""
        return not self._violations(None, 0.0)

    def _re_at_dc(self) -> float:
        if self.poles.size == 0:
            return float(self.constant)
        return float(self.constant + np.real(np.sum(-self.residues / self.poles)))


def _negative_bands(f, re, tol):
    neg = re < -tol
    if not neg.any():
        return []
    idx = np.flatnonzero(neg)
    starts = idx[np.concatenate([[True], np.diff(idx) > 1])]
    ends = idx[np.concatenate([np.diff(idx) > 1, [True]])]
    out = []
    for a, b in zip(starts, ends):
        k = a + int(np.argmin(re[a : b + 1]))
        out.append(PassivityViolation("real part", float(f[a]), float(f[b]), float(f[k]), float(re[k])))
    return out


# --------------------------------------------------------------------------
# the solver
# --------------------------------------------------------------------------


def _pole_basis(s, preal, pcplx):
    """Real-coefficient basis of the pole part: one column per real pole,
    two per pair (1/(s-p) + 1/(s-p*), j/(s-p) - j/(s-p*)), so that real
    coefficients (c1, c2) give the conjugate residues c1 +- j c2 exactly."""
    n = s.size
    out = np.empty((n, preal.size + 2 * pcplx.size), complex)
    out[:, : preal.size] = 1.0 / (s[:, None] - preal[None, :])
    if pcplx.size:
        a = 1.0 / (s[:, None] - pcplx[None, :])
        b = 1.0 / (s[:, None] - pcplx.conj()[None, :])
        out[:, preal.size :: 2] = a + b
        out[:, preal.size + 1 :: 2] = 1j * (a - b)
    return out


def _pole_jacobian(s, preal, pcplx, rreal, rcplx):
    """dH/d(pole parameters): real pole value; (Re, Im) of each pair."""
    n = s.size
    out = np.empty((n, preal.size + 2 * pcplx.size), complex)
    out[:, : preal.size] = rreal[None, :] / (s[:, None] - preal[None, :]) ** 2
    if pcplx.size:
        a = rcplx[None, :] / (s[:, None] - pcplx[None, :]) ** 2
        b = rcplx.conj()[None, :] / (s[:, None] - pcplx.conj()[None, :]) ** 2
        out[:, preal.size :: 2] = a + b
        out[:, preal.size + 1 :: 2] = 1j * (a - b)
    return out


def _extra_columns(s, constant, proportional, origin_pole):
    cols = []
    if constant:
        cols.append(np.ones(s.size, complex))
    if proportional:
        cols.append(s)
    if origin_pole:
        cols.append(1.0 / s)
    return np.stack(cols, axis=1) if cols else np.zeros((s.size, 0), complex)


def _stack(A):
    """Complex rows -> real rows (real parts on top of imaginary parts)."""
    return np.concatenate([A.real, A.imag], axis=0)


def starting_poles(f_min_hz: float, f_max_hz: float, n_poles: int, n_real: int | None = None, damping: float = 0.01):
    """Return the usual starting poles of vector fitting, in rad/s.

    Complex pairs ``-damping * beta +- j beta`` with beta log-spaced over the
    band (common practice, Gustavsen & Semlyen 1999, sec. 5: weakly damped
    poles spread over the band), and real poles ``-beta`` log-spaced over
    the band.

    Parameters
    ----------
    f_min_hz, f_max_hz : float
        The band.
    n_poles : int
        Total number of poles (a pair counts two).
    n_real : int, optional
        How many of them are real; by default ``n_poles % 2`` (all pairs but
        one real pole for an odd count).
    damping : float
        Ratio -Re p / Im p of the starting pairs.

    Returns
    -------
    numpy.ndarray
        Complex poles, real ones first, then pairs (positive-imaginary first).
    """
    if n_real is None:
        n_real = n_poles % 2
    if n_real < 0 or n_real > n_poles or (n_poles - n_real) % 2:
        raise ZfitInputError(f"{n_poles} poles cannot have {n_real} real ones (the rest come in pairs)")
    n_pairs = (n_poles - n_real) // 2
    lo, hi = math.log(TWO_PI * f_min_hz), math.log(TWO_PI * f_max_hz)

    def spread(m):
        return np.exp(lo + (hi - lo) * (np.arange(m) + 0.5) / m) if m else np.zeros(0)

    beta = spread(n_pairs)
    pairs = -damping * beta + 1j * beta
    real = -spread(n_real)
    out = [real.astype(complex)]
    for p in pairs:
        out.append(np.array([p, p.conjugate()]))
    return np.concatenate(out)


def _split_poles(poles):
    """Complete complex set -> (real poles as float, positive-imag pair members),
    with the pairs made exactly conjugate and all poles stable (Re flipped)."""
    poles = np.asarray(poles, dtype=complex)
    tol = 1e-12 * np.maximum(np.abs(poles), 1e-300)
    real = np.abs(poles.imag) <= tol
    preal = np.sort(-np.abs(poles[real].real))[::-1]
    up = poles[(~real) & (poles.imag > 0)]
    down = poles[(~real) & (poles.imag < 0)]
    if up.size != down.size:
        raise ZfitInputError("complex starting poles must come in conjugate pairs")
    pc = -np.abs(up.real) + 1j * up.imag
    pc = pc[np.argsort(pc.imag)]
    return preal, pc


def _join_poles(preal, pcplx):
    out = np.empty(preal.size + 2 * pcplx.size, complex)
    out[: preal.size] = preal
    out[preal.size :: 2] = pcplx
    out[preal.size + 1 :: 2] = pcplx.conj()
    return out


def _col_norms(A):
    n = np.sqrt(np.einsum("ij,ij->j", A, A))
    n[n == 0] = 1.0
    return n


def _r_factor(A, overwrite=False):
    """Upper-triangular R of A = QR (Householder, LAPACK geqrf); A may be
    destroyed when `overwrite`."""
    m = A.shape[1]
    if A.shape[0] < m:
        return np.linalg.qr(A, mode="r")
    qr = _LAPACK.dgeqrf(A, overwrite_a=overwrite)[0]
    return np.triu(qr[:m, :m])


class _Lapack:
    """scipy.linalg.lapack, imported on first use (keeps `import zfit` light)."""

    def __getattr__(self, name):
        from scipy.linalg import lapack

        return getattr(lapack, name)


_LAPACK = _Lapack()


class _Relocator:
    """The data-side pieces of the relocation problem that stay fixed over
    the iterations (real-stacked weighted data and optional-term columns)."""

    def __init__(self, s, h, w, flags):
        self.s = s
        self.n = s.size
        hw = h * w
        self.hw = hw
        self.hw_re, self.hw_im = hw.real[:, None], hw.imag[:, None]
        ex = _extra_columns(s, *flags) * w[:, None]
        self.extras = np.concatenate([ex.real, ex.imag], axis=0)
        self.n_extra = ex.shape[1]
        self.w = w[:, None]
        # Relaxation row scale: size of the weighted data per point, as in
        # Gustavsen's published code.
        self.scale = float(np.linalg.norm(hw)) / self.n

    def __call__(self, preal, pcplx):
        """One relaxed pole relocation (Gustavsen 2006) -> (zeros of sigma,
        relocation residual, sigma's constant).

        Unknowns: the fit part (pole basis, optional terms) and
        sigma(s) = sum c~ phi + d~.  The fit block is eliminated by a QR
        factorisation, leaving the small sigma block R22 (as in the fast VF of
        Deschrijver et al. 2008), to which the relaxation row
        Re sum_k sigma(s_k) = N is appended.
        """
        n = self.n
        phi = _pole_basis(self.s, preal, pcplx)
        npole = phi.shape[1]
        nfit = npole + self.n_extra
        m = nfit + npole + 1
        pr, pi = phi.real, phi.imag
        A = np.empty((2 * n, m), order="F")
        A[:n, :npole] = pr * self.w
        A[n:, :npole] = pi * self.w
        A[:, npole:nfit] = self.extras
        # -(h w) phi, real and imaginary parts
        A[:n, nfit : nfit + npole] = self.hw_im * pi - self.hw_re * pr
        A[n:, nfit : nfit + npole] = -(self.hw_re * pi + self.hw_im * pr)
        A[:n, -1] = -self.hw_re[:, 0]
        A[n:, -1] = -self.hw_im[:, 0]
        norms = _col_norms(A)
        A /= norms
        R = _r_factor(A, overwrite=True)
        R22 = R[nfit:, nfit:] * norms[None, nfit:]
        crow = np.empty(npole + 1)
        crow[:npole] = pr.sum(axis=0)
        crow[npole] = n
        crow *= self.scale
        M = np.vstack([R22, crow[None, :]])
        rhs = np.zeros(M.shape[0])
        rhs[-1] = n * self.scale
        cn = _col_norms(M)
        x = np.linalg.lstsq(M / cn, rhs, rcond=None)[0] / cn
        dt = x[-1]
        if not (1e-8 < abs(dt) < 1e8):
            # sigma's constant collapsed: fall back to the classic form d~ = +-1.
            dt = 1.0 if dt >= 0 else -1.0
            cn2 = _col_norms(R22[:, :-1])
            c = np.linalg.lstsq(R22[:, :-1] / cn2, -R22[:, -1] * dt, rcond=None)[0] / cn2
            x = np.concatenate([c, [dt]])
        r = R22 @ x
        res = math.sqrt(float(r @ r) / n)
        c = x[:-1]
        # Zeros of sigma: eig(A - b c^T / d~) in the real block form.
        nr = preal.size
        Am = np.zeros((npole, npole))
        bv = np.zeros(npole)
        idx = np.arange(nr)
        Am[idx, idx] = preal
        bv[:nr] = 1.0
        if pcplx.size:
            i = nr + 2 * np.arange(pcplx.size)
            Am[i, i] = Am[i + 1, i + 1] = pcplx.real
            Am[i, i + 1] = pcplx.imag
            Am[i + 1, i] = -pcplx.imag
            bv[i] = 2.0
        zeros = np.linalg.eigvals(Am - np.outer(bv, c) / dt)
        return zeros, res, float(dt)


def _pole_change(oreal, ocplx, nreal, ncplx):
    """Largest relative movement of a pole between two split pole sets."""
    if oreal.size != nreal.size or ocplx.size != ncplx.size:
        return math.inf
    if oreal.size + ocplx.size == 0:
        return 0.0
    a = np.concatenate([oreal, ocplx])
    b = np.concatenate([nreal, ncplx])
    return float(np.max(np.abs(a - b) / np.abs(a)))


def _unknowns(n_poles, n_extra):
    """Real unknowns of the relocation problem (the larger of the two)."""
    return 2 * n_poles + n_extra + 1


def _too_few_message(n_points, n_poles, n_extra, terms):
    need = _unknowns(n_poles, n_extra)
    what = f"{n_poles} pole{'s' if n_poles != 1 else ''}" + (f" with {terms}" if terms else "")
    return (
        f"too few frequency points for this fit: {n_points} points give {2 * n_points} real equations, "
        f"but a rational model of {what} needs more than {need} unknowns to be fitted; "
        f"use fewer poles or a sweep with more points"
    )


def _pinv_gram(As):
    """(As^T As)^-1 by SVD, with directions below round-off dropped."""
    _, sv, Vt = np.linalg.svd(As, full_matrices=False)
    keep = sv > sv[0] * 1e-14
    inv = np.where(keep, 1.0 / np.where(keep, sv, 1.0), 0.0)
    return (Vt.T * inv) @ (Vt * inv[:, None]), Vt, inv


def _gram_inverse(J):
    """(J^T J)^-1 from the R factor of the column-scaled J (SVD if rank-deficient)."""
    norms = _col_norms(J)
    Js = J / norms
    R = _r_factor(Js)
    d = np.abs(np.diag(R))
    if d.size and d.min() > 1e-10 * d.max():
        Ri = np.linalg.inv(R)
        G = Ri @ Ri.T
    else:
        G = _pinv_gram(Js)[0]
    return G / np.outer(norms, norms)


def _fit_fixed(s, h, w, preal, pcplx, flags):
    """Linear residue identification with the poles fixed: weighted least
    squares by QR of [A | b]; returns the complex design matrix, the
    coefficients, chi-square and (A^T W A)^-1."""
    extras = _extra_columns(s, *flags)
    phi = _pole_basis(s, preal, pcplx)
    A = np.concatenate([phi, extras], axis=1)
    n, m = A.shape
    # Complex-circular sigma: each of Re and Im carries sigma/sqrt(2).
    rw = (math.sqrt(2.0) * w)[:, None]
    Ab = np.empty((2 * n, m + 1))
    Ab[:n, :m] = A.real * rw
    Ab[n:, :m] = A.imag * rw
    Ab[:n, m] = h.real * rw[:, 0]
    Ab[n:, m] = h.imag * rw[:, 0]
    norms = _col_norms(Ab[:, :m])
    Ab[:, :m] /= norms
    R = _r_factor(Ab)
    R11 = R[:m, :m]
    d = np.abs(np.diag(R11))
    if d.size and d.min() > 1e-10 * d.max():
        Ri = np.linalg.inv(R11)
        xs = Ri @ R[:m, m]
        chi2 = float(R[m, m] ** 2)
        G = Ri @ Ri.T
    else:
        G = _pinv_gram(Ab[:, :m])[0]
        xs = G @ (Ab[:, :m].T @ Ab[:, m])
        r = Ab[:, :m] @ xs - Ab[:, m]
        chi2 = float(r @ r)
    return A, xs / norms, chi2, G / np.outer(norms, norms)


def _model_from(s, h, w, preal, pcplx, flags, w0, absolute_sigma, extra):
    """Final linear fit -> RationalModel in SI units."""
    A, x, chi2, cov_n = _fit_fixed(s, h, w, preal, pcplx, flags)
    constant, proportional, origin_pole = flags
    nr, nc = preal.size, pcplx.size
    npole = nr + 2 * nc
    n = s.size
    # Back to SI: s = w0 s_n; r/(s - p) = (r_n w0)/(s - p_n w0); e s_n = (e/w0) s.
    conv = np.concatenate(
        [np.full(npole, w0), [1.0] * constant, [1.0 / w0] * proportional, [w0] * origin_pole]
    )
    coef = x * conv
    cov = cov_n * np.outer(conv, conv)
    preal_si, pcplx_si = preal * w0, pcplx * w0
    rreal = coef[:nr]
    rc = coef[nr:npole:2] + 1j * coef[nr + 1 : npole : 2]
    poles = _join_poles(preal_si, pcplx_si)
    residues = _join_poles(rreal, rc)
    k = npole
    d = float(coef[k]) if constant else 0.0
    k += constant
    e = float(coef[k]) if proportional else 0.0
    k += proportional
    r0 = float(coef[k]) if origin_pole else 0.0
    names = [f"residue[{i}]" for i in range(nr)]
    for i in range(nc):
        names += [f"Re residue[{nr + 2 * i}]", f"Im residue[{nr + 2 * i}]"]
    names += ["constant"] * constant + ["proportional"] * proportional + ["origin_residue"] * origin_pole
    n_unknown = npole + constant + proportional + origin_pole + npole
    dof = 2 * n - n_unknown
    chi2_red = chi2 / dof if dof > 0 else float("nan")
    factor = 1.0 if absolute_sigma or not np.isfinite(chi2_red) else chi2_red
    # Full covariance (coefficients + poles) from the Jacobian of the nonlinear model.
    Jp = _pole_jacobian(s * w0, preal_si, pcplx_si, rreal, rc)
    Jfull = np.concatenate([A / conv[None, :], Jp], axis=1) * (math.sqrt(2.0) * w)[:, None]
    full = _gram_inverse(_stack(Jfull))
    return RationalModel(
        poles=poles,
        residues=residues,
        constant=d,
        proportional=e,
        origin_residue=r0,
        has_constant=bool(constant),
        has_proportional=bool(proportional),
        has_origin_pole=bool(origin_pole),
        coefficients=coef,
        coefficient_names=tuple(names),
        covariance=cov * factor,
        full_covariance=full * factor,
        rms_normalized_residual=math.sqrt(chi2 / (2 * n)),
        chi2_reduced=chi2_red,
        n_points=n,
        dof=int(dof),
        absolute_sigma=bool(absolute_sigma),
        reference_omega=w0,
        **extra,
    )


#: Noisy data that the model cannot quite describe make the poles creep by
#: ever smaller steps instead of settling to round-off.  A fit counts as
#: converged also when, twice in a row, no pole moved by more than
#: _SETTLED_POLES (relative) and the relocation residual changed by less than
#: _SETTLED_RESIDUAL (relative): far below any pole's statistical uncertainty;
#: once is enough when the poles moved by less than a tenth of _SETTLED_POLES.
#: On exact data the residual keeps falling by orders of magnitude until
#: round-off, so there `pole_tol` decides.
_SETTLED_POLES = 1e-5

#: An RMS normalised residual this small means the data are rational to
#: round-off (synthetic data): more poles cannot improve on it.
_EXACT = 1e-10
_SETTLED_RESIDUAL = 1e-5


def _fit_count(s, h, w, flags, w0, fband, n_poles, n_real, init, n_iter, pole_tol, absolute_sigma, extra,
               stall_tol=0.0, history=()):
    """Vector fitting with a given number of poles.

    With ``stall_tol > 0`` (trial fits of the automatic count) the relocation
    also stops when its residual has changed by less than that fraction in two
    successive iterations: the residual, which decides the count, is settled
    even if a hopeless pole is still drifting.
    """
    if init is not None:
        preal, pcplx = _split_poles(np.asarray(init, complex) / w0)
    else:
        preal, pcplx = _split_poles(starting_poles(fband[0], fband[1], n_poles, n_real) / w0)
    relocate = _Relocator(s, h, w, flags)
    history = list(history)
    converged = preal.size + pcplx.size == 0
    stalls = settles = 0
    start = len(history)
    for it in range(start + 1, start + n_iter + 1) if not converged else ():
        zeros, res, dt = relocate(preal, pcplx)
        nreal, ncplx = _split_poles(zeros)
        # A pole exactly at the origin would duplicate the 1/s column.
        nreal = np.where(nreal == 0.0, -1e-9, nreal)
        change = _pole_change(preal, pcplx, nreal, ncplx)
        preal, pcplx = nreal, ncplx
        new = _join_poles(preal, pcplx)
        if history:
            prev = history[-1].rms_normalized_residual
            rel = abs(res - prev) / max(prev, 1e-300)
            stalls = stalls + 1 if stall_tol and rel <= stall_tol else 0
            settles = settles + 1 if (rel <= _SETTLED_RESIDUAL and change <= _SETTLED_POLES) else 0
        history.append(VFIteration(it, new * w0, change, res, dt))
        if change < pole_tol or settles >= 2 or (settles and change <= _SETTLED_POLES / 10):
            converged = True
            break
        if stalls >= 2:
            break
    return _model_from(
        s, h, w, preal, pcplx, flags, w0, absolute_sigma,
        dict(iterations=tuple(history), converged=converged, **extra),
    )


def vector_fit(
    f_hz,
    h,
    sigma=None,
    n_poles: int | None = None,
    *,
    constant: bool = True,
    proportional: bool = True,
    origin_pole: bool = False,
    max_poles: int = 10,
    min_poles: int | None = None,
    n_iter: int = 30,
    n_real_poles: int | None = None,
    initial_poles=None,
    pole_tol: float = 1e-10,
    noise_tol: float = 0.1,
    min_improvement: float = 0.05,
    absolute_sigma: bool = False,
    sigma_update=None,
    reweight: int = 2,
) -> RationalModel:
    """Return a rational model of a sampled one-port response by relaxed vector fitting.

    Parameters
    ----------
    f_hz : array_like
        Frequencies in Hz, positive and distinct (any order).
    h : array_like
        Complex response at each frequency (an impedance in ohm, say).
    sigma : array_like or float, optional
        Standard uncertainty of each `h`, complex-circular (E|dh|^2 = sigma^2).
        The fit minimises sum |H_model - h|^2 / sigma^2.  When omitted the
        weights are 1/|h| (a relative fit), the RMS residual is then a relative
        error and the automatic pole count uses only the "stops improving" rule.
    n_poles : int, optional
        Number of poles besides the origin pole (a complex pair counts two).
        None chooses the count automatically (see Notes).
    constant : bool
        Fit a constant term d.
    proportional : bool
        Fit a term e s (an inductance at high frequency, for an impedance).
    origin_pole : bool
        Fit a fixed pole at s = 0, r_0 / s (a capacitance at low frequency).
    max_poles : int
        Largest pole count tried by the automatic count.
    min_poles : int, optional
        Smallest pole count tried by the automatic count; by default 0 when
        a constant, proportional or origin term is fitted, else 1.
    n_iter : int
        Most pole relocations per fit.
    n_real_poles : int, optional
        How many of the starting poles are real (default ``n_poles % 2``);
        relocation may still turn a pair into two real poles and back.
    initial_poles : array_like, optional
        Starting poles in rad/s (conjugate pairs both present) instead of the
        log-spaced default; fixes the pole count.
    pole_tol : float
        The fit has converged when no pole moves by more than this fraction
        of its magnitude in one relocation (or, on noisy data, when twice in
        a row no pole moved by more than 1e-5 of its magnitude and the
        relocation residual changed by less than 1e-5 of itself; once, when
        no pole moved by more than 1e-6).
    noise_tol : float
        Automatic count: stop growing once the RMS normalised residual is at
        most ``1 + max(noise_tol, 3 / sqrt(4 N))`` (the noise level, with room
        for its own scatter over N points).
    min_improvement : float
        Automatic count: a further pole count must lower the RMS residual by
        at least this fraction to be worth it.
    absolute_sigma : bool
        Use `sigma` as the absolute uncertainty for the covariance; by default
        the covariance is scaled by the reduced chi-square.
    sigma_update : callable, optional
        ``sigma_update(f_hz, h_model) -> sigma``: the uncertainty the
        measurement would have at the model's value.  When given, the fit is
        repeated `reweight` times with sigma re-evaluated at the fitted model
        instead of at the noisy data (iteratively reweighted least squares;
        the first repetition re-chooses an automatic pole count).  Use it when
        sigma is a steep function of the value, as for an impedance derived
        from S11 or S21 where the connection resolves it poorly: sigma
        evaluated at the noisy point is then itself noisy and biased, and the
        residual cannot reach the noise even for the true model.
    reweight : int
        Number of repetitions with `sigma_update`.

    Returns
    -------
    RationalModel
        Poles, residues, optional terms, covariance and diagnostics.

    Raises
    ------
    FitError
        When there are too few points for the unknowns.
    ZfitInputError
        On arrays of different lengths, non-finite values, non-positive
        frequencies or uncertainties.

    Notes
    -----
    *Method.* Frequencies are scaled by the geometric mean of the band,
    omega_0, before any least squares, and every column is scaled to unit norm,
    which keeps the problem well conditioned over many decades.  Each pole
    relocation solves, for the current poles a_k, the linear problem
    ``sigma(s) h(s) ~ sum c_k phi_k(s) + d + e s + r_0/s`` with
    ``sigma(s) = sum c~_k phi_k(s) + d~`` and the relaxation condition
    ``Re sum_points sigma(s_i) = N`` (Gustavsen 2006), weighted by 1/sigma
    per point on both the real and imaginary rows.  Real arithmetic
    throughout: each conjugate pair has the two real basis functions
    ``1/(s-a) + 1/(s-a*)`` and ``j/(s-a) - j/(s-a*)``, so residues of pairs
    are exactly conjugate.  The fit-part unknowns are eliminated by a QR
    factorisation, leaving only the sigma block (Deschrijver et al. 2008).
    The new poles are the zeros of sigma, the eigenvalues of
    ``A - b c~^T / d~`` in real block form; unstable ones are flipped into
    the left half-plane.  After the last relocation the residues and terms
    are found by weighted linear least squares with the poles fixed, which
    gives their covariance (scaled by the reduced chi-square); a second,
    full covariance takes the poles as parameters too.

    *Automatic pole count.* Counts `min_poles` (0 with an optional term, else
    1), then the next even count and one pole pair more each time (a pair
    may split into two real poles), up to `max_poles`, are fitted from fresh
    starting poles.  The search stops
    at the first count whose RMS normalised residual reaches the noise (see
    `noise_tol`; with relative weights, at a residual of 1e-10, exact data);
    otherwise, when two successive counts each fail to lower the
    best residual by `min_improvement`, it returns the smallest count within
    `min_improvement` of the best residual found.  When a count reaches the
    noise, one pole fewer is tried too (an odd count, one real pole) and
    preferred if it also does.  Counts whose unknowns would
    not leave at least one degree of freedom are not tried; if not even the
    smallest can be fitted, `FitError` explains why.

    *Which options for which part* (`IMPEDANCE_FIT_OPTIONS`, `fit_impedance`):
    an inductor with winding capacitance, ``(R_s + sL) || 1/(sC_p)``, is
    strictly proper in s: fit it with ``constant=False, proportional=False``;
    the pole pair lands at the self-resonance, and the DC value R_s is
    ``-sum r_k / p_k``, the low-frequency inductance comes from the next term
    of that expansion.  Well below its SRF it still needs the pair (placed
    above the band) rather than a proportional term, so that the model keeps
    the physics at high frequency.  A capacitor, ``ESR + sESL + 1/(sC)``, is
    fitted with ``origin_pole=True, constant=True, proportional=True`` and
    then needs no other pole (count 0); leakage or dielectric absorption add
    real poles.  Passivity is checked, not enforced: see
    `RationalModel.passivity_violations`.

    References
    ----------
    .. [1] B. Gustavsen and A. Semlyen, "Rational approximation of frequency
       domain responses by vector fitting", IEEE Trans. Power Delivery 14(3),
       1052-1061, 1999. doi:10.1109/61.772353
    .. [2] B. Gustavsen, "Improving the pole relocating properties of vector
       fitting", IEEE Trans. Power Delivery 21(3), 1587-1592, 2006.
       doi:10.1109/TPWRD.2005.860281
    .. [3] D. Deschrijver, M. Mrozowski, T. Dhaene and D. De Zutter,
       "Macromodeling of multiport systems using a fast implementation of the
       vector fitting method", IEEE Microwave and Wireless Components Letters
       18(6), 383-385, 2008. doi:10.1109/LMWC.2008.922585
    .. [4] A. Semlyen and B. Gustavsen, "A half-size singularity test matrix
       for fast and reliable passivity assessment of rational models", IEEE
       Trans. Power Delivery 24(1), 345-351, 2009 (the test used by
       `RationalModel.real_part_crossings_hz`; details from memory).
       doi:10.1109/TPWRD.2008.923406
    """
    f = np.asarray(f_hz, dtype=float).ravel()
    hh = np.asarray(h, dtype=complex).ravel()
    if f.size != hh.size:
        raise ZfitInputError(f"{f.size} frequencies but {hh.size} response values")
    if not (np.all(np.isfinite(f)) and np.all(np.isfinite(hh))):
        raise ZfitInputError("frequencies and response values must be finite numbers")
    if f.size == 0 or np.any(f <= 0):
        raise ZfitInputError("frequencies must be positive")
    if sigma is None:
        mag = np.abs(hh)
        sig = np.maximum(mag, 1e-12 * (mag.max() if mag.size else 1.0) + 1e-300)
        weighting = "relative"
    else:
        sig = np.broadcast_to(np.asarray(sigma, dtype=float), f.shape).astype(float)
        if not np.all(np.isfinite(sig)) or np.any(sig <= 0):
            raise ZfitInputError("uncertainties must be positive finite numbers")
        weighting = "sigma"
    order = np.argsort(f, kind="stable")
    f, hh, sig = f[order], hh[order], sig[order]
    if np.any(np.diff(f) == 0):
        raise ZfitInputError("frequencies must be distinct")
    flags = (bool(constant), bool(proportional), bool(origin_pole))
    n_extra = sum(flags)
    terms = ", ".join(t for t, on in zip(("a constant", "a proportional term", "an origin pole"), flags) if on)
    w0 = TWO_PI * math.sqrt(f[0] * f[-1])
    s = 1j * TWO_PI * f / w0
    n = f.size
    band = (float(f[0]), float(f[-1]))
    if 2 * n <= _unknowns(0 if n_extra else 1, n_extra):
        raise FitError(_too_few_message(n, 0 if n_extra else 1, n_extra, terms))
    extra = dict(f_min_hz=band[0], f_max_hz=band[1], weighting=weighting)
    if n_poles is not None:
        if int(n_poles) != n_poles or n_poles < 0:
            raise ZfitInputError(f"the pole count must be a non-negative integer, not {n_poles!r}")
        if n_poles == 0 and n_extra == 0:
            raise FitError("a model with no poles and no constant, proportional or origin term has nothing to fit")
    init = None if initial_poles is None else np.asarray(initial_poles, dtype=complex).ravel()
    count = None if n_poles is None else int(n_poles)
    if min_poles is None:
        min_poles = 0 if n_extra else 1
    elif int(min_poles) != min_poles or min_poles < (0 if n_extra else 1):
        raise ZfitInputError(f"the smallest pole count must be an integer >= {0 if n_extra else 1}, not {min_poles!r}")
    if count is None and init is None and 2 * n <= _unknowns(int(min_poles), n_extra):
        raise FitError(_too_few_message(n, int(min_poles), n_extra, terms))
    limits = (int(min_poles), int(max_poles))
    model = _solve(
        s, hh, 1.0 / sig, flags, w0, band, count, n_real_poles, init, n_iter, pole_tol, absolute_sigma,
        extra, noise_tol, min_improvement, limits, weighting, terms,
    )
    if sigma_update is None:
        return model
    trials = model.pole_count_trials
    for k in range(int(reweight)):
        sig = np.broadcast_to(np.asarray(sigma_update(f, model.impedance(f)), dtype=float), f.shape)
        if not np.all(np.isfinite(sig)) or np.any(sig <= 0):
            raise ZfitInputError("sigma_update returned uncertainties that are not positive finite numbers")
        again = k == 0 and count is None and init is None
        model = _solve(
            s, hh, 1.0 / sig, flags, w0, band, None if again else model.n_poles, None,
            None if again else model.poles, n_iter, pole_tol, absolute_sigma,
            dict(extra, reweight_passes=k + 1), noise_tol, min_improvement, limits, weighting, terms,
        )
        trials = trials + model.pole_count_trials
    return _replace(model, pole_count_trials=trials)


def _solve(s, hh, w, flags, w0, band, n_poles, n_real_poles, init, n_iter, pole_tol, absolute_sigma,
           extra, noise_tol, min_improvement, limits, weighting, terms):
    """One weighted vector fit: given poles, a given count, or the automatic count."""
    n = s.size
    n_extra = sum(flags)

    def fit(count, init=None, trials=(), stall_tol=0.0, history=(), iters=n_iter):
        if 2 * n <= _unknowns(count, n_extra):
            raise FitError(_too_few_message(n, count, n_extra, terms))
        return _fit_count(
            s, hh, w, flags, w0, band, count, n_real_poles if n_poles is not None else None,
            init, iters, pole_tol, absolute_sigma, dict(extra, pole_count_trials=trials),
            stall_tol=stall_tol, history=history,
        )

    if init is not None:
        return fit(init.size, init)
    if n_poles is not None:
        return fit(n_poles)

    # Automatic count: grow by pole pairs (a pair can also split into two real
    # poles), then see whether one pole fewer does as well.
    start, max_poles = limits
    target = 1.0 + max(noise_tol, 3.0 / math.sqrt(4.0 * n))

    def good(m):
        rms = m.rms_normalized_residual
        return (weighting == "sigma" and rms <= target) or rms <= _EXACT

    def fits_data(count):
        return 2 * n > _unknowns(count, n_extra)

    counts = [start] + list(range(start + 1 + (start + 1) % 2, max_poles + 1, 2))
    fits = []
    best = math.inf
    stale = 0
    for count in counts:
        if count > max_poles or not fits_data(count):
            break
        m = fit(count, stall_tol=1e-4)
        fits.append(m)
        rms = m.rms_normalized_residual
        if good(m):
            break
        if rms < best * (1.0 - min_improvement):
            best = rms
            stale = 0
        else:
            best = min(best, rms)
            stale += 1
            if stale >= 2:
                break
    if good(fits[-1]):
        chosen = fits[-1]
        fewer = chosen.n_poles - 1
        if len(fits) > 1 and fewer > fits[-2].n_poles:
            m = fit(fewer, stall_tol=1e-4)
            fits.append(m)
            if good(m):
                chosen = m
    else:
        best = min(m.rms_normalized_residual for m in fits)
        chosen = min(
            (m for m in fits if m.rms_normalized_residual <= best * (1.0 + min_improvement)),
            key=lambda m: m.n_poles,
        )
    trials = tuple((m.n_poles, float(m.rms_normalized_residual)) for m in fits)
    left = n_iter - len(chosen.iterations)
    if not chosen.converged and chosen.n_poles and left > 0:
        # The trial stopped on a settled residual: finish the relocation.
        chosen = fit(chosen.n_poles, chosen.poles, history=chosen.iterations, iters=left)
    return _replace(chosen, pole_count_trials=trials)


def _replace(model, **changes):
    import dataclasses

    return dataclasses.replace(model, **changes)


def sigma_update_for(connection: str, noise, reference_ohm: float = 50.0):
    """Return a `vector_fit` ``sigma_update`` for impedance derived from S-parameters.

    The returned function gives the standard uncertainty of Z that the
    instrument noise on S would produce at the model's impedance, for the
    given connection (`zfit.data._connection.sigma_z_from_s` evaluated at
    ``s_from_impedance(Z_model)`` instead of at the noisy measured S).

    Parameters
    ----------
    connection : {'reflection', 'shunt-thru', 'series-thru', 'impedance'}
        How Z was obtained (`Sweep.connection`).  For ``'impedance'`` (tables,
        where the noise model is on Z itself) the noise model is applied to
        the model's Z.
    noise : InstrumentNoise
        The noise model (`Sweep.noise`): on S for the network-analyser
        connections, on Z for ``'impedance'``.
    reference_ohm : float
        Reference impedance of the S-parameters (`Sweep.reference_ohm`).

    Returns
    -------
    callable
        ``sigma_update(f_hz, z_model) -> sigma_ohm``.

    Notes
    -----
    Only valid when `Sweep.sigma_ohm` came straight from this noise model;
    after fixture compensation the uncertainty has further terms and the
    sweep's own sigma should be used as is.
    """
    from ..data._connection import s_from_impedance, sigma_z_from_s

    if connection == "impedance":
        return lambda f_hz, z_model: noise.sigma(z_model)
    z0 = float(reference_ohm)

    def update(f_hz, z_model):
        return sigma_z_from_s(s_from_impedance(z_model, connection, z0), connection, z0, noise)

    return update


def fit_impedance(f_hz, z_ohm, sigma_ohm=None, kind: str = "general", n_poles: int | None = None, **options) -> RationalModel:
    """Return a rational model of a measured impedance with options suited to the part.

    Parameters
    ----------
    f_hz : array_like
        Frequencies in Hz.
    z_ohm : array_like
        Complex impedance in ohm.
    sigma_ohm : array_like or float, optional
        Complex-circular standard uncertainty of `z_ohm` (`Sweep.sigma_ohm`).
    kind : {'inductor', 'capacitor', 'general'}
        The part: chooses the optional terms from `IMPEDANCE_FIT_OPTIONS`
        (see the Notes of `vector_fit`).
    n_poles : int, optional
        Pole count; automatic by default.
    **options
        Further keyword arguments of `vector_fit` (they override the kind's).

    Returns
    -------
    RationalModel
        The fitted model.
    """
    if kind not in IMPEDANCE_FIT_OPTIONS:
        raise ZfitInputError(f"unknown part kind {kind!r}; use one of {', '.join(IMPEDANCE_FIT_OPTIONS)}")
    opts = dict(IMPEDANCE_FIT_OPTIONS[kind])
    opts.update(options)
    return vector_fit(f_hz, z_ohm, sigma_ohm, n_poles, **opts)

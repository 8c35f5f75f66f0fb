"""The rational model record of a one-port response and its evaluation.

The model is the pole-residue form

    H(s) = sum_k r_k / (s - p_k)  +  d  +  s e  +  r_0 / s

with stable poles ``p_k`` (real, or complex in exactly conjugate pairs with
conjugate residues), an optional constant ``d``, proportional term ``e`` and
a pole at the origin with residue ``r_0`` (the ``1/(sC)`` of a capacitor).
`RationalModel` holds it with its covariance and the fit's diagnostics; it
evaluates H, its uncertainty (poles included) and its passivity.  The model
is found by `zfit.fit._vectfit.vector_fit`.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ._basis import TWO_PI, pole_basis, pole_jacobian
from ._passivity import PassivityViolation, real_part_crossings_hz, violations, with_std

__all__ = ["RationalModel", "VFIteration", "PassivityViolation"]


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
    coefficient_names: tuple[str, ...] = ()
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
    iterations: tuple[VFIteration, ...] = field(default=(), repr=False)
    converged: bool = True
    pole_count_trials: tuple[tuple[int, float], ...] = ()
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
    def full_parameter_names(self) -> tuple[str, ...]:
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
            cols = [pole_basis(s, preal, pcplx)]
            if self.has_constant:
                cols.append(np.ones((s.size, 1), complex))
            if self.has_proportional:
                cols.append(s[:, None])
            if self.has_origin_pole:
                cols.append(1.0 / s[:, None])
            if include_poles:
                rreal = self.residues[self.poles.imag == 0].real
                rcplx = self.residues[self.poles.imag > 0]
                cols.append(pole_jacobian(s, preal, pcplx, rreal, rcplx))
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
        return real_part_crossings_hz(self)

    def passivity_violations(self, f_hz=None, *, tol_ohm: float = 0.0) -> tuple[PassivityViolation, ...]:
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
        return tuple(with_std(self, v) for v in violations(self, f_hz, tol_ohm))

    @property
    def is_passive(self) -> bool:
        """True when `passivity_violations()` finds nothing (strictly: a
        violation within its uncertainty still counts; see
        `PassivityViolation.within_uncertainty`)."""
        return not violations(self, None, 0.0)

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

import dataclasses
import math

import numpy as np

from .._errors import FitError, ZfitInputError
from ._basis import TWO_PI
from ._pole_count import too_few_message, unknowns, weighted_fit
from ._rational import RationalModel

__all__ = [
    "vector_fit",
    "fit_impedance",
    "sigma_update_for",
    "IMPEDANCE_FIT_OPTIONS",
]

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
    if 2 * n <= unknowns(0 if n_extra else 1, n_extra):
        raise FitError(too_few_message(n, 0 if n_extra else 1, n_extra, terms))
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
    if count is None and init is None and 2 * n <= unknowns(int(min_poles), n_extra):
        raise FitError(too_few_message(n, int(min_poles), n_extra, terms))
    limits = (int(min_poles), int(max_poles))
    model = weighted_fit(
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
        model = weighted_fit(
            s, hh, 1.0 / sig, flags, w0, band, None if again else model.n_poles, None,
            None if again else model.poles, n_iter, pole_tol, absolute_sigma,
            dict(extra, reweight_passes=k + 1), noise_tol, min_improvement, limits, weighting, terms,
        )
        trials = trials + model.pole_count_trials
    return dataclasses.replace(model, pole_count_trials=trials)


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

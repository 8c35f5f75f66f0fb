"""The number of poles: a given count, given starting poles, or the automatic
count that grows by pole pairs until the residual reaches the noise (see the
Notes of `zfit.fit._vectfit.vector_fit`).
"""

from __future__ import annotations

import dataclasses
import math

from .._errors import FitError
from ._relocation import fit_with_count

__all__ = ["weighted_fit", "unknowns", "too_few_message"]

#: An RMS normalised residual this small means the data are rational to
#: round-off (synthetic data): more poles cannot improve on it.
_EXACT = 1e-10


def unknowns(n_poles, n_extra):
    """Real unknowns of the relocation problem (the larger of the two)."""
    return 2 * n_poles + n_extra + 1


def too_few_message(n_points, n_poles, n_extra, terms):
    need = unknowns(n_poles, n_extra)
    what = f"{n_poles} pole{'s' if n_poles != 1 else ''}" + (f" with {terms}" if terms else "")
    return (
        f"too few frequency points for this fit: {n_points} points give {2 * n_points} real equations, "
        f"but a rational model of {what} needs more than {need} unknowns to be fitted; "
        f"use fewer poles or a sweep with more points"
    )


def weighted_fit(s, hh, w, flags, w0, band, n_poles, n_real_poles, init, n_iter, pole_tol, absolute_sigma,
           extra, noise_tol, min_improvement, limits, weighting, terms):
    """One weighted vector fit: given poles, a given count, or the automatic count."""
    n = s.size
    n_extra = sum(flags)

    def fit(count, init=None, trials=(), stall_tol=0.0, history=(), iters=n_iter):
        if 2 * n <= unknowns(count, n_extra):
            raise FitError(too_few_message(n, count, n_extra, terms))
        return fit_with_count(
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
        return 2 * n > unknowns(count, n_extra)

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
    return dataclasses.replace(chosen, pole_count_trials=trials)

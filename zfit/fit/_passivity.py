"""Passivity of a rational model: where its real part is negative.

A rational impedance model is passive (positive-real) when Re H(j omega) >= 0
at every frequency and the coefficients of s and 1/s are non-negative.  The
check is exact (the real-part crossings as the eigenvalues of a half-size
test matrix) and cross-checked on a sampled grid; nothing is enforced.

References
----------
A. Semlyen and B. Gustavsen, "A half-size singularity test matrix for fast
and reliable passivity assessment of rational models", IEEE Trans. Power
Delivery 24(1), 345-351, 2009, doi:10.1109/TPWRD.2008.923406.
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from ._basis import TWO_PI

if TYPE_CHECKING:
    from ._rational import RationalModel

__all__ = ["PassivityViolation", "real_part_crossings_hz", "violations", "with_std", "re_at_dc", "negative_bands"]


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


def negative_bands(f, re, tol) -> list[PassivityViolation]:
    """Return the runs of consecutive samples with ``re < -tol`` as real-part violations."""
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


def real_part_crossings_hz(model: RationalModel) -> np.ndarray:
    """Return the frequencies (Hz, sorted) where Re H(j omega) of `model` changes sign
    (see `RationalModel.real_part_crossings_hz`)."""
    if model.poles.size == 0:
        return np.zeros(0)
    w0 = model.reference_omega
    p = model.poles / w0
    r = model.residues / w0
    q = -(p**2)
    c = -r * p
    n = p.size
    M = np.zeros((n + 1, n + 1), complex)
    M[np.arange(n), np.arange(n)] = q
    M[:n, n] = 1.0
    M[n, :n] = c
    M[n, n] = model.constant
    B = np.eye(n + 1)
    B[n, n] = 0.0
    import scipy.linalg

    with np.errstate(all="ignore"):
        y = scipy.linalg.eigvals(M, B)
    y = y[np.isfinite(y)]
    ok = (np.abs(y.imag) <= 1e-7 * np.maximum(np.abs(y), 1e-300)) & (y.real > 0)
    return np.sort(np.sqrt(y[ok].real) * w0 / TWO_PI)


def re_at_dc(model: RationalModel) -> float:
    """Return Re H(0) of `model` (the limit at DC of its pole and constant terms)."""
    if model.poles.size == 0:
        return float(model.constant)
    return float(model.constant + np.real(np.sum(-model.residues / model.poles)))


def violations(model: RationalModel, f_hz, tol_ohm: float) -> list[PassivityViolation]:
    """Return where `model` is not passive, without the uncertainties (see
    `RationalModel.passivity_violations`)."""
    out = []
    if model.has_origin_pole and model.origin_residue < 0:
        out.append(PassivityViolation("origin residue", 0.0, 0.0, 0.0, float(model.origin_residue)))
    if model.has_proportional and model.proportional < 0:
        out.append(PassivityViolation("proportional term", math.inf, math.inf, math.inf, float(model.proportional)))
    if f_hz is not None:
        f = np.sort(np.asarray(f_hz, dtype=float).ravel())
        out.extend(negative_bands(f, model.impedance(f).real, tol_ohm))
        return out
    fmin = model.f_min_hz if np.isfinite(model.f_min_hz) else 1.0
    fmax = model.f_max_hz if np.isfinite(model.f_max_hz) else fmin
    ndec = max(math.log10(fmax / fmin) + 6.0, 1.0)
    grid = np.geomspace(fmin * 1e-3, fmax * 1e3, int(40 * ndec) + 1)
    cross = model.real_part_crossings_hz()
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
        vals = model.impedance(probe).real
        if hi == math.inf:
            vals = np.append(vals, model.constant)
            probe = np.append(probe, math.inf)
        if lo == 0.0:
            vals = np.insert(vals, 0, re_at_dc(model))
            probe = np.insert(probe, 0, 0.0)
        k = int(np.argmin(vals))
        if vals[k] < -tol_ohm:
            bands.append(PassivityViolation("real part", float(lo), float(hi), float(probe[k]), float(vals[k])))
    out.extend(bands)
    # Sampled cross-check; a band already reported is not reported twice.
    sampled = negative_bands(grid, model.impedance(grid).real, tol_ohm)
    for v in sampled:
        if not any(b.f_lo_hz <= v.worst_f_hz <= b.f_hi_hz for b in bands):
            out.append(v)
    return out


def with_std(model: RationalModel, v: PassivityViolation) -> PassivityViolation:
    """Return `v` with the model's standard uncertainty of its worst value (unchanged
    when the model carries no covariance)."""
    C = model.full_covariance
    if C.size == 0 or not np.all(np.isfinite(C)):
        return v
    names = model.coefficient_names
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
        if v.worst_f_hz == 0.0 and model.has_origin_pole:
            f = model.f_min_hz * 1e-6
        var = model.impedance_covariance(np.array([f]))[0, 0, 0]
        return dataclasses.replace(v, worst_std=float(math.sqrt(max(var, 0.0))))
    return v

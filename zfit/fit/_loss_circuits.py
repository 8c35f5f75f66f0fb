"""Equivalent circuits whose losses depend on frequency, each a published form.

Every circuit subclasses `Circuit` (fit/_circuits.py): positive parameters,
impedance, analytic ``dZ/d(ln p)``, self-resonance, a starting guess from
the data; the refinement (fit/_lsq.py) works on them unchanged.

``series L with skin-effect winding and parallel C_p``
    ``Z = (R_dc sqrt(1 + j f/f_c) + j omega L) || 1/(j omega C_p)``. The
    winding impedance of a round wire is R_dc at DC and rises as sqrt(f)
    past f_c, with an equal internal reactance (the internal inductance)
    [1]_; the skin depth is ``delta = sqrt(rho/(pi f mu))`` [2]_.
``core with relaxing permeability, winding resistance and parallel C_p``
    ``Z_core = j omega L_0 mu(f)`` with the Debye relaxation
    ``mu(f) = mu_inf + (mu_i - mu_inf)/(1 + j f/f_r)`` [3]_ [4]_, written
    ``Z_core = j omega (L_inf + L_d/(1 + j f/f_r))``, ``L_i = L_inf + L_d``
    the inductance at low frequency; in series with R_dc, parallel C_p.
    Its exact passive realisation: L_inf in series with (L_d || R_d),
    ``R_d = 2 pi f_r L_d``.
``capacitor with constant loss tangent and ESL``
    ``Z = ESR_0 + j omega ESL + 1/(j omega C (1 - j D))`` [5]_: the
    dielectric loss tangent D constant over decades (film, class-II
    ceramics, and an electrolytic's oxide), giving
    ``ESR(f) = ESR_0 + D/(omega C (1 + D^2))``, the falling ESR of an
    electrolytic, to a plateau ESR_0 (electrolyte and contacts).
``winding resistance with N parallel R-L-C sections``
    ``Z = R_dc + sum_k (1/R_k + 1/(j omega L_k) + j omega C_k)^-1``: a
    ferrite bead or a multi-resonant winding, N = 1, 2, 3.

References
----------
.. [1] H. A. Wheeler, "Formulas for the skin effect", Proc. IRE 30(9),
   412-424, 1942, doi:10.1109/JRPROC.1942.232015.
.. [2] S. Ramo, J. R. Whinnery and T. Van Duzer, *Fields and Waves in
   Communication Electronics*, 3rd ed., Wiley, 1994, sec. 5.4.
.. [3] P. Debye, *Polar Molecules*, Chemical Catalog Co., New York, 1929.
.. [4] J. L. Snoek, "Dispersion and absorption in magnetic ferrites at
   frequencies above one Mc/s", Physica 14(4), 207-217, 1948,
   doi:10.1016/0031-8914(48)90038-X.
.. [5] A. K. Jonscher, *Dielectric Relaxation in Solids*, Chelsea
   Dielectrics Press, London, 1983 (the 'universal' near-constant loss).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .._parameters import LOSS_MODEL_UNITS
from ._circuits import Circuit

__all__ = [
    "SkinEffectInductor",
    "RelaxingCoreInductor",
    "ConstantLossCapacitor",
    "ResonantSections",
    "skin_depth_m",
]

_TWO_PI = 2.0 * math.pi
_MU0 = 4e-7 * math.pi

def skin_depth_m(f_hz, resistivity_ohm_m: float, mu_r: float = 1.0):
    """Return the skin depth ``sqrt(rho/(pi f mu))`` in metres [2]_.

    Parameters
    ----------
    f_hz : float or array_like
        Frequency.
    resistivity_ohm_m : float
        Resistivity of the conductor.
    mu_r : float
        Relative permeability.

    References
    ----------
    .. [2] Ramo, Whinnery and Van Duzer, 1994, sec. 5.4.
    """
    return np.sqrt(resistivity_ohm_m / (math.pi * np.asarray(f_hz, float) * mu_r * _MU0))


def _init(obj, family, topology, keys):
    object.__setattr__(obj, "family", family)
    object.__setattr__(obj, "topology", topology)
    object.__setattr__(obj, "keys", keys)
    object.__setattr__(obj, "optional", None)


def _low_end(f, z, n=5):
    """Return (R, X, omega) averaged over the lowest n points."""
    k = min(n, f.size)
    w = _TWO_PI * f[:k]
    return float(np.median(z.real[:k])), z.imag[:k], w


def _srf_by_scan(circuit, p, lo=1.0, hi=1e11):
    """Lowest frequency where X turns from the family's sign, found on a fine log grid."""
    f = np.geomspace(lo, hi, 4001)
    x = circuit.impedance(p, f).imag
    sign = 1.0 if circuit.family == "inductor" else -1.0
    idx = np.nonzero((sign * x[:-1] > 0) & (sign * x[1:] <= 0))[0]
    if idx.size == 0:
        return None
    i = idx[0]
    a, b = f[i], f[i + 1]
    for _ in range(60):  # bisection in log f
        m = math.sqrt(a * b)
        if sign * circuit.impedance(p, np.array([m])).imag[0] > 0:
            a = m
        else:
            b = m
    return math.sqrt(a * b)


def _ratio_q(z):
    """``Im Z / Re Z``: the Q of a series branch."""
    return z.imag / z.real


class _LossCircuit(Circuit):
    @property
    def units(self) -> dict:
        """Unit of each parameter, by key."""
        return {k: LOSS_MODEL_UNITS[k] for k in self.keys}

    def starts(self, f_hz, z_ohm, sigma_ohm, rational=None, spread: bool = True) -> list:
        """Return starting points: the data guess and, if `spread`, a few scaled copies."""
        g = self.guess_from_data(np.asarray(f_hz, float), np.asarray(z_ohm, complex), sigma_ohm)
        out = [g]
        if spread:
            for j in range(len(self.keys)):
                for s in (0.3, 3.0):
                    q = np.array(g, float)
                    q[j] *= s
                    out.append(q)
        return out

    def srf_hz(self, p) -> float | None:
        """Return the lowest frequency where the reactance changes sign, or None.

        Parameters
        ----------
        p : array_like
            Parameters in `keys` order.
        """
        return _srf_by_scan(self, p)


class _ColumnsCircuit(_LossCircuit):
    """A loss circuit that computes Z and its log-derivative columns together (`_z_and_cols`)."""

    def impedance(self, p, f_hz) -> np.ndarray:
        """Return Z in ohm (see the module docstring).

        Parameters
        ----------
        p : array_like
            Parameters in `keys` order (SI units).
        f_hz : array_like
            Frequencies in Hz.
        """
        return self._z_and_cols(p, f_hz)[0]

    def log_jacobian(self, p, f_hz) -> np.ndarray:
        """Return ``dZ/d(ln p_k)``, shape (len(f), n_params).

        Parameters
        ----------
        p : array_like
            Parameters in `keys` order (SI units).
        f_hz : array_like
            Frequencies in Hz.
        """
        return np.stack(self._z_and_cols(p, f_hz)[1], axis=-1)


def _parallel_cp(zs, dzs, s, c_p):
    """Z = zs || 1/(s C_p) and its log-derivatives from those of zs."""
    y = 1.0 / zs + s * c_p
    z = 1.0 / y
    cols = [dz * (z / zs) ** 2 for dz in dzs]
    cols.append(-(z**2) * s * c_p)
    return z, cols


def _inductor_guess(f, z):
    """L from the low end, C_p from the first parallel resonance (or a far one)."""
    r0, x, w = _low_end(f, z)
    L = float(np.median(np.abs(x) / w))
    k = int(np.argmax(np.abs(z)))
    f_res = f[k] if 0 < k < f.size - 1 else 10 * f[-1]
    c_p = 1.0 / ((_TWO_PI * f_res) ** 2 * L)
    return max(r0, 1e-6), L, c_p, f_res


@dataclass(frozen=True, init=False)
class SkinEffectInductor(_ColumnsCircuit):
    """Series L with skin-effect winding R_dc sqrt(1 + j f/f_c) and parallel C_p.

    Keys ``(L, R_dc, f_c, C_p)``.
    """

    def __init__(self):
        _init(self, "inductor", "series L with skin-effect winding and parallel C_p", ("L", "R_dc", "f_c", "C_p"))

    def _z_and_cols(self, p, f_hz):
        f = np.asarray(f_hz, float)
        s = 1j * _TWO_PI * f
        L, r_dc, f_c, c_p = p
        root = np.sqrt(1 + 1j * f / f_c)
        zw = r_dc * root
        # d(zw)/d ln f_c = R_dc * (1/(2 root)) * (-j f/f_c)
        dzw_dfc = r_dc * (-1j * f / f_c) / (2 * root)
        return _parallel_cp(zw + s * L, [s * L, zw, dzw_dfc], s, c_p)

    def model_q(self, p, f_hz) -> np.ndarray:
        """Return the Q of the winding alone, ``Im/Re`` of ``R_dc sqrt(1 + j f/f_c) + j omega L`` (no C_p).

        Parameters
        ----------
        p : array_like
            ``(L, R_dc, f_c, C_p)``.
        f_hz : array_like
            Frequencies in Hz.
        """
        f = np.asarray(f_hz, float)
        L, r_dc, f_c, _ = p
        return _ratio_q(r_dc * np.sqrt(1 + 1j * f / f_c) + 1j * _TWO_PI * f * L)

    def guess_from_data(self, f_hz, z_ohm, sigma_ohm=None) -> np.ndarray:
        """Return a start: L and R_dc at the low end, f_c where R has doubled, C_p from the peak.

        Parameters
        ----------
        f_hz, z_ohm : array_like
            The sweep.
        sigma_ohm : array_like, optional
            Unused.
        """
        f, z = np.asarray(f_hz, float), np.asarray(z_ohm, complex)
        r0, L, c_p, f_res = _inductor_guess(f, z)
        # Re sqrt(1 + j f/f_c) reaches 1.5 near f = 3 f_c; look below resonance, where C_p does not yet lift R.
        below = f < 0.3 * f_res
        hit = np.nonzero(below & (z.real > 1.5 * r0))[0]
        f_c = float(f[hit[0]]) / 3.0 if hit.size else float(f[-1])
        return np.array([L, r0, f_c, c_p])


@dataclass(frozen=True, init=False)
class RelaxingCoreInductor(_ColumnsCircuit):
    """Core with Debye-relaxing permeability, winding resistance and parallel C_p.

    Keys ``(L_i, L_inf, f_r, R_dc, C_p)``; requires ``L_i > L_inf`` for a
    passive realisation (``L_d = L_i - L_inf``), which the data guess gives
    and the refinement keeps for any part that relaxes.
    """

    def __init__(self):
        _init(self, "inductor", "core with relaxing permeability, winding resistance and parallel C_p",
              ("L_i", "L_inf", "f_r", "R_dc", "C_p"))

    def _z_and_cols(self, p, f_hz):
        f = np.asarray(f_hz, float)
        s = 1j * _TWO_PI * f
        l_i, l_inf, f_r, r_dc, c_p = p
        g = 1.0 / (1 + 1j * f / f_r)
        zc = s * (l_inf + (l_i - l_inf) * g)
        d_li = s * l_i * g
        d_linf = s * l_inf * (1 - g)
        # d g / d ln f_r = g^2 * j f/f_r
        d_fr = s * (l_i - l_inf) * g**2 * (1j * f / f_r)
        return _parallel_cp(r_dc + zc, [d_li, d_linf, d_fr, r_dc + 0 * zc], s, c_p)

    def is_passive(self, p) -> bool:
        """Whether ``L_inf < L_i``: a permeability that relaxes downward (the other way is an active part).

        Parameters
        ----------
        p : array_like
            ``(L_i, L_inf, f_r, R_dc, C_p)``.
        """
        return bool(np.all(np.asarray(p, float) > 0) and p[1] < p[0])

    def model_q(self, p, f_hz) -> np.ndarray:
        """Return the Q of the winding on its core alone, ``Im/Re`` of ``R_dc + Z_core`` (no C_p).

        Parameters
        ----------
        p : array_like
            ``(L_i, L_inf, f_r, R_dc, C_p)``.
        f_hz : array_like
            Frequencies in Hz.
        """
        f = np.asarray(f_hz, float)
        l_i, l_inf, f_r, r_dc, _ = p
        return _ratio_q(r_dc + 1j * _TWO_PI * f * (l_inf + (l_i - l_inf) / (1 + 1j * f / f_r)))

    def guess_from_data(self, f_hz, z_ohm, sigma_ohm=None) -> np.ndarray:
        """Return a start: L_i at the low end, f_r at the peak of X/(omega) loss, L_inf = L_i/30.

        Parameters
        ----------
        f_hz, z_ohm : array_like
            The sweep.
        sigma_ohm : array_like, optional
            Unused.
        """
        f, z = np.asarray(f_hz, float), np.asarray(z_ohm, complex)
        r0, L, c_p, f_res = _inductor_guess(f, z)
        # L_eff = L_inf + L_d/(1 + (f/f_r)^2) falls to about half of L_i near f_r.
        l_eff = z.imag / (_TWO_PI * f)
        half = np.nonzero(l_eff < 0.5 * L)[0]
        f_r = float(f[half[0]]) if half.size else float(f[-1])
        return np.array([L, L / 30.0, f_r, r0, c_p])


@dataclass(frozen=True, init=False)
class ConstantLossCapacitor(_LossCircuit):
    """Capacitor with constant loss tangent D, ESR_0 and ESL.

    Keys ``(C, D, ESR_0, ESL)``.
    """

    def __init__(self):
        _init(self, "capacitor", "capacitor with constant loss tangent and ESL", ("C", "D", "ESR_0", "ESL"))

    def impedance(self, p, f_hz) -> np.ndarray:
        """Return ``ESR_0 + j omega ESL + 1/(j omega C (1 - j D))`` in ohm.

        Parameters
        ----------
        p : array_like
            ``(C, D, ESR_0, ESL)``.
        f_hz : array_like
            Frequencies in Hz.
        """
        s = 1j * _TWO_PI * np.asarray(f_hz, float)
        c, d, r0, esl = p
        return r0 + s * esl + 1.0 / (s * c * (1 - 1j * d))

    def log_jacobian(self, p, f_hz) -> np.ndarray:
        """Return ``dZ/d(ln p_k)``, shape (len(f), 4).

        Parameters
        ----------
        p : array_like
            ``(C, D, ESR_0, ESL)``.
        f_hz : array_like
            Frequencies in Hz.
        """
        s = 1j * _TWO_PI * np.asarray(f_hz, float)
        c, d, r0, esl = p
        zc = 1.0 / (s * c * (1 - 1j * d))
        return np.stack([-zc, zc * 1j * d / (1 - 1j * d), r0 + 0 * zc, s * esl], axis=-1)

    def srf_hz(self, p) -> float | None:
        """Return where X = 0: ``omega^2 = 1/(ESL C (1 + D^2))`` (exact for the form).

        Parameters
        ----------
        p : array_like
            ``(C, D, ESR_0, ESL)``.
        """
        c, d, _, esl = (float(v) for v in p)
        return 1.0 / (_TWO_PI * math.sqrt(esl * c * (1 + d * d)))

    def model_d(self, p, f_hz) -> np.ndarray:
        """Return the model's dissipation factor without the ESL: ``Re/(-Im)`` of ``ESR_0 + 1/(j omega C (1 - j D))``.

        Parameters
        ----------
        p : array_like
            ``(C, D, ESR_0, ESL)``.
        f_hz : array_like
            Frequencies in Hz.
        """
        s = 1j * _TWO_PI * np.asarray(f_hz, float)
        c, d, r0, _ = p
        z = r0 + 1.0 / (s * c * (1 - 1j * d))
        return z.real / -z.imag

    def guess_from_data(self, f_hz, z_ohm, sigma_ohm=None) -> np.ndarray:
        """Return a start: C and D at the low end, ESR_0 at the |Z| minimum, ESL from the top.

        Parameters
        ----------
        f_hz, z_ohm : array_like
            The sweep.
        sigma_ohm : array_like, optional
            Unused.
        """
        f, z = np.asarray(f_hz, float), np.asarray(z_ohm, complex)
        r0, x, w = _low_end(f, z)
        c = float(np.median(-1.0 / (w * x)))
        d = float(np.clip(np.median(z.real[: x.size] / np.abs(x)), 1e-4, 1.0))
        k = int(np.argmin(np.abs(z)))
        esr0 = max(float(z.real[k]) - d / (_TWO_PI * f[k] * c), 0.1 * float(z.real[k]), 1e-6)
        f_res = f[k] if 0 < k < f.size - 1 else 10 * f[-1]
        esl = 1.0 / ((_TWO_PI * f_res) ** 2 * c)
        return np.array([c, d, esr0, esl])


@dataclass(frozen=True, init=False)
class ResonantSections(_LossCircuit):
    """Winding resistance R_dc with N parallel R-L-C sections in series.

    Keys ``(R_dc, R_1, L_1, C_1, ..., R_N, L_N, C_N)``.

    Parameters
    ----------
    n_sections : {1, 2, 3}
    """

    n_sections: int = 1

    def __init__(self, n_sections: int = 1):
        if n_sections not in (1, 2, 3):
            raise ValueError("n_sections must be 1, 2 or 3")
        keys = ("R_dc",) + tuple(f"{k}_{i}" for i in range(1, n_sections + 1) for k in ("R", "L", "C"))
        object.__setattr__(self, "n_sections", n_sections)
        word = "section" if n_sections == 1 else "sections"
        _init(self, "inductor", f"winding resistance with {n_sections} parallel R-L-C {word}", keys)

    def impedance(self, p, f_hz) -> np.ndarray:
        """Return ``R_dc + sum_k (1/R_k + 1/(sL_k) + sC_k)^-1`` in ohm.

        Parameters
        ----------
        p : array_like
            ``(R_dc, R_1, L_1, C_1, ...)``.
        f_hz : array_like
            Frequencies in Hz.
        """
        s = 1j * _TWO_PI * np.asarray(f_hz, float)
        z = p[0] + 0 * s
        for i in range(self.n_sections):
            r, l, c = p[1 + 3 * i: 4 + 3 * i]
            z = z + 1.0 / (1.0 / r + 1.0 / (s * l) + s * c)
        return z

    def log_jacobian(self, p, f_hz) -> np.ndarray:
        """Return ``dZ/d(ln p_k)``: ``dZ_k = -Z_k^2 dY_k`` for each section.

        Parameters
        ----------
        p : array_like
            ``(R_dc, R_1, L_1, C_1, ...)``.
        f_hz : array_like
            Frequencies in Hz.
        """
        s = 1j * _TWO_PI * np.asarray(f_hz, float)
        cols = [p[0] + 0 * s]
        for i in range(self.n_sections):
            r, l, c = p[1 + 3 * i: 4 + 3 * i]
            zk = 1.0 / (1.0 / r + 1.0 / (s * l) + s * c)
            z2 = zk * zk
            cols += [z2 / r, z2 / (s * l), -z2 * s * c]
        return np.stack(cols, axis=-1)

    def model_q(self, p, f_hz) -> np.ndarray:
        """Return ``Im Z / Re Z`` of the whole network (its sections carry their own capacitance).

        Parameters
        ----------
        p : array_like
            ``(R_dc, R_1, L_1, C_1, ...)``.
        f_hz : array_like
            Frequencies in Hz.
        """
        return _ratio_q(self.impedance(p, f_hz))

    def guess_from_data(self, f_hz, z_ohm, sigma_ohm=None) -> np.ndarray:
        """Return a start: R_dc at the low end, sections at the largest |Z| peaks.

        Each section's resonance at a local maximum of |Z| (the largest first,
        then log-spread above the band when the data show fewer peaks), its R
        the peak height, its L from the low-end inductance shared out.

        Parameters
        ----------
        f_hz, z_ohm : array_like
            The sweep.
        sigma_ohm : array_like, optional
            Unused.
        """
        f, z = np.asarray(f_hz, float), np.asarray(z_ohm, complex)
        r0, x, w = _low_end(f, z)
        L = float(np.median(np.abs(x) / w))
        mag = np.abs(z)
        peaks = [i for i in range(1, f.size - 1) if mag[i] >= mag[i - 1] and mag[i] >= mag[i + 1]]
        peaks = sorted(peaks, key=lambda i: -mag[i])[: self.n_sections]
        out = [max(r0, 1e-6)]
        for j in range(self.n_sections):
            if j < len(peaks):
                fk, rk = f[peaks[j]], mag[peaks[j]]
            else:
                fk, rk = f[-1] * 3.0 ** (j + 1), float(mag[-1])
            lk = L / self.n_sections
            out += [max(rk, 1e-3), lk, 1.0 / ((_TWO_PI * fk) ** 2 * lk)]
        return np.array(out)

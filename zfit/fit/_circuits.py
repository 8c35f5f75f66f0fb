"""Equivalent circuits of inductors and capacitors.

Each circuit is a small immutable object that knows its named parameters,
their units, its impedance and the analytic derivative of the impedance with
respect to the logarithm of each parameter (the refinement works in
log-parameters, so that every element stays positive and the circuit stays
passive), its self-resonant frequency, and two kinds of initial guess:

* from the rational model of vector fitting: the dominant pole pair gives
  the resonance (``|p|^2 = 1/(L C)``), its width the loss
  (``-2 Re p = R_s / L``), the residue the parallel capacitance
  (``r + r* = 1/C_p``); the pole at the origin a capacitor's ``1/(sC)``, the
  proportional term its ESL, the constant its ESR;
* from simple asymptotes of the data: ``omega Im(1/Z) = -1/L + omega^2 C_p``
  for an inductor and ``omega Im Z = -1/C + omega^2 ESL`` for a capacitor are
  straight lines in ``omega^2`` wherever the reactance dominates, so a
  weighted linear regression gives both reactive elements at once; the loss
  follows from the real part of what is left.

Circuits (descriptive names, no letter codes):

``series R_s-L with parallel C_p``
    ``Z = (R_s + sL) || 1/(sC_p)`` -- an inductor with winding resistance
    and inter-winding capacitance.
``series R_s-L with parallel C_p and R_p``
    ``Z = (R_s + sL) || 1/(sC_p) || R_p`` -- the same with core loss.
``series C-ESR-ESL``
    ``Z = ESR + sESL + 1/(sC)`` -- a capacitor.
``series ESR-ESL with C shunted by R_leak``
    ``Z = ESR + sESL + (1/(sC) || R_leak)`` -- the same with leakage.

References
----------
.. [1] C. Bowick, *RF Circuit Design*, 2nd ed., Newnes, 2008, ch. 1
   (real-world inductors and capacitors, their equivalent circuits and Q).
.. [2] B. Gustavsen and A. Semlyen, "Rational approximation of frequency
   domain responses by vector fitting", IEEE Trans. Power Delivery 14(3),
   1052-1061, 1999, doi:10.1109/61.772353 (poles and residues of Z(s)).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np

from .._errors import ZfitInputError
from .._parameters import OPTIONAL_KEY, PARAMETER_KEYS, REQUIRED_KEYS, UNITS

__all__ = [
    "Circuit",
    "InductorCircuit",
    "CapacitorCircuit",
    "FAMILIES",
    "circuit_for",
    "circuit_impedance",
    "circuits_of",
    "sharp_resonance",
]

#: The families of parts zfit has equivalent circuits for.
FAMILIES = ("inductor", "capacitor")


_TWO_PI = 2.0 * math.pi


def _weighted_line(x, y, w):
    """Return (intercept, slope) of y = a + b x by weighted least squares."""
    sw = np.sum(w)
    if x.size < 2 or sw <= 0:
        return None
    xm, ym = np.sum(w * x) / sw, np.sum(w * y) / sw
    sxx = np.sum(w * (x - xm) ** 2)
    if sxx <= 0:
        return None
    b = np.sum(w * (x - xm) * (y - ym)) / sxx
    return ym - b * xm, b


def _weighted_median(values, weights):
    order = np.argsort(values)
    v, w = values[order], weights[order]
    c = np.cumsum(w)
    if c[-1] <= 0:
        return float(np.median(values))
    return float(v[np.searchsorted(c, 0.5 * c[-1])])


@dataclass(frozen=True)
class Circuit:
    """An equivalent circuit: its family, topology and named parameters.

    Use `InductorCircuit` or `CapacitorCircuit`; this base class holds what
    they share.

    Attributes
    ----------
    family : {'inductor', 'capacitor'}
        The kind of part.
    topology : str
        The descriptive name of the circuit.
    keys : tuple of str
        Parameter names, in the order of parameter vectors.
    optional : str or None
        The optional element of the family (``R_p`` or ``R_leak``) when the
        circuit has it, else None.
    """

    family: str
    topology: str
    keys: tuple
    optional: str | None = None

    @property
    def units(self) -> dict:
        """Unit of each parameter, by key."""
        return {k: UNITS[k] for k in self.keys}

    @property
    def n_params(self) -> int:
        """Number of parameters."""
        return len(self.keys)

    def vector(self, params: Mapping) -> np.ndarray:
        """Return the parameter vector in `keys` order from a mapping.

        Parameters
        ----------
        params : mapping
            Parameter values in SI units by key.
        """
        missing = [k for k in self.keys if k not in params]
        if missing:
            raise ZfitInputError(f"{self.topology}: missing parameter(s) {', '.join(missing)}")
        p = np.array([float(params[k]) for k in self.keys])
        if not np.all(np.isfinite(p)) or np.any(p <= 0):
            raise ZfitInputError(f"{self.topology}: element values must be positive and finite, got {dict(zip(self.keys, p))}")
        return p

    def mapping(self, p) -> dict:
        """Return ``{key: value}`` from a parameter vector.

        Parameters
        ----------
        p : array_like
            Parameter values in `keys` order.
        """
        return {k: float(v) for k, v in zip(self.keys, p)}

    def starts(self, f_hz, z_ohm, sigma_ohm, rational=None, spread: bool = True) -> list:
        """Return candidate starting points for the refinement.

        The asymptote guess, the rational-model guess (when given) and, where
        the data show a resonance inside the band, a spread of resonant
        frequencies across the grid cell that holds the extremum and of loss
        values around the guess: a resonance narrower than the grid spacing
        makes the least-squares landscape multimodal in the resonant
        frequency, so several starts are needed to find the right valley.

        Parameters
        ----------
        f_hz, z_ohm, sigma_ohm : array_like
            The sweep.
        rational : RationalModel, optional
            The vector-fitting model of the sweep.
        spread : bool
            Whether to add the spread of resonant frequencies and losses.
        """
        f = np.asarray(f_hz, float)
        z = np.asarray(z_ohm, complex)
        out = [self.guess_from_data(f, z, sigma_ohm)]
        if rational is not None:
            try:
                g = self.guess_from_rational(rational, f)
            except (ValueError, ArithmeticError, AttributeError):
                g = None
            if g is not None and np.all(np.isfinite(g)) and np.all(g > 0):
                out.append(g)
        if not spread:
            return out
        mag = np.abs(z)
        k = int(np.argmax(mag) if self.family == "inductor" else np.argmin(mag))
        if 0 < k < f.size - 1:
            lo, hi = f[k - 1], f[k + 1]
            for base in list(out):
                for f0 in np.geomspace(lo, hi, 7)[1:-1]:
                    for scale in (0.3, 1.0, 3.0):
                        out.append(self._with_resonance(base, f0, scale, mag[k]))
        return out

    def is_passive(self, p) -> bool:
        """Whether the parameters give a passive part: every element positive, as the refinement keeps them.

        Parameters
        ----------
        p : array_like
            Parameter values in `keys` order.
        """
        return bool(np.all(np.asarray(p, float) > 0))

    def _with_resonance(self, p, f0, loss_scale, z_extreme):  # pragma: no cover - abstract
        raise NotImplementedError

    # The three methods below are defined by each family.
    def impedance(self, p, f_hz) -> np.ndarray:  # pragma: no cover - abstract
        """Return the complex impedance (ohm) at `f_hz` for parameters `p`.

        Parameters
        ----------
        p : array_like
            Parameter values in `keys` order (SI units).
        f_hz : array_like
            Frequencies in Hz.
        """
        raise NotImplementedError

    def log_jacobian(self, p, f_hz) -> np.ndarray:  # pragma: no cover - abstract
        """Return ``dZ/d(ln p_k)`` as a complex array of shape (len(f), n_params).

        Parameters
        ----------
        p : array_like
            Parameter values in `keys` order (SI units).
        f_hz : array_like
            Frequencies in Hz.
        """
        raise NotImplementedError

    def srf_hz(self, p) -> float | None:  # pragma: no cover - abstract
        """Return the frequency (Hz) where the reactance is zero, or None.

        Parameters
        ----------
        p : array_like
            Parameter values in `keys` order (SI units).
        """
        raise NotImplementedError


@dataclass(frozen=True)
class InductorCircuit(Circuit):
    """Inductor: series R_s-L with parallel C_p, optionally with parallel R_p.

    ``Y = 1/(R_s + sL) + sC_p (+ 1/R_p)``, ``Z = 1/Y``.  With only resistors
    and reactances of positive value the circuit is passive.

    Parameters
    ----------
    core_loss : bool
        Whether the parallel resistance R_p (core loss) is part of the circuit.

    Attributes
    ----------
    core_loss : bool
        As given.
    family, topology, keys, optional
        See `Circuit`.
    """

    core_loss: bool = False

    def __init__(self, core_loss: bool = False):
        object.__setattr__(self, "core_loss", bool(core_loss))
        object.__setattr__(self, "family", "inductor")
        object.__setattr__(
            self, "topology",
            "series R_s-L with parallel C_p and R_p" if core_loss else "series R_s-L with parallel C_p",
        )
        object.__setattr__(self, "keys", PARAMETER_KEYS["inductor"] if core_loss else REQUIRED_KEYS["inductor"])
        object.__setattr__(self, "optional", OPTIONAL_KEY["inductor"] if core_loss else None)

    def impedance(self, p, f_hz) -> np.ndarray:
        """Return ``(R_s + sL) || 1/(sC_p) [|| R_p]`` in ohm.

        Parameters
        ----------
        p : array_like
            ``(L, R_s, C_p[, R_p])`` in H, ohm, F, ohm.
        f_hz : array_like
            Frequencies in Hz.
        """
        s = 1j * _TWO_PI * np.asarray(f_hz, dtype=float)
        L, R, C = p[0], p[1], p[2]
        y = 1.0 / (R + s * L) + s * C
        if self.core_loss:
            y = y + 1.0 / p[3]
        return 1.0 / y

    def log_jacobian(self, p, f_hz) -> np.ndarray:
        """Return ``dZ/d(ln p_k)``, shape (len(f), n_params).

        ``dZ = -Z^2 dY`` with ``dY/dL = -s/(R_s+sL)^2``,
        ``dY/dR_s = -1/(R_s+sL)^2``, ``dY/dC_p = s``, ``dY/dR_p = -1/R_p^2``.

        Parameters
        ----------
        p : array_like
            ``(L, R_s, C_p[, R_p])`` in H, ohm, F, ohm.
        f_hz : array_like
            Frequencies in Hz.
        """
        s = 1j * _TWO_PI * np.asarray(f_hz, dtype=float)
        L, R, C = p[0], p[1], p[2]
        zs = R + s * L
        y = 1.0 / zs + s * C
        if self.core_loss:
            y = y + 1.0 / p[3]
        z2 = 1.0 / (y * y)
        inv_zs2 = 1.0 / (zs * zs)
        cols = [z2 * s * inv_zs2 * L, z2 * inv_zs2 * R, -z2 * s * C]
        if self.core_loss:
            cols.append(z2 / p[3])
        return np.stack(cols, axis=-1)

    def srf_hz(self, p) -> float | None:
        """Return where X = 0: ``omega^2 = 1/(L C_p) - (R_s/L)^2``, or None.

        R_p does not move it (it only adds to the real part of Y).  None when
        the winding resistance is so large that the reactance never crosses
        zero.

        Parameters
        ----------
        p : array_like
            ``(L, R_s, C_p[, R_p])`` in H, ohm, F, ohm.
        """
        L, R, C = float(p[0]), float(p[1]), float(p[2])
        w2 = 1.0 / (L * C) - (R / L) ** 2
        return math.sqrt(w2) / _TWO_PI if w2 > 0 else None

    def model_q(self, p, f_hz) -> np.ndarray:
        """Return the model's quality factor ``omega L / R_s`` at `f_hz`.

        This is the Q of the series branch alone; it grows with frequency and
        differs from the measured part's ``|X|/R`` near resonance, where C_p
        takes over.

        Parameters
        ----------
        p : array_like
            ``(L, R_s, C_p[, R_p])`` in H, ohm, F, ohm.
        f_hz : array_like
            Frequencies in Hz.
        """
        return _TWO_PI * np.asarray(f_hz, dtype=float) * p[0] / p[1]

    def _with_resonance(self, p, f0, loss_scale, z_extreme):
        q = np.array(p, dtype=float)
        q[2] = 1.0 / ((_TWO_PI * f0) ** 2 * q[0])
        q[1] *= loss_scale
        return q

    def guess_from_data(self, f_hz, z_ohm, sigma_ohm) -> np.ndarray:
        """Return an initial guess from the asymptotes of the data.

        ``omega Im(1/Z) = -1/L + omega^2 C_p`` wherever ``omega L >> R_s``:
        a weighted straight line in ``omega^2`` over the points where the
        susceptance dominates gives L and C_p; the series branch left after
        removing ``sC_p`` gives R_s, and the real part of what remains of
        the admittance R_p.

        Parameters
        ----------
        f_hz, z_ohm, sigma_ohm : array_like
            The sweep.
        """
        f = np.asarray(f_hz, float)
        z = np.asarray(z_ohm, complex)
        sig = np.asarray(sigma_ohm, float)
        w = _TWO_PI * f
        y = 1.0 / z
        sig_y = sig / np.abs(z) ** 2
        use = np.abs(y.imag) > np.abs(y.real)
        line = None
        if use.sum() >= 3:
            wt = (np.abs(z[use]) ** 2 / (w[use] * sig[use])) ** 2
            line = _weighted_line(w[use] ** 2, w[use] * y.imag[use], wt)
        x_pos = z.imag > 0
        if line is not None and line[0] < 0:
            L = -1.0 / line[0]
        elif x_pos.any():
            L = float(np.median(z.imag[x_pos] / w[x_pos]))
        else:
            L = float(np.abs(z[0]) / w[0])
        if line is not None and line[1] > 0:
            C = line[1]
        else:
            # No curvature seen: put the resonance a decade above the band.
            C = 1.0 / ((10.0 * w[-1]) ** 2 * L)
        zs = 1.0 / (y - 1j * w * C)
        wts = (np.abs(z) / np.abs(zs)) ** 4 / sig**2
        R = _weighted_median(zs.real, wts)
        zmax = float(np.max(np.abs(z)))
        if not R > 0:
            R = max(float(np.min(np.abs(z))) * 1e-2, 1e-6)
        p = [L, R, C]
        if self.core_loss:
            g = (y - 1.0 / (R + 1j * w * L) - 1j * w * C).real
            gw = 1.0 / sig_y**2
            G = float(np.sum(gw * g) / np.sum(gw))
            p.append(1.0 / G if G > 1.0 / (1e3 * zmax) else 1e2 * zmax)
        return np.array(p, dtype=float)

    def guess_from_rational(self, rational, f_hz) -> np.ndarray | None:
        """Return an initial guess from a rational model, or None.

        The pole pair with the strongest peak in the band is the
        self-resonance: ``C_p = 1/(2 Re r)``, ``L = 1/(|p|^2 C_p)``,
        ``R_s = -2 Re(p) L``.  Without a pole pair the proportional term is
        L and the constant R_s.

        Parameters
        ----------
        rational : RationalModel
            The vector-fitting model of the sweep.
        f_hz : array_like
            The sweep's frequencies (to choose the pole pair that matters).
        """
        poles = np.asarray(rational.poles, complex)
        res = np.asarray(rational.residues, complex)
        upper = poles.imag > 0
        f = np.asarray(f_hz, float)
        if upper.any():
            pp, rr = poles[upper], res[upper]
            # Peak height of each pair's contribution, weighted toward the band.
            fr = np.abs(pp) / _TWO_PI
            inside = np.clip(np.log(fr / f[0]) * np.log(f[-1] / fr), None, 0.0)
            score = np.abs(rr) / np.maximum(-pp.real, 1e-300) * np.exp(inside)
            k = int(np.argmax(score))
            pk, rk = pp[k], rr[k]
            if rk.real > 0:
                C = 1.0 / (2.0 * rk.real)
                L = 1.0 / (abs(pk) ** 2 * C)
                damping = -2.0 * pk.real  # = R_s/L (+ 1/(R_p C_p) with core loss)
                if self.core_loss:
                    # R_s from the low-frequency end (Z -> R_s || R_p ~ R_s), R_p from the rest of the damping.
                    R = max(float(rational.impedance(f[:1]).real[0]), 1e-9)
                    g = damping - R / L
                    Rp = 1.0 / (g * C) if g > 0 else 1e2 * float(abs(rational.impedance(np.array([abs(pk) / _TWO_PI]))[0]))
                    return np.array([L, R, C, Rp])
                return np.array([L, max(damping * L, 1e-9), C])
        L = float(rational.proportional)
        R = float(rational.constant)
        if L > 0:
            C = 1.0 / ((10.0 * _TWO_PI * f[-1]) ** 2 * L)
            p = [L, max(R, 1e-9), C]
            if self.core_loss:
                p.append(1e6 * _TWO_PI * f[-1] * L)
            return np.array(p)
        return None


@dataclass(frozen=True)
class CapacitorCircuit(Circuit):
    """Capacitor: series C-ESR-ESL, optionally with R_leak across C.

    ``Z = ESR + sESL + 1/(sC)`` or ``Z = ESR + sESL + (1/(sC) || R_leak)``.

    Parameters
    ----------
    leakage : bool
        Whether the leakage resistance R_leak across C is part of the circuit.

    Attributes
    ----------
    leakage : bool
        As given.
    family, topology, keys, optional
        See `Circuit`.
    """

    leakage: bool = False

    def __init__(self, leakage: bool = False):
        object.__setattr__(self, "leakage", bool(leakage))
        object.__setattr__(self, "family", "capacitor")
        object.__setattr__(
            self, "topology", "series ESR-ESL with C shunted by R_leak" if leakage else "series C-ESR-ESL"
        )
        object.__setattr__(self, "keys", PARAMETER_KEYS["capacitor"] if leakage else REQUIRED_KEYS["capacitor"])
        object.__setattr__(self, "optional", OPTIONAL_KEY["capacitor"] if leakage else None)

    def _zc(self, p, s):
        if self.leakage:
            return 1.0 / (s * p[0] + 1.0 / p[3])
        return 1.0 / (s * p[0])

    def impedance(self, p, f_hz) -> np.ndarray:
        """Return ``ESR + sESL + 1/(sC) [|| R_leak]`` in ohm.

        Parameters
        ----------
        p : array_like
            ``(C, ESR, ESL[, R_leak])`` in F, ohm, H, ohm.
        f_hz : array_like
            Frequencies in Hz.
        """
        s = 1j * _TWO_PI * np.asarray(f_hz, dtype=float)
        return p[1] + s * p[2] + self._zc(p, s)

    def log_jacobian(self, p, f_hz) -> np.ndarray:
        """Return ``dZ/d(ln p_k)``, shape (len(f), n_params).

        With ``Zc = 1/(sC + 1/R_leak)``: ``dZ/dC = -s Zc^2``,
        ``dZ/dR_leak = Zc^2 / R_leak^2``.

        Parameters
        ----------
        p : array_like
            ``(C, ESR, ESL[, R_leak])`` in F, ohm, H, ohm.
        f_hz : array_like
            Frequencies in Hz.
        """
        s = 1j * _TWO_PI * np.asarray(f_hz, dtype=float)
        zc = self._zc(p, s)
        one = np.ones_like(s)
        cols = [-s * zc * zc * p[0], one * p[1], s * p[2]]
        if self.leakage:
            cols.append(zc * zc / p[3])
        return np.stack(cols, axis=-1)

    def srf_hz(self, p) -> float | None:
        """Return where X = 0: ``omega^2 = 1/(ESL C) - 1/(R_leak C)^2``, or None.

        Parameters
        ----------
        p : array_like
            ``(C, ESR, ESL[, R_leak])`` in F, ohm, H, ohm.
        """
        C, ESL = float(p[0]), float(p[2])
        w2 = 1.0 / (ESL * C)
        if self.leakage:
            w2 -= 1.0 / (float(p[3]) * C) ** 2
        return math.sqrt(w2) / _TWO_PI if w2 > 0 else None

    def model_d(self, p, f_hz) -> np.ndarray:
        """Return the model's dissipation factor at `f_hz`.

        ``D = omega C ESR`` (plus ``1/(omega C R_leak)`` with leakage): the
        loss tangent of the capacitance alone, without the ESL, which is how
        D is quoted well below resonance.

        Parameters
        ----------
        p : array_like
            ``(C, ESR, ESL[, R_leak])`` in F, ohm, H, ohm.
        f_hz : array_like
            Frequencies in Hz.
        """
        w = _TWO_PI * np.asarray(f_hz, dtype=float)
        d = w * p[0] * p[1]
        if self.leakage:
            d = d + 1.0 / (w * p[0] * p[3])
        return d

    def _with_resonance(self, p, f0, loss_scale, z_extreme):
        q = np.array(p, dtype=float)
        q[2] = 1.0 / ((_TWO_PI * f0) ** 2 * q[0])
        q[1] = z_extreme * loss_scale
        return q

    def guess_from_data(self, f_hz, z_ohm, sigma_ohm) -> np.ndarray:
        """Return an initial guess from the asymptotes of the data.

        ``omega X = -1/C + omega^2 ESL``: a weighted straight line in
        ``omega^2`` over the points where the reactance dominates gives C and
        ESL; the weighted median of R is the ESR, and the real part of the
        admittance of what is left of the capacitance gives R_leak.

        Parameters
        ----------
        f_hz, z_ohm, sigma_ohm : array_like
            The sweep.
        """
        f = np.asarray(f_hz, float)
        z = np.asarray(z_ohm, complex)
        sig = np.asarray(sigma_ohm, float)
        w = _TWO_PI * f
        use = np.abs(z.imag) > np.abs(z.real)
        line = None
        if use.sum() >= 3:
            line = _weighted_line(w[use] ** 2, w[use] * z.imag[use], 1.0 / (w[use] * sig[use]) ** 2)
        x_neg = z.imag < 0
        if line is not None and line[0] < 0:
            C = -1.0 / line[0]
        elif x_neg.any():
            C = float(np.median(-1.0 / (w[x_neg] * z.imag[x_neg])))
        else:
            C = float(1.0 / (w[0] * np.abs(z[0])))
        if line is not None and line[1] > 0:
            ESL = line[1]
        else:
            ESL = 1.0 / ((10.0 * w[-1]) ** 2 * C)
        R = _weighted_median(z.real, 1.0 / sig**2)
        if not R > 0:
            R = max(float(np.min(np.abs(z))) * 1e-2, 1e-6)
        p = [C, R, ESL]
        if self.leakage:
            zc = z - R - 1j * w * ESL
            g = (1.0 / zc).real
            gw = (np.abs(zc) ** 2 / sig) ** 2
            G = float(np.sum(gw * g) / np.sum(gw))
            p.append(1.0 / G if G > w[0] * C * 1e-4 else 1e4 / (w[0] * C))
        return np.array(p, dtype=float)

    def guess_from_rational(self, rational, f_hz) -> np.ndarray | None:
        """Return an initial guess from a rational model, or None.

        The residue at the origin (or of the real pole nearest to it) is
        ``1/C``, the proportional term the ESL and the constant the ESR; a
        real pole at ``-1/(R_leak C)`` gives R_leak.

        Parameters
        ----------
        rational : RationalModel
            The vector-fitting model of the sweep.
        f_hz : array_like
            The sweep's frequencies.
        """
        f = np.asarray(f_hz, float)
        poles = np.asarray(rational.poles, complex)
        res = np.asarray(rational.residues, complex)
        inv_c = float(getattr(rational, "origin_residue", 0.0) or 0.0)
        leak_pole = None
        real = np.abs(poles.imag) <= 1e-9 * np.abs(poles)
        if real.any():
            # The real pole nearest the origin is a leaky C when it dominates the origin term at f_min.
            k = int(np.argmin(np.abs(poles[real])))
            r, p = float(res[real][k].real), float(poles[real][k].real)
            s0 = 1j * _TWO_PI * f[0]
            if r > 0 and p < 0 and abs(r / (s0 - p)) > abs(inv_c / s0):
                inv_c, leak_pole = r, -p
        if not inv_c > 0:
            return None
        C = 1.0 / inv_c
        ESL = float(rational.proportional)
        if not ESL > 0:
            ESL = 1.0 / ((10.0 * _TWO_PI * f[-1]) ** 2 * C)
        R = float(rational.constant)
        if not R > 0:
            R = float(np.min(rational.impedance(f).real.clip(1e-9, None)))
        p = [C, R, ESL]
        if self.leakage:
            p.append(1.0 / (leak_pole * C) if leak_pole and leak_pole > 0 else 1e4 / (_TWO_PI * f[0] * C))
        return np.array(p)


def sharp_resonance(family: str, z_ohm, min_points: int = 6) -> bool:
    """Return whether the data show a resonance narrower than a few grid points.

    The half-power width of the |Z| peak (inductor, parallel resonance) or
    dip (capacitor, series resonance) spans fewer than `min_points` points:
    the least-squares landscape is then multimodal in the resonant
    frequency and the refinement needs several starts.

    Parameters
    ----------
    family : {'inductor', 'capacitor'}
        The kind of part.
    z_ohm : array_like
        The measured impedance.
    min_points : int
        Width (in points) below which the resonance counts as sharp.
    """
    mag = np.abs(np.asarray(z_ohm, complex))
    k = int(np.argmax(mag) if family == "inductor" else np.argmin(mag))
    if not 0 < k < mag.size - 1:
        return False
    if family == "inductor":
        inside = mag >= mag[k] / math.sqrt(2.0)
    else:
        inside = mag <= mag[k] * math.sqrt(2.0)
    return int(inside.sum()) < min_points


def circuits_of(family: str) -> tuple[Circuit, Circuit]:
    """Return the base circuit of a family and the one with its optional element.

    Parameters
    ----------
    family : {'inductor', 'capacitor'}
        The kind of part.
    """
    if family == "inductor":
        return InductorCircuit(False), InductorCircuit(True)
    if family == "capacitor":
        return CapacitorCircuit(False), CapacitorCircuit(True)
    raise ZfitInputError(f"unknown model {family!r}; use inductor or capacitor")


def _present(params: Mapping, key: str) -> bool:
    v = params.get(key)
    return v is not None and math.isfinite(float(v))


def circuit_for(model: str, params: Mapping) -> Circuit:
    """Return the circuit of `model` whose keys `params` has.

    The optional element (``R_p`` for an inductor, ``R_leak`` for a
    capacitor) is part of the circuit when its key is present with a finite
    value (None or ``inf`` mean "absent").

    Parameters
    ----------
    model : {'inductor', 'capacitor'}
        The kind of part.
    params : mapping
        Parameter values by key.
    """
    base, full = circuits_of(model)
    return full if _present(params, full.optional) else base


def circuit_impedance(model: str, params: Mapping, f_hz) -> np.ndarray:
    """Return the impedance (ohm) of an equivalent circuit at `f_hz`.

    Parameters
    ----------
    model : {'inductor', 'capacitor'}
        The kind of part; which optional keys are present decides the
        topology (see `circuit_for`).
    params : mapping
        Parameter values in SI units: ``L, R_s, C_p[, R_p]`` for an inductor,
        ``C, ESR, ESL[, R_leak]`` for a capacitor.  Extra keys are ignored.
    f_hz : array_like
        Frequencies in Hz.

    Examples
    --------
    >>> z = circuit_impedance("inductor", {"L": 1e-6, "R_s": 0.1, "C_p": 1e-12}, [1e6])
    """
    circuit = circuit_for(model, params)
    return circuit.impedance(circuit.vector(params), np.asarray(f_hz, dtype=float))

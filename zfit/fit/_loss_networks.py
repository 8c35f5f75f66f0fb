"""Passive R, L, C networks that realise the loss models of fit/_loss_circuits.py.

Exact where the form allows:

* the Debye core is L_inf in series with (L_d || R_d), ``L_d = L_i - L_inf``,
  ``R_d = 2 pi f_r L_d``, with R_dc in series and C_p across the part;
* the bead (winding resistance with N parallel R-L-C sections) is itself a
  network.

Fitted over the band where it is not:

* the skin-effect winding ``R_dc sqrt(1 + j f/f_c)`` as R_0 in series with a
  Foster chain of (R_k || L_k) sections, corner frequencies
  ``f_k = R_k/(2 pi L_k)`` log-spaced (four a decade, from a decade below the
  band or f_c to a decade above the band), the R_k by non-negative linear
  least squares [1]_ on the impedance relative to its own magnitude: each
  section is passive, and so is the chain;
* the constant loss tangent ``j omega C (1 - j D)`` as a capacitor C_inf in
  parallel with series R_k-C_k branches (a log-spaced distribution of
  relaxation times ``tau_k = R_k C_k``, eight a decade from two decades
  below to two above the band, Foster admittance form), the C_k by
  non-negative least squares on the admittance relative to its magnitude;
  ESR_0 and ESL in series. A loss tangent exactly constant with a
  capacitance exactly constant is not causal (Kramers-Kronig: a constant
  loss comes with a capacitance falling as ``-(2D/pi) ln f``), so no passive
  network matches the form exactly over a wide band: the error reached is
  of order ``D ln(f_max/f_min)/pi`` (about 0.4 % for D = 0.001 over six
  decades) and is stated in `max_rel_error`, never hidden.

Each network's impedance is compared with the form on a fine grid over the
band; `LossNetwork.max_rel_error` states the accuracy reached (target
0.1 %). Elements are `NetworkElement` records between pins ``a`` and ``b``,
so that outputs/_netlist.py writes and checks them as any other netlist.

References
----------
.. [1] C. L. Lawson and R. J. Hanson, *Solving Least Squares Problems*,
   Prentice-Hall, 1974, ch. 23 (non-negative least squares).
.. [2] R. M. Foster, "A reactance theorem", Bell Syst. Tech. J. 3(2),
   259-267, 1924 (partial-fraction realisation of one-ports).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.optimize import nnls

from ._realisation import NetworkElement, network_impedance
from ._loss_circuits import ConstantLossCapacitor, RelaxingCoreInductor, ResonantSections, SkinEffectInductor

__all__ = ["LossNetwork", "loss_network"]

_TWO_PI = 2.0 * math.pi


@dataclass(frozen=True)
class LossNetwork:
    """A passive R, L, C realisation of a loss model.

    Attributes
    ----------
    elements : tuple of NetworkElement
        Between pins ``a`` and ``b`` and internal nodes ``n1, n2, ...``.
    band_hz : tuple of float
        The band it was made for.
    max_rel_error : float
        Largest ``|Z_net - Z_form| / |Z_form|`` on a fine grid over the band
        (0 up to rounding for the exact realisations).
    exact : bool
        Whether the realisation is exact at every frequency.
    """

    elements: tuple
    band_hz: tuple
    max_rel_error: float
    exact: bool


class _Chain:
    """Series chain of two-terminal blocks from pin a to pin b."""

    def __init__(self):
        self.blocks = []

    def add(self, *parallel):
        """Add one block: elements ``(kind, value, role)`` in parallel between two nodes."""
        self.blocks.append(parallel)

    def elements(self):
        out, count = [], {"R": 0, "L": 0, "C": 0}
        nodes = ["a"] + [f"n{i}" for i in range(1, len(self.blocks))] + ["b"]
        for i, block in enumerate(self.blocks):
            for kind, value, role in block:
                count[kind] += 1
                out.append(NetworkElement(f"{kind}{count[kind]}", nodes[i], nodes[i + 1], float(value), role))
        return out


def _nnls_relative(columns, target):
    """Non-negative x minimising ||(A x - t)/|t| || over real and imaginary parts."""
    A = np.asarray(columns).T / np.abs(target)[:, None]
    t = target / np.abs(target)
    M = np.vstack([A.real, A.imag])
    scale = np.linalg.norm(M, axis=0)
    scale[scale == 0] = 1.0
    x, _ = nnls(M / scale, np.concatenate([t.real, t.imag]), maxiter=50 * M.shape[1])
    return x / scale


def _log_corners(lo, hi, per_decade=4):
    n = max(2, int(math.ceil(per_decade * math.log10(hi / lo))) + 1)
    return np.geomspace(lo, hi, n)


def _skin_winding(chain, r_dc, f_c, band):
    f = np.geomspace(band[0], band[1], 400)
    target = r_dc * np.sqrt(1 + 1j * f / f_c)
    fk = _log_corners(min(band[0], f_c) / 10.0, band[1] * 10.0)
    x = f[:, None] / fk[None, :]
    cols = [np.ones_like(f, complex)] + [c for c in (1j * x / (1 + 1j * x)).T]
    coef = _nnls_relative(cols, target)
    chain.add(("R", coef[0], "winding resistance, DC part"))
    for r, fkk in zip(coef[1:], fk):
        if r > 1e-9 * r_dc:
            chain.add(("R", r, f"skin effect section, corner {fkk:.4g} Hz"),
                      ("L", r / (_TWO_PI * fkk), f"skin effect section, corner {fkk:.4g} Hz"))


def _constant_d_blocks(c, d, band):
    """Return [(kind, value, role)] of C_inf || sum (R_k - C_k) for j w C (1 - j D)."""
    f = np.geomspace(band[0], band[1], 400)
    w = _TWO_PI * f
    target = 1j * w * c * (1 - 1j * d)
    # A constant loss needs a denser distribution than the skin effect: eight a decade, two decades beyond.
    tau = 1.0 / (_TWO_PI * _log_corners(band[0] / 100.0, band[1] * 100.0, per_decade=8))
    cols = [1j * w] + [1j * w / (1 + 1j * w * t) for t in tau]
    coef = _nnls_relative(cols, target)
    return coef[0], [(t / ck, ck, t) for ck, t in zip(coef[1:], tau) if ck > 1e-12 * c]


def _check(elements, circuit, p, band):
    f = np.geomspace(band[0], band[1], 1000)
    zf = circuit.impedance(np.asarray(p, float), f)
    zn = network_impedance(elements, f)
    return float(np.max(np.abs(zn - zf) / np.abs(zf)))


def loss_network(circuit, p, band_hz) -> LossNetwork:
    """Return the passive R, L, C network of a loss model over a band.

    Parameters
    ----------
    circuit : SkinEffectInductor, RelaxingCoreInductor, ConstantLossCapacitor or ResonantSections
        The loss model.
    p : array_like
        Its parameters in `circuit.keys` order (SI units).
    band_hz : tuple of float
        ``(f_min, f_max)``: where the fitted realisations must hold.

    Raises
    ------
    ValueError
        For a circuit that is not a loss model, or a Debye core with
        ``L_inf >= L_i`` (not a passive relaxation).
    """
    band = (float(band_hz[0]), float(band_hz[1]))
    v = dict(zip(circuit.keys, (float(x) for x in p)))
    chain = _Chain()
    shunt_c = None
    exact = True
    if isinstance(circuit, SkinEffectInductor):
        _skin_winding(chain, v["R_dc"], v["f_c"], band)
        chain.add(("L", v["L"], "inductance"))
        shunt_c, exact = v["C_p"], False
    elif isinstance(circuit, RelaxingCoreInductor):
        l_d = v["L_i"] - v["L_inf"]
        if l_d <= 0:
            raise ValueError("relaxing core: L_inf must be below L_i for a passive network")
        chain.add(("R", v["R_dc"], "winding resistance"))
        chain.add(("L", v["L_inf"], "core inductance at high frequency"))
        chain.add(("L", l_d, "relaxing part of the core inductance"),
                  ("R", _TWO_PI * v["f_r"] * l_d, "core loss of the relaxation"))
        shunt_c = v["C_p"]
    elif isinstance(circuit, ConstantLossCapacitor):
        chain.add(("R", v["ESR_0"], "ESR_0 (electrolyte and contacts)"))
        chain.add(("L", v["ESL"], "ESL"))
        c_inf, branches = _constant_d_blocks(v["C"], v["D"], band)
        # The dielectric sits between n2 and b; each R_k-C_k branch has its own internal node d_k.
        esl = chain.elements()[-1]
        elements = chain.elements()[:-1] + [NetworkElement(esl.name, esl.node_a, "n2", esl.value, esl.role)]
        last_a, last_b = "n2", "b"
        if c_inf > 0:
            elements.append(NetworkElement("C1", last_a, last_b, c_inf, "capacitance, instantaneous part"))
        for k, (r, ck, t) in enumerate(branches, start=1):
            mid = f"d{k}"
            elements.append(NetworkElement(f"R{100 + k}", last_a, mid, r, f"dielectric relaxation, tau {t:.4g} s"))
            elements.append(NetworkElement(f"C{100 + k}", mid, last_b, ck, f"dielectric relaxation, tau {t:.4g} s"))
        return LossNetwork(tuple(elements), band, _check(elements, circuit, p, band), False)
    elif isinstance(circuit, ResonantSections):
        chain.add(("R", v["R_dc"], "winding resistance"))
        for i in range(1, circuit.n_sections + 1):
            role = f"resonant section {i}"
            chain.add(("R", v[f"R_{i}"], role), ("L", v[f"L_{i}"], role), ("C", v[f"C_{i}"], role))
    else:
        raise ValueError(f"no network for {getattr(circuit, 'topology', circuit)!r}")
    elements = chain.elements()
    if shunt_c is not None:
        elements.append(NetworkElement("C900", "a", "b", shunt_c, "parallel (winding) capacitance C_p"))
    return LossNetwork(tuple(elements), band, _check(elements, circuit, p, band), exact)

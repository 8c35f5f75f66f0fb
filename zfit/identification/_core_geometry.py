"""The core constant of a magnetic core and its uncertainty from the geometry.

Effective parameters (IEC 60205, *Calculation of the effective parameters
of magnetic piece parts*; the ring-core formulas, clause from memory): for
a core described as pieces of length l and section A in series,
``C1 = sum l/A`` and ``C2 = sum l/A^2``, and the effective length, area and
volume are ``l_e = C1^2/C2``, ``A_e = C1/C2``, ``V_e = C1^3/C2^2``. For a
toroid of rectangular section (outer radius r2, inner r1, height h) the
field falls as 1/r and the sums become

    ``C1 = 2 pi / (h ln(r2/r1))``
    ``C2 = 2 pi (1/r1 - 1/r2) / (h^2 ln^3(r2/r1))``

so that ``l_e = 2 pi ln(r2/r1) / (1/r1 - 1/r2)`` and
``A_e = h ln^2(r2/r1) / (1/r1 - 1/r2)``. The winding's inductance with an
air core of the same shape is ``L_0 = mu_0 N^2 / C1`` and with the core
``L = mu_r L_0``.

Uncertainty
-----------
The tolerance of each dimension is the half-width of a rectangular
distribution (``u = tol/sqrt(3)``, JCGM 100:2008, 4.3.7), the dimensions
independent; propagated to first order (JCGM 100:2008, 5.1.2):
``u(C1)/C1 = (tol/sqrt(3)) sqrt(1 + 2/ln^2(OD/ID))`` for a toroid. A thin
ring (OD close to ID) is poorly known from a ruler: ln(OD/ID) is small and
the relative error of each diameter is magnified. A given core constant, or
l_e and A_e, carries `tol` itself (each of l_e and A_e, for the pair).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

__all__ = ["CoreConstant", "core_constant", "MU0"]

#: Magnetic constant, H/m (4 pi 1e-7; the 2019 SI value differs by 5e-10 relative).
MU0 = 4e-7 * math.pi


@dataclass(frozen=True)
class CoreConstant:
    """The effective parameters of a core, with the relative uncertainty of C1.

    Attributes
    ----------
    c1_per_m : float
        Core constant C1 = sum l/A, 1/m.
    c2_per_m3 : float or None
        C2 = sum l/A^2, 1/m^3 (None when only C1 was given).
    le_m, ae_m2, ve_m3 : float or None
        Effective length, area and volume (None when only C1 was given).
    rel_std : float
        Relative standard uncertainty of C1 from the geometry tolerance.
    kind : str
        ``toroid``, ``core-constant`` or ``effective-parameters``.
    turns : int
        Number of turns.
    """

    c1_per_m: float
    c2_per_m3: float | None
    le_m: float | None
    ae_m2: float | None
    ve_m3: float | None
    rel_std: float
    kind: str
    turns: int

    @property
    def l0_h(self) -> float:
        """Inductance of the winding with mu_r = 1, ``mu_0 N^2 / C1``."""
        return MU0 * self.turns**2 / self.c1_per_m

    def to_dict(self) -> dict:
        """Return the ``core`` object of the ``zfit.core/1`` JSON (SI units)."""
        return {"kind": self.kind, "turns": self.turns, "c1_per_m": self.c1_per_m, "c1_rel_std": self.rel_std,
                "c2_per_m3": self.c2_per_m3, "le_m": self.le_m, "ae_m2": self.ae_m2, "ve_m3": self.ve_m3,
                "l0_h": self.l0_h}


def _toroid(od, id_, h):
    r2, r1 = od / 2.0, id_ / 2.0
    ln = math.log(r2 / r1)
    c1 = 2.0 * math.pi / (h * ln)
    c2 = 2.0 * math.pi * (1.0 / r1 - 1.0 / r2) / (h * h * ln**3)
    return c1, c2


def core_constant(spec) -> CoreConstant:
    """Return the effective parameters of the core a `CoreSpec` describes.

    Parameters
    ----------
    spec : CoreSpec
        Turns and geometry (`zfit.io._core_spec.core_spec`).

    References
    ----------
    .. [1] IEC 60205, *Calculation of the effective parameters of magnetic
       piece parts* (ring cores; from memory).
    .. [2] JCGM 100:2008 (GUM), 4.3.7 and 5.1.2.
    """
    u = spec.geometry_tol / math.sqrt(3.0)
    if spec.kind == "toroid":
        c1, c2 = _toroid(spec.od_m, spec.id_m, spec.height_m)
        ln = math.log(spec.od_m / spec.id_m)
        rel = u * math.sqrt(1.0 + 2.0 / ln**2)
    elif spec.kind == "core-constant":
        return CoreConstant(spec.core_constant_per_m, None, None, None, None, u, spec.kind, spec.turns)
    else:
        c1 = spec.le_m / spec.ae_m2
        c2 = c1 / spec.ae_m2
        rel = u * math.sqrt(2.0)
    return CoreConstant(c1, c2, c1 * c1 / c2, c1 / c2, c1**3 / c2**2, rel, spec.kind, spec.turns)

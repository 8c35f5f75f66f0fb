"""Passive realisation of a rational impedance model: Foster synthesis and the refit that makes it possible.

A vector-fitting model of an impedance in pole-residue form,

    Z(s) = d + s e + r0 / s + sum_k r_k / (s - p_k),

is realised term by term as a series connection of one-ports (the Foster
realisation of an impedance in partial fractions, Foster 1924):

* ``d``  -> a resistor ``R = d``;
* ``e``  -> an inductor ``L = e``;
* ``r0 / s`` (a pole at the origin) -> a capacitor ``C = 1 / r0``;
* a real pole ``p = -a`` with residue ``r`` -> a parallel R-C:
  ``R / (1 + s R C) = (1/C) / (s + 1/(R C))`` gives ``C = 1/r``, ``R = r/a``;
* a complex pair ``p, p*`` with residues ``r, r*`` -> a second-order branch:
  the pair sums to ``(b1 s + b0) / (s^2 + a1 s + a0)`` with ``b1 = 2 Re r``,
  ``b0 = -2 Re(r p*)``, ``a1 = -2 Re p``, ``a0 = |p|^2``.  A capacitor ``C``
  in parallel with a resistor ``R_p`` and with a series ``L``-``R_s`` has the
  admittance ``sC + 1/R_p + 1/(sL + R_s)``, hence the impedance
  ``(s/C + R_s/(LC)) / (s^2 + s (R_s/L + 1/(R_p C)) + (1 + R_s/R_p)/(LC))``.
  Matching coefficients: ``C = 1/b1``, ``1/R_p = (a1 - b0/b1)/b1``,
  ``L = b1 / (a0 - b0/R_p)``, ``R_s = L b0 / b1``.

The branch of a complex pair is the same C || R_p || (L + R_s) that models
an inductor near its self-resonance; it is the impedance dual of the
admittance branches of Antonini (2003).  Each branch is realisable with
non-negative elements exactly when it is positive-real on its own
(``b1 > 0``, ``b0 >= 0``, ``a1 b1 >= b0``; then ``a0 - b0/R_p =
D(-b0/b1) > 0`` because the denominator has no real roots).  A passive
model can still contain a branch that is not positive-real alone; such a
model is refused with the branch named, and the equivalent circuit offered.

References
----------
R. M. Foster, "A reactance theorem", Bell System Technical Journal 3(2),
259-267, 1924. doi:10.1002/j.1538-7305.1924.tb01358.x

G. Antonini, "SPICE equivalent circuits of frequency-domain responses",
IEEE Transactions on Electromagnetic Compatibility 45(3), 502-512, 2003.
doi:10.1109/TEMC.2003.815528
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING, Sequence

import numpy as np

from .._errors import FitError, ZfitInputError
from .._units import format_eng

if TYPE_CHECKING:
    from ..data._sweep import Sweep
    from ._vectfit import RationalModel

__all__ = [
    "SynthesisError",
    "NetworkElement",
    "FosterBranch",
    "Realisation",
    "foster_branches",
    "rational_elements",
    "network_impedance",
    "passive_realisation",
]

# Relative size below which a negative coefficient is rounding, not physics.
_ROUNDING = 1e-9


class SynthesisError(FitError):
    """The rational model cannot be realised with non-negative R, L, C."""


@dataclass(frozen=True)
class NetworkElement:
    """One R, L or C element of a network between pins ``a`` and ``b``.

    Attributes
    ----------
    name : str
        Element name; its first letter is the kind (R, L or C).
    node_a, node_b : str
        The two nodes.
    value : float
        Value in ohm, henry or farad.
    role : str
        What the element stands for, written as a comment above it.
    """

    name: str
    node_a: str
    node_b: str
    value: float
    role: str = ""

    @property
    def kind(self) -> str:
        """``"R"``, ``"L"`` or ``"C"``."""
        return self.name[0].upper()


@dataclass(frozen=True)
class FosterBranch:
    """One term of the partial-fraction impedance, realised as a one-port.

    Attributes
    ----------
    kind : str
        ``"constant"``, ``"proportional"``, ``"origin"``, ``"real"`` or ``"complex"``.
    description : str
        The term in words (pole frequency, Q), for comments and messages.
    values : dict
        Element values by role: ``R`` / ``L`` / ``C`` for the first three,
        ``R`` and ``C`` of the parallel R-C of a real pole, ``C``, ``R_p``,
        ``L``, ``R_s`` of a complex pair (``R_p = inf`` and ``R_s = 0`` when
        the branch is lossless in that element).
    """

    kind: str
    description: str
    values: dict


def _pole_text(p: complex) -> str:
    w = abs(p)
    if abs(p.imag) <= _ROUNDING * w:
        return f"real pole at {format_eng(w / (2 * math.pi), 'Hz')}"
    q = w / (-2.0 * p.real) if p.real < 0 else math.inf
    return f"complex pole pair at {format_eng(w / (2 * math.pi), 'Hz')} (Q {q:.3g})"


def _check(value: float, scale: float, what: str, branch: str, clamped: list | None = None) -> float:
    """Return `value`, zero if it is negative by rounding only; raise if negative.

    With a `clamped` list, a negative value becomes zero and is recorded
    there instead (the caller then checks what that does to the impedance).
    """
    if value >= 0:
        return value
    if abs(value) <= _ROUNDING * abs(scale):
        return 0.0
    if clamped is not None:
        clamped.append(f"{what} of the {branch}")
        return 0.0
    raise SynthesisError(
        f"cannot synthesise the rational model as a passive R-L-C network: the branch of the {branch} "
        f"would need a negative {what}; use the equivalent-circuit netlist instead "
        f"(identify with --model inductor or --model capacitor)"
    )


def foster_branches(
    poles: Sequence[complex],
    residues: Sequence[complex],
    constant: float = 0.0,
    proportional: float = 0.0,
    origin_residue: float = 0.0,
    *,
    clamped: list | None = None,
) -> list[FosterBranch]:
    """Return the Foster realisation of an impedance in pole-residue form.

    Parameters
    ----------
    poles : sequence of complex
        Poles in rad/s (Re < 0); complex poles in conjugate pairs, both present.
    residues : sequence of complex
        Residues in ohm rad/s, in the order of `poles`.
    constant : float
        The constant term ``d`` in ohm.
    proportional : float
        The coefficient ``e`` of ``s`` in henry.
    origin_residue : float
        The coefficient ``r0`` of ``1/s`` in ohm rad/s (1/F); 0 for none.
    clamped : list, optional
        When given, a negative resistance or conductance (the constant term,
        a branch's R_s or 1/R_p) or a negative proportional term is set to
        zero and described in this list instead of raising; the realisation
        then differs from the model, and the caller must check by how much.
        Capacitances (residues) are never clamped.

    Returns
    -------
    list of FosterBranch
        In the order constant, proportional, origin, then the poles by
        increasing frequency.  Terms that are exactly zero are left out.

    Raises
    ------
    SynthesisError
        When a term needs a negative element or an unstable pole; the
        message names the branch.

    References
    ----------
    R. M. Foster, "A reactance theorem", Bell Syst. Tech. J. 3(2), 259-267,
    1924. doi:10.1002/j.1538-7305.1924.tb01358.x
    G. Antonini, "SPICE equivalent circuits of frequency-domain responses",
    IEEE Trans. EMC 45(3), 502-512, 2003. doi:10.1109/TEMC.2003.815528
    """
    p = np.asarray(poles, dtype=complex).ravel()
    r = np.asarray(residues, dtype=complex).ravel()
    if p.size != r.size:
        raise ZfitInputError("poles and residues have different lengths")
    out: list[FosterBranch] = []
    d, e, r0 = float(constant), float(proportional), float(origin_residue)
    zscale = max(abs(d), float(np.max(np.abs(r) / np.maximum(np.abs(p), 1e-300))) if p.size else 0.0, 1e-300)
    if d != 0 and (d > 0 or clamped is None):
        out.append(FosterBranch("constant", "constant term", {"R": _check(d, zscale, f"series resistance ({format_eng(d, 'ohm')})", "constant term", clamped)}))
    if d < 0 and clamped is not None:
        _check(d, zscale, f"series resistance ({format_eng(d, 'ohm')})", "constant term", clamped)
    if e < 0 and clamped is not None:
        _check(e, 0.0, f"series inductance ({format_eng(e, 'H')})", "proportional (s) term", clamped)
    if e != 0 and (e > 0 or clamped is None):
        out.append(FosterBranch("proportional", "proportional (s) term", {"L": _check(e, 0.0, f"series inductance ({format_eng(e, 'H')})", "proportional (s) term", clamped)}))
    if r0 != 0:
        _check(r0, 0.0, f"series capacitance ({format_eng(1.0 / r0, 'F') if r0 else 'infinite'})", "pole at the origin")
        out.append(FosterBranch("origin", "pole at the origin", {"C": 1.0 / r0}))

    used = np.zeros(p.size, dtype=bool)
    terms = []
    for i in np.argsort(np.abs(p), kind="stable"):
        if used[i]:
            continue
        pi, ri = p[i], r[i]
        used[i] = True
        desc = _pole_text(pi)
        if pi.real >= 0:
            raise SynthesisError(f"cannot synthesise the rational model: the {desc} is not stable (Re p >= 0)")
        if abs(pi.imag) <= _ROUNDING * abs(pi):
            a, res = -pi.real, ri.real
            _check(res, 0.0, f"capacitance (residue {res:.4g} is not positive)", desc)
            if res == 0:
                continue
            terms.append(FosterBranch("real", desc, {"R": res / a, "C": 1.0 / res}))
            continue
        # Find the conjugate partner among the unused poles.
        cand = np.flatnonzero(~used)
        if cand.size == 0:
            raise ZfitInputError(f"the {desc} has no conjugate partner")
        j = cand[np.argmin(np.abs(p[cand] - np.conj(pi)))]
        if abs(p[j] - np.conj(pi)) > 1e-6 * abs(pi):
            raise ZfitInputError(f"the {desc} has no conjugate partner")
        used[j] = True
        b1 = 2.0 * ri.real
        b0 = -2.0 * (ri * np.conj(pi)).real
        a1 = -2.0 * pi.real
        a0 = abs(pi) ** 2
        rscale = abs(ri)
        if not b1 > _ROUNDING * rscale:
            raise SynthesisError(
                f"cannot synthesise the rational model as a passive R-L-C network: the branch of the {desc} "
                f"would need a negative or infinite capacitance (2 Re r = {b1:.4g}); use the equivalent-circuit "
                f"netlist instead (identify with --model inductor or --model capacitor)"
            )
        b0 = _check(b0, rscale * abs(pi), "series resistance R_s", desc, clamped)
        g_b1 = _check(a1 * b1 - b0, max(a1 * b1, b0), "parallel conductance 1/R_p", desc, clamped)
        g = g_b1 / (b1 * b1)
        big_l = b1 / (a0 - g * b0)
        values = {
            "C": 1.0 / b1,
            "R_p": (1.0 / g) if g > 0 else math.inf,
            "L": big_l,
            "R_s": big_l * b0 / b1,
        }
        terms.append(FosterBranch("complex", desc, values))
    return out + terms


def _model_terms(model):
    return (
        model.poles,
        model.residues,
        float(getattr(model, "constant", 0.0) or 0.0),
        float(getattr(model, "proportional", 0.0) or 0.0),
        float(getattr(model, "origin_residue", 0.0) or 0.0),
    )


def _branch_elements(branches: Sequence[FosterBranch]) -> list[NetworkElement]:
    """Chain the branches in series from pin ``a`` to pin ``b``."""
    els: list[NetworkElement] = []
    count = {"R": 0, "L": 0, "C": 0}

    def name(kind):
        count[kind] += 1
        return f"{kind}{count[kind]}"

    nodes = [f"n{k}" for k in range(1, len(branches))]
    chain = ["a", *nodes, "b"]
    for k, br in enumerate(branches):
        na, nb = chain[k], chain[k + 1]
        v = br.values
        if br.kind == "constant":
            els.append(NetworkElement(name("R"), na, nb, v["R"], "constant term"))
        elif br.kind == "proportional":
            els.append(NetworkElement(name("L"), na, nb, v["L"], "proportional (s) term"))
        elif br.kind == "origin":
            els.append(NetworkElement(name("C"), na, nb, v["C"], "pole at the origin"))
        elif br.kind == "real":
            els.append(NetworkElement(name("R"), na, nb, v["R"], br.description + ": parallel R-C"))
            els.append(NetworkElement(name("C"), na, nb, v["C"], ""))
        else:
            inner = f"m{k + 1}"
            els.append(NetworkElement(name("C"), na, nb, v["C"], br.description + ": C || R_p || (L + R_s)"))
            if math.isfinite(v["R_p"]):
                els.append(NetworkElement(name("R"), na, nb, v["R_p"], ""))
            if v["R_s"] > 0:
                els.append(NetworkElement(name("L"), na, inner, v["L"], ""))
                els.append(NetworkElement(name("R"), inner, nb, v["R_s"], ""))
            else:
                els.append(NetworkElement(name("L"), na, nb, v["L"], ""))
    return els


def rational_elements(model, *, clamped: list | None = None) -> list[NetworkElement]:
    """Return the element lines of the Foster realisation of a rational model.

    Parameters
    ----------
    model : RationalModel or object with the same fields
        ``poles``, ``residues``, ``constant``, ``proportional``,
        ``origin_residue``.
    clamped : list, optional
        See `foster_branches`.

    Raises
    ------
    SynthesisError
        When a branch would need a negative element.
    """
    branches = foster_branches(*_model_terms(model), clamped=clamped)
    if not branches:
        raise SynthesisError("the rational model has no terms to synthesise")
    return _branch_elements(branches)


def network_impedance(elements: Sequence[NetworkElement], f_hz) -> np.ndarray:
    """Return the impedance between pins ``a`` and ``b`` of a network.

    A check of a network independent of the formulas that produced
    it (the tests also run ngspice on it).  The network is reduced by
    series and parallel combination, which keeps full precision where nodal
    analysis of a chain of very different impedances would lose digits.

    Parameters
    ----------
    elements : sequence of NetworkElement
        Elements between pins ``a`` and ``b`` and internal nodes; the
        network must be series-parallel (every network zfit builds is).
    f_hz : array_like
        Frequencies in Hz.

    Raises
    ------
    ValueError
        When the network does not reduce to one impedance between a and b.
    """
    f = np.atleast_1d(np.asarray(f_hz, dtype=float))
    s = 2j * np.pi * f
    with np.errstate(divide="ignore"):
        edges = []
        for el in elements:
            if el.kind == "R":
                z = np.full(f.size, el.value, dtype=complex)
            elif el.kind == "L":
                z = s * el.value
            else:
                z = 1.0 / (s * el.value)
            edges.append((el.node_a, el.node_b, z))
        changed = True
        while changed and len(edges) > 1:
            changed = False
            # Parallel: edges on the same pair of nodes.
            groups: dict = {}
            for na, nb, z in edges:
                groups.setdefault(frozenset((na, nb)), []).append((na, nb, z))
            if any(len(g) > 1 for g in groups.values()):
                edges = []
                for g in groups.values():
                    if len(g) == 1:
                        edges.append(g[0])
                    else:
                        y = sum(1.0 / z for _, _, z in g)
                        edges.append((g[0][0], g[0][1], 1.0 / y))
                changed = True
                continue
            # Series: an internal node with exactly two edges.
            degree: dict = {}
            for k, (na, nb, _) in enumerate(edges):
                degree.setdefault(na, []).append(k)
                degree.setdefault(nb, []).append(k)
            for node, ks in degree.items():
                if node in ("a", "b") or len(ks) != 2:
                    continue
                (a1, b1, z1), (a2, b2, z2) = edges[ks[0]], edges[ks[1]]
                ends = [n for n in (a1, b1, a2, b2) if n != node]
                rest = [e for k, e in enumerate(edges) if k not in ks]
                edges = rest + [(ends[0], ends[1], z1 + z2)]
                changed = True
                break
    if len(edges) != 1 or {edges[0][0], edges[0][1]} != {"a", "b"}:
        raise ValueError("the network does not reduce to one impedance between pins a and b")
    return edges[0][2]


@dataclass(frozen=True)
class Realisation:
    """A rational model realised as a passive R-L-C network.

    Attributes
    ----------
    model : RationalModel
        The model realised: the one reported, or its refit without a
        negative constant or proportional term.
    elements : tuple of NetworkElement
        The Foster network between pins ``a`` and ``b``.
    branches : tuple of FosterBranch
        Its branches (negative resistances or conductances set to zero),
        for tables and drawings.
    note : str
        What was done to make it passive and how far the network departs
        from the reported model (empty when it is the model's own realisation).
    """

    model: RationalModel
    elements: tuple[NetworkElement, ...]
    branches: tuple[FosterBranch, ...]
    note: str = ""


def _realised(model, elements, note) -> Realisation:
    return Realisation(model, tuple(elements), tuple(foster_branches(*_model_terms(model), clamped=[])), note)


def passive_realisation(rational: RationalModel, sweep: Sweep) -> Realisation:
    """Return a passive realisation of a rational model of a sweep.

    Vector fitting may leave a small negative constant or proportional term,
    or a branch with a slightly negative series or parallel resistance, where
    the part has none (the noise's doing): a network would need a negative
    element.  Then (1) the model is refitted from its own poles without a
    negative constant or proportional term, and (2) a remaining negative
    resistance or conductance is set to zero.  The result is used only if it
    describes the sweep as well as the model (RMS normalised residual within
    5 %) and stays within 0.1 % of the model's |Z| at every point; the note
    says what was done.

    Parameters
    ----------
    rational : RationalModel
        The model reported for the sweep.
    sweep : Sweep
        The measurement it describes (the refit and the checks use it).

    Raises
    ------
    SynthesisError
        When no passive realisation describes the sweep as well (the error
        of the model's own realisation, which names the branch).
    """
    from ._vectfit import vector_fit

    rm = rational
    try:
        return _realised(rm, rational_elements(rm), "")
    except SynthesisError as first:
        error = first
    f = np.asarray(sweep.f_hz, dtype=float)
    candidates = [(rm, "")]
    if rm.constant < 0 or rm.proportional < 0:
        try:
            refit = vector_fit(
                f, sweep.z_ohm, sweep.sigma_ohm, n_poles=len(rm.poles),
                constant=bool(rm.constant > 0), proportional=bool(rm.proportional > 0),
                origin_pole=bool(getattr(rm, "has_origin_pole", rm.origin_residue != 0)), initial_poles=rm.poles,
            )
            dropped = " and ".join(t for t, v in (("constant", rm.constant), ("proportional (s)", rm.proportional)) if v < 0)
            candidates.insert(0, (refit, f"refitted from the same {len(rm.poles)} poles without the negative {dropped} "
                                         f"term (RMS normalised residual {rm.rms_normalized_residual:.3g} -> "
                                         f"{refit.rms_normalized_residual:.3g})"))
        except Exception:  # noqa: BLE001 - the refit is a convenience; the refusal stands
            pass
    z_model = rm.impedance(f)
    for model, note in candidates:
        clamped: list = []
        try:
            els = rational_elements(model, clamped=clamped)
            z_net = network_impedance(els, f)
        except (SynthesisError, ValueError, np.linalg.LinAlgError):
            continue
        dev_sigma = float(np.max(np.abs(z_net - z_model) / sweep.sigma_ohm))
        dev_rel = float(np.max(np.abs(z_net - z_model) / np.abs(z_model)))
        rms_net = float(np.sqrt(np.mean(np.abs(z_net - sweep.z_ohm) ** 2 / sweep.sigma_ohm ** 2)))
        rms_model = float(np.sqrt(np.mean(np.abs(z_model - sweep.z_ohm) ** 2 / sweep.sigma_ohm ** 2)))
        if rms_net <= 1.05 * rms_model and dev_rel <= 1e-3:
            parts = [note] if note else []
            if clamped:
                parts.append("set to zero: " + "; ".join(clamped))
            parts.append(f"the network departs from the reported rational model by at most {100 * dev_rel:.2g} % "
                         f"of |Z| ({dev_sigma:.2g} sigma) over the sweep; RMS normalised residual {rms_net:.3g}")
            return _realised(model, els, "; ".join(parts))
    raise error

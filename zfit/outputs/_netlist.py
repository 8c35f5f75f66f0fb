"""SPICE subcircuits of a fitted part: the equivalent circuit, or the rational
model synthesised as a passive R-L-C network.

The netlists use only what every SPICE-family simulator reads: full-line
``*`` comments, ``.subckt``/``.ends``, and R, L, C element lines with plain
numeric values.  No controlled sources, no behavioural expressions, no
parameters, no inline comments (``;`` and ``$`` are dialect-specific).

Values are written with the suffixes of the original SPICE (f p n u m k meg
g t).  In SPICE ``M`` and ``m`` both mean milli, mega is ``meg``; a unit
letter after a number is ignored except that ``F`` alone reads as femto, so
no unit letters are written at all.

Rational model synthesis
------------------------
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
import re
from dataclasses import dataclass
from typing import Mapping, Sequence

import numpy as np

from .._errors import FitError, ZfitInputError
from .._units import format_eng
from .._version import __version__

__all__ = [
    "spice_value",
    "subckt_name",
    "SynthesisError",
    "NetlistElement",
    "FosterBranch",
    "foster_branches",
    "circuit_elements",
    "circuit_netlist",
    "rational_elements",
    "rational_netlist",
    "netlist_impedance",
]

# SPICE's own suffixes, understood by every simulator of the family.
_SUFFIXES = {-15: "f", -12: "p", -9: "n", -6: "u", -3: "m", 0: "", 3: "k", 6: "meg", 9: "g", 12: "t"}

# Relative size below which a negative coefficient is rounding, not physics.
_ROUNDING = 1e-9


class SynthesisError(FitError):
    """The rational model cannot be realised with non-negative R, L, C."""


@dataclass(frozen=True)
class NetlistElement:
    """One element line of a netlist.

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

    def line(self) -> str:
        """Return the SPICE element line."""
        return f"{self.name} {self.node_a} {self.node_b} {spice_value(self.value)}"


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


def spice_value(x: float, digits: int = 10) -> str:
    """Return `x` as a SPICE number with a suffix every simulator reads.

    Parameters
    ----------
    x : float
        The value in SI units.
    digits : int
        Significant digits (10 keeps the netlist exact to far better than
        any fit).

    Returns
    -------
    str
        E.g. ``"4.7n"``, ``"2.2k"``, ``"1.5meg"``; exponent notation outside
        femto..tera (``"3e-18"``).

    Examples
    --------
    >>> spice_value(1.5e6)
    '1.5meg'
    >>> spice_value(0.025)
    '25m'
    """
    x = float(x)
    if not math.isfinite(x):
        raise ValueError(f"cannot write {x!r} as a SPICE value")
    if x == 0:
        return "0"
    e = int(math.floor(math.log10(abs(x)) / 3.0)) * 3
    m = x / 10.0**e
    if abs(float(f"{m:.{digits}g}")) >= 1000:
        e += 3
        m = x / 10.0**e
    if e not in _SUFFIXES:
        return f"{x:.{digits}g}".replace("e+", "e")
    return f"{m:.{digits}g}" + _SUFFIXES[e]


def subckt_name(text: str) -> str:
    """Return a subcircuit name made from `text` (a file name, say).

    Parameters
    ----------
    text : str
        Any text; letters, digits and underscores are kept, the rest become
        underscores, and a leading letter is ensured.
    """
    stem = re.sub(r"[^A-Za-z0-9_]+", "_", str(text)).strip("_") or "part"
    if not stem[0].isalpha():
        stem = "z" + stem
    return stem[:60]


def _estimate_value(v) -> float:
    return float(getattr(v, "value", v))


def circuit_elements(model: str, parameters: Mapping[str, float]) -> list[NetlistElement]:
    """Return the element lines of an equivalent circuit between pins ``a`` and ``b``.

    Parameters
    ----------
    model : {'inductor', 'capacitor'}
        The circuit family; the keys present decide the topology
        (``R_p`` for the inductor, ``R_leak`` for the capacitor are optional).
    parameters : mapping
        Element values in SI units by key (``L``, ``R_s``, ``C_p``, ``R_p``
        or ``C``, ``ESR``, ``ESL``, ``R_leak``); values may be floats or
        objects with a ``value`` attribute (zfit's estimates).

    Raises
    ------
    ZfitInputError
        On an unknown model, a missing key, or a negative or non-finite value.
    """
    p = {k: _estimate_value(v) for k, v in parameters.items() if v is not None}
    required = {"inductor": ("L", "R_s", "C_p"), "capacitor": ("C", "ESR", "ESL")}
    if model not in required:
        raise ZfitInputError(f"no equivalent-circuit netlist for model {model!r}; use 'inductor' or 'capacitor'")
    missing = [k for k in required[model] if k not in p]
    if missing:
        raise ZfitInputError(f"{model} netlist needs {', '.join(missing)}")
    for k, v in p.items():
        if not math.isfinite(v) or v < 0:
            raise ZfitInputError(f"{model} netlist: {k} = {v!r} is not a non-negative finite value")
    if model == "inductor":
        els = [
            NetlistElement("Rs", "a", "n1", p["R_s"], "R_s: winding resistance"),
            NetlistElement("L1", "n1", "b", p["L"], "L: inductance"),
            NetlistElement("Cp", "a", "b", p["C_p"], "C_p: stray (interwinding) capacitance"),
        ]
        if "R_p" in p and math.isfinite(p["R_p"]):
            els.append(NetlistElement("Rp", "a", "b", p["R_p"], "R_p: core loss as a parallel resistance"))
    else:
        els = [
            NetlistElement("Resr", "a", "n1", p["ESR"], "ESR: equivalent series resistance"),
            NetlistElement("Lesl", "n1", "n2", p["ESL"], "ESL: equivalent series inductance"),
            NetlistElement("C1", "n2", "b", p["C"], "C: capacitance"),
        ]
        if "R_leak" in p and math.isfinite(p["R_leak"]):
            els.append(NetlistElement("Rleak", "n2", "b", p["R_leak"], "R_leak: leakage resistance across C"))
    # A zero resistor is a short that some simulators reject; a zero L or C
    # would be a short or an open.
    out = []
    for el in els:
        if el.value == 0:
            if el.kind == "R":
                out.append(NetlistElement(el.name, el.node_a, el.node_b, 1e-12, el.role + " (zero; 1p ohm keeps the node)"))
                continue
            raise ZfitInputError(f"{model} netlist: {el.role.split(':')[0]} is zero; the circuit is degenerate")
        out.append(el)
    return out


def _pole_text(p: complex) -> str:
    from .._units import format_eng

    w = abs(p)
    if abs(p.imag) <= _ROUNDING * w:
        return f"real pole at {format_eng(w / (2 * math.pi))}Hz"
    q = w / (-2.0 * p.real) if p.real < 0 else math.inf
    return f"complex pole pair at {format_eng(w / (2 * math.pi))}Hz (Q {q:.3g})"


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


def _branch_elements(branches: Sequence[FosterBranch]) -> list[NetlistElement]:
    """Chain the branches in series from pin ``a`` to pin ``b``."""
    els: list[NetlistElement] = []
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
            els.append(NetlistElement(name("R"), na, nb, v["R"], "constant term"))
        elif br.kind == "proportional":
            els.append(NetlistElement(name("L"), na, nb, v["L"], "proportional (s) term"))
        elif br.kind == "origin":
            els.append(NetlistElement(name("C"), na, nb, v["C"], "pole at the origin"))
        elif br.kind == "real":
            els.append(NetlistElement(name("R"), na, nb, v["R"], br.description + ": parallel R-C"))
            els.append(NetlistElement(name("C"), na, nb, v["C"], ""))
        else:
            inner = f"m{k + 1}"
            els.append(NetlistElement(name("C"), na, nb, v["C"], br.description + ": C || R_p || (L + R_s)"))
            if math.isfinite(v["R_p"]):
                els.append(NetlistElement(name("R"), na, nb, v["R_p"], ""))
            if v["R_s"] > 0:
                els.append(NetlistElement(name("L"), na, inner, v["L"], ""))
                els.append(NetlistElement(name("R"), inner, nb, v["R_s"], ""))
            else:
                els.append(NetlistElement(name("L"), na, nb, v["L"], ""))
    return els


def _header(title: str, header: Mapping[str, str] | None) -> list[str]:
    lines = [f"* {title}", f"* written by zfit {__version__}"]
    import textwrap

    for key, value in (header or {}).items():
        pieces = []
        for part in str(value).splitlines() or [""]:
            # Short comment lines: some simulators limit the line length.
            pieces += textwrap.wrap(part, 96 - len(key)) or [""]
        for k, part in enumerate(pieces):
            lines.append(f"* {key + ':' if k == 0 else ' ' * (len(key) + 1)} {part}".rstrip())
    lines.append("* Plain R, L, C elements only; values in ohm, henry, farad (SPICE suffixes, meg = 1e6).")
    # Some simulators reject non-ASCII bytes even in comments.
    return [_ascii(line) for line in lines]


def _ascii(text: str) -> str:
    for a, b in (("±", "+/-"), ("µ", "u"), ("Ω", "ohm"), ("σ", "sigma"), ("²", "^2"), ("°", " deg"), ("—", "-"), ("–", "-")):
        text = text.replace(a, b)
    return text.encode("ascii", "replace").decode("ascii")


def _subckt_text(name: str, title: str, header, elements: Sequence[NetlistElement]) -> str:
    lines = _header(title, header)
    lines.append("* Pins: a, b (the part's two terminals).")
    lines.append(f".subckt {subckt_name(name)} a b")
    for el in elements:
        if el.role:
            lines.append(f"* {el.role}")
        lines.append(el.line())
    lines.append(f".ends {subckt_name(name)}")
    return "\n".join(lines) + "\n"


def circuit_netlist(model: str, parameters: Mapping[str, float], *, name: str = "part", header: Mapping[str, str] | None = None) -> str:
    """Return the SPICE subcircuit of an equivalent circuit.

    Parameters
    ----------
    model : {'inductor', 'capacitor'}
        Circuit family (see `circuit_elements`).
    parameters : mapping
        Element values by key, floats or estimates with ``value``.
    name : str
        Subcircuit name (made SPICE-safe by `subckt_name`).
    header : mapping of str to str, optional
        Comment lines for the header (source file, band of validity, fit
        quality), in order.
    """
    topo = {
        "inductor": "series R_s-L with parallel C_p" + (" and R_p" if "R_p" in parameters else ""),
        "capacitor": "series C-ESR-ESL" if "R_leak" not in parameters else "series ESR-ESL with C shunted by R_leak",
    }.get(model, model)
    els = circuit_elements(model, parameters)
    return _subckt_text(name, f"Equivalent circuit of a{'n' if model[0] in 'aeiou' else ''} {model}: {topo}", header, els)


def rational_elements(model, *, clamped: list | None = None) -> list[NetlistElement]:
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


def rational_netlist(model, *, name: str = "part", header: Mapping[str, str] | None = None,
                     elements: Sequence[NetlistElement] | None = None) -> str:
    """Return the SPICE subcircuit of a rational impedance model as a passive R-L-C network.

    Parameters
    ----------
    model : RationalModel or object with the same fields
        ``poles``, ``residues``, ``constant``, ``proportional``,
        ``origin_residue``.
    name : str
        Subcircuit name.
    header : mapping of str to str, optional
        Comment lines for the header.
    elements : sequence of NetlistElement, optional
        Elements already synthesised (e.g. by `rational_elements` with
        clamping); by default they are synthesised here.

    Raises
    ------
    SynthesisError
        When a branch would need a negative element (the message names it).

    References
    ----------
    R. M. Foster, "A reactance theorem", Bell Syst. Tech. J. 3(2), 259-267,
    1924. doi:10.1002/j.1538-7305.1924.tb01358.x
    G. Antonini, "SPICE equivalent circuits of frequency-domain responses",
    IEEE Trans. EMC 45(3), 502-512, 2003. doi:10.1109/TEMC.2003.815528
    """
    els = list(elements) if elements is not None else rational_elements(model)
    n_branches = sum(1 for el in els if el.role)
    hdr = dict(header or {})
    hdr.setdefault(
        "synthesis",
        "Foster realisation of the partial fractions, one branch per term in series "
        "(Foster 1924, doi:10.1002/j.1538-7305.1924.tb01358.x; Antonini 2003, doi:10.1109/TEMC.2003.815528)",
    )
    return _subckt_text(name, f"Rational impedance model, {n_branches} branches in series", hdr, els)


def netlist_impedance(elements: Sequence[NetlistElement], f_hz) -> np.ndarray:
    """Return the impedance between pins ``a`` and ``b`` of a netlist.

    A check of a written netlist independent of the formulas that produced
    it (the tests also run ngspice on it).  The network is reduced by
    series and parallel combination, which keeps full precision where nodal
    analysis of a chain of very different impedances would lose digits.

    Parameters
    ----------
    elements : sequence of NetlistElement
        Element lines between pins ``a`` and ``b`` and internal nodes; the
        network must be series-parallel (every netlist zfit writes is).
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
        raise ValueError("the netlist does not reduce to one impedance between pins a and b")
    return edges[0][2]

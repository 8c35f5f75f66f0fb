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

The rational model's network (its Foster realisation) is built in
`zfit.fit._realisation`; this module writes it, or the equivalent circuit,
as text.

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
from pathlib import Path
from typing import Mapping, Sequence

from .._errors import ZfitInputError
from .._units import ascii_text, format_band, format_eng, format_value_std
from ..fit._models import is_lumped
from ..fit._realisation import NetworkElement, rational_elements
from .._version import __version__

__all__ = [
    "spice_value",
    "subckt_name",
    "element_line",
    "circuit_elements",
    "circuit_netlist",
    "loss_model_netlist",
    "rational_netlist",
    "identification_netlist",
]

# SPICE's own suffixes, understood by every simulator of the family.
_SUFFIXES = {-15: "f", -12: "p", -9: "n", -6: "u", -3: "m", 0: "", 3: "k", 6: "meg", 9: "g", 12: "t"}


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


def element_line(el: NetworkElement) -> str:
    """Return the SPICE element line of a network element."""
    return f"{el.name} {el.node_a} {el.node_b} {spice_value(el.value)}"


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


def circuit_elements(model: str, parameters: Mapping[str, float]) -> list[NetworkElement]:
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
            NetworkElement("Rs", "a", "n1", p["R_s"], "R_s: winding resistance"),
            NetworkElement("L1", "n1", "b", p["L"], "L: inductance"),
            NetworkElement("Cp", "a", "b", p["C_p"], "C_p: stray (interwinding) capacitance"),
        ]
        if "R_p" in p and math.isfinite(p["R_p"]):
            els.append(NetworkElement("Rp", "a", "b", p["R_p"], "R_p: core loss as a parallel resistance"))
    else:
        els = [
            NetworkElement("Resr", "a", "n1", p["ESR"], "ESR: equivalent series resistance"),
            NetworkElement("Lesl", "n1", "n2", p["ESL"], "ESL: equivalent series inductance"),
            NetworkElement("C1", "n2", "b", p["C"], "C: capacitance"),
        ]
        if "R_leak" in p and math.isfinite(p["R_leak"]):
            els.append(NetworkElement("Rleak", "n2", "b", p["R_leak"], "R_leak: leakage resistance across C"))
    # A zero resistor is a short that some simulators reject; a zero L or C
    # would be a short or an open.
    out = []
    for el in els:
        if el.value == 0:
            if el.kind == "R":
                out.append(NetworkElement(el.name, el.node_a, el.node_b, 1e-12, el.role + " (zero; 1p ohm keeps the node)"))
                continue
            raise ZfitInputError(f"{model} netlist: {el.role.split(':')[0]} is zero; the circuit is degenerate")
        out.append(el)
    return out


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
    return [ascii_text(line) for line in lines]


def _subckt_text(name: str, title: str, header, elements: Sequence[NetworkElement]) -> str:
    lines = _header(title, header)
    lines.append("* Pins: a, b (the part's two terminals).")
    lines.append(f".subckt {subckt_name(name)} a b")
    for el in elements:
        if el.role:
            lines.append(f"* {el.role}")
        lines.append(element_line(el))
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


def rational_netlist(model, *, name: str = "part", header: Mapping[str, str] | None = None,
                     elements: Sequence[NetworkElement] | None = None) -> str:
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
    elements : sequence of NetworkElement, optional
        The network already realised (`zfit.fit._realisation`); by
        default the model's own Foster realisation.

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


def _netlist_header(result) -> dict:
    sw = result.sweep
    fit = result.fit
    hdr = {
        "source": f"{sw.source} ({sw.connection}, {sw.n_points} points, {format_band(sw.f_hz[0], sw.f_hz[-1])})",
        "model": f"{result.model}: {result.topology}",
        "band of validity": f"{format_band(fit.valid_band_hz[0], fit.valid_band_hz[1])} "
        "(where the model's residual is within the measurement noise)",
        "fit quality": f"RMS normalised residual {fit.rms_normalized_residual:.3g} over {fit.points} points "
        f"(about 1 when only noise is left)",
    }
    if result.parameters:
        hdr["values"] = "\n".join(
            f"{k} = {format_value_std(e.value, e.std, e.unit)}" if e.std else f"{k} = {format_eng(e.value, e.unit)}"
            for k, e in result.parameters.items()
        )
    return hdr


def identification_netlist(result, kind: str = "auto", name: str | None = None) -> str:
    """Return the SPICE subcircuit of an identification.

    Parameters
    ----------
    result : Identification
        The result of `zfit.identify`.
    kind : {'auto', 'circuit', 'rational'}
        ``circuit``: the equivalent circuit's elements; ``rational``: the
        rational model synthesised as a passive R-L-C network; ``auto``: the
        circuit, or the rational model when that is what was reported.
    name : str, optional
        Subcircuit name; by default made from the source file's name.

    Raises
    ------
    SynthesisError
        When the rational model needs a negative element (the message names
        the branch and offers the equivalent circuit).
    """
    if kind not in ("auto", "circuit", "rational"):
        raise ZfitInputError(f"netlist kind {kind!r}: use auto, circuit or rational")
    name = subckt_name(name or Path(str(result.sweep.source)).stem or "part")
    hdr = _netlist_header(result)
    if kind == "rational" or (kind == "auto" and result.model == "rational"):
        if result.rational is None:
            raise ZfitInputError("there is no rational model to write as a netlist")
        if result.model != "rational":
            hdr["model"] = f"rational model with {len(result.rational.poles)} poles (the full band)"
            hdr.pop("values", None)
            rr = result.fit.rational_rms_normalized_residual
            if rr is not None:
                hdr["fit quality"] = f"RMS normalised residual {rr:.3g} over {result.sweep.n_points} points"
            hdr["band of validity"] = f"{format_band(result.sweep.f_hz[0], result.sweep.f_hz[-1])} (the measured band)"
        realised = result.realisation
        if realised.note:
            hdr["synthesis note"] = realised.note
        return rational_netlist(realised.model, name=name, header=hdr, elements=realised.elements)
    if result.model == "rational":
        raise ZfitInputError(
            "the result is a rational model; an equivalent-circuit netlist needs identify with --model inductor or --model capacitor"
        )
    circuit = None if result.refinement is None else result.refinement.circuit
    if circuit is not None and not is_lumped(circuit):
        return loss_model_netlist(circuit, result.refinement.values, _network_band(result), name=name, header=hdr)
    return circuit_netlist(result.model, {k: e.value for k, e in result.parameters.items()}, name=name, header=hdr)


def _network_band(result) -> tuple[float, float]:
    """The band a loss model's network must match: where the model holds, else the measured band."""
    lo, hi = result.fit.valid_band_hz
    if not (math.isfinite(lo) and math.isfinite(hi) and hi > lo):
        lo, hi = result.sweep.band_hz
    return float(lo), float(hi)


def loss_model_netlist(circuit, values, band_hz, *, name: str = "part", header: Mapping[str, str] | None = None) -> str:
    """Return the SPICE subcircuit of a frequency-dependent loss model as a passive R-L-C network.

    The network is `zfit.fit._loss_networks.loss_network`: exact for the
    relaxing core and the resonant sections, fitted over `band_hz` for the
    skin-effect winding and the constant loss tangent; the header states the
    largest relative error of the network against the model over the band.

    Parameters
    ----------
    circuit : Circuit
        A loss model of `zfit.fit._loss_circuits`.
    values : array_like
        Its parameters in `circuit.keys` order (SI units).
    band_hz : (float, float)
        Where the network must hold.
    name : str
        Subcircuit name.
    header : mapping of str to str, optional
        Comment lines for the header.

    References
    ----------
    R. M. Foster, "A reactance theorem", Bell Syst. Tech. J. 3(2), 259-267,
    1924. doi:10.1002/j.1538-7305.1924.tb01358.x
    C. L. Lawson and R. J. Hanson, *Solving Least Squares Problems*,
    Prentice-Hall, 1974, ch. 23 (non-negative least squares).
    """
    from ..fit._loss_networks import loss_network

    net = loss_network(circuit, values, band_hz)
    hdr = dict(header or {})
    lo, hi = net.band_hz
    hdr["network"] = (
        f"exact realisation of the model ({len(net.elements)} elements)" if net.exact else
        f"passive ladder fitted to the model over {format_eng(lo)}Hz..{format_eng(hi)}Hz ({len(net.elements)} elements)"
    ) + f"; largest |Z_network - Z_model|/|Z_model| over the band {net.max_rel_error:.2g}"
    if not net.exact:
        hdr["network"] += "; outside that band the network and the model part"
    return _subckt_text(name, f"Equivalent circuit: {circuit.topology}", hdr, net.elements)

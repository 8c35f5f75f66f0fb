"""Writing what a designer takes away from a result: plots, a SPICE model, a
Touchstone file and a one-page report.

`write_outputs` is what the ``identify`` and ``step`` commands call for
``--plot``, ``--netlist``, ``--touchstone`` and ``--report``.  The functions
beside it turn an `Identification` (or a step result) into the plain arrays
the plot functions take, the header of a netlist and the content of a
report; they hold no computation of their own beyond formatting.
"""

from __future__ import annotations

import math
import re
from pathlib import Path

import numpy as np

from .._errors import ZfitInputError
from .._units import format_eng, format_value_std
from .._version import __version__

__all__ = [
    "write_outputs",
    "check_output_path",
    "check_output_suffix",
    "identification_figures",
    "identification_netlist",
    "identification_report",
    "step_figures",
    "schematic_tree",
    "step_report",
    "pretty",
    "pretty_std",
]

PLOT_SUFFIXES = (".png", ".svg")
NETLIST_SUFFIXES = (".cir", ".sp", ".lib", ".inc", ".spi", ".net")
TOUCHSTONE_SUFFIXES = (".s1p",)
REPORT_SUFFIXES = (".html", ".htm")

_ROLE = {
    "L": "inductance",
    "R_s": "winding",
    "C_p": "stray C",
    "R_p": "core loss",
    "C": "capacitance",
    "ESR": "series R",
    "ESL": "series L",
    "R_leak": "leakage",
}


def _pretty_unit(unit: str) -> str:
    return {"ohm": "Ω", "deg": "°"}.get(unit, unit)


def _micro(text: str) -> str:
    # format_eng writes micro as ASCII "u"; on a page it is the micro sign.
    return re.sub(r"(?<=\d)u(?=\b|\s|$)", "µ", text)


def pretty(value, unit: str = "", digits: int = 4) -> str:
    """Return a value in engineering notation for a page: ``4.7 µH``, ``25 mΩ``.

    Parameters
    ----------
    value : float or None
        In SI units.
    unit : str
        ``"H"``, ``"F"``, ``"ohm"``, ``"Hz"``, ``"deg"`` or empty.
    digits : int
        Significant digits.
    """
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return "n/a"
    text = format_eng(value, "", digits)
    u = _pretty_unit(unit)
    m = re.match(r"^(-?[\d.]+(?:e[+-]?\d+)?)([a-zA-Z]?)$", text)
    if m:
        text = f"{m.group(1)} {m.group(2).replace('u', 'µ')}{u}".rstrip()
    elif u:
        text = f"{text} {u}"
    return _micro(text)


def pretty_std(value, std, unit: str = "") -> str:
    """Return ``value ± std unit`` for a page (GUM rounding, one prefix).

    Parameters
    ----------
    value : float or None
        The estimate in SI units.
    std : float or None
        Its standard uncertainty; None prints the value with "(no uncertainty)".
    unit : str
        Unit symbol.
    """
    if std is None or not np.isfinite(std) or std <= 0:
        return pretty(value, unit) + ("" if std is not None and std == 0 else " (no uncertainty)")
    text = format_value_std(value, std, "")
    u = _pretty_unit(unit)
    m = re.match(r"^(-?[\d.]+)([a-zA-Z]?) ± ([\d.]+)\2$", text)
    if m:
        # One prefix for both: "23.21505 ± 0.00032 MHz".
        return f"{m.group(1)} ± {m.group(3)} {m.group(2).replace('u', 'µ')}{u}".rstrip()
    return _micro(f"{text} {u}".rstrip())


def _est(e) -> str:
    return pretty_std(e.value, e.std, e.unit)


def _rel(e) -> str:
    if e.std is None or not e.value:
        return "n/a"
    r = abs(e.std / e.value)
    return f"{100 * r:.2g} %" if r >= 1e-4 else f"{1e6 * r:.2g} ppm"


def _band(b) -> str:
    if b is None or b[0] is None or b[1] is None:
        return "n/a"
    return f"{pretty(b[0], 'Hz')} to {pretty(b[1], 'Hz')}"


# ----------------------------------------------------------------- figures ---


def identification_figures(result, titles: bool = True) -> dict:
    """Return the figures of an identification by name.

    Parameters
    ----------
    result : Identification
        The result of `zfit.identify`.
    titles : bool
        Whether the figures carry titles (a report has its own headings).

    Returns
    -------
    dict of str to matplotlib.figure.Figure
        ``"sweep"`` (|Z|, phase, normalised residual with the circuit and the
        rational model), and ``"q"`` for an inductor or ``"esr_d"`` for a
        capacitor.
    """
    from ._plots import plot_esr_d, plot_q, plot_sweep

    sw = result.sweep
    f, z, sig = sw.f_hz, sw.z_ohm, sw.sigma_ohm
    circuit = result.impedance(f) if result.model != "rational" else None
    rational = result.rational.impedance(f) if result.rational is not None else None
    srf = result.srf.value_hz if result.srf is not None and result.srf.where == "in-band" else None
    name = Path(str(sw.source)).name or "sweep"
    title = f"{name}: {result.model}, {result.topology} ({sw.connection})" if titles else ""
    figs = {
        "sweep": plot_sweep(
            f, z, sig, circuit_ohm=circuit, rational_ohm=rational, srf_hz=srf,
            valid_band_hz=tuple(result.fit.valid_band_hz) if circuit is not None else None,
            circuit_label=result.topology if circuit is not None else "equivalent circuit", title=title,
        )
    }
    with np.errstate(divide="ignore", invalid="ignore"):
        if result.model == "inductor" or (result.model == "rational" and _mostly_inductive(z)):
            q = np.abs(z.imag) / z.real
            qr = np.abs(rational.imag) / rational.real if rational is not None else None
            q_std = None
            if result.rational is not None:
                # Band of the smooth (rational) Q from the model's own uncertainty.
                try:
                    s_r = result.rational.impedance_std(f)
                    q_std = s_r / math.sqrt(2.0) / np.abs(rational.real) * np.sqrt(1 + qr * qr)
                except Exception:  # pragma: no cover - a model without covariance
                    q_std = None
            qc = np.abs(circuit.imag) / circuit.real if circuit is not None else None
            qt = result.q_model(f) if result.model == "inductor" else None
            peak = None
            qp = result.figures.q_peak if result.figures is not None else None
            if qp is not None and qp.f_hz is not None and qp.value is not None:
                peak = (float(qp.f_hz), float(qp.value))
            figs["q"] = plot_q(f, q, q_std=q_std, q_rational=qr, q_circuit=qc, q_textbook=qt, peak=peak, f_max_hz=srf,
                               title="Quality factor below the self-resonance" if titles else "")
        else:
            esr = z.real
            d = z.real / np.abs(z.imag)
            esr_c = circuit.real if circuit is not None else None
            d_c = circuit.real / np.abs(circuit.imag) if circuit is not None else None
            esr_r = rational.real if rational is not None else None
            d_r = rational.real / np.abs(rational.imag) if rational is not None else None
            esr_s = sig / math.sqrt(2.0)
            if result.rational is not None:
                try:
                    esr_s = result.rational.impedance_std(f) / math.sqrt(2.0)
                except Exception:  # pragma: no cover - a model without covariance
                    esr_r = d_r = None
            figs["esr_d"] = plot_esr_d(f, esr, d, esr_std=esr_s, esr_circuit=esr_c, d_circuit=d_c,
                                       esr_rational=esr_r, d_rational=d_r,
                                       title="ESR and dissipation factor" if titles else "")
    return figs


def _mostly_inductive(z) -> bool:
    return bool(np.median(np.sign(z.imag)) > 0)


# ----------------------------------------------------------------- netlist ---


def _netlist_header(result) -> dict:
    sw = result.sweep
    fit = result.fit
    hdr = {
        "source": f"{sw.source} ({sw.connection}, {sw.n_points} points, {format_eng(sw.f_hz[0])}Hz..{format_eng(sw.f_hz[-1])}Hz)",
        "model": f"{result.model}: {result.topology}",
        "band of validity": f"{format_eng(fit.valid_band_hz[0])}Hz..{format_eng(fit.valid_band_hz[1])}Hz "
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
    from ._netlist import circuit_netlist, rational_netlist, subckt_name

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
            hdr["band of validity"] = f"{format_eng(result.sweep.f_hz[0])}Hz..{format_eng(result.sweep.f_hz[-1])}Hz (the measured band)"
        model, elements, note = _synthesisable_rational(result)
        if note:
            hdr["synthesis note"] = note
        return rational_netlist(model, name=name, header=hdr, elements=elements)
    if result.model == "rational":
        raise ZfitInputError(
            "the result is a rational model; an equivalent-circuit netlist needs identify with --model inductor or --model capacitor"
        )
    return circuit_netlist(result.model, {k: e.value for k, e in result.parameters.items()}, name=name, header=hdr)


def _synthesisable_rational(result):
    """Return (model, elements, note): a rational model and its passive realisation.

    Vector fitting may leave a small negative constant or proportional term,
    or a branch with a slightly negative series or parallel resistance, where
    the part has none (the noise's doing): a network would need a negative
    element.  Then (1) the model is refitted from its own poles without a
    negative constant or proportional term, and (2) a remaining negative
    resistance or conductance is set to zero.  The result is used only if it
    describes the sweep as well as the model (RMS normalised residual within
    5 %) and stays within 0.1 % of the model's |Z| at every point; the header
    says what was done.
    Otherwise the original refusal stands.
    """
    from ._netlist import SynthesisError, netlist_impedance, rational_elements
    from ..fit._vectfit import vector_fit

    rm = result.rational
    try:
        return rm, rational_elements(rm), ""
    except SynthesisError as first:
        error = first
    sw = result.sweep
    f = np.asarray(sw.f_hz, dtype=float)
    candidates = [(rm, "")]
    if rm.constant < 0 or rm.proportional < 0:
        try:
            refit = vector_fit(
                f, sw.z_ohm, sw.sigma_ohm, n_poles=len(rm.poles),
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
            z_net = netlist_impedance(els, f)
        except (SynthesisError, ValueError, np.linalg.LinAlgError):
            continue
        dev_sigma = float(np.max(np.abs(z_net - z_model) / sw.sigma_ohm))
        dev_rel = float(np.max(np.abs(z_net - z_model) / np.abs(z_model)))
        rms_net = float(np.sqrt(np.mean(np.abs(z_net - sw.z_ohm) ** 2 / sw.sigma_ohm ** 2)))
        rms_model = float(np.sqrt(np.mean(np.abs(z_model - sw.z_ohm) ** 2 / sw.sigma_ohm ** 2)))
        if rms_net <= 1.05 * rms_model and dev_rel <= 1e-3:
            parts = [note] if note else []
            if clamped:
                parts.append("set to zero: " + "; ".join(clamped))
            parts.append(f"the network departs from the reported rational model by at most {100 * dev_rel:.2g} % "
                         f"of |Z| ({dev_sigma:.2g} sigma) over the sweep; RMS normalised residual {rms_net:.3g}")
            return model, els, "; ".join(parts)
    raise error


# ------------------------------------------------------------------ report ---


def _command_text(command) -> str:
    if command is None:
        return ""
    if isinstance(command, str):
        return command
    import shlex

    return " ".join(shlex.quote(str(c)) for c in command)


def _svg(fig, salt: str, label: str) -> str:
    from ._plots import _pyplot, figure_bytes
    from ._report import inline_svg

    try:
        return inline_svg(figure_bytes(fig, "svg", salt=salt), label, prefix=salt)
    finally:
        _pyplot().close(fig)


def _resize(fig, w, h):
    fig.set_size_inches(w, h)
    return fig


def _figure_rows(result) -> list:
    fg = result.figures
    rows = []
    srf = result.srf
    if srf is not None:
        if srf.where == "in-band":
            rows.append(("SRF (where X = 0)", pretty_std(srf.value_hz, srf.std_hz, "Hz") + ", in the band"))
        elif srf.where == "above-band":
            txt = f"above the band: > {pretty(srf.bound_hz, 'Hz')}"
            if srf.value_hz:
                txt += f"; the {srf.source} model puts it at {pretty_std(srf.value_hz, srf.std_hz, 'Hz')}"
            rows.append(("SRF (where X = 0)", txt))
        elif srf.where == "below-band":
            txt = f"below the band: < {pretty(srf.bound_hz, 'Hz')}"
            if srf.value_hz:
                txt += f"; the {srf.source} model puts it at {pretty_std(srf.value_hz, srf.std_hz, 'Hz')}"
            rows.append(("SRF (where X = 0)", txt))
        else:
            rows.append(("SRF", "none: the reactance does not change sign"))
    if fg is not None:
        for attr in ("z_at_srf", "q_peak", "q_model_at_q_peak", "esr_min", "d_at_f_min", "d_model_at_f_min"):
            x = getattr(fg, attr, None)
            if x is None or x.value is None:
                continue
            where = f" at {pretty(x.f_hz, 'Hz')}" if x.f_hz else ""
            val = pretty_std(x.value, x.std, x.unit) if x.unit else _dimensionless(x)
            rows.append((x.definition, val + where))
    return rows


def _network_table(result):
    """The Foster network of a rational model as a table, or None if it cannot be built."""
    from ._netlist import SynthesisError
    from ._report import Table

    try:
        model, elements, note = _synthesisable_rational(result)
    except (SynthesisError, ZfitInputError, ValueError):
        return None
    from ._netlist import foster_branches

    clamped: list = []
    branches = foster_branches(model.poles, model.residues, model.constant, model.proportional,
                               model.origin_residue, clamped=clamped)
    rows = []
    for br in branches:
        v = br.values
        if br.kind == "complex":
            cells = [pretty(v["C"], "F"), pretty(v["R_p"], "ohm") if np.isfinite(v["R_p"]) else "open",
                     pretty(v["L"], "H"), pretty(v["R_s"], "ohm") if v["R_s"] > 0 else "0"]
            label = re.sub(r"complex pole pair at (\S+)Hz \(Q (\S+)\)", r"\1Hz, Q \2", br.description)
            rows.append((_micro(label.replace("MHz", " MHz").replace("kHz", " kHz").replace("GHz", " GHz")), *cells))
        elif br.kind == "real":
            rows.append((br.description, pretty(v["C"], "F"), pretty(v["R"], "ohm"), "", ""))
        else:
            key = next(iter(v))
            unit = {"R": "ohm", "L": "H", "C": "F"}[key]
            rows.append((f"series {key} ({br.description})", pretty(v[key], unit), "", "", ""))
    caption = f"{result.topology} as a passive network: branches in series, each C || R_p || (L + R_s)"
    return Table(("branch", "C", "R_p", "L", "R_s"), tuple(rows), numeric=(1, 2, 3, 4), caption=caption)


def schematic_tree(result):
    """Return the drawing tree of a result's circuit for `plot_schematic`, or None.

    Parameters
    ----------
    result : Identification
        The result of `zfit.identify`.
    """
    def el(kind, key, value, unit):
        return (kind, f"{key} = {pretty(value, unit, 3)}")

    p = {k: e.value for k, e in result.parameters.items()}
    if result.model == "inductor":
        branches = [("series", [el("R", "R_s", p["R_s"], "ohm"), el("L", "L", p["L"], "H")]), el("C", "C_p", p["C_p"], "F")]
        if "R_p" in p:
            branches.append(el("R", "R_p", p["R_p"], "ohm"))
        return ("parallel", branches)
    if result.model == "capacitor":
        c = el("C", "C", p["C"], "F")
        if "R_leak" in p:
            c = ("parallel", [c, el("R", "R_leak", p["R_leak"], "ohm")])
        return ("series", [el("R", "ESR", p["ESR"], "ohm"), el("L", "ESL", p["ESL"], "H"), c])
    try:
        from ._netlist import foster_branches

        model, _, _ = _synthesisable_rational(result)
        clamped: list = []
        branches = foster_branches(model.poles, model.residues, model.constant, model.proportional,
                                   model.origin_residue, clamped=clamped)
    except Exception:  # noqa: BLE001 - no drawing for a model that cannot be realised
        return None
    parts = []
    for k, br in enumerate(branches, 1):
        v = br.values
        if br.kind == "complex":
            inner = [("L", pretty(v["L"], "H", 3))] + ([("R", pretty(v["R_s"], "ohm", 3))] if v["R_s"] > 0 else [])
            par = [("C", pretty(v["C"], "F", 3))] + ([("R", pretty(v["R_p"], "ohm", 3))] if np.isfinite(v["R_p"]) else [])
            par.append(("series", inner) if len(inner) > 1 else inner[0])
            parts.append(("parallel", par))
        elif br.kind == "real":
            parts.append(("parallel", [("C", pretty(v["C"], "F", 3)), ("R", pretty(v["R"], "ohm", 3))]))
        else:
            key = next(iter(v))
            parts.append((key, pretty(v[key], {"R": "ohm", "L": "H", "C": "F"}[key], 3)))
    return parts[0] if len(parts) == 1 else ("series", parts)


def _dimensionless(e) -> str:
    """Q or D with its uncertainty, without SI prefixes (a D of 0.0176, not 17.6m)."""
    if e is None or e.value is None:
        return "n/a"
    v, u = float(e.value), e.std
    if not u or not math.isfinite(u) or u <= 0:
        return f"{v:.4g}"
    if 1.0 <= abs(v) < 1e4 or (1e-3 <= abs(v) < 1.0 and u >= 1e-7):
        decimals = min(max(0, 1 - int(math.floor(math.log10(u)))), 9)
        return f"{v:.{decimals}f} ± {u:.{decimals}f}"
    # A common power of ten (a multiple of 3) for both, the uncertainty to two
    # digits and the value to the same place (GUM, JCGM 100:2008, 7.2.6).
    e = int(math.floor(math.log10(abs(v) if v else u) / 3.0)) * 3
    m, mu = v / 10.0**e, u / 10.0**e
    decimals = min(max(0, 1 - int(math.floor(math.log10(mu)))), 9)
    return f"({m:.{decimals}f} ± {mu:.{decimals}f})e{e}"


def _percent_std(v, u) -> str:
    """A percentage with its uncertainty, both to the uncertainty's second digit (GUM 7.2.6)."""
    if not u or not math.isfinite(u) or u <= 0:
        return f"{v:.3g} %"
    decimals = min(max(0, 1 - int(math.floor(math.log10(u)))), 9)
    return f"{v:.{decimals}f} ± {u:.{decimals}f} %"


def _spot_table(result):
    """Spot readouts as a table: one column per frequency when there are few."""
    from ._report import Table

    if not result.spot:
        return None, False
    inductive = result.model == "inductor" or (
        result.model == "rational" and sum(sp.X.value > 0 for sp in result.spot) * 2 >= len(result.spot))
    eff_key, qd_key = ("L_eff", "Q") if inductive else ("C_eff", "D")
    freq = [pretty(sp.f_hz, "Hz") + ("" if sp.in_band else " (outside the band)") for sp in result.spot]
    cols = {
        "R": [_est(sp.R) for sp in result.spot],
        "X": [_est(sp.X) for sp in result.spot],
        eff_key: [_est(getattr(sp, eff_key)) for sp in result.spot],
        qd_key: [_dimensionless(getattr(sp, qd_key)) for sp in result.spot],
    }
    caption = f"Spot readouts, from the {result.spot[0].source} model"
    if len(result.spot) <= 3:
        rows = tuple((k, *v) for k, v in cols.items())
        return Table(("at", *freq), rows, numeric=tuple(range(1, len(freq) + 1)), caption=caption), True
    rows = tuple(zip(freq, *cols.values()))
    return Table(("f", *cols), rows, numeric=(1, 2, 3, 4), caption=caption), False


def identification_report(result, command=None, *, netlist_text: str | None = None):
    """Return the `Report` of an identification.

    Parameters
    ----------
    result : Identification
        The result of `zfit.identify`.
    command : str or sequence of str, optional
        The command line that reproduced it.
    netlist_text : str, optional
        A SPICE netlist to print on the page.
    """
    from ._report import FigureBlock, Report, Section, Table, facts

    sw = result.sweep
    fit = result.fit
    src = Path(str(sw.source)).name or str(sw.source)
    figs = identification_figures(result, titles=False)
    sections = []

    params = result.parameters
    spot, compact = _spot_table(result)
    extra = (spot,) if compact else ()
    tree = schematic_tree(result)
    schematic = ()
    if tree is not None:
        from ._plots import plot_schematic

        # Drawn at the size it is shown (55 % of a column), so its labels print at the page's size.
        schematic = (FigureBlock(_svg(plot_schematic(tree, width_in=1.95), "schematic", "the circuit"),
                                 "", width_pct=55),)
    if params:
        rows = tuple(
            (k, _est(e), _rel(e), _ROLE.get(k, "")) for k, e in params.items()
        )
        sections.append(Section(
            "Equivalent circuit",
            tables=(Table(("", "value ± std. uncertainty", "rel.", ""), rows, numeric=(1, 2), nowrap=(3,),
                          caption=result.topology), *extra),
        ))
    elif result.rational is not None:
        rm = result.rational
        prow = []
        for p in rm.poles:
            if p.imag < 0:
                continue
            w = abs(p)
            q = w / (-2 * p.real) if p.real < 0 else float("inf")
            prow.append((pretty(w / (2 * math.pi), "Hz"), "real" if p.imag == 0 else f"{q:.3g}"))
        net = _network_table(result)
        poles = Table(("pole frequency", "Q of the pole"), tuple(prow), numeric=(0, 1), caption=result.topology)
        sections.append(Section(
            "Rational model",
            tables=(net if net is not None else poles,),
            figures=schematic,
            notes=("The rational model (vector fitting) describes the measured band"
                   + ("; the passive network above realises it (the SPICE netlist's elements)." if net is not None else "."),),
        ))

    sections.append(Section("Self-resonance and figures", facts=tuple(_figure_rows(result)),
                            tables=extra if not params else (), figures=schematic if params else ()))
    if result.warnings or fit.worse_than_rational:
        notes = list(result.warnings)
        if fit.worse_than_rational and not any("rational" in w for w in notes):
            notes.append("The circuit describes the full band worse than the rational model.")
        sections.append(Section("Warnings", notes=tuple(notes), css_class="warn"))
    sections.append(Section(
        "Impedance",
        figures=(FigureBlock(_svg(_resize(figs.pop("sweep"), 7.3, 3.2), "sweep", "impedance against frequency"),
                 ("Measurement with ±2σ band, equivalent circuit (solid), rational model (dashed); below: normalised "
                  "residual against the 1σ and 3σ noise levels; shaded: outside the circuit's band of validity."
                  if params else "Measurement with ±2σ band and the rational model (dashed); below: normalised "
                  "residual against the 1σ and 3σ noise levels.")),),
        css_class="full",
    ))
    for key, fig in figs.items():
        cap = ("Q = |X|/R below the SRF: measured (dots; line: rational model), circuit, and the textbook ωL/R_s, "
               "which ignores C_p." if key == "q" else
               "ESR (Re Z) and D = tan δ = R/|X|, measured and circuit.")
        sections.append(Section(
            "Quality factor" if key == "q" else "Losses",
            figures=(FigureBlock(_svg(_resize(fig, 3.6, 2.25 if key == "q" else 2.35), key, cap), cap),),
        ))
    chosen = [c for c in result.candidates if c.chosen]
    others = sorted((c for c in result.candidates if not c.chosen), key=lambda c: c.bic)
    cand = (f"{fit.criterion}; next: {others[0].topology} ({fit.criterion} +{others[0].bic - chosen[0].bic:.0f})"
            if chosen and others else "")
    sections.append(Section("Measurement and fit", facts=facts(
        ("file", src),
        ("read as", sw.data_format),
        ("connection", sw.connection + (f", reference {pretty(sw.reference_ohm, 'ohm')}" if sw.reference_ohm else "")),
        ("points", f"{sw.n_points}, {_band(sw.band_hz)}"),
        ("noise model", sw.noise_model),
        ("notes", "; ".join(sw.notes)),
        ("DC resistance", _est(result.rdc) if result.rdc is not None else None),
        ("band of validity", _band(fit.valid_band_hz)),
        ("fitted over", _band(fit.fitted_band_hz) if tuple(fit.fitted_band_hz) != tuple(fit.valid_band_hz) else None),
        ("residual", f"RMS normalised {fit.rms_normalized_residual:.3g} over {fit.points} points on {fit.domain} "
                     f"(1 = noise only); reduced χ² {fit.reduced_chi_square:.3g}"),
        ("rational model", f"{fit.rational_poles} poles, RMS normalised residual {fit.rational_rms_normalized_residual:.3g}"
         if fit.rational_poles is not None and fit.rational_rms_normalized_residual is not None else None),
        ("model choice", cand),
    )))
    if spot is not None and not compact:
        sections.append(Section("Spot readouts", tables=(spot,), css_class="full"))
    if netlist_text:
        sections.append(Section("SPICE subcircuit", code=(netlist_text,), css_class="full"))

    headline = result.model.capitalize() if result.model != "rational" else "Part"
    main = None
    for key in ("L", "C"):
        if key in params:
            main = f"{key} = {_est(params[key])}"
    title = f"{headline}: {main}" if main else f"{headline}: {result.topology}"
    verdict_bits = []
    if result.srf is not None and result.srf.where == "in-band":
        verdict_bits.append(f"self-resonant at {pretty_std(result.srf.value_hz, result.srf.std_hz, 'Hz')}")
    verdict_bits.append(f"the {'circuit' if params else 'model'} describes the part within the noise from {_band(fit.valid_band_hz)}")
    verdict = "; ".join(verdict_bits)
    verdict = verdict[:1].upper() + verdict[1:] + "."
    return Report(
        title=title,
        subtitle=f"{src} · {sw.connection} · {sw.n_points} points, {_band(sw.band_hz)}",
        verdict=verdict,
        sections=tuple(sections),
        command=_command_text(command),
    )


# -------------------------------------------------------------------- step ---


def _step_plot_data(result) -> dict:
    """The arrays the capture plots need, taken from a `StepResult`."""
    cap = result.capture
    ew = result.edge_waveform
    out_name = result.output_name
    in_name = result.input_name
    if cap is None:
        raise ZfitInputError("the step result carries no capture to plot")
    n = int(result.n_samples)
    dt = 1.0 / float(result.sample_rate_hz)
    t = np.arange(n) * dt
    channels = {}
    levels = {}
    if in_name is not None:
        channels[f"input ({in_name})"] = cap.channels[in_name]
        if result.input_levels_v is not None:
            levels[f"input ({in_name})"] = tuple(result.input_levels_v)
    channels[f"output ({out_name})"] = cap.channels[out_name]
    levels[f"output ({out_name})"] = tuple(result.levels_v)
    edges = np.asarray(result.edge_times_s, dtype=float)
    # Show about two periods from just before the first analysed edge.
    if edges.size >= 3:
        half = float(np.median(np.diff(edges)))
        window = (max(0.0, edges[0] - 0.3 * half), min(t[-1], edges[0] + 3.7 * half))
    else:
        window = None
    fitted = {}
    if ew is not None and ew.fit_v is not None and np.isfinite(ew.fit_v).any():
        ref = cap.channels[in_name if in_name is not None else out_name]
        ref_levels = result.input_levels_v if in_name is not None else result.levels_v
        mid = 0.5 * (ref_levels[0] + ref_levels[1])
        ok = np.isfinite(ew.fit_v)
        tf_all, vf_all = [], []
        for e in edges:
            if window is not None and not (window[0] <= e <= window[1]):
                continue
            i = min(int(round(e / dt)) + 3, n - 1)
            if ref[i] > mid:  # a rising edge: the averaged edge is rising
                tf_all.append(np.concatenate([e + ew.t_s[ok], [np.nan]]))
                vf_all.append(np.concatenate([ew.fit_v[ok], [np.nan]]))
        if tf_all:
            fitted[f"first-order response, output"] = (np.concatenate(tf_all), np.concatenate(vf_all))
    resp = result.response
    d = {
        "t_s": t, "channels": channels, "levels": levels, "edges_s": edges, "fitted": fitted, "window_s": window,
        "title": f"{Path(str(result.source)).name}: {result.edges} edges at {pretty(result.sample_rate_hz, 'Hz')} sampling",
        "source": result.source,
        "identification": result.impedance,
        "f_hz": None,
    }
    if resp is not None and resp.f_hz.size:
        pos = resp.f_hz > 0
        d.update({"f_hz": resp.f_hz[pos], "h": resp.h[pos], "coherence": resp.coherence[pos],
                  "h_std": resp.h_std[pos], "usable": resp.usable[pos],
                  "usable_band_hz": tuple(result.usable_band_hz)})
    d["subtitle"] = (f"{Path(str(result.source)).name} · input {in_name or 'none (single channel)'} · output {out_name} · "
                     f"{result.n_samples} samples at {pretty(result.sample_rate_hz, 'Hz')}"
                     + (f" · sense resistor {pretty(result.shunt_ohm, 'ohm')}" if result.shunt_ohm else ""))
    bits = []
    if result.time_constant_s is not None:
        bits.append(f"time constant {pretty_std(result.time_constant_s, result.time_constant_std_s, 's')}")
    if result.ringing is not None:
        bits.append(f"ringing at {pretty_std(result.ringing.frequency_hz, result.ringing.frequency_std_hz, 'Hz')}")
    lo, hi = result.usable_band_hz
    if lo and hi:
        bits.append(f"usable band {pretty(lo, 'Hz')} to {pretty(hi, 'Hz')}")
    v = "; ".join(bits)
    d["verdict"] = (v[:1].upper() + v[1:] + ".") if v else ""
    return d


def _step_facts(result) -> list:
    rows = [
        ("edges analysed", f"{result.edges} ({result.edges_rising} rising, {result.edges_falling} falling)"),
        ("output levels", f"{pretty(result.levels_v[0], 'V')} / {pretty(result.levels_v[1], 'V')} (histogram method)"),
    ]
    if result.input_levels_v is not None:
        rows.append(("input levels", f"{pretty(result.input_levels_v[0], 'V')} / {pretty(result.input_levels_v[1], 'V')}"))
    if result.transition_10_90_s is not None:
        rows.append(("10-90 % transition", pretty_std(result.transition_10_90_s, result.transition_10_90_std_s, "s")))
    if result.overshoot_pct is not None:
        std = result.overshoot_std_pct
        rows.append(("overshoot", _percent_std(result.overshoot_pct, std)))
    if result.time_constant_s is not None:
        rows.append(("time constant", pretty_std(result.time_constant_s, result.time_constant_std_s, "s")
                     + f" ({result.time_constant_method})"))
    if result.midpoint_time_constant_s is not None:
        rows.append(("cross-check", pretty_std(result.midpoint_time_constant_s, result.midpoint_time_constant_std_s, "s")
                     + " (low-to-midpoint time / ln 2)"))
    r = result.ringing
    if r is not None:
        rows.append(("ringing", f"{pretty_std(r.frequency_hz, r.frequency_std_hz, 'Hz')}, damping ratio {r.damping_ratio:.3g}"))
    sc = result.stray_capacitance
    if sc is not None:
        rows.append(("stray capacitance", f"{pretty_std(sc.value_f, sc.std_f, 'F')} ({sc.method})"))
    lo, hi = result.usable_band_hz
    rows.append(("usable band", _band((lo, hi))))
    rows.append(("response", f"{result.response.method}, {result.response.n_averages} averages"))
    for w in result.warnings:
        rows.append(("warning", w))
    return rows


def step_figures(result, titles: bool = True, impedance: bool = True, sizes: dict | None = None) -> dict:
    """Return the figures of a step (capture) analysis by name.

    Parameters
    ----------
    result : StepResult
        The result of `zfit.analyse_capture`.
    titles : bool
        Whether the figures carry titles (a report has its own headings).
    impedance : bool
        Whether to add the impedance figures when a sense resistor gave one.
    sizes : dict, optional
        Figure sizes in inches by name (``{"time": (3.6, 2.5)}``); the plot
        functions' defaults otherwise.

    Returns
    -------
    dict of str to matplotlib.figure.Figure
        ``"time"`` (the record with levels, edges and fitted response) and
        ``"bode"`` (H with the usable band and coherence); ``"sweep"`` and
        ``"q"``/``"esr_d"`` as for a sweep when the impedance was identified.
    """
    from ._plots import plot_bode, plot_time_record

    d = _step_plot_data(result)
    sizes = sizes or {}

    def size(name):
        return {"width_in": sizes[name][0], "height_in": sizes[name][1]} if name in sizes else {}

    figs = {
        "time": plot_time_record(d["t_s"], d["channels"], levels_v=d["levels"], edges_s=d["edges_s"],
                                 fitted=d["fitted"], window_s=d["window_s"], title=d["title"] if titles else "",
                                 **size("time")),
    }
    if d.get("f_hz") is not None:
        figs["bode"] = plot_bode(d["f_hz"], d["h"], d["coherence"], usable_band_hz=d["usable_band_hz"],
                                 h_std=d.get("h_std"), usable=d.get("usable"),
                                 title="Response H = V_out / V_in (H1 estimate)" if titles else "", **size("bode"))
    ident = d.get("identification")
    if ident is not None and impedance:
        figs.update(identification_figures(ident, titles=titles))
    return figs


def step_report(result, command=None, *, netlist_text: str | None = None):
    """Return the `Report` of a step (capture) analysis.

    Parameters
    ----------
    result : StepResult
        The result of `zfit.analyse_capture`.
    command : str or sequence of str, optional
        The command line that reproduced it.
    netlist_text : str, optional
        A SPICE netlist to print on the page (with a sense resistor).
    """
    from ._report import FigureBlock, Report, Section

    d = _step_plot_data(result)
    ident = d.get("identification")
    facts_section = Section("Time-domain figures (IEEE Std 181)", facts=tuple(_step_facts(result)))
    figs = step_figures(result, titles=False, impedance=False, sizes={"time": (3.6, 2.9), "bode": (3.6, 3.0)})
    capture_sections = []
    for key, title, cap, h in (
        ("time", "Time record", "The record: state levels (dashed), edge times (ticks), fitted response (dash-dot).", 2.9),
        ("bode", "Frequency response", "H = V_out/V_in from all edges (H1) with ±2σ band; shaded: usable band; "
                                       "coherence below.", 3.0),
    ):
        if key in figs:
            fig = _resize(figs.pop(key), 3.6, h)
            capture_sections.append(Section(title, figures=(FigureBlock(_svg(fig, key, cap), cap),)))
    sections = []
    if ident is not None:
        sub = [s for s in identification_report(ident, None, netlist_text=netlist_text).sections]
        head = [s for s in sub if s.title in ("Equivalent circuit", "Rational model", "Self-resonance and figures",
                                               "Warnings", "Impedance")]
        rest = [s for s in sub if s not in head]
        sections = head + capture_sections + [s for s in rest if s.title in ("Quality factor", "Losses")] + \
            [facts_section] + [s for s in rest if s.title not in ("Quality factor", "Losses")]
    else:
        sections = [facts_section] + capture_sections
    src = Path(str(d["source"])).name
    title = "Capture: " + (f"{ident.model}, " + next((f"{k} = {_est(e)}" for k, e in ident.parameters.items()), "")
                           if ident is not None else src)
    return Report(title=title, subtitle=d["subtitle"], verdict=d["verdict"], sections=tuple(sections),
                  command=_command_text(command))


# ------------------------------------------------------------------- write ---


def _is_step(result) -> bool:
    return not hasattr(result, "parameters") or not hasattr(result, "sweep")


def check_output_path(path, force: bool = False) -> Path:
    """Return `path` as a Path if an output may be written there, else raise.

    Says in one line what is wrong before any work is done: the path is a
    folder, a parent in it is a file, or the file exists and `force` is
    false.

    Parameters
    ----------
    path : str or os.PathLike
        The output file.
    force : bool
        Whether an existing file may be replaced.

    Raises
    ------
    ZfitInputError
        For a folder given as the file, or a file given as a folder.
    OutputExistsError
        When the file exists and `force` is false.
    """
    from .._atomic import check_writable

    return check_writable(path, force)


def check_output_suffix(path, kind: str) -> Path:
    """Return `path` as a Path if its extension suits `kind`, else raise.

    Parameters
    ----------
    path : str or os.PathLike
        The output file.
    kind : {'plot', 'netlist', 'touchstone', 'report'}
        What is to be written there.
    """
    suffixes = {"plot": PLOT_SUFFIXES, "netlist": NETLIST_SUFFIXES, "touchstone": TOUCHSTONE_SUFFIXES,
                "report": REPORT_SUFFIXES}[kind]
    path = Path(path)
    if path.suffix.lower() not in suffixes:
        raise ZfitInputError(f"{kind} file must end in {' or '.join(suffixes)}", path=path)
    return path


def write_outputs(
    result,
    *,
    plot=None,
    netlist=None,
    touchstone=None,
    touchstone_grid=None,
    report=None,
    force: bool = False,
    command=None,
    netlist_kind: str = "auto",
    touchstone_reference_ohm: float = 50.0,
) -> list[Path]:
    """Write the outputs asked for, each atomically; return the paths written.

    Parameters
    ----------
    result : Identification or StepResult
        What to write out.
    plot : path, optional
        ``.png`` or ``.svg``.  For a sweep: the impedance figure, plus the
        quality-factor (``<stem>-q``) or ESR/D (``<stem>-esr-d``) figure
        beside it.  For a capture: the time record, plus the Bode figure
        (``<stem>-bode``) and, with a sense resistor, the impedance figures.
    netlist : path, optional
        SPICE subcircuit (``.cir``, ``.sp``, ``.lib``, ``.inc``, ``.spi``, ``.net``).
    touchstone : path, optional
        One-port Touchstone file (``.s1p``) of the fitted model.
    touchstone_grid : str or array_like, optional
        Its frequency grid: text for `zfit.io._touchstone_export.parse_grid` (``1k:1G:801``)
        or an array in Hz; the measured frequencies by default.
    report : path, optional
        One-page self-contained HTML report (``.html``).
    force : bool
        Whether existing files may be replaced.
    command : str or sequence of str, optional
        The command line that reproduced the result, for the report.
    netlist_kind : {'auto', 'circuit', 'rational'}
        Which model the netlist holds (see `identification_netlist`).
    touchstone_reference_ohm : float
        Reference impedance of the Touchstone file.

    Returns
    -------
    list of pathlib.Path
        Every file written, in order.

    Raises
    ------
    OutputExistsError
        When a file exists and `force` is false (checked for all outputs
        before anything is written).
    ZfitInputError
        On an extension that does not say what to write.
    """
    from .._atomic import write_atomic

    step = _is_step(result)
    ident = result if not step else _step_identification(result)
    jobs = []  # (path, kind)
    for path, kind in ((plot, "plot"), (netlist, "netlist"), (touchstone, "touchstone"), (report, "report")):
        if path is None:
            continue
        path = check_output_suffix(path, kind)
        check_output_path(path, force)
        jobs.append((path, kind))
    if ident is None and any(k in ("netlist", "touchstone") for _, k in jobs):
        raise ZfitInputError("a netlist or Touchstone file needs an impedance: give the capture's sense resistor (--shunt)")

    # Build everything first, so that a refusal (a netlist that cannot be
    # synthesised) leaves no partial set of files behind.
    out: list[tuple[Path, object]] = []
    netlist_text = None
    for path, kind in jobs:
        if kind == "netlist":
            netlist_text = identification_netlist(ident, netlist_kind)
            out.append((path, netlist_text))
        elif kind == "plot":
            from ._plots import figure_bytes, _pyplot

            figs = step_figures(result) if step else identification_figures(ident)
            fmt = path.suffix.lower().lstrip(".")
            first = True
            for key, fig in figs.items():
                target = path if first else path.with_name(f"{path.stem}-{key.replace('_', '-')}{path.suffix}")
                out.append((target, figure_bytes(fig, fmt, salt=target.stem)))
                _pyplot().close(fig)
                first = False
        elif kind == "touchstone":
            out.append((path, _touchstone_payload(ident, touchstone_grid, touchstone_reference_ohm)))
        elif kind == "report":
            out.append((path, None))  # filled below, once the netlist is known
    for path, _ in out:
        check_output_path(path, force)
    written = []
    for path, data in out:
        if data is None:
            from ._report import report_html

            # The netlist has its own file; the page stays one page.
            rep = step_report(result, command) if step else identification_report(ident, command)
            data = report_html(rep)
        if callable(data):
            data = data()
        written.append(write_atomic(path, data, force))
    return written


def _touchstone_payload(ident, grid, r0):
    import warnings

    from .._errors import MeasurementWarning
    from ..io._touchstone_export import parse_grid, touchstone_text

    if grid is None:
        f = np.asarray(ident.sweep.f_hz, dtype=float)
    elif isinstance(grid, str):
        f = parse_grid(grid)
    else:
        f = np.asarray(grid, dtype=float)
    band = tuple(ident.fit.valid_band_hz) if ident.model != "rational" else ident.sweep.band_hz
    comments = [
        f"zfit {__version__}: one-port model of {ident.sweep.source}",
        f"model: {ident.model}, {ident.topology}",
        f"band of validity: {format_eng(band[0])}Hz..{format_eng(band[1])}Hz",
    ]
    comments += [f"{k} = {format_value_std(e.value, e.std, e.unit)}" for k, e in ident.parameters.items() if e.std]
    if f[0] < band[0] * (1 - 1e-9) or f[-1] > band[1] * (1 + 1e-9):
        text = (f"Touchstone grid {format_eng(f[0])}Hz..{format_eng(f[-1])}Hz reaches beyond the band the model "
                f"describes ({format_eng(band[0])}Hz..{format_eng(band[1])}Hz): those points are an extrapolation")
        warnings.warn(text, MeasurementWarning, stacklevel=3)
        comments.append("WARNING: " + text)
    return touchstone_text(f, ident.impedance(f), reference_ohm=r0, comments=comments)


def _step_identification(result):
    ident = getattr(result, "impedance", None)
    if ident is not None and hasattr(ident, "parameters") and hasattr(ident, "sweep"):
        return ident
    ident = getattr(result, "identification", None)
    if ident is not None and hasattr(ident, "parameters"):
        return ident
    return None

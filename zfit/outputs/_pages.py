"""The report pages: an identification or a step analysis as a `Report` (sections, tables, plots).

What the one-page HTML report shows and in which order; `_report` renders
it.  The numbers come from the result (its parameters, figures of merit,
spot readouts and, for a rational model, its passive realisation); this
module only lays them out.
"""

from __future__ import annotations

import math
import re
from pathlib import Path

import numpy as np

from .._errors import ZfitInputError
from ..fit._models import is_lumped
from ._result_plots import identification_plots, step_page_data, step_plots
from ._views import (band_text, dimensionless, estimate_text, figure_model_notes, percent_std, pretty, pretty_std,
                     relative_text, srf_model_note)

__all__ = ["identification_report", "step_report", "schematic_tree"]

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


def _command_text(command) -> str:
    if command is None:
        return ""
    if isinstance(command, str):
        return command
    import shlex

    return " ".join(shlex.quote(str(c)) for c in command)


def _svg(plot, salt: str, label: str) -> str:
    from ._plot_files import figure_bytes
    from ._plot_style import pyplot as _pyplot
    from ._report import inline_svg

    try:
        return inline_svg(figure_bytes(plot, "svg", salt=salt), label, prefix=salt)
    finally:
        _pyplot().close(plot)


def _merit_rows(result) -> list:
    merit = result.figures
    rows = []
    srf = result.srf
    if srf is not None:
        if srf.where == "in-band":
            rows.append(("SRF (where X = 0)", pretty_std(srf.value_hz, srf.std_hz, "Hz") + ", in the band"
                         + (", from the sign change of Im Z in the data" if srf.source == "measurement" else "")))
            note = srf_model_note(result)
            if note is not None:
                rows.append(("model SRF", note))
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
    if merit is not None:
        # One figure each, the measured one; the model's beside it only where it differs, with why.
        why = figure_model_notes(result)
        for attr in ("z_at_srf", "q_peak", "esr_min", "d_at_f_min"):
            x = getattr(merit, attr, None)
            if x is None or x.value is None:
                continue
            where = f" at {pretty(x.f_hz, 'Hz')}" if x.f_hz else ""
            val = pretty_std(x.value, x.std, x.unit) if x.unit else dimensionless(x)
            rows.append((x.definition, val + where))
            if attr in why:
                rows.append(("the model's value", why[attr]))
    return rows


def _network_table(result):
    """The passive network of a rational model as a table, or None if it cannot be built."""
    from ..fit._realisation import SynthesisError
    from ._report import Table

    try:
        branches = result.realisation.branches
    except (SynthesisError, ZfitInputError, ValueError):
        return None
    rows = []
    for br in branches:
        v = br.values
        if br.kind == "complex":
            cells = [pretty(v["C"], "F"), pretty(v["R_p"], "ohm") if np.isfinite(v["R_p"]) else "open",
                     pretty(v["L"], "H"), pretty(v["R_s"], "ohm") if v["R_s"] > 0 else "0"]
            label = re.sub(r"complex pole pair at (.+?) \(Q (\S+)\)", r"\1, Q \2", br.description)
            rows.append((label, *cells))
        elif br.kind == "real":
            rows.append((br.description, pretty(v["C"], "F"), pretty(v["R"], "ohm"), "", ""))
        else:
            key = next(iter(v))
            unit = {"R": "ohm", "L": "H", "C": "F"}[key]
            rows.append((f"series {key} ({br.description})", pretty(v[key], unit), "", "", ""))
    caption = f"{result.topology} as a passive network: branches in series, each C || R_p || (L + R_s)"
    return Table(("branch", "C", "R_p", "L", "R_s"), tuple(rows), numeric=(1, 2, 3, 4), caption=caption)


def _loss_model_tree(keys, p, el):
    """The drawing tree of a frequency-dependent loss model (`zfit.fit._loss_circuits`)."""
    if "f_c" in keys:  # skin-effect winding: its resistance grows as sqrt(f) past f_c
        winding = ("R", f"R_dc = {pretty(p['R_dc'], 'ohm', 3)} x sqrt(1 + jf/{pretty(p['f_c'], 'Hz', 3)})")
        return ("parallel", [("series", [winding, el("L", "L", p["L"], "H")]), el("C", "C_p", p["C_p"], "F")])
    if "f_r" in keys:  # Debye core: L_inf in series with (L_d || R_d)
        l_d = p["L_i"] - p["L_inf"]
        relax = ("parallel", [el("L", "L_i - L_inf", l_d, "H"), el("R", "R_core", 2 * math.pi * p["f_r"] * l_d, "ohm")])
        series = ("series", [el("R", "R_dc", p["R_dc"], "ohm"), el("L", "L_inf", p["L_inf"], "H"), relax])
        return ("parallel", [series, el("C", "C_p", p["C_p"], "F")])
    if "D" in keys:  # constant loss tangent
        dielectric = ("C", f"C = {pretty(p['C'], 'F', 3)}, tan d = {p['D']:.3g}")
        return ("series", [el("R", "ESR_0", p["ESR_0"], "ohm"), el("L", "ESL", p["ESL"], "H"), dielectric])
    n = sum(1 for k in keys if k.startswith("R_") and k != "R_dc")
    sections = [("parallel", [el("R", f"R_{i}", p[f"R_{i}"], "ohm"), el("L", f"L_{i}", p[f"L_{i}"], "H"),
                              el("C", f"C_{i}", p[f"C_{i}"], "F")]) for i in range(1, n + 1)]
    return ("series", [el("R", "R_dc", p["R_dc"], "ohm"), *sections])


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
    circuit = None if result.refinement is None else result.refinement.circuit
    if circuit is not None and not is_lumped(circuit):
        return _loss_model_tree(circuit.keys, p, el)
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
        branches = result.realisation.branches
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
        "R": [estimate_text(sp.R) for sp in result.spot],
        "X": [estimate_text(sp.X) for sp in result.spot],
        eff_key: [estimate_text(getattr(sp, eff_key)) for sp in result.spot],
        qd_key: [dimensionless(getattr(sp, qd_key)) for sp in result.spot],
    }
    caption = f"Spot readouts, from the {result.spot[0].source} model"
    if len(result.spot) <= 3:
        rows = tuple((k, *v) for k, v in cols.items())
        return Table(("at", *freq), rows, numeric=tuple(range(1, len(freq) + 1)), caption=caption), True
    rows = tuple(zip(freq, *cols.values()))
    return Table(("f", *cols), rows, numeric=(1, 2, 3, 4), caption=caption), False


#: Plot sizes on a page (inches): drawn at the size shown (the page's column is
#: 186 mm = 7.3 in wide, a half column 3.6 in), so that text prints at its
#: size and each panel keeps the height its ticks need (tests/test_report.py
#: measures them).
SWEEP_PAGE_SIZES = {"sweep": (7.3, 3.7), "q": (3.6, 2.2), "esr_d": (3.6, 2.4)}
#: The same on a capture's page, which holds the capture's plots too.
CAPTURE_PAGE_SIZES = {"sweep": (7.3, 3.2)}


def identification_report(result, command=None, *, netlist_text: str | None = None, sizes: dict | None = None,
                          drawing: bool = True):
    """Return the `Report` of an identification.

    Parameters
    ----------
    result : Identification
        The result of `zfit.identify`.
    command : str or sequence of str, optional
        The command line that reproduced it.
    netlist_text : str, optional
        A SPICE netlist to print on the page.
    sizes : dict, optional
        Plot sizes in inches by name; `SWEEP_PAGE_SIZES` by default.
    drawing : bool
        Whether the page draws the circuit (a capture's page, which holds
        more plots, leaves it out: the table names each element).
    """
    from ._report import FigureBlock, Report, Section, Table, facts

    sw = result.sweep
    fit = result.fit
    src = Path(str(sw.source)).name or str(sw.source)
    plots = identification_plots(result, titles=False, sizes={**SWEEP_PAGE_SIZES, **(sizes or {})})
    sections = []

    params = result.parameters
    spot, compact = _spot_table(result)
    extra = (spot,) if compact else ()
    tree = schematic_tree(result) if drawing else None
    schematic = ()
    if tree is not None:
        from ._plot_schematic import plot_schematic

        # Drawn 1.95 in wide and shown at 48 % of a column (1.7 in): its labels print near the page's size.
        schematic = (FigureBlock(_svg(plot_schematic(tree, width_in=1.95), "schematic", "the circuit"),
                                 "", width_pct=48),)
    if params:
        rows = tuple(
            (k, estimate_text(e), relative_text(e), _ROLE.get(k, "")) for k, e in params.items()
        )
        # The drawing goes under the table, unless the spot readouts already make that block the longer.
        left = bool(schematic) and not extra
        sections.append(Section(
            "Equivalent circuit",
            tables=(Table(("", "value ± std. uncertainty", "rel.", ""), rows, numeric=(1, 2), nowrap=(3,),
                          caption=result.topology), *extra),
            figures=schematic if left else (),
        ))
        if left:
            schematic = ()
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

    sections.append(Section("Self-resonance and figures", facts=tuple(_merit_rows(result)),
                            tables=extra if not params else (), figures=schematic if params else ()))
    if result.warnings or fit.worse_than_rational:
        notes = list(result.warnings)
        if fit.worse_than_rational and not any("rational" in w for w in notes):
            notes.append("The circuit describes the full band worse than the rational model.")
        sections.append(Section("Warnings", notes=tuple(notes), css_class="warn"))
    sections.append(Section(
        "Impedance",
        figures=(FigureBlock(_svg(plots.pop("sweep"), "sweep", "impedance against frequency"),
                 ("Measurement with ±2σ band, equivalent circuit (solid), rational model (dashed); below: normalised "
                  "residual against the 1σ and 3σ noise levels; shaded: outside the circuit's band of validity."
                  if params else "Measurement with ±2σ band and the rational model (dashed); below: normalised "
                  "residual against the 1σ and 3σ noise levels.")),),
        css_class="full",
    ))
    for key, plot in plots.items():
        cap = ("Q = |X|/R below the SRF: measured (dots; line: rational model), circuit, and the textbook ωL/R_s, "
               "which ignores C_p; band: ±2σ of one measured point." if key == "q" else
               "ESR (Re Z) and D = tan δ = R/|X|, measured and circuit; band: ±2σ of one measured point; "
               "D is not shown above the SRF.")
        sections.append(Section(
            "Quality factor" if key == "q" else "Losses",
            figures=(FigureBlock(_svg(plot, key, cap), cap),),
        ))
    chosen = [c for c in result.candidates if c.chosen]
    others = sorted((c for c in result.candidates if not c.chosen), key=lambda c: c.bic)
    cand = (f"{fit.criterion}; next: {others[0].topology} ({fit.criterion} +{others[0].bic - chosen[0].bic:.0f})"
            if chosen and others else "")
    sections.append(Section("Measurement and fit", facts=facts(
        ("file", src),
        ("read as", sw.data_format),
        ("connection", sw.connection + (f", reference {pretty(sw.reference_ohm, 'ohm')}" if sw.reference_ohm else "")),
        ("points", f"{sw.n_points}, {band_text(sw.band_hz)}"),
        ("noise model", sw.noise_model),
        ("notes", "; ".join(sw.notes)),
        ("DC resistance", estimate_text(result.rdc) if result.rdc is not None else None),
        ("band of validity", band_text(fit.valid_band_hz)),
        ("fitted over", band_text(fit.fitted_band_hz) if tuple(fit.fitted_band_hz) != tuple(fit.valid_band_hz) else None),
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
            main = f"{key} = {estimate_text(params[key])}"
    title = f"{headline}: {main}" if main else f"{headline}: {result.topology}"
    verdict_bits = []
    if result.srf is not None and result.srf.where == "in-band":
        verdict_bits.append(f"self-resonant at {pretty_std(result.srf.value_hz, result.srf.std_hz, 'Hz')}")
    verdict_bits.append(f"the {'circuit' if params else 'model'} describes the part within the noise from {band_text(fit.valid_band_hz)}")
    verdict = "; ".join(verdict_bits)
    verdict = verdict[:1].upper() + verdict[1:] + "."
    return Report(
        title=title,
        subtitle=f"{src} · {sw.connection} · {sw.n_points} points, {band_text(sw.band_hz)}",
        verdict=verdict,
        sections=tuple(sections),
        command=_command_text(command),
    )


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
        rows.append(("overshoot", percent_std(result.overshoot_pct, std)))
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
    rows.append(("usable band", band_text((lo, hi))))
    rows.append(("response", f"{result.response.method}, {result.response.n_averages} averages"))
    for w in result.warnings:
        rows.append(("warning", w))
    return rows


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

    d = step_page_data(result)
    ident = d.get("identification")
    # Drawn at the size shown; with an impedance the page holds it too, so the capture's plots are shorter.
    h_time, h_bode = (2.1, 2.1) if ident is not None else (2.9, 3.0)
    plots = step_plots(result, titles=False, impedance=False, sizes={"time": (3.6, h_time), "bode": (3.6, h_bode)})
    capture_sections = []
    for key, title, cap in (
        ("time", "Time record", "The record: state levels (dashed), edge times (ticks), fitted response (dash-dot)."),
        ("bode", "Frequency response", "H = V_out/V_in from all edges (H1) with ±2σ band; shaded: usable band; "
                                       "coherence below."),
    ):
        if key in plots:
            capture_sections.append(Section(title, figures=(FigureBlock(_svg(plots.pop(key), key, cap), cap),)))
    if ident is None:
        sections = [Section("Time-domain figures (IEEE Std 181)", facts=tuple(_step_facts(result)))] + capture_sections
    else:
        # One page: the circuit, the impedance, the capture's two plots, and one block of
        # facts (the time-domain figures and the fit) in two columns.  The Q (or ESR/D)
        # plot is the --plot file <stem>-q (-esr-d); its peak is among the figures.
        sub = identification_report(ident, None, netlist_text=netlist_text, sizes=CAPTURE_PAGE_SIZES,
                                    drawing=False).sections
        by_title = {s.title: s for s in sub}
        head = [s for s in sub if s.title in ("Equivalent circuit", "Rational model", "Self-resonance and figures",
                                               "Warnings", "Impedance")]
        fit = by_title.get("Measurement and fit")
        keep = ("noise model", "band of validity", "fitted over", "residual", "rational model", "model choice")
        fit_facts = tuple((k, v) for k, v in (fit.facts if fit is not None else ()) if k in keep)
        facts_section = Section("Time-domain figures (IEEE Std 181) and the fit",
                                facts=tuple(_step_facts(result)) + fit_facts, css_class="full twocol")
        tail = [s for s in sub if s.title in ("Spot readouts", "SPICE subcircuit")]
        sections = head + capture_sections + [facts_section] + tail
    src = Path(str(d["source"])).name
    title = "Capture: " + (f"{ident.model}, " + next((f"{k} = {estimate_text(e)}" for k, e in ident.parameters.items()), "")
                           if ident is not None else src)
    return Report(title=title, subtitle=d["subtitle"], verdict=d["verdict"], sections=tuple(sections),
                  command=_command_text(command))

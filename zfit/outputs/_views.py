"""Views: a result as text and tables, in the notation of a page or of a terminal.

What the command line prints (`identification_summary`, `step_summary`,
`info_lines`), the ``zfit.info/1`` object of a sweep (`info_dict`), the
frequency response of a step as CSV (`response_csv`), and the notation the
report pages use (`pretty`, `pretty_std`, `dimensionless`, `percent_std`).
Nothing here computes a figure: every number comes from the result.
"""

from __future__ import annotations

import math

import numpy as np

from ..fit._models import is_lumped
from .._units import format_band, format_dimensionless, format_eng, format_percent, format_value_std

__all__ = [
    "pretty",
    "pretty_std",
    "dimensionless",
    "percent_std",
    "estimate_text",
    "relative_text",
    "band_text",
    "identification_summary",
    "disagree",
    "srf_model_note",
    "figure_model_notes",
    "step_summary",
    "cross_check_note",
    "INFO_SCHEMA",
    "info_dict",
    "info_lines",
    "response_csv",
]


def pretty(value, unit: str = "", digits: int = 4) -> str:
    """Return a value in zfit's notation (`zfit._units.format_eng`): ``4.7 µH``, ``25 mΩ``; ``n/a`` for None or NaN.

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
    return format_eng(value, unit, digits)


def pretty_std(value, std, unit: str = "") -> str:
    """Return ``value ± std unit`` (`zfit._units.format_value_std`), or the value and "(no uncertainty)".

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
    return format_value_std(value, std, unit)


def estimate_text(e) -> str:
    """Return an `Estimate` as ``value ± std unit`` for a page."""
    return pretty_std(e.value, e.std, e.unit)


def relative_text(e) -> str:
    """Return the relative uncertainty of an `Estimate` in % or ppm."""
    if e.std is None or not e.value:
        return "n/a"
    r = abs(e.std / e.value)
    return f"{100 * r:.2g} %" if r >= 1e-4 else f"{1e6 * r:.2g} ppm"


def band_text(b) -> str:
    """Return a band ``(lo, hi)`` in Hz as ``lo to hi``."""
    if b is None:
        return "n/a"
    return format_band(b[0], b[1])


def dimensionless(e) -> str:
    """Q or D with its uncertainty, without SI prefixes (`zfit._units.format_dimensionless`)."""
    if e is None or e.value is None:
        return "n/a"
    return format_dimensionless(e.value, e.std)


def percent_std(v, u) -> str:
    """A percentage with its uncertainty (`zfit._units.format_percent`); ``n/a`` for None."""
    return format_percent(v, u)


# ------------------------------------------------------------ terminal ---


def identification_summary(result) -> list[str]:
    """Return the readable table of an identification, line by line.

    Parameters
    ----------
    result : Identification
        What `zfit.identify` returned.
    """
    fit = result.fit
    doc = result.to_dict()
    out = [
        f"part:       {result.sweep.source}  ({result.sweep.connection}, {result.sweep.n_points} points, "
        f"{format_eng(fit.f_min_hz, 'Hz')} to {format_eng(fit.f_max_hz, 'Hz')})",
    ]
    out.extend(_measurement_lines(doc))
    out.append(f"model:      {result.model}: {result.topology}")
    if len(result.parameters):
        out.append("parameters (value ± standard uncertainty):")
        for key, est in result.parameters.items():
            text = est.unresolved_text() if hasattr(est, "unresolved_text") else None
            if text is not None:
                # A number that is only noise is not printed.
                out.append(f"  {key:<7}{text}")
                continue
            rel = ""
            if est.std is not None and est.value:
                rel = f"  ({100 * est.std / abs(est.value):.2g} %)"
            out.append(f"  {key:<7}{format_value_std(est.value, est.std, est.unit)}{rel}")
    if result.rdc is not None:
        out.append(f"  (DC resistance given: {format_value_std(result.rdc.value, result.rdc.std, 'ohm')})")
    srf = result.srf
    if srf.where == "none":
        out.append("SRF:        none (the reactance does not cross zero)")
    else:
        val = format_value_std(srf.value_hz, srf.std_hz, "Hz")
        if srf.where == "in-band":
            out.append(f"SRF:        {val}  (in band{', where Im Z of the data changes sign' if srf.source == 'measurement' else ''})")
        elif srf.where == "above-band":
            out.append(f"SRF:        above {format_eng(srf.bound_hz, 'Hz')} (top of the band); the {srf.source} puts it at {val}")
        else:
            out.append(f"SRF:        below {format_eng(srf.bound_hz, 'Hz')} (bottom of the band); the {srf.source} puts it at {val}")
        note = srf_model_note(result)
        if note is not None:
            out.append(f"            {note}")
    merit = result.figures
    why = figure_model_notes(result)
    if merit.z_at_srf is not None:
        z = merit.z_at_srf
        where = f" at {format_eng(z.f_hz, 'Hz')}  [{z.definition}]" if z.source == "measurement" else ""
        out.append(f"|Z| at SRF: {format_value_std(z.value, z.std, 'ohm')}{where}")
    if "z_at_srf" in why:
        out.append(f"            {why['z_at_srf']}")
    if merit.q_peak is not None:
        out.append(
            f"Q peak:     {format_value_std(merit.q_peak.value, merit.q_peak.std)} at {format_eng(merit.q_peak.f_hz, 'Hz')}"
            f"  [{merit.q_peak.definition}]"
        )
    if "q_peak" in why:
        out.append(f"            {why['q_peak']}")
    if merit.esr_min is not None:
        out.append(f"ESR min:    {format_value_std(merit.esr_min.value, merit.esr_min.std, 'ohm')} at {format_eng(merit.esr_min.f_hz, 'Hz')}")
    if merit.d_at_f_min is not None:
        d = merit.d_at_f_min
        out.append(f"D:          {format_value_std(d.value, d.std)} at {format_eng(d.f_hz, 'Hz')}  [{d.definition}]")
    if "d_at_f_min" in why:
        out.append(f"            {why['d_at_f_min']}")
    band = fit.valid_band_hz
    whole = band[0] == fit.f_min_hz and band[1] == fit.f_max_hz
    out.append(
        f"fit:        normalised RMS residual {fit.rms_normalized_residual:.3g} over {fit.points} points "
        f"(1 = noise level; residuals on {fit.domain})"
    )
    if fit.rational_rms_normalized_residual is not None:
        out.append(f"            rational model: {fit.rational_poles} poles, residual {fit.rational_rms_normalized_residual:.3g}")
    adq = fit.adequacy
    if result.model != "rational":
        if whole and (adq is None or adq.whole_band):
            out.append("            the circuit holds over the whole band")
        elif not whole:
            out.append(f"            valid band {format_eng(band[0], 'Hz')} to {format_eng(band[1], 'Hz')}")
        if adq is not None and not adq.whole_band:
            where = ("nowhere" if not math.isfinite(adq.holds_band_hz[0]) else
                     f"{format_eng(adq.holds_band_hz[0], 'Hz')} to {format_eng(adq.holds_band_hz[1], 'Hz')}"
                     f" ({adq.holds_decades:.2g} of {adq.band_decades:.2g} decades)")
            out.append(f"            within the noise (local residual <= 1.5) {where}")
        if adq is not None and adq.model_error_scale > 1.0:
            out.append(f"            uncertainties include the model error (x {adq.model_error_scale:.3g})")
    if result.spot:
        out.append("spot readouts (measurement first, then the " + ", ".join(sorted({s.source for s in result.spot}))
                   + " model):")
        out.append(f"  {'f':>10}  {'from':<11}  {'R':>22}  {'X':>22}  {'L_eff / C_eff':>24}  {'Q':>16}  {'D':>16}")
        for sp, entry in zip(result.spot, doc["spot"]):
            m = entry.get("measurement")
            if m is not None:
                eff = m.get("L_eff") or m.get("C_eff")
                out.append(
                    f"  {format_eng(sp.f_hz, 'Hz'):>10}  {'measurement':<11}  {_measured_text(m['R']):>22}  "
                    f"{_measured_text(m['X']):>22}  {_measured_text(eff):>24}  {_measured_text(m['Q']):>16}  "
                    f"{_measured_text(m['D']):>16}"
                )
            eff = sp.L_eff if sp.X.value >= 0 else sp.C_eff
            out.append(
                f"  {format_eng(sp.f_hz, 'Hz'):>10}  {sp.source:<11}  {format_value_std(sp.R.value, sp.R.std, 'ohm'):>22}  "
                f"{format_value_std(sp.X.value, sp.X.std, 'ohm'):>22}  {format_value_std(eff.value, eff.std, eff.unit):>24}  "
                f"{format_value_std(sp.Q.value, sp.Q.std):>16}  {format_value_std(sp.D.value, sp.D.std):>16}"
                + ("" if sp.in_band else "  (outside the band)")
            )
    return out


#: Two estimates disagree when they differ by more than this many standard
#: uncertainties of their difference (E_n > 1 with expanded uncertainties,
#: k = 2; ISO 13528:2015, 9.7).
DISAGREEMENT_K = 2.0


def disagree(a: float | None, ua: float | None, b: float | None, ub: float | None) -> bool:
    """Whether two estimates differ by more than `DISAGREEMENT_K` standard uncertainties of their difference."""
    if a is None or b is None or not (math.isfinite(a) and math.isfinite(b)):
        return False
    u = math.hypot(ua or 0.0, ub or 0.0)
    return abs(a - b) > DISAGREEMENT_K * u if u > 0 else a != b


def srf_model_note(result) -> str | None:
    """One line on the model's resonance when the SRF reported is the measured one, or None."""
    srf = result.srf
    if srf.source != "measurement" or srf.model_value_hz is None:
        return None
    model = f"the {srf.model_source} model's resonance, {format_value_std(srf.model_value_hz, srf.model_std_hz, 'Hz')},"
    band = result.fit.valid_band_hz
    if srf.model_source == "circuit" and not (band[0] <= srf.model_value_hz <= band[1]):
        return f"{model} lies beyond the band where the circuit holds ({format_band(*band)})"
    if srf.where == "in-band":
        return f"{model} disagrees with the sign change of Im Z in the data"
    return None


def figure_model_notes(result) -> dict[str, str]:
    """One line for each model figure that disagrees with the measured one it stands beside, saying why.

    Keyed by the measured figure (``z_at_srf``, ``q_peak``, ``d_at_f_min``).
    A datasheet's Q is the measured ``|X|/R``; the circuit's ``omega L /
    R_s`` counts the winding resistance alone, so where the circuit has
    further losses (a core-loss ``R_p``) or a ``C_p`` near the SRF it is
    larger.  ``|Z|`` at the SRF is the measured point nearest it; a model's
    value at the SRF itself rests on the losses the model puts there.
    """
    m = result.figures
    others = [k for k in result.parameters if k not in ("L", "R_s", "C", "ESR")]
    out = {}
    z, zm = m.z_at_srf, m.z_model_at_srf
    if z is not None and zm is not None and disagree(z.value, z.std, zm.value, zm.std):
        out["z_at_srf"] = (f"{format_value_std(zm.value, zm.std, 'ohm')} from the {zm.source} model at the SRF "
                           "itself, where no point was measured")
    q, qm = m.q_peak, m.q_model_at_q_peak
    if q is not None and qm is not None and disagree(q.value, q.std, qm.value, qm.std):
        circuit = None if result.refinement is None else result.refinement.circuit
        if circuit is not None and not is_lumped(circuit):
            out["q_peak"] = (f"the model's winding alone has Q {format_value_std(qm.value, qm.std)} there "
                             "(without its parallel C_p, which the measured |X|/R includes)")
        else:
            leaves = f", without {' and '.join(others)}" if others else ""
            out["q_peak"] = (f"omega L / R_s of the circuit there is {format_value_std(qm.value, qm.std)} "
                             f"(R_s alone{leaves})")
    d, dm = m.d_at_f_min, m.d_model_at_f_min
    if d is not None and dm is not None and disagree(d.value, d.std, dm.value, dm.std):
        out["d_at_f_min"] = (f"the circuit's D there is {format_value_std(dm.value, dm.std)} ({dm.definition}): "
                             "the measured R/|X| includes every loss of the part at that frequency")
    return out


def _measured_text(v) -> str:
    """A measured value of the JSON as ``value ± std unit``, or its 'below resolution, < X' text."""
    if v is None:
        return "n/a"
    if v["text"] is not None:
        return v["text"]
    return format_value_std(v["value"], v["std"], v["unit"])


#: Labels of the measurement figures, in the order printed.
_MEASURED_LABELS = (
    ("z_at_srf", "|Z| at SRF"), ("r_at_f_min", "R"), ("q_peak", "Q peak"),
    ("esr_at_f_min", "ESR"), ("d_at_f_min", "D"), ("esr_min", "ESR min"),
)


def _measurement_lines(d: dict) -> list[str]:
    """The lines of what the measurement itself says (the JSON's ``low_frequency``, ``srf.measured``, ``figures.measurement``)."""
    low = d.get("low_frequency")
    if low is None:
        return []
    out = ["measurement (smoothed data over the whole file, before any model):"]
    if low["resolved"]:
        out.append(f"  {format_eng(low['f_hz'], 'Hz'):>10}  {low['name']}:".ljust(26)
                   + f"{format_value_std(low['value'], low['std'], low['unit'])}  ({low['family']}: sign of Im Z)")
    else:
        out.append("  low-frequency L or C:".ljust(26) + "not resolved (Im Z within its noise at the low end)")
    m = d["srf"].get("measured")
    if m is not None:
        if m["in_band"]:
            out.append("  SRF:".ljust(26) + f"{format_value_std(m['value_hz'], m['std_hz'], 'Hz')}  "
                       f"({m['kind']}, where Im Z changes sign)")
        else:
            out.append("  SRF:".ljust(26) + f"above {format_eng(m['lower_bound_hz'], 'Hz')} (no sign change of Im Z in band)")
    figs = d["figures"].get("measurement") or {}
    for key, label in _MEASURED_LABELS:
        e = figs.get(key)
        if e is not None:
            out.append(f"  {format_eng(e['f_hz'], 'Hz'):>10}  {label}:".ljust(26) + _measured_text(e))
    return out


def step_summary(result) -> list[str]:
    """Return the readable table of a step result, in engineering notation.

    Parameters
    ----------
    result : StepResult
        What `zfit.analyse_capture` returned.
    """
    def vs(v, s, unit):
        return "n/a" if v is None else format_value_std(v, s, unit)

    chans = result.output_name if result.input_name is None else f"{result.input_name} -> {result.output_name}"
    out = [
        f"capture:      {result.source}  ({chans}; {result.n_samples} samples at {format_eng(result.sample_rate_hz, 'Sa/s')})",
        f"edges:        {result.edges} ({result.edges_rising} rising, {result.edges_falling} falling)",
        f"levels:       {format_eng(result.levels_v[0], 'V')} / {format_eng(result.levels_v[1], 'V')} (output)"
        # A histogram mode has no simple standard uncertainty; the samples' spread says how well it is known.
        + f" [settled samples spread {format_eng(result.levels_noise_v[0], 'V', digits=2)} / "
          f"{format_eng(result.levels_noise_v[1], 'V', digits=2)} rms]"
        + ("" if result.input_levels_v is None else
           f";  {format_eng(result.input_levels_v[0], 'V')} / {format_eng(result.input_levels_v[1], 'V')} (input)"),
        f"10-90 %:      {vs(result.transition_10_90_s, result.transition_10_90_std_s, 's')}",
        f"overshoot:    {percent_std(result.overshoot_pct, result.overshoot_std_pct)}",
        f"time const.:  {vs(result.time_constant_s, result.time_constant_std_s, 's')}"
        + (f"  [{result.time_constant_method}]" if result.time_constant_s is not None else ""),
        f"  cross-check {vs(result.midpoint_time_constant_s, result.midpoint_time_constant_std_s, 's')}  [low-to-midpoint time / ln 2]",
    ]
    note = cross_check_note(result)
    if note is not None:
        out.append(f"              {note}")
    r = result.ringing
    if r is None:
        out.append("ringing:      none found")
    else:
        out.append(f"ringing:      {format_value_std(r.frequency_hz, r.frequency_std_hz, 'Hz')}  "
                   f"(natural {format_value_std(r.natural_hz, r.natural_std_hz, 'Hz')}, damping ratio {r.damping_ratio:.3g})")
    c = result.stray_capacitance
    if c is not None:
        out.append(f"stray C:      {format_value_std(c.value_f, c.std_f, 'F')}  [{c.method}]")
        if c.inductance_h is not None:
            out.append(f"  and L       {format_value_std(c.inductance_h, c.inductance_std_h, 'H')}  "
                       f"(with the added C it rings at {format_eng(c.added_ringing_hz, 'Hz')})")
    lo, hi = result.usable_band_hz
    resp = result.response
    out.append(f"usable band:  {format_eng(lo, 'Hz')} to {format_eng(hi, 'Hz')}  "
               f"({resp.n_averages} segment(s) averaged, bins of {format_eng(1.0 / resp.segment_s, 'Hz')})")
    if result.identification is not None:
        out.append(f"impedance with the {format_eng(result.shunt_ohm, 'ohm')} sense resistor:")
        out.extend("  " + line for line in identification_summary(result.identification))
    # The notes say why a figure is n/a (no settled states, no slow edge to fit).
    out.extend(f"note:         {n}" for n in result.notes)
    return out


def cross_check_note(result) -> str | None:
    """One line when the time constant and its cross-check differ beyond their uncertainties, or None.

    The cross-check's uncertainty is its noise alone: the low-to-midpoint
    time / ln 2 of an ideal single-pole record is off by about 1 %, often
    many times that (tests/test_step.py, scipy.signal.lsim references), so
    such a difference is reported, not warned about; beyond 10 % the
    analysis warns that the response is not one time constant.
    """
    tau, u, mid, um = (result.time_constant_s, result.time_constant_std_s,
                       result.midpoint_time_constant_s, result.midpoint_time_constant_std_s)
    if not disagree(tau, u, mid, um):
        return None
    k = abs(mid - tau) / math.hypot(u or 0.0, um or 0.0) if (u or um) else math.inf
    return (f"they differ by {100 * abs(mid - tau) / tau:.2g} % ({k:.2g} standard uncertainties of the difference): "
            "the cross-check's uncertainty is its noise alone, not the bias of the midpoint method (about 1 % on an "
            "ideal single-pole record); beyond 10 % the response is not one time constant")


def response_csv(result) -> str:
    """Return the frequency response of a step result as CSV text.

    Columns: ``f_hz``, ``mag_db``, ``phase_deg``, ``mag_db_std``,
    ``phase_std_deg`` (standard uncertainties), ``coherence`` and ``usable``
    (1 inside the usable band).

    Parameters
    ----------
    result : StepResult
        What `zfit.analyse_capture` returned.
    """
    r = result.response
    cols = np.column_stack([r.f_hz, r.magnitude_db(), r.phase_deg(), r.magnitude_db_std(), r.phase_std_deg(),
                            r.coherence, r.usable.astype(float)])
    lines = [
        f"# zfit step response of {result.source}: H = V_out/V_in ({r.method})",
        f"# usable band {format_eng(r.band_hz[0], 'Hz', 6)} to {format_eng(r.band_hz[1], 'Hz', 6)}; "
        "uncertainties are standard (k=1)",
        "f_hz,mag_db,phase_deg,mag_db_std,phase_std_deg,coherence,usable",
    ]
    for row in cols:
        lines.append(",".join(
            "inf" if not np.isfinite(v) else f"{v:.9g}" for v in row[:-1]) + f",{int(row[-1])}")
    return "\n".join(lines) + "\n"


#: Version tag of the ``--json`` output.
INFO_SCHEMA = "zfit.info/1"


def info_dict(sweep) -> dict:
    """Return the ``zfit.info/1`` JSON object describing `sweep`.

    Keys: ``schema``, ``zfit_version``, ``source``, ``data_format``, ``connection``,
    ``reference_ohm`` (null for impedance data), ``points``, ``f_min_hz``,
    ``f_max_hz``, ``z_min_ohm``, ``z_min_at_hz``, ``z_max_ohm``,
    ``z_max_at_hz``, ``noise_model`` (text), ``noise`` (``{"on": "S"|"Z",
    "rel": float, "floor": float, "source": "given"|"estimated from the
    data"|"default", "f_min_hz", "f_max_hz": the band of the estimate,
    "points": the points it used}`` or null), ``sigma_rel_median``,
    ``sigma_rel_max``, ``active_points`` (points flagged as looking active),
    ``notes`` (list of str), ``warnings`` (list of str).

    Parameters
    ----------
    sweep : Sweep
        What `zfit.read_sweep` returned.
    """
    from ..data._noise import noise_block
    from ..io._sweep_file import conditioning_note

    mag = np.abs(sweep.z_ohm)
    with np.errstate(divide="ignore", invalid="ignore"):
        rel = sweep.sigma_ohm / mag
    i_min, i_max = int(np.argmin(mag)), int(np.argmax(mag))
    warning = conditioning_note(sweep)
    noise = noise_block(sweep)
    from .._version import __version__

    return {
        "schema": INFO_SCHEMA,
        "zfit_version": __version__,
        "source": sweep.source,
        "data_format": sweep.data_format,
        "connection": sweep.connection,
        "reference_ohm": sweep.reference_ohm,
        "points": sweep.n_points,
        "f_min_hz": sweep.band_hz[0],
        "f_max_hz": sweep.band_hz[1],
        "z_min_ohm": float(mag[i_min]),
        "z_min_at_hz": float(sweep.f_hz[i_min]),
        "z_max_ohm": float(mag[i_max]),
        "z_max_at_hz": float(sweep.f_hz[i_max]),
        "noise_model": sweep.noise_model,
        "noise": noise,
        "sigma_rel_median": float(np.median(rel)),
        "sigma_rel_max": float(np.max(rel)),
        "sigma_rel_max_at_hz": float(sweep.f_hz[int(np.argmax(rel))]),
        "active_points": int(np.count_nonzero(sweep.active)),
        "notes": list(sweep.notes),
        "warnings": [] if warning is None else [warning],
    }


def info_lines(d: dict) -> list[str]:
    """Return the human-readable lines of ``zfit info`` for an `info_dict`."""
    ref = "n/a (impedance data)" if d["reference_ohm"] is None else format_eng(d["reference_ohm"], "ohm")
    rows = [
        ("file", d["source"]),
        ("format", d["data_format"]),
        ("connection", d["connection"]),
        ("reference", ref),
        ("points", str(d["points"])),
        ("band", f"{format_eng(d['f_min_hz'], 'Hz')} .. {format_eng(d['f_max_hz'], 'Hz')}"),
        ("|Z| range", f"{format_eng(d['z_min_ohm'], 'ohm')} at {format_eng(d['z_min_at_hz'], 'Hz')}"
                      f" .. {format_eng(d['z_max_ohm'], 'ohm')} at {format_eng(d['z_max_at_hz'], 'Hz')}"),
        ("noise model", d["noise_model"]),
        *([("noise", f"{d['noise']['source']}, over {format_eng(d['noise']['f_min_hz'], 'Hz')} .. "
                     f"{format_eng(d['noise']['f_max_hz'], 'Hz')}")] if d["noise"] and "source" in d["noise"] else []),
        ("sigma/|Z|", f"median {100 * d['sigma_rel_median']:.3g} %, worst {100 * d['sigma_rel_max']:.3g} % "
                      f"at {format_eng(d['sigma_rel_max_at_hz'], 'Hz')}"),
    ]
    rows += [("note", n) for n in d["notes"]]
    width = max(len(k) for k, _ in rows)
    return [f"{k:<{width}}  {v}" for k, v in rows]

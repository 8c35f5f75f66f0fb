"""Views of a fitted frequency response: the terminal summary and the predicted step response as CSV.

Nothing here computes a figure: every number comes from the `ResponseResult`.
"""

from __future__ import annotations

import math

import numpy as np

from .._units import format_eng, format_value_std
from ._views import dimensionless, identification_summary, percent_std

__all__ = ["response_summary", "step_response_csv"]


def _vs(e) -> str:
    if e is None:
        return "n/a"
    return format_value_std(e.value, e.std, e.unit if e.unit in ("Hz", "s") else "")


def _factor_line(x) -> str:
    if x.kind == "origin":
        return f"at the origin (s = 0){'' if x.order == 1 else f', {x.order} of them'}"
    if x.kind == "real":
        return (f"real, s = {format_eng(x.root.real, '', 5)} rad/s: corner {_vs(x.corner)}, "
                f"tau = 1/omega = {_vs(x.tau)}")
    return (f"complex pair, s = {format_eng(x.root.real, '', 5)} ± j{format_eng(abs(x.root.imag), '', 5)} rad/s: "
            f"f_n {_vs(x.corner)}, omega_n {format_value_std(x.omega.value, x.omega.std, '')} rad/s, "
            f"zeta {dimensionless(x.zeta)}, Q {dimensionless(x.q)}")


def response_summary(result) -> list[str]:
    """Return the readable table of a `ResponseResult`, line by line."""
    p, m, fig = result.points, result.model, result.figures
    out = [
        f"response:   {p.source}  ({p.n_points} frequencies, {int(np.sum(p.readings))} readings, "
        f"{format_eng(p.f_hz[0], 'Hz')} to {format_eng(p.f_hz[-1], 'Hz')})",
        f"uncertainty per point: {p.uncertainty_source}",
        f"model:      {m.structure.describe()}  (chosen by BIC; {len(result.candidates)} structures tried)",
        f"fit:        normalised RMS residual {m.rms_normalized_residual:.3g} over {p.n_points} points "
        "(1 = the readings' uncertainty)",
    ]
    lo, hi = fig.valid_band_hz
    if math.isfinite(lo):
        out.append(f"            valid band {format_eng(lo, 'Hz')} to {format_eng(hi, 'Hz')}")
    if fig.dc_gain is not None:
        db = 20.0 * math.log10(abs(fig.dc_gain.value)) if fig.dc_gain.value else float("-inf")
        out.append(f"DC gain:    {dimensionless(fig.dc_gain)}  ({db:.4g} dB)")
    if fig.hf_gain is not None:
        out.append(f"HF gain:    {dimensionless(fig.hf_gain)}")
    for c in fig.cutoffs:
        out.append(f"-3 dB:      {_vs(c.frequency)}  ({c.edge} edge, re the {fig.reference}"
                   + ("" if c.in_band else "; outside the band, extrapolated") + ")")
    if not fig.cutoffs:
        out.append(f"-3 dB:      none within three decades of the band (re the {fig.reference})")
    for x in fig.poles:
        out.append(f"pole:       {_factor_line(x)}")
    for x in fig.zeros:
        out.append(f"zero:       {_factor_line(x)}")
    st = fig.step
    over = st.overshoot_pct
    out.append(f"step:       settles to {st.final_value:.5g}; 10-90 % {_vs(st.rise_10_90)}; overshoot "
               + ("n/a" if over is None else percent_std(over.value, over.std)))
    if result.identification is not None:
        out.append(f"impedance through the divider ({format_eng(result.resistor_ohm, 'ohm')}, output across the "
                   f"{result.output_across}):")
        out.extend("  " + line for line in identification_summary(result.identification))
    out.extend(f"note:       {n}" for n in result.notes)
    return out


def step_response_csv(result) -> str:
    """Return the model's predicted step response as CSV: ``t_s``, ``v_out``, ``v_out_std`` per volt of step."""
    st = result.figures.step
    lines = [
        f"# zfit response: step response predicted by the model of {result.source} "
        f"({result.model.structure.describe()})",
        "# V_out per volt of a step of V_in at t = 0; uncertainties are standard (k=1)",
        "t_s,v_out,v_out_std",
    ]
    lines += [f"{t:.9g},{v:.9g},{s:.9g}" for t, v, s in zip(st.t_s, st.v, st.v_std)]
    return "\n".join(lines) + "\n"

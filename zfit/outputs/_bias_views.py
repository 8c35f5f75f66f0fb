"""A bias set in words: the table of L (or C), R_s (or ESR) and SRF against bias, and its figures."""

from __future__ import annotations

from .._units import format_eng, format_value_std

__all__ = ["bias_text"]


def _srf(srf, where) -> str:
    if srf[0] is not None:
        return format_value_std(srf[0], srf[1], "Hz")
    if srf[2] is not None:
        return f"> {format_eng(srf[2], 'Hz')}"
    return where or "-"


def bias_text(result) -> str:
    """Return the set as text lines: one row per sweep, the curve, the figures, the verdict.

    Parameters
    ----------
    result : BiasSet
        The set (`zfit.lot._bias_set.bias_set`).
    """
    v, loss, unit = result.value_key, result.loss_key, result.unit
    vu = "H" if result.family == "inductor" else "F"
    head = (f"{'bias':>10}  {v:>22}  {loss:>22}  {'SRF':>22}  file")
    lines = [head]
    for r in result.rows:
        lines.append(f"{format_eng(r.bias, unit):>10}  {format_value_std(r.value[0], r.value[1], vu):>22}  "
                     f"{format_value_std(r.loss[0], r.loss[1], 'ohm'):>22}  {_srf(r.srf, r.srf_where):>22}  {r.name}")
    lines.append(f"zero-bias {v} = {format_value_std(result.reference[0], result.reference[1], vu)} "
                 f"({result.reference_source})")
    c = result.curve
    if c is not None:
        s = c.std
        lines.append(f"fitted {v}(bias) = {v}0 / (1 + (bias/x_s)^n): {v}0 = {format_value_std(c.y0, s[0], vu)}, "
                     f"x_s = {format_value_std(c.x_s, s[1], unit)}, n = {c.n:.3g} ± {s[2]:.2g}, "
                     f"chi2/dof = {c.chi2:.3g}/{c.dof}")
    for f in result.figures:
        p = f.point
        pct = f"{round(result.fall_of(f.key) * 100)} %"
        if p.value is not None:
            shown = "= " + format_value_std(p.value, p.std, unit)
        elif p.bound is not None:
            shown = f"> {format_eng(p.bound, unit)} (not reached at the largest bias)"
        else:
            shown = "not resolved (fallen already at the lowest bias)"
        where = "curve" if p.value is not None else "curve, extrapolated"
        check = "" if f.curve_value is None else f"; {where} {format_value_std(f.curve_value, f.curve_std, unit)}"
        lines.append(f"{f.key} ({v} down {pct}) {shown}{check}")
    if result.decision is not None:
        lines.append(f"verdict: {result.decision.verdict}")
        lines += [f"  {d.verdict}: {d.reason}" for d in result.decision.decisions]
    return "\n".join(lines)

"""Views of a core's permeability and a bead's figures: the terminal's lines and the bead's netlist.

Nothing here computes a figure: every number comes from the `CoreMaterial`
or the `BeadFigures` (zfit.identification).
"""

from __future__ import annotations

import math

from .._units import format_eng, format_value_std
from ._netlist import _subckt_text

__all__ = ["core_summary", "bead_summary", "bead_netlist"]


def _num(value, std, unit="") -> str:
    if unit:
        return format_value_std(value, std, unit)
    if not math.isfinite(value):
        return "n/a"
    digits = 2 if std and math.isfinite(std) and std > 0 else 4
    sd = f" ± {std:.{digits}g}" if std and math.isfinite(std) else ""
    return f"{value:.4g}{sd}"


def _located(loc, what: str) -> str:
    if loc.found:
        return format_value_std(loc.value_hz, loc.std_hz, "Hz")
    return f"not in band ({what} lies {loc.where.replace('-band', ' the band')})"


def core_summary(material) -> list[str]:
    """Return the readable lines of a core's figures.

    Parameters
    ----------
    material : CoreMaterial
        What `core_material` returned.
    """
    c = material.constant
    m = material
    out = [f"part:        {m.source}"]
    geo = f"C1 = {c.c1_per_m:.4g} 1/m ± {100 * c.rel_std:.2g} %"
    if c.le_m is not None:
        geo += f", l_e = {c.le_m * 1e3:.4g} mm, A_e = {c.ae_m2 * 1e6:.4g} mm^2"
    out.append(f"core:        {c.kind}, {c.turns} turns, {geo}, L_0 = {format_eng(c.l0_h, 'H')}")
    out.append(f"winding:     R_dc = {format_value_std(m.r_dc_ohm, m.r_dc_std_ohm, 'ohm')} ({m.r_dc_source}), "
               + (f"C_p = {format_value_std(m.c_p_f, m.c_p_std_f, 'F')} removed" if m.c_p_removed
                  else "C_p not removed (not resolved)"))
    out.append(f"mu band:     {format_eng(m.band_hz[0], 'Hz')} to {format_eng(m.band_hz[1], 'Hz')}")
    out.append(f"mu_i:        {_num(m.mu_i, m.mu_i_std)}   (mu' at {format_eng(m.mu_low_f_hz, 'Hz')}: "
               f"{_num(m.mu_low, m.mu_low_std)})")
    out.append(f"mu'' peak:   {_located(m.mu_imag_peak, 'the peak')}"
               + (f"  (mu'' = {m.mu_imag_peak_value:.4g})" if m.mu_imag_peak.found else ""))
    out.append(f"mu' = mu'':  {_located(m.crossover, 'the crossover')}")
    for lf in m.loss_factors:
        out.append(f"at {format_eng(lf.f_hz, 'Hz'):<9} mu' = {_num(lf.mu_real, lf.mu_real_std)}, "
                   f"mu'' = {_num(lf.mu_imag, lf.mu_imag_std)}, tan d/mu_i = "
                   f"{_num(lf.tan_delta_over_mu_i, lf.tan_delta_over_mu_i_std)}")
    r = m.relaxation
    if r is not None:
        extra = f", alpha = {_num(r.alpha, r.alpha_std)}" if r.form == "Cole-Cole" else ""
        out.append(f"relaxation:  {r.form}: mu_i = {_num(r.mu_i, r.mu_i_std)}, mu_inf = {_num(r.mu_inf, r.mu_inf_std)}, "
                   f"f_r = {format_value_std(r.f_r_hz, r.f_r_std_hz, 'Hz')}{extra}")
        out.append(f"             holds {format_eng(r.band_hz[0], 'Hz')} to {format_eng(r.band_hz[1], 'Hz')}, "
                   f"reduced chi^2 {r.reduced_chi2:.3g}, largest deviation {100 * r.max_rel_deviation:.2g} % "
                   "(where the data resolve 1 %)")
    return out


def bead_summary(bead) -> list[str]:
    """Return the readable lines of a bead's figures.

    Parameters
    ----------
    bead : BeadFigures
        What `bead_figures` returned.
    """
    out = [f"part:        {bead.source}"]
    out.append(f"R = X at:    {_located(bead.r_equals_x, 'R = X')}")
    for s in bead.spot:
        if s.in_band:
            out.append(f"at {format_eng(s.f_hz, 'Hz'):<9} |Z| = {format_value_std(s.z_abs_ohm, s.std_ohm, 'ohm')}, "
                       f"R = {format_eng(s.r_ohm, 'ohm')}, X = {format_eng(s.x_ohm, 'ohm')}")
        else:
            out.append(f"at {format_eng(s.f_hz, 'Hz'):<9} outside the measured band")
    if bead.model is not None:
        r = bead.model.refinement
        out.append(f"model:       {r.circuit.topology} (BIC), reduced chi^2 {r.reduced_chi2:.3g}")
        for k, v, s in zip(r.circuit.keys, r.values, r.stds):
            out.append(f"  {k:<6}{format_value_std(float(v), float(s), r.circuit.units[k])}")
    return out


def bead_netlist(bead, name: str = "bead") -> str:
    """Return the SPICE subcircuit of the bead's multi-section model (pins a, b).

    Parameters
    ----------
    bead : BeadFigures
        With a fitted model.
    name : str
        Subcircuit name.

    Raises
    ------
    ValueError
        When the bead has no fitted model.
    """
    if bead.model is None:
        raise ValueError("the bead has no fitted model to write as a netlist")
    r = bead.model.refinement
    net = bead.model.network
    header = {"source": bead.source,
              "band of validity": f"{format_eng(net.band_hz[0], 'Hz')} to {format_eng(net.band_hz[1], 'Hz')}",
              "fit": f"reduced chi^2 {r.reduced_chi2:.4g}"}
    return _subckt_text(name, f"Bead: {r.circuit.topology}", header, net.elements)

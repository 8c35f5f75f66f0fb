"""What the lot keeps of one part: a frozen summary of its identification.

The summary holds the figures a limit or a summary column can name: the
circuit parameters (``L``), the self-resonance (``SRF``) and the readouts at
the asked frequencies (``Q@1MHz``), each as ``(value, std)`` in SI units
(None where not measured).  It is built from the `Identification` itself;
the part's full result stays in its ``zfit.identify/1`` JSON file, so that
a lot of many thousands of parts costs little memory and pickling.  A part
reused from an earlier run is summarised from that file, which holds the
same numbers (JSON floats round-trip exactly).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field

from ..io._limits_file import figure_name

__all__ = ["PartSummary", "part_summary", "part_summary_from_json", "SPOT_READOUTS"]

#: Readouts of a spot frequency that the lot keeps (``ESR`` there is ``R``).
SPOT_READOUTS = ("R", "X", "Z_mag", "L_eff", "C_eff", "Q", "D")


@dataclass(frozen=True)
class PartSummary:
    """The figures of one identified part, as the lot checks and tabulates them.

    Attributes
    ----------
    model, topology : str
        What was identified.
    figures : dict
        Figure name -> ``(value, std)``; ``SRF`` -> ``(value, std, bound)``
        with ``bound`` the lower bound of an SRF above the band (else None).
    srf_where : str
        Where the SRF lies (``in-band``, ``above-band``, ...).
    fit_rms : float or None
        RMS normalised residual of the reported fit.
    warnings : tuple of str
        The identification's warnings, each on one line.
    """

    model: str
    topology: str
    figures: dict = field(default_factory=dict)
    srf_where: str = ""
    fit_rms: float | None = None
    warnings: tuple = ()


def _finite(x) -> float | None:
    if isinstance(x, bool) or not isinstance(x, (int, float)):
        return None
    x = float(x)
    return x if math.isfinite(x) else None


def _one_line(text) -> str:
    return " ".join(str(text).split())


def _spot_figures(f_hz: float, readout: Mapping) -> dict:
    out = {figure_name(q, f_hz): readout[q] for q in SPOT_READOUTS if q in readout}
    if "R" in readout:
        out[figure_name("ESR", f_hz)] = readout["R"]
    return out


# The lumped circuit's keys that a loss model carries under its own name, with
# the same meaning: the winding's DC resistance is the lumped R_s (its value at
# low frequency), and a relaxing core's L_i the lumped L (the inductance below
# the relaxation).  A lot's limits on L and R_s then apply to either model.
_LUMPED_ALIASES = (("R_s", "R_dc"), ("L", "L_i"))


def _with_lumped_aliases(figs: dict) -> dict:
    for lumped, own in _LUMPED_ALIASES:
        if lumped not in figs and own in figs:
            figs[lumped] = figs[own]
    return figs


def part_summary(ident) -> PartSummary:
    """Return the summary of an identification.

    Parameters
    ----------
    ident : Identification
        The result of `zfit.identify`.
    """
    figs: dict[str, tuple] = _with_lumped_aliases({k: (_finite(e.value), _finite(e.std)) for k, e in ident.parameters.items()})
    srf = ident.srf
    bound = _finite(srf.bound_hz) if srf.where == "above-band" else None
    figs["SRF"] = (_finite(srf.value_hz), _finite(srf.std_hz), bound)
    for s in ident.spot:
        readout = {q: (_finite(getattr(s, q).value), _finite(getattr(s, q).std)) for q in SPOT_READOUTS}
        figs.update(_spot_figures(float(s.f_hz), readout))
    return PartSummary(str(ident.model), str(ident.topology), figs, str(srf.where or ""),
                       _finite(ident.fit.rms_normalized_residual), tuple(_one_line(w) for w in ident.warnings))


def _pair(entry) -> tuple:
    if not isinstance(entry, Mapping):
        return (None, None)
    return (_finite(entry.get("value")), _finite(entry.get("std")))


def part_summary_from_json(doc: Mapping) -> PartSummary:
    """Return the summary of a stored ``zfit.identify/1`` result.

    The same numbers as `part_summary` of the identification that wrote it:
    the keys read are those `Identification.to_dict` writes.

    Parameters
    ----------
    doc : mapping
        The parsed JSON object (docs/identify.md).
    """
    params = doc.get("parameters")
    figs: dict[str, tuple] = _with_lumped_aliases(
        {k: _pair(v) for k, v in (params if isinstance(params, Mapping) else {}).items()})
    srf = doc.get("srf") if isinstance(doc.get("srf"), Mapping) else {}
    bound = _finite(srf.get("bound_hz")) if srf.get("where") == "above-band" else None
    figs["SRF"] = (_finite(srf.get("value_hz")), _finite(srf.get("std_hz")), bound)
    for s in doc.get("spot") or ():
        if isinstance(s, Mapping) and _finite(s.get("f_hz")) is not None:
            figs.update(_spot_figures(float(s["f_hz"]), {q: _pair(s[q]) for q in SPOT_READOUTS if q in s}))
    fit = doc.get("fit") if isinstance(doc.get("fit"), Mapping) else {}
    return PartSummary(str(doc.get("model", "")), str(doc.get("topology", "")), figs, str(srf.get("where") or ""),
                       _finite(fit.get("rms_normalized_residual")),
                       tuple(_one_line(w) for w in doc.get("warnings") or ()))

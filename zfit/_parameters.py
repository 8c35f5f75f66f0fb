"""The one registry of equivalent-circuit parameters: names, units, families, bounds.

Every place that needs to know what ``L`` or ``R_leak`` is (the circuits,
the resolution limits, the planner, the limits file, the lot's summary
columns) reads it here, so that a parameter is described once.

All values are in SI units and positive: the refinement works in the
logarithm of each element (see `zfit.fit._circuits`), so the domain of every
parameter is ``(0, inf)``.  What differs is the side on which a sweep stops
resolving it: a series element (``L``, ``R_s``, ``ESR`` ...) is lost when it
is too small, a parallel loss (``R_p``, ``R_leak``) when it is too large,
because its current vanishes as it grows.
"""

from __future__ import annotations

from dataclasses import dataclass
from types import MappingProxyType

__all__ = [
    "Parameter",
    "PARAMETERS",
    "PARAMETER_KEYS",
    "REQUIRED_KEYS",
    "OPTIONAL_KEY",
    "UNITS",
    "RESOLUTION_KIND",
    "FAMILY_OF",
    "LOSS_MODEL_UNITS",
    "BiasFigure",
    "BIAS_FIGURES",
]


@dataclass(frozen=True)
class Parameter:
    """One element of an equivalent circuit.

    Attributes
    ----------
    key : str
        Its name in results, limits files and JSON (``"R_s"``).
    unit : str
        SI unit (``"H"``, ``"F"``, ``"ohm"``).
    family : {'inductor', 'capacitor', 'core', 'bead'}
        The kind of part whose circuit has it (``core`` and ``bead``: the
        material figures of `zfit core`, which no circuit has).
    optional : bool
        Whether the element is the family's optional one (part of the
        circuit only when the data ask for it).
    resolution_kind : {'lower', 'upper'}
        ``"lower"``: a value below the resolution limit is not resolved;
        ``"upper"``: a value above it (parallel losses).
    description : str
        What the element stands for, in words.
    lower, upper : float
        The domain of the value (open interval).
    """

    key: str
    unit: str
    family: str
    optional: bool
    resolution_kind: str
    description: str
    lower: float = 0.0
    upper: float = float("inf")


_ALL = (
    Parameter("L", "H", "inductor", False, "lower", "inductance of the winding"),
    Parameter("R_s", "ohm", "inductor", False, "lower", "series (winding) resistance"),
    Parameter("C_p", "F", "inductor", False, "lower", "parallel (inter-winding) capacitance"),
    Parameter("R_p", "ohm", "inductor", True, "upper", "parallel (core) loss resistance"),
    Parameter("C", "F", "capacitor", False, "lower", "capacitance"),
    Parameter("ESR", "ohm", "capacitor", False, "lower", "equivalent series resistance"),
    Parameter("ESL", "H", "capacitor", False, "lower", "equivalent series inductance"),
    Parameter("R_leak", "ohm", "capacitor", True, "upper", "leakage resistance across the capacitance"),
    # Material figures of a wound core and of a bead (zfit core, docs/cores.md): read from the
    # measurement, not elements of a circuit; a limits file names them like the parameters.
    Parameter("mu_i", "", "core", False, "lower", "initial permeability (mu' at low frequency)"),
    Parameter("f_mu_peak", "Hz", "core", False, "lower", "frequency where mu'' peaks"),
    Parameter("f_mu_cross", "Hz", "core", False, "lower", "frequency where mu' = mu''"),
    Parameter("f_RX", "Hz", "bead", False, "lower", "frequency where R = X (a bead's)"),
)

#: Every parameter by key, in the order of the JSON contract and the summary columns.
PARAMETERS = MappingProxyType({p.key: p for p in _ALL})

#: Parameter keys of each family, in the order of the contract (optional last).
PARAMETER_KEYS = MappingProxyType({
    fam: tuple(p.key for p in _ALL if p.family == fam) for fam in ("inductor", "capacitor")
})

#: The elements every circuit of a family has.
REQUIRED_KEYS = MappingProxyType({
    fam: tuple(k for k in keys if not PARAMETERS[k].optional) for fam, keys in PARAMETER_KEYS.items()
})

#: The optional element of each family.
OPTIONAL_KEY = MappingProxyType({
    fam: next(k for k in keys if PARAMETERS[k].optional) for fam, keys in PARAMETER_KEYS.items()
})

#: Unit of every parameter key.
UNITS = MappingProxyType({p.key: p.unit for p in _ALL})

#: Side of the resolution limit of every parameter key, the loss models' too:
#: a corner (f_c, f_r) beyond the band, or a section's parallel R so large
#: that it carries no current, is lost on the upper side.
RESOLUTION_KIND = MappingProxyType({
    **{p.key: p.resolution_kind for p in _ALL},
    "R_dc": "lower", "f_c": "upper", "L_i": "lower", "L_inf": "lower", "f_r": "upper", "D": "lower",
    "ESR_0": "lower",
    **{f"{k}_{i}": kind for i in (1, 2, 3) for k, kind in (("R", "upper"), ("L", "lower"), ("C", "lower"))},
})

#: Family of every parameter key.
FAMILY_OF = MappingProxyType({p.key: p.family for p in _ALL})

#: Unit of every element of the frequency-dependent loss models
#: (`zfit.fit._loss_circuits`: skin-effect winding, relaxing core, constant
#: loss tangent, resonant sections).  They are kept apart from `PARAMETERS`,
#: whose order is the column order of a lot's summary.
LOSS_MODEL_UNITS = MappingProxyType({
    "L": "H", "R_dc": "ohm", "f_c": "Hz", "C_p": "F", "L_i": "H", "L_inf": "H", "f_r": "Hz",
    "C": "F", "D": "", "ESR_0": "ohm", "ESL": "H",
    **{f"{k}_{i}": u for i in (1, 2, 3) for k, u in (("R", "ohm"), ("L", "H"), ("C", "F"))},
})


# --------------------------------------------------------------- bias figures


@dataclass(frozen=True)
class BiasFigure:
    """A figure of a sweep set against DC bias (``zfit bias``, docs/bias.md).

    Attributes
    ----------
    key : str
        Its name in results, limits files and JSON (``"I_sat_20"``).
    unit : str
        SI unit of the bias (``"A"`` for inductors, ``"V"`` for capacitors).
    family : {'inductor', 'capacitor'}
        The kind of part it describes.
    fall : float
        The fall of L (or C) from its zero-bias value that defines it (0.2 = 20 %).
    description : str
        What it stands for, in words.
    """

    key: str
    unit: str
    family: str
    fall: float
    description: str


_BIAS = (
    BiasFigure("I_sat_10", "A", "inductor", 0.10, "DC current where L has fallen 10 % from zero bias"),
    BiasFigure("I_sat_20", "A", "inductor", 0.20, "DC current where L has fallen 20 % from zero bias"),
    BiasFigure("I_sat_30", "A", "inductor", 0.30, "DC current where L has fallen 30 % from zero bias"),
    BiasFigure("V_bias_20", "V", "capacitor", 0.20, "DC voltage where C has fallen 20 % from zero bias"),
    BiasFigure("V_bias_50", "V", "capacitor", 0.50, "DC voltage where C has fallen 50 % from zero bias"),
)

#: The figures of a bias set by key, per family in order of their fall.
#: Kept apart from `PARAMETERS`: they describe a set of sweeps, not one circuit.
BIAS_FIGURES = MappingProxyType({b.key: b for b in _BIAS})

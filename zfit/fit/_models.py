"""Every equivalent circuit zfit fits, by family and by the name a user gives it.

The lumped circuits (`zfit.fit._circuits`: series R_s-L with parallel C_p,
series C-ESR-ESL, each with its optional parallel loss) describe parts whose
losses are constant; the loss models (`zfit.fit._loss_circuits`: a
skin-effect winding, a core with relaxing permeability, a constant loss
tangent, resonant R-L-C sections) those whose losses follow frequency.
`--model` takes any of them by its descriptive name (the circuit's
``topology``, any case, hyphens or underscores for spaces) or by the
short name of `SHORT_NAMES`.
"""

from __future__ import annotations

import re

from .._errors import ZfitInputError
from ._circuits import CapacitorCircuit, Circuit, InductorCircuit
from ._loss_circuits import ConstantLossCapacitor, RelaxingCoreInductor, ResonantSections, SkinEffectInductor

__all__ = ["FAMILY_MODELS", "SHORT_NAMES", "loss_models_of", "named_models", "model_names", "is_lumped",
           "family_choice", "characteristic_keys"]

#: The choices of `--model` that are not one circuit.
FAMILY_MODELS = ("auto", "inductor", "capacitor", "rational")

#: Short names for the shell; each maps to the circuits it stands for (the
#: resonant sections: as many as the information criterion keeps).
SHORT_NAMES = {
    "skin-effect-coil": (SkinEffectInductor(),),
    "relaxing-core": (RelaxingCoreInductor(),),
    "constant-loss-capacitor": (ConstantLossCapacitor(),),
    "bead": (ResonantSections(1), ResonantSections(2), ResonantSections(3)),
}


def loss_models_of(family: str) -> tuple[Circuit, ...]:
    """Return the frequency-dependent loss models that compete for a family.

    Parameters
    ----------
    family : {'inductor', 'capacitor'}
        The kind of part.
    """
    if family == "inductor":
        return (SkinEffectInductor(), RelaxingCoreInductor(), ResonantSections(1), ResonantSections(2))
    return (ConstantLossCapacitor(),)


def _every_circuit() -> tuple[Circuit, ...]:
    return (InductorCircuit(False), InductorCircuit(True), CapacitorCircuit(False), CapacitorCircuit(True),
            SkinEffectInductor(), RelaxingCoreInductor(), ConstantLossCapacitor(),
            ResonantSections(1), ResonantSections(2), ResonantSections(3))


def _canonical(name: str) -> str:
    return re.sub(r"[\s_\-]+", " ", str(name).strip().lower())


def model_names() -> tuple[str, ...]:
    """Return every name `--model` takes: the family choices, the short names, the descriptive names."""
    return FAMILY_MODELS + tuple(SHORT_NAMES) + tuple(c.topology for c in _every_circuit())


def named_models(name: str) -> tuple[Circuit, ...] | None:
    """Return the circuits a model name stands for, None for a family choice (``auto``, ``inductor``...).

    Parameters
    ----------
    name : str
        A family choice, a short name or a circuit's descriptive name.

    Raises
    ------
    ZfitInputError
        For a name that is none of these (the message lists them).
    """
    key = _canonical(name)
    if key in FAMILY_MODELS:
        return None
    for short, circuits in SHORT_NAMES.items():
        if key == _canonical(short):
            return circuits
    for circuit in _every_circuit():
        if key == _canonical(circuit.topology):
            return (circuit,)
    raise ZfitInputError(f"unknown model {name!r}; use one of: " + ", ".join(repr(n) for n in model_names()))


def family_choice(name: str) -> str:
    """Return `name` as a family choice (``auto``, ``inductor``...) when it is one in any case, else unchanged."""
    key = _canonical(name)
    return key if key in FAMILY_MODELS else name


def characteristic_keys(circuit: Circuit) -> tuple[str, ...]:
    """Return the parameters that make a loss model more than a lumped circuit.

    A skin-effect winding's corner f_c, a relaxing core's L_inf and f_r, a
    constant loss tangent's D, every element of the resonant sections: where
    the sweep does not resolve them, the model only mimics a lumped circuit
    (a core relaxing below the band is a series resistance).  None for the
    lumped circuits.

    Parameters
    ----------
    circuit : Circuit
        Any circuit of this module.
    """
    if isinstance(circuit, SkinEffectInductor):
        return ("f_c",)
    if isinstance(circuit, RelaxingCoreInductor):
        return ("L_inf", "f_r")
    if isinstance(circuit, ConstantLossCapacitor):
        return ("D",)
    if isinstance(circuit, ResonantSections):
        return tuple(k for k in circuit.keys if k != "R_dc")
    return ()


def is_lumped(circuit: Circuit) -> bool:
    """Whether a circuit is one of the lumped R-L-C circuits (constant losses)."""
    return isinstance(circuit, (InductorCircuit, CapacitorCircuit))

"""The ``zfit.core/1`` JSON object of a core's permeability or a bead's figures.

One document for both (``kind``: ``core`` or ``bead``), with the winding's
measured |Z|, R and X in either case; the keys are described in
docs/cores.md and checked by zfit/schemas/core.schema.json.
"""

from __future__ import annotations

from .._version import __version__
from ._core_material import CORE_SCHEMA

__all__ = ["core_document"]


def _impedance(fig) -> dict:
    return {"f_hz": fig.f_hz.tolist(), "r_ohm": fig.r_ohm.tolist(), "x_ohm": fig.x_ohm.tolist(),
            "z_abs_ohm": fig.abs_z_ohm.tolist(), "std_ohm": fig.std_ohm.tolist()}


def core_document(sweep, material=None, bead=None) -> dict:
    """Return the ``zfit.core/1`` object.

    Parameters
    ----------
    sweep : Sweep
        The measurement.
    material : CoreMaterial, optional
        The core's permeability and figures (``kind`` core).
    bead : BeadFigures, optional
        The bead's figures (``kind`` bead); exactly one of the two is given.
    """
    if (material is None) == (bead is None):
        raise ValueError("give the core's material or the bead's figures")
    src = material if material is not None else bead
    doc = {
        "schema": CORE_SCHEMA,
        "zfit_version": __version__,
        "kind": "core" if material is not None else "bead",
        "source": sweep.source,
        "connection": sweep.connection,
        "band_measured_hz": [float(sweep.f_hz[0]), float(sweep.f_hz[-1])],
    }
    if material is not None:
        doc.update(material.to_dict())
        doc["impedance"] = _impedance(material.winding)
    else:
        doc["bead"] = bead.to_dict()
        doc["impedance"] = _impedance(bead.measured)
    doc["warnings"] = list(src.warnings)
    return doc

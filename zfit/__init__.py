"""zfit: equivalent circuits of inductors and capacitors from bench measurements.

Reading
-------
read_sweep          -- a Touchstone file or an analyser table as a `Sweep`
Sweep               -- frequency, impedance and its per-point uncertainty
make_sweep          -- a validated `Sweep` from arrays
InstrumentNoise     -- the noise model that gives each point its uncertainty
impedance_from_s    -- Z from S11 / S21 for each analyser connection
s_from_impedance    -- the inverse

Identification
--------------
vector_fit          -- a rational model of Z(s) by relaxed vector fitting
RationalModel       -- poles, residues, constant and proportional terms
identify            -- the equivalent circuit with uncertainties, SRF, Q, D
Identification      -- the result, with ``to_dict()`` as the JSON contract

Numbers
-------
format_eng          -- engineering notation, ``4.7n``
parse_quantity      -- its inverse, ``parse_quantity("4.7n") == 4.7e-9``

The names are loaded on first use, so that ``import zfit`` and the command
line start fast.
"""

from __future__ import annotations

import importlib

from ._version import __version__

# Public name -> private module that defines it.
_EXPORTS = {
    "ZfitError": "_errors",
    "ZfitInputError": "_errors",
    "OutputExistsError": "_errors",
    "FitError": "_errors",
    "MeasurementWarning": "_errors",
    "format_eng": "_units",
    "format_value_std": "_units",
    "parse_quantity": "_units",
    "Sweep": "_sweep",
    "make_sweep": "_sweep",
    "InstrumentNoise": "_connection",
    "impedance_from_s": "_connection",
    "s_from_impedance": "_connection",
    "read_sweep": "_readers",
    "vector_fit": "_vectfit",
    "RationalModel": "_vectfit",
    "fit_impedance": "_vectfit",
    "PassivityViolation": "_vectfit",
    "VFIteration": "_vectfit",
    "sigma_update_for": "_vectfit",
    "identify": "_identify",
    "Identification": "_identify",
    "read_capture": "_capture",
    "make_capture": "_capture",
    "Capture": "_capture",
    "analyse_capture": "_step",
    "StepResult": "_step",
    "state_levels": "_step",
    "matrix_pencil": "_step",
    "stray_capacitance_two_resonances": "_step",
    "FrequencyResponse": "_response",
    "Estimate": "_figures",
    "circuit_impedance": "_circuits",
    "plan_measurement": "_planner",
    "Plan": "_planner",
    "port_extended": "_fixture",
    "compensate_from_files": "_fixture",
    "corrected_impedance": "_fixture",
    "resolution_limits": "_resolution",
    "ground_loop_warning": "_resolution",
    "InductorCircuit": "_circuits",
    "CapacitorCircuit": "_circuits",
    "read_limits": "_limits",
    "Limits": "_limits",
    "conformity": "_limits",
    "run_batch": "_batch",
    "BatchResult": "_batch",
    "write_outputs": "_outputs",
    "identification_netlist": "_outputs",
    "circuit_netlist": "_netlist",
    "rational_netlist": "_netlist",
    "foster_branches": "_netlist",
    "SynthesisError": "_netlist",
    "write_touchstone": "_export",
    "plot_sweep": "_plots",
    "plot_q": "_plots",
    "plot_esr_d": "_plots",
    "plot_bode": "_plots",
    "plot_time_record": "_plots",
}

__all__ = ["__version__", *_EXPORTS]


def __getattr__(name: str):
    module = _EXPORTS.get(name)
    if module is None:
        raise AttributeError(f"module 'zfit' has no attribute {name!r}")
    value = getattr(importlib.import_module(f"{__name__}.{module}"), name)
    globals()[name] = value
    return value


def __dir__():
    return sorted(__all__)

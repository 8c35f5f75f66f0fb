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
    "Sweep": "data._sweep",
    "make_sweep": "data._sweep",
    "InstrumentNoise": "data._connection",
    "impedance_from_s": "data._connection",
    "s_from_impedance": "data._connection",
    "read_sweep": "io._sweep_file",
    "vector_fit": "fit._vectfit",
    "RationalModel": "fit._rational",
    "fit_impedance": "fit._vectfit",
    "PassivityViolation": "fit._passivity",
    "VFIteration": "fit._rational",
    "sigma_update_for": "fit._vectfit",
    "identify": "identification._pipeline",
    "Identification": "identification._result",
    "read_capture": "io._capture",
    "make_capture": "io._capture",
    "Capture": "io._capture",
    "analyse_capture": "capture._analysis",
    "StepResult": "capture._result",
    "state_levels": "capture._levels",
    "matrix_pencil": "capture._ringing",
    "stray_capacitance_two_resonances": "capture._stray",
    "FrequencyResponse": "capture._response",
    "Estimate": "identification._merit",
    "circuit_impedance": "fit._circuits",
    "plan_measurement": "identification._plan",
    "Plan": "identification._plan",
    "port_extended": "data._fixture",
    "compensate_from_files": "io._standards",
    "corrected_impedance": "data._fixture",
    "resolution_limits": "fit._fisher",
    "ground_loop_warning": "identification._diagnostics",
    "InductorCircuit": "fit._circuits",
    "CapacitorCircuit": "fit._circuits",
    "read_limits": "io._limits_file",
    "Limits": "io._limits_file",
    "conformity": "lot._conformity",
    "run_batch": "lot._run",
    "BatchResult": "lot._run",
    "write_outputs": "outputs._outputs",
    "identification_netlist": "outputs._netlist",
    "circuit_netlist": "outputs._netlist",
    "rational_netlist": "outputs._netlist",
    "foster_branches": "fit._realisation",
    "SynthesisError": "fit._realisation",
    "write_touchstone": "io._touchstone_export",
    "plot_sweep": "outputs._plots",
    "plot_q": "outputs._plots",
    "plot_esr_d": "outputs._plots",
    "plot_bode": "outputs._plot_capture",
    "plot_time_record": "outputs._plot_capture",
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

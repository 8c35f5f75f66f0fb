"""zfit: equivalent circuits of inductors and capacitors from bench measurements.

A sweep is read (`zfit.io`) into a `Sweep` (`zfit.data`), fitted (`zfit.fit`)
and identified (`zfit.identification`); a capture (`zfit.capture`) ends in a
sweep too; lots (`zfit.lot`) run many identifications; `zfit.outputs`
presents results and `zfit.cli` is the command line (docs/architecture.md).
The public names, by category:

Errors and numbers
------------------
ZfitError                         -- base class of every error zfit raises on purpose
ZfitInputError                    -- bad input, with the file and line it concerns
OutputExistsError                 -- an output exists and force was not given
FitError                          -- a fit that cannot be done as asked
MeasurementWarning                -- something about the measurement the user should know
format_eng                        -- engineering notation, ``4.7n``
format_value_std                  -- a value with its uncertainty, digits set by the uncertainty
parse_quantity                    -- its inverse, ``parse_quantity("4.7n") == 4.7e-9``

Reading (zfit.io)
-----------------
read_sweep                        -- a Touchstone file or an analyser/LCR table as a `Sweep`
two_port_connection               -- the connection a two-port file's data show, or None
compensate_from_files             -- fixture compensation from the standards' files
read_capture                      -- an oscilloscope export as a `Capture`
make_capture                      -- a validated `Capture` from arrays
Capture                           -- channels on a uniform time base
read_limits                       -- a limits TOML file as `Limits`
parse_limits                      -- the same from text
Limits                            -- the spec limits of a lot
write_touchstone                  -- a model's impedance as a one-port Touchstone file

Measured data (zfit.data)
-------------------------
Sweep                             -- frequency, impedance, per-point uncertainty, provenance, flags
make_sweep                        -- a validated `Sweep` from arrays
InstrumentNoise                   -- the noise model that gives each point its uncertainty
impedance_from_s                  -- Z from S11 / S21 for each analyser connection
s_from_impedance                  -- the inverse
NoiseEstimate                     -- where a sweep's noise model came from, and its terms
fitted_noise                      -- the instrument noise terms estimated from the data's scatter
local_sigma                       -- the point-by-point scatter about a local smooth fit
corrected_impedance               -- open/short(/load) compensation of an impedance
port_extended                     -- a sweep with a port extension applied

Fitting (zfit.fit)
------------------
vector_fit                        -- a rational model by relaxed vector fitting
fit_impedance                     -- the same with the options for a part's impedance
sigma_update_for                  -- sigma re-evaluated at the model
RationalModel                     -- poles, residues, constant and proportional terms
VFIteration                       -- one pole relocation, for convergence plots
PassivityViolation                -- where a rational model is not passive
InductorCircuit                   -- series R_s-L with parallel C_p (and R_p)
CapacitorCircuit                  -- series C-ESR-ESL (with C shunted by R_leak)
circuit_impedance                 -- the impedance of a circuit by model name
SkinEffectInductor                -- L with a skin-effect winding and parallel C_p
RelaxingCoreInductor              -- a core with relaxing (Debye) permeability
ConstantLossCapacitor             -- a dielectric with constant loss tangent, with ESL
ResonantSections                  -- winding resistance with parallel R-L-C sections (beads)
skin_depth_m                      -- the skin depth of a conductor
loss_network                      -- a loss model as a passive R-L-C network
LossNetwork                       -- that network and its accuracy over the band
refine                            -- weighted nonlinear least squares of a circuit, with covariance
Observation                       -- what the least squares fits: Z or S with its sigma
Refinement                        -- the estimate, its covariance and residuals
resolution_limits                 -- the smallest resolvable value of each parameter
sigma_at_impedance                -- the measurement's sigma at a model impedance
simulated_sweep                   -- a circuit measured through a connection with noise
passive_realisation               -- a rational model as a passive network
Realisation                       -- that network
foster_branches                   -- the Foster branches of a rational model
SynthesisError                    -- a model that cannot be realised passively

Identification (zfit.identification)
------------------------------------
identify                          -- the equivalent circuit with uncertainties, SRF, Q, D
Identification                    -- the result, with ``to_dict()`` as the JSON contract
FitQuality                        -- residuals, points, band, valid band
Candidate                         -- one candidate model and its criterion
ParameterMap                      -- parameter estimates by name
Estimate                          -- a value with its standard uncertainty and unit
ParameterEstimate                 -- a parameter's estimate and resolution
SRF                               -- the self-resonant frequency, or a bound
Merit                             -- one figure of merit
Merits                            -- the figures of merit of a result
SpotReadout                       -- R, X, Q, D ... at one frequency
Curves                            -- figures of merit against frequency
ModelEvaluator                    -- a model's impedance and uncertainty anywhere in band
measured_figures                  -- R, X, L_eff/C_eff, Q, D from the measurement itself
spot_figures                      -- the same at given frequencies
measured_srf                      -- the self-resonance where Im Z changes sign
low_frequency_value               -- L or C at the low end of the band
MeasuredFigures                   -- figures from the measurement
MeasuredValue                     -- one such figure, or a bound below resolution
MeasuredSRF                       -- the measured self-resonance
LowFrequencyValue                 -- the low-frequency value and where it holds
ground_loop_warning               -- the shunt-thru ground-loop warning
plan_measurement                  -- the uncertainty each connection would give
Plan                              -- that plan

Captures (zfit.capture)
-----------------------
analyse_capture                   -- IEEE 181 figures, time constant, response, impedance
StepResult                        -- the result, with ``to_dict()`` as the JSON contract
state_levels                      -- the two state levels of a step (IEEE 181)
matrix_pencil                     -- damped sinusoids by the matrix pencil method
stray_capacitance_two_resonances  -- stray C from two resonances
FrequencyResponse                 -- H = V_out/V_in with coherence and band
edge_response                     -- the frequency response of a capture's edges
impedance_sweep                   -- a response through a sense resistor as a `Sweep`

Lots (zfit.lot)
---------------
run_batch                         -- identify a lot, decide each part, write the lot's files
BatchResult                       -- what a batch did
ReadOptions                       -- how each file of a lot is read
PartSummary                       -- what a lot keeps of one identification
PartRow                           -- one row of the summary
LotSummary                        -- the lot's statistics
QuantityStats                     -- statistics and capability of one quantity
conformity                        -- pass / fail / indeterminate with a guard band (JCGM 106)
decide                            -- the verdict of a part against every limit
SimulatedPart                     -- an invented part of a simulated lot
write_simulated_lot               -- a simulated lot written as instrument files

Outputs (zfit.outputs)
----------------------
write_outputs                     -- JSON, plots, netlist, Touchstone and report, committed together
identification_netlist            -- the SPICE netlist of a result
circuit_netlist                   -- the SPICE netlist of a circuit
rational_netlist                  -- the SPICE netlist of a rational model
plot_sweep                        -- |Z|, phase and residuals against frequency
plot_q                            -- Q against frequency
plot_esr_d                        -- ESR and D against frequency
plot_bode                         -- the Bode plot of a capture's response
plot_time_record                  -- a capture's time record
plot_schematic                    -- the equivalent circuit drawn
loss_model_netlist                -- the SPICE netlist of a loss model's passive network
lot_report, lot_report_html       -- a lot's one-page HTML report
plot_lot_histogram                -- a limited quantity's histogram with limits and guard bands
plot_response                     -- the Bode plot of a fitted response

Models, cores, beads and responses
----------------------------------
loss_models_of, named_models      -- the loss models of a family; the circuits a --model name stands for
model_names                       -- every name --model takes
SplitBandCheck, split_band_check  -- the model-error term from the fits over two halves of the band
core_spec, CoreSpec               -- a wound core's turns and geometry
core_constant, CoreConstant       -- a toroid's core constant and effective parameters (IEC 60205)
core_material, CoreMaterial       -- a core's complex permeability and material figures
fitted_relaxation, Relaxation     -- a Debye or Cole-Cole relaxation fitted to mu(f)
bead_figures, BeadFigures         -- a bead's R = X, |Z| at spot frequencies and its sections
core_document                     -- the zfit.core/1 JSON object
read_response_table, ResponseTable -- a swept-sine gain/phase table
gain_phase_points, GainPhasePoints -- its points with their uncertainties
analyse_response, ResponseResult  -- the fitted transfer function and its figures
TransferModel, TransferStructure  -- a rational H(s) and its structure
ELEMENT_RANGES, SAMPLE_INTERVAL_RANGE_S -- the ranges zfit computes in

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
    "read_sweep": "io._sweep_file",
    "two_port_connection": "io._sweep_file",
    "compensate_from_files": "io._standards",
    "read_capture": "io._capture",
    "make_capture": "io._capture",
    "Capture": "io._capture",
    "read_limits": "io._limits_file",
    "parse_limits": "io._limits_file",
    "Limits": "io._limits_file",
    "write_touchstone": "io._touchstone_export",
    "Sweep": "data._sweep",
    "make_sweep": "data._sweep",
    "InstrumentNoise": "data._connection",
    "impedance_from_s": "data._connection",
    "s_from_impedance": "data._connection",
    "NoiseEstimate": "data._noise",
    "fitted_noise": "data._noise",
    "local_sigma": "data._noise",
    "corrected_impedance": "data._fixture",
    "port_extended": "data._fixture",
    "vector_fit": "fit._vectfit",
    "fit_impedance": "fit._vectfit",
    "sigma_update_for": "fit._vectfit",
    "RationalModel": "fit._rational",
    "VFIteration": "fit._rational",
    "PassivityViolation": "fit._passivity",
    "InductorCircuit": "fit._circuits",
    "CapacitorCircuit": "fit._circuits",
    "circuit_impedance": "fit._circuits",
    "SkinEffectInductor": "fit._loss_circuits",
    "RelaxingCoreInductor": "fit._loss_circuits",
    "ConstantLossCapacitor": "fit._loss_circuits",
    "ResonantSections": "fit._loss_circuits",
    "skin_depth_m": "fit._loss_circuits",
    "loss_network": "fit._loss_networks",
    "LossNetwork": "fit._loss_networks",
    "refine": "fit._lsq",
    "Observation": "fit._lsq",
    "Refinement": "fit._lsq",
    "resolution_limits": "fit._fisher",
    "sigma_at_impedance": "fit._fisher",
    "simulated_sweep": "fit._simulate",
    "passive_realisation": "fit._realisation",
    "Realisation": "fit._realisation",
    "foster_branches": "fit._realisation",
    "SynthesisError": "fit._realisation",
    "identify": "identification._pipeline",
    "Identification": "identification._result",
    "FitQuality": "identification._result",
    "Candidate": "identification._result",
    "ParameterMap": "identification._result",
    "Estimate": "identification._merit",
    "ParameterEstimate": "identification._merit",
    "SRF": "identification._merit",
    "Merit": "identification._merit",
    "Merits": "identification._merit",
    "SpotReadout": "identification._merit",
    "Curves": "identification._merit",
    "ModelEvaluator": "identification._merit",
    "measured_figures": "identification._measured",
    "spot_figures": "identification._measured",
    "measured_srf": "identification._measured",
    "low_frequency_value": "identification._measured",
    "MeasuredFigures": "identification._measured",
    "MeasuredValue": "identification._measured",
    "MeasuredSRF": "identification._measured",
    "LowFrequencyValue": "identification._measured",
    "ground_loop_warning": "identification._diagnostics",
    "plan_measurement": "identification._plan",
    "Plan": "identification._plan",
    "analyse_capture": "capture._analysis",
    "StepResult": "capture._result",
    "state_levels": "capture._levels",
    "matrix_pencil": "capture._ringing",
    "stray_capacitance_two_resonances": "capture._stray",
    "FrequencyResponse": "capture._response",
    "edge_response": "capture._response",
    "impedance_sweep": "capture._response",
    "run_batch": "lot._run",
    "BatchResult": "lot._run",
    "ReadOptions": "lot._tasks",
    "PartSummary": "lot._part_summary",
    "PartRow": "lot._rows",
    "LotSummary": "lot._statistics",
    "QuantityStats": "lot._statistics",
    "conformity": "lot._conformity",
    "decide": "lot._conformity",
    "SimulatedPart": "lot._simulated_lot",
    "write_simulated_lot": "lot._simulated_lot",
    "write_outputs": "outputs._outputs",
    "identification_netlist": "outputs._netlist",
    "circuit_netlist": "outputs._netlist",
    "rational_netlist": "outputs._netlist",
    "plot_sweep": "outputs._plots",
    "plot_q": "outputs._plots",
    "plot_esr_d": "outputs._plots",
    "plot_bode": "outputs._plot_capture",
    "plot_time_record": "outputs._plot_capture",
    "plot_schematic": "outputs._plot_schematic",
    "loss_model_netlist": "outputs._netlist",
    "lot_report": "outputs._lot_report",
    "lot_report_html": "outputs._lot_report",
    "plot_lot_histogram": "outputs._plot_lot",
    "plot_response": "outputs._plot_response",
    "loss_models_of": "fit._models",
    "named_models": "fit._models",
    "model_names": "fit._models",
    "SplitBandCheck": "identification._model_error",
    "split_band_check": "identification._model_error",
    "core_spec": "io._core_spec",
    "CoreSpec": "io._core_spec",
    "core_constant": "identification._core_geometry",
    "CoreConstant": "identification._core_geometry",
    "core_material": "identification._core_material",
    "CoreMaterial": "identification._core_material",
    "fitted_relaxation": "fit._relaxation",
    "Relaxation": "fit._relaxation",
    "bead_figures": "identification._bead",
    "BeadFigures": "identification._bead",
    "core_document": "identification._core_result",
    "read_response_table": "io._response_table",
    "ResponseTable": "io._response_table",
    "gain_phase_points": "capture._swept_sine",
    "GainPhasePoints": "capture._swept_sine",
    "analyse_response": "capture._response_result",
    "ResponseResult": "capture._response_result",
    "TransferModel": "fit._transfer",
    "TransferStructure": "fit._transfer",
    "ELEMENT_RANGES": "data._sweep",
    "SAMPLE_INTERVAL_RANGE_S": "data._sweep",
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

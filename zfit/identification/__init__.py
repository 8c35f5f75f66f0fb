"""Identification: a `Sweep` in, an `Identification` out (the ``zfit.identify/1`` contract).

Enters: a `Sweep` (frequencies, impedance, per-point sigma, connection,
noise model) and the options of `identify` (model, spot frequencies, DC
resistance).  Leaves: a frozen `Identification` (circuit, parameter
estimates with resolution, rational model, SRF, figures of merit, fit
quality, candidates, warnings) and, from the planner, a `Plan`.

Modules
-------
_pipeline     `identify`: the named stages, options -> rational -> candidates -> choice -> valid band -> merit -> result
_rational     the rational model of the full band, its score, its refit with the noise at the circuit
_candidates   the circuits of each family and the choice between them by the BIC
_band         the valid band of the chosen circuit (in log-frequency span) and its refit over a sub-band
_criteria     the BIC and the test of a valid band; log-frequency cells and spans
_few_points   sweeps of 2-9 points (LCR-meter tables): what they resolve, without vector fitting
_estimates    parameter estimates with uncertainties, resolution floors, correlation
_merit        SRF, Q, D, ESR, spot readouts, curves; `ModelEvaluator` (which model is read where)
_measured     figures read from the measurement itself: smoothed R, X, L/C_eff, Q, D, SRF, low-frequency value
_measured_report  those figures as the result reports them (JSON, spot, the SRF taken from the data)
_adequacy     where the circuit holds within the noise (log-frequency span) and its model-error factor
_traces       the figures of merit at every sweep point (what a plot draws)
_diagnostics  adequacy, resolution, DC-resistance and shunt-thru ground-loop warnings
_result       `Identification`, `FitQuality`, `Candidate`, `ParameterMap` and ``to_dict``
_plan         the measurement planner
_core_geometry  the core constant C1 (IEC 60205 effective parameters) and its uncertainty
_core_material  the complex permeability of a wound core and its material figures (``zfit core``)
_core_result  the ``zfit.core/1`` JSON object
_bead         a bead's |Z|, R, X, R = X frequency, |Z| at spot frequencies, multi-section model
_crossings    where a measured curve crosses zero or peaks, with uncertainty
"""

"""Captures: the time-domain figures and the frequency response of a step or square wave.

What enters: a `Capture` (uniform samples of one or two oscilloscope
channels, read by `zfit.io._capture`).  What leaves: a frozen `StepResult`
-- IEEE 181 state levels, 10-90 % transition duration and overshoot, the
dominant time constant, the ringing and the stray capacitance it implies,
the `FrequencyResponse` H(f) with its coherence and usable band, and, with
a sense resistor, the impedance `Sweep` and its `Identification` -- whose
``to_dict()`` is the ``zfit.step/1`` JSON object.

Modules
    _analysis        `analyse_capture`: the analysis as named steps
    _levels          state levels by histogram, edges with hysteresis (IEEE 181)
    _edges           edge-aligned rows and their 10/50/90 % instants
    _time_constant   the dominant time constant fitted to the edges
    _ringing         damped modes by the matrix pencil, the ringing of an edge
    _stray           a coil's stray capacitance from its ringing
    _response        H1 frequency response with coherence; the impedance
                     sweep with a sense resistor
    _result          `StepResult` and its ``zfit.step/1`` object
    _swept_sine      gain/phase readings as points with their uncertainty;
                     the part's impedance behind a series divider
    _transfer_figures the transfer function the BIC prefers, and its poles,
                     zeros, gains, -3 dB frequencies and predicted step
    _response_result `analyse_response`, `ResponseResult` and its
                     ``zfit.response/1`` object

Plots of a capture are in `zfit.outputs._plot_capture`; writing its files
in `zfit.outputs`.
"""

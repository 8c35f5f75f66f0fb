"""Fitting: numbers from arrays, no files and no text.

What enters: frequencies (Hz), a complex impedance (ohm) and its
complex-circular standard uncertainty, as arrays, or an `Observation` of a
`Sweep` (on S when the sweep came from an analyser connection).  What
leaves: frozen records -- a `RationalModel` (poles, residues, covariance,
passivity), an equivalent `Circuit` with its log-parameter estimate and
covariance (`Refinement`), and the resolution limits of a sweep.

Rational models (relaxed vector fitting)
    _vectfit       `vector_fit`, `fit_impedance` (options per kind of part),
                   `sigma_update_for` (sigma re-evaluated at the model)
    _rational      `RationalModel` (evaluation, uncertainty with the poles)
                   and `VFIteration` (one pole relocation)
    _passivity     `PassivityViolation`: where Re H < 0 or s, 1/s terms are negative
    _pole_count    the pole count: given, from starting poles, or automatic
    _relocation    the relaxed pole relocation for a given count
    _residues      residues with the poles fixed, and the covariance
    _poles         starting poles, pole sets split into real poles and pairs
    _basis         the real-arithmetic basis of a pole-residue model
    _qr            QR factors and inverse Gram matrices of the least squares
Equivalent circuits
    _circuits      the circuits of inductors and capacitors (impedance,
                   derivatives, SRF, initial guesses)
    _loss_circuits circuits with frequency-dependent losses: skin-effect
                   winding, relaxing (Debye) core, constant loss tangent,
                   parallel R-L-C sections (beads)
    _lsq           weighted nonlinear least squares with covariance (`refine`)
    _relaxation    Debye and Cole-Cole permeability fitted to a measured
                   mu' - j mu'', and a winding's R_dc, C_p with a Cole-Cole core
    _fisher        resolution limits from the Fisher information, the
                   measurement's sigma at a model impedance
Transfer functions
    _transfer      a low-order transfer function in factored (Bode) form
                   fitted to gain and phase, with covariance
Passive networks
    _realisation   a rational model as a passive R-L-C network (Foster form)
    _loss_networks a loss model as a passive R-L-C network (exact or ladder)
The forward model
    _simulate      a circuit measured through a connection with the
                   instrument's noise (the planner, the simulated lot, tests)

The S<->Z conversions and their derivatives are not here but in
`zfit.data._connection`; the parameter registry (names, units, bounds) is
`zfit._parameters`; the choice between circuits is identification's
(`zfit.identification`).
"""

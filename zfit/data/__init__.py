"""The measured data and the physics of how it was measured.

What enters: arrays as a reader found them (frequencies, S-parameters or
impedances, file lines).  What leaves: a frozen `Sweep` (frequency,
impedance, per-point uncertainty, provenance, notes, flags of points that
look active, the record of the noise model), and the conversions between
what an analyser measures and the part's impedance.  Nothing here reads a
file or fits a circuit.

Modules
-------
_sweep
    `Sweep` and its cleaning: validation, sorting, repeated frequencies
    merged (mean, spread into the uncertainty), active points flagged.
_connection
    The only S <-> Z formulas (reflection, shunt-thru, series-thru), their
    derivatives, and the instrument noise model `InstrumentNoise`.
_noise
    The noise estimated from the data's scatter (`fitted_noise`) and the
    record of where a sweep's noise model came from (`NoiseEstimate`).
_fixture
    Open/short/load compensation and port extension (pure: the standards'
    files are read by `zfit.io`).
"""

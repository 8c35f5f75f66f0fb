"""Reading: bench files in, frozen objects out (and back to bytes for the formats read too).

What enters: a path to a file an instrument or its software wrote.  What
leaves: a validated `zfit.data.Sweep` (`read_sweep`), the raw records the
readers build on (`TouchstoneData`, `TableData`), or an oscilloscope
`Capture` (`read_capture`).  A reader never fits: the only numbers it derives
are the impedance through the connection formulas and the noise model
(estimated from the data's scatter when none is given, by `zfit.data`).

Modules
-------
_text
    Decoding of instrument text (UTF-8 with or without a byte-order mark,
    UTF-16, Latin-1) and the one test of whether a field is a number.
_touchstone
    Touchstone 1.x and 2.0 files into S-parameter arrays with file lines.
_touchstone_export
    A one-port model written back as Touchstone.
_table
    Impedance-analyser and LCR-meter tables (column names, units, series
    and parallel modes) into impedance.
_sweep_file
    `read_sweep`: the file kind, the connection (given, implied, or taken
    from clear two-port data), the noise model, cleaning, the `Sweep`.
_prepared
    The sweep as identification sees it: read, port-extended, compensated.
_standards
    Fixture compensation from the open/short/load standards' files (read
    like any sweep, cached for a lot, applied by `zfit.data._fixture`).
_limits_file
    The limits TOML of a lot (units checked against each quantity's).
_core_spec
    A winding on a core as written (turns, geometry, tolerance), from the
    command line or a limits file's ``[core]`` table.
_capture
    `read_capture`: oscilloscope exports by kind (text, ``.npy``, ``.npz``).
_capture_record
    `Capture`, `make_capture` and the sample checks shared by the readers.
_capture_text
    Delimited-text exports: layout, metadata, header, the numeric block.
_capture_time
    The time base of a text capture from its time column.
_response_table
    Swept-sine gain/phase tables (gain as a ratio or in dB, or the two
    amplitudes; phase in degrees or radians) into readings.
"""

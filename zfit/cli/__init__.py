"""The ``zfit`` command line: options in, the Python API called, text and files out.

Each command is a module that parses its options, calls the public API
(the same functions a notebook user calls) and prints what the outputs'
views return; no command computes a figure or holds a file format of its own.

Modules
-------
_app        the ``zfit`` application, ``--version``, the console-script entry point
_common     what every command shares: the option types, one-line errors
            (exit status 2, no traceback), warnings, ``--json`` to a file or ``-``
_info       ``zfit info``: what was read from a sweep
_identify   ``zfit identify``: the equivalent circuit and its outputs
_step       ``zfit step``: an oscilloscope capture
_batch      ``zfit batch``: a lot against a limits file
_plan       ``zfit plan``: the connection to use before the part is on the bench
_demo       ``zfit demo``: the whole job on the shipped demo files
"""

"""Outputs: results in, files and text out; presentation only, no computation.

Enters: an `Identification` or a `StepResult` (and a `Sweep` for the info
view).  Leaves: text and tables for the terminal, plots, SPICE netlists,
Touchstone files (through `zfit.io._touchstone_export`) and one-page HTML
reports, all committed by one writer.  Every number comes from the result;
the passive realisation of a rational model is `Identification.realisation`
(`zfit.fit._realisation`).

Modules
-------
_views         result -> text and tables: terminal summaries, the ``zfit.info/1`` dict, the response CSV, page notation
_result_plots  which plots a result gets, from its traces
_plots         the sweep, Q and ESR/D plots
_plot_capture  the Bode plot and the time record of a capture
_plot_core     a core's mu' and mu'' over the winding's |Z|, R, X; a bead's |Z|, R, X
_core_views    a core's and a bead's figures as text, the bead's netlist
_plot_response the Bode plot of a fitted response with its predicted step
_response_views the summary of a fitted response, its predicted step as CSV
_plot_schematic the equivalent circuit drawn
_plot_style    the house style and axis helpers shared by the plots
_plot_files    a plot as PNG/SVG bytes, saved atomically
_demo_index    the demo folder's index page
_netlist       SPICE subcircuit text of a circuit or a realised rational model
_pages         the report's content (sections, tables, plots)
_report        rendering a report as self-contained HTML
_outputs       `write_outputs`: the one writer of every file kind
"""

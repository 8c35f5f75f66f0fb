"""The one writer of a result's files: plots, a SPICE model, a Touchstone file and a one-page report.

`write_outputs` is what the ``identify`` and ``step`` commands (and the
lot and the demo) call for ``--plot``, ``--netlist``, ``--touchstone`` and
``--report``: it checks every path first, builds every file's bytes (so a
refusal leaves no partial set behind) and commits each atomically.  What
goes into each file is made elsewhere in `zfit.outputs`: `_result_plots`
and `_plots`, `_netlist`, `zfit.io._touchstone_export`, `_pages` and
`_report`.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from .._errors import ZfitInputError
from .._units import format_band, format_value_std
from .._version import __version__
from ._netlist import identification_netlist
from ._pages import identification_report, step_report
from ._result_plots import identification_plots, step_plots

__all__ = [
    "write_outputs",
    "check_output_path",
    "check_output_suffix",
    "PLOT_SUFFIXES",
    "NETLIST_SUFFIXES",
    "TOUCHSTONE_SUFFIXES",
    "REPORT_SUFFIXES",
]

PLOT_SUFFIXES = (".png", ".svg")
NETLIST_SUFFIXES = (".cir", ".sp", ".lib", ".inc", ".spi", ".net")
TOUCHSTONE_SUFFIXES = (".s1p",)
REPORT_SUFFIXES = (".html", ".htm")


def _is_step(result) -> bool:
    return not hasattr(result, "parameters") or not hasattr(result, "sweep")


def check_output_path(path, force: bool = False) -> Path:
    """Return `path` as a Path if an output may be written there, else raise.

    Says in one line what is wrong before any work is done: the path is a
    folder, a parent in it is a file, or the file exists and `force` is
    false.

    Parameters
    ----------
    path : str or os.PathLike
        The output file.
    force : bool
        Whether an existing file may be replaced.

    Raises
    ------
    ZfitInputError
        For a folder given as the file, or a file given as a folder.
    OutputExistsError
        When the file exists and `force` is false.
    """
    from .._atomic import check_writable

    return check_writable(path, force)


def check_output_suffix(path, kind: str) -> Path:
    """Return `path` as a Path if its extension suits `kind`, else raise.

    Parameters
    ----------
    path : str or os.PathLike
        The output file.
    kind : {'plot', 'netlist', 'touchstone', 'report'}
        What is to be written there.
    """
    suffixes = {"plot": PLOT_SUFFIXES, "netlist": NETLIST_SUFFIXES, "touchstone": TOUCHSTONE_SUFFIXES,
                "report": REPORT_SUFFIXES}[kind]
    path = Path(path)
    if path.suffix.lower() not in suffixes:
        raise ZfitInputError(f"{kind} file must end in {' or '.join(suffixes)}", path=path)
    return path


def write_outputs(
    result,
    *,
    plot=None,
    netlist=None,
    touchstone=None,
    touchstone_grid=None,
    report=None,
    force: bool = False,
    command=None,
    netlist_kind: str = "auto",
    touchstone_reference_ohm: float = 50.0,
    json_path=None,
) -> list[Path]:
    """Write the outputs asked for, each atomically; return the paths written.

    Parameters
    ----------
    result : Identification or StepResult
        What to write out.
    plot : path, optional
        ``.png`` or ``.svg``.  For a sweep: the impedance figure, plus the
        quality-factor (``<stem>-q``) or ESR/D (``<stem>-esr-d``) plot
        beside it.  For a capture: the time record, plus the Bode plot
        (``<stem>-bode``) and, with a sense resistor, the impedance plots.
    netlist : path, optional
        SPICE subcircuit (``.cir``, ``.sp``, ``.lib``, ``.inc``, ``.spi``, ``.net``).
    touchstone : path, optional
        One-port Touchstone file (``.s1p``) of the fitted model.
    touchstone_grid : str or array_like, optional
        Its frequency grid: text for `zfit.io._touchstone_export.parse_grid` (``1k:1G:801``)
        or an array in Hz; the measured frequencies by default.
    report : path, optional
        One-page self-contained HTML report (``.html``).
    force : bool
        Whether existing files may be replaced.
    command : str or sequence of str, optional
        The command line that reproduced the result, for the report.
    netlist_kind : {'auto', 'circuit', 'rational'}
        Which model the netlist holds (see `identification_netlist`).
    touchstone_reference_ohm : float
        Reference impedance of the Touchstone file.
    json_path : path, optional
        The result's JSON (``to_dict()``), written with the other files as
        one set.

    Returns
    -------
    list of pathlib.Path
        Every file written, in order; all of them or none (a failure
        while writing leaves none of the new files).

    Raises
    ------
    OutputExistsError
        When a file exists and `force` is false (checked for all outputs
        before anything is written).
    ZfitInputError
        On an extension that does not say what to write.
    """
    from .._atomic import write_all_atomic

    step = _is_step(result)
    ident = result if not step else _step_identification(result)
    jobs = []  # (path, kind)
    for path, kind in ((plot, "plot"), (netlist, "netlist"), (touchstone, "touchstone"), (report, "report")):
        if path is None:
            continue
        path = check_output_suffix(path, kind)
        check_output_path(path, force)
        jobs.append((path, kind))
    if ident is None and any(k in ("netlist", "touchstone") for _, k in jobs):
        raise ZfitInputError("a netlist or Touchstone file needs an impedance: give the capture's sense resistor (--shunt)")

    # Build everything first, so that a refusal (a netlist that cannot be
    # synthesised) leaves no partial set of files behind.
    out: list[tuple[Path, object]] = []
    netlist_text = None
    for path, kind in jobs:
        if kind == "netlist":
            netlist_text = identification_netlist(ident, netlist_kind)
            out.append((path, netlist_text))
        elif kind == "plot":
            from ._plot_files import figure_bytes
            from ._plot_style import pyplot as _pyplot

            plots = step_plots(result) if step else identification_plots(ident)
            fmt = path.suffix.lower().lstrip(".")
            first = True
            for key, plot in plots.items():
                target = path if first else path.with_name(f"{path.stem}-{key.replace('_', '-')}{path.suffix}")
                out.append((target, figure_bytes(plot, fmt, salt=target.stem)))
                _pyplot().close(plot)
                first = False
        elif kind == "touchstone":
            out.append((path, _touchstone_payload(ident, touchstone_grid, touchstone_reference_ohm)))
        elif kind == "report":
            out.append((path, None))  # filled below, once the netlist is known
    if json_path is not None:
        from .._json import json_text

        out.insert(0, (check_output_path(json_path, force), json_text(result.to_dict())))
    for path, _ in out:
        check_output_path(path, force)
    staged = []
    for path, data in out:
        if data is None:
            from ._report import report_html

            # The netlist has its own file; the page stays one page.
            rep = step_report(result, command) if step else identification_report(ident, command)
            data = report_html(rep)
        if callable(data):
            data = data()
        staged.append((path, data))
    # All files or none: a failure while writing (a full disk) leaves no
    # partial set, the JSON without its netlist say.
    return write_all_atomic(staged, force)


def _touchstone_payload(ident, grid, r0):
    import warnings

    from .._errors import MeasurementWarning
    from ..io._touchstone_export import parse_grid, touchstone_text

    if grid is None:
        f = np.asarray(ident.sweep.f_hz, dtype=float)
    elif isinstance(grid, str):
        f = parse_grid(grid)
    else:
        f = np.asarray(grid, dtype=float)
    band = tuple(ident.fit.valid_band_hz) if ident.model != "rational" else ident.sweep.band_hz
    comments = [
        f"zfit {__version__}: one-port model of {ident.sweep.source}",
        f"model: {ident.model}, {ident.topology}",
        f"band of validity: {format_band(band[0], band[1])}",
    ]
    comments += [f"{k} = {format_value_std(e.value, e.std, e.unit)}" for k, e in ident.parameters.items() if e.std]
    if f[0] < band[0] * (1 - 1e-9) or f[-1] > band[1] * (1 + 1e-9):
        text = (f"Touchstone grid {format_band(f[0], f[-1])} reaches beyond the band the model "
                f"describes ({format_band(band[0], band[1])}): those points are an extrapolation")
        warnings.warn(text, MeasurementWarning, stacklevel=3)
        comments.append("WARNING: " + text)
    return touchstone_text(f, ident.impedance(f), reference_ohm=r0, comments=comments)


def _step_identification(result):
    ident = getattr(result, "impedance", None)
    if ident is not None and hasattr(ident, "parameters") and hasattr(ident, "sweep"):
        return ident
    ident = getattr(result, "identification", None)
    if ident is not None and hasattr(ident, "parameters"):
        return ident
    return None

"""A lot of parts: identify every sweep, check it against limits, summarise the lot.

The work of one part (read the sweep, identify it, write its JSON and plot)
is a pure function of its task, run in a local process pool, in this
process, or on the workers of a Dask distributed scheduler: the summary
files are built in the calling process from the per-part results, sorted by
file name, so they are byte-identical whichever way the work was spread.

Outputs in the ``out`` folder:

``<part>.json``
    the ``zfit.identify/1`` result of each part (same contract as
    ``zfit identify --json``), and ``<part>.png`` with ``plot=True``;
``summary.csv``
    one row per part (columns in ``docs/batch.md``);
``lot.csv``, ``lot.json``
    per limited quantity: count, verdicts, mean, standard deviation, min,
    max and process capability.

Process capability of a normal distribution (Montgomery, *Introduction to
Statistical Quality Control*, 7th ed., Wiley, 2013, section 8.3; the
indices of ISO 22514-2:2017)::

    Cp  = (USL - LSL) / (6 s)
    Cpk = min(USL - mean, mean - LSL) / (3 s)

with the lot's sample standard deviation ``s`` (one-sided limits use the
one side that exists).  With no rational subgroups, ``s`` is the overall
spread, which ISO 22514-2 calls a *performance* index (Ppk); it includes
the measurement's own uncertainty, so the figure is conservative.
"""

from __future__ import annotations

import csv
import glob
import io
import json
import math
import os
import sys
import threading
import time
import warnings
from dataclasses import dataclass, field
from pathlib import Path
from typing import Mapping, Sequence

from .._errors import ZfitError, ZfitInputError
from .._json import json_text
from ._limits import PARAMETER_UNITS, VERDICTS, Limits, decide, figure_name
from ..io._sweep_file import TABLE_EXTENSIONS, TOUCHSTONE_EXTENSIONS

__all__ = [
    "ReadOptions",
    "PartTask",
    "PartOutcome",
    "PartRow",
    "QuantityStats",
    "LotSummary",
    "BatchResult",
    "SimulatedPart",
    "SWEEP_SUFFIXES",
    "expand_inputs",
    "run_batch",
    "part_row",
    "lot_summary",
    "process_capability",
    "summary_csv_text",
    "lot_csv_text",
    "lot_json_text",
    "lot_text",
    "write_simulated_lot",
    "Progress",
]

#: File suffixes taken from a folder given as input: every kind the readers read.
SWEEP_SUFFIXES = (*TOUCHSTONE_EXTENSIONS, *TABLE_EXTENSIONS)

#: Parameter keys in the order of the summary's columns.
_PARAM_ORDER = tuple(PARAMETER_UNITS)
_SPOT_KEYS = ("R", "X", "Z_mag", "L_eff", "C_eff", "Q", "D", "ESR")
SUMMARY_NAME, LOT_CSV_NAME, LOT_JSON_NAME = "summary.csv", "lot.csv", "lot.json"
DECISION_RULE = (
    "guarded acceptance (JCGM 106:2012, 8.3.2): pass when value +- k u lies inside the limits, "
    "fail when the value lies outside, indeterminate otherwise"
)


# ---------------------------------------------------------------------------
# Tasks and their outcomes


@dataclass(frozen=True)
class ReadOptions:
    """How to read each sweep (the shared reading options of the CLI).

    Attributes
    ----------
    connection : str or None
        ``reflection``, ``shunt-thru`` or ``series-thru`` (needed for .s2p).
    noise_rel, noise_floor : float or None
        Override of the instrument noise model.
    columns : str or None
        Column mapping of a table.
    open_, short, load : str or None
        Fixture-compensation measurements.
    load_value : str or None
        Impedance of the load standard.
    port_delay : str or None
        Port extension delay.
    port_loss : float or None
        Loss of the port-extension line, dB at 1 GHz.
    """

    connection: str | None = None
    noise_rel: float | None = None
    noise_floor: float | None = None
    columns: str | None = None
    open_: str | None = None
    short: str | None = None
    load: str | None = None
    load_value: str | None = None
    port_delay: str | None = None
    port_loss: float | None = None


@dataclass(frozen=True)
class PartTask:
    """The work of one part, self-contained so that it pickles to a worker.

    Attributes
    ----------
    index : int
        Position in the sorted lot.
    path : str
        Absolute path of the sweep file.
    name : str
        The file as shown in the summary.
    json_path : str
        Where its identify JSON goes.
    plot_path : str or None
        Where its plot goes, or None.
    model : str
        ``auto``, ``inductor``, ``capacitor`` or ``rational``.
    at : tuple of float
        Spot frequencies (Hz) to read out.
    read : ReadOptions
        How to read the sweep.
    """

    index: int
    path: str
    name: str
    json_path: str
    plot_path: str | None
    model: str = "auto"
    at: tuple = ()
    read: ReadOptions = field(default_factory=ReadOptions)


@dataclass(frozen=True)
class PartOutcome:
    """What the work of one part produced.

    Attributes
    ----------
    index : int
    name : str
    result : dict or None
        The ``zfit.identify/1`` JSON object (the parts the summary needs:
        model, topology, parameters, srf, fit, spot, warnings), None on error.
    error : str or None
        One line saying what went wrong.
    warnings : tuple of str
        Measurement warnings raised while reading and identifying.
    skipped : bool
        Whether an up-to-date result was reused.
    seconds : float
        Time spent on the part.
    """

    index: int
    name: str
    result: dict | None
    error: str | None = None
    warnings: tuple = ()
    skipped: bool = False
    seconds: float = 0.0


# Warnings are routed to the part whose thread raised them: Dask workers run
# several parts at once in threads, and `warnings.catch_warnings` is not
# thread-safe (it swaps process-wide state).
_sink = threading.local()
_route_lock = threading.Lock()


def _route(message, category, filename, lineno, file=None, line=None):
    parts = getattr(_sink, "parts", None)
    if parts is not None:
        parts.append(str(message))
    else:
        _route.fallback(message, category, filename, lineno, file, line)


_route.fallback = warnings.showwarning


def _install_route():
    with _route_lock:
        if warnings.showwarning is not _route:
            _route.fallback = warnings.showwarning
            warnings.showwarning = _route
        first = warnings.filters[0] if warnings.filters else None
        if first is None or first[0] != "always" or first[2] is not Warning or first[1] is not None:
            warnings.simplefilter("always", Warning)


def _one_line(exc: BaseException, task: PartTask) -> str:
    if isinstance(exc, ZfitInputError):
        text = exc.one_line()
    elif isinstance(exc, OSError):
        text = f"{exc.filename or task.path}: {exc.strerror or exc}"
    elif isinstance(exc, ZfitError):
        text = str(exc)
    else:
        text = f"internal error: {type(exc).__name__}: {exc}"
    text = " ".join(text.split())
    return text.replace(task.path, task.name)


def _read_sweep(task: PartTask):
    from ..io._prepared import prepared_sweep

    r = task.read
    opt = lambda p: None if p is None else Path(p)  # noqa: E731
    return prepared_sweep(
        Path(task.path), connection=r.connection, noise_rel=r.noise_rel, noise_floor=r.noise_floor,
        columns=r.columns, open_=opt(r.open_), short=opt(r.short), load=opt(r.load),
        load_value=r.load_value, port_delay=r.port_delay, port_loss=r.port_loss,
    )


def result_json_text(result: dict) -> str:
    """Return the JSON text of an identify result as the batch writes it."""
    return json_text(result)


def _identify_part(task: PartTask) -> PartOutcome:
    from .._atomic import write_atomic
    from ..identification._pipeline import identify

    t0 = time.perf_counter()
    _install_route()
    caught: list[str] = []
    _sink.parts = caught
    try:
        sweep = _read_sweep(task)
        ident = identify(sweep, model=task.model, at=task.at)
        result = ident.to_dict()
        write_atomic(task.json_path, result_json_text(result), force=True)
        if task.plot_path is not None:
            from ..outputs._outputs import write_outputs

            write_outputs(ident, plot=task.plot_path, force=True)
        error = None
    except Exception as exc:  # one bad part must not stop the lot
        result, error = None, _one_line(exc, task)
    finally:
        _sink.parts = None
    seen = []
    for w in caught:
        w = " ".join(w.replace(task.path, task.name).split())
        # The summary row names the file already.
        w = w[len(task.name) + 2:] if w.startswith(task.name + ": ") else w
        if w not in seen:
            seen.append(w)
    return PartOutcome(task.index, task.name, None if result is None else _slim(result), error, tuple(seen),
                       False, time.perf_counter() - t0)


#: What the summary needs of a result: the rest stays in the part's JSON file,
#: so that a lot of many thousands of parts costs little memory and pickling.
_ROW_KEYS = ("schema", "zfit_version", "source", "connection", "model", "topology", "parameters", "srf",
             "fit", "spot", "warnings")


def _slim(result: dict) -> dict:
    return {k: result[k] for k in _ROW_KEYS if k in result}


#: (get, set) thread-count functions of the OpenBLAS builds in use: plain,
#: 64-bit integer, and the prefixed builds that numpy and scipy wheels ship.
_BLAS_SYMBOLS = (
    ("openblas_get_num_threads", "openblas_set_num_threads"),
    ("openblas_get_num_threads64_", "openblas_set_num_threads64_"),
    ("scipy_openblas_get_num_threads", "scipy_openblas_set_num_threads"),
    ("scipy_openblas_get_num_threads64_", "scipy_openblas_set_num_threads64_"),
)


def _blas_libraries() -> list:
    """The OpenBLAS libraries loaded in this process (numpy and scipy each
    bring their own), as ctypes handles; empty where that cannot be told."""
    import ctypes

    try:
        with open("/proc/self/maps") as fh:
            paths = sorted({ln.split()[-1] for ln in fh if "openblas" in ln.lower() and ".so" in ln})
    except OSError:
        return []
    libs = []
    for path in paths:
        try:
            libs.append(ctypes.CDLL(path))
        except OSError:
            pass
    return libs


def _blas_threads(n: int | None) -> list:
    """Set the thread count of every loaded OpenBLAS to `n` (None: leave);
    return the previous counts, for `_restore_blas_threads`.

    One part's linear algebra is small (hundreds of rows, a few columns):
    OpenBLAS threads do not speed it up, and beside worker processes they
    oversubscribe the cores and spin.  Measured on a lot of 200 parts of 801
    points: 2.7 times the CPU time with OpenBLAS's default of one thread per
    core.  The usual remedy (OPENBLAS_NUM_THREADS=1) only works before numpy
    is imported, hence the library calls.
    """
    before = []
    for lib in _blas_libraries():
        for get_name, set_name in _BLAS_SYMBOLS:
            get, put = getattr(lib, get_name, None), getattr(lib, set_name, None)
            if get is not None and put is not None:
                before.append((put, int(get())))
                if n is not None:
                    put(int(n))
                break
    return before


def _restore_blas_threads(before: list) -> None:
    for put, n in before:
        put(n)


def _worker_init() -> None:
    _blas_threads(1)


def _identify_chunk(tasks: Sequence[PartTask]) -> list[PartOutcome]:
    return [_identify_part(t) for t in tasks]


def _close(a: float, b: float) -> bool:
    return abs(a - b) <= 1e-9 * max(abs(a), abs(b))


def _reusable(task: PartTask, force: bool) -> dict | None:
    """The stored result of `task` if it is newer than the input and covers
    what is asked (model, spot frequencies, plot), else None."""
    if force:
        return None
    try:
        t_in = os.stat(task.path).st_mtime_ns
        if os.stat(task.json_path).st_mtime_ns <= t_in:
            return None
        if task.plot_path is not None and os.stat(task.plot_path).st_mtime_ns <= t_in:
            return None
        with open(task.json_path, encoding="utf-8") as fh:
            result = json.load(fh)
    except (OSError, ValueError):
        return None
    if not isinstance(result, dict) or result.get("schema") != "zfit.identify/1":
        return None
    from .._version import __version__

    # Another version of zfit may identify differently: its result is redone.
    if result.get("zfit_version", __version__) != __version__:
        return None
    if task.model != "auto" and result.get("model") != task.model:
        return None
    have = [s.get("f_hz") for s in result.get("spot") or () if isinstance(s, dict)]
    for f in task.at:
        if not any(isinstance(h, (int, float)) and _close(f, h) for h in have):
            return None
    return result


# ---------------------------------------------------------------------------
# Inputs


def _is_batch_output(folder: Path) -> bool:
    try:
        with open(folder / LOT_JSON_NAME, "rb") as fh:
            return b'"zfit.batch-lot/1"' in fh.read(256)
    except OSError:
        return False


def expand_inputs(inputs: Sequence, exclude=None) -> list[tuple[Path, str]]:
    """Return the sweep files named by `inputs`, sorted and without repeats.

    Parameters
    ----------
    inputs : sequence of str or os.PathLike
        Files, folders (searched recursively for `SWEEP_SUFFIXES`; hidden
        entries and the output folders of earlier runs skipped) and glob
        patterns (``lot7/*.s1p``, ``**`` allowed).
    exclude : str or os.PathLike, optional
        A folder whose content is never taken (the output folder).

    Returns
    -------
    list of (pathlib.Path, str)
        The absolute path and the name shown in the summary (as given, or
        the folder joined with the file's relative path), sorted by name.

    Raises
    ------
    ZfitInputError
        When an input names nothing that exists, or no sweep file is found.
    """
    ex = None if exclude is None else Path(exclude).resolve()
    found: dict[Path, str] = {}

    def take(path: Path, name: str):
        resolved = path.resolve()
        if ex is not None and (resolved == ex or ex in resolved.parents):
            return
        found.setdefault(resolved, Path(name).as_posix())

    for item in inputs:
        text = os.fspath(item)
        p = Path(text)
        if p.is_dir():
            for root, dirs, files in os.walk(p):
                if LOT_JSON_NAME in files and _is_batch_output(Path(root)):
                    dirs[:] = []  # an earlier run's output folder: its CSVs are not sweeps
                    continue
                dirs[:] = sorted(d for d in dirs if not d.startswith("."))
                for fn in sorted(files):
                    if not fn.startswith(".") and Path(fn).suffix.lower() in SWEEP_SUFFIXES:
                        full = Path(root) / fn
                        take(full, str(full))
        elif p.is_file():
            take(p, text)
        elif glob.has_magic(text):
            hits = sorted(glob.glob(text, recursive=True))
            files = [h for h in hits if Path(h).is_file()]
            if not files:
                raise ZfitInputError(f"no file matches the pattern {text!r}")
            for h in files:
                take(Path(h), h)
        else:
            raise ZfitInputError("no such file or folder", text)
    if not found:
        raise ZfitInputError(
            f"no sweep files found in {', '.join(os.fspath(i) for i in inputs)} "
            f"(looked for {', '.join(SWEEP_SUFFIXES)})")
    return sorted(((p, n) for p, n in found.items()), key=lambda pn: (pn[1], str(pn[0])))


def _output_names(items: Sequence[tuple[Path, str]]) -> list[str]:
    """Output stems, one per input: the path relative to the inputs' common
    folder, without its suffix (with it where two inputs would collide)."""
    paths = [p for p, _ in items]
    root = Path(os.path.commonpath([str(p.parent) for p in paths])) if paths else Path(".")
    rels = [p.relative_to(root) for p in paths]
    plain = [r.with_suffix("").as_posix() for r in rels]
    count: dict[str, int] = {}
    for p in plain:
        count[p] = count.get(p, 0) + 1
    return [plain[i] if count[plain[i]] == 1 else rels[i].as_posix() for i in range(len(rels))]


# ---------------------------------------------------------------------------
# Rows and the lot


def _pair(d) -> tuple:
    if isinstance(d, dict):
        v, s = d.get("value"), d.get("std")
    elif isinstance(d, (list, tuple)) and len(d) >= 2:
        v, s = d[0], d[1]
    else:
        v, s = d, None
    ok = lambda x: isinstance(x, (int, float)) and not isinstance(x, bool) and math.isfinite(x)  # noqa: E731
    return (float(v) if ok(v) else None, float(s) if ok(s) else None)


def _spot_figures(spot: dict) -> dict:
    """Figures of one spot readout as {quantity: (value, std)}: accepts both
    ``{"Q": {"value", "std"}}`` and ``{"Q": v, "Q_std": s}``."""
    out = {}
    for key, val in spot.items():
        if key == "f_hz" or key.endswith("_std"):
            continue
        if isinstance(val, dict):
            out[key] = _pair(val)
        elif isinstance(val, (int, float)) and not isinstance(val, bool):
            out[key] = _pair((val, spot.get(key + "_std")))
    if "ESR" not in out and "R" in out:
        out["ESR"] = out["R"]
    if "Z_mag" not in out and "R" in out and "X" in out and None not in (out["R"][0], out["X"][0]):
        r, x = out["R"], out["X"]
        mag = math.hypot(r[0], x[0])
        std = None
        if r[1] is not None and x[1] is not None and mag > 0:
            std = math.hypot(r[0] * r[1], x[0] * x[1]) / mag
        out["Z_mag"] = (mag, std)
    return out


def part_figures(result: Mapping) -> dict:
    """Return every figure of an identify result by name: parameters
    (``L``), ``SRF`` (value, std, lower bound) and spot figures (``Q@1MHz``).

    Parameters
    ----------
    result : mapping
        A ``zfit.identify/1`` JSON object.
    """
    figs: dict[str, tuple] = {}
    for key, val in (result.get("parameters") or {}).items():
        figs[key] = _pair(val)
    srf = result.get("srf") or {}
    v, s = _pair({"value": srf.get("value_hz"), "std": srf.get("std_hz")})
    bound = srf.get("bound_hz") if srf.get("where") == "above-band" else None
    figs["SRF"] = (v, s, bound if isinstance(bound, (int, float)) else None)
    for spot in result.get("spot") or ():
        if not isinstance(spot, dict) or not isinstance(spot.get("f_hz"), (int, float)):
            continue
        for q, pair in _spot_figures(spot).items():
            figs[figure_name(q, float(spot["f_hz"]))] = pair
    return figs


@dataclass(frozen=True)
class PartRow:
    """One row of the summary: a part and its verdict.

    Attributes
    ----------
    name : str
        The file.
    model, topology : str
        What was identified ("" on error).
    figures : dict
        Figure name -> (value, std[, bound]).
    srf_where : str
        Where the SRF lies (``in-band``, ``above-band``, ...).
    fit_rms : float or None
        RMS normalised residual of the circuit fit.
    verdict : {'pass', 'indeterminate', 'fail', 'error', 'unchecked'}
        ``unchecked`` when the run has no limits.
    failed, indeterminate : tuple of str
        Names of the limits that failed / whose conformity was not shown.
    reasons : tuple of str
        One line per limit that did not pass.
    error : str or None
        Why the part has no result.
    warnings : tuple of str
        Measurement warnings.
    """

    name: str
    model: str
    topology: str
    figures: dict
    srf_where: str
    fit_rms: float | None
    verdict: str
    failed: tuple = ()
    indeterminate: tuple = ()
    reasons: tuple = ()
    error: str | None = None
    warnings: tuple = ()


def part_row(outcome: PartOutcome, limits: Limits | None = None) -> PartRow:
    """Return the summary row of one part.

    Parameters
    ----------
    outcome : PartOutcome
        What the part's work produced.
    limits : Limits, optional
        The lot's limits; without them the verdict is ``unchecked``.
    """
    res = outcome.result
    if res is None:
        return PartRow(outcome.name, "", "", {}, "", None, "error", error=outcome.error or "no result",
                       warnings=outcome.warnings)
    said = [" ".join(str(w).split()) for w in res.get("warnings") or ()]
    said += [w for w in outcome.warnings if w not in said]
    figs = part_figures(res)
    fit = res.get("fit") or {}
    rms = fit.get("rms_normalized_residual")
    rms = float(rms) if isinstance(rms, (int, float)) and math.isfinite(rms) else None
    where = str((res.get("srf") or {}).get("where") or "")
    if limits is None:
        verdict, failed, ind, reasons = "unchecked", (), (), ()
    else:
        dec = decide(limits, figs)
        verdict, failed, ind = dec.verdict, dec.failed, dec.indeterminate
        reasons = tuple(d.reason for d in dec.decisions if d.verdict != "pass")
    return PartRow(outcome.name, str(res.get("model", "")), str(res.get("topology", "")), figs, where, rms,
                   verdict, failed, ind, reasons, None, tuple(said))


def process_capability(mean: float, std: float, lower: float | None, upper: float | None) -> tuple:
    """Return (Cp, Cpk) of a normal distribution against the limits.

    Parameters
    ----------
    mean, std : float
        Sample mean and standard deviation of the lot.
    lower, upper : float or None
        Specification limits (None: that side is open).

    Returns
    -------
    (float or None, float or None)
        ``Cp = (USL - LSL) / (6 std)`` (two-sided limits only) and
        ``Cpk = min(USL - mean, mean - LSL) / (3 std)`` over the sides that
        exist; None when ``std`` is not positive.

    References
    ----------
    D. C. Montgomery, Introduction to Statistical Quality Control, 7th ed.,
    Wiley, 2013, section 8.3 (process capability ratios); ISO 22514-2:2017,
    Statistical methods in process management -- Capability and
    performance -- Part 2.
    """
    if not (std > 0 and math.isfinite(std)) or (lower is None and upper is None):
        return None, None
    cp = (upper - lower) / (6.0 * std) if lower is not None and upper is not None else None
    sides = []
    if upper is not None:
        sides.append((upper - mean) / (3.0 * std))
    if lower is not None:
        sides.append((mean - lower) / (3.0 * std))
    return cp, min(sides)


def _ppm_out(mean, std, lower, upper):
    if not (std > 0 and math.isfinite(std)):
        return None
    p = 0.0
    if upper is not None:
        p += 0.5 * math.erfc((upper - mean) / (std * math.sqrt(2.0)))
    if lower is not None:
        p += 0.5 * math.erfc((mean - lower) / (std * math.sqrt(2.0)))
    return 1e6 * p


@dataclass(frozen=True)
class QuantityStats:
    """Statistics of one quantity over the lot.

    Attributes
    ----------
    name : str
        Figure name (``L``, ``SRF``, ``Q@1MHz``).
    unit : str
    lower, upper : float or None
        Its limits (None: not limited on that side).
    limit_text : str
        The limit in words, "" when not limited.
    n : int
        Parts with a value.
    n_pass, n_fail, n_indeterminate : int
        Verdicts on this limit.
    mean, std, min, max : float or None
        Sample mean, standard deviation (n - 1), extremes.
    u_rms : float or None
        RMS of the parts' standard uncertainties: when it is a sizeable part
        of `std`, the measurement, not the process, sets the spread.
    cp, cpk : float or None
        Process capability (see `process_capability`).
    ppm_out : float or None
        Expected fraction outside the limits of a normal distribution with
        this mean and std, in parts per million.
    """

    name: str
    unit: str
    lower: float | None
    upper: float | None
    limit_text: str
    n: int
    n_pass: int
    n_fail: int
    n_indeterminate: int
    mean: float | None
    std: float | None
    min: float | None
    max: float | None
    u_rms: float | None
    cp: float | None
    cpk: float | None
    ppm_out: float | None


@dataclass(frozen=True)
class LotSummary:
    """The lot at a glance.

    Attributes
    ----------
    count : int
        Parts in the lot.
    verdicts : dict
        Count of each verdict (``pass``, ``indeterminate``, ``fail``,
        ``error``, ``unchecked``).
    quantities : tuple of QuantityStats
        One per limited quantity (per parameter when there are no limits).
    limits_path : str
        The limits file, "" without limits.
    guard_band_k : float or None
        The file's guard band (None without limits).
    """

    count: int
    verdicts: dict
    quantities: tuple
    limits_path: str = ""
    guard_band_k: float | None = None


def _unit_of(name: str) -> str:
    from ._limits import SPOT_UNITS

    q = name.split("@", 1)[0]
    if "@" in name:
        return SPOT_UNITS.get(q, "")
    return "Hz" if q == "SRF" else PARAMETER_UNITS.get(q, "")


def lot_summary(rows: Sequence[PartRow], limits: Limits | None = None) -> LotSummary:
    """Return the statistics of the lot.

    Parameters
    ----------
    rows : sequence of PartRow
        The parts, in summary order.
    limits : Limits, optional
        The lot's limits: statistics and capability for each limited
        quantity; without limits, statistics of each parameter.
    """
    import numpy as np

    verdicts = {v: 0 for v in (*VERDICTS, "unchecked")}
    for r in rows:
        verdicts[r.verdict] = verdicts.get(r.verdict, 0) + 1
    if limits is not None:
        targets = [(lim.name, lim) for lim in limits.limits]
    else:
        keys = {k for r in rows for k in r.figures if k in PARAMETER_UNITS}
        targets = [(k, None) for k in _PARAM_ORDER if k in keys]
        if any(r.figures.get("SRF", (None,))[0] is not None for r in rows):
            targets.append(("SRF", None))
    stats = []
    for name, lim in targets:
        vals, stds = [], []
        n_pass = n_fail = n_ind = 0
        for r in rows:
            if r.error is not None:
                continue
            v = r.figures.get(name, (None, None))
            if v[0] is not None:
                vals.append(v[0])
                if v[1] is not None:
                    stds.append(v[1])
            if lim is not None:
                if name in r.failed:
                    n_fail += 1
                elif name in r.indeterminate:
                    n_ind += 1
                else:
                    n_pass += 1
        a = np.asarray(vals, dtype=float)
        mean = float(np.mean(a)) if a.size else None
        std = float(np.std(a, ddof=1)) if a.size >= 2 else None
        lower = lim.lower if lim is not None else None
        upper = lim.upper if lim is not None else None
        cp = cpk = ppm = None
        if std is not None:
            cp, cpk = process_capability(mean, std, lower, upper)
            if lim is not None:
                ppm = _ppm_out(mean, std, lower, upper)
        u_rms = float(np.sqrt(np.mean(np.square(stds)))) if stds else None
        stats.append(QuantityStats(
            name, lim.unit if lim is not None else _unit_of(name), lower, upper,
            lim.text if lim is not None else "", int(a.size), n_pass, n_fail, n_ind, mean, std,
            float(a.min()) if a.size else None, float(a.max()) if a.size else None, u_rms, cp, cpk, ppm))
    return LotSummary(len(rows), verdicts, tuple(stats), limits.path if limits else "",
                      limits.guard_band_k if limits else None)


def _num(x) -> str:
    # Ten significant digits: far below any uncertainty, and it keeps the
    # summary byte-identical across runs even if a worker's BLAS rounds the
    # last bit differently.
    if x is None:
        return ""
    return format(float(x), ".10g")


def _spot_columns(rows: Sequence[PartRow], limits: Limits | None, at: Sequence[float]) -> list[str]:
    freqs = sorted({*(limits.frequencies_hz if limits else ()), *at})
    models = {r.model for r in rows}
    cols = []
    limited = set(limits.names) if limits else set()
    for f in freqs:
        for q in _SPOT_KEYS:
            name = figure_name(q, f)
            ind, cap = "inductor" in models, "capacitor" in models
            asked = f in at and (q in ("R", "X") or (q == "L_eff" and ind) or (q == "C_eff" and cap))
            if name in limited or asked or (q == "Q" and ind) or (q == "D" and cap):
                cols.append(name)
    return cols


def summary_csv_text(rows: Sequence[PartRow], limits: Limits | None = None, at: Sequence[float] = ()) -> str:
    """Return the summary CSV: one row per part, values in SI units.

    Columns: ``file, verdict, model, topology``, each parameter and its
    ``_std``, ``SRF_hz, SRF_std_hz, SRF_where, SRF_bound_hz``, figures at
    the limit frequencies (``Q@1MHz, Q@1MHz_std``), ``fit_rms``,
    ``failed_limits, indeterminate_limits`` (``;``-separated names),
    ``warnings`` and ``error``.

    Parameters
    ----------
    rows : sequence of PartRow
        The parts, in summary order.
    limits : Limits, optional
        The lot's limits (decide the spot columns).
    at : sequence of float
        Extra spot frequencies asked for.
    """
    keys = {k for r in rows for k in r.figures}
    if limits:
        keys |= {lim.name for lim in limits.limits if not lim.is_spot}
    params = [k for k in _PARAM_ORDER if k in keys]
    spots = _spot_columns(rows, limits, at)
    header = ["file", "verdict", "model", "topology"]
    for k in params:
        header += [k, f"{k}_std"]
    header += ["SRF_hz", "SRF_std_hz", "SRF_where", "SRF_bound_hz"]
    for s in spots:
        header += [s, f"{s}_std"]
    header += ["fit_rms", "failed_limits", "indeterminate_limits", "warnings", "error"]
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(header)
    for r in rows:
        line = [r.name, r.verdict, r.model, r.topology]
        for k in params:
            v = r.figures.get(k, (None, None))
            line += [_num(v[0]), _num(v[1])]
        srf = r.figures.get("SRF", (None, None, None))
        bound = srf[2] if len(srf) > 2 else None
        line += [_num(srf[0]), _num(srf[1]), r.srf_where, _num(bound)]
        for s in spots:
            v = r.figures.get(s, (None, None))
            line += [_num(v[0]), _num(v[1])]
        line += [_num(r.fit_rms), ";".join(r.failed), ";".join(r.indeterminate), " | ".join(r.warnings),
                 r.error or ""]
        w.writerow(line)
    return buf.getvalue()


_LOT_FIELDS = ("quantity", "unit", "limits", "lower", "upper", "n", "pass", "fail", "indeterminate",
               "mean", "std", "min", "max", "u_rms", "Cp", "Cpk", "ppm_out")


def _stat_values(q: QuantityStats) -> list:
    return [q.name, q.unit, q.limit_text, q.lower, q.upper, q.n, q.n_pass, q.n_fail, q.n_indeterminate,
            q.mean, q.std, q.min, q.max, q.u_rms, q.cp, q.cpk, q.ppm_out]


def lot_csv_text(lot: LotSummary) -> str:
    """Return the lot statistics as CSV, one row per quantity.

    Parameters
    ----------
    lot : LotSummary
        The statistics.
    """
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(_LOT_FIELDS)
    for q in lot.quantities:
        w.writerow([_num(x) if isinstance(x, float) or x is None else x for x in _stat_values(q)])
    return buf.getvalue()


def lot_json_text(lot: LotSummary) -> str:
    """Return the lot statistics as JSON (``"schema": "zfit.batch-lot/1"``).

    Parameters
    ----------
    lot : LotSummary
        The statistics.
    """
    def clean(x):
        return float(_num(x)) if isinstance(x, float) else x

    doc = {
        "schema": "zfit.batch-lot/1",
        "count": lot.count,
        "verdicts": dict(lot.verdicts),
        "decision_rule": DECISION_RULE if lot.limits_path else None,
        "guard_band_k": lot.guard_band_k,
        "limits_file": lot.limits_path or None,
        "capability": "Cp = (USL-LSL)/(6 s), Cpk = min(USL-mean, mean-LSL)/(3 s), s = sample std of the lot "
                      "(Montgomery 2013, 8.3; ISO 22514-2)",
        "quantities": [{k: clean(v) for k, v in zip(_LOT_FIELDS, _stat_values(q))} for q in lot.quantities],
    }
    return json_text(doc)


def lot_text(lot: LotSummary) -> str:
    """Return the lot summary as the command line prints it.

    Parameters
    ----------
    lot : LotSummary
        The statistics.
    """
    from .._units import format_eng

    v = lot.verdicts
    if lot.limits_path:
        head = (f"lot: {lot.count} parts: {v.get('pass', 0)} pass, {v.get('fail', 0)} fail, "
                f"{v.get('indeterminate', 0)} indeterminate, {v.get('error', 0)} error")
    else:
        head = f"lot: {lot.count} parts: {lot.count - v.get('error', 0)} identified, {v.get('error', 0)} error"
    lines = [head]
    if lot.limits_path:
        lines.append(f"decision rule: guarded acceptance per JCGM 106:2012 (8.3.2), guard band "
                     f"{lot.guard_band_k:g} standard uncertainties; indeterminate = inside but not shown to conform")
    table = [("quantity", "limits", "n", "pass", "fail", "indet", "mean", "std", "min", "max", "u_rms", "Cpk")]
    for q in lot.quantities:
        e = lambda x: format_eng(x, q.unit) if x is not None else "-"  # noqa: E731
        table.append((q.name, q.limit_text or "-", str(q.n),
                      *((str(q.n_pass), str(q.n_fail), str(q.n_indeterminate)) if q.limit_text else ("-",) * 3),
                      e(q.mean), e(q.std), e(q.min), e(q.max), e(q.u_rms),
                      f"{q.cpk:.2f}" if q.cpk is not None else "-"))
    if len(table) > 1:
        widths = [max(len(row[i]) for row in table) for i in range(len(table[0]))]
        for row in table:
            lines.append("  ".join(c.ljust(wd) if i < 2 else c.rjust(wd) for i, (c, wd) in enumerate(zip(row, widths))).rstrip())
        lines.append("Cpk = min(USL - mean, mean - LSL) / (3 s), normal distribution, s = lot std "
                     "(Montgomery 2013, 8.3; ISO 22514-2); u_rms = RMS measurement uncertainty")
    return "\n".join(lines)


# ---------------------------------------------------------------------------
# Progress


class Progress:
    """A progress line on standard error: a bar with count, rate and ETA on a
    terminal, plain log lines otherwise.

    Parameters
    ----------
    total : int
        Parts in the run.
    stream : file, optional
        Where to write (standard error by default).
    tty : bool, optional
        Draw a bar (default: whether `stream` is a terminal).
    interval : float
        Seconds between plain log lines (bar redraws are 10 per second).
    """

    def __init__(self, total: int, stream=None, tty: bool | None = None, interval: float = 5.0):
        self.total = int(total)
        self.stream = sys.stderr if stream is None else stream
        self.tty = bool(getattr(self.stream, "isatty", lambda: False)()) if tty is None else tty
        self.interval = interval
        self.done = 0
        self.skipped = 0
        self.errors = 0
        self.t0 = time.monotonic()
        self._last = -1e9
        self._drawn = False

    def _status(self) -> str:
        elapsed = time.monotonic() - self.t0
        # Parts reused from an earlier run take no time: they do not count in the rate.
        rate = (self.done - self.skipped) / elapsed if elapsed > 0 else 0.0
        left = self.total - self.done
        eta = left / rate if rate > 0 else None
        eta_text = "--:--" if eta is None else time.strftime("%H:%M:%S" if eta >= 3600 else "%M:%S", time.gmtime(eta))
        err = f", {self.errors} error" if self.errors else ""
        return f"{self.done}/{self.total} parts, {rate:.1f}/s, ETA {eta_text}{err}"

    def _write(self, text: str):
        try:
            self.stream.write(text)
            self.stream.flush()
        except (OSError, ValueError):
            pass

    def update(self, n: int = 1, errors: int = 0, force: bool = False):
        """Count `n` more parts done (`errors` of them bad) and redraw when due.

        Parameters
        ----------
        n : int
            Parts finished since the last call.
        errors : int
            How many of them failed to give a result.
        force : bool
            Redraw now, whatever the interval.
        """
        self.done += n
        self.errors += errors
        now = time.monotonic()
        if self.tty:
            if force or now - self._last >= 0.1 or self.done == self.total:
                self._last = now
                width = 28
                filled = int(round(width * self.done / self.total)) if self.total else width
                pct = 100.0 * self.done / self.total if self.total else 100.0
                self._write(f"\r[{'#' * filled}{'.' * (width - filled)}] {pct:3.0f}% {self._status()}\x1b[K")
                self._drawn = True
        elif force or now - self._last >= self.interval or self.done == self.total:
            self._last = now
            self._write(f"zfit batch: {self._status()}\n")

    def skip(self, n: int):
        """Count `n` parts whose earlier result is reused.

        Parameters
        ----------
        n : int
            How many.
        """
        self.skipped += n
        self.update(n)

    def message(self, text: str):
        """Print a line (a bad part, say) without breaking the bar.

        Parameters
        ----------
        text : str
            The line.
        """
        if self.tty and self._drawn:
            self._write("\r\x1b[K" + text + "\n")
            self._last = -1e9
            self.update(0)
        else:
            self._write(text + "\n")

    def close(self):
        """Finish the bar's line."""
        if self.tty and self._drawn:
            self._write("\n")
            self._drawn = False


class _Quiet:
    def update(self, n=1, errors=0, force=False):
        pass

    def skip(self, n):
        pass

    def message(self, text):
        pass

    def close(self):
        pass


# ---------------------------------------------------------------------------
# Running


@dataclass(frozen=True)
class BatchResult:
    """What a batch run produced.

    Attributes
    ----------
    rows : tuple of PartRow
        One per part, sorted by file name.
    lot : LotSummary
        The lot statistics.
    out_dir : pathlib.Path
        The output folder.
    summary_path, lot_csv_path, lot_json_path : pathlib.Path
        The summary files.
    identified : int
        Parts identified in this run.
    skipped : int
        Parts whose up-to-date result was reused.
    errors : int
        Parts without a result.
    seconds : float
        Wall-clock time of the run.
    workers : str
        How the work was run (``in-process``, ``2 local processes``, a
        Dask scheduler's address).
    """

    rows: tuple
    lot: LotSummary
    out_dir: Path
    summary_path: Path
    lot_csv_path: Path
    lot_json_path: Path
    identified: int
    skipped: int
    errors: int
    seconds: float
    workers: str


def _chunks(tasks: list, size: int) -> list[list]:
    return [tasks[i:i + size] for i in range(0, len(tasks), size)]


def _chunk_size(n: int, workers: int) -> int:
    # Several chunks per worker keep the load balanced at the end of the run;
    # a chunk of a few parts makes the per-task overhead (pickling, queueing)
    # negligible against a part's identification.
    return max(1, min(16, math.ceil(n / (8 * max(1, workers)))))


def _needs_skrf(tasks, sample: int = 8) -> bool:
    """Whether the lot looks like Touchstone 2.0 (read through scikit-rf):
    a peek at the head of the first few files."""
    for t in tasks[:sample]:
        try:
            with open(t.path, "rb") as fh:
                head = fh.read(4096).lower()
        except OSError:
            continue
        if b"[version]" in head:
            return True
    return False


def _preload_modules(plot: bool = False, skrf: bool = False) -> list[str]:
    # What the first part of a worker would otherwise import (measured with
    # ``python -X importtime``: scipy.optimize and friends are about 0.4 s;
    # matplotlib another 0.5 s when plotting; scikit-rf, for Touchstone 2.0
    # only, up to a second).
    mods = ["zfit.lot._batch", "zfit.cli._common", "zfit.io._sweep_file", "zfit.io._touchstone", "zfit.io._table",
            "zfit.fit._vectfit", "zfit.fit._circuits", "zfit.fit._lsq", "zfit.identification._merit", "zfit.identification._pipeline",
            "scipy.optimize", "scipy.linalg"]
    if plot:
        mods += ["zfit.outputs._outputs", "zfit.outputs._plots", "matplotlib", "matplotlib.pyplot"]
    if skrf:
        mods += ["skrf", "skrf.io.touchstone", "skrf.network"]
    return mods


def _import_all(modules) -> None:
    import importlib

    for m in modules:
        try:
            importlib.import_module(m)
        except ImportError:
            pass


def _run_local(tasks, jobs, on_done):
    import concurrent.futures as cf
    import importlib.util
    import multiprocessing as mp

    # Workers must not pay for a fresh interpreter and its imports (numpy,
    # scipy, zfit: about a second each).  In a process without other threads
    # (the command line) a plain fork shares what this process has imported;
    # where threads run (a notebook, a test session with a Dask cluster) a
    # fork is unsafe, so workers fork from a forkserver that preloads zfit.
    mods = _preload_modules(any(t.plot_path for t in tasks), _needs_skrf(tasks))
    methods = mp.get_all_start_methods()
    if "fork" in methods and threading.active_count() == 1:
        ctx = mp.get_context("fork")
        _import_all(mods)
    elif "forkserver" in methods:
        ctx = mp.get_context("forkserver")
        ctx.set_forkserver_preload([m for m in mods if importlib.util.find_spec(m) is not None])
    else:  # pragma: no cover - Windows
        ctx = mp.get_context("spawn")
    size = _chunk_size(len(tasks), jobs)
    chunks = _chunks(tasks, size)
    pool = cf.ProcessPoolExecutor(max_workers=jobs, mp_context=ctx, initializer=_worker_init)
    try:
        pending = {}
        it = iter(chunks)
        # A bounded number of chunks in flight: memory stays flat for a lot
        # of thousands of parts.
        for chunk in it:
            pending[pool.submit(_identify_chunk, chunk)] = chunk
            if len(pending) >= 4 * jobs:
                break
        while pending:
            done, _ = cf.wait(pending, return_when=cf.FIRST_COMPLETED)
            for fut in done:
                chunk = pending.pop(fut)
                try:
                    outs = fut.result()
                except Exception as exc:  # a worker died (out of memory, killed)
                    outs = [PartOutcome(t.index, t.name, None, f"worker lost: {type(exc).__name__}: {exc}")
                            for t in chunk]
                on_done(outs)
                nxt = next(it, None)
                if nxt is not None:
                    pending[pool.submit(_identify_chunk, nxt)] = nxt
    except BaseException:
        # Interrupted (Ctrl-C): drop the queued parts instead of finishing
        # them; the parts already written stay, and a rerun resumes.
        pool.shutdown(wait=False, cancel_futures=True)
        raise
    pool.shutdown(wait=True)


def _run_dask(tasks, address, on_done):
    try:
        from distributed import Client, as_completed
    except ImportError:
        raise ZfitInputError(
            "--cluster needs dask.distributed: pip install 'zfit-passives[cluster]'") from None
    try:
        client = Client(address, timeout=10, set_as_default=False)
    except (OSError, TimeoutError, ValueError) as exc:
        raise ZfitInputError(f"cannot reach the Dask scheduler at {address}: {exc}") from None
    try:
        n = sum(w.get("nthreads", 1) for w in client.scheduler_info().get("workers", {}).values()) or 1
        chunks = _chunks(tasks, _chunk_size(len(tasks), n))
        futures = {}
        for chunk in chunks:
            futures[client.submit(_identify_chunk, chunk, pure=False)] = chunk
        for fut in as_completed(list(futures), loop=client.loop):
            chunk = futures.pop(fut)
            try:
                outs = fut.result()
            except Exception as exc:
                outs = [PartOutcome(t.index, t.name, None, f"worker lost: {type(exc).__name__}: {exc}")
                        for t in chunk]
            on_done(outs)
            fut.release()
        return f"Dask scheduler {address} ({n} threads)"
    finally:
        client.close()


def _run_tasks(todo, cluster, n_jobs, on_done, progress) -> str:
    """Run the parts, calling `on_done` with each finished batch of outcomes;
    return how the work was run, in words."""
    try:
        if not todo:
            return "nothing to do"
        if cluster:
            return _run_dask(todo, cluster, on_done)
        if n_jobs == 1 or len(todo) == 1:
            for t in todo:
                on_done([_identify_part(t)])
            return "in-process"
        n = min(n_jobs, len(todo))
        _run_local(todo, n, on_done)
        return f"{n} local processes"
    finally:
        progress.close()


def run_batch(
    inputs: Sequence,
    out,
    *,
    limits: Limits | None = None,
    model: str | None = None,
    at: Sequence[float] = (),
    read: ReadOptions | None = None,
    jobs: int | None = None,
    cluster: str | None = None,
    plot: bool = False,
    plot_format: str = "png",
    force: bool = False,
    progress=None,
) -> BatchResult:
    """Identify every part of a lot, check it against limits, write the summaries.

    Parameters
    ----------
    inputs : sequence of str or os.PathLike
        Files, folders and glob patterns (see `expand_inputs`).
    out : str or os.PathLike
        Output folder (created; it holds the run's results).
    limits : Limits, optional
        Limits of the lot (`zfit.lot._limits.read_limits`).
    model : str, optional
        ``auto``, ``inductor``, ``capacitor`` or ``rational``; default: the
        limits file's model, else ``auto``.
    at : sequence of float
        Extra spot frequencies (Hz) for the summary, beyond the limits'.
    read : ReadOptions, optional
        How to read the sweeps.
    jobs : int, optional
        Local worker processes (default: all cores); 1 runs in this process.
    cluster : str, optional
        Address of a Dask distributed scheduler (``tcp://host:8786``) to run
        the parts on instead; its workers must see the same file paths.
    plot : bool
        Also write a plot per part.
    plot_format : {'png', 'svg'}
        Its file type.
    force : bool
        Identify every part again, even where an up-to-date result exists.
    progress : Progress or False, optional
        Progress display; default a `Progress` on standard error, False for none.

    Returns
    -------
    BatchResult
        Rows sorted by file name, lot statistics and the summary paths.

    Raises
    ------
    ZfitInputError
        When the inputs name nothing, or the Dask scheduler cannot be reached.
    """
    t0 = time.perf_counter()
    n_jobs = jobs if jobs is not None else (len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity")
                                             else (os.cpu_count() or 1))
    if n_jobs < 1:
        raise ZfitInputError(f"--jobs {n_jobs}: give 1 or more")
    out = Path(out)
    items = expand_inputs(inputs, exclude=out)
    if model is None:
        model = limits.model if limits is not None and limits.model else "auto"
    if model not in ("auto", "inductor", "capacitor", "rational"):
        raise ZfitInputError(f"model {model!r}: use auto, inductor, capacitor or rational")
    if plot_format not in ("png", "svg"):
        raise ZfitInputError(f"plot format {plot_format!r}: use png or svg")
    read = read or ReadOptions()
    freqs = tuple(sorted({*(limits.frequencies_hz if limits else ()), *(float(f) for f in at)}))
    stems = _output_names(items)
    tasks = []
    for i, ((path, name), stem) in enumerate(zip(items, stems)):
        base = out / stem
        tasks.append(PartTask(
            i, str(path), name, str(base.with_name(base.name + ".json")),
            str(base.with_name(base.name + "." + plot_format)) if plot else None, model, freqs, read))
    out.mkdir(parents=True, exist_ok=True)

    if progress is None:
        progress = Progress(len(tasks))
    elif progress is False:
        progress = _Quiet()
    outcomes: dict[int, PartOutcome] = {}
    todo = []
    for t in tasks:
        stored = _reusable(t, force)
        if stored is None:
            todo.append(t)
        else:
            outcomes[t.index] = PartOutcome(t.index, t.name, _slim(stored), skipped=True)
    if outcomes:
        progress.skip(len(outcomes))

    def on_done(outs):
        bad = 0
        for o in outs:
            outcomes[o.index] = o
            if o.error is not None:
                bad += 1
                progress.message(f"zfit: error: {o.error}")
        progress.update(len(outs), bad)

    # The workers route warnings to their parts (see `_install_route`); in
    # this process that changes the warning filters, which are put back here.
    # One BLAS thread for the parts run in this process (and in Dask threads
    # here); put back afterwards.  Worker processes set theirs at start.
    blas = []
    if todo and (cluster or n_jobs == 1 or len(todo) == 1):
        # numpy and scipy each load their own OpenBLAS: import them first.
        _import_all(_preload_modules())
        blas = _blas_threads(1)
    try:
        with warnings.catch_warnings():
            workers = _run_tasks(todo, cluster, n_jobs, on_done, progress)
    finally:
        _restore_blas_threads(blas)

    rows = tuple(part_row(outcomes[t.index], limits) for t in tasks)
    lot = lot_summary(rows, limits)
    from .._atomic import write_atomic

    summary = write_atomic(out / SUMMARY_NAME, summary_csv_text(rows, limits, at=tuple(float(f) for f in at)), force=True)
    lot_csv = write_atomic(out / LOT_CSV_NAME, lot_csv_text(lot), force=True)
    lot_json = write_atomic(out / LOT_JSON_NAME, lot_json_text(lot), force=True)
    skipped = sum(1 for o in outcomes.values() if o.skipped)
    errors = sum(1 for r in rows if r.error is not None)
    return BatchResult(rows, lot, out, summary, lot_csv, lot_json, len(tasks) - skipped - errors, skipped,
                       errors, time.perf_counter() - t0, workers)


# ---------------------------------------------------------------------------
# A simulated lot, for tests, benchmarks and trying the command


@dataclass(frozen=True)
class SimulatedPart:
    """One invented part of a simulated lot.

    Attributes
    ----------
    name : str
        File name (``L017.s1p``, ``C003.csv``).
    model : {'inductor', 'capacitor'}
    params : dict
        True element values in SI units (keys of `zfit.fit._circuits.circuit_impedance`).
    """

    name: str
    model: str
    params: dict


def _touchstone_text(f_hz, columns, z0: float, comment: str) -> str:
    import numpy as np

    body = np.column_stack([f_hz] + [x for c in columns for x in (c.real, c.imag)])
    lines = [f"! {c}" for c in comment.splitlines()] + [f"# HZ S RI R {z0:g}"]
    lines += [" ".join(f"{x:.12e}" for x in row) for row in body]
    return "\n".join(lines) + "\n"


def _table_text(f_hz, z, comment: str) -> str:
    import numpy as np

    lines = [f"# {c}" for c in comment.splitlines()] + ["freq_Hz,R_ohm,X_ohm"]
    body = np.column_stack([f_hz, z.real, z.imag])
    lines += [f"{a:.10e},{b:.12e},{c:.12e}" for a, b, c in body]
    return "\n".join(lines) + "\n"


def write_simulated_lot(folder, parts: Sequence[SimulatedPart], f_hz, *, seed: int = 0,
                        noise_rel: float = 1e-3, noise_floor: float = 1e-5, z0: float = 50.0,
                        impedance=None, connection: str = "shunt-thru") -> list[Path]:
    """Write a lot of simulated sweeps with instrument-like noise.

    ``.s1p`` parts are written as reflection S11 (Touchstone 1.x, RI) and
    ``.s2p`` parts as the full two-port of a shunt-thru or series-thru
    fixture, with complex-circular noise of standard deviation
    ``noise_rel |S| + noise_floor`` on each S (the readers' default noise
    model); ``.csv`` parts as an impedance-analyser table of R and X with
    noise ``noise_rel |Z|``.

    Parameters
    ----------
    folder : str or os.PathLike
        Where to write (created).
    parts : sequence of SimulatedPart
        The parts and their true values.
    f_hz : array_like
        Frequency grid in Hz.
    seed : int
        Seed of the noise; part ``i`` uses ``default_rng([seed, i])``, so a
        part's noise does not depend on the others.
    noise_rel, noise_floor : float
        Noise model (floor on |S|; tables use the relative term only).
    z0 : float
        Reference impedance of the Touchstone files.
    impedance : callable, optional
        ``impedance(model, params, f_hz) -> Z``; default
        `zfit.fit._circuits.circuit_impedance` (an ngspice AC analysis can be
        passed instead).
    connection : {'shunt-thru', 'series-thru'}
        The fixture of the ``.s2p`` parts.

    Returns
    -------
    list of pathlib.Path
        The files written.
    """
    import numpy as np

    if impedance is None:
        from ..fit._circuits import circuit_impedance as impedance
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    f = np.asarray(f_hz, dtype=float)
    paths = []
    for i, part in enumerate(parts):
        rng = np.random.default_rng([seed, i])
        z = np.asarray(impedance(part.model, part.params, f), dtype=complex)
        noise = (rng.standard_normal(f.size) + 1j * rng.standard_normal(f.size)) / math.sqrt(2.0)
        truth = ", ".join(f"{k}={v:.6g}" for k, v in part.params.items())
        comment = f"zfit simulated part {part.name} ({part.model}): {truth}"
        path = folder / part.name
        suffix = path.suffix.lower()
        if suffix == ".csv":
            zn = z + noise * noise_rel * np.abs(z)
            text = _table_text(f, zn, comment)
        elif suffix == ".s2p":
            from ..data._connection import s_from_impedance

            # Shunt part: S11 = S21 - 1; series part: S11 = 1 - S21 (ABCD of a
            # shunt admittance / series impedance, Pozar 2012, Table 4.2).
            s21 = s_from_impedance(z, connection, z0)
            s11 = s21 - 1.0 if connection == "shunt-thru" else 1.0 - s21
            cols = []
            for k, sp in enumerate((s11, s21, s21, s11)):
                nk = (rng.standard_normal(f.size) + 1j * rng.standard_normal(f.size)) / math.sqrt(2.0)
                cols.append(sp + (noise if k == 1 else nk) * (noise_rel * np.abs(sp) + noise_floor))
            text = _touchstone_text(f, cols, z0, comment + f"\nfixture: {connection}")
        else:
            s = (z - z0) / (z + z0)
            sn = s + noise * (noise_rel * np.abs(s) + noise_floor)
            text = _touchstone_text(f, [sn], z0, comment)
        path.write_text(text)
        paths.append(path)
    return paths

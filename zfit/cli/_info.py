"""``zfit info``: what was read from a sweep file."""

from __future__ import annotations

from pathlib import Path
from typing import Annotated, Optional

import typer

from ._common import (
    ColumnsOpt, ConnectionOpt, ForceOpt, LoadOpt, LoadValueOpt, NoiseFloorOpt, NoiseRelOpt, OpenOpt, PortDelayOpt,
    PortLossOpt, ShortOpt, app, echo, emit_json, guarded, sweep_from_options,
)

#: Version tag of the ``--json`` output.
INFO_SCHEMA = "zfit.info/1"


def info_dict(sweep) -> dict:
    """Return the ``zfit.info/1`` JSON object describing `sweep`.

    Keys: ``schema``, ``source``, ``data_format``, ``connection``,
    ``reference_ohm`` (null for impedance data), ``points``, ``f_min_hz``,
    ``f_max_hz``, ``z_min_ohm``, ``z_min_at_hz``, ``z_max_ohm``,
    ``z_max_at_hz``, ``noise_model`` (text), ``noise`` (``{"on": "S"|"Z",
    "rel": float, "floor": float, "source": "given"|"estimated from the
    data"|"default", "f_min_hz", "f_max_hz": the band of the estimate,
    "points": the points it used}`` or null), ``sigma_rel_median``,
    ``sigma_rel_max``, ``active_points`` (points flagged as looking active),
    ``notes`` (list of str), ``warnings`` (list of str).

    Parameters
    ----------
    sweep : Sweep
        What `zfit.read_sweep` returned.
    """
    import numpy as np

    from ..io._sweep_file import conditioning_note

    mag = np.abs(sweep.z_ohm)
    with np.errstate(divide="ignore", invalid="ignore"):
        rel = sweep.sigma_ohm / mag
    i_min, i_max = int(np.argmin(mag)), int(np.argmax(mag))
    warning = conditioning_note(sweep)
    noise = None
    if sweep.noise is not None:
        noise = {"on": "S" if sweep.s_param is not None else "Z", "rel": sweep.noise.rel, "floor": sweep.noise.floor}
        if sweep.noise_estimate is not None:
            est = sweep.noise_estimate.to_dict()
            noise.update(source=est["source"], f_min_hz=est["f_min_hz"], f_max_hz=est["f_max_hz"], points=est["points"])
    return {
        "schema": INFO_SCHEMA,
        "source": sweep.source,
        "data_format": sweep.data_format,
        "connection": sweep.connection,
        "reference_ohm": sweep.reference_ohm,
        "points": sweep.n_points,
        "f_min_hz": sweep.band_hz[0],
        "f_max_hz": sweep.band_hz[1],
        "z_min_ohm": float(mag[i_min]),
        "z_min_at_hz": float(sweep.f_hz[i_min]),
        "z_max_ohm": float(mag[i_max]),
        "z_max_at_hz": float(sweep.f_hz[i_max]),
        "noise_model": sweep.noise_model,
        "noise": noise,
        "sigma_rel_median": float(np.median(rel)),
        "sigma_rel_max": float(np.max(rel)),
        "sigma_rel_max_at_hz": float(sweep.f_hz[int(np.argmax(rel))]),
        "active_points": int(np.count_nonzero(sweep.active)),
        "notes": list(sweep.notes),
        "warnings": [] if warning is None else [warning],
    }


def info_lines(d: dict) -> list[str]:
    """Return the human-readable lines of ``zfit info`` for an `info_dict`."""
    from .._units import format_eng

    ref = "n/a (impedance data)" if d["reference_ohm"] is None else format_eng(d["reference_ohm"], "ohm")
    rows = [
        ("file", d["source"]),
        ("format", d["data_format"]),
        ("connection", d["connection"]),
        ("reference", ref),
        ("points", str(d["points"])),
        ("band", f"{format_eng(d['f_min_hz'], 'Hz')} .. {format_eng(d['f_max_hz'], 'Hz')}"),
        ("|Z| range", f"{format_eng(d['z_min_ohm'], 'ohm')} at {format_eng(d['z_min_at_hz'], 'Hz')}"
                      f" .. {format_eng(d['z_max_ohm'], 'ohm')} at {format_eng(d['z_max_at_hz'], 'Hz')}"),
        ("noise model", d["noise_model"]),
        *([("noise", f"{d['noise']['source']}, over {format_eng(d['noise']['f_min_hz'], 'Hz')} .. "
                     f"{format_eng(d['noise']['f_max_hz'], 'Hz')}")] if d["noise"] and "source" in d["noise"] else []),
        ("sigma/|Z|", f"median {100 * d['sigma_rel_median']:.3g} %, worst {100 * d['sigma_rel_max']:.3g} % "
                      f"at {format_eng(d['sigma_rel_max_at_hz'], 'Hz')}"),
    ]
    rows += [("note", n) for n in d["notes"]]
    width = max(len(k) for k, _ in rows)
    return [f"{k:<{width}}  {v}" for k, v in rows]


@app.command("info")
@guarded
def info_command(
    sweep: Annotated[Path, typer.Argument(help="Touchstone (.s1p/.s2p/.ts) file or analyser table (.csv/.tsv/.txt/.dat).")],
    connection: ConnectionOpt = None,
    noise_rel: NoiseRelOpt = None,
    noise_floor: NoiseFloorOpt = None,
    columns: ColumnsOpt = None,
    open_: OpenOpt = None,
    short: ShortOpt = None,
    load: LoadOpt = None,
    load_value: LoadValueOpt = None,
    port_delay: PortDelayOpt = None,
    port_loss: PortLossOpt = None,
    json_path: Annotated[Optional[Path], typer.Option("--json", help="Also write what was read as JSON (zfit.info/1) to this file.")] = None,
    force: ForceOpt = False,
):
    """Print what was read from SWEEP: format and reference impedance understood, points, band,
    |Z| range, connection, noise model and notes, with a warning when the connection is
    poorly conditioned for this part.

    Safety: discharge capacitors before connecting them to the analyser.
    """
    import warnings

    from .._errors import MeasurementWarning

    s = sweep_from_options(
        sweep, connection, noise_rel, noise_floor, columns, open_, short, load, load_value, port_delay, port_loss
    )
    d = info_dict(s)
    to_stdout = json_path is not None and str(json_path) == "-"
    for line in info_lines(d):  # with --json - the standard output is the JSON alone
        typer.echo(line, err=to_stdout)
    for w in d["warnings"]:
        warnings.warn(w, MeasurementWarning)
    if json_path is not None:
        emit_json(d, json_path, force)

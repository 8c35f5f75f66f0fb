"""Fixture compensation from the standards' files: read each standard, then compensate.

The compensation itself is pure and lives in `zfit.data._fixture`; this
module is the reading side: the open, short and load standards' files are
read like any sweep (any format, any connection), cached for a lot that shares
them, interpolated onto the part's grid and applied.
"""

from __future__ import annotations

import dataclasses
from pathlib import Path

import numpy as np

from .._errors import ZfitInputError
from .._units import format_eng
from ..data._connection import NA_CONNECTIONS
from ..data._fixture import compensated, fixture_on_grid, standard_with_noise_of, warn_if_not_passive
from ._sweep_file import read_sweep

__all__ = ["compensate_from_files"]


def compensate_from_files(
    sweep,
    open_path=None,
    short_path=None,
    load_path=None,
    load_ohm=None,
    connection=None,
    *,
    noise="part",
):
    """Return `sweep` with the fixture removed, from measured standards' files.

    Each standard is read by `zfit.read_sweep` (any format it reads, any
    connection), interpolated onto the part's grid (`fixture_on_grid`) and
    the correction applied (`compensated`): short only, open only,
    open/short, or open/short/load.  The standards' own noise is propagated
    into the part's sigma.

    Parameters
    ----------
    sweep : Sweep
        The part measured in the fixture.
    open_path, short_path, load_path : path-like, optional
        Files of the open, short and load standards measured in the same
        fixture.
    load_ohm : complex or float, optional
        The load standard's known impedance in ohm (required with `load_path`).
    connection : str, optional
        Connection of the standards' files when they need one (``.s2p``);
        defaults to `connection` given for the part, else the part's own
        connection when the part is an S-parameter measurement.
    noise : 'part', InstrumentNoise or None
        Noise model of the standards.  ``'part'`` (default): the part's noise
        model for standards of the same kind of file (same instrument and
        settings), the format's default otherwise.  None: the format's
        default.  An `InstrumentNoise`: that model for every standard.

    Returns
    -------
    Sweep
        The compensated sweep; `Sweep.s_param` keeps the raw measured
        S-parameters (they no longer give `z_ohm`), `notes` records the
        compensation.

    Raises
    ------
    ZfitInputError
        On a missing standard (load without open and short, load without
        its value), on a standard whose band does not cover the part's, or
        where the correction is undefined (the part measures exactly as the
        open).

    References
    ----------
    .. [1] Impedance-measurement application literature of the trade,
       open/short and open/short/load compensation (from memory).
    """
    if load_path is not None and (open_path is None or short_path is None):
        raise ZfitInputError("open/short/load compensation needs --open and --short as well as --load", load_path)
    if load_path is not None and load_ohm is None:
        raise ZfitInputError("the load standard needs its known impedance: give --load-value (ohm)", load_path)
    if load_path is None and load_ohm is not None:
        raise ZfitInputError("--load-value given without a --load file")
    if isinstance(noise, str) and noise != "part":
        raise ZfitInputError(f"noise must be 'part', None or an InstrumentNoise, not {noise!r}")
    conn = connection
    if conn is None and sweep.connection in NA_CONNECTIONS and sweep.s_param is not None:
        conn = sweep.connection
    part_noise = sweep.noise if isinstance(noise, str) else noise
    f = np.asarray(sweep.f_hz, dtype=float)
    stds = {}
    used = []
    for what, path in (("open", open_path), ("short", short_path), ("load", load_path)):
        if path is None:
            continue
        fx = _read_standard(Path(path), conn, None if isinstance(noise, str) else noise)
        if isinstance(noise, str):
            fx = standard_with_noise_of(fx, part_noise, sweep)
        stds[what] = fixture_on_grid(fx, f, what)
        used.append(f"{what} {path}")
    z, sigma = compensated(sweep.z_ohm, sweep.sigma_ohm, stds.get("open"), stds.get("short"), stds.get("load"), load_ohm)
    bad = ~(np.isfinite(z) & np.isfinite(sigma))
    if bad.any():
        i = int(np.flatnonzero(bad)[0])
        raise ZfitInputError(
            f"compensation is undefined at {format_eng(f[i], 'Hz')}: the part measures exactly as the open standard",
            sweep.source or None,
        )
    # Two measurements agree to the last digit only when they are one file twice: nothing
    # is left of the part there, and every 1/Z downstream would divide by zero.
    zero = z == 0
    if zero.any():
        i = int(np.flatnonzero(zero)[0])
        every = " at every point" if zero.all() else f" at {format_eng(f[i], 'Hz')}"
        raise ZfitInputError(
            f"compensation leaves Z = 0 exactly{every}: the part measures exactly as the short standard "
            "(the same file given as the part and as --short?)", sweep.source or None)
    kind = "/".join(k for k in ("open", "short", "load") if k in stds)
    warn_if_not_passive(f, z, sigma, sweep.source, f"{kind} compensation (do the standards belong to this fixture?)")
    note = f"{kind} fixture compensation ({', '.join(used)}" + (
        f", load value {load_ohm} ohm)" if load_ohm is not None else ")"
    ) + "; the standards' noise is in sigma"
    return dataclasses.replace(
        sweep,
        z_ohm=z,
        sigma_ohm=sigma,
        notes=tuple(sweep.notes) + (note,),
        noise_model=(sweep.noise_model + "; " if sweep.noise_model else "") + f"plus the {kind} standards' noise",
    )


#: Standards read so far, by file identity and reading options: a lot of
#: thousands of parts shares its three standards' files (`Sweep` is frozen).
_STANDARDS: dict = {}
_STANDARDS_MAX = 32


def _read_standard(path, connection, noise):
    try:
        st = path.stat()
        key = (str(path.resolve()), st.st_mtime_ns, st.st_size, connection, noise)
    except OSError:
        key = None
    if key is not None and key in _STANDARDS:
        return _STANDARDS[key]
    sweep = _read_standard_uncached(path, connection, noise)
    if key is not None:
        if len(_STANDARDS) >= _STANDARDS_MAX:
            _STANDARDS.pop(next(iter(_STANDARDS)))
        _STANDARDS[key] = sweep
    return sweep


def _read_standard_uncached(path, connection, noise):
    try:
        return read_sweep(path, connection=connection, noise=noise)
    except ZfitInputError:
        if connection is None:
            raise
        # A one-port file (.s1p, a table) refuses a transmission connection:
        # the standard was measured another way than the part, which is allowed.
        return read_sweep(path, connection=None, noise=noise)

"""A simulated lot: invented parts written as the files an instrument would give.

For tests, benchmarks and trying ``zfit batch`` without a bench.  The
measurement itself (connection, noise) is the one simulator,
`zfit.fit._simulate`; this module only picks the file kind from each part's
name and writes the text.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import Sequence

import numpy as np

from .._atomic import write_atomic
from ..data._connection import InstrumentNoise
from ..fit._simulate import measured_impedance, measured_s, measured_two_port

__all__ = ["SimulatedPart", "write_simulated_lot"]


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
    body = np.column_stack([f_hz] + [x for c in columns for x in (c.real, c.imag)])
    lines = [f"! {c}" for c in comment.splitlines()] + [f"# HZ S RI R {z0:g}"]
    lines += [" ".join(f"{x:.12e}" for x in row) for row in body]
    return "\n".join(lines) + "\n"


def _table_text(f_hz, z, comment: str) -> str:
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
    if impedance is None:
        from ..fit._circuits import circuit_impedance as impedance
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    f = np.asarray(f_hz, dtype=float)
    on_s = InstrumentNoise(noise_rel, noise_floor)
    on_z = InstrumentNoise(noise_rel, 0.0)
    paths = []
    for i, part in enumerate(parts):
        rng = np.random.default_rng([seed, i])
        z = np.asarray(impedance(part.model, part.params, f), dtype=complex)
        truth = ", ".join(f"{k}={v:.6g}" for k, v in part.params.items())
        comment = f"zfit simulated part {part.name} ({part.model}): {truth}"
        path = folder / part.name
        suffix = path.suffix.lower()
        if suffix == ".csv":
            text = _table_text(f, measured_impedance(z, on_z, rng), comment)
        elif suffix == ".s2p":
            cols = measured_two_port(z, connection, on_s, z0, rng)
            text = _touchstone_text(f, cols, z0, comment + f"\nfixture: {connection}")
        else:
            text = _touchstone_text(f, [measured_s(z, "reflection", on_s, z0, rng)], z0, comment)
        write_atomic(path, text, force=True)
        paths.append(path)
    return paths

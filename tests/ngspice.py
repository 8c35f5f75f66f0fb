"""Running ngspice in batch mode as an independent reference simulator.

Tests call `run_ac` / `run_tran`; where ngspice is missing they skip,
unless ``ZFIT_REQUIRE_NGSPICE=1`` (set by ``.ci/run`` under CI), where
they fail.
"""

from __future__ import annotations

import os
import shutil
import subprocess
import tempfile
from pathlib import Path

import numpy as np
import pytest

NGSPICE = shutil.which("ngspice")


def require_ngspice() -> str:
    """Return the ngspice path, or skip (fail under ZFIT_REQUIRE_NGSPICE=1)."""
    if NGSPICE is None:
        if os.environ.get("ZFIT_REQUIRE_NGSPICE") == "1":
            pytest.fail("ngspice is required (ZFIT_REQUIRE_NGSPICE=1) but not on PATH")
        pytest.skip("ngspice not installed")
    return NGSPICE


def _run(deck: str, workdir: Path) -> None:
    path = workdir / "deck.cir"
    path.write_text(deck)
    proc = subprocess.run([require_ngspice(), "-b", str(path)], cwd=workdir, capture_output=True, text=True, timeout=120)
    if proc.returncode != 0:
        raise RuntimeError(f"ngspice failed ({proc.returncode}):\n{proc.stdout[-2000:]}\n{proc.stderr[-2000:]}")


def _read_wrdata(path: Path) -> np.ndarray:
    return np.loadtxt(path, skiprows=1)


def run_ac(elements: str, f_start: float, f_stop: float, points_per_decade: int = 50, node: str = "n1"):
    """Return (f_hz, Z) of a one-port from an ngspice AC analysis.

    Parameters
    ----------
    elements : str
        Netlist lines of the one-port between node `node` and ground ``0``
        (may include ``.subckt`` definitions and instance lines).
    f_start, f_stop : float
        Band in Hz.
    points_per_decade : int
        Logarithmic grid density.
    node : str
        The part's live terminal.

    Notes
    -----
    A 1 A AC current source drives the node, so V(node) is Z in ohm.
    ``I1 0 n1`` makes the current flow into `node` (SPICE convention: from
    the first node through the source to the second).
    """
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        deck = (
            "* zfit test: one-port AC impedance\n"
            f"I1 0 {node} AC 1\n"
            f"{elements}\n"
            ".control\nset wr_singlescale\nset wr_vecnames\nset filetype=ascii\noption numdgt=12\n"
            f"ac dec {points_per_decade} {f_start:.12g} {f_stop:.12g}\n"
            f"wrdata ac.txt v({node})\nquit\n.endc\n.end\n"
        )
        _run(deck, tmp)
        data = _read_wrdata(tmp / "ac.txt")
    return data[:, 0], data[:, 1] + 1j * data[:, 2]


def run_tran(circuit: str, t_step: float, t_stop: float, nodes, t_max_step: float | None = None):
    """Return (t_s, {node: v}) from an ngspice transient analysis.

    Parameters
    ----------
    circuit : str
        Complete netlist lines (sources included).
    t_step, t_stop : float
        Print step and end time in seconds.
    nodes : sequence of str
        Nodes whose voltages are returned.
    t_max_step : float, optional
        Largest internal time step (defaults to `t_step`).

    Notes
    -----
    ngspice's own time points are not uniform; the result is interpolated
    onto the uniform grid ``0, t_step, ...`` with ``linearize``, as an
    oscilloscope would sample.
    """
    nodes = list(nodes)
    t_max_step = t_step if t_max_step is None else t_max_step
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        vecs = " ".join(f"v({n})" for n in nodes)
        deck = (
            "* zfit test: transient\n"
            f"{circuit}\n"
            ".control\nset wr_singlescale\nset wr_vecnames\nset filetype=ascii\noption numdgt=12\n"
            f"tran {t_step:.12g} {t_stop:.12g} 0 {t_max_step:.12g}\n"
            f"linearize {vecs}\n"
            f"wrdata tran.txt {vecs}\nquit\n.endc\n.end\n"
        )
        _run(deck, tmp)
        data = _read_wrdata(tmp / "tran.txt")
    return data[:, 0], {n: data[:, 1 + i] for i, n in enumerate(nodes)}

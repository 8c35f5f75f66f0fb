"""Local batch workers end when the command that started them is killed (kill -9,
the out-of-memory killer): none is left waiting on a pipe.

The parts are reflection Touchstone files of (R + j w L) || 1/(j w C)
(tests/reflection_sweeps.py; Pozar, Microwave Engineering, 4th ed., eq. 2.35).
"""

import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest
from reflection_sweeps import reflection_s1p as _reflection_s1p

ROOT = Path(__file__).resolve().parents[1]


def _workers(pid: int) -> set[int]:
    """The forked workers of `pid`: its children running its own command line
    (not a helper program that an import may run for a moment)."""
    try:
        mine = Path(f"/proc/{pid}/cmdline").read_bytes()
    except OSError:
        return set()
    kids = set()
    for task in Path(f"/proc/{pid}/task").iterdir():
        try:
            kids |= {int(k) for k in (task / "children").read_text().split()}
        except OSError:
            pass
    same = set()
    for k in kids:
        try:
            if Path(f"/proc/{k}/cmdline").read_bytes() == mine:
                same.add(k)
        except OSError:
            pass
    return same


def _alive(pid: int) -> bool:
    try:
        state = Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()[0]
    except OSError:
        return False
    return state not in ("Z", "X")  # a zombie has ended; only its exit status is left


@pytest.mark.skipif(not Path("/proc/self/task").is_dir() or not hasattr(signal, "SIGKILL"),
                    reason="needs Linux /proc")
def test_workers_end_when_the_parent_is_killed(tmp_path):
    # Enough parts that the run is still going when it is killed (about 0.1 s a part).
    for i in range(80):
        _reflection_s1p(tmp_path / "in" / f"p{i:02d}.s1p", 2.2e-6 * (1 + 0.001 * i), seed=10 + i)
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    proc = subprocess.Popen([sys.executable, "-m", "zfit", "batch", str(tmp_path / "in"), "--out",
                             str(tmp_path / "out"), "--jobs", "2", "--quiet"], env=env,
                            stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    try:
        workers: set[int] = set()
        deadline = time.monotonic() + 60
        while len(workers) < 2 and time.monotonic() < deadline and proc.poll() is None:
            workers = {k for k in _workers(proc.pid) if _alive(k)}
            time.sleep(0.05)
        assert len(workers) == 2, "the batch did not start its two workers"
        os.kill(proc.pid, signal.SIGKILL)
        proc.wait(10)
        # Gone within 5 s: the watchdog looks every 0.25 s (zfit.lot._worker).
        deadline = time.monotonic() + 5
        while any(_alive(k) for k in workers) and time.monotonic() < deadline:
            time.sleep(0.05)
        left = [k for k in workers if _alive(k)]
        assert len(left) == 0, f"workers {left} outlived their parent"
    finally:
        if proc.poll() is None:
            proc.kill()
            proc.wait()
        for k in workers:
            if _alive(k):
                os.kill(k, signal.SIGKILL)

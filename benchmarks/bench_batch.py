"""Throughput of ``zfit batch``: a simulated lot through --jobs 1 and --jobs 2.

Generates a lot of 801-point reflection sweeps (half inductors, half
capacitors, invented parts with instrument-like noise), runs the real
command line on it with ``--jobs 1`` and ``--jobs 2`` into fresh output
folders, and reports parts per second, the ratio, the CPU time per part and
what a worker process imports.  Writes ``docs/perf_batch.md``.

Usage::

    python benchmarks/bench_batch.py [--parts 2000] [--points 801] [--doc docs/perf_batch.md]

This is a benchmark, not a test: the numbers depend on the machine and on
what else runs on it (the load average is recorded beside them).
"""

from __future__ import annotations

import argparse
import os
import platform
import resource
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]

LIMITS = """\
title = "benchmark lot: invented 10 uH chokes and 1 uF capacitors"

# Limits that apply to both families, so that every part gets a verdict.
[limit.SRF]
min = "1M"

[[limit.Q]]
at = "1M"
min = 2
"""


def _lot(n: int, seed: int = 2026):
    from zfit.lot._simulated_lot import SimulatedPart

    rng = np.random.default_rng(seed)
    parts = []
    for i in range(n):
        if i % 2 == 0:
            p = {"L": 10e-6 * (1 + 0.02 * rng.standard_normal()), "R_s": rng.uniform(0.1, 0.3),
                 "C_p": rng.uniform(2e-12, 4e-12)}
            parts.append(SimulatedPart(f"L{i:05d}.s1p", "inductor", p))
        else:
            p = {"C": 1e-6 * (1 + 0.03 * rng.standard_normal()), "ESR": rng.uniform(0.01, 0.05),
                 "ESL": rng.uniform(0.8e-9, 2e-9)}
            parts.append(SimulatedPart(f"C{i:05d}.s1p", "capacitor", p))
    return parts


def _run(args, cwd):
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    t0 = time.perf_counter()
    proc = subprocess.run([sys.executable, "-m", "zfit", *args], cwd=cwd, capture_output=True, text=True)
    wall = time.perf_counter() - t0
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    cpu = (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)
    if proc.returncode not in (0, 1):
        raise SystemExit(f"zfit batch failed ({proc.returncode}):\n{proc.stdout}\n{proc.stderr}")
    return wall, cpu, proc.stdout


def _worker_imports(sample: Path) -> dict:
    """What the first part costs a fresh interpreter: import and first-call time,
    and whether scikit-rf is loaded."""
    code = (
        "import sys, time\n"
        "t0 = time.perf_counter()\n"
        "import zfit.lot._worker, zfit.identification._pipeline, zfit.io._sweep_file, zfit.cli._common\n"
        "t1 = time.perf_counter()\n"
        "from zfit.lot._tasks import PartTask\n"
        "from zfit.lot._worker import identify_part as _identify_part\n"
        "import tempfile, os\n"
        "d = tempfile.mkdtemp()\n"
        f"t = PartTask(0, {str(sample)!r}, 'x', os.path.join(d, 'x.json'), None, 'auto', (1e6,))\n"
        "o = _identify_part(t)\n"
        "t2 = time.perf_counter()\n"
        "o = _identify_part(t)\n"
        "t3 = time.perf_counter()\n"
        "print(t1 - t0, t2 - t1, t3 - t2, int('skrf' in sys.modules), int('matplotlib' in sys.modules), len(sys.modules))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout.split()
    return {"import_s": float(out[0]), "first_part_s": float(out[1]), "next_part_s": float(out[2]),
            "skrf": bool(int(out[3])), "matplotlib": bool(int(out[4])), "modules": int(out[5])}


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--parts", type=int, default=2000)
    ap.add_argument("--points", type=int, default=801)
    ap.add_argument("--repeat", type=int, default=2, help="Runs of each --jobs value; the fastest is reported.")
    ap.add_argument("--doc", type=Path, default=ROOT / "docs" / "perf_batch.md")
    ap.add_argument("--workdir", type=Path, default=None, help="Keep the lot here (default: a temporary folder).")
    a = ap.parse_args(argv)

    from zfit.lot._simulated_lot import write_simulated_lot

    tmp = None
    if a.workdir is None:
        tmp = tempfile.TemporaryDirectory(prefix="zfit-bench-batch-")
        work = Path(tmp.name)
    else:
        work = a.workdir
        work.mkdir(parents=True, exist_ok=True)
    f = np.geomspace(1e3, 1e8, a.points)
    t0 = time.perf_counter()
    write_simulated_lot(work / "lot", _lot(a.parts), f, seed=11)
    t_gen = time.perf_counter() - t0
    (work / "limits.toml").write_text(LIMITS)
    load_before = os.getloadavg()
    imports = _worker_imports(work / "lot" / "L00000.s1p")

    # The runs alternate and the fastest of each is kept: on a shared machine
    # the other work only ever slows a run down.
    results, walls = {}, {1: [], 2: []}
    for rep in range(a.repeat):
        for jobs in (1, 2):
            out = work / f"out{jobs}"
            if out.exists():
                shutil.rmtree(out)
            wall, cpu, stdout = _run(["batch", "lot", "--out", f"out{jobs}", "--limits", "limits.toml",
                                      "--jobs", str(jobs), "--quiet"], work)
            walls[jobs].append(wall)
            if jobs not in results or wall < results[jobs][0]:
                results[jobs] = (wall, cpu, stdout)
            print(f"--jobs {jobs}: {wall:.1f} s, {a.parts / wall:.1f} parts/s, CPU {cpu:.1f} s", flush=True)
    load_after = os.getloadavg()
    same = all((work / "out1" / n).read_bytes() == (work / "out2" / n).read_bytes()
               for n in ("summary.csv", "lot.csv", "lot.json"))
    import csv

    with open(work / "out1" / "summary.csv", newline="") as fh:
        errors = [r["error"] for r in csv.DictReader(fh) if r["verdict"] == "error"]
    passivity = sum("not a passive one-port" in e for e in errors)
    lot_line = next((ln for ln in results[1][2].splitlines() if ln.startswith("lot: ")), "")
    w1, c1, _ = results[1]
    w2, c2, _ = results[2]
    ratio = w1 / w2
    print(f"ratio --jobs 2 / --jobs 1: {ratio:.2f}x; summaries identical: {same}")

    doc = f"""# Throughput of `zfit batch`

Measured by `benchmarks/bench_batch.py` ({time.strftime('%Y-%m-%d %H:%M UTC', time.gmtime())}): a simulated
lot of {a.parts} reflection sweeps of {a.points} points each (1 kHz - 100 MHz; half invented 10 uH chokes,
half invented 1 uF capacitors; noise 1e-3 |S| + 1e-5 on S), through the real command line
`zfit batch lot --out DIR --limits limits.toml --jobs N` (model `auto`: both families and the optional
element are tried for every part), each run into a fresh output folder.

| run | wall time (fastest of {a.repeat}) | parts per second | CPU time (all processes) | CPU per part | all wall times |
|---|---:|---:|---:|---:|---|
| `--jobs 1` | {w1:.1f} s | {a.parts / w1:.1f} | {c1:.1f} s | {1e3 * c1 / a.parts:.1f} ms | {', '.join(f'{w:.1f} s' for w in walls[1])} |
| `--jobs 2` | {w2:.1f} s | {a.parts / w2:.1f} | {c2:.1f} s | {1e3 * c2 / a.parts:.1f} ms | {', '.join(f'{w:.1f} s' for w in walls[2])} |

**Ratio `--jobs 2` / `--jobs 1`: {ratio:.2f}x** (aim: at least 1.8x on two otherwise idle cores).
During the fastest `--jobs 2` run zfit's processes were busy {c2 / w2:.2f} cores on average (CPU time over
wall time), the `--jobs 1` run {c1 / w1:.2f}; CPU per part rose by {100 * (c2 / c1 - 1):.0f} % with two
workers (the command's own share: imports, start of the workers, summary).
The two runs wrote byte-identical `summary.csv`, `lot.csv` and `lot.json`: {'yes' if same else 'NO'}.
Lot: {lot_line[5:] if lot_line else '(see the run)'}.
{f"Of the {len(errors)} parts without a result, {passivity} are honest simulated sweeps that the readers refuse as not passive: one point near the resonance has Re Z below zero by more than 3 standard uncertainties, which noise alone does to some of 801 points." if errors else "Every part was identified."}

Machine: {platform.machine()}, {os.cpu_count()} logical cores, Python {platform.python_version()}.
Load average (1, 5, 15 min) before the runs {load_before[0]:.2f}, {load_before[1]:.2f}, {load_before[2]:.2f};
after {load_after[0]:.2f}, {load_after[1]:.2f}, {load_after[2]:.2f}. The cores were shared with other work
while this ran: where the load average is above the core count, the wall-clock ratio understates what
two free cores give, and the CPU time per part is the steadier figure.

## What a worker costs

A fresh interpreter importing zfit's batch, reading and identification modules takes
{imports['import_s']:.2f} s; its first part then takes {imports['first_part_s']:.2f} s (scipy's optimisers
and linear algebra load on first use) and the next one {imports['next_part_s'] * 1e3:.0f} ms.
scikit-rf is {'' if imports['skrf'] else 'not '}imported for a Touchstone 1.x part (the readers parse
1.x themselves; scikit-rf is loaded only for Touchstone 2.0), matplotlib is
{'' if imports['matplotlib'] else 'not '}imported without `--plot`; {imports['modules']} modules in all.

So that no worker pays this, the local pool forks its workers from the command's process after importing
these modules once (a plain fork where the process runs no other thread, the command line's case;
otherwise a forkserver that preloads them). Parts go to the workers in chunks of up to 16 with a bounded
number of chunks in flight, so a lot of thousands of small parts costs no more in scheduling than a few
hundred tasks; Dask workers import the modules once per worker process.

Each worker, and the command's own process for `--jobs 1`, runs OpenBLAS with one thread. One part's
linear algebra is small (hundreds of rows, a few columns), where OpenBLAS's default of one thread per core
brings no speed and, beside a second worker, oversubscribes the cores and spins: on 200 of these parts
(2026-12-01) the whole `--jobs 1` run took 12.7 s of CPU with the default and 4.7 s with one thread, and
`--jobs 2` was slower than `--jobs 1` before the change. Numpy and scipy each load their own OpenBLAS;
both are set through the libraries' `*_set_num_threads` calls (the `OPENBLAS_NUM_THREADS` variable
acts only before numpy is imported) and put back after an in-process run.

Generating the lot took {t_gen:.1f} s (not counted).
"""
    a.doc.parent.mkdir(parents=True, exist_ok=True)
    a.doc.write_text(doc)
    print(f"wrote {a.doc}")
    if tmp is not None:
        tmp.cleanup()


if __name__ == "__main__":
    main()

"""Benchmark: reading a long two-channel capture, and analysing it.

Writes a scope-like CSV export (metadata lines, header, time column, two
8-bit channels) of N samples per channel (default 10 million), then reads it
in fresh child processes with

* ``zfit.read_capture`` -- numpy's C number parser (the dependency-free path),
* ``zfit.read_capture`` -- with pandas' C reader as accelerator (the default
  when pandas is importable),
* ``numpy.loadtxt``,
* ``pandas.read_csv`` (C engine),

and times the whole ``zfit.analyse_capture`` (levels, edges, time constant,
ringing search, H1 response) on the capture.  Each child reports its wall time,
the peak of Python-traced allocations (tracemalloc, which sees numpy's buffers)
and the growth of its peak resident set size over the interpreter with the
libraries imported (which also sees pandas' C buffers).

Usage::

    python benchmarks/bench_capture.py [--samples 10000000] [--out docs/perf_capture.md]

The signal: a 5 V square wave (edges of two 20 ns first-order stages)
through a first-order R-C (tau = 20 us) from the formula
y[k+1] = a y[k] + (1-a) x[k], sampled at 100 MSa/s, 8-bit codes with half a
code of noise.
"""

from __future__ import annotations

import argparse
import json
import os
import platform
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent

CHILD = r"""
import json, resource, sys, time, tracemalloc
import numpy as np
import pandas as pd
import zfit.io._capture, zfit.capture._analysis, scipy.signal  # imported before the baseline
kind, path, skip = sys.argv[1], sys.argv[2], int(sys.argv[3])
base = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
tracemalloc.start()
t0 = time.perf_counter()
out = {}
if kind == "zfit-numpy":
    cap = zfit.io._capture.read_capture(path, accelerate=False)
    n = cap.n_samples
elif kind == "zfit-pandas":
    cap = zfit.io._capture.read_capture(path, accelerate=True)
    n = cap.n_samples
elif kind == "loadtxt":
    a = np.loadtxt(path, delimiter=",", skiprows=skip)
    n = a.shape[0]
elif kind == "read_csv":
    a = pd.read_csv(path, skiprows=skip - 1, engine="c").to_numpy()
    n = a.shape[0]
elif kind == "zfit-analysis":
    cap = zfit.io._capture.read_capture(path)
    t1 = time.perf_counter()
    r = zfit.capture._analysis.analyse_capture(cap, "CH1", "CH2")
    out["analysis_s"] = time.perf_counter() - t1
    out["read_s"] = t1 - t0
    out["tau_s"] = r.time_constant_s
    out["edges"] = r.edges
    n = cap.n_samples
wall = time.perf_counter() - t0
_, peak = tracemalloc.get_traced_memory()
# Linux updates the peak-RSS counter lazily (when memory is given back), so
# the resident size now counts too: the parsed arrays are still alive.
now_kb = int(open("/proc/self/statm").read().split()[1]) * resource.getpagesize() // 1024
rss = max(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss, now_kb)
out.update(kind=kind, n=n, wall_s=wall, traced_peak_b=peak, rss_growth_b=(rss - base) * 1024)
print(json.dumps(out))
"""


def signal_codes(n: int, seed: int = 20261201):
    """Return the 8-bit codes of the two channels and the code size (V)."""
    from scipy.signal import lfilter

    rng = np.random.default_rng(seed)
    dt, half, lsb = 1e-8, 200e-6, 6.0 / 256  # 2.5 kHz square wave, 20 000 samples per half period
    k = np.arange(n)
    x = np.where(((k * dt + 0.25 * half) // half) % 2 == 1, 5.0, 0.0)
    # The generator's edges: two first-order stages of 20 ns (no aliasing at 100 MSa/s).
    e = np.exp(-dt / 20e-9)
    x = lfilter([1.0 - e], [1.0, -e], lfilter([1.0 - e], [1.0, -e], x))
    a = np.exp(-dt / 20e-6)
    y = lfilter([0.0, 1.0 - a], [1.0, -a], x)

    def codes(v):
        return np.clip(np.round((v + rng.normal(0, 0.5 * lsb, n) + 0.5) / lsb), 0, 255).astype(np.uint8)

    return codes(x), codes(y), lsb


def write_capture(path: Path, codes_x, codes_y, lsb: float) -> int:
    """Write the benchmark file; return the number of lines before the data."""
    n = codes_x.size
    # The 256 code strings, sign always printed ("+4.9609"): fixed-width lines,
    # assembled as a byte matrix so that writing 10 million lines takes seconds.
    table = np.array([list(f"{c * lsb - 0.5:+.4f}".encode()) for c in range(256)], dtype=np.uint8)
    width = 11 + 1 + 7 + 1 + 7 + 1
    head = ("Instrument,benchmark scope (invented)\nRecord length,%d\nSample interval,1.0000E-08\n"
            "Vertical units,V\nTime,CH1,CH2\n" % n).encode()
    with open(path, "wb") as fh:
        fh.write(head)
        step = 1_000_000
        for i in range(0, n, step):
            kk = np.arange(i, min(n, i + step))
            m = np.empty((kk.size, width), dtype=np.uint8)
            # Time in seconds as 0.ddddddddd (ten-nanosecond steps, exact).
            m[:, 0] = ord("0")
            m[:, 1] = ord(".")
            ns = kk * 10
            for d in range(9):
                m[:, 10 - d] = ord("0") + (ns // 10**d) % 10
            m[:, 11] = ord(",")
            m[:, 12:19] = table[codes_x[i:i + step]]
            m[:, 19] = ord(",")
            m[:, 20:27] = table[codes_y[i:i + step]]
            m[:, 27] = ord("\n")
            fh.write(m.tobytes())
    return head.count(b"\n")


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--samples", type=int, default=10_000_000)
    ap.add_argument("--out", type=Path, default=None, help="write the results as a Markdown table here")
    ap.add_argument("--keep", type=Path, default=None, help="write the capture here and keep it")
    args = ap.parse_args(argv)

    with tempfile.TemporaryDirectory() as tmp:
        path = args.keep or Path(tmp) / "bench_capture.csv"
        t0 = time.perf_counter()
        n = args.samples
        cx, cy, lsb = signal_codes(n)
        skip = write_capture(path, cx, cy, lsb)
        del cx, cy
        size = path.stat().st_size
        print(f"wrote {path} ({size / 1e6:.0f} MB, {n} samples x 2 channels) in {time.perf_counter() - t0:.1f} s",
              file=sys.stderr)
        results = []
        for kind in ("zfit-numpy", "zfit-pandas", "loadtxt", "read_csv", "zfit-analysis"):
            proc = subprocess.run([sys.executable, "-c", CHILD, kind, str(path), str(skip)], capture_output=True,
                                  text=True, env={**os.environ, "OPENBLAS_NUM_THREADS": "1"})
            if proc.returncode != 0:
                print(proc.stderr, file=sys.stderr)
                raise SystemExit(f"{kind} failed")
            res = json.loads(proc.stdout.strip().splitlines()[-1])
            print(json.dumps(res), file=sys.stderr)
            results.append(res)

    raw = 2 * n * 8  # the two channels as float64
    rows = []
    for r in results:
        t = r["read_s"] if r["kind"] == "zfit-analysis" else r["wall_s"]
        rows.append((r["kind"], r["wall_s"], 2 * n / t, r["traced_peak_b"] / raw, r["rss_growth_b"] / raw))
    best_ref = min(r["wall_s"] for r in results if r["kind"] in ("loadtxt", "read_csv"))
    ana = next(r for r in results if r["kind"] == "zfit-analysis")
    lines = [
        f"| reader | wall time (s) | samples/s (2 channels) | peak traced / raw | peak RSS growth / raw |",
        "|---|---:|---:|---:|---:|",
    ]
    for kind, wall, rate, tr, rss in rows:
        lines.append(f"| {kind} | {wall:.2f} | {rate / 1e6:.1f} M | {tr:.2f} | {rss:.2f} |")
    summary = {
        "samples_per_channel": n, "file_mb": size / 1e6, "raw_mb": raw / 1e6,
        "fastest_reference_s": best_ref, "analysis_s": ana["analysis_s"], "read_s": ana["read_s"],
        "analysis_over_read": (ana["read_s"] + ana["analysis_s"]) / ana["read_s"], "tau_s": ana["tau_s"],
        "edges": ana["edges"], "python": platform.python_version(), "numpy": np.__version__,
    }
    text = "\n".join(lines) + "\n\n```json\n" + json.dumps(summary, indent=2) + "\n```\n"
    print(text)
    if args.out:
        args.out.write_text(text)


if __name__ == "__main__":
    main()

"""Time zfit's vector_fit against scikit-rf's VectorFitting on the same sweeps.

A plain script: ``python benchmarks/bench_vectfit.py [--repeat N] [--write docs/perf_vectfit.md]``.

Twelve invented parts (six inductors with winding capacitance, six capacitors
with ESR and ESL), each a 1601-point impedance sweep from 10 kHz to 1 GHz with
0.2 % complex-circular noise on Z (seeded).  Each sweep is fitted

* by zfit: ``fit_impedance(f, z, 0.002 |z|, kind=...)`` with the automatic pole
  count, weighted by the per-point uncertainty;
* by scikit-rf: ``VectorFitting`` on the reflection S11 = (Z - 50)/(Z + 50) of
  the same noisy data, with 2 real and 2 complex starting poles, a constant
  and no proportional term (its defaults apart from the pole counts), and the
  fitted S11 turned back into Z.

Both are timed in the same run (best of ``--repeat`` runs for each, so that
other load on the machine counts as little as possible), and both are scored
by the worst-point relative impedance error against the noise-free truth,
``max |Z_fit - Z_true| / |Z_true|`` over the sweep.  The noise itself is 0.2 %
(standard uncertainty), so a fit that leaves only noise has a worst point of a
few tenths of a percent at most (averaging over points brings it lower).
"""

from __future__ import annotations

import argparse
import os
import statistics
import sys
import time
import warnings
from pathlib import Path

# One BLAS thread for both fitters: the matrices are tall and thin (3202 x ~10)
# and BLAS threads only fight over the shared cores (on a loaded 2-core machine
# they made single fits up to 20x slower). A batch of many sweeps parallelises
# over sweeps instead. Set OPENBLAS_NUM_THREADS yourself to override.
for _var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_var, "1")

import numpy as np  # noqa: E402

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from zfit.fit._vectfit import fit_impedance  # noqa: E402

TWO_PI = 2 * np.pi

# Invented parts (no real part numbers): (name, kind, parameters).
PARTS = [
    ("inductor 220 nH, 0.4 pF", "inductor", dict(L=220e-9, R=0.05, C=0.4e-12)),
    ("inductor 1.5 uH, 1.2 pF", "inductor", dict(L=1.5e-6, R=0.12, C=1.2e-12)),
    ("inductor 10 uH, 3 pF", "inductor", dict(L=10e-6, R=0.35, C=3e-12)),
    ("inductor 47 uH, 8 pF", "inductor", dict(L=47e-6, R=0.9, C=8e-12)),
    ("inductor 330 uH, 25 pF", "inductor", dict(L=330e-6, R=2.5, C=25e-12)),
    ("inductor 2.2 mH, 120 pF", "inductor", dict(L=2.2e-3, R=9.0, C=120e-12)),
    ("capacitor 22 pF", "capacitor", dict(C=22e-12, ESR=0.3, ESL=0.4e-9)),
    ("capacitor 1 nF", "capacitor", dict(C=1e-9, ESR=0.08, ESL=0.7e-9)),
    ("capacitor 100 nF", "capacitor", dict(C=100e-9, ESR=0.02, ESL=1.1e-9)),
    ("capacitor 4.7 uF", "capacitor", dict(C=4.7e-6, ESR=0.006, ESL=2.0e-9)),
    ("capacitor 100 uF", "capacitor", dict(C=100e-6, ESR=0.05, ESL=4.5e-9)),
    ("capacitor 1 mF", "capacitor", dict(C=1e-3, ESR=0.3, ESL=9e-9)),
]


def part_impedance(kind, p, f):
    s = 1j * TWO_PI * f
    if kind == "inductor":
        return 1.0 / (1.0 / (p["R"] + s * p["L"]) + s * p["C"])
    return p["ESR"] + s * p["ESL"] + 1.0 / (s * p["C"])


def best_time(fn, repeat):
    best, out = np.inf, None
    for _ in range(repeat):
        t = time.perf_counter()
        out = fn()
        best = min(best, time.perf_counter() - t)
    return best, out


def skrf_fit(f, z, z0=50.0):
    import skrf
    from skrf.vectorFitting import VectorFitting

    s11 = (z - z0) / (z + z0)
    net = skrf.Network(frequency=skrf.Frequency.from_f(f, unit="hz"), s=s11.reshape(-1, 1, 1), z0=z0)
    vf = VectorFitting(net)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        vf.vector_fit(n_poles_real=2, n_poles_cmplx=2, init_pole_spacing="log", parameter_type="s",
                      fit_constant=True, fit_proportional=False)
    s_fit = vf.get_model_response(0, 0, f)
    return z0 * (1 + s_fit) / (1 - s_fit)


def run(repeat: int, seed: int = 20261201):
    rng = np.random.default_rng(seed)
    f = np.geomspace(1e4, 1e9, 1601)
    rows = []
    # Warm-up (imports, first-call caches) so that neither side pays it in the table.
    z_warm = part_impedance(PARTS[0][1], PARTS[0][2], f)
    skrf_fit(f, z_warm)
    fit_impedance(f, z_warm, 0.002 * np.abs(z_warm), kind=PARTS[0][1])
    for name, kind, p in PARTS:
        z_true = part_impedance(kind, p, f)
        sigma = 0.002 * np.abs(z_true)
        z = z_true + sigma / np.sqrt(2) * (rng.standard_normal(f.size) + 1j * rng.standard_normal(f.size))
        t_z, m = best_time(lambda: fit_impedance(f, z, sigma, kind=kind), repeat)
        t_s, z_skrf = best_time(lambda: skrf_fit(f, z), max(1, repeat // 5))
        err_z = float(np.max(np.abs(m(f) - z_true) / np.abs(z_true)))
        err_s = float(np.max(np.abs(z_skrf - z_true) / np.abs(z_true)))
        rows.append(dict(name=name, t_zfit=t_z, t_skrf=t_s, ratio=t_s / t_z, err_zfit=err_z, err_skrf=err_s,
                         n_poles=m.n_poles, rms=m.rms_normalized_residual))
    return rows


def report(rows, repeat):
    ratios = [r["ratio"] for r in rows]
    q = np.quantile(ratios, [0.0, 0.25, 0.5, 0.75, 1.0])
    lines = [
        "# Vector fitting: zfit against scikit-rf",
        "",
        "Measured by `python benchmarks/bench_vectfit.py` (twelve invented parts, 1601-point impedance",
        "sweeps 10 kHz - 1 GHz, 0.2 % complex-circular noise on Z, seeded; best of "
        f"{repeat} runs for zfit, of {max(1, repeat // 5)} for scikit-rf; 2 shared cores; "
        f"OPENBLAS_NUM_THREADS={os.environ.get('OPENBLAS_NUM_THREADS')}).",
        "zfit: `fit_impedance(f, z, 0.002|z|, kind=...)`, automatic pole count, weighted by the noise.",
        "scikit-rf: `VectorFitting` on S11 = (Z-50)/(Z+50), 2 real + 2 complex poles, constant term.",
        "Error: worst point of |Z_fit - Z_true| / |Z_true| against the noise-free truth.",
        "",
        "| part | zfit poles | zfit rms | zfit ms | scikit-rf ms | speed ratio | zfit worst error | scikit-rf worst error |",
        "|---|---|---|---|---|---|---|---|",
    ]
    for r in rows:
        lines.append(
            f"| {r['name']} | {r['n_poles']} | {r['rms']:.3f} | {r['t_zfit'] * 1e3:.2f} | {r['t_skrf'] * 1e3:.0f} | "
            f"{r['ratio']:.0f}x | {100 * r['err_zfit']:.3g} % | {100 * r['err_skrf']:.3g} % |"
        )
    ez = [r["err_zfit"] for r in rows]
    es = [r["err_skrf"] for r in rows]
    lines += [
        "",
        f"Speed ratio (scikit-rf time / zfit time): median {q[2]:.0f}x, quartiles {q[1]:.0f}x - {q[3]:.0f}x, "
        f"range {q[0]:.0f}x - {q[4]:.0f}x.",
        f"zfit per fit: median {statistics.median(r['t_zfit'] for r in rows) * 1e3:.2f} ms.",
        f"Worst-point error: zfit {100 * min(ez):.2g} - {100 * max(ez):.2g} %, "
        f"scikit-rf {100 * min(es):.2g} - {100 * max(es):.2g} %.",
    ]
    return "\n".join(lines) + "\n"


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=10, help="runs per fit; the best time counts")
    ap.add_argument("--write", type=Path, default=None, help="also write the table (markdown) to this file")
    args = ap.parse_args(argv)
    rows = run(args.repeat)
    text = report(rows, args.repeat)
    print(text)
    if args.write is not None:
        args.write.write_text(text)


if __name__ == "__main__":
    main()

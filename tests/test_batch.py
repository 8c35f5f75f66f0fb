"""A lot of parts through ``zfit batch``: verdicts, bad files, identical results
across --jobs 1, --jobs 2 and a Dask cluster, guard band, reruns.

The lot is simulated with ngspice (AC analysis of each part's R-L-C network,
the independent reference simulator), written as reflection Touchstone files
and impedance-analyser tables with instrument-like noise, so the true values
and therefore the right verdicts are known.  Limits are placed far (many
standard uncertainties) from every true value, so that the right verdict
does not depend on the noise.
"""

import csv
import io
import json
import math
import os
import shutil
import statistics

import numpy as np
import pytest
from ngspice import require_ngspice, run_ac
from typer.testing import CliRunner

from zfit.lot._inputs import expand_inputs
from zfit.lot._progress import Progress
from zfit.lot._rows import part_row
from zfit.lot._run import run_batch
from zfit.lot._simulated_lot import SimulatedPart, write_simulated_lot
from zfit.lot._statistics import lot_summary, process_capability
from zfit.cli._app import app
from zfit._errors import ZfitInputError
from zfit.io._limits_file import parse_limits

F_START, F_STOP, PPD = 1e3, 1e8, 40  # 201 points, 1 kHz - 100 MHz

LIMITS = """\
title = "invented 10 uH choke, incoming inspection"
model = "inductor"

[limit.L]
nominal = "10u"
tolerance_percent = 5

[limit.R_s]
max = "250m"

[limit.SRF]
min = "20M"

[[limit.Q]]
at = "1M"
min = 150
"""
L_LO, L_HI, RS_MAX, SRF_MIN, Q_MIN = 9.5e-6, 10.5e-6, 0.25, 20e6, 150.0


def _parts():
    """45 good chokes spread inside the limits, 5 outside, names in a fixed order."""
    rng = np.random.default_rng(20261201)
    parts = []
    for i in range(45):
        suffix = ".csv" if i % 15 == 7 else ".s1p"  # three parts from an impedance analyser
        parts.append(SimulatedPart(f"L{i:03d}{suffix}", "inductor", {
            "L": 10e-6 * (1 + rng.uniform(-0.025, 0.025)),
            "R_s": rng.uniform(0.15, 0.21),
            "C_p": rng.uniform(2.5e-12, 3.5e-12),
        }))
    bad = [
        {"L": 9.2e-6, "R_s": 0.18, "C_p": 3e-12},     # L 8 % low
        {"L": 10.9e-6, "R_s": 0.18, "C_p": 3e-12},    # L 9 % high
        {"L": 10e-6, "R_s": 0.32, "C_p": 3e-12},      # R_s high, Q still passes (196)
        {"L": 10e-6, "R_s": 0.50, "C_p": 3e-12},      # R_s high and Q = 126 low
        {"L": 10e-6, "R_s": 0.18, "C_p": 8e-12},      # SRF 17.8 MHz low
    ]
    for j, p in enumerate(bad):
        parts.append(SimulatedPart(f"L{45 + j:03d}.s1p", "inductor", p))
    return parts


_SIMULATED = {}


def _ngspice_impedance(model, params, f_hz):
    assert model == "inductor"
    f, z = run_ac(f"R1 n1 n2 {params['R_s']:.12g}\nL1 n2 0 {params['L']:.12g}\nC1 n1 0 {params['C_p']:.12g}",
                  F_START, F_STOP, PPD)
    assert f.size == f_hz.size and np.allclose(f, f_hz, rtol=1e-9)
    _SIMULATED[tuple(sorted(params.items()))] = z
    return z


def _expected(part, z_1mhz):
    """Verdict and failed limits from the truth (handbook formulas, not zfit)."""
    p = part.params
    L, R, C = p["L"], p["R_s"], p["C_p"]
    # SRF of R-L in parallel with C, where X = 0: omega^2 = 1/(L C) - (R/L)^2
    # (parallel resonance of a lossy inductor; e.g. Bowick, RF Circuit Design, ch. 1; from memory).
    srf = math.sqrt(1.0 / (L * C) - (R / L) ** 2) / (2 * math.pi)
    q = abs(z_1mhz.imag) / z_1mhz.real  # Q = |X| / R of the part at 1 MHz
    failed = []
    if not L_LO <= L <= L_HI:
        failed.append("L")
    if R > RS_MAX:
        failed.append("R_s")
    if srf < SRF_MIN:
        failed.append("SRF")
    if q < Q_MIN:
        failed.append("Q@1MHz")
    return ("fail" if failed else "pass"), failed, srf


def _read_csv(path):
    with open(path, newline="") as fh:
        return list(csv.DictReader(fh))


@pytest.fixture(scope="module")
def lot(tmp_path_factory):
    require_ngspice()
    root = tmp_path_factory.mktemp("lot")
    folder = root / "sweeps"
    parts = _parts()
    f = np.logspace(math.log10(F_START), math.log10(F_STOP), 201)
    write_simulated_lot(folder, parts, f, seed=9, impedance=_ngspice_impedance)
    # Two corrupt files: not a sweep at all, and a Touchstone file cut off mid-row.
    (folder / "L900.s1p").write_text("this is a scanned delivery note, not a sweep\n")
    good = (folder / "L000.s1p").read_text().splitlines()
    (folder / "L901.s1p").write_text("\n".join(good[:40] + [good[40].rsplit(" ", 1)[0] + " nan"] + good[41:]) + "\n")
    limits = root / "limits.toml"
    limits.write_text(LIMITS)
    truth = {}
    k1m = int(np.argmin(abs(f - 1e6)))
    assert f[k1m] == pytest.approx(1e6, rel=1e-9)
    for part in parts:
        z = _SIMULATED[tuple(sorted(part.params.items()))]
        truth[f"sweeps/{part.name}"] = (part, *_expected(part, z[k1m]))
    return root, folder, limits, truth


@pytest.fixture(scope="module")
def runs(lot):
    """The same lot through --jobs 1, --jobs 2 and a Dask LocalCluster."""
    from distributed import LocalCluster

    root, folder, limits, _ = lot
    runner = CliRunner()
    cwd = os.getcwd()
    os.chdir(root)
    try:
        out = {}
        for tag, extra in (("jobs1", ["--jobs", "1"]), ("jobs2", ["--jobs", "2"])):
            r = runner.invoke(app, ["batch", "sweeps", "--out", tag, "--limits", "limits.toml", *extra])
            out[tag] = r
        with LocalCluster(n_workers=1, threads_per_worker=2, processes=False, dashboard_address=None) as cluster:
            out["dask"] = runner.invoke(app, ["batch", "sweeps", "--out", "dask", "--limits", "limits.toml",
                                              "--cluster", cluster.scheduler_address])
    finally:
        os.chdir(cwd)
    return out


@pytest.mark.ngspice
def test_every_verdict_is_right_and_bad_files_are_reported(lot, runs):
    root, _, _, truth = lot
    r = runs["jobs1"]
    assert r.exit_code == 1, r.output  # some parts fail: exit status 1
    assert "Traceback" not in r.output
    rows = {row["file"]: row for row in _read_csv(root / "jobs1" / "summary.csv")}
    assert len(rows) == 52
    for name, (part, verdict, failed, srf) in truth.items():
        row = rows[name]
        assert row["error"] == "", (name, row["error"])
        assert row["verdict"] == verdict, (name, row)
        assert sorted(row["failed_limits"].split(";") if row["failed_limits"] else []) == sorted(failed), name
        assert row["indeterminate_limits"] == "", name
        # The columns carry the identified values: L within 0.5 % and SRF within 0.5 %
        # of the ngspice truth (well inside issue 3's 1 % and 0.3 % per-part accuracy
        # plus the noise), and the truth within 4 reported sigma.
        L, sL = float(row["L"]), float(row["L_std"])
        assert L == pytest.approx(part.params["L"], rel=5e-3), name
        assert abs(L - part.params["L"]) < 4 * sL + 1e-4 * L, name
        assert float(row["SRF_hz"]) == pytest.approx(srf, rel=5e-3), name
    assert sum(v[1] == "fail" for v in truth.values()) == 5
    bad = {n: rows[n] for n in ("sweeps/L900.s1p", "sweeps/L901.s1p")}
    for name, row in bad.items():
        assert row["verdict"] == "error" and row["model"] == "" and row["L"] == ""
        assert row["error"].startswith(name), row["error"]
    assert "sweeps/L901.s1p:41:" in bad["sweeps/L901.s1p"]["error"]  # the line of the cut-off row
    assert "sweeps/L900.s1p: error:" in r.output
    # The lot summary: counts as expected.
    lot_doc = json.loads((root / "jobs1" / "lot.json").read_text())
    assert lot_doc["count"] == 52
    assert lot_doc["verdicts"] == {"pass": 45, "indeterminate": 0, "fail": 5, "error": 2, "unchecked": 0}
    assert "lot: 52 parts: 45 pass, 5 fail, 0 indeterminate, 2 error" in r.output
    assert "JCGM 106:2012" in r.output and "Cpk" in r.output
    # One identify JSON per good part, same contract as zfit identify.
    doc = json.loads((root / "jobs1" / "L003.json").read_text())
    assert doc["schema"] == "zfit.identify/1" and doc["model"] == "inductor"
    assert doc["spot"][0]["f_hz"] == 1e6
    assert not (root / "jobs1" / "L900.json").exists()


@pytest.mark.ngspice
def test_same_summary_for_jobs_1_jobs_2_and_dask(lot, runs):
    root = lot[0]
    for tag in ("jobs2", "dask"):
        assert runs[tag].exit_code == 1, runs[tag].output
    assert "2 local processes" in runs["jobs2"].output
    assert "Dask scheduler" in runs["dask"].output
    for name in ("summary.csv", "lot.csv", "lot.json"):
        ref = (root / "jobs1" / name).read_bytes()
        assert (root / "jobs2" / name).read_bytes() == ref, name
        assert (root / "dask" / name).read_bytes() == ref, name


@pytest.mark.ngspice
def test_lot_statistics_and_capability(lot, runs):
    root = lot[0]
    rows = [r for r in _read_csv(root / "jobs1" / "summary.csv") if r["verdict"] != "error"]
    stats = {r["quantity"]: r for r in _read_csv(root / "jobs1" / "lot.csv")}
    assert list(stats) == ["L", "R_s", "SRF", "Q@1MHz"]
    vals = [float(r["L"]) for r in rows]
    mean, s = statistics.fmean(vals), statistics.stdev(vals)
    st = stats["L"]
    assert int(st["n"]) == 50 and int(st["fail"]) == 2 and int(st["pass"]) == 48
    assert float(st["mean"]) == pytest.approx(mean, rel=1e-9)
    assert float(st["std"]) == pytest.approx(s, rel=1e-9)
    assert float(st["min"]) == pytest.approx(min(vals), rel=1e-9)
    assert float(st["max"]) == pytest.approx(max(vals), rel=1e-9)
    # Cpk = min(USL - mean, mean - LSL) / (3 s)  (Montgomery, Introduction to SQC, 8.3).
    # rel 1e-7: the CSV keeps 10 digits and USL - mean loses 1.3 of them.
    assert float(st["Cpk"]) == pytest.approx(min(L_HI - mean, mean - L_LO) / (3 * s), rel=1e-7)
    assert float(st["Cp"]) == pytest.approx((L_HI - L_LO) / (6 * s), rel=1e-7)
    # One-sided limit: only the side that exists.
    rs = [float(r["R_s"]) for r in rows]
    assert float(stats["R_s"]["Cpk"]) == pytest.approx(
        (RS_MAX - statistics.fmean(rs)) / (3 * statistics.stdev(rs)), rel=1e-7)
    assert stats["R_s"]["Cp"] == ""


def test_capability_formula_against_the_normal_table():
    # Cp = (USL-LSL)/(6s), Cpk = min(USL-mu, mu-LSL)/(3s): mu = 10, s = 0.1, LSL 9.7, USL 10.5
    # gives Cp = 0.8/0.6 and Cpk = 0.3/0.3 = 1 (Montgomery 2013, 8.3; ISO 22514-2).
    cp, cpk = process_capability(10.0, 0.1, 9.7, 10.5)
    assert cp == pytest.approx(4 / 3, rel=1e-12) and cpk == pytest.approx(1.0, rel=1e-12)
    assert process_capability(10.0, 0.1, None, 10.5) == (None, pytest.approx(5 / 3, rel=1e-12))
    assert process_capability(10.0, 0.0, 9.7, 10.5) == (None, None)
    # Expected fraction out: the normal tail beyond 3 sigma is 0.135 % (1350 ppm,
    # standard normal table, common practice), beyond 5 sigma 0.287 ppm.
    from zfit.lot._statistics import _ppm_out

    assert _ppm_out(10.0, 0.1, 9.7, 10.5) == pytest.approx(1349.898 + 0.2867, rel=1e-4)


@pytest.mark.ngspice
def test_guard_band_makes_a_part_near_a_limit_indeterminate(lot, runs, tmp_path):
    root, folder, _, _ = lot
    doc = json.loads((root / "jobs1" / "L004.json").read_text())
    v, u = doc["parameters"]["L"]["value"], doc["parameters"]["L"]["std"]
    assert u > 0
    cases = [
        (f"max = {v + 1.0 * u!r}", "indeterminate"),  # inside, but v + 2u crosses the limit
        (f"min = {v - 1.5 * u!r}", "indeterminate"),
        (f"max = {v + 2.5 * u!r}", "pass"),           # v + 2u inside
        (f"max = {v - 0.5 * u!r}", "fail"),           # the value itself is outside
    ]
    out = tmp_path / "out"
    for i, (line, verdict) in enumerate(cases):
        lim = parse_limits(f"[limit.L]\n{line}\n", "guard.toml")
        res = run_batch([folder / "L004.s1p"], out, limits=lim, jobs=1, progress=False)
        (row,) = res.rows
        assert row.verdict == verdict, (line, row.reasons)
        # Only the first run identifies; later ones re-decide from the stored result.
        assert (res.identified, res.skipped) == ((1, 0) if i == 0 else (0, 1))
        if verdict == "indeterminate":
            assert row.indeterminate == ("L",)
            assert "within 2 standard uncertainties" in row.reasons[0]
        summary = _read_csv(out / "summary.csv")
        assert summary[0]["verdict"] == verdict


@pytest.mark.ngspice
def test_rerun_skips_up_to_date_parts_and_force_redoes_them(lot, tmp_path):
    _, folder, limits, _ = lot
    src = tmp_path / "in"
    src.mkdir()
    for n in ("L001.s1p", "L002.s1p", "L900.s1p"):
        (src / n).write_bytes((folder / n).read_bytes())
    out = tmp_path / "out"
    lim = parse_limits((limits).read_text())
    first = run_batch([src], out, limits=lim, jobs=1, progress=False)
    assert (first.identified, first.skipped, first.errors) == (2, 0, 1)
    summary = (out / "summary.csv").read_bytes()
    stamp = (out / "L001.json").stat().st_mtime_ns
    second = run_batch([src], out, limits=lim, jobs=1, progress=False)
    assert (second.identified, second.skipped, second.errors) == (0, 2, 1)  # the bad file is tried again
    assert (out / "L001.json").stat().st_mtime_ns == stamp
    assert (out / "summary.csv").read_bytes() == summary
    # A newer input is identified again; the other part is not.
    t = (out / "L002.json").stat().st_mtime + 5
    os.utime(src / "L002.s1p", (t, t))
    third = run_batch([src], out, limits=lim, jobs=1, progress=False)
    assert (third.identified, third.skipped) == (1, 1)
    assert (out / "L001.json").stat().st_mtime_ns == stamp
    forced = run_batch([src], out, limits=lim, jobs=1, progress=False, force=True)
    assert (forced.identified, forced.skipped) == (2, 0)
    assert (out / "L001.json").stat().st_mtime_ns > stamp
    assert (out / "summary.csv").read_bytes() == summary
    # A spot frequency the stored results lack makes them out of date.
    more = run_batch([src], out, limits=lim, at=(3e5,), jobs=1, progress=False)
    assert (more.identified, more.skipped) == (2, 0)
    assert "Q@300kHz" in (out / "summary.csv").read_text().splitlines()[0]
    # No half-written files are left behind by the atomic writes.
    assert not [p for p in out.rglob("*.part")]


@pytest.mark.ngspice
def test_inputs_as_files_folders_and_globs(lot, tmp_path):
    root, folder, _, _ = lot
    cwd = os.getcwd()
    os.chdir(root)
    try:
        items = expand_inputs(["sweeps/L00*.s1p", "sweeps/L001.s1p", "sweeps"], exclude="sweeps/none")
        names = [n for _, n in items]
        assert len(names) == 52 and names == sorted(names)
        assert names.count("sweeps/L001.s1p") == 1
        assert [n for _, n in expand_inputs(["sweeps/L01[0-2].s1p"])] == [
            "sweeps/L010.s1p", "sweeps/L011.s1p", "sweeps/L012.s1p"]
        # An earlier run's own files are never taken as input (its summary.csv is a table too);
        # the sweeps in or below the output folder are.
        (root / "sweeps" / "old_run").mkdir(exist_ok=True)
        (root / "sweeps" / "old_run" / "summary.csv").write_text("file,verdict\n")
        (root / "sweeps" / "old_run" / "lot.json").write_text('{\n  "schema": "zfit.batch-lot/1"\n}\n')
        assert len(expand_inputs(["sweeps"])) == 52
        assert len(expand_inputs(["sweeps"], exclude="sweeps")) == 52
        with pytest.raises(ZfitInputError, match="old_run/summary.csv is written by zfit batch, not sweeps"):
            expand_inputs(["sweeps/old_run"])
        with pytest.raises(ZfitInputError, match="no file matches"):
            expand_inputs(["sweeps/*.s9p"])
        with pytest.raises(ZfitInputError, match="no such file"):
            expand_inputs(["nowhere.s1p"])
    finally:
        shutil.rmtree(root / "sweeps" / "old_run", ignore_errors=True)
        os.chdir(cwd)


@pytest.mark.ngspice
def test_cli_reports_bad_limits_and_inputs_in_one_line(lot, tmp_path):
    _, folder, _, _ = lot
    bad = tmp_path / "bad.toml"
    bad.write_text('[limit.L]\nnominal = "10u"\ntolerance_percent = "ten"\n')
    r = CliRunner().invoke(app, ["batch", str(folder / "L001.s1p"), "--out", str(tmp_path / "o"), "--limits", str(bad)])
    assert r.exit_code == 2
    assert f"zfit: error: {bad}:3: limit L: tolerance_percent: cannot read 'ten'" in r.output
    assert "Traceback" not in r.output
    r = CliRunner().invoke(app, ["batch", str(tmp_path / "missing"), "--out", str(tmp_path / "o")])
    assert r.exit_code == 2 and "no such file or folder" in r.output
    assert not (tmp_path / "o").exists()


def test_progress_bar_on_a_terminal_and_log_lines_otherwise():
    log = io.StringIO()
    p = Progress(4, stream=log, tty=False, interval=1e9)
    p.update(1)
    p.update(2)
    p.update(1, errors=1)
    p.close()
    lines = log.getvalue().splitlines()
    # The first and the last update are logged; the ones between wait for the interval.
    assert len(lines) == 2
    assert lines[0].startswith("zfit batch: 1/4 parts, ") and "/s, ETA " in lines[0]
    assert lines[1].startswith("zfit batch: 4/4 parts, ") and lines[1].endswith("ETA 00:00, 1 error")
    # Reused parts count as done but not in the rate: with nothing processed yet, no rate and no ETA.
    log = io.StringIO()
    p = Progress(6, stream=log, tty=False, interval=1e9)
    p.skip(4)
    assert log.getvalue() == "zfit batch: 4/6 parts, 0.0/s, ETA --:--\n"
    tty = io.StringIO()
    p = Progress(10, stream=tty, tty=True)
    p.update(5, force=True)
    p.message("zfit: error: x.s1p: broken")
    p.close()
    text = tty.getvalue()
    assert "\r[##############..............]  50% 5/10 parts" in text
    assert "\r\x1b[Kzfit: error: x.s1p: broken\n" in text
    assert text.endswith("\n")


def test_rows_and_lot_without_limits():
    result = {
        "schema": "zfit.identify/1", "model": "capacitor", "topology": "series C-ESR-ESL",
        "parameters": {"C": {"value": 1e-6, "std": 1e-9, "unit": "F"}, "ESR": {"value": 0.01, "std": None, "unit": "ohm"},
                       "ESL": {"value": 1e-9, "std": 1e-11, "unit": "H"}},
        "srf": {"value_hz": None, "std_hz": None, "where": "above-band", "bound_hz": 1e7},
        "fit": {"rms_normalized_residual": 1.0}, "spot": [], "warnings": [],
    }
    from zfit.lot._part_summary import part_summary_from_json
    from zfit.lot._tasks import PartOutcome

    rows = [part_row(PartOutcome(i, f"C{i}.s1p", part_summary_from_json(result))) for i in range(3)]
    assert rows[0].verdict == "unchecked"
    assert rows[0].figures["ESR"] == (0.01, None)
    lot = lot_summary(rows)
    assert [q.name for q in lot.quantities] == ["C", "ESR", "ESL"]
    assert lot.quantities[0].mean == pytest.approx(1e-6, rel=1e-12) and lot.quantities[0].std == 0.0
    assert lot.quantities[0].cpk is None


def test_warnings_go_to_their_own_part_with_threaded_workers(tmp_path):
    """Dask workers run parts in threads; a warning must land on the part that raised it."""
    from distributed import LocalCluster

    # Impedance-analyser tables (the model function is enough here: this is about warnings).
    src = tmp_path / "in"
    parts = [SimulatedPart(f"T{i:02d}.csv", "inductor", {"L": 10e-6, "R_s": 0.2, "C_p": 3e-12}) for i in range(6)]
    write_simulated_lot(src, parts, np.logspace(3, 8, 101), seed=3)
    names = [p.name for p in parts]
    # Two parts with a repeated frequency row: the reader drops it with a warning.
    for n in (names[1], names[4]):
        lines = (src / n).read_text().splitlines()
        (src / n).write_text("\n".join(lines[:30] + [lines[30]] + lines[30:]) + "\n")
    runs = {"local": run_batch([src], tmp_path / "local", model="inductor", jobs=1, progress=False)}
    with LocalCluster(n_workers=1, threads_per_worker=3, processes=False, dashboard_address=None) as cluster:
        runs["dask"] = run_batch([src], tmp_path / "dask", model="inductor", cluster=cluster.scheduler_address,
                                 progress=False)
    for tag, res in runs.items():
        warned = {r.name.rsplit("/", 1)[-1]: r.warnings for r in res.rows}
        assert [n for n, w in warned.items() if w] == [names[1], names[4]], (tag, warned)
        assert "repeated frequencies dropped" in warned[names[1]][0]
    assert (tmp_path / "local" / "summary.csv").read_bytes() == (tmp_path / "dask" / "summary.csv").read_bytes()


CAP_LIMITS = """\
model = "capacitor"

[limit.C]
nominal = "1u"
tolerance_percent = 10

[[limit.ESR]]  # the circuit's ESR, and (below) Re Z at 100 kHz: TOML needs one array for both
max = "50m"

[[limit.ESR]]
at = "100k"
max = "60m"

[[limit.D]]
at = "1M"
max = 0.3
"""


def test_capacitor_lot_measured_shunt_thru(tmp_path):
    """A lot of .s2p files: the connection is taken from the data when it is clear (issue 11), and gives the
    same verdicts as --connection; D and ESR at a frequency are checked."""
    rng = np.random.default_rng(5)
    parts = [SimulatedPart(f"C{i:02d}.s2p", "capacitor", {"C": 1e-6 * (1 + rng.uniform(-0.04, 0.04)),
                                                          "ESR": rng.uniform(0.015, 0.03), "ESL": 1.2e-9})
             for i in range(6)]
    parts += [SimulatedPart("C06.s2p", "capacitor", {"C": 0.85e-6, "ESR": 0.02, "ESL": 1.2e-9}),
              SimulatedPart("C07.s2p", "capacitor", {"C": 1e-6, "ESR": 0.08, "ESL": 1.2e-9})]
    write_simulated_lot(tmp_path / "caps", parts, np.logspace(3, 8, 201), seed=4, connection="shunt-thru")
    (tmp_path / "caps.toml").write_text(CAP_LIMITS)
    runner = CliRunner()
    args = ["batch", str(tmp_path / "caps"), "--limits", str(tmp_path / "caps.toml"), "--jobs", "1"]
    r = runner.invoke(app, args + ["--out", str(tmp_path / "none")])
    assert r.exit_code == 1
    guessed = {row["file"].rsplit("/", 1)[-1]: row["verdict"] for row in _read_csv(tmp_path / "none" / "summary.csv")}
    r = runner.invoke(app, args + ["--out", str(tmp_path / "out"), "--connection", "shunt-thru"])
    assert r.exit_code == 1, r.output
    rows = {row["file"].rsplit("/", 1)[-1]: row for row in _read_csv(tmp_path / "out" / "summary.csv")}
    assert guessed == {name: row["verdict"] for name, row in rows.items()}
    for part in parts:
        p = part.params
        # D = ESR / |X| with X = omega ESL - 1/(omega C) (series RLC; e.g. Bowick, ch. 1).
        w = 2 * math.pi * 1e6
        d_true = p["ESR"] / abs(w * p["ESL"] - 1 / (w * p["C"]))
        failed = [n for n, bad in (("C", not 0.9e-6 <= p["C"] <= 1.1e-6), ("ESR", p["ESR"] > 0.05),
                                   ("D@1MHz", d_true > 0.3), ("ESR@100kHz", p["ESR"] > 0.06)) if bad]
        row = rows[part.name]
        assert row["model"] == "capacitor" and row["error"] == ""
        assert row["verdict"] == ("fail" if failed else "pass"), (part.name, row)
        assert sorted(filter(None, row["failed_limits"].split(";"))) == sorted(failed)
        assert float(row["D@1MHz"]) == pytest.approx(d_true, rel=0.02)
        assert float(row["C"]) == pytest.approx(p["C"], rel=0.01)
    assert rows["C07.s2p"]["failed_limits"] == "ESR;ESR@100kHz;D@1MHz"


def test_output_names_mirror_the_inputs_and_never_collide(tmp_path):
    from zfit.lot._inputs import output_names as _output_names

    for rel in ("day1/L1.s1p", "day2/L1.s1p", "day2/L2.s1p", "day2/L2.csv"):
        (tmp_path / rel).parent.mkdir(parents=True, exist_ok=True)
        (tmp_path / rel).write_text("x")
    items = [(tmp_path / rel, rel) for rel in ("day1/L1.s1p", "day2/L1.s1p", "day2/L2.csv", "day2/L2.s1p")]
    assert _output_names(items) == ["day1/L1", "day2/L1", "day2/L2.csv", "day2/L2.s1p"]
    assert _output_names(items[2:3]) == ["L2"]


def test_in_process_run_puts_the_blas_thread_count_back(tmp_path):
    import scipy.linalg  # noqa: F401  (loads scipy's own OpenBLAS)

    from zfit.lot._threads import blas_threads as _blas_threads

    write_simulated_lot(tmp_path / "in", [SimulatedPart("T.csv", "inductor", {"L": 1e-6, "R_s": 0.1, "C_p": 1e-12})],
                        np.logspace(4, 9, 101), seed=1)
    before = [n for _, n in _blas_threads(None)]
    res = run_batch([tmp_path / "in"], tmp_path / "out", jobs=1, progress=False)
    assert res.errors == 0
    assert [n for _, n in _blas_threads(None)] == before

"""The lot report (``zfit batch --report``): one self-contained HTML page whose
tables hold the lot's own numbers, a histogram per limited quantity with its
limits and guard bands, and the parts that did not pass with the reason."""

import re
import subprocess
import xml.etree.ElementTree as ET

import numpy as np
import pytest
from typer.testing import CliRunner

from zfit.cli._app import app
from zfit.io._limits_file import parse_limits
from zfit.lot._lot_files import DECISION_RULE, MEASUREMENT_LIMITED_RULE
from zfit.lot._part_summary import PartSummary
from zfit.lot._rows import part_row
from zfit.lot._statistics import lot_summary
from zfit.lot._tasks import PartOutcome
from zfit.outputs._lot_report import lot_report_html

LIMITS = """\
title = "invented 10 uH choke, lot 26-117"
model = "inductor"
[limit.L]
nominal = "10u"
tolerance_percent = 5
[limit.R_s]
max = "250m"
[limit.SRF]
min = "20M"
"""


@pytest.fixture(scope="module")
def lot():
    """40 chokes: L ~ N(10 uH, 0.12 uH), R_s ~ N(190 mohm, 15 mohm), SRF ~ N(29 MHz, 1.5 MHz),
    each measured with the stated standard uncertainty (2 nH, 1.5 mohm, 20 kHz; written out
    here, a normal process and a normal measurement error), and three parts outside a limit."""
    rng = np.random.default_rng(26117)
    n = 40
    L = rng.normal(10e-6, 0.12e-6, n)
    R = rng.normal(0.19, 0.015, n)
    F = rng.normal(29e6, 1.5e6, n)
    L[5], R[11], F[23] = 9.2e-6, 0.31, 18e6  # one part out on each limit
    u = {"L": 2e-9, "R_s": 1.5e-3, "SRF": 20e3}
    limits = parse_limits(LIMITS, "limits.toml")
    rows = []
    for i in range(n):
        figures = {"L": (L[i], u["L"]), "R_s": (R[i], u["R_s"]), "C_p": (3e-12, 1e-14), "SRF": (F[i], u["SRF"], None)}
        summary = PartSummary("inductor", "series R_s-L with parallel C_p", figures, "in-band", 1.0)
        rows.append(part_row(PartOutcome(i, f"sweeps/L{i:03d}.s1p", summary), limits))
    rows.append(part_row(PartOutcome(n, "sweeps/L900.s1p", None, error="sweeps/L900.s1p:1: not a Touchstone file"),
                         limits))
    return rows, lot_summary(rows, limits), limits, {"L": L, "R_s": R, "SRF": F}, u


def _table(root, caption):
    for t in root.iter("table"):
        cap = t.find("caption")
        if cap is not None and caption in (cap.text or ""):
            head = ["".join(th.itertext()) for th in t.find("thead").iter("th")]
            body = [["".join(td.itertext()) for td in tr.iter("td")] for tr in t.find("tbody").iter("tr")]
            return head, body
    raise AssertionError(f"no table {caption!r}")


def test_lot_report_tables_hold_the_lot_numbers(lot):
    rows, summary, limits, values, u = lot
    page = lot_report_html(rows, summary, limits, decision_rule=DECISION_RULE, limited_rule=MEASUREMENT_LIMITED_RULE,
                           command="zfit batch sweeps --out out --limits limits.toml")
    root = ET.fromstring(page.encode("utf-8"))
    head, body = _table(root, "process capability")
    col = {h: i for i, h in enumerate(head)}
    by_name = {r[0]: r for r in body}
    assert set(by_name) == {"L", "R_s", "SRF"}
    lims = {"L": (9.5e-6, 10.5e-6), "R_s": (None, 0.25), "SRF": (20e6, None)}
    for name, x in values.items():
        r = by_name[name]
        q = next(q for q in summary.quantities if q.name == name)
        # Cpk = min(USL - mean, mean - LSL) / (3 s) (Montgomery 2013, 8.3), computed here from the values.
        s = np.std(x, ddof=1)
        lo, hi = lims[name]
        sides = [(hi - x.mean()) / (3 * s)] if hi is not None else []
        sides += [(x.mean() - lo) / (3 * s)] if lo is not None else []
        assert float(r[col["Cpk"]]) == pytest.approx(min(sides), abs=0.006)
        assert float(r[col["Cpk"]]) == pytest.approx(q.cpk, abs=0.006)
        assert int(r[col["n"]]) == 40 == q.n
        assert int(r[col["fail"]]) == 1 == q.n_fail
        assert int(r[col["pass"]]) == q.n_pass and int(r[col["indet."]]) == q.n_indeterminate
        assert r[col["note"]] == ""  # the spread is far larger than the measurement's here
    # The failing parts with why, and the part without a result with its error.
    head, bad = _table(root, "did not pass")
    listed = {r[0]: r for r in bad}
    assert {"sweeps/L005.s1p", "sweeps/L011.s1p", "sweeps/L023.s1p", "sweeps/L900.s1p"} <= set(listed)
    assert "below min" in listed["sweeps/L005.s1p"][2] and listed["sweeps/L005.s1p"][1] == "fail"
    assert "above max" in listed["sweeps/L011.s1p"][2]
    assert listed["sweeps/L900.s1p"][1] == "error" and "not a Touchstone file" in listed["sweeps/L900.s1p"][2]
    assert len(bad) == sum(1 for r in rows if r.verdict != "pass")
    # Self-contained: figures inline, nothing fetched.
    assert not re.search(r"https?://", page) and "src=" not in page and page.count("<svg") == 3


def test_measurement_limited_capability_is_said(lot):
    rows, _, limits, values, u = lot
    # The same lot measured 20 times worse: the spread of C_p-free figures is the measurement's.
    worse = []
    for r in rows:
        if r.error is None:
            figs = dict(r.figures)
            figs["SRF"] = (figs["SRF"][0], 5e6, None)  # u = 5 MHz > the lot's 1.5 MHz spread
            worse.append(r.__class__(**{**r.__dict__, "figures": figs}))
    summary = lot_summary(worse, limits)
    page = lot_report_html(worse, summary, limits, limited_rule=MEASUREMENT_LIMITED_RULE)
    root = ET.fromstring(page.encode("utf-8"))
    head, body = _table(root, "process capability")
    srf = next(r for r in body if r[0] == "SRF")
    q = next(q for q in summary.quantities if q.name == "SRF")
    assert q.measurement_limited is True
    assert srf[head.index("note")] == "limited by the measurement"
    assert "Limited by the measurement: true when std &lt;= u_rms" in page  # (HTML-escaped)


def test_histograms_draw_limits_and_guard_bands(lot):
    from zfit.outputs._plot_lot import plot_lot_histogram

    rows, summary, limits, values, u = lot
    q = next(q for q in summary.quantities if q.name == "L")
    verdicts = ["fail" if r.name == "sweeps/L005.s1p" else "pass" for r in rows if r.error is None]
    fig = plot_lot_histogram(values["L"], verdicts, name="L", unit="H", lower=q.lower, upper=q.upper,
                             guard_band=2 * q.u_rms, mean=q.mean)
    ax = fig.axes[0]
    bars = [p for p in ax.patches if (p.get_gid() or "").startswith("bars-")]
    assert sum(p.get_height() for p in bars) == 40
    assert sum(p.get_height() for p in bars if p.get_gid() == "bars-fail") == 1
    gid = {a.get_gid(): a for a in ax.get_children() if a.get_gid()}
    assert gid["limit-lower"].get_xdata()[0] == pytest.approx(9.5e-6)
    assert gid["limit-upper"].get_xdata()[0] == pytest.approx(10.5e-6)
    # Guard band k u_rms inside each limit (JCGM 106:2012, 8.3.2), u_rms = 2 nH here.
    g = gid["guard-upper"]
    x0, x1 = (g.get_x(), g.get_x() + g.get_width()) if hasattr(g, "get_width") else (
        g.get_xy()[:, 0].min(), g.get_xy()[:, 0].max())
    assert (x0, x1) == pytest.approx((10.5e-6 - 4e-9, 10.5e-6), rel=1e-9)
    assert ax.get_xlim()[0] < 9.2e-6 and ax.get_xlim()[1] > 10.5e-6  # every part and both limits shown
    import matplotlib.pyplot as plt

    plt.close(fig)


def test_lot_report_renders_on_one_page(lot, tmp_path):
    from test_report import _chromium, _print_pages

    exe = _chromium()
    rows, summary, limits, _, _ = lot
    text = lot_report_html(rows, summary, limits, decision_rule=DECISION_RULE, limited_rule=MEASUREMENT_LIMITED_RULE)
    assert _print_pages(text, tmp_path, "lot") == 1  # US Letter, Chromium's default paper
    path, png = tmp_path / "lot.html", tmp_path / "lot.png"
    base = [exe, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
            "--disable-background-networking", "--disable-component-update", "--disable-sync",
            f"--user-data-dir={tmp_path / 'profile'}"]
    subprocess.run(base + [f"--screenshot={png}", "--window-size=1240,1754", path.as_uri()], capture_output=True,
                   timeout=120, check=False)
    import matplotlib.image

    img = matplotlib.image.imread(str(png))[..., :3]
    rows_dark = np.flatnonzero((img.mean(axis=2) < 0.5).any(axis=1))
    assert rows_dark.max() - rows_dark.min() > 700  # tables and histograms, not an error line


def _impedance(model, params, f_hz):
    # Series R_s-L with parallel C_p: Z = 1 / (1/(R_s + j w L) + j w C_p) (textbook).
    s = 2j * np.pi * np.asarray(f_hz)
    return 1 / (1 / (params["R_s"] + s * params["L"]) + s * params["C_p"])


def test_batch_writes_the_report_and_reruns_over_it(tmp_path, monkeypatch):
    from zfit.lot._simulated_lot import SimulatedPart, write_simulated_lot

    parts = [SimulatedPart(f"L{i}.s1p", "inductor", {"L": L, "R_s": 0.18, "C_p": 3e-12})
             for i, L in enumerate((9.9e-6, 10.1e-6, 10.0e-6, 9.0e-6))]
    write_simulated_lot(tmp_path / "sweeps", parts, np.logspace(3, 8, 121), seed=5, connection="reflection",
                        impedance=_impedance)
    (tmp_path / "limits.toml").write_text(LIMITS)
    monkeypatch.chdir(tmp_path)
    runner = CliRunner()
    args = ["batch", "sweeps", "--out", "out", "--limits", "limits.toml", "--jobs", "1", "--quiet",
            "--report", "out/lot.html"]
    r = runner.invoke(app, args)
    assert r.exit_code == 1, r.output  # L3 (9 uH) is 10 % low: fail
    assert "wrote out/lot.html" in r.output
    page = (tmp_path / "out" / "lot.html").read_text()
    ET.fromstring(page.encode("utf-8"))
    assert "sweeps/L3.s1p" in page or "L3.s1p" in page
    # The report in the output folder is the batch's own: a rerun replaces it.
    r = runner.invoke(app, args)
    assert r.exit_code == 1 and "wrote out/lot.html" in r.output
    # Outside the folder an existing file is the user's: refused before the run without --force.
    (tmp_path / "mine.html").write_text("my notes")
    r = runner.invoke(app, args[:-1] + ["mine.html"])
    assert r.exit_code == 2 and "mine.html" in r.output
    assert (tmp_path / "mine.html").read_text() == "my notes"
    r = runner.invoke(app, args[:-2] + ["--report", "lot.pdf"])
    assert r.exit_code == 2 and ".html" in r.output

"""Capture plots and outputs: the time record, levels, edges, fitted response
and the Bode/coherence figure carry exactly the step result's data."""

import re
import xml.etree.ElementTree as ET

import numpy as np
import pytest
import scipy.signal

from zfit.outputs._outputs import write_outputs
from zfit.outputs._result_plots import step_plots as step_figures


@pytest.fixture(scope="module")
def rc_result():
    from zfit.io._capture import make_capture
    from zfit.capture._analysis import analyse_capture

    # A square wave through a first-order low-pass, tau = 20 us (scipy.signal.lsim is
    # the reference response), sampled at 10 MHz and quantised.
    rng = np.random.default_rng(7)
    dt, tau = 1e-7, 20e-6
    t = np.arange(40_000) * dt
    square = np.where((t // 400e-6) % 2 == 1, 5.0, 0.0)
    # The generator's edges are not instant: a second-order stage of 0.3 us.
    _, vin, _ = scipy.signal.lsim(([1.0], np.polymul([0.3e-6, 1.0], [0.3e-6, 1.0])), square, t)
    _, vout, _ = scipy.signal.lsim(([1.0], [tau, 1.0]), vin, t)
    q = 10.0 / 4096  # a 12-bit record: the input edges then stand well above the noise at Nyquist
    vin_q = np.round((vin + rng.normal(0, 0.5 * q, t.size)) / q) * q
    vout_q = np.round((vout + rng.normal(0, 0.5 * q, t.size)) / q) * q
    cap = make_capture({"CH1": vin_q, "CH2": vout_q}, dt, source="rc.csv")
    return analyse_capture(cap, input="CH1", output="CH2")


def _artist(fig, gid):
    found = [a for ax in fig.axes for a in ax.get_children() if a.get_gid() == gid]
    assert found, gid
    return found[0]


def test_bode_figure_holds_the_response(rc_result):
    figs = step_figures(rc_result)
    fig = figs["bode"]
    r = rc_result.response
    pos = r.f_hz > 0
    line = _artist(fig, "h-mag-db")
    # The measured curve joins the usable bins; the others are faint dots.
    use = pos & r.usable
    np.testing.assert_array_equal(line.get_xdata(), r.f_hz[use])
    np.testing.assert_allclose(line.get_ydata(), 20 * np.log10(np.abs(r.h[use])), rtol=1e-12)
    if (pos & ~r.usable).any():
        np.testing.assert_array_equal(_artist(fig, "h-mag-db-unused").get_xdata(), r.f_hz[pos & ~r.usable])
    np.testing.assert_array_equal(_artist(fig, "coherence").get_ydata(), r.coherence[pos])
    span = _artist(fig, "usable-band")
    lo, hi = (span.get_x(), span.get_x() + span.get_width()) if hasattr(span, "get_width") else (None, None)
    assert (lo, hi) == pytest.approx(tuple(rc_result.usable_band_hz))
    # First-order low-pass: -3.01 dB at 1/(2 pi tau) = 7.96 kHz (textbook), read off the plotted line.
    f = np.asarray(line.get_xdata())
    y = np.asarray(line.get_ydata())
    assert np.interp(np.log(1 / (2 * np.pi * 20e-6)), np.log(f), y) == pytest.approx(-3.01, abs=0.2)


def test_time_figure_holds_levels_edges_and_fit(rc_result):
    fig = step_figures(rc_result)["time"]
    out_label = f"output ({rc_result.output_name})"
    assert _artist(fig, f"level-{out_label}-high").get_ydata()[0] == pytest.approx(rc_result.levels_v[1])
    assert _artist(fig, f"level-{out_label}-low").get_ydata()[0] == pytest.approx(rc_result.levels_v[0])
    edges = np.asarray(_artist(fig, "edges").get_xdata())
    assert edges.size >= 3 and np.all(np.isin(edges, rc_result.edge_times_s))
    rec = _artist(fig, f"record-{out_label}")
    t = np.asarray(rec.get_xdata())
    v = np.asarray(rec.get_ydata())
    raw = rc_result.capture.channels[rc_result.output_name]
    idx = np.rint(t * rc_result.sample_rate_hz).astype(int)
    np.testing.assert_array_equal(v, raw[idx])  # every plotted point is a sample of the record
    fit = _artist(fig, "fit-first-order response, output")
    tf, vf = np.asarray(fit.get_xdata()), np.asarray(fit.get_ydata())
    ok = np.isfinite(vf)
    ew = rc_result.edge_waveform
    n = int(np.isfinite(ew.fit_v).sum())
    np.testing.assert_allclose(vf[ok][:n], ew.fit_v[np.isfinite(ew.fit_v)])
    assert tf[ok][0] >= edges[0] - 1e-12


def test_step_outputs_written(tmp_path, rc_result):
    paths = write_outputs(rc_result, plot=tmp_path / "s.svg", report=tmp_path / "s.html", command="zfit step rc.csv")
    assert [p.name for p in paths] == ["s.svg", "s-bode.svg", "s.html"]
    page = (tmp_path / "s.html").read_text()
    ET.fromstring(page.encode())
    assert not re.search(r"https?://", page) and "src=" not in page
    assert "Time-domain figures" in page and "usable band" in page
    with pytest.raises(ValueError, match="sense resistor"):
        write_outputs(rc_result, netlist=tmp_path / "s.cir")

"""What the plots draw where the issue found them wrong (issue 15): the tail of a
long time record, the +-2 sigma bands (whose they are, and whether the scatter
lies in them), D above the SRF, the peak-Q label clear of every curve.  Figures
are checked through their artists (data and window extents), not pixels."""

import numpy as np
import pytest

from zfit.outputs._plot_capture import plot_time_record
from zfit.outputs._plots import plot_esr_d, plot_q, plot_sweep


def _artist(fig, gid):
    found = [a for ax in fig.axes for a in ax.get_children() if a.get_gid() == gid]
    assert found, f"no artist {gid!r}"
    return found[0]


def _close(fig):
    import matplotlib.pyplot as plt

    plt.close(fig)


def _legend_texts(fig):
    texts = [t.get_text() for lg in fig.legends for t in lg.get_texts()]
    for ax in fig.axes:
        if ax.get_legend() is not None:
            texts += [t.get_text() for t in ax.get_legend().get_texts()]
    return texts


def test_time_record_tail_is_drawn_not_ramped(rng):
    # A 5 V square wave (period 40 us) sampled at 25 MHz for 4,499 samples past
    # 1500 whole runs of the envelope: the last falling edge lies in the part
    # that used to be collapsed into one straight line (the demo's 138-178 us).
    dt = 40e-9
    n = 1500 * 100 + 4499
    t = np.arange(n) * dt
    v = np.where((t // 20e-6) % 2 == 1, 5.0, 0.0) + rng.normal(0, 0.01, n)
    fig = plot_time_record(t, {"output": v})
    line = _artist(fig, "record-output")
    x, y = np.asarray(line.get_xdata()), np.asarray(line.get_ydata())
    idx = np.rint(x / dt).astype(int)
    np.testing.assert_array_equal(y, v[idx])  # every point a sample of the record
    assert idx[-1] == n - 1  # the record's last sample ends the line
    last_edge = 6160e-6  # the wave falls at even multiples of 20 us: 6.16 ms lies in the tail (6.0-6.18 ms)
    tail = x > 150_000 * dt
    assert tail.sum() >= 2 * (4499 // 103) - 2  # the tail is drawn run by run, not as two points
    # After the last edge the line stays at the low level: no ramp from 5 V down to 0 V.
    after = x > last_edge + 1e-6
    assert after.any() and np.all(np.abs(y[after & tail]) < 0.1)
    before = (x > last_edge - 19e-6) & (x < last_edge - 1e-6)
    assert before.any() and np.all(np.abs(y[before] - 5.0) < 0.1)
    _close(fig)


@pytest.fixture
def noisy_inductor(rng):
    # Series R-L with parallel C (textbook parallel resonance), 0.5 % of |Z| + 1 mohm
    # complex-circular noise written out here; Q = |X|/R (common practice).
    f = np.geomspace(1e4, 3e7, 401)
    s = 2j * np.pi * f
    z0 = 1 / (1 / (0.05 + s * 10e-6) + s * 5e-12)
    sig = 5e-3 * np.abs(z0) + 1e-3
    z = z0 + sig / np.sqrt(2) * (rng.normal(size=f.size) + 1j * rng.normal(size=f.size))
    return f, z, z0, sig


def test_q_band_of_one_point_covers_the_scatter(noisy_inductor):
    from types import SimpleNamespace

    from zfit.outputs._result_plots import point_std

    f, z, z0, sig = noisy_inductor
    srf = 1 / (2 * np.pi * np.sqrt(10e-6 * 5e-12))
    tr = SimpleNamespace(sigma_ohm=sig, rational_ohm=z0, z_ohm=z, q=object(), losses=None)
    q_std, _ = point_std(tr)
    q0 = np.abs(z0.imag) / z0.real
    q = np.abs(z.imag) / z.real
    fig = plot_q(f, q, q_std=q_std, q_rational=q0, f_max_hz=srf, band_of="point")
    assert "±2σ of one measured point" in _legend_texts(fig)
    keep = f <= srf
    inside = np.abs(q[keep] - q0[keep]) <= 2 * q_std[keep]
    # Normal noise: about 95 % within 2 sigma (first-order propagation, GUM 5.1.2); at least 90 % here.
    assert inside.mean() > 0.9
    _close(fig)


def test_esr_band_and_d_above_the_srf(rng):
    # Series ESR-ESL-C (textbook series resonance), noise 0.3 % of |Z| + 0.5 mohm written out here.
    f = np.geomspace(1e4, 3e8, 401)
    s = 2j * np.pi * f
    z0 = 0.01 + s * 1e-9 + 1 / (s * 100e-9)
    sig = 3e-3 * np.abs(z0) + 5e-4
    z = z0 + sig / np.sqrt(2) * (rng.normal(size=f.size) + 1j * rng.normal(size=f.size))
    srf = 1 / (2 * np.pi * np.sqrt(1e-9 * 100e-9))  # 15.9 MHz
    d = z.real / np.abs(z.imag)
    d0 = z0.real / np.abs(z0.imag)
    fig = plot_esr_d(f, z.real, d, esr_std=sig / np.sqrt(2), esr_rational=z0.real, d_rational=d0, d_circuit=d0,
                     srf_hz=srf, band_of="point")
    assert "±2σ of one measured point" in _legend_texts(fig)
    verts = _artist(fig, "esr-band").get_paths()[0].vertices
    assert verts[:, 1].max() == pytest.approx(np.max(z0.real + np.sqrt(2) * sig), rel=1e-12)
    inside = np.abs(z.real - z0.real) <= 2 * sig / np.sqrt(2)
    assert inside.mean() > 0.9  # the scatter lies in the band (95 % for normal noise)
    above = f > srf
    for gid in ("d-measured", "d-rational", "d-circuit"):
        y = np.asarray(_artist(fig, gid).get_ydata(), dtype=float)
        assert np.all(np.isnan(y[above]))
        if gid != "d-measured":  # (a measured point with R < 0 has no D on a log axis either)
            assert np.isfinite(y[~above]).all()
    span = _artist(fig, "d-above-srf")
    x0 = span.get_x() if hasattr(span, "get_x") else span.get_xy()[:, 0].min()
    assert x0 == pytest.approx(srf)
    assert any("above the SRF" in t and "D not shown" in t for t in _legend_texts(fig))
    _close(fig)


@pytest.mark.parametrize("size", [(7.2, 2.8), (3.6, 2.2)])
def test_peak_q_label_crosses_no_curve(noisy_inductor, size):
    f, z, z0, sig = noisy_inductor
    srf = 1 / (2 * np.pi * np.sqrt(10e-6 * 5e-12))
    q0 = np.abs(z0.imag) / z0.real
    q = np.abs(z.imag) / z.real
    qt = 2 * np.pi * f * 10e-6 / 0.05  # omega L / R_s keeps rising through the label's old place
    below = f < srf / 2  # the Q peak of the inductive region
    peak = (float(f[below][np.argmax(q0[below])]), float(q0[below].max()))
    fig = plot_q(f, q, q_std=0.05 * q0, q_rational=q0, q_circuit=q0, q_textbook=qt, peak=peak, f_max_hz=srf,
                 width_in=size[0], height_in=size[1])
    label = _artist(fig, "q-peak-label")
    assert label.get_text().startswith("peak Q")
    fig.draw_without_rendering()
    r = fig.canvas.get_renderer()
    box = label.get_window_extent(r)
    ax = fig.axes[0]
    for gid in ("q-rational", "q-circuit", "q-textbook"):
        line = _artist(fig, gid)
        xy = line.get_transform().transform(np.column_stack([line.get_xdata(), line.get_ydata()]))
        xy = xy[np.isfinite(xy).all(axis=1)]
        hit = (xy[:, 0] > box.x0) & (xy[:, 0] < box.x1) & (xy[:, 1] > box.y0) & (xy[:, 1] < box.y1)
        assert not hit.any(), gid
    frame = ax.get_window_extent(r)
    assert frame.x0 <= box.x0 and box.x1 <= frame.x1 and frame.y0 <= box.y0 and box.y1 <= frame.y1
    assert not box.overlaps(ax.get_legend().get_window_extent(r))
    _close(fig)


def test_sweep_band_says_how_wide_it_is(noisy_inductor):
    f, z, z0, sig = noisy_inductor
    fig = plot_sweep(f, z, sig, circuit_ohm=z0)
    rel = np.median(2 * sig / np.sqrt(2) / np.abs(z))  # +-2 sigma of |Z| is sigma/sqrt 2 (complex-circular)
    assert f"measured ±2σ (median ±{100 * rel:.2g} % of |Z|)" in _legend_texts(fig)
    _close(fig)


def test_report_sized_sweep_keeps_readable_panels(noisy_inductor):
    # At the report's size (7.3 x 3.7 in) phase and residual panels get >= 0.7 in each
    # (five tick labels of 7.5 pt and their gaps; "from memory" of print practice).
    from zfit.outputs._pages import SWEEP_PAGE_SIZES

    f, z, z0, sig = noisy_inductor
    fig = plot_sweep(f, z, sig, circuit_ohm=z0, width_in=SWEEP_PAGE_SIZES["sweep"][0],
                     height_in=SWEEP_PAGE_SIZES["sweep"][1])
    from zfit.outputs._plot_style import apply_layout

    apply_layout(fig)
    h = [ax.get_position().height * fig.get_figheight() for ax in fig.axes[:3]]
    assert h[0] >= 1.1 and h[1] >= 0.7 and h[2] >= 0.7
    _close(fig)

"""Plots: the data on each figure is the data it was given (tests check the
arrays on the artists, not pixels), tick labels are in engineering notation,
and files come out as PNG or SVG by extension."""

import xml.etree.ElementTree as ET

import numpy as np
import pytest

from zfit._errors import OutputExistsError, ZfitInputError
from zfit.outputs._plot_capture import plot_bode, plot_time_record
from zfit.outputs._plot_files import figure_bytes, save_figure
from zfit.outputs._plot_style import envelope, eng_tick
from zfit.outputs._plots import plot_esr_d, plot_q, plot_sweep


def _artist(fig, gid):
    found = [a for ax in fig.axes for a in ax.get_children() if a.get_gid() == gid]
    assert found, f"no artist {gid!r}"
    return found[0]


def _xy(fig, gid):
    line = _artist(fig, gid)
    return np.asarray(line.get_xdata(), dtype=float), np.asarray(line.get_ydata(), dtype=float)


def _span(artist):
    # axvspan gives a Rectangle (matplotlib >= 3.9) or a Polygon (older).
    if hasattr(artist, "get_width"):
        return artist.get_x(), artist.get_x() + artist.get_width()
    v = artist.get_xy()
    return v[:, 0].min(), v[:, 0].max()


def _close(fig):
    import matplotlib.pyplot as plt

    plt.close(fig)


@pytest.mark.parametrize(
    "x,unit,text",
    [(1e4, "Hz", "10 kHz"), (2200.0, "ohm", "2.2 kΩ"), (5e-5, "s", "50 µs"), (0.1, "ohm", "100 mΩ"),
     (1.0, "", "1"), (2.5, "V", "2.5 V"), (999.9999, "Hz", "1 kHz"), (0.0, "V", "0 V")],
)
def test_eng_tick(x, unit, text):
    assert eng_tick(x, unit) == text


def test_envelope_keeps_extremes_and_order(rng):
    t = np.arange(1_000_003) * 1e-9
    v = rng.normal(size=t.size)
    v[123_457] = 9.0  # a single-sample spike must survive the decimation
    te, ve = envelope(t, v, 1000)
    assert te.size <= 2002
    assert ve.max() == 9.0 and ve.min() == v.min()
    assert np.all(np.diff(te) >= 0)


@pytest.fixture
def inductor_sweep(rng):
    f = np.logspace(3, 9, 401)
    s = 2j * np.pi * f
    L, R_s, C_p = 10e-6, 0.08, 4e-12
    zc = 1 / (1 / (R_s + s * L) + s * C_p)
    sig = 1e-3 * np.abs(zc) + 1e-3
    z = zc + sig / np.sqrt(2) * (rng.normal(size=f.size) + 1j * rng.normal(size=f.size))
    return f, z, sig, zc, 1 / (2 * np.pi * np.sqrt(L * C_p))


def test_sweep_plot_data(inductor_sweep):
    f, z, sig, zc, srf = inductor_sweep
    zr = zc * (1 + 1e-4)
    fig = plot_sweep(f, z, sig, circuit_ohm=zc, rational_ohm=zr, srf_hz=srf, valid_band_hz=(1e3, 3e8), title="t")
    x, y = _xy(fig, "measured-mag")
    np.testing.assert_array_equal(x, f)
    np.testing.assert_allclose(y, np.abs(z), rtol=1e-15)
    np.testing.assert_allclose(_xy(fig, "circuit-mag")[1], np.abs(zc), rtol=1e-15)
    np.testing.assert_allclose(_xy(fig, "rational-mag")[1], np.abs(zr), rtol=1e-15)
    np.testing.assert_allclose(_xy(fig, "measured-phase")[1], np.degrees(np.angle(z)), rtol=1e-13)
    np.testing.assert_allclose(_xy(fig, "circuit-phase")[1], np.degrees(np.angle(zc)), rtol=1e-13)
    # Normalised residual: |Z_model - Z| / sigma (Sweep.sigma_ohm is complex-circular).
    np.testing.assert_allclose(_xy(fig, "residual-circuit")[1], np.abs(zc - z) / sig, rtol=1e-13)
    np.testing.assert_allclose(_xy(fig, "residual-rational")[1], np.abs(zr - z) / sig, rtol=1e-13)
    assert _xy(fig, "srf")[0][0] == pytest.approx(srf, rel=1e-15)
    assert _xy(fig, "noise-1sigma")[1][0] == 1.0 and _xy(fig, "noise-3sigma")[1][0] == 3.0
    # The band is |Z| +- 2 sigma/sqrt(2): its top edge reaches max(|Z| + sqrt(2) sigma).
    verts = _artist(fig, "measured-band").get_paths()[0].vertices
    assert verts[:, 1].max() == pytest.approx(np.max(np.abs(z) + np.sqrt(2) * sig), rel=1e-12)
    # Outside the valid band (above 300 MHz) is shaded.
    assert _span(_artist(fig, "outside-band")) == pytest.approx((3e8, 1e9))
    ax_r = fig.axes[2]
    assert ax_r.xaxis.get_major_formatter()(1e6, 0) == "1 MHz"
    assert fig.axes[0].yaxis.get_major_formatter()(1e3, 0) == "1 kΩ"
    assert fig.axes[0].get_yscale() == "log" and fig.axes[0].get_xscale() == "log"
    _close(fig)


def test_q_plot_data(inductor_sweep):
    f, z, sig, zc, srf = inductor_sweep
    q = np.abs(z.imag) / z.real
    qc = np.abs(zc.imag) / zc.real
    qt = 2 * np.pi * f * 10e-6 / 0.08  # Q = omega L / R (textbook definition)
    fig = plot_q(f, q, q_std=0.01 * q, q_circuit=qc, q_textbook=qt, peak=(1e7, 5000.0), f_max_hz=srf)
    keep = f <= srf
    x, y = _xy(fig, "q-measured")
    np.testing.assert_array_equal(x, f[keep])
    np.testing.assert_allclose(y, np.where(q[keep] > 0, q[keep], np.nan), rtol=1e-15)
    np.testing.assert_allclose(_xy(fig, "q-circuit")[1], qc[keep], rtol=1e-15)
    np.testing.assert_allclose(_xy(fig, "q-textbook")[1], qt[keep], rtol=1e-15)
    assert tuple(_xy(fig, "q-peak")[1]) == (5000.0,)
    _close(fig)


def test_esr_d_plot_data(rng):
    f = np.logspace(3, 9, 201)
    s = 2j * np.pi * f
    zc = 0.012 + s * 0.9e-9 + 1 / (s * 100e-9)
    d = zc.real / np.abs(zc.imag)  # D = tan(delta) = ESR / |X| (common practice)
    fig = plot_esr_d(f, zc.real, d, esr_std=np.full(f.size, 1e-3), esr_circuit=zc.real, d_circuit=d)
    np.testing.assert_allclose(_xy(fig, "esr-measured")[1], zc.real, rtol=1e-15)
    np.testing.assert_allclose(_xy(fig, "esr-circuit")[1], zc.real, rtol=1e-15)
    np.testing.assert_allclose(_xy(fig, "d-measured")[1], d, rtol=1e-15)
    np.testing.assert_allclose(_xy(fig, "d-circuit")[1], d, rtol=1e-15)
    assert fig.axes[0].yaxis.get_major_formatter()(0.01, 0) == "10 mΩ"
    _close(fig)
    # With the rational model: measured points as dots, the smooth curves as lines.
    fig = plot_esr_d(f, zc.real * 1.01, d, esr_rational=zc.real, d_rational=d)
    assert _artist(fig, "esr-measured").get_linestyle() == "None"
    np.testing.assert_allclose(_xy(fig, "esr-rational")[1], zc.real, rtol=1e-15)
    np.testing.assert_allclose(_xy(fig, "d-rational")[1], d, rtol=1e-15)
    _close(fig)


def test_bode_plot_data():
    import scipy.signal

    f = np.logspace(2, 7, 300)
    # First-order low-pass, tau = 10 us: reference response from scipy.signal.freqs.
    _, h = scipy.signal.freqs([1.0], [1e-5, 1.0], worN=2 * np.pi * f)
    coh = np.linspace(0.2, 1.0, f.size)
    fig = plot_bode(f, h, coh, usable_band_hz=(1e3, 2e6), h_std=0.01 * np.abs(h), h_model=h)
    np.testing.assert_allclose(_xy(fig, "h-mag-db")[1], 20 * np.log10(np.abs(h)), rtol=1e-13)
    np.testing.assert_allclose(_xy(fig, "h-phase")[1], np.degrees(np.angle(h)), rtol=1e-13)
    np.testing.assert_allclose(_xy(fig, "h-model-mag-db")[1], 20 * np.log10(np.abs(h)), rtol=1e-13)
    np.testing.assert_array_equal(_xy(fig, "coherence")[1], coh)
    # At the corner 1/(2 pi tau) the plotted magnitude is -3.01 dB (textbook first-order response).
    x, y = _xy(fig, "h-mag-db")
    assert np.interp(np.log(1 / (2 * np.pi * 1e-5)), np.log(x), y) == pytest.approx(-3.0103, abs=2e-3)
    assert _span(_artist(fig, "usable-band")) == pytest.approx((1e3, 2e6))
    _close(fig)


def test_time_record_plot_data(rng):
    t = np.arange(2_000) * 1e-6
    vin = 2.5 * ((t // 5e-4) % 2)
    vout = 0.8 * vin
    edges = np.array([5e-4, 1e-3, 1.5e-3])
    tf = t[5000:10000]
    vf = 2.0 * (1 - np.exp(-(tf - 5e-4) / 1e-4))
    fig = plot_time_record(t, {"input": vin, "output": vout}, levels_v={"input": (0.0, 2.5), "output": (0.0, 2.0)},
                           edges_s=edges, fitted={"output": (tf, vf)})
    x, y = _xy(fig, "record-input")
    np.testing.assert_array_equal(x, t)  # short record: plotted as is
    np.testing.assert_array_equal(y, vin)
    assert _xy(fig, "level-output-high")[1][0] == 2.0
    assert _xy(fig, "level-input-low")[1][0] == 0.0
    np.testing.assert_array_equal(_xy(fig, "edges")[0], edges)
    np.testing.assert_array_equal(_xy(fig, "fit-output")[1], vf)
    assert fig.axes[0].xaxis.get_major_formatter()(5e-4, 0) == "500 µs"
    _close(fig)


def test_save_figure_by_extension(tmp_path, inductor_sweep):
    f, z, sig, zc, srf = inductor_sweep
    png = save_figure(plot_sweep(f, z, sig, circuit_ohm=zc), tmp_path / "a.png")
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    svg = save_figure(plot_sweep(f, z, sig, circuit_ohm=zc), tmp_path / "a.svg")
    root = ET.fromstring(svg.read_bytes())
    assert root.tag.endswith("svg")
    with pytest.raises(OutputExistsError):
        save_figure(plot_sweep(f, z, sig), tmp_path / "a.png")
    save_figure(plot_sweep(f, z, sig), tmp_path / "a.png", force=True)
    with pytest.raises(ZfitInputError, match=r"\.png or \.svg"):
        save_figure(plot_sweep(f, z, sig), tmp_path / "a.pdf")


def test_svg_is_reproducible(inductor_sweep):
    f, z, sig, zc, srf = inductor_sweep
    a = figure_bytes(plot_sweep(f, z, sig, circuit_ohm=zc), "svg", salt="x")
    b = figure_bytes(plot_sweep(f, z, sig, circuit_ohm=zc), "svg", salt="x")
    assert a == b


def test_schematic_draws_every_element():
    from zfit.outputs._plot_schematic import plot_schematic

    tree = ("parallel", [("series", [("R", "R_s = 66 mΩ"), ("L", "L = 10 µH")]), ("C", "C_p = 4.7 pF"),
                         ("R", "R_p = 20 kΩ")])
    fig = plot_schematic(tree)
    texts = {t.get_gid(): t.get_text() for t in fig.axes[0].texts if t.get_gid()}
    assert texts == {"element-R_s": "R_s = 66 mΩ", "element-L": "L = 10 µH", "element-C_p": "C_p = 4.7 pF",
                     "element-R_p": "R_p = 20 kΩ"}
    # Three parallel branches: the two rails carry a junction dot per branch.
    dots = [ln for ln in fig.axes[0].lines if ln.get_marker() == "o" and len(ln.get_xdata()) == 3]
    assert len(dots) == 2
    _close(fig)


def test_schematic_labels_of_a_series_chain_do_not_overlap():
    # At the report's width (1.95 in) the three labels of a capacitor's series
    # chain used to run into each other ("ESL = 900 pHC = 100 nF").
    from zfit.outputs._plot_schematic import plot_schematic

    tree = ("series", [("R", "ESR = 8.02 mΩ"), ("L", "ESL = 900 pH"), ("C", "C = 100 nF")])
    fig = plot_schematic(tree, width_in=1.95)
    renderer = fig.canvas.get_renderer()
    boxes = sorted((t.get_window_extent(renderer) for t in fig.axes[0].texts if (t.get_gid() or "").startswith("element-")),
                   key=lambda b: b.x0)
    assert len(boxes) == 3
    gaps = [b.x0 - a.x1 for a, b in zip(boxes, boxes[1:])]
    assert min(gaps) > 0.0  # pixels between neighbouring labels
    sizes = {t.get_fontsize() for t in fig.axes[0].texts if (t.get_gid() or "").startswith("element-")}
    assert len(sizes) == 1 and 3.5 <= sizes.pop() <= 6.0


def test_bode_joins_only_the_usable_bins():
    # A square wave has no energy at its even harmonics: those bins of H1 are
    # noise (coherence near 0) and must not be joined into the measured curve.
    import scipy.signal

    f = 1e4 * np.arange(1, 101)
    _, h = scipy.signal.freqs([1.0], [1e-5, 1.0], worN=2 * np.pi * f)  # reference: first-order low-pass
    usable = (np.arange(f.size) % 2) == 0  # the odd harmonics 10k, 30k, ...
    noisy = np.where(usable, h, 1e-3 * np.exp(1j * np.arange(f.size)))
    coh = np.where(usable, 0.99, 0.02)
    fig = plot_bode(f, noisy, coh, usable=usable, h_std=0.01 * np.abs(h), usable_band_hz=(1e4, 1e6))
    x, y = _xy(fig, "h-mag-db")
    np.testing.assert_array_equal(x, f[usable])
    np.testing.assert_allclose(y, 20 * np.log10(np.abs(h[usable])), rtol=1e-13)
    x, y = _xy(fig, "h-mag-db-unused")
    np.testing.assert_array_equal(x, f[~usable])
    assert _xy(fig, "coherence")[1].size == f.size  # every bin's coherence is still shown
    _close(fig)


@pytest.mark.parametrize("name", ["L_$1$.s1p", "cap $\\frac{a}{$.s2p", "odd$_{name}"])
def test_file_names_with_dollar_signs_are_titles_not_maths(tmp_path, name):
    # Issue 16: `$...$` in a file name broke --plot (matplotlib maths text).
    # The title is drawn as the plain string (matplotlib Text.get_text returns it unchanged).
    from zfit.outputs._plot_files import save_figure

    f = np.geomspace(1e3, 1e6, 50)
    z = 1 + 2j * np.pi * f * 1e-6
    fig = plot_sweep(f, z, np.full(f.size, 1e-3), title=name)
    assert fig._suptitle.get_text() == name
    path = save_figure(fig, tmp_path / "p.png")
    assert path.stat().st_size > 1000  # a PNG was rendered (the header alone is 8 bytes)

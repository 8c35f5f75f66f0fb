"""The one-page HTML report and `write_outputs`: well-formed, self-contained,
holds the values, renders in headless Chromium; every output file written
atomically and never over a file without force."""

import html.parser
import os
import re
import shutil
import subprocess
import xml.etree.ElementTree as ET

import numpy as np
import pytest

from zfit._errors import OutputExistsError, ZfitInputError
from zfit.outputs._outputs import write_outputs
from zfit.outputs._pages import identification_report
from zfit.outputs._views import pretty, pretty_std
from zfit.outputs._report import report_html


def _sweep(kind: str, seed: int):
    from zfit.data._sweep import make_sweep

    rng = np.random.default_rng(seed)
    f = np.geomspace(1e4, 3e8, 301)
    s = 2j * np.pi * f
    if kind == "inductor":
        z = 1 / (1 / (0.12 + s * 10e-6) + s * 5e-12)
    else:
        z = 0.02 + s * 1.2e-9 + 1 / (s * 47e-9)
    sig = 2e-3 * np.abs(z) + 1e-3
    noisy = z + sig / np.sqrt(2) * (rng.normal(size=f.size) + 1j * rng.normal(size=f.size))
    return make_sweep(f, noisy, sig, source=f"bench/{kind}_part.csv", connection="impedance",
                      data_format="test table", noise_model="0.2 % of |Z| + 1 mohm")


@pytest.fixture(scope="module")
def inductor():
    import zfit

    return zfit.identify(_sweep("inductor", 1), at=(1e5, 1e6))


@pytest.fixture(scope="module")
def capacitor():
    import zfit

    return zfit.identify(_sweep("capacitor", 2), at=(1e5,))


class _Balance(html.parser.HTMLParser):
    """Checks that every element is closed in order (void elements excepted)."""

    VOID = {"meta", "br", "hr", "img", "link", "input"}

    def __init__(self):
        super().__init__()
        self.stack, self.errors = [], []

    def handle_starttag(self, tag, attrs):
        if tag not in self.VOID:
            self.stack.append(tag)

    def handle_startendtag(self, tag, attrs):
        pass

    def handle_endtag(self, tag):
        if not self.stack or self.stack[-1] != tag:
            self.errors.append(f"unexpected </{tag}> with open {self.stack[-3:]}")
        else:
            self.stack.pop()


@pytest.fixture(scope="module")
def page(inductor):
    return report_html(identification_report(inductor, ["zfit", "identify", "bench/inductor_part.csv", "--report", "r.html"]))


def test_report_is_well_formed(page):
    root = ET.fromstring(page.encode("utf-8"))  # XHTML-compatible: an XML parser reads it
    assert root.tag == "html"
    p = _Balance()
    p.feed(page)
    p.close()
    assert p.errors == [] and p.stack == []


def test_report_is_self_contained(page):
    # No network and no file references: no URLs, no src=, no @import, no url() but fragment ones.
    assert not re.search(r"https?://", page)
    assert "src=" not in page
    assert "@import" not in page
    assert not re.search(r"url\((?!#)", page)
    hrefs = re.findall(r'href="([^"]*)"', page)
    assert hrefs and all(h.startswith("#") for h in hrefs)
    ids = re.findall(r'\sid="([^"]+)"', page)
    assert len(ids) == len(set(ids)), "inline SVGs must not share element ids"
    assert page.count("<svg") == 3  # schematic, impedance and Q
    assert "@page" in page and "@media print" in page


def test_report_holds_the_values(page, inductor):
    L = inductor.parameters["L"]
    assert pretty_std(L.value, L.std, "H") in page
    assert "10.0" in pretty_std(L.value, L.std, "H")  # truth 10 uH, within its uncertainty
    assert abs(L.value - 10e-6) < 3 * L.std + 1e-9
    srf = inductor.srf
    assert html_text(pretty_std(srf.value_hz, srf.std_hz, "Hz")) in page
    assert "zfit identify bench/inductor_part.csv --report r.html" in page
    assert "Spot readouts" in page and "100 kHz" in page and "1 MHz" in page
    assert "band of validity" in page


def html_text(text):
    import html as h

    return h.escape(text)


def test_pretty_formats():
    assert pretty(4.7e-6, "H") == "4.7 µH"
    assert pretty(0.025, "ohm") == "25 mΩ"
    assert pretty_std(23.21505e6, 320.0, "Hz") == "23.21505 ± 0.00032 MHz"
    assert pretty_std(10.00032e-6, 3.7e-10, "H") == "10.00032 ± 0.00037 µH"


def _chromium():
    exe = shutil.which("chromium") or shutil.which("chromium-browser")
    if exe is None:
        if os.environ.get("ZFIT_REQUIRE_CHROMIUM") == "1":
            pytest.fail("chromium is required (ZFIT_REQUIRE_CHROMIUM=1) but not on PATH")
        pytest.skip("chromium not installed")
    return exe


def test_report_renders_in_headless_chromium(page, tmp_path):
    exe = _chromium()
    path = tmp_path / "report.html"
    path.write_text(page, encoding="utf-8")
    png = tmp_path / "report.png"
    cmd = [exe, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
           "--disable-background-networking", "--disable-component-update", "--disable-sync",
           f"--user-data-dir={tmp_path / 'profile'}", f"--screenshot={png}", "--window-size=1240,1754",
           path.as_uri()]
    subprocess.run(cmd, capture_output=True, timeout=120, check=False)
    assert png.exists() and png.stat().st_size > 50_000
    import matplotlib.image

    img = matplotlib.image.imread(str(png))[..., :3]
    dark = (img.mean(axis=2) < 0.5).mean()
    # Text and plots cover a few per cent of the page; blank would be 0.
    assert 0.01 < dark < 0.5
    # Content reaches well down the page (not a one-line error page).
    rows = np.flatnonzero((img.mean(axis=2) < 0.5).any(axis=1))
    assert rows.max() - rows.min() > 900
    # Printed (Chromium's default paper, US Letter; A4 is taller), a sweep's report is one page.
    pdf = tmp_path / "report.pdf"
    subprocess.run(cmd[:-3] + [f"--print-to-pdf={pdf}", "--no-pdf-header-footer", path.as_uri()],
                   capture_output=True, timeout=120, check=False)
    pages = re.findall(rb"/Type\s*/Page(?!s)", pdf.read_bytes())
    assert len(pages) == 1


def test_write_outputs_writes_each_file(tmp_path, inductor):
    import skrf

    paths = write_outputs(
        inductor, plot=tmp_path / "p.svg", netlist=tmp_path / "m.cir", touchstone=tmp_path / "m.s1p",
        touchstone_grid="10k:300M:51", report=tmp_path / "r.html", command="zfit identify x",
    )
    names = [p.name for p in paths]
    assert names == ["p.svg", "p-q.svg", "m.cir", "m.s1p", "r.html"]
    ET.fromstring((tmp_path / "p.svg").read_bytes())
    net = skrf.Network(str(tmp_path / "m.s1p"))
    np.testing.assert_allclose(net.z[:, 0, 0], inductor.impedance(net.f), rtol=1e-9)
    text = (tmp_path / "m.cir").read_text()
    assert ".subckt inductor_part a b" in text and "band of validity" in text
    assert text.isascii()
    # Nothing is replaced without force, and nothing at all is written then.
    (tmp_path / "new.png").unlink(missing_ok=True)
    with pytest.raises(OutputExistsError):
        write_outputs(inductor, plot=tmp_path / "new.png", report=tmp_path / "r.html")
    assert not (tmp_path / "new.png").exists()
    write_outputs(inductor, report=tmp_path / "r.html", force=True)


def test_write_outputs_rejects_unknown_extension(tmp_path, inductor):
    with pytest.raises(ZfitInputError, match=r"netlist file must end in"):
        write_outputs(inductor, netlist=tmp_path / "m.txt")
    with pytest.raises(ZfitInputError, match=r"plot file must end in \.png or \.svg"):
        write_outputs(inductor, plot=tmp_path / "m.pdf")


def test_capacitor_report_has_losses_plot(capacitor, tmp_path):
    paths = write_outputs(capacitor, plot=tmp_path / "c.png", report=tmp_path / "c.html")
    assert [p.name for p in paths] == ["c.png", "c-esr-d.png", "c.html"]
    page = (tmp_path / "c.html").read_text()
    assert "Losses" in page and "C_eff" in page
    C = capacitor.parameters["C"]
    assert abs(C.value - 47e-9) < 3 * C.std


def test_small_dimensionless_values_share_one_power_of_ten():
    # A D of 5e-5 printed "5.037e-05 ± 1.5e-07"; GUM (JCGM 100:2008, 7.2.6) style
    # gives the uncertainty two digits and the value the same decimal place.
    from types import SimpleNamespace

    from zfit.outputs._views import dimensionless as _dimensionless, percent_std as _percent_std

    assert _dimensionless(SimpleNamespace(value=5.037e-05, std=1.5e-07)) == "(50.37 ± 0.15)e-6"
    assert _dimensionless(SimpleNamespace(value=123456.0, std=789.0)) == "(123.46 ± 0.79)e3"
    assert _dimensionless(SimpleNamespace(value=0.0176, std=0.0003)) == "0.01760 ± 0.00030"
    assert _percent_std(8.198770868, 0.0826699) == "8.199 ± 0.083 %"


def _print_pages(html_text, tmp_path, name="page"):
    """Print a page with headless Chromium (its default paper, US Letter) and count the PDF's pages."""
    exe = _chromium()
    path = tmp_path / f"{name}.html"
    path.write_text(html_text, encoding="utf-8")
    pdf = tmp_path / f"{name}.pdf"
    subprocess.run([exe, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
                    "--disable-background-networking", "--disable-component-update", "--disable-sync",
                    f"--user-data-dir={tmp_path / 'profile'}", f"--print-to-pdf={pdf}", "--no-pdf-header-footer",
                    path.as_uri()], capture_output=True, timeout=120, check=False)
    return len(re.findall(rb"/Type\s*/Page(?!s)", pdf.read_bytes()))


def _panel_heights_in(page, figure):
    """Heights on paper (inches) of the axes of one inline figure of the page.

    The axes' background patch is the first path of each ``<figure>-axes_N``
    group of matplotlib's SVG (in pt); the figure is shown at the column's
    width, 186 mm (the page's max-width), and printed at the print zoom 0.9
    (both in zfit.outputs._report.PAGE_CSS).
    """
    svg = re.search(r'<svg viewBox="0 0 ([\d.]+) ([\d.]+)"[^>]*aria-label="' + re.escape(figure), page)
    assert svg, figure
    start = svg.start()
    end = page.index("</svg>", start)
    body = page[start:end]
    width_pt = float(svg.group(1))
    scale = (186 / 25.4) / (width_pt / 72.0) * 0.9
    heights = []
    for m in re.finditer(r'-axes_\d+">\s*<g id="[^"]*-patch_\d+">\s*<path d="M [\d.]+ ([\d.]+)\s*L [\d.]+ [\d.]+\s*'
                         r'L [\d.]+ ([\d.]+)', body):
        heights.append(abs(float(m.group(1)) - float(m.group(2))) / 72.0 * scale)
    return heights


def test_report_impedance_panels_are_readable(page):
    # Phase and residual panels used to print 0.5 in tall, their tick labels run together.
    # Five 7.5 pt tick labels with gaps need about 0.6 in ("from memory" of print practice).
    h = _panel_heights_in(page, "impedance against frequency")
    assert len(h) == 3
    assert h[0] >= 1.0 and h[1] >= 0.6 and h[2] >= 0.6


@pytest.fixture(scope="module")
def capture_with_shunt():
    # The demo's capture: a 4.7 mH coil driven by a 10 kHz square wave through a 1 kohm
    # sense resistor (demo_sweeps/make_demo_capture.py simulates it with scipy.signal).
    from pathlib import Path

    from zfit.capture._analysis import analyse_capture
    from zfit.io._capture import read_capture

    path = Path(__file__).parents[1] / "demo_sweeps" / "coil_4m7_square_1k.csv"
    return analyse_capture(read_capture(path), input="CH1", output="CH2", shunt_ohm=1e3)


def test_capture_report_is_one_page(capture_with_shunt, tmp_path):
    from zfit.outputs._pages import step_report

    text = report_html(step_report(capture_with_shunt, "zfit step coil_4m7_square_1k.csv -i CH1 -o CH2 --shunt 1k"))
    ET.fromstring(text.encode("utf-8"))
    # The time record, the response and the impedance are on it, and the facts in two columns.
    for label in ("impedance against frequency", "The record:", "H = V_out/V_in"):
        assert label in text
    assert text.count('<div class="facts-2">') == 1
    h = _panel_heights_in(text, "impedance against frequency")
    assert len(h) == 3 and min(h[1:]) >= 0.5
    assert 4.6 < capture_with_shunt.identification.parameters["L"].value * 1e3 < 4.8  # the demo's 4.7 mH
    assert _print_pages(text, tmp_path, "capture") == 1


def test_capacitor_report_is_one_page(capacitor, tmp_path):
    assert _print_pages(report_html(identification_report(capacitor, "zfit identify c.csv")), tmp_path, "cap") == 1

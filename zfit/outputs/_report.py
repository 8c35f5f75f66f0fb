"""One-page HTML reports: a single self-contained file per part.

The page holds everything inline: CSS in a ``<style>`` element, plots as
inline SVG (no ``<img src>``, no fonts, scripts or style sheets fetched), so
that it opens and prints anywhere without a network.  The markup is
XHTML-compatible (every element closed, attributes quoted, only the five XML
entities), so that an XML parser reads it as well as a browser.

The page is laid out for print on A4 or Letter (``@page`` with margins and
no fixed paper size; a content width that fits both; blocks that do not
split across pages).

`Report` is a small document model (title, facts, tables, figures, notes);
`identification_report` and `step_report` fill it from zfit's results, and
`report_html` renders it.
"""

from __future__ import annotations

import datetime as _dt
import html
import re
from dataclasses import dataclass, field
from typing import Sequence

from .._version import __version__

__all__ = ["Table", "FigureBlock", "Section", "Report", "report_html", "inline_svg"]


def _esc(text) -> str:
    return html.escape(str(text), quote=True)


@dataclass(frozen=True)
class Table:
    """A table of the report.

    Attributes
    ----------
    header : tuple of str
        Column headings.
    rows : tuple of tuple of str
        Cells as text (already formatted).
    numeric : tuple of int
        Indices of columns aligned as numbers.
    caption : str
        Caption above the table.
    nowrap : tuple of int
        Indices of text columns kept on one line.
    """

    header: tuple
    rows: tuple
    numeric: tuple = ()
    caption: str = ""
    nowrap: tuple = ()


@dataclass(frozen=True)
class FigureBlock:
    """An inline SVG plot with its caption.

    Attributes
    ----------
    svg : str
        The SVG markup (see `inline_svg`).
    caption : str
        What the figure shows.
    width_pct : int
        Width on the page, per cent of the column.
    """

    svg: str
    caption: str = ""
    width_pct: int = 100


@dataclass(frozen=True)
class Section:
    """A titled block of the page.

    Attributes
    ----------
    title : str
        Heading.
    facts : tuple of (str, str)
        Label/value pairs shown as a definition list.
    tables : tuple of Table
        Tables.
    figures : tuple of FigureBlock
        Plots.
    notes : tuple of str
        Paragraphs of text.
    code : tuple of str
        Preformatted blocks (a netlist, say).
    css_class : str
        Layout class: ``"half"`` (half the width), ``"full"``, ``"warn"``
        (a warning box); ``"full twocol"`` sets the facts in two columns.
    """

    title: str
    facts: tuple = ()
    tables: tuple = ()
    figures: tuple = ()
    notes: tuple = ()
    code: tuple = ()
    css_class: str = "half"


@dataclass(frozen=True)
class Report:
    """The content of a one-page report.

    Attributes
    ----------
    title : str
        The headline (what the part is).
    subtitle : str
        The line below it (the file, the connection).
    verdict : str
        One sentence summarising the result, set in bold under the title.
    sections : tuple of Section
        The blocks in reading order.
    command : str
        The command line that reproduces the result.
    generated : str
        When the report was written (ISO 8601, UTC).
    """

    title: str
    subtitle: str = ""
    verdict: str = ""
    sections: tuple = ()
    command: str = ""
    generated: str = field(default_factory=lambda: _dt.datetime.now(_dt.timezone.utc).strftime("%Y-%m-%d %H:%M UTC"))


#: The report pages' style sheet (the demo's index page uses it too).
PAGE_CSS = """
@page { margin: 8mm 10mm; }
* { box-sizing: border-box; }
html { font-family: "DejaVu Sans", "Liberation Sans", Arial, Helvetica, sans-serif; font-size: 9pt;
  color: #111; background: #fff; }
body { margin: 0 auto; max-width: 186mm; padding: 4mm 0; line-height: 1.25; }
header { border-bottom: 1.5pt solid #111; padding-bottom: 1.5mm; margin-bottom: 2.5mm; }
header h1 { font-size: 14pt; margin: 0; font-weight: 700; letter-spacing: 0.01em; }
header .sub { color: #333; margin-top: 0.6mm; font-size: 9pt; }
header .verdict { margin-top: 1.6mm; font-weight: 600; font-size: 9.5pt; }
.stamp { float: right; text-align: right; font-size: 7.5pt; color: #444; }
main { display: grid; grid-template-columns: minmax(0, 1fr) minmax(0, 1fr); gap: 2mm 6mm; align-items: start; }
section { break-inside: avoid; page-break-inside: avoid; min-width: 0; }
section.full, section.warn { grid-column: 1 / -1; }
.facts-2 { display: grid; grid-template-columns: minmax(0, 1fr) minmax(0, 1fr); gap: 0 6mm; }
section.warn { border-left: 3pt solid #111; padding: 1mm 0 1mm 3mm; background: #f3f3f3; }
h2 { font-size: 8.5pt; text-transform: uppercase; letter-spacing: 0.06em; margin: 0 0 0.8mm 0;
  border-bottom: 0.5pt solid #999; padding-bottom: 0.4mm; }
dl { display: grid; grid-template-columns: fit-content(42%) minmax(0, 1fr); gap: 0.3mm 3mm; margin: 0 0 1.2mm 0; }
dt { color: #444; }
dd { margin: 0; }
table { border-collapse: collapse; width: 100%; margin: 0 0 1mm 0; font-size: 8.5pt; }
caption { text-align: left; font-style: italic; color: #333; padding-bottom: 0.6mm; }
th { text-align: left; font-weight: 600; border-bottom: 0.8pt solid #111; padding: 0.2mm 1.5mm 0.2mm 0; }
td { border-bottom: 0.3pt solid #ccc; padding: 0.25mm 1.5mm 0.25mm 0; vertical-align: top; }
td.num, th.num { text-align: right; font-variant-numeric: tabular-nums; }
td.nowrap { white-space: nowrap; }
figure { margin: 0 0 1mm 0; }
figure svg { width: 100%; height: auto; display: block; }
figcaption { font-size: 7pt; color: #333; margin-top: 0.3mm; line-height: 1.2; }
p { margin: 0 0 1mm 0; }
pre { font-family: "DejaVu Sans Mono", "Liberation Mono", Consolas, monospace; font-size: 6.8pt; line-height: 1.2;
  background: #f6f6f6; padding: 1mm 1.5mm; margin: 0; white-space: pre-wrap; word-break: break-all; }
.warn p { margin: 0.3mm 0; }
footer { margin-top: 2mm; border-top: 0.5pt solid #999; padding-top: 1mm; font-size: 7pt; color: #333; }
footer p { margin: 0 0 0.4mm 0; line-height: 1.75; }
footer code { font-family: "DejaVu Sans Mono", "Liberation Mono", Consolas, monospace; font-size: 7.5pt;
  background: #f3f3f3; padding: 0.4mm 1mm; word-break: break-all; }
@media screen { body { padding: 8mm 6mm; } }
@media print { html { font-size: 8pt; } body { padding: 0; zoom: 0.9; } }
"""

_XML_DECL = re.compile(r"<\?xml[^>]*\?>\s*")
_DOCTYPE = re.compile(r"<!DOCTYPE[^>]*>\s*", re.S)
_METADATA = re.compile(r"<metadata>.*?</metadata>\s*", re.S)
_COMMENT = re.compile(r"<!--.*?-->\s*", re.S)


def inline_svg(svg: str | bytes, label: str = "", prefix: str = "") -> str:
    """Return matplotlib's SVG output made fit to inline in the HTML page.

    Drops the XML declaration, the DOCTYPE (which names an external DTD),
    the metadata and comments, and the namespace declarations (the HTML
    parser puts ``<svg>`` in the SVG namespace by itself); turns
    ``xlink:href`` into the SVG 2 ``href`` (only ``#id`` references remain);
    lets the figure scale to the column width.

    Parameters
    ----------
    svg : str or bytes
        A complete SVG document.
    label : str
        Accessible name of the figure (``aria-label``).
    prefix : str
        Prefix for every element id (and the references to them), so that
        several figures on one page keep distinct ids.
    """
    text = svg.decode("utf-8") if isinstance(svg, bytes) else str(svg)
    text = _XML_DECL.sub("", text)
    text = _DOCTYPE.sub("", text)
    text = _METADATA.sub("", text)
    text = _COMMENT.sub("", text)
    text = re.sub(r'\s+xmlns(:\w+)?="[^"]*"', "", text)
    text = text.replace("xlink:href=", "href=")
    if prefix:
        p = re.sub(r"[^A-Za-z0-9_-]", "_", prefix)
        text = re.sub(r'\bid="([^"]+)"', lambda m: f'id="{p}-{m.group(1)}"', text)
        text = re.sub(r'href="#([^"]+)"', lambda m: f'href="#{p}-{m.group(1)}"', text)
        text = re.sub(r"url\(#([^)]+)\)", lambda m: f"url(#{p}-{m.group(1)})", text)

    def head(m):
        tag = m.group(0)
        tag = re.sub(r'\s(width|height)="[^"]*"', "", tag, count=2)
        extra = f' role="img" aria-label="{_esc(label)}"' if label else ' role="img"'
        return tag[:-1] + extra + ">"

    text = re.sub(r"<svg\b[^>]*>", head, text, count=1)
    return text.strip()


def _table_html(t: Table) -> str:
    out = ["<table>"]
    if t.caption:
        out.append(f"<caption>{_esc(t.caption)}</caption>")
    def cls(i):
        return ' class="num"' if i in t.numeric else (' class="nowrap"' if i in t.nowrap else "")

    out.append("<thead><tr>" + "".join(f"<th{cls(i)}>{_esc(h)}</th>" for i, h in enumerate(t.header)) + "</tr></thead>")
    out.append("<tbody>")
    for row in t.rows:
        out.append("<tr>" + "".join(f"<td{cls(i)}>{_esc(c)}</td>" for i, c in enumerate(row)) + "</tr>")
    out.append("</tbody></table>")
    return "".join(out)


def _section_html(s: Section) -> str:
    out = [f'<section class="{_esc(s.css_class)}">', f"<h2>{_esc(s.title)}</h2>"]
    if s.facts and "twocol" in s.css_class.split():
        # A full-width block of facts in two columns, each a list of its own (half the height).
        half = (len(s.facts) + 1) // 2
        out.append('<div class="facts-2">' + "".join(
            "<dl>" + "".join(f"<dt>{_esc(k)}</dt><dd>{_esc(v)}</dd>" for k, v in part) + "</dl>"
            for part in (s.facts[:half], s.facts[half:])) + "</div>")
    elif s.facts:
        out.append("<dl>" + "".join(f"<dt>{_esc(k)}</dt><dd>{_esc(v)}</dd>" for k, v in s.facts) + "</dl>")
    for t in s.tables:
        out.append(_table_html(t))
    for f in s.figures:
        cap = f"<figcaption>{_esc(f.caption)}</figcaption>" if f.caption else ""
        style = f' style="max-width: {int(f.width_pct)}%"' if f.width_pct < 100 else ""
        out.append(f"<figure{style}>{f.svg}{cap}</figure>")
    for n in s.notes:
        out.append(f"<p>{_esc(n)}</p>")
    for c in s.code:
        out.append(f"<pre>{_esc(c)}</pre>")
    out.append("</section>")
    return "\n".join(out)


def report_html(report: Report) -> str:
    """Return the report as one self-contained, XHTML-compatible HTML page.

    Parameters
    ----------
    report : Report
        The content.
    """
    parts = [
        "<!DOCTYPE html>",
        '<html lang="en">',
        "<head>",
        '<meta charset="utf-8"/>',
        '<meta name="viewport" content="width=device-width, initial-scale=1"/>',
        f'<meta name="generator" content="zfit {_esc(__version__)}"/>',
        f"<title>{_esc(report.title)}</title>",
        f"<style>{PAGE_CSS}</style>",
        "</head>",
        "<body>",
        "<header>",
        f'<div class="stamp">zfit {_esc(__version__)}<br/>{_esc(report.generated)}</div>',
        f"<h1>{_esc(report.title)}</h1>",
    ]
    if report.subtitle:
        parts.append(f'<div class="sub">{_esc(report.subtitle)}</div>')
    if report.verdict:
        parts.append(f'<div class="verdict">{_esc(report.verdict)}</div>')
    parts.append("</header>")
    parts.append("<main>")
    parts.extend(_section_html(s) for s in report.sections)
    parts.append("</main>")
    parts.append("<footer>")
    if report.command:
        parts.append(f"<p>Reproduce with: <code>{_esc(report.command)}</code></p>")
    parts.append(
        "<p>Uncertainties are one standard uncertainty (k = 1) from the weighted fit, propagated from the "
        "stated instrument noise; they do not include fixture or calibration errors the noise model does not "
        "describe.</p>"
    )
    parts.append("</footer>")
    parts.append("</body>")
    parts.append("</html>")
    return "\n".join(parts) + "\n"


def facts(*pairs: Sequence) -> tuple:
    """Return label/value pairs, leaving out those whose value is empty or None.

    Parameters
    ----------
    *pairs : (str, object)
        Label and value.
    """
    return tuple((str(k), str(v)) for k, v in pairs if v not in (None, ""))

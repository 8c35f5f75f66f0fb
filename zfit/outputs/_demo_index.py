"""The demo folder's index page: one line per part, linking its report."""

from __future__ import annotations

import html

from ._report import PAGE_CSS  # the reports' own style, so the folder reads as one
from ._views import pretty_std

__all__ = ["demo_index_html", "demo_headline"]


def demo_index_html(rows, generated: str) -> str:
    """Return the demo folder's index page: one line per part, linking its report.

    Parameters
    ----------
    rows : sequence of (part, identification, headline, command)
        `part` has ``stem``, ``title`` and ``story``; the page uses those and
        the headline.
    generated : str
        When the page was made, as the reports write it.
    """

    esc = html.escape
    body = []
    for part, ident, headline, cmd in rows:
        body.append(
            f'<tr><td><a href="{esc(part.stem)}.html">{esc(part.title)}</a></td>'
            f"<td>{esc(headline)}</td><td>{esc(part.story)}</td></tr>"
        )
    return (
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\"/>\n<title>zfit demo</title>\n"
        f"<style>{PAGE_CSS}</style>\n</head>\n<body>\n<header><h1>zfit demo: four parts from an invented bench</h1>"
        f'<div class="sub">Generated {esc(generated)}; every file and part is invented (see demo_sweeps/README.md).</div>'
        "</header>\n<main>\n<section class=\"full\"><h2>Parts</h2><table><thead><tr><th>part</th><th>result</th>"
        "<th>what to look at</th></tr></thead><tbody>" + "".join(body) + "</tbody></table>"
        "<p>Each part has its one-page report (.html), its plots (.png), the zfit JSON result (.json) and, where an "
        "impedance was identified, a SPICE subcircuit (.cir); the analyser sweeps also a one-port Touchstone file "
        "(.s1p) of the model.</p></section>\n"
        "</main>\n</body>\n</html>\n"
    )


def demo_headline(ident) -> str:
    """Return one line of a part's result for the index: L or C, SRF in band.

    Parameters
    ----------
    ident : Identification or None
        The part's identification (None for a capture without a shunt).
    """
    if ident is None:
        return ""
    p = ident.parameters
    bits = [f"{k} = {pretty_std(p[k].value, p[k].std, p[k].unit)}" for k in ("L", "C") if k in p]
    if ident.model == "rational":
        bits.append(ident.topology)
    srf = ident.srf
    if srf is not None and srf.where == "in-band":
        bits.append(f"SRF {pretty_std(srf.value_hz, srf.std_hz, 'Hz')}")
    return ", ".join(bits)

"""One notation for every number zfit writes (issue 15): the formatter against hand-worked values,
one style per output, ASCII where an output needs it, the step JSON's {value, std, unit} shape,
and the figures that contradicted each other within one output."""

import json
import math
import os
import re
import subprocess
import sys
import warnings
from pathlib import Path

import numpy as np
import pytest
from typer.testing import CliRunner

from zfit._units import ascii_text, format_dimensionless, format_eng, format_percent, format_value_std, parse_quantity
from zfit.cli._app import app

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "demo_sweeps"
CONTRACT = Path(__file__).resolve().parent / "data" / "demo_contract"


# ------------------------------------------------------------------ formatter ---

@pytest.mark.parametrize("value, std, unit, text", [
    # JCGM 100:2008 (GUM) 7.2.6: the uncertainty to (at most) two significant digits, the value
    # rounded to the same decimal place; one prefix for both.  Worked by hand.
    (0.005055, 0.000015, "", "0.005055 ± 0.000015"),          # a D: no prefix on a dimensionless figure
    (5.037e-5, 1.5e-7, "", "(50.37 ± 0.15)e-6"),              # below 0.001: one power of ten for both
    (275.31, 12.4, "", "275 ± 12"),                           # a Q
    (23.215043e6, 331.0, "Hz", "23.21504 ± 0.00033 MHz"),     # 331 Hz -> 0.00033 MHz
    (66.0198e-3, 4.21e-3, "ohm", "66.0 ± 4.2 mΩ"),
    (10.000321e-6, 3.7e-10, "H", "10.00032 ± 0.00037 µH"),
    (1.23456, 0.0123456, "V", "1.235 ± 0.012 V"),             # 0.0123 -> 0.012, the value to 0.001
    (4.608233e-6, 1.333e-9, "s", "4.6082 ± 0.0013 µs"),
])
def test_value_with_uncertainty_to_two_digits_of_the_uncertainty(value, std, unit, text):
    assert format_value_std(value, std, unit) == text


@pytest.mark.parametrize("value, unit, text", [
    # The prefix stays with its unit, a space before them (BIPM SI Brochure, 9th ed. 2019, 5.4.3).
    (100e3, "Hz", "100 kHz"), (4.7e-6, "H", "4.7 µH"), (0.025, "ohm", "25 mΩ"), (2.2e3, "ohm", "2.2 kΩ"),
    (4.7e-9, "", "4.7n"),  # a bare number keeps the form an option is typed in
    (1000.0, "dB", "1000 dB"),  # no prefix on a dB
])
def test_single_values_attach_the_prefix_to_the_unit(value, unit, text):
    assert format_eng(value, unit) == text


def test_percent_and_dimensionless_without_uncertainty():
    # Hand-worked (GUM 7.2.6): 0.0826699 -> 0.083, three decimal places, so 8.198770868 -> 8.199.
    assert format_percent(8.198770868, 0.0826699) == "8.199 ± 0.083 %"
    assert format_dimensionless(0.0050549) == "0.005055"  # four significant digits
    assert format_dimensionless(None) == "n/a"


def test_ascii_spelling_for_netlists_and_plain_terminals():
    assert ascii_text("10.00032 ± 0.00037 µH, 25 mΩ") == "10.00032 +/- 0.00037 uH, 25 mohm"


@pytest.mark.parametrize("text, value", [
    # What the options accept today, and what the formatter writes (SI prefixes, BIPM 2019 Table 7).
    ("4.7n", 4.7e-9), ("25m", 25e-3), ("2.2k", 2.2e3), ("100kHz", 100e3), ("1u", 1e-6), ("1µ", 1e-6),
    ("4.7 µH", 4.7e-6), ("25 mΩ", 25e-3), ("100 kHz", 100e3),
])
def test_parsing_accepts_the_old_forms_and_the_new(text, value):
    assert parse_quantity(text) == pytest.approx(value, rel=1e-15)


@pytest.mark.parametrize("unit", ["H", "F", "Hz", "ohm", "s", "V"])
def test_what_is_written_reads_back(unit):
    for x in (1.234e-12, 5.678e-7, 9.999e2, 1.2345e9):
        assert parse_quantity(format_eng(x, unit)) == pytest.approx(x, rel=1e-3)  # four digits written


# ------------------------------------------------------------ one style per output ---

#: A prefix split from its unit ("100k Hz", "10u H"), or the ASCII micro, in Unicode text.
_SPLIT = re.compile(r"\d[afpnumkMGT] (Hz|H|F|ohm|Ω|s|V)\b")


def _demo_identify(stem_args):
    return CliRunner().invoke(app, ["identify", *stem_args])


def test_terminal_and_report_show_each_figure_in_one_style(tmp_path):
    r = _demo_identify([str(DEMO / "cap_100n_shunt_thru.s2p"), "--connection", "shunt-thru", "--at", "1M",
                        "--report", str(tmp_path / "c.html")])
    assert r.exit_code == 0, r.output
    text = r.stdout
    assert not _SPLIT.search(text), _SPLIT.search(text)
    assert " ohm" not in text and "e-0" not in text  # Ω on a UTF-8 stream; no bare float exponents
    # The same D at 10 kHz (50.36e-6 here) in one notation on the terminal and in the report.
    d_term = re.search(r"D:\s+(\(\d+\.\d+ ± \d+\.\d+\)e-6) at 10 kHz", text)
    assert d_term, text
    page = (tmp_path / "c.html").read_text(encoding="utf-8")
    assert d_term.group(1) in page
    assert "5.055m" not in page and "0.005055 ± 0.000015" not in text.replace("0.005054 ± 0.000015", "")


def test_step_terminal_in_one_style():
    r = CliRunner().invoke(app, ["step", str(DEMO / "coil_4m7_square_1k.csv"), "-i", "CH1", "-o", "CH2"])
    assert r.exit_code == 0, r.output
    assert not _SPLIT.search(r.stdout), _SPLIT.search(r.stdout)
    assert "time const.:  4.6082 ± 0.0013 µs" in r.stdout  # the demo's value, as docs/capture.md shows it


def test_an_encoding_without_the_signs_gets_their_ascii_spelling():
    # latin-1 has µ but no Ω: each sign is decided by the stream's own encoder.
    env = {**os.environ, "PYTHONIOENCODING": "latin-1", "PYTHONPATH": str(ROOT)}
    out = subprocess.run([sys.executable, "-m", "zfit", "info", str(DEMO / "ind_2u2_reflection.s1p")],
                         capture_output=True, env=env, cwd=ROOT, check=True).stdout.decode("latin-1")
    assert "reference    50 ohm" in out and "band         300 kHz .. 1 GHz" in out


def test_netlists_are_ascii_with_u_for_micro():
    text = (CONTRACT / "L-0117_10uH.cir").read_bytes().decode("ascii")  # SPICE reads ASCII
    assert "L = 10.00032 +/- 0.00037 uH" in text and "band of validity: 100 kHz to 200 MHz" in text


# --------------------------------------------------------------- step JSON shape ---

@pytest.fixture(scope="module")
def capture_result():
    from zfit.capture._analysis import analyse_capture
    from zfit.io._capture import read_capture

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return analyse_capture(read_capture(DEMO / "coil_4m7_square_1k.csv"), input="CH1", output="CH2",
                               shunt_ohm=1000.0)


def _at(d, path):
    for k in path.split("."):
        d = d[k]
    return d


def test_step_json_gives_value_std_unit_and_lists_the_flat_keys_it_replaces(capture_result):
    import zfit

    d = json.loads(json.dumps(capture_result.to_dict()))
    assert d["zfit_version"] == zfit.__version__
    tc = d["time_constant"]
    assert tc == {"value": d["time_constant_s"], "std": d["time_constant_std_s"], "unit": "s"}
    assert d["overshoot"]["unit"] == "%" and d["transition_10_90"]["unit"] == "s"
    dep = {e["key"]: e["replaced_by"] for e in d["deprecated"]}
    assert {"time_constant_std_s", "transition_10_90_std_s", "overshoot_std_pct",
            "midpoint_time_constant_std_s"} <= set(dep)
    for old, new in dep.items():
        head = old.split(".")[0]
        if d.get(head) is None:  # no ringing, no stray C in this capture
            continue
        assert _at(d, old) == _at(d, new), old


def test_identify_json_gives_the_srf_as_value_std_unit(inductor):
    d = json.loads(json.dumps(inductor.to_dict()))
    assert d["srf"]["frequency"] == {"value": d["srf"]["value_hz"], "std": d["srf"]["std_hz"], "unit": "Hz"}
    for e in d["deprecated"]:
        assert _at(d, e["key"]) == _at(d, e["replaced_by"]), e


# ------------------------------------------------------------ contradictions ---

def test_z_at_srf_is_the_measured_point_where_the_data_contain_the_resonance(capture_result):
    ident = capture_result.identification
    z = ident.figures.z_at_srf
    sw = capture_result.sweep
    i = int(np.argmin(np.abs(np.log(sw.f_hz / ident.srf.measured.value_hz))))
    # The reference is the data: |Z| of the point nearest the SRF (tolerance: the smoothing of the figures, 5 %).
    assert z.source == "measurement" and z.f_hz == pytest.approx(sw.f_hz[i], rel=1e-12)
    assert z.value == pytest.approx(abs(sw.z_ohm[i]), rel=0.05)
    # The model's value at the SRF, across the gap in the bins, is kept beside it and explained.
    from zfit.outputs._views import figure_model_notes

    assert ident.figures.z_model_at_srf is not None
    assert "where no point was measured" in figure_model_notes(ident)["z_at_srf"]


def test_time_constant_and_its_cross_check_say_why_they_differ(capture_result):
    from zfit.outputs._views import step_summary

    r = capture_result
    diff = abs(r.midpoint_time_constant_s - r.time_constant_s)
    k = diff / math.hypot(r.time_constant_std_s, r.midpoint_time_constant_std_s)
    assert k > 2  # the demo: 1.5 %, about 11 standard uncertainties of the difference
    lines = [ln for ln in step_summary(r) if "standard uncertainties of the difference" in ln]
    assert len(lines) == 1 and f"{100 * diff / r.time_constant_s:.2g} %" in lines[0]


@pytest.fixture(scope="module")
def inductor():
    from zfit import identify, read_sweep

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return identify(read_sweep(DEMO / "ind_10u_series_thru.s2p", connection="series-thru"), at=[100e3, 1e6])


def test_one_q_peak_and_the_model_reason_when_it_differs(inductor):
    from zfit.outputs._views import figure_model_notes, identification_summary

    r = inductor
    p = {k: e.value for k, e in r.parameters.items()}
    f = r.figures.q_peak.f_hz
    xl = 2 * math.pi * f * p["L"]
    # A parallel R_p seen in series is X^2/R_p (series-parallel conversion, common practice): the
    # measured |X|/R is omega L / (R_s + (omega L)^2 / R_p), the circuit's omega L / R_s twice that here.
    assert r.figures.q_peak.value == pytest.approx(xl / (p["R_s"] + xl**2 / p["R_p"]), rel=0.03)
    assert r.figures.q_model_at_q_peak.value == pytest.approx(xl / p["R_s"], rel=0.01)
    lines = identification_summary(r)
    model_part = lines[next(i for i, ln in enumerate(lines) if ln.startswith("model:")):]
    assert sum(ln.startswith("Q peak:") for ln in model_part) == 1
    note = figure_model_notes(r)["q_peak"]
    assert "R_s alone" in note and "R_p" in note and sum(note in ln for ln in lines) == 1


def test_srf_beyond_the_band_where_the_circuit_holds_is_the_measured_one():
    from zfit import identify, read_sweep
    from zfit.outputs._views import srf_model_note

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        # The lumped circuit (auto takes resonant sections here, which hold past the resonance).
        r = identify(read_sweep(DEMO / "choke_470u_winding_resonance.ts", connection="series-thru"),
                     model="series R_s-L with parallel C_p and R_p")
    lo, hi = r.fit.valid_band_hz
    assert not lo <= r.srf.model_value_hz <= hi  # the circuit's resonance lies beyond where it holds
    assert r.srf.source == "measurement" and r.srf.value_hz == r.srf.measured.value_hz
    assert "beyond the band where the circuit holds" in srf_model_note(r)

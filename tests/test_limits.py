"""The limits file and the decision rule.

Decision rule under test: guarded acceptance, JCGM 106:2012 (Evaluation of
measurement data -- The role of measurement uncertainty in conformity
assessment), section 8.3.2: acceptance interval [T_L + w, T_U - w] with the
guard band w = k u, k = 2 here; a value outside [T_L, T_U] is rejected;
between the acceptance interval and the tolerance limits it is neither
accepted nor rejected ("indeterminate").  Simple acceptance (w = 0) is
section 8.2.
"""

import math

import pytest

from zfit._errors import ZfitInputError
from zfit.io._limits_file import figure_name, parse_limits, read_limits
from zfit.lot._conformity import conformity, decide

EXAMPLE = """\
# incoming inspection of an invented 10 uH choke
title = "10 uH choke, lot 26-117"
model = "inductor"

[limit.L]
nominal = "10u"
tolerance_percent = 10

[limit.R_s]
max = "250m"

[limit.C_p]
nominal = 3e-12
tolerance = "1p"

[limit.SRF]
min = "20 MHz"

[[limit.Q]]
at = "1M"
min = 150

[[limit.Q]]
at = "100k"
min = 20
max = "1k"
"""


def test_example_file_parses_to_si_limits(tmp_path):
    p = tmp_path / "lim.toml"
    p.write_text(EXAMPLE)
    lim = read_limits(p)
    by = {x.name: x for x in lim.limits}
    assert lim.model == "inductor" and lim.title.startswith("10 uH")
    assert list(by) == ["L", "R_s", "C_p", "SRF", "Q@1MHz", "Q@100kHz"]
    # 10u +-10 %: [9u, 11u] to 1e-12 relative.
    assert math.isclose(by["L"].lower, 9e-6, rel_tol=1e-12) and math.isclose(by["L"].upper, 11e-6, rel_tol=1e-12)
    assert by["R_s"].lower is None and by["R_s"].upper == pytest.approx(0.25, rel=1e-12)
    assert by["C_p"].lower == pytest.approx(2e-12, rel=1e-12) and by["C_p"].upper == pytest.approx(4e-12, rel=1e-12)
    assert by["SRF"].lower == pytest.approx(20e6, rel=1e-12)
    assert by["Q@1MHz"].f_hz == 1e6 and by["Q@1MHz"].lower == 150.0
    assert by["Q@100kHz"].upper == 1000.0
    assert lim.frequencies_hz == (1e5, 1e6)
    assert [x.line for x in lim.limits] == [5, 9, 12, 16, 19, 23]
    assert all(x.guard_band_k == 2.0 for x in lim.limits)


def test_asymmetric_percent_tolerance():
    # An electrolytic's -20/+80 % is common practice for its tolerance class.
    lim = parse_limits('[limit.C]\nnominal = "100u"\ntolerance_percent = [-20, 80]\n')
    (c,) = lim.limits
    assert c.lower == pytest.approx(80e-6, rel=1e-12) and c.upper == pytest.approx(180e-6, rel=1e-12)


@pytest.mark.parametrize(
    "value, std, lo, hi, expected",
    [
        (10.0, 0.1, 9.0, 11.0, "pass"),            # 2u interval [9.8, 10.2] inside
        (10.85, 0.1, 9.0, 11.0, "indeterminate"),  # inside, but 10.85 + 0.2 > 11
        (10.8, 0.1, 9.0, 11.0, "pass"),            # 10.8 + 0.2 = 11.0 touches the limit: accepted
        (11.01, 0.1, 9.0, 11.0, "fail"),           # the value itself is outside
        (8.9, 0.0, 9.0, 11.0, "fail"),
        (9.1, 0.1, 9.0, None, "indeterminate"),    # one-sided
        (9.3, 0.1, 9.0, None, "pass"),
        (10.0, None, 9.0, 11.0, "indeterminate"),  # no uncertainty: conformity not shown
        (12.0, None, 9.0, 11.0, "fail"),           # ... but a value outside still fails
        (None, 0.1, 9.0, 11.0, "indeterminate"),   # not measured
        (float("nan"), 0.1, 9.0, 11.0, "indeterminate"),
    ],
)
def test_guarded_acceptance_jcgm106(value, std, lo, hi, expected):
    assert conformity(value, std, lo, hi, k=2.0) == expected


def test_simple_acceptance_when_guard_band_is_zero():
    # JCGM 106:2012 8.2: w = 0 accepts any value inside the limits, with or without u.
    assert conformity(10.95, 0.1, 9.0, 11.0, k=0) == "pass"
    assert conformity(10.0, None, 9.0, 11.0, k=0) == "pass"
    assert conformity(11.05, 0.1, 9.0, 11.0, k=0) == "fail"
    lim = parse_limits('guard_band_k = 2\n[limit.L]\nmin = "9u"\nguard_band_k = 0\n[limit.R_s]\nmax = 1\n')
    assert [x.guard_band_k for x in lim.limits] == [0.0, 2.0]


def test_part_verdict_is_the_worst_limit():
    lim = parse_limits(EXAMPLE)
    good = {"L": (10e-6, 0.01e-6), "R_s": (0.2, 0.005), "C_p": (3e-12, 0.05e-12),
            "SRF": (29e6, 0.05e6, None), figure_name("Q", 1e6): (300.0, 10.0), figure_name("Q", 1e5): (40.0, 1.0)}
    d = decide(lim, good)
    assert d.verdict == "pass" and d.failed == () and d.indeterminate == ()
    near = dict(good, R_s=(0.245, 0.005))  # 0.245 + 0.01 > 0.25
    d = decide(lim, near)
    assert d.verdict == "indeterminate" and d.indeterminate == ("R_s",)
    bad = dict(near, L=(8.5e-6, 0.01e-6))
    d = decide(lim, bad)
    assert d.verdict == "fail" and d.failed == ("L",) and d.indeterminate == ("R_s",)
    assert "below min 9 µH" in next(x.reason for x in d.decisions if x.limit.name == "L")
    missing = {k: v for k, v in good.items() if k != "C_p"}
    assert decide(lim, missing).verdict == "indeterminate"


def test_srf_above_the_band_passes_a_minimum_on_its_bound():
    lim = parse_limits('[limit.SRF]\nmin = "20M"\n')
    # No resonance up to 30 MHz: SRF > 30 MHz >= 20 MHz whatever the model's estimate.
    assert decide(lim, {"SRF": (None, None, 30e6)}).verdict == "pass"
    assert decide(lim, {"SRF": (25e6, 4e6, 15e6)}).verdict == "indeterminate"


@pytest.mark.parametrize(
    "text, line, words",
    [
        ("title = 1\n[limit.L]\nmin=1\n", 1, "title must be a string"),
        ("colour = 'red'\n[limit.L]\nmin=1\n", 1, "unknown key 'colour'"),
        ("[limits.L]\nmin = 1\n", 1, "unknown key 'limits'"),
        ("# two\n\n[limit.L]\nnominal = \"10u\"\n", 4, "needs tolerance_percent"),
        ("[limit.L]\nnominal = \"10u\"\ntolerance_percent = 5\nmin = 1\n", 4, "not both"),
        ("[limit.L]\n\nnominal = \"10q\"\ntolerance_percent = 5\n", 3, "cannot read '10q'"),
        ("[limit.L]\nmin = \"3u\"\nmax = \"2u\"\n", 2, "above max"),
        ("[limit.Q]\nmin = 3\n", 1, "read at a frequency"),
        ("[limit.SRF]\nat = \"1M\"\nmin = 3\n", 2, "'at' is for figures at a frequency"),
        ("[limit.Lx]\nmin = 3\n", 1, "unknown quantity 'Lx'"),
        ("[limit]\nL = {min = 1, mni = 2}\n", 2, "unknown key 'mni'"),
        ("model = \"capacitor\"\n\n[limit.L]\nmin = 1\n", 3, "an inductor parameter"),
        ("model = \"resistor\"\n[limit.L]\nmin = 1\n", 1, "model 'resistor'"),
        ("[limit.L\nmin = 1\n", 1, "not valid TOML"),
        ("[limit.L]\nmin = 1\nmin = 2\n", 3, "not valid TOML"),
        ("[[limit.Q]]\nat = \"1M\"\nmin = 2\n\n[[limit.Q]]\nat = \"1meg\"\nmax = 3\n", 5, "given twice"),
        ("[[limit.Q]]\nat = \"1M\"\nmin = 2\n\n[[limit.Q]]\nat = \"2M\"\nmin = \"x\"\n", 7, "cannot read 'x'"),
        ("[limit.L]\nnominal = 1\ntolerance_percent = [5, 10]\n", 3, "[-minus, plus]"),
        ("title = \"no limits\"\n", None, "no limits"),
    ],
)
def test_bad_limits_files_name_file_and_line(tmp_path, text, line, words):
    p = tmp_path / "bad.toml"
    p.write_text(text)
    with pytest.raises(ZfitInputError) as info:
        read_limits(p)
    err = info.value
    assert err.path == str(p)
    assert err.line == line, err.one_line()
    assert words in err.message
    assert err.one_line().startswith(f"{p}:{line}: " if line else f"{p}: ")


def test_limits_file_that_is_not_text(tmp_path):
    p = tmp_path / "bin.toml"
    p.write_bytes(b"[limit.L]\nmin = 1\n\xff\xfe\n")
    with pytest.raises(ZfitInputError, match="not UTF-8") as info:
        read_limits(p)
    assert info.value.line == 3

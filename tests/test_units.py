import math

import pytest

from zfit._errors import ZfitInputError
from zfit._units import format_eng, format_value_std, parse_quantity


@pytest.mark.parametrize(
    "text, value",
    [
        # SI prefixes (BIPM, The International System of Units, 9th ed., 2019, Table 7).
        ("4.7n", 4.7e-9),
        ("25m", 25e-3),
        ("2.2k", 2.2e3),
        ("1M", 1e6),
        ("10uH", 10e-6),
        ("100 kHz", 100e3),
        ("50 ohm", 50.0),
        ("1e-6", 1e-6),
        ("3.3p", 3.3e-12),
        ("1meg", 1e6),  # SPICE spelling of mega (common practice)
        ("0.5G", 0.5e9),
    ],
)
def test_parse_quantity_reads_si_prefixes(text, value):
    assert parse_quantity(text) == pytest.approx(value, rel=1e-15)


def test_parse_quantity_error_names_the_option():
    with pytest.raises(ZfitInputError, match=r"--at: cannot read '12q'"):
        parse_quantity("12q", "--at")


@pytest.mark.parametrize(
    "value, text",
    [(4.7e-9, "4.7n"), (0.025, "25m"), (2200.0, "2.2k"), (1.0, "1"), (999.96e3, "1M"), (-3.3e-12, "-3.3p")],
)
def test_format_eng_uses_prefixes(value, text):
    assert format_eng(value) == text


def test_format_value_std_rounds_to_two_digits_of_uncertainty():
    # GUM (JCGM 100:2008) 7.2.6: uncertainty to at most two significant digits,
    # the value to the same decimal place.
    assert format_value_std(10.0213e-6, 0.0512e-6, "H") == "10.021 ± 0.051 µH"
    assert format_value_std(1.5, 0.0003, "ohm") == "1.50000 ± 0.00030 Ω"


def test_format_round_trip_within_four_digits():
    for x in (1.234e-15, 5.678e-7, 9.999e2, 1.2345e9):
        assert math.isclose(parse_quantity(format_eng(x)), x, rel_tol=1e-3)


def test_format_eng_beyond_the_prefixes_uses_an_exponent():
    # The SI prefixes end at peta/atto here; beyond, plain scientific notation.
    assert format_eng(3.8e282, "V") == "3.8e+282 V"
    assert format_eng(2e-21) == "2e-21"

"""The value parser and formatter."""

from __future__ import annotations

import math

import pytest
from hypothesis import given, strategies as st

from drawerfit.eseries import series_values
from drawerfit.values import (ValueParseError, format_code, format_si, parse_quantity, parse_tolerance,
                              parse_value, parse_value_and_tolerance)

# IEC 60062, clause on letter and digit codes for resistance and capacitance values: the letter
# stands in place of the decimal point and gives the multiplier (R = 1, k = 1e3, M = 1e6; p, n, µ for farads).
IEC_60062_EXAMPLES = [
    ("R47", 0.47), ("2R2", 2.2), ("470R", 470.0), ("4k7", 4.7e3), ("1M0", 1.0e6), ("1k0", 1e3),
    ("10k", 10e3), ("4n7", 4.7e-9), ("2p2", 2.2e-12), ("4µ7", 4.7e-6), ("4u7", 4.7e-6), ("100n", 100e-9),
    ("1R0", 1.0), ("6M8", 6.8e6), ("p47", 0.47e-12),
]


@pytest.mark.parametrize("text, expected", IEC_60062_EXAMPLES)
def test_iec_60062_letter_code(text, expected):
    assert parse_value(text) == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize("text, expected", [(t, v) for t, v in IEC_60062_EXAMPLES if t not in ("4u7", "1k0", "p47")])
def test_format_code_writes_the_iec_60062_code(text, expected):
    unit = "F" if any(ch in text for ch in "pnµ") else "ohm"
    assert format_code(expected, unit) == text


@pytest.mark.parametrize("text, value, unit", [
    ("4.7 kΩ", 4700.0, "ohm"), ("4.7kohm", 4700.0, "ohm"), ("330 ohms", 330.0, "ohm"), ("10K", 1e4, None),
    ("100nF", 1e-7, "F"), ("0.1 µF", 1e-7, "F"), ("0.1μF", 1e-7, "F"), ("22 uF", 22e-6, "F"), ("1mF", 1e-3, "F"),
    ("1/4 W", 0.25, "W"), ("0.5W", 0.5, "W"), ("250 mW", 0.25, "W"), ("50 V", 50.0, "V"), ("16V", 16.0, "V"),
    ("20 Hz", 20.0, "Hz"), ("10 mA", 0.01, "A"), ("5%", 0.05, "%"), ("1 meg", 1e6, None), ("2,2k", 2200.0, None),
    ("1e3", 1000.0, None), ("  4 k 7  ", 4700.0, None), ("470", 470.0, None),
])
def test_si_prefixes_units_and_spaces(text, value, unit):
    q = parse_quantity(text)
    assert q.value == pytest.approx(value, rel=1e-12)
    assert q.unit == unit


@pytest.mark.parametrize("bad", ["abc", "4k7k", "", "1/0", "k", "4.7 kQ", "--3", "1..2k"])
def test_text_that_is_not_a_value_is_quoted_in_the_error(bad):
    with pytest.raises(ValueParseError) as info:
        parse_quantity(bad)
    assert repr(bad) in str(info.value)


def test_expected_unit_is_enforced_and_supplied():
    assert parse_quantity("4k7", "ohm").unit == "ohm"
    with pytest.raises(ValueParseError, match="expected a value in Ω"):
        parse_quantity("100nF", "ohm")


@pytest.mark.parametrize("text, tol", [("5%", 0.05), ("±1 %", 0.01), ("0.05", 0.05), (5, 0.05), ("20", 0.20),
                                       ("+/-10%", 0.10)])
def test_tolerance(text, tol):
    assert parse_tolerance(text) == pytest.approx(tol)


def test_value_with_tolerance():
    assert parse_value_and_tolerance("4k7 1%") == (pytest.approx(4700.0), pytest.approx(0.01))
    assert parse_value_and_tolerance("100n ±10 %") == (pytest.approx(1e-7), pytest.approx(0.10))
    assert parse_value_and_tolerance("22u") == (pytest.approx(22e-6), None)


@pytest.mark.parametrize("value, unit, text", [(4700, "ohm", "4.7 kΩ"), (2.2e-8, "F", "22 nF"), (1e6, "ohm", "1 MΩ"),
                                               (0.25, "W", "250 mW"), (999.96, "ohm", "1 kΩ"), (4.7e-6, "F", "4.7 µF")])
def test_format_si(value, unit, text):
    assert format_si(value, unit) == text


# Property: every E192 value over twelve decades survives the trip through both notations.
E192 = series_values("E192")


@given(st.sampled_from(E192), st.integers(-12, 6), st.sampled_from(["ohm", "F"]))
def test_round_trip_through_both_notations(mant, exp, unit):
    value = float(f"{mant}e{exp}")
    if unit == "ohm" and value < 1e-3:
        return  # no milliohm-and-below resistors in a drawer
    assert parse_value(format_code(value, unit), unit) == pytest.approx(value, rel=1e-9)
    assert parse_value(format_si(value, unit), unit) == pytest.approx(value, rel=1e-3)


@given(st.floats(min_value=1e-3, max_value=1e9, allow_nan=False))
def test_engineering_text_reads_back_within_its_digits(value):
    back = parse_value(format_si(value, "ohm", digits=6), "ohm")
    assert math.isclose(back, value, rel_tol=1e-5)


# --- the trade's notation, exactly (saved designs and the files written for people) -----------

from drawerfit.eseries import SERIES  # noqa: E402
from drawerfit.values import format_percent, trade_code, trade_si  # noqa: E402

ALL_E_VALUES = sorted({m for values in SERIES.values() for m in values})


@pytest.mark.parametrize("text, expected", [(t, v) for t, v in IEC_60062_EXAMPLES if t not in ("4u7", "p47")])
def test_trade_code_writes_the_iec_60062_code(text, expected):
    # '1k0' and '1R0': one significant digit is written with a trailing zero, as IEC 60062 shows it
    unit = "F" if any(ch in text for ch in "pnµ") else "ohm"
    assert trade_code(expected, unit) == text


@given(st.sampled_from(ALL_E_VALUES), st.integers(-12, 7), st.sampled_from(["ohm", "F"]))
def test_every_e_series_value_reads_back_to_the_same_float(mant, exp, unit):
    # IEC 60063 values over twenty decades, both kinds: the code is exact, not approximately right
    value = float(f"{mant}e{exp}")
    assert parse_value(trade_code(value, unit), unit) == value
    assert parse_value(trade_si(value, unit), unit) == value


@given(st.floats(min_value=1e-13, max_value=1e9, allow_nan=False, allow_infinity=False),
       st.sampled_from(["ohm", "F", "V", "A", "W", "Hz"]))
def test_any_float_reads_back_exactly_and_its_rounded_text_within_its_digits(value, unit):
    # property: the exact text is the float; three significant digits are within half a unit of
    # the third digit (0.5 % of the value at most)
    assert parse_value(trade_si(value, unit), unit) == value
    assert parse_value(trade_code(value, "ohm")) == value
    assert math.isclose(parse_value(trade_si(value, unit, 3), unit), value, rel_tol=5e-3)


@given(st.sampled_from([0.005, 0.01, 0.02, 0.05, 0.1, 0.2]), st.integers(1, 30))
def test_tolerances_and_their_arithmetic_tails_read_back(tol, k):
    # 0.5 % to 20 % as stock lines carry them, and the tails the network arithmetic leaves
    # (value·(1 + t)/value − 1, as the design search computes a part's tolerance)
    noisy = (float(k) * 1000.0 * (1 + tol)) / (float(k) * 1000.0) - 1.0
    for t in (tol, noisy):
        assert parse_tolerance(trade_si(t, "%")) == t
        assert parse_tolerance(trade_si(t, "%", 3)) == pytest.approx(tol, rel=1e-9)


@pytest.mark.parametrize("fraction, text", [(0.005, "0.5 %"), (0.01, "1 %"), (0.05, "5 %"), (0.2, "20 %"),
                                            (0.19999999999999996, "20 %"), (0.0327586, "3.28 %")])
def test_percent_for_people(fraction, text):
    # written by hand: a half-percent part is '0.5 %', never '0 %' or '1 %'
    assert format_percent(fraction) == text

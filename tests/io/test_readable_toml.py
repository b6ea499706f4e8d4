"""Saved designs in the trade's notation: read by people, read back by drawerfit to the same floats.

Expected values: the numbers put in (IEC 60063 E-series values, tolerances 0.5 % to 20 % as stock
lines carry them, the networks the design search builds from them) must come back bit for bit;
the text a person reads is checked against the IEC 60062 letter code written by hand.
"""

from __future__ import annotations

import re
import tomllib

import pytest
from hypothesis import given, settings, strategies as st

from drawerfit.eseries import SERIES
from drawerfit.io.readable_toml import Value, dumps, restore

E_VALUES = sorted({m for values in SERIES.values() for m in values})
TOLERANCES = [0.005, 0.01, 0.02, 0.05, 0.1, 0.2]


@st.composite
def part_value(draw, lo_exp, hi_exp):
    """An E-series value, or a pair or triple of them in series or parallel (the network's value
    as floating point gives it, digits and all)."""
    vals = [float(f"{draw(st.sampled_from(E_VALUES))}e{draw(st.integers(lo_exp, hi_exp))}")
            for _ in range(draw(st.integers(1, 3)))]
    if draw(st.booleans()):
        return sum(vals)
    return 1.0 / sum(1.0 / v for v in vals)


@st.composite
def tolerance(draw):
    """A stock tolerance, or the tail the network arithmetic leaves on it (v·(1 + t)/v − 1)."""
    t = draw(st.sampled_from(TOLERANCES))
    v = draw(part_value(0, 6))
    return draw(st.sampled_from([t, (v * (1 + t)) / v - 1.0, max((v * (1 + t)) / v - 1.0, 1.0 - (v * (1 - t)) / v)]))


@st.composite
def saved_tree(draw):
    parts = {}
    for role in ("R1", "R2", "RE", "C1", "C2"):
        unit = "F" if role.startswith("C") else "ohm"
        value = draw(part_value(-12, -3)) if unit == "F" else draw(part_value(0, 6))
        parts[role] = {"value": Value(value, unit, code=True), "tolerance": Value(draw(tolerance()), "%"),
                       "rating": Value(draw(st.sampled_from([0.125, 0.25, 0.6, 6.3, 16.0, 50.0])) * draw(
                           st.sampled_from([1.0, 1.7, 2.0 / 3.0])), "W" if unit == "ohm" else "V")}
    ie = draw(st.floats(1e-4, 0.2))
    return {"supply": Value(draw(st.sampled_from([5.0, 9.0, 12.0, 13.8, 24.0])), "V"),
            "transistor": {"hfe_min": Value(draw(st.floats(20, 400))), "vbe_tempco": Value(-0.002)},
            "parts": parts,
            "targets": {"ie_min": Value(ie * (1 - 0.1), "A"), "ie_max": Value(ie * (1 + 0.1), "A"),
                        "gain_min": Value(draw(st.floats(1, 100)))},
            "design": {"roles": {"RE": {"parts": [{"value": Value(parts["RE"]["value"].number, "ohm", code=True)}]}}}}


def _numbers(tree, path=()):
    if isinstance(tree, Value):
        yield ".".join(path), tree.number
    elif isinstance(tree, dict):
        for k, v in tree.items():
            yield from _numbers(v, (*path, k))
    elif isinstance(tree, list):
        for i, v in enumerate(tree):
            yield from _numbers(v, (*path, str(i)))


def _at(tree, dotted):
    for step in dotted.split("."):
        tree = tree[int(step)] if isinstance(tree, list) else tree[step]
    return tree


def _float(x):
    from drawerfit.values import parse_quantity

    return float(x) if isinstance(x, (int, float)) else parse_quantity(x).value


@settings(max_examples=150, deadline=None)
@given(saved_tree())
def test_every_number_reads_back_to_the_same_float(tree):
    text = dumps(tree)
    back, notes = restore(tomllib.loads(text), "saved.toml")
    assert notes == []
    for dotted, number in _numbers(tree):
        assert _float(_at(back, dotted)) == number, dotted  # bit for bit, not approximately


@settings(max_examples=100, deadline=None)
@given(saved_tree())
def test_a_person_reads_no_long_tails(tree):
    # outside [exact], no number carries more than six significant digits
    body = dumps(tree).split("[exact]")[0]
    for number in re.findall(r"\d[\d.]*\d", body):
        assert len(number.replace(".", "").lstrip("0")) <= 6, number


def test_the_text_is_the_trades_notation():
    # IEC 60062 codes and SI text, written by hand
    tree = {"parts": {"R1": {"value": Value(4700.0, "ohm", code=True), "tolerance": Value(0.010000000000000009, "%"),
                             "rating": Value(0.25, "W")},
                      "C2": {"value": Value(4.7e-05, "F", code=True), "tolerance": Value(0.2, "%")},
                      "RE": {"value": Value(1902.834008097166, "ohm", code=True)}},
            "targets": {"ie_min": Value(0.0045000000000000005, "A")}}
    doc = tomllib.loads(dumps(tree))
    assert doc["parts"]["R1"] == {"value": "4k7", "tolerance": "1 %", "rating": "250 mW"}
    assert doc["parts"]["C2"] == {"value": "47µ", "tolerance": "20 %"}
    assert doc["parts"]["RE"]["value"] == "1k9"
    assert doc["targets"]["ie_min"] == "4.5 mA"
    assert doc["exact"] == {"parts.R1.tolerance": 0.010000000000000009, "parts.RE.value": 1902.834008097166,
                            "targets.ie_min": 0.0045000000000000005}


def test_text_changed_by_a_person_is_read_as_written_and_said():
    tree = {"parts": {"R1": {"tolerance": Value(0.010000000000000009, "%")},
                      "RE": {"value": Value(1902.834008097166, "ohm", code=True)}}}
    doc = tomllib.loads(dumps(tree))
    # another way to write the same rounded number is no change: the exact number still applies
    doc["parts"]["R1"]["tolerance"] = "1%"
    doc["parts"]["RE"]["value"] = "2k2"  # a person tries another resistor
    back, notes = restore(doc, "d.toml")
    assert back["parts"]["R1"]["tolerance"] == 0.010000000000000009
    assert back["parts"]["RE"]["value"] == "2k2"
    assert len(notes) == 1 and "parts.RE.value" in notes[0] and "read as written" in notes[0]


@pytest.mark.parametrize("bad", ["x", True, float("inf")])
def test_a_broken_exact_table_is_a_clear_error(bad):
    from drawerfit.parts import SpecError

    with pytest.raises(SpecError, match="exact"):
        restore({"parts": {}, "exact": {"parts.R1.value": bad}}, "d.toml")
    with pytest.raises(SpecError, match="must be a table"):
        restore({"exact": 3}, "d.toml")

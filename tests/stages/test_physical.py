"""The physical parts of a role: designators, wiring, and each part's share of power or voltage.

Expected values: the designators are the trade's (R1, with a, b, c for the parts of one place);
the shares come from the textbook formulas for resistors and capacitors in series and parallel,
written out by hand below (power in a series chain splits as R, in a parallel bank as 1/R;
series capacitors split a DC voltage inversely to C, as docs/method.md assumes).  The composed
rating of ``equivalents`` (itself tested against a nodal solution) is a second, independent check.
"""

from __future__ import annotations

import math

import pytest
from hypothesis import assume, given, strategies as st

from drawerfit.eseries import series_values
from drawerfit.stages.physical import designators, shares, wiring

E24 = series_values("E24")


def test_designators_follow_the_arrangement_order():
    assert designators("R1", 1) == ["R1"]
    assert designators("RE", 2) == ["REa", "REb"]
    assert designators("CE", 3) == ["CEa", "CEb", "CEc"]
    with pytest.raises(ValueError):
        designators("R1", 4)


def test_wiring_of_each_arrangement():
    assert wiring("single", 1) == [(0, 1)]
    assert wiring("series", 2) == [(0, 2), (2, 1)]
    assert wiring("series", 3) == [(0, 2), (2, 3), (3, 1)]
    assert wiring("parallel", 3) == [(0, 1)] * 3
    assert wiring("series-parallel", 3) == [(0, 2), (2, 1), (2, 1)]  # a + (b ∥ c)
    assert wiring("parallel-series", 3) == [(0, 1), (0, 2), (2, 1)]  # a ∥ (b + c)
    with pytest.raises(ValueError):
        wiring("series-parallel", 2)


def _par(*r):
    return 1.0 / sum(1.0 / x for x in r)


values = st.lists(st.sampled_from(E24), min_size=3, max_size=3).map(lambda v: [x * 1e3 for x in v])


@given(values)
def test_resistor_power_shares_match_the_textbook(v):
    a, b, c = v
    # series: one current, P ∝ R; parallel: one voltage, P ∝ 1/R
    assert shares("resistor", "series", [a, b]) == pytest.approx([a / (a + b), b / (a + b)])
    assert shares("resistor", "parallel", [a, b, c]) == pytest.approx([_par(a, b, c) / x for x in (a, b, c)])
    # a + (b ∥ c): the current through a splits between b and c as 1/R
    req = a + _par(b, c)
    vbc = _par(b, c) / req  # of 1 V across the whole
    assert shares("resistor", "series-parallel", [a, b, c]) == pytest.approx(
        [a / req, vbc ** 2 / b * req, vbc ** 2 / c * req])
    # a ∥ (b + c): the whole voltage across a, and across b + c split as R
    req = _par(a, b + c)
    assert shares("resistor", "parallel-series", [a, b, c]) == pytest.approx(
        [req / a, b * req / (b + c) ** 2, c * req / (b + c) ** 2])


@given(values)
def test_capacitor_voltage_shares_match_the_capacitive_divider(v):
    a, b, c = (x * 1e-9 for x in v)
    # series capacitors split a voltage inversely to their capacitance; parallel ones share it
    assert shares("capacitor", "series", [a, b]) == pytest.approx([b / (a + b), a / (a + b)])
    assert shares("capacitor", "parallel", [a, b]) == pytest.approx([1.0, 1.0])
    assert shares("capacitor", "series-parallel", [a, b, c]) == pytest.approx(
        [(b + c) / (a + b + c), a / (a + b + c), a / (a + b + c)])
    assert shares("capacitor", "parallel-series", [a, b, c]) == pytest.approx([1.0, c / (b + c), b / (b + c)])


@given(st.sampled_from(["series", "parallel", "series-parallel", "parallel-series"]), values,
       st.lists(st.sampled_from([0.125, 0.25, 0.5, 1.0]), min_size=3, max_size=3))
def test_the_first_part_to_reach_its_rating_sets_the_rating_of_the_role(form, v, ratings):
    # property against equivalents' own rating composition (tested there against a nodal solution):
    # the role may take P while each part k takes share_k · P ≤ its rating
    from drawerfit.equivalents import equivalents
    from tests.conftest import make_line

    n = 2 if form in ("series", "parallel") else 3
    lines = [make_line(i, "resistor", v[i], rating=ratings[i]) for i in range(n)]
    checked = 0
    for eq in equivalents(lines, max_parts=n):
        if eq.arrangement == form and sorted(m.index for m in eq.members) == list(range(n)):
            s = shares("resistor", form, [m.value for m in eq.members])
            assert eq.rating == pytest.approx(min(m.power / k for m, k in zip(eq.members, s)), rel=1e-9)
            assert math.isclose(sum(s), 1.0, rel_tol=1e-12)  # the parts' powers add up to the role's
            checked += 1
    assume(checked)  # equal values may fold every ordering of this form into another

"""Equivalents against brute force, and ratings against an independent nodal solution."""

from __future__ import annotations

import itertools

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from drawerfit.equivalents import FORM_NAMES, equivalents, equivalents_in_window, nearest
from tests.conftest import make_line

VALUES = [1.0, 1.5, 2.2, 3.3, 4.7, 6.8, 10.0]


def _ser(a, b):
    return a + b


def _par(a, b):
    return a * b / (a + b)


def brute_force(lines, units):
    """Every (value, sorted member indices, part count, form) by plain enumeration."""
    kind = lines[0].kind
    ser, par = (_ser, _par) if kind == "resistor" else (_par, _ser)  # capacitors add in parallel
    usable = [ln for ln in lines if ln.qty >= units]
    qty = {ln.index: ln.qty for ln in usable}

    def ok(ids):
        return all(ids.count(i) * units <= qty[i] for i in ids)

    out = set()
    for a in usable:
        out.add((a.value, (a.index,), "single"))
    for a, b in itertools.combinations_with_replacement(usable, 2):
        ids = tuple(sorted((a.index, b.index)))
        if ok(list(ids)):
            out.add((ser(a.value, b.value), ids, "series"))
            out.add((par(a.value, b.value), ids, "parallel"))
    for a in usable:
        for b, c in itertools.combinations_with_replacement(usable, 2):
            ids = [a.index, b.index, c.index]
            if not ok(ids):
                continue
            key = tuple(sorted(ids))
            out.add((ser(a.value, ser(b.value, c.value)), key, "series"))
            out.add((par(a.value, par(b.value, c.value)), key, "parallel"))
            out.add((ser(a.value, par(b.value, c.value)), key, "series-parallel"))
            out.add((par(a.value, ser(b.value, c.value)), key, "parallel-series"))
    return out


def _key(v):
    return float(f"{v:.9g}")


def table_set(t):
    out = set()
    for v, m, c, f in zip(t.value, t.members, t.counts, t.form):
        ids = tuple(sorted(int(x) for x, n in zip(m, c) if x >= 0 for _ in range(n)))
        out.add((_key(v), ids, FORM_NAMES[f]))
    return out


drawers = st.tuples(
    st.sampled_from(["resistor", "capacitor"]),
    st.lists(st.tuples(st.sampled_from(VALUES), st.integers(0, 3), st.integers(0, 4)), min_size=1, max_size=6),
    st.integers(1, 2),
)


def build(kind, spec):
    scale = 1.0 if kind == "resistor" else 1e-9
    return [make_line(i, kind, v * 10.0**e * scale, qty=q) for i, (v, e, q) in enumerate(spec)]


@settings(max_examples=150, deadline=None)
@given(drawers, st.floats(0.5, 20000), st.floats(1.0, 3.0))
def test_window_holds_exactly_what_brute_force_finds(drawer, lo, ratio):
    kind, spec, units = drawer
    lines = build(kind, spec)
    scale = 1.0 if kind == "resistor" else 1e-9
    lo, hi = lo * scale, lo * ratio * scale
    every = brute_force(lines, units)
    # a value on the window's edge may round either way in floating point: such edge cases may or may
    # not be found; everything strictly inside must be, and nothing outside
    eps = 1e-9
    strict = {(_key(v), ids, form) for v, ids, form in every if lo * (1 + eps) <= v <= hi * (1 - eps)}
    loose = {(_key(v), ids, form) for v, ids, form in every if lo * (1 - eps) <= v <= hi * (1 + eps)}
    got = table_set(equivalents_in_window(lines, lo, hi, max_parts=3, units=units))
    assert strict <= got <= loose


@settings(max_examples=150, deadline=None)
@given(drawers, st.floats(0.5, 20000), st.integers(1, 8))
def test_nearest_equals_brute_force(drawer, target, k):
    kind, spec, units = drawer
    lines = build(kind, spec)
    target *= 1.0 if kind == "resistor" else 1e-9
    ref = sorted(abs(v / target - 1) for v, _ids, _f in {(_key(v), i, f): (v, i, f)
                                                         for v, i, f in brute_force(lines, units)}.values())
    got = nearest(lines, target, k, max_parts=3, units=units)
    assert np.allclose(sorted(np.abs(got.value / target - 1)), ref[:k], rtol=1e-9, atol=1e-15)


def test_a_line_used_twice_must_hold_both():
    lines = [make_line(0, "resistor", 1000.0, qty=1), make_line(1, "resistor", 2000.0, qty=2)]
    vals = sorted(equivalents(lines, max_parts=2).value.tolist())
    # 1k+1k and 1k||1k need two of line 0: absent.  2k+2k and 2k||2k are there.
    assert 2000.0 in vals and 500.0 not in vals and 4000.0 in vals and 1000.0 in vals
    assert 4000.0 not in equivalents(lines, max_parts=2, units=2).value.tolist()


# --- ratings: an independent nodal solution of each form ---------------------------------


def nodal_member_stress(form, vals, admittance):
    """Solve the network by nodal analysis with 1 V across it; return each member's stress.

    Resistors: admittance 1/R and stress = power; capacitors: admittance ∝ C and stress = |voltage|.
    Node 0 is the bottom, node 1 the top, node 2 the internal node of the pair in mixed forms.
    """
    a, b, c = (list(vals) + [None, None])[:3]
    if form == "single":
        edges = [(1, 0, a)]
    elif form == "series" and c is None:
        edges = [(1, 2, a), (2, 0, b)]
    elif form == "parallel" and c is None:
        edges = [(1, 0, a), (1, 0, b)]
    elif form == "series":
        edges = [(1, 2, a), (2, 3, b), (3, 0, c)]
    elif form == "parallel":
        edges = [(1, 0, a), (1, 0, b), (1, 0, c)]
    elif form == "series-parallel":  # a in series with (b || c)
        edges = [(1, 2, a), (2, 0, b), (2, 0, c)]
    else:  # parallel-series: a || (b in series with c)
        edges = [(1, 0, a), (1, 2, b), (2, 0, c)]
    n = 1 + max(max(i, j) for i, j, _ in edges)
    G = np.zeros((n, n))
    for i, j, v in edges:
        y = admittance(v)
        G[i, i] += y
        G[j, j] += y
        G[i, j] -= y
        G[j, i] -= y
    # fix V0 = 0, V1 = 1; solve the internal nodes
    volts = np.zeros(n)
    volts[1] = 1.0
    inner = list(range(2, n))
    if inner:
        rhs = -G[np.ix_(inner, [0, 1])] @ volts[[0, 1]]
        volts[inner] = np.linalg.solve(G[np.ix_(inner, inner)], rhs)
    total_current = sum((volts[i] - volts[j]) * admittance(v) for i, j, v in edges if 1 in (i, j))
    drops = [abs(volts[i] - volts[j]) for i, j, _v in edges]
    return drops, total_current


@settings(max_examples=200, deadline=None)
@given(st.lists(st.tuples(st.sampled_from(VALUES), st.integers(1, 4), st.sampled_from([0.125, 0.25, 0.5, 1.0])),
                min_size=1, max_size=3))
def test_resistor_rating_is_the_largest_power_with_no_member_over_its_rating(spec):
    lines = [make_line(i, "resistor", v * 10.0**e, qty=3, rating=w) for i, (v, e, w) in enumerate(spec)]
    for eq in equivalents(lines, max_parts=3):
        vals = [m.value for m in eq.members]
        drops, current = nodal_member_stress(eq.arrangement, vals, lambda r: 1.0 / r)
        # at 1 V: total power = current * 1 V; member power = drop**2 / R; scale to the reported rating
        scale = eq.rating / current
        member_power = [d * d / r * scale for d, r in zip(drops, vals)]
        ratios = [p / m.power for p, m in zip(member_power, eq.members)]
        assert max(ratios) == pytest.approx(1.0, rel=1e-9)  # tight: one member exactly at its rating


@settings(max_examples=200, deadline=None)
@given(st.lists(st.tuples(st.sampled_from(VALUES), st.integers(0, 3), st.sampled_from([6.3, 16.0, 25.0, 50.0])),
                min_size=1, max_size=3))
def test_capacitor_rating_shares_voltage_inversely_to_capacitance(spec):
    lines = [make_line(i, "capacitor", v * 10.0**e * 1e-9, qty=3, rating=volts) for i, (v, e, volts)
             in enumerate(spec)]
    for eq in equivalents(lines, max_parts=3):
        vals = [m.value for m in eq.members]
        drops, _ = nodal_member_stress(eq.arrangement, vals, lambda c: c)  # AC admittance ∝ C
        ratios = [d * eq.rating / m.voltage for d, m in zip(drops, eq.members)]
        assert max(ratios) == pytest.approx(1.0, rel=1e-9)


def test_worst_case_tolerance_of_a_series_pair_is_the_value_weighted_mean():
    # hand calculation: 1k at 1 % + 3k at 5 % -> (10 + 150) / 4000 = 4 %
    lines = [make_line(0, "resistor", 1000.0, tol=0.01), make_line(1, "resistor", 3000.0, tol=0.05)]
    t = equivalents_in_window(lines, 3999.0, 4001.0)
    assert len(t) == 1 and t.tolerance[0] == pytest.approx(0.04)


def test_polarized_capacitors_in_series_are_flagged():
    lines = [make_line(0, "capacitor", 10e-6, polarized=True, rating=25.0),
             make_line(1, "capacitor", 10e-6, polarized=False, rating=25.0)]
    t = equivalents(lines, max_parts=2)
    for eq in t:
        series = eq.arrangement == "series"
        assert eq.polarized_series == (series and any(m.polarized for m in eq.members))

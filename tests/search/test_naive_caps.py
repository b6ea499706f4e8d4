"""The batched capacitor enumeration of ``--exhaustive`` (search/naive_caps.complete_many) gives,
for every resistor set, what the one-set enumeration (``CapacitorSide.complete_naive``, every
capacitor combination tried in turn) gives.

Oracle: ``complete_naive`` itself, on every resistor set that passes the worst case, over random
small drawers (hypothesis): both circuits, with and without a bypass capacitor, pairs, one or two
units (so that scarce lines are shared between roles), polarized and plain capacitors.
"""

from __future__ import annotations

import numpy as np
from hypothesis import HealthCheck, given, settings, strategies as st

from drawerfit.search.capacitors import CapacitorSide
from drawerfit.search.engine import resistor_batches
from drawerfit.search.judge import SearchContext, mu_class
from drawerfit.search.naive_caps import complete_many
from drawerfit.search.pools import Pools
from drawerfit.search.problem import DesignProblem, DesignTargets
from drawerfit.search.runner import transistor_model
from drawerfit.search.tables import build_tables

from .test_design_search import drawers


def _key(c):
    if c is None:
        return None
    return (c.pc, c.bought, float(mu_class(c.margin_c)), c.stock_left, c.total_capacitance,
            tuple(t.key(i) for t, i in c.caps.values()))


def _compare(problem, stock, every: int = 1) -> int:
    """Compare on every ``every``-th resistor set (the one-set enumeration is the slow side)."""
    lines = list(stock.lines)
    pools = Pools.build(lines)
    res = [ln for ln in lines if ln.kind == "resistor"]
    cap = [ln for ln in lines if ln.kind == "capacitor"]
    rtables = build_tables(res, "resistor", problem.max_parts, problem.units)
    ctables = build_tables(cap, "capacitor", problem.max_parts, problem.units)
    tr = next(ln for ln in lines if ln.kind == "transistor")
    ctx = SearchContext(problem, transistor_model(tr))
    virtual = np.zeros(len(pools.qty), np.int64)
    compared = 0
    for batch in resistor_batches(ctx, rtables, pools, virtual, pruned=False):
        side_many = CapacitorSide(ctx, ctables, pools, virtual)
        side_one = CapacitorSide(ctx, ctables, pools, virtual)
        positions = np.arange(len(batch))
        many = complete_many(side_many, batch, positions)
        for pos, got in zip(positions.tolist(), many):
            if pos % every:
                continue
            want = side_one.complete_naive(batch, pos)
            assert _key(got) == _key(want)
            if want is not None:
                assert got.cap_margins == want.cap_margins
                # the corner margin from the same root search (to its precision, 1e-7 in ln f)
                assert abs(got.corner_margin - want.corner_margin) < 1e-6
                compared += 1
    return compared


@settings(max_examples=15, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.too_slow])
@given(stock=drawers(n_res=(3, 4), n_cap=(2, 4)), ie=st.sampled_from([0.5e-3, 1e-3, 2e-3]),
       f=st.sampled_from([20.0, 200.0, 2000.0]), units=st.sampled_from([1, 2]))
def test_follower_batches_equal_one_set_at_a_time(stock, ie, f, units):
    p = DesignProblem("emitter-follower", "npn", 12.0, DesignTargets(ie_min=0.6 * ie, ie_max=1.4 * ie, f_low=f),
                      load=4.7e3, source_resistance=600.0, max_parts=2, units=units)
    _compare(p, stock, every=4)


@settings(max_examples=12, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.too_slow])
@given(data=st.data(), ie=st.sampled_from([0.5e-3, 1e-3]), bypass=st.booleans(),
       polarity=st.sampled_from(["npn", "pnp"]), units=st.sampled_from([1, 2]))
def test_common_emitter_batches_equal_one_set_at_a_time(data, ie, bypass, polarity, units):
    stock = data.draw(drawers(n_res=(2, 3), n_cap=(2, 3), polarity=polarity))
    p = DesignProblem("common-emitter", polarity, 12.0, DesignTargets(ie_min=0.6 * ie, ie_max=1.4 * ie, f_low=200.0),
                      load=10e3, max_parts=2, bypass=bypass, units=units)
    _compare(p, stock, every=4)


def test_a_drawer_with_designs_is_compared_set_by_set():
    # a fixed drawer where many resistor sets have capacitors (the property tests above may draw
    # drawers with none): E12 resistors around the bias (IEC 60063) and four capacitors
    from drawerfit.parts import Stock

    from ..conftest import make_line
    from .test_design_search import transistor

    lines = [make_line(i, "resistor", v, qty=2, tol=0.01) for i, v in enumerate((1.5e3, 2.2e3, 4.7e3, 10e3, 22e3))]
    for v, pol in ((1e-6, False), (10e-6, True), (47e-6, True), (220e-6, True)):
        lines.append(make_line(len(lines), "capacitor", v, qty=2, tol=0.2, polarized=pol, rating=35.0))
    lines.append(transistor(len(lines)))
    p = DesignProblem("emitter-follower", "npn", 12.0, DesignTargets(ie_min=0.5e-3, ie_max=3e-3, f_low=20.0),
                      load=10e3, source_resistance=600.0, max_parts=2)
    assert _compare(p, Stock(lines=tuple(lines)), every=17) > 50

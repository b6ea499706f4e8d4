"""Mending a board with the fewest changes (``search.changes.fewest_changes``) against a brute force.

Oracle: every assignment of each role to either the board's own part or one part of the drawer
(and Q1 to the board's transistor or a drawer transistor), judged by the analysis engine's own
worst case (``analysis.core.worst_case``: every vertex of the tolerance box, hFE ends, ambient ends,
capacitors at their low ends, the whole-stage corner by root search) and its margin rules
(``analysis.targets.target_margins`` / ``rating_margins``).  The engine is held against ngspice in
tests/reference.  The fewest changes among the assignments that pass must be the number the search
reports, and the search's repair must be one that passes.
"""

from __future__ import annotations

import itertools as it
from dataclasses import replace

import numpy as np
import pytest
from hypothesis import HealthCheck, event, given, settings, strategies as st

from drawerfit.parts import SpecError, Stock
from drawerfit.search.changes import fewest_changes
from drawerfit.search.problem import DesignProblem, DesignTargets
from drawerfit.stages import Conditions, Part, TransistorModel

from ..conftest import make_line
from .test_design_search import E12, transistor

SETTINGS = dict(deadline=None, suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large])
ROLES = ("R1", "R2", "RE", "C1", "C2")


@st.composite
def boards(draw):
    """A follower board (single parts), a small drawer and an IE window around the board's own."""
    n_res = draw(st.integers(2, 3))
    lines = []
    for _ in range(n_res):
        v = draw(st.sampled_from(E12)) * 10 ** draw(st.integers(2, 4))
        lines.append(make_line(len(lines), "resistor", v, qty=4, tol=draw(st.sampled_from([0.01, 0.05]))))
    for _ in range(draw(st.integers(1, 2))):
        v = draw(st.sampled_from([1e-6, 4.7e-6, 10e-6, 47e-6]))
        lines.append(make_line(len(lines), "capacitor", v, qty=3, tol=0.2, polarized=True, rating=25.0))
    tr = transistor(len(lines))
    if draw(st.booleans()):
        tr = replace(tr, hfe_min=draw(st.sampled_from([40, 60])), hfe_max=draw(st.sampled_from([150, 200])))
    lines.append(tr)
    r1 = draw(st.sampled_from(E12)) * 10 ** draw(st.integers(3, 4))
    r2 = draw(st.sampled_from(E12)) * 10 ** draw(st.integers(3, 4))
    re = draw(st.sampled_from(E12)) * 10 ** draw(st.integers(2, 3))
    parts = {"R1": Part(r1, 0.05, 0.25), "R2": Part(r2, 0.05, 0.25), "RE": Part(re, 0.05, 0.25),
             "C1": Part(draw(st.sampled_from([1e-6, 10e-6])), 0.2, 25.0, True),
             "C2": Part(draw(st.sampled_from([1e-6, 10e-6, 100e-6])), 0.2, 25.0, True)}
    board_tr = TransistorModel("npn", draw(st.sampled_from([100, 200])), 400, vbe=0.65, vce_sat=0.2, vceo=40,
                               ic_max=0.2, pd=0.5, label="board")
    ie = draw(st.sampled_from([0.5e-3, 1e-3, 2e-3, 5e-3]))
    window = draw(st.sampled_from([0.2, 0.35, 0.6]))
    f_low = draw(st.sampled_from([20.0, 100.0]))
    return Stock(lines=tuple(lines)), parts, board_tr, DesignTargets(ie_min=ie * (1 - window),
                                                                     ie_max=ie * (1 + window), f_low=f_low)


def _options(stock: Stock, parts, board_tr):
    """Per role: (value, tol, rating, changed) options, the board's part first; Q1 likewise."""
    opts = {}
    for r in ROLES:
        kind = "capacitor" if r.startswith("C") else "resistor"
        p = parts[r]
        opts[r] = [(p.value, p.tolerance, p.rating, 0)]
        opts[r] += [(ln.value, ln.tolerance, ln.rating, 1) for ln in stock.lines if ln.kind == kind]
    trs = [(board_tr, 0)]
    for ln in stock.lines:
        if ln.kind == "transistor":
            trs.append((TransistorModel("npn", ln.hfe_min, ln.hfe_max, vbe=ln.vbe, vce_sat=ln.vce_sat, vceo=ln.vceo,
                                        ic_max=ln.ic_max, pd=ln.pd, label=ln.label), 1))
    return opts, trs


def brute_fewest(stock: Stock, parts, board_tr, targets: DesignTargets, problem: DesignProblem):
    """(fewest changes over every passing assignment or None, set of passing (values..., tr label))."""
    from drawerfit.analysis import core
    from drawerfit.analysis.targets import Targets, rating_margins, target_margins

    opts, trs = _options(stock, parts, board_tr)
    combos = list(it.product(*(opts[r] for r in ROLES)))
    cond = Conditions()
    best = None
    passing = set()
    for tr, tr_changed in trs:
        col = lambda j, k: np.array([c[j][k] for c in combos], float)  # noqa: E731
        kw = dict(topology="emitter-follower", polarity="npn", supply=problem.supply,
                  rs=problem.source_resistance, rl=problem.rl, vbe=tr.vbe, vce_sat=tr.vce_sat,
                  **{r.lower(): col(j, 0) for j, r in enumerate(ROLES)})
        tols = {r.lower(): col(j, 1) for j, r in enumerate(ROLES)}
        wc = core.worst_case(tolerances=tols, hfe_min=tr.hfe_min, hfe_max=tr.hfe_max, temp_min=cond.ambient_min,
                             temp_max=cond.ambient_max, **kw)
        tm = target_margins(Targets(**targets.given()), wc.low, wc.high)
        rm = rating_margins(wc.low, wc.high, conditions=cond, supply=problem.supply,
                            power_ratings={r: col(j, 2) for j, r in enumerate(ROLES[:3])},
                            voltage_ratings={r: col(j + 3, 2) for j, r in enumerate(ROLES[3:])},
                            polarized={"C1": True, "C2": True}, pd=tr.pd, vceo=tr.vceo, ic_max=tr.ic_max)
        allm = np.stack([np.broadcast_to(np.nan_to_num(np.asarray(a, float), nan=-np.inf), (len(combos),))
                         for a in list(tm.values()) + list(rm.values())])
        ok = wc.all_active & (np.min(allm, axis=0) >= 0)
        for i in np.flatnonzero(ok):
            n = sum(c[3] for c in combos[i]) + tr_changed
            passing.add((tuple(c[0] for c in combos[i]), tr.label, n))
            best = n if best is None else min(best, n)
    return best, passing


@settings(max_examples=25, **SETTINGS)
@given(case=boards())
def test_fewest_changes_equal_the_brute_force(case):
    stock, parts, board_tr, targets = case
    problem = DesignProblem("emitter-follower", "npn", 12.0, targets, load=10e3, source_resistance=600.0, max_parts=1)
    got = fewest_changes(problem, stock, parts, board_tr)
    want, passing = brute_fewest(stock, parts, board_tr, targets, problem)
    assert got.proven
    if want is None:
        event("no repair")
        assert not got.feasible
        return
    event(f"{want} changes")
    assert got.feasible
    assert len(got.changed[0]) == want
    best = got.best
    values = tuple(best.roles[r].equivalent.value for r in ROLES)
    label = "board" if "Q1" not in got.changed[0] else best.transistor.label
    assert (values, label, want) in passing


@settings(max_examples=8, **SETTINGS)
@given(case=boards(), broken=st.sampled_from([("Q1",), ("RE",), ("C2", "R1")]),
       fixed=st.sampled_from([(), ("R2",), ("C1", "RE")]))
def test_fixed_roles_stay_and_broken_roles_change(case, broken, fixed):
    stock, parts, board_tr, targets = case
    fixed = tuple(r for r in fixed if r not in broken)
    problem = DesignProblem("emitter-follower", "npn", 12.0, targets, load=10e3, source_resistance=600.0, max_parts=1)
    got = fewest_changes(problem, stock, parts, board_tr, fixed=fixed, broken=broken, top=3)
    for changed in got.changed:
        assert set(broken) <= set(changed)
        assert not set(fixed) & set(changed)
    # the search with no marks changes no more roles than this one (fewer constraints)
    free = fewest_changes(problem, stock, parts, board_tr)
    if got.feasible:
        assert free.feasible and len(free.changed[0]) <= len(got.changed[0])


@settings(max_examples=6, **SETTINGS)
@given(case=boards())
def test_pairs_allowed_equal_the_naive_enumeration(case):
    # with pairs the oracle is the search's own naive enumeration (--exhaustive) of every
    # candidate per role for each set of changed roles
    stock, parts, board_tr, targets = case
    problem = DesignProblem("emitter-follower", "npn", 12.0, targets, load=10e3, source_resistance=600.0, max_parts=2)
    fast = fewest_changes(problem, stock, parts, board_tr, top=2)
    slow = fewest_changes(problem, stock, parts, board_tr, top=2, exhaustive=True)
    assert fast.changed == slow.changed
    assert [d.key for d in fast.designs] == [d.key for d in slow.designs]


def test_marks_that_cannot_hold_are_user_errors():
    stock = Stock(lines=(make_line(0, "resistor", 1e3), transistor(1)))
    parts = {"R1": Part(47e3), "R2": Part(10e3), "RE": Part(1e3), "C1": Part(10e-6), "C2": Part(10e-6)}
    tr = TransistorModel("npn", 100, 300, label="board")
    p = DesignProblem("emitter-follower", "npn", 12.0, DesignTargets(ie_min=1e-3, ie_max=2e-3, f_low=20.0))
    with pytest.raises(SpecError, match="both fixed and broken"):
        fewest_changes(p, stock, parts, tr, fixed=("R1",), broken=("R1",))
    with pytest.raises(SpecError, match="no role RC"):
        fewest_changes(p, stock, parts, tr, broken=("RC",))
    with pytest.raises(SpecError, match="cannot stay"):
        fewest_changes(p, stock, {k: v for k, v in parts.items() if k != "RE"}, tr, fixed=("RE",))

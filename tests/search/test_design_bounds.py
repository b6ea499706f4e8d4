"""The pruning bounds on input resistance, swing and headroom: sound, and the search stays exact.

Oracles: brute force on small inputs (every resistor set of a shape judged by
``evaluate.evaluate_resistors``, the full worst-case judgement, with no bound) for soundness; the
naive enumeration (``design(..., exhaustive=True)``) for the optimum; the analysis engine
(``analyse``) for whether a design found on the sample drawer meets its spec.  Targets are set
from the worst-case figures of one resistor set of the drawer, so that this set meets them with a
margin of exactly zero: a bound that is too tight by any amount rejects it.
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
from hypothesis import HealthCheck, event, given, settings, strategies as st

from drawerfit.parts import Stock
from drawerfit.search.design import design, transistor_model
from drawerfit.search.engine import resistor_sets_exhaustive
from drawerfit.search.judge import SearchContext, evaluate_resistors, vertex_dc
from drawerfit.search.joins import candidate_sets
from drawerfit.search.problem import DesignProblem, DesignTargets
from drawerfit.search.tables import build_tables, with_default_ratings

from ..conftest import SAMPLES
from .test_design_search import search_equals_exhaustive, _targets_met, drawers

SETTINGS = dict(deadline=None, derandomize=True, suppress_health_check=[HealthCheck.too_slow])

# Which targets a case sets at the edge, per topology (the IE window always).
MODES = {"emitter-follower": ("rin", "swing", "rin+swing"),
         "common-emitter": ("rin", "gain+swing", "rin+gain+swing")}


def _generous(stock: Stock) -> Stock:
    """The same drawer with 5 W resistors, so that resistor power never decides a case."""
    return Stock(lines=tuple(replace(ln, power=5.0) if ln.kind == "resistor" else ln for ln in stock.lines))


def _problem(topology, polarity, targets, **kw) -> DesignProblem:
    return DesignProblem(topology, polarity, 12.0, targets, load=kw.pop("load", 2.2e3), source_resistance=600.0,
                         **kw)


def _all(ctx, T):
    """Every set of the shape (the naive enumeration), as arrays of values, tolerances, ratings."""
    idx = {r: np.concatenate([c[r] for c in resistor_sets_exhaustive(T, ctx.res_roles)]) for r in ctx.res_roles}
    v = {r: T[r].v[idx[r]] for r in ctx.res_roles}
    tol = {r: T[r].tol[idx[r]] for r in ctx.res_roles}
    rating = {r: T[r].rating[idx[r]] for r in ctx.res_roles}
    return idx, v, tol, rating


def _edge_targets(ctx0, v, tol, j, mode, f_low=20.0) -> DesignTargets | None:
    """Targets that set ``j`` meets with zero margin: each figure's own worst case over the box."""
    sub = {r: a[j:j + 1] for r, a in v.items()}
    subt = {r: a[j:j + 1] for r, a in tol.items()}
    dcs = [vertex_dc(ctx0, vert, sub, subt) for vert in ctx0.vertices]
    ie = [float(d.ie[0]) for d in dcs]
    # (a window of zero width, as in the one-point box of the nominal guarantee, would have no centre)
    kw = dict(ie_min=min(ie), ie_max=max(max(ie), min(ie) * (1 + 1e-9)), f_low=f_low)
    if "rin" in mode:
        kw["rin_min"] = min(float(d.rin[0]) for d in dcs)
    if "swing" in mode:
        kw["swing"] = min(float(d.swing_peak[0]) for d in dcs)
        if kw["swing"] <= 0:
            return None
    if "gain" in mode:
        kw["gain_min"] = min(abs(float(d.gain[0])) for d in dcs)
    return DesignTargets(**kw)


def _check_sound(stock, topology, polarity, mode, shape, pick, guarantee, bypass=False, load=2.2e3):
    """Every set the full judgement accepts is among the candidate sets, with targets at the edge
    of one set that meets them with zero margin."""
    lines, _ = with_default_ratings(_generous(stock).lines)
    tr = next(ln for ln in lines if ln.kind == "transistor")
    rt = build_tables([ln for ln in lines if ln.kind == "resistor"], "resistor", 2, 1)
    wide = DesignTargets(ie_min=1e-9, ie_max=10.0, f_low=20.0)
    base = _problem(topology, polarity, wide, guarantee=guarantee, bypass=bypass, load=load)
    ctx0 = SearchContext(base, transistor_model(tr))
    T = {r: rt[c] for r, c in zip(ctx0.res_roles, shape)}
    idx, v, tol, rating = _all(ctx0, T)
    ev0 = evaluate_resistors(ctx0, v, tol, rating, drop=False)
    good = np.flatnonzero(ev0.active & (ev0.margin_r >= 0))
    if not len(good):
        event("no set is active at every vertex")
        return
    j = int(good[pick % len(good)])
    targets = _edge_targets(ctx0, v, tol, j, mode)
    if targets is None:
        event("no swing")
        return
    ctx = SearchContext(base.with_(targets=targets), ctx0.tr)
    keep = evaluate_resistors(ctx, v, tol, rating).keep
    assert j in set(keep.tolist())  # the edge set meets its own worst case, margin zero
    accepted = {tuple(int(idx[r][k]) for r in ctx.res_roles) for k in keep}
    found = set()
    for c in candidate_sets(ctx, T):
        found.update(zip(*(c[r].tolist() for r in ctx.res_roles)))
    missing = accepted - found
    assert not missing, (mode, shape, sorted(missing)[:5])
    event(f"{mode}: {len(accepted)} accepted of {len(v['RE'])}, {len(found)} candidates")


@settings(max_examples=40, **SETTINGS)
@given(data=st.data(), polarity=st.sampled_from(["npn", "pnp"]), mode=st.sampled_from(MODES["emitter-follower"]),
       shape=st.sampled_from([(1, 1, 1), (2, 1, 1), (1, 2, 2), (1, 1, 2)]), pick=st.integers(0, 10**6),
       guarantee=st.sampled_from(["worst-case", "worst-case", "nominal"]), load=st.sampled_from([470.0, 2.2e3, None]))
def test_follower_bounds_never_reject_an_accepted_set(data, polarity, mode, shape, pick, guarantee, load):
    # oracle: brute force, every set of the shape judged in full (evaluate_resistors)
    stock = data.draw(drawers(n_res=(3, 5), n_cap=(1, 1), polarity=polarity))
    _check_sound(stock, "emitter-follower", polarity, mode, shape, pick, guarantee, load=load)


@settings(max_examples=30, **SETTINGS)
@given(data=st.data(), polarity=st.sampled_from(["npn", "pnp"]), mode=st.sampled_from(MODES["common-emitter"]),
       bypass=st.booleans(), pick=st.integers(0, 10**6), guarantee=st.sampled_from(["worst-case", "nominal"]),
       pairs=st.sampled_from([(), ("RE",), ("RC",), ("RE2",)]))
def test_common_emitter_bounds_never_reject_an_accepted_set(data, polarity, mode, bypass, pick, guarantee, pairs):
    # oracle: brute force, every set of the shape judged in full (evaluate_resistors)
    stock = data.draw(drawers(n_res=(3, 5), n_cap=(1, 1), polarity=polarity))
    roles = ("R1", "R2", "RE", "RC") + (("RE2",) if bypass else ())
    shape = tuple(2 if r in pairs else 1 for r in roles)
    _check_sound(stock, "common-emitter", polarity, mode, shape, pick, guarantee, bypass=bypass, load=10e3)


def _edge_problem(stock, topology, polarity, mode, pick, **kw):
    """A design problem whose targets sit at the edge of one single-part resistor set."""
    lines, _ = with_default_ratings(stock.lines)
    tr = next(ln for ln in lines if ln.kind == "transistor")
    rt = build_tables([ln for ln in lines if ln.kind == "resistor"], "resistor", 1, 1)
    base = _problem(topology, polarity, DesignTargets(ie_min=1e-9, ie_max=10.0, f_low=20.0), **kw)
    ctx0 = SearchContext(base, transistor_model(tr))
    T = {r: rt[1] for r in ctx0.res_roles}
    idx, v, tol, rating = _all(ctx0, T)
    ev0 = evaluate_resistors(ctx0, v, tol, rating, drop=False)
    good = np.flatnonzero(ev0.active)
    if not len(good):
        return None
    targets = _edge_targets(ctx0, v, tol, int(good[pick % len(good)]), mode, f_low=200.0)
    return None if targets is None else base.with_(targets=targets)


@settings(max_examples=14, **SETTINGS)
@given(data=st.data(), polarity=st.sampled_from(["npn", "pnp"]), mode=st.sampled_from(MODES["emitter-follower"]),
       pick=st.integers(0, 10**6), scale=st.sampled_from([1.0, 0.98, 1.02]))
def test_follower_with_rin_and_swing_equals_exhaustive(data, polarity, mode, pick, scale):
    # oracle: naive enumeration of every candidate per role, pairs allowed (design(..., exhaustive=True))
    stock = data.draw(drawers(n_res=(3, 4), n_cap=(2, 3), polarity=polarity))
    p = _edge_problem(stock, "emitter-follower", polarity, mode, pick, load=2.2e3, max_parts=2)
    if p is None:
        event("no edge")
        return
    t = p.targets
    p = p.with_(targets=replace(t, rin_min=t.rin_min and t.rin_min * scale, swing=t.swing and t.swing * scale))
    search_equals_exhaustive(p, stock, top=2)


@settings(max_examples=8, **SETTINGS)
@given(data=st.data(), polarity=st.sampled_from(["npn", "pnp"]), mode=st.sampled_from(MODES["common-emitter"]),
       pick=st.integers(0, 10**6), bypass=st.booleans(), scale=st.sampled_from([1.0, 0.98]))
def test_common_emitter_with_rin_and_swing_equals_exhaustive(data, polarity, mode, pick, bypass, scale):
    # oracle: naive enumeration (design(..., exhaustive=True)), RE and RC may be pairs
    stock = data.draw(drawers(n_res=(3, 3), n_cap=(2, 2), polarity=polarity))
    p = _edge_problem(stock, "common-emitter", polarity, mode, pick, load=10e3, max_parts=2, bypass=bypass,
                      pairs=("RE", "RC"))
    if p is None:
        event("no edge")
        return
    t = p.targets
    p = p.with_(targets=replace(t, rin_min=t.rin_min and t.rin_min * scale, swing=t.swing and t.swing * scale,
                                gain_min=t.gain_min and t.gain_min * scale))
    search_equals_exhaustive(p, stock, top=2)


def _sample_problem(**targets):
    from drawerfit.stock import load_stock

    stock = load_stock(SAMPLES / "teaching_lab.csv")
    p = DesignProblem("emitter-follower", "npn", 12.0, DesignTargets(ie_min=4.5e-3, ie_max=5.5e-3, f_low=20.0, **targets),
                      source_resistance=600.0, load=1e3, max_parts=2)
    return p, stock


def test_follower_swing_too_large_for_the_supply_is_proven_infeasible():
    # 4.5 V peak into 1 kΩ from 12 V at 5 mA ±10 %: down = IE·(RE‖RL) >= 4.5 V needs RE‖RL >= 818 Ω,
    # and up >= 4.5 V with down >= 4.5 V needs RE <= RL·(12 − 0.2 − 9)/4.5 = 622 Ω (VCE(sat) 0.2 V,
    # the drawer's lowest): no RE does both (worked by hand from the swing formulas, docs/method.md)
    p, stock = _sample_problem(swing=4.5)
    r = design(p, stock, suggest=False)
    assert r.status == "infeasible"
    assert r.stats["truncated"] is False


def test_follower_input_resistance_above_every_base_impedance_is_proven_infeasible():
    # rin_min 170 kΩ into a 1 kΩ load at 5 mA ±10 % with a 2 V swing: RE <= RL·(12 − 0.2 − 4)/2 =
    # 3.9 kΩ (VCE(sat) 0.2 V, the drawer's lowest), so RE‖RL <= 796 Ω; re <= VT(50 °C)/4.5 mA = 6.2 Ω;
    # the input resistance is below the base impedance (hFEmin + 1)·(re + RE‖RL) <= 201·802 = 161 kΩ
    # for the highest hFEmin of the drawer's NPN lines (200): below 170 kΩ for every transistor
    # (worked by hand from the follower formulas, docs/method.md)
    p, stock = _sample_problem(swing=2.0, rin_min=170e3)
    r = design(p, stock, suggest=False)
    assert r.status == "infeasible"
    assert r.stats["truncated"] is False


def test_sample_spec_with_rin_40k_is_found_and_proven():
    # rin_min 40 kΩ with a 2 V swing is feasible (the high-hFE transistor line reaches it); the search
    # must prove its optimum, and the analysis engine must agree that the design meets every target
    p, stock = _sample_problem(swing=2.0, rin_min=40e3)
    r = design(p, stock, suggest=False)
    assert r.status == "optimal"
    assert r.stats["truncated"] is False
    met = _targets_met(p, r.best)
    assert all(met.values()), met


@settings(max_examples=25, **SETTINGS)
@given(data=st.data(), polarity=st.sampled_from(["npn", "pnp"]), pick=st.integers(0, 10**6))
def test_follower_swing_bound_at_its_exact_edge(data, polarity, pick):
    # With the nominal guarantee (one point) and the load chosen so that the downward swing
    # IE·(RE‖RL) equals the upward room VCC − VCE(sat) − VE, a set meets swing = that value with
    # zero margin on both sides at once: the edge of the bound RE <= RL·(VCC − VCE(sat) − 2·swing)/swing.
    # Oracle: brute force, the full judgement of every single-part set (evaluate_resistors).
    stock = _generous(data.draw(drawers(n_res=(3, 5), n_cap=(1, 1), polarity=polarity)))
    lines, _ = with_default_ratings(stock.lines)
    tr = next(ln for ln in lines if ln.kind == "transistor")
    rt = build_tables([ln for ln in lines if ln.kind == "resistor"], "resistor", 1, 1)
    wide = DesignTargets(ie_min=1e-9, ie_max=10.0, f_low=20.0)
    base = _problem("emitter-follower", polarity, wide, guarantee="nominal", load=None)
    ctx0 = SearchContext(base, transistor_model(tr))
    T = {r: rt[1] for r in ctx0.res_roles}
    idx, v, tol, rating = _all(ctx0, T)
    dc = vertex_dc(ctx0, ctx0.nominal, v, tol)
    up, ie, re_v = dc.swing_up, dc.ie, v["RE"]
    # RL with RE‖RL = up/IE exists where up/IE < RE, i.e. up < VE
    ratings_ok = evaluate_resistors(ctx0, v, tol, rating, drop=False).margin_r >= 0  # DC: the load plays no part
    good = np.flatnonzero((dc.state == 0) & (up > 0) & (up < ie * re_v) & ratings_ok)
    if not len(good):
        event("no set with room for a load")
        return
    j = int(good[pick % len(good)])
    rl = 1.0 / (ie[j] / up[j] - 1.0 / re_v[j])
    p = base.with_(load=float(rl))
    ctx1 = SearchContext(p, ctx0.tr)
    d1 = vertex_dc(ctx1, ctx1.nominal, {r: a[j:j + 1] for r, a in v.items()}, {r: a[j:j + 1] for r, a in tol.items()})
    s = float(d1.swing_peak[0])
    assert math.isclose(float(d1.swing_up[0]), float(d1.swing_down[0]), rel_tol=1e-9)
    i = float(d1.ie[0])
    targets = DesignTargets(ie_min=i, ie_max=i * (1 + 1e-9), f_low=20.0, swing=s)
    ctx = SearchContext(p.with_(targets=targets), ctx0.tr)
    keep = evaluate_resistors(ctx, v, tol, rating).keep
    assert j in set(keep.tolist())
    accepted = {tuple(int(idx[r][k]) for r in ctx.res_roles) for k in keep}
    found = set()
    for c in candidate_sets(ctx, T):
        found.update(zip(*(c[r].tolist() for r in ctx.res_roles)))
    assert accepted <= found

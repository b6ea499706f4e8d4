"""analysis.core: worked examples, rules of thumb, properties, worst case and Monte Carlo.

Sources are named beside each check.  The simulator checks are in tests/reference/.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from drawerfit.analysis import core
from drawerfit.analysis.core import (
    ACTIVE, CUTOFF, LIMIT_CUTOFF, LIMIT_SATURATION, SATURATED, evaluate, evaluate_dc,
    low_corner, meets_corner, monte_carlo, worst_case, worst_case_by_signs,
)
from drawerfit.constants import thermal_voltage

HUGE_BETA = 1e12  # stands in for "base current neglected" in hand methods


def test_thermal_voltage_at_300_kelvin():
    # scipy.constants (CODATA): kT/q at 300 K is 25.852 mV; the design notes quote 25.85 mV.
    assert thermal_voltage(26.85) == pytest.approx(0.025852, abs=2e-6)


def test_worked_common_emitter_example_by_hand():
    """A common-emitter stage worked by hand, every step written out: 10 V supply, R1 = 10 k,
    R2 = 2.2 k, RC = 3.6 k, RE = 1 k, VBE = 0.7 V."""
    # Base current neglected (β → ∞): the divider alone sets VB, and IC = IE.
    vb = 10 * 2.2e3 / (10e3 + 2.2e3)  # 1.803279 V
    ve = vb - 0.7  # 1.103279 V
    ie = ve / 1e3  # 1.103279 mA
    vc = 10 - ie * 3.6e3  # 6.028197 V
    f = evaluate_dc(topology="common-emitter", supply=10, r1=10e3, r2=2.2e3, re=1e3, rc=3.6e3,
                    hfe=HUGE_BETA, vbe=0.7)
    assert float(f.vb) == pytest.approx(vb, rel=1e-9)
    assert float(f.ve) == pytest.approx(ve, rel=1e-9)
    assert float(f.ie) == pytest.approx(ie, rel=1e-9)
    assert float(f.vc) == pytest.approx(vc, rel=1e-9)
    # With β = 100 the base current pulls the divider down (Thevenin equivalent of the divider):
    rth = 10e3 * 2.2e3 / (10e3 + 2.2e3)  # 1803.279 Ω
    ib = (vb - 0.7) / (rth + (100 + 1) * 1e3)  # 10.732 µA
    g = evaluate_dc(topology="common-emitter", supply=10, r1=10e3, r2=2.2e3, re=1e3, rc=3.6e3,
                    hfe=100, vbe=0.7)
    assert float(g.ib) == pytest.approx(ib, rel=1e-9)
    assert float(g.ie) == pytest.approx(101 * ib, rel=1e-9)
    assert float(g.vb) == pytest.approx(vb - ib * rth, rel=1e-9)
    assert float(g.vc) == pytest.approx(10 - 100 * ib * 3.6e3, rel=1e-9)


def test_worked_follower_example_by_hand():
    """An emitter follower worked by hand: 10 V, R1 = R2 = 10 k, RE = 1 k, VBE = 0.7 V, β = 100,
    no load, ideal source; re = VT/IE with VT = k·T/q at 25 °C from scipy.constants (CODATA)."""
    from scipy.constants import Boltzmann, elementary_charge, zero_Celsius

    rth, vth = 5e3, 5.0  # the divider's Thevenin equivalent
    ib = (vth - 0.7) / (rth + 101 * 1e3)  # 40.566 µA
    ie = 101 * ib  # 4.0972 mA
    vt = Boltzmann * (zero_Celsius + 25) / elementary_charge  # 25.693 mV
    re = vt / ie  # 6.271 Ω
    zb = 101 * (re + 1e3)  # looking into the base
    rin = 1 / (1 / 10e3 + 1 / 10e3 + 1 / zb)  # R1 ∥ R2 ∥ (β+1)(re + RE)
    f = evaluate_dc(topology="emitter-follower", supply=10, r1=10e3, r2=10e3, re=1e3, hfe=100, vbe=0.7)
    assert float(f.ie) == pytest.approx(ie, rel=1e-9)
    assert float(f.rin) == pytest.approx(rin, rel=1e-9)
    assert float(f.gain) == pytest.approx(1e3 / (1e3 + re), rel=1e-9)
    # output impedance: RE ∥ (re + (RS ∥ R1 ∥ R2)/(β+1)), with RS = 0 shorting the divider
    assert float(f.rout) == pytest.approx(1 / (1 / 1e3 + 1 / re), rel=1e-9)


def test_gain_rule_from_design_notes():
    # Design notes (common practice): CE gain base→load ≈ −(RC‖RL)/(re + RE), RE unbypassed.
    f = evaluate_dc(topology="common-emitter", supply=12, r1=47e3, r2=10e3, re=220, re2=1e3,
                    rc=4.7e3, rl=10e3, hfe=HUGE_BETA, bypassed=True)
    rl_par = 4.7e3 * 10e3 / 14.7e3
    # By hand, base current neglected: VB = 12·10/57, IE = (VB − 0.65)/(220 + 1000), re = VT/IE.
    ie = (12 * 10 / 57 - 0.65) / 1220
    re = thermal_voltage(25) / ie
    assert float(f.ie) == pytest.approx(ie, rel=1e-9)
    assert float(f.gain_base) == pytest.approx(-rl_par / (re + 220), rel=1e-9)
    assert float(f.rout) == 4.7e3


@settings(max_examples=200, deadline=None)
@given(
    beta=st.floats(50, 500), re=st.floats(100, 5e3), ratio=st.floats(0.05, 0.6),
    stiffness=st.floats(0.005, 0.1), supply=st.floats(5, 30),
)
def test_stiff_divider_rule_of_thumb(beta, re, ratio, stiffness, supply):
    """Common practice, no source: a divider with RTH at most β·RE/10 holds IE within about
    10 % of the value that neglects base current."""
    rth = stiffness * beta * re
    r1, r2 = rth / ratio, rth / (1 - ratio)
    if supply * ratio < 1.0:
        return
    f = evaluate_dc(topology="emitter-follower", supply=supply, r1=r1, r2=r2, re=re, hfe=beta)
    ideal = (supply * ratio - 0.65) / re
    assert 0.9 <= float(f.ie) / ideal <= 1.0


@settings(max_examples=150, deadline=None)
@given(
    r1=st.floats(2e3, 200e3), r2=st.floats(2e3, 200e3), re=st.floats(100, 5e3),
    k=st.floats(1.01, 3.0), beta=st.floats(30, 600), topo=st.sampled_from(core.TOPOLOGIES),
    pol=st.sampled_from(core.POLARITIES),
)
def test_ie_rises_with_far_divider_resistor_and_falls_with_re(r1, r2, re, k, beta, topo, pol):
    """Property of divider bias: IE rises with the divider resistor on the far side of the base
    from the emitter's rail (R2 for NPN; R1 for the PNP mirror), falls with the near one and
    with RE."""
    base = dict(topology=topo, polarity=pol, supply=12, rc=1e3, hfe=beta, re=re)
    far, near = ("r2", "r1") if pol == "npn" else ("r1", "r2")
    parts = dict(r1=r1, r2=r2)
    f0 = evaluate_dc(**base, **parts)
    if int(f0.state) != ACTIVE:
        return
    f_far = evaluate_dc(**base, **{**parts, far: parts[far] * k})
    f_near = evaluate_dc(**base, **{**parts, near: parts[near] * k})
    f_re = evaluate_dc(**{**base, "re": re * k}, **parts)
    assert float(f_far.ie) > float(f0.ie)
    assert float(f_near.ie) < float(f0.ie)
    assert float(f_re.ie) < float(f0.ie)


@settings(max_examples=100, deadline=None)
@given(r1=st.floats(2e3, 200e3), r2=st.floats(2e3, 200e3), re=st.floats(100, 5e3),
       rc=st.floats(100, 20e3), beta=st.floats(30, 600), supply=st.floats(3, 40))
def test_pnp_is_the_mirror_of_npn(r1, r2, re, rc, beta, supply):
    # Property of the mirror image: swap R1/R2, measure voltages down from the supply.
    for topo in core.TOPOLOGIES:
        n = evaluate_dc(topology=topo, polarity="npn", supply=supply, r1=r1, r2=r2, re=re, rc=rc, hfe=beta)
        p = evaluate_dc(topology=topo, polarity="pnp", supply=supply, r1=r2, r2=r1, re=re, rc=rc, hfe=beta)
        assert float(p.ie) == pytest.approx(float(n.ie), rel=1e-12, abs=1e-18)
        assert float(p.vb) == pytest.approx(supply - float(n.vb), rel=1e-9, abs=1e-9)
        assert float(p.ve) == pytest.approx(supply - float(n.ve), rel=1e-9, abs=1e-9)
        assert int(p.state) == int(n.state)
        assert float(p.gain) == pytest.approx(float(n.gain), rel=1e-12, abs=1e-15)


def test_cut_off_and_saturated_are_reported():
    # Hand reasoning: a divider giving 0.5 V at the base is below VBE → nothing conducts.
    off = evaluate_dc(topology="common-emitter", supply=12, r1=230e3, r2=10e3, re=1e3, rc=4.7e3, hfe=100)
    assert int(off.state) == CUTOFF and float(off.ie) == 0.0 and float(off.vc) == 12.0
    assert float(off.gain) == 0.0 and int(off.swing_limit) == core.LIMIT_NONE
    # An RC far too large for the current: the collector would go below the emitter.
    sat = evaluate_dc(topology="common-emitter", supply=12, r1=47e3, r2=10e3, re=1e3, rc=100e3, hfe=100)
    assert int(sat.state) == SATURATED
    assert float(sat.vce) == pytest.approx(0.2)
    # In saturation the collector current is what RC lets through (hand: (12 − VE − 0.2)/RC).
    assert float(sat.ic) == pytest.approx((12 - float(sat.ve) - 0.2) / 100e3, rel=1e-9)
    assert float(sat.ic) < 100 * float(sat.ib)


def test_follower_swing_rule_from_design_notes():
    """Design notes: the follower's downward swing before cut-off is IE·(RE‖RL), upward about
    VCC − VCE(sat) − VE; with a small load the down side binds although VE sits mid-supply."""
    f = evaluate_dc(topology="emitter-follower", supply=12, r1=4.7e3, r2=5.6e3, re=820, rl=100, hfe=150)
    ie, ve = float(f.ie), float(f.ve)
    assert float(f.swing_down) == pytest.approx(ie * 820 * 100 / 920, rel=1e-12)
    assert float(f.swing_up) == pytest.approx(12 - 0.2 - ve, rel=1e-12)
    assert float(f.swing_peak) == pytest.approx(ie * 820 * 100 / 920, rel=1e-12)
    assert int(f.swing_limit) == LIMIT_CUTOFF
    g = evaluate_dc(topology="emitter-follower", supply=12, r1=1e3, r2=10e3, re=820, hfe=150)
    assert int(g.swing_limit) == LIMIT_SATURATION  # emitter near the top rail, no load


def test_common_emitter_swing_from_load_lines():
    # AC load line (hand derivation in docs/method.md): cut-off room IC·(RC‖RL); saturation room
    # (VCE − VCE(sat))·(RC‖RL)/((RC‖RL) + RE_ac/α).
    f = evaluate_dc(topology="common-emitter", supply=12, r1=47e3, r2=10e3, re=220, re2=1e3,
                    rc=4.7e3, rl=10e3, hfe=150, bypassed=True)
    rp = 4.7e3 * 10e3 / 14.7e3
    alpha = 150 / 151
    assert float(f.swing_up) == pytest.approx(float(f.ic) * rp, rel=1e-12)
    assert float(f.swing_down) == pytest.approx((float(f.vce) - 0.2) * rp / (rp + 220 / alpha), rel=1e-12)
    assert float(f.swing_peak) == pytest.approx(min(float(f.swing_up), float(f.swing_down)))


def test_capacitor_voltages_and_polarity():
    # Hand reasoning: C1 holds VB, C2 the emitter (follower) or collector voltage, CE the drop
    # across RE2; for the PNP stage CE's + end goes to the supply.
    n = evaluate_dc(topology="common-emitter", polarity="npn", supply=12, r1=47e3, r2=10e3,
                    re=220, re2=1e3, rc=4.7e3, hfe=150, bypassed=True)
    assert float(n.v_c1) == pytest.approx(float(n.vb))
    assert float(n.v_c2) == pytest.approx(float(n.vc))
    assert float(n.v_ce) == pytest.approx(float(n.ie) * 1e3)
    p = evaluate_dc(topology="common-emitter", polarity="pnp", supply=12, r1=10e3, r2=47e3,
                    re=220, re2=1e3, rc=4.7e3, hfe=150, bypassed=True)
    assert float(p.v_ce) == pytest.approx(-float(p.ie) * 1e3)
    assert float(p.v_c1) > 0 and float(p.v_c2) > 0


def test_power_in_every_part():
    # Hand: P = V²/R for the divider, I²R for the emitter and collector resistors,
    # VCE·IC + VBE·IB for the transistor.
    f = evaluate_dc(topology="common-emitter", supply=12, r1=47e3, r2=10e3, re=220, re2=1e3,
                    rc=4.7e3, hfe=150, bypassed=True)
    assert float(f.p_r1) == pytest.approx((12 - float(f.vb)) ** 2 / 47e3)
    assert float(f.p_r2) == pytest.approx(float(f.vb) ** 2 / 10e3)
    assert float(f.p_rc) == pytest.approx(float(f.ic) ** 2 * 4.7e3)
    assert float(f.p_re2) == pytest.approx(float(f.ie) ** 2 * 1e3)
    assert float(f.p_q) == pytest.approx(float(f.vce) * float(f.ic) + 0.65 * float(f.ib))
    # Energy balance: the supply delivers what the parts dissipate (no signal).
    i_supply = (12 - float(f.vb)) / 47e3 + float(f.ic)
    total = sum(float(getattr(f, k)) for k in ("p_r1", "p_r2", "p_re", "p_rc", "p_re2", "p_q"))
    assert total == pytest.approx(12 * i_supply, rel=1e-9)


def test_vbe_drift_with_temperature():
    # Common practice, no source: VBE falls about 2 mV/°C, so IE rises when warm.
    cold = evaluate_dc(topology="emitter-follower", supply=12, r1=4.7e3, r2=5.6e3, re=820, hfe=150, temp_c=0)
    hot = evaluate_dc(topology="emitter-follower", supply=12, r1=4.7e3, r2=5.6e3, re=820, hfe=150, temp_c=50)
    assert float(cold.vbe) - float(hot.vbe) == pytest.approx(0.100, rel=1e-9)
    assert float(hot.ie) > float(cold.ie)


def test_diode_law_vbe_matches_scipy_root():
    # Independent root of the same equations with scipy.optimize.brentq.
    from scipy.optimize import brentq

    isat, beta, vcc, r1, r2, re = 5e-15, 200.0, 12.0, 39e3, 8.2e3, 1.2e3
    f = evaluate_dc(topology="emitter-follower", supply=vcc, r1=r1, r2=r2, re=re, hfe=beta, i_sat=isat)
    vt = thermal_voltage(25)
    vth, rth = vcc * r2 / (r1 + r2), r1 * r2 / (r1 + r2)

    def resid(vbe):
        ie = (vth - vbe) / (rth / (beta + 1) + re)
        return vbe - vt * math.log1p(beta / (beta + 1) * ie / isat)

    vbe = brentq(resid, 0.3, vth, xtol=1e-15)
    assert float(f.vbe) == pytest.approx(vbe, abs=1e-9)


@settings(max_examples=60, deadline=None)
@given(k=st.floats(1.05, 4.0), which=st.sampled_from(["c1", "c2", "ce"]),
       topo=st.sampled_from(core.TOPOLOGIES), rl=st.sampled_from([47.0, 1e3, 1e5, math.inf]))
def test_corner_falls_as_capacitance_grows(k, which, topo, rl):
    # Property the worst case relies on (capacitors held at their lowest values).
    p = dict(topology=topo, supply=12, r1=47e3, r2=10e3, re=220, re2=1e3, rc=4.7e3, rs=600,
             rl=rl, hfe=150, c1=1e-6, c2=10e-6, ce=100e-6)
    if topo == "emitter-follower":
        p.update(r1=4.7e3, r2=5.6e3, re=820)
    f0 = evaluate(**p)
    f1 = evaluate(**{**p, which: p[which] * k})
    assert float(f1.f_low) <= float(f0.f_low) * (1 + 1e-9)


def test_meets_corner_agrees_with_low_corner():
    rng = np.random.default_rng(1)
    n = 2000
    dc = evaluate_dc(topology="common-emitter", supply=12, r1=rng.uniform(20e3, 100e3, n),
                     r2=10e3, re=220, re2=1e3, rc=4.7e3, rs=600, rl=10e3, hfe=150, bypassed=True)
    c1 = rng.uniform(1e-7, 1e-5, n)
    c = low_corner(dc, c1=c1, c2=10e-6, ce=100e-6)
    ok = meets_corner(dc, c1=c1, c2=10e-6, ce=100e-6, f_target=20.0)
    active = dc.state == ACTIVE
    assert np.array_equal(ok[active], (c.f_low <= 20.0)[active])
    assert 0 < ok.sum() < n  # both outcomes occur


def test_batch_equals_one_by_one():
    rng = np.random.default_rng(2)
    n = 50
    r1 = rng.uniform(2e3, 50e3, n)
    re = rng.uniform(100, 2e3, n)
    batch = evaluate(topology="emitter-follower", polarity="pnp", supply=15, r1=r1, r2=22e3,
                     re=re, rs=1e3, rl=2.2e3, hfe=120, c1=1e-6, c2=47e-6)
    for i in range(0, n, 7):
        one = evaluate(topology="emitter-follower", polarity="pnp", supply=15, r1=r1[i], r2=22e3,
                       re=re[i], rs=1e3, rl=2.2e3, hfe=120, c1=1e-6, c2=47e-6)
        for name in ("ie", "ve", "gain", "rin", "rout", "swing_peak", "f_low"):
            assert getattr(batch, name)[i] == pytest.approx(float(getattr(one, name)), rel=1e-9)


NOMINAL = dict(topology="common-emitter", polarity="npn", supply=12, r1=47e3, r2=10e3, re=220,
               re2=1e3, rc=4.7e3, rs=600, rl=10e3, c1=10e-6, c2=10e-6, ce=100e-6, vbe=0.65)
TOLS = dict(r1=0.05, r2=0.05, re=0.05, rc=0.05, re2=0.05, c1=0.2, c2=0.2, ce=0.2)


def test_monte_carlo_is_seeded_and_inside_the_worst_case():
    a = monte_carlo(4000, seed=7, tolerances=TOLS, hfe_min=100, hfe_max=300, temp_min=0,
                    temp_max=50, **NOMINAL)
    b = monte_carlo(4000, seed=7, tolerances=TOLS, hfe_min=100, hfe_max=300, temp_min=0,
                    temp_max=50, **NOMINAL)
    c = monte_carlo(4000, seed=8, tolerances=TOLS, hfe_min=100, hfe_max=300, temp_min=0,
                    temp_max=50, **NOMINAL)
    assert np.array_equal(a.ie, b.ie) and not np.array_equal(a.ie, c.ie)
    wc = worst_case(tolerances=TOLS, hfe_min=100, hfe_max=300, temp_min=0, temp_max=50, **NOMINAL)
    assert wc.vertices == 2**7  # five resistors, hFE, temperature
    for name in ("ie", "ve", "vc", "gain", "rin", "swing_peak", "f_low", "p_q"):
        lo, hi = float(wc.low[name]), float(wc.high[name])
        vals = getattr(a, name)
        # Documented limit of vertex enumeration: the symmetric swing's low end is exact, its
        # high end may lie inside the box.  The corner's low end comes from the capacitors at
        # their high ends, so it bounds every build too.
        assert np.all(vals >= lo - 1e-12 * abs(lo)), name
        if name != "swing_peak":
            assert np.all(vals <= hi + 1e-12 * abs(hi)), name


def test_worst_case_vertices_against_a_dense_grid_common_emitter():
    # Oracle: brute force over a 5-point grid per parameter of a small box.
    tols = dict(r1=0.05, r2=0.05, rc=0.05, re2=0.05)
    base = dict(topology="common-emitter", supply=12, r1=47e3, r2=10e3, re=220, re2=1e3,
                rc=4.7e3, rs=600, rl=10e3, c1=10e-6, c2=10e-6, ce=100e-6)
    wc = worst_case(tolerances=tols, hfe_min=100, hfe_max=300, **base)
    g = 1 + 0.05 * np.linspace(-1, 1, 5)
    R1, R2, RC, RE2, B = np.meshgrid(47e3 * g, 10e3 * g, 4.7e3 * g, 1e3 * g,
                                     np.linspace(100, 300, 5), indexing="ij")
    grid = evaluate(**{**base, "r1": R1, "r2": R2, "rc": RC, "re2": RE2}, hfe=B)
    for name in ("ie", "vc", "gain", "rin", "swing_peak", "f_low"):
        assert float(wc.low[name]) == pytest.approx(getattr(grid, name).min(), rel=1e-9), name
        if name != "swing_peak":
            assert float(wc.high[name]) == pytest.approx(getattr(grid, name).max(), rel=1e-9), name


def test_worst_case_vertices_against_a_dense_grid():
    # Oracle: brute force over a 5-point grid per parameter of a small box.
    tols = dict(r1=0.05, r2=0.05, re=0.05)
    base = dict(topology="emitter-follower", supply=12, r1=4.7e3, r2=5.6e3, re=820, rs=600,
                rl=1e3, c1=22e-6, c2=220e-6)
    wc = worst_case(tolerances=tols, hfe_min=100, hfe_max=300, **base)
    g = np.linspace(-1, 1, 5)
    R1, R2, RE, B = np.meshgrid(4.7e3 * (1 + 0.05 * g), 5.6e3 * (1 + 0.05 * g),
                                820 * (1 + 0.05 * g), np.linspace(100, 300, 5), indexing="ij")
    grid = evaluate(**{**base, "r1": R1, "r2": R2, "re": RE}, hfe=B)
    for name in ("ie", "ve", "gain", "rin", "rout", "swing_peak", "f_low"):
        assert float(wc.low[name]) == pytest.approx(getattr(grid, name).min(), rel=1e-9), name
        assert float(wc.high[name]) == pytest.approx(getattr(grid, name).max(), rel=1e-9), name


def test_worst_case_over_candidate_arrays():
    # Batch of candidates == each candidate alone; meets_f_target == (worst f_low <= target).
    rng = np.random.default_rng(5)
    n = 40
    r1 = rng.uniform(30e3, 70e3, n)
    c1 = rng.uniform(0.5e-6, 10e-6, n)
    kw = {**NOMINAL, "r1": r1, "c1": c1}
    wc = worst_case(tolerances=TOLS, hfe_min=100, hfe_max=300, temp_min=0, temp_max=50,
                    f_target=12.0, **kw)
    fast = worst_case(tolerances=TOLS, hfe_min=100, hfe_max=300, temp_min=0, temp_max=50,
                      corner=False, **kw)
    assert "f_low" not in fast.low
    np.testing.assert_array_equal(fast.low["ie"], wc.low["ie"])
    active = wc.all_active
    assert np.array_equal(wc.meets_f_target[active], (wc.high["f_low"] <= 12.0)[active])
    assert 0 < wc.meets_f_target.sum() < n
    for i in (0, 17, 39):
        one = worst_case(tolerances=TOLS, hfe_min=100, hfe_max=300, temp_min=0, temp_max=50,
                         **{**NOMINAL, "r1": r1[i], "c1": c1[i]})
        for name in ("ie", "gain", "f_low", "swing_peak"):
            assert wc.low[name][i] == pytest.approx(float(one.low[name]), rel=1e-6)
            assert wc.high[name][i] == pytest.approx(float(one.high[name]), rel=1e-6)


@pytest.mark.parametrize("topology", core.TOPOLOGIES)
@pytest.mark.parametrize("polarity", core.POLARITIES)
def test_worst_case_by_signs_equals_vertex_enumeration(topology, polarity):
    # Oracle: full vertex enumeration (itself checked against a dense grid above).
    rng = np.random.default_rng(9)
    n = 300
    ra, rb = rng.uniform(20e3, 80e3, n), rng.uniform(5e3, 15e3, n)
    r1, r2 = (ra, rb) if polarity == "npn" else (rb, ra)
    kw = dict(topology=topology, polarity=polarity, supply=12, r1=r1, r2=r2,
              re=rng.uniform(100, 1e3, n), re2=1e3, rc=rng.uniform(2e3, 6e3, n), rs=600,
              rl=rng.choice([220.0, 10e3, np.inf], n), c1=rng.uniform(1e-6, 10e-6, n), c2=10e-6,
              ce=100e-6)
    if topology == "emitter-follower":
        kw.update(r1=kw["r1"] / 8, r2=kw["r2"] * (4 if polarity == "npn" else 1) / 8 * 2)
    box = dict(tolerances=TOLS, hfe_min=80, hfe_max=320, temp_min=-10, temp_max=60)
    full = worst_case(f_target=15.0, **box, **kw)
    fast = worst_case_by_signs(corner=True, f_target=15.0, **box, **kw)
    ok = full.all_active
    assert ok.sum() > n // 2
    np.testing.assert_array_equal(fast.all_active, full.all_active)
    # IE and VCE are monotone in every parameter for both stages: exact.
    for name in ("ie", "vce"):
        np.testing.assert_allclose(fast.low[name][ok], full.low[name][ok], rtol=1e-9, err_msg=name)
        np.testing.assert_allclose(fast.high[name][ok], full.high[name][ok], rtol=1e-9, err_msg=name)
    # The other figures are not monotone in every parameter (R2 raises IE, so re falls, but it
    # also lowers the divider's impedance; VCE falls as RC grows while RC∥RL rises), so the sign
    # at the centre can pick the wrong end: the two methods differ by a few percent at most.
    rtol = 5e-2
    np.testing.assert_allclose(fast.low["swing_peak"][ok], full.low["swing_peak"][ok], rtol=rtol)
    for name in ("gain", "rin", "rout"):
        np.testing.assert_allclose(fast.low[name][ok], full.low[name][ok], rtol=rtol, err_msg=name)
        np.testing.assert_allclose(fast.high[name][ok], full.high[name][ok], rtol=rtol, err_msg=name)
    np.testing.assert_allclose(fast.high["f_low"][ok], full.high["f_low"][ok], rtol=rtol)
    differ = ok & (fast.meets_f_target != full.meets_f_target)
    assert np.all(np.abs(full.high["f_low"][differ] / 15.0 - 1) < rtol)


def test_outer_broadcasting_of_resistors_against_capacitors():
    # A search may score every divider against every capacitor: shapes (n, 1) × (1, m).
    r1 = np.array([30e3, 47e3, 68e3])[:, None]
    c1 = np.array([1e-6, 4.7e-6, 22e-6, 100e-6])[None, :]
    dc = evaluate_dc(topology="common-emitter", supply=12, r1=r1, r2=10e3, re=220, re2=1e3,
                     rc=4.7e3, rs=600, rl=10e3, hfe=150, bypassed=True)
    c = low_corner(dc, c1=c1, c2=10e-6, ce=100e-6)
    assert c.f_low.shape == (3, 4)
    ok = meets_corner(dc, c1=c1, c2=10e-6, ce=100e-6, f_target=10.0)
    assert ok.shape == (3, 4)
    for i in range(3):
        for j in range(4):
            one = evaluate(topology="common-emitter", supply=12, r1=float(r1[i, 0]), r2=10e3, re=220,
                           re2=1e3, rc=4.7e3, rs=600, rl=10e3, hfe=150, c1=float(c1[0, j]),
                           c2=10e-6, ce=100e-6)
            assert c.f_low[i, j] == pytest.approx(float(one.f_low), rel=1e-9)
            assert ok[i, j] == (float(one.f_low) <= 10.0)


@pytest.mark.parametrize("topology", core.TOPOLOGIES)
def test_polynomial_magnitude_equals_the_complex_transfer(topology):
    # Two independent reductions of the same circuit: the corner search's real polynomial
    # factors against the complex impedance form (itself checked against scipy.signal).
    rng = np.random.default_rng(3)
    n = 500
    dc = evaluate_dc(topology=topology, supply=12, r1=rng.uniform(20e3, 60e3, n), r2=10e3,
                     re=rng.uniform(100, 1e3, n), re2=rng.uniform(0, 2e3, n), rc=4.7e3,
                     rs=rng.choice([0.0, 600.0, 10e3], n), rl=rng.choice([47.0, 10e3, np.inf], n),
                     hfe=rng.uniform(50, 400, n), bypassed=rng.random(n) < 0.5)
    c1, c2 = rng.uniform(1e-7, 1e-4, n), rng.uniform(1e-6, 1e-3, n)
    ce = np.where(dc.inputs["bypassed"], rng.uniform(1e-5, 1e-3, n), 0.0)
    f = np.logspace(-2, 4, 13)[:, None]
    h = core.transfer(dc, c1=c1, c2=c2, ce=ce, f=f)
    mag = core._Magnitude(dc, c1, c2, ce)((2 * np.pi * f) ** 2)
    act = np.broadcast_to(dc.state == ACTIVE, h.shape)
    np.testing.assert_allclose(mag[act], (np.abs(h) ** 2)[act], rtol=1e-9)

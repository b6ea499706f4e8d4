"""analysis.cascade: the two-stage amplifier held to the single stages, to conservation, to a brute
force and to scipy.signal.  The simulator checks are in tests/reference/test_ngspice_cascade.py.

Sources are named beside each check.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st
from scipy import optimize, signal

from drawerfit.analysis import core
from drawerfit.analysis.cascade import (
    CASCADE_TOLERANCE_KEYS, cascade_arguments, cascade_low_corner, cascade_monte_carlo,
    cascade_transfer, cascade_worst_case, evaluate_cascade, evaluate_cascade_dc,
)
from drawerfit.analysis.dc import ACTIVE, CUTOFF, LIMIT_CUTOFF, LIMIT_SATURATION
from drawerfit.constants import thermal_voltage
from drawerfit.stages import Part, StageError, TransistorModel
from drawerfit.stages.two_stage import TwoStage, elements

DC_KEYS = ("r1", "r2", "rc", "re", "re2", "r3", "r4", "re3", "rs", "rl", "hfe1", "hfe2", "vbe1", "vbe2")


def _base(coupling="capacitor", polarity="npn", bypass=True, **over):
    """A plausible amplifier: 12 V, 1.1 mA in stage 1, a few mA in the follower, 300 Ω load;
    without bypass RE2 stays in the emitter, unbypassed."""
    npn = polarity == "npn"
    p = dict(coupling=coupling, polarity=polarity, supply=12.0, r1=47e3 if npn else 10e3,
             r2=10e3 if npn else 47e3, rc=4.7e3, re=220.0, re2=1e3,
             r3=22e3 if npn else 33e3, r4=33e3 if npn else 22e3, re3=1e3, rs=600.0, rl=300.0,
             hfe1=150.0, hfe2=100.0, c1=10e-6, c2=4.7e-6, c3=220e-6, ce=100e-6 if bypass else 0.0)
    if coupling == "direct":
        p.update(r3=np.inf, r4=np.inf, c2=0.0)
    p.update(over)
    return p


def _dc(p):
    return {k: v for k, v in p.items() if k not in ("c1", "c2", "c3", "ce")}


finite = dict(allow_nan=False, allow_infinity=False)
resistances = st.floats(100, 100e3, **finite)


# --- the capacitor-coupled cascade is two single stages at DC ------------------------------

@settings(max_examples=60, deadline=None)
@given(polarity=st.sampled_from(["npn", "pnp"]), r1=resistances, r2=resistances, rc=st.floats(500, 20e3),
       re=st.floats(50, 2e3), re2=st.floats(0, 3e3), r3=resistances, r4=resistances, re3=st.floats(50, 5e3),
       hfe1=st.floats(30, 400), hfe2=st.floats(30, 400), temp=st.floats(-10, 60))
def test_capacitor_coupled_dc_points_are_the_single_stages_own(polarity, r1, r2, rc, re, re2, r3, r4, re3,
                                                                hfe1, hfe2, temp):
    """Property (C2 blocks DC): each stage's point equals analysis.core.evaluate_dc of that stage
    alone, exactly, in every state."""
    fig = evaluate_cascade_dc(coupling="capacitor", polarity=polarity, supply=15.0, r1=r1, r2=r2, rc=rc, re=re,
                              re2=re2, bypassed=re2 > 0, r3=r3, r4=r4, re3=re3, rl=470.0, hfe1=hfe1, hfe2=hfe2,
                              temp_c=temp)
    s1 = core.evaluate_dc(topology="common-emitter", polarity=polarity, supply=15.0, r1=r1, r2=r2, re=re, rc=rc,
                          re2=re2, hfe=hfe1, temp_c=temp)
    s2 = core.evaluate_dc(topology="emitter-follower", polarity=polarity, supply=15.0, r1=r3, r2=r4, re=re3,
                          rl=470.0, hfe=hfe2, temp_c=temp)
    for mine, theirs in (("vb1", "vb"), ("ve1", "ve"), ("vc1", "vc"), ("ie1", "ie"), ("vce1", "vce"),
                         ("state1", "state")):
        assert np.array_equal(getattr(fig, mine), getattr(s1, theirs)), mine
    for mine, theirs in (("vb2", "vb"), ("ve2", "ve"), ("ie2", "ie"), ("vce2", "vce"), ("state2", "state")):
        assert np.array_equal(getattr(fig, mine), getattr(s2, theirs)), mine


# --- mid-band: stage 1 loaded by the follower, the follower driven from RC -----------------

@pytest.mark.parametrize("coupling", ["capacitor", "direct"])
@pytest.mark.parametrize("polarity", ["npn", "pnp"])
@pytest.mark.parametrize("bypass", [False, True])
def test_mid_band_is_the_product_of_the_single_stages(coupling, polarity, bypass):
    """Independent computation from analysis.core's single stages: the cascade gain is stage 1's
    gain into a load of the follower's input resistance times the follower's base-to-load gain,
    and equally stage 1's open-collector gain times the follower's gain from a source of RC; the
    output resistance is the follower's with a source of RC (∥ R3 ∥ R4)."""
    p = _base(coupling, polarity, bypass)
    fig = evaluate_cascade(**p)
    assert bool(fig.active)
    direct = coupling == "direct"
    # the follower alone, at the cascade's own operating point of Q2: its input resistance
    re_small2 = thermal_voltage(25.0) / float(fig.ie2)
    zb2 = (p["hfe2"] + 1) * (re_small2 + 1 / (1 / p["re3"] + 1 / p["rl"]))
    rin2 = zb2 if direct else 1 / (1 / p["r3"] + 1 / p["r4"] + 1 / zb2)
    assert float(fig.rin2) == pytest.approx(rin2, rel=1e-12)
    ce_kw = dict(topology="common-emitter", polarity=polarity, supply=p["supply"], r1=p["r1"], r2=p["r2"], re=p["re"],
                 rc=p["rc"], re2=p["re2"], bypassed=bypass, rs=p["rs"], hfe=p["hfe1"])
    loaded = core.evaluate_dc(rl=rin2, **ce_kw)
    open_c = core.evaluate_dc(**ce_kw)
    if direct:
        # the follower's input resistance set by a fictitious divider-free stage: a huge divider
        ef = core.evaluate_dc(topology="emitter-follower", polarity=polarity, supply=p["supply"], r1=1e30, r2=1e30,
                              re=p["re3"], rs=p["rc"], rl=p["rl"], hfe=p["hfe2"])
        a2 = float(fig.gain2)
        assert a2 == pytest.approx((1 / (1 / p["re3"] + 1 / p["rl"])) /
                                   (re_small2 + 1 / (1 / p["re3"] + 1 / p["rl"])), rel=1e-12)
        rout = 1 / (1 / p["re3"] + 1 / (re_small2 + p["rc"] / (p["hfe2"] + 1)))
    else:
        ef = core.evaluate_dc(topology="emitter-follower", polarity=polarity, supply=p["supply"], r1=p["r3"],
                              r2=p["r4"], re=p["re3"], rs=p["rc"], rl=p["rl"], hfe=p["hfe2"])
        a2 = float(ef.gain_base)
        rout = float(ef.rout)
        follower_from_rc = float(ef.gain)
        assert float(fig.gain) == pytest.approx(float(open_c.gain) * follower_from_rc, rel=1e-9)
    assert float(fig.gain) == pytest.approx(float(loaded.gain) * a2, rel=1e-9)
    assert float(fig.rin) == pytest.approx(float(loaded.rin), rel=1e-12)
    assert float(fig.rout) == pytest.approx(rout, rel=1e-9)


@pytest.mark.parametrize("coupling", ["capacitor", "direct"])
def test_with_c2_c3_huge_the_response_is_stage_one_times_the_follower(coupling):
    """Independent computation from analysis.core: with C2 and C3 a short at every frequency of
    interest, H(f) is the single common-emitter stage's transfer (C1, CE; its load the
    follower's input resistance) times the follower's mid-band gain; so are the corners."""
    p = _base(coupling, bypass=True, c2=0.0 if coupling == "direct" else 1e6, c3=1e6)
    fig = evaluate_cascade(**p)
    stage1 = core.evaluate_dc(topology="common-emitter", supply=p["supply"], r1=p["r1"], r2=p["r2"], re=p["re"],
                              rc=p["rc"], re2=p["re2"], bypassed=True, rs=p["rs"], hfe=p["hfe1"], rl=float(fig.rin2))
    f = np.logspace(-1, 3, 41)
    h1 = core.transfer(stage1, c1=p["c1"], c2=1e6, ce=p["ce"], f=f)
    h = cascade_transfer(fig, c1=p["c1"], c2=p["c2"], c3=p["c3"], ce=p["ce"], f=f)
    np.testing.assert_allclose(h, h1 * float(fig.gain2), rtol=1e-6)
    single = core.low_corner(stage1, c1=p["c1"], c2=1e6, ce=p["ce"])
    assert float(fig.f_low) == pytest.approx(float(single.f_low), rel=1e-5)


# --- the corner -----------------------------------------------------------------------------

caps = st.floats(0.1e-6, 2e-3, **finite)


@settings(max_examples=60, deadline=None)
@given(coupling=st.sampled_from(["capacitor", "direct"]), c1=caps, c2=caps, c3=caps, ce=caps,
       which=st.sampled_from(["c1", "c2", "c3", "ce"]), factor=st.floats(1.05, 10))
def test_corner_falls_as_any_capacitance_grows(coupling, c1, c2, c3, ce, which, factor):
    """Property (every capacitor is in a high-pass path): a larger capacitance never raises the
    corner (C2 does nothing when direct-coupled)."""
    p = _base(coupling, c1=c1, c2=c2 if coupling == "capacitor" else 0.0, c3=c3, ce=ce)
    if coupling == "direct" and which == "c2":
        which = "c1"
    dc = evaluate_cascade_dc(**_dc(p), bypassed=True)
    kw = dict(c1=p["c1"], c2=p["c2"], c3=p["c3"], ce=p["ce"])
    f0 = float(cascade_low_corner(dc, **kw)["f_low"])
    kw[which] *= factor
    f1 = float(cascade_low_corner(dc, **kw)["f_low"])
    assert f1 <= f0 * (1 + 1e-6)


def test_corner_is_where_the_magnitude_falls_3_db():
    """Definition of the −3 dB corner, from the transfer function itself (bisection by hand)."""
    p = _base("capacitor")
    fig = evaluate_cascade(**p)
    lo, hi = 1e-3, 1e5
    for _ in range(200):
        mid = math.sqrt(lo * hi)
        h = abs(complex(cascade_transfer(fig, c1=p["c1"], c2=p["c2"], c3=p["c3"], ce=p["ce"], f=mid)))
        lo, hi = (mid, hi) if h < abs(float(fig.gain)) / math.sqrt(2) else (lo, mid)
    assert float(fig.f_low) == pytest.approx(lo, rel=1e-6)
    assert float(fig.f_low) >= max(float(fig.f_c1), float(fig.f_c2), float(fig.f_c3), float(fig.f_ce)) * 0.9


def _nodal_polynomials(fig, p):
    """(num, den) of v_out/v_s in descending powers of s from the small-signal nodal equations
    Y(s) = G + s·C (Cramer's rule; determinants interpolated at real s), for scipy.signal."""
    vt = thermal_voltage(25.0)
    direct = p["coupling"] == "direct"
    nodes = ["in", "b1", "e1", "n1", "c1", "e2", "out"] + ([] if direct else ["b2"])
    idx = {n: i for i, n in enumerate(nodes)}
    k = len(nodes)
    G, C = np.zeros((k, k)), np.zeros((k, k))

    def stamp(mat, a, b, y):
        for x in (a, b):
            if x != "0":
                mat[idx[x], idx[x]] += y
        if a != "0" and b != "0":
            mat[idx[a], idx[b]] -= y
            mat[idx[b], idx[a]] -= y

    def vccs(op, om, cp, cm, g):
        for o, so in ((op, 1), (om, -1)):
            for c, sc in ((cp, 1), (cm, -1)):
                if o != "0" and c != "0":
                    G[idx[o], idx[c]] += so * sc * g

    b2 = "c1" if direct else "b2"
    stamp(G, "in", "0", 1 / p["rs"])
    stamp(C, "in", "b1", p["c1"])
    stamp(G, "b1", "0", 1 / p["r1"] + 1 / p["r2"])
    stamp(G, "b1", "e1", float(fig.ie1) / (vt * (p["hfe1"] + 1)))
    stamp(G, "e1", "n1", 1 / p["re"])
    stamp(G, "n1", "0", 1 / p["re2"])
    stamp(C, "n1", "0", p["ce"])
    stamp(G, "c1", "0", 1 / p["rc"])
    vccs("c1", "e1", "b1", "e1", float(fig.ic1) / vt)
    if not direct:
        stamp(C, "c1", "b2", p["c2"])
        stamp(G, "b2", "0", 1 / p["r3"] + 1 / p["r4"])
    stamp(G, b2, "e2", float(fig.ie2) / (vt * (p["hfe2"] + 1)))
    stamp(G, "e2", "0", 1 / p["re3"])
    vccs("e2", "0", b2, "e2", -float(fig.ic2) / vt)
    stamp(C, "e2", "out", p["c3"])
    stamp(G, "out", "0", 1 / p["rl"])
    rhs = np.zeros(k)
    rhs[idx["in"]] = 1 / p["rs"]
    deg = 3 if direct else 4
    scale = 1.0 / (p["c1"] * p["rs"])
    pts = np.linspace(-3.0, 3.0, 4 * deg + 1)

    def dets(s):
        Y = G + s * C
        Yo = Y.copy()
        Yo[:, idx["out"]] = rhs
        return np.linalg.det(Yo), np.linalg.det(Y)

    vals = np.array([dets(x * scale) for x in pts])
    powers = np.arange(deg, -1, -1)
    return np.polyfit(pts, vals[:, 0], deg) / scale**powers, np.polyfit(pts, vals[:, 1], deg) / scale**powers


@pytest.mark.parametrize("coupling", ["capacitor", "direct"])
def test_transfer_matches_scipy_signal(coupling):
    """scipy.signal.freqs of the rational function from the nodal equations (an independent route
    to the same small-signal circuit) against the impedance-chain transfer, and its −3 dB point."""
    p = _base(coupling, c3=47e-6, c2=1e-6 if coupling == "capacitor" else 0.0)
    fig = evaluate_cascade(**p)
    num, den = _nodal_polynomials(fig, p)
    f = np.logspace(-2, 5, 300)
    _, h_ref = signal.freqs(num, den, worN=2 * np.pi * f)
    h = cascade_transfer(fig, c1=p["c1"], c2=p["c2"], c3=p["c3"], ce=p["ce"], f=f)
    np.testing.assert_allclose(h, h_ref, rtol=1e-6, atol=1e-6 * abs(float(fig.gain)))
    assert float(fig.gain) == pytest.approx(num[0] / den[0], rel=1e-6)
    _, h_at = signal.freqs(num, den, worN=[2 * np.pi * float(fig.f_low)])
    assert abs(h_at[0]) == pytest.approx(abs(num[0] / den[0]) / math.sqrt(2), rel=1e-6)


# --- direct coupling: the follower's base current on the first collector -------------------

def test_direct_coupling_with_a_huge_follower_beta_is_the_unloaded_stage():
    """With β2 → ∞ the follower draws no base current: stage 1 is analysis.core's single
    common-emitter stage, and VE2 is one VBE below its collector (hand method)."""
    p = _base("direct", hfe2=1e12)
    fig = evaluate_cascade_dc(**_dc(p), bypassed=True)
    s1 = core.evaluate_dc(topology="common-emitter", supply=12.0, r1=p["r1"], r2=p["r2"], re=p["re"], rc=p["rc"],
                          re2=p["re2"], hfe=p["hfe1"])
    assert float(fig.vc1) == pytest.approx(float(s1.vc), rel=1e-9)
    assert float(fig.ie1) == pytest.approx(float(s1.ie), rel=1e-12)
    assert float(fig.ve2) == pytest.approx(float(s1.vc) - 0.65, rel=1e-9)
    assert float(fig.ie2) == pytest.approx((float(s1.vc) - 0.65) / p["re3"], rel=1e-9)


@settings(max_examples=80, deadline=None)
@given(r1=resistances, r2=resistances, rc=st.floats(200, 50e3), re=st.floats(20, 3e3), re3=st.floats(20, 5e3),
       hfe1=st.floats(20, 500), hfe2=st.floats(20, 500), polarity=st.sampled_from(["npn", "pnp"]))
def test_direct_coupled_solution_satisfies_the_circuit_equations(r1, r2, rc, re, re3, hfe1, hfe2, polarity):
    """Property, in every state: Kirchhoff's current law at the first collector and at each base,
    the base loops, and VCE1 = VCE(sat) when saturated, from the reported voltages and currents."""
    vcc, vbe = 12.0, 0.65
    fig = evaluate_cascade_dc(coupling="direct", polarity=polarity, supply=vcc, r1=r1, r2=r2, rc=rc, re=re, re3=re3,
                              hfe1=hfe1, hfe2=hfe2)
    m = (lambda v: float(v)) if polarity == "npn" else (lambda v: vcc - float(v))  # mirrored volts
    vb1, ve1, vc1, ve2 = m(fig.vb1), m(fig.ve1), m(fig.vc1), m(fig.ve2)
    ra, rb = (r1, r2) if polarity == "npn" else (r2, r1)
    ib1, ic1, ie1, ib2, ie2 = (float(x) for x in (fig.ib1, fig.ic1, fig.ie1, fig.ib2, fig.ie2))
    scale = vcc / min(ra, rb, rc)
    assert (vcc - vb1) / ra - vb1 / rb == pytest.approx(ib1, abs=1e-9 * scale)  # KCL at base 1
    assert (vcc - vc1) / rc == pytest.approx(ic1 + ib2, abs=1e-9 * scale)  # KCL at collector 1
    assert ve1 == pytest.approx(ie1 * re, abs=1e-9 * vcc)
    assert ve2 == pytest.approx(ie2 * re3, abs=1e-9 * vcc)
    state1, state2 = int(fig.state1), int(fig.state2)
    if state2 == ACTIVE:
        assert float(fig.vb2) == float(fig.vc1)
        assert vc1 - ve2 == pytest.approx(vbe, abs=1e-9)
        assert ie2 == pytest.approx((hfe2 + 1) * ib2, rel=1e-9)
    else:
        assert state2 == CUTOFF and ie2 == 0 and vc1 <= vbe + 1e-12
    if state1 == ACTIVE:
        assert vb1 - ve1 == pytest.approx(vbe, abs=1e-9)
        assert ic1 == pytest.approx(hfe1 * ib1, rel=1e-9)
        assert vc1 - ve1 >= 0.2 - 1e-9
    elif state1 == CUTOFF:
        assert ib1 == 0 and ic1 == 0
    else:
        assert vc1 - ve1 == pytest.approx(0.2, abs=1e-9)
        assert vb1 - ve1 == pytest.approx(vbe, abs=1e-9)
        assert ic1 <= hfe1 * ib1 * (1 + 1e-9)


@pytest.mark.parametrize("coupling", ["capacitor", "direct"])
def test_pnp_is_the_mirror_of_npn(coupling):
    """Symmetry of the circuit: the PNP amplifier with R1↔R2 and R3↔R4 exchanged has the NPN one's
    currents and small-signal figures, and node voltages mirrored about the supply."""
    n = evaluate_cascade(**_base(coupling, "npn"))
    p = evaluate_cascade(**_base(coupling, "pnp"))
    for name in ("ie1", "ie2", "ic1", "gain", "rin", "rout", "f_low", "swing_peak", "p_q1", "p_q2", "p_rc"):
        assert float(getattr(p, name)) == pytest.approx(float(getattr(n, name)), rel=1e-12), name
    for name in ("vb1", "ve1", "vc1", "vb2", "ve2"):
        assert float(getattr(p, name)) == pytest.approx(12.0 - float(getattr(n, name)), rel=1e-12), name
    # C3 holds VE2 to the grounded load either way; CE's rail is the supply for PNP, so it flips
    assert float(p.v_c3) == pytest.approx(12.0 - float(n.v_c3))
    assert float(p.v_ce) == pytest.approx(-float(n.v_ce)) and float(n.v_ce) > 0


# --- power and capacitor voltages ---------------------------------------------------------

@pytest.mark.parametrize("coupling", ["capacitor", "direct"])
@pytest.mark.parametrize("polarity", ["npn", "pnp"])
def test_quiescent_power_balances_the_supply(coupling, polarity):
    """Conservation of energy: the power every resistor and transistor dissipates adds up to
    VCC times the current the supply delivers, found from the node voltages of the elements on
    the supply rail (stages.two_stage.elements) and Q2's collector current when it is there."""
    p = _base(coupling, polarity)
    fig = evaluate_cascade(**p)
    vcc = p["supply"]
    n1 = float(fig.v_ce) + (0.0 if polarity == "npn" else vcc)
    volts = {"vcc": vcc, "0": 0.0, "b1": fig.vb1, "e1": fig.ve1, "c1": fig.vc1, "b2": fig.vb2, "e2": fig.ve2,
             "n1": n1}
    roles = {"R1", "R2", "RC", "RE", "RE2", "CE", "C1", "C3", "RE3"} | ({"C2", "R3", "R4"} if coupling == "capacitor" else set())
    parts = {r: Part(1.0) for r in roles}
    supply_current = 0.0
    for name, a, b, role in elements(polarity, parts, coupling):
        if name.startswith("R") and "vcc" in (a, b):
            other = b if a == "vcc" else a
            supply_current += (vcc - float(volts[other])) / p[name.lower()]
        if name == "Q2" and a == "vcc":
            supply_current += float(fig.ic2)
    dissipated = sum(float(getattr(fig, f)) for f in ("p_r1", "p_r2", "p_rc", "p_re", "p_re2", "p_r3", "p_r4",
                                                       "p_re3", "p_q1", "p_q2"))
    assert dissipated == pytest.approx(vcc * supply_current, rel=1e-9)


def test_capacitor_voltages_follow_the_nodes():
    """Sign convention (docs/method.md): stage side minus the other end, source and load at 0 V."""
    fig = evaluate_cascade(**_base("capacitor"))
    assert float(fig.v_c1) == pytest.approx(float(fig.vb1))
    assert float(fig.v_c2) == pytest.approx(float(fig.vc1) - float(fig.vb2))
    assert float(fig.v_c3) == pytest.approx(float(fig.ve2))
    assert float(fig.v_ce) == pytest.approx(float(fig.ie1) * 1e3)


# --- swing ----------------------------------------------------------------------------------

@settings(max_examples=60, deadline=None)
@given(coupling=st.sampled_from(["capacitor", "direct"]), rc=st.floats(1e3, 9e3), re3=st.floats(100, 5e3),
       rl=st.floats(8, 1e4))
def test_swing_is_the_nearest_of_the_four_limits(coupling, rc, re3, rl):
    """Property of the model (docs/method.md): the symmetric peak is the smallest of stage 1's
    saturation and cut-off and stage 2's cut-off and saturation limits, stage 1's passed to the
    load one to one by the follower (VBE fixed, less its rise at a cut-off peak); stage 2's cut-off is IE2·(RE3∥RL) (common
    practice, design notes); the binding stage and limit are named."""
    fig = evaluate_cascade_dc(**_dc(_base(coupling, rc=rc, re3=re3, rl=rl)), bypassed=True)
    if not bool(fig.active):
        assert float(fig.swing_peak) == 0 and int(fig.swing_stage) == 0
        return
    # large signal, VBE fixed: the follower passes collector 1's excursion one to one
    rin2 = 101 * (1 / (1 / re3 + 1 / rl))
    if coupling == "capacitor":
        rin2 = 1 / (1 / rin2 + 1 / 22e3 + 1 / 33e3)
    zl1 = 1 / (1 / rc + 1 / rin2)
    rsrc = rc if coupling == "direct" else 1 / (1 / rc + 1 / 22e3 + 1 / 33e3)
    # stage 1's cut-off: Q2's VBE rises by VT·ln(i/IE2) at the peak (diode law), a share
    # zl1/rsrc of it off the output; the root found by scipy.optimize.brentq
    d2 = float(fig.ie2) / (1 / re3 + 1 / rl)
    rise = float(fig.ic1) * zl1
    vt = thermal_voltage(25.0)
    cut1 = optimize.brentq(lambda x: x - rise + zl1 / rsrc * vt * math.log1p(x / d2), 0.0, rise, xtol=1e-15)
    limits = {
        (1, LIMIT_CUTOFF): cut1,
        (1, LIMIT_SATURATION): (float(fig.vce1) - 0.2) * zl1 / (zl1 + 220 * 151 / 150),
        (2, LIMIT_CUTOFF): float(fig.ie2) / (1 / re3 + 1 / rl),
        (2, LIMIT_SATURATION): float(fig.vce2) - 0.2,
    }
    binding = min(limits, key=limits.get)
    assert float(fig.swing_peak) == pytest.approx(max(limits[binding], 0.0), rel=1e-9)
    assert (int(fig.swing_stage), int(fig.swing_limit)) == binding


# --- spread ---------------------------------------------------------------------------------

TOLS = dict(r1=0.05, r2=0.05, rc=0.05, re=0.01, re2=0.05, r3=0.05, r4=0.05, re3=0.01, c1=0.2, c2=0.1, c3=0.2, ce=0.2)


def _nominal(coupling):
    p = _base(coupling)
    for k in ("hfe1", "hfe2"):
        p.pop(k)
    return p


@pytest.mark.parametrize("coupling", ["capacitor", "direct"])
def test_worst_case_is_the_extremes_over_every_vertex(coupling):
    """Brute force: a plain loop over every vertex of the box, one scalar evaluation each, gives
    the same lowest and highest IE1, IE2, gain and corner as the vectorised enumeration."""
    import itertools

    nominal = _nominal(coupling)
    wc = cascade_worst_case(tolerances=TOLS, hfe1_min=100, hfe1_max=225, hfe2_min=60, hfe2_max=150,
                            temp_min=0, temp_max=50, **nominal)
    keys = [k for k in ("r1", "r2", "rc", "re", "re2", "r3", "r4", "re3") if np.isfinite(nominal[k])]
    assert wc.vertices == 2 ** (len(keys) + 3)
    seen = {n: [] for n in ("ie1", "ie2", "gain", "f_low")}
    for ends in itertools.product((-1, 1), repeat=len(keys) + 3):
        kw = dict(nominal)
        for k, e in zip(keys, ends):
            kw[k] = nominal[k] * (1 + e * TOLS[k])
        kw["hfe1"] = 225 if ends[-3] > 0 else 100
        kw["hfe2"] = 150 if ends[-2] > 0 else 60
        kw["temp_c"] = 50 if ends[-1] > 0 else 0
        for c in ("c1", "c2", "c3", "ce"):
            kw[c] = nominal[c] * (1 - TOLS[c])
        f = evaluate_cascade(**kw)
        for n in seen:
            seen[n].append(float(getattr(f, n)))
    for n, vals in seen.items():
        rel = 1e-6 if n == "f_low" else 1e-9  # the corner's root search stops at about 1e-7
        assert float(wc.high[n]) == pytest.approx(max(vals), rel=rel), n
        if n != "f_low":  # the lowest corner comes from the capacitors' high ends
            assert float(wc.low[n]) == pytest.approx(min(vals), rel=rel), n
    assert bool(wc.all_active)


def test_monte_carlo_stays_in_the_box_and_repeats_by_seed():
    """Property: the currents are monotone in every parameter, so every random build lies within
    the worst case; the same seed gives the same builds, another seed others."""
    nominal = _nominal("direct")
    hfe = dict(hfe1_min=100, hfe1_max=225, hfe2_min=60, hfe2_max=150)
    wc = cascade_worst_case(tolerances=TOLS, temp_min=0, temp_max=50, corner=False, **hfe, **nominal)
    mc = cascade_monte_carlo(2000, seed=5, tolerances=TOLS, temp_min=0, temp_max=50, **hfe, **nominal)
    for n in ("ie1", "ie2", "vc1", "ve2"):
        vals = getattr(mc, n)
        assert np.all(vals >= float(wc.low[n]) * (1 - 1e-12)) and np.all(vals <= float(wc.high[n]) * (1 + 1e-12)), n
    again = cascade_monte_carlo(2000, seed=5, tolerances=TOLS, temp_min=0, temp_max=50, **hfe, **nominal)
    other = cascade_monte_carlo(2000, seed=6, tolerances=TOLS, temp_min=0, temp_max=50, **hfe, **nominal)
    assert np.array_equal(mc.gain, again.gain) and not np.array_equal(mc.gain, other.gain)
    assert np.all(np.isfinite(mc.f_low)) and mc.f_low.shape == (2000,)


def test_unknown_tolerance_is_refused():
    with pytest.raises(ValueError, match="no tolerance"):
        cascade_worst_case(tolerances={"r9": 0.05}, hfe1_min=100, hfe1_max=200, hfe2_min=100, hfe2_max=200,
                           **_nominal("capacitor"))
    assert "re3" in CASCADE_TOLERANCE_KEYS


# --- the circuit object ------------------------------------------------------------------------

def _parts(coupling):
    roles = dict(R1=47e3, R2=10e3, RC=4.7e3, RE=1.2e3, C1=10e-6, RE3=1e3, C3=220e-6)
    if coupling == "capacitor":
        roles.update(C2=4.7e-6, R3=22e3, R4=33e3)
    return {k: Part(v) for k, v in roles.items()}


def test_roles_per_coupling_are_checked():
    """The role scheme of docs/method.md: C2, R3, R4 only when capacitor-coupled; CE needs RE2."""
    t = TransistorModel("npn", 100, 200)
    TwoStage("npn", 12, "direct", _parts("direct"), t, t)
    TwoStage("npn", 12, "capacitor", _parts("capacitor"), t, t)
    with pytest.raises(StageError, match="no role C2"):
        TwoStage("npn", 12, "direct", {**_parts("direct"), "C2": Part(1e-6)}, t, t)
    with pytest.raises(StageError, match="needs R3, R4"):
        TwoStage("npn", 12, "capacitor", {k: v for k, v in _parts("capacitor").items() if k not in ("R3", "R4")}, t, t)
    with pytest.raises(StageError, match="CE bypasses RE2"):
        TwoStage("npn", 12, "direct", {**_parts("direct"), "CE": Part(1e-4)}, t, t)
    with pytest.raises(StageError, match="coupling"):
        TwoStage("npn", 12, "transformer", _parts("direct"), t, t)
    with pytest.raises(StageError, match="Q2 is PNP"):
        TwoStage("npn", 12, "direct", _parts("direct"), t, TransistorModel("pnp", 100, 200))


def test_arguments_of_a_circuit_evaluate_as_the_same_keywords():
    """cascade_arguments is the nominal point: the same figures as the keywords typed out."""
    t1, t2 = TransistorModel("npn", 100, 225), TransistorModel("npn", 60, 150)
    amp = TwoStage("npn", 12, "direct", _parts("direct"), t1, t2, 600, 300)
    a = evaluate_cascade(**cascade_arguments(amp))
    b = evaluate_cascade(coupling="direct", supply=12, r1=47e3, r2=10e3, rc=4.7e3, re=1.2e3, re3=1e3, rs=600,
                         rl=300, hfe1=150, hfe2=math.sqrt(60 * 150), c1=10e-6, c3=220e-6)
    assert bool(b.active)
    for n in ("ie1", "ie2", "gain", "rin", "rout", "f_low"):
        assert float(getattr(a, n)) == pytest.approx(float(getattr(b, n)), rel=1e-12)


def test_stage_module_does_not_import_numpy():
    """stages/two_stage.py stays light (DEVELOPERS.md: heavy libraries inside functions only)."""
    import subprocess
    import sys

    code = "import sys, drawerfit.stages.two_stage; print('numpy' in sys.modules)"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True,
                         env={"PYTHONPATH": "src", "PATH": ""}, cwd=__file__.rsplit("/tests/", 1)[0])
    assert out.stdout.strip() == "False"

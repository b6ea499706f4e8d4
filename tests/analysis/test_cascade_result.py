"""analysis.cascade_result and cascade_checks: the analysis of a two-stage amplifier as one result.

Expected values come from hand formulas written here (their source beside each), from the rules of
thumb of the trade ("common practice, no source": 50 % power derating, 80 % of a capacitor's
voltage rating), and from properties (a worst-case box holds its nominal point; a seed repeats its
builds).  The figures themselves are held against ngspice in tests/reference/test_ngspice_cascade.py
and tests/reference/test_ngspice_two_stage_io.py.
"""

from __future__ import annotations

import json
import math

import pytest
from hypothesis import given, settings, strategies as st

from drawerfit.analysis.cascade_result import CascadeAnalysis, analyse_cascade
from drawerfit.analysis.cascade_targets import CascadeTargets
from drawerfit.constants import thermal_voltage
from drawerfit.stages import Conditions, Part, TransistorModel
from drawerfit.stages.two_stage import TwoStage

VBE = 0.65  # the working figure, common practice, no source


def _amp(coupling="capacitor", polarity="npn", supply=12.0, ratings=None, hfe1=(150, 150), hfe2=(100, 100),
         load=600.0, **over):
    npn = polarity == "npn"
    parts = {"R1": Part(47e3 if npn else 10e3, 0.05), "R2": Part(10e3 if npn else 47e3, 0.05),
             "RC": Part(4.7e3, 0.05), "RE": Part(220.0, 0.05), "RE2": Part(1e3, 0.05),
             "CE": Part(100e-6, 0.2, polarized=True), "C1": Part(10e-6, 0.2, polarized=True),
             "RE3": Part(470.0, 0.05), "C3": Part(470e-6, 0.2, polarized=True)}
    if coupling == "capacitor":
        parts.update({"C2": Part(10e-6, 0.2, polarized=False), "R3": Part(15e3 if npn else 5.6e3, 0.05),
                      "R4": Part(5.6e3 if npn else 15e3, 0.05)})
    for role, rating in (ratings or {}).items():
        p = parts[role]
        parts[role] = Part(p.value, p.tolerance, rating, p.polarized)
    parts.update(over)
    q1 = TransistorModel(polarity, *hfe1, vbe=VBE, vceo=40.0, ic_max=0.1, pd=0.4)
    q2 = TransistorModel(polarity, *hfe2, vbe=VBE, vceo=40.0, ic_max=0.5, pd=0.6)
    return TwoStage(polarity, supply, coupling, parts, q1, q2, 600.0, load)


def _divider_point(vcc, r_top, r_bottom, re_total, beta):
    """IE of a divider-biased emitter (the loaded-divider formula of the trade, from memory of any
    transistor-circuits handbook: IB = (VTH − VBE)/(RTH + (β+1)·RE))."""
    vth = vcc * r_bottom / (r_top + r_bottom)
    rth = r_top * r_bottom / (r_top + r_bottom)
    ib = (vth - VBE) / (rth + (beta + 1) * re_total)
    return (beta + 1) * ib


@pytest.mark.parametrize("polarity", ["npn", "pnp"])
def test_both_operating_points_follow_the_divider_formula(polarity):
    amp = _amp(polarity=polarity)
    a = analyse_cascade(amp)
    # hand formula above, stage 1 (R1 to the supply, R2 to ground; mirrored for PNP: the divider
    # measured from the emitter rail is R2 over R1 for NPN and R1 over R2 for PNP)
    top, bottom = ("R1", "R2") if polarity == "npn" else ("R2", "R1")
    ie1 = _divider_point(12.0, amp.value(top), amp.value(bottom), 1220.0, 150.0)
    top, bottom = ("R3", "R4") if polarity == "npn" else ("R4", "R3")
    ie2 = _divider_point(12.0, amp.value(top), amp.value(bottom), 470.0, 100.0)
    d = a.to_dict()["dc"]
    assert d["Q1"]["ie"] == pytest.approx(ie1, rel=1e-9)
    assert d["Q2"]["ie"] == pytest.approx(ie2, rel=1e-9)
    # Ohm's law at the collector: RC carries IC1 = β/(β+1)·IE1
    vc1 = 12.0 - 4.7e3 * ie1 * 150 / 151 if polarity == "npn" else 4.7e3 * ie1 * 150 / 151
    assert d["Q1"]["vc"] == pytest.approx(vc1, rel=1e-9)
    assert d["Q1"]["state"] == d["Q2"]["state"] == "active"


def test_mid_band_gain_follows_the_hand_formula():
    amp = _amp()
    a = analyse_cascade(amp)
    f = a.to_dict()
    ie1, ie2 = f["dc"]["Q1"]["ie"], f["dc"]["Q2"]["ie"]
    vt = thermal_voltage(25.0)  # scipy.constants through constants.thermal_voltage (CODATA kT/q)
    re1, re2 = vt / ie1, vt / ie2
    par = lambda *r: 1.0 / sum(1.0 / x for x in r)  # noqa: E731
    # the follower's input: R3‖R4‖(β2+1)(re2 + RE3‖RL); stage 1: β/(β+1)·(RC‖rin2)/(re1 + RE);
    # the follower: (RE3‖RL)/(re2 + RE3‖RL); the source divider rs/(rs + rin) (textbook small signal,
    # from memory)
    rin2 = par(15e3, 5.6e3, 101 * (re2 + par(470.0, 600.0)))
    g1 = 150 / 151 * par(4.7e3, rin2) / (re1 + 220.0)
    g2 = par(470.0, 600.0) / (re2 + par(470.0, 600.0))
    rin = par(47e3, 10e3, 151 * (re1 + 220.0))
    assert f["ac"]["rin"] == pytest.approx(rin, rel=1e-9)
    assert f["ac"]["gain"] == pytest.approx(-g1 * g2 * rin / (600.0 + rin), rel=1e-9)
    # output resistance: RE3 ‖ (re2 + (RC‖R3‖R4)/(β2+1))
    assert f["ac"]["rout"] == pytest.approx(par(470.0, re2 + par(4.7e3, 15e3, 5.6e3) / 101), rel=1e-9)


@pytest.mark.parametrize("coupling", ["capacitor", "direct"])
def test_the_worst_case_box_holds_the_nominal_point(coupling):
    # property: nominal figures lie within the worst-case range (the box contains its centre)
    if coupling == "direct":
        amp = _amp(coupling="direct", hfe1=(100, 300), hfe2=(80, 240), RE3=Part(1e3, 0.05))
    else:
        amp = _amp(hfe1=(100, 300), hfe2=(80, 240))
    a = analyse_cascade(amp, Conditions(ambient_min=25.0, ambient_max=25.0))
    figs = a.spread()["worst_case"]["figures"]
    for name in ("ie1", "ie2", "vc1", "ve2", "rin", "rout", "gain", "swing_peak"):
        nom = float(getattr(a.nominal, name))
        assert figs[name]["low"] <= nom * (1 + 1e-12) + 1e-15, name
        assert figs[name]["high"] >= nom * (1 - 1e-12) - 1e-15, name
    assert a.spread()["worst_case"]["vertices"] >= 2 ** 2


def test_targets_are_judged_on_the_worst_case_and_fail_when_out_of_reach():
    amp = _amp(hfe1=(100, 300))
    a = analyse_cascade(amp)
    gains = a.spread()["worst_case"]["figures"]["gain"]
    low_mag = min(abs(gains["low"]), abs(gains["high"]))
    # a bound just below the worst-case magnitude is met, one just above is missed
    ok = analyse_cascade(amp, targets=CascadeTargets(gain_min=0.99 * low_mag))
    bad = analyse_cascade(amp, targets=CascadeTargets(gain_min=1.01 * low_mag, ie2_max=1e-4))
    assert {c.name: c.ok for c in ok.checks}["target gain_min"] is True
    by = {c.name: c.ok for c in bad.checks}
    assert by["target gain_min"] is False and by["target ie2_max"] is False
    assert {c.name for c in bad.warnings} >= {"target gain_min", "target ie2_max"}


def test_ratings_use_the_derating_of_the_trade():
    # RE3 dissipates IE2²·RE3 (Joule's law), IE2 by the divider formula.  A part rated 1.5 times
    # that may dissipate only half its rating (common practice, no source): the check must fail.
    ie2 = _divider_point(12.0, 15e3, 5.6e3, 470.0, 100.0)
    p_re3 = ie2 ** 2 * 470.0
    amp = _amp(ratings={"RE3": 1.5 * p_re3, "C3": 6.3, "R1": 0.25})
    a = analyse_cascade(amp)
    by = {c.name: c for c in a.checks}
    assert by["RE3 power"].limit == pytest.approx(0.75 * p_re3)
    assert by["RE3 power"].value >= p_re3 * (1 - 1e-9)  # worst case at least the nominal dissipation
    assert by["RE3 power"].ok is False and by["R1 power"].ok is True
    assert by["R2 power"].ok is None  # no rating given: not checked, said so
    # C3 holds Q2's emitter voltage: 80 % of 6.3 V (common practice, no source) is 5.04 V
    assert by["C3 voltage"].limit == pytest.approx(0.8 * 6.3)
    assert by["C3 voltage"].ok is (by["C3 voltage"].value <= 5.04)
    # a transistor whose VCEO is below the supply fails its check (it can see the whole supply)
    hi = analyse_cascade(_amp(supply=60.0, R1=Part(270e3, 0.05)))
    assert {c.name: c.ok for c in hi.checks}["Q1 VCEO"] is False


def test_electrolytic_polarity_follows_the_mirror():
    # NPN: the RE/RE2 junction sits above ground, so CE's + end goes to the junction; the PNP
    # mirror puts the junction below the supply, so CE's + end goes to the supply (physics of the
    # mirror image, no source needed)
    npn = {c.name: c for c in analyse_cascade(_amp()).checks}
    pnp = {c.name: c for c in analyse_cascade(_amp(polarity="pnp")).checks}
    assert "+ end toward the RE/RE2 junction" in npn["CE polarity"].message
    assert "+ end toward the supply" in pnp["CE polarity"].message
    # C1: base 1 is above the source's 0 V in both (a positive bias in both mirrors)
    assert "+ end toward base 1" in npn["C1 polarity"].message
    assert "+ end toward base 1" in pnp["C1 polarity"].message


def test_a_cut_off_follower_is_reported():
    # R4 far below R3 puts base 2 under one VBE: Q2 cannot conduct (IE = 0 by the divider formula)
    amp = _amp(R3=Part(1e6, 0.05), R4=Part(10.0, 0.05))
    a = analyse_cascade(amp)
    by = {c.name: c for c in a.checks}
    assert a.states["Q2"] == "cut-off" and by["Q2 state"].ok is False
    assert "cut off" in by["Q2 state"].message


def test_monte_carlo_is_seeded_and_json_safe():
    amp = _amp(hfe1=(100, 300), hfe2=(80, 240), ratings={"RE3": 0.25})
    targets = CascadeTargets(gain_min=5, swing=0.5)
    a = analyse_cascade(amp, monte_carlo=300, seed=7, targets=targets)
    b = analyse_cascade(amp, monte_carlo=300, seed=7, targets=targets)
    assert a.monte_carlo == b.monte_carlo  # property: one seed, one set of builds
    mc = a.monte_carlo
    assert 0 <= mc["meets_all"] <= min(mc["meets"].values()) <= 1
    text = json.dumps(a.to_dict(), allow_nan=False)  # JSON-safe: no NaN or infinity
    assert '"two-stage"' in text
    samples = a.to_pandas("samples")
    assert len(samples) == 300 and {"ie1", "ie2", "gain"} <= set(samples.columns)
    # the table's fraction of builds that meet gain_min is the summary's (same seed, drawn again)
    active = (samples.state1 == "active") & (samples.state2 == "active")
    assert ((samples.gain.abs() >= 5) & active).mean() == pytest.approx(mc["meets"]["gain_min"])


def test_repr_and_tables():
    a = analyse_cascade(_amp(), targets=CascadeTargets(f_low=1.0))
    assert isinstance(a, CascadeAnalysis)
    r = repr(a)
    assert r.startswith("<CascadeAnalysis two-stage capacitor-coupled NPN 12 V") and "target f_low" in r
    figs = a.to_pandas("figures")
    assert {"ie1", "ie2", "gain", "f_low"} <= set(figs.index)
    assert math.isclose(figs.loc["ie1", "nominal"], float(a.nominal.ie1))
    assert list(a.to_pandas("checks").name) == [c.name for c in a.checks]
    with pytest.raises(ValueError):
        a.to_pandas("samples")


def test_a_transistor_that_saturates_inside_the_box_fails_its_state_check():
    # Q1 with hFE 40–600 and a large RC: active at the nominal hFE, saturated at the top of the
    # range.  The vertex itself is evaluated here by the engine (held to ngspice in
    # tests/reference/test_ngspice_cascade.py); the state check must see the vertex.
    from drawerfit.analysis.cascade import evaluate_cascade_dc
    from drawerfit.analysis.dc import ACTIVE, SATURATED

    from drawerfit.analysis.cascade import cascade_arguments

    # a weak divider (470k/47k) and a small emitter resistance make IE follow hFE
    amp = _amp(hfe1=(40, 600), R1=Part(470e3, 0.0), R2=Part(47e3, 0.0), RC=Part(8.2e3, 0.0), RE=Part(100.0, 0.0),
               RE2=Part(100.0, 0.0))
    kw = {k: v for k, v in cascade_arguments(amp).items() if k not in ("c1", "c2", "c3", "ce")}
    at_nominal = evaluate_cascade_dc(bypassed=True, **kw)
    kw["hfe1"] = 600.0
    at_top = evaluate_cascade_dc(bypassed=True, **kw)
    assert int(at_nominal.state1) == ACTIVE and int(at_top.state1) == SATURATED  # the case is what it says
    by = {c.name: c for c in analyse_cascade(amp).checks}
    assert by["Q1 state"].ok is False and "leaves the active region" in by["Q1 state"].message
    # Q2 has its own divider (capacitor coupling): Q1's hFE does not move it, it stays active
    assert by["Q2 state"].ok is True


_R = st.floats(10.0, 1e6)
_C = st.floats(1e-9, 1e-2)


@settings(max_examples=60, deadline=None)
@given(coupling=st.sampled_from(["capacitor", "direct"]), polarity=st.sampled_from(["npn", "pnp"]),
       bypass=st.booleans(), supply=st.floats(3.0, 60.0), load=st.one_of(st.none(), _R),
       r=st.lists(_R, min_size=8, max_size=8), c=st.lists(_C, min_size=4, max_size=4),
       h=st.lists(st.floats(10, 500), min_size=2, max_size=2))
def test_any_amplifier_gives_a_json_safe_result_and_consistent_states(coupling, polarity, bypass, supply, load, r,
                                                                      c, h):
    # property: any amplifier whatever its values (cut off, saturated, a corner that does not exist) is
    # analysed without a warning or an error, its JSON holds no NaN, and a transistor whose nominal
    # state is not active fails its state check
    parts = {"R1": Part(r[0], 0.05), "R2": Part(r[1], 0.05), "RC": Part(r[2], 0.05), "RE": Part(r[3], 0.05),
             "C1": Part(c[0], 0.2, polarized=True), "RE3": Part(r[4], 0.05), "C3": Part(c[1], 0.2, polarized=True)}
    if bypass:
        parts.update(RE2=Part(r[5], 0.05), CE=Part(c[2], 0.2, polarized=True))
    if coupling == "capacitor":
        parts.update(C2=Part(c[3], 0.1), R3=Part(r[6], 0.05), R4=Part(r[7], 0.05))
    q1, q2 = TransistorModel(polarity, h[0], 2 * h[0]), TransistorModel(polarity, h[1], 2 * h[1])
    amp = TwoStage(polarity, supply, coupling, parts, q1, q2, 600.0, load)
    a = analyse_cascade(amp, monte_carlo=50, seed=2, targets=CascadeTargets(gain_min=1.0, swing=0.1))
    json.dumps(a.to_dict(), allow_nan=False)
    by = {ch.name: ch for ch in a.checks}
    for name in ("Q1", "Q2"):
        if a.states[name] != "active":
            assert by[f"{name} state"].ok is False
    if bool(a.worst.all_active) and a.active:
        assert by["Q1 state"].ok and by["Q2 state"].ok

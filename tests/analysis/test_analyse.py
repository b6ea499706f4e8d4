"""analysis.analyse, its checks and JSON, the cautions, and the netlist writer."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest

from drawerfit.analysis import analyse
from drawerfit.analysis.core import evaluate
from drawerfit.analysis.targets import Targets, target_margins
from drawerfit.cautions import cautions_for
from drawerfit.constants import thermal_voltage
from drawerfit.report.netlist import stage_netlist
from drawerfit.stages import Conditions, Part, Stage, StageError, TransistorModel

Q = TransistorModel("npn", 100, 300, vceo=40, ic_max=0.1, pd=0.5, label="QN-SIG-A")
QP = TransistorModel("pnp", 100, 300, vceo=40, ic_max=0.1, pd=0.5, label="QP-SIG-B")


def follower(**over):
    parts = dict(R1=Part(4.7e3, 0.05, 0.25), R2=Part(5.6e3, 0.05, 0.25), RE=Part(820, 0.05, 0.25),
                 C1=Part(22e-6, 0.2, 16, True), C2=Part(220e-6, 0.2, 16, True))
    parts.update(over)
    return Stage("emitter-follower", "npn", 12.0, parts, Q, 600.0, 1e3)


def pnp_ce():
    parts = dict(R1=Part(18e3, 0.05), R2=Part(82e3, 0.05), RE=Part(270, 0.05), RE2=Part(1.2e3, 0.05),
                 RC=Part(5.6e3, 0.05), C1=Part(4.7e-6, 0.2, 25, True), C2=Part(4.7e-6, 0.2, 25, True),
                 CE=Part(220e-6, 0.2, 6.3, True))
    return Stage("common-emitter", "pnp", 15.0, parts, QP, 1e3, 22e3)


def test_json_has_exactly_the_keys_of_the_issue():
    d = analyse(follower()).to_dict()
    assert set(d) == {"dc", "ac", "swing", "power", "checks", "spread"}
    assert set(d["dc"]) == {"vb", "ve", "vc", "ie", "ic", "vce", "state"}
    assert set(d["ac"]) == {"rin", "rout", "gain", "f_low", "corners"}
    assert set(d["ac"]["corners"]) == {"C1", "C2"}
    assert set(d["swing"]) == {"peak", "limit"}
    assert set(d["power"]) == {"R1", "R2", "RE", "Q1"}
    assert all(set(c) == {"name", "ok", "value", "limit", "message"} for c in d["checks"])
    json.dumps(d, allow_nan=False)  # SI floats only, no NaN


def test_analysis_figures_by_hand():
    """The follower's nominal figures, worked by hand (Thevenin divider, IE = (β+1)·IB, VBE 0.65 V and
    VCE(sat) 0.2 V as assumed, β the geometric mean of the hFE range, re = VT/IE with VT from
    scipy.constants at 25 °C)."""
    from scipy.constants import Boltzmann, elementary_charge, zero_Celsius

    beta = math.sqrt(100 * 300)
    rth = 4.7e3 * 5.6e3 / (4.7e3 + 5.6e3)
    vth = 12 * 5.6e3 / (4.7e3 + 5.6e3)
    ie = (beta + 1) * (vth - 0.65) / (rth + (beta + 1) * 820)
    ve = ie * 820
    re = Boltzmann * (zero_Celsius + 25) / elementary_charge / ie
    re_load = 820 * 1e3 / (820 + 1e3)  # RE ∥ RL
    rin = 1 / (1 / 4.7e3 + 1 / 5.6e3 + 1 / ((beta + 1) * (re + re_load)))
    down = ie * re_load  # the emitter current falls to zero: cut-off
    up = 12 - 0.2 - ve  # VCE falls to VCE(sat)
    d = analyse(follower()).to_dict()
    assert d["dc"]["ie"] == pytest.approx(ie, rel=1e-9)
    assert d["dc"]["ve"] == pytest.approx(ve, rel=1e-9)
    assert d["ac"]["rin"] == pytest.approx(rin, rel=1e-9)
    assert d["swing"]["peak"] == pytest.approx(min(up, down), rel=1e-9)
    assert d["dc"]["state"] == "active" and d["swing"]["limit"] == "cut-off" and down < up
    # C1 alone: a high-pass of C1 with RS + the stage's input impedance, 1/(2π·R·C)
    assert d["ac"]["corners"]["C1"] == pytest.approx(1 / (2 * math.pi * 22e-6 * (600 + rin)), rel=1e-9)


def test_over_power_and_over_voltage_are_flagged():
    # Hand: RE = 47 Ω at about 0.1 A dissipates about 0.5 W, above half of 0.25 W.
    hot = follower(RE=Part(47, 0.05, 0.25))
    a = analyse(hot)
    checks = {c.name: c for c in a.checks}
    assert checks["RE power"].ok is False
    assert checks["RE power"].value > 0.125
    assert "RE" in [w.name.split()[0] for w in a.warnings]
    assert any(c.key == "hot-parts" and "RE" in c.text for c in cautions_for(a))
    # A 6.3 V electrolytic holding about 6 V: over 80 % of its rating.
    low_v = follower(C1=Part(22e-6, 0.2, 6.3, True))
    checks = {c.name: c for c in analyse(low_v).checks}
    assert checks["C1 voltage"].ok is False and checks["C1 voltage"].limit == pytest.approx(6.3 * 0.8)


def test_pnp_bypass_capacitor_polarity():
    # Hand reasoning: the PNP stage's RE2 hangs from the supply, so CE's + end goes to the supply.
    checks = {c.name: c for c in analyse(pnp_ce()).checks}
    assert "+ end toward the supply" in checks["CE polarity"].message
    assert "+ end toward the base" in checks["C1 polarity"].message
    assert "+ end toward the collector" in checks["C2 polarity"].message


def test_unknown_ratings_are_said_not_checked():
    s = follower(R2=Part(5.6e3, 0.05))
    checks = {c.name: c for c in analyse(s).checks}
    assert checks["R2 power"].ok is None and "not checked" in checks["R2 power"].message


def test_targets_and_monte_carlo_fractions():
    s = follower()
    nominal_swing = float(evaluate(**s.core_arguments()).swing_peak)
    t = Targets(swing=nominal_swing, f_low=20.0)
    a = analyse(s, monte_carlo=5000, seed=11, targets=t)
    checks = {c.name: c for c in a.checks}
    assert checks["target swing"].ok is False  # worst case is below nominal
    assert checks["target f_low"].ok is True
    assert 0.2 < a.monte_carlo["meets"]["swing"] < 0.8  # a target at the nominal value splits the builds
    assert a.monte_carlo == analyse(s, monte_carlo=5000, seed=11, targets=t).monte_carlo  # seeded


def test_monte_carlo_fraction_against_the_uniform_distribution():
    """Only RE varies (±5 %, uniform within its tolerance as documented); IE falls as RE grows, so
    the share of builds with IE at least its value at RE·1.02 is P(RE ≤ 1.02·RE0) = (1.02 − 0.95)/0.10
    = 0.7, worked by hand from the uniform distribution; 20,000 builds put 4 standard deviations of
    the binomial count at ±0.013."""
    fixed = TransistorModel("npn", 150, 150, vceo=40, ic_max=0.1, pd=0.5)
    parts = dict(R1=Part(4.7e3, 0.0, 0.25), R2=Part(5.6e3, 0.0, 0.25), RE=Part(820, 0.05, 0.25),
                 C1=Part(22e-6, 0.0, 16, True), C2=Part(220e-6, 0.0, 16, True))
    s = Stage("emitter-follower", "npn", 12.0, parts, fixed, 600.0, 1e3)
    rth, vth = 4.7e3 * 5.6e3 / 10.3e3, 12 * 5.6e3 / 10.3e3
    ie_at = 151 * (vth - 0.65) / (rth + 151 * 820 * 1.02)  # IE by hand at RE = 1.02·RE0
    a = analyse(s, Conditions(ambient_min=25, ambient_max=25), monte_carlo=20_000, seed=3,
                targets=Targets(ie_min=ie_at))
    assert a.monte_carlo["meets"]["ie_min"] == pytest.approx(0.7, abs=0.013)
    assert a.monte_carlo["active"] == 1.0


def test_target_margins_sign():
    low = {"ie": np.array([1e-3, 2e-3]), "f_low": np.array([10.0, 30.0])}
    m = target_margins(Targets(ie_min=1.5e-3, f_low=20.0), low, low)
    assert list(m["ie_min"] >= 0) == [False, True]
    assert list(m["f_low"] >= 0) == [True, False]
    assert m["ie_min"][0] == pytest.approx(-1 / 3)


def test_cautions_where_they_apply():
    a = analyse(follower())
    keys = [c.key for c in cautions_for(a)]
    assert keys == ["electrolytic", "general"]
    film = {k: Part(v.value, v.tolerance, v.rating, False) for k, v in follower().parts.items()}
    b = analyse(Stage("emitter-follower", "npn", 12.0, film, Q, 600.0, 1e3))
    assert [c.key for c in cautions_for(b)] == ["general"]
    assert [c.key for c in cautions_for(b, mains=True)] == ["high-voltage", "general"]
    # Above about 50 V (common practice): the high-voltage caution.
    hv = Stage("emitter-follower", "npn", 60.0, film, TransistorModel("npn", 100, 300, vceo=100), 600.0, 10e3)
    assert "high-voltage" in [c.key for c in cautions_for(analyse(hv))]


def test_stage_validation():
    with pytest.raises(StageError, match="needs RE"):
        Stage("emitter-follower", "npn", 12, {k: Part(1e3) for k in ("R1", "R2", "C1", "C2")}, Q)
    with pytest.raises(StageError, match="is NPN"):
        Stage("emitter-follower", "pnp", 12, follower().parts, Q)
    with pytest.raises(StageError, match="no RE2"):
        Stage("common-emitter", "npn", 12, {**{k: Part(1e3) for k in ("R1", "R2", "RE", "RC", "C1", "C2")},
                                              "CE": Part(1e-4)}, Q)
    assert Q.hfe == pytest.approx(math.sqrt(100 * 300))  # documented: geometric mean


def test_netlist_tunes_is_to_the_tool_vbe():
    s = pnp_ce()
    deck = stage_netlist(s)
    f = evaluate(**s.core_arguments())
    model = [ln for ln in deck.splitlines() if ln.startswith(".model")][0]
    assert " PNP " in model
    i_sat = float(model.split("IS=")[1].split()[0])
    # Diode law: IC = IS·(exp(VBE/VT) − 1) at 25 °C with VT from scipy.constants.
    ic = i_sat * math.expm1(float(f.vbe) / thermal_voltage(25.0))
    assert ic == pytest.approx(float(f.ic), rel=1e-6)
    # PNP: RE2 and CE return to the supply; CE's + end (first node) is the supply side.  Values in
    # SPICE's own scale suffixes (k, u: SPICE's convention, m being milli)
    assert "RE2 n vcc 1.2k" in deck and "RC 0 c 5.6k" in deck
    assert "CE vcc n 220u  ; polarized: + end on the first node" in deck
    assert "C1 b in " in deck and "C2 c out " in deck
    assert deck.rstrip().endswith(".end")
    no_load = Stage("emitter-follower", "npn", 12.0, follower().parts, Q)
    assert "RLEAK out 0" in stage_netlist(no_load)


def test_conditions_change_the_worst_case():
    s = follower()
    narrow = analyse(s, Conditions(ambient_min=25, ambient_max=25))
    wide = analyse(s, Conditions(ambient_min=-20, ambient_max=70))
    assert float(wide.worst.high["ie"]) > float(narrow.worst.high["ie"])


@pytest.mark.parametrize("make", [follower, pnp_ce,
                                  lambda: follower(RE=Part(47, 0.05, 0.25)),
                                  lambda: follower(C1=Part(22e-6, 0.2, 6.3, True))])
def test_vectorised_rating_margins_agree_with_the_checks(make):
    from drawerfit.analysis.targets import rating_margins

    s = make()
    a = analyse(s)
    t = s.transistor
    m = rating_margins(a.worst.low, a.worst.high, conditions=a.conditions, supply=s.supply,
                       power_ratings={r: p.rating for r, p in s.parts.items()
                                      if not r.startswith("C") and p.rating is not None},
                       voltage_ratings={r: p.rating for r, p in s.parts.items()
                                        if r.startswith("C") and p.rating is not None},
                       polarized={r: p.polarized for r, p in s.parts.items() if r.startswith("C")},
                       pd=t.pd, vceo=t.vceo, ic_max=t.ic_max)
    checks = {c.name: c for c in a.checks}
    assert m, "some ratings to compare"
    for name, margin in m.items():
        if name in checks:
            assert (float(margin) >= 0) == checks[name].ok, name

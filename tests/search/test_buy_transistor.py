"""What transistor to buy when the stock transistors cannot meet a spec.

The requirement must (1) make a design: checked independently by ``analysis.analyse`` (held against
ngspice in tests/reference) on the design it comes with, with a transistor model of exactly the
required figures; (2) ask no more than needed: the next lower hFE grade, as a stock line with the same
ratings, leaves the drawer without a design; (3) carry ratings from the hand rules below.
"""

from __future__ import annotations

from dataclasses import replace

from drawerfit.analysis import analyse
from drawerfit.analysis.targets import Targets
from drawerfit.parts import Stock
from drawerfit.search.buy_transistor import HFE_GRADES, IC_MAX_STEPS, PD_STEPS, VCEO_STEPS
from drawerfit.search.design import design
from drawerfit.search.problem import DesignProblem, DesignTargets
from drawerfit.stages import Conditions, TransistorModel

from .test_design_reasons import _drawer


def _meets_with(need, problem):
    model = TransistorModel(problem.polarity, need.hfe_min, need.hfe_max, vbe=0.65, vce_sat=need.vce_sat,
                            vceo=need.vceo, ic_max=need.ic_max, pd=need.pd)
    stage = replace(need.design.stage(problem), transistor=model)
    a = analyse(stage, problem.conditions or Conditions(), targets=Targets(**problem.targets.given()))
    return [c.name for c in a.checks if c.ok is False and c.kind != "advice"]  # advice is not a requirement


def test_input_resistance_needs_a_higher_hfe_grade():
    # the drawer's only transistor has hFE 30..90: (30 + 1)·(re + RE‖RL) stays below 25 kΩ for this
    # follower (test_design_reasons), so an input resistance of 30 kΩ needs more gain
    stock = _drawer({"hfe_min": 30, "hfe_max": 90})
    p = DesignProblem("emitter-follower", "npn", 12.0,
                      DesignTargets(ie_min=4.5e-3, ie_max=5.5e-3, f_low=20.0, swing=2.0, rin_min=30e3), load=1e3)
    r = design(p, stock)
    assert not r.feasible
    need = r.buy_transistor
    assert need is not None and need.checked and need.passives == 0
    assert _meets_with(need, p) == []
    # hand rules (buy_transistor.py): VCEO the least step at or above the 12 V supply; IC max the least
    # step at or above 2 × ie_max = 11 mA; power the least step at or above 12 V × 5.5 mA / 50 %
    assert need.vceo == min(v for v in VCEO_STEPS if v >= 12.0)
    assert need.ic_max == min(v for v in IC_MAX_STEPS if v >= 2 * 5.5e-3)
    assert need.pd == min(v for v in PD_STEPS if v >= 12.0 * 5.5e-3 / 0.5)
    # no lower grade will do: each as a stock line with the same ratings leaves the drawer without a design
    grade = HFE_GRADES.index((need.hfe_min, need.hfe_max))
    tr = stock.lines[-1]
    for lo, hi in HFE_GRADES[:grade]:
        lower = replace(tr, hfe_min=lo, hfe_max=hi, vceo=need.vceo, ic_max=need.ic_max, pd=need.pd)
        assert not design(p, Stock(lines=stock.lines[:-1] + (lower,)), suggest=False).feasible, (lo, hi)
    # and the grade itself, as a stock line, gives a design through the ordinary search
    line = replace(tr, hfe_min=need.hfe_min, hfe_max=need.hfe_max, vceo=need.vceo, ic_max=need.ic_max, pd=need.pd)
    assert design(p, Stock(lines=stock.lines[:-1] + (line,)), suggest=False).feasible


def test_collector_current_needs_a_larger_transistor():
    # 5 V follower for 8 Ω at 200 mA ±10 %: the drawer's transistor is rated 100 mA (test_design_reasons);
    # the check keeps 2·IC within IC max, so IC max >= 2 × 220 mA, and power >= 5 V × 220 mA / 50 % = 2.2 W
    stock = _drawer({"ic_max": 0.1, "pd": 5.0})
    p = DesignProblem("emitter-follower", "npn", 5.0, DesignTargets(ie_min=0.18, ie_max=0.22, f_low=20.0), load=8.0)
    r = design(p, stock)
    need = r.buy_transistor
    assert need is not None
    assert need.ic_max == 0.5  # the least of IC_MAX_STEPS at or above 0.44 A
    assert need.pd == 5.0  # the least of PD_STEPS at or above 2.2 W
    assert _meets_with(need, p) == []
    d = r.to_dict()
    assert d["buy_transistor"]["ic_max_min"] == 0.5 and "NPN" in d["buy_transistor"]["text"]


def test_no_transistor_in_stock_gets_one_to_buy():
    stock = _drawer()
    stock = Stock(lines=tuple(ln for ln in stock.lines if ln.kind != "transistor"))
    p = DesignProblem("emitter-follower", "npn", 12.0, DesignTargets(ie_min=0.9e-3, ie_max=1.1e-3, f_low=20.0),
                      load=10e3)
    r = design(p, stock)
    assert not r.feasible and r.buy_transistor is not None
    assert r.buy_transistor.hfe_min == HFE_GRADES[0][0]  # the lowest grade suffices for a plain follower
    assert _meets_with(r.buy_transistor, p) == []


def test_a_ceiling_of_the_stage_itself_asks_for_no_transistor():
    # a 4.5 V peak swing into 1 kΩ from 12 V at IE <= 5.5 mA is beyond any transistor (test_design_reasons)
    stock = _drawer()
    p = DesignProblem("emitter-follower", "npn", 12.0,
                      DesignTargets(ie_min=4.5e-3, ie_max=5.5e-3, f_low=20.0, swing=4.5), load=1e3)
    r = design(p, stock)
    assert not r.feasible and r.buy_transistor is None


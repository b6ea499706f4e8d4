"""When nothing in the drawer meets a spec, the answer names the cause the physics sets.

One crafted spec per cause; the expected quantity of each is computed here by hand from the
stage's formulas (written out beside each check), not taken from the code under test.  The
transistors are the test drawer's (``test_design_search.transistor``: hFE 100..300, VCE(sat) 0.2 V,
VCEO 40 V, IC max 0.2 A, Pd 0.5 W) unless a case changes a rating; derating 50 % and the 2·IC rule
are the tool's documented checks (common practice, no source).
"""

from __future__ import annotations

import math
from dataclasses import replace

import pytest

from drawerfit.constants import thermal_voltage
from drawerfit.parts import Stock
from drawerfit.search.design import design
from drawerfit.search.problem import DesignProblem, DesignTargets

from ..conftest import make_line
from .test_design_search import transistor

E12 = (1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2)  # IEC 60063


def _drawer(tr_changes: dict | None = None, caps=(10e-6, 100e-6, 1000e-6), cap_volts: float = 63.0) -> Stock:
    lines = [make_line(i, "resistor", m * 10 ** e, qty=20, tol=0.01, rating=1.0)
             for i, (m, e) in enumerate((m, e) for e in (0, 1, 2, 3, 4) for m in E12)]
    lines += [make_line(len(lines) + k, "capacitor", c, qty=20, tol=0.2, polarized=True, rating=cap_volts)
              for k, c in enumerate(caps)]
    tr = transistor(len(lines))
    if tr_changes:
        tr = replace(tr, **tr_changes)
    lines.append(tr)
    return Stock(lines=tuple(lines))


def _limit(result, constraint):
    found = [lm for lm in result.limits if lm.constraint == constraint]
    assert found, (result.reason, result.limits)
    return found[0]


def test_transistor_current_rating():
    # 5 V follower for an 8 Ω load at 200 mA ±10 %: IE >= 180 mA, so IC >= 180 mA·100/101 = 178.2 mA,
    # and the check keeps 2·IC <= IC max: a 100 mA transistor can carry 50 mA by that rule
    stock = _drawer({"ic_max": 0.1, "pd": 5.0})
    p = DesignProblem("emitter-follower", "npn", 5.0, DesignTargets(ie_min=0.18, ie_max=0.22, f_low=20.0), load=8.0)
    r = design(p, stock)
    assert not r.feasible
    lm = _limit(r, "Q1 IC max")
    assert lm.asked == pytest.approx(0.18 * 100 / 101, rel=1e-9)
    assert lm.reachable == pytest.approx(0.05, rel=1e-9)
    assert r.reason.startswith("no choice of passives can meet it with the transistors in stock")
    assert "IC max 100 mA" in r.reason
    assert r.buy == [] and not r.buy_proven
    # no passives help; what to buy is a transistor rated for twice the collector current
    # (test_buy_transistor.py checks it in full)
    assert r.buy_transistor is not None and r.buy_transistor.ic_max >= 2 * 0.22


def test_transistor_power_rating():
    # 24 V follower swinging 8 V at IE 50 mA ±10 %: VCE >= VCE(sat) + 8 V = 8.2 V, IC >= 45 mA·100/101,
    # so Q1 dissipates >= 8.2·0.04455 = 0.365 W, above 50 % of its 0.5 W
    stock = _drawer()
    p = DesignProblem("emitter-follower", "npn", 24.0,
                      DesignTargets(ie_min=0.045, ie_max=0.055, f_low=20.0, swing=8.0), load=1e3)
    r = design(p, stock)
    assert not r.feasible
    lm = _limit(r, "Q1 power")
    assert lm.asked == pytest.approx(8.2 * 0.045 * 100 / 101, rel=1e-9)
    assert lm.reachable == pytest.approx(0.25, rel=1e-9)
    assert "Q1" not in r.reason or "dissipate" in r.reason


def test_follower_input_resistance_ceiling():
    # 12 V follower, 1 kΩ load, 5 mA ±10 %, 2 V swing: RE <= RL·(12 − 0.2 − 4)/2 = 3.9 kΩ, so
    # RE‖RL <= 3.9k‖1k = 795.9 Ω; re <= VT(50 °C)/4.5 mA; the base shows at most
    # (100 + 1)·(re + 795.9 Ω) ≈ 81 kΩ: 200 kΩ cannot be had with any passives
    stock = _drawer()
    p = DesignProblem("emitter-follower", "npn", 12.0,
                      DesignTargets(ie_min=4.5e-3, ie_max=5.5e-3, f_low=20.0, swing=2.0, rin_min=200e3), load=1e3)
    r = design(p, stock)
    assert not r.feasible
    lm = _limit(r, "rin_min")
    h = 1e3 * (12 - 0.2 - 4.0) / 2.0
    z = 101 * (float(thermal_voltage(50.0)) / 4.5e-3 + h * 1e3 / (h + 1e3))
    assert lm.reachable == pytest.approx(z, rel=1e-9)
    assert "input resistance" in r.reason


def test_follower_swing_ceiling():
    # 4.5 V peak into 1 kΩ from 12 V at IE <= 5.5 mA: with K = 5.5 mA·1 kΩ = 5.5 V and room
    # 12 − 0.2 = 11.8 V, up = 11.8 − VE and down = VE/(1 + VE/K) meet at
    # VE = ((11.8 − 11) + √(0.8² + 4·11.8·5.5))/2 = 8.466 V: the ceiling is 11.8 − 8.466 = 3.33 V
    stock = _drawer()
    p = DesignProblem("emitter-follower", "npn", 12.0,
                      DesignTargets(ie_min=4.5e-3, ie_max=5.5e-3, f_low=20.0, swing=4.5), load=1e3)
    r = design(p, stock)
    assert not r.feasible
    lm = _limit(r, "swing")
    x = ((11.8 - 11.0) + math.sqrt(0.8 ** 2 + 4 * 11.8 * 5.5)) / 2
    assert lm.reachable == pytest.approx(11.8 - x, rel=1e-9)
    assert r.reason.startswith("no choice of passives can meet it: the output can swing at most")
    assert "swing" in r.buy_note or "passives" in r.buy_note


def test_common_emitter_swing_ceiling():
    # common emitter, 12 V, 1 kΩ load, IC < 1.1 mA: the upward swing IC·(RC‖RL) < 1.1 mA·1 kΩ = 1.1 V
    stock = _drawer()
    p = DesignProblem("common-emitter", "npn", 12.0, DesignTargets(ie_min=0.9e-3, ie_max=1.1e-3, f_low=20.0,
                                                                   swing=1.5), load=1e3, max_parts=1)
    r = design(p, stock)
    assert not r.feasible
    lm = _limit(r, "swing")
    assert lm.reachable == pytest.approx(min(11.8 / 2, 1.1e-3 * 1e3), rel=1e-9)


def test_corner_with_the_largest_capacitors_in_stock():
    # only 100 nF capacitors: C2 in series with the 10 kΩ load alone has its own corner at
    # 1/(2π·10 kΩ·80 nF) ≈ 199 Hz at the low end of its tolerance, so no resistors bring the stage's
    # corner to 20 Hz; the answer names the largest capacitors and the corner they leave
    stock = _drawer(caps=(100e-9,))
    p = DesignProblem("emitter-follower", "npn", 12.0, DesignTargets(ie_min=0.9e-3, ie_max=1.1e-3, f_low=20.0),
                      load=10e3, source_resistance=600.0, max_parts=1)
    r = design(p, stock, suggest=False)
    assert not r.feasible
    assert "even the largest capacitors in stock" in r.reason
    assert r.nearest["corner_with_largest"] >= 1 / (2 * math.pi * 10e3 * 80e-9)

"""The judgements made on an analysed two-stage amplifier: states, targets, ratings, polarity, advice.

The rules are the single stage's (analysis/checks.py): resistor and transistor power against
their derating, each transistor against VCEO (the full supply) and IC max (twice the highest
quiescent IC, class A at full swing), each capacitor's largest DC voltage against its margin and
an electrolytic's voltage keeping one sign over the whole tolerance box.
"""

from __future__ import annotations

import numpy as np

from ..constants import POWER_RESISTOR, STIFF_DIVIDER_FACTOR
from ..values import format_si
from .cascade import CAP_FIGURE, POWER_FIGURE
from .cascade_targets import CASCADE_TARGET_RULES, CASCADE_TARGET_UNITS, cascade_target_margins
from .dc import CUTOFF, SATURATED
from .checks import ic_max_check, polarity_check, voltage_check
from .result import Check

__all__ = ["cascade_checks", "cascade_hot_parts", "CAPACITOR_ENDS"]

# (stage-side end, other end) of each capacitor, in words; the sign conventions of analysis/cascade.py
CAPACITOR_ENDS = {"C1": ("base 1", "the source"), "C2": ("collector 1", "base 2"),
                  "C3": ("Q2's emitter", "the load"), "CE": ("the RE/RE2 junction", None)}


def _leaves(index: int, circuit, worst) -> bool:
    """True when the box's ends show transistor ``index`` out of the active region somewhere: its
    lowest IE is zero (cut off) or its lowest VCE reaches VCE(sat) (saturated)."""
    t = circuit.q1 if index == 1 else circuit.q2
    return float(worst.low[f"ie{index}"]) <= 0 or float(worst.low[f"vce{index}"]) <= t.vce_sat + 1e-9


def _state_checks(circuit, nominal, worst) -> list[Check]:
    """Each transistor's state at nominal values and across the tolerance box."""
    leaves = {1: _leaves(1, circuit, worst), 2: _leaves(2, circuit, worst)}
    # the box has a vertex out of the active region that neither transistor's own ends show
    unknown = not bool(worst.all_active) and not any(leaves.values())
    out = []
    for index in (1, 2):
        name = f"Q{index}"
        t = circuit.q1 if index == 1 else circuit.q2
        state = int(getattr(nominal, f"state{index}"))
        vce = float(getattr(nominal, f"vce{index}"))
        if state == CUTOFF:
            ok, msg = False, f"{name} is cut off: its base sits below the turn-on voltage; no signal passes"
        elif state == SATURATED:
            ok, msg = False, (f"{name} is saturated (VCE {format_si(vce, 'V')}): the amplifier does not pass "
                              "the signal")
        elif leaves[index]:
            ok, msg = False, f"{name} leaves the active region somewhere in the tolerance, hFE or temperature range"
        elif unknown:
            ok, msg = False, "Q1 or Q2 leaves the active region somewhere in the tolerance, hFE or temperature range"
        else:
            ok, msg = True, f"{name} is in the active region at nominal values and across the tolerance box"
        out.append(Check(f"{name} state", ok, vce, t.vce_sat, msg, "V", "state"))
    return out


def _target_checks(targets, worst) -> list[Check]:
    out = []
    margins = cascade_target_margins(targets, worst.low, worst.high)
    lo_g, hi_g = abs(float(worst.low["gain"])), abs(float(worst.high["gain"]))
    crosses = np.sign(float(worst.low["gain"])) != np.sign(float(worst.high["gain"]))
    for name, bound in targets.given().items():
        fig, side = CASCADE_TARGET_RULES[name]
        unit = CASCADE_TARGET_UNITS[name]
        if fig == "gain_abs":
            value = (0.0 if crosses else min(lo_g, hi_g)) if side > 0 else max(lo_g, hi_g)
        else:
            value = float(worst.low[fig] if side > 0 else worst.high[fig])
        m = float(margins[name])
        word = "at least" if side > 0 else "at most"
        shown = "no value (not both transistors active throughout)" if not np.isfinite(value) else (
            f"{value:.4g}" if unit == "" else format_si(value, unit))
        goal = f"{bound:.4g}" if unit == "" else format_si(bound, unit)
        ok = m >= 0
        msg = (f"worst case {shown}, target {word} {goal}"
               + ("" if ok or not np.isfinite(m) else f" (missed by {abs(m) * 100:.3g} %)"))
        out.append(Check(f"target {name}", ok, value, bound, msg, unit, "target"))
    return out


def _transistor_ratings(name: str, index: int, circuit, conditions, worst) -> list[Check]:
    t = circuit.q1 if index == 1 else circuit.q2
    out = []
    pq = float(worst.high[f"p_q{index}"])
    if t.pd is None:
        out.append(Check(f"{name} power", None, pq, None,
                         f"dissipates up to {format_si(pq, 'W')}; no PD rating given, not checked", "W"))
    else:
        limit = t.pd * conditions.transistor_derating
        out.append(Check(f"{name} power", pq <= limit, pq, limit,
                         f"up to {format_si(pq, 'W')} against {format_si(limit, 'W')} "
                         f"({conditions.transistor_derating:.0%} of PD {format_si(t.pd, 'W')})", "W"))
    # cut off on a signal peak (or at switch-on) either transistor can see the whole supply
    if t.vceo is None:
        out.append(Check(f"{name} VCEO", None, circuit.supply, None,
                         f"{name} may see the full supply; no VCEO given, not checked", "V"))
    else:
        out.append(Check(f"{name} VCEO", circuit.supply <= t.vceo, circuit.supply, t.vceo,
                         f"{name} may see the full supply {format_si(circuit.supply, 'V')}; VCEO "
                         f"{format_si(t.vceo, 'V')}", "V"))
    # class A: at full swing the collector current peaks at up to twice its quiescent value
    ic_peak = 2.0 * float(worst.high[f"ic{index}"])
    out.append(ic_max_check(name, ic_peak, t.ic_max))
    return out


def _capacitor_checks(circuit, conditions, nominal, worst) -> list[Check]:
    out = []
    rail = "ground" if circuit.polarity == "npn" else "the supply"
    for role, attr in CAP_FIGURE.items():
        if role not in circuit.parts or (role == "CE" and not circuit.bypassed):
            continue
        part = circuit.parts[role]
        lo, hi = float(worst.low[attr]), float(worst.high[attr])
        out.append(voltage_check(role, part, lo, hi, conditions))
        if part.polarized:
            near, far = CAPACITOR_ENDS[role]
            far = far or rail
            out.append(polarity_check(role, lo, hi, float(getattr(nominal, attr)), near, far))
    return out


def _stiffness(name: str, upper: str, lower: str, emitter: float, hfe_min: float, circuit) -> Check:
    a, b = circuit.value(upper), circuit.value(lower)
    rth = a * b / (a + b)
    stiff = hfe_min * emitter / STIFF_DIVIDER_FACTOR
    return Check(f"{name} divider stiffness", rth <= stiff, rth, stiff,
                 f"{upper}∥{lower} {format_si(rth)} against hFE(min)·RE/{STIFF_DIVIDER_FACTOR:g} = "
                 f"{format_si(stiff)} (common practice); "
                 + ("stiff: IE depends little on hFE" if rth <= stiff else
                    "not stiff: IE follows hFE (figures above include it)"), "ohm", "advice")


def cascade_checks(circuit, conditions, nominal, worst, targets) -> list[Check]:
    """All checks of a ``TwoStage``, most serious first: states, targets, ratings, polarity, advice.

    ``nominal`` is its ``CascadeFigures`` (0-d), ``worst`` its ``cascade_worst_case``;
    ``targets`` a ``CascadeTargets`` or None.
    """
    out = _state_checks(circuit, nominal, worst)
    if targets is not None and targets.given():
        out += _target_checks(targets, worst)
    for role, attr in POWER_FIGURE.items():
        if role not in circuit.parts:
            continue
        p = float(worst.high[attr])
        rating = circuit.parts[role].rating
        if rating is None:
            out.append(Check(f"{role} power", None, p, None,
                             f"dissipates up to {format_si(p, 'W')}; no rating given, not checked", "W"))
            continue
        limit = rating * conditions.resistor_derating
        out.append(Check(f"{role} power", p <= limit, p, limit,
                         f"up to {format_si(p, 'W')} against {format_si(limit, 'W')} "
                         f"({conditions.resistor_derating:.0%} of its {format_si(rating, 'W')} rating)", "W"))
    out += _transistor_ratings("Q1", 1, circuit, conditions, worst)
    out += _transistor_ratings("Q2", 2, circuit, conditions, worst)
    out += _capacitor_checks(circuit, conditions, nominal, worst)
    out.append(_stiffness("Q1", "R1", "R2", circuit.value("RE") + circuit.value("RE2"), circuit.q1.hfe_min, circuit))
    if "R3" in circuit.parts:
        out.append(_stiffness("Q2", "R3", "R4", circuit.value("RE3"), circuit.q2.hfe_min, circuit))
    return out


def cascade_hot_parts(circuit, worst, fraction: float) -> tuple[str, ...]:
    """Parts whose worst-case dissipation reaches ``fraction`` of their rating (cautions.hot_parts'
    rule: a resistor without a rating from 0.25 W on, a transistor without PD from 0.5 W)."""
    names = []
    for role, attr in POWER_FIGURE.items():
        part = circuit.parts.get(role) if role.startswith("R") else None
        if part is None:
            continue
        rating = part.rating if part.rating is not None else POWER_RESISTOR / fraction
        if float(worst.high[attr]) >= fraction * rating:
            names.append(role)
    for name, t, attr in (("Q1", circuit.q1, "p_q1"), ("Q2", circuit.q2, "p_q2")):
        pq = float(worst.high[attr])
        if (t.pd is not None and pq >= fraction * t.pd) or (t.pd is None and pq >= 0.5):
            names.append(name)
    return tuple(names)

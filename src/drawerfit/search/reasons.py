"""Why no choice of passives can meet a spec: ceilings that follow from the physics of the stage.

When the drawer has no design, the nearest design says by how much each constraint is missed, but
not why.  These are the quantities behind the usual causes, each a necessary condition of the
stage model that holds for every choice of resistors and capacitors, so when one fails, no
passives can help:

* the transistor's current: every design keeps IE >= ie_min at every vertex, so IC >= α·ie_min
  with α = hFE_min/(hFE_min + 1), and the rating check keeps 2·IC within IC max;
* the transistor's power: VCE >= VCE(sat) + swing wherever the swing must fit (the follower's
  upward room and the common emitter's headroom), so the transistor dissipates at least
  (VCE(sat) + swing)·α·ie_min, within the derated power rating;
* the input resistance: below the base impedance (hFE_min + 1)·(re + X), with re <= VT/ie_min at
  the hottest ambient and X = RE‖RL < RL for the follower (below RE_max‖RL when a swing sets
  RE_max = RL·(VCC − VCE(sat) − 2·swing)/swing) and X = RE < RL/gain_min for a common emitter
  with a gain floor (|gain| < (RC‖RL)/RE);
* the swing: a follower at IE <= ie_max with VE = IE·RE swings at most
  min(VCC − VCE(sat) − VE, VE/(1 + VE/(ie_max·RL))) (down needs IE·(RE‖RL), and RE >= VE/ie_max),
  whose maximum over VE is the ceiling; a common emitter at most min((VCC − VCE(sat))/2,
  ie_max·RL) (up is IC·(RC‖RL) < ie_max·RL, and up + down <= VCC − VCE(sat));
* the corner: with the largest capacitors in stock (``corner_with_largest``).

docs/method.md, "Infeasible specs", has the derivations.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

__all__ = ["Limit", "hard_limits", "limits_text", "corner_with_largest"]


@dataclass(frozen=True)
class Limit:
    """One ceiling the spec asks beyond: which constraint, whose (a transistor's label or "" for the
    stage itself), the quantity in words, and the numbers (what can be reached, what is asked)."""

    constraint: str
    transistor: str
    text: str
    reachable: float
    asked: float


def _fmt(x: float, unit: str) -> str:
    from ..values import format_si

    return format_si(x, unit)


def hard_limits(problem, transistors) -> list[Limit]:
    """The ceilings of ``problem`` that no passives can lift, stage-wide and per transistor line."""
    from ..constants import thermal_voltage
    from .runner import transistor_model

    out: list[Limit] = []
    t, c = problem.targets, problem.conditions
    vcc, rl = problem.supply, problem.rl
    circuit = problem.circuit
    s = t.swing or 0.0
    sats = [transistor_model(ln).vce_sat for ln in transistors] or [0.0]
    vsat = min(sats)
    if s > 0:
        ceiling = circuit.swing_ceiling(vcc - vsat, t.ie_max, rl)
        if s > ceiling * (1 + 1e-9):
            where = f" into {_fmt(rl, 'Ω')}" if math.isfinite(rl) else ""
            out.append(Limit("swing", "", f"the output can swing at most {_fmt(ceiling, 'V')} peak{where} from "
                                          f"{_fmt(vcc, 'V')} at IE up to {_fmt(t.ie_max, 'A')} "
                                          f"({circuit.SHORT_NAME}); {_fmt(s, 'V')} "
                                          "is asked", ceiling, s))
    vt = float(thermal_voltage(max(c.ambient_min, c.ambient_max)))
    for ln in transistors:
        m = transistor_model(ln)
        name = m.label or f"row {ln.source.row}"
        alpha = m.hfe_min / (m.hfe_min + 1.0)
        ic = alpha * t.ie_min
        if m.ic_max is not None and 2.0 * ic > m.ic_max * (1 + 1e-12):
            out.append(Limit("Q1 IC max", name, f"{name} is rated IC max {_fmt(m.ic_max, 'A')}; at IE "
                                                f"{_fmt(t.ie_min, 'A')} its collector carries "
                                                f"{_fmt(ic, 'A')}, and the check keeps twice that within "
                                                "the rating", m.ic_max / 2.0, ic))
        if m.pd is not None:
            p = (m.vce_sat + s) * ic
            allowed = c.transistor_derating * m.pd
            if p > allowed * (1 + 1e-12):
                out.append(Limit("Q1 power", name, f"{name} may dissipate {_fmt(allowed, 'W')} "
                                                   f"({c.transistor_derating:.0%} of {_fmt(m.pd, 'W')}); "
                                                   f"at IE {_fmt(t.ie_min, 'A')} with VCE at least "
                                                   f"{_fmt(m.vce_sat + s, 'V')} it dissipates "
                                                   f"{_fmt(p, 'W')} or more", allowed, p))
        if t.rin_min is not None:
            z = circuit.base_ceiling(problem, m, vt)
            if z is not None and t.rin_min >= z:
                out.append(Limit("rin_min", name, f"with {name} (hFE at least {m.hfe_min:g}) the input "
                                                  f"resistance stays below (hFE_min + 1)·(re + "
                                                  f"{circuit.BASE_LOAD_WORDS}) <= {_fmt(z, 'Ω')}; "
                                                  f"{_fmt(t.rin_min, 'Ω')} is asked", z, t.rin_min))
    return out


def limits_text(limits: list[Limit], n_transistors: int) -> str | None:
    """The cause in words when a ceiling holds for the stage, or for every transistor line tried."""
    stage = [lm for lm in limits if not lm.transistor]
    if stage:
        return "no choice of passives can meet it: " + "; ".join(lm.text for lm in stage)
    by_tr: dict[str, list[Limit]] = {}
    for lm in limits:
        by_tr.setdefault(lm.transistor, []).append(lm)
    if n_transistors and len(by_tr) == n_transistors:
        return ("no choice of passives can meet it with the transistors in stock: "
                + "; ".join(lm.text for lms in by_tr.values() for lm in lms))
    return None


def corner_with_largest(problem, choice, lines) -> tuple[float, dict] | None:
    """The worst-case corner (Hz) of the design's resistors with the largest capacitor in stock whose
    rating suits each role's node, and those capacitors: what the drawer can do for the corner."""
    from ..analysis import core
    from .judge import SearchContext, cap_margin, stacked_dc

    ctx = SearchContext(problem, choice.model)
    roles = choice.roles
    v = {r: np.array([roles[r].equivalent.value]) for r in ctx.res_roles}
    tol = {r: np.array([roles[r].tolerance]) for r in ctx.res_roles}
    dcs = stacked_dc(ctx, v, tol)
    caps = [ln for ln in lines if ln.kind == "capacitor" and ln.value]
    if not caps:
        return None
    nodes = {"C1": dcs.v_c1, "C2": dcs.v_c2, "CE": dcs.v_ce}
    chosen, values = {}, {}
    for r in ctx.cap_roles:
        x = nodes[r]
        lo_v, hi_v = float(np.min(x)), float(np.max(x))
        ok = [ln for ln in caps if cap_margin(lo_v, hi_v, ln.voltage or 0.0, ln.polarized,
                                              problem.conditions.cap_voltage_margin) >= 0]
        if not ok:
            return None
        best = max(ok, key=lambda ln: ln.value * (1 - (ln.tolerance or 0.0)))
        chosen[r] = best
        values[r] = best.value * (1 - (best.tolerance or 0.0))
    f = core.low_corner(dcs, c1=values["C1"], c2=values["C2"], ce=values.get("CE", 0.0)).f_low
    worst = float(np.max(np.where(np.isnan(f), np.inf, f)))
    return worst, chosen

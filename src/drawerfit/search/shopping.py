"""When the drawer cannot build the stage: the nearest design, what it misses by, and what to buy.

Nearest design: the best design of a relaxed search (first only the IE window, the corner and the
ratings kept; then also the IE window widened to ±50 % and the corner target raised tenfold),
judged against the full spec: the constraints it misses and by how much are the reason given.

Shopping list: the drawer is extended by lines that stand for parts one can buy (E24 resistors at
0.25 W and 1 W, E12 capacitors: film to 680 nF, electrolytics from 1 µF at 25 V and 63 V) and
searched again with the number of bought parts first in the objective, so the list is the
fewest new parts among designs of single parts (then the usual objective).  The list is then checked: those parts alone are
added to the real drawer and the ordinary search must find a design.
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np

from ..analysis import core
from ..eseries import decade_values
from ..parts import Source, StockLine
from .evaluate import Context, evaluate_resistors, vertex_dc

__all__ = ["explain_infeasible", "purchase_lines", "BUY_RESISTOR_POWERS", "BUY_CAP_VOLTAGES"]

BUY_RESISTOR_POWERS = (0.25, 1.0)  # W: the common through-hole ratings (common practice, no source)
BUY_CAP_VOLTAGES = (25.0, 63.0)  # V: common electrolytic ratings (common practice, no source)
BUY_FILM_VOLTAGE = 63.0
BUY_FILE = "(to buy)"


def purchase_lines(start_index: int, units: int) -> list[StockLine]:
    """Stock lines standing for parts one could buy, ``3·units`` of each."""
    from ..constants import TOL_ELECTROLYTIC, TOL_FILM, TOL_RESISTOR

    out: list[StockLine] = []
    qty = 3 * units

    def add(kind, value, tol, **kw):
        i = start_index + len(out)
        out.append(StockLine(index=i, kind=kind, value=value, qty=qty, source=Source(BUY_FILE, None, 0),
                             tolerance=tol, location="buy", **kw))

    for v in decade_values("E24", 10.0, 1e6):
        for pw in BUY_RESISTOR_POWERS:
            add("resistor", v, TOL_RESISTOR, power=pw)
    for v in decade_values("E12", 1e-9, 4.7e-3):
        if v < 1e-6:
            add("capacitor", v, TOL_FILM, voltage=BUY_FILM_VOLTAGE, dielectric="film")
        else:
            for volt in BUY_CAP_VOLTAGES:
                add("capacitor", v, TOL_ELECTROLYTIC, voltage=volt, polarized=True, dielectric="electrolytic")
    return out


def _relaxed(problem, step: int):
    t = problem.targets
    if step == 0:
        targets = replace(t, swing=None, rin_min=None, rout_max=None, gain_min=None, gain_max=None)
    else:
        c = 0.5 * (t.ie_min + t.ie_max)
        targets = replace(t, ie_min=0.5 * c, ie_max=1.5 * c, f_low=10 * t.f_low, swing=None, rin_min=None,
                          rout_max=None, gain_min=None, gain_max=None)
    return problem.with_(targets=targets)


def _judge_full(problem, choice) -> dict:
    """Every constraint's worst-case margin for one design under the full problem."""
    ctx = Context(problem, choice.model)
    roles = choice.roles
    v = {r: np.array([roles[r].equivalent.value]) for r in ctx.res_roles}
    tol = {r: np.array([roles[r].tolerance]) for r in ctx.res_roles}
    rat = {r: np.array([roles[r].rating]) for r in ctx.res_roles}
    ev = evaluate_resistors(ctx, v, tol, rat, drop=False)
    out = {k: float(a[0]) for k, a in ev.target.items()}
    out.update({k: float(a[0]) for k, a in ev.rating.items()})
    if not bool(ev.active[0]):
        out["active"] = -1.0
    caps = {r: roles[r].equivalent.value * (1 - roles[r].tolerance) for r in ctx.cap_roles}
    worst = 0.0
    for vert in ctx.vertices:
        dc = vertex_dc(ctx, vert, v, tol)
        f = core.low_corner(dc, c1=caps["C1"], c2=caps["C2"], ce=caps.get("CE", 0.0)).f_low
        worst = max(worst, float(np.nan_to_num(f[0], nan=np.inf)))
    out["f_low"] = (problem.targets.f_low - worst) / problem.targets.f_low
    out["_f_worst"] = worst
    for r in ctx.cap_roles:
        lo_v, hi_v = ev.vnode[r][0][0], ev.vnode[r][1][0]
        from .evaluate import cap_margin

        c = roles[r]
        out[f"{r} voltage"] = float(cap_margin(lo_v, hi_v, c.rating, c.equivalent.polarized,
                                               problem.conditions.cap_voltage_margin))
    return out


_NICE = {"ie_min": "IE at least ie_min", "ie_max": "IE at most ie_max", "f_low": "corner at or below f_low",
         "swing": "output swing", "rin_min": "input resistance", "rout_max": "output resistance",
         "gain_min": "gain at least gain_min", "gain_max": "gain at most gain_max", "active": "active region"}


def explain_infeasible(result, lines, trs, why, *, suggest: bool = True) -> None:
    """Fill ``result.reason``, ``result.nearest`` and (``suggest``) ``result.buy``."""
    from .design import _run

    problem = result.problem
    if not trs:
        result.reason = ("no transistor in the stock suits the stage"
                         + (": " + "; ".join(why) if why else f" (no {problem.polarity.upper()} lines"
                            + (f" labelled {problem.label!r}" if problem.label else "") + ")"))
        return
    nearest = None
    for step in (0, 1):
        found, _, _ = _run(_relaxed(problem, step).with_(max_parts=1), lines, 1, False)
        if found:
            nearest = found[0]
            break
    if nearest is None:
        result.reason = ("no choice of stock resistors puts the transistor's emitter current near the IE "
                         "window over the whole tolerance box")
    else:
        margins = _judge_full(problem, nearest)
        f_worst = margins.pop("_f_worst")
        missed = sorted(((m, k) for k, m in margins.items() if m < 0))
        result.nearest = {"choice": nearest, "margins": margins, "missed": [k for _, k in missed],
                          "f_low_worst": f_worst}
        if missed:
            parts = [f"{_NICE.get(k, k)} missed by {-m:.1%}" if math.isfinite(m) else f"{_NICE.get(k, k)} fails"
                     for m, k in missed]
            result.reason = "nothing in the drawer meets every constraint; the nearest design: " + "; ".join(parts)
        else:
            result.reason = "nothing in the drawer meets every constraint together with the stock quantities"
    if suggest:
        _suggest(result, lines)


def _suggest(result, lines) -> None:
    from .design import _run

    problem = result.problem
    extra = purchase_lines(max(ln.index for ln in lines) + 1, problem.units)
    ids = [ln.index for ln in extra]
    single = problem.with_(max_parts=1)  # purchases and drawer parts as single parts: a quick search
    found, trs, _ = _run(single, list(lines) + extra, 1, False, virtual_ids=ids, min_bought=1)
    if not found:
        result.buy = []
        return
    best = found[0]
    per_unit: dict[int, list] = {}
    for role, c in best.roles.items():
        for line, n in c.equivalent.uses:
            if line.source.file == BUY_FILE:
                per_unit.setdefault(line.index, [line, 0, []])
                per_unit[line.index][1] += n
                per_unit[line.index][2].append(role)
    buy = []
    added = []
    for line, n, roles in per_unit.values():
        buy.append({"kind": line.kind, "value": line.value, "tolerance": line.tolerance,
                    "rating": line.power if line.kind == "resistor" else line.voltage,
                    "polarized": line.polarized, "per_unit": n, "count": n * problem.units, "roles": roles})
        added.append(replace(line, qty=n * problem.units, location="new"))
    result.buy = buy
    # check: only those parts added to the real drawer, the ordinary search must succeed
    check, _, _ = _run(single, list(lines) + added, 1, False)
    result.buy_checked = bool(check)

"""When the drawer cannot build the stage: the nearest design, what it misses by, and what to buy.

docs/method.md ("Infeasible specs") has the definitions and why the answers are exact.

Nearest design (``nearest_design``): every constraint with a relative margin (the targets, the
ratings) is eased by the same fraction t of a fixed geometric grid; the nearest single-part design
is the best one (usual objective, distance to the real centres) at the smallest level t where the
drawer has one, found by stepping up the grid and bisecting (feasibility only grows with t).  It
is the exact optimum of (largest relative shortfall rounded up to the grid, then the usual
objective) over the designs of single drawer parts.

Shopping list (``cheapest_purchases``): parts of a catalogue (by default IEC 60063 E24 resistors,
E12 capacitors) may each fill a role alone, never combined with other parts.  A design with k
bought parts has a set S of resistor roles and a set T of capacitor roles that take them,
|S| + |T| = k; for every (S, T) an ordinary search runs with those roles restricted to the
catalogue and the others to the drawer (singles, pairs, triples as the problem allows).  Sizes
k = 1, 2, ... are searched in turn, so the first size with a design is the fewest bought parts
(proven when the drawer alone was proven not to do and no search of a smaller size stopped at its
budget).  The list is checked by the ordinary search with exactly those parts added
(``check_purchases``).
"""

from __future__ import annotations

import itertools
import math
from dataclasses import dataclass, fields, replace

import numpy as np

from ..analysis import core
from ..parts import Source, StockLine
from .judge import SearchContext, evaluate_resistors, vertex_dc
from .problem import ShiftedTargets
from .runner import BUY_FILE, RoleChoice, run_search, transistor_model

__all__ = ["explain_infeasible", "purchase_lines", "e_series_catalogue", "cheapest_purchases", "nearest_design",
           "BUY_RESISTOR_POWERS", "BUY_CAP_VOLTAGES", "SHORTFALL_GRID"]

BUY_RESISTOR_POWERS = (0.25, 1.0)  # W: the common through-hole ratings (common practice, no source)
BUY_CAP_VOLTAGES = (25.0, 63.0)  # V: common electrolytic ratings (common practice, no source)
BUY_FILM_VOLTAGE = 63.0
BUY_PER_UNIT = 8  # a bought line may fill every role of a stage (at most 8 roles): never short

# Relative shortfall levels of the nearest design: 0.1 % to about 1000 (100 000 %) in steps of 25 %.
SHORTFALL_GRID = tuple(1e-3 * 1.25 ** k for k in range(0, 63))
GALLOP = 4  # grid steps between the levels first probed (×2.4): high levels are the costly ones


# --- the catalogue ----------------------------------------------------------------------------------


def e_series_catalogue() -> list[StockLine]:
    """Parts one can buy: IEC 60063 E24 resistors (10 Ω to 1 MΩ, 5 %, 0.25 W and 1 W) and E12
    capacitors (film 1 nF to 680 nF at 63 V, 10 %; electrolytics 1 µF to 4.7 mF at 25 V and 63 V, 20 %)."""
    from ..constants import TOL_ELECTROLYTIC, TOL_FILM, TOL_RESISTOR
    from ..eseries import decade_values

    out: list[StockLine] = []
    src = Source(BUY_FILE, None, 0)
    for v in decade_values("E24", 10.0, 1e6):
        for pw in BUY_RESISTOR_POWERS:
            out.append(StockLine(index=0, kind="resistor", value=v, qty=0, source=src, tolerance=TOL_RESISTOR,
                                 power=pw))
    for v in decade_values("E12", 1e-9, 4.7e-3):
        if v < 1e-6:
            out.append(StockLine(index=0, kind="capacitor", value=v, qty=0, source=src, tolerance=TOL_FILM,
                                 voltage=BUY_FILM_VOLTAGE, dielectric="film"))
        else:
            for volt in BUY_CAP_VOLTAGES:
                out.append(StockLine(index=0, kind="capacitor", value=v, qty=0, source=src,
                                     tolerance=TOL_ELECTROLYTIC, voltage=volt, polarized=True,
                                     dielectric="electrolytic"))
    return out


def purchase_lines(start_index: int, units: int, catalogue=None) -> list[StockLine]:
    """Stock lines standing for the catalogue's parts (default ``e_series_catalogue``), numbered from
    ``start_index``, each with enough parts for every role of every unit."""
    cat = e_series_catalogue() if catalogue is None else list(catalogue)
    return [replace(ln, index=start_index + i, qty=BUY_PER_UNIT * units, source=Source(BUY_FILE, None, 0),
                    location="buy")
            for i, ln in enumerate(cat) if ln.kind in ("resistor", "capacitor")]


# --- what to buy ------------------------------------------------------------------------------------


@dataclass
class Purchases:
    """The fewest bought parts: the design that uses them and what the search proved."""

    design: object | None  # DesignChoice over the drawer plus the catalogue, or None
    bought: int | None  # parts bought per unit
    proven: bool  # no design with fewer bought parts exists in the space
    searches: int = 0
    sets: int = 0  # resistor sets enumerated, all searches together
    ties_complete: bool = True  # every search of the answer's size ran to the end


BUY_BUDGET_FACTOR = 4  # the shopping searches together may enumerate this many times SET_BUDGET
UNPROVEN_FRACTION = 4  # with an unproven drawer, a search over the drawer's own resistors gets 1/4 of SET_BUDGET
TIE_FRACTION = 8  # once a list of the fewest parts is found, the others of that size share SET_BUDGET/this


def _ideal_caps(problem, lines, index: int):
    """A capacitor table of one part larger than every real candidate, with no voltage limit and
    no polarity: with it the corner and the capacitor checks pass whenever any capacitors could."""
    from .tables import build_tables

    biggest = max((ln.value for ln in lines if ln.kind == "capacitor" and ln.value), default=1e-6)
    ideal = StockLine(index=index, kind="capacitor", value=10.0 * biggest, qty=10 ** 9,
                      source=Source(BUY_FILE, None, 0), tolerance=0.0, voltage=1e12, location="ideal")
    return ideal, build_tables([ideal], "capacitor", 1, problem.units)


def _steps(sets: int) -> int:
    """The steps that go with a budget of ``sets`` resistor sets, in the engine's own proportion."""
    from .engine import SET_BUDGET, WORK_BUDGET

    return max(0, sets) * (WORK_BUDGET // SET_BUDGET)


def _limits(sets: int, steps: int | None = None) -> tuple[int, int]:
    """(sets, steps) for a search allowed ``sets`` resistor sets (and ``steps``, default in proportion)."""
    return max(0, sets), max(0, _steps(sets) if steps is None else steps)


def cheapest_purchases(problem, lines, catalogue=None, *, drawer_proven: bool, budget: int | None = None,
                       scale: float = 1.0) -> Purchases:
    """The design with the fewest bought parts (then the usual objective); a bought part fills a
    role alone (it is never combined with other parts into a series or parallel equivalent).

    ``lines``: the drawer (default ratings filled).  ``drawer_proven``: the ordinary search proved
    that the drawer alone has no design.  ``budget`` bounds the resistor sets all searches together
    may enumerate (default BUY_BUDGET_FACTOR·SET_BUDGET); past it the answer is the best found.

    The designs with k bought parts split by (S, T): the resistor roles S and capacitor roles T that
    take a bought part, |S| + |T| = k.  For each (S, T) one ordinary search runs with the roles of
    S and T restricted to the catalogue and the others to the drawer.  Sizes k = 1, 2, ... in turn;
    the first size with a design is the answer (all its (S, T) are searched, so the tie between
    lists of that size goes to the usual objective, within a budget).  Before the first (S, T) of
    each S, one search with S and ideal capacitors (``_ideal_caps``) tells whether the resistors of
    S can work at all; if not, every (S, T) is skipped.
    """
    from .engine import SET_BUDGET
    from .pools import Pools
    from .tables import build_tables

    total = int(BUY_BUDGET_FACTOR * SET_BUDGET * scale) if budget is None else budget
    lines = list(lines)
    start = max((ln.index for ln in lines), default=-1) + 1
    extra = purchase_lines(start, problem.units, catalogue)
    ideal, ideal_t = _ideal_caps(problem, lines + extra, start + len(extra))
    every = lines + extra + [ideal]
    own = Pools.build(lines).search_lines(lines)  # identical bins as one candidate, as the ordinary search
    drawer = {k: build_tables([ln for ln in own if ln.kind == k], k, problem.max_parts, problem.units)
              for k in ("resistor", "capacitor")}
    bought = {k: build_tables([ln for ln in extra if ln.kind == k], k, 1, problem.units)
              for k in ("resistor", "capacitor")}
    res_roles, cap_roles = problem.roles
    out = Purchases(None, None, drawer_proven)
    spent = 0
    steps_spent = 0

    tie_left = None  # the budget left for ties, once a list of the fewest parts is known

    def search(chosen: frozenset, captabs):
        """(best design or None, whether the search stopped at its budget)."""
        nonlocal spent, steps_spent, tie_left
        rt = {r: (bought["resistor"] if r in chosen else drawer["resistor"]) for r in res_roles}
        cap = int(SET_BUDGET * scale) if chosen or drawer_proven else int(SET_BUDGET * scale) // UNPROVEN_FRACTION
        if tie_left is not None:
            cap = min(cap, tie_left)
        cap = min(cap, total - spent)
        if steps_spent >= _steps(total):
            return None, True
        if cap <= 0:
            return None, True
        st: dict = {}
        found, _, _ = run_search(problem, every, 1, False, stats_out=st,
                           budget=_limits(cap, min(_steps(cap), _steps(total) - steps_spent)), tables=(rt, captabs))
        out.searches += 1
        spent += st.get("sets", 0)
        steps_spent += st.get("work", 0)
        if tie_left is not None:
            tie_left = max(0, tie_left - st.get("sets", 0))
        return (found[0] if found else None), bool(st.get("truncated"))

    probes: dict[frozenset, tuple] = {}
    best = None
    for k in range(1, len(res_roles) + len(cap_roles) + 1):
        cut_here = False
        for ns in range(max(0, k - len(cap_roles)), min(k, len(res_roles)) + 1):
            if ns and not len(bought["resistor"].get(1, ())):
                continue
            for s in itertools.combinations(res_roles, ns):
                chosen = frozenset(s)
                nt = k - ns
                if nt and not len(bought["capacitor"].get(1, ())):
                    continue
                if chosen not in probes:
                    probes[chosen] = search(chosen, ideal_t)
                got, cut = probes[chosen]
                if got is None:  # these resistors cannot work with any capacitors
                    cut_here |= cut
                    continue
                for t in itertools.combinations(cap_roles, nt):
                    ct = {r: (bought["capacitor"] if r in t else drawer["capacitor"]) for r in cap_roles}
                    got, cut = search(chosen, ct)
                    cut_here |= cut
                    if got is not None and (best is None or got.key < best.key):
                        best = got
                        if tie_left is None:
                            tie_left = int(SET_BUDGET * scale) // TIE_FRACTION
        if best is not None:
            out.design, out.bought = best, k
            out.ties_complete = not cut_here
            break
        out.proven = out.proven and not cut_here
    out.sets = spent
    return out


def _buy_list(choice, units: int) -> list[dict]:
    per_line: dict[int, list] = {}
    for role, c in choice.roles.items():
        for line, n in c.equivalent.uses:
            if line.source.file == BUY_FILE:
                entry = per_line.setdefault(line.index, [line, 0, []])
                entry[1] += n
                entry[2].append(role)
    return [{"kind": line.kind, "value": line.value, "tolerance": line.tolerance,
             "rating": line.power if line.kind == "resistor" else line.voltage, "polarized": line.polarized,
             "per_unit": n, "count": n * units, "roles": roles, "line": line}
            for line, n, roles in per_line.values()]


def _suggest(result, lines, catalogue, drawer_proven: bool, scale: float = 1.0) -> None:
    problem = result.problem
    got = cheapest_purchases(problem, lines, catalogue, drawer_proven=drawer_proven, scale=scale)
    result.stats["buy"] = {"searches": got.searches, "sets": got.sets, "ties_complete": got.ties_complete}
    if got.design is None:
        # an empty list says why it is empty, and is never "proven fewest"
        result.buy = []
        result.buy_proven = False
        result.buy_note = ("no purchase of standard parts (E24 resistors, E12 capacitors), each filling a role "
                           "alone, makes it feasible" if got.proven else
                           "no purchase of standard parts was found that makes it feasible, but the search for "
                           "one stopped at its budget, so one may exist")
        return
    buy = _buy_list(got.design, problem.units)
    result.buy_design = got.design
    added = [replace(b.pop("line"), qty=b["count"], location="new") for b in buy]
    result.buy = buy
    result.buy_checked = check_purchases(problem, lines, got.design, added, scale=scale)
    # "proven fewest" only when every search behind the list finished
    result.buy_proven = bool(got.proven and got.ties_complete)
    if not result.buy_proven:
        result.buy_note = "the list is not proven the fewest: a search for purchases stopped at its budget"


def check_purchases(problem, lines, choice, added, scale: float = 1.0) -> bool:
    """Whether the ordinary search finds a design in the drawer lines ``choice`` uses (with their
    full stock) plus exactly the bought lines ``added``.  Adding lines never removes a design, so
    then the whole drawer with those parts added has one too.  (The sub-drawer keeps the check
    independent of the shopping search's tables and quick: the ordinary search of the whole
    drawer may spend long refuting the designs with fewer parts first.)"""

    used = {ln.index for ln, _ in choice.uses().values() if ln.source.file != BUY_FILE}
    sub = [ln for ln in lines if ln.index in used] + list(added)
    from .engine import SET_BUDGET

    found, _, _ = run_search(problem, sub, 1, False, budget=_limits(int(SET_BUDGET * scale)))
    return bool(found)


# --- the nearest design ----------------------------------------------------------------------------


def _relaxed(problem, lines, t: float):
    """The problem and drawer with every relative-margin constraint eased by the fraction ``t``:
    a design meets them exactly when each of its margins under the real problem is at least −t.

    Targets: a lower bound x becomes x·(1 − t) (none from t = 1 on), an upper bound x·(1 + t).
    Ratings: every resistor's power, capacitor's voltage and transistor's PD and IC max times
    (1 + t), which eases each rating margin (limit − x)/limit the same way (the ratings of pairs
    and triples scale with their members').  VCEO, polarity, the active region and the stock
    quantities stay hard.  The distance D keeps the real window centres."""
    tg = problem.targets
    low = (lambda x: None if x is None or t >= 1 else x * (1 - t))
    high = (lambda x: None if x is None else x * (1 + t))
    values = {f.name: getattr(tg, f.name) for f in fields(tg)}
    values.update(ie_min=tg.ie_min * (1 - t) if t < 1 else tg.ie_min * 1e-9, ie_max=high(tg.ie_max),
                  f_low=high(tg.f_low), swing=low(tg.swing), rin_min=low(tg.rin_min), rout_max=high(tg.rout_max),
                  gain_min=low(tg.gain_min), gain_max=high(tg.gain_max))
    targets = ShiftedTargets(**values, real=tg)
    f = 1.0 + t  # ratings scale: the margin (limit − x)/limit >= −t  <=>  x <= (1 + t)·limit
    eased = []
    for ln in lines:
        if ln.kind == "resistor" and ln.power is not None:
            ln = replace(ln, power=ln.power * f)
        elif ln.kind == "capacitor" and ln.voltage is not None:
            ln = replace(ln, voltage=ln.voltage * f)
        elif ln.kind == "transistor":
            ln = replace(ln, pd=None if ln.pd is None else ln.pd * f,
                         ic_max=None if ln.ic_max is None else ln.ic_max * f)
        eased.append(ln)
    return problem.with_(targets=targets), eased


def _restore(choice, lines, t: float):
    """A design found in the eased drawer, on the real lines and ratings (its margins, judged
    under the eased problem, are dropped: ``_judge_full`` gives the real ones)."""

    by = {ln.index: ln for ln in lines}
    f = 1.0 + t
    roles = {}
    for r, c in choice.roles.items():
        eq = c.equivalent
        eq = replace(eq, rating=eq.rating / f, uses=tuple((by[ln.index], n) for ln, n in eq.uses),
                     members=tuple(by[ln.index] for ln in eq.members))
        roles[r] = RoleChoice(r, eq, c.tolerance, c.rating / f, None, c.orientation)
    tr = by[choice.transistor.index]
    return replace(choice, transistor=tr, model=transistor_model(tr), roles=roles, target_margins={},
                   rating_margins={})


@dataclass
class Nearest:
    """The nearest single-part design, the grid level of its shortfall, and what was proven."""

    design: object | None  # DesignChoice on the real lines, or None
    level: float | None  # the smallest grid level with a design
    below: float  # the grid level just under it (0.0 for the first): no design comes within it
    proven: bool  # no search stopped at its budget
    searches: int = 0
    sets: int = 0


def nearest_design(problem, lines, *, budget: int | None = None, scale: float = 1.0) -> Nearest:
    """The best single-part design at the smallest level t of SHORTFALL_GRID at which the eased
    problem (``_relaxed``) has one.

    Feasibility only grows with t, so the levels are probed at grid indices 0, 4, 8, ... until
    one has a design, then bisected; low levels are cheap (tight bounds), high ones need not be.  ``budget``
    bounds the resistor sets of all probes together (default SET_BUDGET).
    """
    from .engine import SET_BUDGET

    total = int(SET_BUDGET * scale) if budget is None else budget
    steps = [0]  # steps of all probes together
    single = problem.with_(max_parts=1)
    out = Nearest(None, None, 0.0, True)
    found_at: dict[int, object] = {}

    def probe(i: int) -> bool:
        p, eased = _relaxed(single, lines, SHORTFALL_GRID[i])
        st: dict = {}
        got, _, _ = run_search(p, eased, 1, False, stats_out=st,
                         budget=_limits(total - out.sets, _steps(total) - steps[0]))
        steps[0] += st.get("work", 0)
        out.searches += 1
        out.sets += st.get("sets", 0)
        if st.get("truncated"):
            out.proven = False
        if got:
            found_at[i] = _restore(got[0], lines, SHORTFALL_GRID[i])
        return bool(got)

    lo, hi = -1, None  # lo: the highest index probed without a design
    last = len(SHORTFALL_GRID) - 1
    i = 0
    while True:
        if probe(i):
            hi = i
            break
        lo = i
        if i == last:
            break
        i = min(i + GALLOP, last)
    if hi is None:
        return out
    while hi - lo > 1:
        mid = (lo + hi) // 2
        if probe(mid):
            hi = mid
        else:
            lo = mid
    out.design, out.level = found_at[hi], SHORTFALL_GRID[hi]
    out.below = SHORTFALL_GRID[lo] if lo >= 0 else 0.0
    return out


def _judge_full(problem, choice) -> dict:
    """Every constraint's worst-case margin for one design under the full problem."""
    ctx = SearchContext(problem, choice.model)
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
        from .judge import cap_margin

        c = roles[r]
        out[f"{r} voltage"] = float(cap_margin(lo_v, hi_v, c.rating, c.equivalent.polarized,
                                               problem.conditions.cap_voltage_margin))
    return out


_NICE = {"ie_min": "IE at least ie_min", "ie_max": "IE at most ie_max", "f_low": "corner at or below f_low",
         "swing": "output swing", "rin_min": "input resistance", "rout_max": "output resistance",
         "gain_min": "gain at least gain_min", "gain_max": "gain at most gain_max", "active": "active region"}


def explain_infeasible(result, lines, trs, why, *, suggest: bool = True, catalogue=None,
                       drawer_proven: bool = True, scale: float = 1.0) -> None:
    """Fill ``result.reason`` (the cause from the physics first, when one holds: ``reasons``),
    ``result.limits``, ``result.nearest`` and (``suggest``) ``result.buy`` with ``result.buy_note``."""
    from .reasons import corner_with_largest, hard_limits, limits_text

    problem = result.problem
    if not trs:
        result.reason = ("no transistor in the stock suits the stage"
                         + (": " + "; ".join(why) if why else f" (no {problem.polarity.upper()} lines"
                            + (f" labelled {problem.label!r}" if problem.label else "") + ")"))
        result.buy_note = "no purchase of passives helps without a transistor that suits the stage"
        if suggest:
            _suggest_transistor(result, lines, scale)
        return
    limits = hard_limits(problem, trs)
    result.limits = limits
    cause = limits_text(limits, len(trs))
    near = nearest_design(problem, lines, scale=scale)
    result.stats["nearest"] = {"searches": near.searches, "sets": near.sets}
    nearest = near.design
    if nearest is None:
        text = ("no design of single parts comes within "
                f"{SHORTFALL_GRID[-1]:.0f}× of every constraint" + ("" if near.proven else
                                                                     " (not proven: a search stopped early)"))
    else:
        margins = _judge_full(problem, nearest)
        f_worst = margins.pop("_f_worst")
        missed = sorted(((m, k) for k, m in margins.items() if m < 0))
        shortfall = max((-m for m, _ in missed), default=0.0)
        result.nearest = {"choice": nearest, "margins": margins, "missed": [k for _, k in missed],
                          "f_low_worst": f_worst, "shortfall": shortfall, "level": near.level,
                          "below": near.below, "proven": near.proven}
        if missed:
            parts = [f"{_NICE.get(k, k)} missed by {-m:.1%}" if math.isfinite(m) else f"{_NICE.get(k, k)} fails"
                     for m, k in missed]
            text = "the nearest single-part design: " + "; ".join(parts)
            if "f_low" in dict((k, m) for m, k in missed):
                got = corner_with_largest(problem, nearest, lines)
                if got is not None and got[0] > problem.targets.f_low:
                    worst, chosen = got
                    from ..values import format_code, format_si

                    caps = ", ".join(f"{r} {format_code(ln.value, 'F', ascii_only=False)}" for r, ln in chosen.items())
                    text += (f"; even the largest capacitors in stock that suit each place ({caps}) leave its "
                             f"worst-case corner at {format_si(worst, 'Hz')}")
                    result.nearest["corner_with_largest"] = worst
        else:
            text = ("the search stopped at its budget; a single-part design that meets every constraint "
                    "exists (the nearest design below)")
    if cause:
        result.reason = cause + "; " + text
    elif nearest is not None and result.nearest and result.nearest["missed"]:
        result.reason = "nothing in the drawer meets every constraint; " + text
    else:
        result.reason = ("nothing in the drawer meets every constraint, and " if nearest is None else "") + text
    if not suggest:
        return
    if cause:
        # no passives lift a ceiling of the stage or of every transistor: nothing to search for
        result.buy = []
        transistor_only = not any(not lm.transistor for lm in limits)
        result.buy_note = ("no purchase of resistors or capacitors can help: " + cause.split(": ", 1)[1]
                           + (" (a transistor with the ratings above is what is missing)" if transistor_only else ""))
        if transistor_only:
            _suggest_transistor(result, lines, scale)
        return
    _suggest(result, lines, catalogue, drawer_proven, scale)
    if not result.buy:
        _suggest_transistor(result, lines, scale)


def _suggest_transistor(result, lines, scale: float) -> None:
    """``result.buy_transistor``: the transistor to buy with which the drawer's passives make a
    design (``buy_transistor``), checked by the search itself; left None when none does."""
    from .buy_transistor import transistor_to_buy
    from .engine import SET_BUDGET

    need = transistor_to_buy(result.problem, lines, budget=_limits(int(SET_BUDGET * scale)), scale=scale)
    result.buy_transistor = need
    if need is not None:
        result.buy_design = need.design
        result.buy_checked = True
        result.buy_note = ""
        if need.passives:
            result.buy = _buy_list(need.design, result.problem.units)
            result.buy_proven = need.proven
            if not need.proven:
                result.buy_note = "the passives are not proven the fewest: a search stopped at its budget"

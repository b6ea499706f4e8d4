"""One run of the design search over a set of stock lines, and the designs it returns.

``run_search`` builds the candidate tables and the stock pools, picks the transistors the stage may
use, runs the search (``engine.Search``, or ``engine.exhaustive_search`` for cross-checks) and turns
what it found into ``DesignChoice`` objects with their parts drawn from the drawer.  ``design``
(the answer to a spec) and ``shopping`` (the nearest design, what to buy) both call it; neither
imports the other's internals.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

from ..parts import StockLine
from ..stages import Part, Stage, TransistorModel
from .engine import FoundDesign, Search, exhaustive_search
from .judge import SearchContext
from .pools import Pools
from .problem import DesignProblem
from .tables import build_tables

__all__ = ["RoleChoice", "DesignChoice", "transistor_model", "suitable_transistors", "run_search", "BUY_FILE", "BOARD_FILE"]

BUY_FILE = "(to buy)"  # the source file of stock lines that stand for parts to buy
BOARD_FILE = "(on the board)"  # the source file of lines that stand for the parts on a board under repair
APART_FILES = (BUY_FILE, BOARD_FILE)  # lines never pooled with the drawer's


@dataclass(frozen=True)
class RoleChoice:
    role: str
    equivalent: object  # equivalents.Equivalent
    tolerance: float
    rating: float
    margin: float | None = None  # voltage margin (capacitors)
    orientation: str | None = None  # polarized capacitors: where the + end goes


@dataclass(frozen=True)
class DesignChoice:
    """One design: the transistor line, a part choice per role, and its objective terms."""

    transistor: StockLine
    model: TransistorModel
    roles: dict
    part_count: int
    distance: float
    margin: float
    stock_left: float
    total_capacitance: float
    bought: int
    target_margins: dict
    rating_margins: dict
    key: tuple
    transistor_name: str  # its designator, as the circuit module names it (``TRANSISTORS``)
    picks: tuple = ()  # (giving line, needed line, parts for all units): the drawer's bins, CP-SAT

    def stage(self, problem: DesignProblem) -> Stage:
        parts = {r: Part(c.equivalent.value, c.tolerance, c.rating, bool(c.equivalent.polarized))
                 for r, c in self.roles.items()}
        return Stage(problem.topology, problem.polarity, problem.supply, parts, self.model,
                     problem.source_resistance, problem.load)

    def uses(self) -> dict[int, tuple[StockLine, int]]:
        """Stock lines and parts per unit, over all roles (and the transistor)."""
        out: dict[int, list] = {self.transistor.index: [self.transistor, 1]}
        for c in self.roles.values():
            for line, n in c.equivalent.uses:
                out.setdefault(line.index, [line, 0])[1] += n
        return {k: (v[0], v[1]) for k, v in out.items()}


def transistor_model(line: StockLine) -> TransistorModel:
    from ..constants import VBE_DEFAULT, VCE_SAT_DEFAULT

    return TransistorModel(
        polarity=line.polarity, hfe_min=line.hfe_min, hfe_max=line.hfe_max,
        vbe=line.vbe if line.vbe is not None else VBE_DEFAULT,
        vce_sat=line.vce_sat if line.vce_sat is not None else VCE_SAT_DEFAULT,
        vceo=line.vceo, ic_max=line.ic_max, pd=line.pd, label=line.label)


def suitable_transistors(problem: DesignProblem, stock_lines) -> tuple[list[StockLine], list[str]]:
    """Transistor lines the stage may use, and why the others may not."""
    ok, why = [], []
    for ln in stock_lines:
        if ln.kind != "transistor":
            continue
        name = ln.label or f"row {ln.source.row}"
        if problem.label is not None and ln.label.lower() != problem.label.lower():
            continue
        if ln.polarity != problem.polarity:
            why.append(f"{name}: {ln.polarity or 'unknown'} polarity, the stage is {problem.polarity.upper()}")
            continue
        if ln.qty < problem.units:
            why.append(f"{name}: {ln.qty} in stock, {problem.units} needed")
            continue
        if ln.hfe_min is None or ln.hfe_max is None:
            why.append(f"{name}: no hFE range in the stock file")
            continue
        if ln.vceo is not None and ln.vceo < problem.supply:
            why.append(f"{name}: VCEO {ln.vceo:g} V is below the {problem.supply:g} V supply")
            continue
        ok.append(ln)
    return ok, why


def choice_of(problem: DesignProblem, ctx: SearchContext, f: FoundDesign) -> DesignChoice:
    b, pos, comp = f.batch, f.pos, f.completion
    roles = {}
    for r in ctx.res_roles:
        t = b.tables[r]
        i = int(b.idx[r][pos])
        roles[r] = RoleChoice(r, t.equivalent(i), float(t.tol[i]), float(t.rating[i]))
    for r in ctx.cap_roles:
        t, i = comp.caps[r]
        eq = t.equivalent(i)
        orient = None
        if eq.polarized:
            lo_v = float(b.ev.vnode[r][0][pos])
            orient = "+ to the stage side" if lo_v > 0 else "+ to the outer side"
        roles[r] = RoleChoice(r, eq, float(t.tol[i]), float(t.rating[i]), comp.cap_margins[r], orient)
    tm = {k: float(a[pos]) for k, a in b.ev.target.items()}
    tm["f_low"] = float(comp.corner_margin)
    rm = {k: float(a[pos]) for k, a in b.ev.rating.items()}
    for r, m in comp.cap_margins.items():
        rm[f"{r} voltage"] = m
    key = f.key
    return DesignChoice(
        transistor=f.transistor, model=ctx.tr, roles={r: roles[r] for r in (*ctx.res_roles, *ctx.cap_roles)},
        part_count=b.pr + comp.pc, distance=float(b.ev.distance[pos]),
        margin=min(float(b.ev.mu[pos]), comp.margin_c),
        stock_left=min(float(b.stock_left[pos]), comp.stock_left), total_capacitance=comp.total_capacitance,
        bought=int(b.bought[pos]) + comp.bought, target_margins=tm, rating_margins=rm, key=key,
        transistor_name=problem.circuit.TRANSISTORS[0])


def run_search(problem: DesignProblem, lines, top: int, exhaustive: bool, virtual_ids=(), min_bought: int = 0,
         stats_out: dict | None = None, budget=None, tables=None, on_step=None):
    """The search over ``lines``; ``tables`` = (resistor, capacitor) candidates replaces the ones
    built from ``lines`` (shared by the roles, or per role: ``engine.per_role``).  ``budget``: the
    resistor sets the search may enumerate, or (sets, steps); default ``engine``'s budgets.

    Lines standing for parts to buy are never pooled with the drawer (``pools``)."""
    apart = set(virtual_ids) | {ln.index for ln in lines if ln.source.file in APART_FILES}
    pools = Pools.build(lines, exclude=apart)
    if tables is None:
        cand_lines = pools.search_lines(lines)
        res_lines = [ln for ln in cand_lines if ln.kind == "resistor"]
        cap_lines = [ln for ln in cand_lines if ln.kind == "capacitor"]
        rtables = build_tables(res_lines, "resistor", problem.max_parts, problem.units)
        ctables = build_tables(cap_lines, "capacitor", problem.max_parts, problem.units)
    else:
        rtables, ctables = tables
    trs, why = suitable_transistors(problem, lines)
    ctxs = {tr.index: SearchContext(problem, transistor_model(tr)) for tr in trs}
    stats: dict = {"sets": 0, "work": 0, "truncated": False}
    if exhaustive:
        found = []
        for tr in trs:
            found += exhaustive_search(ctxs[tr.index], tr, rtables, ctables, lines, top, virtual_ids=virtual_ids,
                                       pools=pools)
        # at most one design per (transistor, resistor set), each with its best capacitors
        found.sort(key=lambda f: f.key)
        found = found[:top]
    else:
        work_budget = None
        if budget is None:
            from .engine import SET_BUDGET, WORK_BUDGET

            budget, work_budget = SET_BUDGET, WORK_BUDGET
        elif isinstance(budget, tuple):
            budget, work_budget = budget
        pairs = [(tr, ctxs[tr.index]) for tr in trs]
        floor = None if problem.prefer == "closest" else 0.0
        search = Search(pairs, rtables, ctables, lines, top, virtual_ids=virtual_ids, min_bought=min_bought,
                        pools=pools, budget=budget, work_budget=work_budget, on_step=on_step, mu_floor=floor)
        found = search.run()
        stats = dict(search.stats)
        if any(caps.skipped for _, _, caps, _ in search.trs) and not found:
            stats["truncated"] = True
            stats["skipped_triples"] = True
        if floor is not None:
            found = _climb(pairs, found, stats, dict(rtables=rtables, ctables=ctables, lines=lines, top=top,
                                                     virtual_ids=virtual_ids, min_bought=min_bought, pools=pools,
                                                     on_step=on_step), budget, work_budget)
    if stats_out is not None:
        stats_out.update(stats)
    by_index = {tr.index: tr for tr in trs}
    return ([_with_picks(choice_of(problem, ctxs[f.transistor.index], f), pools, problem.units) for f in found],
            [by_index[i] for i in by_index], why)


def _climb(pairs, found, stats: dict, kw: dict, budget: int, work_budget: int | None) -> list:
    """The fewest-parts objective (B, P, −class(μ), D, ...) from searches at margin floors.

    A search at floor θ (``Search(mu_floor=θ)``) gives the best designs by (B, P, D) among those
    whose every margin is at least θ.  For the best design: from the fewest-parts designs, climb
    the margin classes (``judge.MU_CLASSES``) while a search at the next class's floor, held to
    that many parts, still has one; the last holds the answer.  For the ``top`` best: a search at
    every class until one finds nothing, and the best of all their designs (every design of the
    top lies in the top of the search at its own class: whatever that search ranks before it ranks
    before it in the objective too).  Every search counts against the one budget; docs/method.md,
    "Objective"."""
    from .engine import final_key
    from .judge import MU_CLASSES

    def done(designs):
        best: dict = {}
        for f in designs:
            f = replace(f, key=final_key(f.key))
            at = (f.transistor.index, f.key[-1][1])
            if at not in best or f.key < best[at].key:
                best[at] = f
        return sorted(best.values(), key=lambda f: f.key)[:kw["top"]]

    if not found or stats.get("truncated"):
        return done(found)
    many = kw["top"] > 1
    b0, p0 = found[0].key[0], found[0].key[1]
    level = 0.0 if many else -found[0].key[3]  # the class of the nearest fewest-parts design
    pool = list(found)
    for theta in (c for c in MU_CLASSES if c > level):
        left = budget - stats.get("sets", 0)
        wleft = None if work_budget is None else work_budget - stats.get("work", 0)
        if left <= 0 or (wleft is not None and wleft <= 0):
            stats["truncated"] = True
            break
        s = Search(pairs, mu_floor=theta, p_max=None if many else p0, budget=left, work_budget=wleft, **kw)
        got = s.run()
        for k in ("sets", "work", "judged", "entries"):
            stats[k] = stats.get(k, 0) + s.stats.get(k, 0)
        if s.stats["truncated"]:
            stats["truncated"] = True
            stats["open"] = s.stats.get("open")
        if not got or (not many and (got[0].key[0], got[0].key[1]) != (b0, p0)):
            break
        pool = pool + got if many else got
        if s.stats["truncated"]:
            break
    return done(pool)


def _with_picks(choice: "DesignChoice", pools: Pools, units: int) -> "DesignChoice":
    """The choice with its parts drawn from the drawer for ``units`` builds (CP-SAT, ``pools``)."""
    need: dict[int, int] = {}
    for c in choice.roles.values():
        for line, n in c.equivalent.uses:
            need[line.index] = need.get(line.index, 0) + n * units
    given = pools.allocate(need)
    if given is None:  # the search checked it; an allocation must exist
        raise RuntimeError("internal: a design passed the stock check but cannot be drawn from the drawer")
    picks = [(pools.lines[a], pools.lines[b], n) for b, rows in given.items() for a, n in rows]
    picks.append((choice.transistor, choice.transistor, units))
    return replace(choice, picks=tuple(picks))



"""The exact search: pruned, vectorised judgement of resistor sets, then the best capacitors for each.

Objective (lexicographic; smaller is better):

    fewest-parts:  (P, D, −M, −S, ΣC, canonical)      closest:  (D, P, −M, −S, ΣC, canonical)

P the number of resistors and capacitors; D the normalised distance of the nominal IE (and, for a
common-emitter stage with a gain window, the nominal gain) to the centres of their windows,
√Σ((x − centre)/half-width)²; M the smallest relative margin to the limits (derated power of every
resistor and of the transistor, IC max, each capacitor's voltage margin); S the fewest parts left,
after the build, that could stand in for a line the design names (``pools``); ΣC the total capacitance; canonical the stock lines used,
so that equal designs are always told apart the same way.

D depends on the resistors only and P, M, S, ΣC split into a resistor part and a capacitor part, so
the search judges resistor sets first (``joins`` prunes them, ``evaluate`` judges them) and then,
in best-first order, finds the best capacitors for each.  A lower bound on the capacitor count of
every resistor set comes from the largest capacitor of each count that its node voltages allow
(the corner falls as capacitance grows, so if those fail, every choice of that count fails);
sets are opened in order of (bound, D) from a heap, and a design is final when it comes off the
heap with its exact key, which no lower bound still on the heap can beat.
"""

from __future__ import annotations

import heapq
import itertools
from dataclasses import dataclass
from typing import Mapping

import numpy as np

from ..parts import StockLine
from .evaluate import (Context, bypasses, cap_margin, corner_ok, evaluate_resistors, lowest_caps, nominal_distance,
                       stacked_dc, vertex_dc)
from .joins import candidate_sets
from .pools import Pools
from .tables import RoleTable, equivalent_key

__all__ = ["Completion", "Found", "TransistorSearch", "search_transistor", "exhaustive_search",
           "resistor_sets_exhaustive"]

HUGE_CAP_FACTOR = 10.0
LB_CHUNK = 256  # resistor sets whose capacitor bound is computed together
JUDGE_CHUNK = 4096
SET_BUDGET = 4_000_000  # resistor sets one search may enumerate before it gives up proving
# partial sets the bounds may form and reject on the way (joins.candidate_sets' tally): about twenty
# seconds of pruning work, for specs whose bounds reject nearly everything but only late
WORK_BUDGET = 100_000_000


@dataclass
class RBatch:
    """Resistor sets of one shape that passed the worst case."""

    tables: dict[str, RoleTable]
    idx: dict[str, np.ndarray]
    ev: object  # ResistorEval over these sets
    pr: int
    stock_left: np.ndarray
    bought: np.ndarray  # parts of each set that are not in the drawer (shopping suggestions)

    def __len__(self) -> int:
        return len(next(iter(self.idx.values())))


@dataclass(frozen=True)
class Completion:
    """The capacitors chosen for one resistor set, with the figures of the whole design."""

    caps: dict  # role -> (RoleTable, index)
    pc: int
    bought: int
    margin_c: float
    stock_left: float
    csum: float
    cap_margins: dict


@dataclass(frozen=True)
class Found:
    """One design: resistor set (batch, position) and its capacitors, with its objective key."""

    key: tuple
    batch: RBatch
    pos: int
    completion: Completion
    transistor: StockLine


def _bought(parts, virtual) -> np.ndarray:
    """Parts per design taken from lines that are only shopping suggestions."""
    tot = 0
    for m, c in parts:
        tot = tot + np.sum(np.where(m >= 0, virtual[np.maximum(m, 0)] * c, 0), axis=1)
    return np.asarray(tot)


def _judge_sets(ctx: Context, T: Mapping[str, RoleTable], idx: dict[str, np.ndarray], pools: Pools, pr: int,
                virtual):
    v = {r: T[r].v[idx[r]] for r in ctx.res_roles}
    tol = {r: T[r].tol[idx[r]] for r in ctx.res_roles}
    rating = {r: T[r].rating[idx[r]] for r in ctx.res_roles}
    ev = evaluate_resistors(ctx, v, tol, rating)
    keep = ev.keep
    if not len(keep):
        return None
    parts = [(T[r].members[idx[r][keep]], T[r].counts[idx[r][keep]]) for r in ctx.res_roles]
    ok, left = pools.check(parts, ctx.problem.units)
    if not ok.any():
        return None
    sel = np.flatnonzero(ok)
    ev.keep = keep[sel]
    for name in ("target", "rating"):
        setattr(ev, name, {k: a[sel] for k, a in getattr(ev, name).items()})
    ev.active = ev.active[sel]
    ev.vnode = {r: (a[sel], b[sel]) for r, (a, b) in ev.vnode.items()}
    ev.distance, ev.margin_r = ev.distance[sel], ev.margin_r[sel]
    ev.nominal = {k: a[sel] for k, a in ev.nominal.items()}
    bought = _bought([(m[sel], c[sel]) for m, c in parts], virtual)
    return RBatch(dict(T), {r: a[ev.keep] for r, a in idx.items()}, ev, pr, left[sel], bought)


def per_role(roles, tables) -> dict[str, Mapping[int, RoleTable]]:
    """{role: {count: RoleTable}} from tables shared by every role ({count: table}) or given per role
    (the shopping search gives a role that must take a bought part a table of those parts only)."""
    if any(isinstance(k, str) for k in tables):
        return {r: tables[r] for r in roles}
    return {r: tables for r in roles}


def _shapes(ctx: Context, roles, tables):
    tabs = per_role(roles, tables)
    choices = [[c for c in ctx.problem.counts_for(r) if c in tabs[r] and len(tabs[r][c])] for r in roles]
    for combo in itertools.product(*choices):
        yield dict(zip(roles, combo))


def resistor_batches(ctx: Context, rtables, pools: Pools, virtual, *, pruned: bool = True) -> list[RBatch]:
    """Every resistor set that passes the worst case, one batch per shape (tables as ``per_role`` takes)."""
    out = []
    tabs = per_role(ctx.res_roles, rtables)
    for shape in _shapes(ctx, ctx.res_roles, rtables):
        T = {r: tabs[r][c] for r, c in shape.items()}
        pr = sum(shape.values())
        chunks = candidate_sets(ctx, T) if pruned else _all_sets(T, ctx.res_roles)
        for idx in chunks:
            b = _judge_sets(ctx, T, idx, pools, pr, virtual)
            if b is not None:
                out.append(b)
    return out


def _all_sets(T: Mapping[str, RoleTable], roles, chunk: int = 400_000):
    """The naive enumeration: every combination of one candidate per role."""
    sizes = [len(T[r]) for r in roles]
    total = int(np.prod(sizes)) if sizes else 0
    for s in range(0, total, chunk):
        flat = np.arange(s, min(total, s + chunk))
        idx = {}
        for r, size in zip(reversed(roles), reversed(sizes)):
            idx[r] = flat % size
            flat = flat // size
        yield {r: idx[r] for r in roles}


resistor_sets_exhaustive = _all_sets


# --- capacitors ---------------------------------------------------------------------------------


class CapSide:
    """Capacitor candidates per count (shared by the roles, or per role: ``per_role``), and the
    machinery to complete resistor sets."""

    def __init__(self, ctx: Context, ctables, pools: Pools, virtual):
        self.ctx = ctx
        self.virtual = virtual
        self.tabs = {r: {c: t for c, t in ts.items() if len(t)} for r, ts in per_role(ctx.cap_roles, ctables).items()}
        self.pools = pools
        counts = {r: [c for c in ctx.problem.counts_for(r) if c in self.tabs[r]] for r in ctx.cap_roles}
        self.shapes = [dict(zip(ctx.cap_roles, combo)) for combo in itertools.product(*(counts[r] for r in ctx.cap_roles))]
        biggest = max((float(t.v.max()) for ts in self.tabs.values() for t in ts.values()), default=1.0)
        self.huge = max(1.0, HUGE_CAP_FACTOR * biggest)
        self.nominal = ctx.problem.guarantee == "nominal"
        # Scarce lines hold too few parts for every capacitor role: a line that q parts can stand in
        # for (its own and those of the lines covering it, ``pools``) can be named by at most
        # q // units roles (Hall's condition for that line), so at most ``shared`` roles take a
        # candidate with a scarce line.
        n_roles = len(ctx.cap_roles)
        units = ctx.problem.units
        ids = np.unique(np.concatenate([t.members.ravel() for ts in self.tabs.values() for t in ts.values()]
                                       + [np.zeros(0, np.int64)]))
        ids = ids[ids >= 0]
        slots = pools.upq[ids] // units
        self.scarce = np.zeros(len(pools.upq), bool)
        self.scarce[ids[slots < n_roles]] = True
        self.shared = int(min(n_roles, np.sum(slots[slots < n_roles])))
        # per count: candidates sorted by rating, with the running best low end from the top; over
        # all candidates, and over those that use no scarce line ("plenty")
        self._by_rating = {}
        for role, c, t in ((r, c, t) for r, ts in self.tabs.items() for c, t in ts.items()):
            low = t.v if self.nominal else t.lo
            plenty = ~np.any((t.members >= 0) & self.scarce[np.maximum(t.members, 0)], axis=1)
            for polar_ok in (True, False):
                for only_plenty in (False, True):
                    keep = np.ones(len(t), bool) if polar_ok else ~t.polarized
                    if only_plenty:
                        keep = keep & plenty
                    sel = np.flatnonzero(keep)
                    order = sel[np.argsort(t.rating[sel], kind="stable")]
                    best = np.maximum.accumulate(low[order][::-1])[::-1] if len(order) else np.zeros(0)
                    self._by_rating[(role, c, polar_ok, only_plenty)] = (t.rating[order], best)

    def may_complete(self, T, idx) -> np.ndarray:
        """False where even the largest capacitor each role may take misses the corner at the vertex
        of highest IE (a necessary condition, one evaluation instead of the whole box)."""
        ctx = self.ctx
        if not all(self.tabs.values()):
            return np.zeros(len(idx[ctx.res_roles[0]]), bool)
        top = {r: max(float((t.v if self.nominal else t.lo).max()) for t in ts.values()) for r, ts in self.tabs.items()}
        v = {r: T[r].v[idx[r]] for r in ctx.res_roles}
        tol = {r: T[r].tol[idx[r]] for r in ctx.res_roles}
        dc = vertex_dc(ctx, ctx.vertices[0], v, tol)
        return corner_ok(ctx, _stack1(dc), top)

    def _dcs(self, batch: RBatch, pos):
        ctx = self.ctx
        T = batch.tables
        v = {r: T[r].v[batch.idx[r][pos]] for r in ctx.res_roles}
        tol = {r: T[r].tol[batch.idx[r][pos]] for r in ctx.res_roles}
        return stacked_dc(ctx, v, tol)

    def lower_bounds(self, batch: RBatch, positions: np.ndarray) -> np.ndarray:
        """Fewest capacitor parts each set at ``positions`` could need (inf: no capacitors can do).

        Per role and count, the largest low end whose rating suits the node; the corner falls as
        any capacitance grows, so if those miss it every choice of that count does.  At most
        ``shared`` roles may take a candidate with a scarce line; the others are held to the rest."""
        ctx = self.ctx
        n = len(positions)
        lb = np.full(n, np.inf)
        if not n or not self.shapes:
            return lb
        dcs = self._dcs(batch, positions)
        margin = ctx.problem.conditions.cap_voltage_margin
        best = {}
        for role in ctx.cap_roles:
            lo_v, hi_v = (a[positions] for a in batch.ev.vnode[role])
            vmax = np.maximum(np.abs(lo_v), np.abs(hi_v))
            polar_ok = (lo_v > 0) | (hi_v < 0)
            need = vmax / margin
            for c in self.tabs[role]:
                for only_plenty in (False, True):
                    out = np.zeros(n)
                    for flag in (True, False):
                        ratings, top = self._by_rating[(role, c, flag, only_plenty)]
                        if not len(top):
                            val = np.zeros(n)
                        else:
                            k = np.searchsorted(ratings, need * (1 - 1e-12), side="left")
                            val = np.where(k < len(top), top[np.minimum(k, len(top) - 1)], 0.0)
                        sel = polar_ok if flag else ~polar_ok
                        out = np.where(sel, val, out)
                    best[(role, c, only_plenty)] = out
        order = sorted(self.shapes, key=lambda s: sum(s.values()))
        groups = list(itertools.combinations(ctx.cap_roles, self.shared))
        for shape in order:
            pc = sum(shape.values())
            todo = np.flatnonzero(lb > pc)
            if not len(todo):
                continue
            sub = _take(dcs, (slice(None), todo))
            ok = np.zeros(len(todo), bool)
            for group in groups:
                caps = {r: best[(r, shape[r], r not in group)][todo] for r in ctx.cap_roles}
                has = np.all(np.stack([caps[r] > 0 for r in ctx.cap_roles]), axis=0)
                ok |= corner_ok(ctx, sub, {r: np.where(has, caps[r], 1e-30) for r in ctx.cap_roles}) & has
            lb[todo[ok]] = pc
        return lb

    def complete(self, batch: RBatch, pos: int, pc: int | None, *, bounds: bool = True) -> Completion | None:
        """Best capacitors for one resistor set with exactly ``pc`` parts (None: any count)."""
        ctx = self.ctx
        dcs = self._dcs(batch, np.array([pos]))
        margin = ctx.problem.conditions.cap_voltage_margin
        cand = {}
        for role in ctx.cap_roles:
            lo_v, hi_v = (a[pos] for a in batch.ev.vnode[role])
            for c, t in self.tabs[role].items():
                m = cap_margin(lo_v, hi_v, t.rating, t.polarized, margin)
                ok = m >= 0
                if role == "CE" and ok.any():
                    # a bypass capacitor must bypass in the band: its own corner at or below f_low
                    # at every vertex (a smaller one only shelves the gain; docs/method.md)
                    sel = np.flatnonzero(ok)
                    low = (t.v if self.nominal else t.lo)[sel]
                    ok[sel] = bypasses(ctx, dcs, low)
                if bounds and ok.any():
                    sel = np.flatnonzero(ok)
                    low = (t.v if self.nominal else t.lo)[sel]
                    others = {r: np.full(len(sel), self.huge) for r in ctx.cap_roles}
                    others[role] = low
                    ok[sel] = corner_ok(ctx, dcs, others)
                sel = np.flatnonzero(ok)
                cand[(role, c)] = (sel, m[sel])
        best = None
        best_key = None
        for shape in self.shapes:
            n_parts = sum(shape.values())
            if pc is not None and n_parts != pc:
                continue
            lists = [cand[(r, shape[r])] for r in ctx.cap_roles]
            sizes = [len(s) for s, _ in lists]
            if not all(sizes):
                continue
            total = int(np.prod(sizes))
            step = max(1000, 4_000_000 // len(ctx.vertices))
            for s0 in range(0, total, step):
                flat = np.arange(s0, min(total, s0 + step))
                pick = {}
                for r, size in zip(reversed(ctx.cap_roles), reversed(sizes)):
                    pick[r] = flat % size
                    flat = flat // size
                ids = {r: cand[(r, shape[r])][0][pick[r]] for r in ctx.cap_roles}
                tabs = {r: self.tabs[r][shape[r]] for r in ctx.cap_roles}
                vals = {r: tabs[r].v[ids[r]] for r in ctx.cap_roles}
                tols = {r: tabs[r].tol[ids[r]] for r in ctx.cap_roles}
                ok = corner_ok(ctx, dcs, lowest_caps(ctx, vals, tols))
                if not ok.any():
                    continue
                parts = [(tabs[r].members[ids[r]], tabs[r].counts[ids[r]]) for r in ctx.cap_roles]
                sok, left = self.pools.check(parts, ctx.problem.units)
                ok &= sok
                if not ok.any():
                    continue
                nb = _bought(parts, self.virtual)
                mc = np.min(np.stack([cand[(r, shape[r])][1][pick[r]] for r in ctx.cap_roles]), axis=0)
                m_all = np.minimum(mc, batch.ev.margin_r[pos])
                s_all = np.minimum(left, batch.stock_left[pos])
                csum = np.sum(np.stack([vals[r] for r in ctx.cap_roles]), axis=0)
                sel = np.flatnonzero(ok)
                order = np.lexsort((csum[sel], -s_all[sel], -m_all[sel], nb[sel]))
                # exact ties on every number are settled by the canonical key
                first = sel[order[0]]
                tie = sel[(nb[sel] == nb[first]) & (m_all[sel] == m_all[first]) & (s_all[sel] == s_all[first])
                          & (csum[sel] == csum[first])]
                for j in tie:
                    canon = tuple(equivalent_key(tabs[r], int(ids[r][j])) for r in ctx.cap_roles)
                    key = (int(nb[j]), n_parts, -float(m_all[j]), -float(s_all[j]), float(csum[j]), canon)
                    if best_key is None or key < best_key:
                        best_key = key
                        best = Completion(
                            caps={r: (tabs[r], int(ids[r][j])) for r in ctx.cap_roles}, pc=n_parts,
                            bought=int(nb[j]),
                            margin_c=float(mc[j]), stock_left=float(left[j]), csum=float(csum[j]),
                            cap_margins={r: float(cand[(r, shape[r])][1][pick[r][j]]) for r in ctx.cap_roles})
        return best


def _stack1(dc):
    """One vertex's DCFigures as a stack of one vertex (a leading axis of length 1)."""
    return _take(dc, (None,))


def _take(dc, idx):
    from dataclasses import fields

    vals = {}
    for f in fields(dc):
        a = getattr(dc, f.name)
        if f.name == "inputs":
            vals[f.name] = {k: (np.asarray(x)[idx] if isinstance(x, np.ndarray) and x.ndim else x)
                            for k, x in a.items()}
        else:
            vals[f.name] = a[idx]
    return type(dc)(**vals)


# --- best-first search over resistor sets ------------------------------------------------------


def _res_canon(batch: RBatch, pos: int, ctx: Context) -> tuple:
    return tuple(equivalent_key(batch.tables[r], int(batch.idx[r][pos])) for r in ctx.res_roles)


def design_key(prefer: str, b: int, p: int, d: float, m: float, s: float, csum: float, canon: tuple) -> tuple:
    """The objective as a sortable tuple; ``b`` (parts to buy) is 0 except for shopping searches."""
    if prefer == "closest":
        return (b, d, p, -m, -s, csum, canon)
    return (b, p, d, -m, -s, csum, canon)


def _stock_side(ctx: Context, ctables, lines, virtual_ids, pools: Pools | None):
    """(pools, 0/1 flag per stock line standing for a purchase, the capacitor side) of one search."""
    if pools is None:
        pools = Pools.build(lines, exclude=virtual_ids)
    virtual = np.zeros(len(pools.qty), np.int64)
    virtual[list(virtual_ids)] = 1
    return pools, virtual, CapSide(ctx, ctables, pools, virtual)


def search_transistor(ctx: Context, transistor: StockLine, rtables, ctables, lines, top: int,
                      *, exhaustive: bool = False, bound: tuple | None = None, **kw) -> list[Found]:
    """The ``top`` best designs with this transistor (``TransistorSearch`` run to the end)."""
    if exhaustive:
        return exhaustive_search(ctx, transistor, rtables, ctables, lines, top, **kw)
    return TransistorSearch(ctx, transistor, rtables, ctables, lines, top, **kw).run(bound)


class TransistorSearch:
    """The best-first search for one transistor, resumable: ``run(bound, limit)`` goes on from where
    the last call stopped (``limit``: open no shape of more resistors than that)."""

    def __init__(self, ctx: Context, transistor: StockLine, rtables, ctables, lines, top: int,
                 *, virtual_ids=(), min_bought: int = 0, stats: dict | None = None, budget: int | None = None,
                 pools: Pools | None = None, work_budget: int | None = None):
        self._gen = self._search(ctx, transistor, rtables, ctables, lines, top, virtual_ids=virtual_ids,
                                 min_bought=min_bought, stats=stats, budget=budget, pools=pools,
                                 work_budget=work_budget)
        next(self._gen)

    def run(self, bound: tuple | None = None, limit: int | None = None) -> list[Found]:
        return self._gen.send((bound, limit))

    @staticmethod
    def _search(ctx: Context, transistor: StockLine, rtables, ctables, lines, top: int,
                *, virtual_ids=(), min_bought: int = 0, stats: dict | None = None, budget: int | None = None,
                pools: Pools | None = None, work_budget: int | None = None):
        """The generator behind ``TransistorSearch``: the ``top`` best designs with this transistor,
        at most one per resistor set, yielded (sorted) whenever it pauses.

        ``rtables`` are the resistor candidates per part count, shared by every role, or per role
        (``per_role``).

        ``virtual_ids`` are stock-line indices that stand for parts one could buy: the objective then
        starts with the number of such parts, and a set whose cheapest capacitors need a purchase is
        re-queued at the next count in case more parts mean fewer purchases.  ``min_bought`` is a
        known lower bound on the parts to buy (1 once the drawer alone is proven not to do).
        ``stats`` (a dict) receives the counts of sets looked at and whether ``budget`` (resistor sets
        enumerated) or ``work_budget`` (partial sets the bounds formed on the way) stopped the search
        before it had proven its answer.  It pauses when nothing on its heap can beat the ``top``-th
        best key known (its own designs', or the ``bound`` sent with ``run``: another transistor's),
        or when the next shape has more resistors than the ``limit`` sent; a later ``run`` goes on
        from there with a new bound and limit.
        """
        stats = {} if stats is None else stats
        budget = SET_BUDGET if budget is None else budget
        work_budget = WORK_BUDGET if work_budget is None else work_budget
        stats.setdefault("sets", 0)
        stats.setdefault("work", 0)
        stats.setdefault("truncated", False)
        pools, virtual, caps = _stock_side(ctx, ctables, lines, virtual_ids, pools)
        buying = bool(len(virtual_ids))
        prefer = ctx.problem.prefer

        def bkey(nb, p, d):
            return _bound_key(prefer, max(nb, min_bought), p, d)

        # Shapes (part counts per resistor role) are opened lazily in order of their part count: a
        # shape with pR resistors cannot give a design with fewer than pR + (one per capacitor role)
        # parts, so under fewest-parts it is opened only when the heap holds nothing better.  Inside a
        # shape, the sets that pass the bounds wait unjudged in order of (parts to buy, D), in chunks
        # whose bound is their first set's; judging and capacitor bounds happen when a chunk comes up.
        shapes = sorted(_shapes(ctx, ctx.res_roles, rtables), key=lambda sh: sum(sh.values()))
        min_caps = len(ctx.cap_roles)
        raws: list[tuple] = []
        batches: list[RBatch] = []
        orders: list[np.ndarray] = []
        heap = []
        counter = itertools.count()
        max_pc = max((sum(s.values()) for s in caps.shapes), default=0)

        def push(key, kind, ref, pos, p, found=None):
            heapq.heappush(heap, (key, next(counter), kind, ref, pos, p, found))

        tabs = per_role(ctx.res_roles, rtables)

        def open_shape(shape):
            T = {r: tabs[r][c] for r, c in shape.items()}
            pr = sum(shape.values())
            tally = [0]
            for idx in candidate_sets(ctx, T, tally):
                stats["sets"] += len(idx[ctx.res_roles[0]])
                stats["work"] += tally[0]
                tally[0] = 0
                if stats["sets"] > budget or stats["work"] > work_budget:
                    stats["truncated"] = True
                    return
                if not len(idx[ctx.res_roles[0]]):
                    continue
                v = {r: T[r].v[idx[r]] for r in ctx.res_roles}
                tol = {r: T[r].tol[idx[r]] for r in ctx.res_roles}
                dist = nominal_distance(ctx, v, tol)
                nb = _bought([(T[r].members[idx[r]], T[r].counts[idx[r]]) for r in ctx.res_roles], virtual)
                order = np.lexsort((dist, nb))
                raws.append((T, {r: a[order] for r, a in idx.items()}, dist[order], nb[order], pr))
                push_raw(len(raws) - 1, 0)

        def push_raw(ri, start):
            T, idx, dist, nb, pr = raws[ri]
            if start < len(dist):
                push(bkey(int(nb[start]), pr + min_caps, float(dist[start])), 0, ri, start, 0)

        def open_raw(ri, start):
            T, idx, dist, nb, pr = raws[ri]
            part = {r: a[start:start + JUDGE_CHUNK] for r, a in idx.items()}
            part = {r: a[caps.may_complete(T, part)] for r, a in part.items()}
            bt = _judge_sets(ctx, T, part, pools, pr, virtual) if len(part[ctx.res_roles[0]]) else None
            push_raw(ri, start + JUDGE_CHUNK)
            if bt is None:
                return
            batches.append(bt)
            orders.append(np.lexsort((bt.ev.distance, bt.bought)))
            push_lb(len(batches) - 1, 0)

        def push_lb(bi, start):
            bt, order = batches[bi], orders[bi]
            if start < len(order):
                q = order[start]
                push(bkey(int(bt.bought[q]), bt.pr + min_caps, float(bt.ev.distance[q])), 1, bi, start, 0)

        def open_lb(bi, start):
            bt, order = batches[bi], orders[bi]
            pos = order[start:start + LB_CHUNK]
            lb = caps.lower_bounds(bt, pos)
            for q, l in zip(pos, lb):
                if np.isfinite(l):
                    p = bt.pr + int(l)
                    push(bkey(int(bt.bought[q]), p, float(bt.ev.distance[q])), 2, bi, int(q), p)
            push_lb(bi, start + LB_CHUNK)

        out: list[Found] = []
        done: set[tuple[int, int]] = set()
        si = 0
        bound, limit = yield None
        while True:
            # the key to beat: the top-th best of this search's designs and the bound given
            own = sorted(f.key for f in out)[top - 1] if len(out) >= top else None
            beat = own if bound is None else bound if own is None else min(own, bound)
            # open every shape whose best possible key could come before the heap's top
            while si < len(shapes) and not stats["truncated"]:
                pr_shape = sum(shapes[si].values())
                p_min = pr_shape + min_caps
                if limit is not None and pr_shape > limit:
                    break
                if heap and prefer != "closest" and (0, p_min) > heap[0][0][:2]:
                    break
                if beat is not None and bkey(0, p_min, 0.0) > beat:
                    break  # shapes come in order of part count (and D >= 0): none after can beat it
                open_shape(shapes[si])
                si += 1
            if not heap or (beat is not None and heap[0][0] >= beat):
                bound, limit = yield sorted(out, key=lambda f: f.key)[:top]
                continue
            key, _, kind, ref, pos, p, found = heapq.heappop(heap)
            if kind == 0:
                open_raw(ref, pos)
                continue
            if kind == 1:
                open_lb(ref, pos)
                continue
            if (ref, pos) in done:
                continue
            if found is not None:
                out.append(found)
                done.add((ref, pos))
                continue
            bt = batches[ref]
            pc = p - bt.pr
            comp = caps.complete(bt, pos, pc)
            d = float(bt.ev.distance[pos])
            if comp is not None:
                f = _found(ctx, bt, pos, comp, transistor, prefer)
                push(f.key, 3, ref, pos, p, f)
            if (comp is None or (buying and comp.bought > 0)) and pc < max_pc:
                push(bkey(int(bt.bought[pos]), p + 1, d), 2, ref, pos, p + 1)


def exhaustive_search(ctx: Context, transistor: StockLine, rtables, ctables, lines, top: int,
                      *, virtual_ids=(), pools: Pools | None = None, **_ignored) -> list[Found]:
    """The naive enumeration (``--exhaustive``): every combination of one candidate per role, no
    bounds, each resistor set completed with its best capacitors of any count; the ``top`` best."""
    pools, virtual, caps = _stock_side(ctx, ctables, lines, virtual_ids, pools)
    found = []
    for b in resistor_batches(ctx, rtables, pools, virtual, pruned=False):
        for pos in range(len(b)):
            comp = caps.complete(b, pos, None, bounds=False)
            if comp is None:
                continue
            found.append(_found(ctx, b, pos, comp, transistor, ctx.problem.prefer))
    found.sort(key=lambda f: f.key)
    return found[:top]


def _bound_key(prefer: str, b: int, p: int, d: float) -> tuple:
    # a lower bound sorts before every exact key with the same (B, P, D): the −inf margin term
    return (b, d, p, -np.inf) if prefer == "closest" else (b, p, d, -np.inf)


def _found(ctx, b: RBatch, pos: int, comp: Completion, transistor: StockLine, prefer: str) -> Found:
    m = min(float(b.ev.margin_r[pos]), comp.margin_c)
    s = min(float(b.stock_left[pos]), comp.stock_left)
    canon = (transistor.index, _res_canon(b, pos, ctx),
             tuple(equivalent_key(t, i) for t, i in comp.caps.values()))
    key = design_key(prefer, int(b.bought[pos]) + comp.bought, b.pr + comp.pc, float(b.ev.distance[pos]), m, s,
                     comp.csum, canon)
    return Found(key, b, pos, comp, transistor)

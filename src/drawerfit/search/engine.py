"""The exact search: resistor sets in bands of the distance D, judged in bulk, then the best
capacitors for each, best first; memory bounded whatever the drawer.

Objective (lexicographic; smaller is better):

    fewest-parts:  (B, P, D, −M, −S, ΣC, canonical)      closest:  (B, D, P, −M, −S, ΣC, canonical)

B the parts to buy (shopping searches only), P the number of resistors and capacitors, D the
normalised distance of the nominal IE (and, for a common-emitter stage with a gain window, the
nominal gain) to the centres of their windows, √Σ((x − centre)/half-width)², M the smallest
relative margin to the ratings, S the fewest parts left after the build that could stand in for a
line the design names (``pools``), ΣC the total capacitance, canonical the stock lines used.

The space is split into *entries*: one transistor, one resistor shape (part count per role; for
triples, one value window per role), one band [d₀, d₁) of D, and (fewest-parts) one capacitor
count.  Every design an entry can give has a key at least its bound (B₀, P, d₀) (closest:
(B₀, d₀, P)), so entries are taken from a heap in order of their bounds, and the search ends when
the top-th best design found has a key below the next entry's bound: nothing left can beat it.
An entry enumerates the resistor sets of its shape that pass the bounds of ``joins`` and the
band's nominal windows (D < d₁ fixes the nominal IE and gain to narrow windows, so a band holds
few sets), keeps those with d₀ ≤ D, judges them over the tolerance box (``judge``) and against
the stock, and completes them with capacitors in order of (B, D) (``capacitors``).  It keeps at
most ``KEEP`` judged sets; when more pass, it keeps those of smallest D and hands the rest of its
band to a new entry.  Nothing is ever formed for the product of the roles' candidates: memory
grows with the drawer (the tables, the sorted (RE, RE2) sums) and with ``KEEP``, not with the
space.  A work budget ends the search with the bound still open (``stats["open"]``).
"""

from __future__ import annotations

import heapq
import itertools
from dataclasses import dataclass
from typing import Callable, Mapping

import numpy as np

from ..parts import StockLine
from .capacitors import CapacitorSide, Completion, _bought
from .judge import SearchContext, evaluate_resistors, mu_class, nominal_distance, tighten
from .joins import candidate_sets, role_ranges
from .naive_caps import SETS_PER_CALL, complete_many
from .narrowing import narrow_ranges
from .pools import Pools
from .tables import RoleTable, TripleWindow
from .windows import Band

__all__ = ["Completion", "FoundDesign", "Search", "exhaustive_search", "resistor_sets_exhaustive",
           "design_key", "SET_BUDGET", "WORK_BUDGET", "BANDS"]

JUDGE_CHUNK = 4096
LB_CHUNK = 256
KEEP = 200_000  # judged resistor sets one entry keeps at once
SMALL_SPACE = 4_000_000  # a shape of at most this many sets (before the bounds) is searched in one band
NONE_MEMO = 500_000  # (set, count) pairs remembered as impossible, so that no band tries them again
SET_BUDGET = 4_000_000  # resistor sets the searches may enumerate (after the bounds) before they give up proving
# partial sets the bounds may form and reject on the way (joins.candidate_sets' tally): about twenty
# seconds of pruning work, for specs whose bounds reject nearly everything but only late
WORK_BUDGET = 100_000_000
# the bands of the smallest margin μ (fewest-parts): from 1 down by halves to 2^-12, then to 0
# the bands of D (closest): a large drawer holds designs within 1e-5 of the centres, a small one at 0.1 to 0.5;
# a design's nominal IE lies inside the IE window (IE is monotone in every parameter of the box), so
# D rarely reaches 1, or √2 with a gain window
BANDS = (0.0,) + tuple(2.0 ** k for k in range(-16, 1, 2)) + (2.0, np.inf)


@dataclass
class ResistorBatch:
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
class FoundDesign:
    """One design: resistor set (batch, position) and its capacitors, with its objective key."""

    key: tuple
    batch: ResistorBatch
    pos: int
    completion: Completion
    transistor: StockLine


def _judge_sets(ctx: SearchContext, T: Mapping[str, RoleTable], idx: dict[str, np.ndarray], pools: Pools, pr: int,
                virtual):
    v = {r: T[r].v[idx[r]] for r in ctx.res_roles}
    tol = {r: T[r].tol[idx[r]] for r in ctx.res_roles}
    rating = {r: T[r].rating[idx[r]] for r in ctx.res_roles}
    ev = evaluate_resistors(ctx, v, tol, rating)
    keep = ev.keep
    if not len(keep):
        return None
    parts = [T[r].parts(idx[r][keep]) for r in ctx.res_roles]
    ok, left = pools.check(parts, ctx.problem.units)
    if not ok.any():
        return None
    sel = np.flatnonzero(ok)
    ev.keep = keep[sel]
    for name in ("target", "rating"):
        setattr(ev, name, {k: a[sel] for k, a in getattr(ev, name).items()})
    ev.active = ev.active[sel]
    ev.vnode = {r: (a[sel], b[sel]) for r, (a, b) in ev.vnode.items()}
    ev.distance, ev.margin_r, ev.mu = ev.distance[sel], ev.margin_r[sel], ev.mu[sel]
    ev.nominal = {k: a[sel] for k, a in ev.nominal.items()}
    bought = _bought([(m[sel], c[sel]) for m, c in parts], virtual)
    return ResistorBatch(dict(T), {r: a[ev.keep] for r, a in idx.items()}, ev, pr, left[sel], bought)


def per_role(roles, tables) -> dict[str, Mapping]:
    """{role: candidates} from candidates shared by every role (``tables.Candidates``, or a mapping
    {count: table}) or given per role (the shopping search gives a role that must take a bought part
    the candidates of those parts only)."""
    if any(isinstance(k, str) for k in tables):
        return {r: tables[r] for r in roles}
    return {r: tables for r in roles}


def _shapes(ctx: SearchContext, roles, tables) -> list[dict]:
    tabs = per_role(roles, tables)
    choices = [[c for c in ctx.problem.counts_for(r) if c in tabs[r]] for r in roles]
    return [dict(zip(roles, combo)) for combo in itertools.product(*choices)]


def _role_tables(cands, count: int) -> list:
    """The tables of one role and count: a list (triples come in value windows)."""
    if hasattr(cands, "tables"):
        return cands.tables(count)
    t = cands.get(count)
    return [t] if t is not None and len(t) else []


def _sub_shapes(tabs, shape, ranges=None, stats=None):
    """Every combination of one table (or triple window) per role, resolved lazily; with
    ``ranges`` (role -> (lo, hi) nominal values a feasible set can hold), triple windows outside
    them are skipped unbuilt; ``stats["work"]`` counts the triples built."""
    lists = []
    for r, c in shape.items():
        ts = _role_tables(tabs[r], c)
        if ranges is not None and r in ranges:
            lo, hi = ranges[r]
            ts = [t for t in ts if not isinstance(t, TripleWindow) or (t.hi >= lo and t.lo <= hi)]
        lists.append(ts)
    if not all(lists):
        return
    for combo in itertools.product(*lists):
        out = {}
        for r, t in zip(shape, combo):
            if isinstance(t, TripleWindow):
                before = t.space.built
                out[r] = t.table
                if stats is not None:
                    stats["work"] += t.space.built - before
            else:
                out[r] = t
        yield out


def resistor_batches(ctx: SearchContext, rtables, pools: Pools, virtual, *, pruned: bool = True) -> list[ResistorBatch]:
    """Every resistor set that passes the worst case, one batch per shape (tables as ``per_role`` takes)."""
    out = []
    tabs = per_role(ctx.res_roles, rtables)
    for shape in _shapes(ctx, ctx.res_roles, rtables):
        pr = sum(shape.values())
        for T in _sub_shapes(tabs, shape):
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


def design_key(prefer: str, b: int, p: int, d: float, mu: float, s: float, total_capacitance: float, canon: tuple) -> tuple:
    """The objective as a sortable tuple; ``b`` (parts to buy) is 0 except for shopping searches,
    ``mu`` the smallest margin of every target and rating."""
    if prefer == "closest":
        return (b, d, p, -float(mu_class(mu)), -s, total_capacitance, canon)
    return (b, p, -float(mu_class(mu)), d, -s, total_capacitance, canon)


def run_key(b: int, p: int, d: float, mu: float, s: float, total_capacitance: float, canon: tuple) -> tuple:
    """The key of a search at a margin floor (``Search(mu_floor=...)``): parts, then the distance,
    then the margin class; ``design_key`` of the answer once the floor's class is the top one."""
    return (b, p, d, -float(mu_class(mu)), -s, total_capacitance, canon)


def final_key(k: tuple) -> tuple:
    """``run_key`` reordered as ``design_key`` (fewest parts): (b, p, −class, d, ...)."""
    return (k[0], k[1], k[3], k[2], *k[4:])


def _res_canon(batch: ResistorBatch, pos: int, ctx: SearchContext) -> tuple:
    return tuple(batch.tables[r].key(int(batch.idx[r][pos])) for r in ctx.res_roles)


def _found(ctx, b: ResistorBatch, pos: int, comp: Completion, transistor: StockLine, prefer: str,
           floor_mode: bool = False) -> FoundDesign:
    m = min(float(b.ev.mu[pos]), comp.margin_c)
    s = min(float(b.stock_left[pos]), comp.stock_left)
    canon = (transistor.index, _res_canon(b, pos, ctx),
             tuple(t.key(i) for t, i in comp.caps.values()))
    keyf = run_key if floor_mode else (lambda *a: design_key(prefer, *a))
    key = keyf(int(b.bought[pos]) + comp.bought, b.pr + comp.pc, float(b.ev.distance[pos]), m, s, comp.total_capacitance, canon)
    return FoundDesign(key, b, pos, comp, transistor)


def _next_band(d: float) -> float:
    for x in BANDS:
        if x > d:
            return x
    return np.inf


class Search:
    """The best-first search over entries (module docstring) for one or more transistors.

    ``transistors``: (stock line, SearchContext) pairs.  ``rtables``/``ctables``: candidates shared by the
    roles or per role (``per_role``).  ``virtual_ids``: stock lines standing for parts one could buy
    (the objective then starts with their number); ``min_bought`` a known lower bound on it.
    ``budget`` bounds the resistor sets enumerated, ``work_budget`` the partial sets the bounds
    form; past either the search stops and ``stats["truncated"]`` is set, with ``stats["open"]`` the
    bound below which every design has been found.  ``on_step(note=...)`` hears of progress.

    An entry is (transistor, shape, a, b, capacitor count, on the chain): its band runs from its
    best end a to b: for fewest-parts a band of the smallest margin μ, from μ = a down to b; for
    closest a band of the distance D, from D = a up to b.
    """

    def __init__(self, transistors, rtables, ctables, lines, top: int, *, virtual_ids=(), min_bought: int = 0,
                 pools: Pools | None = None, budget: int | None = None, work_budget: int | None = None,
                 on_step: Callable | None = None, mu_floor: float | None = None, p_max: int | None = None):
        self.top = top
        # at a margin floor θ: designs whose every margin is at least θ, fewest parts then nearest the
        # targets' centres (bounds of the problem tightened by θ, distance bands); at most p_max parts
        self.mu_floor = mu_floor
        self.p_max = p_max
        self.pools = pools if pools is not None else Pools.build(lines, exclude=virtual_ids)
        self.virtual = np.zeros(len(self.pools.qty), np.int64)
        self.virtual[list(virtual_ids)] = 1
        self.buying = bool(len(virtual_ids))
        self.min_bought = min_bought
        self.budget = SET_BUDGET if budget is None else budget
        self.work_budget = WORK_BUDGET if work_budget is None else work_budget
        self.on_step = on_step
        self.rtables = rtables
        self.trs = []
        for tr, ctx in transistors:
            caps = CapacitorSide(ctx, ctables, self.pools, self.virtual)
            shapes = sorted(_shapes(ctx, ctx.res_roles, rtables), key=lambda s: sum(s.values()))
            self.trs.append((tr, ctx, caps, shapes))
        self.stats = {"sets": 0, "work": 0, "judged": 0, "entries": 0, "truncated": False, "open": None}
        self.found: dict[tuple, FoundDesign] = {}  # (transistor, resistor set) -> its best design
        self._best: list = []  # the ``top`` best (key, set) of ``found``, kept as they change
        self._cache: dict = {}
        self._tight: dict = {}  # (transistor, level) -> the tightened context (``judge.tighten``)
        self._none: set = set()  # (transistor, resistor set, count) that no capacitors of that count complete

    # --- keys and bands --------------------------------------------------------------------------

    def _parts_first(self, ti: int) -> bool:
        return self.trs[ti][1].problem.prefer != "closest"

    def _bkey(self, ti: int, b: int, p: int, best_end: float) -> tuple:
        """The bound of designs with ``b`` bought, ``p`` parts, and distance at least ``best_end``."""
        b = max(b, self.min_bought)
        if self._parts_first(ti):
            return (b, p, best_end, -np.inf)
        return (b, best_end, p, -np.inf)

    def _beat(self):
        if len(self._best) < self.top:
            return None
        return self._best[self.top - 1][0]

    def results(self) -> list[FoundDesign]:
        return [self.found[at] for _, at in self._best]

    def _record(self, at: tuple, f: FoundDesign) -> None:
        """File ``f`` as the best design of set ``at`` (a set's key only ever improves, so the top
        list needs only this set's old entry replaced)."""
        self.found[at] = f
        best = [x for x in self._best if x[1] != at] + [(f.key, at)]
        best.sort(key=lambda x: x[0])
        self._best = best[:self.top]

    def _ctx_at(self, ti: int, level: float):
        """The context whose bounds hold every set with margins at least ``level`` (None: none can)."""
        key = (ti, level)
        if key not in self._tight:
            self._tight[key] = tighten(self.trs[ti][1], level * (1 - 1e-9))  # a grid value k/100 may
            # stand for a margin a rounding below it
        return self._tight[key]

    # --- the loop --------------------------------------------------------------------------------

    def run(self) -> list[FoundDesign]:
        heap: list = []
        counter = itertools.count()
        self._push = lambda key, entry: heapq.heappush(heap, (key, next(counter), entry))
        for ti, (tr, ctx, caps, shapes) in enumerate(self.trs):
            pcs = sorted({sum(s.values()) for s in caps.shapes})
            if not pcs:
                continue
            for si, shape in enumerate(shapes):
                pr = sum(shape.values())
                self._push(self._bkey(ti, 0, pr + pcs[0], BANDS[0]), (ti, si, BANDS[0], BANDS[1], None, True))
        while heap:
            beat = self._beat()
            if beat is not None and heap[0][0] >= beat:
                break
            key, _, entry = heapq.heappop(heap)
            if self.p_max is not None and key[1] > self.p_max:
                continue  # more parts than the caller allows
            self.stats["entries"] += 1
            self._entry(key, entry)
            if self.stats["truncated"]:
                self.stats["open"] = min(key, heap[0][0]) if heap else key
                break
        return self.results()

    def _spent(self) -> bool:
        st = self.stats
        if st["sets"] > self.budget or st["work"] > self.work_budget:
            st["truncated"] = True
        return st["truncated"]

    def _entry(self, key: tuple, entry: tuple) -> None:
        ti, si, a, b, pc, chain = entry
        tr, ctx, caps, shapes = self.trs[ti]
        shape = shapes[si]
        pr = sum(shape.values())
        if a == BANDS[0] and b == BANDS[1] and self._is_small(ti, si):
            b = np.inf  # bands only pay where the space is large
        judged = self.stats["sets"]
        kept, cut, in_band = self._enumerate(ti, shape, a, b)
        judged = self.stats["sets"] - judged
        if self.stats["truncated"]:
            self._complete(ti, kept, pc, b)  # the best found so far, not proven
            return
        pcs = sorted({sum(s.values()) for s in caps.shapes})
        # what this entry leaves: the rest of its band; on the chain of the fewest capacitors, the
        # next band (or, when the band held sets that no capacitors could complete, the rest of the
        # space in one entry: nothing to order and nothing to hold); and the same band again at the
        # next capacitor count its sets need
        p_here = pr + (pc if pc is not None else pcs[0])
        if cut != b:
            self._push(self._bkey(ti, 0, p_here, cut), (ti, si, cut, b, pc, chain))
        elif chain and b != np.inf:
            nxt = np.inf if in_band and not judged else _next_band(b)
            self._push(self._bkey(ti, 0, p_here, b), (ti, si, b, nxt, pc, chain))
        need = self._complete(ti, kept, pc, b)
        if need is not None:
            self._push(self._bkey(ti, 0, pr + need, a), (ti, si, a, cut, need, False))

    def _is_small(self, ti: int, si: int) -> bool:
        """Whether the shape's space (the product of its tables' sizes) is at most SMALL_SPACE."""
        tr, ctx, caps, shapes = self.trs[ti]
        tabs = per_role(ctx.res_roles, self.rtables)
        size = 1
        for r, c in shapes[si].items():
            ts = _role_tables(tabs[r], c)
            if len(ts) != 1 or isinstance(ts[0], TripleWindow):
                return False
            size *= len(ts[0])
        return size <= SMALL_SPACE

    def _enumerate(self, ti: int, shape: dict, a: float, b: float):
        """(judged sets, cut, sets in the band): the sets of one entry that can give a design in its
        band, at most about KEEP of them (the best; ``cut`` is where the rest begins, b if none).

        The band's windows of D < b and the sets with a <= D < b; at a margin floor θ, the windows of
        the problem tightened by θ and the sets whose every margin is at least θ."""
        tr, ctx, caps, _ = self.trs[ti]
        tabs = per_role(ctx.res_roles, self.rtables)
        if self.mu_floor:
            bound_ctx = self._ctx_at(ti, self.mu_floor)
            if bound_ctx is None:
                return [], b, 0
            band, floor = (Band(bound_ctx, b) if np.isfinite(b) else None), self.mu_floor * (1 - 1e-9)
        else:
            bound_ctx, band, floor = ctx, (Band(ctx, b) if np.isfinite(b) else None), 0.0
        pr = sum(shape.values())
        kept: list[ResistorBatch] = []
        n_kept = 0
        cut = b
        in_band = 0
        tally = [0]
        ranges = narrow_ranges(bound_ctx, tabs, shape, role_ranges(bound_ctx), _role_tables)
        if ranges is None:  # no set of this shape passes the bounds (narrowing.py)
            return [], b, 0
        for T in _sub_shapes(tabs, shape, ranges, self.stats):
            if self._spent():
                return kept, cut, in_band
            for idx in candidate_sets(bound_ctx, T, tally, band, self._cache):
                n = len(idx[ctx.res_roles[0]])
                self.stats["work"] += tally[0] + n
                tally[0] = 0
                if self._spent():
                    return kept, cut, in_band
                if not n:
                    continue
                d = nominal_distance(ctx, {r: T[r].v[idx[r]] for r in ctx.res_roles})
                sel = np.flatnonzero((d >= a) & (d < cut))
                in_band += len(sel)
                for s0 in range(0, len(sel), JUDGE_CHUNK):
                    part = {r: arr[sel[s0:s0 + JUDGE_CHUNK]] for r, arr in idx.items()}
                    part = {r: arr[caps.may_complete(T, part, floor)] for r, arr in part.items()}
                    if not len(part[ctx.res_roles[0]]):
                        continue
                    # a set counts once, in its band, when it is worth judging
                    self.stats["sets"] += len(part[ctx.res_roles[0]])
                    self.stats["judged"] += len(part[ctx.res_roles[0]])
                    bt = _judge_sets(ctx, T, part, self.pools, pr, self.virtual)
                    if bt is not None and self.mu_floor:
                        bt = _keep_where(bt, bt.ev.mu >= floor)
                    if bt is None:
                        continue
                    kept.append(bt)
                    n_kept += len(bt)
                if n_kept > 2 * KEEP and not self.buying:
                    kept, cut = _trim(kept, KEEP)
                    n_kept = sum(len(x) for x in kept)
                if self.on_step is not None:
                    self.on_step(note=self._note())
            self.stats["work"] += tally[0]  # what the joins did after their last chunk
            tally[0] = 0
        if n_kept > KEEP and not self.buying:
            kept, cut = _trim(kept, KEEP)
        return kept, cut, in_band

    def _note(self) -> str:
        st = self.stats
        best = self.results()
        text = f"{st['sets']:,} resistor sets, {st['judged']:,} judged"
        if best:
            f = best[0]
            mu = min(float(f.batch.ev.mu[f.pos]), f.completion.margin_c)
            text += f", best so far {f.batch.pr + f.completion.pc} parts, smallest margin {mu:+.1%}"
        return text

    def _complete(self, ti: int, kept: list[ResistorBatch], pc: int | None, floor_end: float) -> int | None:
        """Capacitors for the kept sets, best first, while their bound can beat the answer; with a
        count ``pc``, the next count some of them need (None: none)."""
        tr, ctx, caps, _ = self.trs[ti]
        if not kept:
            return None
        mu_floor = self.mu_floor * (1 - 1e-9) if self.mu_floor else 0.0
        # every set is completed once, with capacitors that keep its margins at the floor: its best
        # ones give its exact key, in distance order within its bought parts
        b_all = np.concatenate([bt.bought for bt in kept])
        d_all = np.concatenate([bt.ev.distance for bt in kept])
        which = np.concatenate([np.full(len(bt), i) for i, bt in enumerate(kept)])
        where = np.concatenate([np.arange(len(bt)) for bt in kept])
        order = np.lexsort((d_all, b_all))
        pcs = sorted({sum(s.values()) for s in caps.shapes})
        max_pc = pcs[-1]
        need = None

        def later(c):
            nonlocal need
            nxt = [y for y in pcs if y >= c]
            if nxt and (need is None or nxt[0] < need):
                need = nxt[0]

        for c0 in range(0, len(order), LB_CHUNK):
            chunk = order[c0:c0 + LB_CHUNK]
            first = chunk[0]
            bt0 = kept[which[first]]
            p_lo = bt0.pr + (pc if pc is not None else pcs[0])
            beat = self._beat()
            if beat is not None and self._bkey(ti, int(b_all[first]), p_lo, float(d_all[first])) >= beat:
                return need
            lbs = np.empty(len(chunk))
            for i in np.unique(which[chunk]):
                m = which[chunk] == i
                lbs[m] = caps.lower_bounds(kept[i], where[chunk][m], mu_floor)
            for q, lb in zip(chunk, lbs):
                bt, pos = kept[which[q]], int(where[q])
                bq = int(b_all[q])
                if not np.isfinite(lb):
                    continue
                if pc is not None and lb > pc:
                    later(int(lb))
                    continue
                first_pc = pc if pc is not None else int(lb)
                beat = self._beat()
                if beat is not None and self._bkey(ti, bq, bt.pr + first_pc, float(d_all[q])) >= beat:
                    continue
                at = (ti, _res_canon(bt, pos, ctx))
                have = self.found.get(at)
                if have is not None and not (self.buying and have.completion.bought > 0):
                    continue
                done = False
                for c in ([pc] if pc is not None else range(first_pc, max_pc + 1)):
                    if (at, c) in self._none:
                        continue
                    comp = caps.complete(bt, pos, c, mu_floor)
                    if comp is None:
                        if len(self._none) < NONE_MEMO:
                            self._none.add((at, c))
                        continue
                    f = _found(ctx, bt, pos, comp, tr, ctx.problem.prefer, self.mu_floor is not None)
                    if have is None or f.key < have.key:
                        self._record(at, f)
                        have = f
                    if not (self.buying and comp.bought > 0):
                        done = True
                        break
                if pc is not None and not done:
                    later(pc + 1)
            if self.on_step is not None:
                self.on_step(note=self._note())
        return need


def _keep_where(bt: ResistorBatch, ok: np.ndarray) -> ResistorBatch | None:
    sel = np.flatnonzero(ok)
    if not len(sel):
        return None
    return bt if len(sel) == len(bt) else _take_batch(bt, sel)


def _trim(kept: list[ResistorBatch], n: int) -> tuple[list[ResistorBatch], float]:
    """The best n sets (whole ties kept), and where the rest begins: those below the n-th smallest D."""
    x = np.concatenate([bt.ev.distance for bt in kept])
    cut = float(np.partition(x, n)[n])
    if not np.any(x < cut):  # more than n sets share the best value: keep them all
        cut = float(np.nextafter(cut, np.inf))
    out = []
    for bt in kept:
        sel = np.flatnonzero(bt.ev.distance < cut)
        if len(sel):
            out.append(_take_batch(bt, sel))
    return out, cut


def _take_batch(b: ResistorBatch, sel: np.ndarray) -> ResistorBatch:
    ev = b.ev
    ev2 = type(ev)(keep=ev.keep[sel], target={k: a[sel] for k, a in ev.target.items()},
                   rating={k: a[sel] for k, a in ev.rating.items()}, active=ev.active[sel],
                   vnode={r: (x[sel], y[sel]) for r, (x, y) in ev.vnode.items()}, distance=ev.distance[sel],
                   margin_r=ev.margin_r[sel], nominal={k: a[sel] for k, a in ev.nominal.items()}, mu=ev.mu[sel])
    return ResistorBatch(b.tables, {r: a[sel] for r, a in b.idx.items()}, ev2, b.pr, b.stock_left[sel], b.bought[sel])



def exhaustive_search(ctx: SearchContext, transistor: StockLine, rtables, ctables, lines, top: int,
                      *, virtual_ids=(), pools: Pools | None = None, **_ignored) -> list[FoundDesign]:
    """The naive enumeration (``--exhaustive``): every combination of one candidate per role, no
    bounds, each resistor set completed with its best capacitors of any count (``naive_caps``, many
    sets at once); the ``top`` best."""
    if pools is None:
        pools = Pools.build(lines, exclude=virtual_ids)
    virtual = np.zeros(len(pools.qty), np.int64)
    virtual[list(virtual_ids)] = 1
    caps = CapacitorSide(ctx, ctables, pools, virtual)
    found = []
    for b in resistor_batches(ctx, rtables, pools, virtual, pruned=False):
        for p0 in range(0, len(b), SETS_PER_CALL):
            positions = np.arange(p0, min(len(b), p0 + SETS_PER_CALL))
            for pos, comp in zip(positions.tolist(), complete_many(caps, b, positions)):
                if comp is not None:
                    found.append(_found(ctx, b, pos, comp, transistor, ctx.problem.prefer))
            if len(found) > 4 * top + 4096:  # only the ``top`` best are kept
                found.sort(key=lambda f: f.key)
                del found[top:]
    found.sort(key=lambda f: f.key)
    return found[:top]

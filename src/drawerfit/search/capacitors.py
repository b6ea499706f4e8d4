"""The capacitor side of the design search: the fewest capacitors a resistor set can need, and the
best capacitors for it.

Every whole-stage corner falls as any capacitance grows (docs/method.md), so the corner target is
an up-set in the capacitors' judged values (their low ends under the worst-case guarantee).  That
makes the best capacitors for one resistor set a small problem: with the objective's terms in
order (bought parts, the smallest rating margin, the fewest parts left after the build, total
capacitance, the stock lines used), the two "smallest" terms are found by thresholds (a level is
reachable exactly when the largest candidate of each role that meets it passes the corner), and
the total capacitance by walking the staircase of the up-set's lower boundary (``least_sum``),
so the corner is evaluated on about n₁·(n₂ + n₃) combinations instead of n₁·n₂·n₃.  The stock
terms are relaxed to each role alone; the answer is then checked with the parts of all roles
together (``Pools``), and in the rare case that sharing a line changes it, the shape is decided
by the plain enumeration (``complete_naive``), which is also what ``--exhaustive`` uses.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass

import numpy as np

from ..analysis import core
from .corner import CornerTest, least_sum, take_dc
from .judge import SearchContext, bypasses, cap_margin, mu_class, stacked_dc, vertex_dc
from .pools import Pools
from .tables import RoleTable

__all__ = ["CapacitorSide", "Completion", "take_dc", "HUGE_CAP_FACTOR", "CAP_TRIPLE_MAX"]

HUGE_CAP_FACTOR = 10.0
CAP_TRIPLE_MAX = 2_000_000  # capacitor triples built at most; beyond, shapes with them are not searched
NAIVE_MAX = 4096  # a shape with at most this many combinations is simply enumerated
CORNER_SLACK = 1e-6  # the corner test at a margin's threshold is loosened by this much (above the root
# search's 1e-7), and the exact margins of what passes are then computed and compared


@dataclass(frozen=True)
class Completion:
    """The capacitors chosen for one resistor set, with the figures of the whole design."""

    caps: dict  # role -> (RoleTable, index)
    pc: int
    bought: int
    margin_c: float
    stock_left: float
    total_capacitance: float
    cap_margins: dict
    corner_margin: float = np.inf  # (f_low − worst-case corner)/f_low

def _bought(parts, virtual) -> np.ndarray:
    """Parts per design taken from lines that are only shopping suggestions."""
    tot = 0
    for m, c in parts:
        tot = tot + np.sum(np.where(m >= 0, virtual[np.maximum(m, 0)] * c, 0), axis=1)
    return np.asarray(tot)


class _Role:
    """The candidates one role may take for one resistor set (after the checks on the role alone)."""

    def __init__(self, table: RoleTable, idx, low, v, m, nb, side: "CapacitorSide"):
        self.table, self.idx, self.low, self.v, self.m, self.nb = table, idx, low, v, m, nb
        self._side = side
        self._left = None

    @property
    def members(self) -> np.ndarray:
        return self.table.members[self.idx]

    @property
    def counts(self) -> np.ndarray:
        return self.table.counts[self.idx]

    @property
    def left(self) -> np.ndarray:
        """Parts left that could stand in, this role alone (the relaxation of the joint stock term)."""
        if self._left is None:
            _, _, self._left = self._side.pools.usage([(self.members, self.counts)], self._side.ctx.problem.units)
        return self._left

    def take(self, sel) -> "_Role":
        out = _Role(self.table, self.idx[sel], self.low[sel], self.v[sel], self.m[sel], self.nb[sel], self._side)
        if self._left is not None:
            out._left = self._left[sel]
        return out

    def __len__(self) -> int:
        return len(self.idx)


class CapacitorSide:
    """Capacitor candidates per role and count (built lazily), and the machinery to complete
    resistor sets.  ``ctables``: candidates shared by the roles (``tables.Candidates``) or per role."""

    def __init__(self, ctx: SearchContext, ctables, pools: Pools, virtual):
        from .engine import per_role

        self.ctx = ctx
        self.virtual = virtual
        self.pools = pools
        self.cands = per_role(ctx.cap_roles, ctables)
        self.nominal = ctx.problem.guarantee == "nominal"
        self.skipped = False  # a shape needed triples of capacitors too many to build
        self._tabs: dict[tuple[str, int], RoleTable | None] = {}
        counts = {r: [c for c in ctx.problem.counts_for(r) if c in self.cands[r]] for r in ctx.cap_roles}
        self.shapes = [dict(zip(ctx.cap_roles, combo)) for combo in itertools.product(*(counts[r] for r in ctx.cap_roles))]
        singles = [self.table(r, 1) for r in ctx.cap_roles]
        biggest = max((float(t.v.max()) for t in singles if t is not None and len(t)), default=1.0)
        self.huge = max(1.0, HUGE_CAP_FACTOR * biggest)
        # Scarce lines hold too few parts for every capacitor role: a line that q parts can stand in
        # for (its own and those of the lines covering it, ``pools``) can be named by at most
        # q // units roles (Hall's condition for that line), so at most ``shared`` roles take a
        # candidate with a scarce line.
        n_roles = len(ctx.cap_roles)
        units = ctx.problem.units
        ids = np.unique(np.concatenate([c.pool.idx for c in self.cands.values() if getattr(c, "pool", None) is not None]
                                       + [np.zeros(0, np.int64)]))
        slots = pools.upq[ids] // units if len(ids) else np.zeros(0, np.int64)
        self.scarce = np.zeros(len(pools.upq), bool)
        self.scarce[ids[slots < n_roles]] = True
        self.shared = int(min(n_roles, np.sum(slots[slots < n_roles])))
        self._by_rating: dict = {}

    # --- tables ----------------------------------------------------------------------------------

    def table(self, role: str, count: int) -> RoleTable | None:
        """The whole table of ``count`` parts for ``role`` (None: none, or triples too many to build)."""
        key = (role, count)
        if key not in self._tabs:
            cands = self.cands[role]
            t = None
            if count in cands:
                if count == 3 and hasattr(cands, "triple_count") and cands.triple_count() > CAP_TRIPLE_MAX:
                    t = None
                else:
                    t = cands[count]
            self._tabs[key] = t if t is not None and len(t) else None
        return self._tabs[key]

    def _low(self, t: RoleTable) -> np.ndarray:
        return t.v if self.nominal else t.lo

    def _top_low(self, role: str, count: int) -> float:
        """An upper bound on the judged value of any ``count``-part candidate of ``role``: a
        network of k capacitors is at most k times its largest member."""
        t = self.table(role, 1)
        return 0.0 if t is None else count * float(self._low(t).max())

    def _rating_steps(self, role: str, c: int, polar_ok: bool, only_plenty: bool):
        key = (role, c, polar_ok, only_plenty)
        if key not in self._by_rating:
            t = self.table(role, c)
            if t is None:
                self._by_rating[key] = None
            else:
                low = self._low(t)
                keep = np.ones(len(t), bool) if polar_ok else ~t.polarized
                if only_plenty:
                    keep &= ~np.any((t.members >= 0) & self.scarce[np.maximum(t.members, 0)], axis=1)
                sel = np.flatnonzero(keep)
                order = sel[np.argsort(t.rating[sel], kind="stable")]
                best = np.maximum.accumulate(low[order][::-1])[::-1] if len(order) else np.zeros(0)
                self._by_rating[key] = (t.rating[order], best)
        return self._by_rating[key]

    # --- bounds ----------------------------------------------------------------------------------

    def may_complete(self, T, idx, floor: float = 0.0) -> np.ndarray:
        """False where even the largest capacitors each role may take miss the corner (at the margin
        ``floor``: at f_low·(1 − floor)) at the vertex of highest IE (a necessary condition, one
        evaluation instead of the whole box)."""
        ctx = self.ctx
        n = len(idx[ctx.res_roles[0]])
        if not self.shapes:
            return np.zeros(n, bool)
        top = {r: max(self._top_low(r, c) for c in {s[r] for s in self.shapes}) for r in ctx.cap_roles}
        if not all(top.values()):
            return np.zeros(n, bool)
        v = {r: T[r].v[idx[r]] for r in ctx.res_roles}
        tol = {r: T[r].tol[idx[r]] for r in ctx.res_roles}
        dc = vertex_dc(ctx, ctx.vertices[0], v, tol)
        dc1 = take_dc(dc, (None,))
        m = core.meets_corner(dc1, c1=top["C1"], c2=top["C2"], ce=top.get("CE", 0.0),
                              f_target=ctx.problem.targets.f_low * (1 - floor))
        return np.all(m, axis=0)

    def _dcs(self, batch, pos):
        ctx = self.ctx
        T = batch.tables
        v = {r: T[r].v[batch.idx[r][pos]] for r in ctx.res_roles}
        tol = {r: T[r].tol[batch.idx[r][pos]] for r in ctx.res_roles}
        return stacked_dc(ctx, v, tol)

    def lower_bounds(self, batch, positions: np.ndarray, floor: float = 0.0) -> np.ndarray:
        """Fewest capacitor parts each set at ``positions`` could need for margins of at least
        ``floor`` (inf: no capacitors can do).

        Per role and count, the largest low end whose rating suits the node (for triples, three
        times the largest single part); the corner falls as any capacitance grows, so if those miss
        it every choice of that count does.  At most ``shared`` roles may take a candidate with a
        scarce line; the others are held to the rest."""
        ctx = self.ctx
        n = len(positions)
        lb = np.full(n, np.inf)
        if not n or not self.shapes:
            return lb
        dcs = self._dcs(batch, positions)
        margin = ctx.problem.conditions.cap_voltage_margin * (1 - floor)
        f_target = ctx.problem.targets.f_low * (1 - floor)
        best = {}

        def top(role, c, only_plenty, need, polar_ok):
            if c == 3 and self.table(role, 3) is None:
                t1 = self.table(role, 1)
                if t1 is None:
                    return np.zeros(n)
                low = self._low(t1)
                return np.where(polar_ok, 3.0 * float(low.max()),
                                3.0 * float(low[~t1.polarized].max(initial=0.0)))
            out = np.zeros(n)
            for flag in (True, False):
                steps = self._rating_steps(role, c, flag, only_plenty)
                if steps is None or not len(steps[1]):
                    val = np.zeros(n)
                else:
                    ratings, tops = steps
                    k = np.searchsorted(ratings, need * (1 - 1e-12), side="left")
                    val = np.where(k < len(tops), tops[np.minimum(k, len(tops) - 1)], 0.0)
                out = np.where(polar_ok if flag else ~polar_ok, val, out)
            return out

        vnode = {}
        for role in ctx.cap_roles:
            lo_v, hi_v = (a[positions] for a in batch.ev.vnode[role])
            vnode[role] = (np.maximum(np.abs(lo_v), np.abs(hi_v)) / margin, (lo_v > 0) | (hi_v < 0))
        groups = list(itertools.combinations(ctx.cap_roles, self.shared))
        for shape in sorted(self.shapes, key=lambda s: sum(s.values())):
            pc = sum(shape.values())
            todo = np.flatnonzero(lb > pc)
            if not len(todo):
                continue
            for role in ctx.cap_roles:
                for only_plenty in (False, True):
                    k = (role, shape[role], only_plenty)
                    if k not in best:
                        best[k] = top(role, shape[role], only_plenty, *vnode[role])
            sub = take_dc(dcs, (slice(None), todo))
            ok = np.zeros(len(todo), bool)
            for group in groups:
                caps = {r: best[(r, shape[r], r not in group)][todo] for r in ctx.cap_roles}
                has = np.all(np.stack([caps[r] > 0 for r in ctx.cap_roles]), axis=0)
                m = core.meets_corner(sub, c1=np.where(has, caps["C1"], 1e-30), c2=np.where(has, caps["C2"], 1e-30),
                                      ce=np.where(has, caps["CE"], 1e-30) if "CE" in caps else 0.0,
                                      f_target=f_target)
                ok |= np.all(m, axis=0) & has
            lb[todo[ok]] = pc
        return lb

    # --- completion --------------------------------------------------------------------------------

    def _roles(self, batch, pos, dcs, corner: CornerTest | None, bounds: bool, floor: float = 0.0) -> dict:
        """{(role, count): _Role} of the candidates that pass the checks on the role alone, with a
        voltage margin of at least ``floor`` (and, with ``bounds``, a corner margin of at least it
        when the other capacitors are huge)."""
        ctx = self.ctx
        margin = ctx.problem.conditions.cap_voltage_margin
        out = {}
        for role in ctx.cap_roles:
            lo_v, hi_v = (a[pos] for a in batch.ev.vnode[role])
            for c in {s[role] for s in self.shapes}:
                t = self.table(role, c)
                if t is None:
                    if c == 3 and 3 in self.cands[role]:
                        self.skipped = True
                    continue
                m = cap_margin(lo_v, hi_v, t.rating, t.polarized, margin)
                ok = m >= floor
                low = self._low(t)
                if role == "CE" and ok.any():
                    # a bypass capacitor must bypass in the band: its own corner at or below f_low
                    # at every vertex (a smaller one only shelves the gain; docs/method.md)
                    sel = np.flatnonzero(ok)
                    ok[sel] = bypasses(ctx, dcs, low[sel])
                if bounds and ok.any():
                    sel = np.flatnonzero(ok)
                    caps = {r: np.full(len(sel), self.huge) for r in ctx.cap_roles}
                    caps[role] = low[sel]
                    ok[sel] = corner.ok(caps, ctx.problem.targets.f_low * (1 - floor))
                sel = np.flatnonzero(ok)
                nb = _bought([(t.members[sel], t.counts[sel])], self.virtual)
                out[(role, c)] = _Role(t, sel, low[sel], t.v[sel], m[sel], nb, self)
        return out

    def _key(self, batch, pos, shape, chosen: dict, roles: dict, left: float | None = None,
             cm: float | None = None):
        """The exact completion of one combination (role -> position in its _Role), or None when the
        drawer cannot give the parts of all roles together (``left``: already known to be drawable,
        with that many parts left; ``cm``: its corner margin, if known).  Key: (bought, parts, −μ,
        −parts left, ΣC, lines) with μ the smallest margin of the set and the capacitors."""
        ctx = self.ctx
        rs = {r: roles[(r, shape[r])] for r in ctx.cap_roles}
        if left is None:
            parts = [(rs[r].table.members[[rs[r].idx[chosen[r]]]], rs[r].table.counts[[rs[r].idx[chosen[r]]]])
                     for r in ctx.cap_roles]
            ok, lf = self.pools.check(parts, ctx.problem.units)
            if not ok[0]:
                return None
            left = float(lf[0])
        if cm is None:
            cm = float(self._corner.margin({r: rs[r].low[[chosen[r]]] for r in ctx.cap_roles})[0])
        nb = int(sum(rs[r].nb[chosen[r]] for r in ctx.cap_roles))
        mc = min([float(rs[r].m[chosen[r]]) for r in ctx.cap_roles] + [cm])
        mu = min(mc, float(batch.ev.mu[pos]))
        s_all = min(left, float(batch.stock_left[pos]))
        total_capacitance = float(np.sum(np.stack([rs[r].v[[chosen[r]]] for r in ctx.cap_roles]), axis=0)[0])
        canon = tuple(rs[r].table.key(int(rs[r].idx[chosen[r]])) for r in ctx.cap_roles)
        n_parts = sum(shape.values())
        key = (nb, n_parts, -float(mu_class(mu)), -s_all, total_capacitance, canon)
        comp = Completion(caps={r: (rs[r].table, int(rs[r].idx[chosen[r]])) for r in ctx.cap_roles}, pc=n_parts,
                          bought=nb, margin_c=mc, stock_left=left, total_capacitance=total_capacitance,
                          cap_margins={r: float(rs[r].m[chosen[r]]) for r in ctx.cap_roles}, corner_margin=cm)
        return key, comp

    def complete(self, batch, pos: int, pc: int | None, floor: float = 0.0) -> Completion | None:
        """Best capacitors for one resistor set with exactly ``pc`` parts (None: any count), among
        those whose margins (voltage, corner) are at least ``floor``; None if there are none."""
        ctx = self.ctx
        dcs = self._dcs(batch, np.array([pos]))
        corner = self._corner = CornerTest(ctx, dcs)
        corner.rank({r: np.array([self.huge]) for r in ctx.cap_roles})
        roles = self._roles(batch, pos, dcs, corner, bounds=True, floor=floor)
        best = None
        for shape in self.shapes:
            if pc is not None and sum(shape.values()) != pc:
                continue
            if any((r, shape[r]) not in roles or not len(roles[(r, shape[r])]) for r in ctx.cap_roles):
                continue
            got = self._best_in_shape(batch, pos, shape, roles, corner, floor)
            if got is not None and (best is None or got[0] < best[0]):
                best = got
        return None if best is None else best[1]

    def _best_in_shape(self, batch, pos, shape, roles, corner: CornerTest, floor: float = 0.0):
        """The best combination of one shape: thresholds, the staircase, then the check with the
        parts of all roles together (the plain enumeration when that check changes the answer)."""
        ctx = self.ctx
        names = ctx.cap_roles
        rs = {r: roles[(r, shape[r])] for r in names}
        if int(np.prod([len(rs[r]) for r in names])) <= NAIVE_MAX:
            return self._naive_shape(batch, pos, shape, roles, corner, floor)
        m_r, s_r = float(batch.ev.mu[pos]), float(batch.stock_left[pos])
        nb_levels = sorted(set(itertools.product(*(np.unique(rs[r].nb).tolist() for r in names))), key=sum)
        found = None
        for nbv in nb_levels:
            if found is not None and sum(nbv) > found[0][0]:
                break
            sub = {r: rs[r].take(rs[r].nb == nb) for r, nb in zip(names, nbv)}
            got = self._relaxed_best(sub, m_r, s_r, corner, floor)
            if got is None:
                continue
            key_relaxed, combos = got
            exact = []
            for combo in combos:
                chosen = {r: int(np.flatnonzero(rs[r].idx == sub[r].idx[combo[r]])[0]) for r in names}
                k = self._key(batch, pos, shape, chosen, roles)
                if k is not None:
                    exact.append(k)
            best = min(exact, key=lambda kc: kc[0]) if exact else None
            if best is None or best[0][:5] != (sum(nbv), sum(shape.values())) + key_relaxed:
                return self._naive_shape(batch, pos, shape, roles, corner, floor)
            if found is None or best[0] < found[0]:
                found = best
        return found

    def _relaxed_best(self, rs: dict, m_r: float, s_r: float, corner: CornerTest, floor: float = 0.0):
        """((−μ, −σ, Σv), combos): the best relaxed key over combinations of ``rs`` (stock judged
        role by role) and every combination (role -> position) that may reach it; None: none passes.

        μ is the smallest of the set's own margin ``m_r``, the capacitors' voltage margins and the
        corner margin.  For a level L of the voltage margins, the candidates meeting it are C(L), and
        the best corner margin among their combinations is that of the largest candidate of each
        role, cm(L), non-decreasing as L falls; so μ* = max over levels of min(L, cm(L)), found by
        bisection.  The combinations reaching it are those of C(μ*) whose corner passes at
        f_low·(1 − μ*) (its own corner margin is then checked exactly by the caller)."""
        names = list(rs)
        if any(not len(rs[r]) for r in names):
            return None
        f_low = corner.f
        loose = 1 + CORNER_SLACK
        mq = {r: np.minimum(rs[r].m, m_r) for r in names}
        sq = {r: np.minimum(rs[r].left, s_r) for r in names}

        def tops(mask):
            return {r: np.array([rs[r].low[mask[r]].max()]) for r in names}

        levels = np.unique(np.concatenate([mq[r] for r in names]))[::-1]
        levels = levels[levels >= floor]
        if not len(levels):
            return None

        def at(level):
            mask = {r: mq[r] >= level for r in names}
            if any(not mask[r].any() for r in names):
                return None, -np.inf
            return mask, float(corner.margin(tops(mask))[0])

        # μ(j) = min(level j, cm(level j)); levels fall with j while cm rises: bisect the crossing
        lo, hi = 0, len(levels) - 1
        while lo < hi:
            mid = (lo + hi) // 2
            _, cm = at(levels[mid])
            if cm >= levels[mid]:
                hi = mid
            else:
                lo = mid + 1
        best_mu = -np.inf
        for j in {lo - 1, lo}:
            if 0 <= j < len(levels):
                _, cm = at(levels[j])
                best_mu = max(best_mu, min(float(levels[j]), cm))
        best_mu = float(mu_class(best_mu))  # the objective's grid: any combination on it ties
        if best_mu < floor:
            return None
        base = {r: mq[r] >= best_mu for r in names}
        f_target = f_low * (1 - best_mu) * loose

        def feasible(mask):
            if any(not mask[r].any() for r in names):
                return False
            return bool(corner.ok(tops(mask), f_target)[0])

        if not feasible(base):
            return None
        s_levels = np.unique(np.concatenate([sq[r][base[r]] for r in names]))[::-1]
        lo, hi = 0, len(s_levels) - 1
        while lo < hi:  # the first (highest) stock level that is feasible
            mid = (lo + hi) // 2
            if feasible({r: base[r] & (sq[r] >= s_levels[mid]) for r in names}):
                hi = mid
            else:
                lo = mid + 1
        sigma = float(s_levels[lo])
        keep = {r: np.flatnonzero(base[r] & (sq[r] >= sigma)) for r in names}
        total, combos = least_sum({r: rs[r].low[keep[r]] for r in names}, {r: rs[r].v[keep[r]] for r in names},
                                   corner, f_target)
        if not combos:
            return None
        return (-best_mu, -sigma, total), [{r: int(keep[r][c[r]]) for r in names} for c in combos]

    def _naive_shape(self, batch, pos, shape, roles, corner: CornerTest, floor: float = 0.0):
        """The plain enumeration of one shape's combinations: the exact answer whatever the stock.
        Corner margins (a root search per vertex) are computed only for combinations whose other
        terms can still beat the best found."""
        ctx = self.ctx
        names = ctx.cap_roles
        rs = {r: roles[(r, shape[r])] for r in names}
        sizes = [len(rs[r]) for r in names]
        total = int(np.prod(sizes))
        best = None
        step = max(1000, 4_000_000 // len(ctx.vertices))
        f_floor = corner.f * (1 - floor)
        mu_r = float(batch.ev.mu[pos])
        for s0 in range(0, total, step):
            flat = np.arange(s0, min(total, s0 + step))
            pick = {}
            for r, size in zip(reversed(names), reversed(sizes)):
                pick[r] = flat % size
                flat = flat // size
            ok = corner.ok({r: rs[r].low[pick[r]] for r in names}, f_floor)
            if not ok.any():
                continue
            parts = [(rs[r].members[pick[r]], rs[r].counts[pick[r]]) for r in names]
            sok, left = self.pools.check(parts, ctx.problem.units)
            ok &= sok
            if not ok.any():
                continue
            nb = np.sum(np.stack([rs[r].nb[pick[r]] for r in names]), axis=0)
            a = np.minimum(np.min(np.stack([rs[r].m[pick[r]] for r in names]), axis=0), mu_r)
            s_all = np.minimum(left, float(batch.stock_left[pos]))
            total_capacitance = np.sum(np.stack([rs[r].v[pick[r]] for r in names]), axis=0)
            sel = np.flatnonzero(ok)
            sel = sel[np.lexsort((-a[sel], nb[sel]))]
            # in blocks, best first by (bought, the margin before the corner's): a block whose first
            # combination cannot beat the best found ends the chunk; corner margins by blocks
            for b0 in range(0, len(sel), 512):
                blk = sel[b0:b0 + 512]
                k0 = blk[0]
                if best is not None and (nb[k0], -a[k0]) > (best[0][0], best[0][2]):
                    break
                cm = corner.margin({r: rs[r].low[pick[r][blk]] for r in names})
                mu = mu_class(np.minimum(a[blk], cm))
                order = np.lexsort((total_capacitance[blk], -s_all[blk], -mu, nb[blk]))
                first = order[0]
                tie = order[(nb[blk][order] == nb[blk][first]) & (mu[order] == mu[first])
                            & (s_all[blk][order] == s_all[blk][first]) & (total_capacitance[blk][order] == total_capacitance[blk][first])]
                for t in tie:
                    k = blk[t]
                    got = self._key(batch, pos, shape, {r: int(pick[r][k]) for r in names}, roles, float(left[k]),
                                    float(cm[t]))
                    if got is not None and (best is None or got[0] < best[0]):
                        best = got
        return best

    def complete_naive(self, batch, pos: int) -> Completion | None:
        """Best capacitors of any count by plain enumeration, with no bound (``--exhaustive``)."""
        ctx = self.ctx
        dcs = self._dcs(batch, np.array([pos]))
        corner = self._corner = CornerTest(ctx, dcs)
        roles = self._roles(batch, pos, dcs, corner, bounds=False)
        best = None
        for shape in self.shapes:
            if any((r, shape[r]) not in roles or not len(roles[(r, shape[r])]) for r in ctx.cap_roles):
                continue
            got = self._naive_shape(batch, pos, shape, roles, corner)
            if got is not None and (best is None or got[0] < best[0]):
                best = got
        return None if best is None else best[1]

"""The corner test of one resistor set, and the least total capacitance that passes it.

``CornerTest`` judges capacitor combinations against the f_low target vertex by vertex (the
hardest vertex first, so most combinations are dropped after one evaluation) and gives each
combination's exact corner margin.  ``least_sum`` walks the staircase of the up-set of passing
combinations (docs/method.md, "Capacitors") to find the least total capacitance without trying
every combination.
"""

from __future__ import annotations

import itertools
from dataclasses import fields

import numpy as np

from ..analysis import core
from .judge import SearchContext

__all__ = ["CornerTest", "least_sum", "csum_exact", "take_dc", "CORNER_BLOCK", "SMALL_CORNER"]

CORNER_BLOCK = 1 << 18  # (vertex, combination) pairs of one corner evaluation
SMALL_CORNER = 1 << 13  # below this many (vertex, combination) pairs, every vertex is evaluated at once

def take_dc(dc, idx):
    """The DCFigures ``dc`` indexed by ``idx`` (arrays and the broadcast inputs alike)."""
    vals = {}
    for f in fields(dc):
        a = getattr(dc, f.name)
        if f.name == "inputs":
            vals[f.name] = {k: (np.asarray(x)[idx] if isinstance(x, np.ndarray) and x.ndim else x)
                            for k, x in a.items()}
        else:
            vals[f.name] = a[idx]
    return type(dc)(**vals)



class CornerTest:
    """The corner test of one resistor set, vertex by vertex: a combination is dropped at the
    first vertex it fails, and the vertices are visited hardest first."""

    def __init__(self, ctx: SearchContext, dcs):
        self.ctx = ctx
        self.f = ctx.problem.targets.f_low
        self.dcs = dcs
        self.n_v = dcs.ie.shape[0]
        self.order = list(range(self.n_v))
        self._stacks: dict = {}

    def rank(self, caps) -> None:
        """Order the vertices by how close one combination (the largest) comes to failing there."""
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            mag = core._Magnitude(self.dcs, caps["C1"], caps["C2"], caps.get("CE", 0.0))
            r = np.asarray(mag((2 * np.pi * self.f) ** 2) / self.dcs.gain ** 2).reshape(self.n_v, -1)
        worst = np.nan_to_num(np.min(r, axis=1), nan=-np.inf)
        self.order = [int(v) for v in np.argsort(worst, kind="stable")]

    def margin(self, caps) -> np.ndarray:
        """The corner margin (f_low − f_worst)/f_low of each combination, f_worst the highest
        whole-stage corner over the vertices (−inf where a vertex has none: not active)."""
        n = len(caps["C1"])
        out = np.empty(n)
        for c0 in range(0, n, max(1, CORNER_BLOCK // (8 * self.n_v))):
            sl = slice(c0, c0 + max(1, CORNER_BLOCK // (8 * self.n_v)))
            sub = {r: a[sl][None, :] for r, a in caps.items()}
            f = core.low_corner(self.dcs, c1=sub["C1"], c2=sub["C2"], ce=sub.get("CE", 0.0)).f_low
            worst = np.max(np.where(np.isnan(f), np.inf, f), axis=0)
            out[sl] = (self.f - worst) / self.f
        return out

    def ok(self, caps, f_target: float | None = None) -> np.ndarray:
        """True where the corner is at or below ``f_target`` (default f_low) at every vertex (caps:
        role -> (n,) values): the hardest vertex first, then the others at once for what passed it."""
        f_target = self.f if f_target is None else f_target
        n = len(caps["C1"])
        alive = np.arange(n)
        first, rest = self.order[:1], self.order[1:]
        for group in ((self.order,) if n * self.n_v <= SMALL_CORNER else (first, rest)):
            if not len(alive) or not group:
                continue
            for c0 in range(0, len(alive), max(1, CORNER_BLOCK // len(group))):
                part = alive[c0:c0 + max(1, CORNER_BLOCK // len(group))]
                dc = self._stack(group)
                sub = {r: a[part][None, :] for r, a in caps.items()}
                m = core.meets_corner(dc, c1=sub["C1"], c2=sub["C2"], ce=sub.get("CE", 0.0), f_target=f_target)
                bad = part[~np.all(m, axis=0)]
                if len(bad):
                    alive = np.setdiff1d(alive, bad, assume_unique=True)
        out = np.zeros(n, bool)
        out[alive] = True
        return out

    def _stack(self, group):
        key = tuple(group)
        if key not in self._stacks:
            self._stacks[key] = take_dc(self.dcs, (np.asarray(group), slice(None)))
        return self._stacks[key]


def least_sum(low: dict, v: dict, corner: CornerTest, f_target: float | None = None):
    """(least Σv, every combination reaching it) over combinations that pass the corner.

    The corner passes on an up-set of the judged values ``low``.  Candidates of one role with the
    same (low, v) are one point; per point of the first role, the lower boundary of the other
    roles' up-set is walked as a staircase (sorted by low: where a combination passes, the last
    role's index goes down; where it fails, the middle role's goes up), so that each step is one
    corner test, vectorised over the first role's points."""
    names = list(low)
    pts, members = {}, {}
    for r in names:
        arr = np.stack([low[r], v[r]], axis=1)
        uniq, inv = np.unique(arr, axis=0, return_inverse=True)  # sorted by low, then v
        pts[r] = uniq
        members[r] = [np.flatnonzero(inv.reshape(-1) == k) for k in range(len(uniq))]
    last = names[-1]
    l3, v3 = pts[last][:, 0], pts[last][:, 1]
    n3 = len(l3)
    # the least v over every point at or above position p of the last role (sorted by low)
    suf = np.minimum.accumulate(v3[::-1])[::-1]
    firsts = names[:-1]
    if len(firsts) == 1:
        # two roles: binary search the last role's threshold for each point of the first
        a = firsts[0]
        lo_i = np.zeros(len(pts[a]), np.int64)
        hi_i = np.full(len(pts[a]), n3, np.int64)  # n3: none passes
        while True:
            act = np.flatnonzero(lo_i < hi_i)
            if not len(act):
                break
            mid = (lo_i[act] + hi_i[act]) // 2
            ok = corner.ok({a: pts[a][act, 0], last: l3[mid]}, f_target)
            hi_i[act[ok]] = mid[ok]
            lo_i[act[~ok]] = mid[~ok] + 1
        thr = {(int(i),): int(lo_i[i]) for i in range(len(pts[a]))}
    else:
        # three roles: for each point of the first, walk the (middle, last) staircase
        a, b = firsts
        na, nb_ = len(pts[a]), len(pts[b])
        p2 = np.zeros(na, np.int64)
        p3 = np.full(na, n3 - 1, np.int64)
        live = np.ones(na, bool)
        thr = {}
        while live.any():
            act = np.flatnonzero(live)
            ok = corner.ok({a: pts[a][act, 0], b: pts[b][p2[act], 0], last: l3[p3[act]]}, f_target)
            for i, good in zip(act.tolist(), ok.tolist()):
                if good:
                    if p3[i] == 0:  # every later middle point passes with the smallest last point
                        for j in range(p2[i], nb_):
                            thr[(i, j)] = 0
                        live[i] = False
                    else:
                        p3[i] -= 1
                else:
                    thr[(i, int(p2[i]))] = int(p3[i]) + 1
                    p2[i] += 1
                    if p2[i] >= nb_:
                        live[i] = False
    best, out = np.inf, []
    for head, p in thr.items():
        if p >= n3:
            continue
        total = csum_exact([pts[r][h, 1] for r, h in zip(firsts, head)] + [suf[p]])
        if total < best:
            best, out = total, [(head, p)]
        elif total == best:
            out.append((head, p))
    combos = []
    for head, p in out:
        heads = [pts[r][h, 1] for r, h in zip(firsts, head)]
        for q in range(p, n3):
            if csum_exact(heads + [v3[q]]) != best:
                continue
            lists = [members[r][h] for r, h in zip(firsts, head)] + [members[last][q]]
            for pick in itertools.product(*lists):
                combos.append(dict(zip(names, (int(x) for x in pick))))
    return best, combos


def csum_exact(values) -> float:
    """Σv the way the objective adds it (role by role, left to right), so that ties are exact."""
    return float(np.sum(np.stack([np.asarray([x], float) for x in values]), axis=0)[0])


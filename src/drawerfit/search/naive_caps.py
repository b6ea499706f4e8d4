"""The plain enumeration of capacitors for many resistor sets at once (``--exhaustive``).

``CapacitorSide.complete_naive`` enumerates every capacitor combination of one resistor set; the
exhaustive cross-check calls it for every resistor set that passes, a Python loop of some 10⁵ sets
on a 15-line drawer with pairs.  ``complete_many`` gives the same answers for a whole batch of sets:
every combination of every shape is still considered (no bound on the capacitors), but each test is
one array operation over (set, combination) pairs, and the objective's terms are settled in its
order so that the costly ones are computed only where they decide:

1. the parts to buy and the part count (per combination, known in advance): per set, the first
   level (bought, parts) at which some combination passes the corner at f_low (the same test as the
   single-set enumeration) is the set's level;
2. the margin class of min(voltage margins, corner margin): from the highest class down, a
   combination can reach class θ only if its corner passes at f_low·(1 − θ), tested a little loosely
   (``LOOSE``, above the root search's precision) so that nothing of class θ is missed;
3. the stock left, the total capacitance and the canonical key decide among what reached the class;
4. the corner margin of the chosen combination is then found by the root search (``CornerTest``)
   and its class checked: a set where the loose test let through a combination whose exact class is
   lower (a margin within about 10⁻⁶ of a class boundary) is decided by ``complete_naive`` itself.

So the answers are ``complete_naive``'s (tests/search: ``search_equals_exhaustive``); the single-set
enumeration stays as the reference and the fallback.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..analysis import core
from .capacitors import Completion, _bought
from .corner import take_dc
from .judge import MU_CLASSES, cap_margin, mu_class

__all__ = ["complete_many", "SETS_PER_CALL"]

ELEMS = 1 << 21  # (vertex, pair) elements of one array evaluation
SETS_PER_CALL = 4096  # resistor sets the exhaustive loop hands over at once
LOOSE = 1e-6  # the class tests pass a corner up to f·(1 − θ)·(1 + LOOSE)


@dataclass
class _Shape:
    """Every capacitor combination of one shape (role -> part count), with its set-free terms."""

    shape: dict
    pc: int
    pick: dict  # role -> (K,) positions in the role's table
    ok: np.ndarray  # the drawer gives the parts of all roles together
    left: np.ndarray
    nb: np.ndarray
    tc: np.ndarray
    rank: np.ndarray  # order of the canonical keys over every shape (the last tie-break)


def _shapes(side) -> list[_Shape]:
    """The combinations of every shape, built once per ``CapacitorSide``."""
    got = getattr(side, "_naive_shapes", None)
    if got is not None:
        return got
    names = side.ctx.cap_roles
    out, canon = [], []
    for shape in side.shapes:
        tabs = {r: side.table(r, shape[r]) for r in names}
        if any(t is None for t in tabs.values()):
            continue
        sizes = [len(tabs[r]) for r in names]
        flat = np.arange(int(np.prod(sizes)))
        pick = {}
        for r, size in zip(reversed(names), reversed(sizes)):
            pick[r] = flat % size
            flat = flat // size
        parts = [(tabs[r].members[pick[r]], tabs[r].counts[pick[r]]) for r in names]
        ok, left = side.pools.check(parts, side.ctx.problem.units)
        nb = np.sum(np.stack([_bought([(tabs[r].members, tabs[r].counts)], side.virtual)[pick[r]] for r in names]), axis=0)
        tc = np.sum(np.stack([tabs[r].v[pick[r]] for r in names]), axis=0)
        keys = [tuple(tabs[r].key(int(pick[r][k])) for r in names) for k in range(len(ok))]
        canon.append(keys)
        out.append(_Shape(shape, sum(shape.values()), pick, np.asarray(ok, bool), np.asarray(left, float),
                          np.asarray(nb, np.int64), tc, np.zeros(len(ok), np.int64)))
    flat_keys = [(key, i, k) for i, keys in enumerate(canon) for k, key in enumerate(keys)]
    for rank, (_, i, k) in enumerate(sorted(flat_keys)):
        out[i].rank[k] = rank
    side._naive_shapes = out
    return out


def _role_checks(side, batch, positions, dcs) -> dict:
    """(role, count) -> (table, judged values, voltage margins (M, K), passes alone (M, K)): the
    checks on one role (``CapacitorSide._roles`` without bounds), for every set at once."""
    ctx = side.ctx
    margin = ctx.problem.conditions.cap_voltage_margin
    wide = None
    out = {}
    for role in ctx.cap_roles:
        lo_v, hi_v = (np.asarray(a)[positions][:, None] for a in batch.ev.vnode[role])
        for c in {s[role] for s in side.shapes}:
            t = side.table(role, c)
            if t is None:
                if c == 3 and 3 in side.cands[role]:
                    side.skipped = True
                continue
            m = cap_margin(lo_v, hi_v, t.rating[None, :], t.polarized[None, :], margin)
            ok = m >= 0.0
            low = side._low(t)
            if role == "CE" and ok.any():
                # the bypass capacitor's own corner at or below f_low at every vertex (judge.bypasses)
                if wide is None:
                    wide = take_dc(dcs, (Ellipsis, None))
                one = np.ones(1)
                _c1, _c2, f_ce = core._own_corners(wide, one, one, low[None, None, :])
                ok &= np.all(f_ce <= ctx.problem.targets.f_low * (1 + 1e-12), axis=0)
            out[(role, c)] = (t, low, m, ok)
    return out


def _meets(dc3, caps: dict, f_target) -> np.ndarray:
    """The corner test at every vertex, sets by combinations: ``dc3`` of shape (vertices, sets, 1),
    ``caps`` role -> (combinations,) judged values; (sets, combinations)."""
    m = core.meets_corner(dc3, c1=caps["C1"][None, None, :], c2=caps["C2"][None, None, :],
                          ce=caps["CE"][None, None, :] if "CE" in caps else 0.0, f_target=f_target)
    return np.all(m, axis=0)


def _margins(side, dcs, si, caps: dict) -> np.ndarray:
    """The exact corner margins (``CornerTest.margin``) of pairs (set ``si``, capacitors ``caps``)."""
    n_v = dcs.ie.shape[0]
    f = side.ctx.problem.targets.f_low
    step = max(1, ELEMS // (8 * max(1, n_v)))
    out = np.empty(len(si))
    for s0 in range(0, len(si), step):
        sl = slice(s0, s0 + step)
        dc = take_dc(dcs, (slice(None), si[sl]))
        fl = core.low_corner(dc, c1=caps["C1"][sl][None, :], c2=caps["C2"][sl][None, :],
                             ce=caps["CE"][sl][None, :] if "CE" in caps else 0.0).f_low
        worst = np.max(np.where(np.isnan(fl), np.inf, fl), axis=0)
        out[sl] = (f - worst) / f
    return out


@dataclass
class _Block:
    """Sets ``rows`` (positions in the call) by combinations ``ks`` of shape ``i``, at one level."""

    i: int
    rows: np.ndarray
    ks: np.ndarray
    valid: np.ndarray  # (rows, ks): passes alone, drawable together, corner at f_low
    caps: dict = None
    a: np.ndarray = None  # the smallest of the set's margin and the capacitors' voltage margins
    reach: np.ndarray = None


def complete_many(side, batch, positions) -> list[Completion | None]:
    """``side.complete_naive(batch, pos)`` for every ``pos`` in ``positions``."""
    ctx = side.ctx
    names = ctx.cap_roles
    positions = np.asarray(positions, np.int64)
    n_sets = len(positions)
    out: list[Completion | None] = [None] * n_sets
    if not n_sets or not side.shapes:
        return out
    shapes = _shapes(side)
    dcs = side._dcs(batch, positions)
    n_v = dcs.ie.shape[0]
    per = _role_checks(side, batch, positions, dcs)
    f_low = ctx.problem.targets.f_low
    mu_r = np.asarray(batch.ev.mu, float)[positions]
    s_r = np.asarray(batch.stock_left, float)[positions]
    usable = [i for i, s in enumerate(shapes) if all((r, s.shape[r]) in per for r in names)]

    # 1. the (bought, parts) level of each set, and the combinations that pass there
    levels = sorted({(int(nb), shapes[i].pc) for i in usable for nb in np.unique(shapes[i].nb[shapes[i].ok])})
    open_ = np.ones(n_sets, bool)
    blocks: list[_Block] = []
    for nb_l, pc_l in levels:
        sets = np.flatnonzero(open_)
        if not len(sets):
            break
        for i in usable:
            s = shapes[i]
            if s.pc != pc_l:
                continue
            ks = np.flatnonzero(s.ok & (s.nb == nb_l))
            if not len(ks):
                continue
            caps = {r: per[(r, s.shape[r])][1][s.pick[r][ks]] for r in names}
            step = max(1, ELEMS // max(1, len(ks) * n_v))
            for c0 in range(0, len(sets), step):
                ch = sets[c0:c0 + step]
                valid = np.ones((len(ch), len(ks)), bool)
                for r in names:
                    valid &= per[(r, s.shape[r])][3][ch][:, s.pick[r][ks]]
                if not valid.any():
                    continue
                valid &= _meets(take_dc(dcs, (slice(None), ch, None)), caps, f_low)
                if valid.any():
                    blocks.append(_Block(i, ch, ks, valid, caps))
        for b in blocks:
            open_[b.rows[b.valid.any(axis=1)]] = False

    # 2. the margin class of each set: the highest class some combination may reach
    for b in blocks:
        s = shapes[b.i]
        a = np.repeat(mu_r[b.rows][:, None], len(b.ks), axis=1)
        for r in names:
            a = np.minimum(a, per[(r, s.shape[r])][2][b.rows][:, s.pick[r][b.ks]])
        b.a = a
        b.reach = np.zeros_like(b.valid)
    best = np.full(n_sets, -np.inf)
    for theta in sorted(MU_CLASSES, reverse=True):
        decided = []
        for b in blocks:
            need = b.valid & (mu_class(b.a) >= theta) & np.isneginf(best[b.rows])[:, None]
            rows = np.flatnonzero(need.any(axis=1))
            if not len(rows):
                continue
            if theta > 0.0:  # (every valid combination passed the corner at f_low)
                need[rows] &= _meets(take_dc(dcs, (slice(None), b.rows[rows], None)), b.caps,
                                     f_low * (1 - theta) * (1 + LOOSE))
            b.reach |= need
            decided.append(b.rows[need.any(axis=1)])
        for rows in decided:
            best[rows] = theta
    for b in blocks:  # a set whose own margin is below 0: every combination ties at −inf
        b.reach |= b.valid & np.isneginf(best[b.rows])[:, None]

    # 3. per set, the best by (−stock left, total capacitance, canonical key) among what reached
    cols = {f: [] for f in ("set", "i", "k", "a", "s", "tc", "rank")}
    for b in blocks:
        rr, kk = np.nonzero(b.reach)
        s = shapes[b.i]
        k = b.ks[kk]
        cols["set"].append(b.rows[rr])
        cols["i"].append(np.full(len(rr), b.i))
        cols["k"].append(k)
        cols["a"].append(b.a[rr, kk])
        cols["s"].append(np.minimum(s.left[k], s_r[b.rows[rr]]))
        cols["tc"].append(s.tc[k])
        cols["rank"].append(s.rank[k])
    if not blocks:
        return out
    c = {f: np.concatenate(v) for f, v in cols.items()}
    order = np.lexsort((c["rank"], c["tc"], -c["s"], c["set"]))
    first = order[np.r_[True, c["set"][order][1:] != c["set"][order][:-1]]] if len(order) else order

    # 4. its exact corner margin (the root search), and its class checked
    chosen_caps = {r: np.empty(len(first)) for r in names}
    for j, (i, k) in enumerate(zip(c["i"][first].tolist(), c["k"][first].tolist())):
        s = shapes[i]
        for r in names:
            chosen_caps[r][j] = per[(r, s.shape[r])][1][s.pick[r][k]]
    cm = _margins(side, dcs, c["set"][first], chosen_caps)
    exact = mu_class(np.minimum(c["a"][first], cm))
    for j, cmj, e in zip(first.tolist(), cm.tolist(), exact.tolist()):
        set_i = int(c["set"][j])
        if e != best[set_i]:
            out[set_i] = side.complete_naive(batch, int(positions[set_i]))
            continue
        s = shapes[int(c["i"][j])]
        k = int(c["k"][j])
        chosen = {r: (per[(r, s.shape[r])][0], int(s.pick[r][k])) for r in names}
        margins = {r: float(per[(r, s.shape[r])][2][set_i, s.pick[r][k]]) for r in names}
        out[set_i] = Completion(caps=chosen, pc=s.pc, bought=int(s.nb[k]), margin_c=min([*margins.values(), cmj]),
                                stock_left=float(s.left[k]), total_capacitance=float(s.tc[k]), cap_margins=margins,
                                corner_margin=cmj)
    return out

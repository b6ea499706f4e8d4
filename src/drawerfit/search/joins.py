"""Pruned enumeration of resistor sets: only sets that can pass the worst case get judged in full.

The bounds themselves, and why they are sound, are in ``bounds``; this module joins the roles'
sorted tables under them: dividers (RA, RB) first, then the emitter (RE alone, or RE + RE2 through
the sorted sums of ``windows.SumIndex``), then the collector (RC), each join a binary search on
sorted nominal values followed by the exact end conditions.  With a band of the distance D
(``windows.Band``), each divider's nominal RET and each set's RC are held to the band's windows.
When a divider table is much larger than the other tables (a pair or triple in RA or RB) and the
emitter is RE alone, a band is joined the other way round (``_sets_emitter_first``): every (small
divider part, RE) and, by binary search, the large part whose nominal IE falls in the band (IE
falls as RA grows and rises as RB grows), then the same exact conditions.
"""

from __future__ import annotations

from typing import Iterator, Mapping

import numpy as np

from ..analysis import core
from .judge import SearchContext, nominal_figures, vertex_dc
from .bounds import Box, EmitterBounds, emitter_window, par_ceiling, par_floor
from .windows import CHUNK, DIVIDER_CACHE, EMITTER_FIRST, SLACK, Band, SumIndex, groups as _groups, vth as _vth
from .tables import RoleTable

__all__ = ["candidate_sets", "Band"]



def _ranges(owner: np.ndarray, start: np.ndarray, stop: np.ndarray, tally: list | None = None
            ) -> tuple[np.ndarray, np.ndarray]:
    stop = np.maximum(stop, start)
    lens = stop - start
    total = int(lens.sum())
    if tally is not None:
        tally[0] += total
    if total == 0:
        return np.zeros(0, np.int64), np.zeros(0, np.int64)
    a = np.repeat(owner, lens)
    k = np.arange(total) + np.repeat(start - np.concatenate(([0], np.cumsum(lens)[:-1])), lens)
    return a.astype(np.int64), k.astype(np.int64)


def _span(values: np.ndarray, lo, hi) -> tuple[np.ndarray, np.ndarray]:
    lo = np.where(np.isnan(lo), np.inf, lo)
    hi = np.where(np.isnan(hi), -np.inf, hi)
    start = np.searchsorted(values, lo * (1 - SLACK), side="left")
    stop = np.searchsorted(values, hi * (1 + SLACK), side="right")
    return start, stop


def _dividers(ctx: SearchContext, box: Box, em: EmitterBounds, A: RoleTable, B: RoleTable, a_idx: np.ndarray, tally=None,
              ret_range=(0.0, np.inf), tmin: float = 0.0):
    p, tr = ctx.problem, ctx.tr
    vcc = p.supply
    s = p.targets.swing or 0.0
    ie_max = p.targets.ie_max
    hi_a, lo_a = box.hi(A)[a_idx], box.lo(A)[a_idx]
    with np.errstate(divide="ignore", invalid="ignore"):
        # conduction (and, follower with swing, VE >= ve_min) at (RA high, RB low, cold)
        x = box.vbe_hi + em.ve_min
        need_lo_b = np.where(x < vcc, x * hi_a / (vcc - x), np.inf)
        # VE <= VCC - VCE(sat) - swing at (RA low, RB high, hFE low, hot), with RTH <= RA low
        z = vcc - tr.vce_sat - s + box.vbe_lo + ie_max * lo_a / (box.b_lo + 1.0)
        max_hi_b = np.where(z < vcc, z * lo_a / (vcc - z), np.inf)
        if em.rin is not None:
            r = em.rth_min
            need_lo_b = np.maximum(need_lo_b, np.where(lo_a > r, r * lo_a / (lo_a - r), np.inf))
    start, stop = _span(B.v, need_lo_b, max_hi_b)
    ia, ib = _ranges(a_idx, start, stop, tally)
    ok = _divider_ok(ctx, box, em, A, B, ia, ib, ret_range, tmin)
    return ia[ok], ib[ok]


def _divider_ok(ctx: SearchContext, box: Box, em: EmitterBounds, A: RoleTable, B: RoleTable, ia, ib, ret_range, tmin):
    """The exact divider conditions (module ``bounds``) for (RA, RB) index pairs."""
    p, tr = ctx.problem, ctx.tr
    vcc = p.supply
    s = p.targets.swing or 0.0
    ie_max = p.targets.ie_max
    if not len(ia):
        return np.zeros(0, bool)
    lo_a, hi_a, lo_b, hi_b = box.lo(A)[ia], box.hi(A)[ia], box.lo(B)[ib], box.hi(B)[ib]
    vth_l, _ = _vth(vcc, hi_a, lo_b)
    vth_h, rth_h = _vth(vcc, lo_a, hi_b)
    ok = vth_l * (1 + SLACK) > box.vbe_hi
    if em.ve_min > 0:
        ok &= vth_l * (1 + SLACK) >= em.ve_min + box.vbe_hi
    ok &= (vth_h - box.vbe_lo - ie_max * rth_h / (box.b_lo + 1.0)) * (1 - SLACK) <= vcc - tr.vce_sat - s
    if em.rin is not None:
        _, rth_ll = _vth(vcc, lo_a, lo_b)
        ok &= rth_ll * (1 + SLACK) >= em.rth_min
    # some nominal RET must fit the worst-case window (L, U) and the table's range
    with np.errstate(divide="ignore", invalid="ignore"):
        L, U = emitter_window(ctx, box, A, B, ia, ib)
        lo_r = np.maximum(L / (1.0 - tmin), ret_range[0]) * (1 - SLACK) - SLACK
        hi_r = np.minimum(U / (1.0 + tmin), ret_range[1]) * (1 + SLACK)
    return ok & (lo_r <= hi_r)


class _DividerBlock:
    """Dividers that pass the bounds, with what the emitter join needs of each."""

    __slots__ = ("ia", "ib", "L", "U", "re_lo", "re_hi", "lo_r", "hi_r")

    def __init__(self, **kw):
        for k, v in kw.items():
            setattr(self, k, v)

    def __len__(self) -> int:
        return len(self.ia)

    def take(self, sel) -> "_DividerBlock":
        return _DividerBlock(**{k: getattr(self, k)[sel] for k in self.__slots__})


def _cached(cache: dict | None, key, tables):
    """What ``cache`` holds for ``key``, if it was stored for these very tables.  Keys hold ids, and a
    triple window's table, once released, may leave its id to a new one: each entry keeps weak
    references to its tables and is valid only while they are the same objects."""
    if cache is None or key not in cache:
        return None
    refs, value = cache[key]
    if all(r() is t for r, t in zip(refs, tables)):
        return value
    del cache[key]
    return None


def _store(cache: dict | None, key, tables, value) -> None:
    """Keep ``value`` for ``key`` and these tables; entries whose tables are gone are dropped."""
    import weakref

    if cache is None:
        return
    for k in [k for k, v in cache.items() if isinstance(v, tuple) and len(v) == 2 and isinstance(v[0], tuple)
              and any(r() is None for r in v[0])]:
        del cache[k]
    cache[key] = (tuple(weakref.ref(t) for t in tables), value)


def _divider_blocks(ctx: SearchContext, box: Box, em: EmitterBounds, A: RoleTable, B: RoleTable, tally, ret_range, tmin,
                    cache: dict | None):
    """Blocks of dividers that pass the bounds; kept in ``cache`` (when not too many) so that the
    bands of a search form them once."""
    key = ("dividers", id(ctx), id(A), id(B), ret_range, tmin)
    got = _cached(cache, key, (ctx, A, B))
    if got is not None:
        yield from got
        return
    p = ctx.problem
    keep: list | None = [] if cache is not None else None
    total = cache.get("dividers kept", 0) if cache is not None else 0  # all shapes and levels together
    step = max(1, CHUNK // max(1, len(B)))
    for a0 in range(0, len(A), step):
        ia, ib = _dividers(ctx, box, em, A, B, np.arange(a0, min(len(A), a0 + step)), tally, ret_range, tmin)
        L, U = emitter_window(ctx, box, A, B, ia, ib)
        # RE alone: the follower's swing bounds and the input resistance bound
        _, rth_ll = _vth(p.supply, box.lo(A)[ia], box.lo(B)[ib])
        block = _DividerBlock(ia=ia, ib=ib, L=L, U=U, re_lo=np.maximum(em.re_lo_min, em.re_lo_rin(rth_ll, p.rl)),
                              re_hi=np.minimum(em.re_hi_max, em.re_hi_cap(L)),
                              lo_r=np.maximum(L / (1.0 - tmin), ret_range[0]) * (1 - SLACK) - SLACK,
                              hi_r=np.minimum(U / (1.0 + tmin), ret_range[1]) * (1 + SLACK))
        if keep is not None:
            total += len(ia)
            keep = keep + [block] if total <= DIVIDER_CACHE else None
        yield block
    if keep is not None:
        _store(cache, key, (ctx, A, B), keep)
        cache["dividers kept"] = total


def _join_sorted(T: RoleTable, box: Box, owner_lo, owner_hi, owner_lo_max=None, tally=None, nominal=None,
                 limit: int = CHUNK):
    """Chunks (owner position, k) with T.lo[k] >= owner_lo and T.hi[k] <= owner_hi (and, if
    given, T.lo[k] <= owner_lo_max, and ``nominal`` = (nlo, nhi) <= T.v[k] <= nhi); each chunk
    forms at most about ``limit`` pairs before the exact conditions, so memory stays bounded."""
    top = owner_hi
    bottom = owner_lo
    if owner_lo_max is not None:
        with np.errstate(invalid="ignore"):
            top = np.minimum(owner_hi, owner_lo_max / (1.0 - box.tmax(T)))
    if nominal is not None:
        bottom = np.maximum(bottom, nominal[0])
        top = np.minimum(top, nominal[1])
    start, stop = _span(T.v, bottom, top)
    stop = np.maximum(stop, start)
    for g in _groups(stop - start, limit):
        pos, k = _ranges(np.arange(g.start, g.stop), start[g], stop[g], tally)
        if not len(pos):
            continue
        ok = (box.lo(T)[k] * (1 + SLACK) >= owner_lo[pos]) & (box.hi(T)[k] * (1 - SLACK) <= owner_hi[pos])
        if owner_lo_max is not None:
            ok &= box.lo(T)[k] * (1 - SLACK) <= owner_lo_max[pos]
        if nominal is not None:
            ok &= (T.v[k] >= nominal[0][pos]) & (T.v[k] <= nominal[1][pos])
        yield pos[ok], k[ok]


def _collector(ctx: SearchContext, box: Box, T: Mapping[str, RoleTable], idx: dict[str, np.ndarray],
               band: Band | None = None):
    """Chunks of (divider, emitter) sets joined to RC by the gain, rout, swing and saturation bounds
    (and the band's gain window)."""
    p = ctx.problem
    RC = T["RC"]
    rl = p.rl
    n = len(idx["RE"])
    if not n:
        return
    vals = {r: T[r].v[idx[r]] for r in idx}
    tols = {r: (np.zeros(n) if box.nominal else T[r].tol[idx[r]]) for r in idx}
    vals["RC"] = np.ones(n)
    tols["RC"] = np.zeros(n)
    if box.nominal:
        v_lo = v_hi = ctx.nominal
    else:
        v_hi, v_lo = ctx.vertices[0], ctx.vertices[1]
    d_hi = vertex_dc(ctx, v_hi, vals, tols)
    d_lo = vertex_dc(ctx, v_lo, vals, tols)
    # the gain at RC = 1 Ω is g1·(1 Ω‖RL): divide by 1‖RL for the gain per ohm of RC‖RL
    per_ohm = 1.0 if not np.isfinite(rl) else (1.0 + rl) / rl
    g_hi, g_lo = np.abs(d_hi.gain) * per_ohm, np.abs(d_lo.gain) * per_ohm
    t = p.targets
    s = t.swing or 0.0
    with np.errstate(divide="ignore", invalid="ignore"):
        need_par = np.zeros(n)  # lowest allowed (RC low end ‖ RL)
        if t.gain_min is not None:
            need_par = np.maximum(need_par, np.where(g_lo > 0, t.gain_min / g_lo, np.inf))
        if s > 0:
            need_par = np.maximum(need_par, np.where(d_lo.ic > 0, s / d_lo.ic, np.inf))
        need_lo = par_floor(need_par, rl)
        max_hi = np.full(n, np.inf)
        if t.gain_max is not None:
            max_hi = np.minimum(max_hi, par_ceiling(t.gain_max / g_hi, rl))
        if t.rout_max is not None:
            max_hi = np.minimum(max_hi, t.rout_max)
        room = np.where(d_hi.ic > 0, (p.supply - d_hi.ve - ctx.tr.vce_sat - s) / d_hi.ic, np.inf)
        if p.polarity == "pnp":
            room = np.where(d_hi.ic > 0, (d_hi.ve - ctx.tr.vce_sat - s) / d_hi.ic, np.inf)
        max_hi = np.minimum(max_hi, room)
        active = (d_hi.state == core.ACTIVE) & (d_lo.state == core.ACTIVE)
        need_lo = np.where(active, need_lo, np.inf)
        nominal = None
        if band is not None and band.g is not None:
            g1 = nominal_figures(ctx, vals)["gain"] * per_ohm
            g_lo_n, g_hi_n = band.g
            nlo = np.where(g1 > 0, par_floor(np.maximum(g_lo_n, 0.0) / g1 * (1 - SLACK), rl),
                           np.where(g_lo_n < 0, 0.0, np.inf))
            nhi = np.where(g1 > 0, par_ceiling(g_hi_n / g1 * (1 + SLACK), rl), np.inf)
            nominal = (nlo * (1 - SLACK), nhi * (1 + SLACK))
    for pos, k in _join_sorted(RC, box, need_lo, max_hi, nominal=nominal):
        out = {r: a[pos] for r, a in idx.items()}
        out["RC"] = k
        yield out


def _emitter_pairs(ctx, box, em, T, ia, ib, L, U, re_lo, re_hi, re_ok, kcap, band, tally, cache):
    """Chunks of (divider position, RE, RE2) that pass the emitter bounds; with the sum index
    when it fits, else RE by RE."""
    p = ctx.problem
    RE, RE2 = T["RE"], T["RE2"]
    nlo = nhi = None
    if band is not None:
        nlo, nhi = band.ret(p.supply, T[ctx.ra].v[ia], T[ctx.rb].v[ib])
    if SumIndex.fits(RE, RE2):
        key = ("sums", id(RE), id(RE2))
        sums = _cached(cache, key, (RE, RE2))
        if sums is None:
            sums = SumIndex(RE, RE2)
            _store(cache, key, (RE, RE2), sums)
        t = min(box.tmin(RE), box.tmin(RE2))
        w_lo = L / (1.0 - t)
        w_hi = U / (1.0 + t)
        if band is not None:
            w_lo, w_hi = np.maximum(w_lo, nlo), np.minimum(w_hi, nhi)
        start, stop = _span(sums.s, w_lo, w_hi)
        stop = np.maximum(stop, start)
        for g in _groups(stop - start, CHUNK):
            own = np.arange(g.start, g.stop)
            d, q = _ranges(own, start[g], stop[g], tally)
            kre, kre2 = sums.i[q].astype(np.int64), sums.j[q].astype(np.int64)
            ok = re_ok[kre] & (RE.v[kre] <= kcap)
            yield _emitter_exact(box, em, RE, RE2, d[ok], kre[ok], kre2[ok], L, U, re_lo, re_hi, nlo, nhi)
        return
    # RE by RE: (divider, RE) with RE's high end below U, then RE2 from the rest of the window
    kmin = np.searchsorted(RE.v, re_lo * (1 - SLACK), side="left")
    top = np.minimum(U, re_hi) * (1 + SLACK)
    if band is not None:
        top = np.minimum(top, nhi)
    kmax = np.minimum(np.searchsorted(RE.v, top, side="right"), np.searchsorted(RE.v, kcap, side="right"))
    kmax = np.maximum(kmax, kmin)
    for g in _groups(kmax - kmin, max(1, CHUNK // 16)):
        d, kre = _ranges(np.arange(g.start, g.stop), kmin[g], kmax[g], tally)
        ok = re_ok[kre]
        d, kre = d[ok], kre[ok]
        lo_max = em.ret_lo_max(box.hi(RE)[kre]) - box.lo(RE)[kre]
        nominal = None if band is None else (nlo[d] - RE.v[kre], nhi[d] - RE.v[kre])
        for pos, kre2 in _join_sorted(RE2, box, L[d] - box.lo(RE)[kre], U[d] - box.hi(RE)[kre], lo_max, tally,
                                      nominal=nominal):
            yield _emitter_exact(box, em, RE, RE2, d[pos], kre[pos], kre2, L, U, re_lo, re_hi, nlo, nhi)


def _emitter_exact(box, em, RE, RE2, d, kre, kre2, L, U, re_lo, re_hi, nlo, nhi):
    """The exact end conditions of the emitter join, applied to (divider, RE, RE2) triples."""
    lo1, hi1, lo2, hi2 = box.lo(RE)[kre], box.hi(RE)[kre], box.lo(RE2)[kre2], box.hi(RE2)[kre2]
    ok = ((hi1 * (1 - SLACK) < U[d]) & (hi1 * (1 - SLACK) <= re_hi[d]) & (lo1 * (1 + SLACK) >= re_lo[d])
          & (lo2 * (1 + SLACK) >= L[d] - lo1) & (hi2 * (1 - SLACK) <= U[d] - hi1))
    with np.errstate(invalid="ignore"):
        ok &= lo2 * (1 - SLACK) <= em.ret_lo_max(hi1) - lo1
    if nlo is not None:
        s = RE.v[kre] + RE2.v[kre2]
        ok &= (s >= nlo[d]) & (s <= nhi[d])
    return d[ok], kre[ok], kre2[ok]


def _emitters(ctx, box, RE, A, B, ia, ib, L, U, re_lo, re_hi, re_ok, re_top, band, tally):
    """Chunks of (divider position, {role: index}) for a stage whose emitter is RE alone."""
    vcc = ctx.problem.supply
    nominal = None if band is None else band.ret(vcc, A.v[ia], B.v[ib])
    floor = np.maximum(np.maximum(L, re_lo), _power_floor(ctx, box, A, B, ia, ib, RE, np.maximum(L, re_lo)))
    for pos, kre in _join_sorted(RE, box, floor, np.minimum(U, re_hi), tally=tally, nominal=nominal):
        keep = re_ok[kre] & (kre < re_top)
        pos, kre = pos[keep], kre[keep]
        yield pos, {ctx.ra: ia[pos], ctx.rb: ib[pos], "RE": kre}


def _power_floor(ctx, box, A, B, ia, ib, RE: RoleTable, low) -> np.ndarray:
    """A floor on RE's low end from its power at the vertex of highest IE (``_hot_ok``), for dividers
    whose other bounds already keep RE's low end at ``low`` or above.

    There IE = a/(x + k) with x the low end of RE, a = VTH − VBE and k = RTH/(β+1), so the power
    x·a²/(x + k)² rises up to x = k and falls after; with the table's best rating r it stays within
    the derated c·r outside (x₁, x₂), the roots of c·r·(x + k)² = a²·x.  Where ``low`` is above x₁,
    RE's low end must reach x₂ (a candidate with a lower rating needs more: the exact test follows)."""
    p = ctx.problem
    if not len(ia) or not len(RE):
        return np.zeros(len(ia))
    vth_h, rth_h = _vth(p.supply, box.lo(A)[ia], box.hi(B)[ib])
    a = np.maximum(vth_h - box.vbe_lo, 0.0)
    k = rth_h / (box.b_hi + 1.0)
    cr = p.conditions.resistor_derating * float(RE.rating.max())
    with np.errstate(invalid="ignore", divide="ignore"):
        disc = a * a - 4.0 * cr * k
        root = np.sqrt(np.maximum(disc, 0.0))
        x1 = (a * a - 2.0 * cr * k - a * root) / (2.0 * cr)
        x2 = (a * a - 2.0 * cr * k + a * root) / (2.0 * cr)
    return np.where((disc > 0) & (low > x1 * (1 + SLACK)), x2 * (1 - SLACK) - SLACK, 0.0)


def _ra_at(vcc, vbe, b1, rb, ret, ie):
    """The RA at which the nominal IE equals ``ie`` for (RB, RET): IE falls as RA grows (nan: none)."""
    with np.errstate(divide="ignore", invalid="ignore"):
        num = vcc - vbe - ie * ret
        return np.where(num > 0, rb * num / (vbe + ie * ret + ie * rb / b1), np.nan)


def _rb_at(vcc, vbe, b1, ra, ret, ie):
    """The RB at which the nominal IE equals ``ie`` for (RA, RET): IE rises with RB (inf: never)."""
    with np.errstate(divide="ignore", invalid="ignore"):
        den = vcc - vbe - ie * ret - ie * ra / b1
        return np.where(den > 0, ra * (vbe + ie * ret) / den, np.inf)


def _sets_emitter_first(ctx, box, em, T, band: Band | None, re_ok, ret_range, tmin, tally):
    """Chunks of {role: index}, joined (small divider part, RE) → large divider part: the large
    part's range comes from the IE window at the two extreme vertices (IE falls as RA grows and
    rises with RB, at every vertex), RE's power and IC max at the vertex of highest IE, and the
    band's nominal window; then the exact conditions of the divider-first join."""
    p = ctx.problem
    vcc = p.supply
    A, B, RE = T[ctx.ra], T[ctx.rb], T["RE"]
    big_is_a = len(A) >= len(B)
    small = B if big_is_a else A
    big = A if big_is_a else B
    kre_all = np.flatnonzero(re_ok)
    t = p.targets
    per = max(1, CHUNK // max(1, len(kre_all)))
    for s0 in range(0, len(small), per):
        ks = np.repeat(np.arange(s0, min(len(small), s0 + per)), len(kre_all))
        kr = np.tile(kre_all, min(len(small), s0 + per) - s0)
        if tally is not None:
            tally[0] += len(ks)
        re_lo, re_hi = box.lo(RE)[kr], box.hi(RE)[kr]
        # IE at the vertex of highest IE (RA low, RB high, RE low, hFE high, hot) at most ie_max,
        # and within RE's power and IC max; at the vertex of lowest IE at least ie_min
        with np.errstate(divide="ignore", invalid="ignore"):
            cap = np.minimum(np.sqrt(p.conditions.resistor_derating * RE.rating[kr] / re_lo), t.ie_max)
        if ctx.tr.ic_max is not None:
            cap = np.minimum(cap, ctx.tr.ic_max * (box.b_hi + 1.0) / (2.0 * box.b_hi))
        cap = cap * (1 + SLACK)
        floor = t.ie_min * (1 - SLACK)
        if big_is_a:  # IE falls as RA grows: RA's low end at least ra(cap), its high end at most ra(floor)
            lo_v = np.nan_to_num(_ra_at(vcc, box.vbe_lo, box.b_hi + 1.0, box.hi(small)[ks], re_lo, cap), nan=0.0)
            hi_v = np.nan_to_num(_ra_at(vcc, box.vbe_hi, box.b_lo + 1.0, box.lo(small)[ks], re_hi, floor),
                                 nan=-np.inf)
        else:  # IE rises with RB: RB's high end at most rb(cap), its low end at least rb(floor)
            hi_v = _rb_at(vcc, box.vbe_lo, box.b_hi + 1.0, box.lo(small)[ks], re_lo, cap)
            lo_v = _rb_at(vcc, box.vbe_hi, box.b_lo + 1.0, box.hi(small)[ks], re_hi, floor)
        if band is not None:  # the nominal IE in the band's (i1, i2)
            xs, ret = small.v[ks], RE.v[kr]
            if big_is_a:
                lo_v = np.maximum(lo_v, np.nan_to_num(_ra_at(vcc, band.vbe, band.b1, xs, ret, band.i2), nan=0.0))
                if band.i1 > 0:
                    hi_v = np.minimum(hi_v, np.nan_to_num(_ra_at(vcc, band.vbe, band.b1, xs, ret, band.i1),
                                                          nan=-np.inf))
            else:
                if band.i1 > 0:
                    lo_v = np.maximum(lo_v, _rb_at(vcc, band.vbe, band.b1, xs, ret, band.i1))
                hi_v = np.minimum(hi_v, _rb_at(vcc, band.vbe, band.b1, xs, ret, band.i2))
        live = np.flatnonzero(lo_v * (1 - SLACK) <= hi_v * (1 + SLACK))
        if not len(live):
            if tally is not None:  # let the caller weigh the work done so far
                yield {ctx.ra: np.zeros(0, np.int64), ctx.rb: np.zeros(0, np.int64), "RE": np.zeros(0, np.int64)}
            continue
        ks, kr = ks[live], kr[live]
        start, stop = _span(big.v, lo_v[live] * (1 - SLACK), hi_v[live] * (1 + SLACK))
        for g in _groups(np.maximum(stop - start, 0), CHUNK):
            own, kb = _ranges(np.arange(g.start, g.stop), start[g], stop[g], tally)
            i_small, i_re = ks[own], kr[own]
            ia, ib = (kb, i_small) if big_is_a else (i_small, kb)
            ok = _divider_ok(ctx, box, em, A, B, ia, ib, ret_range, tmin)
            ia, ib, kre = ia[ok], ib[ok], i_re[ok]
            if not len(ia):
                continue
            L, U = emitter_window(ctx, box, A, B, ia, ib)
            _, rth_ll = _vth(vcc, box.lo(A)[ia], box.lo(B)[ib])
            lo_e = np.maximum(np.maximum(em.re_lo_min, em.re_lo_rin(rth_ll, p.rl)), L)
            hi_e = np.minimum(np.minimum(em.re_hi_max, em.re_hi_cap(L)), U)
            ok = (box.lo(RE)[kre] * (1 + SLACK) >= lo_e) & (box.hi(RE)[kre] * (1 - SLACK) <= hi_e)
            if band is not None:
                n1, n2 = band.ret(vcc, A.v[ia], B.v[ib])
                ok &= (RE.v[kre] >= n1) & (RE.v[kre] <= n2)
            yield {ctx.ra: ia[ok], ctx.rb: ib[ok], "RE": kre[ok]}


def role_ranges(ctx: SearchContext) -> dict[str, tuple[float, float]]:
    """Nominal values each emitter and collector role can hold in a set that passes the bounds:
    RE at least its floor (swing) and at most its ceiling; RE + RE2 at most U, which is below
    (VCC − VBE)/ie_min; RC at most the headroom over α (bounds)."""
    p = ctx.problem
    box = Box(ctx)
    em = EmitterBounds(ctx, box)
    u_max = max(p.supply - box.vbe_hi, 0.0) / p.targets.ie_min * (1 + SLACK)
    out = {"RE": (em.re_lo_min * (1 - SLACK), min(em.re_hi_max, u_max)), "RE2": (0.0, u_max)}
    if em.headroom is not None:
        out["RC"] = (0.0, max(em.headroom, 0.0) / em.alpha_lo * (1 + SLACK))
    return out


def candidate_sets(ctx: SearchContext, T: Mapping[str, RoleTable], tally: list | None = None, band: Band | None = None,
                   cache: dict | None = None, collector: bool = True) -> Iterator[dict[str, np.ndarray]]:
    """Chunks of resistor sets {role: index into T[role]} that pass every bound above (and, with
    ``band``, the nominal windows of D < band.d).  ``collector`` False: the (divider, emitter) sets
    before RC is joined; RC's table may then be absent (``windows.narrow_ranges``).

    With ``tally`` (a one-element list), the work done is added to ``tally[0]`` (partial sets
    formed on the way: dividers, divider–emitter pairs, and ten per set whose collector is
    bounded, the costliest step) and an empty chunk is yielded after every block of dividers,
    so that a caller can stop a search whose bounds reject nearly everything only late.
    ``cache`` (a dict the caller keeps) holds the sorted (RE, RE2) sums between calls.
    """
    empty = {r: np.zeros(0, np.int64) for r in ctx.res_roles}
    p = ctx.problem
    box = Box(ctx)
    em = EmitterBounds(ctx, box)
    A, B = T[ctx.ra], T[ctx.rb]
    if not (len(A) and len(B)) or any(not len(T[r]) for r in ctx.res_roles if r in T):
        return
    if em.nothing():
        return
    RE = T["RE"]
    re_ok = em.re_ok(box, RE)
    if not re_ok.any():
        return  # no RE of this table meets the bounds on RE alone, whatever the divider
    re_top = int(np.flatnonzero(re_ok)[-1]) + 1
    has2 = "RE2" in T
    ret_range = (float(RE.v[re_ok].min()) + (float(T["RE2"].v.min()) if has2 else 0.0),
                 float(RE.v[re_ok].max()) + (float(T["RE2"].v.max()) if has2 else 0.0))
    tmin = min(box.tmin(RE), box.tmin(T["RE2"])) if has2 else box.tmin(RE)
    kcap = np.inf
    if has2 and p.targets.gain_min is not None:
        rc_cap = float(box.hi(T["RC"]).max()) if "RC" in T else np.inf
        if np.isfinite(p.rl):
            rc_cap = min(rc_cap, p.rl)
        if p.targets.rout_max is not None:
            rc_cap = min(rc_cap, p.targets.rout_max)
        kcap = rc_cap / p.targets.gain_min / (1 - box.tmax(RE)) * (1 + SLACK)
    if not has2 and min(len(A), len(B)) * int(re_ok.sum()) * EMITTER_FIRST < len(A) * len(B):
        chunks = _sets_emitter_first(ctx, box, em, T, band, re_ok, ret_range, tmin, tally)
    else:
        chunks = _sets_dividers_first(ctx, box, em, T, band, re_ok, re_top, ret_range, tmin, kcap, tally, cache)
    for idx in chunks:
        idx = _hot_ok(ctx, box, T, idx)
        if "RC" in T and collector:
            for c0 in range(0, len(idx["RE"]), CHUNK):
                part = {r: a[c0:c0 + CHUNK] for r, a in idx.items()}
                if tally is not None:
                    tally[0] += 10 * len(part["RE"])
                got = False
                for out in _collector(ctx, box, T, part, band):
                    if len(out["RC"]):
                        got = True
                        yield out
                if not got and tally is not None:
                    yield empty
            if tally is not None and not len(idx["RE"]):
                yield empty
        elif len(idx["RE"]) or tally is not None:
            yield idx


def _hot_ok(ctx: SearchContext, box: Box, T, idx: dict) -> dict:
    """The sets whose emitter resistors stay within their derated power, and 2·IC within IC max, at
    the vertex of highest IE (RA low, RB high, RE and RE2 low, hFE high, hot: the search's first
    vertex), where IE = (VTH − VBE)/(RET + RTH/(β+1)) in the active region (bounds)."""
    p, tr = ctx.problem, ctx.tr
    if not len(idx["RE"]):
        return idx
    A, B, RE = T[ctx.ra], T[ctx.rb], T["RE"]
    vth_h, rth_h = _vth(p.supply, box.lo(A)[idx[ctx.ra]], box.hi(B)[idx[ctx.rb]])
    re_lo = box.lo(RE)[idx["RE"]]
    ret = re_lo + (box.lo(T["RE2"])[idx["RE2"]] if "RE2" in idx else 0.0)
    ie = np.maximum(vth_h - box.vbe_lo, 0.0) / (ret + rth_h / (box.b_hi + 1.0))
    derate = p.conditions.resistor_derating
    ok = ie * ie * re_lo * (1 - SLACK) <= derate * RE.rating[idx["RE"]]
    if "RE2" in idx:
        ok &= ie * ie * box.lo(T["RE2"])[idx["RE2"]] * (1 - SLACK) <= derate * T["RE2"].rating[idx["RE2"]]
    if tr.ic_max is not None:
        ok &= 2.0 * ie * box.b_hi / (box.b_hi + 1.0) * (1 - SLACK) <= tr.ic_max
    return idx if ok.all() else {r: a[ok] for r, a in idx.items()}


def _sets_dividers_first(ctx, box, em, T, band, re_ok, re_top, ret_range, tmin, kcap, tally, cache):
    """Chunks of {role: index} (RC not yet joined): dividers first, then the emitter."""
    p = ctx.problem
    A, B, RE = T[ctx.ra], T[ctx.rb], T["RE"]
    empty = {r: np.zeros(0, np.int64) for r in (ctx.ra, ctx.rb, "RE")}
    for block in _divider_blocks(ctx, box, em, A, B, tally, ret_range, tmin, cache):
        if band is not None and len(block):
            # some nominal RET must also lie in the band's window (N1, N2)
            n1, n2 = band.ret(p.supply, A.v[block.ia], B.v[block.ib])
            block = block.take(np.maximum(block.lo_r, n1) <= np.minimum(block.hi_r, n2))
        if not len(block):
            if tally is not None:
                yield empty
            continue
        ia, ib, L, U, re_lo, re_hi = block.ia, block.ib, block.L, block.U, block.re_lo, block.re_hi
        if "RE2" in T:
            for d, kre, kre2 in _emitter_pairs(ctx, box, em, T, ia, ib, L, U, re_lo, re_hi, re_ok, kcap, band, tally,
                                               cache):
                yield {ctx.ra: ia[d], ctx.rb: ib[d], "RE": kre, "RE2": kre2}
        else:
            for _, idx in _emitters(ctx, box, RE, A, B, ia, ib, L, U, re_lo, re_hi, re_ok, re_top, band, tally):
                yield idx

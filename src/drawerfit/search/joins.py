"""Pruned enumeration of resistor sets: only sets that can pass the worst case get judged in full.

Each bound below is a necessary condition for feasibility at one point of the tolerance box (a
vertex), so a set it rejects fails the full judgement too; the full judgement in ``evaluate`` then
decides.  Voltages are in the NPN-mirrored frame of ``analysis.core``: RA is the divider resistor
on the emitter-rail's far side (R1 for NPN, R2 for PNP), RB the other; VTH = VCC·RB/(RA+RB).

* Divider (RA, RB): the transistor must conduct at (RA high, RB low, cold): VTH > VBE; with a swing
  target the follower needs VE ≥ swing (the downward swing IE·(RE‖RL) is below VE), so
  VTH ≥ swing + VBE there; every stage needs VE ≤ VCC − VCE(sat) − swing, and at (RA low, RB high,
  hFE low, hot) VE ≥ VTH − VBE − IEmax·RTH/(hFEmin+1); with rin_min, RTH at (RA low, RB low) must
  reach it (the input resistance is below the divider's).
* Emitter (RE, plus RE2 in series): IE = (VTH − VBE)/(RET + RTH/(β+1)) in the active region,
  falling with RET; at the vertex of highest IE it must not pass ie_max, at the lowest not fall
  under ie_min: an interval for the low and high ends of RET.
* Collector (RC, common emitter): the gain magnitude is |g1|·(RC‖RL) with g1 the gain per ohm of
  collector load at a vertex (the active-region IE does not depend on RC); gain_min at the vertex
  of lowest IE, gain_max at the highest, rout_max (rout = RC), the swing up (IC·(RC‖RL)) and the
  room for the swing down (VCE ≥ VCE(sat) + swing at the vertex of highest IE) bound RC.

Interval bounds are found by binary search on the sorted nominal values (low end ≤ nominal ≤ high
end), then the exact end conditions are applied, with a relative slack of 1e-9 so that rounding
never rejects a set the full judgement would accept.
"""

from __future__ import annotations

from typing import Iterator, Mapping

import numpy as np

from ..analysis import core
from .evaluate import Context, vertex_dc
from .tables import RoleTable

__all__ = ["candidate_sets"]

SLACK = 1e-9
CHUNK = 400_000  # sets handled at once: bounds memory


def _ranges(owner: np.ndarray, start: np.ndarray, stop: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    stop = np.maximum(stop, start)
    lens = stop - start
    total = int(lens.sum())
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


class _Box:
    """The ends of the box the search guarantees over (one point when the guarantee is nominal)."""

    def __init__(self, ctx: Context):
        p, tr = ctx.problem, ctx.tr
        self.nominal = p.guarantee == "nominal"
        if self.nominal:
            t = p.conditions.nominal_temp
            self.b_lo = self.b_hi = tr.hfe
            self.vbe_hi = self.vbe_lo = ctx.vbe_at(t)
        else:
            self.b_lo, self.b_hi = tr.hfe_min, tr.hfe_max
            self.vbe_hi, self.vbe_lo = ctx.vbe_at(ctx.t_lo), ctx.vbe_at(ctx.t_hi)

    def lo(self, t: RoleTable):
        return t.v if self.nominal else t.lo

    def hi(self, t: RoleTable):
        return t.v if self.nominal else t.hi

    def tmax(self, t: RoleTable) -> float:
        return 0.0 if self.nominal or not len(t) else float(t.tol.max())


def _vth(vcc, ra, rb):
    return vcc * rb / (ra + rb), ra * rb / (ra + rb)


def _dividers(ctx: Context, box: _Box, A: RoleTable, B: RoleTable, a_idx: np.ndarray):
    p, tr = ctx.problem, ctx.tr
    vcc = p.supply
    s = p.targets.swing or 0.0
    ie_max = p.targets.ie_max
    hi_a, lo_a = box.hi(A)[a_idx], box.lo(A)[a_idx]
    with np.errstate(divide="ignore", invalid="ignore"):
        # conduction (and, follower with swing, VE >= swing) at (RA high, RB low, cold)
        x = box.vbe_hi + (s if p.topology == "emitter-follower" else 0.0)
        need_lo_b = np.where(x < vcc, x * hi_a / (vcc - x), np.inf)
        # VE <= VCC - VCE(sat) - swing at (RA low, RB high, hFE low, hot), with RTH <= RA low
        z = vcc - tr.vce_sat - s + box.vbe_lo + ie_max * lo_a / (box.b_lo + 1.0)
        max_hi_b = np.where(z < vcc, z * lo_a / (vcc - z), np.inf)
        if p.targets.rin_min is not None:
            r = p.targets.rin_min
            need_lo_b = np.maximum(need_lo_b, np.where(lo_a > r, r * lo_a / (lo_a - r), np.inf))
    start, stop = _span(B.v, need_lo_b, max_hi_b)
    ia, ib = _ranges(a_idx, start, stop)
    if not len(ia):
        return ia, ib
    lo_a, hi_a, lo_b, hi_b = box.lo(A)[ia], box.hi(A)[ia], box.lo(B)[ib], box.hi(B)[ib]
    vth_l, _ = _vth(vcc, hi_a, lo_b)
    vth_h, rth_h = _vth(vcc, lo_a, hi_b)
    ok = vth_l * (1 + SLACK) > box.vbe_hi
    if p.topology == "emitter-follower" and s > 0:
        ok &= vth_l * (1 + SLACK) >= s + box.vbe_hi
    ok &= (vth_h - box.vbe_lo - ie_max * rth_h / (box.b_lo + 1.0)) * (1 - SLACK) <= vcc - tr.vce_sat - s
    if p.targets.rin_min is not None:
        _, rth_ll = _vth(vcc, lo_a, lo_b)
        ok &= rth_ll * (1 + SLACK) >= p.targets.rin_min
    return ia[ok], ib[ok]


def _emitter_window(ctx: Context, box: _Box, A, B, ia, ib):
    """(L, U): RET low end must be >= L and high end <= U."""
    p = ctx.problem
    vcc = p.supply
    vth_h, rth_h = _vth(vcc, box.lo(A)[ia], box.hi(B)[ib])
    vth_l, rth_l = _vth(vcc, box.hi(A)[ia], box.lo(B)[ib])
    L = (vth_h - box.vbe_lo) / p.targets.ie_max - rth_h / (box.b_hi + 1.0)
    U = (vth_l - box.vbe_hi) / p.targets.ie_min - rth_l / (box.b_lo + 1.0)
    return L, U


def _join_sorted(T: RoleTable, box: _Box, owner_lo, owner_hi):
    """Indices (owner position, k) with T.lo[k] >= owner_lo and T.hi[k] <= owner_hi."""
    start, stop = _span(T.v, owner_lo, owner_hi)
    pos, k = _ranges(np.arange(len(owner_lo)), start, stop)
    if not len(pos):
        return pos, k
    ok = (box.lo(T)[k] * (1 + SLACK) >= owner_lo[pos]) & (box.hi(T)[k] * (1 - SLACK) <= owner_hi[pos])
    return pos[ok], k[ok]


def _collector(ctx: Context, box: _Box, T: Mapping[str, RoleTable], idx: dict[str, np.ndarray]):
    """Join RC to (divider, emitter) sets by the gain, rout, swing and saturation bounds."""
    p = ctx.problem
    RC = T["RC"]
    rl = p.rl
    n = len(idx["RE"])
    if not n:
        return {k: v[:0] for k, v in idx.items()}, np.zeros(0, np.int64)
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
    g_hi, g_lo = np.abs(d_hi.gain), np.abs(d_lo.gain)
    t = p.targets
    s = t.swing or 0.0
    with np.errstate(divide="ignore", invalid="ignore"):
        need_par = np.zeros(n)  # lowest allowed (RC low end ‖ RL)
        if t.gain_min is not None:
            need_par = np.maximum(need_par, np.where(g_lo > 0, t.gain_min / g_lo, np.inf))
        if s > 0:
            need_par = np.maximum(need_par, np.where(d_lo.ic > 0, s / d_lo.ic, np.inf))
        if np.isfinite(rl):
            need_lo = np.where(need_par < rl, need_par * rl / (rl - need_par), np.inf)
        else:
            need_lo = need_par
        max_hi = np.full(n, np.inf)
        if t.gain_max is not None:
            y = t.gain_max / g_hi
            cap = np.where(np.isfinite(rl), np.where(y < rl, y * rl / (rl - y), np.inf), y)
            max_hi = np.minimum(max_hi, cap)
        if t.rout_max is not None:
            max_hi = np.minimum(max_hi, t.rout_max)
        room = np.where(d_hi.ic > 0, (p.supply - d_hi.ve - ctx.tr.vce_sat - s) / d_hi.ic, np.inf)
        if p.polarity == "pnp":
            room = np.where(d_hi.ic > 0, (d_hi.ve - ctx.tr.vce_sat - s) / d_hi.ic, np.inf)
        max_hi = np.minimum(max_hi, room)
        active = (d_hi.state == core.ACTIVE) & (d_lo.state == core.ACTIVE)
        need_lo = np.where(active, need_lo, np.inf)
    pos, k = _join_sorted(RC, box, need_lo, max_hi)
    return {r: a[pos] for r, a in idx.items()}, k


def candidate_sets(ctx: Context, T: Mapping[str, RoleTable]) -> Iterator[dict[str, np.ndarray]]:
    """Chunks of resistor sets {role: index into T[role]} that pass every bound above."""
    p = ctx.problem
    box = _Box(ctx)
    A, B = T[ctx.ra], T[ctx.rb]
    if not (len(A) and len(B)) or any(not len(T[r]) for r in ctx.res_roles):
        return
    step = max(1, CHUNK // max(1, len(B)))
    for a0 in range(0, len(A), step):
        ia, ib = _dividers(ctx, box, A, B, np.arange(a0, min(len(A), a0 + step)))
        if not len(ia):
            continue
        L, U = _emitter_window(ctx, box, A, B, ia, ib)
        if "RE2" in T:
            # (divider, RE) with RE's high end below U, then RE2 from the rest of the window
            RE = T["RE"]
            kmax = np.searchsorted(RE.v, U * (1 + SLACK), side="right")
            if p.targets.gain_min is not None:
                rc_cap = float(box.hi(T["RC"]).max())
                if np.isfinite(p.rl):
                    rc_cap = min(rc_cap, p.rl)
                if p.targets.rout_max is not None:
                    rc_cap = min(rc_cap, p.targets.rout_max)
                kg = np.searchsorted(RE.v, rc_cap / p.targets.gain_min / (1 - box.tmax(RE)) * (1 + SLACK),
                                     side="right")
                kmax = np.minimum(kmax, kg)
            d, kre = _ranges(np.arange(len(ia)), np.zeros(len(ia), np.int64), kmax)
            ok = box.hi(RE)[kre] * (1 - SLACK) < U[d]
            d, kre = d[ok], kre[ok]
            pos, kre2 = _join_sorted(T["RE2"], box, L[d] - box.lo(RE)[kre], U[d] - box.hi(RE)[kre])
            idx = {ctx.ra: ia[d[pos]], ctx.rb: ib[d[pos]], "RE": kre[pos], "RE2": kre2}
        else:
            pos, kre = _join_sorted(T["RE"], box, L, U)
            idx = {ctx.ra: ia[pos], ctx.rb: ib[pos], "RE": kre}
        if "RC" in T:
            for c0 in range(0, len(idx["RE"]), CHUNK):
                part = {r: a[c0:c0 + CHUNK] for r, a in idx.items()}
                part, krc = _collector(ctx, box, T, part)
                part["RC"] = krc
                if len(krc):
                    yield part
        elif len(idx["RE"]):
            yield idx

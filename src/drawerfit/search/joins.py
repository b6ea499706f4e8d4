"""Pruned enumeration of resistor sets: only sets that can pass the worst case get judged in full.

Each bound below is a necessary condition for feasibility at one point of the tolerance box (a
vertex), so a set it rejects fails the full judgement too; the full judgement in ``evaluate`` then
decides.  Voltages are in the NPN-mirrored frame of ``analysis.core``: RA is the divider resistor
on the emitter-rail's far side (R1 for NPN, R2 for PNP), RB the other; VTH = VCC·RB/(RA+RB).

* Divider (RA, RB): the transistor must conduct at (RA high, RB low, cold): VTH > VBE; with a swing
  target the follower needs VE ≥ VEmin (below), and VE ≤ VTH − VBE, so VTH ≥ VEmin + VBE there;
  every stage needs VE ≤ VCC − VCE(sat) − swing, and at (RA low, RB high, hFE low, hot)
  VE ≥ VTH − VBE − IEmax·RTH/(hFEmin+1); with rin_min, RTH at (RA low, RB low) must reach RTHmin
  (below; at least rin_min, since the input resistance is below the divider's).
* Emitter (RE, plus RE2 in series): IE = (VTH − VBE)/(RET + RTH/(β+1)) in the active region,
  falling with RET; at the vertex of highest IE it must not pass ie_max, at the lowest not fall
  under ie_min: an interval for the low and high ends of RET.
* Input resistance (rin_min) on RE alone.  At the vertex (RA low, RB low, RE low, hFE low) the
  input resistance is RTH‖Zb with Zb = (hFEmin+1)·(re + X), X = RE low‖RL for the follower and
  RE low for the common emitter (RE2 is bypassed; the design search has no unbypassed RE2), and
  re = VT/IE ≤ VT(hottest ambient)/ie_min (IE ≥ ie_min at every vertex of a feasible set; VT
  grows with temperature, so this holds whatever the vertex's ambient).  rin ≥ rin_min needs
  Zb ≥ rin_min·RTH/(RTH − rin_min), so X ≥ that/(hFEmin+1) − re_max: a floor on RE's low end per
  divider.  For the follower X < RL and X ≤ REmax‖RL (swing, below), which bounds Zb for every
  set and gives RTHmin = rin_min·Zbmax/(Zbmax − rin_min) for the divider (nothing is feasible when
  Zbmax ≤ rin_min).
* Follower swing (swing_peak = min(up, down) ≥ swing at every vertex, in the active region, with
  up = VCC − VCE(sat) − IE·RE and down = IE·(RE‖RL)).  At the vertex of RE low, IE ≤ ie_max, so
  RE low‖RL ≥ swing/ie_max: a floor on RE's low end (nothing is feasible if swing/ie_max ≥ RL).
  At any one vertex, up ≥ swing and down ≥ swing give swing·(RE + RL)/RL ≤ IE·RE ≤
  VCC − VCE(sat) − swing, which no longer depends on IE: RE ≤ RL·(VCC − VCE(sat) − 2·swing)/swing,
  a ceiling on RE's high end (without a load: nothing is feasible if VCC − VCE(sat) < 2·swing).
  With the same inequality VE = IE·RE ≥ swing·(1 + RE low/RL) =: VEmin.
* Common-emitter headroom on RE and RE2.  At the vertex (RC high, RE low, RE2 low) the transistor
  must be active and the downward swing (VCE − VCE(sat))·k, 0 < k ≤ 1, must reach the swing (0
  without a target), so VCC − IC·RC high − IE·RET low ≥ VCE(sat) + swing, with IE ≥ ie_min and
  IC = α·IE ≥ α_lo·ie_min (α = hFE/(hFE+1)): RET low + α_lo·RC high ≤ (VCC − VCE(sat) − swing)/ie_min.
  RC high ≥ RC low ≥ RCneed: the gain at (RC low, RE high) is below (RC low‖RL)/RE high (α < 1,
  re > 0, the source divides), so RC low‖RL > gain_min·RE high; the upward swing IC·(RC low‖RL)
  with IC < ie_max gives RC low‖RL ≥ swing/ie_max.  So RET low ≤ headroom − α_lo·RCneed(RE high):
  a test on RE alone (RE2 ≥ 0), a ceiling on RE2's low end per (divider, RE), and, with the
  emitter window's RET low ≥ L, a ceiling on RE's high end per divider (RCneed ≤
  (headroom − L)/α_lo).  These drop α, re and the source's division, so they are not tight.
* Collector (RC, common emitter): the gain magnitude is |g1|·(RC‖RL) with g1 the gain per ohm of
  collector load at a vertex (the active-region IE does not depend on RC; g1 is the gain at
  RC = 1 Ω divided by 1 Ω‖RL); gain_min at the vertex of lowest IE, gain_max at the highest,
  rout_max (rout = RC), the swing up (IC·(RC‖RL)) and the room for the swing down
  (VCE ≥ VCE(sat) + swing at the vertex of highest IE) bound RC.

Interval bounds are found by binary search on the sorted nominal values (low end ≤ nominal ≤ high
end), then the exact end conditions are applied, with a relative slack of 1e-9 so that rounding
never rejects a set the full judgement would accept.

Nominal band (``Band``): the search asks for the sets whose distance D to the target centres is
below a level d (``evaluate.nominal_figures``: IE = (VTH − VBE)⁺/(RET + RTH/(β+1)) and, for the
common emitter, |gain| = g₁·(RC‖RL) at the nominal point).  D < d needs IE in (c − d·h, c + d·h)
(c, h the window's centre and half-width), so for each divider the nominal RET lies in an interval
(N1, N2) (IE falls with RET); with a gain window, |gain| in its band needs RC‖RL in (G1/g₁, G2/g₁)
for each (divider, RE, RE2).  These are consequences of D < d, exact but for the slack.  Together
with the worst-case window (L, U) they also bound the divider: some nominal RET must lie in
[max(N1, L/(1 − t)), min(N2, U/(1 + t))], t the smallest tolerance of the RET candidates (the low
end of a sum is at most its nominal times 1 − t).

RE + RE2 (``SumIndex``): when the two tables are small enough (``SUM_INDEX_MAX`` pairs), the
sums of their nominal values are sorted once, and each divider finds the (RE, RE2) with a sum in
its window by binary search, so the work is in proportion to what is found, not to the number of RE
candidates per divider; the exact end conditions above are then applied to each.
"""

from __future__ import annotations

from typing import Iterator, Mapping

import numpy as np

from ..analysis import core
from .evaluate import Context, nominal_figures, vertex_dc
from .windows import CHUNK, SLACK, Band, SumIndex, groups as _groups, vth as _vth
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

        # the largest thermal voltage over the box: re = VT/IE <= vt_max/ie_min at every vertex
        from ..constants import thermal_voltage

        self.vt_max = float(thermal_voltage(p.conditions.nominal_temp if self.nominal else max(ctx.t_lo, ctx.t_hi)))

    def lo(self, t: RoleTable):
        return t.v if self.nominal else t.lo

    def hi(self, t: RoleTable):
        return t.v if self.nominal else t.hi

    def tmax(self, t: RoleTable) -> float:
        return 0.0 if self.nominal or not len(t) else float(t.tol.max())

    def tmin(self, t: RoleTable) -> float:
        return 0.0 if self.nominal or not len(t) else float(t.tol.min())


def _par_floor(q, rl: float):
    """The smallest R with R‖rl >= q: 0 where q <= 0, inf where no R reaches it (q >= rl)."""
    q = np.asarray(q, float)
    if not np.isfinite(rl):
        return np.maximum(q, 0.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(q <= 0, 0.0, np.where(q < rl, q * rl / (rl - q), np.inf))


class _Emitter:
    """Bounds on RE alone (not RE + RE2) that hold for every set of the problem, and the ingredients
    of the per-divider input-resistance bound.

    ``re_lo_min``: RE's low end must reach it; ``re_hi_max``: RE's high end must not pass it (the
    follower's swing); ``ve_min``: the least VE of a follower with a swing target; ``rth_min``: the
    least divider resistance RTH at (RA low, RB low) that can still give ``rin_min``.
    """

    def __init__(self, ctx: Context, box: _Box):
        p, tr = ctx.problem, ctx.tr
        t = p.targets
        rl = p.rl
        follower = p.topology == "emitter-follower"
        self.follower = follower
        self.rl = rl
        self.re_lo_min, self.re_hi_max = 0.0, np.inf
        self.ve_min = 0.0
        s = t.swing or 0.0
        if follower and s > 0:
            # down = IE·(RE‖RL) >= s with IE <= ie_max, at the vertex of RE low
            self.re_lo_min = float(_par_floor(s * (1 - SLACK) / t.ie_max, rl))
            # up = VCC − VCE(sat) − IE·RE >= s and down >= s at one vertex: IE·RE cancels
            room = p.supply - tr.vce_sat - 2.0 * s + SLACK * p.supply
            if np.isfinite(rl):
                self.re_hi_max = rl * room / s
            elif room < 0:
                self.re_hi_max = -np.inf
            # VE = IE·RE >= s·(RE + RL)/RL >= s·(1 + RE low/RL)
            self.ve_min = s * (1.0 + (self.re_lo_min / rl if np.isfinite(rl) else 0.0))
        self.rin = None if t.rin_min is None else t.rin_min * (1 - SLACK)
        # re = VT/IE <= VT(hottest)/ie_min at every vertex of a set that keeps IE >= ie_min
        self.re_max = box.vt_max / t.ie_min * (1 + SLACK)
        self.b1 = box.b_lo + 1.0
        self.rth_min = 0.0
        if self.rin is not None:
            self.rth_min = self.rin
            if follower:
                # the base impedance (β+1)(re + RE‖RL) at hFE low, RE‖RL below RL and below RE high‖RL
                x = rl
                if np.isfinite(self.re_hi_max):
                    h = max(self.re_hi_max, 0.0)
                    x = h if not np.isfinite(rl) else h * rl / (h + rl) if h > 0 else 0.0
                zmax = self.b1 * (self.re_max + x)
                self.rth_min = (np.inf if zmax <= self.rin else
                                self.rin if not np.isfinite(zmax) else self.rin * zmax / (zmax - self.rin))

        # common emitter: the headroom VCE >= VCE(sat) + swing at (RC high, RE and RE2 low) holds
        # IE·RET low + IC·RC high, with IE >= ie_min and IC = α·IE >= α_lo·ie_min; RC's high end
        # must reach rc_need (gain_min at (RC low, RE high): |gain| < (RC‖RL)/RE; swing up at RC
        # low: IC·(RC‖RL) >= swing with IC < ie_max)
        self.headroom = None
        if not follower:
            self.headroom = (p.supply - tr.vce_sat - s) / t.ie_min * (1 + SLACK)
            self.alpha_lo = box.b_lo / (box.b_lo + 1.0)
            self.rc_swing = float(_par_floor(s * (1 - SLACK) / t.ie_max, rl))
            self.gain_min = None if t.gain_min is None else t.gain_min * (1 - SLACK)

    def rc_need(self, re_hi: np.ndarray) -> np.ndarray:
        """Common emitter: the least RC low end (so also high end) that the gain and upward swing
        targets leave, for RE's high end ``re_hi``."""
        need = np.full(np.shape(re_hi), self.rc_swing)
        if self.gain_min is not None:
            need = np.maximum(need, _par_floor(self.gain_min * np.asarray(re_hi), self.rl))
        return need

    def ret_lo_max(self, re_hi: np.ndarray) -> np.ndarray:
        """Common emitter: the largest low end of RE + RE2 the headroom allows, for RE's high end."""
        return self.headroom - self.alpha_lo * self.rc_need(re_hi)

    def re_hi_cap(self, L: np.ndarray) -> np.ndarray:
        """Common emitter: the largest RE high end per divider whose emitter window starts at L
        (RET low >= L): RC low <= RC high <= (headroom − L)/α_lo, and RC low must reach rc_need."""
        cap = np.full(np.shape(L), np.inf)
        if self.headroom is None:
            return cap
        with np.errstate(invalid="ignore", divide="ignore"):
            r = (self.headroom - np.maximum(L, 0.0)) / self.alpha_lo
            if self.gain_min is not None:
                par = r if not np.isfinite(self.rl) else np.where(r > 0, r * self.rl / (r + self.rl), 0.0)
                cap = par / self.gain_min * (1 + SLACK)
            return np.where(r * (1 + SLACK) >= self.rc_swing, cap, -np.inf)

    def re_ok(self, box: _Box, RE: RoleTable) -> np.ndarray:
        """RE candidates that meet the bounds on RE alone (RE2, if any, only adds to RET)."""
        lo, hi = box.lo(RE), box.hi(RE)
        ok = (lo * (1 + SLACK) >= self.re_lo_min) & (hi * (1 - SLACK) <= self.re_hi_max)
        if self.headroom is not None:
            with np.errstate(invalid="ignore"):
                ok &= lo <= self.ret_lo_max(hi)
        return ok

    def nothing(self) -> bool:
        return self.re_lo_min > self.re_hi_max * (1 + SLACK) or not np.isfinite(self.rth_min)

    def re_lo_rin(self, rth_ll: np.ndarray, rl: float) -> np.ndarray:
        """The least RE low end that lets the input resistance reach rin_min, per divider, from
        rin = RTH(RA low, RB low) ‖ (β_lo+1)(re + X) at (RA low, RB low, RE low, hFE low), where X is
        RE low‖RL (follower) or RE low (common emitter, RE2 bypassed) and re <= ``re_max``."""
        if self.rin is None:
            return np.zeros(len(rth_ll))
        with np.errstate(divide="ignore", invalid="ignore"):
            zneed = np.where(rth_ll > self.rin, self.rin * rth_ll / (rth_ll - self.rin), np.inf)
            q = zneed / self.b1 - self.re_max
        return _par_floor(q, rl) if self.follower else np.maximum(q, 0.0)


def _dividers(ctx: Context, box: _Box, em: _Emitter, A: RoleTable, B: RoleTable, a_idx: np.ndarray, tally=None,
              band: Band | None = None, ret_range=(0.0, np.inf), tmin: float = 0.0):
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
    if not len(ia):
        return ia, ib
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
    ia, ib = ia[ok], ib[ok]
    if not len(ia):
        return ia, ib
    # some nominal RET must fit the worst-case window (L, U), the table's range and, with a band,
    # the band's window (N1, N2)
    L, U = _emitter_window(ctx, box, A, B, ia, ib)
    lo_r = np.maximum(L / (1.0 - tmin), ret_range[0]) * (1 - SLACK) - SLACK
    hi_r = np.minimum(U / (1.0 + tmin), ret_range[1]) * (1 + SLACK)
    if band is not None:
        n1, n2 = band.ret(vcc, A.v[ia], B.v[ib])
        lo_r, hi_r = np.maximum(lo_r, n1), np.minimum(hi_r, n2)
    ok = lo_r <= hi_r
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


def _join_sorted(T: RoleTable, box: _Box, owner_lo, owner_hi, owner_lo_max=None, tally=None, nominal=None):
    """Indices (owner position, k) with T.lo[k] >= owner_lo and T.hi[k] <= owner_hi (and, if
    given, T.lo[k] <= owner_lo_max, and ``nominal`` = (nlo, nhi) <= T.v[k] <= nhi)."""
    top = owner_hi
    bottom = owner_lo
    if owner_lo_max is not None:
        with np.errstate(invalid="ignore"):
            top = np.minimum(owner_hi, owner_lo_max / (1.0 - box.tmax(T)))
    if nominal is not None:
        bottom = np.maximum(bottom, nominal[0])
        top = np.minimum(top, nominal[1])
    start, stop = _span(T.v, bottom, top)
    pos, k = _ranges(np.arange(len(owner_lo)), start, stop, tally)
    if not len(pos):
        return pos, k
    ok = (box.lo(T)[k] * (1 + SLACK) >= owner_lo[pos]) & (box.hi(T)[k] * (1 - SLACK) <= owner_hi[pos])
    if owner_lo_max is not None:
        ok &= box.lo(T)[k] * (1 - SLACK) <= owner_lo_max[pos]
    if nominal is not None:
        ok &= (T.v[k] >= nominal[0][pos]) & (T.v[k] <= nominal[1][pos])
    return pos[ok], k[ok]


def _par_ceiling(y, rl: float):
    """The largest R with R‖rl <= y: inf where y >= rl (or no load)."""
    y = np.asarray(y, float)
    if not np.isfinite(rl):
        return y
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(y < rl, y * rl / (rl - y), np.inf)


def _collector(ctx: Context, box: _Box, T: Mapping[str, RoleTable], idx: dict[str, np.ndarray],
               band: Band | None = None):
    """Join RC to (divider, emitter) sets by the gain, rout, swing and saturation bounds (and the
    band's gain window)."""
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
        need_lo = _par_floor(need_par, rl)
        max_hi = np.full(n, np.inf)
        if t.gain_max is not None:
            max_hi = np.minimum(max_hi, _par_ceiling(t.gain_max / g_hi, rl))
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
            nlo = np.where(g1 > 0, _par_floor(np.maximum(g_lo_n, 0.0) / g1 * (1 - SLACK), rl),
                           np.where(g_lo_n < 0, 0.0, np.inf))
            nhi = np.where(g1 > 0, _par_ceiling(g_hi_n / g1 * (1 + SLACK), rl), np.inf)
            nominal = (nlo * (1 - SLACK), nhi * (1 + SLACK))
    pos, k = _join_sorted(RC, box, need_lo, max_hi, nominal=nominal)
    return {r: a[pos] for r, a in idx.items()}, k


def _emitter_pairs(ctx, box, em, T, ia, ib, L, U, re_lo, re_hi, re_ok, kcap, band, tally, cache):
    """Chunks of (divider position, RE, RE2) that pass the emitter bounds; with the sum index
    when it fits, else RE by RE."""
    p = ctx.problem
    RE, RE2 = T["RE"], T["RE2"]
    nlo = nhi = None
    if band is not None:
        nlo, nhi = band.ret(p.supply, T[ctx.ra].v[ia], T[ctx.rb].v[ib])
    if SumIndex.fits(RE, RE2):
        key = (id(RE), id(RE2))
        if cache is None or key not in cache:
            sums = SumIndex(RE, RE2)
            if cache is not None:
                cache[key] = sums
        else:
            sums = cache[key]
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
        pos, kre2 = _join_sorted(RE2, box, L[d] - box.lo(RE)[kre], U[d] - box.hi(RE)[kre], lo_max, tally,
                                 nominal=nominal)
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
    for g in _groups(np.ones(len(ia), np.int64), max(1, CHUNK // 32)):
        ia_g, ib_g = ia[g], ib[g]
        nominal = None if band is None else band.ret(vcc, A.v[ia_g], B.v[ib_g])
        pos, kre = _join_sorted(RE, box, np.maximum(L[g], re_lo[g]), np.minimum(U[g], re_hi[g]), tally=tally,
                                nominal=nominal)
        keep = re_ok[kre] & (kre < re_top)
        pos, kre = pos[keep], kre[keep]
        yield pos, {ctx.ra: ia_g[pos], ctx.rb: ib_g[pos], "RE": kre}


def candidate_sets(ctx: Context, T: Mapping[str, RoleTable], tally: list | None = None, band: Band | None = None,
                   cache: dict | None = None) -> Iterator[dict[str, np.ndarray]]:
    """Chunks of resistor sets {role: index into T[role]} that pass every bound above (and, with
    ``band``, the nominal windows of D < band.d).

    With ``tally`` (a one-element list), the work done is added to ``tally[0]`` (partial sets
    formed on the way: dividers, divider–emitter pairs, and ten per set whose collector is
    bounded, the costliest step) and an empty chunk is yielded after every block of dividers,
    so that a caller can stop a search whose bounds reject nearly everything only late.
    ``cache`` (a dict the caller keeps) holds the sorted (RE, RE2) sums between calls.
    """
    empty = {r: np.zeros(0, np.int64) for r in ctx.res_roles}
    p = ctx.problem
    box = _Box(ctx)
    em = _Emitter(ctx, box)
    A, B = T[ctx.ra], T[ctx.rb]
    if not (len(A) and len(B)) or any(not len(T[r]) for r in ctx.res_roles):
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
        rc_cap = float(box.hi(T["RC"]).max())
        if np.isfinite(p.rl):
            rc_cap = min(rc_cap, p.rl)
        if p.targets.rout_max is not None:
            rc_cap = min(rc_cap, p.targets.rout_max)
        kcap = rc_cap / p.targets.gain_min / (1 - box.tmax(RE)) * (1 + SLACK)
    step = max(1, CHUNK // max(1, len(B)))
    for a0 in range(0, len(A), step):
        ia, ib = _dividers(ctx, box, em, A, B, np.arange(a0, min(len(A), a0 + step)), tally, band, ret_range, tmin)
        if not len(ia):
            if tally is not None:
                yield empty
            continue
        L, U = _emitter_window(ctx, box, A, B, ia, ib)
        # RE alone: the follower's swing bounds and the input resistance bound
        _, rth_ll = _vth(p.supply, box.lo(A)[ia], box.lo(B)[ib])
        re_lo = np.maximum(em.re_lo_min, em.re_lo_rin(rth_ll, p.rl))
        re_hi = np.minimum(em.re_hi_max, em.re_hi_cap(L))
        if has2:
            pieces = ((d, {ctx.ra: ia[d], ctx.rb: ib[d], "RE": kre, "RE2": kre2})
                      for d, kre, kre2 in _emitter_pairs(ctx, box, em, T, ia, ib, L, U, re_lo, re_hi, re_ok, kcap,
                                                         band, tally, cache))
        else:
            pieces = _emitters(ctx, box, RE, A, B, ia, ib, L, U, re_lo, re_hi, re_ok, re_top, band, tally)
        for _, idx in pieces:
            if "RC" in T:
                for c0 in range(0, len(idx["RE"]), CHUNK):
                    part = {r: a[c0:c0 + CHUNK] for r, a in idx.items()}
                    if tally is not None:
                        tally[0] += 10 * len(part["RE"])
                    part, krc = _collector(ctx, box, T, part, band)
                    part["RC"] = krc
                    if len(krc):
                        yield part
                    elif tally is not None:
                        yield empty
                if tally is not None and not len(idx["RE"]):
                    yield empty
            elif len(idx["RE"]) or tally is not None:
                yield idx

"""The bounds of the design search: necessary conditions that a resistor set must meet to pass the worst case.

Each bound below is a necessary condition for feasibility at one point of the tolerance box (a
vertex), so a set it rejects fails the full judgement too; the full judgement in ``judge`` then
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
* Emitter power and IC max: at the vertex of highest IE (RA low, RB high, RE and RE2 low, hFE high,
  hot) the active-region IE is (VTH − VBE)/(RET + RTH/(β+1)); there RE (and RE2) dissipates IE²·R
  at its low end, which must stay within the derated rating, and 2·IC = 2·α·IE within IC max.
  With RE alone, the power x·a²/(x + k)² of RE's low end x (a = VTH − VBE, k = RTH/(β+1)) rises
  up to x = k and falls after, so with the table's best rating r it is within c·r (c the
  derating) only outside (x₁, x₂), the roots of c·r·(x + k)² = a²·x; where the other bounds keep
  x above x₁, x ≥ x₂ is a floor on RE's low end for the divider.
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

import numpy as np

from ..stages.kernels import par_ceiling, par_floor
from .judge import SearchContext
from .tables import RoleTable
from .windows import SLACK, vth as _vth

__all__ = ["Box", "EmitterBounds", "par_floor", "par_ceiling", "emitter_window"]


class Box:
    """The ends of the box the search guarantees over (one point when the guarantee is nominal)."""

    def __init__(self, ctx: SearchContext):
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


class EmitterBounds:
    """Bounds on RE alone (not RE + RE2) that hold for every set of the problem, and the ingredients
    of the per-divider input-resistance bound.

    ``re_lo_min``: RE's low end must reach it; ``re_hi_max``: RE's high end must not pass it (the
    follower's swing); ``ve_min``: the least VE of a follower with a swing target; ``rth_min``: the
    least divider resistance RTH at (RA low, RB low) that can still give ``rin_min``.
    """

    def __init__(self, ctx: SearchContext, box: Box):
        p, tr = ctx.problem, ctx.tr
        t = p.targets
        rl = p.rl
        self.circuit = p.circuit
        self.rl = rl
        # the circuit's own bounds (its ``emitter_bounds``): the follower's swing bounds on RE and the
        # most RE‖RL its base can see; the common emitter's headroom, RC need and gain floor
        own = {"re_lo_min": 0.0, "re_hi_max": np.inf, "ve_min": 0.0, "base_load_max": None, "headroom": None,
               **p.circuit.emitter_bounds(p.supply, tr.vce_sat, t, rl, box.b_lo, SLACK)}
        self.re_lo_min, self.re_hi_max, self.ve_min = own["re_lo_min"], own["re_hi_max"], own["ve_min"]
        self.headroom = own["headroom"]
        if self.headroom is not None:
            self.alpha_lo, self.rc_swing, self.gain_min = own["alpha_lo"], own["rc_swing"], own["gain_min"]
        self.rin = None if t.rin_min is None else t.rin_min * (1 - SLACK)
        # re = VT/IE <= VT(hottest)/ie_min at every vertex of a set that keeps IE >= ie_min
        self.re_max = box.vt_max / t.ie_min * (1 + SLACK)
        self.b1 = box.b_lo + 1.0
        self.rth_min = 0.0
        if self.rin is not None:
            self.rth_min = self.rin
            x = own["base_load_max"]
            if x is not None:
                # the base impedance (β+1)(re + X) at hFE low, X below the most the base can see
                zmax = self.b1 * (self.re_max + x)
                self.rth_min = (np.inf if zmax <= self.rin else
                                self.rin if not np.isfinite(zmax) else self.rin * zmax / (zmax - self.rin))

    def rc_need(self, re_hi: np.ndarray) -> np.ndarray:
        """Common emitter: the least RC low end (so also high end) that the gain and upward swing
        targets leave, for RE's high end ``re_hi``."""
        need = np.full(np.shape(re_hi), self.rc_swing)
        if self.gain_min is not None:
            need = np.maximum(need, par_floor(self.gain_min * np.asarray(re_hi), self.rl))
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

    def re_ok(self, box: Box, RE: RoleTable) -> np.ndarray:
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
        return self.circuit.base_load_floor(q, rl)


def emitter_window(ctx: SearchContext, box: Box, A, B, ia, ib):
    """(L, U): RET low end must be >= L and high end <= U."""
    p = ctx.problem
    vcc = p.supply
    vth_h, rth_h = _vth(vcc, box.lo(A)[ia], box.hi(B)[ib])
    vth_l, rth_l = _vth(vcc, box.hi(A)[ia], box.lo(B)[ib])
    L = (vth_h - box.vbe_lo) / p.targets.ie_max - rth_h / (box.b_hi + 1.0)
    U = (vth_l - box.vbe_hi) / p.targets.ie_min - rth_l / (box.b_lo + 1.0)
    return L, U



"""The two-stage amplifier's design search: both stages chosen together from one drawer.

What is searched: one candidate per role (stages.two_stage: R1, R2, RC, RE, [RE2, CE], C1, [C2,
R3, R4], RE3, C3) and a transistor line for each of Q1 and Q2, all from one stock with the parts of
every role and every unit drawn together.  A design passes when, at every vertex of the worst-case
box (``analysis.cascade.cascade_worst_case``: every resistor at both tolerance ends, both hFE
ranges, the ambient range), both transistors are active and every target and rating holds
(``cascade_margins``).  The objective is the single stages' (docs/method.md, "Objective"): fewest
parts, then the largest margin class, then the nominal distance to the windows' centres, then the
most parts left, the least total capacitance, and a canonical key.

How (docs/method.md, "Two-stage amplifier: the joint search"): resistor shapes (parts per role) in
order of their part count; within a shape, the stage-1 bias (R1, R2, emitter resistance) is joined
on the interval of emitter resistance its IE window allows, the same for the follower's bias when
capacitor-coupled, Q1 must be active with its collector unloaded (necessary: the follower only
draws more current through RC), and what remains is judged jointly, in chunks, over the whole box.
Designs that pass are then given capacitors best-first by a lower bound of their key (capacitors add
at least one part per role and can only lower the margin), so the search stops once no remaining
design can beat the best.  The enumeration is bounded by a work budget: past it the answer is the
best found and says it is not proven.  ``exhaustive=True`` drops the joins, the bounds and the
best-first stop (the oracle of the tests, for small drawers).
"""

from __future__ import annotations

import itertools

import numpy as np

from ..analysis.cascade import (CASCADE_CAP_KEYS, CAP_FIGURE, _Mag, _kernel_params, cascade_low_corner,
                                cascade_vertices, cascade_worst_case)
from ..stages import follower
from .cascade_problem import (CascadeDesign, CascadeOutcome, CascadeProblem, CascadeTargets, _distance, _nominal_args,
                              cascade_margins)
from .judge import MU_CLASSES, cap_margin, mu_class
from .pools import Pools
from .tables import build_tables

__all__ = ["CascadeTargets", "CascadeProblem", "CascadeDesign", "CascadeOutcome", "design_cascade",
           "cascade_margins", "WORK_BUDGET"]

WORK_BUDGET = 60_000  # resistor sets tried before the search stops unproven (about 10–30 s; `--budget` scales it)
CHUNK = 2048  # designs tried at once (at 16 vertices, then the survivors at up to 2¹¹)
BOX_CHUNK = 64  # designs judged over the whole box at once (times up to 2¹¹ vertices)
EMITTER_SUMS = 4_000_000  # (RE, RE2) combinations joined on their sum at most
G2_MAX = 2_000_000  # follower bias sets held at once at most
STAGE1_CHUNK = 2048  # stage-1 sets judged at once (times up to 2⁷ vertices)
CAP_COMBOS = 200_000  # capacitor combinations tried for one resistor design at most


# --- resistor designs ----------------------------------------------------------------------------

class _Role:
    """One role's candidates of one part count: values sorted, with tolerance, rating, parts."""

    def __init__(self, table):
        self.t = table
        self.v, self.tol, self.rating = table.v, table.tol, table.rating
        self.lo, self.hi = table.lo, table.hi

    def __len__(self) -> int:
        return len(self.v)


def _bias_pairs(problem, ra: _Role, rb: _Role, emit: list, q, lo_i, hi_i, chunk: int = 4096):
    """Chunks of index arrays (divider top, bottom, emitter candidates...) whose emitter current
    may lie in [lo_i, hi_i] at every vertex (a necessary condition, with slack): for each divider,
    the nominal total emitter resistance lies between the values that give hi_i at the
    highest-current vertex and lo_i at the lowest, the Thevenin source taken at its extremes.
    Raises ``_TooMany`` when the emitter roles' sums alone exceed ``EMITTER_SUMS``."""
    vcc = problem.supply
    c = problem.conditions
    dv = [q.vbe_tempco * (c.ambient_min - c.nominal_temp), q.vbe_tempco * (c.ambient_max - c.nominal_temp)]
    vbe_lo, vbe_hi = q.vbe + min(dv), q.vbe + max(dv)
    if len(emit) == 1:
        tot = emit[0].v
        idx = [np.arange(len(emit[0]))]
    else:
        if int(np.prod([len(e) for e in emit])) > EMITTER_SUMS:
            raise _TooMany("the emitter resistor and its bypassed part have too many combinations")
        idx = _product(*[len(e) for e in emit])
        tot = sum(e.v[i] for e, i in zip(emit, idx))
    order = np.argsort(tot, kind="stable")
    tot, idx = tot[order], [i[order] for i in idx]
    tmax = max(float(np.max(e.tol)) for e in emit)
    n_a, n_b = len(ra), len(rb)
    for s0 in range(0, n_a * n_b, chunk):
        flat = np.arange(s0, min(n_a * n_b, s0 + chunk))
        ia, ib = flat // n_b, flat % n_b
        # the rail-side resistor is the top of the divider for NPN, the bottom for PNP (mirrored)
        top, bot = (ra, rb) if problem.polarity == "npn" else (rb, ra)
        it, ibt = (ia, ib) if problem.polarity == "npn" else (ib, ia)
        vth_lo = vcc * bot.lo[ibt] / (top.hi[it] + bot.lo[ibt])
        vth_hi = vcc * bot.hi[ibt] / (top.lo[it] + bot.hi[ibt])
        rth_lo = top.lo[it] * bot.lo[ibt] / (top.lo[it] + bot.lo[ibt])
        rth_hi = top.hi[it] * bot.hi[ibt] / (top.hi[it] + bot.hi[ibt])
        with np.errstate(divide="ignore", invalid="ignore"):
            r_max = (vth_hi - vbe_lo) / lo_i - rth_lo / (q.hfe_max + 1.0)
            r_min = (vth_lo - vbe_hi) / hi_i - rth_hi / (q.hfe_min + 1.0)
        r_max = r_max / (1 - tmax) * (1 + 1e-9)
        r_min = r_min / (1 + tmax) * (1 - 1e-9)
        a = np.searchsorted(tot, r_min, side="left")
        b = np.searchsorted(tot, r_max, side="right")
        cnt = np.maximum(b - a, 0)
        # the dividers in groups of at most ``chunk`` joined sets (one divider may exceed it alone)
        ends = np.cumsum(cnt)
        k0 = 0
        while k0 < len(cnt):
            k1 = max(k0 + 1, int(np.searchsorted(ends, (ends[k0 - 1] if k0 else 0) + chunk, side="right")))
            sub = slice(k0, k1)
            c = cnt[sub]
            k0 = k1
            if not c.sum():
                continue
            rep = np.repeat(np.arange(len(c)), c)
            pos = np.repeat(a[sub], c) + (np.arange(c.sum()) - np.repeat(np.cumsum(c) - c, c))
            yield [ia[sub][rep], ib[sub][rep], *[i[pos] for i in idx]]


class _TooMany(Exception):
    """A join whose inputs alone are past the search's limits (the answer is then not proven)."""


def _product_chunks(sizes, chunk: int):
    """The product of ``range(size)`` for each size, as chunks of index arrays (never whole)."""
    total = int(np.prod(sizes)) if len(sizes) else 0
    for s0 in range(0, total, chunk):
        flat = np.arange(s0, min(total, s0 + chunk))
        out = []
        for size in reversed(sizes):
            out.append(flat % size)
            flat = flat // size
        yield out[::-1]


def _product(*sizes):
    g = np.meshgrid(*[np.arange(s) for s in sizes], indexing="ij")
    return [x.reshape(-1) for x in g]


def _stage1_ok(problem, q1, R: dict, i1: dict) -> np.ndarray:
    """Necessary conditions on stage 1 alone, at every stage-1 vertex, its collector unloaded:
    Q1 active (the follower only draws more current through RC, lowering VCE1), IE1 in its window,
    rin at least rin_min (stage 1 alone sets both), the powers of R1, R2, RE, RE2 (exact) and RC
    (the follower's base current only adds), Q1's IC (exact), and the gain unloaded at least
    gain_min (the follower's input and its gain below 1 only lower it)."""
    from ..analysis.dc import ACTIVE

    n = len(i1["R1"])
    if not n:
        return np.zeros(0, bool)
    v = {r: R[r].v[i1[r]] for r in i1}
    tol = {r: R[r].tol[i1[r]] for r in i1}
    # an unloaded collector: the follower's base through huge resistors, capacitor-coupled
    kw = dict(coupling="capacitor", polarity=problem.polarity, supply=problem.supply, r1=v["R1"], r2=v["R2"],
              rc=v["RC"], re=v["RE"], re2=v.get("RE2", np.zeros(n)), r3=np.full(n, 1e12), r4=np.full(n, 1e12),
              re3=np.full(n, 1e12), rs=problem.source_resistance, bypassed=problem.bypass, vbe1=q1.vbe,
              vbe2=q1.vbe, vce_sat1=q1.vce_sat, vce_sat2=q1.vce_sat, vbe_tempco1=q1.vbe_tempco,
              vbe_tempco2=q1.vbe_tempco)
    fig, _ = cascade_vertices(tolerances={r.lower(): tol[r] for r in tol}, hfe1_min=q1.hfe_min, hfe1_max=q1.hfe_max,
                              hfe2_min=100.0, hfe2_max=100.0, temp_min=problem.conditions.ambient_min,
                              temp_max=problem.conditions.ambient_max, **kw)
    t = problem.targets
    ok = np.all(fig.state1 == ACTIVE, axis=0)
    slack = 1e-9
    ok &= np.all(fig.ie1 >= t.ie1_min * (1 - slack), axis=0) & np.all(fig.ie1 <= t.ie1_max * (1 + slack), axis=0)
    if t.rin_min is not None:
        ok &= np.all(np.where(fig.state1 == ACTIVE, fig.rin, np.inf) >= t.rin_min * (1 - slack), axis=0)
    if t.gain_min is not None:
        rin = fig.rin
        unloaded = np.abs(fig.gain1) * rin / (problem.source_resistance + rin)
        ok &= np.all(np.where(fig.state1 == ACTIVE, unloaded, np.inf) >= t.gain_min * (1 - slack), axis=0)
    c = problem.conditions
    for role, figname in (("R1", "p_r1"), ("R2", "p_r2"), ("RE", "p_re"), ("RE2", "p_re2"), ("RC", "p_rc")):
        if role in i1:
            limit = R[role].rating[i1[role]] * c.resistor_derating
            ok &= np.all(getattr(fig, figname) <= limit * (1 + slack), axis=0)
    if q1.ic_max is not None:
        ok &= np.all(2.0 * fig.ic1 <= q1.ic_max * (1 + slack), axis=0)
    return ok


class _Search:
    """The search for one pair of transistor lines."""

    def __init__(self, problem: CascadeProblem, rc_tabs, cc_tabs, pools: Pools, q1l, q2l, exhaustive: bool):
        from .runner import transistor_model

        self.p, self.rc_tabs, self.cc_tabs, self.pools = problem, rc_tabs, cc_tabs, pools
        self.q1l, self.q2l = q1l, q2l
        self.q1, self.q2 = transistor_model(q1l), transistor_model(q2l)
        self.exhaustive = exhaustive
        self.judged = 0  # designs judged over the whole box
        self.probed = 0  # designs tried (stage 1 alone, and whole at the first vertices)
        self.limits: set = set()

    # resistor designs of one shape (role -> part count) that pass the whole box
    def passing(self, shape: dict, budget: int):
        """(passing designs as [(index arrays, margins)], role tables, complete): the resistor
        designs of one shape that pass the whole box; ``complete`` False when the work budget
        (designs tried, ``self.probed``) ran out first."""
        p = self.p
        R = {r: _Role(self.rc_tabs[shape[r]]) for r in p.res_roles}
        emit = ["RE"] + (["RE2"] if p.bypass else [])
        g1_roles = ["R1", "R2", *emit]
        t = p.targets
        found: list = []
        if self.probed >= budget:
            return found, R, False
        try:
            if p.coupling == "capacitor":
                roles2 = ["R3", "R4", "RE3"]
                if self.exhaustive or t.ie2_min is None:
                    chunks = _product_chunks([len(R[r]) for r in roles2], 1 << 16)
                else:
                    chunks = _bias_pairs(p, R["R3"], R["R4"], [R["RE3"]], self.q2, t.ie2_min, t.ie2_max)
                g2 = {r: [] for r in roles2}
                held = 0
                for ch in chunks:
                    for r, a in zip(roles2, ch):
                        g2[r].append(a)
                    held += len(ch[0])
                    if held > G2_MAX:
                        raise _TooMany("the follower's bias has too many candidates")
                g2 = {r: (np.concatenate(a) if a else np.zeros(0, np.int64)) for r, a in g2.items()}
            else:
                g2 = {"RE3": np.arange(len(R["RE3"]))}
            n_g2 = len(g2["RE3"])
            if self.exhaustive:
                g1_chunks = _product_chunks([len(R[r]) for r in g1_roles], 1 << 14)
            else:
                g1_chunks = _bias_pairs(p, R["R1"], R["R2"], [R[r] for r in emit], self.q1, t.ie1_min, t.ie1_max)
            nrc = len(R["RC"])
            for g1 in g1_chunks:
                g1 = dict(zip(g1_roles, g1))
                for k1, kc in _product_chunks([len(g1["R1"]), nrc], STAGE1_CHUNK):
                    if self.probed >= budget:
                        return found, R, False
                    s1 = {r: g1[r][k1] for r in g1}
                    s1["RC"] = kc
                    self.probed += len(kc)
                    if not self.exhaustive:
                        keep = _stage1_ok(p, self.q1, R, s1)
                        s1 = {r: a[keep] for r, a in s1.items()}
                    n_s1 = len(s1["RC"])
                    for c0 in range(0, n_s1 * n_g2, CHUNK):
                        if self.probed >= budget:
                            return found, R, False
                        flat = np.arange(c0, min(n_s1 * n_g2, c0 + CHUNK))
                        i, j = flat // n_g2, flat % n_g2
                        idx = {r: s1[r][i] for r in s1}
                        idx.update({r: g2[r][j] for r in g2})
                        ok, margins = self._judge(R, idx)
                        self.probed += len(flat)
                        if ok.any():
                            found.append(({r: idx[r][ok] for r in idx}, {k: m[ok] for k, m in margins.items()}))
        except _TooMany as exc:
            self.limits.add(str(exc))
            return found, R, False
        return found, R, True

    def _judge(self, R, idx):
        """(passes, margins) of resistor designs over the whole box.  First at a few of its
        vertices (every resistor at its low end, then at its high end, with both hFE and the
        ambient at both ends): a design failing there fails the box, and most fail there."""
        p = self.p
        v = {r: R[r].v[idx[r]] for r in idx}
        tol = {r: R[r].tol[idx[r]] for r in idx}
        power = {r: R[r].rating[idx[r]] for r in idx}
        alive = np.ones(len(v["R1"]), bool)
        if True:  # the probe vertices are vertices of the box: the exhaustive run takes them too
            for sign in (-1.0, 1.0):
                sel = np.flatnonzero(alive)
                if not len(sel):
                    break
                ends = {r: v[r][sel] * (1.0 + sign * tol[r][sel]) for r in v}
                kw, box = _nominal_args(p, self.q1, self.q2, ends, {})
                m = cascade_margins(p, cascade_worst_case(corner=False, **box, **kw),
                                    {r: power[r][sel] for r in power}, self.q1, self.q2)
                alive[sel] = np.all(np.stack(list(m.values())) >= 0, axis=0)
        ok = np.zeros(len(alive), bool)
        full: dict = {}
        survivors = np.flatnonzero(alive)
        self.judged += len(survivors)
        for c0 in range(0, len(survivors), BOX_CHUNK):
            sel = survivors[c0:c0 + BOX_CHUNK]
            kw, box = _nominal_args(p, self.q1, self.q2, {r: v[r][sel] for r in v}, {r: tol[r][sel] for r in tol})
            wc = cascade_worst_case(corner=False, **box, **kw)
            m = cascade_margins(p, wc, {r: power[r][sel] for r in power}, self.q1, self.q2)
            for role in p.cap_roles:
                fig = CAP_FIGURE[role]
                m[f"_{role} lo"], m[f"_{role} hi"] = wc.low[fig], wc.high[fig]
            ok[sel] = np.all(np.stack([x for k, x in m.items() if not k.startswith("_")]) >= 0, axis=0)
            for k, x in m.items():
                full.setdefault(k, np.zeros(len(alive)))[sel] = x
        return ok, full

    # capacitors for one resistor design
    def complete(self, R, idx: dict, margins: dict, res_parts) -> tuple | None:
        """(key tail, caps {role: (table, i)}, margins) of the best capacitors for one resistor
        design (``idx`` role -> index, ``margins`` its worst-case margins), or None."""
        p = self.p
        v = {r: R[r].v[[idx[r]]] for r in idx}
        tol = {r: R[r].tol[[idx[r]]] for r in idx}
        kw, box = _nominal_args(p, self.q1, self.q2, v, tol)
        fig, _ = cascade_vertices(**box, **kw)
        f = p.targets.f_low
        mu_r = min(float(x) for k, x in margins.items() if not k.startswith("_"))
        per = {}
        for role in p.cap_roles:
            for c in range(1, p.max_parts + 1):
                t = self.cc_tabs.get(c)
                if t is None or not len(t):
                    continue
                low = t.lo
                m = cap_margin(margins[f"_{role} lo"], margins[f"_{role} hi"], t.rating, t.polarized,
                               p.conditions.cap_voltage_margin)
                ok = m >= 0
                if role == "CE" and ok.any():
                    # a bypass capacitor must bypass within the band (as in the single stage)
                    from ..analysis.cascade import _own_corners

                    one = np.ones(1)
                    f_ce = _own_corners(fig, one, one, one, low[None, :])[3]
                    ok &= np.all(f_ce <= f * (1 + 1e-12), axis=0)
                if not self.exhaustive and ok.any():
                    sel = np.flatnonzero(ok)
                    caps = {r: np.full(len(sel), 1e3) for r in p.cap_roles}
                    caps[role] = low[sel]
                    ok[sel] = self._meets(fig, caps, f)
                per[(role, c)] = (t, np.flatnonzero(ok), m)
        best = None
        for counts in itertools.product(range(1, p.max_parts + 1), repeat=len(p.cap_roles)):
            roles = list(zip(p.cap_roles, counts))
            if any((r, c) not in per or not len(per[(r, c)][1]) for r, c in roles):
                continue
            sizes = [len(per[rc][1]) for rc in roles]
            total = int(np.prod(sizes))
            if total > CAP_COMBOS:
                self.cap_skipped = True
                continue
            pick = dict(zip(p.cap_roles, _product(*sizes)))
            cand = {r: per[(r, c)][1][pick[r]] for r, c in roles}
            tabs = {r: per[(r, c)][0] for r, c in roles}
            low = {r: tabs[r].lo[cand[r]] for r in p.cap_roles}
            ok = self._meets(fig, low, f)
            if not ok.any():
                continue
            sel = np.flatnonzero(ok)
            parts = list(res_parts) + [(tabs[r].members[cand[r][sel]], tabs[r].counts[cand[r][sel]])
                                       for r in p.cap_roles]
            parts = [(m if len(m) == len(sel) else np.repeat(m, len(sel), axis=0),
                      c if len(c) == len(sel) else np.repeat(c, len(sel), axis=0)) for m, c in parts]
            sok, left = self.pools.check(parts, p.units)
            sel, left = sel[sok], left[sok]
            if not len(sel):
                continue
            cm = self._corner_margin(fig, {r: low[r][sel] for r in p.cap_roles}, f)
            vm = np.min(np.stack([per[(r, c)][2][cand[r][sel]] for r, c in roles]), axis=0)
            mu = np.minimum(np.minimum(vm, cm), mu_r)
            tc = np.sum(np.stack([tabs[r].v[cand[r][sel]] for r in p.cap_roles]), axis=0)
            pc = sum(counts)
            cls = mu_class(mu)
            order = np.lexsort((tc, -left, -cls))
            for k in order[:8]:
                if (cls[k], left[k], tc[k]) != (cls[order[0]], left[order[0]], tc[order[0]]):
                    break
                kk = int(sel[k])
                canon = tuple(tabs[r].key(int(cand[r][kk])) for r in p.cap_roles)
                key = (pc, -float(cls[k]), -float(left[k]), float(tc[k]), canon)
                if best is None or key < best[0]:
                    cap_m = {f"{r} voltage": float(per[(r, c)][2][cand[r][kk]]) for r, c in roles}
                    cap_m["f_low"] = float(cm[k])
                    best = (key, {r: (tabs[r], int(cand[r][kk])) for r in p.cap_roles}, cap_m, float(mu[k]))
        return best

    def _meets(self, fig, caps: dict, f) -> np.ndarray:
        """The whole-amplifier corner at or below ``f`` at every vertex, per capacitor combination."""
        c = _cap_args(caps)
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            mag = _Mag(_kernel_params(fig, c["c1"], c["c2"], c["c3"], c["ce"]))((2 * np.pi * f) ** 2)
            return np.all(fig.active & (mag >= 0.5 * fig.gain ** 2), axis=0)

    def _corner_margin(self, fig, caps: dict, f) -> np.ndarray:
        c = _cap_args(caps)
        fl = cascade_low_corner(fig, c1=c["c1"], c2=c["c2"], c3=c["c3"], ce=c["ce"])["f_low"]
        worst = np.max(np.where(np.isnan(fl), np.inf, fl), axis=0)
        return (f - worst) / f


def _cap_args(caps: dict) -> dict:
    """The cascade functions' capacitor arguments (c1, c2, c3, ce) as rows, from role -> values."""
    roles = ("C1", "C2", "C3", "CE")
    return {k: np.asarray(caps.get(r, np.zeros(1)), float)[None, :] for k, r in zip(CASCADE_CAP_KEYS, roles)}


def _shapes(problem: CascadeProblem):
    counts = range(1, problem.max_parts + 1)
    out = [dict(zip(problem.res_roles, c)) for c in itertools.product(counts, repeat=len(problem.res_roles))]
    return sorted(out, key=lambda s: sum(s.values()))


def design_cascade(problem: CascadeProblem, lines, *, top: int = 1, exhaustive: bool = False,
                   budget: int = WORK_BUDGET, labels: dict | None = None) -> CascadeOutcome:
    """The ``top`` best designs of ``problem`` from stock ``lines`` (see the module docstring);
    ``labels`` (Q1/Q2 -> stock label) holds a transistor to the lines of that label."""
    from .runner import suitable_transistors
    from .problem import DesignProblem, DesignTargets

    pools = Pools.build(lines)
    cand = pools.search_lines(lines)
    rtab = build_tables([ln for ln in cand if ln.kind == "resistor"], "resistor", problem.max_parts, problem.units)
    ctab = build_tables([ln for ln in cand if ln.kind == "capacitor"], "capacitor", problem.max_parts, problem.units)
    rc_tabs = {c: rtab.one(c) for c in range(1, problem.max_parts + 1) if c in rtab}
    cc_tabs = {c: ctab.one(c) for c in range(1, problem.max_parts + 1) if c in ctab}
    # the transistor lines as the single stages judge them (polarity, quantity, hFE given, VCEO)
    probe = DesignProblem(follower.NAME, problem.polarity, problem.supply,
                          DesignTargets(ie_min=problem.targets.ie1_min, ie_max=problem.targets.ie1_max,
                                        f_low=problem.targets.f_low), units=problem.units)
    trs, why = suitable_transistors(probe, lines)
    outcome = CascadeOutcome([], True, reasons=list(why))
    if not trs:
        outcome.reasons.append("no transistor line suits both stages")
        return outcome
    if not rc_tabs or not cc_tabs:
        outcome.reasons.append("the drawer has no " + ("resistors" if not rc_tabs else "capacitors"))
        return outcome
    n_caps = len(problem.cap_roles)
    labels = {k: v.lower() for k, v in (labels or {}).items() if v}

    def allowed(line, name):
        return name not in labels or (line.label or "").lower() == labels[name]

    searches = [_Search(problem, rc_tabs, cc_tabs, pools, a, b, exhaustive) for a, b in itertools.product(trs, repeat=2)
                if (a.index != b.index or a.qty >= 2 * problem.units) and allowed(a, "Q1") and allowed(b, "Q2")]
    if not searches:
        outcome.reasons.append("one transistor line with too few parts for both stages")
        return outcome
    best: list = []
    pending: list = []
    levels = itertools.groupby(_shapes(problem), key=lambda sh: sum(sh.values()))
    for pr, shapes in levels:
        if not exhaustive and len(best) >= top and (pr + n_caps, -max(MU_CLASSES), 0.0) > best[top - 1].key[:3]:
            break  # no design with more resistor parts can come first
        for shape in shapes:
            if any(c not in rc_tabs for c in shape.values()):
                continue
            for srch in searches:
                found, R, complete = srch.passing(shape, max(0, budget - sum(x.probed for x in searches)))
                outcome.proven &= complete
                for idx, margins in found:
                    pending += _pending(problem, srch, R, idx, margins, shape, pools, n_caps)
        pending.sort(key=lambda x: (x[0], x[1]))
        rest = []
        for item in pending:
            if not exhaustive and len(best) >= top and item[0] > best[top - 1].key[:3]:
                continue  # can never come first
            d = _finish(problem, item)
            if d is not None:
                best.append(d)
                best.sort(key=lambda x: x.key)
                del best[top:]
        pending = rest
    outcome.judged = sum(x.judged for x in searches)
    outcome.tried = sum(x.probed for x in searches)
    for x in searches:
        outcome.reasons += sorted(x.limits - set(outcome.reasons))
    if any(getattr(x, "cap_skipped", False) for x in searches):
        outcome.proven = False
    outcome.designs = best
    return outcome


def _pending(problem, srch, R, idx, margins, shape, pools, n_caps) -> list:
    """Passing resistor designs that the drawer can give, with their key's lower bound."""
    pr = sum(shape.values())
    parts = [(R[r].t.members[idx[r]], R[r].t.counts[idx[r]]) for r in problem.res_roles]
    sok, _left = pools.check(parts, problem.units)
    v = {r: R[r].v[idx[r]] for r in problem.res_roles}
    dist = _distance(problem, srch.q1, srch.q2, v)
    mu = np.min(np.stack([m for k, m in margins.items() if not k.startswith("_")]), axis=0)
    cls = mu_class(mu)
    out = []
    for k in np.flatnonzero(sok):
        row = {r: int(idx[r][k]) for r in problem.res_roles}
        mrow = {name: float(m[k]) for name, m in margins.items()}
        rparts = [(m[[k]], c[[k]]) for m, c in parts]
        out.append(((pr + n_caps, -float(cls[k]), float(dist[k])), id(srch) + k, srch, R, row, mrow, rparts, shape))
    return out


def _finish(problem, item) -> CascadeDesign | None:
    lb, _n, srch, R, row, mrow, rparts, shape = item
    got = srch.complete(R, row, mrow, rparts)
    if got is None:
        return None
    (pc, ncls, nleft, tc, ccanon), caps, cap_m, _mu = got
    pr = sum(shape.values())
    res_canon = tuple(R[r].t.key(row[r]) for r in problem.res_roles)
    key = (pr + pc, ncls, lb[2], nleft, tc, (srch.q1l.index, srch.q2l.index, res_canon, ccanon))
    margins = {k: v for k, v in mrow.items() if not k.startswith("_")}
    margins.update(cap_m)
    choice = {r: (R[r].t, row[r]) for r in problem.res_roles}
    choice.update(caps)
    return CascadeDesign(key, srch.q1l, srch.q2l, choice, margins, pr + pc, lb[2])

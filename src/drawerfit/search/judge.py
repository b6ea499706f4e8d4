"""Judging candidate designs in bulk: worst case over the tolerance box, margins, distance to target.

Both the pruned search and the naive enumeration (``exhaustive``) judge designs here, so they
agree on what is feasible and on every figure of the objective.  The figures come from
``analysis.core`` (``evaluate_dc`` and ``meets_corner``); this module only walks the vertices of
the box (each resistor at value·(1 ± tol), hFE at its two ends, the ambient at its two ends) and
turns figures into margins.  With ``guarantee = "nominal"`` the box shrinks to one point.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass
from typing import Mapping

import numpy as np

from ..analysis import core
from ..constants import NOMINAL_TEMP_C
from ..stages import TransistorModel
from .problem import DesignProblem

__all__ = ["mu_class", "MU_CLASSES", "SearchContext", "ResistorEval", "evaluate_resistors", "vertex_dc", "cap_node", "nominal_distance"]

CAP_NODE = {"C1": "v_c1", "C2": "v_c2", "CE": "v_ce"}
_POWER = {"R1": "p_r1", "R2": "p_r2", "RE": "p_re", "RC": "p_rc", "RE2": "p_re2"}
# The same rules and names as analyse's checks (analysis/targets.rating_margins).


def cap_node(role: str) -> str:
    return CAP_NODE[role]


@dataclass(frozen=True)
class Vertex:
    """One corner of the box: 0 = low end, 1 = high end, per resistor role; hFE and ambient ends."""

    res: Mapping[str, int]
    hfe: float
    temp: float
    nominal: bool = False


class SearchContext:
    """The fixed part of a search: problem, transistor, roles, vertices."""

    def __init__(self, problem: DesignProblem, transistor: TransistorModel):
        self.problem = problem
        self.tr = transistor
        self.res_roles, self.cap_roles = problem.roles
        self.ra, self.rb = ("R1", "R2") if problem.polarity == "npn" else ("R2", "R1")
        c = problem.conditions
        self.t_lo, self.t_hi = c.ambient_min, c.ambient_max
        self.vbe_at = lambda t: transistor.vbe + transistor.vbe_tempco * (t - c.nominal_temp)
        self.vertices = self._vertices()
        self.nominal = Vertex({r: -1 for r in self.res_roles}, transistor.hfe, c.nominal_temp, True)

    def _vertices(self) -> list[Vertex]:
        p, tr = self.problem, self.tr
        if p.guarantee == "nominal":
            return [Vertex({r: -1 for r in self.res_roles}, tr.hfe, p.conditions.nominal_temp, True)]
        temps = (self.t_lo, self.t_hi) if self.t_hi > self.t_lo else (self.t_lo,)
        hfes = (tr.hfe_min, tr.hfe_max) if tr.hfe_max > tr.hfe_min else (tr.hfe_min,)
        # IE is highest with RA low, RB high, RE and RE2 low, hFE high, hot (VBE low); visit the two
        # IE extremes first: most candidates that fail, fail there.
        hi = {r: 1 for r in self.res_roles}
        hi.update({self.ra: 0, "RE": 0, "RE2": 0, "RC": 0})
        hi = {r: hi[r] for r in self.res_roles}
        lo = {r: 1 - b for r, b in hi.items()}
        first = [Vertex(hi, hfes[-1], temps[-1]), Vertex(lo, hfes[0], temps[0])]
        out = list(first)
        for bits in itertools.product((0, 1), repeat=len(self.res_roles)):
            res = dict(zip(self.res_roles, bits))
            for h in hfes:
                for t in temps:
                    v = Vertex(res, h, t)
                    if not any(v == f for f in first):
                        out.append(v)
        return out

    def dc_args(self, values: Mapping[str, np.ndarray]) -> dict:
        p, tr = self.problem, self.tr
        kw = dict(topology=p.topology, polarity=p.polarity, supply=p.supply,
                  rs=p.source_resistance, rl=p.rl, vce_sat=tr.vce_sat, vbe=tr.vbe,
                  vbe_tempco=tr.vbe_tempco, bypassed=p.bypass and p.circuit.HAS_BYPASS)
        for role in self.res_roles:
            kw[role.lower()] = values[role]
        return kw


def _pick(vertex: Vertex, role: str, v, tol):
    b = vertex.res[role]
    if b < 0:
        return v
    return v * (1 - tol) if b == 0 else v * (1 + tol)


STACK = 1 << 16  # (vertex, set) pairs evaluated in one call


def _vertices_dc(ctx: SearchContext, verts, v: Mapping[str, np.ndarray], tol: Mapping[str, np.ndarray]):
    """``core.evaluate_dc`` at several vertices in one call: arrays of shape (vertices, sets)."""
    vals = {}
    for r in ctx.res_roles:
        bits = np.array([vt.res[r] for vt in verts], float)[:, None]
        sign = np.where(bits < 0, 0.0, np.where(bits == 0, -1.0, 1.0))
        vals[r] = np.asarray(v[r], float)[None, :] * (1.0 + sign * np.asarray(tol[r], float)[None, :])
    hfe = np.array([vt.hfe for vt in verts], float)[:, None]
    temp = np.array([vt.temp for vt in verts], float)[:, None]
    return core.evaluate_dc(**ctx.dc_args(vals), hfe=hfe, temp_c=temp)


def vertex_dc(ctx: SearchContext, vertex: Vertex, v: Mapping[str, np.ndarray], tol: Mapping[str, np.ndarray]):
    """``core.evaluate_dc`` at one vertex for arrays of resistor values and tolerances."""
    vals = {r: _pick(vertex, r, v[r], tol[r]) for r in ctx.res_roles}
    return core.evaluate_dc(**ctx.dc_args(vals), hfe=vertex.hfe, temp_c=vertex.temp)


@dataclass
class ResistorEval:
    """Worst-case judgement of resistor sets (arrays over the sets that were kept).

    ``keep`` indexes the input arrays; ``target`` and ``rating`` map constraint names to their
    smallest relative margin over the box; ``vnode`` maps C1/C2/CE to (lowest, highest) signed DC
    voltage; ``distance`` is the normalised distance of the nominal figures to the target centres;
    ``margin_r`` the smallest rating margin; ``mu`` the smallest of every target and rating margin
    (the objective's μ, before the capacitors); ``nominal`` holds nominal IE and |gain|.
    """

    keep: np.ndarray
    target: dict
    rating: dict
    active: np.ndarray
    vnode: dict
    distance: np.ndarray
    margin_r: np.ndarray
    nominal: dict
    mu: np.ndarray = None  # type: ignore[assignment]

    def __post_init__(self) -> None:
        if self.mu is None:
            parts = [a for a in self.target.values()] + [self.margin_r]
            self.mu = np.min(np.stack(parts), axis=0) if parts else np.full(len(self.keep), np.inf)


def _target_margins(ctx: SearchContext, dc) -> dict[str, np.ndarray]:
    t = ctx.problem.targets
    ie = dc.ie
    out = {"ie_min": (ie - t.ie_min) / t.ie_min, "ie_max": (t.ie_max - ie) / t.ie_max}
    if t.swing is not None:
        out["swing"] = (dc.swing_peak - t.swing) / t.swing
    if t.rin_min is not None:
        out["rin_min"] = (dc.rin - t.rin_min) / t.rin_min
    if t.rout_max is not None:
        out["rout_max"] = (t.rout_max - dc.rout) / t.rout_max
    g = np.abs(dc.gain)
    if t.gain_min is not None:
        out["gain_min"] = (g - t.gain_min) / t.gain_min
    if t.gain_max is not None:
        out["gain_max"] = (t.gain_max - g) / t.gain_max
    return out


def _rating_margins(ctx: SearchContext, dc, ratings: Mapping[str, np.ndarray]) -> dict[str, np.ndarray]:
    c, tr = ctx.problem.conditions, ctx.tr
    out = {}
    for role in ctx.res_roles:
        allowed = c.resistor_derating * ratings[role]
        out[f"{role} power"] = (allowed - getattr(dc, _POWER[role])) / allowed
    if tr.pd is not None:
        allowed = c.transistor_derating * tr.pd
        out["Q1 power"] = (allowed - dc.p_q) / allowed
    if tr.vceo is not None:
        out["Q1 VCEO"] = np.full(dc.ic.shape, (tr.vceo - ctx.problem.supply) / tr.vceo)
    if tr.ic_max is not None:
        out["Q1 IC max"] = (tr.ic_max - 2.0 * dc.ic) / tr.ic_max  # twice IC, as analyse checks it
    return out


def evaluate_resistors(ctx: SearchContext, v: Mapping[str, np.ndarray], tol: Mapping[str, np.ndarray],
                       ratings: Mapping[str, np.ndarray], *, drop: bool = True) -> ResistorEval:
    """Judge resistor sets at every vertex; with ``drop`` the failing ones are left out as soon as
    they fail (their margins are then not complete), else every set is judged at every vertex."""
    n = len(next(iter(v.values()))) if v else 0
    alive = np.arange(n)
    tmin: dict[str, np.ndarray] = {}
    rmin: dict[str, np.ndarray] = {}
    vlo = {r: np.full(n, np.inf) for r in ctx.cap_roles}
    vhi = {r: np.full(n, -np.inf) for r in ctx.cap_roles}
    active = np.ones(n, bool)
    verts = list(ctx.vertices)
    k = 0
    while k < len(verts) and len(alive):
        # the two IE extremes one at a time (most sets that fail, fail there), then the rest in
        # stacks of vertices (one call for many vertices: the same figures, fewer calls)
        size = 1 if k < 2 else max(1, min(len(verts) - k, STACK // max(1, len(alive))))
        group = verts[k:k + size]
        k += size
        sub = {r: v[r][alive] for r in ctx.res_roles}
        subt = {r: tol[r][alive] for r in ctx.res_roles}
        dc = _vertices_dc(ctx, group, sub, subt)
        act = np.all(dc.state == core.ACTIVE, axis=0)
        active[alive] &= act
        tm = _target_margins(ctx, dc)
        rm = _rating_margins(ctx, dc, {r: ratings[r][alive] for r in ctx.res_roles})
        state_ok = dc.state == core.ACTIVE
        for d, src in ((tmin, tm), (rmin, rm)):
            for name, m in src.items():
                m = np.min(np.where(state_ok, m, -np.inf), axis=0)
                if name not in d:
                    d[name] = np.full(n, np.inf)
                d[name][alive] = np.minimum(d[name][alive], m)
        for role in ctx.cap_roles:
            x = getattr(dc, CAP_NODE[role])
            vlo[role][alive] = np.minimum(vlo[role][alive], np.min(x, axis=0))
            vhi[role][alive] = np.maximum(vhi[role][alive], np.max(x, axis=0))
        if drop:
            ok = act.copy()
            for name in tm:
                ok &= tmin[name][alive] >= 0
            for name in rm:
                ok &= rmin[name][alive] >= 0
            alive = alive[ok]
    if drop:
        keep = alive
    else:
        keep = np.arange(n)
    # nominal figures: the distance to the target centres
    sub = {r: v[r][keep] for r in ctx.res_roles}
    subt = {r: tol[r][keep] for r in ctx.res_roles}
    distance, nominal = nominal_distance(ctx, sub, subt, figures=True)
    rating = {k: a[keep] for k, a in rmin.items()}
    margin_r = np.min(np.stack(list(rating.values())), axis=0) if rating else np.full(len(keep), np.inf)
    return ResistorEval(
        keep=keep, target={k: a[keep] for k, a in tmin.items()}, rating=rating, active=active[keep],
        vnode={r: (vlo[r][keep], vhi[r][keep]) for r in ctx.cap_roles}, distance=distance,
        margin_r=margin_r, nominal=nominal)


MU_CLASSES = (0.0, 0.01, 0.02, 0.03, 0.05, 0.07, 0.1, 0.15, 0.2, 0.3, 0.5)  # the objective's margin classes


def mu_class(x):
    """The smallest margin as the objective compares it: the largest of ``MU_CLASSES`` at or below
    it (−inf below 0), so that margins a practitioner would call alike tie and the nominal distance
    to the targets' centres decides between them (docs/method.md, "Objective")."""
    a = np.asarray(x, float)
    cls = np.asarray(MU_CLASSES)
    k = np.searchsorted(cls, a * (1 + 1e-12) + 1e-15, side="right") - 1
    return np.where(k >= 0, cls[np.maximum(k, 0)], -np.inf)


def tighten(ctx: SearchContext, theta: float) -> SearchContext | None:
    """The search's context with every target and rating tightened so that a set meets it exactly when
    all its margins under ``ctx`` are at least ``theta`` (0 <= theta < 1); None when nothing can.

    A lower bound x becomes x·(1 + θ), an upper bound x·(1 − θ) (f_low too); the derated fractions of
    the resistor and transistor power ratings and the capacitor voltage margin are times (1 − θ), and
    so are IC max and VCEO: a margin (limit − x)/limit >= θ is x <= (1 − θ)·limit.  The window centres
    stay those of the real targets (the distance D is not changed)."""
    from dataclasses import fields, replace

    from ..parts import SpecError
    from .problem import ShiftedTargets

    if theta <= 0:
        return ctx
    p, tr = ctx.problem, ctx.tr
    tg = p.targets
    up, down = (lambda x: None if x is None else x * (1 + theta)), (lambda x: None if x is None else x * (1 - theta))
    values = {f.name: getattr(tg, f.name) for f in fields(tg) if f.name != "real"}
    values.update(ie_min=up(tg.ie_min), ie_max=down(tg.ie_max), f_low=down(tg.f_low), swing=up(tg.swing),
                  rin_min=up(tg.rin_min), rout_max=down(tg.rout_max), gain_min=up(tg.gain_min),
                  gain_max=down(tg.gain_max))
    try:
        targets = ShiftedTargets(**values, real=getattr(tg, "real", None) or tg)
    except SpecError:
        return None  # the window closes: nothing has that margin
    c = p.conditions
    cond = replace(c, resistor_derating=c.resistor_derating * (1 - theta),
                   transistor_derating=c.transistor_derating * (1 - theta),
                   cap_voltage_margin=c.cap_voltage_margin * (1 - theta))
    model = replace(tr, ic_max=down(tr.ic_max), vceo=down(tr.vceo))
    if model.vceo is not None and model.vceo < p.supply:
        return None
    return SearchContext(replace(p, targets=targets, conditions=cond), model)


def nominal_figures(ctx: SearchContext, v: Mapping[str, np.ndarray]) -> dict[str, np.ndarray]:
    """IE and |gain| at the nominal point (nominal values, nominal hFE and temperature), from the
    active-region formulas whatever the state: IE = (VTH − VBE)⁺/(RET + RTH/(β+1)) and, for the
    common emitter, |gain| = α·(RC‖RL)/(re + RE)·rin/(RS + rin).  A set active at the nominal point
    (every design: it is active over the whole box) gets the figures ``evaluate_dc`` gives; using
    the formulas everywhere lets the search bound the distance D exactly (``joins``)."""
    p, tr = ctx.problem, ctx.tr
    t = ctx.nominal.temp
    ra, rb = np.asarray(v[ctx.ra], float), np.asarray(v[ctx.rb], float)
    vth = p.supply * rb / (ra + rb)
    rth = ra * rb / (ra + rb)
    beta = tr.hfe
    vbe = tr.vbe + tr.vbe_tempco * (t - NOMINAL_TEMP_C)
    ret = np.asarray(v["RE"], float) + (np.asarray(v["RE2"], float) if "RE2" in v else 0.0)
    ie = np.maximum(vth - vbe, 0.0) / (ret + rth / (beta + 1.0))
    out = {"ie": ie}
    out.update(p.circuit.nominal_extras(v, ie, rth, beta, t, p))  # e.g. the gain, where targets name one
    return out


def nominal_distance(ctx: SearchContext, v, tol=None, figures: bool = False):
    """D: √Σ((x − centre)/half-width)² over the two-sided targets, at the nominal point
    (``nominal_figures``); ``tol`` is not used (the nominal point has none)."""
    n = len(next(iter(v.values())))
    nominal = nominal_figures(ctx, v)
    dist2 = np.zeros(n)
    for name, (centre, half) in ctx.problem.targets.centres().items():
        dist2 = dist2 + ((nominal[name] - centre) / half) ** 2
    distance = np.sqrt(dist2)
    if figures:
        nominal.setdefault("gain", np.zeros(n))
        return distance, nominal
    return distance


def cap_margin(lo_v, hi_v, rating, polarized, margin_fraction):
    """Voltage margin of capacitors (arrays broadcast) at a node whose DC voltage spans [lo_v, hi_v].

    A polarized part needs one sign over the whole box (it is fitted with its + end towards the
    higher end); otherwise -inf.  Margin = (fraction·rating − |V|max) / (fraction·rating).
    """
    allowed = margin_fraction * rating
    vmax = np.maximum(np.abs(lo_v), np.abs(hi_v))
    m = (allowed - vmax) / allowed
    one_sign = (lo_v > 0) | (hi_v < 0)
    return np.where(polarized & ~one_sign, -np.inf, m)


def stacked_dc(ctx: SearchContext, v: Mapping[str, np.ndarray], tol: Mapping[str, np.ndarray]):
    """``core.evaluate_dc`` at every vertex in one call: arrays of shape (vertices, sets)."""
    return _vertices_dc(ctx, ctx.vertices, v, tol)


def corner_ok(ctx: SearchContext, dc, caps: Mapping[str, np.ndarray]) -> np.ndarray:
    """Whole-stage corner at or below the target at every vertex (``dc`` from ``stacked_dc``,
    shape (vertices, n); capacitor arrays broadcast against the last axis)."""
    f = ctx.problem.targets.f_low
    m = core.meets_corner(dc, c1=caps["C1"], c2=caps["C2"], ce=caps.get("CE", 0.0), f_target=f)
    return np.all(m, axis=0)


def lowest_caps(ctx: SearchContext, values: Mapping[str, np.ndarray], tols: Mapping[str, np.ndarray]):
    """The capacitor values the corner is judged at: the low end of the tolerance (nominal: as is)."""
    if ctx.problem.guarantee == "nominal":
        return dict(values)
    return {r: values[r] * (1 - tols[r]) for r in values}


def bypasses(ctx: SearchContext, dc, ce: np.ndarray) -> np.ndarray:
    """Whether bypass capacitors ``ce`` (F, their judged value) bypass RE2 within the band: the
    capacitor's own corner, 1/(2π·CE·(RE2 ‖ (RE + re + (RS‖RB)/(β+1)))), at or below f_low at every
    vertex (``dc`` from ``stacked_dc``, shape (vertices, 1))."""
    _c1, _c2, f_ce = core._own_corners(dc, np.ones(1), np.ones(1), np.asarray(ce, float)[None, :])
    return np.all(f_ce <= ctx.problem.targets.f_low * (1 + 1e-12), axis=0)

"""The numbers a report shows: nominal figures, worst case, Monte Carlo, checks with margins.

All from ``analysis.core`` on the stage read from the design file, so the report shows the
same figures ``analyze`` and ``design`` compute.  Margins are fractions of the limit: ≥ 0 met.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Callable, Mapping

import numpy as np

from ..constants import HIGH_VOLTAGE_CAUTION
from ..progress import NO_PROGRESS
from ..stages import CAPACITOR_ROLES, RESISTOR_ROLES
from .design_file import DesignFile

__all__ = ["Check", "ReportFigures", "gather", "TARGET_FIGURE"]

# target -> (figure in core's Figures, side, unit, words): side +1 means figure >= bound.
TARGET_FIGURE = {
    "ie_min": ("ie", +1, "A", "emitter current at least"),
    "ie_max": ("ie", -1, "A", "emitter current at most"),
    "f_low": ("f_low", -1, "Hz", "−3 dB low corner at or below"),
    "swing": ("swing_peak", +1, "V", "output peak into the load at least"),
    "rin_min": ("rin", +1, "ohm", "input impedance at least"),
    "rout_max": ("rout", -1, "ohm", "output impedance at most"),
    "gain_min": ("gain_abs", +1, None, "gain magnitude at least"),
    "gain_max": ("gain_abs", -1, None, "gain magnitude at most"),
}


@dataclass(frozen=True)
class Check:
    """One pass/fail line: ``value`` is the worst case judged against ``limit``."""

    group: str  # "target", "rating", "operating point"
    name: str
    ok: bool | None  # None: not checked (a rating is unknown)
    value: float | None
    limit: float | None
    unit: str | None
    margin: float | None  # fraction of the limit; None when not a number
    message: str
    nominal: float | None = None


@dataclass
class ReportFigures:
    nominal: object  # analysis.core.Figures of the nominal stage (0-d arrays)
    worst: object  # analysis.core.WorstCase
    mc: object | None  # analysis.core.Figures over the Monte Carlo builds
    mc_runs: int
    seed: int
    checks: list[Check] = field(default_factory=list)
    cautions: list[str] = field(default_factory=list)
    mc_fraction: Mapping[str, float] = field(default_factory=dict)

    def value(self, name: str) -> float:
        return float(getattr(self.nominal, name))


def _gain_abs(low, high):
    a, b = np.abs(low["gain"]), np.abs(high["gain"])
    same = np.sign(low["gain"]) == np.sign(high["gain"])
    return float(np.where(same, np.minimum(a, b), 0.0)), float(np.maximum(a, b))


def _margin(side: int, value: float, bound: float) -> float:
    if not math.isfinite(value):
        return -math.inf
    return side * (value - bound) / abs(bound) if bound else (math.inf if side * value >= 0 else -math.inf)


def _target_checks(design: DesignFile, nominal, worst) -> list[Check]:
    low = {k: float(v) for k, v in worst.low.items()}
    high = {k: float(v) for k, v in worst.high.items()}
    low["gain_abs"], high["gain_abs"] = _gain_abs(worst.low, worst.high)
    nom = {"gain_abs": abs(float(nominal.gain))}
    out = []
    for key, bound in design.targets.items():
        fig, side, unit, words = TARGET_FIGURE[key]
        value = low[fig] if side > 0 else high[fig]
        nominal_value = nom.get(fig, float(getattr(nominal, fig, math.nan)))
        m = _margin(side, value, bound)
        out.append(Check("target", f"{words}", m >= 0, value, bound, unit, m,
                         "worst case over tolerances, hFE range and ambient range", nominal_value))
    return out


def _rating_checks(design: DesignFile, nominal, worst) -> list[Check]:
    stage, cond = design.stage, design.conditions
    out = []
    for role in RESISTOR_ROLES:
        part = stage.parts.get(role)
        if part is None:
            continue
        p = float(worst.high[f"p_{role.lower()}"])
        if part.rating is None:
            out.append(Check("rating", f"{role} dissipation", None, p, None, "W", None,
                             "no rating known: not checked", float(getattr(nominal, f"p_{role.lower()}"))))
            continue
        limit = part.rating * cond.resistor_derating
        m = _margin(-1, p, limit)
        out.append(Check("rating", f"{role} dissipation", m >= 0, p, limit, "W", m,
                         f"{cond.resistor_derating:.0%} of its {part.rating:g} W rating",
                         float(getattr(nominal, f"p_{role.lower()}"))))
    t = stage.transistor
    p_q = float(worst.high["p_q"])
    if t.pd is not None:
        limit = t.pd * cond.transistor_derating
        m = _margin(-1, p_q, limit)
        out.append(Check("rating", "Q1 dissipation", m >= 0, p_q, limit, "W", m,
                         f"{cond.transistor_derating:.0%} of its {t.pd:g} W rating", float(nominal.p_q)))
    else:
        out.append(Check("rating", "Q1 dissipation", None, p_q, None, "W", None, "no Pd known: not checked",
                         float(nominal.p_q)))
    if t.vceo is not None:
        # At cut-off the whole supply can stand across the transistor.
        m = _margin(-1, stage.supply, t.vceo)
        out.append(Check("rating", "Q1 collector-emitter voltage", m >= 0, stage.supply, t.vceo, "V", m,
                         "the whole supply, as at cut-off, against VCEO", float(nominal.vce)))
    if t.ic_max is not None:
        ic = float(worst.high["ic"])
        m = _margin(-1, ic, t.ic_max)
        out.append(Check("rating", "Q1 collector current", m >= 0, ic, t.ic_max, "A", m, "against IC max",
                         float(nominal.ic)))
    for role in CAPACITOR_ROLES:
        part = stage.parts.get(role)
        if part is None or (role == "CE" and not stage.bypassed):
            continue
        key = f"v_{role.lower()}"
        lo, hi = float(worst.low[key]), float(worst.high[key])
        v = max(abs(lo), abs(hi))
        if part.rating is not None:
            limit = part.rating * cond.cap_voltage_margin
            m = _margin(-1, v, limit)
            out.append(Check("rating", f"{role} working voltage", m >= 0, v, limit, "V", m,
                             f"{cond.cap_voltage_margin:.0%} of its {part.rating:g} V rating",
                             abs(float(getattr(nominal, key)))))
        else:
            out.append(Check("rating", f"{role} working voltage", None, v, None, "V", None,
                             "no voltage rating known: not checked", abs(float(getattr(nominal, key)))))
        if part.polarized:
            steady = (lo > 0 and hi > 0) or (lo < 0 and hi < 0)
            out.append(Check("rating", f"{role} polarity", steady, None, None, None, None,
                             polarity_words(design, role, float(getattr(nominal, key))) if steady else
                             "its DC voltage changes sign over the spread: use a non-polarized part"))
    return out


def polarity_words(design: DesignFile, role: str, v: float) -> str:
    """Which end of a polarized capacitor is + ("+ end to the base"), from its signed DC voltage."""
    stage_side = {"C1": "base", "C2": "emitter" if design.stage.topology == "emitter-follower" else "collector",
                  "CE": "RE/RE2 junction"}[role]
    other = {"C1": "source", "C2": "load",
             "CE": "ground" if design.stage.polarity == "npn" else "supply"}[role]
    if v >= 0:
        return f"+ end to the {stage_side}, − end to the {other}"
    return f"+ end to the {other}, − end to the {stage_side}"


def _cautions(design: DesignFile, nominal, worst, checks: list[Check]) -> list[str]:
    stage = design.stage
    out = []
    if stage.supply > HIGH_VOLTAGE_CAUTION:
        out.append(f"The supply is {stage.supply:g} V, above about {HIGH_VOLTAGE_CAUTION:g} V DC, which can "
                   "injure. Work with the power off, discharge the capacitors before touching the board, and "
                   "follow local codes and licensed practice.")
    polar = [r for r in CAPACITOR_ROLES if r in stage.parts and stage.parts[r].polarized
             and not (r == "CE" and not stage.bypassed)]
    if polar:
        out.append(f"{', '.join(polar)} {'is' if len(polar) == 1 else 'are'} polarized. An electrolytic fitted "
                   "the wrong way round, or run above its voltage rating, can vent or burst: check the + end "
                   "against the parts table before power is applied.")
    # "Near": at 80 % or more of the derated limit, or half a watt in any one part.
    hot = [c for c in checks if c.group == "rating" and c.unit == "W" and c.value is not None
           and ((c.limit and c.value >= 0.8 * c.limit) or c.value >= 0.5)]
    if hot:
        names = ", ".join(c.name.split()[0] for c in hot)
        out.append(f"{names} run{'s' if len(hot) == 1 else ''} near {'its' if len(hot) == 1 else 'their'} "
                   "derated power: such parts can get hot enough to burn skin and mark the board; give "
                   "them room and do not touch them while the stage is on.")
    out.append("When the stage sits inside mains-powered equipment under repair, the equipment is dangerous "
               "even when switched off: unplug it, discharge its capacitors, and follow local codes and "
               "licensed practice.")
    out.append("These are general cautions. The figures come from a simple model of the stage; whoever "
               "builds it remains responsible for the circuit and should measure it before relying on it.")
    return out


def _mc_fractions(design: DesignFile, mc) -> dict[str, float]:
    out = {}
    active = mc.state == 0
    for key, bound in design.targets.items():
        fig, side, _, _ = TARGET_FIGURE[key]
        vals = np.abs(mc.gain) if fig == "gain_abs" else getattr(mc, fig)
        with np.errstate(invalid="ignore"):
            ok = (vals >= bound) if side > 0 else (vals <= bound)
        out[key] = float(np.mean(ok & active & np.isfinite(vals)))
    if design.targets:
        allok = active.copy()
        for key, bound in design.targets.items():
            fig, side, _, _ = TARGET_FIGURE[key]
            vals = np.abs(mc.gain) if fig == "gain_abs" else getattr(mc, fig)
            with np.errstate(invalid="ignore"):
                allok &= ((vals >= bound) if side > 0 else (vals <= bound)) & np.isfinite(vals)
        out["all"] = float(np.mean(allok))
    return out


def gather(design: DesignFile, *, monte_carlo: int = 2000, seed: int = 0,
           on_step: Callable[..., None] = NO_PROGRESS) -> ReportFigures:
    """Nominal figures, worst case and ``monte_carlo`` seeded random builds (0: none)."""
    from ..analysis.core import ACTIVE, evaluate, monte_carlo as run_mc, worst_case

    stage, cond = design.stage, design.conditions
    kw = stage.core_arguments()
    t = stage.transistor
    on_step(note="nominal figures")
    nominal = evaluate(temp_c=cond.nominal_temp, **kw)
    on_step(note="worst case")
    worst = worst_case(tolerances=stage.tolerances(), hfe_min=t.hfe_min, hfe_max=t.hfe_max,
                       temp_min=cond.ambient_min, temp_max=cond.ambient_max, **kw)
    mc = None
    if monte_carlo > 0:
        on_step(note=f"Monte Carlo, {monte_carlo} builds")
        mc = run_mc(monte_carlo, seed=seed, tolerances=stage.tolerances(), hfe_min=t.hfe_min,
                    hfe_max=t.hfe_max, temp_min=cond.ambient_min, temp_max=cond.ambient_max, **kw)
    checks = []
    active = bool(worst.all_active)
    state = int(nominal.state)
    from ..analysis.core import STATE_NAMES

    checks.append(Check("operating point", "transistor in its active region", active and state == ACTIVE,
                        None, None, None, None,
                        f"nominal: {STATE_NAMES[state]}; "
                        + ("active at every corner of the spread" if active else
                           "leaves the active region somewhere in the spread")))
    checks += _target_checks(design, nominal, worst)
    checks += _rating_checks(design, nominal, worst)
    return ReportFigures(nominal=nominal, worst=worst, mc=mc, mc_runs=monte_carlo, seed=seed, checks=checks,
                         cautions=_cautions(design, nominal, worst, checks),
                         mc_fraction=_mc_fractions(design, mc) if mc is not None else {})

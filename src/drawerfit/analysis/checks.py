"""The judgements made on an analysed stage: state, ratings, polarity, targets, divider stiffness."""

from __future__ import annotations

import numpy as np

from ..constants import STIFF_DIVIDER_FACTOR
from ..values import format_si
from ..stages.topologies import topology_module
from .core import ACTIVE, CAP_FIGURE, CUTOFF, POWER_FIGURE, SATURATED
from .result import Check
from .targets import Targets, target_margins

__all__ = ["stage_checks", "CAP_FIGURE", "POWER_FIGURE"]



def _ends(stage, role: str) -> tuple[str, str]:
    """(stage-side end, other end) of a capacitor, in words."""
    if role == "C1":
        return "the base", "the source"
    if role == "C2":
        return topology_module(stage.topology).OUTPUT_END, "the load"
    rail = "ground" if stage.polarity == "npn" else "the supply"
    return "the RE/RE2 junction", rail


def _hi(worst, name):
    return float(worst.high[name])


def _lo(worst, name):
    return float(worst.low[name])


def stage_checks(stage, conditions, nominal, worst, targets: Targets | None) -> list[Check]:
    """All checks, most serious first: state, targets, ratings, polarity, advice."""
    t, q = stage.transistor, stage.transistor_name
    out: list[Check] = []
    state = int(nominal.state)
    if state == ACTIVE and bool(worst.all_active):
        msg = f"{q} is in the active region at nominal values and across the tolerance box"
        ok = True
    elif state == CUTOFF:
        msg = f"{q} is cut off: the divider puts the base below the turn-on voltage; no signal passes"
        ok = False
    elif state == SATURATED:
        msg = (f"{q} is saturated (VCE {format_si(float(nominal.vce), 'V')}): the collector "
               "resistor or the bias current is too large; the stage does not amplify")
        ok = False
    else:
        msg = f"{q} leaves the active region somewhere in the tolerance, hFE or temperature range"
        ok = False
    out.append(Check(f"{q} state", ok, float(nominal.vce), t.vce_sat, msg, "V", "state"))

    if targets is not None and targets.given():
        low = {k: np.asarray(v) for k, v in worst.low.items()}
        high = {k: np.asarray(v) for k, v in worst.high.items()}
        margins = target_margins(targets, low, high)
        for name, bound in targets.given().items():
            m = float(margins[name])
            fig, unit, side = {
                "ie_min": ("ie", "A", "low"), "ie_max": ("ie", "A", "high"),
                "f_low": ("f_low", "Hz", "high"), "swing": ("swing_peak", "V", "low"),
                "rin_min": ("rin", "ohm", "low"), "rout_max": ("rout", "ohm", "high"),
                "gain_min": ("gain", "", "low"), "gain_max": ("gain", "", "high"),
            }[name]
            if fig == "gain":
                vals = sorted((abs(_lo(worst, "gain")), abs(_hi(worst, "gain"))))
                value = vals[0] if side == "low" else vals[1]
            else:
                value = _lo(worst, fig) if side == "low" else _hi(worst, fig)
            word = "at least" if side == "low" else "at most"
            if not np.isfinite(value):
                shown = f"no value ({q} not active throughout)"
            else:
                shown = f"{value:.4g}" if unit == "" else format_si(value, unit)
            goal = f"{bound:.4g}" if unit == "" else format_si(bound, unit)
            ok = m >= 0
            msg = (f"worst case {shown}, target {word} {goal}"
                   + ("" if ok or not np.isfinite(m) else f" (missed by {abs(m) * 100:.3g} %)"))
            out.append(Check(f"target {name}", ok, value, bound, msg, unit, "target"))

    for role, attr in POWER_FIGURE.items():
        if role not in stage.parts:
            continue
        p = _hi(worst, attr)
        rating = stage.parts[role].rating
        if rating is None:
            out.append(Check(f"{role} power", None, p, None,
                             f"dissipates up to {format_si(p, 'W')}; no rating given, not checked", "W"))
            continue
        limit = rating * conditions.resistor_derating
        ok = p <= limit
        out.append(Check(f"{role} power", ok, p, limit,
                         f"up to {format_si(p, 'W')} against {format_si(limit, 'W')} "
                         f"({conditions.resistor_derating:.0%} of its {format_si(rating, 'W')} rating)", "W"))

    pq = _hi(worst, "p_q")
    if t.pd is None:
        out.append(Check(f"{q} power", None, pq, None,
                         f"dissipates up to {format_si(pq, 'W')}; no PD rating given, not checked", "W"))
    else:
        limit = t.pd * conditions.transistor_derating
        out.append(Check(f"{q} power", pq <= limit, pq, limit,
                         f"up to {format_si(pq, 'W')} against {format_si(limit, 'W')} "
                         f"({conditions.transistor_derating:.0%} of PD {format_si(t.pd, 'W')})", "W"))
    # Cut off on a signal peak (or at switch-on) Q1 can see the whole supply across it.
    if t.vceo is None:
        out.append(Check(f"{q} VCEO", None, stage.supply, None,
                         f"{q} may see the full supply; no VCEO given, not checked", "V"))
    else:
        out.append(Check(f"{q} VCEO", stage.supply <= t.vceo, stage.supply, t.vceo,
                         f"{q} may see the full supply {format_si(stage.supply, 'V')}; VCEO "
                         f"{format_si(t.vceo, 'V')}", "V"))
    # Class A: at full swing the collector current peaks at up to twice its quiescent value.
    ic_peak = 2.0 * _hi(worst, "ic")
    out.append(ic_max_check(q, ic_peak, t.ic_max))

    for role, attr in CAP_FIGURE.items():
        if role not in stage.parts or (role == "CE" and not stage.bypassed):
            continue
        part = stage.parts[role]
        lo, hi = _lo(worst, attr), _hi(worst, attr)
        out.append(voltage_check(role, part, lo, hi, conditions))
        if part.polarized:
            near, far = _ends(stage, role)
            out.append(polarity_check(role, lo, hi, float(getattr(nominal, attr)), near, far))

    rth = stage.value("R1") * stage.value("R2") / (stage.value("R1") + stage.value("R2"))
    stiff = t.hfe_min * (stage.value("RE") + stage.value("RE2")) / STIFF_DIVIDER_FACTOR
    out.append(Check("divider stiffness", rth <= stiff, rth, stiff,
                     f"RTH {format_si(rth)} against hFE(min)·RE/{STIFF_DIVIDER_FACTOR:g} = "
                     f"{format_si(stiff)} (common practice); "
                     + ("stiff: IE depends little on hFE" if rth <= stiff else
                        "not stiff: IE follows hFE (figures above include it)"),
                     "ohm", "advice"))
    return out


def voltage_check(role: str, part, lo: float, hi: float, conditions) -> Check:
    """A capacitor's DC voltage over [lo, hi] against its rating times the voltage margin (not
    checked without a rating); shared by the single stage and the two-stage amplifier."""
    v = max(abs(lo), abs(hi))
    if part.rating is None:
        return Check(f"{role} voltage", None, v, None,
                     f"holds up to {format_si(v, 'V')} DC; no voltage rating given, not checked", "V")
    limit = part.rating * conditions.cap_voltage_margin
    return Check(f"{role} voltage", v <= limit, v, limit,
                 f"holds up to {format_si(v, 'V')} DC against {format_si(limit, 'V')} "
                 f"({conditions.cap_voltage_margin:.0%} of its {format_si(part.rating, 'V')} rating)", "V")


def ic_max_check(name: str, ic_peak: float, ic_max: float | None) -> Check:
    """A transistor's collector current at full swing (class A: up to twice its quiescent value)
    against its IC max (not checked without one)."""
    if ic_max is None:
        return Check(f"{name} IC max", None, ic_peak, None,
                     f"collector current peaks near {format_si(ic_peak, 'A')}; no IC max given", "A")
    return Check(f"{name} IC max", ic_peak <= ic_max, ic_peak, ic_max,
                 f"collector current peaks near {format_si(ic_peak, 'A')} at full swing; "
                 f"IC max {format_si(ic_max, 'A')}", "A")


def polarity_check(role: str, lo: float, hi: float, nom: float, near: str, far: str) -> Check:
    """An electrolytic across a DC voltage spanning [lo, hi] (nominal ``nom``, ``near`` end minus
    ``far`` end): which way to fit it, or that it needs a non-polarized part."""
    if (lo > 0 and hi > 0) or (lo < 0 and hi < 0):
        plus, minus = (near, far) if nom > 0 else (far, near)
        return Check(f"{role} polarity", True, abs(nom), 0.0,
                     f"fit the + end toward {plus} and the − end toward {minus} "
                     f"({format_si(abs(nom), 'V')} across it)", "V", "polarity")
    return Check(f"{role} polarity", False, nom, 0.0,
                 f"the DC voltage across {role} is about zero or changes sign; "
                 "use a non-polarized capacitor", "V", "polarity")

"""A design result as data: its short repr, its dict (what `design --json` prints), its tables, and its
pick list.

``DesignResult`` (``search.design``) delegates ``__repr__``, ``to_dict`` and ``to_pandas`` here, so
the command line, the notebook and the saved design all take their figures from one place.  The
dict needs the spec (for ``mains``) and the stock (checksum, warnings) the design was made from;
``drawerfit.design`` attaches both to the result.
"""

from __future__ import annotations

import math

from .parts import UNIT_OF_KIND, pin_order_text
from .values import format_code, format_percent, format_si

__all__ = ["design_repr", "design_dict", "swing_headroom", "design_frame", "design_analysis", "pick_list", "part_name",
           "binding", "search_dict", "source_dict"]

# figures of the worst-case box the dict carries, low and high
_WORST_FIGURES = ("ie", "ve", "vce", "rin", "rout", "swing_peak", "f_low")


def code(value: float, kind: str) -> str:
    """A part value as the trade writes it: '4k7', '47µ'."""
    return format_code(value, UNIT_OF_KIND[kind], ascii_only=False)


def rating_text(kind: str, rating: float) -> str:
    """'250 mW' for a resistor, '25 V' for a capacitor."""
    return format_si(rating, "W" if kind == "resistor" else "V", 3)


def source_dict(line) -> dict:
    """Where a stock line sits in its file, with an empty sheet for a CSV (TOML has no null)."""
    return {"file": line.source.file, "sheet": line.source.sheet or "", "row": line.source.row}


def part_name(line) -> str:
    """A stock line for a pick list: 'resistor 4k7 1 % 250 mW', 'QN-SIG-A NPN, pins E-B-C'."""
    if line.kind == "transistor":
        name = f"{line.label} {line.polarity.upper()}" if line.polarity else line.label
        return f"{name}, pins {pin_order_text(line.pins)}" if line.pins else name
    rating = line.power if line.kind == "resistor" else line.voltage
    extra = f" {format_percent(line.tolerance)}" if line.tolerance is not None else ""
    if rating is not None:
        extra += f" {rating_text(line.kind, rating)}"
    if line.kind == "capacitor" and line.polarized:
        extra += " electrolytic"
    return f"{line.kind} {code(line.value, line.kind)}{extra}"


def pick_list(choice, units: int) -> list[dict]:
    """Bin, part and count for ``units`` builds, one entry per stock line given from, in bin order.

    A part drawn from another line than the one the design names (same value, tolerance no wider,
    rating no lower: docs/method.md, "Stock shared across roles and units") says which it stands in for.
    """
    from .stages.physical import designators

    roles_of: dict[int, list[str]] = {}  # designators of the physical parts (R1, REa, REb) each line serves
    for role, c in choice.roles.items():
        members = c.equivalent.members
        for name, line in zip(designators(role, len(members)), members):
            if name not in roles_of.setdefault(line.index, []):
                roles_of[line.index].append(name)
    roles_of.setdefault(choice.transistor.index, []).append(choice.transistor_name)
    picks = choice.picks or tuple((ln, ln, n * units) for ln, n in choice.uses().values())
    merged: dict[int, dict] = {}
    for giver, needed, count in picks:
        e = merged.setdefault(giver.index, {"location": giver.location, "part": part_name(giver), "per_unit": 0,
                                            "count": 0, "source": source_dict(giver), "roles": [],
                                            "stands_in_for": []})
        e["count"] += count
        for r in roles_of.get(needed.index, []):
            if r not in e["roles"]:
                e["roles"].append(r)
        if giver.index != needed.index:
            e["stands_in_for"].append({"part": part_name(needed), "row": needed.source.row, "count": count})
    out = []
    for e in merged.values():
        per = e["count"] / units
        e["per_unit"] = int(per) if per == int(per) else per
        if not e["stands_in_for"]:
            del e["stands_in_for"]
        out.append(e)
    out.sort(key=lambda e: (e["location"], e["source"]["row"]))
    return out


def design_analysis(result):
    """``analyse`` of the best design, judged by the spec's targets and limits (None when infeasible)."""
    from .analysis import analyse

    if not result.feasible:
        return None
    problem = result.problem
    spec = getattr(result, "spec", None)
    targets = spec.targets if spec is not None and spec.targets is not None else problem.targets
    conditions = spec.conditions if spec is not None else problem.conditions
    return analyse(result.best.stage(problem), conditions, targets=targets)


def _finite(x):
    return None if x is None or not math.isfinite(x) else x


def _role_dict(choice) -> dict:
    out = {}
    for role, c in choice.roles.items():
        eq = c.equivalent
        out[role] = {
            "value": eq.value, "code": code(eq.value, eq.kind), "arrangement": eq.arrangement,
            "describe": eq.describe(), "part_count": eq.part_count, "tolerance": c.tolerance,
            ("power" if eq.kind == "resistor" else "voltage"): c.rating,
            "polarized": bool(eq.polarized), "orientation": c.orientation,
            "parts": [{"value": m.value, "location": m.location, "source": source_dict(m)} for m in eq.members],
        }
    return out


def _buy_dict(b: dict) -> dict:
    return {"kind": b["kind"], "value": b["value"], "code": code(b["value"], b["kind"]),
            "tolerance": b["tolerance"], ("power" if b["kind"] == "resistor" else "voltage"): b["rating"],
            "polarized": b["polarized"], "per_unit": b["per_unit"], "count": b["count"], "roles": b["roles"]}


def swing_headroom(problem, choice) -> float | None:
    """Volts of output peak the design has at its worst beyond the swing target (None: no target)."""
    m = choice.target_margins.get("swing")
    if problem.targets.swing is None or m is None or not math.isfinite(m):
        return None
    return m * problem.targets.swing


def binding(choice, n: int = 3) -> list[dict]:
    """The constraints with the smallest worst-case margins (those that decide the design)."""
    allm = [(m, k) for k, m in {**choice.target_margins, **choice.rating_margins}.items() if math.isfinite(m)]
    allm.sort()
    return [{"name": k, "margin": m} for m, k in allm[:n]]


def search_dict(result) -> dict:
    """How far the search went: sets and steps, whether it finished, and the bound still open."""
    st = result.stats or {}
    open_ = st.get("open")
    return {"proven": not st.get("truncated", False), "resistor_sets": st.get("sets", 0),
            "judged": st.get("judged", 0), "steps": st.get("work", 0),
            "open_bound": None if open_ is None else {
                "part_count": int(open_[2] if result.problem.prefer == "closest" else open_[1]),
                "distance": float(open_[1] if result.problem.prefer == "closest" else open_[2])}}


def _infeasible_dict(result) -> dict:
    problem, near = result.problem, result.nearest
    out = {"feasible": False, "units": problem.units, "reason": result.reason,
           "nearest": None, "buy": [_buy_dict(b) for b in result.buy], "buy_checked": result.buy_checked,
           "buy_proven": result.buy_proven, "buy_note": result.buy_note,
           "limits": [{"constraint": lm.constraint, "transistor": lm.transistor or None, "text": lm.text,
                       "reachable": lm.reachable, "asked": lm.asked} for lm in result.limits],
           "buy_transistor": None if getattr(result, "buy_transistor", None) is None
           else result.buy_transistor.to_dict(),
           "buy_design": None, "notes": list(result.notes),
           "search": search_dict(result)}
    if result.buy_design is not None:
        out["buy_design"] = {"transistor": result.buy_design.transistor.label,
                             "parts": _role_dict(result.buy_design)}
    if near:
        ch = near["choice"]
        out["nearest"] = {
            "transistor": ch.transistor.label, "parts": _role_dict(ch),
            "margins": {k: _finite(v) for k, v in near["margins"].items()}, "missed": near["missed"],
            "f_low_worst": _finite(near["f_low_worst"]), "space": "single parts",
            "shortfall": _finite(near["shortfall"]), "shortfall_level": near["level"],
            "none_within": near["below"], "proven": near["proven"]}
    return out


def design_dict(result, analysis=None, cautions=None) -> dict:
    """The `design --json` shape: SI units, the pick list, the search's statement; ``analysis`` and
    ``cautions`` are computed when not given."""
    stock = getattr(result, "stock", None)
    warnings = {"warnings": list(stock.warnings)} if stock is not None else {}
    if not result.feasible:
        return {**_infeasible_dict(result), **warnings}
    from .cautions import cautions_for

    if analysis is None:
        analysis = design_analysis(result)
    if cautions is None:
        spec = getattr(result, "spec", None)
        cautions = cautions_for(analysis, mains=bool(spec is not None and spec.mains))
    problem, best = result.problem, result.best
    tr = best.transistor
    wc = analysis.worst
    return {
        "feasible": True, "status": result.status, "units": problem.units, "part_count": best.part_count,
        "guarantee": problem.guarantee, "prefer": problem.prefer,
        "objective": {"part_count": best.part_count, "smallest_margin": _finite(best.margin),
                      "distance": best.distance, "margin": _finite(best.margin),
                      "fewest_left": _finite(best.stock_left), "capacitance": best.total_capacitance},
        "transistor": {"label": tr.label, "location": tr.location, "source": source_dict(tr), "polarity": tr.polarity,
                       "hfe_min": tr.hfe_min, "hfe_max": tr.hfe_max, "vceo": tr.vceo, "ic_max": tr.ic_max,
                       "pd": tr.pd, "vbe": best.model.vbe, "vce_sat": best.model.vce_sat},
        "parts": _role_dict(best),
        "performance": analysis.to_dict(),
        "worst_case": {
            "target_margins": {k: _finite(v) for k, v in best.target_margins.items()},
            "rating_margins": {k: _finite(v) for k, v in best.rating_margins.items()},
            "binding": binding(best),
            "swing_headroom": _finite(swing_headroom(problem, best)),
            "low": {k: _finite(float(wc.low[k])) for k in _WORST_FIGURES},
            "high": {k: _finite(float(wc.high[k])) for k in _WORST_FIGURES},
        },
        "pick_list": pick_list(best, problem.units),
        "cautions": [c.to_dict() for c in cautions],
        "alternatives": [{"part_count": d.part_count, "distance": d.distance, "transistor": d.transistor.label,
                          "parts": {r: c.equivalent.describe() for r, c in d.roles.items()}}
                         for d in result.designs[1:]],
        "notes": list(result.notes),
        "search": search_dict(result),
        "stock_checksum": stock.checksum if stock is not None else None,
        **warnings,
    }


def design_repr(result) -> str:
    """One line: the status, the stage, the parts of the best design (or why there is none)."""
    p = result.problem
    head = f"{p.topology} {p.polarity.upper()} {format_si(p.supply, 'V')}"
    units = f", {p.units} units" if p.units > 1 else ""
    if not result.feasible:
        buy = f"; buy {sum(b['per_unit'] for b in result.buy)} part(s) per unit" if result.buy else ""
        return f"<DesignResult infeasible: {head}{units}; {result.reason[:80]}{buy}>"
    best = result.best
    roles = ", ".join(f"{r}={c.equivalent.describe()}" for r, c in best.roles.items())
    return (f"<DesignResult {result.status}: {head}{units}, {best.part_count} parts, {best.transistor.label}; "
            f"{roles}>")


def design_frame(result, table: str = "parts"):
    """A pandas DataFrame: ``table`` "parts" (one row per physical part of the best design, the
    transistor last) or "pick_list" (one row per bin to take from).  Empty when infeasible."""
    import pandas as pd

    from .stages.physical import designators

    if table == "pick_list":
        rows = []
        if result.feasible:
            for e in pick_list(result.best, result.problem.units):
                rows.append({"location": e["location"], "part": e["part"], "per_unit": e["per_unit"],
                             "count": e["count"], "row": e["source"]["row"], "sheet": e["source"]["sheet"],
                             "for": ", ".join(e["roles"])})
        return pd.DataFrame(rows, columns=["location", "part", "per_unit", "count", "row", "sheet", "for"])
    if table != "parts":
        raise ValueError(f"table must be 'parts' or 'pick_list', not {table!r}")
    columns = ["designator", "role", "kind", "value", "code", "arrangement", "tolerance", "rating", "location",
               "row"]
    rows = []
    if result.feasible:
        best = result.best
        for role, c in best.roles.items():
            eq = c.equivalent
            for name, m in zip(designators(role, len(eq.members)), eq.members):
                rows.append({"designator": name, "role": role, "kind": m.kind, "value": m.value,
                             "code": code(m.value, m.kind), "arrangement": eq.arrangement, "tolerance": m.tolerance,
                             "rating": m.rating, "location": m.location, "row": m.source.row})
        t = best.transistor
        rows.append({"designator": best.transistor_name, "role": best.transistor_name, "kind": "transistor", "value": None, "code": t.label,
                     "arrangement": "single", "tolerance": None, "rating": t.pd, "location": t.location,
                     "row": t.source.row})
    return pd.DataFrame(rows, columns=columns)

"""Mend a board: the fewest part changes from the drawer, with the stage before and after.

``mend(spec, stock)`` runs ``search.changes.fewest_changes`` on a spec whose ``[parts]`` and
``[transistor]`` are what is on the board and whose ``[targets]`` say what the stage must do, and
returns a ``RepairNote``: the changes, the analysis of the board as given (before) and as repaired
(after), and the cautions a repair calls for.  When no change from the drawer restores the stage,
the note carries the ordinary design answer with every part chosen afresh (the nearest design and
what to buy, the transistor included).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

__all__ = ["RepairNote", "mend", "repair_caution", "repair_dict", "figure_rows", "not_met", "FIGURES"]

# (figure, label, unit, which worst-case end matters: "both", "low" or "high")
FIGURES = (("ie", "IE", "A", "both"), ("vce", "VCE", "V", "both"), ("gain", "gain", "", "both"),
           ("rin", "input", "Ω", "low"), ("rout", "output", "Ω", "high"), ("f_low", "low corner", "Hz", "high"),
           ("swing_peak", "swing", "V", "low"))


def repair_caution():
    """The caution every repair note carries first."""
    from ..cautions import Caution

    return Caution(
        "repair",
        "Before working on a board: unplug it from the mains and disconnect every supply and battery, "
        "discharge its capacitors and check with a meter that they are discharged, and keep one hand "
        "away from the circuit while measuring live. Work on the mains side of any equipment is for "
        "licensed practice under your local electrical codes.")


@dataclass
class RepairNote:
    """The repair: ``result`` (search.changes.ChangeResult), the board before and the stage after."""

    spec: object
    result: object
    before: object = None  # analysis.Analysis of the board as given (None: a part is missing)
    after: object = None  # analysis.Analysis of the repaired stage (None: no repair)
    cautions: list = field(default_factory=list)
    design_result: object = None  # search.design.DesignResult afresh, when no repair exists

    def was(self, role: str) -> str:
        """What the board has in ``role``, in words."""
        from ..values import format_percent, format_si

        if role == self.result.transistor_role:
            t = self.spec.transistor
            return "-" if t is None else f"{t.label or 'the board transistor'} (hFE {t.hfe_min:g}..{t.hfe_max:g})"
        p = self.spec.parts.get(role)
        if p is None:
            return "(missing)"
        unit = "F" if role.startswith("C") else "Ω"
        return f"{format_si(p.value, unit, 4)} {format_percent(p.tolerance)}"

    def now(self, role: str) -> str:
        """What the repair puts in ``role`` and where it is in the drawer."""
        from ..values import format_percent

        best = self.result.best
        if role == self.result.transistor_role:
            t = best.transistor
            return (f"{t.label} (hFE {t.hfe_min:g}..{t.hfe_max:g})  [{t.location or '-'}; row {t.source.row}]")
        c = best.roles[role]
        eq = c.equivalent
        where = ", ".join(f"{m.location or '-'} row {m.source.row}" for m in eq.members)
        return f"{eq.describe()} {format_percent(c.tolerance)}  [{where}]"

    def __repr__(self) -> str:
        r = self.result
        if not r.feasible:
            return f"<RepairNote: no repair from the drawer (up to {r.tried_up_to} changes searched)>"
        proven = "proven fewest" if r.proven else "not proven fewest"
        return f"<RepairNote: change {', '.join(r.changed[0]) or 'nothing'} ({proven}; {r.searches} searches)>"

    def to_pandas(self, table: str = "changes"):
        """A DataFrame: ``table`` "changes" (role, from, to; kept roles too) or "figures" (each figure
        before and after, nominal and at the worst-case ends, SI units)."""
        import pandas as pd

        if table == "figures":
            rows = []
            for when, a in (("before", self.before), ("after", self.after)):
                if a is None:
                    continue
                for name, (nom, lo, hi) in figure_rows(a).items():
                    rows.append({"when": when, "figure": name, "nominal": nom, "worst_low": lo, "worst_high": hi})
            return pd.DataFrame(rows, columns=["when", "figure", "nominal", "worst_low", "worst_high"])
        if table != "changes":
            raise ValueError(f"table must be 'changes' or 'figures', not {table!r}")
        r = self.result
        rows = []
        if r.feasible:
            for role in r.all_roles:
                changed = role in r.changed[0]
                rows.append({"role": role, "changed": changed, "from": self.was(role),
                             "to": self.now(role) if changed else self.was(role)})
        return pd.DataFrame(rows, columns=["role", "changed", "from", "to"])

    def to_dict(self) -> dict:
        return repair_dict(self)


def mend(spec, stock, *, fixed=(), broken=(), units: int = 1, max_parts: int = 2, guarantee: str = "worst-case",
         prefer: str = "fewest-parts", top: int = 1, exhaustive: bool = False, budget: float = 1.0,
         suggest: bool = True) -> RepairNote:
    """The repair of the board ``spec`` describes from ``stock`` (see the module docstring)."""
    from ..analysis import analyse
    from ..cautions import cautions_for, stage_cautions
    from ..parts import SpecError
    from ..search.changes import fewest_changes
    from ..search.design import _budget
    from ..search.problem import problem_from_spec

    problem = problem_from_spec(spec, units=units, max_parts=max_parts, guarantee=guarantee, prefer=prefer,
                                keep=True)
    result = fewest_changes(problem, stock, spec.parts, spec.transistor, fixed=fixed, broken=broken, top=top,
                            exhaustive=exhaustive, budget=_budget(budget))
    note = RepairNote(spec, result)
    try:
        note.before = analyse(spec.stage(), spec.conditions, targets=spec.targets)
    except SpecError:
        note.before = None  # a part or the transistor is not given: nothing to analyse
    if result.feasible:
        note.after = analyse(result.best.stage(problem), spec.conditions, targets=spec.targets)
        base = cautions_for(note.after, mains=spec.mains)
    else:
        polarized = any(p.polarized for r, p in spec.parts.items() if r.startswith("C"))
        base = stage_cautions(supply=spec.supply, polarized=polarized, mains=spec.mains)
        if suggest:
            from dataclasses import replace

            from ..search.design import design

            # the same targets with every part open (the board's transistor is not in the drawer)
            afresh = replace(spec, parts={}, transistor=None, transistor_label=None,
                             bypass=spec.bypass or "CE" in spec.parts)
            fresh = problem_from_spec(afresh, units=units, max_parts=max_parts, guarantee=guarantee, prefer=prefer)
            note.design_result = design(fresh, stock, budget=budget)
            note.design_result.spec, note.design_result.stock = afresh, stock
    # the repair caution first, then the stage's own (high voltage, electrolytics, hot parts, general)
    note.cautions = [repair_caution()] + list(base)
    return note


def figure_rows(analysis) -> dict:
    """{figure: (nominal, worst low, worst high)} of an analysis (SI units)."""
    out = {}
    for name, _, _, _ in FIGURES:
        nom = float(getattr(analysis.nominal, name))
        out[name] = (nom, float(analysis.worst.low.get(name, math.nan)), float(analysis.worst.high.get(name, math.nan)))
    return out



def repair_dict(note) -> dict:
    """The `design --keep --json` shape (SI units)."""
    from ..results import _role_dict

    r = note.result
    out = {"feasible": r.feasible, "proven_fewest": r.proven, "searches": r.searches, "fixed": list(r.fixed),
           "broken": list(r.broken), "changes": [], "kept": [], "before": None, "after": None,
           "cautions": [c.to_dict() for c in note.cautions], "notes": list(r.notes)}
    if note.before is not None:
        out["before"] = _figures_dict(note.before)
    if not r.feasible:
        out["tried_up_to"] = r.tried_up_to
        if note.design_result is not None:
            out["afresh"] = note.design_result.to_dict()
        return out
    best, changed = r.best, r.changed[0]
    parts = _role_dict(best)
    for role in r.all_roles:
        if role in changed:
            entry = {"role": role, "from": note.was(role), "to": note.now(role)}
            if role == r.transistor_role:
                entry["transistor"] = {"label": best.transistor.label, "location": best.transistor.location,
                                       "row": best.transistor.source.row}
            else:
                entry["part"] = parts.get(role)
            out["changes"].append(entry)
        else:
            out["kept"].append(role)
    out["after"] = _figures_dict(note.after)
    out["margins"] = {k: (m if math.isfinite(m) else None) for k, m in best.target_margins.items()}
    out["others"] = [{"changes": ch, "parts": _role_dict(d), "transistor": d.transistor.label}
                     for d, ch in zip(r.designs[1:], r.changed[1:])]
    return out


def _figures_dict(analysis) -> dict:
    from ..analysis.result import json_float as _num

    rows = figure_rows(analysis)
    return {"figures": {k: {"nominal": _num(a), "worst_low": _num(b), "worst_high": _num(c)}
                        for k, (a, b, c) in rows.items()},
            "checks_not_met": not_met(analysis),
            "advice": [c.message for c in analysis.checks if c.ok is False and c.kind == "advice"]}


def not_met(analysis) -> list[str]:
    """The checks a stage fails (targets, ratings, state, polarity; advice apart)."""
    return [c.name for c in analysis.checks if c.ok is False and c.kind != "advice"]



"""Mend a board: the fewest part changes from the drawer, with the stage before and after.

``mend(spec, stock)`` runs ``search.changes.fewest_changes`` on a spec whose ``[parts]`` and
``[transistor]`` are what is on the board and whose ``[targets]`` say what the stage must do, and
returns a ``RepairNote``: the changes, the analysis of the board as given (before) and as repaired
(after), and the cautions a repair calls for.  When no change from the drawer restores the stage,
the note carries the ordinary design answer with every part chosen afresh (the nearest design and
what to buy, the transistor included).
"""

from __future__ import annotations

from dataclasses import dataclass, field

__all__ = ["RepairNote", "mend", "repair_caution"]


def repair_caution():
    """The caution every repair note carries first."""
    from .cautions import Caution

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
        from .values import format_percent, format_si

        if role == "Q1":
            t = self.spec.transistor
            return "-" if t is None else f"{t.label or 'the board transistor'} (hFE {t.hfe_min:g}..{t.hfe_max:g})"
        p = self.spec.parts.get(role)
        if p is None:
            return "(missing)"
        unit = "F" if role.startswith("C") else "Ω"
        return f"{format_si(p.value, unit, 4)} {format_percent(p.tolerance)}"

    def now(self, role: str) -> str:
        """What the repair puts in ``role`` and where it is in the drawer."""
        from .values import format_percent

        best = self.result.best
        if role == "Q1":
            t = best.transistor
            return (f"{t.label} (hFE {t.hfe_min:g}..{t.hfe_max:g})  [{t.location or '-'}; row {t.source.row}]")
        c = best.roles[role]
        eq = c.equivalent
        where = ", ".join(f"{m.location or '-'} row {m.source.row}" for m in eq.members)
        return f"{eq.describe()} {format_percent(c.tolerance)}  [{where}]"

    def to_dict(self) -> dict:
        from .commands.repair_note import repair_dict

        return repair_dict(self)


def mend(spec, stock, *, fixed=(), broken=(), units: int = 1, max_parts: int = 2, guarantee: str = "worst-case",
         prefer: str = "fewest-parts", top: int = 1, exhaustive: bool = False, budget: float = 1.0,
         suggest: bool = True) -> RepairNote:
    """The repair of the board ``spec`` describes from ``stock`` (see the module docstring)."""
    from .analysis import analyse
    from .cautions import cautions_for, stage_cautions
    from .parts import SpecError
    from .search.changes import fewest_changes
    from .search.design import _budget
    from .search.problem import problem_from_spec

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

            from . import api

            # the same targets with every part open (the board's transistor is not in the drawer)
            afresh = replace(spec, parts={}, transistor=None, transistor_label=None,
                             bypass=spec.bypass or "CE" in spec.parts)
            note.design_result = api.design(afresh, stock, units=units, max_parts=max_parts, guarantee=guarantee,
                                            prefer=prefer, budget=budget)
    # the repair caution first, then the stage's own (high voltage, electrolytics, hot parts, general)
    note.cautions = [repair_caution()] + list(base)
    return note

"""A substitute transistor put into the stage it is for: does the stage stay in spec unchanged?

Each candidate of the stage's polarity is modelled from its stock line as the design search
models it (``search.runner.transistor_model``: its own hFE range, VBE and VCE(sat), its ratings)
and the stage is analysed with it (``analysis.batch.analyse_transistors``: the checks of
``analysis.analyse``, every candidate in one vectorised pass).  "In spec unchanged" means every
check ``analyse`` makes holds at the worst case over part tolerances, the candidate's hFE range
and the ambient range: Q1 active, every target of the spec, every rating with its derating (the
parts' and the candidate's own), each electrolytic's polarity.  Advice (divider stiffness) is
reported but does not fail a candidate.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Sequence

from ..analysis.result import json_float as _num
from ..parts import StockLine

__all__ = ["Break", "StageVerdict", "verdict_of", "stage_verdicts", "Q1_RATINGS", "LOWER_BOUNDS"]

Q1_RATINGS = ("Q1 power", "Q1 VCEO", "Q1 IC max")  # the checks a candidate's own ratings decide
# targets the worst case must reach from below (the rest must stay under their limit)
LOWER_BOUNDS = ("target ie_min", "target swing", "target rin_min", "target gain_min")


@dataclass(frozen=True)
class Break:
    """A check the stage fails with this transistor: its worst-case ``value`` against ``limit``
    (SI, ``unit``) and ``excess``, how far past the limit as a fraction of it (None where the
    check is not a number against a limit: Q1's state, a capacitor's polarity)."""

    check: str
    value: float | None
    limit: float | None
    unit: str
    excess: float | None
    message: str

    def to_dict(self) -> dict:
        return {"check": self.check, "value": self.value, "limit": self.limit, "unit": self.unit,
                "excess": self.excess, "message": self.message}


@dataclass(frozen=True)
class StageVerdict:
    """What the stage does with one transistor: ``status`` "keeps" (every check holds), "breaks"
    (``breaks`` lists what fails), "unverified" (nothing fails, but a rating of Q1 is unknown:
    ``unchecked``) or "not-analysed" (``reason``).  ``figures``: IE nominal and at the worst-case
    ends, VCE and gain nominal, Q1's state."""

    status: str
    breaks: tuple[Break, ...] = ()
    unchecked: tuple[str, ...] = ()
    reason: str = ""
    figures: dict = field(default_factory=dict)
    analysis: Any = field(default=None, repr=False, compare=False)

    @property
    def keeps(self) -> bool:
        return self.status == "keeps"

    def to_dict(self) -> dict:
        return {"status": self.status, "breaks": [b.to_dict() for b in self.breaks],
                "unchecked": list(self.unchecked), "reason": self.reason, "figures": dict(self.figures)}


def _excess(check) -> float | None:
    value, limit = _num(check.value), _num(check.limit)
    if check.kind in ("state", "polarity") or value is None or limit is None or limit == 0:
        return None
    if check.name in LOWER_BOUNDS:
        return (limit - value) / abs(limit)
    return (value - limit) / abs(limit)


def verdict_of(analysis) -> StageVerdict:
    """The verdict an ``analysis.Analysis`` gives on its stage."""
    breaks = tuple(Break(c.name, _num(c.value), _num(c.limit), c.unit, _excess(c), c.message)
                   for c in analysis.warnings)
    unchecked = tuple(c.name for c in analysis.checks if c.ok is None and c.name in Q1_RATINGS)
    status = "breaks" if breaks else "unverified" if unchecked else "keeps"
    f, w = analysis.nominal, analysis.worst
    active = analysis.state == "active"
    figures = {"state": analysis.state, "ie": _num(f.ie), "ie_low": _num(w.low["ie"]), "ie_high": _num(w.high["ie"]),
               "vce": _num(f.vce), "gain": _num(f.gain) if active else None}
    return StageVerdict(status, breaks, unchecked, figures=figures, analysis=analysis)


def stage_verdicts(stage, lines: Sequence[StockLine], conditions, targets) -> dict[int, StageVerdict]:
    """Verdicts by stock-line index for the ``lines`` of the stage's polarity (others are left out)."""
    from ..analysis.batch import analyse_transistors
    from ..search.runner import transistor_model

    out: dict[int, StageVerdict] = {}
    models, keys = [], []
    for line in lines:
        if (line.polarity or "").lower() != stage.polarity:
            continue
        if line.hfe_min is None or line.hfe_max is None:
            out[line.index] = StageVerdict("not-analysed", reason="hFE not in the stock file: the stage cannot be "
                                                                  "worked out without it")
            continue
        try:
            models.append(transistor_model(line))
        except ValueError as exc:  # figures no model takes (a VBE of 2 V): say so rather than guess
            out[line.index] = StageVerdict("not-analysed", reason=f"its figures cannot be modelled: {exc}")
            continue
        keys.append(line.index)
    if models:
        for key, a in zip(keys, analyse_transistors(stage, models, conditions, targets)):
            out[key] = verdict_of(a)
    return out

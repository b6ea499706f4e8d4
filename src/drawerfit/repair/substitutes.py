"""Transistor substitutes: which stock transistors meet a requirement, how well, ranked best first.

A requirement (``Requirement``) asks for a polarity and, each optional, a lowest VCEO, IC max and
PD, the hFE range the stage was built for, a highest VCE(sat) and how many are needed.  Every
transistor line of the drawer is judged against it (``line_checks``): a rating is met, missed (by
how much) or unknown (the stock file does not give it; never guessed).  The ranking and the hFE
measure are documented in docs/repair.md:

1. lines that meet every check, then lines where nothing fails but something is unknown, then
   lines that fail (the right polarity first, fewest failures first);
2. within each, the closest hFE range: the distance D = |ln(c/a)| + |ln(d/b)| between the line's
   range c–d and the asked range a–b (a term is left out for an end not asked);
3. then the most on hand, then the order of the stock file.

``substitutes_for`` adds the stage: with a spec, the requirement defaults to the stage's own
transistor (``requirement_from_stage``) and each candidate of the right polarity is analysed in
the stage (``in_stage.stage_verdicts``).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from typing import Any, Sequence

from ..parts import SpecError, StockLine
from ..values import format_si

__all__ = ["Requirement", "RequirementError", "RatingCheck", "HfeFit", "Substitute", "line_checks", "hfe_fit",
           "find_substitutes", "requirement_from_stage", "substitutes_for", "RATING_FIELDS", "hfe_text",
           "article"]

# requirement field -> (name in messages, unit, "min" when the line's figure must reach it, "max" when it
# must stay at or below it)
RATING_FIELDS = {"vceo": ("VCEO", "V", "min"), "ic_max": ("IC max", "A", "min"), "pd": ("PD", "W", "min"),
                 "vce_sat": ("VCE(sat)", "V", "max")}
HFE_LIMIT = 1e5  # beyond any bipolar transistor, Darlington pairs included (as io/spec.py)


class RequirementError(SpecError):
    """A transistor requirement that cannot be used (exit status 2)."""


def article(polarity: str) -> str:
    """'an NPN', 'a PNP' (as they are said: en-en-pee, pee-en-pee)."""
    return f"{'an' if polarity.lower() == 'npn' else 'a'} {polarity.upper()}"


def hfe_text(lo: float | None, hi: float | None) -> str:
    if lo is not None and hi is not None:
        return f"{lo:g}" if lo == hi else f"{lo:g}–{hi:g}"
    if lo is not None:
        return f"at least {lo:g}"
    return f"at most {hi:g}"


@dataclass(frozen=True)
class Requirement:
    """What a substitute transistor must offer; SI units, None where nothing is asked.

    ``vceo``, ``ic_max``, ``pd``: lowest acceptable ratings; ``vce_sat``: highest acceptable
    saturation voltage; ``hfe_min``/``hfe_max``: the hFE range the stage was built for (a line
    whose range does not reach it at all fails; how close it comes ranks); ``units``: how many
    are needed.  ``origin`` says where each figure came from ("given", "spec", "supply", "stage").
    """

    polarity: str
    vceo: float | None = None
    ic_max: float | None = None
    pd: float | None = None
    hfe_min: float | None = None
    hfe_max: float | None = None
    vce_sat: float | None = None
    units: int = 1
    origin: tuple[tuple[str, str], ...] = ()

    def __post_init__(self) -> None:
        pol = self.polarity.strip().lower() if isinstance(self.polarity, str) else self.polarity
        if pol not in ("npn", "pnp"):
            raise RequirementError(f"unknown transistor polarity {self.polarity!r}: expected npn or pnp")
        object.__setattr__(self, "polarity", pol)
        for name, (words, unit, _side) in RATING_FIELDS.items():
            v = getattr(self, name)
            if v is not None and not (isinstance(v, (int, float)) and math.isfinite(v) and v > 0):
                raise RequirementError(f"{words} must be a positive {unit} value, not {v!r}")
        for name in ("hfe_min", "hfe_max"):
            v = getattr(self, name)
            if v is not None and not (isinstance(v, (int, float)) and math.isfinite(v) and 1 <= v <= HFE_LIMIT):
                raise RequirementError(f"hFE {name[4:]} {v:g}: an hFE between 1 and {HFE_LIMIT:g} is expected"
                                       if isinstance(v, (int, float)) else f"hFE {name[4:]} {v!r}: not a number")
        if self.hfe_min is not None and self.hfe_max is not None and self.hfe_min > self.hfe_max:
            raise RequirementError(f"hFE range {self.hfe_min:g}–{self.hfe_max:g}: the lowest is above the highest")
        if isinstance(self.units, bool) or not isinstance(self.units, int) or self.units < 1:
            raise RequirementError(f"the number needed must be a whole number of at least 1, not {self.units!r}")

    @property
    def asks_hfe(self) -> bool:
        return self.hfe_min is not None or self.hfe_max is not None

    def origin_of(self, name: str) -> str | None:
        return dict(self.origin).get(name)

    def describe(self) -> str:
        """'NPN; VCEO at least 40 V, PD at least 500 mW, hFE 110–330; 1 needed'."""
        parts = []
        for name, (words, unit, side) in RATING_FIELDS.items():
            v = getattr(self, name)
            if v is not None:
                parts.append(f"{words} {'at least' if side == 'min' else 'at most'} {format_si(v, unit)}")
        if self.asks_hfe:
            parts.append(f"hFE {hfe_text(self.hfe_min, self.hfe_max)}")
        asked = ", ".join(parts) if parts else "no rating asked"
        return f"{self.polarity.upper()}; {asked}; {self.units} needed"

    def to_dict(self) -> dict:
        return {"polarity": self.polarity, "vceo": self.vceo, "ic_max": self.ic_max, "pd": self.pd,
                "hfe_min": self.hfe_min, "hfe_max": self.hfe_max, "vce_sat": self.vce_sat, "units": self.units,
                "origin": dict(self.origin)}


@dataclass(frozen=True)
class RatingCheck:
    """One comparison of a line with the requirement: ``ok`` True, False, or None (unknown).

    ``margin`` is a fraction: for a lowest rating (VCEO, IC max, PD) the line's figure over the
    one asked, minus 1; for VCE(sat) 1 minus the line's over the highest allowed; for on hand the
    count over the count needed, minus 1; for hFE (failed only) how far the nearer end falls short.
    Negative when missed.
    """

    name: str  # "polarity", "VCEO", "IC max", "PD", "VCE(sat)", "hFE", "on hand"
    ok: bool | None
    required: Any
    value: Any
    margin: float | None
    message: str

    def to_dict(self) -> dict:
        return {"name": self.name, "ok": self.ok, "required": self.required, "value": self.value,
                "margin": self.margin, "message": self.message}


@dataclass(frozen=True)
class HfeFit:
    """How a line's hFE range c–d sits against the asked range a–b (log scale, where hFE spreads).

    ``distance``: D = |ln(c/a)| + |ln(d/b)|, a term left out for an end not asked (0: the same
    range).  ``coverage``: the share of the line's range inside the asked one (1: every part of
    that type is within it).  ``overlap``: the share of the asked range the line's range covers
    (None when an end is open).  ``inside``: the line's range lies wholly within the asked one.
    """

    distance: float
    coverage: float
    overlap: float | None
    inside: bool

    def to_dict(self) -> dict:
        return {"distance": self.distance, "coverage": self.coverage, "overlap": self.overlap, "inside": self.inside}


def hfe_fit(lo: float, hi: float, want_lo: float | None, want_hi: float | None) -> HfeFit:
    """The fit of a range ``lo``–``hi`` to the asked ``want_lo``–``want_hi`` (either may be None)."""
    d = 0.0
    if want_lo is not None:
        d += abs(math.log(lo / want_lo))
    if want_hi is not None:
        d += abs(math.log(hi / want_hi))
    a = -math.inf if want_lo is None else math.log(want_lo)
    b = math.inf if want_hi is None else math.log(want_hi)
    c, e = math.log(lo), math.log(hi)
    common = min(e, b) - max(c, a)
    coverage = (1.0 if a <= c <= b else 0.0) if e == c else max(0.0, common) / (e - c)
    overlap = None
    if want_lo is not None and want_hi is not None:
        overlap = (1.0 if c <= a <= e else 0.0) if b == a else max(0.0, common) / (b - a)
    return HfeFit(d, min(coverage, 1.0), None if overlap is None else min(overlap, 1.0), a <= c and e <= b)


@dataclass(frozen=True)
class Substitute:
    """One transistor line judged: ``status`` "pass" (every check met), "unknown" (none failed,
    some could not be made) or "fail"; its checks, its hFE fit, and (with a stage) its verdict."""

    line: StockLine
    status: str
    checks: tuple[RatingCheck, ...]
    hfe: HfeFit | None = None
    rank: int = 0
    same_as_board: bool = False  # the same type as the stage's own transistor (by label)
    stage: Any = None  # in_stage.StageVerdict, with a stage

    @property
    def failed(self) -> tuple[RatingCheck, ...]:
        return tuple(c for c in self.checks if c.ok is False)

    @property
    def unknown(self) -> tuple[RatingCheck, ...]:
        return tuple(c for c in self.checks if c.ok is None)

    @property
    def right_polarity(self) -> bool:
        return self.checks[0].ok is True


def _short(margin: float) -> str:
    return f"{abs(margin) * 100:.3g} %"


def line_checks(line: StockLine, req: Requirement) -> tuple[RatingCheck, ...]:
    """The checks of one transistor line against ``req``: polarity, each rating asked, hFE, on hand."""
    out = []
    pol = (line.polarity or "").lower()
    ok = pol == req.polarity
    out.append(RatingCheck("polarity", ok, req.polarity, pol or None, None,
                           f"{pol.upper() or 'polarity unknown'}" + ("" if ok else f", {article(req.polarity)} is asked")))
    for name, (words, unit, side) in RATING_FIELDS.items():
        want = getattr(req, name)
        if want is None:
            continue
        have = getattr(line, name)
        if have is None or name in line.assumed:  # an assumed VCE(sat) is a working figure, not a rating
            out.append(RatingCheck(words, None, want, None, None, f"{words} unknown: not in the stock file"))
            continue
        if side == "min":
            margin = have / want - 1.0
            ok = have >= want
            msg = (f"{words} {format_si(have, unit)} (+{_short(margin)})" if ok else
                   f"{words} {format_si(have, unit)}, {format_si(want, unit)} needed ({_short(margin)} short)")
        else:
            margin = 1.0 - have / want
            ok = have <= want
            msg = (f"{words} {format_si(have, unit)}" if ok else
                   f"{words} {format_si(have, unit)}, at most {format_si(want, unit)} allowed "
                   f"({_short(have / want - 1.0)} over)")
        out.append(RatingCheck(words, ok, want, have, margin, msg))
    if req.asks_hfe:
        asked = hfe_text(req.hfe_min, req.hfe_max)
        if line.hfe_min is None or line.hfe_max is None:
            out.append(RatingCheck("hFE", None, [req.hfe_min, req.hfe_max], None, None,
                                   "hFE unknown: not in the stock file"))
        else:
            lo, hi = line.hfe_min, line.hfe_max
            have = hfe_text(lo, hi)
            if req.hfe_min is not None and hi < req.hfe_min:
                margin = hi / req.hfe_min - 1.0
                out.append(RatingCheck("hFE", False, [req.hfe_min, req.hfe_max], [lo, hi], margin,
                                       f"hFE {have} lies wholly below the {asked} asked (its highest "
                                       f"{_short(margin)} under the lowest asked)"))
            elif req.hfe_max is not None and lo > req.hfe_max:
                margin = req.hfe_max / lo - 1.0
                out.append(RatingCheck("hFE", False, [req.hfe_min, req.hfe_max], [lo, hi], margin,
                                       f"hFE {have} lies wholly above the {asked} asked (its lowest "
                                       f"{_short(lo / req.hfe_max - 1.0)} over the highest asked)"))
            else:
                out.append(RatingCheck("hFE", True, [req.hfe_min, req.hfe_max], [lo, hi], None,
                                       f"hFE {have} meets the {asked} asked"))
    ok = line.qty >= req.units
    out.append(RatingCheck("on hand", ok, req.units, line.qty, line.qty / req.units - 1.0,
                           f"{line.qty} on hand" if ok else
                           ("none on hand" if line.qty == 0 else f"{line.qty} on hand") + f", {req.units} needed"))
    return tuple(out)


def _judge(line: StockLine, req: Requirement) -> Substitute:
    checks = line_checks(line, req)
    status = "fail" if any(c.ok is False for c in checks) else "unknown" if any(c.ok is None for c in checks) \
        else "pass"
    fit = None
    if req.asks_hfe and line.hfe_min is not None and line.hfe_max is not None:
        fit = hfe_fit(line.hfe_min, line.hfe_max, req.hfe_min, req.hfe_max)
    return Substitute(line, status, checks, fit)


def rank_key(s: Substitute, asks_hfe: bool) -> tuple:
    """Sort key: status, then (for failures) polarity and number failed, then D, most on hand, file order."""
    d = (s.hfe.distance if s.hfe is not None else math.inf) if asks_hfe else 0.0
    tier = {"pass": 0, "unknown": 1, "fail": 2}[s.status]
    extra = (0 if s.right_polarity else 1, len(s.failed)) if s.status == "fail" else (0, 0)
    return (tier, *extra, d, -s.line.qty, s.line.index)


def find_substitutes(lines: Sequence[StockLine], requirement: Requirement) -> tuple[Substitute, ...]:
    """Every transistor line of ``lines`` judged against ``requirement``, best first (``rank`` from 1)."""
    judged = [_judge(ln, requirement) for ln in lines if ln.kind == "transistor"]
    judged.sort(key=lambda s: rank_key(s, requirement.asks_hfe))
    return tuple(replace(s, rank=i) for i, s in enumerate(judged, 1))


def requirement_from_stage(stage, board, given: dict[str, Any] | None = None, units: int = 1) -> Requirement:
    """The requirement a repair starts from: the stage's own transistor (``stage.transistor``).

    Its polarity and hFE range; VCEO, IC max and PD at least its own ratings.  Where it gives
    none, what the stage needs: VCEO the supply (the whole supply may stand across a cut-off
    transistor), IC max twice the highest quiescent collector current and PD the highest
    dissipation over the derating, both at the worst case of ``board`` (the stage's ``Analysis``
    with its own transistor; the same figures as its "Q1 IC max" and "Q1 power" checks).
    ``given`` (field -> value) overrides any of these.
    """
    given = {k: v for k, v in (given or {}).items() if v is not None}
    t = stage.transistor
    checks = {c.name: c for c in board.checks}
    fields: dict[str, Any] = {"polarity": stage.polarity, "hfe_min": t.hfe_min, "hfe_max": t.hfe_max}
    origin = {"polarity": "spec", "hfe_min": "spec", "hfe_max": "spec"}
    if t.vceo is not None:
        fields["vceo"], origin["vceo"] = t.vceo, "spec"
    else:
        fields["vceo"], origin["vceo"] = stage.supply, "supply"
    if t.ic_max is not None:
        fields["ic_max"], origin["ic_max"] = t.ic_max, "spec"
    elif "Q1 IC max" in checks and _finite(checks["Q1 IC max"].value):
        fields["ic_max"], origin["ic_max"] = float(checks["Q1 IC max"].value), "stage"
    if t.pd is not None:
        fields["pd"], origin["pd"] = t.pd, "spec"
    elif "Q1 power" in checks and _finite(checks["Q1 power"].value):
        fields["pd"], origin["pd"] = float(checks["Q1 power"].value) / board.conditions.transistor_derating, "stage"
    if "polarity" in given and str(given["polarity"]).strip().lower() != stage.polarity:
        raise RequirementError(f"the stage is {stage.polarity.upper()}: {article(str(given['polarity']))} cannot "
                               "take the place of its transistor")
    for k, v in given.items():
        fields[k], origin[k] = v, "given"
    if "hfe_min" in given and "hfe_max" not in given and fields["hfe_max"] is not None \
            and fields["hfe_max"] < given["hfe_min"]:
        fields["hfe_max"] = None  # the stage's own top end below the floor asked: the floor alone
        origin.pop("hfe_max")
    if "hfe_max" in given and "hfe_min" not in given and fields["hfe_min"] is not None \
            and fields["hfe_min"] > given["hfe_max"]:
        fields["hfe_min"] = None
        origin.pop("hfe_min")
    return Requirement(units=units, origin=tuple(origin.items()), **fields)


def _finite(x) -> bool:
    return x is not None and math.isfinite(float(x))


def substitutes_for(stock, requirement: Requirement | None = None, *, spec=None, given: dict | None = None,
                    units: int = 1, top: int | None = None):
    """The transistor substitutes in ``stock`` (a ``parts.Stock``): a ``repair.result.SubstituteResult``.

    Without ``spec`` the ``requirement`` is needed.  With ``spec`` (an ``io.spec.Spec`` with
    [parts]) the requirement defaults to the stage's own transistor, ``given`` overriding any
    field, and every candidate of the stage's polarity is analysed in the stage (its targets,
    its limits).  ``top`` limits the lines each list of the result shows.
    """
    from ..analysis import analyse
    from ..cautions import PIN_ORDER, cautions_for, stage_cautions
    from .in_stage import stage_verdicts, verdict_of
    from .result import SubstituteResult

    lines = stock.transistors()
    stage = board = None
    if spec is not None:
        if not spec.parts:
            raise SpecError(f"{spec.path}: no [parts]: substitutes need the stage as it is built "
                            "(a spec with [parts] and [transistor], as analyze reads)")
        stage = spec.stage()
        board = analyse(stage, spec.conditions, targets=spec.targets)
        if requirement is None:
            requirement = requirement_from_stage(stage, board, given, units)
    elif requirement is None:
        raise RequirementError("give the transistor's polarity (npn or pnp), or a stage spec")
    ranked = find_substitutes(lines, requirement)
    if stage is None:
        cautions = [PIN_ORDER, *stage_cautions(supply=requirement.vceo or 0.0)]
        return SubstituteResult(requirement, ranked, cautions=tuple(cautions), stock=stock, top=top)
    own = (stage.transistor.label or "").strip().lower()
    verdicts = stage_verdicts(stage, [s.line for s in ranked], spec.conditions, spec.targets)
    ranked = tuple(replace(s, stage=verdicts.get(s.line.index),
                           same_as_board=bool(own) and (s.line.label or "").strip().lower() == own
                           and s.right_polarity) for s in ranked)
    cautions = [PIN_ORDER, *cautions_for(board, mains=spec.mains)]
    return SubstituteResult(requirement, ranked, spec=spec, board=verdict_of(board), cautions=tuple(cautions),
                            stock=stock, top=top)

"""What transistor to buy when the stock transistors cannot meet a spec.

The answer is a requirement in the figures of the trade (polarity, VCEO, IC max, power rating, an
hFE range), never a part number, and it is checked: a virtual stock line with exactly those
figures is added to the drawer and the ordinary search runs again (``runner.run_search``).  The
figures come from ladders of common ratings, each chosen as the least that the stage's own
ceilings allow (``reasons.hard_limits`` on the virtual line); the hFE grades are tried from the
lowest, so the requirement asks for no more gain than the stage needs.  Any transistor whose hFE
spread lies inside the range and whose ratings are at least those given keeps the design: the
worst case over a smaller box of hFE is no worse, and higher ratings only widen the margins.

docs/method.md, "What to buy", has the argument.
"""

from __future__ import annotations

from dataclasses import dataclass

from ..parts import Source, StockLine
from .runner import BUY_FILE, run_search

__all__ = ["TransistorNeed", "transistor_to_buy", "VCEO_STEPS", "IC_MAX_STEPS", "PD_STEPS", "HFE_GRADES"]

# Ladders of ratings that small-signal and medium-power transistors are commonly sold with
# (common practice, no source); the requirement takes the least step that suffices.
VCEO_STEPS = (30.0, 45.0, 60.0, 80.0, 100.0, 160.0, 250.0, 300.0, 400.0)  # V
IC_MAX_STEPS = (0.1, 0.2, 0.5, 1.0, 1.5, 3.0)  # A
PD_STEPS = (0.25, 0.5, 0.625, 1.0, 1.5, 2.0, 5.0)  # W, free air or with the heat sink the user fits
# hFE groups small-signal types are commonly sorted into (common practice, no source).
HFE_GRADES = ((40.0, 120.0), (100.0, 300.0), (200.0, 450.0), (400.0, 800.0))
IC_HEADROOM = 2.0  # the rating check keeps twice the collector current within IC max (reasons.py)


@dataclass(frozen=True)
class TransistorNeed:
    """A transistor to buy: figures it must have at least (hFE: its spread inside the range)."""

    polarity: str
    vceo: float
    ic_max: float
    pd: float
    hfe_min: float
    hfe_max: float
    vce_sat: float
    checked: bool  # a search with a virtual line of these figures found a design
    design: object = None  # runner.DesignChoice the search found with it
    passives: int = 0  # resistors and capacitors to buy besides, per unit (in ``design``)
    proven: bool = True  # the passives are proven the fewest for this grade

    def text(self) -> str:
        from ..values import format_si

        return (f"one {self.polarity.upper()} transistor per unit with VCEO at least {format_si(self.vceo, 'V')}, "
                f"IC max at least {format_si(self.ic_max, 'A')}, power rating at least {format_si(self.pd, 'W')}, "
                f"VCE(sat) at most {format_si(self.vce_sat, 'V')}, and its hFE spread within "
                f"{self.hfe_min:g}–{self.hfe_max:g}")

    def to_dict(self) -> dict:
        return {"polarity": self.polarity, "vceo_min": self.vceo, "ic_max_min": self.ic_max, "pd_min": self.pd,
                "hfe_min": self.hfe_min, "hfe_max": self.hfe_max, "vce_sat_max": self.vce_sat,
                "checked": self.checked, "passives_too": self.passives, "text": self.text()}


def _least(steps, need: float) -> float | None:
    return next((s for s in steps if s >= need * (1 - 1e-12)), None)


def virtual_transistor(problem, index: int, hfe: tuple[float, float], vce_sat: float) -> StockLine | None:
    """A stock line to buy with the least ladder ratings the stage needs at ``hfe``; None when the
    ladders end below the need."""
    from ..constants import VBE_DEFAULT

    t, c = problem.targets, problem.conditions
    ic_hi = t.ie_max  # every design keeps IE <= ie_max at every vertex, and IC < IE
    vceo = _least(VCEO_STEPS, problem.supply)
    ic_max = _least(IC_MAX_STEPS, IC_HEADROOM * ic_hi)
    # VCE·IC <= VCC·IC: the most a transistor on this supply can dissipate at IE <= ie_max
    pd = _least(PD_STEPS, problem.supply * ic_hi / c.transistor_derating)
    if vceo is None or ic_max is None or pd is None:
        return None
    return StockLine(index=index, kind="transistor", value=None, qty=problem.units, source=Source(BUY_FILE, None, 0),
                     label=f"to buy: hFE {hfe[0]:g}-{hfe[1]:g}", polarity=problem.polarity, hfe_min=hfe[0],
                     hfe_max=hfe[1], vceo=vceo, ic_max=ic_max, pd=pd, vbe=VBE_DEFAULT, vce_sat=vce_sat,
                     location="new")


def transistor_to_buy(problem, lines, *, budget=None, with_passives: bool = True,
                      scale: float = 1.0) -> TransistorNeed | None:
    """The least demanding transistor (by hFE grade, then ratings) with which the drawer's passives
    make a design; when no grade does and ``with_passives``, the grade that needs the fewest bought
    passives besides (``shopping.cheapest_purchases``, then stored in ``passives``).  None when
    nothing does (or a stage-wide ceiling rules every transistor out)."""
    from ..constants import VCE_SAT_DEFAULT
    from .reasons import hard_limits

    problem = problem.with_(label=None)
    passive = [ln for ln in lines if ln.kind != "transistor"]
    index = max((ln.index for ln in lines), default=-1) + 1
    usable = []
    for hfe in HFE_GRADES:
        line = virtual_transistor(problem, index, hfe, VCE_SAT_DEFAULT)
        if line is None:
            break
        limits = hard_limits(problem, [line])
        if any(not lm.transistor for lm in limits):
            return None  # a ceiling of the stage itself: no transistor lifts it
        if limits:
            continue  # this grade's own ceilings (input resistance) fail: a higher grade
        usable.append(line)
        found, _, _ = run_search(problem, passive + [line], 1, False, budget=budget)
        if found:
            return TransistorNeed(problem.polarity, line.vceo, line.ic_max, line.pd, line.hfe_min, line.hfe_max,
                                  line.vce_sat, True, found[0])
    if not with_passives:
        return None
    from .shopping import cheapest_purchases

    best = None
    for line in usable:
        got = cheapest_purchases(problem, passive + [line], drawer_proven=True, scale=scale)
        if got.design is not None and (best is None or (got.bought, got.design.key) < (best[0].bought,
                                                                                        best[0].design.key)):
            best = (got, line)
    if best is None:
        return None
    got, line = best
    return TransistorNeed(problem.polarity, line.vceo, line.ic_max, line.pd, line.hfe_min, line.hfe_max,
                          line.vce_sat, True, got.design, passives=got.bought, proven=got.proven)


"""``design``: the best stage the drawer can build for a spec, or why none, and what to buy.

``design(problem, stock)`` returns a ``DesignResult``: its ``status`` ("optimal" or "infeasible"),
the designs found (best first, with their objective keys), and for an infeasible problem the
nearest design's failed constraints and a checked shopping list.  See ``engine`` for the
objective and docs/method.md ("Design search") for the exactness argument.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from ..parts import Stock
from .problem import DesignProblem
from .runner import DesignChoice, RoleChoice, run_search, suitable_transistors, transistor_model
from .tables import with_default_ratings

__all__ = ["design", "DesignResult", "DesignChoice", "RoleChoice", "transistor_model", "suitable_transistors"]


@dataclass
class DesignResult:
    """What ``design`` found: status "optimal" or "infeasible", designs best first, and notes."""

    problem: DesignProblem
    status: str
    designs: list
    notes: list = field(default_factory=list)
    reason: str = ""
    nearest: dict | None = None
    buy: list = field(default_factory=list)
    buy_checked: bool = False
    buy_proven: bool = False  # the list is proven to be the fewest parts to buy (docs/method.md)
    buy_design: DesignChoice | None = None  # the design the bought parts are for
    buy_note: str = ""  # why the list is empty, or why it is not proven the fewest
    limits: list = field(default_factory=list)  # reasons.Limit: ceilings no passives can lift
    buy_transistor: object = None  # buy_transistor.TransistorNeed: the transistor to buy, checked
    transistors_tried: list = field(default_factory=list)
    stats: dict = field(default_factory=dict)
    # what it was made from, attached by drawerfit.design for the dict form (drawerfit.results)
    spec: object = field(default=None, repr=False, compare=False)
    stock: object = field(default=None, repr=False, compare=False)

    def __repr__(self) -> str:
        from ..results import design_repr

        return design_repr(self)

    def to_dict(self) -> dict:
        """The `design --json` shape (``drawerfit.results.design_dict``)."""
        from ..results import design_dict

        return design_dict(self)

    def to_pandas(self, table: str = "parts"):
        """The best design's parts (or ``table="pick_list"``) as a DataFrame (``drawerfit.results``)."""
        from ..results import design_frame

        return design_frame(self, table)

    @property
    def feasible(self) -> bool:
        return self.status in ("optimal", "best-found")

    @property
    def best(self) -> DesignChoice | None:
        return self.designs[0] if self.designs else None


def design(problem: DesignProblem, stock: Stock, *, top: int = 1, exhaustive: bool = False,
           suggest: bool = True, catalogue=None, on_step=None, budget: float | None = None) -> DesignResult:
    """The ``top`` best designs from ``stock`` for ``problem`` (exhaustive: naive enumeration).

    When there is none: the nearest design and (``suggest``) the fewest parts to buy from
    ``catalogue`` (StockLines standing for parts one can buy; default ``shopping.e_series_catalogue``).
    ``budget`` scales the search's work budget (1.0: the default, ``engine.WORK_BUDGET`` steps);
    ``on_step(note=...)`` hears of progress.
    """
    lines, notes = with_default_ratings(stock.lines)
    stats: dict = {}
    designs, trs, why = run_search(problem, lines, top, exhaustive, stats_out=stats, on_step=on_step,
                             budget=None if budget is None else _budget(budget))
    result = DesignResult(problem, "optimal" if designs else "infeasible", designs, notes,
                          transistors_tried=[t.label for t in trs])
    result.stats = stats
    if stats.get("truncated"):
        result.notes.append(limit_note(problem, stats, designs))
        if designs:
            result.status = "best-found"
    if designs:
        return result
    from .shopping import explain_infeasible

    explain_infeasible(result, lines, trs, why, suggest=suggest, catalogue=catalogue,
                       drawer_proven=not stats.get("truncated"), scale=1.0 if budget is None else budget)
    return result


def _budget(scale: float) -> tuple[int, int]:
    from .engine import SET_BUDGET, WORK_BUDGET

    return max(1, int(SET_BUDGET * scale)), max(1, int(WORK_BUDGET * scale))


def limit_note(problem: DesignProblem, stats: dict, designs) -> str:
    """What a search that stopped at its work budget has proven, and how to narrow it, in words."""
    open_ = stats.get("open")
    done = f"the search stopped at its work budget ({stats.get('sets', 0):,} resistor sets, " \
           f"{stats.get('work', 0):,} steps)"
    proven = ""
    if open_ is not None:
        if problem.prefer == "closest":
            d, p = open_[1], open_[2]
            proven = f"; proven: no design lies nearer the target centres than D = {d:.3g}"
        else:
            p, d = open_[1], open_[2]
            proven = f"; proven: no design has fewer than {p} parts"
            if d > 0:
                proven += f", and none of {p} parts lies nearer the target centres than D = {d:.3g}"
    if designs:
        best = designs[0]
        what = (f"; the design shown ({best.part_count} parts, D = {best.distance:.3g}) is the best found, "
                "not proven optimal")
    else:
        what = "; no design was found, and it is not proven that none exists"
    how = ("; to narrow the search: --max-parts 1 or 2, name the transistor ([transistor] label), list fewer "
           "roles under pairs, or raise --budget")
    return done + proven + what + how

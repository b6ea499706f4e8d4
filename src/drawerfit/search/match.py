"""Substitutes for one value: the best equivalents in the drawer, ranked, and exact.

Bins of one part are pooled, as the design search pools them (``pools``): lines of the same kind,
value, polarization and dielectric with the same tolerance and rating are one part held in several
bins, and a line with no wider tolerance and no lower rating may stand in for another.  So four
bins holding 20 + 10 + 5 + 8 of 4k7 make 43 on hand, and 30 units can be drawn from them; the
result says which bins give what.

Ranking: equivalents whose nominal value lies inside the window come first, fewest parts first,
then smallest |relative error|, then tightest tolerance.  When fewer than ``top`` lie inside, the
``NEAREST_OUTSIDE`` nearest outside the window are added, marked as such: they are not substitutes
at that window.  Triples are looked at only when singles and pairs cannot fill the list.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import Sequence

import numpy as np

from ..allocation.bins import draw_bins
from ..equivalents import Equivalent, EquivalentIndex, EquivalentTable
from ..parts import StockLine
from .pools import Pools, covers_key

DEFAULT_WINDOW = 0.01  # ±1 % when the user gives no --within; see docs/method.md
NEAREST_OUTSIDE = 3  # nearest equivalents outside the window shown when the window holds too few
GRADES_POOLED = 200  # grades (tolerance, rating) of one value compared for standing in; more are kept apart


@dataclass(frozen=True)
class Holding:
    """What the drawer holds of one part an equivalent uses: every bin that may give it."""

    line: StockLine  # the part the equivalent is judged by
    on_hand: int  # parts in all those bins together
    bins: tuple[StockLine, ...]  # fullest first; other grades that may stand in come after its own


@dataclass(frozen=True)
class Candidate:
    equivalent: Equivalent
    error: float  # signed, relative: (value - target) / target
    within: bool
    holdings: tuple[Holding, ...] = ()
    draws: tuple[tuple[StockLine, int], ...] = ()  # bins to take from for all units: (bin, parts)

    @property
    def warnings(self) -> list[str]:
        """What a builder must know about this equivalent (a polarized capacitor in a series chain)."""
        if self.equivalent.polarized_series:
            return ["a polarized capacitor in a series chain: its DC share follows leakage, not capacitance; "
                    "fit a balancing resistor across each part and check each one's voltage"]
        return []


@dataclass(frozen=True)
class MatchResult:
    kind: str
    target: float
    within: float
    min_rating: float | None
    units: int
    max_parts: int
    candidates: tuple[Candidate, ...]
    stock: object = field(default=None, repr=False, compare=False)  # the drawer searched (its notes go in the dict)

    @property
    def inside(self) -> tuple[Candidate, ...]:
        return tuple(c for c in self.candidates if c.within)

    @property
    def outside(self) -> tuple[Candidate, ...]:
        return tuple(c for c in self.candidates if not c.within)

    @property
    def rating_key(self) -> str:
        return "power" if self.kind == "resistor" else "voltage"

    def __repr__(self) -> str:
        from ..values import format_code

        unit = "ohm" if self.kind == "resistor" else "F"
        best = self.candidates[0].equivalent.describe() if self.candidates else "nothing"
        return (f"<MatchResult {format_code(self.target, unit)} ±{self.within * 100:g} %: {len(self.inside)} inside, "
                f"{len(self.outside)} nearest outside; best {best}>")

    def to_dict(self) -> dict:
        """The `match --json` shape: the target, the substitutes best first, and the drawer's notes."""
        key = self.rating_key
        out = {
            "target": {"value": self.target, "kind": self.kind, "within": self.within, key: self.min_rating,
                       "units": self.units, "max_parts": self.max_parts},
            "results": [{
                "value": c.equivalent.value, "error": c.error, "arrangement": c.equivalent.arrangement,
                "part_count": c.equivalent.part_count, "within": c.within, "tolerance": c.equivalent.tolerance,
                key: c.equivalent.rating, "describe": c.equivalent.describe(),
                "parts": [part_dict(m) for m in c.equivalent.members],
                "on_hand": [{"part": part_dict(h.line), "count": h.on_hand,
                             "bins": [{**part_dict(b), "qty": b.qty} for b in h.bins]} for h in c.holdings],
                "take": [{**part_dict(b), "count": n} for b, n in c.draws],
                "warnings": c.warnings,
            } for c in self.candidates],
        }
        if self.stock is not None:
            out.update(warnings=list(self.stock.warnings), assumptions=list(self.stock.assumptions),
                       problems=[p.to_dict() for p in self.stock.problems])
        return out

    def to_pandas(self):
        """One row per substitute, best first: value, error, how it is made, tolerance, rating, parts on hand."""
        import pandas as pd

        cols = ["value", "error", "within", "describe", "arrangement", "part_count", "tolerance", "rating", "on_hand"]
        rows = [{"value": c.equivalent.value, "error": c.error, "within": c.within,
                 "describe": c.equivalent.describe(), "arrangement": c.equivalent.arrangement,
                 "part_count": c.equivalent.part_count, "tolerance": c.equivalent.tolerance,
                 "rating": c.equivalent.rating, "on_hand": min((h.on_hand for h in c.holdings), default=0)}
                for c in self.candidates]
        return pd.DataFrame(rows, columns=cols)


def part_dict(line: StockLine) -> dict:
    """A stock line in brief, for JSON: kind, value, letter code, bin and where it sits in the file."""
    from ..values import format_code

    unit = "ohm" if line.kind == "resistor" else "F" if line.kind == "capacitor" else None
    return {"kind": line.kind, "value": line.value, "label": line.label or None,
            "code": format_code(line.value, unit) if unit and line.value else None,
            "location": line.location, "source": line.source.to_dict()}


class _Drawer:
    """The lines of one kind as match searches them: one line per part (bins pooled), with the parts
    of every bin that may stand in for it as its quantity, and the bins behind each."""

    def __init__(self, lines: Sequence[StockLine]):
        self.own: dict[int, list[StockLine]] = {}  # search line index -> bins of that very part
        self.cover: dict[int, list[int]] = {}  # search line index -> search lines that may stand in (itself first)
        self.total: dict[int, int] = {}  # search line index -> parts of that very part
        self.lines: list[StockLine] = []
        classes: dict[object, list[StockLine]] = {}
        for ln in lines:
            if ln.qty > 0 and ln.value is not None:
                key = covers_key(ln)
                classes.setdefault(key if key is not None else ("line", ln.index), []).append(ln)
        for members in classes.values():
            grades: dict[tuple, list[StockLine]] = {}
            for ln in members:
                grades.setdefault((_r(ln.tolerance), _r(ln.rating)), []).append(ln)
            heads = []
            for bins in grades.values():
                bins.sort(key=lambda b: (-b.qty, b.source.sheet or "", b.source.row))
                head = bins[0]
                self.own[head.index], self.total[head.index] = bins, sum(b.qty for b in bins)
                heads.append(head)
            if 1 < len(heads) <= GRADES_POOLED:
                pools = Pools.build([replace(h, index=i, qty=self.total[h.index]) for i, h in enumerate(heads)])
                for i, h in enumerate(heads):
                    givers = [heads[int(a)].index for a in np.flatnonzero(pools.cover[:, i])]
                    self.cover[h.index] = [h.index] + [g for g in givers if g != h.index]
                    self.lines.append(replace(h, qty=int(pools.upq[i])))
            else:
                for h in heads:
                    self.cover[h.index] = [h.index]
                    self.lines.append(replace(h, qty=self.total[h.index]))
        self.by_index = {ln.index: ln for ln in self.lines}

    def holding(self, line: StockLine) -> Holding:
        bins = tuple(b for g in self.cover[line.index] for b in self.own[g])
        return Holding(line, self.by_index[line.index].qty, bins)

    def draws(self, eq: Equivalent, units: int) -> tuple[tuple[StockLine, int], ...] | None:
        """Bins and counts for ``units`` builds of ``eq``, or None when the pooled bins cannot give them."""
        need = {line.index: n * units for line, n in eq.uses}
        if all(n <= self.total[b] for b, n in need.items()):
            given = {b: [(b, n)] for b, n in need.items()}
        else:
            # grades standing in for one another: the exact allocation of the design search
            heads = sorted({g for b in need for g in self.cover[b]})
            local = {h: i for i, h in enumerate(heads)}
            pools = Pools.build([replace(self.by_index[h], index=i, qty=self.total[h]) for i, h in enumerate(heads)])
            got = draw_bins(pools.cover, pools.qty, {local[b]: n for b, n in need.items()})
            if got is None:
                return None
            given = {heads[b]: [(heads[a], n) for a, n in rows] for b, rows in got.items()}
        out: list[tuple[StockLine, int]] = []
        for rows in given.values():
            for head, n in rows:
                for b in self.own[head]:  # fullest bins first: fewest bins opened
                    take = min(n, b.qty - sum(c for x, c in out if x.index == b.index))
                    if take > 0:
                        out.append((b, take))
                        n -= take
                    if n == 0:
                        break
        return tuple(out)


def _r(x: float | None) -> float:
    return -1.0 if x is None else round(float(x), 12)


def _rank_within(t: EquivalentTable, target: float) -> np.ndarray:
    err = np.abs(t.value / target - 1.0)
    return np.lexsort((t.tolerance, err, t.part_count))


def match(lines: Sequence[StockLine], target: float, *, within: float = DEFAULT_WINDOW, max_parts: int = 2,
          min_rating: float | None = None, units: int = 1, top: int = 10,
          allow_polarized_series: bool = False) -> MatchResult:
    """The ``top`` best equivalents for ``target`` among ``lines`` (all of one kind), bins pooled.

    Chains with a polarized capacitor in series are left out unless ``allow_polarized_series``.
    """
    opts = dict(min_rating=min_rating, allow_polarized_series=allow_polarized_series)
    kind = lines[0].kind if lines else "resistor"
    drawer = _Drawer(lines)
    pool = drawer.lines
    lo, hi = target * (1 - within), target * (1 + within)
    index = EquivalentIndex(pool, units) if pool else None
    rows: list[Candidate] = []
    # fewest parts first: singles, then pairs, then triples, each the nearest first; a count is
    # looked at only when the ones before cannot fill the list, and only as deep as it must
    # (``window_near``: memory in proportion to the list, whatever the window)
    for count in range(1, max_parts + 1):
        if index is None or len(rows) >= top:
            break
        k = 2 * top + 8
        while True:
            found, more = index.window_near(lo, hi, target, k, max_parts=count, **opts)
            found = found.take(np.flatnonzero(found.part_count == count))
            got: list[Candidate] = []
            for i in _rank_within(found, target):
                c = _candidate(drawer, found.equivalent(int(i)), target, True, units)
                if c is not None:
                    got.append(c)
                    if len(rows) + len(got) == top:
                        break
            if len(rows) + len(got) >= top or not more:
                rows += got
                break
            k *= 4  # stock kept some of them out: look deeper
    if len(rows) < top and index is not None:
        rest = index.nearest(target, NEAREST_OUTSIDE + 4, max_parts=max_parts, exclude_window=(lo, hi), **opts)
        outside = [c for c in (_candidate(drawer, e, target, False, units) for e in rest) if c is not None]
        rows += outside[:NEAREST_OUTSIDE]
    return MatchResult(kind, target, within, min_rating, units, max_parts, tuple(rows))


def _candidate(drawer: _Drawer, eq: Equivalent, target: float, within: bool, units: int) -> Candidate | None:
    draws = drawer.draws(eq, units)
    if draws is None:
        return None
    holdings = tuple(drawer.holding(line) for line, _n in eq.uses)
    return Candidate(eq, eq.value / target - 1.0, within, holdings, draws)

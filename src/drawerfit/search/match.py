"""Substitutes for one value: the best equivalents in the drawer, ranked, and exact.

Ranking: equivalents whose nominal value lies inside the window come first, fewest parts first,
then smallest |relative error|, then tightest tolerance; after them the rest by |error|.
Triples are looked at only when singles and pairs cannot fill the list (they would rank after).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Sequence

import numpy as np

from ..equivalents import Equivalent, EquivalentTable, equivalents_in_window, nearest
from ..parts import StockLine

DEFAULT_WINDOW = 0.01  # ±1 % when the user gives no --within; see docs/method.md


@dataclass(frozen=True)
class Candidate:
    equivalent: Equivalent
    error: float  # signed, relative: (value - target) / target
    within: bool


@dataclass(frozen=True)
class MatchResult:
    kind: str
    target: float
    within: float
    min_rating: float | None
    units: int
    max_parts: int
    candidates: tuple[Candidate, ...]


def _rank_within(t: EquivalentTable, target: float) -> np.ndarray:
    err = np.abs(t.value / target - 1.0)
    return np.lexsort((t.tolerance, err, t.part_count))


def match(lines: Sequence[StockLine], target: float, *, within: float = DEFAULT_WINDOW, max_parts: int = 2,
          min_rating: float | None = None, units: int = 1, top: int = 10,
          allow_polarized_series: bool = False) -> MatchResult:
    """The ``top`` best equivalents for ``target`` among ``lines`` (all of one kind).

    Chains with a polarized capacitor in series are left out unless ``allow_polarized_series``.
    """
    opts = dict(units=units, min_rating=min_rating, allow_polarized_series=allow_polarized_series)
    kind = lines[0].kind if lines else "resistor"
    lo, hi = target * (1 - within), target * (1 + within)
    found = equivalents_in_window(lines, lo, hi, max_parts=min(max_parts, 2), **opts)
    if len(found) < top and max_parts >= 3:
        found = equivalents_in_window(lines, lo, hi, max_parts=3, **opts)
    inside = found.take(_rank_within(found, target)[:top])
    rows = [Candidate(e, e.value / target - 1.0, True) for e in inside]
    if len(rows) < top:
        rest = nearest(lines, target, top - len(rows), max_parts=max_parts, exclude_window=(lo, hi), **opts)
        rows += [Candidate(e, e.value / target - 1.0, False) for e in rest]
    return MatchResult(kind, target, within, min_rating, units, max_parts, tuple(rows))

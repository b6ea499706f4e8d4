"""The equivalents each line of a parts list may use: singles, pairs and triples inside its window and
rating, as arrays, minus those that are never part of a best allocation.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..parts import Stock
from .parts_list import KitLine

__all__ = ["Candidates", "candidates_for", "label_key", "PPM", "TRIPLES_PER_LINE", "TRIPLES_MAX", "TRIPLES_TOTAL"]

PPM = 1_000_000
TRIPLES_PER_LINE = 200  # triples of a list line's window built first (max_parts=3): those nearest the value
TRIPLES_MAX = 204_800  # the most counted for one line when the allocation asks for more (4x, 16x ... at a time)
TRIPLES_TOTAL = 1_000_000  # the most counted for all lines of a list together (about 100 MB built at most)
WINDOW_STEPS = 8  # bisection steps in log half-width for the window of nearest triples (to about 5 %)


@dataclass(frozen=True)
class Candidates:
    """The equivalents one list line may use, as arrays (one row per equivalent)."""

    part_count: np.ndarray  # int
    err_ppm: np.ndarray  # int, |nominal - target| / target in ppm
    members: np.ndarray  # (n, 3) StockLine.index, -1 padded
    counts: np.ndarray  # (n, 3) parts of each member
    equivalent: object  # callable i -> Equivalent (for the report)
    in_window: int  # equivalents in the window before dominance pruning
    # least error (ppm) of the triples in the window that were not built (beyond the nearest ones
    # taken), or None when every one was
    unbuilt_error: int | None = None
    triple_limit: int = 0  # the count of nearest triples this table was built for (0: no cut)

    def __len__(self) -> int:
        return len(self.part_count)

    @property
    def truncated(self) -> bool:
        """True when the window holds triples that were not built."""
        return self.unbuilt_error is not None


def _empty(in_window: int = 0) -> Candidates:
    z = np.zeros(0, dtype=np.int64)
    return Candidates(z, z, np.zeros((0, 3), dtype=np.int64), np.zeros((0, 3), dtype=np.int64),
                      lambda i: None, in_window)


@dataclass(frozen=True)
class _Transistor:
    """A transistor used as it is, in the shape of an Equivalent for the report."""

    value: float | None
    tolerance: float | None
    rating: float | None
    part_count: int
    arrangement: str
    uses: tuple


def candidates_for(line: KitLine, stock: Stock, max_parts: int = 2,
                   indexes: dict | None = None, triple_limit: int | None = None) -> Candidates:
    """Equivalents for one list line: inside its window and rating, minus those surely never best.

    An equivalent of several parts that contains a smaller equivalent in the window (a single
    part of one of its lines, or for a triple a pair of its parts) is dropped, whatever the errors:
    swapping in the smaller one keeps every designator filled with fewer parts and uses a subset of
    the stock, so the dropped one is never in a lexicographic optimum (fewest parts comes before
    least error).  Of equivalents made of the very same parts (a + (b ∥ c) and b + (a ∥ c)) only
    the one with least error is kept.

    ``indexes`` (kind -> EquivalentIndex) lets many list lines share one set of pair tables.
    ``triple_limit`` (default TRIPLES_PER_LINE) is how many of the nearest triples are built when
    the window holds more.
    """
    if line.kind == "transistor":
        want = label_key(line.label)
        rows = [s for s in stock.lines if s.kind == "transistor" and s.qty > 0 and label_key(s.label) == want]
        n = len(rows)
        members = np.full((n, 3), -1, dtype=np.int64)
        counts = np.zeros((n, 3), dtype=np.int64)
        for i, s in enumerate(rows):
            members[i, 0], counts[i, 0] = s.index, 1
        eqs = [_Transistor(None, None, None, 1, "single", ((s, 1),)) for s in rows]
        return Candidates(np.ones(n, dtype=np.int64), np.zeros(n, dtype=np.int64), members, counts,
                          eqs.__getitem__, n)
    from ..equivalents import EquivalentIndex

    indexes = {} if indexes is None else indexes
    if line.kind not in indexes:
        lines = [s for s in stock.lines if s.kind == line.kind and s.value is not None and s.qty > 0]
        indexes[line.kind] = EquivalentIndex(lines, units=1) if lines else None
    index = indexes[line.kind]
    if index is None:
        return _empty()
    parts = 1 if line.single else max_parts
    table = index.window(line.lo, line.hi, max_parts=min(parts, 2), min_rating=line.min_rating)
    tables = [table]
    unbuilt = None
    limit = TRIPLES_PER_LINE if triple_limit is None else triple_limit
    if parts >= 3:
        # Triples are built by value window (triples.py), never all: every triple in the line's
        # window when it holds at most ``limit``, else the window of about that many around the
        # target; the ones beyond are at least as far from it, which the allocation uses to show
        # that they cannot do better (or says it has not).
        from ..triples import TripleSpace

        key = ("triples", line.kind)
        if key not in indexes:
            indexes[key] = TripleSpace(index.pool, 1, {r: index.pairs(r) for r in (False, True)})
        space = indexes[key]
        lo, hi = line.lo, line.hi
        if space.count(lo, hi) > limit:
            lo, hi = _window_around(space, line.value, limit, line.lo, line.hi)
            unbuilt = _error_beyond(line, lo, hi)
        tables.append(_TripleTable(space, space.build(lo, hi), line.min_rating))
    sizes = [len(t) for t in tables]
    n = sum(sizes)
    if n == 0:
        return _empty()

    def cat(name, dtype, width=None):
        parts_ = [np.asarray(getattr(t, name), dtype=dtype) for t in tables]
        if width is not None:
            parts_ = [a.reshape(len(t), width) for a, t in zip(parts_, tables)]
        return np.concatenate(parts_)

    value = cat("value", float)
    err = np.rint(np.abs(value - line.value) / line.value * PPM).astype(np.int64)
    pc = cat("part_count", np.int64)
    members = cat("members", np.int64, 3)
    counts = cat("counts", np.int64, 3)
    offsets = np.cumsum([0] + sizes)

    def equivalent(i: int):
        t = int(np.searchsorted(offsets, i, side="right")) - 1
        return tables[t].equivalent(int(i - offsets[t]))

    keep = ~_dominated(pc, err, members, counts, max(len(stock.lines), int(members.max()) + 1))
    idx = np.nonzero(keep)[0]
    return Candidates(pc[idx], err[idx], members[idx], counts[idx],
                      lambda i, _idx=idx: equivalent(int(_idx[i])), n, unbuilt, limit if unbuilt is not None else 0)


def _window_around(space, target: float, k: int, lo: float, hi: float) -> tuple[float, float]:
    """A window [target - d, target + d] inside [lo, hi] counted to hold at least ``k`` triples, d
    found by bisection of log d between a millionth of the widest and the widest (about how many are
    built matters, not the exact count: those left out are described by ``unbuilt_error``)."""
    widest = max(target - lo, hi - target)
    a, b = np.log(widest * 1e-6), np.log(widest)  # a window of half-width exp(b) always counts >= k
    for _ in range(WINDOW_STEPS):
        mid = 0.5 * (a + b)
        d = float(np.exp(mid))
        if space.count(max(lo, target - d), min(hi, target + d)) >= k:
            b = mid
        else:
            a = mid
    d = float(np.exp(b))
    return max(lo, target - d), min(hi, target + d)


def _error_beyond(line: KitLine, lo: float, hi: float) -> int | None:
    """A lower bound (ppm) on the error of any equivalent in the line's window outside [lo, hi]:
    one ppm under the distance to the nearer cut edge (so rounding cannot overstate it)."""
    cut = [line.value - lo] if lo > line.lo else []
    cut += [hi - line.value] if hi < line.hi else []
    if not cut:
        return None
    return max(0, int(np.floor(min(cut) / line.value * PPM)) - 1)


class _TripleTable:
    """A window of triples with the attributes ``candidates_for`` reads of an equivalent table."""

    def __init__(self, space, blk, min_rating: float | None):
        keep = np.ones(len(blk), bool)  # as for pairs, polarized capacitors in series are candidates
        if min_rating is not None:
            keep &= blk.rating >= min_rating * (1 - 1e-12)
        blk = blk.take(np.flatnonzero(keep))
        from ..equivalents import _counts

        self.space, self.blk = space, blk
        self.value = blk.v
        self.part_count = np.full(len(blk), 3, np.int64)
        self.members, self.counts = _counts(np.asarray(blk.pos, np.int64), space.pool)

    def __len__(self) -> int:
        return len(self.blk)

    def equivalent(self, i: int):
        from ..equivalents import _table

        b, j = self.blk, slice(int(i), int(i) + 1)
        return _table(self.space.pool, np.asarray(b.pos[j], np.int64), b.v[j], b.vlo[j], b.vhi[j], b.rating[j],
                      b.form[j].astype(np.int64), b.pol_series[j]).equivalent(0)


def _dominated(pc, err, members, counts, top: int) -> np.ndarray:
    """Candidates of one line that another of its candidates makes needless: one whose parts are a
    part of its own parts (fewer parts from a subset of the same stock: better whatever the error),
    or one with the same parts and no less error (the first of equals is kept)."""
    n = len(pc)
    parts = np.full((n, 3), top, dtype=np.int64)  # the stock line of each part, 'top' where none
    pos = np.zeros(n, dtype=np.int64)
    rows = np.arange(n)
    for j in range(3):
        for r in range(3):
            has = (members[:, j] >= 0) & (counts[:, j] > r)
            parts[rows[has], pos[has]] = members[has, j]
            pos[has] += 1
    parts.sort(axis=1)
    base = top + 1

    def key(p):
        return (p[:, 0] * base + p[:, 1]) * base + p[:, 2]

    own = key(parts)
    score = pc.astype(np.int64) * (int(err.max()) + 1) + err
    order = np.lexsort((rows, score, own))  # by parts used, then (parts, error), then index
    first = order[np.r_[True, own[order][1:] != own[order][:-1]]]
    uniq = own[first]
    drop = np.ones(n, dtype=bool)
    drop[first] = False  # one of each set of parts: the best
    for mask in ((1, 1, 0), (1, 0, 1), (0, 1, 1), (1, 0, 0), (0, 1, 0), (0, 0, 1)):
        sub = np.where(np.array(mask, dtype=bool), parts, top)
        sub.sort(axis=1)
        k = key(sub)
        at = np.clip(np.searchsorted(uniq, k), 0, len(uniq) - 1)
        drop |= (k != own) & (uniq[at] == k)  # a proper part of its parts is a candidate too
    return drop


def label_key(text: str) -> str:
    import re

    return re.sub(r"[\W_]+", "", str(text).lower())

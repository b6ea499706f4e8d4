"""Equivalent parts: what single lines and series/parallel pairs and triples of the stock amount to.

Every equivalent carries its nominal value, its extremes over the members' tolerances (the network
value rises with every member's value, so the extremes are all-low and all-high), the rating it
offers with no member over its own rating, its part count, and the stock lines it draws on.

Resistors add in series; capacitors add in parallel.  Internally a pair is either a "sum" (series R,
parallel C) or a "reciprocal" combination (parallel R, series C), and a triple is a single part
combined with a pair.  Ratings compose exactly: inside any block the share of power (resistors) or
voltage (capacitors) each member takes is fixed by the values, so a block behaves as one part of
its own value and rating.

Candidates live in numpy arrays.  ``equivalents_in_window`` finds every equivalent whose nominal
value lies in a window without enumerating all triples: for each single part the window maps to a
window on the sorted pair values (the combination is monotonic), found by binary search.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Sequence

import numpy as np

from .parts import StockLine

FORM_NAMES = ("single", "series", "parallel", "series-parallel", "parallel-series")
SINGLE, SERIES, PARALLEL, SERIES_PARALLEL, PARALLEL_SERIES = range(5)
# Mixed forms: for resistors 'series-parallel' is a + (b ∥ c) and 'parallel-series' is a ∥ (b + c);
# for capacitors the same names: a in series with (b ∥ c), and a ∥ (b in series with c).


@dataclass(frozen=True)
class Equivalent:
    """One equivalent part made from stock lines (SI units; rating is W for R, V for C)."""

    kind: str
    value: float
    vmin: float
    vmax: float
    tolerance: float
    rating: float
    part_count: int
    arrangement: str
    uses: tuple[tuple[StockLine, int], ...]
    members: tuple[StockLine, ...]  # in the order of the arrangement: a, then b, c of the pair
    polarized: bool = False
    polarized_series: bool = False

    def describe(self) -> str:
        """'4k7', '4k7 + 2k2', '10k ∥ 10k', '1k + (2k2 ∥ 2k2)' in the letter code."""
        from .values import format_code

        unit = "ohm" if self.kind == "resistor" else "F"
        codes = [format_code(m.value, unit, ascii_only=False) for m in self.members]
        ser, par = " + ", " ∥ "
        if self.kind == "capacitor":
            ser, par = " — ", " ∥ "  # capacitors in series drawn as a chain
        form = self.arrangement
        if form == "single":
            return codes[0]
        if form == "series":
            return ser.join(codes)
        if form == "parallel":
            return par.join(codes)
        if form == "series-parallel":
            return f"{codes[0]}{ser}({codes[1]}{par}{codes[2]})"
        return f"{codes[0]}{par}({codes[1]}{ser}{codes[2]})"


@dataclass(frozen=True, eq=False)
class EquivalentTable:
    """Equivalents of one kind as parallel numpy arrays of length n.

    ``members`` and ``counts`` are (n, 3): the StockLine.index of each distinct line used (-1 pad)
    and how many parts of it one equivalent takes.  ``order`` (n, 3) lists the member lines in the
    arrangement's order (a, b, c), -1 padded.
    """

    kind: str
    value: np.ndarray
    vmin: np.ndarray
    vmax: np.ndarray
    rating: np.ndarray
    part_count: np.ndarray
    form: np.ndarray
    order: np.ndarray
    members: np.ndarray
    counts: np.ndarray
    polarized: np.ndarray
    polarized_series: np.ndarray
    lines: dict[int, StockLine] = field(default_factory=dict)

    def __len__(self) -> int:
        return int(self.value.shape[0])

    @property
    def tolerance(self) -> np.ndarray:
        """Worst-case relative deviation of the network from its nominal value."""
        return np.maximum(self.vmax / self.value - 1.0, 1.0 - self.vmin / self.value)

    def take(self, idx) -> "EquivalentTable":
        idx = np.asarray(idx)
        return EquivalentTable(self.kind, *(getattr(self, n)[idx] for n in _ARRAYS), lines=self.lines)

    def equivalent(self, i: int) -> Equivalent:
        order = [self.lines[int(j)] for j in self.order[i] if j >= 0]
        uses = tuple((self.lines[int(m)], int(c)) for m, c in zip(self.members[i], self.counts[i]) if m >= 0)
        return Equivalent(
            kind=self.kind, value=float(self.value[i]), vmin=float(self.vmin[i]), vmax=float(self.vmax[i]),
            tolerance=float(self.tolerance[i]), rating=float(self.rating[i]), part_count=int(self.part_count[i]),
            arrangement=FORM_NAMES[int(self.form[i])], uses=uses, members=tuple(order),
            polarized=bool(self.polarized[i]), polarized_series=bool(self.polarized_series[i]))

    def __iter__(self):
        return (self.equivalent(i) for i in range(len(self)))


_ARRAYS = ("value", "vmin", "vmax", "rating", "part_count", "form", "order", "members", "counts", "polarized",
           "polarized_series")


# --- combination arithmetic ------------------------------------------------------------------


def combine_sum(a, b):
    """Series resistors, parallel capacitors."""
    return a + b


def combine_recip(a, b):
    """Parallel resistors, series capacitors."""
    return a * b / (a + b)


def rating_sum(kind: str, va, ra, vb, rb):
    """Rating of a sum combination of two blocks (value, rating) with no member over its rating."""
    if kind == "resistor":  # series: same current; I**2 <= P/R for each
        return np.minimum(ra / va, rb / vb) * (va + vb)
    return np.minimum(ra, rb)  # parallel capacitors: same voltage


def rating_recip(kind: str, va, ra, vb, rb):
    """Rating of a reciprocal combination (parallel R, series C)."""
    veq = combine_recip(va, vb)
    if kind == "resistor":  # parallel: same voltage; V**2 <= P*R for each
        return np.minimum(ra * va, rb * vb) / veq
    return np.minimum(ra * va, rb * vb) / veq  # series C: V_k = V*Ceq/C_k <= rating_k


# --- the pool of single parts ----------------------------------------------------------------


@dataclass(frozen=True, eq=False)
class _Pool:
    kind: str
    idx: np.ndarray  # StockLine.index, sorted by value
    v: np.ndarray
    lo: np.ndarray
    hi: np.ndarray
    r: np.ndarray
    pol: np.ndarray
    qty: np.ndarray
    lines: dict[int, StockLine]


def _pool(lines: Sequence[StockLine], units: int) -> _Pool:
    usable = [ln for ln in lines if ln.value is not None and ln.value > 0 and ln.qty >= units]
    kinds = {ln.kind for ln in usable}
    if len(kinds) > 1:
        raise ValueError(f"equivalents are built from one kind of part at a time, got {sorted(kinds)}")
    kind = kinds.pop() if kinds else "resistor"
    usable.sort(key=lambda ln: (ln.value, ln.index))
    v = np.array([ln.value for ln in usable], dtype=float)
    tol = np.array([ln.tolerance or 0.0 for ln in usable], dtype=float)
    r = np.array([(ln.rating if ln.rating is not None else np.inf) for ln in usable], dtype=float)
    return _Pool(kind, np.array([ln.index for ln in usable], dtype=np.int64), v, v * (1 - tol), v * (1 + tol), r,
                 np.array([ln.polarized for ln in usable], dtype=bool),
                 np.array([ln.qty for ln in usable], dtype=np.int64), {ln.index: ln for ln in usable})


@dataclass(frozen=True, eq=False)
class _Pairs:
    """All pairs i <= j of one combination, sorted by nominal value (pool positions i, j)."""

    i: np.ndarray
    j: np.ndarray
    v: np.ndarray
    lo: np.ndarray
    hi: np.ndarray
    r: np.ndarray
    pol_series: np.ndarray


def _combine(kind: str, recip: bool, a: tuple, b: tuple) -> tuple:
    """(value, low end, high end, rating) of two blocks combined, each given as such a tuple."""
    comb = combine_recip if recip else combine_sum
    rate = rating_recip if recip else rating_sum
    return comb(a[0], b[0]), comb(a[1], b[1]), comb(a[2], b[2]), rate(kind, a[0], a[3], b[0], b[3])


def _pairs(pool: _Pool, recip: bool, units: int) -> _Pairs:
    n = len(pool.v)
    i, j = np.triu_indices(n)
    ok = (i != j) | (pool.qty[i] >= 2 * units)
    i, j = i[ok], j[ok]
    v, lo, hi, r = _combine(pool.kind, recip, (pool.v[i], pool.lo[i], pool.hi[i], pool.r[i]),
                            (pool.v[j], pool.lo[j], pool.hi[j], pool.r[j]))
    series_caps = pool.kind == "capacitor" and recip
    pol_series = (pool.pol[i] | pool.pol[j]) & series_caps
    order = np.argsort(v, kind="stable")
    return _Pairs(i[order], j[order], v[order], lo[order], hi[order], r[order], pol_series[order])


# --- assembling tables ------------------------------------------------------------------------


def _counts(pos: np.ndarray, pool: _Pool) -> tuple[np.ndarray, np.ndarray]:
    """(n, 3) pool positions (-1 pad) -> distinct StockLine indices and counts, both (n, 3)."""
    n = pos.shape[0]
    s = np.sort(np.where(pos < 0, np.iinfo(np.int64).max, pos), axis=1)
    members = np.full((n, 3), -1, dtype=np.int64)
    counts = np.zeros((n, 3), dtype=np.int64)
    valid = s != np.iinfo(np.int64).max
    first = valid.copy()
    first[:, 1:] &= s[:, 1:] != s[:, :-1]
    # slot k of the distinct list = number of firsts before and including k, minus one
    slot = np.cumsum(first, axis=1) - 1
    rows = np.repeat(np.arange(n)[:, None], 3, axis=1)
    members[rows[first], slot[first]] = pool.idx[s[first]]
    np.add.at(counts, (rows[valid], slot[valid]), 1)
    return members, counts


def _table(pool: _Pool, pos: np.ndarray, v, lo, hi, r, form, pol_series) -> EquivalentTable:
    members, counts = _counts(pos, pool)
    order = np.where(pos >= 0, pool.idx[np.maximum(pos, 0)], -1)
    polarized = np.any(np.where(pos >= 0, pool.pol[np.maximum(pos, 0)], False), axis=1)
    part_count = (pos >= 0).sum(axis=1).astype(np.int64)
    return EquivalentTable(pool.kind, np.asarray(v, float), np.asarray(lo, float), np.asarray(hi, float),
                           np.asarray(r, float), part_count, np.asarray(form, np.int64), order, members, counts,
                           polarized, np.asarray(pol_series, bool), lines=pool.lines)


def _dedupe(t: EquivalentTable) -> EquivalentTable:
    """Drop repeats: the same form from the same lines in the same counts (e.g. a + (b ∥ c) and
    b + (a ∥ c) when a and b are two lines of one value), keeping the first."""
    if len(t) < 2:
        return t
    # one exact integer key for (form, lines with counts): the (up to) three parts as sorted line
    # indices with repeats, 20 bits each, and the form in the top bits
    flat = np.where(t.counts[:, :, None] > np.arange(3)[None, None, :], t.members[:, :, None], -1).reshape(len(t), 9)
    flat = np.sort(flat, axis=1)[:, -3:]  # the (up to) three parts, as line indices with repeats
    if flat.max(initial=0) >= (1 << 20) - 1:
        raise ValueError("more than a million stock lines")
    slot = np.where(flat < 0, (1 << 20) - 1, flat).astype(np.int64)
    key = (t.form.astype(np.int64) << 60) | (slot[:, 0] << 40) | (slot[:, 1] << 20) | slot[:, 2]
    # the same lines combined the same way give bit-identical floats, so the bits are a fair key
    bits = np.ascontiguousarray(t.value, np.float64).view(np.int64)
    order = np.lexsort((np.arange(len(t)), bits, key))
    ks, bs = key[order], bits[order]
    first = np.ones(len(t), bool)
    first[1:] = (ks[1:] != ks[:-1]) | (bs[1:] != bs[:-1])
    if first.all():
        return t
    return t.take(np.sort(order[first]))


def _concat(kind: str, tables: list[EquivalentTable], lines: dict[int, StockLine]) -> EquivalentTable:
    if not tables:
        e = np.zeros(0)
        z = np.zeros((0, 3), dtype=np.int64)
        return EquivalentTable(kind, e, e, e, e, e.astype(np.int64), e.astype(np.int64), z, z, z,
                               e.astype(bool), e.astype(bool), lines=lines)
    return EquivalentTable(kind, *(np.concatenate([getattr(t, n) for t in tables]) for n in _ARRAYS), lines=lines)


def _singles(pool: _Pool, keep: np.ndarray | None = None) -> EquivalentTable:
    p = np.arange(len(pool.v)) if keep is None else np.flatnonzero(keep)
    pos = np.full((len(p), 3), -1, dtype=np.int64)
    pos[:, 0] = p
    return _table(pool, pos, pool.v[p], pool.lo[p], pool.hi[p], pool.r[p], np.zeros(len(p), np.int64),
                  np.zeros(len(p), bool))


def _pair_table(pool: _Pool, pr: _Pairs, recip: bool, sel=slice(None)) -> EquivalentTable:
    i, j = pr.i[sel], pr.j[sel]
    pos = np.stack([i, j, np.full_like(i, -1)], axis=1)
    form = _form_of(pool.kind, pair_recip=recip)
    return _table(pool, pos, pr.v[sel], pr.lo[sel], pr.hi[sel], pr.r[sel], np.full(len(i), form), pr.pol_series[sel])


def _form_of(kind: str, pair_recip: bool, outer_recip: bool | None = None) -> int:
    """Form code of a pair (outer None) or of 'a <outer> (pair)'."""
    series_is_sum = kind == "resistor"
    if outer_recip is None or outer_recip == pair_recip:
        return PARALLEL if pair_recip == series_is_sum else SERIES
    outer_is_series = (not outer_recip) == series_is_sum
    return SERIES_PARALLEL if outer_is_series else PARALLEL_SERIES


def _triples(pool: _Pool, pr: _Pairs, pair_recip: bool, outer_recip: bool, a: np.ndarray, k: np.ndarray,
             units: int) -> EquivalentTable:
    """Triples 'pool[a] <outer> pairs[k]' for matching index arrays a, k (already in range)."""
    v, lo, hi, r = _combine(pool.kind, outer_recip, (pool.v[a], pool.lo[a], pool.hi[a], pool.r[a]),
                            (pr.v[k], pr.lo[k], pr.hi[k], pr.r[k]))
    pos = np.stack([a, pr.i[k], pr.j[k]], axis=1)
    series_caps_outer = pool.kind == "capacitor" and outer_recip
    pol_series = pr.pol_series[k] | (series_caps_outer & (pool.pol[a] | pool.pol[pr.i[k]] | pool.pol[pr.j[k]]))
    t = _table(pool, pos, v, lo, hi, r, np.full(len(a), _form_of(pool.kind, pair_recip, outer_recip)), pol_series)
    # quantity: a line used c times in one equivalent must hold c * units
    need = t.counts * units
    have = np.where(t.members >= 0, _qty_of(pool, t.members), np.iinfo(np.int64).max)
    ok = np.all(need <= have, axis=1)
    if pair_recip == outer_recip:  # all-series or all-parallel: keep one ordering, a <= b <= c
        ok &= a <= pr.i[k]
    return t.take(np.flatnonzero(ok))


def _qty_of(pool: _Pool, members: np.ndarray) -> np.ndarray:
    """Quantity on hand of each StockLine.index in ``members`` (0 for the -1 padding)."""
    size = int(pool.idx.max()) + 2 if len(pool.idx) else 1
    lookup = np.zeros(size, dtype=np.int64)
    lookup[pool.idx] = pool.qty
    return lookup[np.where(members >= 0, members, size - 1)]


def _inverse(outer_recip: bool, a, target):
    """The pair value p with 'a <outer> p == target' (monotonic in p); nan where none exists."""
    if not outer_recip:
        return target - a
    with np.errstate(divide="ignore", invalid="ignore"):
        inv = 1.0 / target - 1.0 / a
        return np.where(inv > 0, 1.0 / inv, np.inf)


# --- public entry points ---------------------------------------------------------------------


class EquivalentIndex:
    """The single parts and the sorted pair tables of one kind, built once and searched many times.

    Building the pairs is the costly step (all i <= j of the pool); a parts list or a design
    search asks many windows of the same drawer, so they keep one index per kind and units.
    """

    def __init__(self, lines: Sequence[StockLine], units: int = 1):
        self.units = units
        self.pool = _pool(lines, units)
        self._pairs: dict[bool, _Pairs] = {}
        self._space = None  # triples.TripleSpace, made when first asked

    @property
    def kind(self) -> str:
        return self.pool.kind

    def pairs(self, recip: bool) -> _Pairs:
        if recip not in self._pairs:
            self._pairs[recip] = _pairs(self.pool, recip, self.units)
        return self._pairs[recip]

    def window(self, lo: float, hi: float, *, max_parts: int = 2, min_rating: float | None = None,
               allow_polarized_series: bool = True) -> EquivalentTable:
        """Every equivalent whose nominal value lies in [lo, hi]."""
        pool = self.pool
        tables = []
        if len(pool.v):
            tables.append(_singles(pool, (pool.v >= lo) & (pool.v <= hi)))
        if max_parts >= 2 and len(pool.v):
            for recip in (False, True):
                pr = self.pairs(recip)
                first, last = np.searchsorted(pr.v, lo, side="left"), np.searchsorted(pr.v, hi, side="right")
                tables.append(_pair_table(pool, pr, recip, slice(first, last)))
                if max_parts >= 3:
                    for outer_recip in (False, True):
                        ta, tk = _window_pairs(pool, pr, outer_recip, lo, hi)
                        tables.append(_triples(pool, pr, recip, outer_recip, ta, tk, self.units))
        table = _dedupe(_concat(pool.kind, tables, pool.lines))
        return _filter(table, min_rating, allow_polarized_series, None)

    def window_near(self, lo: float, hi: float, target: float, k: int, *, max_parts: int = 2,
                    min_rating: float | None = None, allow_polarized_series: bool = True
                    ) -> tuple[EquivalentTable, bool]:
        """The equivalents in [lo, hi] that can rank among the k nearest ``target`` in their part
        count: every single part in it, the pairs within k places of the target on each sorted pair
        table, and the triples of the narrowest window around the target holding about 2k
        (``triples.TripleSpace``); and whether [lo, hi] holds more pairs or triples than these.
        Memory stays in proportion to k, whatever the window."""
        pool = self.pool
        tables, more = [], False
        if not len(pool.v):
            return _concat(pool.kind, [], pool.lines), False
        tables.append(_singles(pool, (pool.v >= lo) & (pool.v <= hi)))
        if max_parts >= 2:
            for recip in (False, True):
                pr = self.pairs(recip)
                first, last = np.searchsorted(pr.v, lo, side="left"), np.searchsorted(pr.v, hi, side="right")
                centre = int(np.searchsorted(pr.v, target))
                a, b = max(first, centre - k), min(last, centre + k)
                more |= a > first or b < last
                tables.append(_pair_table(pool, pr, recip, slice(a, max(a, b))))
        if max_parts >= 3:
            from .triples import TripleSpace

            if self._space is None:
                self._space = TripleSpace(pool, self.units, {r: self.pairs(r) for r in (False, True)})
            space = self._space
            w_lo, w_hi = space.around(target, 2 * k, lo, hi)
            more |= w_lo > lo or w_hi < hi
            blk = space.build(w_lo, w_hi)
            tables.append(_table(pool, np.asarray(blk.pos, np.int64), blk.v, blk.vlo, blk.vhi, blk.rating,
                                 blk.form.astype(np.int64), blk.pol_series))
        table = _dedupe(_concat(pool.kind, tables, pool.lines))
        return _filter(table, min_rating, allow_polarized_series, None), more

    def nearest(self, target: float, k: int, *, max_parts: int = 2, min_rating: float | None = None,
                allow_polarized_series: bool = True,
                exclude_window: tuple[float, float] | None = None) -> EquivalentTable:
        """The k equivalents with the smallest |relative error| to ``target`` (ties: tighter tolerance).

        Exact without enumerating triples: for each single part and triple form the error grows
        monotonically away from the pair value that would hit the target, so neighbours on the
        sorted pair array are examined outward until the k-th best found beats every unexamined
        candidate.  ``exclude_window`` leaves out equivalents whose value lies in that window.
        """
        pool = self.pool
        if not len(pool.v):
            return _concat(pool.kind, [], pool.lines)
        opts = (min_rating, allow_polarized_series, exclude_window)
        singles = _best(_filter(_singles(pool), *opts), target, k)
        recips = (False, True) if max_parts >= 2 else ()
        longest = max([len(self.pairs(r).v) for r in recips] + [1])
        # the k best are spread over the pairs and, for triples, over len(pool) single parts and
        # four forms: start narrow and widen until the k-th best beats every unexamined candidate
        pair_span = 2 * k
        span = max(4, -(-2 * k // len(pool.v)))
        while True:
            found = [singles]
            bound = np.inf
            for recip in recips:
                pr = self.pairs(recip)
                centre = int(np.searchsorted(pr.v, target))
                lo_i, hi_i = max(0, centre - pair_span), min(len(pr.v), centre + pair_span)
                found.append(_filter(_pair_table(pool, pr, recip, slice(lo_i, hi_i)), *opts))
                for edge in (lo_i - 1, hi_i):
                    if 0 <= edge < len(pr.v):
                        bound = min(bound, abs(pr.v[edge] / target - 1.0))
                if max_parts >= 3:
                    for outer_recip in (False, True):
                        t, b = _neighbour_triples(pool, pr, recip, outer_recip, target, span, self.units)
                        found.append(_filter(t, *opts))
                        bound = min(bound, b)
            best = _best(_dedupe(_concat(pool.kind, found, pool.lines)), target, k)
            kth = abs(best.value[-1] / target - 1.0) if len(best) == k else np.inf
            if kth <= bound or (span >= longest and pair_span >= longest) or not recips:
                return best
            span *= 4
            pair_span *= 4


def equivalents(lines: Sequence[StockLine], *, max_parts: int = 2, units: int = 1) -> EquivalentTable:
    """Every equivalent of one kind: singles, pairs, and (max_parts=3) every triple.

    Triples of a few hundred lines run to millions; prefer ``equivalents_in_window``.
    """
    return equivalents_in_window(lines, 0.0, np.inf, max_parts=max_parts, units=units)


def equivalents_in_window(lines: Sequence[StockLine], lo: float, hi: float, *, max_parts: int = 2,
                          units: int = 1, min_rating: float | None = None,
                          allow_polarized_series: bool = True) -> EquivalentTable:
    """Every equivalent whose nominal value lies in [lo, hi], feasible in stock for ``units`` builds."""
    return EquivalentIndex(lines, units).window(lo, hi, max_parts=max_parts, min_rating=min_rating,
                                                allow_polarized_series=allow_polarized_series)


def nearest(lines: Sequence[StockLine], target: float, k: int, *, max_parts: int = 2, units: int = 1,
            min_rating: float | None = None, allow_polarized_series: bool = True,
            exclude_window: tuple[float, float] | None = None) -> EquivalentTable:
    """The k equivalents nearest ``target``; see ``EquivalentIndex.nearest``."""
    return EquivalentIndex(lines, units).nearest(target, k, max_parts=max_parts, min_rating=min_rating,
                                                 allow_polarized_series=allow_polarized_series,
                                                 exclude_window=exclude_window)


def _window_pairs(pool: _Pool, pr: _Pairs, outer_recip: bool, lo: float, hi: float):
    """Index arrays (a, k) of all 'pool[a] <outer> pairs[k]' with nominal value in [lo, hi]."""
    a_all = np.arange(len(pool.v))
    plo = _inverse(outer_recip, pool.v, lo) if lo > 0 else np.zeros(len(pool.v))
    phi = _inverse(outer_recip, pool.v, hi) if np.isfinite(hi) else np.full(len(pool.v), np.inf)
    plo = np.nan_to_num(plo, nan=np.inf)
    phi = np.nan_to_num(phi, nan=np.inf)
    if not outer_recip:  # target - a: below zero means no pair is small enough
        phi = np.where(phi < 0, -1.0, phi)
    with np.errstate(over="ignore", invalid="ignore"):
        start = np.searchsorted(pr.v, plo * (1 - 1e-12), side="left")
        stop = np.searchsorted(pr.v, phi * (1 + 1e-12), side="right")
    stop = np.maximum(stop, start)
    return _ranges(a_all, start, stop)


def _ranges(owner: np.ndarray, start: np.ndarray, stop: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Flatten ranges [start_i, stop_i) into (owner_i repeated, k) index arrays."""
    lens = stop - start
    total = int(lens.sum())
    if total == 0:
        return np.zeros(0, np.int64), np.zeros(0, np.int64)
    a = np.repeat(owner, lens)
    offsets = np.repeat(stop - lens.cumsum(), lens)  # start_i - (cumulative before i)
    k = np.arange(total) + offsets
    return a.astype(np.int64), k.astype(np.int64)


def _neighbour_triples(pool, pr, recip, outer_recip, target, span, units):
    """Triples from the `span` pair values nearest the ideal on each side, per single part; and a lower
    bound on the relative error of every triple not examined."""
    ideal = _inverse(outer_recip, pool.v, target)
    ideal = np.nan_to_num(ideal, nan=np.inf)
    centre = np.searchsorted(pr.v, ideal)
    start = np.clip(centre - span, 0, len(pr.v))
    stop = np.clip(centre + span, 0, len(pr.v))
    a, kk = _ranges(np.arange(len(pool.v)), start, stop)
    comb = combine_recip if outer_recip else combine_sum
    bound = np.inf
    left = start - 1
    right = stop
    for edge in (left, right):
        ok = (edge >= 0) & (edge < len(pr.v))
        if ok.any():
            vals = comb(pool.v[ok], pr.v[edge[ok]])
            bound = min(bound, float(np.min(np.abs(vals / target - 1.0))))
    return _triples(pool, pr, recip, outer_recip, a, kk, units), bound


def _filter(t: EquivalentTable, min_rating, allow_polarized_series, exclude_window) -> EquivalentTable:
    keep = np.ones(len(t), bool)
    if min_rating is not None:
        keep &= t.rating >= min_rating * (1 - 1e-12)
    if not allow_polarized_series:
        keep &= ~t.polarized_series
    if exclude_window is not None:
        keep &= ~((t.value >= exclude_window[0]) & (t.value <= exclude_window[1]))
    return t.take(np.flatnonzero(keep))


def _best(t: EquivalentTable, target: float, k: int) -> EquivalentTable:
    err = np.abs(t.value / target - 1.0)
    order = np.lexsort((t.part_count, t.tolerance, err))
    return t.take(order[:k])

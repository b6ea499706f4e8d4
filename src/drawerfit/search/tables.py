"""Candidates per role: the drawer's equivalents of one part count, as compact sorted arrays.

A table holds, per equivalent, its nominal value, tolerance ends, rating and the pool positions
of its parts (``pos``); stock-line indices, counts and ``Equivalent`` objects are made on demand
for the few candidates that need them, so a table costs about 60 bytes an equivalent.  Tables are
built lazily, count by count, the first time a search asks (a search that finds its answer among
single parts never builds the pairs).  Triples of a large drawer run to a hundred million, so they
are never built whole: ``Candidates.tables(3)`` splits the value axis into windows of at most
``TRIPLE_BLOCK`` triples and builds each window when it is reached (the search treats each window
as a role table of its own; the windows are disjoint, so nothing is counted twice).

Stock lines without a rating or tolerance get the documented default (constants.py), so that no
part is trusted beyond what is known.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from functools import cached_property
from typing import Sequence

import numpy as np

from ..constants import POWER_RESISTOR, VOLTAGE_NONPOLAR, VOLTAGE_POLARIZED
from ..equivalents import (FORM_NAMES, EquivalentTable, _combine, _counts, _form_of, _inverse, _pairs, _pool, _Pool,
                           _table)
from ..parts import StockLine

__all__ = ["RoleTable", "Candidates", "build_tables", "with_default_ratings", "equivalent_key", "TRIPLE_BLOCK"]

TRIPLE_BLOCK = 500_000  # triples built at once (about 30 MB, 150 MB while building); larger windows are split
KEEP_WINDOWS = 2  # triple windows kept built at once, per drawer and kind


@dataclass(frozen=True, eq=False)
class RoleTable:
    """Equivalents of one kind and part count (or a value window of them), sorted by nominal value.

    ``lo``/``hi`` are value·(1 ∓ tolerance), the ends the worst case uses; ``tol`` the equivalent's
    largest relative deviation (symmetric, so that a saved design reproduces the same box).
    ``pos`` holds the pool positions of the parts in the arrangement's order (a, then b, c of the
    pair), -1 padded; ``form`` the arrangement (``equivalents.FORM_NAMES``).
    """

    kind: str
    count: int
    pool: _Pool
    pos: np.ndarray
    form: np.ndarray
    v: np.ndarray
    tol: np.ndarray
    lo: np.ndarray
    hi: np.ndarray
    rating: np.ndarray
    polarized: np.ndarray
    _keys: dict = field(default_factory=dict, repr=False, compare=False)

    def __len__(self) -> int:
        return int(self.v.shape[0])

    def parts(self, idx) -> tuple[np.ndarray, np.ndarray]:
        """(members, counts), both (k, 3): the distinct stock-line indices of candidates ``idx``
        and how many parts of each one candidate takes (-1 / 0 padded)."""
        return _counts(np.asarray(self.pos[np.asarray(idx)], np.int64), self.pool)

    @cached_property
    def members(self) -> np.ndarray:
        return self._all_parts[0]

    @cached_property
    def counts(self) -> np.ndarray:
        return self._all_parts[1]

    @cached_property
    def _all_parts(self):
        return self.parts(np.arange(len(self)))

    def _one(self, i: int) -> EquivalentTable:
        pos = np.asarray(self.pos[i:i + 1], np.int64)
        v = self.v[i:i + 1]
        return _table(self.pool, pos, v, self.lo[i:i + 1], self.hi[i:i + 1], self.rating[i:i + 1],
                      self.form[i:i + 1].astype(np.int64), np.zeros(1, bool))

    def equivalent(self, i: int):
        """The ``equivalents.Equivalent`` of candidate ``i``."""
        return self._one(int(i)).equivalent(0)

    def key(self, i: int) -> tuple:
        """A canonical, order-independent key for one candidate (the last tie-break)."""
        i = int(i)
        if i not in self._keys:
            pos = [int(p) for p in self.pos[i] if p >= 0]
            order = tuple(int(self.pool.idx[p]) for p in pos) + (-1,) * (3 - len(pos))
            m, c = self.parts([i])
            self._keys[i] = (len(pos), int(self.form[i]), order, tuple(int(x) for x in c[0]))
        return self._keys[i]

    def take(self, idx) -> "RoleTable":
        idx = np.asarray(idx)
        return RoleTable(self.kind, self.count, self.pool, self.pos[idx], self.form[idx], self.v[idx], self.tol[idx],
                         self.lo[idx], self.hi[idx], self.rating[idx], self.polarized[idx])


def equivalent_key(table: RoleTable, i: int) -> tuple:
    return table.key(i)


def _make(kind: str, count: int, pool: _Pool, pos, form, v, vlo, vhi, rating) -> RoleTable:
    order = np.lexsort((np.arange(len(v)), v))
    pos, form, v, vlo, vhi, rating = (np.asarray(a)[order] for a in (pos, form, v, vlo, vhi, rating))
    with np.errstate(divide="ignore", invalid="ignore"):
        tol = np.maximum(vhi / v - 1.0, 1.0 - vlo / v) if len(v) else np.zeros(0)
    pos = pos.astype(np.int32)
    pol = np.any(np.where(pos >= 0, pool.pol[np.maximum(pos, 0)], False), axis=1) if len(v) else np.zeros(0, bool)
    return RoleTable(kind, count, pool, pos, form.astype(np.int8), v, tol, v * (1 - tol), v * (1 + tol),
                     np.asarray(rating, float), pol)


def _singles(pool: _Pool, kind: str) -> RoleTable:
    n = len(pool.v)
    pos = np.full((n, 3), -1, np.int64)
    pos[:, 0] = np.arange(n)
    return _make(kind, 1, pool, pos, np.zeros(n, np.int64), pool.v, pool.lo, pool.hi, pool.r)


def _pair_table(pool: _Pool, kind: str, units: int) -> RoleTable:
    parts = []
    for recip in (False, True):
        pr = _pairs(pool, recip, units)
        keep = ~pr.pol_series  # polarized capacitors in series are left out
        pos = np.stack([pr.i[keep], pr.j[keep], np.full(int(keep.sum()), -1)], axis=1)
        parts.append((pos, np.full(len(pos), _form_of(kind, pair_recip=recip)), pr.v[keep], pr.lo[keep],
                      pr.hi[keep], pr.r[keep]))
    cat = [np.concatenate([p[k] for p in parts]) for k in range(6)]
    return _make(kind, 2, pool, *cat)


class _TripleSpace:
    """Every triple 'single <outer> pair' of one pool, counted and built by value window."""

    def __init__(self, pool: _Pool, kind: str, units: int):
        self.pool, self.kind, self.units = pool, kind, units
        self.pairs = {recip: _pairs(pool, recip, units) for recip in (False, True)}
        self.built = 0  # triples built so far (a measure of the work)
        self.live: list = []  # the windows now built, oldest first

    def _spans(self, pair_recip: bool, outer_recip: bool, lo: float, hi: float):
        pool, pr = self.pool, self.pairs[pair_recip]
        plo = _inverse(outer_recip, pool.v, lo) if lo > 0 else np.zeros(len(pool.v))
        phi = _inverse(outer_recip, pool.v, hi) if np.isfinite(hi) else np.full(len(pool.v), np.inf)
        plo, phi = np.nan_to_num(plo, nan=np.inf), np.nan_to_num(phi, nan=np.inf)
        if not outer_recip:
            phi = np.where(phi < 0, -1.0, phi)
        with np.errstate(over="ignore", invalid="ignore"):
            start = np.searchsorted(pr.v, plo * (1 - 1e-12), side="left")
            stop = np.searchsorted(pr.v, phi * (1 + 1e-12), side="right")
        return start, np.maximum(stop, start)

    def count(self, lo: float, hi: float) -> int:
        """An upper bound on the triples with nominal value in [lo, hi] (before the quantity and
        ordering filters)."""
        total = 0
        for pair_recip in (False, True):
            for outer_recip in (False, True):
                start, stop = self._spans(pair_recip, outer_recip, lo, hi)
                total += int((stop - start).sum())
        return total

    def windows(self, lo: float = 0.0, hi: float = np.inf, block: int = TRIPLE_BLOCK) -> list[tuple[float, float]]:
        """Half-open value windows covering [lo, hi) with at most about ``block`` triples each."""
        pool = self.pool
        if not len(pool.v):
            return []
        vmax = 3.0 * float(pool.v.max()) * (1 + 1e-9)
        vmin = float(pool.v.min()) / 3.0 * (1 - 1e-9)
        lo, hi = max(lo, vmin), min(hi, vmax)
        if not lo < hi:
            return []
        if self.count(lo, hi) <= block:
            return [(lo, hi)]
        out = []
        a = lo
        while a < hi:
            # grow the window geometrically, then bisect (in log value) to about ``block`` triples
            b_lo, b_hi = a, hi
            if self.count(a, hi) <= block:
                out.append((a, hi))
                break
            for _ in range(40):
                mid = float(np.sqrt(b_lo * b_hi)) if b_lo > 0 else 0.5 * (b_lo + b_hi)
                if self.count(a, mid) <= block:
                    b_lo = mid
                else:
                    b_hi = mid
                if b_hi / max(b_lo, 1e-300) < 1 + 1e-9:
                    break
            b = b_lo if b_lo > a else b_hi  # a single value may hold more than a block: take it whole
            out.append((a, b))
            a = b
        return out

    def build(self, lo: float, hi: float, last: bool) -> RoleTable:
        """The triples with nominal value in [lo, hi) ([lo, hi] when ``last``), sorted, deduplicated."""
        pool, units = self.pool, self.units
        blocks = []
        for pair_recip in (False, True):
            pr = self.pairs[pair_recip]
            for outer_recip in (False, True):
                start, stop = self._spans(pair_recip, outer_recip, lo, hi)
                from ..equivalents import _ranges

                a, k = _ranges(np.arange(len(pool.v)), start, stop)
                if not len(a):
                    continue
                v, vlo, vhi, r = _combine(pool.kind, outer_recip, (pool.v[a], pool.lo[a], pool.hi[a], pool.r[a]),
                                          (pr.v[k], pr.lo[k], pr.hi[k], pr.r[k]))
                pos = np.stack([a, pr.i[k], pr.j[k]], axis=1)
                series_caps_outer = pool.kind == "capacitor" and outer_recip
                pol_series = pr.pol_series[k] | (series_caps_outer & (pool.pol[a] | pool.pol[pr.i[k]]
                                                                       | pool.pol[pr.j[k]]))
                ok = ~pol_series & (v >= lo) & ((v <= hi) if last else (v < hi))
                # a line used c times in one equivalent must hold c * units
                s = np.sort(pos, axis=1)
                same01, same12 = s[:, 0] == s[:, 1], s[:, 1] == s[:, 2]
                uses = np.stack([1 + same01 + (same01 & same12), 1 + same12, np.ones(len(s), np.int64)], axis=1)
                ok &= np.all(pool.qty[s] >= uses * units, axis=1)
                if pair_recip == outer_recip:  # all-series or all-parallel: keep one ordering, a <= b <= c
                    ok &= a <= pr.i[k]
                sel = np.flatnonzero(ok)
                form = _form_of(self.kind, pair_recip, outer_recip)
                blocks.append((pos[sel], np.full(len(sel), form), v[sel], vlo[sel], vhi[sel], r[sel]))
        if not blocks:
            z = np.zeros(0)
            return _make(self.kind, 3, pool, np.zeros((0, 3), np.int64), z.astype(np.int64), z, z, z, z)
        pos, form, v, vlo, vhi, r = (np.concatenate([b[i] for b in blocks]) for i in range(6))
        # drop repeats: the same form from the same lines in the same counts (a + (b ∥ c) and
        # b + (a ∥ c) when a and b are two lines of one value), keeping the first
        key = np.sort(pos, axis=1).astype(np.int64)
        bits = np.ascontiguousarray(v, np.float64).view(np.int64)
        order = np.lexsort((np.arange(len(v)), bits, key[:, 2], key[:, 1], key[:, 0], form))
        first = np.ones(len(v), bool)
        same = ((form[order][1:] == form[order][:-1]) & np.all(key[order][1:] == key[order][:-1], axis=1)
                & (bits[order][1:] == bits[order][:-1]))
        first[1:] = ~same
        keep = np.sort(order[first])
        return _make(self.kind, 3, pool, pos[keep], form[keep], v[keep], vlo[keep], vhi[keep], r[keep])


class Candidates:
    """The equivalents of one kind that a search may use, by part count, built when first asked.

    ``tables(count)`` is a list of role tables: one for singles and pairs, and for triples one per
    value window (``TRIPLE_BLOCK``), each built when the search reaches it.  ``units``: a
    candidate must be drawable for that many builds from the lines as given (a pair of one line
    needs two parts per unit).
    """

    def __init__(self, lines: Sequence[StockLine], kind: str, max_parts: int, units: int):
        usable = [ln for ln in lines if ln.kind == kind and ln.value is not None and ln.value > 0]
        self.kind = kind
        self.max_parts = max_parts
        self.units = units
        self.pool = _pool(usable, units) if usable else None
        self._tables: dict[int, list] = {}
        self._triples: _TripleSpace | None = None

    @property
    def available(self) -> tuple[int, ...]:
        """The part counts that have any candidate (without building the tables)."""
        if self.pool is None or not len(self.pool.v):
            return ()
        out = [1]
        if self.max_parts >= 2 and (len(self.pool.v) > 1 or self.pool.qty.max() >= 2 * self.units):
            out.append(2)
        if self.max_parts >= 3 and 2 in out:
            out.append(3)
        return tuple(out)

    def triple_count(self) -> int:
        """About how many triples there are (counted, not built)."""
        if 3 not in self.available:
            return 0
        if self._triples is None:
            self._triples = _TripleSpace(self.pool, self.kind, self.units)
        return self._triples.count(0.0, np.inf)

    def tables(self, count: int) -> list:
        """The role tables of ``count`` parts: RoleTables, or for triples lazy ``TripleWindow``s."""
        if count not in self.available:
            return []
        if count not in self._tables:
            if count == 1:
                self._tables[1] = [_singles(self.pool, self.kind)]
            elif count == 2:
                self._tables[2] = [_pair_table(self.pool, self.kind, self.units)]
            else:
                if self._triples is None:
                    self._triples = _TripleSpace(self.pool, self.kind, self.units)
                space = self._triples
                wins = space.windows()
                self._tables[3] = [TripleWindow(space, lo, hi, k == len(wins) - 1) for k, (lo, hi) in enumerate(wins)]
        return self._tables[count]

    def one(self, count: int) -> RoleTable | None:
        """All candidates of ``count`` parts as one table (built whole: for small drawers, tests and the
        naive enumeration)."""
        ts = self.tables(count)
        if not ts:
            return None
        if len(ts) > 1 or isinstance(ts[0], TripleWindow):
            # whole: built here without the window cache (small drawers, tests, the naive enumeration)
            ts = [t.space.build(t.lo, t.hi, t.last) if isinstance(t, TripleWindow) else t for t in ts]
        if len(ts) == 1:
            return ts[0]
        return _make(self.kind, count, self.pool, np.concatenate([t.pos for t in ts]),
                     np.concatenate([t.form for t in ts]), np.concatenate([t.v for t in ts]),
                     np.concatenate([t.lo for t in ts]), np.concatenate([t.hi for t in ts]),
                     np.concatenate([t.rating for t in ts]))

    # mapping-like access {count: table} for code that wants one table per count
    def __contains__(self, count) -> bool:
        return count in self.available

    def __getitem__(self, count: int) -> RoleTable:
        t = self.one(count)
        if t is None:
            raise KeyError(count)
        return t

    def keys(self):
        return self.available

    def __iter__(self):
        return iter(self.available)

    def items(self):
        return [(c, self[c]) for c in self.available]

    def get(self, count, default=None):
        return self.one(count) if count in self.available else default


class TripleWindow:
    """One value window of the triples, built on first use; at most ``KEEP_WINDOWS`` windows of a
    space stay built (the least recently built is dropped and built again if asked for)."""

    def __init__(self, space: _TripleSpace, lo: float, hi: float, last: bool):
        self.space, self.lo, self.hi, self.last = space, lo, hi, last
        self._t: RoleTable | None = None

    @property
    def built(self) -> bool:
        return self._t is not None

    @property
    def table(self) -> RoleTable:
        if self._t is None:
            self._t = self.space.build(self.lo, self.hi, self.last)
            self.space.built += len(self._t)
            live = self.space.live
            live.append(self)
            while len(live) > KEEP_WINDOWS:
                live.pop(0).release()
        return self._t

    def release(self) -> None:
        self._t = None


def with_default_ratings(lines: Sequence[StockLine]) -> tuple[list[StockLine], list[str]]:
    """Lines with a missing rating or tolerance filled by the documented defaults, and notes saying so."""
    from ..constants import TOL_ELECTROLYTIC, TOL_RESISTOR, TOL_CERAMIC

    out, notes = [], []
    for ln in lines:
        changes = {}
        if ln.kind == "resistor" and ln.power is None:
            changes["power"] = POWER_RESISTOR
        if ln.kind == "capacitor" and ln.voltage is None:
            changes["voltage"] = VOLTAGE_POLARIZED if ln.polarized else VOLTAGE_NONPOLAR
        if ln.kind in ("resistor", "capacitor") and ln.tolerance is None:
            changes["tolerance"] = (TOL_RESISTOR if ln.kind == "resistor"
                                    else TOL_ELECTROLYTIC if ln.polarized else TOL_CERAMIC)
        if changes:
            notes.append(f"{ln.source.where()}: no {', '.join(changes)} given; design assumes "
                         + ", ".join(f"{k}={v:g}" for k, v in changes.items()))
            ln = replace(ln, **changes)
        out.append(ln)
    return out, notes


def build_tables(lines: Sequence[StockLine], kind: str, max_parts: int, units: int) -> Candidates:
    """The candidates of one kind, by part count (built lazily); polarized capacitors in series are
    left out."""
    return Candidates(lines, kind, max_parts, units)


__all__ += ["TripleWindow", "FORM_NAMES"]

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
from ..equivalents import FORM_NAMES, EquivalentTable, _counts, _form_of, _pairs, _pool, _Pool, _table
from ..triples import TripleSpace
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


def _triple_table(space: TripleSpace, lo: float, hi: float, last: bool) -> RoleTable:
    """The triples of one value window as a role table (polarized capacitors in series left out)."""
    blk = space.build(lo, hi, last)
    blk = blk.take(np.flatnonzero(~blk.pol_series))
    return _make(space.kind, 3, space.pool, blk.pos, blk.form, blk.v, blk.vlo, blk.vhi, blk.rating)


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
        self._triples: TripleSpace | None = None

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
            self._triples = TripleSpace(self.pool, self.units)
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
                    self._triples = TripleSpace(self.pool, self.units)
                space = self._triples
                wins = space.windows(block=TRIPLE_BLOCK)
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
            ts = [_triple_table(t.space, t.lo, t.hi, t.last) if isinstance(t, TripleWindow) else t for t in ts]
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

    def __init__(self, space: TripleSpace, lo: float, hi: float, last: bool):
        self.space, self.lo, self.hi, self.last = space, lo, hi, last
        self._t: RoleTable | None = None

    @property
    def built(self) -> bool:
        return self._t is not None

    @property
    def table(self) -> RoleTable:
        if self._t is None:
            self._t = _triple_table(self.space, self.lo, self.hi, self.last)
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

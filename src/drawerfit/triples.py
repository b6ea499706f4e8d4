"""Triples of a drawer's parts ('single <outer> pair'), counted and built by value window.

A drawer of n lines has about n³/6 triples in each of four forms: a hundred million for a few
hundred lines, so they are never built whole.  Every triple combines a single part a with a pair p
through a monotonic combination (sum or reciprocal sum), so for a window [lo, hi] of nominal
values and each single a, the pairs that qualify form one range of the sorted pair table, found
by binary search: counting a window costs 4·n binary searches, building it is in proportion to
what it holds.  Used by the design search (windows as role tables), by ``kit`` (the triples of
each list line's window) and by ``match``.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .equivalents import _combine, _form_of, _inverse, _pairs, _Pairs, _Pool, _ranges

__all__ = ["TripleSpace", "TripleBlock"]


@dataclass(frozen=True, eq=False)
class TripleBlock:
    """Triples as parallel arrays, sorted by nominal value: pool positions (a, then the pair's two)
    in ``pos``, the form code, value and its tolerance ends, rating, and whether polarized
    capacitors end up in series."""

    pos: np.ndarray
    form: np.ndarray
    v: np.ndarray
    vlo: np.ndarray
    vhi: np.ndarray
    rating: np.ndarray
    pol_series: np.ndarray

    def __len__(self) -> int:
        return len(self.v)

    def take(self, idx) -> "TripleBlock":
        return TripleBlock(*(getattr(self, f)[idx] for f in ("pos", "form", "v", "vlo", "vhi", "rating",
                                                              "pol_series")))


class TripleSpace:
    """Every triple of one pool, for ``units`` builds (a line used c times must hold c·units)."""

    def __init__(self, pool: _Pool, units: int, pairs: dict[bool, _Pairs] | None = None):
        self.pool, self.kind, self.units = pool, pool.kind, units
        self.pairs = pairs if pairs is not None else {recip: _pairs(pool, recip, units) for recip in (False, True)}
        self.built = 0  # triples built so far (a measure of the work)
        self.live: list = []  # windows built and kept by their owner, oldest first

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
        """An upper bound on the triples with nominal value in [lo, hi] (before the quantity,
        ordering and repeat filters)."""
        total = 0
        for pair_recip in (False, True):
            for outer_recip in (False, True):
                start, stop = self._spans(pair_recip, outer_recip, lo, hi)
                total += int((stop - start).sum())
        return total

    def windows(self, lo: float = 0.0, hi: float = np.inf, block: int = 500_000) -> list[tuple[float, float]]:
        """Half-open value windows covering [lo, hi) with at most about ``block`` triples each."""
        pool = self.pool
        if not len(pool.v):
            return []
        vmax = 3.0 * float(pool.v.max()) * (1 + 1e-9)
        vmin = float(pool.v.min()) / 3.0 * (1 - 1e-9)
        lo, hi = max(lo, vmin), min(hi, vmax)
        if not lo < hi:
            return []
        out = []
        a = lo
        while a < hi:
            if self.count(a, hi) <= block:
                out.append((a, hi))
                break
            b_lo, b_hi = a, hi  # bisect (in log value) to about ``block`` triples
            for _ in range(60):
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

    def around(self, target: float, k: int, lo: float = 0.0, hi: float = np.inf) -> tuple[float, float]:
        """The narrowest window [target − δ, target + δ] (within [lo, hi]) counted to hold at least
        ``k`` triples, or [lo, hi] when that holds fewer."""
        if self.count(lo, hi) <= k:
            return lo, hi
        d_lo, d_hi = 0.0, max(target - lo, hi - target) if np.isfinite(hi) else target
        while self.count(max(lo, target - d_hi), min(hi, target + d_hi)) < k:
            d_hi *= 2.0
        for _ in range(60):
            mid = 0.5 * (d_lo + d_hi)
            if self.count(max(lo, target - mid), min(hi, target + mid)) >= k:
                d_hi = mid
            else:
                d_lo = mid
            if d_hi - d_lo <= 1e-9 * target:
                break
        return max(lo, target - d_hi), min(hi, target + d_hi)

    def build(self, lo: float, hi: float, last: bool = True) -> TripleBlock:
        """The triples with nominal value in [lo, hi) ([lo, hi] when ``last``), sorted by value, each
        combination of lines and form once."""
        pool, units = self.pool, self.units
        blocks = []
        for pair_recip in (False, True):
            pr = self.pairs[pair_recip]
            for outer_recip in (False, True):
                start, stop = self._spans(pair_recip, outer_recip, lo, hi)
                a, k = _ranges(np.arange(len(pool.v)), start, stop)
                if not len(a):
                    continue
                v, vlo, vhi, r = _combine(pool.kind, outer_recip, (pool.v[a], pool.lo[a], pool.hi[a], pool.r[a]),
                                          (pr.v[k], pr.lo[k], pr.hi[k], pr.r[k]))
                pos = np.stack([a, pr.i[k], pr.j[k]], axis=1)
                series_caps_outer = pool.kind == "capacitor" and outer_recip
                pol_series = pr.pol_series[k] | (series_caps_outer & (pool.pol[a] | pool.pol[pr.i[k]]
                                                                       | pool.pol[pr.j[k]]))
                ok = (v >= lo) & ((v <= hi) if last else (v < hi))
                # a line used c times in one equivalent must hold c * units
                s = np.sort(pos, axis=1)
                same01, same12 = s[:, 0] == s[:, 1], s[:, 1] == s[:, 2]
                uses = np.stack([1 + same01 + (same01 & same12), 1 + same12, np.ones(len(s), np.int64)], axis=1)
                ok &= np.all(pool.qty[s] >= uses * units, axis=1)
                if pair_recip == outer_recip:  # all-series or all-parallel: keep one ordering, a <= b <= c
                    ok &= a <= pr.i[k]
                sel = np.flatnonzero(ok)
                form = _form_of(self.kind, pair_recip, outer_recip)
                blocks.append((pos[sel], np.full(len(sel), form), v[sel], vlo[sel], vhi[sel], r[sel], pol_series[sel]))
        if not blocks:
            z = np.zeros(0)
            return TripleBlock(np.zeros((0, 3), np.int64), z.astype(np.int64), z, z, z, z, z.astype(bool))
        pos, form, v, vlo, vhi, r, pol = (np.concatenate([b[i] for b in blocks]) for i in range(7))
        # drop repeats: the same form from the same lines in the same counts (a + (b ∥ c) and
        # b + (a ∥ c) when a and b are two lines of one value), keeping the first
        key = np.sort(pos, axis=1).astype(np.int64)
        bits = np.ascontiguousarray(v, np.float64).view(np.int64)
        order = np.lexsort((np.arange(len(v)), bits, key[:, 2], key[:, 1], key[:, 0], form))
        first = np.ones(len(v), bool)
        first[1:] = ~((form[order][1:] == form[order][:-1]) & np.all(key[order][1:] == key[order][:-1], axis=1)
                      & (bits[order][1:] == bits[order][:-1]))
        keep = order[first]
        keep = keep[np.lexsort((keep, v[keep]))]  # by value, ties in the order built
        self.built += len(keep)
        return TripleBlock(pos[keep], form[keep], v[keep], vlo[keep], vhi[keep], r[keep], pol[keep])

"""Stock shared across roles and units: which drawer lines may stand in for which, and who gives what.

A design names, for every role, the stock lines its parts are judged by (value, tolerance, rating).
Any part of the same kind, value, polarization and dielectric with no wider tolerance and no lower
rating keeps every worst-case figure of the design (the box only shrinks, the derated limits only
grow), so it may stand in for it: line ``a`` *covers* line ``b``.  Covering is a partial order
(tolerance and rating both matter), so drawing the parts of a design for N units from the drawer is
a transportation problem: each needed line ``b`` wants ``d_b`` parts from the lines that cover it,
each line gives at most its quantity.

Feasibility, vectorised over many designs (``usage``): for every needed line ``b`` the parts wanted by
the needs that only lines covering ``b`` can serve (the needs ``a`` with ``a`` covering ``b``) must not
exceed the parts of the lines covering ``b``.  These are Hall's conditions for the principal
up-sets; when the needed lines of each class form a chain (any two comparable), every up-set of
needs is principal and the conditions are also sufficient (Gale's supply-demand theorem).  When two
needed lines of one value are incomparable (say 1 % at 0.25 W and 5 % at 1 W) the conditions are only
necessary, and the exact answer comes from the allocation itself (``allocate``, OR-Tools CP-SAT), which
also chooses the bins: first as few parts as possible drawn from better lines (better parts stay for
the designs that need them), then as few (bin, need) pairs as possible (fewer bins to open).

Lines that stand for parts to buy (shopping suggestions) are never pooled with the drawer.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from typing import Iterable, Mapping, Sequence

import numpy as np

from ..parts import StockLine

__all__ = ["Pools", "covers_key", "need_of"]

REL = 1e-12  # tolerances and ratings equal to within rounding count as equal


def covers_key(line: StockLine) -> tuple | None:
    """Lines with equal keys are of one class (kind, value, polarization, dielectric); None: never pooled."""
    if line.kind not in ("resistor", "capacitor") or line.value is None:
        return None
    diel = (line.dielectric or "").strip().lower() if line.kind == "capacitor" else ""
    return (line.kind, float(line.value), bool(line.polarized), diel)


@dataclass(frozen=True, eq=False)
class Pools:
    """Covering between the drawer's lines, indexed by ``StockLine.index``.

    ``cover[a, b]``: line a may stand in for line b (reflexive); ``upq[b]``: parts of all lines
    covering b; ``rep[b]``: the first line identical to b in tolerance and rating (the one the
    search uses; identical lines are one candidate with their quantities pooled).
    """

    lines: tuple
    qty: np.ndarray
    cover: np.ndarray
    upq: np.ndarray
    cls: np.ndarray
    rep: np.ndarray

    @classmethod
    def build(cls, lines: Sequence[StockLine], exclude: Iterable[int] = ()) -> "Pools":
        """Covering for ``lines`` (tolerance and rating already defaulted); ``exclude``: never pooled."""
        size = max((ln.index for ln in lines), default=-1) + 1
        qty = np.zeros(size, np.int64)
        cover = np.zeros((size, size), bool)
        klass = np.full(size, -1, np.int64)
        by_index: list = [None] * size
        skip = set(exclude)
        groups: dict[tuple, list[StockLine]] = {}
        for ln in lines:
            qty[ln.index] = ln.qty
            cover[ln.index, ln.index] = True
            by_index[ln.index] = ln
            key = None if ln.index in skip else covers_key(ln)
            if key is not None:
                groups.setdefault(key, []).append(ln)
        for c, members in enumerate(groups.values()):
            idx = np.array([m.index for m in members], np.int64)
            klass[idx] = c
            if len(members) < 2:
                continue
            tol = np.array([m.tolerance if m.tolerance is not None else np.inf for m in members], float)
            rat = np.array([m.rating if m.rating is not None else 0.0 for m in members], float)
            ok = ((tol[:, None] <= tol[None, :] * (1 + REL) + REL)
                  & (rat[:, None] >= rat[None, :] * (1 - REL)))
            cover[np.ix_(idx, idx)] = ok
        upq = cover.T.astype(np.int64) @ qty if size else qty
        # the first line identical to each (cover both ways; reflexive, so argmax finds one)
        rep = np.argmax(cover & cover.T, axis=0).astype(np.int64) if size else np.zeros(0, np.int64)
        return cls(tuple(by_index), qty, cover, upq, klass, rep)

    def search_lines(self, lines: Sequence[StockLine]) -> list[StockLine]:
        """The lines the search builds candidates from: one per identical group, holding the parts
        of every line that covers it (so that a table's quantity filter is the pooled one)."""
        return [replace(ln, qty=int(self.upq[ln.index])) for ln in lines if self.rep[ln.index] == ln.index]

    # --- many designs at once -------------------------------------------------------------------

    def usage(self, parts: Sequence[tuple[np.ndarray, np.ndarray]], units: int):
        """(ok, exact, left) for designs whose roles use (members (n,3), counts (n,3)) lines.

        ``ok``: Hall's conditions hold for every needed line (necessary); ``exact``: and they are
        sufficient (chains, or every line holds its own need); ``left``: the fewest parts that could
        still stand in for any needed line after the build (the objective's "well stocked" term).
        """
        if not parts:
            return np.ones(0, bool), np.ones(0, bool), np.zeros(0)
        M = np.concatenate([m for m, _ in parts], axis=1)
        C = np.concatenate([c for _, c in parts], axis=1) * units
        n, k = M.shape
        used = M >= 0
        Mi = np.where(used, M, 0)
        both = used[:, :, None] & used[:, None, :]  # (n, i, j)
        cov = self.cover[Mi[:, :, None], Mi[:, None, :]] & both  # i covers j
        tot = np.einsum("nij,ni->nj", cov.astype(np.int64), C)
        own = np.einsum("nij,ni->nj", ((Mi[:, :, None] == Mi[:, None, :]) & both).astype(np.int64), C)
        rest = self.upq[Mi] - tot
        ok = np.all(~used | (rest >= 0), axis=1)
        own_ok = np.all(~used | (own <= self.qty[Mi]), axis=1)
        cls = self.cls[Mi]
        same_cls = both & (cls[:, :, None] == cls[:, None, :]) & (cls[:, :, None] >= 0)
        comparable = cov | np.swapaxes(cov, 1, 2)
        chain = ~np.any(same_cls & ~comparable, axis=(1, 2))
        left = np.min(np.where(used, rest, np.inf), axis=1) if k else np.full(n, np.inf)
        return ok, ok & (chain | own_ok), left

    # --- one design -----------------------------------------------------------------------------

    def allocate(self, need: Mapping[int, int]) -> dict[int, list[tuple[int, int]]] | None:
        """Who gives what: {needed line: [(giving line, parts), ...]} for ``need`` (parts per
        needed line, all units together), or None when the drawer cannot give it (CP-SAT, exact:
        ``allocation.bins.draw_bins``)."""
        from ..allocation.bins import draw_bins

        return draw_bins(self.cover, self.qty, need)

    def feasible(self, need: Mapping[int, int]) -> bool:
        return self.allocate(need) is not None

    def check(self, parts: Sequence[tuple[np.ndarray, np.ndarray]], units: int):
        """(ok, left) for many designs, exact: ``usage``, then the allocation for the few designs
        whose needed lines of one value are incomparable."""
        ok, exact, left = self.usage(parts, units)
        for row in np.flatnonzero(ok & ~exact):
            ok[row] = self.feasible(need_of(parts, int(row), units))
        return ok, left


def need_of(parts: Sequence[tuple[np.ndarray, np.ndarray]], row: int, units: int) -> dict[int, int]:
    """Parts per needed line (all units) of design ``row`` of (members, counts) arrays."""
    out: dict[int, int] = {}
    for m, c in parts:
        for j in range(m.shape[1]):
            b = int(m[row, j])
            if b >= 0:
                out[b] = out.get(b, 0) + int(c[row, j]) * units
    return out

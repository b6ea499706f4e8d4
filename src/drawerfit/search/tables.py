"""Candidates per role: every equivalent of the drawer with a given part count, as sorted arrays.

One table per (kind, part count), shared by all roles of that kind.  Stock lines without a rating
get the documented default (constants.py), so that no part is trusted beyond what is known.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from typing import Sequence

import numpy as np

from ..constants import POWER_RESISTOR, VOLTAGE_NONPOLAR, VOLTAGE_POLARIZED
from ..equivalents import EquivalentTable, equivalents
from ..parts import StockLine

__all__ = ["RoleTable", "build_tables", "with_default_ratings", "equivalent_key"]


@dataclass(frozen=True, eq=False)
class RoleTable:
    """Equivalents of one kind and part count, sorted by nominal value.

    ``lo``/``hi`` are value·(1 ∓ tolerance), the ends the worst case uses; ``tol`` the equivalent's
    largest relative deviation (symmetric, so that a saved design reproduces the same box).
    """

    kind: str
    count: int
    table: EquivalentTable
    v: np.ndarray
    tol: np.ndarray
    lo: np.ndarray
    hi: np.ndarray
    rating: np.ndarray
    polarized: np.ndarray
    members: np.ndarray
    counts: np.ndarray

    def __len__(self) -> int:
        return int(self.v.shape[0])


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


def build_tables(lines: Sequence[StockLine], kind: str, max_parts: int, units: int) -> dict[int, RoleTable]:
    """{part count: RoleTable} for one kind; polarized capacitors in series are left out."""
    usable = [ln for ln in lines if ln.kind == kind and ln.value is not None and ln.value > 0]
    full = equivalents(usable, max_parts=max_parts, units=units) if usable else None
    out: dict[int, RoleTable] = {}
    for count in range(1, max_parts + 1):
        if full is None or not len(full):
            idx = np.zeros(0, dtype=np.int64)
            t = full if full is not None else None
        else:
            keep = (full.part_count == count) & ~full.polarized_series
            idx = np.flatnonzero(keep)
            idx = idx[np.lexsort((idx, full.value[idx]))]
            t = full
        if t is None:
            continue
        sub = t.take(idx)
        tol = np.asarray(sub.tolerance, float) if len(sub) else np.zeros(0)
        v = np.asarray(sub.value, float)
        out[count] = RoleTable(kind, count, sub, v, tol, v * (1 - tol), v * (1 + tol),
                               np.asarray(sub.rating, float), np.asarray(sub.polarized, bool),
                               np.asarray(sub.members), np.asarray(sub.counts))
    return out


def equivalent_key(table: RoleTable, i: int) -> tuple:
    """A canonical, order-independent key for one equivalent (the last tie-break)."""
    t = table.table
    return (int(t.part_count[i]), int(t.form[i]), tuple(int(x) for x in t.order[i]),
            tuple(int(x) for x in t.counts[i]))

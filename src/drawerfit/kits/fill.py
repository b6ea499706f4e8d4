"""Fill a whole parts list from the drawer for N units at once, and say what to buy for the rest.

Each line's candidates (``kit.candidates``) are allocated jointly (``allocation.parts_lists``,
OR-Tools CP-SAT: most designators filled, then fewest parts, then least error); the rest becomes a
shopping list of one standard value (IEC 60063 E12, else E24, then the finer series) per missing
slot, and the pick list names the designators and units each stock line serves (``kit.result``).
"""

from __future__ import annotations

import time
from collections import Counter

import numpy as np

from ..allocation.parts_lists import allocate, alone_capacity
from ..parts import SpecError, Stock, UNIT_OF_KIND
from ..values import format_si
from .candidates import TRIPLES_MAX, TRIPLES_TOTAL, Candidates, candidates_for, label_key
from .parts_list import KitLine, KitList, read_kit_list
from .result import RATING_UNIT, Build, Buy, Filled, KitResult, Unfilled, kit_cautions, pick_list

__all__ = ["run_kit"]


def _chunks(row: list[int], size: int, groups: int) -> list[Counter]:
    """Spread slots (row[k] of candidate k) over ``groups`` designators of at most ``size`` each."""
    seq = [k for k, n in sorted(enumerate(row), key=lambda kn: -kn[1]) for _ in range(n)]
    out = [Counter(seq[g * size:(g + 1) * size]) for g in range(groups)]
    return out


def _buy_value(line: KitLine) -> tuple[float | None, str | None]:
    """The standard value to buy for a line: E12 if one lies in the window, else E24, then finer."""
    if line.kind == "transistor":
        return None, None
    from .. import eseries

    for name in ("E12", "E24", "E48", "E96", "E192"):
        v = float(eseries.nearest(line.value, name))
        if line.lo * (1 - 1e-12) <= v <= line.hi * (1 + 1e-12):
            return v, name
    return line.value, None


def run_kit(list_file: str, stock_file: str, *, units: int = 1, max_parts: int = 2,
            time_limit: float = 30.0, stock: Stock | None = None, kit_list: KitList | None = None,
            method: str = "auto") -> KitResult:
    """Read the list and the stock, allocate, and describe the result."""
    t0 = time.monotonic()
    if kit_list is None:
        kit_list = read_kit_list(list_file)
    errors = [p for p in kit_list.problems if p.severity == "error"]
    if errors:
        raise SpecError("the parts list has lines that cannot be read; nothing allocated:\n  "
                        + "\n  ".join(str(p) for p in errors))
    warnings = [str(p) for p in kit_list.problems]
    if stock is None:
        from ..stock import load_stock

        stock = load_stock(stock_file)
    bad_stock = [p for p in stock.problems if p.severity == "error"]
    if bad_stock:
        warnings.append(f"{len(bad_stock)} stock line(s) could not be read and are left out"
                        f" (first: {bad_stock[0]})")
    lines = kit_list.lines
    qty = np.zeros(len(stock.lines), dtype=np.int64)
    for s in stock.lines:
        qty[s.index] = max(0, s.qty)
    cache: dict[tuple, Candidates] = {}
    indexes: dict = {}

    def key_of(ln: KitLine) -> tuple:
        return (ln.kind, ln.value, ln.lo, ln.hi, ln.min_rating, ln.single, label_key(ln.label))

    def widen(i: int, factor: int) -> Candidates | None:
        """More of line i's nearest triples (``factor`` times as many), within TRIPLES_MAX for the
        line and TRIPLES_TOTAL for the list (both as TripleSpace counts them: at least what is built)."""
        c, key = cands[i], key_of(lines[i])
        widest = cache[key]  # lines with the same window and rating share one table
        if widest is not c and (not widest.truncated or widest.triple_limit > c.triple_limit):
            cands[i] = widest
            return widest
        limit = min(factor * c.triple_limit, TRIPLES_MAX)
        counted = sum(t.triple_limit for t in cache.values())
        if not c.truncated or limit <= c.triple_limit or counted - c.triple_limit + limit > TRIPLES_TOTAL:
            return None
        cands[i] = cache[key] = candidates_for(lines[i], stock, max_parts, indexes, limit)
        return cands[i]

    for ln in lines:
        if key_of(ln) not in cache:
            cache[key_of(ln)] = candidates_for(ln, stock, max_parts, indexes)
    cands = [cache[key_of(ln)] for ln in lines]
    needs = [ln.per_unit for ln in lines]
    alloc = allocate(needs, cands, qty, units, time_limit=time_limit, method=method, widen=widen)
    cands = alloc.cands
    sol, filled_n, partial, optimal, values = alloc.slots, alloc.filled, alloc.partial, alloc.proven, alloc.values

    filled: list[Filled] = []
    unfilled: list[Unfilled] = []
    buys: dict[tuple, list] = {}
    for ln, c, row, prow, nf in zip(lines, cands, sol, partial, filled_n):
        groups = _chunks(row, units, nf)
        for d, g in zip(ln.designators[:nf], groups):
            filled.append(Filled(d, ln, tuple(Build(n, c.equivalent(k)) for k, n in g.most_common())))
        rest = ln.designators[nf:]
        if not rest:
            continue
        reason = _reason(ln, c, units, qty, max_parts)
        pgroups = _chunks(prow, units - 1, len(rest)) if units > 1 else [Counter() for _ in rest]
        missing = 0
        for d, g in zip(rest, pgroups):
            covered = tuple(Build(n, c.equivalent(k)) for k, n in g.most_common())
            u = Unfilled(d, ln, reason, covered)
            missing += units - u.units_covered
            unfilled.append(u)
        v, series = _buy_value(ln)
        key = (ln.kind, v, ln.label if ln.kind == "transistor" else "", ln.min_rating)
        entry = buys.setdefault(key, [0, 0, series, []])
        entry[0] += len(rest)
        entry[1] += missing
        entry[3].extend(rest)
    buy = tuple(Buy(k[0], k[1], k[2], k[3], v[0], v[1], v[2], tuple(v[3]))
                for k, v in sorted(buys.items(), key=lambda kv: (kv[0][0], kv[0][1] or 0, kv[0][2])) if v[1] > 0)
    pick = pick_list(filled, unfilled, units)  # every entry names the designators and units it serves
    notes = []
    cut = [lines[i].designators[0] for i in alloc.open_lines]
    if cut:
        optimal = False
        most = max(cands[i].triple_limit for i in alloc.open_lines)
        notes.append(f"the windows of {len(cut)} line(s) ({', '.join(cut[:4])}{' …' if len(cut) > 4 else ''}) hold"
                     f" more triples than were built (the {most} nearest the value), and those further away"
                     " could not be ruled out; the answer is the best among those built, not proven optimal"
                     " over every triple")
    if not optimal and not cut:
        notes.append(f"the solver stopped at its time limit ({time_limit:g} s): the best allocation found is"
                     " shown, not proven optimal; a longer --time-limit may do better")
    return KitResult(units, optimal, tuple(filled), tuple(unfilled), buy, tuple(pick), stock.checksum,
                     stock_file, list_file, time.monotonic() - t0, tuple(values),
                     tuple(kit_cautions(lines, filled, unfilled)), tuple(warnings), tuple(notes))


def _reason(ln: KitLine, c: Candidates, units: int, qty: np.ndarray, max_parts: int) -> str:
    if len(c) == 0:
        if ln.kind == "transistor":
            return f"no transistor labelled {ln.label!r} in the drawer"
        rating = f" rated at least {format_si(ln.min_rating, RATING_UNIT[ln.kind])}" if ln.min_rating else ""
        parts = "single part" if ln.single else f"single part or combination of up to {max_parts}"
        return (f"no {parts}{rating} within {format_si(ln.lo, UNIT_OF_KIND[ln.kind])}"
                f" – {format_si(ln.hi, UNIT_OF_KIND[ln.kind])} in the drawer")
    alone = alone_capacity(c, qty, ln.per_unit * units)
    if alone < ln.per_unit * units:
        return (f"the drawer holds enough in the window for {alone} of the {ln.per_unit * units}"
                f" places ({ln.per_unit} per unit × {units}), even with no other line using it")
    return "the stock in the window is taken by other lines of the list (filling more designators in total)"

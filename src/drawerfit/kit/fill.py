"""Fill a whole parts list from the drawer for N units at once, and say what to buy for the rest.

The lines of a list compete for the same stock, so they are allocated jointly with OR-Tools CP-SAT.
For each list line L and each equivalent e inside L's window and rating (single part, or pair and
triple where allowed), an integer x[L,e] counts the (designator, unit) slots that e fills.  A
designator counts as filled only when all its units are filled; designators of one line are
interchangeable, so the line fills f[L] designators with sum_e x[L,e] = units * f[L].  Each stock
line's quantity bounds the parts drawn from it over all lines and units.

The objective is lexicographic:
  1. most designators filled (max sum f);
  2. fewest parts (min sum part_count * x);
  3. smallest total error (min sum |nominal - target| / target * x, in whole ppm).
It is solved as one weighted objective whose weights are proven large enough (see ``allocate``),
or, when those weights would not fit in 62 bits, in three stages each fixing the optimum of the one
before.  A solve that stops at the time limit keeps its best allocation found, and the result says
it is not proven optimal.  A fourth stage covers as many slots of the unfilled designators as the leftover
stock allows (then fewest parts), so the shopping list is the shortest that completes the build
given the allocation: one standard value (IEC 60063 E12, else E24, then the finer series) per
missing slot.
"""

from __future__ import annotations

import time
from collections import Counter
from dataclasses import dataclass, field

import numpy as np

from .result import RATING_UNIT, format_kit, kit_cautions, kit_to_json, pick_list
from .parts_list import KitLine, KitList, read_kit_list
from ..parts import SpecError, Stock, StockLine, UNIT_OF_KIND
from ..values import format_si

__all__ = ["Candidates", "KitResult", "Filled", "Unfilled", "Buy", "candidates_for", "allocate", "run_kit",
           "kit_to_json", "format_kit"]
# (the output layer, pick list, text and JSON, is in kit_output; its names stay importable from here)

PPM = 1_000_000
TRIPLES_PER_LINE = 200  # triples of a list line's window at most (max_parts=3); beyond, those nearest the value


@dataclass(frozen=True)
class Candidates:
    """The equivalents one list line may use, as arrays (one row per equivalent)."""

    part_count: np.ndarray  # int
    err_ppm: np.ndarray  # int, |nominal - target| / target in ppm
    members: np.ndarray  # (n, 3) StockLine.index, -1 padded
    counts: np.ndarray  # (n, 3) parts of each member
    equivalent: object  # callable i -> Equivalent (for the report)
    in_window: int  # equivalents in the window before dominance pruning
    truncated: bool = False  # True when the window held more triples than were taken

    def __len__(self) -> int:
        return len(self.part_count)


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
                   indexes: dict | None = None) -> Candidates:
    """Equivalents for one list line: inside its window and rating, minus those surely never best.

    An equivalent of several parts that contains a smaller equivalent in the window (a single
    part of one of its lines, or for a triple a pair of its parts) with no more error is dropped:
    swapping in the smaller one keeps every designator filled with fewer parts and uses a subset of
    the stock, so the dropped one is never in a lexicographic optimum.

    ``indexes`` (kind -> EquivalentIndex) lets many list lines share one set of pair tables.
    """
    if line.kind == "transistor":
        want = _label_key(line.label)
        rows = [s for s in stock.lines if s.kind == "transistor" and s.qty > 0 and _label_key(s.label) == want]
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
    truncated = False
    if parts >= 3:
        # Triples are built by value window (triples.py), never all: every triple in the line's
        # window when it holds at most TRIPLES_PER_LINE, else the window of that many around the
        # target (then the result is marked as not proven optimal).
        from ..triples import TripleSpace

        key = ("triples", line.kind)
        if key not in indexes:
            indexes[key] = TripleSpace(index.pool, 1, {r: index.pairs(r) for r in (False, True)})
        space = indexes[key]
        lo, hi = line.lo, line.hi
        if space.count(lo, hi) > TRIPLES_PER_LINE:
            lo, hi = space.around(line.value, TRIPLES_PER_LINE, lo, hi)
            truncated = True
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

    # best single error per stock line index (inf where that line is not a single candidate)
    top = max(len(stock.lines), int(members.max()) + 1)
    single_err = np.full(top + 1, np.iinfo(np.int64).max, dtype=np.int64)
    singles = pc == 1
    np.minimum.at(single_err, members[singles, 0], err[singles])
    safe = np.where(members >= 0, members, top)  # index 'top' holds +inf
    best_sub = single_err[safe].min(axis=1)
    triples = np.nonzero(pc == 3)[0]
    if len(triples):
        best_sub[triples] = np.minimum(best_sub[triples], _best_pair_inside(members, counts, pc, err, triples, top))
    keep = singles | (best_sub > err)
    idx = np.nonzero(keep)[0]
    return Candidates(pc[idx], err[idx], members[idx], counts[idx],
                      lambda i, _idx=idx: equivalent(int(_idx[i])), n, truncated)


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


def _pair_key(a: np.ndarray, b: np.ndarray, top: int) -> np.ndarray:
    lo, hi = np.minimum(a, b), np.maximum(a, b)
    return lo * (top + 1) + hi


def _best_pair_inside(members, counts, pc, err, triples, top) -> np.ndarray:
    """For each triple, the least error of a pair in the table that uses only parts the triple uses."""
    big = np.iinfo(np.int64).max
    pairs = np.nonzero(pc == 2)[0]
    if len(pairs) == 0:
        return np.full(len(triples), big, dtype=np.int64)
    pm = members[pairs]
    # a pair is two distinct lines (1 + 1) or one line twice (count 2)
    b = np.where(pm[:, 1] >= 0, pm[:, 1], pm[:, 0])
    keys = _pair_key(pm[:, 0], b, top)
    order = np.argsort(keys, kind="stable")
    keys, perr = keys[order], err[pairs][order]
    uniq, start = np.unique(keys, return_index=True)
    best = np.minimum.reduceat(perr, start)
    tm, tc = members[triples], counts[triples]
    out = np.full(len(triples), big, dtype=np.int64)

    def look(k, ok):
        pos = np.clip(np.searchsorted(uniq, k), 0, len(uniq) - 1)
        hit = ok & (uniq[pos] == k)
        return np.where(hit, best[pos], big)

    for i, j in ((0, 1), (0, 2), (1, 2)):  # two distinct lines of the triple
        ok = (tm[:, i] >= 0) & (tm[:, j] >= 0)
        out = np.minimum(out, look(_pair_key(tm[:, i], tm[:, j], top), ok))
    for i in range(3):  # one line the triple uses at least twice
        ok = (tm[:, i] >= 0) & (tc[:, i] >= 2)
        out = np.minimum(out, look(_pair_key(tm[:, i], tm[:, i], top), ok))
    return out


def _label_key(text: str) -> str:
    import re

    return re.sub(r"[\W_]+", "", str(text).lower())


# --- the allocation model ----------------------------------------------------------------------


@dataclass
class _Model:
    """CP-SAT variables of one allocation: x[l][k] slots of list line l filled by its candidate k."""

    model: object
    x: list  # per line: list of IntVar
    f: list  # per line: IntVar (designators filled) or None


def _build(cp_model, lines_need, cands, qty, units, whole_designators: bool, cap_per_line=None):
    """The CP-SAT model: slots per candidate, stock bounds, and (optionally) whole designators."""
    m = cp_model.CpModel()
    xs, fs = [], []
    use: dict[int, list] = {}
    for li, (need, c) in enumerate(zip(lines_need, cands)):
        slots = need * units if cap_per_line is None else cap_per_line[li]
        row = []
        for k in range(len(c)):
            mem, cnt = c.members[k], c.counts[k]
            ub = slots
            for j in range(3):
                if mem[j] >= 0:
                    ub = min(ub, int(qty[mem[j]]) // int(cnt[j]))
            if ub <= 0:
                row.append(None)
                continue
            v = m.NewIntVar(0, ub, f"x{li}_{k}")
            row.append(v)
            for j in range(3):
                if mem[j] >= 0:
                    use.setdefault(int(mem[j]), []).append((v, int(cnt[j]), ub))
        live = [v for v in row if v is not None]
        if whole_designators:
            f = m.NewIntVar(0, need, f"f{li}")
            m.Add(sum(live) == units * f) if live else m.Add(f == 0)
            fs.append(f)
        else:
            if live:
                m.Add(sum(live) <= slots)
            fs.append(None)
        xs.append(row)
    for s, terms in use.items():
        if sum(c * ub for _v, c, ub in terms) > qty[s]:  # otherwise the bounds already keep it
            m.Add(sum(c * v for v, c, _ub in terms) <= int(qty[s]))
    return _Model(m, xs, fs)


def _lin(mm: _Model, cands, what: str):
    terms = []
    for row, c in zip(mm.x, cands):
        for k, v in enumerate(row):
            if v is None:
                continue
            w = 1 if what == "slots" else int(c.part_count[k]) if what == "parts" else int(c.err_ppm[k])
            if w:
                terms.append(w * v)
    return sum(terms)


def _stages(cp_model, mm: _Model, objectives, deadline: float, workers: int):
    """Solve objectives in order, fixing each optimum before the next; (values, proven, solution)."""
    solver = cp_model.CpSolver()
    solver.parameters.num_search_workers = workers
    proven = True
    values = []
    solution = None
    for sense, expr in objectives:
        if isinstance(expr, int):  # nothing to choose
            values.append(expr)
            continue
        if sense == "max":
            mm.model.Maximize(expr)
        else:
            mm.model.Minimize(expr)
        solver.parameters.max_time_in_seconds = max(0.05, deadline - time.monotonic())
        status = solver.Solve(mm.model)
        if status not in (cp_model.OPTIMAL, cp_model.FEASIBLE):
            proven = False  # out of time before any solution: keep the last one (or nothing taken)
            break
        if status != cp_model.OPTIMAL:
            proven = False
        best = int(round(solver.ObjectiveValue()))
        values.append(best)
        solution = [[0 if v is None else solver.Value(v) for v in row] for row in mm.x]
        mm.model.ClearHints()
        for row, sol in zip(mm.x, solution):
            for v, s in zip(row, sol):
                if v is not None:
                    mm.model.AddHint(v, s)
        # fix this stage's optimum (or best found) for the stages after it
        if sense == "max":
            mm.model.Add(expr >= best)
        else:
            mm.model.Add(expr <= best)
    if solution is None:
        solution = [[0 for _ in row] for row in mm.x]
    return values, proven, solution


def allocate(needs: list[int], cands: list[Candidates], qty: np.ndarray, units: int, *,
             time_limit: float = 30.0, workers: int | None = None, method: str = "auto"):
    """Joint allocation: (slots[l][k], filled per line, partial slots[l][k], proven optimal, values).

    ``needs`` are designators per unit for each line, ``qty`` the stock by StockLine.index;
    ``values`` are (designators filled, parts, total error in ppm).  ``method`` "auto" uses the
    weighted objective when its weights fit, "stages" always solves the three stages.
    """
    import os

    from ortools.sat.python import cp_model

    workers = workers or max(1, min(8, os.cpu_count() or 1))
    deadline = time.monotonic() + time_limit
    qty = np.asarray(qty, dtype=np.int64)
    if not any(len(c) for c in cands):
        zero = [[0] * len(c) for c in cands]
        return zero, [0] * len(cands), zero, True, [0, 0, 0]
    mm = _build(cp_model, needs, cands, qty, units, whole_designators=True)
    filled_e, parts_e, err_e = sum(f for f in mm.f), _lin(mm, cands, "parts"), _lin(mm, cands, "err")
    # Weights that make one objective exactly lexicographic: W_parts exceeds the largest total
    # error any allocation can have, W_fill exceeds W_parts times the largest part count plus
    # that error, so one more designator outweighs any parts and error, and one part fewer any
    # error.  One solve of this is much faster than three stages; the stages remain for sizes
    # where the weights would leave 62-bit integers.
    max_err = sum(n * units * (int(c.err_ppm.max()) if len(c) else 0) for n, c in zip(needs, cands))
    max_parts = sum(n * units * (int(c.part_count.max()) if len(c) else 0) for n, c in zip(needs, cands))
    w_parts = max_err + 1
    w_fill = w_parts * (max_parts + 1)
    if method != "stages" and w_fill * (sum(needs) + 1) < 2**62:
        values, proven, sol = _stages(cp_model, mm, [("max", w_fill * filled_e - w_parts * parts_e - err_e)],
                                      deadline, workers)
    else:
        values, proven, sol = _stages(cp_model, mm, [("max", filled_e), ("min", parts_e), ("min", err_e)],
                                      deadline, workers)
    filled = [sum(row) // units for row in sol]
    parts_used = sum(int(c.part_count[k]) * n for row, c in zip(sol, cands) for k, n in enumerate(row))
    err_used = sum(int(c.err_ppm[k]) * n for row, c in zip(sol, cands) for k, n in enumerate(row))
    values = [sum(filled), parts_used, err_used]

    # stage 4: leftover stock towards the unfilled designators (never completing one: that would
    # have been found in stage 1), so fewer parts need buying
    used = np.zeros_like(qty)
    for row, c in zip(sol, cands):
        for k, n in enumerate(row):
            for j in range(3):
                if n and c.members[k, j] >= 0:
                    used[c.members[k, j]] += n * c.counts[k, j]
    left = qty - used
    caps = [(need - f) * (units - 1) for need, f in zip(needs, filled)]
    partial = [[0] * len(c) for c in cands]
    if units > 1 and any(caps):
        mm2 = _build(cp_model, needs, cands, left, units, whole_designators=False, cap_per_line=caps)
        objectives2 = [("max", _lin(mm2, cands, "slots")), ("min", _lin(mm2, cands, "parts"))]
        _v2, proven2, partial = _stages(cp_model, mm2, objectives2, max(deadline, time.monotonic() + 1.0), workers)
        proven = proven and proven2
    return sol, filled, partial, proven, values


# --- the result ----------------------------------------------------------------------------------


@dataclass(frozen=True)
class Build:
    units: int
    equivalent: object  # Equivalent (or _Transistor)


@dataclass(frozen=True)
class Filled:
    designator: str
    line: KitLine
    builds: tuple[Build, ...]


@dataclass(frozen=True)
class Unfilled:
    designator: str
    line: KitLine
    reason: str
    from_drawer: tuple[Build, ...] = ()  # units covered by leftover stock

    @property
    def units_covered(self) -> int:
        return sum(b.units for b in self.from_drawer)


@dataclass(frozen=True)
class Buy:
    kind: str
    value: float | None
    label: str
    rating: float | None
    per_unit: int  # designators of one unit that lack this value
    count: int  # to buy for all units, after what the drawer still covers
    series: str | None
    designators: tuple[str, ...]


@dataclass(frozen=True)
class KitResult:
    units: int
    optimal: bool
    filled: tuple[Filled, ...]
    unfilled: tuple[Unfilled, ...]
    buy: tuple[Buy, ...]
    pick: tuple[dict, ...]
    stock_checksum: str
    stock_file: str
    list_file: str
    seconds: float
    stage_values: tuple[int, ...]
    cautions: tuple[str, ...] = ()
    warnings: tuple[str, ...] = field(default_factory=tuple)
    notes: tuple[str, ...] = field(default_factory=tuple)


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
    cands = []
    for ln in lines:
        key = (ln.kind, ln.value, ln.lo, ln.hi, ln.min_rating, ln.single, _label_key(ln.label))
        if key not in cache:
            cache[key] = candidates_for(ln, stock, max_parts, indexes)
        cands.append(cache[key])
    needs = [ln.per_unit for ln in lines]
    sol, filled_n, partial, optimal, values = allocate(needs, cands, qty, units, time_limit=time_limit,
                                                        method=method)

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
    cut = [ln.designators[0] for ln, c in zip(lines, cands) if c.truncated]
    if cut:
        optimal = False
        notes.append(f"the windows of {len(cut)} line(s) ({', '.join(cut[:4])}{' …' if len(cut) > 4 else ''}) hold"
                     f" more than {TRIPLES_PER_LINE} triples; only the closest were considered, so the answer"
                     " is the best among those, not proven optimal over every triple")
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
    alone = _alone_capacity(c, qty, ln.per_unit * units)
    if alone < ln.per_unit * units:
        return (f"the drawer holds enough in the window for {alone} of the {ln.per_unit * units}"
                f" places ({ln.per_unit} per unit × {units}), even with no other line using it")
    return "the stock in the window is taken by other lines of the list (filling more designators in total)"


def _alone_capacity(c: Candidates, qty: np.ndarray, slots: int) -> int:
    """Most slots this line could fill if it had the whole drawer (CP-SAT, small)."""
    from ortools.sat.python import cp_model

    mm = _build(cp_model, [slots], [c], qty, 1, whole_designators=False, cap_per_line=[slots])
    mm.model.Maximize(_lin(mm, [c], "slots"))
    solver = cp_model.CpSolver()
    solver.parameters.max_time_in_seconds = 2.0
    solver.parameters.num_search_workers = 1
    status = solver.Solve(mm.model)
    return int(solver.ObjectiveValue()) if status in (cp_model.OPTIMAL, cp_model.FEASIBLE) else 0


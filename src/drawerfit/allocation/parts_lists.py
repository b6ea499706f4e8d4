"""Allocation of a whole parts list with OR-Tools CP-SAT: which equivalents fill which designators.

The lines of a list compete for the same stock, so they are allocated jointly.
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
given the allocation.

The candidates are arrays (``kit.candidates.Candidates``: part counts, errors in ppm, members and
counts by ``StockLine.index``); nothing here knows what a parts list is.
"""

from __future__ import annotations

import time
from dataclasses import dataclass

import numpy as np

__all__ = ["allocate", "alone_capacity"]

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


def allocate(needs: list[int], cands: list, qty: np.ndarray, units: int, *,
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


def alone_capacity(c, qty: np.ndarray, slots: int) -> int:
    """Most slots this line could fill if it had the whole drawer (CP-SAT, small)."""
    from ortools.sat.python import cp_model

    mm = _build(cp_model, [slots], [c], qty, 1, whole_designators=False, cap_per_line=[slots])
    mm.model.Maximize(_lin(mm, [c], "slots"))
    solver = cp_model.CpSolver()
    solver.parameters.max_time_in_seconds = 2.0
    solver.parameters.num_search_workers = 1
    status = solver.Solve(mm.model)
    return int(solver.ObjectiveValue()) if status in (cp_model.OPTIMAL, cp_model.FEASIBLE) else 0

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

Most equivalents of a line never have a chance (a line's best few fill it unless other lines take
their stock), so the model holds only each line's best candidates by (parts, error) and, for all
the others together, one *rest* variable r[L]: slots filled at the least part count and error of
any candidate left out, drawing on no stock.  That model is a relaxation of the whole one (any
allocation maps onto it, each left-out candidate onto r[L], no worse in the lexicographic order),
so when its optimum leaves every r[L] at zero, that optimum is a real allocation and optimal over
every candidate, those left out included.  Where an r[L] is used, the line takes more of its
candidates and the model is solved again.  The candidates never built (triples beyond a line's
window of nearest ones, ``Candidates.unbuilt_error``) join r[L] the same way, with three parts and
at least their known error; ``widen`` may build more of them.  A line whose unbuilt candidates
still matter when nothing more can be built loses its r[L]; the answer is then the best over the
candidates built, reported as not proven (``Allocation.open_lines``).

The candidates are arrays (``kits.candidates.Candidates``: part counts, errors in ppm, members and
counts by ``StockLine.index``); nothing here knows what a parts list is.
"""

from __future__ import annotations

import time
from dataclasses import dataclass
from typing import Callable

import numpy as np

__all__ = ["Allocation", "allocate", "alone_capacity", "FIRST_TAKE", "GROWTH", "WIDEN"]

FIRST_TAKE = 16  # candidates of each line in the first model (more where its rest variable is used)
GROWTH = 4  # a line whose rest variable is used takes at least this many times as many candidates
WIDEN = 16  # and where it stands for triples never built, this many times as many are built


@dataclass(frozen=True)
class Allocation:
    """The allocation of a parts list; ``slots`` and ``partial`` index ``cands`` (as returned)."""

    slots: list  # per line: slots filled by each candidate
    filled: list  # per line: designators filled
    partial: list  # per line: slots of unfilled designators covered from the leftover stock
    proven: bool  # optimal over every candidate, built or not
    values: tuple  # (designators filled, parts, total error in ppm)
    cands: list  # per line: the candidates (more triples where ``widen`` built them)
    open_lines: tuple = ()  # lines whose unbuilt triples might have done better
    rounds: int = 0  # models solved


@dataclass
class _Line:
    """One line's candidates in best-first order, how many the model takes, and what is left out."""

    cand: object
    order: np.ndarray  # candidate indices by (parts, error, index)
    take: int
    unbuilt: int | None  # least error (ppm) of the three-part candidates never built, or None
    cap: int  # slots the line may fill

    def rest_key(self) -> tuple[int, int] | None:
        """(parts, error) that the rest variable stands for, or None when nothing is left out."""
        keys = []
        if self.take < len(self.order):
            k = self.order[self.take]
            keys.append((int(self.cand.part_count[k]), int(self.cand.err_ppm[k])))
        if self.unbuilt is not None:
            keys.append((3, int(self.unbuilt)))
        return min(keys) if keys else None


def _line(c, cap: int, take: int, unbuilt: int | None) -> _Line:
    order = np.lexsort((np.arange(len(c)), c.err_ppm, c.part_count)) if len(c) else np.zeros(0, np.int64)
    ln = _Line(c, order, 0, unbuilt, cap)
    ln.take = _grow_to(ln, take)
    return ln


def _grow_to(ln: _Line, n: int) -> int:
    """At least ``n`` candidates, and every candidate tied with the last one taken (so that the rest
    variable stands for candidates strictly worse than all those in the model)."""
    n = min(len(ln.order), max(n, 0))
    if 0 < n < len(ln.order):
        pc, err = ln.cand.part_count[ln.order], ln.cand.err_ppm[ln.order]
        key = pc * (int(err.max()) + 1) + err
        n = int(np.searchsorted(key, key[n - 1], side="right"))
    return n


@dataclass
class _Model:
    """CP-SAT variables of one allocation: x[l] slots of line l per candidate taken, r[l] rest."""

    model: object
    take: list  # per line: candidate indices in the model
    x: list  # per line: list of IntVar or None (no stock for even one slot)
    rest: list  # per line: (IntVar, parts, error) or None
    f: list  # per line: IntVar (designators filled) or None


def _build(cp_model, lines: list[_Line], needs, qty, units, whole_designators: bool) -> _Model:
    """The CP-SAT model: slots per candidate taken, rest variables, stock bounds, whole designators."""
    m = cp_model.CpModel()
    takes, xs, rests, fs = [], [], [], []
    use: dict[int, list] = {}
    for li, (ln, need) in enumerate(zip(lines, needs)):
        c, slots = ln.cand, ln.cap
        take = ln.order[:ln.take]
        ub = np.full(len(take), slots, dtype=np.int64)
        for j in range(3):
            mem, cnt = c.members[take, j], c.counts[take, j]
            has = mem >= 0
            ub[has] = np.minimum(ub[has], qty[mem[has]] // np.maximum(cnt[has], 1))
        row = []
        for i, k in enumerate(take):
            if ub[i] <= 0:
                row.append(None)
                continue
            v = m.NewIntVar(0, int(ub[i]), f"x{li}_{k}")
            row.append(v)
            for j in range(3):
                s = int(c.members[k, j])
                if s >= 0:
                    use.setdefault(s, []).append((v, int(c.counts[k, j]), int(ub[i])))
        key = ln.rest_key() if slots > 0 else None
        rest = None if key is None else (m.NewIntVar(0, slots, f"r{li}"), key[0], key[1])
        live = [v for v in row if v is not None] + ([rest[0]] if rest else [])
        if whole_designators:
            f = m.NewIntVar(0, need, f"f{li}")
            m.Add(sum(live) == units * f) if live else m.Add(f == 0)
            fs.append(f)
        else:
            if live:
                m.Add(sum(live) <= slots)
            fs.append(None)
        takes.append(take)
        xs.append(row)
        rests.append(rest)
    for s, terms in use.items():
        if sum(c * ub for _v, c, ub in terms) > qty[s]:  # otherwise the bounds already keep it
            m.Add(sum(c * v for v, c, _ub in terms) <= int(qty[s]))
    return _Model(m, takes, xs, rests, fs)


def _lin(cp_model, mm: _Model, lines: list[_Line], what: str):
    """Slots, parts or error of the whole allocation, rest variables included."""
    vs, ws = [], []
    for ln, take, row, rest in zip(lines, mm.take, mm.x, mm.rest):
        for k, v in zip(take, row):
            if v is None:
                continue
            w = 1 if what == "slots" else int(ln.cand.part_count[k]) if what == "parts" else int(ln.cand.err_ppm[k])
            if w:
                vs.append(v)
                ws.append(w)
        if rest is not None:
            w = 1 if what == "slots" else rest[1] if what == "parts" else rest[2]
            if w:
                vs.append(rest[0])
                ws.append(w)
    return cp_model.LinearExpr.WeightedSum(vs, ws) if vs else 0


def _stages(cp_model, mm: _Model, objectives, deadline: float, workers: int, hint=None):
    """Solve objectives in order, fixing each optimum before the next; (proven, solution, rests used),
    the solution as {candidate index: slots} per line.  ``hint``: an earlier (solution, rests)."""
    solver = cp_model.CpSolver()
    solver.parameters.num_workers = workers
    if hint:
        for take, row, rest, h, n in zip(mm.take, mm.x, mm.rest, hint[0], hint[1]):
            for k, v in zip(take, row):
                if v is not None:
                    mm.model.AddHint(v, int(h.get(int(k), 0)))
            if rest is not None:
                mm.model.AddHint(rest[0], int(n))
    proven = True
    solution = None
    objectives = [(sense, expr) for sense, expr in objectives if not isinstance(expr, int)]  # else nothing to choose
    for stage, (sense, expr) in enumerate(objectives):
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
        solution = ([{int(k): int(solver.Value(v)) for k, v in zip(take, row) if v is not None}
                     for take, row in zip(mm.take, mm.x)],
                    [0 if r is None else int(solver.Value(r[0])) for r in mm.rest])
        if stage == len(objectives) - 1:
            break
        mm.model.ClearHints()
        for take, row, sol in zip(mm.take, mm.x, solution[0]):
            for k, v in zip(take, row):
                if v is not None:
                    mm.model.AddHint(v, sol.get(int(k), 0))
        for r, n in zip(mm.rest, solution[1]):
            if r is not None:
                mm.model.AddHint(r[0], n)
        # fix this stage's optimum (or best found) for the stages after it
        if sense == "max":
            mm.model.Add(expr >= best)
        else:
            mm.model.Add(expr <= best)
    if solution is None:
        return proven, [{} for _ in mm.x], [0 for _ in mm.x]
    return proven, solution[0], solution[1]


def _objectives(cp_model, mm: _Model, lines: list[_Line], needs, units, method: str, whole: bool):
    """The objectives in order: designators, parts, error as one weighted objective when it fits."""
    if not whole:
        return [("max", _lin(cp_model, mm, lines, "slots")), ("min", _lin(cp_model, mm, lines, "parts"))]
    filled_e = sum(f for f in mm.f)
    parts_e, err_e = _lin(cp_model, mm, lines, "parts"), _lin(cp_model, mm, lines, "err")
    # Weights that make one objective exactly lexicographic: W_parts exceeds the largest total
    # error any allocation can have, W_fill exceeds W_parts times the largest part count plus
    # that error, so one more designator outweighs any parts and error, and one part fewer any
    # error.  One solve of this is much faster than three stages; the stages remain for sizes
    # where the weights would leave 62-bit integers.
    max_err = max_parts = 0
    for ln, take, rest in zip(lines, mm.take, mm.rest):
        errs = [int(ln.cand.err_ppm[take].max())] if len(take) else []
        parts = [int(ln.cand.part_count[take].max())] if len(take) else []
        if rest is not None:
            errs.append(rest[2])
            parts.append(rest[1])
        max_err += ln.cap * max(errs, default=0)
        max_parts += ln.cap * max(parts, default=0)
    w_parts = max_err + 1
    w_fill = w_parts * (max_parts + 1)
    if method != "stages" and w_fill * (sum(needs) + 1) < 2**62:
        return [("max", w_fill * filled_e - w_parts * parts_e - err_e)]
    return [("max", filled_e), ("min", parts_e), ("min", err_e)]


def _real(lines: list[_Line], sol: list[dict], rest: list[int], units: int, whole: bool):
    """A real allocation from a solution that uses rest variables: each such line keeps its whole
    designators from the candidates in the model (dropping its worst slots), so the stock drawn only
    falls; with its (designators or slots, -parts, -error) for comparing."""
    out = []
    for ln, s, r in zip(lines, sol, rest):
        s = dict(s)
        if r and whole:
            extra = sum(s.values()) % units
            for k in sorted(s, key=lambda k: (int(ln.cand.part_count[k]), int(ln.cand.err_ppm[k])), reverse=True):
                drop = min(extra, s[k])
                s[k] -= drop
                extra -= drop
        out.append({k: n for k, n in s.items() if n})
    slots = sum(n for s in out for n in s.values())
    parts = sum(int(ln.cand.part_count[k]) * n for ln, s in zip(lines, out) for k, n in s.items())
    err = sum(int(ln.cand.err_ppm[k]) * n for ln, s in zip(lines, out) for k, n in s.items())
    return out, ((slots // units if whole else slots), -parts, -err if whole else 0)


def _enough(ln: _Line, wanted: int, qty: np.ndarray, at_least: int) -> int:
    """How many candidates the line takes next: ``at_least``, and enough more that those added could
    fill twice the ``wanted`` slots its rest variable took (as far as their own stock goes)."""
    c, more = ln.cand, ln.order[ln.take:]
    ub = np.full(len(more), ln.cap, dtype=np.int64)
    for j in range(3):
        mem, cnt = c.members[more, j], c.counts[more, j]
        has = mem >= 0
        ub[has] = np.minimum(ub[has], qty[mem[has]] // np.maximum(cnt[has], 1))
    n = int(np.searchsorted(np.cumsum(ub), 2 * wanted)) + 1
    return _grow_to(ln, max(ln.take + n, at_least))


def _solve(cp_model, lines: list[_Line], needs, qty, units, *, whole: bool, method: str, deadline: float,
           workers: int, widen: Callable | None):
    """Solve, taking more candidates where rest variables are used, until none is; (solution per
    line, proven, open lines, rounds).  Out of time, the answer is the best real allocation seen
    (``_real`` of each round's solution)."""
    open_lines: set[int] = set()
    hint = None
    best = None  # (value, solution) of the best real allocation so far
    rounds = 0
    while True:
        rounds += 1
        mm = _build(cp_model, lines, needs, qty, units, whole)
        objectives = _objectives(cp_model, mm, lines, needs, units, method, whole)
        proven, sol, rest = _stages(cp_model, mm, objectives, deadline, workers, hint)
        used = [li for li, n in enumerate(rest) if n > 0]
        real, value = _real(lines, sol, rest, units, whole)
        if best is None or value > best[0]:
            best = (value, real)
        if not proven or (used and time.monotonic() >= deadline):
            return best[1], False, sorted(open_lines), rounds
        if not used:
            return real, not open_lines, sorted(open_lines), rounds
        hint = (sol, rest)
        for li in used:
            ln = lines[li]
            untaken = ln.take < len(ln.order)
            nxt = ((int(ln.cand.part_count[ln.order[ln.take]]), int(ln.cand.err_ppm[ln.order[ln.take]]))
                   if untaken else None)
            if ln.unbuilt is not None and (nxt is None or (3, ln.unbuilt) <= nxt):
                more = widen(li, WIDEN) if widen is not None else None
                if more is not None:  # more triples built: the candidates are numbered anew
                    new = _line(more, ln.cap, ln.take, getattr(more, "unbuilt_error", None))
                    new.take = _enough(new, rest[li], qty, GROWTH * ln.take)
                    lines[li] = new
                    sol[li] = {}
                    continue
                ln.unbuilt = None  # nothing more can be built: the best over those built, not proven
                open_lines.add(li)
            if untaken:
                ln.take = _enough(ln, rest[li], qty, GROWTH * ln.take)


def allocate(needs: list[int], cands: list, qty: np.ndarray, units: int, *,
             time_limit: float = 30.0, workers: int | None = None, method: str = "auto",
             widen: Callable | None = None) -> Allocation:
    """Joint allocation of every line (``needs``: designators per unit, ``qty``: stock by
    StockLine.index).  ``method`` "auto" uses the weighted objective when its weights fit, "stages"
    always solves the three stages.  ``widen(line, factor)`` may return that line's candidates with
    about ``factor`` times as many triples built (or None when it cannot)."""
    import os

    from ortools.sat.python import cp_model

    workers = workers or max(1, min(8, os.cpu_count() or 1))
    deadline = time.monotonic() + time_limit
    qty = np.asarray(qty, dtype=np.int64)
    cands = list(cands)
    lines = [_line(c, n * units, FIRST_TAKE, getattr(c, "unbuilt_error", None)) for c, n in zip(cands, needs)]
    if not any(len(ln.order) or ln.unbuilt is not None for ln in lines):
        zero = [[0] * len(c) for c in cands]
        return Allocation(zero, [0] * len(cands), zero, True, (0, 0, 0), cands)
    sol, proven, open_lines, rounds = _solve(cp_model, lines, needs, qty, units, whole=True, method=method,
                                             deadline=deadline, workers=workers, widen=widen)
    cands = [ln.cand for ln in lines]
    slots = [[0] * len(c) for c in cands]
    for row, s in zip(slots, sol):
        for k, n in s.items():
            row[k] = n
    filled = [sum(row) // units for row in slots]
    parts_used = sum(int(c.part_count[k]) * n for row, c in zip(slots, cands) for k, n in enumerate(row) if n)
    err_used = sum(int(c.err_ppm[k]) * n for row, c in zip(slots, cands) for k, n in enumerate(row) if n)
    values = (sum(filled), parts_used, err_used)

    # stage 4: leftover stock towards the unfilled designators (never completing one: that would
    # have been found in stage 1), so fewer parts need buying
    used = np.zeros_like(qty)
    for row, c in zip(slots, cands):
        for k, n in enumerate(row):
            for j in range(3):
                if n and c.members[k, j] >= 0:
                    used[c.members[k, j]] += n * c.counts[k, j]
    left = qty - used
    caps = [(need - f) * (units - 1) for need, f in zip(needs, filled)]
    partial = [[0] * len(c) for c in cands]
    if units > 1 and any(caps):
        # the unbuilt triples of a line are left out here: where they could matter (an unfilled
        # line with a window cut short), the answer is already not proven
        lines2 = [_line(c, cap, FIRST_TAKE if cap else 0, None) for c, cap in zip(cands, caps)]
        sol2, proven2, _open, r2 = _solve(cp_model, lines2, needs, left, units, whole=False, method=method,
                                          deadline=max(deadline, time.monotonic() + 1.0), workers=workers,
                                          widen=None)
        rounds += r2
        for row, s in zip(partial, sol2):
            for k, n in s.items():
                row[k] = n
        proven = proven and proven2
    return Allocation(slots, filled, partial, proven, values, cands, tuple(open_lines), rounds)


def alone_capacity(c, qty: np.ndarray, slots: int) -> int:
    """Most slots this line could fill if it had the whole drawer (CP-SAT, small)."""
    from ortools.sat.python import cp_model

    ln = _Line(c, np.arange(len(c)), len(c), None, slots)
    mm = _build(cp_model, [ln], [slots], np.asarray(qty, dtype=np.int64), 1, whole_designators=False)
    mm.model.Maximize(_lin(cp_model, mm, [ln], "slots"))
    solver = cp_model.CpSolver()
    solver.parameters.max_time_in_seconds = 2.0
    solver.parameters.num_workers = 1
    status = solver.Solve(mm.model)
    return int(solver.ObjectiveValue()) if status in (cp_model.OPTIMAL, cp_model.FEASIBLE) else 0

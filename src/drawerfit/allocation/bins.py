"""Which drawer lines give the parts of one design: the bins, with OR-Tools CP-SAT where lines stand in
for one another.

A line ``a`` may give parts for a needed line ``b`` when ``cover[a, b]`` (same value and kind, no
wider tolerance, no lower rating: ``search.pools``).  Drawing ``need[b]`` parts for every needed
line from lines of limited quantity is then a transportation problem; among its solutions the one
chosen draws first as few parts as possible from better lines (better parts stay for the designs
that need them), then uses as few (bin, need) pairs as possible (fewer bins to open).
"""

from __future__ import annotations

from typing import Mapping

import numpy as np

__all__ = ["draw_bins"]


def draw_bins(cover: np.ndarray, qty: np.ndarray, need: Mapping[int, int]) -> dict[int, list[tuple[int, int]]] | None:
    """Who gives what: {needed line: [(giving line, parts), ...]} for ``need`` (parts per needed line,
    all units together), or None when the lines cannot give it (exact)."""
    need = {int(b): int(d) for b, d in need.items() if d > 0}
    if all(d <= qty[b] for b, d in need.items()):
        # every line gives its own need: nothing substituted, one pair per need, so optimal
        return {b: [(b, d)] for b, d in need.items()}
    from ortools.sat.python import cp_model

    m = cp_model.CpModel()
    y: dict[tuple[int, int], object] = {}
    z: dict[tuple[int, int], object] = {}
    givers: dict[int, list] = {}
    for b, d in need.items():
        terms = []
        for a in np.flatnonzero(cover[:, b]):
            a = int(a)
            ub = min(d, int(qty[a]))
            if ub <= 0:
                continue
            v = m.NewIntVar(0, ub, f"y{a}_{b}")
            flag = m.NewBoolVar(f"z{a}_{b}")
            m.Add(v <= ub * flag)
            y[(a, b)], z[(a, b)] = v, flag
            terms.append(v)
            givers.setdefault(a, []).append(v)
        if not terms:
            return None
        m.Add(sum(terms) == d)
    for a, vs in givers.items():
        m.Add(sum(vs) <= int(qty[a]))
    pairs = len(z)
    substituted = sum(v for (a, b), v in y.items() if a != b)
    # lexicographic through one weight: the pair count never exceeds ``pairs``
    m.Minimize((pairs + 1) * substituted + sum(z.values()))
    solver = cp_model.CpSolver()
    solver.parameters.num_workers = 1
    solver.parameters.max_time_in_seconds = 10.0
    status = solver.Solve(m)
    if status == cp_model.INFEASIBLE:
        return None
    if status not in (cp_model.OPTIMAL, cp_model.FEASIBLE):
        raise RuntimeError("the stock allocation solver stopped without an answer")
    out: dict[int, list[tuple[int, int]]] = {}
    for (a, b), v in y.items():
        n = int(solver.Value(v))
        if n:
            out.setdefault(b, []).append((a, n))
    for b in out:
        out[b].sort(key=lambda an: (an[0] != b, -an[1], an[0]))
    return out

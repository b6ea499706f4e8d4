"""Narrow the value ranges of windowed roles (triples) from the roles already known in a shape.

Triples come in value windows built lazily (``tables.Candidates.tables``); the search skips the
windows outside each role's range (``joins.role_ranges``, from the targets alone).  When the other
roles of a shape are small tables (a board's kept parts, or a drawer of few dividers), their values
narrow the ranges much further, and often show that no window can help:

* the emitter: for every divider the IE window bounds the total emitter resistance RET between
  L and U (``bounds.emitter_window``: RET's low end >= L, its high end <= U); a nominal RET lies in
  [L, U], so over all dividers in [min L, max U], and RE (RE2) in that range less the largest
  (at the top: the smallest) RE2 (RE) the shape holds;
* the collector: RC is joined last (``joins.candidate_sets``); when no (divider, emitter) set of the
  shape passes the bounds before RC is joined, no RC window can give a set, so none is built.

Both are necessary conditions of the same bounds the search applies to every set, so nothing the
search would accept is skipped (the equality tests against ``--exhaustive`` cover it).
"""

from __future__ import annotations

import numpy as np

from .bounds import Box, emitter_window
from .tables import TripleWindow
from .windows import SLACK

__all__ = ["narrow_ranges", "DIVIDERS_AT_ONCE"]

DIVIDERS_AT_ONCE = 200_000  # dividers whose windows are computed in one go (about 10 MB)


def _resolved(tabs, shape, role, role_tables):
    """The one plain table of ``role`` in ``shape`` (None when absent, windowed or several)."""
    if role not in shape:
        return None
    ts = role_tables(tabs[role], shape[role])
    if len(ts) != 1 or isinstance(ts[0], TripleWindow):
        return None
    return ts[0]


def narrow_ranges(ctx, tabs, shape, ranges: dict, role_tables) -> dict | None:
    """``ranges`` narrowed from the shape's plain tables (module docstring); None when no set of
    the shape can pass the bounds.  ``role_tables(cands, count)`` lists a role's tables."""
    windowed = [r for r in shape if any(isinstance(t, TripleWindow) for t in role_tables(tabs[r], shape[r]))]
    if not windowed:
        return ranges
    out = dict(ranges)
    A = _resolved(tabs, shape, ctx.ra, role_tables)
    B = _resolved(tabs, shape, ctx.rb, role_tables)
    if A is None or B is None or not len(A) or not len(B) or len(A) * len(B) > DIVIDERS_AT_ONCE:
        return out
    box = Box(ctx)
    ia = np.repeat(np.arange(len(A)), len(B))
    ib = np.tile(np.arange(len(B)), len(A))
    L, U = emitter_window(ctx, box, A, B, ia, ib)
    ok = L <= U * (1 + SLACK) + SLACK
    if not ok.any():
        return None
    lo, hi = float(np.min(L[ok])), float(np.max(U[ok]))
    hi = hi * (1 + SLACK) + SLACK
    lo = lo - abs(lo) * SLACK - SLACK
    RE = _resolved(tabs, shape, "RE", role_tables)
    RE2 = _resolved(tabs, shape, "RE2", role_tables)
    other = {"RE": "RE2", "RE2": "RE"}
    for r in ("RE", "RE2"):
        if r not in shape:
            continue
        o = other[r]
        o_lo, o_hi = 0.0, 0.0
        if o in shape:
            t = RE2 if o == "RE2" else RE
            o_lo, o_hi = (float(t.v.min()), float(t.v.max())) if t is not None else (0.0, ranges.get(o, (0.0, np.inf))[1])
        a, b = out.get(r, (0.0, np.inf))
        out[r] = (max(a, lo - o_hi), min(b, hi - o_lo * (1 - SLACK)))
        if out[r][0] > out[r][1]:
            return None
    if "RC" in windowed and all(r not in windowed for r in shape if r != "RC"):
        from .joins import candidate_sets

        T = {r: _resolved(tabs, shape, r, role_tables) for r in shape if r != "RC"}
        if any(t is None for t in T.values()) or np.prod([float(len(t)) for t in T.values()]) > DIVIDERS_AT_ONCE:
            return out  # only small shapes: the check runs for every band of the search
        if not any(len(idx["RE"]) for idx in candidate_sets(ctx, T, collector=False)):
            return None
    return out

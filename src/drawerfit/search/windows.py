"""Windows of the search: the nominal band of the distance D, sorted sums of two emitter tables,
and chunking helpers.  Shared by ``joins`` (which applies them) and ``engine`` (which sets them)."""

from __future__ import annotations

import numpy as np

from .judge import SearchContext

__all__ = ["Band", "SumIndex", "groups", "vth", "SLACK", "CHUNK", "SUM_INDEX_MAX", "DIVIDER_CACHE", "EMITTER_FIRST"]

SLACK = 1e-9  # relative slack of every bound, so that rounding never rejects a set the judgement accepts
CHUNK = 400_000  # sets handled at once: bounds memory
SUM_INDEX_MAX = 6_000_000  # (RE, RE2) pairs sorted by their sum at most (about 100 MB)
DIVIDER_CACHE = 3_000_000  # dividers kept between the bands of a search, all shapes together (about 200 MB)
EMITTER_FIRST = 8  # join (small divider part, RE) first when that is this many times smaller than the dividers


def vth(vcc, ra, rb):
    """(VTH, RTH) of the divider, RA on the emitter rail's far side."""
    return vcc * rb / (ra + rb), ra * rb / (ra + rb)


class Band:
    """The nominal windows that D < ``d`` implies (module docstring), for one transistor."""

    def __init__(self, ctx: SearchContext, d: float):
        from ..constants import NOMINAL_TEMP_C

        p, tr = ctx.problem, ctx.tr
        self.d = d
        centres = p.targets.centres()
        c, h = centres["ie"]
        self.i1, self.i2 = c - d * h, c + d * h
        self.g = None
        if "gain" in centres:
            cg, hg = centres["gain"]
            self.g = (cg - d * hg, cg + d * hg)
        self.vbe = tr.vbe + tr.vbe_tempco * (ctx.nominal.temp - NOMINAL_TEMP_C)
        self.b1 = tr.hfe + 1.0

    def ret(self, vcc: float, ra, rb) -> tuple[np.ndarray, np.ndarray]:
        """(N1, N2): the nominal RET must lie strictly between them, per divider (nominal values)."""
        v_th, rth = vth(vcc, ra, rb)
        a = v_th - self.vbe
        k = rth / self.b1
        with np.errstate(divide="ignore", invalid="ignore"):
            n1 = np.where(a > 0, a / self.i2 - k, np.where(self.i1 < 0, 0.0, np.inf))
            n2 = (np.where(a > 0, a / self.i1 - k, np.inf) if self.i1 > 0
                  else np.full(np.shape(a), np.inf))
        return n1 - np.abs(n1) * SLACK - SLACK, n2 * (1 + SLACK)


class SumIndex:
    """Every (RE, RE2) pair of two tables, sorted by the sum of their nominal values."""

    def __init__(self, RE, RE2):
        i = np.repeat(np.arange(len(RE), dtype=np.int32), len(RE2))
        j = np.tile(np.arange(len(RE2), dtype=np.int32), len(RE))
        s = RE.v[i] + RE2.v[j]
        order = np.argsort(s, kind="stable")
        self.s, self.i, self.j = s[order], i[order], j[order]

    @staticmethod
    def fits(RE, RE2) -> bool:
        return len(RE) * len(RE2) <= SUM_INDEX_MAX


def groups(counts: np.ndarray, limit: int) -> list[slice]:
    """Consecutive slices of owners whose counts add up to at most ``limit`` (one owner at least)."""
    if not len(counts):
        return []
    cum = np.cumsum(counts)
    out, start = [], 0
    while start < len(counts):
        base = cum[start - 1] if start else 0
        stop = int(np.searchsorted(cum, base + limit, side="right"))
        stop = max(stop, start + 1)
        out.append(slice(start, stop))
        start = stop
    return out



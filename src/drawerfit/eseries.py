"""IEC 60063 preferred numbers (E3 to E192): the vocabulary of "what to buy".

E3 to E24 are the tables of the standard as published (they depart from the rounded geometric
sequence at 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7 and 8.2, so they cannot be computed).  E48, E96 and
E192 are the geometric sequence 10**(i/n) rounded to three significant figures, with the one
published exception 9.20 (not 9.19) in E192.  Written from the standard's tables; the test suite
cross-checks them against the `eseries` package from the registry.
"""

from __future__ import annotations

import bisect
import math

_E24 = (1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0,
        3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1)
_E12 = _E24[::2]
_E6 = _E24[::4]
_E3 = _E24[::8]


def _geometric(n: int) -> tuple[float, ...]:
    values = [round(10 ** (i / n), 2) for i in range(n)]
    if n == 192:
        values[values.index(9.19)] = 9.20  # the published exception (IEC 60063)
    return tuple(values)


SERIES: dict[str, tuple[float, ...]] = {
    "E3": _E3, "E6": _E6, "E12": _E12, "E24": _E24,
    "E48": _geometric(48), "E96": _geometric(96), "E192": _geometric(192),
}

# Tolerance that goes with each series (IEC 60063, the usual pairing).
SERIES_TOLERANCE = {"E3": 0.4, "E6": 0.2, "E12": 0.1, "E24": 0.05, "E48": 0.02, "E96": 0.01, "E192": 0.005}


def series_values(name: str) -> tuple[float, ...]:
    """The mantissas of one decade, 1.0 <= m < 10, e.g. series_values('E12')."""
    try:
        return SERIES[name.upper()]
    except KeyError:
        raise ValueError(f"unknown E-series {name!r}; known: {', '.join(SERIES)}") from None


def decade_values(name: str, lo: float, hi: float) -> list[float]:
    """Every value of the series in [lo, hi] (SI units), in increasing order."""
    mant = series_values(name)
    out = []
    if lo <= 0 or hi < lo:
        return out
    for exp in range(math.floor(math.log10(lo)) - 1, math.floor(math.log10(hi)) + 2):
        for m in mant:
            v = float(f"{m}e{exp}")
            if lo * (1 - 1e-12) <= v <= hi * (1 + 1e-12):
                out.append(v)
    return out


def nearest(value: float, name: str = "E24") -> float:
    """The series value nearest to ``value`` in ratio (log distance)."""
    if value <= 0 or not math.isfinite(value):
        raise ValueError(f"no preferred value near {value!r}")
    exp = math.floor(math.log10(value))
    cands = decade_values(name, 10.0 ** (exp - 1), 10.0 ** (exp + 2))
    return min(cands, key=lambda v: abs(math.log(v / value)))


def neighbours(value: float, name: str = "E24") -> tuple[float, float]:
    """The series values just at or below and at or above ``value``."""
    exp = math.floor(math.log10(value))
    cands = decade_values(name, 10.0 ** (exp - 1), 10.0 ** (exp + 2))
    i = bisect.bisect_left(cands, value * (1 - 1e-12))
    below = cands[i] if i < len(cands) and math.isclose(cands[i], value, rel_tol=1e-12) else cands[i - 1]
    above = cands[i]
    return below, above

"""The physical parts of a role: their designators, how they are wired, what each one carries.

A role filled by a pair or triple (``equivalents``) is two or three parts on the board.  Each gets
its own designator, the role's with a letter in the arrangement's order (R1a, R1b, R1c: a, then
the pair b, c), and the schematic, the parts table, the netlist and the BOM all show them so.

Arrangements (the names of ``equivalents.FORM_NAMES``, electrical in both kinds):

======================  ===========================  ================================
arrangement             parts                        wiring between the role's ends
======================  ===========================  ================================
single                  a                            a
series                  a, b (, c)                   a, b (, c) one after the other
parallel                a, b (, c)                   every part across both ends
series-parallel         a, b, c                      a in series with (b ∥ c)
parallel-series         a, b, c                      a across both ends ∥ (b in series with c)
======================  ===========================  ================================
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["designators", "wiring", "shares", "Member", "members_of", "ARRANGEMENTS"]

ARRANGEMENTS = ("single", "series", "parallel", "series-parallel", "parallel-series")
_LETTERS = "abc"


def designators(role: str, count: int) -> list[str]:
    """'R1', 1 -> ['R1']; 'R1', 2 -> ['R1a', 'R1b']; up to three parts."""
    if not 1 <= count <= len(_LETTERS):
        raise ValueError(f"a role is made of one to three parts, not {count}")
    return [role] if count == 1 else [role + x for x in _LETTERS[:count]]


def wiring(arrangement: str, count: int) -> list[tuple[int, int]]:
    """For each part, in order, the two nodes it sits between: 0 and 1 are the role's own ends
    (0 the first node of the role in the netlist), 2 and 3 nodes inside the network."""
    if arrangement not in ARRANGEMENTS:
        raise ValueError(f"unknown arrangement {arrangement!r}; expected one of {', '.join(ARRANGEMENTS)}")
    if arrangement == "single" or count == 1:
        if count != 1:
            raise ValueError(f"a single part, not {count}")
        return [(0, 1)]
    if arrangement == "series":
        nodes = [0, *range(2, count + 1), 1]
        return [(nodes[i], nodes[i + 1]) for i in range(count)]
    if arrangement == "parallel":
        return [(0, 1)] * count
    if count != 3:
        raise ValueError(f"{arrangement} takes three parts, not {count}")
    if arrangement == "series-parallel":
        return [(0, 2), (2, 1), (2, 1)]
    return [(0, 1), (0, 2), (2, 1)]


def shares(kind: str, arrangement: str, values) -> list[float]:
    """The share each part takes, at nominal values, of the role's power (resistors) or of its
    DC voltage (capacitors, split by capacitance as docs/method.md assumes; leakage decides in a
    real chain of electrolytics).  A nodal solution of the network with 1 V across it."""
    import numpy as np

    values = [float(v) for v in values]
    edges = wiring(arrangement, len(values))
    # admittance of each part: 1/R carries the current, C the displacement charge
    y = [1.0 / v if kind == "resistor" else v for v in values]
    inner = sorted({n for e in edges for n in e if n >= 2})
    v_node = {0: 1.0, 1: 0.0}
    if inner:
        index = {n: i for i, n in enumerate(inner)}
        g = np.zeros((len(inner), len(inner)))
        rhs = np.zeros(len(inner))
        for (a, b), yk in zip(edges, y):
            for here, there in ((a, b), (b, a)):
                if here in index:
                    g[index[here], index[here]] += yk
                    if there in index:
                        g[index[here], index[there]] -= yk
                    else:
                        rhs[index[here]] += yk * v_node[there]
        for n, v in zip(inner, np.linalg.solve(g, rhs)):
            v_node[n] = float(v)
    across = [v_node[a] - v_node[b] for a, b in edges]
    if kind == "resistor":
        power = [u * u * yk for u, yk in zip(across, y)]
        total = sum(power)
        return [p / total for p in power]
    return [abs(u) for u in across]


@dataclass(frozen=True)
class Member:
    """One physical part of a role, with its designator, nodes in ``wiring``'s numbering, and
    share of the role's power or voltage."""

    designator: str
    value: float
    nodes: tuple[int, int]
    share: float
    tolerance: float | None = None
    rating: float | None = None
    location: str = ""
    row: object = None
    arrangement: str = "single"  # of the role the part belongs to


def members_of(role: str, kind: str, choice) -> list[Member]:
    """The physical parts of a ``design_file.RoleChoice`` (one part, the role itself, when it
    names none)."""
    placed = tuple(choice.parts) if choice is not None else ()
    if not placed:
        return []
    arrangement = choice.arrangement if len(placed) > 1 else "single"
    names = designators(role, len(placed))
    edges = wiring(arrangement, len(placed))
    share = shares(kind, arrangement, [p.value for p in placed])
    return [Member(n, p.value, e, s, getattr(p, "tolerance", None), getattr(p, "rating", None), p.location,
                   p.source.get("row"), arrangement) for n, p, e, s in zip(names, placed, edges, share)]

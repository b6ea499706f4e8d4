"""Mend a stage with the fewest changes: keep the board's parts where the stage still works.

``fewest_changes`` answers the repair question: the parts on the board (a spec's ``[parts]`` and
``[transistor]``) stay where they can, and the fewest roles (Q1 counted as a role) take a part from
the drawer so that every target and rating holds at the worst case.  Roles may be ``fixed`` (never
changed: a part that cannot be reached) or ``broken`` (always changed: the part is dead).

Method (docs/method.md, "Fewest changes"): for k = 0, 1, 2, ... the roles that change are every set
C of k roles among those neither fixed nor broken, plus the broken ones.  For each C one ordinary
search runs (``runner.run_search``) with the roles outside C restricted to their board part and the
roles in C to the drawer's candidates (and Q1, when in C, to the drawer's transistors).  The first k
with a design is the answer; among its sets C the usual objective decides.  Every search is exact,
so the answer is: no design changes fewer roles, and among those that change k, none is better by
the usual objective.  The number of searches is at most 2^roles (9 for the largest stage), fixed by
the circuit, not by the drawer.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass, field

from ..parts import Source, SpecError, Stock, StockLine
from .problem import DesignProblem
from .runner import BOARD_FILE, DesignChoice, run_search
from .tables import build_tables, with_default_ratings

__all__ = ["BOARD_FILE", "ChangeResult", "fewest_changes", "board_lines", "changed_roles"]


@dataclass
class ChangeResult:
    """What ``fewest_changes`` found: designs best first (fewest changed roles, then the usual
    objective), the roles each changes, and whether every search finished."""

    problem: DesignProblem
    designs: list
    changed: list  # per design: the roles it changes, in role order
    fixed: tuple
    broken: tuple
    searches: int = 0
    proven: bool = True
    tried_up_to: int = -1  # the largest number of changed roles searched
    notes: list = field(default_factory=list)

    @property
    def feasible(self) -> bool:
        return bool(self.designs)

    @property
    def best(self) -> DesignChoice | None:
        return self.designs[0] if self.designs else None

    @property
    def transistor_role(self) -> str:
        """The transistor's designator, as the circuit module names it (Q1)."""
        return self.problem.circuit.TRANSISTORS[0]

    @property
    def all_roles(self) -> tuple[str, ...]:
        """Every role a repair may change: the searched parts, then the transistor."""
        res, caps = self.problem.roles
        return (*res, *caps, self.transistor_role)


def board_lines(problem: DesignProblem, parts, transistor, start: int) -> tuple[dict, StockLine | None]:
    """Stock lines standing for the board's parts, one per role (index from ``start``), and for its
    transistor (None when the board's transistor is unknown); ``units`` of each, never pooled."""
    src = Source(BOARD_FILE, None, 0)
    out = {}
    for i, (role, p) in enumerate(sorted(parts.items())):
        kind = "capacitor" if role.startswith("C") else "resistor"
        out[role] = StockLine(index=start + i, kind=kind, value=p.value, qty=problem.units, source=src,
                              tolerance=p.tolerance, power=p.rating if kind == "resistor" else None,
                              voltage=p.rating if kind == "capacitor" else None, polarized=bool(p.polarized),
                              location="on the board", label=role)
    tr = None
    if transistor is not None:
        tr = StockLine(index=start + len(out), kind="transistor", value=None, qty=problem.units, source=src,
                       location="on the board", label=transistor.label or "board transistor",
                       polarity=transistor.polarity, hfe_min=transistor.hfe_min, hfe_max=transistor.hfe_max,
                       vceo=transistor.vceo, ic_max=transistor.ic_max, pd=transistor.pd, vbe=transistor.vbe,
                       vce_sat=transistor.vce_sat)
    return out, tr


def changed_roles(choice: DesignChoice, roles) -> list[str]:
    """The roles of ``choice`` not filled by the board's own part, in ``roles`` order."""
    out = []
    for r in roles:
        if r == choice.transistor_name:
            if choice.transistor.source.file != BOARD_FILE:
                out.append(r)
        elif any(ln.source.file != BOARD_FILE for ln in choice.roles[r].equivalent.members):
            out.append(r)
    return out


def fewest_changes(problem: DesignProblem, stock: Stock, parts, transistor, *, fixed=(), broken=(), top: int = 1,
                   exhaustive: bool = False, max_changes: int | None = None, budget=None) -> ChangeResult:
    """The designs that keep the most of the board (``parts``: role -> stages.Part, ``transistor``:
    its TransistorModel or None) and change the rest from ``stock``; see the module docstring.

    ``max_changes`` stops after that many changed roles (None: up to every role).  ``budget`` is each
    search's (sets, steps) budget (default ``engine``'s)."""
    res_roles, cap_roles = problem.roles
    trole = problem.circuit.TRANSISTORS[0]
    roles = (*res_roles, *cap_roles, trole)
    fixed, broken = tuple(fixed), tuple(broken)
    _check_marks(roles, trole, parts, transistor, fixed, broken)
    missing = tuple(r for r in roles if r != trole and r not in parts)
    if transistor is None:
        missing += (trole,)
    must = tuple(r for r in roles if r in broken or r in missing)
    free = tuple(r for r in roles if r not in must and r not in fixed)
    problem = problem.with_(label=None)

    lines, notes = with_default_ratings(stock.lines)
    start = max((ln.index for ln in lines), default=-1) + 1
    on_board, board_tr = board_lines(problem, {r: p for r, p in parts.items() if r in roles}, transistor, start)
    on_board, notes2 = _defaulted(on_board)
    drawer_trs = [ln for ln in lines if ln.kind == "transistor"]
    passive = [ln for ln in lines if ln.kind != "transistor"]
    from .pools import Pools

    own = Pools.build(passive).search_lines(passive)
    drawer = {k: build_tables([ln for ln in own if ln.kind == k], k, problem.max_parts, problem.units)
              for k in ("resistor", "capacitor")}
    board = {r: build_tables([ln], ln.kind, 1, problem.units) for r, ln in on_board.items()}

    out = ChangeResult(problem, [], [], fixed, broken, notes=list(notes) + notes2)
    if missing:
        out.notes.append(f"not given in [parts], so fitted new: {', '.join(missing)}")
    found: list[tuple] = []
    limit = len(free) if max_changes is None else min(len(free), max(0, max_changes - len(must)))
    for k in range(0, limit + 1):
        for extra in itertools.combinations(free, k):
            changed = set(must) | set(extra)
            rt = {r: drawer["resistor"] if r in changed else board[r] for r in res_roles}
            ct = {r: drawer["capacitor"] if r in changed else board[r] for r in cap_roles}
            trs = drawer_trs if trole in changed else [board_tr]
            st: dict = {}
            got, _, _ = run_search(problem, passive + list(on_board.values()) + trs, top, exhaustive,
                                   stats_out=st, tables=(rt, ct), budget=budget)
            out.searches += 1
            out.proven &= not st.get("truncated")
            found += [(len(changed), d.key, d) for d in got]
        out.tried_up_to = k + len(must)
        if found:
            break
    found.sort(key=lambda t: (t[0], t[1]))
    out.designs = [d for _, _, d in found[:top]]
    out.changed = [changed_roles(d, roles) for d in out.designs]
    return out


def _check_marks(roles, trole, parts, transistor, fixed, broken) -> None:
    for name, marked in (("fixed", fixed), ("broken", broken)):
        bad = [r for r in marked if r not in roles]
        if bad:
            raise SpecError(f"{name}: this stage has no role {', '.join(bad)} (roles: {', '.join(roles)})")
    both = sorted(set(fixed) & set(broken))
    if both:
        raise SpecError(f"{', '.join(both)} cannot be both fixed and broken")
    unknown = [r for r in fixed if (r == trole and transistor is None) or (r != trole and r not in parts)]
    if unknown:
        raise SpecError(f"fixed: {', '.join(unknown)} is not given in [parts]/[transistor], so it cannot stay")
    extra = sorted(set(parts) - set(roles))
    if extra:
        raise SpecError(f"[parts] has {', '.join(extra)}, which the design search does not handle for this stage "
                        "(an RE2 without a bypass capacitor CE is analysed, not designed)")


def _defaulted(on_board: dict) -> tuple[dict, list]:
    """The board's lines with the documented default rating where the spec gives none."""
    out, notes = {}, []
    for r, ln in on_board.items():
        (new,), said = with_default_ratings([ln])
        out[r] = new
        if said:
            unit = "W" if new.kind == "resistor" else "V"
            notes.append(f"[parts] {r}: no rating given; the search takes the documented default "
                         f"{new.rating:g} {unit} for it")
    return out, notes


"""`drawerfit design SPEC --stock FILE --keep`: mend a board with the fewest part changes.

The answer reads like a repair note: which designators change, from what to what, where the new
parts are in the drawer, the stage's figures before and after, and the cautions (repairs are where
people get hurt).
"""

from __future__ import annotations

import math

import click

from ..parts import NoDesignError, SearchLimitError, SpecError
from ..values import format_si
from ..repair.mend import FIGURES, figure_rows, not_met
from .common import emit_json

__all__ = ["run_keep", "check_keep_options"]

def _roles_arg(text: str | None) -> tuple[str, ...]:
    if not text:
        return ()
    return tuple(r.strip().upper() for r in text.replace(";", ",").split(",") if r.strip())


def run_keep(spec_file: str, stock_file: str, *, fixed: str | None, broken: str | None, units: int = 1,
             max_parts: int = 2, guarantee: str = "worst-case", prefer: str = "fewest-parts", top: int = 1,
             as_json: bool = False, exhaustive: bool = False, quiet: bool = False, strict: bool = False,
             budget: float = 1.0) -> None:
    from .. import api
    from .common import report_problems

    stock = api.load_stock(stock_file, strict=strict)
    if not quiet:
        report_problems(stock)
    from ..io.spec import load_spec

    spec = load_spec(spec_file, stock=stock, label_may_be_absent=True)  # the board's Q1 need not be in the drawer
    note = api.mend(spec, stock, fixed=_roles_arg(fixed), broken=_roles_arg(broken), units=units,
                    max_parts=max_parts, guarantee=guarantee, prefer=prefer, top=top, exhaustive=exhaustive,
                    budget=budget)
    if as_json:
        emit_json(note.to_dict())
    else:
        _print(note)
    if not note.result.feasible:
        if note.design_result is not None and note.design_result.stats.get("truncated"):
            raise SearchLimitError("no repair was found before the search's work budget ran out (exit status 5)")
        raise NoDesignError("no change of parts from the drawer restores the stage (exit status 3)")
    if not note.result.proven:
        raise SearchLimitError("a search stopped at its work budget: the repair shown is the best found, "
                               "not proven the fewest changes (exit status 5)")


def _fmt(x, unit: str) -> str:
    if x is None or not math.isfinite(float(x)):
        return "-"
    return format_si(float(x), unit, 4) if unit else f"{float(x):.4g}"


def _range(row, unit: str, end: str) -> str:
    nom, lo, hi = row
    if end == "low":
        return f"{_fmt(nom, unit)} (worst {_fmt(lo, unit)})"
    if end == "high":
        return f"{_fmt(nom, unit)} (worst {_fmt(hi, unit)})"
    return f"{_fmt(nom, unit)} ({_fmt(lo, unit)} … {_fmt(hi, unit)})"


def _print(note) -> None:
    r, spec = note.result, note.spec
    p = r.problem
    head = f"Repair of {spec.title or spec.path}: {p.topology} {p.polarity.upper()} on {format_si(p.supply, 'V')}"
    click.echo(head)
    marks = []
    if r.fixed:
        marks.append(f"fixed (never changed): {', '.join(r.fixed)}")
    if r.broken:
        marks.append(f"broken (always replaced): {', '.join(r.broken)}")
    if marks:
        click.echo("  " + "; ".join(marks))
    if not r.feasible:
        click.echo(f"No repair from the drawer: no change of up to {r.tried_up_to} role(s) meets every target "
                   "and rating at the worst case" + ("" if r.proven else " (not proven: a search stopped at its budget)"))
        if note.design_result is not None:
            from .design_cmd import _print_infeasible

            click.echo("With every part chosen afresh:")
            _print_infeasible(note.design_result)
        _cautions(note)
        return
    best, changed = r.best, r.changed[0]
    proven = "proven the fewest" if r.proven else "the fewest found, not proven"
    click.echo(f"Change {len(changed)} of {len(r.all_roles)} roles ({proven}; "
               f"{r.searches} searches); keep the rest as they are on the board.")
    click.echo("  Change:")
    for role in changed:
        click.echo(f"    {role:4} {note.was(role):28} ->  {note.now(role)}")
    kept = [x for x in r.all_roles if x not in changed]
    if kept:
        click.echo(f"  Keep: {', '.join(kept)}")
    for role in changed:
        if role == r.transistor_role:
            continue
        c = best.roles[role]
        if c.orientation:
            click.echo(f"  {role} is polarized: fit it {c.orientation.replace('+ to', 'with the + end toward')}")
    click.echo("")
    click.echo("Figures (nominal, and worst case over tolerances, hFE and ambient):")
    click.echo(f"  {'':12} {'before (board as given)':36} after")
    after = figure_rows(note.after)
    before = figure_rows(note.before) if note.before is not None else None
    for name, label, unit, end in FIGURES:
        b = _range(before[name], unit, end) if before is not None else "-"
        click.echo(f"  {label:12} {b:36} {_range(after[name], unit, end)}")
    if note.before is not None:
        click.echo(f"  checks not met before: {', '.join(not_met(note.before)) or 'none'}")
    click.echo(f"  checks not met after: {', '.join(not_met(note.after)) or 'none'}")
    advice = [c.message for c in note.after.checks if c.ok is False and c.kind == "advice"]
    for a in advice:
        click.echo(f"  advice after: {a}")
    click.echo("")
    click.echo("Worst-case margins after the repair:")
    from .design_cmd import margin_lines

    for line in margin_lines(best.target_margins):
        click.echo(line)
    if len(r.designs) > 1:
        click.echo("")
        click.echo("Other repairs:")
        for i, (d, ch) in enumerate(zip(r.designs[1:], r.changed[1:]), 2):
            vals = ", ".join(f"{x}={d.roles[x].equivalent.describe() if x != r.transistor_role else d.transistor.label}"
                             for x in ch)
            click.echo(f"  {i}. change {len(ch)}: {vals}")
    _cautions(note)
    for n in r.notes:
        click.echo(f"note: {n}", err=True)


def _cautions(note) -> None:
    click.echo("")
    click.echo("Cautions:")
    for c in note.cautions:
        click.echo(f"  * {c.text}")


def check_keep_options(save, report) -> None:
    if save is not None or report is not None:
        raise SpecError("--keep does not write --save or --report yet: the repair note lists the parts to "
                        "take; run `drawerfit take` on a design saved without --keep, or take them by hand")

"""`drawerfit kit`: read the list and the stock, allocate, print text or JSON, and save for `take`."""

from __future__ import annotations

import click

from ..kits.result import RATING_UNIT, how_made, part_text
from ..parts import UNIT_OF_KIND
from ..texttable import text_table
from ..values import format_si
from .common import emit_json, load_stock_reporting, report_problem_list, stock_summary


def run_kit_cmd(parts_list: str, stock_file: str, *, units: int, max_parts: int, time_limit: float,
                as_json: bool, save: str | None = None, strict: bool = False) -> None:
    from .. import api

    if save is not None:  # before any work: the saved kit may replace neither input
        from ..io.files import check_output

        check_output(save, [(parts_list, "the parts list"), (stock_file, "the stock file")], "kit")
    kit_list = api.load_parts_list(parts_list)
    report_problem_list([p for p in kit_list.problems if p.severity != "error"])
    stock = load_stock_reporting(stock_file, strict)
    result = api.kit(kit_list, stock, units=units, max_parts=max_parts, time_limit=time_limit)
    if as_json:
        emit_json(result.to_dict())
    else:
        click.echo(format_kit(result))
        for line in stock_summary(stock):
            click.echo(line)
    if save is not None:
        api.save_kit(result, save)
        if not as_json:
            click.echo(f"saved: {save} (take the parts with: drawerfit take {save} --stock {stock_file})")


def serves_text(entry: dict, units: int) -> str:
    """'R1, R2 (all 10 units)'; 'R6 (10 units), R7 (1 of 10 units)'; 'C3 (5 of 10 units only; C3 is not filled)'."""
    serves = entry.get("serves", ())
    if all(sv["filled"] and sv["units"] == units for sv in serves):
        names = ", ".join(sv["designator"] for sv in serves)
        return f"{names} (all {units} units)" if units > 1 else names
    items = []
    for sv in serves:
        d, u = sv["designator"], sv["units"]
        if not sv["filled"]:
            items.append(f"{d} ({u} of {units} units only; {d} is not filled)")
        else:
            items.append(f"{d} ({u} units)" if u == units else f"{d} ({u} of {units} units)")
    return ", ".join(items)




def format_kit(r) -> str:
    """The result for people: what is filled from where, what is missing and why, what to buy, and the
    pick list with the designators each line is for."""
    total = len(r.filled) + len(r.unfilled)
    out = [f"{len(r.filled)} of {total} designators filled from the drawer for {r.units} unit(s)"
           f" ({'proven optimal' if r.optimal else 'best found, not proven optimal: see the notes for why'})"]
    if r.filled:
        out += ["", "from the drawer:"]
        rows = []
        for f in r.filled:
            for b in f.builds:
                eq = b.equivalent
                unit = UNIT_OF_KIND.get(f.line.kind)
                val = format_si(eq.value, unit) if eq.value is not None else f.line.label
                where = " + ".join(f"{n}× {part_text(s)} [{s.location or 'row ' + str(s.source.row)}]"
                                   for s, n in eq.uses)
                share = "" if b.units == r.units else f"  ({b.units} of {r.units} units)"
                rows.append([f.designator, f.line.value_text(), "->", val, how_made(eq, f.line), where + share])
        out += text_table(["", "wanted", "", "made", "of", "parts per unit [bin]"], rows, "<><><<")
    if r.unfilled:
        out += ["", "not filled:"]
        rows = []
        for u in r.unfilled:
            covered = u.units_covered
            drawer = (f"partly covered: {covered} of {r.units} units from the drawer (on the pick list),"
                      f" {r.units - covered} to buy" if covered else f"none of the {r.units} units from the drawer")
            rows.append([u.designator, u.line.value_text(), f"{drawer}; {u.reason}"])
        out += text_table(["", "wanted", "why"], rows, "<><")
    if r.buy:
        out += ["", "to buy (standard values):"]
        rows = []
        for b in r.buy:
            val = format_si(b.value, UNIT_OF_KIND[b.kind]) if b.value is not None else b.label
            rating = format_si(b.rating, RATING_UNIT.get(b.kind)) if b.rating is not None else "any"
            series = f" ({b.series})" if b.series else ""
            rows.append([val, rating, b.per_unit, b.count, f"{', '.join(b.designators)}{series}"])
        out += text_table(["value", "rating", "per unit", "total", "for"], rows, ">>>><")
    if r.pick:
        out += ["", "pick list (take these from the drawer):"]
        sheets = any(p["source"].get("sheet") for p in r.pick)
        rows = []
        for p in r.pick:
            src = p["source"]
            row = [src.get("sheet") or ""] if sheets else []
            rows.append(row + [p["location"] or "-", src["row"], p["part"], p["count"], serves_text(p, r.units)])
        head = (["sheet"] if sheets else []) + ["bin", "row", "part", "take", "for"]
        out += text_table(head, rows, ("<" if sheets else "") + "<><><")
    for n in r.notes:
        out.append(f"note: {n}")
    for c in r.cautions:
        out.append(f"caution: {c}")
    return "\n".join(out)

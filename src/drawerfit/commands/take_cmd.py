"""`drawerfit take`: subtract a pick list from the stock file, list the takes, or undo them."""

from __future__ import annotations

from pathlib import Path

import click

from ..parts import DrawerfitError
from ..texttable import text_table
from .common import emit_json


def run_take_cmd(pick_file: str | None, stock_file: str, *, units: int | None, dry_run: bool,
                 undo_to: str | None, show_history: bool, as_json: bool) -> None:
    from .. import api

    if show_history:
        if pick_file is not None or undo_to is not None:
            raise DrawerfitError("--history lists the takes; give it no design or kit file and no --undo")
        records = api.history(stock_file)
        if as_json:
            emit_json({"stock_file": stock_file, "takes": [r.to_dict() for r in records]})
        else:
            click.echo(format_history(stock_file, records))
        return
    if undo_to is not None:
        if pick_file is not None:
            raise DrawerfitError(f"--undo takes no design or kit file ({pick_file}): it puts back takes logged"
                                 " for the stock file (see --history)")
        if units is not None:
            raise DrawerfitError("--undo puts back whole takes; --units does not apply")
        results = api.undo(stock_file, to=None if undo_to == "last" else undo_to, dry_run=dry_run)
    else:
        if pick_file is None:
            raise DrawerfitError("name the saved design (TOML) or kit (JSON) to take, or use --undo or --history")
        results = [api.take(pick_file, stock_file, units=units, dry_run=dry_run)]
    if as_json:
        out = [r.to_dict() for r in results]
        # the last step as before, and with --undo every step put back (newest first)
        emit_json({**out[-1], "steps": out} if undo_to is not None else out[0])
    else:
        click.echo("\n".join(format_result(r) for r in results))


def format_result(result) -> str:
    """What a take or undo did (or would do), for people: one aligned row per quantity cell."""
    plan = result.plan
    name = Path(plan.stock_file).name
    undoing = result.undone is not None
    if undoing:
        head = "would put back" if result.dry_run else "put back"
        lines = [f"{head} the take {result.undone} on {plan.stock_file}:"]
    else:
        head = "would take" if result.dry_run else "took"
        lines = [f"{head} parts for {plan.units} unit(s) from {plan.stock_file}:"]
    sheets = any(c.sheet for c in plan.changes)
    rows = []
    for c in plan.changes:
        before, after = (c.new_qty, c.old_qty) if undoing else (c.old_qty, c.new_qty)
        row = [c.sheet or ""] if sheets else []
        rows.append(row + [c.row, c.part, c.location or "-", f"{before} -> {after}", f"{after - before:+d}"])
    header = (["sheet"] if sheets else []) + ["row", "part", "bin", "quantity", "change"]
    align = ("<" if sheets else "") + "><<>>"
    lines += text_table(header, rows, align)
    lines.extend(f"note: {n}" for n in result.notes)
    if result.dry_run:
        lines.append(f"dry run: {name} was not changed")
    else:
        if result.backup:
            lines.append(f"backup: {Path(result.backup).name}")
        if result.log:
            lines.append(f"logged in: {Path(result.log).name}")
    return "\n".join(lines)


def format_history(stock_file, records) -> str:
    """The takes logged for a stock file, one aligned row each."""
    if not records:
        return f"no takes logged for {stock_file}"
    rows = [[r.number, r.when, Path(r.source).name, r.units, r.parts, r.state] for r in records]
    lines = [f"takes logged for {stock_file} (times in UTC; undo with --undo, or --undo N to go back to take N):"]
    lines += text_table(["#", "when", "from", "units", "parts", "state"], rows, "><<>><")
    return "\n".join(lines)

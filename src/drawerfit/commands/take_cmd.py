"""`drawerfit take`: subtract a pick list from the stock file, or undo the last take."""

from __future__ import annotations

import click

from ..parts import DrawerfitError


def run_take_cmd(pick_file: str | None, stock_file: str, *, units: int | None, dry_run: bool, undo: bool,
                 as_json: bool) -> None:
    from ..cli import emit_json
    from ..take import format_result, take, undo as undo_take

    if undo:
        if pick_file is not None:
            raise DrawerfitError("--undo takes no design or kit file: it puts back the last take logged"
                                 " for the stock file")
        if units is not None:
            raise DrawerfitError("--undo puts back the whole last take; --units does not apply")
        result = undo_take(stock_file, dry_run=dry_run)
    else:
        if pick_file is None:
            raise DrawerfitError("name the saved design (TOML) or kit (JSON) to take, or use --undo")
        result = take(pick_file, stock_file, units=units, dry_run=dry_run)
    if as_json:
        emit_json({"stock_file": result.plan.stock_file, "dry_run": result.dry_run, "undone": result.undone,
                   "units": result.plan.units, "changes": [c.to_dict() for c in result.plan.changes],
                   "backup": result.backup, "log": result.log, "checksum_before": result.plan.checksum,
                   "checksum_after": result.checksum_after, "notes": list(result.notes)})
    else:
        click.echo(format_result(result))

"""`drawerfit take`: subtract a pick list from the stock file, list the takes, or undo them."""

from __future__ import annotations

import click

from ..parts import DrawerfitError


def run_take_cmd(pick_file: str | None, stock_file: str, *, units: int | None, dry_run: bool,
                 undo_to: str | None, show_history: bool, as_json: bool) -> None:
    from ..cli import emit_json
    from ..io.take import format_result, take

    if show_history:
        from ..io.take_history import format_history, history

        if pick_file is not None or undo_to is not None:
            raise DrawerfitError("--history lists the takes; give it no design or kit file and no --undo")
        records = history(stock_file)
        if as_json:
            emit_json({"stock_file": stock_file, "takes": [r.to_dict() for r in records]})
        else:
            click.echo(format_history(stock_file, records))
        return
    if undo_to is not None:
        from ..io.take_history import undo_takes

        if pick_file is not None:
            raise DrawerfitError(f"--undo takes no design or kit file ({pick_file}): it puts back takes logged"
                                 " for the stock file (see --history)")
        if units is not None:
            raise DrawerfitError("--undo puts back whole takes; --units does not apply")
        results = undo_takes(stock_file, to=None if undo_to == "last" else undo_to, dry_run=dry_run)
    else:
        if pick_file is None:
            raise DrawerfitError("name the saved design (TOML) or kit (JSON) to take, or use --undo or --history")
        results = [take(pick_file, stock_file, units=units, dry_run=dry_run)]
    if as_json:
        out = [{"stock_file": r.plan.stock_file, "dry_run": r.dry_run, "undone": r.undone, "units": r.plan.units,
                "changes": [c.to_dict() for c in r.plan.changes], "backup": r.backup, "log": r.log,
                "checksum_before": r.plan.checksum, "checksum_after": r.checksum_after, "notes": list(r.notes)}
               for r in results]
        # the last step as before, and with --undo every step put back (newest first)
        emit_json({**out[-1], "steps": out} if undo_to is not None else out[0])
    else:
        click.echo("\n".join(format_result(r) for r in results))

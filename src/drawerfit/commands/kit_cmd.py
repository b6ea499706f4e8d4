"""`drawerfit kit`: read the list and the stock, allocate, print text or JSON."""

from __future__ import annotations

import click


def run_kit_cmd(parts_list: str, stock_file: str, *, units: int, max_parts: int, time_limit: float,
                as_json: bool) -> None:
    from ..cli import emit_json
    from ..kit import format_kit, kit_to_json, run_kit

    result = run_kit(parts_list, stock_file, units=units, max_parts=max_parts, time_limit=time_limit)
    for w in result.warnings:
        click.echo(f"warning: {w}", err=True)
    if as_json:
        emit_json(kit_to_json(result))
    else:
        click.echo(format_kit(result))

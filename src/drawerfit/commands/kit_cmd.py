"""`drawerfit kit`: read the list and the stock, allocate, print text or JSON, and save for `take`."""

from __future__ import annotations

import click


def run_kit_cmd(parts_list: str, stock_file: str, *, units: int, max_parts: int, time_limit: float,
                as_json: bool, save: str | None = None, strict: bool = False) -> None:
    from ..cli import emit_json
    from ..kit.fill import format_kit, kit_to_json, run_kit
    from ..kit.parts_list import read_kit_list
    from .common import load_stock_reporting, report_problem_list, stock_summary

    if save is not None:  # before any work: the saved kit may replace neither input
        from ..io.files import check_output

        check_output(save, [(parts_list, "the parts list"), (stock_file, "the stock file")], "kit")
    kit_list = read_kit_list(parts_list)
    report_problem_list([p for p in kit_list.problems if p.severity != "error"])
    stock = load_stock_reporting(stock_file, strict)
    result = run_kit(parts_list, stock_file, units=units, max_parts=max_parts, time_limit=time_limit,
                     stock=stock, kit_list=kit_list)
    doc = kit_to_json(result)
    if as_json:
        emit_json(doc)
    else:
        click.echo(format_kit(result))
        for line in stock_summary(stock):
            click.echo(line)
    if save is not None:
        import json

        from ..io.files import atomic_write

        atomic_write(save, json.dumps(doc, indent=2, ensure_ascii=False, allow_nan=False) + "\n")
        if not as_json:
            click.echo(f"saved: {save} (take the parts with: drawerfit take {save} --stock {stock_file})")

"""`drawerfit stock`: load a stock file and summarise it."""

from __future__ import annotations

import click

from ..parts import UNIT_OF_KIND as UNIT
from ..values import format_si
from .common import emit_json, load_stock_reporting, stock_summary


def run_stock(file: str, *, as_json: bool, strict: bool) -> None:
    stock = load_stock_reporting(file, strict)
    if as_json:
        emit_json(stock.to_dict())
        return
    click.echo(f"{file}: {len(stock.lines)} stock lines")
    for kind, entry in stock.summary().items():
        empty = f", {entry['empty_lines']} empty" if entry["empty_lines"] else ""
        click.echo(f"  {kind}s: {entry['lines']} lines, {entry['parts']} parts{empty}")
        if "min" in entry:
            unit = UNIT[kind]
            decades = "  ".join(f"{format_si(10.0 ** int(d), unit, 3)}+: {n}" for d, n in entry["decades"].items())
            click.echo(f"    from {format_si(entry['min'], unit)} to {format_si(entry['max'], unit)}")
            click.echo(f"    lines per decade: {decades}")
        if "types" in entry:
            click.echo(f"    types: {', '.join(entry['types'])}")
    errors = [p for p in stock.problems if p.severity == "error"]
    if errors:
        click.echo(f"  {len(errors)} line(s) could not be read and were skipped (listed on stderr)")
    for line in stock_summary(stock):
        click.echo(f"  {line}")

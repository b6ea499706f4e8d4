"""Pieces the commands share: loading stock with its messages, and JSON for parts."""

from __future__ import annotations

import click

from ..parts import Stock, StockLine
from ..values import format_code, format_si


def load_stock_reporting(path: str, strict: bool) -> Stock:
    """Load a stock file and print its problems on stderr (StockError under --strict)."""
    from ..stock import load_stock

    stock = load_stock(path, strict=strict)
    report_problems(stock)
    return stock


def report_problems(stock: Stock) -> None:
    """Each line skipped and each note, on stderr, in the one form every command uses."""
    report_problem_list(stock.problems)


def report_problem_list(problems) -> None:
    for p in problems:
        tag = "skipped" if p.severity == "error" else "note"
        click.echo(f"drawerfit: {tag}: {p}", err=True)


def stock_summary(stock: Stock, kind: str | None = None, assumptions: bool = True) -> list[str]:
    """The lines every command's summary ends with (stdout): warnings about what changes results,
    then the defaults applied (to lines of ``kind`` only, when given)."""
    out = [f"warning: {w}" for w in stock.warnings]
    if assumptions:
        out += [f"assumed: {a}" for a in stock.assumptions if kind is None or f" {kind} line" in a]
    return out


def part_json(line: StockLine) -> dict:
    unit = "ohm" if line.kind == "resistor" else "F" if line.kind == "capacitor" else None
    return {"kind": line.kind, "value": line.value, "label": line.label or None,
            "code": format_code(line.value, unit) if unit and line.value else None,
            "location": line.location, "source": line.source.to_dict()}


def part_text(line: StockLine) -> str:
    unit = "ohm" if line.kind == "resistor" else "F"
    where = f" @{line.location}" if line.location else ""
    return f"{format_code(line.value, unit)}{where} (row {line.source.row})"


def rating_text(kind: str, rating: float) -> str:
    return format_si(rating, "W" if kind == "resistor" else "V", 3)

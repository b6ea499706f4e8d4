"""Pieces the commands share: JSON on stdout, loading stock with its messages, and the words for ratings."""

from __future__ import annotations

import json

import click

from ..parts import Stock
from ..results import rating_text  # noqa: F401  (the one wording of a rating; the commands take it from here)


def emit_json(data) -> None:
    """``data`` (a result's ``to_dict()``) as JSON on stdout: SI floats, no NaN."""
    click.echo(json.dumps(data, indent=2, ensure_ascii=False, allow_nan=False))


def load_stock_reporting(path: str, strict: bool) -> Stock:
    """Load a stock file and print its problems on stderr (StockError under --strict)."""
    from .. import api

    stock = api.load_stock(path, strict=strict)
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

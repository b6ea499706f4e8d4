"""`drawerfit match`: substitutes for one value from the drawer."""

from __future__ import annotations

import click

from ..values import Quantity, format_code, format_si
from .common import emit_json, rating_text, report_problems, stock_summary


def run_match(value: Quantity, stock_file: str, *, within, max_parts, power, voltage, units, top, as_json, strict,
              allow_polarized_series=False):
    from .. import api

    result = api.match(value, stock_file, within=within, max_parts=max_parts, power=power, voltage=voltage,
                       units=units, top=top, allow_polarized_series=allow_polarized_series, strict=strict)
    report_problems(result.stock)
    if as_json:
        emit_json(result.to_dict())
        return
    unit = "ohm" if result.kind == "resistor" else "F"
    _print_table(result, result.kind, unit, result.min_rating, result.stock)


def _error_text(err: float) -> str:
    """'+0.25 %', and for results far off '×3.2' (a percentage of thousands says nothing)."""
    return f"{err * 100:+.2f} %" if abs(err) < 10 else f"×{1 + err:.3g}"


def _bin(line, n: int) -> str:
    return f"{line.location or 'row ' + str(line.source.row)} ×{n}"


def _on_hand(c, unit: str) -> str:
    """'43 in A1 ×20, A2 ×10, A3 ×5, A4 ×8', per part the equivalent uses."""
    parts = []
    for h in c.holdings:
        bins = ", ".join(_bin(b, b.qty) for b in h.bins)
        name = f"{format_code(h.line.value, unit)}: " if len(c.holdings) > 1 else ""
        parts.append(f"{name}{h.on_hand} in {bins}")
    return "; ".join(parts)


def _rows(cands, kind, unit, start: int | None):
    rows = []
    for n, c in enumerate(cands, start or 1):
        eq = c.equivalent
        rows.append([n if start else "", format_si(eq.value, unit, 4), _error_text(c.error),
                     f"{eq.tolerance * 100:.1f} %", rating_text(kind, eq.rating), eq.describe(), _on_hand(c, unit)])
    return rows


def _print_table(result, kind, unit, rating, stock) -> None:
    from ..texttable import text_table

    need = f", at least {rating_text(kind, rating)}" if rating else ""
    per = f" for {result.units} units" if result.units > 1 else ""
    window = f"±{result.within * 100:g} %"
    click.echo(f"Target {format_si(result.target, unit)} ({format_code(result.target, unit)}) "
               f"within {window}{need}{per}; up to {result.max_parts} parts")
    header = ["#", "makes", "error", "tol", "rating", "made of", "on hand (bins)"]
    align = ">>>>><<"
    inside, outside = result.inside, result.outside
    if inside:
        lines = text_table(header, _rows(inside, kind, unit, 1), align)
        click.echo(lines[0])
        for c, line in zip(inside, lines[1:]):
            click.echo(line)
            if result.units > 1:
                click.echo(f"       take for {result.units} units: {', '.join(_bin(b, n) for b, n in c.draws)}")
            for w in c.warnings:
                click.echo(f"       caution: {w}")
    else:
        what = f"nothing in the drawer makes it within {window}{need}{per}"
        click.echo(f"  {what} (pooling every bin of each part)" if result.units > 1 else f"  {what}")
    if outside:
        click.echo(f"  Nearest outside the {window} window (not substitutes at that window; widen --within to"
                   " accept one):")
        for line in text_table(header[1:], [r[1:] for r in _rows(outside, kind, unit, None)], align[1:],
                               indent="    "):
            click.echo(line)
    if not inside and not outside:
        click.echo("  nothing in the drawer can be used (check the stock quantities and ratings)")
    for line in stock_summary(stock, kind):
        click.echo(f"  {line}")

"""`drawerfit match`: substitutes for one value from the drawer."""

from __future__ import annotations

import click

from ..parts import StockError
from ..values import Quantity, format_code, format_si
from .common import load_stock_reporting, part_json, part_text, rating_text


def run_match(value: Quantity, stock_file: str, *, within, max_parts, power, voltage, units, top, as_json, strict,
              allow_polarized_series=False):
    from ..search.match import DEFAULT_WINDOW, match

    unit = value.unit or "ohm"
    if unit not in ("ohm", "F"):
        raise StockError(f"match: {format_si(value.value, unit)} is not a resistance or a capacitance")
    kind = "resistor" if unit == "ohm" else "capacitor"
    if value.value <= 0:
        raise StockError("match: the value must be positive")
    rating = power.value if power is not None else None
    if kind == "capacitor":
        if power is not None:
            raise StockError("match: --power applies to resistors; use --voltage for capacitors")
        rating = voltage.value if voltage is not None else None
    elif voltage is not None:
        raise StockError("match: --voltage applies to capacitors; use --power for resistors")
    stock = load_stock_reporting(stock_file, strict)
    lines = stock.of_kind(kind)
    window = DEFAULT_WINDOW if within is None else within
    result = match(lines, value.value, within=window, max_parts=max_parts, min_rating=rating, units=units, top=top,
                   allow_polarized_series=allow_polarized_series)
    rating_key = "power" if kind == "resistor" else "voltage"
    if as_json:
        from ..cli import emit_json

        emit_json({
            "target": {"value": value.value, "kind": kind, "within": window, rating_key: rating, "units": units,
                       "max_parts": max_parts},
            "results": [{
                "value": c.equivalent.value, "error": c.error, "arrangement": c.equivalent.arrangement,
                "part_count": c.equivalent.part_count, "within": c.within, "tolerance": c.equivalent.tolerance,
                rating_key: c.equivalent.rating, "describe": c.equivalent.describe(),
                "parts": [part_json(m) for m in c.equivalent.members],
                "warnings": _warnings(c.equivalent),
            } for c in result.candidates],
            "assumptions": list(stock.assumptions),
            "problems": [p.to_dict() for p in stock.problems],
        })
        return
    _print_table(result, kind, unit, rating, stock)


def _warnings(eq) -> list[str]:
    out = []
    if eq.polarized_series:
        out.append("a polarized capacitor in a series chain: its DC share follows leakage, not capacitance; "
                   "fit a balancing resistor across each part and check each one's voltage")
    return out


def _print_table(result, kind, unit, rating, stock) -> None:
    need = f", at least {rating_text(kind, rating)}" if rating else ""
    per = f" for {result.units} units" if result.units > 1 else ""
    click.echo(f"Target {format_si(result.target, unit)} ({format_code(result.target, unit)}) "
               f"within ±{result.within * 100:g} %{need}{per}; up to {result.max_parts} parts")
    if not result.candidates:
        click.echo("  nothing in the drawer can be used (check the stock quantities and ratings)")
        return
    header = f"  {'':2} {'makes':>10} {'error':>8}  {'tol':>5}  {'rating':>8}  arrangement"
    click.echo(header)
    shown_outside = False
    for n, c in enumerate(result.candidates, 1):
        eq = c.equivalent
        if not c.within and not shown_outside:
            click.echo("  -- outside the window --")
            shown_outside = True
        parts = ", ".join(part_text(m) for m in eq.members)
        click.echo(f"  {n:>2} {format_si(eq.value, unit, 4):>10} {c.error * 100:+7.2f}%  {eq.tolerance * 100:4.1f}%"
                   f"  {rating_text(kind, eq.rating):>8}  {eq.describe()}  [{eq.arrangement}: {parts}]")
        for w in _warnings(eq):
            click.echo(f"       caution: {w}")
    if not any(c.within for c in result.candidates):
        click.echo("  no equivalent lies inside the window; the nearest are listed")
    for a in stock.assumptions:
        if f" {kind} line" in a:
            click.echo(f"  assumed: {a}")

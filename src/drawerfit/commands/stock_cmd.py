"""`drawerfit stock`: load a stock file and summarise it."""

from __future__ import annotations

import math
from collections import defaultdict

import click

from ..parts import Stock
from ..values import format_si
from .common import load_stock_reporting, stock_summary

UNIT = {"resistor": "ohm", "capacitor": "F"}


def summary(stock: Stock) -> dict:
    """Counts, value ranges and decades per kind; a plain dict for JSON and for the text view."""
    out: dict = {}
    for kind in ("resistor", "capacitor", "transistor"):
        lines = stock.of_kind(kind)
        if not lines:
            continue
        entry = {"lines": len(lines), "parts": sum(ln.qty for ln in lines),
                 "empty_lines": sum(1 for ln in lines if ln.qty == 0)}
        if kind != "transistor":
            values = [ln.value for ln in lines if ln.qty > 0]
            if values:
                entry["min"], entry["max"] = min(values), max(values)
                per_decade = defaultdict(int)
                for v in values:
                    per_decade[math.floor(math.log10(v) + 1e-9)] += 1
                entry["decades"] = {str(d): n for d, n in sorted(per_decade.items())}
        else:
            entry["types"] = sorted({f"{ln.label} ({ln.polarity.upper()})" for ln in lines})
        out[kind] = entry
    return out


def run_stock(file: str, *, as_json: bool, strict: bool) -> None:
    stock = load_stock_reporting(file, strict)
    if as_json:
        from ..cli import emit_json

        parts = []
        for ln in stock.lines:
            d = {"kind": ln.kind, "value": ln.value, "label": ln.label or None, "tolerance": ln.tolerance,
                 "power": ln.power, "voltage": ln.voltage, "qty": ln.qty, "location": ln.location,
                 "source": ln.source.to_dict(), "assumed": list(ln.assumed)}
            if ln.kind == "capacitor":
                d.update(dielectric=ln.dielectric, polarized=ln.polarized)
            if ln.kind == "transistor":
                d.update(polarity=ln.polarity, hfe_min=ln.hfe_min, hfe_max=ln.hfe_max, vceo=ln.vceo,
                         ic_max=ln.ic_max, pd=ln.pd, vbe=ln.vbe, vce_sat=ln.vce_sat)
            parts.append(d)
        emit_json({"parts": parts, "problems": [p.to_dict() for p in stock.problems],
                   "warnings": list(stock.warnings), "assumptions": list(stock.assumptions), "summary": summary(stock),
                   "checksum": stock.checksum})
        return
    click.echo(f"{file}: {len(stock.lines)} stock lines")
    for kind, entry in summary(stock).items():
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

"""`drawerfit match`: substitutes for one value from the drawer, and (`match npn|pnp`) for a transistor."""

from __future__ import annotations

import click

from ..parts import pin_order_text
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


# --- transistors: `match npn|pnp` -------------------------------------------------------------

_ORIGIN = {"spec": "the stage's own Q1", "supply": "the supply", "stage": "what the stage draws",
           "given": None}
_RATING_CELLS = (("VCEO", "vceo", "V"), ("IC max", "ic_max", "A"), ("PD", "pd", "W"))


def run_substitutes(polarity: str, stock_file: str, *, vceo, ic_max, power, hfe, hfe_min, hfe_max, vce_sat,
                    spec_file, units, top, as_json, strict) -> None:
    """`match npn|pnp`: the transistors in the drawer that can replace one (and, with a spec, in the stage)."""
    from .. import api

    result = api.substitutes(polarity, stock_file, spec=spec_file, vceo=vceo, ic_max=ic_max, power=power, hfe=hfe,
                             hfe_min=hfe_min, hfe_max=hfe_max, vce_sat=vce_sat, units=units, top=top,
                             strict=strict)
    report_problems(result.stock)
    if as_json:
        emit_json(result.to_dict())
        if result.spec is not None:  # the cautions still reach a person, on stderr
            for c in result.cautions:
                click.echo(f"caution: {c.text}", err=True)
        return
    for line in substitute_lines(result):
        click.echo(line)


def _requirement_lines(result) -> list[str]:
    from ..repair.substitutes import RATING_FIELDS, hfe_text, article

    req = result.requirement
    asked = []
    for name, (words, unit, side) in RATING_FIELDS.items():
        v = getattr(req, name)
        if v is not None:
            where = _ORIGIN.get(req.origin_of(name) or "given")
            asked.append(f"{words} {'at least' if side == 'min' else 'at most'} {format_si(v, unit)}"
                         + (f" ({where})" if where else ""))
    if req.asks_hfe:
        where = _ORIGIN.get(req.origin_of("hfe_min") or req.origin_of("hfe_max") or "given")
        asked.append(f"hFE {hfe_text(req.hfe_min, req.hfe_max)}" + (f" ({where})" if where else ""))
    head = f"Wanted: {article(req.polarity)} transistor, {req.units} needed"
    out = [head + (":" if asked else "; no rating asked")]
    out += [f"  {a}" for a in asked]
    return out


def _stage_word(v, board_fails: set[str]) -> str:
    if v is None:
        return ""
    if v.status == "keeps":
        return "keeps it in spec"
    if v.status == "unverified":
        return "unverified: " + ", ".join(v.unchecked) + " unknown"
    if v.status == "not-analysed":
        return "not analysed"
    names = [b.check for b in v.breaks]
    same = " (as with its own Q1)" if set(names) <= board_fails else ""
    return "breaks: " + ", ".join(names) + same


def _rating_cell(s, words, attr, unit) -> str:
    value = getattr(s.line, attr)
    if value is None:
        return "?"
    check = next((c for c in s.checks if c.name == words), None)
    text = format_si(value, unit, 3)
    if check is not None and check.margin is not None:
        m = check.margin
        text += f" {m * 100:+.0f} %" if m < 9 else f" ×{1 + m:.2g}"
    return text


def _hfe_cells(s, asks: bool) -> list[str]:
    from ..repair.substitutes import hfe_text

    ln = s.line
    rng = "?" if ln.hfe_min is None or ln.hfe_max is None else hfe_text(ln.hfe_min, ln.hfe_max)
    if not asks or s.hfe is None:
        return [rng, "", ""]
    return [rng, f"{s.hfe.distance:.2f}", f"{s.hfe.coverage * 100:.0f} %"]


def _name(s) -> str:
    return (s.line.label or f"row {s.line.source.row}") + (" *" if s.same_as_board else "")


def substitute_lines(result) -> list[str]:
    """The people's page of `match npn|pnp`: the requirement, the stage, the tables, the stage verdicts,
    the cautions."""
    from ..texttable import text_table

    req, spec = result.requirement, result.spec
    out = _requirement_lines(result)
    board_fails = result.board_fails
    if spec is not None:
        b = result.board
        t = b.analysis.stage.transistor
        title = f" ({spec.title})" if spec.title else ""
        out.append(f"Stage: {spec.path}{title}: {spec.topology}, {spec.polarity.upper()}, "
                   f"{format_si(spec.supply, 'V')} supply" + (", mains equipment" if spec.mains else ""))
        out.append(f"  with its own Q1 {t.label or '(unnamed)'}: {_verdict_text(b)}")
        if spec.assumptions:
            out.append("  Assumed: " + "; ".join(spec.assumptions))
    asks = req.asks_hfe
    header = ["#", "transistor", "bin", "on hand", "VCEO", "IC max", "PD", "hFE", "hFE D", "inside"]
    align = "><<>>>><><"
    pins = any(s.line.pins for s in result.substitutes)
    if pins:
        header.append("pins")
        align += "<"
    if spec is not None:
        header.append("in the stage")
        align += "<"

    def rows(items):
        got = []
        for s in items:
            row = [s.rank, _name(s), s.line.location or f"row {s.line.source.row}", s.line.qty]
            row += [_rating_cell(s, *cell) for cell in _RATING_CELLS]
            row += _hfe_cells(s, asks)
            if pins:
                row.append(pin_order_text(s.line.pins) if s.line.pins else "?")
            if spec is not None:
                row.append(_stage_word(s.stage, board_fails))
            got.append(row)
        return got

    top = result.top
    shown_pass = list(result.passing)[:top] if top else list(result.passing)
    out.append("")
    out.append("Meet the requirement" + (", closest hFE range first" if asks else ", most on hand first"))
    if shown_pass:
        out += text_table(header, rows(shown_pass), align)
    else:
        out.append("  none in the drawer")
    out += _more(result.passing, shown_pass)
    if asks and shown_pass:
        out.append("  hFE D: how far its hFE range lies from the one asked (0: the same; the log ratios of the ends, "
                   "summed); inside: the share of its range within the one asked (docs/repair.md)")
    if result.unknown:
        shown = list(result.unknown)[:top] if top else list(result.unknown)
        out.append("Not known to meet it (a figure the file does not give), after those known to")
        out += text_table(header, rows(shown), align)
        for s in shown:
            out.append(f"    {s.rank}: " + "; ".join(c.message for c in s.unknown))
        out += _more(result.unknown, shown)
    if result.failing:
        shown = list(result.failing)[:top] if top else list(result.failing)
        out.append("Do not meet it")
        fail_header = ["#", "transistor", "bin", "on hand", "why"] + (["in the stage"] if spec is not None else [])
        fail_rows = []
        for s in shown:
            row = [s.rank, _name(s), s.line.location or f"row {s.line.source.row}", s.line.qty,
                   "; ".join(c.message for c in s.failed)]
            if spec is not None:
                row.append(_stage_word(s.stage, board_fails))
            fail_rows.append(row)
        out += text_table(fail_header, fail_rows, "><<><<")
        out += _more(result.failing, shown)
    other = result.other_polarity
    if other:
        word = "PNP" if req.polarity == "npn" else "NPN"
        out.append(f"  ({len(other)} {word} line{'s' if len(other) != 1 else ''} not listed: the other polarity)")
    if any(s.same_as_board for s in result.substitutes):
        out.append("  * the same type as the stage's own Q1")
    if spec is not None:
        out += _stage_details(result, board_fails)
    out += [f"  {line}" for line in stock_summary(result.stock, "transistor")]
    out.append("")
    out.append("Cautions")
    for c in result.cautions:
        out.append(f"  * {c.text}")
    return out


def _more(items, shown) -> list[str]:
    n = len(items) - len(shown)
    return [f"  … and {n} more (--top {len(items)} shows them all)"] if n > 0 else []


def _figures_text(v) -> str:
    f, q = v.figures, v.analysis.stage.transistor_name
    if f.get("ie") is None:
        return f"{q} {f.get('state', '?')}"
    text = f"IE {format_si(f['ie'], 'A')}"
    if f.get("ie_low") is not None and f.get("ie_high") is not None:
        text += f" ({format_si(f['ie_low'], 'A')} … {format_si(f['ie_high'], 'A')})"
    if f.get("gain") is not None:
        text += f", gain {f['gain']:.3g}"
    return text if f.get("state") == "active" else text + f", {q} {f['state']}"


def _verdict_text(v, board_fails: set[str] = frozenset()) -> str:
    if v.status == "not-analysed":
        return f"not analysed: {v.reason}"
    head = _figures_text(v) + "; "
    if v.status == "keeps":
        return head + "in spec"
    if v.status == "unverified":
        return head + "no check fails, but " + ", ".join(v.unchecked) + " cannot be checked (rating not given)"
    return head + "misses " + "; ".join(_break_text(b, board_fails) for b in v.breaks)


def _break_text(b, board_fails: set[str]) -> str:
    return f"{b.check}: {b.message}" + (" (also with its own Q1)" if b.check in board_fails else "")


def _stage_details(result, board_fails: set[str]) -> list[str]:
    spec = result.spec
    c = spec.conditions
    judged = [s for s in result.substitutes if s.stage is not None]
    if result.top:
        judged = judged[: max(result.top, len(result.keeps))]
    out = ["", f"In the stage, each with its own hFE range, VBE and VCE(sat) (worst case over part tolerances, "
               f"its hFE range and {c.ambient_min:g}–{c.ambient_max:g} °C)"]
    for s in judged:
        v = s.stage
        out.append(f"  {s.rank} {_name(s)}: {_verdict_text(v, board_fails)}")
    keeps = result.keeps

    def where(items):
        return ", ".join(f"{_name(s)} ({s.line.location or 'row ' + str(s.line.source.row)}, {s.line.qty} on hand)"
                         for s in items)

    meet = [s for s in keeps if s.status != "fail"]
    below = [s for s in keeps if s.status == "fail"]
    if keeps:
        out.append("In spec unchanged: " + (where(meet) if meet else "none that meets the requirement"))
        if below:
            out.append(f"  also, though short of the requirement (see why above): {where(below)}")
    else:
        out.append("In spec unchanged: none of the transistors in the drawer"
                   + (" (the stage misses its spec with its own Q1 too)" if result.board.status == "breaks" else ""))
    return out

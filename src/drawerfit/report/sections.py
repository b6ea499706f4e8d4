"""The report's tables and lists as HTML: checks, fitting instructions, parts, pick list, figures.

Checks (state, targets, ratings, and a polarity that fails) carry a badge; instructions (how to fit
the transistor and each electrolytic) are a list without badges; advice (a rule of thumb) is told
apart from both.  Every physical part of a pair or triple has a row of its own, with its designator.
"""

from __future__ import annotations

import html
import math

from ..parts import pin_order_text
from ..values import format_code, format_percent, format_si
from ..io.saved_design import DesignFile

__all__ = ["checks_table", "advice_list", "fitting_list", "parts_table", "pick_table", "summary_rows",
           "share_name", "e", "si"]


def e(x) -> str:
    return html.escape(str(x))


def si(value, unit, digits=4) -> str:
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return "—"
    return format_si(float(value), unit, digits)


def _pct(m) -> str:
    if m is None:
        return "—"
    if not math.isfinite(m):
        return "missed" if m < 0 else "—"
    return f"{m * 100:+.1f} %"


def share_name(key: str, design: DesignFile) -> str:
    """'ie_min' -> 'IE at least 5.5 mA'; 'R1 power' stays as it is."""
    from .figures import TARGET_WORDS

    bound = design.targets.get(key)
    if key in TARGET_WORDS and bound is not None:
        unit = {"ie_min": "A", "ie_max": "A", "f_low": "Hz", "swing": "V", "rin_min": "ohm",
                "rout_max": "ohm"}.get(key)
        shown = format_si(bound, unit, 3) if unit else f"{bound:.3g}"
        return f"{TARGET_WORDS[key]} {shown}"
    return key.replace(" power", " within its derated power")


def summary_rows(fig, worst, design: DesignFile, lowest_f_low: float) -> list[tuple[str, str, str, str]]:
    pnp = design.stage.polarity == "pnp"
    rows = [
        ("VB, base to ground", "vb", "V"), ("VE, emitter to ground", "ve", "V"),
        ("VC, collector to ground", "vc", "V"), ("IE, emitter current", "ie", "A"),
        ("IC, collector current", "ic", "A"),
        ("VEC, emitter to collector" if pnp else "VCE, collector to emitter", "vce", "V"),
        ("gain, source to load", "gain", None), ("input impedance", "rin", "ohm"),
        ("output impedance", "rout", "ohm"), ("−3 dB low corner, whole stage", "f_low", "Hz"),
        ("largest symmetric output peak", "swing_peak", "V"),
    ]
    out = []
    for label, key, unit in rows:
        nom = float(getattr(fig, key))
        lo, hi = float(worst.low[key]), float(worst.high[key])
        if key == "f_low":
            lo = lowest_f_low
        if unit is None:
            out.append((label, f"{nom:.3g}", f"{lo:.3g}", f"{hi:.3g}"))
        else:
            out.append((label, si(nom, unit, 3), si(lo, unit, 3), si(hi, unit, 3)))
    return out


def _cell(c, value) -> str:
    if c.unit:
        text = si(value, c.unit, 4)
    else:
        text = "—" if value is None else f"{value:.4g}"
    return f"{c.figure} {text}" if c.figure and text != "—" else text


def checks_table(checks) -> str:
    """Every check with a badge: met, NOT MET, or not checked (a rating the design does not give)."""
    body = []
    for c in checks:
        if c.ok is None:
            tag = '<span class="tag skip">not checked</span>'
        elif c.ok:
            tag = '<span class="tag">met</span>'
        else:
            tag = '<span class="tag bad">NOT MET</span>'
        limit = _cell(c, c.limit)
        if c.kind == "state" and limit != "—":
            limit = f"{c.figure}(sat) {si(c.limit, c.unit, 4)}"
        body.append(f"<tr><td>{tag}</td><td>{e(c.name)}</td><td class='num'>{_cell(c, c.nominal)}</td>"
                    f"<td class='num'>{_cell(c, c.value)}</td><td class='num'>{e(limit)}</td>"
                    f"<td class='num'>{_pct(c.margin)}</td><td>{e(c.message)}</td></tr>")
    return ("<table><thead><tr><th></th><th>check</th><th class='num'>nominal</th><th class='num'>worst case</th>"
            "<th class='num'>limit</th><th class='num'>margin</th><th>what the analysis found</th></tr></thead><tbody>"
            + "".join(body) + "</tbody></table>")


def advice_list(advice) -> str:
    """Rules of thumb, told as such: no badge, no verdict."""
    if not advice:
        return ""
    items = "".join(f"<li><strong>{e(c.name)}</strong>: {e(c.message)}</li>" for c in advice)
    return f"<p class='note'>Advice (a rule of thumb, not a requirement):</p><ul class='fitting note'>{items}</ul>"


def fitting_list(design: DesignFile, figs, members) -> str:
    """How to fit the parts: the transistor's pins, each electrolytic's + end, each pair or triple."""
    stage = design.stage
    t = stage.transistor
    items = []
    if t.pins:
        items.append(f"<strong>Q1</strong> ({e(t.label or t.polarity.upper())}): pins "
                     f"<strong>{e(pin_order_text(t.pins))}</strong>, pin 1 first as the stock file gives them; hold "
                     "the part in hand against its datasheet before fitting it.")
    else:
        items.append(f"<strong>Q1</strong> ({e(t.label or t.polarity.upper())}): the stock file gives no pin order. "
                     "Pin order differs between transistor packages: find emitter, base and collector of the part "
                     "in hand on its datasheet before fitting it.")
    members = {role: parts for role, parts in members.items() if len(parts) > 1}
    for c in figs.checks:
        if c.instruction:
            role = c.name.split()[0]
            who = role if role not in members else f"{role} ({', '.join(m.designator for m in members[role])})"
            items.append(f"<strong>{e(who)}</strong>, electrolytic: {e(c.message)}.")
    for role, parts in members.items():
        unit = "ohm" if role.startswith("R") else "F"
        names = ", ".join(f"{m.designator} {format_code(m.value, unit)}" for m in parts)
        items.append(f"<strong>{e(role)}</strong> is {len(parts)} parts, {e(parts[0].arrangement)}: {e(names)}; "
                     "wire them as the schematic draws them.")
    return "<ul class='fitting'>" + "".join(f"<li>{i}</li>" for i in items) + "</ul>"


def _where(location, row) -> str:
    return f"bin {location or '?'}" + (f" (row {row})" if row is not None else "")


def parts_table(design: DesignFile, figs, members) -> str:
    """A row per role, and under a role of several parts a row per part with its designator."""
    from .bom import roles_in_order
    from .figures import polarity_text

    stage, fig = design.stage, figs.nominal
    rows = []
    for role, part, unit, rating_unit in roles_in_order(stage):
        choice = design.roles.get(role)
        parts = members.get(role, ())
        if unit == "ohm":
            carried = float(getattr(fig, f"p_{role.lower()}"))
            load = si(carried, "W", 3)
        else:
            carried = abs(float(getattr(fig, f"v_{role.lower()}")))
            load = si(carried, "V", 3) + " DC"
            if part.polarized:
                load += f"<br><strong>polarized:</strong> {e(polarity_text(figs, role))}"
        if len(parts) > 1:
            how = f"{choice.arrangement}: {' '.join(m.designator for m in parts)}"
            where = "the parts below"
        elif parts:
            how, where = "single", _where(parts[0].location, parts[0].row)
        else:
            how, where = "single", "—"
        rating = si(part.rating, rating_unit, 3) if part.rating else "—"
        rows.append(f"<tr><td><strong>{role}</strong></td><td class='num'>{e(format_si(part.value, unit))}</td>"
                    f"<td class='num'>{e(format_code(part.value, unit))}</td><td>{e(how)}</td><td>{e(where)}</td>"
                    f"<td class='num'>{'±' + format_percent(part.tolerance) if part.tolerance else '—'}</td>"
                    f"<td class='num'>{rating}</td><td>{load}</td></tr>")
        for m in parts if len(parts) > 1 else ():
            own = (si(carried * m.share, "W", 3) if unit == "ohm" else si(carried * m.share, "V", 3) + " DC")
            rows.append(f"<tr class='member'><td>{e(m.designator)}</td><td class='num'>{e(format_si(m.value, unit))}"
                        f"</td><td class='num'>{e(format_code(m.value, unit))}</td><td>part of {role}</td>"
                        f"<td>{e(_where(m.location, m.row))}</td>"
                        f"<td class='num'>{'±' + format_percent(m.tolerance) if m.tolerance else '—'}</td>"
                        f"<td class='num'>{si(m.rating, rating_unit, 3) if m.rating else '—'}</td>"
                        f"<td>{own} ({format_percent(m.share)} of {role}'s)</td></tr>")
    t = stage.transistor
    ratings = ", ".join(x for x in (f"VCEO {si(t.vceo, 'V', 3)}" if t.vceo else "",
                                    f"IC max {si(t.ic_max, 'A', 3)}" if t.ic_max else "",
                                    f"Pd {si(t.pd, 'W', 3)}" if t.pd else "") if x) or "—"
    where = f"bin {design.transistor_location}" if design.transistor_location else "—"
    pins = f"pins {pin_order_text(t.pins)}" if t.pins else "pin order: see its datasheet"
    rows.append(f"<tr><td><strong>Q1</strong></td><td colspan='2'>{e(t.label or 'unnamed')} {t.polarity.upper()}</td>"
                f"<td>hFE {t.hfe_min:g} to {t.hfe_max:g}; {e(pins)}</td><td>{e(where)}</td><td class='num'>—</td>"
                f"<td>{e(ratings)}</td><td>{si(float(fig.p_q), 'W', 3)}</td></tr>")
    return ("<table><thead><tr><th>part</th><th class='num'>value</th><th class='num'>code</th><th>made of</th>"
            "<th>from</th><th class='num'>tolerance</th><th class='num'>rating</th>"
            "<th>in use (nominal)</th></tr></thead><tbody>" + "".join(rows) + "</tbody></table>")


def pick_table(design: DesignFile) -> str:
    if not design.pick_list:
        return ("<p class='note'>This file is a plain stage spec, not a saved design: it names no stock parts, so "
                "there are no bins and no pick list. Save a design with <code>drawerfit design --save</code> to get "
                "them.</p>")
    rows = []
    for item in sorted(design.pick_list, key=lambda i: (i.location, i.part)):
        src = item.source
        where = ", ".join(str(x) for x in (src.get("file"), f"sheet {src['sheet']}" if src.get("sheet") else None,
                                           f"row {src['row']}" if src.get("row") is not None else None) if x)
        rows.append(f"<tr><td><strong>{e(item.location or '—')}</strong></td><td>{e(item.part)}</td>"
                    f"<td>{e(', '.join(item.roles))}</td><td class='num'>{item.per_unit:.4g}</td>"
                    f"<td class='num'>{item.count}</td><td>{e(where)}</td></tr>")
    total = sum(i.count for i in design.pick_list)
    return (f"<p>For <strong>{design.units}</strong> unit{'s' if design.units != 1 else ''}: take "
            f"{total} parts in all, bin by bin.</p>"
            "<table><thead><tr><th>bin</th><th>part</th><th>for</th><th class='num'>per unit</th>"
            "<th class='num'>take</th><th>stock file line</th></tr></thead><tbody>" + "".join(rows)
            + "</tbody></table>")

"""What `kit` shows and saves: the pick list, every line of it naming the designators and units it
serves, the text for people, the JSON that `take` reads, and the cautions.

A designator the drawer covers for only some units is not filled; the parts that do cover those
units are still on the pick list, and both the pick list and the list of unfilled designators say
so in plain words.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from ..parts import UNIT_OF_KIND, StockLine
from ..values import format_si

if TYPE_CHECKING:  # the result types live in kit.py, which imports this module
    from .fill import Build, Filled, KitResult, Unfilled
    from .parts_list import KitLine

__all__ = ["RATING_UNIT", "part_text", "pick_list", "kit_cautions", "kit_to_json", "format_kit"]

RATING_UNIT = {"resistor": "W", "capacitor": "V"}


def part_text(s: StockLine) -> str:
    """'4.7 kΩ 250 mW', '10 µF 25 V', or a transistor's label."""
    if s.kind == "transistor" or s.value is None:
        return s.label or s.kind
    text = format_si(s.value, UNIT_OF_KIND[s.kind])
    if s.rating is not None:
        text += f" {format_si(s.rating, RATING_UNIT[s.kind])}"
    return text


def _per_unit(n: int, units: int):
    return n // units if n % units == 0 else round(n / units, 6)


def pick_list(filled: list["Filled"], unfilled: list["Unfilled"], units: int) -> tuple[dict, ...]:
    """One entry per stock line drawn on: where it is, how many for all units, and for whom.

    ``serves`` lists each designator the parts go to, with the units and parts for it and whether
    that designator is filled (all units) or only partly covered by the drawer.
    """
    entries: dict[int, dict] = {}

    def add(designator: str, build: "Build", complete: bool) -> None:
        for s, n in build.equivalent.uses:
            e = entries.setdefault(s.index, {"line": s, "count": 0, "serves": {}})
            e["count"] += n * build.units
            sv = e["serves"].setdefault(designator, {"designator": designator, "units": 0, "count": 0,
                                                     "filled": complete})
            sv["units"] += build.units
            sv["count"] += n * build.units

    for f in filled:
        for b in f.builds:
            add(f.designator, b, True)
    for u in unfilled:
        for b in u.from_drawer:
            add(u.designator, b, False)
    out = []
    for e in sorted(entries.values(), key=lambda e: (e["line"].source.sheet or "", e["line"].source.row)):
        s, n = e["line"], e["count"]
        if n == 0:
            continue
        serves = list(e["serves"].values())
        out.append({"source": s.source.to_dict(), "location": s.location, "part": part_text(s),
                    "per_unit": _per_unit(n, units), "count": int(n),
                    "designators": [sv["designator"] for sv in serves], "serves": serves})
    return tuple(out)


def serves_text(entry: dict, units: int) -> str:
    """'R1, R2 (all 10 units)'; 'R6 (10 units), R7 (1 of 10 units)'; 'C3 (5 of 10 units only; C3 is not filled)'."""
    serves = entry.get("serves", ())
    if all(sv["filled"] and sv["units"] == units for sv in serves):
        names = ", ".join(sv["designator"] for sv in serves)
        return f"{names} (all {units} units)" if units > 1 else names
    items = []
    for sv in serves:
        d, u = sv["designator"], sv["units"]
        if not sv["filled"]:
            items.append(f"{d} ({u} of {units} units only; {d} is not filled)")
        else:
            items.append(f"{d} ({u} units)" if u == units else f"{d} ({u} of {units} units)")
    return ", ".join(items)


def kit_cautions(lines, filled: list["Filled"], unfilled: list["Unfilled"] = ()) -> list[str]:
    from ..constants import CAP_VOLTAGE_MARGIN, HIGH_VOLTAGE_CAUTION

    out = []
    hv = [ln for ln in lines if ln.kind == "capacitor" and ln.min_rating and ln.min_rating > HIGH_VOLTAGE_CAUTION]
    if hv:
        out.append(f"some capacitors must stand more than {HIGH_VOLTAGE_CAUTION:g} V: supplies that high are"
                   " dangerous; work de-energised, discharge capacitors, follow local codes and licensed practice")
    polar = series_polar = False
    builds = [b for f in filled for b in f.builds] + [b for u in unfilled for b in u.from_drawer]
    for b in builds:
        uses = getattr(b.equivalent, "uses", ())
        if any(getattr(s, "polarized", False) for s, _n in uses):
            polar = True
            if getattr(b.equivalent, "polarized_series", False):
                series_polar = True
    if polar:
        out.append(f"electrolytic capacitors are in the build: fit them the right way round and keep the working"
                   f" voltage at or below {CAP_VOLTAGE_MARGIN:.0%} of the rating, or they can vent or burst")
    if series_polar:
        out.append("polarized capacitors in series share the voltage unevenly: they need balancing resistors;"
                   " prefer another arrangement when one exists")
    no_v = [ln for ln in lines if ln.kind == "capacitor" and ln.min_rating is None]
    if no_v:
        names = ", ".join(ln.designators[0] for ln in no_v[:4]) + (" …" if len(no_v) > 4 else "")
        out.append(f"no minimum voltage given for {names}: those capacitors were chosen without a voltage check")
    return out


# --- JSON ------------------------------------------------------------------------------------------


def _eq_value(eq) -> float | None:
    return None if eq.value is None else float(eq.value)


def _parts_json(eq) -> list[dict]:
    out = []
    for s, n in eq.uses:
        out.append({"value": s.value if s.value is None else float(s.value), "label": s.label,
                    "location": s.location, "source": s.source.to_dict(), "count": int(n)})
    return out


def _build_json(b: "Build", line: "KitLine") -> dict:
    eq = b.equivalent
    unit = UNIT_OF_KIND.get(line.kind)
    return {"units": b.units, "value": _eq_value(eq),
            "value_text": format_si(eq.value, unit) if eq.value is not None else line.label,
            "arrangement": eq.arrangement, "how": _how(eq, line), "part_count": int(eq.part_count),
            "parts": _parts_json(eq)}


def _how(eq, line: "KitLine") -> str:
    """'4k7 + 2k2', '10k ∥ 10k' in the letter code, or the transistor's label."""
    describe = getattr(eq, "describe", None)
    return describe() if describe else line.label


def kit_to_json(r: "KitResult") -> dict:
    """The result as the JSON that `take` reads back."""
    filled = []
    for f in r.filled:
        first = _build_json(f.builds[0], f.line)
        filled.append({"designator": f.designator, "target": f.line.value, "value": first["value"],
                       "value_text": first["value_text"], "arrangement": first["arrangement"], "how": first["how"],
                       "part_count": first["part_count"], "parts": first["parts"],
                       "builds": [_build_json(b, f.line) for b in f.builds],
                       "list_row": f.line.row})
    unfilled = [{"designator": u.designator, "value": u.line.value, "value_text": u.line.value_text(),
                 "reason": u.reason, "units_from_drawer": u.units_covered,
                 "from_drawer": [_build_json(b, u.line) for b in u.from_drawer], "list_row": u.line.row}
                for u in r.unfilled]
    buy = [{"kind": b.kind, "value": b.value,
            "value_text": format_si(b.value, UNIT_OF_KIND[b.kind]) if b.value is not None else b.label,
            "rating": b.rating, "per_unit": b.per_unit, "count": b.count, "series": b.series,
            "designators": list(b.designators)} for b in r.buy]
    return {"units": r.units, "optimal": bool(r.optimal), "filled": filled, "unfilled": unfilled, "buy": buy,
            "pick_list": list(r.pick), "stock_checksum": r.stock_checksum, "stock_file": r.stock_file,
            "list_file": r.list_file, "seconds": round(r.seconds, 3), "cautions": list(r.cautions),
            "warnings": list(r.warnings), "notes": list(r.notes)}


# --- text ------------------------------------------------------------------------------------------


def format_kit(r: "KitResult") -> str:
    """The result for people: what is filled from where, what is missing and why, what to buy, and the
    pick list with the designators each line is for."""
    from ..texttable import text_table

    total = len(r.filled) + len(r.unfilled)
    out = [f"{len(r.filled)} of {total} designators filled from the drawer for {r.units} unit(s)"
           f" ({'proven optimal' if r.optimal else 'best found before the time limit, not proven optimal'})"]
    if r.filled:
        out += ["", "from the drawer:"]
        rows = []
        for f in r.filled:
            for b in f.builds:
                eq = b.equivalent
                unit = UNIT_OF_KIND.get(f.line.kind)
                val = format_si(eq.value, unit) if eq.value is not None else f.line.label
                where = " + ".join(f"{n}× {part_text(s)} [{s.location or 'row ' + str(s.source.row)}]"
                                   for s, n in eq.uses)
                share = "" if b.units == r.units else f"  ({b.units} of {r.units} units)"
                rows.append([f.designator, f.line.value_text(), "->", val, _how(eq, f.line), where + share])
        out += text_table(["", "wanted", "", "made", "of", "parts per unit [bin]"], rows, "<><><<")
    if r.unfilled:
        out += ["", "not filled:"]
        rows = []
        for u in r.unfilled:
            covered = u.units_covered
            drawer = (f"partly covered: {covered} of {r.units} units from the drawer (on the pick list),"
                      f" {r.units - covered} to buy" if covered else f"none of the {r.units} units from the drawer")
            rows.append([u.designator, u.line.value_text(), f"{drawer}; {u.reason}"])
        out += text_table(["", "wanted", "why"], rows, "<><")
    if r.buy:
        out += ["", "to buy (standard values):"]
        rows = []
        for b in r.buy:
            val = format_si(b.value, UNIT_OF_KIND[b.kind]) if b.value is not None else b.label
            rating = format_si(b.rating, RATING_UNIT.get(b.kind)) if b.rating is not None else "any"
            series = f" ({b.series})" if b.series else ""
            rows.append([val, rating, b.per_unit, b.count, f"{', '.join(b.designators)}{series}"])
        out += text_table(["value", "rating", "per unit", "total", "for"], rows, ">>>><")
    if r.pick:
        out += ["", "pick list (take these from the drawer):"]
        sheets = any(p["source"].get("sheet") for p in r.pick)
        rows = []
        for p in r.pick:
            src = p["source"]
            row = [src.get("sheet") or ""] if sheets else []
            rows.append(row + [p["location"] or "-", src["row"], p["part"], p["count"], serves_text(p, r.units)])
        head = (["sheet"] if sheets else []) + ["bin", "row", "part", "take", "for"]
        out += text_table(head, rows, ("<" if sheets else "") + "<><><")
    for n in r.notes:
        out.append(f"note: {n}")
    for c in r.cautions:
        out.append(f"caution: {c}")
    return "\n".join(out)

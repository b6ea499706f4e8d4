"""What `kit` finds: the ``KitResult``, its pick list (every line of it naming the designators and
units it serves), its dict (the JSON that `take` reads) and table forms, and the cautions.

A designator the drawer covers for only some units is not filled; the parts that do cover those
units are still on the pick list, and both the pick list and the list of unfilled designators say
so in plain words.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from ..parts import UNIT_OF_KIND, StockLine
from ..values import format_si
from .parts_list import KitLine

__all__ = ["RATING_UNIT", "part_text", "pick_list", "kit_cautions", "kit_to_json", "Build", "Filled",
           "Unfilled", "Buy", "KitResult"]

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
            "arrangement": eq.arrangement, "how": how_made(eq, line), "part_count": int(eq.part_count),
            "parts": _parts_json(eq)}


def how_made(eq, line: "KitLine") -> str:
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


# --- the result ----------------------------------------------------------------------------------


@dataclass(frozen=True)
class Build:
    units: int
    equivalent: object  # Equivalent (or _Transistor)


@dataclass(frozen=True)
class Filled:
    designator: str
    line: KitLine
    builds: tuple[Build, ...]


@dataclass(frozen=True)
class Unfilled:
    designator: str
    line: KitLine
    reason: str
    from_drawer: tuple[Build, ...] = ()  # units covered by leftover stock

    @property
    def units_covered(self) -> int:
        return sum(b.units for b in self.from_drawer)


@dataclass(frozen=True)
class Buy:
    kind: str
    value: float | None
    label: str
    rating: float | None
    per_unit: int  # designators of one unit that lack this value
    count: int  # to buy for all units, after what the drawer still covers
    series: str | None
    designators: tuple[str, ...]


@dataclass(frozen=True)
class KitResult:
    units: int
    optimal: bool
    filled: tuple[Filled, ...]
    unfilled: tuple[Unfilled, ...]
    buy: tuple[Buy, ...]
    pick: tuple[dict, ...]
    stock_checksum: str
    stock_file: str
    list_file: str
    seconds: float
    stage_values: tuple[int, ...]
    cautions: tuple[str, ...] = ()
    warnings: tuple[str, ...] = field(default_factory=tuple)
    notes: tuple[str, ...] = field(default_factory=tuple)

    def __repr__(self) -> str:
        total = len(self.filled) + len(self.unfilled)
        proof = "optimal" if self.optimal else "not proven optimal"
        buy = f", buy {sum(b.count for b in self.buy)} part(s)" if self.buy else ""
        return (f"<KitResult {len(self.filled)} of {total} designators filled for {self.units} unit(s) ({proof})"
                f"{buy}; {len(self.pick)} pick-list line(s)>")

    def to_dict(self) -> dict:
        """The KIT.json shape (what `kit --json` prints and `take` reads back)."""
        return kit_to_json(self)

    def to_pandas(self, table: str = "pick_list"):
        """A DataFrame: ``table`` "pick_list" (one row per stock line to take from), "designators"
        (one row per designator: what fills it, or why nothing does) or "buy"."""
        import pandas as pd

        if table == "pick_list":
            cols = ["location", "row", "sheet", "part", "per_unit", "count", "designators"]
            return pd.DataFrame([{"location": p["location"], "row": p["source"]["row"], "sheet": p["source"]["sheet"],
                                  "part": p["part"], "per_unit": p["per_unit"], "count": p["count"],
                                  "designators": ", ".join(p["designators"])} for p in self.pick], columns=cols)
        if table == "designators":
            d = self.to_dict()
            rows = [{"designator": f["designator"], "target": f["target"], "value": f["value"], "how": f["how"],
                     "part_count": f["part_count"], "filled": True, "reason": ""} for f in d["filled"]]
            rows += [{"designator": u["designator"], "target": u["value"], "value": None, "how": "",
                      "part_count": 0, "filled": False, "reason": u["reason"]} for u in d["unfilled"]]
            return pd.DataFrame(rows, columns=["designator", "target", "value", "how", "part_count", "filled",
                                               "reason"])
        if table == "buy":
            cols = ["kind", "value", "label", "rating", "per_unit", "count", "series", "designators"]
            return pd.DataFrame([{**{c: getattr(b, c) for c in cols[:-1]}, "designators": ", ".join(b.designators)}
                                 for b in self.buy], columns=cols)
        raise ValueError(f"table must be 'pick_list', 'designators' or 'buy', not {table!r}")

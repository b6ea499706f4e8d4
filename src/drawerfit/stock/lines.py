"""Turn the rows of one sheet into stock lines, with a problem for each cell that cannot be read."""

from __future__ import annotations

import math
import re
from collections import Counter
from dataclasses import dataclass, field

from typing import Iterable

from .. import constants as K
from ..parts import LineIssue, Source, StockLine, parse_pin_order
from ..values import UNIT_SYMBOL, ValueParseError, format_si, implied_unit, parse_quantity, parse_tolerance
from .headers import Column, find_header, normalise
from ..io.tables import LongCell, excerpt

KIND_WORDS = {
    "resistor": ("r", "res", "resistor", "resistors", "resistance", "ohm", "ohms"),
    "capacitor": ("c", "cap", "caps", "capacitor", "capacitors", "capacitance", "condenser"),
    "transistor": ("q", "bjt", "transistor", "transistors", "npn", "pnp"),
}
# Dielectric words that also say "capacitor", and whether that dielectric is polarized.
DIELECTRICS = {
    "ceramic": False, "mlcc": False, "c0g": False, "np0": False, "x7r": False, "x5r": False, "y5v": False,
    "film": False, "polyester": False, "polypropylene": False, "mylar": False, "mica": False, "pet": False,
    "pp": False, "electrolytic": True, "elec": True, "electrolyte": True, "aluminium": True, "aluminum": True,
    "alu": True, "tantalum": True, "tant": True, "polymer": True,
}
_WORD_KIND = {w: k for k, ws in KIND_WORDS.items() for w in ws}
_YES = {"yes", "y", "true", "1", "polarized", "polarised", "pol", "+", "x"}
_NO = {"no", "n", "false", "0", "nonpolar", "nonpolarized", "nonpolarised", "bipolar", "np", "-", ""}
# What a unit in a rating column means on each kind of line.
RATING_FIELDS = {"resistor": {"W": "power"}, "capacitor": {"V": "voltage"},
                 "transistor": {"W": "pd", "V": "vceo", "A": "ic_max"}}
_BARE_NUMBER = re.compile(r"^\s*[+]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?\s*$")


@dataclass
class SheetResult:
    lines: list[StockLine] = field(default_factory=list)
    problems: list[LineIssue] = field(default_factory=list)
    assumed: Counter = field(default_factory=Counter)  # (kind, field, default text) -> count
    warnings: list[str] = field(default_factory=list)  # what changes results: shown in every summary


def _text(cell: object) -> str:
    if cell is None:
        return ""
    if isinstance(cell, LongCell):
        return cell.start + "…"
    if isinstance(cell, float) and cell.is_integer():
        return str(int(cell))
    return str(cell).strip()


def kind_from_word(word: str) -> tuple[str | None, str | None, str | None]:
    """(kind, dielectric, polarity) named by a kind cell such as 'Electrolytic' or 'NPN'."""
    key = normalise(word)
    if key in _WORD_KIND:
        kind = _WORD_KIND[key]
        return kind, None, key if key in ("npn", "pnp") else None
    for diel in DIELECTRICS:
        if key.startswith(diel) or key.endswith(diel):
            return "capacitor", diel, None
    for w, kind in _WORD_KIND.items():
        if len(w) >= 3 and (key.startswith(w) or key.endswith(w)):
            return kind, None, None
    return None, None, None


def _kind_from_value_text(text: str) -> str | None:
    """Resistor or capacitor from how a value is written: a unit, the R code, or a prefix."""
    return {"ohm": "resistor", "F": "capacitor"}.get(implied_unit(text) or "")


class _Row:
    """Cell access for one row, recording problems against the right file, sheet, row and column."""

    def __init__(self, cells, cols: dict[str, Column], file: str, sheet: str | None, number: int, out: SheetResult):
        self.cells, self.cols, self.file, self.sheet, self.number, self.out = cells, cols, file, sheet, number, out
        self.failed = False

    def raw(self, fieldname: str) -> object:
        col = self.cols.get(fieldname)
        if col is None or col.index >= len(self.cells):
            return None
        cell = self.cells[col.index]
        if isinstance(cell, str) and cell.strip() == "":
            return None
        return cell

    def problem(self, fieldname: str | None, text: object, message: str, severity: str = "error") -> None:
        col = self.cols.get(fieldname) if fieldname else None
        self.out.problems.append(LineIssue(self.file, self.sheet, self.number, col.header if col else fieldname,
                                         excerpt(_text(text)), message, severity))
        if severity == "error":
            self.failed = True

    def quantity(self, fieldname: str, unit: str, positive: bool = True) -> float | None:
        cell = self.raw(fieldname)
        if cell is None:
            return None
        col = self.cols[fieldname]
        try:
            if isinstance(cell, (int, float)) and not isinstance(cell, bool):
                v = float(cell) * col.scale
            else:
                text = str(cell)
                q = parse_quantity(text, unit)
                v = q.value * col.scale if _BARE_NUMBER.match(text) else q.value
        except ValueParseError as exc:
            sym = UNIT_SYMBOL.get(unit, unit)
            self.problem(fieldname, cell, f"not a value in {sym}: {exc.why}" if unit else f"not a value: {exc.why}")
            return None
        if not math.isfinite(v) or (positive and v <= 0):
            self.problem(fieldname, cell, "must be a positive value")
            return None
        return v

    def rating(self, kind: str) -> tuple[str, float] | None:
        """(field, value) read from a rating column by the unit in the cell: W is a power rating, V a
        voltage rating, A a transistor's collector current; a bare number takes the column's unit,
        else the rating that matters for the kind (W for a resistor, V for a capacitor)."""
        cell = self.raw("rating")
        if cell is None:
            return None
        col = self.cols["rating"]
        try:
            if isinstance(cell, (int, float)) and not isinstance(cell, bool):
                value, unit = float(cell) * col.scale, col.unit
            else:
                text = str(cell)
                q = parse_quantity(text)
                value = q.value * col.scale if _BARE_NUMBER.match(text) else q.value
                unit = q.unit or col.unit
        except ValueParseError as exc:
            self.problem("rating", cell, f"not a rating: {exc.why}")
            return None
        fields = RATING_FIELDS[kind]
        if unit is None:
            unit = {"resistor": "W", "capacitor": "V"}.get(kind)
            if unit is None:
                self.problem("rating", cell, "a transistor's rating needs its unit (W, V or A); not read", "warning")
                return None
        if unit not in fields:
            wanted = " or ".join(UNIT_SYMBOL[u] for u in fields)
            self.problem("rating", cell, f"a {kind}'s rating is in {wanted}, not {UNIT_SYMBOL.get(unit, unit)}")
            return None
        if not math.isfinite(value) or value <= 0:
            self.problem("rating", cell, "must be a positive value")
            return None
        return fields[unit], value

    def rated(self, fieldname: str, unit: str, kind: str) -> float | None:
        """A rating from its own column, else from a rating column holding that unit."""
        v = self.quantity(fieldname, unit)
        if v is None and not self.failed and "rating" in self.cols:
            got = self.rating(kind)
            if got is not None and got[0] == fieldname:
                v = got[1]
        return v

    def number_(self, fieldname: str) -> float | None:
        cell = self.raw(fieldname)
        if cell is None:
            return None
        try:
            v = float(_text(cell).replace(",", "."))
        except ValueError:
            self.problem(fieldname, cell, "not a number")
            return None
        if not math.isfinite(v) or v <= 0:
            self.problem(fieldname, cell, "must be a positive number")
            return None
        return v


HEADER_LOOK = 10  # the header is among the first rows with content


def read_sheet(records: Iterable[tuple[int, list]], file: str, sheet: str | None,
               first_index: int) -> SheetResult:
    """Stock lines from the (row number, cells) records of one sheet, read as they come; lines are
    indexed from ``first_index`` on."""
    out = SheetResult()
    records = iter(records)
    head: list[tuple[int, list]] = []
    for number, cells in records:
        if any(_text(c) for c in cells):
            head.append((number, cells))
            if len(head) >= HEADER_LOOK:
                break
    found = find_header([[None if isinstance(c, LongCell) else c for c in cells] for _n, cells in head])
    if found is None:
        if head:
            out.problems.append(LineIssue(file, sheet, None, None, "",
                                        "no header row found (need at least a value or label column and one more, "
                                        "e.g. 'value' and 'qty'); sheet skipped", "warning"))
        for _ in records:  # the rest of the sheet is not read
            pass
        return out
    head_at, cols = found
    header_row, header_number = head[head_at][1], head[head_at][0]
    unknown = {i: str(c).strip() for i, c in enumerate(header_row)
               if _text(c) and not isinstance(c, LongCell) and all(col.index != i for col in cols.values())}
    ignored = _IgnoredColumns(unknown)
    sheet_kind = kind_from_word(sheet)[0] if sheet else None
    value_col = cols.get("value")
    header_kind = None
    if value_col is not None:
        header_kind = {"ohm": "resistor", "F": "capacitor"}.get(value_col.unit or "")
        header_kind = header_kind or {"resistance": "resistor", "ohms": "resistor", "capacitance": "capacitor",
                                      "farads": "capacitor"}.get(normalise(value_col.header.split("(")[0]))
    qty_col = cols.get("qty")
    read_at = {col.index: col.header for col in cols.values()}

    def rows():
        yield from head[head_at + 1:]
        yield from records

    for number, cells in rows():
        texts = [_text(c) for c in cells]
        nonblank = [t for t in texts if t]
        if not nonblank or nonblank[0].startswith("#"):
            continue
        ignored.see(cells)
        long = [(i, c) for i, c in enumerate(cells) if isinstance(c, LongCell) and i in read_at]
        if long:
            i, c = long[0]
            out.problems.append(LineIssue(file, sheet, number, read_at[i], excerpt(c.start),
                                        f"a cell of {c.length:,} characters, over the limit of"
                                        f" {K.MAX_CELL_CHARS:,}; line skipped"))
            continue
        row = _Row(cells, cols, file, sheet, number, out)
        line = _read_line(row, first_index + len(out.lines), sheet_kind or header_kind,
                          Source(file, sheet, number, qty_col.index if qty_col else None,
                                 qty_col.header if qty_col else None))
        if line is not None and not row.failed:
            out.lines.append(line)
            for f in line.assumed:
                out.assumed[(line.kind, f)] += 1
    if unknown:
        warned = ignored.warnings(out.assumed, "sheet " + repr(sheet) if sheet else None)
        out.warnings.extend(warned)
        if not warned:
            out.problems.append(LineIssue(file, sheet, header_number, None, excerpt(", ".join(unknown.values())),
                                        "columns not recognised and ignored", "warning"))
    return out


class _IgnoredColumns:
    """What the columns nobody reads seem to hold, to warn when ignoring one changes results."""

    # a unit seen in an ignored column, and the defaults it could have replaced: (kind, field)
    WOULD_FILL = {"W": (("resistor", "power"),), "V": (("capacitor", "voltage"),),
                  "%": (("resistor", "tolerance"), ("capacitor", "tolerance"))}
    SAMPLE = 500  # rows looked at: enough to see what a column holds

    def __init__(self, columns: dict[int, str]):
        self.columns = columns
        self.units: dict[int, Counter] = {i: Counter() for i in columns}
        self.seen = 0

    def see(self, cells) -> None:
        if not self.columns or self.seen >= self.SAMPLE:
            return
        self.seen += 1
        for i in self.columns:
            if i < len(cells) and isinstance(cells[i], str) and 0 < len(cells[i]) <= K.MAX_VALUE_CHARS:
                try:
                    unit = parse_quantity(cells[i]).unit
                except ValueParseError:
                    continue
                if unit in self.WOULD_FILL:
                    self.units[i][unit] += 1

    def warnings(self, assumed: Counter, where: str | None) -> list[str]:
        out = []
        for i, header in self.columns.items():
            for unit, _n in self.units[i].most_common():
                hit = [(kind, f, assumed[(kind, f)]) for kind, f in self.WOULD_FILL[unit] if assumed[(kind, f)]]
                if not hit:
                    continue
                got = "; ".join(f"{n} {kind} line{'s' if n != 1 else ''} got the default "
                                f"{DEFAULT_TEXT[(kind, f)]}" for kind, f, n in hit)
                place = f" ({where})" if where else ""
                out.append(f"column {header!r}{place} holds values in {UNIT_SYMBOL.get(unit, unit)} but was not"
                           f" read, so {got}; name the column for what it holds (e.g. 'power', 'voltage',"
                           " 'rating' or 'tolerance'; docs/inventory-format.md)")
                break
        return out


def _read_line(row: _Row, index: int, hint: str | None, source: Source) -> StockLine | None:
    kind, dielectric, polarity = None, None, None
    kind_cell = row.raw("kind")
    if kind_cell is not None:
        kind, dielectric, polarity = kind_from_word(_text(kind_cell))
        if kind is None:
            row.problem("kind", kind_cell, "unknown kind (expected resistor, capacitor or transistor)")
            return None
    value_cell = row.raw("value")
    if kind is None:
        kind = hint
    if kind is None and value_cell is not None:
        kind = _kind_from_value_text(_text(value_cell))
    if kind is None and (row.raw("label") is not None or row.raw("hfe_min") is not None or row.raw("hfe") is not None):
        kind = "transistor"
    if kind is None:
        row.problem("value" if value_cell is not None else "kind", value_cell or "",
                    "cannot tell the kind: give a kind column or write the unit (Ω or F)")
        return None

    qty = _qty(row)
    if row.failed:
        return None
    assumed: list[str] = []
    if qty is None:
        qty, assumed = 1, ["qty"]

    location = _text(row.raw("location"))
    note = _text(row.raw("note"))
    label = _text(row.raw("label"))
    if kind == "transistor":
        if not label and value_cell is not None:
            label = _text(value_cell)  # a transistor named in the value column: that text is its label
        return _transistor(row, index, source, qty, location, label, note, polarity, assumed)

    unit = "ohm" if kind == "resistor" else "F"
    if value_cell is None:
        row.problem("value", "", "no value")
        return None
    value = row.quantity("value", unit)
    tol = None
    tol_cell = row.raw("tolerance")
    if tol_cell is not None:
        try:
            tol = parse_tolerance(tol_cell)
        except ValueParseError as exc:
            row.problem("tolerance", tol_cell, f"not a tolerance: {exc.why}")
    if row.failed or value is None:
        return None

    if kind == "resistor":
        power = row.rated("power", "W", "resistor")
        if row.failed:
            return None
        if power is None:
            power = K.POWER_RESISTOR
            assumed.append("power")
        if tol is None:
            tol = K.TOL_RESISTOR
            assumed.append("tolerance")
        return StockLine(index=index, kind=kind, value=value, qty=qty, source=source, tolerance=tol, power=power,
                         location=location, label=label, note=note, assumed=tuple(assumed))

    diel_cell = row.raw("dielectric")
    if diel_cell is not None:
        dielectric = kind_from_word(_text(diel_cell))[1] or normalise(_text(diel_cell)) or dielectric
    polarized = DIELECTRICS.get(dielectric or "", None)
    pol_cell = row.raw("polarity")
    if pol_cell is not None:
        key = normalise(_text(pol_cell))
        if key in _YES or _text(pol_cell) in _YES:
            polarized = True
        elif key in _NO or _text(pol_cell) in _NO:
            polarized = False
        else:
            row.problem("polarity", pol_cell, "not a polarity (expected yes/no, polarized/non-polar)")
            return None
    if polarized is None:
        # Unknown construction: large values are almost always electrolytic; assuming polarized is the safe side.
        polarized = value >= 1e-6
        assumed.append("polarized")
    if dielectric is None:
        dielectric = "electrolytic" if polarized else "ceramic"
        assumed.append("dielectric")
    voltage = row.rated("voltage", "V", "capacitor")
    if row.failed:
        return None
    if voltage is None:
        voltage = K.VOLTAGE_POLARIZED if polarized else K.VOLTAGE_NONPOLAR
        assumed.append("voltage")
    if tol is None:
        tol = (K.TOL_ELECTROLYTIC if polarized else K.TOL_FILM if dielectric in ("film", "polyester", "polypropylene",
                                                                                  "mylar", "pet", "pp", "mica")
               else K.TOL_CERAMIC)
        assumed.append("tolerance")
    return StockLine(index=index, kind=kind, value=value, qty=qty, source=source, tolerance=tol, voltage=voltage,
                     location=location, label=label, dielectric=dielectric, polarized=polarized, note=note,
                     assumed=tuple(assumed))


def _qty(row: _Row) -> int | None:
    if "qty" not in row.cols:
        return None
    cell = row.raw("qty")
    if cell is None:
        row.problem("qty", "", "no quantity")
        return None
    text = _text(cell)
    try:
        q = float(text)
    except ValueError:
        row.problem("qty", cell, "quantity is not a whole number")
        return None
    if not math.isfinite(q) or q != int(q):
        row.problem("qty", cell, "quantity is not a whole number")
        return None
    if q < 0:
        row.problem("qty", cell, "quantity is negative")
        return None
    if q > K.MAX_QTY:
        row.problem("qty", cell, f"quantity is over {K.MAX_QTY:,}, more than any drawer holds")
        return None
    return int(q)


def _transistor(row: _Row, index, source, qty, location, label, note, polarity, assumed) -> StockLine | None:
    pol_cell = row.raw("polarity")
    if pol_cell is not None:
        key = normalise(_text(pol_cell))
        if key in ("npn", "pnp"):
            polarity = key
        else:
            row.problem("polarity", pol_cell, "a transistor's polarity is NPN or PNP")
            return None
    if polarity is None and label:
        key = normalise(label)
        polarity = "npn" if "npn" in key else "pnp" if "pnp" in key else None
    if polarity is None:
        if "polarity" in row.cols:
            row.problem("polarity", "", "no NPN or PNP given for this transistor; not guessed, line skipped")
        else:
            at = next((f for f in ("kind", "label", "value") if f in row.cols), None)
            place = f" in the {row.cols['kind'].header!r} column" if "kind" in row.cols else ""
            row.problem(at, label, "a transistor needs NPN or PNP, and the file has no polarity column: add a"
                                   f" 'polarity' column, or write NPN or PNP{place}; not guessed, line skipped")
        return None
    if not label:
        label = f"{polarity.upper()} (row {source.row})"
        row.problem("label", "", "transistor line without a label; named after its row", "warning")
    hfe_min, hfe_max = row.number_("hfe_min"), row.number_("hfe_max")
    hfe = row.number_("hfe")
    if hfe is not None and hfe_min is None and hfe_max is None:
        hfe_min = hfe_max = hfe
        row.problem("hfe", hfe, "only one hFE figure: its spread is unknown, so worst cases use that one figure",
                    "warning")
    vceo = row.quantity("vceo", "V")
    ic_max = row.quantity("ic_max", "A")
    pd = row.quantity("pd", "W")
    if pd is None and "pd" not in row.cols:
        pd = row.quantity("power", "W")  # a plain 'power' column on a transistor line is its dissipation
    if "rating" in row.cols and not row.failed:
        got = row.rating("transistor")  # one figure, told by its unit; the columns of its own come first
        if got is not None:
            name, v = got
            vceo = v if name == "vceo" and vceo is None else vceo
            ic_max = v if name == "ic_max" and ic_max is None else ic_max
            pd = v if name == "pd" and pd is None else pd
    vbe = row.quantity("vbe", "V")
    vce_sat = row.quantity("vce_sat", "V")
    if row.failed:
        return None
    pins = _pins(row)
    if hfe_min is not None and hfe_max is not None and hfe_min > hfe_max:
        row.problem("hfe_max", hfe_max, f"hFE max is below hFE min ({hfe_min:g})")
        return None
    missing = [name for name, v in (("hFE min", hfe_min), ("hFE max", hfe_max), ("VCEO", vceo),
                                    ("IC max", ic_max), ("Pd", pd)) if v is None]
    if missing:
        row.problem(None, label, f"transistor lacks {', '.join(missing)}: not guessed; designs that need "
                                 "them will not use this line", "warning")
    if vbe is None:
        vbe = K.VBE_DEFAULT
        assumed.append("vbe")
    if vce_sat is None:
        vce_sat = K.VCE_SAT_DEFAULT
        assumed.append("vce_sat")
    return StockLine(index=index, kind="transistor", value=None, qty=qty, source=source, location=location,
                     label=label, polarity=polarity, hfe_min=hfe_min, hfe_max=hfe_max, vceo=vceo, ic_max=ic_max,
                     pd=pd, vbe=vbe, vce_sat=vce_sat, pins=pins, note=note, assumed=tuple(assumed))


def _pins(row: _Row) -> str:
    """The pin order cell, normalised ('E-B-C' -> 'EBC'); a bad one is noted and left unknown,
    so the builder is sent to the datasheet as when the column is absent."""
    cell = row.raw("pins")
    if cell is None:
        return ""
    try:
        return parse_pin_order(_text(cell))
    except ValueError as exc:
        row.problem("pins", cell, f"{exc}; pin order left unknown (check the datasheet)", "warning")
        return ""


DEFAULT_TEXT = {
    ("resistor", "power"): f"power rating {format_si(K.POWER_RESISTOR, 'W')}",
    ("resistor", "tolerance"): f"tolerance {K.TOL_RESISTOR:.0%}",
    ("capacitor", "tolerance"): (f"tolerance {K.TOL_CERAMIC:.0%} ceramic, {K.TOL_FILM:.0%} film, "
                                 f"{K.TOL_ELECTROLYTIC:.0%} electrolytic"),
    ("capacitor", "voltage"): (f"voltage rating {format_si(K.VOLTAGE_NONPOLAR, 'V')} non-polar, "
                               f"{format_si(K.VOLTAGE_POLARIZED, 'V')} polarized"),
    ("capacitor", "polarized"): "polarized (electrolytic) from 1 µF up, non-polar below",
    ("capacitor", "dielectric"): "electrolytic if polarized, else ceramic",
    ("transistor", "vbe"): f"VBE {K.VBE_DEFAULT} V",
    ("transistor", "vce_sat"): f"VCE(sat) {K.VCE_SAT_DEFAULT} V",
}


def describe_assumptions(assumed: Counter) -> list[str]:
    """One phrase per default applied, to follow 'assumed: ': 'power rating 250 mW for 12 resistor
    lines (the file does not say)'."""
    out = []
    for (kind, fieldname), n in sorted(assumed.items()):
        lines = f"{n} {kind} line{'s' if n != 1 else ''}"
        if fieldname == "qty":
            out.append(f"one part on each of {lines} (the file has no quantity column)")
            continue
        what = DEFAULT_TEXT.get((kind, fieldname), fieldname)
        out.append(f"{what} for {lines} (the file does not say)")
    return out

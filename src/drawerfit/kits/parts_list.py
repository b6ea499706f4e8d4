"""Read a parts list (CSV or XLSX) for `drawerfit kit`: one line per value, with its designators.

Columns are found by their header, normalised as the stock loader does (lower case, spaces and
punctuation dropped).  A line names its designators ("R3, R7" or "R1-R4"), a value with an optional
tolerance ("4k7 1%", or a tolerance column) that sets the allowed window, an optional minimum
rating (W for resistors, V for capacitors), the kind (from a kind column, else the value's unit,
else the designator letter R/C/Q), the quantity per unit (else the number of designators) and an
optional flag asking for single parts only.  Lines that cannot be read become Problems naming
file, sheet, row and column; nothing here changes the file.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from pathlib import Path

from ..constants import MAX_CELL_CHARS, TOL_CERAMIC, TOL_RESISTOR
from ..parts import LineIssue, SpecError, UNIT_OF_KIND, KIND_OF_UNIT
from ..stock.headers import normalise
from ..io.tables import LongCell, excerpt
from ..values import (ValueParseError, format_si, implied_unit, parse_quantity, parse_tolerance,
                     parse_value_and_tolerance)

__all__ = ["KitLine", "KitList", "read_kit_list", "DEFAULT_WINDOW", "KIT_HEADERS", "match_kit_header"]

# The window a line allows when it gives no tolerance: the usual tolerance class of the kind
# (5 % resistors, 10 % ceramic/film capacitors; common practice, no source, see constants.py).
DEFAULT_WINDOW = {"resistor": TOL_RESISTOR, "capacitor": TOL_CERAMIC}

# field -> header spellings (already normalised: lower case, letters and digits only)
KIT_HEADERS: dict[str, tuple[str, ...]] = {
    "designators": ("designator", "designators", "ref", "refs", "reference", "references", "refdes",
                    "positions", "position", "places", "where"),
    "value": ("value", "values", "nominal", "resistance", "capacitance", "label"),
    "tolerance": ("tolerance", "tol", "window", "within", "allowed"),
    "min_power": ("power", "minpower", "minimumpower", "wattage", "watts", "powerrating"),
    "min_voltage": ("voltage", "minvoltage", "minimumvoltage", "volts", "voltagerating", "workingvoltage"),
    "min_rating": ("rating", "minrating", "minimumrating", "atleast"),
    "kind": ("kind", "type", "category", "part", "parttype"),
    "per_unit": ("qty", "quantity", "count", "perunit", "qtyperunit", "quantityperunit", "each", "number",
                 "pcs", "howmany"),
    "single": ("single", "singleonly", "singlepart", "singlepartsonly", "singlesonly", "nocombination",
               "nocombinations", "alone"),
    "note": ("note", "notes", "comment", "comments", "remark"),
}
_HEADER_OF = {spelling: name for name, spellings in KIT_HEADERS.items() for spelling in spellings}
_TRUE = {"y", "yes", "true", "1", "x", "single", "only", "✓", "✔"}
_FALSE = {"", "n", "no", "false", "0", "-"}
_KIND_WORDS = {
    "r": "resistor", "res": "resistor", "resistor": "resistor", "resistors": "resistor",
    "c": "capacitor", "cap": "capacitor", "capacitor": "capacitor", "capacitors": "capacitor",
    "q": "transistor", "bjt": "transistor", "transistor": "transistor", "transistors": "transistor",
}
_RANGE_RE = re.compile(r"^([A-Za-z]+)(\d+)\s*[-–]\s*([A-Za-z]*)(\d+)$")
_DESIG_LETTER = {"R": "resistor", "C": "capacitor", "Q": "transistor"}


def match_kit_header(text: object) -> str | None:
    """The field a parts-list header names, or None; a unit in the header ('Min power (W)') is ignored."""
    if text is None:
        return None
    from ..stock.headers import split_unit

    words, _unit = split_unit(str(text))
    return _HEADER_OF.get(normalise(words)) or _HEADER_OF.get(normalise(str(text)))


@dataclass(frozen=True)
class KitLine:
    """One line of a parts list, in SI units: the value, the window it allows and how many per unit."""

    file: str
    sheet: str | None
    row: int
    designators: tuple[str, ...]
    kind: str
    value: float | None  # None for transistors, which are named by label
    lo: float | None
    hi: float | None
    window: float | None  # the tolerance that set lo/hi (fraction)
    window_given: bool
    min_rating: float | None
    single: bool
    label: str = ""
    note: str = ""

    @property
    def per_unit(self) -> int:
        return len(self.designators)

    def where(self) -> str:
        sheet = f", sheet {self.sheet!r}" if self.sheet else ""
        return f"{self.file}{sheet}, row {self.row}"

    def value_text(self) -> str:
        if self.kind == "transistor":
            return self.label
        return format_si(self.value, UNIT_OF_KIND[self.kind])


@dataclass(frozen=True)
class KitList:
    lines: tuple[KitLine, ...]
    problems: tuple[LineIssue, ...]
    file: str


def _records(path: Path):
    """(sheet, row number, cells) for every record of a CSV or every row of every XLSX sheet, read by
    the stock loader's reader (same size, row and cell limits; a too long cell is a ``LongCell``)."""
    from ..io.tables import open_table_file

    raw = open_table_file(str(path), SpecError, "parts list")
    if raw.notes:
        raise SpecError(f"{path}: not UTF-8 text ({raw.notes[0].split(': ', 1)[-1]}); save it as UTF-8 CSV")
    for sheet in raw.sheets():
        for r, cells in sheet.records:
            yield sheet.name, r, ["" if c is None else c for c in cells]


def _split_designators(text: str) -> list[str]:
    out: list[str] = []
    for tok in re.split(r"[,;/\s]+", text.strip()):
        if not tok:
            continue
        m = _RANGE_RE.match(tok)
        if m and (m.group(3) in ("", m.group(1))) and int(m.group(2)) <= int(m.group(4)) \
                and int(m.group(4)) - int(m.group(2)) < 1000:
            out.extend(f"{m.group(1)}{k}" for k in range(int(m.group(2)), int(m.group(4)) + 1))
        else:
            out.append(tok)
    return out


def read_kit_list(path: str) -> KitList:
    """Read a parts list; lines that cannot be read come back as error Problems."""
    p = Path(path)
    if not p.exists():
        raise SpecError(f"{p}: no such parts list")
    lines: list[KitLine] = []
    problems: list[LineIssue] = []
    header: dict[str | None, dict[int, str]] = {}
    header_names: dict[str | None, dict[str, str]] = {}
    seen: dict[str, str] = {}
    for sheet, r, cells in _records(p):
        if sheet not in header:
            fields = {i: match_kit_header(c) for i, c in enumerate(cells) if not isinstance(c, LongCell)}
            fields = {i: f for i, f in fields.items() if f}
            if "value" in fields.values() and len(fields) >= 2:
                cols: dict[int, str] = {}
                for i, f in fields.items():
                    if f in cols.values():
                        problems.append(LineIssue(str(p), sheet, r, str(cells[i]), "",
                                                f"a second {f} column; the first one is used", "warning"))
                        continue
                    cols[i] = f
                header[sheet] = cols
                header_names[sheet] = {f: str(cells[i]) for i, f in cols.items()}
            continue
        if all(str(c).strip() == "" for c in cells):
            continue
        row = {f: cells[i] if i < len(cells) else "" for i, f in header[sheet].items()}
        names = header_names[sheet]
        long = [(f, c) for f, c in row.items() if isinstance(c, LongCell)]
        if long:
            f, c = long[0]
            problems.append(LineIssue(str(p), sheet, r, names.get(f, f), c.start + "…",
                                    f"a cell of {c.length:,} characters, over the limit of {MAX_CELL_CHARS:,};"
                                    " line skipped"))
            continue
        line = _read_line(str(p), sheet, r, row, names, problems)
        if line is None:
            continue
        dup = [d for d in line.designators if d.upper() in seen]
        if dup:
            problems.append(LineIssue(str(p), sheet, r, names.get("designators"), excerpt(", ".join(dup)),
                                    f"designator listed twice (first at {seen[dup[0].upper()]})"))
            continue
        for d in line.designators:
            seen[d.upper()] = line.where()
        lines.append(line)
    if not header:
        raise SpecError(f"{p}: no header row naming a value column and at least one other column"
                        " (designators, qty, tolerance...); see docs/kit-and-take.md")
    return KitList(tuple(lines), tuple(problems), str(p))


def _read_line(file, sheet, r, row, names, problems) -> KitLine | None:
    def bad(field: str, text, why: str) -> None:
        problems.append(LineIssue(file, sheet, r, names.get(field, field), "" if text is None else excerpt(text), why))

    value_text = row.get("value", "")
    if str(value_text).strip() == "":
        bad("value", value_text, "no value")
        return None
    # kind: the kind column, else the value's unit, else the designator letter
    kind = None
    kind_text = str(row.get("kind", "")).strip()
    if kind_text:
        from ..stock.lines import kind_from_word  # the stock loader's own kind words

        kind = _KIND_WORDS.get(normalise(kind_text)) or kind_from_word(kind_text)[0]
        if kind is None:
            bad("kind", kind_text, "unknown kind (use resistor, capacitor or transistor)")
            return None
    desig_text = str(row.get("designators", "")).strip()
    designators = _split_designators(desig_text) if desig_text else []

    value = tol_in_value = None
    label = ""
    if kind != "transistor":
        try:
            value, tol_in_value = parse_value_and_tolerance(value_text)
            # the unit is read from the value alone, without a tolerance written after it
            first = re.split(r"[\s/±]+", value_text.strip())[0] if isinstance(value_text, str) else value_text
            unit = None
            for candidate in ((first,) if tol_in_value is not None else (value_text, first)):
                try:
                    unit = parse_quantity(candidate).unit
                except ValueParseError:
                    continue
                # as the stock loader does: the R code or a k/M prefix means ohms, p/n/µ farads
                unit = unit or implied_unit(candidate)
                break
        except ValueParseError as exc:
            if kind is None and designators and all(d[:1].upper() == "Q" for d in designators):
                kind = "transistor"
            else:
                bad("value", value_text, exc.why)
                return None
        else:
            if kind is None and unit in KIND_OF_UNIT:
                kind = KIND_OF_UNIT[unit]
            elif kind is not None and unit in KIND_OF_UNIT and KIND_OF_UNIT[unit] != kind:
                bad("value", value_text, f"a {kind} cannot have a value in {unit}")
                return None
            elif unit not in (None, "ohm", "F"):
                bad("value", value_text, f"a value in {unit} is not a resistance or capacitance")
                return None
    if kind is None and designators:
        letters = {_DESIG_LETTER.get(re.sub(r"\d.*$", "", d).upper()) for d in designators}
        if len(letters) == 1 and None not in letters:
            kind = letters.pop()
    if kind is None:
        bad("value", value_text, "cannot tell the kind: write the unit (Ω or F), add a kind column,"
                                 " or use designators starting R, C or Q")
        return None
    if kind == "transistor":
        label = str(value_text).strip()
        value = None
    elif value is None or value <= 0:
        bad("value", value_text, "a value must be above zero")
        return None

    # window
    tol = tol_in_value
    tol_text = row.get("tolerance", "")
    if str(tol_text).strip() != "":
        try:
            tol = parse_tolerance(tol_text)
        except ValueParseError as exc:
            bad("tolerance", tol_text, exc.why)
            return None
    lo = hi = None
    window_given = tol is not None
    if kind != "transistor":
        if tol is None:
            tol = DEFAULT_WINDOW[kind]
        lo, hi = value * (1.0 - tol), value * (1.0 + tol)

    # minimum rating
    rating = None
    unit_needed = {"resistor": "W", "capacitor": "V"}.get(kind)
    for field in ("min_rating", "min_power", "min_voltage"):
        text = row.get(field, "")
        if str(text).strip() == "" or kind == "transistor":
            continue
        if field == "min_power" and kind != "resistor" or field == "min_voltage" and kind != "capacitor":
            continue  # a power column on a capacitor line (or voltage on a resistor) is not its rating
        try:
            q = parse_quantity(text)
        except ValueParseError as exc:
            bad(field, text, exc.why)
            return None
        if q.unit not in (None, unit_needed):
            bad(field, text, f"a {kind}'s rating is in {unit_needed}")
            return None
        if q.value <= 0:
            bad(field, text, "a rating must be above zero")
            return None
        rating = q.value if rating is None else max(rating, q.value)

    # quantity per unit
    qty_text = row.get("per_unit", "")
    if str(qty_text).strip() != "":
        try:
            qf = float(str(qty_text).strip().replace(",", "."))
        except ValueError:
            bad("per_unit", qty_text, "not a whole number")
            return None
        if qf != int(qf) or qf < 0:
            bad("per_unit", qty_text, "not a whole number")
            return None
        qty = int(qf)
        if designators and qty != len(designators):
            bad("per_unit", qty_text, f"says {qty} per unit but the line names {len(designators)} designators")
            return None
        if not designators:
            designators = [f"row{r}#{k}" for k in range(1, qty + 1)]
    elif not designators:
        bad("designators", "", "no designators and no quantity per unit")
        return None
    if not designators:
        return None  # a quantity of 0: nothing to fill

    single_text = str(row.get("single", "")).strip().lower()
    if single_text in _TRUE:
        single = True
    elif single_text in _FALSE:
        single = False
    else:
        bad("single", single_text, "write yes or no")
        return None
    return KitLine(file, sheet, r, tuple(designators), kind, value, lo, hi, tol, window_given, rating, single,
                   label, str(row.get("note", "")).strip())

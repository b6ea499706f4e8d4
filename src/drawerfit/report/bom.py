"""The parts list of a design (per unit and for N units) as rows, CSV or XLSX.

Every text cell that a spreadsheet could take for a formula, or that hides what it starts with, is
neutralised by a leading apostrophe, so opening the file runs nothing: cells starting with = + - @,
with any white space or line break (tab, carriage return, line feed, space, no-break space), with a
zero-width character, or with a full-width = + - @.
Numbers (counts, SI values, stock rows) are written as numbers in XLSX.
"""

from __future__ import annotations

import csv
from dataclasses import dataclass
from pathlib import Path

from ..parts import SpecError, pin_order_text
from ..values import format_code, format_percent, format_si
from ..io.saved_design import DesignFile

__all__ = ["BomRow", "COLUMNS", "bom_rows", "roles_in_order", "neutralise", "write_bom", "write_bom_csv", "write_bom_xlsx",
           "bom_csv_bytes", "bom_xlsx_bytes", "FORMULA_STARTS"]

# A spreadsheet reads a cell starting with one of these as a formula (or a formula's prefix), or may
# drop the character and read what follows as one: white space and line breaks, the invisible
# zero-width characters, and the full-width forms of = + - @ that some spreadsheets fold to ASCII.
FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r", "\n", " ", "\u00a0", "\u200b", "\u200c", "\u200d", "\u2060",
                  "\ufeff", "\uff1d", "\uff0b", "\uff0d", "\uff20")

# (header, BomRow attribute); headers are what a person sees in the first row.
COLUMNS = (
    ("Designator", "designator"),
    ("Role value", "role_value"),
    ("Role code", "role_code"),
    ("Role value (SI number)", "role_number"),
    ("Role", "role"),
    ("Made of", "arrangement"),
    ("Part value", "part_value"),
    ("Part code", "part_code"),
    ("Tolerance", "tolerance"),
    ("Rating", "rating"),
    ("Bin", "bin"),
    ("Stock file", "stock_file"),
    ("Stock sheet", "stock_sheet"),
    ("Stock row", "stock_row"),
    ("Per unit", "per_unit"),
    ("Units", "units"),
    ("For all units", "total"),
)

# the single stages' roles, then the two-stage amplifier's second stage (stages/two_stage.py)
ROLE_ORDER = ("R1", "R2", "RE", "RE2", "RC", "C1", "C2", "CE", "R3", "R4", "RE3", "C3")


def roles_in_order(stage):
    """(role, part, unit, rating unit) of each part the stage has, in the order lists show them."""
    for role in ROLE_ORDER:
        part = stage.parts.get(role)
        if part is not None:
            unit = _unit(role)
            yield role, part, unit, "W" if unit == "ohm" else "V"


@dataclass(frozen=True)
class BomRow:
    """One physical part (R1, or REa, REb of a pair), or the transistor."""

    designator: str
    role: str
    role_value: str
    role_code: str
    role_number: float | None
    arrangement: str
    part_value: str
    part_code: str
    tolerance: str
    rating: str
    bin: str
    stock_file: str
    stock_sheet: str
    stock_row: int | None
    per_unit: int
    units: int

    @property
    def total(self) -> int:
        return self.per_unit * self.units


def neutralise(cell):
    """A text cell made safe for a spreadsheet: prefixed with ' when it could start a formula."""
    if isinstance(cell, str) and (cell.startswith(FORMULA_STARTS) or cell[:1].isspace()):
        return "'" + cell
    return cell


def _unit(role: str) -> str:
    return "ohm" if role.startswith("R") else "F"  # the kind follows the letter (stages/base.py)


def _rating_text(role: str, rating: float | None) -> str:
    if rating is None:
        return ""
    return format_si(rating, "W" if role.startswith("R") else "V", 3)


def bom_rows(design: DesignFile) -> list[BomRow]:
    """One row per physical part, with its own designator (R1, or REa, REb, REc of a pair or
    triple, in the arrangement's order), then Q1.  Tolerance and rating are the part's own when
    the design file gives them, else the role's."""
    from .export import role_members

    stage, units = design.stage, design.units
    members = role_members(design)
    rows: list[BomRow] = []
    for role, part, unit, _rating_unit in roles_in_order(stage):
        choice = design.roles.get(role)
        arrangement = choice.arrangement if choice else "single"
        if choice and choice.describe and arrangement != "single":
            arrangement = f"{arrangement}: {choice.describe}"
        common = dict(role=role, role_value=format_si(part.value, unit), role_code=format_code(part.value, unit),
                      role_number=part.value, arrangement=arrangement, units=units, per_unit=1)
        role_rating = choice.rating if choice is not None and choice.rating is not None else part.rating
        if role not in members:
            rows.append(BomRow(designator=role, part_value=format_si(part.value, unit),
                               part_code=format_code(part.value, unit), tolerance=_tol_text(part.tolerance),
                               rating=_rating_text(role, part.rating), bin="", stock_file="", stock_sheet="",
                               stock_row=None, **common))
            continue
        for m, placed in zip(members[role], choice.parts):
            src = placed.source
            tol = m.tolerance if m.tolerance is not None else part.tolerance
            rating = m.rating if m.rating is not None else role_rating
            rows.append(BomRow(designator=m.designator, part_value=format_si(m.value, unit),
                               part_code=format_code(m.value, unit), tolerance=_tol_text(tol),
                               rating=_rating_text(role, rating), bin=m.location,
                               stock_file=str(src.get("file") or ""), stock_sheet=str(src.get("sheet") or ""),
                               stock_row=int(m.row) if m.row is not None else None, **common))
    for i, (designator, t) in enumerate(design.transistors.items()):
        loc, src = design.transistor_places.get(designator, ("", {}))
        if i == 0 and not loc:  # transistor_location and transistor_source are the first one's
            loc, src = design.transistor_location, design.transistor_source
        rating = ", ".join(x for x in (
            f"VCEO {format_si(t.vceo, 'V', 3)}" if t.vceo else "",
            f"IC max {format_si(t.ic_max, 'A', 3)}" if t.ic_max else "",
            f"Pd {format_si(t.pd, 'W', 3)}" if t.pd else "") if x)
        name = f"{t.label} ({t.polarity.upper()})" if t.label else t.polarity.upper()
        made = f"hFE {t.hfe_min:g} to {t.hfe_max:g}" + (f"; pins {pin_order_text(t.pins)}" if t.pins else "")
        rows.append(BomRow(designator, designator, name, t.label, None, made, name, t.label, "", rating,
                           loc, str(src.get("file") or ""), str(src.get("sheet") or ""),
                           int(src["row"]) if src.get("row") is not None else None, 1, units))
    return rows


def _tol_text(tolerance: float | None) -> str:
    return format_percent(tolerance) if tolerance else ""


def _cells(row: BomRow) -> list:
    return [getattr(row, attr) for _, attr in COLUMNS]


def bom_csv_bytes(design: DesignFile) -> bytes:
    """The parts list as CSV (UTF-8 with a byte-order mark, so spreadsheets read µ and Ω)."""
    import io

    buf = io.StringIO(newline="")
    w = csv.writer(buf)
    w.writerow([neutralise(h) for h, _ in COLUMNS])
    for row in bom_rows(design):
        w.writerow([neutralise("" if c is None else c if isinstance(c, str) else f"{c:.10g}"
                               if isinstance(c, float) else str(c)) for c in _cells(row)])
    return buf.getvalue().encode("utf-8-sig")


def bom_xlsx_bytes(design: DesignFile) -> bytes:
    """The parts list (and the pick list, when the design has one) as an XLSX workbook."""
    import io

    from openpyxl import Workbook
    from openpyxl.styles import Font

    rows = bom_rows(design)
    wb = Workbook()
    ws = wb.active
    ws.title = "parts"
    ws.append([neutralise(h) for h, _ in COLUMNS])
    for row in rows:
        ws.append([neutralise(c) for c in _cells(row)])
    for cell in ws[1]:
        cell.font = Font(bold=True)
    _text_only(ws)
    _fit_columns(ws)
    ws.freeze_panes = "A2"
    if design.pick_list:
        pl = wb.create_sheet("pick list")
        pl.append(["Bin", "Part", "Per unit", "Units", "Take", "Stock file", "Stock sheet", "Stock row"])
        for item in design.pick_list:
            pl.append([neutralise(item.location), neutralise(item.part), item.per_unit, design.units, item.count,
                       neutralise(str(item.source.get("file") or "")), neutralise(str(item.source.get("sheet") or "")),
                       item.source.get("row")])
        for cell in pl[1]:
            cell.font = Font(bold=True)
        _text_only(pl)
        _fit_columns(pl)
        pl.freeze_panes = "A2"
    buf = io.BytesIO()
    wb.save(buf)
    return buf.getvalue()


def _fit_columns(ws) -> None:
    # widths from the longest cell, so the sheet reads without resizing columns by hand
    from openpyxl.utils import get_column_letter

    for i, col in enumerate(ws.iter_cols(values_only=True), start=1):
        width = max((len(str(v)) for v in col if v is not None), default=6)
        ws.column_dimensions[get_column_letter(i)].width = min(max(width + 2, 6), 48)


def _text_only(ws) -> None:
    # openpyxl takes a str starting with '=' for a formula; after neutralising none does, and
    # marking every str cell as a string keeps it so whatever openpyxl's rules become.
    for row in ws.iter_rows():
        for cell in row:
            if isinstance(cell.value, str):
                cell.data_type = "s"


def write_bom_csv(design: DesignFile, out: str | Path) -> int:
    from ..io.files import atomic_write

    atomic_write(out, bom_csv_bytes(design))
    return len(bom_rows(design))


def write_bom_xlsx(design: DesignFile, out: str | Path) -> int:
    from ..io.files import atomic_write

    atomic_write(out, bom_xlsx_bytes(design))
    return len(bom_rows(design))


def write_bom(design: DesignFile, out: str | Path) -> int:
    """CSV or XLSX by the file's suffix, written atomically; returns the number of part rows."""
    out = Path(out)
    suffix = out.suffix.lower()
    writer = {".csv": write_bom_csv, ".xlsx": write_bom_xlsx}.get(suffix)
    if writer is None:
        raise SpecError(f"{out}: the parts list is written as .csv or .xlsx, not {suffix or 'a file with no suffix'}")
    return writer(design, out)

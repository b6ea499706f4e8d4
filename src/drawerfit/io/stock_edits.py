"""Change quantity cells of a stock file in place, keeping every other byte or style as it was.

A CSV is edited as bytes: the file is split into records and fields with their byte spans, and
only the digits of the quantity field in the affected records are replaced, so the delimiter,
quoting, line endings, encoding and BOM stay untouched.  An XLSX is loaded and saved with
openpyxl, which keeps the other sheets, styles and number formats; only the quantity cells get
new values.  Writing is the caller's business (see drawerfit.io.take): these functions return the
new bytes.
"""

from __future__ import annotations

import io
import re
from dataclasses import dataclass

from ..parts import StockError

__all__ = ["QtyEdit", "CsvField", "csv_records", "field_text", "parse_qty_text", "detect_delimiter", "new_qty_text",
           "edit_csv_bytes", "edit_xlsx_bytes", "xlsx_would_lose", "read_csv_qty", "read_xlsx_qty", "is_xlsx"]

BOM = b"\xef\xbb\xbf"
_QUOTE = ord('"')
_DELIMS = (b",", b";", b"\t")
# A quantity written as a whole number, optionally with a zero fraction ('12', '12.0', '12,00'),
# with anything else around it kept as written (quotes, spaces, a trailing 'pcs').
_QTY_RE = re.compile(r"^(\D*?)(\d+)((?:[.,]0+)?)(\D*)$")


@dataclass(frozen=True)
class QtyEdit:
    """One quantity cell to change: where it is and the quantity it must hold afterwards."""

    sheet: str | None
    row: int  # 1-based row a person sees
    column: int  # 0-based column index
    new_qty: int


@dataclass(frozen=True)
class CsvField:
    start: int  # byte offset of the field's first byte (a quote, if quoted)
    end: int  # byte offset just past the field's last byte
    quoted: bool


def is_xlsx(path: str) -> bool:
    return str(path).lower().endswith((".xlsx", ".xlsm"))


def csv_records(data: bytes, delimiter: bytes) -> list[list[CsvField]]:
    """Split CSV bytes into records of field spans; record i (0-based) is row i + 1.

    A blank line is a record of one empty field; a final line without a line ending is a record;
    a line ending at the very end of the file does not start another record.  Quotes are only
    special at the start of a field, and '""' inside quotes is one quote (RFC 4180).
    """
    d = delimiter[0]
    start = len(BOM) if data.startswith(BOM) else 0
    n = len(data)
    records: list[list[CsvField]] = []
    fields: list[CsvField] = []
    i = start
    field_start = i
    while True:
        if i >= n:
            # mid-record at the end of the file: that record counts; right after a line
            # ending (or in an empty file) there is no further record
            if fields or i > field_start:
                fields.append(CsvField(field_start, i, _is_quoted(data, field_start, i)))
                records.append(fields)
            break
        c = data[i]
        if c == _QUOTE and i == field_start:
            i += 1
            while i < n:
                if data[i] == _QUOTE:
                    if i + 1 < n and data[i + 1] == _QUOTE:
                        i += 2
                        continue
                    i += 1
                    break
                i += 1
            continue
        if c == d:
            fields.append(CsvField(field_start, i, _is_quoted(data, field_start, i)))
            i += 1
            field_start = i
            continue
        if c in (0x0A, 0x0D):
            fields.append(CsvField(field_start, i, _is_quoted(data, field_start, i)))
            records.append(fields)
            fields = []
            if c == 0x0D and i + 1 < n and data[i + 1] == 0x0A:
                i += 2
            else:
                i += 1
            field_start = i
            continue
        i += 1
    return records


def _is_quoted(data: bytes, start: int, end: int) -> bool:
    return end - start >= 2 and data[start] == _QUOTE and data[end - 1] == _QUOTE


def field_text(data: bytes, f: CsvField) -> str:
    raw = data[f.start:f.end]
    if f.quoted:
        raw = raw[1:-1].replace(b'""', b'"')
    return raw.decode("utf-8", errors="replace")  # only digits are ever rewritten; other text is compared


def detect_delimiter(data: bytes, header_text: str | None = None, column: int | None = None) -> bytes:
    """The delimiter of a CSV: the one under which ``header_text`` sits at ``column`` in some
    record, else the one that splits the first non-blank record into the most fields."""
    body = data[len(BOM):] if data.startswith(BOM) else data
    if header_text is not None and column is not None:
        want = _norm(header_text)
        for delim in _DELIMS:
            for rec in csv_records(data, delim)[:50]:
                if column < len(rec) and _norm(field_text(data, rec[column])) == want and len(rec) > 1:
                    return delim
    best, best_n = b",", 0
    first = next((ln for ln in body.splitlines() if ln.strip()), b"")
    for delim in _DELIMS:
        count = len(csv_records(first, delim)[0]) if first else 0
        if count > best_n:
            best, best_n = delim, count
    return best


def _norm(text: str) -> str:
    return re.sub(r"[\W_]+", "", text.lower())


def new_qty_text(old: str, new_qty: int, where: str) -> str:
    """The quantity text with its number replaced, everything around it as written."""
    m = _QTY_RE.match(old)
    if not m:
        raise StockError(f"{where}: the quantity {old!r} is not a whole number this tool can rewrite;"
                         " write it as a plain number and try again")
    lead, _digits, frac, tail = m.groups()
    return f"{lead}{new_qty}{frac}{tail}"


def parse_qty_text(old: str, where: str) -> int:
    m = _QTY_RE.match(old)
    if not m:
        raise StockError(f"{where}: the quantity {old!r} is not a whole number this tool can rewrite;"
                         " write it as a plain number and try again")
    return int(m.group(2))


def _quote(text: str, delimiter: bytes, was_quoted: bool) -> bytes:
    raw = text.encode("utf-8")
    if was_quoted:
        return b'"' + raw.replace(b'"', b'""') + b'"'
    return raw


def read_csv_qty(data: bytes, delimiter: bytes, row: int, column: int, where: str) -> tuple[int, str]:
    """The quantity at a row/column of CSV bytes, and its text as written."""
    records = csv_records(data, delimiter)
    if row < 1 or row > len(records) or column >= len(records[row - 1]):
        raise StockError(f"{where}: there is no quantity cell there (the file has {len(records)} rows)")
    text = field_text(data, records[row - 1][column])
    return parse_qty_text(text, where), text


def edit_csv_bytes(data: bytes, edits: list[QtyEdit], delimiter: bytes, file: str) -> bytes:
    """The CSV bytes with the quantity fields of ``edits`` rewritten and every other byte kept."""
    records = csv_records(data, delimiter)
    spans: list[tuple[int, int, bytes]] = []
    for e in edits:
        where = f"{file}, row {e.row}, column {e.column + 1}"
        if e.row < 1 or e.row > len(records) or e.column >= len(records[e.row - 1]):
            raise StockError(f"{where}: there is no quantity cell there")
        f = records[e.row - 1][e.column]
        old = field_text(data, f)
        spans.append((f.start, f.end, _quote(new_qty_text(old, e.new_qty, where), delimiter, f.quoted)))
    spans.sort()
    out = io.BytesIO()
    pos = 0
    for start, end, new in spans:
        if start < pos:
            raise StockError(f"{file}: two changes to the same quantity cell")
        out.write(data[pos:start])
        out.write(new)
        pos = end
    out.write(data[pos:])
    return out.getvalue()


def _xlsx_cell(wb, sheet: str | None, row: int, column: int, where: str):
    name = sheet if sheet is not None else wb.sheetnames[0]
    if name not in wb.sheetnames:
        raise StockError(f"{where}: the workbook has no sheet {name!r}")
    return wb[name].cell(row=row, column=column + 1)


def _cell_qty(cell, where: str) -> int:
    v = cell.value
    if isinstance(v, bool) or v is None:
        raise StockError(f"{where}: the quantity cell is empty; write a number there first")
    if isinstance(v, (int, float)):
        if float(v) != int(v):
            raise StockError(f"{where}: the quantity {v!r} is not a whole number")
        return int(v)
    if isinstance(v, str) and v.startswith("="):
        raise StockError(f"{where}: the quantity is a formula ({v}); this tool changes only plain numbers")
    return parse_qty_text(str(v), where)


def read_xlsx_qty(path: str, sheet: str | None, row: int, column: int, where: str) -> int:
    from openpyxl import load_workbook

    wb = load_workbook(path)
    return _cell_qty(_xlsx_cell(wb, sheet, row, column, where), where)


# Parts of an XLSX package that openpyxl does not carry through a load and save: rewriting such a
# workbook would silently drop them, so take refuses it instead.
_XLSX_LOST = {"xl/drawings/": "drawings or images", "xl/charts/": "charts", "xl/media/": "images",
              "xl/pivotTables/": "pivot tables", "xl/pivotCache/": "pivot tables", "xl/slicers/": "slicers",
              "xl/timelines/": "timelines", "xl/embeddings/": "embedded objects", "xl/ctrlProps/": "form controls"}


def xlsx_would_lose(path: str, data: bytes | None = None) -> list[str]:
    """What a load-and-save of this workbook with openpyxl would drop (empty when nothing)."""
    import zipfile

    try:
        with zipfile.ZipFile(io.BytesIO(data) if data is not None else path) as z:
            names = z.namelist()
    except (zipfile.BadZipFile, OSError) as exc:
        raise StockError(f"{path}: cannot be read as an XLSX workbook ({exc})") from None
    lost = sorted({what for n in names for prefix, what in _XLSX_LOST.items() if n.startswith(prefix)})
    if not str(path).lower().endswith(".xlsm") and any(n.startswith("xl/vbaProject") for n in names):
        lost.append("macros")
    return lost


def edit_xlsx_bytes(path: str, edits: list[QtyEdit], file: str, before: list[int] | None = None,
                    data: bytes | None = None) -> bytes:
    """The workbook saved with the quantity cells of ``edits`` changed; styles and sheets kept.

    ``before`` (one per edit) are the quantities the cells must hold now, else nothing is changed;
    ``data`` are the file's bytes as already read and checked (else the file is read again).
    """
    from openpyxl import load_workbook

    lost = xlsx_would_lose(path, data)
    if lost:
        raise StockError(f"{file}: the workbook holds {', '.join(lost)}, which rewriting it would lose; nothing"
                         " changed. Keep the stock on a workbook of its own (or in a CSV) to use take")

    keep_vba = str(path).lower().endswith(".xlsm")
    wb = load_workbook(io.BytesIO(data) if data is not None else path, keep_vba=keep_vba)
    for n, e in enumerate(edits):
        sheet_part = f", sheet {e.sheet!r}" if e.sheet else ""
        where = f"{file}{sheet_part}, row {e.row}, column {e.column + 1}"
        cell = _xlsx_cell(wb, e.sheet, e.row, e.column, where)
        held = _cell_qty(cell, where)  # refuses formulas and empty cells
        if before is not None and held != before[n]:
            raise StockError(f"{where}: holds {held}, expected {before[n]}; nothing changed")
        if isinstance(cell.value, str):
            cell.value = new_qty_text(cell.value, e.new_qty, where)
        else:
            cell.value = int(e.new_qty)  # the cell's number format and style stay on the cell
    buf = io.BytesIO()
    wb.save(buf)
    return buf.getvalue()

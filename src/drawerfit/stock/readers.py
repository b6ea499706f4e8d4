"""Raw rows from a stock file: CSV (comma, semicolon or tab; UTF-8 with or without BOM) or XLSX.

Row numbers are the ones a person sees: a CSV record's number counting every record (blank
ones too), an XLSX row's number in its sheet.  Nothing here writes to the file.
"""

from __future__ import annotations

import csv
import hashlib
import io
import os
from dataclasses import dataclass

from ..parts import StockError


@dataclass(frozen=True)
class Sheet:
    """The cells of one sheet (CSV: the whole file), row by row, with their row numbers."""

    name: str | None
    rows: list[list[object]]
    numbers: list[int]


@dataclass(frozen=True)
class RawFile:
    path: str
    sheets: list[Sheet]
    checksum: str
    notes: tuple[str, ...] = ()


def file_checksum(data: bytes) -> str:
    return "sha256:" + hashlib.sha256(data).hexdigest()


def read_file(path: str) -> RawFile:
    """Read every sheet of a CSV or XLSX file as lists of cells."""
    if not os.path.exists(path):
        raise StockError(f"{path}: no such file")
    if os.path.isdir(path):
        raise StockError(f"{path}: is a folder, not a stock file")
    with open(path, "rb") as fh:
        data = fh.read()
    checksum = file_checksum(data)
    if data[:4] == b"PK\x03\x04" or path.lower().endswith((".xlsx", ".xlsm")):
        return RawFile(path, _read_xlsx(path, data), checksum)
    if path.lower().endswith(".xls"):
        raise StockError(f"{path}: the old binary .xls format is not read; save the file as .xlsx or .csv")
    text, notes = _decode(path, data)
    return RawFile(path, [_read_csv(text)], checksum, notes)


def _decode(path: str, data: bytes) -> tuple[str, tuple[str, ...]]:
    try:
        return data.decode("utf-8-sig"), ()
    except UnicodeDecodeError as exc:
        # Not UTF-8: read as Windows-1252 so the rest of the file still loads, and say so.
        line = data[: exc.start].count(b"\n") + 1
        return data.decode("cp1252", errors="replace"), (
            f"{path}: line {line} is not UTF-8; the file was read as Windows-1252",
        )


def sniff_delimiter(text: str) -> str:
    """Comma, semicolon or tab: whichever splits the first non-blank lines most consistently."""
    lines = [ln for ln in text.splitlines() if ln.strip()][:20]
    sample = "\n".join(lines)
    try:
        return csv.Sniffer().sniff(sample, delimiters=",;\t").delimiter
    except csv.Error:
        counts = {d: sum(ln.count(d) for ln in lines) for d in (",", ";", "\t")}
        best = max(counts, key=counts.get)
        return best if counts[best] else ","


def _read_csv(text: str) -> Sheet:
    delim = sniff_delimiter(text)
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delim)
    rows: list[list[object]] = []
    numbers: list[int] = []
    for n, record in enumerate(reader, start=1):
        rows.append(list(record))
        numbers.append(n)
    return Sheet(None, rows, numbers)


def _read_xlsx(path: str, data: bytes) -> list[Sheet]:
    import openpyxl

    try:
        wb = openpyxl.load_workbook(io.BytesIO(data), read_only=True, data_only=True)
    except Exception as exc:  # openpyxl raises many kinds for a damaged file
        raise StockError(f"{path}: cannot be read as an XLSX workbook ({exc})") from None
    sheets = []
    try:
        for ws in wb.worksheets:
            rows, numbers = [], []
            for n, row in enumerate(ws.iter_rows(min_row=1, values_only=True), start=1):
                rows.append(list(row))
                numbers.append(n)
            sheets.append(Sheet(ws.title, rows, numbers))
    finally:
        wb.close()
    return sheets

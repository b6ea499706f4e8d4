"""Raw rows from a stock file or parts list: CSV (comma, semicolon or tab; UTF-8 with or without BOM)
or XLSX, read as a stream within documented limits.

Row numbers are the ones a person sees: a CSV record's number counting every record (blank
ones too), an XLSX row's number in its sheet.  Before any parsing the file's size, a workbook's
unzipped size (the sizes its zip directory declares, which the unzipping then holds to) and the
number of rows are checked against the limits in ``constants``; rows are then handed on one at a
time, so memory does not grow with the file.  A cell longer than ``MAX_CELL_CHARS`` comes through
as a ``LongCell`` (its length and a short excerpt), so the line can be skipped with its row and
column.  Nothing here writes to the file.
"""

from __future__ import annotations

import codecs
import csv
import hashlib
import io
import os
import re
from dataclasses import dataclass
from typing import Iterator

from .. import constants as K
from ..parts import DrawerfitError, StockError

__all__ = ["LongCell", "Sheet", "RawFile", "open_table_file", "file_checksum", "sniff_delimiter", "excerpt"]

_SNIFF_CHARS = 64 * 1024  # the delimiter is told from the first lines; this is plenty for twenty


@dataclass(frozen=True)
class LongCell:
    """A cell too long to read: its length and the first characters, for the message."""

    length: int
    start: str

    def __str__(self) -> str:  # never taken for content: any use shows what it is
        return f"<{self.length:,} characters>"


def excerpt(text: object, limit: int = 40) -> str:
    """At most ``limit`` characters of a cell, for a message."""
    s = str(text)
    return s if len(s) <= limit else s[:limit] + "…"


@dataclass(frozen=True)
class Sheet:
    """One sheet (CSV: the whole file); ``records`` yields (row number, cells), once."""

    name: str | None
    records: Iterator[tuple[int, list]]


class RawFile:
    """A checked stock file or list: path, checksum, notes, and its sheets read one after another."""

    def __init__(self, path: str, data: bytes, xlsx: bool, error: type[Exception]):
        self.path, self.data, self.xlsx, self.error = path, data, xlsx, error
        self.checksum = file_checksum(data)
        self.notes: tuple[str, ...] = ()
        self.encoding = "utf-8-sig"

    def sheets(self) -> Iterator[Sheet]:
        if self.xlsx:
            yield from _xlsx_sheets(self)
        else:
            yield Sheet(None, _csv_records(self))


def file_checksum(data: bytes) -> str:
    return "sha256:" + hashlib.sha256(data).hexdigest()


def open_table_file(path: str, error: type[Exception] = StockError, what: str = "stock file") -> RawFile:
    """Read and check a CSV or XLSX file (``error`` is raised for anything unusable)."""
    if not os.path.exists(path):
        raise error(f"{path}: no such file")
    if os.path.isdir(path):
        raise error(f"{path}: is a folder, not a {what}")
    try:
        size = os.path.getsize(path)
        if size > K.MAX_INPUT_BYTES:
            raise error(f"{path}: {size:,} bytes is over the limit of {K.MAX_INPUT_BYTES:,} bytes for a {what};"
                        " split the file (see docs/inventory-format.md, size limits)")
        with open(path, "rb") as fh:
            data = fh.read(K.MAX_INPUT_BYTES + 1)
    except OSError as exc:
        raise error(f"{path}: cannot be read ({exc.strerror or exc})") from None
    if data[:4] == b"PK\x03\x04" or path.lower().endswith((".xlsx", ".xlsm")):
        raw = RawFile(path, data, True, error)
        _check_xlsx(raw)
        return raw
    if path.lower().endswith(".xls"):
        raise error(f"{path}: the old binary .xls format is not read; save the file as .xlsx or .csv")
    raw = RawFile(path, data, False, error)
    raw.encoding, raw.notes = _encoding(path, data)
    _check_csv_rows(raw)
    return raw


# --- CSV ---------------------------------------------------------------------------------------------


def _encoding(path: str, data: bytes) -> tuple[str, tuple[str, ...]]:
    """UTF-8 (with or without BOM) when every byte decodes as such, else Windows-1252 with a note."""
    decoder = codecs.getincrementaldecoder("utf-8")()
    step = 1 << 20
    try:
        for at in range(0, len(data), step):
            decoder.decode(data[at:at + step])
        decoder.decode(b"", final=True)
        return "utf-8-sig", ()
    except UnicodeDecodeError:
        # where the first bad byte is, for the note (the decoder's offset is within its chunk)
        try:
            data.decode("utf-8")
            start = len(data)
        except UnicodeDecodeError as exc:
            start = exc.start
        line = data[:start].count(b"\n") + 1
        return "cp1252", (f"{path}: line {line} is not UTF-8; the file was read as Windows-1252",)


def _text_stream(raw: RawFile) -> io.TextIOWrapper:
    # decoded as it is read, so the text of the whole file never sits in memory beside its bytes
    return io.TextIOWrapper(io.BytesIO(raw.data), encoding=raw.encoding, errors="replace", newline="")


def sniff_delimiter(text: str) -> str:
    """Comma, semicolon or tab: whichever splits the first non-blank lines most consistently."""
    lines = [ln for ln in text[:_SNIFF_CHARS].splitlines() if ln.strip()][:20]
    sample = "\n".join(lines)
    try:
        return csv.Sniffer().sniff(sample, delimiters=",;\t").delimiter
    except csv.Error:
        counts = {d: sum(ln.count(d) for ln in lines) for d in (",", ";", "\t")}
        best = max(counts, key=counts.get)
        return best if counts[best] else ","


class _FieldLimit:
    """The csv module's field limit raised to the file's size while reading it (restored after), so
    a long cell reaches our own check instead of stopping the reader."""

    def __enter__(self):
        self.old = csv.field_size_limit()
        csv.field_size_limit(max(self.old, K.MAX_INPUT_BYTES + 1))

    def __exit__(self, *exc):
        csv.field_size_limit(self.old)
        return False


def _reader(raw: RawFile):
    stream = _text_stream(raw)
    delim = sniff_delimiter(stream.read(_SNIFF_CHARS))
    stream.seek(0)
    return csv.reader(stream, delimiter=delim)


def _check_csv_rows(raw: RawFile) -> None:
    """Refuse a CSV with more records than MAX_ROWS before reading any of it into lines."""
    if raw.data.count(b"\n") < K.MAX_ROWS and raw.data.count(b"\r") < K.MAX_ROWS:
        return  # fewer line breaks than the limit: fewer records too
    n = 0
    with _FieldLimit():
        try:
            for record in _reader(raw):
                if record and any(c.strip() for c in record):
                    n += 1
        except csv.Error:
            return  # the reader stops at the same place when the lines are read; that is reported there
    if n > K.MAX_ROWS:
        raise raw.error(f"{raw.path}: {n:,} rows is over the limit of {K.MAX_ROWS:,} rows; split the file"
                        " (see docs/inventory-format.md, size limits)")


def _cells(values, limit: int = K.MAX_CELL_CHARS) -> list:
    out = []
    for v in values[:K.MAX_COLUMNS]:
        if isinstance(v, str) and len(v) > limit:
            v = LongCell(len(v), v[:40])
        out.append(v)
    return out


def _csv_records(raw: RawFile) -> Iterator[tuple[int, list]]:
    with _FieldLimit():
        reader = _reader(raw)
        n = 0
        while True:
            try:
                record = next(reader)
            except StopIteration:
                return
            except csv.Error as exc:  # e.g. a NUL byte; the records before it are kept
                raise raw.error(f"{raw.path}, row {reader.line_num}: the file cannot be read past this point"
                                f" ({exc}); fix that row") from None
            n += 1
            yield n, _cells(record)


# --- XLSX --------------------------------------------------------------------------------------------

_ROW_TAG = re.compile(rb"<(?:\w{1,10}:)?row[\s>/]")
_TAG_MAX = 16  # longest match of _ROW_TAG, in bytes


def _check_xlsx(raw: RawFile) -> None:
    """Refuse a workbook whose unzipped parts or rows are over the limits, before parsing any XML."""
    import zipfile

    try:
        z = zipfile.ZipFile(io.BytesIO(raw.data))
    except (zipfile.BadZipFile, OSError, ValueError) as exc:
        raise raw.error(f"{raw.path}: cannot be read as an XLSX workbook ({exc})") from None
    with z:
        infos = z.infolist()
        total = sum(i.file_size for i in infos)
        if total > K.MAX_XLSX_UNPACKED_BYTES:
            raise raw.error(f"{raw.path}: the workbook unpacks to {total:,} bytes, over the limit of"
                            f" {K.MAX_XLSX_UNPACKED_BYTES:,}; not read (see docs/inventory-format.md, size limits)")
        for i in infos:
            if i.filename.lower().endswith("sharedstrings.xml") and i.file_size > K.MAX_XLSX_SHARED_BYTES:
                raise raw.error(f"{raw.path}: the workbook's shared text unpacks to {i.file_size:,} bytes, over the"
                                f" limit of {K.MAX_XLSX_SHARED_BYTES:,}; not read")
        rows = 0
        for i in infos:
            if i.filename.startswith("xl/worksheets/") and i.filename.endswith(".xml"):
                rows += _count_rows(z, i, raw.error)
                if rows > K.MAX_ROWS:
                    raise raw.error(f"{raw.path}: more than {K.MAX_ROWS:,} rows, over the limit; split the"
                                    " workbook (see docs/inventory-format.md, size limits)")


def _count_rows(z, info, error) -> int:
    """Row elements in a sheet's XML, counted while unzipping in pieces (never parsed, never held)."""
    import zipfile

    n = 0
    tail = b""
    try:
        with z.open(info) as fh:
            while True:
                chunk = fh.read(1 << 20)
                if not chunk:
                    return n
                buf = tail + chunk
                # a tag that ends inside the kept tail was counted with the piece before
                n += sum(1 for m in _ROW_TAG.finditer(buf) if m.end() > len(tail))
                tail = buf[-_TAG_MAX:]
    except (zipfile.BadZipFile, OSError, EOFError, RuntimeError, NotImplementedError, ValueError) as exc:
        raise error(f"{info.filename}: damaged inside the workbook ({excerpt(exc, 200)})") from None


def _xlsx_sheets(raw: RawFile) -> Iterator[Sheet]:
    import openpyxl

    try:
        wb = openpyxl.load_workbook(io.BytesIO(raw.data), read_only=True, data_only=True)
    except Exception as exc:  # openpyxl raises many kinds for a damaged file
        raise raw.error(f"{raw.path}: cannot be read as an XLSX workbook ({excerpt(exc, 200)})") from None
    try:
        for ws in wb.worksheets:
            yield Sheet(ws.title, _xlsx_records(raw, ws))
    finally:
        wb.close()


def _xlsx_records(raw: RawFile, ws) -> Iterator[tuple[int, list]]:
    # The stored size of the sheet is not trusted: rows are not padded to it.
    ws.reset_dimensions()
    n = 0
    try:
        for number, row in enumerate(ws.iter_rows(values_only=True), start=1):
            if not row:
                continue
            n += 1
            if n > K.MAX_ROWS:
                raise raw.error(f"{raw.path}: more than {K.MAX_ROWS:,} rows, over the limit; split the workbook")
            yield number, _cells(list(row))
    except DrawerfitError:
        raise
    except Exception as exc:  # damaged XML inside the zip
        raise raw.error(f"{raw.path}, sheet {ws.title!r}: cannot be read past row {n} ({excerpt(exc, 200)})"
                        ) from None

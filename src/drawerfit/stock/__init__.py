"""Loading the user's stock: CSV or XLSX, header matching, defaults, and problems with file/sheet/row/column.

The loader never writes to the user's file.
"""

from __future__ import annotations

from collections import Counter

from ..parts import LineIssue, Stock, StockError
from .headers import match_header
from .lines import describe_assumptions, read_sheet
from ..io.tables import file_checksum, open_table_file

__all__ = ["load_stock", "match_header", "file_checksum"]


def load_stock(path: str, *, strict: bool = False) -> Stock:
    """Read a stock file; unreadable lines are skipped and listed in ``Stock.problems``.

    With ``strict``, any unreadable line (a problem of severity "error") raises StockError.
    """
    raw = open_table_file(str(path))
    lines, problems, warnings = [], [], []
    assumed: Counter = Counter()
    for note in raw.notes:
        problems.append(LineIssue(raw.path, None, None, None, "", note.split(": ", 1)[-1], "warning"))
    for sheet in raw.sheets():
        result = read_sheet(sheet.records, raw.path, sheet.name, len(lines))
        lines.extend(result.lines)
        problems.extend(result.problems)
        assumed.update(result.assumed)
        warnings.extend(result.warnings)
    errors = [p for p in problems if p.severity == "error"]
    if strict and errors:
        shown = "\n".join(f"  {p}" for p in errors[:20])
        more = f"\n  ... and {len(errors) - 20} more" if len(errors) > 20 else ""
        raise StockError(f"{raw.path}: {len(errors)} line(s) cannot be read (--strict):\n{shown}{more}")
    if not lines and not errors:
        raise StockError(f"{raw.path}: no stock lines found (is there a header row with a value column?)")
    return Stock(lines=tuple(lines), problems=tuple(problems), assumptions=tuple(describe_assumptions(assumed)),
                 files=(raw.path,), checksum=raw.checksum, warnings=tuple(warnings))

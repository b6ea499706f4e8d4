"""Plain-text tables for the terminal: columns as wide as their widest cell, so nothing slips."""

from __future__ import annotations

from typing import Sequence

__all__ = ["text_table"]


def text_table(header: Sequence[str], rows: Sequence[Sequence[object]], align: str = "",
               indent: str = "  ") -> list[str]:
    """The lines of a table; ``align`` holds one '<' or '>' per column (default '<').

    The last column is not padded, so a long note at the end of a row does not widen the others.
    """
    cells = [[str(h) for h in header]] + [["" if c is None else str(c) for c in row] for row in rows]
    n = len(header)
    widths = [max(len(r[i]) for r in cells if i < len(r)) for i in range(n)]
    align = (align or "").ljust(n, "<")
    out = []
    for r in cells:
        parts = []
        for i, text in enumerate(r[:n]):
            if i == n - 1 and align[i] == "<":
                parts.append(text)
            else:
                parts.append(text.rjust(widths[i]) if align[i] == ">" else text.ljust(widths[i]))
        out.append((indent + "  ".join(parts)).rstrip())
    return out

"""The parts of a drawer: stock lines as read from the user's file, with where each came from."""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass
from typing import Literal

Kind = Literal["resistor", "capacitor", "transistor"]
KINDS: tuple[str, ...] = ("resistor", "capacitor", "transistor")
UNIT_OF_KIND = {"resistor": "ohm", "capacitor": "F"}
KIND_OF_UNIT = {"ohm": "resistor", "F": "capacitor"}


@dataclass(frozen=True)
class Source:
    """Where a stock line sits in the user's file.

    ``row`` is the row number a person sees in a spreadsheet or text editor (1 = first line of the
    file, so the header of a plain CSV is row 1).  ``qty_column`` is the 0-based index of the
    quantity column in that sheet, or None when the file has none (then every line counts as 1).
    """

    file: str
    sheet: str | None
    row: int
    qty_column: int | None = None
    qty_header: str | None = None

    def where(self) -> str:
        sheet = f", sheet {self.sheet!r}" if self.sheet else ""
        return f"{self.file}{sheet}, row {self.row}"

    def to_dict(self) -> dict:
        return {"file": self.file, "sheet": self.sheet, "row": self.row}


@dataclass(frozen=True)
class StockLine:
    """One line of the drawer, in SI base units.

    ``index`` is the line's position in ``Stock.lines``; search results name lines by it.
    Resistors carry ``power`` (W rating), capacitors ``voltage`` (V rating) and ``polarized``;
    transistors carry ``label``, ``polarity`` and their ratings, with ``value`` None.
    ``assumed`` names the fields that were not in the file and got a documented default.
    """

    index: int
    kind: str
    value: float | None
    qty: int
    source: Source
    tolerance: float | None = None
    power: float | None = None
    voltage: float | None = None
    location: str = ""
    label: str = ""
    dielectric: str | None = None
    polarized: bool = False
    polarity: str | None = None  # transistors: "npn" or "pnp"
    hfe_min: float | None = None
    hfe_max: float | None = None
    vceo: float | None = None
    ic_max: float | None = None
    pd: float | None = None
    vbe: float | None = None
    vce_sat: float | None = None
    pins: str = ""  # transistors: the leads in pin order, e.g. "EBC" (see ``parse_pin_order``)
    note: str = ""
    assumed: tuple[str, ...] = ()

    @property
    def rating(self) -> float | None:
        """The rating that matters for this kind: W for a resistor, V for a capacitor."""
        return self.power if self.kind == "resistor" else self.voltage if self.kind == "capacitor" else None

    def to_dict(self) -> dict:
        d = asdict(self)
        d["source"] = self.source.to_dict()
        d["assumed"] = list(self.assumed)
        return d


PIN_SEPARATORS = " -/,.|;:_"


def parse_pin_order(text: object) -> str:
    """A transistor's leads in pin order as written in a stock file or spec: 'EBC', 'C-B-E',
    'e b c' -> 'EBC', 'CBE', 'EBC'.  ValueError (a message fit to print) unless E, B and C each
    appear once."""
    raw = str(text)
    letters = "".join(ch for ch in raw.upper() if ch not in PIN_SEPARATORS)
    if len(letters) != 3 or sorted(letters) != ["B", "C", "E"]:
        raise ValueError("not a pin order: expected E, B and C once each, in pin order, e.g. 'EBC' or 'C-B-E'")
    return letters


def pin_order_text(pins: str) -> str:
    """'EBC' -> 'E-B-C' (pin 1 first)."""
    return "-".join(pins)


@dataclass(frozen=True)
class LineIssue:
    """An issue with one line of a user's file (stock file or parts list): it could not be read
    (severity "error": the line is skipped), or a warning about it; with file, sheet, row and column."""

    file: str
    sheet: str | None
    row: int | None
    column: str | None
    text: str
    message: str
    severity: Literal["error", "warning"] = "error"

    def __str__(self) -> str:
        parts = [self.file]
        if self.sheet:
            parts.append(f"sheet {self.sheet!r}")
        if self.row is not None:
            parts.append(f"row {self.row}")
        if self.column:
            parts.append(f"column {self.column!r}")
        where = ", ".join(parts)
        quoted = f" ({self.text!r})" if self.text != "" else ""
        return f"{where}: {self.message}{quoted}"

    def to_dict(self) -> dict:
        return asdict(self)


@dataclass(frozen=True, repr=False)
class Stock:
    """A loaded drawer: its lines, the problems met while reading, and the defaults applied."""

    lines: tuple[StockLine, ...]
    problems: tuple[LineIssue, ...] = ()
    assumptions: tuple[str, ...] = ()
    files: tuple[str, ...] = ()
    checksum: str = ""  # sha256 of the file bytes, so a later take can tell the file changed
    warnings: tuple[str, ...] = ()  # what the reading did that changes results (shown in every summary)

    def of_kind(self, kind: str) -> tuple[StockLine, ...]:
        return tuple(line for line in self.lines if line.kind == kind)

    def __repr__(self) -> str:
        counts = ", ".join(f"{n} {k}{'s' if n != 1 else ''}" for k in KINDS if (n := len(self.of_kind(k))))
        skipped = sum(1 for p in self.problems if p.severity == "error")
        where = f" from {self.files[0]}" if self.files else ""
        return (f"<Stock{where}: {len(self.lines)} lines ({counts or 'none'}), {skipped} skipped, "
                f"{len(self.warnings)} warning(s)>")

    def summary(self) -> dict:
        """Counts, value ranges and decades per kind (the `stock` command's summary)."""
        out: dict = {}
        for kind in KINDS:
            lines = self.of_kind(kind)
            if not lines:
                continue
            entry = {"lines": len(lines), "parts": sum(ln.qty for ln in lines),
                     "empty_lines": sum(1 for ln in lines if ln.qty == 0)}
            if kind != "transistor":
                values = [ln.value for ln in lines if ln.qty > 0]
                if values:
                    entry["min"], entry["max"] = min(values), max(values)
                    per_decade: dict[int, int] = {}
                    for v in values:
                        d = math.floor(math.log10(v) + 1e-9)
                        per_decade[d] = per_decade.get(d, 0) + 1
                    entry["decades"] = {str(d): n for d, n in sorted(per_decade.items())}
            else:
                entry["types"] = sorted({f"{ln.label} ({ln.polarity.upper()})" for ln in lines})
            out[kind] = entry
        return out

    def to_dict(self) -> dict:
        """The `stock --json` shape: every line in SI units, the problems, warnings, defaults and summary."""
        parts = []
        for ln in self.lines:
            d = {"kind": ln.kind, "value": ln.value, "label": ln.label or None, "tolerance": ln.tolerance,
                 "power": ln.power, "voltage": ln.voltage, "qty": ln.qty, "location": ln.location,
                 "source": ln.source.to_dict(), "assumed": list(ln.assumed)}
            if ln.kind == "capacitor":
                d.update(dielectric=ln.dielectric, polarized=ln.polarized)
            if ln.kind == "transistor":
                d.update(polarity=ln.polarity, hfe_min=ln.hfe_min, hfe_max=ln.hfe_max, vceo=ln.vceo,
                         ic_max=ln.ic_max, pd=ln.pd, vbe=ln.vbe, vce_sat=ln.vce_sat)
            parts.append(d)
        return {"parts": parts, "problems": [p.to_dict() for p in self.problems], "warnings": list(self.warnings),
                "assumptions": list(self.assumptions), "summary": self.summary(), "checksum": self.checksum}

    def to_pandas(self):
        """One row per stock line (SI units), with its sheet and row in the file."""
        import pandas as pd

        cols = ["kind", "value", "tolerance", "power", "voltage", "qty", "location", "label", "polarized",
                "dielectric", "polarity", "hfe_min", "hfe_max", "vceo", "ic_max", "pd", "sheet", "row"]
        rows = [{**{c: getattr(ln, c) for c in cols[:-2]}, "sheet": ln.source.sheet, "row": ln.source.row}
                for ln in self.lines]
        return pd.DataFrame(rows, columns=cols)

    def transistors(self) -> tuple[StockLine, ...]:
        return self.of_kind("transistor")


class DrawerfitError(Exception):
    """A mistake the user can make; the message is fit to print as it is."""

    exit_status = 2


class StockError(DrawerfitError):
    """The stock file cannot be used."""


class SpecError(DrawerfitError):
    """The spec (TOML) is wrong or incomplete."""


class NoDesignError(DrawerfitError):
    """Nothing in the drawer meets the spec."""

    exit_status = 3


class ChecksNotMetError(DrawerfitError):
    """`analyze --must-pass`: the stage misses a target or a rating (the analysis was printed)."""

    exit_status = 4


class SearchLimitError(DrawerfitError):
    """The design search stopped at its work budget: what it shows is not proven."""

    exit_status = 5

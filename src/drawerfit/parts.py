"""The parts of a drawer: stock lines as read from the user's file, with where each came from."""

from __future__ import annotations

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
class Problem:
    """A line of the user's file that could not be read, or a warning about one."""

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


@dataclass(frozen=True)
class Stock:
    """A loaded drawer: its lines, the problems met while reading, and the defaults applied."""

    lines: tuple[StockLine, ...]
    problems: tuple[Problem, ...] = ()
    assumptions: tuple[str, ...] = ()
    files: tuple[str, ...] = ()
    checksum: str = ""  # sha256 of the file bytes, so a later take can tell the file changed
    warnings: tuple[str, ...] = ()  # what the reading did that changes results (shown in every summary)

    def of_kind(self, kind: str) -> tuple[StockLine, ...]:
        return tuple(line for line in self.lines if line.kind == kind)

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

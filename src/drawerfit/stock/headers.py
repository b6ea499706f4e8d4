"""Header matching: the words people put at the top of a stock column, mapped to our fields.

Matching ignores case, spaces and punctuation; a unit in the header ("Power (W)",
"Capacitance [nF]", "Tol %") is split off and becomes the column's default unit.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from ..values import ValueParseError, parse_quantity

# field -> the normalised words that name it (lower case, letters and digits only)
FIELD_WORDS: dict[str, tuple[str, ...]] = {
    "kind": ("kind", "type", "category", "parttype", "component", "componenttype", "class", "part", "family"),
    "value": ("value", "resistance", "capacitance", "val", "nominal", "nominalvalue", "ohms", "farads",
              "size"),
    "tolerance": ("tolerance", "tol", "accuracy", "precision"),
    "power": ("power", "watts", "wattage", "powerrating", "ratedpower", "watt"),
    "voltage": ("voltage", "volts", "workingvoltage", "voltagerating", "ratedvoltage", "wv", "vmax",
                "maxvoltage", "volt", "ratingv"),
    # one column holding watts on resistors and volts on capacitors: read by the unit in each cell
    "rating": ("rating", "ratings", "rated", "maxrating", "ratingmax", "maximumrating"),
    "qty": ("qty", "quantity", "count", "onhand", "stock", "instock", "amount", "pcs", "pieces", "number",
            "num", "units", "have", "left"),
    "location": ("location", "bin", "drawer", "box", "slot", "place", "shelf", "position", "where", "tray",
                 "compartment", "storage"),
    "dielectric": ("dielectric", "material", "technology", "construction", "style"),
    "polarity": ("polarity", "polarized", "polarised", "npnpnp"),
    "label": ("label", "name", "marking", "model", "device", "id", "partname", "designation", "typename",
              "ident", "partnumber", "partno"),
    "hfe_min": ("hfemin", "minhfe", "betamin", "minbeta", "hfelow", "gainmin"),
    "hfe_max": ("hfemax", "maxhfe", "betamax", "maxbeta", "hfehigh", "gainmax"),
    "hfe": ("hfe", "beta", "hfetyp", "typhfe", "gain"),
    "vceo": ("vceo", "vceomax", "bvceo", "vcemax", "vce"),
    "ic_max": ("icmax", "maxic", "ic", "collectorcurrent", "imax"),
    "pd": ("pd", "ptot", "pdmax", "pmax", "dissipation", "powerdissipation", "ptotal"),
    "vbe": ("vbe", "vbeon", "vbetyp"),
    "vce_sat": ("vcesat", "vcesatmax", "vsat", "saturationvoltage"),
    # a transistor's leads in pin order ('EBC', 'C-B-E'): shown to the builder, no figure uses it
    "pins": ("pins", "pinout", "pinorder", "pinning", "leadorder", "leads", "pinconfig", "pinconfiguration"),
    "note": ("note", "notes", "comment", "comments", "description", "remarks", "remark", "desc", "info"),
}

_WORD_TO_FIELD = {w: f for f, words in FIELD_WORDS.items() for w in words}

# Units a header may carry, with the field they suggest when the words alone do not say.
_UNIT_IN_HEADER = re.compile(r"^(.*?)[\s]*[\(\[]\s*([^\)\]]*)\s*[\)\]]\s*$")


@dataclass(frozen=True)
class Column:
    """One recognised column: its field, its 0-based position, the header text, and a unit scale."""

    field: str
    index: int
    header: str
    unit: str | None = None  # canonical unit named in the header, if any
    scale: float = 1.0  # multiplier for bare numbers in this column ('(nF)' -> 1e-9)


def normalise(text: str) -> str:
    """Lower case, letters and digits only: 'On-hand Qty.' -> 'onhandqty'."""
    return re.sub(r"[^0-9a-zµ]", "", str(text).lower().replace("μ", "µ"))


_QUALIFIERS = {"min", "max", "typ", "sat", "on", "total", "rated"}


def split_unit(header: str) -> tuple[str, str | None]:
    m = _UNIT_IN_HEADER.match(header.strip())
    if m:
        inside = m.group(2).strip()
        if normalise(inside) in _QUALIFIERS:  # 'hFE (min)', 'VCE(sat)': a qualifier, not a unit
            return m.group(1) + inside, None
        return m.group(1), inside or None
    # 'Tol %', 'Power W', 'Value/Ohm' forms
    m = re.match(r"^(.*?)[\s/_-]+(%|Ω|ohms?|[pnuµmkKM]?F|[m]?W|V|Hz)$", header.strip())
    if m and normalise(m.group(1)):
        return m.group(1), m.group(2)
    if header.strip().endswith("%"):
        return header.strip()[:-1], "%"
    return header, None


def match_header(text: object) -> str | None:
    """The field a header names, or None: 'Working Voltage (V)' -> 'voltage'."""
    if text is None:
        return None
    words, _unit = split_unit(str(text))
    key = normalise(words)
    if key in _WORD_TO_FIELD:
        return _WORD_TO_FIELD[key]
    # a few common compounds: 'qty on hand', 'bin location', 'value ohms'
    for word, field in sorted(_WORD_TO_FIELD.items(), key=lambda kv: -len(kv[0])):
        if len(word) >= 4 and (key.startswith(word) or key.endswith(word)):
            return field
    return None


def column_for(header: object, index: int) -> Column | None:
    """Recognise one header cell; None when it names none of our fields."""
    if header is None or str(header).strip() == "":
        return None
    field = match_header(header)
    if field is None:
        return None
    _words, unit_text = split_unit(str(header))
    unit, scale = None, 1.0
    if unit_text:
        try:
            q = parse_quantity("1" + unit_text.replace(" ", ""))
            unit, scale = q.unit, q.value
            if unit == "%":
                scale = 1.0  # a tolerance column in % holds percents; parse_tolerance reads '5' as 5 %
        except ValueParseError:
            unit, scale = None, 1.0
    return Column(field=field, index=index, header=str(header).strip(), unit=unit, scale=scale)


def find_header(rows: list[list[object]], look: int = 10) -> tuple[int, dict[str, Column]] | None:
    """The first row among the first ``look`` that names at least two fields, one being a value or label."""
    for r, row in enumerate(rows[:look]):
        cols: dict[str, Column] = {}
        for i, cell in enumerate(row):
            col = column_for(cell, i)
            if col is not None and col.field not in cols:
                cols[col.field] = col
        if len(cols) >= 2 and ("value" in cols or "label" in cols):
            return r, cols
    return None

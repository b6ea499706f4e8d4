"""Read a saved design (DESIGN.toml): the analyze-ready stage plus what the optimizer chose.

A saved design is an analyze spec (topology, polarity, supply, source_resistance, load,
[transistor], [parts]) with, when ``drawerfit design --save`` wrote it, these keys as well:
``units``, ``stock_file``, ``stock_checksum``, ``[[pick_list]]``, ``[targets]``, ``[limits]`` and
``[design.roles.<role>]``.  A plain analyze spec works too; it simply has no bins or pick list.
"""

from __future__ import annotations

import math
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Mapping

from ..parts import SpecError
from ..stages import CAPACITOR_ROLES, RESISTOR_ROLES, Conditions, Part, Stage, StageError, TransistorModel
from ..values import ValueParseError, parse_tolerance, parse_value, parse_value_and_tolerance

__all__ = ["PlacedPart", "RoleChoice", "PickItem", "DesignFile", "load_design", "TARGET_UNITS"]

# Target keys of a design spec and the unit each is written in.
TARGET_UNITS = {
    "ie": "A", "ie_min": "A", "ie_max": "A", "f_low": "Hz", "swing": "V",
    "rin_min": "ohm", "rout_max": "ohm", "gain_min": None, "gain_max": None,
}
# When a spec names one IE, the window around it (the design spec's documented default).
IE_WINDOW = 0.10


@dataclass(frozen=True)
class PlacedPart:
    """One physical part of a role: its value, the bin it comes from and its stock-file row."""

    value: float
    location: str = ""
    source: Mapping[str, object] = field(default_factory=dict)


@dataclass(frozen=True)
class RoleChoice:
    """What fills one role: the equivalent value and the parts that make it."""

    role: str
    value: float
    arrangement: str = "single"
    describe: str = ""
    tolerance: float | None = None
    rating: float | None = None
    parts: tuple[PlacedPart, ...] = ()

    @property
    def part_count(self) -> int:
        return max(1, len(self.parts))


@dataclass(frozen=True)
class PickItem:
    """One line of the pick list: take ``count`` of ``part`` from bin ``location``."""

    location: str
    part: str
    per_unit: int
    count: int
    source: Mapping[str, object] = field(default_factory=dict)


@dataclass(frozen=True)
class DesignFile:
    """Everything the report and the exports need from DESIGN.toml, in SI units."""

    path: str
    stage: Stage
    conditions: Conditions
    targets: Mapping[str, float]
    units: int = 1
    stock_file: str | None = None
    stock_checksum: str | None = None
    roles: Mapping[str, RoleChoice] = field(default_factory=dict)
    pick_list: tuple[PickItem, ...] = ()
    transistor_location: str = ""
    transistor_source: Mapping[str, object] = field(default_factory=dict)

    @property
    def is_design(self) -> bool:
        """True when the file came from the optimizer (it names roles or a pick list)."""
        return bool(self.roles or self.pick_list)


def _where(path: str, key: str) -> str:
    return f"{path}: {key}"


def _value(path: str, key: str, raw, unit: str | None) -> float:
    try:
        return parse_value(raw, unit)
    except ValueParseError as exc:
        raise SpecError(f"{_where(path, key)}: {exc}") from None


def _optional(path: str, table: Mapping, key: str, unit: str | None, prefix: str) -> float | None:
    if key not in table:
        return None
    return _value(path, f"{prefix}{key}", table[key], unit)


def _read_part(path: str, role: str, raw, role_table: Mapping) -> Part:
    unit = "ohm" if role in RESISTOR_ROLES else "F"
    key = f"parts.{role}"
    tol = rating = None
    polarized = False
    if isinstance(raw, Mapping):
        if "value" not in raw:
            raise SpecError(f"{_where(path, key)}: needs a value")
        value, tol = _value_tol(path, key, raw["value"], unit)
        if "tolerance" in raw:
            tol = _tol(path, key + ".tolerance", raw["tolerance"])
        rating = _optional(path, raw, "rating", "W" if unit == "ohm" else "V", key + ".")
        polarized = bool(raw.get("polarized", False))
    else:
        value, tol = _value_tol(path, key, raw, unit)
    # The optimizer's role table carries the tolerance and rating of the arrangement.
    if tol is None and "tolerance" in role_table:
        tol = _tol(path, f"design.roles.{role}.tolerance", role_table["tolerance"])
    if rating is None and "rating" in role_table:
        rating = _value(path, f"design.roles.{role}.rating", role_table["rating"],
                        "W" if unit == "ohm" else "V")
    polarized = polarized or bool(role_table.get("polarized", False))
    try:
        return Part(value, tol or 0.0, rating, polarized)
    except ValueError as exc:
        raise SpecError(f"{_where(path, key)}: {exc}") from None


def _value_tol(path, key, raw, unit):
    try:
        return parse_value_and_tolerance(raw, unit)
    except ValueParseError as exc:
        raise SpecError(f"{_where(path, key)}: {exc}") from None


def _tol(path, key, raw) -> float:
    try:
        return parse_tolerance(raw)
    except ValueParseError as exc:
        raise SpecError(f"{_where(path, key)}: {exc}") from None


def _transistor(path: str, polarity: str, table: Mapping) -> TransistorModel:
    if "hfe" in table:
        lo = hi = _value(path, "transistor.hfe", table["hfe"], None)
    elif "hfe_min" in table and "hfe_max" in table:
        lo = _value(path, "transistor.hfe_min", table["hfe_min"], None)
        hi = _value(path, "transistor.hfe_max", table["hfe_max"], None)
    else:
        raise SpecError(f"{path}: [transistor] needs hfe, or hfe_min and hfe_max")
    kw = {}
    for key, unit in (("vbe", "V"), ("vce_sat", "V"), ("vceo", "V"), ("ic_max", "A"), ("pd", "W"),
                      ("i_sat", "A")):
        v = _optional(path, table, key, unit, "transistor.")
        if v is not None:
            kw[key] = v
    try:
        return TransistorModel(polarity, lo, hi, label=str(table.get("label", "")), **kw)
    except ValueError as exc:
        raise SpecError(f"{path}: [transistor]: {exc}") from None


def _targets(path: str, table: Mapping) -> dict[str, float]:
    out: dict[str, float] = {}
    for key, raw in table.items():
        if key not in TARGET_UNITS:
            continue  # other keys belong to the optimizer (pairs allowed, ...)
        out[key] = _value(path, f"targets.{key}", raw, TARGET_UNITS[key])
    if "ie" in out:
        ie = out.pop("ie")
        out.setdefault("ie_min", ie * (1 - IE_WINDOW))
        out.setdefault("ie_max", ie * (1 + IE_WINDOW))
    return out


def _conditions(path: str, table: Mapping) -> Conditions:
    kw = {}
    for key in ("resistor_derating", "transistor_derating", "cap_voltage_margin"):
        if key in table:
            kw[key] = _tol(path, f"limits.{key}", table[key])
    if "derating" in table:
        d = _tol(path, "limits.derating", table["derating"])
        kw.setdefault("resistor_derating", d)
        kw.setdefault("transistor_derating", d)
    for key in ("ambient_min", "ambient_max"):
        if key in table:
            kw[key] = float(str(table[key]).replace("°C", "").replace("C", "").strip())
    try:
        return Conditions(**kw)
    except (ValueError, TypeError) as exc:
        raise SpecError(f"{path}: [limits]: {exc}") from None


def _source(raw) -> dict:
    return dict(raw) if isinstance(raw, Mapping) else {}


def _roles(path: str, table: Mapping) -> dict[str, RoleChoice]:
    out = {}
    for role, t in table.items():
        if not isinstance(t, Mapping):
            raise SpecError(f"{_where(path, f'design.roles.{role}')}: must be a table")
        unit = "ohm" if role in RESISTOR_ROLES else "F" if role in CAPACITOR_ROLES else None
        parts = []
        for i, p in enumerate(t.get("parts", [])):
            key = f"design.roles.{role}.parts[{i}]"
            if not isinstance(p, Mapping) or "value" not in p:
                raise SpecError(f"{_where(path, key)}: needs a value")
            parts.append(PlacedPart(_value(path, key, p["value"], unit), str(p.get("location", "")),
                                    _source(p.get("source"))))
        value = _value(path, f"design.roles.{role}.value", t["value"], unit) if "value" in t else math.nan
        tol = _tol(path, f"design.roles.{role}.tolerance", t["tolerance"]) if "tolerance" in t else None
        rating = None
        if "rating" in t:
            rating = _value(path, f"design.roles.{role}.rating", t["rating"],
                            "W" if unit == "ohm" else "V" if unit == "F" else None)
        out[role] = RoleChoice(role, value, str(t.get("arrangement", "single")), str(t.get("describe", "")),
                               tol, rating, tuple(parts))
    return out


def _pick_list(path: str, items) -> tuple[PickItem, ...]:
    out = []
    for i, p in enumerate(items or []):
        key = f"pick_list[{i}]"
        try:
            out.append(PickItem(str(p.get("location", "")), str(p.get("part", "")), int(p.get("per_unit", 0)),
                                int(p.get("count", 0)), _source(p.get("source"))))
        except (TypeError, ValueError, AttributeError):
            raise SpecError(f"{_where(path, key)}: per_unit and count must be whole numbers") from None
    return tuple(out)


def load_design(path: str | Path) -> DesignFile:
    """Read DESIGN.toml (or a plain analyze spec); SpecError names the file and the key."""
    path = str(path)
    try:
        with open(path, "rb") as fh:
            data = tomllib.load(fh)
    except FileNotFoundError:
        raise SpecError(f"{path}: no such file") from None
    except tomllib.TOMLDecodeError as exc:
        raise SpecError(f"{path}: not valid TOML ({exc})") from None
    except OSError as exc:
        raise SpecError(f"{path}: cannot read ({exc.strerror})") from None
    for key in ("topology", "supply", "transistor", "parts"):
        if key not in data:
            raise SpecError(f"{path}: missing '{key}'")
    polarity = str(data.get("polarity", "npn")).lower()
    design = data.get("design", {}) if isinstance(data.get("design", {}), Mapping) else {}
    role_tables = design.get("roles", {}) if isinstance(design.get("roles", {}), Mapping) else {}
    parts = {role: _read_part(path, role, raw, role_tables.get(role, {}))
             for role, raw in data["parts"].items()}
    supply = _value(path, "supply", data["supply"], "V")
    rs = _value(path, "source_resistance", data["source_resistance"], "ohm") if "source_resistance" in data else 0.0
    load = _value(path, "load", data["load"], "ohm") if "load" in data else None
    t_table = data["transistor"]
    try:
        stage = Stage(str(data["topology"]), polarity, supply, parts, _transistor(path, polarity, t_table), rs, load)
    except StageError as exc:
        raise SpecError(f"{path}: {exc}") from None
    try:
        units = int(data.get("units", 1))
    except (TypeError, ValueError):
        raise SpecError(f"{path}: units must be a whole number") from None
    if units < 1:
        raise SpecError(f"{path}: units must be 1 or more")
    return DesignFile(
        path=path, stage=stage, conditions=_conditions(path, data.get("limits", {})),
        targets=_targets(path, data.get("targets", {})), units=units,
        stock_file=data.get("stock_file"), stock_checksum=data.get("stock_checksum"),
        roles=_roles(path, role_tables), pick_list=_pick_list(path, data.get("pick_list")),
        transistor_location=str(t_table.get("location", "")), transistor_source=_source(t_table.get("source")),
    )

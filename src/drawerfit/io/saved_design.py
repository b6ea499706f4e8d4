"""The saved design (DESIGN.toml): its one writer (``write_design``) and its one reader (``load_design``).

A saved design is an analyze spec (topology, polarity, supply, source_resistance, load,
[transistor], [parts]) with, when ``drawerfit design --save`` wrote it, these keys as well:
``units``, ``stock_file``, ``stock_checksum``, ``[[pick_list]]``, ``[targets]``, ``[limits]`` and
``[design.roles.<role>]`` (``design.roles.Q1`` may name the transistor's bin, with parts
holding only location and source).  A plain analyze spec works too; it simply has no bins or
pick list.  docs/spec-format.md, "Saved designs", documents the file; ``readable_toml`` writes its
numbers in the trade's notation and reads them back bit for bit.
"""

from __future__ import annotations

import math
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Mapping

from ..parts import SpecError
from ..stages import CAPACITOR_ROLES, RESISTOR_ROLES, Conditions, Stage, topologies
from ..values import ValueParseError, parse_tolerance, parse_value

__all__ = ["PlacedPart", "RoleChoice", "PickItem", "DesignFile", "load_design", "read_design_tree", "DESIGN_KEYS",
           "design_tree", "write_design", "SAVED_HEADER"]


@dataclass(frozen=True)
class PlacedPart:
    """One physical part of a role: its value, the bin it comes from and its stock-file row, and
    (when the file gives them) its own tolerance and rating."""

    value: float
    location: str = ""
    source: Mapping[str, object] = field(default_factory=dict)
    tolerance: float | None = None
    rating: float | None = None


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
    per_unit: float  # whole for a design; a kit may spread a part over bins
    count: int
    source: Mapping[str, object] = field(default_factory=dict)
    roles: tuple[str, ...] = ()  # the designators it gives parts for (R1, REa, REb)


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
    spec: object = None  # the spec.Spec the stage came from (targets, mains, assumptions)
    # each transistor's (bin, source) by designator: Q1, and Q2 of a two-stage amplifier
    transistor_places: Mapping[str, tuple[str, Mapping[str, object]]] = field(default_factory=dict)

    @property
    def transistors(self) -> dict:
        """The transistor models by designator (Q1; Q1 and Q2 for a two-stage amplifier)."""
        return self.stage.transistors

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


def _tol(path, key, raw) -> float:
    try:
        return parse_tolerance(raw)
    except ValueParseError as exc:
        raise SpecError(f"{_where(path, key)}: {exc}") from None


def _source(raw) -> dict:
    return dict(raw) if isinstance(raw, Mapping) else {}


# every transistor designator a saved design may name (design.roles.Q1 holds its bin), and every
# role and transistor: the single stages' and the two-stage amplifier's, from their circuit modules
_TRANSISTOR_NAMES = tuple(dict.fromkeys(t for m in topologies.CIRCUITS + topologies.ASSEMBLIES
                                        for t in m.TRANSISTORS))
_KNOWN_ROLES = tuple(dict.fromkeys(RESISTOR_ROLES + CAPACITOR_ROLES + sum((m.ROLES for m in topologies.ASSEMBLIES), ())
                                   + _TRANSISTOR_NAMES))


def _roles(path: str, table: Mapping) -> dict[str, RoleChoice]:
    out = {}
    for role, t in table.items():
        if not isinstance(t, Mapping):
            raise SpecError(f"{_where(path, f'design.roles.{role}')}: must be a table")
        if role not in _KNOWN_ROLES:
            raise SpecError(f"{_where(path, f'design.roles.{role}')}: no such role")
        unit = "ohm" if role.startswith("R") else "F" if role.startswith("C") else None
        rating_unit = "W" if unit == "ohm" else "V" if unit == "F" else None
        raw_parts = t.get("parts", [])
        if not isinstance(raw_parts, list) or len(raw_parts) > 3:
            raise SpecError(f"{_where(path, f'design.roles.{role}.parts')}: must be a list of one to three parts")
        parts = []
        for i, p in enumerate(raw_parts):
            key = f"design.roles.{role}.parts[{i}]"
            if not isinstance(p, Mapping) or ("value" not in p and unit):
                raise SpecError(f"{_where(path, key)}: needs a value")
            value = _value(path, f"{key}.value", p["value"], unit) if unit else math.nan
            tol = _tol(path, f"{key}.tolerance", p["tolerance"]) if "tolerance" in p else None
            rating = _value(path, f"{key}.rating", p["rating"], rating_unit) if "rating" in p and unit else None
            parts.append(PlacedPart(value, str(p.get("location", "")), _source(p.get("source")), tol, rating))
        value = _value(path, f"design.roles.{role}.value", t["value"], unit) if "value" in t else math.nan
        tol = _tol(path, f"design.roles.{role}.tolerance", t["tolerance"]) if "tolerance" in t else None
        rating = None
        if "rating" in t:
            rating = _value(path, f"design.roles.{role}.rating", t["rating"], rating_unit)
        arrangement = str(t.get("arrangement", "single"))
        if unit and len(parts) > 1:
            from ..stages.physical import wiring

            try:
                wiring(arrangement, len(parts))
            except ValueError as exc:
                raise SpecError(f"{_where(path, f'design.roles.{role}.arrangement')}: {exc}") from None
        out[role] = RoleChoice(role, value, arrangement, str(t.get("describe", "")), tol, rating, tuple(parts))
    return out


def _pick_list(path: str, items, units: int) -> tuple[PickItem, ...]:
    """The saved pick list, checked by the same rules as ``take`` reads it."""
    from .take import pick_entries

    if not items:
        return ()
    if not isinstance(items, list):
        raise SpecError(f"{_where(path, 'pick_list')}: must be a list of entries")
    out = []
    for e, raw in zip(pick_entries(items, units, path), items):
        per_unit = int(e.per_unit) if float(e.per_unit).is_integer() else e.per_unit
        names = raw.get("roles", ()) if isinstance(raw, Mapping) else ()
        roles = tuple(str(n)[:20] for n in names) if isinstance(names, list) else ()
        out.append(PickItem(e.location, e.part, per_unit, e.count,
                            {"file": e.file, "sheet": e.sheet, "row": e.row}, roles))
    return tuple(out)


DESIGN_KEYS = ("units", "stock_file", "stock_checksum", "pick_list", "design")


def read_design_tree(path: str | Path, error: type[Exception] = SpecError, what: str = "design") -> dict:
    """The TOML tree of a saved design as written (size-limited; ``error`` names the file)."""
    from ..constants import MAX_TEXT_INPUT_BYTES
    from .files import read_limited

    try:
        data = tomllib.loads(read_limited(path, MAX_TEXT_INPUT_BYTES, error, what).decode("utf-8-sig"))
    except UnicodeDecodeError:
        raise error(f"{path}: not a text file (UTF-8 expected)") from None
    except tomllib.TOMLDecodeError as exc:
        raise error(f"{path}: not valid TOML ({exc})") from None
    return data


def load_design(path: str | Path, stock=None) -> DesignFile:
    """Read DESIGN.toml (or a plain analyze spec); SpecError names the file and the key.

    The stage part goes through ``spec.parse_spec`` (the same reader as ``analyze``);
    ``stock`` (a ``parts.Stock``) resolves a transistor given only by its label.
    """
    from .spec import parse_spec

    path = str(path)
    data = read_design_tree(path)
    for key in ("stock_file", "stock_checksum"):
        if key in data and not isinstance(data[key], str):
            raise SpecError(f"{path}: {key}: must be text")
    from dataclasses import replace

    from .readable_toml import restore

    data, notes = restore(data, path)  # the exact numbers in place of the rounded text they stand for
    spec = parse_spec({k: v for k, v in data.items() if k not in DESIGN_KEYS}, path, stock)
    spec = replace(spec, notes=spec.notes + tuple(notes))
    stage = spec.stage()
    design = data.get("design", {})
    if not isinstance(design, Mapping):
        raise SpecError(f"{path}: design: must be a table")
    role_tables = design.get("roles", {})
    if not isinstance(role_tables, Mapping):
        raise SpecError(f"{path}: design.roles: must be a table")
    units = data.get("units", 1)
    if isinstance(units, bool) or not isinstance(units, int) or units < 1:
        raise SpecError(f"{path}: units = {units!r}: must be a whole number, 1 or more")
    roles = _roles(path, role_tables)
    places = {}
    for name in _TRANSISTOR_NAMES:
        choice = roles.pop(name, None)
        if choice is not None and choice.parts and name in stage.transistors:
            places[name] = (choice.parts[0].location, dict(choice.parts[0].source))
    pick_list = _pick_list(path, data.get("pick_list"), units)
    t_loc, t_src = places.get(next(iter(stage.transistors)), ("", {}))
    return DesignFile(
        path=path, stage=stage, conditions=spec.conditions,
        targets=spec.targets.given() if spec.targets is not None else {}, units=units,
        stock_file=data.get("stock_file"), stock_checksum=data.get("stock_checksum"),
        roles=roles, pick_list=pick_list, transistor_location=t_loc, transistor_source=t_src,
        spec=spec, transistor_places=places,
    )


# --- writing ----------------------------------------------------------------------------------------

SAVED_HEADER = """A stage designed by drawerfit (docs/spec-format.md, "Saved designs"): `drawerfit analyze`,
`report`, `export` and `take` read it.  Values are written as the parts carry them (4k7, 47µ,
1 %, 250 mW).  Where a number had more digits than that, the text is rounded to three
significant digits and [exact] at the end keeps the number the design was judged with; change
the text and drawerfit reads your text instead."""

_TARGET_UNITS = {"ie_min": "A", "ie_max": "A", "f_low": "Hz", "swing": "V", "rin_min": "ohm", "rout_max": "ohm"}


def design_tree(result, stock_file: str | None = None) -> dict:
    """The TOML tree of a saved design from a feasible ``DesignResult`` (with its spec and stock
    attached, as ``drawerfit.design`` returns it); numbers are ``readable_toml.Value``s."""
    import os

    from ..parts import UNIT_OF_KIND, pin_order_text
    from ..results import pick_list, source_dict
    from ..stages.physical import designators
    from .readable_toml import Value as V

    if not result.feasible:
        raise SpecError("no design to save: " + (result.reason or "the search found none"))
    spec, stock = result.spec, result.stock
    if stock_file is None:
        stock_file = stock.files[0] if stock is not None and stock.files else ""
    problem, best = result.problem, result.best
    m = best.model
    title = spec.title if spec is not None else ""
    doc = {"title": title or f"designed by drawerfit from {os.path.basename(stock_file)}",
           "topology": problem.topology, "polarity": problem.polarity, "supply": V(problem.supply, "V"),
           "source_resistance": V(problem.source_resistance, "ohm")}
    if problem.load is not None:
        doc["load"] = V(problem.load, "ohm")
    if problem.circuit.HAS_BYPASS:
        doc["bypass"] = problem.bypass
    if spec is not None and spec.mains:
        doc["mains"] = True
    doc["units"] = problem.units
    doc["stock_file"] = str(stock_file)
    doc["stock_checksum"] = stock.checksum if stock is not None else ""
    tr = {"label": m.label, "hfe_min": V(m.hfe_min), "hfe_max": V(m.hfe_max), "vbe": V(m.vbe, "V"),
          "vce_sat": V(m.vce_sat, "V"), "vbe_tempco": V(m.vbe_tempco)}
    for k, unit in (("vceo", "V"), ("ic_max", "A"), ("pd", "W")):
        if getattr(m, k) is not None:
            tr[k] = V(getattr(m, k), unit)
    if best.transistor.pins:
        tr["pins"] = pin_order_text(best.transistor.pins)
    doc["transistor"] = tr
    parts = {}
    for role, c in best.roles.items():
        unit = UNIT_OF_KIND[c.equivalent.kind]
        entry = {"value": V(c.equivalent.value, unit, code=True), "tolerance": V(c.tolerance, "%"),
                 "rating": V(c.rating, "W" if unit == "ohm" else "V")}
        if c.equivalent.kind == "capacitor":
            entry["polarized"] = bool(c.equivalent.polarized)
        parts[role] = entry
    doc["parts"] = parts
    doc["targets"] = {k: V(v, _TARGET_UNITS.get(k)) for k, v in problem.targets.to_dict().items() if v is not None}
    c = problem.conditions
    doc["limits"] = {"resistor_derating": V(c.resistor_derating, "%"),
                     "transistor_derating": V(c.transistor_derating, "%"),
                     "cap_voltage_margin": V(c.cap_voltage_margin, "%"), "ambient_min": V(c.ambient_min),
                     "ambient_max": V(c.ambient_max)}
    doc["pick_list"] = pick_list(best, problem.units)
    roles = {}
    for role, ch in best.roles.items():
        eq = ch.equivalent
        unit = UNIT_OF_KIND[eq.kind]
        rating_unit = "W" if unit == "ohm" else "V"
        members = []
        for name, mm in zip(designators(role, len(eq.members)), eq.members):
            member = {"designator": name, "value": V(mm.value, unit, code=True)}
            if mm.tolerance is not None:
                member["tolerance"] = V(mm.tolerance, "%")
            if mm.rating is not None:
                member["rating"] = V(mm.rating, rating_unit)
            members.append({**member, "location": mm.location, "source": source_dict(mm)})
        roles[role] = {"value": V(eq.value, unit, code=True), "arrangement": eq.arrangement,
                       "describe": eq.describe(), "tolerance": V(ch.tolerance, "%"),
                       "rating": V(ch.rating, rating_unit), "parts": members}
        if ch.orientation:
            roles[role]["orientation"] = ch.orientation
    t = best.transistor
    roles[best.transistor_name] = {"describe": t.label, "parts": [{"location": t.location, "source": source_dict(t)}]}
    doc["design"] = {"roles": roles}
    return doc


def write_design(path: str | Path, result, stock_file: str | None = None) -> Path:
    """Write the saved design of ``result`` to ``path`` at once (``files.atomic_write``); the path."""
    from .files import atomic_write
    from .readable_toml import dumps

    return atomic_write(path, dumps(design_tree(result, stock_file), header=SAVED_HEADER))

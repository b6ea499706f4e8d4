"""The saved two-stage design: its writer (``write_two_stage_design``) beside the shared reader.

The file is a two-stage analyze spec (docs/spec-format.md, "Two-stage amplifier") with the keys a
saved single-stage design adds for `take`, `report` and `export` (docs/spec-format.md, "Saved
designs"): ``units``, ``stock_file``, ``stock_checksum``, ``[[pick_list]]`` and
``[design.roles.<role>]``, with ``design.roles.Q1`` and ``design.roles.Q2`` naming each
transistor's bin.  ``saved_design.load_design`` reads both kinds of file.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any, Mapping, Sequence

from ..parts import SpecError

__all__ = ["two_stage_tree", "write_two_stage_design"]


def _transistor_table(t, V) -> dict:
    from ..parts import pin_order_text

    out = {"label": t.label, "hfe_min": V(t.hfe_min), "hfe_max": V(t.hfe_max), "vbe": V(t.vbe, "V"),
           "vce_sat": V(t.vce_sat, "V"), "vbe_tempco": V(t.vbe_tempco)}
    for k, unit in (("vceo", "V"), ("ic_max", "A"), ("pd", "W")):
        if getattr(t, k) is not None:
            out[k] = V(getattr(t, k), unit)
    if t.pins:
        out["pins"] = pin_order_text(t.pins)
    if not out["label"]:
        del out["label"]
    return out


def _pairs(role: str, raw) -> list[tuple[Any, int]]:
    """(stock line, count per unit) pairs of one role, checked."""
    if isinstance(raw, tuple) and len(raw) == 2 and isinstance(raw[1], int):
        raw = [raw]
    out = []
    for item in raw:
        try:
            line, count = item
        except (TypeError, ValueError):
            raise SpecError(f"{role}: expected (stock line, count per unit) pairs") from None
        if isinstance(count, bool) or not isinstance(count, int) or count < 1:
            raise SpecError(f"{role}: a count per unit must be a whole number of at least 1, not {count!r}")
        out.append((line, count))
    return out


def two_stage_tree(circuit, role_lines: Mapping[str, Sequence], *, units: int, stock_file: str | None = None,
                   transistor_lines: Mapping[str, Any] | None = None, arrangements: Mapping[str, str] | None = None,
                   targets=None, conditions=None, title: str = "", mains: bool = False) -> dict:
    """The TOML tree of a saved two-stage design; numbers are ``readable_toml.Value``s.

    ``circuit`` is a ``stages.two_stage.TwoStage`` whose parts carry each role's value (the value of
    the whole network when a role is made of several parts), tolerance and rating.  ``role_lines``
    maps a role to its stock lines as (``parts.StockLine``, count per unit); a role made of more than
    one physical part needs its ``arrangements`` entry (series, parallel, series-parallel,
    parallel-series: ``stages.physical``), the parts taken in the order given.
    ``transistor_lines`` maps Q1 and Q2 to their stock lines.  With ``stock_file`` the file's
    checksum is recorded, so `take` refuses a stock file that changed since.
    """
    from ..results import part_name, source_dict
    from ..stages import two_stage
    from ..stages.physical import designators, wiring
    from ..values import format_code
    from .readable_toml import Value as V
    from .tables import file_checksum

    if not isinstance(circuit, two_stage.TwoStage):
        raise SpecError(f"expected a two-stage amplifier (stages.two_stage.TwoStage), not {type(circuit).__name__}")
    if isinstance(units, bool) or not isinstance(units, int) or units < 1:
        raise SpecError(f"units must be a whole number of at least 1, not {units!r}")
    unknown = sorted(set(role_lines) - set(circuit.parts))
    if unknown:
        raise SpecError(f"{unknown[0]}: the amplifier has no such part ({', '.join(circuit.parts)})")
    transistor_lines = dict(transistor_lines or {})
    bad = sorted(set(transistor_lines) - set(two_stage.TRANSISTORS))
    if bad:
        raise SpecError(f"{bad[0]}: the transistors are {', '.join(two_stage.TRANSISTORS)}")
    arrangements = dict(arrangements or {})
    checksum = ""
    if stock_file:
        try:
            checksum = file_checksum(Path(stock_file).read_bytes())
        except OSError as exc:
            raise SpecError(f"{stock_file}: cannot read the stock file ({exc.strerror or exc})") from None

    doc: dict[str, Any] = {"title": title or "two-stage amplifier saved by drawerfit",
                           "topology": two_stage.NAME, "coupling": circuit.coupling, "polarity": circuit.polarity,
                           "supply": V(circuit.supply, "V"), "source_resistance": V(circuit.source_resistance, "ohm")}
    if circuit.load is not None:
        doc["load"] = V(circuit.load, "ohm")
    if mains:
        doc["mains"] = True
    doc["units"] = units
    doc["stock_file"] = str(stock_file or "")
    doc["stock_checksum"] = checksum
    doc["transistors"] = {"Q1": _transistor_table(circuit.q1, V), "Q2": _transistor_table(circuit.q2, V)}
    parts = {}
    for role in two_stage.ROLES:
        p = circuit.parts.get(role)
        if p is None:
            continue
        unit, rating_unit = ("ohm", "W") if role.startswith("R") else ("F", "V")
        entry = {"value": V(p.value, unit, code=True), "tolerance": V(p.tolerance, "%")}
        if p.rating is not None:
            entry["rating"] = V(p.rating, rating_unit)
        if unit == "F":
            entry["polarized"] = bool(p.polarized)
        parts[role] = entry
    doc["parts"] = parts
    if targets is not None and targets.given():
        from ..analysis.cascade_targets import CASCADE_TARGET_UNITS

        doc["targets"] = {k: V(v, CASCADE_TARGET_UNITS[k] or None) for k, v in targets.given().items()}
    if conditions is not None:
        doc["limits"] = {"resistor_derating": V(conditions.resistor_derating, "%"),
                         "transistor_derating": V(conditions.transistor_derating, "%"),
                         "cap_voltage_margin": V(conditions.cap_voltage_margin, "%"),
                         "ambient_min": V(conditions.ambient_min), "ambient_max": V(conditions.ambient_max)}

    picks: dict[tuple, dict] = {}

    def pick(line, per_unit: int, name: str) -> None:
        key = (line.source.file, line.source.sheet or "", line.source.row)
        e = picks.setdefault(key, {"location": line.location, "part": part_name(line), "per_unit": 0, "count": 0,
                                   "source": source_dict(line), "roles": []})
        e["per_unit"] += per_unit
        e["count"] += per_unit * units
        if name not in e["roles"]:
            e["roles"].append(name)

    roles: dict[str, dict] = {}
    for role in two_stage.ROLES:
        if role not in role_lines:
            continue
        unit, rating_unit = ("ohm", "W") if role.startswith("R") else ("F", "V")
        physical = [line for line, count in _pairs(role, role_lines[role]) for _ in range(count)]
        if not 1 <= len(physical) <= 3:
            raise SpecError(f"{role}: a role is made of one to three parts, not {len(physical)}")
        arrangement = arrangements.get(role, "single")
        if len(physical) > 1 and role not in arrangements:
            raise SpecError(f"{role}: {len(physical)} parts: say how they are wired in arrangements "
                            "(series, parallel, series-parallel or parallel-series)")
        try:
            wiring(arrangement, len(physical))
        except ValueError as exc:
            raise SpecError(f"{role}: {exc}") from None
        members = []
        for name, line in zip(designators(role, len(physical)), physical):
            member = {"designator": name, "value": V(line.value, unit, code=True)}
            if line.tolerance is not None:
                member["tolerance"] = V(line.tolerance, "%")
            rating = line.power if unit == "ohm" else line.voltage
            if rating is not None:
                member["rating"] = V(rating, rating_unit)
            members.append({**member, "location": line.location, "source": source_dict(line)})
            pick(line, 1, name)
        p = circuit.parts[role]
        entry = {"value": V(p.value, unit, code=True), "arrangement": arrangement,
                 "describe": (f"{arrangement} of " if len(physical) > 1 else "")
                 + ", ".join(format_code(line.value, unit) for line in physical),
                 "tolerance": V(p.tolerance, "%"), "parts": members}
        if p.rating is not None:
            entry["rating"] = V(p.rating, rating_unit)
        roles[role] = entry
    for name in two_stage.TRANSISTORS:
        line = transistor_lines.get(name)
        if line is None:
            continue
        if isinstance(line, tuple):
            line = line[0]
        roles[name] = {"describe": line.label, "parts": [{"location": line.location, "source": source_dict(line)}]}
        pick(line, 1, name)
    doc["pick_list"] = sorted(picks.values(), key=lambda e: (e["location"], e["source"]["row"]))
    doc["design"] = {"roles": roles}
    return doc


def write_two_stage_design(path: str | Path, circuit, role_lines: Mapping[str, Sequence], *, units: int,
                           stock_file: str | None = None, transistor_lines: Mapping[str, Any] | None = None,
                           **options) -> Path:
    """Write the saved design of a two-stage amplifier at once (``files.atomic_write``); the path.

    Arguments as ``two_stage_tree`` (``options``: arrangements, targets, conditions, title, mains).
    """
    from .files import atomic_write
    from .readable_toml import dumps
    from .saved_design import SAVED_HEADER

    tree = two_stage_tree(circuit, role_lines, units=units, stock_file=stock_file,
                          transistor_lines=transistor_lines, **options)
    return atomic_write(path, dumps(tree, header=SAVED_HEADER))

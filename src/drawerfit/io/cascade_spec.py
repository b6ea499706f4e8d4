"""Read a two-stage amplifier's spec (docs/spec-format.md, "Two-stage amplifier") into a ``CascadeSpec``.

The keys shared with the single stages (polarity, supply, source_resistance, load, mains, title,
[parts] values, [limits]) are read by ``io.spec``'s own readers, so both say the same about the
same mistake; this module adds ``coupling``, the two transistors ``[transistors.Q1]`` and
``[transistors.Q2]`` and the whole amplifier's ``[targets]``.  Every mistake is a ``SpecError``
naming the file and the key.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Mapping

from ..parts import SpecError
from ..stages import two_stage

__all__ = ["CascadeSpec", "parse_cascade_spec", "CASCADE_TOP_KEYS"]

CASCADE_TOP_KEYS = {"topology", "coupling", "bypass", "polarity", "supply", "source_resistance", "load", "mains",
                    "transistors", "parts", "targets", "limits", "title",
                    # written with a saved design for take, export and report; analyze reads past them
                    "units", "stock_checksum", "stock_file", "pick_list", "design", "exact"}


@dataclass(frozen=True)
class CascadeSpec:
    """A parsed two-stage spec, SI units; ``parts`` empty for a design spec.

    ``transistors`` maps Q1 and Q2 to a ``stages.TransistorModel``, or to None where the spec names
    a stock line (``transistor_labels``) that no stock was given to resolve (design only).
    """

    path: str
    coupling: str
    polarity: str
    supply: float
    source_resistance: float = 0.0
    load: float | None = None
    mains: bool = False
    transistors: Mapping[str, Any] = field(default_factory=dict)
    transistor_labels: Mapping[str, str | None] = field(default_factory=dict)
    parts: Mapping[str, Any] = field(default_factory=dict)
    targets: Any = None  # analysis.cascade_targets.CascadeTargets
    conditions: Any = None  # stages.Conditions
    title: str = ""
    bypass: bool = False  # design: stage 1's RE2 bypassed by CE
    assumptions: tuple[str, ...] = ()
    notes: tuple[str, ...] = ()

    @property
    def topology(self) -> str:
        return two_stage.NAME

    @property
    def kind(self) -> str:
        """'analyze' when the parts are given, 'design' when only targets are."""
        return "analyze" if self.parts else "design"

    @property
    def roles(self) -> tuple[str, ...]:
        return two_stage.ROLES

    def circuit(self):
        """The ``stages.two_stage.TwoStage`` this spec describes (needs [parts] and both transistors)."""
        from ..stages import StageError

        if not self.parts:
            raise SpecError(f"{self.path}: no [parts] table: this is a design spec; use `drawerfit design`")
        for name in two_stage.TRANSISTORS:
            if self.transistors.get(name) is None:
                raise SpecError(f"{self.path}: transistors.{name} gives no hFE (give hfe, or hfe_min and "
                                "hfe_max, or a label with --stock)")
        try:
            return two_stage.TwoStage(self.polarity, self.supply, self.coupling, self.parts,
                                      self.transistors["Q1"], self.transistors["Q2"],
                                      self.source_resistance, self.load)
        except (StageError, ValueError) as exc:
            raise SpecError(f"{self.path}: {exc}") from None

    # the single-stage Spec's name for the same thing, so callers that only build need not ask
    stage = circuit


def parse_cascade_spec(data: Mapping[str, Any], path: str = "<spec>", stock=None, *,
                       label_may_be_absent: bool = False) -> CascadeSpec:
    """Build a ``CascadeSpec`` from a parsed TOML tree whose topology is the two-stage amplifier's
    (``label_may_be_absent`` as in ``spec.load_spec``)."""
    from ..analysis.cascade_targets import CascadeTargets
    from ..analysis.targets import IE_WINDOW
    from ..stages import Conditions
    from .readable_toml import restore
    from .spec import _limits, _parts, _Reader, _surroundings, _transistor

    r = _Reader(path)
    r.table("", data, CASCADE_TOP_KEYS)
    data, notes = restore(data, path)
    coupling = data.get("coupling", "capacitor")
    if not isinstance(coupling, str) or coupling.strip().lower() not in two_stage.COUPLINGS:
        raise r.fail("coupling", coupling, f"expected one of {', '.join(two_stage.COUPLINGS)}")
    coupling = coupling.strip().lower()
    polarity, supply, rs, load, mains, title = _surroundings(r, data)
    design = "parts" not in data
    bypass = data.get("bypass", False)
    if not isinstance(bypass, bool):
        raise r.fail("bypass", bypass, "expected true or false")
    if bypass and not design:
        raise r.fail("bypass", bypass, "for a design spec only; an amplifier to analyse has RE2 and CE in [parts]")
    transistors: dict[str, Any] = {}
    labels: dict[str, str | None] = {}
    if "transistors" in data:
        table = r.table("transistors", data["transistors"], set(two_stage.TRANSISTORS))
        for name in two_stage.TRANSISTORS:
            if name not in table:
                if not design:
                    raise r.fail(f"transistors.{name}", None,
                                 "missing; a two-stage spec describes both transistors")
                continue
            if isinstance(table[name], Mapping) and "i_sat" in table[name]:
                raise r.fail(f"transistors.{name}.i_sat", table[name]["i_sat"],
                             "the two-stage analysis takes VBE as given (vbe); i_sat is for single stages")
            transistors[name], labels[name] = _transistor(
                r, table, polarity, stock, design=design, label_may_be_absent=label_may_be_absent,
                key=f"transistors.{name}", lookup=name, name=name, who=f"{name} ")
    elif not design:
        raise r.fail("transistors", None, "missing; give [transistors.Q1] and [transistors.Q2]")
    parts = _parts(r, data, None, two_stage.ROLES)
    if parts:
        missing = [x for x in two_stage.REQUIRED[coupling] if x not in parts]
        if missing:
            raise r.fail(f"parts.{missing[0]}", None,
                         f"missing; a {coupling}-coupled two-stage amplifier needs "
                         f"{', '.join(two_stage.REQUIRED[coupling])}")
        extra = [x for x in parts if x not in two_stage.REQUIRED[coupling] and x not in two_stage.OPTIONAL]
        if extra:
            raise r.fail(f"parts.{extra[0]}", None, f"a {coupling}-coupled two-stage amplifier has no {extra[0]}")
        if "CE" in parts and "RE2" not in parts:
            raise r.fail("parts.CE", None, "CE bypasses RE2, but there is no RE2")
    targets = _targets(r, data, CascadeTargets, IE_WINDOW)
    conditions = _limits(r, data, Conditions)
    if not parts and targets is None:
        raise SpecError(f"{path}: neither [parts] (an amplifier to analyse) nor [targets] (one to design)")
    return CascadeSpec(path=path, coupling=coupling, polarity=polarity, supply=supply, source_resistance=rs,
                       load=load, mains=mains, transistors=transistors, transistor_labels=labels, parts=parts,
                       targets=targets, conditions=conditions, title=title, bypass=bypass,
                       assumptions=tuple(r.assumptions), notes=tuple(notes))


def _targets(r, data, CascadeTargets, window):
    from ..analysis.cascade_targets import CASCADE_TARGET_UNITS

    if "targets" not in data:
        return None
    singles = {"ie1": "A", "ie2": "A"}
    units = {k: (u or None) for k, u in CASCADE_TARGET_UNITS.items()} | singles
    t = r.table("targets", data["targets"], set(units))
    vals = {name: r.quantity(f"targets.{name}", raw, units[name]) for name, raw in t.items()}
    for one in singles:
        if one in vals:
            if f"{one}_min" in vals or f"{one}_max" in vals:
                raise r.fail(f"targets.{one}", t[one], f"give either {one} or {one}_min/{one}_max, not both")
            v = vals.pop(one)
            vals[f"{one}_min"], vals[f"{one}_max"] = v * (1 - window), v * (1 + window)
            r.assumptions.append(f"{one.upper()} window ±{window:.0%} around targets.{one}")
    for lo, hi in (("ie1_min", "ie1_max"), ("ie2_min", "ie2_max"), ("gain_min", "gain_max")):
        if lo in vals and hi in vals and vals[lo] > vals[hi]:
            raise r.fail(f"targets.{lo}", t.get(lo), f"is above {hi}")
    return CascadeTargets(**vals)

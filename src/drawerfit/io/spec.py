"""Read a stage spec (TOML of our own design; docs/spec-format.md) into a ``Spec``.

One file format serves two commands: with ``[parts]`` it describes a built stage for
``analyze``; without ``[parts]`` but with ``[targets]`` it is a design spec for ``design``.
Every mistake raises ``SpecError`` naming the file and the key and quoting the bad text.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Mapping

from ..constants import TOL_CERAMIC, TOL_ELECTROLYTIC, TOL_RESISTOR
from ..parts import SpecError
from ..stages.topologies import (
    ASSEMBLY_NAMES, CIRCUITS, TOPOLOGY_ROLES, assembly_for, assembly_hook, topology_module,
)
from ..values import ValueParseError, parse_tolerance, parse_value, parse_value_and_tolerance

__all__ = ["Spec", "load_spec", "parse_spec", "POLARIZED_FROM"]

# A capacitor whose polarity the spec leaves open is taken as an electrolytic from 1 µF up:
# coupling and bypass capacitors that large are usually aluminium electrolytics (common
# practice, no source).  Erring this way shows the + end rather than hiding it.
POLARIZED_FROM = 1e-6

_TOP_KEYS = {"topology", "polarity", "supply", "source_resistance", "load", "mains", "pairs",
             "transistor", "parts", "targets", "limits", "title", "bypass",
             # written by `design --save` for take and report; analyze reads past them
             "units", "stock_checksum", "stock_file", "pick_list", "design"}
_TRANSISTOR_KEYS = {"label", "hfe", "hfe_min", "hfe_max", "vbe", "vce_sat", "vceo", "ic_max",
                    "pd", "i_sat", "vbe_tempco", "pins"}
_TARGET_UNITS = {"ie": "A", "ie_min": "A", "ie_max": "A", "f_low": "Hz", "swing": "V",
                 "rin_min": "ohm", "rout_max": "ohm", "gain_min": None, "gain_max": None}
_LIMIT_KEYS = {"derating", "resistor_derating", "transistor_derating", "cap_voltage_margin",
               "ambient", "ambient_min", "ambient_max"}
_PART_KEYS = {"value", "tolerance", "rating", "polarized"}
# Values beyond these (SI base units) are no real part, supply or current: a prefix typed wrong.
REAL_RANGE = (1e-15, 1e15)
HFE_MAX = 1e5  # beyond any bipolar transistor, Darlington pairs included


@dataclass(frozen=True)
class Spec:
    """A parsed spec; values in SI units.  ``parts`` is empty for a design spec.

    ``transistor`` is None when the spec leaves the choice to the stock (design), or names a
    stock line by ``transistor_label`` and no stock was given to resolve it.  ``pairs`` lists the roles that may be
    built from two parts (design).  ``assumptions`` says which defaults were applied.
    """

    path: str
    topology: str
    polarity: str
    supply: float
    source_resistance: float = 0.0
    load: float | None = None
    mains: bool = False
    transistor: Any = None  # stages.TransistorModel
    transistor_label: str | None = None
    parts: Mapping[str, Any] = field(default_factory=dict)  # role -> stages.Part
    targets: Any = None  # analysis.targets.Targets
    conditions: Any = None  # stages.Conditions
    pairs: tuple[str, ...] = ()
    bypass: bool = False  # design: common emitter with RE2 bypassed by CE
    title: str = ""
    assumptions: tuple[str, ...] = ()
    notes: tuple[str, ...] = ()  # e.g. a saved value changed by hand, read as written

    @property
    def kind(self) -> str:
        """'analyze' when the parts are given, 'design' when only targets are."""
        return "analyze" if self.parts else "design"

    @property
    def roles(self) -> tuple[str, ...]:
        return TOPOLOGY_ROLES[self.topology]

    def stage(self):
        """The ``stages.Stage`` this spec describes (needs [parts] and a transistor)."""
        from ..stages import Stage, StageError

        if not self.parts:
            raise SpecError(f"{self.path}: no [parts] table: this is a design spec; use `drawerfit design`")
        if self.transistor is None:
            raise SpecError(f"{self.path}: [transistor] gives no hFE (give hfe, or hfe_min and hfe_max, "
                            "or a label with --stock)")
        try:
            return Stage(self.topology, self.polarity, self.supply, self.parts, self.transistor,
                         self.source_resistance, self.load)
        except (StageError, ValueError) as exc:
            raise SpecError(f"{self.path}: {exc}") from None


class _Reader:
    """Reads values out of the TOML tree, with errors that name file and key."""

    def __init__(self, path: str):
        self.path = path
        self.assumptions: list[str] = []

    def fail(self, key: str, text: Any, why: str) -> SpecError:
        shown = repr(text)
        shown = shown if len(shown) <= 60 else shown[:60] + "…"
        quoted = f" = {shown}" if text is not None else ""
        return SpecError(f"{self.path}: {key}{quoted}: {why}")

    def quantity(self, key: str, raw: Any, unit: str | None, positive: bool = True) -> float:
        if isinstance(raw, bool) or not isinstance(raw, (str, int, float)):
            raise self.fail(key, raw, "expected a number or a value such as '4k7' or '12 V'")
        try:
            v = parse_value(raw, unit)
        except ValueParseError as exc:
            raise self.fail(key, raw, exc.why) from None
        if not math.isfinite(v) or (positive and v <= 0) or (not positive and v < 0):
            raise self.fail(key, raw, "must be " + ("positive" if positive else "zero or more"))
        if v > REAL_RANGE[1] or 0 < v < REAL_RANGE[0]:
            raise self.fail(key, raw, "is outside the range of real parts and circuits (check the prefix)")
        return v

    def gain(self, key: str, raw: Any) -> float:
        """A current gain: a plain number (no unit), between 1 and HFE_MAX."""
        if isinstance(raw, str):
            try:
                from ..values import parse_quantity

                if parse_quantity(raw).unit is not None:
                    raise self.fail(key, raw, "hFE is a plain number, without a unit")
            except ValueParseError:
                pass  # quantity() below says what is wrong
        v = self.quantity(key, raw, None)
        if not 1 <= v <= HFE_MAX:
            raise self.fail(key, raw, f"an hFE between 1 and {HFE_MAX:g} is expected")
        return v

    def fraction(self, key: str, raw: Any) -> float:
        try:
            v = parse_tolerance(raw)
        except ValueParseError as exc:
            raise self.fail(key, raw, exc.why) from None
        return v

    def temperature(self, key: str, raw: Any) -> float:
        if isinstance(raw, (int, float)) and not isinstance(raw, bool):
            return float(raw)
        if isinstance(raw, str):
            m = re.fullmatch(r"\s*([-+]?\d+(?:\.\d*)?)\s*(?:°\s*C|C|degC)?\s*", raw)
            if m:
                return float(m.group(1))
        raise self.fail(key, raw, "expected a temperature in °C, such as 40 or '40 °C'")

    def table(self, key: str, raw: Any, allowed: set[str] | None = None) -> dict:
        if not isinstance(raw, dict):
            raise self.fail(key, None, "must be a table")
        if allowed is not None:
            extra = sorted(set(raw) - allowed)
            if extra:
                raise self.fail(f"{key}.{extra[0]}" if key else extra[0], None,
                                f"unknown key; expected one of {', '.join(sorted(allowed))}")
        return raw


def load_spec(path: str | Path, stock=None, *, label_may_be_absent: bool = False) -> Spec:
    """Read a spec file; ``stock`` (a ``parts.Stock``) resolves ``[transistor] label``.

    ``label_may_be_absent``: a label the stock does not hold is no error when [transistor] gives
    the hFE itself (a repair: the board's transistor is the one missing from the drawer).
    """
    import tomllib

    from ..constants import MAX_TEXT_INPUT_BYTES
    from .files import read_limited

    p = Path(path)
    try:
        data = tomllib.loads(read_limited(p, MAX_TEXT_INPUT_BYTES, SpecError, "spec").decode("utf-8"))
    except UnicodeDecodeError:
        raise SpecError(f"{p}: not a text file (UTF-8 expected)") from None
    except tomllib.TOMLDecodeError as exc:
        raise SpecError(f"{p}: not valid TOML: {exc}") from None
    return parse_spec(data, str(p), stock, label_may_be_absent=label_may_be_absent)


def parse_spec(data: Mapping[str, Any], path: str = "<spec>", stock=None, *, label_may_be_absent: bool = False) -> Spec:
    """Build a ``Spec`` from an already-parsed TOML tree (see ``load_spec``)."""
    from ..analysis.targets import IE_WINDOW, Targets
    from ..stages import Conditions
    from .readable_toml import restore

    r = _Reader(path)
    assembly = assembly_for(data.get("topology")) if isinstance(data, Mapping) else None
    if assembly is not None:
        return assembly_hook(assembly, "parse_spec")(data, path, stock, label_may_be_absent=label_may_be_absent)
    r.table("", data, _TOP_KEYS | {"exact"})
    data, notes = restore(data, path)  # a saved design's exact numbers in place of their rounded text
    topology = data.get("topology")
    if not isinstance(topology, str) or topology not in TOPOLOGY_ROLES:
        known = (*TOPOLOGY_ROLES, *ASSEMBLY_NAMES)
        raise r.fail("topology", topology, f"expected one of {', '.join(known)}")
    polarity, supply, rs, load, mains, title = _surroundings(r, data)
    bypass = data.get("bypass", False)
    if not isinstance(bypass, bool):
        raise r.fail("bypass", bypass, "expected true or false")
    if bypass and not topology_module(topology).HAS_BYPASS:
        with_bypass = " and the ".join(m.TITLE for m in CIRCUITS if m.HAS_BYPASS)
        raise r.fail("bypass", bypass, f"only the {with_bypass} has a bypassed RE2")

    transistor, label = _transistor(r, data, polarity, stock, design="parts" not in data,
                                    label_may_be_absent=label_may_be_absent,
                                    name=topology_module(topology).TRANSISTORS[0])
    parts = _parts(r, data, topology)
    targets = _targets(r, data, Targets, IE_WINDOW)
    conditions = _limits(r, data, Conditions)
    pairs = _pairs(r, data, topology)
    if not parts and targets is None:
        raise SpecError(f"{path}: neither [parts] (a stage to analyse) nor [targets] (a stage to design)")
    return Spec(path=path, topology=topology, polarity=polarity, supply=supply,
                source_resistance=rs, load=load, mains=mains, transistor=transistor,
                transistor_label=label, parts=parts, targets=targets, conditions=conditions,
                pairs=pairs, bypass=bypass, title=title, assumptions=tuple(r.assumptions), notes=tuple(notes))


def _surroundings(r: _Reader, data) -> tuple:
    """(polarity, supply, source resistance, load, mains, title): the keys every circuit's spec shares."""
    polarity = data.get("polarity", "npn")
    if not isinstance(polarity, str) or polarity.lower() not in ("npn", "pnp"):
        raise r.fail("polarity", polarity, "expected 'npn' or 'pnp'")
    polarity = polarity.lower()
    if "supply" not in data:
        raise r.fail("supply", None, "missing; give the supply voltage, e.g. supply = \"12 V\"")
    supply = r.quantity("supply", data["supply"], "V")
    rs = r.quantity("source_resistance", data["source_resistance"], "ohm", positive=False) \
        if "source_resistance" in data else 0.0
    load = None
    if "load" in data and not (isinstance(data["load"], str) and data["load"].strip().lower() == "none"):
        load = r.quantity("load", data["load"], "ohm")
    mains = data.get("mains", False)
    if not isinstance(mains, bool):
        raise r.fail("mains", mains, "expected true or false")
    title = data.get("title", "")
    if not isinstance(title, str):
        raise r.fail("title", title, "expected text")
    return polarity, supply, rs, load, mains, title


def _transistor(r: _Reader, data, polarity, stock, design: bool = False, label_may_be_absent: bool = False,
                *, name: str, key: str = "transistor", lookup: str = "transistor", who: str = ""):
    """One transistor table ``data[lookup]`` (named ``key`` in messages) as (model, label).

    ``name`` is its designator in notes; ``who`` prefixes the defaults it assumed ("Q2 ")."""
    from ..constants import VBE_DEFAULT, VCE_SAT_DEFAULT
    from ..stages import TransistorModel

    if lookup not in data:
        return None, None
    t = r.table(key, data[lookup], _TRANSISTOR_KEYS)
    label = t.get("label")
    if label is not None and (not isinstance(label, str) or not label.strip()):
        raise r.fail(f"{key}.label", label, "expected the label of a transistor line in the stock")
    fields: dict[str, Any] = {}
    if label is not None and stock is not None and label_may_be_absent and ("hfe" in t or "hfe_min" in t):
        if not any((ln.label or "").strip().lower() == label.strip().lower() for ln in stock.transistors()):
            stock = None  # not in the drawer: the spec's own figures describe it
            r.assumptions.append(f"{name} {label.strip()!r} is not in the stock: its figures are the spec's")
    if label is not None and stock is not None:
        line = _stock_transistor(r, stock, label.strip(), polarity, label_may_be_absent, key=key)
        for field_name in ("hfe_min", "hfe_max", "vceo", "ic_max", "pd", "vbe", "vce_sat"):
            v = getattr(line, field_name, None)
            if v is not None:
                fields[field_name] = float(v)
        if line.pins:
            fields["pins"] = line.pins
    if "pins" in t:
        from ..parts import parse_pin_order

        if not isinstance(t["pins"], str):
            raise r.fail(f"{key}.pins", t["pins"], "expected the leads in pin order, e.g. \"EBC\"")
        try:
            fields["pins"] = parse_pin_order(t["pins"])
        except ValueError as exc:
            raise r.fail(f"{key}.pins", t["pins"], str(exc)) from None
    units = {"vbe": "V", "vce_sat": "V", "vceo": "V", "ic_max": "A", "pd": "W", "i_sat": "A"}
    for field_name, unit in units.items():
        if field_name in t:
            fields[field_name] = r.quantity(f"{key}.{field_name}", t[field_name], unit)
    if "vbe_tempco" in t:
        raw = t["vbe_tempco"]
        if isinstance(raw, bool) or not isinstance(raw, (int, float)):
            raise r.fail(f"{key}.vbe_tempco", raw, "expected a number in V/°C, such as -0.002")
        fields["vbe_tempco"] = float(raw)
    if "hfe" in t and ("hfe_min" in t or "hfe_max" in t):
        raise r.fail(f"{key}.hfe", t["hfe"], "give either hfe or hfe_min and hfe_max, not both")
    if "hfe" in t:
        fields["hfe_min"] = fields["hfe_max"] = r.gain(f"{key}.hfe", t["hfe"])
    for field_name in ("hfe_min", "hfe_max"):
        if field_name in t:
            fields[field_name] = r.gain(f"{key}.{field_name}", t[field_name])
    if ("hfe_min" in fields) != ("hfe_max" in fields):
        only = "hfe_min" if "hfe_min" in fields else "hfe_max"
        raise r.fail(f"{key}.{only}", t.get(only), "give both hfe_min and hfe_max (or one hfe)")
    if "hfe_min" not in fields:
        if label is not None and stock is None and design:
            # A design spec names a stock line; the design command resolves it with its stock.
            return None, label.strip()
        if label is not None and stock is None:
            raise r.fail(f"{key}.label", label, "needs --stock to look up its hFE (or give hfe here)")
        if label is not None:
            raise r.fail(f"{key}.label", label, "the stock line gives no hFE; add hfe here")
        raise r.fail(key, None, "needs hfe, or hfe_min and hfe_max, or a label with --stock")
    if fields["hfe_min"] > fields["hfe_max"]:
        raise r.fail(f"{key}.hfe_min", t.get("hfe_min"), "is above hfe_max")
    for field_name, default in (("vbe", VBE_DEFAULT), ("vce_sat", VCE_SAT_DEFAULT)):
        if field_name not in fields:
            r.assumptions.append(f"{who}{field_name} {default} V (common practice)")
    try:
        model = TransistorModel(polarity=polarity, label=(label or "").strip(), **fields)
    except ValueError as exc:
        raise r.fail(key, None, str(exc)) from None
    return model, (label.strip() if label else None)


def _stock_transistor(r: _Reader, stock, label: str, polarity: str, label_may_be_absent: bool = False,
                      key: str = "transistor"):
    lines = [ln for ln in stock.transistors() if (ln.label or "").strip().lower() == label.lower()]
    if not lines:
        known = sorted({ln.label for ln in stock.transistors() if ln.label})
        hint = f"; the stock has {', '.join(known)}" if known else "; the stock has no transistors"
        if label_may_be_absent:
            hint += " (give its hfe_min and hfe_max, and its ratings, in [transistor])"
        raise r.fail(f"{key}.label", label, f"no transistor with this label in the stock{hint}")
    line = lines[0]
    if line.polarity and line.polarity.lower() != polarity:
        raise r.fail(f"{key}.label", label,
                     f"is {line.polarity.upper()} in the stock but the stage is {polarity.upper()}")
    return line


def _parts(r: _Reader, data, topology, roles: tuple[str, ...] | None = None) -> dict:
    """The [parts] table; ``roles`` (default: the topology's) are the keys it may hold."""
    from ..stages import Part

    if "parts" not in data:
        return {}
    roles = TOPOLOGY_ROLES[topology] if roles is None else roles
    table = r.table("parts", data["parts"], set(roles))
    parts = {}
    assumed_polar: list[str] = []
    assumed_tol: dict[float, list[str]] = {}
    for role, raw in table.items():
        key = f"parts.{role}"
        unit = "F" if role.startswith("C") else "ohm"
        tol = rating = polarized = None
        if isinstance(raw, dict):
            r.table(key, raw, _PART_KEYS)
            if "value" not in raw:
                raise r.fail(f"{key}.value", None, "missing")
            value = r.quantity(f"{key}.value", raw["value"], unit)
            if "tolerance" in raw:
                tol = r.fraction(f"{key}.tolerance", raw["tolerance"])
            if "rating" in raw:
                rating = r.quantity(f"{key}.rating", raw["rating"], "V" if unit == "F" else "W")
            if "polarized" in raw:
                polarized = raw["polarized"]
                if not isinstance(polarized, bool):
                    raise r.fail(f"{key}.polarized", polarized, "expected true or false")
                if polarized and unit != "F":
                    raise r.fail(f"{key}.polarized", polarized, "only capacitors have a polarity")
        else:
            if isinstance(raw, bool) or not isinstance(raw, (str, int, float)):
                raise r.fail(key, raw, "expected a value such as '4k7' or a table {value = ..., tolerance = ...}")
            try:
                value, tol = parse_value_and_tolerance(raw, unit)
            except ValueParseError as exc:
                raise r.fail(key, raw, exc.why) from None
            if not (math.isfinite(value) and value > 0):
                raise r.fail(key, raw, "must be positive")
            if not REAL_RANGE[0] <= value <= REAL_RANGE[1]:
                raise r.fail(key, raw, "is outside the range of real parts and circuits (check the prefix)")
        if polarized is None:
            polarized = unit == "F" and value >= POLARIZED_FROM
            if polarized:
                assumed_polar.append(role)
        if tol is None:
            # unknown construction: ceramic, as the stock loader assumes (docs/inventory-format.md)
            tol = TOL_RESISTOR if unit == "ohm" else (TOL_ELECTROLYTIC if polarized else TOL_CERAMIC)
            assumed_tol.setdefault(tol, []).append(role)
        try:
            parts[role] = Part(value=value, tolerance=tol, rating=rating, polarized=bool(polarized))
        except ValueError as exc:
            raise r.fail(key, raw, str(exc)) from None
    for tol, which in sorted(assumed_tol.items()):
        r.assumptions.append(f"tolerance {tol:.0%} for {', '.join(which)} (common practice)")
    if assumed_polar:
        r.assumptions.append(f"{', '.join(assumed_polar)} taken as electrolytic (1 µF or more; "
                             "say polarized = false if not)")
    return parts


def _targets(r: _Reader, data, Targets, window):
    if "targets" not in data:
        return None
    t = r.table("targets", data["targets"], set(_TARGET_UNITS))
    vals: dict[str, float] = {}
    for name, raw in t.items():
        vals[name] = r.quantity(f"targets.{name}", raw, _TARGET_UNITS[name])
    if "ie" in vals:
        if "ie_min" in vals or "ie_max" in vals:
            raise r.fail("targets.ie", t["ie"], "give either ie or ie_min/ie_max, not both")
        ie = vals.pop("ie")
        vals["ie_min"], vals["ie_max"] = ie * (1 - window), ie * (1 + window)
        r.assumptions.append(f"IE window ±{window:.0%} around targets.ie")
    for lo, hi in (("ie_min", "ie_max"), ("gain_min", "gain_max")):
        if lo in vals and hi in vals and vals[lo] > vals[hi]:
            raise r.fail(f"targets.{lo}", t.get(lo), f"is above {hi}")
    return Targets(**vals)


def _limits(r: _Reader, data, Conditions):
    if "limits" not in data:
        return Conditions()
    t = r.table("limits", data["limits"], _LIMIT_KEYS)
    kw: dict[str, float] = {}
    if "derating" in t:
        kw["resistor_derating"] = kw["transistor_derating"] = r.fraction("limits.derating", t["derating"])
    for name in ("resistor_derating", "transistor_derating", "cap_voltage_margin"):
        if name in t:
            kw[name] = r.fraction(f"limits.{name}", t[name])
            if kw[name] == 0:
                raise r.fail(f"limits.{name}", t[name], "must be above zero")
    if "ambient" in t:
        raw = t["ambient"]
        if not isinstance(raw, list) or len(raw) != 2:
            raise r.fail("limits.ambient", raw, "expected [lowest, highest] in °C, e.g. [0, 50]")
        kw["ambient_min"] = r.temperature("limits.ambient", raw[0])
        kw["ambient_max"] = r.temperature("limits.ambient", raw[1])
    for name in ("ambient_min", "ambient_max"):
        if name in t:
            kw[name] = r.temperature(f"limits.{name}", t[name])
    try:
        return Conditions(**kw)
    except ValueError as exc:
        raise r.fail("limits", None, str(exc)) from None


def _pairs(r: _Reader, data, topology) -> tuple[str, ...]:
    roles = TOPOLOGY_ROLES[topology]
    if "pairs" not in data:
        return roles
    raw = data["pairs"]
    if raw is True:
        return roles
    if raw is False:
        return ()
    if not isinstance(raw, list) or not all(isinstance(x, str) for x in raw):
        raise r.fail("pairs", raw, "expected true, false or a list of roles such as [\"R1\", \"RE\"]")
    bad = [x for x in raw if x not in roles]
    if bad:
        raise r.fail("pairs", bad[0], f"not a role of the {topology} stage ({', '.join(roles)})")
    return tuple(x for x in roles if x in raw)

"""The library's front door: each job of the command line as one function that takes objects or paths.

Every function accepts what a notebook has at hand (a ``Stock`` or a stock file's path, a ``Spec`` or
a spec's path, a result or a saved file) and returns a result with a short repr, ``to_dict()`` (the
JSON the command prints, from the same code) and, where a table fits, ``to_pandas()``::

    import drawerfit
    stock = drawerfit.load_stock("inventory_samples/teaching_lab.csv")
    result = drawerfit.design("inventory_samples/specs/bench_buffer.toml", stock, units=10)
    result.to_pandas()          # one row per part, with its bin and stock-file row

The commands (``drawerfit.commands``) parse arguments, call these functions and print.
"""

from __future__ import annotations

import os
from pathlib import Path
from typing import Any, Callable

__all__ = ["load_stock", "load_spec", "analyse", "analyze", "match", "substitutes", "design", "mend", "save_design",
           "load_design", "kit", "load_parts_list", "save_kit", "take", "undo", "history"]

PathLike = str | os.PathLike


def _is_path(x: Any) -> bool:
    return isinstance(x, (str, os.PathLike))


def load_stock(stock: Any, *, strict: bool = False):
    """A ``Stock`` from a stock file's path (CSV or XLSX); a ``Stock`` is returned as it is."""
    from .parts import Stock

    if isinstance(stock, Stock):
        return stock
    from .stock import load_stock as _load

    return _load(str(stock), strict=strict)


def load_spec(spec: Any, stock: Any = None):
    """A ``Spec`` (a ``CascadeSpec`` for a two-stage amplifier) from a TOML spec's path (``stock``
    resolves a transistor given by its label)."""
    from .io.spec import Spec, load_spec as _load
    from .stages.topologies import ASSEMBLIES, assembly_hook

    if isinstance(spec, (Spec, *(assembly_hook(m, "spec_type") for m in ASSEMBLIES))):
        return spec
    return _load(spec, stock=None if stock is None else load_stock(stock))


def analyse(stage: Any, conditions=None, monte_carlo: int = 0, seed: int = 0, targets=None, *, stock: Any = None):
    """The analysis of a stage: a ``stages.Stage``, a two-stage ``stages.two_stage.TwoStage``, a spec
    with [parts] (``Spec`` or ``CascadeSpec``), or a spec's path.

    A single stage gives an ``analysis.Analysis``, a two-stage amplifier an
    ``analysis.cascade_result.CascadeAnalysis``.  A spec brings its own limits and targets unless
    ``conditions`` or ``targets`` are given; ``monte_carlo`` random builds (seeded by ``seed``)
    add the spread of the figures.
    """
    from .analysis import analyse as _analyse
    from .stages import Stage
    from .stages.topologies import ASSEMBLIES, assembly_for, assembly_hook

    if not isinstance(stage, (Stage, *(assembly_hook(m, "circuit_type") for m in ASSEMBLIES))):
        spec = load_spec(stage, stock)
        conditions = spec.conditions if conditions is None else conditions
        targets = spec.targets if targets is None else targets
        stage = spec.stage()
    assembly = assembly_for(stage.topology)
    if assembly is not None:
        return assembly_hook(assembly, "analyse")(stage, conditions, monte_carlo=monte_carlo, seed=seed,
                                                  targets=targets)
    return _analyse(stage, conditions, monte_carlo=monte_carlo, seed=seed, targets=targets)


analyze = analyse  # the command's spelling: one function, two names (docs/method.md)


# Values outside these are no part anybody stocks (a prefix typed wrong): refused rather than searched.
_SMALLEST, _LARGEST = 1e-15, 1e15


def match(value: Any, stock: Any, *, within: float | None = None, max_parts: int = 2, power: Any = None,
          voltage: Any = None, units: int = 1, top: int = 10, allow_polarized_series: bool = False,
          strict: bool = False):
    """Substitutes for one value from the drawer: a ``search.match.MatchResult``.

    ``value`` is a resistance or capacitance: text ('4k7', '68n', '3.3 kΩ'), a ``values.Quantity``,
    or a number (ohms).  ``power`` (W, resistors) or ``voltage`` (V, capacitors) is the rating a
    substitute must offer; ``within`` the window (default ``search.match.DEFAULT_WINDOW``).
    """
    from dataclasses import replace

    from .parts import StockError
    from .search.match import DEFAULT_WINDOW, match as _match
    from .values import Quantity, format_si, implied_unit, parse_quantity

    q = _quantity(value, None, parse_quantity, implied_unit, Quantity)
    unit = q.unit or "ohm"
    if unit not in ("ohm", "F"):
        raise StockError(f"match: {format_si(q.value, unit)} is not a resistance or a capacitance")
    kind = "resistor" if unit == "ohm" else "capacitor"
    if q.value <= 0:
        raise StockError("match: the value must be positive")
    power = None if power is None else _quantity(power, "W", parse_quantity, implied_unit, Quantity).value
    voltage = None if voltage is None else _quantity(voltage, "V", parse_quantity, implied_unit, Quantity).value
    rating = power
    if kind == "capacitor":
        if power is not None:
            raise StockError("match: --power applies to resistors; use --voltage for capacitors")
        rating = voltage
    elif voltage is not None:
        raise StockError("match: --voltage applies to capacitors; use --power for resistors")
    if not (_SMALLEST <= q.value <= _LARGEST):
        raise StockError(f"match: {q.value:g} {'Ω' if unit == 'ohm' else 'F'} is outside the range of real parts;"
                         " check the prefix")
    stock = load_stock(stock, strict=strict)
    result = _match(stock.of_kind(kind), q.value, within=DEFAULT_WINDOW if within is None else within,
                    max_parts=max_parts, min_rating=rating, units=units, top=top,
                    allow_polarized_series=allow_polarized_series)
    return replace(result, kind=kind, stock=stock)


def _quantity(value, expect, parse_quantity, implied_unit, Quantity):
    if isinstance(value, Quantity):
        return value
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        return Quantity(float(value), expect)
    q = parse_quantity(str(value), expect)
    if q.unit is None:  # '68n' is a capacitance, '4k7' a resistance: the stock loader's own rule
        q = Quantity(q.value, implied_unit(str(value)))
    return q


def substitutes(polarity: Any = None, stock: Any = None, *, spec: Any = None, vceo: Any = None, ic_max: Any = None,
                power: Any = None, hfe: Any = None, hfe_min: Any = None, hfe_max: Any = None, vce_sat: Any = None,
                units: int = 1, top: int | None = None, strict: bool = False):
    """Transistor substitutes from the drawer: a ``repair.result.SubstituteResult``.

    ``polarity`` 'npn' or 'pnp'; ``vceo`` (V), ``ic_max`` (A), ``power`` (PD, W): the lowest
    ratings a substitute must have; ``vce_sat`` (V) the highest saturation voltage; ``hfe`` the
    hFE range the stage was built for ('100-300', (100, 300) or one figure), or ``hfe_min`` /
    ``hfe_max``.  Values are numbers (SI) or text ('45 V', '150m').  With ``spec`` (a stage spec
    with [parts], or its path) each candidate is analysed in the stage, and whatever is not given
    defaults to the stage's own transistor (docs/repair.md).  ``top`` limits each list shown.
    """
    from .repair.substitutes import Requirement, RequirementError, substitutes_for

    if stock is None:
        raise RequirementError("substitutes: give the stock (a Stock or a stock file's path)")
    given: dict[str, Any] = {}
    for name, raw, unit in (("vceo", vceo, "V"), ("ic_max", ic_max, "A"), ("pd", power, "W"),
                            ("vce_sat", vce_sat, "V")):
        if raw is not None:
            given[name] = _requirement_value(name, raw, unit, RequirementError)
    given.update(_hfe_range(hfe, hfe_min, hfe_max, RequirementError))
    if polarity is not None:
        if not isinstance(polarity, str) or polarity.strip().lower() not in ("npn", "pnp"):
            raise RequirementError(f"unknown transistor polarity {polarity!r}: expected npn or pnp")
        given["polarity"] = polarity.strip().lower()
    if isinstance(units, bool) or not isinstance(units, int) or units < 1:
        raise RequirementError(f"the number needed must be a whole number of at least 1, not {units!r}")
    stock = load_stock(stock, strict=strict)
    if spec is None:
        if polarity is None:
            raise RequirementError("substitutes: give the polarity (npn or pnp), or a stage spec")
        origin = tuple((k, "given") for k in given)
        return substitutes_for(stock, Requirement(units=units, origin=origin, **given), top=top)
    if not _is_path(spec):
        spec_obj = load_spec(spec)
    else:
        from .io.spec import load_spec as _load

        spec_obj = _load(spec, stock=stock, label_may_be_absent=True)
    _single_stage_only(spec_obj, "trying transistor substitutes in a stage (--in)")
    return substitutes_for(stock, spec=spec_obj, given=given, units=units, top=top)


def _single_stage_only(spec, what: str) -> None:
    """SpecError for a two-stage spec where only single stages are served yet."""
    from .parts import SpecError
    from .stages.topologies import assembly_for

    if assembly_for(spec.topology) is not None:
        raise SpecError(f"{spec.path}: {what} works on single stages; a two-stage amplifier is not supported "
                        "there yet (analyze, report, export and take are)")


def _requirement_value(name: str, raw: Any, unit: str, error) -> float:
    """A rating of a requirement as a positive SI float, from a number, text or ``Quantity``."""
    import math

    from .values import Quantity, ValueParseError, format_si, implied_unit, parse_quantity

    words = {"vceo": "VCEO", "ic_max": "IC max", "pd": "power (PD)", "vce_sat": "VCE(sat)"}[name]
    try:
        q = _quantity(raw, unit, parse_quantity, implied_unit, Quantity)
    except ValueParseError as exc:
        raise error(f"{words}: {exc}") from None
    if q.unit not in (None, unit):
        raise error(f"{words}: {format_si(q.value, q.unit)} is not in {unit}")
    if not (math.isfinite(q.value) and q.value > 0):
        raise error(f"{words}: {raw!r} must be positive")
    if not (_SMALLEST <= q.value <= _LARGEST):
        raise error(f"{words}: {raw!r} is outside the range of real parts; check the prefix")
    return q.value


def _hfe_range(hfe: Any, lo: Any, hi: Any, error) -> dict:
    """``hfe_min``/``hfe_max`` from '100-300', '100..300', (100, 300), one figure, or the two ends."""
    import re

    if hfe is not None and (lo is not None or hi is not None):
        raise error("hFE: give a range (hfe) or its ends (hfe_min, hfe_max), not both")
    out: dict = {}
    if hfe is not None:
        if isinstance(hfe, (tuple, list)) and len(hfe) == 2:
            lo, hi = hfe
        elif isinstance(hfe, str):
            m = re.fullmatch(r"\s*([0-9.]+)\s*(?:-|–|—|\.\.\.?|…|to)\s*([0-9.]+)\s*", hfe)
            lo, hi = (m.group(1), m.group(2)) if m else (hfe, hfe)
        else:
            lo = hi = hfe
    for name, raw in (("hfe_min", lo), ("hfe_max", hi)):
        if raw is None:
            continue
        try:
            v = float(raw) if not isinstance(raw, bool) else None
        except (TypeError, ValueError):
            v = None
        if v is None:
            shown = hfe if hfe is not None else raw
            raise error(f"hFE: {shown!r} is not a range such as 100-300 (plain numbers, no unit)")
        out[name] = v
    if "hfe_min" in out and "hfe_max" in out and out["hfe_min"] > out["hfe_max"]:
        raise error(f"hFE range {out['hfe_min']:g}–{out['hfe_max']:g}: the lowest is above the highest")
    return out


def design(spec: Any, stock: Any, *, units: int = 1, max_parts: int = 2, guarantee: str = "worst-case",
           prefer: str = "fewest-parts", top: int = 1, exhaustive: bool = False, budget: float = 1.0,
           on_step: Callable[..., None] | None = None):
    """The stage from the drawer that meets every target with the fewest parts: a ``DesignResult``
    (for a two-stage spec a ``search.cascade_search.CascadeOutcome``: its ``designs``, best first,
    and whether the search ``proven`` them the best).

    ``spec`` is a design spec (``Spec`` or path), ``stock`` a ``Stock`` or path.  When nothing in
    the drawer will do, the result says why, with the nearest design and what to buy; a search
    that stops at its work budget (``budget`` scales it) says what it has proven.
    """
    from .search.design import design as _design
    from .search.problem import problem_from_spec
    from .stages.topologies import assembly_for, assembly_hook

    stock = load_stock(stock)
    spec = load_spec(spec, stock)
    assembly = assembly_for(spec.topology)
    if assembly is not None:  # both stages of a two-stage amplifier, searched together
        return assembly_hook(assembly, "design")(spec, stock, units=units, max_parts=max_parts, top=top,
                                                 exhaustive=exhaustive, budget=budget)
    problem = problem_from_spec(spec, units=units, max_parts=max_parts, guarantee=guarantee, prefer=prefer)
    result = _design(problem, stock, top=top, exhaustive=exhaustive, on_step=on_step, budget=budget)
    result.spec, result.stock = spec, stock
    return result


def mend(spec: Any, stock: Any, *, fixed=(), broken=(), units: int = 1, max_parts: int = 2,
         guarantee: str = "worst-case", prefer: str = "fewest-parts", top: int = 1, exhaustive: bool = False,
         budget: float = 1.0):
    """Mend the board a spec describes ([parts], [transistor], [targets]) with the fewest part changes
    from the drawer: a ``mend.RepairNote`` (changes, the stage before and after, cautions).

    ``fixed`` roles never change, ``broken`` ones always do (``"Q1"`` names the transistor)."""
    from .repair.mend import mend as _mend

    stock = load_stock(stock)
    if _is_path(spec):
        from .io.spec import load_spec as _load

        spec = _load(spec, stock=stock, label_may_be_absent=True)  # the board's Q1 need not be in the drawer
    _single_stage_only(spec, "mending a board (design --keep)")
    return _mend(spec, stock, fixed=fixed, broken=broken, units=units, max_parts=max_parts, guarantee=guarantee,
                 prefer=prefer, top=top, exhaustive=exhaustive, budget=budget)


def save_design(result, path: PathLike, stock_file: PathLike | None = None) -> Path:
    """Write a feasible design as DESIGN.toml (what `analyze`, `report`, `export` and `take` read)."""
    from .io.saved_design import write_design

    return write_design(path, result, None if stock_file is None else str(stock_file))


def load_design(path: PathLike, stock: Any = None):
    """Read DESIGN.toml (or a plain analyze spec) as an ``io.saved_design.DesignFile``."""
    from .io.saved_design import load_design as _load

    return _load(path, None if stock is None else load_stock(stock))


def load_parts_list(parts_list: Any):
    """A ``kit.parts_list.KitList`` from a parts list's path (CSV or XLSX)."""
    from .kits.parts_list import KitList, read_kit_list

    return parts_list if isinstance(parts_list, KitList) else read_kit_list(str(parts_list))


def kit(parts_list: Any, stock: Any, *, units: int = 1, max_parts: int = 2, time_limit: float = 30.0):
    """Fill a whole parts list from the drawer for ``units`` boards, jointly: a ``KitResult``."""
    from .kits.fill import run_kit

    kit_list = load_parts_list(parts_list)
    stock = load_stock(stock)
    return run_kit(kit_list.file, stock.files[0] if stock.files else "", units=units, max_parts=max_parts,
                   time_limit=time_limit, stock=stock, kit_list=kit_list)


def save_kit(result, path: PathLike) -> Path:
    """Write a kit as KIT.json (what `take` reads)."""
    from .io.kit_file import write_kit

    return write_kit(path, result)


def take(picks: Any, stock_file: PathLike, *, units: int | None = None, dry_run: bool = False):
    """Take the parts of a design or kit out of the stock file (backup, lock, log, atomic write).

    ``picks`` is a saved design or kit (path), a ``DesignResult`` or a ``KitResult``; it must have
    been made from the stock file as it is now.  ``dry_run`` only says what would change.
    """
    from .io.take import take as _take, take_picks

    if _is_path(picks):
        return _take(picks, stock_file, units=units, dry_run=dry_run)
    return take_picks(_pick_list_of(picks), stock_file, units=units, dry_run=dry_run)


def _pick_list_of(result):
    from .io.take import PickList, pick_entries
    from .parts import SpecError

    name = type(result).__name__
    if hasattr(result, "pick") and hasattr(result, "stock_checksum"):  # a KitResult
        items, units, checksum = list(result.pick), result.units, result.stock_checksum
    elif hasattr(result, "problem"):  # a DesignResult
        from .results import pick_list

        if not result.feasible:
            raise SpecError("no design to take: " + (result.reason or "the search found none"))
        units = result.problem.units
        items = pick_list(result.best, units)
        checksum = result.stock.checksum if result.stock is not None else ""
    else:
        raise SpecError(f"take: expected a saved design or kit, a DesignResult or a KitResult, not {name}")
    where = f"({name} in memory)"
    return PickList(where, units, checksum, pick_entries(items, units, where))


def undo(stock_file: PathLike, *, to: Any = None, dry_run: bool = False):
    """Put back the last take (``to``: every take back to that number or id); a list of ``TakeResult``."""
    from .io.take_history import undo_takes

    return undo_takes(stock_file, to=to, dry_run=dry_run)


def history(stock_file: PathLike):
    """Every take logged for the stock file, oldest first (``io.take_history.TakeRecord``)."""
    from .io.take_history import history as _history

    return _history(stock_file)

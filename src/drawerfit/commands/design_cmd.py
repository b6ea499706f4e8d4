"""`drawerfit design` and `drawerfit demo`: the best stage from the drawer, shown, saved, reported."""

from __future__ import annotations

import math
import os
from pathlib import Path

import click

from ..parts import NoDesignError, SearchLimitError, SpecError, pin_order_text
from ..values import format_code, format_percent, format_si
from .common import rating_text

__all__ = ["run_design", "run_demo", "design_json", "saved_design", "pick_list"]

_UNIT = {"resistor": "ohm", "capacitor": "F"}


def _code(value: float, kind: str) -> str:
    return format_code(value, _UNIT[kind], ascii_only=False)


def _src(line) -> dict:
    return {"file": line.source.file, "sheet": line.source.sheet or "", "row": line.source.row}


def _part_name(line) -> str:
    if line.kind == "transistor":
        name = f"{line.label} {line.polarity.upper()}" if line.polarity else line.label
        return f"{name}, pins {pin_order_text(line.pins)}" if line.pins else name
    rating = line.power if line.kind == "resistor" else line.voltage
    extra = f" {format_percent(line.tolerance)}" if line.tolerance is not None else ""
    if rating is not None:
        extra += f" {rating_text(line.kind, rating)}"
    if line.kind == "capacitor" and line.polarized:
        extra += " electrolytic"
    return f"{line.kind} {_code(line.value, line.kind)}{extra}"


def pick_list(choice, units: int) -> list[dict]:
    """Bin, part and count for ``units`` builds, one entry per stock line given from, in bin order.

    A part drawn from another line than the one the design names (same value, tolerance no wider,
    rating no lower: docs/method.md, "Stock shared across roles and units") says which it stands in for.
    """
    from ..report.physical import designators

    roles_of: dict[int, list[str]] = {}  # designators of the physical parts (R1, REa, REb) each line serves
    for role, c in choice.roles.items():
        members = c.equivalent.members
        for name, line in zip(designators(role, len(members)), members):
            if name not in roles_of.setdefault(line.index, []):
                roles_of[line.index].append(name)
    roles_of.setdefault(choice.transistor.index, []).append("Q1")
    picks = choice.picks or tuple((ln, ln, n * units) for ln, n in choice.uses().values())
    merged: dict[int, dict] = {}
    for giver, needed, count in picks:
        e = merged.setdefault(giver.index, {"location": giver.location, "part": _part_name(giver), "per_unit": 0,
                                            "count": 0, "source": _src(giver), "roles": [], "stands_in_for": []})
        e["count"] += count
        for r in roles_of.get(needed.index, []):
            if r not in e["roles"]:
                e["roles"].append(r)
        if giver.index != needed.index:
            e["stands_in_for"].append({"part": _part_name(needed), "row": needed.source.row, "count": count})
    out = []
    for e in merged.values():
        per = e["count"] / units
        e["per_unit"] = int(per) if per == int(per) else per
        if not e["stands_in_for"]:
            del e["stands_in_for"]
        out.append(e)
    out.sort(key=lambda e: (e["location"], e["source"]["row"]))
    return out


def _analysis(problem, spec, choice):
    from ..analysis import analyse

    return analyse(choice.stage(problem), spec.conditions, targets=spec.targets)


def _role_json(choice) -> dict:
    out = {}
    for role, c in choice.roles.items():
        eq = c.equivalent
        out[role] = {
            "value": eq.value, "code": _code(eq.value, eq.kind), "arrangement": eq.arrangement,
            "describe": eq.describe(), "part_count": eq.part_count, "tolerance": c.tolerance,
            ("power" if eq.kind == "resistor" else "voltage"): c.rating,
            "polarized": bool(eq.polarized), "orientation": c.orientation,
            "parts": [{"value": m.value, "location": m.location, "source": _src(m)} for m in eq.members],
        }
    return out


def _finite(x):
    return None if x is None or not math.isfinite(x) else x


def design_json(result, spec, analysis=None, cautions=()) -> dict:
    problem = result.problem
    if not result.feasible:
        near = result.nearest
        out = {"feasible": False, "units": problem.units, "reason": result.reason,
               "nearest": None, "buy": [_buy_json(b) for b in result.buy], "buy_checked": result.buy_checked,
               "buy_proven": result.buy_proven, "buy_note": result.buy_note,
               "limits": [{"constraint": lm.constraint, "transistor": lm.transistor or None, "text": lm.text,
                           "reachable": lm.reachable, "asked": lm.asked} for lm in result.limits],
               "buy_design": None, "notes": list(result.notes),
               "search": search_json(result)}
        if result.buy_design is not None:
            out["buy_design"] = {"transistor": result.buy_design.transistor.label,
                                 "parts": _role_json(result.buy_design)}
        if near:
            ch = near["choice"]
            out["nearest"] = {
                "transistor": ch.transistor.label, "parts": _role_json(ch),
                "margins": {k: _finite(v) for k, v in near["margins"].items()}, "missed": near["missed"],
                "f_low_worst": _finite(near["f_low_worst"]), "space": "single parts",
                "shortfall": _finite(near["shortfall"]), "shortfall_level": near["level"],
                "none_within": near["below"], "proven": near["proven"]}
        return out
    best = result.best
    tr = best.transistor
    wc = analysis.worst if analysis is not None else None
    out = {
        "feasible": True, "status": result.status, "units": problem.units, "part_count": best.part_count,
        "guarantee": problem.guarantee, "prefer": problem.prefer,
        "objective": {"part_count": best.part_count, "smallest_margin": _finite(best.margin),
                      "distance": best.distance, "margin": _finite(best.margin),
                      "fewest_left": _finite(best.stock_left), "capacitance": best.csum},
        "transistor": {"label": tr.label, "location": tr.location, "source": _src(tr), "polarity": tr.polarity,
                       "hfe_min": tr.hfe_min, "hfe_max": tr.hfe_max, "vceo": tr.vceo, "ic_max": tr.ic_max,
                       "pd": tr.pd, "vbe": best.model.vbe, "vce_sat": best.model.vce_sat},
        "parts": _role_json(best),
        "performance": analysis.to_dict() if analysis is not None else None,
        "worst_case": {
            "target_margins": {k: _finite(v) for k, v in best.target_margins.items()},
            "rating_margins": {k: _finite(v) for k, v in best.rating_margins.items()},
            "binding": binding(best),
            "swing_headroom": _finite(swing_headroom(problem, best)),
            "low": {k: _finite(float(wc.low[k])) for k in ("ie", "ve", "vce", "rin", "rout", "swing_peak", "f_low")}
            if wc is not None else None,
            "high": {k: _finite(float(wc.high[k])) for k in ("ie", "ve", "vce", "rin", "rout", "swing_peak", "f_low")}
            if wc is not None else None,
        },
        "pick_list": pick_list(best, problem.units),
        "cautions": [c.to_dict() for c in cautions],
        "alternatives": [{"part_count": d.part_count, "distance": d.distance, "transistor": d.transistor.label,
                          "parts": {r: c.equivalent.describe() for r, c in d.roles.items()}}
                         for d in result.designs[1:]],
        "notes": list(result.notes),
        "search": search_json(result),
        "stock_checksum": None,
    }
    return out


def search_json(result) -> dict:
    """How far the search went: sets and steps, whether it finished, and the bound still open."""
    st = result.stats or {}
    open_ = st.get("open")
    return {"proven": not st.get("truncated", False), "resistor_sets": st.get("sets", 0),
            "judged": st.get("judged", 0), "steps": st.get("work", 0),
            "open_bound": None if open_ is None else {
                "part_count": int(open_[2] if result.problem.prefer == "closest" else open_[1]),
                "distance": float(open_[1] if result.problem.prefer == "closest" else open_[2])}}


def _buy_json(b: dict) -> dict:
    return {"kind": b["kind"], "value": b["value"], "code": _code(b["value"], b["kind"]),
            "tolerance": b["tolerance"], ("power" if b["kind"] == "resistor" else "voltage"): b["rating"],
            "polarized": b["polarized"], "per_unit": b["per_unit"], "count": b["count"], "roles": b["roles"]}


def swing_headroom(problem, choice) -> float | None:
    """Volts of output peak the design has at its worst beyond the swing target (None: no target)."""
    m = choice.target_margins.get("swing")
    if problem.targets.swing is None or m is None or not math.isfinite(m):
        return None
    return m * problem.targets.swing


def binding(choice, n: int = 3) -> list[dict]:
    """The constraints with the smallest worst-case margins (those that decide the design)."""
    allm = [(m, k) for k, m in {**choice.target_margins, **choice.rating_margins}.items() if math.isfinite(m)]
    allm.sort()
    return [{"name": k, "margin": m} for m, k in allm[:n]]


# --- saving -------------------------------------------------------------------------------


def saved_design(result, spec, stock, stock_file: str) -> dict:
    """The TOML tree of a saved design (docs/spec-format.md, "Saved designs"); numbers are
    ``readable_toml.Value``s, written in the trade's notation by ``readable_toml.dumps``."""
    from ..readable_toml import Value as V
    from ..report.physical import designators

    problem, best = result.problem, result.best
    m = best.model
    doc = {"title": spec.title or f"designed by drawerfit from {os.path.basename(stock_file)}",
           "topology": problem.topology, "polarity": problem.polarity, "supply": V(problem.supply, "V"),
           "source_resistance": V(problem.source_resistance, "ohm")}
    if problem.load is not None:
        doc["load"] = V(problem.load, "ohm")
    if problem.topology == "common-emitter":
        doc["bypass"] = problem.bypass
    if spec.mains:
        doc["mains"] = True
    doc["units"] = problem.units
    doc["stock_file"] = str(stock_file)
    doc["stock_checksum"] = stock.checksum
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
        unit = _UNIT[c.equivalent.kind]
        entry = {"value": V(c.equivalent.value, unit, code=True), "tolerance": V(c.tolerance, "%"),
                 "rating": V(c.rating, "W" if unit == "ohm" else "V")}
        if c.equivalent.kind == "capacitor":
            entry["polarized"] = bool(c.equivalent.polarized)
        parts[role] = entry
    doc["parts"] = parts
    units = {"ie_min": "A", "ie_max": "A", "f_low": "Hz", "swing": "V", "rin_min": "ohm", "rout_max": "ohm"}
    doc["targets"] = {k: V(v, units.get(k)) for k, v in problem.targets.to_dict().items() if v is not None}
    c = problem.conditions
    doc["limits"] = {"resistor_derating": V(c.resistor_derating, "%"),
                     "transistor_derating": V(c.transistor_derating, "%"),
                     "cap_voltage_margin": V(c.cap_voltage_margin, "%"), "ambient_min": V(c.ambient_min),
                     "ambient_max": V(c.ambient_max)}
    doc["pick_list"] = pick_list(best, problem.units)
    roles = {}
    for role, ch in best.roles.items():
        eq = ch.equivalent
        unit = _UNIT[eq.kind]
        rating_unit = "W" if unit == "ohm" else "V"
        members = []
        for name, mm in zip(designators(role, len(eq.members)), eq.members):
            member = {"designator": name, "value": V(mm.value, unit, code=True)}
            if mm.tolerance is not None:
                member["tolerance"] = V(mm.tolerance, "%")
            if mm.rating is not None:
                member["rating"] = V(mm.rating, rating_unit)
            members.append({**member, "location": mm.location, "source": _src(mm)})
        roles[role] = {"value": V(eq.value, unit, code=True), "arrangement": eq.arrangement,
                       "describe": eq.describe(), "tolerance": V(ch.tolerance, "%"),
                       "rating": V(ch.rating, rating_unit), "parts": members}
        if ch.orientation:
            roles[role]["orientation"] = ch.orientation
    t = best.transistor
    roles["Q1"] = {"describe": t.label, "parts": [{"location": t.location, "source": _src(t)}]}
    doc["design"] = {"roles": roles}
    return doc


SAVED_HEADER = """A stage designed by drawerfit (docs/spec-format.md, "Saved designs"): `drawerfit analyze`,
`report`, `export` and `take` read it.  Values are written as the parts carry them (4k7, 47µ,
1 %, 250 mW).  Where a number had more digits than that, the text is rounded to three
significant digits and [exact] at the end keeps the number the design was judged with; change
the text and drawerfit reads your text instead."""


def _write_toml(path: Path, doc: dict) -> None:
    from ..filesafe import atomic_write
    from ..readable_toml import dumps

    atomic_write(path, dumps(doc, header=SAVED_HEADER))


# --- text for people ----------------------------------------------------------------------------


def _print_choice(result, spec, analysis, cautions, quiet: bool) -> None:
    from .analyze_cmd import summary_lines

    problem, best = result.problem, result.best
    per = f" for {problem.units} units" if problem.units > 1 else ""
    tr = best.transistor
    state = "optimal" if result.status == "optimal" else "best found (not proven optimal)"
    click.echo(f"Design ({state}, {problem.guarantee} guarantee, {problem.prefer}){per}: "
               f"{problem.topology} {problem.polarity.upper()} on {format_si(problem.supply, 'V')}, "
               f"{best.part_count} resistors and capacitors")
    click.echo(f"  Q1   {tr.label}  [{tr.location or '-'}; row {tr.source.row}]  hFE {tr.hfe_min:g}..{tr.hfe_max:g}")
    click.echo(f"  {'role':4} {'value':>9}  {'arrangement':15} {'tol':>5} {'rating':>7} {'dissip.':>9}  parts (bin; row)")
    wc = analysis.worst if analysis is not None else None
    checks = {ch.name: ch for ch in analysis.checks} if analysis is not None else {}
    for role, c in best.roles.items():
        eq = c.equivalent
        kind = eq.kind
        if kind == "resistor":
            key = {"R1": "p_r1", "R2": "p_r2", "RE": "p_re", "RC": "p_rc", "RE2": "p_re2"}[role]
            dis = format_si(float(wc.high[key]), "W", 3) if wc is not None else ""
        else:
            dis = ""
        parts = ", ".join(f"{_code(m.value, kind)} [{m.location or '-'}; row {m.source.row}]" for m in eq.members)
        click.echo(f"  {role:4} {format_si(eq.value, _UNIT[kind], 4):>9}  {eq.describe() if eq.part_count > 1 else eq.arrangement:15}"
                   f" {c.tolerance * 100:4.1f}% {rating_text(kind, c.rating):>7} {dis:>9}  {parts}")
        if c.orientation:
            # the words of the stage's own polarity check, as `analyze` prints them
            check = checks.get(f"{role} polarity")
            how = check.message if check is not None else c.orientation.replace("+ to", "fit the + end toward")
            click.echo(f"       polarized: {how}")
    click.echo("")
    click.echo("Worst-case margins (the search puts the smallest in the highest class the drawer allows: 0, 1, 2, 3, 5, 7, 10, 15, 20, 30, 50 %):")
    for name, m in sorted(best.target_margins.items(), key=lambda kv: kv[1]):
        if math.isfinite(m):
            click.echo(f"  {name}: {m:+.1%}")
    ratings = sorted((m, k) for k, m in best.rating_margins.items() if math.isfinite(m))[:2]
    if ratings:
        click.echo("  ratings, the closest: " + ", ".join(f"{k} {m:+.1%}" for m, k in ratings))
    headroom = swing_headroom(problem, best)
    if headroom is not None:
        click.echo(f"  swing headroom: {headroom:.3g} V beyond the {problem.targets.swing:g} V peak asked for")
    if not quiet and analysis is not None:
        click.echo("")
        click.echo("Stage figures (nominal, and worst case over tolerances, hFE and ambient):")
        for line in summary_lines(analysis, spec, cautions):
            click.echo(f"  {line}")
    elif cautions:
        for c in cautions:
            click.echo(f"caution: {c.text}")
    click.echo("")
    click.echo(f"Pick list ({problem.units} unit{'s' if problem.units > 1 else ''}):")
    for e in pick_list(best, problem.units):
        extra = f"  for {', '.join(e['roles'])}" if e.get("roles") else ""
        for sub in e.get("stands_in_for", ()):
            verb = "stands" if sub["count"] == 1 else "stand"
            extra += f"; {sub['count']} {verb} in for {sub['part']} (row {sub['row']})"
        click.echo(f"  {e['location'] or '-':10} {e['part']:38} x{e['count']}  (row {e['source']['row']}){extra}")
    if len(result.designs) > 1:
        click.echo("")
        click.echo("Next best:")
        for i, d in enumerate(result.designs[1:], 2):
            vals = ", ".join(f"{r}={c.equivalent.describe()}" for r, c in d.roles.items())
            click.echo(f"  {i}. {d.part_count} parts, D={d.distance:.4f}, {d.transistor.label}: {vals}")
    for n in result.notes:
        click.echo(f"note: {n}", err=True)


def _print_infeasible(result) -> None:
    click.echo("No design: " + result.reason)
    near = result.nearest
    if near:
        ch = near["choice"]
        vals = ", ".join(f"{r}={c.equivalent.describe()}" for r, c in ch.roles.items())
        click.echo(f"  nearest single-part design ({ch.transistor.label}): {vals}")
        if near["missed"]:
            proof = "" if near["proven"] else " (not proven: a search stopped at its budget)"
            click.echo(f"  its largest shortfall: {near['shortfall']:.1%}; no single-part design comes within "
                       f"{near['below']:.1%} of every constraint{proof}")
        if "f_low" in near["missed"]:
            click.echo(f"  its worst-case corner: {format_si(near['f_low_worst'], 'Hz')} "
                       f"(target {format_si(result.problem.targets.f_low, 'Hz')})")
    if result.buy:
        n = sum(b["per_unit"] for b in result.buy)
        fewest = ("the fewest possible" if result.buy_proven
                  else "not proven minimal: a search stopped at its budget")
        ok = ("checked: with them added the search finds a design" if result.buy_checked
              else "NOT confirmed by a second search")
        click.echo(f"What to buy ({n} part{'s' if n > 1 else ''} per unit, {fewest}; {ok}):")
        for b in result.buy:
            r = rating_text(b["kind"], b["rating"])
            pol = " electrolytic" if b["polarized"] else ""
            click.echo(f"  {b['count']} x {b['kind']} {_code(b['value'], b['kind'])} {format_percent(b['tolerance'])} {r}{pol}"
                       f"  ({b['per_unit']} per unit, for {', '.join(b['roles'])})")
        ch = result.buy_design
        if ch is not None:
            vals = ", ".join(f"{r}={c.equivalent.describe()}" for r, c in ch.roles.items())
            click.echo(f"  the design they are for ({ch.transistor.label}): {vals}")
    elif result.buy_note:
        click.echo(result.buy_note[0].upper() + result.buy_note[1:] + ".")
    for n in result.notes:
        click.echo(f"note: {n}", err=True)


def run_design(spec_file: str, stock_file: str, *, units: int = 1, max_parts: int = 2,
               guarantee: str = "worst-case", prefer: str = "fewest-parts", top: int = 1, as_json: bool = False,
               save: str | None = None, exhaustive: bool = False, report: str | None = None,
               quiet: bool = False, strict: bool = False, budget: float = 1.0) -> None:
    from ..cautions import cautions_for
    from ..cli import emit_json
    from ..search.design import design
    from ..search.problem import problem_from_spec
    from ..spec import load_spec
    from .common import report_problems

    from ..stock import load_stock

    _check_outputs(spec_file, stock_file, save, report)
    stock = load_stock(stock_file, strict=strict)
    if not quiet:
        report_problems(stock)
    spec = load_spec(spec_file, stock=stock)
    problem = problem_from_spec(spec, units=units, max_parts=max_parts, guarantee=guarantee, prefer=prefer)
    from ..progress import progress

    with progress("design", quiet=quiet) as tick:
        result = design(problem, stock, top=top, exhaustive=exhaustive, on_step=tick, budget=budget)
    limited = bool(result.stats.get("truncated"))
    if not result.feasible:
        if as_json:
            emit_json({**design_json(result, spec), "warnings": list(stock.warnings)})
        else:
            _print_infeasible(result)
            _print_stock_summary(stock, quiet)
        if limited:
            raise SearchLimitError("no design was found before the search's work budget ran out; "
                                   "that none exists is not proven (exit status 5)")
        # the reason is on stdout already (text or JSON); stderr says only what the status means
        raise NoDesignError("no design in the drawer meets the spec (exit status 3)")
    analysis = _analysis(problem, spec, result.best)
    cautions = cautions_for(analysis, mains=spec.mains)
    if as_json:
        data = design_json(result, spec, analysis, cautions)
        data["stock_checksum"] = stock.checksum
        data["warnings"] = list(stock.warnings)
        emit_json(data)
        for c in cautions:
            click.echo(f"caution: {c.text}", err=True)
    else:
        _print_choice(result, spec, analysis, cautions, quiet)
        _print_stock_summary(stock, quiet)
    if save is not None or report is not None:
        target = Path(save) if save is not None else None
        if target is None:
            import tempfile

            tmpdir = tempfile.mkdtemp(prefix="drawerfit-")
            target = Path(tmpdir) / "design.toml"
        _write_toml(target, saved_design(result, spec, stock, stock_file))
        if save is not None and not as_json:
            click.echo(f"saved: {target}")
        if report is not None:
            from ..report.html import write_report

            write_report(str(target), report, stock_file=stock_file)
            if not as_json:
                click.echo(f"report: {report}")
    if limited:
        raise SearchLimitError("the search stopped at its work budget: the design shown is the best found, "
                               "not proven optimal (exit status 5)")


def _print_stock_summary(stock, quiet: bool) -> None:
    from .common import stock_summary

    lines = stock_summary(stock, assumptions=not quiet)
    if lines:
        click.echo("")
        for line in lines:
            click.echo(line)


def _check_outputs(spec_file: str, stock_file: str, save: str | None, report: str | None) -> None:
    """Before any work: neither --save nor --report may land on an input, or on each other."""
    from ..filesafe import check_output

    inputs = [spec_file, stock_file]
    if save is not None and report is not None and Path(save).resolve() == Path(report).resolve():
        raise SpecError(f"{save}: --save and --report need different files")
    if save is not None:
        check_output(save, inputs, "design")
    if report is not None:
        check_output(report, inputs + ([save] if save else []), "report")


# --- demo -----------------------------------------------------------------------------------

DEMO_SPECS = ("bench_buffer.toml", "gain_stage.toml")


def run_demo() -> None:
    """Design the two sample stages from the sample teaching-lab drawer; writes nothing."""
    root = _samples()
    stock_file = root / "teaching_lab.csv"
    for name in DEMO_SPECS:
        spec = root / "specs" / name
        click.echo(f"=== drawerfit design {spec.relative_to(root.parent)} --stock {stock_file.relative_to(root.parent)}")
        try:
            run_design(str(spec), str(stock_file))
        except NoDesignError as exc:
            click.echo(f"(no design: {exc})")
        click.echo("")


def _samples() -> Path:
    here = Path(__file__).resolve()
    for base in (here.parents[3], Path.cwd()):
        cand = base / "inventory_samples"
        if (cand / "teaching_lab.csv").exists():
            return cand
    raise SpecError("the sample drawer (inventory_samples/teaching_lab.csv) is not found next to the program")

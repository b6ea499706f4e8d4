"""`drawerfit design` and `drawerfit demo`: the best stage from the drawer, shown, saved, reported."""

from __future__ import annotations

import math
from pathlib import Path

import click

from ..analysis.core import POWER_FIGURE
from ..parts import UNIT_OF_KIND, NoDesignError, SearchLimitError, SpecError
from ..results import code as _code, pick_list, swing_headroom
from ..values import format_percent, format_si
from .common import emit_json, rating_text

__all__ = ["run_design", "run_demo", "margin_lines"]


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
    click.echo(f"  {best.transistor_name}   {tr.label}  [{tr.location or '-'}; row {tr.source.row}]  hFE {tr.hfe_min:g}..{tr.hfe_max:g}")
    click.echo(f"  {'role':4} {'value':>9}  {'arrangement':15} {'tol':>5} {'rating':>7} {'dissip.':>9}  parts (bin; row)")
    wc = analysis.worst if analysis is not None else None
    checks = {ch.name: ch for ch in analysis.checks} if analysis is not None else {}
    for role, c in best.roles.items():
        eq = c.equivalent
        kind = eq.kind
        if kind == "resistor":
            dis = format_si(float(wc.high[POWER_FIGURE[role]]), "W", 3) if wc is not None else ""
        else:
            dis = ""
        parts = ", ".join(f"{_code(m.value, kind)} [{m.location or '-'}; row {m.source.row}]" for m in eq.members)
        click.echo(f"  {role:4} {format_si(eq.value, UNIT_OF_KIND[kind], 4):>9}  {eq.describe() if eq.part_count > 1 else eq.arrangement:15}"
                   f" {c.tolerance * 100:4.1f}% {rating_text(kind, c.rating):>7} {dis:>9}  {parts}")
        if c.orientation:
            # the words of the stage's own polarity check, as `analyze` prints them
            check = checks.get(f"{role} polarity")
            how = check.message if check is not None else c.orientation.replace("+ to", "fit the + end toward")
            click.echo(f"       polarized: {how}")
    click.echo("")
    click.echo("Worst-case margins (the search puts the smallest in the highest class the drawer allows: 0, 1, 2, 3, 5, 7, 10, 15, 20, 30, 50 %):")
    for line in margin_lines(best.target_margins):
        click.echo(line)
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


def margin_lines(margins: dict) -> list[str]:
    """'  ie_min: +6.1%', smallest margin first (infinite ones, targets not asked, left out)."""
    return [f"  {name}: {m:+.1%}" for name, m in sorted(margins.items(), key=lambda kv: kv[1]) if math.isfinite(m)]


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
    need = getattr(result, "buy_transistor", None)
    if need is not None:
        besides = " and the parts above" if result.buy else " and the drawer's resistors and capacitors"
        click.echo(f"And a transistor (checked: with one of these figures{besides}, the search finds a design):"
                   if result.buy else "What to buy (checked: with a transistor of these figures added, the search "
                   "finds a design from the drawer's resistors and capacitors):")
        click.echo(f"  {need.text()}")
        ch = result.buy_design
        if ch is not None and not result.buy:
            vals = ", ".join(f"{r}={c.equivalent.describe()}" for r, c in ch.roles.items())
            click.echo(f"  the design it is for: {vals}")
    for n in result.notes:
        click.echo(f"note: {n}", err=True)


def run_design(spec_file: str, stock_file: str, *, units: int = 1, max_parts: int = 2,
               guarantee: str = "worst-case", prefer: str = "fewest-parts", top: int = 1, as_json: bool = False,
               save: str | None = None, exhaustive: bool = False, report: str | None = None,
               quiet: bool = False, strict: bool = False, budget: float = 1.0) -> None:
    from .. import api
    from ..cautions import cautions_for
    from ..progress import progress
    from ..results import design_analysis, design_dict
    from .common import report_problems

    _check_outputs(spec_file, stock_file, save, report)
    stock = api.load_stock(stock_file, strict=strict)
    if not quiet:
        report_problems(stock)
    spec = api.load_spec(spec_file, stock)
    from ..stages.topologies import assembly_for, assembly_hook

    assembly = assembly_for(spec.topology)
    if assembly is not None:  # the two-stage amplifier: both stages searched together
        assembly_hook(assembly, "design_command")(spec, stock, stock_file, units=units, max_parts=max_parts, top=top, as_json=as_json,
                           save=save, exhaustive=exhaustive, quiet=quiet, budget=budget, report=report)
        return
    with progress("design", quiet=quiet) as tick:
        result = api.design(spec, stock, units=units, max_parts=max_parts, guarantee=guarantee, prefer=prefer,
                            top=top, exhaustive=exhaustive, on_step=tick, budget=budget)
    limited = bool(result.stats.get("truncated"))
    if not result.feasible:
        if as_json:
            emit_json(result.to_dict())
        else:
            _print_infeasible(result)
            _print_stock_summary(stock, quiet)
        if limited:
            raise SearchLimitError("no design was found before the search's work budget ran out; "
                                   "that none exists is not proven (exit status 5)")
        # the reason is on stdout already (text or JSON); stderr says only what the status means
        raise NoDesignError("no design in the drawer meets the spec (exit status 3)")
    analysis = design_analysis(result)
    cautions = cautions_for(analysis, mains=spec.mains)
    if as_json:
        emit_json(design_dict(result, analysis, cautions))
        for c in cautions:
            click.echo(f"caution: {c.text}", err=True)
    else:
        _print_choice(result, spec, analysis, cautions, quiet)
        _print_stock_summary(stock, quiet)
    save_and_report(lambda target: api.save_design(result, target, stock_file), save, report, stock_file, as_json)
    if limited:
        raise SearchLimitError(BUDGET_STOPPED)


BUDGET_STOPPED = ("the search stopped at its work budget: the design shown is the best found, "
                  "not proven optimal (exit status 5)")


def save_and_report(write, save: str | None, report: str | None, stock_file: str, as_json: bool) -> None:
    """``write(path)`` the design file to ``save`` (to a temporary folder when only ``report`` is
    asked), then the report page from it; says where, unless the output is JSON."""
    if save is None and report is None:
        return
    target = Path(save) if save is not None else None
    if target is None:
        import tempfile

        target = Path(tempfile.mkdtemp(prefix="drawerfit-")) / "design.toml"
    write(target)
    if save is not None and not as_json:
        click.echo(f"saved: {target}")
    if report is not None:
        from ..report.html import write_report

        write_report(str(target), report, stock_file=stock_file)
        if not as_json:
            click.echo(f"report: {report}")


def _print_stock_summary(stock, quiet: bool) -> None:
    from .common import stock_summary

    lines = stock_summary(stock, assumptions=not quiet)
    if lines:
        click.echo("")
        for line in lines:
            click.echo(line)


def _check_outputs(spec_file: str, stock_file: str, save: str | None, report: str | None) -> None:
    """Before any work: neither --save nor --report may land on an input, or on each other."""
    from ..io.files import check_output

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

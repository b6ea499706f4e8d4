"""`drawerfit design` on a two-stage spec: both stages from one drawer (search/cascade_search.py); the
amplifier's summary that `analyze` and `design` print."""

from __future__ import annotations

import click

from ..parts import UNIT_OF_KIND, NoDesignError, SearchLimitError
from ..results import code as _code
from ..values import format_si
from .common import emit_json, rating_text

__all__ = ["run_cascade_design", "cascade_summary_lines"]


def run_cascade_design(spec, stock, stock_file: str, *, units: int, max_parts: int, top: int, as_json: bool,
                       save: str | None, exhaustive: bool, quiet: bool, budget: float,
                       report: str | None = None) -> None:
    from .. import api
    from ..cautions import cautions_for
    from ..search.cascade_search import WORK_BUDGET, design_cascade
    from ..search.cascade_result import cascade_design_dict, cascade_problem

    problem = cascade_problem(spec, units=units, max_parts=max_parts)
    outcome = design_cascade(problem, list(stock.lines), top=top, exhaustive=exhaustive,
                             budget=int(WORK_BUDGET * budget), labels=dict(spec.transistor_labels or {}))
    if not outcome.designs:
        if as_json:
            emit_json(cascade_design_dict(problem, outcome))
        else:
            click.echo("No two-stage design from this drawer meets the spec.")
            for r in outcome.reasons:
                click.echo(f"  {r}")
        if not outcome.proven:
            raise SearchLimitError("no design was found before the search's work budget ran out; that none "
                                   "exists is not proven (exit status 5); a smaller drawer or wider windows help")
        raise NoDesignError("no design in the drawer meets the spec (exit status 3)")
    best = outcome.designs[0]
    circuit = best.circuit(problem)
    analysis = api.analyse(circuit, conditions=problem.conditions, targets=problem.targets)
    cautions = cautions_for(analysis, mains=spec.mains)
    if as_json:
        emit_json(cascade_design_dict(problem, outcome, analysis))
        for c in cautions:
            click.echo(f"caution: {c.text}", err=True)
    else:
        _print(problem, outcome, analysis, spec, cautions, quiet)
    from ..io.saved_two_stage import write_two_stage_design
    from .design_cmd import BUDGET_STOPPED, save_and_report

    save_and_report(lambda target: write_two_stage_design(
        target, circuit, best.role_lines(), units=units, stock_file=stock_file,
        transistor_lines={"Q1": best.q1, "Q2": best.q2}, arrangements=best.arrangements(),
        targets=problem.targets, conditions=problem.conditions, title=spec.title, mains=spec.mains),
        save, report, stock_file, as_json)
    if not outcome.proven:
        raise SearchLimitError(BUDGET_STOPPED)


def _print(problem, outcome, analysis, spec, cautions, quiet: bool) -> None:
    best = outcome.designs[0]
    state = "optimal" if outcome.proven else "best found (not proven optimal)"
    per = f" for {problem.units} units" if problem.units > 1 else ""
    click.echo(f"Two-stage design ({state}, worst-case guarantee){per}: {problem.coupling}-coupled "
               f"{problem.polarity.upper()} on {format_si(problem.supply, 'V')}, {best.part_count} resistors and capacitors")
    for name, q in (("Q1", best.q1), ("Q2", best.q2)):
        click.echo(f"  {name}   {q.label}  [{q.location or '-'}; row {q.source.row}]  hFE {q.hfe_min:g}..{q.hfe_max:g}")
    click.echo(f"  {'role':4} {'value':>9}  {'arrangement':15} {'tol':>5} {'rating':>7}  parts (bin; row)")
    for role in best.choice:
        eq = best.equivalent(role)
        kind = eq.kind
        parts = ", ".join(f"{_code(m.value, kind)} [{m.location or '-'}; row {m.source.row}]" for m in eq.members)
        t, i = best.choice[role]
        click.echo(f"  {role:4} {format_si(eq.value, UNIT_OF_KIND[kind], 4):>9}  "
                   f"{eq.describe() if eq.part_count > 1 else eq.arrangement:15} {best.tolerance(role) * 100:4.1f}% "
                   f"{rating_text(kind, float(t.rating[i])):>7}  {parts}")
    click.echo("")
    closest = sorted(best.margins.items(), key=lambda kv: kv[1])[:4]
    click.echo("Worst-case margins, the closest: " + ", ".join(f"{k} {v:+.1%}" for k, v in closest))
    click.echo("")
    if not quiet:
        click.echo("Amplifier figures (nominal, and worst case over tolerances, hFE and ambient):")
        for line in cascade_summary_lines(analysis, spec, cautions):
            click.echo(f"  {line}")
    else:
        for c in cautions:
            click.echo(f"caution: {c.text}")
    if len(outcome.designs) > 1:
        click.echo("")
        click.echo("Next best:")
        for k, d in enumerate(outcome.designs[1:], 2):
            vals = ", ".join(f"{r} {_code(d.value(r), 'resistor' if r.startswith('R') else 'capacitor')}"
                             for r in d.choice)
            click.echo(f"  {k}. {d.part_count} parts, smallest margin {min(d.margins.values()):+.1%}: {vals}")


def cascade_summary_lines(result, spec=None, cautions=None) -> list[str]:
    """The people's summary of a two-stage amplifier (``CascadeAnalysis``), in the single stage's order:
    warnings, both operating points, the signal, the worst case, the parts, the cautions."""
    from ..cautions import cautions_for
    from .analyze_cmd import _head_line, _part_lines, _range, _tail_lines, _transistor_line, _v, _warning_lines

    if cautions is None:
        cautions = cautions_for(result, mains=bool(spec and spec.mains))
    a, f, w, c = result.circuit, result.nominal, result.worst, result.conditions
    (q1, t1), (q2, t2) = a.transistors.items()
    out = [_head_line(f"two-stage amplifier ({a.coupling}-coupled)", a, spec),
           _transistor_line(q1, t1), _transistor_line(q2, t2)]
    out += _warning_lines(result)
    out.append("")
    out.append(f"Operating points at {c.nominal_temp:g} °C, nominal values (node voltages to ground)")
    states = result.states
    out.append(f"  {q1}  VB {_v(f.vb1, 'V')}   VE {_v(f.ve1, 'V')}   VC {_v(f.vc1, 'V')}   "
               f"IE {_v(f.ie1, 'A')}   IC {_v(f.ic1, 'A')}   VCE {_v(f.vce1, 'V')}   {states[q1]}")
    out.append(f"  {q2}  VB {_v(f.vb2, 'V')}   VE {_v(f.ve2, 'V')}   "
               f"IE {_v(f.ie2, 'A')}   IC {_v(f.ic2, 'A')}   VCE {_v(f.vce2, 'V')}   {states[q2]}")
    if result.active:
        sw = result.swing()
        out.append("Signal, mid-band")
        out.append(f"  input {_v(f.rin, 'ohm')}   output {_v(f.rout, 'ohm')}   gain {float(f.gain):.4g} "
                   f"(source to load; stage 1 {float(f.gain1):.4g}, follower {float(f.gain2):.4g})")
        own = ", ".join(f"{k} alone {format_si(v, 'Hz')}" for k, v in result.corners().items() if v)
        out.append(f"  low corner {_v(f.f_low, 'Hz')} for the whole amplifier" + (f" ({own})" if own else ""))
        out.append(f"  swing ±{_v(f.swing_peak, 'V')} peak into the load, limited by {sw['transistor']} "
                   f"({sw['limit']})")
    out.append(f"Worst case over tolerances, hFE {t1.hfe_min:g}–{t1.hfe_max:g} ({q1}) and {t2.hfe_min:g}–"
               f"{t2.hfe_max:g} ({q2}), {c.ambient_min:g}–{c.ambient_max:g} °C ({w.vertices} corners)")
    out.append(f"  IE1 {_range(w.low['ie1'], w.high['ie1'], 'A')}   IE2 {_range(w.low['ie2'], w.high['ie2'], 'A')}   "
               f"VC1 {_range(w.low['vc1'], w.high['vc1'], 'V')}")
    if bool(w.all_active):
        g = sorted((abs(float(w.low["gain"])), abs(float(w.high["gain"]))))
        out.append(f"  |gain| {g[0]:.4g} … {g[1]:.4g}   low corner up to {_v(w.high['f_low'], 'Hz')}   "
                   f"swing at least ±{_v(w.low['swing_peak'], 'V')}")
    else:
        out.append(f"  {q1} or {q2} leaves the active region inside this range: signal figures not given")
    out.append("Parts")
    by_name = {ch.name: ch for ch in result.checks}
    out += _part_lines(a.parts, by_name)
    for name in a.transistors:
        ch = by_name[f"{name} power"]
        out.append(f"  {name}   up to {_v(ch.value, 'W')}"
                   + (f" of {_v(ch.limit, 'W')} allowed" if ch.limit else ", no PD given"))
    out += _tail_lines(result, spec, cautions)
    return out

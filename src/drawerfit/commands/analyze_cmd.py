"""`drawerfit analyze`: read a spec with its parts, analyse the stage, print a summary or JSON."""

from __future__ import annotations

import click

from ..parts import pin_order_text
from ..values import format_si
from .common import emit_json

__all__ = ["run_analyze", "summary_lines"]


def run_analyze(spec_file: str, *, stock_file: str | None = None, as_json: bool = False,
                monte_carlo: int = 0, seed: int = 0, must_pass: bool = False) -> None:
    """Print the analysis; with ``must_pass``, then raise ``ChecksNotMetError`` (exit status 4) when
    a check other than advice fails: the state, a target, a rating or a capacitor's polarity.
    A rating that is not given is not checked and does not fail."""
    from .. import api
    from ..cautions import cautions_for

    spec = api.load_spec(spec_file, stock=stock_file)
    result = api.analyse(spec, monte_carlo=monte_carlo, seed=seed)
    cautions = cautions_for(result, mains=spec.mains)
    if as_json:
        emit_json(result.to_dict())
        # The cautions still reach a person: on stderr, so stdout stays plain JSON.
        for c in cautions:
            click.echo(f"caution: {c.text}", err=True)
    else:
        from ..stages.topologies import assembly_for, assembly_hook

        assembly = assembly_for(result.stage.topology)
        lines = summary_lines if assembly is None else assembly_hook(assembly, "summary_lines")
        for line in lines(result, spec, cautions):
            click.echo(line)
    if must_pass and result.warnings:
        from ..parts import ChecksNotMetError

        missed = [c.name for c in result.warnings]
        raise ChecksNotMetError(f"{spec_file}: {len(missed)} check{'s' if len(missed) != 1 else ''} not met: "
                                + ", ".join(missed))


def _v(x, unit, digits=4):
    return format_si(float(x), unit, digits)


def _range(lo, hi, unit):
    return f"{_v(lo, unit)} … {_v(hi, unit)}"


def summary_lines(result, spec=None, cautions=None) -> list[str]:
    """The people's summary: warnings first, then the figures, then the cautions.

    ``spec`` (optional) adds its title and the defaults it assumed; ``cautions`` default to
    those that apply to ``result`` (design and report reuse this).
    """
    from ..analysis.core import LIMIT_NAMES
    from ..cautions import cautions_for

    if cautions is None:
        cautions = cautions_for(result, mains=bool(spec and spec.mains))

    s, f, w = result.stage, result.nominal, result.worst
    t, q = s.transistor, s.transistor_name
    c = result.conditions
    out = [_head_line(s.topology, s, spec), _transistor_line(q, t)]
    out += _warning_lines(result)
    out.append("")
    out.append(f"Operating point at {c.nominal_temp:g} °C, nominal values (node voltages to ground)")
    out.append(f"  VB {_v(f.vb, 'V')}   VE {_v(f.ve, 'V')}   VC {_v(f.vc, 'V')}")
    out.append(f"  IE {_v(f.ie, 'A')}   IC {_v(f.ic, 'A')}   VCE {_v(f.vce, 'V')}   {q} {result.state}")
    if result.state == "active":
        out.append("Signal, mid-band")
        out.append(f"  input {_v(f.rin, 'ohm')}   output {_v(f.rout, 'ohm')}   gain {float(f.gain):.4g} (source to load)")
        own = ", ".join(f"{k} alone {format_si(v, 'Hz')}" for k, v in result.corners().items() if v)
        out.append(f"  low corner {_v(f.f_low, 'Hz')} for the whole stage" + (f" ({own})" if own else ""))
        out.append(f"  swing ±{_v(f.swing_peak, 'V')} peak into the load, limited by "
                   f"{LIMIT_NAMES[int(f.swing_limit)]}")
    out.append(f"Worst case over tolerances, hFE {t.hfe_min:g}–{t.hfe_max:g}, "
               f"{c.ambient_min:g}–{c.ambient_max:g} °C ({w.vertices} corners)")
    out.append(f"  IE {_range(w.low['ie'], w.high['ie'], 'A')}   VE {_range(w.low['ve'], w.high['ve'], 'V')}")
    if bool(w.all_active):
        g = sorted((abs(float(w.low["gain"])), abs(float(w.high["gain"]))))
        out.append(f"  |gain| {g[0]:.4g} … {g[1]:.4g}   low corner up to {_v(w.high['f_low'], 'Hz')}   "
                   f"swing at least ±{_v(w.low['swing_peak'], 'V')}")
    else:
        out.append(f"  {q} leaves the active region inside this range: signal figures not given")
    out.append("Parts")
    by_name = {ch.name: ch for ch in result.checks}
    out += _part_lines(s.parts, by_name)
    ch = by_name[f"{q} power"]
    out.append(f"  {q}   up to {_v(ch.value, 'W')}" + (f" of {_v(ch.limit, 'W')} allowed" if ch.limit else ", no PD given"))
    out += _tail_lines(result, spec, cautions)
    return out


def _head_line(words: str, s, spec) -> str:
    """The first line: the circuit in words, polarity, supply, source and load (and the title)."""
    head = f"{words}, {s.polarity.upper()}, {_v(s.supply, 'V')} supply"
    head += f", source {_v(s.source_resistance, 'ohm')}" if s.source_resistance else ", ideal source"
    head += f", load {_v(s.load, 'ohm')}" if s.load is not None else ", no load"
    return (spec.title + ": " if spec is not None and spec.title else "") + head


def _transistor_line(name: str, t) -> str:
    hfe = f"hFE {t.hfe_min:g}" if t.hfe_min == t.hfe_max else f"hFE {t.hfe_min:g}–{t.hfe_max:g} (nominal {t.hfe:.4g})"
    pins = f", pins {pin_order_text(t.pins)} (pin 1 first)" if t.pins else ""
    return f"{name} {t.label or '(unnamed)'}: {hfe}, VBE {_v(t.vbe, 'V')} at 25 °C{pins}"


def _warning_lines(result) -> list[str]:
    out = []
    if result.warnings:
        out += ["", f"WARNINGS ({len(result.warnings)})"]
        out += [f"  ! {ch.name}: {ch.message}" for ch in result.warnings]
    return out


def _part_lines(parts, by_name) -> list[str]:
    """One line per part: value, tolerance, its dissipation or DC voltage against the rating, polarity."""
    out = []
    for role, part in parts.items():
        unit = "F" if role.startswith("C") else "ohm"
        line = f"  {role:<3} {_v(part.value, unit):>9} ±{part.tolerance * 100:g} %"
        if unit == "ohm":
            ch = by_name.get(f"{role} power")
            if ch:
                line += f"   up to {_v(ch.value, 'W')}" + (f" of {_v(ch.limit, 'W')} allowed" if ch.limit else ", no rating given")
        else:
            ch = by_name.get(f"{role} voltage")
            if ch:
                line += f"   up to {_v(ch.value, 'V')} DC" + (f" of {_v(ch.limit, 'V')} allowed" if ch.limit else ", no rating given")
            pol = by_name.get(f"{role} polarity")
            if pol:
                line += "   polarized: " + pol.message
        out.append(line)
    return out


def _tail_lines(result, spec, cautions) -> list[str]:
    """Monte Carlo, notes, assumptions, the spec's notes and the cautions."""
    out = []
    mc = result.monte_carlo
    if mc:
        out.append(f"Monte Carlo: {mc['samples']} builds (seed {mc['seed']}): active {mc['active']:.1%}, "
                   f"meet every target and rating {mc['meets_all']:.1%}")
        for name, frac in mc["meets"].items():
            out.append(f"  {name}: {frac:.1%}")
    for ch in result.notes:
        out.append(f"Note: {ch.name}: {ch.message}")
    if spec is not None and spec.assumptions:
        out.append("Assumed: " + "; ".join(spec.assumptions))
    for note in (spec.notes if spec is not None else ()):
        out.append(f"Note: {note}")
    out.append("")
    out.append("Cautions")
    for cau in cautions:
        out.append(f"  * {cau.text}")
    return out

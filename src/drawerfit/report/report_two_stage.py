"""The report of a saved two-stage amplifier: one self-contained HTML page, as for a single stage.

Schematic of both stages, the checks with their margins (``analysis.cascade_result``, the same
figures and checks as `analyze`), cautions, parts with their bins, the pick list, the operating
points, the magnitude response of the whole amplifier and one load-line plot per transistor.
"""

from __future__ import annotations

import math
from pathlib import Path
from typing import Callable

from ..progress import NO_PROGRESS
from ..values import format_si

__all__ = ["render_two_stage_report", "gather_two_stage", "cascade_response_data", "cascade_load_line_data"]

TARGET_WORDS = {
    "ie1_min": "Q1 emitter current at least", "ie1_max": "Q1 emitter current at most",
    "ie2_min": "Q2 emitter current at least", "ie2_max": "Q2 emitter current at most",
    "f_low": "−3 dB low corner at or below", "swing": "output peak into the load at least",
    "rin_min": "input impedance at least", "rout_max": "output impedance at most",
    "gain_min": "gain magnitude at least", "gain_max": "gain magnitude at most",
}


def gather_two_stage(design, *, monte_carlo: int = 2000, seed: int = 0):
    """(analysis, report checks with margins, cautions) of the design's amplifier."""
    from ..analysis.cascade import CAP_FIGURE, POWER_FIGURE
    from ..analysis.cascade_result import analyse_cascade
    from ..analysis.cascade_targets import CascadeTargets, cascade_target_margins
    from ..cautions import cautions_for
    from .figures import Check

    targets = CascadeTargets(**design.targets) if design.targets else None
    a = analyse_cascade(design.stage, design.conditions, monte_carlo=monte_carlo, seed=seed, targets=targets)
    margins = cascade_target_margins(targets, a.worst.low, a.worst.high) if targets is not None else {}
    nominal_of = {**{f"{r} power": f for r, f in POWER_FIGURE.items()},
                  **{f"{r} voltage": f for r, f in CAP_FIGURE.items()},
                  "ie1_min": "ie1", "ie1_max": "ie1", "ie2_min": "ie2", "ie2_max": "ie2", "f_low": "f_low",
                  "swing": "swing_peak", "rin_min": "rin", "rout_max": "rout"}
    vname = "VEC" if design.stage.polarity == "pnp" else "VCE"
    checks = []
    for c in a.checks:
        key = c.name.removeprefix("target ") if c.kind == "target" else c.name
        nom = abs(float(getattr(a.nominal, nominal_of[key]))) if key in nominal_of else None
        if key in ("gain_min", "gain_max"):
            nom = abs(float(a.nominal.gain))
        margin = None
        if c.kind == "target":
            margin = float(margins[key])
        elif c.kind in ("rating", "advice") and c.value is not None and c.limit:
            margin = (c.limit - c.value) / abs(c.limit)
        value, limit, figure = c.value, c.limit, ""
        if c.kind == "state":
            i = c.name[1]
            figure = f"{vname}{i}"
            nom, value = c.value, float(a.worst.low[f"vce{i}"])
        elif c.kind == "polarity":
            nom, value, limit = None, None, None
        if margin is not None and not math.isfinite(margin):
            margin = None
        name = TARGET_WORDS.get(key, c.name) if c.kind == "target" else c.name
        checks.append(Check(c.kind, name, c.ok, value, limit, c.unit or None, margin, c.message, nom, figure))
    cautions = [c.text for c in cautions_for(a, mains=bool(getattr(design.spec, "mains", False)))]
    return a, checks, cautions


def cascade_response_data(design, *, points: int = 400):
    """Frequencies (Hz), gain in dB, mid-band dB and the whole-amplifier corner (``plots.response_svg``)."""
    import numpy as np

    from ..analysis.cascade import cascade_arguments, cascade_transfer, evaluate_cascade

    kw = cascade_arguments(design.stage)
    fig = evaluate_cascade(temp_c=design.conditions.nominal_temp, **kw)
    f_low = float(fig.f_low)
    anchor = f_low if math.isfinite(f_low) and f_low > 0 else 10.0
    target = design.targets.get("f_low")
    f = np.logspace(math.log10(min(anchor, target or anchor) / 30.0), math.log10(max(anchor * 3e3, 2e4)), points)
    h = cascade_transfer(fig, c1=kw["c1"], c2=kw["c2"], c3=kw["c3"], ce=kw["ce"], f=f)
    with np.errstate(divide="ignore"):
        db = 20.0 * np.log10(np.abs(h))
    mid = 20.0 * math.log10(abs(float(fig.gain))) if float(fig.gain) != 0 else float("nan")
    return f, db, mid, f_low


def _par(*rs: float) -> float:
    g = sum(0.0 if math.isinf(r) else 1.0 / r for r in rs)
    return math.inf if g == 0 else 1.0 / g


def cascade_load_line_data(design, nominal, index: int) -> dict:
    """``plots.load_line_data``'s dict for Q1 (``index`` 1) or Q2 (2) of a two-stage amplifier.

    Q1: DC line RC + (RE + RE2)/α; AC line (RC ∥ the follower's input, which is R3∥R4 ∥ (β2+1)·
    (RE3∥RL), VBE fixed as in the swing) + RE_ac/α; the load moves by Z/(Z + RE_ac/α) volts per volt
    of VCE1, Z the collector's AC load.  Q2 (collector on the rail): DC line RE3/α, AC line
    (RE3 ∥ RL)/α, the load moving as much as VCE2 does.
    """
    amp = design.stage
    rl = math.inf if amp.load is None else amp.load
    t = amp.q1 if index == 1 else amp.q2
    alpha = t.hfe / (t.hfe + 1.0)
    if index == 1:
        re, re2, rc = amp.value("RE"), amp.value("RE2"), amp.value("RC")
        re_ac = re if amp.bypassed else re + re2
        bias2 = _par(amp.value("R3", math.inf), amp.value("R4", math.inf)) if amp.coupling == "capacitor" \
            else math.inf
        z = _par(rc, bias2, (amp.q2.hfe + 1.0) * _par(amp.value("RE3"), rl))
        r_dc, r_ac = rc + (re + re2) / alpha, z + re_ac / alpha
        out_per_vce = z / r_ac
        vce_q, ic_q = float(nominal.vce1), float(nominal.ic1)
    else:
        re3 = amp.value("RE3")
        r_dc, r_ac, out_per_vce = re3 / alpha, _par(re3, rl) / alpha, 1.0
        vce_q, ic_q = float(nominal.vce2), float(nominal.ic2)
    swing_vce = float(nominal.swing_peak) / out_per_vce
    return {"dc": ((0.0, amp.supply / r_dc), (amp.supply, 0.0)), "ac_cutoff": vce_q + ic_q * r_ac, "r_ac": r_ac,
            "r_dc": r_dc, "q": (vce_q, ic_q), "vce_sat": t.vce_sat,
            "swing": (vce_q - swing_vce, vce_q + swing_vce), "ic_at": lambda v: ic_q - (v - vce_q) / r_ac}


def _parts_table(design, a) -> str:
    from ..stages import two_stage
    from .sections import e

    by_name = {c.name: c for c in a.checks}
    rows = []
    for role in two_stage.ROLES:
        part = design.stage.parts.get(role)
        if part is None:
            continue
        unit, rating_unit = ("ohm", "W") if role.startswith("R") else ("F", "V")
        ch = by_name.get(f"{role} power" if unit == "ohm" else f"{role} voltage")
        load = "" if ch is None else format_si(ch.value, ch.unit, 3) + (" DC" if unit == "F" else "")
        choice = design.roles.get(role)
        made = ", ".join(f"{format_si(p.value, unit, 3)} from bin {p.location or '?'}"
                         + (f" (row {p.source.get('row')})" if p.source.get("row") is not None else "")
                         for p in (choice.parts if choice is not None else ()))
        if choice is not None and len(choice.parts) > 1:
            made = f"{choice.arrangement}: {made}"
        pol = by_name.get(f"{role} polarity")
        rows.append(f"<tr><td><strong>{e(role)}</strong></td><td class='num'>{e(format_si(part.value, unit, 4))}</td>"
                    f"<td class='num'>{part.tolerance * 100:g} %</td>"
                    f"<td class='num'>{e(format_si(part.rating, rating_unit, 3)) if part.rating else '—'}</td>"
                    f"<td class='num'>{e(load)}</td><td>{e(made or '—')}</td>"
                    f"<td>{e(pol.message) if pol is not None else ''}</td></tr>")
    for name, t in design.transistors.items():
        loc, src = design.transistor_places.get(name, ("", {}))
        where = f"bin {loc}" + (f" (row {src.get('row')})" if src.get("row") is not None else "") if loc else "—"
        ch = by_name.get(f"{name} power")
        rows.append(f"<tr><td><strong>{name}</strong></td><td class='num'>{e(t.label or t.polarity.upper())}</td>"
                    f"<td class='num'>hFE {t.hfe_min:g}–{t.hfe_max:g}</td>"
                    f"<td class='num'>{e(format_si(t.pd, 'W', 3)) if t.pd else '—'}</td>"
                    f"<td class='num'>{e(format_si(ch.value, 'W', 3)) if ch is not None else ''}</td>"
                    f"<td>{e(where)}</td><td></td></tr>")
    return ("<table><thead><tr><th>part</th><th class='num'>value</th><th class='num'>tolerance</th>"
            "<th class='num'>rating</th><th class='num'>worst-case load</th><th>made of, from</th>"
            "<th>fitting</th></tr></thead><tbody>" + "".join(rows) + "</tbody></table>")


def _figures_table(a) -> str:
    from .sections import e

    f, w = a.nominal, a.worst
    rows = []
    for label, key, unit in (("Q1 VB", "vb1", "V"), ("Q1 VE", "ve1", "V"), ("Q1 VC", "vc1", "V"),
                             ("Q1 IE", "ie1", "A"), ("Q1 VCE", "vce1", "V"), ("Q2 VB", "vb2", "V"),
                             ("Q2 VE", "ve2", "V"), ("Q2 IE", "ie2", "A"), ("Q2 VCE", "vce2", "V"),
                             ("gain, source to load", "gain", ""), ("input impedance", "rin", "ohm"),
                             ("output impedance", "rout", "ohm"), ("−3 dB low corner", "f_low", "Hz"),
                             ("output peak into the load", "swing_peak", "V")):
        def show(x):
            x = float(x)
            if not math.isfinite(x):
                return "—"
            return f"{x:.4g}" if unit == "" else format_si(x, unit, 4)

        rows.append(f"<tr><td>{e(label)}</td><td class='num'>{e(show(getattr(f, key)))}</td>"
                    f"<td class='num'>{e(show(w.low[key]))}</td><td class='num'>{e(show(w.high[key]))}</td></tr>")
    return ("<table><thead><tr><th>figure</th><th class='num'>nominal</th><th class='num'>lowest</th>"
            "<th class='num'>highest</th></tr></thead><tbody>" + "".join(rows) + "</tbody></table>")


def render_two_stage_report(design, *, monte_carlo: int = 2000, seed: int = 0, stock_note: str = "",
                            on_step: Callable[..., None] = NO_PROGRESS) -> str:
    """The report of a design whose stage is a ``TwoStage``, as one HTML string."""
    from .. import __version__
    from .html import inline_svg
    from .plots import load_lines_svg, response_svg
    from .schematic_two_stage import two_stage_schematic_svg
    from .sections import advice_list, checks_table, e, pick_table
    from .html import page_head

    amp = design.stage
    on_step(note="figures, worst case" + (f", Monte Carlo of {monte_carlo} builds" if monte_carlo else ""))
    a, checks_all, cautions = gather_two_stage(design, monte_carlo=monte_carlo, seed=seed)
    f = a.nominal
    on_step(note="schematic")
    schem = inline_svg(two_stage_schematic_svg(design, f), "sch", "schematic of the two-stage amplifier")
    on_step(note="plots")
    resp = inline_svg(response_svg(design, cascade_response_data(design), what="the whole amplifier"), "resp",
                      "magnitude response")
    lines = [inline_svg(load_lines_svg(design, f, cascade_load_line_data(design, f, i)), f"ll{i}",
                        f"load lines of Q{i}") for i in (1, 2)]
    checks = [c for c in checks_all if c.kind != "advice" and not c.instruction]
    failed = [c for c in checks if c.ok is False]
    title = (f"{amp.polarity.upper()} two-stage amplifier ({amp.coupling}-coupled), "
             f"{format_si(amp.supply, 'V', 3)} supply")
    if getattr(design.spec, "title", ""):
        title = f"{design.spec.title}: {title}"
    verdict = (("<div class='verdict bad'><strong>Not ready to build:</strong> " + e("; ".join(c.name for c in failed))
                + " — see the checks below.</div>") if failed else
               "<div class='verdict'><strong>Every check is met</strong>, at the worst case over tolerances, "
               "both hFE ranges and the ambient range.</div>")
    src = ", ".join((f"source resistance {format_si(amp.source_resistance, 'ohm', 3)}" if amp.source_resistance
                     else "ideal source", f"load {format_si(amp.load, 'ohm', 3)}" if amp.load else "no load"))
    bits = []
    if design.stock_file:
        bits.append(f"parts from <code title=\"{e(design.stock_file)}\">{e(Path(design.stock_file).name)}</code>")
    if stock_note:
        bits.append(e(stock_note))
    units = f"{design.units} unit{'s' if design.units != 1 else ''}"
    mc = ""
    if a.monte_carlo:
        m = a.monte_carlo
        rows = "".join(f"<tr><td>{e(k)}</td><td class='num'>{v * 100:.1f} %</td></tr>" for k, v in m["meets"].items())
        mc = (f"<section class='keep'><h2>Spread over {m['samples']} random builds</h2><p class='note'>Each build "
              "draws every resistor and capacitor uniformly within its tolerance, each hFE log-uniformly over its "
              f"range and the ambient uniformly over its range (seed {m['seed']}). Both transistors active in "
              f"{m['active'] * 100:.1f} % of them.</p><table class='narrow'><thead><tr><th>builds that meet</th>"
              f"<th class='num'>share</th></tr></thead><tbody>{rows}<tr><th>all of them at once</th>"
              f"<th class='num'>{m['meets_all'] * 100:.1f} %</th></tr></tbody></table></section>")
    sw = a.swing()
    on_step(note="writing")
    caut = "".join(f"<li>{e(c)}</li>" for c in cautions)
    notes = "".join(f"<p class='note'>Note: {e(n)}</p>" for n in getattr(design.spec, "notes", ()))
    vname = "VEC" if amp.polarity == "pnp" else "VCE"
    return f"""{page_head(title, design.path, src, units, bits, notes)}
{verdict}
<section class="cautions keep"><h2>Before you build</h2><ul>{caut}</ul></section>
<section class="keep"><h2>Schematic</h2>
<figure class="schematic">{schem}<figcaption><span class="figno">Figure 1.</span> Schematic: a common-emitter stage (Q1) driving an emitter follower (Q2), every part with its designator and value (IEC 60062 letter code). A place filled by two or three parts in series or in parallel shows each of them with its own designator, and what they make together; a mixed network is drawn once and marked "(n parts)". The parts table names each part and its bin. Electrolytics are drawn with their + end where the DC voltage puts it. Supply {e(format_si(amp.supply, 'V', 3))}, single rail.</figcaption></figure>
</section>
<section><div class="keep lead"><h2>Checks</h2>
<p class="note">Each figure is judged at its worst case over part tolerances, both hFE ranges (Q1 {amp.q1.hfe_min:g} to {amp.q1.hfe_max:g}, Q2 {amp.q2.hfe_min:g} to {amp.q2.hfe_max:g}) and the ambient range ({design.conditions.ambient_min:g} to {design.conditions.ambient_max:g} °C); the margin is the distance to the limit as a share of the limit (positive: room left). The state rows give {vname}: nominal, its lowest over the box, and the saturation voltage it must stay above.</p></div>
{checks_table(checks)}
{advice_list([c for c in checks_all if c.kind == "advice"])}
</section>
<section><h2>Parts</h2>
{_parts_table(design, a)}
</section>
<section class="keep"><h2>Pick list</h2>
{pick_table(design)}
</section>
<section><div class="keep lead"><h2>Operating points and figures</h2>
{_figures_table(a)}</div>
<p class="note">Node voltages are to ground. Lowest and highest are taken over the corners of the tolerance, hFE and ambient box. Gain is signed: negative means the output is inverted. The swing is limited by {e(str(sw['transistor']))} ({e(sw['limit'])}).</p>
<p><strong>Bench check:</strong> with the supply on and no signal, measure each base, emitter and collector to ground; a build from these parts should read between the lowest and highest values above.</p>
</section>
<section class="keep plots"><h2>Magnitude response</h2>
<figure class="plot">{resp}<figcaption><span class="figno">Figure 2.</span> Gain from the source to the load in dB over frequency, every coupling and bypass capacitor of both stages included, nominal parts. Dotted: 3 dB below mid-band; dashed: the target corner. The upper corner is not modelled (no junction or wiring capacitance).</figcaption></figure>
</section>
<section class="keep plots"><h2>Load lines</h2>
<figure class="plot">{lines[0]}<figcaption><span class="figno">Figure 3.</span> Q1: collector current against {vname}. The AC line carries RC in parallel with the follower's input, and the unbypassed emitter resistance. The green band is the excursion of Q1 at the amplifier's largest symmetric output swing.</figcaption></figure>
<figure class="plot">{lines[1]}<figcaption><span class="figno">Figure 4.</span> Q2 (the follower): collector current against {vname}. The AC line is RE3 in parallel with the load; the green band is the largest symmetric output swing.</figcaption></figure>
</section>
{mc}
<footer>Made by drawerfit {e(__version__)}. Model: Ebers-Moll transistors (no Early effect, no base resistance, no junction capacitance), VBE fixed at its 25 °C value with its drift; the high-frequency end is not modelled. Figures are estimates to check on the bench.</footer>
</body></html>
"""

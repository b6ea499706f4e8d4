"""The stage report: one self-contained HTML file a person can build and check the stage from.

Schematic, checks with margins, cautions, parts with bins and the pick list, the magnitude
response, the load lines and the Monte Carlo spread, all inline (SVG, CSS); nothing is fetched
from anywhere.  Prints on A4 and Letter alike (the page size is left to the printer).
"""

from __future__ import annotations

import html
import math
import re
from pathlib import Path
from typing import Callable

from ..parts import SpecError
from ..progress import NO_PROGRESS
from ..values import format_code, format_si
from .design_file import DesignFile, load_design

__all__ = ["write_report", "render_report", "inline_svg"]

_STAGE_NAMES = {"emitter-follower": "emitter follower", "common-emitter": "common-emitter stage"}


def inline_svg(svg: str, prefix: str, label: str) -> str:
    """An SVG document made fit to sit inside HTML: no XML prologue, comments, metadata or
    namespace URIs; ids prefixed so several SVGs on one page cannot clash; scaled by CSS.
    """
    s = re.sub(r"<\?xml[^>]*\?>", "", svg)
    s = re.sub(r"<!DOCTYPE[^>]*>", "", s, flags=re.S)
    s = re.sub(r"<!--.*?-->", "", s, flags=re.S)
    s = re.sub(r"<metadata>.*?</metadata>", "", s, flags=re.S)
    s = re.sub(r'\s+xmlns(:\w+)?="[^"]*"', "", s)
    s = s.replace("xlink:href=", "href=")
    s = re.sub(r'\bid="([^"]+)"', lambda m: f'id="{prefix}-{m.group(1)}"', s)
    s = re.sub(r'href="#([^"]+)"', lambda m: f'href="#{prefix}-{m.group(1)}"', s)
    s = re.sub(r"url\(#([^)]+)\)", lambda m: f"url(#{prefix}-{m.group(1)})", s)
    # The root element: drop fixed sizes (CSS scales it), name it for screen readers.
    s = re.sub(r"<svg\b([^>]*)>",
               lambda m: "<svg" + re.sub(r'\s(width|height)="[^"]*"', "", m.group(1))
               + f' role="img" aria-label="{html.escape(label)}" class="pic">', s, count=1)
    return s.strip()


def _e(x) -> str:
    return html.escape(str(x))


def _si(value, unit, digits=4) -> str:
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return "—"
    return format_si(float(value), unit, digits)


def _pct(m) -> str:
    if m is None:
        return "—"
    if not math.isfinite(m):
        return "missed" if m < 0 else "—"
    return f"{m * 100:+.1f} %"


_CSS = """
:root { --ink:#1f3b57; --muted:#5b6b7a; --line:#d5dbe2; --accent:#b5541c; --ok:#2f6b2b; --bad:#a0281e;
        --paper:#fbfaf7; --band:#eef2f5; }
* { box-sizing: border-box; }
html { background: #e9ecef; }
body { font-family: system-ui, -apple-system, "Segoe UI", Roboto, "Noto Sans", "DejaVu Sans", Arial, sans-serif;
       color: var(--ink); background: var(--paper); max-width: 60rem; margin: 1.5rem auto; padding: 1.5rem 2rem;
       line-height: 1.45; font-size: 15px; box-shadow: 0 1px 4px rgba(0,0,0,.12); }
h1 { font-size: 1.55rem; margin: 0 0 .2rem; letter-spacing: .01em; }
h2 { font-size: 1.15rem; margin: 1.8rem 0 .6rem; padding-bottom: .2rem; border-bottom: 2px solid var(--ink); }
h3 { font-size: 1rem; margin: 1rem 0 .4rem; }
p { margin: .4rem 0; }
.sub { color: var(--muted); margin: 0 0 1rem; }
.verdict { padding: .6rem .9rem; border-left: 6px solid var(--ok); background: #e8f1e6; margin: .8rem 0; }
.verdict.bad { border-color: var(--bad); background: #f7e6e3; }
.cautions { border: 2px solid var(--accent); background: #fbf1e8; padding: .5rem 1rem; margin: 1rem 0; }
.cautions h2 { border: none; margin: .3rem 0; color: var(--accent); }
.cautions li { margin: .3rem 0; }
table { border-collapse: collapse; width: 100%; margin: .4rem 0 .8rem; font-size: .9rem; }
th, td { border-bottom: 1px solid var(--line); padding: .28rem .45rem; text-align: left; vertical-align: top;
         overflow-wrap: break-word; }
th { background: var(--band); font-weight: 600; overflow-wrap: normal; }
td:first-child { overflow-wrap: normal; }
td.num, th.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
.tag { display: inline-block; white-space: nowrap; min-width: 4.6em; text-align: center; border-radius: 3px; padding: 0 .35em;
       font-size: .8rem; font-weight: 600; color: #fff; background: var(--ok); }
.tag.bad { background: var(--bad); } .tag.skip { background: #8a96a3; } .tag.warn { background: #9a6a00; }
figure { margin: .6rem 0 1rem; break-inside: avoid; page-break-inside: avoid; }
figcaption { font-size: .85rem; color: var(--muted); margin-top: .25rem; }
svg.pic { display: block; width: 100%; height: auto; max-width: 100%; }
.schematic svg.pic { background: #fff; border: 1px solid var(--line); }
table.narrow { width: auto; min-width: 50%; }
.pair { display: flex; gap: 1rem; flex-wrap: wrap; }
.pair figure { flex: 1 1 18rem; min-width: 0; }
.note { font-size: .85rem; color: var(--muted); }
footer { margin-top: 2rem; font-size: .8rem; color: var(--muted); border-top: 1px solid var(--line); padding-top: .5rem; }
@page { margin: 14mm 12mm; }
@media print {
  html { background: none; }
  body { max-width: none; width: auto; margin: 0; padding: 0; box-shadow: none; background: none; font-size: 10pt; }
  h2 { break-after: avoid; page-break-after: avoid; margin-top: 1.1rem; }
  table { font-size: 8.5pt; }
  tr, .verdict, .cautions { break-inside: avoid; page-break-inside: avoid; }
  .tag { border: 1px solid #000; color: #000; background: none !important; }
  .tag.bad { font-weight: 800; }
  section.plots figure svg.pic { max-height: 92mm; }
  .pair figure svg.pic { max-height: 70mm; }
}
"""


def _share_name(key: str, design: DesignFile) -> str:
    """'ie_min' -> 'IE at least 5.5 mA'; 'R1 power' stays as it is."""
    from .figures import TARGET_WORDS

    bound = design.targets.get(key)
    if key in TARGET_WORDS and bound is not None:
        unit = {"ie_min": "A", "ie_max": "A", "f_low": "Hz", "swing": "V", "rin_min": "ohm",
                "rout_max": "ohm"}.get(key)
        shown = format_si(bound, unit, 3) if unit else f"{bound:.3g}"
        return f"{TARGET_WORDS[key]} {shown}"
    return key.replace(" power", " within its derated power")


def _summary_rows(fig, worst, design: DesignFile, lowest_f_low: float) -> list[tuple[str, str, str, str]]:
    pnp = design.stage.polarity == "pnp"
    rows = [
        ("VB, base to ground", "vb", "V"), ("VE, emitter to ground", "ve", "V"),
        ("VC, collector to ground", "vc", "V"), ("IE, emitter current", "ie", "A"),
        ("IC, collector current", "ic", "A"), ("VEC" if pnp else "VCE", "vce", "V"),
        ("gain, source to load", "gain", None), ("input impedance", "rin", "ohm"),
        ("output impedance", "rout", "ohm"), ("−3 dB low corner, whole stage", "f_low", "Hz"),
        ("largest symmetric output peak", "swing_peak", "V"),
    ]
    out = []
    for label, key, unit in rows:
        nom = float(getattr(fig, key))
        lo, hi = float(worst.low[key]), float(worst.high[key])
        if key == "f_low":
            lo = lowest_f_low
        if unit is None:
            out.append((label, f"{nom:.3g}", f"{lo:.3g}", f"{hi:.3g}"))
        else:
            out.append((label, _si(nom, unit, 3), _si(lo, unit, 3), _si(hi, unit, 3)))
    return out


def _checks_table(checks) -> str:
    body = []
    for c in checks:
        if c.ok is None:
            tag = '<span class="tag skip">not checked</span>'
        elif not c.ok and c.kind == "advice":
            tag = '<span class="tag warn">advice</span>'
        elif c.ok:
            tag = '<span class="tag">met</span>'
        else:
            tag = '<span class="tag bad">NOT MET</span>'
        unit = c.unit
        val = _si(c.value, unit, 4) if unit else ("—" if c.value is None else f"{c.value:.4g}")
        lim = _si(c.limit, unit, 4) if unit else ("—" if c.limit is None else f"{c.limit:.4g}")
        nom = _si(c.nominal, unit, 4) if unit else ("—" if c.nominal is None else f"{c.nominal:.4g}")
        body.append(f"<tr><td>{tag}</td><td>{_e(c.name)}</td><td class='num'>{nom}</td><td class='num'>{val}</td>"
                    f"<td class='num'>{lim}</td><td class='num'>{_pct(c.margin)}</td><td>{_e(c.message)}</td></tr>")
    return ("<table><thead><tr><th></th><th>check</th><th class='num'>nominal</th><th class='num'>worst case</th>"
            "<th class='num'>limit</th><th class='num'>margin</th><th>what the analysis found</th></tr></thead><tbody>"
            + "".join(body) + "</tbody></table>")


def _parts_table(design: DesignFile, fig, polarity_notes: dict) -> str:
    from .bom import ROLE_ORDER

    stage = design.stage
    rows = []
    for role in ROLE_ORDER:
        part = stage.parts.get(role)
        if part is None:
            continue
        unit = "ohm" if role.startswith("R") else "F"
        choice = design.roles.get(role)
        if choice and choice.parts:
            made = "; ".join(f"{format_code(p.value, unit)} from bin {p.location or '?'}"
                             + (f" (row {p.source.get('row')})" if p.source.get("row") is not None else "")
                             for p in choice.parts)
            how = choice.describe if choice.describe and choice.arrangement != "single" else choice.arrangement
        else:
            made, how = "—", "single"
        if unit == "ohm":
            p = float(getattr(fig, f"p_{role.lower()}"))
            load = _si(p, "W", 3)
            rating = _si(part.rating, "W", 3) if part.rating else "—"
        else:
            v = abs(float(getattr(fig, f"v_{role.lower()}")))
            load = _si(v, "V", 3) + " DC"
            rating = _si(part.rating, "V", 3) if part.rating else "—"
            if part.polarized:
                load += f"<br><strong>polarized:</strong> {_e(polarity_notes.get(role, ''))}"
        tol = f"±{part.tolerance * 100:g} %" if part.tolerance else "—"
        rows.append(f"<tr><td><strong>{role}</strong></td><td class='num'>{_e(format_si(part.value, unit))}</td>"
                    f"<td class='num'>{_e(format_code(part.value, unit))}</td><td>{_e(how)}</td><td>{_e(made)}</td>"
                    f"<td class='num'>{tol}</td><td class='num'>{rating}</td><td>{load}</td></tr>")
    t = stage.transistor
    ratings = ", ".join(x for x in (f"VCEO {_si(t.vceo, 'V', 3)}" if t.vceo else "",
                                    f"IC max {_si(t.ic_max, 'A', 3)}" if t.ic_max else "",
                                    f"Pd {_si(t.pd, 'W', 3)}" if t.pd else "") if x) or "—"
    where = f"bin {design.transistor_location}" if design.transistor_location else "—"
    rows.append(f"<tr><td><strong>Q1</strong></td><td colspan='2'>{_e(t.label or 'unnamed')} {t.polarity.upper()}</td>"
                f"<td>hFE {t.hfe_min:g} to {t.hfe_max:g}</td><td>{_e(where)}</td><td class='num'>—</td>"
                f"<td>{_e(ratings)}</td><td>{_si(float(fig.p_q), 'W', 3)}</td></tr>")
    return ("<table><thead><tr><th>part</th><th class='num'>value</th><th class='num'>code</th><th>made of</th>"
            "<th>stock parts and bins</th><th class='num'>tolerance</th><th class='num'>rating</th>"
            "<th>in use (nominal)</th></tr></thead><tbody>" + "".join(rows) + "</tbody></table>")


def _pick_table(design: DesignFile) -> str:
    if not design.pick_list:
        return ("<p class='note'>This file is a plain stage spec, not a saved design: it names no stock parts, so "
                "there are no bins and no pick list. Save a design with <code>drawerfit design --save</code> to get "
                "them.</p>")
    rows = []
    for item in sorted(design.pick_list, key=lambda i: (i.location, i.part)):
        src = item.source
        where = ", ".join(str(x) for x in (src.get("file"), f"sheet {src['sheet']}" if src.get("sheet") else None,
                                           f"row {src['row']}" if src.get("row") is not None else None) if x)
        rows.append(f"<tr><td><strong>{_e(item.location or '—')}</strong></td><td>{_e(item.part)}</td>"
                    f"<td class='num'>{item.per_unit}</td><td class='num'>{item.count}</td><td>{_e(where)}</td></tr>")
    total = sum(i.count for i in design.pick_list)
    return (f"<p>For <strong>{design.units}</strong> unit{'s' if design.units != 1 else ''}: take "
            f"{total} parts in all, bin by bin.</p>"
            "<table><thead><tr><th>bin</th><th>part</th><th class='num'>per unit</th><th class='num'>take</th>"
            "<th>stock file line</th></tr></thead><tbody>" + "".join(rows) + "</tbody></table>")


def render_report(design: DesignFile, *, monte_carlo: int = 2000, seed: int = 0, stock_note: str = "",
                  on_step: Callable[..., None] = NO_PROGRESS) -> str:
    """The report as one HTML string."""
    from .. import __version__
    from .figures import gather, polarity_text
    from .plots import histogram_svg, load_lines_svg, response_svg
    from .schematic import schematic_svg, value_label

    stage = design.stage
    figs = gather(design, monte_carlo=monte_carlo, seed=seed, on_step=on_step)
    fig, worst = figs.nominal, figs.worst
    polarity_notes = {r: polarity_text(figs, r) for r in ("C1", "C2", "CE")
                      if r in stage.parts and stage.parts[r].polarized}

    on_step(note="schematic")
    labels = {}
    for role, choice in design.roles.items():
        if role in stage.parts and choice.arrangement != "single" and choice.parts:
            unit = "ohm" if role.startswith("R") else "F"
            sep = " + " if choice.arrangement == "series" else " ∥ "
            labels[role] = value_label(role, stage.parts[role].value) + " = " + sep.join(
                format_code(p.value, unit) for p in choice.parts)
    schem = inline_svg(schematic_svg(design, fig, labels=labels), "sch", "schematic of the stage")
    on_step(note="plots")
    resp = inline_svg(response_svg(design), "resp", "magnitude response")
    lines = inline_svg(load_lines_svg(design, fig), "ll", "DC and AC load lines")
    hist = ""
    if figs.mc is not None:
        t = design.targets
        ie_lines = [(t[k], w) for k, w in (("ie_min", "target min"), ("ie_max", "target max")) if k in t]
        h_ie = inline_svg(histogram_svg(figs.mc.ie, unit="A", scale=1e3, axis_label="IE (mA)", lines=ie_lines, shown_unit="mA",
                                        nominal=float(fig.ie)), "hie", "histogram of IE")
        f_lines = [(t["f_low"], "target")] if "f_low" in t else []
        h_f = inline_svg(histogram_svg(figs.mc.f_low, unit="Hz", scale=1.0, axis_label="−3 dB low corner (Hz)",
                                       lines=f_lines, nominal=float(fig.f_low), shown_unit="Hz"), "hf", "histogram of the corner")
        frac = figs.mc_fraction
        frac_text = ""
        if frac:
            rows = "".join(f"<tr><td>{_e(_share_name(k, design))}</td><td class='num'>{v * 100:.1f} %</td></tr>"
                           for k, v in frac.items() if k != "all")
            all_row = (f"<tr><th>all of them at once</th><th class='num'>{frac['all'] * 100:.1f} %</th></tr>"
                       if "all" in frac else "")
            frac_text = ("<table class='narrow'><thead><tr><th>builds that meet</th><th class='num'>share</th></tr>"
                         f"</thead><tbody>{rows}{all_row}</tbody></table>")
        hist = (f"<h2>Spread over {figs.mc_runs} random builds</h2>"
                "<p class='note'>Each build draws every resistor and capacitor uniformly within its tolerance, hFE "
                "log-uniformly over its range and the ambient uniformly over "
                f"{design.conditions.ambient_min:g} to {design.conditions.ambient_max:g} °C (seed {figs.seed}). "
                "Solid line: the nominal stage; dashed: targets.</p>"
                f"{frac_text}<div class='pair'><figure>{h_ie}<figcaption>Emitter current IE</figcaption></figure>"
                f"<figure>{h_f}<figcaption>Whole-stage −3 dB low corner</figcaption></figure></div>")

    failed = [c for c in figs.checks if c.ok is False and c.kind != "advice"]
    name = _STAGE_NAMES.get(stage.topology, stage.topology)
    title = f"{stage.polarity.upper()} {name}, {format_si(stage.supply, 'V', 3)} supply"
    if getattr(design.spec, "title", ""):
        title = f"{design.spec.title}: {title}"
    if failed:
        verdict = ("<div class='verdict bad'><strong>Not ready to build:</strong> "
                   + _e("; ".join(c.name for c in failed)) + " — see the checks below.</div>")
    else:
        verdict = ("<div class='verdict'><strong>Every check is met</strong>, at the worst case over tolerances, "
                   "the hFE range and the ambient range.</div>")
    src = ", ".join(x for x in (
        f"source resistance {format_si(stage.source_resistance, 'ohm', 3)}" if stage.source_resistance else
        "ideal source", f"load {format_si(stage.load, 'ohm', 3)}" if stage.load else "no load") if x)
    stock_bits = []
    if design.stock_file:
        stock_bits.append(f"parts from <code title=\"{_e(design.stock_file)}\">{_e(Path(design.stock_file).name)}</code>")
    if stock_note:
        stock_bits.append(_e(stock_note))
    units = (f"{design.units} unit{'s' if design.units != 1 else ''}" if design.is_design or design.units > 1
             else "single stage")
    summary = "".join(f"<tr><td>{_e(a)}</td><td class='num'>{b}</td><td class='num'>{c}</td>"
                      f"<td class='num'>{d}</td></tr>" for a, b, c, d in _summary_rows(fig, worst, design, figs.lowest_f_low))
    cautions = "".join(f"<li>{_e(c)}</li>" for c in figs.cautions)
    on_step(note="writing")
    doc = f"""<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8">
<meta name="generator" content="drawerfit {_e(__version__)}">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>{_e(title)} — drawerfit report</title>
<style>{_CSS}</style></head>
<body>
<header>
<h1>{_e(title)}</h1>
<p class="sub">{_e(Path(design.path).name)} · {_e(src)} · {_e(units)}{' · ' + ' · '.join(stock_bits) if stock_bits else ''}</p>
</header>
{verdict}
<section class="cautions"><h2>Before you build</h2><ul>{cautions}</ul></section>
<section><h2>Schematic</h2>
<figure class="schematic">{schem}<figcaption>Designators and chosen values (IEC 60062 letter code). Electrolytics are drawn with their + end where the DC voltage puts it. Supply {_e(format_si(stage.supply, 'V', 3))}, single rail. Pin order differs between transistor packages: find emitter, base and collector of the part in hand before fitting it.</figcaption></figure>
</section>
<section><h2>Checks</h2>
<p class="note">Each figure is judged at its worst case over part tolerances, the hFE range ({stage.transistor.hfe_min:g} to {stage.transistor.hfe_max:g}) and the ambient range ({design.conditions.ambient_min:g} to {design.conditions.ambient_max:g} °C); the margin is the distance to the limit as a share of the limit (positive: room left). Advice is a rule of thumb, not a requirement.</p>
{_checks_table(figs.checks)}
</section>
<section><h2>Parts</h2>
{_parts_table(design, fig, polarity_notes)}
<h3>Pick list</h3>
{_pick_table(design)}
</section>
<section><h2>Operating point and figures</h2>
<table><thead><tr><th>figure</th><th class="num">nominal</th><th class="num">lowest</th><th class="num">highest</th></tr></thead>
<tbody>{summary}</tbody></table>
<p class="note">Node voltages are to ground. Lowest and highest are taken over the corners of the tolerance, hFE and ambient box. Gain is signed: negative means the output is inverted.</p>
<p><strong>Bench check:</strong> with the supply on and no signal, measure VB, VE and VC to ground; a stage built from these parts should read between the lowest and highest values above. A reading outside them points at a wrong part, a part fitted the wrong way round, or a transistor outside its stated hFE range.</p>
</section>
<section class="plots"><h2>Magnitude response</h2>
<figure>{resp}<figcaption>Gain from the source to the load in dB over frequency, every coupling and bypass capacitor included. Dashed: the target corner.</figcaption></figure>
<h2>Load lines</h2>
<figure>{lines}<figcaption>Collector current against {'VEC' if stage.polarity == 'pnp' else 'VCE'}. The DC line holds for the bias; the AC line, through the quiescent point, is the path the signal takes with the load connected. The green band is the largest swing the stage takes the same distance both ways before it saturates or cuts off.</figcaption></figure>
{hist}
</section>
<footer>Made by drawerfit {_e(__version__)}. Model: Ebers-Moll transistor (no Early effect, no base resistance, no junction capacitance), VBE {format_si(stage.transistor.vbe, 'V', 3)} at 25 °C drifting {stage.transistor.vbe_tempco * 1e3:g} mV/°C; the high-frequency end is not modelled. Figures are estimates to check on the bench.</footer>
</body></html>
"""
    return doc


def design_inputs(design_toml_path, stock_file=None) -> list[tuple[str, str]]:
    """Every file a command over a saved design reads: the design, the stock file given, and the
    stock file the design names (as written, and beside the design), so no output lands on one."""
    import tomllib

    inputs = [(str(design_toml_path), "the design")]
    if stock_file:
        inputs.append((str(stock_file), "the stock file given"))
    try:
        named = tomllib.loads(Path(design_toml_path).read_text(encoding="utf-8-sig")).get("stock_file")
    except (OSError, UnicodeDecodeError, tomllib.TOMLDecodeError):
        named = None
    if isinstance(named, str) and named.strip():
        role = f"the stock file that {Path(design_toml_path).name} names"
        inputs += [(named, role), (str(Path(design_toml_path).parent / named), role)]
    return inputs


def read_design(design_toml_path, stock_file=None) -> tuple[DesignFile, str]:
    """The design, with the stock (read only) resolving a transistor label and checked against
    the design's checksum; the note says what the stock check found.
    """
    if stock_file is None:
        return load_design(design_toml_path), ""
    from ..stock import load_stock
    from .stock_link import link_stock

    stock = load_stock(str(stock_file))
    return link_stock(load_design(design_toml_path, stock), stock)


def write_report(design_toml_path, out_path, *, stock_file=None, monte_carlo=2000, seed=0,
                 on_step: Callable[..., None] = NO_PROGRESS) -> None:
    """Write the HTML report of DESIGN.toml to ``out_path``.

    ``stock_file`` (read only) supplies a transistor given by label, the transistor's bin when
    the design lacks it, and a check that the stock still matches the design's checksum.
    """
    from ..filesafe import atomic_write, check_output

    out = check_output(out_path, design_inputs(design_toml_path, stock_file), "report")
    on_step(note="reading the design")
    design, note = read_design(design_toml_path, stock_file)
    text = render_report(design, monte_carlo=monte_carlo, seed=seed, stock_note=note, on_step=on_step)
    atomic_write(out, text)

"""The stage report: one self-contained HTML file a person can build and check the stage from.

Schematic, checks with margins, cautions, parts with bins and the pick list, the magnitude
response, the load lines and the Monte Carlo spread, all inline (SVG, CSS); nothing is fetched
from anywhere.  Prints on A4 and Letter alike (the page size is left to the printer).
"""

from __future__ import annotations

import html
import re
from pathlib import Path
from typing import Callable

from ..progress import NO_PROGRESS
from ..values import format_si
from ..io.saved_design import DesignFile, load_design
from ..stages.topologies import topology_module

__all__ = ["write_report", "render_report", "inline_svg"]



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


def _several(members, stage) -> str:
    """The caption's sentence on places filled by several parts ('' when there are none)."""
    from .schematic import value_label

    multi = [(role, parts) for role, parts in members.items() if len(parts) > 1]
    if not multi:
        return ""
    role, parts = multi[0]
    names = ", ".join(m.designator for m in parts)
    return (f" A place filled by two or three parts shows each of them with its own designator, and what they make "
            f"together ({names} make {role} = {value_label(role, stage.parts[role].value)}).")


def render_report(design: DesignFile, *, monte_carlo: int = 2000, seed: int = 0, stock_note: str = "",
                  on_step: Callable[..., None] = NO_PROGRESS) -> str:
    """The report as one HTML string."""
    from ..stages.topologies import assembly_for, assembly_hook

    assembly = assembly_for(design.stage.topology)
    if assembly is not None:
        return assembly_hook(assembly, "report")(design, monte_carlo=monte_carlo, seed=seed, stock_note=stock_note,
                                       on_step=on_step)
    from .. import __version__
    from .export import role_members
    from .figures import gather
    from .plots import histogram_svg, load_lines_svg, response_svg
    from .schematic import schematic_svg
    from .sections import (advice_list, checks_table, e, fitting_list, parts_table, pick_table, share_name,
                           summary_rows)

    stage = design.stage
    figs = gather(design, monte_carlo=monte_carlo, seed=seed, on_step=on_step)
    fig, worst = figs.nominal, figs.worst
    members = role_members(design)

    on_step(note="schematic")
    schem = inline_svg(schematic_svg(design, fig, members=members), "sch", "schematic of the stage")
    on_step(note="plots")
    resp = inline_svg(response_svg(design), "resp", "magnitude response")
    lines = inline_svg(load_lines_svg(design, fig), "ll", "DC and AC load lines")
    hist = ""
    if figs.mc is not None:
        t = design.targets
        ie_lines = [(t[k], w) for k, w in (("ie_min", "target min"), ("ie_max", "target max")) if k in t]
        h_ie = inline_svg(histogram_svg(figs.mc.ie, unit="A", scale=1e3, axis_label="IE (mA)", lines=ie_lines,
                                        shown_unit="mA", nominal=float(fig.ie)), "hie", "histogram of IE")
        f_lines = [(t["f_low"], "target")] if "f_low" in t else []
        h_f = inline_svg(histogram_svg(figs.mc.f_low, unit="Hz", scale=1.0, axis_label="−3 dB low corner (Hz)",
                                       lines=f_lines, nominal=float(fig.f_low), shown_unit="Hz"),
                         "hf", "histogram of the corner")
        frac = figs.mc_fraction
        frac_text = ""
        if frac:
            rows = "".join(f"<tr><td>{e(share_name(k, design))}</td><td class='num'>{v * 100:.1f} %</td></tr>"
                           for k, v in frac.items() if k != "all")
            all_row = (f"<tr><th>all of them at once</th><th class='num'>{frac['all'] * 100:.1f} %</th></tr>"
                       if "all" in frac else "")
            frac_text = ("<table class='narrow'><thead><tr><th>builds that meet</th><th class='num'>share</th></tr>"
                         f"</thead><tbody>{rows}{all_row}</tbody></table>")
        hist = (f"<section><div class='keep lead'><h2>Spread over {figs.mc_runs} random builds</h2>"
                "<p class='note'>Each build draws every resistor and capacitor uniformly within its tolerance, hFE "
                "log-uniformly over its range and the ambient uniformly over "
                f"{design.conditions.ambient_min:g} to {design.conditions.ambient_max:g} °C (seed {figs.seed}). "
                "Solid line: the nominal stage; dashed: targets.</p>"
                f"{frac_text}</div><div class='pair'><figure>{h_ie}<figcaption><span class='figno'>Figure 4.</span> Emitter current IE over "
                f"the builds.</figcaption></figure><figure>{h_f}<figcaption><span class='figno'>Figure 5.</span> Whole-stage −3 dB low "
                "corner over the builds.</figcaption></figure></div></section>")

    checks = [c for c in figs.checks if c.kind != "advice" and not c.instruction]
    failed = [c for c in checks if c.ok is False]
    name = topology_module(stage.topology).TITLE
    title = f"{stage.polarity.upper()} {name}, {format_si(stage.supply, 'V', 3)} supply"
    if getattr(design.spec, "title", ""):
        title = f"{design.spec.title}: {title}"
    if failed:
        verdict = ("<div class='verdict bad'><strong>Not ready to build:</strong> "
                   + e("; ".join(c.name for c in failed)) + " — see the checks below.</div>")
    else:
        verdict = ("<div class='verdict'><strong>Every check is met</strong>, at the worst case over tolerances, "
                   "the hFE range and the ambient range.</div>")
    src = ", ".join(x for x in (
        f"source resistance {format_si(stage.source_resistance, 'ohm', 3)}" if stage.source_resistance else
        "ideal source", f"load {format_si(stage.load, 'ohm', 3)}" if stage.load else "no load") if x)
    stock_bits = []
    if design.stock_file:
        stock_bits.append(f"parts from <code title=\"{e(design.stock_file)}\">{e(Path(design.stock_file).name)}</code>")
    if stock_note:
        stock_bits.append(e(stock_note))
    units = (f"{design.units} unit{'s' if design.units != 1 else ''}" if design.is_design or design.units > 1
             else "single stage")
    summary = "".join(f"<tr><td>{e(a)}</td><td class='num'>{b}</td><td class='num'>{c}</td>"
                      f"<td class='num'>{d}</td></tr>"
                      for a, b, c, d in summary_rows(fig, worst, design, figs.lowest_f_low))
    cautions = "".join(f"<li>{e(c)}</li>" for c in figs.cautions)
    notes = "".join(f"<p class='note'>Note: {e(n)}</p>" for n in getattr(design.spec, "notes", ()))
    advice = advice_list([c for c in figs.checks if c.kind == "advice"])
    vname = "VEC" if stage.polarity == "pnp" else "VCE"
    on_step(note="writing")
    doc = f"""{page_head(title, design.path, src, units, stock_bits, notes)}
{verdict}
<section class="cautions keep"><h2>Before you build</h2><ul>{cautions}</ul></section>
<section class="keep"><h2>Schematic</h2>
<figure class="schematic">{schem}<figcaption><span class="figno">Figure 1.</span> Schematic: every part with its designator and value (IEC 60062 letter code).{e(_several(members, stage))} Electrolytics are drawn with their + end where the DC voltage puts it. Supply {e(format_si(stage.supply, 'V', 3))}, single rail.</figcaption></figure>
</section>
<section><h2>Fitting the parts</h2>
{fitting_list(design, figs, members)}
</section>
<section><div class="keep lead"><h2>Checks</h2>
<p class="note">Each figure is judged at its worst case over part tolerances, the hFE range ({stage.transistor.hfe_min:g} to {stage.transistor.hfe_max:g}) and the ambient range ({design.conditions.ambient_min:g} to {design.conditions.ambient_max:g} °C); the margin is the distance to the limit as a share of the limit (positive: room left). The Q1 state row gives {vname}: nominal, its lowest over the box, and the saturation voltage it must stay above.</p></div>
{checks_table(checks)}
{advice}
</section>
<section><h2>Parts</h2>
{parts_table(design, figs, members)}
</section>
<section class="keep"><h2>Pick list</h2>
{pick_table(design)}
</section>
<section><div class="keep lead"><h2>Operating point and figures</h2>
<table><thead><tr><th>figure</th><th class="num">nominal</th><th class="num">lowest</th><th class="num">highest</th></tr></thead>
<tbody>{summary}</tbody></table></div>
<p class="note">Node voltages are to ground. Lowest and highest are taken over the corners of the tolerance, hFE and ambient box. Gain is signed: negative means the output is inverted.</p>
<p><strong>Bench check:</strong> with the supply on and no signal, measure VB, VE and VC to ground; a stage built from these parts should read between the lowest and highest values above. A reading outside them points at a wrong part, a part fitted the wrong way round, or a transistor outside its stated hFE range.</p>
</section>
<section class="keep plots"><h2>Magnitude response</h2>
<figure class="plot"><div class="beside">{resp}<aside class="limit"><strong>Upper corner not modelled.</strong> The transistor model has no junction, base or wiring capacitance, so this curve stays flat at high frequencies. A real stage rolls off somewhere above the audio band: measure it there if that matters.</aside></div><figcaption><span class="figno">Figure 2.</span> Gain from the source to the load in dB over frequency, every coupling and bypass capacitor included, nominal parts. Dotted: 3 dB below mid-band; dashed: the target corner.</figcaption></figure>
</section>
<section class="keep plots"><h2>Load lines</h2>
<figure class="plot">{lines}<figcaption><span class="figno">Figure 3.</span> Collector current IC against {vname}. The DC line holds for the bias; the AC line, through the quiescent point Q, is the path the signal takes with the load connected. The green band is the largest swing the stage takes the same distance both ways before it saturates or cuts off.</figcaption></figure>
</section>
{hist}
<footer>Made by drawerfit {e(__version__)}. Model: Ebers-Moll transistor (no Early effect, no base resistance, no junction capacitance), VBE {format_si(stage.transistor.vbe, 'V', 3)} at 25 °C drifting {stage.transistor.vbe_tempco * 1e3:g} mV/°C; the high-frequency end is not modelled. Figures are estimates to check on the bench.</footer>
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
    from ..io.files import atomic_write, check_output

    out = check_output(out_path, design_inputs(design_toml_path, stock_file), "report")
    on_step(note="reading the design")
    design, note = read_design(design_toml_path, stock_file)
    text = render_report(design, monte_carlo=monte_carlo, seed=seed, stock_note=note, on_step=on_step)
    atomic_write(out, text)


def page_head(title: str, design_path, src: str, units: str, bits, notes: str) -> str:
    """The report page up to the end of its header: document head, style, title line and notes
    (``notes`` already HTML); shared by the single-stage and the two-stage pages."""
    from .. import __version__
    from .style import REPORT_CSS

    e = html.escape
    extra = " · " + " · ".join(bits) if bits else ""
    return f"""<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8">
<meta name="generator" content="drawerfit {e(__version__)}">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>{e(title)} — drawerfit report</title>
<style>{REPORT_CSS}</style></head>
<body>
<header>
<h1>{e(title)}</h1>
<p class="sub">{e(Path(design_path).name)} · {e(src)} · {e(units)}{extra}</p>
{notes}</header>"""

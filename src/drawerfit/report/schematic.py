"""The stage's schematic as SVG text, drawn with schemdraw: designators and chosen values.

Both topologies and both polarities; parts that are absent (RE2, CE, source resistance, load)
are not drawn.  The emitter side points at its rail (down for NPN, up for PNP).  Polarized
capacitors are drawn with their + end where the DC voltage puts it.
"""

from __future__ import annotations

import re
from typing import Mapping

from ..values import format_code, format_si

__all__ = ["schematic_svg", "value_label"]

_LEAD = 0.8  # schemdraw units: wire between the transistor and an output tap


def _safe(text: str) -> str:
    """User text (a transistor label) made safe for schemdraw's SVG: XML-escaped, on one line,
    with '$' (schemdraw's math-mode marker) replaced by a look-alike.
    """
    import html

    return html.escape(" ".join(str(text).split()), quote=False).replace("$", "\uff04")


def value_label(role: str, value: float) -> str:
    """The value as printed beside a part: the IEC 60062 letter code (4k7, 830R, 22µ, 4n7)."""
    return format_code(value, "ohm" if role.startswith("R") else "F")


def schematic_svg(design, nominal, *, labels: Mapping[str, str] | None = None) -> str:
    """SVG text of the stage.  ``nominal`` (core Figures) gives the capacitor polarities.

    ``labels`` may override the value text per role (e.g. '830 = 680 + 150').
    """
    import schemdraw
    import schemdraw.elements as elm

    stage = design.stage
    npn = stage.polarity == "npn"
    ce = stage.topology == "common-emitter"
    parts = stage.parts
    labels = dict(labels or {})

    def text(role: str) -> str:
        return f"{role}\n{_safe(labels.get(role) or value_label(role, parts[role].value))}"

    e_dir = -1.0 if npn else 1.0  # the emitter side points at this rail
    stack_e = (3.0 + (3.0 if "RE2" in parts else 0.0)) if ce else _LEAD + 3.0
    stack_c = _LEAD + 3.0 if ce else 1.5
    y_e = 0.7 + stack_e
    y_c = 0.7 + stack_c
    ytop, ybot = (y_c, -y_e) if npn else (y_e, -y_c)
    ytop, ybot = max(ytop, 3.6), min(ybot, -3.6)
    rail_e, rail_c = (ybot, ytop) if npn else (ytop, ybot)

    d = schemdraw.Drawing(canvas="svg", show=False)
    d.config(fontsize=11, lw=1.4, font="sans-serif")  # this drawing only: no global settings
    xq = 0.7516666666666666  # collector/emitter x of schemdraw's BJT with base at (0, 0)
    q = elm.BjtNpn(circle=True) if npn else elm.BjtPnp(circle=True)
    d += q.at((0, 0)).anchor("base").label(f"Q1\n{_safe(stage.transistor.label) or stage.polarity.upper()}",
                                            loc="right", ofst=(0.35, 0))
    top_pin, bottom_pin = (q.collector, q.emitter) if npn else (q.emitter, q.collector)
    e_pin, c_pin = (q.emitter, q.collector)

    # Divider and input.
    xd = -2.5
    d += elm.Line().at((xd, 0)).to((0, 0))
    d += elm.Dot().at((xd, 0))
    d += elm.Resistor().at((xd, 0)).to((xd, ytop)).label(text("R1"), loc="bottom", ofst=0.25)
    d += elm.Resistor().at((xd, 0)).to((xd, ybot)).label(text("R2"), loc="top", ofst=0.25)
    c1_plus_at_base = float(nominal.v_c1) >= 0
    x_in = -6.5
    c1 = elm.Capacitor(polar=parts["C1"].polarized)
    if c1_plus_at_base:
        c1 = c1.at((xd, 0)).to((x_in, 0))
    else:
        c1 = c1.at((x_in, 0)).to((xd, 0))
    d += c1.label(text("C1"), loc="bottom" if c1_plus_at_base else "top", ofst=0.3)
    d += elm.Dot(open=True).at((x_in, 0)).label("in", loc="bottom", ofst=0.2)
    x_src = x_in - 4.0
    if stage.source_resistance > 0:
        d += elm.Resistor().at((x_src, 0)).to((x_in, 0)).label(
            f"RS\n{format_code(stage.source_resistance, 'ohm')}", loc="top", ofst=0.2)
    else:
        d += elm.Line().at((x_src, 0)).to((x_in, 0))
    d += elm.SourceSin().at((x_src, ybot)).to((x_src, 0)).label("signal\nsource", loc="top", ofst=0.3)

    # Emitter side.
    e_start = (xq, e_pin[1])
    if ce:
        n_y = e_pin[1] + e_dir * 3.0
        end_re = (xq, n_y if "RE2" in parts else rail_e)
        d += elm.Resistor().at(e_start).to(end_re).label(text("RE"), loc="bottom", ofst=0.25)
        if "RE2" in parts:
            d += elm.Dot().at((xq, n_y))
            d += elm.Resistor().at((xq, n_y)).to((xq, rail_e)).label(text("RE2"), loc="top", ofst=0.25)
            if stage.bypassed:
                xce = xq + 2.2
                d += elm.Line().at((xq, n_y)).to((xce, n_y))
                ce_plus_at_n = float(nominal.v_ce) >= 0
                cap = elm.Capacitor(polar=parts["CE"].polarized)
                cap = cap.at((xce, n_y)).to((xce, rail_e)) if ce_plus_at_n else cap.at((xce, rail_e)).to((xce, n_y))
                d += cap.label(text("CE"), loc="bottom" if (ce_plus_at_n == npn) else "top", ofst=0.25)
                d += elm.Dot().at((xce, rail_e))
        tap_y = c_pin[1] - e_dir * _LEAD
        d += elm.Line().at((xq, c_pin[1])).to((xq, tap_y))
        d += elm.Resistor().at((xq, tap_y)).to((xq, rail_c)).label(text("RC"), loc="top" if npn else "bottom",
                                                                   ofst=0.25)
    else:
        tap_y = e_pin[1] + e_dir * _LEAD
        d += elm.Line().at(e_start).to((xq, tap_y))
        d += elm.Resistor().at((xq, tap_y)).to((xq, rail_e)).label(text("RE"), loc="bottom" if npn else "top",
                                                                   ofst=0.25)
        d += elm.Line().at((xq, c_pin[1])).to((xq, rail_c))

    # Output.
    x_c2 = xq + (4.6 if ce and stage.bypassed else 1.2)
    x_out = x_c2 + 3.2
    d += elm.Dot().at((xq, tap_y))
    d += elm.Line().at((xq, tap_y)).to((x_c2, tap_y))
    c2_plus_at_stage = float(nominal.v_c2) >= 0
    c2 = elm.Capacitor(polar=parts["C2"].polarized)
    c2 = c2.at((x_out, tap_y)).to((x_c2, tap_y)) if not c2_plus_at_stage else c2.at((x_c2, tap_y)).to((x_out, tap_y))
    d += c2.label(text("C2"), loc="top" if c2_plus_at_stage else "bottom", ofst=0.3)
    d += elm.Dot(open=True).at((x_out, tap_y)).label("out", loc="top", ofst=0.2)
    x_right = x_out
    if stage.load is not None:
        x_rl = x_out + 1.6
        d += elm.Line().at((x_out, tap_y)).to((x_rl, tap_y))
        d += elm.Resistor().at((x_rl, tap_y)).to((x_rl, ybot)).label(
            f"RL (load)\n{format_code(stage.load, 'ohm')}", loc="bottom", ofst=0.25)
        x_right = x_rl

    # Rails.
    d += elm.Line().at((x_src, ytop)).to((x_right, ytop)).color("#7a1f1f")
    d += elm.Label().at((x_src, ytop + 0.55)).label(f"+{format_si(stage.supply, 'V', 3)} supply", loc="center",
                                                    halign="left")
    d += elm.Line().at((x_src, ybot)).to((x_right, ybot))
    d += elm.Ground().at(((x_src + x_right) / 2, ybot))
    for x in (xd, xq, x_src):
        d += elm.Dot().at((x, ytop if x != x_src else ybot))
    d += elm.Dot().at((xd, ybot))
    if stage.load is not None:
        d += elm.Dot().at((x_right, ybot))
    if ce and "RE2" not in parts or not ce:
        d += elm.Dot().at((xq, rail_e))
    d += elm.Dot().at((xq, rail_c))
    svg = d.get_imagedata("svg").decode("utf-8")
    # schemdraw writes its own font name; let the browser use the page's system font stack.
    return re.sub(r'font-family="[^"]*"', 'font-family="system-ui, sans-serif"', svg)

"""The two-stage amplifier's schematic as SVG text, drawn with schemdraw.

Stage 1 (Q1, common emitter) on the left, the follower (Q2) on the right, joined by C2 and its
divider R3/R4 or by a wire (direct coupling); both polarities, the PNP one mirrored (emitter
side up).  Each role is one element with its designator and value; a role made of several parts
is marked so, its parts listed in the report's parts table.  Polarized capacitors are drawn with
their + end where the DC voltage puts it.  A role made of two or three parts in series or in
parallel is drawn as those parts, each with its own designator and value, and the role labelled with
what they make; a mixed network (series-parallel) is drawn as one element marked "(n parts)".
"""

from __future__ import annotations

import re

from ..parts import pin_order_text
from ..values import format_code, format_si

__all__ = ["two_stage_schematic_svg"]


# Where the branches of a role's parts go: the dividers away from their transistor (left), the
# emitter and collector resistors and CE to the right, the coupling capacitors upward.
_BRANCH_SIDE = {"R1": (-1.0, 0.0), "R2": (-1.0, 0.0), "R3": (-1.0, 0.0), "R4": (-1.0, 0.0), "RC": (1.0, 0.0),
                "RE": (1.0, 0.0), "RE2": (1.0, 0.0), "CE": (1.0, 0.0), "RE3": (1.0, 0.0), "C1": (0.0, 1.0),
                "C2": (0.0, 1.0), "C3": (0.0, 1.0)}


def _safe(text: str) -> str:
    import html

    return html.escape(" ".join(str(text).split()), quote=False).replace("$", "\uff04")


def two_stage_schematic_svg(design, nominal) -> str:
    """SVG text of the amplifier; ``nominal`` (``CascadeFigures``) gives the capacitor polarities."""
    import schemdraw
    import schemdraw.elements as elm

    from .export import role_members

    amp = design.stage
    parts = amp.parts
    npn = amp.polarity == "npn"
    members = {r: m for r, m in role_members(design).items() if len(m) > 1}
    drawn = {r: m for r, m in members.items() if m[0].arrangement in ("series", "parallel")}
    several = {r: len(m) for r, m in members.items() if r not in drawn}

    def text(role: str) -> str:
        unit = "ohm" if role.startswith("R") else "F"
        extra = f"\n({several[role]} parts)" if role in several else ""
        return f"{role}\n{_safe(format_code(parts[role].value, unit))}{extra}"

    d = schemdraw.Drawing(canvas="svg", show=False)
    d.config(fontsize=11, lw=1.4, font="sans-serif")

    def label_at(xy, words: str, n, gap: float = 0.35) -> None:
        x, y = xy[0] + gap * n[0], xy[1] + gap * n[1]
        halign = "left" if n[0] > 0.5 else "right" if n[0] < -0.5 else "center"
        valign = "bottom" if n[1] > 0.5 else "top" if n[1] < -0.5 else "center"
        d.add(elm.Label().at((x, y)).label(words, loc="center", halign=halign, valign=valign))

    def element(role):
        return elm.Resistor() if role.startswith("R") else elm.Capacitor(polar=parts[role].polarized)

    def network(role, a, b, side) -> None:
        """The parts of a series or parallel role from ``a`` to ``b``, branches toward ``side``."""
        unit = "ohm" if role.startswith("R") else "F"
        ux, uy = b[0] - a[0], b[1] - a[1]
        span = (ux * ux + uy * uy) ** 0.5
        u = (ux / span, uy / span)

        def at(p, along=0.0, beside=0.0):
            return (p[0] + along * u[0] + beside * side[0], p[1] + along * u[1] + beside * side[1])

        ms = drawn[role]
        if ms[0].arrangement == "series":
            step = span / len(ms)
            for k, m in enumerate(ms):
                p0, p1 = at(a, k * step), at(a, (k + 1) * step)
                d.add(element(role).at(p0).to(p1))
                label_at(at(p0, step / 2), f"{m.designator}\n{_safe(format_code(m.value, unit))}", side)
        else:
            a2, b2 = at(a, 0.6), at(b, -0.6)
            d.add(elm.Line().at(a).to(a2))
            d.add(elm.Line().at(b2).to(b))
            for k, m in enumerate(ms):
                if k:
                    d.add(elm.Line().at(at(a2, 0, (k - 1) * 1.8)).to(at(a2, 0, k * 1.8)))
                    d.add(elm.Line().at(at(b2, 0, (k - 1) * 1.8)).to(at(b2, 0, k * 1.8)))
                if k < len(ms) - 1:
                    d.add(elm.Dot().at(at(a2, 0, k * 1.8)))
                    d.add(elm.Dot().at(at(b2, 0, k * 1.8)))
                p0, p1 = at(a2, 0, k * 1.8), at(b2, 0, k * 1.8)
                d.add(element(role).at(p0).to(p1))
                label_at(at(p0, (span - 1.2) / 2, 0.1), f"{m.designator}\n{_safe(format_code(m.value, unit))}",
                         side)
        middle = ((a[0] + b[0]) / 2, (a[1] + b[1]) / 2)
        label_at(middle, f"{role} = {_safe(format_code(parts[role].value, unit))}", (-side[0], -side[1]), gap=0.55)

    def res(role, a, b, loc):
        if role in drawn:
            network(role, a, b, _BRANCH_SIDE[role])
            return
        d.add(elm.Resistor().at(a).to(b).label(text(role), loc=loc, ofst=0.25))

    def cap(role, near, far, loc, volts):
        # + end toward the higher DC voltage: the stage-side end ``near`` when ``volts`` >= 0
        a, b = (near, far) if volts >= 0 else (far, near)
        if role in drawn:
            network(role, a, b, _BRANCH_SIDE[role])
            return
        d.add(element(role).at(a).to(b).label(text(role), loc=loc, ofst=0.3))

    e_dir = -1.0 if npn else 1.0  # the emitter side points at this rail
    xq = 0.7516666666666666  # collector/emitter x of schemdraw's BJT with its base at (0, 0)
    bjt = elm.BjtNpn if npn else elm.BjtPnp

    # Q1 and its emitter stack
    q1 = bjt(circle=True).at((0, 0)).anchor("base")
    d += q1.label(f"Q1\n{_safe(amp.q1.label) or amp.polarity.upper()}"
                  + (f"\npins {pin_order_text(amp.q1.pins)}" if amp.q1.pins else ""), loc="right", ofst=(0.35, 0))
    e1_y, c1_y = q1.emitter[1], q1.collector[1]
    has_re2 = "RE2" in parts
    rail_e = e1_y + e_dir * (3.0 + (3.0 if has_re2 else 0.0) + 0.2)
    tap1 = c1_y - e_dir * 0.8  # collector 1's node
    rail_c = tap1 - e_dir * 3.2
    ytop, ybot = (rail_c, rail_e) if npn else (rail_e, rail_c)
    ytop, ybot = max(ytop, 4.0), min(ybot, -4.0)
    rail_e, rail_c = (ybot, ytop) if npn else (ytop, ybot)

    n1 = e1_y + e_dir * 3.0
    res("RE", (xq, e1_y), (xq, n1 if has_re2 else rail_e), "bottom")
    if has_re2:
        d += elm.Dot().at((xq, n1))
        res("RE2", (xq, n1), (xq, rail_e), "top")
        if amp.bypassed:
            xce = xq + 2.4 + (1.8 * (len(drawn["RE2"]) - 1) + 1.2 if "RE2" in drawn else 0.0)
            d += elm.Line().at((xq, n1)).to((xce, n1))
            cap("CE", (xce, n1), (xce, rail_e), "bottom", float(nominal.v_ce) * (1 if npn else -1))
            d += elm.Dot().at((xce, rail_e))
    d += elm.Line().at((xq, c1_y)).to((xq, tap1))
    res("RC", (xq, tap1), (xq, rail_c), "top" if npn else "bottom")

    # divider, input and source
    xd = -2.5
    d += elm.Line().at((xd, 0)).to((0, 0))
    d += elm.Dot().at((xd, 0))
    res("R1", (xd, 0), (xd, ytop), "bottom")
    res("R2", (xd, 0), (xd, ybot), "top")
    x_in = xd - 4.0
    cap("C1", (xd, 0), (x_in, 0), "top", float(nominal.v_c1))
    d += elm.Dot(open=True).at((x_in, 0)).label("in", loc="bottom", ofst=0.2)
    x_src = x_in - 4.0
    if amp.source_resistance > 0:
        d += elm.Resistor().at((x_src, 0)).to((x_in, 0)).label(
            f"RS\n{format_code(amp.source_resistance, 'ohm')}", loc="top", ofst=0.2)
    else:
        d += elm.Line().at((x_src, 0)).to((x_in, 0))
    d += elm.SourceSin().at((x_src, ybot)).to((x_src, 0)).label("signal\nsource", loc="top", ofst=0.3)

    # the coupling to Q2's base
    d += elm.Dot().at((xq, tap1))
    x_stage = xq + (5.0 if amp.bypassed else 2.5)
    if amp.coupling == "capacitor":
        d += elm.Line().at((xq, tap1)).to((x_stage, tap1))
        xb2 = x_stage + 3.5
        cap("C2", (x_stage, tap1), (xb2, tap1), "top" if npn else "bottom", float(nominal.v_c2))
        d += elm.Dot().at((xb2, tap1))
        xr = xb2 + 0.0
        res("R3", (xr, tap1), (xr, ytop), "bottom" if npn else "top")
        res("R4", (xr, tap1), (xr, ybot), "top" if npn else "bottom")
        d += elm.Dot().at((xr, ytop))
        d += elm.Dot().at((xr, ybot))
        xbase2 = xb2 + 2.0
        d += elm.Line().at((xb2, tap1)).to((xbase2, tap1))
    else:
        xbase2 = x_stage + 1.5
        d += elm.Line().at((xq, tap1)).to((xbase2, tap1))

    # Q2, the follower
    q2 = bjt(circle=True).at((xbase2, tap1)).anchor("base")
    d += q2.label(f"Q2\n{_safe(amp.q2.label) or amp.polarity.upper()}"
                  + (f"\npins {pin_order_text(amp.q2.pins)}" if amp.q2.pins else ""), loc="right", ofst=(0.35, 0))
    xq2 = q2.emitter[0]
    e2_y, c2_y = q2.emitter[1], q2.collector[1]
    d += elm.Line().at((xq2, c2_y)).to((xq2, rail_c))
    d += elm.Dot().at((xq2, rail_c))
    tap2 = e2_y + e_dir * 0.8
    d += elm.Line().at((xq2, e2_y)).to((xq2, tap2))
    res("RE3", (xq2, tap2), (xq2, rail_e), "bottom" if npn else "top")
    d += elm.Dot().at((xq2, rail_e))
    d += elm.Dot().at((xq2, tap2))
    x_c3 = xq2 + 2.6
    d += elm.Line().at((xq2, tap2)).to((x_c3, tap2))
    x_out = x_c3 + 3.5
    cap("C3", (x_c3, tap2), (x_out, tap2), "top" if npn else "bottom", float(nominal.v_c3))
    d += elm.Dot(open=True).at((x_out, tap2)).label("out", loc="top", ofst=0.2)
    x_right = x_out
    if amp.load is not None:
        x_rl = x_out + 1.6
        d += elm.Line().at((x_out, tap2)).to((x_rl, tap2))
        d += elm.Resistor().at((x_rl, tap2)).to((x_rl, ybot)).label(
            f"RL (load)\n{format_code(amp.load, 'ohm')}", loc="bottom", ofst=0.25)
        x_right = x_rl
        d += elm.Dot().at((x_right, ybot))

    # rails
    d += elm.Line().at((x_src, ytop)).to((x_right, ytop)).color("#7a1f1f")
    d += elm.Label().at((x_src, ytop + 0.55)).label(f"+{format_si(amp.supply, 'V', 3)} supply", loc="center",
                                                    halign="left")
    d += elm.Line().at((x_src, ybot)).to((x_right, ybot))
    d += elm.Ground().at(((x_src + x_right) / 2, ybot))
    for x, y in ((xd, ytop), (xd, ybot), (xq, rail_c), (x_src, ybot)):
        d += elm.Dot().at((x, y))
    if not has_re2:
        d += elm.Dot().at((xq, rail_e))
    svg = d.get_imagedata("svg").decode("utf-8")
    return re.sub(r'font-family="[^"]*"', 'font-family="system-ui, sans-serif"', svg)

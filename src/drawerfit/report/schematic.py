"""The stage's schematic as SVG text, drawn with schemdraw: designators and chosen values.

Both topologies and both polarities; parts that are absent (RE2, CE, source resistance, load)
are not drawn.  The emitter side points at its rail (down for NPN, up for PNP).  Polarized
capacitors are drawn with their + end where the DC voltage puts it.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from typing import Any, Callable, Mapping, Sequence

from ..parts import pin_order_text
from ..stages.topologies import topology_module
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


# Geometry of a role made of several parts (schemdraw units): a part in a series chain, the
# distance between parallel branches, and the wire before a parallel group splits.
_PART = 2.0
_BRANCH = 1.8
_INSET = 0.6
_LABEL_ROOM = 1.3  # beside the outermost branch, for its "R1a / 4k7" label
_ROLE_ROOM = 1.9  # on the other side, for the "CE = 220µ" label of the whole role


def _network(arrangement: str, members: list) -> list:
    """The parts as parallel branches of series items (an item: a part, or a nested group):
    a ∥ b is [[a], [b]]; a + b is [[a, b]]; a + (b ∥ c) is [[a, [[b], [c]]]]; a ∥ (b + c) is
    [[a], [b, c]]."""
    if arrangement == "series-parallel":
        a, b, c = members
        return [[a, [[b], [c]]]]
    if arrangement == "parallel-series":
        a, b, c = members
        return [[a], [b, c]]
    if arrangement == "parallel":
        return [[m] for m in members]
    return [list(members)]


def _length(group: list) -> float:
    """Length a group needs along its axis."""
    need = max(sum(_PART if not isinstance(i, list) else _length(i) for i in branch) for branch in group)
    return need + (2 * _INSET if len(group) > 1 else 0.0)


def _width(group: list) -> float:
    """How far a group reaches beside its axis (its branches, not their labels)."""
    return max(j * _BRANCH + max([_width(i) for i in branch if isinstance(i, list)], default=0.0)
               for j, branch in enumerate(group))


def _footprint(members) -> tuple[float, float]:
    """(length, width beside the axis, labels included) of a role's parts; (0, 0) for one part."""
    if len(members) < 2:
        return 0.0, 0.0
    group = _network(members[0].arrangement, list(members))
    return _length(group) + 0.4, _width(group) + _LABEL_ROOM


@dataclass(frozen=True)
class Sketch:
    """What a circuit module's ``draw_sides`` draws the transistor's emitter and collector sides
    with: the drawing's own functions (so the circuit modules need no schemdraw), the stage, the
    transistor's pins and rails (schemdraw units), and the parts' sizes."""

    place: Callable  # place(role, start, end, n, *, single_loc, ofst, plus_at_start, polar)
    line: Callable  # line(a, b): a wire
    dot: Callable  # dot(p): a junction
    stage: Any
    nominal: Any  # core Figures: the capacitor polarities
    members: Mapping[str, Sequence]  # the roles drawn as several parts
    width: Mapping[str, float]  # how far each role reaches beside its axis
    span: Mapping[str, float]  # the length each role is drawn with (at least 3, more for several parts)
    npn: bool
    e_dir: float  # the emitter side points this way (-1 down, +1 up)
    xq: float  # the collector and emitter x
    e_y: float  # the emitter pin's y
    c_y: float  # the collector pin's y
    rail_e: float  # the y of the emitter's rail
    rail_c: float  # the y of the collector's rail
    lead: float = _LEAD
    role_room: float = _ROLE_ROOM


def schematic_svg(design, nominal, *, members: Mapping[str, Sequence] | None = None) -> str:
    """SVG text of the stage.  ``nominal`` (core Figures) gives the capacitor polarities.

    ``members`` (``physical.members_of`` per role) draws a role made of several parts as those
    parts, each with its own designator and value, wired as the arrangement says.
    """
    import schemdraw
    import schemdraw.elements as elm

    stage = design.stage
    npn = stage.polarity == "npn"
    # the circuit draws its emitter and collector sides and says how tall they are (its module's
    # ``schematic_heights`` and ``draw_sides``); the divider, input, output and rails are shared
    circuit = topology_module(stage.topology)
    parts = stage.parts
    members = {r: list(m) for r, m in (members or {}).items() if len(m) > 1 and r in parts}
    length = {r: _footprint(members.get(r, ()))[0] for r in parts}
    width = {r: _footprint(members.get(r, ()))[1] for r in parts}

    def text(role: str) -> str:
        return f"{role}\n{_safe(value_label(role, parts[role].value))}"

    d = schemdraw.Drawing(canvas="svg", show=False)
    d.config(fontsize=11, lw=1.4, font="sans-serif")  # this drawing only: no global settings

    def label_at(xy, words: str, n, gap: float = 0.35) -> None:
        """Text beside a point, on the side ``n`` points to, aligned away from the part."""
        x, y = xy[0] + gap * n[0], xy[1] + gap * n[1]
        halign = "left" if n[0] > 0.5 else "right" if n[0] < -0.5 else "center"
        valign = "bottom" if n[1] > 0.5 else "top" if n[1] < -0.5 else "center"
        d.add(elm.Label().at((x, y)).label(words, loc="center", halign=halign, valign=valign))

    def place(role: str, start, end, n, *, single_loc: str, ofst: float = 0.25, plus_at_start: bool = True,
              polar: bool = False):
        """Draw a role between ``start`` and ``end``: one part with its label at ``single_loc``, or
        its parts (branches toward ``n``), each labelled with its designator and value."""
        unit = "ohm" if role.startswith("R") else "F"

        def part(a, b, plus_first: bool):
            e = elm.Resistor() if unit == "ohm" else elm.Capacitor(polar=polar)
            return e.at(a).to(b) if plus_first else e.at(b).to(a)

        if role not in members:
            d.add(part(start, end, plus_at_start).label(text(role), loc=single_loc, ofst=ofst))
            return
        ux, uy = end[0] - start[0], end[1] - start[1]
        span = (ux * ux + uy * uy) ** 0.5
        u = (ux / span, uy / span)

        def at(p, along=0.0, beside=0.0):
            return (p[0] + along * u[0] + beside * n[0], p[1] + along * u[1] + beside * n[1])

        def group(g, a, b):
            if len(g) == 1:
                branch(g[0], a, b)
                return
            a2, b2 = at(a, _INSET), at(b, -_INSET)
            d.add(elm.Line().at(a).to(a2))
            d.add(elm.Line().at(b2).to(b))
            for j, br in enumerate(g):
                if j:
                    d.add(elm.Line().at(at(a2, 0, (j - 1) * _BRANCH)).to(at(a2, 0, j * _BRANCH)))
                    d.add(elm.Line().at(at(b2, 0, (j - 1) * _BRANCH)).to(at(b2, 0, j * _BRANCH)))
                if j < len(g) - 1:
                    d.add(elm.Dot().at(at(a2, 0, j * _BRANCH)))
                    d.add(elm.Dot().at(at(b2, 0, j * _BRANCH)))
                branch(br, at(a2, 0, j * _BRANCH), at(b2, 0, j * _BRANCH))

        def branch(items, a, b):
            need = [(_PART if not isinstance(i, list) else _length(i)) for i in items]
            room = ((b[0] - a[0]) ** 2 + (b[1] - a[1]) ** 2) ** 0.5
            cursor = a
            for item, k in zip(items, need):
                nxt = at(cursor, k * room / sum(need))
                if isinstance(item, list):
                    group(item, cursor, nxt)
                else:
                    d.add(part(cursor, nxt, plus_at_start))
                    mid = ((cursor[0] + nxt[0]) / 2, (cursor[1] + nxt[1]) / 2)
                    label_at(at(mid, 0, 0.1), f"{item.designator}\n{_safe(value_label(role, item.value))}", n)
                cursor = nxt

        group(_network(members[role][0].arrangement, members[role]), start, end)
        middle = ((start[0] + end[0]) / 2, (start[1] + end[1]) / 2)
        label_at(middle, f"{role} = {_safe(value_label(role, parts[role].value))}", (-n[0], -n[1]), gap=0.55)

    e_dir = -1.0 if npn else 1.0  # the emitter side points at this rail
    left, up = (-1.0, 0.0), (0.0, 1.0)
    span = {r: max(3.0, length.get(r, 0.0)) for r in parts}
    stack_e, stack_c = circuit.schematic_heights(parts, span, _LEAD)
    y_e = 0.7 + stack_e
    y_c = 0.7 + stack_c
    ytop, ybot = (y_c, -y_e) if npn else (y_e, -y_c)
    ytop = max(ytop, 3.6, length["R1"] + 0.2)
    ybot = min(ybot, -3.6, -length["R2"] - 0.2)
    rail_e, rail_c = (ybot, ytop) if npn else (ytop, ybot)

    xq = 0.7516666666666666  # collector/emitter x of schemdraw's BJT with base at (0, 0)
    q = elm.BjtNpn(circle=True) if npn else elm.BjtPnp(circle=True)
    t = stage.transistor
    q_text = f"{stage.transistor_name}\n{_safe(t.label) or stage.polarity.upper()}" + (f"\npins {pin_order_text(t.pins)}" if t.pins else "")
    d += q.at((0, 0)).anchor("base").label(q_text, loc="right", ofst=(0.35, 0))
    e_pin, c_pin = (q.emitter, q.collector)

    # Divider and input; the parts of a divider role branch to the left, away from Q1.
    xd = -2.5
    d += elm.Line().at((xd, 0)).to((0, 0))
    d += elm.Dot().at((xd, 0))
    place("R1", (xd, 0), (xd, ytop), left, single_loc="bottom")
    place("R2", (xd, 0), (xd, ybot), left, single_loc="top")
    c1_plus_at_base = float(nominal.v_c1) >= 0
    x_c1 = xd - (max(width["R1"], width["R2"]) + 0.4 if width["R1"] or width["R2"] else 0.0)
    x_in = x_c1 - max(4.0, length["C1"])
    if x_c1 != xd:
        d += elm.Line().at((x_c1, 0)).to((xd, 0))
    place("C1", (x_c1, 0), (x_in, 0), up, single_loc="bottom" if c1_plus_at_base else "top", ofst=0.3,
          plus_at_start=c1_plus_at_base, polar=parts["C1"].polarized)
    d += elm.Dot(open=True).at((x_in, 0)).label("in", loc="bottom", ofst=0.2)
    x_src = x_in - 4.0
    if stage.source_resistance > 0:
        d += elm.Resistor().at((x_src, 0)).to((x_in, 0)).label(
            f"RS\n{format_code(stage.source_resistance, 'ohm')}", loc="top", ofst=0.2)
    else:
        d += elm.Line().at((x_src, 0)).to((x_in, 0))
    d += elm.SourceSin().at((x_src, ybot)).to((x_src, 0)).label("signal\nsource", loc="top", ofst=0.3)

    # Emitter and collector sides (the circuit's); the parts of their roles branch to the right.
    sketch = Sketch(place=place, line=lambda a, b: d.add(elm.Line().at(a).to(b)),
                    dot=lambda p: d.add(elm.Dot().at(p)), stage=stage, nominal=nominal, members=members,
                    width=width, span=span, npn=npn, e_dir=e_dir, xq=xq, e_y=e_pin[1], c_y=c_pin[1],
                    rail_e=rail_e, rail_c=rail_c)
    tap_y, x_c2, c2_side, reach, rail_e_dot = circuit.draw_sides(sketch)

    # Output.
    x_out = x_c2 + max(3.2, length["C2"])
    d += elm.Dot().at((xq, tap_y))
    d += elm.Line().at((xq, tap_y)).to((x_c2, tap_y))
    c2_plus_at_stage = float(nominal.v_c2) >= 0
    place("C2", (x_c2, tap_y), (x_out, tap_y), c2_side, single_loc="top" if c2_plus_at_stage else "bottom",
          ofst=0.3, plus_at_start=c2_plus_at_stage, polar=parts["C2"].polarized)
    d += elm.Dot(open=True).at((x_out, tap_y)).label("out", loc="top", ofst=0.2)
    x_right = x_out
    if stage.load is not None:
        x_rl = max(x_out + 1.6, xq + reach + 1.0)
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
    if rail_e_dot:
        d += elm.Dot().at((xq, rail_e))
    d += elm.Dot().at((xq, rail_c))
    svg = d.get_imagedata("svg").decode("utf-8")
    # schemdraw writes its own font name; let the browser use the page's system font stack.
    return re.sub(r'font-family="[^"]*"', 'font-family="system-ui, sans-serif"', svg)

"""SPICE netlist of a stage, for a circuit simulator (checks, and `export --netlist`).

The transistor is a generic Gummel-Poon model reduced to Ebers-Moll (no Early effect, no base
resistance, no junction capacitance) with BF = the nominal hFE and IS chosen so that the
simulator's VBE at the operating point equals the VBE this tool assumes.  Nominal part values;
source and load as in the stage.
"""

from __future__ import annotations

from typing import Mapping, Sequence

from ..constants import NOMINAL_TEMP_C
from ..stages import Stage, saturation_current_for, topology_module

__all__ = ["stage_netlist", "spice_value"]

_FALLBACK_IS = 1e-14  # A: used only when the stage is cut off and there is no operating point


# SPICE's own scale suffixes (note: 'm' is milli and 'meg' mega in SPICE)
_SPICE_SUFFIX = {-15: "f", -12: "p", -9: "n", -6: "u", -3: "m", 0: "", 3: "k", 6: "meg", 9: "g", 12: "t"}


def _num(x: float) -> str:
    return f"{x:.10g}"


def spice_value(x: float) -> str:
    """A part value as SPICE decks write it, to ten significant digits: 4.7e-6 -> '4.7u',
    51000 -> '51k', 1902.834008097166 -> '1.902834008k'."""
    from ..values import rounded

    if x == 0:
        return "0"
    d = rounded(x, 10)
    exp3 = max(-15, min(12, (d.adjusted() // 3) * 3))
    text = format(d.scaleb(-exp3).normalize(), "f")
    return text + _SPICE_SUFFIX[exp3]


def stage_netlist(stage: Stage, *, temp_c: float = NOMINAL_TEMP_C, control: str | None = None,
                  title: str | None = None, members: Mapping[str, Sequence] | None = None) -> str:
    """The stage as a SPICE deck: supply, AC source (1 V, DC 0) with its resistance, parts, load.

    Nodes: vcc, src (source EMF), in (after the source resistance), b, e, c, n (RE/RE2
    junction), out (load side of C2).  Each capacitor is written with its higher DC node first,
    so for an electrolytic the first node is the + end.  ``members`` (``physical.members_of`` per
    role) writes a role made of several parts as those parts, R1a, R1b, wired as its arrangement
    says, with nodes of its own inside (``r1_2``); without them, one element of the role's value.
    ``control`` is placed in a ``.control`` block when given (for batch runs); the deck always
    ends with ``.end``.
    """
    from ..analysis.core import evaluate_dc

    kw = stage.core_arguments()
    for key in ("c1", "c2", "ce"):
        kw.pop(key)
    dc = evaluate_dc(bypassed=stage.bypassed, temp_c=temp_c, **kw)
    ic, vbe = float(dc.ic), float(dc.vbe)
    t = stage.transistor
    if ic > 0:
        i_sat = saturation_current_for(ic, vbe, temp_c)
        tuning = f"IS tuned so VBE = {vbe:.6f} V at IC = {ic:.6e} A, {temp_c:g} °C (the tool's operating point)"
    else:
        i_sat = _FALLBACK_IS
        tuning = "stage is cut off in the tool's model: IS is a generic placeholder"
    model = "QGEN" + stage.polarity.upper()
    lines = [
        f"* {title or 'drawerfit stage'}: {stage.topology}, {stage.polarity.upper()}, {_num(stage.supply)} V supply",
        f"* transistor {t.label or '(unnamed)'}: generic model, BF = nominal hFE {t.hfe:.6g}; {tuning}",
        f".options TNOM={_num(temp_c)} TEMP={_num(temp_c)}",
        f"VCC vcc 0 DC {_num(stage.supply)}",
    ]
    if stage.source_resistance > 0:
        lines += ["VS src 0 DC 0 AC 1", f"RS src in {spice_value(stage.source_resistance)}"]
    else:
        lines += ["VS in 0 DC 0 AC 1"]
    circuit = topology_module(stage.topology)
    for name, plus, minus, role in circuit.elements(stage.polarity, stage.parts):
        if name in circuit.TRANSISTORS:
            lines.append(f"{name} {plus} {minus} {role} {model}")
        else:
            part = stage.parts[role]
            note = ""
            if role.startswith("C"):
                # The higher DC node first, so the first node is the + end of an electrolytic.
                stage_side = {"C1": "b", "C2": plus, "CE": "n"}[role]
                other = minus if plus == stage_side else plus
                higher = float(getattr(dc, "v_" + role.lower())) >= 0
                plus, minus = (stage_side, other) if higher else (other, stage_side)
                if part.polarized:
                    note = "  ; polarized: + end on the first node"
            parts = (members or {}).get(role) or ()
            if len(parts) > 1:
                # node 0 of the arrangement is the role's first node (the higher one for a capacitor),
                # so each part of a chain also has its higher end first
                nodes = {0: plus, 1: minus, 2: f"{role.lower()}_2", 3: f"{role.lower()}_3"}
                chain = role.startswith("C") and any(n >= 2 for m in parts for n in m.nodes)
                for m in parts:
                    a, b = m.nodes
                    lines.append(f"{m.designator} {nodes[a]} {nodes[b]} {spice_value(m.value)}{note}")
                    if chain:
                        # a node between capacitors has no DC path: a leak across each part stands
                        # in for the leakage (or balancing resistors) that sets it on the board
                        lines.append(f"RLK{m.designator} {nodes[a]} {nodes[b]} 1e12  ; leakage path, not a part")
            else:
                lines.append(f"{name} {plus} {minus} {spice_value(part.value)}{note}")
    if stage.load is not None:
        lines.append(f"RL out 0 {spice_value(stage.load)}")
    else:
        lines.append("RLEAK out 0 1e12  ; no load: a leak only, so the output node has a DC path")
    lines.append(f".model {model} {stage.polarity.upper()} (IS={i_sat:.8e} BF={t.hfe:.8g} BR=1)")
    if control:
        lines += [".control", control.rstrip(), ".endc"]
    lines.append(".end")
    return "\n".join(lines) + "\n"

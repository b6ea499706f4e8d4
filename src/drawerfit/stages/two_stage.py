"""The two-stage amplifier: a common-emitter stage driving an emitter follower, one supply.

Roles (docs/method.md, "Two-stage amplifier").  Stage 1 keeps the common-emitter roles: R1
supply→base1, R2 base1→ground, RC collector1 to its rail, RE emitter1→n1, RE2 n1→rail (absent:
RE goes to the rail), CE across RE2, C1 source→base1.  Stage 2 is the follower: RE3 emitter2→rail,
C3 emitter2→load.  Capacitor-coupled: C2 collector1→base2, R3 supply→base2, R4 base2→ground.
Direct-coupled: base2 is collector1 (no C2, R3, R4).  Transistors Q1 and Q2.  PNP mirror: every
emitter resistor (and CE) returns to the supply, RC and Q2's collector to ground.

No numpy here: the figures live in ``analysis.cascade``, which also tunes the netlist's
transistors to the operating point and calls ``netlist``.
"""

from __future__ import annotations

from dataclasses import dataclass
from types import MappingProxyType
from typing import Mapping

from .bjt import TransistorModel, saturation_current_for

__all__ = ["NAME", "COUPLINGS", "ROLES", "REQUIRED", "OPTIONAL", "TRANSISTORS", "TwoStage",
           "validate_roles", "elements", "netlist"]

NAME = "two-stage"
COUPLINGS = ("capacitor", "direct")
# every role, in the order specs and reports list them
ROLES = ("R1", "R2", "RC", "RE", "RE2", "CE", "C1", "C2", "R3", "R4", "RE3", "C3")
REQUIRED = {
    "capacitor": ("R1", "R2", "RC", "RE", "C1", "C2", "R3", "R4", "RE3", "C3"),
    "direct": ("R1", "R2", "RC", "RE", "C1", "RE3", "C3"),
}
OPTIONAL = ("RE2", "CE")
TRANSISTORS = ("Q1", "Q2")
OUTPUT_NODE = "e2"
# Where the rest of this circuit lives, for the shared code that serves it (topologies.assembly_hook;
# DEVELOPERS.md, "Adding a circuit", gives each one's call): imported only when called.
HOOKS = {
    "circuit_type": "drawerfit.stages.two_stage:TwoStage",
    "spec_type": "drawerfit.io.cascade_spec:CascadeSpec",
    "parse_spec": "drawerfit.io.cascade_spec:parse_cascade_spec",
    "analyse": "drawerfit.analysis.cascade_result:analyse_cascade",
    "hot_parts": "drawerfit.analysis.cascade_checks:cascade_hot_parts",
    "summary_lines": "drawerfit.commands.design_two_stage:cascade_summary_lines",
    "design": "drawerfit.search.cascade_result:design_two_stage",
    "design_command": "drawerfit.commands.design_two_stage:run_cascade_design",
    "netlist": "drawerfit.report.export_two_stage:two_stage_netlist",
    "report": "drawerfit.report.report_two_stage:render_two_stage_report",
}


def validate_roles(parts: Mapping[str, object], coupling: str) -> None:
    """StageError for a missing role, a role the coupling lacks, or CE without RE2."""
    from .base import StageError, check_roles

    if coupling not in COUPLINGS:
        raise StageError(f"coupling must be one of {', '.join(COUPLINGS)}, not {coupling!r}")
    check_roles(parts, REQUIRED[coupling], OPTIONAL, f"a {coupling}-coupled two-stage amplifier")
    if "CE" in parts and "RE2" not in parts:
        raise StageError("CE bypasses RE2, but there is no RE2")


def elements(polarity: str, parts: Mapping[str, object], coupling: str) -> list[tuple[str, str, str, str]]:
    """Circuit elements (designator, node +, node −, role) between named nodes; 'vcc' and '0' rails.

    Transistors are written (designator, collector, base, emitter).  Nodes: in, b1, e1, n1 (the
    RE/RE2 junction), c1, b2 (c1 itself when direct-coupled), e2, out.
    """
    rail_e, rail_c = ("0", "vcc") if polarity == "npn" else ("vcc", "0")
    has_re2 = "RE2" in parts
    b2 = "b2" if coupling == "capacitor" else "c1"
    out = [
        ("R1", "vcc", "b1", "R1"),
        ("R2", "b1", "0", "R2"),
        ("RC", rail_c, "c1", "RC"),
        ("RE", "e1", "n1" if has_re2 else rail_e, "RE"),
        ("C1", "in", "b1", "C1"),
        ("Q1", "c1", "b1", "e1"),
    ]
    if has_re2:
        out.append(("RE2", "n1", rail_e, "RE2"))
        if "CE" in parts:
            out.append(("CE", "n1", rail_e, "CE"))
    if coupling == "capacitor":
        out += [("C2", "c1", "b2", "C2"), ("R3", "vcc", "b2", "R3"), ("R4", "b2", "0", "R4")]
    out += [
        ("RE3", "e2", rail_e, "RE3"),
        ("C3", "e2", "out", "C3"),
        ("Q2", rail_c, b2, "e2"),
    ]
    return out


@dataclass(frozen=True)
class TwoStage:
    """A two-stage amplifier on a single positive supply (V); resistances in ohm.

    ``coupling`` is 'capacitor' or 'direct'; ``parts`` maps roles to ``base.Part``; ``q1`` drives
    the follower ``q2``.  ``load`` None means nothing at the output, ``source_resistance`` 0 an
    ideal source.
    """

    polarity: str
    supply: float
    coupling: str
    parts: Mapping[str, object]
    q1: TransistorModel
    q2: TransistorModel
    source_resistance: float = 0.0
    load: float | None = None

    def __post_init__(self) -> None:
        from .base import StageError, check_surroundings

        object.__setattr__(self, "parts", MappingProxyType(dict(self.parts)))
        check_surroundings(self.polarity, self.supply, self.source_resistance, self.load)
        for name, t in (("Q1", self.q1), ("Q2", self.q2)):
            if t.polarity != self.polarity:
                raise StageError(f"the amplifier is {self.polarity.upper()} but {name} is {t.polarity.upper()}")
        validate_roles(self.parts, self.coupling)

    @property
    def topology(self) -> str:
        return NAME

    @property
    def bypassed(self) -> bool:
        return "CE" in self.parts and "RE2" in self.parts

    @property
    def transistors(self) -> dict[str, TransistorModel]:
        """Q1 and Q2 by designator, in ``TRANSISTORS`` order."""
        return dict(zip(TRANSISTORS, (self.q1, self.q2)))

    def value(self, role: str, default: float = 0.0) -> float:
        part = self.parts.get(role)
        return default if part is None else part.value

    def tolerances(self) -> dict[str, float]:
        """Tolerance of each present part, keyed as ``analysis.cascade`` names them."""
        return {role.lower(): p.tolerance for role, p in self.parts.items()}


def _num(x: float) -> str:
    return f"{x:.10g}"


def netlist(circuit: TwoStage, *, operating: Mapping[str, tuple[float, float]],
            cap_voltages: Mapping[str, float], temp_c: float = 25.0, control: str | None = None,
            title: str | None = None) -> str:
    """The amplifier as a SPICE deck: supply, AC source (1 V, DC 0) behind RS, parts, load.

    ``operating`` maps Q1, Q2 to (IC A, VBE V), the tool's operating point at ``temp_c``: each
    transistor is an Ebers-Moll model (BF = nominal hFE, no Early effect, no base resistance or
    junction capacitance) with IS tuned so the simulator's VBE equals the tool's (a generic IS
    when the transistor is cut off).  ``cap_voltages`` maps each capacitor to its signed DC
    voltage (``analysis.cascade`` conventions) so the higher node is written first, the + end of
    an electrolytic.  ``control`` goes in a ``.control`` block; the deck ends with ``.end``.
    """
    model = {"Q1": "QGEN1", "Q2": "QGEN2"}
    lines = [
        f"* {title or 'drawerfit two-stage amplifier'}: {circuit.coupling}-coupled, "
        f"{circuit.polarity.upper()}, {_num(circuit.supply)} V supply",
        f".options TNOM={_num(temp_c)} TEMP={_num(temp_c)}",
        f"VCC vcc 0 DC {_num(circuit.supply)}",
    ]
    if circuit.source_resistance > 0:
        lines += ["VS src 0 DC 0 AC 1", f"RS src in {_num(circuit.source_resistance)}"]
    else:
        lines += ["VS in 0 DC 0 AC 1"]
    stage_side = {"C1": "b1", "C2": "c1", "C3": "e2", "CE": "n1"}
    for name, plus, minus, role in elements(circuit.polarity, circuit.parts, circuit.coupling):
        if name in TRANSISTORS:
            lines.append(f"{name} {plus} {minus} {role} {model[name]}")
            continue
        note = ""
        if role.startswith("C"):
            near = stage_side[role]
            other = minus if plus == near else plus
            plus, minus = (near, other) if cap_voltages[role] >= 0 else (other, near)
            if circuit.parts[role].polarized:
                note = "  ; polarized: + end on the first node"
        lines.append(f"{name} {plus} {minus} {_num(circuit.parts[role].value)}{note}")
    if circuit.load is not None:
        lines.append(f"RL out 0 {_num(circuit.load)}")
    else:
        lines.append("RLEAK out 0 1e12  ; no load: a leak only, so the output node has a DC path")
    kind = circuit.polarity.upper()
    for name, t in (("Q1", circuit.q1), ("Q2", circuit.q2)):
        ic, vbe = operating[name]
        i_sat = saturation_current_for(ic, vbe, temp_c) if ic > 0 else 1e-14
        lines.append(f"* {name}: BF = nominal hFE; IS tuned so VBE = {vbe:.6f} V at IC = {ic:.6e} A")
        lines.append(f".model {model[name]} {kind} (IS={i_sat:.10e} BF={t.hfe:.10g} BR=1)")
    if control:
        lines += [".control", control.rstrip(), ".endc"]
    lines.append(".end")
    return "\n".join(lines) + "\n"

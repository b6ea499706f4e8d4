"""Safety cautions the tool prints where a stage calls for them (analyze, design, report).

The wording is general advice, not a substitute for local codes and licensed practice.
"""

from __future__ import annotations

from dataclasses import dataclass

from .constants import HIGH_VOLTAGE_CAUTION, POWER_DERATING

__all__ = ["Caution", "stage_cautions", "cautions_for", "GENERAL", "PIN_ORDER"]


@dataclass(frozen=True)
class Caution:
    """One caution: a short stable ``key`` (for JSON and tests) and the text for people."""

    key: str
    text: str

    def to_dict(self) -> dict:
        return {"key": self.key, "text": self.text}


HIGH_VOLTAGE = Caution(
    "high-voltage",
    f"Supplies above about {HIGH_VOLTAGE_CAUTION:g} V and any mains-connected equipment can kill: "
    "work on it de-energised, unplug it, discharge the capacitors and check with a meter before "
    "touching, use an isolating transformer where the equipment needs one, and follow your local "
    "electrical codes and licensed practice.",
)
ELECTROLYTIC = Caution(
    "electrolytic",
    "Electrolytic capacitors fitted backwards or run above their voltage rating can vent or burst: "
    "check the + end against the polarity given here and the rating against the supply.",
)
HOT = Caution(
    "hot-parts",
    "Parts working near their power rating run hot enough to burn skin and scorch boards: "
    "keep them clear of the board and of wiring, and let them cool before handling.",
)
PIN_ORDER = Caution(
    "pin-order",
    "Check a substitute transistor's pin order against the board before fitting it: lead orders differ "
    "between types, and one fitted the wrong way round does not work and can fail.",
)
GENERAL = Caution(
    "general",
    "These are general cautions; the figures come from a model. You, the designer or the person "
    "doing the repair, remain responsible for the circuit and its safety.",
)


def stage_cautions(*, supply: float, polarized: bool = False, hot_parts: tuple[str, ...] = (),
                   mains: bool = False) -> list[Caution]:
    """The cautions for a stage with this supply (V), polarized capacitors, hot parts, mains."""
    out = []
    if mains or supply > HIGH_VOLTAGE_CAUTION:
        out.append(HIGH_VOLTAGE)
    if polarized:
        out.append(ELECTROLYTIC)
    if hot_parts:
        out.append(Caution(HOT.key, f"{HOT.text} Here: {', '.join(hot_parts)}."))
    out.append(GENERAL)
    return out


def hot_parts(analysis, fraction: float = POWER_DERATING) -> tuple[str, ...]:
    """Parts whose worst-case dissipation reaches ``fraction`` of their rating.

    A part with no known rating counts as hot from the most common small rating on (0.25 W for
    a resistor, common practice), and a transistor without PD from 0.5 W.
    """
    from .analysis.core import POWER_FIGURE
    from .constants import POWER_RESISTOR

    stage, worst = analysis.stage, analysis.worst
    names = []
    for role, attr in POWER_FIGURE.items():
        part = stage.parts.get(role)
        if part is None:
            continue
        p = float(worst.high[attr])
        rating = part.rating if part.rating is not None else POWER_RESISTOR / fraction
        if p >= fraction * rating:
            names.append(role)
    pd = stage.transistor.pd
    pq = float(worst.high["p_q"])
    if (pd is not None and pq >= fraction * pd) or (pd is None and pq >= 0.5):
        names.append(stage.transistor_name)
    return tuple(names)


def cautions_for(analysis, *, mains: bool = False) -> list[Caution]:
    """The cautions that apply to an analysed stage (``drawerfit.analysis.Analysis``) or two-stage
    amplifier (``analysis.cascade_result.CascadeAnalysis``)."""
    stage = analysis.stage
    polarized = any(p.polarized for r, p in stage.parts.items() if r.startswith("C"))
    from .stages.topologies import assembly_for, assembly_hook

    assembly = assembly_for(stage.topology)
    if assembly is not None:
        hot = assembly_hook(assembly, "hot_parts")(stage, analysis.worst, POWER_DERATING)
    else:
        hot = hot_parts(analysis)
    return stage_cautions(supply=stage.supply, polarized=polarized, hot_parts=hot, mains=mains)

"""The design problem: what the stage must do, what it is judged by, and which shapes are allowed.

A ``DesignProblem`` is what the search needs from a design spec, in SI units: the circuit
around the stage (topology, polarity, supply, source and load), the targets, the limits
(derating, capacitor voltage margin, ambient range) and the search settings (roles that may be
pairs, most parts per role, units to build, the guarantee and the preference).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

from ..parts import SpecError
from ..analysis.targets import Targets
from ..stages import Conditions
from ..stages.topologies import CIRCUITS, TOPOLOGIES, topology_module

__all__ = ["DesignTargets", "ShiftedTargets", "DesignProblem", "GUARANTEES", "PREFERENCES", "roles_of", "problem_from_spec"]

GUARANTEES = ("worst-case", "nominal")
PREFERENCES = ("fewest-parts", "closest")



def roles_of(topology: str, bypass: bool) -> tuple[tuple[str, ...], tuple[str, ...]]:
    """(resistor roles, capacitor roles) the search chooses; ``bypass`` adds the circuit's bypass roles."""
    return topology_module(topology).design_roles(bypass)


@dataclass(frozen=True)
class DesignTargets(Targets):
    """The analysis targets, checked for a design: the IE window is required, the rest optional.

    ``ie_min``/``ie_max`` bound the emitter current (A); ``f_low`` is the highest allowed whole-stage
    −3 dB corner (Hz); ``swing`` the least symmetric output peak into the load (V); ``rin_min``,
    ``rout_max`` in ohm; ``gain_min``/``gain_max`` bound the magnitude of the source-to-load gain.
    """

    def __post_init__(self) -> None:
        lo, hi = self.ie_min, self.ie_max
        if lo is None or hi is None or not (0 < lo <= hi and math.isfinite(hi)):
            raise SpecError(f"[targets]: need 0 < ie_min <= ie_max (got {lo}, {hi})")
        for name in ("f_low", "swing", "rin_min", "rout_max", "gain_min", "gain_max"):
            v = getattr(self, name)
            if v is not None and not (v > 0 and math.isfinite(v)):
                raise SpecError(f"[targets]: {name} must be positive, not {v!r}")
        if self.gain_min is not None and self.gain_max is not None and self.gain_min > self.gain_max:
            raise SpecError("[targets]: gain_min is above gain_max")


@dataclass(frozen=True)
class ShiftedTargets(DesignTargets):
    """Targets eased or tightened from ``real``, whose window centres (for the distance D) stay the
    real ones."""

    real: DesignTargets | None = None

    def centres(self) -> dict:
        return self.real.centres() if self.real is not None else super().centres()


@dataclass(frozen=True)
class DesignProblem:
    """Everything the search needs, in SI units (resistances ohm, supply V).

    ``pairs`` lists the roles that may be made of several parts (up to ``max_parts``); the others
    take single parts.  ``label`` restricts the transistor to stock lines of that label.
    """

    topology: str
    polarity: str
    supply: float
    targets: DesignTargets
    conditions: Conditions = field(default_factory=Conditions)
    source_resistance: float = 0.0
    load: float | None = None
    bypass: bool = False
    label: str | None = None
    pairs: tuple[str, ...] | None = None  # None: every role
    max_parts: int = 2
    units: int = 1
    guarantee: str = "worst-case"
    prefer: str = "fewest-parts"

    def __post_init__(self) -> None:
        if self.topology not in TOPOLOGIES:
            raise SpecError(f"topology must be {' or '.join(TOPOLOGIES)}, not {self.topology!r}")
        if self.polarity not in ("npn", "pnp"):
            raise SpecError(f"polarity must be npn or pnp, not {self.polarity!r}")
        if not (self.supply > 0 and math.isfinite(self.supply)):
            raise SpecError("the supply must be a positive voltage")
        if self.guarantee not in GUARANTEES:
            raise SpecError(f"--guarantee must be one of {', '.join(GUARANTEES)}")
        if self.prefer not in PREFERENCES:
            raise SpecError(f"--prefer must be one of {', '.join(PREFERENCES)}")
        if not 1 <= self.max_parts <= 3:
            raise SpecError("--max-parts must be 1, 2 or 3")
        if self.units < 1:
            raise SpecError("--units must be at least 1")
        if self.targets.f_low is None:
            raise SpecError("[targets]: f_low is needed to choose the capacitors")
        gain_given = self.targets.gain_min is not None or self.targets.gain_max is not None
        if gain_given and not self.circuit.HAS_GAIN_TARGET:
            with_gain = " or the ".join(m.TITLE for m in CIRCUITS if m.HAS_GAIN_TARGET)
            raise SpecError(f"[targets]: gain_min/gain_max apply to the {with_gain}")
        res, caps = self.roles
        if self.pairs is not None:
            bad = sorted(set(self.pairs) - set(res) - set(caps))
            if bad:
                raise SpecError(f"[design] pairs: this stage has no role {', '.join(bad)}")

    @property
    def circuit(self):
        """The module of the problem's circuit (``stages.topology_module``)."""
        return topology_module(self.topology)

    @property
    def roles(self) -> tuple[tuple[str, ...], tuple[str, ...]]:
        return roles_of(self.topology, self.bypass)

    def counts_for(self, role: str) -> tuple[int, ...]:
        """The part counts a role may take."""
        if self.pairs is not None and role not in self.pairs:
            return (1,)
        return tuple(range(1, self.max_parts + 1))

    @property
    def rl(self) -> float:
        return math.inf if self.load is None else self.load

    def with_(self, **changes) -> "DesignProblem":
        return replace(self, **changes)


def problem_from_spec(spec, *, units: int = 1, max_parts: int = 2, guarantee: str = "worst-case",
                      prefer: str = "fewest-parts", keep: bool = False) -> DesignProblem:
    """The design problem a design spec (``drawerfit.spec.Spec``) describes, with the CLI's settings.

    ``keep``: the spec's ``[parts]`` are a board to mend (``search.changes``); the common-emitter
    stage is then bypassed when the board has CE."""
    if keep and not spec.parts:
        raise SpecError(f"{spec.path}: --keep needs [parts]: the parts on the board to keep where they can")
    if spec.parts and not keep:
        raise SpecError(f"{spec.path}: this spec has [parts]: it describes a built stage; use "
                        "`drawerfit analyze`, or remove [parts] to design one")
    t = spec.targets
    if t is None:
        raise SpecError(f"{spec.path}: a design spec needs a [targets] table")
    given = t.given()
    if "ie_min" not in given or "ie_max" not in given:
        raise SpecError(f"{spec.path}: [targets] needs ie (or ie_min and ie_max): the operating point")
    if "f_low" not in given:
        raise SpecError(f"{spec.path}: [targets] needs f_low, the highest allowed low-frequency corner")
    try:
        targets = DesignTargets(**{k: given.get(k) for k in DesignTargets.__dataclass_fields__})
    except SpecError as exc:
        raise SpecError(f"{spec.path}: {exc}") from None
    bypass = spec.bypass or (keep and "CE" in spec.parts)
    res, caps = roles_of(spec.topology, bypass)
    pairs = tuple(r for r in spec.pairs if r in res or r in caps)
    try:
        return DesignProblem(
            topology=spec.topology, polarity=spec.polarity, supply=spec.supply, targets=targets,
            conditions=spec.conditions, source_resistance=spec.source_resistance, load=spec.load,
            bypass=bypass, label=spec.transistor_label, pairs=pairs, max_parts=max_parts,
            units=units, guarantee=guarantee, prefer=prefer)
    except SpecError as exc:
        raise SpecError(f"{spec.path}: {exc}") from None

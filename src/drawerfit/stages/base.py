"""A stage as designed or as found on a board: topology, supply, parts by role, transistor."""

from __future__ import annotations

import math
from dataclasses import dataclass
from types import MappingProxyType
from typing import Mapping

from ..constants import (
    AMBIENT_MAX_C, AMBIENT_MIN_C, CAP_VOLTAGE_MARGIN, NOMINAL_TEMP_C, POWER_DERATING,
)
from ..parts import SpecError
from .bjt import TransistorModel
from .topologies import topology_module

__all__ = ["Part", "Stage", "Conditions", "StageError", "CAPACITOR_ROLES", "RESISTOR_ROLES"]

RESISTOR_ROLES = ("R1", "R2", "RE", "RC", "RE2")
CAPACITOR_ROLES = ("C1", "C2", "CE")


class StageError(SpecError):
    """A stage that cannot be analysed as given (a missing or impossible part)."""


def check_surroundings(polarity: str, supply: float, source_resistance: float, load: float | None) -> None:
    """The polarity, supply, source and load of a circuit are possible; StageError otherwise."""
    if polarity not in ("npn", "pnp"):
        raise StageError(f"polarity must be 'npn' or 'pnp', not {polarity!r}")
    if not (math.isfinite(supply) and supply > 0):
        raise StageError(f"the supply must be a positive voltage, not {supply!r}")
    if source_resistance < 0:
        raise StageError("the source resistance cannot be negative")
    if load is not None and not load > 0:
        raise StageError("the load must be a positive resistance (leave it out for no load)")


def check_roles(parts, required, optional, stage_name: str) -> None:
    """Every required role present and no role the topology lacks; StageError otherwise."""
    missing = [r for r in required if r not in parts]
    if missing:
        raise StageError(f"{stage_name} needs {', '.join(missing)}")
    extra = sorted(set(parts) - set(required) - set(optional))
    if extra:
        raise StageError(f"{stage_name} has no role {', '.join(extra)}")


@dataclass(frozen=True)
class Part:
    """One part in a role: value in ohm or farad, tolerance as a fraction.

    ``rating`` is W for a resistor and V for a capacitor, None when unknown.  ``polarized`` marks
    an electrolytic (or any capacitor with a + end).
    """

    value: float
    tolerance: float = 0.0
    rating: float | None = None
    polarized: bool = False

    def __post_init__(self) -> None:
        if not (math.isfinite(self.value) and self.value > 0):
            raise ValueError(f"a part value must be positive and finite, not {self.value!r}")
        if not 0 <= self.tolerance < 1:
            raise ValueError(f"a tolerance is a fraction in [0, 1), not {self.tolerance!r}")
        if self.rating is not None and not self.rating > 0:
            raise ValueError(f"a rating must be positive, not {self.rating!r}")


@dataclass(frozen=True)
class Conditions:
    """How hard the stage is judged: ambient range (°C), derating and capacitor voltage margin.

    ``resistor_derating`` and ``transistor_derating`` are the fraction of the power rating that
    may be used (0.5 = half, common practice); ``cap_voltage_margin`` the fraction of a
    capacitor's voltage rating its DC voltage may reach (0.8, common practice).
    """

    ambient_min: float = AMBIENT_MIN_C
    ambient_max: float = AMBIENT_MAX_C
    resistor_derating: float = POWER_DERATING
    transistor_derating: float = POWER_DERATING
    cap_voltage_margin: float = CAP_VOLTAGE_MARGIN
    nominal_temp: float = NOMINAL_TEMP_C

    def __post_init__(self) -> None:
        if self.ambient_min > self.ambient_max:
            raise ValueError("ambient_min is above ambient_max")
        for name in ("resistor_derating", "transistor_derating", "cap_voltage_margin"):
            v = getattr(self, name)
            if not 0 < v <= 1:
                raise ValueError(f"{name} must be a fraction in (0, 1], not {v!r}")


@dataclass(frozen=True)
class Stage:
    """One transistor stage on a single positive supply (V); resistances in ohm.

    ``load`` None means nothing is connected at the output; ``source_resistance`` 0 an ideal
    source.  ``parts`` maps roles (R1, R2, RE, C1, C2; common-emitter also RC, RE2, CE) to parts.
    """

    topology: str
    polarity: str
    supply: float
    parts: Mapping[str, Part]
    transistor: TransistorModel
    source_resistance: float = 0.0
    load: float | None = None

    def __post_init__(self) -> None:
        object.__setattr__(self, "parts", MappingProxyType(dict(self.parts)))
        check_surroundings(self.polarity, self.supply, self.source_resistance, self.load)
        module = topology_module(self.topology)
        if self.transistor.polarity != self.polarity:
            raise StageError(
                f"the stage is {self.polarity.upper()} but the transistor "
                f"{self.transistor.label or ''} is {self.transistor.polarity.upper()}".replace("  ", " ")
            )
        module.validate_roles(self.parts)

    def value(self, role: str, default: float = 0.0) -> float:
        part = self.parts.get(role)
        return default if part is None else part.value

    def tolerance(self, role: str) -> float:
        part = self.parts.get(role)
        return 0.0 if part is None else part.tolerance

    @property
    def bypassed(self) -> bool:
        return "CE" in self.parts and "RE2" in self.parts

    @property
    def transistor_name(self) -> str:
        """The designator of its transistor, as its circuit module names it."""
        (name,) = topology_module(self.topology).TRANSISTORS
        return name

    @property
    def transistors(self) -> dict[str, TransistorModel]:
        """Its transistor by designator (the same shape as a two-stage amplifier's)."""
        return {self.transistor_name: self.transistor}

    def core_arguments(self) -> dict:
        """Keyword arguments for ``analysis.core.evaluate`` at the nominal values."""
        t = self.transistor
        return dict(
            topology=self.topology, polarity=self.polarity, supply=self.supply,
            r1=self.value("R1"), r2=self.value("R2"), re=self.value("RE"),
            rc=self.value("RC"), re2=self.value("RE2"),
            c1=self.value("C1"), c2=self.value("C2"),
            ce=self.value("CE") if self.bypassed else 0.0,
            rs=self.source_resistance, rl=math.inf if self.load is None else self.load,
            hfe=t.hfe, vbe=t.vbe, vce_sat=t.vce_sat, vbe_tempco=t.vbe_tempco, i_sat=t.i_sat,
        )

    def tolerances(self) -> dict[str, float]:
        """Tolerance of each present part, keyed as ``analysis.core`` names them."""
        return {role.lower(): p.tolerance for role, p in self.parts.items()}

"""Stage models: the parts of a stage by role, and one module per topology.

``Stage`` holds what is on the board (or in a design); ``analysis`` computes its figures.
"""

from __future__ import annotations

from types import ModuleType

from .base import CAPACITOR_ROLES, RESISTOR_ROLES, Conditions, Part, Stage, StageError
from .bjt import TransistorModel, saturation_current_for

__all__ = [
    "Part", "Stage", "Conditions", "StageError", "TransistorModel", "saturation_current_for",
    "RESISTOR_ROLES", "CAPACITOR_ROLES", "TOPOLOGIES", "topology_module",
]

TOPOLOGIES = ("emitter-follower", "common-emitter")


def topology_module(topology: str) -> ModuleType:
    """The module that knows a topology's roles and circuit."""
    from . import common_emitter, follower

    modules = {follower.NAME: follower, common_emitter.NAME: common_emitter}
    if topology not in modules:
        raise StageError(f"topology must be one of {', '.join(TOPOLOGIES)}, not {topology!r}")
    return modules[topology]

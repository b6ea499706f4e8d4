"""Stage models: the parts of a stage by role, and one module per topology.

``Stage`` holds what is on the board (or in a design); ``analysis`` computes its figures.
"""

from __future__ import annotations

from .base import CAPACITOR_ROLES, RESISTOR_ROLES, Conditions, Part, Stage, StageError
from .bjt import TransistorModel, saturation_current_for
from .topologies import TOPOLOGIES, topology_module

__all__ = [
    "Part", "Stage", "Conditions", "StageError", "TransistorModel", "saturation_current_for",
    "RESISTOR_ROLES", "CAPACITOR_ROLES", "TOPOLOGIES", "topology_module",
]

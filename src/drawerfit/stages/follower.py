"""The emitter follower (common collector) with divider bias.

NPN: R1 supply→base, R2 base→ground, RE emitter→ground, collector on the supply, C1 into the
base, C2 out of the emitter.  PNP mirror: RE supply→emitter, collector to ground.
"""

from __future__ import annotations

from typing import Mapping

NAME = "emitter-follower"
REQUIRED = ("R1", "R2", "RE", "C1", "C2")
OPTIONAL: tuple[str, ...] = ()
ROLES = ("R1", "R2", "RE", "C1", "C2")  # every role, in the order specs and reports list them
OUTPUT_NODE = "e"


def validate_roles(parts: Mapping[str, object]) -> None:
    from .base import check_roles

    check_roles(parts, REQUIRED, OPTIONAL, "an emitter follower")


def elements(polarity: str, parts: Mapping[str, object]) -> list[tuple[str, str, str, str]]:
    """Circuit elements (designator, node +, node −, role) between named nodes; 'vcc' and '0' rails."""
    rail_e, rail_c = ("0", "vcc") if polarity == "npn" else ("vcc", "0")
    return [
        ("R1", "vcc", "b", "R1"),
        ("R2", "b", "0", "R2"),
        ("RE", "e", rail_e, "RE"),
        ("C1", "in", "b", "C1"),
        ("C2", "e", "out", "C2"),
        ("Q1", rail_c, "b", "e"),  # collector, base, emitter
    ]

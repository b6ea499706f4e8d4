"""The common-emitter stage with divider bias and an optionally bypassed second emitter resistor.

NPN: R1 supply→base, R2 base→ground, RC supply→collector, RE emitter→n, RE2 n→ground (absent:
RE goes straight to ground), CE across RE2, C1 into the base, C2 out of the collector.  PNP
mirror: RC collector→ground, RE2 and CE return to the supply.
"""

from __future__ import annotations

from typing import Mapping

NAME = "common-emitter"
REQUIRED = ("R1", "R2", "RE", "RC", "C1", "C2")
OPTIONAL = ("RE2", "CE")
ROLES = ("R1", "R2", "RE", "RC", "RE2", "C1", "C2", "CE")  # every role, in the order specs and reports list them
OUTPUT_NODE = "c"


def validate_roles(parts: Mapping[str, object]) -> None:
    from .base import StageError, check_roles

    check_roles(parts, REQUIRED, OPTIONAL, "a common-emitter stage")
    if "CE" in parts and "RE2" not in parts:
        raise StageError("CE bypasses RE2, but there is no RE2")


def elements(polarity: str, parts: Mapping[str, object]) -> list[tuple[str, str, str, str]]:
    """Circuit elements (designator, node +, node −, role) between named nodes; 'vcc' and '0' rails."""
    rail_e, rail_c = ("0", "vcc") if polarity == "npn" else ("vcc", "0")
    has_re2 = "RE2" in parts
    out = [
        ("R1", "vcc", "b", "R1"),
        ("R2", "b", "0", "R2"),
        ("RC", rail_c, "c", "RC"),
        ("RE", "e", "n" if has_re2 else rail_e, "RE"),
        ("C1", "in", "b", "C1"),
        ("C2", "c", "out", "C2"),
        ("Q1", "c", "b", "e"),
    ]
    if has_re2:
        out.append(("RE2", "n", rail_e, "RE2"))
        if "CE" in parts:
            out.append(("CE", "n", rail_e, "CE"))
    return out

"""What a two-stage amplifier must do: its targets and their vectorised margins.

Shared by the two-stage analysis (checks, Monte Carlo fractions) and the joint design search,
so both judge an amplifier the same way.  numpy is imported inside the functions: the spec
reader builds ``CascadeTargets`` on the CLI's path.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass
from typing import Mapping

__all__ = ["CascadeTargets", "CASCADE_TARGET_RULES", "CASCADE_TARGET_UNITS", "cascade_target_margins"]

# target name -> (figure of analysis.cascade.CascadeFigures, side): +1 figure >= bound, -1 <=.
CASCADE_TARGET_RULES = {
    "ie1_min": ("ie1", +1), "ie1_max": ("ie1", -1),
    "ie2_min": ("ie2", +1), "ie2_max": ("ie2", -1),
    "f_low": ("f_low", -1), "swing": ("swing_peak", +1),
    "rin_min": ("rin", +1), "rout_max": ("rout", -1),
    "gain_min": ("gain_abs", +1), "gain_max": ("gain_abs", -1),
}
CASCADE_TARGET_UNITS = {"ie1_min": "A", "ie1_max": "A", "ie2_min": "A", "ie2_max": "A", "f_low": "Hz",
                        "swing": "V", "rin_min": "ohm", "rout_max": "ohm", "gain_min": "", "gain_max": ""}


@dataclass(frozen=True)
class CascadeTargets:
    """Targets of the whole amplifier in SI units; None means "no target".

    ``gain_min``/``gain_max``: magnitude of the source-EMF-to-load gain.  ``f_low``: the whole
    cascade's −3 dB corner at or below it (Hz).  ``swing``: the symmetric peak into the load at
    least this (V).  ``ie1_*``/``ie2_*``: each transistor's emitter current window (A).
    """

    gain_min: float | None = None
    gain_max: float | None = None
    f_low: float | None = None
    swing: float | None = None
    rin_min: float | None = None
    rout_max: float | None = None
    ie1_min: float | None = None
    ie1_max: float | None = None
    ie2_min: float | None = None
    ie2_max: float | None = None

    def given(self) -> dict[str, float]:
        return {k: v for k, v in asdict(self).items() if v is not None}

    def to_dict(self) -> dict:
        return asdict(self)


def cascade_target_margins(targets: CascadeTargets, low: Mapping[str, object],
                           high: Mapping[str, object]) -> dict:
    """Relative margin of each given target: ≥ 0 met, < 0 missed by that fraction of the bound.

    ``low``/``high``: each figure's lowest and highest value (a worst case, or the same figures
    twice).  The gain's magnitude range comes from ``gain``; a range that crosses zero has a
    lowest magnitude of 0.  NaN figures (no corner, not active) count as missed.
    """
    from .targets import margins_by_rules

    low = {k: v for k, v in low.items() if k != "gain_abs"}  # always from the gain's own range
    high = {k: v for k, v in high.items() if k != "gain_abs"}
    return margins_by_rules(targets.given(), CASCADE_TARGET_RULES, low, high)

"""The transistor as the stage models see it: polarity, hFE range, VBE and its ratings."""

from __future__ import annotations

import math
from dataclasses import dataclass

from ..constants import NOMINAL_TEMP_C, VBE_DEFAULT, VBE_TEMPCO, VCE_SAT_DEFAULT

__all__ = ["TransistorModel", "saturation_current_for"]


@dataclass(frozen=True)
class TransistorModel:
    """A BJT by its working figures (SI units; ``vbe_tempco`` in V/°C).

    ``hfe_min``/``hfe_max`` bound the current gain; the nominal is their geometric mean
    √(hfe_min·hfe_max), the centre of the range on the ratio scale that hFE spreads on (a 2:1
    or 3:1 spread within one type).  ``vbe`` is VBE at 25 °C; when ``i_sat`` (A) is given VBE
    comes from the diode law instead.  Ratings (``vceo`` V, ``ic_max`` A, ``pd`` W) may be None
    when unknown; checks against them are then skipped and said to be skipped.  ``pins`` is
    shown to the builder only; no figure depends on it.
    """

    polarity: str
    hfe_min: float
    hfe_max: float
    vbe: float = VBE_DEFAULT
    vce_sat: float = VCE_SAT_DEFAULT
    vbe_tempco: float = VBE_TEMPCO
    i_sat: float | None = None
    vceo: float | None = None
    ic_max: float | None = None
    pd: float | None = None
    label: str = ""
    pins: str = ""  # the leads in pin order ("EBC"), when the stock line or spec gives them

    def __post_init__(self) -> None:
        if self.polarity not in ("npn", "pnp"):
            raise ValueError(f"polarity must be 'npn' or 'pnp', not {self.polarity!r}")
        if not (self.hfe_min > 0 and self.hfe_max >= self.hfe_min):
            raise ValueError(f"hFE range must satisfy 0 < hfe_min <= hfe_max (got {self.hfe_min}, {self.hfe_max})")
        if not 0 < self.vbe < 1.5:
            raise ValueError(f"VBE of {self.vbe} V is outside 0..1.5 V")
        if not 0 <= self.vce_sat < 2:
            raise ValueError(f"VCE(sat) of {self.vce_sat} V is outside 0..2 V")
        if self.i_sat is not None and not self.i_sat > 0:
            raise ValueError("saturation current must be positive")

    @property
    def hfe(self) -> float:
        """Nominal hFE: the geometric mean of the range."""
        return math.sqrt(self.hfe_min * self.hfe_max)


def saturation_current_for(ic: float, vbe: float, temp_c: float = NOMINAL_TEMP_C) -> float:
    """IS such that IC = IS·(exp(VBE/VT) − 1) at ``temp_c``: ties a simulator's diode law to a VBE."""
    from ..constants import thermal_voltage

    return ic / math.expm1(vbe / thermal_voltage(temp_c))

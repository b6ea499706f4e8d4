"""What a stage must do: the targets of a design spec, and vectorised checks against them.

Shared by ``analyse`` (checks and Monte Carlo fractions) and the optimizer (feasibility over
candidate arrays), so both judge a stage the same way.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass
from typing import Mapping

import numpy as np

from .dc import CAP_FIGURE, POWER_FIGURE

__all__ = ["Targets", "IE_WINDOW", "target_margins", "rating_margins"]

# When a spec gives one IE, the window is ±10 % around it: our own default, wide enough for 5 %
# resistors and a 2:1 hFE spread in a stiff divider, narrow enough to pin the operating point.
IE_WINDOW = 0.10


@dataclass(frozen=True)
class Targets:
    """Targets in SI units; None means "no target".

    ``f_low``: the whole stage's −3 dB corner must be at or below it (Hz).  ``swing``: the
    symmetric output peak into the load must be at least this (V).  ``gain_min``/``gain_max``:
    magnitude of the source-to-load gain.
    """

    ie_min: float | None = None
    ie_max: float | None = None
    f_low: float | None = None
    swing: float | None = None
    rin_min: float | None = None
    rout_max: float | None = None
    gain_min: float | None = None
    gain_max: float | None = None

    @classmethod
    def around(cls, ie: float, window: float = IE_WINDOW, **others) -> "Targets":
        """Targets with IE in ``ie``·(1 ± ``window``)."""
        return cls(ie_min=ie * (1 - window), ie_max=ie * (1 + window), **others)

    def given(self) -> dict[str, float]:
        return {k: v for k, v in asdict(self).items() if v is not None}

    def to_dict(self) -> dict:
        return asdict(self)

    def centres(self) -> dict[str, tuple[float, float]]:
        """Two-sided windows (IE, gain) as (centre, half width), for "closest to target" scoring."""
        out = {}
        if self.ie_min is not None and self.ie_max is not None:
            out["ie"] = (0.5 * (self.ie_min + self.ie_max), 0.5 * (self.ie_max - self.ie_min))
        if self.gain_min is not None and self.gain_max is not None:
            out["gain"] = (0.5 * (self.gain_min + self.gain_max), 0.5 * (self.gain_max - self.gain_min))
        return out


# target name -> (figure, side): side +1 means figure >= bound, -1 means figure <= bound.
_RULES = {
    "ie_min": ("ie", +1),
    "ie_max": ("ie", -1),
    "f_low": ("f_low", -1),
    "swing": ("swing_peak", +1),
    "rin_min": ("rin", +1),
    "rout_max": ("rout", -1),
    "gain_min": ("gain_abs", +1),
    "gain_max": ("gain_abs", -1),
}


def target_margins(targets: Targets, low: Mapping[str, np.ndarray],
                   high: Mapping[str, np.ndarray]) -> dict[str, np.ndarray]:
    """Relative margin of each given target: ≥ 0 met, < 0 missed by that fraction of the bound.

    ``low``/``high`` hold each figure's lowest and highest value (the worst-case box, or the same
    figures twice for a nominal check); a lower-bound target is judged on ``low``, an
    upper-bound one on ``high``.  ``gain_abs`` may be given; else it is taken from ``gain``
    (its magnitude range).  NaN figures (no corner, not active) count as missed.
    """
    return margins_by_rules(targets.given(), _RULES, low, high)


def margins_by_rules(given: Mapping[str, float], rules: Mapping[str, tuple[str, int]],
                     low: Mapping[str, np.ndarray], high: Mapping[str, np.ndarray]) -> dict[str, np.ndarray]:
    """``target_margins`` for any circuit: ``given`` target -> bound, ``rules`` target -> (figure,
    +1 lower bound / −1 upper bound); the gain's magnitude range from ``gain`` unless given."""
    low, high = dict(low), dict(high)
    if "gain_abs" not in low and "gain" in low:
        a, b = np.abs(np.asarray(low["gain"], float)), np.abs(np.asarray(high["gain"], float))
        same_sign = np.sign(low["gain"]) == np.sign(high["gain"])
        low["gain_abs"] = np.where(same_sign, np.minimum(a, b), 0.0)
        high["gain_abs"] = np.maximum(a, b)
    out = {}
    for name, bound in given.items():
        fig, side = rules[name]
        val = low[fig] if side > 0 else high[fig]
        with np.errstate(invalid="ignore", divide="ignore"):
            m = side * (np.asarray(val, float) - bound) / abs(bound)
        out[name] = np.where(np.isnan(m), -np.inf, m)
    return out




def rating_margins(low: Mapping[str, np.ndarray], high: Mapping[str, np.ndarray], *, conditions,
                   supply, power_ratings: Mapping[str, object] | None = None,
                   voltage_ratings: Mapping[str, object] | None = None,
                   polarized: Mapping[str, object] | None = None,
                   pd=None, vceo=None, ic_max=None) -> dict[str, np.ndarray]:
    """Relative margin of every rating check, vectorised: ≥ 0 within the rating, < 0 over.

    The same rules as ``analyse``'s checks (analysis/checks.py), for candidate arrays:
    resistor power (role → W rating) against ``conditions.resistor_derating``, Q1 power against
    ``pd``·``transistor_derating``, the supply against ``vceo``, twice the highest IC against
    ``ic_max``, each capacitor's largest DC voltage (role → V rating) against
    ``cap_voltage_margin``.  ``polarized`` (role → bool array) adds "<role> polarity": +1 where
    the DC voltage across keeps one sign over the box, −1 where it does not (only where
    polarized).  ``low``/``high`` as from ``worst_case``.  Ratings may be arrays.
    """
    out: dict[str, np.ndarray] = {}
    for role, rating in (power_ratings or {}).items():
        limit = np.asarray(rating, float) * conditions.resistor_derating
        out[f"{role} power"] = (limit - high[POWER_FIGURE[role]]) / limit
    if pd is not None:
        limit = np.asarray(pd, float) * conditions.transistor_derating
        out["Q1 power"] = (limit - high["p_q"]) / limit
    if vceo is not None:
        v = np.asarray(vceo, float)
        out["Q1 VCEO"] = (v - supply) / v
    if ic_max is not None:
        i = np.asarray(ic_max, float)
        out["Q1 IC max"] = (i - 2.0 * high["ic"]) / i
    for role, rating in (voltage_ratings or {}).items():
        attr = CAP_FIGURE[role]
        v = np.maximum(np.abs(low[attr]), np.abs(high[attr]))
        limit = np.asarray(rating, float) * conditions.cap_voltage_margin
        out[f"{role} voltage"] = (limit - v) / limit
    for role, flag in (polarized or {}).items():
        attr = CAP_FIGURE[role]
        one_sign = (np.sign(low[attr]) == np.sign(high[attr])) & (low[attr] != 0)
        out[f"{role} polarity"] = np.where(np.asarray(flag, bool) & ~one_sign, -1.0, 1.0)
    return out

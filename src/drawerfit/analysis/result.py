"""The result of analysing one stage: figures, checks, spread, and its JSON form."""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any, Mapping

from .core import LIMIT_NAMES, STATE_NAMES

__all__ = ["Check", "Analysis"]


def _num(x) -> float | None:
    """A JSON-safe float: NaN and infinities become None."""
    if x is None:
        return None
    x = float(x)
    return x if math.isfinite(x) else None


@dataclass(frozen=True)
class Check:
    """One judgement: ``ok`` True/False, or None when it could not be made (rating unknown).

    ``value`` and ``limit`` are in SI units (the ``unit`` says which); ``message`` is for people.
    """

    name: str
    ok: bool | None
    value: float | None
    limit: float | None
    message: str
    unit: str = ""
    kind: str = "rating"  # "state", "rating", "polarity", "target", "advice"

    def to_dict(self) -> dict:
        return {"name": self.name, "ok": self.ok, "value": _num(self.value),
                "limit": _num(self.limit), "message": self.message}


@dataclass(frozen=True)
class Analysis:
    """Everything the tool says about one stage.

    ``nominal`` is the ``analysis.core.Figures`` of the nominal stage at the nominal temperature
    (0-d arrays); ``worst`` the ``WorstCase`` over tolerances, hFE range and ambient range;
    ``monte_carlo`` a summary dict or None.
    """

    stage: Any
    conditions: Any
    targets: Any
    nominal: Any
    worst: Any
    checks: tuple[Check, ...]
    monte_carlo: Mapping[str, Any] | None = None
    spread_extra: Mapping[str, Any] = field(default_factory=dict)

    @property
    def state(self) -> str:
        return STATE_NAMES[int(self.nominal.state)]

    @property
    def warnings(self) -> tuple[Check, ...]:
        """Failed checks, advice excluded."""
        return tuple(c for c in self.checks if c.ok is False and c.kind != "advice")

    @property
    def notes(self) -> tuple[Check, ...]:
        """Advice that did not hold (e.g. a divider that is not stiff): worth knowing, not a fault."""
        return tuple(c for c in self.checks if c.ok is False and c.kind == "advice")

    def power(self) -> dict[str, float]:
        f = self.nominal
        out = {}
        for role, attr in (("R1", "p_r1"), ("R2", "p_r2"), ("RE", "p_re"), ("RC", "p_rc"),
                           ("RE2", "p_re2")):
            if role in self.stage.parts:
                out[role] = float(getattr(f, attr))
        out["Q1"] = float(f.p_q)
        return out

    def corners(self) -> dict[str, float | None]:
        f = self.nominal
        out = {}
        for role, attr in (("C1", "f_c1"), ("C2", "f_c2"), ("CE", "f_ce")):
            if role in self.stage.parts:
                out[role] = _num(getattr(f, attr))
        return out

    def spread(self) -> dict:
        w = self.worst
        names = ("vb", "ve", "vc", "ie", "ic", "vce", "rin", "rout", "gain", "f_low", "swing_peak",
                 "p_r1", "p_r2", "p_re", "p_rc", "p_re2", "p_q")
        c = self.conditions
        t = self.stage.transistor
        return {
            "worst_case": {
                "method": "vertex enumeration over part tolerances, hFE range and ambient range; "
                          "capacitors at their low ends",
                "hfe": [t.hfe_min, t.hfe_max],
                "ambient": [c.ambient_min, c.ambient_max],
                "vertices": w.vertices,
                "all_active": bool(w.all_active),
                "figures": {n: {"low": _num(w.low[n]), "high": _num(w.high[n])} for n in names},
            },
            "monte_carlo": None if self.monte_carlo is None else dict(self.monte_carlo),
            **dict(self.spread_extra),
        }

    def to_dict(self) -> dict:
        """The analyze JSON: SI base units, node voltages to ground."""
        f = self.nominal
        return {
            "dc": {"vb": _num(f.vb), "ve": _num(f.ve), "vc": _num(f.vc), "ie": _num(f.ie),
                   "ic": _num(f.ic), "vce": _num(f.vce), "state": self.state},
            "ac": {"rin": _num(f.rin), "rout": _num(f.rout), "gain": _num(f.gain),
                   "f_low": _num(f.f_low), "corners": self.corners()},
            "swing": {"peak": _num(f.swing_peak), "limit": LIMIT_NAMES[int(f.swing_limit)]},
            "power": self.power(),
            "checks": [c.to_dict() for c in self.checks],
            "spread": self.spread(),
        }

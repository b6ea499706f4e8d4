"""The result of analysing one stage: figures, checks, spread, and its JSON form."""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any, Mapping

from .core import LIMIT_NAMES, NUMERIC_FIELDS, POWER_FIGURE, STATE_NAMES

__all__ = ["Check", "Analysis", "json_float"]


def json_float(x) -> float | None:
    """A JSON-safe float: NaN and infinities become None."""
    if x is None:
        return None
    x = float(x)
    return x if math.isfinite(x) else None


_num = json_float


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


class Findings:
    """What a result with ``checks`` reports beyond them (shared by the single stage's and the
    two-stage amplifier's analyses; the subclass holds ``checks``)."""

    @property
    def warnings(self) -> tuple[Check, ...]:
        """Failed checks, advice excluded."""
        return tuple(c for c in self.checks if c.ok is False and c.kind != "advice")

    @property
    def notes(self) -> tuple[Check, ...]:
        """Advice that did not hold (e.g. a divider that is not stiff): worth knowing, not a fault."""
        return tuple(c for c in self.checks if c.ok is False and c.kind == "advice")


@dataclass(frozen=True, repr=False)
class Analysis(Findings):
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

    def __repr__(self) -> str:
        s, f = self.stage, self.nominal
        failed = ", ".join(c.name for c in self.warnings) or "none"
        return (f"<Analysis {s.topology} {s.polarity.upper()} {s.supply:g} V: {self.state}, IE {float(f.ie):.4g} A, "
                f"gain {float(f.gain):.4g}, f_low {float(f.f_low):.4g} Hz; checks not met: {failed}>")

    def to_pandas(self, table: str = "figures"):
        """A DataFrame: ``table`` "figures" (each figure nominal and at the worst-case ends, SI units),
        "checks" (one row per check) or "samples" (the Monte Carlo builds, one row each: drawn again
        from the same seed, so nothing is held in memory meanwhile)."""
        import pandas as pd

        if table == "figures":
            return figures_frame(self.nominal, self.worst, NUMERIC_FIELDS)
        if table == "checks":
            return checks_frame(self.checks)
        if table == "samples":
            if not self.monte_carlo:
                raise ValueError("no Monte Carlo builds: analyse with monte_carlo=N first")
            from . import monte_carlo_sample

            sample = monte_carlo_sample(self.stage, self.conditions, self.monte_carlo["samples"],
                                        self.monte_carlo["seed"])
            data = {n: getattr(sample, n) for n in NUMERIC_FIELDS}
            data["state"] = [STATE_NAMES[int(x)] for x in sample.state]
            return pd.DataFrame(data)
        raise ValueError(f"table must be 'figures', 'checks' or 'samples', not {table!r}")

    @property
    def state(self) -> str:
        return STATE_NAMES[int(self.nominal.state)]

    def power(self) -> dict[str, float]:
        f = self.nominal
        out = {}
        for role, attr in POWER_FIGURE.items():
            if role in self.stage.parts:
                out[role] = float(getattr(f, attr))
        out[self.stage.transistor_name] = float(f.p_q)
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


def figures_frame(nominal, worst, names):
    """A pandas table of figures ``names``: nominal value and worst-case ends (one row each)."""
    import pandas as pd

    rows = [{"figure": n, "nominal": _num(getattr(nominal, n)), "worst_low": _num(worst.low.get(n)),
             "worst_high": _num(worst.high.get(n))} for n in names if n in worst.low]
    return pd.DataFrame(rows, columns=["figure", "nominal", "worst_low", "worst_high"]).set_index("figure")


def checks_frame(checks):
    """A pandas table of checks, one row each."""
    import pandas as pd

    cols = ["name", "kind", "ok", "value", "limit", "unit", "message"]
    return pd.DataFrame([{c: getattr(ch, c) for c in cols} for ch in checks], columns=cols)

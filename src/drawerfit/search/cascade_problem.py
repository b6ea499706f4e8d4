"""The two-stage design search's problem, designs and judging: what ``cascade_search`` searches for.

``CascadeProblem`` (the targets, the circuit around the amplifier, the search settings),
``CascadeDesign`` (one design: each role's candidate, the transistor lines, its margins) and
``CascadeOutcome`` (the designs found and whether they are proven the best); ``cascade_margins``
judges designs against every target and rating over the worst-case box, vectorised.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from ..analysis.cascade import POWER_FIGURE
from ..analysis.cascade_targets import CascadeTargets, cascade_target_margins
from ..parts import SpecError, StockLine
from ..stages import Conditions
from ..stages import two_stage

__all__ = ["CascadeTargets", "CascadeProblem", "CascadeDesign", "CascadeOutcome", "cascade_margins"]


def _centres(targets: CascadeTargets) -> dict:
    """figure -> (centre, half width) of the two-sided windows (the distance D)."""
    out = {}
    for fig, lo, hi in (("ie1", targets.ie1_min, targets.ie1_max), ("ie2", targets.ie2_min, targets.ie2_max),
                        ("gain_abs", targets.gain_min, targets.gain_max)):
        if lo is not None and hi is not None:
            out[fig] = ((lo + hi) / 2, max((hi - lo) / 2, 1e-30))
    return out


@dataclass(frozen=True)
class CascadeProblem:
    """What the joint search needs, in SI units."""

    polarity: str
    supply: float
    coupling: str
    targets: CascadeTargets
    conditions: Conditions = field(default_factory=Conditions)
    source_resistance: float = 0.0
    load: float | None = None
    bypass: bool = False
    max_parts: int = 2
    units: int = 1

    def __post_init__(self) -> None:
        t = self.targets
        if t.ie1_min is None or t.ie1_max is None or not 0 < t.ie1_min <= t.ie1_max < math.inf:
            raise SpecError("[targets]: the design needs ie1_min and ie1_max (stage 1's emitter current window)")
        if (t.ie2_min is None) != (t.ie2_max is None):
            raise SpecError("[targets]: give both ie2_min and ie2_max, or neither")
        if t.f_low is None:
            raise SpecError("[targets]: f_low is needed to choose the capacitors")
        if self.polarity not in ("npn", "pnp"):
            raise SpecError(f"polarity must be npn or pnp, not {self.polarity!r}")
        if self.coupling not in two_stage.COUPLINGS:
            raise SpecError(f"coupling must be one of {', '.join(two_stage.COUPLINGS)}, not {self.coupling!r}")
        if not 1 <= self.max_parts <= 2:
            raise SpecError("--max-parts: the two-stage search takes 1 or 2 parts per role (triples not yet)")
        if self.units < 1:
            raise SpecError("--units must be at least 1")

    @property
    def res_roles(self) -> tuple[str, ...]:
        roles = ["R1", "R2", "RC", "RE"] + (["RE2"] if self.bypass else [])
        roles += (["R3", "R4"] if self.coupling == "capacitor" else []) + ["RE3"]
        return tuple(roles)

    @property
    def cap_roles(self) -> tuple[str, ...]:
        return ("C1",) + (("C2",) if self.coupling == "capacitor" else ()) + ("C3",) + (("CE",) if self.bypass else ())

    @property
    def rl(self) -> float:
        return math.inf if self.load is None else self.load


@dataclass(frozen=True)
class CascadeDesign:
    """One design: per role (table, index) of its candidate, the transistor lines, its figures."""

    key: tuple
    q1: StockLine
    q2: StockLine
    choice: dict  # role -> (RoleTable, index)
    margins: dict  # name -> worst-case margin (targets, ratings, capacitors, the corner)
    part_count: int
    distance: float

    def value(self, role: str) -> float:
        t, i = self.choice[role]
        return float(t.v[i])

    def tolerance(self, role: str) -> float:
        t, i = self.choice[role]
        return float(t.tol[i])

    def equivalent(self, role: str):
        """The ``equivalents.Equivalent`` of a role: its stock lines, arrangement and value."""
        t, i = self.choice[role]
        return t.equivalent(i)

    def circuit(self, problem: "CascadeProblem"):
        """The design as a ``stages.two_stage.TwoStage`` (each role's network value, tolerance, rating)."""
        from .runner import transistor_model
        from ..stages import Part

        parts = {}
        for role, (t, i) in self.choice.items():
            parts[role] = Part(float(t.v[i]), float(t.tol[i]), float(t.rating[i]), bool(t.polarized[i]))
        return two_stage.TwoStage(problem.polarity, problem.supply, problem.coupling, parts,
                                  transistor_model(self.q1), transistor_model(self.q2),
                                  problem.source_resistance, problem.load)

    def role_lines(self) -> dict:
        """role -> [(StockLine, parts per unit)], as the saved design records them."""
        return {role: list(self.equivalent(role).uses) for role in self.choice}

    def arrangements(self) -> dict:
        return {role: self.equivalent(role).arrangement for role in self.choice
                if sum(n for _l, n in self.equivalent(role).uses) > 1}


@dataclass
class CascadeOutcome:
    """The best designs found, and whether the search proved them the best."""

    designs: list
    proven: bool
    judged: int = 0
    tried: int = 0  # resistor sets tried (stage 1 alone, and whole designs at the first vertices)
    reasons: list = field(default_factory=list)
    problem: object = None
    spec: object = None
    stock: object = None

    @property
    def feasible(self) -> bool:
        return bool(self.designs)

    def to_dict(self) -> dict:
        from .cascade_result import cascade_design_dict

        return cascade_design_dict(self.problem, self)


# --- figures and margins -------------------------------------------------------------------------

def _nominal_args(problem: CascadeProblem, q1, q2, v: dict, tol: dict) -> tuple[dict, dict]:
    """(keyword arguments of ``cascade_worst_case``, tolerances) for arrays of resistor values."""
    n = len(next(iter(v.values())))
    kw = dict(coupling=problem.coupling, polarity=problem.polarity, supply=problem.supply,
              r1=v["R1"], r2=v["R2"], rc=v["RC"], re=v["RE"], re2=v.get("RE2", np.zeros(n)),
              r3=v.get("R3", np.full(n, np.inf)), r4=v.get("R4", np.full(n, np.inf)), re3=v["RE3"],
              rs=problem.source_resistance, rl=problem.rl, bypassed=problem.bypass,
              vbe1=q1.vbe, vbe2=q2.vbe, vce_sat1=q1.vce_sat, vce_sat2=q2.vce_sat,
              vbe_tempco1=q1.vbe_tempco, vbe_tempco2=q2.vbe_tempco)
    tols = {r.lower(): tol[r] for r in tol}
    box = dict(hfe1_min=q1.hfe_min, hfe1_max=q1.hfe_max, hfe2_min=q2.hfe_min, hfe2_max=q2.hfe_max,
               temp_min=problem.conditions.ambient_min, temp_max=problem.conditions.ambient_max)
    return kw, dict(tolerances=tols, **box)


def cascade_margins(problem: CascadeProblem, wc, power: dict, q1, q2) -> dict:
    """Worst-case margin of every target and rating (≥ 0 met), vectorised over designs: the rules
    of the single stages' checks (analysis/targets.py) for both stages; ``power`` role -> W rating."""
    from dataclasses import replace as _replace

    low, high = wc.low, wc.high
    out = cascade_target_margins(_replace(problem.targets, f_low=None), low, high)
    with np.errstate(invalid="ignore", divide="ignore"):
        out["both active"] = np.where(wc.all_active, 1.0, -1.0)
        c = problem.conditions
        for role, rating in power.items():
            limit = np.asarray(rating, float) * c.resistor_derating
            out[f"{role} power"] = (limit - high[POWER_FIGURE[role]]) / limit
        for name, q, ic, p in (("Q1", q1, "ic1", "p_q1"), ("Q2", q2, "ic2", "p_q2")):
            if q.pd is not None:
                limit = q.pd * c.transistor_derating
                out[f"{name} power"] = (limit - high[p]) / limit
            if q.vceo is not None:
                out[f"{name} VCEO"] = np.full(np.shape(high[p]), (q.vceo - problem.supply) / q.vceo)
            if q.ic_max is not None:
                out[f"{name} IC max"] = (q.ic_max - 2.0 * high[ic]) / q.ic_max
    return out


def _distance(problem: CascadeProblem, q1, q2, v: dict) -> np.ndarray:
    """D at the nominal point: √Σ((x − centre)/half-width)² over the two-sided windows."""
    from ..analysis.cascade import evaluate_cascade_dc

    kw, box = _nominal_args(problem, q1, q2, v, {})
    fig = evaluate_cascade_dc(hfe1=q1.hfe, hfe2=q2.hfe, temp_c=problem.conditions.nominal_temp, **kw)
    vals = {"ie1": fig.ie1, "ie2": fig.ie2, "gain_abs": np.abs(fig.gain)}
    d2 = 0.0
    for name, (centre, half) in _centres(problem.targets).items():
        d2 = d2 + ((vals[name] - centre) / half) ** 2
    return np.sqrt(d2)

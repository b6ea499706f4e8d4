"""Analyse a two-stage amplifier (``stages.two_stage.TwoStage``) as one rich result.

``analyse_cascade`` runs ``analysis.cascade``: the nominal figures at the nominal temperature,
the worst case over part tolerances, both hFE ranges and the ambient range, the checks of
``cascade_checks`` and, when asked, seeded Monte Carlo builds.  ``CascadeAnalysis`` carries them
with a short repr, ``to_dict()`` (the ``analyze --json`` of a two-stage spec) and ``to_pandas()``.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Mapping

from .dc import LIMIT_NAMES, STATE_NAMES
from .result import Check, Findings, checks_frame, figures_frame, json_float

__all__ = ["CascadeAnalysis", "analyse_cascade", "cascade_monte_carlo_sample", "SPREAD_FIGURES"]

_num = json_float
# the figures whose worst-case range the JSON and the summary give
SPREAD_FIGURES = ("vb1", "ve1", "vc1", "ie1", "ic1", "vce1", "vb2", "ve2", "ie2", "ic2", "vce2", "rin", "rout",
                  "gain", "f_low", "swing_peak", "p_r1", "p_r2", "p_rc", "p_re", "p_re2", "p_r3", "p_r4",
                  "p_re3", "p_q1", "p_q2")
_MC_SUMMARY = ("ie1", "ie2", "vc1", "ve2", "gain", "rin", "rout", "f_low", "swing_peak", "p_q1", "p_q2")


@dataclass(frozen=True, repr=False)
class CascadeAnalysis(Findings):
    """Everything the tool says about one two-stage amplifier.

    ``nominal`` is the ``analysis.cascade.CascadeFigures`` of the nominal amplifier (0-d arrays,
    corners included); ``worst`` the ``spread.WorstCase`` of ``cascade_worst_case``;
    ``monte_carlo`` a summary dict or None.
    """

    circuit: Any
    conditions: Any
    targets: Any
    nominal: Any
    worst: Any
    checks: tuple[Check, ...]
    monte_carlo: Mapping[str, Any] | None = None

    # the single stage's name for what was analysed, so code that only shows it need not ask which
    @property
    def stage(self):
        return self.circuit

    def __repr__(self) -> str:
        c, f = self.circuit, self.nominal
        failed = ", ".join(ch.name for ch in self.warnings) or "none"
        return (f"<CascadeAnalysis {c.topology} {c.coupling}-coupled {c.polarity.upper()} {c.supply:g} V: "
                f"Q1 {self.states['Q1']}, Q2 {self.states['Q2']}, gain {float(f.gain):.4g}, "
                f"f_low {float(f.f_low):.4g} Hz; checks not met: {failed}>")

    @property
    def states(self) -> dict[str, str]:
        return {"Q1": STATE_NAMES[int(self.nominal.state1)], "Q2": STATE_NAMES[int(self.nominal.state2)]}

    @property
    def active(self) -> bool:
        return bool(self.nominal.active)

    def operating_points(self) -> dict[str, dict]:
        """Per transistor: node voltages to ground, currents, VCE (SI) and its state."""
        f = self.nominal
        b2 = {"vb": _num(f.vb2), "ve": _num(f.ve2),
              "vc": _num(0.0 if self.circuit.polarity == "pnp" else self.circuit.supply)}
        return {
            "Q1": {"vb": _num(f.vb1), "ve": _num(f.ve1), "vc": _num(f.vc1), "ie": _num(f.ie1), "ic": _num(f.ic1),
                   "ib": _num(f.ib1), "vce": _num(f.vce1), "state": self.states["Q1"]},
            "Q2": {**b2, "ie": _num(f.ie2), "ic": _num(f.ic2), "ib": _num(f.ib2), "vce": _num(f.vce2),
                   "state": self.states["Q2"]},
        }

    def power(self) -> dict[str, float]:
        """Nominal dissipation of every resistor present and of both transistors, W."""
        from .cascade import POWER_FIGURE

        f = self.nominal
        return {role: float(getattr(f, attr)) for role, attr in POWER_FIGURE.items()
                if role in self.circuit.parts or role in ("Q1", "Q2")}

    def corners(self) -> dict[str, float | None]:
        """Each capacitor's own corner with the others short, Hz."""
        f = self.nominal
        return {role: _num(getattr(f, f"f_{role.lower()}")) for role in ("C1", "C2", "C3", "CE")
                if role in self.circuit.parts and (role != "CE" or self.circuit.bypassed)}

    def swing(self) -> dict:
        f = self.nominal
        stage = int(f.swing_stage)
        return {"peak": _num(f.swing_peak), "stage": stage or None,
                "transistor": {1: "Q1", 2: "Q2"}.get(stage), "limit": LIMIT_NAMES[int(f.swing_limit)],
                "up": _num(f.swing_up), "down": _num(f.swing_down)}

    def spread(self) -> dict:
        w, c = self.worst, self.conditions
        return {
            "worst_case": {
                "method": "vertex enumeration over part tolerances, both hFE ranges and the ambient range; "
                          "capacitors at their low ends for the corner",
                "hfe": {"Q1": [self.circuit.q1.hfe_min, self.circuit.q1.hfe_max],
                        "Q2": [self.circuit.q2.hfe_min, self.circuit.q2.hfe_max]},
                "ambient": [c.ambient_min, c.ambient_max],
                "vertices": int(w.vertices),
                "all_active": bool(w.all_active),
                "figures": {n: {"low": _num(w.low[n]), "high": _num(w.high[n])} for n in SPREAD_FIGURES
                            if n in w.low},
            },
            "monte_carlo": None if self.monte_carlo is None else dict(self.monte_carlo),
        }

    def to_dict(self) -> dict:
        """The analyze JSON of a two-stage amplifier: SI base units, node voltages to ground."""
        f, c = self.nominal, self.circuit
        return {
            "topology": c.topology, "coupling": c.coupling, "polarity": c.polarity, "supply": c.supply,
            "dc": self.operating_points(),
            "ac": {"gain": _num(f.gain), "gain_stage1": _num(f.gain1), "gain_stage2": _num(f.gain2),
                   "rin": _num(f.rin), "rout": _num(f.rout), "f_low": _num(f.f_low), "corners": self.corners()},
            "swing": self.swing(),
            "power": self.power(),
            "checks": [ch.to_dict() for ch in self.checks],
            "spread": self.spread(),
        }

    def to_pandas(self, table: str = "figures"):
        """A DataFrame: ``table`` "figures" (each figure nominal and at the worst-case ends, SI),
        "checks" (one row per check) or "samples" (the Monte Carlo builds, drawn again from the seed)."""
        import pandas as pd

        if table == "figures":
            return figures_frame(self.nominal, self.worst, SPREAD_FIGURES)
        if table == "checks":
            return checks_frame(self.checks)
        if table == "samples":
            if not self.monte_carlo:
                raise ValueError("no Monte Carlo builds: analyse with monte_carlo=N first")
            s = cascade_monte_carlo_sample(self.circuit, self.conditions, self.monte_carlo["samples"],
                                           self.monte_carlo["seed"])
            data = {n: getattr(s, n) for n in SPREAD_FIGURES}
            data["state1"] = [STATE_NAMES[int(x)] for x in s.state1]
            data["state2"] = [STATE_NAMES[int(x)] for x in s.state2]
            return pd.DataFrame(data)
        raise ValueError(f"table must be 'figures', 'checks' or 'samples', not {table!r}")


def _tolerances(circuit) -> dict[str, float]:
    from .cascade import CASCADE_TOLERANCE_KEYS

    return {k: v for k, v in circuit.tolerances().items() if k in CASCADE_TOLERANCE_KEYS}


def cascade_monte_carlo_sample(circuit, conditions, n: int, seed: int):
    """``n`` seeded random builds of ``circuit`` (``cascade.cascade_monte_carlo``)."""
    from .cascade import cascade_arguments, cascade_monte_carlo

    return cascade_monte_carlo(int(n), seed=seed, tolerances=_tolerances(circuit),
                               hfe1_min=circuit.q1.hfe_min, hfe1_max=circuit.q1.hfe_max,
                               hfe2_min=circuit.q2.hfe_min, hfe2_max=circuit.q2.hfe_max,
                               temp_min=conditions.ambient_min, temp_max=conditions.ambient_max,
                               **cascade_arguments(circuit))


def analyse_cascade(circuit, conditions=None, monte_carlo: int = 0, seed: int = 0,
                    targets=None) -> CascadeAnalysis:
    """Figures, checks and spread of a ``TwoStage``; ``monte_carlo`` random builds when > 0.

    Nominal figures at ``conditions.nominal_temp``; the worst case spans part tolerances, both
    transistors' hFE ranges and the ambient range of ``conditions``.
    """
    import numpy as np

    from ..stages import Conditions
    from .cascade import POWER_FIGURE, cascade_arguments, cascade_worst_case, evaluate_cascade
    from .cascade_checks import cascade_checks
    from .cascade_targets import cascade_target_margins
    from .dc import ACTIVE

    conditions = conditions or Conditions()
    kw = cascade_arguments(circuit)
    nominal = evaluate_cascade(temp_c=conditions.nominal_temp, **kw)
    q1, q2 = circuit.q1, circuit.q2
    worst = cascade_worst_case(tolerances=_tolerances(circuit), hfe1_min=q1.hfe_min, hfe1_max=q1.hfe_max,
                               hfe2_min=q2.hfe_min, hfe2_max=q2.hfe_max, temp_min=conditions.ambient_min,
                               temp_max=conditions.ambient_max, **kw)
    checks = cascade_checks(circuit, conditions, nominal, worst, targets)

    mc = None
    if monte_carlo > 0:
        s = cascade_monte_carlo_sample(circuit, conditions, monte_carlo, seed)
        active = (s.state1 == ACTIVE) & (s.state2 == ACTIVE)
        meets: dict[str, float] = {}
        all_ok = active.copy()
        if targets is not None and targets.given():
            figs = {n: getattr(s, n) for n in SPREAD_FIGURES}
            for name, m in cascade_target_margins(targets, figs, figs).items():
                ok = (m >= 0) & active
                meets[name] = float(ok.mean())
                all_ok &= ok
        for role, attr in POWER_FIGURE.items():
            part = circuit.parts.get(role)
            if part is not None and part.rating is not None:
                ok = getattr(s, attr) <= part.rating * conditions.resistor_derating
                meets[f"{role} power"] = float(ok.mean())
                all_ok &= ok
        for name, t, attr in (("Q1", q1, "p_q1"), ("Q2", q2, "p_q2")):
            if t.pd is not None:
                ok = getattr(s, attr) <= t.pd * conditions.transistor_derating
                meets[f"{name} power"] = float(ok.mean())
                all_ok &= ok
        with np.errstate(invalid="ignore"):
            pct = {name: dict(zip(("p05", "p50", "p95"),
                                  (float(x) for x in np.nanpercentile(getattr(s, name), [5, 50, 95]))))
                   for name in _MC_SUMMARY if np.any(np.isfinite(getattr(s, name)))}
        mc = {"samples": int(monte_carlo), "seed": int(seed),
              "distribution": "parts uniform within their tolerance, each hFE log-uniform over its range, "
                              "ambient uniform over its range",
              "active": float(active.mean()), "meets": meets, "meets_all": float(all_ok.mean()),
              "percentiles": pct}
    return CascadeAnalysis(circuit=circuit, conditions=conditions, targets=targets, nominal=nominal,
                           worst=worst, checks=tuple(checks), monte_carlo=mc)

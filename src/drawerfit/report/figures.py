"""The numbers a report shows: ``analysis.analyse`` (the same figures and checks as `analyze`),
each check's margin, the Monte Carlo samples behind the histograms, and the cautions.

Margins are fractions of the limit: ≥ 0 met, < 0 missed by that share.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Callable, Mapping

from ..progress import NO_PROGRESS
from ..io.saved_design import DesignFile

__all__ = ["Check", "ReportFigures", "gather", "polarity_text"]

# The target checks' names in ``analyse`` ("target ie_min") and the words a report uses.
TARGET_WORDS = {
    "ie_min": "emitter current at least", "ie_max": "emitter current at most",
    "f_low": "−3 dB low corner at or below", "swing": "output peak into the load at least",
    "rin_min": "input impedance at least", "rout_max": "output impedance at most",
    "gain_min": "gain magnitude at least", "gain_max": "gain magnitude at most",
}
# Nominal figure beside each target check, where there is one (analysis.core field names); the
# ratings' figures are the core's POWER_FIGURE and CAP_FIGURE.
_NOMINAL_OF_TARGET = {"ie_min": "ie", "ie_max": "ie", "f_low": "f_low", "swing": "swing_peak", "rin_min": "rin",
                      "rout_max": "rout"}


def _nominal_of() -> dict[str, str]:
    from ..analysis.core import CAP_FIGURE, POWER_FIGURE

    return {**_NOMINAL_OF_TARGET, **{f"{r} power": a for r, a in POWER_FIGURE.items()}, "Q1 power": "p_q",
            **{f"{r} voltage": a for r, a in CAP_FIGURE.items()}}


@dataclass(frozen=True)
class Check:
    """One line of the checks table: ``analyse``'s check with its margin and nominal value."""

    kind: str  # "state", "target", "rating", "polarity", "advice"
    name: str
    ok: bool | None  # None: not checked (a rating is unknown)
    value: float | None
    limit: float | None
    unit: str | None
    margin: float | None
    message: str
    nominal: float | None = None
    figure: str = ""  # the quantity the numbers are of, when the name does not say (the state row: VCE)

    @property
    def instruction(self) -> bool:
        """A polarity that holds is an instruction (which way to fit the part), not a check."""
        return self.kind == "polarity" and self.ok is True


@dataclass
class ReportFigures:
    analysis: object  # analysis.Analysis
    mc: object | None  # analysis.core.Figures over the Monte Carlo builds
    mc_runs: int
    seed: int
    checks: list[Check] = field(default_factory=list)
    cautions: list[str] = field(default_factory=list)
    mc_fraction: Mapping[str, float] = field(default_factory=dict)
    lowest_f_low: float = float("nan")  # the corner with every capacitor at its high end

    @property
    def nominal(self):
        return self.analysis.nominal

    @property
    def worst(self):
        return self.analysis.worst


def _margin(check, target_margins) -> float | None:
    name = check.name
    if check.kind == "target":
        m = float(target_margins[name.removeprefix("target ")])
        return m
    if check.kind in ("rating", "advice") and check.value is not None and check.limit:
        # every rating and advice check reads "value at most limit"
        return (check.limit - check.value) / abs(check.limit)
    return None


def polarity_text(figs: "ReportFigures", role: str) -> str:
    """How to fit a polarized capacitor, in ``analyse``'s words ('' when it has no such check)."""
    for c in figs.analysis.checks:
        if c.name == f"{role} polarity":
            return c.message
    return ""


def gather(design: DesignFile, *, monte_carlo: int = 2000, seed: int = 0,
           on_step: Callable[..., None] = NO_PROGRESS) -> ReportFigures:
    """Analyse the design's stage; ``monte_carlo`` seeded random builds (0: none) for the spread."""
    import numpy as np

    from ..analysis import analyse, monte_carlo_sample
    from ..analysis.targets import Targets, target_margins
    from ..cautions import cautions_for

    stage, cond = design.stage, design.conditions
    targets = Targets(**design.targets) if design.targets else None
    on_step(note="figures, worst case" + (f", Monte Carlo of {monte_carlo} builds" if monte_carlo else ""))
    analysis = analyse(stage, cond, monte_carlo=monte_carlo, seed=seed, targets=targets)
    mc = None
    if monte_carlo > 0:
        on_step(note=f"Monte Carlo, {monte_carlo} builds")
        # The same draws as analyse() made (same seed, same tolerances): the samples themselves.
        mc = monte_carlo_sample(stage, cond, monte_carlo, seed)
    # the core's worst case takes the lowest corner with every capacitor at its high end
    lowest_f_low = float(analysis.worst.low["f_low"])
    margins = {}
    if targets is not None:
        margins = {k: np.asarray(v) for k, v in target_margins(
            targets, dict(analysis.worst.low), dict(analysis.worst.high)).items()}
    nominal = analysis.nominal
    checks = []
    nominal_of = _nominal_of()
    for c in analysis.checks:
        key = c.name.removeprefix("target ") if c.kind == "target" else c.name
        nom = None
        if key in nominal_of:
            nom = float(getattr(nominal, nominal_of[key]))
            if key.endswith(" voltage"):
                nom = abs(nom)
        elif key in ("gain_min", "gain_max"):
            nom = abs(float(nominal.gain))
        name = TARGET_WORDS.get(key, c.name) if c.kind == "target" else c.name
        m = _margin(c, margins)
        value, limit, figure = c.value, c.limit, ""
        if c.kind == "state":
            # VCE: nominal, its lowest over the box, and the saturation voltage it must stay above
            figure = "VEC" if stage.polarity == "pnp" else "VCE"
            nom, value, limit = c.value, float(analysis.worst.low["vce"]), stage.transistor.vce_sat
        elif c.kind == "polarity":
            nom, value, limit = None, None, None  # its number is the voltage across, in the message
        checks.append(Check(c.kind, name, c.ok, value, limit, c.unit or None,
                            None if m is None or (isinstance(m, float) and math.isnan(m)) else m, c.message, nom,
                            figure))
    cautions = [c.text for c in cautions_for(analysis, mains=bool(getattr(design.spec, "mains", False)))]
    frac = {}
    if analysis.monte_carlo:
        frac = dict(analysis.monte_carlo.get("meets", {}))
        if targets is not None or frac:
            frac["all"] = float(analysis.monte_carlo.get("meets_all", float("nan")))
    return ReportFigures(analysis=analysis, mc=mc, mc_runs=monte_carlo, seed=seed, checks=checks,
                         cautions=cautions, mc_fraction=frac, lowest_f_low=lowest_f_low)

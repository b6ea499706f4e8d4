"""Analyse one stage: DC point, small signal, swing, ratings and spread, as one rich result.

``analyse(stage)`` wraps the vectorised engine in ``analysis.core`` (which the optimizer uses
directly on arrays of candidates).  Imports of numpy happen on first use of this package.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

if TYPE_CHECKING:  # pragma: no cover
    from ..stages import Conditions, Stage
    from .result import Analysis
    from .targets import Targets

__all__ = ["analyse", "analyze", "Analysis", "Check", "Targets", "monte_carlo_sample"]

_MC_SUMMARY = ("ie", "ve", "vc", "gain", "rin", "rout", "f_low", "swing_peak", "p_q")


def __getattr__(name):
    if name in ("Analysis", "Check"):
        from . import result

        return getattr(result, name)
    if name == "Targets":
        from .targets import Targets

        return Targets
    raise AttributeError(name)


def analyse(stage: "Stage", conditions: "Conditions | None" = None, monte_carlo: int = 0,
            seed: int = 0, targets: "Targets | None" = None) -> "Analysis":
    """Figures, checks and spread of ``stage``; ``monte_carlo`` random builds when > 0.

    Nominal figures are at ``conditions.nominal_temp``; the worst case spans part tolerances,
    the transistor's hFE range and the ambient range of ``conditions``.
    """
    import numpy as np

    from ..stages import Conditions
    from . import core
    from .checks import POWER_FIGURE, stage_checks
    from .result import Analysis
    from .targets import target_margins

    conditions = conditions or Conditions()
    kw = stage.core_arguments()
    nominal = core.evaluate(temp_c=conditions.nominal_temp, **kw)
    t = stage.transistor
    tolerances = {k: v for k, v in stage.tolerances().items() if k in core.TOLERANCE_KEYS}
    worst = core.worst_case(tolerances=tolerances, hfe_min=t.hfe_min, hfe_max=t.hfe_max,
                            temp_min=conditions.ambient_min, temp_max=conditions.ambient_max, **kw)
    checks = stage_checks(stage, conditions, nominal, worst, targets)

    mc = None
    if monte_carlo > 0:
        sample = monte_carlo_sample(stage, conditions, monte_carlo, seed)
        active = sample.state == core.ACTIVE
        meets: dict[str, float] = {}
        all_ok = active.copy()
        if targets is not None and targets.given():
            figs = {name: getattr(sample, name) for name in core.NUMERIC_FIELDS}
            for name, m in target_margins(targets, figs, figs).items():
                ok = (m >= 0) & active
                meets[name] = float(ok.mean())
                all_ok &= ok
        for role, attr in POWER_FIGURE.items():
            part = stage.parts.get(role)
            if part is not None and part.rating is not None:
                ok = getattr(sample, attr) <= part.rating * conditions.resistor_derating
                meets[f"{role} power"] = float(ok.mean())
                all_ok &= ok
        if t.pd is not None:
            ok = sample.p_q <= t.pd * conditions.transistor_derating
            meets["Q1 power"] = float(ok.mean())
            all_ok &= ok
        with np.errstate(invalid="ignore"):
            pct = {
                name: dict(zip(("p05", "p50", "p95"),
                               (float(x) for x in np.nanpercentile(getattr(sample, name), [5, 50, 95]))))
                for name in _MC_SUMMARY
                if np.any(np.isfinite(getattr(sample, name)))
            }
        mc = {
            "samples": int(monte_carlo),
            "seed": int(seed),
            "distribution": "parts uniform within their tolerance, hFE log-uniform over its range, "
                            "ambient uniform over its range",
            "active": float(active.mean()),
            "meets": meets,
            "meets_all": float(all_ok.mean()),
            "percentiles": pct,
        }
    return Analysis(stage=stage, conditions=conditions, targets=targets, nominal=nominal,
                    worst=worst, checks=tuple(checks), monte_carlo=mc)


# The library writes "analyse"; the command is `drawerfit analyze`.  One function, both spellings.
analyze = analyse


def monte_carlo_sample(stage: "Stage", conditions: "Conditions", n: int, seed: int):
    """``n`` seeded random builds of ``stage`` (``core.monte_carlo``): parts within their tolerances,
    hFE over its range, the ambient over the range of ``conditions``."""
    from . import core

    t = stage.transistor
    tolerances = {k: v for k, v in stage.tolerances().items() if k in core.TOLERANCE_KEYS}
    return core.monte_carlo(int(n), seed=seed, tolerances=tolerances, hfe_min=t.hfe_min, hfe_max=t.hfe_max,
                            temp_min=conditions.ambient_min, temp_max=conditions.ambient_max,
                            **stage.core_arguments())

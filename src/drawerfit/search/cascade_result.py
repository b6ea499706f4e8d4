"""The two-stage design search's problem from a spec, and its answer as JSON-safe data."""

from __future__ import annotations

from ..parts import SpecError

__all__ = ["cascade_problem", "cascade_design_dict", "design_two_stage"]


def cascade_problem(spec, *, units: int, max_parts: int):
    """The joint search's problem from a two-stage design spec (``io.cascade_spec.CascadeSpec``)."""
    from ..search.cascade_search import CascadeProblem
    from ..stages import Conditions

    if spec.parts:
        raise SpecError(f"{spec.path}: the spec has [parts]: `design` takes a spec with [targets] only "
                        "(use `analyze` for an amplifier already chosen)")
    if spec.targets is None:
        raise SpecError(f"{spec.path}: [targets] is missing")
    return CascadeProblem(spec.polarity, spec.supply, spec.coupling, spec.targets,
                          conditions=spec.conditions or Conditions(), source_resistance=spec.source_resistance,
                          load=spec.load, bypass=spec.bypass, max_parts=max_parts, units=units)


def design_two_stage(spec, stock, *, units: int, max_parts: int, top: int, exhaustive: bool, budget: float):
    """``drawerfit.design`` on a two-stage spec: both stages searched together, the outcome with its
    problem, spec and stock attached (``stock`` a loaded ``Stock``)."""
    from .cascade_search import WORK_BUDGET, design_cascade

    problem = cascade_problem(spec, units=units, max_parts=max_parts)
    outcome = design_cascade(problem, list(stock.lines), top=top, exhaustive=exhaustive,
                             budget=int(WORK_BUDGET * budget), labels=dict(spec.transistor_labels or {}))
    outcome.problem, outcome.spec, outcome.stock = problem, spec, stock
    return outcome


def cascade_design_dict(problem, outcome, analysis=None) -> dict:
    """The answer as JSON-safe data: status, each design's parts with their stock lines, margins."""
    from ..analysis.result import json_float

    def design(d):
        roles = {}
        for role in d.choice:
            eq = d.equivalent(role)
            roles[role] = {"value": json_float(eq.value), "tolerance": json_float(d.tolerance(role)),
                           "arrangement": eq.arrangement,
                           "parts": [{"row": ln.source.row, "location": ln.location, "label": ln.label,
                                      "value": json_float(ln.value), "count_per_unit": n} for ln, n in eq.uses]}
        return {"part_count": d.part_count, "distance": json_float(d.distance),
                "smallest_margin": json_float(min(d.margins.values())),
                "transistors": {"Q1": {"label": d.q1.label, "row": d.q1.source.row, "location": d.q1.location},
                                "Q2": {"label": d.q2.label, "row": d.q2.source.row, "location": d.q2.location}},
                "roles": roles, "worst_case_margins": {k: json_float(v) for k, v in d.margins.items()}}

    status = ("optimal" if outcome.proven else "best found") if outcome.designs else (
        "infeasible" if outcome.proven else "not found within the work budget")
    from ..stages import two_stage

    out = {"topology": two_stage.NAME, "coupling": problem.coupling, "polarity": problem.polarity,
           "status": status, "proven": outcome.proven, "units": problem.units,
           "designs": [design(d) for d in outcome.designs], "judged": outcome.judged, "tried": outcome.tried,
           "reasons": list(outcome.reasons)}
    if analysis is not None:
        out["analysis"] = analysis.to_dict()
    return out

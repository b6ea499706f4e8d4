"""One stage analysed with each of several transistors in one vectorised pass (substitutes).

``analyse_transistors(stage, models)`` gives, for each model, the ``Analysis`` that
``analyse(stage with that transistor, conditions, targets=targets)`` gives, with the same steps
(nominal figures, worst case over tolerances, hFE range and ambient, ``stage_checks``) but the
engine called once for all models instead of once per model: with a few dozen transistor lines
in a drawer that is the difference between a fraction of a second and many seconds.
"""

from __future__ import annotations

from dataclasses import fields, replace
from typing import Sequence

__all__ = ["analyse_transistors"]


def analyse_transistors(stage, models: Sequence, conditions=None, targets=None) -> list:
    """The ``Analysis`` of ``stage`` with each ``stages.TransistorModel`` of ``models`` in place of
    its own (models of the stage's polarity), in the order given; no Monte Carlo."""
    from ..stages import Conditions

    conditions = conditions or Conditions()
    out: list = [None] * len(models)
    # i_sat (VBE from the diode law) is a per-batch keyword that may be None: one pass per value
    groups: dict[object, list[int]] = {}
    for i, m in enumerate(models):
        groups.setdefault(m.i_sat, []).append(i)
    for i_sat, idx in groups.items():
        for i, a in zip(idx, _batch(stage, [models[i] for i in idx], i_sat, conditions, targets)):
            out[i] = a
    return out


def _batch(stage, models, i_sat, conditions, targets) -> list:
    import numpy as np

    from . import core
    from .checks import stage_checks
    from .result import Analysis

    kw = stage.core_arguments()
    kw.update(hfe=np.array([m.hfe for m in models]), vbe=np.array([m.vbe for m in models]),
              vce_sat=np.array([m.vce_sat for m in models]),
              vbe_tempco=np.array([m.vbe_tempco for m in models]), i_sat=i_sat)
    nominal = core.evaluate(temp_c=conditions.nominal_temp, **kw)
    tolerances = {k: v for k, v in stage.tolerances().items() if k in core.TOLERANCE_KEYS}
    worst = core.worst_case(tolerances=tolerances, hfe_min=np.array([m.hfe_min for m in models]),
                            hfe_max=np.array([m.hfe_max for m in models]), temp_min=conditions.ambient_min,
                            temp_max=conditions.ambient_max, **kw)
    n = len(models)
    out = []
    for i, m in enumerate(models):
        one = replace(stage, transistor=m)
        nom = _take(nominal, i, n)
        w = core.WorstCase(low={k: _pick(v, i, n) for k, v in worst.low.items()},
                           high={k: _pick(v, i, n) for k, v in worst.high.items()},
                           all_active=_pick(worst.all_active, i, n), vertices=worst.vertices)
        checks = stage_checks(one, conditions, nom, w, targets)
        out.append(Analysis(stage=one, conditions=conditions, targets=targets, nominal=nom, worst=w,
                            checks=tuple(checks)))
    return out


def _pick(v, i: int, n: int):
    """Element ``i`` of a batch array as a 0-d array (what a one-stage analysis holds); a figure
    that does not depend on the transistor may come back unbroadcast and is the same for all."""
    import numpy as np

    a = np.asarray(v)
    return np.asarray(a[i]) if a.ndim >= 1 and a.shape[0] == n else a


def _take(figures, i: int, n: int):
    values = {}
    for f in fields(figures):
        v = getattr(figures, f.name)
        if f.name == "inputs":
            values[f.name] = {k: (x if isinstance(x, str) else _pick(x, i, n)) for k, x in v.items()}
        else:
            values[f.name] = None if v is None else _pick(v, i, n)
    return type(figures)(**values)

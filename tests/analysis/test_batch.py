"""analysis.batch.analyse_transistors: one stage with several transistors in one vectorised pass.

Expected values: ``analysis.analyse`` run directly, once per transistor, on the stage with that
transistor (the property "one pass gives what one call per transistor gives").  The corner's root
finder stops when the whole batch has converged, so the corners may differ in the last digits
(rel 1e-6); every other figure and every check's verdict must be the same.
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest

from drawerfit.analysis import analyse
from drawerfit.analysis.batch import analyse_transistors
from drawerfit.analysis.targets import Targets
from drawerfit.stages import Conditions, Part, Stage, TransistorModel


def _stage(kind: str, polarity: str) -> Stage:
    if kind == "ef":
        parts = dict(R1=Part(47e3, 0.01, 0.25), R2=Part(47e3, 0.01, 0.25), RE=Part(1e3, 0.01, 0.25),
                     C1=Part(10e-6, 0.2, 25, True), C2=Part(100e-6, 0.2, 16, True))
        return Stage("emitter-follower", polarity, 12.0, parts, TransistorModel(polarity, 100, 300), 600.0, 2.2e3)
    parts = dict(R1=Part(18e3, 0.05), R2=Part(82e3, 0.05) if polarity == "pnp" else Part(4.7e3, 0.05),
                 RE=Part(270, 0.05, 0.25), RE2=Part(1.2e3, 0.05, 0.25), RC=Part(5.6e3, 0.05, 0.25),
                 C1=Part(4.7e-6, 0.2, 25, True), C2=Part(4.7e-6, 0.2, 25, True), CE=Part(220e-6, 0.2, 6.3, True))
    if polarity == "npn":
        parts["R1"] = Part(82e3, 0.05)
        parts["R2"] = Part(18e3, 0.05)
    return Stage("common-emitter", polarity, 15.0, parts, TransistorModel(polarity, 100, 300), 1e3, 22e3)


def _models(polarity: str, seed: int, n: int = 7) -> list[TransistorModel]:
    rng = np.random.default_rng(seed)
    out = []
    for i in range(n):
        lo = float(rng.uniform(20, 300))
        out.append(TransistorModel(polarity, lo, lo * float(rng.uniform(1, 4)), vbe=float(rng.uniform(0.6, 0.72)),
                                   vce_sat=float(rng.choice([0.1, 0.2, 0.4])),
                                   vceo=float(rng.choice([10, 30, 60])) if i % 3 else None,
                                   ic_max=float(rng.choice([0.005, 0.1])), pd=float(rng.choice([0.01, 0.5])),
                                   label=f"Bench{polarity.upper()}-{i}"))
    out.append(TransistorModel(polarity, 150, 150, i_sat=1e-14, label="one-figure, diode law"))
    return out


@pytest.mark.parametrize("kind,polarity,seed", [("ef", "npn", 1), ("ef", "pnp", 2), ("ce", "npn", 3),
                                                ("ce", "pnp", 4)])
def test_one_pass_equals_one_analysis_per_transistor(kind, polarity, seed):
    stage = _stage(kind, polarity)
    conditions = Conditions(ambient_min=10, ambient_max=40)
    targets = Targets(ie_min=1e-3, ie_max=5e-3, f_low=20.0, swing=1.0)
    models = _models(polarity, seed)
    batch = analyse_transistors(stage, models, conditions, targets)
    assert len(batch) == len(models)
    for m, got in zip(models, batch):
        want = analyse(replace(stage, transistor=m), conditions, targets=targets)
        assert got.stage.transistor == m
        assert [(c.name, c.ok, c.kind) for c in got.checks] == [(c.name, c.ok, c.kind) for c in want.checks], m.label
        for g, w in zip(got.checks, want.checks):
            for x, y in ((g.value, w.value), (g.limit, w.limit)):
                if x is None or not math.isfinite(float(x)):
                    assert y is None or not math.isfinite(float(y))
                else:
                    assert float(x) == pytest.approx(float(y), rel=1e-6), (m.label, g.name)
        gd, wd = got.to_dict(), want.to_dict()
        assert gd["dc"] == wd["dc"]
        assert gd["swing"] == wd["swing"] and gd["power"] == wd["power"]
        for name, lohi in wd["spread"]["worst_case"]["figures"].items():
            for end in ("low", "high"):
                a, b = gd["spread"]["worst_case"]["figures"][name][end], lohi[end]
                assert (a is None) == (b is None) and (a is None or a == pytest.approx(b, rel=1e-6)), (name, end)


def test_no_models_no_analyses():
    assert analyse_transistors(_stage("ef", "npn"), []) == []

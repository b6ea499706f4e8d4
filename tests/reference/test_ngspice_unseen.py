"""Stages nobody chose: seeded random stages of both topologies and polarities against ngspice.

Expected values: ngspice (batch mode).  The stages are drawn afresh from a seeded generator of
plausible designs (supply, bias point, divider stiffness, load, source, capacitors all random),
so the check does not rest on stages picked by hand.  Another seed tries other stages:

    DRAWERFIT_SPICE_SEED=123 python3 -m pytest tests/reference/test_ngspice_unseen.py

Targets from the issue: IE and VE within 1.5 %, gain within 2 %, corner within 5 %; input and
output impedance within 2 %.
"""

from __future__ import annotations

import os

import numpy as np
import pytest

from drawerfit.analysis.core import ACTIVE, evaluate
from drawerfit.stages import Part, Stage, TransistorModel

from .spice_harness import simulate, simulate_rout

pytestmark = pytest.mark.ngspice

SEED = int(os.environ.get("DRAWERFIT_SPICE_SEED", "20261202"))
COUNT = 16


def _random_stage(rng: np.random.Generator):
    topology = rng.choice(["emitter-follower", "common-emitter"])
    polarity = rng.choice(["npn", "pnp"])
    vcc = rng.uniform(5, 30)
    hfe_lo = rng.uniform(40, 200)
    hfe_hi = hfe_lo * rng.uniform(1, 3)
    beta = np.sqrt(hfe_lo * hfe_hi)
    ie = np.exp(rng.uniform(np.log(0.3e-3), np.log(20e-3)))
    frac_e = rng.uniform(0.15, 0.5) if topology == "emitter-follower" else rng.uniform(0.05, 0.2)
    re_dc = frac_e * vcc / ie
    vth = frac_e * vcc + 0.65
    rth = rng.uniform(0.02, 0.6) * beta * re_dc
    r_up, r_down = rth * vcc / vth, rth * vcc / (vcc - vth)  # supply side, emitter-rail side
    parts = {"C1": Part(np.exp(rng.uniform(np.log(0.47e-6), np.log(100e-6)))),
             "C2": Part(np.exp(rng.uniform(np.log(1e-6), np.log(1000e-6))))}
    if topology == "emitter-follower":
        parts["RE"] = Part(re_dc)
    else:
        split = rng.uniform(0.05, 1.0)
        parts["RE"] = Part(re_dc * split)
        if split < 0.95:
            parts["RE2"] = Part(re_dc * (1 - split))
            if rng.random() < 0.6:
                parts["CE"] = Part(np.exp(rng.uniform(np.log(10e-6), np.log(1000e-6))))
        parts["RC"] = Part(rng.uniform(0.3, 0.6) * (vcc - frac_e * vcc) / ie)
    # For the PNP mirror the emitter rail is the supply: the divider's roles swap.
    r1, r2 = (r_up, r_down) if polarity == "npn" else (r_down, r_up)
    parts["R1"], parts["R2"] = Part(r1), Part(r2)
    load = None if rng.random() < 0.2 else float(np.exp(rng.uniform(np.log(8), np.log(100e3))))
    rs = 0.0 if rng.random() < 0.2 else float(np.exp(rng.uniform(np.log(10), np.log(20e3))))
    t = TransistorModel(str(polarity), hfe_lo, hfe_hi, vbe=rng.uniform(0.58, 0.72), label="QX-RAND")
    return Stage(str(topology), str(polarity), vcc, parts, t, rs, load)


def _stages():
    rng = np.random.default_rng(SEED)
    out = []
    while len(out) < COUNT:
        stage = _random_stage(rng)
        fig = evaluate(**stage.core_arguments())
        if int(fig.state) == ACTIVE and 0.01 < float(fig.f_low) < 1e4:
            out.append((stage, fig))
    return out


STAGES = _stages()


@pytest.mark.parametrize("index", range(COUNT))
def test_unseen_stage_against_ngspice(tmp_path, index):
    stage, fig = STAGES[index]
    sim = simulate(stage, tmp_path)
    label = f"{stage.topology} {stage.polarity} seed {SEED} #{index}"
    assert float(fig.ie) == pytest.approx(sim.ie, rel=0.015), label
    assert float(fig.ve) == pytest.approx(sim.ve, rel=0.015), label
    assert float(fig.gain) == pytest.approx(sim.gain, rel=0.02), label
    assert float(fig.rin) == pytest.approx(sim.rin, rel=0.02), label
    assert float(fig.f_low) == pytest.approx(sim.f_low, rel=0.05), label
    assert float(fig.rout) == pytest.approx(simulate_rout(stage, tmp_path), rel=0.02), label

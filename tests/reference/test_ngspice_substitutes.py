"""Transistor substitutes held against ngspice: the one that keeps the stage's emitter current in its
window, and the one that moves it out (the crafted repair of tests/repair/crafted.py).

What is promised (docs/repair.md): a substitute "keeps the stage in spec unchanged" when every
target holds at every vertex of the worst-case box (each resistor at value·(1 ± tol), the
substitute's hFE at both ends of its range, the ambient at both ends); one that "breaks" it names
the check and its worst-case value.

Expected values: ngspice (batch mode, ``spice_harness.simulate``), with the stage's resistors at the
ends that give the highest and the lowest emitter current (NPN follower: R1 low, R2 high, RE low,
hFE max, hottest ambient; and the opposite ends, hFE min, coldest), the transistor simulated with
BF at that hFE end, IS tuned at 25 °C to the stock line's VBE and the ambient reached by running
ngspice at that temperature (``sim_temp_c``), so VBE drifts by ngspice's own transistor model.
Allowance: 1.5 % on IE, the model-versus-simulator tolerance of tests/reference/test_ngspice_stages.py
and test_ngspice_temperature.py.
"""

from __future__ import annotations

import pytest

import drawerfit
from drawerfit.stages import Part, Stage, TransistorModel

from ..repair.crafted import BREAKER, KEEPER, write_case
from .spice_harness import simulate

pytestmark = pytest.mark.ngspice

IE_TOL = 0.015


def _vertex_stage(spec, line, end: int) -> Stage:
    """The spec's stage at the vertex of highest (``end`` +1) or lowest (−1) IE, with ``line``'s hFE end."""
    ends = {"R1": -end, "R2": end, "RE": -end}
    parts = {}
    for role, p in spec.parts.items():
        if role in ends:
            parts[role] = Part(p.value * (1 + ends[role] * p.tolerance))
        else:  # capacitors do not move the operating point
            parts[role] = Part(p.value)
    hfe = line.hfe_max if end > 0 else line.hfe_min
    tr = TransistorModel("npn", hfe, hfe, vbe=line.vbe, vce_sat=line.vce_sat, label=line.label)
    return Stage(spec.topology, spec.polarity, spec.supply, parts, tr, spec.source_resistance, spec.load)


def test_the_keeper_and_the_breaker_in_ngspice(tmp_path):
    spec_path, stock_path = write_case(tmp_path)
    result = drawerfit.substitutes("npn", stock_path, spec=spec_path)
    spec = result.spec
    t = spec.targets
    c = spec.conditions
    by = {s.line.label: s for s in result.substitutes}
    keeper, breaker = by[KEEPER], by[BREAKER]
    assert keeper.stage.status == "keeps" and breaker.stage.status == "breaks"
    sims = {}
    for s in (keeper, breaker):
        for end, temp in ((+1, c.ambient_max), (-1, c.ambient_min)):
            where = tmp_path / f"{s.line.label}{end:+d}"
            where.mkdir()
            sims[s.line.label, end] = simulate(_vertex_stage(spec, s.line, end), where, sim_temp_c=temp).ie
    # the keeper: ngspice's IE at both extreme vertices inside the window the spec asks
    for end in (+1, -1):
        ie = sims[KEEPER, end]
        assert t.ie_min * (1 - IE_TOL) <= ie <= t.ie_max * (1 + IE_TOL), f"{KEEPER} vertex {end:+d}: IE {ie:.6g} A"
    # and the tool's worst-case IE is ngspice's at those vertices
    assert keeper.stage.figures["ie_high"] == pytest.approx(sims[KEEPER, +1], rel=IE_TOL)
    assert keeper.stage.figures["ie_low"] == pytest.approx(sims[KEEPER, -1], rel=IE_TOL)
    # the breaker: at its lowest-hFE vertex ngspice's IE falls below the window, beyond the allowance,
    # and the worst case the tool names is the one ngspice finds
    (brk,) = breaker.stage.breaks
    assert brk.check == "target ie_min"
    assert sims[BREAKER, -1] < t.ie_min * (1 - IE_TOL)
    assert brk.value == pytest.approx(sims[BREAKER, -1], rel=IE_TOL)
    assert brk.excess == pytest.approx((t.ie_min - sims[BREAKER, -1]) / t.ie_min, abs=IE_TOL)
    assert t.ie_min <= sims[BREAKER, +1] <= t.ie_max, sims  # at its highest hFE it would have been fine

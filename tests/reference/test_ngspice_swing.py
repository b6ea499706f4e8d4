"""Output swing limits held against ngspice transient runs.

Expected values: ngspice (batch mode).  Each stage is overdriven to three times the tool's
symmetric peak; the simulated output then flattens at the limits.  Cut-off is sharp in the
simulator (the transistor simply stops conducting), so it must agree within 1.5 %; saturation
is soft in the Ebers-Moll model while the tool takes VCE(sat) = 0.2 V (common practice), so
within 5 %, and only for the common-emitter stage.
"""

from __future__ import annotations

import pytest

from drawerfit.analysis.core import LIMIT_CUTOFF, evaluate

from .spice_harness import simulate_clipping
from .test_ngspice_stages import STAGES, _stage

pytestmark = pytest.mark.ngspice

CASES = ["ef-npn-heavy-load", "ef-pnp-heavy-load", "ef-npn-light", "ce-npn-unbypassed",
         "ce-npn-bypassed", "ce-pnp-bypassed"]


@pytest.mark.parametrize("name", CASES)
def test_clipping_levels_against_ngspice(tmp_path, name):
    stage = _stage(*STAGES[name])
    f = evaluate(**stage.core_arguments())
    high, low = simulate_clipping(stage, tmp_path, 3 * float(f.swing_peak) / abs(float(f.gain)))
    # swing_up is the room away from the emitter's rail: upward for NPN, downward for PNP.
    away, toward = (high, -low) if stage.polarity == "npn" else (-low, high)
    if stage.topology == "emitter-follower":
        # Follower: cut-off bounds the side toward the emitter rail (IE·(RE‖RL)).
        cutoff_sim, cutoff_tool = toward, float(f.swing_down)
        sat_sim, sat_tool = away, float(f.swing_up)
    else:
        # Common emitter: cut-off lets the collector move away from the emitter rail (IC·(RC‖RL)).
        cutoff_sim, cutoff_tool = away, float(f.swing_up)
        sat_sim, sat_tool = toward, float(f.swing_down)
    assert cutoff_sim == pytest.approx(cutoff_tool, rel=0.015)
    if stage.topology == "common-emitter":
        # (A follower's top end depends on how hard the base is overdriven past saturation,
        # so only the common-emitter saturation side is compared.)
        assert sat_sim == pytest.approx(sat_tool, rel=0.05)
    binding = min(cutoff_tool, sat_tool)
    assert float(f.swing_peak) == pytest.approx(binding)
    assert (int(f.swing_limit) == LIMIT_CUTOFF) == (cutoff_tool <= sat_tool)

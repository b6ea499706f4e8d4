"""The VBE drift rule of thumb held against ngspice's own transistor temperature model.

Common practice, no source: VBE falls by about 2 mV/°C.  Check value: ngspice (default
Gummel-Poon temperature parameters, EG = 1.11 eV, XTI = 3) with IS tuned at 25 °C and the
circuit simulated at 50 °C.  The tool's IE at 50 °C must then agree within 1.5 %.
"""

from __future__ import annotations

import pytest

from drawerfit.analysis.core import evaluate

from .spice_harness import simulate
from .test_ngspice_stages import STAGES, _stage

pytestmark = pytest.mark.ngspice


@pytest.mark.parametrize("name", ["ef-npn-light", "ce-npn-bypassed", "ce-pnp-bypassed"])
def test_drift_with_temperature_against_ngspice(tmp_path, name):
    stage = _stage(*STAGES[name])
    (tmp_path / "cold").mkdir()
    (tmp_path / "hot").mkdir()
    cold = simulate(stage, tmp_path / "cold")
    hot = simulate(stage, tmp_path / "hot", sim_temp_c=50.0)
    drift = (abs(hot.vb - hot.ve) - abs(cold.vb - cold.ve)) / 25.0
    assert -2.5e-3 < drift < -1.5e-3  # V/°C: the rule of thumb, ±25 %
    tool = evaluate(temp_c=50.0, **stage.core_arguments())
    assert float(tool.ie) == pytest.approx(hot.ie, rel=0.015)

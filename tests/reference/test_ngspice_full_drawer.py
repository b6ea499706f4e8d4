"""The full-size sample drawer: a common-emitter design found within bounded memory, held in ngspice.

The invented E96 drawer (inventory_samples/full_lab_e96.csv, 779 lines) is searched by the command
in a fresh process under an address-space ceiling, with pairs and triples allowed; its peak
resident memory must stay under 1 GB.  The chosen stage is then simulated in ngspice (batch mode,
through spice_harness) at the nominal point and at the two vertices of the worst-case box where IE
is highest and lowest (resistors at their tolerance ends, capacitors at their low ends, hFE at its
ends, the ambient at its ends through ngspice's own temperature model), and every target must hold
there within the model-versus-simulator allowances of tests/reference/test_ngspice_stages.py.
"""

from __future__ import annotations

import json
import math

import pytest

from drawerfit.stages import Part, Stage, TransistorModel

from ..conftest import ROOT
from ..search.test_design_scale import _child
from .spice_harness import simulate

pytestmark = pytest.mark.ngspice

IE_TOL, GAIN_TOL, CORNER_TOL = 0.015, 0.02, 0.05


def test_full_size_drawer_common_emitter_design_holds_in_ngspice(tmp_path):
    drawer = ROOT / "inventory_samples" / "full_lab_e96.csv"
    spec = ROOT / "inventory_samples" / "specs" / "gain_stage.toml"
    r, peak_mb = _child(["design", str(spec), "--stock", str(drawer), "--json", "--max-parts", "3"])
    assert r.returncode == 0, r.stderr[-2000:]
    data = json.loads(r.stdout)
    assert data["feasible"] and data["status"] == "optimal" and data["search"]["proven"]
    assert peak_mb < 1024  # the bound for any drawer up to 2,000 lines
    tr = data["transistor"]
    parts = data["parts"]
    # the spec (inventory_samples/specs/gain_stage.toml): IE 1 mA ±10 %, gain 8..12, f_low 20 Hz,
    # 12 V, 600 Ω source, 10 kΩ load, ambient 0..50 °C
    ie_min, ie_max, g_min, g_max, f_low = 0.9e-3, 1.1e-3, 8.0, 12.0, 20.0
    ra, rb = ("R1", "R2")
    hi = {ra: -1, rb: 1, "RE": -1, "RE2": -1, "RC": 1}
    lo = {k: -e for k, e in hi.items()}
    points = [("nominal", {}, math.sqrt(tr["hfe_min"] * tr["hfe_max"]), None),
              ("IE highest", hi, tr["hfe_max"], 50.0), ("IE lowest", lo, tr["hfe_min"], 0.0)]
    for k, (name, ends, hfe, temp) in enumerate(points):
        stage_parts = {}
        for role, p in parts.items():
            v, t = p["value"], p["tolerance"]
            if role.startswith("R"):
                stage_parts[role] = Part(v * (1 + ends.get(role, 0) * t))
            else:
                stage_parts[role] = Part(v if name == "nominal" else v * (1 - t))
        model = TransistorModel("npn", hfe, hfe, vbe=tr["vbe"], vce_sat=tr["vce_sat"])
        stage = Stage("common-emitter", "npn", 12.0, stage_parts, model, 600.0, 10e3)
        where = tmp_path / f"p{k}"
        where.mkdir()
        sim = simulate(stage, where, sim_temp_c=temp)
        at = f"{name}: ngspice IE {sim.ie:.6g} gain {sim.gain:.5g} f_low {sim.f_low:.4g}"
        assert ie_min * (1 - IE_TOL) <= sim.ie <= ie_max * (1 + IE_TOL), at
        assert g_min * (1 - GAIN_TOL) <= abs(sim.gain) <= g_max * (1 + GAIN_TOL), at
        assert sim.f_low <= f_low * (1 + CORNER_TOL), at

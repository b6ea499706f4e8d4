"""The exported netlist simulates to the tool's operating point and response.

Expected values: ngspice (batch mode, Debian package) run on the deck `drawerfit export
--netlist` writes, with a .control block added that prints the node voltages and the
transistor's currents, and sweeps the response.  Targets from the issues: IE and VE within
1.5 %, mid-band gain within 2 %, the -3 dB corner within 5 %.
"""

from __future__ import annotations

import math
import re
import subprocess

import numpy as np

import pytest
from click.testing import CliRunner

from drawerfit.analysis.core import evaluate
from drawerfit.cli import main
from drawerfit.io.saved_design import load_design

from ..report.helpers import CE_PNP, FOLLOWER, PLAIN, VARIANTS, with_networks, write_spec
from .spice_harness import _corner, require_ngspice, run_deck

pytestmark = pytest.mark.ngspice

_CONTROL = """.control
option reltol=1e-7 abstol=1e-15 vntol=1e-9
op
print v(e) v(b) @q1[ic] @q1[ib]
ac dec 200 1e-3 1e6
wrdata ac.txt vm(out) vr(out)
.endc
"""


def _run(deck_text: str, workdir, control: str):
    """Run the deck as written, with ``control`` before its .end: (printed values, the output)."""
    assert deck_text.rstrip().endswith(".end")
    return run_deck(deck_text.rstrip()[: -len(".end")] + control + ".end\n", workdir, "run")


def _simulate(deck_text: str, workdir) -> dict:
    values, run = _run(deck_text, workdir, _CONTROL)
    if not {"v(e)", "@q1[ic]", "@q1[ib]"} <= set(values):
        raise AssertionError(f"ngspice gave no operating point ({run.returncode}):\n{run.stdout}\n{run.stderr}")
    return values




@pytest.mark.parametrize("source", [FOLLOWER, CE_PNP, PLAIN, *VARIANTS], ids=lambda s: getattr(s, "stem", s))
def test_exported_netlist_gives_the_tools_operating_point(tmp_path, source):
    path = source if not isinstance(source, str) else write_spec(tmp_path, source)
    deck = tmp_path / "stage.cir"
    res = CliRunner().invoke(main, ["export", str(path), "--netlist", str(deck)])
    assert res.exit_code == 0, res.output
    text = deck.read_text(encoding="utf-8")
    sim = _simulate(text, tmp_path)
    design = load_design(path)
    fig = evaluate(temp_c=design.conditions.nominal_temp, **design.stage.core_arguments())
    ie_sim = abs(sim["@q1[ic]"]) + abs(sim["@q1[ib]"])
    assert ie_sim == pytest.approx(float(fig.ie), rel=0.015)
    assert sim["v(e)"] == pytest.approx(float(fig.ve), rel=0.015)
    data = np.loadtxt(tmp_path / "ac.txt")
    freq, mag, real = data[:, 0], data[:, 1], data[:, 3]
    gain = math.copysign(mag[-1], real[-1])
    assert gain == pytest.approx(float(fig.gain), rel=0.02)
    assert _corner(freq, mag, mag[-1]) == pytest.approx(float(fig.f_low), rel=0.05)


def test_netlist_carries_the_ratings_and_says_where_parts_come_from(tmp_path):
    deck = tmp_path / "stage.cir"
    assert CliRunner().invoke(main, ["export", str(FOLLOWER), "--netlist", str(deck)]).exit_code == 0
    text = deck.read_text(encoding="utf-8")
    model = next(l for l in text.splitlines() if l.startswith(".model"))
    # ratings of the stock line in the design file: VCEO 40 V, IC max 200 mA, Pd 500 mW
    assert "VCE_MAX=40" in model and "IC_MAX=0.2" in model and "PD_MAX=0.5" in model
    assert "from bin R-02" in text and "from bin T-01" in text
    assert "polarized: fit the + end toward the base" in text
    # every comment line of ours is plain ASCII
    ours = [l for l in text.splitlines() if l.startswith("*   ")]
    assert ours and all(l.isascii() for l in ours)


def test_ngspice_warns_when_a_rating_is_passed(tmp_path):
    # ngspice's safe-operating-area check reads the ratings written into the model: this stage
    # sits at a VCE of several volts (the tool's figure, asserted below), over a VCEO of 3 V.
    exe = require_ngspice()
    spec = write_spec(tmp_path, "ce-npn-re2-unbypassed")
    stage = load_design(spec).stage
    assert float(evaluate(**stage.core_arguments()).vce) > 4.0
    text = spec.read_text().replace('hfe_max = 300', 'hfe_max = 300\nvceo = "3 V"')
    spec.write_text(text)
    deck = tmp_path / "stage.cir"
    assert CliRunner().invoke(main, ["export", str(spec), "--netlist", str(deck)]).exit_code == 0
    run = subprocess.run([exe, "-b", deck.name], cwd=tmp_path, capture_output=True, text=True, timeout=60)
    assert "exceeded Vce_max" in run.stdout + run.stderr


def test_ngspice_is_quiet_when_the_ratings_hold(tmp_path):
    # the follower design: VCE about 6 V, IC about 7 mA, Pd about 45 mW against 40 V, 200 mA, 500 mW
    exe = require_ngspice()
    deck = tmp_path / "stage.cir"
    assert CliRunner().invoke(main, ["export", str(FOLLOWER), "--netlist", str(deck)]).exit_code == 0
    run = subprocess.run([exe, "-b", deck.name], cwd=tmp_path, capture_output=True, text=True, timeout=60)
    assert "exceeded" not in run.stdout + run.stderr
    assert "Error" not in run.stdout + run.stderr


# Roles made of several parts, written into the follower design (invented values): RE 830R as
# 680R + (300R ∥ 300R) or 1k66 ∥ (1k + 660R), C2 220µ as 110µ ∥ 110µ, C1 22µ as 44µ in series
# with 44µ.  Each network's value is the role's, so the simulated stage must be the same.
_NETWORKS = {
    "RE series-parallel": ("RE", "series-parallel", (680.0, 300.0, 300.0)),
    "RE parallel-series": ("RE", "parallel-series", (1660.0, 1000.0, 660.0)),
    "C2 parallel": ("C2", "parallel", (110e-6, 110e-6)),
    "C1 series": ("C1", "series", (44e-6, 44e-6)),
}


_OP_AND_AC = """.control
option reltol=1e-9 abstol=1e-15 vntol=1e-12
op
print v(b) v(e) @q1[ic]
ac lin 3 2 20
print vm(out)
.endc
"""


def _op_and_ac(deck_text: str, workdir) -> dict:
    values, run = _run(deck_text, workdir, _OP_AND_AC)
    ac = [float(x) for x in re.findall(r"^\d+\s+[-+0-9.eE]+\s+([-+0-9.eE]+)\s*$", run.stdout, re.M)]
    if not {"v(e)", "v(b)", "@q1[ic]"} <= set(values) or len(ac) != 3:
        raise AssertionError(f"ngspice gave no result ({run.returncode}):\n{run.stdout}\n{run.stderr}")
    return {**values, "ac": ac}


@pytest.mark.parametrize("case", list(_NETWORKS))
def test_a_role_drawn_as_its_parts_simulates_as_the_single_equivalent(tmp_path, case):
    # source: ngspice.  The exported deck wires R1a, R1b... as the arrangement says; the same stage
    # with one element of the role's value must give the same operating point and response
    from drawerfit.report.export import design_netlist
    from drawerfit.report.netlist import stage_netlist

    role, arrangement, values = _NETWORKS[case]
    design = load_design(with_networks(tmp_path, FOLLOWER, {role: (arrangement, values)}))
    parts = design_netlist(design, analyses=False)
    names = [line.split()[0] for line in parts.splitlines() if line[:1] in "RC" and not line.startswith("*")]
    assert [n for n in names if n.startswith(role)] == [role + x for x in "abc"[:len(values)]]
    single = stage_netlist(design.stage, temp_c=design.conditions.nominal_temp)
    assert not any(line.startswith(role + "a") for line in single.splitlines())
    got, want = _op_and_ac(parts, tmp_path), _op_and_ac(single, tmp_path)
    for key in ("v(b)", "v(e)", "@q1[ic]"):
        assert got[key] == pytest.approx(want[key], rel=1e-6), key
    assert got["ac"] == pytest.approx(want["ac"], rel=1e-6)  # 2, 11 and 20 Hz: around the corner

"""`export --netlist` of a saved two-stage design, run in ngspice: both operating points and the
mid-band gain of the exported deck against `analyze` of the same file.

Expected values: the ngspice circuit simulator (Debian package `ngspice`), batch mode, tight
tolerances, on the deck exactly as `drawerfit export --netlist` writes it (its own .op/.ac lines
replaced by a .control block that prints what is compared).  Three amplifiers: the capacitor-coupled
NPN one of tests/io/two_stage_drawer.py (RE3 a parallel pair), a direct-coupled PNP one, and the
hand-written tests/data/io/two_stage_design.toml (direct-coupled NPN, R1 a series pair).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from click.testing import CliRunner

from drawerfit.cli import main
from drawerfit.io.saved_two_stage import write_two_stage_design
from drawerfit.stock import load_stock

from ..io.two_stage_drawer import build, direct_pnp, write_drawer
from .spice_harness import run_deck

pytestmark = pytest.mark.ngspice

_CONTROL = """.control
option reltol=1e-7 abstol=1e-15 vntol=1e-9
op
print v(b1) v(e1) v(c1) v({b2}) v(e2) @q1[ic] @q1[ib] @q2[ic] @q2[ib]
ac dec 1 1e7 1e8
wrdata mid.txt vm(out) vr(out)
.endc
"""


@pytest.mark.parametrize("kind", ["capacitor-npn", "direct-pnp", "reference-file"])
def test_exported_netlist_runs_and_agrees_with_analyze(tmp_path, kind):
    pair = None  # a role made of two parts, written as those parts in the deck
    if kind == "reference-file":
        # tests/data/io/two_stage_design.toml: direct-coupled NPN, R1 two 10k in series
        import shutil
        from pathlib import Path

        from drawerfit.io.saved_design import load_design

        data = Path(__file__).resolve().parents[1] / "data" / "io"
        for name in ("two_stage_design.toml", "drawer_semicolon.csv"):
            shutil.copy(data / name, tmp_path / name)
        (tmp_path / "two_stage_design.toml").rename(tmp_path / "amp.toml")
        circuit = load_design(tmp_path / "amp.toml").stage
        pair = ("R1a vcc r1_2 10k", "R1b r1_2 b1 10k")
    elif kind == "capacitor-npn":
        csv = write_drawer(tmp_path)
        circuit, role_lines, transistor_lines, arrangements = build(load_stock(str(csv)))
        write_two_stage_design(tmp_path / "amp.toml", circuit, role_lines, units=2, stock_file=str(csv),
                               transistor_lines=transistor_lines, arrangements=arrangements)
        pair = ("RE3a e2 0 560", "RE3b e2 0 560")
    else:
        circuit = direct_pnp()
        write_two_stage_design(tmp_path / "amp.toml", circuit, {}, units=1)
    design = str(tmp_path / "amp.toml")
    r = CliRunner().invoke(main, ["export", design, "--netlist", str(tmp_path / "amp.cir"), "--quiet"])
    assert r.exit_code == 0, r.output
    deck = (tmp_path / "amp.cir").read_text(encoding="utf-8")
    assert "VCE_MAX=40" in deck  # the rating went into the model as an ngspice limit
    if pair is not None:
        assert all(line in deck.splitlines() for line in pair), deck
    b2 = "b2" if circuit.coupling == "capacitor" else "c1"
    body = [ln for ln in deck.splitlines() if ln.strip() not in (".op", ".end")
            and not ln.startswith((".ac ", ".print "))]
    assert any(ln.startswith(".options TNOM=25") for ln in body)
    values, run = run_deck("\n".join(body) + "\n" + _CONTROL.format(b2=b2) + ".end\n", tmp_path, "export")
    assert "@q2[ib]" in values, run.stdout + run.stderr
    a = CliRunner().invoke(main, ["analyze", design, "--json"])
    assert a.exit_code == 0, a.output
    import json

    d = json.loads(a.stdout)
    q1, q2 = d["dc"]["Q1"], d["dc"]["Q2"]
    sim_ie1 = abs(values["@q1[ic]"]) + abs(values["@q1[ib]"])
    sim_ie2 = abs(values["@q2[ic]"]) + abs(values["@q2[ib]"])
    assert q1["ie"] == pytest.approx(sim_ie1, rel=1e-3)
    assert q2["ie"] == pytest.approx(sim_ie2, rel=1e-3)
    assert q1["ic"] == pytest.approx(abs(values["@q1[ic]"]), rel=1e-3)
    for ours, node in ((q1["vb"], "v(b1)"), (q1["ve"], "v(e1)"), (q1["vc"], "v(c1)"), (q2["vb"], f"v({b2})"),
                       (q2["ve"], "v(e2)")):
        assert ours == pytest.approx(values[node], rel=1e-3, abs=1e-4), node
    # mid-band gain: no junction capacitance, so 100 MHz is far above every corner (ngspice .ac)
    mid = np.loadtxt(tmp_path / "mid.txt")
    sim_gain = math.copysign(mid[-1, 1], mid[-1, 3])
    assert d["ac"]["gain"] == pytest.approx(sim_gain, rel=1e-3)

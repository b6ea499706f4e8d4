"""`drawerfit design` on a two-stage spec, through click's CliRunner: the design found meets its
targets in the whole-amplifier analysis (held against ngspice in tests/reference), the saved file
is read back by `analyze`-side code and taken by `take`, and the exit statuses follow the CLI's
rules (0 found, 2 bad input, 3 proven none).

Expected values: the targets written in the spec (the design must meet them at the worst case),
counts of parts worked from the design's own roles (each role one part, Q1 and Q2 one each per
unit), and properties of the JSON (no NaN, every role present).
"""

from __future__ import annotations

import json

from click.testing import CliRunner

from drawerfit.cli import main

DRAWER = """Kind,Value,Tolerance,Power (W),Voltage (V),Dielectric,Qty,Bin,Label,hFE min,hFE max,VCEO (V),IC max (A),Pd (W),VBE (V),VCE(sat) (V)
resistor,220,5%,0.25,,,4,R-220,,,,,,,,
resistor,470,5%,0.25,,,4,R-470,,,,,,,,
resistor,1k,5%,0.25,,,4,R-1k,,,,,,,,
resistor,2k2,5%,0.25,,,4,R-2k2,,,,,,,,
resistor,4k7,5%,0.25,,,4,R-4k7,,,,,,,,
resistor,10k,5%,0.25,,,4,R-10k,,,,,,,,
resistor,22k,5%,0.25,,,4,R-22k,,,,,,,,
resistor,47k,5%,0.25,,,4,R-47k,,,,,,,,
capacitor,1u,20%,,25,film,4,C-1u,,,,,,,,
capacitor,10u,20%,,25,electrolytic,4,C-10u,,,,,,,,
capacitor,47u,20%,,25,electrolytic,4,C-47u,,,,,,,,
capacitor,220u,20%,,25,electrolytic,4,C-220u,,,,,,,,
NPN,,,,,,10,T1,QT-GEN,120,360,40,0.2,0.5,0.65,0.2
"""

SPEC = """topology = "two-stage"
coupling = "{coupling}"
bypass = {bypass}
polarity = "npn"
supply = "12 V"
source_resistance = "600"
load = "{load}"
[targets]
gain_min = {gain}
f_low = "40 Hz"
ie1_min = "0.5 mA"
ie1_max = "2.5 mA"
{ie2}
"""


def _files(tmp_path, coupling="capacitor", bypass="true", load="150", gain=12,
           ie2='ie2_min = "5 mA"\nie2_max = "30 mA"'):
    stock = tmp_path / "drawer.csv"
    stock.write_text(DRAWER, encoding="utf-8")
    spec = tmp_path / "amp.toml"
    spec.write_text(SPEC.format(coupling=coupling, bypass=bypass, load=load, gain=gain, ie2=ie2), encoding="utf-8")
    return spec, stock


def test_design_finds_saves_and_takes_a_buffered_gain_stage(tmp_path):
    spec, stock = _files(tmp_path)
    saved = tmp_path / "design.toml"
    r = CliRunner().invoke(main, ["design", str(spec), "--stock", str(stock), "--max-parts", "1", "--json",
                                  "--save", str(saved)])
    assert r.exit_code == 0, r.output
    d = json.loads(r.stdout)
    assert d["status"] == "optimal" and d["proven"]
    best = d["designs"][0]
    assert set(best["roles"]) == {"R1", "R2", "RC", "RE", "RE2", "CE", "C1", "C2", "R3", "R4", "RE3", "C3"}
    assert best["part_count"] == 12  # one part per role with --max-parts 1
    assert all(m >= 0 for m in best["worst_case_margins"].values())
    # the whole-amplifier analysis (analysis/cascade_checks: its own formulation of every target
    # and rating, held against ngspice in tests/reference) passes every check of the design
    # (the divider-stiffness notes are advice, "common practice, no source", not requirements)
    checks = [c for c in d["analysis"]["checks"] if "stiffness" not in c["name"]]
    assert checks and all(c["ok"] for c in checks), [c["name"] for c in checks if not c["ok"]]
    names = {c["name"] for c in checks}
    assert {"target gain_min", "target f_low", "target ie1_min", "target ie2_max"} <= names
    # the saved design is a two-stage design file that take understands: 12 passives and Q1, Q2
    before = stock.read_bytes()
    t = CliRunner().invoke(main, ["take", str(saved), "--stock", str(stock), "--dry-run"])
    assert t.exit_code == 0, t.output
    assert stock.read_bytes() == before  # a dry run changes nothing
    assert "QT-GEN" in t.output and "10 -> 8" in t.output  # Q1 and Q2 from one line of 10


def test_design_direct_coupled_text_output(tmp_path):
    spec, stock = _files(tmp_path, coupling="direct", bypass="false", load="1k", gain=2, ie2="")
    r = CliRunner().invoke(main, ["design", str(spec), "--stock", str(stock), "--max-parts", "1", "--quiet"])
    assert r.exit_code == 0, r.output
    assert "Two-stage design (optimal" in r.output
    for role in ("R1", "R2", "RC", "RE", "RE3", "C1", "C3"):
        assert f"\n  {role} " in r.output
    assert "\n  R3 " not in r.output  # direct coupling: no follower divider


def test_design_with_no_answer_exits_3(tmp_path):
    # a gain of 500 from one transistor pair at 0.5–2.5 mA into 150 Ω is out of reach (the unloaded
    # stage-1 gain is at most gm·RC ≈ 0.1 A/V · 47 kΩ, and the load takes most of it)
    spec, stock = _files(tmp_path, gain=500)
    r = CliRunner().invoke(main, ["design", str(spec), "--stock", str(stock), "--max-parts", "1"])
    assert r.exit_code == 3, r.output
    assert "No two-stage design" in r.output


def test_design_refuses_a_spec_with_parts(tmp_path):
    _, stock = _files(tmp_path)
    from pathlib import Path

    sample = Path(__file__).resolve().parents[2] / "inventory_samples" / "specs" / "two_stage_buffered.toml"
    # the transistors by their figures, not by labels this drawer lacks
    text = "\n".join(ln for ln in sample.read_text(encoding="utf-8").splitlines() if not ln.startswith("label ="))
    spec = tmp_path / "with_parts.toml"
    spec.write_text(text + "\n", encoding="utf-8")
    r = CliRunner().invoke(main, ["design", str(spec), "--stock", str(stock)])
    assert r.exit_code == 2, r.output
    assert "[parts]" in r.output


def test_bypass_in_a_spec_with_parts_is_refused(tmp_path):
    from pathlib import Path

    sample = Path(__file__).resolve().parents[2] / "inventory_samples" / "specs" / "two_stage_buffered.toml"
    text = sample.read_text(encoding="utf-8").replace('coupling = "capacitor"', 'coupling = "capacitor"\nbypass = true')
    spec = tmp_path / "s.toml"
    spec.write_text(text, encoding="utf-8")
    r = CliRunner().invoke(main, ["analyze", str(spec)])
    assert r.exit_code == 2 and "bypass" in r.output

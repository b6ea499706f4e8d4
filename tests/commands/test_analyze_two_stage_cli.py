"""`drawerfit analyze` on a two-stage spec, through click's CliRunner, and `drawerfit.analyse` on it.

Expected values: the hand formula of a loaded divider (IE = (β+1)·(VTH − VBE)/(RTH + (β+1)·RE),
from memory of any transistor-circuits handbook) with VBE 0.65 V (common practice, no source),
the project's exit statuses (2 bad input, 4 a check not met with --must-pass; docs/spec-format.md)
and the caution rule (supplies above about 50 V; docs/cautions.md).
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from click.testing import CliRunner

import drawerfit
from drawerfit.cli import main

ROOT = Path(__file__).resolve().parents[2]
SAMPLE = ROOT / "inventory_samples" / "specs" / "two_stage_buffered.toml"


def _ie(vcc, r_top, r_bottom, re, beta, vbe=0.65):
    vth, rth = vcc * r_bottom / (r_top + r_bottom), r_top * r_bottom / (r_top + r_bottom)
    return (beta + 1) * (vth - vbe) / (rth + (beta + 1) * re)


def test_the_sample_spec_prints_both_stages_and_cautions():
    r = CliRunner().invoke(main, ["analyze", str(SAMPLE)])
    assert r.exit_code == 0, r.output
    out = r.output
    assert out.index("Operating points") < out.index("Signal, mid-band") < out.index("Parts") < out.index("Cautions")
    assert "  Q1  VB" in out and "  Q2  VB" in out and "Q1 QN-SMALL-A" in out and "Q2 QN-MEDIUM-B" in out
    assert "limited by Q" in out  # the stage whose limit binds the swing is named
    assert "Electrolytic capacitors" in out and "remain responsible" in out
    assert "WARNINGS" not in out  # the sample is built to meet its own targets


def test_json_holds_both_operating_points():
    r = CliRunner().invoke(main, ["analyze", str(SAMPLE), "--json", "--monte-carlo", "200", "--seed", "3"])
    assert r.exit_code == 0, r.output
    d = json.loads(r.stdout)
    # the sample: R1 47k, R2 10k, RE + RE2 = 1.15k; R3 15k, R4 5k6, RE3 270; nominal hFE the
    # geometric mean of each range (docs/spec-format.md)
    ie1 = _ie(12.0, 47e3, 10e3, 1150.0, (110 * 330) ** 0.5)
    ie2 = _ie(12.0, 15e3, 5.6e3, 270.0, (80 * 240) ** 0.5)
    assert d["dc"]["Q1"]["ie"] == pytest.approx(ie1, rel=1e-9)
    assert d["dc"]["Q2"]["ie"] == pytest.approx(ie2, rel=1e-9)
    assert d["topology"] == "two-stage" and d["coupling"] == "capacitor"
    assert d["swing"]["transistor"] in ("Q1", "Q2")
    assert d["spread"]["monte_carlo"]["samples"] == 200
    names = {c["name"] for c in d["checks"]}
    assert {"Q1 state", "Q2 state", "Q1 power", "Q2 power", "Q1 VCEO", "Q2 IC max", "RE3 power",
            "C3 voltage", "C3 polarity", "target gain_min", "target ie2_max"} <= names
    # the notebook function gives the same JSON as the command (one code path)
    assert json.loads(json.dumps(drawerfit.analyse(str(SAMPLE)).to_dict())) == {
        **d, "spread": {**d["spread"], "monte_carlo": None}}


def test_must_pass_exits_4_when_a_target_is_missed(tmp_path):
    text = SAMPLE.read_text(encoding="utf-8").replace("gain_min = 7", "gain_min = 40").replace(
        "gain_max = 16", "gain_max = 60")
    spec = tmp_path / "amp.toml"
    spec.write_text(text, encoding="utf-8")
    r = CliRunner().invoke(main, ["analyze", str(spec), "--must-pass"])
    assert r.exit_code == 4, r.output
    assert "target gain_min" in r.output and "Traceback" not in r.output


@pytest.mark.parametrize("old,new,key", [
    ('coupling = "capacitor"', 'coupling = "optical"', "coupling"),
    ("[transistors.Q2]", "[transistors.Q3]", "transistors.Q3"),
    ('R4 = { value = "5k6", tolerance = "5 %", rating = "0.25 W" }\n', "", "parts.R4"),
    ('RE3 = { value = "270"', 'RE3 = { value = "27x"', "parts.RE3.value"),
])
def test_bad_input_is_one_line_with_file_and_key_and_status_2(tmp_path, old, new, key):
    text = SAMPLE.read_text(encoding="utf-8")
    assert old in text
    spec = tmp_path / "bad.toml"
    spec.write_text(text.replace(old, new, 1), encoding="utf-8")
    r = CliRunner().invoke(main, ["analyze", str(spec)])
    assert r.exit_code == 2, r.output
    assert str(spec) in r.output and key in r.output and "Traceback" not in r.output


def test_a_high_supply_prints_the_high_voltage_caution(tmp_path):
    # above about 50 V the supply is dangerous (common practice, no source; docs/cautions.md)
    text = SAMPLE.read_text(encoding="utf-8").replace('supply = "12 V"', 'supply = "60 V"')
    spec = tmp_path / "hv.toml"
    spec.write_text(text, encoding="utf-8")
    r = CliRunner().invoke(main, ["analyze", str(spec), "--json"])
    assert r.exit_code == 0, r.output
    assert "can kill" in r.stderr and "local electrical codes" in r.stderr


@pytest.mark.parametrize("args", [["match", "npn", "--in", str(SAMPLE)], ["design", str(SAMPLE), "--keep"]],
                         ids=["match --in", "design --keep"])
def test_commands_for_single_stages_refuse_a_two_stage_spec_plainly(tmp_path, args):
    stock = ROOT / "inventory_samples" / "teaching_lab.csv"
    r = CliRunner().invoke(main, [*args, "--stock", str(stock)])
    assert r.exit_code == 2, r.output
    assert "two-stage amplifier is not supported there yet" in r.output and "Traceback" not in r.output

"""`drawerfit match npn|pnp`: transistor substitutes through click's CliRunner.

Expected values: the library's own result for the same job (the property "one source": the command
prints ``api.substitutes(...).to_dict()``), the crafted repair of tests/repair/crafted.py (worked by
hand in its docstring), the safety rule of docs/cautions.md (supplies above about 50 V and mains
equipment: common practice, no source), and the exit statuses of README.md (0 success, 2 bad input).
"""

from __future__ import annotations

import json

import pytest
from click.testing import CliRunner
from hypothesis import given, settings, strategies as st

import drawerfit
from drawerfit.cli import main
from tests.repair.crafted import BREAKER, KEEPER, LOW_RATINGS, SPEC, write_case


def run(*args):
    return CliRunner().invoke(main, [str(a) for a in args])


def test_a_requirement_without_a_stage(samples):
    lab = samples / "teaching_lab.csv"
    res = run("match", "npn", "--stock", lab, "--vceo", "45V", "--ic-max", "150m", "--hfe", "100-300", "--json")
    assert res.exit_code == 0, res.output
    data = json.loads(res.stdout)
    assert data["requirement"]["vceo"] == 45.0 and data["requirement"]["ic_max"] == pytest.approx(0.15)
    assert data["stage"] is None
    # the teaching lab drawer (inventory_samples/teaching_lab.csv): four NPN lines, two of them
    # with VCEO 40 V or IC max 100 mA, short of 45 V / 150 mA; two PNP lines
    assert [x["label"] for x in data["substitutes"]] == ["LabNPN-H1", "LabNPN-M1"]
    assert [x["label"] for x in data["failing"]][:2] == ["LabNPN-S1", "LabNPN-S2"]
    assert data["counts"]["other_polarity"] == 2
    sub = data["substitutes"][0]
    assert {"rank", "status", "label", "location", "qty", "source", "checks", "hfe_fit", "stage"} <= set(sub)
    assert {c["name"] for c in sub["checks"]} == {"polarity", "VCEO", "IC max", "hFE", "on hand"}
    # one source: the command prints the library's dict
    lib = drawerfit.substitutes("npn", lab, vceo="45V", ic_max="150m", hfe="100-300", top=10)
    assert data == json.loads(json.dumps(lib.to_dict(), allow_nan=False))


def test_the_text_names_bins_and_reasons(samples):
    res = run("match", "npn", "--stock", samples / "teaching_lab.csv", "--vceo", "45V", "--ic-max", "150m")
    assert res.exit_code == 0, res.output
    out = res.stdout
    assert "Meet the requirement" in out and "Do not meet it" in out
    assert "LabNPN-S1" in out and "VCEO 40 V, 45 V needed (11.1 % short)" in out  # (45 − 40)/45
    assert "T6" in out  # LabNPN-H1's bin
    assert "2 PNP lines not listed" in out
    assert "pin order" in out  # the caution every substitution needs


def test_a_stage_spec_gives_the_verdicts(tmp_path):
    spec, stock = write_case(tmp_path)
    res = run("match", "npn", "--stock", stock, "--in", spec)
    assert res.exit_code == 0, res.output
    out = res.stdout
    assert "with its own Q1 BenchNPN-3" in out
    assert f"In spec unchanged: {KEEPER} (tray 2, 12 on hand)" in out
    assert f"though short of the requirement (see why above): {LOW_RATINGS}" in out
    assert "misses target ie_min: worst case 3.3" in out  # about 3.4 mA at hFE 40 by hand (crafted.py)
    assert "Traceback" not in res.output
    data = json.loads(run("match", "npn", "--stock", stock, "--in", spec, "--json").stdout)
    by = {x["label"]: x for x in data["substitutes"] + data["failing"]}
    assert by[KEEPER]["stage"]["status"] == "keeps" and by[BREAKER]["stage"]["status"] == "breaks"
    brk = by[BREAKER]["stage"]["breaks"][0]
    assert brk["check"] == "target ie_min" and brk["value"] < brk["limit"] and brk["also_on_board"] is False


@pytest.mark.parametrize("change", ["mains", "supply"])
def test_cautions_for_mains_equipment_and_high_supplies(tmp_path, change):
    text = SPEC.replace('supply = "12 V"', 'supply = "12 V"\nmains = true') if change == "mains" \
        else SPEC.replace('supply = "12 V"', 'supply = "60 V"').replace('"47k 1%"\nR2', '"220k 1%"\nR2')
    spec, stock = write_case(tmp_path, text)
    res = run("match", "npn", "--stock", stock, "--in", spec, "--vceo", "100V")
    assert res.exit_code == 0, res.output
    assert "Cautions" in res.stdout and "local electrical codes and licensed practice" in res.stdout
    js = run("match", "npn", "--stock", stock, "--in", spec, "--vceo", "100V", "--json")
    assert "high-voltage" in [c["key"] for c in json.loads(js.stdout)["cautions"]]
    assert "licensed practice" in js.stderr  # the caution reaches a person beside the JSON too


def test_no_high_voltage_caution_on_a_low_supply(tmp_path):
    spec, stock = write_case(tmp_path)
    data = json.loads(run("match", "npn", "--stock", stock, "--in", spec, "--json").stdout)
    keys = [c["key"] for c in data["cautions"]]
    assert "high-voltage" not in keys and "general" in keys
    assert "pin-order" in keys  # every substitution: lead orders differ between types


def test_a_high_vceo_asked_without_a_stage_brings_the_high_voltage_caution(samples):
    lab = samples / "teaching_lab.csv"
    high = json.loads(run("match", "npn", "--stock", lab, "--vceo", "200V", "--json").stdout)
    low = json.loads(run("match", "npn", "--stock", lab, "--vceo", "30V", "--json").stdout)
    assert "high-voltage" in [c["key"] for c in high["cautions"]]  # above about 50 V (docs/cautions.md)
    assert "high-voltage" not in [c["key"] for c in low["cautions"]]
    assert [x["label"] for x in high["substitutes"]] == ["LabNPN-H1"]  # the one 300 V line of the drawer


@pytest.mark.parametrize("args,fragment", [
    (["npm"], "neither a value"),
    (["transistor"], "neither a value"),
    (["npn", "--hfe", "300-100"], "the lowest is above the highest"),
    (["npn", "--hfe-min", "300", "--hfe-max", "100"], "the lowest is above the highest"),
    (["npn", "--hfe", "lots"], "not a range such as 100-300"),
    (["npn", "--vceo", "45X"], "VCEO"),
    (["npn", "--ic-max", "2V"], "expected a value in A"),
    (["npn", "--vce-sat", "0"], "VCE(sat)"),
    (["npn", "--within", "1%"], "--within applies to resistors and capacitors"),
    (["4k7", "--vceo", "45V"], "--vceo applies to transistors"),
])
def test_bad_input_is_one_line_and_exit_2(samples, args, fragment):
    res = run("match", *args, "--stock", samples / "teaching_lab.csv")
    assert res.exit_code == 2, res.output
    assert fragment in res.stderr and "Traceback" not in res.output + res.stderr
    assert len(res.stderr.strip().splitlines()) == 1


def test_a_polarity_against_the_stage_is_refused(tmp_path):
    spec, stock = write_case(tmp_path)
    res = run("match", "pnp", "--stock", stock, "--in", spec)
    assert res.exit_code == 2 and "the stage is NPN: a PNP cannot" in res.stderr


def test_resistor_matching_is_unchanged(samples):
    # a value still goes to the value match, its JSON the library's MatchResult
    lab = samples / "teaching_lab.csv"
    res = run("match", "4k7", "--stock", lab, "--json", "--top", "2")
    assert res.exit_code == 0
    assert json.loads(res.stdout) == json.loads(json.dumps(drawerfit.match("4k7", lab, top=2).to_dict()))
    bad = run("match", "4k7k", "--stock", lab)
    assert bad.exit_code == 2 and "4k7k" in bad.output


@settings(max_examples=60, deadline=None, derandomize=True)
@given(option=st.sampled_from(["--vceo", "--ic-max", "--power", "--hfe", "--hfe-min", "--hfe-max", "--vce-sat"]),
       text=st.text(min_size=1, max_size=12).filter(lambda t: not t.startswith("-")),
       word=st.sampled_from(["npn", "PNP", " npn"]))
def test_no_traceback_on_any_option_text(option, text, word):
    # property (docs/repair.md, "bad input"): whatever is typed, success or exit 2, never a traceback
    res = CliRunner().invoke(main, ["match", word, "--stock", "inventory_samples/repair_bench.csv", option, text])
    assert res.exit_code in (0, 2), (option, text, res.output, res.exception)
    assert "Traceback" not in res.output
    if res.exit_code == 2:
        assert res.stderr.strip()

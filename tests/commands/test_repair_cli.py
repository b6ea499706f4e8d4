"""`drawerfit design --keep` through click's CliRunner: the repair note, JSON, cautions, exit statuses.

The board and drawer are the crafted case of tests/reference/test_ngspice_repair.py (a dead
transistor whose only drawer substitute needs one divider resistor changed; hand figures there).
"""

from __future__ import annotations

import json
from pathlib import Path

from click.testing import CliRunner

from drawerfit.cli import main

BOARD = """title = "crafted board"
topology = "common-emitter"
polarity = "npn"
supply = "{supply} V"
source_resistance = "600"
load = "10k"
mains = {mains}

[transistor]
label = "BoardNPN"
hfe_min = 200
hfe_max = 600
vceo = "{vceo} V"

[parts]
R1 = {{ value = "47k", tolerance = "1%", rating = "0.25 W" }}
R2 = {{ value = "10k", tolerance = "1%", rating = "0.25 W" }}
RE = {{ value = "1k", tolerance = "1%", rating = "0.25 W" }}
RC = {{ value = "3k3", tolerance = "1%", rating = "0.25 W" }}
C1 = {{ value = "10u", rating = "25 V" }}
C2 = {{ value = "10u", rating = "25 V" }}

[targets]
ie_min = "1.25 mA"
ie_max = "1.75 mA"
f_low = "50 Hz"
"""

DRAWER = """kind,value,tolerance,power,voltage,qty,location,label,polarity,hfe_min,hfe_max,vceo,ic_max,pd
resistor,39k,1%,0.25,,5,A1,,,,,,,
resistor,43k,1%,0.25,,5,A2,,,,,,,
resistor,12k,1%,0.25,,5,A3,,,,,,,
resistor,2k2,1%,0.25,,5,A4,,,,,,,
capacitor,10u,20%,,25,5,B1,,,,,,,
transistor,,,,,3,C1,DrawerNPN-1,npn,50,150,40,0.2,0.5
"""


def _files(tmp_path, supply=12, mains="false", vceo=40):
    spec = tmp_path / "board.toml"
    spec.write_text(BOARD.format(supply=supply, mains=mains, vceo=vceo), encoding="utf-8")
    stock = tmp_path / "drawer.csv"
    stock.write_text(DRAWER, encoding="utf-8")
    return str(spec), str(stock)


def test_repair_note_names_the_changes_where_they_are_and_the_cautions(tmp_path):
    spec, stock = _files(tmp_path)
    before = Path(stock).read_bytes()
    r = CliRunner().invoke(main, ["design", spec, "--stock", stock, "--keep", "--broken", "Q1"])
    assert r.exit_code == 0, r.output
    assert "Change 2 of 7 roles (proven the fewest" in r.output
    assert "R1   47 kΩ 1 %" in r.output and "43k 1 %  [A2 row 3]" in r.output
    assert "DrawerNPN-1 (hFE 50..150)  [C1; row 7]" in r.output
    assert "Keep: R2, RE, RC, C1, C2" in r.output
    assert "checks not met after: none" in r.output
    assert "unplug it from the mains" in r.output  # the repair caution, always
    assert Path(stock).read_bytes() == before  # the stock file is read only


def test_repair_json(tmp_path):
    spec, stock = _files(tmp_path)
    r = CliRunner().invoke(main, ["design", spec, "--stock", stock, "--keep", "--broken", "Q1", "--json"])
    assert r.exit_code == 0, r.output
    d = json.loads(r.stdout)
    assert d["feasible"] and d["proven_fewest"]
    assert [c["role"] for c in d["changes"]] == ["R1", "Q1"]
    assert d["changes"][0]["part"]["value"] == 43e3
    assert d["changes"][1]["transistor"]["label"] == "DrawerNPN-1"
    assert d["kept"] == ["R2", "RE", "RC", "C1", "C2"]
    assert d["after"]["checks_not_met"] == []
    assert d["before"]["figures"]["ie"]["nominal"] > 0
    assert d["cautions"][0]["key"] == "repair"


def test_fixed_divider_leaves_no_repair_and_exits_3_with_the_design_afresh(tmp_path):
    spec, stock = _files(tmp_path)
    r = CliRunner().invoke(main, ["design", spec, "--stock", stock, "--keep", "--broken", "Q1", "--fixed", "R1,R2,RE"])
    assert r.exit_code == 3, r.output
    assert "No repair from the drawer" in r.output
    assert "With every part chosen afresh" in r.output


def test_mains_equipment_gets_the_high_voltage_caution(tmp_path):
    spec, stock = _files(tmp_path, mains="true")
    r = CliRunner().invoke(main, ["design", spec, "--stock", stock, "--keep", "--broken", "Q1"])
    assert r.exit_code == 0, r.output
    assert "can kill" in r.output and "licensed practice" in r.output


def test_marks_without_keep_and_bad_marks_exit_2(tmp_path):
    spec, stock = _files(tmp_path)
    r = CliRunner().invoke(main, ["design", spec, "--stock", stock, "--broken", "Q1"])
    assert r.exit_code == 2 and "--keep" in r.output
    r = CliRunner().invoke(main, ["design", spec, "--stock", stock, "--keep", "--broken", "RX"])
    assert r.exit_code == 2 and "no role RX" in r.output
    r = CliRunner().invoke(main, ["design", spec, "--stock", stock, "--keep", "--save", str(tmp_path / "d.toml")])
    assert r.exit_code == 2 and "not" in r.output
    assert "Traceback" not in r.output


def test_the_sample_board_is_mended_and_meets_every_check(samples):
    # the bundled invented board (inventory_samples/preamp_repair.toml) and repair drawer
    r = CliRunner().invoke(main, ["design", str(samples / "preamp_repair.toml"), "--stock",
                                  str(samples / "repair_bench.csv"), "--keep", "--broken", "Q1", "--json"])
    assert r.exit_code == 0, r.output
    d = json.loads(r.stdout)
    assert "Q1" in [c["role"] for c in d["changes"]]
    assert d["after"]["checks_not_met"] == [] and d["proven_fewest"]

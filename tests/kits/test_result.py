"""`kit`'s pick list names the designators and units each line serves, `--save` writes what `take`
reads, and the messages take the common form.

Expected counts come from the drawer and list the tests write: 20 + 10 + 5 + 8 parts of 4k7 in four
bins and 20 of 10 µF, against a list of one 4k7 and one 10 µF per unit.
"""

from __future__ import annotations

import csv
import json
from pathlib import Path

from click.testing import CliRunner

from drawerfit.cli import main
from drawerfit.kits.fill import run_kit
from drawerfit.kits.result import kit_to_json

DRAWER = ("Type,Value,Rating,Qty,Bin\nR,4k7,0.6W,20,A1\nR,4k7,0.6W,10,A2\nR,4k7,0.6W,5,A3\nR,4k7,0.6W,8,A4\n"
          "C,10u,25V,20,B1\n")
LIST = "ref,value,voltage\nC3,10u,16\nR1,4k7,\n"


def _files(tmp_path: Path) -> tuple[Path, Path]:
    stock, lst = tmp_path / "drawer.csv", tmp_path / "list.csv"
    stock.write_text(DRAWER, encoding="utf-8")
    lst.write_text(LIST, encoding="utf-8")
    return stock, lst


def test_every_pick_line_names_its_designators_and_units(tmp_path):
    stock, lst = _files(tmp_path)
    doc = kit_to_json(run_kit(str(lst), str(stock), units=30))
    assert [f["designator"] for f in doc["filled"]] == ["R1"]  # 43 of 4k7 on hand cover 30 units
    (c3,) = doc["unfilled"]
    assert c3["designator"] == "C3" and c3["units_from_drawer"] == 20  # 20 of 10 µF for 30 units
    for entry in doc["pick_list"]:
        assert entry["designators"] and entry["serves"]
        assert sum(s["count"] for s in entry["serves"]) == entry["count"]
    served: dict[str, int] = {}
    for entry in doc["pick_list"]:
        for s in entry["serves"]:
            served[s["designator"]] = served.get(s["designator"], 0) + s["units"]
            assert s["filled"] == (s["designator"] == "R1")
    assert served == {"R1": 30, "C3": 20}
    by_row = {e["source"]["row"]: e["count"] for e in doc["pick_list"]}
    assert sum(by_row[r] for r in (2, 3, 4, 5)) == 30 and by_row[6] == 20
    assert all(by_row[r] <= q for r, q in ((2, 20), (3, 10), (4, 5), (5, 8)))


def test_the_text_says_plainly_that_a_partly_covered_designator_is_not_filled(tmp_path):
    stock, lst = _files(tmp_path)
    res = CliRunner().invoke(main, ["kit", str(lst), "--stock", str(stock), "--units", "30"])
    assert res.exit_code == 0, res.output
    pick = res.stdout.split("pick list (take these")[1]
    c3 = next(line for line in pick.splitlines() if " B1 " in f" {line} ")
    assert "C3 (20 of 30 units only; C3 is not filled)" in c3
    assert "partly covered: 20 of 30 units from the drawer (on the pick list), 10 to buy" in res.stdout


def test_save_writes_what_take_reads_and_never_an_input(tmp_path):
    stock, lst = _files(tmp_path)
    before = stock.read_bytes(), lst.read_bytes()
    for target in (stock, lst):
        res = CliRunner().invoke(main, ["kit", str(lst), "--stock", str(stock), "--save", str(target)])
        assert res.exit_code == 2 and "input file" in res.stderr
    assert (stock.read_bytes(), lst.read_bytes()) == before
    other = tmp_path / "someone-elses.json"
    other.write_text('{"a": 1}', encoding="utf-8")
    res = CliRunner().invoke(main, ["kit", str(lst), "--stock", str(stock), "--save", str(other)])
    assert res.exit_code == 2 and "not a saved kit written by drawerfit" in res.stderr
    assert other.read_text(encoding="utf-8") == '{"a": 1}'

    saved = tmp_path / "kit.json"
    res = CliRunner().invoke(main, ["kit", str(lst), "--stock", str(stock), "--units", "30", "--save", str(saved)])
    assert res.exit_code == 0 and f"saved: {saved}" in res.stdout
    # saving again over its own earlier kit is fine
    res = CliRunner().invoke(main, ["kit", str(lst), "--stock", str(stock), "--units", "30", "--save", str(saved)])
    assert res.exit_code == 0
    res = CliRunner().invoke(main, ["take", str(saved), "--stock", str(stock)])
    assert res.exit_code == 0, res.output
    qty = [r[3] for r in csv.reader(stock.read_text(encoding="utf-8").splitlines())][1:]
    taken = json.loads(saved.read_text(encoding="utf-8"))["pick_list"]
    assert (20 + 10 + 5 + 8) - sum(int(q) for q in qty[:4]) == 30  # one 4k7 per unit, from four bins
    assert int(qty[4]) == 20 - sum(e["count"] for e in taken if e["source"]["row"] == 6) == 0


def test_messages_take_the_common_form(tmp_path):
    stock, lst = _files(tmp_path)
    stock.write_text(DRAWER + "R,4k7k,0.6W,3,A9\n", encoding="utf-8")
    res = CliRunner().invoke(main, ["kit", str(lst), "--stock", str(stock)])
    assert res.exit_code == 0
    # a skipped stock line is reported as every command reports it, with its row and column
    assert "drawerfit: skipped: " in res.stderr and "row 7, column 'Value'" in res.stderr
    assert "warning: " not in res.stderr

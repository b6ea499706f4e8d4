"""`export --bom` and `take` on a saved two-stage design, through click's CliRunner.

Expected values: counts worked by hand from the invented drawer of tests/io/two_stage_drawer.py
(every line holds 30 parts, the transistors 10; RE3 is two 560 Ω parts, C1 and C2 share one bin),
the IEC 60062 letter code of each part, and the safety promises of `take` (docs/kit-and-take.md:
a backup holding the old bytes, nothing changed on a dry run or a refused take).
"""

from __future__ import annotations

import csv
import io

import pytest
from click.testing import CliRunner

from drawerfit.cli import main
from drawerfit.io.saved_two_stage import write_two_stage_design
from drawerfit.stock import load_stock

from ..io.two_stage_drawer import build, write_drawer

DESIGNATORS = ["R1", "R2", "RE", "RE2", "RC", "C1", "C2", "CE", "R3", "R4", "RE3a", "RE3b", "C3", "Q1", "Q2"]


@pytest.fixture()
def saved(tmp_path):
    drawer = write_drawer(tmp_path)
    circuit, role_lines, transistor_lines, arrangements = build(load_stock(str(drawer)))
    design = write_two_stage_design(tmp_path / "amp.toml", circuit, role_lines, units=3, stock_file=str(drawer),
                                    transistor_lines=transistor_lines, arrangements=arrangements)
    return design, drawer


def test_bom_csv_has_every_part_of_both_stages(saved, tmp_path):
    design, _ = saved
    out = tmp_path / "bom.csv"
    r = CliRunner().invoke(main, ["export", str(design), "--bom", str(out)])
    assert r.exit_code == 0, r.output
    assert "15 part lines, 3 units" in r.output
    rows = list(csv.DictReader(io.StringIO(out.read_text(encoding="utf-8-sig"))))
    assert [row["Designator"] for row in rows] == DESIGNATORS
    by = {row["Designator"]: row for row in rows}
    # IEC 60062 codes; the pair's parts are 560R each, the role 280R (Ohm's law, parallel)
    assert by["RC"]["Part code"] == "4k7" and by["RE3a"]["Part code"] == "560R" and by["RE3a"]["Role code"] == "280R"
    assert by["Q2"]["Part code"] == "QN-MEDIUM-B" and by["Q2"]["Bin"] == "T-2" and by["Q2"]["Stock row"] == "14"
    assert "VCEO 40 V" in by["Q1"]["Rating"]
    assert all(row["For all units"] == "3" for row in rows)  # one of each part per unit


def test_bom_xlsx_has_the_same_rows_and_the_pick_list(saved, tmp_path):
    from openpyxl import load_workbook

    design, _ = saved
    out = tmp_path / "bom.xlsx"
    r = CliRunner().invoke(main, ["export", str(design), "--bom", str(out), "--quiet"])
    assert r.exit_code == 0, r.output
    wb = load_workbook(out)
    assert [row[0] for row in wb["parts"].iter_rows(min_row=2, values_only=True)] == DESIGNATORS
    takes = {row[0]: row[4] for row in wb["pick list"].iter_rows(min_row=2, values_only=True)}
    assert takes["RB-1"] == 6 and takes["CE-1"] == 6 and takes["T-1"] == 3  # by hand: 2, 2, 1 per unit × 3


def test_take_subtracts_the_pick_list_with_a_backup(saved):
    design, drawer = saved
    before = drawer.read_bytes()
    dry = CliRunner().invoke(main, ["take", str(design), "--stock", str(drawer), "--dry-run"])
    assert dry.exit_code == 0, dry.output
    assert drawer.read_bytes() == before  # a dry run changes nothing
    r = CliRunner().invoke(main, ["take", str(design), "--stock", str(drawer), "--units", "2"])
    assert r.exit_code == 0, r.output
    after = {line.source.row: line.qty for line in load_stock(str(drawer)).lines}
    # by hand for 2 units: RB-1 (row 9) and CE-1 (row 10) give 2 per unit, the others 1
    expected = {row: 30 - 2 for row in range(2, 13)} | {9: 30 - 4, 10: 30 - 4, 13: 10 - 2, 14: 10 - 2}
    assert after == expected
    backups = list(drawer.parent.glob("drawer.csv.backup-*"))
    assert len(backups) == 1 and backups[0].read_bytes() == before


def test_take_refuses_a_stock_file_changed_since_the_design(saved):
    design, drawer = saved
    changed = drawer.read_text(encoding="utf-8").replace(",30,RA-1,", ",29,RA-1,")
    drawer.write_text(changed, encoding="utf-8")
    r = CliRunner().invoke(main, ["take", str(design), "--stock", str(drawer)])
    assert r.exit_code == 2 and "changed since" in r.output and "Traceback" not in r.output
    assert drawer.read_text(encoding="utf-8") == changed  # nothing taken


def test_analyze_resolves_both_labels_from_the_stock(tmp_path, saved):
    # the sample spec's transistors by label only: their hFE ranges come from the drawer's lines
    # (QN-SMALL-A 110–330, QN-MEDIUM-B 80–240, as written in tests/io/two_stage_drawer.py)
    from pathlib import Path

    _, drawer = saved
    sample = Path(__file__).resolve().parents[2] / "inventory_samples" / "specs" / "two_stage_buffered.toml"
    spec_text = sample.read_text(encoding="utf-8")
    for block in ("hfe_min = 110\nhfe_max = 330\n", "hfe_min = 80\nhfe_max = 240\n"):
        assert block in spec_text
        spec_text = spec_text.replace(block, "")
    spec = tmp_path / "by_label.toml"
    spec.write_text(spec_text, encoding="utf-8")
    no_stock = CliRunner().invoke(main, ["analyze", str(spec)])
    assert no_stock.exit_code == 2 and "transistors.Q1.label" in no_stock.output and "--stock" in no_stock.output
    r = CliRunner().invoke(main, ["analyze", str(spec), "--stock", str(drawer), "--json"])
    assert r.exit_code == 0, r.output
    import json

    hfe = json.loads(r.stdout)["spread"]["worst_case"]["hfe"]
    assert hfe == {"Q1": [110.0, 330.0], "Q2": [80.0, 240.0]}


def test_export_with_the_stock_file_checks_it(saved, tmp_path):
    design, drawer = saved
    r = CliRunner().invoke(main, ["export", str(design), "--bom", str(tmp_path / "b.csv"), "--stock", str(drawer)])
    assert r.exit_code == 0, r.output
    out = tmp_path / "page.html"
    r = CliRunner().invoke(main, ["report", str(design), "-o", str(out), "--stock", str(drawer), "--quiet",
                                  "--monte-carlo", "0"])
    assert r.exit_code == 0, r.output
    assert "stock file checked: unchanged since the design was made" in out.read_text(encoding="utf-8")

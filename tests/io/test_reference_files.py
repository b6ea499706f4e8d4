"""Every file format of drawerfit/io against reference files kept in tests/data/io, and round trips.

The reference files are written by hand (invented data): ``drawer_semicolon.csv`` (UTF-8 with a
byte-order mark, semicolons, CRLF line ends, a quoted cell holding the delimiter), ``design.toml`` (a
saved design in the trade's notation, with one exact number in [exact]), ``two_stage_design.toml``
(a saved two-stage design) and ``kit.json`` (a saved kit).  Expected values: the files' own text read by independent readers (Python's csv, tomllib and
json modules, hashlib for the checksum), IEC 60062 for the value codes ("4k7" = 4700 Ω, "22µ" =
22 µF), and byte-for-byte identity for every round trip.
"""

from __future__ import annotations

import csv
import hashlib
import io
import json
import os
import shutil
import stat
import tomllib
from pathlib import Path

import pytest

from drawerfit.io.files import atomic_write
from drawerfit.io.kit_file import read_kit_tree, write_kit
from drawerfit.io.saved_design import load_design, read_design_tree
from drawerfit.io.stock_edits import QtyEdit, edit_csv_bytes, read_csv_qty
from drawerfit.io.tables import open_table_file
from drawerfit.io.take import read_pick_list, take
from drawerfit.io.take_history import history, undo_takes

DATA = Path(__file__).resolve().parents[1] / "data" / "io"
DRAWER = DATA / "drawer_semicolon.csv"
DESIGN = DATA / "design.toml"
TWO_STAGE = DATA / "two_stage_design.toml"
KIT = DATA / "kit.json"


def _csv_rows(data: bytes) -> list[list[str]]:
    return list(csv.reader(io.StringIO(data.decode("utf-8-sig"), newline=""), delimiter=";"))


def test_the_reference_files_are_as_written():
    data = DRAWER.read_bytes()
    assert data.startswith(b"\xef\xbb\xbf") and b"\r\n" in data  # kept as bytes (.gitattributes: -text)
    checksum = "sha256:" + hashlib.sha256(data).hexdigest()
    assert tomllib.loads(DESIGN.read_text(encoding="utf-8"))["stock_checksum"] == checksum
    assert json.loads(KIT.read_text(encoding="utf-8"))["stock_checksum"] == checksum
    assert tomllib.loads(TWO_STAGE.read_text(encoding="utf-8"))["stock_checksum"] == checksum


def test_raw_rows_are_what_the_csv_module_reads():
    raw = open_table_file(str(DRAWER))
    assert raw.checksum == "sha256:" + hashlib.sha256(DRAWER.read_bytes()).hexdigest()
    (sheet,) = list(raw.sheets())
    rows = list(sheet.records)
    expected = _csv_rows(DRAWER.read_bytes())
    assert [n for n, _ in rows] == list(range(1, len(expected) + 1))  # row numbers as people see them
    assert [[("" if c is None else str(c)) for c in cells] for _, cells in rows] == expected
    assert rows[2][1][6] == "A2; top"  # the quoted cell keeps its delimiter


def test_a_quantity_edit_changes_that_cell_only_and_reverses():
    data = DRAWER.read_bytes()
    held, text = read_csv_qty(data, b";", 3, 5, "ref")
    assert (held, text) == (12, "12")  # row 3 (10k), Qty column (0-based 5), as written in the file
    new = edit_csv_bytes(data, [QtyEdit(None, 3, 5, 7)], b";", "ref")
    before, after = _csv_rows(data), _csv_rows(new)
    after_expected = [row[:] for row in before]
    after_expected[2][5] = "7"
    assert after == after_expected
    assert new.replace(b";7;", b";12;", 1) == data  # every other byte (BOM, CRLF, quotes) kept
    assert edit_csv_bytes(new, [QtyEdit(None, 3, 5, 12)], b";", "ref") == data


def test_the_saved_design_reads_as_written():
    d = load_design(DESIGN)
    parts = d.stage.parts
    assert parts["R1"].value == 4700.0 and parts["R1"].tolerance == pytest.approx(0.01)  # 4k7, 1 %
    assert parts["R2"].value == 10e3 and parts["R1"].rating == pytest.approx(0.25)  # 10k; 250 mW
    assert parts["C1"].value == pytest.approx(22e-6) and parts["C1"].polarized  # 22µ
    assert parts["RE"].value == 1902.834008097166  # the [exact] number, not the text 1k9
    assert d.units == 2 and d.stage.supply == 12.0 and d.stage.load == 1e3
    assert d.targets == {"ie_min": pytest.approx(2e-3), "ie_max": pytest.approx(4e-3), "f_low": 20.0}
    tree = tomllib.loads(DESIGN.read_text(encoding="utf-8"))
    assert [(p.location, p.count, p.source["row"], p.roles) for p in d.pick_list] == \
        [(e["location"], e["count"], e["source"]["row"], tuple(e["roles"])) for e in tree["pick_list"]]


def test_one_reader_of_the_saved_design_serves_take_and_report():
    tree = read_design_tree(DESIGN)
    assert tree == tomllib.loads(DESIGN.read_text(encoding="utf-8"))
    pick = read_pick_list(DESIGN)
    d = load_design(DESIGN)
    assert pick.units == d.units and pick.stock_checksum == d.stock_checksum
    assert [(e.row, e.count, e.location) for e in pick.entries] == \
        [(p.source["row"], p.count, p.location) for p in d.pick_list]


def test_the_kit_file_reads_as_written_and_round_trips(tmp_path):
    pick = read_pick_list(KIT)
    tree = json.loads(KIT.read_text(encoding="utf-8"))
    assert pick.units == 2 and [(e.row, e.count, e.per_unit) for e in pick.entries] == \
        [(e["source"]["row"], e["count"], e["per_unit"]) for e in tree["pick_list"]]
    assert read_kit_tree(KIT) == tree

    class Saved:  # anything with to_dict() is written as that dict
        def to_dict(self):
            return tree

    out = write_kit(tmp_path / "again.json", Saved())
    assert json.loads(out.read_text(encoding="utf-8")) == tree == read_kit_tree(out)


@pytest.mark.parametrize("picks", [KIT, DESIGN, TWO_STAGE], ids=["kit", "design", "two-stage design"])
def test_take_and_undo_round_trip_on_the_reference_drawer(tmp_path, picks):
    drawer = tmp_path / DRAWER.name
    shutil.copy(DRAWER, drawer)
    pick = read_pick_list(picks)
    before = _csv_rows(drawer.read_bytes())
    result = take(picks, drawer)
    after = _csv_rows(drawer.read_bytes())
    taken = {e.row: e.count for e in pick.entries}
    for n, (old, new) in enumerate(zip(before, after), start=1):
        if n in taken:
            assert int(new[5]) == int(old[5]) - taken[n]
        else:
            assert new == old
    assert Path(result.backup).read_bytes() == DRAWER.read_bytes()
    assert [r.state for r in history(drawer)] == ["in the file"]
    undo_takes(drawer)
    assert drawer.read_bytes() == DRAWER.read_bytes()
    assert [r.state for r in history(drawer)] == ["undone"]


def test_the_atomic_writer_replaces_whole_and_keeps_mode_and_links(tmp_path):
    target = tmp_path / "out.toml"
    target.write_text("old")
    os.chmod(target, 0o640)
    link = tmp_path / "link.toml"
    link.symlink_to(target)
    data = DESIGN.read_bytes()
    written = atomic_write(link, data)
    assert written == target and target.read_bytes() == data
    assert link.is_symlink() and stat.S_IMODE(target.stat().st_mode) == 0o640
    assert sorted(p.name for p in tmp_path.iterdir()) == ["link.toml", "out.toml"]  # no temporary left

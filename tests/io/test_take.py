"""`take` and `take --undo`: the stock file changes only in its quantity cells, and never half-way.

Expected values come from the files the tests write themselves, read back with independent readers
(Python's csv module, openpyxl) and hashed with hashlib; row numbers follow the loader's contract
(the record number a person sees, header = row 1).
"""

from __future__ import annotations

import csv
import hashlib
import io
import json
import os
import subprocess
import sys
import threading
import time
from pathlib import Path

import pytest
from click.testing import CliRunner

from drawerfit.io import take as take_mod
from drawerfit.cli import main
from drawerfit.io.take import TakeError, log_path, lock_path, take
from drawerfit.io.take_history import undo

SRC = str(Path(__file__).resolve().parents[2] / "src")

# Three spellings of one small drawer: (file name, bytes, delimiter)
VARIANTS = {
    "comma_lf": ("drawer.csv", b"kind,value,qty,location\nresistor,4k7,12,A1\nresistor,10k,5,A2\n", ","),
    "semicolon_crlf_quoted_bom": (
        "drawer.csv",
        '\ufeff"kind";"value";"qty";"location"\r\n"resistor";"4,7k";"12";"A;1"\r\n'
        '"resistor";"10k";"5";"drawer ""two"""\r\n'.encode("utf-8"), ";"),
    "tab_blank_line_multiline_note_no_final_newline": (
        "drawer.tsv.csv",
        'kind\tvalue\tqty\tlocation\tnote\r\n\r\nresistor\t4k7\t12\tA1\t"from the\nold kit"\r\n'
        'resistor\t10k\t 5 \tA2\tµ-sized'.encode("utf-8"), "\t"),
}


def _rows(data: bytes, delimiter: str) -> list[list[str]]:
    return list(csv.reader(io.StringIO(data.decode("utf-8-sig"), newline=""), delimiter=delimiter))


def _row_of(data: bytes, delimiter: str, value_text: str) -> int:
    """1-based record number of the line whose value cell is ``value_text`` (csv module as oracle)."""
    for n, rec in enumerate(_rows(data, delimiter), start=1):
        if len(rec) > 1 and rec[1] == value_text:
            return n
    raise AssertionError(value_text)


def _sha(data: bytes) -> str:
    return "sha256:" + hashlib.sha256(data).hexdigest()


def _kit(tmp_path: Path, stock: Path, picks, units=1, checksum=None, name="kit.json") -> Path:
    doc = {"units": units, "stock_checksum": checksum or _sha(stock.read_bytes()),
           "pick_list": [{"source": {"file": stock.name, "sheet": sheet, "row": row}, "location": "",
                          "part": "", "per_unit": n, "count": n * units} for sheet, row, n in picks]}
    p = tmp_path / name
    p.write_text(json.dumps(doc), encoding="utf-8")
    return p


def _snapshot(folder: Path) -> dict[str, bytes]:
    return {p.name: p.read_bytes() for p in folder.iterdir() if p.is_file()}


@pytest.mark.parametrize("variant", sorted(VARIANTS))
def test_take_then_undo_gives_the_file_back_byte_for_byte(tmp_path, variant):
    name, data, delim = VARIANTS[variant]
    stock = tmp_path / name
    stock.write_bytes(data)
    r47 = _row_of(data, delim, "4,7k" if delim == ";" else "4k7")
    r10 = _row_of(data, delim, "10k")
    kit = _kit(tmp_path, stock, [(None, r47, 3), (None, r10, 2)], units=2)

    result = take(kit, stock)
    after = stock.read_bytes()
    before_rows, after_rows = _rows(data, delim), _rows(after, delim)
    # only the two quantity cells differ: 12 - 3*2 = 6 and 5 - 2*2 = 1 (spaces kept around ' 5 ')
    changed = {(i, j) for i, (a, b) in enumerate(zip(before_rows, after_rows)) for j in range(len(a)) if a[j] != b[j]}
    assert changed == {(r47 - 1, 2), (r10 - 1, 2)}
    assert after_rows[r47 - 1][2] == "6" and after_rows[r10 - 1][2].strip() == "1"
    assert after.startswith(b"\xef\xbb\xbf") == data.startswith(b"\xef\xbb\xbf")
    assert after.count(b"\r\n") == data.count(b"\r\n") and after.count(b"\n") == data.count(b"\n")
    assert after.count(b'"') == data.count(b'"')
    assert Path(result.backup).read_bytes() == data
    assert result.checksum_after == _sha(after)

    undone = undo(stock)
    assert stock.read_bytes() == data
    assert undone.checksum_after == _sha(data)
    log = [json.loads(t) for t in log_path(stock).read_text(encoding="utf-8").splitlines()]
    assert [e["action"] for e in log] == ["take", "undo"]
    assert not lock_path(stock).exists()


def test_two_takes_and_two_undos_walk_back_to_the_original(tmp_path):
    name, data, delim = VARIANTS["comma_lf"]
    stock = tmp_path / name
    stock.write_bytes(data)
    take(_kit(tmp_path, stock, [(None, 2, 4)], name="a.json"), stock)
    middle = stock.read_bytes()
    take(_kit(tmp_path, stock, [(None, 2, 4), (None, 3, 5)], name="b.json"), stock)
    assert [r[2] for r in _rows(stock.read_bytes(), ",")[1:]] == ["4", "0"]  # 12-4-4, 5-5
    undo(stock)
    assert stock.read_bytes() == middle
    undo(stock)
    assert stock.read_bytes() == data
    with pytest.raises(TakeError, match="no take to undo"):
        undo(stock)


def test_units_on_the_command_line_scale_the_per_unit_counts(tmp_path):
    name, data, _ = VARIANTS["comma_lf"]
    stock = tmp_path / name
    stock.write_bytes(data)
    kit = _kit(tmp_path, stock, [(None, 2, 3)], units=1)
    res = CliRunner().invoke(main, ["take", str(kit), "--stock", str(stock), "--units", "3"])
    assert res.exit_code == 0, res.output
    assert _rows(stock.read_bytes(), ",")[1][2] == "3"  # 12 - 3 per unit * 3 units


def _refusal_case(tmp_path, stock, case):
    if case == "short":  # row 3 holds 5
        return _kit(tmp_path, stock, [(None, 2, 1), (None, 3, 6)]), "row 3", False
    if case == "checksum":
        return _kit(tmp_path, stock, [(None, 2, 1)], checksum="sha256:" + "0" * 64), "changed since", False
    if case == "not_a_line":
        return _kit(tmp_path, stock, [(None, 9, 1)]), "row 9", False
    return _kit(tmp_path, stock, [(None, 2, 1)]), "lock", True


@pytest.mark.parametrize("case", ["short", "checksum", "not_a_line", "lock"])
def test_a_refusal_changes_nothing(tmp_path, case):
    name, data, _ = VARIANTS["semicolon_crlf_quoted_bom"]
    folder = tmp_path / "shelf"
    folder.mkdir()
    stock = folder / name
    stock.write_bytes(data)
    kit, needle, hold = _refusal_case(tmp_path, stock, case)
    if hold:
        lock_path(stock).write_text("pid 1 since earlier\n", encoding="utf-8")
    before = _snapshot(folder)
    res = CliRunner().invoke(main, ["take", str(kit), "--stock", str(stock)])
    assert res.exit_code == 2
    assert needle in res.output and "Traceback" not in res.output
    assert _snapshot(folder) == before  # same files, same bytes: no backup, no log, no temp file


def test_undo_refuses_when_the_file_was_edited_after_the_take(tmp_path):
    name, data, _ = VARIANTS["comma_lf"]
    stock = tmp_path / name
    stock.write_bytes(data)
    take(_kit(tmp_path, stock, [(None, 2, 1)]), stock)
    edited = stock.read_bytes() + b"resistor,1k,3,A3\n"
    stock.write_bytes(edited)
    res = CliRunner().invoke(main, ["take", "--undo", "--stock", str(stock)])
    assert res.exit_code == 2 and "edited since" in res.output
    assert stock.read_bytes() == edited


def test_dry_run_changes_nothing(tmp_path):
    name, data, _ = VARIANTS["comma_lf"]
    stock = tmp_path / name
    stock.write_bytes(data)
    kit = _kit(tmp_path, stock, [(None, 2, 5)])
    before = _snapshot(tmp_path)
    res = CliRunner().invoke(main, ["take", str(kit), "--stock", str(stock), "--dry-run"])
    assert res.exit_code == 0
    assert "12 -> 7" in res.output
    assert _snapshot(tmp_path) == before


def test_a_crash_before_the_rename_leaves_the_original(tmp_path, monkeypatch):
    name, data, _ = VARIANTS["comma_lf"]
    stock = tmp_path / name
    stock.write_bytes(data)
    kit = _kit(tmp_path, stock, [(None, 2, 2)])

    def power_cut(src, dst):
        raise OSError(5, "simulated failure between the temporary write and the rename")

    monkeypatch.setattr(os, "replace", power_cut)
    with pytest.raises(TakeError, match="unchanged"):
        take(kit, stock)
    monkeypatch.undo()
    assert stock.read_bytes() == data
    assert not [p for p in tmp_path.iterdir() if p.name.endswith(".tmp")]
    assert not lock_path(stock).exists()
    with pytest.raises(TakeError, match="no take to undo"):
        undo(stock)
    take(kit, stock)  # the same kit still applies: the file never changed
    assert _rows(stock.read_bytes(), ",")[1][2] == "10"


def test_a_killed_take_leaves_the_original_and_undo_skips_it(tmp_path):
    # the process dies (no exception handling at all) right where the rename would happen
    name, data, _ = VARIANTS["comma_lf"]
    stock = tmp_path / name
    stock.write_bytes(data)
    kit = _kit(tmp_path, stock, [(None, 2, 2)])
    script = ("import os, sys\nos.replace = lambda a, b: os._exit(9)\nfrom drawerfit.io.take import take\n"
              f"take({str(kit)!r}, {str(stock)!r})\n")
    proc = subprocess.run([sys.executable, "-c", script], env={**os.environ, "PYTHONPATH": SRC},
                          capture_output=True, timeout=120)
    assert proc.returncode == 9
    assert stock.read_bytes() == data
    assert lock_path(stock).exists()  # a killed take cannot clean up its lock
    # its process is gone from this machine, so the next take or undo takes the lock over
    with pytest.raises(TakeError, match="no take to undo"):
        undo(stock)
    assert not lock_path(stock).exists()
    assert stock.read_bytes() == data
    done = take(kit, stock)  # the same kit still applies: the file never changed
    assert _rows(stock.read_bytes(), ",")[1][2] == "10"
    assert not any("lock" in n for n in done.notes)  # the undo above had already taken the lock over


def test_two_takes_at_once_in_threads_one_wins(tmp_path, monkeypatch):
    name, data, _ = VARIANTS["comma_lf"]
    stock = tmp_path / name
    stock.write_bytes(data)
    kits = [_kit(tmp_path, stock, [(None, 2, 5)], name=f"k{i}.json") for i in range(2)]
    real_plan = take_mod.plan_take

    def slow_plan(*a, **k):  # hold the lock long enough for the other thread to meet it
        plan = real_plan(*a, **k)
        time.sleep(0.5)
        return plan

    monkeypatch.setattr(take_mod, "plan_take", slow_plan)
    barrier = threading.Barrier(2)
    outcomes = []

    def run(kit):
        barrier.wait()
        try:
            take(kit, stock)
            outcomes.append("ok")
        except TakeError as exc:
            outcomes.append(str(exc))

    threads = [threading.Thread(target=run, args=(k,)) for k in kits]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    assert sorted(o == "ok" for o in outcomes) == [False, True]
    assert "lock" in next(o for o in outcomes if o != "ok")
    assert _rows(stock.read_bytes(), ",")[1][2] == "7"  # taken once: 12 - 5


def test_takes_in_several_processes_at_once_one_wins(tmp_path):
    name, data, _ = VARIANTS["comma_lf"]
    stock = tmp_path / name
    stock.write_bytes(data)
    kit = _kit(tmp_path, stock, [(None, 2, 5)])
    env = {**os.environ, "PYTHONPATH": SRC}
    procs = [subprocess.Popen([sys.executable, "-m", "drawerfit", "take", str(kit), "--stock", str(stock)],
                              env=env, stdout=subprocess.PIPE, stderr=subprocess.PIPE) for _ in range(4)]
    codes = [p.wait(timeout=120) for p in procs]
    for p in procs:
        p.stdout.close()
        p.stderr.close()
    assert sorted(codes) == [0, 2, 2, 2]
    assert _rows(stock.read_bytes(), ",")[1][2] == "7"
    log = [json.loads(t) for t in log_path(stock).read_text(encoding="utf-8").splitlines()]
    assert [e["action"] for e in log] == ["take"]
    assert not lock_path(stock).exists()


def test_xlsx_keeps_other_sheets_and_styles(tmp_path):
    from openpyxl import Workbook, load_workbook
    from openpyxl.styles import Font, PatternFill

    wb = Workbook()
    ws = wb.active
    ws.title = "Resistors"
    ws.append(["kind", "value", "qty", "location"])
    ws.append(["resistor", "4k7", 12, "A1"])
    ws.append(["resistor", "10k", 5, "A2"])
    ws["A1"].font = Font(bold=True)
    ws["C2"].fill = PatternFill("solid", fgColor="FFFF00")
    ws["C2"].number_format = "0"
    ws.column_dimensions["B"].width = 23
    notes = wb.create_sheet("Notes")
    notes["A1"] = "bin A is the left drawer"
    notes["B2"] = 42
    notes["B2"].font = Font(italic=True, color="FF0000")
    stock = tmp_path / "drawer.xlsx"
    wb.save(stock)
    data = stock.read_bytes()
    kit = _kit(tmp_path, stock, [("Resistors", 2, 4)])

    take(kit, stock)
    got = load_workbook(stock)
    assert got.sheetnames == ["Resistors", "Notes"]
    r = got["Resistors"]
    assert r["C2"].value == 8 and r["C3"].value == 5
    assert r["C2"].fill.fgColor.rgb.endswith("FFFF00") and r["C2"].number_format == "0"
    assert r["A1"].font.bold and r.column_dimensions["B"].width == 23
    assert got["Notes"]["A1"].value == "bin A is the left drawer" and got["Notes"]["B2"].value == 42
    assert got["Notes"]["B2"].font.italic and got["Notes"]["B2"].font.color.rgb.endswith("FF0000")

    undo(stock)
    assert stock.read_bytes() == data  # undo puts the backup back: the very same bytes


def test_design_toml_pick_list_is_read_like_the_kit_json(tmp_path):
    name, data, _ = VARIANTS["comma_lf"]
    stock = tmp_path / name
    stock.write_bytes(data)
    toml = tmp_path / "design.toml"
    toml.write_text(f'units = 2\nstock_checksum = "{_sha(data)}"\n\n[[pick_list]]\n'
                    f'source = {{ file = "{name}", row = 3 }}\nlocation = "A2"\npart = "10 kΩ"\n'
                    'per_unit = 2\ncount = 4\n', encoding="utf-8")
    res = CliRunner().invoke(main, ["take", str(toml), "--stock", str(stock), "--json"])
    assert res.exit_code == 0, res.output
    out = json.loads(res.output)
    assert out["changes"] == [{"sheet": None, "row": 3, "column": 2, "old_qty": 5, "new_qty": 1,
                               "part": out["changes"][0]["part"], "location": "A2"}]
    assert _rows(stock.read_bytes(), ",")[2][2] == "1"


def test_xlsx_with_a_chart_is_refused_rather_than_losing_it(tmp_path):
    # openpyxl (its documentation) does not keep charts and images of a workbook it loads and saves
    from openpyxl import Workbook
    from openpyxl.chart import BarChart, Reference

    wb = Workbook()
    ws = wb.active
    ws.append(["kind", "value", "qty", "location"])
    ws.append(["resistor", "4k7", 12, "A1"])
    chart = BarChart()
    chart.add_data(Reference(ws, min_col=3, min_row=1, max_row=2), titles_from_data=True)
    ws.add_chart(chart, "F2")
    stock = tmp_path / "drawer.xlsx"
    wb.save(stock)
    kit = _kit(tmp_path, stock, [(ws.title, 2, 1)])
    before = _snapshot(tmp_path)
    res = CliRunner().invoke(main, ["take", str(kit), "--stock", str(stock)])
    assert res.exit_code == 2 and "charts" in res.output
    assert _snapshot(tmp_path) == before


def test_undo_without_the_backup_writes_the_old_quantities_back(tmp_path):
    name, data, _ = VARIANTS["semicolon_crlf_quoted_bom"]
    stock = tmp_path / name
    stock.write_bytes(data)
    result = take(_kit(tmp_path, stock, [(None, 2, 5), (None, 3, 1)]), stock)
    Path(result.backup).unlink()
    done = undo(stock)
    assert stock.read_bytes() == data  # only the digits were changed, so they go back exactly
    assert any("backup" in n for n in done.notes)


def test_a_file_without_a_quantity_column_is_refused(tmp_path):
    stock = tmp_path / "drawer.csv"
    stock.write_bytes(b"kind,value,location\nresistor,4k7,A1\n")
    kit = _kit(tmp_path, stock, [(None, 2, 1)])
    before = _snapshot(tmp_path)
    res = CliRunner().invoke(main, ["take", str(kit), "--stock", str(stock)])
    assert res.exit_code == 2 and "no quantity column" in res.output
    assert _snapshot(tmp_path) == before


def test_undo_dry_run_changes_nothing(tmp_path):
    name, data, _ = VARIANTS["comma_lf"]
    stock = tmp_path / name
    stock.write_bytes(data)
    take(_kit(tmp_path, stock, [(None, 3, 2)]), stock)
    before = _snapshot(tmp_path)
    res = CliRunner().invoke(main, ["take", "--undo", "--dry-run", "--stock", str(stock)])
    assert res.exit_code == 0 and "3 -> 5" in res.output  # 5 - 2 taken, would go back to 5
    assert _snapshot(tmp_path) == before

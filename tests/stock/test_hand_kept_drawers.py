"""Drawers as people keep them by hand: one Rating column for watts and volts, transistors named in
the value column, the same value in several bins, windows written in percent.

Every drawer here is written by the test; the expected figures are the ones written in it (a 0.6 W
cell is 0.6 W), and the counts are sums of its quantity cells.
"""

from __future__ import annotations

import json

import pytest
from click.testing import CliRunner

from drawerfit import constants as K
from drawerfit.cli import main
from drawerfit.stock import load_stock
from drawerfit.values import ValueParseError, parse_tolerance

HAND = ("Type,Value,Rating,Qty,Bin\n"
        "R,4k7,0.6W,20,A1\nR,4k7,0.6W,10,A2\nR,4k7,0.6W,5,A3\nR,4k7,0.6W,8,A4\n"
        "R,10k,1/4 W,30,A5\nC,10u,25V,20,B1\nC,100n,50 V,40,B2\nQ,T-Alpha,,10,C1\n")


def _write(tmp_path, text, name="drawer.csv"):
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return p


def test_one_rating_column_is_read_by_the_unit_in_each_cell(tmp_path):
    stock = load_stock(str(_write(tmp_path, HAND)))
    r = stock.of_kind("resistor")
    c = stock.of_kind("capacitor")
    assert [ln.power for ln in r] == [0.6, 0.6, 0.6, 0.6, 0.25]
    assert [ln.voltage for ln in c] == [25.0, 50.0]
    assert not any("power" in ln.assumed or "voltage" in ln.assumed for ln in r + c)
    # and so twenty 10 µF 25 V parts make 20 µF at 25 V (two in parallel)
    res = CliRunner().invoke(main, ["match", "20u", "--voltage", "25V", "--stock", str(tmp_path / "drawer.csv"),
                                    "--json"])
    first = json.loads(res.stdout)["results"][0]
    assert first["within"] and first["value"] == pytest.approx(20e-6) and first["voltage"] == 25.0


@pytest.mark.parametrize("header,cells,expected", [
    ("Rating (V)", ("C,10u,35,5,B1",), ("capacitor", "voltage", 35.0)),  # a bare number takes the header's unit
    ("Rating", ("C,10u,35,5,B1",), ("capacitor", "voltage", 35.0)),  # else the rating that matters for the kind
    ("Rating", ("R,1k,2,5,A1",), ("resistor", "power", 2.0)),
    ("Max rating", ("R,1k,500mW,5,A1",), ("resistor", "power", 0.5)),
])
def test_rating_cells_without_a_unit(tmp_path, header, cells, expected):
    stock = load_stock(str(_write(tmp_path, f"Type,Value,{header},Qty,Bin\n" + "\n".join(cells) + "\n")))
    kind, field, value = expected
    (line,) = stock.of_kind(kind)
    assert getattr(line, field) == value


def test_a_rating_in_the_wrong_unit_skips_the_line_with_row_and_column(tmp_path):
    stock = load_stock(str(_write(tmp_path, "Type,Value,Rating,Qty\nR,1k,25V,5\nC,10u,0.5W,5\nR,2k2,0.5W,5\n")))
    assert [ln.value for ln in stock.lines] == [2200.0]
    rows = [(p.row, p.column) for p in stock.problems if p.severity == "error"]
    assert rows == [(2, "Rating"), (3, "Rating")]


def test_an_ignored_column_that_changes_results_is_a_warning_in_the_summary(tmp_path):
    path = _write(tmp_path, "Type,Value,Load (W),Qty\nR,4k7,0.6W,20\nR,10k,0.6W,5\n")
    stock = load_stock(str(path))
    (warning,) = stock.warnings
    assert "'Load (W)'" in warning and "holds values in W" in warning and "2 resistor lines" in warning
    res = CliRunner().invoke(main, ["stock", str(path)])
    assert f"warning: {warning}" in res.stdout  # on stdout, in the summary
    res = CliRunner().invoke(main, ["match", "4k7", "--stock", str(path)])
    assert f"warning: {warning}" in res.stdout
    # a column that changes nothing stays a note on stderr
    quiet = _write(tmp_path, "Type,Value,Colour,Qty\nR,4k7,red,20\n", "quiet.csv")
    assert load_stock(str(quiet)).warnings == ()
    assert "columns not recognised and ignored" in CliRunner().invoke(main, ["stock", str(quiet)]).stderr


def test_a_transistor_named_in_the_value_column_keeps_its_name(tmp_path):
    with_polarity = load_stock(str(_write(tmp_path, "Type,Value,Polarity,Qty\nQ,T-Alpha,NPN,10\n")))
    (q,) = with_polarity.transistors()
    assert (q.label, q.polarity) == ("T-Alpha", "npn")
    without = load_stock(str(_write(tmp_path, HAND, "hand.csv")))
    (p,) = [p for p in without.problems if p.severity == "error"]
    assert (p.row, p.column, p.text) == (9, "Type", "T-Alpha")
    assert "no polarity column" in p.message and "add a 'polarity' column" in p.message


def test_match_pools_the_bins_of_one_value_and_shows_where_they_are(tmp_path):
    path = _write(tmp_path, HAND)
    res = CliRunner().invoke(main, ["match", "4k7", "--units", "30", "--stock", str(path), "--json"])
    results = json.loads(res.stdout)["results"]
    first = results[0]
    assert first["within"] and first["arrangement"] == "single" and first["value"] == 4700.0
    (held,) = first["on_hand"]
    assert held["count"] == 20 + 10 + 5 + 8
    assert sorted(b["location"] for b in held["bins"]) == ["A1", "A2", "A3", "A4"]
    assert sum(t["count"] for t in first["take"]) == 30
    assert all(t["count"] <= {"A1": 20, "A2": 10, "A3": 5, "A4": 8}[t["location"]] for t in first["take"])
    # one row for the value, not one per bin
    singles = [r for r in results if r["within"] and r["arrangement"] == "single" and r["value"] == 4700.0]
    assert len(singles) == 1
    text = CliRunner().invoke(main, ["match", "4k7", "--units", "30", "--stock", str(path)]).stdout
    assert "43 in A1 ×20, A2 ×10, A4 ×8, A3 ×5" in text and "take for 30 units: A1 ×20, A2 ×10" in text


def test_results_far_outside_the_window_are_set_apart(tmp_path):
    path = _write(tmp_path, HAND)
    # 5 kΩ for 20 units: the nearest the drawer makes (4k7, 10k ∥ 10k...) are 6 % and more off
    res = CliRunner().invoke(main, ["match", "5k", "--units", "20", "--stock", str(path), "--json"])
    results = json.loads(res.stdout)["results"]
    assert results and not any(r["within"] for r in results)
    assert len(results) <= 3 and results[0]["value"] == 4700.0
    text = CliRunner().invoke(main, ["match", "5k", "--units", "20", "--stock", str(path)]).stdout
    assert "nothing in the drawer makes it within ±1 %" in text
    assert "Nearest outside the ±1 % window (not substitutes" in text


def test_a_grade_that_stands_in_is_pooled_as_design_pools_it(tmp_path):
    # 1 % parts may stand in for 5 % ones of the same value and rating, never the other way
    text = ("Kind,Value,Tolerance,Power,Qty,Bin\nR,4k7,5%,0.25W,6,A1\nR,4k7,1%,0.25W,5,B1\n")
    path = _write(tmp_path, text)
    res = json.loads(CliRunner().invoke(main, ["match", "4k7", "--units", "10", "--stock", str(path),
                                               "--json"]).stdout)["results"]
    loose = [r for r in res if r["within"] and r["tolerance"] == pytest.approx(0.05)]
    tight = [r for r in res if r["within"] and r["tolerance"] == pytest.approx(0.01)]
    assert loose and loose[0]["on_hand"][0]["count"] == 11  # six of its own and five better ones
    assert sorted((t["location"], t["count"]) for t in loose[0]["take"]) == [("A1", 6), ("B1", 4)]
    assert not tight  # five 1 % parts cannot make ten


@pytest.mark.parametrize("text,expected", [("200%", None), ("150%", None), ("100 %", None), ("99%", 0.99),
                                           ("5", 0.05), ("5 %", 0.05), ("0.02", 0.02)])
def test_a_window_in_percent_is_read_once(text, expected):
    if expected is None:
        with pytest.raises(ValueParseError, match="not below 100 %"):
            parse_tolerance(text)
    else:
        assert parse_tolerance(text) == pytest.approx(expected)


def test_within_200_percent_is_refused_on_the_command_line(samples):
    res = CliRunner().invoke(main, ["match", "4k7", "--within", "200%", "--stock", str(samples / "teaching_lab.csv")])
    assert res.exit_code == 2 and "200 % is not below 100 %" in res.output


def test_defaults_are_worded_once(tmp_path):
    res = CliRunner().invoke(main, ["stock", str(_write(tmp_path, "Kind,Value,Qty\nR,1k,5\n"))])
    line = next(ln for ln in res.stdout.splitlines() if "250 mW" in ln)
    assert line.strip() == "assumed: power rating 250 mW for 1 resistor line (the file does not say)"
    assert line.count("assumed") == 1


# --- limits ----------------------------------------------------------------------------------------


def test_too_many_rows_are_refused_before_any_line_is_read(tmp_path, monkeypatch):
    from openpyxl import Workbook

    monkeypatch.setattr(K, "MAX_ROWS", 50)
    csv_path = _write(tmp_path, "Kind,Value,Qty\n" + "R,1k,1\n" * 60)
    wb = Workbook()
    for _ in range(60):
        wb.active.append(["R", "1k", 1])
    xlsx_path = tmp_path / "big.xlsx"
    wb.save(xlsx_path)
    for path in (csv_path, xlsx_path):
        res = CliRunner().invoke(main, ["stock", str(path)])
        assert res.exit_code == 2 and "over the limit" in res.stderr and "50" in res.stderr
    ok = _write(tmp_path, "Kind,Value,Qty\n" + "R,1k,1\n" * 45, "ok.csv")
    assert len(load_stock(str(ok)).lines) == 45


def _workbook_bytes(rows) -> bytes:
    import io

    from openpyxl import Workbook

    wb = Workbook()
    for r in rows:
        wb.active.append(r)
    buf = io.BytesIO()
    wb.save(buf)
    return buf.getvalue()


def test_a_workbook_that_unpacks_too_large_is_refused_unparsed(tmp_path, monkeypatch):
    import openpyxl

    # a sheet of 3 MB of text (100 cells of 30,000 characters), against a 2 MB ceiling set for the test
    path = tmp_path / "bomb.xlsx"
    path.write_bytes(_workbook_bytes([["Kind", "Value", "Note"]] + [["R", "1k", "x" * 30_000]] * 100))
    monkeypatch.setattr(K, "MAX_XLSX_UNPACKED_BYTES", 2_000_000)

    def never(*a, **k):
        raise AssertionError("the workbook was parsed")

    monkeypatch.setattr(openpyxl, "load_workbook", never)
    res = CliRunner().invoke(main, ["stock", str(path)])
    assert res.exit_code == 2 and "unpacks to" in res.stderr and "2,000,000" in res.stderr


def test_a_forged_size_in_the_zip_directory_is_held_to(tmp_path):
    import struct
    import zipfile

    # the zip directory claims a sheet of 1 GB: refused on that claim, and unzipping would stop there
    data = bytearray(_workbook_bytes([["Kind", "Value", "Qty"], ["R", "1k", 1]]))
    with zipfile.ZipFile(__import__("io").BytesIO(bytes(data))) as z:
        names = [i.filename for i in z.infolist()]
    sheet = names.index("xl/worksheets/sheet1.xml")
    at = -1
    for _ in range(sheet + 1):  # the central directory entry of the sheet (signature PK\1\2)
        at = data.index(b"PK\x01\x02", at + 1)
    struct.pack_into("<I", data, at + 24, 2**30)  # uncompressed size field of that entry
    path = tmp_path / "forged.xlsx"
    path.write_bytes(bytes(data))
    res = CliRunner().invoke(main, ["stock", str(path)])
    assert res.exit_code == 2 and "unpacks to" in res.stderr and "Traceback" not in res.output


def test_a_file_over_the_size_limit_is_refused(tmp_path, monkeypatch):
    monkeypatch.setattr(K, "MAX_INPUT_BYTES", 1000)
    path = _write(tmp_path, "Kind,Value,Qty\n" + "R,1k,1\n" * 200)
    res = CliRunner().invoke(main, ["stock", str(path)])
    assert res.exit_code == 2 and "over the limit of 1,000 bytes" in res.stderr

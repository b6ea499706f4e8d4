"""The stock loader: notations, header variants, defaults, and the messages on bad lines."""

from __future__ import annotations

import hashlib

import pytest

from drawerfit import constants as K
from drawerfit.parts import StockError
from drawerfit.stock import load_stock


def write(tmp_path, name, text, encoding="utf-8"):
    p = tmp_path / name
    p.write_bytes(text.encode(encoding))
    return p


def digest(path):
    return hashlib.sha256(path.read_bytes()).hexdigest()


def test_messy_sample_reads_every_good_line_in_any_notation(samples):
    path = samples / "messy_drawer.csv"
    before = digest(path)
    stock = load_stock(str(path))
    assert digest(path) == before  # the loader never writes
    # Expected values read off the file by hand; the letter code per IEC 60062.
    res = {(ln.source.row, ln.value, ln.qty) for ln in stock.of_kind("resistor")}
    assert res == {(3, 4700.0, 25), (4, 4700.0, 10), (5, 4700.0, 7), (6, 10000.0, 12), (7, 2.2, 6),
                   (8, 0.47, 4), (9, 1e6, 9), (10, 2200.0, 15), (11, 330.0, 20), (23, 15000.0, 11)}
    caps = {(ln.source.row, round(ln.value * 1e12), ln.qty) for ln in stock.of_kind("capacitor")}
    assert caps == {(13, 100000, 30), (14, 100000, 5), (15, 4700000, 8), (16, 22000000, 6), (17, 470, 12)}
    # the three 4k7 lines stay separate lines (different bins)
    assert sorted(ln.location for ln in stock.of_kind("resistor") if ln.value == 4700.0) == ["A-1", "A-2", "A-3"]
    r = {ln.source.row: ln for ln in stock.lines}
    assert r[3].power == 0.25 and r[7].power == 1.0 and r[23].power == 0.5 and r[23].tolerance == 0.02
    assert r[5].tolerance == 0.05  # '5' in a tolerance column is 5 %


def test_messy_sample_problems_name_file_row_column_and_text(samples):
    stock = load_stock(str(samples / "messy_drawer.csv"))
    errors = {(p.row, p.column, p.text) for p in stock.problems if p.severity == "error"}
    assert errors == {(18, "Val.", "4k7k"), (19, "On hand", "lots"), (20, "On hand", "-2"),
                      (21, "On hand", "2.5"), (22, "Part", "gizmo")}
    msg = str(next(p for p in stock.problems if p.row == 18))
    assert "messy_drawer.csv" in msg and "row 18" in msg and "'Val.'" in msg and "'4k7k'" in msg


def test_strict_turns_problems_into_a_failure(samples):
    with pytest.raises(StockError, match="5 line"):
        load_stock(str(samples / "messy_drawer.csv"), strict=True)


@pytest.mark.parametrize("delim", [",", ";", "\t"])
@pytest.mark.parametrize("bom", ["", "\ufeff"])
def test_delimiters_and_bom(tmp_path, delim, bom):
    rows = [["Category", "Resistance", "Quantity", "Slot"], ["resistor", "4k7", "3", "A1"],
            ["resistor", "1.5 kΩ", "2", "A2"]]
    text = bom + "\n".join(delim.join(r) for r in rows) + "\n"
    stock = load_stock(str(write(tmp_path, "s.csv", text)))
    assert [(ln.value, ln.qty, ln.location, ln.source.row) for ln in stock.lines] == [
        (4700.0, 3, "A1", 2), (1500.0, 2, "A2", 3)]
    assert stock.lines[0].source.qty_column == 2


def test_header_units_scale_bare_numbers_and_kind_comes_from_the_header(tmp_path):
    text = "Capacitance (nF),Volts,Count\n100,50,4\n4.7u,25,2\n"
    stock = load_stock(str(write(tmp_path, "c.csv", text)))
    assert [ln.kind for ln in stock.lines] == ["capacitor", "capacitor"]
    assert stock.lines[0].value == pytest.approx(100e-9)
    assert stock.lines[1].value == pytest.approx(4.7e-6)  # its own prefix wins over the header's


def test_kind_from_the_unit_when_there_is_no_kind_column(tmp_path):
    text = "Value,Qty\n4k7,1\n100nF,2\n2R2,3\n47u,4\n10,5\n"
    stock = load_stock(str(write(tmp_path, "v.csv", text)))
    assert [(ln.kind, ln.source.row) for ln in stock.lines] == [
        ("resistor", 2), ("capacitor", 3), ("resistor", 4), ("capacitor", 5)]
    (problem,) = [p for p in stock.problems if p.severity == "error"]
    assert problem.row == 6 and "cannot tell the kind" in problem.message


def test_defaults_are_applied_and_listed(tmp_path):
    text = "Kind,Value,Qty\nR,1k,5\nC,100n,5\nC,100u,5\n"
    stock = load_stock(str(write(tmp_path, "d.csv", text)))
    r, c_small, c_big = stock.lines
    assert (r.tolerance, r.power) == (K.TOL_RESISTOR, K.POWER_RESISTOR)
    assert (c_small.polarized, c_small.voltage, c_small.tolerance) == (False, K.VOLTAGE_NONPOLAR, K.TOL_CERAMIC)
    assert (c_big.polarized, c_big.voltage, c_big.tolerance) == (True, K.VOLTAGE_POLARIZED, K.TOL_ELECTROLYTIC)
    text = " ".join(stock.assumptions)
    assert "power rating 250 mW for 1 resistor line (the file does not say)" in text and "6.3 V polarized" in text


def test_transistor_lacking_a_rating_is_reported_not_guessed(tmp_path):
    text = "Kind,Label,hFE min,hFE max,VCEO,Ic max (mA),Pd (mW),Qty\nNPN,QA,100,300,40,200,500,5\nPNP,QB,80,,,,,2\n"
    stock = load_stock(str(write(tmp_path, "q.csv", text)))
    qa, qb = stock.transistors()
    assert (qa.polarity, qa.hfe_min, qa.hfe_max, qa.vceo, qa.ic_max, qa.pd) == ("npn", 100, 300, 40, 0.2, 0.5)
    assert qb.vceo is None and qb.ic_max is None and qb.pd is None  # never guessed
    (warn,) = [p for p in stock.problems if p.row == 3]
    assert "hFE max" in warn.message and "VCEO" in warn.message and warn.severity == "warning"


@pytest.mark.parametrize("header", ["Pins", "Pinout", "Pin order", "Lead order"])
def test_pin_order_column_is_read_and_checked(tmp_path, header):
    # the leads in pin order as people write them; anything but E, B and C once each is named by
    # file, row and column, and the line still loads with its pin order unknown
    text = (f"Kind,Label,hFE min,hFE max,VCEO,Ic max (mA),Pd (mW),Qty,{header}\n"
            "NPN,QA,100,300,40,200,500,5,E-B-C\nPNP,QB,80,250,40,200,500,2,cbe\nNPN,QC,80,250,40,200,500,2,EBX\n"
            "NPN,QD,80,250,40,200,500,2,\n")
    stock = load_stock(str(write(tmp_path, "q.csv", text)))
    assert {ln.label: ln.pins for ln in stock.transistors()} == {"QA": "EBC", "QB": "CBE", "QC": "", "QD": ""}
    (bad,) = [p for p in stock.problems if p.row == 4]
    assert bad.column == header and bad.text == "EBX" and bad.severity == "warning"
    assert "q.csv" in str(bad) and "row 4" in str(bad) and "E, B and C" in bad.message


def test_transistor_without_polarity_is_skipped(tmp_path):
    text = "Kind,Label,hFE min,hFE max,Qty\ntransistor,QZ,100,300,5\n"
    stock = load_stock(str(write(tmp_path, "q.csv", text)))
    assert not stock.lines
    assert "NPN or PNP" in stock.problems[0].message


def test_xlsx_every_sheet_kind_from_sheet_name(samples):
    csv_stock = load_stock(str(samples / "teaching_lab.csv"))
    xl = load_stock(str(samples / "teaching_lab.xlsx"))
    key = lambda s: sorted((ln.kind, ln.value or 0.0, ln.qty, ln.location, ln.label) for ln in s.lines)  # noqa: E731
    assert key(xl) == key(csv_stock)
    assert {ln.source.sheet for ln in xl.lines} == {"Resistors", "Capacitors", "Transistors"}
    assert all(ln.source.row >= 2 for ln in xl.lines)


def test_missing_file_and_not_a_stock_file(tmp_path):
    with pytest.raises(StockError, match="no such file"):
        load_stock(str(tmp_path / "nope.csv"))
    with pytest.raises(StockError, match="no stock lines"):
        load_stock(str(write(tmp_path, "x.csv", "hello,world\n1,2\n")))


def test_non_utf8_file_still_loads_with_a_note(tmp_path):
    p = tmp_path / "w.csv"
    p.write_bytes("Kind,Value,Qty,Notes\nR,1k,2,caf\xe9\n".encode("cp1252"))
    stock = load_stock(str(p))
    assert stock.lines[0].note == "café"
    assert any("Windows-1252" in pr.message for pr in stock.problems)

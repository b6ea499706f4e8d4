"""Quantity edits of a CSV keep every other byte: checked against Python's csv module."""

from __future__ import annotations

import csv
import io

import pytest
from hypothesis import given, settings, strategies as st

from drawerfit.parts import StockError
from drawerfit.io.stock_edits import (QtyEdit, csv_records, detect_delimiter, edit_csv_bytes, field_text,
                                       new_qty_text)

# No lone carriage return inside a cell: the csv module's writer leaves one unquoted when the line
# ending is '\n', which makes its own output ambiguous; '\n' inside cells is kept (it gets quoted).
cell = st.text(alphabet=st.sampled_from(list('ab k7,;"\t\n') + ["Ω", "µ"]), max_size=6)


def _csv_bytes(rows, delimiter, quoting, lineterminator, bom):
    buf = io.StringIO(newline="")
    csv.writer(buf, delimiter=delimiter, quoting=quoting, lineterminator=lineterminator).writerows(rows)
    data = buf.getvalue().encode("utf-8")
    return (b"\xef\xbb\xbf" + data) if bom else data


@settings(max_examples=200, deadline=None)
@given(rows=st.lists(st.lists(cell, min_size=1, max_size=4), min_size=1, max_size=6),
       delimiter=st.sampled_from([",", ";", "\t"]),
       quoting=st.sampled_from([csv.QUOTE_MINIMAL, csv.QUOTE_ALL]),
       lineterminator=st.sampled_from(["\n", "\r\n"]), bom=st.booleans())
def test_records_agree_with_the_csv_module(rows, delimiter, quoting, lineterminator, bom):
    # oracle: the Python standard library's csv reader (RFC 4180 style quoting)
    data = _csv_bytes(rows, delimiter, quoting, lineterminator, bom)
    ours = [[field_text(data, f) for f in rec] for rec in csv_records(data, delimiter.encode())]
    ref = list(csv.reader(io.StringIO(data.decode("utf-8-sig"), newline=""), delimiter=delimiter))
    assert ours == [r if r else [""] for r in ref]


@settings(max_examples=200, deadline=None)
@given(rows=st.lists(st.lists(cell, min_size=2, max_size=4), min_size=1, max_size=6),
       qtys=st.lists(st.integers(0, 500), min_size=6, max_size=6),
       new=st.lists(st.integers(0, 500), min_size=6, max_size=6),
       delimiter=st.sampled_from([",", ";", "\t"]),
       quoting=st.sampled_from([csv.QUOTE_MINIMAL, csv.QUOTE_ALL]),
       lineterminator=st.sampled_from(["\n", "\r\n"]), bom=st.booleans(), data=st.data())
def test_edit_changes_only_the_quantity_fields(rows, qtys, new, delimiter, quoting, lineterminator, bom, data):
    # property: after the edit, csv.reader sees the new quantities and every other field unchanged
    rows = [[r[0], str(q)] + r[2:] for r, q in zip(rows, qtys)]
    raw = _csv_bytes(rows, delimiter, quoting, lineterminator, bom)
    chosen = data.draw(st.sets(st.integers(0, len(rows) - 1)))
    edits = [QtyEdit(None, i + 1, 1, new[i]) for i in sorted(chosen)]
    out = edit_csv_bytes(raw, edits, delimiter.encode(), "f.csv")
    assert out.startswith(b"\xef\xbb\xbf") == bom
    got = list(csv.reader(io.StringIO(out.decode("utf-8-sig"), newline=""), delimiter=delimiter))
    expect = [[r[0], str(new[i]) if i in chosen else r[1]] + r[2:] for i, r in enumerate(rows)]
    assert got == expect
    # and with nothing to change, not one byte differs
    assert edit_csv_bytes(raw, [], delimiter.encode(), "f.csv") == raw


def test_quantity_text_keeps_what_surrounds_the_number():
    # property of the format: only the digits change
    assert new_qty_text(" 12 pcs", 9, "x") == " 9 pcs"
    assert new_qty_text("12,0", 7, "x") == "7,0"
    with pytest.raises(StockError, match="row 3"):
        new_qty_text("a dozen", 3, "f.csv, row 3")


def test_delimiter_found_from_the_quantity_header():
    data = "name;qty,x\r\n4k7;12,5\r\n".encode()
    # ';' puts 'qty,x' at column 1; ',' would put 'x' there: the header text decides
    assert detect_delimiter(data, "qty,x", 1) == b";"
    assert detect_delimiter("a\tb\tc\n1\t2\t3\n".encode()) == b"\t"

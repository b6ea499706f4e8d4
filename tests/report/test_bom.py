"""The parts list: counts add up to the design, both notations present, nothing runs as a formula.

Expected counts come from the design files themselves (their [design.roles] part lists and their
independent [[pick_list]] counts); value codes are IEC 60062, written by hand.  The formula
starts (= + - @ tab CR) are the ones spreadsheet programs treat as formula prefixes (common
practice, no source).
"""

from __future__ import annotations

import csv
import json
import tomllib
from collections import Counter

import pytest
from click.testing import CliRunner
from hypothesis import given, strategies as st

from drawerfit.cli import main
from drawerfit.report.bom import FORMULA_STARTS, neutralise

from .helpers import CE_PNP, FOLLOWER, PLAIN


def _design_counts(path):
    """Parts per unit by role, straight from the TOML (not through our reader), plus Q1."""
    data = tomllib.loads(path.read_text(encoding="utf-8"))
    roles = data.get("design", {}).get("roles", {})
    counts = {role: len(t["parts"]) for role, t in roles.items()}
    for role in data["parts"]:
        counts.setdefault(role, 1)
    counts["Q1"] = 1
    return counts, data.get("units", 1), data.get("pick_list", [])


def _read_csv(path):
    with open(path, newline="", encoding="utf-8-sig") as fh:
        return list(csv.DictReader(fh))


def _read_xlsx(path, sheet="parts"):
    from openpyxl import load_workbook

    ws = load_workbook(path)[sheet]
    rows = list(ws.iter_rows(values_only=True))
    head = rows[0]
    return [dict(zip(head, r)) for r in rows[1:]]


def _export_bom(tmp_path, design, suffix):
    out = tmp_path / f"parts{suffix}"
    res = CliRunner().invoke(main, ["export", str(design), "--bom", str(out)])
    assert res.exit_code == 0, res.output
    return out


@pytest.mark.parametrize("suffix", [".csv", ".xlsx"])
@pytest.mark.parametrize("design", [FOLLOWER, CE_PNP, PLAIN], ids=lambda p: p.stem)
def test_counts_add_up_to_the_design(tmp_path, design, suffix):
    out = _export_bom(tmp_path, design, suffix)
    rows = _read_csv(out) if suffix == ".csv" else _read_xlsx(out)
    expected, units, pick_list = _design_counts(design)
    per_role = Counter()
    for r in rows:
        per_unit, n, total = int(r["Per unit"]), int(r["Units"]), int(r["For all units"])
        assert n == units
        assert total == per_unit * units
        per_role[r["Role"]] += per_unit
        assert per_unit == 1  # each physical part on a line of its own
    assert dict(per_role) == expected
    # designators: the role's own for a single part, with a, b, c for the parts of a pair or triple
    for role, n in expected.items():
        names = [r["Designator"] for r in rows if r["Role"] == role]
        assert names == ([role] if n == 1 else [role + x for x in "abc"[:n]])
    # the pick list the optimizer wrote is an independent record of the same parts: per bin,
    # the BOM's totals must equal the counts to take
    if pick_list:
        by_bin = Counter()
        for r in rows:
            by_bin[r["Bin"]] += int(r["For all units"])
        assert dict(by_bin) == {p["location"]: sum(q["count"] for q in pick_list if q["location"] == p["location"])
                                for p in pick_list}


@pytest.mark.parametrize("suffix", [".csv", ".xlsx"])
def test_values_in_both_notations(tmp_path, suffix):
    out = _export_bom(tmp_path, FOLLOWER, suffix)
    rows = _read_csv(out) if suffix == ".csv" else _read_xlsx(out)
    by = {(r["Designator"], r["Part code"]): r for r in rows}
    # IEC 60062 letter code and SI notation of the same value; RE = 680R + 150R in series (the
    # design file), so its parts are REa and REb in that order
    assert by[("R1", "4k7")]["Part value"] == "4.7 kΩ"
    assert by[("REa", "680R")]["Part value"] == "680 Ω"
    assert by[("REb", "150R")]["Role code"] == "830R"
    assert by[("C2", "220µ")]["Role value"] == "220 µF"
    assert by[("REa", "680R")]["Bin"] == "R-02" and by[("REb", "150R")]["Bin"] == "R-01"
    assert float(by[("C1", "22µ")]["Role value (SI number)"]) == pytest.approx(22e-6)


@given(st.sampled_from(FORMULA_STARTS), st.text(max_size=20))
def test_neutralise_prefixes_every_formula_start(first, rest):
    cell = first + rest
    assert neutralise(cell) == "'" + cell


@given(st.text(max_size=20).filter(lambda s: not s.startswith(FORMULA_STARTS) and not s[:1].isspace()))
def test_neutralise_leaves_other_text_alone(cell):
    assert neutralise(cell) == cell


def test_neutralise_leaves_numbers_alone():
    assert neutralise(-5) == -5 and neutralise(2.5) == 2.5 and neutralise(None) is None


HOSTILE = {"=HYPERLINK(\"x\",\"y\")": "bin", "+1+1": "part", "-2+3": "file", "@SUM(A1)": "sheet"}


@pytest.fixture
def hostile_design(tmp_path):
    """The follower design with bin names and stock names that a spreadsheet would run."""
    text = FOLLOWER.read_text(encoding="utf-8")
    text = text.replace('{ value = 4700.0, location = "R-04", source = { file = "bench_drawer.csv", row = 12 } }',
                        '{ value = 4700.0, location = "=HYPERLINK(\\"x\\",\\"y\\")", '
                        'source = { file = "-2+3", sheet = "@SUM(A1)", row = 12 } }')
    text = text.replace('location = "R-04"', 'location = "=HYPERLINK(\\"x\\",\\"y\\")"')
    text = text.replace('part = "4k7 resistor"', 'part = "+1+1"')
    text = text.replace('parts = [{ location = "T-01"', 'parts = [{ location = "\\tT-01"')
    path = tmp_path / "hostile.toml"
    path.write_text(text, encoding="utf-8")
    return path


def test_csv_cells_are_neutralised(tmp_path, hostile_design):
    rows = _read_csv(_export_bom(tmp_path, hostile_design, ".csv"))
    r1 = next(r for r in rows if r["Designator"] == "R1")
    assert r1["Bin"] == "'=HYPERLINK(\"x\",\"y\")"
    assert r1["Stock file"] == "'-2+3"
    assert r1["Stock sheet"] == "'@SUM(A1)"
    q1 = next(r for r in rows if r["Designator"] == "Q1")
    assert q1["Bin"] == "'\tT-01"
    for r in rows:
        for v in r.values():
            assert not v.startswith(FORMULA_STARTS), v


def test_xlsx_holds_no_formula(tmp_path, hostile_design):
    from openpyxl import load_workbook

    out = _export_bom(tmp_path, hostile_design, ".xlsx")
    wb = load_workbook(out)
    seen = []
    for ws in wb.worksheets:
        for row in ws.iter_rows():
            for cell in row:
                assert cell.data_type != "f", (ws.title, cell.coordinate, cell.value)
                if isinstance(cell.value, str):
                    assert not cell.value.startswith(FORMULA_STARTS), cell.value
                    seen.append(cell.value)
    assert "'=HYPERLINK(\"x\",\"y\")" in seen
    assert "'+1+1" in seen  # the pick-list sheet's part name


# Starts that hide what follows: white space, line breaks, a no-break space, zero-width characters,
# a full-width equals sign (a spreadsheet may drop or fold them and read a formula after them).
HIDDEN = [" =1+1", "\t=1+1", "\n=1+1", "\r=1+1", "\u00a0=1+1", "\u200b=1+1", "\ufeff=1+1", "\uff1d1+1",
          "\u3000=1+1"]


@pytest.mark.parametrize("suffix", [".csv", ".xlsx"])
@pytest.mark.parametrize("start", HIDDEN, ids=lambda s: f"U+{ord(s[0]):04X}")
def test_cells_with_a_hidden_start_are_neutralised(tmp_path, suffix, start):
    text = FOLLOWER.read_text(encoding="utf-8").replace('location = "R-04"', f"location = {json.dumps(start)}")
    design = tmp_path / "hidden.toml"
    design.write_text(text, encoding="utf-8")
    out = _export_bom(tmp_path, design, suffix)
    rows = _read_csv(out) if suffix == ".csv" else _read_xlsx(out)
    bins = {r["Bin"] for r in rows if r["Designator"] == "R1"}
    if suffix == ".xlsx":  # XML reads a bare carriage return as a line feed (XML 1.0, section 2.11)
        start = start.replace("\r", "\n")
    assert bins == {"'" + start}
    assert start[0].isspace() or start.startswith(FORMULA_STARTS)  # the premise: it is one of the set


def test_bom_needs_csv_or_xlsx(tmp_path):
    out = tmp_path / "parts.txt"
    res = CliRunner().invoke(main, ["export", str(FOLLOWER), "--bom", str(out)])
    assert res.exit_code == 2 and ".csv or .xlsx" in res.stderr
    assert not out.exists()


def test_export_refuses_one_file_for_both_outputs_and_the_design_itself(tmp_path):
    copy = tmp_path / "design.toml"
    copy.write_bytes(FOLLOWER.read_bytes())
    before = copy.read_bytes()
    same = tmp_path / "x.csv"
    res = CliRunner().invoke(main, ["export", str(copy), "--netlist", str(same), "--bom", str(same)])
    assert res.exit_code == 2 and "different files" in res.stderr and not same.exists()
    res = CliRunner().invoke(main, ["export", str(copy), "--netlist", str(copy)])
    assert res.exit_code == 2 and "input file" in res.stderr
    assert copy.read_bytes() == before


def test_export_needs_something_to_write():
    res = CliRunner().invoke(main, ["export", str(FOLLOWER)])
    assert res.exit_code == 2 and "--netlist" in res.stderr

"""A design saved by `drawerfit design --save` goes through report and export unchanged.

Expected values: the saved file's own [[pick_list]] (written by the optimizer, an independent
record) for the parts-list counts; the designators and IEC 60062 codes of its [parts] for the
schematic; properties for the rest (no outside reference, stock checksum recognised).
"""

from __future__ import annotations

import csv
import tomllib
from collections import Counter

import pytest
from click.testing import CliRunner

from drawerfit.cli import main
from drawerfit.values import format_code

from .test_report_html import _parse


@pytest.mark.parametrize("spec_name, units", [("bench_buffer", 2), ("gain_stage", 3)])
def test_saved_design_reports_and_exports(tmp_path, samples, spec_name, units):
    stock = samples / "teaching_lab.csv"
    saved = tmp_path / "design.toml"
    runner = CliRunner()
    res = runner.invoke(main, ["design", str(samples / "specs" / f"{spec_name}.toml"), "--stock", str(stock),
                               "--units", str(units), "--save", str(saved), "--quiet"])
    assert res.exit_code == 0, res.output
    data = tomllib.loads(saved.read_text(encoding="utf-8"))

    page = tmp_path / "report.html"
    res = runner.invoke(main, ["report", str(saved), "--stock", str(stock), "-o", str(page), "--monte-carlo", "200"])
    assert res.exit_code == 0, res.output
    html_text = page.read_text(encoding="utf-8")
    assert "unchanged since the design was made" in html_text
    texts = _parse(page).svgs["schematic of the stage"]
    for role, part in data["parts"].items():
        assert role in texts
        code = format_code(part["value"], "ohm" if role.startswith("R") else "F")
        assert any(t == code or t.startswith(code + " ") for t in texts), (role, code)
    for item in data["pick_list"]:
        assert f">{item['location']}<" in html_text

    bom = tmp_path / "parts.csv"
    res = runner.invoke(main, ["export", str(saved), "--bom", str(bom), "--netlist", str(tmp_path / "s.cir")])
    assert res.exit_code == 0, res.output
    with open(bom, newline="", encoding="utf-8-sig") as fh:
        rows = list(csv.DictReader(fh))
    by_row = Counter()
    for r in rows:
        assert int(r["For all units"]) == int(r["Per unit"]) * units
        by_row[int(r["Stock row"])] += int(r["For all units"])
    # the parts list names, per designator, the stock line the design is judged by; the pick list
    # names the bins the parts come from, some standing in for a named line (same value, tolerance
    # no wider, rating no lower): per named line, the two must account for the same parts
    named = Counter()
    for p in data["pick_list"]:
        subs = p.get("stands_in_for", [])
        named[p["source"]["row"]] += p["count"] - sum(s["count"] for s in subs)
        for s in subs:
            named[s["row"]] += s["count"]
    assert dict(by_row) == {row: n for row, n in named.items() if n}

"""A design saved by `drawerfit design --save` goes through report and export unchanged.

Expected values: the saved file's own [[pick_list]] (written by the optimizer, an independent
record) for the parts-list counts; the designators and IEC 60062 codes of its [parts] for the
schematic; properties for the rest (no outside reference, stock checksum recognised).
"""

from __future__ import annotations

import csv
import re
from dataclasses import replace
import tomllib
from collections import Counter

import pytest
from click.testing import CliRunner

from drawerfit.cli import main
from drawerfit.values import format_code, parse_value

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
        code = format_code(parse_value(part["value"]), "ohm" if role.startswith("R") else "F")
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


# A drawer with no resistor near the emitter resistor a 5 mA buffer needs, so the design takes a
# triple of parts (invented data, in the format of docs/inventory-format.md).
SPARSE_DRAWER = """Kind,Value,Tolerance,Power (W),Voltage (V),Qty,Bin,Label,Polarity,hFE min,hFE max,VCEO (V),IC max (A),Pd (W),Pins
resistor,4k7,5%,0.25,,40,R-4k7,,,,,,,,
resistor,10k,1%,0.25,,40,R-10k,,,,,,,,
resistor,22k,5%,0.25,,40,R-22k,,,,,,,,
resistor,47k,1%,0.25,,40,R-47k,,,,,,,,
resistor,100k,5%,0.25,,40,R-100k,,,,,,,,
resistor,220k,5%,0.25,,40,R-220k,,,,,,,,
capacitor,10u,20%,,25,40,C-10u,,,,,,,,
capacitor,47u,20%,,25,40,C-47u,,,,,,,,
capacitor,100u,20%,,25,40,C-100u,,,,,,,,
transistor,,,,,20,T-1,QX-GEN,NPN,200,450,45,0.1,0.5,E-B-C
"""


@pytest.mark.parametrize("drawer, spec_name, max_parts", [
    ("teaching_lab.csv", "bench_buffer", 2), ("teaching_lab.csv", "gain_stage", 2), ("sparse", "bench_buffer", 3)])
def test_saved_design_reads_back_to_the_floats_it_was_judged_with(tmp_path, samples, drawer, spec_name, max_parts):
    # property: the stage that `analyze`, `report` and `export` read from the saved file is the
    # stage the search judged, bit for bit, though the file writes 4k7, 1 %, 250 mW
    from drawerfit.io.saved_design import load_design, write_design
    from drawerfit.search.design import design
    from drawerfit.search.problem import problem_from_spec
    from drawerfit.io.spec import load_spec
    from drawerfit.stock import load_stock

    if drawer == "sparse":
        stock_file = tmp_path / "sparse.csv"
        stock_file.write_text(SPARSE_DRAWER, encoding="utf-8")
    else:
        stock_file = samples / drawer
    stock = load_stock(str(stock_file))
    spec = load_spec(samples / "specs" / f"{spec_name}.toml", stock=stock)
    problem = problem_from_spec(spec, units=2, max_parts=max_parts)
    result = design(problem, stock)
    result.spec, result.stock = spec, stock
    best = result.best
    path = tmp_path / "design.toml"
    write_design(path, result, str(stock_file))
    text = path.read_text(encoding="utf-8")
    loaded = load_design(path)

    judged = best.stage(problem)
    assert loaded.stage.parts == judged.parts
    # the pin order is the stock line's, shown to the builder; the search's model has no use for it
    assert loaded.stage.transistor == replace(judged.transistor, pins=best.transistor.pins)
    assert (loaded.stage.supply, loaded.stage.source_resistance, loaded.stage.load) == (
        judged.supply, judged.source_resistance, judged.load)
    assert loaded.conditions == problem.conditions
    assert loaded.targets == {k: v for k, v in problem.targets.to_dict().items() if v is not None}
    for role, choice in best.roles.items():
        got = loaded.roles[role]
        assert [p.value for p in got.parts] == [m.value for m in choice.equivalent.members]
        assert [p.tolerance for p in got.parts] == [m.tolerance for m in choice.equivalent.members]
        assert got.arrangement == choice.equivalent.arrangement
    if drawer == "sparse":
        assert any(c.equivalent.part_count == 3 for c in best.roles.values())  # the case this drawer is for
        assert 'pins = "E-B-C"' in text
    # what a person reads: no float tails above the [exact] table
    body = text.split("[exact]")[0]
    assert not re.search(r"\d\.\d{7,}|e-0\d", body), re.search(r"\d\.\d{7,}|e-0\d", body)

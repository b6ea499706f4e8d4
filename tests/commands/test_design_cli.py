"""`drawerfit design` and `demo` through click's CliRunner: output, JSON, saving, exit statuses."""

from __future__ import annotations

import json
import math
import shutil
import tomllib

from click.testing import CliRunner

from drawerfit.cli import main

HEADER = "Kind,Value,Tolerance,Power (W),Voltage (V),Dielectric,Qty,Bin,Label,hFE min,hFE max,VCEO (V),IC max (A),Pd (W),VBE (V),VCE(sat) (V),Notes\n"
TRANSISTOR = "NPN,,,,,,10,T1,QN-SIG-A,120,300,40,0.2,0.5,0.65,0.2,\n"
E12 = (1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2)  # IEC 60063


def _drawer(path, caps: str) -> None:
    rows = [f"resistor,{m * 10 ** e:g},1%,0.25,,,10,R{e}-{i},,,,,,,,," for e in (3, 4) for i, m in enumerate(E12)]
    path.write_text(HEADER + "\n".join(rows) + "\n" + caps + TRANSISTOR, encoding="utf-8")


SPEC = """topology = "emitter-follower"
polarity = "npn"
supply = "12 V"
source_resistance = "600"
load = "10k"
[targets]
ie = "1 mA"
f_low = "20 Hz"
"""


def test_infeasible_exits_3_with_reason_and_a_buy_list_that_works(tmp_path):
    stock = tmp_path / "drawer.csv"
    _drawer(stock, "capacitor,100n,10%,,50,film,10,C1,,,,,,,,,\n")
    spec = tmp_path / "buffer.toml"
    spec.write_text(SPEC, encoding="utf-8")
    before = stock.read_bytes()
    r = CliRunner().invoke(main, ["design", str(spec), "--stock", str(stock), "--json"])
    assert r.exit_code == 3, r.output
    data = json.loads(r.stdout)
    assert data["feasible"] is False
    assert "corner" in data["reason"]  # 100 nF into 10 kΩ is an 160 Hz corner: f = 1/(2πRC)
    assert data["buy"] and data["buy_checked"] is True
    assert stock.read_bytes() == before  # the user's file is never changed
    # add what it says to buy to the drawer: the design must now succeed
    extra = ""
    for b in data["buy"]:
        assert b["kind"] == "capacitor"
        diel = "electrolytic" if b["polarized"] else "film"
        extra += f"capacitor,{b['value']:g},{b['tolerance']:.0%},,{b['voltage']:g},{diel},{b['count']},NEW,,,,,,,,,\n"
    _drawer(stock, "capacitor,100n,10%,,50,film,10,C1,,,,,,,,,\n" + extra)
    r2 = CliRunner().invoke(main, ["design", str(spec), "--stock", str(stock), "--json"])
    assert r2.exit_code == 0, r2.output
    assert json.loads(r2.stdout)["feasible"] is True


def test_design_json_save_and_analyze_reproduce(tmp_path, samples):
    spec = samples / "specs" / "bench_buffer.toml"
    stock = tmp_path / "lab.csv"
    shutil.copy(samples / "teaching_lab.csv", stock)
    out = tmp_path / "design.toml"
    r = CliRunner().invoke(main, ["design", str(spec), "--stock", str(stock), "--json", "--save", str(out),
                                  "--units", "3"])
    assert r.exit_code == 0, r.output
    d = json.loads(r.stdout)
    assert d["feasible"] and d["units"] == 3
    assert set(d["parts"]) == {"R1", "R2", "RE", "C1", "C2"}
    assert d["part_count"] == sum(p["part_count"] for p in d["parts"].values())
    for name in ("label", "location", "source"):
        assert name in d["transistor"]
    for p in d["parts"].values():
        assert p["parts"] and all({"value", "location", "source"} <= set(x) for x in p["parts"])
    # the performance block is the analyze JSON of the chosen stage; targets hold there
    perf = d["performance"]
    ie = perf["dc"]["ie"]
    assert 4.5e-3 <= ie <= 5.5e-3 and perf["ac"]["f_low"] <= 20.0
    # pick list: counts are per unit times units, and every count fits the stock line
    for e in d["pick_list"]:
        assert e["count"] == 3 * e["per_unit"]
    saved = tomllib.loads(out.read_text(encoding="utf-8"))
    assert saved["units"] == 3 and saved["stock_checksum"].startswith("sha256:")
    assert all({"source", "location", "part", "per_unit", "count"} <= set(e) for e in saved["pick_list"])
    assert set(saved["design"]["roles"]) >= {"R1", "R2", "RE", "C1", "C2"}
    r2 = CliRunner().invoke(main, ["analyze", str(out), "--json"])
    assert r2.exit_code == 0, r2.output
    a = json.loads(r2.stdout)
    assert math.isclose(a["dc"]["ie"], ie, rel_tol=1e-9)
    assert math.isclose(a["ac"]["f_low"], perf["ac"]["f_low"], rel_tol=1e-6)


def test_people_output_and_bad_spec(tmp_path, samples):
    stock = str(samples / "teaching_lab.csv")
    r = CliRunner().invoke(main, ["design", str(samples / "specs" / "gain_stage.toml"), "--stock", stock])
    assert r.exit_code == 0, r.output
    for word in ("RE2", "CE", "Pick list", "Worst-case margins", "Cautions"):
        assert word in r.output
    # an electrolytic's orientation is told once, in the words `analyze` uses, without jargon
    roles = [ln for ln in r.output.splitlines() if ln.strip().startswith("polarized:")]
    assert roles and all("fit the + end toward" in ln for ln in roles)
    assert "one sign over the box" not in r.output
    bad = tmp_path / "bad.toml"
    bad.write_text('topology = "emitter-follower"\nsupply = "12 V"\n[targets]\nf_low = "20 Hz"\n', encoding="utf-8")
    r = CliRunner().invoke(main, ["design", str(bad), "--stock", stock])
    assert r.exit_code == 2 and "ie" in r.output and "Traceback" not in r.output


def test_report_option_writes_the_html_report(tmp_path, samples):
    import tomllib

    from drawerfit.values import format_code, parse_value

    out, saved = tmp_path / "r.html", tmp_path / "d.toml"
    r = CliRunner().invoke(main, ["design", str(samples / "specs" / "bench_buffer.toml"), "--stock",
                                  str(samples / "teaching_lab.csv"), "--report", str(out), "--save", str(saved),
                                  "--quiet"])
    assert r.exit_code == 0, r.output
    page = out.read_text(encoding="utf-8")
    re_value = tomllib.loads(saved.read_text(encoding="utf-8"))["design"]["roles"]["RE"]["value"]
    assert page.lstrip().lower().startswith("<!doctype html")
    assert format_code(parse_value(re_value), "ohm") in page  # the chosen emitter resistor is on the page


def test_demo_writes_nothing_into_the_samples(samples):
    before = {p: p.stat().st_mtime_ns for p in samples.rglob("*")}
    r = CliRunner().invoke(main, ["demo"])
    assert r.exit_code == 0, r.output
    assert r.output.count("Design (optimal") == 2
    assert {p: p.stat().st_mtime_ns for p in samples.rglob("*")} == before

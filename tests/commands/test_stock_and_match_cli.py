"""`drawerfit stock` and `drawerfit match` through click's CliRunner."""

from __future__ import annotations

import json
import os
import subprocess
import sys

from click.testing import CliRunner

from drawerfit.cli import main
from tests.conftest import ROOT


def run(*args):
    return CliRunner().invoke(main, list(args))


def test_stock_json_shape(samples):
    res = run("stock", str(samples / "teaching_lab.csv"), "--json")
    assert res.exit_code == 0, res.output
    data = json.loads(res.stdout)
    part = data["parts"][0]
    assert {"kind", "value", "label", "tolerance", "power", "voltage", "qty", "location", "source"} <= set(part)
    assert set(part["source"]) == {"file", "sheet", "row"}
    q = [p for p in data["parts"] if p["kind"] == "transistor"]
    assert len(q) == 6 and all(p["value"] is None for p in q)


def test_stock_strict_exits_2_with_a_message(samples):
    res = run("stock", str(samples / "messy_drawer.csv"), "--strict")
    assert res.exit_code == 2
    assert "row 18" in res.stderr and "Traceback" not in res.output + res.stderr


def test_match_finds_a_single_part_first(samples):
    res = run("match", "4k7", "--stock", str(samples / "teaching_lab.csv"), "--json", "--top", "3")
    data = json.loads(res.stdout)
    first = data["results"][0]
    assert first["arrangement"] == "single" and first["value"] == 4700.0 and first["within"] is True


def test_match_ranks_within_window_by_parts_then_error(samples):
    res = run("match", "3.9k", "--stock", str(samples / "repair_bench.csv"), "--within", "2%", "--json", "--top", "8")
    data = json.loads(res.stdout)["results"]
    inside = [r for r in data if r["within"]]
    assert inside, "a 3.9k equivalent within 2 % exists in the bench box (e.g. 3k3 + 680R = 3.98k)"
    keys = [(r["part_count"], abs(r["error"])) for r in inside]
    assert keys == sorted(keys)
    outside = [abs(r["error"]) for r in data if not r["within"]]
    assert outside == sorted(outside)
    assert all(abs(r["error"]) <= 0.02 + 1e-12 for r in inside)


def test_match_power_filter_and_units(samples):
    stock = str(samples / "repair_bench.csv")
    res = run("match", "3.3k", "--stock", stock, "--power", "1/2 W", "--json", "--max-parts", "3")
    data = json.loads(res.stdout)
    assert all(r["power"] >= 0.5 - 1e-12 for r in data["results"])
    # the bench box holds one 1/4 W 3k3 line; a single 3k3 is not enough for a half-watt substitute
    assert not any(r["arrangement"] == "single" and r["value"] == 3300.0 for r in data["results"])


def test_match_capacitor_by_unit_and_bad_values(samples):
    res = run("match", "10uF", "--stock", str(samples / "teaching_lab.csv"), "--voltage", "35V", "--json")
    data = json.loads(res.stdout)
    assert data["target"]["kind"] == "capacitor"
    assert all(r["voltage"] >= 35 for r in data["results"])
    bad = run("match", "4k7k", "--stock", str(samples / "teaching_lab.csv"))
    assert bad.exit_code == 2 and "4k7k" in bad.output
    volts = run("match", "5V", "--stock", str(samples / "teaching_lab.csv"))
    assert volts.exit_code == 2 and "not a resistance" in volts.stderr


def test_missing_stock_file_exits_2(tmp_path):
    res = run("match", "1k", "--stock", str(tmp_path / "none.csv"))
    assert res.exit_code == 2 and "no such file" in res.stderr


HEAVY = ["pandas", "scipy", "ortools", "openpyxl", "matplotlib", "schemdraw", "numpy"]


def test_help_and_import_load_no_heavy_library():
    # habit of well-kept CLI projects: start-up must not pull in the numerics stack
    code = ("import sys, drawerfit, drawerfit.cli\n"
            "from click.testing import CliRunner\n"
            "r = CliRunner().invoke(drawerfit.cli.main, ['--help'])\n"
            "assert r.exit_code == 0\n"
            f"print([m for m in {HEAVY!r} if m in sys.modules])\n")
    env = dict(os.environ, PYTHONPATH=str(ROOT / "src"))
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, env=env, check=True)
    assert out.stdout.strip() == "[]"


def test_prefix_decides_the_kind_as_in_the_loader(samples):
    # '68n' has no unit, but a nano prefix means farads (the loader's rule, docs/inventory-format.md)
    res = run("match", "68n", "--stock", str(samples / "teaching_lab.csv"), "--json", "--top", "1")
    assert json.loads(res.stdout)["target"]["kind"] == "capacitor"


def test_polarized_series_chains_only_on_request(samples):
    args = ["match", "330u", "--stock", str(samples / "teaching_lab.csv"), "--json", "--top", "40", "--within", "30%"]
    plain = json.loads(run(*args).stdout)["results"]
    assert plain and not any(r["warnings"] for r in plain)
    allowed = json.loads(run(*args, "--allow-polarized-series").stdout)["results"]
    assert any(r["arrangement"] == "series" and r["warnings"] for r in allowed)

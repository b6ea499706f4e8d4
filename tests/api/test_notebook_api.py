"""The notebook API (drawerfit.api): objects or paths in, results with a short repr, to_dict() and
to_pandas() out.

Expected values: the command line's own JSON for the same job (the property "one source": the CLI
prints ``to_dict()``), the stock file read with Python's csv module for counts and quantities, and
the results' own pick lists for the tables that restate them.
"""

from __future__ import annotations

import csv
import importlib
import json
import os
import shutil
import subprocess
import sys
from pathlib import Path

import pytest
from click.testing import CliRunner

import drawerfit
from drawerfit.cli import main

ROOT = Path(__file__).resolve().parents[2]
SAMPLES = ROOT / "inventory_samples"
LAB = SAMPLES / "teaching_lab.csv"
BUFFER = SAMPLES / "specs" / "bench_buffer.toml"


def _cli_json(args) -> dict:
    res = CliRunner().invoke(main, args)
    assert res.exit_code == 0, res.output
    return json.loads(res.stdout)


def _plain(d):
    return json.loads(json.dumps(d, allow_nan=False))


def _csv_rows(path):
    with open(path, newline="", encoding="utf-8-sig") as fh:
        return [r for r in csv.DictReader(fh) if any(v.strip() for v in r.values() if v)]


def test_the_cli_prints_the_results_to_dict():
    stock = drawerfit.load_stock(str(LAB))
    assert _cli_json(["stock", str(LAB), "--json"]) == _plain(stock.to_dict())
    m = drawerfit.match("3k3", stock, within=0.02, power="1/4 W")
    assert _cli_json(["match", "3k3", "--stock", str(LAB), "--within", "2%", "--power", "1/4W", "--json"]) \
        == _plain(m.to_dict())
    spec = SAMPLES / "follower_bench.toml"
    assert _cli_json(["analyze", str(spec), "--json", "--monte-carlo", "300", "--seed", "4"]) \
        == _plain(drawerfit.analyse(str(spec), monte_carlo=300, seed=4).to_dict())
    d = drawerfit.design(str(BUFFER), str(LAB), units=3)
    assert _cli_json(["design", str(BUFFER), "--stock", str(LAB), "--units", "3", "--json", "--quiet"]) \
        == _plain(d.to_dict())
    k = drawerfit.kit(SAMPLES / "bench_amp_parts.csv", LAB, units=2)
    cli = _cli_json(["kit", str(SAMPLES / "bench_amp_parts.csv"), "--stock", str(LAB), "--units", "2", "--json"])
    mine = _plain(k.to_dict())
    cli.pop("seconds"), mine.pop("seconds")  # wall-clock time of each run
    assert cli == mine


def test_objects_and_paths_give_the_same_design():
    by_path = drawerfit.design(str(BUFFER), str(LAB), units=2)
    stock = drawerfit.load_stock(LAB)
    by_object = drawerfit.design(drawerfit.load_spec(BUFFER, stock), stock, units=2)
    assert _plain(by_path.to_dict()) == _plain(by_object.to_dict())
    assert drawerfit.analyze is drawerfit.analyse


def test_reprs_are_one_short_line():
    stock = drawerfit.load_stock(LAB)
    results = [stock, drawerfit.match("68n", stock), drawerfit.analyse(SAMPLES / "follower_bench.toml"),
               drawerfit.design(BUFFER, stock), drawerfit.kit(SAMPLES / "bench_amp_parts.csv", stock)]
    for r in results:
        text = repr(r)
        assert text.startswith(f"<{type(r).__name__}") and "\n" not in text and len(text) < 300, text


def test_tables_hold_what_the_files_and_pick_lists_say(tmp_path):
    stock = drawerfit.load_stock(LAB)
    lines = stock.to_pandas()
    rows = _csv_rows(LAB)
    assert len(lines) == len(rows)  # one row per line of the file (it has no unreadable line)
    assert lines["qty"].sum() == sum(int(r["Qty"]) for r in rows)

    result = drawerfit.design(BUFFER, stock, units=10)
    parts = result.to_pandas()
    assert len(parts) == result.best.part_count + 1  # every physical part, and the transistor
    picks = result.to_pandas("pick_list")
    assert set(picks["count"]) == {10} and list(picks["per_unit"]) == [1] * len(picks)
    assert sorted(d for f in picks["for"] for d in f.split(", ")) == sorted(parts["designator"])


def test_take_from_a_design_in_memory(tmp_path):
    drawer = tmp_path / "drawer.csv"
    shutil.copy(LAB, drawer)
    result = drawerfit.design(BUFFER, drawer, units=4)
    qty = {i + 2: int(r["Qty"]) for i, r in enumerate(_csv_rows(drawer))}  # header is row 1
    done = drawerfit.take(result, drawer)
    table = done.to_pandas()
    after = {i + 2: int(r["Qty"]) for i, r in enumerate(_csv_rows(drawer))}
    assert len(table) == len(result.to_pandas("pick_list"))
    for row in table.itertuples():  # each changed row: what the file held, and what it holds now
        assert row.old_qty == qty[row.row] and after[row.row] == row.new_qty < row.old_qty
    # four units of every part of the pick list left the file, from whichever bins gave them
    picks = result.to_pandas("pick_list")
    assert sum(qty.values()) - sum(after.values()) == int(picks["count"].sum()) == 4 * int(picks["per_unit"].sum())
    assert [r.state for r in drawerfit.history(drawer)] == ["in the file"]
    drawerfit.undo(drawer)
    assert drawer.read_bytes() == LAB.read_bytes()


def test_a_result_from_another_drawer_is_refused(tmp_path):
    drawer = tmp_path / "drawer.csv"
    shutil.copy(LAB, drawer)
    result = drawerfit.design(BUFFER, LAB)  # made from the original: same bytes, so allowed
    drawer.write_bytes(LAB.read_bytes() + b"resistor,1k,5%,0.25,,1,X9,,,,,,,,\n")
    with pytest.raises(drawerfit.StockError, match="changed since"):
        drawerfit.take(result, drawer, dry_run=True)


def test_pandas_is_not_loaded_until_a_table_is_asked_for():
    code = ("import sys, drawerfit\n"
            "d = drawerfit.design('inventory_samples/specs/bench_buffer.toml', 'inventory_samples/teaching_lab.csv')\n"
            "d.to_dict(); repr(d)\n"
            "assert 'pandas' not in sys.modules\n"
            "d.to_pandas()\n"
            "assert 'pandas' in sys.modules\n")
    env = dict(os.environ, PYTHONPATH=str(ROOT / "src"))
    out = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True, env=env)
    assert out.returncode == 0, out.stderr[-2000:]


def test_no_function_of_the_package_is_shadowed_by_a_module():
    # importing drawerfit.x binds drawerfit.x to the module, which would hide a function of that name
    pkg = ROOT / "src" / "drawerfit"
    clash = [n for n in drawerfit._LAZY if (pkg / n).is_dir() or (pkg / f"{n}.py").exists()]
    assert not clash
    importlib.import_module("drawerfit.kits.fill")
    assert callable(drawerfit.kit)


def test_mend_is_the_command_and_has_tables():
    # one source: api.mend(...).to_dict() is what `design --keep --json` prints
    board, bench = SAMPLES / "preamp_repair.toml", SAMPLES / "repair_bench.csv"
    note = drawerfit.mend(board, bench, broken=("Q1",))
    cli = _cli_json(["design", str(board), "--stock", str(bench), "--keep", "--broken", "Q1", "--json"])
    assert _plain(note.to_dict()) == cli
    assert repr(note).startswith("<RepairNote: change ") and len(repr(note)) < 200
    changes = note.to_pandas()
    assert list(changes.loc[changes["changed"], "role"]) == [c["role"] for c in cli["changes"]]
    figs = note.to_pandas("figures")
    after_ie = figs[(figs["when"] == "after") & (figs["figure"] == "ie")].iloc[0]
    assert after_ie["nominal"] == pytest.approx(cli["after"]["figures"]["ie"]["nominal"])

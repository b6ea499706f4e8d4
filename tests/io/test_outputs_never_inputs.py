"""No output replaces an input, whatever options are given: not the stock file a saved design names
(with no --stock given), not the design, the spec or the parts list, not through a link; and no file
drawerfit did not write itself.

The expected bytes are the files as the test wrote them.
"""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest
from click.testing import CliRunner

from drawerfit.cli import main

DATA = Path(__file__).resolve().parents[1] / "data" / "report"
DRAWER = b"kind,value,qty,location\nresistor,4k7,12,A1\n"


@pytest.fixture
def bench(tmp_path):
    """A saved design beside the stock file it names (bench_drawer.csv), as `design --save` leaves them."""
    design = tmp_path / "design.toml"
    shutil.copy(DATA / "follower_design.toml", design)
    stock = tmp_path / "bench_drawer.csv"
    stock.write_bytes(DRAWER)
    link = tmp_path / "drawer-link.csv"
    link.symlink_to(stock)
    return tmp_path, design, stock, link


def _snapshot(folder: Path) -> dict[str, bytes]:
    return {p.name: p.read_bytes() for p in folder.iterdir() if p.is_file() and not p.is_symlink()}


@pytest.mark.parametrize("args", [
    ["report", "{design}", "-o", "{stock}", "--monte-carlo", "0"],
    ["report", "{design}", "-o", "{link}", "--monte-carlo", "0"],
    ["report", "{design}", "-o", "{design}", "--monte-carlo", "0"],
    ["export", "{design}", "--bom", "{stock}"],
    ["export", "{design}", "--bom", "{link}"],
    ["export", "{design}", "--netlist", "{stock}"],
    ["export", "{design}", "--netlist", "{design}"],
    ["export", "{design}", "--netlist", "{tmp}/out.cir", "--bom", "{stock}"],
], ids=lambda a: " ".join(a[:4]))
def test_report_and_export_never_write_over_the_design_or_the_stock_it_names(bench, args):
    tmp, design, stock, link = bench
    before = _snapshot(tmp)
    argv = [a.format(design=design, stock=stock, link=link, tmp=tmp) for a in args]
    res = CliRunner().invoke(main, argv)
    assert res.exit_code == 2, res.output
    assert "input file" in res.stderr and "Traceback" not in res.output
    assert _snapshot(tmp) == before and link.is_symlink()


def test_design_never_writes_over_its_spec_or_stock_and_checks_before_searching(tmp_path, samples, monkeypatch):
    spec = tmp_path / "spec.toml"
    shutil.copy(samples / "specs" / "bench_buffer.toml", spec)
    stock = tmp_path / "lab.csv"
    shutil.copy(samples / "teaching_lab.csv", stock)
    before = _snapshot(tmp_path)

    def no_search(*a, **k):
        raise AssertionError("the search ran before the outputs were checked")

    monkeypatch.setattr("drawerfit.search.design.design", no_search)
    for extra in (["--save", str(spec)], ["--save", str(stock)], ["--report", str(spec)],
                  ["--save", str(tmp_path / "d.toml"), "--report", str(tmp_path / "d.toml")]):
        res = CliRunner().invoke(main, ["design", str(spec), "--stock", str(stock), *extra])
        assert res.exit_code == 2, (extra, res.output)
        assert _snapshot(tmp_path) == before


def test_a_file_drawerfit_did_not_write_is_left_alone(bench):
    tmp, design, _stock, _link = bench
    foreign = {"parts.csv": b"my,own,parts\n", "notes.html": b"<p>mine</p>", "deck.cir": b"* my deck\n"}
    for name, data in foreign.items():
        (tmp / name).write_bytes(data)
    for args in (["export", str(design), "--bom", str(tmp / "parts.csv")],
                 ["export", str(design), "--netlist", str(tmp / "deck.cir")],
                 ["report", str(design), "-o", str(tmp / "notes.html"), "--monte-carlo", "0"]):
        res = CliRunner().invoke(main, args)
        assert res.exit_code == 2 and "not a" in res.stderr and "written by drawerfit" in res.stderr
    assert all((tmp / n).read_bytes() == d for n, d in foreign.items())


def test_drawerfit_replaces_its_own_earlier_outputs(bench):
    tmp, design, _stock, _link = bench
    for _ in range(2):
        res = CliRunner().invoke(main, ["export", str(design), "--bom", str(tmp / "p.csv"), "--netlist",
                                        str(tmp / "d.cir"), "--quiet"])
        assert res.exit_code == 0, res.output
        res = CliRunner().invoke(main, ["report", str(design), "-o", str(tmp / "r.html"), "--monte-carlo", "0",
                                        "--quiet"])
        assert res.exit_code == 0, res.output
    assert (tmp / "p.csv").read_bytes().startswith(b"\xef\xbb\xbfDesignator,")


@pytest.mark.parametrize("name,why", [("stage.csv", "use .cir"), ("drawer.csv.takes.jsonl", "take history")])
def test_a_netlist_is_not_named_like_a_data_file(bench, name, why):
    tmp, design, _stock, _link = bench
    res = CliRunner().invoke(main, ["export", str(design), "--netlist", str(tmp / name)])
    assert res.exit_code == 2 and why in res.stderr and not (tmp / name).exists()

"""`take` against hostile conditions: links, read-only files, a full disk at every step, stale locks,
many takes at once; and the history of takes with undo back to any of them.

Expected values come from the files the tests write themselves, read back with Python's csv module;
the full disk is simulated by making the n-th os.write / os.fsync / os.link / os.replace raise
OSError(ENOSPC), for every n up to the number of such calls a successful take makes.
"""

from __future__ import annotations

import csv
import errno
import hashlib
import io
import json
import os
import socket
import subprocess
import sys
from pathlib import Path

import pytest
from click.testing import CliRunner

from drawerfit.cli import main
from drawerfit.io.take import TakeError, lock_path, log_path, take
from drawerfit.io.take_history import history, undo, undo_takes

SRC = str(Path(__file__).resolve().parents[2] / "src")
DRAWER = b"kind,value,qty,location\nresistor,4k7,12,A1\nresistor,10k,5,A2\n"


def _sha(data: bytes) -> str:
    return "sha256:" + hashlib.sha256(data).hexdigest()


def _qty(data: bytes) -> list[str]:
    return [r[2] for r in csv.reader(io.StringIO(data.decode("utf-8")))][1:]


def _kit(folder: Path, stock_bytes: bytes, picks, name="kit.json", units=1) -> Path:
    doc = {"units": units, "stock_checksum": _sha(stock_bytes),
           "pick_list": [{"source": {"row": row}, "per_unit": n, "count": n * units} for row, n in picks]}
    p = folder / name
    p.write_text(json.dumps(doc), encoding="utf-8")
    return p


def _leftovers(folder: Path) -> list[str]:
    """Files a take must never leave behind after a failure: locks, backups, temporary files."""
    return sorted(p.name for p in folder.iterdir()
                  if p.name.endswith((".take-lock", ".tmp")) or ".backup-" in p.name)


# --- links and permissions -------------------------------------------------------------------------


def test_a_symlinked_stock_file_is_changed_where_it_points_and_stays_a_link(tmp_path):
    real = tmp_path / "shelf"
    real.mkdir()
    (real / "drawer.csv").write_bytes(DRAWER)
    link = tmp_path / "drawer-link.csv"
    link.symlink_to(real / "drawer.csv")
    kit = _kit(tmp_path, DRAWER, [(2, 3)])
    res = CliRunner().invoke(main, ["take", str(kit), "--stock", str(link)])
    assert res.exit_code == 0, res.output
    assert link.is_symlink() and os.readlink(link) == str(real / "drawer.csv")
    assert _qty((real / "drawer.csv").read_bytes()) == ["9", "5"]  # 12 - 3
    # the backup and the log sit beside the real file, so every name of the file shares them
    assert log_path(link) == real / "drawer.csv.takes.jsonl" and log_path(link).exists()
    assert not [p for p in tmp_path.iterdir() if p.name.startswith("drawer-link.csv.")]
    undo(link)
    assert (real / "drawer.csv").read_bytes() == DRAWER and link.is_symlink()


def test_a_read_only_stock_file_is_refused_even_for_a_dry_run(tmp_path):
    stock = tmp_path / "drawer.csv"
    stock.write_bytes(DRAWER)
    stock.chmod(0o444)
    kit = _kit(tmp_path, DRAWER, [(2, 3)])
    for extra in ([], ["--dry-run"]):
        res = CliRunner().invoke(main, ["take", str(kit), "--stock", str(stock), *extra])
        assert res.exit_code == 2 and "read-only" in res.output and "Traceback" not in res.output
    assert stock.read_bytes() == DRAWER and stock.stat().st_mode & 0o777 == 0o444
    assert sorted(p.name for p in tmp_path.iterdir()) == ["drawer.csv", "kit.json"]


def test_a_hard_linked_stock_file_is_refused(tmp_path):
    stock = tmp_path / "drawer.csv"
    stock.write_bytes(DRAWER)
    os.link(stock, tmp_path / "other-name.csv")
    kit = _kit(tmp_path, DRAWER, [(2, 3)])
    with pytest.raises(TakeError, match="hard links"):
        take(kit, stock)
    assert stock.read_bytes() == DRAWER


# --- a full disk at every step ---------------------------------------------------------------------


def _calls_of_a_take(tmp_path, monkeypatch, name: str) -> int:
    """How many times a successful take calls os.<name> (on a scratch copy)."""
    scratch = tmp_path / "scratch"
    scratch.mkdir()
    (scratch / "drawer.csv").write_bytes(DRAWER)
    kit = _kit(scratch, DRAWER, [(2, 3), (3, 1)])
    real = getattr(os, name)
    count = [0]

    def counting(*a, **k):
        count[0] += 1
        return real(*a, **k)

    monkeypatch.setattr(os, name, counting)
    take(kit, scratch / "drawer.csv")
    monkeypatch.setattr(os, name, real)
    return count[0]


@pytest.mark.parametrize("name", ["write", "fsync", "link", "replace"])
def test_a_full_disk_at_each_step_changes_nothing_and_leaves_nothing(tmp_path, monkeypatch, name):
    calls = _calls_of_a_take(tmp_path, monkeypatch, name)
    assert calls >= 1
    real = getattr(os, name)
    refused = 0
    for n in range(1, calls + 1):
        folder = tmp_path / f"{name}{n}"
        folder.mkdir()
        stock = folder / "drawer.csv"
        stock.write_bytes(DRAWER)
        kit = _kit(folder, DRAWER, [(2, 3), (3, 1)])
        seen = [0]

        def failing(*a, _n=n, **k):
            seen[0] += 1
            if seen[0] == _n:
                raise OSError(errno.ENOSPC, "No space left on device")
            return real(*a, **k)

        monkeypatch.setattr(os, name, failing)
        try:
            res = CliRunner().invoke(main, ["take", str(kit), "--stock", str(stock)])
        finally:
            monkeypatch.setattr(os, name, real)
        assert "Traceback" not in res.output and res.exit_code in (0, 2), (name, n, res.output)
        if res.exit_code == 0:
            # a failed flush of the folder is only a lost hint to the disk: the take is whole
            assert name == "fsync" and _qty(stock.read_bytes()) == ["9", "4"]
            assert [r.state for r in history(stock)] == ["in the file"]
            assert not lock_path(stock).exists()
            continue
        refused += 1
        assert "disk is full" in res.output
        assert stock.read_bytes() == DRAWER, (name, n)
        assert _leftovers(folder) == [], (name, n)
        # the log holds whole lines only, and no take counts as being in the file
        assert all(r.state != "in the file" for r in history(stock))
        # nothing blocks the next take once there is room again
        take(kit, stock)
        assert _qty(stock.read_bytes()) == ["9", "4"]
    assert refused >= 1


def test_a_full_disk_during_undo_changes_nothing(tmp_path, monkeypatch):
    stock = tmp_path / "drawer.csv"
    stock.write_bytes(DRAWER)
    take(_kit(tmp_path, DRAWER, [(2, 3)]), stock)
    after = stock.read_bytes()
    real = os.replace

    def full(*a, **k):
        raise OSError(errno.ENOSPC, "No space left on device")

    monkeypatch.setattr(os, "replace", full)
    res = CliRunner().invoke(main, ["take", "--undo", "--stock", str(stock)])
    monkeypatch.setattr(os, "replace", real)
    assert res.exit_code == 2 and "disk is full" in res.output
    assert stock.read_bytes() == after
    assert len([p for p in tmp_path.iterdir() if ".backup-" in p.name]) == 1  # only the take's own backup
    undo(stock)  # with room again the take is still there to put back
    assert stock.read_bytes() == DRAWER


# --- locks -----------------------------------------------------------------------------------------


def _dead_pid() -> int:
    proc = subprocess.Popen([sys.executable, "-c", "pass"])
    proc.wait()
    return proc.pid  # ended and reaped: no process has this number now (numbers are reused late)


def test_a_lock_whose_process_is_gone_is_taken_over_with_a_message(tmp_path):
    stock = tmp_path / "drawer.csv"
    stock.write_bytes(DRAWER)
    pid = _dead_pid()
    lock_path(stock).write_text(f"pid {pid} host {socket.gethostname()} since 20260101T000000Z\n")
    res = CliRunner().invoke(main, ["take", str(_kit(tmp_path, DRAWER, [(2, 3)])), "--stock", str(stock)])
    assert res.exit_code == 0, res.output
    assert f"process {pid} is no longer running" in res.output and "took over the lock" in res.output
    assert _qty(stock.read_bytes()) == ["9", "5"] and not lock_path(stock).exists()


@pytest.mark.parametrize("holder", ["alive", "other_host", "unreadable"])
def test_a_lock_that_may_still_be_held_is_respected(tmp_path, holder):
    stock = tmp_path / "drawer.csv"
    stock.write_bytes(DRAWER)
    text = {"alive": f"pid {os.getppid()} host {socket.gethostname()} since x\n",
            "other_host": f"pid {_dead_pid()} host not-{socket.gethostname()} since x\n",
            "unreadable": "\n"}[holder]
    lock_path(stock).write_text(text)
    with pytest.raises(TakeError, match="holds the lock"):
        take(_kit(tmp_path, DRAWER, [(2, 3)]), stock)
    assert stock.read_bytes() == DRAWER and lock_path(stock).read_text() == text


def test_many_takes_at_once_over_a_stale_lock_exactly_one_lands(tmp_path):
    stock = tmp_path / "drawer.csv"
    stock.write_bytes(DRAWER)
    lock_path(stock).write_text(f"pid {_dead_pid()} host {socket.gethostname()} since x\n")
    kit = _kit(tmp_path, DRAWER, [(2, 5)])
    env = {**os.environ, "PYTHONPATH": SRC}
    procs = [subprocess.Popen([sys.executable, "-m", "drawerfit", "take", str(kit), "--stock", str(stock)],
                              env=env, stdout=subprocess.PIPE, stderr=subprocess.PIPE) for _ in range(12)]
    outs = [p.communicate(timeout=300) for p in procs]
    codes = [p.returncode for p in procs]
    assert sorted(codes) == [0] + [2] * 11, [o[1][-300:] for o in outs]
    assert not any(b"Traceback" in o[1] for o in outs)
    assert _qty(stock.read_bytes()) == ["7", "5"]  # taken once: 12 - 5
    assert [r.state for r in history(stock)] == ["in the file"]
    assert _leftovers(tmp_path) == [p.name for p in tmp_path.iterdir() if ".backup-" in p.name]


# --- history and undo back to any take -------------------------------------------------------------


def test_history_lists_every_take_and_undo_goes_back_to_the_one_named(tmp_path):
    stock = tmp_path / "drawer.csv"
    stock.write_bytes(DRAWER)
    states = [DRAWER]
    for i, picks in enumerate(([(2, 1)], [(3, 2)], [(2, 4), (3, 1)]), start=1):
        take(_kit(tmp_path, stock.read_bytes(), picks, name=f"k{i}.json"), stock)
        states.append(stock.read_bytes())
    assert [_qty(s) for s in states] == [["12", "5"], ["11", "5"], ["11", "3"], ["7", "2"]]
    res = CliRunner().invoke(main, ["take", "--history", "--stock", str(stock)])
    assert res.exit_code == 0
    assert [ln.split()[0] for ln in res.output.splitlines()[2:]] == ["1", "2", "3"]
    assert [r.parts for r in history(stock)] == [1, 2, 5]

    # the help shows the file as optional, and --undo N walks back through takes 3 and 2
    assert "[DESIGN.toml|KIT.json]" in CliRunner().invoke(main, ["take", "--help"]).output
    res = CliRunner().invoke(main, ["take", "--undo", "2", "--stock", str(stock), "--json"])
    assert res.exit_code == 0, res.output
    out = json.loads(res.output)
    assert [s["undone"] for s in out["steps"]] == [r.id for r in history(stock)][::-1][:2]
    assert stock.read_bytes() == states[1]
    assert [r.state for r in history(stock)] == ["in the file", "undone", "undone"]
    # an undone take cannot be undone again; the one still in the file can
    res = CliRunner().invoke(main, ["take", "--undo", "3", "--stock", str(stock)])
    assert res.exit_code == 2 and "not in the file" in res.output
    res = CliRunner().invoke(main, ["take", "--undo", "9", "--stock", str(stock)])
    assert res.exit_code == 2 and "no take '9'" in res.output
    undo_takes(stock, to=1)
    assert stock.read_bytes() == DRAWER


def test_undo_with_a_design_file_says_it_takes_none(tmp_path):
    stock = tmp_path / "drawer.csv"
    stock.write_bytes(DRAWER)
    kit = _kit(tmp_path, DRAWER, [(2, 1)])
    res = CliRunner().invoke(main, ["take", str(kit), "--undo", "--stock", str(stock)])
    assert res.exit_code == 2 and "--undo takes no design or kit file" in res.output


def test_an_interrupted_undo_leaves_the_take_in_the_file(tmp_path):
    # an undo logged but killed before its switch: the chain of checksums shows it never landed
    stock = tmp_path / "drawer.csv"
    stock.write_bytes(DRAWER)
    take(_kit(tmp_path, DRAWER, [(2, 3)]), stock)
    script = ("import os\nos.replace = lambda a, b: os._exit(9)\nfrom drawerfit.io.take_history import undo\n"
              f"undo({str(stock)!r})\n")
    proc = subprocess.run([sys.executable, "-c", script], env={**os.environ, "PYTHONPATH": SRC},
                          capture_output=True, timeout=120)
    assert proc.returncode == 9
    assert [r.state for r in history(stock)] == ["in the file"]
    undo(stock)
    assert stock.read_bytes() == DRAWER and [r.state for r in history(stock)] == ["undone"]


def test_the_columns_of_a_take_line_up_whatever_the_widths(tmp_path):
    text = "kind,value,qty,location\n" + "".join(f"resistor,{v},{q},{b}\n" for v, q, b in (
        ("4k7", 1200, "A1"), ("10k", 5, "drawer twelve"), ("1M", 30, "B")))
    text += "resistor,2k2,3,C\n" * 7 + "resistor,100R,9,D\n"  # row 12: a two-digit row number
    stock = tmp_path / "drawer.csv"
    stock.write_text(text, encoding="utf-8")
    kit = _kit(tmp_path, stock.read_bytes(), [(2, 1000), (3, 1), (4, 25), (12, 4)])
    res = CliRunner().invoke(main, ["take", str(kit), "--stock", str(stock), "--dry-run"])
    assert res.exit_code == 0, res.output
    table = [ln for ln in res.output.splitlines() if "->" in ln or "quantity" in ln]
    assert len(table) == 5
    for word in ("quantity", "change"):  # right-aligned: every cell ends where its header ends
        end = table[0].index(word) + len(word)
        for ln in table[1:]:
            assert ln[end - 1] != " " and ln[end:end + 1] in ("", " "), (word, ln)
    for word in ("part", "bin"):  # left-aligned: every cell starts where its header starts
        start = table[0].index(word)
        for ln in table[1:]:
            assert ln[start - 1] == " " and ln[start] != " ", (word, ln)

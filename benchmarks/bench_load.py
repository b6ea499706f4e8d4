"""How fast, and in how much memory, the loader reads a large stock file (CSV and XLSX).

Run: python benchmarks/bench_load.py [--lines 100000] [--also-limit]
Writes drawers of --lines lines (resistors, capacitors and a few transistors, with a Rating column,
tolerances, bins and notes) to a temporary folder, loads each in a fresh process, and prints the
seconds (load_stock alone, and the whole process with start-up) and the peak memory of that process
(resource.getrusage: maximum resident set size).  --also-limit adds a file at MAX_ROWS rows and one
just over it (refused before any line is read).  Not part of the test suite.
"""

from __future__ import annotations

import argparse
import csv
import json
import random
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT / "src"))

from drawerfit import constants as K  # noqa: E402
from drawerfit.eseries import decade_values  # noqa: E402
from drawerfit.values import format_code  # noqa: E402

CHILD = """
import json, resource, sys, time
t0 = time.perf_counter()
from drawerfit.parts import DrawerfitError
from drawerfit.stock import load_stock
t1 = time.perf_counter()
try:
    stock = load_stock(sys.argv[1])
    lines, problems, refused = len(stock.lines), len(stock.problems), None
except DrawerfitError as exc:
    lines, problems, refused = 0, 0, str(exc)[-120:]
t2 = time.perf_counter()
peak_kb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss  # kilobytes on Linux
print(json.dumps({"load_s": t2 - t1, "lines": lines, "problems": problems, "peak_mb": peak_kb / 1024,
                  "refused": refused}))
"""


def rows(n: int, seed: int = 11):
    rng = random.Random(seed)
    rvals = decade_values("E96", 1.0, 10e6)
    cvals = decade_values("E12", 10e-12, 1e-3)
    yield ["Type", "Value", "Tolerance", "Rating", "Qty", "Bin", "Note"]
    for i in range(n):
        bin_ = f"D{i // 40}-{i % 40}"
        if i % 500 == 499:
            yield ["NPN", f"LabQ-{i}", "", "", str(rng.randint(0, 20)), bin_, "hand-sorted"]
            continue
        if rng.random() < 0.7:
            v = rng.choice(rvals)
            yield ["R", format_code(v, "ohm"), rng.choice(["1%", "5%"]), rng.choice(["0.25W", "0.6W", "1W"]),
                   str(rng.randint(0, 200)), bin_, rng.choice(["", "metal film", "from the old kit"])]
        else:
            v = rng.choice(cvals)
            yield ["C", format_code(v, "F"), rng.choice(["", "10%", "20%"]), rng.choice(["16V", "25V", "50V"]),
                   str(rng.randint(0, 100)), bin_, rng.choice(["", "ceramic", "electrolytic"])]


def write_csv(path: Path, n: int) -> None:
    with open(path, "w", newline="", encoding="utf-8") as fh:
        csv.writer(fh).writerows(rows(n))


def write_xlsx(path: Path, n: int) -> None:
    from openpyxl import Workbook

    wb = Workbook(write_only=True)
    ws = wb.create_sheet("Stock")
    for r in rows(n):
        ws.append(r)
    wb.save(path)


def measure(path: Path) -> dict:
    t0 = time.perf_counter()
    out = subprocess.run([sys.executable, "-c", CHILD, str(path)], capture_output=True, text=True, check=True,
                         env={"PYTHONPATH": str(ROOT / "src"), "PATH": ""})
    result = json.loads(out.stdout)
    result["process_s"] = time.perf_counter() - t0
    return result


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--lines", type=int, default=100_000)
    ap.add_argument("--also-limit", action="store_true")
    args = ap.parse_args()
    # the limit counts every row with content, the header too
    sizes = [args.lines] + ([K.MAX_ROWS - 1, K.MAX_ROWS + 10] if args.also_limit else [])
    with tempfile.TemporaryDirectory(prefix="drawerfit-bench-") as tmp:
        for n in sizes:
            for suffix, writer in ((".csv", write_csv), (".xlsx", write_xlsx)):
                path = Path(tmp) / f"drawer-{n}{suffix}"
                writer(path, n)
                r = measure(path)
                size = path.stat().st_size / 2**20
                what = f"refused: {r['refused']}" if r["refused"] else f"{r['lines']:,} lines"
                print(f"load {n:>7,} rows {suffix:<5} ({size:6.1f} MB): {r['load_s']:6.2f} s to load,"
                      f" {r['process_s']:6.2f} s with start-up, peak memory {r['peak_mb']:6.0f} MB; {what}")


if __name__ == "__main__":
    main()

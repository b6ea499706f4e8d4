"""How fast `drawerfit match` answers on a drawer of a few hundred lines, start-up included.

Run: python benchmarks/bench_match.py [--lines 400] [--repeat 5]
Prints seconds per command (median of the repeats) for --help, `stock`, and `match` with pairs
and with triples.  Not part of the test suite.
"""

from __future__ import annotations

import argparse
import csv
import random
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT / "src"))

from drawerfit.eseries import decade_values  # noqa: E402
from drawerfit.values import format_code  # noqa: E402


def make_drawer(path: Path, n_lines: int, seed: int = 7) -> None:
    rng = random.Random(seed)
    values = decade_values("E96", 1.0, 10e6)
    rows = [["Kind", "Value", "Tolerance", "Power (W)", "Qty", "Bin"]]
    for i in range(n_lines):
        v = rng.choice(values)
        rows.append(["R", format_code(v, "ohm"), rng.choice(["1%", "5%"]), rng.choice(["0.25", "0.5", "1"]),
                     str(rng.randint(0, 40)), f"D{i // 20}-{i % 20}"])
    with open(path, "w", newline="") as fh:
        csv.writer(fh).writerows(rows)


def timed(args: list[str], repeat: int) -> float:
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        subprocess.run([sys.executable, "-m", "drawerfit", *args], check=True, capture_output=True)
        times.append(time.perf_counter() - t0)
    return statistics.median(times)


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--lines", type=int, default=400)
    ap.add_argument("--repeat", type=int, default=5)
    a = ap.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        drawer = Path(tmp) / "drawer.csv"
        make_drawer(drawer, a.lines)
        print(f"drawer: {a.lines} resistor lines (E96 values, seeded), median of {a.repeat} runs, start-up included")
        print(f"  drawerfit --help                          {timed(['--help'], a.repeat):6.3f} s")
        print(f"  drawerfit stock                           {timed(['stock', str(drawer)], a.repeat):6.3f} s")
        for target in ("4k99", "123k"):
            for parts in (2, 3):
                t = timed(["match", target, "--stock", str(drawer), "--max-parts", str(parts), "--within", "0.1%"],
                          a.repeat)
                print(f"  drawerfit match {target:>5} --max-parts {parts} --within 0.1%  {t:6.3f} s")
        t = timed(["match", "3.14159k", "--stock", str(drawer), "--max-parts", "3", "--within", "0.001%",
                   "--top", "20"], a.repeat)
        print(f"  drawerfit match 3.14159k --max-parts 3 --within 0.001% --top 20  {t:6.3f} s")


if __name__ == "__main__":
    main()

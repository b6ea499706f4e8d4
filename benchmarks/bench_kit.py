"""Time `kit` on a 60-line parts list against a 500-line drawer (both invented, fixed seed).

Run on demand:  python3 benchmarks/bench_kit.py [--units N] [--max-parts N] [--seed S] [--drawer LINES]
Prints the seconds for loading, candidate tables, and kit end to end (tables, CP-SAT, report), the
peak resident memory, and whether the result is proven optimal.  Not part of the test suite.
"""

from __future__ import annotations

import argparse
import csv
import resource
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "src"))

from drawerfit.eseries import decade_values  # noqa: E402
from drawerfit.values import format_code  # noqa: E402


def make_drawer(rng: np.random.Generator, path: Path, n_res: int = 350, n_cap: int = 150) -> None:
    rvals = decade_values("E24", 10.0, 1e6)
    cvals = decade_values("E12", 10e-12, 1000e-6)
    with path.open("w", newline="", encoding="utf-8") as f:
        w = csv.writer(f)
        w.writerow(["kind", "value", "tolerance", "power", "voltage", "dielectric", "qty", "location"])
        for i in range(n_res):
            v = float(rng.choice(rvals))
            w.writerow(["resistor", format_code(v, "ohm"), str(rng.choice(["1%", "5%"])),
                        str(rng.choice(["0.125", "0.25", "0.25", "0.5", "1"])), "", "",
                        int(rng.integers(0, 40)), f"R{i // 20:02d}-{i % 20:02d}"])
        for i in range(n_cap):
            v = float(rng.choice(cvals))
            electrolytic = v >= 1e-6
            w.writerow(["capacitor", format_code(v, "F"), "20%" if electrolytic else "10%", "",
                        str(rng.choice([16, 25, 50, 100])), "electrolytic" if electrolytic else "ceramic",
                        int(rng.integers(0, 30)), f"C{i // 20:02d}-{i % 20:02d}"])


def make_list(rng: np.random.Generator, path: Path, n_lines: int = 60) -> None:
    rvals = decade_values("E96", 10.0, 1e6)
    cvals = decade_values("E24", 100e-12, 470e-6)
    k = {"R": 1, "C": 1}
    with path.open("w", newline="", encoding="utf-8") as f:
        w = csv.writer(f)
        w.writerow(["designators", "value", "tolerance", "min rating", "single only"])
        for i in range(n_lines):
            res = i < int(n_lines * 0.75)
            letter = "R" if res else "C"
            n = int(rng.integers(1, 5))
            desig = ", ".join(f"{letter}{k[letter] + j}" for j in range(n))
            k[letter] += n
            v = float(rng.choice(rvals if res else cvals))
            tol = str(rng.choice(["1%", "2%", "5%", "10%", ""]))
            rating = ""
            if rng.random() < 0.3:
                rating = str(rng.choice(["0.25W", "0.5W"])) if res else str(rng.choice(["16V", "25V", "50V"]))
            single = "yes" if rng.random() < 0.1 else ""
            w.writerow([desig, format_code(v, "ohm" if res else "F") + ("" if res else "F"), tol, rating, single])


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--units", type=int, default=10)
    ap.add_argument("--max-parts", type=int, default=2)
    ap.add_argument("--seed", type=int, default=20261202)
    ap.add_argument("--time-limit", type=float, default=60.0)
    ap.add_argument("--drawer", type=int, default=500, help="drawer lines (70 %% resistors)")
    args = ap.parse_args()
    from drawerfit.kits.candidates import candidates_for
    from drawerfit.kits.fill import run_kit
    from drawerfit.kits.parts_list import read_kit_list
    from drawerfit.stock import load_stock

    rng = np.random.default_rng(args.seed)
    with tempfile.TemporaryDirectory() as d:
        drawer, lst = Path(d) / "drawer.csv", Path(d) / "list.csv"
        n_res = round(args.drawer * 0.7)
        make_drawer(rng, drawer, n_res, args.drawer - n_res)
        make_list(rng, lst)
        t0 = time.perf_counter()
        stock = load_stock(str(drawer))
        kl = read_kit_list(str(lst))
        t1 = time.perf_counter()
        indexes: dict = {}  # shared by the lines, as run_kit shares them
        cands = [candidates_for(ln, stock, args.max_parts, indexes) for ln in kl.lines]
        n_in = sum(c.in_window for c in cands)
        n_kept = sum(len(c) for c in cands)
        del cands, indexes
        t2 = time.perf_counter()
        r = run_kit(str(lst), str(drawer), units=args.units, max_parts=args.max_parts,
                    time_limit=args.time_limit, stock=stock, kit_list=kl)
        t3 = time.perf_counter()
    designators = len(r.filled) + len(r.unfilled)
    print(f"drawer lines: {len(stock.lines)}   list lines: {len(kl.lines)}   designators: {designators}"
          f"   units: {args.units}   max parts: {args.max_parts}")
    print(f"equivalents in the windows: {n_in}   kept after dominance pruning: {n_kept}"
          f"   (first tables; kit may build more triples where it needs them)")
    print(f"load stock + list: {t1 - t0:.3f} s")
    print(f"candidate tables:  {t2 - t1:.3f} s")
    print(f"kit (tables + CP-SAT + report): {t3 - t2:.3f} s")
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024  # KiB on Linux
    print(f"peak resident memory: {peak:.0f} MB")
    print(f"filled {len(r.filled)} of {designators}; parts {r.stage_values[1] if len(r.stage_values) > 1 else '-'};"
          f" buy {sum(b.count for b in r.buy)} parts; proven optimal: {r.optimal}")


if __name__ == "__main__":
    main()

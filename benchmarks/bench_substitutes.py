"""How fast `drawerfit match npn|pnp` answers on a drawer of a thousand lines, with and without a stage.

Run: python benchmarks/bench_substitutes.py [--lines 1000] [--transistors 300] [--repeat 3]
Prints seconds (median of the repeats) and peak memory (tracemalloc) of ``api.substitutes`` on an
invented drawer (resistors and capacitors plus transistor lines of both polarities, some lacking a
rating), for a requirement alone and with the common-emitter sample spec (every candidate of the
stage's polarity analysed in it), and, for comparison, one ``analysis.analyse`` per candidate (what
the single vectorised pass of ``analysis.batch`` replaces).  Also the command end to end, start-up
included.  Not part of the test suite.
"""

from __future__ import annotations

import argparse
import csv
import os
import random
import statistics
import subprocess
import sys
import tempfile
import time
import tracemalloc
from dataclasses import replace
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT / "src"))

import drawerfit  # noqa: E402
from drawerfit.eseries import decade_values  # noqa: E402
from drawerfit.values import format_code  # noqa: E402

SPEC = ROOT / "inventory_samples" / "ce_repair_pnp.toml"


def make_drawer(path: Path, n_lines: int, n_transistors: int, seed: int = 11) -> None:
    rng = random.Random(seed)
    values = decade_values("E24", 10.0, 1e6)
    header = ["Kind", "Value", "Tolerance", "Power (W)", "Voltage (V)", "Qty", "Bin", "Label", "hFE min", "hFE max",
              "VCEO (V)", "IC max (A)", "Pd (W)", "VBE (V)", "VCE(sat) (V)"]
    rows = [header, ["PNP", "", "", "", "", "4", "tin C", "BenchPNP-7", "120", "300", "45", "0.15", "0.5", "", ""]]
    for i in range(n_transistors):
        lo = rng.choice([25, 40, 60, 100, 110, 120, 150, 200])
        pol = rng.choice(["NPN", "PNP"])
        rows.append([pol, "", "", "", "", str(rng.randint(0, 30)), f"Q{i // 10}", f"Bench{pol}-{i}", str(lo),
                     str(lo * rng.choice([2, 2.5, 3])), "" if rng.random() < 0.05 else str(rng.choice([20, 30, 45, 60])),
                     str(rng.choice([0.1, 0.15, 0.5, 1.0])), "" if rng.random() < 0.05 else str(rng.choice([0.3, 0.5, 1])),
                     f"{rng.uniform(0.6, 0.72):.3f}", str(rng.choice([0.1, 0.2, 0.3]))])
    for i in range(n_lines - n_transistors - 1):
        if i % 3:
            rows.append(["R", format_code(rng.choice(values), "ohm"), "5%", "0.25", "", str(rng.randint(1, 40)),
                         f"D{i // 20}"] + [""] * 8)
        else:
            rows.append(["C", f"{rng.choice([1, 2.2, 4.7, 10, 22, 47, 100, 220])}u", "20%", "", "25",
                         str(rng.randint(1, 20)), f"E{i // 20}"] + [""] * 8)
    with open(path, "w", newline="") as fh:
        csv.writer(fh).writerows(rows)


def measure(fn, repeat: int) -> tuple[float, float]:
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    tracemalloc.start()
    fn()
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    return statistics.median(times), peak / 2**20


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--lines", type=int, default=1000)
    ap.add_argument("--transistors", type=int, default=300)
    ap.add_argument("--repeat", type=int, default=3)
    a = ap.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "drawer.csv"
        make_drawer(path, a.lines, a.transistors)
        stock = drawerfit.load_stock(path)
        print(f"drawer: {len(stock.lines)} lines, {len(stock.transistors())} transistor lines (seeded, invented); "
              f"median of {a.repeat}")
        t, mb = measure(lambda: drawerfit.substitutes("npn", stock, vceo="30V", hfe="100-300"), a.repeat)
        print(f"  requirement only (every line judged and ranked)        {t:7.3f} s  peak {mb:6.1f} MB")
        result = drawerfit.substitutes(None, stock, spec=SPEC)
        n = sum(1 for s in result.substitutes if s.stage is not None and s.stage.analysis is not None)
        t, mb = measure(lambda: drawerfit.substitutes(None, stock, spec=SPEC), a.repeat)
        print(f"  with the stage ({n} PNP lines analysed in one pass)      {t:7.3f} s  peak {mb:6.1f} MB")
        from drawerfit.analysis import analyse
        from drawerfit.search.runner import transistor_model

        spec = result.spec
        stage = spec.stage()
        lines = [s.line for s in result.substitutes if s.stage is not None and s.stage.analysis is not None]
        t0 = time.perf_counter()
        for ln in lines[:20]:
            analyse(replace(stage, transistor=transistor_model(ln)), spec.conditions, targets=spec.targets)
        per = (time.perf_counter() - t0) / max(1, min(20, len(lines)))
        print(f"  for comparison, one analyse() per line: {per:.3f} s each, about {per * n:.1f} s for {n}")
        cmd = [sys.executable, "-m", "drawerfit", "match", "pnp", "--stock", str(path), "--in", str(SPEC)]
        times = []
        for _ in range(a.repeat):
            t0 = time.perf_counter()
            subprocess.run(cmd, check=True, capture_output=True, cwd=ROOT, env=dict(os.environ, PYTHONPATH=str(ROOT / "src")))
            times.append(time.perf_counter() - t0)
        print(f"  drawerfit match pnp --in ce_repair_pnp.toml (end to end) {statistics.median(times):7.3f} s")


if __name__ == "__main__":
    main()

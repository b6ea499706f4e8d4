"""End-to-end seconds of `drawerfit design` on the sample teaching-lab drawer (run on demand).

    python3 benchmarks/bench_design.py [--exhaustive-timeout SECONDS]

For each sample spec: the pruned search with pairs (the default --max-parts 2), then the naive
enumeration (--exhaustive) with singles and with pairs, each stopped after the timeout; the
ratio is printed where the naive run finishes, with a check that both chose the same design.
Times are wall-clock seconds of a fresh process (start-up and file reading included).
"""

from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
STOCK = ROOT / "inventory_samples" / "teaching_lab.csv"
SPECS = ("bench_buffer.toml", "gain_stage.toml")


def run(spec: Path, *extra: str, timeout: float):
    env = dict(os.environ, PYTHONPATH=str(ROOT / "src"))
    cmd = [sys.executable, "-m", "drawerfit", "design", str(spec), "--stock", str(STOCK), "--json", *extra]
    t0 = time.perf_counter()
    try:
        p = subprocess.run(cmd, capture_output=True, text=True, env=env, timeout=timeout)
    except subprocess.TimeoutExpired:
        return None, None
    dt = time.perf_counter() - t0
    data = json.loads(p.stdout) if p.stdout.strip() else None
    return dt, data


def _choice(data):
    if not data or not data.get("feasible"):
        return None
    return (data["transistor"]["source"]["row"],
            tuple((r, tuple(x["source"]["row"] for x in p["parts"])) for r, p in sorted(data["parts"].items())))


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--exhaustive-timeout", type=float, default=300.0)
    args = ap.parse_args()
    n_lines = sum(1 for _ in STOCK.open(encoding="utf-8")) - 1
    print(f"drawer: {STOCK.name}, {n_lines} lines; {os.cpu_count()} CPUs")
    for name in SPECS:
        spec = ROOT / "inventory_samples" / "specs" / name
        for mp in ("1", "2"):
            fast, fd = run(spec, "--max-parts", mp, timeout=600)
            slow, sd = run(spec, "--max-parts", mp, "--exhaustive", timeout=args.exhaustive_timeout)
            line = f"{name:18} max-parts {mp}: search {fast:6.2f} s"
            if slow is None:
                line += f"; exhaustive did not finish in {args.exhaustive_timeout:g} s"
            else:
                same = "same design" if _choice(fd) == _choice(sd) else "DIFFERENT DESIGN"
                line += f"; exhaustive {slow:7.2f} s (ratio {slow / fast:5.1f}x, {same})"
            print(line, flush=True)


if __name__ == "__main__":
    main()

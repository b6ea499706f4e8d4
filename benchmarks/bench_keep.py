"""Time mending a board with the fewest changes (`design --keep`) on the bundled drawers.

Run on demand:  python3 benchmarks/bench_keep.py [--max-parts 1 2 3] [--drawer FILE]
Each case runs in its own process (peak memory is the child's maximum resident set) and prints the
seconds end to end, the peak MB, the searches run, the changes found and whether they are proven
the fewest.  Not part of the test suite.  The board is inventory_samples/preamp_repair.toml (a PNP
gain stage with bypass, its transistor marked broken).
"""

from __future__ import annotations

import argparse
import json
import resource
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
BOARD = ROOT / "inventory_samples" / "preamp_repair.toml"
DRAWERS = [ROOT / "inventory_samples" / "repair_bench.csv", ROOT / "inventory_samples" / "full_lab_e96.csv"]


def run(drawer: Path, max_parts: int) -> tuple[float, float, dict | None]:
    cmd = [sys.executable, "-m", "drawerfit", "design", str(BOARD), "--stock", str(drawer), "--keep", "--broken",
           "Q1", "--max-parts", str(max_parts), "--json", "--quiet"]
    before = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss
    t = time.perf_counter()
    proc = subprocess.run(cmd, capture_output=True, text=True, env={"PYTHONPATH": str(ROOT / "src"),
                                                                      "PATH": "/usr/bin:/bin"})
    secs = time.perf_counter() - t
    peak = max(resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss, before) / 1024.0
    try:
        return secs, peak, json.loads(proc.stdout)
    except json.JSONDecodeError:
        return secs, peak, None


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--max-parts", type=int, nargs="+", default=[1, 2])
    ap.add_argument("--drawer", type=Path, action="append", default=None)
    args = ap.parse_args()
    print(f"{'drawer':22} {'max-parts':>9} {'seconds':>8} {'peak MB':>8} {'searches':>8}  changes (proven)")
    for drawer in args.drawer or DRAWERS:
        lines = sum(1 for _ in drawer.open(encoding="utf-8")) - 1
        for mp in args.max_parts:
            secs, peak, d = run(drawer, mp)
            if d is None:
                what, n = "no JSON (see the command's output)", "-"
            else:
                what = ", ".join(c["role"] for c in d.get("changes", [])) or "none"
                what += f" ({'proven' if d.get('proven_fewest') else 'not proven'})"
                n = d.get("searches", "-")
            print(f"{drawer.name[:14]:14} {lines:>5} ln {mp:>9} {secs:8.2f} {peak:8.0f} {n:>8}  {what}")


if __name__ == "__main__":
    main()

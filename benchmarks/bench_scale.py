"""How the design search, kit and match grow with the drawer (run on demand, not by the tests).

    python3 benchmarks/bench_scale.py [--sizes e24,e96,e192,big] [--max-parts 1,2,3] [--quick]

Writes invented full-size drawers into a temporary folder (``inventory_samples/generate.py``'s
``full_lab``: 1 % resistors of one E series over six decades, about 200 capacitor lines over nine
decades, five transistor lines; ``big`` adds E24 5 % lines at two power ratings to E192, about
1,650 lines, and ``huge`` also E48 2 % at 0.5 W and 1 W, about 2,000), then runs each command in a
fresh process and prints one table: drawer lines x topology x --max-parts -> wall-clock seconds
(start-up and file reading included), peak resident memory (MB, the child's own maximum RSS),
resistor sets examined, and the answer's status.  Then the growth exponent of the time with the
drawer size for each topology and count (the slope of log time over log lines; 1.0 is linear),
and `kit` with triples for a 60-line list against a 500-line drawer, and `match` on the largest
drawer.
"""

from __future__ import annotations

import argparse
import json
import math
import os
import random
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT / "inventory_samples"))
sys.path.insert(0, str(ROOT / "src"))

import generate  # noqa: E402

SPECS = {"follower": ROOT / "inventory_samples" / "specs" / "bench_buffer.toml",
         "common emitter": ROOT / "inventory_samples" / "specs" / "gain_stage.toml"}

# the child runs the command and reports its own peak memory (ru_maxrss is per process)
CHILD = """
import resource, sys, json
sys.argv = ["drawerfit"] + sys.argv[1:]
from drawerfit.cli import main
code = 0
try:
    main(standalone_mode=False)
except SystemExit as exc:
    code = exc.code or 0
except Exception as exc:  # noqa: BLE001
    code = repr(exc)
sys.stderr.write("\\n@@" + json.dumps({"rss_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024,
                                      "code": code}) + "\\n")
"""


def drawer(name: str, folder: Path) -> Path:
    rng = random.Random(20261203)
    if name == "e24":
        rows = generate.full_lab(rng, "E24")
    elif name == "e96":
        rows = generate.full_lab(rng, "E96")
    elif name == "e192":
        rows = generate.full_lab(rng, "E192")
    else:
        rows = generate.full_lab(rng, "E192", extra_5pct=True)
        if name == "huge":
            blank = [""] * 7
            from drawerfit.eseries import decade_values
            from drawerfit.values import format_code

            for w in ("0.5", "1"):
                for v in decade_values("E48", 10.0, 9.99e6):
                    rows.insert(1, ["resistor", format_code(v, "ohm"), "2%", w, "", "", "20", f"MO-{w}", "", *blank])
    path = folder / f"{name}.csv"
    generate.write_csv(path, rows)
    return path


def run(args: list[str], timeout: float = 900.0) -> dict:
    env = dict(os.environ, PYTHONPATH=str(ROOT / "src"))
    t0 = time.perf_counter()
    try:
        p = subprocess.run([sys.executable, "-c", CHILD, *args], capture_output=True, text=True, env=env,
                           timeout=timeout)
    except subprocess.TimeoutExpired:
        return {"seconds": None, "rss_mb": None, "out": None}
    dt = time.perf_counter() - t0
    info = {}
    for line in p.stderr.splitlines():
        if line.startswith("@@"):
            info = json.loads(line[2:])
    out = None
    if p.stdout.strip().startswith("{"):
        try:
            out = json.loads(p.stdout)
        except ValueError:
            out = None
    return {"seconds": dt, "rss_mb": info.get("rss_mb"), "code": info.get("code"), "out": out}


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--sizes", default="e24,e96,e192,big")
    ap.add_argument("--max-parts", default="1,2,3")
    ap.add_argument("--quick", action="store_true", help="e96 only, pairs only")
    ap.add_argument("--exhaustive-only", action="store_true", help="only --exhaustive against the search on 15 lines")
    a = ap.parse_args()
    if a.exhaustive_only:
        with tempfile.TemporaryDirectory() as tmp:
            exhaustive_small(Path(tmp))
        return
    sizes = ["e96"] if a.quick else a.sizes.split(",")
    counts = ["2"] if a.quick else a.max_parts.split(",")
    print(f"{os.cpu_count()} CPUs; each line a fresh process (start-up and reading included)")
    print(f"{'drawer':>8} {'lines':>6} {'topology':>15} {'parts':>5} {'seconds':>8} {'peak MB':>8} "
          f"{'sets':>10} {'steps':>12}  status")
    times: dict[tuple, list] = {}
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        for name in sizes:
            path = drawer(name, folder)
            n_lines = sum(1 for _ in path.open(encoding="utf-8")) - 1
            for topo, spec in SPECS.items():
                for mp in counts:
                    r = run(["design", str(spec), "--stock", str(path), "--max-parts", mp, "--json", "--quiet"])
                    d = r["out"] or {}
                    search = d.get("search") or {}
                    status = d.get("status") or ("infeasible" if d else f"failed ({r.get('code')})")
                    secs = "timeout" if r["seconds"] is None else f"{r['seconds']:8.2f}"
                    mb = "-" if r["rss_mb"] is None else f"{r['rss_mb']:8.0f}"
                    print(f"{name:>8} {n_lines:>6} {topo:>15} {mp:>5} {secs:>8} {mb:>8} "
                          f"{search.get('resistor_sets', 0):>10,} {search.get('steps', 0):>12,}  {status}",
                          flush=True)
                    if r["seconds"] is not None:
                        times.setdefault((topo, mp), []).append((n_lines, r["seconds"]))
        print("\ngrowth of the time with the drawer (slope of log seconds over log lines; 1.0 is linear):")
        for (topo, mp), pts in times.items():
            if len(pts) >= 2:
                xs = [math.log(n) for n, _ in pts]
                ys = [math.log(t) for _, t in pts]
                mx, my = sum(xs) / len(xs), sum(ys) / len(ys)
                slope = sum((x - mx) * (y - my) for x, y in zip(xs, ys)) / sum((x - mx) ** 2 for x in xs)
                print(f"  {topo:>15} max-parts {mp}: exponent {slope:.2f}")
        if not a.quick:
            kit_and_match(folder, sizes[-1])
            exhaustive_small(folder)


def kit_and_match(folder: Path, largest: str) -> None:
    sys.path.insert(0, str(ROOT / "benchmarks"))
    import numpy as np

    import bench_kit

    rng = np.random.default_rng(7)
    stock, parts = folder / "kit_drawer.csv", folder / "kit_list.csv"
    bench_kit.make_drawer(rng, stock)
    bench_kit.make_list(rng, parts)
    print("\nkit: a 60-line list against a 500-line drawer, 10 units")
    for mp in ("2", "3"):
        r = run(["kit", str(parts), "--stock", str(stock), "--units", "10", "--max-parts", mp, "--json"])
        secs = "timeout" if r["seconds"] is None else f"{r['seconds']:.2f} s"
        print(f"  max-parts {mp}: {secs}, peak {r['rss_mb'] or 0:.0f} MB, exit {r.get('code')}")
    path = folder / f"{largest}.csv"
    print(f"\nmatch on the {largest} drawer:")
    for args in (["4k7", "--max-parts", "3"], ["4k7", "--max-parts", "3", "--within", "50%"],
                 ["22u", "--max-parts", "3", "--within", "20%"]):
        r = run(["match", *args, "--stock", str(path), "--json"])
        secs = "timeout" if r["seconds"] is None else f"{r['seconds']:.2f} s"
        print(f"  match {' '.join(args)}: {secs}, peak {r['rss_mb'] or 0:.0f} MB, exit {r.get('code')}")


def exhaustive_small(folder: Path) -> None:
    """--exhaustive with pairs on a 15-line drawer (10 resistors, 4 capacitors, one transistor), against the
    search, for the follower (the naive enumeration of the common emitter's five roles with pairs runs
    to 10¹⁰ sets and is not the cross-check: the tests use three-line drawers for it)."""
    rng = random.Random(15)
    from drawerfit.eseries import decade_values
    from drawerfit.values import format_code

    rows = [["Kind", "Value", "Tolerance", "Power (W)", "Voltage (V)", "Dielectric", "Qty", "Bin", "Label",
             "hFE min", "hFE max", "VCEO (V)", "IC max (A)", "Pd (W)", "VBE (V)", "VCE(sat) (V)"]]
    values = rng.sample(decade_values("E24", 100.0, 100e3), 10)
    for v in sorted(values):
        rows.append(["resistor", format_code(v, "ohm"), "1%", "0.25", "", "", "10", "R", "", *[""] * 7])
    for v in (1e-6, 10e-6, 47e-6, 220e-6):
        rows.append(["capacitor", format_code(v, "F"), "20%", "", "35", "electrolytic", "10", "C", "", *[""] * 7])
    rows.append(["NPN", "", "", "", "", "", "10", "T", "Kit-N110", "110", "260", "40", "0.2", "0.5", "0.65", "0.2"])
    path = folder / "fifteen.csv"
    generate.write_csv(path, rows)
    spec = folder / "loose.toml"
    spec.write_text('topology = "emitter-follower"\npolarity = "npn"\nsupply = "12 V"\nsource_resistance = "600"\n'
                    'load = "10k"\n[targets]\nie_min = "0.5 mA"\nie_max = "2 mA"\nf_low = "20 Hz"\n', encoding="utf-8")
    print("\n15-line drawer, follower, pairs:")
    for extra in ([], ["--exhaustive"]):
        r = run(["design", str(spec), "--stock", str(path), "--json", "--quiet", *extra], timeout=300)
        d = r["out"] or {}
        secs = "timeout" if r["seconds"] is None else f"{r['seconds']:.2f} s"
        print(f"  {'exhaustive' if extra else 'search    '}: {secs}, peak {r['rss_mb'] or 0:.0f} MB, "
              f"{d.get('status', 'infeasible')}, parts {d.get('part_count')}, D {d.get('objective', {}).get('distance')}")


if __name__ == "__main__":
    main()

"""Time the report and the exports on the bundled test designs (run on demand, prints figures).

    python3 benchmarks/bench_report.py [--monte-carlo 2000 20000]
"""

from __future__ import annotations

import argparse
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT / "src"))

DESIGNS = [ROOT / "tests" / "data" / "report" / n for n in ("follower_design.toml", "ce_pnp_design.toml")]


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--monte-carlo", type=int, nargs="+", default=[0, 2000, 20000])
    ap.add_argument("--repeat", type=int, default=3)
    args = ap.parse_args()
    print(f"command: {' '.join(sys.argv)}")
    t0 = time.perf_counter()
    from drawerfit.report.bom import write_bom
    from drawerfit.io.saved_design import load_design
    from drawerfit.report.export import design_netlist
    from drawerfit.report.html import write_report

    print(f"import of the report package: {time.perf_counter() - t0:.3f} s")
    with tempfile.TemporaryDirectory() as tmp:
        out = Path(tmp)
        write_report(DESIGNS[0], out / "warm.html", monte_carlo=10)  # first use loads matplotlib, schemdraw
        for design in DESIGNS:
            for n in args.monte_carlo:
                best = min(_time(lambda: write_report(design, out / "r.html", monte_carlo=n)) for _ in range(args.repeat))
                size = (out / "r.html").stat().st_size
                print(f"{design.name}: report, {n:>6} Monte Carlo builds: {best:.3f} s, {size / 1024:.0f} KiB")
            d = load_design(design)
            print(f"{design.name}: netlist {min(_time(lambda: design_netlist(d)) for _ in range(args.repeat)):.4f} s, "
                  f"CSV {min(_time(lambda: write_bom(d, out / 'p.csv')) for _ in range(args.repeat)):.4f} s, "
                  f"XLSX {min(_time(lambda: write_bom(d, out / 'p.xlsx')) for _ in range(args.repeat)):.4f} s")


def _time(fn) -> float:
    t = time.perf_counter()
    fn()
    return time.perf_counter() - t


if __name__ == "__main__":
    main()

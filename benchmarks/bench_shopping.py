"""Seconds of `drawerfit design` on specs the drawer cannot build (run on demand).

    python3 benchmarks/bench_shopping.py

Each case is timed end to end in a fresh process (start-up included), then in-process split into
the ordinary search, the nearest single-part design and the shopping search, with what each
proved.  The specs and the small drawer are written to a temporary directory; the sample
teaching-lab drawer is read, never written.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
LAB = ROOT / "inventory_samples" / "teaching_lab.csv"

FOLLOWER = """topology = "emitter-follower"
polarity = "npn"
supply = "12 V"
source_resistance = "600"
load = "{load}"
[targets]
ie = "{ie}"
f_low = "20 Hz"
{extra}"""

HEADER = ("Kind,Value,Tolerance,Power (W),Voltage (V),Dielectric,Qty,Bin,Label,hFE min,hFE max,VCEO (V),"
          "IC max (A),Pd (W),VBE (V),VCE(sat) (V),Notes\n")
E12 = (1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2)  # IEC 60063


def _small_drawer(path: Path) -> None:
    """24 E12 resistors 1k..82k and one 100 nF line: only a bigger capacitor is missing."""
    rows = [f"resistor,{m * 10 ** e:g},1%,0.25,,,10,R{e}-{i},,,,,,,,," for e in (3, 4) for i, m in enumerate(E12)]
    rows.append("capacitor,100n,10%,,50,film,10,C1,,,,,,,,,")
    rows.append("NPN,,,,,,10,T1,QN-SIG-A,120,300,40,0.2,0.5,0.65,0.2,")
    path.write_text(HEADER + "\n".join(rows) + "\n", encoding="utf-8")


def cli(spec: Path, stock: Path, *extra: str):
    env = dict(os.environ, PYTHONPATH=str(ROOT / "src"))
    cmd = [sys.executable, "-m", "drawerfit", "design", str(spec), "--stock", str(stock), "--json", *extra]
    t0 = time.perf_counter()
    p = subprocess.run(cmd, capture_output=True, text=True, env=env)
    return time.perf_counter() - t0, p.returncode, (json.loads(p.stdout) if p.stdout.strip() else None)


def parts(spec: Path, stock_path: Path, max_parts: int) -> str:
    sys.path.insert(0, str(ROOT / "src"))
    from drawerfit.search import shopping
    from drawerfit.search.runner import run_search
    from drawerfit.search.problem import problem_from_spec
    from drawerfit.search.tables import with_default_ratings
    from drawerfit.io.spec import load_spec
    from drawerfit.stock import load_stock

    stock = load_stock(str(stock_path))
    problem = problem_from_spec(load_spec(str(spec), stock=stock), max_parts=max_parts)
    lines, _ = with_default_ratings(stock.lines)
    t0 = time.perf_counter()
    st: dict = {}
    found, _, _ = run_search(problem, lines, 1, False, stats_out=st)
    t1 = time.perf_counter()
    if found:
        return f"search {t1 - t0:5.2f} s ({st['sets']:,} sets): a design"
    near = shopping.nearest_design(problem, lines)
    t2 = time.perf_counter()
    buy = shopping.cheapest_purchases(problem, lines, drawer_proven=not st.get("truncated"))
    t3 = time.perf_counter()
    return (f"search {t1 - t0:5.2f} s ({st['sets']:,} sets{', stopped' if st.get('truncated') else ''}"
            f"); nearest {t2 - t1:5.2f} s ({near.searches} searches, "
            f"level {near.level if near.level is None else f'{near.level:.1%}'}); buy {t3 - t2:5.2f} s "
            f"({buy.searches} searches, {buy.sets:,} sets, {buy.bought} part(s), "
            f"{'proven' if buy.proven else 'not proven'})")


def main() -> None:
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        small = tmp / "small.csv"
        _small_drawer(small)
        cases = []
        for name, ie, load, extra in (("rin40k", "5 mA", "1k", 'swing = "2 V"\nrin_min = "40k"\n'),
                                      ("rin60k", "5 mA", "1k", 'swing = "2 V"\nrin_min = "60k"\n'),
                                      ("capacitor", "1 mA", "10k", "")):
            spec = tmp / f"{name}.toml"
            spec.write_text(FOLLOWER.format(ie=ie, load=load, extra=extra), encoding="utf-8")
            cases.append((name, spec, small if name == "capacitor" else LAB))
        for name, spec, stock in cases:
            for mp in (2, 1):
                dt, rc, data = cli(spec, stock, "--max-parts", str(mp))
                buy = data.get("buy") if data else None
                n = sum(b["per_unit"] for b in buy) if buy else 0
                print(f"{name:10} {stock.name:16} max-parts {mp}: exit {rc}, {dt:6.2f} s end to end; "
                      f"{n} to buy, proven {data.get('buy_proven') if data else None}, "
                      f"checked {data.get('buy_checked') if data else None}", flush=True)
                print(f"{'':10} {parts(spec, stock, mp)}", flush=True)


if __name__ == "__main__":
    main()

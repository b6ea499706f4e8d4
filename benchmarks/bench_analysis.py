"""Time the stage-analysis engine: Monte Carlo, and evaluate() over large candidate batches.

Run on demand:  PYTHONPATH=src python3 benchmarks/bench_analysis.py
Targets (issue 3): 10,000 Monte Carlo samples in under a second.
"""

from __future__ import annotations

import os
import platform
import sys
import time

import numpy as np

from drawerfit.analysis import core


def best_of(fn, repeats=3):
    best = float("inf")
    for _ in range(repeats):
        t = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t)
    return best


CE = dict(topology="common-emitter", polarity="npn", supply=12.0, r1=47e3, r2=10e3, re=220,
          re2=1e3, rc=4.7e3, rs=600, rl=10e3, c1=10e-6, c2=10e-6, ce=100e-6)
TOLS = dict(r1=0.05, r2=0.05, re=0.05, rc=0.05, re2=0.05, c1=0.2, c2=0.2, ce=0.2)


def main() -> None:
    print(f"run: python3 {' '.join(sys.argv)}  ({platform.python_version()}, numpy {np.__version__}, "
          f"{os.cpu_count()} CPUs)")
    core.evaluate(hfe=150, **CE)  # warm-up (imports)
    t = best_of(lambda: core.monte_carlo(10_000, seed=1, tolerances=TOLS, hfe_min=100,
                                         hfe_max=300, temp_min=0, temp_max=50, **CE))
    print(f"monte_carlo, 10,000 samples, CE stage with bypass:      {t:8.3f} s  (target < 1 s)")
    t = best_of(lambda: core.worst_case(tolerances=TOLS, hfe_min=100, hfe_max=300, temp_min=0,
                                        temp_max=50, hfe=150, **CE))
    print(f"worst_case, one CE stage (128 vertices):                {t:8.3f} s")
    rng = np.random.default_rng(0)
    for n in (100_000, 1_000_000):
        r1 = rng.uniform(10e3, 100e3, n)
        r2 = rng.uniform(2e3, 20e3, n)
        re = rng.uniform(50, 500, n)
        c1 = rng.uniform(1e-6, 22e-6, n)
        kw = dict(CE, r1=r1, r2=r2, re=re, c1=c1, hfe=150)
        dc_kw = {k: v for k, v in kw.items() if k not in ("c1", "c2", "ce")}
        t_dc = best_of(lambda: core.evaluate_dc(bypassed=True, **dc_kw), 2)
        dc = core.evaluate_dc(bypassed=True, **dc_kw)
        t_lc = best_of(lambda: core.low_corner(dc, c1=c1, c2=10e-6, ce=100e-6), 2)
        t_mc = best_of(lambda: core.meets_corner(dc, c1=c1, c2=10e-6, ce=100e-6, f_target=20.0), 2)
        t_ev = best_of(lambda: core.evaluate(**kw), 2)
        active = float(np.mean(dc.state == core.ACTIVE))
        if n == 100_000:
            wkw = dict(CE, r1=r1, r2=r2, re=re, c1=c1)
            t_w = best_of(lambda: core.worst_case(tolerances=TOLS, hfe_min=100, hfe_max=300,
                                                  temp_min=0, temp_max=50, corner=False,
                                                  f_target=20.0, **wkw), 1)
            print(f"worst_case over {n:,} candidates, 128 vertices, corner by f_target: {t_w:6.2f} s")
            t_w = best_of(lambda: core.worst_case_by_signs(
                tolerances=TOLS, hfe_min=100, hfe_max=300, temp_min=0, temp_max=50,
                f_target=20.0, names=("ie", "swing_peak", "gain", "rin"), **wkw), 2)
            print(f"worst_case_by_signs, the same candidates (ie, swing, gain, rin, corner target): {t_w:6.2f} s")
        print(f"n = {n:>9,}: evaluate_dc {t_dc:6.3f} s   low_corner {t_lc:6.3f} s   "
              f"meets_corner {t_mc:6.3f} s   evaluate {t_ev:6.3f} s   ({active:.0%} active)")


if __name__ == "__main__":
    main()

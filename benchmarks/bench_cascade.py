"""Time the two-stage amplifier's figures: candidate batches, the worst case and Monte Carlo; and
`analyze` and the report page of the sample spec end to end.

Run on demand:  PYTHONPATH=src python3 benchmarks/bench_cascade.py
Prints seconds (best of three) and the peak memory numpy allocated (tracemalloc) for each job.
"""

from __future__ import annotations

import os
import platform
import sys
import time
import tracemalloc

import numpy as np

from drawerfit.analysis.cascade import cascade_monte_carlo, cascade_worst_case, evaluate_cascade

AMP = dict(coupling="capacitor", polarity="npn", supply=12.0, r1=47e3, r2=10e3, rc=4.7e3, re=220, re2=1e3,
           r3=22e3, r4=33e3, re3=1e3, rs=600, rl=300, c1=10e-6, c2=4.7e-6, c3=220e-6, ce=100e-6)
TOLS = dict(r1=0.05, r2=0.05, rc=0.05, re=0.05, re2=0.05, r3=0.05, r4=0.05, re3=0.05, c1=0.2, c2=0.1, c3=0.2,
            ce=0.2)
HFE = dict(hfe1_min=100, hfe1_max=300, hfe2_min=60, hfe2_max=180)


def measure(fn, repeats=3):
    best = float("inf")
    for _ in range(repeats):
        t = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t)
    tracemalloc.start()
    fn()
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    return best, peak / 1e6


def main() -> None:
    print(f"run: python3 {' '.join(sys.argv)}  ({platform.python_version()}, numpy {np.__version__}, "
          f"{os.cpu_count()} CPUs)")
    rng = np.random.default_rng(1)
    for n in (10_000, 100_000):
        batch = dict(AMP, rc=rng.uniform(2e3, 6e3, n), re3=rng.uniform(300, 3e3, n), c3=rng.uniform(47e-6, 1e-3, n))
        for coupling in ("capacitor", "direct"):
            kw = dict(batch, coupling=coupling, hfe1=150, hfe2=100)
            if coupling == "direct":
                kw.update(r3=np.inf, r4=np.inf, c2=0.0)
            t, mb = measure(lambda: evaluate_cascade(**kw))
            print(f"evaluate_cascade, {n:>7,} candidates, {coupling:9}: {t:7.3f} s  {mb:7.1f} MB peak")
    nominal = dict(AMP)
    t, mb = measure(lambda: cascade_worst_case(tolerances=TOLS, temp_min=0, temp_max=50, **HFE, **nominal))
    print(f"cascade_worst_case, one amplifier, 2**11 vertices with corners: {t:7.3f} s  {mb:7.1f} MB peak")
    t, mb = measure(lambda: cascade_monte_carlo(10_000, seed=1, tolerances=TOLS, temp_min=0, temp_max=50, **HFE,
                                                **nominal))
    print(f"cascade_monte_carlo, 10,000 builds:                         {t:7.3f} s  {mb:7.1f} MB peak")
    # end to end as `analyze` and `report` run it, on the sample spec
    import drawerfit
    from drawerfit.io.saved_design import load_design
    from drawerfit.io.saved_two_stage import write_two_stage_design
    from drawerfit.report.report_two_stage import render_two_stage_report

    sample = os.path.join(os.path.dirname(__file__), "..", "inventory_samples", "specs", "two_stage_buffered.toml")
    t, mb = measure(lambda: drawerfit.analyse(sample, monte_carlo=2000))
    print(f"analyse, the sample spec, worst case and 2,000 builds:       {t:7.3f} s  {mb:7.1f} MB peak")
    import tempfile

    with tempfile.TemporaryDirectory() as folder:
        spec = drawerfit.load_spec(sample)
        saved = write_two_stage_design(os.path.join(folder, "amp.toml"), spec.circuit(), {}, units=1)
        design = load_design(saved)
        t, mb = measure(lambda: render_two_stage_report(design, monte_carlo=2000))
        print(f"report page of the sample, 2,000 builds:                    {t:7.3f} s  {mb:7.1f} MB peak")


if __name__ == "__main__":
    main()

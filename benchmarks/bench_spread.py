"""Speed and memory of devmodels.spread for many samples at one frequency.

Prints samples per second and the peak traced memory of ``run_spread`` (a divider-biased
CE stage with every parasitic, beta, temperature and 5 % resistors sampled), beside two
references measured in the same run:

* the same work through the scalar pipeline (network.operating_point -> HybridPi ->
  Stage.two_port -> analysis.terminate) for a few hundred samples, extrapolated;
* one plain copy of the sample inputs and of the stored results (the memory any method
  keeping every sample needs).

Targets: at least 1e6 samples/s and at most 500 MB.

    python3 benchmarks/bench_spread.py [--samples 1000000] [--repeat 3] [--scalar 300]
"""

from __future__ import annotations

import argparse
import os
import platform
import resource
import statistics
import sys
import time
import tracemalloc

from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))
from _report import ratio_line  # noqa: E402


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--samples", type=int, default=1_000_000)
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--scalar", type=int, default=300, help="samples through the scalar pipeline")
    args = ap.parse_args()

    import devmodels as dm
    from devmodels.analysis import terminate
    from devmodels.dcbias import BiasNetwork, operating_point
    from devmodels.spread import CHUNK, RESULTS, WORKERS, SpreadRanges, SpreadSetup, run_spread

    datasheet = dict(va=75.0, ft=250e6, cmu=2.5e-12, rb=120.0, rcx=3.0, rex=1.0)
    net = BiasNetwork("divider", 12.0, rc=4.7e3, re=1e3, r1=68e3, r2=12e3)
    setup = SpreadSetup(config="ce", freq=1e6, rs=50.0, rl=1e3, network=net, rdeg=47.0, **datasheet)
    ranges = SpreadRanges(110, 450, temp_min=253.15, temp_max=343.15, tol=0.05, samples=args.samples, seed=1)
    n = args.samples

    print(f"machine: {platform.machine()}, {os.cpu_count()} cpus, python {platform.python_version()}, "
          f"numpy {np.__version__}; {n:,} samples, chunk {CHUNK}, median of {args.repeat}")

    run_spread(setup, SpreadRanges(110, 450, samples=1000, seed=0))  # warm-up (imports)
    rows = []
    for workers in sorted({1, WORKERS}):
        times = []
        for _ in range(args.repeat):
            t = time.perf_counter()
            run_spread(setup, ranges, workers=workers)
            times.append(time.perf_counter() - t)
        rows.append((workers, statistics.median(times)))

    tracemalloc.start()
    res = run_spread(setup, ranges)
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()

    # Reference 1: the scalar pipeline, one sample at a time, extrapolated.
    rng = np.random.default_rng(2)
    m = args.scalar
    beta = rng.uniform(110, 450, m)
    temp = rng.uniform(253.15, 343.15, m)
    fac = rng.uniform(0.95, 1.05, (m, 5))
    t = time.perf_counter()
    for i in range(m):
        nw = BiasNetwork("divider", 12.0, rc=4.7e3 * fac[i, 2], re=1e3 * fac[i, 3], r1=68e3 * fac[i, 0],
                         r2=12e3 * fac[i, 1])
        op = operating_point(nw, beta[i], temp=temp[i])
        model = dm.HybridPi.from_bias(op.bipolar_bias(**datasheet))
        terminate(dm.Stage(model, "ce", 47.0 * fac[i, 4]).two_port([1e6]), 50.0, 1e3)
    t_scalar = (time.perf_counter() - t) / m

    # Reference 2: one copy of the inputs (beta, temp, 5 resistor factors) and of the results.
    t = time.perf_counter()
    inputs = [np.random.default_rng(3).random(n) for _ in range(7)]
    stored = [v.copy() for v in res.values.values()]
    t_alloc = time.perf_counter() - t
    copy_bytes = sum(a.nbytes for a in inputs) + sum(a.nbytes for a in stored)
    del inputs, stored

    print(f"{'workers':>8} {'time':>9} {'samples/s':>12} {'vs scalar':>10}")
    for workers, tm in rows:
        print(f"{workers:>8} {tm:8.3f}s {n / tm:12.3g} {t_scalar * n / tm:9.0f}x")
    best = min(tm for _, tm in rows)
    print(f"scalar pipeline: {1 / t_scalar:,.0f} samples/s ({m} samples; {t_scalar * n:,.0f} s for {n:,}, "
          "extrapolated)")
    print(f"peak traced memory: {peak / 1e6:.1f} MB; one copy of inputs + {len(RESULTS)} stored results: "
          f"{copy_bytes / 1e6:.1f} MB (made and filled in {t_alloc:.3f} s); ratio {peak / copy_bytes:.2f}")
    rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1e3  # kB on Linux
    print(f"peak resident size of the whole benchmark process (ru_maxrss): {rss:.0f} MB")
    print(f"result: {n / best:,.0f} samples/s (target >= 1,000,000), peak {peak / 1e6:.0f} MB (target <= 500 MB); "
          f"regions {res.regions}")
    ratio_line(f"spread, {n} samples: samples/s (vs scalar pipeline)", f"{n / best:.3g}/s",
               f"{1 / t_scalar:.3g}/s", t_scalar * n / best, ">= 1e6 samples/s", n / best >= 1e6)
    ratio_line("spread: peak traced memory / one copy of inputs and results", f"{peak / 1e6:.0f} MB",
               f"{copy_bytes / 1e6:.0f} MB", peak / copy_bytes, "<= 500 MB", peak <= 500e6)


if __name__ == "__main__":
    main()

"""Speed and memory of devmodels.spread at two sample counts, side by side.

A divider-biased CE stage with every parasitic, beta, temperature and 5 % resistors sampled,
with one specification (so the yield is counted on every sample) and the worst case over
the box of limits.  Each run is a fresh process, so its peak resident size (the whole
process: interpreter, numpy and the library included; VmHWM, its resident high-water
mark) is the run's own; the time is the median over ``--repeat`` runs (``--repeat-large``
for the larger count).  A streaming run evaluates its chunks in worker processes
(``spread.WORKERS``, one per CPU): the peak memory reported is the SUM of the peaks of the
run's process and of each worker (each worker's VmHWM is read from /proc every 0.1 s while it
runs; a forked worker's VmHWM also counts the pages it shares with its parent, so the sum
overstates the physical memory), and the CPU time is that of the run's process plus its
workers (user plus system).  On a shared machine the wall time moves with the other jobs (the
load average at the start of each run is shown), the CPU time much less.

Rows:

* ``streaming``: the values are not kept (statistics from the streaming summary): the
  memory must not grow with the sample count;
* ``kept``: every per-sample value kept (the default up to ``KEEP_VALUES_MAX`` samples), at
  the smaller count only;
* the scalar pipeline (network.operating_point -> HybridPi -> Stage.two_port ->
  analysis.terminate) for a few hundred samples, extrapolated, as the reference speed.

Targets: 1e8 samples in about a minute (1.7e6 samples/s) and at most 300 MB peak.

    python3 benchmarks/bench_spread.py            # 1e6 and 1e8 samples
    python3 benchmarks/bench_spread.py --quick    # 1e5 and 1e6 samples
    python3 benchmarks/bench_spread.py --samples 100000 --repeat 1 --scalar 50   # 1e4 and 1e5
"""

from __future__ import annotations

import argparse
import json
import os
import platform
import resource
import statistics
import subprocess
import sys
import threading
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))
from _report import ratio_line  # noqa: E402

DATASHEET = dict(va=75.0, ft=250e6, cmu=2.5e-12, rb=120.0, rcx=3.0, rex=1.0)
SPEC = "av>=12"


def _setup():
    from devmodels.dcbias import BiasNetwork
    from devmodels.spread import SpreadSetup

    net = BiasNetwork("divider", 12.0, rc=4.7e3, re=1e3, r1=68e3, r2=12e3)
    return SpreadSetup(config="ce", freq=1e6, rs=50.0, rl=1e3, network=net, rdeg=47.0, **DATASHEET)


def _peak_rss() -> float:
    """Peak resident size of this process in bytes: VmHWM of /proc/self/status on Linux (the
    high-water mark of this program's own memory; ``ru_maxrss`` would also count the parent's
    size at the fork), else ``ru_maxrss``."""
    try:
        with open("/proc/self/status") as fh:
            for line in fh:
                if line.startswith("VmHWM:"):
                    return float(line.split()[1]) * 1024
    except OSError:
        pass
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024.0  # kB on Linux


def _cpu_seconds() -> float:
    """CPU time of this process (every thread) and of its finished child processes (the spread's
    workers), user plus system (s)."""
    use = resource.getrusage(resource.RUSAGE_SELF)
    kids = resource.getrusage(resource.RUSAGE_CHILDREN)
    return use.ru_utime + use.ru_stime + kids.ru_utime + kids.ru_stime


class ChildPeaks:
    """Peak resident size of each child process of this one (the spread's workers): VmHWM from
    /proc/<pid>/status, read every ``interval`` s by a thread while they run (VmHWM only grows;
    the last reading of each child is kept, so growth in its last interval can be missed; the
    largest child's exact peak, ``ru_maxrss`` of RUSAGE_CHILDREN, is reported beside it)."""

    def __init__(self, interval: float = 0.1):
        self.interval = interval
        self.peaks: dict[int, float] = {}
        self._stop = threading.Event()
        self._thread = threading.Thread(target=self._poll, daemon=True)

    def _children(self) -> list[int]:
        pids = []
        for task in os.listdir(f"/proc/{os.getpid()}/task"):
            try:
                with open(f"/proc/{os.getpid()}/task/{task}/children") as fh:
                    pids += [int(p) for p in fh.read().split()]
            except OSError:
                pass
        return pids

    def _poll(self) -> None:
        while not self._stop.wait(self.interval):
            for pid in self._children():
                try:
                    with open(f"/proc/{pid}/status") as fh:
                        for line in fh:
                            if line.startswith("VmHWM:"):
                                self.peaks[pid] = max(self.peaks.get(pid, 0.0), float(line.split()[1]) * 1024)
                except OSError:  # exited meanwhile
                    pass

    def __enter__(self) -> "ChildPeaks":
        self._thread.start()
        return self

    def __exit__(self, *exc) -> None:
        self._stop.set()
        self._thread.join()


def child(n: int, keep: bool) -> None:
    """One run in this process; prints a JSON line with the time and the peak resident size."""
    from devmodels.spread import SpreadRanges, run_spread

    setup = _setup()
    run_spread(setup, SpreadRanges(110, 450, samples=1000, seed=0))  # warm-up (imports)
    ranges = SpreadRanges(110, 450, temp_min=253.15, temp_max=343.15, tol=0.05, samples=n, seed=1)
    load = os.getloadavg()[0]
    t, cpu = time.perf_counter(), _cpu_seconds()
    with ChildPeaks() as kids:
        res = run_spread(setup, ranges, specs=[SPEC], keep_values=keep)
    dt, cpu = time.perf_counter() - t, _cpu_seconds() - cpu
    own = _peak_rss()
    largest = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss * 1024.0  # kB on Linux
    print(json.dumps({"time": dt, "cpu": cpu, "load": load, "rss": own + sum(kids.peaks.values()),
                      "rss_own": own, "rss_workers": sorted(kids.peaks.values()), "rss_largest_worker": largest,
                      "yield": res.yield_["fraction"], "p50_bound": res.stats_accuracy["bounds"]["av"]["p50"],
                      "p50": res.stats["av"]["p50"], "method": res.stats_accuracy["method"]}))


def _run(n: int, keep: bool) -> dict:
    out = subprocess.run([sys.executable, __file__, "--child", str(n)] + (["--keep"] if keep else []),
                         capture_output=True, text=True, check=True)
    return json.loads(out.stdout.strip().splitlines()[-1])


def _scalar_rate(m: int) -> float:
    import devmodels as dm
    from devmodels.analysis import terminate
    from devmodels.dcbias import BiasNetwork, operating_point

    rng = np.random.default_rng(2)
    beta = rng.uniform(110, 450, m)
    temp = rng.uniform(253.15, 343.15, m)
    fac = rng.uniform(0.95, 1.05, (m, 5))
    t = time.perf_counter()
    for i in range(m):
        nw = BiasNetwork("divider", 12.0, rc=4.7e3 * fac[i, 2], re=1e3 * fac[i, 3], r1=68e3 * fac[i, 0],
                         r2=12e3 * fac[i, 1])
        op = operating_point(nw, beta[i], temp=temp[i])
        model = dm.HybridPi.from_bias(op.bipolar_bias(**DATASHEET))
        terminate(dm.Stage(model, "ce", 47.0 * fac[i, 4]).two_port([1e6]), 50.0, 1e3)
    return m / (time.perf_counter() - t)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="1e5 and 1e6 samples instead of 1e6 and 1e8")
    ap.add_argument("--samples", type=int, default=None, help="the larger sample count (default 1e8, --quick "
                    "1e6); the smaller one is 1e6 from 1e7 up, else a tenth")
    ap.add_argument("--repeat", type=int, default=3, help="runs at the smaller count (median)")
    ap.add_argument("--repeat-large", type=int, default=None, help="runs at the larger count (default: 1 for "
                    "1e8, else --repeat)")
    ap.add_argument("--scalar", type=int, default=300, help="samples through the scalar pipeline")
    ap.add_argument("--child", type=int, default=None, help=argparse.SUPPRESS)
    ap.add_argument("--keep", action="store_true", help=argparse.SUPPRESS)
    args = ap.parse_args()
    if args.child is not None:
        child(args.child, args.keep)
        return

    from devmodels.spread import CHUNK, KEEP_VALUES_MAX, RESULTS, WORKERS

    large = args.samples or (1_000_000 if args.quick else 100_000_000)
    small = 1_000_000 if large >= 10**7 else max(1, large // 10)
    rep_large = args.repeat_large or (1 if large >= 10**8 else args.repeat)
    load = os.getloadavg()
    print(f"machine: {platform.machine()}, {os.cpu_count()} cpus, load average {load[0]:.1f} (1 min), "
          f"python {platform.python_version()}, numpy {np.__version__}; chunk {CHUNK}, {WORKERS} worker processes "
          "(streaming), "
          f"spec {SPEC!r}, worst case on; each run a fresh process")
    rows = []
    for n, keep, rep in ((small, True, args.repeat), (small, False, args.repeat), (large, False, rep_large)):
        if keep and n > KEEP_VALUES_MAX:
            continue
        runs = [_run(n, keep) for _ in range(rep)]
        rows.append((n, "kept" if keep else "streaming", rep, statistics.median(r["time"] for r in runs),
                     max(r["rss"] for r in runs), runs[-1], statistics.median(r["cpu"] for r in runs),
                     max(r["load"] for r in runs)))
    scalar = _scalar_rate(args.scalar)

    print(f"{'samples':>12} {'values':>10} {'runs':>4} {'time':>9} {'samples/s':>11} {'CPU us/sample':>13} "
          f"{'load':>5} {'peak RSS':>9} {'stored values':>13} {'p50(av) bound':>13}  peak RSS: run + each worker "
          "(largest worker, exact)")
    for n, mode, rep, tm, rss, last, cpu, load in rows:
        stored = n * 8 * len(RESULTS) if mode == "kept" else 0
        parts = " + ".join(f"{x / 1e6:.0f}" for x in [last["rss_own"]] + last["rss_workers"])
        print(f"{n:>12,} {mode:>10} {rep:>4} {tm:8.2f}s {n / tm:11.3g} {cpu / n * 1e6:13.2f} {load:5.1f} "
              f"{rss / 1e6:7.0f}MB {stored / 1e6:11.0f}MB {last['p50_bound']:13.2g}  {parts} MB "
              f"({last['rss_largest_worker'] / 1e6:.0f} MB)")
    print(f"scalar pipeline: {scalar:,.0f} samples/s ({args.scalar} samples)")
    print(f"load average after the runs: {os.getloadavg()[0]:.1f} (the machine is shared: rates vary with it)")
    n, _, _, tm, rss, _, _, _ = rows[-1]
    ratio_line(f"spread, {n:.0e} samples streaming: samples/s (vs scalar pipeline)", f"{n / tm:.3g}/s",
               f"{scalar:.3g}/s", n / tm / scalar, "1e8 samples in ~60 s (1.7e6/s)", n / tm >= 1.6e6)
    small_stream = next(r for r in rows if r[0] == small and r[1] == "streaming")
    ratio_line(f"spread: peak RSS at {n:.0e} / at {small:.0e} samples (streaming)", f"{rss / 1e6:.0f} MB",
               f"{small_stream[4] / 1e6:.0f} MB", rss / small_stream[4], "<= 300 MB, flat in n", rss <= 300e6)


if __name__ == "__main__":
    main()

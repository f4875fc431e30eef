"""Every benchmark of devmodels in one run, and one table of ratios.

Each benchmark script measures devmodels and its reference in the same process, on the
same data (medians of several repetitions); this script runs them one after another and
gathers their ``RESULT|...`` lines into one table, with the machine it ran on.

    python3 benchmarks/run_all.py [--quick]

``--quick`` uses smaller sizes (a smoke test; its ratios are not the targets' sizes).  The
full run takes spread to 1e7 samples; ``python3 benchmarks/bench_spread.py`` alone runs the
1e8-sample case (several minutes).
"""

from __future__ import annotations

import argparse
import os
import platform
import subprocess
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent

FULL = [
    ("bench_convert.py", []),
    ("bench_pipeline.py", []),
    ("bench_spread.py", ["--samples", "10000000", "--repeat", "3", "--repeat-large", "1"]),
    ("bench_startup.py", []),
    ("bench_export.py", []),
    ("bench_export_memory.py", ["--points", "1000000"]),
    ("bench_sweep_memory.py", ["--points", "1000000"]),
    ("bench_noise.py", []),
    ("bench_extract.py", []),
]
QUICK = [
    ("bench_convert.py", ["--quick"]),
    ("bench_pipeline.py", ["--points", "100000", "--ref-points", "2000", "--repeat", "3"]),
    ("bench_spread.py", ["--quick", "--repeat", "1", "--scalar", "50"]),
    ("bench_startup.py", ["--repeat", "5"]),
    ("bench_export.py", ["--points", "100000", "--repeat", "2"]),
    ("bench_export_memory.py", ["--quick"]),
    ("bench_sweep_memory.py", ["--quick"]),
    ("bench_noise.py", ["--quick"]),
    ("bench_extract.py", ["--repeat", "2"]),
]


def machine() -> str:
    cpu = platform.processor() or platform.machine()
    try:
        for line in Path("/proc/cpuinfo").read_text().splitlines():
            if line.startswith("model name"):
                cpu = line.split(":", 1)[1].strip()
                break
    except OSError:
        pass
    import numpy

    return (f"{cpu}, {os.cpu_count()} cpus, {platform.system()} {platform.release()}, "
            f"python {platform.python_version()}, numpy {numpy.__version__}")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="small sizes: a smoke test, not the targets")
    args = ap.parse_args()
    rows = []
    t0 = time.perf_counter()
    for script, extra in (QUICK if args.quick else FULL):
        print(f"--- {script} {' '.join(extra)}", flush=True)
        p = subprocess.run([sys.executable, str(HERE / script), *extra], capture_output=True, text=True)
        for line in p.stdout.splitlines():
            if line.startswith("RESULT|"):
                rows.append(line.split("|")[1:])
            else:
                print("   ", line)
        if p.returncode:
            print(p.stderr)
            rows.append([script, "", "", "failed", "", "NO"])
    print()
    print(f"machine: {machine()}; total {time.perf_counter() - t0:.0f} s"
          + ("  (QUICK: smaller sizes than the targets)" if args.quick else ""))
    w = max(len(r[0]) for r in rows)
    print(f"{'measure':<{w}}  {'ratio':>8}  {'target':<18} {'met':<4} devmodels / reference")
    for name, ours, ref, ratio, target, met in rows:
        print(f"{name:<{w}}  {ratio:>8}  {target:<18} {met:<4} {ours} / {ref}")


if __name__ == "__main__":
    main()

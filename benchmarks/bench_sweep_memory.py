"""Peak memory and time of ``devmodels sweep ... --out FILE`` for long sweeps (streamed export).

Each run is one child process, ``python -m devmodels sweep <bias> --points N --out FILE`` with
FILE ``.s2p`` (Touchstone 1.1) and ``.csv``, in a temporary folder.  The peak resident memory
of the child is read after it ends with ``resource.getrusage(RUSAGE_CHILDREN).ru_maxrss``: the
high-water mark over every child waited for so far, so the runs go from the smallest to the
largest and a run's figure is its own whenever it exceeds the earlier ones (the script says
when it cannot tell).  The peak includes the Python interpreter, numpy and the command line
(about 60-100 MB), the frequencies (8 bytes per point) and the figures' own grid.

Target: under 500 MB at 1e7 points (the whole two-port alone would be 720 MB there).  A
benchmark, not a test: nothing is timed against a limit; the machine may be loaded.

``devmodels.schema.MAX_POINTS`` (a quarter of the memory at 2 kB per point) may refuse 1e7
points on a small machine; ``--lift-limit`` runs the same command with that limit raised in
the child (``devmodels.schema.MAX_POINTS`` set before the command line is imported), to
measure the streamed export where the limit would stop it.

    python3 benchmarks/bench_sweep_memory.py [--points 1e6 1e7] [--quick] [--lift-limit]
"""

from __future__ import annotations

import argparse
import os
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
from _report import ratio_line  # noqa: E402

TARGET_MB = 500.0
BIAS = ["--ic", "1mA", "--vce", "5V", "--beta", "100", "--va", "80V", "--ft", "300MHz", "--cmu", "2pF",
        "--rb", "50"]


def _children_maxrss_mb() -> float:
    r = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss
    return r / 2**20 if sys.platform == "darwin" else r / 1024  # bytes on macOS, KiB on Linux


#: The child with the points limit raised (the command line reads MAX_POINTS when imported).
_LIFTED = ("import sys, devmodels.schema as s; s.MAX_POINTS = 10**9; from devmodels.cli import main; "
           "sys.argv[0] = 'devmodels'; main()")


def run_once(points: int, ext: str, folder: str, lift: bool = False) -> dict:
    """Run one sweep export in a child process; return its measures (MB, s)."""
    path = os.path.join(folder, f"sweep{ext}")
    before = _children_maxrss_mb()
    env = dict(os.environ, PYTHONPATH=str(HERE.parent) + os.pathsep + os.environ.get("PYTHONPATH", ""))
    t = time.perf_counter()
    cmd = [sys.executable, "-c", _LIFTED] if lift else [sys.executable, "-m", "devmodels"]
    p = subprocess.run([*cmd, "sweep", *BIAS, "--points", str(points),
                        "--out", path], capture_output=True, text=True, env=env)
    seconds = time.perf_counter() - t
    if p.returncode:
        raise SystemExit(f"sweep of {points} points to {ext} failed:\n{p.stderr}")
    peak = _children_maxrss_mb()
    size = os.path.getsize(path) / 1e6
    os.unlink(path)
    return {"seconds": seconds, "peak_mb": peak, "own": peak > before, "file_mb": size,
            "table_lines": p.stdout.count("\n")}


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--points", type=float, nargs="+", default=[1e6, 1e7])
    ap.add_argument("--quick", action="store_true", help="1e5 points: a smoke test")
    ap.add_argument("--lift-limit", action="store_true", help="raise devmodels.schema.MAX_POINTS in the child")
    args = ap.parse_args()
    sizes = [100_000] if args.quick else sorted(int(n) for n in args.points)
    with tempfile.TemporaryDirectory(prefix="devmodels-bench-") as folder:
        for n in sizes:
            for ext, name in ((".s2p", "Touchstone"), (".csv", "CSV")):
                m = run_once(n, ext, folder, args.lift_limit)
                whole = n * 72 / 1e6
                how = "" if m["own"] else " (not above an earlier run: this run's peak is at most this)"
                print(f"{name}: devmodels sweep --points {n:.0e} --out FILE{ext}: {m['file_mb']:.0f} MB written "
                      f"in {m['seconds']:.1f} s, peak resident {m['peak_mb']:.0f} MB{how} "
                      f"(the whole two-port would be {whole:.0f} MB); {m['table_lines']} lines on stdout",
                      flush=True)
                ratio_line(f"sweep --out {ext} of {n:.0e} points: peak memory / {TARGET_MB:.0f} MB",
                           f"{m['peak_mb']:.0f} MB", f"{TARGET_MB:.0f} MB", m["peak_mb"] / TARGET_MB, "< 1",
                           m["peak_mb"] < TARGET_MB)


if __name__ == "__main__":
    main()

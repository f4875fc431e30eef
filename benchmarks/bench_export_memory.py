"""Peak memory of exporting a long sweep to Touchstone and CSV, block by block.

Each export runs in a child process that first builds the two-port (invented S parameters,
``--points`` log-spaced frequencies: 16 bytes per element, 72 bytes per point with the
frequency), then writes it with ``devmodels.export.write_touchstone`` / ``write_csv`` into a
temporary folder.  The child reports

* the resident memory before the export (the Python process and the two-port itself),
* the peak resident memory during the export (Linux: the high-water mark ``VmHWM`` after it
  was reset through ``/proc/self/clear_refs``; elsewhere the lifetime peak
  ``getrusage(...).ru_maxrss``, which includes building the data),
* the export's own peak: the difference, i.e. what writing costs on top of the data.

Target: the export's own memory below 500 MB for 1e7 points (the data themselves take 720 MB
at 1e7 points and are not the export's).  A benchmark, not a test: nothing here is timed
against a limit.  ``bench_sweep_memory.py`` measures the whole command instead
(``devmodels sweep --out``), where the parameters are computed block by block as they are
written and the two-port is never held.

    python3 benchmarks/bench_export_memory.py [--points 10000000] [--quick]
"""

from __future__ import annotations

import argparse
import json
import os
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
from _report import ratio_line  # noqa: E402

TARGET_MB = 500.0


def _status_kb(field: str) -> float | None:
    try:
        with open("/proc/self/status", encoding="ascii") as fh:
            for line in fh:
                if line.startswith(field + ":"):
                    return float(line.split()[1])
    except OSError:
        pass
    return None


def _reset_peak() -> bool:
    try:
        with open("/proc/self/clear_refs", "w", encoding="ascii") as fh:
            fh.write("5")  # resets VmHWM to the current resident size (Linux >= 4.0)
        return True
    except OSError:
        return False


def _maxrss_mb() -> float:
    r = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    return r / 2**20 if sys.platform == "darwin" else r / 1024  # bytes on macOS, KiB on Linux


def child(fmt: str, points: int, folder: str) -> None:
    """Build the data, export once, print one JSON line of measurements."""
    import numpy as np

    import devmodels as dm
    from devmodels import export

    f = np.geomspace(1e3, 1e10, points)
    data = np.empty((points, 2, 2), dtype=complex)
    step = 1 << 18
    for i in range(0, points, step):  # invented smooth S parameters, built block by block
        x = np.log10(f[i:i + step]) / 10
        data[i:i + x.size, 0, 0] = 0.6 * np.exp(-2j * x)
        data[i:i + x.size, 0, 1] = 0.02 * np.exp(1j * x)
        data[i:i + x.size, 1, 0] = 3.0 * np.exp(-1j * (3 + x))
        data[i:i + x.size, 1, 1] = 0.5 * np.exp(-0.5j * x)
    tp = dm.TwoPort(f, data, "s", 50.0)
    del data, f
    path = os.path.join(folder, "sweep.s2p" if fmt == "touchstone" else "sweep.csv")
    before = _status_kb("VmRSS")
    exact = _reset_peak()
    t = time.perf_counter()
    if fmt == "touchstone":
        export.write_touchstone(tp, path)
    else:
        export.write_csv(tp, path)
    seconds = time.perf_counter() - t
    peak = _status_kb("VmHWM") if exact else None
    out = {
        "format": fmt, "points": points, "seconds": seconds, "file_mb": os.path.getsize(path) / 1e6,
        "data_mb": (tp.data.nbytes + tp.freq.nbytes) / 1e6,
        "before_mb": before / 1024 if before is not None else None,
        "peak_mb": peak / 1024 if peak is not None else _maxrss_mb(),
        "peak_is_export_only": exact,
    }
    os.unlink(path)
    print(json.dumps(out))


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--points", type=int, default=10_000_000)
    ap.add_argument("--quick", action="store_true", help="1e5 points: a smoke test")
    ap.add_argument("--child", choices=("touchstone", "csv"), help=argparse.SUPPRESS)
    ap.add_argument("--folder", help=argparse.SUPPRESS)
    args = ap.parse_args()
    points = 100_000 if args.quick else args.points
    if args.child:
        child(args.child, points, args.folder)
        return
    with tempfile.TemporaryDirectory(prefix="devmodels-bench-") as folder:
        for fmt, name in (("touchstone", "Touchstone"), ("csv", "CSV")):
            r = subprocess.run([sys.executable, __file__, "--child", fmt, "--points", str(points),
                                "--folder", folder], capture_output=True, text=True, check=True)
            m = json.loads(r.stdout.strip().splitlines()[-1])
            before = m["before_mb"] or 0.0
            own = m["peak_mb"] - before
            how = "peak during the export" if m["peak_is_export_only"] else "lifetime peak (includes building the data)"
            print(f"{name}: {points} points, {m['file_mb']:.0f} MB written in {m['seconds']:.1f} s; "
                  f"two-port {m['data_mb']:.0f} MB; resident before {before:.0f} MB, {how} {m['peak_mb']:.0f} MB; "
                  f"the export's own memory {own:.0f} MB")
            ratio_line(f"{name} export of {points:.0e} points: own peak memory / {TARGET_MB:.0f} MB",
                       f"{own:.0f} MB", f"{TARGET_MB:.0f} MB", own / TARGET_MB, "< 1", own < TARGET_MB)


if __name__ == "__main__":
    main()

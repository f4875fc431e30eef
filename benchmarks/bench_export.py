"""Writing a long sweep to Touchstone and CSV, against numpy.savetxt of the same array.

The reference is ``numpy.savetxt`` of the (F, 9) real table (frequency plus real and
imaginary parts of the four S parameters) with the same number format, measured in the
same run on the same data. Target: at most 1.5 times.

    python3 benchmarks/bench_export.py [--points 1000000] [--repeat 3]
"""

from __future__ import annotations

import argparse
import os
import sys
import tempfile
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))
from _report import median_time, ratio_line  # noqa: E402


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--points", type=int, default=1_000_000)
    ap.add_argument("--repeat", type=int, default=3)
    args = ap.parse_args()

    import devmodels as dm
    from devmodels import export

    m = dm.HybridPi.from_bias(dm.BipolarBias(ic=1e-3, vce=5.0, beta=100, va=80.0, ft=300e6, cmu=2e-12, rb=50.0))
    f = np.logspace(3, 10, args.points)
    tp = dm.Stage(m, "ce").two_port(f, "s")
    table = np.empty((f.size, 9))
    table[:, 0] = f
    for k, (i, j) in enumerate(((0, 0), (1, 0), (0, 1), (1, 1))):
        table[:, 1 + 2 * k] = tp.data[:, i, j].real
        table[:, 2 + 2 * k] = tp.data[:, i, j].imag
    fmt = getattr(export, "_FMT", "%.12g")
    with tempfile.TemporaryDirectory() as d:
        ts, csv, ref = (os.path.join(d, name) for name in ("a.s2p", "a.csv", "ref.txt"))
        t_ref = median_time(lambda: np.savetxt(ref, table, fmt=fmt), args.repeat)
        t_ts = median_time(lambda: export.write_touchstone(tp, ts), args.repeat)
        t_csv = median_time(lambda: export.write_csv(tp, csv), args.repeat)
        sizes = [os.path.getsize(p) / 1e6 for p in (ts, csv, ref)]
    print(f"{args.points} points; savetxt {t_ref:.2f} s ({sizes[2]:.0f} MB), Touchstone {t_ts:.2f} s "
          f"({sizes[0]:.0f} MB), CSV {t_csv:.2f} s ({sizes[1]:.0f} MB); number format {fmt}")
    ratio_line("Touchstone write / numpy.savetxt", f"{t_ts:.2f} s", f"{t_ref:.2f} s", t_ts / t_ref, "<= 1.5",
               t_ts / t_ref <= 1.5)
    ratio_line("CSV write / numpy.savetxt", f"{t_csv:.2f} s", f"{t_ref:.2f} s", t_csv / t_ref, "<= 1.5",
               t_csv / t_ref <= 1.5)


if __name__ == "__main__":
    main()

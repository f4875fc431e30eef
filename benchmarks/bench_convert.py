"""Speed of devmodels.convert against scikit-rf's functions and a plain memory copy.

Prints one line per conversion pair: the median time of each, the ratio
scikit-rf / devmodels (target: >= 20) and devmodels / copy (target: <= 10 copies).
All measured in this run on the same data.

    python3 benchmarks/bench_convert.py [--points 1000000] [--repeat 5]
"""

from __future__ import annotations

import argparse
import platform
import statistics
import time

import numpy as np


def median_time(fn, repeat):
    times = []
    for _ in range(repeat):
        t = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t)
    return statistics.median(times)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--points", type=int, default=1_000_000)
    ap.add_argument("--repeat", type=int, default=5)
    ap.add_argument("--pairs", default="all", help="comma list like z-s,y-h or 'all'")
    args = ap.parse_args()

    import skrf.network as rn

    from devmodels.conversions import convert
    from devmodels.constants import KINDS

    to_s = {"z": rn.z2s, "y": rn.y2s, "h": rn.h2s, "g": rn.g2s, "abcd": rn.a2s}
    from_s = {"z": rn.s2z, "y": rn.s2y, "h": rn.s2h, "g": rn.s2g, "abcd": rn.s2a}
    direct = {("z", "y"): rn.z2y, ("y", "z"): rn.y2z, ("z", "h"): rn.z2h, ("h", "z"): rn.h2z,
              ("z", "abcd"): rn.z2a, ("abcd", "z"): rn.a2z}

    def skrf_fn(src, dst, data, z0):
        if (src, dst) in direct:
            return lambda: direct[(src, dst)](data)
        if src == "s":
            return lambda: from_s[dst](data, z0)
        if dst == "s":
            return lambda: to_s[src](data, z0)
        return lambda: from_s[dst](to_s[src](data, z0), z0)

    rng = np.random.default_rng(0)
    n = args.points
    z = (rng.normal(size=(n, 2, 2)) + 1j * rng.normal(size=(n, 2, 2)) + 3 * np.eye(2)) * 50
    z0 = np.array([50.0, 50.0])
    sets = {k: convert(z, "z", k) for k in KINDS}
    pairs = [(a, b) for a in KINDS for b in KINDS if a != b]
    if args.pairs != "all":
        pairs = [tuple(p.split("-")) for p in args.pairs.split(",")]
    copy_t = median_time(lambda: sets["z"].copy(), args.repeat)
    print(f"machine: {platform.machine()}, {platform.processor() or 'cpu'}, python {platform.python_version()}, "
          f"numpy {np.__version__}; {n} points, median of {args.repeat}")
    print(f"{'pair':<10} {'devmodels':>10} {'scikit-rf':>10} {'skrf/dm':>8} {'dm/copy':>8}")
    worst_speed, worst_copy = float("inf"), 0.0
    for src, dst in pairs:
        data = sets[src]
        t_dm = median_time(lambda: convert(data, src, dst), args.repeat)
        t_rf = median_time(skrf_fn(src, dst, data, z0), max(1, args.repeat // 2))
        worst_speed = min(worst_speed, t_rf / t_dm)
        worst_copy = max(worst_copy, t_dm / copy_t)
        print(f"{src + '->' + dst:<10} {t_dm * 1e3:9.1f}ms {t_rf * 1e3:9.1f}ms {t_rf / t_dm:8.1f} {t_dm / copy_t:8.1f}")
    print(f"worst: scikit-rf/devmodels {worst_speed:.1f} (target >= 20), devmodels/copy {worst_copy:.1f} "
          "(target <= 10)")


if __name__ == "__main__":
    main()

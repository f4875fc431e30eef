"""Speed of devmodels.convert against scikit-rf's functions and a plain memory copy.

Prints one line per conversion pair: the median wall time of each, the ratio
scikit-rf / devmodels (target: >= 20 for the pairs listed in TARGET_20X) and
devmodels / copy (target: <= 10 copies).  All are measured in this run, on this
machine, on the same data.

scikit-rf's reference for a pair is its direct function where it has one (z2y, z2h,
z2a, a2s, s2a, ...), else its route through S (``s2h(y2s(y))``).  Two floors are
measured too: one copy, and one numpy ufunc pass into a new array (``np.negative``).
A pair whose scikit-rf time is below 20 copies cannot reach 20x at all (``convert``
returns a new array, so it costs at least one copy); those lines are marked.

    python3 benchmarks/bench_convert.py [--points 1000000] [--repeat 5] [--quick]
        [--pairs z-h,abcd-s] [--block 16384] [--baseline OTHER/conversions.py]

``--baseline`` also times ``convert`` from another copy of ``devmodels/conversions.py``
(for example the previous version, copied out of the tree) on the same data.  The targets
are stated for the default 1e6 points (64 MB a set).  ``--quick`` uses 1e5 points, which
fit in the L3 cache, so its ratios are not the targets' (a smoke test).
"""

from __future__ import annotations

import argparse
import importlib.util
import os
import platform
import sys
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))
from _report import median_time, ratio_line  # noqa: E402

#: Pairs with the 20x target: all but z<->h, z<->abcd (scikit-rf's direct functions take
#: only a few copies' time), a2s, s2a and z2s (a few numpy passes in scikit-rf).
TARGET_20X = {("y", "z"), ("y", "h"), ("y", "g"), ("y", "abcd"), ("y", "s"),
              ("z", "y"), ("z", "g"), ("h", "y"), ("h", "g"), ("h", "abcd"), ("h", "s"),
              ("g", "y"), ("g", "z"), ("g", "h"), ("g", "abcd"), ("g", "s"),
              ("abcd", "y"), ("abcd", "h"), ("abcd", "g"),
              ("s", "y"), ("s", "z"), ("s", "h"), ("s", "g")}


def machine() -> str:
    cpu = platform.processor() or ""
    try:
        with open("/proc/cpuinfo") as fh:
            cpu = next(line.split(":", 1)[1].strip() for line in fh if line.startswith("model name"))
    except (OSError, StopIteration):
        pass
    return (f"{platform.machine()} {cpu or 'cpu'}, {os.cpu_count()} cores, python "
            f"{platform.python_version()}, numpy {np.__version__}")


def load_baseline(path: str):
    """``convert`` of another copy of conversions.py, imported inside the devmodels package."""
    spec = importlib.util.spec_from_file_location("devmodels._baseline_conversions", path)
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module.convert


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--points", type=int, default=1_000_000)
    ap.add_argument("--repeat", type=int, default=5)
    ap.add_argument("--pairs", default="all", help="comma list like z-s,y-h or 'all'")
    ap.add_argument("--quick", action="store_true",
                    help="100000 points, 3 repetitions, scikit-rf timed once (the data then "
                         "fits in cache, so the ratios are not the targets')")
    ap.add_argument("--block", type=int, default=None,
                    help="override devmodels.conversions.BLOCK (for tuning)")
    ap.add_argument("--baseline", default=None,
                    help="path of another conversions.py whose convert is timed too")
    args = ap.parse_args()
    if args.quick:
        args.points, args.repeat = 100_000, 3

    import skrf
    import skrf.network as rn

    import devmodels.conversions as conv
    from devmodels.constants import KINDS

    if args.block:
        conv.BLOCK = args.block
    convert = conv.convert
    baseline = load_baseline(args.baseline) if args.baseline else None

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
    rf_repeat = 1 if args.quick else max(1, args.repeat // 2)
    print(f"machine: {machine()}")
    print(f"scikit-rf {skrf.__version__}; {n} points, median wall time of {args.repeat} "
          f"(scikit-rf: {rf_repeat}); block {conv.BLOCK}")
    copy_t = median_time(lambda: sets["z"].copy(), max(args.repeat, 5))
    pass_t = median_time(lambda: np.negative(sets["z"]), max(args.repeat, 5))
    print(f"one copy (arr.copy()): {copy_t * 1e3:.1f} ms; one ufunc pass into a new array "
          f"(np.negative(arr)): {pass_t * 1e3:.1f} ms")
    base_head = f" {'baseline':>10}" if baseline else ""
    print(f"{'pair':<10} {'devmodels':>10}{base_head} {'scikit-rf':>10} {'skrf/dm':>8} {'dm/copy':>8}")
    worst_all, worst_target, worst_copy, capped, slow = float("inf"), float("inf"), 0.0, [], []
    for src, dst in pairs:
        data = sets[src]
        convert(data, src, dst)  # warm up
        t_dm = median_time(lambda: convert(data, src, dst), args.repeat)
        base_col = ""
        if baseline:
            baseline(data, src, dst)
            base_col = f" {median_time(lambda: baseline(data, src, dst), args.repeat) * 1e3:9.1f}ms"
        t_rf = median_time(skrf_fn(src, dst, data, z0), rf_repeat)
        speed = t_rf / t_dm
        worst_all = min(worst_all, speed)
        if (src, dst) in TARGET_20X:
            worst_target = min(worst_target, speed)
            if speed < 20:
                slow.append(f"{src}->{dst}")
        worst_copy = max(worst_copy, t_dm / copy_t)
        mark = "" if (src, dst) in TARGET_20X else "  (no 20x target)"
        if t_rf < 20 * copy_t:
            mark = "  (no 20x target: scikit-rf < 20 copies)"
            capped.append(f"{src}->{dst}")
        print(f"{src + '->' + dst:<10} {t_dm * 1e3:9.1f}ms{base_col} {t_rf * 1e3:9.1f}ms {speed:8.1f} "
              f"{t_dm / copy_t:8.1f}{mark}")
    n_target = sum(p in TARGET_20X for p in pairs)
    print(f"worst: scikit-rf/devmodels {worst_all:.1f} over all pairs, {worst_target:.1f} over the "
          f"{n_target} with the 20x target; devmodels/copy {worst_copy:.1f} (target <= 10)")
    if slow:
        print(f"pairs with the 20x target that missed it in this run: {', '.join(slow)}")
    if n_target:
        ratio_line(f"convert / scikit-rf, worst of {n_target} pairs with the 20x target "
                   f"({n_target - len(slow)} at >= 20x)", "", "", worst_target, ">= 20", not slow)
    ratio_line(f"convert / one copy, worst of {len(pairs)} pairs", "", f"copy {copy_t * 1e3:.1f} ms",
               worst_copy, "<= 10", worst_copy <= 10)
    if capped:
        print("pairs where scikit-rf takes under 20 copies, so >= 20x is impossible for a "
              f"function that returns a new array: {', '.join(capped)}")


if __name__ == "__main__":
    main()

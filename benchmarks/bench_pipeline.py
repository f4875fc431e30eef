"""Full stage pipeline on a long frequency sweep, against a per-frequency nodal solve.

devmodels: bias point -> hybrid-pi -> indefinite admittance matrix -> CE, CB and CC
two-ports -> terminated analysis (all results), vectorised over F points
(``devmodels.analysis.terminate_configs``, which works block by block).

Reference (the general-circuit approach): for each frequency, build the nodal matrix of
the same circuit with numpy, remove the internal base node with numpy.linalg.solve, take
the three configurations, and solve each terminated two-port (source and load stamped
in) with numpy.linalg.solve. It runs on a subset of the points and is scaled linearly
to the full count (its cost per point is constant); the subset size is printed.

    python3 benchmarks/bench_pipeline.py [--points 1000000] [--ref-points 20000]
"""

from __future__ import annotations

import argparse
import math
import sys
import time

from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))
from _report import ratio_line  # noqa: E402


def run_devmodels(f, rs, rl):
    import devmodels as dm
    from devmodels.analysis import terminate_configs

    bias = dm.BipolarBias(ic=1e-3, vce=5.0, beta=100, va=80.0, ft=300e6, cmu=2e-12, rb=50.0)
    m = dm.HybridPi.from_bias(bias)
    return terminate_configs(dm.Stage(m), ("ce", "cb", "cc"), f, rs, rl), m


def run_reference(f, m, rs, rl):
    """Per-frequency nodal solve; returns av of each configuration (for a spot check)."""
    ports = {"ce": (0, 1), "cb": (2, 1), "cc": (0, 2)}
    out = {c: np.empty(f.size, complex) for c in ports}
    gb = 1 / m.rb
    for i, fi in enumerate(f):
        w = 2 * math.pi * fi
        ypi = 1 / m.r_pi + 1j * w * m.c_pi
        ymu = 1j * w * m.c_mu
        go = 1 / m.ro
        # nodes b, c, e, b'
        Y = np.zeros((4, 4), complex)
        for a, b, y in ((0, 3, gb), (3, 2, ypi), (3, 1, ymu), (1, 2, go)):
            Y[a, a] += y; Y[b, b] += y; Y[a, b] -= y; Y[b, a] -= y
        Y[1, 3] += m.gm; Y[1, 2] -= m.gm; Y[2, 3] -= m.gm; Y[2, 2] += m.gm
        Y3 = Y[:3, :3] - Y[:3, 3:] @ np.linalg.solve(Y[3:, 3:], Y[3:, :3])
        for c, (p1, p2) in ports.items():
            y2 = Y3[np.ix_((p1, p2), (p1, p2))]
            # port equations with a source (Vs = 1, Rs) and a load RL stamped in
            A = y2 + np.diag([1 / rs, 1 / rl])
            v = np.linalg.solve(A, np.array([1 / rs, 0.0]))
            out[c][i] = v[1] / v[0]
    return out


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--points", type=int, default=1_000_000)
    ap.add_argument("--ref-points", type=int, default=20_000)
    ap.add_argument("--repeat", type=int, default=5)
    args = ap.parse_args()
    rs, rl = 50.0, 1e3
    f = np.logspace(3, 10, args.points)
    times = []
    for _ in range(args.repeat):
        t = time.perf_counter()
        res, m = run_devmodels(f, rs, rl)
        times.append(time.perf_counter() - t)
    t_dm = sorted(times)[len(times) // 2]
    sub = f[:: max(1, args.points // args.ref_points)][: args.ref_points]
    t = time.perf_counter()
    ref = run_reference(sub, m, rs, rl)
    t_ref_sub = time.perf_counter() - t
    t_ref = t_ref_sub * args.points / sub.size
    idx = np.searchsorted(f, sub)
    err = max(np.max(np.abs(res[c].av[idx] - ref[c]) / np.abs(ref[c])) for c in ref)
    print(f"pipeline, {args.points} points: devmodels {t_dm:.3f} s; per-frequency solve "
          f"{t_ref:.1f} s (measured on {sub.size} points, scaled); ratio {t_ref / t_dm:.0f} "
          f"(target >= 100); av agreement {err:.1e}")
    ratio_line(f"stage pipeline, {args.points} points: per-frequency solve / devmodels", f"{t_dm:.2f} s",
               f"{t_ref:.0f} s (scaled from {sub.size})", t_ref / t_dm, ">= 100", t_ref / t_dm >= 100)


if __name__ == "__main__":
    main()

"""Speed of the stage noise parameters (devmodels.noise) against a per-point numpy.linalg loop.

devmodels: ``stage_noise`` (the netlist reduced with its noise sources, block by block over
frequency) then ``noise_parameters`` (closed forms over all points).  Reference: for each
frequency point, the stage's full nodal matrix and noise injections are stamped, the
internal nodes are eliminated with ``numpy.linalg.solve`` (Schur complement), the
configuration's ports are picked, C_Y goes to the chain form by T C T^H with ``numpy``
matrix products, and the noise parameters are computed from it.  The reference runs on
``--ref-points`` points and its time is scaled to ``--points`` (it is linear in the
number of points); both agree on the values of the points they share (checked here).
Target: devmodels at least 50x faster at 1e6 points.

    python3 benchmarks/bench_noise.py [--points 1000000] [--ref-points 2000] [--repeat 3] [--quick]

``--quick``: 1e4 points, 500 reference points, 1 repetition (a smoke test).
"""

from __future__ import annotations

import argparse
import math
import sys
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))
sys.path.insert(0, str(Path(__file__).resolve().parent.parent))
from _report import median_time, ratio_line  # noqa: E402

import devmodels as dm  # noqa: E402
from devmodels.configs import CONFIG_TERMINALS  # noqa: E402
from devmodels.constants import BOLTZMANN  # noqa: E402
from devmodels.netlist import NOISE_KINDS, stamp  # noqa: E402
from devmodels.noise import T0, noise_parameters, stage_noise  # noqa: E402


def the_stage() -> dm.Stage:
    """An invented CE stage with every parasitic, degeneration and feedback (all noisy)."""
    m = dm.HybridPi.from_bias(dm.BipolarBias(ic=2e-3, vce=5.0, beta=120, va=60.0, ft=400e6, cmu=1.5e-12,
                                             rb=80.0, rcx=5.0, rex=1.5, temp=300.0))
    return dm.Stage(m, "ce", rdeg=10.0, rfb=20e3)


def reference(stage: dm.Stage, freq: np.ndarray, zs: float = 50.0):
    """Per-point loop: Fmin, Rn, Yopt and F at zs with numpy.linalg (module docstring)."""
    net = stage.netlist()
    keep = list(stage.terminals)
    order = keep + [x for x in net.nodes if x not in keep]
    idx = {x: i for i, x in enumerate(order)}
    sources = [e for e in net.elements if e.kind in NOISE_KINDS]
    J = np.zeros((len(order), len(sources)))
    psd = np.array([float(e.value) for e in sources])
    for s, e in enumerate(sources):
        J[idx[e.nodes[0]], s] -= 1.0
        J[idx[e.nodes[1]], s] += 1.0
    p1, p2, _ = CONFIG_TERMINALS[stage.config]
    ports = [p1, p2]
    k = len(keep)
    kt0 = BOLTZMANN * T0
    out = np.empty((freq.size, 4), dtype=complex)
    for n, f in enumerate(freq):
        Y = stamp(net, order, 2 * math.pi * f, 1)[:, :, 0]
        X = np.linalg.solve(Y[k:, k:], np.hstack([Y[k:, :k], J[k:]]))
        Yr = Y[:k, :k] - Y[:k, k:] @ X[:, :k]
        Jr = J[:k] - Y[:k, k:] @ X[:, k:]
        Cr = (Jr * psd) @ Jr.conj().T
        y = Yr[np.ix_(ports, ports)]
        cy = Cr[np.ix_(ports, ports)]
        T = np.array([[0, -1 / y[1, 0]], [1, -y[0, 0] / y[1, 0]]])
        ca = T @ cy @ T.conj().T
        cu, ci, cui = ca[0, 0].real, ca[1, 1].real, ca[0, 1]
        root = math.sqrt(cu * ci - cui.imag ** 2)
        ys = 1 / zs
        fs = 1 + (ci + abs(ys) ** 2 * cu + 2 * (ys * cui).real) / (4 * kt0 * ys.real)
        out[n] = (1 + (cui.real + root) / (2 * kt0), cu / (4 * kt0), (root + 1j * cui.imag) / cu, fs)
    return out


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--points", type=int, default=1_000_000)
    ap.add_argument("--ref-points", type=int, default=2000)
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--quick", action="store_true", help="1e4 points, 500 reference points, 1 repetition")
    a = ap.parse_args()
    if a.quick:
        a.points, a.ref_points, a.repeat = 10_000, 500, 1
    st = the_stage()
    freq = np.logspace(3, 9.5, a.points)
    sub = freq[:: max(1, a.points // a.ref_points)][: a.ref_points]

    def ours():
        return noise_parameters(stage_noise(st, freq), zs=50.0)

    t_ours = median_time(ours, a.repeat)
    t_ref = median_time(lambda: reference(st, sub), 1) * freq.size / sub.size
    # the two agree where they overlap
    res = noise_parameters(stage_noise(st, sub), zs=50.0)
    ref = reference(st, sub)
    for name, got, want in (("fmin", res.fmin, ref[:, 0].real), ("rn", res.rn, ref[:, 1].real),
                            ("yopt", res.yopt, ref[:, 2]), ("f", res.f, ref[:, 3].real)):
        err = np.max(np.abs(got - want) / np.abs(want))
        if not err < 1e-8:
            raise SystemExit(f"bench_noise: {name} disagrees with the reference (relative error {err:.3g})")
    ratio = t_ref / t_ours
    print(f"noise parameters of a CE stage, {freq.size} points: devmodels {t_ours * 1e3:.1f} ms, per-point "
          f"numpy.linalg loop {t_ref:.2f} s (measured on {sub.size} points, scaled), ratio {ratio:.1f}")
    ratio_line(f"stage noise parameters, {freq.size} points / per-point loop", f"{t_ours * 1e3:.1f} ms",
               f"{t_ref:.2f} s", ratio, ">= 50", ratio >= 50)


if __name__ == "__main__":
    main()

"""Speed of the hybrid-pi extraction (devmodels.extract) with its analytic Jacobian.

An invented device (gm 80 mS, r_pi 1.5 kohm, C_pi 30 pF, C_mu 1.5 pF, rb 80 ohm, ro 30 kohm;
fT about 400 MHz) is sampled at ``--points`` log-spaced frequencies from 1 MHz to 3 GHz,
0.5 % complex Gaussian noise is put on each S parameter, and the file is written as
Touchstone by scikit-rf.  Timed: reading the file and the whole extraction (direct
estimates, fit, uncertainties), once with the analytic Jacobian and once with scipy's
finite-difference Jacobian ('2-point', the same fit otherwise).  CPU time
(``time.process_time``, all threads of the process) and wall time, medians over
``--repeat`` runs.  Target: the analytic fit of a 1,000-point file in under 1 s of CPU.

    python3 benchmarks/bench_extract.py [--points 1000] [--repeat 5] [--noise 0.005]
"""

from __future__ import annotations

import argparse
import math
import statistics
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))
sys.path.insert(0, str(Path(__file__).resolve().parent.parent))
from _report import ratio_line  # noqa: E402

from devmodels.extract import extract, model_y  # noqa: E402
from devmodels.twoport import TwoPort  # noqa: E402

ELEMENTS = {"gm": 0.08, "r_pi": 1500.0, "c_pi": 30e-12, "c_mu": 1.5e-12, "rb": 80.0, "ro": 30e3}


def make_file(folder: Path, points: int, noise: float, seed: int = 1) -> Path:
    """The invented device's S parameters with noise, written by scikit-rf."""
    import skrf

    f = np.logspace(6, math.log10(3e9), points)
    s = TwoPort(f, model_y(ELEMENTS, f, "ce"), "y").to("s").data
    rng = np.random.default_rng(seed)
    s = s * (1 + noise * (rng.standard_normal(s.shape) + 1j * rng.standard_normal(s.shape)) / math.sqrt(2))
    net = skrf.Network(frequency=skrf.Frequency.from_f(f, unit="Hz"), s=s, z0=50)
    net.write_touchstone(filename=str(folder / "device"))
    return folder / "device.s2p"


def timed(path: Path, jacobian: str, repeat: int):
    """Median CPU and wall time of read + extract, and the last result."""
    cpu, wall, res = [], [], None
    for _ in range(repeat):
        t0, c0 = time.perf_counter(), time.process_time()
        res = extract(path, jacobian=jacobian)
        cpu.append(time.process_time() - c0)
        wall.append(time.perf_counter() - t0)
    return statistics.median(cpu), statistics.median(wall), res


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--points", type=int, default=1000)
    ap.add_argument("--repeat", type=int, default=5)
    ap.add_argument("--noise", type=float, default=0.005)
    args = ap.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        path = make_file(Path(tmp), args.points, args.noise)
        extract(path)                               # warm-up: imports scipy once
        cpu_a, wall_a, a = timed(path, "analytic", args.repeat)
        cpu_f, wall_f, b = timed(path, "2-point", args.repeat)
    worst = max(abs(a.elements[k] / b.elements[k] - 1) for k in ELEMENTS)
    print(f"{args.points} points, noise {args.noise:g}: rms error {a.rms_error:.4g}")
    print(f"analytic Jacobian : {cpu_a * 1e3:8.1f} ms CPU, {wall_a * 1e3:8.1f} ms wall, {a.nfev} evaluations")
    print(f"finite differences: {cpu_f * 1e3:8.1f} ms CPU, {wall_f * 1e3:8.1f} ms wall, {b.nfev} evaluations")
    print(f"largest relative difference of the fitted elements: {worst:.2g}")
    for k, v in ELEMENTS.items():
        print(f"  {k:5s} true {v:.5g}  fit {a.elements[k]:.5g} +- {a.uncertainty[k]:.2g}")
    ratio_line(f"extract {args.points} pts (CPU, FD / analytic)", f"{cpu_a * 1e3:.1f} ms",
               f"{cpu_f * 1e3:.1f} ms", cpu_f / cpu_a, "analytic < 1 s CPU", cpu_a < 1.0)


if __name__ == "__main__":
    main()

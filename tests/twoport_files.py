"""Helpers shared by the extraction tests: S from Y, Touchstone files written by scikit-rf, and
measurement-like noise.  Each is the textbook relation or a call of scikit-rf, written once."""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np


def y_to_s(y: np.ndarray, z0: float = 50.0) -> np.ndarray:
    """S = (1 - z0 Y)(1 + z0 Y)^-1 with the same real z0 at both ports (Pozar, *Microwave
    Engineering*, the Y-S table; from memory), shape (F, 2, 2)."""
    one = np.eye(y.shape[-1])
    return (one - z0 * y) @ np.linalg.inv(one + z0 * y)


def write_touchstone(folder: Path, name: str, freq: np.ndarray, s: np.ndarray) -> Path:
    """A Touchstone file written by scikit-rf (``name`` without extension), z0 = 50 ohm."""
    import skrf

    net = skrf.Network(frequency=skrf.Frequency.from_f(freq, unit="Hz"), s=s, z0=50)
    net.write_touchstone(filename=name, dir=str(folder))
    path = Path(folder) / f"{name}.s{s.shape[1]}p"
    assert path.exists()
    return path


def noisy(s: np.ndarray, rel: float, seed: int) -> np.ndarray:
    """Each S parameter times (1 + complex Gaussian noise of rms ``rel``)."""
    rng = np.random.default_rng(seed)
    n = (rng.standard_normal(s.shape) + 1j * rng.standard_normal(s.shape)) / math.sqrt(2)
    return s * (1 + rel * n)

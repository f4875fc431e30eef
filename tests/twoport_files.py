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


class Nodal:
    """Nodal admittance equations of a circuit over F frequencies, written by hand for the tests
    (independent of the package's engine): branches, a voltage-controlled source, and the
    two-port Y seen at two terminals with a third as the common one (the inner nodes removed
    by the Schur complement with numpy.linalg.solve; Vlach and Singhal, *Computer Methods for
    Circuit Analysis and Design*, ch. 2, from memory).

    Parameters
    ----------
    nodes : sequence of str
        The terminals first, then the inner nodes.
    f : int
        Number of frequency points.
    """

    def __init__(self, nodes, f: int) -> None:
        self.ix = {n: i for i, n in enumerate(nodes)}
        self.nodes = list(nodes)
        self.G = np.zeros((f, len(nodes), len(nodes)), dtype=complex)

    def branch(self, a: str, b: str, y) -> None:
        """An admittance ``y`` (S, scalar or (F,)) between nodes a and b."""
        i, j = self.ix[a], self.ix[b]
        self.G[:, i, i] += y
        self.G[:, j, j] += y
        self.G[:, i, j] -= y
        self.G[:, j, i] -= y

    def vccs(self, out_from: str, out_to: str, plus: str, minus: str, g) -> None:
        """A current g V(plus, minus) leaving node ``out_from`` through the source into ``out_to``."""
        for row, sign in ((out_from, 1), (out_to, -1)):
            self.G[:, self.ix[row], self.ix[plus]] += sign * g
            self.G[:, self.ix[row], self.ix[minus]] -= sign * g

    def two_port(self, port1: str, port2: str, inner) -> np.ndarray:
        """Y (F, 2, 2) at ``port1`` and ``port2`` (the common terminal grounded: its row and
        column left out), the ``inner`` nodes removed."""
        G = self.G
        keep, inn = [self.ix[port1], self.ix[port2]], [self.ix[n] for n in inner]
        if not inn:
            return G[:, keep][:, :, keep]
        Gkk, Gki = G[:, keep][:, :, keep], G[:, keep][:, :, inn]
        Gik, Gii = G[:, inn][:, :, keep], G[:, inn][:, :, inn]
        return Gkk - Gki @ np.linalg.solve(Gii, Gik)

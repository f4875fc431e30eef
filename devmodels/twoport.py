"""The two-port value: frequencies, (F, 2, 2) complex data, kind and reference impedance."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Sequence

import numpy as np

from .constants import KINDS
from .conversions import convert, normalize_z0
from .exceptions import InputError, SingularParameterError

__all__ = ["TwoPort"]


@dataclass(frozen=True, slots=True)
class TwoPort:
    """Two-port parameters over frequency.

    Parameters
    ----------
    freq : ndarray of float, shape (F,), or None
        Frequencies in Hz; ``None`` for frequency-independent (given) parameters, in
        which case ``data`` has one point.
    data : ndarray, complex, shape (F, 2, 2)
        The parameters of ``kind``.
    kind : {'y', 'z', 'h', 'g', 'abcd', 's'}
        Parameter kind.
    z0 : (float, float)
        Real reference resistances in ohm of port 1 and port 2 (used by S).
    config : str or None
        Configuration label (``'ce'``, ``'cb'``, ...) when the two-port is a stage.
    """

    freq: np.ndarray | None
    data: np.ndarray
    kind: str = "y"
    z0: tuple[float, float] = (50.0, 50.0)
    config: str | None = None
    label: str = field(default="", compare=False)

    def __post_init__(self) -> None:
        if self.kind not in KINDS:
            raise InputError(f"kind: unknown parameter kind {self.kind!r}, expected one of {', '.join(KINDS)}")
        data = np.array(self.data, dtype=complex)
        if data.ndim == 2:
            data = data[None]
        if data.ndim != 3 or data.shape[1:] != (2, 2):
            raise InputError(f"data: expected shape (F, 2, 2), got {data.shape}")
        if self.freq is not None:
            freq = np.array(self.freq, dtype=float).reshape(-1)
            if freq.size != data.shape[0]:
                raise InputError(f"freq: {freq.size} frequencies for {data.shape[0]} parameter points")
            freq.setflags(write=False)
            object.__setattr__(self, "freq", freq)
        elif data.shape[0] != 1:
            raise InputError("freq: frequency-independent parameters must have exactly one point")
        data.setflags(write=False)
        object.__setattr__(self, "data", data)
        object.__setattr__(self, "z0", normalize_z0(self.z0))

    def __len__(self) -> int:
        return self.data.shape[0]

    def to(self, kind: str, z0: float | Sequence[float] | None = None) -> "TwoPort":
        """The same network as parameters of ``kind`` (S at ``z0``, default: this one's)."""
        z0n = self.z0 if z0 is None else normalize_z0(z0)
        if kind == self.kind and (kind != "s" or z0n == self.z0):
            return self if z0 is None else TwoPort(self.freq, self.data, kind, z0n, self.config, self.label)
        try:
            data = convert(self.data, self.kind, kind, self.z0, z0_out=z0n)
        except SingularParameterError as exc:
            raise SingularParameterError(self._where(str(exc))) from None
        return TwoPort(self.freq, data, kind, z0n, self.config, self.label)

    def _where(self, msg: str) -> str:
        # Replace "at point N" by the frequency when there is one.
        import re

        m = re.search(r"at point (\d+)", msg)
        if m and self.freq is not None:
            f = self.freq[int(m.group(1))]
            msg = msg.replace(m.group(0), f"at {f:g} Hz")
        elif m:
            msg = msg.replace(" " + m.group(0), "")
        return msg

    def element(self, name: str) -> np.ndarray:
        """One element over frequency: ``'11'``, ``'12'``, ``'21'`` or ``'22'``."""
        if name not in ("11", "12", "21", "22"):
            raise InputError(f"element: expected 11, 12, 21 or 22, got {name!r}")
        return self.data[:, int(name[0]) - 1, int(name[1]) - 1]

    def to_skrf(self, name: str | None = None):
        """A :class:`skrf.Network` of these parameters (S at this two-port's z0).

        Frequency-independent parameters are given the single frequency 0 Hz.
        """
        import skrf

        s = self.to("s").data
        f = np.array([0.0]) if self.freq is None else self.freq
        freq = skrf.Frequency.from_f(f, unit="Hz")
        return skrf.Network(frequency=freq, s=s, z0=np.array(self.z0, dtype=complex),
                            name=name or self.label or (self.config or "devmodels"))

"""The two-port value: frequencies, (F, 2, 2) complex data, kind and reference impedance.

A :class:`TwoPort` is checked when it is made, so every later step (conversions, analysis,
export) may rely on finite data at finite, non-negative, strictly increasing frequencies.
"""

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
    label : str
        Free text naming the source (a file name, ...); not compared.

    Raises
    ------
    InputError
        At construction, when the value would not describe a network: an unknown kind
        (``"kind: ..."``), data that are not numbers, of another shape than (F, 2, 2) or not
        finite (``"data: ..."``), frequencies that are not finite, negative, not strictly
        increasing or not one per point (``"freq: ..."``, naming the first bad value), a
        reference resistance that is not a positive real number, a boolean or a string
        (``"z0: ..."``).
    """

    freq: np.ndarray | None
    data: np.ndarray
    kind: str = "y"
    z0: tuple[float, float] = (50.0, 50.0)
    config: str | None = None
    label: str = field(default="", compare=False)

    def __post_init__(self) -> None:
        if not isinstance(self.kind, str) or self.kind not in KINDS:
            raise InputError(f"kind: unknown parameter kind {self.kind!r}, expected one of {', '.join(KINDS)}")
        data = _as_complex_data(self.data)
        freq = None if self.freq is None else _as_frequencies(self.freq)
        if freq is not None:
            if freq.size != data.shape[0]:
                raise InputError(f"freq: {freq.size} frequencies for {data.shape[0]} parameter points")
            freq.setflags(write=False)
            object.__setattr__(self, "freq", freq)
        elif data.shape[0] != 1:
            raise InputError("freq: frequency-independent parameters must have exactly one point")
        _check_finite_data(data, freq)
        data.setflags(write=False)
        object.__setattr__(self, "data", data)
        object.__setattr__(self, "z0", normalize_z0(_refuse_booleans(self.z0)))

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
        elif m:  # no frequency to name: drop the point with its comma ("det Z = 0, at point 0;")
            msg = re.sub(r",? at point \d+", "", msg, count=1)
        return msg

    def element(self, name: str) -> np.ndarray:
        """One element over frequency; ``name`` is ``'11'``, ``'12'``, ``'21'`` or ``'22'``."""
        if name not in ("11", "12", "21", "22"):
            raise InputError(f"element: expected 11, 12, 21 or 22, got {name!r}")
        return self.data[:, int(name[0]) - 1, int(name[1]) - 1]

    def to_skrf(self, name: str | None = None):
        """A :class:`skrf.Network` of these parameters (S at this two-port's z0).

        Frequency-independent parameters are given the single frequency 0 Hz; ``name`` is the
        network's name (default: the label or the configuration).
        """
        import skrf

        s = self.to("s").data
        f = np.array([0.0]) if self.freq is None else self.freq
        freq = skrf.Frequency.from_f(f, unit="Hz")
        return skrf.Network(frequency=freq, s=s, z0=np.array(self.z0, dtype=complex),
                            name=name or self.label or (self.config or "devmodels"))


def _first_bad(mask: np.ndarray) -> int:
    return int(np.flatnonzero(mask)[0])


def _as_complex_data(values) -> np.ndarray:
    """``values`` as a new complex array of shape (F, 2, 2) (a single (2, 2) matrix: F = 1)."""
    if isinstance(values, np.ndarray) and values.dtype == bool:
        raise InputError("data: expected numbers, got booleans")
    try:
        data = np.array(values, dtype=complex)
    except (TypeError, ValueError) as exc:
        raise InputError(f"data: expected complex numbers of shape (F, 2, 2) ({' '.join(str(exc).split())[:80]})") \
            from None
    if data.ndim == 2:
        data = data[None]
    if data.ndim != 3 or data.shape[1:] != (2, 2):
        raise InputError(f"data: expected shape (F, 2, 2), got {data.shape}")
    return data


def _as_frequencies(values) -> np.ndarray:
    """``values`` as a new 1-D float array in Hz: finite, >= 0 and strictly increasing."""
    if isinstance(values, (bool, np.bool_)) or (isinstance(values, np.ndarray) and values.dtype == bool):
        raise InputError("freq: expected frequencies in Hz, got booleans")
    try:
        freq = np.array(values, dtype=float).reshape(-1)
    except (TypeError, ValueError) as exc:
        raise InputError(f"freq: expected frequencies in Hz ({' '.join(str(exc).split())[:80]})") from None
    bad = ~np.isfinite(freq) | (freq < 0)
    if bad.any():
        k = _first_bad(bad)
        raise InputError(f"freq: expected finite frequencies >= 0 Hz, got {freq[k]:g} at point {k}")
    if freq.size > 1:
        step = freq[1:] <= freq[:-1]
        if step.any():
            k = _first_bad(step) + 1
            what = "repeats" if freq[k] == freq[k - 1] else "is below"
            raise InputError(f"freq: expected strictly increasing frequencies; {freq[k]:.10g} Hz at point {k} "
                             f"{what} {freq[k - 1]:.10g} Hz before it")
    return freq


def _check_finite_data(data: np.ndarray, freq: np.ndarray | None) -> None:
    ok = bool(np.isfinite(data).all())
    if ok:
        return
    bad = ~np.isfinite(data).reshape(data.shape[0], -1).all(axis=1)
    k = _first_bad(bad)
    where = f"at {freq[k]:g} Hz (point {k})" if freq is not None else "in the given point"
    raise InputError(f"data: the parameters hold a value that is not a finite number (NaN or inf) {where}")


def _refuse_booleans(z0):
    """Refuse ``True``/``False`` as a reference resistance (Python counts them as numbers)."""
    scalar = isinstance(z0, (bool, np.bool_, str, bytes)) or not hasattr(z0, "__iter__")
    items = [z0] if scalar else list(z0)  # a generator is read once, here
    for v in items:
        if isinstance(v, (bool, np.bool_)):
            raise InputError(f"z0: expected a reference resistance in ohm, got the boolean {v!r}")
        if isinstance(v, (str, bytes)):
            raise InputError(f"z0: expected a reference resistance in ohm (a number), got {v!r}")
    return z0 if scalar else tuple(items)

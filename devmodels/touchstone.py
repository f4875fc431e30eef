"""Reading two-port Touchstone files (the writers are in :mod:`devmodels.export`).

Reading is done by scikit-rf (imported only here, when a file is read).  scikit-rf 2.2
multiplies whole rows by the reference resistance when it reads Y, H or G from a
Touchstone 1.x file, which is right only for Z; for those kinds this module undoes the
1.1 normalisation from the raw values of its parser instead.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from .exceptions import FileFormatError, InputError
from .twoport import TwoPort
from .units import format_si

__all__ = ["read_touchstone"]


def read_touchstone(path, freq: np.ndarray | None = None, config: str | None = None) -> TwoPort:
    """A two-port (S) from a Touchstone file (1.x or 2.0), read with scikit-rf.

    Parameters
    ----------
    path : str or Path
        The file (``.s2p``, ``.y2p``, ..., ``.ts``).
    freq : array of float, optional
        Frequencies in Hz; the file's S parameters are interpolated linearly (real and
        imaginary parts) to them.  Default: every frequency of the file.
    config : str, optional
        Configuration label for the result.

    Raises
    ------
    FileFormatError
        Unreadable or malformed file, not a two-port, no points, a complex or
        frequency-dependent reference impedance, or values that are not finite.
    InputError
        A requested frequency outside the file's range.
    """
    import warnings

    p = Path(path)
    if not p.is_file():
        raise FileFormatError(f"touchstone: cannot read {str(p)!r}: no such file")
    try:
        import skrf
        from skrf.io.touchstone import Touchstone

        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            ts = Touchstone(str(p))
            net = skrf.Network(str(p))
    except Exception as exc:  # noqa: BLE001 - any parser failure is a malformed file
        msg = " ".join(str(exc).split())[:160] or type(exc).__name__
        raise FileFormatError(f"touchstone: cannot read {p.name}: not a valid Touchstone file ({msg})") from None
    if net.nports != 2:
        raise FileFormatError(f"touchstone: {p.name} holds a {net.nports}-port; expected a two-port")
    f = np.asarray(net.f, dtype=float)
    if f.size == 0:
        raise FileFormatError(f"touchstone: {p.name} has no data points")
    z0 = np.asarray(net.z0)
    if np.any(z0.imag != 0):
        raise FileFormatError(f"touchstone: {p.name} has a complex reference impedance; only real ones "
                              "are supported")
    if np.any(z0.real != z0.real[:1]):
        raise FileFormatError(f"touchstone: {p.name} has a reference impedance that changes with frequency; "
                              "not supported")
    z01, z02 = float(z0[0, 0].real), float(z0[0, 1].real)
    if z01 <= 0 or z02 <= 0:
        raise FileFormatError(f"touchstone: {p.name} has a reference resistance <= 0 ohm")
    if ts.parameter in ("y", "h", "g") and ts.version.startswith("1"):
        # Touchstone 1.x normalises Y, H and G by R (Y*R; h11/R, h22*R; g11*R, g22/R);
        # undo that from the raw values ourselves (see devmodels.export).
        raw = np.asarray(ts.s_flat).reshape(-1, 2, 2).transpose(0, 2, 1)  # file order 11 21 12 22
        from .export import touchstone1_scale

        scale = touchstone1_scale(ts.parameter, z01)
        tp = TwoPort(f, raw / scale, ts.parameter, (z01, z02), config, p.name).to("s")
    else:
        tp = TwoPort(f, net.s, "s", (z01, z02), config, p.name)
    if not np.all(np.isfinite(tp.data)):
        raise FileFormatError(f"touchstone: {p.name} holds values that are not finite numbers")
    if freq is None:
        return tp
    lo, hi = f.min(), f.max()
    bad = freq[(freq < lo) | (freq > hi)]
    if bad.size:
        raise InputError(f"freq: {format_si(float(bad[0]), 'Hz')} is outside the file's range "
                         f"{format_si(float(lo), 'Hz')} to {format_si(float(hi), 'Hz')}")
    order = np.argsort(f)
    flat = tp.data.reshape(-1, 4)[order]
    cols = [np.interp(freq, f[order], flat[:, k].real) + 1j * np.interp(freq, f[order], flat[:, k].imag)
            for k in range(4)]
    return TwoPort(freq, np.stack(cols, axis=1).reshape(-1, 2, 2), "s", (z01, z02), config, p.name)

r"""Noise parameters in Touchstone files: a noisy two-port from a file, and a file with noise.

The noise block of a two-port Touchstone file (IBIS Open Forum, "Touchstone File Format
Specification", versions 1.1 and 2.0, from memory) lists, per frequency, NFmin in dB,
Gamma_opt (magnitude, angle in degrees, referred to the reference resistance R of port 1)
and the equivalent noise resistance Rn (normalised, Rn/R, in version 1.x; in ohm in
version 2.0, as :mod:`devmodels.touchstone` reads it).  Reading the block is
:func:`devmodels.touchstone.read_touchstone_file`; this module turns it into a
:class:`~devmodels.noise.NoisyTwoPort` and writes one.

The chain-form correlation matrix of the noise parameters (Hillbrand and Russer, IEEE
Trans. Circuits Syst. 23(4), 1976; the inverse of the relations in :mod:`devmodels.noise`):

.. math::
    C_u = 4kT_0 R_n,\qquad C_i = 4kT_0 R_n |Y_{opt}|^2,\qquad
    C_{ui} = 2kT_0 (F_{min} - 1) - 4kT_0 R_n Y_{opt}^* .
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np

from .constants import BOLTZMANN
from .exceptions import InputError
from .noise import T0, NoiseResult, NoisyTwoPort
from .twoport import TwoPort

__all__ = ["correlation_from_parameters", "noisy_from_touchstone", "touchstone_noise_text",
           "write_touchstone_noise", "noise_figures_at"]


def correlation_from_parameters(fmin, rn, yopt) -> np.ndarray:
    """The chain-form correlation matrix (F, 2, 2) of noise parameters (module docstring).

    Parameters
    ----------
    fmin : array_like (F,)
        Minimum noise factor (linear, >= 1).
    rn : array_like (F,)
        Equivalent noise resistance in ohm (>= 0).
    yopt : array_like, complex (F,)
        Optimum source admittance in S (real part >= 0).

    Returns
    -------
    ndarray, complex, shape (F, 2, 2)
        C_A: V^2/Hz, VA/Hz, A^2/Hz.
    """
    fmin = np.atleast_1d(np.asarray(fmin, dtype=float))
    rn = np.atleast_1d(np.asarray(rn, dtype=float))
    yopt = np.atleast_1d(np.asarray(yopt, dtype=complex))
    for name, v, ok in (("fmin", fmin, fmin >= 1), ("rn", rn, rn >= 0), ("yopt", yopt, yopt.real >= 0)):
        good = np.isfinite(v) & ok
        if not np.all(good):
            raise InputError(f"{name}: expected finite values ({'>= 1' if name == 'fmin' else '>= 0'}"
                             f"{' in the real part' if name == 'yopt' else ''}), got {v[~good][0]:g}")
    kt0 = BOLTZMANN * T0
    fmin, rn, yopt = np.broadcast_arrays(fmin, rn, yopt)
    ca = np.empty(fmin.shape + (2, 2), dtype=complex)
    ca[:, 0, 0] = 4 * kt0 * rn
    ca[:, 1, 1] = 4 * kt0 * rn * np.abs(yopt) ** 2
    ca[:, 0, 1] = 2 * kt0 * (fmin - 1) - 4 * kt0 * rn * yopt.conj()
    ca[:, 1, 0] = ca[:, 0, 1].conj()
    return ca


def noisy_from_touchstone(data) -> NoisyTwoPort:
    """The noisy two-port of a Touchstone file with noise data, at its noise frequencies.

    The network data are taken at each noise frequency; where a noise frequency is not one
    of the network frequencies, the S parameters are interpolated linearly in real and
    imaginary parts between the two neighbouring network frequencies (common practice;
    scikit-rf interpolates the same way).  A noise frequency outside the network's range
    is refused.

    Parameters
    ----------
    data : devmodels.touchstone.TouchstoneData
        What :func:`devmodels.touchstone.read_touchstone_file` returns.

    Returns
    -------
    NoisyTwoPort
        Form ``abcd``.

    Raises
    ------
    InputError
        The file has no noise data, or a noise frequency outside the network frequencies.
    """
    nz = data.noise
    if nz is None:
        raise InputError(f"noise: {data.path} has no noise data")
    f_net = data.freq
    fn = nz.freq
    outside = (fn < f_net[0]) | (fn > f_net[-1])
    if np.any(outside):
        raise InputError(f"noise: noise frequency {fn[outside][0]:g} Hz is outside the network data "
                         f"({f_net[0]:g} to {f_net[-1]:g} Hz)")
    tp = data.twoport.to("s")
    s = np.empty((fn.size, 2, 2), dtype=complex)
    for i in range(2):
        for j in range(2):
            s[:, i, j] = (np.interp(fn, f_net, tp.data[:, i, j].real)
                          + 1j * np.interp(fn, f_net, tp.data[:, i, j].imag))
    abcd = TwoPort(fn, s, "s", tp.z0).to("abcd").data
    z0 = nz.z0
    g = nz.gamma_opt
    yopt = (1 - g) / (z0 * (1 + g))
    ca = correlation_from_parameters(10 ** (np.asarray(nz.nfmin_db) / 10), nz.rn, yopt)
    return NoisyTwoPort(fn, abcd, ca, "abcd")


def noise_figures_at(data, freq, zs) -> tuple[np.ndarray, np.ndarray]:
    """Noise figure at the source ``zs`` and NFmin (dB) of a Touchstone file at the frequencies ``freq``.

    Noise parameters are not interpolated: a frequency that is not one of the file's noise
    frequencies (to 1e-9 relative) gets NaN.  The noise factor at the source is
    :math:`F = F_{min} + (R_n/G_s)|Y_s - Y_{opt}|^2` (Rothe and Dahlke, Proc. IRE 44, 1956),
    evaluated through :func:`noisy_from_touchstone` and
    :func:`devmodels.noise.noise_parameters` (the source at T0 = 290 K).

    Parameters
    ----------
    data : devmodels.touchstone.TouchstoneData
        A file with noise data.
    freq : array_like (F,)
        Frequencies in Hz (e.g. the points of a terminated analysis).
    zs : complex
        Source impedance in ohm (real part > 0).

    Returns
    -------
    nf_db, nfmin_db : ndarray (F,)
        dB; NaN where ``freq`` is not a noise frequency of the file.
    """
    from .noise import noise_parameters

    res = noise_parameters(noisy_from_touchstone(data), zs=zs)
    f = np.atleast_1d(np.asarray(freq, dtype=float))
    nf = np.full(f.size, np.nan)
    nfmin = np.full(f.size, np.nan)
    if f.size == 0:
        return nf, nfmin
    fn = res.freq
    # the nearest noise frequency to each point, and whether it is the same frequency
    k = np.clip(np.searchsorted(fn, f), 0, fn.size - 1)
    km = np.clip(k - 1, 0, fn.size - 1)
    k = np.where(np.abs(fn[km] - f) < np.abs(fn[k] - f), km, k)
    hit = np.abs(fn[k] - f) <= 1e-9 * np.abs(f)
    nf[hit] = res.nf_db[k[hit]]
    nfmin[hit] = res.nfmin_db[k[hit]]
    return nf, nfmin


def _noise_rows(result: NoiseResult, r: float, version: str) -> list[str]:
    """The noise block's lines: freq, NFmin dB, |Gamma_opt|, angle (deg) at R, Rn (Rn/R in 1.1)."""
    y = r * result.yopt
    bad = ~np.isfinite(y)
    if np.any(bad):
        raise InputError(f"noise: Yopt does not exist at {result.freq[bad][0]:g} Hz (Rn = 0); a Touchstone "
                         "noise block cannot hold it")
    gamma = (1 - y) / (1 + y)
    rn = result.rn / r if version == "1.1" else result.rn
    nfmin = result.nfmin_db
    return [f"{f:.17g} {nf:.17g} {abs(gm):.17g} {math.degrees(np.angle(gm)):.17g} {x:.17g}"
            for f, nf, gm, x in zip(result.freq, nfmin, gamma, rn)]


def touchstone_noise_text(tp: TwoPort, result: NoiseResult, version: str = "1.1", polar: bool = False,
                          comment: str = "") -> str:
    """Touchstone text of S parameters with a noise block.

    The network part is :func:`devmodels.export.touchstone_text` of ``tp`` as S; the noise
    block follows it (version 1.1: after the network lines, Rn normalised by R; version 2.0:
    ``[Number of Noise Frequencies]`` and ``[Noise Data]``, Rn in ohm).  Gamma_opt is written
    at R, port 1's reference resistance of ``tp``, whatever the ``z0`` of ``result``.

    Parameters
    ----------
    tp : TwoPort
        The network (written as S at its own ``z0``).
    result : NoiseResult
        Its noise parameters, frequencies in Hz strictly increasing.
    version : {'1.1', '2.0'}
        Touchstone version.
    polar : bool
        Magnitude/angle for the network data (the noise block is always magnitude/angle).
    comment : str
        Comment lines for the top of the file.

    Raises
    ------
    InputError
        Yopt missing (Rn = 0) at some frequency; noise frequencies not increasing; in
        version 1.1, a first noise frequency above the last network frequency (the reader
        could not tell where the noise block starts; write 2.0).
    """
    from .export import touchstone_text

    s = tp.to("s")
    fn = np.asarray(result.freq, dtype=float)
    if fn.size > 1 and not np.all(fn[1:] > fn[:-1]):
        raise InputError("noise: noise frequencies must be strictly increasing")
    r = s.z0[0]
    text = touchstone_text(s, version, polar, comment)
    rows = _noise_rows(result, r, version)
    if version == "1.1":
        if fn[0] > s.freq[-1]:
            raise InputError(f"noise: the first noise frequency {fn[0]:g} Hz is above the last network "
                             f"frequency {s.freq[-1]:g} Hz; Touchstone 1.1 cannot mark the noise block "
                             "(write version 2.0)")
        return text + "! noise parameters: freq NFmin(dB) |Gamma_opt| angle(deg) Rn/R\n" + "\n".join(rows) + "\n"
    head, sep, rest = text.partition("[Network Data]\n")
    body, end, _ = rest.rpartition("[End]\n")
    head = head.replace("[Reference]", f"[Number of Noise Frequencies] {fn.size}\n[Reference]", 1)
    return (head + sep + body + "[Noise Data]\n" + "\n".join(rows) + "\n" + end)


def write_touchstone_noise(tp: TwoPort, result: NoiseResult, path, version: str = "1.1", polar: bool = False,
                           comment: str = "", *, option: str = "out") -> Path:
    """Write :func:`touchstone_noise_text` to ``path`` (atomically, as the other writers).

    Parameters
    ----------
    tp, result, version, polar, comment :
        As in :func:`touchstone_noise_text`.
    path : str or Path
        Output file (``.s2p`` for 1.1, ``.ts`` for 2.0).
    option : str
        Option name that starts an error message.
    """
    from .export import atomic_write

    return atomic_write(path, touchstone_noise_text(tp, result, version, polar, comment), option=option)

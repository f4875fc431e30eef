r"""Two-ports in a chain (cascade), and each stage as loaded in the chain.

The four feedback connections are in :mod:`devmodels.interconnect`.

Cascade: the chain matrix of networks in tandem is the product of their chain (ABCD)
matrices, in order (any two-port text, e.g. Pozar, *Microwave Engineering*, 4th ed.,
sec. 4.4, from memory):

.. math:: T = T_1 T_2 \cdots T_n .
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .exceptions import InputError, InputTypeError, SingularParameterError
from .twoport import TwoPort

__all__ = ["cascade", "ChainResult", "analyse_chain", "same_freq"]


def same_freq(parts: list[TwoPort]) -> None:
    """Refuse anything but two-ports, and two-ports given at different frequencies.

    Parameters
    ----------
    parts : list of TwoPort
        The networks, in order.
    """
    for i, p in enumerate(parts, start=1):
        if not isinstance(p, TwoPort):
            raise InputTypeError(f"network {i}: expected a TwoPort, got {type(p).__name__}")
    f0 = parts[0].freq
    for i, p in enumerate(parts[1:], start=2):
        if (f0 is None) != (p.freq is None) or (f0 is not None and (
                f0.shape != p.freq.shape or not np.allclose(f0, p.freq, rtol=1e-12, atol=0))):
            raise InputError(f"freq: network {i} is given at other frequencies than network 1; "
                             "give every network at the same frequencies")
        if len(p) != len(parts[0]):
            raise InputError(f"freq: network {i} has {len(p)} points, network 1 has {len(parts[0])}")


def cascade(*parts: TwoPort, kind: str = "abcd") -> TwoPort:
    """Networks in tandem, port 2 of each driving port 1 of the next.

    Parameters
    ----------
    *parts : TwoPort
        Two or more two-ports at the same frequencies (any kinds).
    kind : str
        Kind of the result (default ``'abcd'``).

    Returns
    -------
    TwoPort
        The chain, with the reference resistances of the first network.

    Raises
    ------
    SingularParameterError
        When a network has no chain parameters (no forward transmission).
    """
    parts = list(parts)
    if len(parts) < 2:
        raise InputError(f"stages: a cascade needs at least two networks, got {len(parts)}")
    same_freq(parts)
    mats = []
    for i, p in enumerate(parts, start=1):
        try:
            mats.append(p.to("abcd").data)
        except SingularParameterError as exc:
            raise SingularParameterError(f"stage {i}: has no chain (ABCD) parameters, so it cannot be "
                                         f"cascaded ({exc})") from None
    t = mats[0]
    for m in mats[1:]:
        t = np.matmul(t, m)  # vectorised over frequency: (F,2,2) @ (F,2,2)
    label = "+".join(p.config or p.label or "net" for p in parts)
    return TwoPort(parts[0].freq, t, "abcd", parts[0].z0, None, label).to(kind)


@dataclass(frozen=True, slots=True)
class ChainResult:
    """Result of :func:`analyse_chain`.

    Attributes
    ----------
    total : Terminated
        Terminated analysis of the whole chain between ``rs`` and ``rl``.
    av, zin, zout : complex ndarray, shape (N, F)
        For each of the N stages in the chain: its voltage gain V(k+1)/V(k) loaded by
        the input impedance of everything after it (ending in ``rl``), its input impedance
        with that load (ohm), and its output impedance driven by everything before it
        (starting from ``rs``) (ohm).  NaN where the value does not exist (open).
    """

    total: object
    av: np.ndarray
    zin: np.ndarray
    zout: np.ndarray


def analyse_chain(parts: list[TwoPort], rs=50.0, rl=1e3, z0=None) -> ChainResult:
    """Terminated analysis of networks in tandem, and each stage as loaded in the chain.

    Stage k sees as its load the input impedance of stages k+1..N loaded by ``rl`` and as
    its source the output impedance of stages 1..k-1 fed from ``rs``; its gain is
    V(k+1)/V(k) = av(k..N) / av(k+1..N), with av(a..b) the voltage gain of that part of
    the chain into ``rl`` (every value through :func:`devmodels.analysis.terminate`).

    Parameters
    ----------
    parts : list of TwoPort
        One or more stages, in order, at the same frequencies.
    rs, rl : float
        Source and load resistances in ohm (``rl`` may be ``math.inf``: open).
    z0 : float or (float, float), optional
        Reference resistance for S in the stability figures, ohm.
    """
    from .analysis import terminate

    parts = list(parts)
    if not parts:
        raise InputError("stages: give at least one stage")
    same_freq(parts)
    n = len(parts)

    def sub(a: int, b: int) -> TwoPort:
        return parts[a] if b - a == 1 else cascade(*parts[a:b])

    with np.errstate(invalid="ignore", divide="ignore"):  # what does not exist is NaN (documented)
        total = terminate(sub(0, n), rs, rl, z0)
        tails = [total] + [terminate(sub(k, n), rs, rl, z0) for k in range(1, n)]
        heads = [terminate(sub(0, k + 1), rs, rl, z0) for k in range(n - 1)] + [total]
        av = np.array([tails[k].av / tails[k + 1].av for k in range(n - 1)] + [tails[-1].av])
    zin = np.array([t.zin for t in tails])
    zout = np.array([h.zout for h in heads])
    return ChainResult(total, av, zin, zout)

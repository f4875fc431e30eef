r"""The four feedback (interconnection) connections of two two-ports.

Interconnections (same texts; Gray, Hurst, Lewis and Meyer, *Analysis and Design of
Analog Integrated Circuits*, ch. 8, from memory):

==============  =========================  ==================
connection      input / output ports       parameters added
==============  =========================  ==================
series-series   series / series            Z
shunt-shunt     parallel / parallel        Y
series-shunt    series / parallel          H
shunt-series    parallel / series          G
==============  =========================  ==================

The sum describes the connected circuit only when every port of each network still
carries equal and opposite currents in its two terminals after the connection
(Brune's port condition; Brune, "Synthesis of a finite two-terminal network whose
driving-point impedance is a prescribed function of frequency", J. Math. Phys. 10,
1931, and any network-theory text).  For two *three-terminal* networks (each port's
lower terminal is one common terminal, as in a transistor stage or a T/pi network)
wired with their common terminals as in the usual drawings:

- shunt-shunt always meets the condition (the common terminals are joined);
- series-series meets it when the *second* network ``b`` (the one in the common leg,
  below ``a``) has equal voltages at its two upper terminals for any port currents,
  which in Z parameters is :math:`z_{11} = z_{21}` and :math:`z_{12} = z_{22}` (a
  single element in the common leg, such as an emitter resistor, does);
- series-shunt and shunt-series join the lower terminals at one port and put them in
  series at the other, which shorts a port of one network: the condition is not met in
  general, and the sum holds only when one network has an isolated port (a transformer
  or a differential input).  The result then says that the condition cannot be
  confirmed from the parameters.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal, get_args

import numpy as np

from .chain import same_freq
from .exceptions import InputError, SingularParameterError
from .twoport import TwoPort

__all__ = ["connect", "Connection", "HOWS", "How", "ADDED_KIND", "series_element", "shunt_element"]

How = Literal["series-series", "shunt-shunt", "series-shunt", "shunt-series"]
HOWS: tuple[str, ...] = get_args(How)
#: The parameter kind added by each connection.
ADDED_KIND: dict[str, str] = {"series-series": "z", "shunt-shunt": "y", "series-shunt": "h",
                              "shunt-series": "g"}

#: Relative tolerance of the three-terminal port-condition test.
PORT_RTOL = 1e-9


@dataclass(frozen=True, slots=True)
class Connection:
    """Result of :func:`connect`.

    Attributes
    ----------
    two_port : TwoPort
        The connected network (kind: the one that adds, Z/Y/H/G).
    how : str
        The connection.
    port_condition : bool or None
        ``True``: met for three-terminal networks wired as described in the module
        docstring; ``False``: violated (the sum does not describe that circuit);
        ``None``: cannot be told from the parameters.
    note : str
        One sentence stating the condition for this connection.
    """

    two_port: TwoPort
    how: str
    port_condition: bool | None
    note: str


def _port_condition(how: str, b: TwoPort) -> tuple[bool | None, str]:
    if how == "shunt-shunt":
        return True, ("shunt-shunt: both ports in parallel; the port condition holds for three-terminal "
                      "networks with their common terminals joined")
    if how == "series-series":
        try:
            z = b.to("z").data
        except SingularParameterError:
            return None, ("series-series: the second network has no Z parameters, so the port condition "
                          "cannot be checked")
        scale = np.maximum(np.abs(z).max(axis=(1, 2)), 1e-300)
        ok = bool(np.all(np.abs(z[:, 0, 0] - z[:, 1, 0]) <= PORT_RTOL * scale)
                  and np.all(np.abs(z[:, 0, 1] - z[:, 1, 1]) <= PORT_RTOL * scale))
        if ok:
            return True, ("series-series: the second network is in the common leg and its upper terminals "
                          "stay at one voltage (z11 = z21, z12 = z22): the port condition holds")
        return False, ("series-series: the second network's upper terminals are joined under the first "
                       "network's common terminal but it has z11 != z21 or z12 != z22: the port condition "
                       "is violated and the Z sum does not describe that circuit")
    return None, (f"{how}: with two three-terminal networks and their common terminals joined this "
                  "connection shorts a port of one network; the sum holds only if one network has an "
                  "isolated port (a transformer or a differential input)")


def connect(a: TwoPort, b: TwoPort, how: str) -> Connection:
    """Two networks in one of the four feedback connections.

    Parameters
    ----------
    a, b : TwoPort
        The two networks at the same frequencies (any kinds).  For series-series ``b``
        is the one in the common leg (see the module docstring).
    how : {'series-series', 'shunt-shunt', 'series-shunt', 'shunt-series'}
        The connection: input side first, output side second.

    Returns
    -------
    Connection
        The parameters added (Z, Y, H or G) and the port condition.

    Raises
    ------
    SingularParameterError
        When a network has no parameters of the kind that adds.
    """
    if how not in HOWS:
        raise InputError(f"how: unknown connection {how!r}, expected one of {', '.join(HOWS)}")
    same_freq([a, b])
    kind = ADDED_KIND[how]
    data = []
    for i, p in enumerate((a, b), start=1):
        try:
            data.append(p.to(kind).data)
        except SingularParameterError as exc:
            raise SingularParameterError(
                f"network {i}: has no {kind.upper()} parameters, which a {how} connection adds ({exc})") from None
    ok, note = _port_condition(how, b)
    label = f"{a.config or a.label or 'a'} {how} {b.config or b.label or 'b'}"
    tp = TwoPort(a.freq, data[0] + data[1], kind, a.z0, None, label)
    return Connection(tp, how, ok, note)


def series_element(z, freq=None, z0=50.0) -> TwoPort:
    """A two-port made of one impedance ``z`` (ohm) between the upper terminals of the ports.

    Y = [[1/z, -1/z], [-1/z, 1/z]]: a feedback resistor from output to input (shunt-shunt).

    Parameters
    ----------
    z : complex or ndarray (F,)
        The impedance in ohm.
    freq : array_like or None
        Frequencies in Hz (None: frequency-independent, one point).
    z0 : float or (float, float)
        Reference resistance(s) in ohm.
    """
    z = _element(z, freq, "z")
    y = 1.0 / z
    data = np.stack([np.stack([y, -y], -1), np.stack([-y, y], -1)], -2)
    return TwoPort(freq, data, "y", z0, None, "series element")


def shunt_element(z, freq=None, z0=50.0) -> TwoPort:
    """A two-port made of one impedance ``z`` (ohm) from the joined upper terminals to common.

    Z = [[z, z], [z, z]]: an emitter or source resistor (series-series).

    Parameters
    ----------
    z, freq, z0 :
        As in :func:`series_element`.
    """
    z = _element(z, freq, "z")
    data = np.stack([np.stack([z, z], -1), np.stack([z, z], -1)], -2)
    return TwoPort(freq, data, "z", z0, None, "shunt element")


def _element(z, freq, name: str) -> np.ndarray:
    n = 1 if freq is None else np.atleast_1d(freq).size
    z = np.broadcast_to(np.asarray(z, dtype=complex), (n,)).copy()
    if np.any(~np.isfinite(z)) or np.any(z == 0):
        raise InputError(f"{name}: expected a finite nonzero impedance in ohm")
    return z

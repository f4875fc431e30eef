r"""One description of a circuit: elements between named nodes, and the numeric engine.

A device model, a stage and (later) a bias network are all written as a :class:`Netlist`:
a tuple of :class:`Element` objects, each a resistor, a capacitor or a voltage-controlled
current source between named nodes.  Every analysis reads that one description:

- :func:`reduce_to` (numpy) stamps the elements into a nodal admittance matrix over all
  nodes, with no reference node (the *indefinite* matrix, whose rows and columns sum to
  zero), and removes every node that is not kept by Kron reduction.  The element values
  may be scalars or arrays of shape (N,), and the angular frequency a scalar or an array
  of shape (N,): the N points are frequencies of a sweep or samples of a spread.
- :mod:`devmodels.symbolic` (sympy) stamps the same elements with their names as symbols.

Kron reduction (Kron, *Tensor Analysis of Networks*, 1939; Vlach and Singhal, *Computer
Methods for Circuit Analysis and Design*, ch. 2):

.. math:: Y'_{ij} = Y_{ij} - Y_{ik} Y_{kj} / Y_{kk}

one node k at a time.  For a diagonal entry the update cancels when node i hangs on node
k through a small series resistance (both terms are about 1/R): the real part of the
input admittance of a FET behind a 1-ohm gate resistance at 1 kHz would lose most of its
digits.  Because every row and every column of an indefinite matrix sums to zero, a new
diagonal entry is also minus the sum of the other entries of its row, and minus the sum of
the other entries of its column.  All three are computed and the one with the smallest
terms (least cancellation) is kept, point by point.  The row sum is free of cancellation
at a node that is no controlled source's output; the column sum at a node that controls no
source.

Element names are the keys used everywhere else (JSON output, formulas): ``gm``, ``r_pi``,
``ro``, ``c_pi``, ``c_mu``, ``rb``, ... and ``rdeg``, ``rfb`` for the stage's resistors.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Iterable, Literal, Sequence

import numpy as np

from .exceptions import InputError

__all__ = ["Element", "Netlist", "ElementKind", "NOISE_KINDS", "resistor", "capacitor", "vccs",
           "noise_current", "thermal_noise", "series_node", "optional", "reduce_to", "reduce_with_noise", "reduce_over_freq",
           "stamp", "kron_reduce", "check_freq"]

ElementKind = Literal["resistor", "capacitor", "vccs", "noise", "flicker"]
#: Element kinds that are noise current sources (they stamp nothing into Y).
NOISE_KINDS: tuple[str, ...] = ("noise", "flicker")


@dataclass(frozen=True, slots=True)
class Element:
    """One element of a netlist.

    Parameters
    ----------
    kind : {'resistor', 'capacitor', 'vccs', 'noise', 'flicker'}
        Resistor (value in ohm), capacitor (F), voltage-controlled current source (S), or a
        noise current source between two nodes: ``noise`` is white, ``value`` its one-sided
        power spectral density in A^2/Hz; ``flicker`` has the density ``value / f``
        (``value`` in A^2).  Noise sources are uncorrelated with each other.
    name : str
        The element's key: the symbol of the sympy back end and the key of JSON output.
    nodes : tuple of str
        ``(a, b)`` for a resistor, capacitor or noise source (whose current flows from a to
        b inside the source); ``(out_from, out_to, ctl_plus, ctl_minus)``
        for a source whose current ``value * (V[ctl_plus] - V[ctl_minus])`` leaves node
        ``out_from`` through the source and enters ``out_to``.
    value : float or ndarray (N,)
        Value in SI units; arrays hold one value per point.
    """

    kind: ElementKind
    name: str
    nodes: tuple[str, ...]
    value: object

    def __post_init__(self) -> None:
        want = 4 if self.kind == "vccs" else 2
        if self.kind not in ("resistor", "capacitor", "vccs") + NOISE_KINDS:
            raise InputError(f"kind: unknown element kind {self.kind!r}")
        if len(self.nodes) != want:
            raise InputError(f"nodes: a {self.kind} takes {want} nodes, got {len(self.nodes)}")

    def admittance(self, jw):
        """The admittance (S) this element stamps; ``jw`` is j times the angular frequency."""
        if self.kind == "resistor":
            return 1.0 / np.asarray(self.value) if np.ndim(self.value) else 1.0 / self.value
        if self.kind == "capacitor":
            return jw * self.value
        return self.value


def resistor(name: str, a: str, b: str, value) -> Element:
    """A resistor between two nodes.

    Parameters
    ----------
    name : str
        The element's key.
    a, b : str
        The nodes.
    value : float or ndarray
        Resistance in ohm.
    """
    return Element("resistor", name, (a, b), value)


def capacitor(name: str, a: str, b: str, value) -> Element:
    """A capacitor between two nodes.

    Parameters
    ----------
    name : str
        The element's key.
    a, b : str
        The nodes.
    value : float or ndarray
        Capacitance in F.
    """
    return Element("capacitor", name, (a, b), value)


def noise_current(name: str, a: str, b: str, psd, kind: str = "noise") -> Element:
    """A noise current source between two nodes.

    Parameters
    ----------
    name : str
        The source's key (e.g. ``noise_rb``, ``shot_ib``).
    a, b : str
        The nodes; the current flows from a to b inside the source.
    psd : float or ndarray
        One-sided power spectral density of the current: A^2/Hz for ``noise`` (white), or
        the coefficient in A^2 of a 1/f density ``psd / f`` for ``flicker``.
    kind : {'noise', 'flicker'}
        White or 1/f.
    """
    return Element(kind, name, (a, b), psd)


def thermal_noise(element: Element, temp) -> list[Element]:
    """The thermal (Johnson) noise current 4kT/R of a resistor element, as a noise source.

    Johnson, "Thermal agitation of electricity in conductors", and Nyquist, "Thermal
    agitation of electric charge in conductors", Phys. Rev. 32, 1928.

    Parameters
    ----------
    element : Element
        A resistor (any other kind gives no source).
    temp : float or ndarray
        Its temperature in K.
    """
    if element.kind != "resistor":
        return []
    from .constants import BOLTZMANN

    return [noise_current("noise_" + element.name, element.nodes[0], element.nodes[1],
                          4 * BOLTZMANN * np.asarray(temp) / np.asarray(element.value))]


def vccs(name: str, out_from: str, out_to: str, ctl_plus: str, ctl_minus: str, value) -> Element:
    """A voltage-controlled current source.

    Parameters
    ----------
    name : str
        The element's key.
    out_from, out_to : str
        The current ``value * (V[ctl_plus] - V[ctl_minus])`` leaves ``out_from`` through
        the source and enters ``out_to``.
    ctl_plus, ctl_minus : str
        The controlling nodes.
    value : float or ndarray
        Transconductance in S.
    """
    return Element("vccs", name, (out_from, out_to, ctl_plus, ctl_minus), value)


def _present(value, zero_means_absent: bool = True) -> bool:
    """True when an optional element is there for every point, False when for none."""
    v = np.asarray(value, dtype=float)
    there = np.isfinite(v) & (v != 0) if zero_means_absent else np.isfinite(v)
    if there.all():
        return True
    if not there.any():
        return False
    raise InputError("element values: an optional element must be present (finite, nonzero) at every "
                     "point or at none")


def series_node(name: str, outer: str, inner: str, value) -> tuple[list[Element], str]:
    """A series resistance from terminal ``outer`` to internal node ``inner``.

    Parameters
    ----------
    name : str
        The resistor's key.
    outer, inner : str
        The terminal and the internal node.
    value : float or ndarray
        Resistance in ohm; 0 for none (at every point, or at none).

    Returns
    -------
    (list of Element, str)
        The elements and the node the rest of the circuit connects to: ``inner`` with a
        resistor, or ``outer`` itself when ``value`` is 0 (no resistor).
    """
    if _present(value):
        return [resistor(name, outer, inner, value)], inner
    return [], outer


def optional(element: Element) -> list[Element]:
    """``[element]``, or ``[]`` when it is absent: a zero capacitance or source, an infinite resistance.

    Parameters
    ----------
    element : Element
        The element (values may be arrays: present at every point or at none).
    """
    if element.kind == "resistor":
        v = np.asarray(element.value, dtype=float)
        there = np.isfinite(v)
        if there.all():
            return [element]
        if not there.any():
            return []
        raise InputError(f"{element.name}: must be finite at every point or infinite (absent) at every point")
    return [element] if _present(element.value) else []


@dataclass(frozen=True, slots=True)
class Netlist:
    """Elements between named nodes.

    Parameters
    ----------
    elements : tuple of Element
        The elements.
    """

    elements: tuple[Element, ...]

    @property
    def nodes(self) -> tuple[str, ...]:
        """Every node, in order of first appearance."""
        seen: dict[str, None] = {}
        for el in self.elements:
            for n in el.nodes:
                seen.setdefault(n, None)
        return tuple(seen)

    def __add__(self, other: "Netlist") -> "Netlist":
        return Netlist(self.elements + tuple(other.elements))

    def renamed(self, mapping: dict[str, str]) -> "Netlist":
        """The same elements with nodes renamed.

        Parameters
        ----------
        mapping : dict of str -> str
            Old node name -> new node name (two names mapped to one join those nodes).
        """
        return Netlist(tuple(Element(e.kind, e.name, tuple(mapping.get(n, n) for n in e.nodes), e.value)
                             for e in self.elements))

    def touches(self, nodes: Iterable[str]) -> bool:
        """True when any element has a node among ``nodes`` (an iterable of node names)."""
        want = set(nodes)
        return any(n in want for e in self.elements for n in e.nodes)

    def values(self) -> dict[str, object]:
        """Element name -> value (SI units)."""
        return {e.name: e.value for e in self.elements}


def stamp(netlist: Netlist, order: Sequence[str], omega, n: int) -> np.ndarray:
    """Indefinite nodal admittance matrix of ``netlist``, nodes in ``order``, shape (m, m, n).

    The point axis is last (each matrix entry is one contiguous array of the n points),
    which keeps the small-matrix arithmetic of the reduction fast; :func:`reduce_to`
    returns the usual (n, k, k).

    Parameters
    ----------
    netlist : Netlist
        The circuit.
    order : sequence of str
        Every node of the netlist, in the order of the matrix.
    omega : float or ndarray (n,)
        Angular frequency in rad/s.
    n : int
        Number of points.
    """
    idx = {name: i for i, name in enumerate(order)}
    m = len(order)
    Y = np.zeros((m, m, n), dtype=complex)
    jw = 1j * np.asarray(omega)
    for el in netlist.elements:
        if el.kind in NOISE_KINDS:
            continue
        y = el.admittance(jw)
        if el.kind == "vccs":
            a, b, p, q = (idx[x] for x in el.nodes)
            Y[a, p] += y
            Y[a, q] -= y
            Y[b, p] -= y
            Y[b, q] += y
        else:
            a, b = idx[el.nodes[0]], idx[el.nodes[1]]
            if a == b:
                continue
            Y[a, a] += y
            Y[b, b] += y
            Y[a, b] -= y
            Y[b, a] -= y
    return Y


def _l1(x: np.ndarray) -> np.ndarray:
    """|re| + |im|: a cheap size of complex numbers (within a factor sqrt 2 of abs)."""
    return np.abs(x.real) + np.abs(x.imag)


def kron_reduce(Y: np.ndarray, keep: int, names: Sequence[str] = (), injections: np.ndarray | None = None):
    """Remove the nodes after the first ``keep`` from an indefinite matrix.

    Nodes are removed last to first; each new diagonal entry is the best of three
    equivalent forms (module docstring).

    Parameters
    ----------
    Y : ndarray, complex, shape (m, m, n)
        Indefinite admittance matrix in S, point axis last; it is overwritten.
    keep : int
        Number of leading nodes kept.
    names : sequence of str
        Node names, for the error message.
    injections : ndarray, complex, shape (m, S, n), optional
        Currents injected into each node by S sources (one column per source); carried
        through the reduction (J_i <- J_i - Y_ik / Y_kk J_k) to the kept nodes, where they
        are the short-circuit currents of the sources (overwritten).

    Returns
    -------
    ndarray, complex, shape (keep, keep, n)
        The reduced matrix; with ``injections``, the pair (matrix, injections (keep, S, n)).

    Raises
    ------
    InputError
        A node to remove has no admittance to anything (it floats) at some point.
    """
    m = Y.shape[0]
    for k in range(m - 1, keep - 1, -1):
        pivot = Y[k, k]
        if np.any(pivot == 0):
            who = names[k] if k < len(names) else str(k)
            raise InputError(f"netlist: node {who!r} is connected to nothing at some point "
                             "(it floats); the circuit cannot be reduced")
        col = Y[:k, k] / pivot                                   # Y_ik / Y_kk, shape (k, n)
        row = Y[k, :k]                                           # Y_kj
        idx = np.arange(k)
        diag_old = Y[idx, idx].copy()
        corr = col * row                                         # Y_ik Y_ki / Y_kk
        kept = Y[:k, :k]
        kept -= col[:, None, :] * row[None, :, :]
        if injections is not None:
            injections = injections[:k] - col[:, None, :] * injections[k][None, :, :]
        # Where the update of a diagonal entry may cancel (the correction is at least half the
        # old entry), compare it with minus the row sum and minus the column sum and keep the
        # form with the smallest terms.  A loop over the few nodes concerned, not over points.
        size_direct = _l1(diag_old) + _l1(corr)
        risky = _l1(corr) >= 0.5 * _l1(diag_old)
        for i in np.flatnonzero(risky.any(axis=1)):
            others = idx[idx != i]
            off_row, off_col = kept[i, others], kept[others, i]
            by_row, size_row = -off_row.sum(axis=0), _l1(off_row).sum(axis=0)
            by_col, size_col = -off_col.sum(axis=0), _l1(off_col).sum(axis=0)
            best = np.where(size_row <= size_direct[i], by_row, kept[i, i])
            kept[i, i] = np.where(size_col < np.minimum(size_row, size_direct[i]), by_col, best)
        Y = kept
    return Y if injections is None else (Y, injections)


def reduce_to(netlist: Netlist, keep: Sequence[str], omega, n: int) -> np.ndarray:
    """The indefinite matrix (n, len(keep), len(keep)) seen at the nodes ``keep``.

    Parameters
    ----------
    netlist : Netlist
        The circuit.
    keep : sequence of str
        The nodes kept, in the order of the result; every other node is removed.
    omega : float or ndarray (n,)
        Angular frequency in rad/s.
    n : int
        Number of points.
    """
    nodes = netlist.nodes
    missing = [k for k in keep if k not in nodes]
    if missing:
        raise InputError(f"netlist: no element is connected to node {missing[0]!r}")
    order = list(keep) + [x for x in nodes if x not in keep]
    Y = kron_reduce(stamp(netlist, order, omega, n), len(keep), order)
    return np.ascontiguousarray(np.moveaxis(Y, 2, 0))


def reduce_with_noise(netlist: Netlist, keep: Sequence[str], omega, n: int):
    """The indefinite matrix at ``keep`` and the correlation matrix of its noise currents.

    Every noise source of the netlist is carried to the kept nodes through the same Kron
    reduction as the admittances (the noise of an internal node reaches the kept nodes as
    the Schur complement carries its current; Hillbrand and Russer, "An efficient method
    for computer aided noise analysis of linear amplifier networks", IEEE Trans. CAS 23(4),
    1976, use this form).  The result ``C`` is the one-sided spectral density matrix of the
    short-circuit noise currents at the kept nodes, C = sum_s psd_s J_s J_s^H (sources
    uncorrelated).

    Parameters
    ----------
    netlist : Netlist
        The circuit, with noise sources among its elements.
    keep : sequence of str
        The nodes kept, in the order of the result.
    omega : float or ndarray (n,)
        Angular frequency in rad/s (must be > 0 where a flicker source is present).
    n : int
        Number of points.

    Returns
    -------
    (ndarray, ndarray)
        Y (n, k, k) in S and C (n, k, k) in A^2/Hz.
    """
    nodes = netlist.nodes
    missing = [k for k in keep if k not in nodes]
    if missing:
        raise InputError(f"netlist: no element is connected to node {missing[0]!r}")
    order = list(keep) + [x for x in nodes if x not in keep]
    idx = {x: i for i, x in enumerate(order)}
    sources = [e for e in netlist.elements if e.kind in NOISE_KINDS]
    J = np.zeros((len(order), max(len(sources), 1), n), dtype=complex)
    psd = np.zeros((max(len(sources), 1), n))
    f = np.broadcast_to(np.asarray(omega, dtype=float) / (2 * math.pi), (n,))
    for s, el in enumerate(sources):
        a, b = idx[el.nodes[0]], idx[el.nodes[1]]
        J[a, s] -= 1.0
        J[b, s] += 1.0
        if el.kind == "flicker":
            if np.any(f <= 0):
                raise InputError(f"{el.name}: a 1/f noise source needs a frequency above 0 Hz")
            psd[s] = np.asarray(el.value) / f
        else:
            psd[s] = el.value
    Y, Jk = kron_reduce(stamp(netlist, order, omega, n), len(keep), order, J)
    C = np.einsum("isn,jsn->nij", Jk * psd[None], Jk.conj())
    return np.ascontiguousarray(np.moveaxis(Y, 2, 0)), C


def check_freq(freq) -> np.ndarray:
    """Frequencies as a 1-D float array in Hz, refusing negative or non-finite ones.

    Parameters
    ----------
    freq : float or array_like
        Frequencies in Hz.
    """
    f = np.atleast_1d(np.asarray(freq, dtype=float))
    if f.ndim != 1:
        raise InputError(f"freq: expected a 1-D list of frequencies in Hz, got shape {f.shape}")
    if f.size == 0:
        raise InputError("freq: expected at least one frequency in Hz")
    if not np.all(np.isfinite(f)) or np.any(f < 0):
        bad = f[~(np.isfinite(f) & (f >= 0))][0]
        raise InputError(f"freq: expected frequencies >= 0 Hz, got {bad:g}")
    return f


#: Frequency points per block when reducing a sweep: small enough for the temporaries to stay
#: in cache (measured on the old engine: 4096 points 3.5x faster than 65536 on 1e6 points).
FREQ_BLOCK = 4096


def reduce_over_freq(netlist: Netlist, keep: Sequence[str], freq) -> np.ndarray:
    """:func:`reduce_to` over a frequency sweep, block by block.

    Parameters
    ----------
    netlist : Netlist
        The circuit.
    keep : sequence of str
        The nodes kept, in the order of the result.
    freq : array_like
        Frequencies in Hz, shape (F,).

    Returns
    -------
    ndarray, complex, shape (F, len(keep), len(keep))
    """
    f = check_freq(freq)
    out = np.empty((f.size, len(keep), len(keep)), dtype=complex)
    for start in range(0, f.size, FREQ_BLOCK):
        omega = 2 * math.pi * f[start:start + FREQ_BLOCK]
        out[start:start + omega.size] = reduce_to(netlist, keep, omega, omega.size)
    return out

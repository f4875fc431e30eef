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

An inductor (a device's lead inductance ``l_b``, ``l_c``, ``l_e``) stamps 1/(j w L).  At 0 Hz it
is a short, which an admittance cannot hold: an inductor refuses w = 0 (:class:`InputError`
naming it).  Lead inductances are parasitic reactances like the device capacitances, so a
mid-band (0 Hz) evaluation leaves them out (value 0: no element, the terminal is the inner node).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Iterable, Literal, Sequence

import numpy as np

from .exceptions import InputError

__all__ = ["Element", "Netlist", "ElementKind", "NOISE_KINDS", "resistor", "capacitor", "inductor", "vccs",
           "noise_current", "thermal_noise", "series_node", "optional", "reduce_to", "reduce_with_noise", "reduce_over_freq",
           "stamp", "kron_reduce", "check_freq"]

ElementKind = Literal["resistor", "capacitor", "inductor", "vccs", "noise", "flicker"]
#: Element kinds that are noise current sources (they stamp nothing into Y).
NOISE_KINDS: tuple[str, ...] = ("noise", "flicker")


@dataclass(frozen=True, slots=True)
class Element:
    """One element of a netlist.

    Parameters
    ----------
    kind : {'resistor', 'capacitor', 'inductor', 'vccs', 'noise', 'flicker'}
        Resistor (value in ohm), capacitor (F), inductor (H; it refuses 0 Hz, where it would
        be a short), voltage-controlled current source (S), or a
        noise current source between two nodes: ``noise`` is white, ``value`` its one-sided
        power spectral density in A^2/Hz; ``flicker`` has the density ``value / f``
        (``value`` in A^2).  Noise sources are uncorrelated with each other.
    name : str
        The element's key: the symbol of the sympy back end and the key of JSON output.
    nodes : tuple of str
        ``(a, b)`` for a resistor, capacitor, inductor or noise source (whose current flows from a to
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
        if self.kind not in ("resistor", "capacitor", "inductor", "vccs") + NOISE_KINDS:
            raise InputError(f"kind: unknown element kind {self.kind!r}")
        if len(self.nodes) != want:
            raise InputError(f"nodes: a {self.kind} takes {want} nodes, got {len(self.nodes)}")

    def admittance(self, jw):
        """The admittance (S) this element stamps; ``jw`` is j times the angular frequency.

        An inductor's is 1/(j w L); at w = 0 it would be a short (infinite admittance), which
        it refuses with an :class:`InputError` naming it.
        """
        if self.kind == "resistor":
            return 1.0 / np.asarray(self.value) if np.ndim(self.value) else 1.0 / self.value
        if self.kind == "capacitor":
            return jw * self.value
        if self.kind == "inductor":
            if np.any(np.asarray(jw) == 0):
                raise InputError(f"{self.name}: an inductor is a short at 0 Hz, which the admittance engine "
                                 "cannot hold; evaluate above 0 Hz (a mid-band or DC result leaves lead "
                                 "inductances out)")
            return 1.0 / (jw * self.value)
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


def inductor(name: str, a: str, b: str, value) -> Element:
    """An inductor between two nodes (admittance 1/(j w L); it refuses 0 Hz, module docstring).

    Parameters
    ----------
    name : str
        The element's key (``l_b``, ``l_c``, ``l_e``, ...).
    a, b : str
        The nodes.
    value : float or ndarray
        Inductance in H.
    """
    return Element("inductor", name, (a, b), value)


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


def _stamp_entries(netlist: Netlist, order: Sequence[str], omega) -> dict:
    """The structurally non-zero entries of the indefinite matrix: ``{(row, col): admittance}``.

    Each value is an admittance in S: a scalar where every element stamped there has one
    value for all points (a fixed resistor, or a capacitor at one frequency), else an array
    (n,); real where only resistors and sources stamp there, complex otherwise.  Entries no
    element touches are absent (zero).  Contributions add in the order of the elements, as
    :func:`stamp` adds them.

    Parameters
    ----------
    netlist : Netlist
        The circuit.
    order : sequence of str
        Every node of the netlist; the row and column numbers are positions in it.
    omega : float or ndarray (n,)
        Angular frequency in rad/s.
    """
    idx = {name: i for i, name in enumerate(order)}
    Y: dict = {}
    jw = 1j * np.asarray(omega)

    def add(i, j, y):  # a new array every time: element values are never changed in place
        Y[i, j] = Y[i, j] + y if (i, j) in Y else y

    for el in netlist.elements:
        if el.kind in NOISE_KINDS:
            continue
        y = el.admittance(jw)
        if el.kind == "vccs":
            a, b, p, q = (idx[x] for x in el.nodes)
            add(a, p, y)
            add(a, q, -y)
            add(b, p, -y)
            add(b, q, y)
        else:
            a, b = idx[el.nodes[0]], idx[el.nodes[1]]
            if a == b:
                continue
            add(a, a, y)
            add(b, b, y)
            add(a, b, -y)
            add(b, a, -y)
    return Y


def _dense(Y: dict, m: int, n: int, points_first: bool = False) -> np.ndarray:
    """The entries ``Y`` as a complex matrix (m, m, n), zero where absent; with ``points_first``
    the same memory seen as (n, m, m) (a view: measured 2.5x faster than a contiguous copy)."""
    out = np.zeros((m, m, n), dtype=complex)
    for (i, j), v in Y.items():
        out[i, j] = v
    return np.moveaxis(out, 2, 0) if points_first else out


def stamp(netlist: Netlist, order: Sequence[str], omega, n: int) -> np.ndarray:
    """Indefinite nodal admittance matrix of ``netlist``, nodes in ``order``, shape (m, m, n).

    The point axis is last (each matrix entry is one contiguous array of the n points).
    The reduction itself works on the non-zero entries only (:func:`kron_reduce`); this
    dense form is for callers that want the whole matrix.

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
    return _dense(_stamp_entries(netlist, order, omega), len(order), n)


def _l1(x: np.ndarray) -> np.ndarray:
    """|re| + |im|: a cheap size of complex numbers (within a factor sqrt 2 of abs)."""
    return np.abs(x.real) + np.abs(x.imag)


def _sum(terms: list):
    """``terms[0] + terms[1] + ...`` in this order (0.0 for none): the order in which numpy sums
    the rows of an array, so leaving out zero entries does not change a bit of the sum."""
    total = 0.0
    for i, t in enumerate(terms):
        total = t if i == 0 else total + t
    return total


def kron_reduce(Y, keep: int, names: Sequence[str] = (), injections: np.ndarray | None = None):
    """Remove the nodes after the first ``keep`` from an indefinite matrix.

    Nodes are removed last to first.  Only the structurally non-zero entries are kept and
    touched (a stage has 7 to 10 nodes, but each node few neighbours): removing node k
    changes Y_ij only where Y_ik and Y_kj are both non-zero (the neighbours of k), and
    creates Y_ij there when it was zero (fill-in).  Each changed diagonal entry is the best
    of three equivalent forms (module docstring).  Leaving out the zero entries changes no
    bit of the result: a zero product or a zero term in a sum is exact.

    Parameters
    ----------
    Y : ndarray, complex, shape (m, m, n), or dict
        Indefinite admittance matrix in S, point axis last, or its non-zero entries
        ``{(row, col): scalar or ndarray (n,)}`` (as the engine stamps them); a dict is
        consumed.
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
        The reduced matrix (n is 1 when every entry of a dict is a scalar); with ``injections``, the
        pair (matrix, injections (keep, S, n)).

    Raises
    ------
    InputError
        A node to remove has no admittance to anything (it floats) at some point.
    """
    if isinstance(Y, dict):
        n = max([np.size(v) for v in Y.values()] + [1])
    else:
        n = Y.shape[2]
        Y = {(i, j): Y[i, j] for i in range(Y.shape[0]) for j in range(Y.shape[0]) if np.any(Y[i, j] != 0)}
    m = max([len(names), keep] + [1 + max(key) for key in Y])
    if injections is not None:
        m, n = max(m, injections.shape[0]), injections.shape[2]
    Y, J = _kron_entries(Y, m, keep, names, injections)
    return _dense(Y, keep, n) if J is None else (_dense(Y, keep, n), J)


def _kron_entries(Y: dict, m: int, keep: int, names: Sequence[str], J: np.ndarray | None):
    """:func:`kron_reduce` of the m-node entries ``Y`` (consumed): (entries at the kept nodes, J)."""
    for k in range(m - 1, keep - 1, -1):
        pivot = Y.pop((k, k), 0.0)
        if np.any(pivot == 0):
            who = names[k] if k < len(names) else str(k)
            raise InputError(f"netlist: node {who!r} is connected to nothing at some point "
                             "(it floats); the circuit cannot be reduced")
        col = {i: Y.pop((i, k)) / pivot for i in range(k) if (i, k) in Y}   # Y_ik / Y_kk
        row = {j: Y.pop((k, j)) for j in range(k) if (k, j) in Y}           # Y_kj
        diagonal = {}                               # i -> (old Y_ii, its correction Y_ik Y_ki / Y_kk)
        for i, c in col.items():
            for j, r in row.items():
                corr = c * r
                if i == j:
                    diagonal[i] = (Y.get((i, i), 0.0), corr)
                Y[i, j] = Y[i, j] - corr if (i, j) in Y else -corr
            if J is not None:
                J[i] = J[i] - c * J[k]
        # Where the update of a diagonal entry may cancel (the correction is at least half the
        # old entry), compare it with minus the row sum and minus the column sum and keep the
        # form with the smallest terms.  A loop over the few nodes concerned, not over points.
        for i, (old, corr) in diagonal.items():
            size_old, size_corr = _l1(old), _l1(corr)
            if not np.any(size_corr >= 0.5 * size_old):
                continue
            size_direct = size_old + size_corr
            off_row = [Y[i, j] for j in range(k) if j != i and (i, j) in Y]
            off_col = [Y[j, i] for j in range(k) if j != i and (j, i) in Y]
            by_row, size_row = -_sum(off_row), _sum([_l1(v) for v in off_row])
            by_col, size_col = -_sum(off_col), _sum([_l1(v) for v in off_col])
            best = np.where(size_row <= size_direct, by_row, Y[i, i])
            Y[i, i] = np.where(size_col < np.minimum(size_row, size_direct), by_col, best)
    return Y, (None if J is None else J[:keep])


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
    Y, _ = _kron_entries(_stamp_entries(netlist, order, omega), len(order), len(keep), order, None)
    return _dense(Y, len(keep), n, points_first=True)


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
    Y, Jk = _kron_entries(_stamp_entries(netlist, order, omega), len(order), len(keep), order, J)
    C = np.einsum("isn,jsn->nij", Jk * psd[None], Jk.conj())
    return _dense(Y, len(keep), n, points_first=True), C


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

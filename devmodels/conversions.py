r"""Closed-form, vectorised conversions among two-port parameter sets.

Every parameter set is one way of writing the same two linear equations among the
four port quantities :math:`x = (V_1, V_2, I_1, I_2)` (currents flow into the
two-port).  A set of kind *K* says that two of them (its *outputs*) are a 2x2 matrix
times the two others (its *inputs*):

======  ====================  =====================
kind    outputs               inputs
======  ====================  =====================
``z``   :math:`V_1, V_2`      :math:`I_1, I_2`
``y``   :math:`I_1, I_2`      :math:`V_1, V_2`
``h``   :math:`V_1, I_2`      :math:`I_1, V_2`
``g``   :math:`I_1, V_2`      :math:`V_1, I_2`
``abcd``:math:`V_1, I_1`      :math:`V_2, -I_2`
``s``   :math:`b_1, b_2`      :math:`a_1, a_2`
======  ====================  =====================

with the power waves of a real reference resistance :math:`R_k` at port *k*
(Kurokawa, "Power waves and the scattering matrix", IEEE Trans. MTT 13(2), 1965):
:math:`a_k = (V_k + R_k I_k)/(2\sqrt{R_k})`, :math:`b_k = (V_k - R_k I_k)/(2\sqrt{R_k})`.

A conversion first writes the source set as a 2x4 *relation matrix* ``R`` with
``R @ x = 0`` and then solves that relation for the outputs of the target kind:
with ``P`` the columns of the target's outputs and ``Q`` those of its inputs,
the target matrix is :math:`M = -P^{-1} Q`.  The target set exists exactly when
``P`` is non-singular; when it is singular relative to its own scale, a
:class:`~devmodels.exceptions.SingularParameterError` is raised, never inf or NaN.

The arithmetic is element-wise on whole arrays; constant entries (0, +1, -1) of the
relation matrix are kept as Python numbers and folded away, so each conversion costs
about as much as its textbook closed form.  Long arrays are processed in blocks of
a few thousand points so that the temporaries stay in the CPU cache (this is a loop
over blocks, not over points).
"""

from __future__ import annotations

from numbers import Number
from typing import Sequence

import numpy as np

from .constants import KINDS
from .exceptions import InputError, SingularParameterError

__all__ = ["convert", "normalize_z0", "SINGULAR_TOL", "BLOCK"]

#: Hadamard ratio of the pivot (|det| over the product of its column norms) below which a
#: target set is said not to exist: the result would carry fewer than ~4 significant digits.
SINGULAR_TOL = 1e-12
#: Points per block; 2048 complex points x ~30 temporaries stay within a 1 MB cache.
BLOCK = 2048

# (output variables, input variables) with a sign per variable; variables are
# indices into x = (V1, V2, I1, I2).
_V1, _V2, _I1, _I2 = 0, 1, 2, 3
_LAYOUT: dict[str, tuple[tuple[tuple[int, int], ...], tuple[tuple[int, int], ...]]] = {
    "z": (((_V1, 1), (_V2, 1)), ((_I1, 1), (_I2, 1))),
    "y": (((_I1, 1), (_I2, 1)), ((_V1, 1), (_V2, 1))),
    "h": (((_V1, 1), (_I2, 1)), ((_I1, 1), (_V2, 1))),
    "g": (((_I1, 1), (_V2, 1)), ((_V1, 1), (_I2, 1))),
    "abcd": (((_V1, 1), (_I1, 1)), ((_V2, 1), (_I2, -1))),
}


# --- arithmetic that folds Python-number constants ---------------------------------
def _is_num(a) -> bool:
    return isinstance(a, Number)


def _neg(a):
    return -a


def _mul(a, b):
    if _is_num(a):
        if a == 0:
            return 0
        if a == 1:
            return b
        if a == -1:
            return -b
    if _is_num(b):
        if b == 0:
            return 0
        if b == 1:
            return a
        if b == -1:
            return -a
    return a * b


def _add(a, b):
    if _is_num(a) and a == 0:
        return b
    if _is_num(b) and b == 0:
        return a
    return a + b


def _sub(a, b):
    if _is_num(b) and b == 0:
        return a
    if _is_num(a) and a == 0:
        return -b
    return a - b


def normalize_z0(z0: float | Sequence[float]) -> tuple[float, float]:
    """Return the reference resistances of both ports as two positive floats.

    Parameters
    ----------
    z0 : float or pair of float
        Real reference impedance in ohm, the same at both ports or one per port.
    """
    if _is_num(z0):
        pair = (z0, z0)
    else:
        pair = tuple(z0)
        if len(pair) == 1:
            pair = (pair[0], pair[0])
    if len(pair) != 2:
        raise InputError(f"z0: expected one or two reference resistances, got {len(pair)}")
    out = []
    for v in pair:
        if isinstance(v, complex) or (hasattr(v, "imag") and np.imag(v) != 0):
            raise InputError(f"z0: expected a real reference resistance in ohm, got {v}")
        v = float(np.real(v))
        if not np.isfinite(v) or v <= 0:
            raise InputError(f"z0: expected a positive reference resistance in ohm, got {v:g}")
        out.append(v)
    return out[0], out[1]


def _columns(kind: str, m11, m12, m21, m22, r):
    """Relation-matrix columns (for V1, V2, I1, I2) of a set of ``kind``.

    Each column is a pair (row 0, row 1); entries are arrays or Python numbers.
    """
    if kind == "s":
        q1, q2 = np.sqrt(r[0]), np.sqrt(r[1])
        # (1 - S) R^-1/2 V - (1 + S) R^1/2 I = 0
        return [
            (_mul(1.0 / q1, _sub(1, m11)), _mul(-1.0 / q1, m21)),
            (_mul(-1.0 / q2, m12), _mul(1.0 / q2, _sub(1, m22))),
            (_mul(-q1, _add(1, m11)), _mul(-q1, m21)),
            (_mul(-q2, m12), _mul(-q2, _add(1, m22))),
        ]
    outs, ins = _LAYOUT[kind]
    cols: list = [None] * 4
    (o1, so1), (o2, so2) = outs
    (i1, si1), (i2, si2) = ins
    # sign_o * x_o - M (sign_i * x_i) = 0
    cols[o1] = (so1, 0)
    cols[o2] = (0, so2)
    cols[i1] = (_mul(-si1, m11), _mul(-si1, m21))
    cols[i2] = (_mul(-si2, m12), _mul(-si2, m22))
    return cols


def _pq(kind: str, cols, r):
    """Split relation columns into P (target outputs) and Q (target inputs)."""
    if kind == "s":
        q1, q2 = np.sqrt(r[0]), np.sqrt(r[1])
        sq = (q1, q2)
        P, Q = [], []
        for k in (0, 1):
            cv, ci = cols[k], cols[2 + k]
            P.append(tuple(_sub(_mul(sq[k], cv[i]), _mul(1.0 / sq[k], ci[i])) for i in (0, 1)))
            Q.append(tuple(_add(_mul(sq[k], cv[i]), _mul(1.0 / sq[k], ci[i])) for i in (0, 1)))
        return P, Q
    outs, ins = _LAYOUT[kind]
    P = [tuple(_mul(s, c) for c in cols[v]) for v, s in outs]
    Q = [tuple(_mul(s, c) for c in cols[v]) for v, s in ins]
    return P, Q


def _row_weights(kind: str, r) -> tuple[float, float]:
    """Weights that give both rows of a relation matrix the unit of a voltage."""
    if kind == "s":
        return (1.0, 1.0)
    ref = float(np.sqrt(r[0] * r[1]))
    return tuple(ref if var in (_I1, _I2) else 1.0 for var, _ in _LAYOUT[kind][0])


def _block(src, dst, x11, x12, x21, x22, r_src, r_dst, out, offset):
    cols = _columns(src, x11, x12, x21, x22, r_src)
    P, Q = _pq(dst, cols, r_dst)
    t1, t2 = _row_weights(src, r_src)
    # P[k] is column k: (P[k][0], P[k][1]) = (p_0k, p_1k)
    p11, p21 = P[0]
    p12, p22 = P[1]
    q11, q21 = Q[0]
    q12, q22 = Q[1]
    det = _sub(_mul(p11, p22), _mul(p12, p21))
    # Hadamard ratio |det P| / (|col 1| |col 2|), rows weighted to one unit: the sine of
    # the angle between the pivot columns, independent of how the columns are scaled.
    norm1 = t1 * np.abs(p11) + t2 * np.abs(p21)
    norm2 = t1 * np.abs(p12) + t2 * np.abs(p22)
    bad = (t1 * t2) * np.abs(det) <= SINGULAR_TOL * (norm1 * norm2)
    if np.any(bad):
        idx = int(np.flatnonzero(np.broadcast_to(bad, np.shape(out[..., 0, 0])))[0]) + offset
        raise SingularParameterError(
            f"the {dst} parameters do not exist for this network "
            f"({src} -> {dst} pivot is singular at point {idx})",
        )
    # M = -P^-1 Q = -(1/det) [[p22, -p12], [-p21, p11]] Q
    inv = -1.0 / det
    m11 = _sub(_mul(p22, q11), _mul(p12, q21))
    m12 = _sub(_mul(p22, q12), _mul(p12, q22))
    m21 = _sub(_mul(p11, q21), _mul(p21, q11))
    m22 = _sub(_mul(p11, q22), _mul(p21, q12))
    out[:, 0, 0] = _mul(m11, inv)
    out[:, 0, 1] = _mul(m12, inv)
    out[:, 1, 0] = _mul(m21, inv)
    out[:, 1, 1] = _mul(m22, inv)


def convert(data, src: str, dst: str, z0: float | Sequence[float] = 50.0, *,
            z0_out: float | Sequence[float] | None = None) -> np.ndarray:
    """Convert two-port parameters from one kind to another.

    Parameters
    ----------
    data : array_like, complex, shape (..., 2, 2)
        Parameters of kind ``src``: ohm for z, siemens for y, mixed for h, g, abcd,
        dimensionless for s.
    src, dst : {'y', 'z', 'h', 'g', 'abcd', 's'}
        Source and target kinds.
    z0 : float or (float, float), optional
        Real reference resistance(s) in ohm for S parameters (default 50 ohm).
    z0_out : float or (float, float), optional
        Reference resistance(s) of the result when it differs from ``z0``
        (``convert(s, 's', 's', 50, z0_out=75)`` renormalises S to 75 ohm).

    Returns
    -------
    numpy.ndarray, complex, shape (..., 2, 2)
        The parameters of kind ``dst``; always a new array.

    Raises
    ------
    SingularParameterError
        The target set does not exist for this network (for example Z of a network
        with det Y = 0, or ABCD of a network with y21 = 0).
    InputError
        Unknown kind, wrong shape, or non-finite values.
    """
    for name, k in (("src", src), ("dst", dst)):
        if k not in KINDS:
            raise InputError(f"{name}: unknown parameter kind {k!r}, expected one of {', '.join(KINDS)}")
    arr = np.asarray(data)
    if arr.ndim < 2 or arr.shape[-2:] != (2, 2):
        raise InputError(f"data: expected shape (..., 2, 2), got {arr.shape}")
    arr = arr.astype(np.complex128, copy=False)
    r = normalize_z0(z0)
    r_out = r if z0_out is None else normalize_z0(z0_out)
    lead = arr.shape[:-2]
    flat = np.ascontiguousarray(arr).reshape(-1, 2, 2)
    if not np.all(np.isfinite(flat)):
        raise InputError("data: parameters contain NaN or infinity")
    out = np.empty_like(flat)
    if src == dst and (src != "s" or r == r_out):
        out[...] = flat
        return out.reshape(*lead, 2, 2)
    n = flat.shape[0]
    for start in range(0, n, BLOCK):
        blk = flat[start:start + BLOCK]
        _block(src, dst, blk[:, 0, 0], blk[:, 0, 1], blk[:, 1, 0], blk[:, 1, 1], r, r_out,
               out[start:start + BLOCK], start)
    return out.reshape(*lead, 2, 2)

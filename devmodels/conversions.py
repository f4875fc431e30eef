r"""Conversions among the two-port parameter sets y, z, h, g, abcd and s, in closed form.

Port voltages :math:`V_k` and currents :math:`I_k` (flowing into port *k*).  Each kind
writes two of the port quantities (its outputs) as a 2x2 matrix times two others:

========  ==================  ===================  ============================
kind      outputs             inputs               voltage out at port 1, 2
========  ==================  ===================  ============================
``z``     :math:`V_1, V_2`    :math:`I_1, I_2`     yes, yes
``y``     :math:`I_1, I_2`    :math:`V_1, V_2`     no, no
``h``     :math:`V_1, I_2`    :math:`I_1, V_2`     yes, no
``g``     :math:`I_1, V_2`    :math:`V_1, I_2`     no, yes
``abcd``  :math:`V_1, I_1`    :math:`V_2, -I_2`    (transfer form)
``s``     :math:`b_1, b_2`    :math:`a_1, a_2`     (waves)
========  ==================  ===================  ============================

S uses the power waves of a real reference resistance :math:`R_k` at port *k*,
:math:`a_k = (V_k + R_k I_k) / (2\sqrt{R_k})` and :math:`b_k = (V_k - R_k I_k) / (2\sqrt{R_k})`
(K. Kurokawa, "Power waves and the scattering matrix", IEEE Trans. MTT 13(2), 1965).

Every conversion is one closed form: a *pivot* :math:`p` (a source entry, or a sum of a
few products of entries) and four *numerators*, short polynomials in the source entries;
each target entry is numerator / pivot.  ``tests/test_conversions.py`` re-derives every
pair with sympy from the definitions above and checks that it equals the formulas here.

* **z, y, h, g among themselves** differ only in which ports have their voltage as an
  output.  Where they differ, solve that row of the source for its input: at one port
  a partial inversion with pivot :math:`m_{kk}` (z -> h: :math:`h_{11} = \det Z / z_{22}`,
  :math:`h_{12} = z_{12}/z_{22}`, :math:`h_{21} = -z_{21}/z_{22}`, :math:`h_{22} = 1/z_{22}`),
  at both ports the inverse matrix with pivot :math:`\det M`.
* **ABCD <-> z, y, h, g**: every entry is plus or minus one of :math:`m_{11}, m_{22},
  \det M, 1` over :math:`m_{21}`, and back, one of A, B, C, D, det, 1 over A, B, C or D
  (the tables of D. A. Frickey, "Conversions between S, Z, Y, h, ABCD and T parameters
  which are valid for complex source and load impedances", IEEE Trans. MTT 42(2), 1994,
  from memory; g written the same way).
* **z, y, h, g -> S**: let :math:`r_k = R_k` where port *k* has its voltage as output and
  :math:`r_k = 1/R_k` where it has its current, and :math:`\sigma_k = +1` or :math:`-1`
  likewise.  The wave definitions give :math:`S = \Sigma (M' - 1)(M' + 1)^{-1}` with
  :math:`m'_{ij} = m_{ij} / \sqrt{r_i r_j}`, written out with the pivot
  :math:`p = (m_{11} + r_1)(m_{22} + r_2) - m_{12} m_{21}` (not its expansion, which cancels):

  .. math:: s_{11} = \sigma_1 [(m_{11} - r_1)(m_{22} + r_2) - m_{12} m_{21}] / p, \qquad
            s_{12} = 2 \sigma_1 \sqrt{r_1 r_2}\; m_{12} / p,

  and :math:`s_{22}, s_{21}` likewise (for z the familiar
  :math:`s_{11} = [(z_{11} - R_1)(z_{22} + R_2) - z_{12} z_{21}] / p`).  The inverse is
  :math:`M' = (1 + T)(1 - T)^{-1}` with :math:`T = \Sigma S`.
* **S <-> ABCD**: Frickey 1994 (from memory), with real reference impedances.
* **S -> S** (new references :math:`R'_k`): the wave definitions give
  :math:`a'_k \propto a_k - \gamma_k b_k`, :math:`b'_k \propto b_k - \gamma_k a_k`,
  :math:`\gamma_k = (R'_k - R_k) / (R'_k + R_k)`, hence :func:`_renormalise`.

**When the target does not exist** (Z of a network with det Y = 0, ABCD with
:math:`y_{21} = 0`, H with :math:`z_{22} = 0`, ...) the pivot vanishes.  The pivot is a
sum or difference of *terms* (for z -> s: :math:`(z_{11} + R_1)(z_{22} + R_2)` and
:math:`z_{12} z_{21}`); it counts as zero where :math:`|p| \le` ``SINGULAR_TOL``
:math:`\cdot \sum |\mathrm{term}|`, that is where it is zero within the rounding of its
own computation.  Both sides have the same unit, so the test does not depend on the
scale or the unit of the data.  A pivot that is a single entry (:math:`z_{22}` for
z -> h) carries no cancellation and fails only where it is zero, or so small (below
about 1e-308) that its reciprocal overflows.  A failing point raises
:class:`~devmodels.exceptions.SingularParameterError` that starts with the missing kind and
says in plain words what is zero, at the first such point (``z: the Z parameters do not exist
for this two-port (Y is singular: det Y = 0, at point 3; converting Y to Z)``); a result beyond the float range (entries or their products above about 1e308) raises
:class:`~devmodels.exceptions.InputError`.  No inf or NaN is ever returned.

**Speed.**  Plain numpy on blocks of :data:`BLOCK` points (a loop over blocks, not over
points), so that the temporaries stay in the CPU caches; ``benchmarks/bench_convert.py``
times it against scikit-rf and a memory copy.  Two numpy habits matter there: a minus
sign is written ``-1 * x`` where it is on a hot path (numpy 2.4's complex negative is
several times slower than a multiplication), and each entry is written straight into the result
(``np.multiply(numerator, 1 / pivot, out=...)``).
"""

from __future__ import annotations

import math
from numbers import Number
from typing import Sequence

import numpy as np

from .constants import KINDS
from .exceptions import InputError, SingularParameterError

__all__ = ["convert", "normalize_z0", "SINGULAR_TOL", "BLOCK"]

#: A pivot no larger than this times the sum of the magnitudes of its terms counts as zero.
SINGULAR_TOL = 1e-12
#: Points per block: a temporary of 16384 complex values (256 kB) stays in cache.
BLOCK = 16384

#: The immittance kinds: is the voltage of port 1, of port 2 an output?
_VOLTAGE_OUT = {"z": (True, True), "y": (False, False), "h": (True, False), "g": (False, True)}


def normalize_z0(z0: float | Sequence[float]) -> tuple[float, float]:
    """Return the reference resistances of both ports as two positive floats.

    Parameters
    ----------
    z0 : float or pair of float
        Real reference impedance in ohm, the same at both ports or one per port.
    """
    if isinstance(z0, Number):
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


# --- the closed forms ------------------------------------------------------------------
# Each takes the source entries m11, m12, m21, m22 (then constants) and returns
# (pivot, terms, numerators): target entry = numerator / pivot, and the pivot is a sum or
# difference of the terms.  Only + - * / are used, so the same code runs on numpy arrays
# and, in the tests, on sympy symbols.

def _swap_port1(m11, m12, m21, m22):
    """Swap output and input of port 1 (z <-> g, y <-> h): row 1 solved for its input.

    z -> g: g11 = 1/z11, g12 = -z12/z11, g21 = z21/z11, g22 = det Z/z11.
    """
    return m11, (m11,), (1, -m12, m21, m11 * m22 - m12 * m21)


def _swap_port2(m11, m12, m21, m22):
    """Swap output and input of port 2 (z <-> h, y <-> g): row 2 solved for its input.

    z -> h: h11 = det Z/z22, h12 = z12/z22, h21 = -z21/z22, h22 = 1/z22.
    """
    return m22, (m22,), (m11 * m22 - m12 * m21, m12, -m21, 1)


def _invert(m11, m12, m21, m22):
    """Swap both ports (z <-> y, h <-> g): the inverse matrix [[m22, -m12], [-m21, m11]] / det M."""
    a, b = m11 * m22, m12 * m21
    return a - b, (a, b), (m22, -m12, -m21, m11)


def _immittance_to_abcd(kind, m11, m12, m21, m22):
    """A, B, C, D of z, y, h or g: each is +-(m11, m22, det M or 1) / m21."""
    det = m11 * m22 - m12 * m21
    if kind == "z":  # A = z11/z21, B = det Z/z21, C = 1/z21, D = z22/z21
        return m21, (m21,), (m11, det, 1, m22)
    if kind == "g":  # A = 1/g21, B = g22/g21, C = g11/g21, D = det G/g21
        return m21, (m21,), (1, m22, m11, det)
    # y and h: every entry has a minus sign, so the pivot is -m21
    if kind == "y":  # A = -y22/y21, B = -1/y21, C = -det Y/y21, D = -y11/y21
        return -1 * m21, (m21,), (m22, 1, det, m11)
    # h: A = -det H/h21, B = -h11/h21, C = -h22/h21, D = -1/h21
    return -1 * m21, (m21,), (det, m11, m22, 1)


def _abcd_to_immittance(kind, a, b, c, d):
    """z, y, h or g of A, B, C, D: each entry +-(A, B, C, D, det or 1) / (C, B, D or A)."""
    det = a * d - b * c
    pivot, numerators = {"z": (c, (a, det, 1, d)),  # z = [[A, det], [1, D]] / C
                         "y": (b, (d, -det, -1, a)),  # y = [[D, -det], [-1, A]] / B
                         "h": (d, (b, det, -1, c)),  # h = [[B, det], [-1, C]] / D
                         "g": (a, (c, -det, 1, b))}[kind]  # g = [[C, -det], [1, B]] / A
    return pivot, (pivot,), numerators


def _immittance_to_s(m11, m12, m21, m22, r1, r2, k, sign1, sign2):
    """S of z, y, h or g: r_k = R_k or 1/R_k, k = 2 sqrt(r1 r2), sign_k = +1 or -1.

    p = (m11 + r1)(m22 + r2) - m12 m21, s12 = sign1 k m12 / p, s21 = sign2 k m21 / p,
    s11 = sign1 [(m11 - r1)(m22 + r2) - m12 m21] / p = sign1 [p - 2 r1 (m22 + r2)] / p
    (the second form is one multiplication shorter), and s22 likewise.
    """
    u1, u2 = m11 + r1, m22 + r2
    a, b = u1 * u2, m12 * m21
    p = a - b
    return p, (a, b), (_signed(sign1, p - (2 * r1) * u2), (sign1 * k) * m12,
                       (sign2 * k) * m21, _signed(sign2, p - (2 * r2) * u1))


def _s_to_immittance(s11, s12, s21, s22, r1, r2, k, sign1, sign2):
    """z, y, h or g of S: M' = (1 + T)(1 - T)^-1, T = diag(sign) S; r_k, k, sign_k as above.

    For z: p = (1 - s11)(1 - s22) - s12 s21, z11 = R1 [(1 + s11)(1 - s22) + s12 s21] / p,
    z12 = k s12 / p, z21 = k s21 / p, z22 = R2 [(1 - s11)(1 + s22) + s12 s21] / p.
    """
    t11, t22 = _signed(sign1, s11), _signed(sign2, s22)
    u1, u2 = 1 - t11, 1 - t22
    a, b = u1 * u2, _signed(sign1 * sign2, s12 * s21)
    return a - b, (a, b), (r1 * ((1 + t11) * u2 + b), (sign1 * k) * s12,
                           (sign2 * k) * s21, r2 * (u1 * (1 + t22) + b))


def _abcd_to_s(a, b, c, d, r1, r2, k):
    """S of A, B, C, D at real R1, R2; k = 2 sqrt(R1 R2) (Frickey 1994, from memory).

    p = A R2 + B + C R1 R2 + D R1, s11 = (A R2 + B - C R1 R2 - D R1) / p,
    s12 = k (AD - BC) / p, s21 = k / p, s22 = (-A R2 + B - C R1 R2 + D R1) / p.
    """
    ar, cr, dr = a * r2, c * (r1 * r2), d * r1
    return (ar + b + cr + dr, (ar, b, cr, dr),
            ((ar + b) - (cr + dr), k * (a * d - b * c), k, (b - ar) + (dr - cr)))


def _s_to_abcd(s11, s12, s21, s22, r1, r2, k):
    """A, B, C, D of S at real R1, R2; k = 2 sqrt(R1 R2) (Frickey 1994, from memory).

    A = R1 [(1 + s11)(1 - s22) + s12 s21] / (k s21),
    B = R1 R2 [(1 + s11)(1 + s22) - s12 s21] / (k s21),
    C = [(1 - s11)(1 - s22) - s12 s21] / (k s21),
    D = R2 [(1 - s11)(1 + s22) + s12 s21] / (k s21).
    """
    p = s12 * s21
    u11, v11, u22, v22 = 1 + s11, 1 - s11, 1 + s22, 1 - s22
    return s21, (s21,), ((r1 / k) * (u11 * v22 + p), (r1 * r2 / k) * (u11 * u22 - p),
                         (1 / k) * (v11 * v22 - p), (r2 / k) * (v11 * u22 + p))


def _renormalise(s11, s12, s21, s22, g1, g2, q):
    """S at R'_k of S at R_k: g_k = (R'_k - R_k)/(R'_k + R_k), q = sqrt((1-g1^2)(1-g2^2)).

    From b' = K (S - G) a and a' = K (1 - G S) a, G = diag(g), K = diag(k_k) with
    1/k_k = sqrt(1 - g_k^2): S' = K (S - G)(1 - G S)^-1 K^-1.
    """
    u1, u2, p = 1 - g1 * s11, 1 - g2 * s22, s12 * s21
    a, b = u1 * u2, (g1 * g2) * p
    return a - b, (a, b), ((s11 - g1) * u2 + g2 * p, q * s12, q * s21, (s22 - g2) * u1 + g1 * p)


def _signed(sign, x):
    """sign * x for sign = +1 or -1 (no pass over x for +1)."""
    return x if sign > 0 else -1 * x


def _closed_form(src: str, dst: str, r, r_out, sqrt=math.sqrt):
    """The function (m11, m12, m21, m22) -> (pivot, terms, numerators) of src -> dst.

    ``r``: reference resistances of an S source, ``r_out``: of an S target (ohm).
    ``sqrt`` is a parameter so that the tests can run the formulas on sympy numbers.
    """
    def refs(kind, rr):  # r_k, k = 2 sqrt(r1 r2) and sign_k of an immittance kind
        v = _VOLTAGE_OUT[kind]
        r1, r2 = (x if out else 1 / x for x, out in zip(rr, v))
        return r1, r2, 2 * sqrt(r1 * r2), 1 if v[0] else -1, 1 if v[1] else -1

    if src == "s" and dst == "s":
        g1, g2 = ((ro - ri) / (ro + ri) for ri, ro in zip(r, r_out))
        return lambda *m: _renormalise(*m, g1, g2, sqrt((1 - g1 * g1) * (1 - g2 * g2)))
    if src == "s" and dst == "abcd":
        return lambda *m: _s_to_abcd(*m, r[0], r[1], 2 * sqrt(r[0] * r[1]))
    if src == "s":
        return lambda *m: _s_to_immittance(*m, *refs(dst, r))
    if src == "abcd" and dst == "s":
        return lambda *m: _abcd_to_s(*m, r_out[0], r_out[1], 2 * sqrt(r_out[0] * r_out[1]))
    if dst == "s":
        return lambda *m: _immittance_to_s(*m, *refs(src, r_out))
    if src == "abcd":
        return lambda *m: _abcd_to_immittance(dst, *m)
    if dst == "abcd":
        return lambda *m: _immittance_to_abcd(src, *m)
    differ = [a != b for a, b in zip(_VOLTAGE_OUT[src], _VOLTAGE_OUT[dst])]
    return _invert if all(differ) else _swap_port1 if differ[0] else _swap_port2


# --- the driver ------------------------------------------------------------------------

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
        Reference resistance(s) in ohm of an S result when it differs from ``z0``
        (``convert(s, 's', 's', 50, z0_out=75)`` renormalises S to 75 ohm).

    Returns
    -------
    numpy.ndarray, complex, shape (..., 2, 2)
        The parameters of kind ``dst``; always a new array.

    Raises
    ------
    SingularParameterError
        The target set does not exist for this network: the pivot of the closed form is
        zero within rounding (module docstring), for example Z of a network with
        det Y = 0, or ABCD of a network with y21 = 0.
    InputError
        Unknown kind, wrong shape or type, NaN or infinity in the data, or a result
        beyond the float range.
    """
    for name, k in (("src", src), ("dst", dst)):
        if k not in KINDS:
            raise InputError(f"{name}: unknown parameter kind {k!r}, "
                             f"expected one of {', '.join(KINDS)}")
    arr = np.asarray(data)
    if arr.dtype.kind not in "iufc":
        raise InputError(f"data: expected complex numbers, got an array of {arr.dtype}")
    if arr.ndim < 2 or arr.shape[-2:] != (2, 2):
        raise InputError(f"data: expected shape (..., 2, 2), got {arr.shape}")
    r = normalize_z0(z0)
    r_out = r if z0_out is None else normalize_z0(z0_out)
    flat = np.ascontiguousarray(arr, dtype=np.complex128).reshape(-1, 4)
    out = np.empty_like(flat)
    if src == dst and (src != "s" or r == r_out):
        _check_finite(flat)
        out[...] = flat
        return out.reshape(arr.shape)
    formula = _closed_form(src, dst, r, r_out)
    for start in range(0, len(flat), BLOCK):
        blk, res = flat[start:start + BLOCK], out[start:start + BLOCK]
        with np.errstate(all="ignore"):  # bad points are found and reported below
            pivot, terms, numerators = formula(*blk.T)
            inv = 1 / pivot
            for j, num in enumerate(numerators):
                np.multiply(num, inv, out=res[:, j])
            if len(terms) == 1:  # |p| > SINGULAR_TOL |p|
                ok = pivot != 0
            else:
                size = np.abs(terms[0])
                for t in terms[1:]:
                    size += np.abs(t)
                ok = np.abs(pivot) > SINGULAR_TOL * size
            # The sum of the block is finite exactly when every entry is, unless the sum
            # itself overflows; then the entries are looked at one by one.
            fine = ok.all() and math.isfinite(res.view(np.float64).sum())
        if not fine:
            _raise_first_problem(flat, src, dst, start, ok, terms, inv, res)
    return out.reshape(arr.shape)


def _check_finite(flat: np.ndarray) -> None:
    if not np.isfinite(flat).all():
        raise InputError("data: parameters contain NaN or infinity")


#: Names of the kinds in messages.
_NAME = {"y": "Y", "z": "Z", "h": "H", "g": "G", "abcd": "ABCD", "s": "S"}
#: The chain-parameter entry each immittance kind divides by (z = [[A, det], [1, D]] / C, ...).
_CHAIN_PIVOT = {"z": "C", "y": "B", "h": "D", "g": "A"}
#: What vanishes when S cannot be turned into an immittance kind (the determinant of
#: 1 - diag(sign) S, module docstring).
_S_PIVOT = {"z": "det(1 - S) = 0", "y": "det(1 + S) = 0", "h": "(1 - S11)(1 + S22) + S12 S21 = 0",
            "g": "(1 + S11)(1 - S22) + S12 S21 = 0"}


def _why_missing(src: str, dst: str) -> str:
    """In plain words, what is zero when ``dst`` does not exist for data of kind ``src``.

    One case per closed form of :func:`_closed_form` (the quantity each one divides by).
    """
    terminated = "the network with both ports ended in the reference resistances has no solution"
    if dst == "s":  # (M + R) singular, A R2 + B + C R1 R2 + D R1 = 0, or the renormalisation
        what = "new reference resistances" if src == "s" else "reference resistances"
        return terminated.replace("reference resistances", what)
    if src == "s":
        return "S21 = 0: no forward transmission" if dst == "abcd" else _S_PIVOT[dst]
    if dst == "abcd":
        return f"{src}21 = 0: no forward transmission"
    if src == "abcd":
        return f"the chain parameter {_CHAIN_PIVOT[dst]} = 0"
    differ = [a != b for a, b in zip(_VOLTAGE_OUT[src], _VOLTAGE_OUT[dst])]
    if all(differ):
        return f"{src.upper()} is singular: det {src.upper()} = 0"
    return f"{src}11 = 0" if differ[0] else f"{src}22 = 0"


def _raise_first_problem(flat, src, dst, start, ok, terms, inv, res) -> None:
    """Raise for the first bad point of a block; return if there is none after all.

    NaN or infinity anywhere in the data is reported first.  At the first bad point of
    the block: terms of the pivot beyond the float range are an overflow; a pivot that
    is zero within rounding, or so small that its reciprocal overflows, is singular; any
    other non-finite result is an overflow.
    """
    _check_finite(flat)
    with np.errstate(all="ignore"):
        scale_fits = np.isfinite(sum(np.abs(t) for t in terms))
    bad = np.flatnonzero(~(ok & scale_fits & np.isfinite(res).all(axis=1)))
    if bad.size == 0:
        return  # only the sum of the block overflowed
    i = bad[0]
    if scale_fits[i] and not (ok[i] and np.isfinite(inv[i])):
        raise SingularParameterError(f"{dst}: the {_NAME[dst]} parameters do not exist for this two-port "
                                     f"({_why_missing(src, dst)}, at point {start + i}; converting "
                                     f"{_NAME[src]} to {_NAME[dst]})")
    raise InputError(f"data: {src} -> {dst} overflows the float range at point {start + i} "
                     "(entries or their products beyond about 1e308)")

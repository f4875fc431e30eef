r"""Closed-form, vectorised conversions among two-port parameter sets.

Every parameter set is one way of writing the same two linear equations among the
four port quantities :math:`x = (V_1, V_2, I_1, I_2)` (currents flow into the
two-port).  A set of kind *K* says that two *output* coordinates are a 2x2 matrix
times two *input* coordinates, each coordinate being a fixed linear function of
:math:`x` (a row of a 4x4 matrix :math:`T_K`):

======  ============================  ============================
kind    outputs                       inputs
======  ============================  ============================
``z``   :math:`V_1, V_2`              :math:`I_1, I_2`
``y``   :math:`I_1, I_2`              :math:`V_1, V_2`
``h``   :math:`V_1, I_2`              :math:`I_1, V_2`
``g``   :math:`I_1, V_2`              :math:`V_1, I_2`
``abcd``:math:`V_1, I_1`              :math:`V_2, -I_2`
``s``   :math:`V_k - R_k I_k`         :math:`V_k + R_k I_k`
======  ============================  ============================

For S these are the power waves of a real reference resistance :math:`R_k` at port *k*
(Kurokawa, "Power waves and the scattering matrix", IEEE Trans. MTT 13(2), 1965),
:math:`a_k = (V_k + R_k I_k)/(2\sqrt{R_k})`, :math:`b_k = (V_k - R_k I_k)/(2\sqrt{R_k})`,
without the :math:`2\sqrt{R_k}`: the matrix :math:`S'` of these unscaled waves is
:math:`S'_{ij} = \sqrt{R_i/R_j}\,S_{ij}`, so only the off-diagonal entries change.

**How a conversion is derived.**  The network is the two-dimensional subspace *W* of
all port states.  Written in the coordinates of a kind, *W* is spanned by the columns
of :math:`\begin{bmatrix} M \\ 1 \end{bmatrix}`, and the 2x2 minors of that 4x2 matrix
are the Plücker coordinates of *W*: :math:`1,\ m_{11},\ -m_{12},\ m_{21},\ -m_{22}`
and :math:`\det M` (Hodge and Pedoe, *Methods of Algebraic Geometry*, vol. 1, ch. VII).
A change of coordinates :math:`U = T_{dst} T_{src}^{-1}` maps them linearly
(Cauchy-Binet formula), and the target matrix is read back as ratios: with the target
pivot :math:`\pi = p_{i_1 i_2}`,

.. math:: m_{k1} = p_{o_k i_2} / \pi, \qquad m_{k2} = -p_{o_k i_1} / \pi .

So every entry of every target set is (an affine function of the four source entries
and their determinant) divided by (another such function).  This algebra is done once
per pair and reference resistance in exact rational arithmetic (:class:`fractions.Fraction`
of the given floats, imported only when a pair is first planned), so terms that cancel cancel exactly; the result is a short
straight-line program of numpy ufunc calls (for example z -> h is
:math:`h_{11} = \det Z / z_{22}`, :math:`h_{12} = z_{12}/z_{22}`,
:math:`h_{21} = -z_{21}/z_{22}`, :math:`h_{22} = 1/z_{22}`: one reciprocal, one
determinant and four products).  Two rewritings keep it short: an entry whose numerator
shares terms with the pivot is computed as :math:`\alpha + \rho/\pi` with the sparser
remainder :math:`\rho` (:math:`s_{11} = 1 - 2R(z_{22} + R)/\pi` for z -> s), and a
pivot with a :math:`\det` term is computed as the determinant of shifted entries
(:math:`\pi = (z_{11} + R)(z_{22} + R) - z_{12} z_{21}`).

**When the target does not exist.**  Solving the source relation
:math:`[1 \mid -M]\,T_{src}\,x = 0` for the target outputs needs its 2x2 *pivot*
block *P* (the columns of the target outputs) to be non-singular.  The test is the
Hadamard ratio of *P* with its rows weighted to one unit,
:math:`t_1 t_2 |\det P| \le` ``SINGULAR_TOL`` :math:`\cdot n_1 n_2` with
:math:`n_k = t_1 |P_{1k}| + t_2 |P_{2k}|`: the sine of the angle between the pivot
columns, independent of how each column is scaled.  :math:`\det P` is a constant
multiple of the target pivot :math:`\pi` (both are the same Plücker coordinate), so the
test costs a few absolute values.  A failing point raises
:class:`~devmodels.exceptions.SingularParameterError` instead of returning inf or NaN.

**Speed.**  Arrays are processed in blocks of :data:`BLOCK` points (a loop over blocks,
not over points) so that the intermediates stay in the CPU caches; each block runs the
program with preallocated buffers (``out=``), reading the inputs and writing the outputs
in place through strided views.  ``benchmarks/bench_convert.py`` measures it against
scikit-rf and a plain memory copy.
"""

from __future__ import annotations

import math
from functools import lru_cache
from numbers import Number
from operator import itemgetter
from typing import TYPE_CHECKING, Sequence

import numpy as np

from .constants import KINDS
from .exceptions import InputError, SingularParameterError

if TYPE_CHECKING:  # for annotations only; imported at run time where a pair is planned
    from fractions import Fraction

__all__ = ["convert", "normalize_z0", "SINGULAR_TOL", "BLOCK"]

#: Hadamard ratio of the pivot (|det| over the product of its column norms) below which a
#: target set is said not to exist: the result would carry fewer than ~4 significant digits.
SINGULAR_TOL = 1e-12
#: Points per block.  Each ufunc call costs about a microsecond of Python overhead, so
#: small blocks lose time to calls; large ones spill the ~10 block buffers (16 bytes a
#: point each) and the input and output blocks (64 bytes a point each) out of cache.
#: 16384 was the best of 4096 ... 32768 summed over all 30 pairs (about 10% better than
#: 4096) on a 2-core AMD EPYC (1 MB L2 per core): the working set then sits in L3.
#: ``benchmarks/bench_convert.py --block N`` measures another value.
BLOCK = 16384


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


# --- exact algebra: linear forms over the basis (1, x11, x12, x21, x22, det X) ---------
# A linear form is a tuple of six coefficients; x_ij are the source entries (for an S
# source, the entries of S'), det is x11 x22 - x12 x21.
_ONE, _X11, _X12, _X21, _X22, _DET = range(6)
_XIDX = ((_X11, _X12), (_X21, _X22))

# (coordinate variable, sign) of the outputs and the inputs of each kind except s;
# variables index x = (V1, V2, I1, I2).
_V1, _V2, _I1, _I2 = 0, 1, 2, 3
_LAYOUT: dict[str, tuple[tuple[int, int], ...]] = {
    "z": ((_V1, 1), (_V2, 1), (_I1, 1), (_I2, 1)),
    "y": ((_I1, 1), (_I2, 1), (_V1, 1), (_V2, 1)),
    "h": ((_V1, 1), (_I2, 1), (_I1, 1), (_V2, 1)),
    "g": ((_I1, 1), (_V2, 1), (_V1, 1), (_I2, 1)),
    "abcd": ((_V1, 1), (_I1, 1), (_V2, 1), (_I2, -1)),
}


def _unit(b: int, c=1) -> tuple:
    f = [0] * 6
    f[b] = c
    return tuple(f)


def _div(a, b) -> Fraction:
    """Exact a / b (a Python int / int would give a float)."""
    from fractions import Fraction

    return Fraction(a) / b


def _comb(*terms) -> tuple:
    """Sum of c * form over the (c, form) pairs (exact: ints and Fractions)."""
    out = [0] * 6
    for c, form in terms:
        if c:
            for i, v in enumerate(form):
                if v:
                    out[i] += c * v
    return tuple(out)


def _coords(kind: str, r: tuple[float, float]) -> list[list[Fraction]]:
    """T_kind: rows are the kind's coordinates (o1, o2, i1, i2) as functions of x."""
    from fractions import Fraction

    if kind == "s":
        r1, r2 = Fraction(r[0]), Fraction(r[1])
        return [[1, 0, -r1, 0], [0, 1, 0, -r2], [1, 0, r1, 0], [0, 1, 0, r2]]
    rows = []
    for var, sign in _LAYOUT[kind]:
        row = [0] * 4
        row[var] = sign
        rows.append(row)
    return rows


def _inverse4(t: list[list[Fraction]]) -> list[list[Fraction]]:
    """Exact inverse of a 4x4 matrix of Fractions (Gauss-Jordan with row pivoting)."""
    a = [list(row) + [int(i == j) for j in range(4)] for i, row in enumerate(t)]
    for col in range(4):
        piv = next(i for i in range(col, 4) if a[i][col] != 0)
        a[col], a[piv] = a[piv], a[col]
        p = a[col][col]
        a[col] = [_div(v, p) for v in a[col]]
        for i in range(4):
            if i != col and a[i][col] != 0:
                f = a[i][col]
                a[i] = [vi - f * vc for vi, vc in zip(a[i], a[col])]
    return [row[4:] for row in a]


def _matmul4(a, b):
    return [[sum(a[i][k] * b[k][j] for k in range(4) if a[i][k] and b[k][j]) for j in range(4)]
            for i in range(4)]


def _derive(src: str, dst: str, r_src, r_dst):
    """Exact target forms: pivot, four numerators, pivot block P and det P / pivot.

    Returns ``(pivot, nums, P, kappa)``: ``nums`` in the order 11, 12, 21, 22 so that
    entry = num / pivot; ``P[i][k]`` the affine forms of the source relation's pivot
    block (rows as written in the module docstring); ``det P = kappa * pivot``.
    """
    t_src = _coords(src, r_src)
    t_dst = _coords(dst, r_dst)
    u = _matmul4(t_dst, _inverse4(t_src))
    # Plücker coordinates of the source in its own coordinates (rows o1, o2, i1, i2 of
    # [M; 1]): p[a, b] = det of rows a, b.
    p_src = {(0, 1): _unit(_DET), (0, 2): _unit(_X12, -1), (0, 3): _unit(_X11),
             (1, 2): _unit(_X22, -1), (1, 3): _unit(_X21), (2, 3): _unit(_ONE)}

    def p_dst(c: int, d: int):  # Cauchy-Binet: minors of U [M; 1]
        return _comb(*((u[c][a] * u[d][b] - u[c][b] * u[d][a], f) for (a, b), f in p_src.items()))

    pivot = p_dst(2, 3)
    nums = (p_dst(0, 3), p_dst(2, 0), p_dst(1, 3), p_dst(2, 1))
    # Relation [1 | -M] T_src x = 0, rewritten in the target coordinates.
    tinv = _inverse4(t_dst)
    rel = [[_comb((t_src[i][v], _unit(_ONE)),
                  *((-t_src[2 + j][v], _unit(_XIDX[i][j])) for j in range(2)))
            for v in range(4)] for i in range(2)]
    P = [[_comb(*((tinv[v][k], rel[i][v]) for v in range(4))) for k in range(2)] for i in range(2)]
    kappa = _ratio(_det_affine(P), pivot)
    return pivot, nums, P, kappa


def _det_affine(P) -> tuple:
    """det of a 2x2 matrix of affine forms, as a linear form (it must be one)."""
    from fractions import Fraction

    quad: dict[tuple[int, int], Fraction] = {}
    lin = [Fraction(0)] * 6

    def product(f, g, sign):
        for i in range(5):
            for j in range(5):
                c = sign * f[i] * g[j]
                if not c:
                    continue
                if i == _ONE or j == _ONE:
                    lin[i + j] += c  # i + j is the other index when one of them is 0
                else:
                    key = (min(i, j), max(i, j))
                    quad[key] = quad.get(key, Fraction(0)) + c

    product(P[0][0], P[1][1], 1)
    product(P[0][1], P[1][0], -1)
    det_c = quad.pop((_X11, _X22), Fraction(0))
    if quad.pop((_X12, _X21), Fraction(0)) != -det_c or any(quad.values()):
        raise AssertionError("pivot determinant is not a multiple of the Plücker pivot")
    lin[_DET] = det_c
    return tuple(lin)


def _ratio(f, g) -> Fraction:
    """The constant c with f = c * g (an internal consistency check)."""
    b = next(i for i in range(6) if g[i])
    c = _div(f[b], g[b])
    if any(fi != c * gi for fi, gi in zip(f, g)):
        raise AssertionError("forms are not proportional")
    return c


def _alphas(num, pivot) -> list[Fraction]:
    """Candidate alpha for num = alpha * pivot + rest: 0, and each ratio that cancels a term."""
    from fractions import Fraction

    out = [Fraction(0)]
    for b in range(6):
        if num[b] and pivot[b] and _div(num[b], pivot[b]) not in out:
            out.append(_div(num[b], pivot[b]))
    return out


# --- the straight-line program --------------------------------------------------------
class _Builder:
    """Emits numpy ufunc calls on virtual registers.

    Values are ``('x', k)`` source entries, ``('o', k)`` result entries, ``('r', n)``
    registers and ``('k', value)`` Python constants.  Forms are exact (Fraction
    coefficients over the S' basis, lead coefficient 1); ``scale`` turns a coefficient
    into the float that multiplies the stored entry.  Forms and products are
    remembered, so each is computed once, and a remembered register is never
    overwritten.
    """

    _INPUTS = (("x", 0), ("x", 1), ("x", 2), ("x", 3))

    def __init__(self, scale: tuple[float, ...]):
        self.scale = scale
        self.code: list[tuple] = []  # (function, args..., out) with out last
        self.dtype: list[str] = []  # per register: 'c' complex, 'f' float, 'b' bool
        self.forms: dict[tuple, tuple] = {}  # exact form -> value
        self.memo: dict = {}  # ('mul', a, b), ('det', entries), ('abs', v) -> register
        self.kept: set = set()  # registers that must not be overwritten

    # --- emission --------------------------------------------------------------------
    def emit(self, fn, *args, out=None, dtype="c"):
        if out is None:
            self.dtype.append(dtype)
            out = ("r", len(self.dtype) - 1)
        self.code.append((fn, *args, out))
        return out

    def keep(self, table: dict, key, val):
        table[key] = val
        if val[0] == "r":
            self.kept.add(val)
        return val

    def into(self, fn, a, b):
        """fn(a, b), written over a when a is a scratch register (same dtype as a)."""
        if a[0] == "r" and a not in self.kept:
            return self.emit(fn, a, b, out=a)
        return self.emit(fn, a, b, dtype=self.dtype[a[1]] if a[0] == "r" else "c")

    def product(self, a, b):
        key = ("mul",) + tuple(sorted((a, b)))
        return self.memo.get(key) or self.keep(self.memo, key, self.emit(np.multiply, a, b))

    def det(self, e=_INPUTS):
        key = ("det", e)
        if key not in self.memo:
            val = self.emit(np.subtract, self.product(e[0], e[3]), self.product(e[1], e[2]))
            self.keep(self.memo, key, val)
        return self.memo[key]

    def reciprocal(self, piv, mag, w: float):
        """w / piv without complex division: (conj(piv) / |piv|) * (w / |piv|).

        numpy's complex division branches on |re| < |im| per point, which costs about
        twice as much on data of random phase; this uses the |piv| of the existence test
        and five float multiplications, and keeps the full float range (unlike
        conj(piv) / |piv|**2).
        """
        u = self.emit(np.divide, ("k", 1.0), mag, dtype="f")
        tw = u if w == 1.0 else self.emit(np.multiply, u, ("k", w), dtype="f")
        ntw = self.emit(np.multiply, u, ("k", -w), dtype="f")
        self.dtype.append("c")
        inv = ("r", len(self.dtype) - 1)
        for part, t in (("real", tw), ("imag", ntw)):
            self.emit(np.multiply, (part, piv), u, out=(part, inv))
            self.emit(np.multiply, (part, inv), t, out=(part, inv))
        return inv

    def absolute(self, val):
        key = ("abs", val)
        return self.memo.get(key) or self.keep(self.memo, key, self.emit(np.absolute, val, dtype="f"))

    # --- costs (ufunc calls) of building a form ----------------------------------------
    def _det_cost(self, e=_INPUTS) -> int:
        if ("det", e) in self.memo:
            return 0
        return 1 + sum(("mul",) + tuple(sorted(p)) not in self.memo
                       for p in ((e[0], e[3]), (e[1], e[2])))

    def _term(self, b: int, c: Fraction):
        """(value, float multiplier) for c * basis b: the stored entry and its factor."""
        if b == _DET:
            return self.det(), float(c)
        return ("x", b - 1), float(c) * self.scale[b]

    def _sum_plan(self, f: tuple):
        """Greedy: repeatedly take the known form (or basis entry) that removes the most
        terms of what is left.  Returns (cost, steps, constant)."""
        rest, steps, cost = f, [], 0
        known = list(self.forms) + [_unit(b) for b in range(1, 6)]
        while any(rest[1:]):
            best = None
            for g in known:
                lead = _lead_index(g)
                if not rest[lead]:
                    continue
                c = _div(rest[lead], g[lead])
                new = _comb((1, rest), (-c, g))
                gain = _nnz(rest) - _nnz(new)
                if gain <= 0:
                    continue
                factor = float(c) if g in self.forms else float(c) * self.scale[lead]
                step = (factor not in (1.0, -1.0) or (not steps and factor == -1.0)) + bool(steps)
                if g == _unit(_DET):
                    step += self._det_cost()
                if best is None or (gain, -step) > (best[0], -best[1]):
                    best = (gain, step, g, c, new)
            if best is None:
                return None
            _, step, g, c, rest = best
            steps.append((g, c))
            cost += step
        return cost + bool(rest[_ONE]), steps, rest[_ONE]

    def _shift_plan(self, f: tuple):
        """f = det(X + E) + constant when f has det coefficient 1: (cost, entries, constant)."""
        if f[_DET] != 1:
            return None
        e, const = _shifts(f)
        ent = tuple(_shift_form(k, v) if v else self._INPUTS[k] for k, v in enumerate(e))
        vals = tuple(s if isinstance(s[0], str) else self.forms.get(s) for s in ent)
        cost = sum(v is None for v in vals) + (3 if None in vals else self._det_cost(vals))
        # an unequal-z0 S source stores s12, s21 rather than the S' entries; their
        # factors cancel in the product unless one of them is shifted
        if (e[1] or e[2]) and self.scale[_X12] != 1.0:
            cost += sum(1 for k in (1, 2) if not e[k])
        return cost + bool(const), ent, const

    def scaled_entry(self, f: tuple):
        """(stored entry, factor) when f is one source entry times a float factor (an
        S' entry of an unequal-z0 S source), so that a caller can fold the factor."""
        b = _lead_index(f)
        if _nnz(f) == 1 and not f[_ONE] and b not in (_DET, _ONE):
            return ("x", b - 1), self.scale[b]
        return None

    def cost(self, f: tuple) -> int:
        if f in self.forms or not any(f[1:]) or self.scaled_entry(f):
            return 0
        plans = [p for p in (self._sum_plan(f), self._shift_plan(f)) if p is not None]
        return min(p[0] for p in plans)

    # --- building ----------------------------------------------------------------------
    def form(self, f: tuple):
        """Value (register or source entry) holding the exact form f, lead coefficient 1."""
        from fractions import Fraction

        if f in self.forms:
            return self.forms[f]
        b = _lead_index(f)
        if _nnz(f) == 1 and not f[_ONE] and (b in (_X11, _X22, _DET) or self.scale[b] == 1.0):
            return self._term(b, Fraction(1))[0]
        plan, shift = self._sum_plan(f), self._shift_plan(f)
        if shift is not None and (plan is None or shift[0] < plan[0]):
            _, ent, const = shift
            raw = not (ent[1][0] != "x" or ent[2][0] != "x")  # s12' s21' = s12 s21
            vals = []
            for k, s in enumerate(ent):
                if not isinstance(s[0], str):
                    s = self.form(s)
                elif self.scale[k + 1] != 1.0 and not raw:
                    s = self.emit(np.multiply, s, ("k", self.scale[k + 1]))
                vals.append(s)
            val = self.det(tuple(vals))
            if const:
                val = self.into(np.add, val, ("k", float(const)))
            return self.keep(self.forms, f, val)
        _, steps, const = plan
        val = None
        for g, c in steps:
            if g in self.forms:
                x, factor = self.forms[g], float(c)
            else:
                x, factor = self._term(_lead_index(g), c)
            if val is None:
                val = x if factor == 1.0 else self.emit(np.multiply, x, ("k", factor))
            elif factor in (1.0, -1.0):
                val = self.into(np.add if factor > 0 else np.subtract, val, x)
            else:
                val = self.into(np.add, val, self.emit(np.multiply, x, ("k", factor)))
        if const:
            val = self.into(np.add, val, ("k", float(const)))
        return self.keep(self.forms, f, val)


def _same(a: float, b: float) -> bool:
    """Equal up to rounding (a few ulps): the same factor reached by two float paths."""
    return abs(a - b) <= 1e-15 * max(abs(a), abs(b))


def _nnz(f: tuple) -> int:
    """Number of non-constant terms of a form."""
    return sum(map(bool, f[1:]))


def _lead_index(f: tuple) -> int:
    """The lead term of a form: det, else the first entry, else the constant."""
    return _DET if f[_DET] else next((i for i in range(1, 5) if f[i]), _ONE)


def _lead(f: tuple) -> tuple[Fraction, tuple]:
    """(c, f / c) with c the lead coefficient (c = 0 for the zero form)."""
    c = f[_lead_index(f)]
    return (c, tuple(_div(v, c) for v in f)) if c else (c, f)


def _shifts(f):
    """E and the constant with f = det(X + E) + constant (f has det coefficient 1).

    det(X + E) = det X + e22 x11 + e11 x22 - e21 x12 - e12 x21 + det E.
    """
    e11, e22, e21, e12 = f[_X22], f[_X11], -f[_X12], -f[_X21]
    return (e11, e12, e21, e22), f[_ONE] - (e11 * e22 - e12 * e21)


def _shift_form(k: int, v) -> tuple:
    """The form x_k + v (k = 0..3 for x11, x12, x21, x22)."""
    return _comb((1, _unit(k + 1)), (v, _unit(_ONE)))


class _Program:
    """Compiled conversion for one (src, dst, z0, z0_out): two straight-line phases.

    Phase 1 computes the pivot and the existence test into a boolean buffer; phase 2
    the four result entries, written straight into the output array.
    """

    def __init__(self, src, dst, r_src, r_dst):
        pivot, nums, P, kappa = _derive(src, dst, r_src, r_dst)
        # float factors: stored entries of an S source (x12 = S'12 / rho), entries of an
        # S result (S12 = S'12 / rho), weights of the relation rows
        rho_in = math.sqrt(r_src[0] / r_src[1]) if src == "s" else 1.0
        rho_out = math.sqrt(r_dst[0] / r_dst[1]) if dst == "s" else 1.0
        scale = (1.0, 1.0, rho_in, 1.0 / rho_in, 1.0, 1.0)
        out_f = (1.0, 1.0 / rho_out, rho_out, 1.0)
        if src == "s":
            t = (1.0 / math.sqrt(r_src[0]), 1.0 / math.sqrt(r_src[1]))
        else:
            ref = math.sqrt(r_src[0] * r_src[1])
            t = tuple(ref if var in (_I1, _I2) else 1.0 for var, _ in _LAYOUT[src][:2])

        bld = _Builder(scale)
        # phase 1: pivot-block entries, the pivot, and the existence test
        # |pi| <= K * n1 * n2, K = TOL / (t1 t2 |kappa c_pi|); each column norm
        # n_k = sum_i t_i |P_ik| is factored as u_k * (|F_0| + v |F_1| + const).
        c_pi, f_pi = _lead(pivot)
        factor = SINGULAR_TOL / (t[0] * t[1] * abs(float(kappa * c_pi)))
        columns = []
        for k in range(2):
            const, arrays = 0.0, []
            for i in range(2):
                c, f = _lead(P[i][k])
                entry = bld.scaled_entry(f)
                if entry:
                    arrays.append((t[i] * abs(float(c)) * entry[1], entry[0]))
                elif _nnz(f):
                    arrays.append((t[i] * abs(float(c)), bld.form(f)))
                else:
                    const += t[i] * abs(float(c * f[_ONE]))
            columns.append((const, arrays))
        piv = bld.form(f_pi)
        mag = bld.absolute(piv)
        rhs = None
        for const, arrays in columns:
            if not arrays:
                factor *= const
                continue
            u = arrays[0][0]
            factor *= u
            acc = None
            for w, val in arrays:
                a = bld.absolute(val)
                if not _same(w, u):
                    a = bld.emit(np.multiply, a, ("k", w / u), dtype="f")
                acc = a if acc is None else bld.into(np.add, acc, a)
            if const:
                acc = bld.into(np.add, acc, ("k", const / u))
            rhs = acc if rhs is None else bld.into(np.multiply, acc, rhs)
        if rhs is None:
            rhs = ("k", factor)
        elif factor != 1.0:
            rhs = bld.into(np.multiply, rhs, ("k", factor))
        bad = bld.emit(np.less_equal, mag, rhs, dtype="b")
        n_phase1 = len(bld.code)

        # phase 2: each entry as alpha + w * F / pivot, alpha chosen by cost
        invs: dict[float, tuple] = {}
        for k in range(4):
            best = None
            for alpha in _alphas(nums[k], pivot):
                rest = _comb((1, nums[k]), (-alpha, pivot))
                a = float(alpha) * out_f[k]
                if not any(rest):
                    choice = (0, a, 0.0, None)
                else:
                    c, f = _lead(rest)
                    w = out_f[k] * float(_div(c, c_pi))
                    entry = bld.scaled_entry(f)
                    if entry:
                        w *= entry[1]
                    w = next((v for v in invs if _same(v, w)), w)
                    choice = (bld.cost(f) + (a != 0) + (w not in invs), a, w, f)
                if best is None or choice[0] < best[0]:
                    best = choice
            _, a, w, f = best
            o = ("o", k)
            if f is None:
                bld.emit(np.copyto, ("k", a), out=o)  # a constant entry
                continue
            if w not in invs:
                base = next(iter(invs.items()), None)
                if base is None:
                    invs[w] = bld.reciprocal(piv, mag, w)
                else:
                    invs[w] = bld.emit(np.multiply, base[1], ("k", w / base[0]))
                bld.kept.add(invs[w])
            entry = bld.scaled_entry(f)
            if not _nnz(f):  # the entry is a multiple of 1 / pivot
                if a:
                    bld.emit(np.add, invs[w], ("k", a), out=o)
                else:
                    bld.emit(np.copyto, invs[w], out=o)
                continue
            val = entry[0] if entry else bld.form(f)  # w already holds the entry's factor
            if a:
                bld.emit(np.add, bld.emit(np.multiply, val, invs[w]), ("k", a), out=o)
            else:
                bld.emit(np.multiply, val, invs[w], out=o)
        self._link(bld, n_phase1, bad)

    def _link(self, bld: _Builder, n_phase1: int, bad):
        """Assign buffers to registers (reusing dead ones) and index every argument.

        Slots: 0-3 source entries, 4-7 result entries (strided views, set per block),
        then register buffers, their real/imaginary views, per-block views of the
        entries, and the constants.
        """
        code = bld.code

        def base(a):  # the register or entry under a real/imaginary view
            return a[1] if a[0] in ("real", "imag") else a

        last = {}
        for pc, (_, *args) in enumerate(code):
            for a in map(base, args):
                if a[0] == "r":
                    last[a[1]] = pc
        last[bad[1]] = max(last[bad[1]], n_phase1)  # read after phase 1
        phys: dict[int, int] = {}
        free: dict[str, list[int]] = {"c": [], "f": [], "b": []}
        self.buffers: list[str] = []
        for pc, (_, *args) in enumerate(code):
            out = base(args[-1])
            for a in set(map(base, args[:-1])):  # inputs dying here may be reused by the output
                if a[0] == "r" and last[a[1]] == pc and a != out and a[1] in phys:
                    free[bld.dtype[a[1]]].append(phys[a[1]])
            if out[0] == "r" and out[1] not in phys:
                kind = bld.dtype[out[1]]
                if free[kind]:
                    phys[out[1]] = free[kind].pop()
                else:
                    phys[out[1]] = len(self.buffers)
                    self.buffers.append(kind)
            if out[0] == "r" and last.get(out[1], -1) <= pc and out[1] != bad[1]:
                free[bld.dtype[out[1]]].append(phys[out[1]])
        nbuf = len(self.buffers)
        self.views: list[tuple[str, int]] = []  # (part, buffer) -> slot 8 + nbuf + i
        self.derived: list[tuple[int, int, str]] = []  # (slot, entry slot, part), per block
        consts: list = []
        n_fixed = 8 + nbuf

        def slot(a):
            if a[0] == "x":
                return a[1]
            if a[0] == "o":
                return 4 + a[1]
            if a[0] == "r":
                return 8 + phys[a[1]]
            if a[0] in ("real", "imag"):
                key = (a[0], slot(a[1]))
                if a[1][0] == "r":
                    if key not in self.views:
                        self.views.append(key)
                    return ("view", self.views.index(key))
                for s, src, part in self.derived:
                    if (part, src) == key:
                        return ("derived", s)
                self.derived.append((len(self.derived), key[1], key[0]))
                return ("derived", len(self.derived) - 1)
            consts.append(a[1])
            return ("const", len(consts) - 1)

        raw = [(fn, [slot(a) for a in args]) for fn, *args in code]
        n_views = len(self.views)
        n_derived = len(self.derived)

        def final(i):
            if isinstance(i, int):
                return i
            kind, j = i
            if kind == "view":
                return n_fixed + j
            if kind == "derived":
                return n_fixed + n_views + j
            return n_fixed + n_views + n_derived + j

        self.derived = [(n_fixed + n_views + j, src, part) for j, src, part in self.derived]
        linked = []
        for fn, idx in raw:
            idx = [final(i) for i in idx]
            if fn is np.copyto:  # copyto(dst, src)
                idx = idx[::-1]
            linked.append((fn, itemgetter(*idx)))
        self.phase1, self.phase2 = linked[:n_phase1], linked[n_phase1:]
        self.consts = consts
        self.bad_slot = 8 + phys[bad[1]]

    def slots(self, m: int) -> list:
        """A fresh slot list with buffers for blocks of up to m points."""
        dt = {"c": np.complex128, "f": np.float64, "b": np.bool_}
        bufs = [np.empty(m, dt[k]) for k in self.buffers]
        views = [getattr(bufs[b - 8], part) for part, b in self.views]
        return [None] * 8 + bufs + views + [None] * len(self.derived) + list(self.consts)

    def start_block(self, slots: list, blk, out) -> None:
        """Point the entry slots (and their real/imaginary views) at one block."""
        slots[0:4] = blk.T
        slots[4:8] = out.T
        for s, src, part in self.derived:
            slots[s] = getattr(slots[src], part)


@lru_cache(maxsize=256)
def _program(src: str, dst: str, r_src, r_dst) -> _Program:
    return _Program(src, dst, r_src, r_dst)


def _run(prog, slots):
    for fn, get in prog:
        fn(*get(slots))


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
    flat = np.ascontiguousarray(arr).reshape(-1, 4)
    n = flat.shape[0]
    out = np.empty_like(flat)
    if src == dst and (src != "s" or r == r_out):
        if not np.all(np.isfinite(flat)):
            raise InputError("data: parameters contain NaN or infinity")
        out[...] = flat
        return out.reshape(*lead, 2, 2)
    prog = _program(src, dst, r, r_out)
    block = max(1, min(BLOCK, n))
    slots = prog.slots(block)
    phase1, phase2, bad_slot = prog.phase1, prog.phase2, prog.bad_slot
    for start in range(0, n, block):
        stop = min(start + block, n)
        blk = flat[start:stop]
        # The sum of the block is finite exactly when every entry is, unless finite
        # entries overflow it: then the exact test decides.
        with np.errstate(over="ignore"):
            total = blk.view(np.float64).sum()
        if not math.isfinite(total) and not np.all(np.isfinite(blk)):
            raise InputError("data: parameters contain NaN or infinity")
        if stop - start != block:  # the last, shorter block
            slots = prog.slots(stop - start)
        prog.start_block(slots, blk, out[start:stop])
        _run(phase1, slots)
        bad = slots[bad_slot]
        if bad.any():
            if not np.all(np.isfinite(flat[stop:])):  # bad input is reported first
                raise InputError("data: parameters contain NaN or infinity")
            idx = int(np.flatnonzero(bad)[0]) + start
            raise SingularParameterError(
                f"the {dst} parameters do not exist for this network "
                f"({src} -> {dst} pivot is singular at point {idx})",
            )
        _run(phase2, slots)
    return out.reshape(*lead, 2, 2)

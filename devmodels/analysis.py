r"""Terminated analysis: a two-port between a source impedance and a load.

A source :math:`V_s` behind :math:`Z_s` at port 1 and a load :math:`Z_L = 1/Y_L` at port 2
(port currents flow into the two-port, so :math:`I_2 = -Y_L V_2`).  With the admittance
parameters and :math:`P = y_{12} y_{21}` the port equations give (any circuits text, e.g.
Gray and Meyer, *Analysis and Design of Analog Integrated Circuits*, ch. 3, from memory):

.. math::
    a_v = \frac{V_2}{V_1} = \frac{-y_{21}}{y_{22} + Y_L},\qquad
    a_{vs} = \frac{V_2}{V_s} = \frac{-y_{21}}{(1 + Z_s y_{11})(y_{22} + Y_L) - Z_s P},

.. math::
    Y_{in} = y_{11} - \frac{P}{y_{22} + Y_L},\qquad
    Y_{out} = y_{22} - \frac{Z_s P}{1 + Z_s y_{11}},\qquad
    a_i = \frac{-I_2}{I_1} = \frac{Y_L a_v}{Y_{in}},

:math:`Z_{in} = 1/Y_{in}` with the load attached, :math:`Z_{out} = 1/Y_{out}` with the
source (shorted) behind :math:`Z_s`.  The power gains follow from the powers themselves,
so they use the actual source and load and not the S reference (Gonzalez, *Microwave
Transistor Amplifiers*, 2nd ed., sec. 2.6, from memory):

.. math::
    G_T = \frac{P_L}{P_{avs}} = 4 R_s\,\mathrm{Re}(Y_L)\,|a_{vs}|^2,\qquad
    G_P = \frac{P_L}{P_{in}} = \frac{|a_v|^2\,\mathrm{Re}(Y_L)}{\mathrm{Re}(Y_{in})},\qquad
    G_A = \frac{P_{avo}}{P_{avs}} = \frac{R_s |y_{21}|^2}{|1 + Z_s y_{11}|^2\,\mathrm{Re}(Y_{out})} .

Stability and gain invariants, also from Y:

* Rollett's K (Rollett, "Stability and power-gain invariants of linear twoports", IRE
  Trans. CT-9(1), 1962; the same form holds in Z, Y, H or G):
  :math:`K = (2 g_{11} g_{22} - \mathrm{Re}\,P) / |P|` with :math:`g_{ij} = \mathrm{Re}\,y_{ij}`.
* Mason's unilateral gain (Mason, "Power gain in feedback amplifiers", IRE Trans. CT-1(2),
  1954): :math:`U = |y_{21} - y_{12}|^2 / (4 (g_{11} g_{22} - g_{12} g_{21}))`.
* MSG :math:`= |y_{21}/y_{12}|` (:math:`= |S_{21}/S_{12}|`), and where K > 1
  MAG :math:`= \mathrm{MSG}\,(K - \sqrt{K^2-1}) = \mathrm{MSG} / (K + \sqrt{K^2-1})`
  (Gonzalez, ch. 3, from memory), computed multiplied out by :math:`|P|` with
  :math:`N = 2 g_{11} g_{22} - \mathrm{Re}\,P`:
  :math:`\mathrm{MAG} = |y_{21}|^2 / (N + \sqrt{(N - |P|)(N + |P|)})`.  This form does not
  cancel for large K and stays continuous at :math:`y_{12} = 0`, where it is the unilateral
  maximum :math:`|y_{21}|^2 / (4 g_{11} g_{22}) = |S_{21}|^2 / ((1 - |S_{11}|^2)(1 - |S_{22}|^2))`
  (Gonzalez, sec. 3.2, from memory): the limit of MAG as :math:`S_{12} \to 0`.
* Edwards and Sinsky's :math:`\mu = (1 - |S_{11}|^2) / (|S_{22} - \Delta S_{11}^*| + |S_{12} S_{21}|)`
  and :math:`\mu'` (the same with ports exchanged; IEEE Trans. MTT 40(12), 1992), with S at
  the reference resistances :math:`z_{01}, z_{02}`.  With the normalised admittances
  :math:`\hat y_{11} = z_{01} y_{11}`, :math:`\hat y_{22} = z_{02} y_{22}`,
  :math:`\hat p = z_{01} z_{02} P`, :math:`d = (1 + \hat y_{11})(1 + \hat y_{22}) - \hat p`,
  :math:`N_{11} = S_{11} d = (1 - \hat y_{11})(1 + \hat y_{22}) + \hat p`,
  :math:`N_{22} = S_{22} d = (1 + \hat y_{11})(1 - \hat y_{22}) + \hat p`, the losses are
  real parts computed directly (:math:`1 - |\Gamma|^2 = 4\,\mathrm{Re}\,\hat y / |1 + \hat y|^2`
  for a port admittance :math:`\hat y`, applied to the input admittance with port 2 in
  :math:`z_{02}`):

  .. math::
      n_1 = \frac{|d|^2}{4}(1 - |S_{11}|^2) = \mathrm{Re}\,\hat y_{11}\,|1 + \hat y_{22}|^2
            - \mathrm{Re}\big(\hat p\,(1 + \hat y_{22})^*\big),\qquad
      \mu = \frac{n_1}{|N_{22} n_1 + \hat p N_{11}^*| / |d| + |\hat p|}

  (:math:`S_{22} - \Delta S_{11}^* = S_{22}(1 - |S_{11}|^2) + S_{12} S_{21} S_{11}^*`), and
  :math:`\mu'` with the indices 1 and 2 exchanged.

Why these forms: where a port is almost lossless (a FET gate at low frequency)
:math:`|S_{11}| \to 1`, and :math:`1 - |S_{11}|^2`, :math:`\mathrm{Re}\,Z_{in}` or the
denominator of U computed as differences of numbers near 1 (or of large complex values, as
through the chain matrix) lose as many digits as :math:`1 - |S_{11}|` has leading
zeros.  Above, every real part is a real part of a Y entry or a sum of products whose size
is set by the losses themselves, so the results keep the accuracy of Y
(``tests/test_numerics_extreme.py`` checks 1e-6 against a 50-digit reference, 1 Hz to
100 GHz).  Two-ports given as another kind are converted to Y first; one without Y
parameters goes through the chain matrix and S (:func:`terminate_arrays`,
:func:`stability_arrays`), the same quantities with the older forms.

Arrays are vectorised over the leading axis (frequencies, or samples of a spread).
A value that does not exist for the network is NaN in the arrays; output layers show it as
``null`` / ``open`` / ``unbounded``.  Exactly (never by a size threshold):

* ``zin`` / ``zout`` where :math:`Y_{in}` / :math:`Y_{out}` is 0 (an open port);
* ``k`` where :math:`y_{12} y_{21} = 0` (:math:`S_{12} S_{21} = 0`: K is unbounded);
  ``msg_db`` where :math:`y_{12} = 0` and :math:`N \le 0` (the MSG is unbounded; with
  :math:`N > 0` it holds the MAG, the unilateral maximum, see :attr:`Terminated.msg_is_mag`),
  and where the MAG/MSG is 0;
* ``u_db`` where :math:`g_{11} g_{22} - g_{12} g_{21} = 0` (U unbounded, e.g. a FET with
  neither gate resistance nor any other loss), and where U <= 0 (no dB value:
  U = 0 for a reciprocal network, U < 0 where the denominator is negative);
* ``mu`` / ``mu_prime`` where they are 0/0 (a lossless port of a unilateral network);
* ``gp_db`` where :math:`\mathrm{Re}\,Y_{in} \le 0`, ``ga_db`` where
  :math:`\mathrm{Re}\,Y_{out} \le 0`, and any gain that is 0 (no dB value):
  ``gt_db`` and ``ga_db`` where :math:`\mathrm{Re}\,Z_s = 0` (an ideal source: its available
  power :math:`|V_s|^2 / (8 R_s)` is unlimited, so GT = GA = 0;
  :attr:`Terminated.ideal_source`), ``gt_db`` and ``gp_db`` where :math:`\mathrm{Re}\,Y_L = 0`
  (an open or purely reactive load takes no power, so GT = GP = 0;
  :attr:`Terminated.lossless_load`).  These are zeros, not unbounded values.

The stability verdict has a stated tolerance (:data:`STABILITY_TOL`): a point whose mu is
within it of 1 lies on the boundary of unconditional stability (marginal; for example a
unilateral device with a lossless output, whose mu is exactly 1 and computes as 1 plus or minus
a rounding error) and is neither unconditionally stable nor called potentially unstable
(:attr:`Terminated.stability`).
"""

from __future__ import annotations

import dataclasses

import math
import os
import threading
from dataclasses import dataclass

import numpy as np

from .conversions import convert, normalize_z0
from .exceptions import InputError, SingularParameterError
from .twoport import TwoPort

#: Points per block in :func:`terminate` and the ``*_arrays_y`` functions.  The Y forms keep
#: about 40 scratch arrays per thread (:class:`_Work`).  Measured (one thread, CPU time, best
#: of 60, a CB stage, all results): 8192 points about 210 ns per point, 65536 about 270 (the
#: scratch no longer fits the cache); the chain-matrix and S forms they replace took about
#: 520 ns at either size.
BLOCK = 8192
#: Result arrays of the terminated analysis and their types.
_RESULT_TYPES = {"av": complex, "avs": complex, "ai": complex, "zin": complex, "zout": complex,
                 "gt_db": float, "gp_db": float, "ga_db": float, "zs": complex, "zl": complex,
                 "k": float, "delta": float, "mu": float, "mu_prime": float, "msg_db": float,
                 "u_db": float}
#: 10 / ln(10): dB of a power ratio per unit of its natural logarithm.
_DB_PER_NEPER = 10.0 / math.log(10.0)
#: Threads for long terminated analyses (results do not depend on it).
THREADS = min(4, os.cpu_count() or 1)
#: Stability verdicts: |mu - 1| no larger than this is on the boundary of unconditional
#: stability (marginal), neither side of it; larger than rounding (mu is computed to about
#: 1e-15 relative from Y), smaller than any margin a design would rely on.
STABILITY_TOL = 1e-9

__all__ = ["Terminated", "STABILITY_TOL", "terminate", "terminate_configs", "terminate_arrays", "terminate_arrays_y",
           "stability_arrays", "stability_arrays_y", "rollett_k_arrays_y", "to_db"]


@dataclass(frozen=True, slots=True)
class Terminated:
    """Results of :func:`terminate`; each field has shape (F,).

    Attributes
    ----------
    freq : ndarray or None
        Frequencies in Hz (None for frequency-independent parameters).
    av, avs, ai : complex ndarray
        Voltage gain V2/V1, voltage gain from the source V2/Vs, current gain -I2/I1.
    zin, zout : complex ndarray
        Input impedance with the load attached; output impedance with the source
        (shorted) behind Zs; ohm.  NaN where open.
    gt_db, gp_db, ga_db : float ndarray
        Transducer, operating and available power gains in dB.
    k, delta, mu, mu_prime : float ndarray
        Rollett K, |Delta|, Edwards-Sinsky mu (input) and mu' (output).  K is NaN exactly
        where S12 S21 = 0 (unbounded).
    msg_db : float ndarray
        MAG where K > 1, else MSG, in dB.  At S12 = 0 it is the MAG where the ports have
        losses of one sign (the unilateral maximum |S21|^2 / ((1 - |S11|^2)(1 - |S22|^2)), the
        limit of MAG as S12 -> 0), else NaN (the MSG is unbounded); see :attr:`msg_is_mag`.
    u_db : float ndarray
        Mason's unilateral power gain U in dB; NaN exactly where its denominator is zero
        (unbounded), and where U <= 0 (no dB value).
    zs, zl : complex ndarray
        The source and load impedances used (ohm; zl may be inf for an open load).
    z0 : (float, float)
        Reference resistances used for S (ohm).
    config : str or None
        The configuration of the two-port (``ce``, ``cs``, ...), if known.
    """

    freq: np.ndarray | None
    av: np.ndarray
    avs: np.ndarray
    ai: np.ndarray
    zin: np.ndarray
    zout: np.ndarray
    gt_db: np.ndarray
    gp_db: np.ndarray
    ga_db: np.ndarray
    k: np.ndarray
    delta: np.ndarray
    mu: np.ndarray
    mu_prime: np.ndarray
    msg_db: np.ndarray
    u_db: np.ndarray
    zs: np.ndarray
    zl: np.ndarray
    z0: tuple[float, float]
    config: str | None = None

    def point(self, i: int) -> dict:
        """All results at point ``i`` as a dict (complex values as Python complex, NaN kept)."""
        out = {"freq": None if self.freq is None else float(self.freq[i])}
        for name in ("av", "avs", "ai", "zin", "zout"):
            out[name] = complex(getattr(self, name)[i])
        for name in ("gt_db", "gp_db", "ga_db", "k", "delta", "mu", "mu_prime", "msg_db", "u_db"):
            out[name] = float(getattr(self, name)[i])
        return out

    def __len__(self) -> int:
        return self.av.shape[0]

    def _flags(self, sl: slice) -> dict[str, np.ndarray]:
        """The verdicts of the properties below on the points ``sl``, one rule for all of them."""
        mu, k, msg = self.mu[sl], self.k[sl], self.msg_db[sl]
        n = mu.shape[0]
        zs = np.broadcast_to(self.zs, (len(self),))[sl]
        zl = np.broadcast_to(self.zl, (len(self),))[sl]
        with np.errstate(invalid="ignore", divide="ignore"):
            unconditional = mu > 1.0 + STABILITY_TOL
            marginal = ~(np.abs(mu - 1.0) > STABILITY_TOL)
            flags = {
                "unconditional": unconditional, "marginal": marginal,
                "stability": np.where(unconditional, "unconditional",
                                      np.where(marginal, "marginal", "conditional")).reshape(n),
                "unilateral": np.isnan(k),
                "msg_is_mag": (k > 1) | (np.isnan(k) & np.isfinite(msg)),
                "ideal_source": zs.real == 0,
                "lossless_load": ~np.isfinite(zl) | ((1.0 / zl).real == 0)}
        return flags

    @property
    def unconditional(self) -> np.ndarray:
        """True where the two-port is unconditionally stable: mu > 1 + :data:`STABILITY_TOL`
        (Edwards and Sinsky 1992).

        Equivalent to K > 1 together with |Delta| < 1.  Where K > 1 but |Delta| >= 1,
        ``msg_db`` still holds the MAG formula (as scikit-rf's ``max_gain`` does), but the
        simultaneous conjugate match it assumes needs a termination outside the Smith chart
        (|Gamma| > 1), so that gain cannot be reached with passive terminations.  A point
        within the tolerance of mu = 1 is :attr:`marginal`, not unconditionally stable.
        """
        return self._flags(slice(None))["unconditional"]

    @property
    def marginal(self) -> np.ndarray:
        """True where the two-port is on the boundary of unconditional stability.

        There |mu - 1| <= :data:`STABILITY_TOL`, or mu is 0/0 (NaN: a lossless port of a
        unilateral network, |S11| = 1 or |S22| = 1, which is on the boundary too; Edwards
        and Sinsky 1992, the geometric meaning of mu, from memory).
        """
        return self._flags(slice(None))["marginal"]

    @property
    def stability(self) -> np.ndarray:
        """The verdict at each point: ``"unconditional"`` (mu > 1 + tol), ``"marginal"``
        (|mu - 1| <= tol, see :attr:`marginal`) or ``"conditional"`` (mu < 1 - tol: some
        passive source or load makes the two-port oscillate); tol is :data:`STABILITY_TOL`.
        """
        return self._flags(slice(None))["stability"]

    @property
    def msg_is_mag(self) -> np.ndarray:
        """True where ``msg_db`` is the MAG (K > 1, or S12 = 0 with the unilateral maximum).

        K is NaN exactly where S12 S21 = 0, and ``msg_db`` is finite there only where it holds
        the unilateral maximum gain.
        """
        return self._flags(slice(None))["msg_is_mag"]

    @property
    def unilateral(self) -> np.ndarray:
        """True where S12 = 0 (K is unbounded; a finite ``msg_db`` is the unilateral maximum)."""
        return self._flags(slice(None))["unilateral"]

    @property
    def ideal_source(self) -> np.ndarray:
        """True where Re(Zs) = 0: the source's available power is unlimited, so GT = GA = 0
        and ``gt_db``, ``ga_db`` are NaN (no dB value), not unbounded."""
        return self._flags(slice(None))["ideal_source"]

    @property
    def lossless_load(self) -> np.ndarray:
        """True where Re(YL) = 0 (an open or purely reactive load): the load takes no power,
        so GT = GP = 0 and ``gt_db``, ``gp_db`` are NaN (no dB value), not unbounded."""
        return self._flags(slice(None))["lossless_load"]

    def verdicts(self, i: int) -> dict[str, bool | str]:
        """The properties above at point ``i`` as Python values, without computing the others.

        Keys ``unconditional``, ``marginal``, ``stability``, ``unilateral``, ``msg_is_mag``,
        ``ideal_source``, ``lossless_load``.
        """
        i = range(len(self))[i]  # a negative index counts from the end
        return {k: (str(v[0]) if k == "stability" else bool(v[0]))
                for k, v in self._flags(slice(i, i + 1)).items()}


def to_db(power_ratio: np.ndarray, out: np.ndarray | None = None) -> np.ndarray:
    """10 log10 of a power ratio, in dB.

    Parameters
    ----------
    power_ratio : array_like of float
        Power ratio (dimensionless).
    out : ndarray of float, optional
        Array that receives the result.

    Returns
    -------
    ndarray of float
        The ratio in dB; NaN where it is not positive and finite (no dB value).
    """
    p = np.asarray(power_ratio, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        out = np.log(p, out=out)  # measured 40 % faster than log10
    out *= _DB_PER_NEPER
    if not math.isfinite(out.sum()):  # one pass when every value is finite (the usual case)
        out[~np.isfinite(out)] = np.nan
    return out


def _nan_where_not_finite(x: np.ndarray) -> np.ndarray:
    """Mark results of a division by zero (inf or nan parts) as NaN, in place."""
    with np.errstate(over="ignore", invalid="ignore"):
        total = x.sum()  # one pass when every value is finite (the usual case)
    if not (math.isfinite(total.real) and math.isfinite(total.imag)):
        bad = ~np.isfinite(x)
        if bad.any():
            x[bad] = np.nan
    return x


def _impedance(name: str, z, n: int) -> np.ndarray:
    z = np.broadcast_to(np.asarray(z, dtype=complex), (n,)).copy()
    if np.any(np.isnan(z)):
        raise InputError(f"{name}: impedance is not a number")
    finite = np.isfinite(z)
    if np.any(finite & (z.real < 0)):
        bad = z[finite & (z.real < 0)][0]
        raise InputError(f"{name}: expected a resistance >= 0 ohm (a passive termination), got {bad:g}")
    if np.any(~finite & (np.abs(z.real) != np.inf)):
        raise InputError(f"{name}: an open termination must be given as real infinity")
    return z


class _Work:
    """Scratch arrays of one thread, kept from block to block.

    Every intermediate of the Y forms is written into one of these with ``out=``: a fresh
    array per operation costs its page faults again on every block, which measured about as
    much as the arithmetic itself.
    """

    def __init__(self) -> None:
        self.arrays: dict[tuple[str, type], np.ndarray] = {}

    def c(self, name: str, n: int) -> np.ndarray:
        """A complex scratch array of length n."""
        return self._get(name, n, complex)

    def f(self, name: str, n: int) -> np.ndarray:
        """A float scratch array of length n."""
        return self._get(name, n, float)

    def _get(self, name: str, n: int, dtype) -> np.ndarray:
        a = self.arrays.get((name, dtype))
        if a is None or a.shape[0] < n:
            a = self.arrays[(name, dtype)] = np.empty(max(n, min(BLOCK, 1 << 16)), dtype=dtype)
        return a[:n]


_LOCAL = threading.local()


def _work() -> _Work:
    w = getattr(_LOCAL, "work", None)
    if w is None:
        w = _LOCAL.work = _Work()
    return w


def _mason_denominator(indefinite: np.ndarray, den: np.ndarray, size: np.ndarray, w: _Work) -> None:
    """Improve Mason's denominator ``den`` (N,) where it cancels, in place.

    ``den`` is g11 g22 - g12 g21 of the two-port and ``size`` is |g11 g22| + |g12 g21|.
    Where more than 10 bits cancel, ``den`` becomes the principal 2x2 minor of
    Re(indefinite) (N, 3, 3) with the smallest such size: all three minors are equal in exact
    arithmetic (zero row and column sums), and the one with the smallest products loses
    least to rounding.  A rule per point, so the result does not depend on the blocks.
    """
    bad = np.abs(den) < size * 2.0 ** -10
    if not bad.any():
        return
    n = den.shape[0]
    g = indefinite.real
    a, b, s = w.f("ma", n), w.f("mb", n), w.f("ms", n)
    best, best_size = w.f("mbest", n), w.f("mbest_size", n)
    best_size[...] = np.inf
    for i, j in ((0, 1), (1, 2), (0, 2)):
        np.multiply(g[:, i, i], g[:, j, j], out=a)
        np.multiply(g[:, i, j], g[:, j, i], out=b)
        np.abs(a, out=s)
        s += np.abs(b, out=w.f("mabs", n))
        a -= b
        better = s < best_size
        np.copyto(best, a, where=better)
        np.copyto(best_size, s, where=better)
    np.copyto(den, best, where=bad)


def stability_arrays_y(y: np.ndarray, z0=50.0, out: dict | None = None, *,
                       indefinite: np.ndarray | None = None) -> dict[str, np.ndarray]:
    """K, |Delta|, mu, mu', MAG/MSG (dB) and U (dB) from Y of shape (N, 2, 2) in S.

    The forms are those of the module docstring (Rollett 1962 for K, Mason 1954 for U,
    Edwards and Sinsky 1992 for mu and mu', rewritten in admittances so that no loss is
    computed as a difference of numbers near 1).  K, MSG, MAG and U do not depend on the
    reference resistance; mu, mu' and |Delta| use S at ``z0``.

    Parameters
    ----------
    y : ndarray, complex, shape (N, 2, 2)
        Admittance parameters in S.
    z0 : float or (float, float)
        Reference resistance(s) in ohm of S for mu, mu' and |Delta|.
    out : dict, optional
        Maps result names to float arrays of shape (N,) that receive the results.
    indefinite : ndarray, complex, shape (N, 3, 3), optional
        The indefinite admittance matrix ``y`` was taken from (S).  Where Mason's denominator
        :math:`g_{11} g_{22} - g_{12} g_{21}` loses more than 10 bits to cancellation, it is
        taken instead from the principal 2x2 minor of the real part of the indefinite matrix
        with the smallest products: that real part has zero row and column sums, so all its
        cofactors are equal (Shekel, Proc. IRE 42, 1954, from memory).  This matters where
        the two-port's own real parts are large and nearly cancel, e.g. a common-gate FET at
        low frequency, whose g11 g22 and g12 g21 are both about gm/ro while U's denominator
        is set by the gate losses.

    Returns
    -------
    dict of str to ndarray (N,)
        ``k``, ``delta``, ``mu``, ``mu_prime`` (dimensionless), ``msg_db``, ``u_db`` (dB);
        NaN where a value does not exist (module docstring).
    """
    z1, z2 = normalize_z0(z0)
    y = np.asarray(y, dtype=complex)
    n = y.shape[0]
    o = out or {}
    res = {k: o[k] if k in o else np.empty(n) for k in ("k", "delta", "mu", "mu_prime", "msg_db", "u_db")}
    for start in range(0, n, BLOCK):
        stop = min(start + BLOCK, n)
        _stability_y(_entries(y[start:stop], _work()), z1, z2, {k: v[start:stop] for k, v in res.items()},
                     None if indefinite is None else indefinite[start:stop])
    return res


def rollett_k_arrays_y(y: np.ndarray) -> np.ndarray:
    """Rollett's stability factor K alone, from Y of shape (N, 2, 2) in S.

    :math:`K = (2 g_{11} g_{22} - \\mathrm{Re}\\,P) / |P|`, :math:`P = y_{12} y_{21}` (Rollett
    1962, module docstring): the ``k`` of :func:`stability_arrays_y` by the same operations
    (equal bit for bit, checked by the tests), for callers that need no other invariant.

    Parameters
    ----------
    y : ndarray, complex, shape (N, 2, 2)
        Admittance parameters in S.

    Returns
    -------
    ndarray (N,)
        K (dimensionless); NaN where it does not exist (y12 or y21 exactly 0, or not finite).
    """
    y = np.asarray(y, dtype=complex)
    y12, y21 = y[:, 0, 1], y[:, 1, 0]
    p = y12 * y21
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        num = np.multiply(y[:, 0, 0].real, y[:, 1, 1].real)
        num *= 2.0
        num -= p.real
        k = np.divide(num, np.abs(p), out=num)
    if not (np.all(y12) and np.all(y21)):  # exactly: S12 S21 = 0 somewhere
        k[(y12 == 0) | (y21 == 0)] = np.nan
    return _nan_where_not_finite(k)


def _entries(y: np.ndarray, w: _Work) -> tuple[np.ndarray, ...]:
    """y11, y12, y21, y22 as contiguous scratch arrays, and P = y12 y21 (whole-array operations
    on strided views of (N, 2, 2) data cost several times as much)."""
    n = y.shape[0]
    out = []
    for name, (i, j) in zip(("y11", "y12", "y21", "y22"), ((0, 0), (0, 1), (1, 0), (1, 1))):
        a = w.c(name, n)
        a[...] = y[:, i, j]
        out.append(a)
    out.append(np.multiply(out[1], out[2], out=w.c("p", n)))
    return tuple(out)


def _abs2(x: np.ndarray, out: np.ndarray | None = None) -> np.ndarray:
    """|x|^2 of a complex array (into ``out``)."""
    out = np.abs(x, out=out)
    return np.square(out, out=out)


def _stability_y(entries, z1: float, z2: float, o: dict, indefinite=None) -> dict[str, np.ndarray]:
    """The invariants of :func:`stability_arrays_y` on one block of :func:`_entries`, into ``o``."""
    y11, y12, y21, y22, p = entries
    n = p.shape[0]
    w = _work()
    c, f = w.c, w.f
    g11, g22 = y11.real, y22.real
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        ap = np.abs(p, out=f("ap", n))
        num = np.multiply(g11, g22, out=f("num", n))
        # Mason U = |y21 - y12|^2 / (4 (g11 g22 - g12 g21)); a zero denominator: unbounded
        u_den = np.multiply(y12.real, y21.real, out=f("uden", n))
        if indefinite is not None:
            size = np.abs(u_den, out=f("usize", n))
            size += np.abs(num, out=f("t", n))
        np.subtract(num, u_den, out=u_den)
        if indefinite is not None:
            _mason_denominator(indefinite, u_den, size, w)
        u_den *= 4.0
        u = _abs2(np.subtract(y21, y12, out=c("t1", n)), f("u", n))
        u /= u_den
        # Rollett K = (2 g11 g22 - Re y12 y21) / |y12 y21|
        num *= 2.0
        num -= p.real
        k = np.divide(num, ap, out=o.get("k"))
        # MSG = |y21 / y12|; where K > 1, MAG = MSG / (K + sqrt(K^2 - 1)) multiplied out by |P|:
        # MAG = |y21|^2 / (N + sqrt((N - |P|)(N + |P|))), N = 2 g11 g22 - Re P, which does not
        # cancel as y12 -> 0 and is the unilateral maximum |y21|^2 / (4 g11 g22) at y12 = 0
        msg = np.abs(y21, out=f("msg", n))
        over = k > 1  # at y12 = 0: K = +inf where N > 0
        any_over = over.any()
        if any_over:
            mag = np.square(msg, out=f("mag", n))
            t = np.subtract(num, ap, out=f("magt", n))
            t *= np.add(num, ap, out=f("magt2", n))
            np.sqrt(t, out=t)
            t += num
            mag /= t
        msg /= np.abs(y12, out=f("t", n))
        if any_over:
            np.copyto(msg, mag, where=over)
        # Edwards-Sinsky mu, mu' from the normalised admittances (module docstring)
        e1 = np.multiply(y11, z1, out=c("e1", n))
        e1 += 1.0
        e2 = np.multiply(y22, z2, out=c("e2", n))
        e2 += 1.0
        hp = np.multiply(p, z1 * z2, out=c("hp", n))
        d = np.multiply(e1, e2, out=c("d", n))
        d -= hp
        ad = np.abs(d, out=f("ad", n))
        m11 = np.subtract(2.0, e1, out=c("m11", n))  # 1 - z1 y11
        m22 = np.subtract(2.0, e2, out=c("m22", n))
        t1 = np.multiply(m11, m22, out=c("t1", n))
        t1 -= hp
        delta = np.abs(t1, out=o.get("delta"))
        delta /= ad
        n11 = np.multiply(m11, e2, out=c("n11", n))
        n11 += hp
        n22 = np.multiply(e1, m22, out=c("n22", n))
        n22 += hp
        ahp = np.multiply(ap, z1 * z2, out=f("ahp", n))
        # n1 = Re(z1 y11) |e2|^2 - Re(hp e2*), n2 likewise
        n1 = _loss(g11, z1, e2, hp, f("n1", n), w)
        n2 = _loss(g22, z2, e1, hp, f("n2", n), w)
        mu = np.divide(n1, _mu_den(n22, n1, hp, n11, ad, ahp, w), out=o.get("mu"))
        mu_p = np.divide(n2, _mu_den(n11, n2, hp, n22, ad, ahp, w), out=o.get("mu_prime"))
    if not (np.all(y12) and np.all(y21)):  # exactly: S12 S21 = 0 somewhere
        uni = (y12 == 0) | (y21 == 0)
        k[uni] = np.nan
        msg[uni & ~over] = np.nan  # MSG unbounded; the MAG (the unilateral maximum) is kept
    return {"k": _nan_where_not_finite(k), "delta": _nan_where_not_finite(delta),
            "mu": _nan_where_not_finite(mu), "mu_prime": _nan_where_not_finite(mu_p),
            "msg_db": to_db(msg, o.get("msg_db")), "u_db": to_db(u, o.get("u_db"))}


def _loss(g: np.ndarray, z: float, e: np.ndarray, hp: np.ndarray, out: np.ndarray, w: _Work) -> np.ndarray:
    """z g |e|^2 - Re(hp e*): a quarter of |d|^2 (1 - |S_ii|^2) (module docstring)."""
    n = out.shape[0]
    _abs2(e, out)
    out *= g
    out *= z
    t = np.multiply(hp.real, e.real, out=w.f("lt", n))
    t2 = np.multiply(hp.imag, e.imag, out=w.f("lt2", n))
    t += t2
    out -= t
    return out


def _mu_den(na, nn, hp, nb, ad, ahp, w: _Work):
    """|na nn + hp nb*| / |d| + |hp|, the denominator of mu (module docstring)."""
    n = nn.shape[0]
    t = np.conjugate(nb, out=w.c("mt", n))
    t *= hp
    t2 = np.multiply(na, nn, out=w.c("mt2", n))
    t += t2
    r = np.abs(t, out=w.f("mr", n))
    r /= ad
    r += ahp
    return r


def stability_arrays(s: np.ndarray, out: dict | None = None) -> dict[str, np.ndarray]:
    """K, |Delta|, mu, mu', MAG/MSG (dB) and U (dB) from S of shape (N, 2, 2).

    The S forms of the same quantities (Rollett 1962; Edwards and Sinsky 1992; Mason's U as
    in Gupta, "Power gain in feedback amplifiers, a classic revisited", IEEE Trans. MTT
    40(5), 1992).  Where a port is almost lossless (|S11| or |S22| near 1) they lose the
    digits of 1 - |S|^2; when Y is at hand use :func:`stability_arrays_y`.

    Parameters
    ----------
    s : ndarray, complex, shape (N, 2, 2)
        Scattering parameters (dimensionless).
    out : dict, optional
        Maps result names to float arrays of shape (N,) that receive the results.

    Returns
    -------
    dict of str to ndarray (N,)
        ``k``, ``delta``, ``mu``, ``mu_prime``, ``msg_db``, ``u_db``, as in
        :func:`stability_arrays_y`.
    """
    o = out or {}
    s11, s12, s21, s22 = s[:, 0, 0], s[:, 0, 1], s[:, 1, 0], s[:, 1, 1]
    p12 = s12 * s21
    delta = s11 * s22 - p12
    a11, a22 = _abs2(s11), _abs2(s22)
    p = np.abs(p12)
    uni = s12 == 0
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        # Rollett K = N / (2 |S12 S21|); S12 S21 = 0 (unilateral): K does not exist (NaN)
        big_n = 1.0 - a11 - a22 + _abs2(delta)
        if uni.any():  # N = (1 - |S11|^2)(1 - |S22|^2) there, written without cancelling
            big_n[uni] = (1.0 - a11[uni]) * (1.0 - a22[uni])
        k = np.divide(big_n, 2.0 * p, out=o.get("k"))
        # mu, mu' (0/0 at a lossless port: does not exist)
        mu = np.divide(1.0 - a11, np.abs(s22 - delta * s11.conj()) + p, out=o.get("mu"))
        mu_p = np.divide(1.0 - a22, np.abs(s11 - delta * s22.conj()) + p, out=o.get("mu_prime"))
        # MSG = |S21/S12|; where K > 1, MAG = MSG (K - sqrt(K^2 - 1)) multiplied out by 2 |S12 S21|:
        # MAG = 2 |S21|^2 / (N + sqrt((N - 2p)(N + 2p))), which does not cancel as S12 -> 0 and
        # is the unilateral maximum |S21|^2 / ((1 - |S11|^2)(1 - |S22|^2)) at S12 = 0
        kk = s21 / s12
        ratio = np.abs(kk)
        over = k > 1  # at S12 = 0: K = +inf where N > 0
        msg = ratio.copy()
        if over.any():
            no, po = big_n[over], 2.0 * p[over]
            msg[over] = 2.0 * _abs2(s21[over]) / (no + np.sqrt((no - po) * (no + po)))
        # Mason's U from the S ratio kk = s21/s12; S12 = 0: the unilateral limit
        # |s21|^2 / ((1 - |s11|^2)(1 - |s22|^2)).
        u = _abs2(kk - 1.0) / (2.0 * (k * ratio - kk.real))
    if uni.any():
        k[uni] = np.nan
        msg[uni & ~over] = np.nan  # MSG unbounded; the MAG (the unilateral maximum) is kept
        with np.errstate(invalid="ignore", divide="ignore"):
            u[uni] = _abs2(s21[uni]) / ((1.0 - a11[uni]) * (1.0 - a22[uni]))
    k = _nan_where_not_finite(k)
    return {"k": k, "delta": np.abs(delta, out=o.get("delta")), "mu": _nan_where_not_finite(mu),
            "mu_prime": _nan_where_not_finite(mu_p), "msg_db": to_db(msg, o.get("msg_db")),
            "u_db": to_db(u, o.get("u_db"))}


def terminate_arrays(abcd: np.ndarray, zs, zl) -> dict[str, np.ndarray]:
    """Gains and impedances from chain parameters between a source and a load.

    The chain-matrix forms (Pozar, *Microwave Engineering*, 4th ed., sec. 4.4, from memory):
    ``av = 1/(A + B YL)``, ``zin = (A + B YL)/(C + D YL)``, ... .  Where a port is almost
    lossless they lose the digits of Re(zin); with Y at hand use :func:`terminate_arrays_y`.

    Parameters
    ----------
    abcd : ndarray, complex, shape (N, 2, 2)
        Chain parameters (A, B in ohm; C in S; D dimensionless).
    zs, zl : complex or array (N,)
        Source and load impedances in ohm; ``zl`` may be ``inf`` for an open load.

    Returns
    -------
    dict of str to ndarray (N,)
        ``av``, ``avs``, ``ai``, ``zin``, ``zout``, ``gt_db``, ``gp_db``, ``ga_db``, ``zs``, ``zl``.
    """
    n = abcd.shape[0]
    return _terminate_checked(abcd, *_terminations(zs, zl, n))


def terminate_arrays_y(y: np.ndarray, zs, zl) -> dict[str, np.ndarray]:
    """Gains and impedances from Y parameters between a source and a load.

    The Y forms of the module docstring: the real parts that set Re(zin), GP and GA are
    computed directly, so they keep the accuracy of Y where a port is almost lossless.

    Parameters
    ----------
    y : ndarray, complex, shape (N, 2, 2)
        Admittance parameters in S.
    zs, zl : complex or array (N,)
        Source and load impedances in ohm; ``zl`` may be ``inf`` for an open load.

    Returns
    -------
    dict of str to ndarray (N,)
        ``av``, ``avs``, ``ai``, ``zin``, ``zout``, ``gt_db``, ``gp_db``, ``ga_db``, ``zs``, ``zl``
        (as in :class:`Terminated`).

    Raises
    ------
    SingularParameterError
        Where y21 = 0 (no forward transmission, as for :func:`terminate`), or where the
        termination leaves the network without a solution.
    """
    y = np.asarray(y, dtype=complex)
    n = y.shape[0]
    zs, zl = _terminations(zs, zl, n)
    res = {k: np.empty(n, dtype=_RESULT_TYPES[k]) for k in ("av", "avs", "ai", "zin", "zout", "gt_db",
                                                           "gp_db", "ga_db")}
    for start in range(0, n, BLOCK):
        stop = min(start + BLOCK, n)
        blk = y[start:stop]
        _check_y(blk, start)
        _terminate_y(_entries(blk, _work()), zs[start:stop], zl[start:stop],
                     {k: v[start:stop] for k, v in res.items()}, None, start)
    res.update(zs=zs, zl=zl)
    return res


def _check_y(y: np.ndarray, start: int = 0) -> None:
    """Refuse non-finite Y and a Y without forward transmission (y21 = 0)."""
    with np.errstate(over="ignore", invalid="ignore"):
        total = y.sum()  # one pass when every value is finite (the usual case)
    if not (math.isfinite(total.real) and math.isfinite(total.imag)) and not np.isfinite(y).all():
        raise InputError("data: parameters contain NaN or infinity")
    if not np.all(y[:, 1, 0]):
        bad = np.flatnonzero(y[:, 1, 0] == 0)
        raise SingularParameterError(
            "two-port: no forward transmission (y21 = 0 at point "
            f"{start + bad[0]}; at 0 Hz a coupling capacitor blocks it), so there is no terminated gain")


def _no_solution(bad: np.ndarray, freq, start: int) -> SingularParameterError:
    i = start + int(np.flatnonzero(bad)[0])
    where = f"point {i}" if freq is None else f"{float(freq[i]):g} Hz"
    return SingularParameterError(
        f"rs, rl: the network has no solution with this source and load at {where}: the "
        "determinant of the terminated port equations is zero (a node without a DC path, e.g. "
        "a floating output left open at 0 Hz, or an active port that cancels the termination)")


def _terminate_y(entries, zs: np.ndarray, zl: np.ndarray, o: dict, freq=None,
                 start: int = 0) -> dict[str, np.ndarray]:
    """The Y forms of the module docstring on one block of :func:`_entries`, into ``o``.

    ``zs`` and ``zl`` have the block's length or length 1 (one termination for every point).
    """
    y11, y12, y21, y22, p = entries
    n = p.shape[0]
    w = _work()
    c, f = w.c, w.f
    open_load = ~np.isfinite(zl)
    with np.errstate(divide="ignore", invalid="ignore"):
        yl = 1.0 / zl  # numpy's complex division keeps Re(1/zl) = Rl/|zl|^2 accurate
    if open_load.any():
        yl[open_load] = 0.0
    with np.errstate(over="ignore", invalid="ignore"):  # extreme terminations: NaN-marked below
        dl = np.add(y22, yl, out=c("dl", n))
        a1 = np.multiply(y11, zs, out=c("a1", n))
        a1 += 1.0
        zp = np.multiply(p, zs, out=c("zp", n))
        den = np.multiply(a1, dl, out=c("den", n))
        den -= zp
    if not np.all(den):  # exactly zero somewhere
        raise _no_solution(den == 0, freq, start)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        av = np.divide(y21, dl, out=o.get("av"))
        np.negative(av, out=av)
        avs = np.divide(y21, den, out=o.get("avs"))
        np.negative(avs, out=avs)
        yin = np.divide(p, dl, out=c("yin", n))
        np.subtract(y11, yin, out=yin)
        yout = np.divide(zp, a1, out=c("yout", n))
        np.subtract(y22, yout, out=yout)
        zin = np.divide(1.0, yin, out=o.get("zin"))
        zout = np.divide(1.0, yout, out=o.get("zout"))
        ai = np.multiply(av, yl, out=o.get("ai"))
        ai /= yin
        rs, gl = zs.real, yl.real
        # GT = P_L / P_avs = 4 Rs Re(YL) |avs|^2   (P_avs = |Vs|^2 / 8Rs, P_L = |V2|^2 Re(YL) / 2)
        gt = _abs2(avs, f("gt", n))
        gt *= 4.0 * rs * gl
        # GP = P_L / P_in = |av|^2 Re(YL) / Re(Yin); an open load takes no power
        gin = yin.real
        gp = _abs2(av, f("gp", n))
        gp *= gl
        gp /= gin
        if not np.all(gin > 0):
            gp[~(gin > 0)] = np.nan
        # GA = P_avo / P_avs = Rs |y21|^2 / (|1 + Zs y11|^2 Re(Yout))  (Norton at port 2)
        gout = yout.real
        ga = _abs2(a1, f("ga", n))
        ga *= gout
        t = _abs2(y21, f("t", n))
        t *= rs
        np.divide(t, ga, out=ga)
        if not np.all(gout > 0):
            ga[~(gout > 0)] = np.nan
    for x in (av, avs, ai, zin, zout):
        _nan_where_not_finite(x)
    return {"av": av, "avs": avs, "ai": ai, "zin": zin, "zout": zout, "gt_db": to_db(gt, o.get("gt_db")),
            "gp_db": to_db(gp, o.get("gp_db")), "ga_db": to_db(ga, o.get("ga_db")), "zs": zs, "zl": zl}


def _terminations(zs, zl, n: int) -> tuple[np.ndarray, np.ndarray]:
    zs = _impedance("rs", zs, n)
    zl = _impedance("rl", zl, n)
    if np.any(zl == 0):
        raise InputError("rl: a short-circuit load (0 ohm) gives no output voltage; give a resistance > 0")
    return zs, zl


def _terminate_checked(abcd: np.ndarray, zs: np.ndarray, zl: np.ndarray,
                       out: dict | None = None) -> dict[str, np.ndarray]:
    o = out or {}
    a, b, c, d = abcd[:, 0, 0], abcd[:, 0, 1], abcd[:, 1, 0], abcd[:, 1, 1]
    open_load = ~np.isfinite(zl)
    with np.errstate(divide="ignore", invalid="ignore"):
        yl = 1.0 / zl
    if open_load.any():
        yl[open_load] = 0.0
    with np.errstate(over="ignore", invalid="ignore"):  # extreme terminations: NaN-marked below
        num_in = a + b * yl
        den_in = c + d * yl
        den_s = num_in + zs * den_in
        den_out = a + zs * c
    if np.any(den_s == 0):
        raise _no_solution(np.broadcast_to(den_s == 0, (abcd.shape[0],)), None, 0)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        av = _nan_where_not_finite(np.divide(1.0, num_in, out=o.get("av")))
        avs = _nan_where_not_finite(np.divide(1.0, den_s, out=o.get("avs")))
        ai = _nan_where_not_finite(np.divide(yl, den_in, out=o.get("ai")))
        zin = _nan_where_not_finite(np.divide(num_in, den_in, out=o.get("zin")))
        zout = _nan_where_not_finite(np.divide(b + zs * d, den_out, out=o.get("zout")))
        rs = zs.real
        # GT = P_L / P_avs = 4 Rs Re(YL) |avs|^2   (P_avs = |Vs|^2 / 4Rs)
        gt = 4.0 * rs * yl.real * _abs2(avs)
        # GP = P_L / P_in = |ai|^2 RL / Re(Zin)   (ai = -I2/I1); an open load takes no power
        gp = _abs2(ai) * zl.real / zin.real
        if open_load.any():
            gp[np.broadcast_to(open_load, gp.shape)] = 0.0
        gp[~(zin.real > 0)] = np.nan
        # GA = P_avo / P_avs = Rs / (Re(Zout) |A + Zs C|^2)
        voc = _abs2(den_out)
        ga = rs / (zout.real * voc)
        ga[~((zout.real > 0) & (voc > 0))] = np.nan
    return {"av": av, "avs": avs, "ai": ai, "zin": zin, "zout": zout, "gt_db": to_db(gt, o.get("gt_db")),
            "gp_db": to_db(gp, o.get("gp_db")), "ga_db": to_db(ga, o.get("ga_db")), "zs": zs, "zl": zl}


def terminate(tp: TwoPort, rs=50.0, rl=1e3, z0=None) -> Terminated:
    """Terminated analysis of a two-port between a source and a load.

    Parameters
    ----------
    tp : TwoPort
        The two-port (any kind).
    rs : float, complex or array (F,)
        Source impedance Zs in ohm (real part >= 0).
    rl : float, complex or array (F,)
        Load impedance ZL in ohm (real part >= 0; ``math.inf`` for an open load).
    z0 : float or (float, float), optional
        Reference resistance(s) for S, in ohm: used for mu and mu' (K, MAG/MSG and U
        do not depend on it).  Default: the two-port's own.

    Raises
    ------
    SingularParameterError
        When the two-port has no forward transmission (y21 = 0: its chain parameters do
        not exist) or the termination leaves the network without a solution.

    Notes
    -----
    A two-port with Y parameters is analysed with the Y forms of the module docstring,
    which keep the accuracy of Y where a port is almost lossless.  Mason's U of a
    common-gate FET stage at low frequency is the exception: its two-port Y
    does not determine U to that accuracy (its real parts are large and nearly cancel),
    so for a stage prefer :func:`terminate_configs`, which takes U from the indefinite
    matrix.
    """
    z0n = tp.z0 if z0 is None else normalize_z0(z0)
    out = _blocked(len(tp), rs, rl, [tp.config],
                   lambda start, stop: {tp.config: (tp.data[start:stop], tp.kind, tp.z0)}, z0n, tp.freq)
    return Terminated(freq=tp.freq, z0=z0n, config=tp.config, **out[tp.config])


def terminate_configs(stage, configs, freq, rs=50.0, rl=1e3, z0=50.0) -> dict[str, Terminated]:
    """Terminated analysis of one device in several configurations, in one pass.

    The same results as ``terminate(Stage(model, c, ...).two_port(freq), rs, rl, z0)`` for
    each ``c``, but computed block by block from the indefinite matrix, so no (F, 3, 3)
    or (F, 2, 2) array is ever held for the whole sweep.  One difference: where a
    configuration's own Mason denominator cancels (a common-gate FET at low frequency),
    U is taken from the indefinite matrix (:func:`stability_arrays_y`), so it keeps the
    accuracy that ``terminate`` of the two-port alone cannot reach there.

    Parameters
    ----------
    stage : Stage
        The device model and external resistors (its own configuration is ignored).
    configs : sequence of str
        Configurations, e.g. ``("ce", "cb", "cc")``.
    freq : array_like
        Frequencies in Hz, shape (F,).
    rs, rl, z0 : as in :func:`terminate`.
    """
    from .configs import check_config, config_y
    from .netlist import check_freq

    f = check_freq(freq)
    z0n = normalize_z0(z0)
    configs = [check_config(c) for c in configs]
    # one indefinite matrix for every configuration only where the stage says so (a bipolar
    # model); otherwise (a FET whose body goes to the common terminal, or unknown) one each
    per_config = not getattr(stage, "same_indefinite_for_all_configs", False)
    stages = {c: dataclasses.replace(stage, config=c) for c in configs}  # network and all

    def blocks(start, stop):
        fb = f[start:stop]
        if per_config:
            out = {}
            for c, st in stages.items():
                Y3 = st.indefinite(fb)
                out[c] = (config_y(Y3, c), "y", z0n, Y3)
            return out
        Y3 = stages[configs[0]].indefinite(fb)
        return {c: (config_y(Y3, c), "y", z0n, Y3) for c in configs}

    out = _blocked(f.size, rs, rl, configs, blocks, z0n, f)
    return {c: Terminated(freq=f, z0=z0n, config=c, **out[c]) for c in configs}


def _as_y(blk: np.ndarray, kind: str, z0_src) -> np.ndarray | None:
    """Y of a block of parameters of ``kind``, or None where the network has no Y parameters."""
    if kind == "y":
        return blk
    try:
        return convert(blk, kind, "y", z0_src)
    except SingularParameterError:
        return None


def _blocked(n: int, rs, rl, labels, source, z0n, freq=None) -> dict[str, dict[str, np.ndarray]]:
    """Run the terminated analysis over blocks of points.

    ``source(start, stop)`` gives ``{label: (data, kind, z0)}`` for the points in
    ``[start, stop)``, one entry per label of ``labels``; an optional fourth item, the
    indefinite matrix (n, 3, 3) the Y data were taken from, is used for Mason's U
    (:func:`stability_arrays_y`).  Results are written in place into arrays made once for
    the whole run.  Blocks keep the temporaries in the CPU cache (a loop over blocks, not
    over points); long runs use more threads, since numpy releases the GIL inside its
    loops.  Two-ports with Y parameters use the Y forms (module docstring), others the
    chain matrix and S.  ``freq`` (Hz, shape (n,)) only names the point in an error message.
    Returns ``{label: {result name: array (n,)}}``.
    """
    zs_all, zl_all = _terminations(rs, rl, n)
    # one source and one load for every point: pass them as length-1 arrays that broadcast
    zs_b = zs_all[:1] if np.all(zs_all == zs_all[0]) else None
    zl_b = zl_all[:1] if np.all((zl_all == zl_all[0]) | (np.isinf(zl_all) & np.isinf(zl_all[0]))) else None
    bounds = [(start, min(start + BLOCK, n)) for start in range(0, n, BLOCK)]

    # a source or load that is the same at every point is kept as a broadcast view
    shared = {k: np.broadcast_to(v, (n,)) for k, v in (("zs", zs_b), ("zl", zl_b)) if v is not None}
    out = {label: {k: shared[k] if k in shared else np.empty(n, dtype=dt) for k, dt in _RESULT_TYPES.items()}
           for label in labels}

    def work(span):
        start, stop = span
        zs_blk = zs_all[start:stop] if zs_b is None else zs_b
        zl_blk = zl_all[start:stop] if zl_b is None else zl_b
        for label, (blk, kind, z0_src, *indef) in source(start, stop).items():
            dst = {k: v[start:stop] for k, v in out[label].items() if k not in shared}
            y = _as_y(blk, kind, z0_src)
            if y is not None:
                _check_y(y, start)
                ent = _entries(y, _work())
                res = _terminate_y(ent, zs_blk, zl_blk, dst, freq, start)
                _stability_y(ent, z0n[0], z0n[1], dst, indef[0] if indef else None)
            else:  # no Y parameters: the chain-matrix and S forms
                try:
                    abcd = convert(blk, kind, "abcd", z0_src)
                except SingularParameterError:
                    raise SingularParameterError(
                        "two-port: no forward transmission (its chain parameters do not exist), "
                        "so there is no terminated gain") from None
                res = _terminate_checked(abcd, zs_blk, zl_blk, dst)
                stability_arrays(convert(blk, kind, "s", z0_src, z0_out=z0n), dst)
            for k in ("zs", "zl"):  # per-point terminations (the results are written in place)
                if k not in shared:
                    dst[k][...] = res[k]

    if len(bounds) >= 3 and THREADS > 1:
        from concurrent.futures import ThreadPoolExecutor

        with ThreadPoolExecutor(THREADS) as pool:
            list(pool.map(work, bounds))
    else:
        for span in bounds:
            work(span)
    return out

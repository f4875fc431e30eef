r"""Terminated analysis: a two-port between a source impedance and a load.

With the chain (ABCD) parameters of the two-port, a source :math:`V_s` behind
:math:`Z_s` at port 1 and a load :math:`Z_L = 1/Y_L` at port 2 (port currents flow
into the two-port, so :math:`V_2 = -I_2 Z_L`):

.. math::
    a_v = \frac{V_2}{V_1} = \frac{1}{A + B Y_L},\qquad
    a_{vs} = \frac{V_2}{V_s} = \frac{1}{A + B Y_L + Z_s (C + D Y_L)},\qquad
    a_i = \frac{-I_2}{I_1} = \frac{Y_L}{C + D Y_L},

.. math::
    Z_{in} = \frac{A + B Y_L}{C + D Y_L},\qquad
    Z_{out} = \frac{B + Z_s D}{A + Z_s C}

(any two-port text with the chain matrix, e.g. Pozar, *Microwave Engineering*, 4th ed.,
sec. 4.4, from memory).  The power gains follow from the powers themselves, so they
use the actual source and load and not the S reference:
:math:`G_T = P_L/P_{avs}`, :math:`G_P = P_L/P_{in}`, :math:`G_A = P_{avo}/P_{avs}`.

Stability and the gain bounds use S at the reference resistance (Gonzalez,
*Microwave Transistor Amplifiers*, 2nd ed., ch. 2-3, from memory): Rollett's K and
:math:`|\Delta|`, Edwards and Sinsky's :math:`\mu` and :math:`\mu'` (IEEE Trans. MTT 40(12),
1992), MAG :math:`= |S_{21}/S_{12}|(K - \sqrt{K^2-1})` where K > 1, MSG
:math:`= |S_{21}/S_{12}|` otherwise, and Mason's unilateral gain
:math:`U = |k-1|^2 / (2K|k| - 2\,\mathrm{Re}\,k)` with :math:`k = S_{21}/S_{12}`
(Mason, "Power gain in feedback amplifiers", IRE Trans. CT 1(2), 1954; the S form is in
Gupta, "Power gain in feedback amplifiers, a classic revisited", IEEE Trans. MTT 40(5), 1992).

Arrays are vectorised over the leading axis (frequencies, or samples of a spread).
A value that does not exist for the network (an open input impedance, the MSG of a
network with S12 = 0, the power gain into a negative input resistance) is NaN in the
arrays; output layers show it as ``null`` / ``open`` / ``unbounded``.
"""

from __future__ import annotations

import os
from dataclasses import dataclass

import numpy as np

from .conversions import convert, normalize_z0
from .exceptions import InputError, SingularParameterError
from .twoport import TwoPort

#: Points per block in :func:`terminate` (measured on 1e6 points, 2 cores: 65536 with two
#: threads 0.19 s, 8192 with one 0.26 s; smaller blocks gain nothing from threads).
BLOCK = 65536
#: Result arrays of the terminated analysis and their types.
_RESULT_TYPES = {"av": complex, "avs": complex, "ai": complex, "zin": complex, "zout": complex,
                 "gt_db": float, "gp_db": float, "ga_db": float, "zs": complex, "zl": complex,
                 "k": float, "delta": float, "mu": float, "mu_prime": float, "msg_db": float,
                 "u_db": float}
#: Threads for long terminated analyses (results do not depend on it).
THREADS = min(4, os.cpu_count() or 1)

__all__ = ["Terminated", "terminate", "terminate_configs", "terminate_arrays", "stability_arrays", "to_db"]


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
        Rollett K, |Delta|, Edwards-Sinsky mu (input) and mu' (output).
    msg_db : float ndarray
        MAG where K > 1, else MSG, in dB.
    u_db : float ndarray
        Mason's unilateral power gain U in dB.
    zs, zl : complex ndarray
        The source and load impedances used (ohm; zl may be inf for an open load).
    z0 : (float, float)
        Reference resistances used for S (ohm).
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

    @property
    def unconditional(self) -> np.ndarray:
        """True where the two-port is unconditionally stable (mu > 1; Edwards and Sinsky 1992).

        Equivalent to K > 1 together with |Delta| < 1.  Where K > 1 but |Delta| >= 1,
        ``msg_db`` still holds the MAG formula (as scikit-rf's ``max_gain`` does), but the
        simultaneous conjugate match it assumes needs a termination outside the Smith chart
        (|Gamma| > 1), so that gain cannot be reached with passive terminations.
        """
        with np.errstate(invalid="ignore"):
            return self.mu > 1


def to_db(power_ratio: np.ndarray, out: np.ndarray | None = None) -> np.ndarray:
    """10 log10 of a power ratio; NaN where it is not positive and finite (into ``out`` if given)."""
    p = np.asarray(power_ratio, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        out = np.log10(p, out=out)
    out *= 10.0
    bad = ~np.isfinite(out)
    if bad.any():
        out[bad] = np.nan
    return out


def _abs2(x: np.ndarray) -> np.ndarray:
    """|x|^2 without the square root of abs()."""
    re, im = x.real, x.imag
    return re * re + im * im


def _nan_where_not_finite(x: np.ndarray) -> np.ndarray:
    """Mark results of a division by zero (inf or nan parts) as NaN, in place."""
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


def stability_arrays(s: np.ndarray, out: dict | None = None) -> dict[str, np.ndarray]:
    """K, |Delta|, mu, mu', MAG/MSG (dB) and U (dB) from S of shape (N, 2, 2).

    ``out``, when given, maps result names to arrays of shape (N,) that receive the results.
    """
    o = out or {}
    s11, s12, s21, s22 = s[:, 0, 0], s[:, 0, 1], s[:, 1, 0], s[:, 1, 1]
    p12 = s12 * s21
    delta = s11 * s22 - p12
    a11, a22 = _abs2(s11), _abs2(s22)
    p = np.abs(p12)
    with np.errstate(invalid="ignore", divide="ignore"):
        # Rollett K; S12 S21 = 0 (unilateral): K does not exist (NaN)
        k = np.divide(1.0 - a11 - a22 + _abs2(delta), 2.0 * p, out=o.get("k"))
        # mu, mu' (0/0 at a lossless port: does not exist)
        mu = np.divide(1.0 - a11, np.abs(s22 - delta * s11.conj()) + p, out=o.get("mu"))
        mu_p = np.divide(1.0 - a22, np.abs(s11 - delta * s22.conj()) + p, out=o.get("mu_prime"))
        # MSG = |S21/S12|; MAG = MSG (K - sqrt(K^2 - 1)) where K > 1
        kk = s21 / s12
        ratio = np.abs(kk)
        over = k > 1
        msg = ratio.copy()
        if over.any():
            ko = k[over]
            msg[over] = ratio[over] * (ko - np.sqrt(ko * ko - 1.0))
        # Mason's U from the S ratio kk = s21/s12; S12 = 0: the unilateral limit
        # |s21|^2 / ((1 - |s11|^2)(1 - |s22|^2)).
        u = _abs2(kk - 1.0) / (2.0 * (k * ratio - kk.real))
    uni = s12 == 0
    if uni.any():
        k[uni] = np.nan
        msg[uni] = np.nan
        with np.errstate(invalid="ignore", divide="ignore"):
            u[uni] = _abs2(s21[uni]) / ((1.0 - a11[uni]) * (1.0 - a22[uni]))
    k = _nan_where_not_finite(k)
    return {"k": k, "delta": np.abs(delta, out=o.get("delta")), "mu": _nan_where_not_finite(mu),
            "mu_prime": _nan_where_not_finite(mu_p), "msg_db": to_db(msg, o.get("msg_db")),
            "u_db": to_db(u, o.get("u_db"))}


def terminate_arrays(abcd: np.ndarray, zs, zl) -> dict[str, np.ndarray]:
    """Gains and impedances from chain parameters (N, 2, 2) between ``zs`` and ``zl`` (ohm).

    ``zl`` may be ``inf`` for an open load.  Returns a dict of arrays of shape (N,).
    """
    n = abcd.shape[0]
    return _terminate_checked(abcd, *_terminations(zs, zl, n))


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
        raise SingularParameterError(
            "rs, rl: this source and load leave the network without a solution (it would oscillate)")
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
        When the chain parameters do not exist (no forward transmission) or the
        termination leaves the network without a solution.
    """
    z0n = tp.z0 if z0 is None else normalize_z0(z0)
    out = _blocked(len(tp), rs, rl, [tp.config],
                   lambda start, stop: {tp.config: (tp.data[start:stop], tp.kind, tp.z0)}, z0n)
    return Terminated(freq=tp.freq, z0=z0n, config=tp.config, **out[tp.config])


def terminate_configs(stage, configs, freq, rs=50.0, rl=1e3, z0=50.0) -> dict[str, Terminated]:
    """Terminated analysis of one device in several configurations, in one pass.

    The same results as ``terminate(Stage(model, c, ...).two_port(freq), rs, rl, z0)`` for
    each ``c``, but computed block by block from the indefinite matrix, so no (F, 3, 3)
    or (F, 2, 2) array is ever held for the whole sweep.

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
    from .stage import Stage

    f = check_freq(freq)
    z0n = normalize_z0(z0)
    configs = [check_config(c) for c in configs]
    per_config = getattr(stage.model, "indefinite_for_config", None) is not None
    stages = {c: Stage(stage.model, c, stage.rdeg, stage.rfb) for c in configs}

    def blocks(start, stop):
        fb = f[start:stop]
        if per_config:
            return {c: (config_y(st.indefinite(fb), c), "y", z0n) for c, st in stages.items()}
        Y3 = stages[configs[0]].indefinite(fb)
        return {c: (config_y(Y3, c), "y", z0n) for c in configs}

    out = _blocked(f.size, rs, rl, configs, blocks, z0n)
    return {c: Terminated(freq=f, z0=z0n, config=c, **out[c]) for c in configs}


def _blocked(n: int, rs, rl, labels, source, z0n) -> dict[str, dict[str, np.ndarray]]:
    """Run the terminated analysis over blocks of points.

    ``source(start, stop)`` gives ``{label: (data, kind, z0)}`` for the points in
    ``[start, stop)``, one entry per label of ``labels``.  Results are written in place into
    arrays made once for the whole run.  Blocks keep the temporaries in the CPU cache (a loop over blocks,
    not over points); long runs use more threads, since numpy releases the GIL inside
    its loops.  Returns ``{label: {result name: array (n,)}}``.
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
        for label, (blk, kind, z0_src) in source(start, stop).items():
            try:
                abcd = convert(blk, kind, "abcd", z0_src)
            except SingularParameterError:
                raise SingularParameterError(
                    "the two-port has no forward transmission (its chain parameters do not exist), "
                    "so it has no terminated gain") from None
            dst = {k: v[start:stop] for k, v in out[label].items() if k not in shared}
            res = _terminate_checked(abcd, zs_all[start:stop] if zs_b is None else zs_b,
                                     zl_all[start:stop] if zl_b is None else zl_b, dst)
            for k in ("zs", "zl"):  # per-point terminations (the results are written in place)
                if k not in shared:
                    dst[k][...] = res[k]
            stability_arrays(convert(blk, kind, "s", z0_src, z0_out=z0n), dst)

    if len(bounds) >= 3 and THREADS > 1:
        from concurrent.futures import ThreadPoolExecutor

        with ThreadPoolExecutor(THREADS) as pool:
            list(pool.map(work, bounds))
    else:
        for span in bounds:
            work(span)
    return out

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

from dataclasses import dataclass

import numpy as np

from .conversions import convert, normalize_z0
from .exceptions import InputError, SingularParameterError
from .twoport import TwoPort

#: Points per block in :func:`terminate`.
BLOCK = 8192

__all__ = ["Terminated", "terminate", "terminate_arrays", "stability_arrays", "to_db"]


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


def to_db(power_ratio: np.ndarray) -> np.ndarray:
    """10 log10 of a power ratio; NaN where it is not positive and finite."""
    p = np.asarray(power_ratio, dtype=float)
    ok = np.isfinite(p) & (p > 0)
    out = np.full(p.shape, np.nan)
    np.log10(p, out=out, where=ok)
    return np.where(ok, 10.0 * out, np.nan)


def _div(num, den):
    """num / den with NaN where den is zero (the quantity does not exist)."""
    den = np.asarray(den)
    safe = np.where(den == 0, 1.0, den)
    return np.where(den == 0, np.nan + 0j if np.iscomplexobj(num) or np.iscomplexobj(den) else np.nan,
                    num / safe)


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


def stability_arrays(s: np.ndarray) -> dict[str, np.ndarray]:
    """K, |Delta|, mu, mu', MAG/MSG (dB) and U (dB) from S of shape (N, 2, 2)."""
    s11, s12, s21, s22 = s[:, 0, 0], s[:, 0, 1], s[:, 1, 0], s[:, 1, 1]
    delta = s11 * s22 - s12 * s21
    p = np.abs(s12 * s21)
    num = 1 - np.abs(s11) ** 2 - np.abs(s22) ** 2 + np.abs(delta) ** 2
    k = np.where(p > 0, num / np.where(p > 0, 2 * p, 1.0), np.nan)
    with np.errstate(invalid="ignore", divide="ignore"):  # 0/0: a lossless port, mu does not exist
        mu = (1 - np.abs(s11) ** 2) / (np.abs(s22 - delta * np.conj(s11)) + p)
        mu_p = (1 - np.abs(s22) ** 2) / (np.abs(s11 - delta * np.conj(s22)) + p)
    ratio = np.where(np.abs(s12) > 0, np.abs(s21) / np.where(np.abs(s12) > 0, np.abs(s12), 1.0), np.nan)
    with np.errstate(invalid="ignore"):
        mag = ratio * (k - np.sqrt(np.where(k > 1, k * k - 1, 0.0)))
    msg = np.where(k > 1, mag, ratio)
    # Mason's U: from the S ratio k = s21/s12; for S12 = 0 the unilateral limit
    # |s21|^2 / ((1 - |s11|^2)(1 - |s22|^2)).
    kk = np.where(np.abs(s12) > 0, s21 / np.where(np.abs(s12) > 0, s12, 1.0), np.nan)
    with np.errstate(invalid="ignore", divide="ignore"):
        u_bil = np.abs(kk - 1) ** 2 / (2 * k * np.abs(kk) - 2 * kk.real)
        u_uni = np.abs(s21) ** 2 / ((1 - np.abs(s11) ** 2) * (1 - np.abs(s22) ** 2))
    u = np.where(np.abs(s12) > 0, u_bil, u_uni)
    return {"k": k, "delta": np.abs(delta), "mu": mu, "mu_prime": mu_p, "msg_db": to_db(msg),
            "u_db": to_db(u)}


def terminate_arrays(abcd: np.ndarray, zs, zl) -> dict[str, np.ndarray]:
    """Gains and impedances from chain parameters (N, 2, 2) between ``zs`` and ``zl`` (ohm).

    ``zl`` may be ``inf`` for an open load.  Returns a dict of arrays of shape (N,).
    """
    n = abcd.shape[0]
    zs = _impedance("rs", zs, n)
    zl = _impedance("rl", zl, n)
    a, b, c, d = abcd[:, 0, 0], abcd[:, 0, 1], abcd[:, 1, 0], abcd[:, 1, 1]
    open_load = ~np.isfinite(zl)
    yl = np.where(open_load, 0.0, 1.0 / np.where(open_load | (zl == 0), 1.0, zl))
    if np.any(zl == 0):
        raise InputError("rl: a short-circuit load (0 ohm) gives no output voltage; give a resistance > 0")
    num_in = a + b * yl
    den_in = c + d * yl
    den_s = num_in + zs * den_in
    if np.any(den_s == 0):
        raise SingularParameterError(
            "rs, rl: this source and load leave the network without a solution (it would oscillate)")
    av = _div(1.0 + 0j, num_in)
    avs = 1.0 / den_s
    ai = _div(yl + 0j, den_in)
    zin = _div(num_in, den_in)
    zout = _div(b + zs * d, a + zs * c)
    rs, rl = zs.real, zl.real
    # GT = P_L / P_avs = 4 Rs RL |avs|^2 / |ZL|^2 = 4 Rs Re(YL) |avs|^2   (P_avs = |Vs|^2 / 4Rs)
    gl = yl.real
    gt = 4 * rs * gl * np.abs(avs) ** 2
    # GP = P_L / P_in = |ai|^2 RL / Re(Zin)   (ai = -I2/I1);  open load: no power
    with np.errstate(invalid="ignore", divide="ignore"):
        gp = np.where(open_load, 0.0, np.abs(ai) ** 2 * np.where(open_load, 0.0, rl) / zin.real)
        gp = np.where(np.isfinite(zin.real) & (zin.real > 0), gp, np.nan)
        # GA = P_avo / P_avs = Rs / (Re(Zout) |A + Zs C|^2)
        voc_ratio = np.abs(a + zs * c) ** 2
        ga = rs / (zout.real * voc_ratio)
        ga = np.where(np.isfinite(zout.real) & (zout.real > 0) & (voc_ratio > 0), ga, np.nan)
    return {"av": av, "avs": avs, "ai": ai, "zin": zin, "zout": zout,
            "gt_db": to_db(gt), "gp_db": to_db(gp), "ga_db": to_db(ga), "zs": zs, "zl": zl}


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
    n = len(tp)
    zs_all = _impedance("rs", rs, n)
    zl_all = _impedance("rl", rl, n)
    # Work in blocks of points so that the many temporaries stay in the CPU cache
    # (a loop over blocks, not over points; measured ~4x faster on 1e6 points).
    out: dict[str, np.ndarray] | None = None
    for start in range(0, n, BLOCK):
        stop = min(start + BLOCK, n)
        blk = tp.data[start:stop]
        try:
            abcd = convert(blk, tp.kind, "abcd", tp.z0)
        except SingularParameterError:
            raise SingularParameterError(
                "the two-port has no forward transmission (its chain parameters do not exist), "
                "so it has no terminated gain") from None
        res = terminate_arrays(abcd, zs_all[start:stop], zl_all[start:stop])
        res.update(stability_arrays(convert(blk, tp.kind, "s", tp.z0, z0_out=z0n)))
        if out is None:
            out = {k: np.empty(n, dtype=v.dtype) for k, v in res.items()}
        for k, v in res.items():
            out[k][start:stop] = v
    return Terminated(freq=tp.freq, z0=z0n, config=tp.config, **out)

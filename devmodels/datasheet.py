r"""Datasheet values at their own test conditions, moved to the bias point.

A datasheet gives each small-signal figure at its own test condition (fT at some IC and VCE,
Cob at some VCB, hFE as a table against IC, h-parameters at one test point, all at 25 C).
Each function here takes such a value with its test condition, moves it to the bias point
by a stated law, and returns a small frozen result that holds the value used, the value
given and a one-line ``note`` ("given at X, used at Y") for the command line to print.
Warnings are returned in the result (``warnings``), never printed.

All values are SI (A, V, ohm, F, Hz, K, s).  The bias-point argument (``ic``, ``vcb``,
``ib``, ``id``) may be a scalar or a numpy array; results have its shape (a float for a
scalar).  Every bad input raises :class:`~devmodels.exceptions.InputError` with a message
that starts with the name of the value.

Laws (sources beside each; "from memory" where the text was not at hand):

* **fT against IC**, the transit-time relation (Gray, Hurst, Lewis and Meyer, *Analysis and
  Design of Analog Integrated Circuits*, ch. 1, from memory):

  .. math:: \frac{1}{2\pi f_T} = \tau_F + \frac{(C_{je} + C_\mu)\,V_T}{I_C},\qquad V_T = kT/q .

  The dependence of tau_F on VCE (base-width modulation) is neglected: the test VCE is
  recorded, not used.
* **C_mu from Cob**, the junction-capacitance law (Sze, *Physics of Semiconductor Devices*,
  p-n junction chapter, from memory; abrupt junction m = 1/2, linearly graded m = 1/3):

  .. math:: C(V) = \frac{C_0}{(1 + V/\phi)^m}
     \;\Rightarrow\;
     C_\mu(V_{CB}) = C_{ob}\left(\frac{1 + V_{CB,test}/\phi}{1 + V_{CB}/\phi}\right)^m ,

  with VCB = VCE - VBE(on) at the bias point.
* **hFE table**: beta linear in log10(IC) between neighbouring rows, held flat beyond the ends
  (the way hFE-against-IC curves are drawn on log axes; common practice, no source).
* **h-parameters to hybrid-pi**: the exact low-frequency CE h-parameters of the hybrid-pi
  with rb, r_pi, r_mu, ro and gm = IC/VT (derived from its nodal equations; the textbook
  approximations hfe = beta, hre = r_pi/r_mu are the r_mu >> r_pi limits, Gray and Meyer,
  from memory):

  .. math::
     h_{ie} = r_b + r_\pi (1 - h_{re}),\quad h_{re} = \frac{r_\pi}{r_\pi + r_\mu},\quad
     h_{fe} = r_\pi (1 - h_{re}) g_m - h_{re},\quad
     h_{oe} = \frac{1}{r_o} + \frac{1 + g_m r_\pi}{r_\pi + r_\mu} .

  Moved to another IC: gm = IC/VT, r_pi = beta/gm, ro = VA/IC with VA = IC_test ro_test
  (Gray and Meyer, from memory), r_mu proportional to beta ro (common practice, no source),
  rb held.
* **IB instead of IC**: IC = beta IB; with a table, beta depends on IC and the fixed point is
  found by bisection in log10(IC) (see :func:`ic_from_ib`).
* **FETs**: gm proportional to sqrt(ID) (the square law, Shockley's for a JFET, Sedra and
  Smith, from memory; see :mod:`devmodels.fetbias`), and Cgs = Ciss - Crss, Cgd = Crss,
  Cds = Coss - Crss (the datasheet capacitances are measured with the other terminals
  AC-shorted: Ciss = Cgs + Cgd, Crss = Cgd, Coss = Cds + Cgd; from memory).

Datasheet figures are at 25 C; the package takes given values at its reference temperature
``T_REF`` = 300 K (see :mod:`devmodels.temperature`), and ``test_temp`` says otherwise.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .constants import thermal_voltage
from .exceptions import InputError
from .temperature import T_REF, VBE_DEFAULT
from .units import format_si

__all__ = [
    "COB_POTENTIAL_DEFAULT", "COB_EXPONENT_DEFAULT",
    "FtAtBias", "TransitTimeFit", "CmuFromCob", "HfeAtIc", "IcFromIb", "HybridPiElements",
    "GmFromYfs", "FetCapacitances",
    "transit_time", "ft_from_transit_time", "fit_transit_time", "ft_at_bias", "cmu_from_cob",
    "hfe_from_table", "ic_from_ib", "hybrid_pi_from_h", "scale_hybrid_pi", "gm_from_yfs",
    "fet_capacitances",
]

#: Built-in potential phi of the collector-base junction in V (common practice, no source:
#: 0.5 V to 0.9 V is the usual range for silicon).
COB_POTENTIAL_DEFAULT = 0.75
#: Grading exponent m of the collector-base junction (common practice, no source: between the
#: linearly graded 1/3 and the abrupt 1/2, nearer the graded value for diffused collectors).
COB_EXPONENT_DEFAULT = 0.33

_TWO_PI = 2.0 * math.pi


# --- checks and display ---------------------------------------------------------------------

def _arr(name: str, value, unit: str, *, positive: bool = False, nonneg: bool = False,
         what: str = "") -> np.ndarray:
    """``value`` as a float array (finite; > 0 or >= 0 when asked), or an InputError naming it."""
    if value is None:
        raise InputError(f"{name}: a value is required ({unit}){what}")
    if isinstance(value, (bool, np.bool_, str, bytes)):
        raise InputError(f"{name}: expected a number in {unit}, got {value!r}")
    try:
        v = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"{name}: expected a number in {unit}, got {value!r}") from None
    if v.size == 0:
        raise InputError(f"{name}: expected a number in {unit}, got an empty array")
    bad = ~np.isfinite(v)
    if np.any(bad):
        raise InputError(f"{name}: expected a finite value in {unit}, got {v[bad].flat[0]!r}")
    if positive and np.any(v <= 0):
        raise InputError(f"{name}: expected a value > 0 in {unit}, got {v[v <= 0].flat[0]:g}")
    if nonneg and np.any(v < 0):
        raise InputError(f"{name}: expected a value >= 0 in {unit}, got {v[v < 0].flat[0]:g}")
    return v


def _scalar(name: str, value, unit: str, **kw) -> float:
    v = _arr(name, value, unit, **kw)
    if v.size == 1:
        return float(v.reshape(()))
    if v.ndim != 0:
        raise InputError(f"{name}: expected one number in {unit}, got an array of shape {v.shape}")
    return float(v)


def _out(v):
    """A float for a 0-d result, the array otherwise."""
    v = np.asarray(v, dtype=float)
    return float(v) if v.ndim == 0 else v


def _show(value, unit: str) -> str:
    """One value with its SI prefix, or the range of an array."""
    v = np.asarray(value, dtype=float)
    if v.ndim == 0:
        return format_si(float(v), unit)
    lo, hi = float(np.min(v)), float(np.max(v))
    if lo == hi:
        return format_si(lo, unit)
    return f"{format_si(lo, unit)} to {format_si(hi, unit)} ({v.size} values)"


def _vce_text(vce) -> str:
    return "" if vce is None else f", VCE = {_show(vce, 'V')}"


# --- fT against IC ---------------------------------------------------------------------------

def transit_time(ft, ft_at_ic, c_je, c_mu=0.0, temp=T_REF):
    r"""Forward transit time tau_F from one test point of fT and the junction capacitances.

    :math:`\tau_F = 1/(2\pi f_T) - (C_{je} + C_\mu) V_T / I_C` (transit-time relation, Gray,
    Hurst, Lewis and Meyer, ch. 1, from memory).

    Parameters
    ----------
    ft : float or ndarray
        Transition frequency in Hz at the test point.
    ft_at_ic : float or ndarray
        Collector current of the test point in A.
    c_je : float or ndarray
        Base-emitter junction capacitance in F (> 0).
    c_mu : float or ndarray
        Collector-base capacitance at the test point in F (>= 0).
    temp : float
        Temperature of the test point in K (VT = kT/q).

    Returns
    -------
    float or ndarray
        tau_F in s.

    Raises
    ------
    InputError
        ``c_je: ...`` when tau_F would be negative: the test point is inconsistent with the
        capacitances (they alone would make fT lower than given).
    """
    f = _arr("ft", ft, "Hz", positive=True)
    i = _arr("ft_at_ic", ft_at_ic, "A", positive=True)
    cje = _arr("c_je", c_je, "F", positive=True)
    cmu = _arr("c_mu", c_mu, "F", nonneg=True)
    vt = thermal_voltage(_scalar("temp", temp, "K", positive=True))
    f, i, cje, cmu = np.broadcast_arrays(f, i, cje, cmu)
    tau = 1.0 / (_TWO_PI * f) - (cje + cmu) * vt / i
    if np.any(tau < 0):
        k = np.unravel_index(np.argmin(tau), tau.shape)
        fmax = i[k] / (_TWO_PI * (cje[k] + cmu[k]) * vt)
        raise InputError(
            f"c_je: {cje[k]:g} F (with c_mu = {cmu[k]:g} F) is too large for ft = {f[k]:g} Hz "
            f"at ft_at_ic = {i[k]:g} A: tau_F would be {tau[k]:g} s < 0 (the capacitances alone "
            f"limit fT to {fmax:g} Hz there; the test point is inconsistent with c_je)")
    return _out(tau)


def ft_from_transit_time(ic, tau_f, c_sum, temp=T_REF):
    r"""fT at a collector current from tau_F and the junction capacitances.

    :math:`f_T = 1 / \left(2\pi\,(\tau_F + C\,V_T/I_C)\right)` with C = C_je + C_mu (Gray,
    Hurst, Lewis and Meyer, ch. 1, from memory).

    Parameters
    ----------
    ic : float or ndarray
        Collector current in A (> 0).
    tau_f : float or ndarray
        Forward transit time in s (>= 0).
    c_sum : float or ndarray
        C_je + C_mu in F (>= 0; tau_f and c_sum not both 0).
    temp : float or ndarray
        Temperature in K.

    Returns
    -------
    float or ndarray
        fT in Hz, shaped like the broadcast of the inputs.
    """
    i = _arr("ic", ic, "A", positive=True)
    tau = _arr("tau_f", tau_f, "s", nonneg=True)
    c = _arr("c_sum", c_sum, "F", nonneg=True)
    vt = thermal_voltage(_arr("temp", temp, "K", positive=True))
    total = tau + c * vt / i
    if np.any(total <= 0):
        raise InputError("tau_f, c_sum: both are 0, fT would be unbounded")
    return _out(1.0 / (_TWO_PI * total))


@dataclass(frozen=True, slots=True)
class TransitTimeFit:
    """Least-squares fit of 1/(2 pi fT) against 1/IC over several test points.

    Parameters
    ----------
    tau_f : float
        Forward transit time in s (the intercept).
    c_sum : float
        C_je + C_mu in F at the test points (the slope divided by VT).
    residual : float
        Root-mean-square residual of 1/(2 pi fT) in s.
    rel_residual : float
        Largest residual relative to 1/(2 pi fT) at its point (dimensionless).
    points : int
        Number of test points.
    tau_f_unc, c_sum_unc : float or None
        Standard uncertainties of tau_F (s) and C_je + C_mu (F) from the residual, s^2 (A^T A)^-1
        with s^2 = sum r^2 / (points - unknowns) (the linear least-squares estimate, e.g. Press
        et al., *Numerical Recipes*, ch. 15, from memory); ``None`` when there are no more points
        than unknowns.  ``c_sum_unc`` is 0 when ``c_sum`` was given.
    """

    tau_f: float
    c_sum: float
    residual: float
    rel_residual: float
    points: int
    tau_f_unc: float | None = None
    c_sum_unc: float | None = None


def fit_transit_time(ft, ft_at_ic, temp=T_REF, *, c_sum=None) -> TransitTimeFit:
    r"""Fit tau_F (and C_je + C_mu) to several test points (IC, fT).

    The transit-time relation :math:`1/(2\pi f_T) = \tau_F + C\,V_T/I_C` (Gray, Hurst, Lewis and
    Meyer, ch. 1, from memory) is linear in 1/IC; tau_F and C are found by linear least
    squares (:func:`numpy.linalg.lstsq`).  With ``c_sum`` given only tau_F is fitted (the mean
    of 1/(2 pi fT) - C VT/IC).

    Parameters
    ----------
    ft : sequence of float
        fT in Hz at each test point.
    ft_at_ic : sequence of float
        Collector current of each test point in A (at least two different values when
        ``c_sum`` is not given).
    temp : float
        Temperature of the test points in K.
    c_sum : float or None
        Known C_je + C_mu in F, or None to fit it.

    Raises
    ------
    InputError
        Unequal lengths, too few currents, or a negative fitted tau_F or C_je + C_mu (the
        points do not follow the law).
    """
    f = np.atleast_1d(_arr("ft", ft, "Hz", positive=True))
    i = np.atleast_1d(_arr("ft_at_ic", ft_at_ic, "A", positive=True))
    if f.ndim != 1 or i.shape != f.shape:
        raise InputError(f"ft_at_ic: expected one test IC per fT value ({f.size} fT values), "
                         f"got {i.size}")
    vt = thermal_voltage(_scalar("temp", temp, "K", positive=True))
    y = 1.0 / (_TWO_PI * f)
    if c_sum is None:
        if np.unique(i).size < 2:
            raise InputError("ft_at_ic: the fit of tau_F and c_je + c_mu needs test points at two "
                             "or more different currents")
        a = np.column_stack([np.ones_like(i), vt / i])
        (tau, c), *_ = np.linalg.lstsq(a, y, rcond=None)
        if c < 0:
            raise InputError(f"ft: the points do not follow the transit-time law: the fitted "
                             f"c_je + c_mu is {c:g} F < 0 (fT must not fall as IC rises)")
    else:
        c = _scalar("c_sum", c_sum, "F", nonneg=True)
        tau = float(np.mean(y - c * vt / i))
    if tau < 0:
        raise InputError(f"ft: the points do not follow the transit-time law: the fitted tau_F is "
                         f"{tau:g} s < 0" + ("" if c_sum is None else
                                             f" (c_je: {c:g} F with c_mu is too large)"))
    r = tau + c * vt / i - y
    unknowns = 2 if c_sum is None else 1
    tau_unc = c_unc = None
    if f.size > unknowns:
        s2 = float(r @ r) / (f.size - unknowns)
        if c_sum is None:
            cov = np.linalg.inv(a.T @ a) * s2
            tau_unc, c_unc = float(np.sqrt(cov[0, 0])), float(np.sqrt(cov[1, 1]))
        else:
            tau_unc, c_unc = float(np.sqrt(s2 / f.size)), 0.0
    return TransitTimeFit(tau_f=float(tau), c_sum=float(c), residual=float(np.sqrt(np.mean(r ** 2))),
                          rel_residual=float(np.max(np.abs(r) / y)), points=int(f.size), tau_f_unc=tau_unc,
                          c_sum_unc=c_unc)


@dataclass(frozen=True, slots=True)
class FtAtBias:
    """fT given at its test conditions, used at the bias IC.

    Parameters
    ----------
    ft_used : float or ndarray
        fT at the bias IC in Hz (shaped like ``ic``).
    ic : float or ndarray
        Bias collector current in A.
    ft : float or tuple of float
        fT as given in Hz (a tuple for several test points).
    ft_at_ic : float, tuple of float or None
        Test IC of ``ft`` in A.
    ft_at_vce : float or None
        Test VCE of ``ft`` in V (recorded; the law does not use it).
    tau_f : float or None
        Forward transit time in s (None when fT is held).
    c_je : float or None
        C_je in F, given or fitted (fitted: C_je + C_mu at the test points minus ``c_mu_test``).
    c_mu : float or ndarray
        C_mu at the bias point in F.
    c_mu_test : float
        C_mu at the test point(s) in F.
    method : str
        ``'transit-time'`` (one point and c_je), ``'transit-time fit'`` (several points) or
        ``'held'`` (fT taken as given).
    fit : TransitTimeFit or None
        The least-squares fit, for several test points.
    note : str
        One line: given at X, used at Y, by which law (or why fT is held).
    """

    ft_used: object
    ic: object
    ft: object
    ft_at_ic: object
    ft_at_vce: float | None
    tau_f: float | None
    c_je: float | None
    c_mu: object
    c_mu_test: float
    method: str
    fit: TransitTimeFit | None
    note: str


def ft_at_bias(ic, ft, ft_at_ic=None, *, ft_at_vce=None, c_je=None, c_mu=0.0, c_mu_test=None,
               temp=T_REF, test_temp=T_REF) -> FtAtBias:
    r"""fT at the bias IC from its datasheet value(s) at the test condition(s).

    Law: :math:`1/(2\pi f_T) = \tau_F + (C_{je} + C_\mu) V_T / I_C` (Gray, Hurst, Lewis and
    Meyer, ch. 1, from memory), VT = kT/q.

    * One test point with ``c_je``: tau_F from the test point (:func:`transit_time`), then fT
      at ``ic``.
    * Several test points (``ft`` and ``ft_at_ic`` sequences of equal length): tau_F and
      C_je + C_mu fitted by least squares (:func:`fit_transit_time`); with ``c_je`` given too,
      only tau_F is fitted.
    * One test point and no ``c_je``, or no test IC at all: fT is held at the given value and
      the note says why.

    The test VCE is recorded only: the dependence of tau_F on VCE (base-width modulation) is
    neglected.  C_mu may differ between the test point and the bias point (``c_mu_test`` and
    ``c_mu``, e.g. each from :func:`cmu_from_cob` at its own VCB); by default it is the same.

    Parameters
    ----------
    ic : float or ndarray
        Bias collector current in A.
    ft : float or sequence of float
        Datasheet fT in Hz (a sequence for several test points).
    ft_at_ic : float, sequence of float or None
        Test IC of ``ft`` in A (one per fT value); required with ``c_je``.
    ft_at_vce : float or None
        Test VCE of ``ft`` in V (recorded in the note; not used by the law).
    c_je : float or None
        Base-emitter junction capacitance in F (> 0).
    c_mu : float or ndarray
        Collector-base capacitance at the bias point in F (>= 0).
    c_mu_test : float or None
        Collector-base capacitance at the test point in F (None: ``c_mu``, which must then be
        a scalar).
    temp : float
        Junction temperature at the bias point in K.
    test_temp : float
        Temperature of the test point(s) in K (default the package reference, 300 K).

    Returns
    -------
    FtAtBias

    Raises
    ------
    InputError
        A missing test IC with ``c_je`` (``ft_at_ic: ...``), a capacitance <= 0 (``c_je``) or
        < 0 (``c_mu``), tau_F < 0 (``c_je: ...``), a fit that does not follow the law (``ft: ...``).
    """
    i = _arr("ic", ic, "A", positive=True)
    f = _arr("ft", ft, "Hz", positive=True)
    cmu = _arr("c_mu", c_mu, "F", nonneg=True)
    vce = None if ft_at_vce is None else _scalar("ft_at_vce", ft_at_vce, "V", positive=True)
    if c_mu_test is None:
        if cmu.ndim != 0:
            raise InputError("c_mu_test: required when c_mu is an array (C_mu at the test point)")
        cmu_t = float(cmu)
    else:
        cmu_t = _scalar("c_mu_test", c_mu_test, "F", nonneg=True)
    cje = None if c_je is None else _scalar("c_je", c_je, "F", positive=True)
    _scalar("temp", temp, "K", positive=True)
    t_test = _scalar("test_temp", test_temp, "K", positive=True)

    if f.size > 1 and f.ndim != 1:
        raise InputError(f"ft: expected one value or a sequence of test-point values, got shape {f.shape}")
    several = f.size > 1
    if not several:
        f = float(f.reshape(()))
    if ft_at_ic is None:
        if cje is not None or several:
            raise InputError("ft_at_ic: the test IC of ft is required (with c_je or several fT "
                             "values the transit-time law needs the test current)")
        return FtAtBias(ft_used=_out(np.full(i.shape, f)), ic=_out(i), ft=f, ft_at_ic=None, ft_at_vce=vce,
                        tau_f=None, c_je=None, c_mu=_out(cmu), c_mu_test=cmu_t, method="held", fit=None,
                        note=f"fT: {_show(f, 'Hz')} held at IC = {_show(i, 'A')} (no test IC given: "
                             f"fT taken at the bias point as given)")
    if several:
        fit = fit_transit_time(f, ft_at_ic, t_test, c_sum=None if cje is None else cje + cmu_t)
        tau, cje_used = fit.tau_f, (fit.c_sum - cmu_t if cje is None else cje)
        if cje_used < 0:
            raise InputError(f"c_mu_test: {cmu_t:g} F is more than the fitted c_je + c_mu = "
                             f"{fit.c_sum:g} F")
        used = ft_from_transit_time(i, tau, cje_used + cmu, temp)
        given = tuple(float(x) for x in f)
        ics = tuple(float(x) for x in np.atleast_1d(np.asarray(ft_at_ic, dtype=float)))
        what = "tau_F and c_je + c_mu fitted" if cje is None else "tau_F fitted with c_je given"
        note = (f"fT: given at {fit.points} test points (IC = {_show(np.array(ics), 'A')}{_vce_text(vce)}); "
                f"used {_show(used, 'Hz')} at IC = {_show(i, 'A')} (transit-time law, {what}: "
                f"tau_F = {format_si(tau, 's')}, c_je + c_mu = {format_si(fit.c_sum, 'F')}, "
                f"largest residual {fit.rel_residual:.2g} of 1/(2 pi fT))")
        return FtAtBias(ft_used=used, ic=_out(i), ft=given, ft_at_ic=ics, ft_at_vce=vce, tau_f=tau,
                        c_je=float(cje_used), c_mu=_out(cmu), c_mu_test=cmu_t, method="transit-time fit",
                        fit=fit, note=note)
    it = _scalar("ft_at_ic", ft_at_ic, "A", positive=True)
    if cje is None:
        return FtAtBias(ft_used=_out(np.full(i.shape, f)), ic=_out(i), ft=f, ft_at_ic=it, ft_at_vce=vce,
                        tau_f=None, c_je=None, c_mu=_out(cmu), c_mu_test=cmu_t, method="held", fit=None,
                        note=f"fT: {format_si(f, 'Hz')} given at IC = {format_si(it, 'A')}{_vce_text(vce)} "
                             f"held at IC = {_show(i, 'A')} (one test point and no c_je: the "
                             f"transit-time law needs c_je; fT held)")
    tau = transit_time(f, it, cje, cmu_t, t_test)
    used = ft_from_transit_time(i, tau, cje + cmu, temp)
    note = (f"fT: {format_si(f, 'Hz')} given at IC = {format_si(it, 'A')}{_vce_text(vce)}; used "
            f"{_show(used, 'Hz')} at IC = {_show(i, 'A')} (transit-time law, tau_F = "
            f"{format_si(tau, 's')} from the test point, c_je = {format_si(cje, 'F')}; "
            f"VCE dependence neglected)")
    return FtAtBias(ft_used=used, ic=_out(i), ft=f, ft_at_ic=it, ft_at_vce=vce, tau_f=tau, c_je=cje,
                    c_mu=_out(cmu), c_mu_test=cmu_t, method="transit-time", fit=None, note=note)


# --- C_mu from Cob ---------------------------------------------------------------------------

@dataclass(frozen=True, slots=True)
class CmuFromCob:
    """C_mu at the bias VCB from the datasheet Cob at its test VCB.

    Parameters
    ----------
    c_mu : float or ndarray
        C_mu at the bias VCB in F.
    vcb : float or ndarray
        Bias collector-base voltage in V (reverse bias positive).
    cob : float
        Cob as given in F.
    cob_at_vcb : float
        Test VCB of ``cob`` in V.
    cob_potential : float
        Junction potential phi in V.
    cob_exponent : float
        Grading exponent m.
    note : str
        One line: given at X, used at Y.
    """

    c_mu: object
    vcb: object
    cob: float
    cob_at_vcb: float
    cob_potential: float
    cob_exponent: float
    note: str


def cmu_from_cob(cob, cob_at_vcb, vcb=None, *, vce=None, vbe=VBE_DEFAULT,
                 cob_potential=COB_POTENTIAL_DEFAULT, cob_exponent=COB_EXPONENT_DEFAULT) -> CmuFromCob:
    r"""C_mu at the bias VCB from Cob at its test VCB, by the junction law.

    :math:`C_\mu = C_{ob}\,\left((1 + V_{CB,test}/\phi)/(1 + V_{CB}/\phi)\right)^m` (junction
    capacitance C0/(1 + V/phi)^m, Sze, *Physics of Semiconductor Devices*, from memory).
    Give the bias VCB directly or as ``vce`` (VCB = VCE - VBE(on)).  The defaults of phi and
    m are common practice, no source (:data:`COB_POTENTIAL_DEFAULT`,
    :data:`COB_EXPONENT_DEFAULT`); use the datasheet's Cob-against-VCB curve when it has one.

    Parameters
    ----------
    cob : float
        Datasheet output capacitance Cob (common base, emitter open) in F (> 0).
    cob_at_vcb : float
        Test VCB of ``cob`` in V (magnitude, reverse bias positive; > -phi).
    vcb : float, ndarray or None
        Bias VCB in V (> -phi).
    vce : float, ndarray or None
        Bias VCE in V, instead of ``vcb``.
    vbe : float or ndarray
        VBE(on) in V, used with ``vce`` (default 0.7 V, common practice, no source).
    cob_potential : float
        Junction potential phi in V (> 0; default 0.75 V).
    cob_exponent : float
        Grading exponent m (> 0; default 0.33).

    Returns
    -------
    CmuFromCob

    Raises
    ------
    InputError
        A missing test VCB (``cob_at_vcb``), Cob <= 0, both or neither of ``vcb`` / ``vce``,
        a voltage that forward-biases the junction to phi or beyond.
    """
    c = _scalar("cob", cob, "F", positive=True)
    at = _scalar("cob_at_vcb", cob_at_vcb, "V", what=" (the test VCB of cob)")
    phi = _scalar("cob_potential", cob_potential, "V", positive=True)
    m = _scalar("cob_exponent", cob_exponent, "dimensionless", positive=True)
    if (vcb is None) == (vce is None):
        raise InputError("vcb: give the bias VCB, or vce (VCB = VCE - VBE(on)); "
                         + ("not both" if vcb is not None else "neither was given"))
    if vcb is None:
        v = _arr("vce", vce, "V") - _arr("vbe", vbe, "V", positive=True)
        src = f" (VCE - VBE(on) = {_show(_arr('vce', vce, 'V'), 'V')} - {_show(_arr('vbe', vbe, 'V'), 'V')})"
    else:
        v = _arr("vcb", vcb, "V")
        src = ""
    for name, val in (("cob_at_vcb", np.asarray(at)), ("vcb", v)):
        if np.any(val <= -phi):
            raise InputError(f"{name}: {float(np.min(val)):g} V forward-biases the collector-base "
                             f"junction to cob_potential = {phi:g} V or beyond (the junction law "
                             f"needs VCB > -{phi:g} V)")
    cmu = c * ((1.0 + at / phi) / (1.0 + v / phi)) ** m
    note = (f"C_mu: Cob {format_si(c, 'F')} given at VCB = {format_si(at, 'V')}; used "
            f"{_show(cmu, 'F')} at VCB = {_show(v, 'V')}{src} (junction law, phi = "
            f"{format_si(phi, 'V')}, m = {m:g})")
    return CmuFromCob(c_mu=_out(cmu), vcb=_out(v), cob=c, cob_at_vcb=at, cob_potential=phi,
                      cob_exponent=m, note=note)


# --- hFE table -------------------------------------------------------------------------------

def _table(hfe_table) -> np.ndarray:
    """The table as a float array (rows, 2 or 4), checked."""
    if hfe_table is None:
        raise InputError("hfe_table: a table [[IC, hFE], ...] is required")
    try:
        t = np.asarray(hfe_table, dtype=float)
    except (TypeError, ValueError):
        raise InputError("hfe_table: expected rows [IC, hFE] or [IC, hfe_min, hfe_typ, hfe_max] "
                         "of numbers, all of one length") from None
    if t.ndim != 2 or t.shape[0] < 1 or t.shape[1] not in (2, 4):
        raise InputError(f"hfe_table: expected rows [IC, hFE] or [IC, hfe_min, hfe_typ, hfe_max], "
                         f"got an array of shape {t.shape}")
    if not np.all(np.isfinite(t)):
        raise InputError("hfe_table: every value must be a finite number")
    if np.any(t <= 0):
        r = int(np.argwhere(t <= 0)[0][0])
        raise InputError(f"hfe_table: row {r + 1}: IC and hFE must be > 0, got {t[r].tolist()}")
    d = np.diff(t[:, 0])
    if np.any(d <= 0):
        r = int(np.argmax(d <= 0)) + 1
        raise InputError(f"hfe_table: IC values must increase (row {r + 1}: {t[r, 0]:g} A after "
                         f"{t[r - 1, 0]:g} A)")
    if t.shape[1] == 4:
        bad = (t[:, 1] > t[:, 2]) | (t[:, 2] > t[:, 3])
        if np.any(bad):
            r = int(np.argmax(bad))
            raise InputError(f"hfe_table: row {r + 1}: expected hfe_min <= hfe_typ <= hfe_max, got "
                             f"{t[r, 1:].tolist()}")
    return t


def _beyond(t: np.ndarray, i: np.ndarray) -> tuple[str, ...]:
    lo, hi = t[0, 0], t[-1, 0]
    out = []
    if np.any(i < lo):
        out.append(f"hfe_table: IC = {_show(i[i < lo], 'A')} is below the table (from "
                   f"{format_si(lo, 'A')}); hFE held at the first row")
    if np.any(i > hi):
        out.append(f"hfe_table: IC = {_show(i[i > hi], 'A')} is above the table (up to "
                   f"{format_si(hi, 'A')}); hFE held at the last row")
    return tuple(out)


def _interp(t: np.ndarray, col: int, i):
    """hFE of column ``col`` at IC ``i``, linear in log10(IC), flat beyond the ends."""
    return np.interp(np.log10(i), np.log10(t[:, 0]), t[:, col])


@dataclass(frozen=True, slots=True)
class HfeAtIc:
    """hFE read from a datasheet table at the bias IC.

    Parameters
    ----------
    beta : float or ndarray
        hFE at ``ic`` (the typical column of a min/typ/max table).
    beta_min, beta_max : float, ndarray or None
        The minimum and maximum columns at ``ic`` (None for a two-column table).
    ic : float or ndarray
        Bias collector current in A.
    ic_range : (float, float)
        First and last IC of the table in A.
    warnings : tuple of str
        One line per kind of extrapolation (IC below or above the table); empty if none.
    note : str
        One line: given at X, used at Y.
    """

    beta: object
    beta_min: object
    beta_max: object
    ic: object
    ic_range: tuple[float, float]
    warnings: tuple[str, ...]
    note: str


def hfe_from_table(hfe_table, ic) -> HfeAtIc:
    """hFE at the bias IC from a datasheet table against IC.

    Linear in log10(IC) between the neighbouring rows; held at the end value beyond the table,
    with a warning in the result (common practice, no source: hFE curves are drawn against a
    log IC axis).  A table with one row gives that hFE everywhere (with the warning away from
    its IC).

    Parameters
    ----------
    hfe_table : sequence of rows
        ``[[IC, hFE], ...]`` or ``[[IC, hfe_min, hfe_typ, hfe_max], ...]``, IC in A strictly
        increasing, hFE dimensionless (> 0).
    ic : float or ndarray
        Bias collector current in A.

    Returns
    -------
    HfeAtIc

    Raises
    ------
    InputError
        ``hfe_table: IC values must increase ...``, a row of another length, a value <= 0,
        min > typ or typ > max in a row.
    """
    t = _table(hfe_table)
    i = _arr("ic", ic, "A", positive=True)
    if t.shape[1] == 2:
        beta, bmin, bmax = _out(_interp(t, 1, i)), None, None
    else:
        bmin, beta, bmax = (_out(_interp(t, c, i)) for c in (1, 2, 3))
    warns = _beyond(t, np.atleast_1d(i))
    cols = "hFE" if bmin is None else "hFE (typ)"
    note = (f"beta: {cols} from a table of {t.shape[0]} rows (IC {format_si(t[0, 0], 'A')} to "
            f"{format_si(t[-1, 0], 'A')}); used {_show(beta, '')} at IC = {_show(i, 'A')} "
            f"(linear in log10 IC" + (", held beyond the table)" if warns else ")"))
    return HfeAtIc(beta=beta, beta_min=bmin, beta_max=bmax, ic=_out(i),
                   ic_range=(float(t[0, 0]), float(t[-1, 0])), warnings=warns, note=note)


# --- IB instead of IC ------------------------------------------------------------------------

@dataclass(frozen=True, slots=True)
class IcFromIb:
    """Collector current from a given base current.

    Parameters
    ----------
    ic : float or ndarray
        Collector current beta IB in A.
    beta : float or ndarray
        Current gain used (from the table at ``ic`` when a table is given).
    ib : float or ndarray
        Base current as given in A.
    warnings : tuple of str
        Table extrapolation warnings (see :func:`hfe_from_table`).
    note : str
        One line: given at X, used at Y.
    """

    ic: object
    beta: object
    ib: object
    warnings: tuple[str, ...]
    note: str


#: Bisection steps in log10(IC): each halves the bracket, 200 reach the float resolution of
#: any bracket a table can give.
_BISECT_STEPS = 200


def _monotone_pieces(t: np.ndarray) -> list[tuple[float, float]]:
    """Intervals of x = log10(IC) on which h(x) = log10(beta(x)) - x is monotone.

    Between rows beta is linear in x with slope s, so log10(beta) is concave and h has at
    most one maximum, where d log10(beta)/dx = s / (beta ln 10) = 1, i.e. beta = s / ln 10.
    """
    x, b = np.log10(t[:, 0]), t[:, 1]
    pieces = []
    for k in range(len(x) - 1):
        s = (b[k + 1] - b[k]) / (x[k + 1] - x[k])
        b_star = s / math.log(10.0)
        if s > 0 and b[k] < b_star < b[k + 1]:
            xs = x[k] + (b_star - b[k]) / s
            pieces += [(x[k], xs), (xs, x[k + 1])]
        else:
            pieces.append((x[k], x[k + 1]))
    return pieces


def ic_from_ib(ib, beta=None, *, hfe_table=None) -> IcFromIb:
    r"""Collector current IC = beta IB from a base current.

    With a constant ``beta`` this is a product.  With ``hfe_table`` beta depends on IC and the
    fixed point IC = beta(IC) IB is solved in x = log10(IC): the roots of
    :math:`h(x) = \log_{10}\beta(x) + \log_{10} I_B - x`.  Beyond the table (beta flat) h falls
    with slope -1, so there is one root on each outer side exactly when h at the end row has
    the right sign (closed form).  Between two rows beta is linear in x, log10(beta) is concave,
    and h is split at its one possible maximum (:func:`_monotone_pieces`) into pieces on which
    it is monotone; a piece whose ends bracket a sign change holds exactly one root, found by
    bisection (numpy, vectorised over IB).  Since h runs from +inf to -inf there is always at
    least one root; a table with which some IB gives several roots (hFE rising faster than IC
    somewhere) is refused, since the bias point would be ambiguous.  A root where h only touches
    zero without changing sign is not detected.

    Parameters
    ----------
    ib : float or ndarray
        Base current in A (> 0).
    beta : float, ndarray or None
        Constant current gain; give it or ``hfe_table``.
    hfe_table : sequence of rows or None
        As in :func:`hfe_from_table` (the typical column of a four-column table is used).

    Returns
    -------
    IcFromIb

    Raises
    ------
    InputError
        Both or neither of ``beta`` / ``hfe_table``; ``hfe_table: ...`` when an IB gives several
        collector currents; bad table rows.
    """
    b = _arr("ib", ib, "A", positive=True)
    if (beta is None) == (hfe_table is None):
        raise InputError("beta: give beta or hfe_table with ib, " +
                         ("not both" if beta is not None else "neither was given"))
    if beta is not None:
        be = _arr("beta", beta, "dimensionless", positive=True)
        ic = be * b
        return IcFromIb(ic=_out(ic), beta=_out(be), ib=_out(b), warnings=(),
                        note=f"ic: IB = {_show(b, 'A')} given; used IC = beta IB = {_show(ic, 'A')} "
                             f"(beta = {_show(be, '')})")
    t = _table(hfe_table)
    typ = t[:, [0, 2]] if t.shape[1] == 4 else t
    lib = np.log10(np.atleast_1d(b)).ravel()
    x_rows = np.log10(typ[:, 0])

    def h(x):
        return np.log10(_interp(typ, 1, 10.0 ** x)) - x

    roots = np.full(lib.shape, np.nan)
    count = np.zeros(lib.shape, dtype=int)
    # outer rays (beta flat): root x = log10(beta_end IB)
    h0, hn = h(x_rows[0]) + lib, h(x_rows[-1]) + lib
    left, right = h0 < 0, hn > 0
    roots[left] = np.log10(typ[0, 1]) + lib[left]
    roots[right] = np.log10(typ[-1, 1]) + lib[right]
    count += left.astype(int) + right.astype(int)
    if len(typ) == 1:
        on = h0 == 0
        roots[on], count[on] = x_rows[0], count[on] + 1
    for n, (a, c) in enumerate(_monotone_pieces(typ)):
        ha, hc = h(a) + lib, h(c) + lib
        # root in (a, c]; the first piece also takes a root exactly at the first row
        hit = ((ha > 0) & (hc <= 0)) | ((ha < 0) & (hc >= 0)) | ((ha == 0) if n == 0 else False)
        if not np.any(hit):
            continue
        count += hit
        lo, hi, l_ = np.full(hit.sum(), a), np.full(hit.sum(), c), lib[hit]
        sign_lo = np.sign(h(lo) + l_)
        for _ in range(_BISECT_STEPS):
            mid = 0.5 * (lo + hi)
            same = np.sign(h(mid) + l_) == sign_lo  # the root lies above mid
            lo, hi = np.where(same, mid, lo), np.where(same, hi, mid)
            if np.all(hi - lo <= 4 * np.finfo(float).eps * np.maximum(1.0, np.abs(mid))):
                break
        roots[hit] = np.where(h(lo) + l_ == 0, lo, 0.5 * (lo + hi))
    if np.any(count != 1):
        k = int(np.argmax(count != 1))
        raise InputError(f"hfe_table: with ib = {10.0 ** lib[k]:g} A the table gives "
                         f"{'no' if count[k] == 0 else count[k]} collector currents IC = beta(IC) IB "
                         f"(hFE rises faster than IC between some rows); give ic instead")
    beta_at = _interp(typ, 1, 10.0 ** roots)
    ic = beta_at * 10.0 ** lib
    shape = np.shape(b)
    ic, beta_at = ic.reshape(shape), beta_at.reshape(shape)
    warns = _beyond(typ, np.atleast_1d(ic))
    note = (f"ic: IB = {_show(b, 'A')} given; used IC = beta(IC) IB = {_show(ic, 'A')} with beta = "
            f"{_show(beta_at, '')} from the hFE table (fixed point by bisection in log IC)")
    return IcFromIb(ic=_out(ic), beta=_out(beta_at), ib=_out(b), warnings=warns, note=note)


# --- h-parameters to hybrid-pi ---------------------------------------------------------------

@dataclass(frozen=True, slots=True)
class HybridPiElements:
    """Low-frequency hybrid-pi elements (no capacitances) at one collector current.

    Parameters
    ----------
    gm : float or ndarray
        Transconductance IC/VT in S.
    r_pi : float or ndarray
        Base-emitter resistance in ohm.
    r_mu : float or ndarray
        Base-collector resistance in ohm (``math.inf``: none, hre = 0).
    ro : float or ndarray
        Output resistance in ohm (``math.inf``: none).
    rb : float
        Base spreading resistance in ohm.
    beta : float or ndarray
        gm r_pi (dimensionless; equal to hfe only when r_mu >> r_pi).
    va : float
        Early voltage IC ro in V (``math.inf`` when ro is).
    ic : float or ndarray
        Collector current in A.
    vt : float
        Thermal voltage in V.
    note : str
        One line: given at X, used at Y.
    """

    gm: object
    r_pi: object
    r_mu: object
    ro: object
    rb: float
    beta: object
    va: float
    ic: object
    vt: float
    note: str

    def to_model(self):
        """The :class:`~devmodels.models.HybridPi` with these elements (no capacitances)."""
        from .models import HybridPi
        return HybridPi(gm=self.gm, r_pi=self.r_pi, ro=self.ro, rb=self.rb, r_mu=self.r_mu, vt=self.vt)


def hybrid_pi_from_h(hie, hre, hfe, hoe, h_at_ic, *, h_at_vce=None, temp=T_REF) -> HybridPiElements:
    r"""Hybrid-pi elements from a CE h-parameter set at its test point (low frequency).

    gm = IC_test/VT, and the exact CE h-parameters of the hybrid-pi with rb, r_pi, r_mu, ro
    (module docstring; derived from its nodal equations) are solved for the other four:

    .. math::
       r_\pi = \frac{h_{fe} + h_{re}}{g_m (1 - h_{re})},\quad
       r_\mu = \frac{h_{fe} + h_{re}}{g_m h_{re}},\quad
       r_b = h_{ie} - \frac{h_{fe} + h_{re}}{g_m},\quad
       \frac{1}{r_o} = h_{oe} - \frac{h_{re} (1 + g_m r_\pi)}{r_\pi} .

    hre = 0 gives r_mu infinite; 1/ro = 0 gives ro infinite.  The datasheet's test frequency
    (usually 1 kHz) must be low enough for the capacitances not to matter.

    Parameters
    ----------
    hie : float
        Input impedance in ohm (> 0).
    hre : float
        Reverse voltage ratio (0 <= hre < 1).
    hfe : float
        Forward current ratio (> 0).
    hoe : float
        Output admittance in S (>= 0).
    h_at_ic : float
        Test collector current of the set in A.
    h_at_vce : float or None
        Test VCE in V (recorded in the note).
    temp : float
        Temperature of the test point in K.

    Returns
    -------
    HybridPiElements
        The elements at ``h_at_ic``; :func:`scale_hybrid_pi` moves them to the bias IC.

    Raises
    ------
    InputError
        A missing test IC (``h_at_ic``); a set no hybrid-pi has: ``hie`` too small (rb < 0),
        ``hoe`` too small (ro < 0), ``hre`` outside [0, 1).
    """
    it = _scalar("h_at_ic", h_at_ic, "A", positive=True, what=" (the test IC of the h-parameters)")
    vce = None if h_at_vce is None else _scalar("h_at_vce", h_at_vce, "V", positive=True)
    hie_ = _scalar("hie", hie, "ohm", positive=True)
    hre_ = _scalar("hre", hre, "dimensionless", nonneg=True)
    hfe_ = _scalar("hfe", hfe, "dimensionless", positive=True)
    hoe_ = _scalar("hoe", hoe, "S", nonneg=True)
    if hre_ >= 1:
        raise InputError(f"hre: expected 0 <= hre < 1 (a voltage ratio r_pi/(r_pi + r_mu)), got {hre_:g}")
    vt = thermal_voltage(_scalar("temp", temp, "K", positive=True))
    gm = it / vt
    r_pi = (hfe_ + hre_) / (gm * (1.0 - hre_))
    r_mu = math.inf if hre_ == 0 else (hfe_ + hre_) / (gm * hre_)
    rb = hie_ - (hfe_ + hre_) / gm
    if rb < 0:
        raise InputError(f"hie: {hie_:g} ohm is below (hfe + hre)/gm = {hie_ - rb:g} ohm at h_at_ic = "
                         f"{it:g} A: rb would be negative (hie, hfe and the test IC do not fit)")
    g_mu = hre_ * (1.0 + gm * r_pi) / r_pi
    g_o = hoe_ - g_mu
    if g_o < 0:
        raise InputError(f"hoe: {hoe_:g} S is below hre (1 + beta)/r_pi = {g_mu:g} S, the output "
                         f"conductance through r_mu: ro would be negative")
    ro = math.inf if g_o == 0 else 1.0 / g_o
    note = (f"hybrid-pi: h-parameters given at IC = {format_si(it, 'A')}{_vce_text(vce)} (hie = "
            f"{format_si(hie_, 'Ω')}, hre = {hre_:.4g}, hfe = {hfe_:.4g}, hoe = {format_si(hoe_, 'S')}); "
            f"elements at the same IC: rb = {format_si(rb, 'Ω')}, r_pi = {format_si(r_pi, 'Ω')}, "
            f"r_mu = {format_si(r_mu, 'Ω')}, ro = {format_si(ro, 'Ω')}")
    return HybridPiElements(gm=gm, r_pi=r_pi, r_mu=r_mu, ro=ro, rb=rb, beta=gm * r_pi, va=it * ro, ic=it,
                            vt=vt, note=note)


def scale_hybrid_pi(elements: HybridPiElements, ic, *, beta=None, temp=T_REF) -> HybridPiElements:
    """Hybrid-pi elements found at one IC, moved to the bias IC.

    gm = IC/VT, r_pi = beta/gm, ro = VA/IC with VA = IC_test ro_test (Gray and Meyer, from
    memory); r_mu proportional to beta ro, i.e. r_mu = r_mu,test (beta/beta_test)
    (IC_test/IC) (common practice, no source: the collector-base feedback is the base-width
    modulation seen from the base, scaled by beta); rb held.

    Parameters
    ----------
    elements : HybridPiElements
        Elements at the test IC (from :func:`hybrid_pi_from_h`).
    ic : float or ndarray
        Bias collector current in A.
    beta : float, ndarray or None
        Current gain at the bias IC (e.g. from :func:`hfe_from_table`); None holds the test
        point's gm r_pi.
    temp : float
        Junction temperature at the bias point in K.

    Returns
    -------
    HybridPiElements
    """
    if not isinstance(elements, HybridPiElements):
        raise InputError(f"elements: expected HybridPiElements, got {type(elements).__name__}")
    i = _arr("ic", ic, "A", positive=True)
    be = elements.beta if beta is None else _arr("beta", beta, "dimensionless", positive=True)
    vt = thermal_voltage(_scalar("temp", temp, "K", positive=True))
    gm = i / vt
    r_pi = be / gm
    ro = elements.va / i
    r_mu = elements.r_mu * (be / elements.beta) * (elements.ic / i)
    note = (f"hybrid-pi: from h-parameters at IC = {format_si(elements.ic, 'A')}; used at IC = "
            f"{_show(i, 'A')}: gm = {_show(gm, 'S')}, r_pi = {_show(r_pi, 'Ω')}, ro = {_show(ro, 'Ω')} "
            f"(VA = {format_si(elements.va, 'V')}), r_mu = {_show(r_mu, 'Ω')} (as beta ro), rb = "
            f"{format_si(elements.rb, 'Ω')} held")
    return HybridPiElements(gm=_out(gm), r_pi=_out(r_pi), r_mu=_out(r_mu), ro=_out(ro), rb=elements.rb,
                            beta=_out(be + 0.0 * gm), va=elements.va, ic=_out(i),
                            vt=vt, note=note)


# --- FETs ------------------------------------------------------------------------------------

@dataclass(frozen=True, slots=True)
class GmFromYfs:
    """FET transconductance at the bias ID from the datasheet |yfs| at its test ID.

    Parameters
    ----------
    gm : float or ndarray
        Transconductance at ``id`` in S.
    id : float or ndarray
        Bias drain current in A.
    yfs : float
        |yfs| as given in S.
    yfs_at_id : float
        Test ID of ``yfs`` in A.
    note : str
        One line: given at X, used at Y.
    """

    gm: object
    id: object
    yfs: float
    yfs_at_id: float
    note: str


def gm_from_yfs(yfs, yfs_at_id, id) -> GmFromYfs:  # noqa: A002 (the package's name for ID)
    """gm at the bias ID from the forward transfer admittance |yfs| at its test ID.

    Square law: gm = sqrt(2 kn ID) for a MOSFET, gm = 2 sqrt(ID IDSS)/|VP| for a JFET
    (Shockley; Sedra and Smith, from memory; see :mod:`devmodels.fetbias`), so in both
    gm = |yfs| sqrt(ID / ID_test).  For a JFET the datasheet's yfs is usually given at
    VGS = 0, i.e. ``yfs_at_id`` = IDSS.

    Parameters
    ----------
    yfs : float
        |yfs| (= gm at low frequency) in S (> 0).
    yfs_at_id : float
        Test drain current of ``yfs`` in A (> 0).
    id : float or ndarray
        Bias drain current in A (> 0).

    Returns
    -------
    GmFromYfs
    """
    y = _scalar("yfs", yfs, "S", positive=True)
    at = _scalar("yfs_at_id", yfs_at_id, "A", positive=True, what=" (the test ID of yfs)")
    i = _arr("id", id, "A", positive=True)
    gm = y * np.sqrt(i / at)
    note = (f"gm: |yfs| {format_si(y, 'S')} given at ID = {format_si(at, 'A')}; used {_show(gm, 'S')} "
            f"at ID = {_show(i, 'A')} (square law, gm as sqrt(ID))")
    return GmFromYfs(gm=_out(gm), id=_out(i), yfs=y, yfs_at_id=at, note=note)


@dataclass(frozen=True, slots=True)
class FetCapacitances:
    """Model capacitances from the datasheet Ciss, Crss, Coss.

    Parameters
    ----------
    cgs : float
        Gate-source capacitance Ciss - Crss in F.
    cgd : float
        Gate-drain capacitance Crss in F.
    cds : float
        Drain-source capacitance Coss - Crss in F.
    at_vds : float or None
        Test VDS of the datasheet values in V (recorded; not scaled).
    note : str
        One line: given, used.
    """

    cgs: float
    cgd: float
    cds: float
    at_vds: float | None
    note: str


def fet_capacitances(ciss, crss, coss, *, at_vds=None) -> FetCapacitances:
    """Cgs, Cgd, Cds from the datasheet common-source Ciss, Crss, Coss.

    Ciss = Cgs + Cgd (output AC-shorted), Crss = Cgd, Coss = Cds + Cgd (input AC-shorted);
    hence Cgs = Ciss - Crss, Cgd = Crss, Cds = Coss - Crss (FET datasheet conventions, from
    memory).  The values hold at the datasheet's test VDS only; they are not moved to the
    bias VDS.  :class:`~devmodels.fet.FetModel` has no drain-source element: in a common-source
    stage its ``cdb`` (drain to body, body at the source) plays that part.

    Parameters
    ----------
    ciss : float
        Input capacitance in F (> 0).
    crss : float
        Reverse-transfer capacitance in F (> 0).
    coss : float
        Output capacitance in F (> 0).
    at_vds : float or None
        Test VDS of the three values in V (recorded in the note).

    Returns
    -------
    FetCapacitances

    Raises
    ------
    InputError
        A capacitance <= 0, or Ciss or Coss below Crss (a negative Cgs or Cds).
    """
    ci = _scalar("ciss", ciss, "F", positive=True)
    cr = _scalar("crss", crss, "F", positive=True)
    co = _scalar("coss", coss, "F", positive=True)
    vds = None if at_vds is None else _scalar("at_vds", at_vds, "V", positive=True)
    for name, c in (("ciss", ci), ("coss", co)):
        if c < cr:
            raise InputError(f"{name}: {c:g} F is below crss = {cr:g} F (C{'gs' if name == 'ciss' else 'ds'} "
                             f"= {name} - crss would be negative)")
    cgs, cds = ci - cr, co - cr
    at = "" if vds is None else f" at VDS = {format_si(vds, 'V')}"
    note = (f"FET capacitances: Ciss {format_si(ci, 'F')}, Crss {format_si(cr, 'F')}, Coss "
            f"{format_si(co, 'F')} given{at}; used Cgs = {format_si(cgs, 'F')}, Cgd = {format_si(cr, 'F')}, "
            f"Cds = {format_si(cds, 'F')} (not moved to the bias VDS)")
    return FetCapacitances(cgs=cgs, cgd=cr, cds=cds, at_vds=vds, note=note)

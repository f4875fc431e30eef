r"""From measured two-port parameters back to the hybrid-pi model (parameter extraction).

Two steps, both on the Y parameters of the device (S converted with :func:`devmodels.convert`;
a file measured in common base or common collector is turned into common emitter through
the indefinite admittance matrix, :func:`devmodels.configs.indefinite_from_y` then
:func:`devmodels.configs.config_y`):

1. **Direct estimates** (:func:`direct_estimates`) from the common-emitter Y at the ends of
   the band.  With rb = 0 the hybrid-pi gives exactly (node order b, c, e; from memory of the
   usual analog and RF design texts, e.g. Gray, Hurst, Lewis and Meyer, *Analysis and Design
   of Analog Integrated Circuits*, ch. 1 and 7, and Gonzalez, *Microwave Transistor
   Amplifiers*, ch. 1):

   .. math::
       y_{12} = -j\omega C_\mu,\quad y_{11} + y_{12} = 1/r_\pi + j\omega C_\pi,\quad
       y_{21} - y_{12} = g_m,\quad y_{22} + y_{12} = 1/r_o .

   A base resistance rb in series with the intrinsic input divides the first three by
   1 + rb y11' (y11' the intrinsic input admittance), which is close to 1 at low
   frequency when rb << r_pi; so C_mu, r_pi + rb, C_pi, gm and ro are read from the lowest
   points of the band (below fT/10).  At high frequency the input impedance with the output
   shorted is :math:`1/y_{11} = r_b + 1/y'_{11}`, whose real part tends to rb well above
   the beta cut-off; rb is read from the top of the band as
   :math:`\mathrm{Re}(1/y_{11} - 1/(1/r_\pi + j\omega(C_\pi + C_\mu)))`.

2. **A fit** (:func:`extract`) of the package's own :class:`~devmodels.models.HybridPi`
   netlist, reduced by the package's engine :func:`devmodels.netlist.reduce_to`, to every
   frequency point with :func:`scipy.optimize.least_squares`, started from the direct
   estimates.  The unknowns are the logarithms of the element values (elements stay
   positive), bounded to physical ranges.  Each residual is the complex misfit of one S
   parameter (or, on request, one Y parameter) at one frequency divided by the measured
   magnitude of that parameter there (real and imaginary parts as two residuals), so the
   small s12 counts as much as the large s21.  S is the default because a network
   analyser's errors are close to proportional to each measured S: converted to Y, the
   error of a y22 read from an S22 near 1 is far larger than y22 itself at low frequency,
   and Y-relative weights would then give a biased fit and wrong uncertainties.

   The Jacobian is analytic.  With the full nodal matrix partitioned into kept terminals K
   and internal nodes I, the reduced matrix is
   :math:`Y_r = Y_{KK} - Y_{KI} Y_{II}^{-1} Y_{IK}` and its change for a change dY of the
   full matrix is :math:`L\,dY\,M` with :math:`L = [1, -Y_{KI} Y_{II}^{-1}]` and
   :math:`M = [1; -Y_{II}^{-1} Y_{IK}]` (first-order perturbation of a Schur complement).
   An element stamps dY = dy u v^T (u, v its incidence vectors), so its column is
   dy (L u)(v^T M); in log-parameters dy is -1/R for a resistor, jωC for a capacitor, gm
   for the source.  All points are done at once with batched solves.

   Uncertainties: the covariance of the log-parameters is s^2 (J^T J)^{-1}, with s^2 the
   residual variance (sum of squared residuals over m - p, m residuals, p unknowns) and
   J the Jacobian at the solution (the usual linearised least-squares estimate; e.g. Press
   et al., *Numerical Recipes*, ch. 15, from memory); an element's standard uncertainty is
   its value times the square root of the diagonal entry.  Elements whose relative
   uncertainty is large, or on which the data hardly depend (a flat Jacobian column), are
   named in the warnings.

3. **Bias consistency** (:func:`bias_consistency`, :func:`transit_time`): the fitted gm
   against IC/VT (ideality factor, excess emitter resistance), and tau_F and C_je + C_mu from
   the fitted fT of several files at several currents,
   :math:`1/(2\pi f_T) = \tau_F + (C_{je} + C_\mu) V_T / I_C`, by the one fit of that law,
   :func:`devmodels.datasheet.fit_transit_time`.

A FET measured in common source, gate or drain is fitted the same way with
:class:`~devmodels.fet.FetModel`'s gm, cgs, cgd, ro and rg (the relations above with
C_pi -> cgs, C_mu -> cgd, rb -> rg and no r_pi).

Optional parasitics (off unless asked for): ``rex``, ``rcx`` (series emitter and collector
resistances of :class:`HybridPi`; ``rsx``, ``rdx`` for a FET), the lead inductances ``l_b``,
``l_c``, ``l_e`` (``l_g``, ``l_d``, ``l_s`` for a FET) in series with each terminal outside
those resistances, ``c_pad_in`` (base to emitter terminal) and ``c_pad_out`` (collector to
emitter terminal) pad capacitances, all in the same netlist.  An inductor's Jacobian column
is d(1/(jωL))/d ln L = -1/(jωL), stamped like the others.

scipy and matplotlib are imported inside the functions that need them.
"""

from __future__ import annotations

import math
import warnings as _warnings
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from .configs import CONFIG_TERMINALS, config_y, indefinite_from_y
from .constants import BJT_CONFIGS, FET_CONFIGS, thermal_voltage
from .exceptions import InputError
from .netlist import Netlist, capacitor, reduce_to, stamp
from .twoport import TwoPort

__all__ = ["DirectEstimate", "ExtractionResult", "direct_estimates", "extract", "model_y", "bias_consistency",
           "transit_time", "bias_toml", "plot_fit", "BASE_ELEMENTS", "PARASITICS", "FET_BASE_ELEMENTS",
           "FET_PARASITICS", "BOUNDS", "ExtractionWarning"]

#: The elements always fitted (the interface's JSON keys).
BASE_ELEMENTS: tuple[str, ...] = ("gm", "r_pi", "c_pi", "c_mu", "rb", "ro")
#: Optional parasitics: series emitter / collector resistance (ohm), pad capacitances (F), lead
#: inductances (H).
PARASITICS: tuple[str, ...] = ("rex", "rcx", "c_pad_in", "c_pad_out", "l_b", "l_c", "l_e")
#: The elements fitted for a FET (common source, gate or drain data): :class:`~devmodels.fet.FetModel`'s
#: gm (S), cgs, cgd (F), ro, rg (ohm).
FET_BASE_ELEMENTS: tuple[str, ...] = ("gm", "cgs", "cgd", "ro", "rg")
#: Optional FET parasitics: drain and source ohmic resistances (ohm), pad capacitances (F), lead
#: inductances (H).
FET_PARASITICS: tuple[str, ...] = ("rdx", "rsx", "c_pad_in", "c_pad_out", "l_g", "l_d", "l_s")
#: Physical bounds of each element in SI units (the fit stays inside them).
BOUNDS: dict[str, tuple[float, float]] = {
    "gm": (1e-7, 1e3), "r_pi": (1e-2, 1e10), "c_pi": (1e-19, 1e-6), "c_mu": (1e-19, 1e-6),
    "rb": (1e-4, 1e6), "ro": (1e-1, 1e13), "rex": (1e-5, 1e4), "rcx": (1e-5, 1e4),
    "c_pad_in": (1e-19, 1e-6), "c_pad_out": (1e-19, 1e-6),
    "cgs": (1e-19, 1e-6), "cgd": (1e-19, 1e-6), "rg": (1e-4, 1e6), "rdx": (1e-5, 1e4), "rsx": (1e-5, 1e4),
    "l_b": (1e-15, 1e-6), "l_c": (1e-15, 1e-6), "l_e": (1e-15, 1e-6),
    "l_g": (1e-15, 1e-6), "l_d": (1e-15, 1e-6), "l_s": (1e-15, 1e-6),
}
_UNITS = {"gm": "S", "r_pi": "ohm", "c_pi": "F", "c_mu": "F", "rb": "ohm", "ro": "ohm", "rex": "ohm",
          "rcx": "ohm", "c_pad_in": "F", "c_pad_out": "F", "cgs": "F", "cgd": "F", "rg": "ohm", "rdx": "ohm",
          "rsx": "ohm", "l_b": "H", "l_c": "H", "l_e": "H", "l_g": "H", "l_d": "H", "l_s": "H"}
#: Start values of the parasitics when asked for.
_PARASITIC_START = {"rex": 1.0, "rcx": 1.0, "rdx": 1.0, "rsx": 1.0, "c_pad_in": 1e-14, "c_pad_out": 1e-14,
                    "l_b": 1e-10, "l_c": 1e-10, "l_e": 1e-10, "l_g": 1e-10, "l_d": 1e-10, "l_s": 1e-10}
#: The lead inductances of the bipolar model, and of the FET model (fields of the same names).
_LEADS = ("l_b", "l_c", "l_e")
_FET_LEADS = ("l_g", "l_d", "l_s")
#: Per device family: elements, parasitics, terminals (port order of the indefinite matrix), configurations.
_FAMILIES = {
    "bjt": (BASE_ELEMENTS, PARASITICS, ("b", "c", "e"), BJT_CONFIGS),
    "fet": (FET_BASE_ELEMENTS, FET_PARASITICS, ("g", "d", "s"), FET_CONFIGS),
}


def _family(config: str) -> str:
    """'bjt' or 'fet' for a configuration name."""
    for fam, (_, _, _, configs) in _FAMILIES.items():
        if config in configs:
            return fam
    raise InputError(f"config: expected one of {', '.join(BJT_CONFIGS + FET_CONFIGS)}, got {config!r}")
#: Relative uncertainty above which an element is reported as not determined by the data.
REL_UNCERTAINTY_WARN = 0.25
#: rms error (relative) above which a fit is called implausible.
RMS_IMPLAUSIBLE = 0.1


class ExtractionWarning(UserWarning):
    """The data do not determine an element well, or the fit is implausible."""


@dataclass(frozen=True, slots=True)
class DirectEstimate:
    """One direct estimate and where it was read.

    Attributes
    ----------
    value : float
        The estimate in SI units (``unit``).
    unit : str
        'S', 'ohm' or 'F'.
    f_lo, f_hi : float
        The frequency range (Hz) of the points it was read from (median over them).
    relation : str
        The relation used.
    """

    value: float
    unit: str
    f_lo: float
    f_hi: float
    relation: str

    def as_dict(self) -> dict:
        """JSON-ready dictionary."""
        return {"value": self.value, "unit": self.unit, "freq_range": [self.f_lo, self.f_hi],
                "relation": self.relation}


@dataclass(frozen=True)
class ExtractionResult:
    """Fitted hybrid-pi elements and how well the data determine them.

    Attributes
    ----------
    elements : dict of str -> float
        Fitted (or held) element values in SI units: ``gm`` (S), ``r_pi``, ``rb``, ``ro``
        (ohm), ``c_pi``, ``c_mu`` (F), and any parasitics fitted.
    uncertainty : dict of str -> float
        Standard uncertainty of each element in its unit (``math.inf``: not determined;
        0 for an element held fixed).
    rms_error : float
        Relative rms misfit over all points and the four parameters:
        sqrt(mean |P_fit - P_meas|^2 / |P_meas|^2) (P as for ``residual``).
    residual : ndarray, complex, shape (F, 2, 2)
        (P_fit - P_meas) / |P_meas| per parameter and frequency, in the measured configuration;
        P is S at the data's reference resistances (or Y with ``weighting='y'``).
    freq : ndarray, shape (F,)
        Frequencies in Hz.
    config : str
        The configuration of the data.
    y_measured, y_fit : ndarray, complex, shape (F, 2, 2)
        Measured and fitted Y (S) in ``config``.
    z0 : (float, float)
        Reference resistances (ohm) of the measured S, for plots.
    estimates : dict of str -> DirectEstimate
        The direct estimates the fit started from.
    warnings : tuple of str
        Elements the data do not determine, bounds reached, an implausible fit.
    plausible : bool
        False when the fit's rms error exceeds :data:`RMS_IMPLAUSIBLE`.
    fixed : tuple of str
        Elements held at given values.
    nfev : int
        Residual evaluations of the optimiser.
    """

    elements: dict
    uncertainty: dict
    rms_error: float
    residual: np.ndarray = field(repr=False)
    freq: np.ndarray = field(repr=False)
    config: str = "ce"
    y_measured: np.ndarray = field(default=None, repr=False)
    y_fit: np.ndarray = field(default=None, repr=False)
    z0: tuple = (50.0, 50.0)
    estimates: dict = field(default_factory=dict, repr=False)
    warnings: tuple = ()
    plausible: bool = True
    fixed: tuple = ()
    nfev: int = 0

    def as_dict(self) -> dict:
        """The interface's JSON keys (``elements``, ``uncertainty``, ``rms_error``) and extras.

        An undetermined uncertainty (infinite) is ``None`` (JSON ``null``).
        """
        unc = {k: (float(v) if math.isfinite(v) else None) for k, v in self.uncertainty.items()}
        return {"elements": {k: float(v) for k, v in self.elements.items()}, "uncertainty": unc,
                "rms_error": float(self.rms_error), "config": self.config,
                "points": int(self.freq.size), "plausible": bool(self.plausible),
                "warnings": list(self.warnings), "fixed": list(self.fixed),
                "estimates": {k: v.as_dict() for k, v in self.estimates.items()}}

    def model(self):
        """The fitted elements as a :class:`~devmodels.models.HybridPi` or
        :class:`~devmodels.fet.FetModel` (pad capacitances left out)."""
        e = self.elements
        if _family(self.config) == "fet":
            from .fet import FetModel

            return FetModel(gm=e["gm"], ro=e["ro"], cgs=e["cgs"], cgd=e["cgd"], rg=e["rg"], rdx=e.get("rdx", 0.0),
                            rsx=e.get("rsx", 0.0), **{k: e[k] for k in _FET_LEADS if k in e})
        from .models import HybridPi

        return HybridPi(gm=e["gm"], r_pi=e["r_pi"], ro=e["ro"], c_pi=e["c_pi"], c_mu=e["c_mu"], rb=e["rb"],
                        rcx=e.get("rcx", 0.0), rex=e.get("rex", 0.0), **{k: e[k] for k in _LEADS if k in e})

    @property
    def ft(self) -> float:
        """fT of the fitted intrinsic elements, gm / (2 pi (C_pi + C_mu)) in Hz (cgs, cgd for a FET)."""
        e = self.elements
        c = e["cgs"] + e["cgd"] if "cgs" in e else e["c_pi"] + e["c_mu"]
        return e["gm"] / (2 * math.pi * c)

    def s_fit(self) -> TwoPort:
        """Fitted S parameters at the measured reference resistances."""
        return TwoPort(self.freq, self.y_fit, "y", self.z0, self.config).to("s")

    def s_measured(self) -> TwoPort:
        """Measured S parameters at their reference resistances."""
        return TwoPort(self.freq, self.y_measured, "y", self.z0, self.config).to("s")


# --- input -------------------------------------------------------------------------------

def _as_twoport(source) -> TwoPort:
    """A TwoPort from a path, a TouchstoneData or a TwoPort."""
    if isinstance(source, TwoPort):
        return source
    if isinstance(source, (str, Path)):
        from .touchstone import read_touchstone_file

        return read_touchstone_file(source).twoport
    tp = getattr(source, "twoport", None)
    if isinstance(tp, TwoPort):
        return tp
    raise InputError(f"source: expected a Touchstone file name or a TwoPort, got {type(source).__name__}")


def _measured_y(tp: TwoPort, min_points: int) -> tuple[np.ndarray, np.ndarray]:
    """Frequencies and Y (F, 2, 2) of a measured two-port, refusing what cannot be fitted."""
    if tp.freq is None:
        raise InputError("file: the parameters have no frequency; extraction needs a frequency sweep")
    f = np.asarray(tp.freq, dtype=float)
    if f.size < min_points:
        raise InputError(f"file: {f.size} frequenc{'y' if f.size == 1 else 'ies'}; extraction needs at least "
                         f"{min_points} frequency points spanning the band (low points for gm, r_pi, ro, "
                         "high points for rb)")
    if f[0] <= 0:
        raise InputError("file: a point at 0 Hz; extraction needs frequencies above 0 Hz (capacitances are "
                         "read from the imaginary parts)")
    y = tp.to("y").data
    return f, np.array(y)


# --- direct estimates --------------------------------------------------------------------

def _median(x: np.ndarray) -> float:
    return float(np.median(x))


def direct_estimates(freq, y_ce, *, need_gm: bool = True, family: str = "bjt") -> tuple[dict, float, list]:
    """Direct estimates of the hybrid-pi elements from common-emitter Y (module docstring).

    Parameters
    ----------
    freq : array_like, shape (F,)
        Frequencies in Hz, increasing, above 0.
    y_ce : array_like, complex, shape (F, 2, 2)
        Common-emitter (common-source for a FET) Y parameters in S.
    need_gm : bool
        When True (gm not supplied), refuse a band with no point below fT/10.
    family : {'bjt', 'fet'}
        Hybrid-pi, or a FET (the same relations with C_pi -> cgs, C_mu -> cgd, rb -> rg and
        no r_pi: 1/y11 = rg + 1/(jw(cgs + cgd)), so Re(1/y11) is rg).

    Returns
    -------
    (dict of str -> DirectEstimate, float, list of str)
        The estimates of ``gm``, ``r_pi``, ``c_pi``, ``c_mu``, ``rb``, ``ro`` (a FET: ``gm``,
        ``cgs``, ``cgd``, ``rg``, ``ro``); the estimated fT in Hz (the largest f |h21| where
        |h21| >= 1, h21 = y21 / y11); warnings.

    Raises
    ------
    InputError
        The data are not those of a transistor in common emitter (no transconductance:
        y21 - y12 about 0, as in a passive reciprocal network; a negative input
        conductance), or no point lies below fT/10 while gm is needed.
    """
    f = np.asarray(freq, dtype=float)
    y = np.asarray(y_ce, dtype=complex)
    w = 2 * math.pi * f
    y11, y12, y21, y22 = y[:, 0, 0], y[:, 0, 1], y[:, 1, 0], y[:, 1, 1]
    notes: list[str] = []
    # plausibility: a transistor has y21 >> y12 at low frequency (it amplifies)
    lo_n = max(1, min(f.size // 10, 5))
    fwd = np.abs(y21[:lo_n] - y12[:lo_n])
    if not np.all(np.abs(y21[:lo_n]) > 0) or _median(fwd / np.maximum(np.abs(y21[:lo_n]), 1e-300)) < 0.1 \
            or _median((y21[:lo_n] - y12[:lo_n]).real) <= 0:
        ratio = _median(fwd / np.maximum(np.abs(y21[:lo_n]), 1e-300))
        raise InputError(
            f"file: not a transistor in common {'source' if family == 'fet' else 'emitter'}: at the lowest frequencies y21 - y12 = "
            f"{_median((y21[:lo_n] - y12[:lo_n]).real):.3g} S (|y21 - y12| / |y21| = {ratio:.3g}); a "
            "transistor has a positive transconductance Re(y21 - y12) much larger than its feedback "
            "(a passive or reciprocal network has y21 = y12); check the file and its configuration")
    with np.errstate(divide="ignore", invalid="ignore"):
        h21 = np.abs(y21 / y11)
    gain = h21 >= 1
    ft = float(np.max((f * h21)[gain])) if gain.any() else float(np.max(f * h21))
    low = f <= min(ft / 10, 3 * f[0])
    if not low.any():
        if need_gm:
            raise InputError(
                f"file: no point below fT/10 = {ft / 10:.4g} Hz (fT estimated {ft:.4g} Hz from f |h21|; the band "
                f"starts at {f[0]:.4g} Hz): gm cannot be read from Re(y21 - y12) at low frequency; give gm "
                "(fixed={'gm': ...}, e.g. IC/VT) or a file that reaches lower")
        low = f <= 3 * f[0]
        notes.append(f"gm: no point below fT/10 = {ft / 10:.4g} Hz; the low-frequency estimates are rough")
    fl = (float(f[low][0]), float(f[low][-1]))
    gm = _median((y21[low] - y12[low]).real)
    c_mu = _median(-(y12[low]).imag / w[low])
    yin = y11[low] + y12[low]
    g_in = _median(yin.real)
    if family == "fet":
        rin = math.inf
    elif g_in > 0:
        rin = 1.0 / g_in
    else:                                       # lost in the noise: start from beta = 100
        rin = 100.0 / gm
        notes.append(f"r_pi: the input conductance Re(y11 + y12) is not positive at the lowest frequencies "
                     f"({fl[0]:.4g} to {fl[1]:.4g} Hz; noise?); the fit starts from beta = 100")
    c_pi = _median(yin.imag / w[low])
    g_out = _median((y22[low] + y12[low]).real)
    ro = 1.0 / g_out if g_out > 0 else math.inf
    # rb from the top of the band: Re(1/y11 - 1/(1/r_pi + jw(C_pi + C_mu)))
    high = f >= f[-1] / 3
    fh = (float(f[high][0]), float(f[high][-1]))
    c_tot = max(c_pi, 0.0) + max(c_mu, 0.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        rb_pts = (1.0 / y11[high] - 1.0 / (1.0 / rin + 1j * w[high] * c_tot)).real
    rb = _median(rb_pts) if np.all(np.isfinite(rb_pts)) else math.nan
    if f[-1] < ft / 3 and family == "bjt":
        notes.append(f"rb: the band stops at {f[-1]:.4g} Hz, below fT/3 (fT about {ft:.4g} Hz): the direct "
                     "estimate is rough and the fit finds rb only from its small low-frequency effect "
                     "(about rb/r_pi), which any error of the model moves as well")
    r_pi = rin - rb if math.isfinite(rb) and 0 < rb < rin else rin
    est = {
        "gm": DirectEstimate(gm, "S", *fl, "Re(y21 - y12) at low frequency"),
        "r_pi": DirectEstimate(r_pi, "ohm", *fl, "1/Re(y11 + y12) - rb at low frequency"),
        "c_pi": DirectEstimate(c_pi, "F", *fl, "Im(y11 + y12)/w at low frequency"),
        "c_mu": DirectEstimate(c_mu, "F", *fl, "-Im(y12)/w at low frequency"),
        "rb": DirectEstimate(rb, "ohm", *fh, "Re(1/y11 - 1/(1/r_pi + jw(c_pi + c_mu))) at high frequency"),
        "ro": DirectEstimate(ro, "ohm", *fl, "1/Re(y22 + y12) at low frequency"),
    }
    if family == "fet":
        est = {"gm": est["gm"], "cgs": DirectEstimate(c_pi, "F", *fl, "Im(y11 + y12)/w at low frequency"),
               "cgd": DirectEstimate(c_mu, "F", *fl, "-Im(y12)/w at low frequency"),
               "rg": DirectEstimate(rb, "ohm", *fh, "Re(1/y11 - 1/(jw(cgs + cgd))) at high frequency"),
               "ro": est["ro"]}
    return est, ft, notes


# --- the model and its analytic Jacobian --------------------------------------------------

def _netlist(values: dict, family: str = "bjt") -> Netlist:
    """The package's own model netlist (HybridPi or FetModel) with the optional pad capacitances."""
    if family == "fet":
        from .fet import FetModel

        model = FetModel(gm=values["gm"], ro=values["ro"], cgs=values["cgs"], cgd=values["cgd"], rg=values["rg"],
                         rdx=values.get("rdx", 0.0), rsx=values.get("rsx", 0.0),
                         **{k: values[k] for k in _FET_LEADS if k in values})
    else:
        from .models import HybridPi

        model = HybridPi(gm=values["gm"], r_pi=values["r_pi"], ro=values["ro"], c_pi=values["c_pi"],
                         c_mu=values["c_mu"], rb=values["rb"], rcx=values.get("rcx", 0.0),
                         rex=values.get("rex", 0.0), **{k: values[k] for k in _LEADS if k in values})
    net = model.netlist()
    t_in, t_out, t_common = model.terminals
    pads = []
    if values.get("c_pad_in", 0.0) > 0:
        pads.append(capacitor("c_pad_in", t_in, t_common, values["c_pad_in"]))
    if values.get("c_pad_out", 0.0) > 0:
        pads.append(capacitor("c_pad_out", t_out, t_common, values["c_pad_out"]))
    return net + Netlist(tuple(pads))


def model_y(values: dict, freq, config: str = "ce") -> np.ndarray:
    """Y (F, 2, 2) in S of the model with ``values`` in ``config``, by :func:`reduce_to`.

    Parameters
    ----------
    values : dict of str -> float
        Element values in SI units (:data:`BASE_ELEMENTS` and optionally :data:`PARASITICS`
        for a bipolar configuration, :data:`FET_BASE_ELEMENTS` and :data:`FET_PARASITICS` for a FET one).
    freq : array_like
        Frequencies in Hz.
    config : str
        ``ce``, ``cb``, ``cc`` (hybrid-pi) or ``cs``, ``cg``, ``cd`` (FET).
    """
    f = np.asarray(freq, dtype=float)
    fam = _family(config)
    return config_y(reduce_to(_netlist(values, fam), _FAMILIES[fam][2], 2 * math.pi * f, f.size), config)


def _sensitivities(values: dict, names, omega: np.ndarray, family: str = "bjt") -> np.ndarray:
    """d Y3 / d ln(value) for each name: shape (F, 3, 3, P), complex (module docstring)."""
    net = _netlist(values, family)
    terminals = _FAMILIES[family][2]
    order = list(terminals) + [x for x in net.nodes if x not in terminals]
    idx = {x: i for i, x in enumerate(order)}
    F, m, k = omega.size, len(order), len(terminals)
    Y = np.moveaxis(stamp(net, order, omega, F), 2, 0)          # (F, m, m)
    L = np.zeros((F, k, m), dtype=complex)
    M = np.zeros((F, m, k), dtype=complex)
    L[:, :, :k] = np.eye(k)
    M[:, :k, :] = np.eye(k)
    if m == k + 1:                                              # one internal node: a division
        M[:, k, :] = -Y[:, k, :k] / Y[:, k, k, None]
        L[:, :, k] = -Y[:, :k, k] / Y[:, k, k, None]
    elif m > k:
        Yii, Yik, Yki = Y[:, k:, k:], Y[:, k:, :k], Y[:, :k, k:]
        M[:, k:, :] = -np.linalg.solve(Yii, Yik)
        L[:, :, k:] = -np.swapaxes(np.linalg.solve(np.swapaxes(Yii, 1, 2), np.swapaxes(Yki, 1, 2)), 1, 2)
    jw = 1j * omega
    out = np.zeros((F, k, k, len(names)), dtype=complex)
    by_name = {e.name: e for e in net.elements}
    for j, name in enumerate(names):
        el = by_name[name]
        if el.kind == "resistor":
            dy = np.broadcast_to(-1.0 / el.value, (F,))
        elif el.kind == "capacitor":
            dy = jw * el.value
        elif el.kind == "inductor":
            dy = -1.0 / (jw * el.value)
        else:
            dy = np.broadcast_to(el.value, (F,))
        a, b = idx[el.nodes[0]], idx[el.nodes[1]]
        p, q = (a, b) if el.kind != "vccs" else (idx[el.nodes[2]], idx[el.nodes[3]])
        u = L[:, :, a] - L[:, :, b]
        v = M[:, p, :] - M[:, q, :]
        out[..., j] = dy[:, None, None] * u[:, :, None] * v[:, None, :]
    return out


def _y_to_s(y: np.ndarray, z0) -> tuple[np.ndarray, np.ndarray]:
    """S from Y at real references z0 = (r1, r2) ohm, and A^-1 = (1 + R^1/2 Y R^1/2)^-1.

    S = 2 A^-1 - 1 with A = 1 + R^1/2 Y R^1/2 (R = diag(r1, r2)); its change for a change dY
    is dS = -2 A^-1 R^1/2 dY R^1/2 A^-1 (closed 2 x 2 inverse, all points at once).
    """
    g = np.sqrt(np.asarray(z0, dtype=float))
    a = y * (g[:, None] * g[None, :])
    a[:, 0, 0] += 1.0
    a[:, 1, 1] += 1.0
    det = a[:, 0, 0] * a[:, 1, 1] - a[:, 0, 1] * a[:, 1, 0]
    inv = np.empty_like(a)
    inv[:, 0, 0], inv[:, 1, 1] = a[:, 1, 1] / det, a[:, 0, 0] / det
    inv[:, 0, 1], inv[:, 1, 0] = -a[:, 0, 1] / det, -a[:, 1, 0] / det
    s = 2 * inv
    s[:, 0, 0] -= 1.0
    s[:, 1, 1] -= 1.0
    return s, inv


def _pick(y3: np.ndarray, config: str) -> np.ndarray:
    """The (F, 2, 2, ...) two-port of ``config`` out of an indefinite (F, 3, 3, ...) array."""
    p1, p2, _ = CONFIG_TERMINALS[config]
    sel = [p1, p2]
    return y3[:, sel][:, :, sel]


def _strict(fn):
    """``fn`` with numpy's floating-point problems raised (FloatingPointError), never warned."""
    def wrapped(x):
        with np.errstate(divide="raise", over="raise", invalid="raise"):
            return fn(x)
    return wrapped


# --- the fit ---------------------------------------------------------------------------------

def extract(source, config: str = "ce", *, parasitics=(), fixed: dict | None = None, jacobian: str = "analytic",
            weighting: str = "s", rel_uncertainty_warn: float = REL_UNCERTAINTY_WARN,
            max_nfev: int = 200) -> ExtractionResult:
    """Fit the hybrid-pi model to a measured two-port (module docstring).

    Parameters
    ----------
    source : str, Path, TouchstoneData or TwoPort
        A two-port Touchstone file (read with :func:`devmodels.touchstone.read_touchstone_file`)
        or the parameters themselves (any kind).
    config : {'ce', 'cb', 'cc', 'cs', 'cg', 'cd'}
        The configuration the device was measured in; a FET configuration fits
        :class:`~devmodels.fet.FetModel`'s :data:`FET_BASE_ELEMENTS` instead of the hybrid-pi.
    parasitics : iterable of str
        Optional elements to fit as well, from :data:`PARASITICS` (:data:`FET_PARASITICS`).
    fixed : dict of str -> float, optional
        Elements held at given values (SI units), e.g. ``{"gm": ic / vt}``.
    weighting : {'s', 'y'}
        ``'s'``: each residual is the misfit of one S parameter (at the data's reference
        resistances) at one frequency over its measured magnitude, right for errors
        proportional to each measured S (a network analyser's trace noise); ``'y'``: the same
        with Y.  Either way every parameter counts, however small.
    jacobian : {'analytic', '2-point', '3-point'}
        The analytic Jacobian, or scipy's finite differences (for comparison).
    rel_uncertainty_warn : float
        Relative uncertainty above which an element is named in the warnings.
    max_nfev : int
        Limit on residual evaluations.

    Returns
    -------
    ExtractionResult

    Raises
    ------
    InputError
        Unknown configuration or parasitic, too few frequencies, a 0 Hz point, data that are
        not a transistor's, no point below fT/10 while gm is fitted.
    FileFormatError
        The file cannot be read as a two-port Touchstone file (a one-port file, ...).

    Warns
    -----
    ExtractionWarning
        Once per warning of the result (undetermined elements, bounds reached, implausible fit).
    """
    from scipy.optimize import least_squares

    family = _family(config)
    base, allowed, _, configs = _FAMILIES[family]
    extra = tuple(parasitics)
    for p in extra:
        if p not in allowed:
            raise InputError(f"parasitics: unknown element {p!r} for a {config} fit; expected some of "
                             f"{', '.join(allowed)}")
    fixed = dict(fixed or {})
    for k, v in fixed.items():
        if k not in base + extra:
            raise InputError(f"fixed: {k!r} is not an element of the fit; expected one of "
                             f"{', '.join(base + extra)}")
        if isinstance(v, bool) or not (isinstance(v, (int, float)) and math.isfinite(v) and v > 0):
            raise InputError(f"fixed: {k} must be a finite number > 0 in {_UNITS[k]}, got {v!r}")
    if weighting not in ("s", "y"):
        raise InputError(f"weighting: expected 's' or 'y', got {weighting!r}")
    if jacobian not in ("analytic", "2-point", "3-point"):
        raise InputError(f"jacobian: expected 'analytic', '2-point' or '3-point', got {jacobian!r}")
    tp = _as_twoport(source)
    names_all = base + extra
    free = [n for n in names_all if n not in fixed]
    f, y_meas = _measured_y(tp, 3)
    y_ce = y_meas if config == configs[0] else config_y(indefinite_from_y(y_meas, config), configs[0])
    est, ft, notes = direct_estimates(f, y_ce, need_gm="gm" not in fixed, family=family)

    # start values, clamped into the bounds
    start = {}
    for n in names_all:
        if n in fixed:
            start[n] = float(fixed[n])
            continue
        v = est[n].value if n in est else _PARASITIC_START[n]
        lo, hi = BOUNDS[n]
        if not (math.isfinite(v) and v > 0):
            notes.append(f"{n}: the direct estimate ({v:.4g} {_UNITS[n]}) is not positive; the fit starts "
                         "from a guess")
            v = {"ro": hi / 10, "rb": 10.0, "rg": 10.0, "c_mu": 1e-13, "cgd": 1e-13, "c_pi": 1e-12,
                 "cgs": 1e-12}.get(n, math.sqrt(lo * hi))
        start[n] = min(max(v, lo * 10), hi / 10)

    omega = 2 * math.pi * f
    z0 = tp.z0
    g = np.sqrt(np.asarray(z0, dtype=float))
    meas = y_meas if weighting == "y" else tp.to("s").data
    weight = np.abs(meas)
    weight = np.maximum(weight, 1e-9 * weight.max())
    x0 = np.log([start[n] for n in free])
    lb = np.log([BOUNDS[n][0] for n in free])
    ub = np.log([BOUNDS[n][1] for n in free])

    def values_of(x) -> dict:
        v = dict(fixed)
        v.update({n: float(math.exp(xi)) for n, xi in zip(free, x)})
        return v

    def predicted(x) -> np.ndarray:
        y = model_y(values_of(x), f, config)
        return y if weighting == "y" else _y_to_s(y, z0)[0]

    @_strict
    def residual(x) -> np.ndarray:
        d = (predicted(x) - meas) / weight
        return np.concatenate([d.real.ravel(), d.imag.ravel()])

    @_strict
    def jac(x) -> np.ndarray:
        vals = values_of(x)
        dy = _pick(_sensitivities(vals, free, omega, family), config)             # (F, 2, 2, P)
        if weighting == "s":
            _, inv = _y_to_s(model_y(vals, f, config), z0)
            dyn = dy * (g[:, None] * g[None, :])[None, :, :, None]
            # dS = -2 A^-1 dYn A^-1, the 2 x 2 products written out over all points and elements
            t = inv[:, :, 0, None, None] * dyn[:, None, 0] + inv[:, :, 1, None, None] * dyn[:, None, 1]
            dy = -2 * (t[:, :, None, 0] * inv[:, None, 0, :, None] + t[:, :, None, 1] * inv[:, None, 1, :, None])
        s = (dy / weight[..., None]).reshape(-1, len(free))
        return np.concatenate([s.real, s.imag])

    try:
        sol = least_squares(residual, x0, jac=jac if jacobian == "analytic" else jacobian, bounds=(lb, ub),
                            method="trf", x_scale=1.0, xtol=1e-15, ftol=1e-15, gtol=1e-15, max_nfev=max_nfev)
    except FloatingPointError as exc:
        raise InputError(f"file: the fit broke down numerically ({exc}); the data do not look like a "
                         "hybrid-pi's") from None
    values = values_of(sol.x)
    y_fit = model_y(values, f, config)
    res = (predicted(sol.x) - meas) / weight
    rms = float(np.sqrt(np.mean(np.abs(res) ** 2)))

    # uncertainties from the Jacobian at the solution (analytic in every case)
    J = jac(sol.x)
    r = residual(sol.x)
    dof = max(r.size - len(free), 1)
    s2 = float(r @ r) / dof
    U, sv, Vt = np.linalg.svd(J, full_matrices=False)
    good = sv > sv[0] * 1e-12
    inv = np.where(good, 1.0 / np.where(good, sv, 1.0) ** 2, 0.0)
    var = (Vt.T ** 2) @ inv * s2
    bad_dir = ~good
    undetermined = np.zeros(len(free), dtype=bool)
    if bad_dir.any():
        undetermined = np.any(np.abs(Vt[bad_dir].T) > 1e-3, axis=1)
    colnorm = np.linalg.norm(J, axis=0)
    flat = colnorm < 1e-6 * colnorm.max()
    unc = {n: 0.0 for n in fixed}
    for i, n in enumerate(free):
        unc[n] = math.inf if (undetermined[i] or flat[i]) else values[n] * math.sqrt(var[i])
    warn = list(notes)
    for i, n in enumerate(free):
        at_bound = sol.x[i] <= lb[i] + 1e-6 or sol.x[i] >= ub[i] - 1e-6
        if flat[i]:
            warn.append(f"{n}: the data hardly depend on it (flat Jacobian column); value not determined")
        elif undetermined[i]:
            warn.append(f"{n}: not determined by the data (Jacobian rank deficient)")
        elif unc[n] > rel_uncertainty_warn * values[n]:
            warn.append(f"{n}: poorly determined, relative uncertainty {unc[n] / values[n]:.2g}")
        if at_bound:
            warn.append(f"{n}: the fit ran to its bound ({values[n]:.4g} {_UNITS[n]})")
    plausible = rms <= RMS_IMPLAUSIBLE
    if not plausible:
        warn.append(f"fit: implausible for a transistor: the model misses the data by {rms:.3g} rms "
                    "(relative); check the file and its configuration")
    for text in warn:
        _warnings.warn(text, ExtractionWarning, stacklevel=2)
    return ExtractionResult(elements={n: values[n] for n in names_all}, uncertainty={n: unc[n] for n in names_all},
                            rms_error=rms, residual=res, freq=f, config=config, y_measured=y_meas, y_fit=y_fit,
                            z0=tp.z0, estimates=est, warnings=tuple(warn), plausible=plausible,
                            fixed=tuple(fixed), nfev=int(sol.nfev))


# --- bias point ---------------------------------------------------------------------------------

def bias_consistency(gm: float, ic: float, temp: float = 300.0) -> dict:
    """Compare a fitted gm with the ideal IC/VT.

    gm = IC / (n VT) gives the implied ideality factor n; reading the shortfall instead as an
    emitter resistance in series with the ideal junction, 1/gm = VT/IC + r_ex, gives the
    excess emitter resistance (Gray, Hurst, Lewis and Meyer, ch. 1; from memory).

    Parameters
    ----------
    gm : float
        Fitted transconductance in S (or an :class:`ExtractionResult`).
    ic : float
        Collector current in A (magnitude).
    temp : float
        Temperature in K.

    Returns
    -------
    dict
        ``gm_ideal`` (S), ``ratio`` (gm / gm_ideal), ``ideality`` (n), ``re_excess`` (ohm,
        negative when gm exceeds IC/VT, which no series resistance explains).
    """
    if isinstance(gm, ExtractionResult):
        gm = gm.elements["gm"]
    for name, v in (("gm", gm), ("ic", ic), ("temp", temp)):
        if not (isinstance(v, (int, float)) and math.isfinite(v) and v > 0):
            raise InputError(f"{name}: expected a finite number > 0, got {v!r}")
    vt = thermal_voltage(temp)
    ideal = ic / vt
    return {"gm_ideal": ideal, "ratio": gm / ideal, "ideality": ideal / gm, "re_excess": 1.0 / gm - vt / ic}


def transit_time(results, ic, temp: float = 300.0) -> dict:
    r"""tau_F and C_je from fits of files measured at several collector currents.

    Each fit's fT (:attr:`ExtractionResult.ft`, gm / (2 pi (C_pi + C_mu)) of its elements) and
    its IC go to :func:`devmodels.datasheet.fit_transit_time`, the one fit of
    :math:`1/(2\pi f_T) = \tau_F + (C_{je} + C_\mu) V_T / I_C` (Gray, Hurst, Lewis and Meyer,
    ch. 1; from memory).  C_je is the fitted sum less the mean fitted C_mu (the files are
    taken at one VCE, so C_mu is one value).

    Parameters
    ----------
    results : sequence of ExtractionResult
        Bipolar fits (ce, cb or cc), one per file.
    ic : sequence of float
        Collector current of each file in A, in the same order (at least two different ones).
    temp : float
        Temperature of the measurements in K.

    Returns
    -------
    dict
        ``tau_f`` (s), ``c_total`` (F, C_je + C_mu), ``c_mu`` (F, mean fitted), ``c_je`` (F),
        their standard uncertainties ``tau_f_unc``, ``c_total_unc``, ``c_je_unc`` (that of
        ``c_total``: the fitted C_mu's own is far smaller; ``None`` with two points: no
        residual to estimate them from), ``ft`` (Hz, per file), ``ic``
        (A, per file), ``temp`` (K), ``points``, ``rel_residual`` (largest misfit of
        1/(2 pi fT) relative to its value).

    Raises
    ------
    InputError
        Fewer than two files, counts that differ, a FET fit, currents all equal, or points
        that do not follow the law (:func:`devmodels.datasheet.fit_transit_time`).
    """
    from .datasheet import fit_transit_time

    results = list(results)
    currents = list(np.atleast_1d(np.asarray(ic, dtype=float)))
    if len(results) < 2:
        raise InputError(f"files: the fit of tau_F and C_je needs files at two or more different collector "
                         f"currents, got {len(results)} file{'' if len(results) == 1 else 's'}")
    if len(currents) != len(results):
        raise InputError(f"ic: expected one collector current per file ({len(results)} files), got "
                         f"{len(currents)}")
    for r in results:
        if _family(r.config) != "bjt":
            raise InputError(f"config: the transit-time fit is for a bipolar device (ce, cb, cc), not {r.config}")
    ft = np.array([r.ft for r in results])
    fit = fit_transit_time(ft, currents, temp)
    c_mu = float(np.mean([r.elements["c_mu"] for r in results]))
    return {"tau_f": fit.tau_f, "tau_f_unc": fit.tau_f_unc, "c_total": fit.c_sum, "c_total_unc": fit.c_sum_unc,
            "c_mu": c_mu, "c_je": fit.c_sum - c_mu, "c_je_unc": fit.c_sum_unc, "ft": [float(x) for x in ft],
            "ic": [float(x) for x in currents], "temp": float(temp), "points": fit.points,
            "rel_residual": fit.rel_residual}


# --- outputs ---------------------------------------------------------------------------------

def bias_toml(result: ExtractionResult, vce: float, *, temp: float = 300.0, device: str = "npn",
              description: str | None = None) -> str:
    """A bias file (TOML text, flat keys) that reproduces the fitted hybrid-pi.

    gm = IC/VT gives ``ic`` = gm VT; ``beta`` = gm r_pi; ``ft`` = gm / (2 pi (c_pi + c_mu));
    ``cmu``, ``rb``; ``va`` = ro IC; ``rex``, ``rcx`` and the lead inductances ``l_b``,
    ``l_c``, ``l_e`` when fitted (the relations of :mod:`devmodels.models` read backwards).
    Pad capacitances have no bias key and are left out.

    Parameters
    ----------
    result : ExtractionResult
        The fit.
    vce : float
        Collector-emitter voltage of the measurement in V (not in the data: the user's).
    temp : float
        Temperature of the measurement in K.
    device : {'npn', 'pnp'}
        Device polarity (magnitudes are written).
    description : str, optional
        Text for the ``description`` key.
    """
    if _family(result.config) == "fet":
        raise InputError("bias file: not available for a FET fit (gm alone does not give ID and Vov)")
    if device not in ("npn", "pnp"):
        raise InputError(f"device: expected npn or pnp, got {device!r}")
    for name, v in (("vce", vce), ("temp", temp)):
        if isinstance(v, bool) or not (isinstance(v, (int, float)) and math.isfinite(v) and v > 0):
            raise InputError(f"{name}: expected a finite number > 0, got {v!r}")
    e = result.elements
    vt = thermal_voltage(temp)
    ic = e["gm"] * vt
    sign = -1.0 if device == "pnp" else 1.0
    desc = description or f"hybrid-pi extracted from {result.freq.size} points, rms error {result.rms_error:.3g}"
    lines = [f"description = {_toml_str(desc)}", f'device = "{device}"',
             f"ic = {sign * ic!r}", f"vce = {sign * float(vce)!r}", f"beta = {e['gm'] * e['r_pi']!r}",
             f"ft = {e['gm'] / (2 * math.pi * (e['c_pi'] + e['c_mu']))!r}", f"cmu = {e['c_mu']!r}",
             f"rb = {e['rb']!r}", f"temp = {float(temp)!r}"]
    if math.isfinite(e["ro"]) and result.uncertainty.get("ro", 0.0) != math.inf:
        lines.append(f"va = {e['ro'] * ic!r}")
    for k in ("rex", "rcx") + _LEADS:
        if k in e:
            lines.append(f"{k} = {e[k]!r}")
    return "\n".join(lines) + "\n"


def _toml_str(text: str) -> str:
    """A TOML basic string."""
    out = text.replace("\\", "\\\\").replace('"', '\\"')
    out = "".join(c if c >= " " else f"\\u{ord(c):04x}" for c in out)
    return f'"{out}"'


def plot_fit(result: ExtractionResult, path, *, option: str = "plot") -> Path:
    """Measured against fitted S: magnitude (dB) and phase over frequency, and a Smith chart.

    Parameters
    ----------
    result : ExtractionResult
        The fit.
    path : str or Path
        Image file (.png or .svg), written atomically by :func:`devmodels.plotting.save_figure`.
    option : str
        Option name for error messages.
    """
    import matplotlib

    matplotlib.use("Agg")
    from matplotlib.figure import Figure

    from .plotting import save_figure

    meas, fit = result.s_measured().data, result.s_fit().data
    f = result.freq
    fig = Figure(figsize=(12, 4.2))
    ax_m, ax_p, ax_s = fig.add_subplot(1, 3, 1), fig.add_subplot(1, 3, 2), fig.add_subplot(1, 3, 3)
    colors = {"11": "C0", "12": "C1", "21": "C2", "22": "C3"}
    for key, col in colors.items():
        i, j = int(key[0]) - 1, int(key[1]) - 1
        m, p = meas[:, i, j], fit[:, i, j]
        with np.errstate(divide="ignore"):
            ax_m.semilogx(f, 20 * np.log10(np.maximum(np.abs(m), 1e-300)), ".", color=col, ms=2,
                          label=f"S{key} measured")
            ax_m.semilogx(f, 20 * np.log10(np.maximum(np.abs(p), 1e-300)), "-", color=col, label=f"S{key} fit")
        ax_p.semilogx(f, np.degrees(np.angle(m)), ".", color=col, ms=2)
        ax_p.semilogx(f, np.degrees(np.angle(p)), "-", color=col)
    ax_m.set_xlabel("frequency (Hz)")
    ax_m.set_ylabel("|S| (dB)")
    ax_m.legend(fontsize=6)
    ax_p.set_xlabel("frequency (Hz)")
    ax_p.set_ylabel("phase (deg)")
    from skrf.plotting import smith

    smith(ax=ax_s, chart_type="z", draw_labels=False)
    for key in ("11", "22"):
        i = int(key[0]) - 1
        ax_s.plot(meas[:, i, i].real, meas[:, i, i].imag, ".", color=colors[key], ms=2, label=f"S{key} measured")
        ax_s.plot(fit[:, i, i].real, fit[:, i, i].imag, "-", color=colors[key], label=f"S{key} fit")
    ax_s.legend(fontsize=6, loc="lower left")
    fig.suptitle(f"{result.config.upper()} model fit, rms error {result.rms_error:.3g}", fontsize=10)
    fig.tight_layout()
    return save_figure(fig, path, option=option)

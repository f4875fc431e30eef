r"""Frequency figures of a stage: f_beta, fT, fmax and the -3 dB bandwidth.

Each figure is the frequency where a quantity falls through a level:

=============  ==========================================  ============================
figure         quantity                                    level
=============  ==========================================  ============================
``f_beta``     :math:`|h_{21}|` of the bare CE device      :math:`|h_{21}(0)|/\sqrt 2`
``ft``         :math:`|h_{21}|` of the bare CE device      1
``fmax``       Mason's unilateral gain U of the device     1 (0 dB)
``bandwidth``  :math:`|a_{vs}|` of the terminated stage    :math:`|a_{vs}(0)|/\sqrt 2`
=============  ==========================================  ============================

("bare": the device model alone, without the stage's external degeneration or feedback
resistors; U is the same in every configuration, so fmax is a device figure.)

The search is vectorised: the quantity is evaluated on a logarithmic grid over the range in
one call, the first grid interval where it falls through the level is taken, and that
interval is refined a few times on small logarithmic grids (a short loop over refinements,
not over frequencies).  A figure that is not reached inside the range is ``None``.

With coupling and bypass capacitors the response also falls at low frequencies, so
``bandwidth`` is measured against the mid-band gain (:meth:`devmodels.stage.Stage.midband`:
every coupling and bypass capacitor shorted, the device capacitances left out; for a stage
without them that is its gain at 0 Hz) and searched upward from a mid-band point of the
response; :mod:`devmodels.band` gives the low corner and the time-constant estimates.

Beside the bandwidth, the Miller estimate of a common-emitter (common-source) stage (Sedra and
Smith, *Microelectronic Circuits*, ch. on frequency response; Gray, Hurst, Lewis and Meyer,
*Analysis and Design of Analog Integrated Circuits*, ch. 7; Miller's theorem; from memory).
With the input node x (b', g') driven by a unit voltage at mid-band, every element of the
device's netlist enters the resistive solution: the emitter (source) node e' sits on
:math:`R_E` = ``rex`` (``rsx``) plus any external emitter resistance that is not bypassed,
the collector (drain) node c' on :math:`R_C = r_{cx} + (R_L \parallel R_{C,ext})`
(``rcx``, ``rdx``), with ``ro`` from c' to e', ``r_mu`` from x to c', ``gm`` and (FET, body at
AC ground) ``gmb``.  Kirchhoff's current law at e' and c' gives their voltages
:math:`A_e = v_{e'}/v_x` and :math:`K = v_{c'}/v_x` (a 2 by 2 solve).  Each capacitance from
x to a node at gain A is seen at x multiplied by 1 - A, and each conductance likewise:

.. math::
    C_{in} = C_\pi (1 - A_e) + C_\mu (1 - K),\qquad
    G_x = (1 - A_e)/r_\pi + (1 - K)/r_\mu,\qquad
    f_{-3dB} \approx \frac{1}{2\pi\,[(R_s' + r_b) \parallel (1/G_x)]\,C_{in}},

:math:`R_s'` the source resistance in parallel with the base (gate) bias resistors.  Without
``rex``, ``rcx`` and ``r_mu``, :math:`A_e = 0`, :math:`K = -g_m (r_o \parallel R_L)` and
this is the textbook :math:`C_{in} = C_\pi + C_\mu (1 + g_m R_L')`,
:math:`R = (R_s + r_b) \parallel r_\pi`.  What it leaves out by construction: the output
node's capacitances (``cdb``, ``csb``; the second pole) and the zero of the feedback
capacitance; :mod:`devmodels.band` has the open-circuit time-constant estimate, which
includes every capacitance.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .analysis import stability_arrays
from .exceptions import InputError, SingularParameterError
from .search import GRID_POINTS, crossing
from .stage import Stage

__all__ = ["FrequencyFigures", "frequency_figures", "miller_bandwidth", "bandwidth"]


@dataclass(frozen=True, slots=True)
class FrequencyFigures:
    """Frequency figures of a stage (Hz; ``None`` where not reached in the searched range).

    Attributes
    ----------
    f_beta, ft, fmax : float or None
        Beta cut-off, transition frequency and maximum frequency of oscillation of the
        device, in Hz.
    bandwidth : float or None
        The high -3 dB corner of the terminated voltage gain avs of the stage, in Hz: where
        |avs| falls to |midband_avs|/sqrt 2 above mid-band.
    miller : float or None
        Miller estimate of ``bandwidth`` in Hz (common emitter / common source without a
        feedback resistor or collector-feedback bias, with a model that has
        ``miller_parts``; module docstring).
    avs0 : complex
        The mid-band terminated voltage gain the corners are measured against (for a stage
        without coupling or bypass capacitors, its gain at 0 Hz).
    h21_0 : float or None
        |h21| of the bare CE device at 0 Hz (the low-frequency beta).
    f_range : (float, float)
        The searched range in Hz.
    freq : ndarray (N,)
        A logarithmic grid over the range (Hz) with, on it:
    h21 : complex ndarray (N,)
        h21 of the bare CE device.
    u_db : float ndarray (N,)
        Mason's U in dB (NaN where it does not exist).
    midband_avs : complex or None
        The same as ``avs0`` (the key of the output layers).
    f_low : float or None
        The low -3 dB corner in Hz (None without coupling or bypass capacitors, or below the
        range); :class:`devmodels.band.BandEdges`.
    f_low_sctc : float or None
        Short-circuit time-constant estimate of ``f_low`` in Hz.
    bandwidth_octc : float or None
        Open-circuit time-constant estimate of ``bandwidth`` in Hz.
    low_terms, high_terms : tuple of devmodels.band.TimeConstant
        The terms of the two estimates (name, capacitance F, resistance ohm, time constant s),
        the largest share of the estimate first.
    """

    f_beta: float | None
    ft: float | None
    fmax: float | None
    bandwidth: float | None
    miller: float | None
    avs0: complex
    h21_0: float | None
    f_range: tuple[float, float]
    freq: np.ndarray
    h21: np.ndarray
    u_db: np.ndarray
    midband_avs: complex | None = None
    f_low: float | None = None
    f_low_sctc: float | None = None
    bandwidth_octc: float | None = None
    low_terms: tuple = ()
    high_terms: tuple = ()

    @property
    def miller_error(self) -> float | None:
        """Relative error of the Miller estimate, (miller - bandwidth) / bandwidth."""
        if self.miller is None or self.bandwidth is None:
            return None
        return self.miller / self.bandwidth - 1.0

    def as_dict(self) -> dict:
        """The scalar figures as a dict, for output layers (Hz; ``midband_avs`` complex)."""
        return {"f_beta": self.f_beta, "ft": self.ft, "fmax": self.fmax, "bandwidth": self.bandwidth,
                "bandwidth_miller": self.miller, "miller_error": self.miller_error,
                "midband_avs": self.midband_avs, "f_low": self.f_low, "f_low_sctc": self.f_low_sctc,
                "bandwidth_octc": self.bandwidth_octc,
                "f_start": self.f_range[0], "f_stop": self.f_range[1]}


def _conductance(r: float) -> float:
    """1/r for a resistance in ohm (0 for an infinite one, inf for 0)."""
    return math.inf if r == 0 else 1.0 / r


def miller_bandwidth(model, rs: float, rl: float, *, r_emitter: float = 0.0, r_bias: float = math.inf,
                     r_collector: float = math.inf) -> float | None:
    """Miller estimate of the CE (CS) -3 dB frequency in Hz (module docstring).

    Parameters
    ----------
    model : device model
        Its :meth:`miller_parts` give gm, the input shunt resistance (r_pi; infinite for a
        FET), the series input resistance (rb; rg), the input and feedback capacitances
        (C_pi, C_mu; Cgs, Cgd) and ro; its netlist gives ``rex``, ``rcx`` and ``r_mu``
        (``rsx``, ``rdx`` and ``gmb``) where present.
    rs : float
        Source resistance in ohm (the real part of a complex source impedance).
    rl : float
        Load resistance in ohm (``math.inf`` for an open load).
    r_emitter : float
        External resistance from the emitter (source) terminal to AC ground at high
        frequency in ohm (``rdeg``, the unbypassed part of a network's ``re``); 0: none.
    r_bias : float
        The bias resistors at the base (gate) to AC ground, in parallel, in ohm (``inf``: none).
    r_collector : float
        External resistor from the collector (drain) to AC ground in ohm, in parallel with
        ``rl`` (``inf``: none).

    Returns
    -------
    float or None
        None when the model has no ``miller_parts`` or no capacitance, or the estimate has no
        finite positive value (an open load on an ideal current-source output).
    """
    parts = getattr(model, "miller_parts", None)
    if parts is None:
        return None
    p = parts()
    values = model.netlist().values()
    fet = "gmb" in getattr(model, "element_names", ()) or "rsx" in getattr(model, "element_names", ())
    r_e = float(values.get("rsx" if fet else "rex", 0.0)) + r_emitter
    r_c = float(values.get("rdx" if fet else "rcx", 0.0)) + _parallel(r_collector, rl)
    gmb = float(values.get("gmb", 0.0)) if fet else 0.0
    g_mu = 0.0 if fet else _conductance(float(values.get("r_mu", math.inf)))
    gm, g_pi, g_o = p["gm"], _conductance(p["r_shunt"]), _conductance(p["ro"])
    g_e, g_c = _conductance(r_e), _conductance(r_c)
    # KCL with v_x = 1 (module docstring):
    #   e': a_e (G_E + g_pi + g_o + gm + gmb) - k g_o = g_pi + gm
    #   c': -a_e (g_o + gm + gmb) + k (G_C + g_o + g_mu) = g_mu - gm
    if math.isinf(g_c):
        k = 0.0
        a_e = 0.0 if math.isinf(g_e) else (g_pi + gm) / (g_e + g_pi + g_o + gm + gmb)
    elif math.isinf(g_e):
        a_e = 0.0
        d = g_c + g_o + g_mu
        if d == 0:
            return None
        k = (g_mu - gm) / d
    else:
        m11, m12, r1 = g_e + g_pi + g_o + gm + gmb, -g_o, g_pi + gm
        m21, m22, r2 = -(g_o + gm + gmb), g_c + g_o + g_mu, g_mu - gm
        det = m11 * m22 - m12 * m21
        if det == 0:
            return None
        a_e, k = (r1 * m22 - m12 * r2) / det, (m11 * r2 - m21 * r1) / det
    c_in = p["c_in"] * (1.0 - a_e) + p["c_fb"] * (1.0 - k)
    g_x = g_pi * (1.0 - a_e) + g_mu * (1.0 - k)
    r = _parallel(_parallel(rs, r_bias) + p["r_series"], math.inf if g_x == 0 else 1.0 / g_x)
    if not (c_in > 0 and r > 0 and math.isfinite(c_in * r)):
        return None
    return 1.0 / (2 * math.pi * r * c_in)


def _parallel(a: float, b: float) -> float:
    if math.isinf(a):
        return b
    if math.isinf(b):
        return a
    return a * b / (a + b)


def bandwidth(stage: Stage, f_start: float, f_stop: float, zs=50.0, zl=1e3,
              points: int = GRID_POINTS) -> tuple[float | None, complex]:
    """High -3 dB corner (Hz, or None) of the terminated |avs| of ``stage``, and the mid-band avs.

    The corner is where |avs| falls to |midband avs|/sqrt 2, going up from the mid-band
    point of the response (:func:`devmodels.band.band_edges`, which has the rules).

    Parameters
    ----------
    stage : Stage
        The stage.
    f_start, f_stop : float
        Search range in Hz.
    zs, zl : complex
        Source and load impedances in ohm (``math.inf``: open load).
    points : int
        Points of the coarse logarithmic grid.
    """
    from .band import avs_function, midband_avs, pass_band

    mid = midband_avs(stage, zs, zl)
    _, f_high, _, _ = pass_band(avs_function(stage, zs, zl), mid, f_start, f_stop, points, low=False)
    return f_high, mid


def _miller_for(stage: Stage, zs, zl) -> float | None:
    """The Miller estimate of ``stage`` where it applies (:class:`FrequencyFigures`), else None."""
    model = stage.model
    if stage.config != model.configs[0] or stage.rfb is not None:
        return None
    if np.ndim(stage.rdeg):
        return None
    net = stage.network
    r_emitter, r_bias, r_coll = float(stage.rdeg), math.inf, math.inf
    if net is not None:
        if net.bias == "collector-feedback":
            return None
        r_bias = {"divider": lambda: _parallel(net.r1, net.r2), "fixed": lambda: net.rb,
                  "none": lambda: math.inf}[net.bias]()
        r_coll = net.rc if net.rc > 0 else math.inf
        r_emitter += net.re - net.bypassed
    zl_c = complex(zl)
    return miller_bandwidth(model, complex(zs).real, math.inf if math.isinf(zl_c.real) else zl_c.real,
                            r_emitter=r_emitter, r_bias=r_bias, r_collector=r_coll)


def frequency_figures(stage: Stage, f_start: float, f_stop: float, zs=50.0, zl=1e3,
                      points: int = GRID_POINTS) -> FrequencyFigures:
    """Frequency figures of ``stage`` between ``zs`` and ``zl``, searched in [f_start, f_stop].

    Parameters
    ----------
    stage : Stage
        The stage (model, configuration, external resistors, network).
    f_start, f_stop : float
        Search range in Hz, 0 < f_start < f_stop.
    zs, zl : complex
        Source and load impedances in ohm (``math.inf`` for an open load).
    points : int
        Points of the coarse logarithmic grid (also the grid of ``freq``, ``h21``, ``u_db``).
    """
    from .band import band_edges

    if not (0 < f_start < f_stop):
        raise InputError(f"start: expected 0 < start < stop, got {f_start:g} Hz and {f_stop:g} Hz")
    bare = Stage(stage.model)  # the first configuration: common emitter (source)

    def h21(f):
        return bare.two_port(f, "h").data[:, 1, 0]

    def u_db(f):
        return stability_arrays(bare.two_port(f, "s").data)["u_db"]

    try:
        from .models import without_leads

        h0 = float(abs(Stage(without_leads(stage.model)).two_port(np.array([0.0]), "h").data[0, 1, 0]))
    except SingularParameterError:  # no input conductance at 0 Hz (a FET): |h21| is unbounded there
        h0 = None
    f_beta = None if h0 is None else crossing(lambda f: np.abs(h21(f)), h0 / math.sqrt(2), f_start, f_stop,
                                              points)
    ft = crossing(lambda f: np.abs(h21(f)), 1.0, f_start, f_stop, points)
    fmax = crossing(u_db, 0.0, f_start, f_stop, points)
    band = band_edges(stage, zs, zl, f_start, f_stop, points)
    grid = np.geomspace(f_start, f_stop, points)
    return FrequencyFigures(f_beta=f_beta, ft=ft, fmax=fmax, bandwidth=band.f_high, miller=_miller_for(stage, zs, zl),
                            avs0=band.midband_avs, h21_0=h0, f_range=(float(f_start), float(f_stop)),
                            freq=grid, h21=h21(grid), u_db=u_db(grid), midband_avs=band.midband_avs,
                            f_low=band.f_low, f_low_sctc=band.f_low_sctc, bandwidth_octc=band.bandwidth_octc,
                            low_terms=band.low_terms, high_terms=band.high_terms)

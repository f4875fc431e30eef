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

Beside the bandwidth, the Miller estimate of a common-emitter (common-source) stage (Sedra and Smith,
*Microelectronic Circuits*, ch. on frequency response; Gray and Meyer, ch. 7, from memory):

.. math::
    f_{-3dB} \approx \frac{1}{2\pi R\,C_{in}},\quad
    C_{in} = C_\pi + C_\mu (1 + g_m R_L'),\quad R_L' = r_o \parallel R_L,\quad
    R = (R_s + r_b) \parallel r_\pi .
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Callable

import numpy as np

from .analysis import stability_arrays, terminate_arrays
from .exceptions import InputError, SingularParameterError
from .stage import Stage

__all__ = ["FrequencyFigures", "frequency_figures", "crossing", "miller_bandwidth", "bandwidth",
           "GRID_POINTS"]

#: Points of the coarse logarithmic grid of a search.
GRID_POINTS = 241
#: Points and rounds of the refinement of the bracketing interval.
_REFINE_POINTS, _REFINE_ROUNDS = 33, 4


@dataclass(frozen=True, slots=True)
class FrequencyFigures:
    """Frequency figures of a stage (Hz; ``None`` where not reached in the searched range).

    Attributes
    ----------
    f_beta, ft, fmax : float or None
        Beta cut-off, transition frequency and maximum frequency of oscillation of the
        device, in Hz.
    bandwidth : float or None
        -3 dB frequency of the terminated voltage gain avs of the stage, in Hz.
    miller : float or None
        Miller estimate of ``bandwidth`` in Hz (common emitter with a hybrid-pi model and no
        external resistors only).
    avs0 : complex
        Low-frequency (0 Hz) terminated voltage gain the bandwidth is measured against.
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

    @property
    def miller_error(self) -> float | None:
        """Relative error of the Miller estimate, (miller - bandwidth) / bandwidth."""
        if self.miller is None or self.bandwidth is None:
            return None
        return self.miller / self.bandwidth - 1.0

    def as_dict(self) -> dict:
        """The scalar figures (Hz) as a dict, for output layers."""
        return {"f_beta": self.f_beta, "ft": self.ft, "fmax": self.fmax, "bandwidth": self.bandwidth,
                "bandwidth_miller": self.miller, "miller_error": self.miller_error,
                "f_start": self.f_range[0], "f_stop": self.f_range[1]}


def crossing(fn: Callable[[np.ndarray], np.ndarray], level: float, f_lo: float, f_hi: float,
             points: int = GRID_POINTS) -> float | None:
    """First frequency in [f_lo, f_hi] where ``fn`` falls from above ``level`` to it or below.

    Parameters
    ----------
    fn : callable
        Vectorised: an array of frequencies (Hz) -> an array of real values.  NaN counts
        as "not below the level".
    level : float
        The level.
    f_lo, f_hi : float
        Search range in Hz, 0 < f_lo < f_hi.
    points : int
        Points of the coarse logarithmic grid.

    Returns
    -------
    float or None
        The frequency in Hz (interpolated linearly in log f within the last refined
        interval), or None when ``fn`` is not above the level at ``f_lo`` or does not
        reach it by ``f_hi``.
    """
    if not (0 < f_lo < f_hi) or not (math.isfinite(f_lo) and math.isfinite(f_hi)):
        raise InputError(f"range: expected 0 < start < stop, got {f_lo:g} Hz and {f_hi:g} Hz")

    def first_below(grid):
        with np.errstate(invalid="ignore"):
            below = np.asarray(fn(grid), dtype=float) <= level
        idx = np.flatnonzero(below)
        return None if idx.size == 0 else int(idx[0])

    grid = np.geomspace(f_lo, f_hi, points)
    i = first_below(grid)
    if i is None or i == 0:
        return None
    a, b = grid[i - 1], grid[i]
    for _ in range(_REFINE_ROUNDS):
        sub = np.geomspace(a, b, _REFINE_POINTS)
        j = first_below(sub)
        if j is None or j == 0:  # not monotonic inside the interval: keep what we have
            break
        a, b = sub[j - 1], sub[j]
    ya, yb = (float(v) for v in fn(np.array([a, b])))
    if not (math.isfinite(ya) and math.isfinite(yb)) or ya == yb:
        return float(math.sqrt(a * b))
    t = min(max((ya - level) / (ya - yb), 0.0), 1.0)
    return float(math.exp(math.log(a) + t * (math.log(b) - math.log(a))))


def miller_bandwidth(model, rs: float, rl: float) -> float | None:
    """Miller estimate of the CE (CS) -3 dB frequency in Hz (module docstring).

    Parameters
    ----------
    model : device model
        Its :meth:`miller_parts` give gm, the input shunt resistance (r_pi; infinite for a
        FET), the series input resistance (rb; rg), the input and feedback capacitances
        (C_pi, C_mu; Cgs, Cgd) and ro.
    rs : float
        Source resistance in ohm (the real part of a complex source impedance).
    rl : float
        Load resistance in ohm (``math.inf`` for an open load).

    Returns
    -------
    float or None
        None when the model has no capacitance.
    """
    p = model.miller_parts()
    rl_par = _parallel(p["ro"], rl)
    c_in = p["c_in"] + p["c_fb"] * (1.0 + p["gm"] * rl_par)
    r = _parallel(rs + p["r_series"], p["r_shunt"])
    if c_in <= 0 or r <= 0 or not math.isfinite(c_in * r):
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
    """-3 dB frequency (Hz, or None) of the terminated |avs| of ``stage``, and avs at 0 Hz.

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

    def avs(f):
        return terminate_arrays(stage.two_port(f, "abcd").data, zs, zl)["avs"]

    avs0 = complex(avs(np.array([0.0]))[0])
    bw = crossing(lambda f: np.abs(avs(f)), abs(avs0) / math.sqrt(2), f_start, f_stop, points)
    return bw, avs0


def frequency_figures(stage: Stage, f_start: float, f_stop: float, zs=50.0, zl=1e3,
                      points: int = GRID_POINTS) -> FrequencyFigures:
    """Frequency figures of ``stage`` between ``zs`` and ``zl``, searched in [f_start, f_stop].

    Parameters
    ----------
    stage : Stage
        The stage (model, configuration, external resistors).
    f_start, f_stop : float
        Search range in Hz, 0 < f_start < f_stop.
    zs, zl : complex
        Source and load impedances in ohm (``math.inf`` for an open load).
    points : int
        Points of the coarse logarithmic grid (also the grid of ``freq``, ``h21``, ``u_db``).
    """
    if not (0 < f_start < f_stop):
        raise InputError(f"start: expected 0 < start < stop, got {f_start:g} Hz and {f_stop:g} Hz")
    bare = Stage(stage.model)  # the first configuration: common emitter (source)

    def h21(f):
        return bare.two_port(f, "h").data[:, 1, 0]

    def u_db(f):
        return stability_arrays(bare.two_port(f, "s").data)["u_db"]

    try:
        h0 = float(abs(h21(np.array([0.0]))[0]))
    except SingularParameterError:  # no input conductance at 0 Hz (a FET): |h21| is unbounded there
        h0 = None
    f_beta = None if h0 is None else crossing(lambda f: np.abs(h21(f)), h0 / math.sqrt(2), f_start, f_stop,
                                              points)
    ft = crossing(lambda f: np.abs(h21(f)), 1.0, f_start, f_stop, points)
    fmax = crossing(u_db, 0.0, f_start, f_stop, points)
    bw, avs0 = bandwidth(stage, f_start, f_stop, zs, zl, points)
    miller = None
    if stage.config == stage.model.configs[0] and not stage.rdeg and stage.rfb is None:
        zl_c = complex(zl)
        miller = miller_bandwidth(stage.model, complex(zs).real,
                                  math.inf if math.isinf(zl_c.real) else zl_c.real)
    grid = np.geomspace(f_start, f_stop, points)
    return FrequencyFigures(f_beta=f_beta, ft=ft, fmax=fmax, bandwidth=bw, miller=miller,
                            avs0=avs0, h21_0=h0, f_range=(float(f_start), float(f_stop)),
                            freq=grid, h21=h21(grid), u_db=u_db(grid))

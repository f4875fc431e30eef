r"""Spread of a stage's results over datasheet limits, temperature and resistor tolerance.

Each sample draws

* the current gain at the reference temperature (300 K): uniform between ``beta_min`` and
  ``beta_max``, or triangular with the mode at ``beta_typ`` when one is given;
* the junction temperature: uniform between ``temp_min`` and ``temp_max``;
* a factor for every resistor (those of the bias network and the stage's ``rdeg`` and
  ``rfb``), each independently uniform in [1 - tol, 1 + tol].  Uniform within the
  tolerance band is common practice, no source: it covers the whole band with no
  assumption about how a batch of parts is sorted.

and then recomputes, for all samples at once: beta and VBE(on) at the temperature
(:mod:`devmodels.temperature`), the operating point (:func:`devmodels.dcbias.solve_arrays`,
when a network is given; otherwise IC and VCE are fixed), the hybrid-pi model (relations of
:mod:`devmodels.models`), the stage's Y parameters at one frequency, and the terminated
analysis (:func:`devmodels.analysis.terminate_arrays` and ``stability_arrays``).

The model is made by the relations of :func:`devmodels.models.hybrid_pi_values` on arrays
of samples, and the stage's Y parameters come from the stage's own netlist
(:meth:`devmodels.stage.Stage.indefinite_block`) with the samples as the points: the same
description and engine as a frequency sweep.  The tests check it against the scalar
pipeline sample by sample.

Samples are processed in chunks of :data:`CHUNK` and summarised as they stream, so the
memory does not grow with the sample count: minimum and maximum are exact, the percentiles
come from :class:`devmodels.worstcase.StreamingSummary` (a histogram on an asinh grid of
relative bin width 1e-4; the bound of each percentile's error is reported in
:attr:`SpreadResult.stats_accuracy`).  Per-sample values are kept only when asked
(``keep_values``; by default up to :data:`KEEP_VALUES_MAX` samples, 8 bytes per sample per
result), and then the percentiles are exact (numpy's 'linear' method).
A sample whose operating point is not in the forward-active region (or whose C_pi would
be negative) has no small-signal results: they are NaN there and the counts are reported.

**Worst case and yield.**  Beside the Monte Carlo percentiles, every result carries its
extremes over the box of limits (:func:`devmodels.worstcase.worst_case`: ``worst_min``,
``worst_max``, the limit settings that reach them and the method).  Specifications
(``av>=40``, :func:`devmodels.worstcase.parse_spec`) are counted on every sample as it
streams; the yield is the fraction passing all of them with its 95 % Wilson interval
(:func:`devmodels.worstcase.yield_fraction`).

**FETs.**  :class:`FetSpreadSetup` holds a FET at a fixed bias point (ID, VDS; the library
has no FET bias network yet) and :class:`FetSpreadRanges` the datasheet limits: IDSS and
VP of a JFET, ``kn`` or the overdrive ``vov`` of a MOSFET (the model has no threshold
voltage), and ``lambda``, each sampled uniformly, plus the tolerance of ``rdeg`` and
``rfb``.  The element values follow the square laws of :mod:`devmodels.fetbias`; the
model is a :class:`devmodels.fet.FetModel` whose elements are arrays of samples, and the
results are the small-signal ones.  :func:`run_spread` asks the setup object for its
limits, draws, evaluation, corners and worst case: which device it is, is decided once,
by the class of the setup.
"""

from __future__ import annotations

import math
import os
import threading
from collections import deque
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass, field
from typing import Callable

import numpy as np

from .bias import DEFAULT_VCE_SAT
from .configs import config_y
from .constants import BJT_CONFIGS, FET_CONFIGS
from .exceptions import InputError
from .dcbias import REGIONS, BiasNetwork, rating_warnings, solve_arrays
from .models import HybridPi, hybrid_pi_values
from .stage import Stage
from .temperature import BETA_TC_DEFAULT, T_REF, VBE_DEFAULT, VBE_TC_DEFAULT, beta_at, vbe_at

__all__ = ["CHUNK", "RESULTS", "FET_RESULTS", "QUANTILES", "RESULT_KEYS", "KEEP_VALUES_MAX", "SpreadSetup",
           "SpreadRanges", "FetSpreadSetup", "FetSpreadRanges", "SpreadResult", "evaluate", "run_spread"]

#: Samples per chunk (bounds the working memory; part of what a seed reproduces). Measured on
#: 1e6 samples: 16384 gives 1.6e6 samples/s, 32768 1.4e6, 4096 1.2e6.
CHUNK = 16384
#: Threads that evaluate chunks (results do not depend on it).
WORKERS = max(1, min(4, os.cpu_count() or 1))
#: Results reported for each sample (magnitudes, except gt_db in dB and k).
RESULTS: tuple[str, ...] = ("av", "avs", "ai", "zin", "zout", "gt_db", "k", "ic", "vce", "power")
#: Results of a FET spread (magnitudes, except gt_db in dB and k; gm in S, ro in ohm).
FET_RESULTS: tuple[str, ...] = ("av", "avs", "ai", "zin", "zout", "gt_db", "k", "gm", "ro")
#: Statistics reported: name -> percentile.
QUANTILES: dict[str, float] = {"min": 0.0, "p5": 5.0, "p50": 50.0, "p95": 95.0, "max": 100.0}
#: Keys of each result's object in :meth:`SpreadResult.as_dict` (the interface's names).
RESULT_KEYS: tuple[str, ...] = ("min", "p5", "p50", "p95", "max", "worst_min", "worst_max", "worst_min_at",
                                "worst_max_at", "method")
#: Default of ``keep_values``: per-sample values are kept up to this many samples
#: (10 results * 8 bytes * 1e6 = 80 MB).
KEEP_VALUES_MAX = 1_000_000



@dataclass(frozen=True, slots=True)
class SpreadSetup:
    """Everything that does not vary from sample to sample (SI units).

    Parameters
    ----------
    config : {'ce', 'cb', 'cc'}
        Stage configuration.
    freq : float
        Frequency of the analysis in Hz.
    rs, rl : float or complex
        Source and load impedances in ohm, real part >= 0 (``math.inf`` for an open load).
    network : BiasNetwork or None
        The bias network; ``None`` to hold IC and VCE fixed at ``ic``, ``vce``.
    ic, vce : float or None
        Fixed bias point (magnitudes, A and V) when there is no network.
    device : {'npn', 'pnp'}
    vbe : float
        VBE(on) at ``t_ref`` in V.
    vbe_tc : float
        VBE(on) temperature coefficient, V/K.
    beta_tc : float
        Fractional beta temperature coefficient per K.
    t_ref : float
        Reference temperature of the beta limits and VBE(on), K.
    vce_sat : float
        Saturation threshold, V.
    va, ft : float or None
        Early voltage (V) and transition frequency (Hz); ``None`` for none.
    cmu, rb, rcx, rex : float
        C_mu (F) and the ohmic resistances (ohm).
    rmu : float or None
        r_mu in ohm; ``None`` for none.
    rdeg, rfb : float or None
        External degeneration and collector-base feedback resistors (ohm), toleranced too.
    z0 : (float, float)
        S reference resistances for K, ohm.
    pmax, vceo : float or None
        Ratings (W, V) checked against the worst sample.
    """

    config: str = "ce"
    freq: float = 1e3
    rs: complex = 50.0
    rl: complex = 1e3
    network: BiasNetwork | None = None
    ic: float | None = None
    vce: float | None = None
    device: str = "npn"
    vbe: float = VBE_DEFAULT
    vbe_tc: float = VBE_TC_DEFAULT
    beta_tc: float = BETA_TC_DEFAULT
    t_ref: float = T_REF
    vce_sat: float = DEFAULT_VCE_SAT
    va: float | None = None
    ft: float | None = None
    cmu: float = 0.0
    rb: float = 0.0
    rcx: float = 0.0
    rex: float = 0.0
    rmu: float | None = None
    rdeg: float | None = None
    rfb: float | None = None
    z0: tuple[float, float] = (50.0, 50.0)
    pmax: float | None = None
    vceo: float | None = None

    def __post_init__(self) -> None:
        if self.config not in BJT_CONFIGS:
            raise InputError(f"config: the spread analysis takes ce, cb or cc, got {self.config!r}")
        if self.network is None:
            for name in ("ic", "vce"):
                v = getattr(self, name)
                if v is None or not (math.isfinite(v) and v > 0):
                    raise InputError(f"{name}: a positive value (or a bias network) is required, got {v!r}")
            if self.vce < self.vce_sat:
                raise InputError(f"vce: {self.vce:g} V is below the saturation threshold {self.vce_sat:g} V")
        if not (math.isfinite(self.freq) and self.freq >= 0):
            raise InputError(f"freq: expected a frequency >= 0 Hz, got {self.freq:g}")
        _check_terminations(self)

    @property
    def resistors(self) -> dict[str, float]:
        """Nominal values of every toleranced resistor, ohm (network first, then rdeg, rfb)."""
        out = dict(self.network.resistors) if self.network is not None else {}
        return out | _stage_resistors(self)

    # --- what run_spread asks of a setup (the FET setup answers the same questions) -------------
    def describe(self, ranges: "SpreadRanges") -> dict:
        """What a report needs to say about this spread: the bias in words (``bias``), the
        bias for JSON (``bias_json``: ``network``) and the limits (``ranges``, ``limits_text``)."""
        from .units import format_si

        bias = (f"{self.network.kind} bias" if self.network is not None else
                f"IC = {format_si(self.ic, 'A')}, VCE = {format_si(self.vce, 'V')}")
        r = ranges
        return {"bias": bias, "bias_json": {"network": None if self.network is None else self.network.kind},
                "ranges": {"beta_min": r.beta_min, "beta_max": r.beta_max, "beta_typ": r.beta_typ,
                           "temp_min": r.temp_min, "temp_max": r.temp_max, "tol": r.tol * 100},
                "limits_text": (f"beta {r.beta_min:g}..{r.beta_max:g} at {self.t_ref:.2f} K "
                                f"({'uniform' if r.beta_typ is None else f'triangular, typ {r.beta_typ:g}'}), "
                                f"T {r.temp_min:.2f}..{r.temp_max:.2f} K, resistors ±{r.tol * 100:g} % (uniform)")}

    @property
    def results(self) -> tuple[str, ...]:
        """The results of this spread: :data:`RESULTS`."""
        return RESULTS

    def limits(self, ranges: "SpreadRanges") -> dict[str, tuple[float, float]]:
        """The box of limits (:func:`devmodels.worstcase.box_limits`): beta, temp, resistor factors.

        Parameters
        ----------
        ranges : SpreadRanges
        """
        from .worstcase import box_limits

        return box_limits(self, ranges)

    def evaluate_points(self, points: dict[str, np.ndarray]) -> dict:
        """:func:`evaluate` at points given as one array per limit (keys of :meth:`limits`).

        Parameters
        ----------
        points : dict of str -> ndarray (N,)
            ``beta`` (at ``t_ref``), ``temp`` (K) and resistor multipliers.
        """
        factors = {k: v for k, v in points.items() if k not in ("beta", "temp")}
        return evaluate(self, points["beta"], points["temp"], factors)

    def _check_ranges(self, ranges) -> None:
        if not isinstance(ranges, SpreadRanges):
            raise InputError(f"ranges: a bipolar spread takes SpreadRanges, got {type(ranges).__name__}")

    def _draw(self, rng: np.random.Generator, ranges: "SpreadRanges", n: int):
        return _draw(rng, ranges, list(self.resistors) if ranges.tol > 0 else [], n)

    def _evaluate_draw(self, draw) -> dict:
        return evaluate(self, *draw)

    def _corners(self, ranges: "SpreadRanges") -> dict:
        return _corners(self, ranges, list(self.resistors) if ranges.tol > 0 else [])

    def _worst_case(self, ranges: "SpreadRanges") -> dict:
        from .worstcase import worst_case

        return worst_case(self, ranges)

    #: Region names of the codes of ``evaluate(...)["region"]`` (code 3, C_pi < 0, is counted apart).
    _region_names = REGIONS
    #: Results whose largest sample is checked against the ratings.
    _track_max = ("power", "vce")

    def _warnings(self, n: int, counts: np.ndarray, maxima: dict) -> list[str]:
        warnings = []
        if counts[1] or counts[2]:
            warnings.append(f"network: {counts[1]} of {n} samples are in saturation and {counts[2]} in cutoff; "
                            "they have no small-signal results and are left out of the statistics")
        if counts[3]:
            warnings.append(f"ft: at {counts[3]} of {n} samples fT is too high for cmu at that IC (C_pi < 0); "
                            "they are left out of the statistics")
        vcc = abs(self.network.vcc) if self.network is not None else 0.0
        return warnings + rating_warnings(maxima["power"], maxima["vce"], vcc, pmax=self.pmax, vceo=self.vceo,
                                          where=" at the worst sample")


def _check_terminations(setup) -> None:
    """Refuse source and load impedances with a negative real part, and negative rdeg / rfb."""
    for name in ("rs", "rl"):
        z = getattr(setup, name)
        if isinstance(z, bool) or not isinstance(z, (int, float, complex, np.number)):
            raise InputError(f"{name}: expected an impedance in ohm, got {z!r}")
        z = complex(z)
        open_load = name == "rl" and math.isinf(z.real) and z.real > 0 and z.imag == 0
        if not open_load and not (math.isfinite(z.real) and math.isfinite(z.imag) and z.real >= 0):
            raise InputError(f"{name}: expected an impedance with a real part >= 0 ohm, got {z}")
    for name in ("rdeg", "rfb"):
        v = getattr(setup, name)
        if v is not None and not (math.isfinite(v) and v >= 0):
            raise InputError(f"{name}: expected a resistance >= 0 ohm, got {v:g}")


def _stage_resistors(setup) -> dict[str, float]:
    """The stage's own toleranced resistors (``rdeg``, ``rfb``) that are present."""
    return {name: getattr(setup, name) for name in ("rdeg", "rfb") if getattr(setup, name)}


@dataclass(frozen=True, slots=True)
class SpreadRanges:
    """The limits sampled over.

    Parameters
    ----------
    beta_min, beta_max : float
        Current-gain limits at the reference temperature.
    temp_min, temp_max : float
        Temperature limits in K.
    tol : float
        Resistor tolerance as a fraction (0.05 for 5 %).
    beta_typ : float or None
        Typical beta: the mode of a triangular distribution (``None``: uniform).
    samples : int
        Number of samples.
    seed : int or None
        Seed of the random generator (``None``: a fresh one, reported in the result).
    """

    beta_min: float
    beta_max: float
    temp_min: float = T_REF
    temp_max: float = T_REF
    tol: float = 0.0
    beta_typ: float | None = None
    samples: int = 10000
    seed: int | None = None

    def __post_init__(self) -> None:
        def check(name, v, what, low=0.0, strict=True):
            if not (isinstance(v, (int, float)) and math.isfinite(v)) or (v <= low if strict else v < low):
                raise InputError(f"{name}: expected {what}, got {v!r}")
        check("beta_min", self.beta_min, "a positive current gain")
        check("beta_max", self.beta_max, "a positive current gain")
        if self.beta_min > self.beta_max:
            raise InputError(f"beta_min: {self.beta_min:g} is above beta_max = {self.beta_max:g}")
        if self.beta_typ is not None and not (self.beta_min <= self.beta_typ <= self.beta_max):
            raise InputError(f"beta_typ: {self.beta_typ:g} is outside beta_min..beta_max = "
                             f"{self.beta_min:g}..{self.beta_max:g}")
        check("temp_min", self.temp_min, "a temperature above 0 K")
        check("temp_max", self.temp_max, "a temperature above 0 K")
        if self.temp_min > self.temp_max:
            raise InputError(f"temp_min: {self.temp_min:g} K is above temp_max = {self.temp_max:g} K")
        if not (isinstance(self.tol, (int, float)) and math.isfinite(self.tol)) or self.tol < 0:
            raise InputError(f"tol: expected a resistor tolerance >= 0 %, got {self.tol * 100:g} %")
        if self.tol >= 1:
            raise InputError(f"tol: expected a resistor tolerance below 100 %, got {self.tol * 100:g} %")
        if isinstance(self.samples, bool) or not isinstance(self.samples, (int, np.integer)) or self.samples < 1:
            raise InputError(f"samples: expected a whole number of samples >= 1, got {self.samples!r}")
        if self.seed is not None and (isinstance(self.seed, bool) or not isinstance(self.seed, (int, np.integer))
                                      or self.seed < 0):
            raise InputError(f"seed: expected a whole number >= 0, got {self.seed!r}")


def _check_limit_pair(name: str, lo, hi, what: str, optional: bool = True) -> None:
    if lo is None and hi is None and optional:
        return
    for n, v in ((f"{name}_min", lo), (f"{name}_max", hi)):
        if isinstance(v, bool) or not isinstance(v, (int, float, np.number)) or not math.isfinite(v) or v <= 0:
            raise InputError(f"{n}: expected {what}, got {v!r}")
    if lo > hi:
        raise InputError(f"{name}_min: {lo:g} is above {name}_max = {hi:g}")


@dataclass(frozen=True, slots=True)
class FetSpreadRanges:
    """Datasheet limits of a FET, sampled uniformly and independently (SI units).

    A JFET takes ``idss`` and ``vp``; a MOSFET takes ``kn`` or ``vov`` (not both).  A limit
    pair with ``min == max`` is a fixed value.

    Parameters
    ----------
    idss_min, idss_max : float or None
        JFET drain current at VGS = 0, A.
    vp_min, vp_max : float or None
        JFET pinch-off voltage magnitudes, V (the sign of a datasheet's VGS(off) is dropped).
    kn_min, kn_max : float or None
        MOSFET transconductance parameter mu Cox W/L, A/V^2 (ID = (kn/2) Vov^2).
    vov_min, vov_max : float or None
        MOSFET overdrive |VGS| - |Vt| at the bias current, V.
    lambda_min, lambda_max : float or None
        Channel-length modulation, 1/V (``None``: none, ro infinite).
    tol : float
        Tolerance of ``rdeg`` and ``rfb`` as a fraction (0.05 for 5 %).
    samples : int
        Number of samples.
    seed : int or None
        Seed of the random generator (``None``: a fresh one, reported in the result).

    Notes
    -----
    Each chunk draws one uniform array per limit, in the order of
    :meth:`FetSpreadSetup.limits` (``idss``, ``vp`` or ``kn`` / ``vov``, ``lambda``, then
    the resistor multipliers); a limit with ``min == max`` draws nothing.
    """

    idss_min: float | None = None
    idss_max: float | None = None
    vp_min: float | None = None
    vp_max: float | None = None
    kn_min: float | None = None
    kn_max: float | None = None
    vov_min: float | None = None
    vov_max: float | None = None
    lambda_min: float | None = None
    lambda_max: float | None = None
    tol: float = 0.0
    samples: int = 10000
    seed: int | None = None

    def __post_init__(self) -> None:
        for name in ("vp_min", "vp_max"):
            v = getattr(self, name)
            if isinstance(v, (int, float, np.number)) and not isinstance(v, bool) and v < 0:
                object.__setattr__(self, name, -v)
        if self.vp_min is not None and self.vp_max is not None and self.vp_min > self.vp_max:
            lo, hi = self.vp_max, self.vp_min  # -0.5 V .. -3 V as magnitudes: 0.5 .. 3
            object.__setattr__(self, "vp_min", lo)
            object.__setattr__(self, "vp_max", hi)
        units = {"idss": "a drain current > 0 A", "vp": "a nonzero pinch-off voltage in V",
                 "kn": "a transconductance parameter > 0 A/V^2", "vov": "an overdrive voltage > 0 V",
                 "lambda": "a channel-length modulation > 0 1/V"}
        for name, what in units.items():
            lo, hi = getattr(self, f"{name}_min"), getattr(self, f"{name}_max")
            if (lo is None) != (hi is None):
                missing = f"{name}_max" if hi is None else f"{name}_min"
                raise InputError(f"{missing}: missing; give both {name}_min and {name}_max (equal for a fixed value)")
            _check_limit_pair(name, lo, hi, what)
        if not (isinstance(self.tol, (int, float)) and math.isfinite(self.tol)) or not 0 <= self.tol < 1:
            raise InputError(f"tol: expected a resistor tolerance from 0 % to below 100 %, got {self.tol!r}")
        if isinstance(self.samples, bool) or not isinstance(self.samples, (int, np.integer)) or self.samples < 1:
            raise InputError(f"samples: expected a whole number of samples >= 1, got {self.samples!r}")
        if self.seed is not None and (isinstance(self.seed, bool) or not isinstance(self.seed, (int, np.integer))
                                      or self.seed < 0):
            raise InputError(f"seed: expected a whole number >= 0, got {self.seed!r}")


@dataclass(frozen=True, slots=True)
class FetSpreadSetup:
    """A FET stage at a fixed bias point, spread over :class:`FetSpreadRanges` (SI units).

    The library has no FET bias network yet, so ID and VDS are held fixed and the results
    are the small-signal ones.  Element values (:mod:`devmodels.fetbias`):
    JFET gm = (2/|VP|) sqrt(ID IDSS), Vov = |VP| sqrt(ID/IDSS); MOSFET gm = sqrt(2 kn ID)
    (or 2 ID / Vov), gmb = gamma gm / (2 sqrt(2 phi_F + VSB)); both ro = 1/(lambda ID).

    Parameters
    ----------
    config : {'cs', 'cg', 'cd'}
        Stage configuration.
    freq : float
        Frequency of the analysis in Hz.
    rs, rl : float or complex
        Source and load impedances in ohm, real part >= 0 (``math.inf`` for an open load).
    device : {'nmos', 'pmos', 'njfet', 'pjfet'}
    id, vds : float
        Drain current (A) and drain-source voltage (V), magnitudes.  VDS must be at least
        the largest overdrive within the limits (saturation), and for a JFET ID at most the
        smallest IDSS.
    gamma : float or None
        MOSFET body-effect coefficient in V^0.5 (``None``: no body effect).
    vsb, two_phi_f : float
        MOSFET source-body voltage and surface potential 2 phi_F, V.
    cgs, cgd, csb, cdb : float
        Capacitances in F.
    rg, rdx, rsx : float
        Gate, drain and source series resistances in ohm.
    rdeg, rfb : float or None
        External source degeneration and drain-gate feedback resistors (ohm), toleranced.
    z0 : (float, float)
        S reference resistances for K, ohm.
    """

    config: str = "cs"
    freq: float = 1e3
    rs: complex = 50.0
    rl: complex = 1e3
    device: str = "njfet"
    id: float = 1e-3
    vds: float = 5.0
    gamma: float | None = None
    vsb: float = 0.0
    two_phi_f: float = 0.7
    cgs: float = 0.0
    cgd: float = 0.0
    csb: float = 0.0
    cdb: float = 0.0
    rg: float = 0.0
    rdx: float = 0.0
    rsx: float = 0.0
    rdeg: float | None = None
    rfb: float | None = None
    z0: tuple[float, float] = (50.0, 50.0)

    def __post_init__(self) -> None:
        from .fetbias import FET_DEVICES

        if self.config not in FET_CONFIGS:
            raise InputError(f"config: a FET spread takes {', '.join(FET_CONFIGS)}, got {self.config!r}")
        if self.device not in FET_DEVICES:
            raise InputError(f"device: expected one of {', '.join(FET_DEVICES)}, got {self.device!r}")
        for name in ("id", "vds", "two_phi_f"):
            v = getattr(self, name)
            if isinstance(v, bool) or not isinstance(v, (int, float, np.number)) or not (math.isfinite(v) and v > 0):
                raise InputError(f"{name}: expected a positive value (a magnitude), got {v!r}")
        for name in ("vsb", "cgs", "cgd", "csb", "cdb", "rg", "rdx", "rsx"):
            v = getattr(self, name)
            if isinstance(v, bool) or not isinstance(v, (int, float, np.number)) or not (math.isfinite(v) and v >= 0):
                raise InputError(f"{name}: expected a value >= 0, got {v!r}")
        if self.gamma is not None and not (math.isfinite(self.gamma) and self.gamma >= 0):
            raise InputError(f"gamma: expected a body-effect coefficient >= 0 V^0.5, got {self.gamma!r}")
        if not (math.isfinite(self.freq) and self.freq >= 0):
            raise InputError(f"freq: expected a frequency >= 0 Hz, got {self.freq:g}")
        _check_terminations(self)

    @property
    def is_jfet(self) -> bool:
        """True for a JFET (njfet, pjfet)."""
        return self.device.endswith("jfet")

    @property
    def resistors(self) -> dict[str, float]:
        """Nominal values of the toleranced resistors, ohm (``rdeg``, ``rfb`` when present)."""
        return _stage_resistors(self)

    def describe(self, ranges: "FetSpreadRanges") -> dict:
        """As :meth:`SpreadSetup.describe`: the fixed ID/VDS and the FET limits of ``ranges``."""
        lim = self.limits(ranges)
        rng: dict = {}
        for name in ("idss", "vp", "kn", "vov", "lambda"):
            if name in lim:
                rng[f"{name}_min"], rng[f"{name}_max"] = lim[name]
        rng["tol"] = ranges.tol * 100
        from .units import format_si

        unit = {"idss": "A", "vp": "V", "kn": "A/V²", "vov": "V", "lambda": "1/V"}

        def val(n, v):
            return f"{v:g} 1/V" if n == "lambda" else format_si(v, unit[n])

        parts = [f"{n} {val(n, lo)}" + ("" if lo == hi else f"..{val(n, hi)}") for n, (lo, hi) in lim.items()
                 if n in unit]
        text = ", ".join(parts) + " (uniform)"
        if ranges.tol > 0 and self.resistors:
            text += f", {', '.join(self.resistors)} ±{ranges.tol * 100:g} % (uniform)"
        from .units import format_si

        return {"bias": f"{self.device}, ID = {format_si(self.id, 'A')}, VDS = {format_si(self.vds, 'V')}",
                "bias_json": {"network": None, "id": self.id, "vds": self.vds}, "ranges": rng,
                "limits_text": text}

    @property
    def results(self) -> tuple[str, ...]:
        """The results of this spread: :data:`FET_RESULTS`."""
        return FET_RESULTS

    def limits(self, ranges: FetSpreadRanges) -> dict[str, tuple[float, float]]:
        """The box of limits: ``idss``, ``vp`` (JFET) or ``kn`` / ``vov`` (MOSFET), ``lambda``
        when given, and a multiplier ``(1 - tol, 1 + tol)`` per toleranced resistor.

        Parameters
        ----------
        ranges : FetSpreadRanges
        """
        self._check_ranges(ranges)
        names = ("idss", "vp") if self.is_jfet else (("kn",) if ranges.kn_min is not None else ("vov",))
        if ranges.lambda_min is not None:
            names += ("lambda",)
        out = {n: (float(getattr(ranges, f"{n}_min")), float(getattr(ranges, f"{n}_max"))) for n in names}
        if ranges.tol > 0:
            out |= {n: (1.0 - ranges.tol, 1.0 + ranges.tol) for n in self.resistors}
        return out

    def evaluate_points(self, points: dict[str, np.ndarray]) -> dict:
        """Every result at points given as one array per limit (keys of :meth:`limits`).

        Parameters
        ----------
        points : dict of str -> ndarray (N,)
            FET parameters (A, V, A/V^2, 1/V) and resistor multipliers.

        Returns
        -------
        dict of ndarray (N,)
            :data:`FET_RESULTS` (magnitudes; NaN where a value does not exist, e.g. ro or an
            open impedance) and ``region`` (all 0: every sample is in saturation, checked by
            :meth:`limits` over the whole box).
        """
        from .analysis import stability_arrays_y, terminate_arrays_y
        from .fet import FetModel, fet_values

        n = np.asarray(next(iter(points.values()))).shape[0]
        # the square laws of devmodels.fet.fet_values, on arrays of samples
        law = ({"idss": points["idss"], "vp": points["vp"]} if self.is_jfet else
               {"kn": points["kn"]} if "kn" in points else {"vov": points["vov"]})
        v = fet_values(self.id, lambda_=points.get("lambda"), gamma=None if self.is_jfet else self.gamma,
                       two_phi_f=self.two_phi_f, vsb=self.vsb, **law)
        gm = np.broadcast_to(np.asarray(v["gm"], dtype=float), (n,))
        gmb = v["gmb"] if np.ndim(v["gmb"]) == 0 else np.broadcast_to(v["gmb"], (n,))
        ro = v["ro"]
        model = FetModel(gm=gm, gmb=gmb, ro=ro, cgs=self.cgs, cgd=self.cgd, csb=self.csb, cdb=self.cdb,
                         rg=self.rg, rdx=self.rdx, rsx=self.rsx, device=self.device)
        res = {name: nominal * np.asarray(points.get(name, 1.0), dtype=float)
               for name, nominal in self.resistors.items()}
        stage = Stage(model, self.config, rdeg=res.get("rdeg", 0.0), rfb=res.get("rfb"))
        y = config_y(stage.indefinite_block(2 * math.pi * self.freq, n), self.config)
        term = terminate_arrays_y(y, self.rs, self.rl)
        st = stability_arrays_y(y, self.z0)
        out = {name: np.abs(term[name]) for name in ("av", "avs", "ai", "zin", "zout")}
        out["gt_db"] = np.asarray(term["gt_db"], dtype=float)
        out["k"] = np.asarray(st["k"], dtype=float)
        out["gm"] = np.array(gm)
        out["ro"] = np.full(n, np.nan) if np.ndim(ro) == 0 else np.asarray(ro, dtype=float)
        for name in FET_RESULTS:
            out[name] = np.where(np.isfinite(out[name]), out[name], np.nan)
        out["region"] = np.zeros(n, dtype=np.int8)
        return out

    def _check_ranges(self, ranges) -> None:
        if type(ranges) is not self.ranges_class:
            raise InputError(f"ranges: this spread takes {self.ranges_class.__name__}, got {type(ranges).__name__}")
        r = ranges
        if self.is_jfet:
            for name in ("idss", "vp"):
                if getattr(r, f"{name}_min") is None:
                    raise InputError(f"{name}_min: missing; a JFET spread needs idss_min/idss_max and vp_min/vp_max")
            if r.kn_min is not None or r.vov_min is not None:
                raise InputError("kn_min: a JFET is described by idss and vp, not kn or vov")
            if self.id > r.idss_min:
                raise InputError(f"id: {self.id:g} A is above idss_min = {r.idss_min:g} A (the gate junction "
                                 "would be forward biased for some parts)")
            vov_max = r.vp_max * math.sqrt(self.id / r.idss_min)
        else:
            if r.idss_min is not None or r.vp_min is not None:
                raise InputError("idss_min: a MOSFET is described by kn or vov, not idss and vp")
            if (r.kn_min is None) == (r.vov_min is None):
                raise InputError("kn_min: give the limits of kn or of vov for a MOSFET spread (one of them)")
            vov_max = r.vov_max if r.vov_min is not None else math.sqrt(2 * self.id / r.kn_min)
        if self.vds < vov_max:
            raise InputError(f"vds: {self.vds:g} V is below the largest overdrive within the limits, "
                             f"{vov_max:g} V (triode region for some parts)")

    def _draw(self, rng: np.random.Generator, ranges: FetSpreadRanges, n: int):
        return {name: (np.full(n, lo) if lo == hi else rng.uniform(lo, hi, n))
                for name, (lo, hi) in self.limits(ranges).items()}

    def _evaluate_draw(self, draw) -> dict:
        return self.evaluate_points(draw)

    def _corners(self, ranges: FetSpreadRanges) -> dict:
        lim = self.limits(ranges)
        pts = {n: np.array([lo, hi, 0.5 * (lo + hi)]) for n, (lo, hi) in lim.items()}
        r = self.evaluate_points(pts)
        out = {}
        for i, label in enumerate(("min", "max", "nominal")):
            d = {n: float(v[i]) for n, v in pts.items() if n not in self.resistors}
            d["tol"] = float(pts[next(iter(self.resistors))][i] - 1.0) if ranges.tol > 0 and self.resistors else 0.0
            for name in FET_RESULTS:
                v = float(r[name][i])
                d[name] = v if math.isfinite(v) else None
            out[label] = d
        return out

    def _worst_case(self, ranges: FetSpreadRanges) -> dict:
        from .worstcase import worst_case

        return worst_case(self, ranges)

    _region_names = ("saturation",)
    #: The ranges this setup takes.
    ranges_class = FetSpreadRanges
    _track_max = ()

    def _warnings(self, n: int, counts: np.ndarray, maxima: dict) -> list[str]:
        return []


@dataclass(frozen=True, slots=True)
class SpreadResult:
    """What :func:`run_spread` returns.

    Attributes
    ----------
    samples : int
        Number of samples drawn.
    seed : int
        Seed that reproduces them (with the same :data:`CHUNK`).
    values : dict of str -> ndarray (samples,), or None
        Per-sample results (magnitudes; gt_db in dB); NaN where a sample has no small-signal
        point (or the value does not exist, e.g. an open impedance).  ``None`` when the
        values were not kept (``keep_values``; by default above :data:`KEEP_VALUES_MAX`
        samples).
    stats : dict of str -> dict or None
        For each result, ``{"min", "p5", "p50", "p95", "max"}`` over the samples where it
        exists (Monte Carlo); ``None`` when it exists for none.  Exact (numpy's 'linear'
        percentiles) when the values were kept, else streaming estimates whose error bounds
        are in ``stats_accuracy``; ``min`` and ``max`` are always exact.
    corners : dict of str -> dict
        ``"min"`` (every parameter at its low limit), ``"max"`` (every one at its high limit)
        and ``"nominal"``: the inputs and the results there (``None`` where they do not
        exist).  Two points of the box, not its worst case (that is ``worst``).
    regions : dict of str -> int
        How many samples fell in each region.
    setup : SpreadSetup or FetSpreadSetup
        What was held fixed.
    ranges : SpreadRanges or FetSpreadRanges
        What was sampled.
    warnings : tuple of str
        Ratings exceeded by any sample, and samples without a small-signal point.
    worst : dict of str -> dict, or None
        For each result, the extremes over the box of limits
        (:func:`devmodels.worstcase.worst_case`): ``worst_min``, ``worst_max``,
        ``worst_min_at``, ``worst_max_at``, ``method``, ``undefined_vertices``; ``None`` when
        not computed (``worst=False``).
    yield_ : dict or None
        With specifications: ``{"fraction", "ci95": [lo, hi], "specs": [texts],
        "worst_case_pass", "most_failed", "passed", "failed_by"}`` (``failed_by``: samples
        failing each specification); ``None`` without.  The interface's JSON key is ``yield``.
        ``worst_case_pass`` is ``None`` when the worst case was not computed (``worst=False``).
    stats_accuracy : dict or None
        ``{"method": "exact" | "streaming", "rel_width": w, "bounds": {result: {stat: bound}}}``:
        the largest absolute error of each statistic (0 for exact ones), in the result's unit
        (:meth:`devmodels.worstcase.StreamingSummary.error_bound`; ``w`` is the nominal
        relative bin width, 1e-4, and a bound is larger where bins had to be merged).
    """

    samples: int
    seed: int
    values: dict | None
    stats: dict
    corners: dict
    regions: dict
    setup: object
    ranges: object
    warnings: tuple[str, ...] = field(default=())
    worst: dict | None = None
    yield_: dict | None = None
    stats_accuracy: dict | None = None

    def as_dict(self) -> dict:
        """A JSON-ready summary with the interface's keys.

        Returns
        -------
        dict
            ``samples``, ``seed``; for each result an object with :data:`RESULT_KEYS`
            (``None`` where a value does not exist); ``yield`` (when specifications were
            given); ``corners``, ``regions``, ``warnings`` and ``stats_accuracy``.
        """
        out: dict = {"samples": self.samples, "seed": self.seed}
        for name, st in self.stats.items():
            entry = dict.fromkeys(RESULT_KEYS)
            if st is not None:
                entry.update(st)
            if self.worst is not None and name in self.worst:
                entry.update({k: self.worst[name][k] for k in RESULT_KEYS[5:]})
            out[name] = entry
        if self.yield_ is not None:
            out["yield"] = {k: self.yield_[k] for k in ("fraction", "ci95", "specs", "worst_case_pass",
                                                        "most_failed")}
        out.update(corners=self.corners, regions=self.regions, warnings=list(self.warnings),
                   stats_accuracy=self.stats_accuracy)
        return out


def evaluate(setup: SpreadSetup, beta_ref, temp, factors: dict[str, np.ndarray] | None = None) -> dict:
    """Every result for arrays of samples (vectorised over the leading axis).

    Parameters
    ----------
    setup : SpreadSetup
        The fixed part.
    beta_ref : ndarray (N,)
        Current gain at ``setup.t_ref``.
    temp : ndarray (N,)
        Temperature in K.
    factors : dict of str -> ndarray (N,)
        Multipliers of the nominal resistors (keys of ``setup.resistors``); missing ones are 1.

    Returns
    -------
    dict of ndarray (N,)
        :data:`RESULTS` (magnitudes, NaN where they do not exist), ``region`` (int8 codes into
        :data:`devmodels.dcbias.REGIONS`; code 3 for a negative C_pi) and ``beta`` used.
    """
    from .analysis import stability_arrays_y, terminate_arrays_y

    beta_ref = np.asarray(beta_ref, dtype=float)
    temp = np.asarray(temp, dtype=float)
    n = np.broadcast_shapes(beta_ref.shape, temp.shape)[0]
    factors = factors or {}
    res = {name: nominal * np.asarray(factors.get(name, 1.0), dtype=float)
           for name, nominal in setup.resistors.items()}
    beta = np.broadcast_to(beta_at(temp, beta_ref, setup.beta_tc, setup.t_ref), (n,))
    vbe = np.broadcast_to(vbe_at(temp, setup.vbe, setup.vbe_tc, setup.t_ref), (n,))
    if setup.network is not None:
        net = {k: res[k] for k in setup.network.resistors}
        op = solve_arrays(setup.network.kind, abs(setup.network.vcc), beta, vbe, vce_sat=setup.vce_sat, **net)
        ic, vce, power, region = op["ic"], op["vce"], op["power"], op["region"].copy()
    else:
        ic = np.full(n, setup.ic)
        vce = np.full(n, setup.vce)
        power = ic * vce
        region = np.zeros(n, dtype=np.int8)
    ic_safe = np.where(region == 0, ic, 1.0)
    # the model relations of devmodels.models, on arrays of samples
    v = hybrid_pi_values(ic_safe, beta, temp, va=setup.va, ft=setup.ft, cmu=setup.cmu)
    c_pi = np.broadcast_to(v["c_pi"], (n,))
    region = np.where((region == 0) & (c_pi < 0), 3, region).astype(np.int8)
    ok = region == 0
    out = {name: np.full(n, np.nan) for name in RESULTS}
    out["ic"], out["vce"], out["power"] = np.array(ic, dtype=float), np.array(vce, dtype=float), np.array(power, dtype=float)
    out["region"] = region
    out["beta"] = np.array(beta, dtype=float)
    if not np.any(ok):
        return out
    every = bool(ok.all())

    def pick(a):  # the samples that have a small-signal point (no copy when all have)
        return a if every or np.ndim(a) == 0 else np.broadcast_to(a, (n,))[ok]

    count = int(ok.sum())
    model = HybridPi(gm=pick(v["gm"]), r_pi=pick(v["r_pi"]),
                     ro=v["ro"] if np.ndim(v["ro"]) == 0 else pick(v["ro"]), c_pi=pick(c_pi),
                     c_mu=setup.cmu, rb=setup.rb, r_mu=math.inf if setup.rmu is None else setup.rmu,
                     rcx=setup.rcx, rex=setup.rex, vt=pick(v["vt"]))
    rfb = res.get("rfb")
    stage = Stage(model, setup.config, rdeg=pick(res.get("rdeg", 0.0)), rfb=None if rfb is None else pick(rfb))
    # the same netlist and engine as a frequency sweep, with the samples as the points
    y = config_y(stage.indefinite_block(2 * math.pi * setup.freq, count), setup.config)
    term = terminate_arrays_y(y, setup.rs, setup.rl)
    st = stability_arrays_y(y, setup.z0)
    sel = slice(None) if every else ok
    for name in ("av", "avs", "ai", "zin", "zout"):
        out[name][sel] = np.abs(term[name])
    out["gt_db"][sel] = term["gt_db"]
    out["k"][sel] = st["k"]
    return out


def _draw(rng: np.random.Generator, ranges: SpreadRanges, names, n: int):
    if ranges.beta_min == ranges.beta_max:
        beta = np.full(n, float(ranges.beta_min))
    elif ranges.beta_typ is not None:
        beta = rng.triangular(ranges.beta_min, ranges.beta_typ, ranges.beta_max, n)
    else:
        beta = rng.uniform(ranges.beta_min, ranges.beta_max, n)
    temp = rng.uniform(ranges.temp_min, ranges.temp_max, n)
    factors = {name: rng.uniform(1 - ranges.tol, 1 + ranges.tol, n) for name in names}
    return beta, temp, factors


def _stats(v: np.ndarray) -> dict | None:
    """Percentiles of the finite values (linear interpolation, as numpy's default), one partition."""
    finite = v[np.isfinite(v)]
    m = finite.size
    if m == 0:
        return None
    pos = np.array(list(QUANTILES.values())) / 100.0 * (m - 1)
    lo = np.floor(pos).astype(int)
    hi = np.minimum(lo + 1, m - 1)
    part = np.partition(finite, np.unique(np.concatenate([lo, hi])))
    q = part[lo] + (pos - lo) * (part[hi] - part[lo])
    return {name: float(x) for name, x in zip(QUANTILES, q)}


def run_spread(setup, ranges, *, chunk: int = CHUNK, workers: int = WORKERS,
               progress: Callable[[int, int], None] | None = None, specs=(), keep_values: bool | None = None,
               exact_stats: bool | None = None, worst: bool = True) -> SpreadResult:
    """Sample the ranges and compute every result (module docstring).

    Parameters
    ----------
    setup : SpreadSetup or FetSpreadSetup
        What is fixed.
    ranges : SpreadRanges or FetSpreadRanges
        What is sampled, how many samples, and the seed (matching ``setup``).
    chunk : int
        Samples per chunk.
    workers : int
        Threads evaluating chunks (the numbers do not depend on it).
    progress : callable(done, total), optional
        Called after each chunk.
    specs : iterable of str or (name, op, value)
        Specifications (:func:`devmodels.worstcase.parse_spec`, e.g. ``"av>=40"``); each
        sample is checked as it streams and the yield is reported.
    keep_values : bool or None
        Keep every per-sample value in ``values`` (8 bytes per sample per result).  ``None``:
        keep them up to :data:`KEEP_VALUES_MAX` samples.
    exact_stats : bool or None
        Percentiles from the kept values (exact) or from the streaming summary.  ``None``:
        exact when the values are kept.  ``True`` needs the values kept.
    worst : bool
        Compute the worst case over the box of limits (a few thousand evaluations).

    Returns
    -------
    SpreadResult
    """
    from .worstcase import StreamingSummary, check_specs, parse_spec, spec_text, worst_case_pass, yield_fraction

    setup._check_ranges(ranges)
    if isinstance(chunk, bool) or not isinstance(chunk, (int, np.integer)) or chunk < 1:
        raise InputError(f"chunk: expected a positive number of samples, got {chunk}")
    results = setup.results
    parsed = []
    for sp in specs:
        if isinstance(sp, str):
            name, op, x = parse_spec(sp, results=results)
        elif isinstance(sp, (tuple, list)) and len(sp) == 3:
            name, op, x = sp
        else:
            raise InputError(f"spec: expected text such as 'av>=40' or (name, op, value), got {sp!r}")
        if name not in results:
            raise InputError(f"spec: {name!r} is not a result; expected one of {', '.join(results)}")
        parsed.append((name, op, float(x)))
    seed = ranges.seed if ranges.seed is not None else int(np.random.SeedSequence().entropy % 2**63)
    rng = np.random.default_rng(seed)
    n = int(ranges.samples)
    keep = n <= KEEP_VALUES_MAX if keep_values is None else bool(keep_values)
    exact = keep if exact_stats is None else bool(exact_stats)
    if exact and not keep:
        raise InputError("exact_stats: exact percentiles need the per-sample values; set keep_values=True")
    values = {name: np.empty(n) for name in results} if keep else None
    summary = None if exact else StreamingSummary(results)
    state = {"counts": np.zeros(4, dtype=np.int64), "passed": 0, "fails": [0] * len(parsed),
             "max": dict.fromkeys(setup._track_max, -math.inf)}
    lock = threading.Lock()

    def work(start, draw):
        r = setup._evaluate_draw(draw)
        m = r["region"].size
        if values is not None:
            for name in results:
                values[name][start:start + m] = r[name]
        chunk_max = {}
        for name in setup._track_max:
            v = r[name][np.isfinite(r[name])]
            chunk_max[name] = float(v.max()) if v.size else -math.inf
        masks = [check_specs(r, [spec])[0] for spec in parsed]  # NaN fails (check_specs' rule)
        fails = [int(m - np.count_nonzero(ok)) for ok in masks]
        passed = m
        if masks:
            passed = int(np.count_nonzero(np.logical_and.reduce(masks)))
        counts = np.bincount(r["region"], minlength=4)
        with lock:  # these counts do not depend on the order in which chunks finish
            state["counts"] += counts[:4]
            state["passed"] += passed
            state["fails"] = [a + b for a, b in zip(state["fails"], fails)]
            for name, v in chunk_max.items():
                state["max"][name] = max(state["max"][name], v)
        return m, ({name: r[name] for name in results} if summary is not None else None)

    # Samples are drawn here, in order (so a seed gives the same numbers with any number of
    # workers); chunks are evaluated by a few threads (numpy releases the GIL in array
    # arithmetic), with at most two chunks per worker in flight to bound the memory.  The
    # streaming summary is fed here too, in chunk order: its grid is set by the first chunk.
    workers = max(1, min(workers, (n + chunk - 1) // chunk))
    done = 0
    with ThreadPoolExecutor(max_workers=workers) as pool:
        pending = deque()
        for start in range(0, n, chunk):
            pending.append(pool.submit(work, start, setup._draw(rng, ranges, min(chunk, n - start))))
            while len(pending) > 2 * workers or (pending and start + chunk >= n):
                m, part = pending.popleft().result()
                if part is not None:
                    summary.update(part)
                done += m
                if progress is not None:
                    progress(done, n)
        if exact:
            stats = dict(zip(results, pool.map(_stats, (values[name] for name in results))))
    if exact:
        accuracy = {"method": "exact", "rel_width": 0.0,
                    "bounds": {r: (None if stats[r] is None else dict.fromkeys(QUANTILES, 0.0)) for r in results}}
    else:
        stats = summary.stats()
        bounds = {}
        for r in results:
            st = stats[r]
            bounds[r] = None if st is None else {q: (0.0 if q in ("min", "max") else summary.error_bound(r, v))
                                                 for q, v in st.items()}
        accuracy = {"method": "streaming", "rel_width": summary.rel_width, "bounds": bounds}
    counts = state["counts"]
    regions = {name: int(counts[i]) for i, name in enumerate(setup._region_names)}
    warnings = setup._warnings(n, counts, state["max"])
    worst_res = setup._worst_case(ranges) if worst else None
    if worst_res is not None:
        warnings += _outside_worst(stats, worst_res)
    yld = None
    if parsed:
        frac, (lo, hi) = yield_fraction(int(state["passed"]), n)
        texts = [spec_text(sp) for sp in parsed]
        k = int(np.argmax(state["fails"]))
        yld = {"fraction": frac, "ci95": [lo, hi], "specs": texts,
               "worst_case_pass": None if worst_res is None else bool(worst_case_pass(worst_res, parsed)),
               "most_failed": texts[k] if state["fails"][k] > 0 else None,
               "passed": int(state["passed"]), "failed_by": dict(zip(texts, state["fails"]))}
    return SpreadResult(samples=n, seed=seed, values=values, stats=stats, corners=setup._corners(ranges),
                        regions=regions, setup=setup, ranges=ranges, warnings=tuple(warnings), worst=worst_res,
                        yield_=yld, stats_accuracy=accuracy)


def _outside_worst(stats: dict, worst: dict) -> list[str]:
    """Sentences for results whose samples reach beyond the worst case found over the box (the
    box search is a heuristic; a sample beyond it shows that it missed an extreme)."""
    out = []
    for name, st in stats.items():
        w = worst.get(name)
        if st is None or w is None or w["worst_min"] is None:
            continue
        lo, hi = w["worst_min"], w["worst_max"]
        if st["min"] < lo - 1e-9 * abs(lo) or st["max"] > hi + 1e-9 * abs(hi):
            out.append(f"worst case: samples of {name} reach {st['min']:.6g} .. {st['max']:.6g}, beyond the "
                       f"extremes found over the box of limits ({lo:.6g} .. {hi:.6g}, method {w['method']}); "
                       "the extreme lies inside the box")
    return out


def _corners(setup: SpreadSetup, ranges: SpreadRanges, names) -> dict:
    beta_nom = ranges.beta_typ if ranges.beta_typ is not None else 0.5 * (ranges.beta_min + ranges.beta_max)
    beta = np.array([ranges.beta_min, ranges.beta_max, beta_nom])
    temp = np.array([ranges.temp_min, ranges.temp_max, 0.5 * (ranges.temp_min + ranges.temp_max)])
    f = np.array([1 - ranges.tol, 1 + ranges.tol, 1.0])
    r = evaluate(setup, beta, temp, {name: f for name in names})
    out = {}
    for i, label in enumerate(("min", "max", "nominal")):
        d = {"beta": float(beta[i]), "temp": float(temp[i]), "tol": float(f[i] - 1.0),
             "region": REGIONS[r["region"][i]] if r["region"][i] < 3 else "active (no model: C_pi < 0)"}
        for name in RESULTS:
            v = float(r[name][i])
            d[name] = v if math.isfinite(v) else None
        out[label] = d
    return out

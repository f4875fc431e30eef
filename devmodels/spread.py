r"""Spread of a stage's results over datasheet limits, temperature and resistor tolerance.

Each sample draws

* the current gain at the reference temperature (300 K): uniform between ``beta_min`` and
  ``beta_max``, or triangular with the mode at ``beta_typ`` when one is given;
* the junction temperature: uniform between ``temp_min`` and ``temp_max``;
* a factor for every resistor (those of the bias network and the stage's ``rdeg`` and
  ``rfb``), each independently uniform in [1 - tol, 1 + tol], and with ``ctol`` one for every
  capacitor of the stage network in the configuration's circuit.  Uniform within the
  tolerance band is common practice, no source: it covers the whole band with no
  assumption about how a batch of parts is sorted.

and then recomputes, for all samples at once: beta and VBE(on) at the temperature
(:mod:`devmodels.temperature`), the operating point (:func:`devmodels.dcbias.solve_arrays`,
when a network is given; otherwise IC and VCE are fixed), the hybrid-pi model (relations of
:mod:`devmodels.models`), the stage's Y parameters at one frequency, and the terminated
analysis (:func:`devmodels.analysis.terminate_arrays_y`, and Rollett's K alone,
:func:`devmodels.analysis.rollett_k_arrays_y`).

The model is made by the relations of :func:`devmodels.models.hybrid_pi_values` on arrays
of samples, and the stage's Y parameters come from the stage's own netlist
(:meth:`devmodels.stage.Stage.indefinite_block`) with the samples as the points: the same
description and engine as a frequency sweep.  The tests check it against the scalar
pipeline sample by sample.

**The stage as built.**  With ``stage_network`` (a :class:`devmodels.stagenetwork.StageNetwork`)
the AC analysis is the stage ``gain`` analyses, ``Stage(model, config, rdeg, rfb,
network=...)``: the bias resistors load the input, ``rc`` the output, the unbypassed part of
``re`` degenerates, and the coupling and bypass capacitors are in it at their given values.
Its resistors are the DC network's (one set of parts, one draw per resistor, used by the
operating point and the AC analysis alike).  An emitter resistor that ``c_bypass`` bypasses
in part is two physical resistors in series, ``re_unbypassed`` and ``re_bypassed``: each is
drawn independently within the tolerance (two parts from a reel are not matched), and the
operating point uses their sum.

Samples are processed in chunks of :data:`CHUNK` and summarised as they stream, so the
memory does not grow with the sample count: minimum and maximum are exact, the percentiles
come from :class:`devmodels.worstcase.StreamingSummary` (a histogram on an asinh grid of
relative bin width 1e-4; the bound of each percentile's error is reported in
:attr:`SpreadResult.stats_accuracy`).  Per-sample values are kept only when asked
(``keep_values``; by default up to :data:`KEEP_VALUES_MAX` samples, 8 bytes per sample per
result), and then the percentiles are exact (numpy's 'linear' method).

**Chunks, seeds and worker processes.**  Chunk ``k`` draws its samples from the run's stream
(numpy's ``default_rng(seed)``, PCG64) advanced past every earlier sample's draws, so its
samples depend on the seed and ``k`` alone and are those one generator drawing chunk after
chunk gives (a seed reproduces the same samples with any number of workers; with the same
:data:`CHUNK`).  The first chunk is evaluated in the calling process and fixes the grid of the
streaming summary (the scale of each result's asinh grid: a hundredth of the chunk's smallest
non-zero magnitude; a result without one there takes it from the corners, else 1 in its unit).
The other chunks go to :data:`WORKERS` worker processes (forked on Linux), a few chunks per
task: each task returns its tally (the summary on the same grid, region counts, specification
counts, maxima; a few hundred kilobytes) and, only when the values are kept, its values; the
tallies merge exactly and in any order (:meth:`devmodels.worstcase.StreamingSummary.merge`), so
the numbers do not depend on the number of workers or on which finishes first.  Runs of fewer
than :data:`PROCESS_MIN_CHUNKS` chunks after the first, and ``workers=1``, stay in the calling
process.
A sample whose operating point is not in the forward-active region (or whose C_pi would
be negative) has no small-signal results: they are NaN there and the counts are reported.

**Worst case and yield.**  Beside the Monte Carlo percentiles, every result carries its
extremes over the box of limits (:func:`devmodels.worstcase.worst_case`: ``worst_min``,
``worst_max``, the limit settings that reach them and the method).  Specifications
(``av>=40``, :func:`devmodels.worstcase.parse_spec`) are counted on every sample as it
streams; the yield is the fraction passing all of them with its 95 % Wilson interval
(:func:`devmodels.worstcase.yield_fraction`).

**Noise.**  With ``noise=True`` on the setup, each sample also has its noise figure at the
source impedance ``rs`` (``nf_db``) and its minimum noise figure (``nfmin_db``), in dB: the
stage whose element values are the samples' arrays goes through
:func:`devmodels.noise.stage_noise` (the noise sources of the same netlist: 4kT/R of every
physical resistor including ``rdeg`` and ``rfb``, base and collector shot noise, a FET's
channel noise) and :func:`devmodels.noise.noise_parameters`, with the source at T0 = 290 K and
the device and resistors at the sample's temperature.  As the rest of the spread's AC
analysis, the stage is the one of the setup: with a ``stage_network`` the whole stage as
built (the bias resistors, ``rc`` and ``re`` add their 4kT/R at their sampled values and load
the ports), without one the transistor with ``rdeg`` and ``rfb`` (a warning says so when a DC
network is given).  They are results like the others:
percentiles, worst case over the box, specifications (``nf_db<=3``).  Off by default: it
costs up to about as much again per sample (measured 1.5 to 2.3 times on 1e6 samples of a
loaded two-core machine).

**FETs.**  :class:`FetSpreadSetup` holds a FET at a fixed bias point (ID, VDS; the library
has no FET bias network yet) and :class:`FetSpreadRanges` the datasheet limits: IDSS and
VP of a JFET, ``kn`` or the overdrive ``vov`` of a MOSFET (the model has no threshold
voltage), and ``lambda``, each sampled uniformly, plus the tolerance of ``rdeg``,
``rfb`` and, with a ``stage_network``, the network's resistors (under the FET's names,
:data:`FET_NETWORK_NAMES`; the network is in the AC analysis and does not set ID).  The element values follow the square laws of :mod:`devmodels.fetbias`; the
model is a :class:`devmodels.fet.FetModel` whose elements are arrays of samples, and the
results are the small-signal ones.  :func:`run_spread` asks the setup object for its
limits, draws, evaluation, corners and worst case: which device it is, is decided once,
by the class of the setup.
"""

from __future__ import annotations

import contextlib
import math
import os
import sys
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
from .stagenetwork import StageNetwork
from .temperature import BETA_TC_DEFAULT, T_REF, VBE_DEFAULT, VBE_TC_DEFAULT, beta_at, vbe_at
from .worstcase import FET_RESULTS, NOISE_RESULTS, QUANTILES, RESULTS, StreamingSummary, grid_scale, worst_case

__all__ = ["CHUNK", "WORKERS", "PROCESS_MIN_CHUNKS", "TASK_CHUNKS", "RESULTS", "FET_RESULTS", "NOISE_RESULTS",
           "QUANTILES", "RESULT_KEYS", "KEEP_VALUES_MAX", "FET_NETWORK_NAMES", "SpreadSetup", "SpreadRanges",
           "FetSpreadSetup", "FetSpreadRanges", "SpreadResult", "evaluate", "run_spread"]

#: Samples per chunk (bounds the working memory; part of what a seed reproduces). Measured on
#: 1e6 samples: 16384 gives 1.6e6 samples/s, 32768 1.4e6, 4096 1.2e6.
CHUNK = 16384


def _cpus() -> int:
    """The CPUs this process may run on (its affinity, where the platform reports it)."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except (AttributeError, OSError):
        return max(1, os.cpu_count() or 1)


#: Worker processes of a run (results do not depend on it): the CPUs this process may use.
WORKERS = _cpus()
#: Streaming runs of fewer chunks than this (beyond the first) stay in this process: starting the
#: workers costs about as much as a few chunks.
PROCESS_MIN_CHUNKS = 8
#: Most chunks a worker evaluates per task (one summary sent back, one step of the progress).
TASK_CHUNKS = 16
# RESULTS (bipolar), FET_RESULTS, NOISE_RESULTS and QUANTILES (the statistics reported) are
# defined in devmodels.worstcase beside the results' units and re-exported here.
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
    l_b, l_c, l_e : float
        Lead inductances in H (0: none); a short at 0 Hz, so left out there.
    rmu : float or None
        r_mu in ohm; ``None`` for none.
    rdeg, rfb : float or None
        External degeneration and collector-base feedback resistors (ohm), toleranced too.
    z0 : (float, float)
        S reference resistances, ohm (K, the spread's one stability result, does not depend on them).
    pmax, vceo : float or None
        Ratings (W, V) checked against the worst sample.
    noise : bool
        Also compute the noise results :data:`NOISE_RESULTS` (needs ``Re(rs) > 0``).
    stage_network : StageNetwork or None
        The stage as built (:class:`devmodels.stagenetwork.StageNetwork`: bias resistors,
        ``rc``, ``re`` and its bypassed part, the capacitors) in the AC analysis, as ``gain``
        analyses it; its resistors are toleranced (with ``network``, they are the same
        resistors as the DC network's, checked).  ``None``: the AC analysis is the transistor
        with ``rdeg`` and ``rfb`` alone (the network, if any, sets the operating point only).
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
    l_b: float = 0.0
    l_c: float = 0.0
    l_e: float = 0.0
    rmu: float | None = None
    rdeg: float | None = None
    rfb: float | None = None
    z0: tuple[float, float] = (50.0, 50.0)
    pmax: float | None = None
    vceo: float | None = None
    noise: bool = False
    stage_network: StageNetwork | None = None

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
        _check_stage_network(self)

    @property
    def resistors(self) -> dict[str, float]:
        """Nominal values of every toleranced resistor, ohm: the network's (the DC network's,
        with the stage network's ``re`` in its two parts ``re_unbypassed``, ``re_bypassed``
        when it has them), then ``rdeg``, ``rfb``."""
        return _network_resistors(self) | _stage_resistors(self)

    @property
    def capacitors(self) -> dict[str, float]:
        """Nominal values of the capacitors a ``ctol`` tolerances, F: the stage network's real ones
        in this configuration's circuit (:func:`_network_capacitors`)."""
        return _network_capacitors(self)

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
                           "temp_min": r.temp_min, "temp_max": r.temp_max, "tol": r.tol * 100, "ctol": r.ctol * 100},
                "limits_text": (f"beta {r.beta_min:g}..{r.beta_max:g} at {self.t_ref:.2f} K "
                                f"({'uniform' if r.beta_typ is None else f'triangular, typ {r.beta_typ:g}'}), "
                                f"T {r.temp_min:.2f}..{r.temp_max:.2f} K, resistors ±{r.tol * 100:g} % (uniform)"
                                + _ctol_text(self, r))}

    @property
    def results(self) -> tuple[str, ...]:
        """The results of this spread: :data:`RESULTS` (and :data:`NOISE_RESULTS` with ``noise``)."""
        return RESULTS + (NOISE_RESULTS if self.noise else ())

    def limits(self, ranges: "SpreadRanges") -> dict[str, tuple[float, float]]:
        """The box of limits (:func:`devmodels.worstcase.box_limits`): ``beta`` (at ``t_ref``),
        ``temp`` (K) and, with a tolerance, a multiplier ``(1 - tol, 1 + tol)`` per resistor.

        Parameters
        ----------
        ranges : SpreadRanges
        """
        out = {"beta": (float(ranges.beta_min), float(ranges.beta_max)),
               "temp": (float(ranges.temp_min), float(ranges.temp_max))}
        if ranges.tol > 0:
            out |= {name: (1.0 - ranges.tol, 1.0 + ranges.tol) for name in self.resistors}
        if ranges.ctol > 0:
            out |= {name: (1.0 - ranges.ctol, 1.0 + ranges.ctol) for name in self.capacitors}
        return out

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

    def _drawn(self, ranges: "SpreadRanges") -> tuple[list, list]:
        """The resistors and capacitors drawn (those with a tolerance)."""
        return (list(self.resistors) if ranges.tol > 0 else [], list(self.capacitors) if ranges.ctol > 0 else [])

    def _draw(self, rng: np.random.Generator, ranges: "SpreadRanges", n: int):
        names, caps = self._drawn(ranges)
        return _draw(rng, ranges, names, n, caps)

    def _draws_per_sample(self, ranges: "SpreadRanges") -> int:
        return _draw_count(ranges, *self._drawn(ranges))

    def _evaluate_draw(self, draw) -> dict:
        return evaluate(self, *draw)

    def _corners(self, ranges: "SpreadRanges") -> dict:
        return _corners(self, ranges, list(self.resistors) if ranges.tol > 0 else [])

    def _worst_case(self, ranges: "SpreadRanges") -> dict:
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
        if self.noise and self.network is not None and self.stage_network is None:
            warnings.append("nf_db: the noise figure is that of the transistor with rdeg and rfb, as the rest of "
                            "this spread's AC analysis (no stage_network); the bias network's resistors (their "
                            "noise and their loading of the input) are not in it (the noise command includes them)")
        vcc = abs(self.network.vcc) if self.network is not None else 0.0
        return warnings + rating_warnings(maxima["power"], maxima["vce"], vcc, pmax=self.pmax, vceo=self.vceo,
                                          where=" at the worst sample")


def _check_terminations(setup) -> None:
    """Refuse source and load impedances with a negative real part, and negative rdeg / rfb; with
    ``noise``, a source without a real part (the noise figure is referred to the source's noise)."""
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
    if not isinstance(setup.noise, bool):
        raise InputError(f"noise: expected True or False, got {setup.noise!r}")
    if setup.noise and not complex(setup.rs).real > 0:
        raise InputError(f"rs: the noise figure needs a source impedance with a real part > 0 ohm (it is "
                         f"referred to the source's own noise), got {complex(setup.rs)}")


def _noise_figures(stage: Stage, freq: float, rs) -> tuple[np.ndarray, np.ndarray]:
    """Noise figure at the source ``rs`` and minimum noise figure (dB) of a stage of samples.

    The stage's element values are arrays of the samples (or scalars); its noise is that of its
    netlist (:func:`devmodels.noise.stage_noise`, one frequency, the samples as the points) and
    the figures follow from the chain-form correlation matrix
    (:func:`devmodels.noise.noise_parameters`; Hillbrand and Russer 1976), the source at T0.

    Parameters
    ----------
    stage : devmodels.stage.Stage
        The stage, element values arrays of N samples.
    freq : float
        Frequency in Hz.
    rs : complex
        Source impedance in ohm (real part > 0).

    Returns
    -------
    (ndarray (N,), ndarray (N,))
        NF and NFmin in dB; NaN where the chain form does not exist (y21 = 0: no transmission).
    """
    from .noise import NoisyTwoPort, noise_parameters, stage_noise

    ntp = stage_noise(stage, np.array([float(freq)]))
    n = ntp.freq.size
    nf, nfmin = np.full(n, np.nan), np.full(n, np.nan)
    has = ntp.data[:, 1, 0] != 0  # the chain form's pivot (devmodels.conversions)
    if not has.all():
        ntp = NoisyTwoPort(ntp.freq[has], ntp.data[has], ntp.cor[has], ntp.form)
    if ntp.freq.size:
        r = noise_parameters(ntp, zs=complex(rs))
        nf[has], nfmin[has] = r.nf_db, r.nfmin_db
    return nf, nfmin


def _stage_resistors(setup) -> dict[str, float]:
    """The stage's own toleranced resistors (``rdeg``, ``rfb``) that are present."""
    return {name: getattr(setup, name) for name in ("rdeg", "rfb") if getattr(setup, name)}


#: The stage network's resistor names (:attr:`devmodels.stagenetwork.StageNetwork.resistors`) as a FET
#: spread names its limits: the ``[network]`` keys of a FET (``rgate``: the one gate resistor of a
#: gate biased through a single resistor, ``rg1`` or ``rg2``, whichever the network has).
FET_NETWORK_NAMES: dict[str, str] = {"r1": "rg1", "r2": "rg2", "rb": "rgate", "rc": "rd", "re": "rsrc",
                                     "re_unbypassed": "rsrc_unbypassed", "re_bypassed": "rsrc_bypassed"}


def _network_resistors(setup) -> dict[str, float]:
    """The toleranced resistors of the setup's networks (DC ``network`` and ``stage_network``).

    They are one set of parts: the DC network's ``r1``, ``r2``, ``rb``, ``rc``, ``re`` are the
    stage network's (:func:`_check_stage_network`).  An emitter resistor that a bypass capacitor
    shunts in part is two resistors in series (``re_unbypassed``, ``re_bypassed``), each drawn
    on its own; the operating point uses their sum.
    """
    out = dict(setup.network.resistors) if getattr(setup, "network", None) is not None else {}
    if setup.stage_network is not None:
        ac = setup.stage_network.resistors
        if "re_unbypassed" in ac:
            out.pop("re", None)
        out |= ac
    return out


def _check_stage_network(setup) -> None:
    """A setup's ``stage_network``: a StageNetwork of single (nominal) values, and the same parts
    as the DC ``network`` when the setup has one."""
    sn = setup.stage_network
    if sn is None:
        return
    if not isinstance(sn, StageNetwork):
        raise InputError(f"stage_network: expected a StageNetwork, got {type(sn).__name__}")
    for name, v in sn.resistors.items():
        if np.ndim(v) != 0:
            raise InputError(f"stage_network: {name} must be one nominal value in ohm (the spread draws the "
                             "samples), got an array")
    net = getattr(setup, "network", None)
    if net is None:
        return
    if sn.bias != net.kind:
        raise InputError(f"stage_network: its bias is {sn.bias!r} and the DC network's is {net.kind!r}; they "
                         "describe one circuit")
    for name in ("r1", "r2", "rb", "rc", "re"):
        a, b = getattr(sn, name), getattr(net, name)
        if a != b:
            raise InputError(f"stage_network: {name} = {a!r} ohm differs from the DC network's {name} = {b!r} ohm; "
                             "they describe one circuit")


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
    ctol : float
        Capacitor tolerance as a fraction, for the stage network's real capacitors (those in the
        configuration's circuit, :func:`_network_capacitors`), each drawn uniformly and
        independently in [1 - ctol, 1 + ctol] after the resistors.
    """

    beta_min: float
    beta_max: float
    temp_min: float = T_REF
    temp_max: float = T_REF
    tol: float = 0.0
    beta_typ: float | None = None
    samples: int = 10000
    seed: int | None = None
    ctol: float = 0.0

    def __post_init__(self) -> None:
        _check_ctol(self.ctol)

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


def _ctol_text(setup, ranges) -> str:
    """The capacitor tolerance for a report's limits (empty without one)."""
    if ranges.ctol <= 0 or not setup.capacitors:
        return ""
    return f", {', '.join(setup.capacitors)} ±{ranges.ctol * 100:g} % (uniform)"


def _check_ctol(ctol) -> None:
    if isinstance(ctol, bool) or not isinstance(ctol, (int, float, np.number)) or not math.isfinite(ctol) \
            or not 0 <= ctol < 1:
        raise InputError(f"ctol: expected a capacitor tolerance from 0 % to below 100 %, got {ctol!r}")


def _network_capacitors(setup) -> dict[str, float]:
    """The stage network's real capacitors that are in the setup's configuration (``c_base`` is in
    a common-base stage only, ``c_bypass`` in a common-emitter one), F: the toleranced ones."""
    sn = setup.stage_network
    if sn is None or not sn.capacitors():
        return {}
    configs = BJT_CONFIGS if setup.config in BJT_CONFIGS else FET_CONFIGS
    net, _ = sn.netlist(("b", "c", "e"), configs.index(setup.config))
    used = {e.name for e in net.elements if e.kind == "capacitor"}
    return {name: c for name, c in sn.capacitors().items() if name in used}


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
        Tolerance of ``rdeg``, ``rfb`` and the stage network's resistors as a fraction (0.05 for 5 %).
    samples : int
        Number of samples.
    seed : int or None
        Seed of the random generator (``None``: a fresh one, reported in the result).
    ctol : float
        Capacitor tolerance of the stage network's real capacitors, a fraction (as
        :attr:`SpreadRanges.ctol`).

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
    ctol: float = 0.0

    def __post_init__(self) -> None:
        _check_ctol(self.ctol)
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
    l_g, l_d, l_s : float
        Lead inductances in H (0: none); a short at 0 Hz, so left out there.
    rdeg, rfb : float or None
        External source degeneration and drain-gate feedback resistors (ohm), toleranced.
    z0 : (float, float)
        S reference resistances, ohm (K, the spread's one stability result, does not depend on them).
    noise : bool
        Also compute the noise results :data:`NOISE_RESULTS` (needs ``Re(rs) > 0``; channel
        noise with the model's default gamma_n).
    stage_network : StageNetwork or None
        The stage as built (gate resistors, drain and source resistors, capacitors) in the AC
        analysis, as ``gain`` analyses it (ID and VDS stay fixed: it does not set the bias).
        Its resistors are toleranced under a FET's names (:data:`FET_NETWORK_NAMES`).
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
    l_g: float = 0.0
    l_d: float = 0.0
    l_s: float = 0.0
    rdeg: float | None = None
    rfb: float | None = None
    z0: tuple[float, float] = (50.0, 50.0)
    noise: bool = False
    stage_network: StageNetwork | None = None

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
        _check_stage_network(self)

    @property
    def is_jfet(self) -> bool:
        """True for a JFET (njfet, pjfet)."""
        return self.device.endswith("jfet")

    @property
    def resistors(self) -> dict[str, float]:
        """Nominal values of the toleranced resistors, ohm: the stage network's under a FET's names
        (:data:`FET_NETWORK_NAMES`), then ``rdeg``, ``rfb`` when present."""
        return {FET_NETWORK_NAMES[k]: v for k, v in _network_resistors(self).items()} | _stage_resistors(self)

    @property
    def capacitors(self) -> dict[str, float]:
        """As :attr:`SpreadSetup.capacitors`: the stage network's real capacitors in this configuration, F."""
        return _network_capacitors(self)

    def describe(self, ranges: "FetSpreadRanges") -> dict:
        """As :meth:`SpreadSetup.describe`: the fixed ID/VDS and the FET limits of ``ranges``."""
        lim = self.limits(ranges)
        rng: dict = {}
        for name in ("idss", "vp", "kn", "vov", "lambda"):
            if name in lim:
                rng[f"{name}_min"], rng[f"{name}_max"] = lim[name]
        rng["tol"] = ranges.tol * 100
        rng["ctol"] = ranges.ctol * 100
        from .units import format_si

        unit = {"idss": "A", "vp": "V", "kn": "A/V²", "vov": "V", "lambda": "1/V"}

        def val(n, v):
            return f"{v:g} 1/V" if n == "lambda" else format_si(v, unit[n])

        parts = [f"{n} {val(n, lo)}" + ("" if lo == hi else f"..{val(n, hi)}") for n, (lo, hi) in lim.items()
                 if n in unit]
        text = ", ".join(parts) + " (uniform)"
        if ranges.tol > 0 and self.resistors:
            text += f", {', '.join(self.resistors)} ±{ranges.tol * 100:g} % (uniform)"
        text += _ctol_text(self, ranges)
        from .units import format_si

        return {"bias": f"{self.device}, ID = {format_si(self.id, 'A')}, VDS = {format_si(self.vds, 'V')}",
                "bias_json": {"network": None if self.stage_network is None else self.stage_network.bias,
                              "id": self.id, "vds": self.vds}, "ranges": rng,
                "limits_text": text}

    @property
    def results(self) -> tuple[str, ...]:
        """The results of this spread: :data:`FET_RESULTS` (and :data:`NOISE_RESULTS` with ``noise``)."""
        return FET_RESULTS + (NOISE_RESULTS if self.noise else ())

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
        if ranges.ctol > 0:
            out |= {n: (1.0 - ranges.ctol, 1.0 + ranges.ctol) for n in self.capacitors}
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
            open impedance), with ``noise`` :data:`NOISE_RESULTS` (dB), and ``region`` (all 0:
            every sample is in saturation, checked by :meth:`limits` over the whole box).
        """
        from .analysis import rollett_k_arrays_y, terminate_arrays_y
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
                         rg=self.rg, rdx=self.rdx, rsx=self.rsx, device=self.device,
                         **_leads(self, ("l_g", "l_d", "l_s")))
        res = {name: nominal * np.asarray(points.get(name, 1.0), dtype=float)
               for name, nominal in self.resistors.items()}
        built = None if self.stage_network is None else self.stage_network.with_resistors(
            {k: res[v] for k, v in FET_NETWORK_NAMES.items() if v in res}).with_capacitors(
            {name: c * np.asarray(points[name], dtype=float) for name, c in self.capacitors.items() if name in points})
        stage = Stage(model, self.config, rdeg=res.get("rdeg", 0.0), rfb=res.get("rfb"), network=built)
        y = config_y(stage.indefinite_block(2 * math.pi * self.freq, n), self.config)
        term = terminate_arrays_y(y, self.rs, self.rl)
        out = {name: np.abs(term[name]) for name in ("av", "avs", "ai", "zin", "zout")}
        out["gt_db"] = np.asarray(term["gt_db"], dtype=float)
        out["k"] = rollett_k_arrays_y(y)
        out["gm"] = np.array(gm)
        out["ro"] = np.full(n, np.nan) if np.ndim(ro) == 0 else np.asarray(ro, dtype=float)
        if self.noise:
            out["nf_db"], out["nfmin_db"] = _noise_figures(stage, self.freq, self.rs)
        for name in self.results:
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

    def _draws_per_sample(self, ranges: FetSpreadRanges) -> int:
        return sum(lo != hi for lo, hi in self.limits(ranges).values())  # one per array _draw draws

    def _evaluate_draw(self, draw) -> dict:
        return self.evaluate_points(draw)

    def _corners(self, ranges: FetSpreadRanges) -> dict:
        lim = self.limits(ranges)
        pts = {n: np.array([lo, hi, 0.5 * (lo + hi)]) for n, (lo, hi) in lim.items()}
        r = self.evaluate_points(pts)
        out = {}
        for i, label in enumerate(("min", "max", "nominal")):
            d = {n: float(v[i]) for n, v in pts.items() if n not in self.resistors and n not in self.capacitors}
            d["tol"] = float(pts[next(iter(self.resistors))][i] - 1.0) if ranges.tol > 0 and self.resistors else 0.0
            if ranges.ctol > 0 and self.capacitors:
                d["ctol"] = float(pts[next(iter(self.capacitors))][i] - 1.0)
            for name in self.results:
                v = float(r[name][i])
                d[name] = v if math.isfinite(v) else None
            out[label] = d
        return out

    def _worst_case(self, ranges: FetSpreadRanges) -> dict:
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


def _leads(setup, names: tuple[str, ...]) -> dict[str, float]:
    """The lead inductances of a setup for its model: as given above 0 Hz, none at 0 Hz (an
    inductor is a short there, which the admittance engine cannot hold)."""
    return {name: getattr(setup, name) if setup.freq > 0 else 0.0 for name in names}


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
        Multipliers of the nominal resistors and capacitors (keys of ``setup.resistors`` and
        ``setup.capacitors``); missing ones are 1.

    Returns
    -------
    dict of ndarray (N,)
        ``setup.results`` (magnitudes, NaN where they do not exist), ``region`` (int8 codes into
        :data:`devmodels.dcbias.REGIONS`; code 3 for a negative C_pi) and ``beta`` used.
    """
    from .analysis import rollett_k_arrays_y, terminate_arrays_y

    beta_ref = np.asarray(beta_ref, dtype=float)
    temp = np.asarray(temp, dtype=float)
    n = np.broadcast_shapes(beta_ref.shape, temp.shape)[0]
    factors = factors or {}
    res = {name: nominal * np.asarray(factors.get(name, 1.0), dtype=float)
           for name, nominal in setup.resistors.items()}
    beta = np.broadcast_to(beta_at(temp, beta_ref, setup.beta_tc, setup.t_ref), (n,))
    vbe = np.broadcast_to(vbe_at(temp, setup.vbe, setup.vbe_tc, setup.t_ref), (n,))
    # the stage network with the samples' resistors (its re: the sum of the two parts, when split)
    built = None if setup.stage_network is None else _sampled_network(setup, res, factors)
    if setup.network is not None:
        net = {k: res[k] if k in res else built.re for k in setup.network.resistors}
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
    out = {name: np.full(n, np.nan) for name in setup.results}
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
                     rcx=setup.rcx, rex=setup.rex, vt=pick(v["vt"]), **_leads(setup, ("l_b", "l_c", "l_e")))
    rfb = res.get("rfb")
    if built is not None and not every:
        built = _sampled_network(setup, res, factors, pick)
    stage = Stage(model, setup.config, rdeg=pick(res.get("rdeg", 0.0)), rfb=None if rfb is None else pick(rfb),
                  network=built)
    # the same netlist and engine as a frequency sweep, with the samples as the points
    y = config_y(stage.indefinite_block(2 * math.pi * setup.freq, count), setup.config)
    term = terminate_arrays_y(y, setup.rs, setup.rl)
    sel = slice(None) if every else ok
    for name in ("av", "avs", "ai", "zin", "zout"):
        out[name][sel] = np.abs(term[name])
    out["gt_db"][sel] = term["gt_db"]
    out["k"][sel] = rollett_k_arrays_y(y)
    if setup.noise:  # the noise of the same stage (its netlist's noise sources), only when asked
        out["nf_db"][sel], out["nfmin_db"][sel] = _noise_figures(stage, setup.freq, setup.rs)
    return out


def _sampled_network(setup, res: dict, factors: dict, pick=None) -> StageNetwork:
    """The setup's stage network at the samples' resistors ``res`` (ohm) and capacitor multipliers
    (the keys of ``setup.capacitors`` in ``factors``); ``pick`` selects the samples kept."""
    caps = {name: c * np.asarray(factors[name], dtype=float) for name, c in setup.capacitors.items()
            if name in factors} if factors else {}
    if pick is not None:
        res = {k: pick(x) for k, x in res.items()}
        caps = {k: pick(x) for k, x in caps.items()}
    return setup.stage_network.with_resistors(res).with_capacitors(caps)


def _draw(rng: np.random.Generator, ranges: SpreadRanges, names, n: int, caps=()):
    if ranges.beta_min == ranges.beta_max:
        beta = np.full(n, float(ranges.beta_min))
    elif ranges.beta_typ is not None:
        beta = rng.triangular(ranges.beta_min, ranges.beta_typ, ranges.beta_max, n)
    else:
        beta = rng.uniform(ranges.beta_min, ranges.beta_max, n)
    temp = rng.uniform(ranges.temp_min, ranges.temp_max, n)
    factors = {name: rng.uniform(1 - ranges.tol, 1 + ranges.tol, n) for name in names}
    factors |= {name: rng.uniform(1 - ranges.ctol, 1 + ranges.ctol, n) for name in caps}  # after: same draws
    return beta, temp, factors


def _draw_count(ranges: SpreadRanges, names, caps=()) -> int:
    """Random numbers :func:`_draw` takes per sample (one per array it draws: numpy's uniform and
    triangular take one 64-bit draw per value)."""
    return int(ranges.beta_min != ranges.beta_max) + 1 + len(names) + len(caps)


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


@dataclass(frozen=True, slots=True)
class _Job:
    """What evaluating chunks of a run takes (sent to the worker processes, so it pickles)."""

    setup: object
    ranges: object
    seed: int
    chunk: int
    specs: tuple
    summary: bool  # feed a streaming summary (False: exact statistics from the kept values)
    keep: bool  # return the per-sample values

    def draw(self, k: int):
        """The samples of chunk ``k``: the run's stream (``default_rng(seed)``) advanced past the
        draws of every earlier sample, so they are those of one generator drawing chunk after
        chunk, and depend on the seed and ``k`` alone (not on which process draws them)."""
        start = k * self.chunk
        bits = np.random.PCG64(self.seed)
        bits.advance(start * self.setup._draws_per_sample(self.ranges))
        m = min(self.chunk, int(self.ranges.samples) - start)
        return self.setup._draw(np.random.Generator(bits), self.ranges, m)


class _Tally:
    """What the chunks of a run add up to: the streaming summary (when the job keeps one), the
    samples per region code, those passing every specification and failing each, and the
    largest value of each result the ratings are checked against.  Tallies of different chunks
    merge exactly, in any order, into the tally of all of them (:meth:`merge`)."""

    def __init__(self, job: _Job, scales: dict | None = None):
        self.summary = StreamingSummary(job.setup.results, scales=scales) if job.summary else None
        self.samples = 0
        self.regions = np.zeros(4, dtype=np.int64)
        self.passed = 0
        self.fails = [0] * len(job.specs)
        self.maxima = dict.fromkeys(job.setup._track_max, -math.inf)

    def add(self, r: dict, specs) -> None:
        """Add one chunk's results ``r`` (:func:`evaluate`'s dict), checked against ``specs``."""
        from .worstcase import check_specs

        m = r["region"].size
        self.samples += m
        if self.summary is not None:
            self.summary.update({name: r[name] for name in self.summary.results})
        self.regions += np.bincount(r["region"], minlength=4)[:4]
        masks = [check_specs(r, [spec])[0] for spec in specs]  # NaN fails (check_specs' rule)
        self.fails = [a + int(m - np.count_nonzero(ok)) for a, ok in zip(self.fails, masks)]
        self.passed += int(np.count_nonzero(np.logical_and.reduce(masks))) if masks else m
        for name in self.maxima:
            v = r[name][np.isfinite(r[name])]
            if v.size:
                self.maxima[name] = max(self.maxima[name], float(v.max()))

    def merge(self, other: "_Tally") -> None:
        """Add the tally of other chunks (counts add; maxima and the summary merge exactly)."""
        if self.summary is not None:
            self.summary.merge(other.summary)
        self.samples += other.samples
        self.regions += other.regions
        self.passed += other.passed
        self.fails = [a + b for a, b in zip(self.fails, other.fails)]
        self.maxima = {k: max(v, other.maxima[k]) for k, v in self.maxima.items()}


def _run_task(job: _Job, chunks: range, scales: dict | None = None) -> tuple[_Tally, dict | None]:
    """Evaluate the consecutive chunks ``chunks`` of a run (what a worker process runs).

    Returns their tally (``scales`` fixes its summary's grid; ``None``: the first chunk sets it) and,
    when the job keeps them, their per-sample values (result name -> array), else ``None``.
    """
    tally = _Tally(job, scales)
    kept = []
    for k in chunks:
        r = job.setup._evaluate_draw(job.draw(k))
        tally.add(r, job.specs)
        if job.keep:
            kept.append([r[name] for name in job.setup.results])
    if not job.keep:
        return tally, None
    return tally, {name: np.concatenate([c[i] for c in kept]) for i, name in enumerate(job.setup.results)}


def _grid_scales(summary: StreamingSummary, corners: dict) -> dict[str, float]:
    """The scale of each result's streaming grid, fixed before the chunks after the first: the one
    the first chunk set (:func:`devmodels.worstcase.grid_scale`), else the corners' (a result
    without a non-zero value in the first chunk), else 1 in the result's unit."""
    out = {}
    for name, s in summary.scales.items():
        if s is None:
            s = grid_scale([c[name] for c in corners.values() if c.get(name) is not None])
        out[name] = 1.0 if s is None else s
    return out


def _in_daemon() -> bool:
    """Whether this is a daemonic process (which multiprocessing does not let start processes)."""
    import multiprocessing

    return bool(multiprocessing.current_process().daemon)


def _process_pool(workers: int):
    """A pool of worker processes.  Forked on Linux (nothing to import again; a fork takes a few
    milliseconds); elsewhere the platform's default start method (spawn on Windows and macOS:
    each worker imports devmodels, and a script calling :func:`run_spread` there needs the usual
    ``if __name__ == "__main__":`` guard of multiprocessing)."""
    import multiprocessing
    from concurrent.futures import ProcessPoolExecutor

    method = "fork" if sys.platform.startswith("linux") else None
    return ProcessPoolExecutor(max_workers=workers, mp_context=multiprocessing.get_context(method))


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
        Worker processes evaluating the chunks after the first (when there are at least
        :data:`PROCESS_MIN_CHUNKS` of them); 1: all in this process.  The numbers do not
        depend on it.
    progress : callable(done, total), optional
        Called after each chunk (after each task of :data:`TASK_CHUNKS` chunks when worker
        processes evaluate them), in this process.
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
    from .worstcase import parse_spec, spec_text, worst_case_pass, yield_fraction

    setup._check_ranges(ranges)
    if isinstance(chunk, bool) or not isinstance(chunk, (int, np.integer)) or chunk < 1:
        raise InputError(f"chunk: expected a positive number of samples, got {chunk}")
    if isinstance(workers, bool) or not isinstance(workers, (int, np.integer)) or workers < 1:
        raise InputError(f"workers: expected a whole number of processes >= 1, got {workers!r}")
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
    n = int(ranges.samples)
    keep = n <= KEEP_VALUES_MAX if keep_values is None else bool(keep_values)
    exact = keep if exact_stats is None else bool(exact_stats)
    if exact and not keep:
        raise InputError("exact_stats: exact percentiles need the per-sample values; set keep_values=True")
    values = {name: np.empty(n) for name in results} if keep else None
    job = _Job(setup, ranges, int(seed), int(chunk), tuple(parsed), summary=not exact, keep=keep)
    corners = setup._corners(ranges)
    tally = _Tally(job)

    def take(chunks: range, part: _Tally, kept: dict | None) -> None:
        tally.merge(part)
        if values is not None:
            start = chunks.start * chunk
            for name, v in values.items():
                v[start:start + part.samples] = kept[name]
        if progress is not None:
            progress(tally.samples, n)

    # The first chunk here: it sets the grid of the streaming summary, which every other chunk
    # shares (so that summaries of any chunks merge exactly).  The others go, a few chunks per
    # task, to worker processes (each task returns its tally, a few hundred kilobytes, and its
    # values only when they are kept), or stay here chunk by chunk for a small run or one
    # worker; tallies merge in any order to the same numbers, and a chunk's samples depend on
    # the seed and its index alone.
    take(range(1), *_run_task(job, range(1)))
    scales = None if exact else _grid_scales(tally.summary, corners)
    rest = range(1, -(-n // chunk))
    # (a daemonic process, such as a multiprocessing.Pool worker, may not start processes)
    pooled = workers > 1 and len(rest) >= PROCESS_MIN_CHUNKS and not _in_daemon()
    per = max(1, min(TASK_CHUNKS, len(rest) // (8 * workers))) if pooled else 1
    tasks = [rest[i:i + per] for i in range(0, len(rest), per)]
    with _process_pool(min(int(workers), len(tasks))) if pooled else contextlib.nullcontext() as pool:
        parts = (pool.map if pooled else map)(_run_task, [job] * len(tasks), tasks, [scales] * len(tasks))
        for chunks, (part, kept) in zip(tasks, parts):
            take(chunks, part, kept)
    if exact:
        stats = {name: _stats(values[name]) for name in results}
        accuracy = {"method": "exact", "rel_width": 0.0,
                    "bounds": {r: (None if stats[r] is None else dict.fromkeys(QUANTILES, 0.0)) for r in results}}
    else:
        summary = tally.summary
        stats = summary.stats()
        bounds = {}
        for r in results:
            st = stats[r]
            bounds[r] = None if st is None else {q: (0.0 if q in ("min", "max") else summary.error_bound(r, v))
                                                 for q, v in st.items()}
        accuracy = {"method": "streaming", "rel_width": summary.rel_width, "bounds": bounds}
    counts = tally.regions
    regions = {name: int(counts[i]) for i, name in enumerate(setup._region_names)}
    warnings = setup._warnings(n, counts, tally.maxima)
    worst_res = setup._worst_case(ranges) if worst else None
    if worst_res is not None:
        warnings += _outside_worst(stats, worst_res)
    yld = None
    if parsed:
        frac, (lo, hi) = yield_fraction(tally.passed, n)
        texts = [spec_text(sp) for sp in parsed]
        k = int(np.argmax(tally.fails))
        yld = {"fraction": frac, "ci95": [lo, hi], "specs": texts,
               "worst_case_pass": None if worst_res is None else bool(worst_case_pass(worst_res, parsed)),
               "most_failed": texts[k] if tally.fails[k] > 0 else None,
               "passed": tally.passed, "failed_by": dict(zip(texts, tally.fails))}
    return SpreadResult(samples=n, seed=seed, values=values, stats=stats, corners=corners,
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
    fc = np.array([1 - ranges.ctol, 1 + ranges.ctol, 1.0])
    caps = list(setup.capacitors) if ranges.ctol > 0 else []
    r = evaluate(setup, beta, temp, {name: f for name in names} | {name: fc for name in caps})
    out = {}
    for i, label in enumerate(("min", "max", "nominal")):
        d = {"beta": float(beta[i]), "temp": float(temp[i]), "tol": float(f[i] - 1.0),
             "region": REGIONS[r["region"][i]] if r["region"][i] < 3 else "active (no model: C_pi < 0)"}
        if caps:
            d["ctol"] = float(fc[i] - 1.0)
        for name in setup.results:
            v = float(r[name][i])
            d[name] = v if math.isfinite(v) else None
        out[label] = d
    return out

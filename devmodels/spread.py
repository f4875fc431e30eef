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

Samples are processed in chunks of :data:`CHUNK`, so the working memory is bounded; what
grows with the sample count is only the stored results (8 bytes per sample per result).
A sample whose operating point is not in the forward-active region (or whose C_pi would
be negative) has no small-signal results: they are NaN there and the counts are reported.
"""

from __future__ import annotations

import math
import os
from collections import deque
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass, field
from typing import Callable

import numpy as np

from .bias import DEFAULT_VCE_SAT
from .configs import config_y
from .constants import BJT_CONFIGS
from .exceptions import InputError
from .dcbias import REGIONS, BiasNetwork, rating_warnings, solve_arrays
from .models import HybridPi, hybrid_pi_values
from .stage import Stage
from .temperature import BETA_TC_DEFAULT, T_REF, VBE_DEFAULT, VBE_TC_DEFAULT, beta_at, vbe_at

__all__ = ["CHUNK", "RESULTS", "QUANTILES", "SpreadSetup", "SpreadRanges", "SpreadResult", "evaluate",
           "run_spread"]

#: Samples per chunk (bounds the working memory; part of what a seed reproduces). Measured on
#: 1e6 samples: 16384 gives 1.6e6 samples/s, 32768 1.4e6, 4096 1.2e6.
CHUNK = 16384
#: Threads that evaluate chunks (results do not depend on it).
WORKERS = max(1, min(4, os.cpu_count() or 1))
#: Results reported for each sample (magnitudes, except gt_db in dB and k).
RESULTS: tuple[str, ...] = ("av", "avs", "ai", "zin", "zout", "gt_db", "k", "ic", "vce", "power")
#: Statistics reported: name -> percentile.
QUANTILES: dict[str, float] = {"min": 0.0, "p5": 5.0, "p50": 50.0, "p95": 95.0, "max": 100.0}



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
        for name in ("rs", "rl"):
            z = getattr(self, name)
            if isinstance(z, bool) or not isinstance(z, (int, float, complex, np.number)):
                raise InputError(f"{name}: expected an impedance in ohm, got {z!r}")
            z = complex(z)
            open_load = name == "rl" and math.isinf(z.real) and z.real > 0 and z.imag == 0
            if not open_load and not (math.isfinite(z.real) and math.isfinite(z.imag) and z.real >= 0):
                raise InputError(f"{name}: expected an impedance with a real part >= 0 ohm, got {z}")
        for name in ("rdeg", "rfb"):
            v = getattr(self, name)
            if v is not None and not (math.isfinite(v) and v >= 0):
                raise InputError(f"{name}: expected a resistance >= 0 ohm, got {v:g}")

    @property
    def resistors(self) -> dict[str, float]:
        """Nominal values of every toleranced resistor, ohm (network first, then rdeg, rfb)."""
        out = dict(self.network.resistors) if self.network is not None else {}
        for name in ("rdeg", "rfb"):
            v = getattr(self, name)
            if v:
                out[name] = v
        return out


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


@dataclass(frozen=True, slots=True)
class SpreadResult:
    """What :func:`run_spread` returns.

    Attributes
    ----------
    samples : int
        Number of samples drawn.
    seed : int
        Seed that reproduces them (with the same :data:`CHUNK`).
    values : dict of str -> ndarray (samples,)
        Per-sample results of :data:`RESULTS` (magnitudes; gt_db in dB); NaN where a sample
        has no small-signal point (or the value does not exist, e.g. an open impedance).
    stats : dict of str -> dict or None
        For each result, ``{"min", "p5", "p50", "p95", "max"}`` over the samples where it
        exists; ``None`` when it exists for none.
    corners : dict of str -> dict
        ``"min"`` (every parameter at its low limit), ``"max"`` (every one at its high limit)
        and ``"nominal"``: the inputs (``beta``, ``temp``, ``tol``) and the results there
        (``None`` where they do not exist).
    regions : dict of str -> int
        How many samples fell in each region.
    setup : SpreadSetup
        What was held fixed.
    ranges : SpreadRanges
        What was sampled.
    warnings : tuple of str
        Ratings exceeded by any sample, and samples without a small-signal point.
    """

    samples: int
    seed: int
    values: dict
    stats: dict
    corners: dict
    regions: dict
    setup: SpreadSetup
    ranges: SpreadRanges
    warnings: tuple[str, ...] = field(default=())


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


def run_spread(setup: SpreadSetup, ranges: SpreadRanges, *, chunk: int = CHUNK, workers: int = WORKERS,
               progress: Callable[[int, int], None] | None = None) -> SpreadResult:
    """Sample the ranges and compute every result (module docstring).

    Parameters
    ----------
    setup : SpreadSetup
        What is fixed.
    ranges : SpreadRanges
        What is sampled, how many samples, and the seed.
    chunk : int
        Samples per chunk.
    workers : int
        Threads evaluating chunks (the numbers do not depend on it).
    progress : callable(done, total), optional
        Called after each chunk.

    Returns
    -------
    SpreadResult
    """
    if chunk < 1:
        raise InputError(f"chunk: expected a positive number of samples, got {chunk}")
    seed = ranges.seed if ranges.seed is not None else int(np.random.SeedSequence().entropy % 2**63)
    rng = np.random.default_rng(seed)
    names = list(setup.resistors) if ranges.tol > 0 else []
    n = int(ranges.samples)
    values = {name: np.empty(n) for name in RESULTS}
    region = np.empty(n, dtype=np.int8)

    def work(start, draw):
        r = evaluate(setup, *draw)
        for name in RESULTS:
            values[name][start:start + r[name].size] = r[name]
        region[start:start + r["region"].size] = r["region"]
        return r["region"].size

    # Samples are drawn here, in order (so a seed gives the same numbers with any number of
    # workers); chunks are evaluated by a few threads (numpy releases the GIL in array
    # arithmetic), with at most two chunks per worker in flight to bound the memory.
    workers = max(1, min(workers, (n + chunk - 1) // chunk))
    done = 0
    with ThreadPoolExecutor(max_workers=workers) as pool:
        pending = deque()
        for start in range(0, n, chunk):
            pending.append(pool.submit(work, start, _draw(rng, ranges, names, min(chunk, n - start))))
            while len(pending) > 2 * workers or (pending and start + chunk >= n):
                done += pending.popleft().result()
                if progress is not None:
                    progress(done, n)
        stats = dict(zip(RESULTS, pool.map(_stats, (values[name] for name in RESULTS))))
    corners = _corners(setup, ranges, names)
    counts = np.bincount(region, minlength=4)
    regions = {name: int(counts[i]) for i, name in enumerate(REGIONS)}
    warnings = []
    if counts[1] or counts[2]:
        warnings.append(f"network: {counts[1]} of {n} samples are in saturation and {counts[2]} in cutoff; "
                        "they have no small-signal results and are left out of the statistics")
    if counts[3]:
        warnings.append(f"ft: at {counts[3]} of {n} samples fT is too high for cmu at that IC (C_pi < 0); "
                        "they are left out of the statistics")
    vcc = abs(setup.network.vcc) if setup.network is not None else 0.0
    warnings += rating_warnings(float(np.max(values["power"])), float(np.max(values["vce"])), vcc,
                                pmax=setup.pmax, vceo=setup.vceo, where=" at the worst sample")
    return SpreadResult(samples=n, seed=seed, values=values, stats=stats, corners=corners, regions=regions,
                        setup=setup, ranges=ranges, warnings=tuple(warnings))


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

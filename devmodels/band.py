r"""The whole band of a stage: mid-band gain, the low and high -3 dB corners, and their estimates.

A stage as built (:class:`~devmodels.stage.Stage` with a
:class:`~devmodels.stagenetwork.StageNetwork`) between a source impedance :math:`Z_s` and a
load :math:`Z_L` has a band-pass response: the coupling and bypass capacitors set the low
corner, the device capacitances the high one.  :func:`band_edges` returns

``midband_avs``
    :math:`a_{vs}` of :meth:`Stage.midband` (every coupling and bypass capacitor shorted,
    the device capacitances left out): the reference of both corners.
``f_low``, ``f_high``
    The exact corners: where :math:`|a_{vs}(f)| = |a_{vs,mid}|/\sqrt 2`, found by a bracketed
    root search on the response (:func:`devmodels.search.crossing`: a vectorised coarse log
    grid, then refinement to 1e-12 in ln f), not read off a sweep grid.
``f_low_sctc``
    The short-circuit time-constant estimate of the low corner,

    .. math:: f_{low} \approx \frac{1}{2\pi} \sum_k \frac{1}{R_k^{s} C_k},

    :math:`R_k^s` the resistance capacitor k sees with every other coupling and bypass
    capacitor shorted and the device capacitances open.
``bandwidth_octc``
    The open-circuit time-constant estimate of the high corner,

    .. math:: f_{high} \approx \frac{1}{2\pi \sum_k R_k^{o} C_k},

    over the device capacitances, :math:`R_k^o` the resistance capacitor k sees with the other
    device capacitances open and the coupling and bypass capacitors shorted.

Both are the methods of the analog texts (Gray, Hurst, Lewis and Meyer, *Analysis and Design
of Analog Integrated Circuits*, ch. 7; Sedra and Smith, *Microelectronic Circuits*, the
frequency-response chapter; from memory).  :math:`\sum_k R_k^o C_k` is exactly the
coefficient of s in the denominator of the response, and :math:`\sum_k 1/(R_k^s C_k)` the
ratio of the two highest coefficients, so each estimate is exact for one capacitor and good
when one pole dominates.

**Where each resistance comes from.**  From the stage's own netlist
(:meth:`Stage.netlist`; for the high corner the same stage with the network's capacitors
ideal, :meth:`StageNetwork.shorted`), with a resistor :math:`R_s` from the input node to
ground and :math:`R_L` from the output node to ground (the port nodes of
:attr:`Stage.terminals` and :data:`devmodels.configs.CONFIG_TERMINALS`), the capacitor in
question removed and every capacitor to be shorted replaced by a join of its nodes
(:meth:`Netlist.renamed`).  :func:`devmodels.netlist.reduce_to` at :math:`\omega = 0` (every
remaining capacitor open) gives the indefinite matrix between the capacitor's two nodes,
whose diagonal entry is the driving-point conductance.  Because the controlled source is in
the netlist, the resistances include the Miller multiplication of a feedback capacitor and the
:math:`(\beta + 1)` division of an emitter bypass capacitor without any formula.  A
resistance may come out negative (feedback through the controlled source); it is kept with
its sign, as the sums above require.  A capacitor whose nodes float once it is removed
(nothing resistive around it) sees an infinite resistance.

**Terminations.**  The exact response uses :math:`Z_s`, :math:`Z_L` as given (complex allowed,
:math:`Z_L = \infty` open).  The time-constant estimates are defined for resistive networks:
they use :math:`R_s = \mathrm{Re}\,Z_s` (0: the input node is grounded, an ideal source)
and :math:`R_L = \mathrm{Re}\,Z_L` (infinite: no load resistor).

**Rules of the search.**  The response is evaluated on a logarithmic grid over
[``f_start``, ``f_stop``].  Its mid-band point ``f_mid`` is the grid point above the -3 dB
level where :math:`|a_{vs}|` is closest (in dB) to :math:`|a_{vs,mid}|`.  The high corner is
the first falling crossing of the level going up from ``f_mid``; the low corner the first
going down from it (the rising crossing nearest below it).

- A corner the response does not reach inside the range is ``None`` (the low corner also
  when the stage has no coupling or bypass capacitor, whatever the range).  If no grid point
  is above the level there is no pass band in the range: both are ``None``.
- A peak above mid-band (a response that rises above :math:`|a_{vs,mid}|`, e.g. a follower
  into a capacitive load, or complex low-frequency poles) does not change the definition: the
  corners are still the -3 dB crossings of the mid-band level nearest to ``f_mid`` on either
  side, wherever the peak is.  Its size is reported as ``peak_db``, the largest
  :math:`20\log_{10}(|a_{vs}|/|a_{vs,mid}|)` on the coarse grid (about 0 dB without a peak;
  a grid value, so it may miss the top of a narrow peak by a little).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Callable, NamedTuple

import numpy as np

from .configs import CONFIG_TERMINALS, config_y
from .exceptions import InputError, SingularParameterError
from .search import crossing
from .netlist import Netlist, reduce_to, resistor
from .stage import Stage
from .stagenetwork import CAPACITORS

__all__ = ["BandEdges", "TimeConstant", "band_edges", "midband_avs", "avs_function", "pass_band",
           "sctc_terms", "octc_terms", "port_nodes", "driving_point_resistance", "BAND_POINTS",
           "BAND_START", "BAND_STOP"]

#: Default search range of :func:`band_edges` in Hz, and the points of its coarse grid
#: (32 per decade).
BAND_START, BAND_STOP, BAND_POINTS = 1e-3, 1e12, 481


class TimeConstant(NamedTuple):
    """One capacitor's term of a time-constant estimate.

    Attributes
    ----------
    name : str
        The capacitor's element name (``c_in``, ``c_pi``, ``cgd``, ...).
    capacitance : float
        Its capacitance in F.
    resistance : float
        The resistance it sees, ohm (``inf``: floating; may be negative with feedback).
    tau : float
        The time constant resistance * capacitance in s.
    """

    name: str
    capacitance: float
    resistance: float
    tau: float

    @property
    def frequency(self) -> float:
        """1/(2 pi tau) in Hz: the corner this capacitor alone would set (inf for tau = 0)."""
        if self.tau == 0:
            return math.inf
        return 1.0 / (2 * math.pi * self.tau)


@dataclass(frozen=True, slots=True)
class BandEdges:
    """The band of a terminated stage (module docstring has the definitions and rules).

    Attributes
    ----------
    midband_avs : complex
        Mid-band terminated voltage gain V2/Vs.
    f_low, f_high : float or None
        The exact low and high -3 dB corners in Hz (None: not reached in the range; f_low
        also None without coupling or bypass capacitors).
    f_low_sctc : float or None
        Short-circuit time-constant estimate of ``f_low`` in Hz (None without coupling or
        bypass capacitors, or when the sum is not a finite positive number).
    bandwidth_octc : float or None
        Open-circuit time-constant estimate of ``f_high`` in Hz (None without device
        capacitances, or when the sum of time constants is not finite and positive).
    low_terms : tuple of TimeConstant
        Each coupling or bypass capacitor's term, largest 1/tau (largest share of
        ``f_low_sctc``) first: the first one sets the low corner most.
    high_terms : tuple of TimeConstant
        Each device capacitance's term, largest tau (largest share of the sum) first.
    f_mid : float or None
        The mid-band point of the search in Hz (None: no grid point above the -3 dB level).
    peak_db : float or None
        Largest |avs| on the coarse grid over |midband_avs|, dB (> 0: a peak above mid-band).
    f_range : (float, float)
        The searched range in Hz.
    """

    midband_avs: complex
    f_low: float | None
    f_high: float | None
    f_low_sctc: float | None
    bandwidth_octc: float | None
    low_terms: tuple[TimeConstant, ...]
    high_terms: tuple[TimeConstant, ...]
    f_mid: float | None
    peak_db: float | None
    f_range: tuple[float, float]

    @property
    def bandwidth(self) -> float | None:
        """The high corner ``f_high`` in Hz (the name used beside the Miller estimate)."""
        return self.f_high

    def as_dict(self) -> dict:
        """The figures as a dict for output layers (Hz, ohm, F, s; ``midband_avs`` complex)."""

        def terms(ts):
            return [{"name": t.name, "capacitance": t.capacitance, "resistance": t.resistance, "tau": t.tau}
                    for t in ts]

        return {"midband_avs": self.midband_avs, "f_low": self.f_low, "bandwidth": self.f_high,
                "f_low_sctc": self.f_low_sctc, "bandwidth_octc": self.bandwidth_octc,
                "low_terms": terms(self.low_terms), "high_terms": terms(self.high_terms),
                "f_mid": self.f_mid, "peak_db": self.peak_db,
                "f_start": self.f_range[0], "f_stop": self.f_range[1]}


# --- the exact response -----------------------------------------------------------------------

def _termination(name: str, z) -> complex:
    try:
        v = complex(z)
    except (TypeError, ValueError):
        raise InputError(f"{name}: expected an impedance in ohm, got {z!r}") from None
    if math.isnan(v.real) or math.isnan(v.imag) or v.real < 0:
        raise InputError(f"{name}: expected an impedance with real part >= 0 ohm, got {z!r}")
    if name == "rs" and math.isinf(abs(v)):
        raise InputError("rs: an infinite source impedance gives no input signal")
    if name == "rl" and v == 0:
        raise InputError("rl: a short-circuit load (0 ohm) gives no output voltage; give a resistance > 0")
    return v


def _avs_from_y(y: np.ndarray, zs: complex, zl: complex) -> np.ndarray:
    r"""V2/Vs from Y parameters (N, 2, 2) between ``zs`` and ``zl`` (``inf``: open).

    :math:`a_{vs} = -y_{21} / ((1 + Z_s y_{11})(y_{22} + Y_L) - Z_s y_{12} y_{21})`, the Y form
    of :mod:`devmodels.analysis`; NaN where the denominator is 0.  Unlike the chain-matrix
    form it needs no y21 != 0, so a response blocked at some frequency is simply 0 there.
    """
    y11, y12, y21, y22 = y[:, 0, 0], y[:, 0, 1], y[:, 1, 0], y[:, 1, 1]
    yl = 0.0 if math.isinf(abs(zl)) else 1.0 / zl
    den = (1.0 + zs * y11) * (y22 + yl) - zs * y12 * y21
    out = np.full(y.shape[0], np.nan, dtype=complex)
    ok = den != 0
    out[ok] = -y21[ok] / den[ok]
    return out


def avs_function(stage: Stage, zs=50.0, zl=1e3) -> Callable[[np.ndarray], np.ndarray]:
    """The terminated voltage gain V2/Vs of ``stage`` as a vectorised function of frequency.

    Parameters
    ----------
    stage : Stage
        The stage (scalar element values).
    zs, zl : complex
        Source and load impedances in ohm (``zl`` may be ``math.inf``: open load).

    Returns
    -------
    callable
        Frequencies (Hz, array (F,)) -> complex array (F,); NaN where the terminated stage
        has no solution.
    """
    zs_c, zl_c = _termination("rs", zs), _termination("rl", zl)

    def avs(f):
        return _avs_from_y(config_y(stage.indefinite(f), stage.config), zs_c, zl_c)

    return avs


def midband_avs(stage: Stage, zs=50.0, zl=1e3) -> complex:
    """avs of :meth:`Stage.midband` between ``zs`` and ``zl`` (a complex number).

    Parameters
    ----------
    stage : Stage
        The stage.
    zs, zl : complex
        Source and load impedances in ohm (``zl`` may be ``math.inf``).

    Raises
    ------
    SingularParameterError
        When the mid-band gain is unbounded or undefined (e.g. an open load on an output with
        no resistance to ground).
    """
    v = complex(avs_function(stage.midband(), zs, zl)(np.array([0.0]))[0])
    if not (math.isfinite(v.real) and math.isfinite(v.imag)):
        raise SingularParameterError(
            "rs, rl: the mid-band gain of the stage is unbounded with this source and load "
            "(an output with no resistance to ground left open?)")
    return v


def pass_band(avs: Callable[[np.ndarray], np.ndarray], mid: complex, f_start: float, f_stop: float,
              points: int = BAND_POINTS, *, low: bool = True
              ) -> tuple[float | None, float | None, float | None, float | None]:
    """The -3 dB corners of a response around its mid-band point (module docstring, rules).

    Parameters
    ----------
    avs : callable
        Frequencies (Hz) -> complex gains (vectorised).
    mid : complex
        The mid-band gain; the level is |mid|/sqrt 2.
    f_start, f_stop : float
        Search range in Hz, 0 < f_start < f_stop.
    points : int
        Points of the coarse logarithmic grid.
    low : bool
        Search for the low corner too (False: ``f_low`` is None).

    Returns
    -------
    (f_low, f_high, f_mid, peak_db)
        Corners and mid-band point in Hz (or None) and the largest grid gain over |mid| in dB.
    """
    if not (0 < f_start < f_stop) or not (math.isfinite(f_start) and math.isfinite(f_stop)):
        raise InputError(f"start: expected 0 < start < stop, got {f_start:g} Hz and {f_stop:g} Hz")
    ref = abs(mid)
    if ref == 0:
        return None, None, None, None
    level = ref / math.sqrt(2)

    def mag(f):
        return np.abs(avs(f))

    grid = np.geomspace(f_start, f_stop, points)
    g = mag(grid) / ref
    with np.errstate(divide="ignore", invalid="ignore"):
        db = 20 * np.log10(g)
    finite = np.isfinite(db)
    peak_db = float(db[finite].max()) if finite.any() else None
    inside = finite & (g > 1 / math.sqrt(2))
    if not inside.any():
        return None, None, None, peak_db
    i = int(np.argmin(np.where(inside, np.abs(db), np.inf)))
    f_mid = float(grid[i])
    f_low = crossing(mag, level, f_start, f_mid, points, rising=True) if low and i > 0 else None
    f_high = crossing(mag, level, f_mid, f_stop, points) if i < points - 1 else None
    return f_low, f_high, f_mid, peak_db


# --- the time-constant estimates ----------------------------------------------------------------

def port_nodes(stage: Stage) -> tuple[str, str, str]:
    """The stage netlist's input, output and ground nodes (:attr:`Stage.terminals` by configuration).

    Parameters
    ----------
    stage : Stage
        The stage.
    """
    t = stage.terminals
    p1, p2, common = CONFIG_TERMINALS[stage.config]
    return t[p1], t[p2], t[common]


def _with_terminations(net: Netlist, stage: Stage, rs: float, rl: float) -> tuple[Netlist, dict[str, str]]:
    """The netlist with Rs (input to ground) and RL (output to ground), and the joins an ideal
    source (Rs = 0) asks for."""
    n_in, n_out, gnd = port_nodes(stage)
    extra, joins = [], {}
    if rs == 0:
        joins[n_in] = gnd
    else:
        extra.append(resistor("rs", n_in, gnd, rs))
    if math.isfinite(rl):
        extra.append(resistor("rl", n_out, gnd, rl))
    return net + Netlist(tuple(extra)), joins


def _union(pairs) -> dict[str, str]:
    """Node -> representative for nodes joined in pairs (a small union-find)."""
    parent: dict[str, str] = {}

    def root(x):
        while parent.get(x, x) != x:
            x = parent[x]
        return x

    for a, b in pairs:
        ra, rb = root(a), root(b)
        if ra != rb:
            parent[ra] = rb
    return {x: root(x) for x in parent}


def driving_point_resistance(net: Netlist, a: str, b: str) -> float:
    """The resistance in ohm between nodes ``a`` and ``b`` of ``net`` at 0 Hz (capacitors open).

    The diagonal entry of the indefinite matrix :func:`devmodels.netlist.reduce_to` leaves
    at the two nodes is the conductance a test source between them sees.

    Parameters
    ----------
    net : Netlist
        The circuit (scalar element values).
    a, b : str
        The two nodes.

    Returns
    -------
    float
        The resistance in ohm: 0 when ``a`` and ``b`` are one node, ``inf`` when nothing
        resistive connects them (a node absent, or floating at 0 Hz); negative where the
        controlled sources make the circuit look active at that port.
    """
    if a == b:
        return 0.0
    nodes = net.nodes
    if a not in nodes or b not in nodes:
        return math.inf
    try:
        y = complex(reduce_to(net, (a, b), 0.0, 1)[0, 0, 0])
    except InputError:  # a node floats at 0 Hz: no resistive path, no finite resistance
        return math.inf
    return math.inf if y.real == 0 else 1.0 / y.real


def _scalar(name: str, v) -> float:
    if np.ndim(v):
        raise InputError(f"{name}: the band needs one value per element, got an array")
    return float(v)


def _terms(net: Netlist, stage: Stage, names: list[str], shorted: list[str], rs: float, rl: float
           ) -> list[TimeConstant]:
    """One term per capacitor in ``names``: the others in ``shorted`` joined, the rest open."""
    net, joins = _with_terminations(net, stage, rs, rl)
    caps = {e.name: e for e in net.elements if e.kind == "capacitor"}
    out = []
    for name in names:
        el = caps[name]
        others = [caps[n].nodes for n in shorted if n != name]
        mapping = _union(list(others) + list(joins.items()))
        rest = Netlist(tuple(e for e in net.elements if e.name != name)).renamed(mapping)
        a, b = (mapping.get(x, x) for x in el.nodes)
        c = _scalar(name, el.value)
        r = driving_point_resistance(rest, a, b)
        out.append(TimeConstant(name, c, r, r * c if math.isfinite(r) else math.inf))
    return out


def _resistive(zs, zl) -> tuple[float, float]:
    zs_c, zl_c = _termination("rs", zs), _termination("rl", zl)
    return zs_c.real, (math.inf if math.isinf(zl_c.real) or math.isinf(abs(zl_c)) else zl_c.real)


def sctc_terms(stage: Stage, zs=50.0, zl=1e3) -> tuple[TimeConstant, ...]:
    """Short-circuit time constants of the coupling and bypass capacitors (module docstring).

    Parameters
    ----------
    stage : Stage
        The stage; its network's real capacitors (``c_in``, ``c_out``, ``c_bypass``,
        ``c_base`` as they appear in the netlist) are the terms.
    zs, zl : complex
        Source and load impedances in ohm; their real parts are used.

    Returns
    -------
    tuple of TimeConstant
        Largest 1/tau first; empty without such capacitors.
    """
    from .models import without_leads

    rs, rl = _resistive(zs, zl)
    stage = Stage(without_leads(stage.model), stage.config, stage.rdeg, stage.rfb, stage.network)
    net = stage.netlist()
    low = [e.name for e in net.elements if e.kind == "capacitor" and e.name in CAPACITORS]
    terms = _terms(net, stage, low, low, rs, rl)
    return tuple(sorted(terms, key=lambda t: -_inverse(t.tau)))


def octc_terms(stage: Stage, zs=50.0, zl=1e3) -> tuple[TimeConstant, ...]:
    """Open-circuit time constants of the device capacitances (module docstring).

    Parameters
    ----------
    stage : Stage
        The stage; the network's capacitors are taken as ideal (shorted).
    zs, zl : complex
        Source and load impedances in ohm; their real parts are used.

    Returns
    -------
    tuple of TimeConstant
        Largest tau first; empty without device capacitances.
    """
    from .models import without_leads

    rs, rl = _resistive(zs, zl)
    hf = Stage(without_leads(stage.model), stage.config, stage.rdeg, stage.rfb,
               None if stage.network is None else stage.network.shorted())
    net = hf.netlist()
    device = [e.name for e in net.elements if e.kind == "capacitor" and e.name not in CAPACITORS]
    terms = _terms(net, hf, device, [], rs, rl)
    return tuple(sorted(terms, key=lambda t: -t.tau))


def _inverse(tau: float) -> float:
    if tau == 0:
        return math.inf
    return 0.0 if math.isinf(tau) else 1.0 / tau


def _estimate_low(terms) -> float | None:
    if not terms:
        return None
    total = sum(_inverse(t.tau) for t in terms)
    return total / (2 * math.pi) if math.isfinite(total) and total > 0 else None


def _estimate_high(terms) -> float | None:
    if not terms:
        return None
    total = sum(t.tau for t in terms)
    return 1.0 / (2 * math.pi * total) if math.isfinite(total) and total > 0 else None


def band_edges(stage: Stage, rs=50.0, rl=1e3, f_start: float = BAND_START, f_stop: float = BAND_STOP,
               points: int = BAND_POINTS) -> BandEdges:
    """Mid-band gain, exact corners and time-constant estimates of a terminated stage.

    Parameters
    ----------
    stage : Stage
        The stage (scalar element values), usually with a
        :class:`~devmodels.stagenetwork.StageNetwork`.
    rs, rl : complex
        Source and load impedances in ohm (``rl`` may be ``math.inf``: open load); the
        estimates use their real parts (module docstring).
    f_start, f_stop : float
        Search range of the exact corners in Hz, 0 < f_start < f_stop (default 1 mHz to 1 THz).
    points : int
        Points of the coarse logarithmic grid (default 481, 32 per decade over the default range).

    Returns
    -------
    BandEdges

    Raises
    ------
    InputError
        A bad range or termination.
    SingularParameterError
        The mid-band gain is unbounded with this termination.

    Examples
    --------
    >>> import devmodels as dm
    >>> from devmodels.stagenetwork import StageNetwork
    >>> m = dm.HybridPi(gm=0.04, r_pi=2.5e3, ro=50e3, rb=100.0, c_pi=20e-12, c_mu=2e-12)
    >>> net = StageNetwork("divider", r1=47e3, r2=10e3, rc=4.7e3, re=1e3, c_in=1e-6,
    ...                    c_out=1e-6, c_bypass=47e-6)
    >>> band = band_edges(dm.Stage(m, "ce", network=net), 600.0, 10e3)
    >>> band.low_terms[0].name       # the bypass capacitor sets the low corner
    'c_bypass'
    """
    if not (0 < f_start < f_stop) or not (math.isfinite(f_start) and math.isfinite(f_stop)):
        raise InputError(f"start: expected 0 < start < stop, got {f_start:g} Hz and {f_stop:g} Hz")
    mid = midband_avs(stage, rs, rl)
    low_terms = sctc_terms(stage, rs, rl)
    high_terms = octc_terms(stage, rs, rl)
    f_low, f_high, f_mid, peak_db = pass_band(avs_function(stage, rs, rl), mid, f_start, f_stop, points,
                                              low=bool(low_terms))
    return BandEdges(midband_avs=mid, f_low=f_low, f_high=f_high, f_low_sctc=_estimate_low(low_terms),
                     bandwidth_octc=_estimate_high(high_terms), low_terms=low_terms, high_terms=high_terms,
                     f_mid=f_mid, peak_db=peak_db, f_range=(float(f_start), float(f_stop)))

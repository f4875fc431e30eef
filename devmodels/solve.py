"""Solving for a target: the value of one design variable that makes one result of a stage meet a target.

The variable is anything a caller can build a :class:`~devmodels.stage.Stage` from (a bias
current, a degeneration or feedback resistor, a network resistor, a coupling capacitor):
:func:`solve_target` only sees ``build_stage(x) -> Stage``.  The result is one of

* ``av``, ``avs``, ``zin``, ``zout``: magnitudes of the terminated analysis
  (:func:`devmodels.analysis.terminate`) at one frequency;
* ``f_low``, ``bandwidth``: the exact -3 dB corners of :func:`devmodels.band.band_edges` in Hz.

The search works on ``g(x) = ln(result(x) / target)`` over ``ln x``.  A scan brackets the sign
changes of ``g``:

1. a logarithmic grid of :data:`SCAN_POINTS` values between the bounds;
2. **edges**: where the result exists at one grid value and not at the next (a trial value the
   stage refuses, e.g. an emitter resistor smaller than its bypassed part, or a bias point out
   of the active region), the edge is found by bisection in ``ln x`` to :data:`EDGE_TOL`; the
   bisection values cluster geometrically toward the edge, so a result that changes fast just
   inside it (a nearly fully bypassed emitter resistor) is sampled there;
3. **refinement**: an interval of the grid across which the result changes by more than a
   factor :data:`REFINE_RATIO` is halved, until it does not or it is narrower than
   :data:`REFINE_WIDTH` (at most :data:`REFINE_BUDGET` more values);
4. **extremes**: at every value of the grid that is larger (or smaller) than both its
   neighbours, the local maximum (minimum) is located by a golden-section search in ``ln x``
   (Kiefer 1953), so the reported range holds the true extreme and a target that only the
   peak reaches is bracketed.

The bracket nearest the present value is then closed by Brent's method (Brent 1973, Algorithms
for Minimization without Derivatives, ch. 4: inverse quadratic interpolation with bisection as
a safeguard) to a relative width of 1e-9 in ``x``.  A target outside the range of the scanned
values raises :class:`UnreachableTarget` with that range and the interval of the variable
where the result exists (both over the scanned values: a feature narrower than the refined
grid, away from an edge and from a detected extreme, can still be missed).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Callable

import numpy as np

from .exceptions import DevModelsError, InputError

__all__ = ["RESULTS", "UNITS", "SEARCH_BOUNDS", "search_interval", "Solution", "UnreachableTarget", "result_of",
           "solve_target"]

#: Results that can be solved for, and their units.
UNITS = {"av": "", "avs": "", "zin": "Ohm", "zout": "Ohm", "f_low": "Hz", "bandwidth": "Hz"}
RESULTS = tuple(UNITS)
#: The searched interval of a variable by its unit (SI): resistors 1 ohm to 10 Mohm, capacitors
#: 1 pF to 1 F, bias currents 1 uA to 100 mA.  A present value outside it widens it.
SEARCH_BOUNDS = {"Ohm": (1.0, 1e7), "F": (1e-12, 1.0), "A": (1e-6, 0.1)}
#: Points of the first grid of the bracketing scan (over the whole interval, logarithmic).
SCAN_POINTS = 49
#: Relative width in x at which the root search stops.
XTOL = 1e-9
#: Width in ln x to which the edge of the region where the result exists is located.
EDGE_TOL = 1e-10
#: An interval of the scan across which the result changes by more than this factor is halved ...
REFINE_RATIO = 2.0
#: ... while it is wider than this (in ln x) ...
REFINE_WIDTH = 1e-6
#: ... and at most this many extra values are spent on it.
REFINE_BUDGET = 200
#: Local extremes of the scan located by golden-section search, at most.
MAX_EXTREMA = 8
#: Width in ln x to which a local extreme is located.
EXTREME_TOL = 1e-7
#: A scanned value is a local extreme when it exceeds (or falls below) both neighbours by this fraction.
EXTREME_RISE = 1e-9


def search_interval(unit: str, present: float | None = None) -> tuple[float, float]:
    """The interval to search a variable in ``unit`` (``Ohm``, ``F``, ``A``) over: :data:`SEARCH_BOUNDS`,
    widened to a decade beyond a present value that lies outside it."""
    try:
        lo, hi = SEARCH_BOUNDS[unit]
    except KeyError:
        raise InputError(f"solve: no search interval for a value in {unit!r}; expected one of "
                         f"{', '.join(SEARCH_BOUNDS)}") from None
    if present is not None and math.isfinite(present) and present > 0:
        lo, hi = min(lo, present / 10), max(hi, present * 10)
    return lo, hi


class UnreachableTarget(InputError):
    """The target lies outside the range of the result over the scanned values.

    Attributes
    ----------
    reachable : (float, float) or None
        Smallest and largest result over the scanned values (None: no value has a result).
    exists : (float, float) or None
        Smallest and largest scanned value of the variable that has a result (SI).
    scanned : int
        Number of scanned values that have a result.
    """

    def __init__(self, message: str, reachable: tuple[float, float] | None,
                 exists: tuple[float, float] | None = None, scanned: int = 0) -> None:
        super().__init__(message)
        self.reachable = reachable
        self.exists = exists
        self.scanned = scanned


@dataclass(frozen=True, slots=True)
class Solution:
    """Result of :func:`solve_target`.

    Attributes
    ----------
    value : float
        The solved value of the variable (SI).
    achieved : float
        The result at ``value``.
    result, target : str, float
        What was solved for.
    roots : int
        Number of sign changes the scan found (> 1: several values meet the target; ``value``
        is the one nearest the present value).
    candidates : tuple of float
        Approximate positions of all the roots (bracket midpoints), ascending.
    interval : (float, float)
        The searched interval of the variable.
    evaluations : int
        Stages analysed.
    """

    value: float
    achieved: float
    result: str
    target: float
    roots: int
    candidates: tuple[float, ...]
    interval: tuple[float, float]
    evaluations: int


def _check_result(result: str) -> str:
    r = str(result).strip().lower()
    if r not in UNITS:
        raise InputError(f"target: unknown result {result!r}; expected one of {', '.join(RESULTS)}")
    return r


def result_of(stage, result: str, freq: float = 1e3, rs=50.0, rl=1e3) -> float:
    """One result of ``stage`` as a real number (NaN where it does not exist).

    Parameters
    ----------
    stage : Stage
    result : str
        ``av``, ``avs``, ``zin``, ``zout`` (magnitudes at ``freq``, V/V or ohm) or ``f_low``,
        ``bandwidth`` (Hz; ``freq`` is not used).
    freq : float
        Frequency of the terminated analysis in Hz.
    rs, rl : complex
        Source and load impedances in ohm (``rl`` may be ``math.inf``).
    """
    result = _check_result(result)
    if result in ("f_low", "bandwidth"):
        from .band import band_edges

        band = band_edges(stage, rs, rl)
        v = band.f_low if result == "f_low" else band.f_high
        return math.nan if v is None else float(v)
    from .analysis import terminate

    with np.errstate(all="ignore"):
        res = terminate(stage.two_port(np.array([float(freq)]), "y"), rs, rl)
        v = float(np.abs(getattr(res, result)[0]))
    return v if math.isfinite(v) else math.nan


def _brent(g: Callable[[float], float], a: float, b: float, ga: float, gb: float, tol: float,
           maxiter: int = 200) -> tuple[float, int]:
    """A root of ``g`` in [a, b] (ga, gb of opposite signs) to absolute width ``tol``; and the calls made."""
    calls = 0
    if ga == 0:
        return a, calls
    if gb == 0:
        return b, calls
    c, gc = a, ga
    d = e = b - a
    for _ in range(maxiter):
        if (gb > 0) == (gc > 0):
            c, gc = a, ga
            d = e = b - a
        if abs(gc) < abs(gb):
            a, b, c = b, c, b
            ga, gb, gc = gb, gc, gb
        m = 0.5 * (c - b)
        if abs(m) <= tol or gb == 0:
            return b, calls
        if abs(e) >= tol and abs(ga) > abs(gb):
            s = gb / ga
            if a == c:
                p, q = 2 * m * s, 1 - s
            else:
                q, r = ga / gc, gb / gc
                p = s * (2 * m * q * (q - r) - (b - a) * (r - 1))
                q = (q - 1) * (r - 1) * (s - 1)
            if p > 0:
                q = -q
            p = abs(p)
            if 2 * p < min(3 * m * q - abs(tol * q), abs(e * q)):
                e, d = d, p / q
            else:
                d = e = m
        else:
            d = e = m
        a, ga = b, gb
        b += d if abs(d) > tol else math.copysign(tol, m)
        gb = g(b)
        calls += 1
        if not math.isfinite(gb):
            raise DevModelsError("solve: the result has no value inside a bracket of the search")
    return b, calls


def _ok(v: float) -> bool:
    return math.isfinite(v) and v > 0


def _scan(value_at: Callable[[float], float], u_lo: float, u_hi: float, points: int) -> tuple[np.ndarray, np.ndarray]:
    """The scanned values ``ln x`` (ascending) and the result at each (NaN: none); steps 1 to 4 of
    the module docstring."""
    pts: dict[float, float] = {}

    def at(t: float) -> float:
        t = float(t)
        if t not in pts:
            pts[t] = value_at(math.exp(t))
        return pts[t]

    grid = np.linspace(u_lo, u_hi, points)
    for t in grid:
        at(t)
    # 2. edges of the region where the result exists
    for a, b in zip(grid[:-1], grid[1:]):
        oa = _ok(pts[float(a)])
        if oa == _ok(pts[float(b)]):
            continue
        while b - a > EDGE_TOL:
            m = 0.5 * (a + b)
            if _ok(at(m)) == oa:
                a = m
            else:
                b = m
    # 3. halve the intervals across which the result changes fast
    step = math.log(REFINE_RATIO)
    spent = 0
    while spent < REFINE_BUDGET:
        u = sorted(pts)
        split = []
        for a, b in zip(u[:-1], u[1:]):
            va, vb = pts[a], pts[b]
            if b - a > REFINE_WIDTH and _ok(va) and _ok(vb) and abs(math.log(vb / va)) > step:
                split.append(0.5 * (a + b))
        if not split:
            break
        for m in split[:REFINE_BUDGET - spent]:
            at(m)
        spent += len(split)
    # 4. locate the local extremes between scanned values
    u = sorted(pts)
    v = [pts[t] for t in u]
    found = 0
    for i in range(1, len(u) - 1):
        if found >= MAX_EXTREMA:
            break
        if not (_ok(v[i - 1]) and _ok(v[i]) and _ok(v[i + 1])):
            continue
        # a bump of rounding size (a flat result) is no extreme worth locating
        hi_, lo_ = v[i] * (1 - EXTREME_RISE), v[i] * (1 + EXTREME_RISE)
        sign = 1.0 if hi_ > v[i - 1] and hi_ > v[i + 1] else -1.0 if lo_ < v[i - 1] and lo_ < v[i + 1] else 0.0
        if sign:
            _golden(lambda t, s=sign: s * math.log(at(t)) if _ok(at(t)) else -math.inf, u[i - 1], u[i + 1])
            found += 1
    u = sorted(pts)
    return np.array(u), np.array([pts[t] for t in u])


def _golden(f: Callable[[float], float], a: float, b: float) -> None:
    """Golden-section search for a maximum of ``f`` on [a, b] to width :data:`EXTREME_TOL`
    (Kiefer 1953); the caller keeps the values it evaluates."""
    r = (math.sqrt(5.0) - 1.0) / 2.0
    c, d = b - r * (b - a), a + r * (b - a)
    fc, fd = f(c), f(d)
    while b - a > EXTREME_TOL:
        if fc >= fd:
            b, d, fd = d, c, fc
            c = b - r * (b - a)
            fc = f(c)
        else:
            a, c, fc = c, d, fd
            d = a + r * (b - a)
            fd = f(d)


def solve_target(build_stage: Callable[[float], object], result: str, target: float, freq: float = 1e3,
                 rs=50.0, rl=1e3, lo: float = 1.0, hi: float = 1e7, present: float | None = None,
                 points: int = SCAN_POINTS) -> Solution:
    """The value of a variable in [lo, hi] at which ``result`` equals ``target``.

    Parameters
    ----------
    build_stage : callable
        ``x -> Stage``: the stage with the variable set to ``x`` (SI).  A :class:`DevModelsError`
        it raises at a trial value (a bias point out of the active region, ...) counts as no
        result there; if it fails at every trial value, its first error is raised.
    result : str
        One of :data:`RESULTS` (module docstring).
    target : float
        The wanted value: a magnitude (``av``, ``avs``, ``zin``, ``zout``) or a frequency in Hz.
    freq, rs, rl
        As for :func:`result_of`.
    lo, hi : float
        The searched interval, 0 < lo < hi.
    present : float, optional
        The variable's present value: of several roots, the one nearest it (on a log scale) is
        taken (default: the geometric mean of lo and hi).
    points : int
        Points of the first, logarithmic grid of the scan (at least 3); the scan adds values at
        edges, steep intervals and extremes (module docstring).

    Returns
    -------
    Solution

    Raises
    ------
    UnreachableTarget
        No scanned value in [lo, hi] brackets the target; the message gives the range of the
        result over the scanned values and the interval where it exists.
    InputError
        A bad result name, target or interval.
    """
    result = _check_result(result)
    target = float(target)
    if not (math.isfinite(target) and target > 0):
        raise InputError(f"target: expected a value > 0 for {result}, got {target:g}")
    if not (0 < lo < hi and math.isfinite(hi)):
        raise InputError(f"solve: expected an interval 0 < lo < hi, got {lo:g} to {hi:g}")
    points = max(3, int(points))
    first_error: list[Exception] = []
    calls = [0]

    def value_at(x: float) -> float:
        calls[0] += 1
        try:
            return result_of(build_stage(float(x)), result, freq, rs, rl)
        except DevModelsError as exc:
            if not first_error:
                first_error.append(exc)
            return math.nan

    def g(u: float) -> float:
        v = value_at(math.exp(u))
        return math.log(v / target) if v > 0 else math.nan

    u, vals = _scan(value_at, math.log(lo), math.log(hi), points)
    ok = np.isfinite(vals) & (vals > 0)
    if not ok.any():
        if first_error:
            raise first_error[0]
        raise UnreachableTarget(f"target: {result} has no value anywhere in the searched interval "
                                f"{lo:g} to {hi:g}", None)
    with np.errstate(all="ignore"):
        gv = np.where(ok, np.log(np.where(ok, vals, 1.0) / target), np.nan)
    reach = (float(np.min(vals[ok])), float(np.max(vals[ok])))
    first, last = int(np.flatnonzero(ok)[0]), int(np.flatnonzero(ok)[-1])
    exists = (float(lo) if first == 0 else math.exp(float(u[first])),
              float(hi) if last == len(u) - 1 else math.exp(float(u[last])))
    brackets = []
    for i in range(len(u) - 1):
        if ok[i] and ok[i + 1] and (gv[i] == 0 or (gv[i] > 0) != (gv[i + 1] > 0)):
            if gv[i] == 0 and i > 0 and brackets and brackets[-1][1] == i:
                continue
            brackets.append((i, i + 1))
    if not brackets:
        n_ok = int(np.count_nonzero(ok))
        raise UnreachableTarget(f"target: {result} = {target:g} is not reachable; it has a value for "
                                f"{exists[0]:.6g} to {exists[1]:.6g} (searched {lo:g} to {hi:g}) and ranges "
                                f"from {reach[0]:.6g} to {reach[1]:.6g} over the {n_ok} values scanned there",
                                reach, exists, n_ok)
    ref = math.log(present) if present is not None and present > 0 else 0.5 * (u[0] + u[-1])
    mids = [0.5 * (u[i] + u[j]) for i, j in brackets]
    k = int(np.argmin([abs(m - ref) for m in mids]))
    i, j = brackets[k]
    tol = XTOL / 2  # an absolute width in ln x is a relative width in x
    root, n = _brent(g, float(u[i]), float(u[j]), float(gv[i]), float(gv[j]), tol)
    value = math.exp(root)
    achieved = value_at(value)
    return Solution(value=value, achieved=achieved, result=result, target=target, roots=len(brackets),
                    candidates=tuple(math.exp(m) for m in mids), interval=(float(lo), float(hi)),
                    evaluations=calls[0])

"""Solving for a target: the value of one design variable that makes one result of a stage meet a target.

The variable is anything a caller can build a :class:`~devmodels.stage.Stage` from (a bias
current, a degeneration or feedback resistor, a network resistor, a coupling capacitor):
:func:`solve_target` only sees ``build_stage(x) -> Stage``.  The result is one of

* ``av``, ``avs``, ``zin``, ``zout``: magnitudes of the terminated analysis
  (:func:`devmodels.analysis.terminate`) at one frequency;
* ``f_low``, ``bandwidth``: the exact -3 dB corners of :func:`devmodels.band.band_edges` in Hz.

The search works on ``g(x) = ln(result(x) / target)`` over ``ln x``: a scan of a logarithmic
grid between the bounds brackets the sign changes of ``g``; the bracket nearest the present
value is then closed by Brent's method (inverse quadratic interpolation with bisection as a
safeguard) to a relative width of 1e-9 in ``x``.  A target outside the range the scan reaches
raises :class:`UnreachableTarget` with that range.
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
#: Points of the bracketing scan (over the whole interval, logarithmic).
SCAN_POINTS = 49
#: Relative width in x at which the root search stops.
XTOL = 1e-9


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
    """The target lies outside the range of the result over the searched interval."""

    def __init__(self, message: str, reachable: tuple[float, float] | None) -> None:
        super().__init__(message)
        self.reachable = reachable


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
        Points of the bracketing scan (at least 3).

    Returns
    -------
    Solution

    Raises
    ------
    UnreachableTarget
        No value in [lo, hi] meets the target; the message gives the reachable range.
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

    u = np.linspace(math.log(lo), math.log(hi), points)
    vals = np.array([value_at(math.exp(t)) for t in u])
    ok = np.isfinite(vals) & (vals > 0)
    if not ok.any():
        if first_error:
            raise first_error[0]
        raise UnreachableTarget(f"target: {result} has no value anywhere in the searched interval "
                                f"{lo:g} to {hi:g}", None)
    with np.errstate(all="ignore"):
        gv = np.where(ok, np.log(np.where(ok, vals, 1.0) / target), np.nan)
    reach = (float(np.min(vals[ok])), float(np.max(vals[ok])))
    brackets = []
    for i in range(points - 1):
        if ok[i] and ok[i + 1] and (gv[i] == 0 or (gv[i] > 0) != (gv[i + 1] > 0)):
            if gv[i] == 0 and i > 0 and brackets and brackets[-1][1] == i:
                continue
            brackets.append((i, i + 1))
    if not brackets:
        raise UnreachableTarget(f"target: {result} = {target:g} is not reachable; over {lo:g} to {hi:g} it "
                                f"ranges from {reach[0]:.6g} to {reach[1]:.6g}", reach)
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

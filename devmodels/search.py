"""The frequency where a quantity crosses a level: a bracketed search on a logarithmic grid.

Used by :mod:`devmodels.merit` (fT, f_beta, fmax, bandwidth) and :mod:`devmodels.band` (the
low and high -3 dB corners).
"""

from __future__ import annotations

import math
from typing import Callable

import numpy as np

from .exceptions import InputError

__all__ = ["crossing", "GRID_POINTS"]

#: Points of the coarse logarithmic grid of a search.
GRID_POINTS = 241
#: Points and rounds of the refinement of the bracketing interval, and the width (in ln f) at
#: which it stops.
_REFINE_POINTS, _REFINE_ROUNDS, _REFINE_WIDTH = 33, 10, 1e-12


def crossing(fn: Callable[[np.ndarray], np.ndarray], level: float, f_lo: float, f_hi: float,
             points: int = GRID_POINTS, *, rising: bool = False) -> float | None:
    """The frequency in [f_lo, f_hi] where ``fn`` crosses ``level``, by a bracketed search.

    Falling (default): the first frequency, going up from ``f_lo``, where ``fn`` falls from
    above the level to it or below.  Rising: the last frequency below ``f_hi`` where ``fn``
    rises from the level or below to above it (the same search, going down from ``f_hi``):
    the low corner of a band whose mid-band point is ``f_hi``.

    The quantity is evaluated on a logarithmic grid in one call; the first grid interval
    (walking from the start) where it crosses is refined on small logarithmic grids until it
    is 1e-12 wide in ln f (a short loop over refinements, not over frequencies), and the
    crossing is interpolated linearly in ln f inside it.

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
    rising : bool
        Search for a rising crossing, nearest ``f_hi``.

    Returns
    -------
    float or None
        The frequency in Hz, or None when ``fn`` is not above the level at the start of the
        walk (``f_lo``; ``f_hi`` when rising) or does not reach it by its end.
    """
    if not (0 < f_lo < f_hi) or not (math.isfinite(f_lo) and math.isfinite(f_hi)):
        raise InputError(f"range: expected 0 < start < stop, got {f_lo:g} Hz and {f_hi:g} Hz")

    def first_below(grid):
        up = grid[0] <= grid[-1]  # fn always sees increasing frequencies
        with np.errstate(invalid="ignore"):
            values = np.asarray(fn(grid if up else grid[::-1]), dtype=float)
            below = (values if up else values[::-1]) <= level
        idx = np.flatnonzero(below)
        return None if idx.size == 0 else int(idx[0])

    grid = np.geomspace(f_hi, f_lo, points) if rising else np.geomspace(f_lo, f_hi, points)
    i = first_below(grid)
    if i is None or i == 0:
        return None
    a, b = grid[i - 1], grid[i]  # fn(a) above the level, fn(b) at or below it
    for _ in range(_REFINE_ROUNDS):
        if abs(math.log(b / a)) <= _REFINE_WIDTH:
            break
        sub = np.geomspace(a, b, _REFINE_POINTS)
        j = first_below(sub)
        if j is None or j == 0:  # not monotonic inside the interval: keep what we have
            break
        a, b = sub[j - 1], sub[j]
    ya, yb = (float(v) for v in (fn(np.array([a, b])) if a < b else fn(np.array([b, a]))[::-1]))
    if not (math.isfinite(ya) and math.isfinite(yb)) or ya == yb:
        return float(math.sqrt(a * b))
    t = min(max((ya - level) / (ya - yb), 0.0), 1.0)
    return float(math.exp(math.log(a) + t * (math.log(b) - math.log(a))))

"""Preferred numbers for resistors: the E12, E24, E48 and E96 series of IEC 60063.

IEC 60063 (*Preferred number series for resistors and capacitors*) lists, for each series
``En``, ``n`` values per decade that are roughly equally spaced on a logarithmic scale
(about :math:`10^{i/n}`, rounded to two significant digits for E12 and E24 and to three for
E48 and E96).  The lists below are the values written in the standard, not the rounded
formula: E24 (and hence E12) keeps the historical values 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7
and 8.2 where :math:`10^{i/24}` rounds to 2.6, 2.9, 3.2, 3.5, 3.8, 4.2, 4.6 and 8.3.

Every function works across decades: the series repeats with a factor of ten, so E24 holds
..., 9.1, 10, 11, ..., 91, 100, 110, ...  Values are floats in any unit (ohm for resistors);
each is the double closest to the decimal value (``4.7e3``, not ``47 * 100.0``).
"""

from __future__ import annotations

import math

import numpy as np

from .exceptions import InputError

__all__ = ["SERIES", "series_values", "check_series", "nearest", "neighbours", "values_between",
           "step_ratio"]

#: The values of one decade of each series as written in IEC 60063 (integers: E12 and E24
#: with two significant digits, 10..91; E48 and E96 with three, 100..976).
SERIES: dict[str, tuple[int, ...]] = {
    "E12": (10, 12, 15, 18, 22, 27, 33, 39, 47, 56, 68, 82),
    "E24": (10, 11, 12, 13, 15, 16, 18, 20, 22, 24, 27, 30, 33, 36, 39, 43, 47, 51, 56, 62, 68, 75, 82, 91),
    "E48": (100, 105, 110, 115, 121, 127, 133, 140, 147, 154, 162, 169, 178, 187, 196, 205, 215, 226,
            237, 249, 261, 274, 287, 301, 316, 332, 348, 365, 383, 402, 422, 442, 464, 487, 511, 536,
            562, 590, 619, 649, 681, 715, 750, 787, 825, 866, 909, 953),
    "E96": (100, 102, 105, 107, 110, 113, 115, 118, 121, 124, 127, 130, 133, 137, 140, 143, 147, 150,
            154, 158, 162, 165, 169, 174, 178, 182, 187, 191, 196, 200, 205, 210, 215, 221, 226, 232,
            237, 243, 249, 255, 261, 267, 274, 280, 287, 294, 301, 309, 316, 324, 332, 340, 348, 357,
            365, 374, 383, 392, 402, 412, 422, 432, 442, 453, 464, 475, 487, 499, 511, 523, 536, 549,
            562, 576, 590, 604, 619, 634, 649, 665, 681, 698, 715, 732, 750, 768, 787, 806, 825, 845,
            866, 887, 909, 931, 953, 976),
}

# A value this close (relative) to a member counts as that member (floats from arithmetic).
_SAME = 1e-9


def check_series(series: str) -> str:
    """The canonical name of ``series`` (``'e24'`` -> ``'E24'``).

    Parameters
    ----------
    series : str
        A series name, any case: E12, E24, E48 or E96.

    Returns
    -------
    str

    Raises
    ------
    InputError
        ``series: unknown series 'E7'; expected one of E12, E24, E48, E96``.
    """
    name = series.strip().upper() if isinstance(series, str) else None
    if name not in SERIES:
        raise InputError(f"series: unknown series {series!r}; expected one of {', '.join(SERIES)}")
    return name


def step_ratio(series: str) -> float:
    """The nominal ratio of neighbouring values, :math:`10^{1/n}` (E24: about 1.10).

    Parameters
    ----------
    series : {'E12', 'E24', 'E48', 'E96'}
        The series ``En``.
    """
    return 10.0 ** (1.0 / len(SERIES[check_series(series)]))


def _check_value(value, name: str = "value") -> float:
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InputError(f"{name}: expected a positive number, got {value!r}") from None
    if not (math.isfinite(v) and v > 0):
        raise InputError(f"{name}: expected a positive finite number for a preferred value, got {value!r}")
    return v


def _member(digits: int, decade: int, ndig: int) -> float:
    """``digits`` (e.g. 47) times 10**(decade - ndig + 1), as the double nearest the decimal."""
    return float(f"{digits}e{decade - ndig + 1}")


def series_values(series: str, decade: int) -> list[float]:
    """The values of ``series`` in the decade [10**decade, 10**(decade+1)), ascending.

    Parameters
    ----------
    series : {'E12', 'E24', 'E48', 'E96'}
    decade : int
        Power of ten of the decade's first value (``3`` gives 1k .. 9.1k for E24).
    """
    name = check_series(series)
    digits = SERIES[name]
    ndig = len(str(digits[0]))
    return [_member(d, decade, ndig) for d in digits]


def _around(v: float, name: str) -> list[float]:
    """Members of the decades below, of and above ``v`` (ascending)."""
    dec = math.floor(math.log10(v))
    out: list[float] = []
    for d in (dec - 1, dec, dec + 1):
        out += series_values(name, d)
    return out


def neighbours(value, series: str) -> tuple[float, float]:
    """The series values just below and just above ``value``.

    Parameters
    ----------
    value : float
        A positive value (any unit).
    series : {'E12', 'E24', 'E48', 'E96'}

    Returns
    -------
    (below, above) : (float, float)
        The largest member <= ``value`` and the smallest member >= ``value``; both are the
        member itself when ``value`` is one (within a relative 1e-9).
    """
    name = check_series(series)
    v = _check_value(value)
    vals = _around(v, name)
    for m in vals:
        if abs(m - v) <= _SAME * v:
            return m, m
    below = max(m for m in vals if m < v)
    above = min(m for m in vals if m > v)
    return below, above


def nearest(value, series: str) -> float:
    r"""The series value nearest to ``value`` on a logarithmic scale (smallest ratio).

    Preferred numbers are spaced by ratios, so nearest means the smallest
    :math:`|\log(m/v)|`; on an exact tie (the geometric mean of two members) the lower one.

    Parameters
    ----------
    value : float
        A positive value.
    series : {'E12', 'E24', 'E48', 'E96'}
    """
    below, above = neighbours(value, series)
    v = float(value)
    return below if math.log(v / below) <= math.log(above / v) else above


def values_between(lo, hi, series: str) -> np.ndarray:
    """Every series value in [lo, hi], ascending.

    Parameters
    ----------
    lo, hi : float
        Positive limits, ``lo <= hi`` (members within a relative 1e-9 of a limit count).
    series : {'E12', 'E24', 'E48', 'E96'}

    Returns
    -------
    ndarray
        The members (possibly none).
    """
    name = check_series(series)
    a, b = _check_value(lo, "lo"), _check_value(hi, "hi")
    if a > b:
        raise InputError(f"lo: {a:g} is above hi = {b:g}")
    if b / a > 1e30:
        raise InputError(f"hi: {b:g} is more than 30 decades above lo = {a:g}")
    out: list[float] = []
    for d in range(math.floor(math.log10(a)), math.floor(math.log10(b)) + 1):
        out += [m for m in series_values(name, d) if a * (1 - _SAME) <= m <= b * (1 + _SAME)]
    return np.array(out, dtype=float)

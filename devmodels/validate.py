"""Checks of plain numbers given to the library (one place for every dataclass)."""

from __future__ import annotations

import math

from .exceptions import InputError

__all__ = ["check_number"]


def check_number(name: str, value, unit: str, *, positive: bool = False, nonneg: bool = False,
                 optional: bool = False) -> float | None:
    """``value`` as a finite float, or an :class:`InputError` that names it.

    Parameters
    ----------
    name : str
        Name of the value, used first in the error message.
    value : number or None
        The value in SI units.
    unit : str
        Its unit, for the message.
    positive, nonneg : bool
        Require > 0, or >= 0.
    optional : bool
        Let ``None`` through (returned as ``None``).
    """
    if value is None:
        if optional:
            return None
        raise InputError(f"{name}: a value is required ({unit})")
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InputError(f"{name}: expected a number in {unit}, got {value!r}") from None
    if not math.isfinite(v):
        raise InputError(f"{name}: expected a finite value in {unit}, got {value!r}")
    if positive and v <= 0:
        raise InputError(f"{name}: expected a positive value in {unit}, got {v:g}")
    if nonneg and v < 0:
        raise InputError(f"{name}: expected a value >= 0 in {unit}, got {v:g}")
    return v

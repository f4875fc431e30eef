"""Checks of plain numbers given to the library (one place for every dataclass)."""

from __future__ import annotations

import math

from .exceptions import BiasError, InputError

__all__ = ["check_number", "p_type_magnitudes", "meta", "lead_meta"]


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


def p_type_magnitudes(names: tuple[str, str], device: str, current: float, voltage: float,
                      p_type: bool) -> tuple[float, float]:
    """Current and voltage of a bias point as magnitudes.

    A p-type device (pnp, p-channel) may give both with its negative sign; one negative
    and one positive is an error.

    Parameters
    ----------
    names : (str, str)
        Names of the current and the voltage (``("ic", "vce")``), for the message.
    device : str
        Device type, for the message.
    current, voltage : float
        The values as given, A and V.
    p_type : bool
        True for a pnp or p-channel device (n-type values are returned unchanged).
    """
    if p_type and current < 0 and voltage <= 0:
        return -current, -voltage
    if p_type and (current < 0) != (voltage < 0):
        raise BiasError(f"{names[0]}, {names[1]}: for a {device} give both as magnitudes or both "
                        f"with the {device}'s sign, got {names[0]}={current:g} A, {names[1]}={voltage:g} V")
    return current, voltage


def meta(unit: str, help: str, lo: float, hi: float, *, zero: bool = True, key: str | None = None) -> dict:
    """Field metadata of a bias dataclass: the schema of one input (see :mod:`devmodels.schema`).

    Parameters
    ----------
    unit : str
        Unit key of :data:`devmodels.units.UNITS` (``'K'`` a temperature, ``'str'`` text).
    help : str
        One line for the option's help and the bias-file documentation.
    lo, hi : float
        Physical range of the magnitude in SI units; values outside it are input errors.
    zero : bool
        Whether 0 passes the range check (the dataclass still decides what 0 means).
    key : str, optional
        The bias-file key and option name when it differs from the field name
        (``lambda`` for ``lambda_``).
    """
    return {"schema": {"unit": unit, "help": help, "lo": lo, "hi": hi, "zero": zero, "key": key}}


def lead_meta(terminal: str, example: str = "") -> dict:
    """Field metadata of a lead inductance (one text for every device's leads).

    Parameters
    ----------
    terminal : str
        The terminal's name (``base``, ``gate``, ...).
    example : str
        An example value for the help text (``1.2nH``), or empty.
    """
    eg = f" (e.g. {example})" if example else ""
    return meta("H", f"{terminal.capitalize()} lead inductance, H{eg}, in series with the {terminal} terminal "
                "(default 0).", 1e-15, 1e-3)


"""Reading and showing quantities with SI prefixes and units (the edges of the library).

The library itself works in plain SI floats; these helpers are for the command line
and for files.  Parsing uses quantiphy; a unit that contradicts the expected one is
an error (``--ic 5V``).
"""

from __future__ import annotations

import math
import re

from .exceptions import InputError

__all__ = ["parse_quantity", "parse_temperature", "parse_complex", "format_si", "format_complex",
           "UNIT_ALIASES"]

#: Accepted spellings of each unit (case-sensitive where SI is).
UNIT_ALIASES: dict[str, tuple[str, ...]] = {
    "A": ("A", "amp", "amps"),
    "V": ("V", "volt", "volts"),
    "Hz": ("Hz", "hz"),
    "F": ("F",),
    "Ohm": ("Ohm", "ohm", "Ohms", "ohms", "Ω", "R"),
    "S": ("S", "mho"),
    "W": ("W",),
    "K": ("K",),
    "%": ("%",),
    "": ("",),
}

_NUMBER = re.compile(r"^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$")


def parse_quantity(text, unit: str, name: str) -> float:
    """Parse ``text`` (``'2.2k'``, ``'1 mA'``, ``'300MHz'``, a number) as a value in ``unit``.

    Parameters
    ----------
    text : str or float
        The value as given; numbers are passed through.
    unit : str
        Expected unit key of :data:`UNIT_ALIASES` (``''`` for dimensionless).
    name : str
        Option or key name, used in error messages.

    Returns
    -------
    float
        The value in SI units.
    """
    if isinstance(text, bool):
        raise InputError(f"{name}: expected a number{_in(unit)}, got {text!r}")
    if isinstance(text, (int, float)):
        v = float(text)
    else:
        s = str(text).strip()
        if not s:
            raise InputError(f"{name}: expected a number{_in(unit)}, got an empty value")
        fast = _fast_quantity(s, unit)
        if fast is not None:
            v = fast
        else:
            from quantiphy import Quantity, QuantiPhyError

            try:
                q = Quantity(s)
            except (QuantiPhyError, ValueError):
                raise InputError(f"{name}: cannot read {s!r} as a number{_in(unit)} "
                                 "(examples: 1mA, 2.2k, 300MHz, 1e-3)") from None
            got = q.units or ""
            if got and got not in UNIT_ALIASES.get(unit, (unit,)):
                want = f"a value in {unit}" if unit else "a dimensionless number"
                raise InputError(f"{name}: {s!r} is in {got}, expected {want}")
            v = float(q)
    if not math.isfinite(v):
        raise InputError(f"{name}: expected a finite number{_in(unit)}, got {text!r}")
    return v


_SI_PREFIX = {"y": 1e-24, "z": 1e-21, "a": 1e-18, "f": 1e-15, "p": 1e-12, "n": 1e-9, "u": 1e-6,
              "\u00b5": 1e-6, "\u03bc": 1e-6, "m": 1e-3, "k": 1e3, "K": 1e3, "M": 1e6, "G": 1e9,
              "T": 1e12, "P": 1e15, "E": 1e18}
_PREFIXED = re.compile(r"^([+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?)\s*(.*)$")


def _fast_quantity(s: str, unit: str) -> float | None:
    """The common forms (``1e-3``, ``2.2k``, ``1 mA``, ``2.2kohm``) without loading quantiphy.

    Returns None for anything else, which then goes to quantiphy (and its error messages).
    """
    m = _PREFIXED.match(s)
    if not m:
        return None
    num, rest = m.groups()
    aliases = UNIT_ALIASES.get(unit, (unit,))
    if rest == "" or (rest in aliases and rest):
        return float(num)
    if rest[0] in _SI_PREFIX and (rest[1:] == "" or rest[1:] in aliases):
        return float(num) * _SI_PREFIX[rest[0]]
    return None


def _in(unit: str) -> str:
    return f" in {unit}" if unit else ""


_TEMP = re.compile(r"^\s*([+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?)\s*(K|C|degC|°C|degK)?\s*$")


def parse_temperature(text, name: str = "temp") -> float:
    """Parse a temperature: kelvin by default (``300``, ``300K``); ``27C``/``27degC`` Celsius.

    Returns
    -------
    float
        Temperature in K (must be above 0 K).
    """
    if isinstance(text, (int, float)) and not isinstance(text, bool):
        k = float(text)
    else:
        m = _TEMP.match(str(text))
        if not m:
            raise InputError(f"{name}: cannot read {text!r} as a temperature "
                             "(examples: 300, 300K, 27C, 27degC)")
        k = float(m.group(1))
        if m.group(2) in ("C", "degC", "°C"):
            k += 273.15
    if not math.isfinite(k) or k <= 0:
        raise InputError(f"{name}: expected a temperature above 0 K, got {text!r}")
    return k


def parse_complex(text, name: str) -> complex:
    """Parse a possibly complex value: ``1.2e-3+4e-4j``, ``-3j``, ``2.2k``, ``50``."""
    if isinstance(text, (int, float, complex)) and not isinstance(text, bool):
        z = complex(text)
    else:
        s = str(text).strip().replace(" ", "")
        try:
            z = complex(s.replace("i", "j")) if s.endswith(("j", "i")) or "j" in s else complex(s)
        except ValueError:
            z = complex(parse_quantity(s, "", name)) if not any(c in s for c in "ji") else None
            if z is None:
                raise InputError(f"{name}: cannot read {text!r} as a complex number "
                                 "(example: 1.2e-3+4e-4j)") from None
    if not (math.isfinite(z.real) and math.isfinite(z.imag)):
        raise InputError(f"{name}: expected a finite value, got {text!r}")
    return z


def format_si(value: float | None, unit: str = "", digits: int = 4) -> str:
    """Show ``value`` with an SI prefix: ``format_si(2635.2, 'Ω')`` -> ``'2.635 kΩ'``.

    ``None`` and infinities are shown as ``'open'``/``'unbounded'`` by the caller;
    here ``None`` gives ``'—'``.
    """
    if value is None:
        return "—"
    if not math.isfinite(value):
        return "unbounded"
    if value == 0:
        return f"0 {unit}".rstrip()
    if not unit:  # dimensionless: plain numbers read better than prefixes
        return f"{value:.{digits}g}"
    a = abs(value)
    if 1e-18 <= a < 1e18:
        exp3 = int(math.floor(math.log10(a) / 3))
        exp3 = max(-6, min(5, exp3))
        prefix = "afpnµm kMGTPE"[exp3 + 6].strip()
        mant = value / 10 ** (3 * exp3)
        txt = f"{mant:.{digits}g}"
        if ("e" in txt or abs(float(txt)) >= 1000) and exp3 < 5:  # rounding reached the next prefix
            return format_si(float(txt) * 10 ** (3 * exp3), unit, digits)
        return f"{txt} {prefix}{unit}".rstrip()
    return f"{value:.{digits}g} {unit}".rstrip()


def format_complex(z: complex, unit: str = "", digits: int = 4, polar: bool = False) -> str:
    """Show a complex value as ``re ± j im unit`` or, with ``polar``, ``|z| ∠ deg``."""
    if polar:
        return f"{format_si(abs(z), unit, digits)} ∠ {math.degrees(math.atan2(z.imag, z.real)):.2f}°"
    re_, im = z.real, z.imag
    if im == 0:
        return format_si(re_, unit, digits)
    sign = "-" if im < 0 else "+"
    if re_ == 0:
        return f"{sign}j{format_si(abs(im), unit, digits)}".lstrip("+")
    return f"{format_si(re_, unit, digits)} {sign} j{format_si(abs(im), unit, digits)}"

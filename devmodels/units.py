"""Reading and showing quantities with SI prefixes and units (the edges of the library).

The library itself works in plain SI floats; these parsers are for the command line and
for files, one of each kind: :func:`parse_quantity` (``1mA``, ``1 mA``, ``2.2k``,
``2.2kohm``, ``300MHz``, ``25u``), :func:`parse_temperature` (kelvin unless written in
Celsius), :func:`parse_complex` and :func:`parse_impedance` (``50+j10``, ``1k-j200``,
``open``), :func:`parse_count` (``1e6``).  They accept exactly one value: trailing text,
NaN, infinities, empty values and booleans are errors, a unit that contradicts the
expected one is an error, and a unit in the wrong case gets a hint (``1ma`` -> ``1mA``).

The grammar is small and written here rather than handed to quantiphy: quantiphy also
reads ``name = value`` forms and trailing comments, which made ``--ic "ic=1mA"`` a valid
current.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

from .exceptions import InputError

__all__ = ["UNITS", "Unit", "Bounds", "parse_quantity", "parse_temperature", "parse_complex",
           "parse_impedance", "parse_count", "check_bounds", "temperature_warning", "shown",
           "format_si", "format_complex", "type_name", "SHOWN_CHARS"]

#: Longest bad value quoted in full in an error message (longer ones are shortened).
SHOWN_CHARS = 80


@dataclass(frozen=True, slots=True)
class Unit:
    """A unit the parsers know.

    Attributes
    ----------
    aliases : tuple of str
        Accepted spellings after the number and SI prefix (case-sensitive).
    metavar : str
        Shown for options in this unit in ``--help`` (``AMPERE``).
    symbol : str
        Display symbol (``A``, ``Ω``).
    what : str
        Words for messages (``a current in A``).
    """

    aliases: tuple[str, ...]
    metavar: str
    symbol: str
    what: str


#: Units by key (case-sensitive where SI is).  ``''`` is a dimensionless number.
UNITS: dict[str, Unit] = {
    "A": Unit(("A", "amp", "amps"), "AMPERE", "A", "a current in A"),
    "V": Unit(("V", "volt", "volts"), "VOLT", "V", "a voltage in V"),
    "Hz": Unit(("Hz",), "HZ", "Hz", "a frequency in Hz"),
    "F": Unit(("F",), "FARAD", "F", "a capacitance in F"),
    "H": Unit(("H",), "HENRY", "H", "an inductance in H"),
    "Ohm": Unit(("Ohm", "ohm", "Ohms", "ohms", "\u03a9", "\u2126", "R"), "OHM", "\u03a9", "a resistance in ohm"),
    "S": Unit(("S", "mho"), "SIEMENS", "S", "a conductance in S"),
    "W": Unit(("W",), "WATT", "W", "a power in W"),
    "K": Unit(("K",), "KELVIN", "K", "a temperature in K"),
    "%": Unit(("%",), "PERCENT", "%", "a percentage"),
    "V/K": Unit(("V/K",), "VOLT/K", "V/K", "a coefficient in V/K"),
    "%/K": Unit(("%/K",), "PERCENT/K", "%/K", "a coefficient in %/K"),
    "A/V2": Unit(("A/V2", "A/V^2", "A/V\u00b2"), "AMPERE/V\u00b2", "A/V\u00b2", "a value in A/V^2"),
    "1/V": Unit(("1/V", "/V", "V^-1"), "1/VOLT", "1/V", "a value in 1/V"),
    "V0.5": Unit(("V^0.5", "V0.5", "sqrt(V)"), "VOLT^0.5", "V^0.5", "a value in V^0.5"),
    "": Unit((), "NUMBER", "", "a number"),
}

_SI_PREFIX = {"a": 1e-18, "f": 1e-15, "p": 1e-12, "n": 1e-9, "u": 1e-6, "\u00b5": 1e-6, "\u03bc": 1e-6,
              "m": 1e-3, "k": 1e3, "K": 1e3, "M": 1e6, "G": 1e9, "T": 1e12}
_NUMBER = r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?"
_VALUE = re.compile(rf"^({_NUMBER})(\s*)(.*)$", re.S)


@dataclass(frozen=True, slots=True)
class Bounds:
    """A physical range of a quantity's magnitude: ``lo <= |v| <= hi`` (0 allowed when ``zero``).

    Attributes
    ----------
    lo, hi : float
        Smallest and largest magnitude accepted, SI units.
    zero : bool
        Whether exactly 0 is accepted as well.
    """

    lo: float
    hi: float
    zero: bool = True


def shown(text) -> str:
    """``text`` quoted for a message, shortened to about :data:`SHOWN_CHARS` characters."""
    s = str(text)
    if len(s) > SHOWN_CHARS:
        return repr(s[:SHOWN_CHARS - 24] + "\u2026" + s[-12:]) + f" ({len(s):,} characters)"
    return repr(s)


def type_name(value) -> str:
    """TOML-ish name of a value's type, for messages (``a table``, ``an array``)."""
    if isinstance(value, bool):
        return "a boolean"
    if isinstance(value, dict):
        return "a table"
    if isinstance(value, (list, tuple)):
        return "an array"
    if isinstance(value, str):
        return "text"
    if isinstance(value, (int, float)):
        return "a number"
    return f"a {type(value).__name__} (date or time)"


def _unit(unit: str) -> Unit:
    try:
        return UNITS[unit]
    except KeyError:
        raise ValueError(f"unknown unit key {unit!r}") from None


def _in(unit: str) -> str:
    return f" in {UNITS[unit].symbol}" if unit and unit in UNITS else ""


def _scale(rest: str, aliases: tuple[str, ...]) -> float | None:
    """The factor of ``rest`` (a prefix and/or one of ``aliases``), or None."""
    if rest == "" or rest in aliases:
        return 1.0
    if rest[0] in _SI_PREFIX and (rest[1:] == "" or rest[1:] in aliases):
        return _SI_PREFIX[rest[0]]
    return None


def _case_hints(rest: str, aliases: tuple[str, ...]) -> list[str]:
    """Spellings of ``rest`` in the right case (``ma`` -> ``mA``), closest case first."""
    low = rest.lower()
    out = []
    for p in [""] + list(_SI_PREFIX):
        for a in aliases + (("",) if p else ()):
            cand = p + a
            if cand and cand.lower() == low and cand != rest and cand not in out:
                out.append(cand)
    out.sort(key=lambda c: -sum(x == y for x, y in zip(c, rest)))
    return out


def _no_value(name: str, unit: str, text) -> InputError:
    if isinstance(text, bool):
        return InputError(f"{name}: expected a number{_in(unit)}, got a boolean ({str(text).lower()})")
    if not isinstance(text, (str, int, float)):
        return InputError(f"{name}: expected a number{_in(unit)}, got {type_name(text)}")
    return InputError(f"{name}: expected a number{_in(unit)}, got an empty value")


def parse_quantity(text, unit: str, name: str) -> float:
    """Parse ``text`` (``'2.2k'``, ``'1 mA'``, ``'300MHz'``, a number) as a value in ``unit``.

    Parameters
    ----------
    text : str or float
        The value as given; numbers (from TOML) are passed through when finite.
    unit : str
        Expected unit, a key of :data:`UNITS` (``''`` for a dimensionless number).
    name : str
        Option or key name, first in error messages.

    Returns
    -------
    float
        The value in SI units (a percentage as given, not as a fraction).

    Raises
    ------
    InputError
        Not exactly one finite number with an optional SI prefix and unit.
    """
    u = _unit(unit)
    if isinstance(text, bool) or not isinstance(text, (str, int, float)):
        raise _no_value(name, unit, text)
    if isinstance(text, (int, float)):
        v = float(text)
        if not math.isfinite(v):
            raise InputError(f"{name}: expected a finite number{_in(unit)}, got {text!r}")
        return v
    s = text.strip()
    if not s:
        raise _no_value(name, unit, s)
    m = _VALUE.match(s)
    if not m:
        raise InputError(f"{name}: cannot read {shown(s)} as {u.what} "
                         f"(examples: {_examples(unit)})")
    num, sep, rest = m.groups()
    factor = _scale(rest, u.aliases)
    if factor is None:
        rkm = _letter_code(num, sep, rest, unit)
        if rkm is None:
            raise _bad_unit(name, unit, s, num, sep, rest)
        num, factor = rkm
    v = float(num) * factor
    if not math.isfinite(v):
        raise InputError(f"{name}: {shown(s)} is too large to be a number")
    return v


def _letter_code(num: str, sep: str, rest: str, unit: str) -> tuple[str, float] | None:
    """The letter-and-digit code of drawings and part markings (the RKM code of IEC 60062):
    ``4k7`` = 4.7k, ``2p2`` = 2.2p, ``1M5`` = 1.5M, and for a resistance ``4R7`` = 4.7 ohm: the
    prefix letter (or R) stands where the decimal point would.  ``(number, factor)`` or None."""
    if sep or not num.isdigit() or len(rest) < 2 or not rest[1:].isdigit():
        return None
    letter = rest[0]
    if letter in _SI_PREFIX:
        return f"{num}.{rest[1:]}", _SI_PREFIX[letter]
    if letter == "R" and unit == "Ohm":
        return f"{num}.{rest[1:]}", 1.0
    return None


def _examples(unit: str) -> str:
    return {"A": "1mA, 150uA", "V": "5V, 0.7", "Hz": "10MHz, 1e6", "F": "2pF, 0.5p", "H": "1.2nH, 0.5n", "Ohm": "50, 2.2k, 4.7kohm",
            "W": "250mW", "%": "5, 5%", "V/K": "-2mV/K", "%/K": "0.5%/K", "K": "300, 300K, 27C"}.get(
        unit, "100, 2.5, 1e-3, 25u")


def _bad_unit(name: str, unit: str, s: str, num: str, sep: str, rest: str) -> InputError:
    u = UNITS[unit]
    if any(c.isspace() for c in rest) or rest.startswith(("#", "--", ";", ",", "=")):
        return InputError(f"{name}: unexpected text after the value in {shown(s)}; give one value "
                          f"{('like ' + _examples(unit)) if unit else ''}".rstrip())
    want = u.what if unit else "a dimensionless number"
    for key, other in UNITS.items():
        if key != unit and other.aliases and _scale(rest, other.aliases) is not None and rest not in _SI_PREFIX:
            return InputError(f"{name}: {shown(s)} is in {other.symbol}, expected {want}")
    hints = _case_hints(rest, u.aliases)
    if hints:
        alts = " or ".join(f"{num}{sep}{h}" for h in hints[:2])
        return InputError(f"{name}: unknown unit {rest!r} in {shown(s)}; did you mean {alts}? "
                          "(SI units and prefixes are case-sensitive: m is milli, M is mega)")
    for key, other in UNITS.items():
        if key == unit or not other.aliases:
            continue
        if _case_hints(rest, other.aliases) and rest.lower() not in _SI_PREFIX:
            return InputError(f"{name}: {shown(s)} looks like {other.symbol}, expected {want}")
    low = rest.lower()
    if low.startswith("meg"):
        tail = rest[3:]
        return InputError(f"{name}: unknown prefix 'meg' in {shown(s)}; did you mean {num}{sep}M{tail or u.symbol}? "
                          "(mega is M, milli is m)")
    return InputError(f"{name}: unknown unit or prefix {rest!r} in {shown(s)}; expected {u.what}"
                      f" (examples: {_examples(unit)})")


def check_bounds(name: str, value: float, unit: str, bounds: Bounds | None, text=None) -> float:
    """``value`` if its magnitude is within ``bounds``, else an :class:`InputError` naming ``name``.

    Parameters
    ----------
    name : str
        Name of the value, first in the message.
    value : float
        The value in SI units.
    unit : str
        Unit key of :data:`UNITS` (for the message).
    bounds : Bounds or None
        The range (None: no check).
    text : str, optional
        The value as the user wrote it (quoted in the message).
    """
    if bounds is None:
        return value
    a = abs(value)
    if a == 0 and bounds.zero:
        return value
    if not (bounds.lo <= a <= bounds.hi):
        sym = UNITS[unit].symbol if unit in UNITS else unit
        got = shown(text) if isinstance(text, str) else f"{value:g}{(' ' + sym) if sym else ''}"
        rng = f"{_bound(bounds.lo, sym)} to {_bound(bounds.hi, sym)}"
        zero = " (or 0)" if bounds.zero else ""
        raise InputError(f"{name}: {got} is outside the range {rng}{zero} this program accepts"
                         + (" (as a magnitude)" if value < 0 else ""))
    return value


def _bound(v: float, sym: str) -> str:
    return format_si(v, sym) if sym and sym not in ("%", "%/K", "K") else f"{v:g}{(' ' + sym) if sym else ''}"


# --- temperature ------------------------------------------------------------------------------------
_TEMP = re.compile(rf"^({_NUMBER})(\s*)(.*)$", re.S)
_CELSIUS = ("C", "degC", "\u00b0C", "\u2103")
_KELVIN = ("K", "degK")
#: Hard range of a temperature in K (outside it the device equations mean nothing).
TEMP_BOUNDS = Bounds(1.0, 1000.0, zero=False)
#: Junction temperatures outside this range (K) get a warning.
TEMP_USUAL = (200.0, 500.0)


def parse_temperature(text, name: str = "temp") -> float:
    """Parse a temperature: kelvin by default (``300``, ``300K``); ``27C``/``27degC`` Celsius.

    Parameters
    ----------
    text : str or float
        The temperature as written (a number is in K).
    name : str
        Option or key name, first in error messages.

    Returns
    -------
    float
        Temperature in K, within :data:`TEMP_BOUNDS`.
    """
    if isinstance(text, bool) or not isinstance(text, (str, int, float)):
        raise _no_value(name, "K", text)
    if isinstance(text, (int, float)):
        k = float(text)
    else:
        s = text.strip()
        if not s:
            raise _no_value(name, "K", s)
        m = _TEMP.match(s)
        if not m:
            raise InputError(f"{name}: cannot read {shown(s)} as a temperature (examples: 300, 300K, 27C, 27degC)")
        num, sep, rest = m.groups()
        k = float(num)
        if rest in _CELSIUS:
            k += 273.15
        elif rest not in _KELVIN and rest != "":
            hint = [c for c in _CELSIUS + _KELVIN if c.lower() == rest.lower()]
            if hint:
                raise InputError(f"{name}: unknown unit {rest!r} in {shown(s)}; did you mean {num}{sep}{hint[0]}?")
            if any(ch.isspace() for ch in rest):
                raise InputError(f"{name}: unexpected text after the value in {shown(s)}; give one "
                                 "temperature like 300, 300K or 27C")
            raise InputError(f"{name}: cannot read {shown(s)} as a temperature (kelvin: 300 or 300K; "
                             "Celsius: 27C or 27degC)")
    if not math.isfinite(k) or k <= 0:
        got = shown(text) if isinstance(text, str) else text
        raise InputError(f"{name}: expected a temperature above 0 K, got {got}")
    return check_bounds(name, k, "K", TEMP_BOUNDS, text)


def temperature_warning(name: str, text, kelvin: float) -> str | None:
    """A warning for a junction temperature outside :data:`TEMP_USUAL`, with a hint for Celsius.

    Parameters
    ----------
    name : str
        Option or key name.
    text : str or float
        The temperature as written (a plain number gets the hint ``did you mean 27C?``).
    kelvin : float
        The parsed temperature in K.

    Returns
    -------
    str or None
        The warning, or None inside the usual range.
    """
    lo, hi = TEMP_USUAL
    if lo <= kelvin <= hi:
        return None
    msg = f"{name}: {kelvin:g} K is outside {lo:g} K to {hi:g} K"
    plain = isinstance(text, (int, float)) or (isinstance(text, str) and re.fullmatch(
        rf"\s*{_NUMBER}\s*K?\s*", text) is not None)
    if plain and lo <= kelvin + 273.15 <= hi:
        num = re.sub(r"\s*K?\s*$", "", str(text).strip()) if isinstance(text, str) else f"{kelvin:g}"
        msg += f"; did you mean {num}C?"
    return msg


# --- complex values -----------------------------------------------------------------------------------
def _split_complex(s: str) -> tuple[str, str] | None:
    """``'1k-j200'`` -> ('1k', '-j200'); None when the text has no real-plus-imaginary split."""
    for k in range(len(s) - 1, 0, -1):
        if s[k] in "+-" and (s[k - 1] not in "eE" or s[k + 1:k + 2] == "j"):
            return s[:k], s[k:]
    return None


def _imag(part: str, unit: str, name: str, original: str) -> float:
    sign = -1.0 if part.startswith("-") else 1.0
    p = part.lstrip("+-")
    if p.startswith("j"):
        p = p[1:]
    elif p.endswith("j"):
        p = p[:-1]
    elif "j" in p:  # 10jkohm etc.
        raise InputError(f"{name}: cannot read {shown(original)} as a complex value (examples: 50+j10, "
                         "1k-j200, 1.2e-3+4e-4j)")
    if not p:
        raise InputError(f"{name}: the imaginary part of {shown(original)} has no value (write 50+j10, not 50+j)")
    return sign * parse_quantity(p, unit, name)


def parse_complex(text, unit: str, name: str) -> complex:
    """Parse a possibly complex value: ``50``, ``2.2k``, ``50+j10``, ``1k-j200``, ``1.2e-3+4e-4j``, ``-j3``.

    Parameters
    ----------
    text : str or number
        The value; each part may carry an SI prefix and ``unit`` (``0.4m+j0.2mS``).
    unit : str
        Unit key of :data:`UNITS`.
    name : str
        Option or key name, first in error messages.
    """
    if isinstance(text, bool) or not isinstance(text, (str, int, float, complex)):
        raise _no_value(name, unit, text)
    if isinstance(text, (int, float, complex)):
        z = complex(text)
        if not (math.isfinite(z.real) and math.isfinite(z.imag)):
            raise InputError(f"{name}: expected a finite value, got {text!r}")
        return z
    s = "".join(text.split())
    if not s:
        raise _no_value(name, unit, s)
    if "j" not in s:
        try:
            return complex(parse_quantity(s, unit, name))
        except InputError:
            if _split_complex(s) is None:
                raise
            raise InputError(f"{name}: cannot read {shown(s)} as a value; a complex value needs j on its "
                             "imaginary part (50+j10, 1k-j200)") from None
    parts = _split_complex(s)
    if parts is not None and "j" not in parts[0]:
        re_ = parse_quantity(parts[0], unit, name)
        return complex(re_, _imag(parts[1], unit, name, s))
    if parts is None or parts[0] == "":
        return complex(0.0, _imag(s, unit, name, s))
    raise InputError(f"{name}: cannot read {shown(s)} as a complex value (examples: 50+j10, 1k-j200, "
                     "1.2e-3+4e-4j)")


def parse_impedance(text, name: str, *, allow_open: bool = False, bounds: Bounds | None = None) -> complex:
    """An impedance in ohm: ``50``, ``2.2k``, ``50+j10``, ``1k-j200``; ``open`` (when allowed) is ``inf``.

    Parameters
    ----------
    text : str or number
        The impedance as written; the real part must be >= 0 (a passive termination).
    name : str
        Option name, first in error messages.
    allow_open : bool
        Accept ``open`` (an open load), returned as ``complex(inf, 0)``.
    bounds : Bounds, optional
        Range of the real and imaginary parts, ohm.
    """
    if isinstance(text, str) and text.strip().lower() == "open":
        if allow_open:
            return complex(math.inf, 0.0)
        raise InputError(f"{name}: an open source cannot drive the input; give an impedance in ohm "
                         "(examples: 50, 2.2k, 50+j10)")
    z = parse_complex(text, "Ohm", name)
    if z.real < 0:
        raise InputError(f"{name}: expected a passive impedance (real part >= 0 ohm), got {shown(text)}")
    if bounds is not None:
        check_bounds(name, z.real, "Ohm", bounds, text)
        check_bounds(name, z.imag, "Ohm", bounds, text)
    return z


def parse_count(text, name: str, maximum: int, minimum: int = 1) -> int:
    """A whole number such as ``101`` or ``1e6``, from ``minimum`` to ``maximum``.

    Parameters
    ----------
    text : str or int
        The count as written.
    name : str
        Option name, first in error messages.
    maximum, minimum : int
        Accepted range.
    """
    v = parse_quantity(text, "", name)
    if v != math.floor(v):
        raise InputError(f"{name}: expected a whole number, got {shown(text) if isinstance(text, str) else v}")
    if v < minimum or v > maximum:
        raise InputError(f"{name}: expected a whole number from {minimum} to {maximum:,}, got "
                         f"{shown(text) if isinstance(text, str) else v}"
                         + (" (the limit follows from this computer's memory)" if v > maximum else ""))
    return int(v)


# --- display ---------------------------------------------------------------------------------------
def format_si(value: float | None, unit: str = "", digits: int = 4) -> str:
    """Show ``value`` with an SI prefix: ``format_si(2635.2, 'Ω')`` -> ``'2.635 kΩ'``.

    Kelvin (``unit='K'``) is shown without a prefix (``9130 K``), as temperatures are read.

    Parameters
    ----------
    value : float or None
        The value in SI units; ``None`` gives ``'—'``, infinities ``'unbounded'``.
    unit : str
        Unit symbol appended after the prefix.
    digits : int
        Significant digits.
    """
    if value is None:
        return "—"
    if not math.isfinite(value):
        return "unbounded"
    value = value + 0.0  # no -0
    if value == 0:
        return f"0 {unit}".rstrip()
    if not unit:  # dimensionless: plain numbers read better than prefixes
        return f"{value:.{digits}g}"
    if unit == "K":  # kelvin reads without prefixes: 9130 K, not 9.13 kK
        txt = f"{value:.{digits}g}"
        if "e" in txt and 1e-4 <= abs(value) < 1e12:
            txt = f"{float(txt):.15g}"
        return f"{txt} K"
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


#: A part of a complex value below this fraction of its magnitude is shown as 0 (display only).
DISPLAY_RESIDUE = 1e-12


def format_complex(z: complex, unit: str = "", digits: int = 4, polar: bool = False) -> str:
    """Show a complex value as ``re ± j im unit`` or, with ``polar``, ``|z| ∠ deg``.

    A part smaller than :data:`DISPLAY_RESIDUE` times the magnitude is shown as 0: it is
    rounding residue of the arithmetic (``0.99 + j5.4e-19``), far below the digits shown of
    the other part.  For display only; results keep their full values.

    Parameters
    ----------
    z : complex
        The value.
    unit : str
        Unit symbol.
    digits : int
        Significant digits of each part.
    polar : bool
        Magnitude and angle (degrees) instead of real and imaginary parts.
    """
    if polar:
        deg = math.degrees(math.atan2(z.imag, z.real))
        txt = f"{deg:.2f}"
        if txt in ("-0.00", "-180.00"):
            txt = txt[1:]
        return f"{format_si(abs(z), unit, digits)} ∠ {txt}°"
    re_, im = z.real + 0.0, z.imag + 0.0
    size = abs(z)
    if abs(im) < DISPLAY_RESIDUE * size:
        im = 0.0
    if abs(re_) < DISPLAY_RESIDUE * size:
        re_ = 0.0
    if im == 0:
        return format_si(re_, unit, digits)
    sign = "-" if im < 0 else "+"
    if re_ == 0:
        return f"{sign}j{format_si(abs(im), unit, digits)}".lstrip("+")
    return f"{format_si(re_, unit, digits)} {sign} j{format_si(abs(im), unit, digits)}"

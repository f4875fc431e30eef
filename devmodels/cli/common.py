"""Shared pieces of the command line: bias options, value parsing, output, errors.

Everything here is about text in and text out; the computing is in the library.
"""

from __future__ import annotations

import functools
import inspect
import json
import math
import sys
from dataclasses import dataclass, field
from pathlib import Path
from typing import Annotated, Any, Callable, Optional

import numpy as np
import typer

from ..biasfile import load_bias_file
from ..exceptions import InputError
from ..units import parse_complex, parse_quantity, parse_temperature

__all__ = [
    "BiasInputs", "bias_options", "parse_freqs", "parse_z0", "parse_given", "jsonable", "emit_json",
    "print_table", "warn", "two_port_input", "points_json", "twoport_json", "print_twoport",
    "JsonOpt", "FreqOpt", "Z0Opt", "ParamsOpt", "TouchstoneOpt", "ELEMENT_UNITS",
]

PANEL = "Bias point (override the bias file)"

# name, unit key ('T' temperature, 'str' text), help
BIAS_OPTIONS: list[tuple[str, str, str]] = [
    ("device", "str", "Device type: npn or pnp (default npn)."),
    ("ic", "A", "Collector current, A (e.g. 1mA)."),
    ("vce", "V", "Collector-emitter voltage, V (e.g. 5V)."),
    ("beta", "", "Small-signal current gain hfe at the bias point."),
    ("va", "V", "Early voltage, V (default: none, ro infinite)."),
    ("ft", "Hz", "Transition frequency fT, Hz (e.g. 300MHz) (default: none, no C_pi)."),
    ("cmu", "F", "Collector-base capacitance C_mu (datasheet Cob), F (default 0)."),
    ("rb", "Ohm", "Base spreading resistance, ohm (default 0)."),
    ("temp", "T", "Temperature, K (300, 300K) or Celsius (27C) (default 300 K)."),
    ("rmu", "Ohm", "Collector-base resistance r_mu, ohm (default: none)."),
    ("rcx", "Ohm", "Collector ohmic resistance, ohm (default 0)."),
    ("rex", "Ohm", "Emitter ohmic resistance, ohm (default 0)."),
    ("vce_sat", "V", "VCE below which the point counts as saturated, V (default 0.3 V)."),
    ("rdeg", "Ohm", "External emitter degeneration resistor, ohm (default: none)."),
    ("rfb", "Ohm", "External collector-base feedback resistor, ohm (default: none)."),
    ("pmax", "W", "Power rating, W: warn when the dissipation (IC VCE, ID VDS) is above it."),
    ("vceo", "V", "Breakdown rating VCEO, V: warn when VCE is above it."),
    # FETs (device nmos, pmos, njfet, pjfet); read by cli/fetchain.fet_bias_or_none
    ("id", "A", "FET drain current, A (e.g. 2mA)."),
    ("vds", "V", "FET drain-source voltage, V (must be >= the overdrive)."),
    ("vov", "V", "MOSFET overdrive |VGS| - |Vt|, V (or give --kn)."),
    ("kn", "", "MOSFET transconductance parameter mu Cox W/L, A/V^2, with ID = (kn/2) Vov^2."),
    ("lambda_", "", "FET channel-length modulation, 1/V (default: none, ro infinite)."),
    ("gamma", "", "MOSFET body-effect coefficient, V^0.5 (default: none, no body effect)."),
    ("vsb", "V", "MOSFET source-body voltage, V (default 0)."),
    ("two_phi_f", "V", "MOSFET surface potential 2 phi_F (twice the Fermi potential), V (default 0.7 V)."),
    ("cgs", "F", "FET gate-source capacitance, F (default 0)."),
    ("cgd", "F", "FET gate-drain capacitance, F (default 0)."),
    ("csb", "F", "MOSFET source-body capacitance, F (default 0)."),
    ("cdb", "F", "MOSFET drain-body capacitance, F (default 0)."),
    ("idss", "A", "JFET drain current at VGS = 0, A."),
    ("vp", "V", "JFET pinch-off voltage, V (e.g. -2V for an n-channel)."),
    ("rg", "Ohm", "FET gate resistance, ohm (default 0)."),
]

JsonOpt = Annotated[bool, typer.Option("--json", help="Print one JSON object on stdout and nothing else.")]
FreqOpt = Annotated[Optional[list[str]], typer.Option(
    "--freq", "-f", help="Frequency, Hz (e.g. 10MHz); repeat for more points.", show_default=False)]
Z0Opt = Annotated[str, typer.Option(
    "--z0", help="S reference resistance, ohm: one value or port1,port2 (e.g. 50,75).")]
TouchstoneOpt = Annotated[Optional[Path], typer.Option(
    "--touchstone", help="A two-port Touchstone file (.s2p, .ts) instead of a bias point; without "
                         "--freq every frequency of the file.", show_default=False)]
ParamsOpt = Annotated[Optional[str], typer.Option(
    "--params", help="A given two-port instead of a bias point: KIND=v11,v12,v21,v22 "
                     "(complex allowed, e.g. h=2.6k,2e-4,100,12u).", show_default=False)]

#: Units of each element by kind, for tables.
ELEMENT_UNITS: dict[str, tuple[str, str, str, str]] = {
    "y": ("S", "S", "S", "S"),
    "z": ("Ω", "Ω", "Ω", "Ω"),
    "h": ("Ω", "", "", "S"),
    "g": ("S", "", "", "Ω"),
    "abcd": ("", "Ω", "S", ""),
    "s": ("", "", "", ""),
}


@dataclass
class BiasInputs:
    """Bias values from a file and from options (options win), still as raw text."""

    file: Path | None = None
    options: dict[str, Any] = field(default_factory=dict)
    flat: dict[str, Any] = field(default_factory=dict)
    tables: dict[str, Any] = field(default_factory=dict)
    #: Set once the ratings have been checked (a solved bias network checks its own).
    ratings_done: bool = field(default=False, repr=False)
    _warned: set = field(default_factory=set, repr=False)

    def __post_init__(self) -> None:
        if self.file is not None:
            self.flat, self.tables = load_bias_file(self.file)

    def warn_once(self, message: str) -> None:
        """A warning on stderr, once per command however often the bias point is built."""
        if message not in self._warned:
            self._warned.add(message)
            warn(message)

    def check_ratings(self, power: float, vce: float | None) -> None:
        """Warn (once) when the dissipation is above ``pmax`` or VCE above ``vceo``.

        Parameters
        ----------
        power : float
            Dissipation of the bias point in W.
        vce : float or None
            Collector-emitter voltage magnitude in V (None for a FET: only pmax applies).
        """
        if self.ratings_done:
            return
        self.ratings_done = True
        pmax, vceo = self.value("pmax", "W"), self.value("vceo", "V")
        if pmax is None and vceo is None:
            return
        for name, v, unit in (("pmax", pmax, "W"), ("vceo", vceo, "V")):
            if v is not None and v <= 0:
                raise InputError(f"{name}: expected a positive rating in {unit}, got {v:g}")
        from ..dcbias import rating_warnings

        for w in rating_warnings(power, 0.0 if vce is None else vce, 0.0, pmax=pmax,
                                 vceo=None if vce is None else vceo):
            self.warn_once(w)

    def raw(self, name: str, default=None):
        """The raw value of ``name``: option if given, else file, else ``default``."""
        v = self.options.get(name)
        if v is not None:
            return v
        return self.flat.get(name, default)

    def value(self, name: str, unit: str, default=None):
        """The parsed value of ``name`` in SI units (``default`` when not given)."""
        v = self.raw(name)
        if v is None:
            return default
        if unit == "T":
            return parse_temperature(v, name)
        if unit == "str":
            return str(v)
        return parse_quantity(v, unit, name)

    def given(self) -> bool:
        """True when any bias value was given at all."""
        return any(v is not None for v in self.options.values()) or bool(self.flat) or bool(self.tables)

    def require(self, name: str, unit: str, what: str):
        v = self.value(name, unit)
        if v is None:
            flag = "--" + name.rstrip("_").replace("_", "-")
            raise InputError(f"{name}: missing; give {flag} or '{name}' in the bias file ({what})")
        return v

    def bipolar(self):
        """The :class:`~devmodels.bias.BipolarBias` these inputs describe."""
        if "network" in self.tables:  # a bias network instead of IC and VCE: solve it (cli/biasnet.py)
            from .biasnet import network_bipolar
            return network_bipolar(self)
        from ..bias import BipolarBias, DEFAULT_TEMP, DEFAULT_VCE_SAT

        device = (self.value("device", "str") or "npn").lower()
        bias = BipolarBias(
            ic=self.require("ic", "A", "collector current in A, e.g. 1mA"),
            vce=self.require("vce", "V", "collector-emitter voltage in V, e.g. 5V"),
            beta=self.require("beta", "", "current gain hfe, e.g. 100"),
            device=device,
            va=self.value("va", "V"),
            ft=self.value("ft", "Hz"),
            cmu=self.value("cmu", "F", 0.0),
            rb=self.value("rb", "Ohm", 0.0),
            temp=self.value("temp", "T", DEFAULT_TEMP),
            rmu=self.value("rmu", "Ohm"),
            rcx=self.value("rcx", "Ohm", 0.0),
            rex=self.value("rex", "Ohm", 0.0),
            vce_sat=self.value("vce_sat", "V", DEFAULT_VCE_SAT),
        )
        self.check_ratings(bias.power, bias.vce)
        return bias

    def model(self):
        """The small-signal device model (hybrid-pi for a bipolar device, FetModel for a FET)."""
        from ..models import HybridPi
        from .fetchain import fet_model_or_none

        fet = fet_model_or_none(self)  # None for a bipolar device
        return fet if fet is not None else HybridPi.from_bias(self.bipolar())

    def stage(self, config: str):
        """A :class:`~devmodels.stage.Stage` of the model in ``config`` with the external resistors."""
        from ..stage import Stage

        rdeg = self.value("rdeg", "Ohm", 0.0)
        rfb = self.value("rfb", "Ohm")
        if rdeg < 0:
            raise InputError(f"rdeg: expected a resistance >= 0 ohm, got {rdeg:g}")
        if rfb is not None and rfb <= 0:
            raise InputError(f"rfb: expected a positive resistance in ohm, got {rfb:g}")
        from ..fet import check_device_config

        model = self.model()
        return Stage(model, check_device_config(model, config), rdeg, rfb)


@functools.lru_cache(maxsize=None)
def _shared_bias_parameters() -> tuple[inspect.Parameter, tuple[inspect.Parameter, ...]]:
    """The bias-file argument and the bias options, made once and shared by every command
    (building ~30 annotated parameters per command was most of the command line's start-up)."""
    file_param = inspect.Parameter(
        "bias_file", inspect.Parameter.POSITIONAL_OR_KEYWORD, default=None,
        annotation=Annotated[Optional[Path], typer.Argument(
            help="TOML bias file; its top-level keys are the option names (ic = \"1mA\").",
            show_default=False)])
    extra = []
    for name, _unit, help_ in BIAS_OPTIONS:
        flag = "--" + name.rstrip("_").replace("_", "-")
        extra.append(inspect.Parameter(
            name, inspect.Parameter.KEYWORD_ONLY, default=None,
            annotation=Annotated[Optional[str], typer.Option(flag, help=help_, rich_help_panel=PANEL,
                                                             show_default=False)]))
    return file_param, tuple(extra)


def bias_options(func: Callable) -> Callable:
    """Add the bias-file argument and the bias options to a command.

    The command receives them as one ``bias_in: BiasInputs`` argument.
    """
    import typing

    sig = inspect.signature(func)
    hints = typing.get_type_hints(func, include_extras=True)
    own = [p.replace(annotation=hints.get(p.name, p.annotation))
           for p in sig.parameters.values() if p.name != "bias_in"]
    file_param, extra = _shared_bias_parameters()

    @functools.wraps(func)
    def wrapper(*args, **kwargs):
        opts = {name: kwargs.pop(name, None) for name, _, _ in BIAS_OPTIONS}
        kwargs["bias_in"] = BiasInputs(kwargs.pop("bias_file", None), opts)
        return func(*args, **kwargs)

    params = [file_param] + [p.replace(kind=inspect.Parameter.KEYWORD_ONLY) for p in own] + list(extra)
    wrapper.__signature__ = sig.replace(parameters=params)
    return wrapper


def parse_freqs(values: list[str] | None, default: list[float] | None = None) -> np.ndarray | None:
    """Frequencies in Hz from repeated ``--freq`` values (a value may hold a comma list)."""
    if not values:
        return None if default is None else np.asarray(default, dtype=float)
    out = []
    for v in values:
        for part in str(v).split(","):
            f = parse_quantity(part, "Hz", "freq")
            if f < 0:
                raise InputError(f"freq: expected a frequency >= 0 Hz, got {part.strip()!r}")
            out.append(f)
    return np.asarray(out, dtype=float)


def parse_z0(text: str | None) -> tuple[float, float]:
    """``'50'`` or ``'50,75'`` -> reference resistances of port 1 and port 2 in ohm."""
    if text is None:
        return (50.0, 50.0)
    parts = [p for p in str(text).split(",")]
    if len(parts) not in (1, 2):
        raise InputError(f"z0: expected one value or two (port1,port2) in ohm, got {text!r}")
    vals = [parse_quantity(p, "Ohm", "z0") for p in parts]
    for v in vals:
        if v <= 0:
            raise InputError(f"z0: expected a positive reference resistance in ohm, got {v:g}")
    return (vals[0], vals[-1])


def parse_given(text: str, z0=(50.0, 50.0), freq: np.ndarray | None = None, config: str | None = None):
    """A :class:`~devmodels.twoport.TwoPort` from ``KIND=v11,v12,v21,v22``.

    Without ``freq`` the result has one point and no frequency; with it, the same
    (frequency-independent) values are repeated at every frequency.
    """
    from ..constants import KINDS
    from ..twoport import TwoPort

    if "=" not in text:
        raise InputError(f"params: expected KIND=v11,v12,v21,v22 (KIND one of {', '.join(KINDS)}), got {text!r}")
    kind, _, rest = text.partition("=")
    kind = kind.strip().lower()
    if kind not in KINDS:
        raise InputError(f"params: unknown parameter kind {kind!r}, expected one of {', '.join(KINDS)}")
    vals = [v for v in rest.split(",")]
    if len(vals) != 4:
        raise InputError(f"params: expected four values v11,v12,v21,v22 after '{kind}=', got {len(vals)}")
    names = ("11", "12", "21", "22")
    data = np.array([parse_complex(v, f"params {kind}{n}") for v, n in zip(vals, names)]).reshape(1, 2, 2)
    if freq is None:
        return TwoPort(None, data, kind, z0, config)
    return TwoPort(freq, np.repeat(data, len(freq), axis=0), kind, z0, config)


def jsonable(x):
    """Convert results to JSON-ready values: complex -> [re, im]; NaN/inf -> None."""
    if x is None or isinstance(x, (str, bool)):
        return x
    if isinstance(x, dict):
        return {str(k): jsonable(v) for k, v in x.items()}
    if isinstance(x, (list, tuple)):
        return [jsonable(v) for v in x]
    if isinstance(x, np.ndarray):
        return [jsonable(v) for v in x.tolist()]
    if isinstance(x, (complex, np.complexfloating)):
        re_, im = float(np.real(x)), float(np.imag(x))
        if not (math.isfinite(re_) and math.isfinite(im)):
            return None
        return [re_, im]
    if isinstance(x, (int, np.integer)):
        return int(x)
    if isinstance(x, (float, np.floating)):
        v = float(x)
        return v if math.isfinite(v) else None
    return x


def emit_json(obj) -> None:
    """Print ``obj`` as one JSON object on stdout."""
    sys.stdout.write(json.dumps(jsonable(obj), allow_nan=False) + "\n")


def print_table(title: str, columns: list[str], rows: list[list[str]], caption: str | None = None) -> None:
    """Print a table in the terminal (rich)."""
    from rich.console import Console
    from rich.table import Table

    t = Table(title=title, caption=caption, title_justify="left", caption_justify="left")
    for i, c in enumerate(columns):
        t.add_column(c, justify="left" if i == 0 else "right", overflow="fold")
    for r in rows:
        t.add_row(*r)
    con = Console()
    if not con.is_terminal:  # a file or a pipe: never fold or cut numbers
        need = sum(max([len(c)] + [len(r[i]) for r in rows]) + 3 for i, c in enumerate(columns)) + 1
        con = Console(width=max(80, need))
    con.print(t)


def warn(message: str) -> None:
    """One warning line on stderr."""
    sys.stderr.write(f"devmodels: warning: {message}\n")


def points_json(tp) -> list[dict]:
    """The ``points`` list of the params/sweep JSON: one dict per frequency."""
    return twoport_json(tp)["points"]


def twoport_json(tp) -> dict:
    """The JSON object of ``params``/``sweep``/``reconfigure`` (the library's params JSON)."""
    from ..export import twoport_dict

    return twoport_dict(tp)


def print_twoport(tp, polar: bool = False, title: str | None = None) -> None:
    """Print a two-port as a table: one row per frequency, one column per element."""
    from ..units import format_complex, format_si

    units = ELEMENT_UNITS[tp.kind]
    kind = tp.kind.upper() if tp.kind != "abcd" else "ABCD"
    names = ("A", "B", "C", "D") if tp.kind == "abcd" else tuple(f"{tp.kind}{n}" for n in ("11", "12", "21", "22"))
    ref = f", z0 = {format_si(tp.z0[0], 'Ω')}" if tp.kind == "s" and tp.z0[0] == tp.z0[1] else (
        f", z0 = {format_si(tp.z0[0], 'Ω')} / {format_si(tp.z0[1], 'Ω')}" if tp.kind == "s" else "")
    where = tp.config.upper() + " " if tp.config else ""
    title = title or f"{where}{kind} parameters{ref}"
    rows = []
    freqs = [None] * len(tp) if tp.freq is None else list(tp.freq)
    for i, f in enumerate(freqs):
        vals = tp.data[i].reshape(-1)
        rows.append([format_si(f, "Hz") if f is not None else "(any)"] +
                    [format_complex(complex(v), u, 4, polar) for v, u in zip(vals, units)])
    print_table(title, ["freq"] + list(names), rows)


def two_port_input(bias_in: BiasInputs, given: str | None, touchstone: Path | None, config: str,
                   freq: np.ndarray | None, z0, default_freq: float = 1e3):
    """The two-port to work on: from a bias point, from ``--params`` or from ``--touchstone``.

    A bias point without ``freq`` is taken at ``default_freq`` (Hz); given parameters keep
    one frequency-independent point, a Touchstone file all its frequencies.
    """
    from ..configs import check_config
    from ..touchstone import read_touchstone

    check_config(config)
    if given is not None and touchstone is not None:
        raise InputError("params: give either --params or --touchstone, not both")
    if given is not None or touchstone is not None:
        if bias_in.given():
            what = "--params" if given is not None else "--touchstone"
            raise InputError(f"{what.lstrip('-')}: give either a two-port ({what}) or a bias point, not both")
        if given is not None:
            return parse_given(given, z0, freq, config)
        return read_touchstone(touchstone, freq, config)
    if not bias_in.given():
        raise InputError("bias point: missing; give a bias file, bias options (--ic, --vce, --beta, ...), "
                         "--params or --touchstone")
    f = freq if freq is not None else np.array([default_freq])
    return bias_in.stage(config).two_port(f, "y", z0)

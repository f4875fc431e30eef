"""The one description of every bias input: key, unit, range, help text, where it may be written.

Keys come from the library's own input dataclasses, whose field metadata
(:func:`devmodels.validate.meta`) holds the unit, the physical range and the help text:
:class:`~devmodels.bias.BipolarBias`, :class:`~devmodels.fetbias.MosfetBias`,
:class:`~devmodels.fetbias.JfetBias` and :class:`~devmodels.dcbias.BiasNetwork` (its keys
live in the bias file's ``[network]`` table).  :data:`EXTRA` adds the inputs that are
arguments of functions rather than dataclass fields (the stage's ``rdeg`` / ``rfb``, the
ratings, the temperature coefficients, the spread limits).  The command line builds its
options from :func:`keys`, :mod:`devmodels.biasfile` accepts exactly these keys, and
:func:`merge` is the one place where a file and the options become SI values (an option
overrides the file).
"""

from __future__ import annotations

import dataclasses
import difflib
import functools
from dataclasses import dataclass
from typing import Any, Mapping

from .exceptions import InputError
from .units import Bounds, check_bounds, parse_quantity, parse_temperature, shown, temperature_warning, type_name

__all__ = ["Key", "DEVICES", "FAMILY", "PANELS", "TABLES", "keys", "flat_keys", "table_keys", "merge",
           "nearest", "STAGE_NETWORK", "DATASHEET", "FET_DATASHEET", "MAX_POINTS", "MAX_STREAMED_POINTS", "MAX_SAMPLES", "MAX_STREAMED_SAMPLES", "FREQ", "Z0",
           "IMPEDANCE"]

#: Every device type and its family ("bipolar", "mosfet", "jfet").
FAMILY: dict[str, str] = {"npn": "bipolar", "pnp": "bipolar", "nmos": "mosfet", "pmos": "mosfet",
                          "njfet": "jfet", "pjfet": "jfet"}
DEVICES: tuple[str, ...] = tuple(FAMILY)
#: Help panels of the options, by panel key.
PANELS: dict[str, str] = {
    "device": "Device", "bipolar": "Bipolar transistor", "fet": "FET (--device nmos, pmos, njfet, pjfet)",
    "stage": "Stage: external resistors", "rating": "Ratings and temperature coefficients",
    "network": "Bias network", "spread": "Spread limits",
    "stagenet": "Stage network in the AC analysis ([network] table)",
    "datasheet": "Datasheet values at their test conditions (bipolar)",
    "fetdatasheet": "Datasheet values at their test conditions (FET)"}
#: Tables a bias file may hold.  ``[network]`` holds schema keys; ``[spec]`` holds specifications
#: of ``spread`` (result name -> ``">=40"`` or a list of such texts), read by
#: :func:`devmodels.biasfile.load_bias_file` as text and by :func:`devmodels.worstcase.collect_specs`
#: (the reader of ``--spec``) against the results of the run.
TABLES: tuple[str, ...] = ("network", "spec")

# Ranges of quantities that are options of commands rather than bias keys (SI, magnitudes).
FREQ = Bounds(1e-6, 1e15)
Z0 = Bounds(1e-3, 1e9, zero=False)
IMPEDANCE = Bounds(1e-9, 1e15)


def _memory_bytes() -> int:
    import os

    try:
        return int(os.sysconf("SC_PAGE_SIZE") * os.sysconf("SC_PHYS_PAGES"))
    except (ValueError, OSError, AttributeError):
        return 4 << 30


#: Largest number of sweep points and spread samples: a quarter of this computer's memory at
#: about 2 kB per sweep point (the parameters, their conversion and the JSON or table text) and
#: 400 bytes per spread sample (README: peak about 130 bytes per sample, kept with margin).
MAX_POINTS = max(1000, _memory_bytes() // 4 // 2048)
#: Largest sweep written to a file without --json or --plot: such a sweep is computed and written
#: block by block (devmodels.sweeping.sweep_stream), measured at about 15 bytes per point beside a
#: fixed 70 MB; a quarter of the memory at 64 bytes per point keeps a margin of four.
MAX_STREAMED_POINTS = max(MAX_POINTS, _memory_bytes() // 4 // 64)
MAX_SAMPLES = max(1000, _memory_bytes() // 4 // 400)
#: Largest spread whose per-sample values are not kept (statistics from the streaming summary:
#: its memory does not grow with the count).  A bound on time, not memory: at the measured
#: 0.7-1e6 samples/s on two cores, about 20 minutes.
MAX_STREAMED_SAMPLES = max(MAX_SAMPLES, 1_000_000_000)


@dataclass(frozen=True, slots=True)
class Key:
    """One bias input.

    Attributes
    ----------
    name : str
        Key in the bias file (and option name with ``-`` for ``_``).
    table : str or None
        ``None`` for a top-level key, ``"network"`` for a key of the ``[network]`` table.
    unit : str
        Unit key of :data:`devmodels.units.UNITS`, ``'K'`` for a temperature, ``'str'`` for text.
        Percentages are given in % and handed to the library as fractions.
    help : str
        Help text.
    bounds : Bounds or None
        Physical range of the magnitude.
    panel : str
        Help panel key (:data:`PANELS`).
    family : str or None
        Device family the key belongs to (``bipolar``, ``fet``, ``mosfet``, ``jfet``), None for all.
    field : str
        Name of the library parameter it becomes.
    also : str or None
        A table where the same key may be written instead (``network`` for ``vbe``, ``pmax``, ...).
    choices : tuple of str or None
        Allowed text values.
    short_ok : bool
        True for a capacitor of the stage network that may be written ``"short"`` (ideal).
    """

    name: str
    table: str | None
    unit: str
    help: str
    bounds: Bounds | None
    panel: str
    family: str | None = None
    field: str = ""
    also: str | None = None
    choices: tuple[str, ...] | None = None
    short_ok: bool = False

    @property
    def id(self) -> str:
        """Unique id: the name, or ``table.name`` for a key of a table."""
        return self.name if self.table is None else f"{self.table}.{self.name}"

    @property
    def flag(self) -> str:
        """The command-line option (``--vce-sat``; ``--network`` for the network type)."""
        if self.id == "network.type":
            return "--network"
        return "--" + self.name.replace("_", "-")

    @property
    def param(self) -> str:
        """Python parameter name of the option."""
        return self.id.replace(".", "_").replace("-", "_") + ("_" if self.name in ("lambda", "type") else "")

    @property
    def label(self) -> str:
        """The name error messages start with (``network`` for the network type)."""
        return "network" if self.id == "network.type" else self.name

    def parse(self, raw):
        """``raw`` in SI units, range-checked; percentages as fractions.

        Parameters
        ----------
        raw : str or number
            The value as written on the command line or in the bias file.
        """
        name = self.label
        if self.unit == "str":
            if not isinstance(raw, str):
                raise InputError(f"{name}: expected text, got {type_name(raw)}")
            v = raw.strip().lower()
            if not v:
                raise InputError(f"{name}: expected one of {', '.join(self.choices or ())}, got an empty value"
                                 if self.choices else f"{name}: expected text, got an empty value")
            if self.choices and v not in self.choices:
                near = nearest(v, self.choices)
                raise InputError(f"{name}: unknown value {shown(raw)}; expected one of {', '.join(self.choices)}"
                                 + (f" (did you mean {near}?)" if near else ""))
            return v
        if self.unit == "K":
            return parse_temperature(raw, name)
        if self.unit == "table":
            return _parse_table(name, raw)
        if self.short_ok and isinstance(raw, str) and raw.strip().lower() == "short":
            return "short"
        v = parse_quantity(raw, self.unit, name)
        check_bounds(name, v, self.unit, self.bounds, raw)
        return v / 100.0 if self.unit in ("%", "%/K") else v


def _parse_table(name: str, raw) -> list[list[float]]:
    """An hFE table: text ``"IC:hFE, IC:hFE"`` or rows ``[[IC, hFE], ...]`` -> rows of SI floats."""
    if isinstance(raw, str):
        rows = [r.split(":") for r in raw.split(",") if r.strip()]
    elif isinstance(raw, (list, tuple)):
        rows = [list(r) if isinstance(r, (list, tuple)) else [r] for r in raw]
    else:
        raise InputError(f"{name}: expected rows IC:hFE separated by commas, got {type_name(raw)}")
    if not rows:
        raise InputError(f"{name}: expected rows IC:hFE separated by commas, got an empty table")
    out = []
    for k, row in enumerate(rows, 1):
        if len(row) != 2:
            raise InputError(f"{name}: row {k}: expected IC:hFE, got {shown(':'.join(map(str, row)))}")
        ic = parse_quantity(row[0], "A", name)
        hfe = parse_quantity(row[1], "", name)
        out.append([ic, hfe])
    return out


def _meta_keys(cls, table: str | None, panel: str, family: str | None, skip=()) -> list[Key]:
    out = []
    for f in dataclasses.fields(cls):
        m = f.metadata.get("schema")
        if m is None or f.name in skip:
            continue
        name = m["key"] or f.name
        b = None if m["unit"] == "str" else Bounds(m["lo"], m["hi"], m["zero"])
        out.append(Key(name, table, m["unit"], m["help"], b, panel, family, f.name))
    return out


#: Inputs that are not dataclass fields: (name, unit, help, bounds, panel, library parameter, also-in table).
EXTRA: tuple[tuple[str, str, str, Bounds | None, str, str, str | None], ...] = (
    ("rdeg", "Ohm", "External emitter (source) degeneration resistor, ohm (default: none).",
     Bounds(1e-6, 1e15), "stage", "Stage.rdeg", None),
    ("rfb", "Ohm", "External collector-base (drain-gate) feedback resistor, ohm (default: none).",
     Bounds(1e-6, 1e15), "stage", "Stage.rfb", None),
    ("tref", "K", "Temperature at which the datasheet values (beta, VBE(on), hFE table) are given, K or "
     "Celsius (default 300 K); --temp defaults to it.", None, "device", "t_ref", None),
    ("pmax", "W", "Power rating, W: warn when the dissipation (IC VCE, ID VDS) is above it.",
     Bounds(1e-9, 1e6, zero=False), "rating", "pmax", "network"),
    ("vceo", "V", "Breakdown rating VCEO, V: warn when VCE (or, with a network, VCC) is above it.",
     Bounds(1e-3, 1e5, zero=False), "rating", "vceo", "network"),
    ("vbe", "V", "VBE(on) at tref, V (default 0.7 V; used with a bias network and for cob's VCB).",
     Bounds(1e-3, 10.0, zero=False), "rating", "vbe", "network"),
    ("vbe_tc", "V/K", "VBE(on) temperature coefficient, V/K (default -2mV/K).",
     Bounds(1e-9, 1.0), "rating", "vbe_tc", "network"),
    ("beta_tc", "%/K", "Beta temperature coefficient, %/K (default 0.5, compounded).",
     Bounds(1e-9, 99.0), "rating", "beta_tc", "network"),
    ("beta_min", "", "Lowest beta at tref (datasheet minimum hFE).", Bounds(1e-3, 1e6), "spread",
     "SpreadRanges.beta_min", None),
    ("beta_max", "", "Highest beta at tref (datasheet maximum hFE).", Bounds(1e-3, 1e6), "spread",
     "SpreadRanges.beta_max", None),
    ("beta_typ", "", "Typical beta: a triangular distribution with this mode (default: uniform).",
     Bounds(1e-3, 1e6), "spread", "SpreadRanges.beta_typ", None),
    ("temp_min", "K", "Lowest temperature, K or Celsius (-20C) (default --temp).", None, "spread",
     "SpreadRanges.temp_min", None),
    ("temp_max", "K", "Highest temperature, K or Celsius (70C) (default --temp).", None, "spread",
     "SpreadRanges.temp_max", None),
    ("ctol", "%", "Capacitor tolerance, % (the [network] table's coupling, bypass and base capacitors in "
     "the configuration's circuit) (default 0).", Bounds(1e-9, 99.999999), "spread", "SpreadRanges.ctol", None),
)


_CAP = Bounds(1e-18, 1.0, zero=False)
_RES = Bounds(1e-6, 1e15)
#: Keys of the ``[network]`` table that describe the stage in the AC analysis
#: (:class:`devmodels.stagenetwork.StageNetwork`): (name, unit, help, bounds, family, "short" allowed).
STAGE_NETWORK: tuple[tuple[str, str, str, Bounds, str | None, bool], ...] = (
    ("c_in", "F", "Input coupling capacitor, F, from the input terminal to the base (gate); "
     "\"short\" or absent: ideal.", _CAP, None, True),
    ("c_out", "F", "Output coupling capacitor, F, from the collector (emitter for cc; drain, source for "
     "cd) to the output terminal; \"short\" or absent: ideal.", _CAP, None, True),
    ("c_bypass", "F", "Emitter (source) bypass capacitor, F, across re_bypassed (rsrc_bypassed); "
     "\"short\": ideal; absent: no bypass.", _CAP, None, True),
    ("c_base", "F", "Common base (gate): capacitor from the base (gate) to ground, F; \"short\" or absent: "
     "ideal.", _CAP, None, True),
    ("re_bypassed", "Ohm", "The part of re that c_bypass bypasses, ohm (default: all of re).", _RES,
     "bipolar", False),
    ("rg1", "Ohm", "FET network: gate resistor from the supply, ohm (needs id and vds: a FET network has "
     "no DC solution yet).", _RES, "fet", False),
    ("rg2", "Ohm", "FET network: gate resistor to ground, ohm.", _RES, "fet", False),
    ("rd", "Ohm", "FET network: drain resistor to the supply, ohm.", _RES, "fet", False),
    ("rsrc", "Ohm", "FET network: source resistor to ground, ohm.", _RES, "fet", False),
    ("rsrc_bypassed", "Ohm", "FET network: the part of rsrc that c_bypass bypasses, ohm (default: all).",
     _RES, "fet", False),
)


#: Datasheet values at their test conditions (:mod:`devmodels.datasheet`): (name, unit, help, bounds).
DATASHEET: tuple[tuple[str, str, str, Bounds | None], ...] = (
    ("ft_at_ic", "A", "Test IC of ft, A: with c_je, fT at the bias IC follows the transit-time law.",
     Bounds(1e-15, 100.0, zero=False)),
    ("ft_at_vce", "V", "Test VCE of ft, V (recorded; with cob it sets C_mu at the test point).",
     Bounds(1e-6, 1e4, zero=False)),
    ("c_je", "F", "Base-emitter junction capacitance C_je, F (with ft_at_ic).", Bounds(1e-18, 1.0, zero=False)),
    ("cob", "F", "Datasheet output capacitance Cob, F, at cob_at_vcb (instead of cmu).",
     Bounds(1e-18, 1.0, zero=False)),
    ("cob_at_vcb", "V", "Test VCB of cob, V.", Bounds(1e-6, 1e4)),
    ("cob_potential", "V", "Junction potential of the Cob law, V (default 0.75 V, common practice).",
     Bounds(1e-3, 10.0, zero=False)),
    ("cob_exponent", "", "Grading exponent of the Cob law (default 0.33, common practice).",
     Bounds(1e-3, 10.0, zero=False)),
    ("hfe_table", "table", "hFE against IC instead of beta: \"IC:hFE, IC:hFE, ...\" (IC increasing), "
     "e.g. \"100uA:120, 1mA:150, 10mA:140\"; linear in log10 IC.", None),
    ("ib", "A", "Base current instead of ic, A (IC = beta IB).", Bounds(1e-18, 10.0, zero=False)),
    ("hie", "Ohm", "h-parameter input impedance hie, ohm, at h_at_ic (with hre, hfe, hoe: instead of beta, "
     "va, rb, rmu).", Bounds(1e-6, 1e12, zero=False)),
    ("hre", "", "h-parameter reverse voltage ratio hre (0 <= hre < 1), at h_at_ic.", Bounds(1e-15, 1.0)),
    ("hfe", "", "h-parameter forward current ratio hfe, at h_at_ic.", Bounds(1e-3, 1e6, zero=False)),
    ("hoe", "S", "h-parameter output admittance hoe, S, at h_at_ic.", Bounds(1e-18, 1e3)),
    ("h_at_ic", "A", "Test IC of hie, hre, hfe, hoe, A: the elements are moved from it to the bias IC.",
     Bounds(1e-15, 100.0, zero=False)),
    ("h_at_vce", "V", "Test VCE of the h-parameters, V (recorded).", Bounds(1e-6, 1e4, zero=False)),
)

#: FET datasheet values at their test conditions (:mod:`devmodels.datasheet`): (name, unit, help, bounds).
FET_DATASHEET: tuple[tuple[str, str, str, Bounds | None], ...] = (
    ("yfs", "S", "Forward transfer admittance |yfs|, S, at yfs_at_id: the model's gm, moved to the bias ID by "
     "the square law (instead of kn; vov or idss/vp still set the DC point).", Bounds(1e-12, 1e4, zero=False)),
    ("yfs_at_id", "A", "Test ID of yfs, A (a JFET's is usually IDSS).", Bounds(1e-15, 100.0, zero=False)),
    ("ciss", "F", "Input capacitance Ciss, F (with crss, coss: instead of cgs, cgd, cdb; Cgs = Ciss - Crss).",
     Bounds(1e-18, 1.0, zero=False)),
    ("crss", "F", "Reverse transfer capacitance Crss, F (Cgd = Crss).", Bounds(1e-18, 1.0, zero=False)),
    ("coss", "F", "Output capacitance Coss, F (cdb = Coss - Crss, drain to source).",
     Bounds(1e-18, 1.0, zero=False)),
    ("c_at_vds", "V", "Test VDS of ciss, crss, coss, V (recorded; not moved to the bias VDS).",
     Bounds(1e-6, 1e4, zero=False)),
)


@functools.lru_cache(maxsize=None)
def keys() -> dict[str, Key]:
    """Every key by id (``ic``, ``network.vcc``), built once from the dataclasses and :data:`EXTRA`."""
    from .bias import BipolarBias
    from .dcbias import NETWORK_KINDS, BiasNetwork
    from .fetbias import JfetBias, MosfetBias

    out: dict[str, Key] = {}

    def add(k: Key) -> None:
        out.setdefault(k.id, k)

    add(Key("device", None, "str", "Device: npn, pnp, nmos, pmos, njfet or pjfet (default npn).", None,
            "device", None, "device", choices=DEVICES))
    for k in _meta_keys(BipolarBias, None, "bipolar", "bipolar"):
        add(k if k.name != "temp" else dataclasses.replace(k, panel="device", family=None))
    mos = {f.name for f in dataclasses.fields(MosfetBias)}
    jf = {f.name for f in dataclasses.fields(JfetBias)}
    for k in _meta_keys(MosfetBias, None, "fet", "mosfet") + _meta_keys(JfetBias, None, "fet", "jfet"):
        add(dataclasses.replace(k, family="fet") if k.field in mos and k.field in jf else k)
    for name, unit, help_, b, panel, lib, also in EXTRA:
        add(Key(name, None, unit, help_, b, panel, None, lib, also))
    for name, unit, help_, b in DATASHEET:
        add(Key(name, None, unit, help_, b, "datasheet", "bipolar", f"datasheet.{name}"))
    for name, unit, help_, b in FET_DATASHEET:
        add(Key(name, None, unit, help_, b, "fetdatasheet", "fet", f"datasheet.{name}"))
    for k in _meta_keys(BiasNetwork, "network", "network", "bipolar"):
        if k.name == "tol":  # one tolerance: top level or [network], for the network and rdeg/rfb
            add(Key("tol", None, "%", "Resistor tolerance, % (network resistors, rdeg, rfb) (default 0).",
                    k.bounds, "network", None, "BiasNetwork.tol", "network"))
        elif k.name == "type":
            add(dataclasses.replace(k, choices=NETWORK_KINDS, field="BiasNetwork.kind"))
        else:
            add(dataclasses.replace(k, field=f"BiasNetwork.{k.field}"))
    for name, unit, help_, b, fam, short in STAGE_NETWORK:
        add(Key(name, "network", unit, help_, b, "stagenet", fam, f"StageNetwork.{name}", short_ok=short))
    add(Key("description", None, "str", "A note about the bias point (not used).", None, "device", None,
            "description"))
    return out


def flat_keys() -> dict[str, Key]:
    """Keys accepted at the top level of a bias file."""
    return {k.name: k for k in keys().values() if k.table is None}


def table_keys(table: str) -> dict[str, Key]:
    """Keys accepted in ``[table]`` (its own and those that may also be written there)."""
    return {k.name: k for k in keys().values() if k.table == table or k.also == table}


def nearest(word: str, names) -> str | None:
    """The valid name closest to ``word`` (``difflib.get_close_matches``), or None.

    Parameters
    ----------
    word : str
        The unknown name.
    names : iterable of str
        The valid names.
    """
    names = list(names)
    m = difflib.get_close_matches(word, names, n=len(names), cutoff=0.6)
    if not m:
        return None
    # equally close names (npx: npn and pnp) are told apart by the longest common start (a slip
    # is rarely in the first letter), then by the order given; not by the alphabet
    best = difflib.SequenceMatcher(None, word, m[0]).ratio()
    tied = [n for n in m if difflib.SequenceMatcher(None, word, n).ratio() == best]

    def common_start(n: str) -> int:
        return next((i for i, (a, b) in enumerate(zip(word, n)) if a != b), min(len(word), len(n)))

    return max(tied, key=lambda n: (common_start(n), -names.index(n)))


def merge(options: Mapping[str, Any], flat: Mapping[str, Any], tables: Mapping[str, Mapping[str, Any]],
          *, warnings: list | None = None) -> dict[str, Any]:
    """Merge a bias file and the options into SI values by key id (an option overrides the file).

    Parameters
    ----------
    options : mapping of key id -> raw value or None
        Values from the command line (text as typed; None when not given).
    flat, tables : mappings
        The bias file's top-level keys and its tables (as :func:`devmodels.biasfile.load_bias_file`
        returns them; keys already checked).
    warnings : list, optional
        Receives warnings (a junction temperature outside the usual range).

    Returns
    -------
    dict
        Key id -> parsed value, for every key given anywhere.
    """
    ks = keys()
    out: dict[str, Any] = {}
    for kid, key in ks.items():
        raw = options.get(kid)
        if raw is None:
            place = flat if key.table is None else tables.get(key.table, {})
            raw = place.get(key.name)
            if key.also is not None:
                other = tables.get(key.also, {}).get(key.name)
                if raw is not None and other is not None:
                    raise InputError(f"{key.name}: given both at the top level and in [{key.also}] of the "
                                     "bias file; keep one")
                raw = other if raw is None else raw
        if raw is None:
            continue
        v = key.parse(raw)
        out[kid] = v
        if key.unit == "K" and key.name == "temp" and warnings is not None:
            w = temperature_warning(key.name, raw, v)
            if w:
                warnings.append(w)
        if key.name in USUAL and warnings is not None:
            w = _unusual(key, raw, v)
            if w:
                warnings.append(w)
    return out


#: Usual ranges of device values whose bare numbers are easy to mistype (``--ft 300`` for
#: 300 MHz, ``--cmu 3`` for 3 pF): a value outside only warns (common practice, no source:
#: small-signal transistors have fT of MHz to hundreds of GHz and junction capacitances of
#: femto- to nanofarads).
USUAL: dict[str, tuple[float, float, str]] = {
    "ft": (1e5, 1e12, "MHz"),
    **{name: (0.0, 1e-8, "pF") for name in ("cmu", "cob", "c_je", "cgs", "cgd", "csb", "cdb", "ciss", "crss",
                                            "coss")},
}


def _unusual(key: Key, raw, v) -> str | None:
    """A warning for a value outside :data:`USUAL`, with a hint where a bare number was written."""
    lo, hi, prefix = USUAL[key.name]
    if lo <= abs(v) <= hi:
        return None
    from .units import format_si

    unit = "Hz" if key.unit == "Hz" else "F"
    text = str(raw).strip()
    hint = f"; did you mean {text}{prefix}?" if text.replace(".", "", 1).isdigit() else ""
    return (f"{key.name}: {format_si(v, unit)} is outside the usual {format_si(lo, unit) if lo else '0'} to "
            f"{format_si(hi, unit)} of a transistor{hint}")

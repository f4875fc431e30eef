"""The input layer of the command line: options made from the schema, one merge, typed parsers.

- :func:`bias_options` adds the bias-file argument and the options of a chosen set of schema
  keys (:mod:`devmodels.schema`) to a command; the command receives one :class:`Inputs`.
- :class:`Inputs` merges the file and the options once (:func:`devmodels.schema.merge`: an
  option overrides the file) and builds the library's own input objects from the result:
  ``BipolarBias`` / ``MosfetBias`` / ``JfetBias``, ``BiasNetwork`` and its operating point,
  the device model, the ``Stage`` (with ``rdeg`` / ``rfb``), the spread's setup.
- The parsers of the other options (frequencies, z0, terminations, given parameters,
  counts) are here too, each a thin wrapper of the one parser in :mod:`devmodels.units`.
"""

from __future__ import annotations

import functools
import inspect
from pathlib import Path
from typing import Annotated, Any, Callable, Optional

import numpy as np
import typer

from ..exceptions import InputError
from ..schema import FAMILY, FREQ, IMPEDANCE, MAX_POINTS, PANELS, Z0, Key, keys, merge
from ..units import UNITS, Bounds, check_bounds, parse_complex, parse_count, parse_impedance, parse_quantity, shown
from .render import note_later, warn

__all__ = ["Inputs", "bias_options", "MODEL_KEYS", "SPREAD_KEYS", "BIAS_KEYS", "NETWORK_KEYS", "network_flag", "parse_freqs", "parse_freq",
           "parse_z0", "parse_given", "terminations", "parse_points", "two_port_input", "check_kind",
           "check_config"]


# --- which keys each command takes --------------------------------------------------------------
def MODEL_KEYS(k: Key) -> bool:
    """Bias-point commands: the device, bipolar and FET values, the stage, the ratings."""
    return (k.table is None and k.panel in ("device", "bipolar", "fet", "stage", "rating", "datasheet",
                                          "fetdatasheet")
            and k.name != "description")


def SPREAD_KEYS(k: Key) -> bool:
    """spread: a bipolar stage and the limits it is spread over."""
    return (k.table is None and k.name != "description" and k.family in (None, "bipolar")
            and k.panel in ("device", "bipolar", "stage", "rating", "spread", "network"))


def BIAS_KEYS(k: Key) -> bool:
    """bias: the network, the transistor's DC values, the ratings."""
    return (k.table == "network" and k.panel != "stagenet") or k.name in ("tol", "device", "temp", "tref", "beta", "vce_sat", "pmax", "vceo", "vbe",
                                              "vbe_tc", "beta_tc")


def _metavar(k: Key) -> str:
    if k.choices:
        return "|".join(k.choices) if len(k.choices) <= 3 else k.name.upper()
    if k.unit == "K":
        return "KELVIN|27C"
    if k.unit in ("str", "table"):
        return "TEXT"
    return UNITS[k.unit].metavar


@functools.lru_cache(maxsize=None)
def _parameter(kid: str, prefixed: bool = False) -> inspect.Parameter:
    k = keys()[kid]
    flag = network_flag(k) if prefixed else k.flag
    return inspect.Parameter(
        k.param, inspect.Parameter.KEYWORD_ONLY, default=None,
        annotation=Annotated[Optional[str], typer.Option(flag, help=k.help, rich_help_panel=PANELS[k.panel],
                                                         show_default=False, metavar=_metavar(k))])


def network_flag(k: Key) -> str:
    """The option of a ``[network]`` key on a stage command: ``--net-rc``, ``--net-c-in``,
    ``--net-type``.  The prefix keeps every option to one meaning: ``--rb`` of a stage command is
    the model's base spreading resistance, ``--net-rb`` the bias resistor (``bias`` keeps the
    short names, where there is no model)."""
    return "--net-" + k.name.replace("_", "-")


def NETWORK_KEYS(k: Key) -> bool:
    """The keys of the ``[network]`` table (the options ``--net-...`` of the stage commands)."""
    return k.table == "network"


@functools.lru_cache(maxsize=None)
def _file_parameter(help_: str) -> inspect.Parameter:
    return inspect.Parameter(
        "bias_file", inspect.Parameter.POSITIONAL_OR_KEYWORD, default=None,
        annotation=Annotated[Optional[Path], typer.Argument(help=help_, show_default=False, metavar="BIAS_FILE")])


FILE_HELP = ("TOML bias file; its top-level keys are the option names (ic = \"1mA\"); options override it. "
             "A \\[network] table (type, vcc, r1, r2, rb, rc, re, re_bypassed, c_in, c_out, c_bypass, c_base) sets "
             "the bias point and is part of the stage's AC analysis; a FET's \\[network] (rg1, rg2, rd, rsrc, "
             "rsrc_bypassed and the capacitors) is used with a given id and vds only (no DC solution for FETs yet).")


BARE_HELP = ("Analyse the bare transistor stage (with rdeg, rfb) instead of the stage as built from the bias "
             "file's \\[network] table (bias resistors, rc, re, coupling and bypass capacitors); the network "
             "still sets the bias point.")


@functools.lru_cache(maxsize=None)
def _bare_parameter() -> inspect.Parameter:
    return inspect.Parameter(
        "bare", inspect.Parameter.KEYWORD_ONLY, default=False,
        annotation=Annotated[bool, typer.Option("--bare", help=BARE_HELP, rich_help_panel=PANELS["stagenet"])])


def bias_options(select: Callable[[Key], bool] = MODEL_KEYS, file_help: str = FILE_HELP,
                 bare: bool = False, network: bool = False) -> Callable:
    """Add the bias-file argument and the options of the schema keys ``select`` picks to a command.

    The command receives them as one ``bias_in: Inputs`` argument.  The option parameters are
    made once and shared by every command (start-up time).  ``bare=True`` adds ``--bare``
    (the stage without its ``[network]`` in the AC analysis, :meth:`Inputs.stage`).
    ``bare=True`` or ``network=True`` also adds every ``[network]`` key the command's own
    selection does not hold, as ``--net-...`` (:func:`network_flag`): an option overrides the
    file's table as every option overrides the file.
    """
    chosen = tuple(k.id for k in keys().values() if select(k))
    prefixed = tuple(k.id for k in keys().values()
                     if (bare or network) and NETWORK_KEYS(k) and k.id not in chosen)
    chosen += prefixed

    def deco(func: Callable) -> Callable:
        import typing

        sig = inspect.signature(func)
        hints = typing.get_type_hints(func, include_extras=True)
        own = [p.replace(annotation=hints.get(p.name, p.annotation), kind=inspect.Parameter.KEYWORD_ONLY)
               for p in sig.parameters.values() if p.name != "bias_in"]
        extra = [_parameter(kid, kid in prefixed) for kid in chosen] + ([_bare_parameter()] if bare else [])

        @functools.wraps(func)
        def wrapper(*args, **kwargs):
            opts = {kid: kwargs.pop(keys()[kid].param, None) for kid in chosen}
            kwargs["bias_in"] = Inputs(kwargs.pop("bias_file", None), opts, bare=bool(kwargs.pop("bare", False)))
            kwargs["bias_in"].json = bool(kwargs.get("as_json"))
            return func(*args, **kwargs)

        wrapper.__signature__ = sig.replace(parameters=[_file_parameter(file_help)] + own + extra)
        return wrapper

    return deco


# --- the merged inputs --------------------------------------------------------------------------
_FET_HINT = {"ic": " (give --id)", "vce": " (give --vds)"}


class Inputs:
    """Bias values from a file and from options, merged once into SI values.

    Parameters
    ----------
    file : Path or None
        The bias file.
    options : dict of key id -> text or None
        Options as typed on the command line.
    bare : bool
        True: :meth:`stage` leaves the ``[network]`` table out of the AC analysis (the bare
        transistor stage); the network still sets the bias point.
    """

    def __init__(self, file: Path | None = None, options: dict[str, Any] | None = None, bare: bool = False) -> None:
        from ..biasfile import load_bias_file

        self.bare = bare
        self.json = False
        #: Datasheet values used at other conditions than given: name -> {"given", ..., "used", "note"}.
        self.datasheet: dict[str, dict] = {}
        self.file = file
        self.options = {k: v for k, v in (options or {}).items() if v is not None}
        self.flat, self.tables = load_bias_file(file) if file is not None else ({}, {})
        notes: list[str] = []
        self.values = merge(self.options, self.flat, self.tables, warnings=notes)
        for w in notes:
            warn(w)
        if "temp" not in self.values and "tref" in self.values:
            self.values["temp"] = self.values["tref"]  # the junction temperature defaults to tref
        self._model = None
        self._bias = None

    def with_value(self, kid: str, value: float, *, quiet: bool = True) -> "Inputs":
        """The same inputs with the key ``kid`` set to ``value`` (SI), as if given as an option.

        The file and the options are merged again (the one merge), so every rule that depends on
        the key applies; ``quiet`` keeps the datasheet notes out of table output (a trial value).
        """
        import copy

        trial = copy.copy(self)
        trial.json = True if quiet else self.json
        trial.datasheet = {}
        trial.values = merge({**self.options, kid: float(value)}, self.flat, self.tables)
        if "temp" not in trial.values and "tref" in trial.values:
            trial.values["temp"] = trial.values["tref"]
        trial._model = None
        trial._bias = None
        return trial

    def specs(self, options, results) -> list:
        """The specifications of a spread: the bias file's ``[spec]`` table and the ``--spec`` texts.

        Read by :func:`devmodels.worstcase.collect_specs` (the one reader): an option adds to the
        table, or replaces the table's limits on the same result in the same direction.
        """
        from ..worstcase import collect_specs

        return collect_specs(tuple(options or ()), self.tables.get("spec"), results)

    # -- raw access ---------------------------------------------------------------------------
    def given(self) -> bool:
        """True when any bias value was given at all."""
        return bool(self.options) or bool(self.flat) or bool(self.tables)

    def get(self, kid: str, default=None):
        v = self.values.get(kid)
        return default if v is None else v

    def require(self, kid: str, what: str):
        v = self.values.get(kid)
        if v is None:
            k = keys()[kid]
            where = f"'{k.name}' in the bias file" if k.table is None else f"'{k.name}' in its [{k.table}] table"
            raise InputError(f"{k.name}: missing; give {k.flag} or {where} ({what})")
        return v

    @property
    def device(self) -> str:
        return self.get("device", "npn")

    @property
    def family(self) -> str:
        """``bipolar``, ``mosfet`` or ``jfet``: which bias dataclass the device takes."""
        return FAMILY[self.device]

    @property
    def tref(self) -> float:
        """The temperature at which the datasheet values are given, K (default 300 K)."""
        from ..temperature import T_REF

        return self.get("tref", T_REF)

    def beta_at_temp(self, beta: float) -> float:
        """``beta`` given at :attr:`tref`, moved to the junction temperature ``temp``
        (:func:`devmodels.temperature.beta_at`; unchanged when temp = tref)."""
        from ..temperature import BETA_TC_DEFAULT, beta_at

        temp = self.get("temp", self.tref)
        if temp == self.tref:
            return beta
        return beta_at(temp, beta, self.get("beta_tc", BETA_TC_DEFAULT), self.tref)

    def _record(self, name: str, entry: dict) -> None:
        """Keep a datasheet value's "given at X, used at Y" (``model --json`` key ``datasheet``) and
        show its note on stderr in table mode."""
        self.datasheet[name] = entry
        if not self.json:
            note_later(entry["note"])

    def _check_datasheet(self) -> None:
        """Conflicts and test conditions without their value (one line each, exit 2)."""
        v = self.values
        if "cmu" in v and "cob" in v:
            raise InputError("cob: give cmu (C_mu at the bias point) or cob (at its test VCB), not both")
        for cond, value in (("ft_at_ic", "ft"), ("ft_at_vce", "ft"), ("c_je", "ft"), ("cob_at_vcb", "cob"),
                            ("cob_potential", "cob"), ("cob_exponent", "cob")):
            if cond in v and value not in v:
                raise InputError(f"{cond}: given without {value} (the datasheet value it belongs to)")
        if "cob" in v and "cob_at_vcb" not in v:
            raise InputError("cob_at_vcb: missing; give the test VCB of cob (datasheet, e.g. 10V)")
        if ("ft_at_vce" in v or "c_je" in v) and "ft_at_ic" not in v:
            name = "c_je" if "c_je" in v else "ft_at_vce"
            raise InputError(f"ft_at_ic: missing; {name} needs the test IC of ft")
        h_set = ("hie", "hre", "hfe", "hoe")
        if any(n in v for n in h_set + ("h_at_ic", "h_at_vce")):
            for n in h_set:
                if n not in v:
                    raise InputError(f"{n}: missing; the h-parameter set needs hie, hre, hfe and hoe at h_at_ic")
            if "h_at_ic" not in v:
                raise InputError("h_at_ic: missing; give the test IC of the h-parameters (datasheet, e.g. 1mA)")
            for other, what in (("beta", "hfe"), ("hfe_table", "hfe"), ("va", "hoe"), ("rb", "hie"),
                                ("rmu", "hre")):
                if other in v:
                    raise InputError(f"{other}: given with the h-parameter set, which sets it (from {what} at "
                                     f"h_at_ic); give one of them")
            if self.has_network():
                raise InputError("hfe: the h-parameter set is not yet usable with a [network] table (the network's "
                                 "point depends on beta); give beta, va, rb")

    def _h_elements(self):
        """The hybrid-pi elements of the h-parameter set at its test IC (at tref), or None."""
        if "hfe" not in self.values:
            return None
        from ..datasheet import hybrid_pi_from_h

        v = self.values
        return hybrid_pi_from_h(v["hie"], v["hre"], v["hfe"], v["hoe"], v["h_at_ic"], h_at_vce=v.get("h_at_vce"),
                                temp=self.tref)

    def _h_scaled(self, elements, ic: float, beta: float) -> dict:
        """``beta``, ``va``, ``rb``, ``rmu`` of the bias point from the h-parameter set moved to ``ic``
        (:func:`devmodels.datasheet.scale_hybrid_pi`), with its "given at X, used at Y" record."""
        import math

        from ..datasheet import scale_hybrid_pi

        sc = scale_hybrid_pi(elements, ic, beta=beta, temp=self.get("temp", self.tref))
        v = self.values
        self._record("hybrid_pi", {
            "given": {n: v[n] for n in ("hie", "hre", "hfe", "hoe")}, "at_ic": elements.ic,
            "at_vce": v.get("h_at_vce"), "ic": ic,
            "at_test": {"gm": elements.gm, "r_pi": elements.r_pi, "rb": elements.rb, "beta": elements.beta,
                        "r_mu": None if math.isinf(elements.r_mu) else elements.r_mu,
                        "ro": None if math.isinf(elements.ro) else elements.ro},
            "used": {"gm": float(sc.gm), "r_pi": float(sc.r_pi), "rb": sc.rb, "beta": float(sc.beta),
                     "r_mu": None if math.isinf(sc.r_mu) else float(sc.r_mu),
                     "ro": None if math.isinf(sc.ro) else float(sc.ro),
                     "va": None if math.isinf(sc.va) else sc.va},
            "note": f"{elements.note}; {sc.note.removeprefix('hybrid-pi: ')}"})
        return {"beta": float(sc.beta), "va": None if math.isinf(sc.va) else float(sc.va), "rb": float(sc.rb),
                "rmu": None if math.isinf(sc.r_mu) else float(sc.r_mu)}

    def _fet_datasheet(self, fields: dict) -> dict:
        """``cgs``, ``cgd``, ``cdb`` from the datasheet Ciss, Crss, Coss (:func:`devmodels.datasheet.fet_capacitances`)
        and the checks of yfs; ``{}`` when none is given.

        Decisions: yfs sets the model's gm (moved to the bias ID by the square law); kn, which sets
        the same gm a second time, is refused with it, and so is gamma (gmb follows the square-law
        gm).  vov (MOSFET) or idss and vp (JFET) still describe the DC point (saturation, ID <= IDSS).
        Ciss, Crss, Coss come as a set and replace cgs, cgd, cdb (Coss - Crss is the drain-source
        capacitance, which the model holds as cdb)."""
        v = self.values
        out: dict = {}
        if "yfs_at_id" in v and "yfs" not in v:
            raise InputError("yfs_at_id: given without yfs (the datasheet value it belongs to)")
        if "yfs" in v:
            if "yfs_at_id" not in v:
                raise InputError("yfs_at_id: missing; give the test ID of yfs (datasheet, e.g. 10mA)")
            for other in ("kn", "gamma"):
                if other in v:
                    raise InputError(f"{other}: given with yfs, which sets gm (square law from its test ID); "
                                     f"give one of them")
            if self.family == "mosfet" and "vov" not in v:
                raise InputError("vov: missing; with yfs give the overdrive vov (V) for the DC point "
                                 "(gm comes from yfs)")
            if self.family == "jfet" and "idss" in v and v["yfs_at_id"] > v["idss"]:
                raise InputError(f"yfs_at_id: {v['yfs_at_id']:g} A is above idss = {v['idss']:g} A (a JFET's "
                                 "drain current is at most IDSS)")
        caps = ("ciss", "crss", "coss")
        if "c_at_vds" in v and "ciss" not in v:
            raise InputError("c_at_vds: given without ciss, crss, coss (the datasheet values it belongs to)")
        if any(n in v for n in caps):
            for n in caps:
                if n not in v:
                    raise InputError(f"{n}: missing; the datasheet capacitances come as ciss, crss and coss")
            for other in ("cgs", "cgd", "cdb"):
                if other in v:
                    raise InputError(f"{other}: given with ciss, crss, coss, which set cgs, cgd and cdb; "
                                     "give one of them")
            from ..datasheet import fet_capacitances

            c = fet_capacitances(v["ciss"], v["crss"], v["coss"], at_vds=v.get("c_at_vds"))
            out.update(cgs=c.cgs, cgd=c.cgd, cdb=c.cds)
            self._record("capacitances", {"given": {n: v[n] for n in caps}, "at_vds": c.at_vds,
                                          "used": {"cgs": c.cgs, "cgd": c.cgd, "cdb": c.cds}, "note": c.note})
        return out

    def _datasheet(self, ic: float, vce: float) -> dict:
        """``ft`` and ``cmu`` of the bias point from the datasheet values at their test conditions
        (:mod:`devmodels.datasheet`): ``{}`` when none is given."""
        from ..temperature import VBE_DEFAULT, VBE_TC_DEFAULT, vbe_at

        v = self.values
        out: dict = {}
        temp = self.get("temp", self.tref)
        vbe_tc = self.get("vbe_tc", VBE_TC_DEFAULT)
        vbe_ref = self.get("vbe", VBE_DEFAULT)
        cmu_test = None
        if "cob" in v:
            from ..datasheet import COB_EXPONENT_DEFAULT, COB_POTENTIAL_DEFAULT, cmu_from_cob

            law = dict(cob_potential=self.get("cob_potential", COB_POTENTIAL_DEFAULT),
                       cob_exponent=self.get("cob_exponent", COB_EXPONENT_DEFAULT))
            vbe = vbe_at(temp, vbe_ref, vbe_tc, self.tref)
            c = cmu_from_cob(v["cob"], v["cob_at_vcb"], vce=vce, vbe=vbe, **law)
            out["cmu"] = float(c.c_mu)
            self._record("c_mu", {"given": c.cob, "at_vcb": c.cob_at_vcb, "used": float(c.c_mu),
                                  "vcb": float(c.vcb), **law, "note": c.note})
            if "ft_at_vce" in v:  # C_mu at the test point of fT, at tref
                cmu_test = float(cmu_from_cob(v["cob"], v["cob_at_vcb"], vce=v["ft_at_vce"], vbe=vbe_ref,
                                              **law).c_mu)
        if "ft_at_ic" in v:
            from ..datasheet import ft_at_bias

            cmu = out.get("cmu", self.get("cmu", 0.0))
            f = ft_at_bias(ic, v["ft"], v["ft_at_ic"], ft_at_vce=v.get("ft_at_vce"), c_je=v.get("c_je"),
                           c_mu=cmu, c_mu_test=cmu_test, temp=temp, test_temp=self.tref)
            out["ft"] = float(f.ft_used)
            self._record("ft", {"given": f.ft, "at_ic": f.ft_at_ic, "at_vce": f.ft_at_vce, "used": float(f.ft_used),
                                "ic": ic, "method": f.method, "tau_f": f.tau_f, "c_je": f.c_je, "note": f.note})
        return out

    def has_network(self) -> bool:
        """True when a ``[network]`` table or any network option (``--net-...``, or ``bias``'s
        ``--network``, ``--rc``, ...) is given."""
        return "network" in self.tables or any(k.startswith("network.") for k in self.values)

    def _check_family(self) -> None:
        fam = self.family
        if fam != "bipolar":
            dc = [keys()[k] for k in self.values if k.startswith("network.") and keys()[k].panel == "network"]
            if dc:
                raise InputError(f"{dc[0].label}: a {self.device} takes no DC bias network (it is solved for npn and "
                                 "pnp only); give id and vds, and the stage's AC values in [network] as rg1, rg2, "
                                 "rd, rsrc, rsrc_bypassed and the capacitors")
        for kid in self.values:
            k = keys()[kid]
            if k.family is None or k.family == fam or (k.family == "fet" and fam in ("mosfet", "jfet")):
                continue
            if fam == "bipolar":
                raise InputError(f"{k.name}: a FET option, but the device is {self.device}"
                                 f"{' (the default)' if 'device' not in self.values else ''}; "
                                 "give --device nmos, pmos, njfet or pjfet for a FET")
            what = {"bipolar": "bipolar", "mosfet": "MOSFET", "jfet": "JFET", "fet": "FET"}[k.family]
            raise InputError(f"{k.name}: a {what} option, not used for a {self.device}{_FET_HINT.get(k.name, '')}")

    def _fields(self, cls, skip=()) -> dict:
        import dataclasses

        out = {}
        for f in dataclasses.fields(cls):
            m = f.metadata.get("schema")
            if m is None or f.name in skip:
                continue
            v = self.values.get(m["key"] or f.name)
            if v is not None:
                out[f.name] = v
        return out

    # -- library objects ------------------------------------------------------------------------
    def ratings(self) -> tuple[float | None, float | None]:
        """The ratings pmax (W) and vceo (V), None where not given."""
        from ..validate import check_number

        return (check_number("pmax", self.get("pmax"), "W", positive=True, optional=True),
                check_number("vceo", self.get("vceo"), "V", positive=True, optional=True))

    def network(self):
        """The :class:`~devmodels.dcbias.BiasNetwork` of the inputs, or None without one."""
        from ..dcbias import BiasNetwork

        net = {k.split(".", 1)[1]: v for k, v in self.values.items()
               if k.startswith("network.") and keys()[k].panel != "stagenet"}
        if not net and not self.has_network():
            return None
        kind = net.pop("type", None)
        if kind is None:
            raise InputError("network: missing; give the network type fixed|divider|collector-feedback ('type' in "
                             "the [network] table; --network on bias, --net-type on the stage commands)")
        if "vcc" not in net:
            raise InputError("vcc: missing; give the supply voltage in V ('vcc' in the [network] table; --vcc on "
                             "bias, --net-vcc on the stage commands)")
        network = BiasNetwork(kind=kind, tol=self.get("tol", 0.0), **net)
        if self.family == "bipolar":
            self._stage_network(network)  # the AC values are checked by every command that reads the table
        return network

    def _stage_network(self, dc=None):
        """The :class:`~devmodels.stagenetwork.StageNetwork` of the ``[network]`` table.

        A bipolar network maps as it is (``type`` -> bias arrangement, ``r1``, ``r2``, ``rb``,
        ``rc``, ``re``, ``re_bypassed``); a FET network's ``rg1``/``rg2``/``rd``/``rsrc``/
        ``rsrc_bypassed`` become ``r1``/``r2``/``rc``/``re``/``re_bypassed`` (both gate resistors:
        a divider; one of them: a single resistor from the gate to AC ground; none: nothing at
        the gate).  The capacitors are shared.
        """
        from ..stagenetwork import StageNetwork

        ac = {k.split(".", 1)[1]: v for k, v in self.values.items()
              if k.startswith("network.") and keys()[k].panel == "stagenet"}
        for name, v in ac.items():
            if v != "short" and v < 0:
                unit = keys()["network." + name].unit
                what = "capacitance > 0 F (or \"short\")" if unit == "F" else "resistance >= 0 ohm"
                raise InputError(f"{name}: expected a {what}, got {v:g}")
        own = {"bipolar": ("r1", "r2", "rb", "rc", "re", "re_bypassed"), "fet": ("rg1", "rg2", "rd", "rsrc", "rsrc_bypassed")}
        fam = "bipolar" if self.family == "bipolar" else "fet"
        for name in ac:
            other = keys()["network." + name].family
            if other is not None and other != fam:
                raise InputError(f"{name}: a {'FET' if other == 'fet' else 'bipolar'} network key, not used for a "
                                 f"{self.device}; use {', '.join(own[fam])}")
        if fam == "bipolar":
            if dc is None:
                dc = self.network()
            part, whole, whole_name = ac.get("re_bypassed"), dc.re, "re"
            fields = dict(bias=dc.kind, r1=dc.r1, r2=dc.r2, rb=dc.rb, rc=dc.rc, re=dc.re)
            bypassed_name = "re_bypassed"
        else:
            rg1, rg2 = ac.get("rg1"), ac.get("rg2")
            if rg1 is not None and rg2 is not None:
                gate = dict(bias="divider", r1=rg1, r2=rg2)
            elif rg1 is not None or rg2 is not None:
                gate = dict(bias="fixed", rb=rg1 if rg1 is not None else rg2)
            else:
                gate = dict(bias="none")
            for name in ("rg1", "rg2"):
                if ac.get(name) == 0:
                    raise InputError(f"{name}: expected a gate resistance > 0 ohm, got 0 (leave it out for none)")
            part, whole, whole_name = ac.get("rsrc_bypassed"), ac.get("rsrc", 0.0), "rsrc"
            fields = dict(**gate, rc=ac.get("rd", 0.0), re=whole)
            bypassed_name = "rsrc_bypassed"
        if part is not None:
            if part > whole:
                raise InputError(f"{bypassed_name}: {part:g} ohm is more than {whole_name} = {whole:g} ohm; the "
                                 f"bypassed part of {whole_name} cannot be larger than {whole_name}")
            if ac.get("c_bypass") is None:
                raise InputError(f"{bypassed_name}: given without c_bypass (the capacitor that bypasses it)")
        self._built = StageNetwork(**fields, re_bypassed=part, c_in=ac.get("c_in"), c_out=ac.get("c_out"),
                                   c_bypass=ac.get("c_bypass"), c_base=ac.get("c_base"))
        return self._built

    def stage_network(self):
        """The stage network of the AC analysis (:meth:`_stage_network`), or None: no ``[network]``
        table, or ``bare``."""
        if self.bare or not self.has_network():
            return None
        self._check_family()
        return self._stage_network()

    def operating_point(self, beta: float | None = None):
        """The :class:`~devmodels.dcbias.OperatingPoint` of the bias network (any region)."""
        from ..bias import DEFAULT_VCE_SAT
        from ..dcbias import operating_point
        from ..temperature import BETA_TC_DEFAULT, T_REF, VBE_DEFAULT, VBE_TC_DEFAULT

        network = self.network()
        if network is None:
            raise InputError("network: missing; give --network fixed|divider|collector-feedback "
                             "or a [network] table in the bias file")
        if self.family != "bipolar":
            raise InputError(f"device: a bias network takes npn or pnp, got {self.device}")
        beta = self.require("beta", "DC current gain at tref") if beta is None else beta
        pmax, vceo = self.ratings()
        return operating_point(network, beta, device=self.device, vbe=self.get("vbe", VBE_DEFAULT),
                               temp=self.get("temp", T_REF), t_ref=self.tref,
                               vbe_tc=self.get("vbe_tc", VBE_TC_DEFAULT),
                               beta_tc=self.get("beta_tc", BETA_TC_DEFAULT),
                               vce_sat=self.get("vce_sat", DEFAULT_VCE_SAT), pmax=pmax, vceo=vceo)

    def bias_point(self):
        """The bias dataclass of the device: BipolarBias (from IC and VCE, or a solved network),
        MosfetBias or JfetBias.  Warns (once) when a rating is exceeded."""
        if self._bias is not None:
            return self._bias
        self._check_family()
        from ..dcbias import rating_warnings

        fam = self.family
        pmax, vceo = self.ratings()
        if fam == "bipolar":
            from ..bias import BipolarBias

            fields = self._fields(BipolarBias)
            self._check_datasheet()
            if self.has_network():
                for name in ("ic", "vce", "ib"):
                    if name in self.values:
                        raise InputError(f"{name}: the bias file describes a bias network, which sets IC and VCE; "
                                         f"remove '{name}' (or the [network] table)")
                if "hfe_table" in self.values:
                    raise InputError("hfe_table: not yet usable with a [network] table (the network's point "
                                     "depends on beta); give beta")
                op = self.operating_point()
                for w in op.warnings:  # the network's own rating check (power, VCE and the supply)
                    warn(w)
                datasheet = {k: v for k, v in fields.items() if k not in ("beta", "temp", "vce_sat")}
                if op.region == "active":
                    datasheet.update(self._datasheet(abs(op.ic), abs(op.vce)))
                bias = op.bipolar_bias(**datasheet)  # BiasError when the network is not in the active region
            else:
                self.require("vce", "collector-emitter voltage in V, e.g. 5V")
                table = self.get("hfe_table")
                if table is not None and "beta" in self.values:
                    raise InputError("hfe_table: give beta or hfe_table, not both")
                h_elements = self._h_elements()
                if h_elements is not None:  # found at tref, moved to temp like a given beta
                    beta = self.beta_at_temp(float(h_elements.beta))
                elif table is None:
                    self.require("beta", "current gain hFE, e.g. 100")
                    beta = self.beta_at_temp(fields["beta"])
                else:  # the table is given at tref: every hFE moves to temp by the same factor
                    table = [[ic_, hfe * self.beta_at_temp(1.0)] for ic_, hfe in table]
                    beta = None
                if "ib" in self.values:
                    from ..datasheet import ic_from_ib

                    if "ic" in self.values:
                        raise InputError("ib: give ic or ib, not both")
                    got = ic_from_ib(self.values["ib"], beta, hfe_table=table)
                    fields["ic"] = float(got.ic)
                    self._record("ic", {"ib": self.values["ib"], "used": float(got.ic), "note": got.note})
                    for w in got.warnings:
                        warn(w)
                else:
                    self.require("ic", "collector current in A, e.g. 1mA (or ib)")
                if table is not None:
                    from ..datasheet import hfe_from_table

                    h = hfe_from_table(table, abs(fields["ic"]))  # a pnp's IC may be written negative
                    beta = float(h.beta)
                    self._record("beta", {"table": self.values["hfe_table"], "used": beta, "at_ic": fields["ic"],
                                          "temp": self.get("temp", self.tref), "tref": self.tref,
                                          "note": h.note + ("" if self.get("temp", self.tref) == self.tref else
                                                            f"; the table's hFE moved from tref = {self.tref:.2f} K "
                                                            f"to {self.get('temp'):.2f} K (beta_tc)")})
                    for w in h.warnings:
                        warn(w)
                fields["beta"] = beta
                if h_elements is not None:
                    fields.update(self._h_scaled(h_elements, abs(fields["ic"]), beta))
                fields.update(self._datasheet(abs(fields["ic"]), abs(fields["vce"])))
                bias = BipolarBias(device=self.device, **fields)
            if not self.has_network():
                for w in rating_warnings(bias.power, bias.vce, 0.0, pmax=pmax, vceo=vceo):
                    warn(w)
        else:
            from ..fetbias import JfetBias, MosfetBias

            self.require("id", "drain current in A, e.g. 2mA")
            self.require("vds", "drain-source voltage in V, e.g. 3V")
            if fam == "jfet":
                self.require("idss", "drain current at VGS = 0 in A, e.g. 8mA")
                self.require("vp", "pinch-off voltage in V, e.g. -2V")
            cls = MosfetBias if fam == "mosfet" else JfetBias
            fields = self._fields(cls)
            fields.update(self._fet_datasheet(fields))
            bias = cls(device=self.device, **fields)
            if self.has_network():
                self._stage_network()  # the FET network's AC values, checked by every command
            for w in rating_warnings(bias.id * bias.vds, 0.0, 0.0, pmax=pmax, vceo=None):
                warn(w)
        self._bias = bias
        return bias

    def model(self):
        """The small-signal device model (hybrid-pi for a bipolar device, FetModel for a FET)."""
        if self._model is None:
            bias = self.bias_point()
            if self.family == "bipolar":
                from ..models import HybridPi

                self._model = HybridPi.from_bias(bias)
            else:
                from ..fet import FetModel

                import dataclasses

                model = FetModel.from_bias(bias)
                temp = self.get("temp")
                if temp is not None:  # the device (and its noise) at the junction temperature
                    model = dataclasses.replace(model, temp=temp)
                if "yfs" in self.values:
                    from ..datasheet import gm_from_yfs

                    g = gm_from_yfs(self.values["yfs"], self.values["yfs_at_id"], abs(bias.id))
                    model = dataclasses.replace(model, gm=float(g.gm))
                    self._record("gm", {"given": g.yfs, "at_id": g.yfs_at_id, "used": float(g.gm),
                                        "id": float(g.id), "note": g.note})
                self._model = model
        return self._model

    def configs(self) -> tuple[str, ...]:
        """The configurations the device supports (``model.configs``)."""
        return tuple(self.model().configs)

    def stage(self, config: str | None):
        """A :class:`~devmodels.stage.Stage` of the model in ``config`` (None: the model's first,
        ce or cs) with ``rdeg`` and ``rfb``."""
        from ..stage import Stage

        model = self.model()
        return Stage(model, config, self.get("rdeg", 0.0), self.get("rfb"), network=self.stage_network())

    def spread(self, config: str, freq: float, rs: complex, rl: complex, z0, samples: int, seed):
        """The :class:`~devmodels.spread.SpreadSetup` and :class:`~devmodels.spread.SpreadRanges`."""
        from ..bias import DEFAULT_VCE_SAT
        from ..spread import SpreadRanges, SpreadSetup
        from ..temperature import BETA_TC_DEFAULT, VBE_DEFAULT, VBE_TC_DEFAULT
        from ..validate import p_type_magnitudes

        self._check_family()
        if self.family != "bipolar":
            raise InputError(f"device: the spread takes npn or pnp, got {self.device}")
        for kid in self.values:
            if keys()[kid].panel == "datasheet":
                raise InputError(f"{keys()[kid].name}: datasheet values at test conditions are not used by spread yet; "
                                 "give ft, cmu and beta limits at the bias point")
        beta = self.get("beta")
        bmin, bmax, btyp = self.get("beta_min"), self.get("beta_max"), self.get("beta_typ")
        if (bmin is None) != (bmax is None):
            missing = "beta_max" if bmax is None else "beta_min"
            raise InputError(f"{missing}: missing; give both --beta-min and --beta-max (or neither, with --beta)")
        if bmin is None:
            if beta is None:
                raise InputError("beta_min: missing; give --beta-min and --beta-max (or --beta for a fixed gain)")
            bmin = bmax = beta
        temp = self.get("temp", self.tref)
        ranges = SpreadRanges(beta_min=bmin, beta_max=bmax, beta_typ=btyp, temp_min=self.get("temp_min", temp),
                              temp_max=self.get("temp_max", temp), tol=self.get("tol", 0.0), samples=samples,
                              seed=seed, ctol=self.get("ctol", 0.0))
        network = None
        ic = vce = None
        if self.has_network():
            for name in ("ic", "vce"):
                if name in self.values:
                    raise InputError(f"{name}: the bias file describes a bias network, which sets IC and VCE; "
                                     f"remove '{name}' (or the [network] table)")
            import dataclasses

            network = dataclasses.replace(self.network(), tol=0.0)  # the spread draws the tolerance itself
        else:
            ic = self.require("ic", "collector current in A, or a [network] table in the bias file")
            vce = self.require("vce", "collector-emitter voltage in V, or a [network] table")
            ic, vce = p_type_magnitudes(("ic", "vce"), self.device, ic, vce, self.device == "pnp")
        pmax, vceo = self.ratings()
        setup = SpreadSetup(
            config=config, freq=freq, rs=rs, rl=rl, network=network, ic=ic, vce=vce, device=self.device,
            vbe=self.get("vbe", VBE_DEFAULT), vbe_tc=self.get("vbe_tc", VBE_TC_DEFAULT),
            beta_tc=self.get("beta_tc", BETA_TC_DEFAULT), vce_sat=self.get("vce_sat", DEFAULT_VCE_SAT),
            va=self.get("va"), ft=self.get("ft"), cmu=self.get("cmu", 0.0), rb=self.get("rb", 0.0),
            rcx=self.get("rcx", 0.0), rex=self.get("rex", 0.0), rmu=self.get("rmu"), rdeg=self.get("rdeg"),
            l_b=self.get("l_b", 0.0), l_c=self.get("l_c", 0.0), l_e=self.get("l_e", 0.0),
            rfb=self.get("rfb"), z0=z0, pmax=pmax, vceo=vceo, t_ref=self.tref,
            stage_network=None if network is None else self.stage_network())  # the stage gain analyses
        if network is not None:  # the library's checks of a network point (supply sign, vce_sat, vbe)
            self.operating_point(beta=bmin)
        from ..validate import check_number

        for name in ("va", "ft", "rmu", "vbe"):
            check_number(name, setup.__getattribute__(name), keys()[name].unit, positive=True, optional=True)
        for name in ("cmu", "rb", "rcx", "rex"):
            check_number(name, setup.__getattribute__(name), keys()[name].unit, nonneg=True)
        return setup, ranges


# --- the other options ----------------------------------------------------------------------------
#: Range of a given parameter's magnitude (any unit): beyond it the conversions overflow.
GIVEN = Bounds(1e-30, 1e30)

def check_kind(kind: str) -> str:
    from ..constants import KINDS

    k = kind.strip().lower()
    if k not in KINDS:
        raise InputError(f"kind: unknown parameter kind {shown(kind)}, expected one of {', '.join(KINDS)}")
    return k


def check_config(config: str) -> str:
    from ..constants import BJT_CONFIGS, FET_CONFIGS

    c = config.strip().lower()
    if c not in BJT_CONFIGS + FET_CONFIGS:
        raise InputError(f"config: unknown configuration {shown(config)}, expected one of "
                         f"{', '.join(BJT_CONFIGS + FET_CONFIGS)}")
    return c


def parse_freq(text, name: str = "freq") -> float:
    """One frequency in Hz (>= 0, within :data:`devmodels.schema.FREQ`)."""
    f = parse_quantity(text, "Hz", name)
    if f < 0:
        raise InputError(f"{name}: expected a frequency >= 0 Hz, got {shown(text)}")
    return check_bounds(name, f, "Hz", FREQ, text)


def parse_freqs(values: list[str] | None, default: list[float] | None = None) -> np.ndarray | None:
    """Frequencies in Hz from repeated ``--freq`` values (a value may hold a comma list)."""
    if not values:
        return None if default is None else np.asarray(default, dtype=float)
    out = [parse_freq(part) for v in values for part in str(v).split(",")]
    if len(out) > MAX_POINTS:
        raise InputError(f"freq: {len(out):,} frequencies is more than the {MAX_POINTS:,} this computer can hold")
    return np.asarray(out, dtype=float)


def parse_points(text, name: str = "points") -> int:
    """A number of points (``101``, ``1e6``), at most :data:`devmodels.schema.MAX_POINTS`."""
    return parse_count(text, name, MAX_POINTS)


def parse_z0(text: str | None) -> tuple[float, float]:
    """``'50'`` or ``'50,75'`` -> reference resistances of port 1 and port 2 in ohm."""
    if text is None:
        return (50.0, 50.0)
    parts = str(text).split(",")
    if len(parts) not in (1, 2):
        raise InputError(f"z0: expected one value or two (port1,port2) in ohm, got {shown(text)}")
    vals = []
    for p in parts:
        v = parse_quantity(p, "Ohm", "z0")
        if v <= 0:
            raise InputError(f"z0: expected a positive reference resistance in ohm, got {shown(p.strip())}")
        vals.append(check_bounds("z0", v, "Ohm", Z0, p.strip()))
    return (vals[0], vals[-1])


def terminations(rs, rl) -> tuple[complex, complex]:
    """Source and load impedances (``rl`` may be ``open``)."""
    return (parse_impedance(rs, "rs", bounds=IMPEDANCE),
            parse_impedance(rl, "rl", allow_open=True, bounds=IMPEDANCE))


def parse_given(text: str, z0=(50.0, 50.0), freq: np.ndarray | None = None, config: str | None = None,
                name: str = "params"):
    """A :class:`~devmodels.twoport.TwoPort` from ``KIND=v11,v12,v21,v22`` (units and complex values allowed).

    Without ``freq`` the result has one point and no frequency; with it, the same
    (frequency-independent) values are repeated at every frequency.
    """
    from ..constants import KINDS
    from ..twoport import TwoPort
    from .render import ELEMENT_UNITS

    s = str(text).strip()
    if s.count("=") != 1:
        raise InputError(f"{name}: expected KIND=v11,v12,v21,v22 (KIND one of {', '.join(KINDS)}), got {shown(text)}")
    kind, _, rest = s.partition("=")
    kind = kind.strip().lower()
    if kind not in KINDS:
        raise InputError(f"{name}: unknown parameter kind {shown(kind)}, expected one of {', '.join(KINDS)}")
    vals = rest.split(",")
    if len(vals) != 4:
        raise InputError(f"{name}: expected four values v11,v12,v21,v22 after '{kind}=', got {len(vals)}")
    units = {"S": "S", "Ω": "Ohm", "": ""}
    data = []
    for v, n, u in zip(vals, ("11", "12", "21", "22"), ELEMENT_UNITS[kind]):
        z = parse_complex(v, units[u], f"{name} {kind}{n}")
        check_bounds(f"{name} {kind}{n}", abs(z), units[u], GIVEN, v.strip())
        data.append(z)
    arr = np.array(data, dtype=complex).reshape(1, 2, 2)
    if freq is None:
        return TwoPort(None, arr, kind, z0, config)
    return TwoPort(freq, np.repeat(arr, len(freq), axis=0), kind, z0, config)


def two_port_input(bias_in: Inputs, given: str | None, touchstone: Path | None, config: str,
                   freq: np.ndarray | None, z0, default_freq: float = 1e3):
    """The two-port to work on: from a bias point, from ``--params`` or from ``--touchstone``.

    A bias point without ``freq`` is taken at ``default_freq`` (Hz); given parameters keep
    one frequency-independent point, a Touchstone file all its frequencies (a frequency that
    is not in the file is interpolated, with a warning).
    """
    config = check_config(config) if config is not None else None
    if given is not None and touchstone is not None:
        raise InputError("params: give either --params or --touchstone, not both")
    if given is not None or touchstone is not None:
        if bias_in.given():
            what = "--params" if given is not None else "--touchstone"
            raise InputError(f"{what.lstrip('-')}: give either a two-port ({what}) or a bias point, not both")
        if given is not None:
            return parse_given(given, z0, freq, config or "ce")
        return read_touchstone_at(touchstone, freq, config or "ce")
    if not bias_in.given():
        raise InputError("bias point: missing; give a bias file, bias options (--ic, --vce, --beta, ...), "
                         "--params or --touchstone")
    f = freq if freq is not None else np.array([default_freq])
    return bias_in.stage(config).two_port(f, "y", z0)


def read_touchstone_at(path: Path, freq, config):
    """A Touchstone file's two-port; a warning when a requested frequency is not in the file."""
    from ..touchstone import read_touchstone

    tp = read_touchstone(path, None, config)
    if freq is None:
        return tp
    if tp.freq is not None and not np.all(np.isin(freq, tp.freq)):
        warn("freq: a requested frequency is not in the Touchstone file; its values are interpolated "
             "linearly in real and imaginary parts between the neighbouring points")
    return read_touchstone(path, freq, config)


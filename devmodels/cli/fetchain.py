"""Commands for FETs, chains of stages, feedback connections and formulas.

``cascade``, ``connect``, ``formula``; plus the FET side of the shared bias options
(:func:`fet_bias_or_none`, used by ``BiasInputs.model()`` and the ``model`` command).
"""

from __future__ import annotations

import math
from pathlib import Path
from typing import Annotated, Optional

import numpy as np
import typer

from ..exceptions import InputError
from .app import app
from .common import (FreqOpt, JsonOpt, Z0Opt, BiasInputs, bias_options, emit_json, parse_freqs, parse_given,
                     parse_z0, points_json, print_table, print_twoport, warn)

#: Bias options that only a FET uses (internal names; ``lambda_`` is ``--lambda`` / ``lambda``).
FET_ONLY = ("id", "vds", "vov", "kn", "lambda_", "gamma", "vsb", "two_phi_f", "cgs", "cgd", "csb", "cdb",
            "idss", "vp", "rg")
MOS_ONLY = ("vov", "kn", "gamma", "vsb", "two_phi_f")
JFET_ONLY = ("idss", "vp")
#: Bias options that only a bipolar device uses.
BJT_ONLY = ("ic", "vce", "beta", "va", "ft", "cmu", "rb", "rmu", "rcx", "rex", "vce_sat")
#: Frequency of a single-point analysis when none is given, Hz.
DEFAULT_FREQ = 1e3


def _flag(name: str) -> str:
    return "--" + name.rstrip("_").replace("_", "-")


def _raw(bias_in: BiasInputs, name: str):
    v = bias_in.options.get(name)
    return v if v is not None else bias_in.flat.get(name.rstrip("_"))


def _val(bias_in: BiasInputs, name: str, unit: str, default=None):
    from ..units import parse_quantity

    v = _raw(bias_in, name)
    return default if v is None else parse_quantity(v, unit, name.rstrip("_"))


def _need(bias_in: BiasInputs, name: str, unit: str, what: str) -> float:
    v = _val(bias_in, name, unit)
    if v is None:
        raise InputError(f"{name}: missing; give {_flag(name)} or '{name}' in the bias file ({what})")
    return v


def fet_bias_or_none(bias_in: BiasInputs):
    """The FET bias point (MosfetBias or JfetBias) the inputs describe, or None for a bipolar device.

    Refuses options of the other family (``--ic`` for a FET, ``--id`` for a bipolar device).
    """
    from ..fetbias import DEFAULT_SURFACE_POTENTIAL, FET_DEVICES, JfetBias, MosfetBias

    device = (bias_in.value("device", "str") or "").lower()
    if device not in FET_DEVICES:
        given = [n for n in FET_ONLY if _raw(bias_in, n) is not None]
        if given and device in ("", "npn", "pnp"):
            name = given[0].rstrip("_")
            raise InputError(f"{name}: a FET option, but the device is {device or 'npn (the default)'}; "
                             f"give --device {'|'.join(FET_DEVICES)} for a FET")
        return None
    for group, what in ((BJT_ONLY, "bipolar"), (JFET_ONLY if device.endswith("mos") else MOS_ONLY,
                                               "JFET" if device.endswith("mos") else "MOSFET")):
        for n in group:
            if _raw(bias_in, n) is not None:
                hint = {"ic": " (give --id)", "vce": " (give --vds)"}.get(n, "")
                raise InputError(f"{n.rstrip('_')}: a {what} option, not used for a {device}{hint}")
    common = dict(
        id=_need(bias_in, "id", "A", "drain current in A, e.g. 2mA"),
        vds=_need(bias_in, "vds", "V", "drain-source voltage in V, e.g. 3V"),
        device=device,
        lambda_=_val(bias_in, "lambda_", ""),
        cgs=_val(bias_in, "cgs", "F", 0.0), cgd=_val(bias_in, "cgd", "F", 0.0),
        csb=_val(bias_in, "csb", "F", 0.0), cdb=_val(bias_in, "cdb", "F", 0.0),
        rg=_val(bias_in, "rg", "Ohm", 0.0),
    )
    if device.endswith("mos"):
        bias = MosfetBias(vov=_val(bias_in, "vov", "V"), kn=_val(bias_in, "kn", ""),
                          gamma=_val(bias_in, "gamma", ""), vsb=_val(bias_in, "vsb", "V", 0.0),
                          two_phi_f=_val(bias_in, "two_phi_f", "V", DEFAULT_SURFACE_POTENTIAL), **common)
    else:
        bias = JfetBias(idss=_need(bias_in, "idss", "A", "drain current at VGS = 0 in A, e.g. 8mA"),
                        vp=_need(bias_in, "vp", "V", "pinch-off voltage in V, e.g. -2V"), **common)
    bias_in.check_ratings(bias.id * bias.vds, None)  # pmax (a FET has no vceo)
    return bias


def fet_model_or_none(bias_in: BiasInputs):
    """The :class:`~devmodels.fet.FetModel` for a FET device, or None for a bipolar device."""
    from ..fet import FetModel

    bias = fet_bias_or_none(bias_in)
    return None if bias is None else FetModel.from_bias(bias)


def _none_if_inf(x):
    return None if x is None or not math.isfinite(x) else x


def print_fet_model(bias, as_json: bool) -> None:
    """The ``model`` command for a FET: JSON keys gm, gmb, ro, cgs, cgd, ft, vov (and more)."""
    from ..fet import FetModel
    from ..fetbias import JfetBias
    from ..units import format_si

    m = FetModel.from_bias(bias)
    jfet = isinstance(bias, JfetBias)
    ro = _none_if_inf(m.ro)
    out = {"gm": m.gm, "gmb": None if jfet else m.gmb, "ro": ro, "cgs": m.cgs, "cgd": m.cgd, "ft": m.ft,
           "vov": m.vov, "csb": m.csb, "cdb": m.cdb, "rg": m.rg, "gm_ro": _none_if_inf(m.intrinsic_gain),
           "device": bias.device, "id": bias.id, "vds": bias.vds, "power": bias.id * bias.vds}
    if jfet:
        out.update(idss=bias.idss, vp=bias.vp, vgs=bias.vgs, gm0=2 * bias.idss / abs(bias.vp))
    else:
        out.update(kn=2 * bias.id / bias.vov ** 2, vsb=bias.vsb, two_phi_f=bias.two_phi_f, gamma=bias.gamma)
    if as_json:
        emit_json(out)
        return
    rows = [["gm", format_si(m.gm, "S"),
             "(2/|VP|) sqrt(ID IDSS)" if jfet else ("sqrt(2 kn ID)" if bias.kn else "2 ID / Vov")],
            ["Vov", format_si(m.vov, "V"), "|VP| sqrt(ID/IDSS)" if jfet else ("sqrt(2 ID / kn)" if bias.kn else "given")]]
    if jfet:
        rows += [["VGS", format_si(bias.vgs, "V"), "VP (1 - sqrt(ID/IDSS))"],
                 ["gm0", format_si(out["gm0"], "S"), "2 IDSS / |VP|  (at VGS = 0)"]]
    else:
        rows += [["kn", format_si(out["kn"], "A/V²"), "2 ID / Vov²" if bias.kn is None else "given"],
                 ["gmb", format_si(m.gmb, "S") if bias.gamma is not None else "0 S (no gamma given)",
                  "gamma gm / (2 sqrt(2phiF + VSB))"]]
    rows += [["ro", format_si(ro, "Ω") if ro else "open", "1 / (lambda ID)"],
             ["gm ro", f"{m.intrinsic_gain:.4g}" if ro else "unbounded", "intrinsic gain"],
             ["Cgs", format_si(m.cgs, "F"), "given"], ["Cgd", format_si(m.cgd, "F"), "given"],
             ["fT", format_si(m.ft, "Hz") if m.ft else "unbounded", "gm / (2 pi (Cgs + Cgd))"]]
    if m.csb or m.cdb:
        rows.append(["Csb / Cdb", f"{format_si(m.csb, 'F')} / {format_si(m.cdb, 'F')}", "given"])
    if m.rg:
        rows.append(["rg", format_si(m.rg, "Ω"), "given"])
    title = (f"Small-signal model: {bias.device}, ID = {format_si(bias.id, 'A')}, "
             f"VDS = {format_si(bias.vds, 'V')}, P = {format_si(bias.id * bias.vds, 'W')}")
    print_table(title, ["element", "value", "relation"], rows)


# --- shared helpers of the commands --------------------------------------------------------

def _stage_from_file(spec: str, what: str, default_config: str | None = None):
    """``CONFIG:FILE`` -> (config, path, BiasInputs)."""
    if ":" in spec:
        config, _, path = spec.partition(":")
        config = config.strip().lower()
    elif default_config is not None:
        config, path = default_config, spec
    else:
        raise InputError(f"{what}: expected CONFIG:BIASFILE (e.g. ce:q1.toml), got {spec!r}")
    if not path.strip():
        raise InputError(f"{what}: no bias file after '{config}:' in {spec!r}")
    return config, path.strip(), BiasInputs(Path(path.strip()), {})


def _family_config(bias_in: BiasInputs, bjt: str, fet: str) -> str:
    from ..fet import is_fet_model

    return fet if is_fet_model(bias_in.model()) else bjt


def _cx(z, unit: str = "", kind: str = "open", polar: bool = False) -> str:
    from ..units import format_complex

    z = complex(z)
    if not (math.isfinite(z.real) and math.isfinite(z.imag)):
        return kind
    return format_complex(z, unit, 4, polar)


def _num(x, unit: str = "", kind: str = "unbounded") -> str:
    from ..units import format_si

    return format_si(float(x), unit) if math.isfinite(float(x)) else kind


def _resistance(text: str | None, name: str, *, allow_open: bool) -> float | None:
    from ..units import parse_quantity

    if text is None:
        return None
    if allow_open and str(text).strip().lower() in ("open", "inf"):
        return math.inf
    v = parse_quantity(text, "Ohm", name)
    if v < 0:
        raise InputError(f"{name}: expected a resistance >= 0 ohm, got {text}")
    return v


GAIN_KEYS = ("freq", "av", "avs", "ai", "zin", "zout", "gt_db", "gp_db", "ga_db", "k", "delta", "mu",
             "mu_prime", "msg_db", "u_db")


# --- cascade ---------------------------------------------------------------------------------

PAIRS = {"cascode": (("ce", "cs"), ("cb", "cg")), "follower": (("ce", "cs"), ("cc", "cd"))}


@app.command("cascade")
def cascade_cmd(
    stage: Annotated[Optional[list[str]], typer.Option(
        "--stage", "-s", help="A stage as CONFIG:BIASFILE (e.g. ce:q1.toml); repeat, in order from input "
                              "to output.", show_default=False)] = None,
    pair: Annotated[Optional[str], typer.Option(
        "--pair", help="A common pair as NAME:FILE1,FILE2: cascode (ce+cb, or cs+cg for FETs) or follower "
                       "(gain stage then follower: ce+cc, or cs+cd).", show_default=False)] = None,
    rs: Annotated[str, typer.Option("--rs", help="Source resistance, ohm.")] = "50",
    rl: Annotated[str, typer.Option("--rl", help="Load resistance, ohm ('open' for none).")] = "1k",
    freq: FreqOpt = None, z0: Z0Opt = "50",
    polar: Annotated[bool, typer.Option("--polar", help="Show complex values as magnitude and angle.")] = False,
    as_json: JsonOpt = False,
) -> None:
    """Two or more stages in a chain (ABCD product): the whole chain's gains, impedances and
    stability between --rs and --rl, and each stage's gain and impedances as loaded in the chain."""
    from ..chain import analyse_chain

    specs: list[tuple[str, str, BiasInputs]] = []
    if pair is not None:
        if stage:
            raise InputError("pair: give either --pair or --stage, not both")
        name, _, files = pair.partition(":")
        name = name.strip().lower()
        if name not in PAIRS:
            raise InputError(f"pair: unknown pair {name!r}, expected cascode or follower (NAME:FILE1,FILE2)")
        paths = [p.strip() for p in files.split(",")]
        if len(paths) != 2 or not all(paths):
            raise InputError(f"pair: expected two bias files as {name}:FILE1,FILE2, got {pair!r}")
        for (bjt, fet), path in zip(PAIRS[name], paths):
            _, _, b = _stage_from_file(path, "pair", default_config="?")
            specs.append((_family_config(b, bjt, fet), path, b))
    else:
        for spec in stage or []:
            specs.append(_stage_from_file(spec, "stage"))
    if len(specs) < 2:
        raise InputError(f"stage: a cascade needs at least two stages (--stage CONFIG:BIASFILE, repeated, "
                         f"or --pair), got {len(specs)}")
    f = parse_freqs(freq, default=[DEFAULT_FREQ])
    z0v = parse_z0(z0)
    rs_v = _resistance(rs, "rs", allow_open=False)
    rl_v = _resistance(rl, "rl", allow_open=True)
    parts = []
    for i, (config, path, b) in enumerate(specs, start=1):
        tp = b.stage(config).two_port(f, "y", z0v)
        parts.append(tp)
    res = analyse_chain(parts, rs_v, rl_v, z0v)
    chain_name = "+".join(c for c, _, _ in specs)
    t = res.total
    points = [{k: v for k, v in t.point(i).items() if k in GAIN_KEYS} for i in range(len(t))]
    stages = [{"config": c, "file": p,
               "points": [{"freq": float(f[i]), "av": res.av[k, i], "zin": res.zin[k, i], "zout": res.zout[k, i]}
                          for i in range(len(f))]}
              for k, (c, p, _) in enumerate(specs)]
    if as_json:
        emit_json({"config": chain_name, "rs": rs_v, "rl": rl_v, "z0": z0v[0] if z0v[0] == z0v[1] else list(z0v),
                   "points": points, "stages": stages})
        return
    from ..units import format_si

    rows = [[format_si(p["freq"], "Hz"), _cx(p["av"], polar=polar, kind="unbounded"),
             _cx(p["avs"], polar=polar, kind="unbounded"), _cx(p["zin"], "Ω", polar=polar),
             _cx(p["zout"], "Ω", polar=polar), _num(p["gt_db"], "dB", "—"), _num(p["k"], "", "—"),
             _num(p["msg_db"], "dB")] for p in points]
    rl_txt = "open" if math.isinf(rl_v) else format_si(rl_v, "Ω")
    print_table(f"Chain {chain_name.upper()} between Rs = {format_si(rs_v, 'Ω')} and RL = {rl_txt}",
                ["freq", "av", "avs", "zin", "zout", "GT", "K", "MAG/MSG"], rows)
    srows = []
    for k, s in enumerate(stages):
        for p in s["points"]:
            srows.append([f"{k + 1} {s['config']}", format_si(p["freq"], "Hz"),
                          _cx(p["av"], polar=polar, kind="unbounded"), _cx(p["zin"], "Ω", polar=polar),
                          _cx(p["zout"], "Ω", polar=polar)])
    print_table("Each stage as loaded in the chain", ["stage", "freq", "av", "zin", "zout"], srows,
                caption="av = V(out)/V(in) of the stage; zin with the rest of the chain as load; "
                        "zout with the chain before it (from Rs) as source.")


# --- connect ---------------------------------------------------------------------------------

def _net(spec: str, f, z0v, n: int):
    from ..interconnect import series_element, shunt_element
    from ..units import parse_complex

    text = spec.strip()
    low = text.lower()
    if low.startswith(("series:", "shunt:")):
        where, _, val = text.partition(":")
        try:
            z = parse_complex(val, f"net {n}")
        except InputError:
            from ..units import parse_quantity
            z = parse_quantity(val, "Ohm", f"net {n}")
        maker = series_element if where.lower() == "series" else shunt_element
        return maker(z, f, z0v).to("y" if where.lower() == "series" else "z")
    if "=" in text:
        return parse_given(text, z0v, f)
    config, _, b = _stage_from_file(text, f"net {n}")
    if f is None:
        raise InputError(f"net {n}: a stage needs frequencies; internal error")
    return b.stage(config).two_port(f, "y", z0v)


@app.command("connect")
def connect_cmd(
    how: Annotated[str, typer.Option(
        "--how", help="Connection, input side first: series-series (Z add), shunt-shunt (Y add), "
                      "series-shunt (H add), shunt-series (G add).")],
    net: Annotated[list[str], typer.Option(
        "--net", "-n", help="A network; give exactly two. CONFIG:BIASFILE (a stage), KIND=v11,v12,v21,v22 "
                            "(given, SI units), series:Z (an impedance in ohm between the two upper "
                            "terminals, e.g. a feedback resistor) or shunt:Z (an impedance in ohm in the "
                            "common leg, e.g. an emitter resistor). For series-series the second is the "
                            "one in the common leg.")],
    kind: Annotated[Optional[str], typer.Option(
        "--kind", "-k", help="Kind of the result: y, z, h, g, abcd, s (default: the kind that adds).",
        show_default=False)] = None,
    freq: FreqOpt = None, z0: Z0Opt = "50",
    polar: Annotated[bool, typer.Option("--polar", help="Show complex values as magnitude and angle.")] = False,
    as_json: JsonOpt = False,
) -> None:
    """Two networks in a feedback connection; states whether the port condition holds."""
    from ..interconnect import connect
    from ..constants import KINDS

    if len(net) != 2:
        raise InputError(f"net: give exactly two networks (--net ... --net ...), got {len(net)}")
    h = how.strip().lower()
    if kind is not None and kind.lower() not in KINDS:
        raise InputError(f"kind: unknown parameter kind {kind!r}, expected one of {', '.join(KINDS)}")
    z0v = parse_z0(z0)
    f = parse_freqs(freq)
    has_stage = any(":" in s and not s.strip().lower().startswith(("series:", "shunt:")) and "=" not in s
                    for s in net)
    if f is None and has_stage:
        f = np.array([DEFAULT_FREQ])
    a, b = (_net(s, f, z0v, i) for i, s in enumerate(net, start=1))
    res = connect(a, b, h)
    tp = res.two_port.to(kind.lower(), z0v) if kind else res.two_port
    if res.port_condition is not True:
        warn(res.note)
    if as_json:
        z0j = tp.z0[0] if tp.z0[0] == tp.z0[1] else list(tp.z0)
        emit_json({"how": res.how, "kind": tp.kind, "z0": z0j, "port_condition": res.port_condition,
                   "note": res.note, "points": points_json(tp)})
        return
    print_twoport(tp, polar, title=f"{res.how} connection: {tp.kind.upper()} parameters")
    state = {True: "holds", False: "VIOLATED", None: "not confirmed"}[res.port_condition]
    print(f"Port condition {state}: {res.note}")


# --- formula ---------------------------------------------------------------------------------

@app.command("formula")
@bias_options
def formula_cmd(
    bias_in: BiasInputs,
    config: Annotated[str, typer.Option("--config", "-c", help="Configuration: ce, cb, cc, cs, cg, cd.")] = "ce",
    result: Annotated[str, typer.Option(
        "--result", "-r", help="Result: av (V2/V1), avs (V2/Vs), ai (-I2/I1), zin, zout.")] = "av",
    rs: Annotated[Optional[str], typer.Option(
        "--rs", help="Source resistance R_S, ohm (default: none, an ideal source).", show_default=False)] = None,
    rl: Annotated[Optional[str], typer.Option(
        "--rl", help="Load resistance R_L, ohm (default: none, an open load).", show_default=False)] = None,
    freq: Annotated[Optional[str], typer.Option(
        "--freq", "-f", help="Frequency at which to evaluate, Hz (default 1 kHz).", show_default=False)] = None,
    low_frequency: Annotated[bool, typer.Option(
        "--low-frequency", help="Leave out every capacitance (the formula at DC; evaluated at 0 Hz).")] = False,
    latex: Annotated[bool, typer.Option("--latex", help="Print the formula as LaTeX.")] = False,
    as_json: JsonOpt = False,
) -> None:
    """The formula of a stage result in symbols, derived from its nodal equations (sympy), and its
    value at the bias point next to the numeric engine's. Without a bias point: the formula only."""
    from ..units import format_si

    config = config.strip().lower()
    result = result.strip().lower()
    rs_v = _resistance(rs, "rs", allow_open=False)
    rl_v = _resistance(rl, "rl", allow_open=True)
    if rs_v == 0:
        rs_v = None
    if rl_v is not None and math.isinf(rl_v):
        rl_v = None
    if rl_v == 0:
        raise InputError("rl: a short-circuit load (0 ohm) gives no output voltage; give a resistance > 0")
    if low_frequency and freq is not None:
        raise InputError("freq: --low-frequency evaluates the formula at 0 Hz (no capacitances); drop --freq")
    f = 0.0 if low_frequency else (parse_freqs([freq])[0] if freq is not None else DEFAULT_FREQ)
    from ..symbolic import derive, element_values

    values = None
    if bias_in.given():
        st = bias_in.stage(config)
        values = element_values(st.model, rdeg=st.rdeg, rfb=st.rfb)
        elements = set(values)
    else:
        from ..configs import check_config

        check_config(config)
        elements = None
    formula = derive(config, result, elements, rs=rs_v is not None, rl=rl_v is not None,
                     low_frequency=low_frequency)
    out = {"result": result, "config": config, "expression": None if formula.expr is None else formula.text(),
           "latex": formula.latex() if formula.expr is not None else None, "low_frequency": low_frequency}
    if values is not None:
        from ..analysis import terminate

        ev = dict(values)
        if rs_v is not None:
            ev["R_S"] = rs_v
        if rl_v is not None:
            ev["R_L"] = rl_v
        used = {str(x) for x in formula.expr.free_symbols} if formula.expr is not None else set()
        val = formula.value(ev, f)
        from ..exceptions import SingularParameterError

        try:
            with np.errstate(invalid="ignore", divide="ignore"):  # NaN = does not exist, shown as open
                tr = terminate(st.two_port([f]), 0.0 if rs_v is None else rs_v,
                               math.inf if rl_v is None else rl_v)
            eng = complex(getattr(tr, result)[0])
        except SingularParameterError:  # the chain parameters do not exist at this point
            eng = complex("nan")
        eng_ok = math.isfinite(eng.real) and math.isfinite(eng.imag)
        rel = (abs(val - eng) / abs(eng) if val is not None and eng_ok and eng != 0 else
               (0.0 if val is None and not eng_ok else None))
        out.update(freq=f, symbols={k: v for k, v in ev.items() if k in used}, value=val,
                   engine=eng if eng_ok else None, rel_diff=rel)
    if as_json:
        emit_json(out)
        return
    unit = "Ω" if result in ("zin", "zout") else ""
    print(f"{result} of the {config.upper()} stage{' at low frequency' if low_frequency else ''} "
          f"(s = j 2 pi f):")
    print("  " + (formula.latex() if latex else formula.text()))
    if values is None:
        return
    units = {"g": "S", "r": "Ω", "R": "Ω", "C": "F"}
    rows = [[k, format_si(v, units.get(k[0], ""))] for k, v in out["symbols"].items()]
    rows.append([f"{result} (formula)", _cx(val if val is not None else complex("nan"), unit,
                                            "open" if unit else "unbounded")])
    rows.append([f"{result} (numeric engine)", _cx(eng, unit, "open" if unit else "unbounded")])
    print_table(f"At the bias point, f = {format_si(f, 'Hz') if f else '0 Hz'}", ["symbol", "value"], rows)

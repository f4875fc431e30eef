"""Commands for chains of stages, feedback connections and formulas: ``cascade``, ``connect``,
``formula``; and the FET table of ``model``."""

from __future__ import annotations

import math
from pathlib import Path
from typing import Annotated, Optional

import numpy as np
import typer

from ..exceptions import InputError
from ..units import shown
from .app import command
from .inputs import (Inputs, bias_options, check_config, check_kind, parse_freq, parse_freqs, parse_given, parse_z0,
                     terminations)
from .options import ConfigOpt, FreqOpt, JsonOpt, PolarOpt, RlOpt, RsOpt, Z0Opt
from .render import (db_text, emit_json, gain_text, imp_text, point_json, print_gain, print_table, print_twoport,
                     stdout, warn, z0json, zjson, zstr)

#: Frequency of a single-point analysis when none is given, Hz.
DEFAULT_FREQ = 1e3


def _none_if_inf(x):
    return None if x is None or not math.isfinite(x) else x


def print_fet_model(bias, m, as_json: bool, bias_in=None) -> None:
    """The ``model`` command for a FET: JSON keys gm, gmb, ro, cgs, cgd, ft, vov (and more).

    ID and VDS carry the device's sign (negative for a p-channel device), as ``bias`` shows a pnp.
    ``bias_in`` (the command's :class:`~devmodels.cli.inputs.Inputs`) tells given values from
    defaults in the table's ``relation`` column.
    """
    from ..fetbias import JfetBias
    from ..units import format_si

    jfet = isinstance(bias, JfetBias)
    sign = -1.0 if bias.device.startswith("p") else 1.0
    ro = _none_if_inf(m.ro)
    out = {"gm": m.gm, "gmb": None if jfet else m.gmb, "ro": ro, "cgs": m.cgs, "cgd": m.cgd, "ft": m.ft,
           "vov": m.vov, "csb": m.csb, "cdb": m.cdb, "rg": m.rg, "l_g": m.l_g, "l_d": m.l_d, "l_s": m.l_s,
           "gm_ro": _none_if_inf(m.intrinsic_gain),
           "device": bias.device, "id": sign * bias.id + 0.0, "vds": sign * bias.vds + 0.0, "power": bias.id * bias.vds}
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
    from .core import given_text

    def source(kid: str) -> str:  # given, a default, or from the datasheet capacitances
        if bias_in is None:
            return "given"
        if kid in ("cgs", "cgd", "cdb") and "capacitances" in bias_in.datasheet:
            return "from Ciss, Crss, Coss"
        return given_text(bias_in, kid)

    rows += [["ro", format_si(ro, "Ω") if ro else "open", "1 / (lambda ID)" + ("" if ro else "  (no lambda given)")],
             ["gm ro", f"{m.intrinsic_gain:.4g}" if ro else "unbounded", "intrinsic gain"],
             ["Cgs", format_si(m.cgs, "F"), source("cgs")], ["Cgd", format_si(m.cgd, "F"), source("cgd")],
             ["fT", format_si(m.ft, "Hz") if m.ft else "unbounded", "gm / (2 pi (Cgs + Cgd))"]]
    if m.csb or m.cdb:
        rows.append(["Csb / Cdb", f"{format_si(m.csb, 'F')} / {format_si(m.cdb, 'F')}",
                     f"{source('csb')} / {source('cdb')}"])
    if m.rg:
        rows.append(["rg", format_si(m.rg, "Ω"), source("rg")])
    if m.l_g or m.l_d or m.l_s:
        rows.append(["l_g / l_d / l_s", " / ".join(format_si(x, "H") for x in (m.l_g, m.l_d, m.l_s)),
                     "lead inductances: " + " / ".join(source(k) for k in ("l_g", "l_d", "l_s"))])
    title = (f"Small-signal model: {bias.device}, ID = {format_si(sign * bias.id, 'A')}, "
             f"VDS = {format_si(sign * bias.vds, 'V')}, P = {format_si(bias.id * bias.vds, 'W')}")
    print_table(title, ["element", "value", "relation"], rows)


# --- cascade ---------------------------------------------------------------------------------

#: Pairs by name: indices into the first stage's ``model.configs`` (ce, cb, cc or cs, cg, cd).
PAIRS = {"cascode": (0, 1), "follower": (0, 2)}


def _stage_from_file(spec: str, what: str):
    """``CONFIG:FILE`` -> (config, path, Inputs)."""
    if ":" not in spec:
        raise InputError(f"{what}: expected CONFIG:BIASFILE (e.g. ce:q1.toml), got {shown(spec)}")
    config, _, path = spec.partition(":")
    config = check_config(config)
    if not path.strip():
        raise InputError(f"{what}: no bias file after '{config}:' in {shown(spec)}")
    return config, path.strip(), Inputs(Path(path.strip()), {})


@command("cascade")
def cascade_cmd(
    stage: Annotated[Optional[list[str]], typer.Option(
        "--stage", "-s", help="A stage as CONFIG:BIASFILE (e.g. ce:q1.toml); repeat, in order from input "
                              "to output.", show_default=False, metavar="CONFIG:FILE")] = None,
    pair: Annotated[Optional[str], typer.Option(
        "--pair", help="A common pair as NAME:FILE1,FILE2: cascode (ce+cb, or cs+cg for FETs) or follower "
                       "(gain stage then follower: ce+cc, or cs+cd).", show_default=False,
        metavar="NAME:FILE1,FILE2")] = None,
    rs: RsOpt = "50", rl: RlOpt = "1k",
    freq: FreqOpt = None, z0: Z0Opt = "50", polar: PolarOpt = False, as_json: JsonOpt = False,
) -> None:
    """Two or more stages in a chain (ABCD product): the whole chain's gains, impedances, stability and
    noise figure between --rs and --rl, and each stage's gain, impedances and noise as loaded in the chain.

    Noise: the source --rs at T0 = 290 K; each stage's NF alone is from the source impedance it sees (the
    output impedance of the chain before it) and its contribution is (F_k - 1)/(G_1...G_{k-1}) with
    available gains (Friis), the contributions adding up to the chain's F - 1."""
    from ..chain import analyse_chain
    from ..exceptions import SingularParameterError
    from ..noise import chain_noise
    from .noisecmd import _stage_noise

    specs: list[tuple[str, str, Inputs]] = []
    if pair is not None:
        if stage:
            raise InputError("pair: give either --pair or --stage, not both")
        name, _, files = pair.partition(":")
        name = name.strip().lower()
        if name not in PAIRS:
            raise InputError(f"pair: unknown pair {shown(name)}, expected cascode or follower (NAME:FILE1,FILE2)")
        paths = [p.strip() for p in files.split(",")]
        if len(paths) != 2 or not all(paths):
            raise InputError(f"pair: expected two bias files as {name}:FILE1,FILE2, got {shown(pair)}")
        for index, path in zip(PAIRS[name], paths):
            b = Inputs(Path(path), {})
            specs.append((b.configs()[index], path, b))
    else:
        for spec in stage or []:
            specs.append(_stage_from_file(spec, "stage"))
    if len(specs) < 2:
        raise InputError(f"stage: a cascade needs at least two stages (--stage CONFIG:BIASFILE, repeated, "
                         f"or --pair), got {len(specs)}")
    f = parse_freqs(freq, default=[DEFAULT_FREQ])
    z0v = parse_z0(z0)
    zs, zl = terminations(rs, rl)
    parts = [b.stage(config).two_port(f, "y", z0v) for config, _, b in specs]
    res = analyse_chain(parts, zs, zl, z0v)
    noise, why = None, "an ideal source (Rs without a real part > 0) has no noise figure"
    if math.isfinite(zs.real) and zs.real > 0:
        try:
            # each stage's noise as the noise command takes it (FET model at --temp, the file's noise keys)
            noise = chain_noise([_stage_noise(b, config, f, b.get("flicker_corner"), b.get("gamma_n"))[0]
                                 for config, _, b in specs], zs)
        except (InputError, SingularParameterError) as exc:
            why = str(exc)
    if noise is None:
        warn(f"noise: not computed ({why})")
    chain_name = "+".join(c for c, _, _ in specs)
    t = res.total
    points = [point_json(t, i) for i in range(len(t))]
    for i, p in enumerate(points):
        p["nf_db"] = None if noise is None else float(noise.nf_db[i])
    stage_nf = None if noise is None else noise.stage_nf_db
    stages = [{"config": c, "file": p,
               "points": [{"freq": float(f[i]), "av": res.av[k, i], "zin": res.zin[k, i], "zout": res.zout[k, i],
                           "nf_db": None if noise is None else float(stage_nf[k, i]),
                           "contribution": None if noise is None else float(noise.contribution[k, i])}
                          for i in range(len(f))]}
              for k, (c, p, _) in enumerate(specs)]
    if as_json:
        emit_json({"config": chain_name, "rs": zjson(zs), "rl": zjson(zl), "z0": z0json(z0v),
                   "points": points, "stages": stages})
        return
    from ..units import format_si

    print_gain(points, zs, zl, z0v, f"Chain {chain_name.upper()}", polar=polar)
    if noise is not None:
        print_table(f"Noise of the chain from Rs = {zstr(zs)} at T0 = 290 K", ["freq", "NF"],
                    [[format_si(p["freq"], "Hz"), db_text(p["nf_db"], "—")] for p in points])

    def share(v):
        return "—" if v is None or not math.isfinite(v) else f"{v:.4g}"

    srows = []
    for k, s in enumerate(stages):
        for p in s["points"]:
            srows.append([f"{k + 1} {s['config']} ({s['file']})", format_si(p["freq"], "Hz"),
                          gain_text(p["av"], polar), imp_text(p["zin"], polar), imp_text(p["zout"], polar),
                          db_text(p["nf_db"], "undefined"), share(p["contribution"])])
    print_table("Each stage as loaded in the chain", ["stage", "freq", "av", "zin", "zout", "NF alone", "adds to F"],
                srows,
                caption="av = V(out)/V(in) of the stage; zin with the rest of the chain as load; "
                        "zout with the chain before it (from Rs) as source. NF alone: from the source impedance "
                        "the stage sees (undefined where its real part is not > 0); adds to F: "
                        "(F_k - 1)/(G_1...G_(k-1)), available gains, referred to the chain's input.")


# --- connect ---------------------------------------------------------------------------------

def _net(spec: str, f, z0v, n: int):
    from ..interconnect import series_element, shunt_element
    from ..schema import IMPEDANCE
    from ..units import parse_impedance

    text = spec.strip()
    low = text.lower()
    if low.startswith(("series:", "shunt:")):
        where, _, val = text.partition(":")
        z = parse_impedance(val, f"net {n}", bounds=IMPEDANCE)
        maker = series_element if where.lower() == "series" else shunt_element
        return maker(z, f, z0v).to("y" if where.lower() == "series" else "z")
    if "=" in text:
        return parse_given(text, z0v, f, name=f"net {n}")
    config, _, b = _stage_from_file(text, f"net {n}")
    return b.stage(config).two_port(f, "y", z0v)


@command("connect")
def connect_cmd(
    how: Annotated[str, typer.Option(
        "--how", help="Connection, input side first: series-series (Z add), shunt-shunt (Y add), "
                      "series-shunt (H add), shunt-series (G add).", metavar="HOW")],
    net: Annotated[list[str], typer.Option(
        "--net", help="A network; give exactly two. CONFIG:BIASFILE (a stage), KIND=v11,v12,v21,v22 "
                            "(given, SI units), series:Z (an impedance in ohm between the two upper "
                            "terminals, e.g. a feedback resistor) or shunt:Z (an impedance in ohm in the "
                            "common leg, e.g. an emitter resistor). For series-series the second is the "
                            "one in the common leg.", metavar="NETWORK")],
    kind: Annotated[Optional[str], typer.Option(
        "--kind", "-k", help="Kind of the result: y, z, h, g, abcd, s (default: the kind that adds).",
        show_default=False, metavar="KIND")] = None,
    freq: FreqOpt = None, z0: Z0Opt = "50", polar: PolarOpt = False, as_json: JsonOpt = False,
) -> None:
    """Two networks in a feedback connection; states whether the port condition holds."""
    from ..export import twoport_dict
    from ..interconnect import connect

    if len(net) != 2:
        raise InputError(f"net: give exactly two networks (--net ... --net ...), got {len(net)}")
    h = how.strip().lower()
    if kind is not None:
        kind = check_kind(kind)
    z0v = parse_z0(z0)
    f = parse_freqs(freq)
    has_stage = any(":" in s and not s.strip().lower().startswith(("series:", "shunt:")) and "=" not in s
                    for s in net)
    if f is None and has_stage:
        f = np.array([DEFAULT_FREQ])
    a, b = (_net(s, f, z0v, i) for i, s in enumerate(net, start=1))
    res = connect(a, b, h)
    tp = res.two_port.to(kind, z0v) if kind else res.two_port
    if res.port_condition is not True:
        warn(res.note)
    if as_json:
        emit_json({"how": res.how, "kind": tp.kind, "z0": z0json(tp.z0), "port_condition": res.port_condition,
                   "note": res.note, "points": twoport_dict(tp)["points"]})
        return
    print_twoport(tp, polar, title=f"{res.how} connection: {tp.kind.upper()} parameters")
    if res.port_condition is None:
        stdout(f"Port condition not confirmed: {res.note}\n")
    else:  # the note states the verdict itself ("...: the port condition holds" / "is violated")
        stdout(f"Port condition: {res.note}\n")


# --- formula ---------------------------------------------------------------------------------

def _formula_resistance(text: str | None, name: str, symbol: str) -> float | None:
    """A resistance for the formula's symbol (``open`` -> inf); a complex value is refused."""
    if text is None:
        return None
    z = terminations("0", text)[1] if name == "rl" else terminations(text, "open")[0]
    if z.imag != 0:
        raise InputError(f"{name}: the formula takes a resistance for its symbol {symbol}, not the complex "
                         f"impedance {shown(text)}; use 'devmodels gain' for complex terminations")
    return z.real



@command("formula")
@bias_options(network=True)
def formula_cmd(
    bias_in: Inputs,
    config: ConfigOpt = None,
    result: Annotated[str, typer.Option(
        "--result", "-r", help="Result: av (V2/V1), avs (V2/Vs), ai (-I2/I1), zin, zout.", metavar="RESULT")] = "av",
    rs: Annotated[Optional[str], typer.Option(
        "--rs", help="Source resistance R_S, ohm (default: none, an ideal source). A resistance only: "
                     "the formula has R_S as a symbol.", show_default=False, metavar="OHM")] = None,
    rl: Annotated[Optional[str], typer.Option(
        "--rl", help="Load resistance R_L, ohm, or 'open' (default: none, an open load). A resistance only.",
        show_default=False, metavar="OHM|open")] = None,
    freq: Annotated[Optional[str], typer.Option(
        "--freq", "-f", help="Frequency at which to evaluate, Hz (default 1 kHz).", show_default=False,
        metavar="HZ")] = None,
    low_frequency: Annotated[bool, typer.Option(
        "--low-frequency", help="Leave out every capacitance (the formula at DC; evaluated at 0 Hz).")] = False,
    latex: Annotated[bool, typer.Option("--latex", help="Print the formula as LaTeX.")] = False,
    as_json: JsonOpt = False,
) -> None:
    """The formula of a stage result in symbols, derived from its nodal equations (sympy), and its
    value at the bias point next to the numeric engine's. Without a bias point: the formula only."""
    from ..units import format_si

    config = check_config(config) if config is not None else None
    result = result.strip().lower()
    rs_v = _formula_resistance(rs, "rs", "R_S")
    rl_v = _formula_resistance(rl, "rl", "R_L")
    if rs_v == 0:
        rs_v = None
    if rl_v is not None and math.isinf(rl_v):
        rl_v = None
    if rl_v == 0:
        raise InputError("rl: a short-circuit load (0 ohm) gives no output voltage; give a resistance > 0")
    if low_frequency and freq is not None:
        raise InputError("freq: --low-frequency evaluates the formula at 0 Hz (no capacitances); drop --freq")
    f = 0.0 if low_frequency else (parse_freq(freq) if freq is not None else DEFAULT_FREQ)
    from ..symbolic import derive, derive_stage, engine_check

    flags = dict(rs=rs_v is not None, rl=rl_v is not None, low_frequency=low_frequency)
    st = None
    if bias_in.given():
        st = bias_in.stage(config)
        config = st.config
        formula = derive_stage(st, result, **flags)
    else:
        config = config or "ce"
        formula = derive(config, result, None, **flags)
    out = {"result": result, "config": config, "expression": None if formula.expr is None else formula.text(),
           "latex": formula.latex() if formula.expr is not None else None, "low_frequency": low_frequency}
    if st is not None:  # the formula's value beside the numeric engine's (symbolic.engine_check)
        chk = engine_check(formula, st, f, rs_v, rl_v)
        val, eng = chk.value, (complex("nan") if chk.engine is None else chk.engine)
        out.update(freq=f, symbols=chk.symbols, value=val, engine=chk.engine, rel_diff=chk.rel_diff)
    if as_json:
        emit_json(out)
        return
    unit = "Ω" if result in ("zin", "zout") else ""
    stdout(f"{result} of the {config.upper()} stage{' at low frequency' if low_frequency else ''} "
        f"(s = j 2 pi f):\n")
    stdout("  " + (formula.latex() if latex else formula.text()) + "\n")
    if st is None:
        return
    kinds = {e.name: e.kind for e in st.netlist().elements}
    unit_of = {"resistor": "Ω", "capacitor": "F", "vccs": "S"}
    rows = [[k, format_si(v, "Ω" if k in ("R_S", "R_L") else unit_of.get(kinds.get(k), ""))]
            for k, v in out["symbols"].items()]
    show = imp_text if unit else gain_text
    rows.append([f"{result} (formula)", show(val)])
    rows.append([f"{result} (numeric engine)", show(eng)])
    print_table(f"At the bias point, f = {format_si(f, 'Hz') if f else '0 Hz'}", ["symbol", "value"], rows)

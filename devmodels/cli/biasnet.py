"""Commands ``bias`` (a bias network's operating point) and ``spread`` (results over datasheet limits).

Also the hook that lets every bias-point command take a bias file with a ``[network]``
table instead of IC and VCE (:func:`network_bipolar`, called from ``BiasInputs.bipolar``).
"""

from __future__ import annotations

import math
import sys
from pathlib import Path
from typing import Annotated, Any, Callable, Optional

import typer

from ..biasfile import load_bias_file, register_keys
from ..exceptions import FileFormatError, InputError
from ..units import format_si, parse_quantity, parse_temperature
from .app import app
from .common import BiasInputs, JsonOpt, bias_options, emit_json, print_table, warn

#: Keys of the ``[network]`` table, with their unit ('str' text, '%' percent, '%/K' percent per K).
NETWORK_KEYS: dict[str, str] = {
    "type": "str", "vcc": "V", "r1": "Ohm", "r2": "Ohm", "rb": "Ohm", "rc": "Ohm", "re": "Ohm", "tol": "%",
    "vbe": "V", "vbe_tc": "V/K", "beta_tc": "%/K", "pmax": "W", "vceo": "V",
}
#: Transistor values that may be flat keys, options, or (for the first five) in ``[network]``.
DEVICE_KEYS: dict[str, str] = {
    "vbe": "V", "vbe_tc": "V/K", "beta_tc": "%/K", "pmax": "W", "vceo": "V",
    "device": "str", "beta": "", "temp": "T", "vce_sat": "V",
}
#: Flat keys this module adds to bias files (the spread limits are accepted there too).
register_keys({"vbe": "V", "vbe_tc": "V/K", "beta_tc": "%/K", "pmax": "W", "vceo": "V",
               "beta_min": "", "beta_max": "", "beta_typ": "", "temp_min": "T", "temp_max": "T", "tol": "%"})

NET_PANEL = "Bias network"
RATING_PANEL = "Ratings and temperature"
SPREAD_PANEL = "Spread"
#: Runs with more samples than this show a progress bar (on a terminal, never with --json).
PROGRESS_SAMPLES = 200_000


def _parse(raw, unit: str, name: str):
    """One raw value (text or number) in SI units; percentages come back as fractions."""
    if raw is None:
        return None
    if unit == "str":
        return str(raw).strip().lower()
    if unit == "T":
        return parse_temperature(raw, name)
    if unit in ("%", "%/K"):
        return parse_quantity(raw, unit, name) / 100.0
    return parse_quantity(raw, unit, name)


def _pick(name: str, unit: str, sources: list[dict]):
    for src in sources:
        v = src.get(name)
        if v is not None:
            return _parse(v, unit, name)
    return None


def _network_table(tables: dict, where: str) -> dict:
    table = tables.get("network")
    if table is None:
        return {}
    if not isinstance(table, dict):
        raise FileFormatError(f"{where}: [network] must be a table")
    table = {k.replace("-", "_"): v for k, v in table.items()}
    for k in table:
        if k not in NETWORK_KEYS:
            raise FileFormatError(f"{where}: unknown key {k!r} in [network]; expected one of "
                                  f"{', '.join(NETWORK_KEYS)}")
    return table


def solve_inputs(net_sources: list[dict], dev_sources: list[dict]):
    """The :class:`~devmodels.dcbias.OperatingPoint` these raw values describe.

    ``net_sources`` are searched in order for the network's own values (type, vcc, resistors,
    tol), ``dev_sources`` for the transistor's (beta, vbe, temp, ratings, ...).
    """
    from ..bias import DEFAULT_TEMP, DEFAULT_VCE_SAT
    from ..dcbias import BiasNetwork, operating_point
    from ..temperature import BETA_TC_DEFAULT, VBE_DEFAULT, VBE_TC_DEFAULT

    kind = _pick("type", "str", net_sources)
    if kind is None:
        raise InputError("network: missing; give --network fixed|divider|collector-feedback "
                         "or 'type' in the [network] table")
    vcc = _pick("vcc", "V", net_sources)
    if vcc is None:
        raise InputError("vcc: missing; give --vcc or 'vcc' in the [network] table (supply voltage in V)")
    res = {k: _pick(k, "Ohm", net_sources) for k in ("rb", "r1", "r2", "rc", "re")}
    network = BiasNetwork(kind=kind, vcc=vcc, rc=res["rc"] or 0.0, re=res["re"] or 0.0, rb=res["rb"],
                          r1=res["r1"], r2=res["r2"], tol=_pick("tol", "%", net_sources) or 0.0)
    dev = {k: _pick(k, u, dev_sources) for k, u in DEVICE_KEYS.items()}
    if dev["beta"] is None:
        raise InputError("beta: missing; give --beta or 'beta' in the bias file (DC current gain at 300 K)")
    return operating_point(
        network, dev["beta"], device=dev["device"] or "npn",
        vbe=VBE_DEFAULT if dev["vbe"] is None else dev["vbe"],
        temp=DEFAULT_TEMP if dev["temp"] is None else dev["temp"],
        vbe_tc=VBE_TC_DEFAULT if dev["vbe_tc"] is None else dev["vbe_tc"],
        beta_tc=BETA_TC_DEFAULT if dev["beta_tc"] is None else dev["beta_tc"],
        vce_sat=DEFAULT_VCE_SAT if dev["vce_sat"] is None else dev["vce_sat"],
        pmax=dev["pmax"], vceo=dev["vceo"])


def _bias_in_sources(bias_in: BiasInputs) -> tuple[list[dict], list[dict]]:
    """Sources of a bias-point command: the network only from [network]; the device from the
    options, the flat keys, then [network]."""
    table = _network_table(bias_in.tables, str(bias_in.file or "bias file"))
    return [table], [bias_in.options, bias_in.flat, table]


def network_bipolar(bias_in: BiasInputs):
    """Chaining hook: the :class:`~devmodels.bias.BipolarBias` of a bias file with a ``[network]``.

    The network is solved first (warnings on stderr); a point outside the active region is an
    error (exit 2).  The bias point then goes through ``BiasInputs.bipolar`` as if IC, VCE and
    beta (at the temperature) had been given, so every other bias value works as usual.
    """
    for name in ("ic", "vce"):
        if bias_in.raw(name) is not None:
            raise InputError(f"{name}: the bias file describes a bias network, which sets IC and VCE; "
                             f"remove '{name}' (or the [network] table)")
    op = solve_inputs(*_bias_in_sources(bias_in))
    for w in op.warnings:  # the network's own rating check (power, VCE and the supply)
        bias_in.warn_once(w)
    op.bipolar_bias()  # raises BiasError when the network is not in the active region
    tables = {k: v for k, v in bias_in.tables.items() if k != "network"}
    opts = dict(bias_in.options, ic=abs(op.ic), vce=abs(op.vce), beta=op.beta)
    solved = BiasInputs(None, opts, dict(bias_in.flat), tables, ratings_done=True)
    return solved.bipolar()


# --------------------------------------------------------------------------- bias command

def _opt(flag: str, help_: str, panel: str = NET_PANEL):
    return Annotated[Optional[str], typer.Option(flag, help=help_, rich_help_panel=panel, show_default=False)]


@app.command("bias")
def bias_cmd(
    bias_file: Annotated[Optional[Path], typer.Argument(
        help="TOML file with a \\[network] table (type, vcc, r1, r2, rb, rc, re, tol, vbe) and flat "
             "keys (beta, temp, device, ...).", show_default=False)] = None,
    network: _opt("--network", "Topology: fixed, divider or collector-feedback.") = None,
    vcc: _opt("--vcc", "Supply voltage, V (a pnp may take it negative).") = None,
    r1: _opt("--r1", "Divider resistor from VCC to the base, ohm.") = None,
    r2: _opt("--r2", "Divider resistor from the base to ground, ohm.") = None,
    rb: _opt("--rb", "Base resistor, ohm: from VCC (fixed) or from the collector (collector-feedback).") = None,
    rc: _opt("--rc", "Collector resistor, ohm (default 0).") = None,
    re: _opt("--re", "Emitter resistor, ohm (default 0).") = None,
    tol: _opt("--tol", "Resistor tolerance, % (e.g. 5): also shows IC and VCE at the resistor corners.") = None,
    beta: _opt("--beta", "DC current gain hFE at 300 K.", "Transistor") = None,
    vbe: _opt("--vbe", "VBE(on) at 300 K, V (default 0.7 V).", "Transistor") = None,
    device: _opt("--device", "npn or pnp (pnp: the mirror image, negative voltages).", "Transistor") = None,
    vce_sat: _opt("--vce-sat", "VCE below which the transistor counts as saturated, V (default 0.3 V).",
                  "Transistor") = None,
    temp: _opt("--temp", "Junction temperature, K (300) or Celsius (27C) (default 300 K).", RATING_PANEL) = None,
    vbe_tc: _opt("--vbe-tc", "VBE(on) temperature coefficient, V/K (default -2mV/K).", RATING_PANEL) = None,
    beta_tc: _opt("--beta-tc", "Beta temperature coefficient, %/K (default 0.5).", RATING_PANEL) = None,
    pmax: _opt("--pmax", "Power rating, W: warn when the dissipation is above it.", RATING_PANEL) = None,
    vceo: _opt("--vceo", "Breakdown rating VCEO, V: warn when VCE or VCC is above it.", RATING_PANEL) = None,
    as_json: JsonOpt = False,
) -> None:
    """DC operating point of a bias network (Thevenin method, VBE(on) and beta)."""
    flat, tables = load_bias_file(bias_file) if bias_file is not None else ({}, {})
    table = _network_table(tables, str(bias_file))
    opts = {"type": network, "vcc": vcc, "r1": r1, "r2": r2, "rb": rb, "rc": rc, "re": re, "tol": tol,
            "beta": beta, "vbe": vbe, "device": device, "vce_sat": vce_sat, "temp": temp, "vbe_tc": vbe_tc,
            "beta_tc": beta_tc, "pmax": pmax, "vceo": vceo}
    op = solve_inputs([opts, table], [opts, table, flat])
    for w in op.warnings:
        warn(w)
    out = op.as_dict()
    out.update({"network": op.network.kind, "device": op.device, "vcc": (-1 if op.device == "pnp" else 1)
                * abs(op.network.vcc), "beta": op.beta, "vbe": op.vbe, "temp": op.temp,
                "vce_sat": op.vce_sat, "forced_beta": op.ic / op.ib if op.ib else None,
                "warnings": list(op.warnings)})
    if op.tol_range is not None:
        out["tolerance"] = {"tol": op.network.tol * 100, **{k: list(v) for k, v in op.tol_range.items()}}
    if as_json:
        emit_json(out)
        return
    _print_bias(op)


def _print_bias(op) -> None:
    n = op.network
    parts = [f"{k.upper()} = {format_si(v, 'Ω')}" for k, v in n.resistors.items() if v or k != "re"]
    vcc = -abs(n.vcc) if op.device == "pnp" else abs(n.vcc)
    title = (f"Operating point: {n.kind} bias, {op.device}, VCC = {format_si(vcc, 'V')}, "
             + ", ".join(parts) + f", beta = {op.beta:.4g}, VBE(on) = {format_si(op.vbe, 'V')}, "
             f"T = {op.temp:.2f} K")
    rel = _relations(n.kind, op.region)
    rng = op.tol_range or {}
    rows = [["region", op.region] + ([", ".join(rng["regions"])] if rng else []) + [rel["region"]]]
    for key, unit, label in (("ic", "A", "IC"), ("ib", "A", "IB"), ("ie", "A", "IE"), ("vb", "V", "VB"),
                             ("ve", "V", "VE"), ("vc", "V", "VC"), ("vce", "V", "VCE"), ("power", "W", "P")):
        row = [label, format_si(getattr(op, key), unit)]
        if rng:
            lo_hi = rng.get(key)
            sign = -1 if op.device == "pnp" and key != "power" else 1
            ends = sorted(sign * x for x in lo_hi) if lo_hi else None
            row.append(f"{format_si(ends[0], unit)} .. {format_si(ends[1], unit)}" if ends else "")
        rows.append(row + [rel[key]])
    cols = ["quantity", "value"] + ([f"over ±{n.tol * 100:g} % resistors"] if rng else []) + ["how"]
    caption = ("Thevenin equivalent of the base circuit, constant VBE(on), IC = beta IB in the active region; "
               f"saturated below VCE = {format_si(op.vce_sat, 'V')}."
               + (" pnp: the mirror image of the npn network, every voltage and current negated."
                  if op.device == "pnp" else ""))
    print_table(title, cols, rows, caption)


def _relations(kind: str, region: str) -> dict[str, str]:
    """How each value was found, for the table."""
    fb = kind == "collector-feedback"
    rel = {"region": f"VCE >= {'VCE(sat)'}" if region == "active" else "",
           "ic": "beta IB", "ie": "IC + IB", "vb": "VE + VBE(on)", "ve": "IE RE",
           "ib": "(VCC - VBE) / (RB + (beta+1)(RC+RE))" if fb else "(VBB - VBE) / (RBB + (beta+1) RE)",
           "vc": "VCC - IE RC" if fb else "VCC - IC RC", "vce": "VC - VE", "power": "IC VCE + IB VBE"}
    if region == "saturation":
        rel.update(region="active solution gave VCE < VCE(sat)", ic="loop equations at VCE = VCE(sat)",
                   ib="loop equations at VCE = VCE(sat)", vce="VCE(sat)")
    elif region == "cutoff":
        rel.update(region="the base cannot reach VBE(on)", ic="0", ib="0", ie="0",
                   vb="VCC (no current in RB)" if kind != "divider" else "VCC R2 / (R1 + R2)", ve="0",
                   vc="VCC", vce="VCC", power="0")
    return rel


# ------------------------------------------------------------------------- spread command

def _count(raw, name: str) -> int:
    v = parse_quantity(raw, "", name)
    if v != int(v):
        raise InputError(f"{name}: expected a whole number, got {raw!r}")
    return int(v)


def _resistance(raw: str, name: str, allow_open: bool = False) -> float:
    s = str(raw).strip().lower()
    if allow_open and s in ("open", "inf"):
        return math.inf
    v = parse_quantity(raw, "Ohm", name)
    if v < 0:
        raise InputError(f"{name}: expected a resistance >= 0 ohm, got {raw!r}")
    return v


@app.command("spread")
@bias_options
def spread_cmd(
    bias_in: BiasInputs,
    config: Annotated[str, typer.Option("--config", "-c", help="Configuration: ce, cb, cc.")] = "ce",
    freq: Annotated[str, typer.Option("--freq", "-f", help="Frequency of the analysis, Hz.")] = "1kHz",
    rs: Annotated[str, typer.Option("--rs", help="Source resistance, ohm.")] = "50",
    rl: Annotated[str, typer.Option("--rl", help="Load resistance, ohm, or 'open'.")] = "1k",
    z0: Annotated[str, typer.Option("--z0", help="S reference resistance for K, ohm (one value or two).")] = "50",
    beta_min: _opt("--beta-min", "Lowest beta at 300 K (datasheet minimum hFE).", SPREAD_PANEL) = None,
    beta_max: _opt("--beta-max", "Highest beta at 300 K (datasheet maximum hFE).", SPREAD_PANEL) = None,
    beta_typ: _opt("--beta-typ", "Typical beta: triangular distribution with this mode (default: uniform).",
                   SPREAD_PANEL) = None,
    temp_min: _opt("--temp-min", "Lowest temperature, K or Celsius (27C) (default --temp).", SPREAD_PANEL) = None,
    temp_max: _opt("--temp-max", "Highest temperature, K or Celsius (default --temp).", SPREAD_PANEL) = None,
    tol: _opt("--tol", "Resistor tolerance, % (network resistors, --rdeg, --rfb) (default 0).", SPREAD_PANEL) = None,
    samples: Annotated[str, typer.Option("--samples", "-n", help="Number of samples (e.g. 10000, 1e6).",
                                         rich_help_panel=SPREAD_PANEL)] = "10000",
    seed: Annotated[Optional[int], typer.Option("--seed", help="Seed of the random draws (default: a new one, "
                                                "printed so the run can be repeated).", rich_help_panel=SPREAD_PANEL,
                                                show_default=False)] = None,
    vbe: _opt("--vbe", "VBE(on) at 300 K, V (default 0.7 V; used with a bias network).", RATING_PANEL) = None,
    vbe_tc: _opt("--vbe-tc", "VBE(on) temperature coefficient, V/K (default -2mV/K).", RATING_PANEL) = None,
    beta_tc: _opt("--beta-tc", "Beta temperature coefficient, %/K (default 0.5).", RATING_PANEL) = None,
    plot: Annotated[Optional[Path], typer.Option("--plot", help="Draw histograms into FILE.png.",
                                                 show_default=False)] = None,
    as_json: JsonOpt = False,
) -> None:
    """Terminated analysis over datasheet limits: beta, temperature and resistor tolerance."""
    from ..spread import SpreadRanges, SpreadSetup, run_spread
    from .common import parse_z0

    own = {"vbe": vbe, "vbe_tc": vbe_tc, "beta_tc": beta_tc, "tol": tol,
           "beta_min": beta_min, "beta_max": beta_max, "beta_typ": beta_typ, "temp_min": temp_min,
           "temp_max": temp_max}
    table = _network_table(bias_in.tables, str(bias_in.file or "bias file"))
    dev_sources = [own, bias_in.options, bias_in.flat, table]

    def dev(name, unit):
        return _pick(name, unit, dev_sources)

    if plot is not None and plot.suffix.lower() != ".png":
        raise InputError(f"plot: expected a file name ending in .png, got {str(plot)!r}")
    n = _count(samples, "samples")
    beta = dev("beta", "")
    bmin, bmax, btyp = dev("beta_min", ""), dev("beta_max", ""), dev("beta_typ", "")
    if (bmin is None) != (bmax is None):
        missing = "beta_max" if bmax is None else "beta_min"
        raise InputError(f"{missing}: missing; give both --beta-min and --beta-max (or neither, with --beta)")
    if bmin is None:
        if beta is None:
            raise InputError("beta_min: missing; give --beta-min and --beta-max (or --beta for a fixed gain)")
        bmin = bmax = beta
    temp = dev("temp", "T") or 300.0
    tmin, tmax = dev("temp_min", "T"), dev("temp_max", "T")
    tmin = temp if tmin is None else tmin
    tmax = temp if tmax is None else tmax
    tol_v = dev("tol", "%") or 0.0
    ranges = SpreadRanges(beta_min=bmin, beta_max=bmax, beta_typ=btyp, temp_min=tmin, temp_max=tmax,
                          tol=tol_v, samples=n, seed=seed)
    network = None
    if table:
        for name in ("ic", "vce"):
            if bias_in.raw(name) is not None:
                raise InputError(f"{name}: the bias file describes a bias network, which sets IC and VCE; "
                                 f"remove '{name}' (or the [network] table)")
        from ..dcbias import BiasNetwork

        net = dict(table)
        kind = _pick("type", "str", [net])
        if kind is None:
            raise InputError("network: missing 'type' in the [network] table (fixed, divider, collector-feedback)")
        vcc = _pick("vcc", "V", [net])
        if vcc is None:
            raise InputError("vcc: missing 'vcc' in the [network] table (supply voltage in V)")
        r = {k: _pick(k, "Ohm", [net]) for k in ("rb", "r1", "r2", "rc", "re")}
        network = BiasNetwork(kind=kind, vcc=vcc, rc=r["rc"] or 0.0, re=r["re"] or 0.0, rb=r["rb"], r1=r["r1"],
                              r2=r["r2"])
        device = dev("device", "str") or "npn"
        if device == "npn" and network.vcc < 0:
            raise InputError(f"vcc: expected a positive supply for an npn, got {network.vcc:g} V")
        ic = vce = None
    else:
        ic = bias_in.require("ic", "A", "collector current in A, or a [network] table in the bias file")
        vce = bias_in.require("vce", "V", "collector-emitter voltage in V, or a [network] table")
        device = dev("device", "str") or "npn"
        if device == "pnp" and ic < 0 and vce < 0:
            ic, vce = -ic, -vce
    if device not in ("npn", "pnp"):
        raise InputError(f"device: the spread takes npn or pnp, got {device!r}")
    from ..bias import DEFAULT_VCE_SAT
    from ..temperature import BETA_TC_DEFAULT, VBE_DEFAULT, VBE_TC_DEFAULT

    def opt_or(value, default):
        return default if value is None else value

    rdeg = bias_in.value("rdeg", "Ohm")
    rfb = bias_in.value("rfb", "Ohm")
    if rfb is not None and rfb <= 0:
        raise InputError(f"rfb: expected a positive resistance in ohm, got {rfb:g}")
    setup = SpreadSetup(
        config=config.lower(), freq=parse_quantity(freq, "Hz", "freq"), rs=_resistance(rs, "rs"),
        rl=_resistance(rl, "rl", allow_open=True), network=network, ic=ic, vce=vce, device=device,
        vbe=opt_or(dev("vbe", "V"), VBE_DEFAULT), vbe_tc=opt_or(dev("vbe_tc", "V/K"), VBE_TC_DEFAULT),
        beta_tc=opt_or(dev("beta_tc", "%/K"), BETA_TC_DEFAULT),
        vce_sat=opt_or(bias_in.value("vce_sat", "V"), DEFAULT_VCE_SAT), va=bias_in.value("va", "V"),
        ft=bias_in.value("ft", "Hz"), cmu=bias_in.value("cmu", "F", 0.0), rb=bias_in.value("rb", "Ohm", 0.0),
        rcx=bias_in.value("rcx", "Ohm", 0.0), rex=bias_in.value("rex", "Ohm", 0.0), rmu=bias_in.value("rmu", "Ohm"),
        rdeg=rdeg, rfb=rfb, z0=parse_z0(z0), pmax=dev("pmax", "W"), vceo=dev("vceo", "V"))
    _check_setup(setup)
    result = _run_with_progress(run_spread, setup, ranges, show=not as_json and n > PROGRESS_SAMPLES)
    for w in result.warnings:
        warn(w)
    if plot is not None:
        from ..plotting_spread import plot_spread

        try:
            plot_spread(result, plot)
        except OSError as exc:
            raise InputError(f"plot: cannot write {str(plot)!r} ({exc.strerror})") from None
    if as_json:
        emit_json(_spread_json(result, plot))
        return
    _print_spread(result)
    if plot is not None:
        sys.stderr.write(f"devmodels: wrote {plot}\n")


def _check_setup(setup) -> None:
    for name in ("va", "ft", "rmu"):
        v = getattr(setup, name)
        if v is not None and v <= 0:
            raise InputError(f"{name}: expected a positive value, got {v:g}")
    for name in ("cmu", "rb", "rcx", "rex"):
        v = getattr(setup, name)
        if v < 0:
            raise InputError(f"{name}: expected a value >= 0, got {v:g}")
    if setup.pmax is not None and setup.pmax <= 0:
        raise InputError(f"pmax: expected a positive power rating in W, got {setup.pmax:g}")
    if setup.vceo is not None and setup.vceo <= 0:
        raise InputError(f"vceo: expected a positive breakdown rating in V, got {setup.vceo:g}")
    if setup.network is not None and abs(setup.network.vcc) <= setup.vce_sat:
        raise InputError(f"vcc: the supply {abs(setup.network.vcc):g} V is not above vce_sat = {setup.vce_sat:g} V")
    if not setup.vbe > 0:
        raise InputError(f"vbe: expected a positive VBE(on) in V, got {setup.vbe:g}")
    if not setup.beta_tc > -1:
        raise InputError(f"beta_tc: expected a coefficient above -100 %/K, got {setup.beta_tc * 100:g} %/K")


def _run_with_progress(run: Callable, setup, ranges, show: bool):
    if not (show and sys.stderr.isatty()):
        return run(setup, ranges)
    from rich.console import Console
    from rich.progress import BarColumn, Progress, TextColumn, TimeRemainingColumn

    with Progress(TextColumn("spread"), BarColumn(), TextColumn("{task.completed:,}/{task.total:,} samples"),
                  TimeRemainingColumn(), console=Console(stderr=True), transient=True) as bar:
        task = bar.add_task("spread", total=ranges.samples)
        return run(setup, ranges, progress=lambda done, total: bar.update(task, completed=done))


#: Results in the order shown, with their unit for tables.
_SHOWN: tuple[tuple[str, str, str], ...] = (
    ("av", "", "|V2/V1|"), ("avs", "", "|V2/Vs|"), ("ai", "", "|-I2/I1|"), ("zin", "Ω", "|Zin|"),
    ("zout", "Ω", "|Zout|"), ("gt_db", "dB", "GT"), ("k", "", "Rollett K"), ("ic", "A", "|IC|"),
    ("vce", "V", "|VCE|"), ("power", "W", "P"))


def _spread_json(result, plot: Path | None) -> dict[str, Any]:
    s, r = result.setup, result.ranges
    out: dict[str, Any] = {"samples": result.samples, "seed": result.seed}
    out.update(result.stats)
    out.update({
        "corners": result.corners, "regions": result.regions, "config": s.config, "freq": s.freq,
        "rs": s.rs, "rl": s.rl, "network": None if s.network is None else s.network.kind,
        "ranges": {"beta_min": r.beta_min, "beta_max": r.beta_max, "beta_typ": r.beta_typ,
                   "temp_min": r.temp_min, "temp_max": r.temp_max, "tol": r.tol * 100},
        "warnings": list(result.warnings), "plot": None if plot is None else str(plot)})
    return out


def _fmt(v, unit: str) -> str:
    if v is None:
        return "—"
    if unit == "dB":
        return f"{v:.2f} dB"
    return format_si(v, unit)


def _print_spread(result) -> None:
    s, r = result.setup, result.ranges
    dist = "uniform" if r.beta_typ is None else f"triangular, typ {r.beta_typ:g}"
    title = (f"Spread of a {s.config.upper()} stage at {format_si(s.freq, 'Hz')}, Rs = {format_si(s.rs, 'Ω')}, "
             f"RL = {'open' if math.isinf(s.rl) else format_si(s.rl, 'Ω')}: {result.samples:,} samples, "
             f"seed {result.seed}")
    rows = []
    for key, unit, label in _SHOWN:
        st = result.stats[key]
        vals = [_fmt(st[q] if st else None, unit) for q in ("min", "p5", "p50", "p95", "max")]
        rows.append([label] + vals + [_fmt(result.corners["min"][key], unit), _fmt(result.corners["max"][key], unit)])
    c = result.corners
    caption = (f"beta {r.beta_min:g}..{r.beta_max:g} at 300 K ({dist}), T {r.temp_min:.2f}..{r.temp_max:.2f} K, "
               f"resistors ±{r.tol * 100:g} % (uniform). Corner min: every limit low (beta {c['min']['beta']:g}, "
               f"T {c['min']['temp']:.2f} K, resistors -{r.tol * 100:g} %); corner max: every limit high. "
               f"Samples per region: " + ", ".join(f"{k} {v:,}" for k, v in result.regions.items())
               + ". Statistics over samples in the active region.")
    print_table(title, ["result", "min", "p5", "p50", "p95", "max", "corner min", "corner max"], rows, caption)

"""Commands ``bias`` (a bias network's operating point) and ``spread`` (results over datasheet limits).

A bias file with a ``[network]`` table is solved for every bias-point command by
:meth:`devmodels.cli.inputs.Inputs.bias_point`; this module only shows results.
"""

from __future__ import annotations

import functools
import math
import sys
from pathlib import Path
from typing import Annotated, Any, Callable, Optional

import typer

from ..exceptions import InputError
from ..schema import MAX_SAMPLES, MAX_STREAMED_SAMPLES
from ..units import check_bounds, format_si, parse_count, parse_quantity, shown
from .app import command
from .inputs import BIAS_KEYS, SPREAD_KEYS, Inputs, bias_options, check_config, parse_freq, parse_z0, terminations
from .options import ConfigOpt, JsonOpt, OneFreqOpt, RlOpt, RsOpt, Z0Opt
from .render import emit_json, note, print_table, warn, zjson, zstr

#: Runs with more samples than this show a progress bar (on a terminal, never with --json).
PROGRESS_SAMPLES = 200_000


# --------------------------------------------------------------------------- bias command

@command("bias")
@bias_options(BIAS_KEYS, file_help="TOML file with a \\[network] table (type, vcc, r1, r2, rb, rc, re, tol, vbe) "
                                   "and top-level keys (beta, temp, device, ...); options override it.")
def bias_cmd(bias_in: Inputs, as_json: JsonOpt = False) -> None:
    """DC operating point of a bias network (Thevenin method, VBE(on) and beta)."""
    op = bias_in.operating_point()
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
    rel = {"region": "VCE >= VCE(sat)" if region == "active" else "",
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

def _spread_keys(k) -> bool:
    """spread: the bipolar keys of :data:`SPREAD_KEYS` and a FET's fixed values (ID, VDS, the model)."""
    return SPREAD_KEYS(k) or (k.table is None and k.panel == "fet")


#: FET limits of the spread: name -> (schema key whose unit and range the limit takes, what it is).
_FET_LIMITS: dict[str, tuple[str, str]] = {
    "idss": ("idss", "JFET drain current at VGS = 0, A"),
    "vp": ("vp", "JFET pinch-off voltage, V (sign optional)"),
    "kn": ("kn", "MOSFET transconductance parameter, A/V^2"),
    "vov": ("vov", "MOSFET overdrive voltage at the bias current, V"),
    "lambda": ("lambda", "channel-length modulation, 1/V"),
}


def _limit_option(name: str, end: str):
    kid, what = _FET_LIMITS[name]
    from ..schema import keys
    from ..units import UNITS

    metavar = UNITS[keys()[kid].unit].metavar
    return Annotated[Optional[str], typer.Option(
        f"--{name}-{end}", help=f"FET spread: {'lowest' if end == 'min' else 'highest'} {what} "
                                f"(with --{name}-{'max' if end == 'min' else 'min'}; equal for a fixed value).",
        rich_help_panel="FET spread limits", show_default=False, metavar=metavar)]


SpecOpt = Annotated[Optional[list[str]], typer.Option(
    "--spec", help="A specification RESULT>=VALUE or RESULT<=VALUE (also > and <; units allowed, e.g. "
                   "av>=40, zin>=1k, gt_db>=20dB, nf_db<=3); repeat for more. Adds the yield: the fraction of "
                   "samples meeting them all, and whether the worst case over the limits meets them. Adds to "
                   "the bias file's \\[spec] table (av = \">=40\"), replacing its limit on the same result in "
                   "the same direction.",
    rich_help_panel="Spread limits", show_default=False, metavar="SPEC")]
NoiseOpt = Annotated[bool, typer.Option(
    "--noise", help="Also the noise figure at --rs (nf_db) and the minimum noise figure (nfmin_db), source at "
                    "290 K, for every sample and over the box of limits (up to about twice the time per sample; "
                    "implied by a spec on nf_db or nfmin_db).", rich_help_panel="Spread limits")]


@command("spread")
@bias_options(_spread_keys, bare=True)
def spread_cmd(
    bias_in: Inputs,
    config: ConfigOpt = None,
    freq: OneFreqOpt = "1kHz",
    rs: RsOpt = "50",
    rl: RlOpt = "1k",
    z0: Z0Opt = "50",
    samples: Annotated[str, typer.Option("--samples", "-n", help=f"Number of samples (e.g. 10000, 1e6; at most "
                                         f"{MAX_STREAMED_SAMPLES:.3g}; with --plot, which keeps every sample, at most "
                                         f"{MAX_SAMPLES:.3g}, a quarter of this computer's memory).", metavar="COUNT",
                                         rich_help_panel="Spread limits")] = "10000",
    seed: Annotated[Optional[str], typer.Option("--seed", help="Seed of the random draws (default: a new one, "
                                                "printed so the run can be repeated).", metavar="INTEGER",
                                                rich_help_panel="Spread limits", show_default=False)] = None,
    spec: SpecOpt = None,
    noise: NoiseOpt = False,
    idss_min: _limit_option("idss", "min") = None,
    idss_max: _limit_option("idss", "max") = None,
    vp_min: _limit_option("vp", "min") = None,
    vp_max: _limit_option("vp", "max") = None,
    kn_min: _limit_option("kn", "min") = None,
    kn_max: _limit_option("kn", "max") = None,
    vov_min: _limit_option("vov", "min") = None,
    vov_max: _limit_option("vov", "max") = None,
    lambda_min: _limit_option("lambda", "min") = None,
    lambda_max: _limit_option("lambda", "max") = None,
    plot: Annotated[Optional[Path], typer.Option("--plot", help="Draw histograms into FILE.png.",
                                                 show_default=False, metavar="FILE")] = None,
    as_json: JsonOpt = False,
) -> None:
    """Terminated analysis over datasheet limits (beta, temperature and resistor tolerance; a FET's IDSS
    and VP, or kn or Vov, and lambda), with the worst case over the limits and the yield against specs."""
    from ..spread import run_spread

    if plot is not None:
        if plot.suffix.lower() != ".png":
            raise InputError(f"plot: expected a file name ending in .png, got {shown(str(plot))}")
        from ..fileio import check_destination

        check_destination(plot, option="plot")
    n = parse_count(samples, "samples", MAX_SAMPLES if plot is not None else MAX_STREAMED_SAMPLES)
    seed_v = None if seed is None else parse_count(seed, "seed", 2 ** 63 - 1, minimum=0)
    zs, zl = terminations(rs, rl)
    texts = {f"{name}_{end}": v for name, end, v in (
        ("idss", "min", idss_min), ("idss", "max", idss_max), ("vp", "min", vp_min), ("vp", "max", vp_max),
        ("kn", "min", kn_min), ("kn", "max", kn_max), ("vov", "min", vov_min), ("vov", "max", vov_max),
        ("lambda", "min", lambda_min), ("lambda", "max", lambda_max)) if v is not None}
    if bias_in.family == "bipolar":
        if texts:
            first = next(iter(texts))
            raise InputError(f"{first}: a FET limit, but the device is {bias_in.device}"
                             f"{' (the default)' if 'device' not in bias_in.values else ''}; give --device nmos, "
                             "pmos, njfet or pjfet for a FET spread")
        setup, ranges = bias_in.spread(check_config(config or "ce"), parse_freq(freq), zs, zl, parse_z0(z0), n,
                                       seed_v)
    else:
        setup, ranges = _fet_spread(bias_in, texts, check_config(config or "cs"), parse_freq(freq), zs, zl,
                                    parse_z0(z0), n, seed_v)
    # specifications: the bias file's [spec] table and --spec (one reader); a noise result named
    # in them turns the noise on
    from ..spread import NOISE_RESULTS

    specs = bias_in.specs(spec, setup.results + tuple(r for r in NOISE_RESULTS if r not in setup.results))
    if noise or any(name in NOISE_RESULTS for name, _, _ in specs):
        import dataclasses

        setup = dataclasses.replace(setup, noise=True)
    # --plot needs every sample's value; otherwise the library keeps them up to its limit and
    # streams beyond it (bounded memory)
    run = functools.partial(run_spread, specs=tuple(specs), keep_values=True if plot is not None else None)
    result = _run_with_progress(run, setup, ranges, show=not as_json and n > PROGRESS_SAMPLES)
    for w in result.warnings:
        warn(w)
    if plot is not None:
        from ..plotting_spread import plot_spread

        plot_spread(result, plot)
    if as_json:
        emit_json(_spread_json(result, plot))
    else:
        _print_spread(result)
    if plot is not None:
        note(f"wrote {plot}")


def _fet_limit(name: str, text: str) -> float:
    """One FET limit from its option text, in the unit and range of the schema key it limits."""
    from ..schema import keys

    k = keys()[_FET_LIMITS[name.rsplit("_", 1)[0]][0]]
    v = parse_quantity(text, k.unit, name)
    return check_bounds(name, v, k.unit, k.bounds, text)


def _fet_spread(bias_in: Inputs, texts: dict[str, str], config: str, freq: float, zs, zl, z0, n: int, seed):
    """The :class:`~devmodels.spread.FetSpreadSetup` and :class:`~devmodels.spread.FetSpreadRanges` of the
    inputs: ID and VDS fixed, each limit from ``--NAME-min``/``--NAME-max`` or, without them, the fixed
    value ``--NAME`` (or the file's key) as a collapsed range."""
    from ..constants import FET_CONFIGS
    from ..spread import FetSpreadRanges, FetSpreadSetup
    from ..validate import p_type_magnitudes

    bias_in._check_family()
    dev, fam = bias_in.device, bias_in.family
    for kid in ("beta_min", "beta_max", "beta_typ", "temp_min", "temp_max"):
        if kid in bias_in.values:
            raise InputError(f"{kid}: a bipolar limit, not used for a {dev} (a FET spread takes --idss-min/"
                             "--idss-max and --vp-min/--vp-max, or --kn-min/--kn-max or --vov-min/--vov-max)")
    if config not in FET_CONFIGS:
        raise InputError(f"config: a FET spread takes {', '.join(FET_CONFIGS)}, got {config!r}")
    i_d = bias_in.require("id", "drain current in A, e.g. 2mA")
    vds = bias_in.require("vds", "drain-source voltage in V, e.g. 5V")
    i_d, vds = p_type_magnitudes(("id", "vds"), dev, i_d, vds, dev in ("pmos", "pjfet"))
    own = ("idss", "vp") if fam == "jfet" else ("kn", "vov")
    other = ("kn", "vov") if fam == "jfet" else ("idss", "vp")
    for name in other:
        for end in ("min", "max"):
            if f"{name}_{end}" in texts:
                raise InputError(f"{name}_{end}: a {'MOSFET' if fam == 'jfet' else 'JFET'} limit; a {dev} is "
                                 f"described by {' and '.join(own) if fam == 'jfet' else 'kn or vov'}")
    limits: dict = {}
    for name in own + ("lambda",):
        lo, hi = texts.get(f"{name}_min"), texts.get(f"{name}_max")
        if (lo is None) != (hi is None):
            missing = f"{name}_max" if hi is None else f"{name}_min"
            raise InputError(f"{missing}: missing; give both --{name}-min and --{name}-max "
                             f"(equal for a fixed value, or --{name} alone)")
        if lo is not None:
            limits[name] = (_fet_limit(f"{name}_min", lo), _fet_limit(f"{name}_max", hi))
        elif bias_in.get(name) is not None:
            v = abs(bias_in.get(name)) if name == "vp" else bias_in.get(name)
            limits[name] = (v, v)
    if fam == "jfet":
        for name in own:
            if name not in limits:
                raise InputError(f"{name}_min: missing; a {dev} spread needs --{name}-min and --{name}-max "
                                 f"(or a fixed --{name})")
    else:
        if "kn" in limits and "vov" in limits:
            raise InputError(f"kn_min: give the limits of kn or of vov for a {dev} spread, not both")
        if "kn" not in limits and "vov" not in limits:
            raise InputError(f"kn_min: missing; a {dev} spread needs --kn-min and --kn-max or --vov-min and "
                             "--vov-max (or a fixed --kn or --vov)")
    kw = {f"{name}_{end}": v for name, (lo, hi) in limits.items() for end, v in (("min", lo), ("max", hi))}
    ranges = FetSpreadRanges(**kw, tol=bias_in.get("tol", 0.0), samples=n, seed=seed, ctol=bias_in.get("ctol", 0.0))
    setup = FetSpreadSetup(
        config=config, freq=freq, rs=zs, rl=zl, device=dev, id=i_d, vds=vds,
        gamma=None if fam == "jfet" else bias_in.get("gamma"), vsb=abs(bias_in.get("vsb", 0.0)),
        two_phi_f=bias_in.get("two_phi_f", 0.7), cgs=bias_in.get("cgs", 0.0), cgd=bias_in.get("cgd", 0.0),
        csb=bias_in.get("csb", 0.0), cdb=bias_in.get("cdb", 0.0), rg=bias_in.get("rg", 0.0),
        l_g=bias_in.get("l_g", 0.0), l_d=bias_in.get("l_d", 0.0), l_s=bias_in.get("l_s", 0.0),
        rdeg=bias_in.get("rdeg"), rfb=bias_in.get("rfb"), z0=z0,
        stage_network=bias_in.stage_network())  # the stage as built, as gain analyses it (ID, VDS fixed)
    setup.limits(ranges)  # the checks of the limits against ID and VDS, before any sample is drawn
    from ..dcbias import rating_warnings

    pmax, _ = bias_in.ratings()  # the dissipation ID VDS is the same for every sample
    for w in rating_warnings(i_d * vds, 0.0, 0.0, pmax=pmax, vceo=None):
        warn(w)
    return setup, ranges


def _run_with_progress(run: Callable, setup, ranges, show: bool):
    if not (show and sys.stderr.isatty()):
        return run(setup, ranges)
    from rich.console import Console
    from rich.progress import BarColumn, Progress, TextColumn, TimeRemainingColumn

    with Progress(TextColumn("spread"), BarColumn(), TextColumn("{task.completed:,}/{task.total:,} samples"),
                  TimeRemainingColumn(), console=Console(stderr=True), transient=True) as bar:
        task = bar.add_task("spread", total=ranges.samples)
        return run(setup, ranges, progress=lambda done, total: bar.update(task, completed=done))


#: Results in the order shown, with their unit and label for tables (those of the setup's results).
_SHOWN: tuple[tuple[str, str, str], ...] = (
    ("av", "", "|V2/V1|"), ("avs", "", "|V2/Vs|"), ("ai", "", "|-I2/I1|"), ("zin", "Ω", "|Zin|"),
    ("zout", "Ω", "|Zout|"), ("gt_db", "dB", "GT"), ("k", "", "Rollett K"), ("ic", "A", "|IC|"),
    ("vce", "V", "|VCE|"), ("power", "W", "P"), ("gm", "S", "gm"), ("ro", "Ω", "ro"), ("nf_db", "dB", "NF"),
    ("nfmin_db", "dB", "NFmin"))

#: How the worst case was found: method -> (mark in the table, footnote).
_METHODS: dict[str, tuple[str, str]] = {
    "vertices": ("", "at a vertex of the box of limits (monotonic along every edge)"),
    "vertices+search": ("*", "found by a local search inside the box (not monotonic along some edge): a local "
                             "extreme, not proven global"),
    "vertices-only": ("°", "the extremes over the vertices of the box only (no monotonicity check)"),
}


def _spread_json(result, plot: Path | None) -> dict[str, Any]:
    s = result.setup
    d = s.describe(result.ranges)
    out = result.as_dict()
    out.update({
        "config": s.config, "freq": s.freq, "rs": zjson(complex(s.rs)), "rl": zjson(complex(s.rl)),
        "device": s.device, "ranges": d["ranges"], "noise": s.noise, "plot": None if plot is None else str(plot)})
    out.update(d["bias_json"])
    return out


def _fmt(v, unit: str) -> str:
    if v is None or not math.isfinite(v):
        return "open" if unit == "Ω" else "unbounded"
    if unit == "dB":
        return f"{v:.2f} dB"
    if unit == "" and 0.5 < abs(v) < 2:  # Rollett K near 1: enough digits to read the margin
        return f"{v:.6g}"
    return format_si(v, unit)


def _pct(p: float) -> str:
    return f"{p * 100:.4g} %"


def _yield_text(y: dict, samples: int) -> str:
    verdict = {True: "meets them", False: "fails", None: "not computed"}[y["worst_case_pass"]]
    lo, hi = y["ci95"]
    most = (f"; fails most often: {y['most_failed']} ({y['failed_by'][y['most_failed']]:,} of {samples:,} samples)"
            if y.get("most_failed") else "")
    return (f"Yield: {_pct(y['fraction'])} of the samples meet {', '.join(y['specs'])} (95 % interval "
            f"{_pct(lo)} .. {_pct(hi)}){most}. Worst case over the limits: {verdict}.")


def _print_spread(result) -> None:
    s, r = result.setup, result.ranges
    where = s.describe(r)["bias"]
    title = (f"Spread of a {s.config.upper()} stage ({where}) at {format_si(s.freq, 'Hz')}, Rs = "
             f"{zstr(complex(s.rs))}, RL = {zstr(complex(s.rl))}: {result.samples:,} samples, seed {result.seed}")
    worst = result.worst or {}
    used: set[str] = set()
    rows = []
    for key, unit, label in _SHOWN:
        if key not in result.stats:
            continue
        st = result.stats[key]
        vals = [_fmt(st[q] if st else None, unit) for q in ("min", "p5", "p50", "p95", "max")]
        w = worst.get(key)
        if w is None:
            wv = ["", ""]
        else:
            mark = _METHODS.get(w["method"], ("?", w["method"]))[0]
            used.add(w["method"])
            wv = [_fmt(w["worst_min"], unit) + mark, _fmt(w["worst_max"], unit) + mark]
        rows.append([label] + vals + wv)
    limits_text = s.describe(r)["limits_text"]
    foot = " ".join(f"Worst {'values' if not mark else f'values marked {mark}'}: {text}."
                    for m, (mark, text) in _METHODS.items() if m in used)
    caption = (f"Limits: {limits_text}. min .. max and the percentiles are over the samples; worst min / worst "
               f"max are the extremes over the box of limits (worst_min_at / worst_max_at in --json). {foot}")
    if len(result.regions) > 1:
        caption += (" Samples per region: " + ", ".join(f"{k} {v:,}" for k, v in result.regions.items())
                    + ". Statistics over samples in the active region.")
    if result.yield_ is not None:
        caption += " " + _yield_text(result.yield_, result.samples)
    print_table(title, ["result", "min", "p5", "p50", "p95", "max", "worst min", "worst max"], rows, caption)

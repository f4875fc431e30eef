"""Commands ``bias`` (a bias network's operating point) and ``spread`` (results over datasheet limits).

A bias file with a ``[network]`` table is solved for every bias-point command by
:meth:`devmodels.cli.inputs.Inputs.bias_point`; this module only shows results.
"""

from __future__ import annotations

import math
import sys
from pathlib import Path
from typing import Annotated, Any, Callable, Optional

import typer

from ..exceptions import InputError
from ..schema import MAX_SAMPLES
from ..units import format_si, parse_count, shown
from .app import command
from .inputs import BIAS_KEYS, SPREAD_KEYS, Inputs, bias_options, check_config, parse_freq, parse_z0, terminations
from .options import JsonOpt, OneFreqOpt, RlOpt, RsOpt, Z0Opt
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

@command("spread")
@bias_options(SPREAD_KEYS)
def spread_cmd(
    bias_in: Inputs,
    config: Annotated[str, typer.Option("--config", "-c", help="Configuration: ce, cb, cc.", metavar="CONFIG")] = "ce",
    freq: OneFreqOpt = "1kHz",
    rs: RsOpt = "50",
    rl: RlOpt = "1k",
    z0: Z0Opt = "50",
    samples: Annotated[str, typer.Option("--samples", "-n", help=f"Number of samples (e.g. 10000, 1e6; at most "
                                         f"{MAX_SAMPLES:.3g}, a quarter of this computer's memory).", metavar="COUNT",
                                         rich_help_panel="Spread limits")] = "10000",
    seed: Annotated[Optional[str], typer.Option("--seed", help="Seed of the random draws (default: a new one, "
                                                "printed so the run can be repeated).", metavar="INTEGER",
                                                rich_help_panel="Spread limits", show_default=False)] = None,
    plot: Annotated[Optional[Path], typer.Option("--plot", help="Draw histograms into FILE.png.",
                                                 show_default=False, metavar="FILE")] = None,
    as_json: JsonOpt = False,
) -> None:
    """Terminated analysis over datasheet limits: beta, temperature and resistor tolerance."""
    from ..spread import run_spread

    if plot is not None:
        if plot.suffix.lower() != ".png":
            raise InputError(f"plot: expected a file name ending in .png, got {shown(str(plot))}")
        from ..fileio import check_destination

        check_destination(plot, option="plot")
    n = parse_count(samples, "samples", MAX_SAMPLES)
    seed_v = None if seed is None else parse_count(seed, "seed", 2 ** 63 - 1, minimum=0)
    zs, zl = terminations(rs, rl)
    setup, ranges = bias_in.spread(check_config(config), parse_freq(freq), zs, zl, parse_z0(z0), n, seed_v)
    result = _run_with_progress(run_spread, setup, ranges, show=not as_json and n > PROGRESS_SAMPLES)
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
        "rs": zjson(complex(s.rs)), "rl": zjson(complex(s.rl)),
        "network": None if s.network is None else s.network.kind,
        "ranges": {"beta_min": r.beta_min, "beta_max": r.beta_max, "beta_typ": r.beta_typ,
                   "temp_min": r.temp_min, "temp_max": r.temp_max, "tol": r.tol * 100},
        "warnings": list(result.warnings), "plot": None if plot is None else str(plot)})
    return out


def _fmt(v, unit: str) -> str:
    if v is None or not math.isfinite(v):
        return "open" if unit == "Ω" else "unbounded"
    if unit == "dB":
        return f"{v:.2f} dB"
    if unit == "" and 0.5 < abs(v) < 2:  # Rollett K near 1: enough digits to read the margin
        return f"{v:.6g}"
    return format_si(v, unit)


def _print_spread(result) -> None:
    s, r = result.setup, result.ranges
    dist = "uniform" if r.beta_typ is None else f"triangular, typ {r.beta_typ:g}"
    title = (f"Spread of a {s.config.upper()} stage at {format_si(s.freq, 'Hz')}, Rs = {zstr(complex(s.rs))}, "
             f"RL = {zstr(complex(s.rl))}: {result.samples:,} samples, seed {result.seed}")
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

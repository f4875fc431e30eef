"""Commands of the terminated analysis: gain, compare, sweep."""

from __future__ import annotations

import math
import re
import sys
from pathlib import Path
from typing import Annotated, Optional

import numpy as np
import typer

from ..exceptions import InputError
from ..units import format_complex, format_si, parse_quantity
from .app import app
from .common import (FreqOpt, JsonOpt, ParamsOpt, TouchstoneOpt, Z0Opt, BiasInputs, bias_options, emit_json,
                     jsonable, parse_freqs, parse_z0, print_table, print_twoport, two_port_input,
                     twoport_json)

#: Default source and load impedances, ohm.
DEFAULT_RS, DEFAULT_RL = "50", "1k"
#: Frequency of compare (and of gain without --freq), Hz.
DEFAULT_FREQ = 1e3
#: Frequency range of the plot of compare and of its bandwidth search, Hz.
COMPARE_RANGE = (1.0, 1e12)
COMPARE_PLOT_RANGE = (1e3, 1e10)
#: Sweeps with at least this many points show a progress bar (on a terminal, without --json).
PROGRESS_POINTS = 200_000
_BLOCK = 50_000

ConfigOpt = Annotated[str, typer.Option("--config", "-c", help="Configuration: ce, cb, cc (cs, cg, cd for FETs).")]
RsOpt = Annotated[str, typer.Option(
    "--rs", help="Source impedance, ohm: a resistance (50, 2.2k) or complex R+jX (50+j10, 1k-j200).")]
RlOpt = Annotated[str, typer.Option(
    "--rl", help="Load impedance, ohm: a resistance, complex R+jX, or 'open' for no load.")]
PlotOpt = Annotated[Optional[Path], typer.Option(
    "--plot", help="Also draw the results into FILE.png or FILE.svg.", show_default=False)]

def _split_complex(s: str) -> tuple[str, str, str] | None:
    """``'1k-j200'`` -> ('1k', '-', '200'); None when there is no imaginary part."""
    if "j" not in s:
        return None
    for k in range(len(s) - 1, 0, -1):
        if s[k] in "+-" and s[k - 1] not in "eE":
            im = s[k + 1:]
            if im.startswith("j"):
                im = im[1:]
            elif im.endswith("j"):
                im = im[:-1]
            else:
                return None
            return s[:k], s[k], im
    return None


def parse_impedance(text: str, name: str, allow_open: bool = False) -> complex:
    """An impedance in ohm: ``50``, ``2.2k``, ``50+j10``, ``1k-j200``, ``50+10j``; ``open`` (load only)."""
    s = str(text).strip().replace(" ", "")
    example = "examples: 50, 2.2k, 50+j10, 1k-j200" + (", open" if allow_open else "")
    if s.lower() in ("open", "inf", "infinity"):
        if allow_open:
            return complex(math.inf, 0.0)
        raise InputError(f"{name}: an open source is not allowed; give an impedance in ohm ({example})")
    parts = _split_complex(s)
    try:
        if parts is not None:
            re_, sign, im = parts
            x = parse_quantity(im, "Ohm", name)
            z = complex(parse_quantity(re_, "Ohm", name), -x if sign == "-" else x)
        elif "j" in s:
            raise InputError(name)
        else:
            z = complex(parse_quantity(s, "Ohm", name))
    except InputError as exc:
        if str(exc).startswith(f"{name}: ") and " is in " in str(exc):
            raise
        raise InputError(f"{name}: cannot read {str(text)!r} as an impedance in ohm ({example})") from None
    if z.real < 0:
        raise InputError(f"{name}: expected a resistance >= 0 ohm (a passive termination), got {_zstr(z)}")
    return z


def _zstr(z: complex) -> str:
    if math.isinf(z.real):
        return "open"
    return format_complex(z, "Ω") if z.imag else format_si(z.real, "Ω")


def _zjson(z: complex):
    return None if math.isinf(z.real) else [z.real, z.imag]


# --- the two-port under analysis ---------------------------------------------------------
def _terminations(rs: str, rl: str) -> tuple[complex, complex]:
    return parse_impedance(rs, "rs"), parse_impedance(rl, "rl", allow_open=True)


# --- output ---------------------------------------------------------------------------------
def point_json(res, i: int) -> dict:
    """One gain point: the interface keys first, then the extra ones."""
    p = res.point(i)
    out = {k: p[k] for k in ("freq", "av", "avs", "ai", "zin", "zout", "gt_db", "k", "mu", "msg_db")}
    for k in ("gp_db", "ga_db", "delta", "mu_prime", "u_db"):
        out[k] = p[k]
    out["msg_is_mag"] = bool(p["k"] > 1) if math.isfinite(p["k"]) else False
    out["unconditionally_stable"] = bool(res.unconditional[i])
    return out


def _gain_text(z: complex) -> str:
    if not (math.isfinite(z.real) and math.isfinite(z.imag)):
        return "unbounded"
    txt = format_complex(z, "", 4, polar=True)
    return txt.replace("∠ -0.00°", "∠ 0.00°").replace("∠ -180.00°", "∠ 180.00°")


def _imp_text(z: complex) -> str:
    if not (math.isfinite(z.real) and math.isfinite(z.imag)):
        return "open"
    return format_complex(z, "Ω", 4)


def _db_text(v: float, missing: str = "—") -> str:
    return f"{v:.2f} dB" if math.isfinite(v) else missing


def _num_text(v: float, missing: str = "unbounded") -> str:
    return f"{v:.4g}" if math.isfinite(v) else missing


def _msg_text(p: dict) -> str:
    if not math.isfinite(p["msg_db"]):
        return "unbounded"
    return f"{p['msg_db']:.2f} dB " + ("MAG" if p["msg_is_mag"] else "MSG")


def _print_gain(res, rs: complex, rl: complex, z0, label: str) -> None:
    pts = [point_json(res, i) for i in range(len(res))]
    fcol = [format_si(p["freq"], "Hz") if p["freq"] is not None else "(any)" for p in pts]
    rows = [[f, _gain_text(p["av"]), _gain_text(p["avs"]), _gain_text(p["ai"]), _imp_text(p["zin"]),
             _imp_text(p["zout"])] for f, p in zip(fcol, pts)]
    print_table(f"{label} between Rs = {_zstr(rs)} and RL = {_zstr(rl)}",
                ["freq", "av = V2/V1", "avs = V2/Vs", "ai = -I2/I1", "zin", "zout"], rows)
    open_load = math.isinf(rl.real)
    rows = [[f, _db_text(p["gt_db"], "none" if open_load else "—"), _db_text(p["gp_db"], "none" if open_load else "—"),
             _db_text(p["ga_db"]), _num_text(p["k"]), _num_text(p["delta"], "—"), _num_text(p["mu"], "—"),
             _num_text(p["mu_prime"], "—"), _msg_text(p), _db_text(p["u_db"], "unbounded")]
            for f, p in zip(fcol, pts)]
    ref = f"{z0[0]:g} Ω" if z0[0] == z0[1] else f"{z0[0]:g} / {z0[1]:g} Ω"
    unstable = [p for p in pts if not p["unconditionally_stable"]]
    cap = (f"mu, mu' from S at z0 = {ref}. mu > 1: unconditionally stable. "
           "MAG where K > 1, MSG otherwise.")
    if any(p["msg_is_mag"] and not p["unconditionally_stable"] for p in pts):
        cap += " K > 1 with |Δ| ≥ 1: the MAG shown needs terminations outside the Smith chart."
    if unstable:
        cap += f" {len(unstable)} of {len(pts)} points are only conditionally stable."
    print_table("Power gain and stability", ["freq", "GT", "GP", "GA", "K", "|Δ|", "mu", "mu'", "MAG/MSG", "U"],
                rows, caption=cap)


@app.command("gain")
@bias_options
def gain_cmd(bias_in: BiasInputs, config: ConfigOpt = "ce", rs: RsOpt = DEFAULT_RS, rl: RlOpt = DEFAULT_RL,
             freq: FreqOpt = None, z0: Z0Opt = "50", given: ParamsOpt = None,
             touchstone: TouchstoneOpt = None, plot: PlotOpt = None, as_json: JsonOpt = False) -> None:
    """Terminated analysis: gains, impedances, power gains and stability between --rs and --rl.

    Without --freq a bias point is analysed at 1 kHz and a Touchstone file at every one of its
    frequencies.
    """
    from ..analysis import terminate

    config = config.lower()
    zs, zl = _terminations(rs, rl)
    z0v = parse_z0(z0)
    tp = two_port_input(bias_in, given, touchstone, config, parse_freqs(freq), z0v)
    res = terminate(tp, zs, zl, z0v)
    if plot is not None:
        from ..plotting import plot_report

        plot_report(plot, gains={config: res}, s_ports={config: tp.to("s", z0v)} if tp.freq is not None else None,
                    title=f"{config.upper()} stage, Rs = {_zstr(zs)}, RL = {_zstr(zl)}")
    out = {"config": config, "rs": _zjson(zs), "rl": _zjson(zl),
           "z0": z0v[0] if z0v[0] == z0v[1] else list(z0v),
           "points": [point_json(res, i) for i in range(len(res))]}
    if as_json:
        emit_json(out)
        return
    label = f"{config.upper()} stage" if given is None and touchstone is None else (
        f"Two-port {touchstone.name}" if touchstone is not None else "Given two-port")
    _print_gain(res, zs, zl, z0v, label)
    if plot is not None:
        sys.stderr.write(f"devmodels: plot written to {plot}\n")


# --- compare -----------------------------------------------------------------------------
#: (key, text, quantity from a gain point and the bandwidth, "max" or "min")
_CATEGORIES = [
    ("voltage_gain", "highest voltage gain |avs|", lambda p, bw: abs(p["avs"]), max),
    ("current_gain", "highest current gain |ai|", lambda p, bw: abs(p["ai"]), max),
    ("power_gain", "highest transducer gain GT", lambda p, bw: p["gt_db"], max),
    ("input_impedance_high", "highest input impedance |zin|", lambda p, bw: abs(p["zin"]), max),
    ("input_impedance_low", "lowest input impedance |zin|", lambda p, bw: abs(p["zin"]), min),
    ("output_impedance_low", "lowest output impedance |zout|", lambda p, bw: abs(p["zout"]), min),
    ("output_impedance_high", "highest output impedance |zout|", lambda p, bw: abs(p["zout"]), max),
    ("bandwidth", "widest bandwidth", lambda p, bw: math.inf if bw is None else bw, max),
]


def _winners(points: dict, bws: dict) -> dict:
    best = {}
    for key, _, q, pick in _CATEGORIES:
        vals = {c: q(points[c], bws.get(c)) for c in points}
        vals = {c: v for c, v in vals.items() if not math.isnan(v)}
        if not vals:
            best[key] = None
            continue
        target = pick(vals.values())
        winners = [c for c, v in vals.items() if v == target or (math.isfinite(v) and math.isfinite(target)
                                                                 and abs(v - target) <= 1e-9 * abs(target))]
        best[key] = winners[0] if len(winners) == 1 else None  # a tie wins nothing
    return best


@app.command("compare")
@bias_options
def compare_cmd(bias_in: BiasInputs, rs: RsOpt = DEFAULT_RS, rl: RlOpt = DEFAULT_RL,
                freq: Annotated[str, typer.Option("--freq", "-f", help="Frequency, Hz.")] = "1kHz",
                z0: Z0Opt = "50",
                plot: Annotated[Optional[Path], typer.Option(
                    "--plot", help="Draw gain vs frequency (1 kHz to 10 GHz), Smith chart and |h21| into "
                                   "FILE.png or FILE.svg.", show_default=False)] = None,
                as_json: JsonOpt = False) -> None:
    """CE, CB and CC (CS, CG and CD for a FET) side by side for the same device, bias and terminations."""
    from ..analysis import terminate
    from ..merit import bandwidth

    zs, zl = _terminations(rs, rl)
    z0v = parse_z0(z0)
    f = parse_freqs([freq])
    if f.size != 1:
        raise InputError("freq: compare analyses one frequency; give one value")
    if not bias_in.given():
        raise InputError("bias point: missing; give a bias file or bias options (--ic, --vce, --beta, ...)")
    from ..fet import is_fet_model

    configs = ("cs", "cg", "cd") if is_fet_model(bias_in.model()) else ("ce", "cb", "cc")
    stages = {c: bias_in.stage(c) for c in configs}
    names = ", ".join(c.upper() for c in configs)
    points, bws = {}, {}
    for c, st in stages.items():
        res = terminate(st.two_port(f, "y", z0v), zs, zl, z0v)
        points[c] = point_json(res, 0)
        bws[c] = bandwidth(st, *COMPARE_RANGE, zs, zl)[0]
    best = _winners(points, bws)
    if plot is not None:
        _compare_plot(plot, stages, zs, zl, z0v)
    if as_json:
        emit_json({**points, "bandwidth": bws, "best": best, "rs": _zjson(zs), "rl": _zjson(zl),
                   "z0": z0v[0] if z0v[0] == z0v[1] else list(z0v)})
        return
    rows = []
    spec = [("av = V2/V1", lambda p: _gain_text(p["av"])), ("avs = V2/Vs", lambda p: _gain_text(p["avs"])),
            ("ai = -I2/I1", lambda p: _gain_text(p["ai"])), ("zin", lambda p: _imp_text(p["zin"])),
            ("zout", lambda p: _imp_text(p["zout"])),
            ("GT", lambda p: _db_text(p["gt_db"], "none" if math.isinf(zl.real) else "—")),
            ("K", lambda p: _num_text(p["k"])), ("mu", lambda p: _num_text(p["mu"], "—")),
            ("MAG/MSG", _msg_text), ("U", lambda p: _db_text(p["u_db"], "unbounded"))]
    for name, fn in spec:
        rows.append([name] + [fn(points[c]) for c in configs])
    rows.append(["-3 dB bandwidth"] + [format_si(bws[c], "Hz") if bws[c] else "unbounded" for c in configs])
    print_table(f"{names} at {format_si(float(f[0]), 'Hz')} between Rs = {_zstr(zs)} and RL = {_zstr(zl)}",
                ["quantity", *(c.upper() for c in configs)], rows,
                caption="bandwidth: where |avs| falls 3 dB below its low-frequency value "
                        f"(searched up to {format_si(COMPARE_RANGE[1], 'Hz')})")
    for c in configs:
        wins = [text for key, text, _, _ in _CATEGORIES if best[key] == c]
        sys.stdout.write(f"{c.upper()}: " + ("; ".join(wins) if wins else "wins none of these") + "\n")


def _compare_plot(path: Path, stages: dict, zs, zl, z0v) -> None:
    from ..analysis import terminate
    from ..merit import frequency_figures
    from ..plotting import plot_report

    grid = np.geomspace(*COMPARE_PLOT_RANGE, 200)
    gains, sp = {}, {}
    for c, st in stages.items():
        tp = st.two_port(grid, "y", z0v)
        gains[c] = terminate(tp, zs, zl, z0v)
        sp[c] = tp.to("s", z0v)
    first = next(iter(stages))
    figs = frequency_figures(stages[first], *COMPARE_PLOT_RANGE, zs, zl)
    plot_report(path, gains=gains, s_ports=sp, figures=figs,
                title=f"{', '.join(c.upper() for c in stages)} between Rs = {_zstr(zs)} and RL = {_zstr(zl)}")


# --- sweep -------------------------------------------------------------------------------
def _sweep_freqs(start: str, stop: str, points: int) -> np.ndarray:
    f0 = parse_quantity(start, "Hz", "start")
    f1 = parse_quantity(stop, "Hz", "stop")
    if f0 <= 0:
        raise InputError(f"start: expected a frequency > 0 Hz for a log sweep, got {start!r}")
    if points < 1:
        raise InputError(f"points: expected at least 1 point, got {points}")
    if f1 < f0 or (f1 == f0 and points > 1):
        raise InputError(f"start: {start!r} is above stop {stop!r}; expected start < stop")
    return np.geomspace(f0, f1, points)


def _compute_sweep(stage, f: np.ndarray, z0v, show_progress: bool):
    """The stage's Y over ``f``, in blocks with a progress bar when asked."""
    from ..twoport import TwoPort

    if not show_progress:
        return stage.two_port(f, "y", z0v)
    from rich.progress import Progress

    parts = []
    with Progress(transient=True) as prog:
        task = prog.add_task("computing", total=f.size)
        for i in range(0, f.size, _BLOCK):
            parts.append(stage.two_port(f[i:i + _BLOCK], "y", z0v).data)
            prog.advance(task, min(_BLOCK, f.size - i))
    return TwoPort(f, np.concatenate(parts), "y", z0v, stage.config)


@app.command("sweep")
@bias_options
def sweep_cmd(bias_in: BiasInputs, config: ConfigOpt = "ce",
              kind: Annotated[str, typer.Option("--kind", "-k", help="Parameter kind: y, z, h, g, abcd, s.")] = "s",
              start: Annotated[str, typer.Option("--start", help="First frequency, Hz.")] = "1kHz",
              stop: Annotated[str, typer.Option("--stop", help="Last frequency, Hz.")] = "10GHz",
              points: Annotated[int, typer.Option("--points", "-n", help="Number of points, log spaced.")] = 101,
              z0: Z0Opt = "50", rs: RsOpt = DEFAULT_RS, rl: RlOpt = DEFAULT_RL,
              out: Annotated[Optional[Path], typer.Option(
                  "--out", "-o", help="Write the parameters to FILE: .s2p (Touchstone 1.1; .y2p, .z2p, .h2p, "
                                      ".g2p too), .ts (Touchstone 2.0), .csv or .json.", show_default=False)] = None,
              polar: Annotated[bool, typer.Option(
                  "--polar", help="Magnitude/angle instead of real/imaginary (tables, CSV, Touchstone MA).")] = False,
              ts_version: Annotated[Optional[str], typer.Option(
                  "--touchstone-version", help="1.1 or 2.0 (default: 1.1 for .sNp unless the ports have "
                                               "different z0).", show_default=False)] = None,
              plot: PlotOpt = None, as_json: JsonOpt = False) -> None:
    """Two-port parameters over a log-spaced sweep, with fT, f_beta, fmax and the bandwidth."""
    from ..analysis import terminate
    from ..constants import KINDS
    from ..merit import frequency_figures

    config = config.lower()
    kind = kind.lower()
    if kind not in KINDS:
        raise InputError(f"kind: unknown parameter kind {kind!r}, expected one of {', '.join(KINDS)}")
    if ts_version is not None and ts_version not in ("1.1", "2.0", "1", "2"):
        raise InputError(f"touchstone-version: expected 1.1 or 2.0, got {ts_version!r}")
    ts_version = {"1": "1.1", "2": "2.0"}.get(ts_version, ts_version)
    f = _sweep_freqs(start, stop, points)
    zs, zl = _terminations(rs, rl)
    z0v = parse_z0(z0)
    if out is not None:
        _check_out(out, kind)
    if not bias_in.given():
        raise InputError("bias point: missing; give a bias file or bias options (--ic, --vce, --beta, ...)")
    stage = bias_in.stage(config)
    progress = (not as_json) and f.size >= PROGRESS_POINTS and sys.stderr.isatty()
    y = _compute_sweep(stage, f, z0v, progress)
    tp = y.to(kind, z0v)
    figs = frequency_figures(stage, float(f[0]), float(f[-1]), zs, zl) if f.size > 1 and f[-1] > f[0] else None
    fig_json = None if figs is None else figs.as_dict()
    if figs is not None:
        fig_json["avs0"] = figs.avs0
    written = None
    if out is not None:
        from ..export import write_by_extension

        comment = (f"devmodels sweep: {config.upper()} stage, {f.size} points, "
                   f"{format_si(float(f[0]), 'Hz')} to {format_si(float(f[-1]), 'Hz')}")
        def write():
            return write_by_extension(tp, out, polar=polar, version=ts_version, comment=comment,
                                      extra_json={"figures": jsonable(fig_json)})

        if progress:
            from rich.console import Console

            with Console(stderr=True).status(f"writing {out}"):
                written = write()
        else:
            written = write()
    if plot is not None:
        from ..plotting import plot_report

        plot_report(plot, gains={config: terminate(y, zs, zl, z0v)}, s_ports={config: y.to("s", z0v)},
                    figures=figs, title=f"{config.upper()} stage, Rs = {_zstr(zs)}, RL = {_zstr(zl)}")
    if as_json:
        obj = twoport_json(tp)
        obj["figures"] = fig_json
        obj["rs"], obj["rl"] = _zjson(zs), _zjson(zl)
        emit_json(obj)
        return
    shown = tp
    if len(tp) > 41:
        idx = np.unique(np.linspace(0, len(tp) - 1, 21).round().astype(int))
        from ..twoport import TwoPort

        shown = TwoPort(tp.freq[idx], tp.data[idx], tp.kind, tp.z0, tp.config)
    print_twoport(shown, polar)
    if shown is not tp:
        sys.stdout.write(f"(showing {len(shown)} of {len(tp)} points; --out FILE or --json for all)\n")
    if figs is not None:
        _print_figures(figs, zs, zl, config)
    if written is not None:
        sys.stderr.write(f"devmodels: wrote {written[1]} to {written[0]}\n")
    if plot is not None:
        sys.stderr.write(f"devmodels: plot written to {plot}\n")


def _check_out(out: Path, kind: str) -> None:
    ext = out.suffix.lower()
    parent = out.parent if str(out.parent) else Path(".")
    if not parent.is_dir():
        raise InputError(f"out: directory {str(parent)!r} does not exist")
    if (ext == ".ts" or re.fullmatch(r"\.[syzhg]\d+p", ext)) and kind == "abcd":
        raise InputError("out: Touchstone holds S, Y, Z, H or G parameters, not abcd; "
                         "use --kind s or write .csv or .json")
    if ext not in (".csv", ".json", ".ts") and not re.fullmatch(r"\.[syzhg]\d+p", ext):
        raise InputError(f"out: unknown file type {ext or '(none)'!r}; expected .s2p (Touchstone 1.1), "
                         ".ts (Touchstone 2.0), .csv or .json")


def _print_figures(figs, zs, zl, config: str = "ce") -> None:
    lo, hi = figs.f_range

    def fq(v):
        return format_si(v, "Hz") if v is not None else f"not reached in {format_si(lo, 'Hz')}–{format_si(hi, 'Hz')}"

    err = figs.miller_error
    dev = "CS" if config in ("cs", "cg", "cd") else "CE"
    beta_row = (["f_beta", fq(figs.f_beta), f"|h21| of the {dev} device 3 dB below {figs.h21_0:.4g}"]
                if figs.h21_0 is not None else
                ["f_beta", "unbounded", f"|h21| of the {dev} device has no finite value at 0 Hz"])
    rows = [beta_row,
            ["fT", fq(figs.ft), f"|h21| of the {dev} device = 1"],
            ["fmax", fq(figs.fmax), "Mason's U = 1 (0 dB)"],
            ["bandwidth", fq(figs.bandwidth),
             f"|avs| 3 dB below {abs(figs.avs0):.4g} (Rs = {_zstr(zs)}, RL = {_zstr(zl)})"],
            ["Miller estimate", format_si(figs.miller, "Hz") if figs.miller else "— (CE without rdeg/rfb only)",
             "1/(2π R C_in), C_in = C_pi + C_mu(1 + gm RL'), R = (Rs + rb) || r_pi"
             + (f"; {err * 100:+.1f} % off" if err is not None else "")]]
    print_table("Frequency figures", ["figure", "value", "definition"], rows)

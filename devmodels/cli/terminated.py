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
from ..schema import MAX_POINTS, MAX_STREAMED_POINTS
from ..units import format_si, shown
from .app import command
from .inputs import (Inputs, bias_options, check_config, check_kind, parse_freq, parse_freqs, parse_z0,
                     terminations, two_port_input)
from .options import (ConfigOpt, FreqOpt, JsonOpt, OneFreqOpt, ParamsOpt, PlotOpt, PolarOpt, RlOpt, RsOpt,
                      TouchstoneOpt, Z0Opt)
from .noisecmd import _FlickerOpt, _GammaNOpt, _noise_stage, _nonneg, _source
from .render import (stdout, db_text, emit_json, gain_text, imp_text, jsonable, msg_text, note, point_json, print_gain,
                     print_table, print_twoport, stab_text, z0json, zjson, zstr)

#: Default source and load impedances, ohm.
DEFAULT_RS, DEFAULT_RL = "50", "1k"
#: Frequency of gain without --freq, Hz.
DEFAULT_FREQ = 1e3
#: Frequency range of compare's bandwidth search and of its plot, Hz.
COMPARE_RANGE = (1.0, 1e12)
COMPARE_PLOT_RANGE = (1e3, 1e10)
#: Sweeps with at least this many points show a progress bar (on a terminal, without --json).
PROGRESS_POINTS = 200_000


def _check_plot(plot: Path | None) -> None:
    if plot is not None:
        from ..fileio import check_destination

        check_destination(plot, option="plot")  # first: a folder is named as such
        if plot.suffix.lower() not in (".png", ".svg"):
            raise InputError(f"plot: expected a file name ending in .png or .svg, got {shown(str(plot))}")


@command("gain")
@bias_options(bare=True)
def gain_cmd(bias_in: Inputs, config: ConfigOpt = None, rs: RsOpt = DEFAULT_RS, rl: RlOpt = DEFAULT_RL,
             freq: FreqOpt = None, z0: Z0Opt = "50", given: ParamsOpt = None,
             touchstone: TouchstoneOpt = None, polar: PolarOpt = False, plot: PlotOpt = None,
             as_json: JsonOpt = False) -> None:
    """Terminated analysis: gains, impedances, power gains and stability between --rs and --rl.

    Without --freq a bias point is analysed at 1 kHz and a Touchstone file at every one of its frequencies.
    """
    from ..analysis import terminate

    zs, zl = terminations(rs, rl)
    z0v = parse_z0(z0)
    _check_plot(plot)
    tp = two_port_input(bias_in, given, touchstone, config, parse_freqs(freq), z0v)
    config = tp.config
    res = terminate(tp, zs, zl, z0v)
    if plot is not None:
        from ..plotting import plot_report

        plot_report(plot, gains={config: res}, s_ports={config: tp.to("s", z0v)} if tp.freq is not None else None,
                    title=f"{config.upper()} stage, Rs = {zstr(zs)}, RL = {zstr(zl)}")
    pts = [point_json(res, i) for i in range(len(res))]
    noisy = touchstone is not None and _file_noise(touchstone, tp, zs, pts)
    if as_json:
        obj = {"config": config, "rs": zjson(zs), "rl": zjson(zl), "z0": z0json(z0v), "points": pts}
        if noisy:
            from ..noise import T0

            obj["t0"] = T0
        emit_json(obj)
    else:
        label = f"{config.upper()} stage" if given is None and touchstone is None else (
            f"Two-port {touchstone.name}" if touchstone is not None else "Given two-port")
        print_gain(pts, zs, zl, z0v, label, polar=polar)
        if noisy:
            rows = [[format_si(p["freq"], "Hz"), db_text(p["nf_db"], "—"), db_text(p["nfmin_db"], "—")]
                    for p in pts]
            print_table(f"Noise (the file's data), Rs = {zstr(zs)}", ["freq", "NF at Rs", "NFmin"],
                        rows, caption="source at T0 = 290 K; —: not a noise frequency")
    if plot is not None:
        note(f"plot written to {plot}")


def _file_noise(path: Path, tp, zs: complex, pts: list[dict]) -> bool:
    """Add ``nf_db`` and ``nfmin_db`` to the points when the Touchstone file has noise data.

    The numbers are :func:`devmodels.noisefile.noise_figures_at`; a point that is not a noise
    frequency, or a source without a real part > 0, gets None.  Returns whether the file has
    noise data.
    """
    from ..noisefile import noise_figures_at
    from ..touchstone import read_touchstone_file
    from .render import warn

    data = read_touchstone_file(path)
    if data.noise is None:
        return False
    for p in pts:
        p.update(nf_db=None, nfmin_db=None)
    if tp.freq is None or not (math.isfinite(zs.real) and zs.real > 0):
        warn("noise: the file's noise parameters give no NF here (the source needs a real part > 0 ohm)")
        return True
    try:  # the gains stand without the noise: a noise block that cannot be used is a warning
        nf, nfmin = noise_figures_at(data, tp.freq, zs)
    except InputError as exc:
        warn(f"noise: not computed ({exc})")
        return True
    for p, a, b in zip(pts, nf, nfmin):
        p.update(nf_db=float(a) if math.isfinite(a) else None, nfmin_db=float(b) if math.isfinite(b) else None)
    if not np.any(np.isfinite(nf)):
        fn = data.noise.freq
        warn(f"noise: no frequency of the analysis is a noise frequency of {path.name} "
             f"({format_si(float(fn[0]), 'Hz')} to {format_si(float(fn[-1]), 'Hz')}, {fn.size} points); "
             "noise parameters are not interpolated")
    return True


# --- compare -----------------------------------------------------------------------------
@command("compare")
@bias_options(bare=True)
def compare_cmd(bias_in: Inputs, rs: RsOpt = DEFAULT_RS, rl: RlOpt = DEFAULT_RL, freq: OneFreqOpt = "1kHz",
                z0: Z0Opt = "50",
                plot: Annotated[Optional[Path], typer.Option(
                    "--plot", help="Draw gain vs frequency (1 kHz to 10 GHz), Smith chart and |h21| into "
                                   "FILE.png or FILE.svg.", show_default=False, metavar="FILE")] = None,
                polar: PolarOpt = False, as_json: JsonOpt = False) -> None:
    """Every configuration of the device (CE, CB, CC or CS, CG, CD) side by side: same bias and terminations."""
    from ..analysis import terminate
    from ..comparison import CATEGORIES, configuration_noise, winners
    from ..merit import bandwidth

    zs, zl = terminations(rs, rl)
    z0v = parse_z0(z0)
    if "," in freq:
        raise InputError("freq: compare analyses one frequency; give one value")
    f = np.array([parse_freq(freq)])
    _check_plot(plot)
    if not bias_in.given():
        raise InputError("bias point: missing; give a bias file or bias options (--ic, --vce, --beta, ...)")
    configs = bias_in.configs()
    stages = {c: bias_in.stage(c) for c in configs}
    points, bws = {}, {}
    for c, st in stages.items():
        res = terminate(st.two_port(f, "y", z0v), zs, zl, z0v)
        points[c] = point_json(res, 0)
        bws[c] = bandwidth(st, *COMPARE_RANGE, zs, zl)[0]
    from .noisecmd import _stage_noise
    from .render import warn

    try:  # each configuration's noise as the noise command takes it (FET at --temp, the file's noise keys)
        noisy = {c: _stage_noise(bias_in, c, f, bias_in.get("flicker_corner"), bias_in.get("gamma_n"))[0]
                 for c in configs}
        for c, nz in configuration_noise(noisy, float(f[0]), zs).items():
            points[c].update(nz)  # nf_db at Rs (source at T0 = 290 K) and nfmin_db
    except InputError as exc:
        warn(f"noise: not computed ({exc})")
        for c in configs:
            points[c].update(nf_db=None, nfmin_db=None)
    best = winners(points, bws)
    if plot is not None:
        _compare_plot(plot, stages, zs, zl, z0v)
    if as_json:
        emit_json({**points, "bandwidth": bws, "best": best, "rs": zjson(zs), "rl": zjson(zl), "z0": z0json(z0v)})
        return
    from .render import mu_text, power_text

    spec = [("av = V2/V1", lambda p: gain_text(p["av"], polar)), ("avs = V2/Vs", lambda p: gain_text(p["avs"], polar)),
            ("ai = -I2/I1", lambda p: gain_text(p["ai"], polar)), ("zin", lambda p: imp_text(p["zin"], polar)),
            ("zout", lambda p: imp_text(p["zout"], polar)), ("GT", lambda p: power_text(p, "gt_db", zs, zl)),
            ("K", lambda p: stab_text(p["k"])), ("mu", mu_text),
            ("MAG/MSG", msg_text), ("U", lambda p: db_text(p["u_db"])),
            ("NF at Rs", lambda p: db_text(p["nf_db"], "undefined")), ("NFmin", lambda p: db_text(p["nfmin_db"]))]
    rows = [[name] + [fn(points[c]) for c in configs] for name, fn in spec]
    rows.append(["-3 dB bandwidth"] + [format_si(bws[c], "Hz") if bws[c] else "unbounded" for c in configs])
    names = ", ".join(c.upper() for c in configs)
    print_table(f"{names} at {format_si(float(f[0]), 'Hz')} between Rs = {zstr(zs)} and RL = {zstr(zl)}",
                ["quantity", *(c.upper() for c in configs)], rows,
                caption="bandwidth: where |avs| falls 3 dB below its mid-band value above mid-band "
                        f"(searched up to {format_si(COMPARE_RANGE[1], 'Hz')}); NF: source Rs at T0 = 290 K "
                        "(undefined for an ideal source)")
    for c in configs:
        wins = [cat.text for cat in CATEGORIES if best[cat.key] == c]
        stdout(f"{c.upper()}: " + ("; ".join(wins) if wins else "wins none of these") + "\n")
    if plot is not None:
        note(f"plot written to {plot}")


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
                title=f"{', '.join(c.upper() for c in stages)} between Rs = {zstr(zs)} and RL = {zstr(zl)}")


# --- sweep -------------------------------------------------------------------------------
def _sweep_freqs(start: str, stop: str, points: str, limit: int = MAX_POINTS) -> np.ndarray:
    f0 = parse_freq(start, "start")
    f1 = parse_freq(stop, "stop")
    from ..units import parse_count

    n = parse_count(points, "points", limit)
    if f0 <= 0:
        raise InputError(f"start: expected a frequency > 0 Hz for a log sweep, got {shown(start)}")
    if f1 < f0 or (f1 == f0 and n > 1):
        raise InputError(f"start: {shown(start)} is not below stop {shown(stop)}; expected start < stop")
    return np.geomspace(f0, f1, n)


def _check_out(out: Path, kind: str) -> None:
    from ..fileio import check_destination

    check_destination(out, option="out")  # first: a folder is named as such, not as a file type
    ext = out.suffix.lower()
    if (ext == ".ts" or re.fullmatch(r"\.[syzhg]\d+p", ext)) and kind == "abcd":
        raise InputError("out: Touchstone holds S, Y, Z, H or G parameters, not abcd; "
                         "use --kind s or write .csv or .json")
    if ext not in (".csv", ".json", ".ts") and not re.fullmatch(r"\.[syzhg]\d+p", ext):
        raise InputError(f"out: unknown file type {shown(ext or '(none)')}; expected .s2p (Touchstone 1.1), "
                         ".ts (Touchstone 2.0), .csv or .json")


@command("sweep")
@bias_options(bare=True)
def sweep_cmd(bias_in: Inputs, config: ConfigOpt = None,
              kind: Annotated[str, typer.Option("--kind", "-k", help="Parameter kind: y, z, h, g, abcd, s.",
                                                metavar="KIND")] = "s",
              start: Annotated[str, typer.Option("--start", help="First frequency, Hz.", metavar="HZ")] = "1kHz",
              stop: Annotated[str, typer.Option("--stop", help="Last frequency, Hz.", metavar="HZ")] = "10GHz",
              points: Annotated[str, typer.Option(
                  "--points", "-n", help=f"Number of points, log spaced (e.g. 201, 1e6); at most {MAX_POINTS:.3g} "
                                         f"with --json, --plot or --noise into Touchstone, "
                                         f"{MAX_STREAMED_POINTS:.3g} otherwise (the "
                                         "sweep is then written block by block; limits from this computer's "
                                         "memory).", metavar="COUNT")] = "101",
              z0: Z0Opt = "50", rs: RsOpt = DEFAULT_RS, rl: RlOpt = DEFAULT_RL,
              out: Annotated[Optional[Path], typer.Option(
                  "--out", "-o", help="Write the parameters to FILE: .s2p (Touchstone 1.1; .y2p, .z2p, .h2p, "
                                      ".g2p too), .ts (Touchstone 2.0), .csv or .json.", show_default=False,
                  metavar="FILE")] = None,
              polar: PolarOpt = False,
              fmt: Annotated[Optional[str], typer.Option(
                  "--format", help="Number format of --out Touchstone and CSV files: ri (real, imaginary), ma "
                                   "(magnitude, angle) or db (dB, angle) (default ri; --polar: ma).",
                  show_default=False, metavar="ri|ma|db")] = None,
              ts_version: Annotated[Optional[str], typer.Option(
                  "--touchstone-version", help="1.1 or 2.0 (default: 1.1 for .sNp unless the ports have "
                                               "different z0).", show_default=False, metavar="1.1|2.0")] = None,
              plot: PlotOpt = None,
              noise: Annotated[bool, typer.Option(
                  "--noise", help="Also the noise figure at --rs (the source at T0 = 290 K) and NFmin at every "
                                  "point: in the table, in JSON (keys nf_db, nfmin_db of each point), as columns "
                                  "of a .csv or .json --out, as the noise-parameter block of a Touchstone --out "
                                  "(S parameters), and as a panel of --plot. Off by default: it adds a noise "
                                  "analysis of every point.",
                  rich_help_panel="Noise")] = False,
              flicker_corner: _FlickerOpt = None, gamma_n: _GammaNOpt = None,
              as_json: JsonOpt = False) -> None:
    """Two-port parameters over a log-spaced sweep, with fT, f_beta, fmax and the bandwidth."""
    from ..analysis import terminate
    from ..merit import frequency_figures
    from ..noise import T0
    from ..sweeping import NoiseBlocks, noise_columns, sweep_noise, sweep_stream, sweep_two_port

    fc = gn = None
    if noise:
        fc = _nonneg(flicker_corner, "flicker-corner", "Hz")
        gn = _nonneg(gamma_n, "gamma-n", "", positive=True)
    else:
        for name, v in (("flicker-corner", flicker_corner), ("gamma-n", gamma_n)):
            if v is not None:
                raise InputError(f"{name}: a noise option, used with --noise only")
    config = check_config(config) if config is not None else None
    kind = check_kind(kind)
    if ts_version is not None and ts_version not in ("1.1", "2.0", "1", "2"):
        raise InputError(f"touchstone-version: expected 1.1 or 2.0, got {shown(ts_version)}")
    ts_version = {"1": "1.1", "2": "2.0"}.get(ts_version, ts_version)
    if fmt is not None:
        from ..export import number_format

        fmt = number_format(fmt.strip().lower()).lower()
    ts_out = out is not None and out.suffix.lower() not in (".csv", ".json")
    whole = plot is not None or as_json or (noise and ts_out)  # the noise block is written whole
    f = _sweep_freqs(start, stop, points, MAX_POINTS if whole else MAX_STREAMED_POINTS)
    zs, zl = terminations(rs, rl)
    z0v = parse_z0(z0)
    if noise:
        _source(rs)  # a source with real part > 0 (the noise factor needs the source's own noise)
    if out is not None:
        _check_out(out, kind)
        if noise and ts_out and kind != "s":
            raise InputError("out: a Touchstone noise block goes with S parameters; use --kind s, or write "
                             ".csv or .json")
    _check_plot(plot)
    if not bias_in.given():
        raise InputError("bias point: missing; give a bias file or bias options (--ic, --vce, --beta, ...)")
    if noise:
        if fc is None:  # a bias file may hold them too (when the schema knows the keys)
            fc = bias_in.get("flicker_corner")
        if gn is None:
            gn = bias_in.get("gamma_n")
        stage = _noise_stage(bias_in, config, f, fc, gn)
    else:
        stage = bias_in.stage(config)
    config = stage.config
    progress = (not as_json) and f.size >= PROGRESS_POINTS and sys.stderr.isatty()
    # Without --plot or --json: the parameters are computed block by block as --out is written
    # (devmodels.sweeping.sweep_stream), the table's sample on its own; the sweep is never held whole.
    # The noise likewise (sweeping.NoiseBlocks), except for a Touchstone noise block (written whole).
    stream = not whole
    nres = None  # the noise over the whole sweep (NoiseResult), when it is held
    if stream:
        y = None
        tp = sweep_stream(stage, f, kind, z0v)
    elif progress:
        from rich.console import Console
        from rich.progress import Progress

        with Progress(console=Console(stderr=True), transient=True) as bar:
            task = bar.add_task("computing", total=f.size)
            y = sweep_two_port(stage, f, z0v, lambda done, total: bar.update(task, completed=done))
            if noise:
                task_n = bar.add_task("noise", total=f.size)
                nres = sweep_noise(stage, f, zs, z0v[0], lambda done, total: bar.update(task_n, completed=done))
    else:
        y = sweep_two_port(stage, f, z0v)
        if noise:
            nres = sweep_noise(stage, f, zs, z0v[0])
    if not stream:
        tp = y.to(kind, z0v)
    columns = None
    if noise:
        columns = noise_columns(nres if nres is not None else NoiseBlocks(stage, f, zs))
    figs = frequency_figures(stage, float(f[0]), float(f[-1]), zs, zl) if f.size > 1 and f[-1] > f[0] else None
    fig_json = None if figs is None else figs.as_dict()
    if figs is not None:
        fig_json["avs0"] = figs.avs0
        fig_json["low_terms"] = _terms_json(figs.low_terms)
        fig_json["high_terms"] = _terms_json(figs.high_terms)
    written = None
    if out is not None:
        from ..export import write_by_extension

        record = _record(bias_in, stage)
        comment = "\n".join([f"devmodels sweep: {config.upper()} stage, {f.size} points, "
                             f"{format_si(float(f[0]), 'Hz')} to {format_si(float(f[-1]), 'Hz')}"]
                            + _record_lines(record))

        extra_json = {"figures": jsonable(fig_json), "stage": jsonable(record)}
        if noise:
            extra_json.update(rs=zjson(zs), t0=T0)

        def write():
            if out.suffix.lower() == ".csv":  # write_by_extension does not hand the comment to CSV
                from ..export import write_csv

                return write_csv(tp, out, fmt if fmt is not None else polar, option="out", comment=comment,
                                 columns=columns), "CSV"
            if noise and ts_out:
                from ..noisefile import write_touchstone_noise

                ext = out.suffix.lower()
                version = ts_version or ("2.0" if ext == ".ts" or z0v[0] != z0v[1] else "1.1")
                path = write_touchstone_noise(tp, nres, out, version, fmt if fmt is not None else polar,
                                              comment + f"\nnoise parameters of the stage (NFmin, Gamma_opt, Rn)",
                                              option="out")
                return path, f"Touchstone {version} with noise parameters"
            return write_by_extension(tp, out, polar=fmt if fmt is not None else polar, version=ts_version,
                                      comment=comment, extra_json=extra_json, option="out", columns=columns)

        if progress and stream:
            from rich.console import Console
            from rich.markup import escape
            from rich.progress import Progress

            with Progress(console=Console(stderr=True), transient=True) as bar:
                task = bar.add_task(f"writing {escape(str(out))}", total=f.size)
                tp = sweep_stream(stage, f, kind, z0v, lambda done, total: bar.update(task, completed=done))
                written = write()
        elif progress:
            from rich.console import Console

            from rich.markup import escape

            with Console(stderr=True).status(f"writing {escape(str(out))}"):
                written = write()
        else:
            written = write()
    if plot is not None:
        from ..plotting import plot_report

        plot_report(plot, gains={config: terminate(y, zs, zl, z0v)}, s_ports={config: y.to("s", z0v)},
                    figures=figs, title=f"{config.upper()} stage, Rs = {zstr(zs)}, RL = {zstr(zl)}",
                    noise={config: nres} if noise else None)
    if as_json:
        from ..export import twoport_dict

        obj = twoport_dict(tp, columns)
        obj["figures"] = fig_json
        obj["rs"], obj["rl"] = zjson(zs), zjson(zl)
        if noise:
            obj["t0"] = T0
        emit_json(obj)
    else:
        shown_tp = tp
        if len(tp) > 41:
            from ..twoport import TwoPort

            idx = np.unique(np.linspace(0, len(tp) - 1, 21).round().astype(int))
            shown_tp = (tp.at(idx) if stream else
                        TwoPort(tp.freq[idx], tp.data[idx], tp.kind, tp.z0, tp.config))
        elif stream:
            shown_tp = tp.whole()
        print_twoport(shown_tp, polar)
        if len(shown_tp) < len(tp):
            stdout(f"(showing {len(shown_tp)} of {len(tp)} points; --out FILE or --json for all)\n")
        if noise:
            if nres is not None:
                nf_rows = np.column_stack([nres.nf_db, nres.nfmin_db])
                nf_rows = nf_rows[idx] if len(shown_tp) < len(tp) else nf_rows
            else:
                from ..noise import noise_parameters, stage_noise

                r = noise_parameters(stage_noise(stage, shown_tp.freq), zs=zs)
                nf_rows = np.column_stack([r.nf_db, r.nfmin_db])
            print_table(f"Noise, Rs = {zstr(zs)}", ["freq", "NF at Rs", "NFmin"],
                        [[format_si(float(fq), "Hz"), db_text(a, "undefined"), db_text(b)]
                         for fq, (a, b) in zip(shown_tp.freq, nf_rows)],
                        caption="source at T0 = 290 K")
        if figs is not None:
            _print_figures(figs, zs, zl, stage)
    if written is not None:
        note(f"wrote {written[1]} to {written[0]}")
    if plot is not None:
        note(f"plot written to {plot}")


def _record(bias_in: Inputs, stage) -> dict:
    """What a written file holds: the device, the bias point used, the network, the configuration."""
    import dataclasses

    bias = bias_in.bias_point()
    rec: dict = {"config": stage.config, "device": bias.device, "file": str(bias_in.file) if bias_in.file else None}
    if bias_in.family == "bipolar":
        rec["bias"] = {"ic": bias.ic, "vce": bias.vce, "temp": bias.temp, "tref": bias_in.tref, "beta": bias.beta}
    else:
        rec["bias"] = {"id": bias.id, "vds": bias.vds, "temp": getattr(bias, "temp", None)}
    net = stage.network
    rec["network"] = None if net is None else {k: v for k, v in dataclasses.asdict(net).items() if v is not None}
    if stage.network is None and bias_in.has_network():
        rec["network_note"] = "bare transistor stage (--bare): the network set the bias point only"
    extra = {k: bias_in.get(k) for k in ("rdeg", "rfb") if bias_in.get(k) is not None}
    if extra:
        rec["stage"] = extra
    return rec


def _record_lines(rec: dict) -> list[str]:
    """The record as comment lines (SI values with units)."""
    b = rec["bias"]
    if "ic" in b:
        point = (f"bias point: {rec['device']}, IC = {format_si(b['ic'], 'A')}, VCE = {format_si(b['vce'], 'V')}, "
                 f"T = {b['temp']:.2f} K, beta = {b['beta']:.6g} at T (datasheet values at {b['tref']:.2f} K)")
    else:
        point = f"bias point: {rec['device']}, ID = {format_si(b['id'], 'A')}, VDS = {format_si(b['vds'], 'V')}"
    lines = [point]
    if rec.get("file"):
        lines.append(f"bias file: {rec['file']}")
    net = rec["network"]
    if net is None:
        lines.append("network: none" + (f" ({rec['network_note']})" if rec.get("network_note") else ""))
    else:
        parts = [f"{k} = {v}" if isinstance(v, str) else
                 f"{k} = {format_si(v, 'F' if k.startswith('c_') else 'Ω')}" for k, v in net.items()]
        lines.append("network (AC ground at the supply): " + ", ".join(parts))
    if rec.get("stage"):
        lines.append("stage: " + ", ".join(f"{k} = {format_si(v, 'Ω')}" for k, v in rec["stage"].items()))
    lines.append(f"configuration: {rec['config']}")
    return lines


def _terms_json(terms) -> list[dict]:
    """Time-constant terms as JSON objects (F, ohm, s; the largest share first)."""
    return [{"name": t.name, "capacitance": t.capacitance, "resistance": t.resistance, "tau": t.tau}
            for t in terms]


def _print_figures(figs, zs, zl, stage) -> None:
    from ..units import format_complex

    lo, hi = figs.f_range

    def fq(v):
        return format_si(v, "Hz") if v is not None else f"not reached in {format_si(lo, 'Hz')}–{format_si(hi, 'Hz')}"

    err = figs.miller_error
    dev = stage.model.configs[0].upper()
    has_caps = stage.network is not None and bool(stage.network.capacitors())
    beta_row = (["f_beta", fq(figs.f_beta), f"|h21| of the {dev} device 3 dB below {figs.h21_0:.4g}"]
                if figs.h21_0 is not None else
                ["f_beta", "unbounded", f"|h21| of the {dev} device has no finite value at 0 Hz"])
    if figs.miller is not None:
        miller_text = format_si(figs.miller, "Hz")
    elif stage.config != stage.model.configs[0]:
        miller_text = f"— ({dev} only)"
    elif stage.rfb is not None or (stage.network is not None and stage.network.bias == "collector-feedback"):
        miller_text = "— (not with rfb or collector-feedback bias)"
    else:
        miller_text = "—"
    mid = figs.midband_avs if figs.midband_avs is not None else figs.avs0
    rows = [beta_row,
            ["fT", fq(figs.ft), f"|h21| of the {dev} device = 1"],
            ["fmax", fq(figs.fmax), "Mason's U = 1 (0 dB)"],
            ["mid-band avs", format_complex(complex(mid)) if mid is not None else "—",
             "avs, coupling/bypass capacitors shorted, device capacitances out"],
            ["f_low", fq(figs.f_low) if has_caps else "— (no coupling or bypass capacitor)",
             f"|avs| 3 dB below {abs(mid):.4g}, below mid-band"],
            ["f_low estimate", format_si(figs.f_low_sctc, "Hz") if figs.f_low_sctc else "—",
             "short-circuit time constants: Σ 1/(2π R_k C_k)"],
            ["bandwidth", fq(figs.bandwidth),
             f"|avs| 3 dB below {abs(mid):.4g}, above mid-band (Rs = {zstr(zs)}, RL = {zstr(zl)})"],
            ["bandwidth estimate", format_si(figs.bandwidth_octc, "Hz") if figs.bandwidth_octc else "—",
             "open-circuit time constants: 1/(2π Σ R_k C_k)"],
            ["Miller estimate", miller_text,
             "1/(2π R C_in), C_in = C_pi + C_mu (1 + gain to the collector), R at the base"
             + (f"; {err * 100:+.1f} % off" if err is not None else "")]]
    print_table("Frequency figures", ["figure", "value", "definition"], rows)
    for title, terms, share in (("Low corner: time constants of the coupling and bypass capacitors", figs.low_terms,
                                 "1/τ"),
                                ("High corner: time constants of the device capacitances", figs.high_terms, "τ")):
        if not terms:
            continue
        total = sum((1.0 / t.tau if t.tau else 0.0) if share == "1/τ" else t.tau for t in terms)
        trows = []
        for t in terms:
            part = (1.0 / t.tau if t.tau else 0.0) if share == "1/τ" else t.tau
            pct = f"{100 * part / total:.1f} %" if total and math.isfinite(total) and math.isfinite(part) else "—"
            res = "open" if math.isinf(t.resistance) else format_si(t.resistance, "Ω")
            tau = "unbounded" if math.isinf(t.tau) else format_si(t.tau, "s")
            trows.append([t.name, format_si(t.capacitance, "F"), res, tau, pct])
        print_table(title, ["capacitor", "C", "R seen", "τ = R C", f"share of Σ {share}"], trows,
                    caption="largest share first")

"""Command ``noise``: noise figure and noise parameters of a stage (or of a Touchstone file's noise block).

The library computes (:func:`devmodels.noise.stage_noise`, :func:`devmodels.noise.noise_parameters`,
:func:`devmodels.noisefile.noisy_from_touchstone`); this module reads the options and shows the results.
"""

from __future__ import annotations

import math
from pathlib import Path
from typing import Annotated, Optional

import numpy as np
import typer

from ..exceptions import InputError
from ..units import format_complex, format_si, parse_quantity, shown
from .app import command
from .inputs import MODEL_KEYS, Inputs, bias_options, check_config, parse_freqs, parse_z0
from .options import ConfigOpt, FreqOpt, JsonOpt
from .render import emit_json, jsonable, print_table, zjson, zstr

#: Frequency of the analysis of a bias point without --freq, Hz (as ``gain``).
DEFAULT_FREQ = 1e3
#: Default source impedance, ohm.
DEFAULT_RS = "50"

_NoiseRsOpt = Annotated[str, typer.Option(
    "--rs", help="Source impedance, ohm, at T0 = 290 K: a resistance (50, 2.2k) or complex R+jX (50+j10); "
                 "real part > 0.", metavar="OHM")]
_FlickerOpt = Annotated[Optional[str], typer.Option(
    "--flicker-corner", help="1/f corner of the base current noise (bipolar) or of the channel noise (FET), Hz "
                             "(default 0: no 1/f noise; then every --freq must be above 0 Hz).",
    show_default=False, metavar="HZ", rich_help_panel="Noise")]
_GammaNOpt = Annotated[Optional[str], typer.Option(
    "--gamma-n", help="FET channel thermal-noise coefficient, dimensionless: the drain noise density is "
                      "4 k T gamma_n gm in A^2/Hz (default 2/3, a long-channel device).",
    show_default=False, metavar="NUMBER",
    rich_help_panel="Noise")]
_NoiseTouchstoneOpt = Annotated[Optional[Path], typer.Option(
    "--touchstone", help="A two-port Touchstone file with a noise block instead of a bias point; without "
                         "--freq every noise frequency of the file (a --freq must be one of them).",
    show_default=False, metavar="FILE")]


def _source(rs: str) -> complex:
    """The source impedance in ohm (real part > 0: F is defined for a source that has noise of its own)."""
    from ..schema import IMPEDANCE
    from ..units import parse_impedance

    z = parse_impedance(rs, "rs", bounds=IMPEDANCE)
    if not z.real > 0:
        raise InputError(f"rs: expected a source impedance with real part > 0 ohm (the noise factor is "
                         f"referred to the source's own noise), got {shown(rs)}")
    return z


def _one_z0(text: str) -> float:
    z0 = parse_z0(text)
    if z0[0] != z0[1]:
        raise InputError(f"z0: noise takes one reference resistance (gamma_opt is at the input port), "
                         f"got {shown(text)}")
    return z0[0]


def _nonneg(text: str | None, name: str, unit: str, positive: bool = False) -> float | None:
    if text is None:
        return None
    v = parse_quantity(text, unit, name)
    if not math.isfinite(v) or v < 0 or (positive and v == 0):
        raise InputError(f"{name}: expected a value {'> 0' if positive else '>= 0'}"
                         f"{' ' + unit if unit else ''}, got {shown(text)}")
    return v


def _stage_noise(bias_in: Inputs, config: str | None, freq: np.ndarray, flicker: float | None,
                 gamma_n: float | None):
    """The stage's noisy two-port and its configuration (the model's noise options applied)."""
    from ..noise import stage_noise

    stage = _noise_stage(bias_in, config, freq, flicker, gamma_n)
    return stage_noise(stage, freq), stage.config


def _noise_stage(bias_in: Inputs, config: str | None, freq: np.ndarray, flicker: float | None,
                 gamma_n: float | None):
    """The stage with the model's noise options applied (1/f corner, gamma_n), checked against ``freq``."""
    import dataclasses

    if not bias_in.given():
        raise InputError("bias point: missing; give a bias file, bias options (--ic, --vce, --beta, ...) "
                         "or --touchstone")
    stage = bias_in.stage(check_config(config) if config is not None else None)
    changes = {}
    if flicker is not None:
        changes["flicker_corner"] = flicker
    if gamma_n is not None:
        if bias_in.family == "bipolar":
            raise InputError(f"gamma-n: a FET option, not used for a {bias_in.device}")
        changes["gamma_n"] = gamma_n
    if changes:
        stage = dataclasses.replace(stage, model=dataclasses.replace(stage.model, **changes))
    if np.any(freq <= 0) and np.any(np.asarray(getattr(stage.model, "flicker_corner", 0.0)) > 0):
        raise InputError("freq: 1/f noise (--flicker-corner) has no value at 0 Hz; give frequencies above 0 Hz")
    return stage


def _touchstone_noise(path: Path, freq: np.ndarray | None):
    from ..noise import NoisyTwoPort
    from ..noisefile import noisy_from_touchstone
    from ..touchstone import read_touchstone_file

    data = read_touchstone_file(path)
    if data.noise is None:
        raise InputError(f"touchstone: {shown(path.name)} has no noise block (noise parameters after the "
                         "network data)")
    ntp = noisy_from_touchstone(data)
    if freq is None:
        return ntp
    idx = []
    for f in freq:
        hit = np.flatnonzero(np.isclose(ntp.freq, f, rtol=1e-9, atol=0.0))
        if hit.size == 0:
            raise InputError(f"freq: {format_si(float(f), 'Hz')} is not a noise frequency of {shown(path.name)} "
                             f"({format_si(float(ntp.freq[0]), 'Hz')} to {format_si(float(ntp.freq[-1]), 'Hz')}, "
                             f"{ntp.freq.size} points); noise parameters are not interpolated")
        idx.append(int(hit[0]))
    idx = np.asarray(idx)
    return NoisyTwoPort(ntp.freq[idx], ntp.data[idx], ntp.cor[idx], ntp.form)


_IcSweepOpt = Annotated[Optional[str], typer.Option(
    "--ic-sweep", help="Low-noise design of the bare CE transistor (bipolar only): search the collector "
                       "current from START to STOP (A, log-spaced, N points, default 41) for the least NF at "
                       "--rs (a resistance), and give at each current the source resistance of least NF. "
                       "Replaces the bias point's IC; one --freq (default 1 kHz).",
    show_default=False, metavar="START:STOP[:N]", rich_help_panel="Low-noise design")]
_RsListOpt = Annotated[Optional[str], typer.Option(
    "--rs-list", help="With --ic-sweep: more source resistances, ohm, comma-separated (e.g. 100,1k,10k), each "
                      "with its own NF curve, optimum current and plot line.",
    show_default=False, metavar="OHM,OHM,...", rich_help_panel="Low-noise design")]
_NoisePlotOpt = Annotated[Optional[Path], typer.Option(
    "--plot", help="Draw into FILE.png or FILE.svg: the circles of constant noise figure on the Smith chart "
                   "(at --circles, one colour per frequency), or with --ic-sweep NF against IC, one curve per "
                   "source resistance.", show_default=False, metavar="FILE")]
_CirclesOpt = Annotated[Optional[str], typer.Option(
    "--circles", help="Noise-figure levels of the noise circles, dB, comma-separated (e.g. 1,1.5,2): each "
                      "point of the JSON gets their centre and radius in the source's reflection plane at "
                      "--z0, and --plot draws them (default with --plot: NFmin + 0.5, 1, 2 and 3 dB).",
    show_default=False, metavar="DB,DB,...")]
_NoiseOutOpt = Annotated[Optional[Path], typer.Option(
    "--out", "-o", help="Write the S parameters (at --z0) with their noise-parameter block (NFmin, Gamma_opt, "
                        "Rn) at every --freq to FILE: .s2p (Touchstone 1.1) or .ts (Touchstone 2.0).",
    show_default=False, metavar="FILE")]
#: Most noise-circle levels, and the default levels above the least NFmin, dB.
MAX_CIRCLES, DEFAULT_CIRCLES_DB = 8, (0.5, 1.0, 2.0, 3.0)


def _circle_levels(text: str) -> list[float]:
    """``1,1.5,2`` (dB, an optional ``dB`` after each) -> the levels in dB, each in (0, 100]."""
    levels = []
    for part in text.split(","):
        t = part.strip()
        if t[-2:].lower() == "db":
            t = t[:-2].strip()
        v = parse_quantity(t, "", "circles")
        if not (math.isfinite(v) and 0 < v <= 100):
            raise InputError(f"circles: expected noise figures above 0 dB and at most 100 dB, got {shown(part)}")
        levels.append(v)
    if len(levels) > MAX_CIRCLES:
        raise InputError(f"circles: at most {MAX_CIRCLES} levels, got {len(levels)}")
    return list(dict.fromkeys(levels))


def _circles(res, levels: list[float]) -> dict:
    """Centre and radius (F,) of each level's circle (:func:`devmodels.noise.noise_circle`)."""
    from ..noise import noise_circle

    return {lv: noise_circle(res.fmin, res.rn, res.gamma_opt, 10 ** (lv / 10), res.z0) for lv in levels}


def _check_noise_out(out: Path, f) -> None:
    from ..fileio import check_destination

    ext = out.suffix.lower()
    if ext not in (".s2p", ".ts"):
        raise InputError(f"out: a noise-parameter block is written in Touchstone: expected a file name ending "
                         f"in .s2p (1.1) or .ts (2.0), got {shown(str(out))}")
    if f is not None and f.size > 1 and not np.all(np.diff(f) > 0):
        raise InputError("freq: a Touchstone file lists increasing frequencies; give --freq in increasing order")
    check_destination(out, option="out")
#: Default and largest number of points of --ic-sweep.
IC_SWEEP_POINTS, IC_SWEEP_MAX = 41, 10_001


def _ic_sweep(text: str) -> np.ndarray:
    """``START:STOP[:N]`` -> N log-spaced collector currents in A."""
    from ..units import parse_count

    parts = text.split(":")
    if len(parts) not in (2, 3):
        raise InputError(f"ic-sweep: expected START:STOP[:N] in A (e.g. 10uA:10mA:41), got {shown(text)}")
    lo, hi = (parse_quantity(x, "A", "ic-sweep") for x in parts[:2])
    if not (math.isfinite(lo) and math.isfinite(hi) and 0 < lo < hi):
        raise InputError(f"ic-sweep: expected 0 A < START < STOP, got {shown(text)}")
    n = parse_count(parts[2], "ic-sweep", IC_SWEEP_MAX, minimum=3) if len(parts) == 3 else IC_SWEEP_POINTS
    grid = np.geomspace(lo, hi, n)
    if not np.all(np.diff(grid) > 0):
        raise InputError(f"ic-sweep: START and STOP too close for {n} distinct points, got {shown(text)}")
    return grid


def _resistance(text: str, name: str) -> float:
    z = _source(text) if name == "rs" else None
    if z is None:
        from ..schema import IMPEDANCE
        from ..units import parse_impedance

        z = parse_impedance(text, name, bounds=IMPEDANCE)
    if z.imag != 0 or not (math.isfinite(z.real) and z.real > 0):
        raise InputError(f"{name}: the low-noise design takes a source resistance > 0 ohm, got {shown(text)}")
    return z.real


def _low_noise_design(bias_in: Inputs, config, rs: str, rs_list: str | None, sweep: str, f, fc, plot,
                      as_json: bool) -> None:
    """``noise --ic-sweep``: the library's :func:`devmodels.noise.ce_low_noise` shown as table and JSON."""
    from ..bias import DEFAULT_TEMP
    from ..noise import T0, ce_low_noise, plot_nf_vs_ic

    if not bias_in.given():
        raise InputError("bias point: missing; --ic-sweep takes a bipolar device (--beta, ... or a bias file)")
    if bias_in.family != "bipolar":
        raise InputError(f"ic-sweep: a bipolar design help, not for a {bias_in.device}")
    if config is not None and check_config(config) != "ce":
        raise InputError(f"config: --ic-sweep designs the CE stage, got {shown(config)}")
    if bias_in.has_network():
        raise InputError("ic-sweep: the bias network sets IC; remove the [network] table to sweep IC")
    for key in ("rdeg", "rfb", "rmu", "rcx", "rex", "hfe_table", "l_b", "l_c", "l_e"):
        if bias_in.get(key) not in (None, 0, 0.0):
            raise InputError(f"{key}: not used by --ic-sweep (the bare CE transistor with rb, va, ft, cmu); "
                             "remove it")
    ic = _ic_sweep(sweep)
    r0 = _resistance(rs, "rs")
    extra = [] if rs_list is None else [_resistance(x, "rs-list") for x in rs_list.split(",")]
    rlist = list(dict.fromkeys([r0, *extra]))
    if f is not None and f.size != 1:
        raise InputError("freq: --ic-sweep takes one frequency")
    freq = float(f[0]) if f is not None else DEFAULT_FREQ
    if freq <= 0 and fc:
        raise InputError("freq: 1/f noise (--flicker-corner) has no value at 0 Hz; give a frequency above 0 Hz")
    if plot is not None:
        from ..fileio import check_destination

        if plot.suffix.lower() not in (".png", ".svg"):
            raise InputError(f"plot: expected a file name ending in .png or .svg, got {shown(str(plot))}")
        check_destination(plot, option="plot")
    beta = bias_in.beta_at_temp(bias_in.require("beta", "current gain hFE, e.g. 100"))
    kw = dict(temp=bias_in.get("temp", DEFAULT_TEMP), rb=bias_in.get("rb", 0.0), freq=freq, va=bias_in.get("va"),
              ft=bias_in.get("ft"), cmu=bias_in.get("cmu", 0.0), flicker_corner=fc or 0.0)
    designs = {r: ce_low_noise(ic, beta, r, **kw) for r in rlist}
    d0 = designs[r0]
    if plot is not None:
        labels = {r: f"Rs = {format_si(r, 'Ω')}" for r in rlist}
        plot_nf_vs_ic(plot, ic, {labels[r]: designs[r]["nf_db"] for r in rlist},
                      {labels[r]: (designs[r]["ic_best"], designs[r]["nf_db_at_ic_best"]) for r in rlist},
                      title=f"CE noise figure against IC at {format_si(freq, 'Hz')} (source at T0 = 290 K)")

    def best(d):
        return {"ic_opt": d["ic_best"], "nf_db": d["nf_db_at_ic_best"], "at_edge": bool(d["ic_opt_at_edge"])}

    out = {"config": "ce", "freq": freq, "t0": T0, "rs": r0, **best(d0),
           "points": [{"ic": float(ic[i]), "nf_db": float(d0["nf_db"][i]), "rs_opt": float(d0["rs_opt"][i]),
                       "nf_db_at_rs_opt": float(d0["nf_db_at_rs_opt"][i])} for i in range(ic.size)],
           "sources": [{"rs": r, **best(designs[r]), "nf_db_curve": [float(x) for x in designs[r]["nf_db"]]}
                       for r in rlist]}
    if as_json:
        emit_json(out)
    else:
        rows = [[format_si(p["ic"], "A"), f"{p['nf_db']:.3f} dB", _num(p["rs_opt"], "Ω"),
                 f"{p['nf_db_at_rs_opt']:.3f} dB" if math.isfinite(p["nf_db_at_rs_opt"]) else "—"]
                for p in out["points"]]
        print_table(f"CE noise against IC at {format_si(freq, 'Hz')}, source at T0 = 290 K",
                    ["IC", f"NF at Rs = {format_si(r0, 'Ω')}", "best Rs at this IC", "NF at best Rs"], rows,
                    caption="best Rs: the real source resistance of least NF at that current (|Yopt|^-1).")
        rows = [[format_si(s["rs"], "Ω"), format_si(s["ic_opt"], "A"), f"{s['nf_db']:.3f} dB",
                 "at the end of the sweep: widen it" if s["at_edge"] else "refined between grid points"]
                for s in out["sources"]]
        print_table("Collector current of least noise", ["Rs", "IC opt", "NF at IC opt", "note"], rows)
    if plot is not None:
        from .render import note

        note(f"plot written to {plot}")


def _noise_keys(k) -> bool:
    """The bias-point keys of ``gain``; the noise keys are this command's own options."""
    return MODEL_KEYS(k) and k.name not in ("flicker_corner", "gamma_n")


@command("noise")
@bias_options(_noise_keys, bare=True)
def noise_cmd(bias_in: Inputs, config: ConfigOpt = None, rs: _NoiseRsOpt = DEFAULT_RS, freq: FreqOpt = None,
              z0: Annotated[str, typer.Option(
                  "--z0", help="Reference resistance of gamma_opt, ohm (one value).", metavar="OHM")] = "50",
              touchstone: _NoiseTouchstoneOpt = None, flicker_corner: _FlickerOpt = None,
              gamma_n: _GammaNOpt = None, ic_sweep: _IcSweepOpt = None, rs_list: _RsListOpt = None,
              plot: _NoisePlotOpt = None, circles: _CirclesOpt = None, out: _NoiseOutOpt = None,
              as_json: JsonOpt = False) -> None:
    """Noise figure at --rs and the noise parameters (NFmin, Rn, Yopt, Zopt, gamma_opt) of a stage.

    The source is at T0 = 290 K (the standard temperature of the noise-factor definition).

    The device and its resistors are at their own temperature (--temp).

    Without --freq a bias point is analysed at 1 kHz.

    With --circles or --plot: the circles of constant noise figure on the Smith chart.

    With --out: a Touchstone file of the S parameters with their noise-parameter block.

    With --ic-sweep (bipolar): the collector current of least NF at --rs, and the best source resistance at
    each current.
    """
    from ..noise import T0, noise_parameters

    if ic_sweep is None:
        if rs_list is not None:
            raise InputError("rs-list: used with --ic-sweep only")
    else:
        for name, v in (("circles", circles), ("out", out)):
            if v is not None:
                raise InputError(f"{name}: not used with --ic-sweep")
        if touchstone is not None:
            raise InputError("ic-sweep: a design help for a bias point; not used with --touchstone")
        if gamma_n is not None:
            raise InputError("gamma-n: a FET option, not used with --ic-sweep")
        fc = _nonneg(flicker_corner, "flicker-corner", "Hz")
        if fc is None:
            fc = bias_in.get("flicker_corner")
        _low_noise_design(bias_in, config, rs, rs_list, ic_sweep, parse_freqs(freq), fc, plot, as_json)
        return
    zs = _source(rs)
    zref = _one_z0(z0)
    fc = _nonneg(flicker_corner, "flicker-corner", "Hz")
    gn = _nonneg(gamma_n, "gamma-n", "", positive=True)
    f = parse_freqs(freq)
    levels = _circle_levels(circles) if circles is not None else None
    if plot is not None:
        from ..plotting import _check_path

        _check_path(plot)
    if out is not None:
        _check_noise_out(out, f)
    if touchstone is not None:
        if bias_in.given():
            raise InputError("touchstone: give either a Touchstone file (--touchstone) or a bias point, not both")
        for name, v in (("flicker-corner", fc), ("gamma-n", gn)):
            if v is not None:
                raise InputError(f"{name}: a device-model option; not used with --touchstone")
        ntp = _touchstone_noise(touchstone, f)
        cfg = check_config(config) if config is not None else "ce"
        label = f"Two-port {touchstone.name}"
    else:
        if fc is None:  # a bias file may hold them too (when the schema knows the keys)
            fc = bias_in.get("flicker_corner")
        if gn is None:
            gn = bias_in.get("gamma_n")
        ntp, cfg = _stage_noise(bias_in, config, f if f is not None else np.array([DEFAULT_FREQ]), fc, gn)
        label = f"{cfg.upper()} stage"
    res = noise_parameters(ntp, zs=zs, z0=zref)
    pts = res.as_points()
    if plot is not None and levels is None:
        least = float(np.min(res.nfmin_db))
        levels = [round(least + d, 2) for d in DEFAULT_CIRCLES_DB]
    drawn = None
    if levels is not None:
        drawn = _circles(res, levels)
        for k, p in enumerate(pts):  # NaN (no circle: the level is below NFmin) -> null
            p["circles"] = [{"nf_db": lv, "centre": jsonable(complex(c[k])), "radius": jsonable(float(r[k]))}
                            for lv, (c, r) in drawn.items()]
    written = None
    if out is not None:
        from ..noisefile import write_touchstone_noise

        version = "2.0" if out.suffix.lower() == ".ts" else "1.1"
        written = write_touchstone_noise(ntp.two_port(zref), res, out, version,
                                         comment=f"devmodels noise: {label}, S at z0 = {zref:g} ohm, noise "
                                                 f"parameters (source at T0 = 290 K)", option="out")
    if plot is not None:
        from ..plotting import plot_noise_circles

        gs = (zs - zref) / (zs + zref)
        plot_noise_circles(plot, res.freq, res.gamma_opt, drawn, gs, z0=zref,
                           title=f"Noise figure circles of the {label}, z0 = {zref:g} Ω; x: Rs = {zstr(zs)}")
    if as_json:
        emit_json({"config": cfg, "rs": zjson(zs), "z0": zref, "t0": T0, "points": pts})
    else:
        _print_noise(pts, label, zs, zref)
        if drawn is not None:
            _print_circles(pts, zref)
    from .render import note

    if written is not None:
        note(f"wrote Touchstone {version} with noise parameters to {out}")
    if plot is not None:
        note(f"plot written to {plot}")


def _print_circles(pts: list[dict], z0: float) -> None:
    rows = []
    for p in pts:
        for c in p["circles"]:
            rows.append([format_si(p["freq"], "Hz") if p["freq"] is not None else "(any)", f"{c['nf_db']:g} dB",
                         _cx(c["centre"], "", "below NFmin"),
                         f"{c['radius']:.4g}" if c["radius"] is not None else "—"])
    print_table(f"Noise circles (source reflection plane, z0 = {z0:g} Ω)", ["freq", "NF", "centre", "radius"],
                rows, caption="N = (F - Fmin) |1 + Γopt|^2 Z0 / (4 Rn); centre Γopt/(1 + N), "
                              "radius sqrt(N (N + 1 - |Γopt|^2))/(1 + N).")


def _num(v, unit: str) -> str:
    return format_si(v, unit) if v is not None else "—"


def _cx(p, unit: str, missing: str) -> str:
    if p is None or p[0] is None or p[1] is None:
        return missing
    return format_complex(complex(p[0], p[1]), unit, 4)


def _print_noise(pts: list[dict], label: str, zs: complex, z0: float) -> None:
    fcol = [format_si(p["freq"], "Hz") if p["freq"] is not None else "(any)" for p in pts]
    rows = [[f, f"{p['nf_db']:.3f} dB" if p["nf_db"] is not None else "—", _num(p["te"], "K"),
             f"{p['nfmin_db']:.3f} dB" if p["nfmin_db"] is not None else "—", _num(p["rn"], "Ω"),
             _cx(p["zopt"], "Ω", "short" if p["yopt"][0] is None else "open"),
             _cx(p["gamma_opt"], "", "—")] for f, p in zip(fcol, pts)]
    print_table(f"Noise of the {label} from Rs = {zstr(zs)} at T0 = 290 K",
                ["freq", "NF at Rs", "Te at Rs", "NFmin", "Rn", "Zopt", f"Γopt (z0 = {z0:g} Ω)"], rows,
                caption="F = Fmin + (Rn/Gs)|Ys - Yopt|^2; Te = T0 (F - 1). Zopt 'short': no input noise voltage "
                        "(Rn = 0), 'open': Yopt = 0.")
    rows = [[f, _num(p["en"], "V/√Hz"), _num(p["in"], "A/√Hz"), _cx(p["correlation"], "", "—")]
            for f, p in zip(fcol, pts)]
    print_table("Equivalent input noise sources", ["freq", "en", "in", "correlation of en, in"], rows,
                caption="en, in: densities of the input-referred noise voltage and current (chain form).")

"""Command ``extract``: hybrid-pi (or FET) elements fitted to a measured two-port Touchstone file.

The library reads the file and fits (:func:`devmodels.extract.extract`), checks the fitted gm
against a collector current (:func:`devmodels.extract.bias_consistency`), writes the bias file's
text (:func:`devmodels.extract.bias_toml`) and draws the fit (:func:`devmodels.extract.plot_fit`);
this module reads the options, checks the destinations before the fit, writes the file through
the atomic writer and shows the results.

Several files (one ``--ic`` each, in the same order) are fitted one by one, and tau_F and C_je
are fitted to their fT against IC (:func:`devmodels.extract.transit_time`).
"""

from __future__ import annotations

import math
from pathlib import Path
from typing import Annotated, Optional

import typer

from ..exceptions import InputError
from ..units import Bounds, check_bounds, format_si, parse_quantity, shown, temperature_warning
from .app import command
from .inputs import check_config
from .options import JsonOpt, PlotOpt
from .render import emit_json, note, print_table, warn

#: Configuration of the data without --config.
DEFAULT_CONFIG = "ce"
#: Unit symbol of each element in tables.
_SYMBOL = {"S": "S", "Ohm": "Ω", "F": "F", "H": "H"}

_FileArg = Annotated[list[Path], typer.Argument(
    help="Two-port Touchstone files (.s2p, .ts) of the device, measured in --config; several files at "
         "several currents (one --ic each, in order) also fit tau_F and C_je.", show_default=False,
    metavar="FILE...")]
_ConfigOpt = Annotated[Optional[str], typer.Option(
    "--config", "-c", help="Configuration the device was measured in: ce, cb, cc (hybrid-pi) or cs, cg, cd (FET) "
                            "(default: ce).", metavar="CONFIG", show_default=False)]
_ParasiticsOpt = Annotated[Optional[str], typer.Option(
    "--parasitics", help="Optional elements to fit as well, comma separated: rex, rcx, c_pad_in, c_pad_out, "
                         "lead inductances l_b, l_c, l_e (a FET: rsx, rdx, c_pad_in, c_pad_out, l_g, l_d, "
                         "l_s) (default: none).",
    show_default=False, metavar="NAME[,NAME]")]
_FixOpt = Annotated[Optional[list[str]], typer.Option(
    "--fix", help="Hold an element at a value instead of fitting it, NAME=VALUE with its unit (gm=40mS, "
                  "rb=50, c_mu=1.2pF); repeat for more.", show_default=False, metavar="NAME=VALUE")]
_IcOpt = Annotated[Optional[list[str]], typer.Option(
    "--ic", help="Collector current of the measurement, A: compares the fitted gm with IC/VT (ideality, "
                 "excess emitter resistance); with several files, one --ic per file, in order.",
    show_default=False, metavar="AMPERE")]
_TransitOpt = Annotated[bool, typer.Option(
    "--transit-time", help="Fit tau_F and C_je to fT against IC across the files (needs files at two or more "
                           "currents; implied by several files).")]
_TempOpt = Annotated[Optional[str], typer.Option(
    "--temp", help="Temperature of the measurement, K (or 27C) (default 300 K): VT of the --ic check and "
                   "of the bias file.", show_default=False, metavar="KELVIN")]
_VceOpt = Annotated[Optional[str], typer.Option(
    "--vce", help="Collector-emitter voltage of the measurement, V (required with --out: the data do not "
                  "hold it).", show_default=False, metavar="VOLT")]
_DeviceOpt = Annotated[str, typer.Option(
    "--device", help="Polarity written to the bias file: npn or pnp.", metavar="npn|pnp")]
_OutOpt = Annotated[Optional[Path], typer.Option(
    "--out", "-o", help="Write the fitted model as a bias file FILE.toml (readable by model, gain, noise, ...); "
                        "needs --vce.", show_default=False, metavar="FILE.toml")]


def _family_elements(config: str) -> tuple[tuple[str, ...], tuple[str, ...]]:
    """The base elements and the optional parasitics the library fits for ``config``."""
    from ..constants import FET_CONFIGS
    from ..extract import BASE_ELEMENTS, FET_BASE_ELEMENTS, FET_PARASITICS, PARASITICS

    return (FET_BASE_ELEMENTS, FET_PARASITICS) if config in FET_CONFIGS else (BASE_ELEMENTS, PARASITICS)


def _unit(name: str) -> str:
    """Unit key of an element: gm in S, capacitances in F, lead inductances in H, resistances in ohm."""
    if name == "gm":
        return "S"
    if name.startswith("l_"):
        return "H"
    return "F" if name.startswith("c") else "Ohm"


def _parasitics(text: str | None, config: str) -> tuple[str, ...]:
    if text is None:
        return ()
    _, allowed = _family_elements(config)
    out: list[str] = []
    for part in text.split(","):
        name = part.strip().lower()
        if not name:
            raise InputError(f"parasitics: expected names separated by commas (some of {', '.join(allowed)}), "
                             f"got {shown(text)}")
        if name not in allowed:
            raise InputError(f"parasitics: unknown element {shown(part.strip())} for a {config} fit; expected "
                             f"some of {', '.join(allowed)}")
        if name not in out:
            out.append(name)
    return tuple(out)


def _fixed(values: list[str] | None, config: str, parasitics: tuple[str, ...]) -> dict[str, float]:
    """``NAME=VALUE`` items as element values in SI units (within the fit's bounds)."""
    from ..extract import BOUNDS

    base, allowed = _family_elements(config)
    names = base + parasitics
    out: dict[str, float] = {}
    for item in values or ():
        name, sep, value = str(item).partition("=")
        name = name.strip().lower()
        if not sep or not name or not value.strip():
            raise InputError(f"fix: expected NAME=VALUE (e.g. gm=40mS), got {shown(item)}")
        if name not in names:
            hint = "; add it to --parasitics to hold it" if name in allowed else ""
            raise InputError(f"fix: {shown(name)} is not an element of the {config} fit; expected one of "
                             f"{', '.join(names)}{hint}")
        if name in out:
            raise InputError(f"fix: {name} is given twice")
        unit = _unit(name)
        v = parse_quantity(value, unit, f"fix {name}")
        if not (math.isfinite(v) and v > 0):
            raise InputError(f"fix {name}: expected a value > 0 {_SYMBOL[unit]}, got {shown(value.strip())}")
        lo, hi = BOUNDS[name]
        out[name] = check_bounds(f"fix {name}", v, unit, Bounds(lo, hi, zero=False), value.strip())
    if len(out) == len(names):
        raise InputError("fix: every element is held; leave at least one to fit")
    return out


def _key(name: str, text: str | None):
    """An option parsed by the bias schema's key of the same name (its unit and range)."""
    if text is None:
        return None
    from ..schema import keys

    return keys()[name].parse(text)


def _nonzero(name: str, value: float | None, text: str | None, what: str) -> float | None:
    if value is None:
        return None
    if not value:
        raise InputError(f"{name}: expected {what} other than 0, got {shown(text)}")
    return abs(value)


@command("extract")
def extract_cmd(file: _FileArg, config: _ConfigOpt = None, parasitics: _ParasiticsOpt = None, fix: _FixOpt = None,
                ic: _IcOpt = None, temp: _TempOpt = None, vce: _VceOpt = None, device: _DeviceOpt = "npn",
                out: _OutOpt = None, plot: PlotOpt = None, transit: _TransitOpt = False,
                as_json: JsonOpt = False) -> None:
    """Fit the small-signal model to a measured two-port: each element with its standard uncertainty.

    ce, cb, cc data give the hybrid-pi (gm, r_pi, c_pi, c_mu, rb, ro); cs, cg, cd data a FET (gm, cgs, cgd, ro, rg).

    The fit starts from direct estimates at the ends of the band and weighs every S parameter by its own magnitude.

    Warnings name the elements the data do not determine.  Several files at several collector currents
    (one --ic each) also give tau_F and C_je from fT against IC.
    """
    from ..constants import FET_CONFIGS

    files = list(file)
    cfg = check_config(config) if config is not None else DEFAULT_CONFIG
    fet = cfg in FET_CONFIGS
    extra = _parasitics(parasitics, cfg)
    fixed = _fixed(fix, cfg, extra)
    currents = [_nonzero("ic", _key("ic", text), text, "a collector current") for text in ic or ()]
    v_ce = _nonzero("vce", _key("vce", vce), vce, "a collector-emitter voltage")
    kelvin = _key("temp", temp) if temp is not None else 300.0
    dev = _key("device", device)
    if dev not in ("npn", "pnp"):
        raise InputError(f"device: the bias file of a hybrid-pi fit takes npn or pnp, got {dev}")
    if fet and currents:
        raise InputError(f"ic: the gm check against IC/VT is for a bipolar fit (ce, cb, cc), not {cfg}")
    several = len(files) > 1 or transit
    if several:
        if fet:
            raise InputError(f"config: the transit-time fit of several files is for a bipolar device (ce, cb, cc), "
                             f"not {cfg}")
        if len(files) < 2:
            raise InputError("transit-time: the fit of tau_F and C_je needs files at two or more different "
                             "collector currents, got 1 file")
        if len(currents) != len(files):
            raise InputError(f"ic: expected one collector current per file, in the same order ({len(files)} files), "
                             f"got {len(currents)}")
        for name, given in (("out", out), ("plot", plot)):
            if given is not None:
                raise InputError(f"{name}: written for one file; fit the files one at a time for --{name}")
    elif len(currents) > 1:
        raise InputError(f"ic: expected one collector current for one file, got {len(currents)}")
    if out is not None:
        from ..fileio import check_destination

        if fet:
            raise InputError(f"out: a bias file is written for a bipolar fit (ce, cb, cc), not {cfg} (gm alone "
                             "does not give ID and Vov)")
        if out.suffix.lower() != ".toml":
            raise InputError(f"out: expected a bias file name ending in .toml, got {shown(str(out))}")
        if v_ce is None:
            raise InputError("vce: missing; --out writes a bias file, which needs the collector-emitter voltage "
                             "of the measurement (e.g. --vce 5V)")
        check_destination(out, option="out")
    elif v_ce is not None:
        warn("vce: used only for the bias file (--out); ignored")
    if plot is not None:
        from ..fileio import check_destination

        if plot.suffix.lower() not in (".png", ".svg"):
            raise InputError(f"plot: expected a file name ending in .png or .svg, got {shown(str(plot))}")
        check_destination(plot, option="plot")
    if temp is not None:
        tw = temperature_warning("temp", temp, kelvin)
        if tw:
            warn(tw)

    fits = []
    messages: list[str] = []
    for path in files:
        result, notes = _fit(path, cfg, extra, fixed)
        fits.append(result)
        for m in notes:
            m = f"{path.name}: {m}" if several else m
            if m not in messages:
                messages.append(m)
    checks = [None] * len(fits)
    if currents:
        from ..extract import bias_consistency

        checks = [bias_consistency(r.elements["gm"], i_c, kelvin) for r, i_c in zip(fits, currents)]
    transit_fit = None
    if several:
        from ..extract import transit_time

        transit_fit = transit_time(fits, currents, kelvin)
    if out is not None:
        from ..extract import bias_toml
        from ..fileio import atomic_write_text

        atomic_write_text(out, bias_toml(fits[0], v_ce, temp=kelvin, device=dev), option="out")
    if plot is not None:
        from ..extract import plot_fit

        plot_fit(fits[0], plot, option="plot")
    for m in messages:
        warn(m)
    if as_json:
        objs = []
        for path, r, check, i_c in zip(files, fits, checks, currents or [None] * len(fits)):
            obj = r.as_dict()
            if check is not None:
                obj["consistency"] = dict(check, ic=i_c, temp=kelvin)
            if several:
                obj = dict(obj, file=str(path), ic=i_c, ft=r.ft)
            objs.append(obj)
        emit_json({"files": objs, "transit_time": transit_fit} if several else objs[0])
    else:
        for path, r, check, i_c in zip(files, fits, checks, currents or [None] * len(fits)):
            _print_result(r, path, check, i_c, kelvin)
        if transit_fit is not None:
            _print_transit(transit_fit)
    if out is not None:
        note(f"bias file written to {out}")
    if plot is not None:
        note(f"plot written to {plot}")


def _fit(file: Path, config: str, parasitics: tuple[str, ...], fixed: dict):
    """The library's fit; its warnings (and the result's) as messages, never a Python warnings display."""
    import warnings

    from ..extract import ExtractionWarning, extract

    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        warnings.simplefilter("ignore", RuntimeWarning)      # results that do not exist are shown as such
        warnings.simplefilter("ignore", DeprecationWarning)  # third-party notices are not the user's business
        warnings.simplefilter("ignore", PendingDeprecationWarning)
        warnings.simplefilter("ignore", FutureWarning)
        result = extract(file, config, parasitics=parasitics, fixed=fixed)
    messages: list[str] = []
    for w in caught:
        if issubclass(w.category, (ExtractionWarning, UserWarning)):
            text = " ".join(str(w.message).split())
            if text not in messages:
                messages.append(text)
    for text in result.warnings:
        text = " ".join(str(text).split())
        if text not in messages:
            messages.append(text)
    return result, messages


def _print_result(result, file: Path, check: dict | None, ic: float | None, temp: float) -> None:
    rows = []
    for name, value in result.elements.items():
        sym = _SYMBOL[_unit(name)]
        u = result.uncertainty.get(name)
        if name in result.fixed:
            unc = "held"
        elif u is None or not math.isfinite(u):
            unc = "not determined"
        else:
            unc = format_si(u, sym)
        rows.append([name, format_si(value, sym), unc])
    span = f"{format_si(float(result.freq[0]), 'Hz')} to {format_si(float(result.freq[-1]), 'Hz')}"
    print_table(f"{result.config.upper()} model fitted to {file.name} ({result.freq.size} points, {span})",
                ["element", "value", "standard uncertainty"], rows,
                caption=f"rms error {result.rms_error:.3g} (relative, all points)"
                        + ("" if result.plausible else "; implausible for a transistor"))
    if check is not None:
        rows = [["gm fitted", format_si(result.elements["gm"], "S")],
                ["IC/VT", format_si(check["gm_ideal"], "S")],
                ["gm / (IC/VT)", f"{check['ratio']:.4g}"],
                ["ideality n", f"{check['ideality']:.4g}"],
                ["excess emitter resistance", format_si(check["re_excess"], "Ω")]]
        print_table(f"gm against IC = {format_si(ic, 'A')} at T = {temp:.2f} K", ["quantity", "value"], rows,
                    caption="n = (IC/VT)/gm; excess emitter resistance 1/gm - VT/IC (negative: gm above IC/VT, "
                            "which no series resistance explains)")


def _print_transit(t: dict) -> None:
    def unc(v, sym):
        return "—" if v is None else format_si(v, sym)

    rows = [["tau_F", format_si(t["tau_f"], "s"), unc(t["tau_f_unc"], "s")],
            ["C_je + C_mu", format_si(t["c_total"], "F"), unc(t["c_total_unc"], "F")],
            ["C_mu (mean fitted)", format_si(t["c_mu"], "F"), "—"],
            ["C_je", format_si(t["c_je"], "F"), unc(t["c_je_unc"], "F")]]
    rows += [[f"fT at IC = {format_si(i, 'A')}", format_si(f, "Hz"), "—"] for i, f in zip(t["ic"], t["ft"])]
    print_table(f"Transit time from fT against IC ({t['points']} files, T = {t['temp']:.2f} K)",
                ["quantity", "value", "standard uncertainty"], rows,
                caption=f"1/(2 pi fT) = tau_F + (C_je + C_mu) VT/IC; largest relative misfit {t['rel_residual']:.3g}"
                        + ("; two files: no residual, no uncertainty" if t["points"] == 2 else ""))

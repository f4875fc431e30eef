"""Command ``design``: resistor values of a bias network for a target collector current.

The library designs (:func:`devmodels.design.design_bias`) and writes the bias file's text
(:func:`devmodels.design.design_toml`); this module reads the options, writes the file through
the atomic writer and shows the result.
"""

from __future__ import annotations

from pathlib import Path
from typing import Annotated, Optional

import typer

from ..exceptions import InputError
from ..units import format_si, parse_quantity, shown
from .app import command
from .inputs import Inputs, bias_options
from .options import JsonOpt
from .render import emit_json, note, note_later, print_table, warn

#: Keys of the input layer this command takes (the limits of ``spread`` and the DC values of a bipolar device).
_DESIGN_KEYS = frozenset({"device", "beta", "beta_min", "beta_max", "temp", "temp_min", "temp_max", "tol", "vbe",
                          "vbe_tc", "beta_tc", "vce_sat", "pmax", "vceo"})


def _design_keys(k) -> bool:
    return k.id in _DESIGN_KEYS


_FILE_HELP = ("TOML file with the limits and device values as top-level keys (beta_min, beta_max, temp_min, "
              "temp_max, tol, vbe, ...) and optionally a \\[network] table (type, vcc); options override it.")


def _quantity(text: str | None, unit: str, name: str) -> float | None:
    return None if text is None else parse_quantity(text, unit, name)


@command("design")
@bias_options(_design_keys, file_help=_FILE_HELP)
def design_cmd(
    bias_in: Inputs,
    network: Annotated[Optional[str], typer.Option(
        "--network", help="Bias network: divider, fixed or collector-feedback.", show_default=False,
        metavar="divider|fixed|collector-feedback")] = None,
    vcc: Annotated[Optional[str], typer.Option(
        "--vcc", help="Supply voltage, V (a pnp may take it negative).", show_default=False, metavar="VOLT")] = None,
    ic: Annotated[Optional[str], typer.Option(
        "--ic", help="Target collector current, A (e.g. 1mA).", show_default=False, metavar="AMPERE")] = None,
    vce: Annotated[Optional[str], typer.Option(
        "--vce", help="Target collector-emitter voltage, V (default: halfway between the emitter voltage, "
                      "a tenth of the supply, and the supply).", show_default=False, metavar="VOLT")] = None,
    series: Annotated[str, typer.Option(
        "--series", help="Preferred-value series of the resistors (IEC 60063): E12, E24, E48 or E96.",
        metavar="E12|E24|E48|E96")] = "E24",
    out: Annotated[Optional[Path], typer.Option(
        "--out", "-o", help="Write the design as a bias file FILE.toml (readable by bias, model, gain, ...).",
        show_default=False, metavar="FILE.toml")] = None,
    as_json: JsonOpt = False,
) -> None:
    """Choose preferred resistor values for a target IC and check the point over the datasheet limits.

    The stability rule comes first: RE (and R2 of a divider) a neighbour in the series of its ideal
    value (VE about a tenth of VCC) and a divider current of at least ten times the base current at
    the lowest beta; then the nominal IC closest to the target. Where the rule must give way to
    reach IC within half a series step, a line on stderr says how.

    Worst case: every corner of beta (at 300 K), temperature and each resistor (+-tol %).
    --pmax and --vceo: a warning where the design exceeds them; written into the --out file.

    --beta is the nominal gain at 300 K (default: the middle of the limits).
    """
    from ..design import design_bias, design_toml
    from ..eseries import check_series

    series = check_series(series)
    if out is not None:
        from ..fileio import check_destination

        if out.suffix.lower() != ".toml":
            raise InputError(f"out: expected a bias file name ending in .toml, got {shown(str(out))}")
        check_destination(out, option="out")
    kind = network if network is not None else bias_in.get("network.type")
    if kind is None:
        raise InputError("network: missing; give --network divider, fixed or collector-feedback")
    kind = kind.strip().lower()
    v_cc = _quantity(vcc, "V", "vcc")
    if v_cc is None:
        v_cc = bias_in.get("network.vcc")
    if v_cc is None:
        raise InputError("vcc: missing; give --vcc (supply voltage in V)")
    i_c = _quantity(ic, "A", "ic")
    if i_c is None:
        i_c = bias_in.get("ic")
    if i_c is None:
        raise InputError("ic: missing; give --ic (target collector current in A, e.g. 1mA)")
    v_ce = _quantity(vce, "V", "vce")
    device = bias_in.device
    if device not in ("npn", "pnp"):
        raise InputError(f"device: a bias network takes npn or pnp, got {device}")
    if device == "pnp":
        v_cc, i_c = abs(v_cc), abs(i_c)
        v_ce = None if v_ce is None else abs(v_ce)
    beta = bias_in.get("beta")
    bmin, bmax = bias_in.get("beta_min"), bias_in.get("beta_max")
    if (bmin is None) != (bmax is None):
        missing = "beta_max" if bmax is None else "beta_min"
        raise InputError(f"{missing}: missing; give both --beta-min and --beta-max (or neither, with --beta)")
    if bmin is None:
        if beta is None:
            raise InputError("beta_min: missing; give --beta-min and --beta-max (datasheet hFE limits at 300 K), "
                             "or --beta for one fixed gain")
        bmin = bmax = beta
    kwargs = {name: bias_in.get(name) for name in ("temp", "temp_min", "temp_max", "vbe", "vbe_tc", "beta_tc",
                                                   "vce_sat")}
    kwargs = {k: v for k, v in kwargs.items() if v is not None}
    pmax, vceo = bias_in.ratings()
    design = design_bias(kind, v_cc, i_c, beta_min=bmin, beta_max=bmax, beta=beta, series=series, vce=v_ce,
                         tol=bias_in.get("tol", 0.0), pmax=pmax, vceo=vceo, **kwargs)
    for w in design.warnings:
        warn(w)
    for n in design.notes:
        (note_later if design.rule == "r2 beyond neighbours" else warn)(n)
    if out is not None:
        from ..fileio import atomic_write_text

        atomic_write_text(out, design_toml(design, device=device), option="out")
    if as_json:
        emit_json(design.as_dict())
    else:
        _print_design(design, device)
    if out is not None:
        note(f"bias file written to {out}")


def _print_design(d, device: str) -> None:
    n = d.network
    rows = [[name.upper(), format_si(v, "Ω"), format_si(d.ideal[name], "Ω")] for name, v in n.resistors.items()]
    print_table(f"{n.kind} bias network, {device}, VCC = {format_si(n.vcc, 'V')}, {d.series} values",
                ["resistor", "chosen", "ideal"], rows,
                caption="ideal: the value of the hand-design rules (VE a tenth of VCC; divider current ten times "
                        "the base current at the lowest beta), before rounding to the series")
    lim = d.limits
    worst = (f"beta {lim['beta_min']:g}..{lim['beta_max']:g}, {lim['temp_min']:.2f}..{lim['temp_max']:.2f} K, "
             f"resistors ±{lim['tol'] * 100:g} %")
    rows = [["IC", format_si(d.target_ic, "A"), format_si(d.ic, "A"),
             f"{format_si(d.worst['ic']['min'], 'A')} .. {format_si(d.worst['ic']['max'], 'A')}"],
            ["VCE", format_si(d.target_vce, "V"), format_si(d.vce, "V"),
             f"{format_si(d.worst['vce']['min'], 'V')} .. {format_si(d.worst['vce']['max'], 'V')}"]]
    print_table(f"Operating point at beta = {d.beta:.4g}, VBE(on) = {format_si(d.vbe, 'V')}, T = {d.temp:.2f} K",
                ["quantity", "target", "chosen parts", "worst case"], rows,
                caption=f"worst case over every corner of {worst}" + (
                    "; a pnp: magnitudes" if device == "pnp" else ""))
    s = d.settings
    rows = [["VE / VCC", f"about {s['ve_fraction']:g}", f"{d.ve / n.vcc:.3g} (VE = {format_si(d.ve, 'V')})"]]
    if d.divider_ratio is not None:
        rows.append(["I(R2) / IB at lowest beta", f">= {s['divider_factor']:g}",
                     f"{d.divider_ratio:.3g} (beta {d.beta_low:.4g})"])
    verdict = {"met": "met", "r2 beyond neighbours": "met, with R2 beyond the neighbours of its ideal value",
               "re beyond neighbours": "relaxed to reach IC (see the line on stderr)",
               "relaxed": "not met (see the line on stderr)"}[d.rule]
    print_table("Stability rule at the nominal point of the chosen parts", ["quantity", "rule", "chosen parts"],
                rows, caption=f"rule {verdict}; then the nominal IC closest to the target")

"""Commands of the core: model, params, reconfigure, crosscheck."""

from __future__ import annotations

from typing import Annotated, Optional

import numpy as np
import typer

from ..exceptions import InputError
from .app import app
from .common import (FreqOpt, JsonOpt, ParamsOpt, TouchstoneOpt, Z0Opt, BiasInputs, bias_options, emit_json,
                     parse_freqs, parse_given, parse_z0, print_table, print_twoport, two_port_input,
                     twoport_json)

ConfigOpt = Annotated[str, typer.Option("--config", "-c", help="Configuration: ce, cb, cc (cs, cg, cd for FETs).")]
KindOpt = Annotated[str, typer.Option("--kind", "-k", help="Parameter kind: y, z, h, g, abcd, s.")]
PolarOpt = Annotated[bool, typer.Option("--polar", help="Show complex values as magnitude and angle.")]

#: Frequency of a single-point analysis when none is given, Hz.
DEFAULT_FREQ = 1e3


def _check_kind(kind: str) -> str:
    from ..constants import KINDS

    k = kind.lower()
    if k not in KINDS:
        raise InputError(f"kind: unknown parameter kind {kind!r}, expected one of {', '.join(KINDS)}")
    return k


@app.command("model")
@bias_options
def model_cmd(bias_in: BiasInputs, as_json: JsonOpt = False) -> None:
    """Small-signal element values (hybrid-pi and T model) at a bias point."""
    from ..units import format_si
    from .fetchain import fet_bias_or_none, print_fet_model

    fet = fet_bias_or_none(bias_in)  # None for a bipolar device
    if fet is not None:
        print_fet_model(fet, as_json)
        return
    bias = bias_in.bipolar()
    from ..models import HybridPi

    m = HybridPi.from_bias(bias)
    ro = None if np.isinf(m.ro) else m.ro
    out = {
        "gm": m.gm, "r_pi": m.r_pi, "ro": ro, "c_pi": m.c_pi, "c_mu": m.c_mu, "rb": m.rb,
        "re": m.re, "alpha": m.alpha, "beta": bias.beta, "vt": m.vt, "f_beta": m.f_beta, "ft": m.ft,
        "r_mu": None if np.isinf(m.r_mu) else m.r_mu, "rcx": m.rcx, "rex": m.rex,
        "device": bias.device, "ic": bias.ic, "vce": bias.vce, "temp": bias.temp, "power": bias.power,
    }
    if as_json:
        emit_json(out)
        return
    rows = [
        ["gm", format_si(m.gm, "S"), "IC / VT"],
        ["r_pi", format_si(m.r_pi, "Ω"), "beta / gm"],
        ["ro", format_si(ro, "Ω") if ro else "open", "VA / IC"],
        ["C_pi", format_si(m.c_pi, "F"), "gm / (2 pi fT) - C_mu"],
        ["C_mu", format_si(m.c_mu, "F"), "given"],
        ["rb", format_si(m.rb, "Ω"), "given"],
        ["f_beta", format_si(m.f_beta, "Hz") if m.f_beta else "unbounded", "1 / (2 pi r_pi (C_pi + C_mu))"],
        ["fT", format_si(m.ft, "Hz") if m.ft else "unbounded", "gm / (2 pi (C_pi + C_mu))"],
        ["re", format_si(m.re, "Ω"), "alpha / gm  (T model)"],
        ["alpha", f"{m.alpha:.6g}", "beta / (beta + 1)  (T model)"],
        ["beta", f"{bias.beta:.6g}", "given (hfe)"],
        ["VT", format_si(m.vt, "V"), "k T / q"],
    ]
    if not np.isinf(m.r_mu):
        rows.append(["r_mu", format_si(m.r_mu, "Ω"), "given"])
    if m.rcx or m.rex:
        rows.append(["rcx / rex", f"{format_si(m.rcx, 'Ω')} / {format_si(m.rex, 'Ω')}", "given"])
    title = (f"Small-signal model: {bias.device}, IC = {format_si(bias.ic, 'A')}, "
             f"VCE = {format_si(bias.vce, 'V')}, T = {bias.temp:.2f} K, P = {format_si(bias.power, 'W')}")
    print_table(title, ["element", "value", "relation"], rows)


@app.command("params")
@bias_options
def params_cmd(bias_in: BiasInputs, config: ConfigOpt = "ce", kind: KindOpt = "y",
               freq: FreqOpt = None, z0: Z0Opt = "50", given: ParamsOpt = None,
               touchstone: TouchstoneOpt = None, polar: PolarOpt = False, as_json: JsonOpt = False) -> None:
    """Two-port parameters of a stage (or of a given two-port) in any kind, at each --freq (default 1 kHz)."""
    kind = _check_kind(kind)
    z0v = parse_z0(z0)
    tp = two_port_input(bias_in, given, touchstone, config, parse_freqs(freq), z0v, DEFAULT_FREQ).to(kind, z0v)
    if as_json:
        emit_json(twoport_json(tp))
    else:
        print_twoport(tp, polar)


@app.command("reconfigure")
def reconfigure_cmd(
    given: Annotated[str, typer.Option("--params", help="The device as KIND=v11,v12,v21,v22 in the --from configuration.")],
    from_: Annotated[str, typer.Option("--from", help="Configuration the parameters are given in (ce, cb, cc, cs, cg, cd).")],
    to: Annotated[str, typer.Option("--to", help="Configuration wanted.")],
    kind: Annotated[Optional[str], typer.Option("--kind", "-k", help="Kind of the result (default: the given kind).",
                                                show_default=False)] = None,
    freq: FreqOpt = None, z0: Z0Opt = "50", polar: PolarOpt = False, as_json: JsonOpt = False,
) -> None:
    """A three-terminal device given in one configuration, returned in another."""
    from ..configs import check_config, reconfigure

    z0v = parse_z0(z0)
    src = check_config(from_.lower())
    dst = check_config(to.lower())
    tp = parse_given(given, z0v, parse_freqs(freq), src)
    out = reconfigure(tp, src, dst, _check_kind(kind) if kind else None)
    if as_json:
        emit_json(twoport_json(out))
    else:
        print_twoport(out, polar)


@app.command("crosscheck")
@bias_options
def crosscheck_cmd(
    bias_in: BiasInputs,
    config: Annotated[Optional[list[str]], typer.Option(
        "--config", "-c", help="Configuration(s) to check; repeatable (default: ce, cb, cc).",
        show_default=False)] = None,
    freq: FreqOpt = None, z0: Z0Opt = "50", given: ParamsOpt = None, touchstone: TouchstoneOpt = None,
    tol: Annotated[str, typer.Option("--tol", help="Largest acceptable relative deviation.")] = "1e-9",
    as_json: JsonOpt = False,
) -> None:
    """Recompute every conversion with scikit-rf; exit 1 if the worst deviation is above --tol."""
    from ..verify import crosscheck
    from ..units import parse_quantity

    tolerance = parse_quantity(tol, "", "tol")
    if tolerance <= 0:
        raise InputError(f"tol: expected a positive tolerance, got {tol}")
    z0v = parse_z0(z0)
    from_device = given is None and touchstone is None
    f = parse_freqs(freq, default=list(np.logspace(3, 10, 15))) if from_device else parse_freqs(freq)
    if config:
        configs = [c.lower() for c in config]
    elif not from_device:
        configs = ["ce"]
    else:
        from ..fet import is_fet_model

        configs = ["cs", "cg", "cd"] if is_fet_model(bias_in.model()) else ["ce", "cb", "cc"]
    results = {}
    for c in configs:
        tp = two_port_input(bias_in, given, touchstone, c, f, z0v, DEFAULT_FREQ)
        results[c] = crosscheck(tp, tolerance)
        n_points = len(tp)
    worst_c = max(results, key=lambda c: results[c].max_rel_error)
    worst = results[worst_c]
    checked = sum(r.checked for r in results.values())
    ok = all(r.ok for r in results.values())
    if as_json:
        emit_json({"max_rel_error": worst.max_rel_error, "tolerance": tolerance, "checked": checked,
                   "points": n_points,
                   "worst": {"config": worst_c, "pair": "->".join(worst.worst) if worst.worst else None},
                   "skipped": {c: list(r.skipped) for c, r in results.items() if r.skipped},
                   "unchecked": {c: list(r.unchecked) for c, r in results.items() if r.unchecked},
                   "configs": {c: r.max_rel_error for c, r in results.items()}, "ok": ok})
    else:
        rows = []
        for c, r in results.items():
            pair = "->".join(r.worst) if r.worst else "—"
            rows.append([c, f"{r.max_rel_error:.3g}", pair, str(r.checked),
                         ", ".join(r.skipped) if r.skipped else "—", "pass" if r.ok else "FAIL"])
        print_table(f"Conversions against scikit-rf (tolerance {tolerance:g})",
                    ["config", "worst deviation", "worst pair", "pairs", "kinds that do not exist", "result"], rows)
    if not ok:
        raise typer.Exit(1)

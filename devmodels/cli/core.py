"""Commands of the core: model, params, reconfigure, crosscheck."""

from __future__ import annotations

import math
from typing import Annotated, Optional

import numpy as np
import typer

from ..exceptions import InputError
from .app import command
from .inputs import Inputs, bias_options, check_config, check_kind, parse_freqs, parse_given, parse_z0, two_port_input
from .options import ConfigOpt, FreqOpt, JsonOpt, KindOpt, ParamsOpt, PolarOpt, TouchstoneOpt, Z0Opt
from .render import emit_json, print_table, print_twoport


#: Frequency of a single-point analysis when none is given, Hz.
DEFAULT_FREQ = 1e3


def _signed(bias, names: tuple[str, str]) -> tuple[float, float]:
    """Current and voltage with the device's sign convention (negative for a p-type device),
    as ``devmodels bias`` reports a pnp."""
    s = -1.0 if bias.device in ("pnp", "pmos", "pjfet") else 1.0
    return s * getattr(bias, names[0]) + 0.0, s * getattr(bias, names[1]) + 0.0


@command("model")
@bias_options(network=True)
def model_cmd(bias_in: Inputs, as_json: JsonOpt = False) -> None:
    """Small-signal element values (hybrid-pi and T model, or the FET model) at a bias point."""
    from ..units import format_si

    if not bias_in.given():
        raise InputError("bias point: missing; give a bias file or bias options (--ic, --vce, --beta, ...)")
    bias = bias_in.bias_point()
    if bias_in.family != "bipolar":
        from .fetchain import print_fet_model

        print_fet_model(bias, bias_in.model(), as_json, bias_in)
        return
    m = bias_in.model()
    ro = None if np.isinf(m.ro) else m.ro
    ic, vce = _signed(bias, ("ic", "vce"))
    out = {
        "gm": m.gm, "r_pi": m.r_pi, "ro": ro, "c_pi": m.c_pi, "c_mu": m.c_mu, "rb": m.rb,
        "re": m.re, "alpha": m.alpha, "beta": bias.beta, "vt": m.vt, "f_beta": m.f_beta, "ft": m.ft,
        "r_mu": None if np.isinf(m.r_mu) else m.r_mu, "rcx": m.rcx, "rex": m.rex,
        "l_b": m.l_b, "l_c": m.l_c, "l_e": m.l_e, "device": bias.device, "ic": ic, "vce": vce, "temp": bias.temp, "tref": bias_in.tref, "power": bias.power,
        "ft_used": m.ft, "datasheet": bias_in.datasheet,
    }
    if "ft" in bias_in.datasheet:
        out["ft"] = bias_in.get("ft")  # as given; ft_used at the bias point
    if as_json:
        emit_json(out)
        return
    h = "hybrid_pi" in bias_in.datasheet  # beta, VA, rb, r_mu from the h-parameter set
    rows = [
        ["gm", format_si(m.gm, "S"), "IC / VT"],
        ["r_pi", format_si(m.r_pi, "Ω"), "beta / gm"],
        ["ro", format_si(ro, "Ω") if ro else "open", "VA / IC" + ("  (VA from hoe at h_at_ic)" if h else "" if ro
                                                                   else "  (no VA given)")],
        ["C_pi", format_si(m.c_pi, "F"), "gm / (2 pi fT) - C_mu" + (
            "  (no fT given: 0)" if bias_in.get("ft") is None and "ft" not in bias_in.datasheet
            else "")],
        ["C_mu", format_si(m.c_mu, "F"), "Cob moved to the bias VCB" if "c_mu" in bias_in.datasheet
         else given_text(bias_in, "cmu")],
        ["rb", format_si(m.rb, "Ω"), "from hie at h_at_ic, held" if h else given_text(bias_in, "rb")],
        ["f_beta", format_si(m.f_beta, "Hz") if m.f_beta else "unbounded", "1 / (2 pi r_pi (C_pi + C_mu))"],
        ["fT", format_si(m.ft, "Hz") if m.ft else "unbounded", "gm / (2 pi (C_pi + C_mu))"
         + ("; transit-time law at IC" if "ft" in bias_in.datasheet else "")],
        ["re", format_si(m.re, "Ω"), "alpha / gm  (T model)"],
        ["alpha", f"{m.alpha:.6g}", "beta / (beta + 1)  (T model)"],
        ["beta", f"{bias.beta:.6g}", "gm r_pi from hfe, hre at h_at_ic" + ("" if bias.temp == bias_in.tref else
                                                                  ", moved to T (beta_tc)") if h else
         "given (hfe)" if bias.temp == bias_in.tref or bias_in.get("beta") is None
         else f"given {bias_in.get('beta'):.6g} at {bias_in.tref:.2f} K, moved to T (beta_tc)"],
        ["VT", format_si(m.vt, "V"), "k T / q"],
    ]
    if not np.isinf(m.r_mu):
        rows.append(["r_mu", format_si(m.r_mu, "Ω"), "from hre at h_at_ic, moved as beta ro" if h
                     else given_text(bias_in, "rmu")])
    if m.rcx or m.rex:
        rows.append(["rcx / rex", f"{format_si(m.rcx, 'Ω')} / {format_si(m.rex, 'Ω')}",
                     " / ".join(given_text(bias_in, k) for k in ("rcx", "rex"))])
    if m.l_b or m.l_c or m.l_e:
        rows.append(["l_b / l_c / l_e", " / ".join(format_si(x, "H") for x in (m.l_b, m.l_c, m.l_e)),
                     "lead inductances: " + " / ".join(given_text(bias_in, k) for k in ("l_b", "l_c", "l_e"))])
    title = (f"Small-signal model: {bias.device}, IC = {format_si(ic, 'A')}, "
             f"VCE = {format_si(vce, 'V')}, T = {bias.temp:.2f} K, P = {format_si(bias.power, 'W')}")
    caption = ("pnp: IC and VCE with the pnp sign (as 'devmodels bias' reports them); the small-signal "
               "model is the same as an npn's." if bias.device == "pnp" else None)
    print_table(title, ["element", "value", "relation"], rows, caption)


def given_text(bias_in: Inputs, kid: str, text: str = "given") -> str:
    """The source of a model value for the ``relation`` column: ``text`` where the bias file or an
    option gave the key ``kid``, ``not given: 0`` where the value is the default (0)."""
    return text if bias_in.get(kid) is not None else "not given: 0"


@command("params")
@bias_options(bare=True)
def params_cmd(bias_in: Inputs, config: ConfigOpt = None, kind: KindOpt = "y",
               freq: FreqOpt = None, z0: Z0Opt = "50", given: ParamsOpt = None,
               touchstone: TouchstoneOpt = None, polar: PolarOpt = False, as_json: JsonOpt = False) -> None:
    """Two-port parameters of a stage (or of a given two-port) in any kind, at each --freq (default 1 kHz)."""
    kind = check_kind(kind)
    z0v = parse_z0(z0)
    tp = two_port_input(bias_in, given, touchstone, config, parse_freqs(freq), z0v, DEFAULT_FREQ).to(kind, z0v)
    if as_json:
        emit_json(_twoport_json(tp))
    else:
        print_twoport(tp, polar)


def _twoport_json(tp) -> dict:
    """The JSON object of ``params``/``sweep``/``reconfigure`` (the library's params dict)."""
    from ..export import twoport_dict

    return twoport_dict(tp)


@command("reconfigure")
def reconfigure_cmd(
    given: Annotated[str, typer.Option("--params", help="The device as KIND=v11,v12,v21,v22 in the --from "
                                       "configuration.", metavar="KIND=V11,V12,V21,V22")],
    from_: Annotated[str, typer.Option("--from", help="Configuration the parameters are given in "
                                       "(ce, cb, cc, cs, cg, cd).", metavar="CONFIG")],
    to: Annotated[str, typer.Option("--to", help="Configuration wanted.", metavar="CONFIG")],
    kind: Annotated[Optional[str], typer.Option("--kind", "-k", help="Kind of the result (default: the given kind).",
                                                show_default=False, metavar="KIND")] = None,
    freq: FreqOpt = None, z0: Z0Opt = "50", polar: PolarOpt = False, as_json: JsonOpt = False,
) -> None:
    """A three-terminal device given in one configuration, returned in another."""
    from ..configs import reconfigure

    z0v = parse_z0(z0)
    src = check_config(from_)
    dst = check_config(to)
    tp = parse_given(given, z0v, parse_freqs(freq), src)
    out = reconfigure(tp, src, dst, check_kind(kind) if kind else None)
    if as_json:
        emit_json(_twoport_json(out))
    else:
        print_twoport(out, polar)


@command("crosscheck")
@bias_options(bare=True)
def crosscheck_cmd(
    bias_in: Inputs,
    config: Annotated[Optional[list[str]], typer.Option(
        "--config", "-c", help="Configuration(s) to check; repeatable (default: every configuration of the device).",
        show_default=False, metavar="CONFIG")] = None,
    freq: FreqOpt = None, z0: Z0Opt = "50", given: ParamsOpt = None, touchstone: TouchstoneOpt = None,
    max_error: Annotated[str, typer.Option(
        "--max-error", help="Largest acceptable relative deviation (JSON key 'tolerance').",
        metavar="NUMBER")] = "1e-9",
    as_json: JsonOpt = False,
) -> None:
    """Recompute every conversion with scikit-rf; exit 1 if the worst deviation is above --max-error."""
    from ..units import parse_quantity
    from ..verify import crosscheck

    tolerance = parse_quantity(max_error, "", "max-error")
    if not 0 < tolerance < 1:
        raise InputError(f"max-error: expected a relative deviation between 0 and 1, got {max_error}")
    z0v = parse_z0(z0)
    from_device = given is None and touchstone is None
    f = parse_freqs(freq, default=list(np.logspace(3, 10, 15))) if from_device else parse_freqs(freq)
    if config:
        configs = [check_config(c) for c in config]
    elif not from_device:
        configs = ["ce"]
    else:
        if not bias_in.given():
            raise InputError("bias point: missing; give a bias file, bias options (--ic, --vce, --beta, ...), "
                             "--params or --touchstone")
        configs = list(bias_in.configs())
    results = {}
    n_points = 0
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
            rows.append([c, f"{r.max_rel_error:.3g}" if math.isfinite(r.max_rel_error) else "unbounded", pair,
                         str(r.checked), ", ".join(r.skipped) if r.skipped else "—", "pass" if r.ok else "FAIL"])
        print_table(f"Conversions against scikit-rf (largest accepted deviation {tolerance:g})",
                    ["config", "worst deviation", "worst pair", "pairs", "kinds that do not exist", "result"], rows)
    if not ok:
        raise typer.Exit(1)

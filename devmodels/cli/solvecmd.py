"""Command ``solve``: the value of one design variable that makes one result meet a target.

The library searches (:func:`devmodels.solve.solve_target`) and picks the standard part
(:func:`devmodels.eseries.nearest`); this module reads the options, builds the stage at a trial
value by merging the inputs again with the varied key set to it, and shows the results.
"""

from __future__ import annotations

import math
from typing import Annotated, Optional

import typer

from ..exceptions import InputError
from ..schema import keys
from ..units import format_si, parse_quantity, shown
from .app import command
from .inputs import MODEL_KEYS, Inputs, bias_options, check_config, parse_freq, terminations
from .options import ConfigOpt, JsonOpt, RlOpt, RsOpt
from .render import emit_json, note_later, print_table, zjson

#: Frequency of av, avs, zin and zout without --freq, Hz (as ``gain``).
DEFAULT_FREQ = "1kHz"
DEFAULT_RS, DEFAULT_RL = "50", "1k"
#: Key ids that can be varied: design values (bias currents, external resistors, capacitors).
VARIABLE = ("ic", "id", "rdeg", "rfb", "network.rc", "network.re", "network.rb", "network.r1", "network.r2",
            "network.re_bypassed", "network.c_in", "network.c_out", "network.c_bypass", "network.c_base",
            "network.rg1", "network.rg2", "network.rd", "network.rsrc", "network.rsrc_bypassed")
_SHOWN_UNIT = {"Ohm": "Ω", "F": "F", "A": "A", "Hz": "Hz", "": ""}

_VaryOpt = Annotated[Optional[str], typer.Option(
    "--vary", help="The design value to solve for: ic (id for a FET), rdeg, rfb, or a key of the bias file's "
                   "[network] table (rc, re, r1, r2, rb, re_bypassed, c_in, c_out, c_bypass, c_base; rd, rsrc, "
                   "rg1, rg2 for a FET).", metavar="NAME", show_default=False)]
_TargetOpt = Annotated[Optional[str], typer.Option(
    "--target", help="RESULT=VALUE: av, avs (magnitudes), zin, zout (magnitudes, ohm) at --freq, or f_low, "
                     "bandwidth (the -3 dB corners, Hz); e.g. av=20, zin=50, f_low=20Hz.",
    metavar="RESULT=VALUE", show_default=False)]
_SolveFreqOpt = Annotated[str, typer.Option(
    "--freq", "-f", help="Frequency of av, avs, zin and zout, Hz (not used for f_low and bandwidth).",
    metavar="HZ")]
_SeriesOpt = Annotated[str, typer.Option(
    "--series", help="Standard series of the nearest part: E12, E24, E48 or E96.", metavar="SERIES")]


def _vary_key(name: str) -> str:
    n = str(name).strip().lower().replace("-", "_")
    for kid in (n, "network." + n):
        if kid in VARIABLE:
            return kid
    raise InputError(f"vary: {shown(name)} cannot be varied; expected one of "
                     f"{', '.join(k.split('.', 1)[-1] for k in VARIABLE)}")


def _parse_target(text: str) -> tuple[str, float]:
    from ..solve import RESULTS, UNITS

    s = str(text)
    if s.count("=") != 1:
        raise InputError(f"target: expected RESULT=VALUE (RESULT one of {', '.join(RESULTS)}), got {shown(text)}")
    name, _, raw = s.partition("=")
    name = name.strip().lower()
    if name not in UNITS:
        raise InputError(f"target: unknown result {shown(name)}; expected one of {', '.join(RESULTS)}")
    v = parse_quantity(raw, UNITS[name], "target")
    if not (math.isfinite(v) and 0 < v < 1e30):
        raise InputError(f"target: expected a finite value > 0 for {name}, got {shown(raw.strip())}")
    return name, v


def _trial_builder(bias_in: Inputs, kid: str, config: str | None):
    """``x -> Stage``: the inputs merged again with the key ``kid`` set to ``x`` (an option overrides the file)."""
    def build(x: float, final: bool = False):
        # notes of datasheet values: the answer's only
        return bias_in.with_value(kid, x, quiet=not final).stage(config)

    return build


@command("solve")
@bias_options(MODEL_KEYS, network=True)
def solve_cmd(bias_in: Inputs, vary: _VaryOpt = None, target: _TargetOpt = None, config: ConfigOpt = None,
              freq: _SolveFreqOpt = DEFAULT_FREQ, rs: RsOpt = DEFAULT_RS, rl: RlOpt = DEFAULT_RL,
              series: _SeriesOpt = "E24", as_json: JsonOpt = False) -> None:
    """Solve for the value of one design variable (--vary) that makes one result meet --target.

    The variable is searched between physical bounds (resistors 1 ohm to 10 Mohm, capacitors 1 pF
    to 1 F, bias currents 1 uA to 100 mA), on a grid refined at the edges of the values the stage
    accepts, where the result changes fast and at its extremes; of several values that meet the target, the one nearest
    the present value is taken (with a note). Also shows the nearest part of --series and the result
    with it.
    """
    from . import render
    from ..eseries import check_series, nearest
    from ..solve import UNITS, UnreachableTarget, result_of, search_interval, solve_target

    if vary is None:
        raise InputError("vary: missing; give --vary NAME (e.g. rdeg, ic, rc, c_in)")
    if target is None:
        raise InputError("target: missing; give --target RESULT=VALUE (e.g. av=20, f_low=20Hz)")
    kid = _vary_key(vary)
    result, goal = _parse_target(target)
    series = check_series(series)
    f = parse_freq(freq)
    zs, zl = terminations(rs, rl)
    cfg = check_config(config) if config is not None else None
    if not bias_in.given():
        raise InputError("bias point: missing; give a bias file or bias options (--ic, --vce, --beta, ...)")
    key = keys()[kid]
    if key.table == "network" and not bias_in.has_network():
        raise InputError(f"vary: {key.name} is a key of the [network] table; the inputs have no [network] table")
    present = bias_in.values.get(kid)
    present = float(present) if isinstance(present, (int, float)) and present > 0 else None
    lo, hi = search_interval(key.unit, present)
    build = _trial_builder(bias_in, kid, cfg)
    try:
        with render.held_back():  # the trial values' warnings are not the answer's
            sol = solve_target(build, result, goal, f, zs, zl, lo=lo, hi=hi, present=present)
    except UnreachableTarget as exc:
        vu, ru = _SHOWN_UNIT[key.unit], _SHOWN_UNIT[UNITS[result]]
        span = f"{key.name} from {format_si(lo, vu)} to {format_si(hi, vu)}"
        if exc.reachable is None:
            raise InputError(f"target: {result} has no value for {span}") from None
        where = ("" if exc.exists is None or (math.isclose(exc.exists[0], lo, rel_tol=1e-9) and
                                                math.isclose(exc.exists[1], hi, rel_tol=1e-9)) else
                 f" (it has a value only for {key.name} from {format_si(exc.exists[0], vu)} to "
                 f"{format_si(exc.exists[1], vu)})")
        raise InputError(f"target: {result} = {format_si(goal, ru)} is not reachable by varying {span}{where}; "
                         f"{result} ranges from {format_si(exc.reachable[0], ru)} to "
                         f"{format_si(exc.reachable[1], ru)} over the {exc.scanned} values scanned") from None
    build(sol.value, final=True)  # the warnings and notes of the solved value (ratings, datasheet values)
    part = nearest(sol.value, series)
    try:
        at_part = result_of(build(part), result, f, zs, zl)
    except InputError as exc:
        at_part = None
        render.warn(f"{key.name}: the nearest {series} value {format_si(part, _SHOWN_UNIT[key.unit])} gives no "
                    f"{result} ({exc})")
    at_part = at_part if at_part is not None and math.isfinite(at_part) else None
    if sol.roots > 1:
        vu = _SHOWN_UNIT[key.unit]
        others = ", ".join(format_si(c, vu) for c in sol.candidates if abs(math.log(c / sol.value)) > 1e-3)
        note_later(f"{sol.roots} values of {key.name} between {format_si(lo, vu)} and {format_si(hi, vu)} meet "
                   f"{result} = {goal:g}; took the one nearest "
                   f"{'the present value' if present is not None else 'the middle of the searched range'}"
                   f"{f' (others near {others})' if others else ''}")
    if as_json:
        emit_json({"vary": key.name, "value": sol.value, "nearest": part, "series": series, "result": result,
                   "target": goal, "achieved": sol.achieved, "achieved_nearest": at_part,
                   "freq": f if result not in ("f_low", "bandwidth") else None, "rs": zjson(zs), "rl": zjson(zl),
                   "roots": sol.roots, "interval": list(sol.interval)})
        return
    vu, ru = _SHOWN_UNIT[key.unit], _SHOWN_UNIT[UNITS[result]]
    rows = [[key.name, format_si(sol.value, vu, 7), format_si(sol.achieved, ru, 7)],
            [f"nearest {series}", format_si(part, vu), format_si(at_part, ru)]]
    where = f" at {format_si(f, 'Hz')}" if result not in ("f_low", "bandwidth") else ""
    print_table(f"{key.name} for {result} = {format_si(goal, ru)}{where}", ["", key.name, result], rows,
                caption=f"Searched {format_si(sol.interval[0], vu)} to {format_si(sol.interval[1], vu)}; "
                        f"{'|av|, |avs|, |zin|, |zout| are magnitudes' if not where == '' else '-3 dB corners'}.")

r"""Bias design: resistor values of a bias network for a target collector current.

Procedure (the usual hand design of a bias network; the two stability rules are common
practice, no source, and both are parameters):

1. **Emitter voltage** :math:`V_E = f_E V_{CC}` with :math:`f_E` = ``ve_fraction`` (default
   0.1: "about a tenth of the supply"), so
   :math:`R_E = V_E / I_E`, :math:`I_E = I_C(\beta+1)/\beta` at the nominal beta.
2. **Collector**: the target :math:`V_{CE}` is ``vce`` when given, else the collector sits
   halfway between the emitter and the supply, :math:`V_{CE} = (V_{CC}-V_E)/2`;
   :math:`V_C = V_E + V_{CE}` and :math:`R_C = (V_{CC}-V_C)/I_C` (collector feedback:
   :math:`R_C` carries :math:`I_E`, so :math:`R_C = (V_{CC}-V_C)/I_E`).
3. **Base**, with :math:`V_B = V_E + V_{BE(on)}` and :math:`I_B = I_C/\beta`:

   * ``divider``: the current in :math:`R_2` is :math:`I_2 = k\,I_C/\beta_{low}` with
     :math:`k` = ``divider_factor`` (default 10: "divider current at least ten times the base
     current at the lowest hFE"; :math:`\beta_{low}` is the lowest beta of the limits, at the
     temperature limit where it is lowest), so :math:`R_2 = V_B/I_2` and
     :math:`R_1 = (V_{CC}-V_B)/(I_2+I_B)`;
   * ``fixed``: :math:`R_B = (V_{CC}-V_B)/I_B`;
   * ``collector-feedback``: :math:`R_B = (V_C-V_B)/I_B`.

   With these ideal values the nominal point is exactly the target (the tests check it).
4. **Preferred values**: each ideal value is replaced by members of the requested E-series
   (IEC 60063, :mod:`devmodels.eseries`): its two neighbours and ``search`` further members
   on each side (default 1: up to four candidates per resistor, :math:`4^n` combinations).
   Every combination is solved at the nominal point *and* at every vertex of the box of
   limits (beta, temperature, each resistor at :math:`1 \pm` tol) in one call of
   :func:`devmodels.dcbias.solve_arrays`.  A combination is acceptable when every vertex is
   in the forward-active region (and, with ``ic_band``, the worst-case IC is inside
   target :math:`\times (1 \pm` ``ic_band``)).
5. **The stability rule comes first** (:func:`rule_check`).  It holds on a combination when

   * :math:`R_E` is one of the two series neighbours of the ideal :math:`R_E` (the emitter
     voltage is the chosen fraction of the supply at the target current, within one series
     step), and
   * ``divider`` only: :math:`R_2` is one of the two series neighbours of the ideal
     :math:`R_2`, and at the nominal point of the chosen parts the current in :math:`R_2`,
     :math:`V_B/R_2`, is at least ``divider_factor`` times :math:`I_C/\beta_{low}`.

   Among the acceptable combinations that meet the rule, the nominal IC closest to the target
   (smallest :math:`|\ln(I_C/I_{C,target})|`) wins, ties broken by the nominal VCE closest to
   its target.
6. **Accuracy**: the chosen nominal IC must be within half a series step of the target,
   :math:`|I_C/I_{C,target} - 1| \le 10^{1/(2n)} - 1` (:func:`ic_accuracy`: E12 10.1 %,
   E24 4.9 %, E48 2.4 %, E96 1.2 %).  When no combination meets the rule *and* this accuracy,
   the rule is relaxed in three stated steps: first :math:`R_2` may lie beyond its neighbours
   (with :math:`R_E` a neighbour and the divider current still at least ``divider_factor``
   times the base current: the rule as stated still holds), then :math:`R_E` may as well,
   then the divider-current condition is dropped.  Each relaxation is
   reported in :attr:`BiasDesign.notes`; when even that does not reach the accuracy, the
   target is refused as unreachable.
7. **Ratings**: with ``pmax`` and ``vceo`` given, the dissipation and VCE at the nominal point
   and their largest values over the box of limits (:func:`devmodels.worstcase.worst_case`:
   the dissipation is not monotonic, it peaks where VCE is about half the supply), and the
   supply, which a cut-off transistor sees, are compared with them
   (:func:`devmodels.dcbias.rating_warnings`, the sentences every command prints); the
   sentences are in :attr:`BiasDesign.warnings`.

The worst case is taken over the vertices.  In the forward-active region IC and VCE of all
three networks are monotonic in beta, VBE(on) (so in temperature) and in each resistor
separately (each is a ratio of functions linear in that one variable), so the extremes lie
on vertices; :func:`devmodels.worstcase.worst_case` checks that on the chosen design in the
tests.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from .bias import DEFAULT_VCE_SAT
from .dcbias import NETWORK_KINDS, REGIONS, BiasNetwork, rating_warnings, solve_arrays
from .eseries import check_series, neighbours, step_ratio, values_between
from .exceptions import InputError
from .temperature import BETA_TC_DEFAULT, T_REF, VBE_DEFAULT, VBE_TC_DEFAULT, beta_at, vbe_at
from .units import format_si
from .worstcase import vertices

__all__ = ["BiasDesign", "design_bias", "design_toml", "ideal_values", "ic_accuracy", "rule_check", "VE_FRACTION",
           "DIVIDER_FACTOR", "R_MIN", "R_MAX"]

#: Emitter voltage as a fraction of the supply (common practice, no source).
VE_FRACTION = 0.1
#: Divider current over the base current at the lowest hFE (common practice, no source).
DIVIDER_FACTOR = 10.0
#: Range of resistor values the design may use, ohm (common practice, no source: the usual
#: stock of through-hole and chip resistors).
R_MIN = 1.0
R_MAX = 10e6

_RESISTORS = {"fixed": ("rb", "rc", "re"), "divider": ("r1", "r2", "rc", "re"),
              "collector-feedback": ("rb", "rc", "re")}


def ic_accuracy(series: str) -> float:
    """The accepted relative deviation of the nominal IC from its target: half a series step.

    :math:`10^{1/(2n)} - 1` for the series ``En`` (E12 0.101, E24 0.049, E48 0.024, E96 0.012).

    Parameters
    ----------
    series : {'E12', 'E24', 'E48', 'E96'}
        The series of the resistor values.
    """
    return math.sqrt(step_ratio(series)) - 1.0


@dataclass(frozen=True, slots=True)
class BiasDesign:
    """A designed bias network (what :func:`design_bias` returns; SI units).

    Attributes
    ----------
    network : BiasNetwork
        The chosen network (preferred values, ``tol`` as given).
    series : str
        The E-series of the values.
    ic, vce : float
        Operating point of the chosen parts at the nominal beta and temperature, A and V
        (solved, not the targets).
    beta, vbe : float
        Nominal beta and VBE(on) (V) at the nominal temperature, as that point uses them.
    worst : dict
        ``{"ic": {"min", "max"}, "vce": {"min", "max"}}`` over the vertices of the limits.
    target_ic, target_vce : float
        The targets, A and V.
    ideal : dict of str -> float
        Ideal (unrounded) resistor values, ohm.
    temp : float
        Nominal temperature, K.
    beta_ref, vbe_ref : float
        Nominal beta and VBE(on) at ``t_ref`` (what a bias file holds).
    limits : dict
        ``beta_min``, ``beta_max``, ``temp_min``, ``temp_max``, ``tol`` used for the worst case.
    settings : dict
        ``vbe_tc``, ``beta_tc``, ``t_ref``, ``vce_sat``, ``ve_fraction``, ``divider_factor``.
    candidates : int
        Number of combinations searched.
    ve : float
        Emitter voltage at the nominal point of the chosen parts, V.
    divider_ratio : float or None
        ``divider``: the current in R2 at the nominal point over IC / beta_low (the divider rule
        asks for at least ``divider_factor``); None for the other networks.
    beta_low : float
        Lowest beta of the limits (at the temperature limit where it is lowest).
    rule : str
        ``"met"``: the stability rule of the module docstring (step 5) holds on the chosen parts;
        ``"r2 beyond neighbours"``: it holds with R2 further from its ideal value (re is a
        neighbour, the divider current is at least ``divider_factor`` times the base current);
        ``"re beyond neighbours"``: the divider-current condition holds, re is not a neighbour;
        ``"relaxed"``: the divider-current condition does not hold either.
    notes : tuple of str
        Sentences saying how and why the rule was relaxed (empty when it is met).
    warnings : tuple of str
        Rating sentences (:func:`devmodels.dcbias.rating_warnings`), empty without ratings.
    ratings : dict
        ``pmax`` (W) and ``vceo`` (V) as given (None: not given).
    """

    network: BiasNetwork
    series: str
    ic: float
    vce: float
    beta: float
    vbe: float
    worst: dict
    target_ic: float
    target_vce: float
    ideal: dict
    temp: float
    beta_ref: float
    vbe_ref: float
    limits: dict = field(default_factory=dict)
    settings: dict = field(default_factory=dict)
    candidates: int = 0
    ve: float = math.nan
    divider_ratio: float | None = None
    beta_low: float = math.nan
    rule: str = "met"
    notes: tuple[str, ...] = ()
    warnings: tuple[str, ...] = ()
    ratings: dict = field(default_factory=dict)

    def as_dict(self) -> dict:
        """The JSON object of ``devmodels design``: ``network``, ``series``, ``ic``, ``vce``,
        ``beta``, ``vbe``, ``worst`` (SI floats), then ``ve`` (V), ``divider_ratio``, ``rule``,
        ``notes`` and ``warnings`` (the rating sentences), so that a script sees what the table
        and stderr say."""
        return {"network": dict(self.network.resistors), "series": self.series, "ic": self.ic,
                "vce": self.vce, "beta": self.beta, "vbe": self.vbe,
                "worst": {k: dict(v) for k, v in self.worst.items()},
                "ve": self.ve, "divider_ratio": self.divider_ratio, "rule": self.rule,
                "notes": list(self.notes), "warnings": list(self.warnings)}


def _positive(name: str, v, unit: str) -> float:
    try:
        x = float(v)
    except (TypeError, ValueError):
        raise InputError(f"{name}: expected a positive value in {unit}, got {v!r}") from None
    if not (math.isfinite(x) and x > 0):
        raise InputError(f"{name}: expected a positive value in {unit}, got {v!r}")
    return x


def ideal_values(network: str, vcc: float, ic: float, beta: float, vbe: float, beta_low: float, *,
                 vce: float | None = None, vce_sat: float = DEFAULT_VCE_SAT, ve_fraction: float = VE_FRACTION,
                 divider_factor: float = DIVIDER_FACTOR) -> tuple[dict[str, float], float]:
    """Ideal resistor values by the procedure of the module docstring (steps 1 to 3).

    Parameters
    ----------
    network : {'divider', 'fixed', 'collector-feedback'}
    vcc : float
        Supply, V.
    ic : float
        Target collector current, A.
    beta, vbe : float
        Nominal beta and VBE(on) (V) at the nominal temperature.
    beta_low : float
        Lowest beta of the limits (divider rule).
    vce : float or None
        Target VCE in V (``None``: halfway between the emitter voltage and the supply).
    vce_sat : float
        Saturation threshold, V.
    ve_fraction, divider_factor : float
        The two stability rules (common practice, no source).

    Returns
    -------
    (dict of str -> float, float)
        Ideal values in ohm by ``[network]`` key, and the target VCE in V.

    Raises
    ------
    InputError
        A supply too low for the emitter voltage plus VCE(sat) (or for VBE(on)), a target VCE
        that does not fit, a network that cannot reach it.
    """
    ve = ve_fraction * vcc
    if vcc <= ve + vce_sat:
        raise InputError(f"vcc: the supply {vcc:g} V is not above the emitter voltage {ve:g} V "
                         f"(a fraction {ve_fraction:g} of it) plus VCE(sat) = {vce_sat:g} V")
    if vce is None:
        vce_t = 0.5 * (vcc - ve)
        if vce_t <= vce_sat:
            raise InputError(f"vcc: halfway between VE = {ve:g} V and the supply gives VCE = {vce_t:g} V, "
                             f"not above VCE(sat) = {vce_sat:g} V; raise vcc or give a target vce")
    else:
        vce_t = _positive("vce", vce, "V")
        if vce_t <= vce_sat:
            raise InputError(f"vce: the target {vce_t:g} V is not above VCE(sat) = {vce_sat:g} V")
        if ve + vce_t >= vcc:
            raise InputError(f"vce: the target {vce_t:g} V plus VE = {ve:g} V does not fit under the "
                             f"supply {vcc:g} V (it leaves nothing across rc)")
    vc = ve + vce_t
    vb = ve + vbe
    if vb >= vcc:
        raise InputError(f"vcc: the supply {vcc:g} V is not above VB = VE + VBE(on) = {vb:g} V")
    ib = ic / beta
    ie = ic + ib
    out: dict[str, float] = {}
    if network == "divider":
        i2 = divider_factor * ic / beta_low
        out["r1"] = (vcc - vb) / (i2 + ib)
        out["r2"] = vb / i2
    elif network == "fixed":
        out["rb"] = (vcc - vb) / ib
    else:
        if vc <= vb:
            raise InputError(f"vce: a collector-feedback network has VCE = VBE(on) + IB RB, above "
                             f"VBE(on) = {vbe:g} V; the target {vce_t:g} V is too low")
        out["rb"] = (vc - vb) / ib
    out["rc"] = (vcc - vc) / (ie if network == "collector-feedback" else ic)
    out["re"] = ve / ie
    return {k: out[k] for k in _RESISTORS[network]}, vce_t


def _candidates(x: float, series: str, search: int, r_min: float, r_max: float) -> np.ndarray:
    """The neighbours of ``x`` in the series and ``search`` more members on each side."""
    below, above = neighbours(x, series)
    r = step_ratio(series) ** (search + 1.5)
    around = values_between(below / r, above * r, series)
    low = around[around <= below][-(search + 1):]
    high = around[around >= above][:search + 1]
    c = np.unique(np.concatenate([low, high]))
    return c[(c >= r_min * (1 - 1e-12)) & (c <= r_max * (1 + 1e-12))]


#: The resistors whose ideal value the stability rule fixes (step 5 of the module docstring).
RULE_RESISTORS = {"divider": ("re", "r2"), "fixed": ("re",), "collector-feedback": ("re",)}


def rule_check(network: str, resistors: dict, ideal: dict, series: str, vb, ic, beta_low: float,
               divider_factor: float = DIVIDER_FACTOR) -> tuple[np.ndarray, np.ndarray, np.ndarray | None]:
    """Whether the stability rule (step 5 of the module docstring) holds on resistor values.

    Parameters
    ----------
    network : {'divider', 'fixed', 'collector-feedback'}
    resistors : dict of str -> float or ndarray
        Chosen values in ohm by ``[network]`` key (arrays: one combination per element).
    ideal : dict of str -> float
        Ideal values in ohm (:func:`ideal_values`).
    series : {'E12', 'E24', 'E48', 'E96'}
    vb, ic : float or ndarray
        Base voltage (V) and collector current (A) at the nominal point of each combination.
    beta_low : float
        Lowest beta of the limits.
    divider_factor : float
        Divider current over the base current at the lowest beta (common practice, no source).

    Returns
    -------
    (ndarray of bool, ndarray of bool, ndarray or None)
        Every rule resistor is a series neighbour of its ideal value; the divider current is at
        least ``divider_factor`` IC / beta_low (always True for the other networks); and that
        ratio (``divider`` only).
    """
    near = np.ones(np.shape(np.asarray(resistors[RULE_RESISTORS[network][0]])), dtype=bool)
    for name in RULE_RESISTORS[network]:
        near &= _neighbour_of(resistors[name], ideal[name], series)
    if network != "divider":
        return near, np.ones_like(near), None
    ratio = (np.asarray(vb, dtype=float) / np.asarray(resistors["r2"], dtype=float)) / (np.asarray(ic, dtype=float)
                                                                                     / beta_low)
    return near, ratio >= divider_factor * (1 - 1e-12), ratio


def design_bias(network: str, vcc: float, ic: float, *, beta_min: float, beta_max: float,
                beta: float | None = None, series: str = "E24", vce: float | None = None,
                temp: float | None = None, temp_min: float | None = None, temp_max: float | None = None,
                tol: float = 0.0, vbe: float = VBE_DEFAULT, vbe_tc: float = VBE_TC_DEFAULT,
                beta_tc: float = BETA_TC_DEFAULT, t_ref: float = T_REF, vce_sat: float = DEFAULT_VCE_SAT,
                ve_fraction: float = VE_FRACTION, divider_factor: float = DIVIDER_FACTOR,
                ic_band: float | None = None, r_min: float = R_MIN, r_max: float = R_MAX,
                search: int = 1, pmax: float | None = None, vceo: float | None = None) -> BiasDesign:
    """Design a bias network for a target IC with preferred resistor values (module docstring).

    Parameters
    ----------
    network : {'divider', 'fixed', 'collector-feedback'}
        Topology (:mod:`devmodels.dcbias`).
    vcc : float
        Supply magnitude, V.
    ic : float
        Target collector current, A.
    beta_min, beta_max : float
        Current-gain limits at ``t_ref`` (datasheet hFE min and max).
    beta : float or None
        Nominal beta at ``t_ref`` (default: the midpoint of the limits, as the spread's nominal).
    series : {'E12', 'E24', 'E48', 'E96'}
        Series of the resistor values (IEC 60063).
    vce : float or None
        Target VCE, V (default: halfway between the emitter voltage and the supply).
    temp : float or None
        Nominal junction temperature, K (default ``t_ref``).
    temp_min, temp_max : float or None
        Temperature limits, K (default ``temp``).
    tol : float
        Resistor tolerance as a fraction (0.05 for 5 %).
    vbe, vbe_tc, beta_tc, t_ref : float
        VBE(on) at ``t_ref`` (V), its coefficient (V/K), beta's fractional coefficient (1/K) and
        the reference temperature (K), as in :mod:`devmodels.temperature`.
    vce_sat : float
        Saturation threshold, V.
    ve_fraction : float
        Emitter voltage over the supply (default 0.1; common practice, no source).
    divider_factor : float
        Divider current over the base current at the lowest hFE (default 10; common practice,
        no source).
    ic_band : float or None
        When given, the worst-case IC must stay within target x (1 +- ic_band).
    r_min, r_max : float
        Range of resistor values allowed, ohm.
    search : int
        Extra series members tried on each side of the two neighbours of each ideal value.
    pmax, vceo : float or None
        Power rating (W) and breakdown rating VCEO (V) of the transistor: the design warns
        (:attr:`BiasDesign.warnings`) where the nominal point, a vertex or the supply exceeds them.

    Returns
    -------
    BiasDesign

    Raises
    ------
    InputError
        Bad limits, an unknown series, a supply too low (``vcc``), a target no combination of
        series values reaches (``ic``), a design that leaves the active region at a vertex.
    """
    if network not in NETWORK_KINDS:
        raise InputError(f"network: unknown bias network {network!r}, expected one of {', '.join(NETWORK_KINDS)}")
    series = check_series(series)
    vcc = _positive("vcc", vcc, "V")
    ic = _positive("ic", ic, "A")
    beta_min = _positive("beta_min", beta_min, "(current gain)")
    beta_max = _positive("beta_max", beta_max, "(current gain)")
    if beta_min > beta_max:
        raise InputError(f"beta_min: {beta_min:g} is above beta_max = {beta_max:g}")
    beta_ref = 0.5 * (beta_min + beta_max) if beta is None else _positive("beta", beta, "(current gain)")
    if not beta_min <= beta_ref <= beta_max:
        raise InputError(f"beta: the nominal {beta_ref:g} is outside beta_min..beta_max = {beta_min:g}..{beta_max:g}")
    t_ref = _positive("t_ref", t_ref, "K")
    temp = t_ref if temp is None else _positive("temp", temp, "K")
    temp_min = temp if temp_min is None else _positive("temp_min", temp_min, "K")
    temp_max = temp if temp_max is None else _positive("temp_max", temp_max, "K")
    if temp_min > temp_max:
        raise InputError(f"temp_min: {temp_min:g} K is above temp_max = {temp_max:g} K")
    if not temp_min <= temp <= temp_max:
        raise InputError(f"temp: the nominal {temp:g} K is outside temp_min..temp_max = {temp_min:g}..{temp_max:g} K")
    tol = float(tol)
    if not (math.isfinite(tol) and 0 <= tol < 1):
        raise InputError(f"tol: expected a resistor tolerance from 0 to below 100 %, got {tol * 100:g} %")
    if not (math.isfinite(ve_fraction) and 0 < ve_fraction < 1):
        raise InputError(f"ve_fraction: expected a fraction of the supply between 0 and 1, got {ve_fraction:g}")
    if not (math.isfinite(divider_factor) and divider_factor > 0):
        raise InputError(f"divider_factor: expected a positive ratio, got {divider_factor:g}")
    if ic_band is not None and not (math.isfinite(ic_band) and ic_band > 0):
        raise InputError(f"ic_band: expected a positive fraction, got {ic_band:g}")
    if not (0 < r_min < r_max):
        raise InputError(f"r_min: expected 0 < r_min < r_max, got {r_min:g} and {r_max:g} ohm")
    if isinstance(search, bool) or not isinstance(search, int) or not 0 <= search <= 4:
        raise InputError(f"search: expected a whole number from 0 to 4, got {search!r}")
    vbe_ref = _positive("vbe", vbe, "V")
    pmax = None if pmax is None else _positive("pmax", pmax, "W")
    vceo = None if vceo is None else _positive("vceo", vceo, "V")

    b_nom = beta_at(temp, beta_ref, beta_tc, t_ref)
    v_nom = vbe_at(temp, vbe_ref, vbe_tc, t_ref)
    if v_nom <= 0:
        raise InputError(f"vbe: VBE(on) comes out {v_nom:g} V at {temp:g} K; check vbe and vbe_tc")
    beta_low = min(beta_at(temp_min, beta_min, beta_tc, t_ref), beta_at(temp_max, beta_min, beta_tc, t_ref))
    ideal, vce_t = ideal_values(network, vcc, ic, b_nom, v_nom, beta_low, vce=vce, vce_sat=vce_sat,
                                ve_fraction=ve_fraction, divider_factor=divider_factor)
    for name, x in ideal.items():
        if not r_min <= x <= r_max:
            # every ideal value is inversely proportional to the target IC (the voltages do not
            # depend on it): the reachable targets follow from the values at this one
            lo, hi = max(ideal.values()) * ic / r_max, min(ideal.values()) * ic / r_min
            reach = (f" (the resistor range allows targets from {format_si(lo, 'A')} to {format_si(hi, 'A')} "
                     "here)") if lo <= hi else ""
            raise InputError(
                f"ic: the target {format_si(ic, 'A')} needs {name} = {format_si(x, 'ohm')}, outside the "
                f"resistor range {format_si(r_min, 'ohm')} .. {format_si(r_max, 'ohm')}; no {series} value "
                f"can reach it{reach}")

    # every combination of candidates, flattened: (M,) per resistor
    names = list(ideal)
    cands = [_candidates(ideal[n], series, search, r_min, r_max) for n in names]
    grids = np.meshgrid(*cands, indexing="ij")
    combos = {n: g.ravel() for n, g in zip(names, grids)}
    m = grids[0].size

    # columns: the nominal point, then every vertex of the limits (one solve for all)
    limits = {"beta": (beta_min, beta_max), "temp": (temp_min, temp_max)}
    limits.update({n: (1 - tol, 1 + tol) for n in names})
    vert = vertices(limits)
    col = {k: np.concatenate([[nom], vert[k]]) for k, nom in
           [("beta", beta_ref), ("temp", temp)] + [(n, 1.0) for n in names]}
    b_col = beta_at(col["temp"], col["beta"], beta_tc, t_ref)[None, :]
    v_col = vbe_at(col["temp"], vbe_ref, vbe_tc, t_ref)[None, :]
    res = {n: combos[n][:, None] * col[n][None, :] for n in names}
    op = solve_arrays(network, vcc, b_col, v_col, vce_sat=vce_sat, **res)
    ic_all, vce_all, region = op["ic"], op["vce"], op["region"]

    ok = np.all(region == 0, axis=1)
    if ic_band is not None:
        ok &= (ic_all.min(axis=1) >= ic * (1 - ic_band)) & (ic_all.max(axis=1) <= ic * (1 + ic_band))
    if not ok.any():
        best = int(np.argmax(vce_all.min(axis=1)))
        why = (f"the worst-case IC leaves target x (1 +- {ic_band:g})" if ic_band is not None and
               np.all(region[best] == 0) else
               f"the transistor leaves the active region at a vertex (lowest VCE {vce_all[best].min():.3g} V, "
               f"regions {', '.join(REGIONS[i] for i in sorted(set(region[best].tolist())))})")
        raise InputError(
            f"ic: no {series} combination near the ideal values reaches the target {format_si(ic, 'A')} with "
            f"beta {beta_min:g}..{beta_max:g}, temperature {temp_min:g}..{temp_max:g} K and resistors "
            f"+-{tol * 100:g} %: {why}; lower ic, raise vcc or narrow the limits")
    near, div_ok, ratio = rule_check(network, combos, ideal, series, op["vb"][:, 0], ic_all[:, 0], beta_low,
                                     divider_factor)
    re_near = _neighbour_of(combos["re"], ideal["re"], series)
    e_ic = np.abs(np.log(ic_all[:, 0] / ic))
    e_vce = np.abs(vce_all[:, 0] - vce_t) / vcc
    acc = ic_accuracy(series)

    def pick(allowed: np.ndarray) -> int | None:
        if not allowed.any():
            return None
        order = np.lexsort((e_vce, np.round(np.where(allowed, e_ic, np.inf) / 1e-9)))
        return int(order[0])

    # the stability rule first, then the closeness of IC; relaxed in stated steps (docstring)
    tiers = [("met", ok & near & div_ok), ("r2 beyond neighbours", ok & re_near & div_ok),
             ("re beyond neighbours", ok & div_ok), ("relaxed", ok)]
    rule, k = tiers[-1][0], pick(ok)
    for name, allowed in tiers:
        kk = pick(allowed)
        if kk is not None and abs(ic_all[kk, 0] / ic - 1.0) <= acc:
            rule, k = name, kk
            break
    chosen = {n: float(combos[n][k]) for n in names}
    err = ic_all[k, 0] / ic - 1.0
    if abs(err) > acc:
        free = float(np.min(np.abs(np.log(ic_all[:, 0] / ic))))  # ignoring the vertices
        if math.expm1(free) <= acc:
            raise InputError(
                f"ic: the target {format_si(ic, 'A')} cannot be reached with {series} values that keep the "
                f"transistor active at every vertex of the limits{' and inside ic_band' if ic_band else ''}: the "
                f"closest gives {format_si(float(ic_all[k, 0]), 'A')} ({err * 100:+.2g} %, more than half a series "
                f"step, {acc * 100:.2g} %); lower ic, raise vcc or narrow the limits")
        raise InputError(
            f"ic: the target {format_si(ic, 'A')} cannot be reached with {series} values: the closest "
            f"combination gives {format_si(float(ic_all[k, 0]), 'A')} ({err * 100:+.2g} %, more than half a "
            f"series step, {acc * 100:.2g} %)")
    notes = []
    if rule != "met":
        k0 = pick(ok & near & div_ok)
        why = (f"the closest combination gives IC {format_si(float(ic_all[k0, 0]), 'A')} "
               f"({(ic_all[k0, 0] / ic - 1) * 100:+.3g} %, more than half a series step, {acc * 100:.3g} %)"
               if k0 is not None else "no combination keeps the transistor active at every vertex"
               + (" inside ic_band" if ic_band is not None else ""))
        broken = [f"{n} = {format_si(chosen[n], 'ohm')} is not a series neighbour of its ideal "
                  f"{format_si(ideal[n], 'ohm')}" for n in RULE_RESISTORS[network]
                  if not _neighbour_of(chosen[n], ideal[n], series)]
        ve_k = float(op["ve"][k, 0])
        if rule == "r2 beyond neighbours":
            broken.append(f"the divider current is still {float(ratio[k]):.3g} times the base current at the lowest "
                          f"beta (at least {divider_factor:g}) and VE = {format_si(ve_k, 'V')} is "
                          f"{ve_k / vcc:.3g} of the supply")
        else:
            broken.append(f"VE = {format_si(ve_k, 'V')} is {ve_k / vcc:.3g} of the supply (the rule: about "
                          f"{ve_fraction:g})")
            if ratio is not None:
                broken.append(f"the divider current is {float(ratio[k]):.3g} times the base current at the lowest "
                              f"beta (the rule: at least {divider_factor:g})")
        head = {"r2 beyond neighbours": "stability rule kept, r2 moved", "re beyond neighbours":
                "stability rule relaxed", "relaxed": "stability rule not met"}[rule]
        rule_text = " and ".join(RULE_RESISTORS[network])
        notes.append(f"{head}: {'; '.join(broken)}; with {rule_text} series neighbours of the ideal values "
                     f"{why}")
    net = BiasNetwork(kind=network, vcc=vcc, tol=tol, **chosen)
    worst = {"ic": {"min": float(ic_all[k].min()), "max": float(ic_all[k].max())},
             "vce": {"min": float(vce_all[k].min()), "max": float(vce_all[k].max())}}
    warnings = rating_warnings(float(op["power"][k, 0]), float(vce_all[k, 0]), vcc, pmax=pmax, vceo=vceo)
    if pmax is not None or vceo is not None:
        # the dissipation is not monotonic in the limits (largest where VCE is about half the
        # supply): the worst case of the spread (vertices plus a bounded search) gives its maximum
        from .spread import SpreadRanges, SpreadSetup
        from .worstcase import worst_case

        setup = SpreadSetup(network=net, vbe=vbe_ref, vbe_tc=vbe_tc, beta_tc=beta_tc, t_ref=t_ref, vce_sat=vce_sat)
        box = SpreadRanges(beta_min=beta_min, beta_max=beta_max, temp_min=temp_min, temp_max=temp_max, tol=tol)
        w = worst_case(setup, box, results=("power", "vce"))
        seen = {x.split(":")[0] for x in warnings}
        warnings += [x for x in rating_warnings(float(w["power"]["worst_max"]), float(w["vce"]["worst_max"]), vcc,
                                                pmax=pmax, vceo=vceo, where=" at the worst case of the limits")
                     if x.split(":")[0] not in seen]
    return BiasDesign(network=net, series=series, ic=float(ic_all[k, 0]), vce=float(vce_all[k, 0]),
                      beta=float(b_nom), vbe=float(v_nom), worst=worst, target_ic=ic, target_vce=vce_t,
                      ideal=ideal, temp=temp, beta_ref=beta_ref, vbe_ref=vbe_ref,
                      limits={"beta_min": beta_min, "beta_max": beta_max, "temp_min": temp_min,
                              "temp_max": temp_max, "tol": tol},
                      settings={"vbe_tc": vbe_tc, "beta_tc": beta_tc, "t_ref": t_ref, "vce_sat": vce_sat,
                                "ve_fraction": ve_fraction, "divider_factor": divider_factor},
                      candidates=m, ve=float(op["ve"][k, 0]),
                      divider_ratio=None if ratio is None else float(ratio[k]), beta_low=float(beta_low),
                      rule=rule, notes=tuple(notes), warnings=tuple(warnings),
                      ratings={"pmax": pmax, "vceo": vceo})


def _neighbour_of(x, ideal: float, series: str) -> np.ndarray:
    """Whether each ``x`` (ohm) is one of the two series neighbours of ``ideal`` (within a relative 1e-9)."""
    pair = np.array(neighbours(ideal, series))
    return np.any(np.abs(np.asarray(x, dtype=float)[..., None] / pair - 1.0) <= 1e-9, axis=-1)


def _num(x: float) -> str:
    """A float as TOML (``repr`` is valid TOML for finite floats)."""
    return repr(float(x))


def design_toml(design: BiasDesign, *, device: str = "npn", description: str | None = None) -> str:
    """A TOML bias file for the designed network (text only; the caller writes it).

    The file holds the flat keys ``device``, ``beta`` (nominal, at the reference temperature),
    ``vbe`` (at the reference temperature), ``temp``, ``vbe_tc``, ``beta_tc``, ``vce_sat``, the
    spread limits ``beta_min``, ``beta_max``, ``temp_min``, ``temp_max``, the ratings ``pmax`` and
    ``vceo`` when the design was given them, and a ``[network]``
    table with ``type``, ``vcc``, the resistors (ohm) and ``tol`` (in %).  Values are SI numbers
    (percentages as ``"5%"``), so the file reads back to the same floats.

    Parameters
    ----------
    design : BiasDesign
    device : {'npn', 'pnp'}
    description : str or None
        A note written as the ``description`` key.
    """
    if device not in ("npn", "pnp"):
        raise InputError(f"device: expected npn or pnp for a bias network, got {device!r}")
    d = design
    s = d.settings
    lines = [f"# Bias design: {d.network.kind} network from {format_si(d.network.vcc, 'V')}, target IC "
             f"{format_si(d.target_ic, 'A')}, {d.series} resistors (written by devmodels).",
             f"# Nominal point: IC = {format_si(d.ic, 'A')}, VCE = {format_si(d.vce, 'V')}; worst case IC "
             f"{format_si(d.worst['ic']['min'], 'A')} .. {format_si(d.worst['ic']['max'], 'A')}, VCE "
             f"{format_si(d.worst['vce']['min'], 'V')} .. {format_si(d.worst['vce']['max'], 'V')}."]
    if description is not None:
        lines.append("description = " + _toml_string(description))
    lines += [f'device = "{device}"',
              f"beta = {_num(d.beta_ref)}",
              f"vbe = {_num(d.vbe_ref)}",
              f"temp = {_num(d.temp)}",
              f"vbe_tc = {_num(s['vbe_tc'])}",
              f'beta_tc = "{s["beta_tc"] * 100:.12g}%/K"',
              f"vce_sat = {_num(s['vce_sat'])}",
              f"beta_min = {_num(d.limits['beta_min'])}",
              f"beta_max = {_num(d.limits['beta_max'])}",
              f"temp_min = {_num(d.limits['temp_min'])}",
              f"temp_max = {_num(d.limits['temp_max'])}"]
    for name, unit in (("pmax", "W"), ("vceo", "V")):
        if d.ratings.get(name) is not None:
            lines.append(f"{name} = {_num(d.ratings[name])}  # {format_si(d.ratings[name], unit)}")
    lines += ["",
              "[network]",
              f'type = "{d.network.kind}"',
              f"vcc = {_num(d.network.vcc)}"]
    for name, v in d.network.resistors.items():
        lines.append(f"{name} = {_num(v)}  # {format_si(v, 'ohm')}")
    lines.append(f'tol = "{d.network.tol * 100:.12g}%"')
    return "\n".join(lines) + "\n"


def _toml_string(text: str) -> str:
    out = ['"']
    for ch in str(text):
        if ch in '"\\':
            out.append("\\" + ch)
        elif ord(ch) < 0x20 or ord(ch) == 0x7F:
            out.append(f"\\u{ord(ch):04x}")
        else:
            out.append(ch)
    out.append('"')
    return "".join(out)

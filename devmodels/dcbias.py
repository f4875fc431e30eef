r"""DC operating point of a bipolar transistor in a resistive bias network.

Three networks, drawn for an npn with the supply :math:`V_{CC}` above ground:

``fixed``
    :math:`R_B` from :math:`V_{CC}` to the base, :math:`R_C` from :math:`V_{CC}` to the
    collector, :math:`R_E` (may be 0) from the emitter to ground.
``divider``
    :math:`R_1` from :math:`V_{CC}` to the base, :math:`R_2` from the base to ground,
    :math:`R_C` and :math:`R_E` as above.
``collector-feedback``
    :math:`R_B` from the collector to the base, :math:`R_C` from :math:`V_{CC}` to the
    collector (it carries :math:`I_C + I_B`), :math:`R_E` (may be 0) to ground.

Method: the base circuit is replaced by its Thevenin equivalent and the transistor by the
constant-VBE(on) model with :math:`I_C = \beta I_B` (the standard DC analysis of bias
networks: Sedra and Smith, *Microelectronic Circuits*, BJT DC analysis; Boylestad and
Nashelsky, *Electronic Devices and Circuit Theory*, ch. on DC biasing; both from memory):

.. math::
    V_{BB} = V_{CC}\frac{R_2}{R_1+R_2},\quad R_{BB} = R_1 \parallel R_2
    \quad(\text{fixed: } V_{BB}=V_{CC},\ R_{BB}=R_B),

.. math::
    I_B = \frac{V_{BB} - V_{BE}}{R_{BB} + (\beta+1)R_E},\qquad
    I_B = \frac{V_{CC} - V_{BE}}{R_B + (\beta+1)(R_C+R_E)}\ \ (\text{collector feedback}).

Regions:

* **cutoff** when that :math:`I_B \le 0` (the base cannot reach VBE(on)): no currents,
  :math:`V_C = V_{CC}`, the base at its open-circuit voltage.
* **saturation** when the active solution gives :math:`V_{CE}` below the threshold
  ``vce_sat``.  The point is then solved again with :math:`V_{CE} = ` ``vce_sat`` and
  :math:`V_{BE} = ` VBE(on) (the constant-VCE(sat) model, same texts), from the two loop
  equations

  .. math::
      (R_{BB}+R_E) I_B + R_E I_C = V_{BB} - V_{BE},\qquad
      R_E I_B + (R_C+R_E) I_C = V_{CC} - V_{CE(sat)};

  the forced gain :math:`I_C/I_B` is then below beta.  A collector-feedback network has
  :math:`V_{CE} = V_{BE} + I_B R_B \ge V_{BE}`, so it does not saturate unless
  ``vce_sat`` is set above VBE(on).
* **active** otherwise.

The dissipation is :math:`P = I_C V_{CE} + I_B V_{BE}` (collector and base junctions).

**pnp**: the pnp network is the mirror image of the npn one, with the supply at
:math:`-|V_{CC}|`.  The same equations are solved on magnitudes and every voltage (to
ground) and every current is reported with the opposite sign, so IC, IB, IE, VB, VE, VC and
VCE are all negative for a pnp in the active region (reference directions as for the npn:
into the collector and the base, out of the emitter).  The power is positive.  ``vcc`` may
be given for a pnp as a magnitude or as a negative value.

Every function here works on whole arrays (one operating point per element), so the
spread analysis (:mod:`devmodels.spread`) solves a million networks at once.
"""

from __future__ import annotations

import itertools
import math
from dataclasses import dataclass, field
from typing import Literal, get_args

import numpy as np

from .bias import DEFAULT_VCE_SAT, BipolarBias
from .exceptions import BiasError, InputError
from .temperature import BETA_TC_DEFAULT, T_REF, VBE_DEFAULT, VBE_TC_DEFAULT, beta_at, vbe_at
from .units import format_si
from .validate import check_number, meta

__all__ = ["NetworkKind", "NETWORK_KINDS", "REGIONS", "BiasNetwork", "OperatingPoint", "solve_arrays",
           "operating_point"]

NetworkKind = Literal["fixed", "divider", "collector-feedback"]
NETWORK_KINDS: tuple[str, ...] = get_args(NetworkKind)
#: Region names by the integer codes of :func:`solve_arrays`.
REGIONS: tuple[str, ...] = ("active", "saturation", "cutoff")

#: Resistors each network uses (the others must not be given).
_USES = {"fixed": ("rb", "rc", "re"), "divider": ("r1", "r2", "rc", "re"),
         "collector-feedback": ("rb", "rc", "re")}


@dataclass(frozen=True, slots=True)
class BiasNetwork:
    """A resistive bias network (topologies in the module docstring).

    Parameters
    ----------
    kind : {'fixed', 'divider', 'collector-feedback'}
        Topology.
    vcc : float
        Supply voltage in V (a magnitude; for a pnp a negative value is read as the pnp sign).
    rc : float
        Collector resistor in ohm (>= 0).
    re : float
        Emitter resistor in ohm (>= 0).
    rb : float or None
        Base resistor in ohm: from VCC (fixed) or from the collector (collector-feedback).
    r1, r2 : float or None
        Divider resistors in ohm: R1 from VCC to the base, R2 from the base to ground.
    tol : float
        Resistor tolerance as a fraction (0.05 for 5 %), the same for every resistor.
    """

    kind: NetworkKind = field(metadata=meta(
        "str", "Bias network: fixed, divider or collector-feedback.", 0.0, 0.0, key="type"))
    vcc: float = field(metadata=meta("V", "Supply voltage, V (a pnp may take it negative).", 1e-3, 1e5, zero=False))
    rc: float = field(default=0.0, metadata=meta("Ohm", "Collector resistor, ohm (default 0).", 1e-6, 1e15))
    re: float = field(default=0.0, metadata=meta("Ohm", "Emitter resistor, ohm (default 0).", 1e-6, 1e15))
    rb: float | None = field(default=None, metadata=meta(
        "Ohm", "Base resistor, ohm: from VCC (fixed) or from the collector (collector-feedback).", 1e-6, 1e15))
    r1: float | None = field(default=None, metadata=meta(
        "Ohm", "Divider resistor from VCC to the base, ohm.", 1e-6, 1e15))
    r2: float | None = field(default=None, metadata=meta(
        "Ohm", "Divider resistor from the base to ground, ohm.", 1e-6, 1e15))
    tol: float = field(default=0.0, metadata=meta(
        "%", "Resistor tolerance, % (e.g. 5).", 1e-9, 99.999999))

    def __post_init__(self) -> None:
        if self.kind not in NETWORK_KINDS:
            raise InputError(f"network: unknown bias network {self.kind!r}, expected one of "
                             f"{', '.join(NETWORK_KINDS)}")
        try:
            vcc = float(self.vcc)
        except (TypeError, ValueError):
            raise InputError(f"vcc: expected a supply voltage in V, got {self.vcc!r}") from None
        if not math.isfinite(vcc) or vcc == 0:
            raise InputError(f"vcc: expected a non-zero supply voltage in V, got {vcc:g}")
        object.__setattr__(self, "vcc", vcc)
        uses = _USES[self.kind]
        for name in ("rb", "r1", "r2"):
            v = getattr(self, name)
            if name in uses:
                if v is None:
                    need = "r1 and r2" if self.kind == "divider" else "rb"
                    raise InputError(f"{name}: missing; a {self.kind} network needs {need} (ohm)")
                object.__setattr__(self, name, check_number(name, v, "ohm", positive=True))
            elif v is not None:
                raise InputError(f"{name}: not part of a {self.kind} network (it uses "
                                 f"{', '.join(uses)})")
        object.__setattr__(self, "rc", check_number("rc", self.rc, "ohm", nonneg=True))
        object.__setattr__(self, "re", check_number("re", self.re, "ohm", nonneg=True))
        tol = float(self.tol)
        if not (math.isfinite(tol) and 0 <= tol < 1):
            raise InputError(f"tol: expected a resistor tolerance from 0 to below 100 %, got {tol * 100:g} %")
        object.__setattr__(self, "tol", tol)

    @property
    def resistors(self) -> dict[str, float]:
        """The resistors this network uses, in ohm."""
        return {name: getattr(self, name) for name in _USES[self.kind]}


def solve_arrays(kind: str, vcc, beta, vbe, *, rc, re, rb=None, r1=None, r2=None,
                 vce_sat=DEFAULT_VCE_SAT) -> dict[str, np.ndarray]:
    """Operating points of many networks of one topology (magnitudes, npn orientation).

    Parameters
    ----------
    kind : str
        Network topology (see :class:`BiasNetwork`).
    vcc : float or ndarray
        Supply magnitude in V.
    beta, vbe : float or ndarray
        DC current gain and VBE(on) in V, at the temperature of each point.
    rc, re, rb, r1, r2 : float or ndarray
        Resistors in ohm (those the topology uses).
    vce_sat : float
        Saturation threshold and VCE in saturation, in V.

    Returns
    -------
    dict of ndarray
        ``ic, ib, ie, vb, ve, vc, vce, power`` (A, V, W) and ``region`` (int8 codes into
        :data:`REGIONS`), all broadcast to one shape.
    """
    vcc, beta, vbe, rc, re = (np.asarray(x, dtype=float) for x in (vcc, beta, vbe, rc, re))
    if kind == "collector-feedback":
        rb = np.asarray(rb, dtype=float)
        vbb, rbb = vcc, rb
        ib = (vcc - vbe) / (rb + (beta + 1) * (rc + re))
    else:
        if kind == "divider":
            r1, r2 = np.asarray(r1, dtype=float), np.asarray(r2, dtype=float)
            vbb, rbb = vcc * r2 / (r1 + r2), r1 * r2 / (r1 + r2)
        else:
            vbb, rbb = vcc, np.asarray(rb, dtype=float)
        ib = (vbb - vbe) / (rbb + (beta + 1) * re)
    cutoff = ib <= 0
    ib = np.where(cutoff, 0.0, ib)
    ic = beta * ib
    ie = ic + ib
    ve = ie * re
    vc = vcc - (ie if kind == "collector-feedback" else ic) * rc
    vce = vc - ve
    sat = ~cutoff & (vce < vce_sat)
    if np.any(sat):
        if kind == "collector-feedback":
            # VCE = vce_sat fixes IE; the base loop VC - IB RB = VBE + VE gives IB.
            ie_s = (vcc - vce_sat) / (rc + re)
            ib_s = (vce_sat - vbe) / rb
            ic_s = ie_s - ib_s
        else:
            det = (rbb + re) * (rc + re) - re * re
            det = np.where(det == 0, np.nan, det)
            ib_s = ((vbb - vbe) * (rc + re) - re * (vcc - vce_sat)) / det
            ic_s = ((rbb + re) * (vcc - vce_sat) - re * (vbb - vbe)) / det
        ib = np.where(sat, ib_s, ib)
        ic = np.where(sat, ic_s, ic)
        ie = ic + ib
        ve = ie * re
        vc = vcc - (ie if kind == "collector-feedback" else ic) * rc
        vce = vc - ve
    vb = np.where(cutoff, vbb, ve + vbe)
    region = np.where(cutoff, 2, np.where(sat, 1, 0)).astype(np.int8)
    power = ic * vce + ib * np.where(cutoff, 0.0, vbe)
    out = {"ic": ic, "ib": ib, "ie": ie, "vb": vb, "ve": ve, "vc": vc, "vce": vce, "power": power,
           "region": region}
    shape = np.broadcast_shapes(*(np.shape(v) for v in out.values()))
    return {k: np.broadcast_to(v, shape) for k, v in out.items()}


@dataclass(frozen=True, slots=True)
class OperatingPoint:
    """DC operating point of a transistor in a bias network.

    Voltages are to ground and currents use the npn reference directions (into the
    collector and the base, out of the emitter): all are negative for an active pnp
    (see the module docstring).  Units: A, V, W, K.

    Attributes
    ----------
    network : BiasNetwork
    device : {'npn', 'pnp'}
    region : {'active', 'saturation', 'cutoff'}
    ic, ib, ie, vb, ve, vc, vce : float
    power : float
        Transistor dissipation IC VCE + IB VBE in W.
    beta, vbe : float
        Current gain and VBE(on) (V) used, at ``temp``.
    temp : float
        Junction temperature in K.
    vce_sat : float
        Saturation threshold in V.
    tol_range : dict or None
        With a resistor tolerance: ``{"ic": (min, max), "vce": (min, max), "power": (min, max),
        "regions": (...)}`` over every corner of the resistors (magnitudes).
    warnings : tuple of str
        Ratings exceeded (power, breakdown) and other cautions, as sentences.
    """

    network: BiasNetwork
    device: str
    region: str
    ic: float
    ib: float
    ie: float
    vb: float
    ve: float
    vc: float
    vce: float
    power: float
    beta: float
    vbe: float
    temp: float
    vce_sat: float
    tol_range: dict | None = None
    warnings: tuple[str, ...] = field(default=())

    def bipolar_bias(self, **datasheet) -> BipolarBias:
        """The :class:`~devmodels.bias.BipolarBias` at this point (magnitudes of IC and VCE).

        ``datasheet`` holds the other keyword arguments of :class:`BipolarBias` (``va``,
        ``ft``, ``cmu``, ``rb``, ...); ``beta``, ``temp``, ``device`` and ``vce_sat`` come from
        this point.

        Raises
        ------
        BiasError
            When the network does not put the transistor in the active region.
        """
        if self.region != "active":
            raise BiasError(
                f"network: the {self.network.kind} network puts the transistor in {self.region} "
                f"(IC = {abs(self.ic):.4g} A, VCE = {abs(self.vce):.4g} V); a small-signal model "
                "needs the forward-active region")
        return BipolarBias(ic=abs(self.ic), vce=abs(self.vce), beta=self.beta, device=self.device,
                           temp=self.temp, vce_sat=self.vce_sat, **datasheet)

    def as_dict(self) -> dict:
        """The values as a plain dict (SI floats, region as text)."""
        return {"ic": self.ic, "ib": self.ib, "ie": self.ie, "vb": self.vb, "ve": self.ve,
                "vc": self.vc, "vce": self.vce, "region": self.region, "power": self.power}


def rating_warnings(power: float, vce: float, vcc: float, *, pmax: float | None = None,
                    vceo: float | None = None, where: str = "") -> list[str]:
    """Sentences for every rating exceeded.

    Parameters
    ----------
    power : float
        Dissipation in W.
    vce : float
        Collector-emitter (drain-source) voltage magnitude in V.
    vcc : float
        Supply magnitude in V (a cut-off transistor sees all of it; 0: no network).
    pmax, vceo : float or None
        The power rating in W and the breakdown rating VCEO in V (None: not given).
    where : str
        Words that qualify the sentences (e.g. " at the worst sample").
    """
    out = []
    burn = "a part run hot or overstressed can fail and burn: check the datasheet and the circuit"
    if pmax is not None and power > pmax:
        out.append(f"power: the transistor dissipates {format_si(power, 'W')}{where}, above its rating "
                   f"pmax = {format_si(pmax, 'W')} (before any derating for temperature); {burn}")
    if vceo is not None:
        if vce > vceo:
            out.append(f"vce: VCE = {format_si(vce, 'V')}{where} is above the breakdown rating "
                       f"vceo = {format_si(vceo, 'V')}; {burn}")
        elif vcc > vceo:
            out.append(f"vcc: the supply {format_si(vcc, 'V')} is above the breakdown rating "
                       f"vceo = {format_si(vceo, 'V')}; "
                       f"whenever the transistor is cut off (at power-up, on a large signal) its VCE "
                       f"approaches the supply; {burn}")
    return out


def operating_point(network: BiasNetwork, beta: float, *, device: str = "npn", vbe: float = VBE_DEFAULT,
                    temp: float = T_REF, vbe_tc: float = VBE_TC_DEFAULT, beta_tc: float = BETA_TC_DEFAULT,
                    t_ref: float = T_REF, vce_sat: float = DEFAULT_VCE_SAT, pmax: float | None = None,
                    vceo: float | None = None) -> OperatingPoint:
    """Solve a bias network (method and regions in the module docstring).

    Parameters
    ----------
    network : BiasNetwork
        The network.
    beta : float
        DC current gain at ``t_ref`` (moved to ``temp`` by ``beta_tc``).
    device : {'npn', 'pnp'}
        Polarity (pnp: mirrored signs).
    vbe : float
        VBE(on) magnitude at ``t_ref``, in V (moved to ``temp`` by ``vbe_tc``).
    temp : float
        Junction temperature in K.
    vbe_tc : float
        Temperature coefficient of VBE(on), V/K.
    beta_tc : float
        Fractional temperature coefficient of beta, per K.
    t_ref : float
        Temperature of the given ``beta`` and ``vbe``, in K.
    vce_sat : float
        Saturation threshold (and VCE in saturation), V.
    pmax : float or None
        Power rating in W; a warning when the dissipation is above it.
    vceo : float or None
        Collector-emitter breakdown rating in V; a warning when VCE (or the supply) is above it.

    Returns
    -------
    OperatingPoint
        The point, whatever its region (cutoff and saturation are results, not errors).
    """
    if device not in ("npn", "pnp"):
        raise InputError(f"device: expected npn or pnp for a bias network, got {device!r}")
    if network.vcc < 0 and device == "npn":
        raise InputError(f"vcc: expected a positive supply for an npn, got {network.vcc:g} V "
                         "(a negative supply is for a pnp: give --device pnp)")
    for name, v in (("beta", beta), ("vbe", vbe), ("temp", temp), ("t_ref", t_ref)):
        if not (math.isfinite(v) and v > 0):
            raise InputError(f"{name}: expected a positive value, got {v:g}")
    if not (math.isfinite(vce_sat) and vce_sat >= 0):
        raise InputError(f"vce_sat: expected a value >= 0 V, got {vce_sat:g}")
    for name, v in (("pmax", pmax), ("vceo", vceo)):
        if v is not None and not (math.isfinite(v) and v > 0):
            raise InputError(f"{name}: expected a positive rating, got {v:g}")
    vcc = abs(network.vcc)
    if vcc <= vce_sat:
        raise InputError(f"vcc: the supply {vcc:g} V is not above the saturation threshold "
                         f"vce_sat = {vce_sat:g} V")
    b = beta_at(temp, beta, beta_tc, t_ref)
    v = vbe_at(temp, vbe, vbe_tc, t_ref)
    if v <= 0:
        raise InputError(f"vbe: VBE(on) comes out {v:g} V at {temp:g} K; check vbe and vbe_tc")
    res = {k: float(x) for k, x in solve_arrays(network.kind, vcc, b, v, vce_sat=vce_sat,
                                                **network.resistors).items()}
    region = REGIONS[int(res.pop("region"))]
    warnings = rating_warnings(res["power"], res["vce"], vcc, pmax=pmax, vceo=vceo)
    tol_range = None
    if network.tol > 0:
        names = list(network.resistors)
        corners = np.array(list(itertools.product((1 - network.tol, 1 + network.tol), repeat=len(names))))
        rs = {n: network.resistors[n] * corners[:, i] for i, n in enumerate(names)}
        c = solve_arrays(network.kind, vcc, b, v, vce_sat=vce_sat, **rs)
        tol_range = {k: (float(c[k].min()), float(c[k].max())) for k in ("ic", "vce", "power")}
        tol_range["regions"] = tuple(REGIONS[i] for i in sorted(set(c["region"].tolist())))
        seen = {w.split(":")[0] for w in warnings}
        for w in rating_warnings(tol_range["power"][1], tol_range["vce"][1], vcc, pmax=pmax, vceo=vceo,
                                 where=f" at a corner of the {network.tol * 100:g} % resistor tolerance"):
            if w.split(":")[0] not in seen:
                warnings.append(w)
    sign = -1.0 if device == "pnp" else 1.0
    signed = {k: (sign * x + 0.0 if k != "power" else x) for k, x in res.items()}  # + 0.0: no -0.0
    return OperatingPoint(network=network, device=device, region=region, beta=b, vbe=v, temp=float(temp),
                          vce_sat=vce_sat, tol_range=tol_range, warnings=tuple(warnings), **signed)

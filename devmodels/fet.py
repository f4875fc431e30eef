r"""Field-effect transistors: the small-signal model (bias points are in :mod:`devmodels.fetbias`).

The element values come from a bias point by the square laws written in
:mod:`devmodels.fetbias` (MOSFET: gm = 2 ID / Vov, ro = 1/(lambda ID),
gmb = gamma gm / (2 sqrt(2 phi_F + VSB)); JFET: gm = (2/|VP|) sqrt(ID IDSS)).

Small-signal model (node order g, d, s; the body b of a MOSFET is at AC ground, which
in a stage is the common terminal of the configuration): gate resistance ``rg`` in
series with the gate, Cgs (g'-s'), Cgd (g'-d'), ro (d'-s'), gm v_g's' and gmb v_bs'
from d' to s', Csb (s'-b), Cdb (d'-b), drain and source ohmic resistances ``rdx``,
``rsx``, and optional lead inductances ``l_g``, ``l_d``, ``l_s`` in series with each terminal
outside those resistances (as for the bipolar model, :mod:`devmodels.models`).  A p-channel
device has the same small-signal model as an n-channel one.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import ClassVar

import numpy as np

from .constants import BOLTZMANN, FET_CONFIGS
from .exceptions import InputError
from .fetbias import FET_DEVICES, JfetBias, MosfetBias
from .models import check_elements, terminal_series
from .netlist import Netlist, capacitor, noise_current, optional, resistor, thermal_noise, vccs

__all__ = ["FetModel", "fet_values"]

_INF = math.inf


def fet_values(i_d, *, vov=None, kn=None, idss=None, vp=None, lambda_=None, gamma=None,
               two_phi_f: float = 0.7, vsb: float = 0.0) -> dict:
    """gm, gmb and ro at a drain current by the square laws (module docstring of :mod:`devmodels.fetbias`).

    The one place these relations are written; scalars and arrays of samples alike.  A JFET is
    given by ``idss`` and ``vp`` (gm = (2/|VP|) sqrt(ID IDSS), no body effect), a MOSFET by
    ``vov`` (gm = 2 ID/Vov) or ``kn`` (gm = sqrt(2 kn ID)), with gmb = gamma gm /
    (2 sqrt(2 phi_F + VSB)) when ``gamma`` is given.

    Parameters
    ----------
    i_d : float or ndarray
        Drain current magnitude in A.
    vov, kn, idss, vp : float, ndarray or None
        Overdrive (V), transconductance parameter (A/V^2), IDSS (A) and pinch-off voltage (V).
    lambda_ : float, ndarray or None
        Channel-length modulation in 1/V (None: ro infinite).
    gamma : float or None
        Body-effect coefficient in V^0.5 (None: no body effect).
    two_phi_f, vsb : float
        Surface potential 2 phi_F and source-body voltage in V.
    """
    if idss is not None:
        gm = 2.0 / np.abs(vp) * np.sqrt(i_d * np.asarray(idss))
        gmb = 0.0
    else:
        gm = np.sqrt(2.0 * np.asarray(kn) * i_d) if kn is not None else 2.0 * i_d / np.asarray(vov)
        gmb = 0.0 if gamma is None else gamma * gm / (2 * math.sqrt(two_phi_f + vsb))
    ro = _INF if lambda_ is None else 1.0 / (np.asarray(lambda_) * i_d)
    return {"gm": gm, "gmb": gmb, "ro": ro}


@dataclass(frozen=True, slots=True)
class FetModel:
    """Small-signal model of a FET (MOSFET or JFET), SI units.

    Parameters
    ----------
    gm : float
        Transconductance in S.
    gmb : float
        Body transconductance in S (0: no body effect; always 0 for a JFET).
    ro : float
        Output resistance in ohm (``math.inf`` for none).
    cgs, cgd, csb, cdb : float
        Capacitances in F.
    rg, rdx, rsx : float
        Gate, drain and source series resistances in ohm.
    device : str
        ``nmos``, ``pmos``, ``njfet`` or ``pjfet``.
    vov : float or None
        Overdrive voltage at the bias point in V.
    gamma_n : float
        Channel thermal-noise coefficient: the drain noise density is 4 k T gamma_n gm
        (2/3 for a long channel in saturation; van der Ziel, *Noise in Solid State Devices
        and Circuits*, 1986; from memory).
    flicker_corner : float
        Corner frequency in Hz of the 1/f part of the drain noise (0: none).
    temp : float
        Temperature of the device and its noise in K.
    l_g, l_d, l_s : float
        Gate, drain and source lead inductances in H, in series with each terminal outside
        rg, rdx, rsx (0: none).
    """

    gm: float
    gmb: float = 0.0
    ro: float = _INF
    cgs: float = 0.0
    cgd: float = 0.0
    csb: float = 0.0
    cdb: float = 0.0
    rg: float = 0.0
    rdx: float = 0.0
    rsx: float = 0.0
    device: str = "nmos"
    vov: float | None = None
    gamma_n: float = 2.0 / 3.0
    flicker_corner: float = 0.0
    temp: float = 300.0
    l_g: float = 0.0
    l_d: float = 0.0
    l_s: float = 0.0

    #: Device family, configurations, terminal names (port order of the indefinite matrix).
    family: ClassVar[str] = "fet"
    configs: ClassVar[tuple[str, ...]] = FET_CONFIGS
    terminals: ClassVar[tuple[str, str, str]] = ("g", "d", "s")
    #: The body node, which a stage ties to its common terminal (AC ground).
    tied_to_common: ClassVar[tuple[str, ...]] = ("body",)
    #: Every element name the netlist may hold.
    element_names: ClassVar[tuple[str, ...]] = ("gm", "gmb", "ro", "cgs", "cgd", "csb", "cdb", "rg", "rdx",
                                                "rsx", "l_g", "l_d", "l_s")
    #: The usual textbook set, the default of a formula.
    textbook_elements: ClassVar[tuple[str, ...]] = ("gm", "gmb", "ro", "cgs", "cgd")

    def __post_init__(self) -> None:
        check_elements(self, positive=("gm", "gamma_n", "temp"),
                       nonneg=("gmb", "cgs", "cgd", "csb", "cdb", "rg", "rdx", "rsx", "flicker_corner", "l_g",
                               "l_d", "l_s"),
                       resist=("ro",))
        if self.device not in FET_DEVICES:
            raise InputError(f"device: expected one of {', '.join(FET_DEVICES)}, got {self.device!r}")

    @classmethod
    def from_bias(cls, bias: MosfetBias | JfetBias) -> "FetModel":
        """Element values at a bias point (relations in the module docstring)."""
        if isinstance(bias, MosfetBias):
            v = fet_values(bias.id, vov=bias.vov, lambda_=bias.lambda_, gamma=bias.gamma,
                           two_phi_f=bias.two_phi_f, vsb=bias.vsb)
        elif isinstance(bias, JfetBias):
            v = fet_values(bias.id, idss=bias.idss, vp=bias.vp, lambda_=bias.lambda_)
        else:
            raise InputError(f"bias: expected a MosfetBias or a JfetBias, got {type(bias).__name__}")
        return cls(gm=float(v["gm"]), gmb=float(v["gmb"]), ro=float(v["ro"]), cgs=bias.cgs, cgd=bias.cgd,
                   csb=bias.csb, cdb=bias.cdb, rg=bias.rg, device=bias.device, vov=bias.vov, l_g=bias.l_g,
                   l_d=bias.l_d, l_s=bias.l_s)

    @property
    def temperature(self) -> float:
        """Temperature of the device and its noise sources in K."""
        return self.temp

    @property
    def is_jfet(self) -> bool:
        """True for a JFET (njfet, pjfet)."""
        return self.device.endswith("jfet")

    @property
    def ft(self) -> float | None:
        """Transition frequency gm / (2 pi (Cgs + Cgd)) in Hz; ``None`` without capacitance."""
        c = self.cgs + self.cgd
        return None if c <= 0 else self.gm / (2 * math.pi * c)

    @property
    def intrinsic_gain(self) -> float:
        """gm ro (``math.inf`` without ro)."""
        return self.gm * self.ro

    @classmethod
    def placeholder(cls, present) -> "FetModel":
        """A model whose netlist holds exactly the elements named in ``present`` (values 1).

        Used by the symbolic back end, which needs only the names; ``gm`` is always there.
        """
        absent = {"gmb": 0.0, "ro": _INF, "cgs": 0.0, "cgd": 0.0, "csb": 0.0, "cdb": 0.0, "rg": 0.0,
                  "rdx": 0.0, "rsx": 0.0, "l_g": 0.0, "l_d": 0.0, "l_s": 0.0}
        return cls(gm=1.0, **{k: 1.0 if k in present else v for k, v in absent.items()})

    def miller_parts(self) -> dict[str, float]:
        """gm, r_shunt (none: inf), r_series = rg, c_in = Cgs, c_fb = Cgd, ro: the Miller estimate's inputs."""
        return {"gm": self.gm, "r_shunt": _INF, "r_series": self.rg, "c_in": self.cgs, "c_fb": self.cgd,
                "ro": self.ro}

    def netlist(self) -> Netlist:
        """The model's elements between g, d, s, the body node and internal nodes g', d', s'.

        The body is the node ``body``; a stage ties it to its common terminal.  A zero series
        resistance (rg, rdx, rsx) is no element; a lead inductance (l_g, l_d, l_s) sits between
        the terminal and its resistance (none when 0).  Noise sources: the channel's thermal noise
        4 k T gamma_n gm from d' to s' (with its 1/f part above ``flicker_corner``) and the
        thermal noise of rg, rdx, rsx.
        """
        elements, (g, d, s) = terminal_series(
            {"g": ("l_g", self.l_g), "d": ("l_d", self.l_d), "s": ("l_s", self.l_s)},
            {"g": ("rg", self.rg), "d": ("rdx", self.rdx), "s": ("rsx", self.rsx)})
        elements += [*optional(capacitor("cgs", g, s, self.cgs)),
                     *optional(capacitor("cgd", g, d, self.cgd)),
                     *optional(resistor("ro", d, s, self.ro)),
                     vccs("gm", d, s, g, s, self.gm),
                     *optional(vccs("gmb", d, s, "body", s, self.gmb)),
                     *optional(capacitor("csb", s, "body", self.csb)),
                     *optional(capacitor("cdb", d, "body", self.cdb))]
        noise = [n for el in elements if el.name in ("rg", "rdx", "rsx") for n in thermal_noise(el, self.temp)]
        channel = 4 * BOLTZMANN * self.temp * self.gamma_n * np.asarray(self.gm)
        noise.append(noise_current("noise_channel", d, s, channel))
        if np.any(np.asarray(self.flicker_corner) > 0):
            noise.append(noise_current("flicker_channel", d, s, channel * self.flicker_corner, kind="flicker"))
        return Netlist(tuple(elements + noise))

r"""Small-signal models of a bipolar transistor: hybrid-pi and T.

Both models have the same terminal behaviour; each builds its own indefinite
admittance matrix (see :mod:`devmodels.indefinite`), and the tests check that the
two agree at every frequency.

Relations (Gray, Hurst, Lewis and Meyer, *Analysis and Design of Analog Integrated
Circuits*, ch. 1; Sedra and Smith, *Microelectronic Circuits*, ch. on BJTs, from memory):

.. math::
    V_T = kT/q,\quad g_m = I_C/V_T,\quad r_\pi = \beta/g_m,\quad r_o = V_A/I_C,
    \quad C_\pi = \frac{g_m}{2\pi f_T} - C_\mu,\quad
    \alpha = \frac{\beta}{\beta+1},\quad r_e = \alpha/g_m .

Optional lead inductances ``l_b``, ``l_c``, ``l_e`` (H) sit in series with each terminal,
outside the ohmic resistances (terminal -- lead inductance -- rb / rcx / rex -- internal
node), as in the usual packaged-transistor equivalent circuits of the RF texts (e.g.
Gonzalez, *Microwave Transistor Amplifiers*, ch. 1; from memory).  They are noiseless and
are left out at mid-band and at 0 Hz, where they are shorts (:mod:`devmodels.netlist`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import ClassVar

import numpy as np

from .bias import BipolarBias
from .constants import BJT_CONFIGS, BOLTZMANN, ELEMENTARY_CHARGE, thermal_voltage
from .exceptions import BiasError, InputError
from .netlist import (Element, Netlist, capacitor, inductor, noise_current, optional, resistor, series_node,
                      thermal_noise, vccs)

__all__ = ["HybridPi", "TModel", "hybrid_pi_values", "check_elements", "lead_node", "terminal_series",
           "without_leads", "LEADS"]

_INF = math.inf
#: Lead inductance names of a bipolar model, by terminal.
LEADS: dict[str, str] = {"b": "l_b", "c": "l_c", "e": "l_e"}


def lead_node(name: str, outer: str, value) -> tuple[list[Element], str]:
    """A series lead inductance from terminal ``outer`` to a node inside the package.

    Parameters
    ----------
    name : str
        The inductor's key (``l_b``, ``l_g``, ...).
    outer : str
        The terminal.
    value : float or ndarray
        Inductance in H; 0 for none (at every point, or at none).

    Returns
    -------
    (list of Element, str)
        The elements and the node the rest of the device connects to: ``outer + '_lead'``
        with an inductor, ``outer`` itself without.
    """
    there = optional(inductor(name, outer, outer + "_lead", value))
    return there, (outer + "_lead" if there else outer)


def without_leads(model):
    """``model`` with its lead inductances left out (0: shorts), as at 0 Hz and at mid-band.

    Any device model whose netlist holds inductors named like its fields (``l_b``, ``l_g``, ...);
    a model without them is returned as it is.

    Parameters
    ----------
    model : device model
        :class:`HybridPi`, :class:`TModel` or :class:`~devmodels.fet.FetModel`.
    """
    import dataclasses

    leads = {e.name: 0.0 for e in model.netlist().elements if e.kind == "inductor"}
    return dataclasses.replace(model, **leads) if leads else model


def terminal_series(leads: dict, resistances: dict) -> tuple[list[Element], tuple[str, ...]]:
    """Lead inductance then ohmic resistance at each terminal: the elements and the inner nodes.

    Parameters
    ----------
    leads : dict of str -> (str, float)
        Terminal -> (inductor name, inductance in H; 0 for none), in terminal order.
    resistances : dict of str -> (str, float)
        Terminal -> (resistor name, resistance in ohm; 0 for none); the inner node is the
        terminal's name with a prime (``b'``).

    Returns
    -------
    (list of Element, tuple of str)
        The elements and, per terminal, the node the rest of the device connects to.
    """
    elements: list[Element] = []
    inner = []
    for terminal, (lname, lvalue) in leads.items():
        more, node = lead_node(lname, terminal, lvalue)
        elements += more
        rname, rvalue = resistances[terminal]
        more, node = series_node(rname, node, terminal + "'", rvalue)
        elements += more
        inner.append(node)
    return elements, tuple(inner)


def check_elements(obj, positive=(), nonneg=(), resist=()) -> None:
    """Refuse element values that are not numbers in range (scalars or arrays).

    Parameters
    ----------
    obj : dataclass instance
        The model; values are read by attribute name.
    positive : names that must be finite and > 0.
    nonneg : names that must be finite and >= 0.
    resist : names of resistances that must be > 0 (``math.inf`` allowed: absent).
    """
    for names, test, what in ((positive, lambda v: np.isfinite(v) & (v > 0), "a finite value > 0"),
                              (nonneg, lambda v: np.isfinite(v) & (v >= 0), "a finite value >= 0"),
                              (resist, lambda v: ~np.isnan(v) & (v > 0), "a resistance > 0 ohm (inf: none)")):
        for name in names:
            value = getattr(obj, name)
            if isinstance(value, (bool, np.bool_)):
                raise InputError(f"{name}: expected a number, got {value!r}")
            try:
                v = np.asarray(value, dtype=float)
            except (TypeError, ValueError):
                raise InputError(f"{name}: expected a number, got {value!r}") from None
            ok = test(v)
            if not np.all(ok):
                bad = v[~ok].flat[0] if v.ndim else v
                raise InputError(f"{name}: expected {what}, got {float(bad):g}")


def _bipolar_noise(elements: list, temp, *, ic, ib, base, collector, flicker_corner=0.0) -> list[Element]:
    """Noise sources of a bipolar model: the ohmic resistors' thermal noise, base and collector shot noise."""
    q = ELEMENTARY_CHARGE
    out: list[Element] = []
    for el in elements:
        if el.name in ("rb", "rcx", "rex"):
            out += thermal_noise(el, temp)
    out.append(noise_current("shot_ib", base[0], base[1], 2 * q * np.asarray(ib)))
    if np.any(np.asarray(flicker_corner) > 0):
        out.append(noise_current("flicker_ib", base[0], base[1], 2 * q * np.asarray(ib) * flicker_corner,
                                 kind="flicker"))
    out.append(noise_current("shot_ic", collector[0], collector[1], 2 * q * np.asarray(ic)))
    return out


def hybrid_pi_values(ic, beta, temp, *, va=None, ft=None, cmu=0.0) -> dict:
    """gm, r_pi, ro, c_pi, vt at a bias point (relations in the module docstring).

    Works on scalars and on arrays of samples alike (the one place these relations are
    written).  ``c_pi`` is returned as computed, negative where fT is too high for C_mu
    (the caller refuses it).

    Parameters
    ----------
    ic : float or ndarray
        Collector current in A.
    beta : float or ndarray
        Small-signal current gain.
    temp : float or ndarray
        Junction temperature in K.
    va, ft : float or None
        Early voltage in V and transition frequency in Hz (None: absent).
    cmu : float
        C_mu in F.
    """
    vt = thermal_voltage(temp)
    gm = ic / vt
    return {"gm": gm, "r_pi": beta / gm, "ro": _INF if va is None else va / ic,
            "c_pi": 0.0 if ft is None else gm / (2 * math.pi * ft) - cmu, "vt": vt}


@dataclass(frozen=True, slots=True)
class HybridPi:
    """Hybrid-pi small-signal model; all values in SI units.

    Parameters
    ----------
    gm : float
        Transconductance in S.
    r_pi : float
        Base-emitter resistance in ohm.
    ro : float
        Output resistance in ohm (``math.inf`` for none).
    c_pi, c_mu : float
        Base-emitter and base-collector capacitances in F.
    rb : float
        Base spreading resistance in ohm.
    r_mu : float
        Base-collector resistance in ohm (``math.inf`` for none).
    rcx, rex : float
        Collector and emitter ohmic resistances in ohm.
    vt : float
        Thermal voltage in V at which the model was made (it also sets the temperature of
        the noise sources, T = q VT / k).
    flicker_corner : float
        Corner frequency in Hz of the 1/f part of the base current noise (0: none): the
        base noise density is 2 q IB (1 + flicker_corner / f).
    l_b, l_c, l_e : float
        Base, collector and emitter lead inductances in H, in series with each terminal
        outside rb, rcx, rex (0: none).
    """

    gm: float
    r_pi: float
    ro: float = _INF
    c_pi: float = 0.0
    c_mu: float = 0.0
    rb: float = 0.0
    r_mu: float = _INF
    rcx: float = 0.0
    rex: float = 0.0
    vt: float = thermal_voltage(300.0)
    flicker_corner: float = 0.0
    l_b: float = 0.0
    l_c: float = 0.0
    l_e: float = 0.0

    #: Device family, configurations, terminal names (port order of the indefinite matrix).
    family: ClassVar[str] = "bipolar"
    configs: ClassVar[tuple[str, ...]] = BJT_CONFIGS
    terminals: ClassVar[tuple[str, str, str]] = ("b", "c", "e")
    #: Nodes of the netlist that a stage ties to its common terminal (none for a bipolar).
    tied_to_common: ClassVar[tuple[str, ...]] = ()
    #: Every element name the netlist may hold.
    element_names: ClassVar[tuple[str, ...]] = ("gm", "r_pi", "ro", "c_pi", "c_mu", "rb", "r_mu", "rcx",
                                                "rex", "l_b", "l_c", "l_e")
    #: The usual textbook set, the default of a formula.
    textbook_elements: ClassVar[tuple[str, ...]] = ("gm", "r_pi", "ro", "rb", "c_pi", "c_mu")

    def __post_init__(self) -> None:
        check_elements(self, positive=("gm", "r_pi", "vt"),
                       nonneg=("c_pi", "c_mu", "rb", "rcx", "rex", "flicker_corner", "l_b", "l_c", "l_e"),
                       resist=("ro", "r_mu"))

    @property
    def temperature(self):
        """Junction temperature in K, q VT / k (the temperature of the noise sources)."""
        return self.vt * ELEMENTARY_CHARGE / BOLTZMANN

    @classmethod
    def from_bias(cls, bias: BipolarBias) -> "HybridPi":
        """Element values at a bias point (relations in the module docstring).

        Raises
        ------
        BiasError
            When C_pi comes out negative: fT is too high for the given C_mu.
        """
        v = hybrid_pi_values(bias.ic, bias.beta, bias.temp, va=bias.va, ft=bias.ft, cmu=bias.cmu)
        if v["c_pi"] < 0:
            ft_max = v["gm"] / (2 * math.pi * bias.cmu)
            raise BiasError(
                f"ft: {bias.ft:g} Hz is too high for cmu = {bias.cmu:g} F at ic = {bias.ic:g} A "
                f"(C_pi would be {v['c_pi']:g} F; fT must not exceed gm/(2 pi C_mu) = {ft_max:g} Hz)")
        r_mu = _INF if bias.rmu is None else bias.rmu
        return cls(gm=v["gm"], r_pi=v["r_pi"], ro=v["ro"], c_pi=v["c_pi"], c_mu=bias.cmu, rb=bias.rb,
                   r_mu=r_mu, rcx=bias.rcx, rex=bias.rex, vt=v["vt"], l_b=bias.l_b, l_c=bias.l_c, l_e=bias.l_e)

    @classmethod
    def placeholder(cls, present) -> "HybridPi":
        """A model whose netlist holds exactly the elements named in ``present`` (values 1).

        Used by the symbolic back end, which needs only the names.  ``gm`` and ``r_pi``
        are always there.
        """
        one = {n: 1.0 for n in present if n in cls.element_names}
        absent = {"ro": _INF, "r_mu": _INF, "c_pi": 0.0, "c_mu": 0.0, "rb": 0.0, "rcx": 0.0, "rex": 0.0,
                  "l_b": 0.0, "l_c": 0.0, "l_e": 0.0}
        return cls(gm=1.0, r_pi=1.0, **{k: one.get(k, v) for k, v in absent.items()})

    def miller_parts(self) -> dict[str, float]:
        """gm, r_shunt = r_pi, r_series = rb, c_in = C_pi, c_fb = C_mu, ro: the Miller estimate's inputs."""
        return {"gm": self.gm, "r_shunt": self.r_pi, "r_series": self.rb, "c_in": self.c_pi,
                "c_fb": self.c_mu, "ro": self.ro}

    def netlist(self) -> Netlist:
        """The model's elements between its terminals b, c, e and internal nodes b', c', e'.

        A zero series resistance (rb, rcx, rex) is no element: the terminal is the internal node.
        A lead inductance (l_b, l_c, l_e) sits between the terminal and its resistance (node
        ``b_lead``, ...; none when 0; noiseless).  Noise sources: the thermal noise of rb, rcx
        and rex (4kT/R), the shot noise of the base current 2 q IB from b' to e' (with its 1/f
        part above ``flicker_corner``) and of the collector current 2 q IC from c' to e',
        uncorrelated (Gray, Hurst, Lewis and Meyer, ch. 11; from memory).  r_pi and ro are not physical resistors: noiseless.
        """
        elements, (b, c, e) = terminal_series(
            {"b": ("l_b", self.l_b), "c": ("l_c", self.l_c), "e": ("l_e", self.l_e)},
            {"b": ("rb", self.rb), "c": ("rcx", self.rcx), "e": ("rex", self.rex)})
        elements += [resistor("r_pi", b, e, self.r_pi),
                     *optional(capacitor("c_pi", b, e, self.c_pi)),
                     *optional(resistor("r_mu", b, c, self.r_mu)),
                     *optional(capacitor("c_mu", b, c, self.c_mu)),
                     *optional(resistor("ro", c, e, self.ro)),
                     vccs("gm", c, e, b, e, self.gm)]
        elements += _bipolar_noise(elements, self.temperature, ic=self.gm * self.vt, ib=self.vt / self.r_pi,
                                   base=(b, e), collector=(c, e), flicker_corner=self.flicker_corner)
        return Netlist(tuple(elements))

    # --- derived quantities -------------------------------------------------------
    @property
    def beta(self) -> float:
        """Low-frequency current gain gm * r_pi."""
        return self.gm * self.r_pi

    @property
    def alpha(self) -> float:
        """Common-base current gain beta / (beta + 1)."""
        return self.beta / (self.beta + 1.0)

    @property
    def re(self) -> float:
        """Emitter resistance of the T model, alpha / gm, in ohm."""
        return self.alpha / self.gm

    @property
    def ft(self) -> float | None:
        """Transition frequency gm / (2 pi (C_pi + C_mu)) in Hz; ``None`` without capacitance."""
        c = self.c_pi + self.c_mu
        return None if c <= 0 else self.gm / (2 * math.pi * c)

    @property
    def f_beta(self) -> float | None:
        """Beta cut-off 1 / (2 pi r_pi (C_pi + C_mu)) in Hz; ``None`` without capacitance."""
        c = self.c_pi + self.c_mu
        return None if c <= 0 else 1.0 / (2 * math.pi * self.r_pi * c)

    def to_t(self) -> "TModel":
        """The T model with the same terminal behaviour."""
        return TModel(re=self.re, alpha=self.alpha, c_e=self.c_pi, ro=self.ro, c_mu=self.c_mu,
                      rb=self.rb, r_mu=self.r_mu, rcx=self.rcx, rex=self.rex, vt=self.vt, l_b=self.l_b,
                      l_c=self.l_c, l_e=self.l_e)


@dataclass(frozen=True, slots=True)
class TModel:
    r"""T small-signal model: emitter branch ``re || C_e``, controlled source alpha(jw) i_e.

    The emitter branch admittance is :math:`y_e = 1/r_e + j\omega C_e` and the
    collector source carries :math:`\alpha(j\omega)\, i_e` with
    :math:`\alpha(j\omega) = (\alpha/r_e) / y_e`, the usual single-pole alpha with
    :math:`\omega_\alpha = 1/(r_e C_e)` (Gray and Meyer, from memory).

    Parameters
    ----------
    re : float
        Emitter resistance alpha/gm in ohm.
    alpha : float
        Low-frequency common-base current gain.
    c_e : float
        Capacitance across re in F (equal to C_pi of the hybrid-pi).
    ro, c_mu, rb, r_mu, rcx, rex, vt, l_b, l_c, l_e : float
        As in :class:`HybridPi`.
    """

    re: float
    alpha: float
    c_e: float = 0.0
    ro: float = _INF
    c_mu: float = 0.0
    rb: float = 0.0
    r_mu: float = _INF
    rcx: float = 0.0
    rex: float = 0.0
    vt: float = thermal_voltage(300.0)
    l_b: float = 0.0
    l_c: float = 0.0
    l_e: float = 0.0

    @classmethod
    def from_bias(cls, bias: BipolarBias) -> "TModel":
        """T model at a bias point (through the hybrid-pi relations)."""
        return HybridPi.from_bias(bias).to_t()

    family: ClassVar[str] = "bipolar"
    configs: ClassVar[tuple[str, ...]] = BJT_CONFIGS
    terminals: ClassVar[tuple[str, str, str]] = ("b", "c", "e")
    tied_to_common: ClassVar[tuple[str, ...]] = ()
    element_names: ClassVar[tuple[str, ...]] = ("re", "gm", "c_e", "ro", "c_mu", "rb", "r_mu", "rcx", "rex",
                                                "l_b", "l_c", "l_e")

    def __post_init__(self) -> None:
        check_elements(self, positive=("re", "alpha", "vt"),
                       nonneg=("c_e", "c_mu", "rb", "rcx", "rex", "l_b", "l_c", "l_e"),
                       resist=("ro", "r_mu"))

    @property
    def temperature(self):
        """Junction temperature in K, q VT / k (the temperature of the noise sources)."""
        return self.vt * ELEMENTARY_CHARGE / BOLTZMANN

    def netlist(self) -> Netlist:
        """The T model's elements: re || C_e from b' to e', the source alpha i_e from c' into b'.

        The source is written as controlled by the branch voltage v(b'e'): its current is
        alpha i_e = (alpha/re) v(b'e') when C_e = 0; with C_e the branch current is
        y_e v(b'e') and the source alpha(jw) i_e = (alpha/re) v(b'e') still (module
        docstring), so its value is alpha/re (= gm of the hybrid-pi), named ``gm``.
        """
        elements, (b, c, e) = terminal_series(
            {"b": ("l_b", self.l_b), "c": ("l_c", self.l_c), "e": ("l_e", self.l_e)},
            {"b": ("rb", self.rb), "c": ("rcx", self.rcx), "e": ("rex", self.rex)})
        elements += [resistor("re", b, e, self.re),
                     *optional(capacitor("c_e", b, e, self.c_e)),
                     vccs("gm", c, b, b, e, self.alpha / self.re),
                     *optional(resistor("r_mu", b, c, self.r_mu)),
                     *optional(capacitor("c_mu", b, c, self.c_mu)),
                     *optional(resistor("ro", c, e, self.ro))]
        gm = self.alpha / self.re
        elements += _bipolar_noise(elements, self.temperature, ic=gm * self.vt,
                                   ib=gm * self.vt * (1 - self.alpha) / self.alpha, base=(b, e), collector=(c, e))
        return Netlist(tuple(elements))

r"""Field-effect transistors: square-law bias points (the small-signal model is in :mod:`devmodels.fet`).

MOSFET (``nmos``, ``pmos``) in saturation, with the convention

.. math::
    I_D = \frac{k_n}{2} V_{ov}^2,\qquad k_n = \mu C_{ox} W/L,\qquad V_{ov} = V_{GS} - V_t,

so that (Sedra and Smith, *Microelectronic Circuits*, MOSFET chapter; Razavi, *Design of
Analog CMOS Integrated Circuits*, ch. 2; both from memory)

.. math::
    g_m = \frac{2 I_D}{V_{ov}} = \sqrt{2 k_n I_D} = k_n V_{ov},\qquad
    r_o = \frac{1}{\lambda I_D},\qquad
    g_{mb} = \frac{\gamma\, g_m}{2\sqrt{2\phi_F + V_{SB}}} .

No ``lambda``: ro infinite.  No ``gamma``: no body effect (gmb = 0).  The surface
potential :math:`2\phi_F` defaults to 0.7 V (common practice, no source).

JFET (``njfet``, ``pjfet``), Shockley's square law (Shockley, "A unipolar field-effect
transistor", Proc. IRE 40, 1952; the forms below are in Sedra and Smith, JFET section,
from memory):

.. math::
    I_D = I_{DSS}\left(1 - \frac{V_{GS}}{V_P}\right)^2,\qquad
    g_m = \frac{2 I_{DSS}}{|V_P|}\left(1 - \frac{V_{GS}}{V_P}\right)
        = \frac{2}{|V_P|}\sqrt{I_D I_{DSS}},

and the overdrive :math:`V_{ov} = |V_{GS} - V_P| = |V_P|\sqrt{I_D/I_{DSS}}`, so
:math:`g_m = 2 I_D / V_{ov}` holds for both families.  Saturation needs
:math:`|V_{DS}| \ge V_{ov}` for both.

Small-signal model (node order g, d, s; the body b of a MOSFET is at AC ground, which
in a stage is the common terminal of the configuration): gate resistance ``rg`` in
series with the gate, Cgs (g'-s'), Cgd (g'-d'), ro (d'-s'), gm v_g's' and gmb v_bs'
from d' to s', Csb (s'-b), Cdb (d'-b), drain and source ohmic resistances ``rdx``,
``rsx``.  A p-channel device has the same small-signal model as an n-channel one.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Literal

from .exceptions import BiasError, InputError
from .validate import check_number as _num, lead_meta, meta, p_type_magnitudes

__all__ = ["MosfetBias", "JfetBias", "FET_DEVICES", "DEFAULT_SURFACE_POTENTIAL"]

#: FET device types.
FET_DEVICES: tuple[str, ...] = ("nmos", "pmos", "njfet", "pjfet")
#: Default surface potential 2 phi_F in V (common practice, no source: 0.6 V to 0.8 V is usual).
DEFAULT_SURFACE_POTENTIAL = 0.7


def _cap_meta(between: str) -> dict:
    """Field metadata of a FET capacitance (one text for the MOSFET and the JFET)."""
    return meta("F", f"{between} capacitance, F (default 0).", 1e-18, 1.0)


_RG_META = meta("Ohm", "Gate resistance, ohm (default 0).", 1e-6, 1e12)


def _check_common(obj, device_set: tuple[str, ...], family: str) -> None:
    if obj.device not in device_set:
        raise InputError(f"device: expected {' or '.join(device_set)} for a {family} bias point, "
                         f"got {obj.device!r}")
    id_ = _num("id", obj.id, "A")
    vds = _num("vds", obj.vds, "V")
    id_, vds = p_type_magnitudes(("id", "vds"), obj.device, id_, vds, obj.device.startswith("p"))
    if id_ <= 0:
        raise BiasError(f"id: expected a positive drain current in A, got {id_:g} "
                        "(not a saturation-region bias point)")
    if vds <= 0:
        raise BiasError(f"vds: expected a positive drain-source voltage in V, got {vds:g} "
                        "(not a saturation-region bias point)")
    object.__setattr__(obj, "id", id_)
    object.__setattr__(obj, "vds", vds)
    for name in ("cgs", "cgd", "csb", "cdb", "rg", "l_g", "l_d", "l_s"):
        unit = {"rg": "ohm", "l_g": "H", "l_d": "H", "l_s": "H"}.get(name, "F")
        object.__setattr__(obj, name, _num(name, getattr(obj, name), unit, nonneg=True))
    object.__setattr__(obj, "lambda_", _num("lambda", obj.lambda_, "1/V", positive=True, optional=True))


def _check_saturation(vds: float, vov: float) -> None:
    if vds < vov:
        raise BiasError(f"vds: {vds:g} V is below the overdrive voltage vov = {vov:g} V "
                        "(triode region, not a saturation-region bias point)")


@dataclass(frozen=True, slots=True)
class MosfetBias:
    """Bias point of a MOSFET in saturation, SI units.

    Parameters
    ----------
    id : float
        Drain current magnitude in A (a pmos may give ``id`` and ``vds`` both negative).
    vds : float
        Drain-source voltage magnitude in V.
    device : {'nmos', 'pmos'}
        Channel type.
    vov : float or None
        Overdrive voltage |VGS| - |Vt| in V.  Give ``vov`` or ``kn``, not both.
    kn : float or None
        Transconductance parameter mu Cox W/L in A/V^2, with ID = (kn/2) Vov^2.
    lambda_ : float or None
        Channel-length modulation in 1/V (``None``: ro infinite).
    gamma : float or None
        Body-effect coefficient in V^0.5 (``None``: no body effect).
    vsb : float
        Source-body voltage magnitude in V (>= 0, reverse bias).
    two_phi_f : float
        Surface potential 2 phi_F in V.
    cgs, cgd, csb, cdb : float
        Capacitances in F.
    rg : float
        Gate resistance in ohm.
    l_g, l_d, l_s : float
        Gate, drain and source lead inductances in H, in series with each terminal (0: none).
    """

    id: float = field(metadata=meta("A", "Drain current, A (e.g. 2mA).", 1e-15, 100.0))
    vds: float = field(metadata=meta("V", "Drain-source voltage, V (at least the overdrive).", 1e-6, 1e4))
    device: Literal["nmos", "pmos"] = "nmos"
    vov: float | None = field(default=None, metadata=meta(
        "V", "MOSFET overdrive |VGS| - |Vt|, V (or give --kn).", 1e-6, 100.0, zero=False))
    kn: float | None = field(default=None, metadata=meta(
        "A/V2", "MOSFET transconductance parameter mu Cox W/L, A/V^2, with ID = (kn/2) Vov^2.", 1e-12, 1e4, zero=False))
    lambda_: float | None = field(default=None, metadata=meta(
        "1/V", "Channel-length modulation, 1/V (default: none, ro infinite).", 1e-9, 1e3, key="lambda", zero=False))
    gamma: float | None = field(default=None, metadata=meta(
        "V0.5", "MOSFET body-effect coefficient, V^0.5 (default: none, no body effect).", 1e-6, 100.0))
    vsb: float = field(default=0.0, metadata=meta("V", "MOSFET source-body voltage, V (default 0).", 1e-9, 1e4))
    two_phi_f: float = field(default=DEFAULT_SURFACE_POTENTIAL, metadata=meta(
        "V", "MOSFET surface potential 2 phi_F (twice the Fermi potential), V (default 0.7 V).", 1e-3, 10.0))
    cgs: float = field(default=0.0, metadata=_cap_meta("Gate-source"))
    cgd: float = field(default=0.0, metadata=_cap_meta("Gate-drain"))
    csb: float = field(default=0.0, metadata=_cap_meta("Source-body"))
    cdb: float = field(default=0.0, metadata=_cap_meta("Drain-body"))
    rg: float = field(default=0.0, metadata=_RG_META)
    l_g: float = field(default=0.0, metadata=lead_meta("gate", "1nH"))
    l_d: float = field(default=0.0, metadata=lead_meta("drain"))
    l_s: float = field(default=0.0, metadata=lead_meta("source"))

    def __post_init__(self) -> None:
        _check_common(self, ("nmos", "pmos"), "MOSFET")
        vov = _num("vov", self.vov, "V", positive=True, optional=True)
        kn = _num("kn", self.kn, "A/V^2", positive=True, optional=True)
        if vov is not None and kn is not None:
            raise InputError("vov, kn: give one of them (the overdrive or the transconductance "
                             "parameter), not both")
        if vov is None and kn is None:
            raise InputError("vov: missing; give the overdrive voltage vov (V) or the "
                             "transconductance parameter kn (A/V^2)")
        if vov is None:
            vov = math.sqrt(2 * self.id / kn)  # ID = (kn/2) Vov^2
        _check_saturation(self.vds, vov)
        object.__setattr__(self, "vov", vov)
        object.__setattr__(self, "kn", kn)
        object.__setattr__(self, "gamma", _num("gamma", self.gamma, "V^0.5", nonneg=True, optional=True))
        vsb = _num("vsb", self.vsb, "V")
        if self.device == "pmos":
            vsb = abs(vsb)
        if vsb < 0:
            raise BiasError(f"vsb: expected a source-body voltage >= 0 V (body reverse biased), got {vsb:g}")
        object.__setattr__(self, "vsb", vsb)
        object.__setattr__(self, "two_phi_f", _num("two_phi_f", self.two_phi_f, "V", positive=True))


@dataclass(frozen=True, slots=True)
class JfetBias:
    """Bias point of a JFET in saturation, SI units.

    Parameters
    ----------
    id : float
        Drain current magnitude in A, 0 < id <= idss.
    vds : float
        Drain-source voltage magnitude in V.
    idss : float
        Drain current at VGS = 0 in A.
    vp : float
        Pinch-off voltage in V (negative for an n-channel device, positive for a p-channel
        one; only its magnitude is used).
    device : {'njfet', 'pjfet'}
        Channel type.
    lambda_ : float or None
        Channel-length modulation in 1/V (``None``: ro infinite).
    cgs, cgd, csb, cdb : float
        Capacitances in F (csb, cdb: source and drain to substrate, usually 0).
    rg : float
        Gate resistance in ohm.
    l_g, l_d, l_s : float
        Gate, drain and source lead inductances in H, in series with each terminal (0: none).
    """

    id: float = field(metadata=meta("A", "Drain current, A (e.g. 2mA).", 1e-15, 100.0))
    vds: float = field(metadata=meta("V", "Drain-source voltage, V (at least the overdrive).", 1e-6, 1e4))
    idss: float = field(metadata=meta("A", "JFET drain current at VGS = 0, A.", 1e-15, 100.0, zero=False))
    vp: float = field(metadata=meta(
        "V", "JFET pinch-off voltage, V (e.g. -2V for an n-channel).", 1e-3, 1e3, zero=False))
    device: Literal["njfet", "pjfet"] = "njfet"
    lambda_: float | None = field(default=None, metadata=meta(
        "1/V", "Channel-length modulation, 1/V (default: none, ro infinite).", 1e-9, 1e3, key="lambda", zero=False))
    cgs: float = field(default=0.0, metadata=_cap_meta("Gate-source"))
    cgd: float = field(default=0.0, metadata=_cap_meta("Gate-drain"))
    csb: float = field(default=0.0, metadata=_cap_meta("Source-body"))
    cdb: float = field(default=0.0, metadata=_cap_meta("Drain-body"))
    rg: float = field(default=0.0, metadata=_RG_META)
    l_g: float = field(default=0.0, metadata=lead_meta("gate", "1nH"))
    l_d: float = field(default=0.0, metadata=lead_meta("drain"))
    l_s: float = field(default=0.0, metadata=lead_meta("source"))

    def __post_init__(self) -> None:
        _check_common(self, ("njfet", "pjfet"), "JFET")
        idss = _num("idss", self.idss, "A", positive=True)
        vp = _num("vp", self.vp, "V")
        if vp == 0:
            raise InputError("vp: expected a nonzero pinch-off voltage in V, got 0")
        if self.id > idss:
            raise BiasError(f"id: {self.id:g} A is above idss = {idss:g} A "
                            "(the gate junction would be forward biased)")
        object.__setattr__(self, "idss", idss)
        object.__setattr__(self, "vp", vp)
        _check_saturation(self.vds, self.vov)

    @property
    def vov(self) -> float:
        """Overdrive |VGS - VP| = |VP| sqrt(ID/IDSS) in V."""
        return abs(self.vp) * math.sqrt(self.id / self.idss)

    @property
    def vgs(self) -> float:
        """Gate-source voltage VP (1 - sqrt(ID/IDSS)) in V, with the sign of VP."""
        return self.vp * (1.0 - math.sqrt(self.id / self.idss))

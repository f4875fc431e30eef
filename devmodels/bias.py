"""Bias points of bipolar transistors, as read off a datasheet.

A :class:`BipolarBias` holds the DC operating point (IC, VCE, temperature) and the
datasheet values needed by the small-signal model.  It refuses anything that is
not a forward-active bias point.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Literal

from .exceptions import BiasError, InputError
from .validate import check_number as _finite, lead_meta, meta, p_type_magnitudes

__all__ = ["BipolarBias", "DEFAULT_VCE_SAT", "DEFAULT_TEMP"]

#: Default VCE below which the transistor is taken to be saturated, in V
#: (common practice, no source: 0.2 V to 0.3 V is the usual small-signal figure).
DEFAULT_VCE_SAT = 0.3
#: Default temperature in K.
DEFAULT_TEMP = 300.0


@dataclass(frozen=True, slots=True)
class BipolarBias:
    """Bias point and datasheet values of a bipolar transistor.

    Parameters
    ----------
    ic : float
        Collector current magnitude in A (for a pnp, a negative value is read as
        the pnp sign convention and its magnitude is used).
    vce : float
        Collector-emitter voltage magnitude in V (same sign rule as ``ic``).
    beta : float
        Small-signal current gain hfe at the bias point (dimensionless).
    device : {'npn', 'pnp'}
        Polarity.  The small-signal model of both is the same.
    va : float or None
        Early voltage in V; ``None`` means no output conductance (ro infinite).
    ft : float or None
        Transition frequency in Hz; ``None`` means no base-emitter capacitance.
    cmu : float
        Collector-base capacitance C_mu in F (datasheet Cob at the bias VCB).
    rb : float
        Base spreading resistance in ohm.
    temp : float
        Junction temperature in K.
    rmu : float or None
        Collector-base feedback resistance r_mu in ohm (``None``: infinite).
    rcx, rex : float
        Collector and emitter ohmic resistances in ohm.
    vce_sat : float
        VCE below which the point is taken to be saturated, in V.
    l_b, l_c, l_e : float
        Base, collector and emitter lead inductances in H, in series with each terminal
        (0: none; see :mod:`devmodels.models`).
    """

    ic: float = field(metadata=meta("A", "Collector current, A (e.g. 1mA).", 1e-15, 100.0))
    vce: float = field(metadata=meta("V", "Collector-emitter voltage, V (e.g. 5V).", 1e-6, 1e4))
    beta: float = field(metadata=meta("", "Current gain hFE (hfe) at the bias point, given at tref (moved to temp).", 1e-3, 1e6,
                                    zero=False))
    device: Literal["npn", "pnp"] = "npn"
    va: float | None = field(default=None, metadata=meta(
        "V", "Early voltage, V (default: none, ro infinite).", 1e-3, 1e6, zero=False))
    ft: float | None = field(default=None, metadata=meta(
        "Hz", "Transition frequency fT, Hz (e.g. 300MHz) (default: none, no C_pi).", 1.0, 1e13, zero=False))
    cmu: float = field(default=0.0, metadata=meta(
        "F", "Collector-base capacitance C_mu (datasheet Cob), F (default 0).", 1e-18, 1.0))
    rb: float = field(default=0.0, metadata=meta("Ohm", "Base spreading resistance, ohm (default 0).", 1e-6, 1e12))
    temp: float = field(default=DEFAULT_TEMP, metadata=meta(
        "K", "Junction temperature, K (300, 300K) or Celsius (27C) (default: tref, 300 K).", 1.0, 1000.0,
        zero=False))
    rmu: float | None = field(default=None, metadata=meta(
        "Ohm", "Collector-base resistance r_mu, ohm (default: none).", 1e-3, 1e18, zero=False))
    rcx: float = field(default=0.0, metadata=meta("Ohm", "Collector ohmic resistance, ohm (default 0).", 1e-6, 1e12))
    rex: float = field(default=0.0, metadata=meta("Ohm", "Emitter ohmic resistance, ohm (default 0).", 1e-6, 1e12))
    vce_sat: float = field(default=DEFAULT_VCE_SAT, metadata=meta(
        "V", "VCE below which the point counts as saturated, V (default 0.3 V).", 1e-6, 100.0))
    l_b: float = field(default=0.0, metadata=lead_meta("base", "1.2nH"))
    l_c: float = field(default=0.0, metadata=lead_meta("collector"))
    l_e: float = field(default=0.0, metadata=lead_meta("emitter"))

    def __post_init__(self) -> None:
        if self.device not in ("npn", "pnp"):
            raise InputError(f"device: expected npn or pnp for a bipolar bias point, got {self.device!r}")
        ic = _finite("ic", self.ic, "A")
        vce = _finite("vce", self.vce, "V")
        ic, vce = p_type_magnitudes(("ic", "vce"), self.device, ic, vce, self.device == "pnp")
        if ic <= 0:
            raise BiasError(f"ic: expected a positive collector current in A, got {ic:g} "
                            "(not a forward-active bias point)")
        vce_sat = _finite("vce_sat", self.vce_sat, "V", nonneg=True)
        if vce < vce_sat:
            raise BiasError(
                f"vce: {vce:g} V is below the saturation threshold {vce_sat:g} V "
                "(not a forward-active bias point)")
        beta = _finite("beta", self.beta, "dimensionless", positive=True)
        va = _finite("va", self.va, "V", positive=True, optional=True)
        ft = _finite("ft", self.ft, "Hz", positive=True, optional=True)
        cmu = _finite("cmu", self.cmu, "F", nonneg=True)
        rb = _finite("rb", self.rb, "ohm", nonneg=True)
        temp = _finite("temp", self.temp, "K", positive=True)
        rmu = _finite("rmu", self.rmu, "ohm", positive=True, optional=True)
        rcx = _finite("rcx", self.rcx, "ohm", nonneg=True)
        rex = _finite("rex", self.rex, "ohm", nonneg=True)
        leads = {n: _finite(n, getattr(self, n), "H", nonneg=True) for n in ("l_b", "l_c", "l_e")}
        for name, v in (("ic", ic), ("vce", vce), ("beta", beta), ("va", va), ("ft", ft),
                        ("cmu", cmu), ("rb", rb), ("temp", temp), ("rmu", rmu), ("rcx", rcx),
                        ("rex", rex), ("vce_sat", vce_sat), *leads.items()):
            object.__setattr__(self, name, v)

    @property
    def power(self) -> float:
        """Collector dissipation IC * VCE in W (base power neglected)."""
        return self.ic * self.vce

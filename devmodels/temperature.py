r"""How the DC values of a bipolar transistor move with temperature.

Three relations, each vectorised (scalars or arrays of temperatures):

* the thermal voltage :math:`V_T = kT/q` (exact SI k and q, see :mod:`devmodels.constants`);
* the base-emitter on-voltage, linear in temperature,

  .. math:: V_{BE}(T) = V_{BE}(T_{ref}) + c_{V}\,(T - T_{ref}),

  with :math:`c_V` = -2 mV/K by default.  This is common practice, no source: the figure
  of about -2 mV/K (-1.8 to -2.2 mV/K at a constant collector current) is the usual rule
  of thumb for silicon junctions;

* the current gain, growing by a fixed fraction per kelvin,

  .. math:: \beta(T) = \beta(T_{ref})\,(1 + c_\beta)^{T - T_{ref}},

  with :math:`c_\beta` = 0.5 %/K by default.  Common practice, no source: datasheet curves
  of hFE for small-signal silicon transistors typically rise by a few tenths of a percent
  to about one percent per kelvin.  Both coefficients are parameters: use the figures of
  the datasheet when it gives them.

The reference temperature :math:`T_{ref}` is 300 K (about the 25 C of datasheet tables).
"""

from __future__ import annotations

import numpy as np

from .constants import thermal_voltage
from .exceptions import InputError

__all__ = ["T_REF", "VBE_DEFAULT", "VBE_TC_DEFAULT", "BETA_TC_DEFAULT", "thermal_voltage", "vbe_at",
           "beta_at"]

#: Reference temperature of the given VBE(on) and beta, in K.
T_REF = 300.0
#: VBE(on) at the reference temperature, in V (common practice, no source).
VBE_DEFAULT = 0.7
#: Temperature coefficient of VBE(on), in V/K (common practice, no source).
VBE_TC_DEFAULT = -2e-3
#: Fractional temperature coefficient of beta, per K (0.005 = 0.5 %/K; common practice, no source).
BETA_TC_DEFAULT = 0.005


def _temps(temp, name: str = "temp") -> np.ndarray:
    t = np.asarray(temp, dtype=float)
    if not np.all(np.isfinite(t)) or np.any(t <= 0):
        raise InputError(f"{name}: expected temperatures above 0 K")
    return t


def vbe_at(temp, vbe: float = VBE_DEFAULT, tc: float = VBE_TC_DEFAULT, t_ref: float = T_REF):
    """Base-emitter on-voltage at ``temp`` (linear rule in the module docstring).

    Parameters
    ----------
    temp : float or ndarray
        Junction temperature in K.
    vbe : float or ndarray
        VBE(on) at ``t_ref`` in V (a magnitude; the same for npn and pnp).
    tc : float
        Temperature coefficient in V/K (default -2 mV/K).
    t_ref : float
        Reference temperature in K.

    Returns
    -------
    float or ndarray
        VBE(on) in V, shaped like ``temp`` broadcast against ``vbe``.
    """
    t = _temps(temp)
    out = np.asarray(vbe, dtype=float) + tc * (t - t_ref)
    return float(out) if out.ndim == 0 else out


def beta_at(temp, beta, tc: float = BETA_TC_DEFAULT, t_ref: float = T_REF):
    """Current gain at ``temp`` (compound rule in the module docstring).

    Parameters
    ----------
    temp : float or ndarray
        Junction temperature in K.
    beta : float or ndarray
        Current gain at ``t_ref`` (dimensionless).
    tc : float
        Fractional temperature coefficient per K (0.005 for 0.5 %/K); must be above -1.
    t_ref : float
        Reference temperature in K.

    Returns
    -------
    float or ndarray
        Beta at ``temp``.
    """
    if not tc > -1:
        raise InputError(f"beta_tc: expected a fraction per K above -1 (above -100 %/K), got {tc:g}")
    t = _temps(temp)
    out = np.asarray(beta, dtype=float) * (1.0 + tc) ** (t - t_ref)
    return float(out) if out.ndim == 0 else out

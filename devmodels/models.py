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
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .bias import BipolarBias
from .constants import thermal_voltage
from .exceptions import BiasError

__all__ = ["HybridPi", "TModel"]

_INF = math.inf


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
        Thermal voltage in V at which the model was made.
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

    @classmethod
    def from_bias(cls, bias: BipolarBias) -> "HybridPi":
        """Element values at a bias point (relations in the module docstring).

        Raises
        ------
        BiasError
            When C_pi comes out negative: fT is too high for the given C_mu.
        """
        vt = thermal_voltage(bias.temp)
        gm = bias.ic / vt
        r_pi = bias.beta / gm
        ro = _INF if bias.va is None else bias.va / bias.ic
        if bias.ft is None:
            c_pi = 0.0
        else:
            c_pi = gm / (2 * math.pi * bias.ft) - bias.cmu
            if c_pi < 0:
                ft_max = gm / (2 * math.pi * bias.cmu)
                raise BiasError(
                    f"ft: {bias.ft:g} Hz is too high for cmu = {bias.cmu:g} F at ic = {bias.ic:g} A "
                    f"(C_pi would be {c_pi:g} F; fT must not exceed gm/(2 pi C_mu) = {ft_max:g} Hz)")
        r_mu = _INF if bias.rmu is None else bias.rmu
        return cls(gm=gm, r_pi=r_pi, ro=ro, c_pi=c_pi, c_mu=bias.cmu, rb=bias.rb, r_mu=r_mu,
                   rcx=bias.rcx, rex=bias.rex, vt=vt)

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

    def intrinsic_stamp(self, omega: np.ndarray, Y: np.ndarray, b: int, c: int, e: int) -> None:
        """Add the intrinsic device (between internal nodes b', c', e') to nodal matrix ``Y``.

        Parameters
        ----------
        omega : ndarray, shape (F,)
            Angular frequency in rad/s.
        Y : ndarray, complex, shape (F, n, n)
            Nodal admittance matrix to add to, in S.
        b, c, e : int
            Node indices of the intrinsic base, collector and emitter.
        """
        from .indefinite import stamp_admittance, stamp_vccs

        jw = 1j * omega
        stamp_admittance(Y, b, e, 1.0 / self.r_pi + jw * self.c_pi)
        stamp_admittance(Y, b, c, _g(self.r_mu) + jw * self.c_mu)
        stamp_admittance(Y, c, e, _g(self.ro))
        stamp_vccs(Y, c, e, b, e, self.gm)

    def to_t(self) -> "TModel":
        """The T model with the same terminal behaviour."""
        return TModel(re=self.re, alpha=self.alpha, c_e=self.c_pi, ro=self.ro, c_mu=self.c_mu,
                      rb=self.rb, r_mu=self.r_mu, rcx=self.rcx, rex=self.rex, vt=self.vt)


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
    ro, c_mu, rb, r_mu, rcx, rex, vt : float
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

    @classmethod
    def from_bias(cls, bias: BipolarBias) -> "TModel":
        """T model at a bias point (through the hybrid-pi relations)."""
        return HybridPi.from_bias(bias).to_t()

    def intrinsic_stamp(self, omega: np.ndarray, Y: np.ndarray, b: int, c: int, e: int) -> None:
        """Add the intrinsic T model to nodal matrix ``Y`` (see :meth:`HybridPi.intrinsic_stamp`)."""
        from .indefinite import stamp_admittance, stamp_cccs_branch

        jw = 1j * omega
        ye = 1.0 / self.re + jw * self.c_e
        a_w = (self.alpha / self.re) / ye
        stamp_cccs_branch(Y, b, e, ye, c, b, a_w)
        stamp_admittance(Y, b, c, _g(self.r_mu) + jw * self.c_mu)
        stamp_admittance(Y, c, e, _g(self.ro))


def _g(r):
    """Conductance of a resistance in ohm (0 for an infinite one); scalars or arrays."""
    if np.ndim(r) == 0:
        return 0.0 if math.isinf(r) else 1.0 / r
    r = np.asarray(r, dtype=float)
    with np.errstate(divide="ignore"):
        return np.where(np.isinf(r), 0.0, 1.0 / r)

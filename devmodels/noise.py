r"""Two-port noise: correlation matrices, their transformations, and the noise parameters.

A noisy linear two-port is a noiseless one plus two noise sources whose one-sided spectral
densities and cross-spectrum form a Hermitian 2x2 *correlation matrix*.  Each parameter kind
has its own pair of sources (Hillbrand and Russer, "An efficient method for computer aided
noise analysis of linear amplifier networks", IEEE Trans. Circuits Syst. 23(4), 1976):

==========  ===============================================  ===========================
form        port equations (noise vector n)                  n
==========  ===============================================  ===========================
``y``       :math:`[I_1, I_2] = Y [V_1, V_2] + n`            short-circuit currents
``z``       :math:`[V_1, V_2] = Z [I_1, I_2] + n`            open-circuit voltages
``h``       :math:`[V_1, I_2] = H [I_1, V_2] + n`            mixed
``g``       :math:`[I_1, V_2] = G [V_1, I_2] + n`            mixed
``abcd``    :math:`[V_1, I_1] = A [V_2, -I_2] + [u, i]`      input-referred u (V), i (A)
==========  ===============================================  ===========================

and :math:`C = \langle n n^H \rangle` per Hz (one-sided: a resistor's thermal noise current
has the density 4kT/R; Nyquist, Phys. Rev. 32, 1928).  The chain form
:math:`C_A = [[C_u, C_{ui}], [C_{ui}^*, C_i]]`, with :math:`C_{ui} = \langle u\, i^* \rangle`,
holds the equivalent input noise voltage (V^2/Hz) and current (A^2/Hz) of the two-port.

**Transformations.**  A form K goes to a form L as :math:`C_L = T C_K T^H`, with T a 2x2
matrix of the network's parameters (Hillbrand and Russer 1976, Table I; rederived here from
the port equations, and checked in ``tests/test_noise.py``):

- between immittances (y, z, h, g): L is K with the ports in a set S inverted (those where
  L has the other quantity as output); T is :math:`-L` with the columns of the ports not in S
  replaced by unit vectors (y -> z: T = -Z; y -> h: T = [[-h11, 0], [-h21, 1]]);
- to the chain form: y: [[0, B], [1, D]]; z: [[1, -A], [0, -C]]; h: [[1, B], [0, D]];
  g: [[0, -A], [1, -C]] (A, B, C, D the chain parameters);
- from the chain form: y: [[-y11, 1], [-y21, 0]]; z: [[1, -z11], [0, -z21]];
  h: [[1, -h11], [0, -h21]]; g: [[-g11, 1], [-g21, 0]].

**Connections** (same paper): networks in tandem add chain forms,
:math:`C_A = C_{A1} + A_1 C_{A2} A_1^H`; series-series add Z forms, shunt-shunt Y forms,
series-shunt H forms and shunt-series G forms (with the port condition of
:mod:`devmodels.interconnect`).

**Noise parameters** (Hillbrand and Russer 1976; Rothe and Dahlke, "Theory of noisy
fourpoles", Proc. IRE 44, 1956; Pozar, *Microwave Engineering*, noise chapter, from
memory).  With :math:`k T_0`, :math:`T_0` = 290 K (the IEEE standard temperature of the
source in the definition of the noise factor; Friis, Proc. IRE 32, 1944):

.. math::
    R_n = \frac{C_u}{4 k T_0},\qquad
    Y_{opt} = \frac{\sqrt{C_u C_i - (\operatorname{Im} C_{ui})^2}
                    + j \operatorname{Im} C_{ui}}{C_u},\qquad
    F_{min} = 1 + \frac{\operatorname{Re} C_{ui} + \sqrt{C_u C_i - (\operatorname{Im} C_{ui})^2}}{2 k T_0},

and at a source admittance :math:`Y_s = G_s + jB_s`, directly from the noise powers (the
source's noise current has the density :math:`4kT_0 G_s` and adds to :math:`i + Y_s u`):

.. math::
    F = 1 + \frac{C_i + |Y_s|^2 C_u + 2 \operatorname{Re}(Y_s C_{ui})}{4 k T_0 G_s}
      = F_{min} + \frac{R_n}{G_s} |Y_s - Y_{opt}|^2 .

:math:`Z_{opt} = 1/Y_{opt}`, :math:`\Gamma_{opt} = (1 - z_0 Y_{opt}) / (1 + z_0 Y_{opt})`
(= :math:`(Z_{opt} - z_0)/(Z_{opt} + z_0)`, and 1 where :math:`Y_{opt}` = 0), noise
temperature :math:`T_e = T_0 (F - 1)` (IEEE).  **Where Yopt does not exist** (Rn = 0: no
input noise voltage, so the optimum source is a short), ``yopt``, ``zopt`` and
``gamma_opt`` are NaN (None in :meth:`NoiseResult.as_points`, null in JSON); ``zopt`` is
NaN also where Yopt = 0 (an open source is optimum).  Fmin and F are always defined.

The netlist's noise sources are at the physical temperature of their parts (the device's
and its resistors'); only the *source* termination is taken at T0.  The load's noise is not
part of a two-port's noise factor.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Sequence

import numpy as np

from .configs import check_config, config_y, indefinite_from_y
from .constants import BJT_CONFIGS, BOLTZMANN
from .conversions import convert
from .exceptions import InputError, SingularParameterError
from .netlist import FREQ_BLOCK, check_freq, reduce_with_noise
from .twoport import TwoPort

__all__ = ["T0", "FORMS", "NoisyTwoPort", "NoiseResult", "stage_noise", "correlation_transform",
           "transform_matrix", "cascade_noise", "connect_noise", "passive_noise", "noise_parameters",
           "noise_factor", "indefinite_noise", "config_noise", "reconfigure_noise", "ce_noise_design",
           "ChainNoise", "chain_noise", "ce_low_noise", "plot_nf_vs_ic", "noise_circle"]

#: Standard source temperature of the noise factor, K (IEEE; Friis 1944).
T0 = 290.0
#: Correlation-matrix forms (each the form of the two-port parameters of the same name).
FORMS: tuple[str, ...] = ("y", "z", "h", "g", "abcd")

#: Is the voltage an output at port 1, at port 2? (immittance forms)
#: A complex NaN in both parts (a quantity that does not exist).
_CNAN = complex(math.nan, math.nan)

_VOLTAGE_OUT = {"z": (True, True), "y": (False, False), "h": (True, False), "g": (False, True)}


def _check_form(form: str, name: str = "form") -> str:
    if form not in FORMS:
        raise InputError(f"{name}: unknown correlation form {form!r}, expected one of {', '.join(FORMS)}")
    return form


# --- transformation matrices ---------------------------------------------------------------

def transform_matrix(data, src: str, dst: str) -> np.ndarray:
    """The matrix T (F, 2, 2) with C_dst = T C_src T^H (module docstring).

    Parameters
    ----------
    data : array_like, complex, shape (F, 2, 2)
        The two-port's parameters of kind ``src`` (S for y, ohm for z, mixed for h, g, abcd).
    src, dst : {'y', 'z', 'h', 'g', 'abcd'}
        Forms of the correlation matrices.

    Raises
    ------
    SingularParameterError
        When the parameters of ``dst`` that T is made of do not exist (e.g. the chain form
        of a network with y21 = 0).

    Notes
    -----
    Hillbrand and Russer, IEEE Trans. Circuits Syst. 23(4), 1976, Table I; rederived from
    the port equations of each form (module docstring).
    """
    _check_form(src, "src")
    _check_form(dst, "dst")
    m = np.asarray(data, dtype=complex)
    n = m.shape[0]
    T = np.zeros((n, 2, 2), dtype=complex)
    if src == dst:
        T[:, 0, 0] = T[:, 1, 1] = 1.0
        return T
    if src != "abcd" and dst != "abcd":
        # dst is src with the ports in S partially inverted; T = -L on the columns of S, e_j elsewhere
        L = convert(m, src, dst)
        for j, (a, b) in enumerate(zip(_VOLTAGE_OUT[src], _VOLTAGE_OUT[dst])):
            if a != b:
                T[:, :, j] = -1 * L[:, :, j]
            else:
                T[:, j, j] = 1.0
        return T
    if dst == "abcd":
        A = convert(m, src, "abcd")
        a, b, c, d = A[:, 0, 0], A[:, 0, 1], A[:, 1, 0], A[:, 1, 1]
        if src == "y":    # [[0, B], [1, D]]
            T[:, 0, 1], T[:, 1, 0], T[:, 1, 1] = b, 1.0, d
        elif src == "z":  # [[1, -A], [0, -C]]
            T[:, 0, 0], T[:, 0, 1], T[:, 1, 1] = 1.0, -1 * a, -1 * c
        elif src == "h":  # [[1, B], [0, D]]
            T[:, 0, 0], T[:, 0, 1], T[:, 1, 1] = 1.0, b, d
        else:             # g: [[0, -A], [1, -C]]
            T[:, 0, 1], T[:, 1, 0], T[:, 1, 1] = -1 * a, 1.0, -1 * c
        return T
    K = convert(m, "abcd", dst)
    if _VOLTAGE_OUT[dst][0]:  # z, h: [[1, -k11], [0, -k21]]
        T[:, 0, 0], T[:, 0, 1], T[:, 1, 1] = 1.0, -1 * K[:, 0, 0], -1 * K[:, 1, 0]
    else:                     # y, g: [[-k11, 1], [-k21, 0]]
        T[:, 0, 0], T[:, 0, 1], T[:, 1, 0] = -1 * K[:, 0, 0], 1.0, -1 * K[:, 1, 0]
    return T


def _sandwich(T: np.ndarray, C: np.ndarray) -> np.ndarray:
    """T C T^H for Hermitian C, entry by entry (real diagonal, Hermitian result)."""
    t11, t12, t21, t22 = T[:, 0, 0], T[:, 0, 1], T[:, 1, 0], T[:, 1, 1]
    c11, c22, c12 = C[:, 0, 0].real, C[:, 1, 1].real, C[:, 0, 1]
    out = np.empty(C.shape, dtype=complex)
    out[:, 0, 0] = (np.abs(t11) ** 2 * c11 + np.abs(t12) ** 2 * c22 + 2 * (t11 * c12 * t12.conj()).real)
    out[:, 1, 1] = (np.abs(t21) ** 2 * c11 + np.abs(t22) ** 2 * c22 + 2 * (t21 * c12 * t22.conj()).real)
    r12 = (t11 * t21.conj() * c11 + t12 * t22.conj() * c22 + t11 * c12 * t22.conj()
           + t12 * c12.conj() * t21.conj())
    out[:, 0, 1] = r12
    out[:, 1, 0] = r12.conj()
    return out


def correlation_transform(cor, data, src: str, dst: str) -> np.ndarray:
    """A correlation matrix of form ``src`` in the form ``dst``: T C T^H.

    Parameters
    ----------
    cor : array_like, complex, shape (F, 2, 2)
        Hermitian correlation matrix of form ``src`` (units of the form's noise vector
        squared per Hz: A^2/Hz for y, V^2/Hz for z, mixed for h, g, abcd).
    data : array_like, complex, shape (F, 2, 2)
        The two-port's parameters of kind ``src``.
    src, dst : {'y', 'z', 'h', 'g', 'abcd'}
        Forms.

    Returns
    -------
    ndarray, complex, shape (F, 2, 2)
        Correlation matrix of form ``dst`` (Hillbrand and Russer 1976).
    """
    return _sandwich(transform_matrix(data, src, dst), np.asarray(cor, dtype=complex))


# --- the noisy two-port ----------------------------------------------------------------------

@dataclass(frozen=True, slots=True)
class NoisyTwoPort:
    """A linear two-port with its noise: parameters and correlation matrix of one form.

    Parameters
    ----------
    freq : ndarray of float, shape (F,)
        Frequencies in Hz.
    data : ndarray, complex, shape (F, 2, 2)
        Two-port parameters of kind ``form``.
    cor : ndarray, complex, shape (F, 2, 2)
        The correlation matrix of the same form (module docstring), one-sided, per Hz.
    form : {'y', 'z', 'h', 'g', 'abcd'}
        Kind of ``data`` and form of ``cor``.
    """

    freq: np.ndarray
    data: np.ndarray
    cor: np.ndarray
    form: str = "y"

    def __post_init__(self) -> None:
        _check_form(self.form)
        f = check_freq(self.freq)
        for name in ("data", "cor"):
            v = np.asarray(getattr(self, name), dtype=complex)
            if v.shape != (f.size, 2, 2):
                raise InputError(f"{name}: expected shape ({f.size}, 2, 2), got {v.shape}")
            if not np.all(np.isfinite(v)):
                raise InputError(f"{name}: expected finite values")
            object.__setattr__(self, name, v)
        object.__setattr__(self, "freq", f)

    def to(self, form: str) -> "NoisyTwoPort":
        """The same network with parameters and correlation matrix of ``form``.

        Parameters
        ----------
        form : {'y', 'z', 'h', 'g', 'abcd'}
            The form wanted (:func:`transform_matrix`).
        """
        _check_form(form)
        if form == self.form:
            return self
        T = transform_matrix(self.data, self.form, form)
        return NoisyTwoPort(self.freq, convert(self.data, self.form, form), _sandwich(T, self.cor), form)

    def two_port(self, z0=50.0) -> TwoPort:
        """The noiseless part as a :class:`~devmodels.twoport.TwoPort`.

        Parameters
        ----------
        z0 : float or (float, float)
            Reference resistance(s) in ohm for S.
        """
        return TwoPort(self.freq, self.data, self.form, z0)

    def parameters(self, zs=50.0, z0=50.0) -> "NoiseResult":
        """:func:`noise_parameters` of this two-port.

        Parameters
        ----------
        zs : complex or array_like (F,)
            Source impedance in ohm (real part > 0), at T0 = 290 K.
        z0 : float
            Reference resistance of ``gamma_opt`` in ohm.
        """
        return noise_parameters(self, zs=zs, z0=z0)


def passive_noise(tp: TwoPort, temp=T0) -> NoisyTwoPort:
    r"""A passive two-port at one temperature with its thermal noise: C_Y = 2kT (Y + Y^H).

    Twiss, "Nyquist's and Thevenin's theorems generalized for nonreciprocal linear
    networks", J. Appl. Phys. 26, 1955 (for a reciprocal network 4kT Re Y).

    Parameters
    ----------
    tp : TwoPort
        The network (any kind; its Y parameters are used, or Z when Y does not exist:
        C_Z = 2kT (Z + Z^H)).
    temp : float
        Its temperature in K (default T0 = 290 K).
    """
    t = float(temp)
    if not (math.isfinite(t) and t >= 0):
        raise InputError(f"temp: expected a temperature >= 0 K, got {temp!r}")
    if tp.freq is None:
        raise InputError("tp: a noisy two-port needs frequencies")
    for form in ("y", "z"):
        try:
            m = tp.to(form).data
        except SingularParameterError:
            continue
        return NoisyTwoPort(tp.freq, m, 2 * BOLTZMANN * t * (m + np.conj(np.swapaxes(m, 1, 2))), form)
    raise SingularParameterError("tp: the network has neither Y nor Z parameters")


# --- from a stage's netlist ------------------------------------------------------------------

def _points(net) -> int:
    """The number of samples of a netlist's element values (1 for scalars)."""
    sizes = {np.size(e.value) for e in net.elements if np.ndim(e.value)}
    if len(sizes) > 1:
        raise InputError(f"element values: arrays of different lengths {sorted(sizes)}")
    return sizes.pop() if sizes else 1


def stage_noise(stage, freq) -> NoisyTwoPort:
    """Two-port noise of a stage, from its netlist's noise sources.

    The netlist (device, ``rdeg``, ``rfb``, bias network) is reduced to the stage's
    terminals with its noise (:func:`devmodels.netlist.reduce_with_noise`, Kron reduction
    carrying the sources), then the configuration's ports are picked out of the indefinite
    admittance and correlation matrices alike (grounding the common terminal deletes its
    row and column of both; Hillbrand and Russer 1976).  Block by block over frequency.

    Parameters
    ----------
    stage : devmodels.stage.Stage
        The stage (its noise sources at the temperature of the device and its resistors).
        Its element values may be arrays of N samples (a grid of bias points, a spread):
        then ``freq`` is one frequency and the result has N points at that frequency.
    freq : array_like
        Frequencies in Hz, shape (F,) (above 0 Hz where a 1/f source is present).

    Returns
    -------
    NoisyTwoPort
        Y in S and C_Y in A^2/Hz, form ``y``.
    """
    f = check_freq(freq)
    net, keep, config = stage.netlist(), stage.terminals, stage.config
    n = _points(net)
    if n > 1:
        if f.size != 1:
            raise InputError(f"freq: a stage with {n} samples of its element values takes one frequency, "
                             f"got {f.size}")
        Y3, C3 = reduce_with_noise(net, keep, 2 * math.pi * f[0], n)
        return NoisyTwoPort(np.full(n, f[0]), config_y(Y3, config), config_y(C3, config), "y")
    y = np.empty((f.size, 2, 2), dtype=complex)
    cy = np.empty((f.size, 2, 2), dtype=complex)
    for start in range(0, f.size, FREQ_BLOCK):
        omega = 2 * math.pi * f[start:start + FREQ_BLOCK]
        Y3, C3 = reduce_with_noise(net, keep, omega, omega.size)
        y[start:start + omega.size] = config_y(Y3, config)
        cy[start:start + omega.size] = config_y(C3, config)
    return NoisyTwoPort(f, y, cy, "y")


def indefinite_noise(stage, freq) -> tuple[np.ndarray, np.ndarray]:
    """Indefinite admittance (S) and noise-correlation (A^2/Hz) matrices (F, 3, 3) of a stage.

    Node order ``stage.terminals``.  Both have zero row and column sums (each noise source
    injects a current into one node and takes it out of another).

    Parameters
    ----------
    stage : devmodels.stage.Stage
        The stage.
    freq : array_like
        Frequencies in Hz.
    """
    f = check_freq(freq)
    net, keep = stage.netlist(), stage.terminals
    Y = np.empty((f.size, 3, 3), dtype=complex)
    C = np.empty((f.size, 3, 3), dtype=complex)
    for start in range(0, f.size, FREQ_BLOCK):
        omega = 2 * math.pi * f[start:start + FREQ_BLOCK]
        Y[start:start + omega.size], C[start:start + omega.size] = reduce_with_noise(net, keep, omega, omega.size)
    return Y, C


def config_noise(freq, Y3, C3, config: str) -> NoisyTwoPort:
    """The configuration's noisy two-port from indefinite matrices (F, 3, 3).

    The common terminal's row and column are deleted from the admittance and the
    correlation matrix alike (Shekel, Proc. IRE 42, 1954, for the admittances; Hillbrand
    and Russer 1976 for the noise currents, which transform like currents).

    Parameters
    ----------
    freq : array_like
        Frequencies in Hz, shape (F,).
    Y3, C3 : ndarray, complex, shape (F, 3, 3)
        Indefinite admittance (S) and correlation (A^2/Hz) matrices, order (b, c, e) or (g, d, s).
    config : str
        The configuration.
    """
    return NoisyTwoPort(freq, config_y(np.asarray(Y3, dtype=complex), config),
                        config_y(np.asarray(C3, dtype=complex), config), "y")


def reconfigure_noise(ntp: NoisyTwoPort, src: str, dst: str) -> NoisyTwoPort:
    """A three-terminal noisy device given in configuration ``src``, in configuration ``dst``.

    The missing row and column of the indefinite admittance and correlation matrices follow
    from their zero sums (:func:`devmodels.configs.indefinite_from_y`); then the common
    terminal of ``dst`` is deleted.

    Parameters
    ----------
    ntp : NoisyTwoPort
        The device in configuration ``src`` (any form; Y must exist).
    src, dst : str
        Configurations of one family.
    """
    check_config(src)
    check_config(dst)
    if (src in BJT_CONFIGS) != (dst in BJT_CONFIGS):
        raise InputError(f"dst: cannot reconfigure between configurations of two families ({src}, {dst})")
    y = ntp.to("y")
    return config_noise(y.freq, indefinite_from_y(y.data, src), indefinite_from_y(y.cor, src), dst)


# --- connections -----------------------------------------------------------------------------

def _same_freq(parts: Sequence[NoisyTwoPort]) -> None:
    for i, p in enumerate(parts[1:], start=2):
        if not isinstance(p, NoisyTwoPort):
            raise InputError(f"parts: network {i} is not a NoisyTwoPort")
        if p.freq.shape != parts[0].freq.shape or not np.array_equal(p.freq, parts[0].freq):
            raise InputError(f"parts: network {i} is not at the frequencies of network 1")


def cascade_noise(parts: Sequence[NoisyTwoPort]) -> NoisyTwoPort:
    """Networks in tandem: A = A1 A2 ..., C_A = C_A1 + A1 C_A2 A1^H (and on down the chain).

    Hillbrand and Russer, IEEE Trans. Circuits Syst. 23(4), 1976.

    Parameters
    ----------
    parts : sequence of NoisyTwoPort
        One or more networks, input first, at the same frequencies.

    Returns
    -------
    NoisyTwoPort
        Form ``abcd``.
    """
    parts = list(parts)
    if not parts:
        raise InputError("parts: give at least one network")
    if not isinstance(parts[0], NoisyTwoPort):
        raise InputError("parts: network 1 is not a NoisyTwoPort")
    _same_freq(parts)
    first = parts[0].to("abcd")
    a, ca = first.data, first.cor
    for p in parts[1:]:
        q = p.to("abcd")
        ca = ca + _sandwich(a, q.cor)
        a = np.matmul(a, q.data)
    return NoisyTwoPort(first.freq, a, ca, "abcd")


def connect_noise(a: NoisyTwoPort, b: NoisyTwoPort, how: str) -> NoisyTwoPort:
    """Two noisy networks in a feedback connection: parameters and correlation matrices add.

    series-series adds Z and C_Z, shunt-shunt Y and C_Y, series-shunt H and C_H,
    shunt-series G and C_G (Hillbrand and Russer 1976).  The sum holds under the port
    condition stated in :mod:`devmodels.interconnect` (for series-series, ``b`` is the
    network in the common leg).

    Parameters
    ----------
    a, b : NoisyTwoPort
        The networks at the same frequencies.
    how : {'series-series', 'shunt-shunt', 'series-shunt', 'shunt-series'}
        The connection.
    """
    from .interconnect import ADDED_KIND, HOWS

    if how not in HOWS:
        raise InputError(f"how: unknown connection {how!r}, expected one of {', '.join(HOWS)}")
    if not isinstance(a, NoisyTwoPort):
        raise InputError("a: expected a NoisyTwoPort")
    _same_freq([a, b])
    form = ADDED_KIND[how]
    out = []
    for i, p in enumerate((a, b), start=1):
        try:
            out.append(p.to(form))
        except SingularParameterError as exc:
            raise SingularParameterError(f"network {i}: has no {form.upper()} parameters, which a {how} "
                                         f"connection adds ({exc})") from None
    return NoisyTwoPort(a.freq, out[0].data + out[1].data, out[0].cor + out[1].cor, form)


# --- noise parameters ------------------------------------------------------------------------

def _source_admittance(zs, ys, n: int) -> np.ndarray:
    """The source admittance (n,) from an impedance or an admittance, refusing Re <= 0."""
    if (zs is None) == (ys is None):
        raise InputError("zs, ys: give one source, as an impedance zs (ohm) or an admittance ys (S)")
    name, v = ("zs", zs) if ys is None else ("ys", ys)
    try:
        arr = np.asarray(v, dtype=complex)
    except (TypeError, ValueError):
        raise InputError(f"{name}: expected a number, got {v!r}") from None
    if arr.ndim > 1 or (arr.ndim == 1 and arr.size not in (1, n)):
        raise InputError(f"{name}: expected one value or one per frequency ({n}), got shape {arr.shape}")
    bad = ~np.isfinite(arr) | (arr.real <= 0)
    if np.any(bad):
        x = np.atleast_1d(arr)[np.atleast_1d(bad)][0]
        unit = "ohm" if name == "zs" else "S"
        raise InputError(f"{name}: expected a finite source with real part > 0 {unit}, got {x:g}")
    arr = np.broadcast_to(arr, (n,))
    return 1.0 / arr if name == "zs" else arr.copy()


def noise_factor(ntp: NoisyTwoPort, ys) -> np.ndarray:
    """Noise factor F (F,) at the source admittance ``ys``, from the noise powers.

    :math:`F = 1 + (C_i + |Y_s|^2 C_u + 2 \\operatorname{Re}(Y_s C_{ui})) / (4 k T_0 G_s)`
    (module docstring; Hillbrand and Russer 1976), the source at T0 = 290 K.

    Parameters
    ----------
    ntp : NoisyTwoPort
        The network (any form whose chain form exists).
    ys : complex or array_like (F,)
        Source admittance in S, real part > 0.
    """
    ca = ntp.to("abcd").cor
    y = _source_admittance(None, ys, ca.shape[0])
    return _factor(ca, y)


def _factor(ca: np.ndarray, ys: np.ndarray) -> np.ndarray:
    cu, ci, cui = ca[:, 0, 0].real, ca[:, 1, 1].real, ca[:, 0, 1]
    excess = ci + (ys.real ** 2 + ys.imag ** 2) * cu + 2 * (ys * cui).real
    return 1.0 + excess / (4 * BOLTZMANN * T0 * ys.real)


@dataclass(frozen=True, slots=True)
class NoiseResult:
    """Noise parameters of a two-port and its noise at one source (module docstring).

    Attributes
    ----------
    freq : ndarray (F,)
        Frequencies in Hz.
    f : ndarray (F,)
        Noise factor at the source ``ys``.
    fmin : ndarray (F,)
        Minimum noise factor.
    rn : ndarray (F,)
        Equivalent noise resistance in ohm.
    yopt : ndarray, complex (F,)
        Optimum source admittance in S (NaN where it does not exist: Rn = 0).
    ys : ndarray, complex (F,)
        The source admittance of ``f``, S.
    en : ndarray (F,)
        Equivalent input noise voltage density sqrt(C_u) in V/sqrt(Hz).
    in_ : ndarray (F,)
        Equivalent input noise current density sqrt(C_i) in A/sqrt(Hz).
    correlation : ndarray, complex (F,)
        Correlation coefficient C_ui / sqrt(C_u C_i) of u and i (NaN where either is 0).
    z0 : float
        Reference resistance of ``gamma_opt`` in ohm.
    """

    freq: np.ndarray
    f: np.ndarray
    fmin: np.ndarray
    rn: np.ndarray
    yopt: np.ndarray
    ys: np.ndarray
    en: np.ndarray
    in_: np.ndarray
    correlation: np.ndarray
    z0: float = 50.0

    @property
    def nf_db(self) -> np.ndarray:
        """Noise figure 10 log10 F at the source, dB."""
        return 10 * np.log10(self.f)

    @property
    def nfmin_db(self) -> np.ndarray:
        """Minimum noise figure, dB."""
        return 10 * np.log10(self.fmin)

    @property
    def zopt(self) -> np.ndarray:
        """Optimum source impedance 1/Yopt in ohm (NaN where Yopt is NaN or 0)."""
        ok = np.isfinite(self.yopt) & (self.yopt != 0)
        return np.divide(1.0, self.yopt, out=np.full(self.yopt.shape, _CNAN), where=ok)

    @property
    def gamma_opt(self) -> np.ndarray:
        """Optimum source reflection coefficient (1 - z0 Yopt)/(1 + z0 Yopt) at ``z0`` (NaN with Yopt)."""
        y = self.z0 * self.yopt
        ok = np.isfinite(y)
        return np.divide(1 - y, 1 + y, out=np.full(y.shape, _CNAN), where=ok)

    @property
    def te(self) -> np.ndarray:
        """Noise temperature T0 (F - 1) at the source, K."""
        return T0 * (self.f - 1)

    @property
    def te_min(self) -> np.ndarray:
        """Minimum noise temperature T0 (Fmin - 1), K."""
        return T0 * (self.fmin - 1)

    def as_points(self) -> list[dict]:
        """One dict per frequency with the interface's keys (NaN as None).

        Keys: ``freq`` (Hz), ``nf_db``, ``nfmin_db`` (dB), ``rn`` (ohm), ``yopt`` [re, im] (S),
        ``zopt`` [re, im] (ohm), ``gamma_opt`` [re, im], and ``te`` (K), ``en`` (V/sqrt(Hz)),
        ``in`` (A/sqrt(Hz)), ``correlation`` [re, im].
        """
        def num(x) -> float | None:
            x = float(x)
            return x if math.isfinite(x) else None

        def pair(z) -> list:
            return [num(z.real), num(z.imag)]

        nf, nfmin, zopt, gopt, te = self.nf_db, self.nfmin_db, self.zopt, self.gamma_opt, self.te
        return [{"freq": num(self.freq[k]), "nf_db": num(nf[k]), "nfmin_db": num(nfmin[k]), "rn": num(self.rn[k]),
                 "yopt": pair(self.yopt[k]), "zopt": pair(zopt[k]), "gamma_opt": pair(gopt[k]),
                 "te": num(te[k]), "en": num(self.en[k]), "in": num(self.in_[k]),
                 "correlation": pair(self.correlation[k])}
                for k in range(self.freq.size)]


def _reference(z0) -> float:
    """A real reference resistance z0 in ohm (> 0), or an InputError naming ``z0``."""
    try:
        zref = float(z0)
    except (TypeError, ValueError):
        raise InputError(f"z0: expected a reference resistance in ohm, got {z0!r}") from None
    if not (math.isfinite(zref) and zref > 0):
        raise InputError(f"z0: expected a reference resistance > 0 ohm, got {z0!r}")
    return zref


def noise_parameters(ntp: NoisyTwoPort, zs=50.0, z0=50.0, *, ys=None) -> NoiseResult:
    """Noise parameters of a noisy two-port, and its noise factor at a source.

    Formulas in the module docstring (Hillbrand and Russer, IEEE Trans. Circuits Syst.
    23(4), 1976; Rothe and Dahlke, Proc. IRE 44, 1956).  Vectorised over frequency.

    Parameters
    ----------
    ntp : NoisyTwoPort
        The network (any form whose chain form exists).
    zs : complex or array_like (F,)
        Source impedance in ohm (real part > 0), at T0 = 290 K.  Ignored when ``ys`` is given.
    z0 : float
        Reference resistance of ``gamma_opt`` in ohm.
    ys : complex or array_like (F,), optional
        Source admittance in S instead of ``zs``.

    Returns
    -------
    NoiseResult

    Raises
    ------
    InputError
        A source with real part <= 0, or a bad ``z0``.
    SingularParameterError
        The chain form does not exist (y21 = 0: no transmission).
    """
    if not isinstance(ntp, NoisyTwoPort):
        raise InputError(f"ntp: expected a NoisyTwoPort, got {type(ntp).__name__}")
    zref = _reference(z0)
    ca = ntp.to("abcd").cor
    y_s = _source_admittance(None if ys is not None else zs, ys, ca.shape[0])
    cu, ci, cui = ca[:, 0, 0].real, ca[:, 1, 1].real, ca[:, 0, 1]
    cu = np.maximum(cu, 0.0)
    ci = np.maximum(ci, 0.0)
    kt0 = BOLTZMANN * T0
    # C_u C_i - (Im C_ui)^2 = (C_u C_i - |C_ui|^2) + (Re C_ui)^2, the first term >= 0 (Cauchy-Schwarz)
    root = np.sqrt(np.maximum(cu * ci - np.abs(cui) ** 2, 0.0) + cui.real ** 2)
    fmin = 1.0 + (cui.real + root) / (2 * kt0)
    has = cu > 0
    yopt = np.full(cu.shape, _CNAN)
    np.divide(root + 1j * cui.imag, cu, out=yopt, where=has)
    en, i_n = np.sqrt(cu), np.sqrt(ci)
    both = (cu > 0) & (ci > 0)
    rho = np.full(cu.shape, _CNAN)
    np.divide(cui, en * i_n, out=rho, where=both)
    return NoiseResult(ntp.freq, _factor(ca, y_s), fmin, cu / (4 * kt0), yopt, y_s, en, i_n, rho, zref)


# --- noise circles -------------------------------------------------------------------------

def noise_circle(fmin, rn, gamma_opt, f, z0=50.0) -> tuple[np.ndarray, np.ndarray]:
    r"""Centre and radius of the circle of constant noise factor ``f`` in the source's reflection plane.

    With the source reflection coefficient :math:`\Gamma_s` at ``z0``,
    :math:`F = F_{min} + (R_n/G_s)|Y_s - Y_{opt}|^2` becomes
    :math:`|\Gamma_s - \Gamma_{opt}|^2 / (1 - |\Gamma_s|^2) = N` with

    .. math::
        N = \frac{F - F_{min}}{4 R_n / Z_0} |1 + \Gamma_{opt}|^2,\qquad
        C_F = \frac{\Gamma_{opt}}{1 + N},\qquad
        R_F = \frac{\sqrt{N (N + 1 - |\Gamma_{opt}|^2)}}{1 + N}

    (Gonzalez, *Microwave Transistor Amplifiers*, noise chapter, from memory; Pozar,
    *Microwave Engineering*, 4th ed., noise-figure circles).  Broadcast over the inputs
    (e.g. F frequencies against L levels with ``f[:, None]``).

    Parameters
    ----------
    fmin : array_like
        Minimum noise factor (linear, >= 1).
    rn : array_like
        Equivalent noise resistance in ohm (> 0).
    gamma_opt : array_like, complex
        Optimum source reflection coefficient at ``z0`` (|gamma_opt| < 1).
    f : array_like
        Noise factor of the circle (linear; ``10 ** (nf_db / 10)``).
    z0 : float
        Reference resistance of ``gamma_opt`` and of the circle, ohm.

    Returns
    -------
    centre : ndarray, complex
        Centre of the circle in the reflection plane (dimensionless).
    radius : ndarray of float
        Its radius (dimensionless; 0 at ``f = fmin``).  Centre and radius are NaN where the
        circle does not exist: ``f < fmin`` (below the least noise reachable), or no
        ``gamma_opt`` (NaN, where Rn = 0), or ``rn <= 0``.
    """
    zref = _reference(z0)
    fmin_, rn_, f_ = (np.asarray(v, dtype=float) for v in (fmin, rn, f))
    g = np.asarray(gamma_opt, dtype=complex)
    fmin_, rn_, g, f_ = np.broadcast_arrays(fmin_, rn_, g, f_)
    ok = (np.isfinite(g) & np.isfinite(fmin_) & np.isfinite(f_) & np.isfinite(rn_) & (rn_ > 0)
          & (f_ >= fmin_))
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        n = (f_ - fmin_) * zref / (4 * rn_) * np.abs(1 + g) ** 2
        centre = np.where(ok, g / (1 + n), _CNAN)
        radius = np.where(ok, np.sqrt(np.maximum(n * (n + 1 - np.abs(g) ** 2), 0.0)) / (1 + n), np.nan)
    return centre, radius


# --- design for low noise: a bipolar common-emitter stage ------------------------------------

def ce_noise_design(ic, beta, rs, *, temp=T0, rb=0.0, freq=1e3, va=None, ft=None, cmu=0.0,
                    flicker_corner=0.0) -> dict:
    """Noise of a bipolar common-emitter stage over a grid of collector currents.

    At each collector current the hybrid-pi model is built through
    :func:`devmodels.models.hybrid_pi_values` (one model with arrays of element values,
    one frequency), and its noise parameters are computed.  Returned: the collector current
    of the grid that minimises the noise figure at the source resistance ``rs``, and at each
    current the real source resistance that minimises it.  For real sources
    :math:`F(G_s) = F_{min} + (R_n/G_s)|Y_s - Y_{opt}|^2` is least at :math:`G_s = |Y_{opt}|`,
    where :math:`F = F_{min} + 2 R_n (|Y_{opt}| - G_{opt})` (set dF/dG_s = 0).

    Parameters
    ----------
    ic : array_like (N,)
        Collector currents in A, > 0 (the grid searched; refine it around the optimum).
    beta : float
        Small-signal current gain.
    rs : float
        Source resistance in ohm, > 0.
    temp : float
        Junction temperature in K (default 290 K).
    rb : float
        Base spreading resistance in ohm.
    freq : float
        The frequency in Hz (> 0 with a flicker corner).
    va, ft, cmu, flicker_corner :
        As in :func:`~devmodels.models.hybrid_pi_values` and :class:`~devmodels.models.HybridPi`.

    Returns
    -------
    dict
        ``ic`` (the grid), ``nf_db`` (N,) at ``rs``; ``ic_opt`` and ``nf_db_at_ic_opt`` (the
        best point of the grid at ``rs``); ``rs_opt`` (N,) the best real source resistance at
        each current and ``nf_db_at_rs_opt`` (N,); ``result`` (the NoiseResult over the grid,
        its ``freq`` the one frequency repeated).
    """
    from .models import HybridPi, hybrid_pi_values
    from .stage import Stage

    ic = np.atleast_1d(np.asarray(ic, dtype=float))
    if ic.ndim != 1 or ic.size == 0 or not np.all(np.isfinite(ic) & (ic > 0)):
        raise InputError("ic: expected collector currents > 0 A")
    rs_ = float(rs)
    if not (math.isfinite(rs_) and rs_ > 0):
        raise InputError(f"rs: expected a source resistance > 0 ohm, got {rs!r}")
    f = check_freq(freq)
    if f.size != 1:
        raise InputError("freq: expected one frequency in Hz")
    n = ic.size
    v = hybrid_pi_values(ic, beta, temp, va=va, ft=ft, cmu=cmu)
    c_pi = np.asarray(v["c_pi"])
    if np.any(c_pi < 0):
        # C_pi = gm/(2 pi fT) - C_mu >= 0 needs IC >= 2 pi fT C_mu VT (gm = IC/VT)
        low = float(np.max(ic[c_pi < 0]))
        need = float(2 * math.pi * ft * cmu * np.max(np.atleast_1d(v["vt"])))
        raise InputError(f"ft: {ft:g} Hz with cmu = {cmu:g} F needs IC >= {need:.3g} A (C_pi = gm/(2 pi fT) - C_mu "
                         f"would be negative up to IC = {low:.3g} A of the grid); start the sweep above "
                         f"{need:.3g} A (a fixed fT does not hold at low currents)")
    model = HybridPi(gm=v["gm"], r_pi=v["r_pi"],
                     ro=v["ro"] if va is not None else math.inf,
                     c_pi=c_pi if ft is not None else 0.0, c_mu=cmu, rb=rb, vt=v["vt"],
                     flicker_corner=flicker_corner)
    ntp = stage_noise(Stage(model, "ce"), f)
    res = noise_parameters(ntp, zs=rs_)
    best = int(np.argmin(res.f))
    gopt = res.yopt.real
    ymag = np.abs(res.yopt)
    rs_opt = np.full(n, np.nan)  # NaN where Yopt does not exist (Rn = 0)
    np.divide(1.0, ymag, out=rs_opt, where=np.isfinite(ymag) & (ymag > 0))
    f_at = res.fmin + 2 * res.rn * (ymag - gopt)
    return {"ic": ic, "nf_db": res.nf_db, "ic_opt": float(ic[best]), "nf_db_at_ic_opt": float(res.nf_db[best]),
            "rs_opt": rs_opt, "nf_db_at_rs_opt": 10 * np.log10(f_at), "result": res}


# --- noise of a chain, stage by stage --------------------------------------------------------

@dataclass(frozen=True, slots=True)
class ChainNoise:
    """Result of :func:`chain_noise` (N stages, F frequencies).

    Attributes
    ----------
    f : ndarray (F,)
        Noise factor of the whole chain at the source ``zs``.
    stage_f : ndarray (N, F)
        Each stage's noise factor alone, from the source impedance it sees in the chain
        (``zsource``); NaN where that impedance has no real part > 0.
    contribution : ndarray (N, F)
        Each stage's share of the chain's excess noise factor F - 1, referred to the chain's
        input: (F_k - 1) / (G_1 ... G_{k-1}) with available gains (Friis); they add up to F - 1.
    zsource : ndarray, complex (N, F)
        The source impedance of each stage: ``zs`` for the first, then the output impedance
        of the chain before it fed from ``zs``, ohm (NaN where it does not exist).
    """

    f: np.ndarray
    stage_f: np.ndarray
    contribution: np.ndarray
    zsource: np.ndarray

    @property
    def nf_db(self) -> np.ndarray:
        """Noise figure of the chain, dB."""
        return 10 * np.log10(self.f)

    @property
    def stage_nf_db(self) -> np.ndarray:
        """Each stage's noise figure alone at its source, dB (NaN where not defined)."""
        with np.errstate(invalid="ignore", divide="ignore"):
            return 10 * np.log10(self.stage_f)


def chain_noise(parts: Sequence[NoisyTwoPort], zs=50.0) -> ChainNoise:
    r"""Noise of networks in tandem and each stage's contribution to it.

    The chain's correlation matrix (chain form) is the sum of each stage's, referred to the
    chain's input: :math:`C_A = \sum_k A_{1..k-1} C_{A,k} A_{1..k-1}^H`
    (:func:`cascade_noise`; Hillbrand and Russer 1976).  F - 1 is linear in :math:`C_A`, so
    stage k's share of it is the excess noise factor of its term alone; this equals Friis'
    :math:`(F_k - 1)/(G_1 \cdots G_{k-1})` with available gains and :math:`F_k` at the
    output impedance of the chain before stage k (Friis, Proc. IRE 32, 1944).

    Parameters
    ----------
    parts : sequence of NoisyTwoPort
        One or more networks, input first, at the same frequencies (their chain forms must exist).
    zs : complex or array_like (F,)
        Source impedance in ohm (real part > 0), at T0 = 290 K.

    Returns
    -------
    ChainNoise
    """
    parts = list(parts)
    if not parts:
        raise InputError("parts: give at least one network")
    if not isinstance(parts[0], NoisyTwoPort):
        raise InputError("parts: network 1 is not a NoisyTwoPort")
    _same_freq(parts)
    chains = [p.to("abcd") for p in parts]
    nf = parts[0].freq.size
    ys = _source_admittance(zs, None, nf)
    z_s = 1.0 / ys
    n = len(parts)
    a = np.broadcast_to(np.eye(2, dtype=complex), (nf, 2, 2))
    stage_f = np.full((n, nf), np.nan)
    contrib = np.empty((n, nf))
    zsrc = np.full((n, nf), _CNAN)
    zsrc[0] = z_s
    for k, q in enumerate(chains):
        if k > 0:  # output impedance of stages 1..k fed from zs: (D zs + B) / (C zs + A)
            den = a[:, 1, 0] * z_s + a[:, 0, 0]
            num = a[:, 1, 1] * z_s + a[:, 0, 1]
            ok = np.abs(den) > 0
            np.divide(num, den, out=zsrc[k], where=ok)
        term = _sandwich(a, q.cor)
        contrib[k] = _factor(term, ys) - 1.0
        zk = zsrc[k]
        good = np.isfinite(zk) & (zk.real > 0)
        if np.any(good):
            yk = 1.0 / zk[good]
            stage_f[k, good] = _factor(q.cor[good], yk)
        a = np.matmul(a, q.data)
    total = 1.0 + contrib.sum(axis=0)
    return ChainNoise(total, stage_f, contrib, zsrc)


# --- design help: the collector current of least noise, and its plot --------------------------

def ce_low_noise(ic, beta, rs, *, refine: int = 6, **kw) -> dict:
    """:func:`ce_noise_design` over a grid, with the optimum collector current refined.

    The best point of the grid is refined by repeated finer grids (21 points, log-spaced)
    between its neighbours, ``refine`` times (each narrows the bracket about tenfold).  When the
    best point is an end of the grid the optimum is not bracketed and is not refined
    (``ic_opt_at_edge`` is True: widen the grid).

    Parameters
    ----------
    ic : array_like (N,)
        Collector currents in A, > 0, increasing.
    beta, rs :
        As in :func:`ce_noise_design` (``rs`` in ohm, > 0).
    refine : int
        Number of refinement passes (>= 0).
    **kw :
        ``temp``, ``rb``, ``freq``, ``va``, ``ft``, ``cmu``, ``flicker_corner`` of :func:`ce_noise_design`.

    Returns
    -------
    dict
        The keys of :func:`ce_noise_design` on the grid, and ``ic_best`` (A) and
        ``nf_db_at_ic_best`` (dB) after refinement, ``ic_opt_at_edge`` (bool).
    """
    ic = np.atleast_1d(np.asarray(ic, dtype=float))
    if ic.ndim == 1 and ic.size > 1 and not np.all(np.diff(ic) > 0):
        raise InputError("ic: expected increasing collector currents")
    if not (isinstance(refine, (int, np.integer)) and 0 <= refine <= 20):
        raise InputError(f"refine: expected a number of passes from 0 to 20, got {refine!r}")
    out = ce_noise_design(ic, beta, rs, **kw)
    k = int(np.argmin(out["result"].f))
    edge = k in (0, ic.size - 1)
    best, nf_best = float(ic[k]), float(out["nf_db"][k])
    if not edge:
        lo, hi = float(ic[k - 1]), float(ic[k + 1])
        for _ in range(refine):
            grid = np.geomspace(lo, hi, 21)
            r = ce_noise_design(grid, beta, rs, **kw)
            j = int(np.argmin(r["result"].f))
            if r["nf_db"][j] <= nf_best:
                best, nf_best = float(grid[j]), float(r["nf_db"][j])
            lo, hi = float(grid[max(j - 1, 0)]), float(grid[min(j + 1, grid.size - 1)])
    return {**out, "ic_best": best, "nf_db_at_ic_best": nf_best, "ic_opt_at_edge": edge}


def plot_nf_vs_ic(path, ic, curves: dict, optima: dict | None = None, *, title: str = "") -> None:
    """Draw noise figure against collector current, one curve per source resistance.

    Nothing is computed here; matplotlib (Agg backend) is imported only when called and the
    figure is written through :func:`devmodels.plotting.save_figure`.

    Parameters
    ----------
    path : str or Path
        Output file (.png or .svg).
    ic : array_like (N,)
        Collector currents in A.
    curves : dict of label -> array_like (N,)
        Noise figure in dB at each current, per source (label, e.g. ``"Rs = 1 kΩ"``).
    optima : dict of label -> (ic, nf_db), optional
        A marked point per curve (its least noise).
    title : str
        Figure title.
    """
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    from .plotting import _check_path, save_figure

    p = _check_path(path)
    x = np.asarray(ic, dtype=float)
    fig, ax = plt.subplots(figsize=(7.0, 4.5))
    try:
        for label, y in curves.items():
            (line,) = ax.semilogx(x, np.asarray(y, dtype=float), label=label)
            if optima and label in optima:
                xo, yo = optima[label]
                ax.plot([xo], [yo], "o", color=line.get_color())
        ax.set_xlabel("collector current IC (A)")
        ax.set_ylabel("noise figure NF (dB)")
        ax.grid(True, which="both", alpha=0.3)
        ax.legend()
        if title:
            ax.set_title(title)
        save_figure(fig, p, option="plot")
    finally:
        plt.close(fig)

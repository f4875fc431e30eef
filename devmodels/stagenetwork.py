r"""The stage as it is built: the bias network and the coupling and bypass capacitors.

A :class:`StageNetwork` adds to a stage's netlist the external elements a designer solders
in, so that the AC analysis is the circuit that gets built.  The supply is AC ground (node
``gnd``); port 1 is the input terminal ``in`` (the source side of the input coupling
capacitor), port 2 the output terminal ``out`` (the load side of the output capacitor).
Terminals are named by the device (b, c, e or g, d, s); below "base" means the first
terminal, "collector" the second, "emitter" the third.

========  ==========================  ==========================  =========================
config    input                       output                      third terminal
========  ==========================  ==========================  =========================
ce / cs   base, through ``c_in``      collector, through          emitter: ``re`` to
                                      ``c_out``                   ground, partly bypassed
cb / cg   emitter, through ``c_in``   collector, through          base: ``c_base`` to
          (``re`` to ground stays)    ``c_out``                   ground
cc / cd   base, through ``c_in``      emitter, through            collector: ``rc`` to
                                      ``c_out``                   ground (0: grounded)
========  ==========================  ==========================  =========================

Everywhere: the bias resistors at the base (``r1`` and ``r2`` of a divider, or ``rb`` from
the supply, both to AC ground; a collector-feedback ``rb`` from collector to base), ``rc``
from the collector to the supply.  In the common-emitter arrangement the emitter resistor
``re`` is split into an unbypassed part ``re - re_bypassed`` in series with the bypassed part
``re_bypassed`` that ``c_bypass`` shunts; in the other two the emitter is a port and ``re``
stays whole.  A capacitor given as ``"short"`` is an ideal one (its nodes are joined); an absent
coupling or base capacitor is ideal too; an absent ``c_bypass`` means no bypass (all of
``re`` is in the AC circuit).  These are the textbook arrangements (Sedra and Smith,
*Microelectronic Circuits*, the discrete-amplifier sections; from memory).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .exceptions import InputError
from .netlist import Element, Netlist, capacitor, resistor, thermal_noise

__all__ = ["StageNetwork", "SHORT", "GROUND", "PORT_IN", "PORT_OUT", "CAPACITORS"]

#: The value that marks an ideal (shorted) capacitor.
SHORT = "short"
#: Node names of the AC ground (supply and ground) and of the two port terminals.
GROUND, PORT_IN, PORT_OUT = "gnd", "in", "out"
#: The capacitor keys of a stage network.
CAPACITORS: tuple[str, ...] = ("c_in", "c_out", "c_bypass", "c_base")
_BIAS_KINDS = ("divider", "fixed", "collector-feedback", "none")


def _resistance(name: str, v, *, zero_ok: bool = True):
    """A resistance in ohm: a float, or an array of samples (a spread's) that are all positive
    or all zero (a resistor is either in the circuit or not, the same for every sample)."""
    if isinstance(v, np.ndarray) and v.ndim > 0:
        try:
            x = np.asarray(v, dtype=float)
        except (TypeError, ValueError):
            raise InputError(f"{name}: expected resistances in ohm, got an array of {v.dtype}") from None
        bad = ~(np.isfinite(x) & ((x >= 0) if zero_ok else (x > 0)))
        if bad.any():
            raise InputError(f"{name}: expected resistances {'>=' if zero_ok else '>'} 0 ohm, got "
                             f"{float(x[bad][0]):g} (sample {int(np.argmax(bad))})")
        if (x == 0).any() and (x > 0).any():
            raise InputError(f"{name}: an array of resistances must be all positive or all zero, got "
                             f"0 at sample {int(np.argmax(x == 0))} and {float(x[x > 0][0]):g} at another")
        return x
    try:
        x = float(v)
    except (TypeError, ValueError):
        raise InputError(f"{name}: expected a resistance in ohm, got {v!r}") from None
    if isinstance(v, bool) or not math.isfinite(x) or x < 0 or (x == 0 and not zero_ok):
        raise InputError(f"{name}: expected a resistance {'>=' if zero_ok else '>'} 0 ohm, got {v!r}")
    return x


def _real(c) -> bool:
    """Whether a capacitor value is a real part (a float or an array of samples), not ideal or absent."""
    return c is not None and not isinstance(c, str)


def _present(name: str, v) -> bool:
    """Whether a resistance (float or array of samples) is in the circuit: > 0 (for an array,
    every sample > 0; all zero: absent; a mixture is refused, as in :func:`_resistance`)."""
    if np.ndim(v) == 0:
        return bool(v > 0)
    if np.all(v > 0):
        return True
    if np.all(v == 0):
        return False
    raise InputError(f"{name}: an array of resistances must be all positive or all zero (some samples are 0)")


def _capacitance(name: str, v):
    if isinstance(v, np.ndarray) and v.ndim > 0:  # a spread's samples: every one a real capacitor
        try:
            x = np.asarray(v, dtype=float)
        except (TypeError, ValueError):
            raise InputError(f"{name}: expected capacitances in F, got an array of {v.dtype}") from None
        bad = ~(np.isfinite(x) & (x > 0))
        if bad.any():
            raise InputError(f"{name}: expected capacitances > 0 F, got {float(x[bad][0]):g} "
                             f"(sample {int(np.argmax(bad))})")
        return x
    if v is None or (isinstance(v, str) and v == SHORT):
        return v
    try:
        x = float(v)
    except (TypeError, ValueError):
        raise InputError(f"{name}: expected a capacitance in F or \"short\", got {v!r}") from None
    if isinstance(v, bool) or not math.isfinite(x) or x <= 0:
        raise InputError(f"{name}: expected a capacitance > 0 F (or \"short\"), got {v!r}")
    return x


@dataclass(frozen=True, slots=True)
class StageNetwork:
    """The external network of a stage in the AC analysis (module docstring).

    Parameters
    ----------
    bias : {'divider', 'fixed', 'collector-feedback', 'none'}
        How the base is biased: ``r1``/``r2`` divider, ``rb`` from the supply, ``rb`` from
        the collector, or nothing at the base (a bias applied elsewhere).
    r1, r2 : float, ndarray (N,) or None
        Divider resistors in ohm (supply to base, base to ground).
    rb : float, ndarray (N,) or None
        Base resistor in ohm (from the supply, or from the collector).
    rc : float or ndarray (N,)
        Collector resistor to the supply in ohm (0: collector at AC ground).
    re : float or ndarray (N,)
        Emitter resistor in ohm (0: emitter at ground).
    re_bypassed : float, ndarray (N,) or None
        The part of ``re`` that ``c_bypass`` shunts, ohm (default: all of ``re`` when
        ``c_bypass`` is given).
    c_in, c_out, c_base : float, ndarray (N,), "short" or None
        Input and output coupling capacitors and the base-to-ground capacitor of a common-base
        stage, F (None or "short": ideal).
    c_bypass : float, ndarray (N,), "short" or None
        Emitter bypass capacitor, F ("short": ideal bypass; None: no bypass).

    Notes
    -----
    Every resistor and real capacitor may be an array of N samples (a spread's,
    :mod:`devmodels.spread`): the netlist then carries arrays of element values, as the device
    model's do.  A resistor's array is all positive or all zero (in the circuit for every sample
    or for none); a capacitor's is all positive.
    """

    bias: str = "divider"
    r1: float | None = None
    r2: float | None = None
    rb: float | None = None
    rc: float = 0.0
    re: float = 0.0
    re_bypassed: float | None = None
    c_in: object = None
    c_out: object = None
    c_bypass: object = None
    c_base: object = None

    def __post_init__(self) -> None:
        if self.bias not in _BIAS_KINDS:
            raise InputError(f"bias: expected one of {', '.join(_BIAS_KINDS)}, got {self.bias!r}")
        need = {"divider": ("r1", "r2"), "fixed": ("rb",), "collector-feedback": ("rb",), "none": ()}
        for name in ("r1", "r2", "rb"):
            v = getattr(self, name)
            if name in need[self.bias]:
                if v is None:
                    raise InputError(f"{name}: missing; a {self.bias} network needs "
                                     f"{' and '.join(need[self.bias])} (ohm)")
                object.__setattr__(self, name, _resistance(name, v, zero_ok=False))
            elif v is not None:
                raise InputError(f"{name}: not part of a {self.bias} network")
        object.__setattr__(self, "rc", _resistance("rc", self.rc))
        object.__setattr__(self, "re", _resistance("re", self.re))
        for name in CAPACITORS:
            object.__setattr__(self, name, _capacitance(name, getattr(self, name)))
        if self.re_bypassed is not None:
            rb_ = _resistance("re_bypassed", self.re_bypassed)
            over = np.asarray(rb_ > self.re)
            if over.any():
                if over.ndim == 0:
                    raise InputError(f"re_bypassed: {rb_:g} ohm is more than re = {self.re:g} ohm")
                k = int(np.argmax(over))
                raise InputError(f"re_bypassed: {float(np.broadcast_to(rb_, over.shape)[k]):g} ohm is more than re "
                                 f"= {float(np.broadcast_to(self.re, over.shape)[k]):g} ohm (sample {k})")
            if self.c_bypass is None:
                raise InputError("re_bypassed: given without c_bypass (the capacitor that bypasses it)")
            object.__setattr__(self, "re_bypassed", rb_)

    @property
    def bypassed(self):
        """The part of ``re`` shunted by ``c_bypass``, ohm (0 without a bypass capacitor; an
        array when the resistors are arrays of samples)."""
        if self.c_bypass is None:
            return 0.0
        return self.re if self.re_bypassed is None else self.re_bypassed

    @property
    def split(self) -> bool:
        """True when ``re`` is two resistors in series: an unbypassed part and the part
        ``re_bypassed`` that ``c_bypass`` shunts (``0 < re_bypassed < re``)."""
        if self.c_bypass is None or self.re_bypassed is None:
            return False
        return _present("re_bypassed", self.re_bypassed) and _present("re_unbypassed", self.re - self.re_bypassed)

    @property
    def resistors(self) -> dict:
        """The resistors soldered in, by name, ohm: ``r1`` and ``r2`` (or ``rb``), ``rc`` and
        ``re`` when they are not 0; ``re`` split in ``re_unbypassed`` and ``re_bypassed`` when
        :attr:`split` (two parts in series, each with its own tolerance).

        Returns
        -------
        dict of str -> float or ndarray
            The values in ohm (the keys :meth:`with_resistors` takes).
        """
        out = {n: getattr(self, n) for n in ("r1", "r2", "rb") if getattr(self, n) is not None}
        if _present("rc", self.rc):
            out["rc"] = self.rc
        if self.split:
            out["re_unbypassed"] = self.re - self.re_bypassed
            out["re_bypassed"] = self.re_bypassed
        elif _present("re", self.re):
            out["re"] = self.re
        return out

    def with_resistors(self, values) -> "StageNetwork":
        """The same network with other resistor values (a spread's samples), capacitors as they are.

        Parameters
        ----------
        values : mapping of str -> float or ndarray (N,)
            New values in ohm under the keys of :attr:`resistors`; other keys are ignored, a
            missing key keeps its value.  With :attr:`split`, ``re`` becomes the sum of the
            two parts (the DC operating point uses the sum too) and ``re_bypassed`` the second.

        Returns
        -------
        StageNetwork
        """
        import dataclasses

        new = {n: values[n] for n in ("r1", "r2", "rb", "rc") if n in values and n in self.resistors}
        if self.split:
            part = values.get("re_bypassed", self.re_bypassed)
            new["re"] = values.get("re_unbypassed", self.re - self.re_bypassed) + part
            new["re_bypassed"] = part
        elif "re" in values and "re" in self.resistors:
            new["re"] = values["re"]
            if self.re_bypassed is not None and _present("re_bypassed", self.re_bypassed):
                new["re_bypassed"] = new["re"]  # all of re bypassed (re_bypassed == re)
        return dataclasses.replace(self, **new)

    def shorted(self) -> "StageNetwork":
        """The same network with every coupling and bypass capacitor ideal (mid-band)."""
        import dataclasses

        return dataclasses.replace(self, c_in=None, c_out=None, c_base=None,
                                   c_bypass=None if self.c_bypass is None else SHORT)

    def capacitors(self) -> dict[str, float]:
        """The capacitors that are real parts (not ideal), F (arrays when given as arrays)."""
        return {n: getattr(self, n) for n in CAPACITORS if _real(getattr(self, n))}

    def with_capacitors(self, values) -> "StageNetwork":
        """The same network with other values of its real capacitors (a spread's samples).

        Parameters
        ----------
        values : mapping of str -> float or ndarray (N,)
            New values in F under the keys of :meth:`capacitors`; other keys are ignored (an
            ideal or absent capacitor stays so).

        Returns
        -------
        StageNetwork
        """
        import dataclasses

        real = self.capacitors()
        return dataclasses.replace(self, **{n: v for n, v in values.items() if n in real})

    def netlist(self, terminals: tuple[str, str, str], config_index: int,
                temp: float = 300.0) -> tuple[Netlist, dict[str, str]]:
        """The network's elements around a device, and the node joins it asks for.

        Parameters
        ----------
        terminals : (str, str, str)
            The device's terminal names: base, collector, emitter (gate, drain, source).
        config_index : int
            0 for common emitter (source), 1 for common base (gate), 2 for common collector (drain).
        temp : float
            Temperature of the resistors in K (their thermal noise sources).

        Returns
        -------
        (Netlist, dict)
            The elements, and a mapping of node names to join (ideal capacitors, a zero ``rc``
            of a common-collector stage, a grounded base of a common-base stage); the caller
            applies it to the whole stage netlist.
        """
        b, c, e = terminals
        els: list[Element] = []
        joins: dict[str, str] = {}

        def couple(name: str, a: str, z: str) -> None:
            v = getattr(self, name)
            if _real(v):
                els.append(capacitor(name, a, z, v))
            else:
                joins[z] = a  # an ideal capacitor: the terminal is the port node itself

        # port 1 and port 2 terminals of each arrangement
        inside_in, inside_out = ((b, c), (e, c), (b, e))[config_index]
        couple("c_in", PORT_IN, inside_in)
        couple("c_out", PORT_OUT, inside_out)
        # bias at the base
        if self.bias == "divider":
            els += [resistor("r1", b, GROUND, self.r1), resistor("r2", b, GROUND, self.r2)]
        elif self.bias == "fixed":
            els.append(resistor("rb", b, GROUND, self.rb))
        elif self.bias == "collector-feedback":
            els.append(resistor("rb", c, b, self.rb))
        # collector to the supply (AC ground)
        if _present("rc", self.rc):
            els.append(resistor("rc", c, GROUND, self.rc))
        elif config_index == 2:
            joins[c] = GROUND  # common collector: the collector is AC ground
        # emitter resistor: unbypassed part, then the bypassed part and its capacitor
        # (a bypass applies to the common-emitter arrangement only: in cb and cc the emitter
        # is a port, and its resistor stays whole)
        bypassed = self.bypassed if config_index == 0 else 0.0
        unbypassed = self.re - bypassed
        has_bypassed = _present("re_bypassed", bypassed)
        if not _present("re", self.re):
            if config_index == 0:  # common emitter: the emitter is AC ground
                joins[e] = GROUND
        else:
            node = e
            if _present("re_unbypassed", unbypassed):
                node = e + "_rb" if has_bypassed else GROUND
                els.append(resistor("re_unbypassed" if has_bypassed else "re", e, node, unbypassed))
            if has_bypassed:
                if not _real(self.c_bypass):  # "short": an ideal bypass
                    joins[node] = GROUND
                else:
                    els += [resistor("re_bypassed", node, GROUND, bypassed),
                            capacitor("c_bypass", node, GROUND, self.c_bypass)]
        # common base: the base to ground through c_base
        if config_index == 1:
            if _real(self.c_base):
                els.append(capacitor("c_base", b, GROUND, self.c_base))
            else:
                joins[b] = GROUND
        els += [n for el in els for n in thermal_noise(el, temp)]
        return Netlist(tuple(els)), joins

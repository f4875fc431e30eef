"""A stage: a device model in a configuration, with its external elements, as one netlist.

The stage's netlist is the device's netlist (:meth:`HybridPi.netlist`,
:meth:`FetModel.netlist`, ...) with

- the nodes the device ties to the common terminal (a FET's body) joined to it;
- ``rdeg``: a resistor in series with the emitter (source) terminal;
- ``rfb``: a resistor from the collector (drain) to the base (gate).

Its terminals keep the device's names (b, c, e or g, d, s).  One engine
(:func:`devmodels.netlist.reduce_to`) turns it into the indefinite matrix at the terminals,
and the configuration picks the two-port out of that (:mod:`devmodels.configs`).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Protocol

import numpy as np

from .configs import CONFIG_TERMINALS, config_y
from .exceptions import InputError
from .netlist import Netlist, check_freq, reduce_over_freq, reduce_to, resistor, thermal_noise
from .stagenetwork import GROUND, PORT_IN, PORT_OUT, StageNetwork
from .twoport import TwoPort

__all__ = ["Stage", "DeviceModel", "stage_two_port"]


class DeviceModel(Protocol):
    """What a stage needs from a device model (bipolar and FET models implement it)."""

    family: str
    configs: tuple[str, ...]
    terminals: tuple[str, str, str]
    tied_to_common: tuple[str, ...]
    element_names: tuple[str, ...]
    temperature: float

    def netlist(self) -> Netlist:
        """The model's elements between its terminals, internal nodes and tied nodes."""


@dataclass(frozen=True, slots=True)
class Stage:
    """A device model in a configuration, with optional external elements.

    Parameters
    ----------
    model : DeviceModel
        The small-signal device model (:class:`~devmodels.models.HybridPi`,
        :class:`~devmodels.models.TModel`, :class:`~devmodels.fet.FetModel`).
    config : str, optional
        One of ``model.configs`` (``ce``, ``cb``, ``cc`` or ``cs``, ``cg``, ``cd``);
        default the first of them (common emitter / common source).
    rdeg : float or ndarray
        External emitter (source) degeneration resistance in ohm (0: none).
    rfb : float, ndarray or None
        External collector-base (drain-gate) feedback resistance in ohm (None: none).
    network : StageNetwork or None
        The bias network and coupling and bypass capacitors as built
        (:mod:`devmodels.stagenetwork`); None: the bare device with ``rdeg`` and ``rfb``.
    """

    model: DeviceModel
    config: str | None = None
    rdeg: object = 0.0
    rfb: object = None
    network: StageNetwork | None = None

    def __post_init__(self) -> None:
        configs = getattr(self.model, "configs", None)
        if configs is None or not callable(getattr(self.model, "netlist", None)):
            raise InputError(f"model: expected a device model (HybridPi, TModel, FetModel), "
                             f"got {type(self.model).__name__}")
        if self.config is None:
            object.__setattr__(self, "config", configs[0])
        if self.config not in configs:
            raise InputError(f"config: {self.config!r} is not a configuration of a {self.model.family} "
                             f"device; use {', '.join(configs)}")
        rdeg = np.asarray(self.rdeg, dtype=float)
        if not np.all(np.isfinite(rdeg) & (rdeg >= 0)):
            raise InputError(f"rdeg: expected a resistance >= 0 ohm, got {_first_bad(rdeg, lambda v: v >= 0)}")
        if self.network is not None and not isinstance(self.network, StageNetwork):
            raise InputError(f"network: expected a StageNetwork, got {type(self.network).__name__}")
        if self.rfb is not None:
            rfb = np.asarray(self.rfb, dtype=float)
            if not np.all(np.isfinite(rfb) & (rfb > 0)):
                raise InputError(f"rfb: expected a positive resistance in ohm, got "
                                 f"{_first_bad(rfb, lambda v: v > 0)}")

    @property
    def terminals(self) -> tuple[str, str, str]:
        """The node order of :meth:`indefinite`.

        Without a network: the device's terminals (b, c, e or g, d, s).  With one: the
        input, output and ground nodes placed where the configuration's port-1, port-2 and
        common terminals are, so that :func:`devmodels.configs.config_y` picks the stage's
        two-port out of :meth:`indefinite` either way.
        """
        if self.network is None:
            return self.model.terminals
        nodes = ["", "", ""]
        for where, node in zip(CONFIG_TERMINALS[self.config], (PORT_IN, PORT_OUT, GROUND)):
            nodes[where] = node
        return tuple(nodes)

    def netlist(self) -> Netlist:
        """The stage's netlist (module docstring)."""
        model = self.model
        b, c, e = model.terminals
        net = model.netlist()
        extra = []
        if np.any(np.asarray(self.rdeg) != 0):
            net = net.renamed({e: e + "_dev"})
            extra.append(resistor("rdeg", e + "_dev", e, self.rdeg))
            extra += thermal_noise(extra[-1], model.temperature)
        # nodes tied to the common terminal (a FET's body) join it at the terminal, below rdeg;
        # in a stage with its network, the common terminal is AC ground
        common = model.terminals[CONFIG_TERMINALS[self.config][2]] if self.network is None else GROUND
        net = net.renamed({n: common for n in model.tied_to_common})
        if self.rfb is not None:
            extra.append(resistor("rfb", c, b, self.rfb))
            extra += thermal_noise(extra[-1], model.temperature)
        net = net + Netlist(tuple(extra))
        if self.network is not None:
            index = model.configs.index(self.config)
            outer, joins = self.network.netlist(model.terminals, index, model.temperature)
            net = (net + outer).renamed(_closure(joins))
        return net

    def midband(self) -> "Stage":
        """The stage at mid-band: every coupling and bypass capacitor shorted and the device's
        capacitances left out (the reference of the low and high corners)."""
        import dataclasses

        caps = {e.name: 0.0 for e in self.model.netlist().elements if e.kind in ("capacitor", "inductor")}
        model = dataclasses.replace(self.model, **caps) if caps else self.model
        return Stage(model, self.config, self.rdeg, self.rfb,
                     None if self.network is None else self.network.shorted())

    @property
    def same_indefinite_for_all_configs(self) -> bool:
        """True when the indefinite matrix does not depend on the configuration (nothing is
        tied to the common terminal, e.g. any bipolar model, or a FET without body elements)."""
        return self.network is None and not self.model.netlist().touches(self.model.tied_to_common)

    def indefinite_block(self, omega, n: int) -> np.ndarray:
        """Indefinite matrix (n, 3, 3) at one or more angular frequencies.

        Parameters
        ----------
        omega : float or ndarray (n,)
            Angular frequency in rad/s.
        n : int
            Number of points; element values may be arrays of shape (n,) (a spread's samples).
        """
        return reduce_to(self.netlist(), self.terminals, omega, n)

    def indefinite(self, freq) -> np.ndarray:
        """Indefinite admittance matrix (F, 3, 3) in S, node order ``terminals``.

        Parameters
        ----------
        freq : array_like
            Frequencies in Hz.
        """
        return reduce_over_freq(self.netlist(), self.terminals, freq)

    def two_port(self, freq, kind: str = "y", z0=50.0) -> TwoPort:
        """The stage's two-port parameters.

        Parameters
        ----------
        freq : array_like
            Frequencies in Hz.
        kind : {'y', 'z', 'h', 'g', 'abcd', 's'}
            Parameter kind.
        z0 : float or (float, float)
            Reference resistance(s) of S in ohm.
        """
        f = check_freq(freq)
        y = config_y(self.indefinite(f), self.config)
        return TwoPort(f, y, "y", z0, self.config).to(kind)


def _closure(joins: dict[str, str]) -> dict[str, str]:
    """Follow chains of joins (a -> b, b -> gnd gives a -> gnd)."""
    out = {}
    for a in joins:
        z, seen = joins[a], {a}
        while z in joins and z not in seen:
            seen.add(z)
            z = joins[z]
        out[a] = z
    return out


def _first_bad(v: np.ndarray, ok) -> str:
    flat = np.atleast_1d(v)
    bad = flat[~(np.isfinite(flat) & ok(flat))]
    return f"{float(bad[0]):g}" if bad.size else "?"


def stage_two_port(model, config: str, freq, kind: str = "y", z0=50.0, *, rdeg: float = 0.0,
                   rfb: float | None = None) -> TwoPort:
    """Shorthand for ``Stage(model, config, rdeg, rfb).two_port(freq, kind, z0)``.

    Parameters
    ----------
    model, config, rdeg, rfb :
        As in :class:`Stage`.
    freq, kind, z0 :
        As in :meth:`Stage.two_port`.
    """
    return Stage(model, config, rdeg, rfb).two_port(freq, kind, z0)


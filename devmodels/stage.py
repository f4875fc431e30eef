"""The stage pipeline: bias point -> model -> indefinite matrix -> configuration two-port."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .configs import check_config, config_y
from .indefinite import check_freq, device_indefinite
from .twoport import TwoPort

__all__ = ["Stage", "stage_two_port"]


@dataclass(frozen=True, slots=True)
class Stage:
    """A device model in a configuration, with optional external elements.

    Parameters
    ----------
    model : HybridPi, TModel or a FET model
        The small-signal device model.
    config : str
        ``ce``, ``cb``, ``cc`` (or ``cs``, ``cg``, ``cd`` for FETs).
    rdeg : float
        External emitter/source degeneration resistance in ohm (0: none).
    rfb : float or None
        External collector-base/drain-gate feedback resistance in ohm (None: none).
    """

    model: object
    config: str = "ce"
    rdeg: float = 0.0
    rfb: float | None = None

    def __post_init__(self) -> None:
        check_config(self.config)

    def indefinite(self, freq) -> np.ndarray:
        """Indefinite admittance matrix (F, 3, 3) in S."""
        stamp = getattr(self.model, "indefinite_for_config", None)
        if stamp is not None:  # models whose terminal matrix depends on the configuration
            return stamp(freq, self.config, rdeg=self.rdeg, rfb=self.rfb)
        return device_indefinite(self.model, freq, rdeg=self.rdeg, rfb=self.rfb)

    def two_port(self, freq, kind: str = "y", z0=50.0) -> TwoPort:
        """Parameters of ``kind`` at frequencies ``freq`` (Hz)."""
        f = check_freq(freq)
        y = config_y(self.indefinite(f), self.config)
        return TwoPort(f, y, "y", z0, self.config).to(kind)


def stage_two_port(model, config: str, freq, kind: str = "y", z0=50.0, *, rdeg: float = 0.0,
                   rfb: float | None = None) -> TwoPort:
    """Shorthand for ``Stage(model, config, rdeg, rfb).two_port(freq, kind, z0)``."""
    return Stage(model, config, rdeg, rfb).two_port(freq, kind, z0)

"""Physical constants (exact SI 2019 values) and the fixed option sets."""

from __future__ import annotations

from typing import Literal, get_args

__all__ = [
    "BOLTZMANN",
    "ELEMENTARY_CHARGE",
    "Kind",
    "KINDS",
    "BjtConfig",
    "FetConfig",
    "Config",
    "BJT_CONFIGS",
    "FET_CONFIGS",
    "thermal_voltage",
]

#: Boltzmann constant k in J/K (exact since the 2019 SI redefinition).
BOLTZMANN = 1.380649e-23
#: Elementary charge q in C (exact since the 2019 SI redefinition).
ELEMENTARY_CHARGE = 1.602176634e-19

Kind = Literal["y", "z", "h", "g", "abcd", "s"]
KINDS: tuple[str, ...] = get_args(Kind)

BjtConfig = Literal["ce", "cb", "cc"]
FetConfig = Literal["cs", "cg", "cd"]
Config = Literal["ce", "cb", "cc", "cs", "cg", "cd"]
BJT_CONFIGS: tuple[str, ...] = get_args(BjtConfig)
FET_CONFIGS: tuple[str, ...] = get_args(FetConfig)


def thermal_voltage(temp: float) -> float:
    """Thermal voltage VT = k T / q.

    Parameters
    ----------
    temp : float
        Absolute temperature in K.

    Returns
    -------
    float
        VT in V (25.852 mV at 300 K).
    """
    return BOLTZMANN * temp / ELEMENTARY_CHARGE

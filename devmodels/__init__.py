"""devmodels: small-signal transistor stages, from a bias point to two-port parameters.

Data flow (one module per step)::

    bias.BipolarBias -> models.HybridPi / TModel -> netlist.reduce_to (F, 3, 3)
        -> configs / stage.Stage (ce, cb, cc; cs, cg, cd with fet.FetModel) -> twoport.TwoPort + conversions.convert
        -> crosscheck (against scikit-rf)

All values are SI floats (A, V, ohm, F, Hz, K).  Two-port data are complex arrays of
shape (F, 2, 2), frequency first.  ``import devmodels`` loads numpy only; scikit-rf,
sympy, matplotlib, rich and typer are imported where they are used.
"""

from __future__ import annotations

from .bias import BipolarBias
from .configs import CONFIG_TERMINALS, config_y, indefinite_from_y, reconfigure
from .constants import BOLTZMANN, ELEMENTARY_CHARGE, KINDS, thermal_voltage
from .conversions import convert
from .verify import CrossCheck, crosscheck
from .chain import analyse_chain, cascade
from .interconnect import Connection, connect
from .fet import FetModel
from .fetbias import JfetBias, MosfetBias
from .exceptions import (BiasError, DevModelsError, FileFormatError, InputError, OutputError,
                         SingularParameterError)
from .netlist import Element, Netlist
from .models import HybridPi, TModel
from .stage import Stage, stage_two_port
from .twoport import TwoPort

__version__ = "0.2.0"

__all__ = [
    "BipolarBias", "HybridPi", "TModel", "Stage", "stage_two_port", "TwoPort", "convert",
    "reconfigure", "config_y", "indefinite_from_y", "Netlist", "Element", "crosscheck", "CrossCheck",
    "CONFIG_TERMINALS", "KINDS", "BOLTZMANN", "ELEMENTARY_CHARGE", "thermal_voltage",
    "DevModelsError", "InputError", "BiasError", "SingularParameterError", "FileFormatError", "OutputError",
    "MosfetBias", "JfetBias", "FetModel", "cascade", "connect", "Connection", "analyse_chain",
]

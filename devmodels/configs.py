"""Stage configurations: two-ports from the indefinite admittance matrix, and back.

The indefinite matrix has node order (b, c, e) for a bipolar device and (g, d, s)
for a FET.  A configuration grounds one terminal (the common one) and takes two
others as port 1 and port 2:

======  =======  =======  ========
config  port 1   port 2   common
======  =======  =======  ========
ce/cs   b / g    c / d    e / s
cb/cg   e / s    c / d    b / g
cc/cd   b / g    e / s    c / d
======  =======  =======  ========

Grounding a terminal of an indefinite matrix means deleting its row and column
(Shekel, "Matrix analysis of multi-terminal transducers", Proc. IRE 42, 1954;
the same rule is in Zepler and Nichols, *Transistors: a Hands-on Approach*, from memory).
Going back, the missing row and column follow from the zero row and column sums.
"""

from __future__ import annotations

import numpy as np

from .constants import BJT_CONFIGS, FET_CONFIGS
from .exceptions import InputError, SingularParameterError
from .twoport import TwoPort

__all__ = ["CONFIG_TERMINALS", "config_y", "indefinite_from_y", "reconfigure", "check_config"]

#: (port-1 terminal, port-2 terminal, common terminal) as indices into (b, c, e) / (g, d, s).
CONFIG_TERMINALS: dict[str, tuple[int, int, int]] = {
    "ce": (0, 1, 2), "cb": (2, 1, 0), "cc": (0, 2, 1),
    "cs": (0, 1, 2), "cg": (2, 1, 0), "cd": (0, 2, 1),
}


def check_config(config: str, family: str | None = None) -> str:
    """Validate a configuration name; ``family`` is ``'bjt'``, ``'fet'`` or ``None`` (either)."""
    allowed = {"bjt": BJT_CONFIGS, "fet": FET_CONFIGS}.get(family, BJT_CONFIGS + FET_CONFIGS)
    if config not in allowed:
        raise InputError(f"config: unknown configuration {config!r}, expected one of {', '.join(allowed)}")
    return config


def config_y(indefinite: np.ndarray, config: str) -> np.ndarray:
    """Y parameters (F, 2, 2) of a configuration from an indefinite matrix (F, 3, 3).

    Parameters
    ----------
    indefinite : ndarray, complex, shape (F, 3, 3)
        Indefinite admittance matrix in S, node order (b, c, e) or (g, d, s).
    config : str
        Configuration (see :data:`CONFIG_TERMINALS`).
    """
    p1, p2, _ = CONFIG_TERMINALS[check_config(config)]
    y = np.empty((indefinite.shape[0], 2, 2), dtype=complex)
    for i, a in enumerate((p1, p2)):  # four strided copies: faster than fancy indexing
        for j, b in enumerate((p1, p2)):
            y[:, i, j] = indefinite[:, a, b]
    return y


def indefinite_from_y(y: np.ndarray, config: str) -> np.ndarray:
    """Indefinite matrix (F, 3, 3) of a three-terminal device from its Y in ``config``.

    Parameters
    ----------
    y : array_like, complex, shape (F, 2, 2)
        Y parameters in S, ports as in :data:`CONFIG_TERMINALS` for ``config``.
    config : str
        The configuration ``y`` is given in.
    """
    p1, p2, k = CONFIG_TERMINALS[check_config(config)]
    y = np.asarray(y, dtype=complex)
    Y3 = np.empty((y.shape[0], 3, 3), dtype=complex)
    Y3[:, p1, p1] = y[:, 0, 0]
    Y3[:, p1, p2] = y[:, 0, 1]
    Y3[:, p2, p1] = y[:, 1, 0]
    Y3[:, p2, p2] = y[:, 1, 1]
    Y3[:, p1, k] = -(y[:, 0, 0] + y[:, 0, 1])
    Y3[:, p2, k] = -(y[:, 1, 0] + y[:, 1, 1])
    Y3[:, k, p1] = -(y[:, 0, 0] + y[:, 1, 0])
    Y3[:, k, p2] = -(y[:, 0, 1] + y[:, 1, 1])
    Y3[:, k, k] = y[:, 0, 0] + y[:, 0, 1] + y[:, 1, 0] + y[:, 1, 1]
    return Y3


def reconfigure(tp: TwoPort, src: str, dst: str, kind: str | None = None) -> TwoPort:
    """A three-terminal device given in configuration ``src`` returned in ``dst``.

    Parameters
    ----------
    tp : TwoPort
        The device's parameters in configuration ``src`` (any kind).
    src, dst : str
        Configurations, both of one family (``ce``/``cb``/``cc`` or ``cs``/``cg``/``cd``).
    kind : str, optional
        Kind of the result (default: the kind of ``tp``).

    Raises
    ------
    SingularParameterError
        When the device has no Y parameters (the route through the indefinite
        admittance matrix needs them) or the target kind does not exist.
    """
    check_config(src)
    check_config(dst)
    if (src in BJT_CONFIGS) != (dst in BJT_CONFIGS):
        raise InputError(f"to: cannot reconfigure between a bipolar ({src}) and a FET ({dst}) configuration"
                         if src in BJT_CONFIGS else
                         f"to: cannot reconfigure between a FET ({src}) and a bipolar ({dst}) configuration")
    try:
        y = tp.to("y").data
    except SingularParameterError as exc:
        raise SingularParameterError(
            f"tp: reconfiguring needs the Y parameters of the device, which do not exist ({exc})") from None
    y_new = config_y(indefinite_from_y(y, src), dst)
    out = TwoPort(tp.freq, y_new, "y", tp.z0, dst, tp.label)
    return out.to(kind or tp.kind)

"""Which configuration wins: the categories of ``devmodels compare``, decided from results.

:func:`winners` takes the terminated results of several configurations of one device (at one
frequency) and their bandwidths and names, per category, the configuration with the best
value; a tie (within a relative 1e-9) wins nothing.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Callable

__all__ = ["Category", "CATEGORIES", "winners"]


@dataclass(frozen=True, slots=True)
class Category:
    """One category of the comparison.

    Attributes
    ----------
    key : str
        JSON key under ``best``.
    text : str
        Description (``highest voltage gain |avs|``).
    value : callable(point, bandwidth) -> float
        The quantity compared, from one terminated point and the bandwidth (Hz or None).
    higher : bool
        True when more is better.
    """

    key: str
    text: str
    value: Callable[[dict, float | None], float]
    higher: bool


def _mag(name: str) -> Callable[[dict, float | None], float]:
    def f(p: dict, bw: float | None) -> float:
        return abs(complex(p[name]))
    return f


def _bandwidth(p: dict, bw: float | None) -> float:
    return math.inf if bw is None else bw  # no -3 dB point in the searched range: the widest


#: The categories, in the order shown.
CATEGORIES: tuple[Category, ...] = (
    Category("voltage_gain", "highest voltage gain |avs|", _mag("avs"), True),
    Category("current_gain", "highest current gain |ai|", _mag("ai"), True),
    Category("power_gain", "highest transducer gain GT", lambda p, bw: p["gt_db"], True),
    Category("input_impedance_high", "highest input impedance |zin|", _mag("zin"), True),
    Category("input_impedance_low", "lowest input impedance |zin|", _mag("zin"), False),
    Category("output_impedance_low", "lowest output impedance |zout|", _mag("zout"), False),
    Category("output_impedance_high", "highest output impedance |zout|", _mag("zout"), True),
    Category("bandwidth", "widest bandwidth", _bandwidth, True),
)


def winners(points: dict[str, dict], bandwidths: dict[str, float | None]) -> dict[str, str | None]:
    """The configuration that wins each category, or None on a tie or where no value exists.

    Parameters
    ----------
    points : dict of config -> dict
        One terminated-analysis point per configuration (``Terminated.point``: ``avs``, ``ai``,
        ``zin``, ``zout`` complex, ``gt_db`` float; NaN where a value does not exist).
    bandwidths : dict of config -> float or None
        The -3 dB bandwidth in Hz (None: not reached in the searched range).

    Returns
    -------
    dict of category key -> config or None
    """
    best: dict[str, str | None] = {}
    for cat in CATEGORIES:
        vals = {c: cat.value(points[c], bandwidths.get(c)) for c in points}
        vals = {c: v for c, v in vals.items() if not math.isnan(v)}
        if not vals:
            best[cat.key] = None
            continue
        target = max(vals.values()) if cat.higher else min(vals.values())
        tied = [c for c, v in vals.items() if v == target or (math.isfinite(v) and math.isfinite(target)
                                                            and abs(v - target) <= 1e-9 * abs(target))]
        best[cat.key] = tied[0] if len(tied) == 1 else None
    return best

"""Which configuration wins: the categories of ``devmodels compare``, decided from results.

:func:`winners` takes the terminated results of several configurations of one device (at one
frequency) and their bandwidths and names, per category, the configuration with the best
value; a tie (within a relative 1e-9, or the category's own ``tie``) wins nothing.  :func:`configuration_noise` gives each
configuration's noise figure at the source and its minimum noise figure (the "quietest" category).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Callable

__all__ = ["Category", "CATEGORIES", "winners", "configuration_noise"]


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
    tie : float
        Values closer than this (absolute, in the quantity's unit) to the best also tie, besides
        the relative 1e-9 (0: none).
    """

    key: str
    text: str
    value: Callable[[dict, float | None], float]
    higher: bool
    tie: float = 0.0


def _mag(name: str) -> Callable[[dict, float | None], float]:
    """|value| of a gain or impedance; a value that does not exist (NaN: an open port, an
    unbounded gain, shown as ``open`` / ``unbounded``) is infinitely large, not left out."""
    def f(p: dict, bw: float | None) -> float:
        v = abs(complex(p[name]))
        return math.inf if math.isnan(v) else v
    return f


def _bandwidth(p: dict, bw: float | None) -> float:
    return math.inf if bw is None else bw  # no -3 dB point in the searched range: the widest


def _noise_figure(p: dict, bw: float | None) -> float:
    v = p.get("nf_db")
    return math.nan if v is None else float(v)


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
    # NF within 0.01 dB (the table's resolution, far below any measurement's) is a tie
    Category("quietest", "lowest noise figure NF at Rs", _noise_figure, False, tie=0.01),
)


def winners(points: dict[str, dict], bandwidths: dict[str, float | None]) -> dict[str, str | None]:
    """The configuration that wins each category, or None on a tie or where no value exists.

    Parameters
    ----------
    points : dict of config -> dict
        One terminated-analysis point per configuration (``Terminated.point``: ``avs``, ``ai``,
        ``zin``, ``zout`` complex, ``gt_db`` float; NaN where a value does not exist), and
        optionally ``nf_db`` (float or None; missing or None: no noise figure, no part in
        "quietest").
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
                                                            and abs(v - target) <= max(1e-9 * abs(target),
                                                                                       cat.tie))]
        best[cat.key] = tied[0] if len(tied) == 1 else None
    return best


def configuration_noise(stages: dict, freq: float, zs) -> dict[str, dict[str, float | None]]:
    """Each configuration's noise figure at the source ``zs`` and its minimum noise figure.

    The stage's noisy two-port (:func:`devmodels.noise.stage_noise`) and its noise parameters
    (:func:`devmodels.noise.noise_parameters`), the source at T0 = 290 K.

    Parameters
    ----------
    stages : dict of config -> devmodels.stage.Stage or devmodels.noise.NoisyTwoPort
        The stages (one device in each of its configurations), or their noisy two-ports at
        ``freq`` already computed.
    freq : float
        The frequency in Hz (above 0 Hz where a 1/f source is present).
    zs : complex
        Source impedance in ohm.  Where its real part is not > 0 (an ideal source) the noise
        figure is not defined: ``nf_db`` is None (``nfmin_db`` is still given).

    Returns
    -------
    dict of config -> {"nf_db": float or None, "nfmin_db": float or None}
        In dB; None where the value does not exist (no forward transmission).
    """
    from .exceptions import SingularParameterError
    from .noise import NoisyTwoPort, noise_parameters, stage_noise

    z = complex(zs)
    ok_source = math.isfinite(z.real) and math.isfinite(z.imag) and z.real > 0
    out: dict[str, dict[str, float | None]] = {}
    for c, st in stages.items():
        try:
            ntp = st if isinstance(st, NoisyTwoPort) else stage_noise(st, [freq])
            res = noise_parameters(ntp, zs=z if ok_source else 1.0)
        except SingularParameterError:
            out[c] = {"nf_db": None, "nfmin_db": None}
            continue
        nf, nfmin = float(res.nf_db[0]), float(res.nfmin_db[0])
        out[c] = {"nf_db": nf if ok_source and math.isfinite(nf) else None,
                  "nfmin_db": nfmin if math.isfinite(nfmin) else None}
    return out

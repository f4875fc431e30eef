"""A stage's parameters over a long frequency sweep, block by block (``devmodels sweep``).

:func:`sweep_two_port` computes the same :class:`~devmodels.twoport.TwoPort` as
``stage.two_port(freq, "y", z0)``, in blocks of :data:`BLOCK` frequencies written into one
result array, and reports progress after each block through an optional callback (the command
line draws a progress bar with it).
"""

from __future__ import annotations

from typing import Callable

import numpy as np

__all__ = ["BLOCK", "sweep_two_port"]

#: Frequencies per block (progress granularity; the stage engine blocks internally as well).
BLOCK = 50_000


def sweep_two_port(stage, freq, z0=50.0, progress: Callable[[int, int], None] | None = None):
    """Y parameters of ``stage`` at every frequency of ``freq`` (Hz).

    Parameters
    ----------
    stage : Stage
        The stage.
    freq : array_like (F,)
        Frequencies in Hz.
    z0 : float or (float, float)
        Reference resistance(s) in ohm carried by the result.
    progress : callable(done, total), optional
        Called after each block with the number of frequencies done.

    Returns
    -------
    TwoPort
        Y parameters, shape (F, 2, 2).
    """
    from .twoport import TwoPort

    f = np.asarray(freq, dtype=float)
    if progress is None or f.size <= BLOCK:
        tp = stage.two_port(f, "y", z0)
        if progress is not None:
            progress(f.size, f.size)
        return tp
    out = np.empty((f.size, 2, 2), dtype=complex)
    for i in range(0, f.size, BLOCK):
        out[i:i + BLOCK] = stage.two_port(f[i:i + BLOCK], "y", z0).data
        progress(min(i + BLOCK, f.size), f.size)
    return TwoPort(f, out, "y", z0, stage.config)

"""Histograms of a spread analysis (matplotlib, imported here only, Agg backend).

One panel per result: the histogram of the samples, the 5th/50th/95th percentiles as
dashed lines, and the worst case over the box of limits (``worst_min``, ``worst_max`` of
:func:`devmodels.worstcase.worst_case`) as markers.  Bipolar and FET spreads alike.  The
figure is rendered into memory and written atomically (:func:`devmodels.plotting.save_figure`).
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np

__all__ = ["plot_spread"]

#: Panels: result key, axis label.
PANELS: tuple[tuple[str, str], ...] = (
    ("av", "|av| = |V2/V1|"), ("avs", "|avs| = |V2/Vs|"), ("zin", "|Zin| (kΩ)"), ("zout", "|Zout| (kΩ)"),
    ("gt_db", "GT (dB)"), ("ai", "|ai| = |-I2/I1|"), ("ic", "IC (mA)"), ("vce", "VCE (V)"),
    ("power", "P (mW)"), ("k", "Rollett K"), ("gm", "gm (mS)"), ("ro", "ro (kΩ)"),
    ("nf_db", "NF at Rs (dB)"), ("nfmin_db", "NFmin (dB)"),
)
_SCALE = {"ic": 1e3, "power": 1e3, "zin": 1e-3, "zout": 1e-3, "gm": 1e3, "ro": 1e-3}


def plot_spread(result, path: str | Path, bins: int = 60) -> Path:
    """Draw the histograms of a :class:`~devmodels.spread.SpreadResult` into ``path`` (PNG).

    Parameters
    ----------
    result : SpreadResult
        What :func:`devmodels.spread.run_spread` returned, with its per-sample values
        (``keep_values=True``).
    path : str or Path
        Output file.
    bins : int
        Histogram bins per panel.

    Returns
    -------
    Path
        The file written.

    Raises
    ------
    InputError
        A suffix that is not an image format matplotlib writes.
    OutputError
        The file cannot be written (``"plot: cannot write ..."``); an existing file is left
        as it was.
    """
    from .exceptions import InputError
    from .fileio import check_destination
    from .plotting import save_figure

    if result.values is None:
        raise InputError("plot: the histograms need every sample's value; run the spread with keep_values=True")
    out = check_destination(path, option="plot")
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    panels = [(k, label) for k, label in PANELS if result.stats.get(k) is not None]
    from .worstcase import parse_spec

    limits: dict[str, list[float]] = {}  # the specification limits, drawn where they apply
    for text in (result.yield_ or {}).get("specs", ()):
        name, _, value = parse_spec(text, tuple(result.stats))
        limits.setdefault(name, []).append(value)
    cols = 5 if len(panels) > 6 else 3
    rows = max(1, math.ceil(len(panels) / cols))
    fig, axes = plt.subplots(rows, cols, figsize=(3.2 * cols, 2.7 * rows + 0.8), squeeze=False)
    for ax in axes.flat[len(panels):]:
        ax.set_visible(False)
    for ax, (key, label) in zip(axes.flat, panels):
        scale = _SCALE.get(key, 1.0)
        v = result.values[key]
        v = v[np.isfinite(v)] * scale
        lo, hi = float(v.min()), float(v.max())
        ax.hist(v, bins=bins if hi > lo else 1, color="#4c72b0", alpha=0.85)
        st = result.stats[key]
        for q, style in (("p5", ":"), ("p50", "--"), ("p95", ":")):
            ax.axvline(st[q] * scale, color="#333333", linestyle=style, linewidth=1)
        for limit in limits.get(key, ()):
            ax.axvline(limit * scale, color="#55a868", linestyle="-", linewidth=1.6)
        w = (result.worst or {}).get(key) or {}
        for end, color, marker in (("min", "#c44e52", "v"), ("max", "#dd8452", "^")):
            x = w.get(f"worst_{end}")
            if x is not None and math.isfinite(x):
                ax.plot([x * scale], [0], marker=marker, color=color, markersize=9, clip_on=False,
                        linestyle="none", label=f"worst {end}")
        ax.set_xlabel(label)
        ax.set_yticks([])
        ax.tick_params(axis="x", labelsize=8)
    axes.flat[0].legend(fontsize=7, loc="upper right", frameon=False)
    s, r = result.setup, result.ranges
    from .units import format_si

    def imp(z) -> str:
        z = complex(z)
        if math.isinf(z.real):
            return "open"
        if z.imag == 0:
            return format_si(z.real, "Ω")
        return f"{format_si(z.real, 'Ω')} {'+' if z.imag >= 0 else '-'} j{format_si(abs(z.imag), 'Ω')}"

    fig.suptitle(f"{s.config.upper()} stage at {format_si(s.freq, 'Hz')}, Rs = {imp(s.rs)}, RL = {imp(s.rl)}: "
                 f"{result.samples:,} samples (seed {result.seed})\n{_limits_text(s, r)}; "
                 "dashed: median; dotted: 5th and 95th percentiles; triangles: worst min / max over the limits"
                 + ("; green: specification limits" if limits else ""),
                 fontsize=9)
    fig.tight_layout()
    try:
        return save_figure(fig, out, option="plot")
    finally:
        plt.close(fig)


def _limits_text(setup, ranges) -> str:
    """The limits in one line for the title (the setup says what they are)."""
    return setup.describe(ranges)["limits_text"]

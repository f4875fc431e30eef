"""Plots of terminated-analysis results (matplotlib, Agg backend, imported only when called).

The functions take result objects (:class:`~devmodels.analysis.Terminated`,
:class:`~devmodels.twoport.TwoPort`, :class:`~devmodels.merit.FrequencyFigures`) and only
draw them; nothing here computes a physical quantity.  Figures are rendered into memory and
written atomically through :mod:`devmodels.fileio` (:func:`save_figure`).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from .exceptions import InputError

__all__ = ["plot_report", "save_figure", "PLOT_SUFFIXES", "plot_noise_circles"]

PLOT_SUFFIXES = (".png", ".svg")
_COLORS = {"ce": "tab:blue", "cb": "tab:orange", "cc": "tab:green",
           "cs": "tab:blue", "cg": "tab:orange", "cd": "tab:green"}


def _check_path(path) -> Path:
    """Check a plot file name (``.png`` or ``.svg``) and that it can be written.

    Raises :class:`InputError` for another suffix and
    :class:`~devmodels.exceptions.OutputError` (``"plot: cannot write ..."``) when the file
    cannot be written (see :func:`devmodels.fileio.check_destination`).
    """
    from .fileio import check_destination, short_path

    p = Path(path)
    if p.suffix.lower() not in PLOT_SUFFIXES:
        raise InputError(f"plot: expected a .png or .svg file name, got {short_path(p)!r}")
    return check_destination(p, option="plot")


def save_figure(fig, path, *, option: str = "plot", dpi: int = 110) -> Path:
    """Render ``fig`` into memory (format from the suffix) and write it atomically to ``path``.

    The image is written through :func:`devmodels.fileio.atomic_write_bytes`: never half a
    file, a symbolic link at ``path`` replaced (not followed), the mode of a replaced file
    kept; :class:`~devmodels.exceptions.OutputError` (starting with ``option``) when it
    cannot be written.

    Parameters
    ----------
    fig : matplotlib.figure.Figure
        The figure.
    path : str or Path
        Output file; its suffix (``.png``, ``.svg``, or another format matplotlib knows)
        chooses the format.
    option : str
        Option name for error messages.
    dpi : int
        Resolution of raster formats, dots per inch.
    """
    import io

    from .fileio import atomic_write_bytes, short_path

    p = Path(path)
    fmt = p.suffix.lower().lstrip(".")
    if fmt not in fig.canvas.get_supported_filetypes():
        raise InputError(f"{option}: expected a file name ending in an image format (.png, .svg), "
                         f"got {short_path(p)!r}")
    buf = io.BytesIO()
    fig.savefig(buf, format=fmt, dpi=dpi)
    return atomic_write_bytes(p, buf.getvalue(), option=option)


def _db20(x: np.ndarray) -> np.ndarray:
    with np.errstate(divide="ignore", invalid="ignore"):
        out = 20 * np.log10(np.abs(x))
    return np.where(np.isfinite(out), out, np.nan)


def _mark(ax, f: float, text: str, color: str, y: float = 0.04) -> None:
    """A vertical line at frequency ``f`` (Hz) with a label near the bottom of the axes."""
    ax.axvline(f, color=color, ls=":", lw=1.0)
    ax.annotate(text, (f, y), xycoords=("data", "axes fraction"), xytext=(4, 0), textcoords="offset points",
                color=color, fontsize=8, rotation=90, va="bottom")


def _phase_deg(g: np.ndarray) -> np.ndarray:
    """Unwrapped phase in degrees, shifted by whole turns so that the phase where |g| is largest
    (the mid-band) lies in (-270, 90]: an inverting stage reads -180 there whatever the sign of
    a rounding-sized imaginary part, so every plot of every stage starts the same way."""
    ph = np.degrees(np.unwrap(np.angle(g)))
    mag = np.abs(g)
    if not np.any(np.isfinite(mag)):
        return ph
    ref = ph[np.nanargmax(mag)]
    return ph - 360.0 * np.ceil((ref - 90.0) / 360.0)


def _gain_axes(ax_mag, ax_ph, gains: dict, figures=None, mark_freq: float | None = None) -> None:
    for name, res in gains.items():
        if res.freq is None:
            continue
        col = _COLORS.get(name)
        label = name.upper()
        mk = dict(marker="o", ms=3) if len(res) <= 30 else {}  # few points: show where they are
        ax_mag.semilogx(res.freq, _db20(res.avs), color=col, label=f"{label} |avs|", **mk)
        ax_mag.semilogx(res.freq, _db20(res.av), color=col, ls="--", lw=0.9, label=f"{label} |av|")
        ax_ph.semilogx(res.freq, _phase_deg(res.avs), color=col, label=label, **mk)
    from .units import format_si

    corners = []
    if figures is not None:
        corners = [(getattr(figures, "f_low", None), "f_low"), (getattr(figures, "bandwidth", None), "f_high")]
    for f, name in corners:
        if f is not None:
            _mark(ax_mag, f, f"{name} = {format_si(f, 'Hz')}", "tab:red")
    if mark_freq is not None and mark_freq > 0:
        _mark(ax_mag, mark_freq, f"analysis at {format_si(mark_freq, 'Hz')}", "tab:green", y=0.55)
    ax_mag.set_xlabel("frequency (Hz)")
    ax_mag.set_ylabel("voltage gain (dB)")
    ax_mag.set_title("Terminated voltage gain" + (" and its -3 dB corners" if any(f for f, _ in corners) else ""))
    ax_mag.grid(True, which="both", alpha=0.3)
    ax_mag.legend(fontsize=7, ncol=2)
    ax_ph.set_xlabel("frequency (Hz)")
    ax_ph.set_ylabel("phase of avs (deg)")
    ax_ph.set_title("Phase")
    ax_ph.grid(True, which="both", alpha=0.3)
    ax_ph.legend(fontsize=7)


def _smith_axes(ax, s_ports: dict) -> None:
    from skrf.plotting import smith

    smith(ax=ax, chart_type="z", draw_labels=True)
    for name, tp in s_ports.items():
        col = _COLORS.get(name)
        for (i, j), ls in (((0, 0), "-"), ((1, 1), "--")):
            g = tp.data[:, i, j]
            ax.plot(g.real, g.imag, color=col, ls=ls, label=f"{name.upper()} S{i + 1}{j + 1}")
            ax.plot(g.real[:1], g.imag[:1], "o", color=col, ms=3)
    z0 = next(iter(s_ports.values())).z0
    ref = f"{z0[0]:g} Ω" if z0[0] == z0[1] else f"{z0[0]:g} / {z0[1]:g} Ω"
    ax.set_title(f"Smith chart: S11 (solid), S22 (dashed), z0 = {ref}; dot = lowest frequency", fontsize=9)
    ax.legend(fontsize=7, loc="lower left")


def _h21_axes(ax, figs) -> None:
    from .units import format_si

    ax.loglog(figs.freq, np.abs(figs.h21), color="tab:purple", label="|h21| (CE device)")
    ax.axhline(1.0, color="grey", lw=0.8)
    if figs.ft is not None:
        ax.axvline(figs.ft, color="tab:red", ls="--", lw=0.9)
        ax.annotate(f"fT = {format_si(figs.ft, 'Hz')}", (figs.ft, 1.0), xytext=(6, 12), textcoords="offset points",
                    color="tab:red", fontsize=8)
    if figs.f_beta is not None:
        ax.axvline(figs.f_beta, color="tab:grey", ls=":", lw=0.9)
        ax.annotate(f"fβ = {format_si(figs.f_beta, 'Hz')}", (figs.f_beta, figs.h21_0 / np.sqrt(2)), xytext=(6, 6),
                    textcoords="offset points", fontsize=8)
    ax.set_xlabel("frequency (Hz)")
    ax.set_ylabel("|h21|")
    ax.set_title("Short-circuit current gain")
    ax.grid(True, which="both", alpha=0.3)
    ax.legend(fontsize=7)


def _noise_axes(ax, noise: dict) -> None:
    """Noise figure at the source (solid) and NFmin (dashed) against frequency, per configuration."""
    for name, res in noise.items():
        col = _COLORS.get(name)
        mk = dict(marker="o", ms=3) if res.freq.size <= 30 else {}
        ax.semilogx(res.freq, res.nf_db, color=col, label=f"{name.upper()} NF at Rs", **mk)
        ax.semilogx(res.freq, res.nfmin_db, color=col, ls="--", lw=0.9, label=f"{name.upper()} NFmin")
    ax.set_xlabel("frequency (Hz)")
    ax.set_ylabel("noise figure (dB)")
    ax.set_title("Noise figure (source at T0 = 290 K)")
    ax.grid(True, which="both", alpha=0.3)
    ax.legend(fontsize=7)


def plot_report(path, gains: dict | None = None, s_ports: dict | None = None, figures=None,
                title: str = "", mark_freq: float | None = None, noise: dict | None = None) -> Path:
    """Draw what is given into one figure and save it as PNG or SVG.

    Parameters
    ----------
    path : str or Path
        Output file, ``.png`` or ``.svg``.
    gains : dict of str -> Terminated, optional
        Terminated results over frequency by configuration: gain magnitude and phase.
    s_ports : dict of str -> TwoPort (kind 's'), optional
        S parameters by configuration: Smith chart of S11 and S22.
    figures : FrequencyFigures, optional
        |h21| of the CE device with fT marked.
    title : str
        Figure title.
    mark_freq : float, optional
        A frequency to mark on the gain plot (Hz), e.g. the frequency of a single-point analysis.
    noise : dict of str -> NoiseResult, optional
        Noise over frequency by configuration: a panel of the noise figure at the source and
        NFmin (dB).

    Returns
    -------
    Path
        The file written.

    Raises
    ------
    InputError
        Another suffix than ``.png`` / ``.svg``, or nothing to draw.
    OutputError
        The file cannot be written (``"plot: cannot write ..."``); an existing file is left
        as it was.
    """
    p = _check_path(path)
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    panels = []
    if gains and any(r.freq is not None and len(r) > 1 for r in gains.values()):
        panels += ["mag", "phase"]
    if s_ports and any(tp.freq is not None and len(tp) > 1 for tp in s_ports.values()):
        panels.append("smith")
    if figures is not None:
        panels.append("h21")
    if noise and any(r.freq.size > 1 for r in noise.values()):
        panels.append("noise")
    if not panels:
        raise InputError("plot: one frequency point is not worth a plot; give several --freq values, "
                         "or draw the whole band with 'devmodels sweep ... --plot'")
    n = len(panels)
    cols = 2 if n > 1 else 1
    rows = (n + 1) // 2
    fig = plt.figure(figsize=(6.2 * cols, 4.6 * rows), layout="constrained")
    for k, what in enumerate(panels):
        ax = fig.add_subplot(rows, cols, k + 1)
        if what == "mag":
            ax_mag = ax
        elif what == "phase":
            _gain_axes(ax_mag, ax, gains, figures, mark_freq)
        elif what == "smith":
            _smith_axes(ax, s_ports)
        elif what == "noise":
            _noise_axes(ax, noise)
        else:
            _h21_axes(ax, figures)
    if title:
        fig.suptitle(title, fontsize=11)
    try:
        save_figure(fig, p, option="plot")
    finally:
        plt.close(fig)
    return p


def plot_noise_circles(path, freq, gamma_opt, circles: dict, gamma_s=None, *, z0: float = 50.0,
                       title: str = "") -> Path:
    """Draw circles of constant noise figure on a Smith chart (scikit-rf's grid) and save it.

    Nothing is computed here: the centres and radii come from
    :func:`devmodels.noise.noise_circle`.  One colour per frequency, one line style per level;
    the optimum source (Gamma_opt) is a dot and the source used (``gamma_s``) a cross.

    Parameters
    ----------
    path : str or Path
        Output file, ``.png`` or ``.svg``.
    freq : array_like (F,)
        Frequencies in Hz.
    gamma_opt : array_like, complex (F,)
        Optimum source reflection coefficient at each frequency (NaN: not drawn).
    circles : dict of float -> (centre, radius)
        Per noise-figure level in dB: centres (F,) complex and radii (F,) in the reflection
        plane (NaN where the level is below NFmin: not drawn).
    gamma_s : complex, optional
        The source's reflection coefficient at ``z0``.
    z0 : float
        Reference resistance of the chart, ohm.
    title : str
        Figure title.

    Returns
    -------
    Path
        The file written.
    """
    p = _check_path(path)
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt
    from skrf.plotting import smith

    from .units import format_si

    f = np.atleast_1d(np.asarray(freq, dtype=float))
    g = np.atleast_1d(np.asarray(gamma_opt, dtype=complex))
    styles = ["-", "--", "-.", ":"]
    theta = np.linspace(0.0, 2 * np.pi, 361)
    colors = plt.rcParams["axes.prop_cycle"].by_key()["color"]
    fig, ax = plt.subplots(figsize=(8.8, 6.4), layout="constrained")
    try:
        smith(ax=ax, chart_type="z", draw_labels=True)
        for k in range(f.size):
            col = colors[k % len(colors)]
            fk = format_si(float(f[k]), "Hz")
            if np.isfinite(g[k]):
                ax.plot([g[k].real], [g[k].imag], "o", color=col, ms=4, label=f"Γopt at {fk}")
            for j, (level, (centre, radius)) in enumerate(circles.items()):
                c, r = complex(np.atleast_1d(centre)[k]), float(np.atleast_1d(radius)[k])
                if not (np.isfinite(c) and np.isfinite(r)):
                    continue
                ax.plot(c.real + r * np.cos(theta), c.imag + r * np.sin(theta), color=col,
                        ls=styles[j % len(styles)], lw=1.0, label=f"NF = {level:g} dB at {fk}")
        if gamma_s is not None and np.isfinite(gamma_s):
            ax.plot([complex(gamma_s).real], [complex(gamma_s).imag], "x", color="black", ms=7, label="source")
        ax.set_title(title or f"Noise figure circles, z0 = {z0:g} Ω", fontsize=9)
        fig.legend(fontsize=7, loc="outside right upper")
        save_figure(fig, p, option="plot")
    finally:
        plt.close(fig)
    return p

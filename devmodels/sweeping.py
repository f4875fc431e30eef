"""A stage's parameters over a long frequency sweep, block by block (``devmodels sweep``).

:func:`sweep_two_port` computes the same :class:`~devmodels.twoport.TwoPort` as
``stage.two_port(freq, "y", z0)``, in blocks of :data:`BLOCK` frequencies written into one
result array, and reports progress after each block through an optional callback (the command
line draws a progress bar with it).

:func:`sweep_stream` holds no parameters at all: it returns a :class:`StreamedSweep`, a view
with the attributes the writers of :mod:`devmodels.export` read (``freq``, ``data``, ``kind``,
``z0``, ``config``, ``len()``), whose ``data[i:j]`` computes the stage's parameters of that block
of frequencies when it is asked for.  Handed to :func:`devmodels.export.write_by_extension` (or
``touchstone_chunks``, ``csv_chunks``, ``json_chunks``), the export computes, formats and writes
one block at a time, so its memory is the frequencies (8 bytes per point) plus a few blocks,
whatever the number of points; the text is the same, byte for byte, as the export of
``sweep_two_port(stage, freq, z0).to(kind, z0)``.

**Noise over the sweep.**  :func:`sweep_noise` gives the noise parameters and the noise
figure at a source over the same frequencies (:func:`devmodels.noise.stage_noise` and
:func:`devmodels.noise.noise_parameters`, the source at T0 = 290 K), in the same blocks;
:class:`NoiseBlocks` computes the noise figure at the source and NFmin of a block of a
streamed sweep when it is asked for (the ``nf_db`` and ``nfmin_db`` columns of a CSV or JSON
export, :func:`noise_columns`).  The noise is computed from the netlist's noise sources, a
second reduction of the netlist beside the parameters' (a 1e6-point CSV export took about 15 %
longer with the noise columns on the machine it was written on; the text formatting dominates).
"""

from __future__ import annotations

from typing import Callable

import numpy as np

__all__ = ["BLOCK", "sweep_two_port", "sweep_stream", "StreamedSweep", "sweep_noise", "NoiseBlocks",
           "noise_columns", "NOISE_KEYS"]

from .netlist import FREQ_BLOCK

#: Frequencies per block (progress granularity).  A multiple of the stage engine's own block
#: :data:`devmodels.netlist.FREQ_BLOCK`, so the blocked loop computes every value bit for bit
#: as one call over the whole sweep does (the last digit can depend on the engine's block).
BLOCK = 12 * FREQ_BLOCK


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


class _BlockData:
    """``data`` of a :class:`StreamedSweep`: slicing computes that block of parameters."""

    __slots__ = ("_sweep",)

    def __init__(self, sweep: "StreamedSweep") -> None:
        self._sweep = sweep

    @property
    def shape(self) -> tuple[int, int, int]:
        return (len(self._sweep), 2, 2)

    def __len__(self) -> int:
        return len(self._sweep)

    def __getitem__(self, key) -> np.ndarray:
        if not isinstance(key, slice):
            raise TypeError("a streamed sweep is read in blocks: data[start:stop]")
        start, stop, step = key.indices(len(self._sweep))
        if step != 1:
            raise TypeError("a streamed sweep is read in contiguous blocks (step 1)")
        return self._sweep.block(start, max(start, stop)).data


class StreamedSweep:
    """A stage's two-port over a sweep, computed block by block when read (nothing held).

    Parameters
    ----------
    stage : Stage
        The stage.
    freq : array_like (F,)
        Frequencies in Hz.
    kind : {'y', 'z', 'h', 'g', 'abcd', 's'}
        Parameter kind of the blocks.
    z0 : float or (float, float)
        Reference resistance(s) in ohm (S parameters, and the reference the writers show).
    progress : callable(done, total), optional
        Called after each block is computed with the index (exclusive) of its last frequency.

    Attributes
    ----------
    freq : ndarray (F,)
        Frequencies in Hz (read-only; the only per-point array held, 8 bytes per point).
    data : object
        ``data[i:j]`` is the (j - i, 2, 2) complex array of the parameters at ``freq[i:j]``,
        computed on demand (contiguous slices only).
    kind, z0, config, label
        As for :class:`~devmodels.twoport.TwoPort` (``z0`` as a pair of floats, ohm).

    Notes
    -----
    Each block is ``stage.two_port(freq[i:j], "y", z0).to(kind, z0)``, the computation of
    :func:`sweep_two_port` followed by the conversion the command line applies, so every
    number equals the one of the whole sweep computed at once.
    """

    def __init__(self, stage, freq, kind: str = "y", z0=50.0,
                 progress: Callable[[int, int], None] | None = None) -> None:
        from .conversions import normalize_z0

        f = np.array(freq, dtype=float)
        f.setflags(write=False)
        self.freq = f
        self.kind = kind
        self.z0 = normalize_z0(z0)
        self.config = stage.config
        self.label = ""
        self.data = _BlockData(self)
        self._stage = stage
        self._z0_in = z0
        self._progress = progress

    def __len__(self) -> int:
        return int(self.freq.size)

    def block(self, start: int, stop: int):
        """The parameters at ``freq[start:stop]`` as a :class:`~devmodels.twoport.TwoPort` of ``kind``.

        Parameters
        ----------
        start, stop : int
            First and one-past-last index into ``freq``.
        """
        from .twoport import TwoPort

        # The stage engine computes in blocks of FREQ_BLOCK frequencies, and the last digit of a
        # value can depend on the block it was computed in: compute the aligned blocks that
        # contain [start, stop) and keep the part asked for, so every value is bit for bit the
        # one of the whole sweep (the writers' blocks are multiples of FREQ_BLOCK: no waste).
        a = start - start % FREQ_BLOCK
        b = min(len(self), -(-stop // FREQ_BLOCK) * FREQ_BLOCK)
        y = self._stage.two_port(self.freq[a:b], "y", self._z0_in)
        tp = y.to(self.kind, self._z0_in)
        if (a, b) != (start, stop):
            tp = TwoPort(self.freq[start:stop], tp.data[start - a:stop - a], tp.kind, tp.z0, tp.config)
        if self._progress is not None:
            self._progress(stop, len(self))
        return tp

    def at(self, index):
        """The parameters at the frequencies ``freq[index]`` (a few points: a table's sample).

        Parameters
        ----------
        index : array_like of int
            Increasing indices into ``freq``.

        Returns
        -------
        TwoPort
            Parameters of ``kind``, frequencies in Hz.  Computed at these frequencies alone,
            so the last digit of a value may differ from the written file's (rounding only).
        """
        idx = np.asarray(index, dtype=int)
        return self._stage.two_port(self.freq[idx], "y", self._z0_in).to(self.kind, self._z0_in)

    def whole(self):
        """Every point at once, as :class:`~devmodels.twoport.TwoPort` (holds the whole sweep: small sweeps only)."""
        return self.block(0, len(self))


def sweep_stream(stage, freq, kind: str = "y", z0=50.0,
                 progress: Callable[[int, int], None] | None = None) -> StreamedSweep:
    """The sweep of ``stage`` over ``freq`` (Hz) as a :class:`StreamedSweep` (computed when written).

    Parameters
    ----------
    stage : Stage
        The stage.
    freq : array_like (F,)
        Frequencies in Hz.
    kind : {'y', 'z', 'h', 'g', 'abcd', 's'}
        Parameter kind.
    z0 : float or (float, float)
        Reference resistance(s) in ohm.
    progress : callable(done, total), optional
        Called after each block is computed.

    Returns
    -------
    StreamedSweep
        Hand it to :func:`devmodels.export.write_by_extension` (or the ``*_chunks`` writers):
        the export then holds a few blocks of parameters and text, never the whole sweep.

    Examples
    --------
    >>> sw = sweep_stream(stage, np.geomspace(1e3, 1e10, 10_000_000), "s", 50.0)  # doctest: +SKIP
    >>> write_by_extension(sw, "big.s2p")                                           # doctest: +SKIP
    """
    return StreamedSweep(stage, freq, kind, z0, progress)


# --- noise over the sweep ----------------------------------------------------------------------

#: JSON keys (and CSV headers) of the noise columns of a sweep: noise figure at the source and
#: the minimum noise figure, dB.
NOISE_KEYS = ("nf_db", "nfmin_db")
_NOISE_HEADERS = ("nf at rs [dB]", "nfmin [dB]")


def sweep_noise(stage, freq, zs=50.0, z0=50.0, progress: Callable[[int, int], None] | None = None):
    """Noise parameters of ``stage`` and its noise figure at the source ``zs`` over ``freq``.

    :func:`devmodels.noise.stage_noise` then :func:`devmodels.noise.noise_parameters` (the
    source at T0 = 290 K; Hillbrand and Russer, IEEE Trans. Circuits Syst. 23(4), 1976), in
    blocks of :data:`BLOCK` frequencies written into one result.

    Parameters
    ----------
    stage : Stage
        The stage (its noise sources at the temperature of the device and its resistors).
    freq : array_like (F,)
        Frequencies in Hz (above 0 Hz when a 1/f corner is set).
    zs : complex
        Source impedance in ohm (real part > 0).
    z0 : float
        Reference resistance of ``gamma_opt`` in ohm.
    progress : callable(done, total), optional
        Called after each block with the number of frequencies done.

    Returns
    -------
    devmodels.noise.NoiseResult
        Over ``freq``.
    """
    from .noise import NoiseResult, noise_parameters, stage_noise

    f = np.asarray(freq, dtype=float)
    if f.size <= BLOCK:
        res = noise_parameters(stage_noise(stage, f), zs=zs, z0=z0)
        if progress is not None:
            progress(f.size, f.size)
        return res
    names = ("f", "fmin", "rn", "yopt", "ys", "en", "in_", "correlation")
    cplx = ("yopt", "ys", "correlation")
    out = {k: np.empty(f.size, dtype=complex if k in cplx else float) for k in names}
    zref = z0
    for i in range(0, f.size, BLOCK):
        r = noise_parameters(stage_noise(stage, f[i:i + BLOCK]), zs=zs, z0=z0)
        for k in names:
            out[k][i:i + BLOCK] = getattr(r, k)
        zref = r.z0
        if progress is not None:
            progress(min(i + BLOCK, f.size), f.size)
    return NoiseResult(f, out["f"], out["fmin"], out["rn"], out["yopt"], out["ys"], out["en"], out["in_"],
                       out["correlation"], zref)


class NoiseBlocks:
    """Noise figure at a source and NFmin (dB) of a stage over a sweep, a block at a time when read.

    ``blocks[i:j]`` is the (j - i, 2) float array of [NF at ``zs``, NFmin] in dB at
    ``freq[i:j]``, computed then (in the engine's aligned blocks of
    :data:`devmodels.netlist.FREQ_BLOCK`; a value equals the one of :func:`sweep_noise` over
    the whole sweep to the last digit or two, the rounding of numpy's vector kernels on arrays
    of another length).  Nothing per point is held but the frequencies.

    Parameters
    ----------
    stage : Stage
        The stage.
    freq : array_like (F,)
        Frequencies in Hz.
    zs : complex
        Source impedance in ohm (real part > 0), at T0 = 290 K.
    """

    def __init__(self, stage, freq, zs=50.0) -> None:
        f = np.array(freq, dtype=float)
        f.setflags(write=False)
        self.freq = f
        self._stage = stage
        self._zs = zs

    def __len__(self) -> int:
        return int(self.freq.size)

    def __getitem__(self, key) -> np.ndarray:
        from .noise import noise_parameters, stage_noise

        if not isinstance(key, slice):
            raise TypeError("noise of a streamed sweep is read in blocks: blocks[start:stop]")
        start, stop, step = key.indices(len(self))
        if step != 1:
            raise TypeError("noise of a streamed sweep is read in contiguous blocks (step 1)")
        stop = max(start, stop)
        a = start - start % FREQ_BLOCK
        b = min(len(self), -(-stop // FREQ_BLOCK) * FREQ_BLOCK)
        res = noise_parameters(stage_noise(self._stage, self.freq[a:b]), zs=self._zs)
        out = np.column_stack([res.nf_db, res.nfmin_db])
        return out[start - a:stop - a]


def noise_columns(values):
    """The noise figure columns of a sweep's export (:class:`devmodels.export.Columns`).

    Parameters
    ----------
    values : NoiseResult or NoiseBlocks
        The noise over the sweep: computed (a :class:`~devmodels.noise.NoiseResult`) or
        computed block by block as the file is written (:class:`NoiseBlocks`).

    Returns
    -------
    devmodels.export.Columns
        Keys :data:`NOISE_KEYS` (``nf_db``: noise figure at the source, ``nfmin_db``: the
        minimum noise figure, dB), CSV headers ``nf at rs [dB]`` and ``nfmin [dB]``.
    """
    from .export import Columns

    if isinstance(values, NoiseBlocks):
        return Columns(NOISE_KEYS, _NOISE_HEADERS, values)
    return Columns(NOISE_KEYS, _NOISE_HEADERS, np.column_stack([values.nf_db, values.nfmin_db]))

r"""Writing two-port data to files: Touchstone 1.1 and 2.0, CSV, JSON.

Touchstone (Touchstone File Format Specification, versions 1.1 and 2.0, IBIS Open Forum;
from memory):

- Version 1.1: one option line ``# <freq unit> <kind> <format> R <ref>``, then one line per
  frequency.  A two-port line lists N11, **N21**, N12, N22 (the one exception to row order).
  The data are *normalised* by the one reference resistance R: Z/R and Y*R; for H,
  h11/R, h12, h21, h22*R; for G, g11*R, g12, g21, g22/R.  S is at reference R at
  both ports, so S with a different reference per port needs version 2.0.
- Version 2.0: ``[Version] 2.0``, the option line, ``[Number of Ports] 2``,
  ``[Two-Port Data Order] 12_21`` (chosen here: row order), ``[Number of Frequencies]``,
  ``[Reference]`` with one value per port, ``[Network Data]`` ... ``[End]``.  Y, Z, H and G
  values are *not* normalised in version 2.0.

ABCD has no Touchstone form; write it as CSV or JSON.

Every writer formats the data block by block (:data:`BLOCK` frequencies at a time, one ``%``
format of a repeated line template over each flattened block; no per-line Python formatting),
so the memory of an export does not grow with the number of points, and writes the blocks
through :mod:`devmodels.fileio`: a temporary file in the target's folder that replaces the
target with :func:`os.replace` only when complete, so a failed write never leaves a
half-written file.  The ``*_chunks`` functions give the same text as an iterator of blocks;
joined, they equal the ``*_text`` functions.
"""

from __future__ import annotations

import json
import math
from pathlib import Path
from typing import Iterator

import numpy as np

from .exceptions import InputError
from .fileio import atomic_write_chunks, atomic_write_text
from .twoport import TwoPort

__all__ = ["write_touchstone", "write_csv", "write_json", "twoport_dict", "touchstone_text",
           "csv_text", "atomic_write", "TOUCHSTONE_KINDS", "write_by_extension", "touchstone1_scale",
           "touchstone_chunks", "csv_chunks", "json_chunks", "BLOCK", "Columns"]

#: Kinds Touchstone can hold.
TOUCHSTONE_KINDS = ("s", "y", "z", "h", "g")
#: Digits of every number written (round trip better than 1e-15 relative).
_FMT = "%.17g"
#: Rows (frequencies) formatted and written per block: the memory of an export is a few
#: blocks (about 5 MB of text), whatever the number of points.
BLOCK = 16384
#: Points per block of the JSON writer (Python objects cost more per point than text).
JSON_BLOCK = 4096
#: Element order (flat index into the 2x2 matrix) of Touchstone 1.x two-port lines
#: (11, 21, 12, 22) and of row order (11, 12, 21, 22).
_ORDER_1X = (0, 2, 1, 3)
_ORDER_ROWS = (0, 1, 2, 3)

_UNITS = {
    "y": ("S", "S", "S", "S"), "z": ("ohm", "ohm", "ohm", "ohm"), "h": ("ohm", "1", "1", "S"),
    "g": ("S", "1", "1", "ohm"), "abcd": ("1", "ohm", "S", "1"), "s": ("1", "1", "1", "1"),
}


class Columns:
    """Real values per frequency written beside the parameters (CSV columns, JSON point keys).

    Parameters
    ----------
    keys : sequence of str
        The JSON key of each column in every point (e.g. ``"nf_db"``).
    headers : sequence of str
        The CSV header of each column, with its unit (e.g. ``"nf at rs [dB]"``).
    values : object
        ``values[i:j]`` is a float array (j - i, k) of the k columns at points i to j: an
        ndarray, or an object computing each block when asked (a streamed sweep).  Every value
        must exist (finite): no file holds NaN or inf.
    """

    __slots__ = ("keys", "headers", "values")

    def __init__(self, keys, headers, values) -> None:
        self.keys = tuple(keys)
        self.headers = tuple(headers)
        if len(self.keys) != len(self.headers) or not self.keys:
            raise InputError("columns: expected as many keys as headers, at least one")
        self.values = values

    def block(self, start: int, stop: int) -> np.ndarray:
        """The (stop - start, k) float array of the columns at points ``start`` to ``stop``.

        Parameters
        ----------
        start, stop : int
            First and one-past-last point index.
        """
        v = np.asarray(self.values[start:stop], dtype=float).reshape(stop - start, len(self.keys))
        if not np.all(np.isfinite(v)):
            raise InputError(f"columns: {', '.join(self.keys)} hold values that do not exist (NaN or inf); "
                             "nothing written")
        return v


def atomic_write(path, text: str, *, option: str = "out") -> Path:
    """Write ``text`` to ``path`` through a temporary file in the same directory.

    The target appears (or is replaced) only when the whole text is on disk; on any
    failure the temporary file is removed and the target is left as it was.  The rules
    (symbolic links replaced, not followed; mode of a replaced file kept) and the errors
    (:class:`~devmodels.exceptions.OutputError`, message starting with ``option``) are
    those of :func:`devmodels.fileio.atomic_write_text`, which this calls.
    """
    return atomic_write_text(path, text, option=option)


def _format_rows(table: np.ndarray, sep: str = " ") -> str:
    """All rows of a 2-D float array as text, formatted in one operation."""
    n, m = table.shape
    if n == 0:
        return ""
    line = sep.join([_FMT] * m) + "\n"
    return (line * n) % tuple(table.ravel().tolist())


def number_format(polar) -> str:
    """The number format of a table: ``"RI"``, ``"MA"`` or ``"DB"``.

    Parameters
    ----------
    polar : bool or str
        False or ``"ri"``: real and imaginary parts; True or ``"ma"``: magnitude and angle in
        degrees; ``"db"``: magnitude in dB (20 log10 |x|) and angle in degrees (the three
        formats of the Touchstone specification).
    """
    if isinstance(polar, str):
        fmt = polar.strip().upper()
        if fmt not in ("RI", "MA", "DB"):
            raise InputError(f"format: expected ri, ma or db, got {polar!r}")
        return fmt
    return "MA" if polar else "RI"


def _table(freq: np.ndarray | None, data: np.ndarray, polar, order, scale=None) -> np.ndarray:
    """(n, 9) (or (n, 8) without ``freq``) real table of one block of points.

    Columns: frequency, then re/im (or magnitude/angle in degrees) of the elements in
    ``order`` (flat indices into the 2x2 matrix), each multiplied by ``scale`` (2, 2) first.
    """
    if scale is not None:
        data = data * scale
    vals = data.reshape(-1, 4)[:, list(order)]
    first = 0 if freq is None else 1
    out = np.empty((vals.shape[0], 8 + first))
    if freq is not None:
        out[:, 0] = freq
    fmt = number_format(polar)
    if fmt == "DB":
        mag = np.abs(vals)
        if np.any(mag == 0):
            raise InputError("format: a parameter is exactly 0, which has no dB value; write ri or ma")
        out[:, first::2] = 20.0 * np.log10(mag)
        out[:, first + 1::2] = np.angle(vals, deg=True)
    elif fmt == "MA":
        out[:, first::2] = np.abs(vals)
        out[:, first + 1::2] = np.angle(vals, deg=True)
    else:
        out[:, first::2] = vals.real
        out[:, first + 1::2] = vals.imag
    if not np.all(np.isfinite(out)):
        raise InputError("data: the two-port holds values that do not exist (NaN or inf); nothing written")
    return out


def _row_blocks(tp: TwoPort, polar: bool, order, scale, sep: str, block: int,
                columns: Columns | None = None) -> Iterator[str]:
    n = len(tp)
    for i in range(0, n, block):
        f = None if tp.freq is None else tp.freq[i:i + block]
        table = _table(f, tp.data[i:i + block], polar, order, scale)
        if columns is not None:
            table = np.hstack([table, columns.block(i, min(n, i + block))])
        yield _format_rows(table, sep)


def touchstone1_scale(kind: str, r: float) -> np.ndarray:
    """Factors (2, 2) by which Touchstone 1.1 normalises each element of ``kind`` (r in ohm).

    Z is divided by R, Y multiplied by it; H and G are normalised element by element so
    that every entry is dimensionless (h11/R, h22*R; g11*R, g22/R).  S is unchanged.
    """
    return np.asarray({"s": ((1, 1), (1, 1)), "z": ((1 / r, 1 / r), (1 / r, 1 / r)), "y": ((r, r), (r, r)),
                       "h": ((1 / r, 1), (1, r)), "g": ((r, 1), (1, 1 / r))}[kind], dtype=float)


def _touchstone_parts(tp: TwoPort, version: str, polar: bool, comment: str):
    """Validate ``tp`` for Touchstone; return (header text, element order, scale or None, tail)."""
    if tp.kind not in TOUCHSTONE_KINDS:
        raise InputError(f"kind: Touchstone holds {', '.join(k.upper() for k in TOUCHSTONE_KINDS)} "
                         f"parameters, not {tp.kind}; write {tp.kind} as .csv or .json")
    if tp.freq is None:
        raise InputError("freq: Touchstone needs frequencies; give --freq for frequency-independent parameters")
    if version not in ("1.1", "2.0"):
        raise InputError(f"version: expected Touchstone version 1.1 or 2.0, got {version!r}")
    f = tp.freq
    if f.size > 1 and not np.all(f[1:] > f[:-1]):
        raise InputError("freq: Touchstone needs strictly increasing frequencies")
    fmt = number_format(polar)
    head = [f"! {line}" for line in comment.splitlines()] if comment else []
    z1, z2 = tp.z0
    if version == "1.1":
        if tp.kind == "s" and z1 != z2:
            raise InputError(f"z0: Touchstone 1.1 has one reference for both ports, got {z1:g} and "
                             f"{z2:g} ohm; write Touchstone 2.0 (.ts) instead")
        scale = None if tp.kind == "s" else touchstone1_scale(tp.kind, z1)
        head.append(f"# Hz {tp.kind.upper()} {fmt} R {z1:.17g}")
        return "\n".join(head) + "\n", _ORDER_1X, scale, ""
    head += ["[Version] 2.0", f"# Hz {tp.kind.upper()} {fmt} R {z1:.17g}", "[Number of Ports] 2",
             "[Two-Port Data Order] 12_21", f"[Number of Frequencies] {f.size}",
             f"[Reference] {z1:.17g} {z2:.17g}", "[Network Data]"]
    return "\n".join(head) + "\n", _ORDER_ROWS, None, "[End]\n"


def touchstone_chunks(tp: TwoPort, version: str = "1.1", polar: bool = False, comment: str = "",
                      block: int = BLOCK) -> Iterator[str]:
    """The Touchstone text of ``tp`` as blocks of at most ``block`` lines (see :func:`touchstone_text`).

    ``tp`` is checked at once (before the first block is asked for); joined, the blocks are
    exactly :func:`touchstone_text`.

    Parameters
    ----------
    tp : TwoPort
        With frequencies (Hz, strictly increasing) and data of a Touchstone kind.
    version : {'1.1', '2.0'}
        Touchstone version.
    polar : bool or str
        Magnitude/angle in degrees (``MA``) instead of real/imaginary (``RI``).
    comment : str
        Comment lines for the top of the file.
    block : int
        Frequencies (lines) per block.

    Raises
    ------
    InputError
        A kind Touchstone cannot hold, no frequencies, or (version 1.1) S with a different
        reference resistance per port.
    """
    head, order, scale, tail = _touchstone_parts(tp, version, polar, comment)

    def gen() -> Iterator[str]:
        yield head
        yield from _row_blocks(tp, polar, order, scale, " ", block)
        if tail:
            yield tail

    return gen()


def touchstone_text(tp: TwoPort, version: str = "1.1", polar: bool = False, comment: str = "") -> str:
    """The Touchstone text of ``tp`` (kind S, Y, Z, H or G).

    Parameters
    ----------
    tp : TwoPort
        With frequencies (Hz, increasing) and data of a Touchstone kind.
    version : {'1.1', '2.0'}
        Touchstone version.
    polar : bool or str
        Magnitude/angle (``MA``, angle in degrees) instead of real/imaginary (``RI``).
    comment : str
        Comment lines to put at the top (each prefixed with ``!``).

    Notes
    -----
    Frequencies are written in Hz (``# Hz``).  Version 1.1 normalises Y, Z, H and G by the
    reference resistance R (:func:`touchstone1_scale`) and lists a two-port line in the order
    11, 21, 12, 22; version 2.0 writes ``[Two-Port Data Order] 12_21`` (rows) and values in
    ohm and siemens (IBIS Open Forum, "Touchstone File Format Specification", version 2.0).
    """
    return "".join(touchstone_chunks(tp, version, polar, comment))


def _csv_head(tp: TwoPort, polar, comment: str = "", columns: Columns | None = None) -> str:
    names = ("A", "B", "C", "D") if tp.kind == "abcd" else tuple(f"{tp.kind}{n}" for n in ("11", "12", "21", "22"))
    head = ["freq [Hz]"]
    fmt = number_format(polar)
    for n, u in zip(names, _UNITS[tp.kind]):
        head += {"MA": [f"mag {n} [{u}]", f"ang {n} [deg]"], "DB": [f"db {n} [dB]", f"ang {n} [deg]"],
                 "RI": [f"re {n} [{u}]", f"im {n} [{u}]"]}[fmt]
    if columns is not None:
        head += list(columns.headers)
    ref = f"z0 = {tp.z0[0]:g} ohm" if tp.z0[0] == tp.z0[1] else f"z0 = {tp.z0[0]:g} / {tp.z0[1]:g} ohm"
    note = f"# devmodels: {tp.config.upper() + ' ' if tp.config else ''}{tp.kind.upper()} parameters"
    note += f", {ref}\n" if tp.kind == "s" else "\n"
    extra = "".join(f"# {line}\n" for line in comment.splitlines()) if comment else ""
    return note + extra + ",".join(head) + "\n"


def csv_chunks(tp: TwoPort, polar: bool = False, block: int = BLOCK, comment: str = "",
               columns: Columns | None = None) -> Iterator[str]:
    """The CSV text of ``tp`` as blocks of at most ``block`` lines (see :func:`csv_text`).

    Parameters
    ----------
    tp : TwoPort
        Any kind; frequencies in Hz or none (one frequency-independent point).
    polar : bool or str
        Magnitude and angle in degrees instead of real and imaginary parts.
    block : int
        Frequencies (lines) per block.
    comment : str
        Lines written as ``# ...`` comments under the first header line (what the file holds:
        device, bias point, network, configuration).
    columns : Columns, optional
        More columns after the parameters (e.g. the noise figure of a sweep).
    """
    head = _csv_head(tp, polar, comment, columns)

    def gen() -> Iterator[str]:
        yield head
        if tp.freq is None:  # one frequency-independent point: an empty frequency field
            table = _table(None, tp.data, polar, _ORDER_ROWS)
            if columns is not None:
                table = np.hstack([table, columns.block(0, len(tp))])
            yield "," + _format_rows(table, ",")
            return
        yield from _row_blocks(tp, polar, _ORDER_ROWS, None, ",", block, columns)

    return gen()


def csv_text(tp: TwoPort, polar: bool = False, comment: str = "", columns: Columns | None = None) -> str:
    """CSV of ``tp``: frequency in Hz, then two columns per element with units in the header.

    Real/imaginary columns (``re y11 [S]``, ``im y11 [S]``) or, with ``polar``,
    magnitude and angle in degrees (``mag y11 [S]``, ``ang y11 [deg]``), or with ``"db"``
    the magnitude in dB (``db y11 [dB]``).  Frequency-independent parameters have an empty
    frequency column header ``freq [Hz]`` with the value left empty.

    Parameters
    ----------
    tp : TwoPort
        The parameters.
    polar : bool or str
        The number format (:func:`number_format`).
    comment : str
        Lines written as ``# ...`` comments under the first header line.
    columns : Columns, optional
        More columns after the parameters.
    """
    return "".join(csv_chunks(tp, polar, comment=comment, columns=columns))


def _points(tp: TwoPort, start: int, stop: int, columns: Columns | None = None) -> list[dict]:
    """The JSON ``points`` of ``tp`` from index ``start`` to ``stop`` (exclusive), with ``columns``' keys."""
    freqs = [None] * (stop - start) if tp.freq is None else tp.freq[start:stop].tolist()
    d = tp.data[start:stop]
    re_, im = d.real.tolist(), d.imag.tolist()
    extra = None if columns is None else columns.block(start, stop).tolist()
    points = []
    for i, f in enumerate(freqs):
        pt = {"freq": f}
        for a in (0, 1):
            for b in (0, 1):
                r, m = re_[i][a][b], im[i][a][b]
                pt[f"{a + 1}{b + 1}"] = [r, m] if math.isfinite(r) and math.isfinite(m) else None
        if extra is not None:
            pt.update(zip(columns.keys, extra[i]))
        points.append(pt)
    return points


def _json_head(tp: TwoPort) -> dict:
    z0 = tp.z0[0] if tp.z0[0] == tp.z0[1] else list(tp.z0)
    return {"config": tp.config, "kind": tp.kind, "z0": z0}


def twoport_dict(tp: TwoPort, columns: Columns | None = None) -> dict:
    """The params JSON object of ``tp``: ``config``, ``kind``, ``z0``, ``points``.

    Complex values are ``[re, im]``; a value that does not exist is ``None``.

    Parameters
    ----------
    tp : TwoPort
        The parameters (frequencies in Hz).
    columns : Columns, optional
        More keys in every point, after the parameters (e.g. ``nf_db``).
    """
    obj = _json_head(tp)
    obj["points"] = _points(tp, 0, len(tp), columns)
    return obj


def json_chunks(tp: TwoPort, extra: dict | None = None, block: int = JSON_BLOCK,
                columns: Columns | None = None) -> Iterator[str]:
    """The params JSON of ``tp`` (plus the keys of ``extra``) as text blocks, one line in all.

    Joined, the blocks equal ``json.dumps(obj, allow_nan=False) + "\\n"`` of
    :func:`twoport_dict` updated with ``extra``; the points are converted ``block`` at a
    time, so a long sweep never exists as one Python object.

    Parameters
    ----------
    tp : TwoPort
        The parameters (frequencies in Hz).
    extra : dict, optional
        JSON-ready keys added after ``points`` (a key of the params object replaces it).
    block : int
        Points per block.
    columns : Columns, optional
        More keys in every point (:func:`twoport_dict`).
    """
    head = _json_head(tp)
    if extra and any(k in head or k == "points" for k in extra):  # keys replaced: no streaming
        obj = twoport_dict(tp, columns)
        obj.update(extra)
        return iter((json.dumps(obj, allow_nan=False) + "\n",))
    tail = (", " + json.dumps(extra, allow_nan=False)[1:-1] if extra else "") + "}\n"
    first = json.dumps(head, allow_nan=False)[:-1] + ', "points": ['

    def gen() -> Iterator[str]:
        yield first
        n = len(tp)
        for i in range(0, n, block):
            text = json.dumps(_points(tp, i, min(n, i + block), columns), allow_nan=False)[1:-1]
            yield text if i == 0 else ", " + text
        yield "]" + tail

    return gen()


def write_json(tp: TwoPort, path, extra: dict | None = None, *, option: str = "out",
               columns: Columns | None = None) -> Path:
    """Write the params JSON of ``tp`` (plus the keys of ``extra``, already JSON-ready).

    Parameters
    ----------
    tp : TwoPort
        The parameters.
    path : str or Path
        Output file.
    extra : dict, optional
        JSON-ready keys added to the object.
    option : str
        Option name that starts an error message.
    columns : Columns, optional
        More keys in every point (:func:`twoport_dict`).

    Raises
    ------
    OutputError
        The file cannot be written (message starting with ``option``).
    """
    return atomic_write_chunks(path, json_chunks(tp, extra, columns=columns), option=option)


def write_touchstone(tp: TwoPort, path, version: str = "1.1", polar: bool = False, comment: str = "",
                     *, option: str = "out") -> Path:
    """Write ``tp`` as a Touchstone file (see :func:`touchstone_text`), block by block.

    Parameters
    ----------
    tp : TwoPort
        S, Y, Z, H or G parameters with frequencies in Hz.
    path : str or Path
        Output file.
    version : {'1.1', '2.0'}
        Touchstone version.
    polar : bool or str
        Magnitude/angle (``MA``) instead of real/imaginary (``RI``).
    comment : str
        Comment lines for the top of the file.
    option : str
        Option name that starts an error message.

    Raises
    ------
    InputError
        Data Touchstone cannot hold (checked before any file is made).
    OutputError
        The file cannot be written (message starting with ``option``).
    """
    return atomic_write_chunks(path, touchstone_chunks(tp, version, polar, comment), option=option)


def write_csv(tp: TwoPort, path, polar: bool = False, *, option: str = "out", comment: str = "",
              columns: Columns | None = None) -> Path:
    """Write ``tp`` as CSV (see :func:`csv_text`), block by block.

    Parameters
    ----------
    tp : TwoPort
        The parameters.
    path : str or Path
        Output file.
    polar : bool or str
        Magnitude and angle in degrees instead of real and imaginary parts.
    option : str
        Option name that starts an error message.
    comment : str
        Lines written as ``# ...`` comments under the first header line.
    columns : Columns, optional
        More columns after the parameters.

    Raises
    ------
    OutputError
        The file cannot be written (message starting with ``option``).
    """
    return atomic_write_chunks(path, csv_chunks(tp, polar, comment=comment, columns=columns), option=option)


def write_by_extension(tp: TwoPort, path, polar: bool = False, version: str | None = None,
                       comment: str = "", extra_json: dict | None = None, *,
                       option: str = "out", columns: Columns | None = None) -> tuple[Path, str]:
    """Write ``tp`` in the format its file name says; returns (path, format description).

    ``.s2p`` (or ``.y2p``, ``.z2p``, ``.h2p``, ``.g2p``, whose letter must match the kind):
    Touchstone 1.1, or 2.0 when ``version`` says so or S has a different reference per port;
    ``.ts``: Touchstone 2.0; ``.csv``; ``.json``.

    Parameters
    ----------
    tp : TwoPort
        The parameters.
    path : str or Path
        Output file; its extension chooses the format.
    polar : bool or str
        The number format (:func:`number_format`): ri, ma or db.
    version : str or None
        Touchstone version ("1.1" or "2.0"); None: by the extension and the references.
    comment : str
        Comment lines for Touchstone and CSV (what the file holds).
    extra_json : dict or None
        More top-level keys for JSON.
    option : str
        Option name that starts an error message.
    columns : Columns, optional
        More columns (CSV) or point keys (JSON); Touchstone cannot hold them (refused).

    Raises
    ------
    InputError
        An unknown extension, or data the format cannot hold (message starts with ``option``
        for the file name, with the value's name otherwise).
    OutputError
        The file cannot be written (a directory, no permission, a full disk, ...); the
        destination is left as it was.
    """
    p = Path(path)
    ext = p.suffix.lower()
    if ext == ".csv":
        return write_csv(tp, p, polar, option=option, columns=columns), "CSV"
    if ext == ".json":
        return write_json(tp, p, extra_json, option=option, columns=columns), "JSON"
    if ext == ".ts" or (len(ext) == 4 and ext[1] in "syzhg" and ext[2:] == "2p"):
        if columns is not None:
            raise InputError(f"{option}: Touchstone has no place for {', '.join(columns.keys)}; "
                             "write .csv or .json")
        if ext != ".ts" and ext[1] != "s" and ext[1] != tp.kind:
            raise InputError(f"{option}: the extension {ext} says {ext[1].upper()} parameters but the data "
                             f"are {tp.kind.upper()}; use --kind {ext[1]} or a .s2p name")
        if version is None:
            version = "2.0" if ext == ".ts" or (tp.kind == "s" and tp.z0[0] != tp.z0[1]) else "1.1"
        return write_touchstone(tp, p, version, polar, comment, option=option), f"Touchstone {version}"
    if len(ext) >= 4 and ext[1] in "syzhg" and ext.endswith("p"):
        raise InputError(f"{option}: {ext} is a Touchstone name for a network that is not a two-port; use .s2p")
    raise InputError(f"{option}: unknown file type {ext or '(none)'!r}; expected .s2p (Touchstone 1.1), "
                     ".ts (Touchstone 2.0), .csv or .json")

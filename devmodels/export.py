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

Every writer formats the whole array at once (one ``%`` format of a repeated line template
over the flattened array; no per-line Python formatting) and writes through a temporary file
in the target's directory that replaces the target with :func:`os.replace` only when
complete, so a failed write never leaves a half-written file.
"""

from __future__ import annotations

import json
import math
import os
import tempfile
from pathlib import Path

import numpy as np

from .exceptions import InputError
from .twoport import TwoPort

__all__ = ["write_touchstone", "write_csv", "write_json", "twoport_dict", "touchstone_text",
           "csv_text", "atomic_write", "TOUCHSTONE_KINDS", "write_by_extension"]

#: Kinds Touchstone can hold.
TOUCHSTONE_KINDS = ("s", "y", "z", "h", "g")
#: Digits of every number written (round trip better than 1e-15 relative).
_FMT = "%.17g"

_UNITS = {
    "y": ("S", "S", "S", "S"), "z": ("ohm", "ohm", "ohm", "ohm"), "h": ("ohm", "1", "1", "S"),
    "g": ("S", "1", "1", "ohm"), "abcd": ("1", "ohm", "S", "1"), "s": ("1", "1", "1", "1"),
}


def atomic_write(path, text: str) -> Path:
    """Write ``text`` to ``path`` through a temporary file in the same directory.

    The target appears (or is replaced) only when the whole text is on disk; on any
    failure the temporary file is removed and the target is left as it was.
    """
    path = Path(path)
    directory = path.parent if str(path.parent) else Path(".")
    if not directory.is_dir():
        raise InputError(f"out: directory {str(directory)!r} does not exist")
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=directory)
    try:
        umask = os.umask(0)
        os.umask(umask)
        os.chmod(tmp, 0o666 & ~umask)  # mkstemp makes 0600; give the file the usual mode
        with os.fdopen(fd, "w", encoding="utf-8", newline="\n") as fh:
            fh.write(text)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, path)
    except BaseException:
        try:
            os.unlink(tmp)
        except FileNotFoundError:
            pass
        raise
    return path


def _format_rows(table: np.ndarray, sep: str = " ") -> str:
    """All rows of a 2-D float array as text, formatted in one operation."""
    n, m = table.shape
    if n == 0:
        return ""
    line = sep.join([_FMT] * m) + "\n"
    return (line * n) % tuple(table.ravel().tolist())


def _check_finite(tp: TwoPort) -> None:
    if not np.all(np.isfinite(tp.data)):
        raise InputError("data: the two-port holds values that do not exist (NaN or inf); nothing written")


def _columns(data: np.ndarray, polar: bool, order=((0, 0), (0, 1), (1, 0), (1, 1))) -> np.ndarray:
    """(F, 8) real columns: re/im (or magnitude/angle in degrees) of the elements in ``order``."""
    vals = np.stack([data[:, i, j] for i, j in order], axis=1)
    out = np.empty((data.shape[0], 8))
    if polar:
        out[:, 0::2] = np.abs(vals)
        out[:, 1::2] = np.angle(vals, deg=True)
    else:
        out[:, 0::2] = vals.real
        out[:, 1::2] = vals.imag
    return out


def touchstone1_scale(kind: str, r: float) -> np.ndarray:
    """Factors (2, 2) by which Touchstone 1.1 normalises each element of ``kind`` (r in ohm).

    Z is divided by R, Y multiplied by it; H and G are normalised element by element so
    that every entry is dimensionless (h11/R, h22*R; g11*R, g22/R).  S is unchanged.
    """
    return np.asarray({"s": ((1, 1), (1, 1)), "z": ((1 / r, 1 / r), (1 / r, 1 / r)), "y": ((r, r), (r, r)),
                       "h": ((1 / r, 1), (1, r)), "g": ((r, 1), (1, 1 / r))}[kind], dtype=float)


def _normalised(tp: TwoPort, r: float) -> np.ndarray:
    """Touchstone 1.1 normalisation of Y, Z, H, G by the reference resistance ``r``."""
    return tp.data * touchstone1_scale(tp.kind, r)


def touchstone_text(tp: TwoPort, version: str = "1.1", polar: bool = False, comment: str = "") -> str:
    """The Touchstone text of ``tp`` (kind S, Y, Z, H or G).

    Parameters
    ----------
    tp : TwoPort
        With frequencies (Hz, increasing) and data of a Touchstone kind.
    version : {'1.1', '2.0'}
        Touchstone version.
    polar : bool
        Magnitude/angle (``MA``) instead of real/imaginary (``RI``).
    comment : str
        Comment lines to put at the top (each prefixed with ``!``).
    """
    if tp.kind not in TOUCHSTONE_KINDS:
        raise InputError(f"kind: Touchstone holds {', '.join(k.upper() for k in TOUCHSTONE_KINDS)} "
                         f"parameters, not {tp.kind}; write {tp.kind} as .csv or .json")
    if tp.freq is None:
        raise InputError("freq: Touchstone needs frequencies; give --freq for frequency-independent parameters")
    if version not in ("1.1", "2.0"):
        raise InputError(f"version: expected Touchstone version 1.1 or 2.0, got {version!r}")
    f = np.asarray(tp.freq)
    if f.size > 1 and np.any(np.diff(f) <= 0):
        raise InputError("freq: Touchstone needs strictly increasing frequencies")
    _check_finite(tp)
    fmt = "MA" if polar else "RI"
    head = [f"! {line}" for line in comment.splitlines()] if comment else []
    z1, z2 = tp.z0
    if version == "1.1":
        if tp.kind == "s" and z1 != z2:
            raise InputError(f"z0: Touchstone 1.1 has one reference for both ports, got {z1:g} and "
                             f"{z2:g} ohm; write Touchstone 2.0 (.ts) instead")
        data = _normalised(tp, z1)
        cols = _columns(data, polar, order=((0, 0), (1, 0), (0, 1), (1, 1)))
        head.append(f"# Hz {tp.kind.upper()} {fmt} R {z1:.17g}")
    else:
        cols = _columns(tp.data, polar)
        head += ["[Version] 2.0", f"# Hz {tp.kind.upper()} {fmt} R {z1:.17g}", "[Number of Ports] 2",
                 "[Two-Port Data Order] 12_21", f"[Number of Frequencies] {f.size}",
                 f"[Reference] {z1:.17g} {z2:.17g}", "[Network Data]"]
    table = np.column_stack([f, cols])
    body = _format_rows(table)
    tail = "[End]\n" if version == "2.0" else ""
    return "\n".join(head) + "\n" + body + tail


def csv_text(tp: TwoPort, polar: bool = False) -> str:
    """CSV of ``tp``: frequency in Hz, then two columns per element with units in the header.

    Real/imaginary columns (``re y11 [S]``, ``im y11 [S]``) or, with ``polar``,
    magnitude and angle in degrees (``mag y11 [S]``, ``ang y11 [deg]``).
    Frequency-independent parameters have an empty frequency column header ``freq [Hz]``
    with the value left empty.
    """
    _check_finite(tp)
    names = ("A", "B", "C", "D") if tp.kind == "abcd" else tuple(f"{tp.kind}{n}" for n in ("11", "12", "21", "22"))
    head = ["freq [Hz]"]
    for n, u in zip(names, _UNITS[tp.kind]):
        head += [f"mag {n} [{u}]", f"ang {n} [deg]"] if polar else [f"re {n} [{u}]", f"im {n} [{u}]"]
    cols = _columns(tp.data, polar)
    if tp.freq is None:
        body = "," + _format_rows(cols, ",")
    else:
        body = _format_rows(np.column_stack([tp.freq, cols]), ",")
    ref = f"z0 = {tp.z0[0]:g} ohm" if tp.z0[0] == tp.z0[1] else f"z0 = {tp.z0[0]:g} / {tp.z0[1]:g} ohm"
    note = f"# devmodels: {tp.config.upper() + ' ' if tp.config else ''}{tp.kind.upper()} parameters"
    note += f", {ref}\n" if tp.kind == "s" else "\n"
    return note + ",".join(head) + "\n" + body


def _finite_or_none(v: float):
    return v if math.isfinite(v) else None


def twoport_dict(tp: TwoPort) -> dict:
    """The params JSON object of ``tp``: ``config``, ``kind``, ``z0``, ``points``.

    Complex values are ``[re, im]``; a value that does not exist is ``None``.
    """
    freqs = [None] * len(tp) if tp.freq is None else tp.freq.tolist()
    d = tp.data
    re_, im = d.real.tolist(), d.imag.tolist()
    points = []
    for i, f in enumerate(freqs):
        pt = {"freq": f}
        for a in (0, 1):
            for b in (0, 1):
                r, m = re_[i][a][b], im[i][a][b]
                pt[f"{a + 1}{b + 1}"] = [r, m] if math.isfinite(r) and math.isfinite(m) else None
        points.append(pt)
    z0 = tp.z0[0] if tp.z0[0] == tp.z0[1] else list(tp.z0)
    return {"config": tp.config, "kind": tp.kind, "z0": z0, "points": points}


def write_json(tp: TwoPort, path, extra: dict | None = None) -> Path:
    """Write the params JSON of ``tp`` (plus the keys of ``extra``, already JSON-ready)."""
    obj = twoport_dict(tp)
    if extra:
        obj.update(extra)
    return atomic_write(path, json.dumps(obj, allow_nan=False) + "\n")


def write_touchstone(tp: TwoPort, path, version: str = "1.1", polar: bool = False, comment: str = "") -> Path:
    """Write ``tp`` as a Touchstone file (see :func:`touchstone_text`)."""
    return atomic_write(path, touchstone_text(tp, version, polar, comment))


def write_csv(tp: TwoPort, path, polar: bool = False) -> Path:
    """Write ``tp`` as CSV (see :func:`csv_text`)."""
    return atomic_write(path, csv_text(tp, polar))


def write_by_extension(tp: TwoPort, path, polar: bool = False, version: str | None = None,
                       comment: str = "", extra_json: dict | None = None) -> tuple[Path, str]:
    """Write ``tp`` in the format its file name says; returns (path, format description).

    ``.s2p`` (or ``.y2p``, ``.z2p``, ``.h2p``, ``.g2p``, whose letter must match the kind):
    Touchstone 1.1, or 2.0 when ``version`` says so or S has a different reference per port;
    ``.ts``: Touchstone 2.0; ``.csv``; ``.json``.
    """
    p = Path(path)
    ext = p.suffix.lower()
    if ext == ".csv":
        return write_csv(tp, p, polar), "CSV"
    if ext == ".json":
        return write_json(tp, p, extra_json), "JSON"
    if ext == ".ts" or (len(ext) == 4 and ext[1] in "syzhg" and ext[2:] == "2p"):
        if ext != ".ts" and ext[1] != "s" and ext[1] != tp.kind:
            raise InputError(f"out: the extension {ext} says {ext[1].upper()} parameters but the data "
                             f"are {tp.kind.upper()}; use --kind {ext[1]} or a .s2p name")
        if version is None:
            version = "2.0" if ext == ".ts" or (tp.kind == "s" and tp.z0[0] != tp.z0[1]) else "1.1"
        return write_touchstone(tp, p, version, polar, comment), f"Touchstone {version}"
    if len(ext) >= 4 and ext[1] in "syzhg" and ext.endswith("p"):
        raise InputError(f"out: {ext} is a Touchstone name for a network that is not a two-port; use .s2p")
    raise InputError(f"out: unknown file type {ext or '(none)'!r}; expected .s2p (Touchstone 1.1), "
                     ".ts (Touchstone 2.0), .csv or .json")

"""The one way every command shows its results: JSON, tables, warnings.

- JSON: complex -> ``[re, im]``, NaN / inf -> ``null``, no ``-0.0``.
- Tables: rich, with every piece of user text escaped (a file named ``[bold].toml`` prints as
  it is); numbers through :func:`devmodels.units.format_si`; a value that does not exist reads
  ``open`` (impedances, an open load's power) or ``unbounded`` (gains); stability figures with
  enough digits to read a margin (mu 1.0004).
- Warnings: collected while a command runs and written to stderr when it ends without an
  error (on exit 2 the error line is all stderr holds).
"""

from __future__ import annotations

import json
import math
import sys

import numpy as np

from ..units import format_complex, format_si

__all__ = ["ClosedPipe", "stdout", "warn", "note_later", "flush_warnings", "drop_warnings", "jsonable", "emit_json", "print_table",
           "note",
           "gain_text", "imp_text", "db_text", "stab_text", "msg_text", "zstr", "zjson", "z0json",
           "point_json", "print_gain", "print_twoport", "ELEMENT_UNITS", "power_text", "mu_text"]

_pending: list[tuple[str, str]] = []


class ClosedPipe(Exception):
    """stdout was closed by the reader (``devmodels ... | head -1``): the command stops quietly.

    Not an ``OSError``, so click does not turn it into exit status 1 on its way to ``main``.
    """


def stdout(text: str) -> None:
    """Write ``text`` to stdout (a closed pipe ends the command quietly)."""
    try:
        sys.stdout.write(text)
        sys.stdout.flush()
    except BrokenPipeError:
        raise ClosedPipe from None


def warn(message: str) -> None:
    """A warning for stderr, written once when the command ends without an error."""
    if ("warning", message) not in _pending:
        _pending.append(("warning", message))


def note_later(message: str) -> None:
    """A line of information for stderr (``devmodels: note: ...``), written once when the command
    ends without an error (a datasheet value used at other conditions than given)."""
    if ("note", message) not in _pending:
        _pending.append(("note", message))


def flush_warnings() -> None:
    """Write the collected warnings and notes to stderr (one line each)."""
    while _pending:
        kind, message = _pending.pop(0)
        sys.stderr.write(f"devmodels: {kind}: {message}\n")


class held_back:
    """Within ``with held_back():`` warnings and notes are collected and then forgotten (the
    trial values of a search say nothing; only the answer's own are written)."""

    def __enter__(self) -> None:
        self._saved = list(_pending)

    def __exit__(self, *exc) -> None:
        _pending[:] = self._saved


def drop_warnings() -> None:
    """Forget the collected warnings (the command failed; its error line is all stderr shows)."""
    _pending.clear()


def note(message: str) -> None:
    """A line of information on stderr (a file written), not a warning."""
    sys.stderr.write(f"devmodels: {message}\n")


def jsonable(x):
    """Results as JSON values: complex -> [re, im]; NaN/inf -> None; -0.0 -> 0.0."""
    if x is None or isinstance(x, (str, bool)):
        return x
    if isinstance(x, dict):
        return {str(k): jsonable(v) for k, v in x.items()}
    if isinstance(x, (list, tuple)):
        return [jsonable(v) for v in x]
    if isinstance(x, np.ndarray):
        return [jsonable(v) for v in x.tolist()]
    if isinstance(x, np.bool_):
        return bool(x)
    if isinstance(x, (complex, np.complexfloating)):
        re_, im = float(np.real(x)), float(np.imag(x))
        if not (math.isfinite(re_) and math.isfinite(im)):
            return None
        return [re_ + 0.0, im + 0.0]
    if isinstance(x, (int, np.integer)):
        return int(x)
    if isinstance(x, (float, np.floating)):
        v = float(x)
        return v + 0.0 if math.isfinite(v) else None
    return x


def emit_json(obj) -> None:
    """Print ``obj`` as one JSON object on stdout."""
    stdout(json.dumps(jsonable(obj), allow_nan=False) + "\n")


def print_table(title: str, columns: list[str], rows: list[list[str]], caption: str | None = None) -> None:
    """Print a table in the terminal (rich); every text is shown literally (markup escaped)."""
    from rich.console import Console
    from rich.markup import escape
    from rich.table import Table

    class _Console(Console):
        def on_broken_pipe(self) -> None:  # rich would exit with status 1; a closed pipe is not an error
            self.quiet = True
            raise ClosedPipe

    t = Table(title=escape(title), caption=escape(caption) if caption else None, title_justify="left",
              caption_justify="left")
    for i, c in enumerate(columns):
        t.add_column(escape(c), justify="left" if i == 0 else "right", overflow="fold")
    for r in rows:
        t.add_row(*(escape(str(c)) for c in r))
    con = _Console()
    if not con.is_terminal:  # a file or a pipe: never fold or cut numbers
        need = sum(max([len(c)] + [len(str(r[i])) for r in rows]) + 3 for i, c in enumerate(columns)) + 1
        con = _Console(width=max(80, need))
    try:
        con.print(t)
        sys.stdout.flush()
    except BrokenPipeError:
        raise ClosedPipe from None


# --- single values ------------------------------------------------------------------------------
def _finite(z) -> bool:
    z = complex(z)
    return math.isfinite(z.real) and math.isfinite(z.imag)


def gain_text(z, polar: bool = False) -> str:
    """A complex gain (re + j im, or |a| and the phase); ``unbounded`` where it does not exist."""
    if z is None or not _finite(z):
        return "unbounded"
    return format_complex(complex(z), "", 4, polar=polar)


def imp_text(z, polar: bool = False) -> str:
    """An impedance in ohm; ``open`` where it does not exist."""
    if z is None or not _finite(z):
        return "open"
    return format_complex(complex(z), "Ω", 4, polar=polar)


def db_text(v, missing: str = "unbounded") -> str:
    """A value in dB; ``missing`` where it does not exist."""
    return f"{v:.2f} dB" if v is not None and math.isfinite(v) else missing


def stab_text(v, missing: str = "unbounded") -> str:
    """A stability figure (K, |Δ|, mu) with six significant digits: 1.0004 stays 1.0004."""
    return f"{v:.6g}" if v is not None and math.isfinite(v) else missing


def msg_text(p: dict) -> str:
    if p["msg_db"] is None or not math.isfinite(p["msg_db"]):
        return "unbounded"
    return f"{p['msg_db']:.2f} dB " + ("MAG" if p["msg_is_mag"] else "MSG")


def zstr(z: complex) -> str:
    """A termination for titles: ``open``, ``50 Ω`` or ``50 Ω + j10 Ω``."""
    if math.isinf(z.real):
        return "open"
    return format_complex(z, "Ω") if z.imag else format_si(z.real, "Ω")


def zjson(z: complex):
    """A termination for JSON: ``[re, im]``, or null for an open load."""
    return None if math.isinf(z.real) else [z.real + 0.0, z.imag + 0.0]


def z0json(z0) -> float | list:
    return z0[0] if z0[0] == z0[1] else list(z0)


# --- terminated analysis ------------------------------------------------------------------------
#: Notes of a terminated-analysis point (JSON ``notes``: result key -> why it is null or what it is).
NOTE_IDEAL_SOURCE = ("ideal source (Re Zs = 0): its available power is unlimited, so this gain is 0 "
                     "and has no dB value")
NOTE_LOSSLESS_LOAD = ("open or lossless load (Re YL = 0): it takes no power, so this gain is 0 and has "
                      "no dB value")
NOTE_K_UNILATERAL = "S12 = 0: K is unbounded"
NOTE_MAG_UNILATERAL = "S12 = 0: the MAG is the unilateral maximum |S21|^2 / ((1 - |S11|^2)(1 - |S22|^2))"
NOTE_MSG_UNILATERAL = "S12 = 0 and a port without positive loss: the gain is unbounded"


def point_json(res, i: int) -> dict:
    """One terminated-analysis point (``gain``, ``compare``, ``cascade``): interface keys first.

    Besides the results: ``msg_is_mag``, ``unconditionally_stable`` (mu > 1 beyond the
    library's stated tolerance), ``stability`` (``unconditional``, ``marginal``: |mu - 1| within
    the tolerance, or ``conditional``) and ``notes`` (result key -> plain words, for results
    that are null for a known reason and for the unilateral MAG).
    """
    p = res.point(i)
    v = res.verdicts(i)
    out = {k: p[k] for k in ("freq", "av", "avs", "ai", "zin", "zout", "gt_db", "k", "mu", "msg_db")}
    for k in ("gp_db", "ga_db", "delta", "mu_prime", "u_db"):
        out[k] = p[k]
    out["msg_is_mag"] = v["msg_is_mag"]
    out["unconditionally_stable"] = v["unconditional"]
    out["stability"] = v["stability"]
    notes = {}
    if v["ideal_source"]:
        notes.update(gt_db=NOTE_IDEAL_SOURCE, ga_db=NOTE_IDEAL_SOURCE)
    if v["lossless_load"]:
        notes.setdefault("gt_db", NOTE_LOSSLESS_LOAD)
        notes["gp_db"] = NOTE_LOSSLESS_LOAD
    if v["unilateral"]:
        notes["k"] = NOTE_K_UNILATERAL
        notes["msg_db"] = NOTE_MAG_UNILATERAL if v["msg_is_mag"] else NOTE_MSG_UNILATERAL
    out["notes"] = notes
    return out


def power_text(p: dict, key: str, zs: complex, zl: complex) -> str:
    """A power gain (``gt_db``, ``gp_db``, ``ga_db``) of a point of :func:`point_json` for tables:
    ``n/a (Rs = 0)`` for an ideal source, ``open`` or ``n/a (Re ZL = 0)`` for a load that takes
    no power (the gain is 0), ``unbounded`` otherwise where it has no value."""
    why = p.get("notes", {}).get(key)
    if why == NOTE_IDEAL_SOURCE:
        missing = "n/a (Rs = 0)" if zs.imag == 0 else "n/a (Re Zs = 0)"
    elif why == NOTE_LOSSLESS_LOAD:
        missing = "open" if math.isinf(zl.real) else "n/a (Re ZL = 0)"
    else:
        missing = "unbounded"
    return db_text(p[key], missing)


def mu_text(p: dict) -> str:
    """mu of a point of :func:`point_json`, marked where it is on the stability boundary."""
    text = stab_text(p["mu"], "undefined (0/0)")
    return text + " (marginal)" if p["stability"] == "marginal" else text


def _freq_text(f) -> str:
    return format_si(f, "Hz") if f is not None else "(any)"


def print_gain(pts: list[dict], zs: complex, zl: complex, z0, label: str, polar: bool = False) -> None:
    """The two tables of a terminated analysis: gains and impedances, then power gain and stability."""
    fcol = [_freq_text(p["freq"]) for p in pts]
    rows = [[f, gain_text(p["av"], polar), gain_text(p["avs"], polar), gain_text(p["ai"], polar),
             imp_text(p["zin"], polar), imp_text(p["zout"], polar)] for f, p in zip(fcol, pts)]
    print_table(f"{label} between Rs = {zstr(zs)} and RL = {zstr(zl)}",
                ["freq", "av = V2/V1", "avs = V2/Vs", "ai = -I2/I1", "zin", "zout"], rows)
    open_load = math.isinf(zl.real)
    rows = [[f, power_text(p, "gt_db", zs, zl), power_text(p, "gp_db", zs, zl), power_text(p, "ga_db", zs, zl),
             stab_text(p["k"]), stab_text(p["delta"]), mu_text(p),
             stab_text(p["mu_prime"]), msg_text(p), db_text(p["u_db"])]
            for f, p in zip(fcol, pts)]
    ref = f"{z0[0]:g} Ω" if z0[0] == z0[1] else f"{z0[0]:g} / {z0[1]:g} Ω"
    unstable = [p for p in pts if p["stability"] == "conditional"]
    marginal = [p for p in pts if p["stability"] == "marginal"]
    from ..analysis import STABILITY_TOL

    cap = (f"mu, mu' from S at z0 = {ref}. mu > 1: unconditionally stable "
           f"(|mu - 1| ≤ {STABILITY_TOL:g}: marginal, on the boundary). MAG where K > 1, MSG otherwise.")
    if open_load:
        cap += " GT and GP: the open load takes no power (shown as open)."
    elif any(p.get("notes", {}).get("gp_db") == NOTE_LOSSLESS_LOAD for p in pts):
        cap += " GT and GP: a load without resistance takes no power, so they are 0 (n/a in dB)."
    if any(p.get("notes", {}).get("ga_db") == NOTE_IDEAL_SOURCE for p in pts):
        cap += (" GT and GA: an ideal source (Rs = 0) has unlimited available power, so they are 0 "
                "(n/a in dB).")
    if any(p.get("notes", {}).get("msg_db") == NOTE_MAG_UNILATERAL for p in pts):
        cap += " S12 = 0: K is unbounded and the MAG is the unilateral maximum |S21|²/((1-|S11|²)(1-|S22|²))."
    if any(p["msg_is_mag"] and p["stability"] == "conditional" for p in pts):
        cap += " K > 1 with |Δ| ≥ 1: the MAG shown needs terminations outside the Smith chart."
    if unstable:
        cap += f" {len(unstable)} of {len(pts)} points are only conditionally stable."
    if marginal:
        cap += f" {len(marginal)} of {len(pts)} points are marginal (on the stability boundary)."
    print_table("Power gain and stability", ["freq", "GT", "GP", "GA", "K", "|Δ|", "mu", "mu'", "MAG/MSG", "U"],
                rows, caption=cap)


# --- two-port parameters ------------------------------------------------------------------------
#: Units of each element by kind, for tables.
ELEMENT_UNITS: dict[str, tuple[str, str, str, str]] = {
    "y": ("S", "S", "S", "S"),
    "z": ("Ω", "Ω", "Ω", "Ω"),
    "h": ("Ω", "", "", "S"),
    "g": ("S", "", "", "Ω"),
    "abcd": ("", "Ω", "S", ""),
    "s": ("", "", "", ""),
}


def print_twoport(tp, polar: bool = False, title: str | None = None) -> None:
    """Print a two-port as a table: one row per frequency, one column per element."""
    units = ELEMENT_UNITS[tp.kind]
    kind = tp.kind.upper() if tp.kind != "abcd" else "ABCD"
    names = ("A", "B", "C", "D") if tp.kind == "abcd" else tuple(f"{tp.kind}{n}" for n in ("11", "12", "21", "22"))
    ref = f", z0 = {format_si(tp.z0[0], 'Ω')}" if tp.kind == "s" and tp.z0[0] == tp.z0[1] else (
        f", z0 = {format_si(tp.z0[0], 'Ω')} / {format_si(tp.z0[1], 'Ω')}" if tp.kind == "s" else "")
    where = tp.config.upper() + " " if tp.config else ""
    title = title or f"{where}{kind} parameters{ref}"
    rows = []
    freqs = [None] * len(tp) if tp.freq is None else list(tp.freq)
    for i, f in enumerate(freqs):
        vals = tp.data[i].reshape(-1)
        rows.append([_freq_text(f)] + [format_complex(complex(v), u, 4, polar) if _finite(v) else "unbounded"
                                       for v, u in zip(vals, units)])
    print_table(title, ["freq"] + list(names), rows)

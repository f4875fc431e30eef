r"""Reading two-port Touchstone files strictly (the writers are in :mod:`devmodels.export`).

The text is parsed here, line by line, by the rules of the open specification (IBIS Open
Forum, "Touchstone File Format Specification", versions 1.1 and 2.0; the rules below are
written from that specification as remembered, and checked against files written by
scikit-rf and by devmodels).  No other library is asked to open the file: in particular
nothing here can unpickle (scikit-rf's ``Network(path)`` tries to unpickle a file before it
parses it).  A file that breaks a rule is refused with one
:class:`~devmodels.exceptions.FileFormatError` line naming the file, the line number and what
was expected; nothing is guessed.

Rules enforced
--------------
*File.*  Only a regular file is opened (a FIFO or a device is refused before it is opened,
so reading never blocks), at most :data:`MAX_BYTES`.  UTF-8 with or without a byte-order mark
(other bytes are read as Latin-1, so they can only appear in comments).  ``!`` starts a
comment anywhere on a line.  Numbers are separated by white space.

*Option line* ``# <unit> <kind> <format> R <value>``: units Hz, kHz, MHz, GHz; kinds S, Y, Z,
H, G; formats RI, MA, DB; case-insensitive, in any order, each at most once; what is left
out takes the specification's default (GHz, S, MA, R 50).  ``R`` needs one real positive
value.  Exactly one option line, before the data.

*Version 1.x* (no ``[Version]`` line; versions 1.0 and 1.1 are read alike).  The file name
``.sNp`` (or ``.yNp``, ``.zNp``, ``.hNp``, ``.gNp``) must say N = 2.  Each frequency is one
line of 9 numbers: the frequency, then N11, N21, N12, N22 as pairs (the specification's
two-port order; this reader does not accept a two-port line wrapped over several lines, which
the 1.x specification allows only for networks of three or more ports).  Y, Z, H and G are
normalised by R (Z/R, Y*R, h11/R, h22*R, g11*R, g22/R: :func:`devmodels.export.touchstone1_scale`)
and are de-normalised here.  Frequencies are finite, >= 0 and strictly increasing; a
frequency *below* the previous one (or equal to the last, on a line of 5 numbers) starts
the noise parameters, which have 5 numbers per line (frequency, NFmin in dB, |Gamma_opt|,
angle of Gamma_opt in degrees, Rn / R) and strictly increasing frequencies of their own.  A
noise block is refused in a file whose kind is not S, and a decrease that does not begin a
valid noise line is refused.

*Version 2.0* (first keyword ``[Version] 2.0``; ``2.1`` is read with the same keywords).
Keywords, case-insensitive, each at most once: ``[Number of Ports]`` (must be 2),
``[Two-Port Data Order]`` (``12_21`` or ``21_12``, required), ``[Number of Frequencies]``
(required, must equal the count), ``[Number of Noise Frequencies]`` (required with noise data,
must equal the count), ``[Reference]`` (one real positive value per port; the values may
continue on the next lines but a line holding more numbers than are missing is refused, so a
data line is never swallowed), ``[Matrix Format] Full`` (``Lower``/``Upper`` are refused),
``[Network Data]``, ``[Noise Data]``, ``[End]`` (required; only comments after it).
``[Mixed-Mode Order]`` is refused (this tool reads single-ended two-ports), as is every
other keyword.  One frequency's 9 numbers may span several lines, but each frequency begins a
line and ends one.  Values are not normalised; the noise resistance Rn is read in ohm (as
scikit-rf 2.2 reads version 2.0 noise data).

Comments ``! Port Impedance`` (a simulator extension with per-frequency port impedances) are
refused: those impedances cannot be represented and ignoring them would misread the data.
"""

from __future__ import annotations

import codecs
import errno
import io
import math
import os
import re
import stat
from array import array
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from .exceptions import FileFormatError, InputError
from .fileio import short_path
from .twoport import TwoPort
from .units import format_si

__all__ = ["read_touchstone", "read_touchstone_file", "TouchstoneData", "NoiseParameters", "MAX_BYTES"]

#: Largest file read, in bytes (512 MiB: about three million two-port frequencies).
MAX_BYTES = 512 * 1024 * 1024
#: Comment lines kept in :attr:`TouchstoneData.comments`.
MAX_COMMENTS = 1000

_UNITS = {"hz": 1.0, "khz": 1e3, "mhz": 1e6, "ghz": 1e9}
_KINDS = ("s", "y", "z", "h", "g")
_FORMATS = ("ri", "ma", "db")
_V2_KEYWORDS = ("version", "number of ports", "two-port data order", "number of frequencies",
                "number of noise frequencies", "reference", "matrix format", "network data",
                "noise data", "end")
_NAME_PORTS = re.compile(r"\.[syzhg](\d+)p$", re.IGNORECASE)
_KEYWORD = re.compile(r"\[([^\]]*)\](.*)$")
#: "! Port Impedance 50 0 50 0": per-frequency port impedances (a simulator extension).
_PORT_IMPEDANCE = re.compile(r"port\s+impedance(\s*[-+.\deE]+)*\s*$", re.IGNORECASE)


@dataclass(frozen=True, slots=True)
class NoiseParameters:
    """The noise parameters of a two-port file.

    Attributes
    ----------
    freq : ndarray of float, shape (N,)
        Frequencies in Hz, strictly increasing.
    nfmin_db : ndarray of float
        Minimum noise figure in dB.
    gamma_opt : ndarray of complex
        Reflection coefficient of the source that gives the minimum noise figure
        (dimensionless), referred to ``z0``.
    rn : ndarray of float
        Equivalent noise resistance in ohm (a 1.x file's normalised Rn / R times R).
    z0 : float
        Reference resistance of ``gamma_opt`` in ohm (port 1's).
    """

    freq: np.ndarray
    nfmin_db: np.ndarray
    gamma_opt: np.ndarray
    rn: np.ndarray
    z0: float


@dataclass(frozen=True, slots=True)
class TouchstoneData:
    """What a two-port Touchstone file holds.

    Attributes
    ----------
    path : Path
        The file read.
    version : str
        ``'1.x'`` (no version line; 1.0 and 1.1 are read alike), ``'2.0'`` or ``'2.1'``.
    kind : str
        The file's parameter kind: ``'s'``, ``'y'``, ``'z'``, ``'h'`` or ``'g'``.
    format : str
        ``'RI'``, ``'MA'`` or ``'DB'``.
    twoport : TwoPort
        The network in the file's own kind, in SI units (1.x normalisation undone), with the
        file's reference resistances (ohm) as ``z0`` and the file name as ``label``.
    noise : NoiseParameters or None
        The noise parameters, when the file has them.
    comments : tuple of str
        The comment texts (after ``!``), at most :data:`MAX_COMMENTS`.
    """

    path: Path
    version: str
    kind: str
    format: str
    twoport: TwoPort
    noise: NoiseParameters | None = None
    comments: tuple[str, ...] = field(default=(), repr=False)

    @property
    def freq(self) -> np.ndarray:
        """The file's frequencies in Hz."""
        return self.twoport.freq

    @property
    def z0(self) -> tuple[float, float]:
        """Reference resistances of port 1 and port 2 in ohm."""
        return self.twoport.z0

    def s(self, config: str | None = None) -> TwoPort:
        """S parameters at the file's reference resistances, labelled with the file name.

        ``config`` is the configuration label of the result (None: none).

        Raises
        ------
        SingularParameterError
            When the file's kind cannot be converted to S at some frequency.
        """
        tp = self.twoport
        s = tp.to("s")
        return TwoPort(s.freq, s.data, "s", s.z0, config, tp.label)

    def at(self, freq=None, config: str | None = None) -> tuple[TwoPort, np.ndarray]:
        """S parameters at ``freq``, and which of them were interpolated.

        Parameters
        ----------
        freq : array of float, optional
            Frequencies in Hz, inside the file's range.  A frequency that is not one of the
            file's is interpolated linearly (real and imaginary parts of S) between the two
            file points around it.  Default: the file's frequencies.
        config : str, optional
            Configuration label of the result.

        Returns
        -------
        (TwoPort, ndarray of bool)
            S at ``freq`` (the file's reference resistances, label = file name) and, per
            frequency, True where the value is interpolated.

        Raises
        ------
        InputError
            A frequency outside the file's range (``"freq: ..."``) or requested frequencies
            that are not strictly increasing.
        """
        s = self.s(config)
        if freq is None:
            return s, np.zeros(len(s), dtype=bool)
        freq = np.asarray(freq, dtype=float).reshape(-1)
        if not np.all(np.isfinite(freq)):
            raise InputError("freq: expected finite frequencies in Hz")
        f = s.freq
        lo, hi = float(f[0]), float(f[-1])
        bad = freq[~((freq >= lo) & (freq <= hi))]
        if bad.size:
            raise InputError(f"freq: {format_si(float(bad[0]), 'Hz')} is outside the file's range "
                             f"{format_si(lo, 'Hz')} to {format_si(hi, 'Hz')}")
        flat = s.data.reshape(-1, 4)
        cols = [np.interp(freq, f, flat[:, k].real) + 1j * np.interp(freq, f, flat[:, k].imag)
                for k in range(4)]
        out = TwoPort(freq, np.stack(cols, axis=1).reshape(-1, 2, 2), "s", s.z0, config, s.label)
        return out, ~np.isin(freq, f)


# --- errors ------------------------------------------------------------------------------
class _Refused(Exception):
    """A rule broken on a line (caught in read_touchstone_file, turned into FileFormatError)."""

    def __init__(self, line: int | None, what: str) -> None:
        super().__init__(what)
        self.line = line
        self.what = what


def _show(token: str, limit: int = 40) -> str:
    return repr(short_path(token, limit))


# --- the file ----------------------------------------------------------------------------
def _open_regular(p: Path, name: str) -> io.BufferedReader:
    """Open ``p`` for reading only if it is a regular file no larger than MAX_BYTES."""

    def refuse(why: str) -> FileFormatError:
        return FileFormatError(f"touchstone: cannot read {name}: {why}")

    def kind_of(mode: int) -> str:
        for test, what in ((stat.S_ISDIR, "a directory"), (stat.S_ISFIFO, "a FIFO (named pipe)"),
                           (stat.S_ISCHR, "a character device"), (stat.S_ISBLK, "a block device"),
                           (stat.S_ISSOCK, "a socket")):
            if test(mode):
                return what
        return "not a regular file"

    try:
        st = os.stat(p)
    except FileNotFoundError:
        raise refuse("no such file") from None
    except (OSError, ValueError) as exc:
        raise refuse(_os_reason(exc)) from None
    if not stat.S_ISREG(st.st_mode):
        raise refuse(f"it is {kind_of(st.st_mode)}, not a regular file")
    flags = os.O_RDONLY | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_NOCTTY", 0) | getattr(os, "O_CLOEXEC", 0)
    try:
        fd = os.open(p, flags)
    except OSError as exc:
        raise refuse(_os_reason(exc)) from None
    try:
        st = os.fstat(fd)  # the file opened is the one checked (it may have been swapped)
        if not stat.S_ISREG(st.st_mode):
            raise refuse(f"it is {kind_of(st.st_mode)}, not a regular file")
        if st.st_size > MAX_BYTES:
            raise refuse(f"the file has {st.st_size} bytes; the largest read is {MAX_BYTES} bytes "
                         f"({MAX_BYTES // 2**20} MiB)")
        return os.fdopen(fd, "rb")
    except BaseException:
        os.close(fd)
        raise


def _os_reason(exc: BaseException) -> str:
    if isinstance(exc, OSError):
        if exc.errno in (errno.EACCES, errno.EPERM):
            return "permission denied"
        text = exc.strerror or type(exc).__name__
        return text[:1].lower() + text[1:]
    return " ".join(str(exc).split())[:80]


def _is_float(token: str) -> bool:
    try:
        float(token)
    except ValueError:
        return False
    return True


def _lines(raw: bytes):
    """(line number, text) of each line; UTF-8 (a byte-order mark is accepted), else Latin-1.

    The text is decoded as it is read (no second copy of a large file).
    """
    start = len(codecs.BOM_UTF8) if raw.startswith(codecs.BOM_UTF8) else 0
    encoding = "ascii"
    if not raw.isascii():
        try:
            codecs.decode(memoryview(raw)[start:], "utf-8")
            encoding = "utf-8"
        except UnicodeDecodeError:
            encoding = "latin-1"  # every byte is a character; only comments may hold them
    buf = io.BytesIO(raw)
    buf.seek(start)
    text = io.TextIOWrapper(buf, encoding=encoding, newline=None)
    for n, line in enumerate(text, start=1):
        yield n, line


# --- the parser --------------------------------------------------------------------------
class _Parser:
    """State of one pass over the lines of a file (see the module docstring for the rules)."""

    def __init__(self, name: str) -> None:
        m = _NAME_PORTS.search(name)
        self.name_ports = int(m.group(1)) if m else None
        self.version: str | None = None  # '1.x', '2.0', '2.1'
        self.option_line: int | None = None
        self.unit, self.kind, self.format, self.r = 1e9, "s", "ma", 50.0
        self.comments: list[str] = []
        # version 2 keywords
        self.seen: dict[str, int] = {}
        self.ports: int | None = None
        self.order: str | None = None
        self.n_freq: int | None = None
        self.n_noise: int | None = None
        self.reference: list[float] | None = None
        self.reference_line = 0
        self.section: str | None = None  # None, 'network', 'noise', 'end'
        # data
        self.freq = array("d")
        self.values = array("d")
        self.lines = array("q")
        self.pending: list[float] = []  # a 2.0 record spread over lines
        self.pending_line = 0
        self.noise = array("d")
        self.in_noise = False

    # -- one line --
    def line(self, n: int, text: str) -> None:
        content, bang, comment = text.partition("!")
        if bang:
            self._comment(n, comment.strip())
        content = content.strip()
        if not content:
            return
        if self.version is None:
            if content.startswith("["):
                self.version = "2"  # settled by the [Version] line itself
            else:
                self.version = "1.x"
                if self.name_ports is not None and self.name_ports != 2:
                    raise _Refused(None, f"its name says a {self.name_ports}-port "
                                         f"(.s{self.name_ports}p); expected a two-port (.s2p)")
        if content.startswith("#"):
            self._option(n, content)
        elif content.startswith("["):
            self._keyword(n, content)
        elif self.version == "1.x":
            self._data_1x(n, content)
        else:
            self._data_2(n, content)

    def _comment(self, n: int, text: str) -> None:
        if _PORT_IMPEDANCE.match(text):
            raise _Refused(n, "expected a comment, got '! Port Impedance' (per-frequency port impedances, "
                              "a simulator extension outside the Touchstone specification); they are not "
                              "supported and ignoring them would misread the data")
        if len(self.comments) < MAX_COMMENTS:
            self.comments.append(text)

    # -- option line --
    def _option(self, n: int, content: str) -> None:
        if self.option_line is not None:
            raise _Refused(n, f"expected one option line ('#'), got a second one (the first is line "
                              f"{self.option_line})")
        if self.version != "1.x" and "version" not in self.seen:
            raise _Refused(n, "expected [Version] before the option line in a version 2 file")
        if self.values or self.pending or self.section is not None:
            raise _Refused(n, "expected the option line before the data")
        toks = content[1:].split()
        done: set[str] = set()
        i = 0
        while i < len(toks):
            t = toks[i].lower()
            if t in _UNITS:
                what, self.unit = "unit", _UNITS[t]
            elif t in _KINDS:
                what, self.kind = "parameter", t
            elif t in _FORMATS:
                what, self.format = "format", t
            elif t == "r":
                what = "R"
                if i + 1 >= len(toks):
                    raise _Refused(n, "expected a reference resistance after R (e.g. 'R 50'), got nothing")
                i += 1
                self.r = self._resistance(n, toks[i], "R")
            else:
                hint = (" (a complex reference impedance is not supported)" if re.search(r"[jJ]", t) else "")
                raise _Refused(n, f"expected an option (Hz, kHz, MHz, GHz; S, Y, Z, H, G; RI, MA, DB; "
                                  f"R value), got {_show(toks[i])}{hint}")
            if what in done:
                raise _Refused(n, f"expected one {what} on the option line, got {_show(toks[i])} again")
            done.add(what)
            i += 1
        self.option_line = n

    @staticmethod
    def _resistance(n: int, tok: str, what: str) -> float:
        try:
            v = float(tok)
        except ValueError:
            if re.search(r"[jJ]", tok) or re.fullmatch(r"[-+]?[\d.]+(e[-+]?\d+)?[-+][\d.]+(e[-+]?\d+)?[ij]?", tok):
                raise _Refused(n, f"expected a real reference resistance for {what}, got {_show(tok)}: "
                                  "a complex reference impedance is not supported") from None
            raise _Refused(n, f"expected a reference resistance in ohm for {what}, got {_show(tok)}") from None
        if "_" in tok or not math.isfinite(v) or v <= 0:
            raise _Refused(n, f"expected a positive reference resistance in ohm for {what}, got {_show(tok)}")
        return v

    # -- version 2 keywords --
    def _keyword(self, n: int, content: str) -> None:
        m = _KEYWORD.match(content)
        if not m:
            raise _Refused(n, f"expected a keyword in brackets, got {_show(content)}")
        key = " ".join(m.group(1).lower().split())
        arg = m.group(2).strip()
        if self.version == "1.x":
            raise _Refused(n, f"expected data or comments, got the keyword [{m.group(1)}]: keywords belong to "
                              "Touchstone 2.0 files, which begin with [Version] 2.0")
        if self.reference is not None and len(self.reference) < 2:
            raise _Refused(n, f"expected 2 values after [Reference] (line {self.reference_line}), got "
                              f"{len(self.reference)}")
        if key == "mixed-mode order":
            raise _Refused(n, "expected a single-ended two-port, got [Mixed-Mode Order] (mixed-mode "
                              "networks are not supported)")
        if key not in _V2_KEYWORDS:
            raise _Refused(n, f"expected a Touchstone 2.0 keyword, got the unknown keyword [{m.group(1)}]")
        if key in self.seen:
            raise _Refused(n, f"expected [{m.group(1)}] once, got it again (first on line {self.seen[key]})")
        if key != "version" and "version" not in self.seen:
            raise _Refused(n, f"expected [Version] as the first keyword, got [{m.group(1)}]")
        if self.section == "end":
            raise _Refused(n, f"expected nothing but comments after [End], got [{m.group(1)}]")
        self._flush_pending()
        self.seen[key] = n
        getattr(self, "_kw_" + key.replace(" ", "_").replace("-", "_"))(n, arg)

    def _needs_no_argument(self, n: int, arg: str, key: str) -> None:
        if arg:
            raise _Refused(n, f"expected nothing after [{key}] on its line, got {_show(arg)}")

    def _before_data(self, n: int, key: str) -> None:
        if self.section is not None:
            raise _Refused(n, f"expected [{key}] before [Network Data]")

    def _integer(self, n: int, arg: str, key: str, minimum: int) -> int:
        if not re.fullmatch(r"\d+", arg) or int(arg) < minimum:
            raise _Refused(n, f"expected an integer >= {minimum} after [{key}], got {_show(arg) if arg else 'nothing'}")
        return int(arg)

    def _kw_version(self, n: int, arg: str) -> None:
        if arg not in ("2.0", "2.1"):
            raise _Refused(n, f"expected [Version] 2.0 (or 2.1), got {_show(arg) if arg else 'nothing'}")
        self.version = arg

    def _kw_number_of_ports(self, n: int, arg: str) -> None:
        self._before_data(n, "Number of Ports")
        ports = self._integer(n, arg, "Number of Ports", 1)
        if ports != 2:
            raise _Refused(n, f"expected [Number of Ports] 2, got {ports}: the file holds a {ports}-port; "
                              "expected a two-port")
        self.ports = ports

    def _kw_two_port_data_order(self, n: int, arg: str) -> None:
        self._before_data(n, "Two-Port Data Order")
        if arg not in ("12_21", "21_12"):
            raise _Refused(n, f"expected [Two-Port Data Order] 12_21 or 21_12, got {_show(arg) if arg else 'nothing'}")
        self.order = arg

    def _kw_number_of_frequencies(self, n: int, arg: str) -> None:
        self._before_data(n, "Number of Frequencies")
        self.n_freq = self._integer(n, arg, "Number of Frequencies", 1)

    def _kw_number_of_noise_frequencies(self, n: int, arg: str) -> None:
        self._before_data(n, "Number of Noise Frequencies")
        self.n_noise = self._integer(n, arg, "Number of Noise Frequencies", 1)

    def _kw_matrix_format(self, n: int, arg: str) -> None:
        self._before_data(n, "Matrix Format")
        if arg.lower() != "full":
            raise _Refused(n, f"expected [Matrix Format] Full, got {_show(arg) if arg else 'nothing'} "
                              "(Lower and Upper are not supported)")

    def _kw_reference(self, n: int, arg: str) -> None:
        self._before_data(n, "Reference")
        self.reference = []
        self.reference_line = n
        if arg:
            self._reference_values(n, arg)

    def _reference_values(self, n: int, content: str) -> None:
        toks = content.split()
        missing = 2 - len(self.reference)
        if len(toks) > missing:
            raise _Refused(n, f"expected {2} values after [Reference] (line {self.reference_line}), got "
                              f"{len(self.reference) + len(toks)} (a line of data after [Reference]?)")
        self.reference += [self._resistance(n, t, "[Reference]") for t in toks]

    def _kw_network_data(self, n: int, arg: str) -> None:
        self._needs_no_argument(n, arg, "Network Data")
        if self.section is not None:
            raise _Refused(n, "expected [Network Data] before [Noise Data]")
        if self.option_line is None:
            raise _Refused(n, "expected the option line ('# Hz S RI R 50') before [Network Data]")
        for key, name in (("number of ports", "Number of Ports"), ("two-port data order", "Two-Port Data Order"),
                          ("number of frequencies", "Number of Frequencies")):
            if key not in self.seen:
                raise _Refused(n, f"expected [{name}] before [Network Data] (the Touchstone 2.0 specification "
                                  "requires it in a two-port file)")
        self.section = "network"

    def _kw_noise_data(self, n: int, arg: str) -> None:
        self._needs_no_argument(n, arg, "Noise Data")
        if self.section != "network":
            raise _Refused(n, "expected [Noise Data] after the network data")
        self._check_network_count(n)
        if self.n_noise is None:
            raise _Refused(n, "expected [Number of Noise Frequencies] before [Noise Data]")
        if self.kind != "s":
            raise _Refused(n, f"expected noise data only with S parameters, got them in a "
                              f"{self.kind.upper()}-parameter file")
        self.section = "noise"

    def _kw_end(self, n: int, arg: str) -> None:
        self._needs_no_argument(n, arg, "End")
        if self.section is None:
            raise _Refused(n, "expected [Network Data] before [End]")
        self._check_network_count(n)
        if self.section == "noise" and len(self.noise) // 5 != self.n_noise:
            raise _Refused(n, f"expected {self.n_noise} noise frequencies ([Number of Noise Frequencies]), "
                              f"got {len(self.noise) // 5}")
        if self.section == "network" and self.n_noise is not None:
            raise _Refused(n, "expected [Noise Data]: [Number of Noise Frequencies] is given")
        self.section = "end"

    def _check_network_count(self, n: int) -> None:
        got = len(self.freq)
        if self.section == "network" and got != self.n_freq:
            raise _Refused(n, f"expected {self.n_freq} frequencies ([Number of Frequencies], line "
                              f"{self.seen['number of frequencies']}), got {got}")

    # -- numbers --
    def _numbers(self, n: int, content: str) -> list[float]:
        toks = content.split()
        try:
            vals = [float(t) for t in toks]
        except ValueError:
            bad = next(t for t in toks if not _is_float(t))
            raise _Refused(n, f"expected numbers, got {_show(bad)}") from None
        if "_" in content:
            raise _Refused(n, f"expected numbers, got {_show(next(t for t in toks if '_' in t))}")
        if not all(map(math.isfinite, vals)):
            bad = next(t for t, v in zip(toks, vals) if not math.isfinite(v))
            raise _Refused(n, f"expected finite numbers, got {_show(bad)} (not finite)")
        return vals

    def _frequency(self, n: int, f: float, previous: float | None, what: str) -> float:
        if f < 0:
            raise _Refused(n, f"expected a frequency >= 0, got {f:g}")
        if previous is not None and f <= previous:
            if f == previous:
                raise _Refused(n, f"expected a new {what}frequency, got {f:.12g} again (duplicate frequency)")
            raise _Refused(n, f"expected strictly increasing {what}frequencies, got {f:.12g} after {previous:.12g}")
        return f

    def _network_record(self, n: int, vals: list[float]) -> None:
        self._frequency(n, vals[0], self.freq[-1] if self.freq else None, "")
        if self.format == "ma" and min(vals[1::2]) < 0:
            raise _Refused(n, f"expected magnitudes >= 0 in MA format, got {min(vals[1::2]):g}")
        self.freq.append(vals[0])
        self.values.extend(vals[1:])
        self.lines.append(n)

    def _noise_record(self, n: int, vals: list[float]) -> None:
        if len(vals) != 5:
            raise _Refused(n, f"expected 5 numbers on a noise parameter line (frequency, NFmin dB, |Gamma_opt|, "
                              f"angle, Rn), got {len(vals)}")
        self._frequency(n, vals[0], self.noise[-5] if self.noise else None, "noise ")
        if vals[2] < 0 or vals[4] < 0:
            raise _Refused(n, f"expected |Gamma_opt| >= 0 and Rn >= 0 on a noise parameter line, got "
                              f"{vals[2]:g} and {vals[4]:g}")
        self.noise.extend(vals)

    def _data_1x(self, n: int, content: str) -> None:
        if self.option_line is None:
            raise _Refused(n, "expected the option line ('# <unit> <parameter> <format> R <value>') before "
                              f"the data, got {_show(content)}")
        vals = self._numbers(n, content)
        if self.in_noise:
            self._noise_record(n, vals)
            return
        if vals[0] < 0:
            raise _Refused(n, f"expected a frequency >= 0, got {vals[0]:g}")
        last = self.freq[-1] if self.freq else None
        if last is not None and (vals[0] < last or (vals[0] == last and len(vals) == 5)):
            # Touchstone 1.x: a frequency below the previous one starts the noise parameters.
            if len(vals) != 5:
                raise _Refused(n, f"expected strictly increasing frequencies, got {vals[0]:g} after {last:g} "
                                  f"(a decrease starts the noise parameters, 5 numbers a line; this line has "
                                  f"{len(vals)})")
            if self.kind != "s":
                raise _Refused(n, f"expected noise parameters only in an S-parameter file, got them "
                                  f"(the frequency falls from {last:g} to {vals[0]:g}) in a "
                                  f"{self.kind.upper()}-parameter file")
            self.in_noise = True
            self._noise_record(n, vals)
            return
        if len(vals) != 9:
            hint = " (Touchstone 1.x does not wrap a two-port line)" if len(vals) < 9 else ""
            raise _Refused(n, f"expected 9 numbers (frequency and 4 complex values of a two-port on one line), "
                              f"got {len(vals)}{hint}")
        self._network_record(n, vals)

    def _data_2(self, n: int, content: str) -> None:
        if self.reference is not None and len(self.reference) < 2 and self.section is None:
            self._reference_values(n, content)
            return
        if self.section is None:
            raise _Refused(n, f"expected a keyword, got {_show(content)} (data belong after [Network Data])")
        if self.section == "end":
            raise _Refused(n, f"expected nothing but comments after [End], got {_show(content)}")
        vals = self._numbers(n, content)
        if self.section == "noise":
            self._noise_record(n, vals)
            return
        if not self.pending:
            self.pending_line = n
        self.pending += vals
        if len(self.pending) > 9:
            where = f"line {self.pending_line}" + (f" to {n}" if n != self.pending_line else "")
            raise _Refused(n, f"expected 9 numbers for a frequency (frequency and 4 complex values), got "
                              f"{len(self.pending)} on {where}")
        if len(self.pending) == 9:
            vals, self.pending = self.pending, []
            self._network_record(self.pending_line, vals)

    def _flush_pending(self) -> None:
        if self.pending:
            raise _Refused(self.pending_line, f"expected 9 numbers for a frequency (frequency and 4 complex "
                                              f"values), got {len(self.pending)}")

    # -- end of file --
    def finish(self, last_line: int) -> None:
        if self.version is None:
            raise _Refused(None, "no data points (the file holds only comments or nothing)")
        if self.version == "1.x":
            if self.option_line is None:
                raise _Refused(None, "expected an option line ('# <unit> <parameter> <format> R <value>')")
            if not self.freq:
                raise _Refused(None, "no data points (expected at least one frequency line after the option line)")
            return
        if self.reference is not None and len(self.reference) < 2:
            raise _Refused(self.reference_line, f"expected 2 values after [Reference], got {len(self.reference)}")
        if self.section != "end":
            self._flush_pending()
            raise _Refused(last_line, "expected [End] at the end of a Touchstone 2.0 file (is the file cut "
                                      "short?)")


def _complex(values: np.ndarray, fmt: str) -> np.ndarray:
    a, b = values[:, 0::2], values[:, 1::2]
    if fmt == "ri":
        return a + 1j * b
    mag = a if fmt == "ma" else 10.0 ** (a / 20.0)
    return mag * np.exp(1j * np.deg2rad(b))


def read_touchstone_file(path) -> TouchstoneData:
    """Read a two-port Touchstone file (1.0, 1.1, 2.0) strictly, without any other library.

    Parameters
    ----------
    path : str or Path
        The file (``.s2p``, ``.y2p``, ..., ``.ts``).

    Returns
    -------
    TouchstoneData
        Frequencies (Hz), the network in the file's kind (SI units, the file's real
        reference resistances in ohm), the noise parameters if any, the version and comments.

    Raises
    ------
    FileFormatError
        One line ``"touchstone: cannot read 'FILE', line N: expected ..., got ..."``: the file
        is missing, not a regular file, larger than :data:`MAX_BYTES`, or breaks a rule of the
        Touchstone specification listed in the module docstring.
    """
    p = Path(path)
    name = repr(short_path(p))
    with _open_regular(p, name) as fh:
        try:
            raw = fh.read(MAX_BYTES + 1)
        except OSError as exc:
            raise FileFormatError(f"touchstone: cannot read {name}: {_os_reason(exc)}") from None
    if len(raw) > MAX_BYTES:
        raise FileFormatError(f"touchstone: cannot read {name}: the file has more than {MAX_BYTES} bytes")
    parser = _Parser(p.name)
    n = 0
    try:
        for n, line in _lines(raw):
            parser.line(n, line)
        del raw
        parser.finish(n)
    except _Refused as exc:
        where = f", line {exc.line}" if exc.line is not None else ""
        raise FileFormatError(f"touchstone: cannot read {name}{where}: {exc.what}") from None

    freq = np.frombuffer(parser.freq, dtype=float) * parser.unit
    values = np.frombuffer(parser.values, dtype=float).reshape(-1, 8)
    vals = _complex(values, parser.format)
    bad = ~np.isfinite(vals).all(axis=1)
    if bad.any():
        k = int(np.flatnonzero(bad)[0])
        raise FileFormatError(f"touchstone: cannot read {name}, line {parser.lines[k]}: expected values that "
                              "are finite numbers, got one that is not finite after conversion")
    if parser.version == "1.x" or parser.order == "21_12":
        data = vals[:, [0, 2, 1, 3]].reshape(-1, 2, 2)  # file order 11 21 12 22
    else:
        data = vals.reshape(-1, 2, 2)  # 12_21: rows
    if parser.version == "1.x":
        from .export import touchstone1_scale

        r = (parser.r, parser.r)
        if parser.kind != "s":
            data = data / touchstone1_scale(parser.kind, parser.r)  # undo the 1.x normalisation
    else:
        r = tuple(parser.reference) if parser.reference else (parser.r, parser.r)
    try:
        tp = TwoPort(freq, data, parser.kind, r, None, p.name)
    except InputError as exc:
        raise FileFormatError(f"touchstone: cannot read {name}: {exc}") from None
    noise = None
    if parser.noise:
        nz = np.frombuffer(parser.noise, dtype=float).reshape(-1, 5)
        rn = nz[:, 4] * r[0] if parser.version == "1.x" else nz[:, 4].copy()
        noise = NoiseParameters(freq=nz[:, 0] * parser.unit, nfmin_db=nz[:, 1].copy(),
                                gamma_opt=nz[:, 2] * np.exp(1j * np.deg2rad(nz[:, 3])), rn=rn, z0=r[0])
    return TouchstoneData(path=p, version=parser.version, kind=parser.kind, format=parser.format.upper(),
                          twoport=tp, noise=noise, comments=tuple(parser.comments))


def read_touchstone(path, freq: np.ndarray | None = None, config: str | None = None) -> TwoPort:
    """A two-port (S) from a Touchstone file (1.x or 2.0), read by :func:`read_touchstone_file`.

    Parameters
    ----------
    path : str or Path
        The file (``.s2p``, ``.y2p``, ..., ``.ts``).
    freq : array of float, optional
        Frequencies in Hz; the file's S parameters are interpolated linearly (real and
        imaginary parts) to them.  Default: every frequency of the file.  Use
        :meth:`TouchstoneData.at` to learn which values were interpolated.
    config : str, optional
        Configuration label for the result.

    Returns
    -------
    TwoPort
        S parameters at the file's reference resistances (ohm), ``label`` = the file name.

    Raises
    ------
    FileFormatError
        Unreadable or malformed file (see :func:`read_touchstone_file`).
    InputError
        A requested frequency outside the file's range.
    SingularParameterError
        The file's kind has no S parameters at some frequency.
    """
    return read_touchstone_file(path).at(freq, config)[0]

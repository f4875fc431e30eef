"""TOML bias files: flat top-level keys named like the command-line options.

Example::

    # a quiet input stage
    device = "npn"
    ic = "200uA"
    vce = "4V"
    beta = 250
    temp = "27C"

Values may be numbers (SI units) or strings with SI prefixes and units.  The accepted keys
and tables are those of :mod:`devmodels.schema` (one description for files and options).

A ``[spec]`` table gives ``spread`` its specifications, one key per result, each a comparison
as text or a list of them (read by :func:`devmodels.worstcase.collect_specs`, the same reader
as ``--spec``; a ``--spec`` option adds to the table or replaces its limit on the same result
in the same direction)::

    [spec]
    av = ">=40"
    zin = ">=1k"
    ic = [">=0.8mA", "<=1.2mA"]
The reader refuses what it cannot mean: an unknown key or table (with the nearest valid
name), the same key written twice (``vce_sat`` and ``vce-sat``), a value of the wrong type
(``beta = {a = 1}``), tables nested deeper than a bias file needs, and anything that is
not a regular file (a FIFO would block).  A UTF-8 byte-order mark is accepted.
"""

from __future__ import annotations

import os
import stat
from pathlib import Path

from .exceptions import FileFormatError

__all__ = ["load_bias_file", "MAX_BYTES"]

#: Largest bias file read, bytes (a bias file is a few hundred bytes).
MAX_BYTES = 1 << 20
#: Most comparisons one result may have in the ``[spec]`` table.
MAX_SPECS_PER_RESULT = 16


def _where(p: Path) -> str:
    from .units import SHOWN_CHARS

    s = str(p)
    return s if len(s) <= SHOWN_CHARS else s[:SHOWN_CHARS - 24] + "\u2026" + s[-12:]


def _read(p: Path) -> str:
    where = _where(p)
    try:
        st = os.stat(p)
    except OSError as exc:
        raise FileFormatError(f"{where}: cannot read the bias file ({exc.strerror or exc})") from None
    if stat.S_ISDIR(st.st_mode):
        raise FileFormatError(f"{where}: is a directory, not a bias file")
    if not stat.S_ISREG(st.st_mode):
        raise FileFormatError(f"{where}: not a regular file (a pipe, a device or a socket); give a TOML file")
    if st.st_size > MAX_BYTES:
        raise FileFormatError(f"{where}: {st.st_size:,} bytes is too large for a bias file "
                              f"(at most {MAX_BYTES:,})")
    try:
        with open(p, "rb") as fh:
            raw = fh.read(MAX_BYTES + 1)
    except OSError as exc:
        raise FileFormatError(f"{where}: cannot read the bias file ({exc.strerror or exc})") from None
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise FileFormatError(f"{where}: not UTF-8 text at byte {exc.start}; a bias file is a TOML text "
                              "file") from None


def _normalised(doc: dict, where: str, context: str) -> dict:
    """Keys with ``-`` read as ``_``; two spellings of one key are an error."""
    out: dict = {}
    seen: dict[str, str] = {}
    for key, value in doc.items():
        k = key.replace("-", "_")
        if k in seen:
            raise FileFormatError(f"{where}: {seen[k]!r} and {key!r}{context} are the same key; keep one")
        seen[k] = key
        out[k] = value
    return out


def load_bias_file(path: str | Path) -> tuple[dict, dict]:
    """Read and check a TOML bias file.

    Parameters
    ----------
    path : str or Path
        The file (a regular file of at most :data:`MAX_BYTES`, UTF-8, a byte-order mark allowed).

    Returns
    -------
    flat : dict
        Top-level keys (``-`` read as ``_``), raw values (numbers or strings) as written.
    tables : dict of str -> dict
        The tables (``network``; ``spec``: result name -> text or list of texts), their keys
        normalised the same way.

    Raises
    ------
    FileFormatError
        The file cannot be read, is not a regular file, is not valid TOML, or holds an unknown,
        repeated or mistyped key or table.
    """
    import tomllib  # only when a file is read (keeps `import devmodels` light)

    from .schema import TABLES, flat_keys, nearest, table_keys
    from .units import type_name

    p = Path(path)
    where = _where(p)
    text = _read(p)
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise FileFormatError(f"{where}: not a valid TOML bias file ({exc})") from None
    except RecursionError:
        raise FileFormatError(f"{where}: values nested too deeply for a bias file") from None
    doc = _normalised(doc, where, "")
    known = flat_keys()
    flat, tables = {}, {}
    for key, value in doc.items():
        if key in TABLES:
            if not isinstance(value, dict):
                raise FileFormatError(f"{where}: {key}: expected a table [{key}], got {type_name(value)}")
            tables[key] = _spec_table(value, where) if key == "spec" else _table(value, key, where)
            continue
        if key not in known:
            if isinstance(value, dict):
                near = nearest(key, TABLES)
                raise FileFormatError(f"{where}: unknown table [{key}]"
                                      + (f"; did you mean [{near}]?" if near else
                                         f"; expected {', '.join(f'[{t}]' for t in TABLES)}"))
            near = nearest(key, known)
            raise FileFormatError(f"{where}: unknown key {key!r}" + (f"; did you mean {near!r}?" if near else
                                  "; see the option names of 'devmodels model --help'"))
        flat[key] = _scalar(key, value, known[key].unit, where)
    return flat, tables


def _scalar(key: str, value, unit: str, where: str):
    from .units import type_name

    if unit == "table" and isinstance(value, list):  # rows [[IC, hFE], ...], checked by the schema's parser
        if len(value) > 1000 or not all(isinstance(r, list) and len(r) <= 4 for r in value):
            raise FileFormatError(f"{where}: {key}: expected rows [IC, hFE] (at most 1000), got {type_name(value)}")
        return value
    if isinstance(value, bool) or isinstance(value, (dict, list)) or not isinstance(value, (str, int, float)):
        want = "text" if unit == "str" else "a number or a quantity as text (\"1mA\")"
        raise FileFormatError(f"{where}: {key}: expected {want}, got {type_name(value)}")
    if unit == "str" and not isinstance(value, str):
        raise FileFormatError(f"{where}: {key}: expected text, got {type_name(value)}")
    return value


def _spec_table(value: dict, where: str) -> dict:
    """The ``[spec]`` table: result name -> a comparison as text (``">=40"``) or a list of them.

    Only the form is checked here; the names and the comparisons are read, against the
    results of the run, by :func:`devmodels.worstcase.collect_specs` (the reader of ``--spec``).
    """
    from .units import type_name

    value = _normalised(value, where, " in [spec]")
    out = {}
    for k, v in value.items():
        if isinstance(v, dict):
            raise FileFormatError(f"{where}: [spec.{k}]: tables inside [spec] are not used; write "
                                  f"{k} = \">=VALUE\" (or a list of such texts)")
        texts = v if isinstance(v, list) else [v]
        if not texts or len(texts) > MAX_SPECS_PER_RESULT or not all(isinstance(t, str) for t in texts):
            raise FileFormatError(f"{where}: spec.{k}: expected a comparison as text such as \">=40\" or a list "
                                  f"of at most {MAX_SPECS_PER_RESULT}, got {type_name(v)}")
        out[k] = list(texts) if isinstance(v, list) else v
    return out


def _table(value: dict, name: str, where: str) -> dict:
    from .schema import nearest, table_keys

    value = _normalised(value, where, f" in [{name}]")
    known = table_keys(name)
    out = {}
    for k, v in value.items():
        if k not in known:
            if isinstance(v, dict):
                raise FileFormatError(f"{where}: [{name}.{k}]: tables inside [{name}] are not used; "
                                      f"expected keys {', '.join(known)}")
            near = nearest(k, known)
            raise FileFormatError(f"{where}: unknown key {k!r} in [{name}]"
                                  + (f"; did you mean {near!r}?" if near else f"; expected one of {', '.join(known)}"))
        out[k] = _scalar(k, v, known[k].unit, where)
    return out

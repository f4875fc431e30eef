"""TOML bias files: flat top-level keys named like the command-line options.

Example::

    # a quiet input stage
    device = "npn"
    ic = "200uA"
    vce = "4V"
    beta = 250
    temp = "27C"

Values may be numbers (SI units) or strings with SI prefixes and units.  Tables
(``[network]``, ``[terminations]``, ...) are returned as they are for the commands
that use them.
"""

from __future__ import annotations

from pathlib import Path

from .exceptions import FileFormatError

__all__ = ["load_bias_file", "FLAT_KEYS"]

#: Top-level keys accepted in a bias file, with their unit ('' dimensionless, 'T' temperature,
#: 'str' text).  Other modules add theirs with :func:`register_keys`.
FLAT_KEYS: dict[str, str] = {
    "device": "str",
    "ic": "A",
    "vce": "V",
    "beta": "",
    "va": "V",
    "ft": "Hz",
    "cmu": "F",
    "rb": "Ohm",
    "temp": "T",
    "rmu": "Ohm",
    "rcx": "Ohm",
    "rex": "Ohm",
    "vce_sat": "V",
    "rdeg": "Ohm",
    "rfb": "Ohm",
    "z0": "str",
    "description": "str",
}


def register_keys(keys: dict[str, str]) -> None:
    """Accept more top-level keys (used by modules that add device kinds or analyses)."""
    FLAT_KEYS.update(keys)


def load_bias_file(path: str | Path) -> tuple[dict, dict]:
    """Read a TOML bias file.

    Returns
    -------
    flat : dict
        Top-level scalar keys, raw (numbers or strings) as written.
    tables : dict
        Top-level tables, as written.

    Raises
    ------
    FileFormatError
        The file cannot be read, is not valid TOML, or has an unknown top-level key.
    """
    import tomllib  # only when a file is read (keeps `import devmodels` light)

    p = Path(path)
    try:
        raw = p.read_bytes()
    except OSError as exc:
        raise FileFormatError(f"{p}: cannot read the bias file ({exc.strerror})") from None
    try:
        doc = tomllib.loads(raw.decode("utf-8"))
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as exc:
        raise FileFormatError(f"{p}: not a valid TOML bias file ({exc})") from None
    flat, tables = {}, {}
    for key, value in doc.items():
        if isinstance(value, dict):
            tables[key] = value
            continue
        k = key.replace("-", "_")
        if k not in FLAT_KEYS:
            raise FileFormatError(
                f"{p}: unknown key {key!r}; expected one of {', '.join(sorted(FLAT_KEYS))}")
        flat[k] = value
    return flat, tables

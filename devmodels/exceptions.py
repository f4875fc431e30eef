"""Exception hierarchy of devmodels.

Every error raised for bad input derives from :class:`DevModelsError`, which is a
:class:`ValueError`, so callers can catch either.  The command line turns any of
them into one line on stderr and exit status 2.
"""

from __future__ import annotations

__all__ = [
    "DevModelsError",
    "InputError",
    "BiasError",
    "SingularParameterError",
    "FileFormatError",
    "OutputError",
    "InputTypeError",
]


class DevModelsError(ValueError):
    """Root of all devmodels input and computation errors."""


class InputError(DevModelsError):
    """A value given by the user is missing, malformed or out of range."""


class BiasError(DevModelsError):
    """The bias point is not a valid forward-active (or saturation-region FET) point."""


class SingularParameterError(DevModelsError):
    """The requested parameter set does not exist for this network (singular pivot)."""


class FileFormatError(DevModelsError):
    """An input file (TOML, Touchstone) cannot be read or is malformed."""


class OutputError(DevModelsError):
    """A result cannot be written (a directory, no permission, a full disk, a name too long).

    The message starts with the name of the option or parameter that named the file.
    """


class InputTypeError(InputError, TypeError):
    """A value of the wrong type (a string or a boolean where a number or a two-port is needed).

    Both an :class:`InputError` (so the command line reports it as bad input) and a
    :class:`TypeError` (so callers can catch it as the built-in).
    """

"""Command line of devmodels (``devmodels --help``).

The library (``devmodels``) computes; this package parses options (:mod:`.inputs`), calls the
library, and shows the results (:mod:`.render`).  Every bad input ends in one line on stderr
and exit status 2; warnings are written only when a command ends without an error.
"""

from __future__ import annotations

import functools
import os
import re
import sys

from .app import app
# Each module registers its commands on `app`; `devmodels --help` lists them in this order.
from . import core  # noqa: F401  (model, params, reconfigure, crosscheck)
from . import terminated  # noqa: F401  (gain, compare, sweep)
from . import biasnet  # noqa: F401  (bias, spread)
from . import fetchain  # noqa: F401  (cascade, connect, formula)
from . import noisecmd  # noqa: F401  (noise)
from . import designcmd  # noqa: F401  (design)
from . import extractcmd  # noqa: F401  (extract)
from . import solvecmd  # noqa: F401  (solve)

__all__ = ["app", "main"]


def _is_usage_error(exc: BaseException) -> bool:
    # typer >= 0.25 carries its own copy of click; older ones use click itself.  Both
    # raise exceptions with format_message() and exit_code for bad command lines.
    return hasattr(exc, "format_message") and hasattr(exc, "exit_code")


def _short(message: str) -> str:
    """One line; quoted values longer than about 80 characters shortened."""
    from ..units import SHOWN_CHARS

    msg = " ".join(str(message).split())

    def cut(m):
        s = m.group(0)
        return s if len(s) <= SHOWN_CHARS + 2 else s[:SHOWN_CHARS - 20] + "\u2026" + s[-12:]
    return re.sub(r"'[^']*'|\"[^\"]*\"", cut, msg)


def _quiet_stdout() -> None:
    """After a closed pipe: send whatever is still buffered to /dev/null, so exit is quiet."""
    try:
        fd = os.open(os.devnull, os.O_WRONLY)
        os.dup2(fd, sys.stdout.fileno())
    except (OSError, ValueError, AttributeError):
        pass


@functools.lru_cache(maxsize=None)
def _command(name: str | None = None):
    """The click command of :data:`app`, built once per process (typer builds it on every call).

    With ``name`` (a registered command) only that command is built, as a command of its own
    run under the program name ``devmodels NAME``: typer otherwise builds all of them, about
    1000 options, on every start (about 60 ms of a 0.5 s start-up).
    """
    import typer
    import typer.main

    if name is None:
        return typer.main.get_command(app)
    one = typer.Typer(add_completion=False)
    one.registered_commands = [info for info in app.registered_commands if info.name == name]
    return typer.main.get_command(one)


def _command_names() -> set[str]:
    return {info.name for info in app.registered_commands}


def main(argv: list[str] | None = None) -> int:
    """Run the command line; returns (and, without ``argv``, exits with) the exit status."""
    import warnings

    import numpy as np
    import typer

    from ..exceptions import DevModelsError
    from .render import ClosedPipe, drop_warnings, flush_warnings

    args = sys.argv[1:] if argv is None else list(argv)
    try:
        # Results that do not exist are NaN by design and shown as null/open/unbounded; no numpy
        # floating-point warning reaches the user (inputs are range-checked at the edge).
        with np.errstate(all="ignore"), warnings.catch_warnings():
            warnings.simplefilter("ignore", RuntimeWarning)
            name = args[0] if args and args[0] in _command_names() else None
            rv = (_command(name).main(args=args[1:], prog_name=f"devmodels {name}", standalone_mode=False)
                  if name else _command().main(args=args, prog_name="devmodels", standalone_mode=False))
        code = rv if isinstance(rv, int) else 0
        sys.stdout.flush()
    except DevModelsError as exc:
        code = 2
        drop_warnings()
        sys.stderr.write(f"devmodels: error: {_short(exc)}\n")
    except (typer.Exit, typer.Abort) as exc:
        code = getattr(exc, "exit_code", 130 if isinstance(exc, typer.Abort) else 0)
    except (BrokenPipeError, ClosedPipe):
        _quiet_stdout()
        drop_warnings()
        code = 0
    except SystemExit as exc:  # rich and click exit with status 1 on a closed pipe (help text, ...)
        if not isinstance(exc.__context__, BrokenPipeError):
            raise
        _quiet_stdout()
        drop_warnings()
        code = 0
    except KeyboardInterrupt:
        drop_warnings()
        sys.stderr.write("devmodels: interrupted\n")
        code = 130
    except Exception as exc:  # noqa: BLE001 - the one place that turns failures into one line
        drop_warnings()
        if type(exc).__name__ == "NoArgsIsHelpError":  # typer has printed the help already
            code = 0
        elif _is_usage_error(exc):
            ctx = getattr(exc, "ctx", None)
            where = getattr(ctx, "command_path", None) or "devmodels"
            if where == "devmodels" and args and args[0] in _command_names():
                where = f"devmodels {args[0]}"  # an error found while parsing the command's options
            sys.stderr.write(f"devmodels: error: {_short(exc.format_message())} (see '{where} --help')\n")
            code = exc.exit_code or 2
        else:
            sys.stderr.write(f"devmodels: internal error: {type(exc).__name__}: {_short(exc)} "
                             "(please report it with the command that caused it)\n")
            code = 3
    flush_warnings()
    if argv is None:
        try:
            sys.stdout.flush()
        except BrokenPipeError:
            _quiet_stdout()
        sys.exit(code)
    return code

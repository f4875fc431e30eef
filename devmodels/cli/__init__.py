"""Command line of devmodels (``devmodels --help``).

The library (``devmodels``) computes; this package parses options, prints tables
and JSON, and writes files.  Every bad input ends in one line on stderr and exit
status 2.
"""

from __future__ import annotations

import sys

from .app import app
# Each module registers its commands on `app`; `devmodels --help` lists them in this order.
from . import core  # noqa: F401  (model, params, reconfigure, crosscheck)
from . import terminated  # noqa: F401  (gain, compare, sweep)
from . import biasnet  # noqa: F401  (bias, spread; the [network] hook)
from . import fetchain  # noqa: F401  (cascade, connect, formula; FET options)

__all__ = ["app", "main"]


def _is_usage_error(exc: BaseException) -> bool:
    # typer >= 0.25 carries its own copy of click; older ones use click itself.  Both
    # raise exceptions with format_message() and exit_code for bad command lines.
    return hasattr(exc, "format_message") and hasattr(exc, "exit_code")


def main(argv: list[str] | None = None) -> int:
    """Run the command line; returns (and, without ``argv``, exits with) the exit status."""
    import typer

    from ..exceptions import DevModelsError

    args = sys.argv[1:] if argv is None else list(argv)
    try:
        rv = app(args=args, prog_name="devmodels", standalone_mode=False)
        code = rv if isinstance(rv, int) else 0
    except DevModelsError as exc:
        sys.stderr.write(f"devmodels: error: {exc}\n")
        code = 2
    except (typer.Exit, typer.Abort) as exc:
        code = getattr(exc, "exit_code", 130 if isinstance(exc, typer.Abort) else 0)
    except BrokenPipeError:
        code = 0
    except KeyboardInterrupt:
        sys.stderr.write("devmodels: interrupted\n")
        code = 130
    except Exception as exc:  # noqa: BLE001 - the one place that turns failures into one line
        if type(exc).__name__ == "NoArgsIsHelpError":  # typer has printed the help already
            code = 0
        elif _is_usage_error(exc):
            msg = " ".join(exc.format_message().split())
            sys.stderr.write(f"devmodels: error: {msg} (see 'devmodels --help')\n")
            code = exc.exit_code or 2
        else:
            sys.stderr.write(f"devmodels: internal error: {type(exc).__name__}: {exc} "
                             "(please report it with the command that caused it)\n")
            code = 3
    if argv is None:
        sys.exit(code)
    return code

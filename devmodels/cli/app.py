"""The typer application object shared by the command modules, and its command class."""

from __future__ import annotations

import typer
from typer.core import TyperCommand, TyperGroup


def _plain_params(params: list) -> list:
    """Flags show no value type in the help (``--json``, not ``--json <bool>``), and help panel
    titles are shown as written: typer prints them as rich markup, where ``[network]`` would be
    read as a style tag and vanish, so a title with ``[`` is escaped (once per option)."""
    for p in params:
        if getattr(p, "is_flag", False) and p.metavar is None:
            p.metavar = ""
        panel = getattr(p, "rich_help_panel", None)
        if panel and "[" in panel and not getattr(p, "_panel_escaped", False):
            from rich.markup import escape

            p.rich_help_panel = escape(panel)
            p._panel_escaped = True
    return params


class Group(TyperGroup):
    """The command group: its ``--help`` flag shows no value type either."""

    def get_params(self, ctx):
        return _plain_params(super().get_params(ctx))


app = typer.Typer(
    cls=Group,
    name="devmodels",
    no_args_is_help=True,
    add_completion=False,
    help="Small-signal transistor stages: models, two-port parameters and terminated analysis.\n\n"
         "Values take SI prefixes and units (1mA, 2.2k, 300MHz); --temp is in K unless "
         "written 27C. Port currents flow into the two-port; port 1 is the input.",
)


class Command(TyperCommand):
    """A command whose flags show no value type in the help (``--json``, not ``--json <bool>``)."""

    def get_params(self, ctx):
        return _plain_params(super().get_params(ctx))


def command(name: str):
    """Register a command on :data:`app` (with :class:`Command`)."""
    return app.command(name, cls=Command)

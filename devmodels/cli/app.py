"""The typer application object shared by the command modules."""

from __future__ import annotations

import typer

app = typer.Typer(
    name="devmodels",
    no_args_is_help=True,
    add_completion=False,
    help="Small-signal transistor stages: models, two-port parameters and terminated analysis.\n\n"
         "Values take SI prefixes and units (1mA, 2.2k, 300MHz); --temp is in K unless "
         "written 27C. Port currents flow into the two-port; port 1 is the input.",
)

"""Options shared by several commands (typer annotations), each showing its unit as the metavar."""

from __future__ import annotations

from pathlib import Path
from typing import Annotated, Optional

import typer

__all__ = ["JsonOpt", "FreqOpt", "OneFreqOpt", "Z0Opt", "TouchstoneOpt", "ParamsOpt", "ConfigOpt", "KindOpt",
           "PolarOpt", "RsOpt", "RlOpt", "PlotOpt"]

JsonOpt = Annotated[bool, typer.Option("--json", help="Print one JSON object on stdout and nothing else.")]
FreqOpt = Annotated[Optional[list[str]], typer.Option(
    "--freq", "-f", help="Frequency, Hz (e.g. 10MHz); repeat (or give a comma list) for more points.",
    show_default=False, metavar="HZ")]
OneFreqOpt = Annotated[str, typer.Option("--freq", "-f", help="Frequency of the analysis, Hz.", metavar="HZ")]
Z0Opt = Annotated[str, typer.Option(
    "--z0", help="S reference resistance, ohm: one value or port1,port2 (e.g. 50,75).", metavar="OHM[,OHM]")]
TouchstoneOpt = Annotated[Optional[Path], typer.Option(
    "--touchstone", help="A two-port Touchstone file (.s2p, .ts) instead of a bias point; without "
                         "--freq every frequency of the file (others are interpolated, with a warning).",
    show_default=False, metavar="FILE")]
ParamsOpt = Annotated[Optional[str], typer.Option(
    "--params", help="A given two-port instead of a bias point: KIND=v11,v12,v21,v22 with units and "
                     "complex values allowed (h=2.6k,2e-4,100,12u; y=0.4m+j0.2m,0,40m,0.1m).",
    show_default=False, metavar="KIND=V11,V12,V21,V22")]
ConfigOpt = Annotated[Optional[str], typer.Option(
    "--config", "-c", help="Configuration: ce, cb, cc (cs, cg, cd for FETs) (default: ce, or cs for a FET).",
    metavar="CONFIG", show_default=False)]
KindOpt = Annotated[str, typer.Option("--kind", "-k", help="Parameter kind: y, z, h, g, abcd, s.", metavar="KIND")]
PolarOpt = Annotated[bool, typer.Option("--polar", help="Show complex values as magnitude and angle.")]
RsOpt = Annotated[str, typer.Option(
    "--rs", help="Source impedance, ohm: a resistance (50, 2.2k) or complex R+jX (50+j10, 1k-j200).", metavar="OHM")]
RlOpt = Annotated[str, typer.Option(
    "--rl", help="Load impedance, ohm: a resistance, complex R+jX, or 'open' for no load.", metavar="OHM|open")]
PlotOpt = Annotated[Optional[Path], typer.Option(
    "--plot", help="Also draw the results into FILE.png or FILE.svg.", show_default=False, metavar="FILE")]

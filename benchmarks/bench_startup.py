"""Start-up time of the command line and of ``import devmodels``, against floors.

Floors measured in the same run: a minimal typer app with one command that imports
numpy and prints its result as a rich table (the least any typer-based numeric tool that
shows tables can do), and a bare ``import numpy``. Targets: ``devmodels model ... --json`` at most 1.3 times the first,
``import devmodels`` at most 1.2 times the second.

    python3 benchmarks/bench_startup.py [--repeat 11]
"""

from __future__ import annotations

import argparse
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
from _report import ratio_line  # noqa: E402

FLOOR_APP = '''
import typer
import numpy as np

app = typer.Typer()


@app.command()
def run(x: float = 1.0):
    from rich.console import Console
    from rich.table import Table

    t = Table(title="result")
    t.add_column("name")
    t.add_column("value", justify="right")
    t.add_row("sqrt", f"{float(np.sqrt(x)):.4g}")
    Console().print(t)


@app.command()
def other():
    pass


if __name__ == "__main__":
    app()
'''


# Installed libraries come with compiled bytecode; an editable checkout gets it on first
# import, unless PYTHONDONTWRITEBYTECODE forbids it (then every start compiles devmodels
# from source, which is not what users see).  Measure with bytecode caching allowed.
ENV = {k: v for k, v in os.environ.items() if k != "PYTHONDONTWRITEBYTECODE"}


def median_run(cmd, repeat):
    times = []
    for _ in range(repeat):
        t = time.perf_counter()
        subprocess.run(cmd, capture_output=True, check=True, env=ENV)
        times.append(time.perf_counter() - t)
    return statistics.median(times)


def measure(repeat: int = 11) -> list[tuple[str, float, float, float, str]]:
    """Rows (name, devmodels s, reference s, ratio, target)."""
    py = sys.executable
    with tempfile.TemporaryDirectory() as d:
        app = Path(d) / "floor_app.py"
        app.write_text(FLOOR_APP)
        median_run([py, str(app), "run", "--x", "4"], 2)  # warm the file cache
        floor = median_run([py, str(app), "run", "--x", "4"], repeat)
    dm_cmd = [py, "-m", "devmodels", "model", "--ic", "1mA", "--vce", "5V", "--beta", "100"]
    median_run(dm_cmd, 2)
    cli = median_run(dm_cmd, repeat)
    median_run([py, "-c", "import devmodels"], 2)
    np_t = median_run([py, "-c", "import numpy"], repeat)
    dm_t = median_run([py, "-c", "import devmodels"], repeat)
    return [("devmodels model (one table) / minimal typer+numpy app printing a rich table", cli, floor,
             cli / floor, "<= 1.3"),
            ("import devmodels / import numpy", dm_t, np_t, dm_t / np_t, "<= 1.2")]


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=11)
    args = ap.parse_args()
    for name, a, b, r, target in measure(args.repeat):
        print(f"{name}: {a * 1e3:.0f} ms vs {b * 1e3:.0f} ms, ratio {r:.2f} (target {target})")
        ratio_line(name, f"{a * 1e3:.0f} ms", f"{b * 1e3:.0f} ms", r, target, r <= float(target.split()[-1]))


if __name__ == "__main__":
    main()

"""Import weight: ``import devmodels`` must not pull in heavy libraries."""

from __future__ import annotations

import subprocess
import sys


def test_import_devmodels_loads_no_heavy_libraries():
    code = ("import sys, devmodels; "
            "print(','.join(m for m in ('sympy', 'matplotlib', 'skrf', 'typer', 'rich', 'quantiphy') "
            "if m in sys.modules))")
    p = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert p.stdout.strip() == ""

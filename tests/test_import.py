"""Import weight: no module of the package pulls in a heavy library when it is imported.

Each module is imported alone in a fresh interpreter (so one module's imports cannot hide
another's), and the heavy libraries it loaded are listed.  The library (``devmodels.*``)
loads none of them; the command line (``devmodels.cli.*``) may load typer and rich, which
it is made of, but not the libraries that only some commands need.
"""

from __future__ import annotations

import pkgutil
import subprocess
import sys
from concurrent.futures import ThreadPoolExecutor

import pytest

import devmodels

#: Loaded only inside the functions that need them.
HEAVY = ("sympy", "mpmath", "matplotlib", "skrf", "scipy", "numexpr", "quantiphy", "typer", "rich", "click")
#: What the command line itself is built from.
CLI_ALLOWED = ("typer", "rich", "click")


def _modules() -> list[str]:
    return ["devmodels"] + sorted(m.name for m in pkgutil.walk_packages(devmodels.__path__, "devmodels."))


def _loaded(module: str) -> set[str]:
    code = (f"import sys, {module}; "
            f"print(','.join(m for m in {HEAVY!r} if m in sys.modules))")
    p = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert p.returncode == 0, f"{module} does not import: {p.stderr.strip()[-300:]}"
    return {m for m in p.stdout.strip().split(",") if m}


def test_every_module_is_found():
    # The walk must see the modules that matter, so that the test below cannot pass by
    # checking nothing.
    found = set(_modules())
    for name in ("devmodels.netlist", "devmodels.stage", "devmodels.spread", "devmodels.symbolic",
                 "devmodels.plotting", "devmodels.cli"):
        assert name in found
    assert len(found) >= 25


def test_no_module_loads_a_heavy_library_on_import():
    modules = _modules()
    with ThreadPoolExecutor(4) as pool:
        loaded = dict(zip(modules, pool.map(_loaded, modules)))
    bad = {}
    for module, libs in loaded.items():
        allowed = set(CLI_ALLOWED) if module.startswith("devmodels.cli") or module == "devmodels.__main__" else set()
        extra = libs - allowed
        if extra:
            bad[module] = sorted(extra)
    assert not bad, f"modules that load heavy libraries when imported: {bad}"


@pytest.mark.parametrize("lib", ["sympy", "matplotlib"])
def test_the_check_catches_a_heavy_import(tmp_path, lib):
    # The check itself: a module that imports a heavy library at module level is caught.
    (tmp_path / "heavy_probe.py").write_text(f"import {lib}\n")
    code = (f"import sys; sys.path.insert(0, {str(tmp_path)!r}); import heavy_probe; "
            f"print({lib!r} in sys.modules)")
    p = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert p.stdout.strip() == "True"

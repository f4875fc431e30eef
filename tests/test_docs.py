"""Every public name of the library is documented, with every parameter (and field) named.

"Public" is every function and class defined in a library module (``devmodels.*`` outside
the command line) whose name does not start with an underscore, and every public method of
those classes; not only the names the package re-exports.
"""

from __future__ import annotations

import dataclasses
import importlib
import inspect
import pkgutil

import pytest

import devmodels


def _library_modules():
    for m in sorted(pkgutil.walk_packages(devmodels.__path__, "devmodels."), key=lambda m: m.name):
        if m.name.startswith("devmodels.cli") or m.name == "devmodels.__main__":
            continue  # the command line is documented by its --help (tests/test_cli_*.py)
        yield importlib.import_module(m.name)


def _public():
    for mod in _library_modules():
        for name, obj in vars(mod).items():
            if name.startswith("_") or getattr(obj, "__module__", None) != mod.__name__:
                continue
            if inspect.isfunction(obj) or inspect.isclass(obj):
                yield f"{mod.__name__}.{name}", obj
                if inspect.isclass(obj):
                    for mname, meth in vars(obj).items():
                        if mname.startswith("_"):
                            continue
                        fn = meth.__func__ if isinstance(meth, (classmethod, staticmethod)) else meth
                        if inspect.isfunction(fn):
                            yield f"{mod.__name__}.{name}.{mname}", fn
                        elif isinstance(meth, property):
                            yield f"{mod.__name__}.{name}.{mname}", meth.fget


PUBLIC = list(_public())


def test_the_walk_finds_the_library():
    names = {n for n, _ in PUBLIC}
    for want in ("devmodels.stage.Stage", "devmodels.netlist.reduce_to", "devmodels.stage.Stage.two_port",
                 "devmodels.conversions.convert", "devmodels.models.HybridPi.netlist"):
        assert want in names
    assert len(PUBLIC) > 80


@pytest.mark.parametrize("name,obj", PUBLIC, ids=[n for n, _ in PUBLIC])
def test_public_names_document_every_parameter(name, obj):
    doc = inspect.getdoc(obj) or ""
    assert doc, f"{name} has no docstring"
    if inspect.isfunction(obj):
        wanted = [p for p in inspect.signature(obj).parameters
                  if not p.startswith("_") and p not in ("self", "cls")]
    elif dataclasses.is_dataclass(obj):
        wanted = [f.name for f in dataclasses.fields(obj) if not f.name.startswith("_")]
    else:
        wanted = []
    missing = [p for p in wanted if p not in doc]
    assert not missing, f"{name}: not documented: {', '.join(missing)}"

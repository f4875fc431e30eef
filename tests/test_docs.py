"""Every public name of the library is documented, with every parameter (and field) named."""

from __future__ import annotations

import dataclasses
import inspect

import pytest

import devmodels as dm


def _public():
    for name in dm.__all__:
        obj = getattr(dm, name)
        if inspect.isfunction(obj) or inspect.isclass(obj):
            yield name, obj


@pytest.mark.parametrize("name,obj", list(_public()))
def test_public_names_document_every_parameter(name, obj):
    doc = inspect.getdoc(obj) or ""
    assert doc, f"{name} has no docstring"
    if inspect.isfunction(obj):
        wanted = [p for p in inspect.signature(obj).parameters if not p.startswith("_")]
    elif dataclasses.is_dataclass(obj):
        wanted = [f.name for f in dataclasses.fields(obj) if not f.name.startswith("_")]
    else:
        wanted = []
    missing = [p for p in wanted if p not in doc]
    assert not missing, f"{name}: not documented: {', '.join(missing)}"

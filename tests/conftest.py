"""Shared test helpers."""

from __future__ import annotations

import json
import re

import numpy as np
import pytest

from devmodels.cli import main


@pytest.fixture
def run(capsys):
    """Run the command line in-process: returns (exit status, stdout, stderr)."""

    def _run(*args: str):
        code = main(list(args))
        out, err = capsys.readouterr()
        return code, out, err

    return _run


@pytest.fixture
def run_json(run):
    """Run a command with --json and return the parsed object (asserting exit 0)."""

    def _run(*args: str):
        code, out, err = run(*args, "--json")
        assert code == 0, err
        return json.loads(out)

    return _run


def assert_one_line_error(run, *args, match=None, prefix=None):
    """Run a command that must fail on bad input: exit 2, one line on stderr, no traceback.

    ``match`` must appear in the line; ``prefix`` must start it after ``devmodels: error: ``.
    Returns the line.
    """
    code, out, err = run(*args)
    assert code == 2, (out, err)
    lines = err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("devmodels: error:"), err
    assert "Traceback" not in err and out == ""
    if match:
        assert match in lines[0], lines[0]
    if prefix:
        assert lines[0].startswith(f"devmodels: error: {prefix}"), lines[0]
    return lines[0]


NAN_INF = re.compile(r"\b(nan|inf|infinity)\b", re.I)


def check_error_rule(args, code: int, out: str, err: str, ok_codes=(0,)) -> None:
    """The README's rule for a command run on any input: no traceback, no Python warning, no
    internal error; exit 2 with exactly one ``devmodels: error:`` line on stderr and nothing on
    stdout, or a clean run (an exit code in ``ok_codes``) that prints no nan or inf."""
    where = f"devmodels {' '.join(map(str, args))}"
    assert "Traceback" not in err and "Warning:" not in err and "internal error" not in err, (where, err)
    if code == 2:
        lines = err.strip().splitlines()
        assert len(lines) == 1 and lines[0].startswith("devmodels: error: "), (where, err)
        assert out == "", (where, out)
    else:
        assert code in ok_codes, (where, code, err)
        assert not NAN_INF.search(out), (where, out)


def cx(pair):
    """JSON [re, im] -> complex."""
    return complex(pair[0], pair[1])


def random_twoports(rng: np.random.Generator, n: int, scale=(50.0, 50.0)) -> np.ndarray:
    """Random well-conditioned impedance matrices (ohm), shape (n, 2, 2)."""
    z = rng.normal(size=(n, 2, 2)) + 1j * rng.normal(size=(n, 2, 2))
    z += 3 * np.eye(2)
    return z * np.sqrt(np.outer(scale, scale))

"""devmodels solve: JSON against the library, a closed form, the series, bad input (exit 2, one line)."""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np
import pytest

from devmodels.analysis import terminate
from devmodels.cli.inputs import Inputs
from devmodels.eseries import series_values
from devmodels.solve import result_of

from conftest import assert_one_line_error

EXAMPLES = Path(__file__).resolve().parent.parent / "bias_examples"
BJT = str(EXAMPLES / "vhf_gain_stage.toml")
BUILT = str(EXAMPLES / "ce_stage_built.toml")
KEYS = {"vary", "value", "nearest", "achieved", "achieved_nearest"}

# Invented demo stage: divider bias, unbypassed emitter resistor, one input coupling capacitor.
ONE_CAP = """\
device = "npn"
beta = 150
va = "80V"
ft = "250MHz"
cmu = "2pF"

[network]
type = "divider"
vcc = "12V"
r1 = "56k"
r2 = "12k"
rc = "3.9k"
re = "680"
c_in = "1uF"
"""


def _member(v: float, series: str) -> bool:
    return any(math.isclose(v, m, rel_tol=1e-12) for m in series_values(series, math.floor(math.log10(v))))


def test_gain_by_degeneration_meets_the_target(run_json, run):
    out = run_json("solve", BJT, "--vary", "rdeg", "--target", "av=20", "--rl", "4.7k", "-f", "1MHz")
    assert KEYS <= set(out) and out["vary"] == "rdeg"
    assert abs(out["achieved"] / 20 - 1) < 1e-6
    assert _member(out["nearest"], "E24")
    # the result with the part, from the library with rdeg given as an option
    st = Inputs(Path(BJT), {"rdeg": str(out["nearest"])}).stage(None)
    assert out["achieved_nearest"] == pytest.approx(result_of(st, "av", 1e6, 50.0, 4.7e3), rel=1e-12)
    st = Inputs(Path(BJT), {"rdeg": repr(out["value"])}).stage(None)
    assert abs(result_of(st, "av", 1e6, 50.0, 4.7e3) / 20 - 1) < 1e-6
    code, text, err = run("solve", BJT, "--vary", "rdeg", "--target", "av=20", "--rl", "4.7k", "-f", "1MHz")
    assert code == 0 and "rdeg" in text and "nearest E24" in text and err == ""


def test_series_option(run_json):
    out = run_json("solve", BJT, "--vary", "rdeg", "--target", "av=20", "--rl", "4.7k", "--series", "e96")
    assert _member(out["nearest"], "E96") and out["series"] == "E96"
    assert abs(math.log(out["nearest"] / out["value"])) < math.log(10) / 96


def test_network_resistor_and_bias_current(run_json):
    out = run_json("solve", BUILT, "--vary", "re_bypassed", "--target", "av=5", "--rl", "10k")
    assert out["vary"] == "re_bypassed" and abs(out["achieved"] / 5 - 1) < 1e-6
    out = run_json("solve", BJT, "--vary", "ic", "--target", "zin=500")
    assert abs(out["achieved"] / 500 - 1) < 1e-6 and 1e-6 < out["value"] < 0.1


def _gain_av(run_json, tmp_path, re: float) -> float:
    """|av| of the built stage with re set in the file, through the gain command (rl 10k, 1 kHz)."""
    text = Path(BUILT).read_text(encoding="utf-8")
    assert 're = "1.42k"' in text
    path = tmp_path / "built_re.toml"
    path.write_text(text.replace('re = "1.42k"', f"re = {re!r}"), encoding="utf-8")
    out = run_json("gain", str(path), "--rl", "10k", "-f", "1kHz")
    return abs(complex(*out["points"][0]["av"]))


@pytest.mark.parametrize("goal", [10.0, 14.0, 60.0, 150.0])
def test_target_in_the_steep_region_above_the_bypassed_part(run_json, tmp_path, goal):
    # re of the built stage is 1.2 kohm bypassed plus an unbypassed rest: just above 1.2 kohm the
    # rest is small and |av| changes fast.  The gain command itself gives |av| at two values of re
    # that bracket each target (|av| falls with re, from memory: av ~ rc||rl / (re - re_bypassed + 1/gm)).
    a_lo, a_hi = _gain_av(run_json, tmp_path, 1201.0), _gain_av(run_json, tmp_path, 1600.0)
    assert a_hi < goal < a_lo
    out = run_json("solve", BUILT, "--vary", "re", "--target", f"av={goal:g}", "--rl", "10k")
    assert 1201.0 < out["value"] < 1600.0 and out["roots"] == 1
    assert abs(out["achieved"] / goal - 1) < 1e-6
    # the gain command at the solved value (written into the file) meets the target to 1e-6
    assert abs(_gain_av(run_json, tmp_path, out["value"]) / goal - 1) < 1e-6


def test_unreachable_range_covers_the_whole_region_where_the_result_exists(run, run_json, tmp_path):
    # the largest |av| is at re = re_bypassed = 1.2 kohm (nothing unbypassed), the edge of the
    # values the stage accepts; the message must report it, not the largest value of a coarse grid
    top = _gain_av(run_json, tmp_path, 1200.0)
    line = assert_one_line_error(run, "solve", BUILT, "--vary", "re", "--target", "av=1000", "--rl", "10k")
    assert "re from 1.2 kΩ to" in line and "values scanned" in line
    shown = float(line.split(" to ")[-1].split(" over ")[0])
    assert shown == pytest.approx(top, rel=1e-3)  # shown with 4 significant digits


def test_f_low_of_one_coupling_capacitor(run_json, tmp_path):
    path = tmp_path / "one_cap.toml"
    path.write_text(ONE_CAP)
    rs, rl, f = 600.0, 10e3, 20.0
    out = run_json("solve", str(path), "--vary", "c_in", "--target", "f_low=20Hz", "--rs", "600", "--rl", "10k")
    assert abs(out["achieved"] / f - 1) < 1e-6
    mid = Inputs(path, {}).stage(None).midband()
    rin = float(abs(terminate(mid.two_port(np.array([1e3]), "y"), rs, rl).zin[0]))
    # from memory: C = 1 / (2 pi f (Rs + Rin)) for one coupling capacitor alone
    assert out["value"] == pytest.approx(1 / (2 * math.pi * f * (rs + rin)), rel=1e-4)
    assert _member(out["nearest"], "E24")


@pytest.mark.parametrize("args,start", [
    (["--vary", "rdeg", "--target", "gain=20"], "target: unknown result"),
    (["--vary", "rdeg", "--target", "av"], "target: expected RESULT=VALUE"),
    (["--vary", "rdeg", "--target", "av=-3"], "target:"),
    (["--vary", "beta", "--target", "av=20"], "vary: 'beta' cannot be varied"),
    (["--vary", "c_in", "--target", "f_low=20"], "vary: c_in is a key of the [network] table"),
    (["--vary", "rdeg", "--target", "av=20000"], "target: av = 2e+04 is not reachable"),
    (["--vary", "rdeg", "--target", "av=20", "--series", "E7"], "series: unknown series"),
    (["--target", "av=20"], "vary: missing"),
    (["--vary", "rdeg"], "target: missing"),
])
def test_bad_input(run, args, start):
    assert_one_line_error(run, "solve", BJT, *args, prefix=start)


def test_unreachable_names_the_reachable_range(run):
    line = assert_one_line_error(run, "solve", BJT, "--vary", "rdeg", "--target", "av=20000")
    assert "ranges from" in line and "rdeg from 1 Ω to 10 MΩ" in line


def test_ic_with_a_network_is_refused(run):
    assert_one_line_error(run, "solve", BUILT, "--vary", "ic", "--target", "av=2", prefix="ic:")


def test_no_warning_text_reaches_the_user(run):
    code, out, err = run("solve", BUILT, "--vary", "rc", "--target", "zout=1k", "--json")
    assert code == 0, err
    assert "Warning" not in err and "RuntimeWarning" not in err
    assert abs(json.loads(out)["achieved"] / 1e3 - 1) < 1e-6


def test_several_roots_are_noted_on_stderr(run, monkeypatch):
    # the search is the library's (tests/test_solve.py checks which root it takes); here a solution
    # that reports two roots must reach the user as one note on stderr, with stdout unchanged
    import dataclasses

    import devmodels.solve as solve

    real = solve.solve_target

    def two_roots(*args, **kwargs):
        sol = real(*args, **kwargs)
        return dataclasses.replace(sol, roots=2, candidates=(sol.value, 3 * sol.value))

    monkeypatch.setattr(solve, "solve_target", two_roots)
    code, out, err = run("solve", BJT, "--vary", "rdeg", "--target", "av=20", "--rl", "4.7k", "--json")
    assert code == 0 and json.loads(out)["roots"] == 2
    lines = err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("devmodels: note: 2 values of rdeg") and "nearest" in lines[0]

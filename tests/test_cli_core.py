"""Command line: model, params, reconfigure, crosscheck, and every error path."""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest

import devmodels as dm
from conftest import assert_one_line_error, cx

EXAMPLES = Path(__file__).resolve().parents[1] / "bias_examples"
BIAS = ["--ic", "1mA", "--vce", "5V", "--beta", "100", "--va", "80V", "--ft", "300MHz", "--cmu", "2pF"]
MODEL_KEYS = {"gm", "r_pi", "ro", "c_pi", "c_mu", "rb", "re", "alpha", "beta", "vt", "f_beta", "ft"}


def test_model_json_keys_and_values(run_json):
    d = run_json("model", *BIAS, "--rb", "50")
    assert MODEL_KEYS <= set(d)
    vt = dm.thermal_voltage(300)
    assert d["gm"] == pytest.approx(1e-3 / vt)
    assert d["ro"] == pytest.approx(80e3)
    assert d["rb"] == 50 and d["ft"] == pytest.approx(300e6)


def test_model_without_va_has_null_ro(run_json):
    d = run_json("model", "--ic", "1mA", "--vce", "5", "--beta", "100")
    assert d["ro"] is None and d["ft"] is None and d["f_beta"] is None


def test_model_table_shows_prefixes(run):
    code, out, err = run("model", *BIAS)
    assert code == 0 and "38.68 mS" in out and "2.585 kΩ" in out


@pytest.mark.parametrize("path", sorted(EXAMPLES.glob("*.toml")))
def test_every_bias_example_runs(run_json, path):
    d = run_json("model", str(path))
    assert d["gm"] > 0 and d["c_pi"] >= 0


def test_option_overrides_file(run_json):
    path = str(EXAMPLES / "vhf_gain_stage.toml")
    a = run_json("model", path)
    b = run_json("model", path, "--ic", "5mA")
    assert b["gm"] == pytest.approx(a["gm"] / 2)


def test_celsius_temperature(run_json):
    d = run_json("model", *BIAS, "--temp", "27C")
    assert d["vt"] == pytest.approx(dm.thermal_voltage(300.15))


def test_params_json_shape(run_json):
    d = run_json("params", *BIAS, "--config", "cb", "--kind", "s", "--freq", "1MHz", "--freq", "100MHz",
                 "--z0", "50,75")
    assert d["config"] == "cb" and d["kind"] == "s" and d["z0"] == [50.0, 75.0]
    assert [p["freq"] for p in d["points"]] == [1e6, 1e8]
    m = dm.HybridPi.from_bias(dm.BipolarBias(ic=1e-3, vce=5, beta=100, va=80, ft=300e6, cmu=2e-12))
    ref = dm.Stage(m, "cb").two_port([1e6, 1e8], "s", (50, 75)).data
    for p, r in zip(d["points"], ref):
        got = np.array([[cx(p["11"]), cx(p["12"])], [cx(p["21"]), cx(p["22"])]])
        np.testing.assert_allclose(got, r, rtol=1e-12)


def test_params_given_two_port_without_freq(run_json):
    d = run_json("params", "--params", "h=2.6k,2e-4,100,12u", "--kind", "y")
    assert len(d["points"]) == 1 and d["points"][0]["freq"] is None
    # y11 = 1/h11, y21 = h21/h11 (standard h -> y table)
    assert cx(d["points"][0]["11"]) == pytest.approx(1 / 2600)
    assert cx(d["points"][0]["21"]) == pytest.approx(100 / 2600)


def test_params_given_complex_values(run_json):
    d = run_json("params", "--params", "y=1.2e-3+4e-4j,-1e-6j,40e-3-2e-3j,2e-5+1e-5j", "--kind", "y")
    assert cx(d["points"][0]["11"]) == pytest.approx(1.2e-3 + 4e-4j)


def test_reconfigure_json(run_json):
    d = run_json("reconfigure", "--params", "h=2.6k,2e-4,100,12u", "--from", "ce", "--to", "cc")
    # hfc = -(1 + hfe), hic = hie exactly for the CE -> CC change (classic table, from memory)
    p = d["points"][0]
    assert d["config"] == "cc" and d["kind"] == "h"
    assert cx(p["21"]) == pytest.approx(-101)
    assert cx(p["11"]) == pytest.approx(2600)


def test_crosscheck_command(run_json, run):
    d = run_json("crosscheck", *BIAS, "--rb", "40")
    assert d["max_rel_error"] < d["tolerance"] == 1e-9 and d["checked"] == 90
    code, out, _ = run("crosscheck", *BIAS, "--max-error", "1e-30")
    assert code == 1 and "FAIL" in out


def test_json_never_contains_nan_or_inf(run):
    code, out, _ = run("params", "--ic", "1mA", "--vce", "5", "--beta", "100", "--kind", "abcd", "--json")
    assert code == 0
    assert "NaN" not in out and "Infinity" not in out
    json.loads(out)


ERRORS = [
    (["model", "--ic", "-1mA", "--vce", "5", "--beta", "100"], "ic"),
    (["model", "--ic", "5V", "--vce", "5", "--beta", "100"], "ic"),
    (["model", "--ic", "1mA", "--vce", "5", "--beta", "100", "--temp", "hot"], "temp"),
    (["model", "--ic", "1mA", "--vce", "5"], "beta"),
    (["model", "--ic", "1mA", "--vce", "0.1", "--beta", "100"], "vce"),
    (["model", "--ic", "1mA", "--vce", "5", "--beta", "100", "--ft", "10GHz", "--cmu", "2pF"], "ft"),
    (["model", "--ic", "1mA", "--vce", "5", "--beta", "-3"], "beta"),
    (["model", "--ic", "1xyz", "--vce", "5", "--beta", "100"], "ic"),
    (["model", "--ic", "1mA", "--vce", "5", "--beta", "100", "--device", "triode"], "device"),
    (["model", "nonexistent.toml"], "nonexistent.toml"),
    (["params", "--ic", "1mA", "--vce", "5", "--beta", "100", "--kind", "q"], "kind"),
    (["params", "--ic", "1mA", "--vce", "5", "--beta", "100", "--config", "cx"], "config"),
    (["params", "--ic", "1mA", "--vce", "5", "--beta", "100", "--kind", "z"], "z parameters do not exist"),
    (["params", "--ic", "1mA", "--vce", "5", "--beta", "100", "--freq", "-1MHz"], "freq"),
    (["params", "--ic", "1mA", "--vce", "5", "--beta", "100", "--z0", "-50"], "z0"),
    (["params", "--params", "h=1,2,3"], "params"),
    (["params", "--params", "w=1,2,3,4"], "params"),
    (["params", "--params", "h=1,2,abc,4"], "params"),
    (["params", "--params", "h=2.6k,2e-4,100,12u", "--ic", "1mA"], "either"),
    (["params"], "bias point"),
    (["reconfigure", "--params", "h=2.6k,2e-4,100,12u", "--from", "ce", "--to", "cs"], "cannot reconfigure"),
    (["reconfigure", "--params", "z=1k,1k,1k,1k", "--from", "ce", "--to", "cb"], "needs the Y parameters"),
    (["crosscheck", "--ic", "1mA", "--vce", "5", "--beta", "100", "--max-error", "-1"], "max-error"),
    (["model", "--no-such-option"], "no-such-option"),
]


@pytest.mark.parametrize("args,needle", ERRORS)
def test_error_paths_exit_2_with_one_line(run, args, needle):
    assert_one_line_error(run, *args, match=needle)


def test_malformed_and_unknown_toml(run, tmp_path):
    bad = tmp_path / "bad.toml"
    bad.write_text("ic = [1, \n")
    code, _, err = run("model", str(bad))
    assert code == 2 and "not a valid TOML" in err and len(err.strip().splitlines()) == 1
    unknown = tmp_path / "unknown.toml"
    unknown.write_text('ic = "1mA"\nvce = 5\nbeta = 100\nbetta = 3\n')
    code, _, err = run("model", str(unknown))
    assert code == 2 and "unknown key 'betta'" in err
    wrong_unit = tmp_path / "unit.toml"
    wrong_unit.write_text('ic = "1mV"\nvce = 5\nbeta = 100\n')
    code, _, err = run("model", str(wrong_unit))
    assert code == 2 and "ic" in err


def test_console_script_runs_as_a_process():
    import subprocess
    import sys

    p = subprocess.run([sys.executable, "-m", "devmodels", "model", "--ic", "1mA", "--vce", "5", "--beta",
                        "100", "--json"], capture_output=True, text=True)
    assert p.returncode == 0 and json.loads(p.stdout)["gm"] > 0
    p = subprocess.run([sys.executable, "-m", "devmodels", "model", "--ic", "-1mA", "--vce", "5", "--beta",
                        "100"], capture_output=True, text=True)
    assert p.returncode == 2 and "Traceback" not in p.stderr and len(p.stderr.strip().splitlines()) == 1


def test_params_and_crosscheck_read_a_touchstone_file(run, run_json, tmp_path):
    # A sweep written as Touchstone 1.1 and read back (through scikit-rf's parser) gives the
    # same H parameters as the stage computed directly, within the file's 17 digits.
    out = tmp_path / "stage.s2p"
    code, _, err = run("sweep", *BIAS, "--start", "1MHz", "--stop", "1GHz", "--points", "7", "--out", str(out))
    assert code == 0, err
    d = run_json("params", "--touchstone", str(out), "--kind", "h")
    m = dm.HybridPi.from_bias(dm.BipolarBias(ic=1e-3, vce=5, beta=100, va=80, ft=300e6, cmu=2e-12))
    f = [p["freq"] for p in d["points"]]
    ref = dm.Stage(m, "ce").two_port(f, "h").data
    for p, r in zip(d["points"], ref):
        got = np.array([[cx(p["11"]), cx(p["12"])], [cx(p["21"]), cx(p["22"])]])
        np.testing.assert_allclose(got, r, rtol=1e-9)
    x = run_json("crosscheck", "--touchstone", str(out))
    assert x["points"] == 7 and x["max_rel_error"] < 1e-9
    assert_one_line_error(run, "params", "--touchstone", str(out), "--ic", "1mA", match="either")


def test_ratings_warn_once_on_stderr(run, tmp_path):
    # Safety: a bias point above the power rating or VCEO is warned about (once per command,
    # even when three configurations are built), and --json output stays one clean object.
    hot = ["--ic", "50mA", "--vce", "10V", "--beta", "100", "--pmax", "250mW", "--vceo", "8V"]
    code, out, err = run("model", *hot, "--json")
    assert code == 0 and json.loads(out)["power"] == pytest.approx(0.5)
    lines = err.strip().splitlines()
    assert len(lines) == 2 and all(s.startswith("devmodels: warning:") for s in lines)
    assert "500 mW" in lines[0] and "pmax = 250 mW" in lines[0] and "burn" in lines[0]
    assert "vceo = 8 V" in lines[1]
    code, out, err = run("compare", *hot, "--json")
    assert code == 0 and len(err.strip().splitlines()) == 2
    code, out, err = run("model", "--ic", "1mA", "--vce", "5V", "--beta", "100", "--pmax", "250mW")
    assert code == 0 and err == ""  # within the rating: no warning
    fet = str(EXAMPLES / "fet" / "nmos_lna_input.toml")  # 4 mA at 1.2 V: 4.8 mW
    code, out, err = run("model", fet, "--pmax", "1mW", "--json")
    assert code == 0 and "4.8 mW" in err and len(err.strip().splitlines()) == 1
    assert_one_line_error(run, "model", "--ic", "1mA", "--vce", "5", "--beta", "100", "--pmax", "-1",
                          match="pmax")


@pytest.mark.parametrize("text,unit,value", [
    ("1mA", "A", 1e-3), ("1 mA", "A", 1e-3), ("2.2k", "Ohm", 2200.0), ("2.2kohm", "Ohm", 2200.0),
    ("2.2kΩ", "Ohm", 2200.0), ("300MHz", "Hz", 3e8), ("2pF", "F", 2e-12), ("25u", "", 25e-6),
    ("1µA", "A", 1e-6), ("1μA", "A", 1e-6), ("1Mohm", "Ohm", 1e6), ("1 mohm", "Ohm", 1e-3),
    ("4.7R", "Ohm", 4.7), ("1e-3", "", 1e-3), ("-1mA", "A", -1e-3),
])
def test_si_prefixed_values(text, unit, value):
    # SI prefixes as in the BIPM SI Brochure (9th ed., table 7); "R" as the ohm sign is the
    # resistor marking of IEC 60062 (from memory).
    from devmodels.units import parse_quantity

    assert parse_quantity(text, unit, "x") == pytest.approx(value, rel=1e-12)

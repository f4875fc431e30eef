"""The input layer and the renderer seen from the command line: one merge, complex terminations
in every command, one form of results, help that shows units, closed pipes."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

import devmodels as dm
from conftest import assert_one_line_error, cx
from devmodels.analysis import terminate
from devmodels.chain import analyse_chain

EXAMPLES = Path(__file__).resolve().parent.parent / "bias_examples"
BJT = str(EXAMPLES / "vhf_gain_stage.toml")
PNP = str(EXAMPLES / "pnp_level_shift.toml")
BIAS = ["--ic", "1mA", "--vce", "5", "--beta", "100", "--ft", "300MHz", "--cmu", "2pF", "--va", "80"]


def _stage():
    bias = dm.BipolarBias(ic=1e-3, vce=5.0, beta=100, ft=300e6, cmu=2e-12, va=80.0)
    return dm.Stage(dm.HybridPi.from_bias(bias), "ce")


def test_option_overrides_file(run_json, tmp_path):
    p = tmp_path / "b.toml"
    p.write_text('ic = "2mA"\nvce = 5\nbeta = 100\n')
    assert run_json("model", str(p))["gm"] == pytest.approx(2e-3 / dm.thermal_voltage(300))
    assert run_json("model", str(p), "--ic", "1mA")["gm"] == pytest.approx(1e-3 / dm.thermal_voltage(300))


def test_a_key_in_two_places_of_the_file_is_an_error(run, tmp_path):
    p = tmp_path / "n.toml"
    p.write_text('beta = 100\ntol = 5\n[network]\ntype = "fixed"\nvcc = 12\nrb = "470k"\nrc = "2k"\ntol = 1\n')
    assert_one_line_error(run, "model", str(p), prefix="tol: given both")


def test_complex_terminations_in_gain_and_compare(run_json):
    zs, zl = 50 + 10j, 1e3 - 200j
    ref = terminate(_stage().two_port([1e6]), zs, zl)
    g = run_json("gain", *BIAS, "--rs", "50+j10", "--rl", "1k-j200", "-f", "1MHz")
    assert g["rs"] == [50.0, 10.0] and g["rl"] == [1000.0, -200.0]
    assert cx(g["points"][0]["avs"]) == pytest.approx(complex(ref.avs[0]), rel=1e-12)
    c = run_json("compare", *BIAS, "--rs", "50+j10", "--rl", "1k-j200", "-f", "1MHz")
    assert cx(c["ce"]["avs"]) == pytest.approx(complex(ref.avs[0]), rel=1e-12)


def test_cascade_points_are_gain_points(run_json, tmp_path):
    p = tmp_path / "q.toml"
    p.write_text('ic = "1mA"\nvce = 5\nbeta = 100\nft = "300MHz"\ncmu = "2pF"\nva = 80\n')
    d = run_json("cascade", "--stage", f"ce:{p}", "--stage", f"cb:{p}", "--rs", "50+j10", "--rl", "open",
                 "-f", "1MHz")
    g = run_json("gain", str(p), "--rs", "50+j10", "--rl", "open", "-f", "1MHz")
    # the keys of gain, and the chain's noise figure beside them
    assert set(d["points"][0]) - set(g["points"][0]) == {"nf_db"} and set(g["points"][0]) <= set(d["points"][0])
    assert d["rs"] == [50.0, 10.0] and d["rl"] is None
    st = _stage()
    chain = analyse_chain([st.two_port([1e6]), dm.Stage(st.model, "cb").two_port([1e6])], 50 + 10j, float("inf"))
    assert cx(d["points"][0]["avs"]) == pytest.approx(complex(chain.total.avs[0]), rel=1e-12)


def test_formula_refuses_complex_terminations_in_one_line(run):
    # (spread takes them: tests/test_cli_biasnet.py)
    assert_one_line_error(run, "formula", *BIAS, "--rs", "50+j10", prefix="rs: the formula takes a resistance")


def test_pnp_sign_is_the_same_in_model_and_bias(run_json):
    m = run_json("model", PNP)
    assert m["ic"] < 0 and m["vce"] < 0  # as 'bias' reports a pnp (README: every current negated)
    b = run_json("bias", "--network", "divider", "--vcc", "12", "--r1", "68k", "--r2", "12k", "--rc", "4.7k",
                 "--re", "1k", "--beta", "200", "--device", "pnp")
    assert b["ic"] < 0 and b["vce"] < 0


def test_stability_figures_show_their_digits(run):
    code, out, _ = run("gain", BJT, "-f", "1kHz")
    d = json.loads(run("gain", BJT, "-f", "1kHz", "--json")[1])
    mu = d["points"][0]["mu"]
    assert code == 0 and f"{mu:.6g}" in out and len(f"{mu:.6g}") > 3


def test_no_negative_zero_in_json(run):
    code, out, _ = run("params", "--params", "y=-0.0,0,1m,-0", "--json")
    assert code == 0 and "-0.0" not in out


def test_touchstone_frequency_between_points_warns(run, tmp_path):
    p = tmp_path / "t.s2p"
    p.write_text("# MHz S RI R 50\n1 0.5 0.1 0.01 0 2 0.3 0.4 0\n3 0.4 0.14 0.012 0 1.8 0.4 0.44 0\n")
    code, out, err = run("gain", "--touchstone", str(p), "-f", "2MHz", "--json")
    assert code == 0 and err.startswith("devmodels: warning: freq:") and "interpolated linearly" in err
    code, out, err = run("gain", "--touchstone", str(p), "-f", "3MHz", "--json")
    assert code == 0 and err == ""


def test_two_phi_f_reaches_the_mosfet(run_json):
    base = ["model", "--device", "nmos", "--id", "1mA", "--vds", "2", "--vov", "0.2", "--gamma", "0.4"]
    a = run_json(*base)
    b = run_json(*base, "--two-phi-f", "0.9")
    gm = 2 * 1e-3 / 0.2
    # gmb = gamma gm / (2 sqrt(2 phi_F + VSB)) (fetbias docstring), VSB = 0
    assert a["gmb"] == pytest.approx(0.4 * gm / (2 * np.sqrt(0.7)))
    assert b["gmb"] == pytest.approx(0.4 * gm / (2 * np.sqrt(0.9)))


def test_crosscheck_max_error_keeps_the_json_key(run_json, run):
    d = run_json("crosscheck", BJT, "-c", "ce", "-f", "1MHz", "--max-error", "1e-6")
    assert d["tolerance"] == 1e-6
    assert_one_line_error(run, "crosscheck", BJT, "--tol", "1e-6", match="No such option")


def test_fet_default_configuration_is_its_first(run_json):
    d = run_json("gain", str(EXAMPLES / "fet" / "nmos_lna_input.toml"), "-f", "1MHz")
    assert d["config"] == "cs"


def test_help_shows_units_and_panels(run):
    code, out, _ = run("gain", "--help")
    assert code == 0
    for needle in ("AMPERE", "HZ", "OHM", "FARAD", "Bipolar transistor", "FET", "Ratings", "Stage",
                   "npn, pnp, nmos, pmos, njfet or pjfet", "--two-phi-f"):
        assert needle in out, needle
    assert "<bool>" not in out and "<str>" not in out
    code, out, _ = run("bias", "--help")
    assert "Bias network" in out and "PERCENT" in out


def test_closed_pipe_ends_quietly():
    freqs = ",".join(str(f) for f in range(1000, 21000))
    p = subprocess.Popen([sys.executable, "-m", "devmodels", "params", "--params", "h=1k,1e-4,100,1e-5",
                          "-f", freqs, "--json"], stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    p.stdout.read(10)
    p.stdout.close()
    err = p.stderr.read()
    assert p.wait() == 0 and err == b""

"""Command line for FETs, cascade, connect and formula, and their error paths."""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np
import pytest

import devmodels as dm
from conftest import assert_one_line_error, cx
from devmodels.analysis import terminate
from devmodels.fet import FetModel
from devmodels.fetbias import MosfetBias

EXAMPLES = Path(__file__).resolve().parents[1] / "bias_examples"
FET_EXAMPLES = sorted((EXAMPLES / "fet").glob("*.toml"))
NMOS = ["--device", "nmos", "--id", "2mA", "--vds", "3V", "--vov", "0.25V", "--lambda", "0.04",
        "--cgs", "1pF", "--cgd", "0.2pF"]
FET_KEYS = {"gm", "gmb", "ro", "cgs", "cgd", "ft", "vov"}


def test_model_json_for_a_mosfet(run_json):
    d = run_json("model", *NMOS, "--gamma", "0.5", "--vsb", "1.2")
    assert FET_KEYS <= set(d)
    # gm = 2 ID/Vov, ro = 1/(lambda ID), gmb = gamma gm/(2 sqrt(2phiF + VSB)), 2phiF = 0.7 V default
    # (Sedra and Smith, MOSFET small-signal model; from memory).
    assert d["gm"] == pytest.approx(2 * 2e-3 / 0.25)
    assert d["ro"] == pytest.approx(1 / (0.04 * 2e-3))
    assert d["gmb"] == pytest.approx(0.5 * d["gm"] / (2 * math.sqrt(0.7 + 1.2)))
    assert d["cgs"] == pytest.approx(1e-12) and d["vov"] == pytest.approx(0.25)
    assert d["ft"] == pytest.approx(d["gm"] / (2 * math.pi * 1.2e-12))


def test_model_json_for_a_jfet_and_nulls(run_json):
    d = run_json("model", "--device", "njfet", "--id", "2mA", "--vds", "5", "--idss", "8mA", "--vp", "-2V")
    # gm = (2/|VP|) sqrt(ID IDSS) (Shockley's law; Sedra and Smith, JFET section; from memory)
    assert d["gm"] == pytest.approx(2 / 2 * math.sqrt(2e-3 * 8e-3))
    assert d["gmb"] is None and d["ro"] is None and d["ft"] is None


def test_model_table_for_a_fet(run):
    code, out, err = run("model", *NMOS)
    assert code == 0 and "16 mS" in out and "12.5 kΩ" in out


def test_kn_and_lambda_in_a_bias_file(run_json, tmp_path):
    p = tmp_path / "m.toml"
    p.write_text('device = "nmos"\nid = "2mA"\nvds = 3\nkn = 0.064\nlambda = 0.04\n')
    d = run_json("model", str(p))
    # gm = sqrt(2 kn ID) with ID = (kn/2) Vov^2 (Sedra and Smith; from memory)
    assert d["gm"] == pytest.approx(math.sqrt(2 * 0.064 * 2e-3))
    assert d["ro"] == pytest.approx(12.5e3)


@pytest.mark.parametrize("path", FET_EXAMPLES, ids=lambda p: p.name)
def test_every_fet_example_runs(run_json, path):
    d = run_json("model", str(path))
    assert d["gm"] > 0 and d["cgs"] >= 0
    for c in ("cs", "cg", "cd"):
        p = run_json("params", str(path), "--config", c, "--freq", "100MHz")
        assert p["config"] == c and len(p["points"]) == 1


def test_fet_examples_are_explained():
    assert len(FET_EXAMPLES) >= 2
    for p in FET_EXAMPLES:
        assert p.read_text().lstrip().startswith("# Invented demo scenario")


def test_params_of_a_fet_stage_match_the_library(run_json):
    d = run_json("params", *NMOS, "--config", "cg", "--kind", "s", "--freq", "1GHz")
    m = FetModel.from_bias(MosfetBias(id=2e-3, vds=3, vov=0.25, lambda_=0.04, cgs=1e-12, cgd=0.2e-12))
    ref = dm.Stage(m, "cg").two_port([1e9], "s").data[0]
    p = d["points"][0]
    got = np.array([[cx(p["11"]), cx(p["12"])], [cx(p["21"]), cx(p["22"])]])
    np.testing.assert_allclose(got, ref, rtol=1e-12)


def _bjt_file(tmp_path, name="q.toml", extra=""):
    p = tmp_path / name
    p.write_text('ic = "1mA"\nvce = 5\nbeta = 120\nva = 60\nft = "400MHz"\ncmu = "1.5pF"\nrb = 40\n' + extra)
    return str(p)


def _nmos_file(tmp_path, name="m.toml"):
    p = tmp_path / name
    p.write_text('device = "nmos"\nid = "2mA"\nvds = 3\nvov = 0.25\nlambda = 0.04\ngamma = 0.4\nvsb = 0.5\n'
                 'cgs = "1pF"\ncgd = "0.2pF"\n')
    return str(p)


def test_cascade_json_against_scikit_rf_and_the_library(run_json, tmp_path):
    q = _bjt_file(tmp_path)
    m = _nmos_file(tmp_path)
    d = run_json("cascade", "--stage", f"ce:{q}", "--stage", f"cg:{m}", "--rs", "75", "--rl", "2k",
                 "--freq", "1MHz", "--freq", "100MHz")
    assert d["config"] == "ce+cg" and [s["config"] for s in d["stages"]] == ["ce", "cg"]
    assert {"freq", "av", "avs", "ai", "zin", "zout", "gt_db", "k", "mu", "msg_db"} <= set(d["points"][0])
    f = [1e6, 1e8]
    a = dm.Stage(dm.HybridPi.from_bias(dm.BipolarBias(ic=1e-3, vce=5, beta=120, va=60, ft=400e6, cmu=1.5e-12,
                                                      rb=40)), "ce").two_port(f)
    b = dm.Stage(FetModel.from_bias(MosfetBias(id=2e-3, vds=3, vov=0.25, lambda_=0.04, gamma=0.4, vsb=0.5,
                                               cgs=1e-12, cgd=0.2e-12)), "cg").two_port(f)
    # reference chain: scikit-rf's cascade operator, then the terminated analysis
    net = a.to_skrf() ** b.to_skrf()
    ref = terminate(dm.TwoPort(np.asarray(f), net.s, "s"), 75.0, 2e3)
    for i, p in enumerate(d["points"]):
        assert cx(p["av"]) == pytest.approx(ref.av[i], rel=1e-8)
        assert cx(p["zin"]) == pytest.approx(ref.zin[i], rel=1e-8)
        assert cx(p["zout"]) == pytest.approx(ref.zout[i], rel=1e-8)
        # the stages' gains multiply to the chain's V2/V1 (definition)
        prod = cx(d["stages"][0]["points"][i]["av"]) * cx(d["stages"][1]["points"][i]["av"])
        assert prod == pytest.approx(cx(p["av"]), rel=1e-9)
        assert cx(d["stages"][0]["points"][i]["zin"]) == pytest.approx(cx(p["zin"]), rel=1e-12)


@pytest.mark.parametrize("name,configs", [("cascode", ["ce", "cb"]), ("follower", ["ce", "cc"])])
def test_pair_short_form(run_json, tmp_path, name, configs):
    q1, q2 = _bjt_file(tmp_path, "a.toml"), _bjt_file(tmp_path, "b.toml")
    d = run_json("cascade", "--pair", f"{name}:{q1},{q2}")
    e = run_json("cascade", "--stage", f"{configs[0]}:{q1}", "--stage", f"{configs[1]}:{q2}")
    assert [s["config"] for s in d["stages"]] == configs
    assert d["points"] == e["points"]


def test_pair_picks_fet_configurations(run_json, tmp_path):
    m = _nmos_file(tmp_path)
    d = run_json("cascade", "--pair", f"cascode:{m},{m}")
    assert [s["config"] for s in d["stages"]] == ["cs", "cg"]


def test_cascade_table(run, tmp_path):
    q = _bjt_file(tmp_path)
    code, out, err = run("cascade", "--stage", f"ce:{q}", "--stage", f"cc:{q}", "--rl", "open")
    assert code == 0 and "Each stage as loaded" in out and "nan" not in out and "inf" not in out


def test_connect_json_matches_the_stamped_stage(run_json, tmp_path):
    q = _bjt_file(tmp_path)
    d = run_json("connect", "--how", "series-series", "--net", f"ce:{q}", "--net", "shunt:47", "--freq", "10MHz",
                 "--kind", "y")
    assert d["port_condition"] is True and d["kind"] == "y"
    # an emitter resistor as a series-series connection equals the stamped degeneration
    # (the stamped circuit is the independent reference)
    code_ref = run_json("params", q, "--config", "ce", "--rdeg", "47", "--freq", "10MHz")
    for k in ("11", "12", "21", "22"):
        assert cx(d["points"][0][k]) == pytest.approx(cx(code_ref["points"][0][k]), rel=1e-10)


def test_connect_warns_about_the_port_condition(run):
    code, out, err = run("connect", "--how", "series-shunt", "--net", "h=2.6k,2e-4,100,12u", "--net",
                         "h=10,0.1,-0.1,1m", "--json")
    assert code == 0
    d = json.loads(out)
    # H add (series-shunt), by definition
    assert cx(d["points"][0]["11"]) == pytest.approx(2610) and d["points"][0]["freq"] is None
    assert d["port_condition"] is None and "warning" in err and len(err.strip().splitlines()) == 1


def test_connect_states_the_port_condition_once(run, tmp_path):
    # The verdict line names it once: no "Port condition holds: ... the port condition holds".
    q = _bjt_file(tmp_path)
    code, out, _ = run("connect", "--how", "series-series", "--net", f"ce:{q}", "--net", "shunt:47",
                       "--freq", "10MHz")
    line = out.strip().splitlines()[-1]
    assert code == 0 and line.startswith("Port condition: series-series:") and line.count("holds") == 1
    code, out, _ = run("connect", "--how", "shunt-shunt", "--net", f"ce:{q}", "--net", "series:10k",
                       "--freq", "10MHz")
    line = out.strip().splitlines()[-1]
    assert code == 0 and line.count("holds") == 1


def test_formula_value_equals_the_engine(run_json, tmp_path):
    m = _nmos_file(tmp_path)
    d = run_json("formula", m, "--config", "cd", "--result", "zout", "--rs", "1k", "--freq", "300MHz")
    assert d["rel_diff"] < 1e-9 and "gmb" in d["expression"] and d["latex"]
    assert cx(d["value"]) == pytest.approx(cx(d["engine"]), rel=1e-9)
    q = _bjt_file(tmp_path)
    d = run_json("formula", q, "-c", "ce", "-r", "avs", "--rs", "600", "--rl", "3.3k", "--low-frequency")
    assert d["freq"] == 0 and d["rel_diff"] < 1e-9 and "C_pi" not in d["expression"]


def test_formula_without_a_bias_point_and_latex(run):
    code, out, err = run("formula", "-c", "cs", "-r", "av", "--rl", "1k", "--low-frequency", "--latex")
    assert code == 0 and "g_{m}" in out and "R_{L}" in out


def test_formula_open_input(run_json):
    # a gate with no capacitance draws no current: open, in the formula and in the engine
    d = run_json("formula", "--device", "nmos", "--id", "1mA", "--vds", "2", "--vov", "0.2", "--lambda", "0.05",
                 "-c", "cs", "-r", "zin", "--rl", "1k", "--low-frequency")
    assert d["expression"] is None and d["value"] is None and d["engine"] is None


ERRORS = [
    (["model", "--device", "nmos", "--id", "1mA", "--vds", "0.1", "--vov", "0.2"], "vds: 0.1 V is below"),
    (["model", "--device", "nmos", "--id", "1mA", "--vds", "2"], "vov: missing"),
    (["model", "--device", "nmos", "--id", "1mA", "--vds", "2", "--vov", "0.2", "--kn", "0.1"], "vov, kn"),
    (["model", "--device", "nmos", "--vds", "2", "--vov", "0.2"], "id: missing"),
    (["model", "--device", "nmos", "--ic", "1mA", "--vds", "2", "--vov", "0.2"], "ic: a bipolar option"),
    (["model", "--device", "njfet", "--id", "1mA", "--vds", "5", "--idss", "4mA", "--vp", "-2", "--gamma",
      "0.4"], "gamma: a MOSFET option"),
    (["model", "--device", "njfet", "--id", "5mA", "--vds", "5", "--idss", "4mA", "--vp", "-2"], "above idss"),
    (["model", "--device", "njfet", "--id", "1mA", "--vds", "5", "--idss", "4mA"], "vp: missing"),
    (["model", "--id", "1mA", "--vds", "5"], "id: a FET option"),
    (["model", "--device", "nmos", "--id", "1mA", "--vds", "2", "--vov", "0.2", "--lambda", "-1"], "lambda"),
    (["params", "--device", "nmos", "--id", "1mA", "--vds", "2", "--vov", "0.2", "--config", "ce"],
     "config: 'ce' is not a configuration of a fet device"),
    (["params", "--ic", "1mA", "--vce", "5", "--beta", "100", "--config", "cs"], "config: 'cs' is not a configuration of a bipolar device"),
    (["cascade", "--stage", "ce:nonexistent.toml", "--stage", "cb:nonexistent.toml"], "nonexistent.toml"),
    (["cascade", "--stage", "ce"], "stage: expected CONFIG:BIASFILE"),
    (["cascade"], "at least two stages"),
    (["cascade", "--pair", "triple:a.toml,b.toml"], "pair: unknown pair"),
    (["cascade", "--pair", "cascode:a.toml"], "pair: expected two bias files"),
    (["connect", "--how", "sideways", "--net", "shunt:1", "--net", "shunt:2"], "how: unknown connection"),
    (["connect", "--how", "series-series", "--net", "shunt:1"], "net: give exactly two"),
    (["connect", "--how", "series-series", "--net", "shunt:1", "--net", "series:10"], "has no Z parameters"),
    (["connect", "--how", "shunt-shunt", "--net", "shunt:0", "--net", "series:10"], "expected a finite nonzero"),
    (["formula", "--result", "gain"], "result: unknown"),
    (["formula", "--config", "cx"], "config"),
    (["formula", "--low-frequency", "--freq", "1MHz"], "freq:"),
    (["formula", "--rl", "0"], "rl:"),
    (["formula", "-r", "ai"], "rl: the current gain"),
]


@pytest.mark.parametrize("args,needle", ERRORS)
def test_error_paths_exit_2_with_one_line(run, args, needle):
    assert_one_line_error(run, *args, match=needle)


def test_bipolar_commands_unchanged_by_fet_options(run_json):
    # The bipolar model is untouched by the FET options added to the shared bias panel.
    d = run_json("model", "--ic", "1mA", "--vce", "5", "--beta", "100")
    assert d["gm"] == pytest.approx(1e-3 / dm.thermal_voltage(300))


def test_cascade_noise_against_cascade_noise_and_friis(run_json, run, tmp_path):
    from devmodels.noise import cascade_noise, noise_parameters, stage_noise

    q = _bjt_file(tmp_path)
    m = _nmos_file(tmp_path)
    d = run_json("cascade", "--stage", f"ce:{q}", "--stage", f"cg:{m}", "--rs", "75", "--rl", "2k",
                 "--freq", "1MHz", "--freq", "100MHz")
    f = [1e6, 1e8]
    sa = dm.Stage(dm.HybridPi.from_bias(dm.BipolarBias(ic=1e-3, vce=5, beta=120, va=60, ft=400e6, cmu=1.5e-12,
                                                       rb=40)), "ce")
    sb = dm.Stage(FetModel.from_bias(MosfetBias(id=2e-3, vds=3, vov=0.25, lambda_=0.04, gamma=0.4, vsb=0.5,
                                                cgs=1e-12, cgd=0.2e-12)), "cg")
    na, nb = stage_noise(sa, f), stage_noise(sb, f)
    total = noise_parameters(cascade_noise([na, nb]), zs=75.0)
    first = noise_parameters(na, zs=75.0)
    for i, p in enumerate(d["points"]):
        assert p["nf_db"] == pytest.approx(float(total.nf_db[i]), rel=1e-9, abs=0)
        s1, s2 = d["stages"][0]["points"][i], d["stages"][1]["points"][i]
        assert s1["nf_db"] == pytest.approx(float(first.nf_db[i]), rel=1e-9, abs=0)
        # Friis: F = F1 + (F2 - 1)/GA1, F2 from stage 1's output impedance, GA1 stage 1's available gain
        t1 = terminate(sa.two_port(f), 75.0, 2e3)
        ga1 = 10 ** (t1.ga_db[i] / 10)
        f2 = float(noise_parameters(nb, zs=t1.zout).f[i])
        assert s2["nf_db"] == pytest.approx(10 * math.log10(f2), rel=1e-9, abs=0)
        assert s1["contribution"] == pytest.approx(float(first.f[i]) - 1, rel=1e-9, abs=0)
        assert s2["contribution"] == pytest.approx((f2 - 1) / ga1, rel=1e-8, abs=0)
        assert 10 ** (p["nf_db"] / 10) == pytest.approx(float(first.f[i]) + (f2 - 1) / ga1, rel=1e-8, abs=0)
    code, out, err = run("cascade", "--stage", f"ce:{q}", "--stage", f"cg:{m}", "--freq", "1MHz")
    assert code == 0 and "Noise of the chain" in out and "NF alone" in out


def test_cascade_from_an_ideal_source_has_no_noise_figure(run, tmp_path):
    q = _bjt_file(tmp_path)
    code, out, err = run("cascade", "--stage", f"ce:{q}", "--stage", f"cc:{q}", "--rs", "0", "--json")
    d = json.loads(out)
    assert code == 0 and "noise: not computed" in err
    assert d["points"][0]["nf_db"] is None and d["stages"][1]["points"][0]["contribution"] is None

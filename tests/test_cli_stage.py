"""Command line: the stage as it is built ([network] in the AC analysis), the whole band in sweep,
temperature and datasheet values through the CLI, self-describing output files."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from conftest import assert_one_line_error, cx

# Invented values.  ft and cmu are absent: the model has no capacitances, so every frequency
# is mid-band and the hand formulas below hold exactly.
CE_FILE = """
beta = 150
va = "100V"
rb = "80ohm"
[network]
type = "divider"
vcc = "12V"
r1 = "56k"
r2 = "10k"
rc = "3.3k"
re = "820ohm"
c_bypass = "short"
"""


def _write(tmp_path, text, name="stage.toml"):
    p = tmp_path / name
    p.write_text(text)
    return str(p)


def _par(*rs):
    return 1.0 / sum(1.0 / r for r in rs)


# --- item 1: the bias network is part of the stage ---------------------------------------------
def test_ce_divider_bypassed_midband_gain_and_input_impedance(run_json, tmp_path):
    # Analog texts (Sedra and Smith, the discrete CE amplifier; from memory): with RE fully
    # bypassed and ideal coupling, av = -gm (ro || RC || RL) r_pi / (rb + r_pi) and
    # zin = R1 || R2 || (rb + r_pi).
    path = _write(tmp_path, CE_FILE)
    m = run_json("model", path)
    rl = 10e3
    d = run_json("gain", path, "--rs", "600", "--rl", "10k", "-f", "1kHz")
    p = d["points"][0]
    av = -m["gm"] * _par(m["ro"], 3.3e3, rl) * m["r_pi"] / (m["rb"] + m["r_pi"])
    zin = _par(56e3, 10e3, m["rb"] + m["r_pi"])
    assert cx(p["av"]) == pytest.approx(av, rel=1e-9, abs=0)
    assert cx(p["zin"]) == pytest.approx(zin, rel=1e-9, abs=0)
    # zout = ro || RC (the source side does not reach the collector without C_mu)
    assert cx(p["zout"]) == pytest.approx(_par(m["ro"], 3.3e3), rel=1e-9, abs=0)


def test_bare_flag_gives_the_transistor_alone_at_the_solved_point(run_json, tmp_path):
    path = _write(tmp_path, CE_FILE)
    m = run_json("model", path)
    bare = run_json("gain", path, "--bare", "--rs", "600", "--rl", "10k")
    flat = run_json("gain", "--ic", repr(m["ic"]), "--vce", repr(m["vce"]), "--beta", "150", "--va", "100V",
                    "--rb", "80", "--rs", "600", "--rl", "10k")
    assert bare["points"] == flat["points"]
    built = run_json("gain", path, "--rs", "600", "--rl", "10k")
    assert built["points"][0]["zin"] != bare["points"][0]["zin"]


def test_unbypassed_emitter_resistor_reduces_the_gain(run_json, tmp_path):
    # Common practice (from memory): with RE in the AC circuit, |av| is about (RC || RL) / RE
    # for a large gm RE; here within 10 % of it, and far below the bypassed gain.
    path = _write(tmp_path, CE_FILE.replace('c_bypass = "short"\n', ""))
    p = run_json("gain", path, "--rs", "0", "--rl", "10k")["points"][0]
    assert abs(cx(p["av"])) == pytest.approx(_par(3.3e3, 10e3) / 820, rel=0.1, abs=0)


def test_partly_bypassed_emitter_resistor_is_the_unbypassed_part(run_json, tmp_path):
    # A shorted bypass across 620 of 820 ohm leaves 200 ohm: the same as re = 200 fully in the
    # AC circuit of the same transistor (rdeg of the bare stage at the same bias point).
    path = _write(tmp_path, CE_FILE + 're_bypassed = "620ohm"\n')
    # With an ideal source (rs = 0) the bias resistors at the base do not matter, and RC is in
    # parallel with RL at the output.
    m = run_json("model", path)
    g = run_json("gain", path, "--rs", "0", "--rl", "10k")["points"][0]
    bare = run_json("gain", "--ic", repr(m["ic"]), "--vce", repr(m["vce"]), "--beta", "150", "--va", "100V",
                    "--rb", "80", "--rdeg", "200", "--rs", "0", "--rl", repr(_par(3.3e3, 10e3)))["points"][0]
    assert cx(g["av"]) == pytest.approx(cx(bare["av"]), rel=1e-9, abs=0)
    full = run_json("gain", _write(tmp_path, CE_FILE, "full.toml"), "--rs", "0", "--rl", "10k")["points"][0]
    assert abs(cx(g["av"])) < 0.1 * abs(cx(full["av"]))  # far below the fully bypassed gain


@pytest.mark.parametrize("cmd", [["params", "-f", "1MHz"], ["gain"], ["compare"], ["sweep", "--points", "5"],
                                 ["crosscheck", "-f", "1MHz"]])
def test_every_stage_command_takes_the_network_and_bare(run, tmp_path, cmd):
    path = _write(tmp_path, CE_FILE + 'c_in = "10uF"\nc_out = "10uF"\nc_base = "22uF"\n')
    outs = []
    for extra in ([], ["--bare"]):
        code, out, err = run(cmd[0], path, *cmd[1:], *extra, "--json")
        assert code == 0, err
        outs.append(json.loads(out))
    if cmd[0] != "crosscheck":
        assert outs[0] != outs[1]


def test_fet_network_with_given_bias_point(run_json, run, tmp_path):
    # CS with RD, a gate divider and the source resistor shorted by its bypass:
    # av = -gm (ro || RD || RL), zin = RG1 || RG2 (analog texts, from memory).
    text = ('device = "nmos"\nid = "2mA"\nvds = "4V"\nvov = "0.25V"\nlambda = 0.02\n'
            '[network]\nrg1 = "1.5M"\nrg2 = "470k"\nrd = "2.2k"\nrsrc = "330ohm"\nc_bypass = "short"\n')
    path = _write(tmp_path, text)
    m = run_json("model", path)
    p = run_json("gain", path, "--rl", "10k")["points"][0]
    assert cx(p["av"]) == pytest.approx(-m["gm"] * _par(m["ro"], 2.2e3, 10e3), rel=1e-9, abs=0)
    assert cx(p["zin"]) == pytest.approx(_par(1.5e6, 470e3), rel=1e-9, abs=0)
    # without an ID/VDS point the FET network cannot be used
    nopoint = _write(tmp_path, text.replace('id = "2mA"\n', ""), "nopoint.toml")
    assert_one_line_error(run, "gain", nopoint, prefix="id: missing")


BAD_STAGE = {
    "zero_capacitor": ('c_in = "0pF"\n', "c_in:"),
    "negative_capacitor": ('c_out = "-1uF"\n', "c_out:"),
    "negative_bypass": ('c_bypass = "-4.7uF"\n', "c_bypass:"),
    "bypassed_above_re": ('re_bypassed = "1k"\n', "re_bypassed:"),
    "bypassed_without_capacitor": ('re_bypassed = "100"\n', "re_bypassed:"),
    "fet_key_for_npn": ('rg1 = "1M"\n', "rg1:"),
    "capacitor_text": ('c_in = "open"\n', "c_in:"),
}


@pytest.mark.parametrize("case", sorted(BAD_STAGE))
@pytest.mark.parametrize("cmd", ["gain", "model", "bias"])
def test_bad_stage_network_values_are_one_line(run, tmp_path, case, cmd):
    extra, prefix = BAD_STAGE[case]
    base = CE_FILE
    if case in ("bypassed_without_capacitor", "negative_bypass"):
        base = CE_FILE.replace('c_bypass = "short"\n', "")
    path = _write(tmp_path, base + extra)
    assert_one_line_error(run, cmd, path, prefix=prefix)


def test_fet_with_a_dc_network_is_refused(run, tmp_path):
    path = _write(tmp_path, 'device = "njfet"\nid = "1mA"\nvds = 5\nidss = "4mA"\nvp = -2\n'
                            '[network]\ntype = "divider"\nvcc = 12\nr1 = "1M"\nr2 = "100k"\n')
    line = assert_one_line_error(run, "gain", path)
    assert "rg1" in line and "id and vds" in line


def test_fet_bypassed_part_above_rsrc_names_fet_keys(run, tmp_path):
    path = _write(tmp_path, 'device = "njfet"\nid = "1mA"\nvds = 5\nidss = "4mA"\nvp = -2\n'
                            '[network]\nrsrc = "1k"\nrsrc_bypassed = "2k"\nc_bypass = "10uF"\n')
    assert_one_line_error(run, "gain", path, prefix="rsrc_bypassed: 2000 ohm is more than rsrc")


# --- item 2: the whole band in sweep -------------------------------------------------------------
def test_sweep_figures_single_coupling_capacitor_is_first_order(run_json, tmp_path):
    # One coupling capacitor into a resistive stage: a first-order high-pass,
    # f_low = 1/(2 pi (Rs + Rin) C) exactly, and the short-circuit estimate equals it
    # (common practice, from memory).
    path = _write(tmp_path, CE_FILE + 'c_in = "2.2uF"\n')
    zin = cx(run_json("gain", path, "--rs", "600", "--rl", "10k")["points"][0]["zin"]).real
    d = run_json("sweep", path, "--start", "1Hz", "--stop", "1MHz", "--points", "7", "--rs", "600", "--rl", "10k")
    fig = d["figures"]
    expect = 1 / (2 * 3.141592653589793 * (600 + zin) * 2.2e-6)
    assert fig["f_low"] == pytest.approx(expect, rel=1e-6, abs=0)
    assert fig["f_low_sctc"] == pytest.approx(expect, rel=1e-9, abs=0)
    mid = cx(fig["midband_avs"])
    av = cx(run_json("gain", _write(tmp_path, CE_FILE, "ideal.toml"), "--rs", "600", "--rl", "10k")["points"][0]["avs"])
    assert mid == pytest.approx(av, rel=1e-9, abs=0)
    assert fig["bandwidth_octc"] is None  # no device capacitances (no ft, no cmu)
    assert [t["name"] for t in fig["low_terms"]] == ["c_in"]
    assert fig["low_terms"][0]["resistance"] == pytest.approx(600 + zin, rel=1e-9, abs=0)


def test_sweep_figures_without_capacitors_have_no_low_corner(run_json):
    d = run_json("sweep", "--ic", "1mA", "--vce", "5", "--beta", "100", "--ft", "300MHz", "--cmu", "2pF",
                 "--points", "5")
    fig = d["figures"]
    assert fig["f_low"] is None and fig["f_low_sctc"] is None and fig["low_terms"] == []
    assert isinstance(fig["midband_avs"], list) and len(fig["midband_avs"]) == 2
    assert fig["bandwidth_octc"] > 0 and [t["name"] for t in fig["high_terms"]] == ["c_mu", "c_pi"]


def test_sweep_figures_equal_the_library(run_json, tmp_path):
    import devmodels as dm
    from devmodels.merit import frequency_figures
    from devmodels.stagenetwork import StageNetwork

    text = CE_FILE.replace('c_bypass = "short"', 'c_bypass = "47uF"\nre_bypassed = "620ohm"\nc_in = "1uF"\n'
                           'c_out = "1uF"').replace('beta = 150', 'beta = 150\nft = "300MHz"\ncmu = "2pF"')
    path = _write(tmp_path, text)
    m = run_json("model", path)
    d = run_json("sweep", path, "--start", "1Hz", "--stop", "1GHz", "--points", "5", "--rs", "600", "--rl", "10k")
    bias = dm.BipolarBias(ic=m["ic"], vce=m["vce"], beta=150, va=100.0, ft=300e6, cmu=2e-12, rb=80.0)
    net = StageNetwork("divider", r1=56e3, r2=10e3, rc=3.3e3, re=820.0, re_bypassed=620.0, c_in=1e-6, c_out=1e-6,
                       c_bypass=47e-6)
    figs = frequency_figures(dm.Stage(dm.HybridPi.from_bias(bias), "ce", network=net), 1.0, 1e9, 600.0, 1e4)
    for k in ("f_low", "f_low_sctc", "bandwidth", "bandwidth_octc", "bandwidth_miller"):
        assert d["figures"][k] == pytest.approx(figs.as_dict()[k], rel=1e-9, abs=0), k
    assert cx(d["figures"]["midband_avs"]) == pytest.approx(figs.midband_avs, rel=1e-12, abs=0)
    low = [t["name"] for t in d["figures"]["low_terms"]]
    assert low == [t.name for t in figs.low_terms] and set(low) == {"c_in", "c_out", "c_bypass"}


def test_sweep_table_shows_time_constants_largest_share_first(run, tmp_path):
    # c_in of 100 nF against 10 uF at the output: c_in sets the low corner.
    path = _write(tmp_path, CE_FILE + 'c_in = "100nF"\nc_out = "10uF"\n')
    code, out, err = run("sweep", path, "--start", "1Hz", "--stop", "1MHz", "--points", "5", "--rl", "10k")
    assert code == 0, err
    table = out[out.index("Low corner"):]
    assert table.index("c_in") < table.index("c_out")
    assert "f_low estimate" in out and "bandwidth estimate" in out and "mid-band avs" in out
    assert "rdeg/rfb only" not in out


def test_miller_row_with_rdeg_has_a_value_and_with_rfb_says_why(run):
    base = ["sweep", "--ic", "1mA", "--vce", "5", "--beta", "100", "--ft", "300MHz", "--cmu", "2pF", "--points", "5"]
    code, out, _ = run(*base, "--rdeg", "100")
    row = [ln for ln in out.splitlines() if "Miller estimate" in ln][0]
    assert code == 0 and "Hz" in row.split("│")[2]
    code, out, _ = run(*base, "--rfb", "10k")
    row = [ln for ln in out.splitlines() if "Miller estimate" in ln][0]
    assert "rfb" in row.split("│")[2]


# --- item 3: one temperature rule everywhere ------------------------------------------------------
POINT = ["--ic", "1mA", "--vce", "5V", "--beta", "100"]


def test_default_temperatures_leave_beta_as_given(run_json):
    d = run_json("model", *POINT)
    assert d["beta"] == 100.0 and d["temp"] == 300.0 and d["tref"] == 300.0
    # temp defaults to tref: a datasheet at 25 C analysed at 25 C keeps its beta
    d = run_json("model", *POINT, "--tref", "25C")
    assert d["beta"] == 100.0 and d["temp"] == pytest.approx(298.15, rel=1e-15, abs=0) and d["tref"] == d["temp"]


def test_beta_moves_from_tref_to_temp(run_json):
    # devmodels.temperature: beta(T) = beta(tref) (1 + beta_tc)^(T - tref), 0.5 %/K by default
    # (common practice, no source, as that module says).
    d = run_json("model", *POINT, "--temp", "350")
    assert d["beta"] == pytest.approx(100 * 1.005 ** 50, rel=1e-12, abs=0)
    d = run_json("model", *POINT, "--temp", "350", "--tref", "320", "--beta-tc", "1")
    assert d["beta"] == pytest.approx(100 * 1.01 ** 30, rel=1e-12, abs=0) and d["tref"] == 320.0


def test_gain_spread_model_agree_on_beta_at_the_junction_temperature(run_json):
    m = run_json("model", *POINT, "--temp", "360", "--tref", "310")
    r_pi = m["beta"] / m["gm"]
    g = run_json("gain", *POINT, "--temp", "360", "--tref", "310", "--rl", "1k")
    assert cx(g["points"][0]["zin"]) == pytest.approx(r_pi, rel=1e-12, abs=0)  # no rb, no capacitances: zin = r_pi
    s = run_json("spread", "--ic", "1mA", "--vce", "5V", "--beta-min", "100", "--beta-max", "100", "--temp-min",
                 "360", "--temp-max", "360", "--tref", "310", "--rl", "1k", "-n", "20", "--seed", "3")
    assert s["zin"]["p50"] == pytest.approx(r_pi, rel=1e-9, abs=0) and s["zin"]["min"] == s["zin"]["max"]


def test_network_point_bias_spread_model_agree_at_the_junction_temperature(run_json, tmp_path):
    path = _write(tmp_path, CE_FILE)
    args = ("--temp", "85C", "--tref", "25C")
    m = run_json("model", path, *args)
    b = run_json("bias", path, *args)
    assert m["beta"] == pytest.approx(b["beta"], rel=1e-15, abs=0) and m["ic"] == pytest.approx(b["ic"], rel=1e-15, abs=0)
    assert b["beta"] == pytest.approx(150 * 1.005 ** 60, rel=1e-9, abs=0)
    s = run_json("spread", path, "--beta-min", "150", "--beta-max", "150", "--temp-min", "85C", "--temp-max", "85C",
                 "--tref", "25C", "-n", "20", "--seed", "3")
    assert s["ic"]["p50"] == pytest.approx(b["ic"], rel=1e-9, abs=0)
    # VBE(on) moves too: 0.7 V at tref, -2 mV/K (temperature.py)
    assert b["vbe"] == pytest.approx(0.7 - 2e-3 * 60, rel=1e-9, abs=0)


# --- item 4: datasheet values at their test conditions --------------------------------------------
def test_ft_scaling_through_the_cli_reproduces_datasheet(run_json, run):
    from devmodels.datasheet import ft_at_bias

    d = run_json("model", *POINT, "--ft", "300MHz", "--ft-at-ic", "10mA", "--c-je", "8pF", "--cmu", "2pF")
    ref = ft_at_bias(1e-3, 300e6, 10e-3, c_je=8e-12, c_mu=2e-12)
    assert d["ft_used"] == pytest.approx(float(ref.ft_used), rel=1e-12, abs=0) and d["ft"] == 300e6
    assert d["datasheet"]["ft"]["used"] == pytest.approx(d["ft_used"], rel=1e-12, abs=0) and d["datasheet"]["ft"]["at_ic"] == 0.01
    # the model is built with fT at the bias point: C_pi = gm/(2 pi fT_used) - C_mu
    assert d["c_pi"] == pytest.approx(d["gm"] / (2 * 3.141592653589793 * d["ft_used"]) - 2e-12, rel=1e-9, abs=0)
    # table mode: one note line on stderr, "given at ..., used ... at ..."
    code, out, err = run("model", *POINT, "--ft", "300MHz", "--ft-at-ic", "10mA", "--c-je", "8pF")
    assert code == 0 and err.count("devmodels: note: fT: 300 MHz given at IC = 10 mA; used") == 1
    code, out, err = run("model", *POINT, "--ft", "300MHz", "--ft-at-ic", "10mA", "--c-je", "8pF", "--json")
    assert code == 0 and err == ""


def test_cob_moves_to_the_bias_vcb_as_datasheet_does(run_json):
    from devmodels.datasheet import cmu_from_cob

    d = run_json("model", *POINT, "--cob", "3pF", "--cob-at-vcb", "10V")
    ref = cmu_from_cob(3e-12, 10.0, vce=5.0, vbe=0.7)
    assert d["c_mu"] == pytest.approx(float(ref.c_mu), rel=1e-12, abs=0)
    assert d["datasheet"]["c_mu"]["vcb"] == pytest.approx(4.3, rel=1e-12, abs=0)
    d = run_json("model", *POINT, "--cob", "3pF", "--cob-at-vcb", "10V", "--cob-potential", "0.6V",
                 "--cob-exponent", "0.5", "--vbe", "0.65V")
    ref = cmu_from_cob(3e-12, 10.0, vce=5.0, vbe=0.65, cob_potential=0.6, cob_exponent=0.5)
    assert d["c_mu"] == pytest.approx(float(ref.c_mu), rel=1e-12, abs=0)


def test_hfe_table_and_ib(run_json, tmp_path):
    from devmodels.datasheet import hfe_from_table, ic_from_ib

    table = [[1e-4, 110.0], [1e-3, 150.0], [1e-2, 130.0]]
    d = run_json("model", "--ic", "2mA", "--vce", "5", "--hfe-table", "100uA:110, 1mA:150, 10mA:130")
    assert d["beta"] == pytest.approx(float(hfe_from_table(table, 2e-3).beta), rel=1e-12, abs=0)
    d = run_json("model", "--ib", "10uA", "--vce", "5", "--beta", "120")
    assert d["ic"] == pytest.approx(1.2e-3, rel=1e-12, abs=0)
    path = _write(tmp_path, 'ib = "10uA"\nvce = 5\nhfe_table = "100uA:110, 1mA:150, 10mA:130"\n')
    d = run_json("model", path)
    assert d["ic"] == pytest.approx(float(ic_from_ib(1e-5, hfe_table=table).ic), rel=1e-12, abs=0)


BAD_DATASHEET = [
    (["--beta", "100", "--cmu", "2pF", "--cob", "3pF", "--cob-at-vcb", "10"], "cob: give cmu"),
    (["--hfe-table", "1mA:120, 0.5mA:150"], "hfe_table: IC values must increase"),
    (["--beta", "100", "--ft-at-ic", "1mA"], "ft_at_ic: given without ft"),
    (["--beta", "100", "--ft", "300MHz", "--c-je", "5pF"], "ft_at_ic: missing"),
    (["--beta", "100", "--cob", "3pF"], "cob_at_vcb: missing"),
    (["--beta", "100", "--cob-at-vcb", "10V"], "cob_at_vcb: given without cob"),
    (["--beta", "100", "--hfe-table", "1mA:120"], "hfe_table: give beta or hfe_table"),
    (["--beta", "100", "--ib", "10uA"], "ib: give ic or ib"),
    (["--hfe-table", "1mA"], "hfe_table: row 1"),
]


@pytest.mark.parametrize("args,prefix", BAD_DATASHEET, ids=[p for _, p in BAD_DATASHEET])
def test_bad_datasheet_inputs_are_one_line(run, args, prefix):
    assert_one_line_error(run, "model", "--ic", "1mA", "--vce", "5", *args, prefix=prefix)


# --- item 5: files that say what they are -----------------------------------------------------------
def test_sweep_files_record_device_point_network_config(run, run_json, tmp_path):
    path = _write(tmp_path, CE_FILE + 'c_in = "1uF"\nc_out = "1uF"\n')
    m = run_json("model", path, "--temp", "320")
    ts, csv, js = tmp_path / "a.s2p", tmp_path / "a.csv", tmp_path / "a.json"
    for out, fmt in ((ts, "ri"), (csv, "ma"), (js, None)):  # no C_mu: s12 = 0 has no dB value
        code, _, err = run("sweep", path, "--temp", "320", "-c", "ce", "--points", "3", "--out", str(out),
                           *(["--format", fmt] if fmt else []))
        assert code == 0, err
    text = ts.read_text()
    head = [ln for ln in text.splitlines() if ln.startswith("!")]
    joined = "\n".join(head)
    assert "bias point: npn" in joined and "T = 320.00 K" in joined and f"beta = {m['beta']:.6g} at T" in joined
    assert "c_in = 1 µF" in joined and "rc = 3.3 kΩ" in joined and "configuration: ce" in joined
    assert "# Hz S RI R 50" in text
    ctext = csv.read_text()
    assert "# configuration: ce" in ctext and "mag s11 [1]" in ctext and "network (AC ground" in ctext
    rec = json.loads(js.read_text())["stage"]
    assert rec["config"] == "ce" and rec["device"] == "npn"
    assert rec["bias"]["beta"] == pytest.approx(m["beta"], rel=1e-15, abs=0) and rec["bias"]["temp"] == 320.0
    assert rec["bias"]["ic"] == pytest.approx(m["ic"], rel=1e-15, abs=0) and rec["network"]["c_in"] == 1e-6


def test_sweep_format_db_values_and_readback(run, run_json, tmp_path):
    import numpy as np

    from devmodels.touchstone import read_touchstone

    out = tmp_path / "b.s2p"
    args = ("sweep", *POINT, "--ft", "300MHz", "--cmu", "2pF", "--points", "3")
    code, _, err = run(*args, "--out", str(out), "--format", "db")
    assert code == 0, err
    d = run_json(*args)
    s21 = np.array([cx(p["21"]) for p in d["points"]])
    rows = [ln.split() for ln in out.read_text().splitlines() if ln and ln[0] not in "!#"]
    db = np.array([float(r[3]) for r in rows])
    assert db == pytest.approx(20 * np.log10(np.abs(s21)), rel=1e-12, abs=0)  # Touchstone DB: 20 log10 |x|
    back = read_touchstone(out)  # scikit-rf's parser reads the comment lines and the DB format
    assert back.data[:, 1, 0] == pytest.approx(s21, rel=1e-9, abs=0)


def test_sweep_format_is_checked(run):
    assert_one_line_error(run, "sweep", *POINT, "--points", "3", "--format", "xy", prefix="format:")


# --- item 6: the two complete-stage examples ---------------------------------------------------------
EXAMPLES = ["bias_examples/ce_stage_built.toml", "bias_examples/fet/cs_stage_built.toml"]


@pytest.mark.parametrize("example", EXAMPLES)
@pytest.mark.parametrize("cmd", [["model"], ["gain", "-f", "1kHz"], ["compare"], ["crosscheck"],
                                 ["sweep", "--start", "1Hz", "--stop", "100MHz", "--points", "5"]])
def test_examples_run(run, example, cmd):
    from pathlib import Path

    path = str(Path(__file__).resolve().parent.parent / example)
    code, out, err = run(cmd[0], path, *cmd[1:], "--json")
    assert code == 0 and err == "", err
    assert json.loads(out)


def test_ce_example_gain_is_set_by_the_unbypassed_resistor(run_json):
    # Common practice (from memory): |av| ~ (RC || RL) / (RE_unbypassed + 1/gm) at mid-band.
    from pathlib import Path

    path = str(Path(__file__).resolve().parent.parent / EXAMPLES[0])
    m = run_json("model", path)
    p = run_json("gain", path, "--rs", "0", "--rl", "10k", "-f", "10kHz")["points"][0]
    assert abs(cx(p["av"])) == pytest.approx(_par(5.6e3, 10e3) / (220 + 1 / m["gm"]), rel=0.05, abs=0)


def test_spread_says_what_it_leaves_out(run, tmp_path):
    path = _write(tmp_path, CE_FILE + 'c_in = "1uF"\n')
    code, out, err = run("spread", path, "--beta-min", "100", "--beta-max", "200", "-n", "50", "--seed", "1")
    assert code == 0 and "spread analyses the transistor" not in err
    ds = _write(tmp_path, 'ic = "1mA"\nvce = 5\nft = "300MHz"\nft_at_ic = "5mA"\n', "ds.toml")
    assert_one_line_error(run, "spread", ds, "--beta-min", "100", "--beta-max", "200", "-n", "50",
                          prefix="ft_at_ic: datasheet values")


@pytest.mark.parametrize("cmd", ["gain", "noise", "params", "spread"])
def test_network_options_override_the_file_table(run_json, tmp_path, cmd):
    """--net-rc (any [network] key as --net-...) overrides the file's table as every option
    overrides the file: the result equals the one of a file with that value written in."""
    src = Path(__file__).resolve().parent.parent / "bias_examples" / "ce_stage_built.toml"
    text = src.read_text()
    assert 'rc = "5.6k"' in text and 'c_in = "4.7uF"' in text
    edited = tmp_path / "edited.toml"
    edited.write_text(text.replace('rc = "5.6k"', 'rc = "4.7k"').replace('c_in = "4.7uF"', 'c_in = "1uF"'))
    extra = {"gain": ["--rs", "600", "--rl", "10k", "-f", "20Hz"], "noise": ["--rs", "600", "-f", "20Hz"],
             "params": ["-f", "20Hz"], "spread": ["--rs", "600", "--rl", "10k", "--freq", "20Hz", "-n", "300",
                                                  "--seed", "4"]}[cmd]
    by_option = run_json(cmd, str(src), *extra, "--net-rc", "4.7k", "--net-c-in", "1uF")
    by_file = run_json(cmd, str(edited), *extra)
    unchanged = run_json(cmd, str(src), *extra)
    assert by_option == by_file
    assert by_option != unchanged


def test_net_rb_is_the_bias_resistor_and_rb_the_spreading_resistance(run_json):
    """On a stage command --rb is the model's base spreading resistance and --net-rb the bias
    resistor of a fixed-bias network: one option, one meaning."""
    base = ["--net-type", "fixed", "--net-vcc", "12", "--net-rc", "4.7k", "--beta", "100", "--ft", "300MHz"]
    a = run_json("model", *base, "--net-rb", "1M")
    b = run_json("model", *base, "--net-rb", "1M", "--rb", "150")
    c = run_json("model", *base, "--net-rb", "680k")
    assert a["ic"] == b["ic"] and a["rb"] == 0.0 and b["rb"] == 150.0
    # fixed bias: IB = (VCC - VBE)/RB, IC = beta IB (textbook DC analysis, from memory)
    assert a["ic"] == pytest.approx(100 * (12 - 0.7) / 1e6, rel=1e-9)
    assert c["ic"] == pytest.approx(100 * (12 - 0.7) / 680e3, rel=1e-9)

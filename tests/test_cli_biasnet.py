"""Command line: bias, spread, bias files with a [network] table, and every error path."""

from __future__ import annotations

import json
import math
from pathlib import Path

import pytest

import devmodels as dm
from conftest import assert_one_line_error
from devmodels.dcbias import BiasNetwork, operating_point

EXAMPLE = str(Path(__file__).resolve().parents[1] / "bias_examples" / "sensor_preamp_divider.toml")
DIVIDER = ["--network", "divider", "--vcc", "12V", "--r1", "47k", "--r2", "10k", "--rc", "2.2k", "--re", "1k",
           "--beta", "100"]
BIAS_KEYS = {"ic", "ib", "ie", "vb", "ve", "vc", "vce", "region", "power"}


def _write(tmp_path, text, name="net.toml"):
    p = tmp_path / name
    p.write_text(text)
    return str(p)


NET_FILE = """
beta = 100
va = "80V"
[network]
type = "divider"
vcc = "12V"
r1 = "47k"
r2 = "10k"
rc = "2.2k"
re = "1k"
"""


def test_bias_json_keys_and_hand_values(run_json):
    d = run_json("bias", *DIVIDER)
    assert BIAS_KEYS <= set(d)
    # Thevenin equivalent of the base divider (Sedra and Smith, from memory), by hand:
    # IB = (2.105263 - 0.7) / (8245.614 + 101 * 1000) = 12.8633 uA, IC = 1.28633 mA, VCE = 7.87087 V.
    assert d["region"] == "active"
    assert d["ic"] == pytest.approx(1.28633e-3, rel=1e-5)
    assert d["vce"] == pytest.approx(7.87087, rel=1e-5)
    assert d["warnings"] == []


def test_bias_table_uses_si_prefixes(run):
    code, out, err = run("bias", *DIVIDER)
    assert code == 0 and "1.286 mA" in out and "7.871 V" in out and "active" in out


def test_bias_from_file_and_option_override(run_json, tmp_path):
    path = _write(tmp_path, NET_FILE)
    a = run_json("bias", path)
    b = run_json("bias", path, "--re", "2k")
    assert a["ic"] == pytest.approx(1.28633e-3, rel=1e-5)
    assert b["ic"] < a["ic"]


def test_bias_saturation_and_cutoff_are_results(run_json):
    sat = run_json("bias", "--network", "fixed", "--vcc", "12", "--rb", "100k", "--rc", "10k", "--beta", "100")
    assert sat["region"] == "saturation" and sat["vce"] == pytest.approx(0.3)
    cut = run_json("bias", "--network", "divider", "--vcc", "12", "--r1", "100k", "--r2", "5k", "--rc", "1k",
                   "--beta", "100")
    assert cut["region"] == "cutoff" and cut["ic"] == 0


def test_bias_pnp_mirror(run_json):
    # Convention of this project: the pnp network is the npn one with every voltage and current negated.
    n = run_json("bias", *DIVIDER)
    p = run_json("bias", *DIVIDER, "--device", "pnp")
    for k in ("ic", "ib", "vb", "vc", "vce"):
        assert p[k] == pytest.approx(-n[k])
    assert p["power"] == pytest.approx(n["power"])


def test_bias_temperature_moves_the_point(run_json):
    # VBE(on) falls 2 mV/K (common practice, no source): 0.7 V at 300 K -> 0.6 V at 350 K.
    d = run_json("bias", *DIVIDER, "--temp", "350K")
    assert d["vbe"] == pytest.approx(0.6)
    assert d["beta"] == pytest.approx(100 * 1.005 ** 50)
    assert d["ic"] > 1.28633e-3


def test_bias_tolerance_range(run_json):
    d = run_json("bias", *DIVIDER, "--tol", "5")
    lo, hi = d["tolerance"]["ic"]
    assert lo < d["ic"] < hi and d["tolerance"]["tol"] == 5


def test_bias_warnings_on_stderr(run):
    code, out, err = run("bias", *DIVIDER, "--pmax", "5mW", "--vceo", "6V", "--json")
    assert code == 0
    d = json.loads(out)
    lines = err.strip().splitlines()
    assert len(lines) == 2 and all(line.startswith("devmodels: warning: ") for line in lines)
    assert "burn" in err and len(d["warnings"]) == 2


def test_model_from_network_file_equals_explicit_bias_point(run_json, tmp_path):
    path = _write(tmp_path, NET_FILE)
    op = operating_point(BiasNetwork("divider", 12.0, rc=2.2e3, re=1e3, r1=47e3, r2=10e3), 100.0)
    chained = run_json("model", path)
    explicit = run_json("model", "--ic", repr(op.ic), "--vce", repr(op.vce), "--beta", "100", "--va", "80V")
    for k in ("gm", "r_pi", "ro"):
        assert chained[k] == pytest.approx(explicit[k], rel=1e-12)


@pytest.mark.parametrize("cmd", [["params", "-f", "1MHz"], ["gain", "-f", "1kHz"], ["compare"],
                                 ["sweep", "--points", "3"]])
def test_every_bias_point_command_takes_the_network(run, cmd):
    code, out, err = run(cmd[0], EXAMPLE, *cmd[1:], "--json")
    assert code == 0, err
    assert json.loads(out)


def test_gain_from_network_equals_explicit(run_json, tmp_path):
    path = _write(tmp_path, NET_FILE)
    op = operating_point(BiasNetwork("divider", 12.0, rc=2.2e3, re=1e3, r1=47e3, r2=10e3), 100.0)
    # --bare: the bare transistor at the solved point (without it, the network is in the AC circuit)
    a = run_json("params", path, "-f", "1MHz", "--kind", "s", "--bare")
    b = run_json("params", "--ic", repr(op.ic), "--vce", repr(op.vce), "--beta", "100", "--va", "80V",
                 "-f", "1MHz", "--kind", "s")
    assert a == b


def test_spread_json_and_reproducible(run_json):
    args = ("spread", EXAMPLE, "--samples", "3000", "--seed", "7")
    a, b = run_json(*args), run_json(*args)
    assert a == b and a["samples"] == 3000 and a["seed"] == 7
    for name in ("av", "avs", "zin", "zout", "gt_db", "ic", "vce"):
        assert set(a[name]) == {"min", "p5", "p50", "p95", "max", "worst_min", "worst_max", "worst_min_at",
                                "worst_max_at", "method"}
        assert a[name]["min"] <= a[name]["p50"] <= a[name]["max"]
        assert set(a[name]["worst_max_at"]) >= {"beta", "temp"}
    assert set(a["corners"]) == {"min", "max", "nominal"}
    for key in ("samples", "seed", "regions", "ranges", "warnings", "config", "freq", "rs", "rl", "network", "plot"):
        assert key in a
    assert "yield" not in a  # only with --spec


BUILT = Path(__file__).resolve().parents[1] / "bias_examples" / "ce_stage_built.toml"


@pytest.mark.parametrize("config", ["ce", "cb", "cc"])
@pytest.mark.parametrize("freq", ["10kHz", "5Hz"])  # inside the band, and below it (the capacitors matter)
def test_spread_of_the_stage_as_built_equals_gain(run, run_json, tmp_path, config, freq):
    # The example stage (divider, re partly bypassed, coupling capacitors) with every limit at its
    # nominal value: spread analyses the same circuit as gain (whose numbers are checked against hand
    # formulas in tests/test_stagenetwork.py), and it no longer warns that it does not.
    path = _write(tmp_path, "\n".join(line for line in BUILT.read_text().splitlines()
                                      if not line.startswith("tol ")), "built.toml")
    common = ("--rs", "600", "--rl", "10k", "--freq", freq, "-c", config)
    for bare in ((), ("--bare",)):  # --bare: the transistor alone at the network's point, in both
        g = run_json("gain", path, *common, *bare)["points"][0]
        code, out, err = run("spread", path, *common, *bare, "-n", "20", "--seed", "3", "--json")
        assert code == 0 and err == "", err
        d = json.loads(out)
        for name in ("av", "avs", "ai", "zin", "zout", "gt_db", "k"):
            want = g[name] if name in ("gt_db", "k") else abs(complex(*g[name]))
            for q in ("min", "max", "worst_min", "worst_max"):
                assert d[name][q] == pytest.approx(want, rel=1e-9, abs=1e-12), (name, q, bare)


def test_spread_of_the_example_stage_draws_the_two_parts_of_re(run_json):
    d = run_json("spread", str(BUILT), "--rs", "600", "--rl", "10k", "--freq", "10kHz", "-n", "2000", "--seed",
                 "1")
    assert set(d["av"]["worst_max_at"]) == {"beta", "temp", "r1", "r2", "rc", "re_unbypassed", "re_bypassed"}
    # |av| about (RC || RL) / (220 ohm + 1/gm), 14 to 16 over 5 % parts, not the bare transistor's ~375
    assert 12 < d["av"]["worst_min"] <= d["av"]["min"] < d["av"]["max"] <= d["av"]["worst_max"] < 18
    assert not any("rdeg and rfb only" in w for w in d["warnings"])


def test_spread_without_network(run_json):
    d = run_json("spread", "--ic", "1mA", "--vce", "5V", "--beta-min", "100", "--beta-max", "300",
                 "--seed", "1", "-n", "500")
    # ic fixed; CE input impedance r_pi = beta VT / IC (Sedra and Smith, from memory)
    assert d["ic"]["min"] == d["ic"]["max"] == pytest.approx(1e-3)
    vt = dm.thermal_voltage(300.0)
    assert 100 * vt / 1e-3 <= d["zin"]["min"] <= d["zin"]["max"] <= 300 * vt / 1e-3 * (1 + 1e-12)


def test_spread_table_and_plot(run, tmp_path):
    png = tmp_path / "h.png"
    code, out, err = run("spread", EXAMPLE, "-n", "2000", "--seed", "1", "--plot", str(png))
    assert code == 0, err
    assert "worst min" in out and "worst max" in out and "p95" in out and "corner" not in out
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def test_spread_power_warning(run):
    code, out, err = run("spread", EXAMPLE, "-n", "500", "--seed", "1", "--pmax", "1mW", "--json")
    assert code == 0 and "devmodels: warning: power:" in err and "burn" in err
    json.loads(out)


BAD_NETWORKS = {
    "unknown_key": ('beta = 100\n[network]\ntype = "divider"\nvcc = 12\nr1 = "47k"\nr2 = "10k"\nr3 = 1\n', "net.toml"),
    "ic_and_network": ('beta = 100\nic = "1mA"\n[network]\ntype = "fixed"\nvcc = 12\nrb = "470k"\nrc = "2k"\n', "net.toml"),
    "saturated": ('beta = 100\n[network]\ntype = "fixed"\nvcc = 12\nrb = "100k"\nrc = "10k"\n', "net.toml"),
    "cutoff": ('beta = 100\n[network]\ntype = "divider"\nvcc = 12\nr1 = "100k"\nr2 = "5k"\nrc = "1k"\n', "net.toml"),
}


@pytest.mark.parametrize("args, name", [
    (["bias", "--vcc", "12", "--rb", "100k", "--beta", "100"], "network"),
    (["bias", "--network", "bridge", "--vcc", "12", "--beta", "100"], "network"),
    (["bias", "--network", "fixed", "--rb", "100k", "--beta", "100"], "vcc"),
    (["bias", "--network", "fixed", "--vcc", "12", "--beta", "100"], "rb"),
    (["bias", "--network", "fixed", "--vcc", "12", "--rb", "100k", "--r1", "1k", "--beta", "100"], "r1"),
    (["bias", "--network", "fixed", "--vcc", "12", "--rb", "-100k", "--beta", "100"], "rb"),
    (["bias", "--network", "fixed", "--vcc", "5mA", "--rb", "100k", "--beta", "100"], "vcc"),
    (["bias", "--network", "fixed", "--vcc", "12", "--rb", "100k"], "beta"),
    (["bias", *DIVIDER, "--tol", "-5"], "tol"),
    (["bias", *DIVIDER, "--device", "nmos"], "device"),
    (["bias", *DIVIDER, "--temp", "-300K"], "temp"),
    (["bias", *DIVIDER, "--pmax", "0"], "pmax"),
    (["bias", *DIVIDER, "--vcc", "-12"], "vcc"),
    (["bias", *DIVIDER, "--vce-sat", "20"], "vcc"),
    (["spread", EXAMPLE, "--beta-min", "300", "--beta-max", "100"], "beta_min"),
    (["spread", "--ic", "1mA", "--vce", "5", "--beta-min", "100"], "beta_max"),
    (["spread", EXAMPLE, "--beta-typ", "900"], "beta_typ"),
    (["spread", EXAMPLE, "--temp-min", "80C"], "temp_min"),
    (["spread", EXAMPLE, "--tol", "-1"], "tol"),
    (["spread", EXAMPLE, "--samples", "0"], "samples"),
    (["spread", EXAMPLE, "--samples", "1.5"], "samples"),
    (["spread", EXAMPLE, "--plot", "out.svg"], "plot"),
    (["spread", EXAMPLE, "--config", "cs"], "config"),
    (["spread", EXAMPLE, "--rl", "-5"], "rl"),
    (["spread", "--vce", "5", "--beta", "100"], "ic"),
    (["spread", "--ic", "1mA", "--vce", "5"], "beta_min"),
])
def test_cli_errors_are_one_line(run, args, name):
    assert_one_line_error(run, *args, prefix=f"{name}: ")


@pytest.mark.parametrize("case", sorted(BAD_NETWORKS))
@pytest.mark.parametrize("cmd", ["model", "params", "gain", "spread"])
def test_bad_network_files_are_one_line(run, tmp_path, case, cmd):
    text, fname = BAD_NETWORKS[case]
    path = _write(tmp_path, text, fname)
    if cmd == "spread" and case in ("saturated", "cutoff"):
        # spread counts samples outside the active region instead of failing: every sample lands
        # in that region, no small-signal result exists (null), and one warning says so.
        code, out, err = run(cmd, path, "-n", "200", "--seed", "3", "--json")
        assert code == 0, err
        d = json.loads(out)
        region = {"saturated": "saturation", "cutoff": "cutoff"}[case]
        assert d["regions"][region] == 200 and d["regions"]["active"] == 0
        assert all(d[k]["p50"] is None and d[k]["worst_min"] is None for k in ("av", "avs", "ai", "zin", "zout",
                                                                                "gt_db", "k"))
        assert d["ic"] is not None and (d["ic"]["max"] == 0) == (case == "cutoff")
        lines = err.strip().splitlines()
        said = {"saturated": "200 of 200 samples are in saturation", "cutoff": "and 200 in cutoff"}[case]
        assert len(lines) == 1 and lines[0].startswith("devmodels: warning: network: ") and said in lines[0]
        return
    code, out, err = run(cmd, path)
    assert code == 2, err
    assert len(err.strip().splitlines()) == 1 and "Traceback" not in err
    expected = {"unknown_key": "net.toml: unknown key", "ic_and_network": "devmodels: error: ic: ",
                "saturated": "devmodels: error: network: ", "cutoff": "devmodels: error: network: "}[case]
    assert expected in err


def test_spread_takes_complex_terminations(run_json):
    # As every command that terminates a stage: --rs 50+j10 (the library checks each sample
    # against analysis.terminate in tests/test_spread.py).
    d = run_json("spread", "--ic", "1mA", "--vce", "5", "--beta-min", "100", "--beta-max", "300",
                 "--rs", "50+j10", "--rl", "1k-j200", "--samples", "500", "--seed", "1")
    assert d["rs"] == [50.0, 10.0] and d["rl"] == [1000.0, -200.0]
    assert d["avs"]["min"] <= d["avs"]["p50"] <= d["avs"]["max"]


# --- worst case and yield through the command line -------------------------------------------------

STATS = ("min", "p5", "p50", "p95", "max")


@pytest.mark.parametrize("args", [
    (EXAMPLE,),
    (EXAMPLE, "--tol", "10", "--temp-min", "-40C", "--temp-max", "125C", "-c", "cc", "--rl", "200"),
    ("--ic", "1mA", "--vce", "5", "--beta-min", "50", "--beta-max", "400", "--rdeg", "220", "--tol", "5",
     "--ft", "300MHz", "--cmu", "2p", "-f", "10MHz", "-c", "cb"),
])
def test_every_sample_lies_inside_the_worst_case(run_json, args):
    d = run_json("spread", *args, "-n", "400", "--seed", "5")
    checked = 0
    for name, entry in d.items():
        if not isinstance(entry, dict) or "worst_min" not in entry or entry["p50"] is None:
            continue
        lo, hi = entry["worst_min"], entry["worst_max"]
        slack = 1e-9 * max(abs(lo), abs(hi))
        vals = [entry[q] for q in STATS]
        assert vals == sorted(vals), (name, vals)
        assert lo - slack <= entry["min"] and entry["max"] <= hi + slack, (name, lo, entry["min"], entry["max"], hi)
        assert entry["method"] in ("vertices", "vertices+search")
        checked += 1
    assert checked >= 9
    assert not any(w.startswith("worst case:") for w in d["warnings"])


def _fixed_base_file(tmp_path):
    return _write(tmp_path, 'beta_min = 100\nbeta_max = 300\nvbe = 0.7\n[network]\ntype = "fixed"\nvcc = 12\n'
                            'rb = "1M"\nrc = "1k"\n', "fixed.toml")


def test_yield_against_the_closed_form_of_a_fixed_base_network(run_json, tmp_path):
    # Fixed base bias at the reference temperature: IB = (VCC - VBE) / RB for every part, IC = beta IB,
    # beta uniform on [a, b] = [100, 300]. The spec IC >= t holds where beta >= t' = t RB / (VCC - VBE).
    # Closed form of the fraction: (b - t') / (b - a).
    a, b, vcc, vbe, rb = 100.0, 300.0, 12.0, 0.7, 1e6
    t = 2e-3
    t_prime = t * rb / (vcc - vbe)
    closed_form = (b - t_prime) / (b - a)
    n = 40000
    d = run_json("spread", _fixed_base_file(tmp_path), "--spec", "ic>=2mA", "-n", str(n), "--seed", "3")
    y = d["yield"]
    assert set(y) >= {"fraction", "ci95", "specs", "worst_case_pass"}
    assert y["specs"] == ["ic>=0.002"]
    sigma = math.sqrt(closed_form * (1 - closed_form) / n)
    assert abs(y["fraction"] - closed_form) < 4 * sigma
    lo, hi = y["ci95"]
    assert lo < y["fraction"] < hi and hi - lo == pytest.approx(2 * 1.96 * sigma, rel=0.05)
    # the worst IC (beta = 100) is 1.13 mA: the spec fails over the box; 1 mA holds everywhere
    assert y["worst_case_pass"] is False and y["most_failed"] == "ic>=0.002"
    assert d["ic"]["worst_min"] == pytest.approx(a * (vcc - vbe) / rb, rel=1e-12)
    e = run_json("spread", _fixed_base_file(tmp_path), "--spec", "ic>=1mA", "--spec", "vce>=8V", "-n", "500",
                 "--seed", "3")["yield"]
    assert e["fraction"] == 1.0 and e["worst_case_pass"] is True and e["ci95"][1] == 1.0


def test_yield_line_in_the_table(run, tmp_path):
    code, out, err = run("spread", _fixed_base_file(tmp_path), "--spec", "ic>=2mA", "-n", "2000", "--seed", "3")
    assert code == 0, err
    text = " ".join(out.split())
    assert "Yield:" in text and "95 % interval" in text and "fails most often: ic>=0.002" in text
    assert "Worst case over the limits: fails." in text


@pytest.mark.parametrize("spec, start", [
    ("gain>=40", "spec: 'gain' is not a result"),
    ("gm>=1m", "spec: 'gm' is not a result"),      # a FET result, not one of a bipolar spread
    ("av=>40", "spec: "),
    ("av>=", "spec"),
    ("av 40", "spec: "),
    ("zin>=5V", "spec zin: "),
    ("", "spec: "),
])
def test_bad_specs_are_one_line(run, spec, start):
    assert_one_line_error(run, "spread", EXAMPLE, "-n", "100", "--seed", "1", "--spec", spec, prefix=start)


# --- FETs ---------------------------------------------------------------------------------------

JFET = ["--device", "njfet", "--id", "1mA", "--vds", "5", "--cgs", "3p", "--cgd", "1p", "-f", "1MHz", "--rl", "5k"]


@pytest.mark.parametrize("device, fixed, collapsed", [
    ("njfet", ["--idss", "8mA", "--vp", "-2"], ["--idss-min", "8mA", "--idss-max", "8mA", "--vp-min", "-2",
                                               "--vp-max", "-2"]),
    ("pjfet", ["--idss", "8mA", "--vp", "2"], ["--idss-min", "8m", "--idss-max", "8m", "--vp-min", "2",
                                              "--vp-max", "2"]),
    ("nmos", ["--kn", "4m"], ["--kn-min", "4m", "--kn-max", "4m"]),
    ("nmos", ["--vov", "0.4"], ["--vov-min", "400mV", "--vov-max", "0.4V"]),
])
def test_fet_spread_with_collapsed_limits_matches_gain(run_json, device, fixed, collapsed):
    base = ["--device", device] + JFET[2:] + ["--lambda", "0.02"]
    g = run_json("gain", *base, *fixed, "-c", "cs")["points"][0]
    for limits in (collapsed, fixed):  # the limits, or the fixed values as collapsed limits
        d = run_json("spread", *base, *limits, "-n", "50", "--seed", "2")
        assert d["config"] == "cs" and d["device"] == device and d["network"] is None
        for name in ("av", "avs", "zin", "zout", "gt_db"):
            want = g[name] if name == "gt_db" else abs(complex(*g[name]))
            for q in STATS + ("worst_min", "worst_max"):
                assert d[name][q] == pytest.approx(want, rel=1e-9), (name, q)
        assert d["ro"]["p50"] == pytest.approx(1 / (0.02 * 1e-3), rel=1e-12)


FET_BUILT = """
device = "njfet"
id = "1mA"
vds = "5V"
idss = "8mA"
vp = "-2V"
cgs = "3pF"
cgd = "1pF"
lambda = 0.02
[network]
rg1 = "1M"
rg2 = "470k"
rd = "4.7k"
rsrc = "1k"
rsrc_bypassed = "800"
c_bypass = "10uF"
c_in = "100nF"
c_out = "1uF"
"""


@pytest.mark.parametrize("config", ["cs", "cg", "cd"])
def test_fet_spread_of_the_stage_as_built_equals_gain(run_json, tmp_path, config):
    # A FET [network] table is in the spread's AC analysis as in gain's (ID and VDS fixed); with the
    # limits collapsed every statistic is gain's number.  With a tolerance the network's resistors
    # are limits under the FET's own key names.
    path = _write(tmp_path, FET_BUILT, "fet.toml")
    common = ("--rs", "1k", "--rl", "10k", "-f", "50Hz", "-c", config)
    g = run_json("gain", path, *common)["points"][0]
    d = run_json("spread", path, *common, "-n", "20", "--seed", "2")
    assert d["network"] == "divider"
    for name in ("av", "avs", "zin", "zout", "gt_db"):
        want = g[name] if name == "gt_db" else abs(complex(*g[name]))
        for q in STATS + ("worst_min", "worst_max"):
            assert d[name][q] == pytest.approx(want, rel=1e-9), (name, q)
    t = run_json("spread", path, *common, "-n", "200", "--seed", "2", "--tol", "5")
    assert set(t["av"]["worst_max_at"]) == {"idss", "vp", "lambda", "rg1", "rg2", "rd", "rsrc_unbypassed",
                                           "rsrc_bypassed"}
    assert t["av"]["worst_min"] < abs(complex(*g["av"])) < t["av"]["worst_max"]


def test_jfet_spread_limits_worst_case_and_yield(run_json, run):
    args = ["spread", *JFET, "--idss-min", "4mA", "--idss-max", "12mA", "--vp-min", "-1", "--vp-max", "-3",
            "--lambda-min", "0.01", "--lambda-max", "0.02", "--rdeg", "100", "--tol", "5", "-n", "2000",
            "--seed", "4", "--spec", "gm>=2mS", "--spec", "ro>=60k"]
    d = run_json(*args)
    # gm = (2/|VP|) sqrt(ID IDSS): extremes at the corners of idss and vp
    assert d["gm"]["worst_max"] == pytest.approx(2 / 1.0 * math.sqrt(1e-3 * 12e-3), rel=1e-12)
    assert d["gm"]["worst_min"] == pytest.approx(2 / 3.0 * math.sqrt(1e-3 * 4e-3), rel=1e-12)
    assert d["gm"]["worst_max_at"]["idss"] == "high" and d["gm"]["worst_max_at"]["vp"] == "low"
    for name in ("av", "gm", "ro", "zout"):
        e = d[name]
        assert e["worst_min"] <= e["min"] <= e["p5"] <= e["p95"] <= e["max"] <= e["worst_max"] * (1 + 1e-12)
    assert d["ranges"] == {"idss_min": 4e-3, "idss_max": 12e-3, "vp_min": 1.0, "vp_max": 3.0, "lambda_min": 0.01,
                           "lambda_max": 0.02, "tol": pytest.approx(5.0), "ctol": 0.0}
    assert d["yield"]["specs"] == ["gm>=0.002", "ro>=60000"] and d["yield"]["worst_case_pass"] is False
    assert 0 < d["yield"]["fraction"] < 1
    code, out, err = run(*args)
    assert code == 0 and "gm" in out and "worst min" in out and "Yield:" in " ".join(out.split())


def test_fet_spread_plot(run, tmp_path):
    png = tmp_path / "f.png"
    code, out, err = run("spread", *JFET, "--idss-min", "4mA", "--idss-max", "12mA", "--vp-min", "1",
                         "--vp-max", "3", "-n", "500", "--seed", "1", "--plot", str(png))
    assert code == 0, err
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


@pytest.mark.parametrize("args, prefix", [
    (JFET + ["--idss-min", "4mA", "--idss-max", "12mA"], "vp_min: missing"),
    (JFET + ["--idss-min", "4mA", "--vp-min", "1", "--vp-max", "3"], "idss_max: missing"),
    (JFET + ["--idss-min", "4mA", "--idss-max", "12mA", "--vp", "2", "--kn-min", "1m", "--kn-max", "2m"], "kn_min: "),
    (JFET + ["--idss-min", "0.5mA", "--idss-max", "12mA", "--vp", "2"], "id: "),
    (JFET + ["--idss-min", "12mA", "--idss-max", "4mA", "--vp", "2"], "idss_min: "),
    (JFET + ["--idss-min", "4mA", "--idss-max", "12mA", "--vp-min", "1", "--vp-max", "3", "--beta-min", "50",
             "--beta-max", "100"], "beta_min: "),
    (JFET + ["--idss-min", "4mA", "--idss-max", "12mA", "--vp-min", "1", "--vp-max", "3V", "--vds", "1"], "vds: "),
    (JFET + ["--idss-min", "4V", "--idss-max", "12mA", "--vp", "2"], "idss_min: "),
    (JFET + ["--idss", "8mA", "--vp", "2", "-c", "ce"], "config: "),
    (["--device", "nmos", "--id", "1mA", "--vds", "5"], "kn_min: missing"),
    (["--device", "nmos", "--id", "1mA", "--vds", "5", "--kn", "4m", "--vov-min", "0.2", "--vov-max", "0.3"],
     "kn_min: "),
    (["--device", "pmos", "--id", "1mA", "--vds", "5", "--idss-min", "1mA", "--idss-max", "2mA"], "idss_min: "),
    (["--device", "nmos", "--vds", "5", "--kn", "4m"], "id: missing"),
    (["--ic", "1mA", "--vce", "5", "--beta-min", "80", "--beta-max", "200", "--idss-min", "1mA"], "idss_min: a FET"),
    (["--ic", "1mA", "--vce", "5", "--beta-min", "80", "--beta-max", "200", "--id", "1mA"], "id: "),
    (JFET + ["--idss", "8mA", "--vp", "2", "--spec", "ic>=1mA"], "spec: 'ic' is not a result"),
])
def test_fet_spread_errors_are_one_line(run, args, prefix):
    assert_one_line_error(run, "spread", *args, "-n", "100", "--seed", "1", prefix=prefix)


def test_fet_spread_power_rating(run):
    # ID VDS is the same for every sample: 10 mA * 10 V = 100 mW against pmax = 50 mW
    code, out, err = run("spread", "--device", "njfet", "--id", "10mA", "--vds", "10", "--idss", "20mA", "--vp", "2",
                         "--pmax", "50mW", "-n", "100", "--seed", "1", "--json")
    assert code == 0 and err.startswith("devmodels: warning: power:") and "100 mW" in err
    json.loads(out)
    code, out, err = run("spread", "--device", "njfet", "--id", "10mA", "--vds", "10", "--idss", "20mA", "--vp", "2",
                         "--pmax", "200mW", "-n", "100", "--seed", "1", "--json")
    assert code == 0 and err == ""


def test_plot_keeps_the_values_above_the_streaming_limit(run, monkeypatch, tmp_path):
    # Above KEEP_VALUES_MAX samples the values are streamed (bounded memory) unless --plot needs them.
    import devmodels.spread as spread_mod

    monkeypatch.setattr(spread_mod, "KEEP_VALUES_MAX", 100)
    args = ("spread", EXAMPLE, "-n", "500", "--seed", "2", "--json")
    code, out, err = run(*args)
    assert code == 0 and json.loads(out)["stats_accuracy"]["method"] == "streaming"
    png = tmp_path / "k.png"
    code, out, err = run(*args, "--plot", str(png))
    assert code == 0, err
    assert json.loads(out)["stats_accuracy"]["method"] == "exact" and png.stat().st_size > 0


# --- the [spec] table and the noise figure in spread ---------------------------------------------
QUIET_SPEC = str(Path(__file__).resolve().parents[1] / "bias_examples" / "quiet_input_spread.toml")
QUIET = str(Path(__file__).resolve().parents[1] / "bias_examples" / "quiet_audio_input.toml")


def test_spec_table_of_the_example_file_gives_the_yield(run_json):
    d = run_json("spread", QUIET_SPEC, "--rs", "2k", "--rl", "10k", "-n", "3000", "--seed", "1")
    y = d["yield"]
    assert y["specs"] == ["av>=42", "zin>=40000", "nf_db<=0.85", "ic>=0.00014", "ic<=0.00016"]
    assert 0.0 < y["fraction"] < 1.0 and y["ci95"][0] <= y["fraction"] <= y["ci95"][1]
    # a spec on nf_db turns the noise figure on: its statistics and worst case are reported
    for name in ("nf_db", "nfmin_db"):
        assert d[name]["min"] <= d[name]["p50"] <= d[name]["max"]
        assert d[name]["worst_min"] <= d[name]["min"] and d[name]["max"] <= d[name]["worst_max"]
    # the worst-case verdict against the extremes (worstcase.worst_case_pass's rule)
    meets = (d["av"]["worst_min"] >= 42 and d["zin"]["worst_min"] >= 40e3 and d["nf_db"]["worst_max"] <= 0.85)
    assert y["worst_case_pass"] is meets


def test_spec_options_add_to_the_table_or_replace_its_limit(run_json):
    d = run_json("spread", QUIET_SPEC, "--rs", "2k", "--rl", "10k", "-n", "500", "--seed", "1",
                 "--spec", "av>=40", "--spec", "zin<=200k", "--spec", "nf_db<1dB")
    # av's and nf_db's limits replaced (same direction), zin gains an upper limit
    assert d["yield"]["specs"] == ["zin>=40000", "ic>=0.00014", "ic<=0.00016", "av>=40", "zin<=200000", "nf_db<1"]


def test_collapsed_noise_spread_equals_the_noise_command(run_json):
    # every limit fixed (beta, temperature, no tolerance): each sample is the file's bias point,
    # and its NF and NFmin are those of the `noise` command at the same source and frequency
    args = (QUIET, "--rs", "2k", "--freq", "10kHz")
    d = run_json("spread", *args, "--noise", "-n", "20", "--seed", "1")
    ref = run_json("noise", *args)["points"][0]
    for name in ("nf_db", "nfmin_db"):
        assert d[name]["min"] == pytest.approx(ref[name], rel=1e-9, abs=0)
        assert d[name]["max"] == pytest.approx(ref[name], rel=1e-9, abs=0)
    assert d["noise"] is True
    plain = run_json("spread", *args, "-n", "20", "--seed", "1")
    assert "nf_db" not in plain and "nfmin_db" not in plain and plain["noise"] is False  # only when asked


@pytest.mark.parametrize("body, start", [
    ('gain = ">=40"', "spec.gain: 'gain' is not a result"),
    ('av = "=>40"', "spec.av: "),
    ('av = ">=forty"', "spec.av: "),
    ('av = "av>=40"', "spec.av: expected a comparison"),
    ('av = 40', None),
    ('gm = ">=1m"', "spec.gm: 'gm' is not a result"),  # a FET result, not one of a bipolar spread
])
def test_bad_spec_table_is_one_line_naming_the_key(run, tmp_path, body, start):
    f = _write(tmp_path, f'ic = "1mA"\nvce = "5V"\nbeta_min = 100\nbeta_max = 200\n[spec]\n{body}\n', "s.toml")
    line = assert_one_line_error(run, "spread", f, "-n", "100", "--seed", "1", prefix=start)
    assert "spec." in line


def test_noise_spread_needs_a_source_with_a_real_part(run):
    assert_one_line_error(run, "spread", QUIET, "--noise", "--rs", "0", "-n", "10", prefix="rs: the noise figure")
    assert_one_line_error(run, "spread", QUIET_SPEC, "--rs", "j50", "-n", "10", prefix="rs: the noise figure")


def test_noise_spread_table_and_plot(run, tmp_path):
    png = tmp_path / "nf.png"
    code, out, err = run("spread", QUIET_SPEC, "--rs", "2k", "--rl", "10k", "-n", "1000", "--seed", "1",
                         "--plot", str(png))
    assert code == 0, err
    assert "NFmin" in out and "Yield:" in out and "nf_db<=0.85" in out
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def test_spread_capacitor_tolerance_worst_case_is_gain_at_that_corner(run_json, tmp_path):
    """``--ctol``: with the resistors and beta fixed, the worst |av| at 20 Hz (below the band,
    where the capacitors set the gain) is reached with every capacitor at an end of its
    tolerance, and equals ``gain`` on the same file with the capacitors moved to that corner
    (both from the same netlist engine: a check that the option reaches the capacitors, and
    that the corner reported is the one that gives the value)."""
    src = Path(__file__).resolve().parent.parent / "bias_examples" / "ce_stage_built.toml"
    args = ("--rs", "600", "--rl", "10k", "--freq", "20Hz")
    d = run_json("spread", str(src), *args, "--tol", "0", "--ctol", "20", "-n", "400", "--seed", "5")
    assert d["ranges"]["ctol"] == 20.0
    nominal = {"c_in": 4.7e-6, "c_out": 10e-6, "c_bypass": 100e-6}
    for side, key in (("worst_min", "worst_min_at"), ("worst_max", "worst_max_at")):
        at = d["av"][key]
        assert set(nominal) <= set(at)
        text = src.read_text()
        for name, c in nominal.items():
            factor = {"low": 0.8, "high": 1.2}[at[name]] if isinstance(at[name], str) else at[name] / c
            old = {"c_in": 'c_in = "4.7uF"', "c_out": 'c_out = "10uF"', "c_bypass": 'c_bypass = "100uF"'}[name]
            assert old in text
            text = text.replace(old, f'{name} = {c * factor!r}')
        corner = tmp_path / f"{side}.toml"
        corner.write_text(text)
        p = run_json("gain", str(corner), *args)["points"][0]
        av = math.hypot(*p["av"])
        assert d["av"][side] == pytest.approx(av, rel=1e-9, abs=0)
    # the capacitors matter here: the spread of |av| is wide, and every sample lies inside
    assert d["av"]["worst_max"] / d["av"]["worst_min"] > 1.05
    assert d["av"]["worst_min"] <= d["av"]["min"] <= d["av"]["max"] <= d["av"]["worst_max"]


def test_spread_sample_limits(run, tmp_path):
    """Without --plot the values are streamed (memory flat in the count): the limit is the fixed
    MAX_STREAMED_SAMPLES; --plot keeps every sample, so its limit is MAX_SAMPLES (memory)."""
    from devmodels.schema import MAX_SAMPLES, MAX_STREAMED_SAMPLES

    assert MAX_STREAMED_SAMPLES >= 100_000_000 and MAX_STREAMED_SAMPLES >= MAX_SAMPLES
    base = ("spread", "--ic", "1mA", "--vce", "5", "--beta", "100", "--beta-min", "50", "--beta-max", "150")
    assert_one_line_error(run, *base, "-n", str(MAX_STREAMED_SAMPLES + 1), prefix="samples:")
    assert_one_line_error(run, *base, "-n", str(MAX_SAMPLES + 1), "--plot", str(tmp_path / "h.png"),
                          prefix="samples:")


def test_spread_plot_draws_the_specification_limits(run, tmp_path, monkeypatch):
    """Each specification limit is a vertical line in the panel of its result, at its value (in
    the panel's unit: zin in kohm, ic in mA)."""
    import devmodels.plotting as plotting

    figs = []
    real = plotting.save_figure

    def keep(fig, path, **kw):
        figs.append(fig)
        return real(fig, path, **kw)

    monkeypatch.setattr(plotting, "save_figure", keep)
    src = Path(__file__).resolve().parent.parent / "bias_examples" / "quiet_input_spread.toml"
    code, _, err = run("spread", str(src), "--rs", "2k", "--rl", "10k", "-n", "2000", "--seed", "1",
                       "--plot", str(tmp_path / "h.png"))
    assert code == 0, err
    (fig,) = figs
    drawn = {}
    for ax in fig.axes:
        xs = sorted(round(float(line.get_xdata()[0]), 9) for line in ax.get_lines()
                    if line.get_color() == "#55a868")
        if xs:
            drawn[ax.get_xlabel()] = xs
    # the file's [spec]: av >= 42, zin >= 40k, nf_db <= 0.85 dB, 140 uA <= ic <= 160 uA
    assert drawn == {"|av| = |V2/V1|": [42.0], "|Zin| (kΩ)": [40.0], "NF at Rs (dB)": [0.85],
                     "IC (mA)": [0.14, 0.16]}

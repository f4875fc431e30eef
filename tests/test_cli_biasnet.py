"""Command line: bias, spread, bias files with a [network] table, and every error path."""

from __future__ import annotations

import json
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
    a = run_json("params", path, "-f", "1MHz", "--kind", "s", "--bare")
    b = run_json("params", "--ic", repr(op.ic), "--vce", repr(op.vce), "--beta", "100", "--va", "80V",
                 "-f", "1MHz", "--kind", "s")
    assert a == b


def test_spread_json_and_reproducible(run_json):
    args = ("spread", EXAMPLE, "--samples", "3000", "--seed", "7")
    a, b = run_json(*args), run_json(*args)
    assert a == b and a["samples"] == 3000 and a["seed"] == 7
    for name in ("av", "avs", "zin", "zout", "gt_db", "ic", "vce"):
        assert set(a[name]) == {"min", "p5", "p50", "p95", "max"}
        assert a[name]["min"] <= a[name]["p50"] <= a[name]["max"]
    assert set(a["corners"]) == {"min", "max", "nominal"}


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
    assert "corner min" in out and "p95" in out
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
        assert all(d[k] is None for k in ("av", "avs", "ai", "zin", "zout", "gt_db", "k"))
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

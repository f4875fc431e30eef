"""devmodels noise: the library's numbers, closed forms of the classic approximations, bad input."""

from __future__ import annotations

import dataclasses
import json
import math
from pathlib import Path

import numpy as np
import pytest
import typer.main

from devmodels.cli import app, main
from devmodels.cli.inputs import Inputs
from devmodels.constants import BOLTZMANN, ELEMENTARY_CHARGE
from devmodels.noise import T0, noise_parameters, stage_noise

from conftest import assert_one_line_error, check_error_rule, NAN_INF

EXAMPLES = Path(__file__).resolve().parent.parent / "bias_examples"
AUDIO = EXAMPLES / "quiet_audio_input.toml"
FET_FILES = sorted((EXAMPLES / "fet").glob("*.toml"))
KEYS = ["freq", "nf_db", "nfmin_db", "rn", "yopt", "zopt", "gamma_opt", "te", "en", "in", "correlation"]


def _library_points(path: Path, config: str, freq, zs, z0=50.0, **model_changes):
    stage = Inputs(path, {}).stage(config)
    if model_changes:
        stage = dataclasses.replace(stage, model=dataclasses.replace(stage.model, **model_changes))
    return noise_parameters(stage_noise(stage, np.asarray(freq, dtype=float)), zs=zs, z0=z0).as_points()


def _same(a, b, rel=1e-12):
    """JSON values equal: numbers to ``rel`` (the JSON round trip of a float is exact), None as None."""
    if isinstance(b, list):
        assert isinstance(a, list) and len(a) == len(b)
        for x, y in zip(a, b):
            _same(x, y, rel)
    elif b is None:
        assert a is None
    else:
        assert a == pytest.approx(b, rel=rel, abs=0.0)


# --- the library's numbers -------------------------------------------------------------------
@pytest.mark.parametrize("config", ["ce", "cb", "cc"])
def test_bipolar_file_equals_library(run_json, config):
    got = run_json("noise", str(AUDIO), "-c", config, "--rs", "2.2k", "-f", "10", "-f", "1kHz,1MHz", "-f", "50MHz")
    want = _library_points(AUDIO, config, [10, 1e3, 1e6, 50e6], 2200.0)
    assert got["config"] == config and got["rs"] == [2200.0, 0.0] and got["t0"] == 290.0
    assert len(got["points"]) == 4
    for p, q in zip(got["points"], want):
        assert list(p) == KEYS
        for k in KEYS:
            _same(p[k], q[k])


@pytest.mark.parametrize("path", FET_FILES, ids=lambda p: p.stem)
def test_fet_files_equal_library(run_json, path):
    got = run_json("noise", str(path), "--rs", "50+j20", "-f", "100MHz", "-f", "1GHz", "--z0", "75")
    want = _library_points(path, "cs", [1e8, 1e9], 50 + 20j, 75.0)
    for p, q in zip(got["points"], want):
        for k in KEYS:
            _same(p[k], q[k])


def test_noise_options_reach_the_model(run_json):
    fet = EXAMPLES / "fet" / "nmos_lna_input.toml"
    got = run_json("noise", str(fet), "-f", "1MHz", "--gamma-n", "1.3", "--flicker-corner", "200kHz")
    want = _library_points(fet, "cs", [1e6], 50.0, gamma_n=1.3, flicker_corner=2e5)
    plain = run_json("noise", str(fet), "-f", "1MHz")
    for k in KEYS:
        _same(got["points"][0][k], want[0][k])
    assert got["points"][0]["nf_db"] > plain["points"][0]["nf_db"]
    got = run_json("noise", str(AUDIO), "-f", "100", "--rs", "10k", "--flicker-corner", "1kHz")
    want = _library_points(AUDIO, "ce", [100], 1e4, flicker_corner=1e3)
    for k in KEYS:
        _same(got["points"][0][k], want[0][k])


def test_default_frequency_is_1khz(run_json):
    got = run_json("noise", str(AUDIO))
    assert [p["freq"] for p in got["points"]] == [1000.0] and got["rs"] == [50.0, 0.0] and got["z0"] == 50.0


# --- closed forms ----------------------------------------------------------------------------
# --beta-tc 0: beta as given, also at 290 K (not moved from the reference temperature)
BJT = ["--ic", "1mA", "--vce", "5", "--beta", "{beta}", "--rb", "{rb}", "--temp", "290", "--beta-tc", "0"]


def _bjt(beta, rb):
    return [a.format(beta=beta, rb=rb) for a in BJT]


@pytest.mark.parametrize("rs", [100.0, 1e3, 10e3])
def test_ce_low_frequency_exact(run_json, rs):
    # Low-frequency CE stage, shot noise 2qIB and 2qIC, thermal noise of rb, no capacitances, ro
    # infinite; referring the collector shot current to the input through gm r_pi / (R + r_pi):
    # F = 1 + [4kT rb + 2q IB R^2 + 2q IC (R + r_pi)^2 / beta^2] / (4 k T0 Rs), R = Rs + rb
    # (Gray, Hurst, Lewis and Meyer, noise chapter; from memory). Device at T = T0 = 290 K.
    beta, rb, ic = 100.0, 100.0, 1e-3
    got = run_json("noise", *_bjt(beta, rb), "--rs", f"{rs:g}", "-f", "1kHz")["points"][0]
    kt = BOLTZMANN * 290.0
    gm = ic / (kt / ELEMENTARY_CHARGE)
    r_pi, ib, big_r = beta / gm, ic / beta, rs + rb
    q = ELEMENTARY_CHARGE
    f = 1 + (4 * kt * rb + 2 * q * ib * big_r ** 2 + 2 * q * ic * (big_r + r_pi) ** 2 / beta ** 2) / (4 * BOLTZMANN
                                                                                                      * T0 * rs)
    assert got["nf_db"] == pytest.approx(10 * math.log10(f), rel=1e-9)
    assert got["te"] == pytest.approx(T0 * (f - 1), rel=1e-9)
    # the usual approximation for beta >> 1 (same source, from memory):
    # F ~ 1 + rb/Rs + 1/(2 gm Rs) + gm (Rs + rb)^2 / (2 beta Rs); its neglected terms are of order
    # (Rs + rb)/(beta Rs) and 1/beta of the base term: within 1.5 % of F here (beta = 100)
    approx = 1 + rb / rs + 1 / (2 * gm * rs) + gm * big_r ** 2 / (2 * beta * rs)
    assert 10 ** (got["nf_db"] / 10) == pytest.approx(approx, rel=0.015)


def test_ce_minimum_noise_classic_form(run_json):
    # Fmin ~ 1 + sqrt(1 + 2 gm rb) / sqrt(beta), Rs,opt ~ sqrt(beta (1 + 2 gm rb)) / gm for beta >> 1
    # (Gray, Hurst, Lewis and Meyer, noise chapter; from memory); beta = 1000 leaves ~1/sqrt(beta)
    # relative terms out: 5 % on Fmin - 1, 5 % on Rs,opt.
    beta, rb, ic = 1000.0, 50.0, 1e-3
    got = run_json("noise", *_bjt(beta, rb), "-f", "1kHz")["points"][0]
    gm = ic / (BOLTZMANN * 290.0 / ELEMENTARY_CHARGE)
    fmin = 10 ** (got["nfmin_db"] / 10)
    assert fmin - 1 == pytest.approx(math.sqrt(1 + 2 * gm * rb) / math.sqrt(beta), rel=0.05)
    assert got["zopt"][0] == pytest.approx(math.sqrt(beta * (1 + 2 * gm * rb)) / gm, rel=0.05)
    assert abs(got["zopt"][1]) < 1e-3 * got["zopt"][0]


@pytest.mark.parametrize("freq,corner", [(1e3, 0.0), (1e3, 1e4), (1e6, 1e4)])
def test_cs_channel_noise_closed_form(run_json, freq, corner):
    # A MOSFET with only its channel noise 4 k T gamma_n gm (1 + fc/f) (no capacitances, rg = 0):
    # en^2 = 4kT gamma_n (1 + fc/f) / gm, in = 0, so F = 1 + gamma_n (1 + fc/f) / (gm Rs) at T = T0
    # (Lee, The Design of CMOS Radio-Frequency Integrated Circuits, noise chapter; from memory).
    # Yopt = 0: zopt does not exist (null), gamma_opt = 1, the correlation does not exist (null).
    args = ["--device", "nmos", "--id", "2mA", "--vds", "2", "--vov", "0.2", "--temp", "290", "--gamma-n", "1.5",
            "--rs", "1k", "-f", f"{freq:g}"]
    if corner:
        args += ["--flicker-corner", f"{corner:g}"]
    code, out, err = _run(args)
    assert code == 0, err
    p = json.loads(out)["points"][0]
    gm = 2 * 2e-3 / 0.2
    f = 1 + 1.5 * (1 + corner / freq) / (gm * 1e3)
    assert p["nf_db"] == pytest.approx(10 * math.log10(f), rel=1e-9)
    assert p["nfmin_db"] == pytest.approx(0.0, abs=1e-12)
    assert p["rn"] == pytest.approx(1.5 * (1 + corner / freq) / gm, rel=1e-9)
    assert p["yopt"] == [0.0, 0.0] and p["zopt"] == [None, None] and p["correlation"] == [None, None]
    assert p["gamma_opt"] == [1.0, 0.0]
    assert not NAN_INF.search(out)


def _run(args):
    import io
    import sys

    old = sys.stdout, sys.stderr
    sys.stdout, sys.stderr = io.StringIO(), io.StringIO()
    try:
        code = main(["noise", *args, "--json"])
        return code, sys.stdout.getvalue(), sys.stderr.getvalue()
    finally:
        sys.stdout, sys.stderr = old


# --- Touchstone noise block ------------------------------------------------------------------
def _noise_file(tmp_path, version="1.1"):
    from devmodels.noisefile import write_touchstone_noise

    stage = Inputs(EXAMPLES / "fet" / "nmos_lna_input.toml", {}).stage("cs")
    f = np.array([1e8, 5e8, 1e9, 2e9])
    res = noise_parameters(stage_noise(stage, f), zs=50.0)
    path = tmp_path / ("lna.s2p" if version == "1.1" else "lna.ts")
    write_touchstone_noise(stage.two_port(f, "s"), res, path, version)
    return path, res


@pytest.mark.parametrize("version", ["1.1", "2.0"])
def test_touchstone_noise_block(run_json, tmp_path, version):
    path, res = _noise_file(tmp_path, version)
    got = run_json("noise", "--touchstone", str(path), "--rs", "50")
    assert [p["freq"] for p in got["points"]] == pytest.approx(res.freq.tolist(), rel=1e-9)
    # the file holds the noise parameters with a few significant digits (writer's format)
    for p, nf, nfmin, rn in zip(got["points"], res.nf_db, res.nfmin_db, res.rn):
        assert p["nfmin_db"] == pytest.approx(nfmin, abs=1e-3)
        assert p["rn"] == pytest.approx(rn, rel=1e-3)
        assert p["nf_db"] == pytest.approx(nf, abs=2e-3)
    one = run_json("noise", "--touchstone", str(path), "-f", "1GHz")
    assert len(one["points"]) == 1 and one["points"][0]["nf_db"] == got["points"][2]["nf_db"]


def test_touchstone_bad_input(run, tmp_path):
    path, _ = _noise_file(tmp_path)
    assert_one_line_error(run, "noise", "--touchstone", str(path), "-f", "700MHz",
                          prefix="freq: 700 MHz is not a noise")
    assert_one_line_error(run, "noise", "--touchstone", str(path), "--gamma-n", "1", prefix="gamma-n:")
    assert_one_line_error(run, "noise", str(AUDIO), "--touchstone", str(path), prefix="touchstone:")
    plain = tmp_path / "plain.s2p"
    plain.write_text("# Hz S RI R 50\n1e6 0.5 0 0.01 0 5 0 0.5 0\n2e6 0.5 0 0.01 0 5 0 0.5 0\n")
    assert_one_line_error(run, "noise", "--touchstone", str(plain), prefix="touchstone:", match="no noise block")


# --- tables, help ----------------------------------------------------------------------------
def test_table(run):
    code, out, err = run("noise", str(AUDIO), "--rs", "2k", "-f", "1kHz", "-f", "10MHz")
    assert code == 0 and err == ""
    for text in ("NF at Rs", "NFmin", "Rn", "Zopt", "290 K", "1 kHz", "10 MHz", "en", "in"):
        assert text in out
    assert not NAN_INF.search(out)


def test_table_shows_missing_values_in_words(run):
    code, out, _ = run("noise", "--device", "nmos", "--id", "2mA", "--vds", "2", "--vov", "0.2", "--rs", "1k")
    assert code == 0 and "open" in out and not NAN_INF.search(out)


def test_help(run):
    code, out, _ = run("noise", "--help")
    assert code == 0
    text = " ".join(out.split())
    for unit in ("290 K", "HZ", "OHM", "Hz", "ohm"):
        assert unit in text
    assert "<bool>" not in out and "BOOLEAN" not in out


# --- bad input -------------------------------------------------------------------------------
BASE = [str(AUDIO), "-f", "1kHz"]
BAD = ["", "0", "-1", "1e308", "1e-308", "nan", "inf", "1,2=x;", "5V", "5A"]


def _noise_options():
    cmd = typer.main.get_command(app).commands["noise"]
    for p in cmd.params:
        if getattr(p, "is_flag", False) or not p.opts or not p.opts[0].startswith("--") or p.opts[0] == "--help":
            continue
        yield p.opts[0]


@pytest.mark.parametrize("opt", list(_noise_options()))
def test_bad_values_of_every_option(opt, capsys, tmp_path, monkeypatch):
    # the rule of tests/test_cli_badinput.py, for this command: exit 2 with one error line, or a clean run
    monkeypatch.chdir(tmp_path)
    fet = opt in ("--id", "--vds", "--vov", "--kn", "--lambda", "--gamma", "--vsb", "--two-phi-f", "--cgs", "--cgd",
                  "--csb", "--cdb", "--rg", "--idss", "--vp", "--gamma-n")
    base = [str(EXAMPLES / "fet" / "nmos_lna_input.toml"), "-f", "1MHz"] if fet else list(BASE)
    for value in BAD:
        args = ["noise", *base, opt, value]
        code = main(args)
        out, err = capsys.readouterr()
        check_error_rule(args, code, out, err)


@pytest.mark.parametrize("args,prefix", [
    (["--rs", "-5"], "rs: expected a passive impedance"),
    (["--rs", "0"], "rs: expected a source impedance with real part > 0"),
    (["--rs", "j50"], "rs: expected a source impedance with real part > 0"),
    (["--rs", "open"], "rs: an open source"),
    (["--z0", "50,75"], "z0: noise takes one reference resistance"),
    (["--gamma-n", "1"], "gamma-n: a FET option"),
    (["--gamma-n", "0"], "gamma-n:"),
    (["--flicker-corner", "-1"], "flicker-corner: expected a value >= 0 Hz"),
    (["--flicker-corner", "1k", "-f", "0"], "freq: 1/f noise"),
    (["-c", "cs"], "config:"),
    (["-c", "xx"], "config:"),
    (["-f", "-1"], "freq:"),
])
def test_bad_input_names_the_value(run, args, prefix):
    assert_one_line_error(run, "noise", str(AUDIO), *args, prefix=prefix)


def test_missing_bias_point(run):
    assert_one_line_error(run, "noise", prefix="bias point: missing")


# --- --ic-sweep: the collector current of least noise --------------------------------------------

SWEEP_BIAS = ["--beta", "120", "--rb", "40", "--va", "60V", "--temp", "300K"]


def test_ic_sweep_json_equals_the_library(run, tmp_path):
    from devmodels.noise import ce_low_noise

    plot = tmp_path / "nf_ic.png"
    code, out, err = run("noise", *SWEEP_BIAS, "--ic-sweep", "10uA:10mA:31", "--rs", "2.2k",
                         "--rs-list", "300,22k", "-f", "10kHz", "--plot", str(plot), "--json")
    assert code == 0, err
    d = json.loads(out)
    ic = np.geomspace(1e-5, 1e-2, 31)
    lib = ce_low_noise(ic, 120.0, 2.2e3, temp=300.0, rb=40.0, freq=1e4, va=60.0)
    assert d["config"] == "ce" and d["rs"] == 2.2e3 and len(d["points"]) == 31
    assert d["ic_opt"] == pytest.approx(lib["ic_best"], rel=1e-12, abs=0)
    assert d["nf_db"] == pytest.approx(lib["nf_db_at_ic_best"], rel=1e-12, abs=0) and d["at_edge"] is False
    for p, i_c, nf, r, nfr in zip(d["points"], ic, lib["nf_db"], lib["rs_opt"], lib["nf_db_at_rs_opt"]):
        assert p["ic"] == pytest.approx(i_c, rel=1e-12, abs=0)
        assert p["nf_db"] == pytest.approx(nf, rel=1e-12, abs=0)
        assert p["rs_opt"] == pytest.approx(r, rel=1e-12, abs=0)
        assert p["nf_db_at_rs_opt"] == pytest.approx(nfr, rel=1e-12, abs=0)
    assert [s["rs"] for s in d["sources"]] == [2.2e3, 300.0, 22e3]
    # a lower source resistance wants more current (the optimum moves as 1/Rs)
    opt = [s["ic_opt"] for s in d["sources"]]
    assert opt[1] > opt[0] > opt[2]
    for s in d["sources"]:
        curve = np.asarray(s["nf_db_curve"])
        assert s["nf_db"] <= curve.min() + 1e-12  # refined: no grid point is lower
    assert plot.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    code, out, err = run("noise", *SWEEP_BIAS, "--ic-sweep", "10uA:10mA:31", "--rs", "2.2k")
    assert code == 0 and "Collector current of least noise" in out and not NAN_INF.search(out)


def test_ic_sweep_optimum_at_the_end_is_flagged(run_json):
    d = run_json("noise", "--beta", "100", "--ic-sweep", "2mA:10mA:5", "--rs", "1k")
    assert d["at_edge"] is True and d["ic_opt"] == pytest.approx(2e-3, rel=1e-12, abs=0)


@pytest.mark.parametrize("args,name", [
    (["--beta", "100", "--ic-sweep", "1mA:10uA"], "ic-sweep:"),
    (["--beta", "100", "--ic-sweep", "1mA"], "ic-sweep:"),
    (["--beta", "100", "--ic-sweep", "10uA:1mA:2"], "ic-sweep:"),
    (["--beta", "100", "--ic-sweep", "10uA:1mA", "--rs", "50+j10"], "rs:"),
    (["--beta", "100", "--ic-sweep", "10uA:1mA", "--rs-list", "100,-5"], "rs-list:"),
    (["--beta", "100", "--ic-sweep", "10uA:1mA", "-f", "1kHz,2kHz"], "freq:"),
    (["--beta", "100", "--ic-sweep", "10uA:1mA", "--config", "cb"], "config:"),
    (["--beta", "100", "--ic-sweep", "10uA:1mA", "--plot", "nf.txt"], "plot:"),
    (["--beta", "100", "--ic", "1mA", "--vce", "5", "--rs-list", "100"], "rs-list:"),
    (["--beta", "100", "--ic", "1mA", "--vce", "5", "--plot", "nf.txt"], "plot:"),  # (.png: noise circles)
    (["--device", "nmos", "--id", "2mA", "--vds", "3", "--vov", "0.25", "--ic-sweep", "10uA:1mA"], "ic-sweep:"),
    (["--ic-sweep", "10uA:1mA"], "bias point:"),
])
def test_ic_sweep_bad_input(run, args, name):
    assert_one_line_error(run, "noise", *args, prefix=name)


# --- noise --out: a Touchstone file with a noise block; --circles and --plot ----------------------
VHF = EXAMPLES / "vhf_gain_stage.toml"


@pytest.mark.parametrize("name, z0", [("lna.s2p", "50"), ("lna.ts", "75")])
def test_out_read_back_by_scikit_rf_and_devmodels(run, run_json, tmp_path, name, z0):
    # scikit-rf reads the noise block (nfmin, rn, g_opt at the file's reference) and devmodels' own
    # reader gives the noise parameters back (noise --touchstone)
    import skrf

    path = tmp_path / name
    args = ["noise", str(VHF), "-f", "1MHz,30MHz", "-f", "300MHz", "--z0", z0, "--rs", "80"]
    code, out, err = run(*args, "--out", str(path))
    assert code == 0 and "wrote Touchstone" in err and "NF at Rs" in out
    d = run_json(*args)
    net = skrf.Network(str(path))
    zr = float(z0)
    np.testing.assert_allclose(net.z0[:, 0], zr)
    np.testing.assert_allclose(net.nfmin_db, [p["nfmin_db"] for p in d["points"]], rtol=1e-9)
    np.testing.assert_allclose(net.rn, [p["rn"] for p in d["points"]], rtol=1e-9)
    np.testing.assert_allclose(net.g_opt, [complex(*p["gamma_opt"]) for p in d["points"]], rtol=1e-9, atol=1e-12)
    np.testing.assert_allclose(10 * np.log10(net.nf(80.0)), [p["nf_db"] for p in d["points"]], rtol=1e-9)
    back = run_json("noise", "--touchstone", str(path), "--rs", "80", "--z0", z0)
    for p, q in zip(back["points"], d["points"]):
        for k in ("nf_db", "nfmin_db", "rn"):
            assert p[k] == pytest.approx(q[k], rel=1e-9)
        _same(p["gamma_opt"], q["gamma_opt"], rel=1e-9)
    # the S parameters in the file are the stage's (params at the same z0)
    s = run_json("params", str(VHF), "-k", "s", "--z0", z0, "-f", "1MHz,30MHz,300MHz")
    want = np.array([[[complex(*p["11"]), complex(*p["12"])], [complex(*p["21"]), complex(*p["22"])]]
                     for p in s["points"]])
    assert np.max(np.abs(net.s - want)) < 1e-9 * np.max(np.abs(want))


def test_circles_in_json_against_scikit_rf(run, run_json, tmp_path):
    # centre and radius of each level against scikit-rf's Network.nf_circle (Pozar, from memory)
    import warnings

    import skrf

    path = tmp_path / "c.s2p"
    args = ["noise", str(VHF), "-f", "10MHz,100MHz,1GHz", "--rs", "50"]
    assert run(*args, "--out", str(path))[0] == 0
    d = run_json(*args, "--circles", "3,4dB,15")
    net = skrf.Network(str(path))
    theta = np.linspace(0, 2 * np.pi, 5)  # scikit-rf's points at 0, 90, 180, 270, 360 degrees
    for j, level in enumerate((3.0, 4.0, 15.0)):
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", RuntimeWarning)
            loci = net.nf_circle(level, npoints=5)
        for k, p in enumerate(d["points"]):
            c = p["circles"][j]
            assert c["nf_db"] == level
            if level < p["nfmin_db"]:  # no circle below the least noise figure
                assert c["centre"] is None and c["radius"] is None
                continue
            want = complex(*c["centre"]) + c["radius"] * np.exp(1j * theta)
            np.testing.assert_allclose(loci[:, k], want, rtol=1e-9, atol=1e-12)
    assert any(c["centre"] is None for p in d["points"] for c in p["circles"])  # 3 dB at 1 GHz: none


def test_circles_plot_and_table(run, tmp_path):
    path = tmp_path / "circles.svg"
    code, out, err = run("noise", str(VHF), "-f", "10MHz,100MHz", "--plot", str(path))
    assert code == 0, err
    text = path.read_text()
    assert "Γopt at 10 MHz" in text and "NF = " in text and "plot written" in err
    code, out, err = run("noise", str(VHF), "-f", "10MHz,1GHz", "--circles", "3,4")
    assert code == 0 and "Noise circles" in out and "below NFmin" in out and not NAN_INF.search(out)


@pytest.mark.parametrize("args, prefix", [
    (["--circles", "abc"], "circles:"),
    (["--circles", "0"], "circles: expected noise figures above 0 dB"),
    (["--circles", "1,2,3,4,5,6,7,8,9"], "circles: at most 8"),
    (["--out", "x.csv"], "out: a noise-parameter block is written in Touchstone"),
    (["--out", "x.s2p", "-f", "1MHz,1kHz"], "freq: a Touchstone file lists increasing frequencies"),
    (["--plot", "x.pdf"], "plot:"),
    (["--ic-sweep", "1mA:10mA", "--out", "x.s2p"], "out: not used with --ic-sweep"),
    (["--ic-sweep", "1mA:10mA", "--circles", "2"], "circles: not used with --ic-sweep"),
    (["--rs-list", "1k"], "rs-list: used with --ic-sweep only"),
])
def test_out_and_circles_bad_input(run, tmp_path, monkeypatch, args, prefix):
    monkeypatch.chdir(tmp_path)
    assert_one_line_error(run, "noise", str(AUDIO), *args, prefix=prefix)
    assert list(tmp_path.iterdir()) == []


# --- --bare: the transistor alone at the point the network solves ---------------------------
def test_bare_is_the_transistor_at_the_solved_point(run_json):
    """``noise FILE --bare`` equals the library's noise of the stage without its network (the
    same model, at the operating point the network sets), and differs from the built stage,
    whose bias and emitter resistors add thermal noise."""
    built_file = EXAMPLES / "ce_stage_built.toml"
    bare = run_json("noise", str(built_file), "--rs", "600", "-f", "10kHz", "--bare")
    built = run_json("noise", str(built_file), "--rs", "600", "-f", "10kHz")
    stage = Inputs(built_file, {}, bare=True).stage("ce")
    assert stage.network is None
    want = noise_parameters(stage_noise(stage, np.array([1e4])), zs=600.0).as_points()[0]
    for k in KEYS:
        _same(bare["points"][0][k], want[k])
    # the network's resistors are noisy: the built stage is noisier than the transistor alone
    assert built["points"][0]["nf_db"] > bare["points"][0]["nf_db"] + 0.5


def test_ic_sweep_names_the_lowest_current_a_fixed_ft_allows(run, run_json):
    """C_pi = gm/(2 pi fT) - C_mu >= 0 needs IC >= 2 pi fT C_mu VT (the hybrid-pi relation, from
    memory): the error names that current, and a sweep starting just above it runs."""
    code, out, err = run("noise", str(AUDIO), "--ic-sweep", "10uA:10mA", "--rs", "2k")
    assert code == 2 and err.count("\n") == 1 and err.startswith("devmodels: error: ft:")
    need = float(err.split("needs IC >= ")[1].split(" A")[0])
    d = run_json("model", str(AUDIO))
    assert need == pytest.approx(2 * math.pi * d["ft"] * d["c_mu"] * d["vt"], rel=1e-2)
    ok = run_json("noise", str(AUDIO), "--ic-sweep", f"{need * 1.01:.6g}:10mA", "--rs", "2k")
    assert ok["points"][0]["ic"] >= need

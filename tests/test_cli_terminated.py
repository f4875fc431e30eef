"""Command line: gain, compare, sweep -- outputs against the library and scikit-rf, and every error path."""

from __future__ import annotations

import json

import numpy as np
import pytest

import devmodels as dm
from devmodels.analysis import terminate
from conftest import assert_one_line_error, cx

BIAS = ["--ic", "1mA", "--vce", "5V", "--beta", "100", "--va", "80V", "--ft", "300MHz", "--cmu", "2pF",
        "--rb", "50"]
GAIN_KEYS = {"freq", "av", "avs", "ai", "zin", "zout", "gt_db", "k", "mu", "msg_db"}


def stage(config):
    m = dm.HybridPi.from_bias(dm.BipolarBias(ic=1e-3, vce=5.0, beta=100, va=80.0, ft=300e6, cmu=2e-12, rb=50.0))
    return dm.Stage(m, config)


# --- gain ------------------------------------------------------------------------------------
def test_gain_json_keys_and_values_equal_the_library(run_json):
    d = run_json("gain", *BIAS, "--config", "cb", "--rs", "75", "--rl", "2.2k", "-f", "1MHz", "-f", "100MHz")
    assert d["config"] == "cb" and len(d["points"]) == 2
    assert GAIN_KEYS <= set(d["points"][0])
    res = terminate(stage("cb").two_port([1e6, 1e8], "y"), 75.0, 2.2e3)
    for i, p in enumerate(d["points"]):
        for k in ("av", "avs", "ai", "zin", "zout"):
            assert cx(p[k]) == pytest.approx(complex(getattr(res, k)[i]), rel=1e-12)
        for k in ("gt_db", "k", "mu", "msg_db"):
            assert p[k] == pytest.approx(float(getattr(res, k)[i]), rel=1e-12)


def test_gain_default_frequency_and_complex_terminations(run_json):
    d = run_json("gain", *BIAS, "--rs", "50+j10", "--rl", "1k-j200")
    assert d["points"][0]["freq"] == 1e3
    assert d["rs"] == [50.0, 10.0] and d["rl"] == [1000.0, -200.0]
    res = terminate(stage("ce").two_port([1e3], "y"), 50 + 10j, 1e3 - 200j)
    assert cx(d["points"][0]["avs"]) == pytest.approx(complex(res.avs[0]), rel=1e-12)


def test_gain_open_load_gives_null_not_nan(run, run_json):
    d = run_json("gain", *BIAS, "--rl", "open", "-f", "1kHz")
    p = d["points"][0]
    assert d["rl"] is None and p["gt_db"] is None and cx(p["ai"]) == 0
    code, out, err = run("gain", *BIAS, "--rl", "open")
    # GT and GP of an open load read "open" (README: a value that does not exist is open/unbounded)
    assert code == 0 and "nan" not in out.lower() and "inf" not in out.lower() and "none" not in out
    gt_row = [line for line in out.splitlines() if line.startswith("│ 1 kHz") and "dB" in line][0]
    assert gt_row.split("│")[2].strip() == "open" and gt_row.split("│")[3].strip() == "open"


def test_gain_given_params_is_frequency_independent(run_json):
    d = run_json("gain", "--params", "h=1.1k,2.5e-4,50,24u", "--rs", "1k", "--rl", "10k")
    assert len(d["points"]) == 1 and d["points"][0]["freq"] is None
    res = terminate(dm.TwoPort(None, [[1.1e3, 2.5e-4], [50, 24e-6]], "h"), 1e3, 1e4)
    assert cx(d["points"][0]["av"]) == pytest.approx(complex(res.av[0]), rel=1e-12)


def test_gain_table_uses_units_and_words(run):
    code, out, err = run("gain", *BIAS, "-f", "10MHz")
    assert code == 0 and "kΩ" in out and "dB" in out and ("MAG" in out or "MSG" in out)
    assert "nan" not in out.lower()


def write_s2p(path, tp, z0=50.0):
    """An invented Touchstone 1.1 file written by hand (RI, order 11 21 12 22)."""
    s = tp.to("s", z0).data
    lines = ["! invented test network", f"# Hz S RI R {z0:g}"]
    for f, m in zip(tp.freq, s):
        vals = [m[0, 0], m[1, 0], m[0, 1], m[1, 1]]
        lines.append(f"{float(f)!r} " + " ".join(f"{float(v.real)!r} {float(v.imag)!r}" for v in vals))
    path.write_text("\n".join(lines) + "\n")


def test_gain_touchstone_every_frequency_and_interpolated(run_json, tmp_path):
    # The file is read by scikit-rf; the result equals the analysis of the same network.
    f = np.geomspace(1e6, 1e9, 31)
    tp = stage("ce").two_port(f, "y")
    write_s2p(tmp_path / "dev.s2p", tp)
    d = run_json("gain", "--touchstone", str(tmp_path / "dev.s2p"), "--rs", "50", "--rl", "500")
    assert [p["freq"] for p in d["points"]] == pytest.approx(list(f), rel=1e-12)
    res = terminate(tp, 50.0, 500.0)
    got = np.array([cx(p["avs"]) for p in d["points"]])
    np.testing.assert_allclose(got, res.avs, rtol=1e-9)
    # --freq on a file point gives that point; between points it is interpolated
    d = run_json("gain", "--touchstone", str(tmp_path / "dev.s2p"), "--rl", "500", "-f", repr(float(f[3])))
    assert cx(d["points"][0]["avs"]) == pytest.approx(complex(res.avs[3]), rel=1e-9)


def test_gain_touchstone_1_1_y_file_is_denormalised(run_json, tmp_path):
    # A version 1.1 Y file (Y * R in the file, Touchstone 1.1 specification, from memory) is
    # analysed like the network itself.
    from devmodels.export import write_touchstone

    f = np.geomspace(1e6, 1e9, 7)
    tp = stage("cc").two_port(f, "y", 75.0)
    write_touchstone(tp, tmp_path / "dev.y2p", "1.1")
    d = run_json("gain", "--touchstone", str(tmp_path / "dev.y2p"), "--rl", "300")
    res = terminate(tp, 50.0, 300.0)
    np.testing.assert_allclose([cx(p["av"]) for p in d["points"]], res.av, rtol=1e-9)


# --- compare -----------------------------------------------------------------------------------
def test_compare_entries_equal_separate_gain_runs(run_json):
    common = ["--rs", "600", "--rl", "4.7k", *BIAS]
    d = run_json("compare", *common, "-f", "2MHz")
    for c in ("ce", "cb", "cc"):
        g = run_json("gain", *common, "--config", c, "-f", "2MHz")
        # every gain key is the same; compare adds each configuration's noise (nf_db, nfmin_db)
        assert {k: v for k, v in d[c].items() if k not in ("nf_db", "nfmin_db")} == g["points"][0]
    assert set(d["best"]) >= {"voltage_gain", "output_impedance_low", "input_impedance_high", "bandwidth"}


def test_compare_winners_follow_textbook_roles(run, run_json):
    # CE has the highest voltage gain, CC the lowest output and highest input impedance, CB the
    # lowest input impedance (Sedra and Smith, comparison of the single-transistor amplifiers,
    # from memory).
    d = run_json("compare", *BIAS)
    assert d["best"]["voltage_gain"] == "ce"
    assert d["best"]["output_impedance_low"] == "cc"
    assert d["best"]["input_impedance_high"] == "cc"
    assert d["best"]["input_impedance_low"] == "cb"
    code, out, err = run("compare", *BIAS)
    assert code == 0 and "CE: highest voltage gain" in out and "CC:" in out and "CB:" in out


# --- sweep -------------------------------------------------------------------------------------
def test_sweep_json_as_params_with_figures(run_json):
    d = run_json("sweep", *BIAS, "--start", "1kHz", "--stop", "10GHz", "--points", "15", "--kind", "y")
    assert d["config"] == "ce" and d["kind"] == "y" and d["z0"] == 50.0 and len(d["points"]) == 15
    f = [p["freq"] for p in d["points"]]
    np.testing.assert_allclose(f, np.geomspace(1e3, 1e10, 15), rtol=1e-12)
    y = stage("ce").two_port(f, "y").data
    np.testing.assert_allclose([cx(p["21"]) for p in d["points"]], y[:, 1, 0], rtol=1e-12)
    fig = d["figures"]
    assert fig["ft"] == pytest.approx(300e6, rel=0.01)  # fT ~ gm/(2 pi (C_pi + C_mu)) (Gray and Meyer, from memory)
    assert fig["bandwidth"] > 0 and fig["bandwidth_miller"] > 0 and fig["fmax"] > fig["ft"]


def test_sweep_single_point_and_figures_not_reached(run_json):
    d = run_json("sweep", *BIAS, "--start", "1MHz", "--stop", "1MHz", "--points", "1")
    assert len(d["points"]) == 1 and d["figures"] is None
    d = run_json("sweep", *BIAS, "--start", "1kHz", "--stop", "10kHz", "--points", "5")
    assert d["figures"]["ft"] is None and d["figures"]["fmax"] is None


@pytest.mark.parametrize("name", ["out.s2p", "out.ts"])
def test_sweep_touchstone_read_back_by_scikit_rf(run, tmp_path, name):
    # scikit-rf reads the written file; S equals the sweep's own JSON within 1e-9.
    import skrf

    path = tmp_path / name
    code, out, err = run("sweep", *BIAS, "--points", "21", "--out", str(path))
    assert code == 0 and "wrote Touchstone" in err
    d = json.loads(run("sweep", *BIAS, "--points", "21", "--json")[1])
    s = np.array([[[cx(p["11"]), cx(p["12"])], [cx(p["21"]), cx(p["22"])]] for p in d["points"]])
    net = skrf.Network(str(path))
    assert np.max(np.abs(net.s - s)) / np.max(np.abs(s)) < 1e-9


def test_sweep_z_touchstone_and_csv_and_json(run, tmp_path):
    import skrf

    code, _, err = run("sweep", *BIAS, "--kind", "z", "--points", "9", "--out", str(tmp_path / "a.z2p"))
    assert code == 0
    z = stage("ce").two_port(np.geomspace(1e3, 1e10, 9), "z").data
    net = skrf.Network(str(tmp_path / "a.z2p"))  # scikit-rf's Touchstone 1.x reader
    assert np.max(np.abs(net.z - z)) / np.max(np.abs(z)) < 1e-9
    assert run("sweep", *BIAS, "--points", "9", "--out", str(tmp_path / "a.csv"), "--polar")[0] == 0
    # the header follows the comment lines that say what the file holds (device, bias point, network)
    head = [ln for ln in (tmp_path / "a.csv").read_text().splitlines() if ln.startswith("freq")][0]
    assert "mag s11" in head
    assert run("sweep", *BIAS, "--points", "9", "--out", str(tmp_path / "a.json"))[0] == 0
    d = json.loads((tmp_path / "a.json").read_text())
    assert d["kind"] == "s" and len(d["points"]) == 9 and "ft" in d["figures"]


@pytest.mark.parametrize("cmd, ext", [(["sweep", "--points", "11"], ".png"), (["sweep", "--points", "11"], ".svg"),
                                      (["compare"], ".png"), (["gain", "-f", "1MHz", "-f", "1GHz"], ".png")])
def test_plots_are_written(run, tmp_path, cmd, ext):
    path = tmp_path / f"plot{ext}"
    code, out, err = run(*cmd, *BIAS, "--plot", str(path))
    assert code == 0, err
    head = path.read_bytes()[:8]
    assert head.startswith(b"\x89PNG") if ext == ".png" else b"<?xml" in head or b"<svg" in head


def test_json_mode_prints_only_json(run):
    code, out, err = run("sweep", *BIAS, "--points", "5", "--json")
    assert code == 0 and json.loads(out) and out.count("\n") == 1


# --- error paths ---------------------------------------------------------------------------------
@pytest.mark.parametrize("args, name", [
    (["gain", *BIAS, "--rs", "-50"], "rs:"),
    (["gain", *BIAS, "--rl", "-1k"], "rl:"),
    (["gain", *BIAS, "--rl", "-1k+j20"], "rl:"),
    (["gain", *BIAS, "--rs", "open"], "rs:"),
    (["gain", *BIAS, "--rl", "lots"], "rl:"),
    (["gain", *BIAS, "--rl", "5V"], "rl:"),
    (["compare", *BIAS, "--rs", "-1"], "rs:"),
    (["sweep", *BIAS, "--rl", "-1"], "rl:"),
    (["sweep", *BIAS, "--start", "1GHz", "--stop", "1MHz"], "start:"),
    (["sweep", *BIAS, "--start", "0", "--stop", "1MHz"], "start:"),
    (["sweep", *BIAS, "--points", "0"], "points:"),
    (["sweep", *BIAS, "--points", "-3"], "points:"),
    (["sweep", *BIAS, "--kind", "q"], "kind:"),
    (["sweep", *BIAS, "--kind", "abcd", "--out", "x.s2p"], "out:"),
    (["sweep", *BIAS, "--out", "x.txt"], "out:"),
    (["sweep", *BIAS, "--out", "no/such/dir/x.csv"], "out:"),
    (["sweep", *BIAS, "--touchstone-version", "3"], "touchstone-version:"),
    (["gain", *BIAS, "--plot", "x.pdf"], "plot:"),
    (["gain"], "bias point:"),
    (["compare"], "bias point:"),
    (["sweep"], "bias point:"),
    (["gain", *BIAS, "--params", "h=1k,0,50,1e-5"], "params:"),
    (["gain", "--params", "h=1k,0,50,1e-5", "--touchstone", "x.s2p"], "params:"),
    (["gain", "--config", "xx", *BIAS], "config:"),
    (["compare", *BIAS, "-f", "1kHz,2kHz"], "freq:"),
])
def test_input_errors(run, args, name):
    assert_one_line_error(run, *args, match=name)


def test_network_without_solution(run):
    # y11 = -1/50 S (an active input) makes Zs + zin = 0 for Rs = 50 ohm: no solution.
    assert_one_line_error(run, "gain", "--params", "y=-20m,0,10m,10m", "--rs", "50", "--rl", "100",
                          match="rs, rl:")


def test_no_forward_transmission(run):
    assert_one_line_error(run, "gain", "--params", "y=1m,1m,0,1m", match="forward transmission")


@pytest.mark.parametrize("content, match", [
    (None, "no such file"),
    ("this is not a touchstone file\n1 2 3\n", "cannot read"),
    ("# Hz S RI R 50\n1e6 0.1 0.2 0.3\n", "cannot read"),
    ("# Hz S RI R 50\n", "no data points"),
    ("# Hz S RI R 50+10j\n1e6 0.1 0 0.5 0 0.01 0 0.2 0\n", "complex reference"),
    ("# Hz S RI R 50\n1e6 0.1 0 0.5 0 0.01 0 0.2 0\n1e7 nan 0 0.5 0 0.01 0 0.2 0\n", "not finite"),
])
def test_bad_touchstone_files(run, tmp_path, content, match):
    path = tmp_path / "bad.s2p"
    if content is not None:
        path.write_text(content)
    assert_one_line_error(run, "gain", "--touchstone", str(path), match=match)


def test_touchstone_with_wrong_port_count_and_out_of_range_freq(run, tmp_path):
    one = tmp_path / "one.s1p"
    one.write_text("# Hz S RI R 50\n1e6 0.1 0.2\n2e6 0.1 0.2\n")
    assert_one_line_error(run, "gain", "--touchstone", str(one), match="1-port")
    two = tmp_path / "two.s2p"
    two.write_text("# Hz S RI R 50\n1e6 0.1 0 0.5 0 0.01 0 0.2 0\n2e6 0.1 0 0.5 0 0.01 0 0.2 0\n")
    assert_one_line_error(run, "gain", "--touchstone", str(two), "-f", "5MHz", match="freq:")


def test_touchstone_z0_varying_with_frequency(run, tmp_path):
    # Per-frequency port impedances as written by field solvers ("! Port Impedance" comments,
    # read by scikit-rf); devmodels cannot represent them and says so.
    path = tmp_path / "vary.s2p"
    path.write_text(
        "# Hz S RI R 50\n"
        "! Port Impedance 50 0 50 0\n1e6 0.1 0 0.5 0 0.01 0 0.2 0\n"
        "! Port Impedance 60 0 60 0\n2e6 0.1 0 0.5 0 0.01 0 0.2 0\n")
    line = assert_one_line_error(run, "gain", "--touchstone", str(path))
    assert "touchstone:" in line


def test_no_number_output_is_nan_or_inf(run):
    for args in (["gain", "--params", "h=1k,0,50,1e-5", "--rl", "open"], ["compare", *BIAS, "--rl", "open"]):
        code, out, err = run(*args)
        assert code == 0 and "nan" not in out.lower() and " inf" not in out.lower()
        code, out, err = run(*args, "--json")
        assert code == 0 and "NaN" not in out and "Infinity" not in out


def test_compare_and_sweep_of_a_fet(run_json):
    # compare takes the FET configurations; each entry equals a separate gain run, and the
    # CS fT of this MOSFET (ro, a small gate resistance) is gm / (2 pi (Cgs + Cgd)) to within
    # a few percent (the definition of fT for the square-law model; Sedra and Smith, from memory).
    from pathlib import Path

    fet = str(Path(__file__).resolve().parents[1] / "bias_examples" / "fet" / "nmos_lna_input.toml")
    d = run_json("compare", fet, "--freq", "100MHz")
    assert {"cs", "cg", "cd"} <= set(d) and "ce" not in d
    for c in ("cs", "cg", "cd"):
        g = run_json("gain", fet, "-c", c, "--freq", "100MHz")["points"][0]
        assert g["av"] == pytest.approx(d[c]["av"], rel=1e-12)
    s = run_json("sweep", fet, "-c", "cs", "--start", "1MHz", "--stop", "100GHz", "--points", "21")
    assert s["figures"]["f_beta"] is None  # |h21| has no finite 0 Hz value without gate conductance
    m = run_json("model", fet)
    assert m["ft"] is not None and s["figures"]["ft"] == pytest.approx(m["ft"], rel=0.05)


@pytest.mark.parametrize("name, extra", [("a.s2p", []), ("a.ts", ["--kind", "y", "--polar"]),
                                         ("a.csv", ["--format", "db"]), ("a.json", ["--kind", "h"])])
def test_sweep_streamed_file_equals_the_whole_sweep_file_byte_for_byte(run, tmp_path, monkeypatch, name, extra):
    # --out alone streams (computed block by block as written); with --json the whole sweep is
    # computed first, as before.  40000 points cross several export blocks (16384 lines, 4096
    # JSON points) and the stage engine's blocks (4096).
    from devmodels import export, sweeping

    sizes = []
    block = sweeping.StreamedSweep.block
    monkeypatch.setattr(sweeping.StreamedSweep, "block",
                        lambda self, a, b: sizes.append(b - a) or block(self, a, b))
    args = ("sweep", *BIAS, "--points", "40000", *extra)
    streamed, whole = tmp_path / name, tmp_path / ("b" + name[1:])
    code, out, err = run(*args, "--out", str(streamed))
    assert code == 0, err
    assert "(showing 21 of 40000 points" in out and "Frequency figures" in out
    assert len(sizes) >= 3 and max(sizes) <= max(export.BLOCK, export.JSON_BLOCK) and sum(sizes) == 40000
    sizes.clear()
    assert run(*args, "--out", str(whole), "--json")[0] == 0
    assert sizes == []  # with --json, the whole sweep is computed at once
    a, b = streamed.read_bytes(), whole.read_bytes()
    assert len(a) > 40000 * 100 and a == b


def test_sweep_streamed_shows_the_same_table_as_the_whole_sweep(run, tmp_path, capsys):
    # the table of a streamed sweep (with or without --out) is the rendering of the whole
    # sweep's sample: every point up to 41, 21 evenly spread points above
    from devmodels.cli.render import print_twoport

    for n in (30, 3001):
        code, shown, _ = run("sweep", *BIAS, "--points", str(n), "--out", str(tmp_path / "a.csv"))
        assert code == 0
        code, plain, _ = run("sweep", *BIAS, "--points", str(n))
        assert code == 0 and plain == shown
        tp = stage("ce").two_port(np.geomspace(1e3, 1e10, n), "s", 50.0)
        if n > 41:
            idx = np.unique(np.linspace(0, n - 1, 21).round().astype(int))
            tp = dm.TwoPort(tp.freq[idx], tp.data[idx], "s", 50.0, "ce")
        print_twoport(tp, False)
        table = capsys.readouterr().out
        assert len(table.splitlines()) >= len(tp) and shown.startswith(table)
        assert ("(showing 21 of 3001 points" in shown) == (n > 41)


def test_streamed_sweep_has_its_own_larger_limit(run):
    # A sweep written to a file without --json or --plot is computed block by block, so it may
    # hold more points than one kept whole (devmodels.schema.MAX_STREAMED_POINTS vs MAX_POINTS).
    from devmodels.schema import MAX_POINTS, MAX_STREAMED_POINTS

    assert MAX_STREAMED_POINTS > MAX_POINTS
    too_many = str(MAX_POINTS + 1)
    code, _, err = run("sweep", *BIAS, "-n", too_many, "--json")
    assert code == 2 and err.startswith("devmodels: error: points:")
    code, _, err = run("sweep", *BIAS, "-n", str(MAX_STREAMED_POINTS + 1), "--out", "x.s2p")
    assert code == 2 and err.startswith("devmodels: error: points:")


# --- noise in sweep and in gain ----------------------------------------------------------------
def _library_noise(f, zs, config="ce"):
    from devmodels.noise import noise_parameters, stage_noise

    return noise_parameters(stage_noise(stage(config), np.asarray(f)), zs=zs)


def test_sweep_noise_adds_keys_and_changes_none(run_json):
    plain = run_json("sweep", *BIAS, "--points", "13", "--rs", "600")
    d = run_json("sweep", *BIAS, "--points", "13", "--rs", "600", "--noise")
    assert list(d) == list(plain) + ["t0"] and d["t0"] == 290.0
    for p, q in zip(d["points"], plain["points"]):
        assert list(p) == list(q) + ["nf_db", "nfmin_db"]
        assert {k: p[k] for k in q} == q
    assert d["figures"] == plain["figures"]
    f = [p["freq"] for p in d["points"]]
    res = _library_noise(f, 600.0)
    np.testing.assert_allclose([p["nf_db"] for p in d["points"]], res.nf_db, rtol=1e-12)
    np.testing.assert_allclose([p["nfmin_db"] for p in d["points"]], res.nfmin_db, rtol=1e-12)
    # the noise figure rises above the corner of the device (fT = 300 MHz): common practice, no source
    assert d["points"][-1]["nf_db"] > d["points"][0]["nf_db"] + 10


@pytest.mark.parametrize("name", ["noisy.s2p", "noisy.ts"])
def test_sweep_noise_touchstone_read_by_scikit_rf_and_devmodels(run, run_json, tmp_path, name):
    # scikit-rf reads the noise block (nfmin, rn, g_opt) and evaluates NF at the source itself
    # (Network.nf: Fmin + Rn/Gs |Ys - Yopt|^2); devmodels' own reader gives the same parameters.
    import skrf

    from devmodels.touchstone import read_touchstone_file

    path = tmp_path / name
    code, _, err = run("sweep", *BIAS, "--points", "11", "--noise", "--rs", "200", "--out", str(path))
    assert code == 0 and "with noise parameters" in err
    d = run_json("sweep", *BIAS, "--points", "11", "--noise", "--rs", "200")
    f = np.array([p["freq"] for p in d["points"]])
    res = _library_noise(f, 200.0)
    net = skrf.Network(str(path))
    np.testing.assert_allclose(net.noise_freq.f, f, rtol=1e-12)
    np.testing.assert_allclose(net.nfmin_db, [p["nfmin_db"] for p in d["points"]], rtol=1e-9)
    np.testing.assert_allclose(net.rn, res.rn, rtol=1e-9)
    np.testing.assert_allclose(net.g_opt, res.gamma_opt, rtol=1e-9, atol=1e-12)
    np.testing.assert_allclose(10 * np.log10(net.nf(200.0)), [p["nf_db"] for p in d["points"]], rtol=1e-9)
    data = read_touchstone_file(path)
    np.testing.assert_allclose(data.noise.rn, res.rn, rtol=1e-12)
    np.testing.assert_allclose(data.noise.nfmin_db, res.nfmin_db, rtol=1e-12)


def test_sweep_noise_csv_and_json_files_streamed(run, run_json, tmp_path):
    d = run_json("sweep", *BIAS, "--points", "17", "--noise")
    code, out, err = run("sweep", *BIAS, "--points", "17", "--noise", "--out", str(tmp_path / "a.csv"))
    assert code == 0 and "NF at Rs" in out and "NFmin" in out and "290 K" in out
    lines = [ln for ln in (tmp_path / "a.csv").read_text().splitlines() if not ln.startswith("#")]
    assert lines[0].endswith(",nf at rs [dB],nfmin [dB]")
    vals = np.array([[float(x) for x in ln.split(",")] for ln in lines[1:]])
    np.testing.assert_allclose(vals[:, 9], [p["nf_db"] for p in d["points"]], rtol=1e-13)
    np.testing.assert_allclose(vals[:, 10], [p["nfmin_db"] for p in d["points"]], rtol=1e-13)
    assert run("sweep", *BIAS, "--points", "17", "--noise", "--out", str(tmp_path / "a.json"))[0] == 0
    j = json.loads((tmp_path / "a.json").read_text())
    assert j["t0"] == 290.0 and j["rs"] == [50.0, 0.0] and "stage" in j and "figures" in j
    np.testing.assert_allclose([p["nf_db"] for p in j["points"]], [p["nf_db"] for p in d["points"]], rtol=1e-13)


def test_sweep_noise_plot_has_a_noise_panel(run, tmp_path):
    path = tmp_path / "n.svg"
    code, _, err = run("sweep", *BIAS, "--points", "31", "--noise", "--plot", str(path))
    assert code == 0, err
    text = path.read_text()
    assert "Noise figure (source at T0 = 290 K)" in text and "NFmin" in text


def test_sweep_noise_options_reach_the_model(run_json):
    # a 1/f corner of the base noise raises NF at low frequency only (2 q IB (1 + fc/f)): from memory
    base = run_json("sweep", *BIAS, "--points", "5", "--start", "10Hz", "--stop", "100MHz", "--noise")
    fl = run_json("sweep", *BIAS, "--points", "5", "--start", "10Hz", "--stop", "100MHz", "--noise",
                  "--flicker-corner", "10kHz")
    assert fl["points"][0]["nf_db"] > base["points"][0]["nf_db"] + 1
    assert fl["points"][-1]["nf_db"] == pytest.approx(base["points"][-1]["nf_db"], abs=1e-3)


@pytest.mark.parametrize("args, name", [
    (["--flicker-corner", "1k"], "flicker-corner: a noise option"),
    (["--gamma-n", "1"], "gamma-n: a noise option"),
    (["--noise", "--rs", "0"], "rs:"),
    (["--noise", "--kind", "y", "--out", "x.y2p"], "out: a Touchstone noise block goes with S"),
    (["--noise", "--gamma-n", "1"], "gamma-n: a FET option"),
    (["--noise", "--flicker-corner", "-1"], "flicker-corner:"),
])
def test_sweep_noise_bad_input(run, tmp_path, monkeypatch, args, name):
    monkeypatch.chdir(tmp_path)
    assert_one_line_error(run, "sweep", *BIAS, "--points", "5", *args, prefix=name)
    assert not (tmp_path / "x.y2p").exists()


def _noisy_file(run, tmp_path, name="lna.s2p", freqs=("10MHz", "100MHz", "1GHz")):
    path = tmp_path / name
    code, _, err = run("noise", *BIAS, *[a for f in freqs for a in ("-f", f)], "--out", str(path))
    assert code == 0, err
    return path


def test_gain_touchstone_with_noise_block(run, run_json, tmp_path):
    import skrf

    path = _noisy_file(run, tmp_path)
    d = run_json("gain", "--touchstone", str(path), "--rs", "120")
    n = run_json("noise", "--touchstone", str(path), "--rs", "120")
    assert d["t0"] == 290.0 and len(d["points"]) == 3
    for p, q in zip(d["points"], n["points"]):
        assert set(p) >= GAIN_KEYS | {"nf_db", "nfmin_db"}
        assert p["nf_db"] == pytest.approx(q["nf_db"], rel=1e-12) and p["nfmin_db"] == q["nfmin_db"]
    # scikit-rf's own NF at the source from the same file (Network.nf)
    net = skrf.Network(str(path))
    np.testing.assert_allclose([p["nf_db"] for p in d["points"]], 10 * np.log10(net.nf(120.0)), rtol=1e-9)
    code, out, err = run("gain", "--touchstone", str(path), "--rs", "120")
    assert code == 0 and "NF at Rs" in out and "the file's data" in out
    # a frequency that is not a noise frequency: no NF (not interpolated), a warning
    code, out, err = run("gain", "--touchstone", str(path), "-f", "20MHz", "--json")
    p = json.loads(out)["points"][0]
    assert code == 0 and p["nf_db"] is None and p["nfmin_db"] is None and "not interpolated" in err


def test_gain_touchstone_without_noise_block_keeps_its_keys(run, run_json, tmp_path):
    path = tmp_path / "plain.s2p"
    assert run("sweep", *BIAS, "--points", "5", "--out", str(path))[0] == 0
    d = run_json("gain", "--touchstone", str(path))
    assert "t0" not in d and all("nf_db" not in p for p in d["points"])


def test_gain_touchstone_with_unusable_noise_block_still_gives_the_gains(run, tmp_path):
    # a noise frequency outside the network data: the gains stand, the noise is a warning
    path = tmp_path / "odd.ts"
    path.write_text("[Version] 2.0\n# Hz S RI R 50\n[Number of Ports] 2\n[Two-Port Data Order] 12_21\n"
                    "[Number of Frequencies] 2\n[Number of Noise Frequencies] 1\n[Reference] 50 50\n"
                    "[Network Data]\n1e6 0.5 0 0.01 0 5 0 0.5 0\n2e6 0.5 0 0.01 0 5 0 0.5 0\n"
                    "[Noise Data]\n3e6 1.2 0.3 10 15\n[End]\n")
    code, out, err = run("gain", "--touchstone", str(path), "--json")
    d = json.loads(out)
    assert code == 0 and len(d["points"]) == 2 and d["points"][0]["gt_db"] is not None
    assert all(p["nf_db"] is None for p in d["points"]) and "noise: not computed" in err

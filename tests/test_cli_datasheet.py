"""Command line: datasheet h-parameters (bipolar) and yfs, Ciss, Crss, Coss (FET) at their test
conditions, wired to devmodels.datasheet.  Invented values."""

from __future__ import annotations

import pytest

from conftest import assert_one_line_error, cx

H = ["--hie", "3.5k", "--hre", "2e-4", "--hfe", "120", "--hoe", "12u", "--h-at-ic", "1mA"]
H_SI = dict(hie=3.5e3, hre=2e-4, hfe=120.0, hoe=12e-6)


def _h_of(d):
    """The exact CE h-parameters of the hybrid-pi in ``model --json`` (datasheet.py's relations)."""
    r_pi, r_mu, ro, gm, rb = d["r_pi"], d["r_mu"], d["ro"], d["gm"], d["rb"]
    hre = r_pi / (r_pi + r_mu)
    return dict(hie=rb + r_pi * (1 - hre), hre=hre, hfe=r_pi * (1 - hre) * gm - hre,
                hoe=1 / ro + (1 + gm * r_pi) / (r_pi + r_mu))


def test_h_set_at_its_test_ic_is_reproduced(run_json):
    d = run_json("model", "--ic", "1mA", "--vce", "5V", *H)
    for name, value in _h_of(d).items():
        assert value == pytest.approx(H_SI[name], rel=1e-9, abs=0), name
    # hfe = beta and hie = rb + r_pi in the r_mu >> r_pi limit (hre small): within hre
    assert d["beta"] == pytest.approx(120, rel=1e-3, abs=0)
    assert d["rb"] + d["r_pi"] == pytest.approx(3.5e3, rel=1e-3, abs=0)
    assert d["datasheet"]["hybrid_pi"]["given"] == H_SI and d["datasheet"]["hybrid_pi"]["at_ic"] == 1e-3


def test_h_set_moves_to_the_bias_ic_as_the_library_says(run_json):
    from devmodels.datasheet import hybrid_pi_from_h, scale_hybrid_pi

    d = run_json("model", "--ic", "2.5mA", "--vce", "5V", *H, "--h-at-vce", "5V")
    el = hybrid_pi_from_h(3.5e3, 2e-4, 120.0, 12e-6, 1e-3, h_at_vce=5.0)
    sc = scale_hybrid_pi(el, 2.5e-3)
    for name in ("gm", "r_pi", "r_mu", "ro", "rb", "beta"):
        assert d[name] == pytest.approx(float(getattr(sc, name)), rel=1e-12, abs=0), name
    assert d["ro"] != pytest.approx(float(el.ro), rel=1e-3)  # it did move
    assert d["datasheet"]["hybrid_pi"]["at_vce"] == 5.0


def test_h_set_reaches_the_other_commands(run_json):
    # params from the h-set equals params from the same elements given as beta, va, rb, rmu
    m = run_json("model", "--ic", "2mA", "--vce", "5V", *H)
    p = run_json("params", "--ic", "2mA", "--vce", "5V", *H, "-k", "h", "-f", "1kHz")
    q = run_json("params", "--ic", "2mA", "--vce", "5V", "--beta", repr(m["beta"]), "--va",
                 repr(m["datasheet"]["hybrid_pi"]["used"]["va"]), "--rb", repr(m["rb"]), "--rmu", repr(m["r_mu"]),
                 "-k", "h", "-f", "1kHz")
    assert p == q
    g = run_json("gain", "--ic", "2mA", "--vce", "5V", *H, "--rs", "600", "--rl", "4.7k")
    assert abs(cx(g["points"][0]["av"])) > 1


def test_h_set_table_note_and_relations(run):
    code, out, err = run("model", "--ic", "2mA", "--vce", "5V", *H)
    assert code == 0 and err.count("devmodels: note: hybrid-pi: h-parameters given at IC = 1 mA") == 1
    assert "used at IC = 2 mA" in err and "from hie at h_at_ic" in out


def test_h_set_with_ib_uses_its_beta(run_json):
    d = run_json("model", "--ib", "10uA", "--vce", "5V", *H)
    assert d["ic"] == pytest.approx(1e-5 * d["beta"], rel=1e-12, abs=0)


def test_h_set_from_a_bias_file(run_json, tmp_path):
    p = tmp_path / "h.toml"
    p.write_text('ic = "1mA"\nvce = 5\nhie = "3.5k"\nhre = 2e-4\nhfe = 120\nhoe = "12uS"\nh_at_ic = "1mA"\n')
    d = run_json("model", str(p))
    assert _h_of(d)["hfe"] == pytest.approx(120, rel=1e-9, abs=0)


BAD_H = [
    (["--beta", "100", *H], "beta: given with the h-parameter set"),
    (["--hfe-table", "1mA:120", *H], "hfe_table: given with the h-parameter set"),
    (["--va", "100V", *H], "va: given with the h-parameter set"),
    (["--rb", "50", *H], "rb: given with the h-parameter set"),
    (["--rmu", "10M", *H], "rmu: given with the h-parameter set"),
    ([a for a in H if a not in ("--hoe", "12u")], "hoe: missing"),
    ([a for a in H if a not in ("--hie", "3.5k")], "hie: missing"),
    (H[:-2], "h_at_ic: missing"),
    (["--beta", "100", "--h-at-vce", "5V"], "hie: missing"),
    (["--hie", "2.6k", *H[2:]], "hie: 2600 ohm is below"),
    (["--hre", "1", *H[:2], *H[4:]], "hre: expected 0 <= hre < 1"),
]


@pytest.mark.parametrize("args,prefix", BAD_H, ids=[p for _, p in BAD_H])
def test_bad_h_set_is_one_line(run, args, prefix):
    assert_one_line_error(run, "model", "--ic", "1mA", "--vce", "5", *args, prefix=prefix)


def test_h_set_with_a_network_is_refused(run, tmp_path):
    p = tmp_path / "n.toml"
    p.write_text('[network]\ntype = "divider"\nvcc = "12V"\nr1 = "56k"\nr2 = "10k"\nrc = "3.3k"\nre = "820ohm"\n')
    assert_one_line_error(run, "model", str(p), *H, prefix="hfe: the h-parameter set is not yet usable")


# --- FET ----------------------------------------------------------------------------------------
NMOS = ["--device", "nmos", "--id", "2mA", "--vds", "5V", "--vov", "0.3V"]
JFET = ["--device", "njfet", "--id", "2mA", "--vds", "5V", "--idss", "8mA", "--vp", "-2V"]
CAPS = ["--ciss", "50pF", "--crss", "5pF", "--coss", "20pF"]


def test_yfs_sets_gm_by_the_library(run_json):
    from devmodels.datasheet import gm_from_yfs

    d = run_json("model", *NMOS, "--yfs", "40mS", "--yfs-at-id", "10mA")
    assert d["gm"] == pytest.approx(float(gm_from_yfs(40e-3, 10e-3, 2e-3).gm), rel=1e-12, abs=0)
    assert d["gm"] != pytest.approx(2 * 2e-3 / 0.3, rel=1e-3)  # not the vov gm
    d = run_json("model", *JFET, "--yfs", "6mS", "--yfs-at-id", "8mA")
    assert d["gm"] == pytest.approx(float(gm_from_yfs(6e-3, 8e-3, 2e-3).gm), rel=1e-12, abs=0)


def test_yfs_reaches_the_stage(run_json):
    a = run_json("params", *NMOS, "--yfs", "40mS", "--yfs-at-id", "10mA", "-k", "y", "-f", "1kHz")
    b = run_json("params", *NMOS, "-k", "y", "-f", "1kHz")
    assert a != b


def test_fet_capacitances_by_the_library(run_json, run):
    from devmodels.datasheet import fet_capacitances

    d = run_json("model", *NMOS, *CAPS, "--c-at-vds", "10V")
    ref = fet_capacitances(50e-12, 5e-12, 20e-12, at_vds=10.0)
    assert (d["cgs"], d["cgd"], d["cdb"]) == pytest.approx((ref.cgs, ref.cgd, ref.cds), rel=1e-12, abs=0)
    code, out, err = run("model", *NMOS, *CAPS)
    assert code == 0 and err.count("devmodels: note: FET capacitances: Ciss 50 pF") == 1


BAD_FET = [
    (NMOS + ["--yfs", "40mS"], "yfs_at_id: missing"),
    (NMOS + ["--yfs-at-id", "10mA"], "yfs_at_id: given without yfs"),
    (["--device", "nmos", "--id", "2mA", "--vds", "5V", "--kn", "40m", "--yfs", "40mS", "--yfs-at-id", "10mA"],
     "kn: given with yfs"),
    (NMOS + ["--gamma", "0.4", "--yfs", "40mS", "--yfs-at-id", "10mA"], "gamma: given with yfs"),
    (["--device", "nmos", "--id", "2mA", "--vds", "5V", "--yfs", "40mS", "--yfs-at-id", "10mA"], "vov: missing"),
    (JFET + ["--yfs", "6mS", "--yfs-at-id", "9mA"], "yfs_at_id: 0.009 A is above idss"),
    (NMOS + CAPS[:4], "coss: missing"),
    (NMOS + CAPS + ["--cgs", "3pF"], "cgs: given with ciss"),
    (NMOS + CAPS + ["--cgd", "3pF"], "cgd: given with ciss"),
    (NMOS + ["--c-at-vds", "10V"], "c_at_vds: given without ciss"),
    (NMOS + ["--ciss", "4pF", "--crss", "5pF", "--coss", "20pF"], "ciss: 4e-12 F is below crss"),
    (["--beta", "100", "--yfs", "40mS"], "yfs: a FET option"),
    (NMOS + H, "hie: a bipolar option"),
]


@pytest.mark.parametrize("args,prefix", BAD_FET, ids=[p for _, p in BAD_FET])
def test_bad_fet_datasheet_is_one_line(run, args, prefix):
    base = [] if "--device" in args else ["--ic", "1mA", "--vce", "5"]
    assert_one_line_error(run, "model", *base, *args, prefix=prefix)


@pytest.mark.parametrize("extra", [H, ["--beta", "100", "--ft", "300MHz", "--ft-at-ic", "10mA", "--c-je", "8pF",
                                       "--cob", "3pF", "--cob-at-vcb", "10V"],
                                   ["--hfe-table", "1mA:100, 10mA:120"]], ids=["h", "ft-cob", "hfe-table"])
def test_pnp_written_negative_takes_the_magnitudes(run_json, extra):
    p = run_json("model", "--device", "pnp", "--ic", "-2mA", "--vce", "-5V", *extra)
    n = run_json("model", "--ic", "2mA", "--vce", "5V", *extra)
    for name in ("gm", "r_pi", "ro", "rb", "r_mu", "beta", "c_pi", "c_mu"):
        assert p[name] == n[name], name


def test_fet_datasheet_values_reach_noise_and_gain(run_json):
    from devmodels.datasheet import gm_from_yfs

    args = [*NMOS, *CAPS, "--yfs", "40mS", "--yfs-at-id", "10mA"]
    m = run_json("model", *args)
    g = run_json("gain", *args, "-c", "cs", "--rs", "0", "--rl", "1k", "-f", "10Hz")
    # at 10 Hz (the capacitances negligible) with no ro the CS gain is -gm RL
    gm = float(gm_from_yfs(40e-3, 10e-3, 2e-3).gm)
    assert cx(g["points"][0]["av"]) == pytest.approx(-gm * 1e3, rel=1e-4, abs=0) and m["gm"] == pytest.approx(gm)
    n = run_json("noise", *args, "-c", "cs", "-f", "1MHz")
    assert n["points"][0]["nf_db"] > 0


def test_h_set_is_at_tref_and_moves_to_temp(run_json):
    from devmodels.datasheet import hybrid_pi_from_h, scale_hybrid_pi
    from devmodels.temperature import BETA_TC_DEFAULT, beta_at

    d = run_json("model", "--ic", "2mA", "--vce", "5V", *H, "--temp", "360")
    el = hybrid_pi_from_h(3.5e3, 2e-4, 120.0, 12e-6, 1e-3, temp=300.0)
    sc = scale_hybrid_pi(el, 2e-3, beta=beta_at(360.0, el.beta, BETA_TC_DEFAULT, 300.0), temp=360.0)
    for name in ("gm", "r_pi", "r_mu", "ro", "rb", "beta"):
        assert d[name] == pytest.approx(float(getattr(sc, name)), rel=1e-12, abs=0), name
    assert d["beta"] > el.beta * 1.1

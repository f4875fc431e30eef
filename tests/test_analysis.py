"""Terminated analysis (devmodels.analysis) against independent derivations and scikit-rf."""

from __future__ import annotations

import math

import numpy as np
import pytest

import devmodels as dm
from devmodels.analysis import stability_arrays, terminate
from conftest import random_twoports

FREQ = np.geomspace(1e3, 3e9, 25)


def hybrid_pi(**kw):
    args = dict(ic=1e-3, vce=5.0, beta=120, va=80.0, ft=300e6, cmu=2e-12, rb=50.0)
    args.update(kw)
    return dm.HybridPi.from_bias(dm.BipolarBias(**args))


@pytest.fixture(scope="module")
def stages():
    m = hybrid_pi()
    return {c: dm.Stage(m, c).two_port(FREQ, "y") for c in ("ce", "cb", "cc")}


# --- Y-form port equations ------------------------------------------------------------------
@pytest.mark.parametrize("config", ["ce", "cb", "cc"])
@pytest.mark.parametrize("zs, zl", [(50.0, 1e3), (600.0, 10e3), (50 + 20j, 300 - 150j), (1e3, 2.2e3 + 1e3j)])
def test_voltage_gains_match_y_form(stages, config, zs, zl):
    # Independent derivation from the port equations I1 = y11 V1 + y12 V2,
    # I2 = y21 V1 + y22 V2 with I2 = -YL V2 and Vs = V1 + Zs I1 (any circuits text,
    # e.g. Gray and Meyer, ch. 3, from memory):
    #   av = -y21 / (y22 + YL);  avs = -y21 Gs / ((y11 + Gs)(y22 + YL) - y12 y21)
    y = stages[config].data
    y11, y12, y21, y22 = y[:, 0, 0], y[:, 0, 1], y[:, 1, 0], y[:, 1, 1]
    gs, gl = 1 / zs, 1 / zl
    av = -y21 / (y22 + gl)
    avs = -y21 * gs / ((y11 + gs) * (y22 + gl) - y12 * y21)
    zin = 1 / (y11 - y12 * y21 / (y22 + gl))
    zout = 1 / (y22 - y12 * y21 / (y11 + gs))
    ai = gl * av / (y11 + y12 * av)  # -I2/I1 = YL V2 / I1
    res = terminate(stages[config], zs, zl)
    np.testing.assert_allclose(res.av, av, rtol=1e-9)
    np.testing.assert_allclose(res.avs, avs, rtol=1e-9)
    np.testing.assert_allclose(res.zin, zin, rtol=1e-9)
    np.testing.assert_allclose(res.zout, zout, rtol=1e-9)
    np.testing.assert_allclose(res.ai, ai, rtol=1e-9)


def test_power_gains_from_powers(stages):
    # GT = P_L / P_avs, GP = P_L / P_in, GA = P_avo / P_avs computed from the node voltages
    # (definitions: Gonzalez, Microwave Transistor Amplifiers, 2nd ed., sec. 2.6, from memory).
    zs, zl = 75 + 10j, 500 - 200j
    y = stages["ce"].data
    y11, y12, y21, y22 = y[:, 0, 0], y[:, 0, 1], y[:, 1, 0], y[:, 1, 1]
    vs = 1.0
    ys, yl = 1 / zs, 1 / zl
    det = (y11 + ys) * (y22 + yl) - y12 * y21
    v1 = vs * ys * (y22 + yl) / det
    v2 = -vs * ys * y21 / det
    i1 = y11 * v1 + y12 * v2
    p_l = 0.5 * np.abs(v2) ** 2 * yl.real
    p_in = 0.5 * (v1 * np.conj(i1)).real
    p_avs = abs(vs) ** 2 / (8 * zs.real)
    zout = 1 / (y22 - y12 * y21 / (y11 + ys))
    # Thevenin at port 2: open-circuit voltage with the source attached
    v2_oc = -vs * ys * y21 / ((y11 + ys) * y22 - y12 * y21)
    p_avo = np.abs(v2_oc) ** 2 / (8 * zout.real)
    res = terminate(stages["ce"], zs, zl)
    np.testing.assert_allclose(res.gt_db, 10 * np.log10(p_l / p_avs), atol=1e-9)
    np.testing.assert_allclose(res.gp_db, 10 * np.log10(p_l / p_in), atol=1e-9)
    np.testing.assert_allclose(res.ga_db, 10 * np.log10(p_avo / p_avs), atol=1e-9)


# --- stability and gain bounds against scikit-rf ---------------------------------------------
@pytest.mark.parametrize("config", ["ce", "cb", "cc"])
def test_k_msg_mag_u_match_scikit_rf(stages, config):
    # scikit-rf Network.stability (Rollett K), max_gain (MAG for K > 1, else MSG),
    # max_stable_gain and unilateral_gain (Gupta 1992).
    tp = stages[config]
    net = tp.to_skrf()
    res = terminate(tp, 50.0, 1e3)
    np.testing.assert_allclose(res.k, net.stability, rtol=1e-9)
    np.testing.assert_allclose(res.msg_db, 10 * np.log10(net.max_gain), atol=1e-9)
    np.testing.assert_allclose(res.u_db, 10 * np.log10(net.unilateral_gain), atol=1e-8)
    msg = np.where(res.k > 1, np.nan, res.msg_db)
    ok = ~np.isnan(msg)
    np.testing.assert_allclose(msg[ok], 10 * np.log10(net.max_stable_gain)[ok], atol=1e-9)


def test_random_networks_match_scikit_rf_including_k_above_1_with_large_delta():
    # Random S matrices; some have K > 1 with |Delta| > 1.  scikit-rf's max_gain applies the
    # MAG formula wherever K > 1; we do the same for msg_db and flag the point as not
    # unconditionally stable (Edwards and Sinsky 1992: unconditional stability <=> mu > 1
    # <=> K > 1 and |Delta| < 1; Rollett 1962).
    rng = np.random.default_rng(7)
    s = 0.9 * (rng.uniform(size=(4000, 2, 2)) * np.exp(2j * np.pi * rng.uniform(size=(4000, 2, 2))))
    s[:, 1, 0] *= 4
    tp = dm.TwoPort(np.arange(1, 4001) * 1e6, s, "s", 50.0)
    net = tp.to_skrf()
    st = stability_arrays(s)
    np.testing.assert_allclose(st["k"], net.stability, rtol=1e-9)
    np.testing.assert_allclose(st["msg_db"], 10 * np.log10(net.max_gain), atol=1e-8)
    k, d = st["k"], st["delta"]
    odd = (k > 1) & (d > 1)
    assert odd.sum() > 5, "the sample must contain K > 1 with |Delta| > 1"
    np.testing.assert_array_equal(st["mu"] > 1, (k > 1) & (d < 1))
    # In that case the simultaneous conjugate match with the MAG formula's sign (B1 > 0 root)
    # lies outside the unit circle: the MAG it gives needs an active termination
    # (Gonzalez, sec. 3.6, from memory).
    s11, s22, s12, s21 = s[odd, 0, 0], s[odd, 1, 1], s[odd, 0, 1], s[odd, 1, 0]
    delta = s11 * s22 - s12 * s21
    b1 = 1 + np.abs(s11) ** 2 - np.abs(s22) ** 2 - np.abs(delta) ** 2
    c1 = s11 - delta * np.conj(s22)
    g_minus = (b1 - np.sqrt(b1 ** 2 - 4 * np.abs(c1) ** 2)) / (2 * c1)
    assert np.all(np.abs(g_minus) > 1)


def test_mu_is_distance_to_the_unstable_region():
    # Edwards and Sinsky 1992: mu is the distance from the centre of the Smith chart to the
    # nearest unstable load reflection.  Geometric check with scikit-rf's stability circle
    # points (Network.stability_circle(target_port=1): the output-plane circle |Gamma_in| = 1).
    m = hybrid_pi()
    tp = dm.Stage(m, "ce").two_port(np.array([5e6, 50e6, 500e6]), "s", 50.0)
    net = tp.to_skrf()
    res = terminate(tp, 50.0, 50.0)
    # Shapes (npoints, F); target_port=1: load plane (mu), target_port=0: source plane (mu').
    load = net.stability_circle(target_port=1, npoints=20001)
    source = net.stability_circle(target_port=0, npoints=20001)
    s11, s22 = tp.data[:, 0, 0], tp.data[:, 1, 1]
    assert np.all(np.abs(s11) < 1) and np.all(np.abs(s22) < 1)  # centre stable in both planes
    np.testing.assert_allclose(res.mu, np.min(np.abs(load), axis=0), rtol=1e-3)
    np.testing.assert_allclose(res.mu_prime, np.min(np.abs(source), axis=0), rtol=1e-3)


@pytest.mark.parametrize("rs_rl", [(50.0, 50.0), (75.0, 75.0)])
def test_gt_equals_s21_squared_when_terminated_in_z0(stages, rs_rl):
    # With Zs = ZL = z0 the transducer gain is |S21|^2 (Pozar, Microwave Engineering, sec. 12.1,
    # from memory; scikit-rf supplies S21).
    rs, rl = rs_rl
    for tp in stages.values():
        net = tp.to_skrf()  # S at 50 ohm
        net.renormalize(rs)  # scikit-rf moves it to the new reference itself
        s21 = net.s[:, 1, 0]
        res = terminate(tp, rs, rl, z0=rs)
        np.testing.assert_allclose(res.gt_db, 20 * np.log10(np.abs(s21)), atol=1e-9)


# --- textbook worked example -------------------------------------------------------------------
def test_textbook_h_parameter_ce_amplifier():
    # Millman and Halkias, Integrated Electronics (McGraw-Hill, 1972), ch. 8, CE amplifier with
    # the book's typical h-parameters hie = 1.1 kOhm, hre = 2.5e-4, hfe = 50, hoe = 24 uA/V,
    # Rs = 1 kOhm, RL = 10 kOhm -- from memory.  Its results, rounded to four digits:
    # AI = -IL... = -hfe/(1 + hoe RL) = -40.32, Ri = hie + hre AI RL = 999.2 ohm,
    # AV = AI RL / Ri = -403.6, AVs = AV Ri/(Ri + Rs) = -201.7,
    # Zo = 1/(hoe - hfe hre/(hie + Rs)) = 55.41 kOhm.  (The book's AI is -I2/I1 with I2 into the
    # collector, the same as ai here.)
    tp = dm.TwoPort(None, [[1.1e3, 2.5e-4], [50.0, 24e-6]], "h", 50.0)
    res = terminate(tp, 1e3, 10e3)
    assert res.ai[0].real == pytest.approx(-40.32, abs=0.005)
    assert res.zin[0].real == pytest.approx(999.2, abs=0.05)
    assert res.av[0].real == pytest.approx(-403.6, abs=0.05)
    assert res.avs[0].real == pytest.approx(-201.7, abs=0.05)
    assert res.zout[0].real == pytest.approx(55.41e3, abs=5)
    assert np.all(np.abs(np.imag([res.ai, res.zin, res.av, res.avs, res.zout])) < 1e-9)


# --- physics sanity --------------------------------------------------------------------------
def test_cc_voltage_gain_below_one_and_gm_r_over_1_plus_gm_r():
    # Emitter follower at low frequency with rb = 0 and Rs = 0: av = gm R/(1 + gm R)
    # (1/beta correction: (beta+1)/beta gm R...); with R = ro || RL (Sedra and Smith, ch. on
    # BJT amplifiers, from memory).  The exact hybrid-pi result is (1 + 1/beta) gm R /
    # (1 + (1 + 1/beta) gm R); beta = 1e6 makes the two agree to ~1e-6.
    m = hybrid_pi(beta=1e6, rb=0.0, ft=None, cmu=0.0)
    rl = 1e3
    tp = dm.Stage(m, "cc").two_port(np.array([10.0]), "y")
    res = terminate(tp, 0.0, rl)
    r = m.ro * rl / (m.ro + rl)
    assert abs(res.av[0]) < 1
    assert res.av[0].real == pytest.approx(m.gm * r / (1 + m.gm * r), rel=1e-5)
    assert res.avs[0] == pytest.approx(res.av[0], rel=1e-12)  # Rs = 0


@pytest.mark.parametrize("beta", [50, 120, 400])
def test_cb_input_impedance_close_to_re(beta):
    # Common-base input resistance ~ re = alpha/gm for rb = 0 and a load much below ro; with ro
    # it is re (ro + RL) / (ro + RL/(beta + 1)) (Sedra and Smith, Microelectronic Circuits,
    # CB amplifier with ro, from memory), here 1.25 % above re (RL/ro = 1k/80k).
    m = hybrid_pi(beta=beta, rb=0.0)
    tp = dm.Stage(m, "cb").two_port(np.array([1e3]), "y")
    rl = 1e3
    res = terminate(tp, 50.0, rl)
    assert res.zin[0].real == pytest.approx(m.re, rel=0.02)
    assert res.zin[0].real == pytest.approx(m.re * (m.ro + rl) / (m.ro + rl / (beta + 1)), rel=1e-3)
    assert abs(res.zin[0].imag) < 0.01 * m.re


def test_mason_u_is_the_same_in_ce_cb_cc(stages):
    # U is invariant under lossless reciprocal embedding, so it is the same in every
    # configuration (Mason 1954; Gupta 1992).  Computed independently from the Y form
    # U = |y21 - y12|^2 / (4 (g11 g22 - g12 g21))  (Mason, from memory).
    us = {}
    for c, tp in stages.items():
        y = tp.data
        num = np.abs(y[:, 1, 0] - y[:, 0, 1]) ** 2
        den = 4 * (y[:, 0, 0].real * y[:, 1, 1].real - y[:, 0, 1].real * y[:, 1, 0].real)
        np.testing.assert_allclose(terminate(tp).u_db, 10 * np.log10(num / den), atol=1e-7)
        us[c] = terminate(tp).u_db
    np.testing.assert_allclose(us["cb"], us["ce"], atol=1e-6)
    np.testing.assert_allclose(us["cc"], us["ce"], atol=1e-6)


def test_open_load_and_values_that_do_not_exist():
    # Open load: ai = 0 and no load power (GT is NaN -> null); av = 1/A (chain matrix definition).
    m = hybrid_pi()
    tp = dm.Stage(m, "ce").two_port(np.array([1e3, 1e6]), "y")
    res = terminate(tp, 50.0, math.inf)
    abcd = tp.to("abcd").data
    np.testing.assert_allclose(res.av, 1 / abcd[:, 0, 0], rtol=1e-12)
    assert np.all(res.ai == 0) and np.all(np.isnan(res.gt_db))
    # S12 = 0 (unilateral given h with hre = 0): K and the MSG are unbounded, and the MAG is
    # the unilateral maximum |y21|^2 / (4 g11 g22) with y11 = 1/h11, y21 = h21/h11,
    # y22 = h22 (h12 = 0; h-to-y table and Gonzalez sec. 3.2, from memory).
    uni = dm.TwoPort(None, [[1e3, 0.0], [100.0, 1e-5]], "h", 50.0)
    r2 = terminate(uni, 50.0, 1e3)
    assert np.isnan(r2.k[0]) and r2.unilateral[0] and r2.msg_is_mag[0]
    assert r2.msg_db[0] == pytest.approx(10 * math.log10(0.1 ** 2 / (4 * 1e-3 * 1e-5)), abs=1e-9)


def test_bad_terminations_raise():
    tp = dm.Stage(hybrid_pi(), "ce").two_port(np.array([1e3]), "y")
    with pytest.raises(dm.InputError, match="^rs:"):
        terminate(tp, -50.0, 1e3)
    with pytest.raises(dm.InputError, match="^rl:"):
        terminate(tp, 50.0, -1e3 + 5j)


def test_termination_without_solution_raises():
    # A one-port-like network: Z = [[z, z], [z, z]] (a shunt resistor z) between Zs and ZL.
    # With a load that makes the loop impedance zero the network has no solution.
    # Chain matrix of a shunt admittance Y: A = 1, B = 0, C = Y, D = 1 (Pozar, table 4.1, from memory);
    # den = A + B YL + Zs (C + D YL) = 1 + Zs (Y + YL) = 0 for Zs = 50, YL = -Y - 1/50 -- not passive;
    # a passive case needs an active two-port: Y with y11 = -1/50 makes Zs + zin = 0.
    tp = dm.TwoPort(None, [[-1 / 50, 0.0], [0.01, 1 / 100]], "y", 50.0)
    with pytest.raises(dm.SingularParameterError, match="^rs, rl:"):
        terminate(tp, 50.0, 100.0)


def test_random_passive_and_active_networks_against_y_form():
    # Random Z matrices converted by devmodels; Y-form derivation as above (port equations).
    rng = np.random.default_rng(3)
    z = random_twoports(rng, 500)
    tp = dm.TwoPort(np.arange(1, 501.0), z, "z", 50.0)
    y = tp.to("y").data
    zs, zl = 30 + 5j, 80 - 20j
    ys, yl = 1 / zs, 1 / zl
    avs = -y[:, 1, 0] * ys / ((y[:, 0, 0] + ys) * (y[:, 1, 1] + yl) - y[:, 0, 1] * y[:, 1, 0])
    np.testing.assert_allclose(terminate(tp, zs, zl).avs, avs, rtol=1e-8)


@pytest.mark.parametrize("extras", [dict(), dict(rdeg=22.0, rfb=47e3)])
def test_terminate_configs_equals_one_stage_at_a_time(extras):
    # The fused block-by-block pipeline must give exactly what the step-by-step one gives
    # (same engine, so equality to rounding), over more points than one block and with an
    # open load (the broadcast source/load path).
    from devmodels.analysis import BLOCK, terminate, terminate_configs

    m = dm.HybridPi.from_bias(dm.BipolarBias(ic=2e-3, vce=5.0, beta=120, va=60.0, ft=400e6,
                                             cmu=1.5e-12, rb=40.0))
    f = np.logspace(2, 10, 3 * BLOCK + 77)  # three blocks or more: the threaded path
    for rl in (1e3, np.inf):
        fused = terminate_configs(dm.Stage(m, "ce", **extras), ("ce", "cb", "cc"), f, 75.0, rl, z0=50.0)
        for c in ("ce", "cb", "cc"):
            ref = terminate(dm.Stage(m, c, **extras).two_port(f), 75.0, rl, 50.0)
            for name in ("av", "avs", "ai", "zin", "zout", "gt_db", "gp_db", "ga_db", "k", "mu",
                         "mu_prime", "msg_db"):
                np.testing.assert_allclose(getattr(fused[c], name), getattr(ref, name), rtol=1e-12,
                                           equal_nan=True, err_msg=f"{c} {name}")
            # U: where the configuration's own Mason denominator cancels, the fused path takes
            # it from the best-conditioned cofactor of the indefinite matrix, terminate() from
            # the two-port -- equal in exact arithmetic, so equal here to rounding (1e-9 dB is
            # 2e-10 relative)
            np.testing.assert_allclose(fused[c].u_db, ref.u_db, rtol=0, atol=1e-9, equal_nan=True,
                                       err_msg=f"{c} u_db")
            assert fused[c].zl.shape == (f.size,) and fused[c].config == c


def test_floating_output_left_open_has_no_solution_and_says_why():
    # A FET with neither ro nor any drain capacitance, at 0 Hz: the drain node is reached only
    # by the controlled current source, so with the output open its voltage is undetermined
    # (the nodal matrix is singular: y22 = YL = 0 and y12 = 0; any nodal-analysis text, from
    # memory).  The message names the terminations and the reason, not an oscillation.
    tp = dm.Stage(dm.FetModel(gm=5e-3, cgs=200e-15, cgd=20e-15), "cs").two_port([0.0, 1e3])
    assert tp.data[0, 1, 1] == 0 and tp.data[0, 0, 1] == 0
    with pytest.raises(dm.SingularParameterError, match="^rs, rl: .* at 0 Hz: .*DC path") as exc:
        terminate(tp, 50.0, math.inf)
    assert "oscillat" not in str(exc.value)
    # with a load the drain has its DC path and the same network has a solution
    res = terminate(tp, 50.0, 1e3)
    assert res.av[0] == pytest.approx(-5e-3 * 1e3, rel=1e-12)  # -gm RL at 0 Hz


@pytest.mark.parametrize("z0", [50.0, (50.0, 75.0)])
def test_y_forms_of_the_invariants_match_the_s_definitions(z0):
    # Random (passive and active) networks: K, |Delta|, mu, mu', MAG/MSG and U from the Y forms
    # (stability_arrays_y) against the textbook S definitions evaluated on S from scikit-rf
    # (Network.s with a per-port z0): Rollett 1962, Edwards and Sinsky 1992, Gupta 1992 for U
    # (all from memory), and scikit-rf's own stability (K) and max_gain.
    import skrf

    from devmodels.analysis import stability_arrays_y

    rng = np.random.default_rng(11)
    z = random_twoports(rng, 2000)
    y = np.linalg.inv(z)
    z0p = np.broadcast_to(np.asarray(z0, dtype=float), (2,))
    net = skrf.Network(frequency=skrf.Frequency.from_f(np.arange(1, 2001) * 1e6, unit="hz"),
                       z=z, z0=np.broadcast_to(z0p, (2000, 2)))
    s = net.s
    s11, s12, s21, s22 = s[:, 0, 0], s[:, 0, 1], s[:, 1, 0], s[:, 1, 1]
    delta = s11 * s22 - s12 * s21
    k = (1 - abs(s11) ** 2 - abs(s22) ** 2 + abs(delta) ** 2) / (2 * abs(s12 * s21))
    mu = (1 - abs(s11) ** 2) / (abs(s22 - delta * s11.conj()) + abs(s12 * s21))
    mu_p = (1 - abs(s22) ** 2) / (abs(s11 - delta * s22.conj()) + abs(s12 * s21))
    kk = s21 / s12
    u = abs(kk - 1) ** 2 / (2 * k * abs(kk) - 2 * kk.real)
    st = stability_arrays_y(y, z0)
    np.testing.assert_allclose(st["k"], k, rtol=1e-8)
    np.testing.assert_allclose(st["k"], net.stability, rtol=1e-8)
    np.testing.assert_allclose(st["delta"], abs(delta), rtol=1e-9)
    np.testing.assert_allclose(st["mu"], mu, rtol=1e-8, atol=1e-12)
    np.testing.assert_allclose(st["mu_prime"], mu_p, rtol=1e-8, atol=1e-12)
    np.testing.assert_allclose(st["msg_db"], 10 * np.log10(net.max_gain), atol=1e-8)
    ok = u > 0
    assert ok.sum() > 100 and (~ok).sum() >= 5  # both signs of U occur
    np.testing.assert_allclose(st["u_db"][ok], 10 * np.log10(u[ok]), atol=1e-7)
    assert np.all(np.isnan(st["u_db"][~ok]))  # U <= 0 has no dB value


# --- values at the edges: an ideal source, a unilateral network, the stability boundary ---------
def test_ideal_source_gives_zero_gt_and_ga_not_unbounded(stages):
    # With Re(Zs) = 0 the available power of the source |Vs|^2 / (8 Rs) is unlimited while the
    # load power stays finite (avs finite), so GT = P_L / P_avs = 0 and GA = P_avo / P_avs = 0
    # (definitions: Gonzalez, sec. 2.6, from memory): no dB value (NaN), flagged ideal_source.
    # GP = P_L / P_in does not involve the source and keeps its value.
    tp = stages["ce"]
    ideal = terminate(tp, 0.0, 1e3)
    assert np.all(np.isnan(ideal.gt_db)) and np.all(np.isnan(ideal.ga_db))
    assert np.all(ideal.ideal_source) and not np.any(ideal.lossless_load)
    np.testing.assert_allclose(ideal.gp_db, terminate(tp, 50.0, 1e3).gp_db, atol=1e-9)
    # the limit Rs -> 0 is 0, not infinity: GT = 4 Rs Re(YL) |avs|^2 falls 10 dB per decade of Rs
    small = [terminate(tp, rs, 1e3) for rs in (1e-6, 1e-9)]
    np.testing.assert_allclose(small[0].gt_db - small[1].gt_db, 30.0, atol=1e-3)
    np.testing.assert_allclose(small[0].ga_db - small[1].ga_db, 30.0, atol=1e-3)
    # a purely reactive source has no resistance either
    assert np.all(terminate(tp, 30j, 1e3).ideal_source)


def test_load_without_resistance_gives_zero_gt_and_gp():
    # Re(YL) = 0 (open, or purely reactive): P_L = |V2|^2 Re(YL) / 2 = 0, so GT = GP = 0
    # (definitions, Gonzalez sec. 2.6, from memory); GA does not involve the load.
    tp = dm.Stage(hybrid_pi(), "ce").two_port(np.array([1e3, 1e6]), "y")
    for zl in (math.inf, 300j):
        res = terminate(tp, 50.0, zl)
        assert np.all(res.lossless_load) and not np.any(res.ideal_source)
        assert np.all(np.isnan(res.gt_db)) and np.all(np.isnan(res.gp_db))
        np.testing.assert_allclose(res.ga_db, terminate(tp, 50.0, 1e3).ga_db, atol=1e-9)


def _unilateral_y(eps):
    # A lossy unilateral two-port (y12 = 0) with a reverse transfer y12 = eps added.
    return np.array([[[0.4e-3 + 0.2e-3j, eps], [40e-3 - 5e-3j, 0.1e-3 + 0.05e-3j]]])


def test_mag_is_continuous_at_s12_zero():
    # For S12 -> 0 with |S11|, |S22| < 1 the MAG tends to the unilateral maximum
    # |S21|^2 / ((1 - |S11|^2)(1 - |S22|^2)) (Gonzalez, sec. 3.2, from memory); in Y terms
    # |y21|^2 / (4 g11 g22).  S from scikit-rf's y2s.
    import skrf.network as skn

    from devmodels.analysis import stability_arrays_y

    s = skn.y2s(_unilateral_y(0.0), 50.0)
    s11, s21, s22 = s[0, 0, 0], s[0, 1, 0], s[0, 1, 1]
    limit = 10 * math.log10(abs(s21) ** 2 / ((1 - abs(s11) ** 2) * (1 - abs(s22) ** 2)))
    assert limit == pytest.approx(10 * math.log10(abs(40e-3 - 5e-3j) ** 2 / (4 * 0.4e-3 * 0.1e-3)), abs=1e-9)
    for eps in (0.0, 1e-300, 1e-20, 1e-13):  # exactly unilateral, then nearly
        y = _unilateral_y(eps)
        st = stability_arrays_y(y, 50.0)
        assert st["msg_db"][0] == pytest.approx(limit, abs=1e-6), eps
        s_eps = skn.y2s(y, 50.0)
        assert stability_arrays(s_eps)["msg_db"][0] == pytest.approx(limit, abs=1e-6), eps
        res = terminate(dm.TwoPort(None, y[0], "y"), 1e3, 10e3)
        assert res.msg_is_mag[0] and res.msg_db[0] == pytest.approx(limit, abs=1e-6)
    assert np.isnan(stability_arrays_y(_unilateral_y(0.0), 50.0)["k"][0])  # K stays unbounded


def test_mag_near_unilateral_matches_scikit_rf_and_mpmath():
    # Where S12 is small but not tiny, scikit-rf's max_gain (MSG / (K + sqrt(K^2 - 1))) is
    # accurate and must agree; for tiny S12 its K^2 loses digits, so the reference is the same
    # definition at 50 digits with mpmath (Rollett 1962 for K, Gonzalez ch. 3 for MAG, from memory).
    import mpmath as mp
    import skrf

    from devmodels.analysis import stability_arrays_y

    eps = np.array([1e-9, 1e-8, 1e-7])
    y = np.concatenate([_unilateral_y(e) for e in eps])
    net = skrf.Network(frequency=skrf.Frequency.from_f(np.arange(1, 4) * 1e6, unit="hz"), y=y, z0=50.0)
    st = stability_arrays_y(y, 50.0)
    assert np.all(st["k"] > 1)
    np.testing.assert_allclose(st["msg_db"], 10 * np.log10(net.max_gain), atol=1e-8)
    mp.mp.dps = 50
    for e in (1e-9, 1e-12, 1e-15):
        yy = [[mp.mpc(0.4e-3, 0.2e-3), mp.mpf(e)], [mp.mpc(40e-3, -5e-3), mp.mpc(0.1e-3, 0.05e-3)]]
        p = yy[0][1] * yy[1][0]
        k = (2 * mp.re(yy[0][0]) * mp.re(yy[1][1]) - mp.re(p)) / abs(p)
        mag = abs(yy[1][0] / yy[0][1]) / (k + mp.sqrt(k * k - 1))
        got = stability_arrays_y(_unilateral_y(e), 50.0)["msg_db"][0]
        assert got == pytest.approx(float(10 * mp.log10(mag)), abs=1e-9), e


def test_unilateral_without_loss_at_a_port_has_no_finite_mag():
    # y12 = 0 and g22 = 0 (lossless output): the gain into a matched lossless output is
    # unbounded, so msg_db stays NaN and is not called a MAG (Gonzalez sec. 3.2, from memory:
    # Gu,max = |y21|^2 / (4 g11 g22) -> infinity).
    res = terminate(dm.TwoPort(None, [[1e-3, 0.0], [40e-3, 0.0]], "y"), 600.0, 10e3)
    assert np.isnan(res.msg_db[0]) and not res.msg_is_mag[0] and res.unilateral[0]


def test_stability_verdict_has_a_stated_tolerance():
    # A unilateral device with a lossless output: S12 = 0 and |S22| = 1, so mu = 1/|S22| = 1
    # exactly (Edwards and Sinsky 1992: with S12 = 0, mu = (1 - |S11|^2) / (|S22| (1 - |S11|^2)),
    # from memory).  Rounding puts the computed mu on either side of 1 from point to point; the
    # verdict must not follow the rounding: every point is marginal.
    from devmodels.analysis import STABILITY_TOL

    m = dm.HybridPi.from_bias(dm.BipolarBias(ic=1e-3, vce=5.0, beta=100, ft=300e6))
    f = np.geomspace(1e3, 1e8, 41)
    res = terminate(dm.Stage(m, "ce").two_port(f, "y"), 600.0, 10e3)
    np.testing.assert_allclose(res.mu, 1.0, rtol=0, atol=1e-12)
    assert not np.any(res.unconditional) and np.all(res.marginal)
    assert list(res.stability) == ["marginal"] * f.size
    assert res.verdicts(3)["stability"] == "marginal" and res.verdicts(-1)["unconditional"] is False
    # beyond the tolerance the verdict is decided: mu = (1 + z0 g22) / (1 - z0 g22) for y12 = 0
    # (|S22| = |1 - z0 y22| / |1 + z0 y22| with y22 real), so g22 = +-1e-8 S moves mu by about
    # +-1e-6 at 50 ohm
    assert STABILITY_TOL < 1e-6
    for g22, verdict in ((1e-8, "unconditional"), (-1e-8, "conditional"), (1e-14, "marginal")):
        r = terminate(dm.TwoPort(None, [[1e-3, 0.0], [40e-3, g22]], "y"), 600.0, 10e3, z0=50.0)
        assert r.mu[0] == pytest.approx((1 + 50 * g22) / (1 - 50 * g22), rel=1e-12)
        assert r.stability[0] == verdict and bool(r.unconditional[0]) == (verdict == "unconditional")

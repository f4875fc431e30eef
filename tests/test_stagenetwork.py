"""The stage as built: bias network and capacitors in the AC analysis, against hand formulas."""

from __future__ import annotations

import math

import numpy as np
import pytest

import devmodels as dm
from devmodels.analysis import terminate
from devmodels.stagenetwork import StageNetwork

RS_IDEAL = 1e-12  # an (almost) ideal source, ohm


def _par(*rs):
    return 1.0 / sum(1.0 / r for r in rs)


def _model(**kw):
    base = dict(gm=0.0387, r_pi=2.6e3, ro=math.inf, rb=0.0)
    base.update(kw)
    return dm.HybridPi(**base)


def _term(stage, f, rs, rl):
    t = terminate(stage.two_port([f]), rs, rl)
    return complex(t.av[0]), complex(t.avs[0]), complex(t.zin[0]), complex(t.zout[0])


def test_ce_divider_fully_bypassed():
    # av = -gm (ro || RC || RL) r_pi / (rb + r_pi), zin = R1 || R2 || (rb + r_pi)
    # (analog texts, the discrete CE amplifier with a bypassed emitter resistor; from memory).
    m = _model(ro=60e3, rb=80.0)
    net = StageNetwork("divider", r1=47e3, r2=10e3, rc=4.7e3, re=1.3e3, c_bypass="short")
    rl = 10e3
    av, _, zin, zout = _term(dm.Stage(m, "ce", network=net), 1e3, RS_IDEAL, rl)
    assert av == pytest.approx(-m.gm * _par(m.ro, 4.7e3, rl) * m.r_pi / (m.rb + m.r_pi), rel=1e-9)
    assert zin == pytest.approx(_par(47e3, 10e3, m.rb + m.r_pi), rel=1e-9)
    assert zout == pytest.approx(_par(m.ro, 4.7e3), rel=1e-6)


def test_ce_unbypassed_emitter_resistor():
    # ro infinite: zin = R1 || R2 || (rb + r_pi + (beta + 1) RE) and
    # av = -beta (RC || RL) / (rb + r_pi + (beta + 1) RE) (the reflection rule; from memory).
    m = _model(rb=50.0)
    beta = m.gm * m.r_pi
    net = StageNetwork("divider", r1=47e3, r2=10e3, rc=4.7e3, re=1.3e3)
    rl = 10e3
    av, _, zin, _ = _term(dm.Stage(m, "ce", network=net), 1e3, RS_IDEAL, rl)
    rin_base = m.rb + m.r_pi + (beta + 1) * 1.3e3
    assert zin == pytest.approx(_par(47e3, 10e3, rin_base), rel=1e-9)
    assert av == pytest.approx(-beta * _par(4.7e3, rl) / rin_base, rel=1e-9)


def test_ce_partly_bypassed():
    # Only re - re_bypassed stays in the AC circuit: as above with RE = 330 ohm.
    m = _model(rb=50.0)
    beta = m.gm * m.r_pi
    net = StageNetwork("divider", r1=47e3, r2=10e3, rc=4.7e3, re=1.3e3, re_bypassed=970.0, c_bypass="short")
    av, _, zin, _ = _term(dm.Stage(m, "ce", network=net), 1e3, RS_IDEAL, 10e3)
    rin_base = m.rb + m.r_pi + (beta + 1) * 330.0
    assert zin == pytest.approx(_par(47e3, 10e3, rin_base), rel=1e-9)
    assert av == pytest.approx(-beta * _par(4.7e3, 10e3) / rin_base, rel=1e-9)


def test_cc_follower_with_network():
    # Emitter follower, collector at AC ground: RE' = RE || RL,
    # av = (beta + 1) RE' / (rb + r_pi + (beta + 1) RE'), zin = R1 || R2 || (rb + r_pi + (beta + 1) RE')
    # (analog texts, the emitter follower; from memory).
    m = _model(rb=50.0)
    beta = m.gm * m.r_pi
    net = StageNetwork("divider", r1=47e3, r2=47e3, rc=0.0, re=2.2e3)
    rl = 1e3
    av, _, zin, _ = _term(dm.Stage(m, "cc", network=net), 1e3, RS_IDEAL, rl)
    rep = _par(2.2e3, rl)
    assert av == pytest.approx((beta + 1) * rep / (m.rb + m.r_pi + (beta + 1) * rep), rel=1e-9)
    assert zin == pytest.approx(_par(47e3, 47e3, m.rb + m.r_pi + (beta + 1) * rep), rel=1e-9)


def test_cb_with_base_bypassed():
    # Common base, base at AC ground: zin = RE || (rb + r_pi)/(beta + 1),
    # av = beta (RC || RL) / (rb + r_pi) (ro infinite; analog texts, from memory).
    m = _model(rb=50.0)
    beta = m.gm * m.r_pi
    net = StageNetwork("divider", r1=47e3, r2=10e3, rc=4.7e3, re=1.3e3, c_bypass=100e-6)  # the bypass is ignored in cb
    rl = 10e3
    av, _, zin, _ = _term(dm.Stage(m, "cb", network=net), 1e3, RS_IDEAL, rl)
    assert zin == pytest.approx(_par(1.3e3, (m.rb + m.r_pi) / (beta + 1)), rel=1e-9)
    assert av == pytest.approx(beta * _par(4.7e3, rl) / (m.rb + m.r_pi), rel=1e-9)


def test_one_coupling_capacitor_gives_the_single_pole_corner():
    # A single coupling capacitor with a resistive rest is one pole at 1/(2 pi C (Rs + Rin))
    # (the short-circuit time constant of that capacitor alone; any analog text, from memory):
    # there |avs| is the mid-band value over sqrt 2.
    m = _model(ro=60e3, rb=80.0)
    net = StageNetwork("divider", r1=47e3, r2=10e3, rc=4.7e3, re=1.3e3, c_bypass="short", c_in=1e-6)
    rs, rl = 600.0, 10e3
    st = dm.Stage(m, "ce", network=net)
    mid = dm.Stage(m, "ce", network=net.shorted())
    _, avs_mid, zin_mid, _ = _term(mid, 1e3, rs, rl)
    f_low = 1.0 / (2 * math.pi * 1e-6 * (rs + zin_mid.real))
    _, avs, _, _ = _term(st, f_low, rs, rl)
    assert abs(avs) == pytest.approx(abs(avs_mid) / math.sqrt(2), rel=1e-9)


def test_midband_shorts_the_capacitors_and_drops_device_capacitances():
    m = _model(ro=60e3, rb=80.0, c_pi=20e-12, c_mu=2e-12)
    net = StageNetwork("divider", r1=47e3, r2=10e3, rc=4.7e3, re=1.3e3, re_bypassed=1e3, c_bypass=47e-6,
                       c_in=1e-6, c_out=10e-6)
    mid = dm.Stage(m, "ce", network=net).midband()
    assert mid.model.c_pi == 0 and mid.model.c_mu == 0
    assert mid.network.capacitors() == {} and mid.network.c_bypass == "short"
    # at mid-band the result does not depend on frequency
    y = mid.two_port([1.0, 1e3, 1e9]).data
    np.testing.assert_allclose(y, np.broadcast_to(y[0], y.shape), rtol=1e-12)


def test_fet_stage_with_network_against_hand_formula():
    # CS with RG1, RG2, RD and a bypassed source resistor: av = -gm (ro || RD || RL),
    # zin = RG1 || RG2 (Sedra and Smith, the discrete CS amplifier; from memory).
    fet = dm.FetModel(gm=8e-3, ro=50e3)
    net = StageNetwork("divider", r1=2.2e6, r2=1e6, rc=3.3e3, re=1e3, c_bypass="short")
    av, _, zin, _ = _term(dm.Stage(fet, "cs", network=net), 1e3, RS_IDEAL, 20e3)
    assert av == pytest.approx(-8e-3 * _par(50e3, 3.3e3, 20e3), rel=1e-9)
    assert zin == pytest.approx(_par(2.2e6, 1e6), rel=1e-9)


@pytest.mark.parametrize("kwargs, name", [
    (dict(c_in=0.0), "c_in"), (dict(c_out=-1e-6), "c_out"), (dict(c_bypass="open"), "c_bypass"),
    (dict(re=100.0, re_bypassed=200.0, c_bypass=1e-6), "re_bypassed"),
    (dict(re=100.0, re_bypassed=50.0), "re_bypassed"), (dict(rc=-1.0), "rc"),
])
def test_bad_network_values_name_the_value(kwargs, name):
    base = dict(bias="divider", r1=47e3, r2=10e3)
    base.update(kwargs)
    with pytest.raises(dm.InputError, match=f"^{name}:"):
        StageNetwork(**base)


def test_missing_bias_resistor():
    with pytest.raises(dm.InputError, match="^r2: missing"):
        StageNetwork("divider", r1=47e3)
    with pytest.raises(dm.InputError, match="^r1: not part of a fixed network"):
        StageNetwork("fixed", rb=470e3, r1=1e3)


def test_ce_with_capacitors_against_an_independent_sympy_nodal_solution():
    # The whole CE stage (divider, RC, RE partly bypassed by a real capacitor, coupling
    # capacitors, hybrid-pi with rb, C_pi, C_mu, ro) written node by node here and solved
    # with sympy (KCL at every node, port 1 driven by a source behind Rs, port 2 loaded by
    # RL); the library's avs and zin must agree at several frequencies.
    sp = pytest.importorskip("sympy")
    m = dm.HybridPi(gm=0.0387, r_pi=2.6e3, ro=60e3, rb=80.0, c_pi=15e-12, c_mu=2e-12)
    vals = dict(R1=47e3, R2=10e3, RC=4.7e3, REu=330.0, REb=970.0, CB=47e-6, CI=1e-6, CO=10e-6,
                RS=600.0, RL=10e3)
    net = StageNetwork("divider", r1=vals["R1"], r2=vals["R2"], rc=vals["RC"], re=1.3e3, re_bypassed=970.0,
                       c_bypass=vals["CB"], c_in=vals["CI"], c_out=vals["CO"])
    st = dm.Stage(m, "ce", network=net)
    s = sp.Symbol("s")
    Vi, Vb, Vbp, Vc, Vo, Ve, Ve1 = sp.symbols("Vi Vb Vbp Vc Vo Ve Ve1")
    Vs = 1
    g = {k: sp.nsimplify(v) for k, v in vals.items()}
    gm, rpi, ro, rb, cpi, cmu = (sp.nsimplify(x) for x in (m.gm, m.r_pi, m.ro, m.rb, m.c_pi, m.c_mu))
    ypi = 1 / rpi + s * cpi
    eqs = [
        (Vi - Vs) / g["RS"] + (Vi - Vb) * s * g["CI"],                                   # input node
        (Vb - Vi) * s * g["CI"] + Vb / g["R1"] + Vb / g["R2"] + (Vb - Vbp) / rb,        # base terminal
        (Vbp - Vb) / rb + (Vbp - Ve) * ypi + (Vbp - Vc) * s * cmu,                     # internal base
        (Vc - Vbp) * s * cmu + gm * (Vbp - Ve) + (Vc - Ve) / ro + Vc / g["RC"] + (Vc - Vo) * s * g["CO"],
        (Vo - Vc) * s * g["CO"] + Vo / g["RL"],                                         # output node
        (Ve - Vbp) * ypi - gm * (Vbp - Ve) + (Ve - Vc) / ro + (Ve - Ve1) / g["REu"],   # emitter
        (Ve1 - Ve) / g["REu"] + Ve1 / g["REb"] + Ve1 * s * g["CB"],                     # bypassed node
    ]
    sol = sp.solve(eqs, [Vi, Vb, Vbp, Vc, Vo, Ve, Ve1], dict=True)[0]
    avs_f = sp.lambdify(s, sol[Vo], "numpy")
    zin_f = sp.lambdify(s, sol[Vi] / ((Vs - sol[Vi]) / g["RS"]), "numpy")
    for f in (5.0, 50.0, 1e3, 1e6, 30e6):
        _, avs, zin, _ = _term(st, f, vals["RS"], vals["RL"])
        assert avs == pytest.approx(complex(avs_f(2j * math.pi * f)), rel=1e-8)
        assert zin == pytest.approx(complex(zin_f(2j * math.pi * f)), rel=1e-8)


def test_terminate_configs_keeps_the_network():
    # The blocked analysis of several configurations must analyse the stage as built, not the
    # bare device: each configuration against terminate() of the same stage alone.
    from devmodels.analysis import terminate_configs

    m = _model(ro=60e3, rb=80.0, c_pi=10e-12, c_mu=1e-12)
    net = StageNetwork("divider", r1=47e3, r2=10e3, rc=4.7e3, re=1.3e3, c_bypass=47e-6, c_in=1e-6)
    f = np.geomspace(1.0, 1e8, 9)
    got = terminate_configs(dm.Stage(m, "ce", network=net), ("ce", "cb", "cc"), f, 600.0, 10e3)
    for c in ("ce", "cb", "cc"):
        want = terminate(dm.Stage(m, c, network=net).two_port(f), 600.0, 10e3)
        np.testing.assert_allclose(got[c].avs, want.avs, rtol=1e-9)
        np.testing.assert_allclose(got[c].zin, want.zin, rtol=1e-9)


# --- arrays of resistor values (a spread's samples) ------------------------------------------------
@pytest.mark.parametrize("config", ["ce", "cb", "cc"])
def test_a_network_of_arrays_equals_one_scalar_network_per_sample(config):
    # The same engine with arrays as element values (as the device model's in a spread): each
    # point of the array network against the scalar network of that sample, whose numbers the
    # hand-formula tests above check.
    m = _model(ro=60e3, rb=80.0, c_pi=12e-12, c_mu=2e-12)
    rng = np.random.default_rng(8)
    n = 5
    r = {name: nom * rng.uniform(0.9, 1.1, n) for name, nom in
         dict(r1=82e3, r2=15e3, rc=5.6e3, ru=220.0, rb=1.2e3).items()}
    caps = dict(c_bypass=100e-6, c_in=4.7e-6, c_out=10e-6, c_base=1e-6)
    arrays = StageNetwork("divider", r1=r["r1"], r2=r["r2"], rc=r["rc"], re=r["ru"] + r["rb"], re_bypassed=r["rb"],
                          **caps)
    for f in (20.0, 10e3):
        from devmodels.configs import config_y

        y = config_y(dm.Stage(m, config, network=arrays).indefinite_block(2 * math.pi * f, n), config)
        for k in range(n):
            one = StageNetwork("divider", r1=r["r1"][k], r2=r["r2"][k], rc=r["rc"][k], re=r["ru"][k] + r["rb"][k],
                               re_bypassed=r["rb"][k], **caps)
            ref = dm.Stage(m, config, network=one).two_port([f]).data[0]
            np.testing.assert_allclose(y[k], ref, rtol=1e-10, atol=0)


def test_resistors_and_with_resistors():
    net = StageNetwork("divider", r1=82e3, r2=15e3, rc=5.6e3, re=1.42e3, re_bypassed=1.2e3, c_bypass=100e-6)
    assert net.split
    assert net.resistors == pytest.approx(dict(r1=82e3, r2=15e3, rc=5.6e3, re_unbypassed=220.0, re_bypassed=1.2e3),
                                          rel=1e-12, abs=0)
    new = net.with_resistors({"re_unbypassed": np.array([200.0, 240.0]), "re_bypassed": np.array([1.1e3, 1.3e3]),
                              "rdeg": 5.0})
    np.testing.assert_array_equal(new.re, [1.3e3, 1.54e3])  # the operating point's re: the sum
    np.testing.assert_array_equal(new.re_bypassed, [1.1e3, 1.3e3])
    assert new.r1 == 82e3 and new.c_bypass == 100e-6
    # not split: re whole (no bypass, all of it bypassed, or a zero re); rc = 0 is no resistor
    whole = StageNetwork("fixed", rb=470e3, re=1e3, c_bypass="short")
    assert not whole.split and whole.resistors == {"rb": 470e3, "re": 1e3}
    moved = whole.with_resistors({"re": np.array([0.9e3, 1.1e3])})
    assert moved.re_bypassed is None and np.array_equal(moved.bypassed, [0.9e3, 1.1e3])
    given = StageNetwork("fixed", rb=470e3, re=1e3, re_bypassed=1e3, c_bypass=1e-6)
    np.testing.assert_array_equal(given.with_resistors({"re": np.array([2.0, 3.0])}).re_bypassed, [2.0, 3.0])
    assert StageNetwork("none").resistors == {}


@pytest.mark.parametrize("kwargs, start", [
    (dict(rc=np.array([1e3, -1.0])), "rc: expected resistances >= 0 ohm, got -1 (sample 1)"),
    (dict(r1=np.array([47e3, 0.0])), "r1: expected resistances > 0 ohm, got 0 (sample 1)"),
    (dict(rc=np.array([0.0, 1e3])), "rc: an array of resistances must be all positive or all zero"),
    (dict(re=np.array([100.0, 100.0]), re_bypassed=np.array([50.0, 150.0]), c_bypass=1e-6),
     "re_bypassed: 150 ohm is more than re = 100 ohm (sample 1)"),
    (dict(re=np.array([100.0, np.nan])), "re: expected resistances >= 0 ohm, got nan (sample 1)"),
    # scalars keep their messages
    (dict(rc=-1.0), "rc: expected a resistance >= 0 ohm, got -1.0"),
    (dict(re=100.0, re_bypassed=200.0, c_bypass=1e-6), "re_bypassed: 200 ohm is more than re = 100 ohm"),
])
def test_bad_arrays_of_resistances_name_the_value_and_the_sample(kwargs, start):
    base = dict(bias="divider", r1=47e3, r2=10e3) | kwargs
    with pytest.raises(dm.InputError) as e:
        StageNetwork(**base)
    assert str(e.value).startswith(start)

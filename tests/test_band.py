"""The whole band (devmodels.band): exact corners against a hand-written nodal solve, and the
time-constant estimates against the hand formulas of the analog texts."""

from __future__ import annotations

import math

import numpy as np
import pytest

import devmodels as dm
from devmodels.band import BandEdges, TimeConstant, band_edges, octc_terms, pass_band, sctc_terms
from devmodels.merit import frequency_figures
from devmodels.stagenetwork import StageNetwork

TWO_PI = 2 * math.pi


def _par(*rs):
    return 1.0 / sum(1.0 / r for r in rs)


def _model(**kw):
    base = dict(gm=0.0387, r_pi=2.6e3, ro=math.inf, rb=80.0)
    base.update(kw)
    return dm.HybridPi(**base)


# --- an independent solve: the CE stage written node by node here ------------------------------

def _ce_avs_direct(f, m, v):
    """V(out)/Vs of the whole CE stage from KCL at every node, stamped by hand (numpy solve).

    Nodes: in, b, b', c, out, e, e1 (bypassed node); the source Vs = 1 behind RS is its Norton
    equivalent (current 1/RS into ``in``, conductance 1/RS to ground).
    """
    s = 2j * math.pi * f
    idx = {n: i for i, n in enumerate(("in", "b", "bp", "c", "out", "e", "e1"))}
    Y = np.zeros((7, 7), dtype=complex)

    def adm(a, b, y):  # an admittance between a and b (None: ground)
        ia = idx.get(a)
        ib = idx.get(b)
        if ia is not None:
            Y[ia, ia] += y
        if ib is not None:
            Y[ib, ib] += y
        if ia is not None and ib is not None:
            Y[ia, ib] -= y
            Y[ib, ia] -= y

    adm("in", None, 1 / v["RS"])
    adm("in", "b", s * v["CI"])
    adm("b", None, 1 / v["R1"] + 1 / v["R2"])
    adm("b", "bp", 1 / m.rb)
    adm("bp", "e", 1 / m.r_pi + s * m.c_pi)
    adm("bp", "c", s * m.c_mu)
    if math.isfinite(m.ro):
        adm("c", "e", 1 / m.ro)
    adm("c", None, 1 / v["RC"])
    adm("c", "out", s * v["CO"])
    adm("out", None, 1 / v["RL"])
    adm("e", "e1", 1 / v["REu"])
    adm("e1", None, 1 / v["REb"] + s * v["CB"])
    # gm (V(b') - V(e)) flows from c to e through the source
    c, e, bp = idx["c"], idx["e"], idx["bp"]
    Y[c, bp] += m.gm
    Y[c, e] -= m.gm
    Y[e, bp] -= m.gm
    Y[e, e] += m.gm
    i = np.zeros(7, dtype=complex)
    i[idx["in"]] = 1 / v["RS"]
    return complex(np.linalg.solve(Y, i)[idx["out"]])


CE_VALUES = dict(R1=47e3, R2=10e3, RC=4.7e3, REu=100.0, REb=1.1e3, CB=47e-6, CI=1e-6, CO=10e-6,
                 RS=600.0, RL=10e3)


def _ce_stage(m, v=CE_VALUES, **over):
    kw = dict(r1=v["R1"], r2=v["R2"], rc=v["RC"], re=v["REu"] + v["REb"], re_bypassed=v["REb"],
              c_bypass=v["CB"], c_in=v["CI"], c_out=v["CO"])
    kw.update(over)
    return dm.Stage(m, "ce", network=StageNetwork("divider", **kw))


def test_exact_corners_are_3_db_below_midband_by_an_independent_nodal_solve():
    # ro infinite, so the mid-band gain has the hand formula of the partly bypassed CE stage:
    # avs = Rin/(Rs + Rin) * (-beta (RC || RL) / (rb + r_pi + (beta + 1) REu)),
    # Rin = R1 || R2 || (rb + r_pi + (beta + 1) REu) (reflection rule; from memory).
    m = _model(c_pi=15e-12, c_mu=2e-12)
    v = CE_VALUES
    band = band_edges(_ce_stage(m), v["RS"], v["RL"])
    beta = m.gm * m.r_pi
    rbase = m.rb + m.r_pi + (beta + 1) * v["REu"]
    rin = _par(v["R1"], v["R2"], rbase)
    mid = rin / (v["RS"] + rin) * (-beta * _par(v["RC"], v["RL"]) / rbase)
    assert band.midband_avs == pytest.approx(mid, rel=1e-12)
    level = abs(mid) / math.sqrt(2)
    assert band.f_low is not None and band.f_high is not None
    assert abs(_ce_avs_direct(band.f_low, m, v)) == pytest.approx(level, rel=1e-9)
    assert abs(_ce_avs_direct(band.f_high, m, v)) == pytest.approx(level, rel=1e-9)
    # and they are the corners nearest mid-band: inside the band the gain is above the level
    inside = np.geomspace(band.f_low * 1.01, band.f_high / 1.01, 50)
    assert all(abs(_ce_avs_direct(f, m, v)) > level for f in inside)
    assert abs(_ce_avs_direct(band.f_low / 1.01, m, v)) < level
    assert abs(_ce_avs_direct(band.f_high * 1.01, m, v)) < level


def test_one_coupling_capacitor_alone_sctc_and_exact_corner():
    # One coupling capacitor with a resistive rest: a single pole at 1/(2 pi C (Rs + Rin))
    # (any analog text, from memory); the estimate is then exact, and so is the corner.
    m = _model(ro=60e3)
    rs, rl, c = 600.0, 10e3, 1e-6
    st = dm.Stage(m, "ce", network=StageNetwork("divider", r1=47e3, r2=10e3, rc=4.7e3, re=1.3e3,
                                                 c_bypass="short", c_in=c))
    band = band_edges(st, rs, rl)
    rin = _par(47e3, 10e3, m.rb + m.r_pi)
    expect = 1 / (TWO_PI * c * (rs + rin))
    assert band.f_low_sctc == pytest.approx(expect, rel=1e-9)
    assert band.f_low == pytest.approx(expect, rel=1e-9)
    (term,) = band.low_terms
    assert term.name == "c_in" and term.capacitance == c
    assert term.resistance == pytest.approx(rs + rin, rel=1e-12)
    assert term.tau == pytest.approx(c * (rs + rin), rel=1e-12)


def test_output_coupling_capacitor_alone():
    # C_out sees (ro || RC) + RL (from memory); alone it is the single pole, exactly the corner.
    m = _model(ro=60e3)
    rs, rl, c = 600.0, 10e3, 2.2e-6
    st = dm.Stage(m, "ce", network=StageNetwork("divider", r1=47e3, r2=10e3, rc=4.7e3, re=1.3e3,
                                                 c_bypass="short", c_out=c))
    band = band_edges(st, rs, rl)
    expect = 1 / (TWO_PI * c * (_par(m.ro, 4.7e3) + rl))
    assert band.f_low_sctc == pytest.approx(expect, rel=1e-9)
    assert band.f_low == pytest.approx(expect, rel=1e-9)


def test_bypass_capacitor_alone_sees_the_emitter_looking_in():
    # R = RE_bypassed || (RE_unbypassed + (rb + r_pi + Rs || R1 || R2)/(beta + 1)), ro infinite
    # (from memory).
    m = _model()
    beta = m.gm * m.r_pi
    rs, rl, c = 600.0, 10e3, 47e-6
    st = dm.Stage(m, "ce", network=StageNetwork("divider", r1=47e3, r2=10e3, rc=4.7e3, re=1.2e3,
                                                 re_bypassed=1e3, c_bypass=c))
    band = band_edges(st, rs, rl)
    r = _par(1e3, 200.0 + (m.rb + m.r_pi + _par(rs, 47e3, 10e3)) / (beta + 1))
    (term,) = band.low_terms
    assert term.name == "c_bypass"
    assert term.resistance == pytest.approx(r, rel=1e-9)
    assert band.f_low_sctc == pytest.approx(1 / (TWO_PI * r * c), rel=1e-9)


def test_all_three_capacitors_each_term_by_hand_and_the_sum():
    # Each capacitor with the other two shorted (ro infinite; from memory):
    # c_in: Rs + R1 || R2 || (rb + r_pi + (beta + 1) REu); c_out: RC + RL;
    # c_bypass: REb || (REu + (rb + r_pi + Rs || R1 || R2)/(beta + 1)).
    m = _model()
    v = CE_VALUES
    beta = m.gm * m.r_pi
    band = band_edges(_ce_stage(m), v["RS"], v["RL"])
    want = {
        "c_in": v["RS"] + _par(v["R1"], v["R2"], m.rb + m.r_pi + (beta + 1) * v["REu"]),
        "c_out": v["RC"] + v["RL"],
        "c_bypass": _par(v["REb"], v["REu"] + (m.rb + m.r_pi + _par(v["RS"], v["R1"], v["R2"])) / (beta + 1)),
    }
    got = {t.name: t.resistance for t in band.low_terms}
    assert got.keys() == want.keys()
    for k in want:
        assert got[k] == pytest.approx(want[k], rel=1e-9), k
    caps = {"c_in": v["CI"], "c_out": v["CO"], "c_bypass": v["CB"]}
    total = sum(1 / (want[k] * caps[k]) for k in want) / TWO_PI
    assert band.f_low_sctc == pytest.approx(total, rel=1e-9)
    # largest share of the estimate (smallest tau) first
    shares = [1 / t.tau for t in band.low_terms]
    assert shares == sorted(shares, reverse=True)
    assert band.low_terms[0].frequency == pytest.approx(1 / (TWO_PI * band.low_terms[0].tau), rel=1e-15)


def test_common_base_capacitor_and_follower_output_capacitor():
    # CB, c_base alone: the base sees R1 || R2 || (rb + r_pi + (beta + 1)(RE || Rs));
    # CC, c_out alone: RL + RE || ((rb + r_pi + Rs || R1 || R2)/(beta + 1)) (ro infinite; from memory).
    m = _model()
    beta = m.gm * m.r_pi
    rs, rl = 50.0, 10e3
    cb = dm.Stage(m, "cb", network=StageNetwork("divider", r1=47e3, r2=10e3, rc=4.7e3, re=1.3e3, c_base=10e-6))
    (term,) = band_edges(cb, rs, rl).low_terms
    assert term.name == "c_base"
    assert term.resistance == pytest.approx(_par(47e3, 10e3, m.rb + m.r_pi + (beta + 1) * _par(1.3e3, rs)),
                                            rel=1e-9)
    cc = dm.Stage(m, "cc", network=StageNetwork("divider", r1=47e3, r2=47e3, re=2.2e3, c_out=10e-6))
    rs, rl = 600.0, 1e3
    (term,) = band_edges(cc, rs, rl).low_terms
    assert term.name == "c_out"
    assert term.resistance == pytest.approx(rl + _par(2.2e3, (m.rb + m.r_pi + _par(rs, 47e3, 47e3)) / (beta + 1)),
                                            rel=1e-9)


@pytest.mark.parametrize("with_network", [False, True])
def test_octc_of_a_ce_stage_against_the_hand_formula(with_network):
    # R_pi = r_pi || (rb + Rs'), R_mu = R_pi (1 + gm RL') + RL', RL' = ro || RC || RL, Rs' = Rs || R1 || R2
    # (Gray, Hurst, Lewis and Meyer ch. 7, from memory).
    m = _model(ro=60e3, c_pi=15e-12, c_mu=2e-12)
    rs, rl = 600.0, 10e3
    if with_network:
        st = _ce_stage(m)
        rsp, rlp = _par(rs, CE_VALUES["R1"], CE_VALUES["R2"]), _par(m.ro, CE_VALUES["RC"], rl)
        # an unbypassed REu would change R_pi: bypass all of re for the hand formula
        st = _ce_stage(m, re_bypassed=CE_VALUES["REu"] + CE_VALUES["REb"])
    else:
        st = dm.Stage(m, "ce")
        rsp, rlp = rs, _par(m.ro, rl)
    band = band_edges(st, rs, rl)
    r_pi0 = _par(m.r_pi, m.rb + rsp)
    r_mu0 = r_pi0 * (1 + m.gm * rlp) + rlp
    got = {t.name: t.resistance for t in band.high_terms}
    assert got["c_pi"] == pytest.approx(r_pi0, rel=1e-9)
    assert got["c_mu"] == pytest.approx(r_mu0, rel=1e-9)
    assert [t.name for t in band.high_terms] == ["c_mu", "c_pi"]  # the Miller-multiplied one dominates
    expect = 1 / (TWO_PI * (r_pi0 * m.c_pi + r_mu0 * m.c_mu))
    assert band.bandwidth_octc == pytest.approx(expect, rel=1e-9)


def test_octc_of_a_common_source_fet_with_drain_capacitance():
    # CS FET: R_gs = Rs, R_gd = Rs (1 + gm RL') + RL', R_db = RL' = ro || RL (from memory).
    fet = dm.FetModel(gm=5e-3, ro=40e3, cgs=3e-12, cgd=0.5e-12, cdb=1e-12)
    rs, rl = 1e3, 5e3
    terms = {t.name: t for t in octc_terms(dm.Stage(fet, "cs"), rs, rl)}
    rlp = _par(fet.ro, rl)
    assert terms["cgs"].resistance == pytest.approx(rs, rel=1e-9)
    assert terms["cgd"].resistance == pytest.approx(rs * (1 + fet.gm * rlp) + rlp, rel=1e-9)
    assert terms["cdb"].resistance == pytest.approx(rlp, rel=1e-9)
    # an ideal source (Rs = 0) grounds the gate: Cgs sees nothing, Cgd sees RL'
    terms0 = {t.name: t for t in octc_terms(dm.Stage(fet, "cs"), 0.0, rl)}
    assert terms0["cgs"].resistance == 0.0
    assert terms0["cgd"].resistance == pytest.approx(rlp, rel=1e-9)


def test_octc_includes_rex_through_the_netlist():
    # rex sits in the device's netlist between e and e'; an external rdeg of the same value
    # between the emitter and ground is the same circuit, so every resistance must agree, and
    # the emitter feedback lowers the resistance C_mu sees (R_mu with gm reduced by 1 + gm r).
    import dataclasses

    m = _model(ro=60e3, c_pi=15e-12, c_mu=2e-12)
    a = octc_terms(dm.Stage(dataclasses.replace(m, rex=5.0), "ce"), 600.0, 4e3)
    b = octc_terms(dm.Stage(m, "ce", rdeg=5.0), 600.0, 4e3)
    assert [t.name for t in a] == [t.name for t in b]
    for ta, tb in zip(a, b):
        assert ta.resistance == pytest.approx(tb.resistance, rel=1e-12)
    # and rex changes them (it is not ignored)
    a_mu = {t.name: t.resistance for t in a}["c_mu"]
    c_mu = {t.name: t.resistance for t in octc_terms(dm.Stage(m, "ce"), 600.0, 4e3)}["c_mu"]
    assert a_mu < 0.95 * c_mu


def test_a_peak_above_midband_does_not_move_the_corners():
    # A band-pass made of second-order high- and low-pass sections with Q = 2 (a 6 dB peak at each
    # edge).  For |1/(1 - x^2 + j x/Q)|^2 = 1/2, u = x^2 solves u^2 - (2 - 1/Q^2) u - 1 = 0
    # (any circuits text; the high-pass edge is the mirror x -> 1/x).  The corners are beyond the
    # peaks, and the peak is reported.
    q, f1, f2, mid = 2.0, 1.0, 1e8, -50.0 + 0j  # far apart: each edge sees the other section as 1

    def avs(f):
        x2, x1 = f / f2, f1 / f
        lp = 1 / (1 - x2 ** 2 + 1j * x2 / q)
        hp = 1 / (1 - x1 ** 2 - 1j * x1 / q)
        return mid * lp * hp

    b = 2 - 1 / q ** 2
    u = (b + math.sqrt(b * b + 4)) / 2
    f_low, f_high, f_mid, peak_db = pass_band(avs, mid, 1e-3, 1e11)
    assert f_high == pytest.approx(f2 * math.sqrt(u), rel=1e-9)
    assert f_low == pytest.approx(f1 / math.sqrt(u), rel=1e-9)
    assert f1 < f_mid < f2
    peak = 20 * math.log10(q / math.sqrt(1 - 1 / (4 * q * q)))  # second-order peak, from memory
    assert peak_db == pytest.approx(peak, abs=0.05)


def test_not_reached_and_absent_are_none():
    m = _model(c_pi=15e-12, c_mu=2e-12)
    v = CE_VALUES
    full = band_edges(_ce_stage(m), v["RS"], v["RL"])
    narrow = band_edges(_ce_stage(m), v["RS"], v["RL"], f_start=full.f_low * 2, f_stop=full.f_high / 2)
    assert narrow.f_low is None and narrow.f_high is None
    assert narrow.f_low_sctc == pytest.approx(full.f_low_sctc)  # estimates do not depend on the range
    # no network: no low corner, no low terms
    bare = band_edges(dm.Stage(m, "ce"), v["RS"], v["RL"])
    assert bare.f_low is None and bare.f_low_sctc is None and bare.low_terms == ()
    assert bare.f_high is not None and bare.bandwidth == bare.f_high
    # no device capacitance: no high corner, no high terms
    flat = band_edges(_ce_stage(_model()), v["RS"], v["RL"])
    assert flat.f_high is None and flat.bandwidth_octc is None and flat.high_terms == ()
    assert flat.f_low is not None
    # the whole range below the level: no pass band
    none = band_edges(_ce_stage(m), v["RS"], v["RL"], f_start=1e-3, f_stop=full.f_low / 10)
    assert none.f_mid is None and none.f_low is None and none.f_high is None


def test_bad_inputs():
    m = _model(c_pi=15e-12, c_mu=2e-12)
    with pytest.raises(dm.InputError, match="^start:"):
        band_edges(_ce_stage(m), 600.0, 1e3, f_start=1e6, f_stop=1e3)
    with pytest.raises(dm.InputError, match="^rl:"):
        band_edges(_ce_stage(m), 600.0, 0.0)
    with pytest.raises(dm.InputError, match="^rs:"):
        band_edges(_ce_stage(m), -5.0, 1e3)


def test_complex_terminations_use_the_full_impedance_for_the_exact_response():
    m = _model(c_pi=15e-12, c_mu=2e-12)
    v = CE_VALUES
    zl = 10e3 - 3e3j
    band = band_edges(_ce_stage(m), v["RS"], zl)
    # the estimates use Re(zl); the exact midband uses zl itself
    real = band_edges(_ce_stage(m), v["RS"], zl.real)
    assert band.f_low_sctc == real.f_low_sctc
    assert band.midband_avs != real.midband_avs
    yl = 1 / zl
    rc_l = 1 / (1 / v["RC"] + yl)
    beta = m.gm * m.r_pi
    rbase = m.rb + m.r_pi + (beta + 1) * v["REu"]
    rin = _par(v["R1"], v["R2"], rbase)
    assert band.midband_avs == pytest.approx(rin / (v["RS"] + rin) * (-beta * rc_l / rbase), rel=1e-12)


def test_frequency_figures_carry_the_band():
    m = _model(c_pi=15e-12, c_mu=2e-12)
    v = CE_VALUES
    st = _ce_stage(m)
    figs = frequency_figures(st, 1e-1, 1e10, v["RS"], v["RL"])
    band = band_edges(st, v["RS"], v["RL"], 1e-1, 1e10, 241)
    d = figs.as_dict()
    for key in ("midband_avs", "f_low", "f_low_sctc", "bandwidth_octc", "bandwidth", "bandwidth_miller"):
        assert key in d
    assert d["midband_avs"] == band.midband_avs == figs.avs0
    assert d["f_low"] == pytest.approx(band.f_low, rel=1e-12)
    assert d["bandwidth"] == pytest.approx(band.f_high, rel=1e-12)
    assert d["f_low_sctc"] == band.f_low_sctc and d["bandwidth_octc"] == band.bandwidth_octc
    assert figs.low_terms == band.low_terms and figs.high_terms == band.high_terms
    assert isinstance(band, BandEdges) and isinstance(band.low_terms[0], TimeConstant)


def test_the_documented_example_holds():
    m = dm.HybridPi(gm=0.04, r_pi=2.5e3, ro=50e3, rb=100.0, c_pi=20e-12, c_mu=2e-12)
    net = StageNetwork("divider", r1=47e3, r2=10e3, rc=4.7e3, re=1e3, c_in=1e-6, c_out=1e-6, c_bypass=47e-6)
    band = band_edges(dm.Stage(m, "ce", network=net), 600.0, 10e3)
    assert band.low_terms[0].name == "c_bypass"
    assert sctc_terms(dm.Stage(m, "ce", network=net), 600.0, 10e3) == band.low_terms

"""Frequency figures (devmodels.merit) against handbook relations of the hybrid-pi model."""

from __future__ import annotations

import math

import numpy as np
import pytest

import devmodels as dm
from devmodels.merit import bandwidth, frequency_figures, miller_bandwidth
from devmodels.search import crossing


def model(**kw):
    args = dict(ic=1e-3, vce=5.0, beta=100, va=None, ft=300e6, cmu=1e-12, rb=50.0)
    args.update(kw)
    return dm.HybridPi.from_bias(dm.BipolarBias(**args))


def test_crossing_of_a_single_pole_is_its_corner():
    # |1/(1 + j f/fc)| = 1/sqrt 2 exactly at fc (first-order low-pass; any circuits text).
    fc = 12.345e6
    f = crossing(lambda x: np.abs(1 / (1 + 1j * x / fc)), 1 / math.sqrt(2), 1e3, 1e10)
    assert f == pytest.approx(fc, rel=1e-9)


def test_crossing_not_reached_is_none():
    fn = lambda x: np.abs(1 / (1 + 1j * x / 1e9))  # noqa: E731
    assert crossing(fn, 0.5, 1e3, 1e6) is None       # not reached by the stop
    assert crossing(fn, 0.99999999, 1e10, 1e11) is None  # already below at the start


def test_ft_and_f_beta_match_hybrid_pi_relations():
    # fT ~ gm / (2 pi (C_pi + C_mu)) and f_beta = fT / beta (Gray, Hurst, Lewis and Meyer,
    # Analysis and Design of Analog Integrated Circuits, sec. 1.4, from memory).  The exact
    # |h21| includes the feed-forward through C_mu, so fT agrees to ~1 %.
    m = model()
    figs = frequency_figures(dm.Stage(m, "ce"), 1e3, 1e11)
    assert figs.ft == pytest.approx(m.ft, rel=0.01)
    assert figs.f_beta == pytest.approx(m.f_beta, rel=0.01)
    assert figs.h21_0 == pytest.approx(100, rel=1e-9)


def test_fmax_matches_the_classic_approximation():
    # fmax ~ sqrt(fT / (8 pi rb C_mu)) (Gray and Meyer sec. 1.4 / Pritchard, from memory);
    # holds when fmax >> f_beta and ro is infinite.
    m = model(rb=100.0)
    figs = frequency_figures(dm.Stage(m, "ce"), 1e3, 1e11)
    assert figs.fmax == pytest.approx(math.sqrt(m.ft / (8 * math.pi * m.rb * m.c_mu)), rel=0.02)


@pytest.mark.parametrize("config", ["ce", "cb", "cc"])
def test_fmax_is_the_same_in_every_configuration(config):
    # U (hence fmax) is invariant under lossless reciprocal embedding (Mason 1954).
    m = model()
    assert frequency_figures(dm.Stage(m, config), 1e3, 1e11).fmax == pytest.approx(
        frequency_figures(dm.Stage(m, "ce"), 1e3, 1e11).fmax, rel=1e-6)


def test_bandwidth_is_where_avs_is_3_db_down():
    # Independent evaluation: |avs| from the Y-form port equations at the found frequency.
    m = model()
    st = dm.Stage(m, "ce")
    bw, avs0 = bandwidth(st, 1e3, 1e11, 600.0, 2e3)
    y = st.two_port(np.array([bw]), "y").data[0]
    gs, gl = 1 / 600.0, 1 / 2e3
    avs = -y[1, 0] * gs / ((y[0, 0] + gs) * (y[1, 1] + gl) - y[0, 1] * y[1, 0])
    assert abs(avs) == pytest.approx(abs(avs0) / math.sqrt(2), rel=1e-6)


def test_miller_estimate_formula_and_its_error_is_reported():
    # Miller: C_in = C_pi + C_mu (1 + gm RL'), R = (Rs + rb) || r_pi (Sedra and Smith, from memory).
    m = model(va=50.0)
    rs, rl = 1e3, 4.7e3
    rlp = m.ro * rl / (m.ro + rl)
    c_in = m.c_pi + m.c_mu * (1 + m.gm * rlp)
    r = (rs + m.rb) * m.r_pi / (rs + m.rb + m.r_pi)
    expect = 1 / (2 * math.pi * r * c_in)
    assert miller_bandwidth(m, rs, rl) == pytest.approx(expect, rel=1e-12)
    figs = frequency_figures(dm.Stage(m, "ce"), 1e3, 1e11, rs, rl)
    assert figs.miller == pytest.approx(expect, rel=1e-12)
    # The Miller estimate ignores the output pole and the zero: it is an estimate within
    # a factor of ~2 of the real bandwidth (common practice, no source).
    assert 0.5 < figs.miller / figs.bandwidth < 2
    assert figs.miller_error == pytest.approx(figs.miller / figs.bandwidth - 1)


def test_figures_outside_the_range_are_none_and_no_capacitance_means_no_figures():
    m = model()
    figs = frequency_figures(dm.Stage(m, "ce"), 1e3, 1e5)
    assert figs.ft is None and figs.f_beta is None and figs.fmax is None and figs.bandwidth is None
    flat = model(ft=None, cmu=0.0)
    figs = frequency_figures(dm.Stage(flat, "ce"), 1e3, 1e11)
    assert figs.ft is None and figs.bandwidth is None and figs.miller is None
    with pytest.raises(dm.InputError, match="^start:"):
        frequency_figures(dm.Stage(m, "ce"), 1e6, 1e3)


def test_crossing_rising_finds_the_corner_nearest_the_top_of_the_range():
    # |j f/fc / (1 + j f/fc)| = 1/sqrt 2 exactly at fc (first-order high-pass; any circuits text).
    fc = 123.4
    hp = lambda x: np.abs(1j * x / fc / (1 + 1j * x / fc))  # noqa: E731
    assert crossing(hp, 1 / math.sqrt(2), 1e-3, 1e6, rising=True) == pytest.approx(fc, rel=1e-10)
    assert crossing(hp, 1 / math.sqrt(2), 1e3, 1e6, rising=True) is None   # above the level everywhere
    assert crossing(hp, 1 / math.sqrt(2), 1e-3, 1.0, rising=True) is None  # not above it at the top


def test_miller_with_rex_against_the_degenerated_hand_formula():
    # An emitter resistance r (rex) divides the voltage across C_pi and the gain by
    # 1 + (gm + 1/r_pi) r and multiplies the resistance into the base to r_pi + (beta + 1) r
    # (the degenerated CE stage; Sedra and Smith, from memory):
    # C_in = C_pi / D + C_mu (1 + gm RL / D), R = (Rs + rb) || (r_pi + (beta + 1) r), D = 1 + (gm + 1/r_pi) r.
    import dataclasses

    m = dataclasses.replace(model(), rex=5.0)
    rs, rl = 2e3, 3e3
    d = 1 + (m.gm + 1 / m.r_pi) * m.rex
    c_in = m.c_pi / d + m.c_mu * (1 + m.gm * rl / d)
    r = 1 / (1 / (rs + m.rb) + 1 / (m.r_pi + (m.beta + 1) * m.rex))
    assert miller_bandwidth(m, rs, rl) == pytest.approx(1 / (2 * math.pi * r * c_in), rel=1e-12)


def test_miller_with_rex_is_closer_to_the_exact_bandwidth_than_ignoring_it():
    # With rex = 5 ohm at 1 mA (gm rex ~ 0.19) the estimate that ignores rex is 5 % low; the one
    # with it is within 1 % of the exact -3 dB frequency (numbers of this invented device).
    import dataclasses

    m = dataclasses.replace(model(va=50.0), rex=5.0)
    rs, rl = 5e3, 1e3
    exact, _ = bandwidth(dm.Stage(m, "ce"), 1e3, 1e11, rs, rl)
    ignoring = miller_bandwidth(dataclasses.replace(m, rex=0.0), rs, rl)
    with_rex = miller_bandwidth(m, rs, rl)
    assert abs(ignoring / exact - 1) > 0.02
    assert abs(with_rex / exact - 1) < 0.01
    figs = frequency_figures(dm.Stage(m, "ce"), 1e3, 1e11, rs, rl)
    assert figs.miller == with_rex and abs(figs.miller_error) < 0.01


def test_miller_of_a_degenerated_fet_with_body_effect():
    # CS with a source resistance rsx and gmb (body at AC ground): the gain is
    # -gm RL / (1 + (gm + gmb) rsx) and the voltage across Cgs is (1 + gmb rsx)/(1 + (gm + gmb) rsx)
    # of the gate's (Sedra and Smith / Gray and Meyer, the source-degenerated stage; from memory).
    fet = dm.FetModel(gm=8e-3, gmb=1.5e-3, cgs=4e-12, cgd=0.6e-12, rsx=30.0, rg=20.0)
    rs, rl = 5e3, 2e3
    d = 1 + (fet.gm + fet.gmb) * fet.rsx
    c_in = fet.cgs * (1 + fet.gmb * fet.rsx) / d + fet.cgd * (1 + fet.gm * rl / d)
    expect = 1 / (2 * math.pi * (rs + fet.rg) * c_in)
    assert miller_bandwidth(fet, rs, rl) == pytest.approx(expect, rel=1e-12)
    exact, _ = bandwidth(dm.Stage(fet, "cs"), 1e3, 1e11, rs, rl)
    assert expect == pytest.approx(exact, rel=0.05)  # a dominant input pole: a few % (no source)


def test_miller_with_the_stage_network_and_the_t_model():
    # With a divider and a bypassed emitter the source is Rs' = Rs || R1 || R2 and the load
    # RL' = ro || RC || RL in the textbook formula (from memory).
    from devmodels.stagenetwork import StageNetwork

    m = model(va=50.0)
    net = StageNetwork("divider", r1=47e3, r2=10e3, rc=4.7e3, re=1e3, c_bypass=47e-6, c_in=1e-6, c_out=1e-6)
    rs, rl = 1e3, 10e3
    rsp = 1 / (1 / rs + 1 / 47e3 + 1 / 10e3)
    rlp = 1 / (1 / m.ro + 1 / 4.7e3 + 1 / rl)
    c_in = m.c_pi + m.c_mu * (1 + m.gm * rlp)
    r = (rsp + m.rb) * m.r_pi / (rsp + m.rb + m.r_pi)
    figs = frequency_figures(dm.Stage(m, "ce", network=net), 1e-1, 1e11, rs, rl)
    assert figs.miller == pytest.approx(1 / (2 * math.pi * r * c_in), rel=1e-12)
    assert figs.f_low is not None and figs.bandwidth is not None
    # the T model has no miller_parts: no estimate, no error
    assert frequency_figures(dm.Stage(m.to_t(), "ce"), 1e3, 1e11, rs, rl).miller is None

"""Configurations CE, CB, CC and reconfiguration."""

from __future__ import annotations

import numpy as np
import pytest

import devmodels as dm


def _model(**kw):
    base = dict(ic=1e-3, vce=5.0, beta=100, va=80.0, ft=300e6, cmu=2e-12, rb=60.0)
    base.update(kw)
    return dm.HybridPi.from_bias(dm.BipolarBias(**base))


def test_low_frequency_ce_h_parameters():
    # hie = rb + r_pi, hfe = beta, hoe = 1/ro (with r_mu infinite the reverse ratio hre
    # vanishes at low frequency); Sedra and Smith, h-parameter model of the BJT (from memory).
    m = _model()
    h = dm.Stage(m, "ce").two_port([1.0], "h").data[0]
    assert h[0, 0].real == pytest.approx(m.rb + m.r_pi, rel=1e-9)
    assert h[1, 0].real == pytest.approx(m.beta, rel=1e-9)
    assert h[1, 1].real == pytest.approx(1 / m.ro, rel=1e-9)
    assert abs(h[0, 1]) < 1e-6


def test_cb_and_cc_from_ce_classic_relations():
    # hib = hie/(1+hfe), hfb = -hfe/(1+hfe), hob = hoe/(1+hfe), hfc = -(1+hfe), hic = hie,
    # hoc = hoe (the classic CE -> CB / CC h-parameter conversion table, e.g. Millman and
    # Halkias, Integrated Electronics, appendix on h-parameter conversions; from memory).
    # These are approximations valid when hre and hoe*hie are small; the exact values from
    # the indefinite matrix must agree to that order.
    m = _model(va=200.0)
    f = [1.0]
    hie, hre, hfe, hoe = dm.Stage(m, "ce").two_port(f, "h").data[0].reshape(-1)
    hb = dm.Stage(m, "cb").two_port(f, "h").data[0]
    hc = dm.Stage(m, "cc").two_port(f, "h").data[0]
    small = abs(hoe * hie) + abs(hre)
    assert hb[0, 0] == pytest.approx(hie / (1 + hfe), rel=3 * small)
    assert hb[1, 0] == pytest.approx(-hfe / (1 + hfe), rel=3 * small)
    assert hb[1, 1] == pytest.approx(hoe / (1 + hfe), rel=3 * small + 1e-9)
    assert hc[1, 0] == pytest.approx(-(1 + hfe), rel=1e-9)
    assert hc[0, 0] == pytest.approx(hie, rel=1e-9)
    assert hc[1, 1] == pytest.approx(hoe, rel=1e-9)
    assert hc[0, 1] == pytest.approx(1 - hre, rel=1e-9)


def test_h21_of_ce_reaches_one_near_ft():
    # |h21| = |beta(jw)| falls to 1 at about fT when rb = 0 (definition of fT; the C_mu
    # feed-forward term shifts it by well under a percent here).
    m = _model(rb=0.0)
    f = np.logspace(7, 9.5, 4001)
    h21 = np.abs(dm.Stage(m, "ce").two_port(f, "h").data[:, 1, 0])
    f_unity = f[np.argmin(np.abs(h21 - 1))]
    assert f_unity == pytest.approx(m.ft, rel=0.03)


@pytest.mark.parametrize("src", ["ce", "cb", "cc"])
@pytest.mark.parametrize("dst", ["ce", "cb", "cc"])
@pytest.mark.parametrize("kind", ["y", "h", "s"])
def test_reconfigure_matches_the_direct_stage(src, dst, kind):
    m = _model(rcx=5.0, rex=1.0)
    f = [1e3, 1e6, 5e8]
    given = dm.Stage(m, src).two_port(f, kind)
    direct = dm.Stage(m, dst).two_port(f, kind)
    got = dm.reconfigure(given, src, dst)
    assert got.config == dst and got.kind == kind
    np.testing.assert_allclose(got.data, direct.data, rtol=1e-9, atol=1e-12 * np.abs(direct.data).max())


def test_reconfigure_refuses_mixed_families():
    tp = dm.Stage(_model(), "ce").two_port([1e3])
    with pytest.raises(dm.InputError, match="cannot reconfigure"):
        dm.reconfigure(tp, "ce", "cs")


def test_to_skrf_network_round_trip():
    skrf = pytest.importorskip("skrf")
    tp = dm.Stage(_model(), "ce").two_port(np.logspace(3, 9, 7), "s", z0=(50.0, 75.0))
    net = tp.to_skrf()
    assert isinstance(net, skrf.Network)
    np.testing.assert_allclose(net.s, tp.data, rtol=1e-12)
    np.testing.assert_allclose(net.f, tp.freq)
    # scikit-rf's own y from the network equals ours
    np.testing.assert_allclose(net.y, tp.to("y").data, rtol=1e-8)


def test_reconfigure_without_y_names_the_value():
    # det Z = 0: the Y parameters do not exist (Y = Z^-1), so the indefinite matrix cannot be formed
    tp = dm.TwoPort(None, np.array([[[1.0, 1.0], [1.0, 1.0]]]), "z")
    with pytest.raises(dm.SingularParameterError, match=r"^tp: reconfiguring needs the Y parameters"):
        dm.reconfigure(tp, "ce", "cb")

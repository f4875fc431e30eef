"""Bias networks: operating points against hand computations, regions, pnp, ratings."""

from __future__ import annotations

import math

import numpy as np
import pytest

from devmodels.exceptions import BiasError, InputError
from devmodels.dcbias import BiasNetwork, operating_point, solve_arrays

DIVIDER = BiasNetwork("divider", 12.0, rc=2.2e3, re=1e3, r1=47e3, r2=10e3)


def test_divider_by_thevenin_hand_computation():
    # Thevenin equivalent of the base divider with constant VBE(on) and IC = beta IB
    # (Sedra and Smith, Microelectronic Circuits, BJT DC analysis; from memory), by hand:
    #   VBB = 12 * 10k / 57k = 2.105263 V,  RBB = 47k || 10k = 8245.614 ohm
    #   IB  = (2.105263 - 0.7) / (8245.614 + 101 * 1000) = 12.8633 uA
    #   IC  = 100 IB = 1.28633 mA,  IE = 101 IB = 1.29920 mA
    #   VE  = 1.29920 V,  VB = 1.99920 V,  VC = 12 - 2200 * 1.28633e-3 = 9.17007 V,  VCE = 7.87087 V
    op = operating_point(DIVIDER, 100.0, vbe=0.7)
    assert op.region == "active"
    assert op.ib == pytest.approx(12.8633e-6, rel=1e-5)
    assert op.ic == pytest.approx(1.28633e-3, rel=1e-5)
    assert op.ie == pytest.approx(1.29920e-3, rel=1e-5)
    assert op.ve == pytest.approx(1.29920, rel=1e-5)
    assert op.vb == pytest.approx(1.99920, rel=1e-5)
    assert op.vc == pytest.approx(9.17007, rel=1e-5)
    assert op.vce == pytest.approx(7.87087, rel=1e-5)
    # dissipation IC VCE + IB VBE = 1.28633m * 7.87087 + 12.8633u * 0.7 = 10.1336 mW
    assert op.power == pytest.approx(10.1336e-3, rel=1e-4)


def test_divider_stiff_approximation():
    # With a very large beta the base current vanishes and VE -> VBB - VBE
    # (the "stiff divider" rule of thumb: common practice, no source).
    op = operating_point(DIVIDER, 1e7, vbe=0.7, beta_tc=0.0)
    assert op.ve == pytest.approx(12 * 10 / 57 - 0.7, rel=1e-3)


def test_fixed_bias_hand_computation():
    # Fixed bias: IB = (VCC - VBE) / RB (Boylestad and Nashelsky, DC biasing; from memory).
    # 12 V, RB = 470k, RC = 2.2k, beta 100: IB = 11.3 / 470k = 24.0426 uA, IC = 2.40426 mA,
    # VCE = 12 - 2200 * 2.40426e-3 = 6.71064 V.
    op = operating_point(BiasNetwork("fixed", 12.0, rc=2.2e3, rb=470e3), 100.0)
    assert op.region == "active"
    assert op.ib == pytest.approx(24.0426e-6, rel=1e-5)
    assert op.ic == pytest.approx(2.40426e-3, rel=1e-5)
    assert op.vce == pytest.approx(6.71064, rel=1e-5)


def test_collector_feedback_hand_computation():
    # Collector feedback: IB = (VCC - VBE) / (RB + (beta + 1)(RC + RE)), RC carries IE
    # (Boylestad and Nashelsky, DC biasing; from memory).  10 V, RB = 250k, RC = 4.7k,
    # RE = 1.2k, beta 90: IB = 9.3 / (250k + 91 * 5.9k) = 9.3 / 786.9k = 11.8186 uA,
    # IC = 1.06367 mA, IE = 1.07549 mA, VC = 10 - 4700 IE = 4.94520 V, VE = 1.29059 V.
    op = operating_point(BiasNetwork("collector-feedback", 10.0, rc=4.7e3, re=1.2e3, rb=250e3), 90.0)
    assert op.region == "active"
    assert op.ib == pytest.approx(11.8186e-6, rel=1e-5)
    assert op.ic == pytest.approx(1.06367e-3, rel=1e-5)
    assert op.vc == pytest.approx(4.94520, rel=1e-5)
    assert op.ve == pytest.approx(1.29059, rel=1e-5)
    assert op.vce == pytest.approx(4.94520 - 1.29059, rel=1e-5)


def test_saturation_detected_and_solved_at_vce_sat():
    # Built to saturate: 12 V, RB = 100k, RC = 10k, beta 100 would need IC = 11.3 mA, but RC
    # allows at most about 1.2 mA.  Constant-VCE(sat) model (Sedra and Smith, from memory):
    # IC = (12 - 0.3) / 10k = 1.17 mA, IB = (12 - 0.7) / 100k = 113 uA, forced beta about 10.4.
    op = operating_point(BiasNetwork("fixed", 12.0, rc=10e3, rb=100e3), 100.0, vce_sat=0.3)
    assert op.region == "saturation"
    assert op.vce == pytest.approx(0.3)
    assert op.ic == pytest.approx(1.17e-3)
    assert op.ib == pytest.approx(113e-6)
    assert op.ic / op.ib < 100
    with pytest.raises(BiasError, match="^network: .*saturation"):
        op.bipolar_bias()


def test_saturation_with_emitter_resistor_satisfies_both_loops():
    # Both loop equations (KVL around the base and the collector loop) must hold.
    net = BiasNetwork("divider", 10.0, rc=8.2e3, re=1e3, r1=10e3, r2=4.7e3)
    op = operating_point(net, 150.0, vbe=0.7)
    assert op.region == "saturation"
    vbb, rbb = 10 * 4.7 / 14.7, 10e3 * 4.7e3 / 14.7e3
    assert vbb - op.ib * rbb - 0.7 - op.ie * 1e3 == pytest.approx(0, abs=1e-9)
    assert 10 - op.ic * 8.2e3 - 0.3 - op.ie * 1e3 == pytest.approx(0, abs=1e-9)


def test_cutoff_detected():
    # Built to be cut off: the divider gives VBB = 12 * 5k / 105k = 0.5714 V < VBE(on) = 0.7 V.
    op = operating_point(BiasNetwork("divider", 12.0, rc=1e3, r1=100e3, r2=5e3), 100.0)
    assert op.region == "cutoff"
    assert op.ic == 0 and op.ib == 0 and op.power == 0
    assert op.vce == pytest.approx(12.0) and op.vb == pytest.approx(12 * 5 / 105)


def test_collector_feedback_does_not_saturate():
    # VCE = VBE + IB RB >= VBE(on) > VCE(sat) (follows from the loop; Boylestad, from memory).
    op = operating_point(BiasNetwork("collector-feedback", 12.0, rc=100e3, rb=1e3), 500.0)
    assert op.region == "active" and op.vce >= 0.7


def test_pnp_is_the_mirror_image():
    # Convention of this project (documented in devmodels.dcbias): every voltage and current negated.
    n = operating_point(DIVIDER, 100.0)
    p = operating_point(BiasNetwork("divider", -12.0, rc=2.2e3, re=1e3, r1=47e3, r2=10e3), 100.0, device="pnp")
    for k in ("ic", "ib", "ie", "vb", "ve", "vc", "vce"):
        assert getattr(p, k) == pytest.approx(-getattr(n, k))
    assert p.power == pytest.approx(n.power) and p.power > 0
    b = p.bipolar_bias()
    assert b.ic == pytest.approx(n.ic) and b.device == "pnp"


def test_power_and_breakdown_warnings():
    op = operating_point(DIVIDER, 100.0, pmax=5e-3, vceo=6.0)
    text = " ".join(op.warnings)
    assert any(w.startswith("power:") for w in op.warnings)
    assert any(w.startswith("vce:") for w in op.warnings)
    assert "burn" in text
    quiet = operating_point(DIVIDER, 100.0, pmax=1.0, vceo=30.0)
    assert quiet.warnings == ()


def test_supply_above_vceo_warns_even_when_vce_is_below():
    op = operating_point(DIVIDER, 100.0, vceo=10.0)   # VCE 7.9 V, but VCC 12 V
    assert [w.split(":")[0] for w in op.warnings] == ["vcc"]


def test_tolerance_range_brackets_nominal():
    net = BiasNetwork("divider", 12.0, rc=2.2e3, re=1e3, r1=47e3, r2=10e3, tol=0.05)
    op = operating_point(net, 100.0)
    lo, hi = op.tol_range["ic"]
    assert lo < op.ic < hi
    # IC is highest with R1 low, R2 high and RE low (Thevenin formula above, by inspection)
    worst = solve_arrays("divider", 12.0, 100.0, 0.7, rc=2.2e3, re=950.0, r1=47e3 * 0.95, r2=10.5e3)
    assert hi == pytest.approx(float(worst["ic"]))


def test_solve_arrays_is_vectorised_and_matches_scalar():
    beta = np.array([50.0, 100.0, 400.0])
    res = solve_arrays("divider", 12.0, beta, 0.7, rc=2.2e3, re=1e3, r1=47e3, r2=10e3)
    for i, b in enumerate(beta):
        assert res["ic"][i] == pytest.approx(operating_point(DIVIDER, b, beta_tc=0.0).ic)


def test_active_point_feeds_the_model():
    op = operating_point(DIVIDER, 100.0)
    b = op.bipolar_bias(va=80.0)
    assert b.ic == pytest.approx(op.ic) and b.vce == pytest.approx(op.vce) and b.va == 80.0


@pytest.mark.parametrize("kwargs, name", [
    (dict(kind="fixed", vcc=12, rc=1e3), "rb"),
    (dict(kind="fixed", vcc=12, rb=1e5, r1=1e3), "r1"),
    (dict(kind="divider", vcc=12, r1=1e3), "r2"),
    (dict(kind="divider", vcc=12, r1=1e3, r2=-5.0), "r2"),
    (dict(kind="fixed", vcc=12, rb=1e5, rc=-1.0), "rc"),
    (dict(kind="bridge", vcc=12), "network"),
    (dict(kind="fixed", vcc=0, rb=1e5), "vcc"),
    (dict(kind="fixed", vcc=12, rb=1e5, tol=-0.01), "tol"),
])
def test_bad_networks_name_the_value(kwargs, name):
    with pytest.raises(InputError, match=f"^{name}: "):
        BiasNetwork(**kwargs)


def test_npn_refuses_negative_supply():
    with pytest.raises(InputError, match="^vcc: "):
        operating_point(BiasNetwork("fixed", -12.0, rb=1e5, rc=1e3), 100.0)


def test_result_has_no_nan():
    for net in (DIVIDER, BiasNetwork("fixed", 12.0, rc=10e3, rb=100e3),
                BiasNetwork("divider", 12.0, rc=1e3, r1=100e3, r2=5e3)):
        op = operating_point(net, 100.0)
        assert all(math.isfinite(v) for v in (op.ic, op.ib, op.ie, op.vb, op.ve, op.vc, op.vce, op.power))

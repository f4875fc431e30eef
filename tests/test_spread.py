"""Spread analysis: the vectorised pipeline against the scalar one, corners, seeds, statistics."""

from __future__ import annotations

import math

import numpy as np
import pytest

import devmodels as dm
from devmodels.analysis import terminate
from devmodels.exceptions import InputError
from devmodels.dcbias import BiasNetwork, operating_point
from devmodels.configs import config_y
from devmodels.spread import SpreadRanges, SpreadSetup, evaluate, run_spread

NET = BiasNetwork("divider", 12.0, rc=2.2e3, re=1e3, r1=47e3, r2=10e3)
FULL = dict(va=80.0, ft=300e6, cmu=2e-12, rb=60.0, rcx=4.0, rex=1.5, rmu=8e6)


@pytest.mark.parametrize("config", ["ce", "cb", "cc"])
@pytest.mark.parametrize("rdeg, rfb", [(0.0, None), (150.0, None), (0.0, 30e3), (220.0, 47e3)])
def test_vectorised_y_matches_the_scalar_pipeline(config, rdeg, rfb):
    # A stage whose element values are arrays of samples (as spread builds it) against the
    # same stage built sample by sample, which the core tests check against scikit-rf and
    # hand formulas.
    rng = np.random.default_rng(5)
    ic = rng.uniform(0.2e-3, 5e-3, 4)
    beta = rng.uniform(50, 400, 4)
    models = [dm.HybridPi.from_bias(dm.BipolarBias(ic=i, vce=5.0, beta=b, **FULL)) for i, b in zip(ic, beta)]
    f = 20e6
    arrays = dm.HybridPi(gm=np.array([m.gm for m in models]), r_pi=np.array([m.r_pi for m in models]),
                         ro=np.array([m.ro for m in models]), c_pi=np.array([m.c_pi for m in models]),
                         c_mu=2e-12, r_mu=8e6, rb=60.0, rcx=4.0, rex=1.5)
    stage = dm.Stage(arrays, config, rdeg=np.full(4, rdeg), rfb=None if rfb is None else np.full(4, rfb))
    y = config_y(stage.indefinite_block(2 * np.pi * f, 4), config)
    for k, m in enumerate(models):
        ref = dm.Stage(m, config, rdeg, rfb).two_port([f]).data[0]
        np.testing.assert_allclose(y[k], ref, rtol=1e-10, atol=1e-15)


def test_evaluate_matches_scalar_terminated_analysis():
    # Each sample: operating point (network.operating_point), model, stage and
    # analysis.terminate, one by one, against the vectorised evaluation.
    setup = SpreadSetup(config="ce", freq=1e5, rs=600.0, rl=3.3e3, network=NET, rdeg=47.0, **FULL)
    beta = np.array([80.0, 150.0, 390.0])
    temp = np.array([250.0, 300.0, 360.0])
    fac = {"r1": np.array([0.97, 1.0, 1.04]), "rdeg": np.array([1.02, 0.99, 1.0])}
    got = evaluate(setup, beta, temp, fac)
    for k in range(3):
        net = BiasNetwork("divider", 12.0, rc=2.2e3, re=1e3, r1=47e3 * fac["r1"][k], r2=10e3)
        op = operating_point(net, beta[k], temp=temp[k])
        m = dm.HybridPi.from_bias(op.bipolar_bias(**FULL))
        t = terminate(dm.Stage(m, "ce", 47.0 * fac["rdeg"][k]).two_port([1e5]), 600.0, 3.3e3)
        assert got["ic"][k] == pytest.approx(op.ic, rel=1e-12)
        assert got["vce"][k] == pytest.approx(op.vce, rel=1e-12)
        for name in ("av", "avs", "ai", "zin", "zout"):
            assert got[name][k] == pytest.approx(abs(getattr(t, name)[0]), rel=1e-9)
        assert got["gt_db"][k] == pytest.approx(t.gt_db[0], abs=1e-9)
        assert got["k"][k] == pytest.approx(t.k[0], rel=1e-9)


def _bracketed(res, name):
    lo, hi = sorted((res.corners["min"][name], res.corners["max"][name]))
    v = res.values[name]
    return np.all((v >= lo * (1 - 1e-12)) & (v <= hi * (1 + 1e-12)))


def test_samples_bracketed_by_corners_when_beta_alone_varies():
    # IC rises and VCE falls monotonically with beta in a divider network (Thevenin formula,
    # Sedra and Smith, from memory), so every sample lies between the two corners.
    setup = SpreadSetup(network=NET, **FULL)
    res = run_spread(setup, SpreadRanges(80, 400, samples=5000, seed=11))
    for name in ("ic", "vce"):
        assert _bracketed(res, name), name
    assert res.corners["min"]["ic"] < res.corners["max"]["ic"]


def test_samples_bracketed_by_corners_when_temperature_alone_varies():
    # IC rises with temperature (VBE falls about 2 mV/K, beta rises: common practice, no source).
    setup = SpreadSetup(network=NET, **FULL)
    res = run_spread(setup, SpreadRanges(150, 150, temp_min=233.15, temp_max=398.15, samples=5000, seed=3))
    assert _bracketed(res, "ic") and _bracketed(res, "vce")


def test_input_resistance_bracketed_without_a_network():
    # Fixed IC: r_pi = beta VT / IC rises with beta and with T (VT = kT/q); with no C_mu and no
    # r_mu the CE input impedance is exactly r_pi (Sedra and Smith, from memory).
    setup = SpreadSetup(ic=1e-3, vce=5.0)
    res = run_spread(setup, SpreadRanges(100, 300, temp_min=270.0, temp_max=350.0, samples=4000, seed=2))
    assert _bracketed(res, "zin")
    # corner min: beta 100 at 300 K moved to 270 K by the documented 0.5 %/K (100 * 1.005**-30)
    beta_270 = 100 * 1.005 ** -30
    assert res.corners["min"]["zin"] == pytest.approx(beta_270 * dm.thermal_voltage(270.0) / 1e-3, rel=1e-12)


def test_triangular_beta_median():
    # Median of a triangular distribution (a, c, b) with c = a: b - sqrt((b - a)^2 / 2)
    # (standard formula of the triangular distribution, from memory) -> 300 - 141.42 = 158.58.
    setup = SpreadSetup(ic=1e-3, vce=5.0)
    res = run_spread(setup, SpreadRanges(100, 300, beta_typ=100, samples=200_000, seed=9))
    r_pi_median = 158.579 * dm.thermal_voltage(300.0) / 1e-3
    assert res.stats["zin"]["p50"] == pytest.approx(r_pi_median, rel=5e-3)


def test_same_seed_same_numbers_any_worker_count():
    setup = SpreadSetup(network=NET, rdeg=100.0, **FULL)
    ranges = SpreadRanges(100, 300, temp_min=260, temp_max=340, tol=0.05, samples=3000, seed=42)
    a = run_spread(setup, ranges, chunk=1000, workers=1)
    b = run_spread(setup, ranges, chunk=1000, workers=3)
    c = run_spread(setup, SpreadRanges(100, 300, temp_min=260, temp_max=340, tol=0.05, samples=3000, seed=43),
                   chunk=1000)
    for name in a.values:
        np.testing.assert_array_equal(a.values[name], b.values[name])
    assert a.stats == b.stats and a.seed == 42
    assert not np.array_equal(a.values["ic"], c.values["ic"])


def test_statistics_are_numpy_percentiles():
    # Against numpy's percentile (linear interpolation), the reference implementation.
    setup = SpreadSetup(network=NET, **FULL)
    res = run_spread(setup, SpreadRanges(100, 300, tol=0.1, samples=2001, seed=1))
    for name in ("av", "zin", "ic"):
        ref = np.percentile(res.values[name], [0, 5, 50, 95, 100])
        got = [res.stats[name][q] for q in ("min", "p5", "p50", "p95", "max")]
        np.testing.assert_allclose(got, ref, rtol=1e-14)


def test_samples_outside_the_active_region_are_counted_and_left_out():
    # Fixed bias that saturates for high beta: IC(active) = beta * 11.3 V / 1 Mohm and
    # RC = 10k allows at most 1.17 mA, so beta above about 104 saturates (hand computation).
    net = BiasNetwork("fixed", 12.0, rc=10e3, rb=1e6)
    res = run_spread(SpreadSetup(network=net), SpreadRanges(50, 200, samples=4000, seed=4))
    assert res.regions["saturation"] > 0 and res.regions["active"] > 0
    assert res.regions["saturation"] + res.regions["active"] == 4000
    sat = np.isnan(res.values["av"])
    assert sat.sum() == res.regions["saturation"]
    assert np.all(res.values["vce"][sat] == pytest.approx(0.3))
    assert any(w.startswith("network:") for w in res.warnings)
    assert res.corners["max"]["av"] is None and res.corners["min"]["av"] is not None


def test_rating_warnings_on_the_worst_sample():
    res = run_spread(SpreadSetup(network=NET, pmax=10e-3, vceo=50.0), SpreadRanges(80, 400, samples=2000, seed=1))
    assert any(w.startswith("power:") and "burn" in w for w in res.warnings)


@pytest.mark.parametrize("kwargs, name", [
    (dict(beta_min=300, beta_max=100), "beta_min"),
    (dict(beta_min=100, beta_max=300, temp_min=350, temp_max=300), "temp_min"),
    (dict(beta_min=100, beta_max=300, tol=-0.01), "tol"),
    (dict(beta_min=100, beta_max=300, samples=0), "samples"),
    (dict(beta_min=100, beta_max=300, beta_typ=50), "beta_typ"),
    (dict(beta_min=-1, beta_max=300), "beta_min"),
    (dict(beta_min=100, beta_max=300, seed=-2), "seed"),
])
def test_impossible_ranges_name_the_value(kwargs, name):
    with pytest.raises(InputError, match=f"^{name}: "):
        SpreadRanges(**kwargs)


def test_setup_needs_a_bias_point():
    with pytest.raises(InputError, match="^ic: "):
        SpreadSetup()
    with pytest.raises(InputError, match="^config: "):
        SpreadSetup(ic=1e-3, vce=5.0, config="cs")


def test_no_nan_in_reported_statistics():
    res = run_spread(SpreadSetup(ic=1e-3, vce=5.0), SpreadRanges(100, 200, samples=100, seed=1))
    assert res.stats["zout"] is None   # ro infinite: open output, reported as missing
    for st in res.stats.values():
        assert st is None or all(math.isfinite(v) for v in st.values())


def test_complex_terminations_match_the_scalar_analysis():
    # A complex source and load (50+j10, 1k-j200): each sample against analysis.terminate of
    # the same stage built alone.
    setup = SpreadSetup(config="ce", freq=2e6, rs=50 + 10j, rl=1e3 - 200j, ic=1e-3, vce=5.0, **FULL)
    beta = np.array([90.0, 250.0])
    temp = np.array([280.0, 330.0])
    got = evaluate(setup, beta, temp)
    for k in range(2):
        m = dm.HybridPi.from_bias(dm.BipolarBias(ic=1e-3, vce=5.0, beta=float(got["beta"][k]), temp=temp[k], **FULL))
        t = terminate(dm.Stage(m, "ce").two_port([2e6]), 50 + 10j, 1e3 - 200j)
        assert got["avs"][k] == pytest.approx(abs(t.avs[0]), rel=1e-9)
        assert got["gt_db"][k] == pytest.approx(t.gt_db[0], abs=1e-9)
    with pytest.raises(dm.InputError, match="^rs: expected an impedance with a real part >= 0"):
        SpreadSetup(config="ce", rs=-5 + 1j, ic=1e-3, vce=5.0)

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


# --- worst case, yield, streaming statistics ----------------------------------------------------
from devmodels import spread as spread_mod  # noqa: E402
from devmodels.fet import FetModel  # noqa: E402
from devmodels.fetbias import JfetBias, MosfetBias  # noqa: E402
from devmodels.spread import (FET_RESULTS, RESULT_KEYS, RESULTS, FetSpreadRanges, FetSpreadSetup,  # noqa: E402
                              QUANTILES)
from devmodels.worstcase import Z95, worst_case, yield_fraction  # noqa: E402

WC_SETUP = SpreadSetup(config="ce", freq=1e5, rs=600.0, rl=3.3e3, network=NET, rdeg=47.0, **FULL)
WC_RANGES = SpreadRanges(80.0, 400.0, temp_min=233.0, temp_max=373.0, tol=0.05, samples=20000, seed=7)
# collector-base feedback: |av| has an interior minimum in temperature at low beta (worstcase tests)
FB_SETUP = SpreadSetup(config="ce", freq=1e5, rs=600.0, rl=3.3e3, network=NET, rfb=30e3, va=80.0, ft=300e6,
                       cmu=2e-12, rb=60.0)
FB_RANGES = SpreadRanges(20.0, 400.0, temp_min=233.0, temp_max=373.0, tol=0.02, samples=20000, seed=5)


@pytest.mark.parametrize("setup, ranges", [(WC_SETUP, WC_RANGES), (FB_SETUP, FB_RANGES)])
def test_every_sample_lies_inside_the_worst_case_of_the_result(setup, ranges):
    res = run_spread(setup, ranges)
    assert set(res.worst) == set(RESULTS)
    searched = 0
    for name in RESULTS:
        w = res.worst[name]
        v = res.values[name][np.isfinite(res.values[name])]
        assert v.size > 0
        lo, hi = w["worst_min"], w["worst_max"]
        assert np.all(v >= lo - 1e-12 * abs(lo)), name
        assert np.all(v <= hi + 1e-12 * abs(hi)), name
        assert lo < hi and w["method"] in ("vertices", "vertices+search")
        searched += w["method"] == "vertices+search"
    assert searched > 0  # both methods are exercised by these two cases
    assert not any(s.startswith("worst case:") for s in res.warnings)
    # the same numbers as worstcase.worst_case called alone
    alone = worst_case(setup, ranges)
    assert res.worst["av"]["worst_min"] == alone["av"]["worst_min"]
    assert res.worst["ic"]["worst_max_at"] == alone["ic"]["worst_max_at"]


def test_as_dict_has_the_interface_keys():
    res = run_spread(WC_SETUP, SpreadRanges(80.0, 400.0, samples=3000, seed=2), specs=["av>=5"])
    d = res.as_dict()
    assert d["samples"] == 3000 and d["seed"] == 2
    for name in RESULTS:
        assert tuple(d[name]) == RESULT_KEYS
        for q in QUANTILES:
            assert d[name][q] == res.stats[name][q]
        assert d[name]["worst_max"] == res.worst[name]["worst_max"]
    assert set(d["yield"]) == {"fraction", "ci95", "specs", "worst_case_pass", "most_failed"}
    # the corners are kept, under their own name (every limit low / high), beside the worst case
    assert set(d["corners"]) == {"min", "max", "nominal"}
    json_text = __import__("json").dumps(d, allow_nan=False)  # no NaN or inf anywhere
    assert '"worst_min_at"' in json_text


def test_a_result_that_exists_nowhere_is_null_in_as_dict():
    d = run_spread(SpreadSetup(ic=1e-3, vce=5.0), SpreadRanges(100, 200, samples=200, seed=1)).as_dict()
    assert d["zout"] == dict.fromkeys(RESULT_KEYS) | {"method": "vertices"}  # ro infinite: open output


# Fixed base bias with RE = 0: IB = (12 V - 0.7 V) / 1.13 Mohm = 10 uA exactly, so IC = beta * 10 uA
# (hand computation; the worstcase tests check it through evaluate).  beta uniform on [100, 400]:
# P(IC >= 3.1 mA) = P(beta >= 310) = 0.3, P(3.1 mA <= IC <= 3.7 mA) = 60/300 = 0.2.
FIXED = SpreadSetup(config="ce", network=BiasNetwork("fixed", 12.0, rb=1.13e6, rc=1e3, re=0.0))


def test_yield_through_run_spread_against_the_closed_form():
    n = 100_000
    res = run_spread(FIXED, SpreadRanges(100.0, 400.0, samples=n, seed=12), specs=["ic>=3.1mA", "ic<=3.7mA"])
    y = res.yield_
    assert y["specs"] == ["ic>=0.0031", "ic<=0.0037"]
    # counted as it streamed: the same count as the kept values give
    ic = res.values["ic"]
    passed = int(np.count_nonzero((ic >= 3.1e-3) & (ic <= 3.7e-3)))
    assert y["passed"] == passed and y["fraction"] == passed / n
    assert y["failed_by"] == {"ic>=0.0031": int(np.count_nonzero(ic < 3.1e-3)),
                              "ic<=0.0037": int(np.count_nonzero(ic > 3.7e-3))}
    assert y["most_failed"] == "ic>=0.0031"  # fails 70 % of the samples, the other 10 %
    assert tuple(y["ci95"]) == yield_fraction(passed, n)[1]
    lo, hi = y["ci95"]
    assert lo <= 0.2 <= hi  # a 95 % interval (seed 12 covers; about 1 seed in 20 would not)
    assert hi - lo == pytest.approx(2 * Z95 * math.sqrt(0.2 * 0.8 / n), rel=0.02)  # width ~ 2 z sqrt(pq/n)
    assert y["worst_case_pass"] is False  # beta 100 gives 1 mA
    # a specification met over the whole box
    res = run_spread(FIXED, SpreadRanges(100.0, 400.0, samples=2000, seed=1), specs=["ic>=0.9mA"], keep_values=False)
    assert res.values is None
    assert res.yield_["fraction"] == 1.0 and res.yield_["worst_case_pass"] is True
    assert res.yield_["most_failed"] is None and res.yield_["ci95"][1] == 1.0


def test_yield_does_not_depend_on_keeping_values_or_workers():
    ranges = SpreadRanges(100.0, 400.0, temp_min=250.0, temp_max=350.0, samples=20000, seed=4)
    a = run_spread(FIXED, ranges, specs=["ic>=2mA"], keep_values=True, workers=1, chunk=3000)
    b = run_spread(FIXED, ranges, specs=["ic>=2mA"], keep_values=False, workers=3, chunk=3000)
    assert a.yield_ == b.yield_ and a.regions == b.regions


def test_streaming_statistics_within_their_stated_bound_of_numpy():
    res = run_spread(WC_SETUP, WC_RANGES, keep_values=True, exact_stats=False, chunk=4000)
    acc = res.stats_accuracy
    assert acc["method"] == "streaming" and acc["rel_width"] == 1e-4
    for name in RESULTS:
        v = res.values[name]
        v = v[np.isfinite(v)]
        ref = dict(zip(QUANTILES, np.percentile(v, list(QUANTILES.values()))))
        for q, x in res.stats[name].items():
            bound = acc["bounds"][name][q]
            assert abs(x - ref[q]) <= bound, (name, q, x, ref[q], bound)
            # the stated accuracy: about 1e-4 of the value (no merged bins here)
            assert bound <= 1.01e-4 * math.hypot(ref[q], 0.01 * np.min(np.abs(v[v != 0]))), (name, q)
        assert res.stats[name]["min"] == v.min() and res.stats[name]["max"] == v.max()  # exact
    exact = run_spread(WC_SETUP, WC_RANGES)
    assert exact.stats_accuracy["method"] == "exact"
    assert exact.stats_accuracy["bounds"]["av"] == dict.fromkeys(QUANTILES, 0.0)
    assert exact.stats["av"]["p50"] == np.percentile(exact.values["av"], 50)


def test_values_are_dropped_above_the_default_count(monkeypatch):
    monkeypatch.setattr(spread_mod, "KEEP_VALUES_MAX", 1000)
    small = run_spread(WC_SETUP, SpreadRanges(80.0, 400.0, samples=1000, seed=3))
    big = run_spread(WC_SETUP, SpreadRanges(80.0, 400.0, samples=1001, seed=3))
    assert small.values is not None and small.stats_accuracy["method"] == "exact"
    assert big.values is None and big.stats_accuracy["method"] == "streaming"
    kept = run_spread(WC_SETUP, SpreadRanges(80.0, 400.0, samples=1001, seed=3), keep_values=True)
    assert kept.values["av"].shape == (1001,)
    with pytest.raises(InputError, match="^exact_stats: "):
        run_spread(WC_SETUP, SpreadRanges(80.0, 400.0, samples=10, seed=3), keep_values=False, exact_stats=True)


def test_streaming_statistics_do_not_depend_on_chunk_order_or_workers():
    ranges = SpreadRanges(80.0, 400.0, temp_min=233.0, temp_max=373.0, tol=0.05, samples=30000, seed=9)
    a = run_spread(WC_SETUP, ranges, keep_values=False, workers=1, chunk=2048)
    b = run_spread(WC_SETUP, ranges, keep_values=False, workers=4, chunk=2048)
    assert a.stats == b.stats and a.stats_accuracy == b.stats_accuracy


def test_progress_is_reported_for_every_chunk():
    calls = []
    run_spread(WC_SETUP, SpreadRanges(80.0, 400.0, samples=10_000, seed=1), chunk=3000, keep_values=False,
               progress=lambda done, total: calls.append((done, total)))
    assert calls == [(3000, 10_000), (6000, 10_000), (9000, 10_000), (10_000, 10_000)]


def test_bad_specifications_name_the_value():
    with pytest.raises(InputError, match="^spec: 'gm' is not a result"):
        run_spread(WC_SETUP, SpreadRanges(80.0, 400.0, samples=10), specs=["gm>=1m"])
    with pytest.raises(InputError, match="^ranges: "):
        run_spread(WC_SETUP, FetSpreadRanges(idss_min=1e-3, idss_max=2e-3, vp_min=1, vp_max=2, samples=10))


# --- FET spread ---------------------------------------------------------------------------------
JFET = FetSpreadSetup(config="cs", freq=5e6, rs=600.0, rl=4.7e3 - 800j, device="njfet", id=2e-3, vds=8.0,
                      cgs=4e-12, cgd=1.2e-12, rg=30.0, rdeg=100.0, rfb=220e3)
JFET_RANGES = FetSpreadRanges(idss_min=4e-3, idss_max=12e-3, vp_min=-1.0, vp_max=-4.0, lambda_min=0.005,
                              lambda_max=0.02, tol=0.05, samples=40, seed=21)


def _redraw(setup, ranges):
    """The documented draw: one uniform array per limit, in the order of setup.limits()."""
    rng = np.random.default_rng(ranges.seed)
    return {k: rng.uniform(lo, hi, ranges.samples) for k, (lo, hi) in setup.limits(ranges).items()}


def test_jfet_spread_each_sample_against_the_scalar_pipeline():
    # Each sample: JfetBias -> FetModel.from_bias -> Stage -> two_port -> analysis.terminate,
    # built alone, against run_spread's value.
    res = run_spread(JFET, JFET_RANGES)
    assert list(JFET.limits(JFET_RANGES)) == ["idss", "vp", "lambda", "rdeg", "rfb"]
    p = _redraw(JFET, JFET_RANGES)
    for k in range(JFET_RANGES.samples):
        bias = JfetBias(id=2e-3, vds=8.0, idss=p["idss"][k], vp=-p["vp"][k], device="njfet",
                        lambda_=p["lambda"][k], cgs=4e-12, cgd=1.2e-12, rg=30.0)
        m = FetModel.from_bias(bias)
        t = terminate(dm.Stage(m, "cs", rdeg=100.0 * p["rdeg"][k], rfb=220e3 * p["rfb"][k]).two_port([5e6]),
                      600.0, 4.7e3 - 800j)
        for name in ("av", "avs", "ai", "zin", "zout"):
            assert res.values[name][k] == pytest.approx(abs(getattr(t, name)[0]), rel=1e-9), name
        assert res.values["gt_db"][k] == pytest.approx(t.gt_db[0], rel=0, abs=1e-9)
        assert res.values["k"][k] == pytest.approx(t.k[0], rel=1e-9)
        assert res.values["gm"][k] == pytest.approx(m.gm, rel=1e-12)
        assert res.values["ro"][k] == pytest.approx(m.ro, rel=1e-12)
    assert res.regions == {"saturation": 40}


@pytest.mark.parametrize("config", ["cs", "cg", "cd"])
@pytest.mark.parametrize("param", ["kn", "vov"])
def test_mosfet_spread_each_sample_against_the_scalar_pipeline(config, param):
    setup = FetSpreadSetup(config=config, freq=20e6, rs=50.0 + 5j, rl=2e3, device="nmos", id=1e-3, vds=3.0,
                           gamma=0.45, vsb=1.2, cgs=1.5e-12, cgd=0.3e-12, csb=0.2e-12, cdb=0.25e-12)
    lim = {"kn": dict(kn_min=2e-3, kn_max=9e-3), "vov": dict(vov_min=0.15, vov_max=0.6)}[param]
    ranges = FetSpreadRanges(**lim, lambda_min=0.02, lambda_max=0.1, samples=12, seed=3)
    res = run_spread(setup, ranges)
    p = _redraw(setup, ranges)
    for k in range(12):
        bias = MosfetBias(id=1e-3, vds=3.0, device="nmos", **{param: p[param][k]}, lambda_=p["lambda"][k],
                          gamma=0.45, vsb=1.2, cgs=1.5e-12, cgd=0.3e-12, csb=0.2e-12, cdb=0.25e-12)
        t = terminate(dm.Stage(FetModel.from_bias(bias), config).two_port([20e6]), 50.0 + 5j, 2e3)
        for name in ("av", "avs", "ai", "zin", "zout"):
            assert res.values[name][k] == pytest.approx(abs(getattr(t, name)[0]), rel=1e-9), name
        assert res.values["k"][k] == pytest.approx(t.k[0], rel=1e-9)


def test_fet_worst_case_and_yield():
    res = run_spread(JFET, FetSpreadRanges(idss_min=4e-3, idss_max=12e-3, vp_min=1.0, vp_max=4.0,
                                           lambda_min=0.005, lambda_max=0.02, tol=0.05, samples=20000, seed=2),
                     specs=["gm>=2m"])  # SPEC_UNITS has no "S" for gm yet (worstcase.py)
    for name in FET_RESULTS:
        v = res.values[name]
        w = res.worst[name]
        assert w["method"] in ("vertices", "vertices+search")  # the full search of worstcase.worst_case
        assert np.all(v >= w["worst_min"] * (1 - 1e-12)) and np.all(v <= w["worst_max"] * (1 + 1e-12)), name
    # gm = (2/|VP|) sqrt(ID IDSS) (Shockley's square law, as in fetbias): extremes at the corners
    assert res.worst["gm"]["worst_min"] == pytest.approx(2 / 4.0 * math.sqrt(2e-3 * 4e-3), rel=1e-12)
    assert res.worst["gm"]["worst_max"] == pytest.approx(2 / 1.0 * math.sqrt(2e-3 * 12e-3), rel=1e-12)
    at = res.worst["gm"]["worst_max_at"]
    assert (at["idss"], at["vp"]) == ("high", "low")
    gm = res.values["gm"]
    assert res.yield_["passed"] == int(np.count_nonzero(gm >= 2e-3)) and res.yield_["worst_case_pass"] is False
    assert set(res.as_dict()["gm"]) == set(RESULT_KEYS)
    assert res.corners["min"]["idss"] == 4e-3 and res.corners["max"]["vp"] == 4.0


@pytest.mark.parametrize("setup_kw, ranges_kw, name", [
    (dict(device="njfet", id=5e-3), dict(idss_min=4e-3, idss_max=8e-3, vp_min=1, vp_max=2), "id"),
    (dict(device="njfet", vds=1.0), dict(idss_min=4e-3, idss_max=8e-3, vp_min=1, vp_max=3), "vds"),
    (dict(device="njfet"), dict(kn_min=1e-3, kn_max=2e-3), "idss_min"),
    (dict(device="nmos"), dict(idss_min=4e-3, idss_max=8e-3, vp_min=1, vp_max=2), "idss_min"),
    (dict(device="nmos"), dict(kn_min=1e-3, kn_max=2e-3, vov_min=0.2, vov_max=0.3), "kn_min"),
    (dict(device="nmos", vds=0.5), dict(vov_min=0.2, vov_max=0.6), "vds"),
])
def test_impossible_fet_spreads_name_the_value(setup_kw, ranges_kw, name):
    with pytest.raises(InputError, match=f"^{name}: "):
        run_spread(FetSpreadSetup(**setup_kw), FetSpreadRanges(**ranges_kw, samples=10))


@pytest.mark.parametrize("kwargs, name", [
    (dict(idss_min=4e-3), "idss_max"),
    (dict(kn_min=3e-3, kn_max=1e-3), "kn_min"),
    (dict(lambda_min=-0.1, lambda_max=0.1), "lambda_min"),
    (dict(kn_min=1e-3, kn_max=2e-3, samples=0), "samples"),
])
def test_impossible_fet_ranges_name_the_value(kwargs, name):
    with pytest.raises(InputError, match=f"^{name}: "):
        FetSpreadRanges(**kwargs)


def test_fet_setup_refuses_a_bipolar_configuration():
    with pytest.raises(InputError, match="^config: "):
        FetSpreadSetup(config="ce")
    with pytest.raises(InputError, match="^rl: "):
        FetSpreadSetup(rl=-1.0)


def test_memory_does_not_grow_with_the_sample_count_when_values_are_not_kept():
    # tracemalloc sees numpy's buffers.  Keeping the values of 10 results for 180 000 more
    # samples would take 14.4 MB more; streaming may grow only by a few histogram bins.
    import tracemalloc

    def peak(n):
        tracemalloc.start()
        try:
            run_spread(WC_SETUP, SpreadRanges(80.0, 400.0, temp_min=233.0, temp_max=373.0, tol=0.05, samples=n,
                                              seed=1), keep_values=False, workers=1, chunk=4096, worst=False)
            return tracemalloc.get_traced_memory()[1]
        finally:
            tracemalloc.stop()

    small, big = peak(20_000), peak(200_000)
    assert big - small < 2e6, (small, big)


def test_fet_spread_with_every_limit_fixed_against_hand_formulas():
    # Common gate, no ro, no capacitance that matters at 1 kHz: av = gm RL and zin = 1/gm, with
    # gm = 2 ID / Vov = 2 mA / 0.2 V = 10 mS (square law; hand computation, from memory).
    setup = FetSpreadSetup(device="pmos", id=1e-3, vds=2.0, config="cg", rl=2e3, cgs=1e-12)
    res = run_spread(setup, FetSpreadRanges(vov_min=0.2, vov_max=0.2, samples=10, seed=1))
    assert np.all(res.values["av"] == pytest.approx(20.0, rel=1e-12))
    assert np.all(res.values["zin"] == pytest.approx(100.0, rel=1e-9))
    assert res.worst["av"]["worst_min"] == pytest.approx(20.0, rel=1e-12)
    assert res.worst["av"]["worst_min_at"] == {"vov": 0.2}
    assert res.stats["ro"] is None and res.as_dict()["ro"]["worst_max"] is None  # no lambda: ro open

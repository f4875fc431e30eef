"""Noise figure in the spread: samples against the scalar noise pipeline and a closed form,
the worst case, specifications, FETs, and the option being off by default."""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest

import devmodels as dm
from devmodels.constants import BOLTZMANN
from devmodels.dcbias import BiasNetwork, operating_point
from devmodels.exceptions import InputError
from devmodels.fet import FetModel
from devmodels.fetbias import JfetBias
from devmodels.noise import T0, noise_parameters, stage_noise
from devmodels.spread import (NOISE_RESULTS, RESULTS, FetSpreadRanges, FetSpreadSetup, SpreadRanges, SpreadSetup,
                              evaluate, run_spread)
from devmodels.worstcase import worst_case

NET = BiasNetwork("divider", 12.0, rc=2.2e3, re=1e3, r1=47e3, r2=10e3)
FULL = dict(va=80.0, ft=300e6, cmu=2e-12, rb=60.0, rcx=4.0, rex=1.5, rmu=8e6)


def _scalar_nf(stage, freq, rs):
    """NF and NFmin (dB) of one scalar stage through the noise command's pipeline."""
    r = noise_parameters(stage_noise(stage, [freq]), zs=rs)
    return float(r.nf_db[0]), float(r.nfmin_db[0])


@pytest.mark.parametrize("config, rs", [("ce", 600.0), ("cb", 50.0 + 20j), ("cc", 2.2e3)])
def test_noise_of_each_sample_equals_the_scalar_stage_noise(config, rs):
    # Each sample built alone (operating point, BipolarBias, HybridPi.from_bias, Stage) and put
    # through devmodels.noise.stage_noise + noise_parameters, as the `noise` command does, against
    # the vectorised spread evaluation at the same beta, temperature and resistor factors.
    setup = SpreadSetup(config=config, freq=1e5, rs=rs, rl=3.3e3, network=NET, rdeg=47.0, rfb=100e3, noise=True,
                        **FULL)
    rng = np.random.default_rng(11)
    beta = rng.uniform(80.0, 400.0, 5)
    temp = rng.uniform(240.0, 370.0, 5)
    fac = {name: rng.uniform(0.95, 1.05, 5) for name in setup.resistors}
    got = evaluate(setup, beta, temp, fac)
    for k in range(5):
        net = dataclasses.replace(NET, **{n: v * fac[n][k] for n, v in NET.resistors.items()})
        op = operating_point(net, beta[k], temp=temp[k])
        m = dm.HybridPi.from_bias(op.bipolar_bias(**FULL))
        stage = dm.Stage(m, config, 47.0 * fac["rdeg"][k], 100e3 * fac["rfb"][k])
        nf, nfmin = _scalar_nf(stage, 1e5, rs)
        assert got["nf_db"][k] == pytest.approx(nf, rel=1e-9, abs=0)
        assert got["nfmin_db"][k] == pytest.approx(nfmin, rel=1e-9, abs=0)


def test_noise_factor_of_ce_samples_against_the_closed_form_of_its_three_sources():
    # CE at a fixed IC, low frequency, no capacitances, no ro: the source Rs (at T0) and rb (at T)
    # in series drive r_pi; base shot noise 2qIB = 2kT/r_pi across r_pi, collector shot noise
    # 2qIC = 2kT gm.  Output short-circuit noise over the source's share, with R = Rs + rb:
    #   F = 1 + (T/T0) [rb/Rs + R^2/(2 r_pi Rs) + (R + r_pi)^2/(2 gm r_pi^2 Rs)]
    # (derived here from the three sources; the method as in analog texts' noise chapters,
    # from memory).  beta and temperature vary per sample.
    rs, rb, ic = 1.5e3, 120.0, 0.3e-3
    setup = SpreadSetup(config="ce", freq=1e3, rs=rs, rl=10e3, ic=ic, vce=5.0, rb=rb, noise=True)
    beta = np.array([60.0, 150.0, 320.0, 500.0])
    temp = np.array([230.0, 290.0, 330.0, 380.0])
    got = evaluate(setup, beta, temp)
    beta_t = got["beta"]
    vt = BOLTZMANN * temp / dm.constants.ELEMENTARY_CHARGE
    gm = ic / vt
    r_pi = beta_t / gm
    big_r = rs + rb
    f = 1 + temp / T0 * (rb / rs + big_r ** 2 / (2 * r_pi * rs) + (big_r + r_pi) ** 2 / (2 * gm * r_pi ** 2 * rs))
    np.testing.assert_allclose(got["nf_db"], 10 * np.log10(f), rtol=1e-9, atol=0)


def test_worst_case_noise_figure_bounds_every_sample():
    setup = SpreadSetup(config="ce", freq=1e5, rs=600.0, rl=3.3e3, network=NET, rdeg=47.0, noise=True, **FULL)
    ranges = SpreadRanges(80.0, 400.0, temp_min=233.0, temp_max=373.0, tol=0.05, samples=20000, seed=7)
    res = run_spread(setup, ranges)
    assert set(NOISE_RESULTS) <= set(res.worst) and set(NOISE_RESULTS) <= set(res.stats)
    for name in NOISE_RESULTS:
        v = res.values[name]
        assert np.all(np.isfinite(v))
        w = res.worst[name]
        assert w["worst_min"] < w["worst_max"]
        assert np.all(v >= w["worst_min"] - 1e-12 * abs(w["worst_min"])), name
        assert np.all(v <= w["worst_max"] + 1e-12 * abs(w["worst_max"])), name
        # exact percentiles (numpy's default method) of the kept values
        assert res.stats[name]["p50"] == pytest.approx(float(np.percentile(v, 50)), rel=1e-12)
    # the worst case evaluated alone gives the same extremes, and its point reproduces the value
    alone = worst_case(setup, ranges, results=["nf_db"])["nf_db"]
    assert alone["worst_max"] == res.worst["nf_db"]["worst_max"]
    assert not any(s.startswith("worst case:") for s in res.warnings)
    # the bias network is not in spread's AC analysis, so not in its noise figure: said once
    assert sum(s.startswith("nf_db: ") for s in res.warnings) == 1


def test_a_noise_specification_counts_the_samples_that_meet_it():
    setup = SpreadSetup(config="ce", freq=1e5, rs=600.0, rl=3.3e3, network=NET, rdeg=47.0, noise=True, **FULL)
    ranges = SpreadRanges(80.0, 400.0, temp_min=233.0, temp_max=373.0, tol=0.05, samples=5000, seed=3)
    first = run_spread(setup, ranges)
    limit = float(np.median(first.values["nf_db"]))
    res = run_spread(setup, ranges, specs=[f"nf_db<={limit!r}dB"])
    # counted directly on the kept samples (the definition of the yield)
    assert res.yield_["passed"] == int(np.count_nonzero(first.values["nf_db"] <= limit))
    assert res.yield_["worst_case_pass"] is False  # the median is below the worst maximum
    looser = run_spread(setup, ranges, specs=[f"nf_db<={res.worst['nf_db']['worst_max'] * 1.001!r}"])
    assert looser.yield_["fraction"] == 1.0 and looser.yield_["worst_case_pass"] is True


def test_noise_is_off_by_default_and_changes_no_other_result():
    base = SpreadSetup(config="ce", freq=1e5, rs=600.0, rl=3.3e3, network=NET, rdeg=47.0, **FULL)
    ranges = SpreadRanges(80.0, 400.0, temp_min=233.0, temp_max=373.0, tol=0.05, samples=3000, seed=9)
    off = run_spread(base, ranges)
    on = run_spread(dataclasses.replace(base, noise=True), ranges)
    assert base.results == RESULTS and not set(NOISE_RESULTS) & set(off.stats)
    assert on.setup.results == RESULTS + NOISE_RESULTS
    for name in RESULTS:
        np.testing.assert_array_equal(on.values[name], off.values[name])
    assert set(on.corners["nominal"]) >= set(NOISE_RESULTS)
    with pytest.raises(InputError, match="is not a result"):
        run_spread(base, ranges, specs=["nf_db<=3"])


@pytest.mark.parametrize("rs", [0.0, 1j * 50.0])
def test_noise_needs_a_source_with_a_real_part(rs):
    with pytest.raises(InputError, match=r"^rs: the noise figure needs"):
        SpreadSetup(ic=1e-3, vce=5.0, rs=rs, noise=True)
    SpreadSetup(ic=1e-3, vce=5.0, rs=rs)  # without noise a lossless source is fine


def test_jfet_noise_samples_equal_the_scalar_stage_noise():
    setup = FetSpreadSetup(config="cs", freq=1e4, rs=10e3, rl=4.7e3, device="njfet", id=1.5e-3, vds=6.0,
                           cgs=4e-12, cgd=1.5e-12, rg=30.0, rdeg=100.0, noise=True)
    ranges = FetSpreadRanges(idss_min=4e-3, idss_max=12e-3, vp_min=1.0, vp_max=3.0, tol=0.05, samples=30, seed=4)
    res = run_spread(setup, ranges)
    rng = np.random.default_rng(ranges.seed)  # the documented draw: one array per limit, in order
    p = {k: rng.uniform(lo, hi, ranges.samples) for k, (lo, hi) in setup.limits(ranges).items()}
    for k in range(0, ranges.samples, 7):
        m = FetModel.from_bias(JfetBias(id=1.5e-3, vds=6.0, idss=p["idss"][k], vp=-p["vp"][k], device="njfet",
                                        cgs=4e-12, cgd=1.5e-12, rg=30.0))
        nf, nfmin = _scalar_nf(dm.Stage(m, "cs", rdeg=100.0 * p["rdeg"][k]), 1e4, 10e3)
        assert res.values["nf_db"][k] == pytest.approx(nf, rel=1e-9, abs=0)
        assert res.values["nfmin_db"][k] == pytest.approx(nfmin, rel=1e-9, abs=1e-12)
    w = res.worst["nf_db"]
    assert w["worst_min"] <= res.stats["nf_db"]["min"] and res.stats["nf_db"]["max"] <= w["worst_max"] * (1 + 1e-12)
    assert math.isfinite(w["worst_max"])

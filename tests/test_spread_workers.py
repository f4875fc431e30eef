"""Spread runs split over worker processes: each chunk's samples depend on the seed and the chunk
index alone (those of one generator drawing chunk after chunk), the JSON is the same with one or
two workers, the progress reaches the total, and Rollett's K alone equals scikit-rf's."""

from __future__ import annotations

import json

import numpy as np
import pytest

from devmodels import spread as spread_mod
from devmodels.analysis import rollett_k_arrays_y, stability_arrays_y
from devmodels.dcbias import BiasNetwork
from devmodels.exceptions import InputError
from devmodels.spread import FetSpreadRanges, FetSpreadSetup, SpreadRanges, SpreadSetup, evaluate, run_spread
from devmodels.stagenetwork import StageNetwork

FULL = dict(va=80.0, ft=300e6, cmu=2e-12, rb=60.0, rcx=4.0, rex=1.5, rmu=8e6)
NET = BiasNetwork("divider", 15.0, rc=5.6e3, re=1.42e3, r1=82e3, r2=15e3)
BUILT = StageNetwork("divider", r1=82e3, r2=15e3, rc=5.6e3, re=1.42e3, re_bypassed=1.2e3, c_bypass=100e-6,
                     c_in=4.7e-6, c_out=10e-6)
# about 93 % of these samples saturate (rb too small for the high-beta parts)
SATURATING = SpreadSetup(network=BiasNetwork("fixed", 12.0, rc=4.7e3, re=0.0, rb=330e3), pmax=5e-3)
JFET = FetSpreadSetup(config="cs", freq=5e6, rs=600.0, rl=4.7e3 - 800j, device="njfet", id=2e-3, vds=8.0,
                      cgs=4e-12, cgd=1.2e-12, rg=30.0, rdeg=100.0)

CASES = {
    "built_triangular": (SpreadSetup(config="ce", freq=1e3, rs=50 + 10j, rl=2e3, network=NET, stage_network=BUILT,
                                     **FULL),
                         dict(beta_min=80.0, beta_max=300.0, beta_typ=150.0, temp_min=260.0, temp_max=340.0,
                              tol=0.05, ctol=0.1), ["av>=5.9", "zin>=1k"]),
    "saturating_fixed_temp": (SATURATING, dict(beta_min=50.0, beta_max=400.0), ["av>=80"]),
    "fixed_beta": (SpreadSetup(config="cb", network=NET, rdeg=47.0, **FULL),
                   dict(beta_min=150.0, beta_max=150.0, temp_min=233.0, temp_max=373.0, tol=0.01), ["zin<=40"]),
    "jfet_one_limit_fixed": (JFET, dict(idss_min=4e-3, idss_max=12e-3, vp_min=2.0, vp_max=2.0, lambda_min=0.005,
                                        lambda_max=0.02, tol=0.05), ["av>=10"]),
}


def _ranges(case: str, samples: int, seed: int):
    setup, kw, _ = CASES[case]
    cls = FetSpreadRanges if isinstance(setup, FetSpreadSetup) else SpreadRanges
    return cls(**kw, samples=samples, seed=seed)


def _sequential_samples(setup, ranges, chunk: int) -> dict:
    """The draws of one numpy generator, default_rng(seed), chunk after chunk, in the documented
    order: per chunk one array per limit (beta unless fixed, temperature, the resistors, then the
    capacitors; a FET's limits in the order of setup.limits(), a fixed one drawing nothing)."""
    rng = np.random.default_rng(ranges.seed)
    out: dict = {}
    for start in range(0, ranges.samples, chunk):
        m = min(chunk, ranges.samples - start)
        if isinstance(setup, FetSpreadSetup):
            part = {k: (np.full(m, lo) if lo == hi else rng.uniform(lo, hi, m))
                    for k, (lo, hi) in setup.limits(ranges).items()}
        else:
            r = ranges
            beta = (np.full(m, r.beta_min) if r.beta_min == r.beta_max else
                    rng.uniform(r.beta_min, r.beta_max, m) if r.beta_typ is None else
                    rng.triangular(r.beta_min, r.beta_typ, r.beta_max, m))
            part = {"beta": beta, "temp": rng.uniform(r.temp_min, r.temp_max, m)}
            part |= {k: rng.uniform(1 - r.tol, 1 + r.tol, m) for k in (setup.resistors if r.tol > 0 else ())}
            part |= {k: rng.uniform(1 - r.ctol, 1 + r.ctol, m) for k in (setup.capacitors if r.ctol > 0 else ())}
        for k, v in part.items():
            out.setdefault(k, []).append(v)
    return {k: np.concatenate(v) for k, v in out.items()}


@pytest.mark.parametrize("case", list(CASES))
def test_each_chunk_draws_what_one_generator_drawing_chunk_after_chunk_gives(case):
    # Reference: numpy's own generator, drawing the chunks in order (what run_spread did before
    # chunks were drawn independently); run_spread advances a fresh generator to each chunk.
    setup, _, _ = CASES[case]
    ranges = _ranges(case, 2300, seed=5)
    res = run_spread(setup, ranges, chunk=700, keep_values=True, worst=False)
    points = _sequential_samples(setup, ranges, 700)
    if isinstance(setup, FetSpreadSetup):
        ref = setup.evaluate_points(points)
    else:
        ref = evaluate(setup, points.pop("beta"), points.pop("temp"), points)
    for name in setup.results:
        np.testing.assert_array_equal(res.values[name], ref[name], err_msg=name)


def _json(res) -> str:
    return json.dumps({"result": res.as_dict(), "yield": res.yield_}, sort_keys=True)


@pytest.mark.parametrize("case", list(CASES))
def test_one_or_two_worker_processes_give_the_same_json(case, monkeypatch):
    # The same seed, streamed (values not kept) in this process and in two worker processes:
    # every number equal (the merged summaries are exact).  Kept values: the same arrays either
    # way, and the same counts, yield and exact extremes as the streamed run.
    pools = []
    make_pool = spread_mod._process_pool
    monkeypatch.setattr(spread_mod, "_process_pool", lambda n: pools.append(n) or make_pool(n))
    setup, _, specs = CASES[case]
    ranges = _ranges(case, 12_000, seed=9)
    one = run_spread(setup, ranges, chunk=500, workers=1, keep_values=False, specs=specs)
    assert pools == []
    two = run_spread(setup, ranges, chunk=500, workers=2, keep_values=False, specs=specs)
    assert pools == [2]  # the 23 chunks after the first went to two worker processes
    assert _json(one) == _json(two)
    kept = run_spread(setup, ranges, chunk=500, workers=2, keep_values=True, specs=specs)
    kept_here = run_spread(setup, ranges, chunk=500, workers=1, keep_values=True, specs=specs)
    assert pools == [2, 2]  # kept values come back from the workers too
    assert _json(kept) == _json(kept_here)
    for name in setup.results:
        np.testing.assert_array_equal(kept.values[name], kept_here.values[name])
    assert kept.regions == two.regions and kept.yield_ == two.yield_ and kept.warnings == two.warnings
    for name in setup.results:
        if kept.stats[name] is not None:
            assert (kept.stats[name]["min"], kept.stats[name]["max"]) == (two.stats[name]["min"],
                                                                          two.stats[name]["max"])


def test_a_result_without_a_value_in_the_first_chunk_streams_the_same_with_any_workers():
    # Seed 3, chunks of 10: the first ten samples all saturate, so the first chunk sets no grid for
    # the small-signal results (their scale then comes from the corners), in both runs alike.
    ranges = SpreadRanges(50.0, 400.0, samples=400, seed=3)
    kept = run_spread(SATURATING, ranges, chunk=10, keep_values=True, worst=False)
    assert np.isnan(kept.values["av"][:10]).all() and np.isfinite(kept.values["av"]).sum() > 20
    one = run_spread(SATURATING, ranges, chunk=10, workers=1, keep_values=False, worst=False)
    two = run_spread(SATURATING, ranges, chunk=10, workers=2, keep_values=False, worst=False)
    assert _json(one) == _json(two)
    assert one.stats["av"]["min"] == np.nanmin(kept.values["av"])


def test_progress_reaches_the_total_with_worker_processes():
    calls = []
    ranges = _ranges("fixed_beta", 20_000, seed=1)
    run_spread(CASES["fixed_beta"][0], ranges, chunk=400, workers=2, keep_values=False, worst=False,
               progress=lambda done, total: calls.append((done, total)))
    done = [d for d, _ in calls]
    assert calls[0] == (400, 20_000) and calls[-1] == (20_000, 20_000)
    assert all(b > a for a, b in zip(done, done[1:])) and len(calls) > 4


@pytest.mark.parametrize("workers", [0, -1, 1.5, True, "2"])
def test_bad_worker_counts_name_the_value(workers):
    with pytest.raises(InputError, match="^workers: "):
        run_spread(SATURATING, SpreadRanges(50.0, 400.0, samples=10, seed=1), workers=workers)


def test_rollett_k_alone_against_scikit_rf_and_equal_to_the_full_analysis():
    # scikit-rf's Network.stability (Rollett K from S), on Y converted by skrf.network.y2s; and
    # bit for bit the k of stability_arrays_y (one formula, two call sites); NaN where y12 = 0.
    import skrf

    rng = np.random.default_rng(4)
    n = 400
    y = (rng.normal(size=(n, 2, 2)) + 1j * rng.normal(size=(n, 2, 2))) * 10.0 ** rng.uniform(-5, -1, (n, 2, 2))
    y[:, 0, 0] += 0.05  # mostly passive at the input
    y[7, 0, 1] = 0.0
    k = rollett_k_arrays_y(y)
    np.testing.assert_array_equal(k, stability_arrays_y(y)["k"])
    assert np.isnan(k[7]) and np.isfinite(np.delete(k, 7)).all()
    ok = np.arange(n) != 7
    ref = skrf.Network(frequency=skrf.Frequency.from_f(np.arange(1, ok.sum() + 1), unit="hz"),
                       s=skrf.network.y2s(y[ok], z0=50.0), z0=50.0).stability
    np.testing.assert_allclose(k[ok], ref, rtol=1e-9)


def test_worker_processes_started_by_spawn_give_the_same_json(monkeypatch):
    # Platforms without fork (Windows, macOS) start workers by spawn: each imports devmodels and
    # receives the job pickled.  The same run there equals the one in this process.
    import multiprocessing
    from concurrent.futures import ProcessPoolExecutor

    monkeypatch.setattr(spread_mod, "_process_pool", lambda n: ProcessPoolExecutor(
        max_workers=n, mp_context=multiprocessing.get_context("spawn")))
    setup, _, specs = CASES["jfet_one_limit_fixed"]
    ranges = _ranges("jfet_one_limit_fixed", 6000, seed=2)
    one = run_spread(setup, ranges, chunk=500, workers=1, keep_values=False, specs=specs)
    two = run_spread(setup, ranges, chunk=500, workers=2, keep_values=False, specs=specs)
    assert _json(one) == _json(two)


def _spread_json_in_a_pool_worker(_):
    setup, _, specs = CASES["fixed_beta"]
    return _json(run_spread(setup, _ranges("fixed_beta", 6000, seed=3), chunk=500, workers=2, keep_values=False,
                            specs=specs))


def test_a_spread_inside_a_multiprocessing_pool_worker_runs_in_that_process():
    # multiprocessing.Pool workers are daemonic and may not start processes; there the chunks
    # stay in the worker, with the same numbers.
    import multiprocessing

    setup, _, specs = CASES["fixed_beta"]
    here = _json(run_spread(setup, _ranges("fixed_beta", 6000, seed=3), chunk=500, workers=1, keep_values=False,
                            specs=specs))
    with multiprocessing.get_context("fork").Pool(1) as pool:
        assert pool.map(_spread_json_in_a_pool_worker, [0]) == [here]

"""Worst case over the box of limits, yield with the Wilson interval, specifications, and
streaming quantiles against numpy."""

from __future__ import annotations

import itertools
import math

import numpy as np
import pytest

from devmodels.dcbias import BiasNetwork, operating_point
from devmodels.exceptions import InputError
from devmodels.spread import RESULTS, SpreadRanges, SpreadSetup, evaluate, run_spread
from devmodels.worstcase import (Z95, StreamingSummary, box_limits, check_specs, parse_spec, vertices,
                                 worst_case, worst_case_pass, yield_fraction)

NET = BiasNetwork("divider", 12.0, rc=2.2e3, re=1e3, r1=47e3, r2=10e3)
MODEL = dict(va=80.0, ft=300e6, cmu=2e-12, rb=60.0)
SETUP = SpreadSetup(config="ce", freq=1e5, rs=600.0, rl=3.3e3, network=NET, rdeg=47.0, **MODEL)
RANGES = SpreadRanges(beta_min=80.0, beta_max=400.0, temp_min=233.0, temp_max=373.0, tol=0.05,
                      samples=20000, seed=11)


def test_vertices_are_every_corner():
    v = vertices({"a": (1.0, 2.0), "b": (5.0, 5.0), "c": (-1.0, 1.0)})
    assert set(v) == {"a", "b", "c"}
    assert v["a"].shape == (4,)  # the fixed limit does not double the corners
    assert np.all(v["b"] == 5.0)
    assert sorted(zip(v["a"], v["c"])) == [(1.0, -1.0), (1.0, 1.0), (2.0, -1.0), (2.0, 1.0)]
    assert vertices({"x": (0.0, 1.0), "y": (0.0, 1.0), "z": (0.0, 1.0)})["x"].size == 8
    with pytest.raises(InputError, match="^a: "):
        vertices({"a": (2.0, 1.0)})


def test_worst_ic_and_vce_of_a_divider_against_a_loop_over_the_vertices():
    w = worst_case(SETUP, RANGES)
    ic, vce = {}, {}
    names = ("r1", "r2", "rc", "re")
    for beta in (80.0, 400.0):
        for temp in (233.0, 373.0):
            for f in itertools.product((0.95, 1.05), repeat=4):
                net = BiasNetwork("divider", 12.0, **{n: getattr(NET, n) * k for n, k in zip(names, f)})
                op = operating_point(net, beta, temp=temp)
                key = (beta, temp) + f
                ic[key], vce[key] = op.ic, op.vce
    for r, d in (("ic", ic), ("vce", vce)):
        assert w[r]["method"] == "vertices"
        assert w[r]["undefined_vertices"] == 0
        assert w[r]["worst_min"] == pytest.approx(min(d.values()), rel=1e-12)
        assert w[r]["worst_max"] == pytest.approx(max(d.values()), rel=1e-12)
    # the settings that reach them: IC is highest at high beta and temperature, low R1, high R2,
    # low RE (rdeg and RC do not move IC; their setting is any of the two)
    at = w["ic"]["worst_max_at"]
    assert (at["beta"], at["temp"], at["r1"], at["r2"], at["re"]) == ("high", "high", "low", "high", "low")
    assert set(at) == {"beta", "temp", "r1", "r2", "rc", "re", "rdeg"}


def test_every_monte_carlo_sample_lies_inside_the_worst_case():
    w = worst_case(SETUP, RANGES)
    sp = run_spread(SETUP, RANGES)
    assert sp.regions["active"] == RANGES.samples
    for r in RESULTS:
        v = sp.values[r]
        lo, hi = w[r]["worst_min"], w[r]["worst_max"]
        assert np.all(v >= lo - 1e-12 * abs(lo)), r
        assert np.all(v <= hi + 1e-12 * abs(hi)), r
        assert hi > lo


# A CE stage with a collector-base feedback resistor: with beta at its low limit, |av| dips
# at an interior temperature (about 250 K) below both ends of the temperature range.
FB = SpreadSetup(config="ce", freq=1e5, rs=600.0, rl=3.3e3, network=NET, rfb=30e3, **MODEL)
FB_RANGES = SpreadRanges(beta_min=20.0, beta_max=400.0, temp_min=233.0, temp_max=373.0)


def test_a_non_monotonic_result_has_its_extreme_found():
    w = worst_case(FB, FB_RANGES)
    e = w["av"]
    assert e["method"] == "vertices+search"
    # against a dense grid written here
    b, t = np.meshgrid(np.linspace(20.0, 400.0, 201), np.linspace(233.0, 373.0, 701), indexing="ij")
    grid = evaluate(FB, b.ravel(), t.ravel())["av"]
    corners = evaluate(FB, np.array([20.0, 20.0, 400.0, 400.0]), np.array([233.0, 373.0, 233.0, 373.0]))["av"]
    assert grid.min() < corners.min() * (1 - 1e-4)  # the case is really not monotonic
    assert e["worst_min"] <= grid.min() * (1 + 1e-12)
    assert e["worst_min"] >= grid.min() * (1 - 1e-5)
    at = e["worst_min_at"]
    assert at["beta"] == "low" and isinstance(at["temp"], float) and 233.0 < at["temp"] < 373.0
    # the reported setting reproduces the reported value
    again = evaluate(FB, np.array([20.0]), np.array([at["temp"]]))["av"][0]
    assert again == pytest.approx(e["worst_min"], rel=1e-12)
    assert e["worst_max"] == pytest.approx(max(grid.max(), corners.max()), rel=1e-9)


def test_box_limits_include_every_toleranced_resistor():
    lim = box_limits(SETUP, RANGES)
    assert lim == {"beta": (80.0, 400.0), "temp": (233.0, 373.0), "r1": (0.95, 1.05), "r2": (0.95, 1.05),
                   "rc": (0.95, 1.05), "re": (0.95, 1.05), "rdeg": (0.95, 1.05)}
    assert set(box_limits(SETUP, SpreadRanges(beta_min=80.0, beta_max=400.0))) == {"beta", "temp"}


# --- yield --------------------------------------------------------------------------------------
def test_wilson_interval_closed_forms():
    z2 = Z95 ** 2
    p, (lo, hi) = yield_fraction(0, 10)
    assert p == 0.0 and lo == 0.0 and hi == pytest.approx(z2 / (10 + z2), rel=1e-12)
    p, (lo, hi) = yield_fraction(10, 10)
    assert p == 1.0 and hi == 1.0 and lo == pytest.approx(10 / (10 + z2), rel=1e-12)
    # symmetric under pass <-> fail, centred on (k + z^2/2) / (n + z^2), not on k/n
    _, (a, b) = yield_fraction(3, 40)
    _, (c, d) = yield_fraction(37, 40)
    assert a == pytest.approx(1 - d, rel=1e-12) and b == pytest.approx(1 - c, rel=1e-12)
    assert (a + b) / 2 == pytest.approx((3 + z2 / 2) / (40 + z2), rel=1e-12)
    assert a > 0.0 and a < 3 / 40 < b
    for bad in ((5, 4), (-1, 4), (1, 0), (1.5, 4)):
        with pytest.raises(InputError):
            yield_fraction(*bad)


def test_yield_matches_the_closed_form_of_a_fixed_base_network():
    # Fixed base bias with RE = 0: IB = (VCC - VBE)/RB = 11.3 V / 1.13 Mohm = 10 uA, so
    # IC = beta * 10 uA exactly.  With beta uniform on [100, 400] the spec IC >= 3.1 mA
    # (beta >= 310) passes with probability (400 - 310)/(400 - 100) = 0.3.
    net = BiasNetwork("fixed", 12.0, rb=1.13e6, rc=1e3, re=0.0)
    setup = SpreadSetup(config="ce", network=net)
    ranges = SpreadRanges(beta_min=100.0, beta_max=400.0, samples=40000, seed=1)
    sp = run_spread(setup, ranges)
    assert sp.regions["active"] == 40000
    b = np.array([100.0, 310.0, 400.0])  # the closed form rests on IC = beta * 10 uA
    np.testing.assert_allclose(evaluate(setup, b, np.full(3, 300.0))["ic"], b * 1e-5, rtol=1e-12)
    mask, most = check_specs(sp.values, ["ic>=3.1mA"])
    frac, (lo, hi) = yield_fraction(int(mask.sum()), mask.size)
    assert lo <= 0.3 <= hi  # (a 95 % interval: with seed 1 it covers; about 1 seed in 20 would not)
    assert hi - lo < 0.01
    assert most == ("ic>=0.0031", int(mask.size - mask.sum()))
    # the coverage itself over 40 fixed seeds: a 95 % interval should miss about twice;
    # P(more than 6 misses) is 0.34 % for an exact 95 % interval
    misses = 0
    for seed in range(100, 140):
        sp = run_spread(setup, SpreadRanges(beta_min=100.0, beta_max=400.0, samples=4000, seed=seed))
        mask, _ = check_specs(sp.values, ["ic>=3.1mA"])
        _, (lo, hi) = yield_fraction(int(mask.sum()), mask.size)
        misses += not lo <= 0.3 <= hi
    assert misses <= 6


def test_parse_spec():
    assert parse_spec("av>=40") == ("av", ">=", 40.0)
    assert parse_spec(" zin >= 1k ") == ("zin", ">=", 1000.0)
    assert parse_spec("zout<=2.2kohm") == ("zout", "<=", 2200.0)
    assert parse_spec("gt_db>12dB") == ("gt_db", ">", 12.0)
    assert parse_spec("ic<2mA") == ("ic", "<", 2e-3)
    assert parse_spec("f_low<20Hz", results=("f_low",)) == ("f_low", "<", 20.0)
    with pytest.raises(InputError) as e:
        parse_spec("gain>=3")
    assert str(e.value).startswith("spec: 'gain' is not a result; expected one of av, avs, ai, zin")
    for bad in ("av=>40", "av=40", "av 40", "av!=40"):
        with pytest.raises(InputError, match=r"^spec: .*expected one of >=, <=, >, <"):
            parse_spec(bad)
    with pytest.raises(InputError, match="zin"):
        parse_spec("zin>=5V")  # a unit that contradicts the result
    with pytest.raises(InputError, match="spec"):
        parse_spec(">=40")


def test_check_specs_and_worst_case_pass():
    values = {"av": np.array([50.0, 39.0, np.nan, 45.0]), "zin": np.array([2e3, 3e3, 3e3, 900.0])}
    mask, most = check_specs(values, ["av>=40", "zin>=1k"])
    assert mask.tolist() == [True, False, False, False]
    assert most == ("av>=40", 2)  # the NaN sample fails too
    mask, most = check_specs(values, ["av<100"])
    assert mask.tolist() == [True, True, False, True] and most == ("av<100", 1)
    mask, most = check_specs(values, [])
    assert mask.all() and most is None
    with pytest.raises(InputError, match="'k' is not a result"):
        check_specs(values, ["k>=1"])
    w = worst_case(SETUP, RANGES)
    lo_ic, hi_ic = w["ic"]["worst_min"], w["ic"]["worst_max"]
    assert worst_case_pass(w, [f"ic>={lo_ic * 0.99}", f"ic<={hi_ic * 1.01}"])
    assert not worst_case_pass(w, [f"ic>={lo_ic * 1.01}"])
    assert not worst_case_pass(w, [f"ic<{hi_ic * 0.99}"])
    assert not worst_case_pass({"av": {"worst_min": None, "worst_max": None}}, ["av>=1"])


# --- streaming quantiles ------------------------------------------------------------------------
def _feed(summary, data, chunk):
    n = len(next(iter(data.values())))
    for i in range(0, n, chunk):
        summary.update({k: v[i:i + chunk] for k, v in data.items()})


def test_streaming_quantiles_against_numpy():
    rng = np.random.default_rng(8)
    n = 250_000
    data = {"wide": rng.lognormal(0.0, 2.0, n),                     # many decades, positive
            "signed": rng.normal(0.0, 1.0, n),                      # crosses zero
            "zeros": np.r_[np.zeros(2000), rng.normal(5.0, 0.1, n - 2000)],
            "gain": rng.uniform(30.0, 31.0, n)}
    data["gain"][::97] = np.nan  # samples without a value
    s = StreamingSummary()
    _feed(s, data, 16384)
    q = np.array([0.0, 1e-4, 0.01, 0.05, 0.25, 0.5, 0.75, 0.95, 0.99, 1.0])
    for name, v in data.items():
        fin = v[np.isfinite(v)]
        ref = np.quantile(fin, q)
        est = s.quantile(name, q)
        for x, y in zip(est, ref):
            assert abs(x - y) <= s.error_bound(name, y), (name, x, y)
        assert s.quantile(name, 0.0) == fin.min() and s.quantile(name, 1.0) == fin.max()
        assert s.count(name) == fin.size
    assert s.missing("gain") == math.ceil(n / 97)
    # the stated accuracy is a relative 1e-4 away from zero
    assert s.error_bound("wide", 10.0) == pytest.approx(1e-3, rel=1e-3)
    st = s.stats()["gain"]
    assert set(st) == {"min", "p5", "p50", "p95", "max"}


def test_streaming_quantiles_with_merged_bins_keep_their_bound():
    rng = np.random.default_rng(3)
    v = rng.lognormal(0.0, 3.0, 50_000)
    s = StreamingSummary(["x"], max_bins=4096)
    _feed(s, {"x": v}, 5000)
    q = np.linspace(0.0, 1.0, 41)
    ref = np.quantile(v, q)
    est = s.quantile("x", q)
    assert s.error_bound("x", 1.0) > 1e-4 * 10  # the bins were merged: a coarser, stated bound
    for x, y in zip(est, ref):
        assert abs(x - y) <= s.error_bound("x", y)


def _same_summary(a: StreamingSummary, b: StreamingSummary, names) -> None:
    """Every quantile (a fine grid of q), count, missing count and error bound equal, exactly."""
    q = np.linspace(0.0, 1.0, 2001)
    for name in names:
        np.testing.assert_array_equal(a.quantile(name, q), b.quantile(name, q))
        assert (a.count(name), a.missing(name)) == (b.count(name), b.missing(name))
        assert a.error_bound(name, 1.5) == b.error_bound(name, 1.5)
    assert a.stats() == b.stats()


@pytest.mark.parametrize("max_bins", [1 << 20, 1000, 64])  # 1000 and 64: bins merged in pairs
def test_merged_summaries_equal_one_summary_over_all_the_values(max_bins):
    # The definition of an exact merge: summaries of parts of the values, merged in any order,
    # are the summary of all of them fed to one summary (no outside reference needed: the
    # accuracy of that one against numpy is checked above).
    rng = np.random.default_rng(21)
    n = 60_000
    data = {"wide": rng.lognormal(0.0, 2.0, n), "signed": rng.normal(0.0, 1.0, n),
            "late": np.r_[np.zeros(25_000), rng.normal(3.0, 1.0, n - 25_000)],  # only zeros at first
            "gain": rng.uniform(30.0, 31.0, n)}
    data["gain"][::97] = np.nan
    whole = StreamingSummary(max_bins=max_bins)
    _feed(whole, data, 5000)
    # parts of uneven sizes fed in uneven chunks; the first part sets the grid as `whole`'s first
    # chunk did ("late" has only zeros there: no scale yet), the others are given the scales
    cuts = [0, 5000, 11_000, 30_000, 31_000, 47_000, n]
    parts = []
    for i, (a, b) in enumerate(zip(cuts[:-1], cuts[1:])):
        part = StreamingSummary(max_bins=max_bins, scales=None if i == 0 else whole.scales)
        _feed(part, {k: v[a:b] for k, v in data.items()}, [5000, 700, 4096, 333, 10_000, 2048][i])
        parts.append(part)
    assert parts[0].scales["late"] is None
    for order in (range(len(parts)), reversed(range(len(parts))), [3, 0, 5, 1, 4, 2]):
        merged = StreamingSummary(max_bins=max_bins)
        for i in order:
            merged.merge(parts[i])
        _same_summary(merged, whole, data)
    # merging an empty summary changes nothing
    merged.merge(StreamingSummary(max_bins=max_bins))
    _same_summary(merged, whole, data)


def test_merge_refuses_summaries_on_different_grids():
    a = StreamingSummary(["x"], scales={"x": 0.01})
    a.update({"x": np.array([1.0, 2.0])})
    b = StreamingSummary(["x"], scales={"x": 0.02})
    b.update({"x": np.array([3.0])})
    with pytest.raises(InputError, match="^scales: "):
        a.merge(b)
    with pytest.raises(InputError, match="^other: "):
        a.merge(StreamingSummary(["x"], rel_width=2e-4))
    with pytest.raises(InputError, match="^other: "):
        a.merge(StreamingSummary(["y"]))
    with pytest.raises(InputError, match="^scales: "):
        StreamingSummary(["x"], scales={"x": 0.0})


def test_streaming_summary_bad_input():
    with pytest.raises(InputError, match="rel_width"):
        StreamingSummary(rel_width=0.0)
    s = StreamingSummary(["a"])
    s.update({"a": np.array([np.nan])})
    assert math.isnan(s.quantile("a", 0.5)) and s.stats() == {"a": None}
    with pytest.raises(InputError, match="^q: "):
        s.quantile("a", 1.5)
    with pytest.raises(InputError, match="'b' is not summarised"):
        s.quantile("b", 0.5)


# --- FET setups, fixed limits, the FET results' units ------------------------------------------

from devmodels.spread import FET_RESULTS, FetSpreadRanges, FetSpreadSetup  # noqa: E402

FET_SETUP = FetSpreadSetup(config="cs", freq=1e6, rs=50.0, rl=5e3, device="njfet", id=1e-3, vds=5.0, cgs=3e-12,
                           cgd=1e-12, rdeg=100.0)
FET_RANGES = FetSpreadRanges(idss_min=4e-3, idss_max=12e-3, vp_min=1.0, vp_max=3.0, lambda_min=0.01,
                             lambda_max=0.02, tol=0.05)


def test_box_limits_are_the_setups_own_limits():
    assert box_limits(FET_SETUP, FET_RANGES) == FET_SETUP.limits(FET_RANGES)
    assert set(box_limits(FET_SETUP, FET_RANGES)) == {"idss", "vp", "lambda", "rdeg"}
    assert box_limits(SETUP, RANGES) == SETUP.limits(RANGES)


def test_fet_worst_case_against_a_loop_over_the_vertices():
    w = worst_case(FET_SETUP, FET_RANGES)
    assert set(w) == set(FET_RESULTS)
    lim = FET_SETUP.limits(FET_RANGES)
    names = list(lim)
    vals = {r: [] for r in ("av", "gm", "zout")}
    for corner in itertools.product(*(lim[n] for n in names)):
        pt = {n: np.array([v]) for n, v in zip(names, corner)}
        res = FET_SETUP.evaluate_points(pt)
        for r in vals:
            vals[r].append(float(res[r][0]))
    for r, v in vals.items():
        assert w[r]["worst_min"] <= min(v) * (1 + 1e-12) and w[r]["worst_max"] >= max(v) * (1 - 1e-12)
    # gm = (2/|VP|) sqrt(ID IDSS): monotonic, extremes at vertices, by hand
    assert w["gm"]["method"] == "vertices"
    assert w["gm"]["worst_max"] == pytest.approx(2.0 * math.sqrt(1e-3 * 12e-3), rel=1e-12)
    assert w["gm"]["worst_min_at"]["idss"] == "low" and w["gm"]["worst_min_at"]["vp"] == "high"
    # no small-signal input impedance (no gate resistor to ground): no worst value, not a crash
    assert w["ai"]["worst_min"] is None or math.isfinite(w["ai"]["worst_min"])


def test_fet_worst_case_uses_the_search_where_a_result_is_not_monotonic(monkeypatch):
    # A result with an interior maximum (in vp) must leave 'vertices' for the search, which then
    # finds the maximum inside the box: the evaluation is the setup's own (evaluate_points).
    def bump(points):
        out = FetSpreadSetup.evaluate_points(FET_SETUP, points)
        out["gm"] = 1.0 - (np.asarray(points["vp"]) - 2.2) ** 2
        return out

    class Bumpy(FetSpreadSetup):
        __slots__ = ()

        def evaluate_points(self, points):
            return bump(points)

    setup = Bumpy(**{f: getattr(FET_SETUP, f) for f in FetSpreadSetup.__dataclass_fields__})
    w = worst_case(setup, FET_RANGES, results=["gm"])
    assert w["gm"]["method"] == "vertices+search"
    assert w["gm"]["worst_max"] == pytest.approx(1.0, abs=1e-9)
    assert w["gm"]["worst_max_at"]["vp"] == pytest.approx(2.2, rel=1e-6)


def test_every_limit_fixed_is_one_point():
    v = vertices({"a": (1.0, 1.0), "b": (2.0, 2.0)})
    assert {k: x.tolist() for k, x in v.items()} == {"a": [1.0], "b": [2.0]}
    fixed = FetSpreadRanges(idss_min=8e-3, idss_max=8e-3, vp_min=2.0, vp_max=2.0)
    w = worst_case(FET_SETUP, fixed)
    at = FET_SETUP.evaluate_points({"idss": np.array([8e-3]), "vp": np.array([2.0])})
    assert w["av"]["worst_min"] == w["av"]["worst_max"] == pytest.approx(float(at["av"][0]), rel=1e-15)
    assert w["av"]["worst_min_at"] == {"idss": 8e-3, "vp": 2.0}
    fixed_bjt = SpreadRanges(beta_min=100.0, beta_max=100.0)
    wb = worst_case(SpreadSetup(ic=1e-3, vce=5.0), fixed_bjt)
    assert wb["zin"]["worst_min"] == wb["zin"]["worst_max"]


def test_specs_on_gm_and_ro_take_their_units():
    assert parse_spec("gm>=5mS", results=FET_RESULTS) == ("gm", ">=", pytest.approx(5e-3))
    assert parse_spec("ro <= 100k", results=FET_RESULTS) == ("ro", "<=", pytest.approx(1e5))
    assert parse_spec("ro>=47kohm", results=FET_RESULTS)[2] == pytest.approx(4.7e4)
    with pytest.raises(InputError, match="^spec gm: "):
        parse_spec("gm>=5V", results=FET_RESULTS)
    with pytest.raises(InputError, match="^spec ro: "):
        parse_spec("ro>=5A", results=FET_RESULTS)


# --- the [spec] table of a bias file and --spec, merged (collect_specs) --------------------------
from devmodels.worstcase import collect_specs  # noqa: E402


def test_spec_table_reads_like_the_option():
    # every table entry is the key followed by its text, read by parse_spec (the one reader)
    table = {"av": ">=40", "zin": " >= 1k", "ic": [">=0.8mA", "<=1.2mA"], "gt_db": ">12dB"}
    got = collect_specs((), table, RESULTS)
    assert got == [parse_spec("av>=40"), parse_spec("zin>=1k"), parse_spec("ic>=0.8mA"), parse_spec("ic<=1.2mA"),
                   parse_spec("gt_db>12dB")]
    assert got[2] == ("ic", ">=", pytest.approx(0.8e-3, rel=1e-15, abs=0))


def test_an_option_replaces_the_table_limit_in_the_same_direction_and_adds_otherwise():
    table = {"av": ">=40", "zin": ">=1k", "ic": [">=0.8mA", "<=1.2mA"]}
    got = collect_specs(["av>=30", "zin<=50k", "ic<1.5mA"], table, RESULTS)
    # av's lower limit replaced; zin keeps its lower limit and gains an upper one; ic's upper
    # limit replaced (<= and < are the same direction), its lower limit kept
    assert got == [("zin", ">=", 1000.0), ("ic", ">=", pytest.approx(0.8e-3, rel=1e-15, abs=0)),
                   ("av", ">=", 30.0), ("zin", "<=", 50000.0), ("ic", "<", pytest.approx(1.5e-3, rel=1e-15, abs=0))]
    assert collect_specs(["av>=30"], None, RESULTS) == [("av", ">=", 30.0)]
    assert collect_specs((), {}, RESULTS) == []


@pytest.mark.parametrize("table, start", [
    ({"gain": ">=40"}, "spec.gain: 'gain' is not a result"),
    ({"av": "=>40"}, "spec.av: "),
    ({"av": ">="}, "spec.av"),
    ({"av": "av>=40"}, "spec.av: expected a comparison"),
    ({"av": "40"}, "spec.av: expected a comparison"),
    ({"av": 40}, "spec.av: expected text"),
    ({"av": []}, "spec.av: expected a comparison"),
    ({"zin": ">=5V"}, "spec.zin: "),
    ({"nf_db": "<=3"}, "spec.nf_db: 'nf_db' is not a result"),  # no noise in this run's results
])
def test_bad_spec_table_entries_name_the_key(table, start):
    with pytest.raises(InputError) as exc:
        collect_specs((), table, RESULTS)
    assert str(exc.value).startswith(start), str(exc.value)


def test_unknown_result_suggests_the_nearest_name():
    with pytest.raises(InputError, match=r"^spec: 'zim' is not a result; .*did you mean zin\?"):
        collect_specs(["zim>=1k"], None, RESULTS)

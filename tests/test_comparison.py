"""compare's categories (devmodels.comparison.winners)."""

from __future__ import annotations

import math

import pytest

import devmodels as dm
from devmodels.analysis import terminate
from devmodels.comparison import CATEGORIES, winners


def _point(avs=1.0, ai=1.0, gt=0.0, zin=1.0, zout=1.0):
    return {"avs": complex(avs), "ai": complex(ai), "gt_db": gt, "zin": complex(zin), "zout": complex(zout)}


def test_each_category_picks_its_extreme():
    pts = {"ce": _point(avs=-100, ai=-50, gt=30, zin=2e3, zout=5e3), "cb": _point(avs=90, ai=0.99, gt=20, zin=25,
                                                                              zout=9e5),
           "cc": _point(avs=0.99, ai=101, gt=15, zin=2e5, zout=20)}
    best = winners(pts, {"ce": 1e6, "cb": 1e8, "cc": None})
    assert best == {"voltage_gain": "ce", "current_gain": "cc", "power_gain": "ce", "input_impedance_high": "cc",
                    "input_impedance_low": "cb", "output_impedance_low": "cc", "output_impedance_high": "cb",
                    "bandwidth": "cc",  # no -3 dB point in the searched range: the widest
                    "quietest": None}  # no noise figure given: no winner
    assert [c.key for c in CATEGORIES] == list(best)


def test_ties_and_missing_values_win_nothing():
    pts = {"ce": _point(avs=10, zin=math.nan), "cb": _point(avs=10 * (1 + 1e-12), zin=math.nan)}
    best = winners(pts, {})
    assert best["voltage_gain"] is None and best["input_impedance_high"] is None and best["bandwidth"] is None


def test_on_a_real_device():
    # The textbook ranking (high-gain CE, unity-gain CC with the highest input impedance, CB with the
    # lowest): common practice, no source.
    m = dm.HybridPi.from_bias(dm.BipolarBias(ic=1e-3, vce=5.0, beta=100, va=80.0))
    pts = {c: terminate(dm.Stage(m, c).two_port([1e3]), 600.0, 4.7e3).point(0) for c in m.configs}
    best = winners(pts, {c: None for c in m.configs})
    assert best["input_impedance_high"] == "cc" and best["input_impedance_low"] == "cb"
    assert best["current_gain"] == "cc" and best["output_impedance_low"] == "cc"


def test_quietest_is_the_lowest_noise_figure_and_none_takes_no_part():
    pts = {"ce": {**_point(), "nf_db": 2.5}, "cb": {**_point(), "nf_db": 2.4}, "cc": {**_point(), "nf_db": None}}
    assert winners(pts, {})["quietest"] == "cb"
    pts["cc"]["nf_db"] = 2.4 * (1 + 1e-12)  # a tie wins nothing
    assert winners(pts, {})["quietest"] is None
    pts["cc"]["nf_db"] = 2.409  # within 0.01 dB: a tie too
    assert winners(pts, {})["quietest"] is None
    pts["cc"]["nf_db"] = 2.411
    assert winners(pts, {})["quietest"] == "cb"


def _device():
    return dm.HybridPi.from_bias(dm.BipolarBias(ic=1e-3, vce=5.0, beta=100, va=80.0, ft=300e6, cmu=2e-12,
                                                rb=50.0))


def test_configuration_noise_equals_the_noise_parameters_of_each_stage():
    from devmodels.comparison import configuration_noise
    from devmodels.noise import noise_parameters, stage_noise

    m = _device()
    stages = {c: dm.Stage(m, c) for c in m.configs}
    got = configuration_noise(stages, 1e6, 600.0)
    for c, st in stages.items():
        res = noise_parameters(stage_noise(st, [1e6]), zs=600.0)
        assert got[c]["nf_db"] == pytest.approx(float(res.nf_db[0]), rel=1e-12, abs=0)
        assert got[c]["nfmin_db"] == pytest.approx(float(res.nfmin_db[0]), rel=1e-12, abs=0)
        assert 0 < got[c]["nfmin_db"] < got[c]["nf_db"]
    # an ideal source (Rs = 0) has no noise of its own: no noise figure, NFmin still given
    ideal = configuration_noise(stages, 1e6, 0.0)
    assert all(v["nf_db"] is None and v["nfmin_db"] == pytest.approx(got[c]["nfmin_db"], rel=1e-12, abs=0)
               for c, v in ideal.items())


def test_compare_json_carries_noise_and_the_quietest(run_json):
    from devmodels.comparison import configuration_noise

    d = run_json("compare", "--ic", "1mA", "--vce", "5V", "--beta", "100", "--va", "80V", "--ft", "300MHz",
                 "--cmu", "2pF", "--rb", "50", "--rs", "600", "-f", "1MHz")
    m = _device()
    want = configuration_noise({c: dm.Stage(m, c) for c in m.configs}, 1e6, 600.0)
    for c in m.configs:
        assert d[c]["nf_db"] == pytest.approx(want[c]["nf_db"], rel=1e-9, abs=0)
        assert d[c]["nfmin_db"] == pytest.approx(want[c]["nfmin_db"], rel=1e-9, abs=0)
    nfs = {c: want[c]["nf_db"] for c in m.configs}
    assert d["best"]["quietest"] == min(nfs, key=nfs.get)
    d0 = run_json("compare", "--ic", "1mA", "--vce", "5V", "--beta", "100", "--rs", "0")
    assert all(d0[c]["nf_db"] is None and d0[c]["nfmin_db"] > 0 for c in m.configs)
    assert d0["best"]["quietest"] is None

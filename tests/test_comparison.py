"""compare's categories (devmodels.comparison.winners)."""

from __future__ import annotations

import math

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
                    "bandwidth": "cc"}  # no -3 dB point in the searched range: the widest
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

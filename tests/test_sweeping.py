"""The blocked sweep loop (devmodels.sweeping)."""

from __future__ import annotations

import numpy as np

import devmodels as dm
from devmodels import sweeping


def test_blocks_give_the_same_parameters_and_report_progress(monkeypatch):
    monkeypatch.setattr(sweeping, "BLOCK", 7)
    st = dm.Stage(dm.HybridPi.from_bias(dm.BipolarBias(ic=1e-3, vce=5.0, beta=100, ft=3e8, cmu=2e-12)), "cb")
    f = np.geomspace(1e3, 1e10, 30)
    seen = []
    tp = sweeping.sweep_two_port(st, f, 50.0, lambda done, total: seen.append((done, total)))
    ref = st.two_port(f, "y", 50.0)
    assert np.array_equal(tp.data, ref.data) and tp.kind == "y" and tp.config == "cb"
    assert seen == [(7, 30), (14, 30), (21, 30), (28, 30), (30, 30)]
    assert np.array_equal(sweeping.sweep_two_port(st, f).data, ref.data)

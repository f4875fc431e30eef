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


def _stage(config="ce"):
    return dm.Stage(dm.HybridPi.from_bias(dm.BipolarBias(ic=1e-3, vce=5.0, beta=100, va=80.0, ft=3e8,
                                                         cmu=2e-12, rb=50.0)), config)


def test_streamed_sweep_writes_the_same_text_as_the_whole_sweep():
    # blocks of 7 lines over 100 points (15 blocks) against the two-port computed at once
    from devmodels import export

    st = _stage()
    f = np.geomspace(1e3, 1e10, 100)
    for kind, z0 in (("s", 50.0), ("s", (50.0, 75.0)), ("y", 50.0), ("z", 75.0), ("h", 50.0), ("g", 50.0),
                     ("abcd", 50.0)):
        whole = sweeping.sweep_two_port(st, f, z0).to(kind, z0)
        sw = sweeping.sweep_stream(st, f, kind, z0)
        assert len(sw) == 100 and sw.z0 == whole.z0 and sw.config == "ce" and sw.kind == kind
        writers = [lambda tp: export.csv_chunks(tp, "db" if kind != "abcd" else "ma", block=7),
                   lambda tp: export.json_chunks(tp, {"extra": 1}, block=7)]
        if kind != "abcd":
            writers.append(lambda tp: export.touchstone_chunks(tp, "2.0", True, "a\nb", block=7))
            if kind != "s" or z0 == 50.0:
                writers.append(lambda tp: export.touchstone_chunks(tp, "1.1", False, "c", block=7))
        for w in writers:
            a, b = "".join(w(whole)), "".join(w(sw))
            assert a == b and len(a) > 100 * 50


def test_streamed_sweep_computes_only_the_blocks_asked_for():
    st = _stage("cb")
    f = np.geomspace(1e3, 1e10, 30)
    seen = []
    sw = sweeping.sweep_stream(st, f, "s", 50.0, lambda done, total: seen.append((done, total)))
    assert seen == []  # nothing computed at creation
    ref = st.two_port(f, "y", 50.0).to("s", 50.0)
    assert sw.data.shape == (30, 2, 2)
    assert np.array_equal(sw.data[10:17], ref.data[10:17]) and seen == [(17, 30)]
    # a sample for a table: the same points to rounding (computed outside the engine's blocks)
    np.testing.assert_allclose(sw.at([0, 29]).data, ref.data[[0, 29]], rtol=1e-12, atol=0)
    assert np.array_equal(sw.at([0, 29]).freq, f[[0, 29]])
    assert np.array_equal(sw.whole().data, ref.data) and np.array_equal(sw.whole().freq, f)
    with np.testing.assert_raises(TypeError):
        sw.data[[1, 2]]
    with np.testing.assert_raises(TypeError):
        sw.data[::2]

"""The blocked sweep loop (devmodels.sweeping)."""

from __future__ import annotations

import numpy as np
import pytest

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


# --- noise over the sweep ----------------------------------------------------------------------
def test_sweep_noise_blocks_and_the_noise_factor_relation(monkeypatch):
    from devmodels.noise import noise_parameters, stage_noise

    st = _stage()
    f = np.geomspace(1e3, 1e10, 41)
    whole = noise_parameters(stage_noise(st, f), zs=75.0 + 10j, z0=50.0)
    monkeypatch.setattr(sweeping, "BLOCK", 8)
    seen = []
    res = sweeping.sweep_noise(st, f, 75.0 + 10j, 50.0, lambda done, total: seen.append(done))
    assert seen == [8, 16, 24, 32, 40, 41]
    for k in ("f", "fmin", "rn", "yopt", "en", "in_", "correlation"):
        assert getattr(res, k) == pytest.approx(getattr(whole, k), rel=1e-13, abs=0)
    # F = Fmin + (Rn/Gs)|Ys - Yopt|^2 at the source (Rothe and Dahlke, Proc. IRE 44, 1956)
    ys = 1 / (75.0 + 10j)
    assert res.f == pytest.approx(res.fmin + res.rn / ys.real * np.abs(ys - res.yopt) ** 2, rel=1e-9, abs=0)
    assert np.all(res.f >= res.fmin) and np.all(res.fmin >= 1)


def test_noise_blocks_of_a_streamed_sweep_equal_the_whole_sweep():
    from devmodels import export

    st = _stage()
    f = np.geomspace(1e3, 1e10, 100)
    whole = sweeping.sweep_noise(st, f, 50.0)
    blocks = sweeping.NoiseBlocks(st, f, 50.0)
    got = np.vstack([blocks[i:i + 7] for i in range(0, 100, 7)])
    assert got.shape == (100, 2)
    assert got[:, 0] == pytest.approx(whole.nf_db, rel=1e-13, abs=0)
    assert got[:, 1] == pytest.approx(whole.nfmin_db, rel=1e-13, abs=0)
    # as export columns: the CSV holds two more columns, the JSON two more keys per point
    tp = sweeping.sweep_stream(st, f, "s", 50.0)
    text = "".join(export.csv_chunks(tp, block=7, columns=sweeping.noise_columns(blocks)))
    lines = text.splitlines()
    assert lines[1].endswith(",nf at rs [dB],nfmin [dB]")
    vals = np.array([[float(x) for x in ln.split(",")] for ln in lines[2:]])
    assert vals.shape == (100, 11) and vals[:, 9] == pytest.approx(whole.nf_db, rel=1e-13, abs=0)
    obj = export.twoport_dict(sweeping.sweep_two_port(st, f, 50.0).to("s", 50.0),
                              sweeping.noise_columns(whole))
    assert list(obj["points"][3]) == ["freq", "11", "12", "21", "22", "nf_db", "nfmin_db"]
    assert obj["points"][3]["nfmin_db"] == whole.nfmin_db[3]
    with pytest.raises(TypeError):
        blocks[3]

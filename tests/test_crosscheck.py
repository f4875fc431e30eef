"""The cross-check against scikit-rf, as a library call."""

from __future__ import annotations

import numpy as np
import pytest

import devmodels as dm


@pytest.mark.parametrize("config", ["ce", "cb", "cc"])
def test_crosscheck_passes_on_a_real_stage(config):
    m = dm.HybridPi.from_bias(dm.BipolarBias(ic=5e-3, vce=5.0, beta=120, va=60.0, ft=500e6,
                                             cmu=1.5e-12, rb=40.0))
    tp = dm.Stage(m, config).two_port(np.logspace(3, 10, 15))
    r = dm.crosscheck(tp)
    assert r.ok and r.checked == 30 and r.max_rel_error < 1e-9


def test_crosscheck_skips_kinds_that_do_not_exist():
    # ro infinite and no capacitance: the CE two-port has y22 = 0, so Z and G do not exist.
    m = dm.HybridPi.from_bias(dm.BipolarBias(ic=1e-3, vce=5.0, beta=100))
    r = dm.crosscheck(dm.Stage(m, "ce").two_port([1e3]))
    assert set(r.skipped) == {"z", "g"}
    # scikit-rf's h2s goes through Z, so pairs from h cannot be compared here
    assert r.checked + len(r.unchecked) == 4 * 3 and r.checked >= 6 and r.ok


def test_crosscheck_detects_a_wrong_conversion(monkeypatch):
    # Break one conversion on purpose: the cross-check must notice.
    import devmodels.verify as cc

    real = cc._own

    def broken(data, src, dst, z0):
        out = real(data, src, dst, z0)
        if dst == "h":
            out = out.copy()
            out[:, 1, 0] *= 1.001
        return out

    monkeypatch.setattr(cc, "_own", broken)
    m = dm.HybridPi.from_bias(dm.BipolarBias(ic=1e-3, vce=5.0, beta=100, va=50.0))
    r = dm.crosscheck(dm.Stage(m, "ce").two_port([1e3]))
    assert not r.ok and r.worst[1] == "h"

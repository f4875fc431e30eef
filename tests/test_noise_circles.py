"""Circles of constant noise figure in the source's reflection plane (devmodels.noise.noise_circle)."""

from __future__ import annotations

import warnings

import numpy as np
import pytest

import devmodels as dm
from devmodels.noise import noise_circle, noise_parameters, stage_noise


def _result(z0=50.0):
    m = dm.HybridPi.from_bias(dm.BipolarBias(ic=2e-3, vce=5.0, beta=120, va=60.0, ft=1e9, cmu=0.8e-12, rb=40.0))
    f = np.geomspace(1e6, 3e9, 9)
    return noise_parameters(stage_noise(dm.Stage(m, "ce"), f), zs=50.0, z0=z0)


@pytest.mark.parametrize("z0", [50.0, 75.0])
def test_points_on_the_circle_have_the_level_as_noise_factor(z0):
    # F = Fmin + (Rn/Gs)|Ys - Yopt|^2 (Rothe and Dahlke, Proc. IRE 44, 1956; Pozar, Microwave
    # Engineering, noise chapter, from memory), evaluated at points of the circle, equals the level
    res = _result(z0)
    theta = np.linspace(0.0, 2 * np.pi, 37)[:-1]
    for extra_db in (0.1, 0.5, 1.0, 3.0, 10.0):
        level = res.fmin * 10 ** (extra_db / 10)
        c, r = noise_circle(res.fmin, res.rn, res.gamma_opt, level, z0)
        assert np.all(np.isfinite(c)) and np.all(r > 0) and np.all(np.abs(c) + r < 1)
        gs = c[:, None] + r[:, None] * np.exp(1j * theta)[None, :]
        ys = (1 - gs) / (z0 * (1 + gs))
        f = res.fmin[:, None] + res.rn[:, None] / ys.real * np.abs(ys - res.yopt[:, None]) ** 2
        assert f == pytest.approx(np.broadcast_to(level[:, None], f.shape), rel=1e-9, abs=0)


def test_against_scikit_rf_nf_circle():
    # scikit-rf's Network.nf_circle (Pozar, Microwave Engineering, 4th ed.) from the same noise parameters
    skrf = pytest.importorskip("skrf")
    res = _result()
    s = res.freq  # any network data: the circles use only the noise parameters
    net = skrf.Network(frequency=skrf.Frequency.from_f(s, unit="Hz"), s=np.full((s.size, 2, 2), 0.1 + 0j), z0=50)
    net.set_noise_a(net.frequency, res.nfmin_db, res.gamma_opt, res.rn)  # scikit-rf's noise from NFmin, Gopt, Rn
    for nf_db in (30.0, 32.5, 40.0):  # above every NFmin of the sweep (scikit-rf then draws every circle)
        assert np.all(nf_db > res.nfmin_db)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", RuntimeWarning)
            loci = net.nf_circle(nf_db, npoints=5)  # (npoints, F): points at angles 0, 90, 180, 270, 360 deg
        c, r = noise_circle(res.fmin, res.rn, res.gamma_opt, 10 ** (nf_db / 10), 50.0)
        assert loci[0] == pytest.approx(c + r, rel=1e-9, abs=1e-12)
        assert loci[2] == pytest.approx(c - r, rel=1e-9, abs=1e-12)
        assert loci[1] == pytest.approx(c + 1j * r, rel=1e-9, abs=1e-12)


def test_level_at_and_below_the_minimum():
    # at F = Fmin the circle shrinks to Gamma_opt (radius 0); below Fmin there is none (NaN)
    res = _result()
    c, r = noise_circle(res.fmin, res.rn, res.gamma_opt, res.fmin, 50.0)
    assert c == pytest.approx(res.gamma_opt, rel=1e-12, abs=0) and np.all(r == 0)
    c, r = noise_circle(res.fmin, res.rn, res.gamma_opt, res.fmin * 0.99, 50.0)
    assert np.all(np.isnan(c.real)) and np.all(np.isnan(r))


def test_broadcast_over_levels_and_missing_gamma_opt():
    res = _result()
    levels = np.array([3.0, 5.0, 8.0])
    c, r = noise_circle(res.fmin[:, None], res.rn[:, None], res.gamma_opt[:, None], levels[None, :], 50.0)
    assert c.shape == r.shape == (res.freq.size, 3)
    c1, r1 = noise_circle(res.fmin, res.rn, res.gamma_opt, 5.0, 50.0)
    assert np.array_equal(np.isnan(r[:, 1]), np.isnan(r1))
    ok = np.isfinite(r1)
    assert np.array_equal(r[ok, 1], r1[ok])
    # no Gamma_opt (Rn = 0) or Rn <= 0: no circle
    c, r = noise_circle([1.2, 1.2], [0.0, 10.0], [complex(np.nan, np.nan), 0.2], 2.0, 50.0)
    assert np.isnan(r[0]) and np.isfinite(r[1])


def test_bad_reference():
    with pytest.raises(dm.InputError, match="^z0:"):
        noise_circle(1.5, 10.0, 0.2, 2.0, z0=-50)

"""The block machinery of conversions.convert: block edges, the last short block, error
order across blocks, extreme scales, and S with a different reference at each port.

The arithmetic itself is compared with scikit-rf for every pair in test_conversions.py;
here the same results must come out however the points are split into blocks.
"""

from __future__ import annotations

import itertools

import numpy as np
import pytest

import devmodels as dm
from devmodels import conversions
from devmodels.constants import KINDS
from devmodels.conversions import convert

from conftest import random_twoports

skrf_net = pytest.importorskip("skrf.network")


def _rel(a, b):
    return np.max(np.abs(a - b)) / np.max(np.abs(b))


@pytest.mark.parametrize("src,dst", [(a, b) for a, b in itertools.product(KINDS, KINDS) if a != b])
def test_small_blocks_give_the_one_block_result(monkeypatch, src, dst):
    # 53 points in blocks of 8: six full blocks and a last block of 5.
    z0 = (50.0, 75.0)
    data = convert(random_twoports(np.random.default_rng(11), 53, z0), "z", src, z0)
    whole = convert(data, src, dst, z0)  # 53 < BLOCK: one block
    monkeypatch.setattr(conversions, "BLOCK", 8)
    split = convert(data, src, dst, z0)
    assert split.shape == (53, 2, 2)
    np.testing.assert_array_equal(split, whole)


def test_singular_point_in_a_later_block_is_reported_by_its_index(monkeypatch):
    # y21 = 0 at point 9: ABCD does not exist there (B = -1/y21).
    monkeypatch.setattr(conversions, "BLOCK", 4)
    y = convert(random_twoports(np.random.default_rng(12), 14), "z", "y")
    y[9, 1, 0] = 0.0
    with pytest.raises(dm.SingularParameterError, match=r"y -> abcd pivot is singular at point 9\)"):
        convert(y, "y", "abcd")


def test_bad_input_after_a_singular_point_is_reported_first(monkeypatch):
    # As when the whole array was checked before converting: NaN anywhere wins.
    monkeypatch.setattr(conversions, "BLOCK", 4)
    y = convert(random_twoports(np.random.default_rng(13), 14), "z", "y")
    y[2, 1, 0] = 0.0  # singular for abcd, in the first block
    y[13, 0, 0] = np.nan  # in the last block
    with pytest.raises(dm.InputError, match="NaN"):
        convert(y, "y", "abcd")


def test_finite_entries_whose_sum_overflows_are_accepted():
    # The per-block finiteness screen sums the block; an overflow to inf must fall back to
    # the exact test rather than reject finite data.  Reference: Y = Z^-1 (definition).
    z = np.array([[[1.2e308, 0.0], [0.0, 1.0]], [[1.5e308, 0.0], [0.0, 0.5]]], dtype=complex)
    with np.errstate(over="raise", divide="raise", invalid="raise"):  # no warning on the way
        y = convert(z, "z", "y")
    assert np.all(np.isfinite(y))
    assert _rel(y, np.linalg.inv(z)) < 1e-12


@pytest.mark.parametrize("scale", [1e-150, 1e150])
def test_extreme_scales_keep_full_precision(scale):
    # The reciprocal of the pivot is formed as (conj(p)/|p|) * (1/|p|), which must not
    # overflow or underflow where |p|**2 would (|det Z| ~ 1e+-300 here).
    # Reference: Y = Z^-1 (definition), by LAPACK through numpy.
    z = random_twoports(np.random.default_rng(14), 40) * scale
    assert _rel(convert(z, "z", "y"), np.linalg.inv(z)) < 1e-12


def test_s_between_unequal_references_at_both_ends():
    # S at (50, 75) ohm renormalised to (30, 20) ohm against S computed from Z at
    # (30, 20) ohm by scikit-rf (skrf.network.z2s, power waves).
    z = random_twoports(np.random.default_rng(15), 32)
    s_in = skrf_net.z2s(z, np.array([50.0, 75.0]))
    ref = skrf_net.z2s(z, np.array([30.0, 20.0]))
    assert _rel(convert(s_in, "s", "s", (50.0, 75.0), z0_out=(30.0, 20.0)), ref) < 1e-12
    # and to every other kind from the same unequal-reference S (scikit-rf's s2*)
    z0 = np.array([50.0, 75.0])
    for dst, fn in (("z", skrf_net.s2z), ("y", skrf_net.s2y), ("h", skrf_net.s2h),
                    ("g", skrf_net.s2g), ("abcd", skrf_net.s2a)):
        assert _rel(convert(s_in, "s", dst, (50.0, 75.0)), fn(s_in, z0)) < 1e-10, dst


def test_result_is_a_new_array_even_for_one_point():
    z = random_twoports(np.random.default_rng(16), 1)
    before = z.copy()
    out = convert(z, "z", "h")
    assert out.shape == (1, 2, 2) and out.dtype == np.complex128
    assert not np.shares_memory(out, z)
    np.testing.assert_array_equal(z, before)  # the input is not modified

"""conversions.convert at its edges: blocks, shapes, bad input, singular and extreme values.

The arithmetic itself is compared with scikit-rf and sympy in test_conversions.py.
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


def _rel(a, b):
    return np.max(np.abs(a - b)) / np.max(np.abs(b))


# --- blocks and shapes ----------------------------------------------------------------
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


def test_long_arrays_cross_block_boundaries():
    # more points than one block; reference: Y = Z^-1 (definition), by LAPACK through numpy
    z = random_twoports(np.random.default_rng(2), 2 * conversions.BLOCK + 5)
    assert _rel(convert(z, "z", "y"), np.linalg.inv(z)) < 1e-12


def test_leading_shape_is_kept_and_never_squeezed():
    z = random_twoports(np.random.default_rng(1), 12).reshape(3, 4, 2, 2)
    assert convert(z, "z", "y").shape == (3, 4, 2, 2)
    assert convert(z[0, :1], "z", "s").shape == (1, 2, 2)
    one = convert(z[0, 0], "z", "y")  # a single (2, 2) matrix
    assert one.shape == (2, 2)
    np.testing.assert_allclose(one, np.linalg.inv(z[0, 0]), rtol=1e-12)
    assert convert(np.zeros((0, 2, 2)), "z", "s").shape == (0, 2, 2)


def test_result_is_a_new_array_and_the_input_is_untouched():
    z = random_twoports(np.random.default_rng(16), 1)
    before = z.copy()
    for dst in KINDS:  # including z -> z, a copy
        out = convert(z, "z", dst)
        assert out.shape == (1, 2, 2) and out.dtype == np.complex128
        assert not np.shares_memory(out, z)
    np.testing.assert_array_equal(z, before)
    s = convert(z, "z", "s")
    assert not np.shares_memory(convert(s, "s", "s", 50.0, z0_out=50.0), s)


def test_real_integer_and_non_contiguous_input():
    # Y = Z^-1 (definition) for real integer data and for a strided view
    z = np.array([[[3, 1], [2, 4]]])
    np.testing.assert_allclose(convert(z, "z", "y")[0], np.linalg.inv(z[0]), rtol=1e-14)
    zz = random_twoports(np.random.default_rng(4), 20)
    assert _rel(convert(zz[::2], "z", "y"), np.linalg.inv(zz[::2])) < 1e-12


# --- bad input ------------------------------------------------------------------------
@pytest.mark.parametrize("data,match", [
    (np.eye(2, dtype=bool), "expected complex numbers"),
    (np.array([["1", "0"], ["0", "1"]]), "expected complex numbers"),
    (np.array([[1, None], [0, 1]], dtype=object), "expected complex numbers"),
    (np.ones((3, 3)), "shape"),
    (np.ones(4), "shape"),
    (np.ones((2, 2, 3)), "shape"),
    (np.array([[np.nan, 0], [0, 1]]), "NaN or infinity"),
    (np.array([[1, 0], [complex(0, np.inf), 1]]), "NaN or infinity"),
])
def test_bad_data(data, match):
    with pytest.raises(dm.InputError, match=match):
        convert(data, "y", "z")


def test_bad_kinds_and_references():
    with pytest.raises(dm.InputError, match="src: unknown parameter kind"):
        convert(np.eye(2), "q", "y")
    with pytest.raises(dm.InputError, match="dst: unknown parameter kind"):
        convert(np.eye(2), "y", "t")
    with pytest.raises(dm.InputError, match="positive reference"):
        convert(np.eye(2), "y", "s", z0=-50)
    with pytest.raises(dm.InputError, match="real reference"):
        convert(np.eye(2), "y", "s", z0=50 + 1j)
    with pytest.raises(dm.InputError, match="one or two"):
        convert(np.eye(2), "y", "s", z0=(50, 50, 50))
    with pytest.raises(dm.InputError, match="positive reference"):
        convert(np.eye(2), "s", "s", z0=50, z0_out=0)
    assert conversions.normalize_z0([75]) == (75.0, 75.0)
    assert issubclass(dm.SingularParameterError, ValueError)


def test_nan_in_identity_conversion_is_rejected_too():
    with pytest.raises(dm.InputError, match="NaN"):
        convert(np.array([[np.nan, 0], [0, 1]]), "z", "z")


# --- existence ------------------------------------------------------------------------
def test_singular_point_in_a_later_block_is_reported_by_its_index(monkeypatch):
    # y21 = 0 at points 9 and 11: ABCD does not exist there (B = -1/y21); the first is named.
    monkeypatch.setattr(conversions, "BLOCK", 4)
    y = convert(random_twoports(np.random.default_rng(12), 14), "z", "y")
    y[9, 1, 0] = y[11, 1, 0] = 0.0
    with pytest.raises(dm.SingularParameterError,
                       match=r"^abcd: .*y21 = 0: no forward transmission, at point 9; converting Y to ABCD"):
        convert(y, "y", "abcd")


def test_bad_input_after_a_singular_point_is_reported_first(monkeypatch):
    # As when the whole array is checked before converting: NaN anywhere wins.
    monkeypatch.setattr(conversions, "BLOCK", 4)
    y = convert(random_twoports(np.random.default_rng(13), 14), "z", "y")
    y[2, 1, 0] = 0.0  # singular for abcd, in the first block
    y[13, 0, 0] = np.nan  # in the last block
    with pytest.raises(dm.InputError, match="NaN"):
        convert(y, "y", "abcd")


@pytest.mark.parametrize("scale", [1e-100, 1.0, 1e100])
@pytest.mark.parametrize("delta,exists", [(0.0, False), (1e-14, False), (1e-9, True)])
def test_existence_test_is_scale_free(scale, delta, exists):
    # Z = [[1, 1], [1, 1 + delta]] * scale: det Z = delta * scale^2 against the products
    # z11 z22 ~ z12 z21 ~ scale^2.  Below SINGULAR_TOL (1e-12) relative, Y does not exist,
    # whatever the scale; above it, Y = Z^-1 (definition, by numpy) is returned.
    z = np.array([[[1.0, 1.0], [1.0, 1.0 + delta]]]) * scale
    if exists:
        assert _rel(convert(z, "z", "y"), np.linalg.inv(z)) < 1e-6
    else:
        with pytest.raises(dm.SingularParameterError, match=r"^y: .*Z is singular: det Z = 0, at point 0"):
            convert(z, "z", "y")


_ENDED = "the network with both ports ended in the reference resistances has no solution"


@pytest.mark.parametrize("src,dst,data,why", [
    # z11 = z22 = 0, z12 z21 = R^2: (z11 + R)(z22 + R) - z12 z21 = 0, so S does not exist
    ("z", "s", [[0, 50], [50, 0]], _ENDED),
    ("s", "z", [[1, 0], [0.5, 0.3]], "det(1 - S) = 0"),  # s11 = 1, s12 = 0: an open port 1, no Z
    ("s", "y", [[-1, 0], [0.5, 0.3]], "det(1 + S) = 0"),  # s11 = -1, s12 = 0: a shorted port 1, no Y
    ("s", "h", [[1, 0], [0.5, 0.3]], "(1 - S11)(1 + S22) + S12 S21 = 0"),  # open port 1: no H
    ("s", "g", [[0.3, 0], [0.5, 1]], "(1 + S11)(1 - S22) + S12 S21 = 0"),  # open port 2: no G
    ("s", "abcd", [[0.3, 0.5], [0, 0.2]], "S21 = 0: no forward transmission"),  # s21 = 0: no ABCD
    ("z", "h", [[10, 5], [5, 0]], "z22 = 0"),  # z22 = 0: no H
    ("z", "g", [[0, 5], [5, 10]], "z11 = 0"),  # z11 = 0: no G
    ("z", "abcd", [[10, 5], [0, 10]], "z21 = 0: no forward transmission"),
    ("h", "g", [[10, 1], [2, 0.2]], "H is singular: det H = 0"),
    ("abcd", "z", [[1, 50], [0, 1]], "the chain parameter C = 0"),  # a series resistor: no Z
    ("abcd", "y", [[1, 0], [0.02, 1]], "the chain parameter B = 0"),  # a shunt conductance: no Y
    ("abcd", "s", [[1, -100], [0, 1]], _ENDED),  # A R + B + C R^2 + D R = 0 at R = 50 ohm
    # 50 -> 25 ohm: g = -1/3 at both ports, 1 - g s22 = 0 for s22 = -3 (an active port)
    ("s", "s", [[0.5, 0], [0, -3]], _ENDED.replace("reference", "new reference")),
])
def test_singular_pivots_of_each_form(src, dst, data, why):
    # Networks whose target set does not exist, from the definitions in the module
    # docstring of devmodels.conversions (and Pozar table 4.2, from memory).  The message
    # starts with the name of the missing value and says in plain words what vanishes.
    data = np.array([data], dtype=complex)
    with pytest.raises(dm.SingularParameterError) as err:
        convert(data, src, dst, 50.0, z0_out=25.0 if src == dst else None)
    msg = str(err.value)
    name = dst.upper()
    assert msg.startswith(f"{dst}: the {name} parameters do not exist for this two-port (")
    assert f"({why}, at point 0; converting " in msg
    assert "pivot" not in msg


# --- extreme values -------------------------------------------------------------------
@pytest.mark.parametrize("scale", [1e-150, 1e150])
def test_extreme_scales_keep_full_precision(scale):
    # |det Z| ~ 1e+-300 here.  Reference: Y = Z^-1 (definition), by LAPACK through numpy.
    z = random_twoports(np.random.default_rng(14), 40) * scale
    assert _rel(convert(z, "z", "y"), np.linalg.inv(z)) < 1e-12


def test_finite_results_whose_block_sum_overflows_are_accepted():
    # The finiteness screen sums the results of a block; an overflow of that sum must fall
    # back to the exact test rather than reject finite results.  Reference: for z12 = 0,
    # h11 = z11 - z12 z21 / z22 = z11 and h22 = 1/z22 (definition of H).
    z = np.array([[[1.5e308, 0.0], [0.0, 1.0]], [[1.2e308, 0.0], [0.0, 0.5]]], dtype=complex)
    with np.errstate(over="raise", divide="raise", invalid="raise"):  # no warning on the way
        h = convert(z, "z", "h")
    np.testing.assert_array_equal(h[:, 0, 0], z[:, 0, 0])
    np.testing.assert_array_equal(h[:, 1, 1], [1.0, 2.0])
    # and Y of Z near the top of the range: Y = Z^-1 (definition, by numpy)
    y = convert(z, "z", "y")
    assert _rel(y, np.linalg.inv(z)) < 1e-12


@pytest.mark.parametrize("src,dst,data", [
    ("z", "y", [[1e200, 1e200], [1e200, 3e200]]),  # det Z ~ 1e400
    ("z", "s", [[1e300, 2e300], [1e300, 3e300]]),
    ("abcd", "s", [[1e307, 1e308], [1e306, 1e307]]),
    ("z", "abcd", [[1e300, 1.0], [1e-10, 1.0]]),  # A = z11/z21 = 1e310
])
def test_huge_finite_input_raises_instead_of_nan(src, dst, data):
    with np.errstate(all="raise"):  # and no floating-point warning escapes
        with pytest.raises(dm.InputError, match=rf"{src} -> {dst} overflows the float range at point 1"):
            convert(np.array([np.eye(2) + 1, data], dtype=complex), src, dst)


def test_pivot_too_small_for_its_reciprocal_is_singular():
    # y11 = 5e-324 (subnormal): h11 = 1/y11 overflows, so H does not exist in floating point.
    y = np.array([[[5e-324, 1.0], [1.0, 1.0]]], dtype=complex)
    with pytest.raises(dm.SingularParameterError, match=r"^h: .*\(y11 = 0, at point 0; converting Y to H\)$"):
        convert(y, "y", "h")

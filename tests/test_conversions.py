"""Conversions among y, z, h, g, abcd, s: against scikit-rf, round trips, reciprocity."""

from __future__ import annotations

import itertools

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import devmodels as dm
from devmodels.constants import KINDS
from devmodels.conversions import convert

from conftest import random_twoports

skrf_net = pytest.importorskip("skrf.network")

# scikit-rf's own conversion functions (skrf.network, power-wave S, real z0): the
# independent reference.  Every pair goes src -> S -> dst through them.
TO_S = {"z": skrf_net.z2s, "y": skrf_net.y2s, "h": skrf_net.h2s, "g": skrf_net.g2s,
        "abcd": skrf_net.a2s, "s": lambda s, z0: s}
FROM_S = {"z": skrf_net.s2z, "y": skrf_net.s2y, "h": skrf_net.s2h, "g": skrf_net.s2g,
          "abcd": skrf_net.s2a, "s": lambda s, z0: s}


def _rel(a, b):
    return np.max(np.abs(a - b)) / np.max(np.abs(b))


@pytest.mark.parametrize("z0", [(50.0, 50.0), (50.0, 75.0)])
@pytest.mark.parametrize("src,dst", list(itertools.product(KINDS, KINDS)))
def test_every_pair_against_scikit_rf(src, dst, z0):
    rng = np.random.default_rng(7)
    z = random_twoports(rng, 64, z0)
    z0a = np.array(z0)
    data = FROM_S[src](skrf_net.z2s(z, z0a), z0a)
    ref = FROM_S[dst](TO_S[src](data, z0a), z0a)
    mine = convert(data, src, dst, z0)
    assert mine.shape == (64, 2, 2)
    assert _rel(mine, ref) < 1e-10


def test_convert_keeps_leading_shape_and_does_not_squeeze():
    rng = np.random.default_rng(1)
    z = random_twoports(rng, 12).reshape(3, 4, 2, 2)
    assert convert(z, "z", "y").shape == (3, 4, 2, 2)
    one = convert(z[0, :1], "z", "s")
    assert one.shape == (1, 2, 2)


def test_long_arrays_cross_block_boundaries():
    # more points than one block, so the block loop is exercised
    rng = np.random.default_rng(2)
    z = random_twoports(rng, 5000)
    ref = np.linalg.inv(z)  # Y = Z^-1 (definition)
    assert _rel(convert(z, "z", "y"), ref) < 1e-12


def test_s_renormalisation_matches_scikit_rf():
    # Reference: skrf.Network.renormalize (power waves), and S recomputed from Z at the new z0.
    import skrf

    rng = np.random.default_rng(3)
    z = random_twoports(rng, 16)
    s50 = skrf_net.z2s(z, 50.0)
    mine = convert(s50, "s", "s", 50.0, z0_out=(75.0, 25.0))
    assert _rel(mine, skrf_net.z2s(z, np.array([75.0, 25.0]))) < 1e-12
    net = skrf.Network(frequency=skrf.Frequency.from_f(np.arange(1, 17) * 1e6, unit="Hz"), s=s50, z0=50)
    net.renormalize(np.array([75.0, 25.0]), s_def="power")
    assert _rel(mine, net.s) < 1e-10


@pytest.mark.parametrize("dst", ["z", "g", "h", "abcd"])
def test_missing_set_raises_instead_of_inf(dst):
    # A unilateral device with no output conductance: y12 = 0, y22 = 0.  Z and G do not
    # exist (det Y = 0, y22 = 0); H (h11 = 1/y11, h22 = det Y / y11 = 0) and ABCD
    # (B = -1/y21) do.  Relations: Pozar, Microwave Engineering, 4th ed., table 4.2
    # and the usual h/g tables (from memory).
    y = np.array([[[1e-3, 0.0], [40e-3, 0.0]]], dtype=complex)
    if dst == "abcd":
        a = convert(y, "y", "abcd")
        assert np.all(np.isfinite(a))
        assert a[0, 0, 1] == pytest.approx(-1 / 40e-3)
    elif dst == "h":
        h = convert(y, "y", "h")
        np.testing.assert_allclose(h[0], [[1e3, 0], [40.0, 0]], atol=1e-12)
    else:
        with pytest.raises(dm.SingularParameterError, match=f"the {dst} parameters do not exist"):
            convert(y, "y", dst)


def test_bad_inputs():
    with pytest.raises(dm.InputError, match="unknown parameter kind"):
        convert(np.eye(2), "q", "y")
    with pytest.raises(dm.InputError, match="shape"):
        convert(np.ones((3, 3)), "y", "z")
    with pytest.raises(dm.InputError, match="NaN"):
        convert(np.array([[np.nan, 0], [0, 1]]), "y", "z")
    with pytest.raises(dm.InputError, match="positive reference"):
        convert(np.eye(2), "y", "s", z0=-50)
    assert issubclass(dm.SingularParameterError, ValueError)


def test_twoport_singular_error_names_frequency():
    tp = dm.TwoPort(np.array([1e3, 2e3]), np.array([[[1e-3, 0], [4e-2, 0]]] * 2), "y")
    with pytest.raises(dm.SingularParameterError, match="at 1000 Hz"):
        tp.to("z")


# --- property tests ----------------------------------------------------------------
finite = st.floats(min_value=-10, max_value=10, allow_nan=False, allow_infinity=False)
cplx = st.builds(complex, finite, finite)
# off-diagonal entries bounded away from zero, so that every kind exists
polar = st.builds(lambda m, p: m * np.exp(1j * p), st.floats(1.0, 10.0), st.floats(-np.pi, np.pi))


@settings(max_examples=150, deadline=None)
@given(d1=cplx, d2=cplx, o1=polar, o2=polar, src=st.sampled_from(KINDS), dst=st.sampled_from(KINDS))
def test_round_trip_through_every_kind(d1, d2, o1, o2, src, dst):
    # A well-conditioned Z expressed as src, taken to dst and back.
    z = np.array([[[d1 + 25, o1], [o2, d2 + 25]]], dtype=complex) * 10.0
    try:
        data = convert(z, "z", src)
        there = convert(data, src, dst)
        back = convert(there, dst, src)
    except dm.SingularParameterError:
        return  # this kind does not exist for this network: nothing to round-trip
    assert _rel(back, data) < 1e-8


@settings(max_examples=100, deadline=None)
@given(a=cplx, b=cplx, d=cplx)
def test_reciprocity_carried_across_kinds(a, b, d):
    # Reciprocal network: z12 = z21.  Then y12 = y21, s12 = s21 (equal z0), h12 = -h21,
    # g12 = -g21, det(ABCD) = 1 (Pozar, Microwave Engineering, sec. 4.2 and 4.4, from memory).
    z = np.array([[[a + 30, b], [b, d + 30]]], dtype=complex) * 10
    y = convert(z, "z", "y")
    s = convert(z, "z", "s")
    h = convert(z, "z", "h")
    g = convert(z, "z", "g")
    assert y[0, 0, 1] == pytest.approx(y[0, 1, 0], rel=1e-9, abs=1e-15)
    assert s[0, 0, 1] == pytest.approx(s[0, 1, 0], rel=1e-9, abs=1e-12)
    if abs(b) > 1e-3:  # with z21 = 0 the ABCD set does not exist
        t = convert(z, "z", "abcd")
        assert h[0, 0, 1] == pytest.approx(-h[0, 1, 0], rel=1e-9, abs=1e-12)
        assert g[0, 0, 1] == pytest.approx(-g[0, 1, 0], rel=1e-9, abs=1e-12)
        # det = AD - BC = 1, judged against the size of the products that cancel
        ad, bc = t[0, 0, 0] * t[0, 1, 1], t[0, 0, 1] * t[0, 1, 0]
        assert abs(ad - bc - 1.0) <= 1e-9 * (abs(ad) + abs(bc))

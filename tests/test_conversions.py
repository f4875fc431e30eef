"""Conversions among y, z, h, g, abcd, s: against scikit-rf, against a sympy derivation,
round trips and reciprocity.

Edge cases (blocks, errors, extreme values) are in test_conversions_edges.py.
"""

from __future__ import annotations

import itertools
import random

import numpy as np
import pytest
import skrf
import skrf.network as skrf_net
import sympy as sp
from hypothesis import given, settings
from hypothesis import strategies as st

import devmodels as dm
from devmodels import conversions
from devmodels.constants import KINDS
from devmodels.conversions import convert

from conftest import random_twoports

# scikit-rf's own conversion functions (skrf.network, power-wave S, real z0): the
# independent reference.  Every pair goes src -> S -> dst through them.
TO_S = {"z": skrf_net.z2s, "y": skrf_net.y2s, "h": skrf_net.h2s, "g": skrf_net.g2s,
        "abcd": skrf_net.a2s, "s": lambda s, z0: s}
FROM_S = {"z": skrf_net.s2z, "y": skrf_net.s2y, "h": skrf_net.s2h, "g": skrf_net.s2g,
          "abcd": skrf_net.s2a, "s": lambda s, z0: s}
PAIRS = [(a, b) for a, b in itertools.product(KINDS, KINDS) if a != b]


def _rel(a, b):
    return np.max(np.abs(a - b)) / np.max(np.abs(b))


@pytest.mark.parametrize("z0", [(50.0, 50.0), (50.0, 75.0)])
@pytest.mark.parametrize("src,dst", list(itertools.product(KINDS, KINDS)))
def test_every_pair_against_scikit_rf(src, dst, z0):
    # Reference: scikit-rf 2.x, skrf.network.*2s and s2* (power waves, real z0 per port).
    rng = np.random.default_rng(7)
    z = random_twoports(rng, 64, z0)
    z0a = np.array(z0)
    data = FROM_S[src](skrf_net.z2s(z, z0a), z0a)
    ref = FROM_S[dst](TO_S[src](data, z0a), z0a)
    mine = convert(data, src, dst, z0)
    assert mine.shape == (64, 2, 2)
    assert _rel(mine, ref) < 1e-10


@pytest.mark.parametrize("src,dst,fn", [
    ("z", "y", skrf_net.z2y), ("y", "z", skrf_net.y2z), ("z", "h", skrf_net.z2h),
    ("h", "z", skrf_net.h2z), ("z", "abcd", skrf_net.z2a), ("abcd", "z", skrf_net.a2z)])
def test_pairs_without_s_against_scikit_rf_direct_functions(src, dst, fn):
    # Reference: scikit-rf's direct functions (skrf.network.z2y, z2h, z2a, ...), no S on the way.
    rng = np.random.default_rng(8)
    data = convert(random_twoports(rng, 64), "z", src)
    assert _rel(convert(data, src, dst), fn(data)) < 1e-12


def test_s_renormalisation_matches_scikit_rf():
    # Reference: skrf.Network.renormalize (power waves), and S recomputed from Z at the
    # new references with skrf.network.z2s.
    rng = np.random.default_rng(3)
    z = random_twoports(rng, 16)
    s50 = skrf_net.z2s(z, 50.0)
    mine = convert(s50, "s", "s", 50.0, z0_out=(75.0, 25.0))
    assert _rel(mine, skrf_net.z2s(z, np.array([75.0, 25.0]))) < 1e-12
    net = skrf.Network(frequency=skrf.Frequency.from_f(np.arange(1, 17) * 1e6, unit="Hz"), s=s50, z0=50)
    net.renormalize(np.array([75.0, 25.0]), s_def="power")
    assert _rel(mine, net.s) < 1e-10


def test_s_between_unequal_references_at_both_ends():
    # S at (50, 75) ohm renormalised to (30, 20) ohm, and every kind from that S, against
    # scikit-rf (skrf.network.z2s and s2*, power waves).
    z = random_twoports(np.random.default_rng(15), 32)
    z0 = np.array([50.0, 75.0])
    s_in = skrf_net.z2s(z, z0)
    ref = skrf_net.z2s(z, np.array([30.0, 20.0]))
    assert _rel(convert(s_in, "s", "s", (50.0, 75.0), z0_out=(30.0, 20.0)), ref) < 1e-12
    for dst in ("z", "y", "h", "g", "abcd"):
        assert _rel(convert(s_in, "s", dst, (50.0, 75.0)), FROM_S[dst](s_in, z0)) < 1e-10, dst
    # and into S at other references than the source's (z0_out), from every kind
    for src in ("z", "y", "h", "g", "abcd"):
        data = FROM_S[src](s_in, z0)
        assert _rel(convert(data, src, "s", z0, z0_out=(30.0, 20.0)), ref) < 1e-10, src


# --- the written formulas against a sympy derivation from the definitions -----------
_V1, _V2, _I1, _I2, _X1, _X2 = sp.symbols("V1 V2 I1 I2 x1 x2")
_M = sp.symbols("m11 m12 m21 m22")


def _outputs_inputs(kind, refs):
    """The outputs and inputs of a kind as expressions in V1, V2, I1, I2 (module docstring);
    S: power waves a_k = (V_k + R_k I_k)/(2 sqrt R_k), b_k = (V_k - R_k I_k)/(2 sqrt R_k)
    (Kurokawa, IEEE Trans. MTT 13(2), 1965)."""
    if kind == "s":
        ports = ((_V1, _I1, refs[0]), (_V2, _I2, refs[1]))
        b = [(v - r * i) / (2 * sp.sqrt(r)) for v, i, r in ports]
        a = [(v + r * i) / (2 * sp.sqrt(r)) for v, i, r in ports]
        return b, a
    return {"z": ((_V1, _V2), (_I1, _I2)), "y": ((_I1, _I2), (_V1, _V2)),
            "h": ((_V1, _I2), (_I1, _V2)), "g": ((_I1, _V2), (_V1, _I2)),
            "abcd": ((_V1, _I1), (_V2, -_I2))}[kind]


def _derive(src, dst, refs, refs_out):
    """The dst matrix of a network given by a symbolic src matrix, solved with sympy."""
    s_out, s_in = _outputs_inputs(src, refs)
    d_out, d_in = _outputs_inputs(dst, refs_out)
    # the network (two source equations) with the target inputs set to x1, x2
    eqs = [s_out[i] - _M[2 * i] * s_in[0] - _M[2 * i + 1] * s_in[1] for i in range(2)]
    (sol,) = sp.linsolve(eqs + [d_in[0] - _X1, d_in[1] - _X2], [_V1, _V2, _I1, _I2])
    outs = [sp.expand(o.subs(dict(zip([_V1, _V2, _I1, _I2], sol)))) for o in d_out]
    return [o.coeff(x) for o in outs for x in (_X1, _X2)]


# References with rational square roots (and R R' squares), so that sympy works in
# rational functions of the entries: equal, and unequal at the two ports.
@pytest.mark.parametrize("refs,refs_out", [((64, 64), (25, 25)), ((49, 81), (25, 36))])
@pytest.mark.parametrize("src,dst", PAIRS + [("s", "s")])
def test_closed_forms_equal_a_sympy_derivation(src, dst, refs, refs_out):
    refs = tuple(map(sp.Integer, refs))
    refs_out = tuple(map(sp.Integer, refs_out)) if src == dst == "s" else refs
    derived = _derive(src, dst, refs, refs_out)
    pivot, terms, nums = conversions._closed_form(src, dst, refs, refs_out, sqrt=sp.sqrt)(*_M)
    for n, d in zip(nums, derived):
        assert sp.cancel(sp.together(n / pivot - d)) == 0
    # the pivot is a sum or difference of its terms (the scale of the existence test)
    assert any(sp.expand(pivot - sum(c * t for c, t in zip(signs, terms))) == 0
               for signs in itertools.product((1, -1), repeat=len(terms)))


# --- existence ------------------------------------------------------------------------
@pytest.mark.parametrize("dst", ["z", "g", "h", "abcd", "s"])
def test_missing_set_raises_instead_of_inf(dst):
    # A unilateral device with no output conductance: y12 = 0, y22 = 0.  Z and G do not
    # exist (det Y = 0, y22 = 0); H (h11 = 1/y11, h22 = det Y / y11 = 0), ABCD
    # (B = -1/y21) and S do.  Relations: Pozar, Microwave Engineering, 4th ed., table 4.2
    # and the usual h/g tables (from memory).
    y = np.array([[[1e-3, 0.0], [40e-3, 0.0]]], dtype=complex)
    if dst == "abcd":
        a = convert(y, "y", "abcd")
        assert np.all(np.isfinite(a))
        assert a[0, 0, 1] == pytest.approx(-1 / 40e-3)
    elif dst == "h":
        h = convert(y, "y", "h")
        np.testing.assert_allclose(h[0], [[1e3, 0], [40.0, 0]], atol=1e-12)
    elif dst == "s":
        # s22 = 1 (an open output), s12 = 0: y2s of scikit-rf (skrf.network.y2s) agrees
        s = convert(y, "y", "s")
        assert _rel(s, skrf_net.y2s(y, 50.0)) < 1e-12 and s[0, 1, 1] == pytest.approx(1.0)
    else:
        why = {"z": r"Y is singular: det Y = 0", "g": "y22 = 0"}[dst]
        with pytest.raises(dm.SingularParameterError, match=rf"^{dst}: the {dst.upper()} parameters do not "
                                                           rf"exist for this two-port \({why}, at point 0"):
            convert(y, "y", dst)


def test_twoport_singular_error_names_frequency():
    tp = dm.TwoPort(np.array([1e3, 2e3]), np.array([[[1e-3, 0], [4e-2, 0]]] * 2), "y")
    with pytest.raises(dm.SingularParameterError, match="at 1000 Hz"):
        tp.to("z")


# --- property tests ----------------------------------------------------------------
finite = st.floats(min_value=-10, max_value=10, allow_nan=False, allow_infinity=False)
cplx = st.builds(complex, finite, finite)
# off-diagonal entries bounded away from zero, so that every kind exists
polar = st.builds(lambda m, p: m * np.exp(1j * p), st.floats(1.0, 10.0), st.floats(-np.pi, np.pi))
refs = st.tuples(st.floats(1.0, 500.0), st.floats(1.0, 500.0))


@settings(max_examples=200, deadline=None)
@given(d1=cplx, d2=cplx, o1=polar, o2=polar, src=st.sampled_from(KINDS), dst=st.sampled_from(KINDS),
       z0=refs)
def test_round_trip_through_every_kind(d1, d2, o1, o2, src, dst, z0):
    # A well-conditioned Z expressed as src, taken to dst and back.  Every kind exists:
    # |z11|, |z22| >= 150 > |z12|, |z21| >= 10 (so det Z, z11, z22, z21 and the S pivot
    # (z11 + R1)(z22 + R2) - z12 z21, with Re z_kk >= 150, are all far from zero).
    z = np.array([[[d1 + 25, o1], [o2, d2 + 25]]], dtype=complex) * 10.0
    data = convert(z, "z", src, z0)
    there = convert(data, src, dst, z0)
    back = convert(there, dst, src, z0)
    assert back.shape == data.shape
    assert _rel(back, data) < 1e-8


@settings(max_examples=100, deadline=None)
@given(d1=cplx, d2=cplx, o1=polar, o2=polar, z0=refs, z0_out=refs)
def test_renormalising_s_equals_going_through_z(d1, d2, o1, o2, z0, z0_out):
    # Two routes to S at z0_out: renormalise S at z0, or Z -> S at z0_out directly.
    z = np.array([[[d1 + 25, o1], [o2, d2 + 25]]], dtype=complex) * 10.0
    s = convert(z, "z", "s", z0)
    assert _rel(convert(s, "s", "s", z0, z0_out=z0_out), convert(z, "z", "s", z0_out)) < 1e-9


@settings(max_examples=100, deadline=None)
@given(a=cplx, b=st.one_of(st.just(0j), polar), d=cplx)
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
    assert h[0, 0, 1] == pytest.approx(-h[0, 1, 0], rel=1e-9, abs=1e-12)
    assert g[0, 0, 1] == pytest.approx(-g[0, 1, 0], rel=1e-9, abs=1e-12)
    if b != 0:  # with z21 = 0 the ABCD set does not exist
        t = convert(z, "z", "abcd")
        # det = AD - BC = 1, judged against the size of the products that cancel
        ad, bc = t[0, 0, 0] * t[0, 1, 1], t[0, 0, 1] * t[0, 1, 0]
        assert abs(ad - bc - 1.0) <= 1e-9 * (abs(ad) + abs(bc))
    else:
        with pytest.raises(dm.SingularParameterError, match="^abcd: .*z21 = 0: no forward transmission"):
            convert(z, "z", "abcd")


def test_lossless_reciprocal_network_has_unitary_s():
    # A lossless network (purely imaginary Z) has unitary S at any real references:
    # S^H S = 1 (Pozar, Microwave Engineering, sec. 4.3, from memory).
    rng = random.Random(5)
    for _ in range(20):
        x = [rng.uniform(-200, 200) for _ in range(3)]
        z = 1j * np.array([[[x[0], x[1]], [x[1], x[2]]]])
        for z0 in ((50.0, 50.0), (20.0, 300.0)):
            s = convert(z, "z", "s", z0)[0]
            np.testing.assert_allclose(s.conj().T @ s, np.eye(2), atol=1e-12)

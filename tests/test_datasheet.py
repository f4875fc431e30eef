"""Datasheet values at their test conditions, moved to the bias point (devmodels.datasheet).

All device data here are invented.
"""

from __future__ import annotations

import dataclasses
import inspect
import math

import numpy as np
import pytest

import devmodels
from devmodels import datasheet as ds
from devmodels.exceptions import InputError
from devmodels.fet import FetModel
from devmodels.fetbias import JfetBias

# Exact SI values of k and q (BIPM, The International System of Units, 9th ed., 2019),
# written here again so that VT does not come from the package under test.
K_B, Q_E = 1.380649e-23, 1.602176634e-19


def approx(expected, rel=1e-12):
    """pytest.approx without its default absolute tolerance of 1e-12, which would swallow
    every capacitance (pF) and transit time (ps) compared here."""
    return pytest.approx(expected, rel=rel, abs=0)


def vt(temp=300.0):
    return K_B * temp / Q_E


def ft_law(ic, tau, c, temp=300.0):
    # Transit-time relation 1/(2 pi fT) = tau_F + (C_je + C_mu) VT/IC (Gray, Hurst, Lewis and
    # Meyer, Analysis and Design of Analog Integrated Circuits, ch. 1; from memory).
    return 1.0 / (2 * math.pi * (tau + c * vt(temp) / np.asarray(ic)))


TAU, CJE, CMU = 0.35e-9, 2.2e-12, 0.9e-12


# --- fT against IC ---------------------------------------------------------------------------

def test_ft_one_point_reproduces_the_law_at_two_currents():
    ft10 = ft_law(10e-3, TAU, CJE + CMU)
    ft1 = ft_law(1e-3, TAU, CJE + CMU)
    r = ds.ft_at_bias(np.array([1e-3, 10e-3]), ft10, 10e-3, ft_at_vce=5.0, c_je=CJE, c_mu=CMU)
    np.testing.assert_allclose(r.ft_used, [ft1, ft10], rtol=1e-12)
    assert r.tau_f == approx(TAU, rel=1e-12)
    assert r.method == "transit-time" and r.ft_at_vce == 5.0
    # and from the other point back again, scalar in, float out
    back = ds.ft_at_bias(10e-3, ft1, 1e-3, c_je=CJE, c_mu=CMU)
    assert isinstance(back.ft_used, float)
    assert back.ft_used == approx(ft10, rel=1e-12)
    assert "given at IC = 1 mA" in back.note and "used" in back.note


def test_ft_with_c_mu_different_at_the_test_point_and_another_temperature():
    cmu_test, cmu_bias = 0.7e-12, 1.1e-12
    ft_test = ft_law(5e-3, TAU, CJE + cmu_test, temp=300.0)
    r = ds.ft_at_bias(2e-3, ft_test, 5e-3, c_je=CJE, c_mu=cmu_bias, c_mu_test=cmu_test, temp=350.0)
    assert r.ft_used == approx(ft_law(2e-3, TAU, CJE + cmu_bias, temp=350.0), rel=1e-12)


def test_ft_fit_recovers_tau_and_capacitance_from_exact_points():
    ics = np.array([0.5e-3, 1e-3, 2e-3, 5e-3, 10e-3, 20e-3])
    fts = ft_law(ics, TAU, CJE + CMU)
    r = ds.ft_at_bias(3e-3, fts, ics, ft_at_vce=10.0)
    assert r.method == "transit-time fit"
    assert r.tau_f == approx(TAU, rel=1e-9)
    assert r.fit.c_sum == approx(CJE + CMU, rel=1e-9)
    assert r.fit.rel_residual < 1e-12 and r.fit.points == 6
    assert r.ft_used == approx(ft_law(3e-3, TAU, CJE + CMU), rel=1e-9)
    # C_mu known at the test points and different at the bias point: c_je is the rest of the sum
    r3 = ds.ft_at_bias(3e-3, fts, ics, c_mu=1.2e-12, c_mu_test=CMU)
    assert r3.c_je == approx(CJE, rel=1e-9)
    assert r3.ft_used == approx(ft_law(3e-3, TAU, CJE + 1.2e-12), rel=1e-9)
    # with c_je known, only tau_F is fitted
    r2 = ds.ft_at_bias(3e-3, fts, ics, c_je=CJE, c_mu=CMU)
    assert r2.tau_f == approx(TAU, rel=1e-9)
    # points that do not lie on the law leave a residual
    noisy = fts * np.array([1.0, 1.02, 0.99, 1.0, 1.01, 0.98])
    assert ds.fit_transit_time(noisy, ics).rel_residual > 1e-3


def test_ft_one_point_without_c_je_is_held_and_says_why():
    r = ds.ft_at_bias(1e-3, 300e6, 10e-3)
    assert r.ft_used == 300e6 and r.method == "held" and r.tau_f is None
    assert "one test point and no c_je: the transit-time law needs c_je; fT held" in r.note
    r = ds.ft_at_bias(np.array([1e-3, 2e-3]), 300e6)
    np.testing.assert_array_equal(r.ft_used, [300e6, 300e6])
    assert "no test IC" in r.note


@pytest.mark.parametrize("kwargs,name", [
    (dict(ic=1e-3, ft=300e6, ft_at_ic=10e-3, c_je=0.0), "c_je"),
    (dict(ic=1e-3, ft=300e6, ft_at_ic=10e-3, c_je=-1e-12), "c_je"),
    (dict(ic=1e-3, ft=300e6, ft_at_ic=10e-3, c_je=1e-12, c_mu=-1e-12), "c_mu"),
    # 1/(2 pi 3 GHz) = 53 ps, below C VT/IC = 3.1 pF * 25.85 mV / 1 mA = 80 ps: tau_F < 0
    (dict(ic=1e-3, ft=3e9, ft_at_ic=1e-3, c_je=CJE, c_mu=CMU), "c_je"),
    (dict(ic=1e-3, ft=300e6, c_je=CJE), "ft_at_ic"),          # test condition missing its value
    (dict(ic=1e-3, ft=[300e6, 400e6]), "ft_at_ic"),
    (dict(ic=1e-3, ft=[300e6, 400e6], ft_at_ic=[1e-3]), "ft_at_ic"),
    (dict(ic=1e-3, ft=[300e6, 400e6], ft_at_ic=[1e-3, 1e-3]), "ft_at_ic"),
    (dict(ic=1e-3, ft=[400e6, 300e6], ft_at_ic=[1e-3, 10e-3]), "ft"),  # fT falling with IC
    (dict(ic=0.0, ft=300e6, ft_at_ic=1e-3), "ic"),
    (dict(ic=1e-3, ft=-3e8, ft_at_ic=1e-3), "ft"),
])
def test_ft_bad_input_names_the_value(kwargs, name):
    with pytest.raises(InputError, match=f"^{name}: "):
        ds.ft_at_bias(**kwargs)


def test_transit_time_refuses_negative_tau_with_arrays():
    with pytest.raises(InputError, match="^c_je: .*tau_F would be"):
        ds.transit_time(np.array([100e6, 3e9]), 1e-3, CJE, CMU)


# --- C_mu from Cob ---------------------------------------------------------------------------

@pytest.mark.parametrize("phi,m", [(0.75, 0.33), (0.6, 0.5), (0.9, 1 / 3)])
def test_cob_follows_the_junction_law_at_three_voltages(phi, m):
    # Junction law C(V) = C0 / (1 + V/phi)^m (Sze, Physics of Semiconductor Devices, from
    # memory): C0 from the test point, then C at each voltage.
    cob, at = 3.5e-12, 10.0
    c0 = cob * (1 + at / phi) ** m
    vcb = np.array([0.0, 2.3, 25.0])
    want = c0 / (1 + vcb / phi) ** m
    r = ds.cmu_from_cob(cob, at, vcb, cob_potential=phi, cob_exponent=m)
    np.testing.assert_allclose(r.c_mu, want, rtol=1e-12)
    assert ds.cmu_from_cob(cob, at, 10.0, cob_potential=phi, cob_exponent=m).c_mu == approx(cob, rel=1e-15)


def test_cob_defaults_and_vce_minus_vbe():
    # Defaults phi = 0.75 V, m = 0.33, VBE(on) = 0.7 V (common practice, no source).
    cob = 4e-12
    r = ds.cmu_from_cob(cob, 10.0, vce=5.0)
    assert r.vcb == approx(4.3)
    assert r.c_mu == approx(cob * ((1 + 10 / 0.75) / (1 + 4.3 / 0.75)) ** 0.33, rel=1e-12)
    assert ds.cmu_from_cob(cob, 10.0, vce=5.0, vbe=0.6).vcb == approx(4.4)
    assert "given at VCB = 10 V" in r.note and "used" in r.note


@pytest.mark.parametrize("args,kwargs,name", [
    ((0.0, 10.0, 5.0), {}, "cob"),
    ((-1e-12, 10.0, 5.0), {}, "cob"),
    ((4e-12, None, 5.0), {}, "cob_at_vcb"),                  # test condition missing its value
    ((4e-12, 10.0, -0.8), {}, "vcb"),                         # beyond -phi = -0.75 V
    ((4e-12, -0.75, 5.0), {}, "cob_at_vcb"),
    ((4e-12, 10.0, 5.0), {"vce": 5.0}, "vcb"),
    ((4e-12, 10.0), {}, "vcb"),
    ((4e-12, 10.0, 5.0), {"cob_potential": 0.0}, "cob_potential"),
    ((4e-12, 10.0, 5.0), {"cob_exponent": -0.5}, "cob_exponent"),
])
def test_cob_bad_input_names_the_value(args, kwargs, name):
    with pytest.raises(InputError, match=f"^{name}: "):
        ds.cmu_from_cob(*args, **kwargs)


# --- hFE table -------------------------------------------------------------------------------

TABLE = [[0.1e-3, 90.0], [1e-3, 160.0], [10e-3, 150.0], [100e-3, 60.0]]


def test_hfe_table_at_rows_between_rows_and_beyond():
    r = ds.hfe_from_table(TABLE, np.array([0.1e-3, 1e-3, 10e-3, 100e-3]))
    np.testing.assert_allclose(r.beta, [90, 160, 150, 60], rtol=1e-15)
    assert r.warnings == () and r.beta_min is None
    # between rows: linear in log10(IC), computed here
    ic = 3e-3
    want = 160 + (150 - 160) * (math.log10(ic) - math.log10(1e-3)) / (math.log10(10e-3) - math.log10(1e-3))
    assert ds.hfe_from_table(TABLE, ic).beta == approx(want, rel=1e-14)
    # beyond the ends: flat, with a warning returned
    lo, hi = ds.hfe_from_table(TABLE, 20e-6), ds.hfe_from_table(TABLE, 0.5)
    assert lo.beta == 90.0 and hi.beta == 60.0
    assert len(lo.warnings) == 1 and "below the table" in lo.warnings[0]
    assert len(hi.warnings) == 1 and "above the table" in hi.warnings[0]


def test_hfe_table_min_typ_max():
    t = [[1e-3, 100, 160, 300], [10e-3, 80, 150, 280]]
    r = ds.hfe_from_table(t, 10 ** -2.5)
    assert (r.beta_min, r.beta, r.beta_max) == approx((90.0, 155.0, 290.0), rel=1e-14)


@pytest.mark.parametrize("table,match", [
    ([[1e-3, 100], [1e-3, 120]], "hfe_table: IC values must increase"),
    ([[1e-2, 100], [1e-3, 120]], "hfe_table: IC values must increase"),
    ([[1e-3, 100], [1e-2, 0.0]], "hfe_table: row 2"),
    ([[1e-3, 100, 90, 120]], "hfe_table: row 1"),
    ([[1e-3, 100, 120]], "hfe_table: "),
    ([], "hfe_table: "),
])
def test_hfe_table_bad_input(table, match):
    with pytest.raises(InputError, match=f"^{match}"):
        ds.hfe_from_table(table, 1e-3)


# --- IB instead of IC -----------------------------------------------------------------------

def test_ib_with_constant_beta():
    r = ds.ic_from_ib(np.array([1e-6, 1e-5]), 150.0)
    np.testing.assert_allclose(r.ic, [150e-6, 1.5e-3], rtol=1e-15)


@pytest.mark.parametrize("ib", [5e-7, 1e-6, 6.25e-6, 2e-5, 3e-4, 5e-3])
def test_ib_with_table_solves_the_fixed_point(ib):
    r = ds.ic_from_ib(ib, hfe_table=TABLE)
    # the result is a fixed point of IC = beta(IC) IB, beta read independently from the table
    assert r.ic == approx(ds.hfe_from_table(TABLE, r.ic).beta * ib, rel=1e-12)
    assert r.beta * ib == approx(r.ic, rel=1e-15)
    assert bool(r.warnings) == (not 0.1e-3 <= r.ic <= 100e-3)


def test_ib_with_table_vectorised_and_beyond_the_ends():
    ib = np.array([1e-7, 1e-5, 1e-2])
    r = ds.ic_from_ib(ib, hfe_table=TABLE)
    assert r.ic[0] == approx(90 * 1e-7) and r.ic[2] == approx(60 * 1e-2)
    assert r.ic.shape == (3,) and len(r.warnings) == 2


def test_ib_refuses_a_table_with_several_solutions():
    # hFE 50 -> 1000 between 1 mA and 1.1 mA: with IB = 15 uA, IC = 0.75 mA (beta 50),
    # IC = 15 mA (beta 1000) and one point between all satisfy IC = beta(IC) IB.
    steep = [[1e-3, 50.0], [1.1e-3, 1000.0]]
    # independent count of sign changes of beta(IC) IB - IC on a dense log grid
    x = np.linspace(-5, 0, 200001)
    g = ds.hfe_from_table(steep, 10 ** x).beta * 15e-6 - 10 ** x
    assert np.count_nonzero(np.diff(np.sign(g))) == 3
    with pytest.raises(InputError, match="^hfe_table: with ib = .* 3 collector currents"):
        ds.ic_from_ib(15e-6, hfe_table=steep)
    # with a small IB the same table has one solution (left of the table)
    assert ds.ic_from_ib(1e-6, hfe_table=steep).ic == approx(50e-6)


def test_ib_finds_two_roots_inside_one_segment():
    # hFE 50 -> 1000 over one decade: log10(beta) - log10(IC) rises, then falls inside the
    # segment (its maximum where beta = slope/ln 10 = 412.6), so with IB = 10^-5.1 A both
    # segment ends give beta IB < IC, yet two solutions lie between them (and one left of it).
    wide = [[1e-3, 50.0], [1e-2, 1000.0]]
    ib = 10 ** -5.1
    x = np.linspace(-6, 0, 600001)
    g = ds.hfe_from_table(wide, 10 ** x).beta * ib - 10 ** x
    assert np.count_nonzero(np.diff(np.sign(g))) == 3
    with pytest.raises(InputError, match="^hfe_table: .* 3 collector currents"):
        ds.ic_from_ib(ib, hfe_table=wide)
    # a larger IB has one solution, right of the table
    assert ds.ic_from_ib(10 ** -4.6, hfe_table=wide).ic == approx(1000 * 10 ** -4.6, rel=1e-12)


def test_ib_bad_input():
    with pytest.raises(InputError, match="^beta: "):
        ds.ic_from_ib(1e-5)
    with pytest.raises(InputError, match="^beta: "):
        ds.ic_from_ib(1e-5, 100.0, hfe_table=TABLE)
    with pytest.raises(InputError, match="^ib: "):
        ds.ic_from_ib(-1e-5, 100.0)


# --- h-parameters to hybrid-pi ---------------------------------------------------------------

HSET = dict(hie=5.3e3, hre=2.0e-4, hfe=200.0, hoe=25e-6)


def _sympy_ce_h():
    """CE h-parameters of the hybrid-pi (rb, r_pi, r_mu, ro, gm; no capacitances), derived with
    sympy from the nodal equations (nodes b, b', c; emitter the reference)."""
    import sympy as sp  # sympy: the independent derivation
    gb, gpi, gmu, go, gm = sp.symbols("g_b g_pi g_mu g_o g_m", positive=True)
    vb, vbp, vc, i1, i2 = sp.symbols("v_b v_bp v_c i_1 i_2")
    eqs = [sp.Eq(i1, gb * (vb - vbp)),
           sp.Eq(0, gb * (vbp - vb) + gpi * vbp + gmu * (vbp - vc)),
           sp.Eq(i2, gm * vbp + go * vc + gmu * (vc - vbp))]
    short = sp.solve([e.subs(vc, 0) for e in eqs], [vb, vbp, i2], dict=True)[0]   # v2 = 0
    opened = sp.solve([e.subs(i1, 0) for e in eqs], [vb, vbp, i2], dict=True)[0]  # i1 = 0
    h = [[short[vb] / i1, opened[vb] / vc], [short[i2] / i1, opened[i2] / vc]]
    return sp.lambdify((gb, gpi, gmu, go, gm), [[sp.simplify(x) for x in row] for row in h])


def _elements_h_sympy(e):
    return np.array(_sympy_ce_h()(1 / e.rb, 1 / e.r_pi, 1 / e.r_mu, 1 / e.ro, e.gm), dtype=float)


def _package_h(e):
    model = e.to_model()
    return devmodels.Stage(model, "ce").two_port([1e3], "h").data[0]


def test_h_set_round_trip_through_the_package_and_sympy():
    e = ds.hybrid_pi_from_h(**HSET, h_at_ic=1e-3, h_at_vce=5.0)
    want = np.array([[HSET["hie"], HSET["hre"]], [HSET["hfe"], HSET["hoe"]]])
    np.testing.assert_allclose(_package_h(e).real, want, rtol=1e-9)
    np.testing.assert_allclose(_package_h(e).imag, 0.0, atol=1e-12)
    np.testing.assert_allclose(_elements_h_sympy(e), want, rtol=1e-9)
    assert e.gm == approx(1e-3 / vt(), rel=1e-14)
    assert e.va == approx(1e-3 * e.ro)
    assert "given at IC = 1 mA, VCE = 5 V" in e.note


def test_h_set_with_hre_zero_has_no_r_mu():
    e = ds.hybrid_pi_from_h(hie=2.7e3, hre=0.0, hfe=100.0, hoe=10e-6, h_at_ic=1e-3)
    assert math.isinf(e.r_mu)
    want = np.array([[2.7e3, 0.0], [100.0, 10e-6]])
    np.testing.assert_allclose(_package_h(e).real, want, rtol=1e-9, atol=1e-15)


def test_h_set_scaled_to_the_bias_current():
    e = ds.hybrid_pi_from_h(**HSET, h_at_ic=1e-3)
    same = ds.scale_hybrid_pi(e, 1e-3)
    for name in ("gm", "r_pi", "r_mu", "ro", "rb"):
        assert getattr(same, name) == approx(getattr(e, name), rel=1e-14)
    s = ds.scale_hybrid_pi(e, np.array([0.5e-3, 4e-3]), beta=np.array([180.0, 210.0]))
    ic = np.array([0.5e-3, 4e-3])
    np.testing.assert_allclose(s.gm, ic / vt(), rtol=1e-14)                  # gm = IC/VT
    np.testing.assert_allclose(s.r_pi, [180, 210] / (ic / vt()), rtol=1e-14)  # r_pi = beta/gm
    np.testing.assert_allclose(s.ro * ic, e.ro * 1e-3, rtol=1e-14)            # ro = VA/IC
    # r_mu as beta ro (common practice, no source)
    np.testing.assert_allclose(s.r_mu / (np.array([180.0, 210.0]) * s.ro), e.r_mu / (e.beta * e.ro), rtol=1e-14)
    assert s.rb == e.rb


@pytest.mark.parametrize("kwargs,name", [
    (dict(HSET, hie=3e3, h_at_ic=1e-3), "hie"),      # below (hfe + hre)/gm = 5.17 kohm: rb < 0
    (dict(HSET, hoe=5e-6, h_at_ic=1e-3), "hoe"),     # below the r_mu part, 7.8 uS: ro < 0
    (dict(HSET, hre=1.0, h_at_ic=1e-3), "hre"),
    (dict(HSET, hre=-1e-4, h_at_ic=1e-3), "hre"),
    (dict(HSET, hfe=0.0, h_at_ic=1e-3), "hfe"),
    (dict(HSET, h_at_ic=None), "h_at_ic"),           # test condition missing its value
])
def test_h_set_bad_input_names_the_value(kwargs, name):
    with pytest.raises(InputError, match=f"^{name}: "):
        ds.hybrid_pi_from_h(**kwargs)


# --- FETs ------------------------------------------------------------------------------------

def test_yfs_scales_like_the_package_jfet_square_law():
    idss, vp = 12e-3, -2.5
    gm_at = lambda i: FetModel.from_bias(JfetBias(id=i, vds=10.0, idss=idss, vp=vp)).gm  # noqa: E731
    r = ds.gm_from_yfs(gm_at(idss), idss, np.array([1e-3, 3e-3, 12e-3]))
    np.testing.assert_allclose(r.gm, [gm_at(1e-3), gm_at(3e-3), gm_at(12e-3)], rtol=1e-12)
    assert ds.gm_from_yfs(4e-3, 2e-3, 8e-3).gm == approx(8e-3)  # sqrt(4) = 2
    with pytest.raises(InputError, match="^yfs_at_id: "):
        ds.gm_from_yfs(4e-3, None, 8e-3)
    with pytest.raises(InputError, match="^yfs: "):
        ds.gm_from_yfs(0.0, 2e-3, 8e-3)


def test_fet_capacitances_from_ciss_crss_coss():
    # Ciss = Cgs + Cgd, Crss = Cgd, Coss = Cds + Cgd (FET datasheet conventions, from memory)
    r = ds.fet_capacitances(ciss=6e-12, crss=1.5e-12, coss=4e-12, at_vds=15.0)
    assert (r.cgs, r.cgd, r.cds) == approx((4.5e-12, 1.5e-12, 2.5e-12), rel=1e-14)
    assert "VDS = 15 V" in r.note


@pytest.mark.parametrize("args,name", [
    ((1e-12, 1.5e-12, 4e-12), "ciss"),
    ((6e-12, 1.5e-12, 1e-12), "coss"),
    ((6e-12, 0.0, 4e-12), "crss"),
    ((6e-12, 1.5e-12, -4e-12), "coss"),
])
def test_fet_capacitances_bad_input(args, name):
    with pytest.raises(InputError, match=f"^{name}: "):
        ds.fet_capacitances(*args)


# --- documentation ---------------------------------------------------------------------------

@pytest.mark.parametrize("name", [n for n in ds.__all__
                                  if inspect.isfunction(getattr(ds, n)) or inspect.isclass(getattr(ds, n))])
def test_every_public_name_documents_its_parameters(name):
    obj = getattr(ds, name)
    doc = inspect.getdoc(obj) or ""
    assert doc, f"{name} has no docstring"
    if inspect.isfunction(obj):
        wanted = list(inspect.signature(obj).parameters)
    else:
        wanted = [f.name for f in dataclasses.fields(obj)]
    assert [p for p in wanted if p not in doc] == []

"""The netlist engine: indefinite matrices by stamping and Kron reduction; closed forms, sympy, zero sums."""

from __future__ import annotations

import math

import numpy as np
import pytest

import devmodels as dm


def _bias(**kw):
    base = dict(ic=1e-3, vce=5.0, beta=100, va=80.0, ft=300e6, cmu=2e-12)
    base.update(kw)
    return dm.BipolarBias(**base)


def test_rows_and_columns_sum_to_zero():
    # Definition of the indefinite admittance matrix (Shekel 1954; any text on it).
    m = dm.HybridPi.from_bias(_bias(rb=50.0, rcx=10.0, rex=1.0))
    Y = dm.Stage(m, "ce", rdeg=47.0, rfb=10e3).indefinite(np.logspace(2, 9, 50))
    scale = np.abs(Y).max()
    assert np.abs(Y.sum(axis=1)).max() < 1e-12 * scale
    assert np.abs(Y.sum(axis=2)).max() < 1e-12 * scale


def test_ce_y_closed_forms_with_rb_zero():
    # y11 = 1/r_pi + jw(C_pi + C_mu), y12 = -jwC_mu, y21 = gm - jwC_mu, y22 = 1/ro + jwC_mu
    # (Gray, Hurst, Lewis and Meyer, Analysis and Design of Analog ICs, sec. 1.4 / 7.2; from memory).
    m = dm.HybridPi.from_bias(_bias())
    f = np.logspace(1, 10, 40)
    w = 2 * np.pi * f
    y = dm.Stage(m, "ce").two_port(f).data
    np.testing.assert_allclose(y[:, 0, 0], 1 / m.r_pi + 1j * w * (m.c_pi + m.c_mu), rtol=1e-12)
    np.testing.assert_allclose(y[:, 0, 1], -1j * w * m.c_mu, rtol=1e-12)
    np.testing.assert_allclose(y[:, 1, 0], m.gm - 1j * w * m.c_mu, rtol=1e-12)
    np.testing.assert_allclose(y[:, 1, 1], 1 / m.ro + 1j * w * m.c_mu, rtol=1e-12)


def test_ce_y_with_rb_against_sympy_nodal_solution():
    # Derive the CE Y of the hybrid-pi with rb symbolically from the nodal equations
    # (KCL at the internal base node b'), then compare with the library at random values.
    sp = pytest.importorskip("sympy")
    V1, V2, Vx, s = sp.symbols("V1 V2 Vx s")
    gm, rpi, ro, cpi, cmu, rb = sp.symbols("g_m r_pi r_o C_pi C_mu r_b", positive=True)
    ypi = 1 / rpi + s * cpi
    ymu = s * cmu
    kcl_bx = sp.Eq((V1 - Vx) / rb, Vx * ypi + (Vx - V2) * ymu)
    vx = sp.solve(kcl_bx, Vx)[0]
    I1 = (V1 - vx) / rb
    I2 = gm * vx + V2 / ro + (V2 - vx) * ymu
    Ysym = sp.Matrix([[sp.diff(I1, V1), sp.diff(I1, V2)], [sp.diff(I2, V1), sp.diff(I2, V2)]])
    fn = sp.lambdify((gm, rpi, ro, cpi, cmu, rb, s), Ysym, "numpy")
    rng = np.random.default_rng(11)
    for _ in range(5):
        vals = dict(gm=rng.uniform(1e-3, 0.5), r_pi=rng.uniform(100, 1e5), ro=rng.uniform(1e3, 1e6),
                    c_pi=rng.uniform(1e-13, 1e-10), c_mu=rng.uniform(1e-14, 5e-12), rb=rng.uniform(1, 500))
        m = dm.HybridPi(**vals)
        f = rng.uniform(1e3, 5e9)
        lib = dm.Stage(m, "ce").two_port([f]).data[0]
        ref = np.array(fn(vals["gm"], vals["r_pi"], vals["ro"], vals["c_pi"], vals["c_mu"], vals["rb"],
                          2j * math.pi * f), dtype=complex)
        np.testing.assert_allclose(lib, ref, rtol=1e-11)


def test_emitter_degeneration_low_frequency_transconductance():
    # With an emitter resistor RE, the CE short-circuit transconductance is
    # y21 = gm / (1 + gm RE (1 + 1/beta)) at low frequency (ro infinite; Sedra and Smith,
    # emitter-degenerated CE stage; from memory).
    m = dm.HybridPi.from_bias(dm.BipolarBias(ic=1e-3, vce=5.0, beta=100))
    re_ = 100.0
    y = dm.Stage(m, "ce", rdeg=re_).two_port([10.0]).data[0]
    assert y[1, 0].real == pytest.approx(m.gm / (1 + m.gm * re_ * (1 + 1 / m.beta)), rel=1e-12)
    # input resistance r_pi + (beta + 1) RE (the reflection rule)
    assert 1 / (y[0, 0].real) == pytest.approx(m.r_pi + (m.beta + 1) * re_, rel=1e-12)


def test_feedback_resistor_adds_to_y_matrix():
    # A resistor RF from collector to base is a shunt-shunt element: it adds 1/RF to y11
    # and y22 and subtracts it from y12 and y21 (nodal stamping, any circuit-analysis text).
    m = dm.HybridPi.from_bias(_bias())
    f = [1e3, 1e7]
    a = dm.Stage(m, "ce").two_port(f).data
    b = dm.Stage(m, "ce", rfb=10e3).two_port(f).data
    g = 1 / 10e3
    np.testing.assert_allclose(b - a, np.broadcast_to([[g, -g], [-g, g]], a.shape), atol=1e-15)


def test_bad_frequencies():
    m = dm.HybridPi.from_bias(_bias())
    with pytest.raises(dm.InputError, match="freq"):
        dm.Stage(m).indefinite([-1.0])
    with pytest.raises(dm.InputError, match="freq"):
        dm.Stage(m).indefinite([])


def _mp_indefinite(elements, keep, f, dps=50):
    """Reference: the indefinite matrix at ``keep`` from an independent mpmath nodal solution.

    ``elements`` are (kind, nodes, value) triples; the matrix of every node is stamped here
    (nodal stamping rules of any circuit text) and the other nodes are removed by the Schur
    complement Y_kk - Y_ki Y_ii^-1 Y_ik (Kron 1939) at 50 digits.
    """
    mp = pytest.importorskip("mpmath")
    mp.mp.dps = dps
    nodes = list(keep)
    for _, ns, _ in elements:
        for x in ns:
            if x not in nodes:
                nodes.append(x)
    ix = {x: i for i, x in enumerate(nodes)}
    m = len(nodes)
    Y = mp.matrix(m, m)
    jw = 1j * 2 * mp.pi * mp.mpf(f)
    for kind, ns, v in elements:
        if kind in ("noise", "flicker"):
            continue  # noise sources stamp nothing into the admittance matrix
        v = mp.mpf(v)
        if kind == "vccs":
            a, b, p, q = (ix[x] for x in ns)
            for r, c, sgn in ((a, p, 1), (a, q, -1), (b, p, -1), (b, q, 1)):
                Y[r, c] += sgn * v
            continue
        y = 1 / v if kind == "resistor" else jw * v
        a, b = ix[ns[0]], ix[ns[1]]
        Y[a, a] += y
        Y[b, b] += y
        Y[a, b] -= y
        Y[b, a] -= y
    k = len(keep)
    inner = list(range(k, m))
    Yii = mp.matrix([[Y[i, j] for j in inner] for i in inner])
    Yki = mp.matrix([[Y[i, j] for j in inner] for i in range(k)])
    Yik = mp.matrix([[Y[i, j] for j in range(k)] for i in inner])
    Ykk = mp.matrix([[Y[i, j] for j in range(k)] for i in range(k)])
    return Ykk - Yki * mp.inverse(Yii) * Yik


@pytest.mark.parametrize("rg, f", [(1.0, 1e3), (10.0, 1.0), (0.1, 1e4), (5.0, 1e9)])
def test_small_series_resistance_keeps_every_digit_against_mpmath(rg, f):
    # A FET behind a small gate resistance at low frequency: Re(y_gg) is about w^2 C^2 rg,
    # some 1e-15 of |y_gg|, and a plain Kron update (1/rg - (1/rg)^2 / (1/rg + jwC)) loses it.
    # Each real and imaginary part of the indefinite matrix must match an independent
    # 50-digit mpmath solution (mpmath, a general-purpose arbitrary-precision library).
    mp = pytest.importorskip("mpmath")
    m = dm.FetModel(gm=0.02, gmb=3e-3, ro=20e3, cgs=0.8e-12, cgd=0.15e-12, csb=0.2e-12, cdb=0.2e-12,
                    rg=rg, rdx=2.0, rsx=1.0)
    for config in ("cs", "cd", "cg"):
        st = dm.Stage(m, config)
        net = st.netlist()
        ref = _mp_indefinite([(e.kind, e.nodes, e.value) for e in net.elements], st.terminals, f)
        got = st.indefinite([f])[0]
        for i in range(3):
            for j in range(3):
                r = ref[i, j]
                for part, want in ((got[i, j].real, float(mp.re(r))), (got[i, j].imag, float(mp.im(r)))):
                    if want == 0:
                        assert abs(part) <= 1e-15 * float(abs(r)), (config, i, j)
                    else:
                        assert part == pytest.approx(want, rel=1e-9, abs=0), (config, i, j)


@pytest.mark.parametrize("f", [1.0, 1e3, 1e6, 1e9])
def test_bipolar_with_small_ohmic_resistances_against_mpmath(f):
    # As above for a hybrid-pi with small rb, rcx, rex (collector and emitter are outputs of
    # the controlled source, the base and emitter control it), every configuration.
    mp = pytest.importorskip("mpmath")
    m = dm.HybridPi(gm=0.04, r_pi=2.5e3, ro=50e3, c_pi=10e-12, c_mu=1e-12, rb=0.5, r_mu=5e7, rcx=0.3, rex=0.2)
    for config in ("ce", "cb", "cc"):
        st = dm.Stage(m, config, rdeg=0.1)
        ref = _mp_indefinite([(e.kind, e.nodes, e.value) for e in st.netlist().elements], st.terminals, f)
        got = st.indefinite([f])[0]
        for i in range(3):
            for j in range(3):
                for part, want in ((got[i, j].real, float(mp.re(ref[i, j]))),
                                   (got[i, j].imag, float(mp.im(ref[i, j])))):
                    assert part == pytest.approx(want, rel=1e-9, abs=1e-15 * float(abs(ref[i, j]))), (config, i, j)


K_B = 1.380649e-23
Q_E = 1.602176634e-19


def test_thermal_noise_of_resistors_in_series():
    # Two resistors in series, each with its thermal noise 4kT/R (Johnson 1928; Nyquist 1928):
    # the short-circuit noise current of the pair is that of one resistor R1 + R2.
    from devmodels.netlist import Netlist, reduce_with_noise, resistor, thermal_noise

    r1, r2 = resistor("r1", "a", "x", 1e3), resistor("r2", "x", "g", 3.3e3)
    net = Netlist((r1, r2, *thermal_noise(r1, 290.0), *thermal_noise(r2, 290.0)))
    _, C = reduce_with_noise(net, ("a", "g"), 2 * np.pi * 1e3, 1)
    assert C[0, 0, 0].real == pytest.approx(4 * K_B * 290.0 / 4.3e3, rel=1e-12)
    assert C[0, 0, 1].real == pytest.approx(-4 * K_B * 290.0 / 4.3e3, rel=1e-12)  # the same current leaves g


def test_shot_noise_of_a_bipolar_at_its_terminals():
    # No rb, no capacitances: the short-circuit noise currents at base and collector are the
    # shot noise 2 q IB and 2 q IC, uncorrelated; r_pi and ro add none (they are not physical
    # resistors; Gray, Hurst, Lewis and Meyer, ch. 11; from memory).
    from devmodels.netlist import reduce_with_noise

    m = dm.HybridPi.from_bias(_bias(ft=None, cmu=0.0))
    st = dm.Stage(m, "ce")
    _, C = reduce_with_noise(st.netlist(), st.terminals, 2 * np.pi * 1e3, 1)
    ic, ib = 1e-3, 1e-3 / 100
    assert C[0, 0, 0].real == pytest.approx(2 * Q_E * ib, rel=1e-12)
    assert C[0, 1, 1].real == pytest.approx(2 * Q_E * ic, rel=1e-12)
    assert abs(C[0, 0, 1]) <= 1e-12 * C[0, 1, 1].real


def test_fet_channel_noise_and_flicker():
    # Drain noise 4 k T gamma_n gm (van der Ziel, from memory), with a 1/f part that equals the
    # white part at the corner frequency.
    from devmodels.netlist import reduce_with_noise

    m = dm.FetModel(gm=0.01, ro=20e3, gamma_n=2 / 3, flicker_corner=10e3, temp=300.0)
    st = dm.Stage(m, "cs")
    white = 4 * K_B * 300.0 * (2 / 3) * 0.01
    for f, want in ((10e3, 2 * white), (1e6, white * 1.01)):
        _, C = reduce_with_noise(st.netlist(), st.terminals, 2 * np.pi * f, 1)
        assert C[0, 1, 1].real == pytest.approx(want, rel=1e-12)
        assert C[0, 0, 0] == 0  # no gate resistance: no gate noise


# --- the inductor element (issue 14) ------------------------------------------------------------

def test_inductor_stamps_one_over_jwl_and_a_series_rl_is_r_plus_jwl():
    # A series R-L between two terminals: impedance R + jwL (the definition of impedance; from
    # memory), so the indefinite matrix is y [[1, -1], [-1, 1]] with y = 1/(R + jwL).
    from devmodels.netlist import Netlist, inductor, reduce_to, resistor

    el = inductor("l_b", "a", "m", 2e-9)
    assert el.kind == "inductor" and el.admittance(1j * 1e9) == pytest.approx(1 / (1j * 1e9 * 2e-9), rel=1e-15)
    net = Netlist((el, resistor("r", "m", "b", 5.0)))
    w = 2 * np.pi * np.array([1e3, 1e8, 1e10])
    Y = reduce_to(net, ("a", "b"), w, w.size)
    want = 1 / (5.0 + 1j * w * 2e-9)
    for k in range(w.size):
        assert Y[k, 0, 0].real == pytest.approx(want[k].real, rel=1e-12, abs=0)
        assert Y[k, 0, 0].imag == pytest.approx(want[k].imag, rel=1e-12, abs=0)
        assert Y[k, 0, 1] == pytest.approx(-want[k], rel=1e-12)


def test_inductor_refuses_0_hz_naming_itself():
    from devmodels.netlist import Netlist, inductor, reduce_to, resistor

    net = Netlist((inductor("l_e", "a", "m", 1e-9), resistor("r", "m", "b", 5.0)))
    with pytest.raises(dm.InputError, match=r"^l_e: an inductor is a short at 0 Hz"):
        reduce_to(net, ("a", "b"), np.array([0.0, 1e6]), 2)
    m = dm.HybridPi(gm=0.04, r_pi=2500.0, l_b=1e-9)
    with pytest.raises(dm.InputError, match=r"^l_b: "):
        dm.Stage(m, "ce").two_port([0.0])


def test_inductor_kind_and_nodes_checked():
    from devmodels.netlist import Element

    with pytest.raises(dm.InputError, match="nodes: a inductor takes 2 nodes"):
        Element("inductor", "l_b", ("a", "b", "c"), 1e-9)
    with pytest.raises(dm.InputError, match="kind: unknown element kind 'coil'"):
        Element("coil", "l_b", ("a", "b"), 1e-9)


def test_zero_lead_inductance_is_no_element():
    m = dm.HybridPi(gm=0.04, r_pi=2500.0, rb=50.0, l_b=0.0, l_e=1e-9)
    kinds = {e.name: e.kind for e in m.netlist().elements}
    assert "l_b" not in kinds and kinds["l_e"] == "inductor"

"""Two-port noise: correlation matrices, their transformations, noise parameters, stages.

Every outside check names its source.  Noise densities are tiny numbers (1e-24 A^2/Hz):
comparisons use relative tolerances (``rel=``/``rtol=``) with ``abs=0`` where pytest.approx
would otherwise add its 1e-12 absolute tolerance.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

import devmodels as dm
from devmodels.configs import CONFIG_TERMINALS
from devmodels.constants import thermal_voltage
from devmodels.interconnect import series_element, shunt_element
from devmodels.netlist import NOISE_KINDS, Netlist, capacitor, reduce_with_noise, resistor, thermal_noise
from devmodels.noise import (FORMS, T0, NoisyTwoPort, cascade_noise, ce_low_noise, ce_noise_design, config_noise,
                             connect_noise, correlation_transform, indefinite_noise, noise_factor,
                             noise_parameters, passive_noise, reconfigure_noise, stage_noise)

K_B = 1.380649e-23
Q_E = 1.602176634e-19


def _bjt(temp=290.0, ic=1e-3, beta=100.0, rb=50.0, **kw):
    vt = thermal_voltage(temp)
    gm = ic / vt
    return dm.HybridPi(gm=gm, r_pi=beta / gm, rb=rb, vt=vt, **kw)


def _bjt_hf(temp=300.0):
    """An invented bipolar with every parasitic: capacitances, ro, r_mu, rcx, rex."""
    return dm.HybridPi.from_bias(dm.BipolarBias(ic=2e-3, vce=5.0, beta=120, va=60.0, ft=400e6, cmu=1.5e-12,
                                                rb=80.0, rcx=5.0, rex=1.5, temp=temp))


def _fet():
    return dm.FetModel(gm=0.02, ro=15e3, cgs=2e-12, cgd=0.3e-12, rg=20.0, rsx=2.0, gamma_n=1.0, temp=310.0)


# --- direct computations from the circuit (independent of the noise parameters) -------------

def _direct_f(stage, f, rs, cs=0.0):
    """F from noise powers: a source R (|| C) at T0 on port 1, port 2 shorted.

    F = (output noise of every source) / (output noise of the source resistor alone): the
    IEEE definition of the noise factor (Friis 1944), computed on the netlist itself.
    """
    p1, p2, com = (stage.terminals[i] for i in CONFIG_TERMINALS[stage.config])
    r = resistor("r_src", p1, com, rs)
    extra = [r, *thermal_noise(r, T0)] + ([capacitor("c_src", p1, com, cs)] if cs else [])
    full = stage.netlist() + Netlist(tuple(extra))
    only = Netlist(tuple(e for e in full.elements if e.kind not in NOISE_KINDS or e.name == "noise_r_src"))
    w = 2 * np.pi * np.atleast_1d(f)
    _, c_all = reduce_with_noise(full, (p2, com), w, w.size)
    _, c_src = reduce_with_noise(only, (p2, com), w, w.size)
    return c_all[:, 0, 0].real / c_src[:, 0, 0].real


def _f_from_y(y, cy, ys):
    """F at the source ys from Y and C_Y: output short-circuit current of all sources / of the source.

    I1 = y11 V1 + i1 = i_s - ys V1, I2 = y21 V1 + i2 (V2 = 0), the source's current i_s of
    density 4 k T0 Re(ys): derived here from the port equations.
    """
    h = y[:, 1, 0] / (y[:, 0, 0] + ys)            # I2 per unit of (i_s - i1)
    c_s = 4 * K_B * T0 * ys.real
    noise = (np.abs(h) ** 2 * (c_s + cy[:, 0, 0].real) + cy[:, 1, 1].real
             - 2 * (h * cy[:, 0, 1]).real)         # <|h (i_s - i1) + i2|^2>
    return noise / (np.abs(h) ** 2 * c_s)


# --- the common-emitter closed form -------------------------------------------------------

def _ce_closed_form():
    """F(Rs) of a CE stage at low frequency (rb, r_pi, gm; no capacitances, no ro), with sympy.

    Sources: the source resistor 4kT0/Rs, rb 4kT/rb (Nyquist 1928), base shot noise 2qIB
    from b' to e and collector shot noise 2qIC (Schottky 1918; Gray, Hurst, Lewis and
    Meyer, ch. 11, from memory).  Nodal equations at the base terminal x and at b', the
    collector shorted to the emitter; F = total output noise / the source's share.
    """
    import sympy as sp

    Rs, rb, rpi, gm, k, T, Ts, q, IB, IC = sp.symbols("Rs rb rpi gm k T Ts q IB IC", positive=True)
    vx, vp, i_s, i_rb, i_b, i_c = sp.symbols("vx vp i_s i_rb i_b i_c")
    sol = sp.solve([sp.Eq(vx / Rs + (vx - vp) / rb, i_s - i_rb),
                    sp.Eq((vp - vx) / rb + vp / rpi, i_rb - i_b)], [vx, vp], dict=True)[0]
    i_out = gm * sol[vp] + i_c
    dens = {i_s: 4 * k * Ts / Rs, i_rb: 4 * k * T / rb, i_b: 2 * q * IB, i_c: 2 * q * IC}
    h = {s: sp.diff(i_out, s) for s in dens}
    F = sp.simplify(sum(h[s] ** 2 * dens[s] for s in dens) / (h[i_s] ** 2 * dens[i_s]))
    roots = [r for r in sp.solve(sp.diff(F, Rs), Rs) if r.is_positive is not False]
    syms = (rb, rpi, gm, k, T, Ts, q, IB, IC)
    return (sp.lambdify((Rs,) + syms, F), sp.lambdify(syms, roots[0]), syms)


def _ce_values(m):
    ic = m.gm * m.vt
    return (m.rb, m.r_pi, m.gm, K_B, m.temperature, T0, Q_E, ic / m.beta, ic)


@pytest.mark.parametrize("temp", [290.0, 330.0])
def test_ce_low_frequency_against_closed_form(temp):
    F, rs_opt, _ = _ce_closed_form()
    m = _bjt(temp=temp, ic=0.5e-3, beta=150.0, rb=120.0)
    ntp = stage_noise(dm.Stage(m, "ce"), [1e3])
    vals = _ce_values(m)
    for rs in (10.0, 200.0, 1e3, 2.2e3, 50e3):
        res = noise_parameters(ntp, zs=rs)
        assert res.f[0] == pytest.approx(F(rs, *vals), rel=1e-10, abs=0)
    res = noise_parameters(ntp)
    r_opt = rs_opt(*vals)
    assert 1 / res.yopt[0].real == pytest.approx(r_opt, rel=1e-9, abs=0)
    assert abs(res.yopt[0].imag) <= 1e-12 * res.yopt[0].real  # no reactance: a real optimum
    assert res.fmin[0] == pytest.approx(F(r_opt, *vals), rel=1e-10, abs=0)


def test_equivalent_input_noise_sources():
    # CE at low frequency, derived by hand from the same circuit: with the input shorted the
    # output noise referred back by y21 = gm r_pi/(rb + r_pi) gives
    #   en^2 = 4kT rb + 2qIB rb^2 + 2qIC (rb + r_pi)^2/(gm r_pi)^2,
    # with the input open, referred back by beta: in^2 = 2qIB + 2qIC/beta^2; and the
    # Rs-independent term of F(Rs) = 1 + (in^2 Rs + en^2/Rs + 2 Re C_ui)/(4kT0) gives
    #   C_ui = 2qIB rb + 2qIC (rb + r_pi)/(gm r_pi)^2.
    m = _bjt(temp=310.0, ic=0.2e-3, beta=80.0, rb=300.0)
    res = noise_parameters(stage_noise(dm.Stage(m, "ce"), [1e3]), zs=1e3)
    ic, ib, beta, t = m.gm * m.vt, m.gm * m.vt / 80.0, 80.0, m.temperature
    cu = 4 * K_B * t * m.rb + 2 * Q_E * ib * m.rb ** 2 + 2 * Q_E * ic * (m.rb + m.r_pi) ** 2 / (m.gm * m.r_pi) ** 2
    ci = 2 * Q_E * ib + 2 * Q_E * ic / beta ** 2
    cui = 2 * Q_E * ib * m.rb + 2 * Q_E * ic * (m.rb + m.r_pi) / (m.gm * m.r_pi) ** 2
    assert res.en[0] == pytest.approx(math.sqrt(cu), rel=1e-10, abs=0)
    assert res.in_[0] == pytest.approx(math.sqrt(ci), rel=1e-10, abs=0)
    assert res.correlation[0].real == pytest.approx(cui / math.sqrt(cu * ci), rel=1e-9, abs=0)
    assert abs(res.correlation[0].imag) <= 1e-12
    assert res.te[0] == pytest.approx(T0 * (res.f[0] - 1), rel=1e-14, abs=0)
    assert res.rn[0] == pytest.approx(cu / (4 * K_B * T0), rel=1e-10, abs=0)


@pytest.mark.parametrize("beta", [100.0, 1e3, 1e4])
def test_ce_optimum_against_the_classic_approximations(beta):
    # Rs_opt ~ (sqrt(beta)/gm) sqrt(1 + 2 gm rb), Fmin ~ 1 + sqrt((1 + 2 gm rb)/beta) (analog
    # texts, from memory), which drop terms of relative order (1 + gm rb)/beta and the 1/beta
    # terms of Fmin.  Checked to that order: the error shrinks as beta grows.
    m = _bjt(temp=290.0, ic=1e-3, beta=beta, rb=50.0)
    res = noise_parameters(stage_noise(dm.Stage(m, "ce"), [1e3]))
    x = 1 + 2 * m.gm * m.rb
    order = (1 + m.gm * m.rb) / beta
    rs_approx = math.sqrt(beta) / m.gm * math.sqrt(x)
    fmin_approx = 1 + math.sqrt(x / beta)
    assert abs(1 / res.yopt[0].real / rs_approx - 1) <= order
    assert abs(res.fmin[0] - fmin_approx) <= 2 * order
    assert abs(res.fmin[0] - fmin_approx) >= 0.01 * order  # the approximation is not exact: the check can fail


def test_fet_with_channel_noise_only():
    # Only the drain noise 4kT gamma_n gm (no rg, no gate noise): Rn = (T/T0) gamma_n/gm, the input
    # noise current is jw Cgs times the noise voltage (fully correlated), so Fmin = 1 at
    # Yopt = -jw Cgs (van der Ziel, Noise in Solid State Devices and Circuits, 1986; from memory).
    m = dm.FetModel(gm=0.015, cgs=3e-12, gamma_n=0.9, temp=330.0)
    f = np.array([1e6, 1e9])
    res = noise_parameters(stage_noise(dm.Stage(m, "cs"), f))
    np.testing.assert_allclose(res.rn, 330.0 / T0 * 0.9 / 0.015, rtol=1e-12, atol=0)
    np.testing.assert_allclose(res.fmin, 1.0, rtol=1e-12, atol=0)
    np.testing.assert_allclose(res.yopt.imag, -2 * np.pi * f * 3e-12, rtol=1e-9, atol=0)
    assert np.all(np.abs(res.yopt.real) <= 1e-6 * np.abs(res.yopt.imag))
    np.testing.assert_allclose(np.abs(res.correlation), 1.0, rtol=1e-9, atol=0)


# --- the noise parameters against the noise powers ----------------------------------------

@pytest.mark.parametrize("make", [lambda: dm.Stage(_bjt_hf(), "ce", rdeg=10.0, rfb=20e3),
                                  lambda: dm.Stage(_bjt_hf(), "cb"),
                                  lambda: dm.Stage(_fet(), "cs"),
                                  lambda: dm.Stage(_fet(), "cd")])
def test_f_from_parameters_equals_f_from_noise_powers(make):
    st = make()
    f = np.array([1e4, 3e6, 1e8, 7e8])
    ntp = stage_noise(st, f)
    res = noise_parameters(ntp)
    rng = np.random.default_rng(7)
    for _ in range(20):
        ys = rng.uniform(1e-4, 0.05, f.size) + 1j * rng.uniform(-0.05, 0.05, f.size)
        direct = _f_from_y(ntp.data, ntp.cor, ys)
        formula = res.fmin + res.rn / ys.real * np.abs(ys - res.yopt) ** 2
        np.testing.assert_allclose(formula, direct, rtol=1e-9, atol=0)
        np.testing.assert_allclose(noise_factor(ntp, ys), direct, rtol=1e-9, atol=0)


@pytest.mark.parametrize("config", ["ce", "cb", "cc"])
def test_f_against_the_netlist_with_its_source(config):
    # The source resistor (and a capacitor) put into the circuit, the noise at the output computed
    # by the engine: no two-port noise theory on this side.
    st = dm.Stage(_bjt_hf(), config, rdeg=4.7 if config != "cb" else 0.0)
    f = np.array([1e5, 5e7, 3e8])
    ntp = stage_noise(st, f)
    for rs, cs in ((50.0, 0.0), (600.0, 3e-12)):
        ys = 1 / rs + 2j * np.pi * f * cs
        want = _direct_f(st, f, rs, cs)
        np.testing.assert_allclose(noise_parameters(ntp, ys=ys).f, want, rtol=1e-9, atol=0)


def test_stage_with_its_bias_network():
    # The bias resistors are noise sources too (stagenetwork); the source sees the port "in".
    from devmodels.stagenetwork import StageNetwork

    net = StageNetwork("divider", r1=47e3, r2=10e3, rc=2.2e3, re=1e3, c_in=1e-6, c_out=1e-6, c_bypass=47e-6)
    st = dm.Stage(_bjt_hf(), "ce", network=net)
    f = np.array([20.0, 1e3, 1e6])
    res = noise_parameters(stage_noise(st, f), zs=600.0)
    np.testing.assert_allclose(res.f, _direct_f(st, f, 600.0), rtol=1e-9, atol=0)
    bare = noise_parameters(stage_noise(dm.Stage(_bjt_hf(), "ce"), f), zs=600.0)
    assert np.all(res.f[1:] > bare.f[1:])  # the bias divider adds noise


def test_noiseless_two_port_and_missing_yopt():
    # A network without noise sources: F = 1 at any source; Rn = 0 so Yopt does not exist (NaN, None).
    f = np.array([1e3, 1e6])
    y = dm.Stage(_bjt_hf(), "ce").two_port(f).data
    ntp = NoisyTwoPort(f, y, np.zeros((2, 2, 2)), "y")
    res = noise_parameters(ntp, zs=75.0 + 20j)
    np.testing.assert_array_equal(res.f, 1.0)
    np.testing.assert_array_equal(res.fmin, 1.0)
    np.testing.assert_array_equal(res.rn, 0.0)
    assert np.all(np.isnan(res.yopt)) and np.all(np.isnan(res.gamma_opt)) and np.all(np.isnan(res.zopt))
    p = res.as_points()[0]
    assert p["yopt"] == [None, None] and p["gamma_opt"] == [None, None] and p["nf_db"] == 0.0
    assert set(p) >= {"freq", "nf_db", "nfmin_db", "rn", "yopt", "zopt", "gamma_opt", "te", "en", "in",
                      "correlation"}


def _attenuator(db, z0=50.0, temp=T0):
    """A matched T attenuator: series arms z0 (K-1)/(K+1), shunt 2 z0 K/(K^2-1), K = 10^(dB/20)
    (the textbook design equations, from memory), each resistor with its thermal noise."""
    k = 10 ** (db / 20)
    ra, rsh = z0 * (k - 1) / (k + 1), 2 * z0 * k / (k * k - 1)
    els = [resistor("ra", "p1", "m", ra), resistor("rb2", "m", "p2", ra), resistor("rsh", "m", "g", rsh)]
    els += [n for e in list(els) for n in thermal_noise(e, temp)]
    return Netlist(tuple(els)), k * k


def test_attenuator_noise_figure_is_its_loss():
    # A passive network at T0: F = 1 / (available gain) (textbook fact, from memory); matched, F = L.
    net, loss = _attenuator(6.0)
    f = np.array([1e6, 1e9])
    w = 2 * np.pi * f
    Y3, C3 = reduce_with_noise(net, ("p1", "p2", "g"), w, f.size)
    ntp = config_noise(f, Y3, C3, "ce")  # port 1 = p1, port 2 = p2, common = g
    res = noise_parameters(ntp, zs=50.0)
    np.testing.assert_allclose(res.f, loss, rtol=1e-12, atol=0)
    # another source: F = 1/GA, GA = |y21|^2 Gs / (|y11 + Ys|^2 Re Yout) (available gain, Pozar ch. 11)
    y = ntp.data
    ys = np.full(f.size, 1 / 20.0 + 0j)
    yout = y[:, 1, 1] - y[:, 0, 1] * y[:, 1, 0] / (y[:, 0, 0] + ys)
    ga = np.abs(y[:, 1, 0]) ** 2 * ys.real / (np.abs(y[:, 0, 0] + ys) ** 2 * yout.real)
    np.testing.assert_allclose(noise_factor(ntp, ys), 1 / ga, rtol=1e-12, atol=0)
    # Twiss (J. Appl. Phys. 26, 1955): C_Y = 2kT (Y + Y^H) for a passive network at one temperature
    tw = passive_noise(dm.TwoPort(f, y, "y"), T0)
    np.testing.assert_allclose(tw.cor, ntp.cor, rtol=1e-12, atol=1e-40)


# --- transformations -----------------------------------------------------------------------

_PORT_VARS = {  # (outputs, inputs) as indices into x = (V1, I1, V2, I2), with the sign of the input
    "y": ((1, 3), ((0, 1), (2, 1))), "z": ((0, 2), ((1, 1), (3, 1))), "h": ((0, 3), ((1, 1), (2, 1))),
    "g": ((1, 2), ((0, 1), (3, 1))), "abcd": ((0, 1), ((2, 1), (3, -1))),
}


def _numeric_transform(m, src, dst):
    """T with n_dst = T n_src, by solving the port equations of ``src`` at the state where the
    inputs of ``dst`` are zero (the definition of the noise vector of ``dst``), point by point."""
    out_s, in_s = _PORT_VARS[src]
    out_d, in_d = _PORT_VARS[dst]
    T = np.empty(m.shape, dtype=complex)
    for p in range(m.shape[0]):
        rows = np.zeros((4, 4), dtype=complex)
        for r in range(2):  # out_s[r] - sum_c m[r, c] * sign_c x[in_s[c]] = n_r
            rows[r, out_s[r]] += 1
            for c, (idx, sgn) in enumerate(in_s):
                rows[r, idx] -= m[p, r, c] * sgn
        for r, (idx, _) in enumerate(in_d):
            rows[2 + r, idx] = 1
        for j in range(2):
            rhs = np.zeros(4, dtype=complex)
            rhs[j] = 1
            x = np.linalg.solve(rows, rhs)
            T[p, :, j] = x[list(out_d)]
    return T


def _random_psd(rng, n):
    a = rng.normal(size=(n, 2, 2)) + 1j * rng.normal(size=(n, 2, 2))
    return a @ np.conj(np.swapaxes(a, 1, 2))


@pytest.mark.parametrize("src", FORMS)
@pytest.mark.parametrize("dst", FORMS)
def test_transformations_against_the_port_equations(src, dst):
    from devmodels.noise import transform_matrix

    rng = np.random.default_rng(3)
    y = rng.normal(size=(5, 2, 2)) + 1j * rng.normal(size=(5, 2, 2))
    m = dm.convert(y, "y", src)
    T = transform_matrix(m, src, dst)
    np.testing.assert_allclose(T, _numeric_transform(m, src, dst), rtol=1e-10, atol=1e-12)
    c = _random_psd(rng, 5)
    got = correlation_transform(c, m, src, dst)
    np.testing.assert_allclose(got, T @ c @ np.conj(np.swapaxes(T, 1, 2)), rtol=1e-10, atol=1e-12)


def test_round_trip_through_every_form():
    st = dm.Stage(_bjt_hf(), "ce", rdeg=5.0)
    ntp = stage_noise(st, [1e6, 2e8])
    back = ntp
    for form in ("z", "h", "abcd", "g", "y"):
        back = back.to(form)
        assert back.form == form
    np.testing.assert_allclose(back.cor, ntp.cor, rtol=1e-9, atol=0)
    np.testing.assert_allclose(back.data, ntp.data, rtol=1e-9, atol=0)


# --- connections -----------------------------------------------------------------------------

def test_cascade_against_friis():
    # Friis, "Noise figures of radio receivers", Proc. IRE 32, 1944: F = F1 + (F2 - 1)/GA1, F2 at
    # the output admittance of stage 1, GA1 the available gain of stage 1 from the source.
    f = np.array([1e6, 1e8, 5e8])
    a = stage_noise(dm.Stage(_bjt_hf(), "ce"), f)
    b = stage_noise(dm.Stage(_fet(), "cs"), f)
    ys = np.full(f.size, 1 / 300.0 + 1e-3j)
    y = a.data
    yout = y[:, 1, 1] - y[:, 0, 1] * y[:, 1, 0] / (y[:, 0, 0] + ys)
    assert np.all(yout.real > 0)
    ga1 = np.abs(y[:, 1, 0]) ** 2 * ys.real / (np.abs(y[:, 0, 0] + ys) ** 2 * yout.real)
    friis = noise_factor(a, ys) + (noise_factor(b, yout) - 1) / ga1
    total = cascade_noise([a, b])
    np.testing.assert_allclose(noise_factor(total, ys), friis, rtol=1e-9, atol=0)
    # and a three-stage chain is associative
    c = stage_noise(dm.Stage(_bjt_hf(), "cc"), f)
    left = cascade_noise([cascade_noise([a, b]), c])
    right = cascade_noise([a, cascade_noise([b, c])])
    np.testing.assert_allclose(left.cor, right.cor, rtol=1e-9, atol=0)


def test_cascade_against_scikit_rf():
    # scikit-rf 2.2: Network.set_noise_a and the noisy ** cascade (skrf.network.connect); compared
    # at equal z0 = 50 ohm.
    import skrf

    f = np.array([1e6, 1e8, 5e8])
    parts = [stage_noise(dm.Stage(_bjt_hf(), "ce"), f), stage_noise(dm.Stage(_fet(), "cs"), f)]
    nets = []
    freq = skrf.Frequency.from_f(f, unit="Hz")
    for p in parts:
        r = noise_parameters(p, z0=50.0)
        n = skrf.Network(frequency=freq, s=p.two_port().to("s", 50.0).data, z0=50.0)
        n.set_noise_a(skrf.Frequency.from_f(f, unit="Hz"), r.nfmin_db, r.gamma_opt, r.rn)
        nets.append(n)
    theirs = nets[0] ** nets[1]
    ours = noise_parameters(cascade_noise(parts), z0=50.0)
    np.testing.assert_allclose(ours.fmin, theirs.nfmin, rtol=1e-8, atol=0)
    np.testing.assert_allclose(ours.rn, theirs.rn, rtol=1e-8, atol=0)
    np.testing.assert_allclose(ours.gamma_opt, theirs.g_opt, rtol=1e-8, atol=0)


def test_series_series_adds_z_forms():
    # An emitter resistor (its thermal noise at the device temperature) in the common leg.
    m = _bjt_hf()
    f = np.array([1e3, 1e7, 4e8])
    bare = stage_noise(dm.Stage(m, "ce"), f)
    leg = passive_noise(shunt_element(22.0, f), m.temperature)
    got = connect_noise(bare, leg, "series-series")
    want = stage_noise(dm.Stage(m, "ce", rdeg=22.0), f)
    assert got.form == "z"
    np.testing.assert_allclose(got.to("y").cor, want.cor, rtol=1e-9, atol=0)
    np.testing.assert_allclose(got.to("y").data, want.data, rtol=1e-9, atol=0)


def test_shunt_shunt_adds_y_forms():
    m = _bjt_hf()
    f = np.array([1e3, 1e7, 4e8])
    bare = stage_noise(dm.Stage(m, "ce"), f)
    fb = passive_noise(series_element(15e3, f), m.temperature)
    got = connect_noise(bare, fb, "shunt-shunt")
    want = stage_noise(dm.Stage(m, "ce", rfb=15e3), f)
    np.testing.assert_allclose(got.cor, want.cor, rtol=1e-9, atol=0)


# --- configurations ----------------------------------------------------------------------------

@pytest.mark.parametrize("model, configs", [(_bjt_hf(), ("ce", "cb", "cc")), (_fet(), ("cs", "cg", "cd"))])
def test_configurations_from_the_indefinite_form(model, configs):
    f = np.array([1e4, 1e8, 6e8])
    Y3, C3 = indefinite_noise(dm.Stage(model, configs[0]), f)
    scale = np.abs(C3).max()
    assert np.abs(C3.sum(axis=1)).max() <= 1e-12 * scale  # zero sums: each source in one node, out of another
    first = stage_noise(dm.Stage(model, configs[0]), f)
    for cfg in configs:
        st = dm.Stage(model, cfg)
        direct = stage_noise(st, f)
        np.testing.assert_allclose(config_noise(f, Y3, C3, cfg).cor, direct.cor, rtol=1e-9, atol=0)
        np.testing.assert_allclose(reconfigure_noise(first, configs[0], cfg).cor, direct.cor, rtol=1e-7,
                                   atol=1e-9 * scale)
        # and the noise factor of the two-port against the circuit with its source
        np.testing.assert_allclose(noise_parameters(direct, zs=150.0).f, _direct_f(st, f, 150.0), rtol=1e-9,
                                   atol=0)


# --- design help ---------------------------------------------------------------------------

def test_ce_noise_design_against_the_closed_form():
    F, rs_opt, _ = _ce_closed_form()
    ic = np.logspace(-5, -2, 301)
    out = ce_noise_design(ic, beta=200.0, rs=1e3, rb=60.0, temp=300.0, freq=1e3)
    vals = [_ce_values(_bjt(temp=300.0, ic=x, beta=200.0, rb=60.0)) for x in ic]
    f_closed = np.array([F(1e3, *v) for v in vals])
    np.testing.assert_allclose(10 ** (out["nf_db"] / 10), f_closed, rtol=1e-9, atol=0)
    assert out["ic_opt"] == ic[np.argmin(f_closed)]
    # the classic estimate of the optimum current gm = sqrt(beta)/(Rs + rb) (analog texts, from memory)
    est = thermal_voltage(300.0) * math.sqrt(200.0) / (1e3 + 60.0)
    assert abs(out["ic_opt"] / est - 1) < 0.1
    r_closed = np.array([rs_opt(*v) for v in vals])
    np.testing.assert_allclose(out["rs_opt"], r_closed, rtol=1e-9, atol=0)
    f_at = np.array([F(r, *v) for r, v in zip(r_closed, vals)])
    np.testing.assert_allclose(10 ** (out["nf_db_at_rs_opt"] / 10), f_at, rtol=1e-9, atol=0)


def test_best_real_source_with_a_complex_optimum():
    # With capacitances Yopt is complex; the best real source conductance is |Yopt| (dF/dGs = 0).
    out = ce_noise_design([1e-3], beta=100.0, rs=1e3, rb=50.0, freq=2e8, ft=500e6, cmu=1e-12)
    res = out["result"]
    assert abs(res.yopt[0].imag) > 0.05 * res.yopt[0].real
    m = dm.HybridPi.from_bias(dm.BipolarBias(ic=1e-3, vce=5.0, beta=100.0, ft=500e6, cmu=1e-12, rb=50.0,
                                             temp=290.0))
    ntp = stage_noise(dm.Stage(m, "ce"), [2e8])
    f = [noise_parameters(ntp, zs=out["rs_opt"][0] * s).f[0] for s in (0.98, 1.0, 1.02)]
    assert f[1] < f[0] and f[1] < f[2]
    assert 10 * math.log10(f[1]) == pytest.approx(out["nf_db_at_rs_opt"][0], rel=1e-9, abs=0)


def test_stage_with_arrays_of_element_values():
    # A grid of bias points in one model: each point equals the stage built at that point alone.
    ic = np.array([0.1e-3, 1e-3, 5e-3])
    vt = thermal_voltage(300.0)
    m = dm.HybridPi(gm=ic / vt, r_pi=150 * vt / ic, rb=40.0, c_pi=ic / vt / (2 * np.pi * 300e6), c_mu=1e-12,
                    vt=vt)
    grid = stage_noise(dm.Stage(m, "ce"), [1e8])
    assert grid.freq.tolist() == [1e8] * 3
    for k, x in enumerate(ic):
        one = dm.HybridPi(gm=x / vt, r_pi=150 * vt / x, rb=40.0, c_pi=x / vt / (2 * np.pi * 300e6), c_mu=1e-12,
                          vt=vt)
        single = stage_noise(dm.Stage(one, "ce"), [1e8])
        np.testing.assert_allclose(grid.cor[k], single.cor[0], rtol=1e-12, atol=0)
    with pytest.raises(dm.InputError, match="one frequency"):
        stage_noise(dm.Stage(m, "ce"), [1e6, 1e8])


# --- bad input -----------------------------------------------------------------------------

def test_bad_input_names_the_value():
    with pytest.raises(dm.InputError, match=r"gamma_n.*-0\.5"):
        dm.FetModel(gm=0.01, gamma_n=-0.5)
    with pytest.raises(dm.InputError, match=r"gamma_n.*\b0\b"):
        dm.FetModel(gm=0.01, gamma_n=0.0)
    with pytest.raises(dm.InputError, match=r"flicker_corner.*-100"):
        _bjt(flicker_corner=-100.0)
    with pytest.raises(dm.InputError, match=r"flicker_corner.*-1"):
        dm.FetModel(gm=0.01, flicker_corner=-1.0)
    ntp = stage_noise(dm.Stage(_bjt(), "ce"), [1e3])
    with pytest.raises(dm.InputError, match=r"zs.*-50"):
        noise_parameters(ntp, zs=-50.0 + 10j)
    with pytest.raises(dm.InputError, match=r"zs.*real part > 0"):
        noise_parameters(ntp, zs=75j)
    with pytest.raises(dm.InputError, match=r"ys.*-0\.02"):
        noise_factor(ntp, -0.02)
    with pytest.raises(dm.InputError, match="form"):
        NoisyTwoPort(ntp.freq, ntp.data, ntp.cor, "s")
    with pytest.raises(dm.InputError, match="z0"):
        noise_parameters(ntp, z0=0.0)
    with pytest.raises(dm.InputError, match="1/f"):
        stage_noise(dm.Stage(_bjt(flicker_corner=1e3), "ce"), [0.0, 1e3])


def test_flicker_noise_raises_the_noise_figure_below_the_corner():
    # Base current noise 2 q IB (1 + fc/f): at f = fc the base noise doubles.
    f = np.array([10.0, 1e3, 1e6])
    plain = noise_parameters(stage_noise(dm.Stage(_bjt(), "ce"), f), zs=5e3)
    flick = noise_parameters(stage_noise(dm.Stage(_bjt(flicker_corner=1e3), "ce"), f), zs=5e3)
    assert flick.f[0] > flick.f[1] > flick.f[2]
    assert flick.f[2] == pytest.approx(plain.f[2], rel=2e-3, abs=0)
    assert flick.f[0] > 2 * plain.f[0] - 1  # 100x the base noise at 10 Hz


def test_no_numpy_warning_escapes():
    import warnings

    with warnings.catch_warnings():
        warnings.simplefilter("error")
        ntp = NoisyTwoPort([1e3], dm.Stage(_bjt(), "ce").two_port([1e3]).data, np.zeros((1, 2, 2)))
        res = noise_parameters(ntp)
        res.as_points()
        _ = res.zopt, res.gamma_opt, res.nf_db, res.te
        ce_noise_design(np.logspace(-6, -2, 9), 100.0, 1e3)


def test_import_devmodels_does_not_load_heavy_packages():
    import subprocess
    import sys

    code = ("import sys, devmodels, devmodels.noise, devmodels.noisefile; "
            "bad = [m for m in ('sympy', 'scipy', 'matplotlib', 'skrf', 'typer') if m in sys.modules]; "
            "print(','.join(bad))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == ""


# --- Touchstone noise data ---------------------------------------------------------------------

def test_correlation_from_parameters_inverts_the_parameters():
    from devmodels.noisefile import correlation_from_parameters

    ntp = stage_noise(dm.Stage(_bjt_hf(), "ce", rdeg=5.0), [1e5, 1e8, 6e8]).to("abcd")
    res = noise_parameters(ntp)
    ca = correlation_from_parameters(res.fmin, res.rn, res.yopt)
    np.testing.assert_allclose(ca, ntp.cor, rtol=1e-9, atol=0)
    with pytest.raises(dm.InputError, match=r"fmin.*0\.5"):
        correlation_from_parameters([0.5], [10.0], [0.01])
    with pytest.raises(dm.InputError, match=r"rn.*-3"):
        correlation_from_parameters([1.5], [-3.0], [0.01])


@pytest.mark.parametrize("version, name", [("1.1", "amp.s2p"), ("2.0", "amp.ts")])
def test_touchstone_noise_round_trip(tmp_path, version, name):
    # Written by devmodels, read back by devmodels.touchstone and by scikit-rf 2.2 (Network(path)).
    import skrf

    from devmodels.noisefile import noisy_from_touchstone, write_touchstone_noise
    from devmodels.touchstone import read_touchstone_file

    f = np.linspace(1e8, 1e9, 10)
    ntp = stage_noise(dm.Stage(_bjt_hf(), "ce"), f)
    res = noise_parameters(ntp, z0=50.0)
    path = write_touchstone_noise(ntp.two_port(z0=50.0), res, tmp_path / name, version)
    data = read_touchstone_file(path)
    np.testing.assert_allclose(data.noise.rn, res.rn, rtol=1e-14, atol=0)
    back = noisy_from_touchstone(data)
    np.testing.assert_allclose(back.cor, ntp.to("abcd").cor, rtol=1e-9, atol=0)
    np.testing.assert_allclose(back.data, ntp.to("abcd").data, rtol=1e-9, atol=0)
    theirs = skrf.Network(str(path))
    np.testing.assert_allclose(theirs.nfmin, res.fmin, rtol=1e-12, atol=0)
    np.testing.assert_allclose(theirs.rn, res.rn, rtol=1e-12, atol=0)
    np.testing.assert_allclose(theirs.g_opt, res.gamma_opt, rtol=1e-12, atol=0)


def test_touchstone_noise_between_network_frequencies(tmp_path):
    # Noise frequencies between network frequencies: S interpolated linearly (re, im).
    from devmodels.noisefile import noisy_from_touchstone, touchstone_noise_text, write_touchstone_noise
    from devmodels.touchstone import read_touchstone_file

    f_net = np.linspace(1e8, 1e9, 901)
    f_noise = np.array([1.5e8, 5.0005e8])
    st = dm.Stage(_bjt_hf(), "ce")
    res = noise_parameters(stage_noise(st, f_noise))
    path = write_touchstone_noise(st.two_port(f_net, "s"), res, tmp_path / "a.ts", "2.0")
    back = noisy_from_touchstone(read_touchstone_file(path))
    exact = st.two_port(f_noise, "abcd").data
    np.testing.assert_allclose(back.data, exact, rtol=1e-4)  # linear interpolation on a 1 MHz grid
    assert np.max(np.abs(back.data - exact) / np.abs(exact)) > 1e-12  # (it is an interpolation)
    # a first noise frequency above the last network frequency cannot be marked in 1.1
    late = noise_parameters(stage_noise(st, [2e9]))
    with pytest.raises(dm.InputError, match=r"2e\+09 Hz.*version 2\.0"):
        touchstone_noise_text(st.two_port(f_net, "s"), late, "1.1")
    path2 = write_touchstone_noise(st.two_port(f_net, "s"), late, tmp_path / "b.ts", "2.0")
    with pytest.raises(dm.InputError, match=r"2e\+09 Hz is outside"):
        noisy_from_touchstone(read_touchstone_file(path2))
    # no Yopt (Rn = 0): nothing to write
    quiet = NoisyTwoPort(f_noise, st.two_port(f_noise).data, np.zeros((2, 2, 2)))
    with pytest.raises(dm.InputError, match="Yopt does not exist"):
        touchstone_noise_text(st.two_port(f_net, "s"), noise_parameters(quiet), "2.0")


# --- chain_noise: the chain's noise and each stage's share (Friis) -----------------------------

def _chain_stages():
    m = dm.HybridPi.from_bias(dm.BipolarBias(ic=1e-3, vce=5.0, beta=100, va=80.0, ft=300e6, cmu=2e-12, rb=50.0))
    return [dm.Stage(m, "ce"), dm.Stage(m, "cb"), dm.Stage(m, "cc")]


def test_chain_noise_equals_cascade_noise_and_friis_with_available_gains():
    from devmodels.analysis import terminate
    from devmodels.chain import cascade
    from devmodels.noise import chain_noise

    f, rs = [1e3, 1e5], 600.0
    ntps = [stage_noise(st, f) for st in _chain_stages()]
    res = chain_noise(ntps, rs)
    want = noise_parameters(cascade_noise(ntps), zs=rs).f
    assert res.f == pytest.approx(want, rel=1e-12, abs=0)
    # Friis (1944): F = F1 + (F2 - 1)/G1 + (F3 - 1)/(G1 G2), available gains, F_k at the output
    # impedance of the chain before stage k; computed here from the noiseless two-ports.
    tps = [p.two_port() for p in ntps]
    friis = noise_parameters(ntps[0], zs=rs).f.copy()
    assert res.contribution[0] == pytest.approx(friis - 1, rel=1e-12, abs=0)
    for k in range(1, len(ntps)):
        head = tps[0] if k == 1 else cascade(*tps[:k])
        t = terminate(head, rs, 1e3)
        zsrc, ga = t.zout, 10 ** (t.ga_db / 10)
        assert np.all(zsrc.real > 0)
        fk = noise_parameters(ntps[k], zs=zsrc).f
        assert res.zsource[k] == pytest.approx(zsrc, rel=1e-9, abs=0)
        assert res.stage_f[k] == pytest.approx(fk, rel=1e-9, abs=0)
        assert res.contribution[k] == pytest.approx((fk - 1) / ga, rel=1e-8, abs=0)
        friis = friis + (fk - 1) / ga
    assert res.f == pytest.approx(friis, rel=1e-8, abs=0)
    assert res.nf_db == pytest.approx(10 * np.log10(want), rel=1e-12, abs=0)


def test_chain_noise_stage_nf_undefined_where_the_source_has_no_resistance():
    from devmodels.noise import chain_noise

    ntps = [stage_noise(st, [1e6]) for st in _chain_stages()]
    res = chain_noise(ntps, 600.0)
    bad = ~(res.zsource.real > 0)
    assert np.any(bad)  # here the cascode's output impedance at 1 MHz has a negative real part
    assert np.all(np.isnan(res.stage_f[bad])) and np.all(np.isfinite(res.contribution))
    with pytest.raises(dm.InputError, match="zs"):
        chain_noise(ntps, 0.0)
    with pytest.raises(dm.InputError, match="parts"):
        chain_noise([])


# --- ce_low_noise: the collector current of least noise ------------------------------------------

def test_ce_low_noise_optimum_is_the_lowest_point_of_a_dense_curve():
    kw = dict(temp=300.0, rb=60.0, freq=1e4, va=80.0, flicker_corner=2e3)
    out = ce_low_noise(np.geomspace(1e-6, 1e-2, 17), 150.0, 2.2e3, **kw)
    assert not out["ic_opt_at_edge"]
    dense = np.geomspace(1e-6, 1e-2, 40001)
    d = ce_noise_design(dense, 150.0, 2.2e3, **kw)
    j = int(np.argmin(d["nf_db"]))
    step = math.log(dense[1] / dense[0])
    assert abs(math.log(out["ic_best"] / dense[j])) <= step
    # the refined point is at least as low as the dense grid's lowest, and is on the same curve
    assert out["nf_db_at_ic_best"] <= d["nf_db"][j] + 1e-12
    again = ce_noise_design([out["ic_best"]], 150.0, 2.2e3, **kw)
    assert again["nf_db"][0] == pytest.approx(out["nf_db_at_ic_best"], rel=1e-12, abs=0)
    assert out["nf_db_at_ic_best"] <= out["nf_db_at_ic_opt"]  # better than (or equal to) the coarse grid's


def test_ce_low_noise_against_the_closed_form_without_base_resistance():
    # rb = 0, low frequency, no ro: u = i_c/gm, i = i_b + i_c/beta with shot noise 2qIC, 2qIB, so
    # C_u = 2q VT^2/IC, C_i = 2q IC (1 + beta)/beta^2, C_ui real (IC-independent term). F - 1 =
    # (C_u/Rs + C_i Rs + 2 C_ui)/(4kT0) is least where C_u/Rs = C_i Rs at IC:
    #   IC_opt = VT beta / (Rs sqrt(1 + beta))   (the classic VT sqrt(beta)/Rs within about 1/(2 beta)).
    beta, rs = 100.0, 1e3
    vt = thermal_voltage(T0)
    out = ce_low_noise(np.geomspace(1e-6, 1e-2, 41), beta, rs, temp=T0, rb=0.0, freq=1e3)
    exact = vt * beta / (rs * math.sqrt(1 + beta))
    assert out["ic_best"] == pytest.approx(exact, rel=1e-5, abs=0)
    classic = vt * math.sqrt(beta) / rs
    err = abs(out["ic_best"] / classic - 1)
    assert err < 1 / (2 * beta) and err > 1 / (4 * beta)  # the approximation's size of error, not better
    # the best source resistance at each current: the same balance, Rs_opt = VT beta / (IC sqrt(1 + beta))
    np.testing.assert_allclose(out["rs_opt"], vt * beta / (out["ic"] * math.sqrt(1 + beta)), rtol=1e-9, atol=0)


def test_ce_low_noise_flags_an_optimum_at_the_end_of_the_grid_and_bad_input():
    out = ce_low_noise(np.geomspace(1e-3, 1e-2, 5), 100.0, 1e3, temp=T0)  # the optimum (~0.25 mA) is below
    assert out["ic_opt_at_edge"] and out["ic_best"] == 1e-3
    with pytest.raises(dm.InputError, match="increasing"):
        ce_low_noise([1e-3, 1e-4], 100.0, 1e3)
    with pytest.raises(dm.InputError, match="refine"):
        ce_low_noise([1e-4, 1e-3, 1e-2], 100.0, 1e3, refine=-1)


def test_plot_nf_vs_ic_writes_a_png(tmp_path):
    from devmodels.noise import plot_nf_vs_ic

    ic = np.geomspace(1e-5, 1e-2, 7)
    out = tmp_path / "nf.png"
    plot_nf_vs_ic(out, ic, {"Rs = 1 kΩ": np.linspace(3, 1, 7)}, {"Rs = 1 kΩ": (1e-3, 1.0)}, title="demo")
    assert out.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    with pytest.raises(dm.InputError, match="plot"):
        plot_nf_vs_ic(tmp_path / "nf.txt", ic, {"a": np.ones(7)})

"""Bias points and device models: relations, refusals, hybrid-pi against T."""

from __future__ import annotations

import math

import numpy as np
import pytest

import devmodels as dm


def test_thermal_voltage_at_300K():
    # VT = kT/q with the exact SI values (BIPM SI Brochure, 9th ed., 2019):
    # 1.380649e-23 * 300 / 1.602176634e-19 = 25.852 mV.
    assert dm.thermal_voltage(300.0) == pytest.approx(25.852e-3, abs=5e-7)


def test_hybrid_pi_relations():
    # gm = IC/VT, r_pi = beta/gm, ro = VA/IC, C_pi = gm/(2 pi fT) - C_mu
    # (Sedra and Smith, Microelectronic Circuits, BJT small-signal model; from memory).
    b = dm.BipolarBias(ic=2e-3, vce=5.0, beta=150, va=100.0, ft=400e6, cmu=1.5e-12, rb=40.0)
    m = dm.HybridPi.from_bias(b)
    vt = dm.thermal_voltage(300.0)
    assert m.gm == pytest.approx(2e-3 / vt)
    assert m.r_pi == pytest.approx(150 / m.gm)
    assert m.ro == pytest.approx(100.0 / 2e-3)
    assert m.c_pi == pytest.approx(m.gm / (2 * math.pi * 400e6) - 1.5e-12)
    assert m.ft == pytest.approx(400e6)
    assert m.f_beta == pytest.approx(400e6 / 150)
    assert m.alpha == pytest.approx(150 / 151)
    assert m.re == pytest.approx(m.alpha / m.gm)


def test_no_early_voltage_means_infinite_ro():
    m = dm.HybridPi.from_bias(dm.BipolarBias(ic=1e-3, vce=5.0, beta=100))
    assert math.isinf(m.ro) and m.c_pi == 0 and m.ft is None


def test_pnp_takes_magnitudes_or_signs():
    a = dm.BipolarBias(ic=-1e-3, vce=-5.0, beta=100, device="pnp")
    b = dm.BipolarBias(ic=1e-3, vce=5.0, beta=100, device="pnp")
    assert a == b and a.ic == 1e-3
    with pytest.raises(dm.BiasError):
        dm.BipolarBias(ic=-1e-3, vce=5.0, beta=100, device="pnp")


@pytest.mark.parametrize("kwargs,match", [
    (dict(ic=-1e-3), "ic: expected a positive"),
    (dict(ic=0.0), "ic: expected a positive"),
    (dict(vce=0.1), "below the saturation threshold"),
    (dict(beta=0), "beta: expected a positive"),
    (dict(ft=-1e6), "ft: expected a positive"),
    (dict(ft=0.0), "ft: expected a positive"),
    (dict(cmu=-1e-12), "cmu: expected a value >= 0"),
    (dict(device="triode"), "device"),
    (dict(temp=0), "temp"),
])
def test_bias_refusals(kwargs, match):
    base = dict(ic=1e-3, vce=5.0, beta=100)
    base.update(kwargs)
    with pytest.raises(dm.DevModelsError, match=match):
        dm.BipolarBias(**base)


def test_vce_sat_threshold_is_adjustable():
    dm.BipolarBias(ic=1e-3, vce=0.25, beta=100, vce_sat=0.2)
    with pytest.raises(dm.BiasError):
        dm.BipolarBias(ic=1e-3, vce=0.25, beta=100)


def test_negative_c_pi_is_an_input_error():
    b = dm.BipolarBias(ic=0.1e-3, vce=5.0, beta=100, ft=1e9, cmu=2e-12)
    with pytest.raises(dm.BiasError, match="ft: .* too high for cmu"):
        dm.HybridPi.from_bias(b)


@pytest.mark.parametrize("extras", [
    dict(),
    dict(rb=75.0),
    dict(rb=75.0, rcx=12.0, rex=2.0, rmu=5e7),
    dict(rb=75.0, rex=2.0, l_b=1.2e-9, l_c=0.7e-9, l_e=0.4e-9),
])
def test_hybrid_pi_and_t_model_terminal_admittances_agree(extras):
    # The T model (emitter branch re || C_e, source alpha(jw) i_e) and the hybrid-pi are
    # two forms of one network (Gray, Hurst, Lewis and Meyer, ch. 1; from memory): their
    # indefinite admittance matrices must agree at every frequency.
    b = dm.BipolarBias(ic=3e-3, vce=6.0, beta=120, va=70.0, ft=600e6, cmu=1.2e-12, **extras)
    hp = dm.HybridPi.from_bias(b)
    t = dm.TModel.from_bias(b)
    f = np.logspace(0, 10.5, 200)
    for rdeg, rfb in ((0.0, None), (33.0, 22e3)):
        a = dm.Stage(hp, "ce", rdeg, rfb).indefinite(f)
        c = dm.Stage(t, "ce", rdeg, rfb).indefinite(f)
        scale = np.abs(a).max(axis=(1, 2))[:, None, None]
        assert np.max(np.abs(a - c) / scale) < 1e-12


# --- lead inductances (issue 14) -------------------------------------------------------------------

@pytest.mark.parametrize("config", ["ce", "cb", "cc"])
def test_lead_inductances_add_to_the_z_parameters(config):
    # Series impedances at the terminals add to the Z parameters of the two-port (Z = Z_device +
    # the T network of the leads: the input lead adds to z11, the output lead to z22, the common
    # lead to all four; the series-element rule of two-port algebra, from memory).
    leads = dict(l_b=1.2e-9, l_c=0.7e-9, l_e=0.4e-9)
    b = dm.BipolarBias(ic=3e-3, vce=6.0, beta=120, va=70.0, ft=600e6, cmu=1.2e-12, rb=75.0, rex=2.0)
    bare = dm.HybridPi.from_bias(b)
    packaged = dm.HybridPi.from_bias(dm.BipolarBias(**{**{f: getattr(b, f) for f in
                                                           ("ic", "vce", "beta", "va", "ft", "cmu", "rb", "rex")},
                                                        **leads}))
    assert (packaged.l_b, packaged.l_c, packaged.l_e) == (1.2e-9, 0.7e-9, 0.4e-9)
    f = np.logspace(5, 10.3, 60)
    z0 = dm.Stage(bare, config).two_port(f, "z").data
    z1 = dm.Stage(packaged, config).two_port(f, "z").data
    p1, p2, common = {"ce": "bce", "cb": "ecb", "cc": "bec"}[config]
    lin, lout, lcom = leads["l_" + p1], leads["l_" + p2], leads["l_" + common]
    jw = 2j * np.pi * f
    add = np.stack([np.stack([jw * (lin + lcom), jw * lcom], -1), np.stack([jw * lcom, jw * (lout + lcom)], -1)], -2)
    assert np.allclose(z1, z0 + add, rtol=1e-9, atol=0)


def test_without_leads_is_the_model_at_0_hz():
    m = dm.HybridPi(gm=0.04, r_pi=2500.0, ro=5e4, rb=60.0, l_b=1e-9, l_e=0.5e-9)
    bare = dm.models.without_leads(m)
    assert (bare.l_b, bare.l_c, bare.l_e) == (0.0, 0.0, 0.0) and bare.rb == 60.0
    assert dm.models.without_leads(bare) is bare
    assert not any(e.kind == "inductor" for e in bare.netlist().elements)
    # a lead inductance is a short at 0 Hz: the lead-free model is the limit of low frequency
    lo = dm.Stage(m, "ce").two_port([1e-3], "y").data
    dc = dm.Stage(bare, "ce").two_port([0.0], "y").data
    assert np.max(np.abs(lo - dc)) <= 1e-12 * np.abs(dc).max()
    with pytest.raises(dm.InputError, match="l_b: expected a finite value >= 0"):
        dm.HybridPi(gm=0.04, r_pi=2500.0, l_b=-1e-9)
    with pytest.raises(dm.InputError, match="l_e: expected a value >= 0"):
        dm.BipolarBias(ic=1e-3, vce=5.0, beta=100, l_e=-1e-9)


def test_lead_inductance_keys_share_one_description():
    """Every device's lead inductances are one schema entry each, in henry, with one help text
    (validate.lead_meta), so the bipolar and FET options cannot drift apart."""
    from devmodels.schema import keys

    ks = keys()
    for name, terminal in (("l_b", "base"), ("l_c", "collector"), ("l_e", "emitter"), ("l_g", "gate"),
                           ("l_d", "drain"), ("l_s", "source")):
        k = ks[name]
        assert k.unit == "H" and k.bounds.lo == 1e-15 and k.bounds.hi == 1e-3
        assert k.help.startswith(f"{terminal.capitalize()} lead inductance, H")
        assert f"in series with the {terminal} terminal (default 0)." in k.help

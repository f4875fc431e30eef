"""FET bias points and models: square-law relations, refusals, stages cs/cg/cd against closed forms."""

from __future__ import annotations

import math

import numpy as np
import pytest

import devmodels as dm
from devmodels.analysis import terminate
from devmodels.fet import FetModel
from devmodels.fetbias import JfetBias, MosfetBias


def _mos(**kw):
    base = dict(id=2e-3, vds=3.0, vov=0.25, lambda_=0.04, cgs=1e-12, cgd=0.2e-12)
    base.update(kw)
    return MosfetBias(**base)


def test_mosfet_square_law_relations():
    # ID = (kn/2) Vov^2, gm = 2 ID/Vov = sqrt(2 kn ID) = kn Vov, ro = 1/(lambda ID),
    # gmb = gamma gm / (2 sqrt(2phiF + VSB))
    # (Sedra and Smith, Microelectronic Circuits, MOSFET small-signal model; from memory).
    b = _mos(gamma=0.5, vsb=1.2, two_phi_f=0.7)
    m = FetModel.from_bias(b)
    kn = 2 * 2e-3 / 0.25 ** 2
    assert m.gm == pytest.approx(2 * 2e-3 / 0.25)
    assert m.gm == pytest.approx(math.sqrt(2 * kn * 2e-3))
    assert m.gm == pytest.approx(kn * 0.25)
    assert m.ro == pytest.approx(1 / (0.04 * 2e-3))
    assert m.gmb == pytest.approx(0.5 * m.gm / (2 * math.sqrt(0.7 + 1.2)))
    # fT = gm / (2 pi (Cgs + Cgd)) (same text; from memory)
    assert m.ft == pytest.approx(m.gm / (2 * math.pi * 1.2e-12))


def test_kn_gives_the_same_model_as_the_overdrive():
    # Vov = sqrt(2 ID / kn) from ID = (kn/2) Vov^2 (Sedra and Smith; from memory).
    a = FetModel.from_bias(_mos(vov=0.2))
    b = FetModel.from_bias(_mos(vov=None, kn=2 * 2e-3 / 0.2 ** 2))
    assert b.gm == pytest.approx(a.gm) and b.vov == pytest.approx(0.2)


def test_no_lambda_no_gamma_defaults():
    m = FetModel.from_bias(_mos(lambda_=None))
    assert math.isinf(m.ro) and m.gmb == 0.0


def test_pmos_takes_magnitudes_or_signs():
    a = MosfetBias(id=-1e-3, vds=-2.0, vov=0.3, device="pmos")
    b = MosfetBias(id=1e-3, vds=2.0, vov=0.3, device="pmos")
    assert a == b and a.id == 1e-3
    with pytest.raises(dm.BiasError, match="id, vds"):
        MosfetBias(id=-1e-3, vds=2.0, vov=0.3, device="pmos")


def test_jfet_shockley_relations():
    # ID = IDSS (1 - VGS/VP)^2, gm = (2 IDSS/|VP|)(1 - VGS/VP) = (2/|VP|) sqrt(ID IDSS)
    # (Shockley 1952; Sedra and Smith, JFET section; from memory).
    idss, vp, vgs = 8e-3, -2.5, -1.0
    id_ = idss * (1 - vgs / vp) ** 2
    b = JfetBias(id=id_, vds=5.0, idss=idss, vp=vp, lambda_=0.01)
    m = FetModel.from_bias(b)
    assert b.vgs == pytest.approx(vgs)
    assert m.gm == pytest.approx(2 * idss / abs(vp) * (1 - vgs / vp))
    assert m.gm == pytest.approx(2 / abs(vp) * math.sqrt(id_ * idss))
    assert m.gm == pytest.approx(2 * id_ / b.vov)  # same gm = 2 ID / Vov form, Vov = VGS - VP
    assert b.vov == pytest.approx(vgs - vp)
    assert m.gmb == 0 and m.ro == pytest.approx(1 / (0.01 * id_))


@pytest.mark.parametrize("make,match", [
    (lambda: _mos(vds=0.2), "vds: 0.2 V is below the overdrive"),
    (lambda: _mos(id=-1e-3), "id: expected a positive"),
    (lambda: _mos(vov=None), "vov: missing"),
    (lambda: _mos(kn=0.1), "vov, kn"),
    (lambda: _mos(vov=-0.2), "vov: expected a positive"),
    (lambda: _mos(lambda_=-0.1), "lambda: expected a positive"),
    (lambda: _mos(gamma=-0.3), "gamma: expected a value >= 0"),
    (lambda: _mos(vsb=-1.0), "vsb"),
    (lambda: _mos(cgs=-1e-12), "cgs: expected a value >= 0"),
    (lambda: _mos(device="njfet"), "device"),
    (lambda: JfetBias(id=9e-3, vds=5, idss=8e-3, vp=-2), "id: 0.009 A is above idss"),
    (lambda: JfetBias(id=4e-3, vds=0.5, idss=8e-3, vp=-2), "vds: 0.5 V is below the overdrive"),
    (lambda: JfetBias(id=4e-3, vds=5, idss=8e-3, vp=0), "vp: expected a nonzero"),
    (lambda: JfetBias(id=4e-3, vds=5, idss=-8e-3, vp=-2), "idss: expected a positive"),
])
def test_refusals(make, match):
    with pytest.raises(dm.DevModelsError, match=match):
        make()


@pytest.mark.parametrize("config", ["cs", "cg", "cd"])
def test_indefinite_rows_and_columns_sum_to_zero(config):
    # Definition of the indefinite admittance matrix (Shekel 1954; any text on it).
    m = FetModel.from_bias(_mos(gamma=0.4, vsb=0.5, csb=0.1e-12, cdb=0.15e-12, rg=20.0))
    Y = dm.Stage(m, config, rdeg=33.0, rfb=20e3).indefinite(np.logspace(3, 10, 30))
    scale = np.abs(Y).max()
    assert np.abs(Y.sum(axis=1)).max() < 1e-12 * scale
    assert np.abs(Y.sum(axis=2)).max() < 1e-12 * scale


def test_cs_y_closed_forms():
    # y11 = jw(Cgs + Cgd), y12 = -jwCgd, y21 = gm - jwCgd, y22 = 1/ro + jw(Cgd + Cdb)
    # (Gray, Hurst, Lewis and Meyer, Analysis and Design of Analog ICs, MOS small-signal model;
    # from memory).  Body at the source's AC ground: gmb and Csb drop out.
    m = FetModel.from_bias(_mos(gamma=0.4, vsb=0.5, csb=0.1e-12, cdb=0.15e-12))
    f = np.logspace(3, 10, 20)
    w = 2 * np.pi * f
    y = dm.Stage(m, "cs").two_port(f).data
    np.testing.assert_allclose(y[:, 0, 0], 1j * w * (m.cgs + m.cgd), rtol=1e-12)
    np.testing.assert_allclose(y[:, 0, 1], -1j * w * m.cgd, rtol=1e-12)
    np.testing.assert_allclose(y[:, 1, 0], m.gm - 1j * w * m.cgd, rtol=1e-12)
    np.testing.assert_allclose(y[:, 1, 1], 1 / m.ro + 1j * w * (m.cgd + m.cdb), rtol=1e-12)


RL = 4.7e3


def _lf(model, config, rs=0.0, rl=RL):
    return terminate(dm.Stage(model, config).two_port([0.0]), rs, rl)


def test_cs_low_frequency_gain():
    # CS: av = -gm (ro || RL) (Sedra and Smith, CS amplifier; from memory).
    m = FetModel.from_bias(_mos(gamma=0.4, vsb=0.5))
    par = m.ro * RL / (m.ro + RL)
    t = _lf(m, "cs")
    assert t.av[0] == pytest.approx(-m.gm * par, rel=1e-12)
    assert np.isnan(t.zin[0])  # an open gate: no input conductance at DC
    assert t.zout[0] == pytest.approx(m.ro, rel=1e-12)


def test_cd_low_frequency_gain():
    # CD without body effect and ro: av = gm R / (1 + gm R); with them, R' = ro || RL and
    # av = gm R' / (1 + (gm + gmb) R') (Razavi, Design of Analog CMOS ICs, ch. 3 source follower;
    # from memory).  Output resistance 1/(gm + gmb) || ro (same text).
    m0 = FetModel.from_bias(_mos(lambda_=None))
    assert _lf(m0, "cd").av[0] == pytest.approx(m0.gm * RL / (1 + m0.gm * RL), rel=1e-12)
    m = FetModel.from_bias(_mos(gamma=0.45, vsb=1.0))
    rp = m.ro * RL / (m.ro + RL)
    t = _lf(m, "cd")
    assert t.av[0] == pytest.approx(m.gm * rp / (1 + (m.gm + m.gmb) * rp), rel=1e-12)
    assert t.zout[0] == pytest.approx(1 / (m.gm + m.gmb + 1 / m.ro), rel=1e-12)


def test_cg_low_frequency_gain_and_input_resistance():
    # CG with Rs = 0: av = (gm + gmb + 1/ro)(ro || RL) = ((gm + gmb) ro + 1) RL / (ro + RL);
    # Rin = (ro + RL) / (1 + (gm + gmb) ro) (Razavi, Design of Analog CMOS ICs, ch. 3
    # common-gate stage; from memory).
    m = FetModel.from_bias(_mos(gamma=0.45, vsb=1.0))
    t = _lf(m, "cg")
    assert t.av[0] == pytest.approx((m.gm + m.gmb + 1 / m.ro) * m.ro * RL / (m.ro + RL), rel=1e-12)
    assert t.zin[0] == pytest.approx((m.ro + RL) / (1 + (m.gm + m.gmb) * m.ro), rel=1e-12)


def test_jfet_cs_gain():
    # CS: av = -gm (ro || RL) (Sedra and Smith, JFET amplifier; from memory).
    m = FetModel.from_bias(JfetBias(id=2e-3, vds=6, idss=6e-3, vp=-3, lambda_=0.02))
    par = m.ro * RL / (m.ro + RL)
    assert _lf(m, "cs").av[0] == pytest.approx(-m.gm * par, rel=1e-12)


def test_source_degeneration_closed_form():
    # CS with source resistor RS and no ro/gmb: av = -gm RL / (1 + gm RS) (Sedra and Smith; from memory).
    m = FetModel.from_bias(_mos(lambda_=None))
    t = terminate(dm.Stage(m, "cs", rdeg=100.0).two_port([0.0]), 0.0, RL)
    assert t.av[0] == pytest.approx(-m.gm * RL / (1 + m.gm * 100.0), rel=1e-12)


def test_gate_resistance_adds_to_input_at_high_frequency():
    # rg in series with the gate: z11 of CS (output open, no Cgd) is rg + 1/(jw Cgs)
    # (series connection of impedances; any circuit text).
    m = FetModel.from_bias(_mos(cgd=0.0, lambda_=None, rg=30.0))
    f = np.array([1e6, 1e9])
    y = dm.Stage(m, "cs").two_port(f).data
    np.testing.assert_allclose(1 / y[:, 0, 0], 30.0 + 1 / (2j * np.pi * f * m.cgs), rtol=1e-12)


def test_fet_stage_conversions_against_scikit_rf():
    # Every conversion recomputed by scikit-rf's functions (verify.crosscheck).
    m = FetModel.from_bias(_mos(gamma=0.4, vsb=0.5, csb=0.1e-12, cdb=0.15e-12, rg=10.0))
    for c in ("cs", "cg", "cd"):
        tp = dm.Stage(m, c).two_port(np.logspace(5, 10, 8))
        assert dm.crosscheck(tp).ok


def test_configuration_family_is_checked():
    m = FetModel.from_bias(_mos())
    with pytest.raises(dm.InputError, match="config: 'ce' is not a configuration of a fet device; use cs, cg, cd"):
        dm.Stage(m, "ce")
    h = dm.HybridPi.from_bias(dm.BipolarBias(ic=1e-3, vce=5, beta=100))
    with pytest.raises(dm.InputError, match="config: 'cs' is not a configuration of a bipolar device"):
        dm.Stage(h, "cs")
    assert dm.Stage(m, "cd").config == "cd"
    assert dm.Stage(m).config == "cs" and dm.Stage(h).config == "ce"  # the default: the first


# --- lead inductances (issue 14) -------------------------------------------------------------------

@pytest.mark.parametrize("config", ["cs", "cg", "cd"])
def test_fet_lead_inductances_add_to_the_z_parameters(config):
    # Series impedances at the terminals add to the two-port's Z parameters (input lead to z11,
    # output lead to z22, common lead to all four; the series-element rule, from memory).
    leads = dict(l_g=0.9e-9, l_d=0.6e-9, l_s=0.25e-9)
    bias = MosfetBias(id=2e-3, vds=3.0, vov=0.2, lambda_=0.05, cgs=1e-12, cgd=0.1e-12, rg=8.0)
    packaged = FetModel.from_bias(MosfetBias(id=2e-3, vds=3.0, vov=0.2, lambda_=0.05, cgs=1e-12, cgd=0.1e-12,
                                             rg=8.0, **leads))
    assert (packaged.l_g, packaged.l_d, packaged.l_s) == (0.9e-9, 0.6e-9, 0.25e-9)
    f = np.logspace(6, 10.3, 50)
    z0 = dm.Stage(FetModel.from_bias(bias), config).two_port(f, "z").data
    z1 = dm.Stage(packaged, config).two_port(f, "z").data
    p1, p2, common = {"cs": "gds", "cg": "sdg", "cd": "gsd"}[config]
    lin, lout, lcom = leads["l_" + p1], leads["l_" + p2], leads["l_" + common]
    jw = 2j * np.pi * f
    add = np.stack([np.stack([jw * (lin + lcom), jw * lcom], -1), np.stack([jw * lcom, jw * (lout + lcom)], -1)], -2)
    assert np.allclose(z1, z0 + add, rtol=1e-9, atol=0)


def test_jfet_bias_carries_lead_inductances_and_refuses_negative_ones():
    b = JfetBias(id=2e-3, vds=5.0, idss=8e-3, vp=-2.0, cgs=2e-12, l_s=0.3e-9)
    assert FetModel.from_bias(b).l_s == 0.3e-9
    with pytest.raises(dm.InputError, match="l_g: expected a value >= 0"):
        JfetBias(id=2e-3, vds=5.0, idss=8e-3, vp=-2.0, l_g=-1e-9)

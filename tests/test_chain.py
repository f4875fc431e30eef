"""Cascades and feedback connections: against scikit-rf and against the stamped circuit."""

from __future__ import annotations

import numpy as np
import pytest

import devmodels as dm
from devmodels.chain import analyse_chain, cascade
from devmodels.interconnect import connect, series_element, shunt_element
from devmodels.fet import FetModel
from devmodels.fetbias import MosfetBias

skrf = pytest.importorskip("skrf")

F = np.logspace(4, 9, 12)


@pytest.fixture(scope="module")
def bjt():
    return dm.HybridPi.from_bias(dm.BipolarBias(ic=2e-3, vce=5.0, beta=120, va=60.0, ft=500e6, cmu=1.5e-12,
                                                rb=40.0))


@pytest.fixture(scope="module")
def mos():
    return FetModel.from_bias(MosfetBias(id=3e-3, vds=2.0, vov=0.3, lambda_=0.05, gamma=0.4, vsb=0.8,
                                         cgs=0.8e-12, cgd=0.15e-12, csb=0.2e-12, cdb=0.2e-12))


@pytest.mark.parametrize("configs", [("ce", "cb"), ("ce", "cc"), ("cs", "cg"), ("cs", "cd"), ("ce", "cb", "cc")])
def test_cascade_against_scikit_rf(bjt, mos, configs):
    # scikit-rf's cascade operator (Network ** Network) on S parameters is the reference.
    parts = [dm.Stage(mos if c.startswith(("cs", "cg", "cd")) else bjt, c).two_port(F, "s") for c in configs]
    ours = cascade(*parts).to("s").data
    ref = parts[0].to_skrf()
    for p in parts[1:]:
        ref = ref ** p.to_skrf()
    np.testing.assert_allclose(ours, ref.s, rtol=1e-9, atol=1e-12)


def _device_3port(model, freq):
    """The device as a ground-referenced 3-port (b, c, e) for scikit-rf: its Y is the indefinite matrix."""
    y3 = dm.Stage(model, "ce").indefinite(freq)
    s3 = skrf.network.y2s(y3, z0=50.0)
    return skrf.Network(frequency=skrf.Frequency.from_f(freq, unit="Hz"), s=s3, z0=50.0, name="dev")


def _circuit(freq, dev, extra):
    fr = skrf.Frequency.from_f(freq, unit="Hz")
    p1, p2 = skrf.circuit.Circuit.Port(fr, "p1"), skrf.circuit.Circuit.Port(fr, "p2")
    gnd = skrf.circuit.Circuit.Ground(fr, "gnd")
    return skrf.circuit.Circuit([[(p1, 0), (dev, 0)], [(p2, 0), (dev, 1)]] + extra(fr, gnd)).network


def test_emitter_resistor_series_series_against_scikit_rf_circuit_and_stamp(bjt):
    # An emitter resistor R as a series-series connection (Z add) equals (a) scikit-rf's
    # Circuit solver with the device's emitter to ground through R, and (b) the stamped stage.
    R = 47.0
    dev = _device_3port(bjt, F)

    def extra(fr, gnd):
        r = skrf.circuit.Circuit.SeriesImpedance(fr, R, "R")
        return [[(dev, 2), (r, 0)], [(r, 1), (gnd, 0)]]

    ref = _circuit(F, dev, extra)
    res = connect(dm.Stage(bjt, "ce").two_port(F), shunt_element(R, F), "series-series")
    assert res.port_condition is True
    np.testing.assert_allclose(res.two_port.to("s").data, ref.s, rtol=1e-8, atol=1e-11)
    stamped = dm.Stage(bjt, "ce", rdeg=R).two_port(F, "z").data
    np.testing.assert_allclose(res.two_port.data, stamped, rtol=1e-10)


def test_feedback_resistor_shunt_shunt_against_scikit_rf_circuit_and_stamp(bjt):
    # A collector-base resistor as a shunt-shunt connection (Y add) equals scikit-rf's Circuit
    # with R between base and collector, and the stamped stage with rfb.
    R = 12e3
    dev = _device_3port(bjt, F)
    # each connection list is one node: base with port 1 and R, collector with port 2 and R
    fr = skrf.Frequency.from_f(F, unit="Hz")
    p1, p2 = skrf.circuit.Circuit.Port(fr, "p1"), skrf.circuit.Circuit.Port(fr, "p2")
    gnd = skrf.circuit.Circuit.Ground(fr, "gnd")
    r = skrf.circuit.Circuit.SeriesImpedance(fr, R, "R")
    ref = skrf.circuit.Circuit([[(p1, 0), (dev, 0), (r, 0)], [(p2, 0), (dev, 1), (r, 1)],
                                [(dev, 2), (gnd, 0)]]).network
    res = connect(dm.Stage(bjt, "ce").two_port(F), series_element(R, F), "shunt-shunt")
    assert res.port_condition is True
    np.testing.assert_allclose(res.two_port.to("s").data, ref.s, rtol=1e-8, atol=1e-11)
    stamped = dm.Stage(bjt, "ce", rfb=R).two_port(F).data
    np.testing.assert_allclose(res.two_port.data, stamped, rtol=1e-10)


def test_source_resistor_series_series_equals_stamped_fet(mos):
    # The same rule for a FET without body effect (series-series = Z add; the stamped stage has
    # the resistor in series with the source).  With gmb or Csb the two differ on purpose: the
    # stamped stage ties the body (and Csb, Cdb) to the common terminal (ground, below R); in
    # the Z sum the body stays at the device's own source (above R).
    R = 68.0
    plain = FetModel(gm=mos.gm, ro=mos.ro, cgs=mos.cgs, cgd=mos.cgd)
    res = connect(dm.Stage(plain, "cs").two_port(F), shunt_element(R, F), "series-series")
    stamped = dm.Stage(plain, "cs", rdeg=R).two_port(F, "z").data
    np.testing.assert_allclose(res.two_port.data, stamped, rtol=1e-10)
    body = connect(dm.Stage(mos, "cs").two_port(F), shunt_element(R, F), "series-series")
    assert not np.allclose(body.two_port.data, dm.Stage(mos, "cs", rdeg=R).two_port(F, "z").data,
                           rtol=1e-6)


def test_h_and_g_connections_add_their_parameters(bjt):
    # Definitions: series-shunt adds H, shunt-series adds G (Gray and Meyer ch. 8; from memory).
    a = dm.Stage(bjt, "ce").two_port(F)
    b = series_element(5e3, F)
    for how, kind in (("series-shunt", "h"), ("shunt-series", "g")):
        bk = dm.TwoPort(F, np.array([[[2.0, 0.1], [-0.1, 1e-3]]] * len(F)), kind)
        res = connect(a, bk, how)
        np.testing.assert_allclose(res.two_port.data, a.to(kind).data + bk.data, rtol=1e-12)
        assert res.port_condition is None and "port" in res.note
    assert connect(a, b, "shunt-shunt").two_port.kind == "y"


def test_series_series_flags_a_violated_port_condition(bjt):
    # A network in the common leg whose upper terminals are not one node (here the CE device
    # itself, z11 != z21) violates Brune's condition; the result says so.
    a = dm.Stage(bjt, "ce").two_port(F)
    b = dm.Stage(bjt, "ce", rdeg=100.0).two_port(F)
    res = connect(a, b, "series-series")
    assert res.port_condition is False and "violated" in res.note


def test_chain_stages_loaded_values(bjt, mos):
    # Each stage's gain V(k+1)/V(k): their product is the chain's V2/V1 (definition), stage 1's
    # loaded input impedance is the chain's, the last stage's output impedance is the chain's;
    # and stage k's loaded av equals 1/(A + B/Zload) with Zload the next stage's zin
    # (chain-matrix relation, Pozar sec. 4.4; from memory).
    parts = [dm.Stage(bjt, "ce").two_port(F), dm.Stage(bjt, "cb").two_port(F), dm.Stage(mos, "cd").two_port(F)]
    rs, rl = 75.0, 2e3
    res = analyse_chain(parts, rs, rl)
    np.testing.assert_allclose(np.prod(res.av, axis=0), res.total.av, rtol=1e-9)
    np.testing.assert_allclose(res.zin[0], res.total.zin, rtol=1e-12)
    np.testing.assert_allclose(res.zout[-1], res.total.zout, rtol=1e-12)
    abcd = parts[0].to("abcd").data
    np.testing.assert_allclose(res.av[0], 1 / (abcd[:, 0, 0] + abcd[:, 0, 1] / res.zin[1]), rtol=1e-9)
    # stage 2 as driven by stage 1 from rs: Zout(2) = (B + Zs D)/(A + Zs C) with Zs = zout of stage 1
    t2 = parts[1].to("abcd").data
    zs = res.zout[0]
    np.testing.assert_allclose(res.zout[1], (t2[:, 0, 1] + zs * t2[:, 1, 1]) / (t2[:, 0, 0] + zs * t2[:, 1, 0]),
                               rtol=1e-9)
    # the whole chain's gain from the source: scikit-rf S21 of the cascade with matched ends
    # gives GT = |S21|^2 when rs = rl = z0 (Pozar sec. 12.1; from memory).
    m = analyse_chain(parts, 50.0, 50.0).total
    ref = parts[0].to_skrf() ** parts[1].to_skrf() ** parts[2].to_skrf()
    np.testing.assert_allclose(10 ** (m.gt_db / 10), np.abs(ref.s[:, 1, 0]) ** 2, rtol=1e-8)


def test_errors(bjt):
    a = dm.Stage(bjt, "ce").two_port(F)
    with pytest.raises(dm.InputError, match="stages: a cascade needs at least two"):
        cascade(a)
    with pytest.raises(dm.InputError, match="freq: network 2"):
        cascade(a, dm.Stage(bjt, "cb").two_port(F[:3]))
    with pytest.raises(dm.InputError, match="how: unknown connection"):
        connect(a, a, "parallel")
    with pytest.raises(dm.InputError, match="z: expected a finite nonzero"):
        series_element(0.0, F)
    # an ideal series element has no Z parameters: series-series cannot add it
    with pytest.raises(dm.SingularParameterError, match="network 2: has no Z parameters"):
        connect(a, series_element(100.0, F), "series-series")


def test_wrong_types_raise_the_package_errors():
    # Library API: anything but a TwoPort is refused with the package's own error, which is
    # both an InputError (ValueError) and a TypeError (never an AttributeError).
    from devmodels.exceptions import InputTypeError

    tp = dm.Stage(dm.HybridPi(gm=0.04, r_pi=2.5e3), "ce").two_port([1e3])
    for call in (lambda: cascade(tp, "x"), lambda: connect(tp, 3.0, "shunt-shunt"),
                 lambda: analyse_chain([tp, None])):
        with pytest.raises(InputTypeError, match="expected a TwoPort") as info:
            call()
        assert isinstance(info.value, TypeError) and isinstance(info.value, dm.InputError)

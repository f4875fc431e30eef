"""Spread of the stage as built: the bias network, rc, the unbypassed part of re and the
capacitors in the AC analysis, as ``gain`` analyses them.

The reference everywhere is the scalar pipeline of ``gain`` (operating point, BipolarBias,
HybridPi.from_bias, ``Stage(model, config, rdeg, rfb, network=StageNetwork(...))``,
``analysis.terminate``), one sample at a time.  That pipeline is checked against hand formulas
of the discrete stages in tests/test_stagenetwork.py (analog texts, from memory) and against
scikit-rf in tests/test_conversions.py; here the vectorised spread must reproduce it.
"""

from __future__ import annotations

import dataclasses
import itertools
import json

import numpy as np
import pytest

import devmodels as dm
from devmodels.analysis import terminate
from devmodels.dcbias import BiasNetwork, operating_point
from devmodels.exceptions import InputError
from devmodels.noise import noise_parameters, stage_noise
from devmodels.spread import RESULTS, SpreadRanges, SpreadSetup, evaluate, run_spread
from devmodels.stagenetwork import StageNetwork

FULL = dict(va=80.0, ft=300e6, cmu=2e-12, rb=60.0, rcx=4.0, rex=1.5, rmu=8e6)
SMALL = ("av", "avs", "ai", "zin", "zout")

# (DC network, the stage network's capacitors and bypassed part) - every one in the active region
VARIANTS = {
    # no capacitor at all: every coupling ideal, no bypass (all of re in the AC circuit)
    "divider_unbypassed": (BiasNetwork("divider", 15.0, rc=5.6e3, re=1.42e3, r1=82e3, r2=15e3), {}),
    # re split: 220 ohm unbypassed, 1.2 kohm bypassed by a real capacitor; real coupling capacitors
    "divider_split": (BiasNetwork("divider", 15.0, rc=5.6e3, re=1.42e3, r1=82e3, r2=15e3),
                      dict(re_bypassed=1.2e3, c_bypass=100e-6, c_in=4.7e-6, c_out=10e-6, c_base=22e-6)),
    # all of re bypassed by an ideal capacitor, a real input capacitor
    "fixed_short_bypass": (BiasNetwork("fixed", 12.0, rc=2.2e3, re=470.0, rb=680e3),
                           dict(c_bypass="short", c_in=1e-6)),
    # collector feedback, re bypassed by a real capacitor (default: all of re)
    "feedback_bypass": (BiasNetwork("collector-feedback", 12.0, rc=3.3e3, re=330.0, rb=220e3),
                        dict(c_bypass=47e-6, c_in=2.2e-6, c_out=4.7e-6)),
}


def _stage_network(net: BiasNetwork, extra: dict) -> StageNetwork:
    """The StageNetwork of a DC network: the same resistors, plus the capacitors and bypass of ``extra``."""
    return StageNetwork(net.kind, r1=net.r1, r2=net.r2, rb=net.rb, rc=net.rc, re=net.re, **extra)


def _scalar(net: BiasNetwork, sn: StageNetwork, beta, temp, config, freq, rs, rl, rdeg=0.0, rfb=None,
            noise=False):
    """The gain command's pipeline for one sample: op -> model -> Stage with its network -> terminate."""
    op = operating_point(net, beta, temp=temp)
    m = dm.HybridPi.from_bias(op.bipolar_bias(**FULL))
    stage = dm.Stage(m, config, rdeg, rfb, network=sn)
    t = terminate(stage.two_port([freq]), rs, rl)
    out = {name: abs(complex(getattr(t, name)[0])) for name in SMALL}
    out.update(gt_db=float(t.gt_db[0]), k=float(t.k[0]), ic=op.ic, vce=op.vce, power=op.power)
    if noise:
        r = noise_parameters(stage_noise(stage, [freq]), zs=rs)
        out.update(nf_db=float(r.nf_db[0]), nfmin_db=float(r.nfmin_db[0]))
    return out


@pytest.mark.parametrize("variant", list(VARIANTS))
@pytest.mark.parametrize("config", ["ce", "cb", "cc"])
@pytest.mark.parametrize("freq", [10e3, 5.0])  # inside the band, and below it (the capacitors matter)
def test_spread_with_every_limit_fixed_equals_gain(variant, config, freq):
    net, extra = VARIANTS[variant]
    sn = _stage_network(net, extra)
    rs, rl = 600.0, 10e3
    setup = SpreadSetup(config=config, freq=freq, rs=rs, rl=rl, network=net, stage_network=sn, noise=True, **FULL)
    ranges = SpreadRanges(150.0, 150.0, temp_min=310.0, temp_max=310.0, tol=0.0, samples=5, seed=1)
    res = run_spread(setup, ranges)
    want = _scalar(net, sn, 150.0, 310.0, config, freq, rs, rl, noise=True)
    for name in setup.results:
        st, w = res.stats[name], res.worst[name]
        for got in (st["min"], st["max"], w["worst_min"], w["worst_max"], res.corners["nominal"][name]):
            if name in ("gt_db", "nf_db", "nfmin_db"):
                assert got == pytest.approx(want[name], rel=1e-9, abs=1e-12), name
            else:
                assert got == pytest.approx(want[name], rel=1e-9, abs=0), name
    assert not any(s.startswith("nf_db: ") for s in res.warnings)  # the network is in the noise figure


def test_below_the_band_the_capacitors_change_the_result():
    # The same spread at 5 Hz and at 10 kHz: the capacitors (and only they) make the difference,
    # and at 5 Hz the gain is well below the mid-band one (the low corner of this stage is some
    # tens of Hz: 1 / (2 pi 4.7 uF * (600 ohm + ~10 kohm)) alone is about 3 Hz, the bypass is
    # higher; common practice, no source).
    net, extra = VARIANTS["divider_split"]
    sn = _stage_network(net, extra)
    args = dict(config="ce", rs=600.0, rl=10e3, network=net, stage_network=sn, **FULL)
    beta, temp = np.array([150.0]), np.array([300.0])
    low = evaluate(SpreadSetup(freq=5.0, **args), beta, temp)["av"][0]
    mid = evaluate(SpreadSetup(freq=10e3, **args), beta, temp)["av"][0]
    ideal = evaluate(SpreadSetup(freq=5.0, **args | {"stage_network": sn.shorted()}), beta, temp)["av"][0]
    assert low < 0.5 * mid
    assert ideal == pytest.approx(mid, rel=1e-3)  # the device capacitances hardly matter at 10 kHz


@pytest.mark.parametrize("config", ["ce", "cb", "cc"])
def test_each_sample_with_toleranced_parts_equals_the_scalar_stage(config):
    # Every resistor drawn on its own, the two parts of re too: the operating point takes their
    # sum, the AC circuit the two parts (StageNetwork(re = sum, re_bypassed = second part)).
    net, extra = VARIANTS["divider_split"]
    sn = _stage_network(net, extra)
    setup = SpreadSetup(config=config, freq=200.0, rs=600.0, rl=10e3, network=net, stage_network=sn, rdeg=22.0,
                        rfb=470e3, noise=True, **FULL)
    assert list(setup.resistors) == ["r1", "r2", "rc", "re_unbypassed", "re_bypassed", "rdeg", "rfb"]
    rng = np.random.default_rng(3)
    n = 6
    beta = rng.uniform(80.0, 400.0, n)
    temp = rng.uniform(240.0, 370.0, n)
    fac = {name: rng.uniform(0.9, 1.1, n) for name in setup.resistors}
    got = evaluate(setup, beta, temp, fac)
    for k in range(n):
        r = {name: v * fac[name][k] for name, v in setup.resistors.items()}
        re_total = r["re_unbypassed"] + r["re_bypassed"]
        net_k = dataclasses.replace(net, r1=r["r1"], r2=r["r2"], rc=r["rc"], re=re_total)
        sn_k = dataclasses.replace(sn, r1=r["r1"], r2=r["r2"], rc=r["rc"], re=re_total, re_bypassed=r["re_bypassed"])
        want = _scalar(net_k, sn_k, beta[k], temp[k], config, 200.0, 600.0, 10e3, r["rdeg"], r["rfb"], noise=True)
        for name in setup.results:
            tol = dict(abs=1e-12) if name in ("gt_db", "nf_db", "nfmin_db") else dict(abs=0)
            assert got[name][k] == pytest.approx(want[name], rel=1e-9, **tol), (name, k)


def test_the_two_parts_of_re_are_independent_limits_and_the_ic_worst_case_is_exhaustive():
    # IC of a divider network is monotonic in beta, temperature and each resistor, so its extremes
    # are at vertices of the box: enumerated here one by one with the scalar operating point
    # (the Thevenin form of the divider, Sedra and Smith, from memory).  The two parts of re are
    # two limits; the DC point uses their sum.
    net, extra = VARIANTS["divider_split"]
    sn = _stage_network(net, extra)
    setup = SpreadSetup(config="ce", freq=1e3, rs=600.0, rl=10e3, network=net, stage_network=sn, **FULL)
    ranges = SpreadRanges(100.0, 300.0, temp_min=253.0, temp_max=343.0, tol=0.05, samples=4000, seed=2)
    lim = setup.limits(ranges)
    assert set(lim) == {"beta", "temp", "r1", "r2", "rc", "re_unbypassed", "re_bypassed"}
    res = run_spread(setup, ranges)
    nominal = setup.resistors
    ics = []
    for b, t, f1, f2, fc, fu, fb in itertools.product((100.0, 300.0), (253.0, 343.0), *[(0.95, 1.05)] * 5):
        re_total = nominal["re_unbypassed"] * fu + nominal["re_bypassed"] * fb
        n_k = dataclasses.replace(net, r1=82e3 * f1, r2=15e3 * f2, rc=5.6e3 * fc, re=re_total)
        ics.append(operating_point(n_k, b, temp=t).ic)
    assert res.worst["ic"]["worst_min"] == pytest.approx(min(ics), rel=1e-12, abs=0)
    assert res.worst["ic"]["worst_max"] == pytest.approx(max(ics), rel=1e-12, abs=0)
    assert res.worst["ic"]["worst_max_at"]["re_unbypassed"] == "low"
    assert res.worst["ic"]["worst_max_at"]["re_bypassed"] == "low"
    # the two factors are drawn apart: their samples are not the same numbers
    draw = setup._draw(np.random.default_rng(0), ranges, 1000)[2]
    assert abs(np.corrcoef(draw["re_unbypassed"], draw["re_bypassed"])[0, 1]) < 0.15  # 1000 independent pairs


@pytest.mark.parametrize("freq", [20.0, 10e3])
def test_every_sample_lies_inside_the_worst_case_with_the_network(freq):
    net, extra = VARIANTS["divider_split"]
    sn = _stage_network(net, extra)
    setup = SpreadSetup(config="ce", freq=freq, rs=600.0, rl=10e3, network=net, stage_network=sn, noise=True,
                        **FULL)
    ranges = SpreadRanges(100.0, 300.0, temp_min=253.0, temp_max=343.0, tol=0.05, samples=20000, seed=11)
    res = run_spread(setup, ranges)
    for name in setup.results:
        w = res.worst[name]
        v = res.values[name][np.isfinite(res.values[name])]
        assert v.size == ranges.samples, name
        lo, hi = w["worst_min"], w["worst_max"]
        assert np.all(v >= lo - 1e-12 * abs(lo)), name
        assert np.all(v <= hi + 1e-12 * abs(hi)), name
    assert not any(s.startswith("worst case:") for s in res.warnings)


def test_the_network_loads_the_stage_in_the_spread():
    # The bare transistor (no stage network) against the stage as built.  The divider shunts the
    # input: |zin| < R1 || R2.  The unbypassed 220 ohm sets the gain: |av| ~ (RC || RL) / (RE' + 1/gm)
    # (the degenerated common-emitter rule of thumb, analog texts, from memory), within a few
    # per cent here (beta 180, ro 80 V / 1.1 mA), while the bare stage's gain is gm (ro || RL) ~ 20x more.
    net, extra = VARIANTS["divider_split"]
    sn = _stage_network(net, extra)
    args = dict(config="ce", freq=10e3, rs=600.0, rl=10e3, network=net, **FULL)
    beta, temp = np.array([180.0]), np.array([300.0])
    built = evaluate(SpreadSetup(stage_network=sn, **args), beta, temp)
    bare = evaluate(SpreadSetup(**args), beta, temp)
    assert built["ic"][0] == bare["ic"][0]  # the same operating point
    assert built["zin"][0] < 82e3 * 15e3 / 97e3
    gm = built["ic"][0] / (dm.constants.BOLTZMANN * 300.0 / dm.constants.ELEMENTARY_CHARGE)
    rule = (5.6e3 * 10e3 / 15.6e3) / (220.0 + 1.0 / gm)
    assert built["av"][0] == pytest.approx(rule, rel=0.05)
    assert bare["av"][0] > 15 * built["av"][0]


def test_a_stage_network_that_is_not_the_dc_network_is_refused():
    net, extra = VARIANTS["divider_split"]
    sn = _stage_network(net, extra)
    with pytest.raises(InputError, match=r"^stage_network: r1 = 47000.0 ohm differs"):
        SpreadSetup(network=net, stage_network=dataclasses.replace(sn, r1=47e3))
    with pytest.raises(InputError, match=r"^stage_network: its bias is 'fixed'"):
        SpreadSetup(network=net, stage_network=StageNetwork("fixed", rb=1e5, rc=5.6e3, re=1.42e3))
    with pytest.raises(InputError, match=r"^stage_network: expected a StageNetwork"):
        SpreadSetup(network=net, stage_network="divider")
    with pytest.raises(InputError, match=r"^stage_network: r1 must be one nominal value"):
        SpreadSetup(network=net, stage_network=dataclasses.replace(sn, r1=np.array([82e3, 82e3])))


def test_a_stage_network_without_a_dc_network_holds_ic_and_tolerances_its_resistors():
    # IC and VCE fixed, the stage network's resistors still toleranced (AC only)
    sn = StageNetwork("divider", r1=82e3, r2=15e3, rc=5.6e3, re=1.42e3, re_bypassed=1.2e3, c_bypass="short")
    setup = SpreadSetup(config="ce", freq=1e3, rs=600.0, rl=10e3, ic=1e-3, vce=6.0, stage_network=sn, **FULL)
    assert set(setup.resistors) == {"r1", "r2", "rc", "re_unbypassed", "re_bypassed"}
    ranges = SpreadRanges(180.0, 180.0, tol=0.05, samples=2000, seed=4)
    res = run_spread(setup, ranges)
    assert res.stats["ic"]["min"] == res.stats["ic"]["max"] == 1e-3
    assert res.stats["av"]["min"] < res.stats["av"]["max"]
    for name in RESULTS:
        lo, hi = res.worst[name]["worst_min"], res.worst[name]["worst_max"]
        assert lo - 1e-12 * abs(lo) <= res.stats[name]["min"], name
        assert res.stats[name]["max"] <= hi + 1e-12 * abs(hi), name


# --- FETs: the stage network in the AC analysis at a fixed ID and VDS ------------------------------
from devmodels.fet import FetModel  # noqa: E402
from devmodels.fetbias import JfetBias  # noqa: E402
from devmodels.spread import FET_NETWORK_NAMES, FetSpreadRanges, FetSpreadSetup  # noqa: E402

FET_NET = StageNetwork("divider", r1=1e6, r2=470e3, rc=4.7e3, re=1e3, re_bypassed=800.0, c_bypass=10e-6,
                       c_in=100e-9, c_out=1e-6, c_base=1e-6)
FET_KW = dict(device="njfet", id=1e-3, vds=5.0, cgs=3e-12, cgd=1e-12, rg=20.0)


@pytest.mark.parametrize("config", ["cs", "cg", "cd"])
@pytest.mark.parametrize("freq", [50.0, 10e3])
def test_fet_samples_with_the_stage_network_equal_the_scalar_stage(config, freq):
    # each sample: JfetBias -> FetModel.from_bias -> Stage(network=StageNetwork at the sample's
    # resistor values) -> terminate, as gain does, against the vectorised evaluation
    setup = FetSpreadSetup(config=config, freq=freq, rs=1e3, rl=10e3, stage_network=FET_NET, rdeg=47.0,
                           noise=True, **FET_KW)
    assert list(setup.resistors) == ["rg1", "rg2", "rd", "rsrc_unbypassed", "rsrc_bypassed", "rdeg"]
    ranges = FetSpreadRanges(idss_min=4e-3, idss_max=12e-3, vp_min=1.0, vp_max=3.0, tol=0.05, samples=25, seed=6)
    res = run_spread(setup, ranges)
    rng = np.random.default_rng(ranges.seed)  # the documented draw: one array per limit, in order
    p = {k: rng.uniform(lo, hi, ranges.samples) for k, (lo, hi) in setup.limits(ranges).items()}
    back = {v: k for k, v in FET_NETWORK_NAMES.items()}
    for k in range(0, ranges.samples, 6):
        m = FetModel.from_bias(JfetBias(id=1e-3, vds=5.0, idss=p["idss"][k], vp=-p["vp"][k], device="njfet",
                                        cgs=3e-12, cgd=1e-12, rg=20.0))
        r = {back[n]: v * p[n][k] for n, v in setup.resistors.items() if n in back}
        sn = dataclasses.replace(FET_NET, r1=r["r1"], r2=r["r2"], rc=r["rc"],
                                 re=r["re_unbypassed"] + r["re_bypassed"], re_bypassed=r["re_bypassed"])
        stage = dm.Stage(m, config, 47.0 * p["rdeg"][k], network=sn)
        t = terminate(stage.two_port([freq]), 1e3, 10e3)
        for name in SMALL:
            assert res.values[name][k] == pytest.approx(abs(complex(getattr(t, name)[0])), rel=1e-9, abs=0), name
        assert res.values["gt_db"][k] == pytest.approx(float(t.gt_db[0]), rel=1e-9, abs=1e-12)
        nz = noise_parameters(stage_noise(stage, [freq]), zs=1e3)
        assert res.values["nf_db"][k] == pytest.approx(float(nz.nf_db[0]), rel=1e-9, abs=1e-12)
    for name in setup.results:
        v = res.values[name][np.isfinite(res.values[name])]
        lo, hi = res.worst[name]["worst_min"], res.worst[name]["worst_max"]
        if v.size:
            assert lo - 1e-12 * abs(lo) <= v.min() and v.max() <= hi + 1e-12 * abs(hi), name


# --- capacitor tolerance ------------------------------------------------------------------------
@pytest.mark.parametrize("config, caps", [("ce", ["c_in", "c_out", "c_bypass"]), ("cb", ["c_in", "c_out", "c_base"]),
                                          ("cc", ["c_in", "c_out"])])
def test_capacitor_tolerance_draws_the_capacitors_of_the_configuration(config, caps):
    # the capacitors that are in the configuration's circuit (c_bypass shunts the emitter in ce
    # only, c_base grounds the base in cb only); each sample against the gain pipeline at its values
    net, extra = VARIANTS["divider_split"]
    sn = _stage_network(net, extra)
    setup = SpreadSetup(config=config, freq=20.0, rs=600.0, rl=10e3, network=net, stage_network=sn, **FULL)
    assert list(setup.capacitors) == caps
    ranges = SpreadRanges(100.0, 300.0, tol=0.05, ctol=0.2, samples=8, seed=5)
    assert all(setup.limits(ranges)[c] == (0.8, 1.2) for c in caps)
    beta, temp, fac = setup._draw(np.random.default_rng(1), ranges, 4)
    assert set(fac) == set(setup.resistors) | set(caps)
    got = evaluate(setup, beta, temp, fac)
    for k in range(4):
        r = {name: v * fac[name][k] for name, v in setup.resistors.items()}
        re_total = r["re_unbypassed"] + r["re_bypassed"]
        net_k = dataclasses.replace(net, r1=r["r1"], r2=r["r2"], rc=r["rc"], re=re_total)
        sn_k = dataclasses.replace(sn, r1=r["r1"], r2=r["r2"], rc=r["rc"], re=re_total, re_bypassed=r["re_bypassed"],
                                   **{c: getattr(sn, c) * fac[c][k] for c in caps})
        want = _scalar(net_k, sn_k, beta[k], temp[k], config, 20.0, 600.0, 10e3)
        for name in SMALL:
            assert got[name][k] == pytest.approx(want[name], rel=1e-9, abs=0), (name, k)
    res = run_spread(setup, ranges)
    assert "±20 %" in setup.describe(ranges)["limits_text"] and res.corners["min"]["ctol"] == pytest.approx(-0.2)


def test_worst_case_with_capacitor_tolerance_bounds_every_sample_below_the_band():
    # At 20 Hz (below this stage's low corner) every capacitor matters; a larger capacitor gives
    # more gain there (each one's reactance is in series with the signal or with the emitter
    # resistor: common practice, no source), so the lowest |av| has every capacitor low.
    net, extra = VARIANTS["divider_split"]
    sn = _stage_network(net, extra)
    setup = SpreadSetup(config="ce", freq=20.0, rs=600.0, rl=10e3, network=net, stage_network=sn, **FULL)
    ranges = SpreadRanges(100.0, 300.0, temp_min=253.0, temp_max=343.0, tol=0.05, ctol=0.2, samples=20000, seed=8)
    res = run_spread(setup, ranges)
    for name in RESULTS:
        v = res.values[name]
        lo, hi = res.worst[name]["worst_min"], res.worst[name]["worst_max"]
        assert np.all(v >= lo - 1e-12 * abs(lo)) and np.all(v <= hi + 1e-12 * abs(hi)), name
    assert not any(s.startswith("worst case:") for s in res.warnings)
    at = res.worst["av"]["worst_min_at"]
    assert (at["c_in"], at["c_out"], at["c_bypass"]) == ("low", "low", "low")
    # the tolerance widens the spread of the gain below the band, not the operating point
    fixed = run_spread(setup, dataclasses.replace(ranges, ctol=0.0))
    assert res.worst["av"]["worst_max"] - res.worst["av"]["worst_min"] > \
        fixed.worst["av"]["worst_max"] - fixed.worst["av"]["worst_min"]
    assert res.worst["ic"]["worst_min"] == fixed.worst["ic"]["worst_min"]


@pytest.mark.parametrize("ctol", [-0.01, 1.0, float("nan"), True, "5"])
def test_a_bad_capacitor_tolerance_names_the_value(ctol):
    with pytest.raises(InputError, match="^ctol: expected a capacitor tolerance"):
        SpreadRanges(100.0, 300.0, ctol=ctol)
    with pytest.raises(InputError, match="^ctol: expected a capacitor tolerance"):
        FetSpreadRanges(idss_min=4e-3, idss_max=8e-3, vp_min=1.0, vp_max=2.0, ctol=ctol)


def test_fet_capacitor_tolerance():
    setup = FetSpreadSetup(config="cs", freq=50.0, rs=1e3, rl=10e3, stage_network=FET_NET, **FET_KW)
    assert list(setup.capacitors) == ["c_in", "c_out", "c_bypass"]
    ranges = FetSpreadRanges(idss_min=4e-3, idss_max=12e-3, vp_min=1.0, vp_max=3.0, tol=0.05, ctol=0.1,
                             samples=3000, seed=2)
    res = run_spread(setup, ranges)
    assert set(res.worst["av"]["worst_min_at"]) >= {"c_in", "c_out", "c_bypass"}
    p = {k: np.array([lo, hi]) for k, (lo, hi) in setup.limits(ranges).items()}  # two vertices
    got = setup.evaluate_points(p)
    for k in range(2):
        m = FetModel.from_bias(JfetBias(id=1e-3, vds=5.0, idss=p["idss"][k], vp=-p["vp"][k], device="njfet",
                                        cgs=3e-12, cgd=1e-12, rg=20.0))
        f = p["rg1"][k]  # every resistor at the same end, every capacitor at the same end
        fc = p["c_in"][k]
        sn = StageNetwork("divider", r1=1e6 * f, r2=470e3 * f, rc=4.7e3 * f, re=1e3 * f, re_bypassed=800.0 * f,
                          c_bypass=10e-6 * fc, c_in=100e-9 * fc, c_out=1e-6 * fc, c_base=1e-6)
        t = terminate(dm.Stage(m, "cs", network=sn).two_port([50.0]), 1e3, 10e3)
        assert got["av"][k] == pytest.approx(abs(complex(t.av[0])), rel=1e-9, abs=0)
    for name in setup.results:
        v = res.values[name][np.isfinite(res.values[name])]
        lo, hi = res.worst[name]["worst_min"], res.worst[name]["worst_max"]
        if v.size:
            assert lo - 1e-12 * abs(lo) <= v.min() and v.max() <= hi + 1e-12 * abs(hi), name


@pytest.mark.parametrize("args,gain_args", [
    (["--ic", "1mA", "--vce", "5", "--beta", "100", "--ft", "300MHz", "--cmu", "2p", "--rb", "80",
      "--l-b", "2nH", "--l-e", "0.7nH", "--l-c", "1nH"], None),
    (["--device", "nmos", "--id", "5mA", "--vds", "3", "--cgs", "1p", "--cgd", "0.2p",
      "--l-g", "1.5nH", "--l-s", "0.4nH", "--l-d", "1nH", "--kn-min", "0.16", "--kn-max", "0.16"],
     ["--device", "nmos", "--id", "5mA", "--vds", "3", "--kn", "0.16", "--cgs", "1p", "--cgd", "0.2p",
      "--l-g", "1.5nH", "--l-s", "0.4nH", "--l-d", "1nH"]),
])
def test_lead_inductances_reach_the_spread(args, gain_args):
    """A spread with every limit fixed equals gain at the same point with the same lead
    inductances (and differs from the spread without them): the leads are in the samples' model."""
    from devmodels.cli import main as cli_main
    import contextlib
    import io

    def run_json(*a):
        buf = io.StringIO()
        with contextlib.redirect_stdout(buf):
            assert cli_main([*a, "--json"]) == 0
        return json.loads(buf.getvalue())

    common = ["--rs", "50", "--rl", "200"]
    s = run_json("spread", *args, *common, "--freq", "500MHz", "-n", "50", "--seed", "2")
    g = run_json("gain", *(gain_args or args), *common, "-f", "500MHz")["points"][0]
    av = abs(complex(*g["av"]))
    assert s["av"]["min"] == pytest.approx(av, rel=1e-9, abs=0) and s["av"]["max"] == pytest.approx(av, rel=1e-9, abs=0)
    without = [a for i, a in enumerate(args) if not (a.startswith("--l-") or (i and args[i - 1].startswith("--l-")))]
    s0 = run_json("spread", *without, *common, "--freq", "500MHz", "-n", "50", "--seed", "2")
    assert abs(s0["av"]["p50"] / s["av"]["p50"] - 1) > 1e-3

"""Bias design: the ideal values follow the rules, the chosen parts are series members, the
reported point and worst case are those of the chosen parts, bad input is refused."""

from __future__ import annotations

import itertools
import json
import tomllib

import numpy as np
import pytest

from devmodels.biasfile import load_bias_file
from devmodels.dcbias import BiasNetwork, operating_point
from devmodels.design import design_bias, design_toml, ic_accuracy
from devmodels.eseries import nearest, neighbours, values_between
from devmodels.exceptions import InputError
from devmodels.schema import merge
from devmodels.spread import SpreadRanges, SpreadSetup
from devmodels.temperature import beta_at
from devmodels.worstcase import worst_case

LIMITS = dict(beta_min=80.0, beta_max=200.0, temp_min=250.0, temp_max=350.0, tol=0.01)


def _is_member(v: float, series: str) -> bool:
    return nearest(v, series) == v and v in values_between(v / 1.001, v * 1.001, series).tolist()


def test_hand_worked_divider_design():
    # VCC = 12 V, IC = 1 mA, hFE 100..300 (nominal 200), VBE = 0.7 V, 300 K, E24.
    # Ideal values by the usual procedure:
    #   VE = VCC/10 = 1.2 V; IE = IC (beta+1)/beta = 1.005 mA; RE = 1.2 V / 1.005 mA = 1194.03 ohm
    #   VCE = (VCC - VE)/2 = 5.4 V; VC = 6.6 V; RC = (12 - 6.6) V / 1 mA = 5.4 kohm
    #   VB = VE + VBE = 1.9 V; IB(min) = 1 mA/100 = 10 uA; I2 = 10 IB(min) = 100 uA
    #   R2 = 1.9 V / 100 uA = 19 kohm; R1 = (12 - 1.9) V / (100 uA + 5 uA) = 96.19 kohm
    # E24 neighbours: R1 91k|100k, R2 18k|20k, RE 1.2k (1.1k, 1.3k), RC 5.1k|5.6k.
    # With 91k/18k/1.2k: VBB = 12*18/109 = 1.98165 V, RBB = 91k||18k = 15.028 kohm,
    #   IB = (1.98165 - 0.7)/(15028 + 201*1200) = 5.0020 uA, IC = 1.00040 mA (+0.04 %),
    #   VE = 1.2065 V; RC 5.6k gives VCE = 12 - 5.6022 - 1.2065 = 5.1913 V (0.21 V from 5.4 V)
    #   and 5.1k gives 5.6915 V (0.29 V): 5.6k.
    d = design_bias("divider", 12.0, 1e-3, beta_min=100, beta_max=300, series="E24")
    assert d.ideal["re"] == pytest.approx(1.2 / 1.005e-3, rel=1e-12)
    assert d.ideal["rc"] == pytest.approx(5400.0, rel=1e-12)
    assert d.ideal["r2"] == pytest.approx(19e3, rel=1e-12)
    assert d.ideal["r1"] == pytest.approx(10.1 / 105e-6, rel=1e-12)
    assert d.target_vce == pytest.approx(5.4, rel=1e-12)
    # the search may only do better than the hand choice; here it finds the same
    assert abs(d.ic - 1e-3) <= 0.00041e-3
    assert d.network.resistors == {"r1": 91e3, "r2": 18e3, "rc": 5.6e3, "re": 1.2e3}
    assert d.ic == pytest.approx(1.00040e-3, rel=2e-5)
    assert d.vce == pytest.approx(5.1913, abs=2e-4)
    assert d.beta == 200.0 and d.vbe == 0.7
    # no temperature range and no tolerance: the worst case is over beta only
    lo = operating_point(d.network, 100.0)
    hi = operating_point(d.network, 300.0)
    assert d.worst["ic"] == {"min": pytest.approx(lo.ic, rel=1e-12), "max": pytest.approx(hi.ic, rel=1e-12)}
    assert d.worst["vce"] == {"min": pytest.approx(hi.vce, rel=1e-12), "max": pytest.approx(lo.vce, rel=1e-12)}


CASES = [(net, series, ic) for net in ("divider", "fixed", "collector-feedback")
         for series in ("E12", "E24", "E48", "E96") for ic in (1e-3, 2.3e-3, 5e-3)]


@pytest.mark.parametrize("net, series, ic", CASES)
def test_chosen_parts_are_members_and_their_point_is_reported(net, series, ic):
    d = design_bias(net, 9.0, ic, series=series, **LIMITS)
    assert d.series == series
    assert set(d.network.resistors) == set(d.ideal)
    for name, v in d.network.resistors.items():
        assert _is_member(v, series), (name, v)
    # the point of the chosen parts, solved independently of the design's search
    op = operating_point(d.network, d.beta_ref, vbe=d.vbe_ref, temp=d.temp)
    assert op.region == "active"
    assert d.ic == pytest.approx(op.ic, rel=1e-12)
    assert d.vce == pytest.approx(op.vce, rel=1e-12)
    assert d.beta == pytest.approx(op.beta, rel=1e-15) and d.vbe == pytest.approx(op.vbe, rel=1e-15)
    # the target is met within half a series step (E12 10.1 %, E24 4.9 %, E48 2.4 %, E96 1.2 %)
    assert abs(d.ic / ic - 1) <= ic_accuracy(series)
    assert d.worst["ic"]["min"] <= d.ic <= d.worst["ic"]["max"]
    assert d.worst["vce"]["min"] > 0.3  # active at every vertex


# One decade of E12 as printed in IEC 60063 (written out here, not taken from devmodels.eseries).
E12 = (10, 12, 15, 18, 22, 27, 33, 39, 47, 56, 68, 82)


def _e12_neighbours(x: float) -> set[float]:
    """The E12 values just below and just above x (from the decade written out above)."""
    members = sorted(m * 10.0 ** d for d in range(-1, 8) for m in E12)
    return {max(m for m in members if m <= x), min(m for m in members if m >= x)}


def test_stability_rule_comes_first_on_a_wide_box():
    # VCC = 9 V, IC = 2 mA, hFE 80..250, -40 C .. 85 C, 5 %, E12.  By hand (VBE 0.7 V, beta 165):
    #   VE = 0.9 V, IE = 2 mA * 166/165, RE = 0.9 V / IE = 447.3 ohm (E12 neighbours 390, 470)
    #   beta_low = 80 at -40 C (beta_tc 0.5 %/K: 80 (1 - 0.005 * 66.85) = 53.3 .. 57.3), I2 = 10 IC / beta_low,
    #   R2 = 1.6 V / I2 = 4.585 kohm (neighbours 3.9k, 4.7k)
    # The rule (common practice, no source): VE about a tenth of VCC, divider current >= 10 IB at the
    # lowest hFE; then IC closest to the target.
    lim = dict(beta_min=80.0, beta_max=250.0, temp_min=233.15, temp_max=358.15, tol=0.05)
    d = design_bias("divider", 9.0, 2e-3, series="E12", **lim)
    assert d.ideal["re"] == pytest.approx(447.289, rel=1e-5) and d.ideal["r2"] == pytest.approx(4585.42, rel=1e-5)
    assert _e12_neighbours(d.ideal["re"]) == {390.0, 470.0} and _e12_neighbours(d.ideal["r2"]) == {3900.0, 4700.0}
    assert d.network.re in _e12_neighbours(d.ideal["re"])
    assert d.network.r2 in _e12_neighbours(d.ideal["r2"])
    assert d.rule == "met" and d.notes == ()
    # the rule on the chosen parts, solved independently of the design's search
    op = operating_point(d.network, d.beta_ref, vbe=d.vbe_ref, temp=d.temp)
    beta_low = min(beta_at(lim["temp_min"], lim["beta_min"]), beta_at(lim["temp_max"], lim["beta_min"]))
    assert op.vb / d.network.r2 >= 10 * op.ic / beta_low
    assert d.divider_ratio == pytest.approx(op.vb / d.network.r2 / (op.ic / beta_low), rel=1e-12)
    step = 10 ** (1 / 12)  # one E12 step
    assert 0.9 / step <= op.ve <= 0.9 * step and d.ve == pytest.approx(op.ve, rel=1e-12)
    # then IC: within half a step of the target, active at every vertex
    assert abs(op.ic / 2e-3 - 1) <= ic_accuracy("E12")
    assert d.worst["vce"]["min"] > 0.3


@pytest.mark.parametrize("net, series, ic", CASES)
def test_rule_holds_or_the_trade_is_stated(net, series, ic):
    d = design_bias(net, 9.0, ic, series=series, **LIMITS)
    op = operating_point(d.network, d.beta_ref, vbe=d.vbe_ref, temp=d.temp)
    beta_low = beta_at(LIMITS["temp_min"], LIMITS["beta_min"])
    ratio_ok = net != "divider" or op.vb / d.network.r2 >= 10 * op.ic / beta_low * (1 - 1e-12)
    near = [d.network.resistors[n] in neighbours(d.ideal[n], series) for n in ("re", "r2") if n in d.ideal]
    if d.rule == "met":
        assert ratio_ok and all(near) and d.notes == ()
    else:
        assert len(d.notes) == 1 and d.notes[0].startswith("stability rule")
        assert (d.rule == "r2 beyond neighbours") == (ratio_ok and near[0] and not all(near))


def test_ratings_warn_with_the_sentences_of_the_other_commands():
    from devmodels.dcbias import rating_warnings

    d = design_bias("divider", 9.0, 2e-3, series="E12", **LIMITS)
    assert d.warnings == () and d.ratings == {"pmax": None, "vceo": None}
    op = operating_point(d.network, d.beta_ref, vbe=d.vbe_ref, temp=d.temp)
    # a power rating just below the nominal dissipation, a VCEO below the supply
    d2 = design_bias("divider", 9.0, 2e-3, series="E12", pmax=0.99 * op.power, vceo=8.0, **LIMITS)
    assert d2.network == d.network
    assert list(d2.warnings) == rating_warnings(op.power, op.vce, 9.0, pmax=0.99 * op.power, vceo=8.0)
    # ratings above the nominal point and the supply: no warning
    assert design_bias("divider", 9.0, 2e-3, series="E12", pmax=1.0, vceo=30.0, **LIMITS).warnings == ()


def test_power_rating_is_checked_at_the_worst_case_not_only_at_vertices():
    # P = IC VCE + IB VBE is largest where VCE is about half the supply (from memory), which an inner
    # beta reaches in a fixed-base network over hFE 80..250; the maximum over a fine grid of beta, here
    d = design_bias("fixed", 9.0, 2e-3, series="E12", beta_min=80.0, beta_max=250.0)
    p_grid = max(operating_point(d.network, float(b)).power for b in np.linspace(80.0, 250.0, 1701))
    p_vertex = max(operating_point(d.network, b).power for b in (80.0, 250.0))
    assert p_vertex < 0.9 * p_grid  # the peak is inside the box: the test can tell
    p_nominal = operating_point(d.network, d.beta_ref).power
    assert p_nominal < 0.999 * p_grid
    pmax = 0.5 * (max(p_vertex, p_nominal) + p_grid)  # above the nominal point and every vertex
    d2 = design_bias("fixed", 9.0, 2e-3, series="E12", beta_min=80.0, beta_max=250.0, pmax=pmax)
    assert len(d2.warnings) == 1 and d2.warnings[0].startswith("power: ")
    assert "at the worst case of the limits" in d2.warnings[0]
    shown = float(d2.warnings[0].split("dissipates ")[1].split(" mW")[0]) * 1e-3
    assert shown == pytest.approx(p_grid, rel=1e-3)  # 4 significant digits
    assert design_bias("fixed", 9.0, 2e-3, series="E12", beta_min=80.0, beta_max=250.0,
                       pmax=1.001 * p_grid).warnings == ()


def test_accuracy_bands():
    assert [round(ic_accuracy(s), 4) for s in ("E12", "E24", "E48", "E96")] == [0.1007, 0.0491, 0.0243, 0.0121]


@pytest.mark.parametrize("net", ["divider", "fixed", "collector-feedback"])
def test_rules_hold_for_the_ideal_values(net):
    vcc, ic = 15.0, 2e-3
    d = design_bias(net, vcc, ic, series="E24", **LIMITS)
    ideal = BiasNetwork(kind=net, vcc=vcc, **d.ideal)
    op = operating_point(ideal, d.beta_ref, vbe=d.vbe_ref, temp=d.temp)
    assert op.ic == pytest.approx(ic, rel=1e-9)
    assert op.ve == pytest.approx(vcc / 10, rel=1e-9)           # VE ~ VCC/10
    assert op.vce == pytest.approx((vcc - vcc / 10) / 2, rel=1e-9)  # collector halfway
    if net == "divider":
        beta_low = beta_at(LIMITS["temp_min"], LIMITS["beta_min"])  # lowest hFE of the box
        i2 = op.vb / ideal.r2
        assert i2 >= 10 * ic / beta_low * (1 - 1e-12)
        assert i2 == pytest.approx(10 * ic / beta_low, rel=1e-9)


def test_target_vce_and_rule_parameters():
    d = design_bias("divider", 12.0, 1e-3, series="E96", vce=4.0, ve_fraction=0.15, divider_factor=20,
                    beta_min=100, beta_max=300)
    ideal = BiasNetwork(kind="divider", vcc=12.0, **d.ideal)
    op = operating_point(ideal, 200.0)
    assert op.vce == pytest.approx(4.0, rel=1e-9)
    assert op.ve == pytest.approx(1.8, rel=1e-9)
    assert op.vb / ideal.r2 == pytest.approx(20 * 1e-3 / 100, rel=1e-9)
    assert abs(d.vce - 4.0) < 0.2


def test_worst_case_is_the_vertex_enumeration_of_the_chosen_parts():
    d = design_bias("divider", 12.0, 1e-3, series="E24", **LIMITS)
    ics, vces = [], []
    names = list(d.network.resistors)
    tol = LIMITS["tol"]
    for beta in (LIMITS["beta_min"], LIMITS["beta_max"]):
        for temp in (LIMITS["temp_min"], LIMITS["temp_max"]):
            for f in itertools.product((1 - tol, 1 + tol), repeat=len(names)):
                net = BiasNetwork("divider", 12.0, **{n: d.network.resistors[n] * k for n, k in zip(names, f)})
                op = operating_point(net, beta, temp=temp)
                ics.append(op.ic)
                vces.append(op.vce)
    assert d.worst["ic"]["min"] == pytest.approx(min(ics), rel=1e-12)
    assert d.worst["ic"]["max"] == pytest.approx(max(ics), rel=1e-12)
    assert d.worst["vce"]["min"] == pytest.approx(min(vces), rel=1e-12)
    assert d.worst["vce"]["max"] == pytest.approx(max(vces), rel=1e-12)
    # and the general worst-case routine agrees (and finds IC and VCE monotonic)
    setup = SpreadSetup(network=BiasNetwork("divider", 12.0, **d.network.resistors), rl=1e4)
    w = worst_case(setup, SpreadRanges(**LIMITS))
    for r in ("ic", "vce"):
        assert w[r]["method"] == "vertices"
        assert w[r]["worst_min"] == pytest.approx(d.worst[r]["min"], rel=1e-12)
        assert w[r]["worst_max"] == pytest.approx(d.worst[r]["max"], rel=1e-12)


def test_as_dict_has_the_interface_keys_then_its_own():
    d = design_bias("collector-feedback", 12.0, 1e-3, series="E12", beta_min=100, beta_max=300)
    out = d.as_dict()
    assert list(out) == ["network", "series", "ic", "vce", "beta", "vbe", "worst",
                         "ve", "divider_ratio", "rule", "notes", "warnings"]
    assert set(out["network"]) == {"rb", "rc", "re"}
    assert out["worst"].keys() == {"ic", "vce"} and out["worst"]["ic"].keys() == {"min", "max"}
    json.dumps(out)  # plain floats and strings


def test_ic_band_constrains_the_worst_case():
    d = design_bias("divider", 12.0, 1e-3, series="E24", ic_band=0.3, **LIMITS)
    assert 0.7e-3 <= d.worst["ic"]["min"] and d.worst["ic"]["max"] <= 1.3e-3
    with pytest.raises(InputError, match=r"^ic: .*worst-case IC"):
        design_bias("fixed", 12.0, 1e-3, series="E24", ic_band=0.05, **LIMITS)


def test_toml_text_reads_back_as_the_same_network(tmp_path):
    d = design_bias("divider", 12.0, 1e-3, series="E24", temp=310.0, **LIMITS)
    text = design_toml(d, description='demo "stage"')
    doc = tomllib.loads(text)
    assert doc["network"]["type"] == "divider" and doc["beta"] == d.beta_ref
    p = tmp_path / "design.toml"
    p.write_text(text, encoding="utf-8")
    flat, tables = load_bias_file(p)
    v = merge({}, flat, tables)
    net = BiasNetwork(kind=v["network.type"], vcc=v["network.vcc"], tol=v["tol"],
                      **{k: v[f"network.{k}"] for k in ("r1", "r2", "rc", "re")})
    assert net == d.network
    op = operating_point(net, v["beta"], vbe=v["vbe"], temp=v["temp"], vbe_tc=v["vbe_tc"], beta_tc=v["beta_tc"],
                         vce_sat=v["vce_sat"])
    assert op.ic == pytest.approx(d.ic, rel=1e-12) and op.vce == pytest.approx(d.vce, rel=1e-12)
    assert (v["beta_min"], v["beta_max"], v["temp_min"], v["temp_max"]) == (80.0, 200.0, 250.0, 350.0)


def test_unreachable_targets_name_ic():
    with pytest.raises(InputError, match=r"^ic: .*needs r. = .*outside the resistor range.*no E24 value"):
        design_bias("divider", 12.0, 10.0, beta_min=100, beta_max=300)  # RE = 0.12 ohm
    with pytest.raises(InputError, match=r"^ic: .*no E24 value"):
        design_bias("divider", 12.0, 1e-9, beta_min=100, beta_max=300)  # RE = 1.2 Gohm
    # a fixed-base network over a wide hFE range saturates at some vertex for every choice
    with pytest.raises(InputError, match=r"^ic: no E96 combination.*active region"):
        design_bias("fixed", 12.0, 1e-3, series="E96", beta_min=50, beta_max=1000, tol=0.05)
    # here combinations near 5 mA exist, but each of them saturates at some vertex
    with pytest.raises(InputError, match=r"^ic: the target 5 mA cannot be reached with E96 values that keep the "
                                         r"transistor active at every vertex"):
        design_bias("fixed", 9.0, 5e-3, series="E96", **dict(LIMITS, beta_max=250.0))


def test_bad_input_names_the_value():
    with pytest.raises(InputError, match=r"^vcc: .*not above the emitter voltage"):
        design_bias("divider", 0.3, 1e-3, beta_min=100, beta_max=300)
    with pytest.raises(InputError, match=r"^vcc: "):
        design_bias("divider", 0.6, 1e-3, beta_min=100, beta_max=300)  # VB = 0.76 V above the supply
    with pytest.raises(InputError) as e:
        design_bias("divider", 12.0, 1e-3, beta_min=100, beta_max=300, series="E7")
    assert str(e.value) == "series: unknown series 'E7'; expected one of E12, E24, E48, E96"
    with pytest.raises(InputError, match=r"^vce: "):
        design_bias("divider", 12.0, 1e-3, beta_min=100, beta_max=300, vce=11.0)
    with pytest.raises(InputError, match=r"^vce: "):
        design_bias("collector-feedback", 12.0, 1e-3, beta_min=100, beta_max=300, vce=0.5)
    with pytest.raises(InputError, match=r"^beta_min: "):
        design_bias("divider", 12.0, 1e-3, beta_min=300, beta_max=100)
    with pytest.raises(InputError, match=r"^ic: "):
        design_bias("divider", 12.0, -1e-3, beta_min=100, beta_max=300)
    with pytest.raises(InputError, match=r"^network: "):
        design_bias("emitter-follower", 12.0, 1e-3, beta_min=100, beta_max=300)
    with pytest.raises(InputError, match=r"^tol: "):
        design_bias("divider", 12.0, 1e-3, beta_min=100, beta_max=300, tol=1.5)

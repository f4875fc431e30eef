"""The one schema of bias inputs (devmodels.schema): derived from the dataclasses, one merge rule."""

from __future__ import annotations

import dataclasses

import pytest

import devmodels as dm
from devmodels.dcbias import BiasNetwork
from devmodels.exceptions import InputError
from devmodels.schema import EXTRA, PANELS, flat_keys, keys, merge, table_keys
from devmodels.units import UNITS


@pytest.mark.parametrize("cls", [dm.BipolarBias, dm.MosfetBias, dm.JfetBias, BiasNetwork])
def test_every_dataclass_field_is_a_key(cls):
    ks = keys()
    lib = {k.field for k in ks.values()} | {k.field.split(".")[-1] for k in ks.values()}
    for f in dataclasses.fields(cls):
        if f.name == "device":
            assert "device" in ks
            continue
        assert "schema" in f.metadata, f"{cls.__name__}.{f.name} has no schema metadata"
        assert f.name in lib, f"{cls.__name__}.{f.name} has no key"


def test_keys_are_complete_and_consistent():
    ks = keys()
    for k in ks.values():
        assert k.help and k.panel in PANELS
        assert k.unit in UNITS or k.unit in ("str", "K", "table"), k
        if k.bounds is not None:
            assert 0 < k.bounds.lo < k.bounds.hi, k
    for name, *_ in EXTRA:
        assert name in flat_keys()
    flags = [k.flag for k in ks.values() if k.table is None]
    assert len(flags) == len(set(flags))  # no option means two things at the top level
    assert keys()["lambda"].field == "lambda_" and keys()["two_phi_f"].flag == "--two-phi-f"
    assert keys()["network.type"].flag == "--network"
    assert {"vbe", "pmax", "vceo", "tol", "type", "vcc"} <= set(table_keys("network"))


def test_option_overrides_file_and_units_are_si():
    flat = {"ic": "2mA", "beta": 150, "temp": "27C", "tol": "5%", "beta_tc": "0.5%/K"}
    v = merge({"ic": "1mA", "beta": None}, flat, {})
    assert v["ic"] == 1e-3 and v["beta"] == 150
    assert v["temp"] == pytest.approx(300.15)
    assert v["tol"] == pytest.approx(0.05) and v["beta_tc"] == pytest.approx(0.005)  # % -> fraction


def test_one_place_in_the_file_per_key():
    with pytest.raises(InputError, match="^vbe: given both at the top level and in \\[network\\]"):
        merge({}, {"vbe": "0.7V"}, {"network": {"vbe": "0.68V"}})
    v = merge({"vbe": "0.6"}, {}, {"network": {"vbe": "0.68V"}})
    assert v["vbe"] == 0.6


def test_ranges_and_warnings():
    with pytest.raises(InputError, match="^ic: '1e308' is outside"):
        merge({"ic": "1e308"}, {}, {})
    with pytest.raises(InputError, match="^network: unknown value 'bridge'"):
        merge({"network.type": "bridge"}, {}, {})
    notes = []
    merge({"temp": "27"}, {}, {}, warnings=notes)
    assert notes == ["temp: 27 K is outside 200 K to 500 K; did you mean 27C?"]


def test_stage_network_datasheet_and_tref_keys():
    from devmodels.exceptions import InputError as Err

    net = table_keys("network")
    for name in ("c_in", "c_out", "c_bypass", "c_base", "re_bypassed", "rg1", "rg2", "rd", "rsrc", "rsrc_bypassed"):
        assert name in net and net[name].panel == "stagenet"
    assert net["c_in"].parse("short") == "short" and net["c_in"].parse("4.7uF") == pytest.approx(4.7e-6, rel=1e-15, abs=0)
    with pytest.raises(Err, match="^c_in: "):
        net["c_in"].parse("0F")
    with pytest.raises(Err, match="^re_bypassed: "):
        net["re_bypassed"].parse("short")  # only capacitors may be "short"
    flat = flat_keys()
    assert flat["tref"].parse("25C") == pytest.approx(298.15, rel=1e-15, abs=0)
    assert flat["hfe_table"].parse("100uA:120, 1mA:150") == [[pytest.approx(1e-4, rel=1e-15, abs=0), 120.0],
                                                             [pytest.approx(1e-3, rel=1e-15, abs=0), 150.0]]
    assert flat["hfe_table"].parse([["1mA", 150]]) == [[pytest.approx(1e-3, rel=1e-15, abs=0), 150.0]]
    with pytest.raises(Err, match="^hfe_table: row 2: expected IC:hFE"):
        flat["hfe_table"].parse("1mA:150, 2mA")
    for name in ("ft_at_ic", "ft_at_vce", "c_je", "cob", "cob_at_vcb", "cob_potential", "cob_exponent", "ib"):
        assert flat[name].family == "bipolar" and flat[name].panel == "datasheet"

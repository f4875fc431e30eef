"""TOML bias files (devmodels.biasfile): what is accepted and every way a file is refused."""

from __future__ import annotations

import os

import pytest

from devmodels.biasfile import MAX_BYTES, load_bias_file
from devmodels.exceptions import FileFormatError


def _file(tmp_path, text, name="b.toml", raw=None):
    p = tmp_path / name
    if raw is not None:
        p.write_bytes(raw)
    else:
        p.write_text(text, encoding="utf-8")
    return p


def test_flat_keys_and_network_table(tmp_path):
    p = _file(tmp_path, 'device = "npn"\nbeta = 200\nvce-sat = "0.2V"\ntemp = "27C"\n'
                        '[network]\ntype = "divider"\nvcc = 12\nr1 = "68k"\nr2 = "12k"\nvbe-tc = "-2mV/K"\n')
    flat, tables = load_bias_file(p)
    assert flat == {"device": "npn", "beta": 200, "vce_sat": "0.2V", "temp": "27C"}
    assert tables == {"network": {"type": "divider", "vcc": 12, "r1": "68k", "r2": "12k", "vbe_tc": "-2mV/K"}}


def test_utf8_byte_order_mark_is_accepted(tmp_path):
    p = _file(tmp_path, None, raw=b"\xef\xbb\xbfic = \"1mA\"\nbeta = 100\n")
    assert load_bias_file(p)[0] == {"ic": "1mA", "beta": 100}


@pytest.mark.parametrize("text,needle", [
    ('[netwrok]\ntype = "divider"\n', "unknown table [netwrok]; did you mean [network]?"),
    ("betta = 100\n", "unknown key 'betta'; did you mean 'beta'?"),
    ("z0 = 50\n", "unknown key 'z0'"),
    ('[network]\ntpye = "fixed"\n', "unknown key 'tpye' in [network]; did you mean 'type'?"),
    ("vce_sat = 0.3\nvce-sat = 0.2\n", "'vce_sat' and 'vce-sat' are the same key"),
    ("beta = {a = 1}\n", "beta: expected a number"),
    ("beta = {a = 1}\n", "got a table"),
    ("beta = [1, 2]\n", "got an array"),
    ("beta = true\n", "got a boolean"),
    ("device = 3\n", "device: expected text, got a number"),
    ("network = 5\n", "network: expected a table [network], got a number"),
    ("[network.inner]\nvcc = 1\n", "tables inside [network] are not used"),
    ("ic = [1, \n", "not a valid TOML"),
    ("a = " + "[" * 3000 + "]" * 3000 + "\n", "nested too deeply"),
])
def test_refused_files_say_why(tmp_path, text, needle):
    with pytest.raises(FileFormatError) as exc:
        load_bias_file(_file(tmp_path, text))
    assert needle in str(exc.value) and str(exc.value).startswith(str(tmp_path)), str(exc.value)


def test_not_utf8(tmp_path):
    with pytest.raises(FileFormatError, match="not UTF-8"):
        load_bias_file(_file(tmp_path, None, raw=b"beta = \xff\n"))


def test_only_regular_files_are_read(tmp_path):
    fifo = tmp_path / "pipe.toml"
    os.mkfifo(fifo)  # opening it for reading would block: the reader must not open it
    with pytest.raises(FileFormatError, match="not a regular file"):
        load_bias_file(fifo)
    with pytest.raises(FileFormatError, match="is a directory"):
        load_bias_file(tmp_path)
    with pytest.raises(FileFormatError, match="cannot read"):
        load_bias_file(tmp_path / "missing.toml")


def test_size_limit(tmp_path):
    p = _file(tmp_path, "# " + "x" * MAX_BYTES + "\n")
    with pytest.raises(FileFormatError, match="too large for a bias file"):
        load_bias_file(p)


def test_hfe_table_as_toml_rows(tmp_path):
    # The interface's form of an hFE table: rows [[IC, hFE], ...]; beta at the bias IC is read
    # off the table (at a row's own IC, that row's hFE).
    from devmodels.cli import main

    p = tmp_path / "t.toml"
    p.write_text('ic = "1mA"\nvce = "5V"\nhfe_table = [["100uA", 120], ["1mA", 150], ["10mA", 130]]\n')
    import contextlib
    import io
    import json

    out = io.StringIO()
    with contextlib.redirect_stdout(out):
        assert main(["model", str(p), "--json"]) == 0
    assert json.loads(out.getvalue())["beta"] == 150.0


def test_spec_table_is_read_as_text(tmp_path):
    flat, tables = load_bias_file(_file(tmp_path, 'ic = "1mA"\n[spec]\nav = ">=40"\ngt-db = ">=20dB"\n'
                                                  'ic = [">=0.8mA", "<=1.2mA"]\n'))
    assert flat == {"ic": "1mA"}
    # the form only; the names and comparisons are read by worstcase.collect_specs against the run
    assert tables == {"spec": {"av": ">=40", "gt_db": ">=20dB", "ic": [">=0.8mA", "<=1.2mA"]}}


@pytest.mark.parametrize("text, needle", [
    ('[spec]\nav = 40\n', "spec.av: expected a comparison as text"),
    ('[spec]\nav = [">=1", 2]\n', "spec.av: expected a comparison as text"),
    ('[spec]\nav = []\n', "spec.av: expected a comparison as text"),
    ('[spec]\nav = [' + ", ".join(['">=1"'] * 17) + ']\n', "at most 16"),
    ('[spec.av]\nmin = 40\n', "[spec.av]: tables inside [spec] are not used"),
    ('spec = ">=40"\n', "spec: expected a table [spec]"),
    ('[spce]\nav = ">=40"\n', "unknown table [spce]; did you mean [spec]?"),
    ('[spec]\nav = ">=40"\nav = "<=60"\n', "not a valid TOML"),
])
def test_spec_table_form_is_checked(tmp_path, text, needle):
    with pytest.raises(FileFormatError) as exc:
        load_bias_file(_file(tmp_path, text))
    assert needle in str(exc.value), str(exc.value)

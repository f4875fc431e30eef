"""devmodels design: preferred values, the written bias file read back by the other commands, bad input."""

from __future__ import annotations

import json
import math
import re
import tomllib

import pytest
import typer.main

from devmodels.cli import app, main

from conftest import assert_one_line_error, check_error_rule


# One decade of each series as printed in IEC 60063 (written out here, not taken from devmodels.eseries).
E12 = (10, 12, 15, 18, 22, 27, 33, 39, 47, 56, 68, 82)
E24 = (10, 11, 12, 13, 15, 16, 18, 20, 22, 24, 27, 30, 33, 36, 39, 43, 47, 51, 56, 62, 68, 75, 82, 91)
IEC = {"E12": E12, "E24": E24}

RESISTORS = {"divider": ["r1", "r2", "rc", "re"], "fixed": ["rb", "rc", "re"], "collector-feedback": ["rb", "rc", "re"]}
LIMITS = ["--beta-min", "100", "--beta-max", "300"]


def _in_series(value: float, series: str) -> bool:
    mantissa = value / 10 ** (math.floor(math.log10(value)) - 1)  # 10 <= mantissa < 100
    return any(abs(mantissa - m) <= 1e-9 * m for m in IEC[series]) or abs(mantissa - 100) <= 1e-7


@pytest.mark.parametrize("series", ["E12", "E24"])
@pytest.mark.parametrize("network", list(RESISTORS))
def test_values_are_series_members(run_json, network, series):
    got = run_json("design", "--network", network, "--vcc", "12", "--ic", "1mA", "--series", series, *LIMITS)
    # the interface keys first, then the ones devmodels adds (the rule and the warnings)
    assert list(got) == ["network", "series", "ic", "vce", "beta", "vbe", "worst",
                         "ve", "divider_ratio", "rule", "notes", "warnings"]
    assert list(got["network"]) == RESISTORS[network] and got["series"] == series
    for name, v in got["network"].items():
        assert _in_series(v, series), (name, v)
    # the chosen point is within half a series step of the target (E12: 10.1 %, E24: 4.9 %;
    # half of the ratio 10^(1/n) between neighbours)
    half = math.sqrt(10 ** (1 / len(IEC[series]))) - 1
    assert abs(got["ic"] / 1e-3 - 1) <= half
    w = got["worst"]
    assert set(w) == {"ic", "vce"} and all(set(x) == {"min", "max"} for x in w.values())
    assert w["ic"]["min"] <= got["ic"] <= w["ic"]["max"] and w["vce"]["min"] <= got["vce"] <= w["vce"]["max"]
    assert got["beta"] == 200.0 and got["vbe"] == pytest.approx(0.7)


def test_series_member_check_can_fail():
    assert _in_series(4.7e3, "E12") and _in_series(1e6, "E24") and _in_series(910.0, "E24")
    assert not _in_series(910.0, "E12") and not _in_series(4.8e3, "E24")


@pytest.mark.parametrize("network", list(RESISTORS))
@pytest.mark.parametrize("series", ["E24", "E96"])
def test_written_file_reads_back(run, run_json, tmp_path, network, series):
    out = tmp_path / "q1.toml"
    args = ["design", "--network", network, "--vcc", "15", "--ic", "2mA", "--series", series, *LIMITS,
            "--temp-min", "-20C", "--temp-max", "70C", "--tol", "5", "--out", str(out)]
    got = run_json(*args)
    assert out.is_file()
    op = run_json("bias", str(out))
    assert op["network"] == network and op["region"] == "active"
    assert op["ic"] == pytest.approx(got["ic"], rel=1e-12)
    assert op["vce"] == pytest.approx(got["vce"], rel=1e-12)
    assert op["beta"] == pytest.approx(got["beta"], rel=1e-12) and op["vbe"] == pytest.approx(got["vbe"], rel=1e-12)
    code, text, err = run("gain", str(out), "-f", "1kHz")
    assert code == 0, err
    model = run_json("model", str(out))
    gm = got["ic"] / (1.380649e-23 * 300.0 / 1.602176634e-19)  # gm = IC/VT at 300 K (interface)
    assert model["gm"] == pytest.approx(gm, rel=1e-9)
    # the worst case covers the network's own tolerance corners at the nominal beta
    lo, hi = op["tolerance"]["ic"]
    assert got["worst"]["ic"]["min"] <= lo <= hi <= got["worst"]["ic"]["max"]


def test_vce_target(run_json):
    got = run_json("design", "--network", "divider", "--vcc", "12", "--ic", "1mA", "--vce", "4", "--series", "E96",
                   *LIMITS)
    assert got["vce"] == pytest.approx(4.0, rel=0.05)


def test_pnp(run_json, tmp_path):
    out = tmp_path / "p.toml"
    got = run_json("design", "--device", "pnp", "--network", "divider", "--vcc", "-9", "--ic", "500uA", *LIMITS,
                   "--out", str(out))
    op = run_json("bias", str(out))
    assert op["device"] == "pnp" and op["ic"] == pytest.approx(-got["ic"], rel=1e-12)


def test_out_is_checked_before_computing(run, tmp_path):
    # an unreachable target with an unwritable --out: the --out error comes first
    assert_one_line_error(run, "design", "--network", "divider", "--vcc", "12", "--ic", "100A", *LIMITS, "--out",
                          str(tmp_path / "missing" / "x.toml"), prefix="out:")
    out = tmp_path / "x.toml"
    assert_one_line_error(run, "design", "--network", "divider", "--vcc", "12", "--ic", "100A", *LIMITS, "--out",
                          str(out), prefix="ic:")
    assert not out.exists() and list(tmp_path.iterdir()) == []


def test_existing_file_is_replaced(run_json, tmp_path):
    out = tmp_path / "x.toml"
    out.write_text("old")
    run_json("design", "--network", "fixed", "--vcc", "12", "--ic", "1mA", *LIMITS, "--out", str(out))
    assert "[network]" in out.read_text() and [p.name for p in tmp_path.iterdir()] == ["x.toml"]


def test_limits_from_a_file(run_json, tmp_path):
    f = tmp_path / "limits.toml"
    f.write_text('beta_min = 100\nbeta_max = 300\ntol = "5%"\n[network]\ntype = "divider"\nvcc = 12\n')
    a = run_json("design", str(f), "--ic", "1mA")
    b = run_json("design", "--network", "divider", "--vcc", "12", "--ic", "1mA", *LIMITS, "--tol", "5")
    assert a == b


def test_table_and_note(run, tmp_path):
    out = tmp_path / "t.toml"
    code, text, err = run("design", "--network", "divider", "--vcc", "12", "--ic", "1mA", *LIMITS, "--out", str(out))
    assert code == 0 and "R1" in text and "worst case" in text and "kΩ" in text
    assert err.startswith("devmodels: bias file written to")


def test_json_is_one_object(run, tmp_path):
    code, out, err = run("design", "--network", "divider", "--vcc", "12", "--ic", "1mA", *LIMITS, "--json")
    assert code == 0 and len(out.strip().splitlines()) == 1 and json.loads(out)["series"] == "E24"


def test_help(run):
    code, out, _ = run("design", "--help")
    text = " ".join(out.split())
    assert code == 0
    for part in ("E12|E24|E48|E96", "Target collector current, A", "Supply voltage, V", "%", "FILE.toml"):
        assert part in text, part
    assert "<bool>" not in out and "BOOLEAN" not in out


# --- bad input -------------------------------------------------------------------------------
BASE = ["--network", "divider", "--vcc", "12", "--ic", "1mA", "--beta-min", "100", "--beta-max", "300"]
SINGLE = {"--network", "--vcc", "--ic", "--beta-min", "--beta-max"}
BAD = ["", "0", "-1", "1e308", "1e-308", "nan", "inf", "1,2=x;", "5V", "5A"]


def _design_options():
    cmd = typer.main.get_command(app).commands["design"]
    for p in cmd.params:
        if getattr(p, "is_flag", False) or not p.opts or not p.opts[0].startswith("--") or p.opts[0] == "--help":
            continue
        yield p.opts[0]


@pytest.mark.parametrize("opt", list(_design_options()))
def test_bad_values_of_every_option(opt, capsys, tmp_path, monkeypatch):
    # the rule of tests/test_cli_badinput.py, for this command: exit 2 with one error line, or a clean run
    monkeypatch.chdir(tmp_path)
    for value in BAD:
        base = list(BASE)
        if opt in SINGLE:
            i = base.index(opt)
            del base[i:i + 2]
        args = ["design", *base, opt, value]
        code = main(args)
        out, err = capsys.readouterr()
        check_error_rule(args, code, out, err)


@pytest.mark.parametrize("args,prefix", [
    (["--series", "E7"], "series: unknown series 'E7'"),
    (["--network", "bogus"], "network: unknown bias network"),
    (["--ic", "100A"], "ic: the target 100 A"),
    (["--ic", "1nA"], "ic: the target 1 nA"),
    (["--ic", "-1mA"], "ic:"),
    (["--ic", "5V"], "ic:"),
    (["--vce", "20"], "vce: the target 20 V"),
    (["--vcc", "0.5"], "vcc:"),
    (["--beta-min", "400"], "beta_min: 400 is above beta_max"),
    (["--device", "nmos"], "device: a bias network takes npn or pnp"),
    (["--out", "x.txt"], "out: expected a bias file name ending in .toml"),
    (["--temp-min", "400", "--temp-max", "300"], "temp_min:"),
])
def test_bad_input_names_the_value(run, args, prefix, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    base = list(BASE)
    for opt in args[::2]:
        if opt in SINGLE:
            i = base.index(opt)
            del base[i:i + 2]
    assert_one_line_error(run, "design", *base, *args, prefix=prefix)


@pytest.mark.parametrize("drop,prefix", [("--network", "network: missing"), ("--vcc", "vcc: missing"),
                                         ("--ic", "ic: missing"), ("--beta-max", "beta_max: missing")])
def test_missing_values(run, drop, prefix):
    base = list(BASE)
    i = base.index(drop)
    del base[i:i + 2]
    assert_one_line_error(run, "design", *base, prefix=prefix)


def test_unreachable_target_names_the_reachable_range(run, capsys):
    line = assert_one_line_error(run, "design", *BASE[:4], "--ic", "100A", *BASE[6:], prefix="ic: the target 100 A",
                                 match="the resistor range allows targets from")
    m = re.search(r"from ([\d.]+ \S+) to ([\d.]+ \S+) here", line)
    from devmodels.units import parse_quantity

    lo, hi = (parse_quantity(x, "A", "ic") for x in m.groups())
    # just outside either end: refused for the resistor range; just inside: not for that reason
    for ic, outside in ((lo * 0.99, True), (lo * 1.01, False), (hi * 1.01, True), (hi * 0.99, False)):
        code = main(["design", *BASE[:4], "--ic", f"{ic!r}", *BASE[6:], "--json"])
        err = capsys.readouterr().err
        assert ("outside the resistor range" in err) == outside, (ic, err)
        if outside:
            assert code == 2


# --- the stability rule and the ratings --------------------------------------------------------
WIDE = ["--network", "divider", "--vcc", "9", "--ic", "2mA", "--beta-min", "80", "--beta-max", "250", "--series",
        "E12", "--temp-min", "-40C", "--temp-max", "85C", "--tol", "5"]


def _e12_neighbours(x: float) -> set[float]:
    """The E12 values just below and just above x, from the IEC 60063 decade written out above."""
    members = sorted(m * 10.0 ** d for d in range(-1, 8) for m in E12)
    return {max(m for m in members if m <= x), min(m for m in members if m >= x)}


def test_stability_rule_first_then_ic(run, run_json):
    # ideal values by hand (VE = VCC/10 = 0.9 V, beta 165, IE = 2 mA * 166/165; beta_low = 80 at
    # -40 C with 0.5 %/K = 57.3; I2 = 10 IC / beta_low, VB = 1.6 V): RE = 447.3 ohm, R2 = 4.585 kohm.
    # Rule (common practice, no source): VE about a tenth of VCC and divider current >= 10 IB at the
    # lowest hFE; then IC closest to the target.
    got = run_json("design", *WIDE)
    assert got["network"]["re"] in _e12_neighbours(447.289) == {390.0, 470.0}
    assert got["network"]["r2"] in _e12_neighbours(4585.42) == {3900.0, 4700.0}
    r = got["network"]
    # the rule on the chosen parts, by hand from the reported point: VE = IE RE, VB = VE + VBE
    ie = got["ic"] * (1 + 1 / got["beta"])
    ve = ie * r["re"]
    assert 0.9 / 10 ** (1 / 12) <= ve <= 0.9 * 10 ** (1 / 12)  # within one E12 step of VCC/10
    beta_low = 80 * (1 + 0.005 * (233.15 - 300.0))  # beta_tc 0.5 %/K (the default), lowest at -40 C
    assert (ve + got["vbe"]) / r["r2"] >= 10 * got["ic"] / beta_low
    assert abs(got["ic"] / 2e-3 - 1) <= math.sqrt(10 ** (1 / 12)) - 1
    assert got["worst"]["vce"]["min"] > 0.3  # active at every corner
    code, text, err = run("design", *WIDE)
    assert code == 0 and err == "" and "Stability rule" in text and "rule met" in text


def test_ratings_warn_and_are_written(run, run_json, tmp_path):
    out = tmp_path / "rated.toml"
    nominal = run_json("bias", str(_write(run_json, tmp_path)))
    pmax = 0.99 * nominal["power"]
    code, text, err = run("design", *WIDE, "--pmax", repr(pmax), "--vceo", "8V", "--out", str(out), "--json")
    assert code == 0
    lines = err.strip().splitlines()
    assert lines[0] == f"devmodels: bias file written to {out}"
    warned = [x for x in lines if x.startswith("devmodels: warning: ")]
    assert any(x.startswith("devmodels: warning: power: ") for x in warned)
    assert any(x.startswith("devmodels: warning: vcc: the supply 9 V is above the breakdown rating vceo = 8 V")
               for x in warned)
    # the ratings are in the file, and the bias command reading it gives the same sentences
    doc = tomllib.loads(out.read_text(encoding="utf-8"))
    assert doc["pmax"] == pmax and doc["vceo"] == 8.0
    code, _, err_bias = run("bias", str(out), "--json")
    assert code == 0
    nominal_power = [x for x in err_bias.strip().splitlines() if x.startswith("devmodels: warning: power: ")
                     and "corner" not in x]
    assert nominal_power and nominal_power[0] in warned
    assert [x for x in err_bias.splitlines() if "vceo = 8 V" in x][0] in warned
    # ratings the design keeps: no warning, and the file still holds them
    code, _, err = run("design", *WIDE, "--pmax", "1W", "--vceo", "30V", "--out", str(out), "--json")
    assert code == 0 and "warning" not in err
    assert tomllib.loads(out.read_text(encoding="utf-8"))["vceo"] == 30.0


def _write(run_json, tmp_path):
    path = tmp_path / "plain.toml"
    run_json("design", *WIDE, "--out", str(path))
    return path


def test_json_carries_the_rule_and_the_warnings(run):
    """design --json holds what the table and stderr say: the rule verdict with VE and the
    divider ratio of the chosen parts, and the rating warnings (the same sentences as stderr)."""
    code, out, err = run("design", "--network", "divider", "--vcc", "9", "--ic", "2mA", "--beta-min", "80",
                         "--beta-max", "250", "--series", "E12", "--pmax", "5mW", "--json")
    assert code == 0
    d = json.loads(out)
    assert d["rule"] == "met" and d["notes"] == []
    assert d["warnings"] and all(f"devmodels: warning: {w}" in err for w in d["warnings"])
    # VE = IE RE at the chosen parts' nominal point, about a tenth of the supply (common practice)
    re = d["network"]["re"]
    assert d["ve"] == pytest.approx(d["ic"] * (1 + 1 / d["beta"]) * re, rel=1e-9)
    assert 0.05 < d["ve"] / 9 < 0.15 and d["divider_ratio"] >= 10

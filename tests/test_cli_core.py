"""Command line: model, params, reconfigure, crosscheck, and every error path."""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest

import devmodels as dm
from conftest import assert_one_line_error, cx

EXAMPLES = Path(__file__).resolve().parents[1] / "bias_examples"
BIAS = ["--ic", "1mA", "--vce", "5V", "--beta", "100", "--va", "80V", "--ft", "300MHz", "--cmu", "2pF"]
MODEL_KEYS = {"gm", "r_pi", "ro", "c_pi", "c_mu", "rb", "re", "alpha", "beta", "vt", "f_beta", "ft"}


def test_model_json_keys_and_values(run_json):
    d = run_json("model", *BIAS, "--rb", "50")
    assert MODEL_KEYS <= set(d)
    vt = dm.thermal_voltage(300)
    assert d["gm"] == pytest.approx(1e-3 / vt)
    assert d["ro"] == pytest.approx(80e3)
    assert d["rb"] == 50 and d["ft"] == pytest.approx(300e6)


def test_model_without_va_has_null_ro(run_json):
    d = run_json("model", "--ic", "1mA", "--vce", "5", "--beta", "100")
    assert d["ro"] is None and d["ft"] is None and d["f_beta"] is None


def test_model_table_shows_prefixes(run):
    code, out, err = run("model", *BIAS)
    assert code == 0 and "38.68 mS" in out and "2.585 kΩ" in out


@pytest.mark.parametrize("path", sorted(EXAMPLES.glob("*.toml")))
def test_every_bias_example_runs(run_json, path):
    d = run_json("model", str(path))
    assert d["gm"] > 0 and d["c_pi"] >= 0


def test_option_overrides_file(run_json):
    path = str(EXAMPLES / "vhf_gain_stage.toml")
    a = run_json("model", path)
    b = run_json("model", path, "--ic", "5mA")
    assert b["gm"] == pytest.approx(a["gm"] / 2)


def test_celsius_temperature(run_json):
    d = run_json("model", *BIAS, "--temp", "27C")
    assert d["vt"] == pytest.approx(dm.thermal_voltage(300.15))


def test_params_json_shape(run_json):
    d = run_json("params", *BIAS, "--config", "cb", "--kind", "s", "--freq", "1MHz", "--freq", "100MHz",
                 "--z0", "50,75")
    assert d["config"] == "cb" and d["kind"] == "s" and d["z0"] == [50.0, 75.0]
    assert [p["freq"] for p in d["points"]] == [1e6, 1e8]
    m = dm.HybridPi.from_bias(dm.BipolarBias(ic=1e-3, vce=5, beta=100, va=80, ft=300e6, cmu=2e-12))
    ref = dm.Stage(m, "cb").two_port([1e6, 1e8], "s", (50, 75)).data
    for p, r in zip(d["points"], ref):
        got = np.array([[cx(p["11"]), cx(p["12"])], [cx(p["21"]), cx(p["22"])]])
        np.testing.assert_allclose(got, r, rtol=1e-12)


def test_params_given_two_port_without_freq(run_json):
    d = run_json("params", "--params", "h=2.6k,2e-4,100,12u", "--kind", "y")
    assert len(d["points"]) == 1 and d["points"][0]["freq"] is None
    # y11 = 1/h11, y21 = h21/h11 (standard h -> y table)
    assert cx(d["points"][0]["11"]) == pytest.approx(1 / 2600)
    assert cx(d["points"][0]["21"]) == pytest.approx(100 / 2600)


def test_params_given_complex_values(run_json):
    d = run_json("params", "--params", "y=1.2e-3+4e-4j,-1e-6j,40e-3-2e-3j,2e-5+1e-5j", "--kind", "y")
    assert cx(d["points"][0]["11"]) == pytest.approx(1.2e-3 + 4e-4j)


def test_reconfigure_json(run_json):
    d = run_json("reconfigure", "--params", "h=2.6k,2e-4,100,12u", "--from", "ce", "--to", "cc")
    # hfc = -(1 + hfe), hic = hie exactly for the CE -> CC change (classic table, from memory)
    p = d["points"][0]
    assert d["config"] == "cc" and d["kind"] == "h"
    assert cx(p["21"]) == pytest.approx(-101)
    assert cx(p["11"]) == pytest.approx(2600)


def test_crosscheck_command(run_json, run):
    d = run_json("crosscheck", *BIAS, "--rb", "40")
    assert d["max_rel_error"] < d["tolerance"] == 1e-9 and d["checked"] == 90
    code, out, _ = run("crosscheck", *BIAS, "--max-error", "1e-30")
    assert code == 1 and "FAIL" in out


def test_json_never_contains_nan_or_inf(run):
    code, out, _ = run("params", "--ic", "1mA", "--vce", "5", "--beta", "100", "--kind", "abcd", "--json")
    assert code == 0
    assert "NaN" not in out and "Infinity" not in out
    json.loads(out)


ERRORS = [
    (["model", "--ic", "-1mA", "--vce", "5", "--beta", "100"], "ic"),
    (["model", "--ic", "5V", "--vce", "5", "--beta", "100"], "ic"),
    (["model", "--ic", "1mA", "--vce", "5", "--beta", "100", "--temp", "hot"], "temp"),
    (["model", "--ic", "1mA", "--vce", "5"], "beta"),
    (["model", "--ic", "1mA", "--vce", "0.1", "--beta", "100"], "vce"),
    (["model", "--ic", "1mA", "--vce", "5", "--beta", "100", "--ft", "10GHz", "--cmu", "2pF"], "ft"),
    (["model", "--ic", "1mA", "--vce", "5", "--beta", "-3"], "beta"),
    (["model", "--ic", "1xyz", "--vce", "5", "--beta", "100"], "ic"),
    (["model", "--ic", "1mA", "--vce", "5", "--beta", "100", "--device", "triode"], "device"),
    (["model", "nonexistent.toml"], "nonexistent.toml"),
    (["params", "--ic", "1mA", "--vce", "5", "--beta", "100", "--kind", "q"], "kind"),
    (["params", "--ic", "1mA", "--vce", "5", "--beta", "100", "--config", "cx"], "config"),
    (["params", "--ic", "1mA", "--vce", "5", "--beta", "100", "--kind", "z"], "Z parameters do not exist"),
    (["params", "--ic", "1mA", "--vce", "5", "--beta", "100", "--freq", "-1MHz"], "freq"),
    (["params", "--ic", "1mA", "--vce", "5", "--beta", "100", "--z0", "-50"], "z0"),
    (["params", "--params", "h=1,2,3"], "params"),
    (["params", "--params", "w=1,2,3,4"], "params"),
    (["params", "--params", "h=1,2,abc,4"], "params"),
    (["params", "--params", "h=2.6k,2e-4,100,12u", "--ic", "1mA"], "either"),
    (["params"], "bias point"),
    (["reconfigure", "--params", "h=2.6k,2e-4,100,12u", "--from", "ce", "--to", "cs"], "cannot reconfigure"),
    (["reconfigure", "--params", "z=1k,1k,1k,1k", "--from", "ce", "--to", "cb"], "needs the Y parameters"),
    (["crosscheck", "--ic", "1mA", "--vce", "5", "--beta", "100", "--max-error", "-1"], "max-error"),
    (["model", "--no-such-option"], "no-such-option"),
]


@pytest.mark.parametrize("args,needle", ERRORS)
def test_error_paths_exit_2_with_one_line(run, args, needle):
    assert_one_line_error(run, *args, match=needle)


@pytest.mark.parametrize("kind,why", [("z", "Y is singular: det Y = 0"), ("g", "y22 = 0"), ("h", "y11 = 0")])
def test_missing_parameter_set_is_named_first_in_plain_words(run, kind, why):
    # A MOSFET without capacitances at 1 kHz: y11 = 0 (an open gate) and y22 = 0 with no
    # lambda, so Y is singular: Z, G and H do not exist (definitions of Z = Y^-1, h11 = 1/y11,
    # g22 = 1/y22; Pozar, Microwave Engineering, table 4.2, from memory).  The message
    # starts with the missing value's name and uses no solver words.
    line = assert_one_line_error(run, "params", "--device", "nmos", "--id", "1mA", "--vds", "2", "--vov",
                                 "0.2", "-k", kind,
                                 prefix=f"{kind}: the {kind.upper()} parameters do not exist for this two-port")
    assert f"({why}, at 1000 Hz; converting Y to {kind.upper()})" in line and "pivot" not in line


def test_malformed_and_unknown_toml(run, tmp_path):
    bad = tmp_path / "bad.toml"
    bad.write_text("ic = [1, \n")
    code, _, err = run("model", str(bad))
    assert code == 2 and "not a valid TOML" in err and len(err.strip().splitlines()) == 1
    unknown = tmp_path / "unknown.toml"
    unknown.write_text('ic = "1mA"\nvce = 5\nbeta = 100\nbetta = 3\n')
    code, _, err = run("model", str(unknown))
    assert code == 2 and "unknown key 'betta'" in err
    wrong_unit = tmp_path / "unit.toml"
    wrong_unit.write_text('ic = "1mV"\nvce = 5\nbeta = 100\n')
    code, _, err = run("model", str(wrong_unit))
    assert code == 2 and "ic" in err


def test_console_script_runs_as_a_process():
    import subprocess
    import sys

    p = subprocess.run([sys.executable, "-m", "devmodels", "model", "--ic", "1mA", "--vce", "5", "--beta",
                        "100", "--json"], capture_output=True, text=True)
    assert p.returncode == 0 and json.loads(p.stdout)["gm"] > 0
    p = subprocess.run([sys.executable, "-m", "devmodels", "model", "--ic", "-1mA", "--vce", "5", "--beta",
                        "100"], capture_output=True, text=True)
    assert p.returncode == 2 and "Traceback" not in p.stderr and len(p.stderr.strip().splitlines()) == 1


def test_params_and_crosscheck_read_a_touchstone_file(run, run_json, tmp_path):
    # A sweep written as Touchstone 1.1 and read back (through scikit-rf's parser) gives the
    # same H parameters as the stage computed directly, within the file's 17 digits.
    out = tmp_path / "stage.s2p"
    code, _, err = run("sweep", *BIAS, "--start", "1MHz", "--stop", "1GHz", "--points", "7", "--out", str(out))
    assert code == 0, err
    d = run_json("params", "--touchstone", str(out), "--kind", "h")
    m = dm.HybridPi.from_bias(dm.BipolarBias(ic=1e-3, vce=5, beta=100, va=80, ft=300e6, cmu=2e-12))
    f = [p["freq"] for p in d["points"]]
    ref = dm.Stage(m, "ce").two_port(f, "h").data
    for p, r in zip(d["points"], ref):
        got = np.array([[cx(p["11"]), cx(p["12"])], [cx(p["21"]), cx(p["22"])]])
        np.testing.assert_allclose(got, r, rtol=1e-9)
    x = run_json("crosscheck", "--touchstone", str(out))
    assert x["points"] == 7 and x["max_rel_error"] < 1e-9
    assert_one_line_error(run, "params", "--touchstone", str(out), "--ic", "1mA", match="either")


def test_ratings_warn_once_on_stderr(run, tmp_path):
    # Safety: a bias point above the power rating or VCEO is warned about (once per command,
    # even when three configurations are built), and --json output stays one clean object.
    hot = ["--ic", "50mA", "--vce", "10V", "--beta", "100", "--pmax", "250mW", "--vceo", "8V"]
    code, out, err = run("model", *hot, "--json")
    assert code == 0 and json.loads(out)["power"] == pytest.approx(0.5)
    lines = err.strip().splitlines()
    assert len(lines) == 2 and all(s.startswith("devmodels: warning:") for s in lines)
    assert "500 mW" in lines[0] and "pmax = 250 mW" in lines[0] and "burn" in lines[0]
    assert "vceo = 8 V" in lines[1]
    code, out, err = run("compare", *hot, "--json")
    assert code == 0 and len(err.strip().splitlines()) == 2
    code, out, err = run("model", "--ic", "1mA", "--vce", "5V", "--beta", "100", "--pmax", "250mW")
    assert code == 0 and err == ""  # within the rating: no warning
    fet = str(EXAMPLES / "fet" / "nmos_lna_input.toml")  # 4 mA at 1.2 V: 4.8 mW
    code, out, err = run("model", fet, "--pmax", "1mW", "--json")
    assert code == 0 and "4.8 mW" in err and len(err.strip().splitlines()) == 1
    assert_one_line_error(run, "model", "--ic", "1mA", "--vce", "5", "--beta", "100", "--pmax", "-1",
                          match="pmax")


@pytest.mark.parametrize("text,unit,value", [
    ("1mA", "A", 1e-3), ("1 mA", "A", 1e-3), ("2.2k", "Ohm", 2200.0), ("2.2kohm", "Ohm", 2200.0),
    ("2.2kΩ", "Ohm", 2200.0), ("300MHz", "Hz", 3e8), ("2pF", "F", 2e-12), ("25u", "", 25e-6),
    ("1µA", "A", 1e-6), ("1μA", "A", 1e-6), ("1Mohm", "Ohm", 1e6), ("1 mohm", "Ohm", 1e-3),
    ("4.7R", "Ohm", 4.7), ("1e-3", "", 1e-3), ("-1mA", "A", -1e-3),
])
def test_si_prefixed_values(text, unit, value):
    # SI prefixes as in the BIPM SI Brochure (9th ed., table 7); "R" as the ohm sign is the
    # resistor marking of IEC 60062 (from memory).
    from devmodels.units import parse_quantity

    assert parse_quantity(text, unit, "x") == pytest.approx(value, rel=1e-12)


# --- values at the edges, as the terminated analysis shows them -------------------------------
def test_gain_with_an_ideal_source_says_gt_and_ga_do_not_apply(run, run_json):
    # Rs = 0: the source's available power is unlimited, so GT = GA = 0 (Gonzalez sec. 2.6,
    # from memory): null in JSON with a note, "n/a (Rs = 0)" in the table, never "unbounded".
    path = str(EXAMPLES / "vhf_gain_stage.toml")
    d = run_json("gain", path, "--rs", "0", "-f", "1MHz")
    p = d["points"][0]
    assert p["gt_db"] is None and p["ga_db"] is None and p["gp_db"] is not None
    assert p["notes"]["gt_db"].startswith("ideal source") and p["notes"]["ga_db"] == p["notes"]["gt_db"]
    code, out, _ = run("gain", path, "--rs", "0", "-f", "1MHz")
    row = next(line for line in out.splitlines() if "1 MHz" in line and "dB" in line)
    assert code == 0 and row.count("n/a (Rs = 0)") == 2 and "unbounded" not in row
    # with a source resistance the same command has numbers and no notes about the source
    q = run_json("gain", path, "--rs", "50", "-f", "1MHz")["points"][0]
    assert q["gt_db"] is not None and "gt_db" not in q["notes"]


def test_gain_of_an_exactly_unilateral_two_port_shows_its_mag(run, run_json):
    # y12 = 0, g11 = 0.4 mS, g22 = 0.1 mS, |y21| = 40 mS: MAG = |y21|^2 / (4 g11 g22) = 1e4
    # (the unilateral maximum, Gonzalez sec. 3.2, from memory) = 40 dB; K stays unbounded.
    args = ("gain", "--params", "y=0.4m+j0.2m,0,40m,0.1m", "--rs", "1k", "--rl", "10k")
    p = run_json(*args)["points"][0]
    assert p["msg_db"] == pytest.approx(40.0, abs=1e-9) and p["msg_is_mag"] is True and p["k"] is None
    assert "unilateral maximum" in p["notes"]["msg_db"]
    code, out, _ = run(*args)
    assert code == 0 and "40.00 dB MAG" in out and "unilateral maximum" in out


def test_gain_verdict_on_the_stability_boundary_does_not_follow_rounding(run, run_json):
    # No C_mu and no ro: S12 = 0 and |S22| = 1, so mu = 1 exactly (Edwards and Sinsky 1992,
    # from memory); the computed mu is 1 or 1 + 2e-16.  Both points are marginal.
    args = ("gain", "--ic", "1mA", "--vce", "5", "--beta", "100", "--ft", "300MHz", "--rs", "600", "--rl", "10k",
            "-f", "1kHz", "-f", "10MHz")
    pts = run_json(*args)["points"]
    assert [p["stability"] for p in pts] == ["marginal", "marginal"]
    assert [p["unconditionally_stable"] for p in pts] == [False, False]
    code, out, _ = run(*args)
    assert code == 0 and out.count("1 (marginal)") == 2 and "2 of 2 points are marginal" in out


def test_help_panel_titles_keep_their_brackets(run):
    # typer prints panel titles as rich markup, where "[network]" reads as a style tag and
    # vanishes; every command's help must show the title as written (schema.PANELS).
    import importlib

    import typer.main

    from devmodels.schema import PANELS

    names = sorted(typer.main.get_command(importlib.import_module("devmodels.cli.app").app).commands)
    assert "gain" in names
    with_panel = 0
    for name in names:
        code, out, _ = run(name, "--help")
        assert code == 0, name
        assert "( table)" not in out, name
        if "Stage network in the AC analysis" in out:
            with_panel += 1
            assert PANELS["stagenet"] in out, name  # "... ([network] table)"
    assert with_panel >= 5  # the stage commands: gain, compare, sweep, spread, ...
    # help asked twice in one process is not escaped twice
    code, out, _ = run("gain", "--help")
    assert PANELS["stagenet"] in out and "\\[network]" not in out


def _relation(out: str, element: str) -> str:
    """The relation column of a model table row."""
    row = next(line for line in out.splitlines() if line.startswith(f"│ {element} "))
    return row.split("│")[3].strip()


def test_model_tells_defaults_from_given_values(run):
    # C_mu, rb default to 0 and C_pi is 0 without fT: none of them was given, so none is
    # labelled "given"; values that were given are.
    code, out, _ = run("model", "--ic", "1mA", "--vce", "5", "--beta", "100")
    assert code == 0
    assert _relation(out, "C_mu") == "not given: 0" and _relation(out, "rb") == "not given: 0"
    assert "no fT given: 0" in _relation(out, "C_pi") and "no VA given" in _relation(out, "ro")
    code, out, _ = run("model", *BIAS, "--rb", "50")
    assert _relation(out, "C_mu") == "given" and _relation(out, "rb") == "given"
    assert _relation(out, "C_pi") == "gm / (2 pi fT) - C_mu"
    code, out, _ = run("model", "--device", "nmos", "--id", "1mA", "--vds", "2", "--vov", "0.2", "--cgs", "1p")
    assert code == 0 and _relation(out, "Cgs") == "given" and _relation(out, "Cgd") == "not given: 0"


@pytest.mark.parametrize("args", [("sweep", "--out"), ("gain", "--plot")])
def test_a_folder_as_output_is_named_a_folder(run, tmp_path, args):
    # A folder given where a file is expected is reported as a folder, not as a file type.
    line = assert_one_line_error(run, args[0], "--ic", "1mA", "--vce", "5", "--beta", "100", args[1], str(tmp_path),
                                 prefix=f"{args[1][2:]}: cannot write {str(tmp_path)!r}: it is a directory")
    assert "file type" not in line and "ending in" not in line


@pytest.mark.parametrize("typed,meant", [("npx", "npn"), ("pnx", "pnp"), ("nmso", "nmos"), ("pjfte", "pjfet")])
def test_device_suggestion_prefers_the_common_start(run, tmp_path, typed, meant):
    # "npx" is as close to "pnp" as to "npn" by difflib's ratio (two matching letters each);
    # a slip is rarely in the first letter, so the name that starts alike is suggested
    # (common practice, no source).  The same from a bias file and from the option.
    assert_one_line_error(run, "model", "--device", typed, "--ic", "1mA", "--vce", "5", "--beta", "100",
                          match=f"(did you mean {meant}?)")
    f = tmp_path / "dev.toml"
    f.write_text(f'device = "{typed}"\nic = "1mA"\nvce = 5\nbeta = 100\n')
    assert_one_line_error(run, "model", str(f), match=f"(did you mean {meant}?)")


def test_compare_counts_an_open_output_as_the_highest_impedance(run_json):
    # No C_mu and no ro: the CE and CB outputs are open (zout null, shown "open"), the CC
    # output is re-like.  An open port is infinitely high, so CC cannot win "highest output
    # impedance"; CE and CB tie there (no winner); CC keeps "lowest" (Gray and Meyer ch. 3,
    # from memory: an ideal transconductor's output resistance is infinite).
    d = run_json("compare", "--ic", "1mA", "--vce", "5", "--beta", "100", "--rs", "0")
    assert d["ce"]["zout"] is None and d["cb"]["zout"] is None and d["cc"]["zout"] is not None
    assert d["best"]["output_impedance_high"] is None and d["best"]["output_impedance_low"] == "cc"
    # with ro every output is finite; the CB output, ro (1 + gm (Rs || r_pi)) behind a source
    # resistance, is the highest (Gray and Meyer ch. 3, from memory)
    d = run_json("compare", "--ic", "1mA", "--vce", "5", "--beta", "100", "--va", "80", "--rs", "600")
    assert d["ce"]["zout"] is not None and d["cb"]["zout"] is not None
    assert d["best"]["output_impedance_high"] == "cb"


def test_model_shows_lead_inductances(run_json, run):
    """Lead inductances given as options reach the model and are reported under their keys
    (0 when not given); the table names them only when one is there."""
    d = run_json("model", "--ic", "1mA", "--vce", "5", "--beta", "100", "--l-b", "2nH", "--l-e", "0.5n")
    assert (d["l_b"], d["l_c"], d["l_e"]) == (2e-9, 0.0, 0.5e-9)
    f = run_json("model", "--device", "nmos", "--id", "1mA", "--vds", "5", "--vov", "0.2", "--l-s", "1nH")
    assert (f["l_g"], f["l_d"], f["l_s"]) == (0.0, 0.0, 1e-9)
    code, out, _ = run("model", "--ic", "1mA", "--vce", "5", "--beta", "100", "--l-b", "2nH")
    assert code == 0 and "l_b / l_c / l_e" in out and "2 nH" in out
    code, out, _ = run("model", "--ic", "1mA", "--vce", "5", "--beta", "100")
    assert code == 0 and "l_b" not in out


def test_one_command_built_alone_equals_the_whole_group(capsys):
    """main() builds only the command it runs (start-up time); its help, options and usage
    line must be those of the same command inside the whole group."""
    from devmodels.cli import _command, _command_names, app

    names = _command_names()
    assert names == {info.name for info in app.registered_commands} and len(names) >= 16
    group = _command()
    for name in sorted(names):
        alone = _command(name)
        inside = group.commands[name]
        assert [p.opts for p in alone.params] == [p.opts for p in inside.params], name
        assert [p.help for p in alone.params if hasattr(p, "help")] == \
               [p.help for p in inside.params if hasattr(p, "help")], name
        assert type(alone) is type(inside), name


def test_bare_numbers_outside_the_usual_range_warn_with_a_hint(run):
    """--ft 300 (300 Hz, most likely meant as 300 MHz) and a 20 nF gate capacitance are taken,
    with a warning naming the usual range (common practice, no source); usual values do not warn."""
    code, _, err = run("model", "--ic", "1mA", "--vce", "5", "--beta", "100", "--ft", "300")
    assert code == 0 and "devmodels: warning: ft: 300 Hz is outside the usual" in err and "did you mean 300MHz?" in err
    code, _, err = run("model", "--device", "nmos", "--id", "1mA", "--vds", "5", "--vov", "0.2", "--cgs", "20nF")
    assert code == 0 and "devmodels: warning: cgs: 20 nF is outside the usual" in err and "did you mean" not in err
    code, _, err = run("model", "--ic", "1mA", "--vce", "5", "--beta", "100", "--ft", "300MHz", "--cmu", "2pF")
    assert code == 0 and "warning" not in err

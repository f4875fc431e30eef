"""Bad input for every option of every command: one error line (exit 2) or a clean run.

The cases are generated from the command line itself (every option that takes a value, of
every command registered on the app), so a new option is covered the day it is added.  Each
option gets the same odd values: empty, 0, negative, huge, tiny, NaN, infinity, odd syntax and
a unit that contradicts it.  The outcome must be one of

* exit 2, exactly one line on stderr starting ``devmodels: error:``, no traceback, no Python
  warning, nothing on stdout; or
* exit 0 (exit 1 only for ``crosscheck``'s failed comparison), no ``nan`` / ``inf`` on stdout,
  every stderr line from devmodels itself.
"""

from __future__ import annotations

from pathlib import Path

import pytest
import typer.main

from conftest import check_error_rule, NAN_INF
from devmodels.cli import app, main

EXAMPLES = Path(__file__).resolve().parent.parent / "bias_examples"
BJT = str(EXAMPLES / "vhf_gain_stage.toml")
FET = str(EXAMPLES / "fet" / "nmos_lna_input.toml")

#: A valid invocation of each command; the option under test is added to it.
BASE: dict[str, list[str]] = {
    "model": [BJT],
    "params": [BJT, "-f", "1MHz"],
    "reconfigure": ["--params", "h=2.6k,2e-4,100,12u", "--from", "ce", "--to", "cb"],
    "crosscheck": [BJT, "-c", "ce", "-f", "1MHz"],
    "gain": [BJT, "-f", "1MHz"],
    "compare": [BJT],
    "sweep": [BJT, "-n", "5", "--noise"],  # --noise: its options (--flicker-corner, --gamma-n) get real runs
    "bias": ["--network", "divider", "--vcc", "12", "--r1", "68k", "--r2", "12k", "--rc", "4.7k", "--re", "1k",
             "--beta", "200"],
    "spread": ["--ic", "1mA", "--vce", "5", "--beta-min", "80", "--beta-max", "200", "-n", "200", "--seed", "1"],
    "cascade": ["--stage", f"ce:{BJT}", "--stage", f"cb:{BJT}"],
    "connect": ["--how", "series-series", "--net", f"ce:{BJT}", "--net", "shunt:47"],
    "formula": [BJT, "-r", "av", "--rl", "4.7k"],
    "noise": [BJT, "-f", "1MHz"],
    "design": ["--network", "divider", "--vcc", "12", "--ic", "1mA", "--beta-min", "100", "--beta-max", "300"],
    "extract": [str(EXAMPLES / "vhf_gain_stage_ce.s2p")],
    "solve": [BJT, "--vary", "rdeg", "--target", "av=20", "--rl", "4.7k"],
}
#: Options that the base already gives once and that may be given once only (replaced, not added).
SINGLE = {"--params", "--from", "--to", "--how", "--network", "--vcc", "--r1", "--r2", "--rc", "--re", "--beta",
          "--ic", "--vce", "--beta-min", "--beta-max", "--seed", "--rl", "-r", "--result"}

BAD = ["", "0", "-1", "1e308", "1e-308", "nan", "inf", "1,2=x;", "WRONG_UNIT"]


def _wrong_unit(metavar: str | None) -> str:
    return "5A" if metavar and "VOLT" in metavar.upper() else "5V"


def _options():
    group = typer.main.get_command(app)
    for name, cmd in group.commands.items():
        for p in cmd.params:
            if getattr(p, "is_flag", False) or not p.opts or not p.opts[0].startswith("--"):
                continue
            if p.opts[0] == "--help":
                continue
            yield name, p.opts[0], p.metavar


CASES = list(_options())


def _args(cmd: str, opt: str, value: str) -> list[str]:
    base = list(BASE[cmd])
    fet_option = opt in ("--id", "--vds", "--vov", "--kn", "--lambda", "--gamma", "--vsb", "--two-phi-f", "--cgs",
                         "--cgd", "--csb", "--cdb", "--rg", "--idss", "--vp")
    if fet_option and cmd not in ("spread", "bias"):
        base = [FET if a == BJT else a for a in base]
        base = ["cs" if a == "ce" else a for a in base]
    if opt in SINGLE and opt in base:
        i = base.index(opt)
        del base[i:i + 2]
    return base + [opt, value]


def test_every_command_is_covered():
    assert {c for c, _, _ in CASES} == set(BASE)
    assert len(CASES) > 300


@pytest.mark.parametrize("cmd,opt,metavar", CASES, ids=[f"{c}{o}" for c, o, _ in CASES])
def test_bad_values(cmd, opt, metavar, capsys, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)  # --out / --plot with odd names stay here
    for raw in BAD:
        value = _wrong_unit(metavar) if raw == "WRONG_UNIT" else raw
        args = _args(cmd, opt, value)
        code = main(args)
        out, err = capsys.readouterr()
        crosscheck_fail = code == 1 and cmd == "crosscheck" and "FAIL" in out
        check_error_rule(args, code, out, err, ok_codes=(0, 1) if crosscheck_fail else (0,))
        if code != 2:
            assert all(line.startswith("devmodels: ") for line in err.strip().splitlines() if line), (args, err)


def test_error_names_the_option_value(capsys):
    # spot checks of the message itself (the generated test only checks the form)
    for args, start in [
        (["model", "--ic", "1e308", "--vce", "5", "--beta", "100"], "ic: '1e308' is outside"),
        (["sweep", BJT, "--stop", "1e308"], "stop: '1e308' is outside"),
        (["model", FET, "--cgs", "1e308"], "cgs: '1e308' is outside"),
        (["gain", BJT, "--z0", "1e-308"], "z0: '1e-308' is outside"),
        (["model", BJT, "--temp", "1e-308"], "temp: '1e-308' is outside"),
        (["model", FET, "--vov", "1e-308"], "vov: '1e-308' is outside"),
        (["gain", BJT, "--rs", "50+j"], "rs: the imaginary part"),
        (["formula", BJT, "--rs", "50+j10"], "rs: the formula takes a resistance"),
        (["sweep", BJT, "-n", "1e23"], "points: expected a whole number"),
        (["model", BJT, "--device", ""], "device: expected one of npn, pnp, nmos, pmos, njfet, pjfet"),
    ]:
        code = main(args)
        err = capsys.readouterr().err
        assert code == 2 and err.startswith(f"devmodels: error: {start}"), (args, err)


def test_unknown_option_points_at_the_command_help(capsys):
    assert main(["gain", BJT, "--bogus"]) == 2
    err = capsys.readouterr().err
    assert err.strip().endswith("(see 'devmodels gain --help')") and len(err.strip().splitlines()) == 1


def test_no_warning_before_an_error(capsys):
    # 27 K warns on its own; with a bad --vce as well, the error line is all stderr holds
    assert main(["model", "--ic", "1mA", "--vce", "5", "--beta", "100", "--temp", "27"]) == 0
    err = capsys.readouterr().err
    assert err == "devmodels: warning: temp: 27 K is outside 200 K to 500 K; did you mean 27C?\n"
    assert main(["model", "--ic", "1mA", "--vce", "5x", "--beta", "100", "--temp", "27"]) == 2
    err = capsys.readouterr().err
    assert len(err.splitlines()) == 1 and err.startswith("devmodels: error: vce:")


def test_markup_in_file_names_is_shown_literally(tmp_path, capsys):
    p = tmp_path / "[bold red]stage.toml"
    p.write_text('ic = "1mA"\nvce = 5\nbeta = 100\n')
    assert main(["cascade", "--stage", f"ce:{p}", "--stage", f"cb:{p}"]) == 0
    assert "[bold red]stage.toml" in capsys.readouterr().out


def test_long_bad_values_are_shortened(capsys):
    assert main(["model", "--ic", "1m" + "x" * 5000, "--vce", "5", "--beta", "100"]) == 2
    err = capsys.readouterr().err
    assert len(err) < 300 and "5,002 characters" in err


FILE_BAD = ['""', "0", "-1", "1e308", "1e-308", "nan", "inf", "true", "{a = 1}", "[1, 2]", '"1,2=x;"', '"5V"']


def _file_cases():
    from devmodels.schema import keys

    for k in keys().values():
        yield k.table, k.name


@pytest.mark.parametrize("table,key", list(_file_cases()), ids=lambda x: str(x))
def test_bad_values_in_bias_files(table, key, capsys, tmp_path):
    # The same rule for every key of the bias file, at the top level or in [network].
    if table == "network":
        head, cmd = 'beta = 100\n[network]\ntype = "divider"\nvcc = 12\nr1 = "68k"\nr2 = "12k"\nrc = "4.7k"\n', "bias"
    elif key in ("beta_min", "beta_max", "beta_typ", "temp_min", "temp_max", "tol"):
        head, cmd = 'ic = "1mA"\nvce = 5\nbeta_min = 80\nbeta_max = 200\n', "spread"
    elif key in ("id", "vds", "vov", "kn", "lambda", "gamma", "vsb", "two_phi_f", "cgs", "cgd", "csb", "cdb", "rg",
                 "idss", "vp"):
        head, cmd = 'device = "njfet"\nid = "1mA"\nvds = 5\nidss = "4mA"\nvp = -2\n', "gain"
    else:
        head, cmd = 'ic = "1mA"\nvce = 5\nbeta = 100\n', "gain"
    lines = [ln for ln in head.splitlines() if not ln.startswith(f"{key} =")]
    for value in FILE_BAD:
        body = list(lines)
        where = body.index("[network]") + 1 if table == "network" else 0
        body.insert(where, f"{key} = {value}")
        p = tmp_path / "bad.toml"
        p.write_text("\n".join(body) + "\n")
        args = [cmd, str(p)] + (["-n", "100", "--seed", "1"] if cmd == "spread" else [])
        code = main(args)
        out, err = capsys.readouterr()
        assert "Traceback" not in err and "internal error" not in err and "Warning:" not in err, (body, err)
        if code == 2:
            one_line = len(err.strip().splitlines()) == 1 and err.startswith("devmodels: error: ")
            assert one_line and out == "", (body, err)
        else:
            assert code == 0 and not NAN_INF.search(out), (body, code, err)

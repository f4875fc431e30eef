"""Command ``extract``: fit of the small-signal model to a Touchstone file, through the command line.

The reference data are made here, independently of the package: the model's nodal equations
are stamped by hand in numpy over the terminals and the internal input node (b' or g'), the
internal node eliminated with numpy.linalg.solve and the common terminal's row and column
deleted; S follows from Y by S = (1 - z0 Y)(1 + z0 Y)^-1 for equal real references, and the
file is written by scikit-rf.  Element values are invented.
"""

from __future__ import annotations

import json
import math
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
import skrf

from devmodels.cli import main
from twoport_files import Nodal, write_touchstone, y_to_s

BJT = {"gm": 0.08, "r_pi": 1500.0, "c_pi": 30e-12, "c_mu": 1.5e-12, "rb": 80.0, "ro": 30e3}
FET = {"gm": 0.03, "cgs": 0.8e-12, "cgd": 0.1e-12, "ro": 5e3, "rg": 12.0}
#: Port 1, port 2 and common terminal of each configuration (b/g: input, c/d: output, e/s: common).
PORTS = {"ce": ("b", "c", "e"), "cb": ("e", "c", "b"), "cc": ("b", "e", "c"),
         "cs": ("b", "c", "e"), "cg": ("e", "c", "b"), "cd": ("b", "e", "c")}
FREQ = np.logspace(6, math.log10(3e9), 121)        # 1 MHz to 3 GHz; the hybrid-pi's fT is about 400 MHz


def nodal_y(el: dict, freq: np.ndarray, config: str) -> np.ndarray:
    """Y (F, 2, 2) of the model by its own nodal equations.

    Nodes b, c, e and the internal input node bi (the FET: g, d, s, g'), with rb (rg) from b
    to bi, r_pi (none for a FET) and C_pi (cgs) from bi to e, C_mu (cgd) from bi to c, ro from
    c to e and the source gm V(bi, e) from c to e.
    """
    w = 2 * np.pi * np.asarray(freq, dtype=float)
    rb = el.get("rb", el.get("rg"))
    c_in, c_fb = el.get("c_pi", el.get("cgs")), el.get("c_mu", el.get("cgd"))
    g_in = 1 / el["r_pi"] if "r_pi" in el else 0.0
    net = Nodal(["b", "c", "e", "bi"], w.size)
    net.branch("b", "bi", 1 / rb)
    net.branch("bi", "e", g_in + 1j * w * c_in)
    net.branch("bi", "c", 1j * w * c_fb)
    net.branch("c", "e", 1 / el["ro"])
    net.vccs("c", "e", "bi", "e", el["gm"])        # gm V(bi, e) flows from c to e inside the device
    p1, p2, _ = PORTS[config]
    return net.two_port(p1, p2, ["bi"])






def device_file(folder: Path, config: str = "ce", freq: np.ndarray = FREQ, name: str = "dut") -> Path:
    el = FET if config in ("cs", "cg", "cd") else BJT
    return write_touchstone(folder, f"{name}_{config}", freq, y_to_s(nodal_y(el, freq, config)))


def run(capsys, *args) -> tuple[int, str, str]:
    code = main([str(a) for a in args])
    out, err = capsys.readouterr()
    return code, out, err


def strict_json(text: str) -> dict:
    """The JSON object; NaN / Infinity in it fail the test."""
    def refuse(c):
        raise AssertionError(f"non-finite JSON constant {c}")
    return json.loads(text, parse_constant=refuse)


def assert_one_error(code: int, out: str, err: str, start: str) -> None:
    lines = err.strip().splitlines()
    assert code == 2 and out == "", (code, out, err)
    assert len(lines) == 1 and lines[0].startswith(f"devmodels: error: {start}"), err
    assert "Traceback" not in err and "Warning:" not in err


# --- round trip --------------------------------------------------------------------------------

@pytest.mark.parametrize("config", ["ce", "cb", "cc", "cs", "cg", "cd"])
def test_round_trip_recovers_every_element(tmp_path, capsys, config):
    path = device_file(tmp_path, config)
    code, out, err = run(capsys, "extract", path, "--config", config, "--json")
    assert code == 0 and err == "", err
    d = strict_json(out)
    true = FET if config in ("cs", "cg", "cd") else BJT
    assert set(d["elements"]) == set(true) and set(d["uncertainty"]) == set(true)
    for k, v in true.items():
        assert d["elements"][k] == pytest.approx(v, rel=1e-6, abs=0), k
        assert d["uncertainty"][k] is not None and 0 <= d["uncertainty"][k] < 1e-6 * v, k
    assert 0 <= d["rms_error"] < 1e-9
    assert d["config"] == config and d["points"] == FREQ.size and d["warnings"] == []


def test_default_config_is_ce_and_the_table_shows_every_element(tmp_path, capsys):
    path = device_file(tmp_path, "ce")
    code, out, err = run(capsys, "extract", path)
    assert code == 0 and err == "", err
    for name, shown in [("gm", "80 mS"), ("r_pi", "1.5 kΩ"), ("c_pi", "30 pF"), ("c_mu", "1.5 pF"), ("rb", "80 Ω"),
                        ("ro", "30 kΩ")]:
        row = next(line for line in out.splitlines() if f" {name} " in line)
        assert shown in row, (name, row)
    assert "rms error" in out and "CE" in out
    assert not any(w in out.lower() for w in ("nan", " inf"))


def test_a_held_element_stays_at_its_value(tmp_path, capsys):
    path = device_file(tmp_path, "ce")
    code, out, err = run(capsys, "extract", path, "--fix", "gm=80mS", "--fix", "rb=80", "--json")
    assert code == 0 and err == "", err
    d = strict_json(out)
    assert d["elements"]["gm"] == pytest.approx(0.08, rel=1e-15) and d["uncertainty"]["gm"] == 0
    assert d["elements"]["rb"] == pytest.approx(80.0, rel=1e-15) and d["uncertainty"]["rb"] == 0
    assert sorted(d["fixed"]) == ["gm", "rb"]
    assert d["elements"]["c_mu"] == pytest.approx(BJT["c_mu"], rel=1e-6)


def test_held_at_a_wrong_value_moves_the_others(tmp_path, capsys):
    # the option reaches the fit: a gm held 10 % high leaves a misfit the free elements cannot remove
    path = device_file(tmp_path, "ce")
    code, out, _ = run(capsys, "extract", path, "--fix", "gm=88mS", "--json")
    assert code == 0
    d = strict_json(out)
    assert d["elements"]["gm"] == pytest.approx(0.088, rel=1e-15)
    assert d["rms_error"] > 1e-4


def test_the_package_sweep_of_a_bias_file_fits_back_to_its_model(tmp_path, capsys):
    # another command's output as the measurement: sweep's S of a bias file, then extract, then model
    example = Path(__file__).resolve().parent.parent / "bias_examples" / "vhf_gain_stage.toml"
    s2p = tmp_path / "swept.s2p"
    code, _, err = run(capsys, "sweep", example, "--start", "1MHz", "--stop", "3GHz", "-n", "61", "--out", s2p)
    assert code == 0, err
    code, out, err = run(capsys, "model", example, "--json")
    assert code == 0, err
    m = strict_json(out)
    code, out, err = run(capsys, "extract", s2p, "--parasitics", "rex", "--json")
    assert code == 0 and err == "", err
    e = strict_json(out)["elements"]
    for k in ("gm", "r_pi", "c_pi", "c_mu", "rb", "ro", "rex"):
        assert e[k] == pytest.approx(m[k], rel=1e-6, abs=0), k


# --- warnings and values that do not exist -------------------------------------------------------

def test_library_warnings_are_single_lines_on_stderr(tmp_path, capsys):
    # pads that the data do not hold: no value determined (null in JSON), a warning line each
    path = device_file(tmp_path, "ce")
    code, out, err = run(capsys, "extract", path, "--parasitics", "c_pad_in,c_pad_out", "--json")
    assert code == 0
    d = strict_json(out)
    assert d["uncertainty"]["c_pad_in"] is None and d["uncertainty"]["c_pad_out"] is None
    lines = err.strip().splitlines()
    assert lines and all(line.startswith("devmodels: warning: ") for line in lines), err
    assert any(line.startswith("devmodels: warning: c_pad_in:") for line in lines), err
    assert "ExtractionWarning" not in err and "Warning:" not in err and "warnings.warn" not in err
    assert len(lines) == len(set(lines))
    # the table names the undetermined value instead of a number
    code, out, _ = run(capsys, "extract", path, "--parasitics", "c_pad_in,c_pad_out")
    assert code == 0 and "not determined" in out


def test_a_band_below_ft_warns_about_rb(tmp_path, capsys):
    path = device_file(tmp_path, "ce", np.logspace(6, 8, 41), name="low")
    code, out, err = run(capsys, "extract", path, "--json")
    assert code == 0
    strict_json(out)
    assert any(line.startswith("devmodels: warning: rb:") for line in err.splitlines()), err


def test_no_python_warning_display_in_a_fresh_process(tmp_path):
    path = device_file(tmp_path, "ce", np.logspace(6, 8, 41), name="low")
    proc = subprocess.run([sys.executable, "-W", "always", "-c", "import sys; from devmodels.cli import main; "
                           "sys.exit(main(sys.argv[1:]))", "extract", str(path), "--parasitics", "rex,c_pad_in"],
                          capture_output=True, text=True, timeout=600)
    assert proc.returncode == 0, proc.stderr
    assert proc.stderr.strip(), "expected the library's warnings"
    assert all(line.startswith("devmodels: warning: ") for line in proc.stderr.strip().splitlines()), proc.stderr


def test_consistency_check_with_ic(tmp_path, capsys):
    path = device_file(tmp_path, "ce")
    code, out, err = run(capsys, "extract", path, "--ic", "2mA", "--temp", "300K", "--json")
    assert code == 0 and err == "", err
    c = strict_json(out)["consistency"]
    vt = 1.380649e-23 * 300 / 1.602176634e-19
    assert c["gm_ideal"] == pytest.approx(2e-3 / vt, rel=1e-9)
    assert c["ideality"] == pytest.approx((2e-3 / vt) / 0.08, rel=1e-6)
    assert c["re_excess"] == pytest.approx(1 / 0.08 - vt / 2e-3, rel=1e-6)
    code, out, _ = run(capsys, "extract", path, "--ic", "2mA")
    assert code == 0 and "ideality" in out and "excess emitter resistance" in out


# --- bias file -------------------------------------------------------------------------------------

def test_out_writes_a_bias_file_the_other_commands_read(tmp_path, capsys):
    path = device_file(tmp_path, "ce")
    dest = tmp_path / "fitted.toml"
    code, out, err = run(capsys, "extract", path, "--out", dest, "--vce", "5V", "--json")
    assert code == 0 and err.strip().splitlines() == [f"devmodels: bias file written to {dest}"], err
    fitted = strict_json(out)["elements"]
    assert dest.is_file()
    code, out, err = run(capsys, "model", dest, "--json")
    assert code == 0, err
    m = strict_json(out)
    for k in ("gm", "r_pi", "c_mu"):
        assert m[k] == pytest.approx(fitted[k], rel=1e-6, abs=0), k
    assert m["vce"] == pytest.approx(5.0)
    for k in ("c_pi", "rb", "ro"):
        assert m[k] == pytest.approx(fitted[k], rel=1e-6, abs=0), k


def test_out_needs_vce(tmp_path, capsys):
    path = device_file(tmp_path, "ce")
    dest = tmp_path / "fitted.toml"
    assert_one_error(*run(capsys, "extract", path, "--out", dest), "vce: missing")
    assert not dest.exists()


def test_destination_is_checked_before_the_fit(tmp_path, capsys):
    # a file that cannot be fitted: the error is the destination's, so it came first
    bad = _ring_slot(tmp_path)
    assert_one_error(*run(capsys, "extract", bad, "--out", tmp_path / "nowhere" / "x.toml", "--vce", "5"), "out:")
    assert_one_error(*run(capsys, "extract", bad, "--plot", tmp_path / "nowhere" / "x.png"), "plot:")
    assert_one_error(*run(capsys, "extract", bad, "--out", tmp_path / "x.txt", "--vce", "5"), "out:")


def test_plot_is_written(tmp_path, capsys):
    path = device_file(tmp_path, "ce")
    dest = tmp_path / "fit.png"
    code, out, err = run(capsys, "extract", path, "--plot", dest)
    assert code == 0 and f"plot written to {dest}" in err, err
    assert dest.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


# --- bad input ------------------------------------------------------------------------------------

def _ring_slot(folder: Path) -> Path:
    from skrf.data import ring_slot

    ring_slot.write_touchstone(filename="ring_slot", dir=str(folder))
    return folder / "ring_slot.s2p"


def test_a_passive_network_is_refused(tmp_path, capsys):
    assert_one_error(*run(capsys, "extract", _ring_slot(tmp_path)), "file: not a transistor")


def test_a_one_port_file_is_refused(tmp_path, capsys):
    s = y_to_s(nodal_y(BJT, FREQ, "ce"))[:, :1, :1]
    path = write_touchstone(tmp_path, "input", FREQ, s)
    code, out, err = run(capsys, "extract", path)
    assert_one_error(code, out, err, "touchstone:")
    assert "two-port" in err


def test_one_frequency_is_refused(tmp_path, capsys):
    path = device_file(tmp_path, "ce", np.array([1e6]), name="single")
    code, out, err = run(capsys, "extract", path)
    assert_one_error(code, out, err, "file: 1 frequency")


def test_a_missing_file_is_refused(tmp_path, capsys):
    assert_one_error(*run(capsys, "extract", tmp_path / "none.s2p"), "touchstone:")


@pytest.mark.parametrize("args,start", [
    (["--fix", "gm"], "fix: expected NAME=VALUE"),
    (["--fix", "gm="], "fix: expected NAME=VALUE"),
    (["--fix", "=40mS"], "fix: expected NAME=VALUE"),
    (["--fix", "beta=100"], "fix: 'beta' is not an element of the ce fit"),
    (["--fix", "rex=2"], "fix: 'rex' is not an element"),
    (["--fix", "gm=40mA"], "fix gm:"),
    (["--fix", "gm=-40mS"], "fix gm: expected a value > 0"),
    (["--fix", "gm=0"], "fix gm: expected a value > 0"),
    (["--fix", "gm=nan"], "fix gm:"),
    (["--fix", "c_mu=1e308"], "fix c_mu:"),
    (["--fix", "gm=40mS", "--fix", "gm=41mS"], "fix: gm is given twice"),
    (["--fix", "gm=1", "--fix", "r_pi=1", "--fix", "c_pi=1p", "--fix", "c_mu=1p", "--fix", "rb=1", "--fix", "ro=1"],
     "fix: every element is held"),
    (["--parasitics", "rex,,rcx"], "parasitics:"),
    (["--parasitics", "lead"], "parasitics: unknown element 'lead'"),
    (["--config", "cx"], "config:"),
    (["--config", "cs", "--ic", "1mA"], "ic:"),
    (["--config", "cs", "--out", "x.toml", "--vce", "5"], "out:"),
    (["--ic", "0"], "ic:"),
    (["--ic", "1V"], "ic:"),
    (["--temp", "-5"], "temp:"),
    (["--device", "nmos"], "device:"),
    (["--plot", "x.jpg"], "plot:"),
])
def test_bad_options_are_one_line(tmp_path, capsys, monkeypatch, args, start):
    monkeypatch.chdir(tmp_path)
    path = device_file(tmp_path, "ce", np.logspace(6, 9, 7), name="short")
    assert_one_error(*run(capsys, "extract", path, *args), start)
    assert list(tmp_path.glob("x.*")) == []


def test_importing_the_command_line_leaves_the_fit_libraries_alone():
    code = ("import sys, devmodels, devmodels.cli; "
            "print(sorted(m for m in ('scipy', 'matplotlib', 'skrf', 'sympy') if m in sys.modules))")
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=600)
    assert proc.returncode == 0 and proc.stdout.strip() == "[]", (proc.stdout, proc.stderr)

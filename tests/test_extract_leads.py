"""Lead inductances in the extraction (devmodels.extract) and the transit-time fit of several files.

The reference data are made here, independently of the package's netlist engine: the packaged
hybrid-pi's nodal equations are stamped by hand in numpy over the terminals b, c, e and the
inner nodes (bl, cl, el behind the lead inductances L_b, L_c, L_e; bi = b' behind rb; ei = e'
behind rex), an inductor stamping 1/(jwL) and a capacitor jwC (the nodal admittance method;
from memory), the inner nodes eliminated with numpy.linalg.solve and the common terminal's row
and column deleted.  S follows from Y by S = (1 - z0 Y)(1 + z0 Y)^-1 for equal real
references (the definition of S; from memory), and the file is written by scikit-rf.
Element values are invented.
"""

from __future__ import annotations

import json
import math
import warnings
from pathlib import Path

import numpy as np
import pytest

import devmodels as dm
from devmodels.cli import main
from devmodels.exceptions import InputError
from devmodels.extract import ExtractionWarning, bias_toml, extract
from twoport_files import Nodal, noisy, write_touchstone, y_to_s

LEADS = ("rex", "l_b", "l_c", "l_e")
TRUE = {"gm": 0.08, "r_pi": 1500.0, "c_pi": 30e-12, "c_mu": 1.5e-12, "rb": 80.0, "ro": 30e3, "rex": 2.0,
        "l_b": 1.5e-9, "l_c": 0.8e-9, "l_e": 0.6e-9}
PORTS = {"ce": ("b", "c", "e"), "cb": ("e", "c", "b"), "cc": ("b", "e", "c")}
FREQ = np.logspace(6, 10, 201)                       # 1 MHz to 10 GHz; fT about 400 MHz


def nodal_y(el: dict, freq: np.ndarray, config: str = "ce") -> np.ndarray:
    """Y (F, 2, 2) of the packaged hybrid-pi by its own nodal equations (module docstring)."""
    w = 2 * np.pi * np.asarray(freq, dtype=float)
    net = Nodal(["b", "c", "e", "bl", "cl", "el", "bi", "ei"], w.size)
    net.branch("b", "bl", 1 / (1j * w * el["l_b"]))
    net.branch("c", "cl", 1 / (1j * w * el["l_c"]))
    net.branch("e", "el", 1 / (1j * w * el["l_e"]))
    net.branch("bl", "bi", 1 / el["rb"])
    net.branch("el", "ei", 1 / el["rex"])
    net.branch("bi", "ei", 1 / el["r_pi"] + 1j * w * el["c_pi"])
    net.branch("bi", "cl", 1j * w * el["c_mu"])
    net.branch("cl", "ei", 1 / el["ro"])
    net.vccs("cl", "ei", "bi", "ei", el["gm"])     # gm V(bi, ei) from node cl to node ei
    p1, p2, _ = PORTS[config]
    return net.two_port(p1, p2, net.nodes[3:])








def fit(source, config="ce", parasitics=LEADS, **kw):
    with warnings.catch_warnings():
        warnings.simplefilter("error", RuntimeWarning)
        return extract(source, config, parasitics=parasitics, **kw)


def run(capsys, *args) -> tuple[int, str, str]:
    code = main([str(a) for a in args])
    out, err = capsys.readouterr()
    return code, out, err


def assert_one_error(code: int, out: str, err: str, start: str) -> None:
    lines = err.strip().splitlines()
    assert code == 2 and out == "", (code, out, err)
    assert len(lines) == 1 and lines[0].startswith(f"devmodels: error: {start}"), err
    assert "Traceback" not in err


# --- round trip ------------------------------------------------------------------------------

@pytest.mark.parametrize("config", ["ce", "cb", "cc"])
def test_leads_recovered_without_noise(tmp_path, config):
    path = write_touchstone(tmp_path, f"packaged_{config}", FREQ, y_to_s(nodal_y(TRUE, FREQ, config)))
    res = fit(path, config)
    assert res.warnings == () and res.plausible
    for k, v in TRUE.items():
        assert res.elements[k] == pytest.approx(v, rel=1e-6, abs=0), k
        assert res.uncertainty[k] < 1e-6 * v, k
    assert set(res.as_dict()["elements"]) == set(TRUE)


def test_leads_within_their_uncertainty_with_noise(tmp_path):
    """0.5 % noise: every element within 3 of its reported standard uncertainties."""
    s = noisy(y_to_s(nodal_y(TRUE, FREQ)), 0.005, seed=11)
    res = fit(write_touchstone(tmp_path, "noisy", FREQ, s))
    for k, v in TRUE.items():
        u = res.uncertainty[k]
        assert 0 < u < 0.2 * v, k
        assert abs(res.elements[k] - v) <= 3 * u, (k, res.elements[k], v, u)
    assert 0.004 < res.rms_error < 0.006


def mp_y(el: dict, f: float, config: str):
    """The same nodal equations solved by mpmath at 50 digits (mpmath): Y (2 x 2) as complex numbers."""
    import mpmath as mp

    mp.mp.dps = 50
    w, j = 2 * mp.pi * mp.mpf(f), mp.mpc(0, 1)
    order = ["b", "c", "e", "bl", "cl", "el", "bi", "ei"]
    ix = {n: i for i, n in enumerate(order)}
    G = mp.zeros(8, 8)

    def branch(a, b, y):
        i, k = ix[a], ix[b]
        G[i, i] += y
        G[k, k] += y
        G[i, k] -= y
        G[k, i] -= y

    v = {k: mp.mpf(x) for k, x in el.items()}
    for t in "bce":
        branch(t, t + "l", 1 / (j * w * v["l_" + t]))
    branch("bl", "bi", 1 / v["rb"])
    branch("el", "ei", 1 / v["rex"])
    branch("bi", "ei", 1 / v["r_pi"] + j * w * v["c_pi"])
    branch("bi", "cl", j * w * v["c_mu"])
    branch("cl", "ei", 1 / v["ro"])
    for row, sign in (("cl", 1), ("ei", -1)):
        G[ix[row], ix["bi"]] += sign * v["gm"]
        G[ix[row], ix["ei"]] -= sign * v["gm"]
    p1, p2, _ = PORTS[config]
    keep, inner = [ix[p1], ix[p2]], list(range(3, 8))
    sub = lambda rows, cols: mp.matrix([[G[r, c] for c in cols] for r in rows])  # noqa: E731
    y = sub(keep, keep) - sub(keep, inner) * sub(inner, inner) ** -1 * sub(inner, keep)
    return np.array([[complex(y[r, c]) for c in range(2)] for r in range(2)])


@pytest.mark.parametrize("config", list(PORTS))
def test_engine_with_inductors_against_mpmath(config):
    """The package's engine (lead inductors stamped 1/(jwL), Kron reduction) against mpmath at 50
    digits, every real and imaginary part, from 1 MHz (inductors of about 200 S) to 10 GHz."""
    from devmodels.extract import model_y

    f = FREQ[::20]
    got = model_y(TRUE, f, config)
    for k, fk in enumerate(f):
        ref = mp_y(TRUE, fk, config)
        for part in (np.real, np.imag):
            assert part(got[k]) == pytest.approx(part(ref), rel=1e-12, abs=0), (fk, part)


def test_a_lead_inductance_the_band_does_not_reach_is_named():
    """Up to 20 MHz, 0.8 nH in the collector is 0.1 ohm against ro: not determined, and said so."""
    f = np.logspace(6, math.log10(2e7), 80)
    s = noisy(y_to_s(nodal_y(TRUE, f)), 0.005, seed=5)
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        res = fit(dm.TwoPort(f, s, "s"), parasitics=("rex", "l_b", "l_c", "l_e"))
    assert any(str(w.message).startswith("l_c: ") and w.category is ExtractionWarning for w in caught)
    named = [w for w in res.warnings if w.startswith("l_c: ")]
    assert named and ("not determined" in named[0] or "poorly determined" in named[0]
                      or "hardly depend" in named[0]), res.warnings
    assert not math.isfinite(res.uncertainty["l_c"]) or res.uncertainty["l_c"] > 0.25 * res.elements["l_c"]


def test_leads_off_unless_asked():
    s = dm.TwoPort(FREQ, y_to_s(nodal_y(TRUE, FREQ)), "s")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ExtractionWarning)
        res = extract(s, parasitics=("rex",))
    assert not any(k.startswith("l_") for k in res.elements)
    assert res.rms_error > 1e-3                     # the leads are in the data but not in the model
    with pytest.raises(InputError, match="parasitics: unknown element 'l_g'"):
        extract(s, parasitics=("l_g",))


FET = {"gm": 0.03, "cgs": 0.8e-12, "cgd": 0.1e-12, "ro": 5e3, "rg": 12.0, "rsx": 1.5, "l_g": 0.7e-9,
       "l_d": 0.5e-9, "l_s": 0.2e-9}
FET_PORTS = {"cs": ("g", "d", "s"), "cg": ("s", "d", "g"), "cd": ("g", "s", "d")}


def fet_nodal_y(el: dict, freq: np.ndarray, config: str) -> np.ndarray:
    """Y (F, 2, 2) of the packaged FET by its own nodal equations: L_g, L_d, L_s from g, d, s to
    gl, dl, sl; rg from gl to gi (g'); rsx from sl to si (s'); cgs gi-si, cgd gi-dl, ro dl-si and
    gm V(gi, si) from dl to si."""
    w = 2 * np.pi * np.asarray(freq, dtype=float)
    net = Nodal(["g", "d", "s", "gl", "dl", "sl", "gi", "si"], w.size)
    for t in "gds":
        net.branch(t, t + "l", 1 / (1j * w * el["l_" + t]))
    net.branch("gl", "gi", 1 / el["rg"])
    net.branch("sl", "si", 1 / el["rsx"])
    net.branch("gi", "si", 1j * w * el["cgs"])
    net.branch("gi", "dl", 1j * w * el["cgd"])
    net.branch("dl", "si", 1 / el["ro"])
    net.vccs("dl", "si", "gi", "si", el["gm"])
    p1, p2, _ = FET_PORTS[config]
    return net.two_port(p1, p2, net.nodes[3:])


@pytest.mark.parametrize("config", ["cs", "cg", "cd"])
def test_fet_leads_recovered(tmp_path, config):
    f = np.logspace(7, math.log10(3e10), 201)                      # fT about 5 GHz
    path = write_touchstone(tmp_path, f"fet_{config}", f, y_to_s(fet_nodal_y(FET, f, config)))
    res = fit(path, config, parasitics=("rsx", "l_g", "l_d", "l_s"))
    assert res.warnings == () and res.plausible
    for k, v in FET.items():
        assert res.elements[k] == pytest.approx(v, rel=1e-6, abs=0), k
    assert res.model().l_g == pytest.approx(FET["l_g"], rel=1e-6, abs=0)


# --- the bias file carries them to every command ---------------------------------------------

def test_bias_file_with_leads_reproduces_the_fit(tmp_path):
    from devmodels.biasfile import load_bias_file
    from devmodels.models import HybridPi
    from devmodels.stage import Stage

    res = fit(dm.TwoPort(FREQ, y_to_s(nodal_y(TRUE, FREQ)), "s"))
    path = tmp_path / "fit.toml"
    path.write_text(bias_toml(res, vce=5.0))
    flat, _ = load_bias_file(path)
    bias = dm.BipolarBias(**{k: v for k, v in flat.items() if k not in ("description",)})
    m = HybridPi.from_bias(bias)
    for k in ("l_b", "l_c", "l_e", "rex"):
        assert getattr(m, k) == pytest.approx(TRUE[k], rel=1e-6, abs=0), k
    y = Stage(m, "ce").two_port(FREQ, "y").data
    assert np.allclose(y, nodal_y(TRUE, FREQ), rtol=1e-5, atol=0)


def test_extract_out_then_gain_and_params_read_the_leads(tmp_path, capsys):
    src = write_touchstone(tmp_path, "packaged", FREQ, y_to_s(nodal_y(TRUE, FREQ)))
    dest = tmp_path / "fitted.toml"
    code, out, err = run(capsys, "extract", src, "--parasitics", "rex,l_b,l_c,l_e", "--out", dest, "--vce", "5V",
                         "--json")
    assert code == 0, err
    fitted = json.loads(out)["elements"]
    assert fitted["l_b"] == pytest.approx(TRUE["l_b"], rel=1e-6, abs=0)
    assert "l_b = " in dest.read_text()
    # the S parameters of the bias file at 2 GHz: the hand-stamped solution's
    code, out, err = run(capsys, "params", dest, "--kind", "s", "--freq", "2GHz", "--json")
    assert code == 0, err
    assert s_of(json.loads(out)) == pytest.approx(y_to_s(nodal_y(TRUE, np.array([2e9])))[0].ravel(), rel=1e-5)
    # an option overrides the file's value
    code, out, err = run(capsys, "params", dest, "--kind", "s", "--freq", "2GHz", "--l-b", "2nH", "--json")
    assert code == 0, err
    assert s_of(json.loads(out)) == pytest.approx(
        y_to_s(nodal_y(dict(fitted, l_b=2e-9), np.array([2e9])))[0].ravel(), rel=1e-5)


def s_of(params_json: dict) -> np.ndarray:
    """s11, s12, s21, s22 of the first point of ``params --json``."""
    p = params_json["points"][0]
    return np.array([complex(*p[k]) for k in ("11", "12", "21", "22")])


@pytest.mark.parametrize("value", ["-1nH", "1nF", "1H", "nan", "1n H x"])
def test_bad_lead_inductance_is_one_line(capsys, value):
    assert_one_error(*run(capsys, "params", "--ic", "1mA", "--vce", "5", "--beta", "100", "--l-b", value), "l_b:")


# --- several files: tau_F and C_je from fT against IC ------------------------------------------

TAU, C_JE, C_MU = 250e-12, 4e-12, 1.5e-12
ICS = (0.5e-3, 1e-3, 2e-3, 5e-3)


def law_files(folder: Path, ics=ICS) -> list[Path]:
    """One file per IC, its elements from the exact law 1/(2 pi fT) = tau_F + (C_je + C_mu) VT/IC
    (Gray, Hurst, Lewis and Meyer, ch. 1; from memory) with gm = IC/VT, C_pi = gm/(2 pi fT) - C_mu."""
    vt = dm.thermal_voltage(300.0)
    out = []
    for i in ics:
        gm = i / vt
        ft = 1 / (2 * math.pi * (TAU + (C_JE + C_MU) * vt / i))
        el = dict(TRUE, gm=gm, r_pi=120 / gm, c_mu=C_MU, c_pi=gm / (2 * math.pi * ft) - C_MU)
        out.append(write_touchstone(folder, f"at_{i * 1e6:.0f}uA", FREQ, y_to_s(nodal_y(el, FREQ))))
    return out


def test_several_files_fit_tau_f_and_c_je(tmp_path, capsys):
    files = law_files(tmp_path)
    ic_args = [a for i in ICS for a in ("--ic", f"{i * 1e3}mA")]
    code, out, err = run(capsys, "extract", *files, *ic_args, "--parasitics", ",".join(LEADS), "--json")
    assert code == 0 and err == "", err
    d = json.loads(out)
    t = d["transit_time"]
    assert t["tau_f"] == pytest.approx(TAU, rel=1e-6, abs=0)
    assert t["c_je"] == pytest.approx(C_JE, rel=1e-6, abs=0)
    assert t["c_total"] == pytest.approx(C_JE + C_MU, rel=1e-6, abs=0)
    assert t["points"] == 4 and t["ic"] == pytest.approx(list(ICS), rel=1e-12)
    assert [f["file"] for f in d["files"]] == [str(p) for p in files]
    assert d["files"][0]["consistency"]["ideality"] == pytest.approx(1.0, rel=1e-6)
    code, out, err = run(capsys, "extract", *files[:2], "--ic", "0.5mA", "--ic", "1mA", "--parasitics",
                         ",".join(LEADS))
    assert code == 0 and "Transit time" in out and "tau_F" in out, err


@pytest.mark.parametrize("nfiles,ics,extra,start", [
    (1, ["1mA"], ["--transit-time"], "transit-time: the fit of tau_F and C_je needs files at two"),
    (2, ["1mA"], [], "ic: expected one collector current per file"),
    (2, [], [], "ic: expected one collector current per file"),
    (2, ["1mA", "2mA", "3mA"], [], "ic: expected one collector current per file"),
    (1, ["1mA", "2mA"], [], "ic: expected one collector current for one file"),
    (2, ["1mA", "1mA"], [], "ft_at_ic: the fit of tau_F"),
    (2, ["1mA", "2mA"], ["--out", "x.toml", "--vce", "5"], "out: written for one file"),
    (2, ["1mA", "2mA"], ["--config", "cs"], "ic:"),
])
def test_several_files_bad_input_is_one_line(tmp_path, capsys, monkeypatch, nfiles, ics, extra, start):
    monkeypatch.chdir(tmp_path)
    files = law_files(tmp_path, ICS[:2])[:nfiles]
    args = [a for i in ics for a in ("--ic", i)]
    assert_one_error(*run(capsys, "extract", *files, *args, *extra), start)
    assert list(tmp_path.glob("x.*")) == []


def test_a_lead_inductance_held_on_the_command_line(tmp_path, capsys):
    src = write_touchstone(tmp_path, "packaged", FREQ, y_to_s(nodal_y(TRUE, FREQ)))
    code, out, err = run(capsys, "extract", src, "--parasitics", "rex,l_b,l_c,l_e", "--fix", "l_b=1.5nH", "--json")
    assert code == 0, err
    d = json.loads(out)
    assert d["fixed"] == ["l_b"] and d["uncertainty"]["l_b"] == 0.0
    assert d["elements"]["l_e"] == pytest.approx(TRUE["l_e"], rel=1e-6, abs=0)
    assert_one_error(*run(capsys, "extract", src, "--fix", "l_b=1nH"), "fix: 'l_b' is not an element")
    assert_one_error(*run(capsys, "extract", src, "--parasitics", "l_b", "--fix", "l_b=1nF"), "fix l_b:")

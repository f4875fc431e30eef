"""Extraction of the hybrid-pi from measured two-port parameters (devmodels.extract).

The reference data are made here, independently of the package: the hybrid-pi's nodal
equations are written out in numpy below (stamped by hand over the nodes b, c, e, b', the
internal node b' eliminated with numpy.linalg.solve, the common terminal's row and column
deleted), S follows from Y by S = (1 - Yn)(1 + Yn)^-1 with Yn = z0 Y (the definition of S
for equal real references; from memory), and the file is written by scikit-rf.  Element
values are invented.
"""

from __future__ import annotations

import json
import math
import subprocess
import sys
import warnings
from pathlib import Path

import numpy as np
import pytest

import devmodels as dm
from devmodels.exceptions import FileFormatError, InputError
from devmodels.extract import (ExtractionWarning, bias_consistency, bias_toml, direct_estimates, extract,
                               model_y, plot_fit, transit_time)
from twoport_files import Nodal, noisy

import skrf  # noqa: E402

TRUE = {"gm": 0.08, "r_pi": 1500.0, "c_pi": 30e-12, "c_mu": 1.5e-12, "rb": 80.0, "ro": 30e3}
PORTS = {"ce": ("b", "c", "e"), "cb": ("e", "c", "b"), "cc": ("b", "e", "c")}


def nodal_y(el: dict, freq: np.ndarray, config: str = "ce") -> np.ndarray:
    """Y (F, 2, 2) of the hybrid-pi by its own nodal equations (independent of the package)."""
    w = 2 * np.pi * np.asarray(freq, dtype=float)
    net = Nodal(["b", "c", "e", "bi"] if el["rb"] else ["b", "c", "e"], w.size)  # bi: the internal base b'
    if el["rb"]:
        net.branch("b", "bi", 1 / el["rb"])
    else:                                             # no rb: b' is the terminal b
        net.ix["bi"] = net.ix["b"]
    net.branch("bi", "e", 1 / el["r_pi"] + 1j * w * el["c_pi"])
    net.branch("bi", "c", 1j * w * el["c_mu"])
    net.branch("c", "e", 1 / el["ro"])
    net.vccs("c", "e", "bi", "e", el["gm"])          # gm V(b'e) from the collector node to the emitter node
    p1, p2, _ = PORTS[config]
    return net.two_port(p1, p2, net.nodes[3:])


def y_to_s(y: np.ndarray, z0: float = 50.0) -> np.ndarray:
    """S of Y at the real reference z0 (both ports)."""
    one = np.eye(2)
    yn = z0 * y
    return (one - yn) @ np.linalg.inv(one + yn)


def write_s2p(tmp_path: Path, name: str, freq: np.ndarray, s: np.ndarray) -> Path:
    """A Touchstone file written by scikit-rf."""
    net = skrf.Network(frequency=skrf.Frequency.from_f(freq, unit="Hz"), s=s, z0=50)
    out = tmp_path / name
    net.write_touchstone(filename=str(out.with_suffix("")), dir=None)
    path = out.with_suffix(f".s{s.shape[1]}p")
    assert path.exists()
    return path




FREQ = np.logspace(6, math.log10(3e9), 201)        # 1 MHz to 3 GHz; fT = 400 MHz


def _quiet_extract(*args, **kw):
    with warnings.catch_warnings():
        warnings.simplefilter("error", RuntimeWarning)
        return extract(*args, **kw)


# --- round trip --------------------------------------------------------------------------

@pytest.mark.parametrize("config", ["ce", "cb", "cc"])
def test_round_trip_without_noise(tmp_path, config):
    path = write_s2p(tmp_path, f"dut_{config}", FREQ, y_to_s(nodal_y(TRUE, FREQ, config)))
    res = _quiet_extract(path, config)
    assert res.warnings == () and res.plausible
    for k, v in TRUE.items():
        assert res.elements[k] == pytest.approx(v, rel=1e-6, abs=0), k
        assert res.uncertainty[k] < 1e-6 * v, k
    assert res.rms_error < 1e-9


@pytest.mark.parametrize("config", ["ce", "cb", "cc"])
def test_round_trip_with_noise(tmp_path, config):
    """0.5 % noise: every element within 3 of its reported standard uncertainties."""
    s = noisy(y_to_s(nodal_y(TRUE, FREQ, config)), 0.005, seed=7)
    res = _quiet_extract(write_s2p(tmp_path, "noisy", FREQ, s), config)
    for k, v in TRUE.items():
        u = res.uncertainty[k]
        assert 0 < u < 0.2 * v, k                                   # determined, and not trivially
        assert abs(res.elements[k] - v) <= 3 * u, (k, res.elements[k], v, u)
    assert 0.004 < res.rms_error < 0.006                          # the noise level put in
    assert res.residual.shape == (FREQ.size, 2, 2)


def test_uncertainties_are_standard_deviations(tmp_path):
    """Over 12 noise draws the spread of the fitted gm and rb matches the reported uncertainty."""
    s0 = y_to_s(nodal_y(TRUE, FREQ))
    fits = [extract(dm.TwoPort(FREQ, noisy(s0, 0.005, seed), "s")) for seed in range(12)]
    for k in ("gm", "rb", "c_mu"):
        values = np.array([r.elements[k] for r in fits])
        reported = np.median([r.uncertainty[k] for r in fits])
        spread = values.std(ddof=1)
        assert 0.5 * reported < spread < 2.0 * reported, (k, spread, reported)


def test_parasitics_recovered():
    el = dict(TRUE, rex=2.0, rcx=5.0)
    from devmodels.models import HybridPi
    from devmodels.stage import Stage

    y = Stage(HybridPi(**el), "ce").two_port(FREQ, "y").data
    res = extract(dm.TwoPort(FREQ, y, "y"), parasitics=("rex", "rcx"))
    for k, v in el.items():
        assert res.elements[k] == pytest.approx(v, rel=1e-6, abs=0), k
    assert set(res.as_dict()["elements"]) == set(el)


def test_finite_difference_jacobian_agrees():
    s = dm.TwoPort(FREQ, y_to_s(nodal_y(TRUE, FREQ)), "s")
    a = extract(s)
    b = extract(s, jacobian="2-point")
    for k in TRUE:
        assert b.elements[k] == pytest.approx(a.elements[k], rel=1e-6, abs=0), k


def test_y_weighting_also_recovers():
    res = extract(dm.TwoPort(FREQ, nodal_y(TRUE, FREQ), "y"), weighting="y")
    for k, v in TRUE.items():
        assert res.elements[k] == pytest.approx(v, rel=1e-6, abs=0), k


def test_model_y_is_the_nodal_solution():
    assert np.allclose(model_y(TRUE, FREQ, "cb"), nodal_y(TRUE, FREQ, "cb"), rtol=1e-12, atol=0)


# --- direct estimates --------------------------------------------------------------------

def test_direct_estimates_textbook_relations_at_one_frequency():
    """rb = 0: the low band holds one point, and the relations are exact there."""
    el = dict(TRUE, rb=0.0)
    f = np.array([1e6, 1e8, 1e9, 3e9])
    y = nodal_y(el, f)
    est, ft, notes = direct_estimates(f, y)
    w = 2 * math.pi * 1e6
    y11, y12, y21, y22 = y[0, 0, 0], y[0, 0, 1], y[0, 1, 0], y[0, 1, 1]
    assert est["gm"].value == pytest.approx((y21 - y12).real, rel=1e-12)
    assert est["gm"].value == pytest.approx(el["gm"], rel=1e-9)
    assert est["c_mu"].value == pytest.approx(-y12.imag / w, rel=1e-12, abs=0)
    assert est["c_mu"].value == pytest.approx(el["c_mu"], rel=1e-9, abs=0)
    assert est["c_pi"].value == pytest.approx(el["c_pi"], rel=1e-9, abs=0)
    assert est["r_pi"].value == pytest.approx(1 / (y11 + y12).real, rel=1e-12)
    assert est["r_pi"].value == pytest.approx(el["r_pi"], rel=1e-9)
    assert est["ro"].value == pytest.approx(1 / (y22 + y12).real, rel=1e-12)
    assert est["ro"].value == pytest.approx(el["ro"], rel=1e-9)
    assert (est["gm"].f_lo, est["gm"].f_hi) == (1e6, 1e6)
    assert est["rb"].f_lo == 1e9 and est["rb"].f_hi == 3e9
    assert ft == pytest.approx(el["gm"] / (2 * math.pi * (el["c_pi"] + el["c_mu"])), rel=0.05)


def test_direct_rb_from_high_frequency_input_impedance():
    est, ft, _ = direct_estimates(FREQ, nodal_y(TRUE, FREQ))
    assert est["rb"].value == pytest.approx(TRUE["rb"], rel=0.01)
    assert est["rb"].f_lo >= 1e9


# --- implausible and bad input ------------------------------------------------------------

def test_scikit_rf_example_is_not_a_transistor(tmp_path):
    ring = skrf.data.ring_slot                                     # a passive two-port of scikit-rf
    path = tmp_path / "ring.s2p"
    ring.write_touchstone(filename=str(path.with_suffix("")))
    with pytest.raises(InputError, match="not a transistor"):
        extract(path)


def test_data_the_model_cannot_follow_flagged_implausible():
    """A transistor behind a 2 ns delay in s21 only (not a lumped device): flagged, not silently fitted."""
    s = y_to_s(nodal_y(TRUE, FREQ))
    s[:, 1, 0] *= np.exp(-2j * np.pi * FREQ * 2e-9)
    with pytest.warns(ExtractionWarning, match="implausible for a transistor"):
        res = extract(dm.TwoPort(FREQ, s, "s"))
    assert not res.plausible and res.rms_error > 0.1
    assert res.as_dict()["plausible"] is False


def test_one_port_file_refused(tmp_path):
    s = np.full((5, 1, 1), 0.3 + 0.1j)
    path = write_s2p(tmp_path, "oneport", np.linspace(1e6, 5e6, 5), s)
    with pytest.raises(FileFormatError, match="1-port"):
        extract(path)


def test_one_frequency_refused(tmp_path):
    f = np.array([1e8])
    path = write_s2p(tmp_path, "single", f, y_to_s(nodal_y(TRUE, f)))
    with pytest.raises(InputError, match="1 frequency"):
        extract(path)


def test_band_above_ft_over_10_refused_for_gm(tmp_path):
    f = np.logspace(8, math.log10(3e9), 50)                       # starts at fT/4
    path = write_s2p(tmp_path, "high", f, y_to_s(nodal_y(TRUE, f)))
    with pytest.raises(InputError, match=r"no point below fT/10.*gm"):
        extract(path)
    # with gm given (IC/VT), the rest is fitted, and the rough start is named
    with pytest.warns(ExtractionWarning, match="gm: no point below fT/10"):
        res = extract(path, fixed={"gm": TRUE["gm"]})
    assert res.uncertainty["gm"] == 0.0 and res.fixed == ("gm",)
    assert res.elements["c_mu"] == pytest.approx(TRUE["c_mu"], rel=1e-6, abs=0)


def test_rb_flagged_when_band_stops_well_below_ft():
    """A small rb (1 ohm) and a band up to fT/40: rb is named, with its large uncertainty."""
    f = np.logspace(5, 7, 60)
    s = noisy(y_to_s(nodal_y(dict(TRUE, rb=1.0), f)), 0.005, seed=3)
    with pytest.warns(ExtractionWarning, match=r"rb: the band stops .* below fT/3"):
        res = extract(dm.TwoPort(f, s, "s"))
    assert any(w.startswith("rb: poorly determined") for w in res.warnings), res.warnings
    assert res.uncertainty["rb"] > 0.25 * res.elements["rb"]
    assert abs(res.elements["rb"] - 1.0) <= 3 * res.uncertainty["rb"]


def test_flat_jacobian_column_named():
    """ro = 1e12 ohm: the data do not depend on it; its uncertainty is infinite (JSON null)."""
    s = y_to_s(nodal_y(dict(TRUE, ro=1e12), FREQ))
    with pytest.warns(ExtractionWarning, match="ro: the data hardly depend on it"):
        res = extract(dm.TwoPort(FREQ, s, "s"))
    assert res.uncertainty["ro"] == math.inf
    assert res.as_dict()["uncertainty"]["ro"] is None
    assert "va" not in bias_toml(res, vce=5.0)


def test_large_relative_uncertainty_named():
    s = noisy(y_to_s(nodal_y(dict(TRUE, ro=1e9), FREQ)), 0.005, seed=1)
    with pytest.warns(ExtractionWarning, match="ro: poorly determined, relative uncertainty"):
        res = extract(dm.TwoPort(FREQ, s, "s"))
    assert res.uncertainty["ro"] > 0.25 * res.elements["ro"]


def test_bad_arguments():
    s = dm.TwoPort(FREQ, y_to_s(nodal_y(TRUE, FREQ)), "s")
    with pytest.raises(InputError, match="parasitics"):
        extract(s, parasitics=("lead_l",))
    with pytest.raises(InputError, match="config"):
        extract(s, "ec")
    with pytest.raises(InputError, match="parasitics: unknown element 'rex' for a cs fit"):
        extract(s, "cs", parasitics=("rex",))
    with pytest.raises(InputError, match="fixed"):
        extract(s, fixed={"gm": -1.0})


# --- outputs ------------------------------------------------------------------------------

def test_as_dict_is_the_interface_json():
    res = extract(dm.TwoPort(FREQ, y_to_s(nodal_y(TRUE, FREQ)), "s"))
    d = json.loads(json.dumps(res.as_dict(), allow_nan=False))
    assert set(d["elements"]) == set(TRUE) == set(d["uncertainty"])
    assert isinstance(d["rms_error"], float)
    assert d["estimates"]["c_mu"]["freq_range"][0] == FREQ[0]


def test_bias_file_reproduces_the_fit(tmp_path):
    from devmodels.biasfile import load_bias_file
    from devmodels.models import HybridPi

    res = extract(dm.TwoPort(FREQ, y_to_s(nodal_y(TRUE, FREQ)), "s"))
    text = bias_toml(res, vce=5.0, temp=300.0)
    path = tmp_path / "fit.toml"
    path.write_text(text)
    flat, tables = load_bias_file(path)
    assert tables == {} and flat["vce"] == 5.0 and flat["device"] == "npn"
    bias = dm.BipolarBias(ic=flat["ic"], vce=flat["vce"], beta=flat["beta"], va=flat["va"], ft=flat["ft"],
                          cmu=flat["cmu"], rb=flat["rb"], temp=flat["temp"])
    m = HybridPi.from_bias(bias)
    for k, v in TRUE.items():
        assert getattr(m, k) == pytest.approx(v, rel=1e-6, abs=0), k


def test_plot_written(tmp_path):
    res = extract(dm.TwoPort(FREQ, y_to_s(nodal_y(TRUE, FREQ)), "s"))
    out = plot_fit(res, tmp_path / "fit.png")
    assert out.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


# --- bias point ---------------------------------------------------------------------------

def test_bias_consistency_ideality_and_excess_re():
    vt = dm.thermal_voltage(300.0)
    ic = 2e-3
    gm = ic / (1.05 * vt)
    out = bias_consistency(gm, ic, 300.0)
    assert out["ideality"] == pytest.approx(1.05, rel=1e-12)
    assert out["re_excess"] == pytest.approx(0.05 * vt / ic, rel=1e-9)


def test_transit_time_from_fits_at_several_currents():
    """Exact fT(IC) of the law 1/(2 pi fT) = tau_F + (C_je + C_mu) VT/IC (Gray, Hurst, Lewis and
    Meyer, ch. 1; from memory): each file's elements made from it (C_pi = gm/(2 pi fT) - C_mu,
    gm = IC/VT), fitted, and tau_F and C_je found back."""
    vt = dm.thermal_voltage(300.0)
    tau, c_je, c_mu = 250e-12, 4e-12, 1.5e-12
    ics = np.array([0.5e-3, 1e-3, 2e-3, 5e-3])
    fits = []
    for i in ics:
        gm = i / vt
        ft = 1 / (2 * math.pi * (tau + (c_je + c_mu) * vt / i))
        el = dict(TRUE, gm=gm, r_pi=100 / gm, c_mu=c_mu, c_pi=gm / (2 * math.pi * ft) - c_mu)
        fits.append(extract(dm.TwoPort(FREQ, y_to_s(nodal_y(el, FREQ)), "s")))
    out = transit_time(fits, ics, 300.0)
    assert out["tau_f"] == pytest.approx(tau, rel=1e-6, abs=0)
    assert out["c_total"] == pytest.approx(c_je + c_mu, rel=1e-6, abs=0)
    assert out["c_je"] == pytest.approx(c_je, rel=1e-6, abs=0)
    assert out["tau_f_unc"] < 1e-6 * tau and out["points"] == 4
    with pytest.raises(InputError, match="two or more different"):
        transit_time(fits[:1], ics[:1])
    with pytest.raises(InputError, match="one collector current per file"):
        transit_time(fits, ics[:3])
    with pytest.raises(InputError, match="two or more different currents"):
        transit_time(fits[:2], [1e-3, 1e-3])


def test_one_transit_time_fit_in_the_package(monkeypatch):
    """extract uses the datasheet module's fit of the law (one implementation)."""
    import devmodels.datasheet as ds
    import devmodels.extract as ex

    assert not hasattr(ex, "fit_transit_time")
    seen = []
    real = ds.fit_transit_time
    monkeypatch.setattr(ds, "fit_transit_time", lambda *a, **k: seen.append(a) or real(*a, **k))
    fits = [extract(dm.TwoPort(FREQ, y_to_s(nodal_y(dict(TRUE, gm=g), FREQ)), "s")) for g in (0.04, 0.08)]
    ex.transit_time(fits, [1e-3, 3e-3])
    assert len(seen) == 1 and list(seen[0][1]) == [1e-3, 3e-3]
    monkeypatch.undo()
    # its uncertainties: the least-squares covariance, checked against numpy.polyfit's (numpy)
    vt = dm.thermal_voltage(300.0)
    ics = np.array([0.5e-3, 1e-3, 2e-3, 5e-3, 8e-3])
    ft = 1 / (2 * math.pi * (250e-12 + 5e-12 * vt / ics)) * np.array([1.0, 1.01, 0.99, 1.005, 0.998])
    fit = ds.fit_transit_time(ft, ics, 300.0)
    _, cov = np.polyfit(vt / ics, 1 / (2 * math.pi * ft), 1, cov="unscaled")
    r = 1 / (2 * math.pi * ft) - (fit.tau_f + fit.c_sum * vt / ics)
    s2 = float(r @ r) / (ics.size - 2)
    assert fit.c_sum_unc == pytest.approx(math.sqrt(cov[0, 0] * s2), rel=1e-9)
    assert fit.tau_f_unc == pytest.approx(math.sqrt(cov[1, 1] * s2), rel=1e-9)
    assert ds.fit_transit_time(ft[:2], ics[:2]).tau_f_unc is None


def test_import_does_not_load_heavy_libraries():
    code = ("import sys, devmodels, devmodels.extract; "
            "print([m for m in ('scipy', 'matplotlib', 'skrf', 'sympy', 'typer') if m in sys.modules])")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "[]"


def test_analytic_sensitivities_match_central_differences():
    """d Y / d ln(element) of the Schur-complement formula against central differences of the engine."""
    from devmodels.extract import _pick, _sensitivities

    el = dict(TRUE, rex=2.0, rcx=5.0, c_pad_in=50e-15, c_pad_out=40e-15)
    f = np.logspace(6, 9.5, 15)
    names = list(el)
    sens = _pick(_sensitivities(el, names, 2 * np.pi * f), "cb")
    h = 1e-5
    for j, k in enumerate(names):
        up, down = dict(el), dict(el)
        up[k] *= math.exp(h)
        down[k] *= math.exp(-h)
        fd = (model_y(up, f, "cb") - model_y(down, f, "cb")) / (2 * h)
        scale = np.abs(fd).max()
        assert np.abs(sens[..., j] - fd).max() <= 1e-7 * scale, k


FET = {"gm": 0.03, "cgs": 0.8e-12, "cgd": 0.1e-12, "ro": 5e3, "rg": 4.0}


def fet_y(el: dict, freq: np.ndarray, config: str) -> np.ndarray:
    """Y of the FET (gm, cgs, cgd, ro, series rg) in closed form, independent of the package.

    Common source: the intrinsic y = [[jw(cgs + cgd), -jw cgd], [gm - jw cgd, 1/ro + jw cgd]];
    rg in series with the gate adds rg to z11.  Other configurations by the zero row and
    column sums of the indefinite matrix (node order g, d, s).
    """
    w = 2 * np.pi * freq
    yi = np.empty((w.size, 2, 2), dtype=complex)
    yi[:, 0, 0] = 1j * w * (el["cgs"] + el["cgd"])
    yi[:, 0, 1] = -1j * w * el["cgd"]
    yi[:, 1, 0] = el["gm"] - 1j * w * el["cgd"]
    yi[:, 1, 1] = 1 / el["ro"] + 1j * w * el["cgd"]
    z = np.linalg.inv(yi)
    z[:, 0, 0] += el["rg"]
    y = np.linalg.inv(z)
    y3 = np.zeros((w.size, 3, 3), dtype=complex)
    y3[:, :2, :2] = y
    y3[:, :2, 2] = -y.sum(axis=2)
    y3[:, 2, :] = -y3[:, :2, :].sum(axis=1)
    p1, p2 = {"cs": (0, 1), "cg": (2, 1), "cd": (0, 2)}[config]
    return y3[:, [p1, p2]][:, :, [p1, p2]]


@pytest.mark.parametrize("config", ["cs", "cg", "cd"])
def test_fet_round_trip(tmp_path, config):
    f = np.logspace(6, 10.5, 151)
    path = write_s2p(tmp_path, f"fet_{config}", f, y_to_s(fet_y(FET, f, config)))
    res = _quiet_extract(path, config)
    assert set(res.elements) == set(FET) and res.warnings == ()
    for k, v in FET.items():
        assert res.elements[k] == pytest.approx(v, rel=1e-6, abs=0), k
    with pytest.raises(InputError, match="FET"):
        bias_toml(res, vce=3.0)

"""Plots of result objects: what is drawn, and what is refused."""

from __future__ import annotations

import numpy as np
import pytest

import devmodels as dm
from devmodels.analysis import terminate
from devmodels.merit import frequency_figures
from devmodels.plotting import plot_report
from devmodels.stagenetwork import StageNetwork

pytest.importorskip("matplotlib")


def _stage():
    m = dm.HybridPi(gm=0.04, r_pi=2.5e3, ro=60e3, rb=50.0, c_pi=15e-12, c_mu=2e-12)
    net = StageNetwork("divider", r1=47e3, r2=10e3, rc=4.7e3, re=1.2e3, c_bypass=47e-6, c_in=1e-6)
    return dm.Stage(m, "ce", network=net)


def test_one_frequency_is_refused_with_a_way_forward(tmp_path):
    st = _stage()
    tp = st.two_port([1e3])
    with pytest.raises(dm.InputError, match="^plot: one frequency point is not worth a plot.*sweep"):
        plot_report(tmp_path / "a.png", gains={"ce": terminate(tp, 600.0, 10e3)}, s_ports={"ce": tp.to("s")})
    assert not (tmp_path / "a.png").exists()


def test_band_plot_marks_both_corners_and_the_analysis_frequency(tmp_path):
    st = _stage()
    f = np.geomspace(1.0, 1e9, 120)
    tp = st.two_port(f)
    figs = frequency_figures(st, 1.0, 1e9, 600.0, 10e3)
    assert figs.f_low is not None and figs.bandwidth is not None  # both corners exist to be marked
    p = plot_report(tmp_path / "b.svg", gains={"ce": terminate(tp, 600.0, 10e3)}, s_ports={"ce": tp.to("s")},
                    figures=figs, mark_freq=1e3, title="test")
    text = p.read_text()
    for label in ("f_low = ", "f_high = ", "analysis at 1 kHz", "frequency (Hz)", "voltage gain (dB)"):
        assert label in text


def test_noise_circles_and_noise_panel_are_drawn(tmp_path):
    from devmodels.noise import noise_circle, noise_parameters, stage_noise
    from devmodels.plotting import plot_noise_circles

    st = _stage()
    f = np.array([1e6, 1e8])
    res = noise_parameters(stage_noise(st, f), zs=600.0)
    levels = {float(res.nfmin_db.max()) + d: None for d in (0.5, 2.0)}
    circles = {lv: noise_circle(res.fmin, res.rn, res.gamma_opt, 10 ** (lv / 10), res.z0) for lv in levels}
    p = plot_noise_circles(tmp_path / "c.svg", res.freq, res.gamma_opt, circles, 0.3 + 0j, z0=50.0, title="t")
    text = p.read_text()
    for label in ("Γopt at 1 MHz", "Γopt at 100 MHz", "source", "NF = "):
        assert label in text
    with pytest.raises(dm.InputError, match="^plot:"):
        plot_noise_circles(tmp_path / "c.pdf", res.freq, res.gamma_opt, circles)
    fs = np.geomspace(1e3, 1e9, 40)
    tp = st.two_port(fs)
    q = plot_report(tmp_path / "n.svg", gains={"ce": terminate(tp, 600.0, 10e3)},
                    noise={"ce": noise_parameters(stage_noise(st, fs), zs=600.0)})
    assert "Noise figure (source at T0 = 290 K)" in q.read_text() and "CE NF at Rs" in q.read_text()


def test_phase_of_an_inverting_stage_reads_minus_180_whatever_the_rounding():
    """Two inverting gains that differ only in the sign of a rounding-sized imaginary part
    (angle +180 or -180 by numpy's convention, so the unwrapped curves start a turn apart) are
    drawn with the same phase, -180 degrees at mid-band; a non-inverting one reads 0 there."""
    from devmodels.plotting import _phase_deg

    f = np.geomspace(1.0, 1e6, 61)
    s = 1j * f / 10.0
    shaped = 100.0 * s / (1 + s) / (1 + 1j * f / 1e5)   # high-pass then low-pass
    mid = int(np.argmax(np.abs(shaped)))
    for flat in (np.full(f.size, -100.0 + 1e-300j), np.full(f.size, -100.0 - 1e-300j)):
        assert np.allclose(_phase_deg(flat), -180.0, atol=1e-9, rtol=0)
    inverting = -shaped
    a = _phase_deg(inverting)
    b = _phase_deg(inverting * np.exp(2j * np.pi))        # the same gain, numerically
    assert a[mid] == pytest.approx(-180.0, abs=1.0)       # about -180 at mid-band (the corners are far)
    np.testing.assert_allclose(a, b, atol=1e-9)
    assert _phase_deg(shaped)[mid] == pytest.approx(0.0, abs=1.0)

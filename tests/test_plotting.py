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

"""Temperature: VT, VBE(on) and beta move as documented; the bias point follows."""

from __future__ import annotations

import numpy as np
import pytest

from devmodels.exceptions import InputError
from devmodels.dcbias import BiasNetwork, operating_point
from devmodels.temperature import beta_at, thermal_voltage, vbe_at


def test_thermal_voltage_scales_with_temperature():
    # VT = kT/q with the exact SI k and q (BIPM SI Brochure, 9th ed., 2019):
    # 1.380649e-23 * 350 / 1.602176634e-19 = 30.1608 mV.
    assert thermal_voltage(350.0) == pytest.approx(30.1608e-3, rel=1e-5)
    assert thermal_voltage(350.0) / thermal_voltage(300.0) == pytest.approx(350 / 300)


def test_vbe_falls_about_two_millivolts_per_kelvin():
    # About -2 mV/K for a silicon junction (common practice, no source).
    assert vbe_at(350.0) == pytest.approx(0.7 - 0.002 * 50)
    assert vbe_at(250.0) == pytest.approx(0.8)
    assert vbe_at(300.0, vbe=0.65) == pytest.approx(0.65)
    # user override of the coefficient
    assert vbe_at(310.0, vbe=0.7, tc=-1.8e-3) == pytest.approx(0.7 - 0.018)
    np.testing.assert_allclose(vbe_at(np.array([290.0, 300.0, 310.0])), [0.72, 0.7, 0.68])


def test_beta_grows_by_the_documented_fraction_per_kelvin():
    # Default 0.5 %/K compounded (common practice, no source): 100 * 1.005**10 = 105.114.
    assert beta_at(310.0, 100.0) == pytest.approx(105.114, rel=1e-5)
    assert beta_at(300.0, 100.0) == pytest.approx(100.0)
    assert beta_at(290.0, 100.0, tc=0.01) == pytest.approx(100.0 / 1.01 ** 10)
    with pytest.raises(InputError, match="^beta_tc: "):
        beta_at(300.0, 100.0, tc=-1.5)


def test_bias_point_drifts_up_with_temperature():
    # Lower VBE and higher beta both raise IC in a divider network (Thevenin formula,
    # Sedra and Smith, from memory).
    net = BiasNetwork("divider", 12.0, rc=2.2e3, re=1e3, r1=47e3, r2=10e3)
    cold, warm = operating_point(net, 100.0, temp=250.0), operating_point(net, 100.0, temp=350.0)
    assert cold.ic < warm.ic
    assert cold.vbe == pytest.approx(0.8) and warm.vbe == pytest.approx(0.6)


def test_temperature_must_be_positive():
    with pytest.raises(InputError, match="^temp: "):
        vbe_at(-5.0)

"""E-series of IEC 60063: the values as written in the standard, nearest, neighbours, ranges."""

from __future__ import annotations

import math

import pytest

from devmodels.eseries import SERIES, check_series, nearest, neighbours, series_values, step_ratio, values_between
from devmodels.exceptions import InputError

# The decade 1 .. 10 of each series, typed from IEC 60063 (not computed).
E12 = [1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2]
E24 = [1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2,
       6.8, 7.5, 8.2, 9.1]
E48_SOME = {0: 1.00, 1: 1.05, 10: 1.62, 24: 3.16, 36: 5.62, 47: 9.53}
E96_SOME = {0: 1.00, 1: 1.02, 19: 1.58, 48: 3.16, 67: 4.99, 95: 9.76}


def test_e12_and_e24_are_the_values_of_the_standard():
    assert series_values("E12", 0) == E12
    assert series_values("E24", 0) == E24
    # another decade: the same digits, the nearest doubles to the decimal values
    assert series_values("E24", 3) == [float(f"{v}e3") for v in E24]
    assert 4.7e3 in series_values("E24", 3)


def test_e24_keeps_the_historical_values_not_the_rounded_formula():
    # where round(10**(i/24), 1) differs from the standard
    formula = [round(10 ** (i / 24), 1) for i in range(24)]
    differs = {E24[i]: formula[i] for i in range(24) if E24[i] != formula[i]}
    assert differs == {2.7: 2.6, 3.0: 2.9, 3.3: 3.2, 3.6: 3.5, 3.9: 3.8, 4.3: 4.2, 4.7: 4.6, 8.2: 8.3}
    assert set(E12) <= set(E24)


@pytest.mark.parametrize("name, n, some", [("E48", 48, E48_SOME), ("E96", 96, E96_SOME)])
def test_e48_e96_counts_ends_and_rounding(name, n, some):
    vals = series_values(name, 0)
    assert len(vals) == n and len(set(vals)) == n
    assert vals[0] == 1.00 and vals[-1] == (9.53 if n == 48 else 9.76)
    for i, v in some.items():
        assert vals[i] == v
    assert all(b > a for a, b in zip(vals, vals[1:]))
    for i, v in enumerate(vals):  # three significant digits of 10**(i/n)
        assert abs(v - 10 ** (i / n)) <= 0.005 + 1e-12, (i, v)
    assert len(SERIES[name]) == n


def test_e48_is_every_other_e96_value():
    assert SERIES["E48"] == SERIES["E96"][::2]


def test_neighbours_inside_and_at_decade_edges():
    assert neighbours(5.0, "E12") == (4.7, 5.6)
    assert neighbours(9.5, "E12") == (8.2, 10.0)
    assert neighbours(95.0, "E24") == (91.0, 100.0)
    assert neighbours(0.0105, "E24") == (0.01, 0.011)
    assert neighbours(976.5, "E96") == (976.0, 1000.0)
    assert neighbours(10.0, "E12") == (10.0, 10.0)  # a member is its own neighbour
    assert neighbours(4700.0000001, "E24") == (4700.0, 4700.0)
    assert neighbours(1e-3, "E48") == (1e-3, 1e-3)


def test_nearest_is_on_a_log_scale_and_crosses_decades():
    assert nearest(9.6, "E24") == 10.0
    assert nearest(0.0095, "E24") == 0.0091  # log distance 0.043 against 0.051
    assert nearest(1.04, "E12") == 1.0
    assert nearest(999.0, "E96") == 1000.0
    assert nearest(3.4e6, "E24") == 3.3e6
    # geometric midpoint between 1.0 and 1.2: log distances equal, the lower one is kept
    assert nearest(math.sqrt(1.2), "E12") in (1.0, 1.2)
    assert nearest(math.sqrt(1.2) * 1.0001, "E12") == 1.2


def test_values_between():
    assert values_between(900, 1200, "E24").tolist() == [910.0, 1000.0, 1100.0, 1200.0]
    assert values_between(1.0, 10.0, "E96").size == 97
    assert values_between(1.0, 10.0, "E12").tolist() == E12 + [10.0]
    assert values_between(1.25, 1.4, "E12").size == 0
    got = values_between(1e3, 1e4, "E24")
    assert got.tolist() == [float(f"{v}e3") for v in E24] + [1e4]


def test_step_ratio():
    assert step_ratio("E24") == pytest.approx(10 ** (1 / 24), rel=1e-15)


def test_bad_series_and_values():
    with pytest.raises(InputError) as e:
        nearest(100.0, "E7")
    assert str(e.value) == "series: unknown series 'E7'; expected one of E12, E24, E48, E96"
    assert check_series("e24") == "E24"
    for bad in (0.0, -4.7, float("nan"), float("inf"), "x", None):
        with pytest.raises(InputError):
            nearest(bad, "E12")
        with pytest.raises(InputError):
            neighbours(bad, "E24")
    with pytest.raises(InputError, match="lo"):
        values_between(0, 10, "E12")
    with pytest.raises(InputError, match="above hi"):
        values_between(10, 1, "E12")
    with pytest.raises(InputError, match="series"):
        values_between(1, 10, "E6")

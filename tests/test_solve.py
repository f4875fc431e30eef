"""devmodels.solve: the bracketed root search, checked against closed forms and an independent bisection."""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest

import devmodels as dm
from devmodels.analysis import terminate
from devmodels.eseries import nearest, series_values
from devmodels.exceptions import InputError, BiasError
from devmodels.solve import UnreachableTarget, result_of, solve_target
from devmodels.stagenetwork import StageNetwork

# Invented demo device: a small-signal npn at 1 mA with a high current gain and no Early effect.
GM = 0.0386
BETA = 2000.0
MODEL = dm.HybridPi(gm=GM, r_pi=BETA / GM, ro=math.inf, rb=0.0, c_pi=20e-12, c_mu=2e-12)
RL = 4.7e3


def _bare(rdeg: float) -> dm.Stage:
    return dm.Stage(MODEL, "ce", rdeg=rdeg)


def _av_direct(rdeg: float) -> float:
    """|av| of the engine, computed here without devmodels.solve."""
    res = terminate(_bare(rdeg).two_port(np.array([1e3]), "y"), 50.0, RL)
    return float(abs(res.av[0]))


def test_degeneration_meets_the_target_and_matches_the_closed_form():
    sol = solve_target(_bare, "av", 20.0, 1e3, 50.0, RL, lo=1.0, hi=1e5)
    assert sol.roots == 1
    assert abs(sol.achieved / 20.0 - 1) < 1e-6
    assert abs(_av_direct(sol.value) / 20.0 - 1) < 1e-6
    # from memory: |av| ~ RL / (re + rdeg) with re = 1/gm for a large beta (no ro, no rb)
    closed = RL / 20.0 - 1.0 / GM
    assert sol.value == pytest.approx(closed, rel=5.0 / BETA)
    assert sol.value != pytest.approx(closed, rel=1e-9)  # the engine keeps the finite beta


def test_solver_agrees_with_an_independent_bisection():
    lo, hi = 1.0, 1e5
    for _ in range(200):  # plain bisection on ln(rdeg), written here
        mid = math.sqrt(lo * hi)
        if _av_direct(mid) > 20.0:
            lo = mid
        else:
            hi = mid
    sol = solve_target(_bare, "av", 20.0, 1e3, 50.0, RL, lo=1.0, hi=1e5)
    assert sol.value == pytest.approx(math.sqrt(lo * hi), rel=1e-8)


def test_f_low_of_one_coupling_capacitor_has_the_closed_form():
    net = StageNetwork("divider", r1=47e3, r2=10e3, rc=4.7e3, re=470.0)
    rs, rl, f = 600.0, 10e3, 20.0

    def build(c):
        return dm.Stage(MODEL, "ce", network=dataclasses.replace(net, c_in=c))

    sol = solve_target(build, "f_low", f, rs=rs, rl=rl, lo=1e-12, hi=1.0)
    assert abs(sol.achieved / f - 1) < 1e-6
    rin = float(abs(terminate(build(1e-6).midband().two_port(np.array([1e3]), "y"), rs, rl).zin[0]))
    # from memory: one coupling capacitor alone sets f_low = 1 / (2 pi C (Rs + Rin))
    assert sol.value == pytest.approx(1.0 / (2 * math.pi * f * (rs + rin)), rel=1e-4)


def test_nearest_value_is_a_member_of_the_series():
    sol = solve_target(_bare, "av", 20.0, 1e3, 50.0, RL, lo=1.0, hi=1e5)
    for series in ("E12", "E24", "E96"):
        part = nearest(sol.value, series)
        decade = math.floor(math.log10(part))
        assert any(math.isclose(part, m, rel_tol=1e-12) for m in series_values(series, decade))


def test_unreachable_target_gives_the_reachable_range():
    with pytest.raises(UnreachableTarget) as info:
        solve_target(_bare, "av", 1e4, 1e3, 50.0, RL, lo=1.0, hi=1e5)
    lo, hi = info.value.reachable
    assert hi == pytest.approx(_av_direct(1.0), rel=1e-12)  # |av| falls with rdeg: largest at lo
    assert lo == pytest.approx(_av_direct(1e5), rel=1e-12)
    assert "not reachable" in str(info.value)


def test_several_roots_take_the_one_nearest_the_present_value():
    # |av| falls with rdeg and rdeg = 100 |ln x| + 1 falls then rises: two roots, x and 1/x
    def build(x):
        return _bare(100.0 * abs(math.log(x)) + 1.0)

    r = (RL / 20.0 - 1.0 / GM - 1.0) / 100.0
    near_high = solve_target(build, "av", 20.0, 1e3, 50.0, RL, lo=1e-5, hi=1e5, present=10.0)
    near_low = solve_target(build, "av", 20.0, 1e3, 50.0, RL, lo=1e-5, hi=1e5, present=0.1)
    assert near_high.roots == near_low.roots == 2
    assert near_high.value > 1 > near_low.value
    assert near_high.value * near_low.value == pytest.approx(1.0, rel=1e-6)
    assert math.log(near_high.value) == pytest.approx(r, rel=5.0 / BETA)


def test_trial_failures_are_gaps_and_a_failure_everywhere_is_raised():
    def partly(x):
        if x > 1e3:
            raise BiasError("out of the active region (invented)")
        return _bare(x)

    sol = solve_target(partly, "av", 20.0, 1e3, 50.0, RL, lo=1.0, hi=1e5)
    assert abs(sol.achieved / 20.0 - 1) < 1e-6

    def never(x):
        raise BiasError("saturated (invented)")

    with pytest.raises(BiasError, match="saturated"):
        solve_target(never, "av", 20.0, lo=1.0, hi=1e5)


def test_steep_result_just_inside_the_edge_of_the_accepted_values():
    # the stage refuses x < 1 kohm (as an emitter resistor smaller than its bypassed part is
    # refused) and rdeg = x - 1 kohm: |av| is largest at the edge and falls fast just above it
    edge = 1e3

    def build(x):
        if x < edge:
            raise InputError("x: below its bypassed part (invented)")
        return _bare(x - edge)

    top = _av_direct(0.0)
    for goal in (150.0, 100.0, 20.0):
        sol = solve_target(build, "av", goal, 1e3, 50.0, RL, lo=1.0, hi=1e7)
        assert abs(sol.achieved / goal - 1) < 1e-6 and sol.roots == 1
        assert abs(_av_direct(sol.value - edge) / goal - 1) < 1e-6  # the engine at the solved value
        # from memory: |av| ~ RL / (1/gm + rdeg) for a large beta
        assert sol.value - edge == pytest.approx(RL / goal - 1.0 / GM, rel=5.0 / BETA)
    with pytest.raises(UnreachableTarget) as info:
        solve_target(build, "av", 2 * top, 1e3, 50.0, RL, lo=1.0, hi=1e7)
    assert info.value.reachable[1] == pytest.approx(top, rel=1e-6)  # the whole accepted interval
    assert info.value.exists[0] == pytest.approx(edge, rel=1e-9) and info.value.exists[1] == 1e7
    assert info.value.reachable[0] == pytest.approx(_av_direct(1e7 - edge), rel=1e-12)


def test_a_peak_between_grid_values_is_located():
    # rdeg has a narrow dip around x = e^0.3 (|av| a narrow peak), narrower than the first grid
    def rdeg(x):
        return 1.0 + 1e3 * (1.0 - math.exp(-((math.log(x) - 0.3) / 0.12) ** 2))

    def build(x):
        return _bare(rdeg(x))

    top = _av_direct(1.0)  # the peak: rdeg = 1 ohm at x = e^0.3
    with pytest.raises(UnreachableTarget) as info:
        solve_target(build, "av", 2 * top, 1e3, 50.0, RL, lo=1.0, hi=1e5)
    assert info.value.reachable[1] == pytest.approx(top, rel=1e-9)
    goal = 0.9 * top  # reached only near the top of the peak: two roots close together
    sol = solve_target(build, "av", goal, 1e3, 50.0, RL, lo=1.0, hi=1e5)
    assert sol.roots == 2 and abs(sol.achieved / goal - 1) < 1e-6
    assert abs(_av_direct(rdeg(sol.value)) / goal - 1) < 1e-6


@pytest.mark.parametrize("kwargs", [dict(result="gain"), dict(target=0.0), dict(target=math.nan),
                                    dict(lo=10.0, hi=1.0), dict(lo=0.0)])
def test_bad_arguments(kwargs):
    args = dict(result="av", target=20.0, lo=1.0, hi=1e5) | kwargs
    with pytest.raises(InputError):
        solve_target(_bare, args.pop("result"), args.pop("target"), **args)


def test_result_of_names():
    st = _bare(100.0)
    assert result_of(st, "AV", 1e3, 50.0, RL) == pytest.approx(_av_direct(100.0), rel=1e-12)
    with pytest.raises(InputError):
        result_of(st, "nf")


def test_search_interval():
    from devmodels.solve import search_interval

    assert search_interval("Ohm") == (1.0, 1e7)
    assert search_interval("Ohm", 1e8) == (1.0, 1e9)  # widened a decade beyond a present value outside
    assert search_interval("F", 4.7e-6) == (1e-12, 1.0)
    with pytest.raises(InputError):
        search_interval("V")

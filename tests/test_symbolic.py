"""Formulas derived with sympy from the nodal equations, against the numeric engine and textbooks."""

from __future__ import annotations

import math

import numpy as np
import pytest

import devmodels as dm
from devmodels.analysis import terminate
from devmodels.fet import FetModel
from devmodels.symbolic import RESULTS, derive, element_values

sp = pytest.importorskip("sympy")


def _random_bjt(rng):
    return dm.HybridPi(gm=rng.uniform(1e-3, 0.2), r_pi=rng.uniform(200, 2e4), ro=rng.uniform(5e3, 2e5),
                       c_pi=rng.uniform(1e-13, 2e-11), c_mu=rng.uniform(1e-14, 3e-12), rb=rng.uniform(5, 300),
                       r_mu=rng.uniform(1e6, 1e8), rcx=rng.uniform(1, 20), rex=rng.uniform(0.5, 5))


def _random_fet(rng):
    return FetModel(gm=rng.uniform(1e-3, 0.1), gmb=rng.uniform(0, 0.02), ro=rng.uniform(2e3, 2e5),
                    cgs=rng.uniform(1e-13, 1e-11), cgd=rng.uniform(1e-14, 2e-12), csb=rng.uniform(0, 1e-12),
                    cdb=rng.uniform(0, 1e-12), rg=rng.uniform(1, 50), rdx=rng.uniform(0, 10),
                    rsx=rng.uniform(0, 5))


def _check(config, model, results, rng, **ext):
    values = element_values(model, **ext)
    rs, rl = float(rng.uniform(10, 5e3)), float(rng.uniform(100, 1e5))
    f = float(10 ** rng.uniform(3, 9))
    t = terminate(dm.Stage(model, config, **ext).two_port([f]), rs, rl)
    for result in results:
        formula = derive(config, result, set(values))
        got = formula.value({**values, "R_S": rs, "R_L": rl}, f)
        want = complex(getattr(t, result)[0])
        assert got == pytest.approx(want, rel=1e-8), (config, result)


CONFIGS = ["ce", "cb", "cc", "cs", "cg", "cd"]


@pytest.mark.parametrize("config", CONFIGS)
def test_formulas_equal_the_numeric_engine_at_random_values(config):
    # The sympy derivation (symbolic.py, Cramer's rule on the nodal matrix) against the
    # numeric engine (indefinite matrix, Kron reduction, chain parameters): two independent
    # routes must agree at random element values, frequencies and terminations.
    rng = np.random.default_rng(sum(map(ord, config)))
    fet = config in ("cs", "cg", "cd")
    for _ in range(2):
        full = _random_fet(rng) if fet else _random_bjt(rng)
        # the usual elements, with the external emitter/source and feedback resistors
        if fet:
            model = FetModel(gm=full.gm, gmb=full.gmb, ro=full.ro, cgs=full.cgs, cgd=full.cgd)
        else:
            model = dm.HybridPi(gm=full.gm, r_pi=full.r_pi, ro=full.ro, c_pi=full.c_pi, c_mu=full.c_mu,
                                rb=full.rb)
        _check(config, model, RESULTS, rng, rdeg=float(rng.uniform(1, 200)),
               rfb=float(rng.uniform(5e3, 1e5)))


@pytest.mark.parametrize("config", CONFIGS)
def test_formulas_with_every_element(config):
    # As above with every element of the model (series resistances, r_mu, Csb, Cdb, ...);
    # one result per configuration, since each derivation takes about a second.
    rng = np.random.default_rng(7 + sum(map(ord, config)))
    model = _random_fet(rng) if config in ("cs", "cg", "cd") else _random_bjt(rng)
    _check(config, model, ("av",), rng, rdeg=float(rng.uniform(1, 200)), rfb=float(rng.uniform(5e3, 1e5)))


@pytest.mark.parametrize("config", ["ce", "cs", "cd"])
def test_ideal_source_and_open_load(config):
    # Without R_S the source is ideal (avs = av) and without R_L the load is open; the numeric
    # engine with rs = 0 and rl = inf is the reference.
    if config in ("cs", "cd"):
        model = FetModel(gm=0.02, gmb=3e-3, ro=15e3, cgs=0.9e-12, cgd=0.2e-12, rg=12.0)
    else:
        model = dm.HybridPi(gm=0.04, r_pi=2.5e3, ro=60e3, c_pi=12e-12, c_mu=1.5e-12, rb=60.0)
    values = element_values(model)
    f = 2e6
    t = terminate(dm.Stage(model, config).two_port([f]), 0.0, math.inf)
    for result in ("av", "avs", "zin", "zout"):
        formula = derive(config, result, set(values), rs=False, rl=False)
        assert formula.value(values, f) == pytest.approx(complex(getattr(t, result)[0]), rel=1e-8)


def _zero(expr):
    return sp.simplify(expr) == 0


def test_low_frequency_forms_match_textbooks():
    g_m, r_pi, r_o, r_b, R_L, R_S, g_mb = sp.symbols("gm r_pi ro rb R_L R_S gmb", positive=True)
    par = r_o * R_L / (r_o + R_L)
    # CE: av = -gm (r_pi/(rb + r_pi)) (ro || RL) (Gray, Hurst, Lewis and Meyer, ch. 7; from memory).
    ce = derive("ce", "av", low_frequency=True).expr
    assert _zero(ce - (-g_m * r_pi / (r_b + r_pi) * par))
    # CE input resistance rb + r_pi (same text; from memory).
    assert _zero(derive("ce", "zin", low_frequency=True).expr - (r_b + r_pi))
    # CS: av = -gm (ro || RL) (Sedra and Smith, CS amplifier; from memory).
    assert _zero(derive("cs", "av", low_frequency=True).expr - (-g_m * par))
    # CD: av = gm R' / (1 + (gm + gmb) R'), R' = ro || RL (Razavi, Design of Analog CMOS ICs,
    # ch. 3; from memory).
    assert _zero(derive("cd", "av", low_frequency=True).expr - g_m * par / (1 + (g_m + g_mb) * par))
    # CG (Rs = 0): av = ((gm + gmb) ro + 1) RL / (ro + RL) (Razavi ch. 3; from memory).
    assert _zero(derive("cg", "av", low_frequency=True).expr - ((g_m + g_mb) * r_o + 1) * R_L / (r_o + R_L))
    # CG output resistance with Rs: ro + (1 + (gm + gmb) ro) RS (Razavi ch. 3; from memory).
    assert _zero(derive("cg", "zout", low_frequency=True).expr - (r_o + (1 + (g_m + g_mb) * r_o) * R_S))


def test_high_frequency_cs_input_admittance():
    # CS input admittance with capacitances and a load R_L, in the Miller form
    # Yin = s Cgs + s Cgd (1 - av(s)) (Miller, 1920; any analog text, from memory).
    s = sp.Symbol("s")
    zin = derive("cs", "zin", {"gm", "ro", "cgs", "cgd"}).expr
    av = derive("cs", "av", {"gm", "ro", "cgs", "cgd"}).expr
    C_gs, C_gd = sp.Symbol("cgs", positive=True), sp.Symbol("cgd", positive=True)
    assert _zero(1 / zin - (s * C_gs + s * C_gd * (1 - av)))


def test_nonexistent_result_is_none():
    # A FET gate with no capacitance draws no current: the input impedance is open.
    f = derive("cs", "zin", {"gm", "ro"})
    assert f.expr is None and f.value({"gm": 1e-3, "ro": 1e4}) is None and f.text() == "open/unbounded"


def test_latex_and_errors():
    f = derive("ce", "av", low_frequency=True)
    assert "g_{m}" in f.latex() and "r_{\\pi}" in f.latex()
    with pytest.raises(dm.InputError, match="result: unknown"):
        derive("ce", "gain")
    with pytest.raises(dm.InputError, match="elements: cgs not in the bipolar model"):
        derive("ce", "av", {"gm", "cgs"})
    with pytest.raises(dm.InputError, match="config"):
        derive("cx", "av")
    with pytest.raises(dm.InputError, match="values: missing"):
        derive("ce", "av").value({"gm": 1.0})


def test_stage_with_its_network_in_symbols():
    # A stage as built (divider, RC, partly bypassed RE, coupling capacitors) derived from its
    # own netlist (derive_stage) against the numeric engine, and the network's elements appear
    # as symbols named by their keys.
    from devmodels.stagenetwork import StageNetwork
    from devmodels.symbolic import derive_stage, engine_check

    m = dm.HybridPi(gm=0.04, r_pi=2.5e3, ro=60e3, rb=50.0)
    net = StageNetwork("divider", r1=47e3, r2=10e3, rc=4.7e3, re=1.2e3, re_bypassed=1e3, c_bypass=22e-6,
                       c_in=1e-6)
    st = dm.Stage(m, "ce", network=net)
    f = derive_stage(st, "avs", rl=True, rs=True)
    names = {str(x) for x in f.expr.free_symbols}
    assert {"r1", "r2", "rc", "re_unbypassed", "re_bypassed", "c_bypass", "c_in"} <= names
    for freq in (3.0, 300.0, 30e3):
        chk = engine_check(f, st, freq, 600.0, 10e3)
        assert chk.rel_diff < 1e-9


# --- lead inductances (issue 14) -------------------------------------------------------------------

@pytest.mark.parametrize("config", ["ce", "cb", "cs", "cd"])
def test_formulas_with_lead_inductances_equal_the_engine(config):
    # Inductors stamped 1/(s L) in the sympy route against the numeric engine's 1/(jwL).
    import dataclasses

    rng = np.random.default_rng(11 + sum(map(ord, config)))
    fet = config in ("cs", "cg", "cd")
    leads = {n: float(rng.uniform(0.2e-9, 2e-9)) for n in (("l_g", "l_d", "l_s") if fet else ("l_b", "l_c", "l_e"))}
    base = _random_fet(rng) if fet else _random_bjt(rng)
    model = dataclasses.replace(base, **leads)
    _check(config, model, ("av", "zin"), rng)


def test_ce_input_impedance_with_emitter_lead_inductance():
    # By hand (KVL around the input; from memory): the base current i sets v_pi = i Z_pi, the
    # emitter lead carries i (1 + gm Z_pi), so zin = s (L_b + L_e) + Z_pi + s L_e gm Z_pi with
    # Z_pi = r_pi / (1 + s C_pi r_pi); its real part has the familiar gm L_e / C_pi at high
    # frequency.  sympy checks that the derived formula equals it identically.
    f = derive("ce", "zin", {"gm", "r_pi", "c_pi", "l_b", "l_e"}, rs=False, rl=True)  # R_L: no effect here
    s = sp.Symbol("s")
    gm, r_pi, c_pi, l_b, l_e = (sp.Symbol(n, positive=True) for n in ("gm", "r_pi", "c_pi", "l_b", "l_e"))
    z_pi = r_pi / (1 + s * c_pi * r_pi)
    want = s * (l_b + l_e) + z_pi + s * l_e * gm * z_pi
    assert sp.simplify(f.expr - want) == 0


def test_low_frequency_shorts_the_lead_inductances():
    with_leads = derive("ce", "av", {"gm", "r_pi", "ro", "rb", "rex", "l_b", "l_c", "l_e"}, low_frequency=True)
    without = derive("ce", "av", {"gm", "r_pi", "ro", "rb", "rex"}, low_frequency=True)
    assert sp.simplify(with_leads.expr - without.expr) == 0
    assert not {"l_b", "l_c", "l_e"} & set(with_leads.names)


def test_engine_check_at_0_hz_leaves_the_leads_out():
    from devmodels.symbolic import engine_check

    m = dm.HybridPi(gm=0.04, r_pi=2500.0, ro=50e3, rb=60.0, rex=1.0, l_b=1e-9, l_e=0.5e-9)
    f = derive("ce", "av", {"gm", "r_pi", "ro", "rb", "rex", "l_b", "l_e"}, low_frequency=True)
    chk = engine_check(f, dm.Stage(m, "ce"), 0.0, 50.0, 1e3)
    assert chk.rel_diff is not None and chk.rel_diff < 1e-12

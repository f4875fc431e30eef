"""Terminated analysis at extreme ratios (almost lossless ports) against a 50-digit reference.

The reference is independent of devmodels: each stage is written here as its small-signal
circuit with invented element values, its nodal equations are solved in mpmath at 50
significant digits, and every result is computed from its textbook definition there:

* Y of a configuration: the nodal matrix with the common terminal as the reference node,
  internal nodes eliminated (Schur complement; any nodal-analysis text, e.g. Vlach and
  Singhal, *Computer Methods for Circuit Analysis and Design*, from memory);
* zin, av, GT, GP, GA: the circuit solved with the source (Vs behind Zs) and the load stamped
  in, and the powers themselves: GT = P_L/P_avs, GP = P_L/P_in, GA = P_avo/P_avs (Gonzalez,
  *Microwave Transistor Amplifiers*, 2nd ed., sec. 2.6, from memory);
* S = (I - z0 Y)(I + z0 Y)^-1 (Pozar, *Microwave Engineering*, table 4.2, from memory);
* K = (1 - |S11|^2 - |S22|^2 + |Delta|^2) / (2 |S12 S21|) (Rollett, IRE Trans. CT-9, 1962, in
  the S form of Gonzalez, ch. 3, from memory);
* mu = (1 - |S11|^2) / (|S22 - Delta S11*| + |S12 S21|) and mu' likewise (Edwards and Sinsky,
  IEEE Trans. MTT 40(12), 1992, from memory);
* U = |k - 1|^2 / (2 K |k| - 2 Re k), k = S21/S12 (Mason, IRE Trans. CT-1, 1954, in the S form
  of Gupta, IEEE Trans. MTT 40(5), 1992, from memory).

At 50 digits these S forms keep 25 or more digits even where 1 - |S11| is 1e-22.

Part 1 feeds devmodels a Y computed in mpmath and rounded to double -- what a perfect nodal
engine would deliver -- so it tests the analysis formulas alone.  Part 2 runs the whole
pipeline: ``Stage(model, config).two_port`` then ``terminate``, and ``terminate_configs``.

Mason's U of a common-gate stage is the one quantity its own rounded Y does not determine
to 1e-6 at low frequency (shown below); it is checked from the indefinite matrix.
"""

from __future__ import annotations

import math

import mpmath as mp
import numpy as np
import pytest

import devmodels as dm
from devmodels.analysis import stability_arrays_y, terminate, terminate_arrays_y, terminate_configs

mp.mp.dps = 50
RTOL = 1e-6
FREQ = np.logspace(0, 11, 12)  # 1 Hz .. 100 GHz, every decade
RS, RL, Z0 = 50.0, 1e3, 50.0

#: Configuration -> (port-1 terminal, port-2 terminal, common terminal).
PORTS = {"cs": ("g", "d", "s"), "cg": ("s", "d", "g"), "cd": ("g", "s", "d"),
         "ce": ("b", "c", "e"), "cb": ("e", "c", "b"), "cc": ("b", "e", "c")}

# Invented element values (SI units).
FET = dict(gm=5e-3, gmb=1e-3, ro=20e3, cgs=200e-15, cgd=20e-15, csb=50e-15, cdb=40e-15)
BJT = dict(gm=40e-3, r_pi=2.5e3, ro=80e3, c_pi=20e-12, c_mu=2e-12, rb=50.0)
#: Almost lossless: tiny gate resistance, no body effect, ro of a gigaohm.
FET_LOSSLESS = dict(gm=5e-3, ro=1e9, cgs=200e-15, cgd=20e-15, rg=0.01)


# --- the reference circuit in mpmath --------------------------------------------------------
def fet_elements(p):
    """Elements of the FET model (fet.py docstring): rg g-g', Cgs g'-s, Cgd g'-d, ro d-s,
    gm v(g's) and gmb v(body,s) from d to s, Csb s-body, Cdb d-body."""
    gi = "g'" if p.get("rg", 0) else "g"
    els = []
    if p.get("rg", 0):
        els.append(("y", "g", gi, lambda s, r=p["rg"]: 1 / mp.mpf(r)))
    els += [("y", gi, "s", lambda s: s * mp.mpf(p.get("cgs", 0))),
            ("y", gi, "d", lambda s: s * mp.mpf(p.get("cgd", 0))),
            ("y", "d", "s", lambda s: 1 / mp.mpf(p["ro"]) if math.isfinite(p.get("ro", math.inf)) else 0),
            ("g", "d", "s", gi, "s", mp.mpf(p["gm"])),
            ("g", "d", "s", "body", "s", mp.mpf(p.get("gmb", 0))),
            ("y", "s", "body", lambda s: s * mp.mpf(p.get("csb", 0))),
            ("y", "d", "body", lambda s: s * mp.mpf(p.get("cdb", 0)))]
    return els


def bjt_elements(p):
    """Hybrid-pi: rb b-b', r_pi || C_pi b'-e, C_mu b'-c, ro c-e, gm v(b'e) from c to e."""
    return [("y", "b", "b'", lambda s: 1 / mp.mpf(p["rb"])),
            ("y", "b'", "e", lambda s: 1 / mp.mpf(p["r_pi"]) + s * mp.mpf(p["c_pi"])),
            ("y", "b'", "c", lambda s: s * mp.mpf(p["c_mu"])),
            ("y", "c", "e", lambda s: 1 / mp.mpf(p["ro"])),
            ("g", "c", "e", "b'", "e", mp.mpf(p["gm"]))]


def nodal(elements, config, f):
    """Nodal matrix (ports first, then internal nodes) with the common terminal as reference."""
    p1, p2, common = PORTS[config]
    alias = {"body": common}  # the body (FET) is tied to the common terminal
    names = {alias.get(x, x) for e in elements for x in e[1:3] + (e[3:5] if e[0] == "g" else ())}
    order = [p1, p2] + sorted(names - {p1, p2, common})
    idx = {n: i for i, n in enumerate(order)}
    n = len(order)
    Y = mp.zeros(n, n)
    s = 2j * mp.pi * mp.mpf(f)
    for e in elements:
        a, b = (idx.get(alias.get(x, x)) for x in e[1:3])
        if e[0] == "y":
            y = e[3](s)
            for i, j, sign in ((a, a, 1), (b, b, 1), (a, b, -1), (b, a, -1)):
                if i is not None and j is not None:
                    Y[i, j] += sign * y
        else:  # a current g (V[p] - V[q]) leaving node a through the source, into node b
            cp, cq = (idx.get(alias.get(x, x)) for x in e[3:5])
            for row, rs in ((a, 1), (b, -1)):
                for col, cs in ((cp, 1), (cq, -1)):
                    if row is not None and col is not None:
                        Y[row, col] += rs * cs * e[5]
    return Y


def solve(Y, rhs):
    return mp.lu_solve(Y, mp.matrix(rhs))


def two_port_y(Y):
    """Y of the two ports: drive one port at 1 V with the other shorted, read the port currents."""
    n = Y.rows
    out = mp.zeros(2, 2)
    for j in range(2):
        if n == 2:
            v = [1 if i == j else 0 for i in range(2)]
        else:
            inner = Y[2:, 2:]
            v_in = solve(inner, [-Y[2 + i, j] for i in range(n - 2)])
            v = [1 if i == j else 0 for i in range(2)] + [v_in[i] for i in range(n - 2)]
        for i in range(2):
            out[i, j] = mp.fsum(Y[i, k] * v[k] for k in range(n))
    return out


def reference(elements, config, f, zs=RS, zl=RL, z0=Z0):
    """Every checked quantity from its definition (module docstring), at 50 digits."""
    Yn = nodal(elements, config, f)
    n = Yn.rows
    zs, zl, z0 = mp.mpc(zs), mp.mpc(zl), mp.mpf(z0)
    ys, yl = 1 / zs, 1 / zl
    vs = mp.mpf(1)

    def terminated(with_load, vsrc, i2):
        A = Yn.copy()
        A[0, 0] += ys
        if with_load:
            A[1, 1] += yl
        rhs = [vsrc * ys, i2] + [0] * (n - 2)
        return solve(A, rhs)

    v = terminated(True, vs, 0)
    v1, v2 = v[0], v[1]
    i1 = (vs - v1) / zs
    p_in = mp.re(v1 * mp.conj(i1)) / 2
    p_l = abs(v2) ** 2 * mp.re(yl) / 2
    p_avs = abs(vs) ** 2 / (8 * mp.re(zs))
    v2_oc = terminated(False, vs, 0)[1]
    zout = terminated(False, 0, 1)[1]  # 1 A into port 2, the source shorted behind Zs
    p_avo = _div(abs(v2_oc) ** 2, 8 * mp.re(zout))
    y = two_port_y(Yn)
    eye = mp.eye(2)
    S = (eye - z0 * y) * mp.inverse(eye + z0 * y)
    s11, s12, s21, s22 = S[0, 0], S[0, 1], S[1, 0], S[1, 1]
    delta = s11 * s22 - s12 * s21
    a12 = abs(s12 * s21)
    K = _div(1 - abs(s11) ** 2 - abs(s22) ** 2 + abs(delta) ** 2, 2 * a12)
    k = _div(s21, s12)
    return {"y": y, "zin": v1 / i1, "av": v2 / v1, "avs": v2 / vs, "zout": zout,
            "gt": p_l / p_avs, "gp": p_l / p_in, "ga": p_avo / p_avs, "k": K, "delta": abs(delta),
            "mu": (1 - abs(s11) ** 2) / (abs(s22 - delta * mp.conj(s11)) + a12),
            "mu_prime": (1 - abs(s22) ** 2) / (abs(s11 - delta * mp.conj(s22)) + a12),
            "u": _div(abs(k - 1) ** 2, 2 * K * abs(k) - 2 * mp.re(k)) if s12 != 0 else
            _div(abs(s21) ** 2, (1 - abs(s11) ** 2) * (1 - abs(s22) ** 2)),  # the unilateral limit
            "msg": abs(k) if K <= 1 else abs(k) * (K - mp.sqrt(K ** 2 - 1))}


def _div(a, b):
    return mp.inf if b == 0 else a / b


STAGES = {  # label -> (element values, configuration)
    "nmos cd rg=1": (dict(FET, rg=1.0), "cd"),
    "nmos cd rg=10": (dict(FET, rg=10.0), "cd"),
    "nmos cs rg=2": (dict(FET, rg=2.0), "cs"),
    "nmos cg rg=2": (dict(FET, rg=2.0), "cg"),
    "bjt ce": (BJT, "ce"),
    "bjt cb": (BJT, "cb"),
    "bjt cc": (BJT, "cc"),
}


def elements_of(params, config):
    return bjt_elements(params) if config in ("ce", "cb", "cc") else fet_elements(params)


def model_of(params, config):
    if config in ("ce", "cb", "cc"):
        return dm.HybridPi(**params)
    return dm.FetModel(**params)


_REF_CACHE: dict = {}


def references(label, freq=FREQ, zs=RS, zl=RL):
    key = (label, tuple(freq), zs, zl)
    if key not in _REF_CACHE:
        params, config = STAGES[label] if label in STAGES else LOSSLESS[label]
        els = elements_of(params, config)
        _REF_CACHE[key] = [reference(els, config, f, zs, zl) for f in freq]
    return _REF_CACHE[key]


def rounded_y(refs):
    return np.array([[[complex(r["y"][i, j]) for j in range(2)] for i in range(2)] for r in refs])


def worst(got, refs, name):
    """Largest relative error of a real quantity against the reference.

    A power gain that is negative (power flowing out of a negative input or output
    resistance) has no dB value: there devmodels must give NaN (error 0), elsewhere a number.
    """
    want = np.array([float(r[name]) for r in refs])
    got = np.asarray(got, dtype=float)
    if name in ("gp", "ga"):
        neg = want < 0
        if np.any(neg):
            if not np.all(np.isnan(got[neg])):
                return math.inf
            got, want = got[~neg], want[~neg]
            if got.size == 0:
                return 0.0
    return float(np.max(np.abs(got - want) / np.abs(want)))


def checked(res, refs, u=True):
    """Relative errors of K, mu, mu', U, GP, GA, GT, Re(zin) and the complex zin, av, zout."""
    lin = lambda db: 10 ** (np.asarray(db) / 10)  # noqa: E731
    err = {"k": worst(res.k, refs, "k"), "mu": worst(res.mu, refs, "mu"),
           "mu_prime": worst(res.mu_prime, refs, "mu_prime"),
           "gp": worst(lin(res.gp_db), refs, "gp"), "ga": worst(lin(res.ga_db), refs, "ga"),
           "gt": worst(lin(res.gt_db), refs, "gt"), "msg": worst(lin(res.msg_db), refs, "msg"),
           "delta": worst(res.delta, refs, "delta")}
    if u:
        err["u"] = worst(lin(res.u_db), refs, "u")
    err["re_zin"] = float(np.max([abs(z.real - float(mp.re(r["zin"]))) / abs(float(mp.re(r["zin"])))
                                  for z, r in zip(res.zin, refs)]))
    for name in ("zin", "av", "avs", "zout"):
        err[name] = float(np.max([abs(complex(z) - complex(r[name])) / abs(complex(r[name]))
                                  for z, r in zip(getattr(res, name), refs)]))
    return err


# --- part 1: the analysis alone, on Y from the 50-digit reference rounded to double -----------
@pytest.mark.parametrize("label", list(STAGES))
def test_analysis_of_exactly_rounded_y_within_1e6(label):
    # U of a common-gate stage is not determined by its rounded Y at low frequency (see
    # test_common_gate_u_needs_the_indefinite_matrix); it is checked from the indefinite
    # matrix below.
    refs = references(label)
    tp = dm.TwoPort(FREQ, rounded_y(refs), "y", Z0)
    err = checked(terminate(tp, RS, RL, Z0), refs, u=STAGES[label][1] != "cg")
    bad = {k: v for k, v in err.items() if not v < RTOL}
    assert not bad, f"{label}: relative errors above {RTOL:g}: {bad}"


LOSSLESS = {"almost lossless cs": (FET_LOSSLESS, "cs"), "almost lossless cd": (FET_LOSSLESS, "cd"),
            "almost lossless cg": (FET_LOSSLESS, "cg")}


@pytest.mark.parametrize("label", list(LOSSLESS))
@pytest.mark.parametrize("zs, zl", [(RS, RL), (50 + 30j, 2e3 - 500j)])
def test_almost_lossless_stage_at_1khz(label, zs, zl):
    # 1 - |S11|^2 is below 1e-15 at the gate here: the S forms in double keep no digit of it.
    f = np.array([1e3])
    refs = references(label, f, zs, zl)
    tp = dm.TwoPort(f, rounded_y(refs), "y", Z0)
    err = checked(terminate(tp, zs, zl, Z0), refs, u=LOSSLESS[label][1] != "cg")
    bad = {k: v for k, v in err.items() if not v < RTOL}
    assert not bad, f"{label}: relative errors above {RTOL:g}: {bad}"


def indefinite_ref(elements, config, f):
    """Indefinite matrix (terminals in the order of the package: g, d, s or b, c, e) at 50
    digits: the nodal matrix without a reference node, internal nodes eliminated (Schur
    complement); the body is tied to the common terminal of ``config``."""
    terminals = ["b", "c", "e"] if config in ("ce", "cb", "cc") else ["g", "d", "s"]
    common = PORTS[config][2]
    alias = {"body": common}
    names = {alias.get(x, x) for e in elements for x in e[1:3] + (e[3:5] if e[0] == "g" else ())}
    order = terminals + sorted(names - set(terminals))
    idx = {n: i for i, n in enumerate(order)}
    n = len(order)
    Y = mp.zeros(n, n)
    s = 2j * mp.pi * mp.mpf(f)
    for e in elements:
        a, b = (idx[alias.get(x, x)] for x in e[1:3])
        if e[0] == "y":
            y = e[3](s)
            Y[a, a] += y
            Y[b, b] += y
            Y[a, b] -= y
            Y[b, a] -= y
        else:
            cp, cq = (idx[alias.get(x, x)] for x in e[3:5])
            for row, rsign in ((a, 1), (b, -1)):
                Y[row, cp] += rsign * e[5]
                Y[row, cq] -= rsign * e[5]
    if n == 3:
        return Y
    return Y[:3, :3] - Y[:3, 3:] * mp.inverse(Y[3:, 3:]) * Y[3:, :3]


def rounded_indefinite(elements, config, freq):
    return np.array([[[complex(v) for v in row] for row in indefinite_ref(elements, config, f).tolist()]
                     for f in freq])


@pytest.mark.parametrize("label", ["nmos cg rg=2", "almost lossless cg", "nmos cs rg=2", "bjt cb"])
def test_u_from_the_rounded_indefinite_matrix_within_1e6(label):
    # Mason's denominator is a cofactor of Re(indefinite matrix); all its cofactors are equal
    # (zero row and column sums), so the U of any configuration can use the best-conditioned one.
    params, config = STAGES[label] if label in STAGES else LOSSLESS[label]
    refs = references(label)
    y3 = rounded_indefinite(elements_of(params, config), config, FREQ)
    t = {"g": 0, "d": 1, "s": 2, "b": 0, "c": 1, "e": 2}
    p1, p2, _ = (t[x] for x in PORTS[config])
    y = y3[:, [p1, p2]][:, :, [p1, p2]]
    np.testing.assert_allclose(y, rounded_y(refs), rtol=1e-14)  # the same two-port
    u = 10 ** (stability_arrays_y(y, Z0, indefinite=y3)["u_db"] / 10)
    np.testing.assert_allclose(u, [float(r["u"]) for r in refs], rtol=RTOL)


def test_common_gate_u_needs_the_indefinite_matrix():
    # The limit of any formula on the common-gate Y alone: g11 g22 and g12 g21 are both about
    # gm/ro while their difference is set by the gate losses, so rounding Y to double moves
    # U itself by more than 1e-6 at low frequency -- shown here in exact arithmetic on the
    # rounded Y (Mason's Y form, from memory).
    refs = references("nmos cg rg=2")
    y = rounded_y(refs)[0]  # 1 Hz
    g = [[mp.mpf(y[i, j].real) for j in range(2)] for i in range(2)]
    num = abs(mp.mpc(y[1, 0]) - mp.mpc(y[0, 1])) ** 2
    den = 4 * (g[0][0] * g[1][1] - g[0][1] * g[1][0])
    u_of_rounded = num / den if den != 0 else mp.inf
    assert not abs(u_of_rounded - refs[0]["u"]) < 1e-3 * refs[0]["u"]


def test_the_reference_sees_an_almost_lossless_gate():
    # The point of the cases above: 1 - |S11|^2 far below double precision's 1e-16.
    refs = references("nmos cd rg=1")
    y = refs[0]["y"]  # 1 Hz
    z0 = mp.mpf(Z0)
    yin = y[0, 0] - y[0, 1] * y[1, 0] / (y[1, 1] + 1 / z0)
    loss = 4 * z0 * mp.re(yin) / abs(1 + z0 * yin) ** 2  # 1 - |S11|^2 (Pozar, sec. 2.3, from memory)
    assert loss < 1e-18


def test_terminate_arrays_y_and_stability_arrays_y_agree_with_terminate():
    refs = references("nmos cd rg=1")
    y = rounded_y(refs)
    res = terminate(dm.TwoPort(FREQ, y, "y", Z0), RS, RL, Z0)
    st = stability_arrays_y(y, Z0)
    ta = terminate_arrays_y(y, RS, RL)
    for name in ("k", "mu", "mu_prime", "u_db", "msg_db", "delta"):
        np.testing.assert_array_equal(st[name], getattr(res, name))
    for name in ("zin", "av", "avs", "ai", "zout", "gt_db", "gp_db", "ga_db"):
        np.testing.assert_array_equal(ta[name], getattr(res, name))


@pytest.mark.parametrize("label", ["nmos cs rg=2", "nmos cd rg=1", "bjt cc"])
def test_given_z_parameters_are_analysed_as_accurately(label):
    # A two-port given as Z (the 50-digit Z rounded to double) is converted to Y and goes
    # through the same forms; rounding Z componentwise keeps its small real parts, so the
    # same bound holds.  (Given S cannot do as well: rounding S near the unit circle already
    # loses the digits of 1 - |S11|^2.)
    refs = references(label)
    z = np.array([[[complex(v) for v in row] for row in mp.inverse(r["y"]).tolist()] for r in refs])
    err = checked(terminate(dm.TwoPort(FREQ, z, "z", Z0), RS, RL, Z0), refs)
    bad = {k: v for k, v in err.items() if not v < RTOL}
    assert not bad, f"{label} given as Z: relative errors above {RTOL:g}: {bad}"


# --- what does not exist, decided exactly ----------------------------------------------------
def test_lossless_fet_has_no_u_but_a_k():
    # No gate resistance, no ro, no body: every real part of Y is exactly zero except gm's, so
    # Mason's denominator g11 g22 - g12 g21 is exactly 0 (U unbounded, NaN -> null); K exists
    # in CS and CD.  In CG nothing couples the drain back to the source (y12 = 0 exactly):
    # S12 S21 = 0, so K and MSG are unbounded (NaN) too.
    p = dict(gm=5e-3, cgs=200e-15, cgd=20e-15)
    f = np.array([1e3, 1e9])
    for config in ("cs", "cd", "cg"):
        refs = [reference(fet_elements(p), config, fi) for fi in f]
        y = rounded_y(refs)
        res = terminate(dm.TwoPort(f, y, "y", Z0), RS, RL, Z0)
        assert np.all(np.isnan(res.u_db)), config
        for r in refs:  # Mason's Y form at 50 digits: the denominator is exactly zero
            g = [[mp.re(r["y"][i, j]) for j in range(2)] for i in range(2)]
            assert g[0][0] * g[1][1] - g[0][1] * g[1][0] == 0, config
        if config == "cg":
            assert np.all(y[:, 0, 1] == 0) and np.all(np.isnan(res.k)) and np.all(np.isnan(res.msg_db))
        else:
            np.testing.assert_allclose(res.k, [float(r["k"]) for r in refs], rtol=1e-9)
        # and from the package's own engine (no internal node: the zeros stay exact)
        staged = terminate(dm.Stage(dm.FetModel(**p), config).two_port(f, "y"), RS, RL, Z0)
        assert np.all(np.isnan(staged.u_db)), config
        assert np.array_equal(np.isnan(staged.k), np.isnan(res.k)), config


def test_unilateral_network_k_does_not_exist_and_mag_is_the_unilateral_maximum():
    # y12 = 0 exactly: S12 S21 = 0, K unbounded (NaN); a y12 of 1e-300 is not zero.
    y = np.array([[[1e-3 + 1e-6j, 0.0], [0.05, 1e-4]], [[1e-3 + 1e-6j, 1e-300], [0.05, 1e-4]]])
    st = stability_arrays_y(y, 50.0)
    # the MAG at y12 = 0 is the unilateral maximum |y21|^2/(4 g11 g22) (Gonzalez, Microwave
    # Transistor Amplifiers, sec. 3.2, from memory), continuous with y12 = 1e-300
    assert np.isnan(st["k"][0])
    assert st["msg_db"][0] == pytest.approx(10 * math.log10(0.05 ** 2 / (4 * 1e-3 * 1e-4)), abs=1e-9)
    assert st["msg_db"][1] == pytest.approx(st["msg_db"][0], abs=1e-9)
    assert np.isfinite(st["k"][1]) and st["k"][1] > 1e290
    # U of the unilateral network: |y21|^2 / (4 g11 g22) (Mason 1954, from memory)
    assert st["u_db"][0] == pytest.approx(10 * math.log10(0.05 ** 2 / (4 * 1e-3 * 1e-4)), abs=1e-12)


def test_no_runtime_warning_escapes():
    y = np.array([[[0j, 0j], [5e-3, 5e-3]], [[1j, 0j], [1.0, 0j]]])
    with np.errstate(all="raise"):
        stability_arrays_y(y, 50.0)
        terminate_arrays_y(y[:1], 50.0, 1e3)


# --- part 2: the whole pipeline --------------------------------------------------------------
@pytest.mark.parametrize("label", list(STAGES) + list(LOSSLESS))
def test_stage_pipeline_end_to_end_within_1e6(label):
    # Stage(model, config).two_port(f, "y") -> terminate, against the 50-digit circuit.  The
    # nodal engine must not lose the small real parts of Y (its Kron reduction through a
    # small gate resistance); the message names the worst Y entry when it does.
    params, config = STAGES[label] if label in STAGES else LOSSLESS[label]
    refs = references(label)
    tp = dm.Stage(model_of(params, config), config).two_port(FREQ, "y")
    yref = rounded_y(refs)
    # Y entrywise, real and imaginary parts separately (the small real parts matter)
    y_err = {}
    for i in range(2):
        for j in range(2):
            for part in ("real", "imag"):
                a, b = getattr(tp.data[:, i, j], part), getattr(yref[:, i, j], part)
                with np.errstate(divide="ignore", invalid="ignore"):
                    e = np.where(b == 0, np.abs(a), np.abs(a - b) / np.abs(b))
                y_err[f"{part}(y{i + 1}{j + 1})"] = float(np.max(e))
    # terminate() on the two-port (U of CG only from the indefinite matrix, as above) and
    # terminate_configs() on the stage, which has the indefinite matrix
    err = checked(terminate(tp, RS, RL, Z0), refs, u=config != "cg")
    fused = terminate_configs(dm.Stage(model_of(params, config), config), [config], FREQ, RS, RL, Z0)
    err.update({f"{k} (configs)": v for k, v in checked(fused[config], refs).items()})
    bad = {k: v for k, v in err.items() if not v < RTOL}
    worst_y = max(y_err, key=y_err.get)
    assert not bad, (f"{label}: relative errors above {RTOL:g}: {bad}; worst Y entry "
                     f"{worst_y} off by {y_err[worst_y]:.1e}")


def test_terminate_configs_equals_terminate_for_a_fet_with_body_effect():
    # A FET's body goes to the common terminal, so each configuration has its own matrix.
    m = dm.FetModel(**dict(FET, rg=1.0))
    # (U is not compared: terminate_configs takes its denominator from the best cofactor of
    # the indefinite matrix, terminate from the two-port -- see the tests above.)
    fused = terminate_configs(dm.Stage(m, "cs"), ("cs", "cg", "cd"), FREQ, RS, RL, Z0)
    for c in ("cs", "cg", "cd"):
        ref = terminate(dm.Stage(m, c).two_port(FREQ), RS, RL, Z0)
        for name in ("zin", "k", "gp_db", "mu", "mu_prime", "msg_db", "ga_db"):
            np.testing.assert_allclose(getattr(fused[c], name), getattr(ref, name), rtol=1e-12,
                                       equal_nan=True, err_msg=f"{c} {name}")

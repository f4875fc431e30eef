r"""Results of a stage as formulas in symbols, derived from the nodal equations with sympy.

Nothing here is a typed-in textbook formula: the small-signal circuit of the stage is
stamped element by element into a symbolic nodal admittance matrix (the same elements
and the same places as :mod:`devmodels.indefinite` and :class:`devmodels.fet.FetModel`),
the common terminal is the reference node, and each result is solved from the nodal
equations by Cramer's rule and simplified:

- ``av``  = V2/V1: port 1 driven by an ideal source V1, load R_L at port 2;
- ``avs`` = V2/Vs: source Vs behind R_S at port 1, load R_L;
- ``ai``  = -I2/I1 = (V2/R_L)/I1: current I1 into port 1, load R_L;
- ``zin`` = V1/I1 with R_L at port 2;
- ``zout`` = V2/I2 with the source shorted behind R_S and no load.

``s`` is the Laplace variable (s = j 2 pi f).  Elements that are absent at a bias point
(a zero series resistance, an infinite ro, a zero capacitance, gmb = 0) are left out of the
circuit, so the formula shows only what is there; ``low_frequency=True`` leaves out every
capacitance (s -> 0).  An absent R_S is a short and an absent R_L an open load.

sympy is imported inside this module only (never by ``import devmodels``).
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass

from .configs import CONFIG_TERMINALS
from .constants import BJT_CONFIGS, FET_CONFIGS
from .exceptions import InputError

__all__ = ["Formula", "derive", "element_values", "RESULTS", "BJT_ELEMENTS", "FET_ELEMENTS"]

#: Results that can be derived.
RESULTS: tuple[str, ...] = ("av", "avs", "ai", "zin", "zout")
#: Element symbols of the bipolar hybrid-pi (and the external resistors).
BJT_ELEMENTS: tuple[str, ...] = ("g_m", "r_pi", "r_o", "r_b", "C_pi", "C_mu", "r_mu", "r_cx", "r_ex",
                                 "R_deg", "R_fb")
#: Element symbols of the FET model (and the external resistors).
FET_ELEMENTS: tuple[str, ...] = ("g_m", "g_mb", "r_o", "C_gs", "C_gd", "C_sb", "C_db", "r_g", "r_dx",
                                 "r_sx", "R_deg", "R_fb")
#: Elements present when none are given: the usual textbook sets.
DEFAULT_BJT = ("g_m", "r_pi", "r_o", "r_b", "C_pi", "C_mu")
DEFAULT_FET = ("g_m", "g_mb", "r_o", "C_gs", "C_gd")

_CAPS = {"C_pi", "C_mu", "C_gs", "C_gd", "C_sb", "C_db"}


@dataclass(frozen=True)
class Formula:
    """A derived result.

    Attributes
    ----------
    result : str
        ``av``, ``avs``, ``ai``, ``zin`` or ``zout``.
    config : str
        The configuration.
    expr : sympy.Expr or None
        The simplified expression (``None`` when the result does not exist for this
        circuit, e.g. the input impedance of a FET without gate capacitance: open).
    names : tuple of str
        The symbols it may contain (element names, ``R_S``, ``R_L``, ``s``).
    """

    result: str
    config: str
    expr: object
    names: tuple[str, ...]

    def text(self) -> str:
        """Plain-text form (sympy's ``str``)."""
        return "open/unbounded" if self.expr is None else str(self.expr)

    def latex(self) -> str:
        """LaTeX form."""
        import sympy as sp

        return r"\infty" if self.expr is None else sp.latex(self.expr)

    def value(self, values: dict[str, float], freq: float = 0.0) -> complex | None:
        """The number at element ``values`` (SI units) and frequency ``freq`` (Hz)."""
        import sympy as sp

        if self.expr is None:
            return None
        syms = {str(x): x for x in self.expr.free_symbols}
        missing = [n for n in syms if n != "s" and n not in values]
        if missing:
            raise InputError(f"values: missing {', '.join(sorted(missing))} to evaluate {self.result}")
        subs = {syms[n]: values[n] for n in syms if n != "s"}
        if "s" in syms:
            subs[syms["s"]] = 2j * math.pi * freq
        v = complex(sp.N(self.expr.subs(subs)))
        return v if math.isfinite(v.real) and math.isfinite(v.imag) else None


def _symbol(name: str):
    import sympy as sp

    return sp.Symbol(name, positive=True)


#: Prefix of the conductance symbols used while solving (1/r); replaced by r at the end.
_G = "G__"


def _cond(name: str):
    """The conductance 1/name as its own symbol: the nodal matrix stays polynomial."""
    return _symbol(_G + name)


def _circuit(config: str, present: set[str]):
    """Nodes and stamps of the stage: (node names, passive list, vccs list), reference = common."""
    import sympy as sp

    fet = config in FET_CONFIGS
    terms = ("g", "d", "s") if fet else ("b", "c", "e")
    p1, p2, k = (terms[i] for i in CONFIG_TERMINALS[config])
    S = {n: _symbol(n) for n in present}
    s = sp.Symbol("s")
    passive: list[tuple[str, str, object]] = []
    vccs: list[tuple[str, str, str, str, object]] = []
    nodes = [t for t in terms if t != k]

    def inner(term: str, rname: str, extra: str | None = None) -> str:
        node = term
        for i, r in enumerate((extra, rname)):
            if r is not None and r in present:
                new = f"{term}{i + 1}"
                nodes.append(new)
                passive.append((node, new, _cond(r)))
                node = new
        return node

    def cap(name):
        return s * S[name] if name in present else None

    if fet:
        g = inner("g", "r_g")
        d = inner("d", "r_dx")
        src = inner("s", "r_sx", "R_deg")
        body = k
        for a, b, y in ((g, src, cap("C_gs")), (g, d, cap("C_gd")), (src, body, cap("C_sb")),
                        (d, body, cap("C_db"))):
            if y is not None:
                passive.append((a, b, y))
        if "r_o" in present:
            passive.append((d, src, _cond("r_o")))
        vccs.append((d, src, g, src, S["g_m"]))
        if "g_mb" in present:
            vccs.append((d, src, body, src, S["g_mb"]))
    else:
        b = inner("b", "r_b")
        c = inner("c", "r_cx")
        e = inner("e", "r_ex", "R_deg")
        passive.append((b, e, _cond("r_pi")))
        for a, bb, y in ((b, e, cap("C_pi")), (b, c, cap("C_mu"))):
            if y is not None:
                passive.append((a, bb, y))
        if "r_mu" in present:
            passive.append((b, c, _cond("r_mu")))
        if "r_o" in present:
            passive.append((c, e, _cond("r_o")))
        vccs.append((c, e, b, e, S["g_m"]))
    if "R_fb" in present:
        passive.append((terms[0], terms[1], _cond("R_fb")))
    return nodes, passive, vccs, p1, p2, k


def _matrix(nodes, passive, vccs, ref):
    import sympy as sp

    idx = {n: i for i, n in enumerate(nodes)}
    Y = sp.zeros(len(nodes), len(nodes))

    def add(i, j, v):
        if i in idx and j in idx:
            Y[idx[i], idx[j]] += v

    for a, b, y in passive:
        add(a, a, y)
        add(b, b, y)
        add(a, b, -y)
        add(b, a, -y)
    for frm, to, cp, cn, g in vccs:
        add(frm, cp, g)
        add(frm, cn, -g)
        add(to, cp, -g)
        add(to, cn, g)
    return Y, idx


def _det(M):
    """Determinant of a polynomial matrix (fraction-free, in sympy's polynomial domain)."""
    from sympy.polys.matrices import DomainMatrix

    dM = DomainMatrix.from_Matrix(M)
    return dM.domain.to_sympy(dM.det())


def _solve(Y, rhs, k):
    """V[k] of Y V = rhs by Cramer's rule as (numerator, denominator); None when Y is singular."""
    det = _det(Y)
    if det == 0:
        return None
    Yk = Y.copy()
    Yk[:, k] = rhs
    return _det(Yk), det


def _to_resistances(num, den):
    """Replace each conductance G__r by 1/r in num/den and clear the denominators (polynomials)."""
    import sympy as sp

    gens = sorted(num.free_symbols | den.free_symbols, key=str)
    if not gens:
        return num, den
    pn, pd = sp.Poly(num, *gens), sp.Poly(den, *gens)
    new_gens = [sp.Symbol(str(g)[len(_G):], positive=True) if str(g).startswith(_G) else g for g in gens]
    top = [max(pn.degree(g), pd.degree(g)) if str(g).startswith(_G) else None for g in gens]

    def flip(p):
        terms = {}
        for monom, coeff in p.terms():
            m = tuple(e if t is None else t - e for e, t in zip(monom, top))
            terms[m] = coeff
        return sp.Poly.from_dict(terms, *new_gens).as_expr()

    return flip(pn), flip(pd)


#: Above this many terms in numerator and denominator together, a result is not factored.
FACTOR_TERMS = 120
#: Polynomial factors with more terms than this are collected in s without factoring the
#: coefficients (which would cost seconds and not make them readable).
TIDY_TERMS = 40


def _simplify(nd):
    """Factor numerator and denominator, cancel common factors, write each factor in powers of s."""
    import sympy as sp

    if nd is None:
        return None
    s = sp.Symbol("s")
    pn, pd = _to_resistances(*nd)

    if len(sp.Add.make_args(pn)) + len(sp.Add.make_args(pd)) > FACTOR_TERMS:
        # Too large to be worth factoring (seconds, and no more readable): cancel the common
        # factor only and write numerator and denominator in powers of s.
        g = sp.gcd(pn, pd)
        if g != 1:
            pn, pd = sp.quo(pn, g), sp.quo(pd, g)
        return sp.collect(sp.expand(pn), s) / sp.collect(sp.expand(pd), s)
    (cn, fn), (cd, fd) = sp.factor_list(pn), sp.factor_list(pd)
    num, den = dict(fn), dict(fd)
    for f in list(num):
        if f in den:
            k = min(num[f], den[f])
            num[f] -= k
            den[f] -= k

    def tidy(coeff, factors):
        out = coeff
        for f, e in factors.items():
            if e == 0:
                continue
            if s in f.free_symbols and len(sp.Add.make_args(f)) > 1:
                f = sp.collect(f, s, sp.factor if len(sp.Add.make_args(f)) <= TIDY_TERMS else None)
            out *= f ** e
        return out

    return tidy(cn / cd, num) / tidy(sp.Integer(1), den)


def derive(config: str, result: str, elements=None, *, rs: bool = True, rl: bool = True,
           low_frequency: bool = False) -> Formula:
    """Derive ``result`` of a stage in ``config`` from its nodal equations.

    Parameters
    ----------
    config : {'ce', 'cb', 'cc', 'cs', 'cg', 'cd'}
        Configuration.
    result : {'av', 'avs', 'ai', 'zin', 'zout'}
        The result wanted (definitions in the module docstring).
    elements : iterable of str, optional
        Element symbols present (from :data:`BJT_ELEMENTS` / :data:`FET_ELEMENTS`);
        default the usual set (g_m, r_pi, r_o, r_b, C_pi, C_mu / g_m, g_mb, r_o, C_gs, C_gd).
    rs : bool
        A source resistance R_S is present (else the source is ideal: R_S = 0).
    rl : bool
        A load resistance R_L is present (else the load is open).
    low_frequency : bool
        Leave out every capacitance.

    Returns
    -------
    Formula
    """
    if config not in BJT_CONFIGS + FET_CONFIGS:
        raise InputError(f"config: unknown configuration {config!r}, expected one of "
                         f"{', '.join(BJT_CONFIGS + FET_CONFIGS)}")
    if result not in RESULTS:
        raise InputError(f"result: unknown result {result!r}, expected one of {', '.join(RESULTS)}")
    fet = config in FET_CONFIGS
    allowed = FET_ELEMENTS if fet else BJT_ELEMENTS
    present = set(elements if elements is not None else (DEFAULT_FET if fet else DEFAULT_BJT))
    unknown = present - set(allowed)
    if unknown:
        raise InputError(f"elements: {', '.join(sorted(unknown))} not in the "
                         f"{'FET' if fet else 'bipolar'} model ({', '.join(allowed)})")
    present |= {"g_m"} | (set() if fet else {"r_pi"})
    if low_frequency:
        present -= _CAPS
    if result == "ai" and not rl:
        raise InputError("rl: the current gain -I2/I1 needs a load resistance R_L")
    expr = _derive(config, result, frozenset(present), rs, rl)
    names = tuple(sorted(present)) + (("R_S",) if rs else ()) + (("R_L",) if rl else ()) + ("s",)
    return Formula(result, config, expr, names)


@functools.lru_cache(maxsize=256)
def _derive(config: str, result: str, present: frozenset, rs: bool, rl: bool):
    """The simplified expression (cached: a derivation with many elements takes seconds)."""
    import sympy as sp

    nodes, passive, vccs, p1, p2, ref = _circuit(config, set(present))
    GS, GL = _cond("R_S"), _cond("R_L")
    load = [(p2, ref, GL)] if rl and result != "zout" else []
    expr = None
    if result == "av" or (result == "avs" and not rs):
        # V1 = 1 fixed: drop its unknown and move its column to the right-hand side.
        Y, idx = _matrix(nodes, passive + load, vccs, ref)
        i1 = idx[p1]
        keep = [i for i in range(len(nodes)) if i != i1]
        rhs = -Y[keep, i1]
        Yr = Y.extract(keep, keep)
        expr = _solve(Yr, rhs, keep.index(idx[p2]))
    elif result == "avs":
        Y, idx = _matrix(nodes, passive + load + [(p1, ref, GS)], vccs, ref)
        rhs = sp.zeros(len(nodes), 1)
        rhs[idx[p1]] = GS  # Norton equivalent of Vs = 1 behind R_S
        expr = _solve(Y, rhs, idx[p2])
    elif result in ("zin", "ai"):
        Y, idx = _matrix(nodes, passive + load, vccs, ref)
        rhs = sp.zeros(len(nodes), 1)
        rhs[idx[p1]] = 1
        v = _solve(Y, rhs, idx[p1] if result == "zin" else idx[p2])
        expr = v if result == "zin" or v is None else (v[0] * GL, v[1])
    else:  # zout
        if rs:
            Y, idx = _matrix(nodes, passive + [(p1, ref, GS)], vccs, ref)
        else:  # port 1 shorted to the common terminal
            merged = [n for n in nodes if n != p1]
            pas = [(ref if a == p1 else a, ref if b == p1 else b, y) for a, b, y in passive]
            vc = [tuple(ref if t == p1 else t for t in v[:4]) + (v[4],) for v in vccs]
            Y, idx = _matrix(merged, pas, vc, ref)
            nodes = merged
        rhs = sp.zeros(len(nodes), 1)
        rhs[idx[p2]] = 1
        expr = _solve(Y, rhs, idx[p2])
    return _simplify(expr)


def element_values(model, *, rdeg: float = 0.0, rfb: float | None = None) -> dict[str, float]:
    """Symbol values (SI units) of a model's elements that are present (see the module docstring).

    Parameters
    ----------
    model : HybridPi or FetModel
        The device model.
    rdeg : float
        External emitter/source resistance in ohm (0: none).
    rfb : float or None
        External collector-base/drain-gate resistance in ohm (None: none).
    """
    from .fet import FetModel

    if isinstance(model, FetModel):
        pairs = {"g_m": model.gm, "g_mb": model.gmb, "r_o": model.ro, "C_gs": model.cgs, "C_gd": model.cgd,
                 "C_sb": model.csb, "C_db": model.cdb, "r_g": model.rg, "r_dx": model.rdx, "r_sx": model.rsx}
    elif hasattr(model, "r_pi"):
        pairs = {"g_m": model.gm, "r_pi": model.r_pi, "r_o": model.ro, "r_b": model.rb, "C_pi": model.c_pi,
                 "C_mu": model.c_mu, "r_mu": model.r_mu, "r_cx": model.rcx, "r_ex": model.rex}
    else:
        raise InputError(f"model: expected a HybridPi or a FetModel, got {type(model).__name__}")
    pairs["R_deg"] = rdeg
    pairs["R_fb"] = math.inf if rfb is None else rfb
    return {k: float(v) for k, v in pairs.items() if v != 0 and math.isfinite(v)}

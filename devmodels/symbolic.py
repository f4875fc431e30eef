r"""Results of a stage as formulas in symbols, derived from the nodal equations with sympy.

Nothing here is a typed-in textbook formula: the stage's own netlist
(:meth:`devmodels.stage.Stage.netlist`, the same description the numeric engine reads) is
stamped element by element into a symbolic nodal admittance matrix, each element's name
as its symbol (``gm``, ``r_pi``, ``c_mu``, ``rdeg``, ...: the keys of ``model --json``),
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
capacitance (s -> 0) and shorts every inductance.  An inductor (a lead inductance ``l_b``,
...) stamps 1/(s L): while solving it is a conductance symbol like a resistor's, which
becomes s L when the conductances are cleared, so the matrix stays polynomial.  An absent
R_S is a short and an absent R_L an open load.

sympy is imported inside this module only (never by ``import devmodels``).
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass

from .configs import CONFIG_TERMINALS
from .exceptions import InputError
from .netlist import NOISE_KINDS

__all__ = ["Formula", "derive", "derive_stage", "element_values", "engine_check", "EngineCheck", "RESULTS", "EXTERNAL",
           "model_class"]

#: Results that can be derived.
RESULTS: tuple[str, ...] = ("av", "avs", "ai", "zin", "zout")
#: Names of the stage's external elements (beside the device model's own).
EXTERNAL: tuple[str, ...] = ("rdeg", "rfb")
#: How symbols are written in LaTeX (every other name as sympy writes it).
LATEX_NAMES: dict[str, str] = {
    "gm": "g_{m}", "gmb": "g_{mb}", "ro": "r_{o}", "rb": "r_{b}", "rcx": "r_{cx}", "rex": "r_{ex}",
    "rg": "r_{g}", "rdx": "r_{dx}", "rsx": "r_{sx}", "rdeg": "R_{deg}", "rfb": "R_{fb}",
    "cgs": "C_{gs}", "cgd": "C_{gd}", "csb": "C_{sb}", "cdb": "C_{db}", "c_pi": "C_{\\pi}",
    "c_mu": "C_{\\mu}", "c_e": "C_{e}", "re": "r_{e}", "R_S": "R_{S}", "R_L": "R_{L}",
    "l_b": "L_{b}", "l_c": "L_{c}", "l_e": "L_{e}", "l_g": "L_{g}", "l_d": "L_{d}", "l_s": "L_{s}",
}


def model_class(config: str):
    """The device model class whose configurations include ``config``."""
    from .fet import FetModel
    from .models import HybridPi

    for cls in (HybridPi, FetModel):
        if config in cls.configs:
            return cls
    allowed = HybridPi.configs + FetModel.configs
    raise InputError(f"config: unknown configuration {config!r}, expected one of {', '.join(allowed)}")


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

        if self.expr is None:
            return r"\infty"
        names = {x: LATEX_NAMES[str(x)] for x in self.expr.free_symbols if str(x) in LATEX_NAMES}
        return sp.latex(self.expr, symbol_names=names)

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
#: Prefix of an inductor's impedance symbol (s L) while solving; its conductance is _G + _SL + name.
_SL = "SL__"


def _cond(name: str):
    """The conductance 1/name as its own symbol: the nodal matrix stays polynomial."""
    return _symbol(_G + name)


def _structure(stage) -> tuple:
    """What a derivation depends on: the stage's elements (kind, name, nodes) and its port nodes."""
    net = stage.netlist()
    elements = tuple((e.kind, e.name, e.nodes) for e in net.elements if e.kind not in NOISE_KINDS)
    ports = tuple(stage.terminals[i] for i in CONFIG_TERMINALS[stage.config])
    return elements, ports


def _circuit(structure: tuple, low_frequency: bool):
    """Nodes and stamps of a netlist structure: (nodes, passive list, vccs list, p1, p2, reference)."""
    import sympy as sp

    elements, (p1, p2, k) = structure
    if low_frequency:  # s -> 0: every inductor is a short, its nodes one node
        join: dict[str, str] = {}

        def root(x):
            while x in join:
                x = join[x]
            return x

        for kind, _, nodes in elements:
            if kind == "inductor":
                a, b = root(nodes[0]), root(nodes[1])
                if a != b:  # keep a port or the reference as the name of the joined node
                    a, b = (b, a) if a in (p1, p2, k) else (a, b)
                    join[a] = b
        elements = tuple((kind, name, tuple(root(n) for n in nodes)) for kind, name, nodes in elements
                         if kind != "inductor")
    s = sp.Symbol("s")
    passive: list[tuple[str, str, object]] = []
    vccs: list[tuple[str, str, str, str, object]] = []
    seen: dict[str, None] = {}
    for kind, name, nodes in elements:
        for n in nodes:
            seen.setdefault(n, None)
        if kind == "resistor":
            passive.append((nodes[0], nodes[1], _cond(name)))
        elif kind == "inductor":
            passive.append((nodes[0], nodes[1], _cond(_SL + name)))
        elif kind == "capacitor":
            if not low_frequency:
                passive.append((nodes[0], nodes[1], s * _symbol(name)))
        else:
            vccs.append((*nodes, _symbol(name)))
    nodes = [n for n in seen if n != k]
    for t in (p1, p2):  # a port terminal with no element (a FET's gate with no capacitance) stays a node
        if t not in nodes:
            nodes.append(t)
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
    """Replace each conductance G__r by 1/r in num/den and clear the denominators (polynomials).

    An inductor's G__SL__l becomes 1/(s l): its flipped symbol SL__l is replaced by s l.
    """
    import sympy as sp

    gens = sorted(num.free_symbols | den.free_symbols, key=str)
    if not gens:
        return num, den
    sl = {sp.Symbol(str(g)[len(_G):], positive=True): sp.Symbol("s") * _symbol(str(g)[len(_G + _SL):])
          for g in gens if str(g).startswith(_G + _SL)}
    pn, pd = sp.Poly(num, *gens), sp.Poly(den, *gens)
    new_gens = [sp.Symbol(str(g)[len(_G):], positive=True) if str(g).startswith(_G) else g for g in gens]
    top = [max(pn.degree(g), pd.degree(g)) if str(g).startswith(_G) else None for g in gens]

    def flip(p):
        terms = {}
        for monom, coeff in p.terms():
            m = tuple(e if t is None else t - e for e, t in zip(monom, top))
            terms[m] = coeff
        return sp.Poly.from_dict(terms, *new_gens).as_expr()

    if sl:
        return sp.expand(flip(pn).subs(sl)), sp.expand(flip(pd).subs(sl))
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
        Names of the elements present: the model's (``HybridPi.element_names``,
        ``FetModel.element_names``) and ``rdeg``, ``rfb``; default the model's
        ``textbook_elements`` (gm, r_pi, ro, rb, c_pi, c_mu / gm, gmb, ro, cgs, cgd).
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
    cls = model_class(config)
    if result not in RESULTS:
        raise InputError(f"result: unknown result {result!r}, expected one of {', '.join(RESULTS)}")
    allowed = cls.element_names + EXTERNAL
    present = set(elements if elements is not None else cls.textbook_elements)
    unknown = present - set(allowed)
    if unknown:
        raise InputError(f"elements: {', '.join(sorted(unknown))} not in the {cls.family} model "
                         f"({', '.join(allowed)})")
    if result == "ai" and not rl:
        raise InputError("rl: the current gain -I2/I1 needs a load resistance R_L")
    from .stage import Stage

    stage = Stage(cls.placeholder(present), config, rdeg=1.0 if "rdeg" in present else 0.0,
                  rfb=1.0 if "rfb" in present else None)
    return _formula(stage, result, rs, rl, low_frequency)


def _formula(stage, result: str, rs: bool, rl: bool, low_frequency: bool) -> Formula:
    expr = _derive(_structure(stage), result, rs, rl, low_frequency)
    names = tuple(sorted(str(x) for x in expr.free_symbols if str(x) != "s")) if expr is not None else ()
    return Formula(result, stage.config, expr, names + ("s",))


def derive_stage(stage, result: str, *, rs: bool = True, rl: bool = True,
                 low_frequency: bool = False) -> Formula:
    """Derive ``result`` of a given stage (its own netlist: device, rdeg, rfb and its network).

    Every element present in the stage's netlist is a symbol named by its key (``gm``,
    ``r_pi``, ``r1``, ``c_in``, ...).

    Parameters
    ----------
    stage : Stage
        The stage; its element values are not used, only which elements it has.
    result : {'av', 'avs', 'ai', 'zin', 'zout'}
        The result wanted.
    rs, rl, low_frequency : bool
        As in :func:`derive`.
    """
    if result not in RESULTS:
        raise InputError(f"result: unknown result {result!r}, expected one of {', '.join(RESULTS)}")
    if result == "ai" and not rl:
        raise InputError("rl: the current gain -I2/I1 needs a load resistance R_L")
    return _formula(stage, result, rs, rl, low_frequency)


@functools.lru_cache(maxsize=256)
def _derive(structure: tuple, result: str, rs: bool, rl: bool, low_frequency: bool):
    """The simplified expression (cached: a derivation with many elements takes seconds)."""
    import sympy as sp

    nodes, passive, vccs, p1, p2, ref = _circuit(structure, low_frequency)
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
    """Symbol values (SI units) of the elements present in a stage's netlist.

    Parameters
    ----------
    model : device model
        :class:`~devmodels.models.HybridPi` or :class:`~devmodels.fet.FetModel`.
    rdeg : float
        External emitter/source resistance in ohm (0: none).
    rfb : float or None
        External collector-base/drain-gate resistance in ohm (None: none).
    """
    from .stage import Stage

    return {e.name: float(e.value) for e in Stage(model, None, rdeg, rfb).netlist().elements
            if e.kind not in NOISE_KINDS}


@dataclass(frozen=True)
class EngineCheck:
    """A formula's value beside the numeric engine's, at one frequency.

    Attributes
    ----------
    value : complex or None
        The formula at the element values (None: open/unbounded).
    engine : complex or None
        The same result from the numeric engine (None: open/unbounded).
    rel_diff : float or None
        |value - engine| / |engine|; 0 when both are None; None when only one is.
    symbols : dict
        The values of the symbols the formula contains (SI units).
    """

    value: complex | None
    engine: complex | None
    rel_diff: float | None
    symbols: dict


def engine_check(formula: Formula, stage, freq: float, rs: float | None, rl: float | None) -> EngineCheck:
    """Evaluate ``formula`` for ``stage`` and compare it with the numeric engine.

    Parameters
    ----------
    formula : Formula
        A formula derived for ``stage.config``.
    stage : Stage
        The stage whose element values are used.
    freq : float
        Frequency in Hz; at 0 Hz the engine's stage leaves the lead inductances out (shorts).
    rs, rl : float or None
        Source and load resistances in ohm (None: ideal source, open load).
    """
    import numpy as np

    from .analysis import terminate
    from .exceptions import SingularParameterError

    ev = {e.name: float(e.value) for e in stage.netlist().elements if e.kind not in NOISE_KINDS}
    if freq == 0:  # an inductor is a short at 0 Hz: the engine works on the stage without them
        import dataclasses

        from .models import without_leads

        stage = dataclasses.replace(stage, model=without_leads(stage.model))
    if rs is not None:
        ev["R_S"] = rs
    if rl is not None:
        ev["R_L"] = rl
    used = {str(x) for x in formula.expr.free_symbols} if formula.expr is not None else set()
    val = formula.value(ev, freq)
    try:
        with np.errstate(invalid="ignore", divide="ignore"):  # NaN = does not exist
            tr = terminate(stage.two_port([freq]), 0.0 if rs is None else rs, math.inf if rl is None else rl)
        eng = complex(getattr(tr, formula.result)[0])
    except SingularParameterError:  # the chain parameters do not exist at this point
        eng = complex("nan")
    eng_ok = math.isfinite(eng.real) and math.isfinite(eng.imag)
    rel = (abs(val - eng) / abs(eng) if val is not None and eng_ok and eng != 0 else
           (0.0 if val is None and not eng_ok else None))
    return EngineCheck(val, eng if eng_ok else None, rel, {k: v for k, v in ev.items() if k in used})

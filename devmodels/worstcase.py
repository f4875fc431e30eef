r"""Worst case over a box of limits, yield against specifications, streaming quantiles.

**Worst case.**  The limits of a spread (:mod:`devmodels.spread`) form a box: beta between
``beta_min`` and ``beta_max``, the temperature between ``temp_min`` and ``temp_max`` and
each toleranced resistor between :math:`1 - tol` and :math:`1 + tol` times its nominal
value, each toleranced capacitor of the stage network within :math:`1 \pm ctol` (a FET's
box: IDSS and VP, or kn or Vov, lambda, the resistors and capacitors; the setup names its own
limits, :func:`box_limits`).  :func:`worst_case` evaluates every vertex of the box
(:math:`2^n` points) together with seven points inside every edge (at 1/8 .. 7/8) and the
centre, all in one call of the setup's ``evaluate_points``.  A result whose values along
every edge are monotonic (the nine points of each edge in order, within a relative 1e-9)
and whose centre lies between its vertex extremes is taken as monotonic in each limit: its
extremes are then at vertices (``method = 'vertices'``).  This check is a heuristic on the edges; it does not
prove monotonicity inside the box.  Otherwise (or where a result does not exist at some
point) a bounded local search follows (``method = 'vertices+search'``), from the best point
evaluated so far: each step tries a grid of :data:`GRID` values along every limit through
the current point plus ``8 n`` random points around it (all in one call) and moves to the
best; when nothing improves, the neighbourhood shrinks by a factor of four, down to 1e-10 of
each limit's width (at most ``max_steps`` steps).  It finds a local extreme and is not a
global optimiser: where a result ceases to exist inside the box (saturation, cutoff) its
extreme often lies on that boundary, which a local search may miss; ``undefined_vertices``
reports the vertices without a value.

**Yield.**  The fraction of samples meeting every specification (``av>=40``,
``zin>=1k``), with the 95 % Wilson score interval (E. B. Wilson, "Probable inference, the
law of succession, and statistical inference", J. Am. Stat. Assoc. 22 (1927) 209-212):

.. math::
    \frac{\hat p + \frac{z^2}{2n} \pm z\sqrt{\frac{\hat p(1-\hat p)}{n}+\frac{z^2}{4n^2}}}
         {1 + \frac{z^2}{n}},\qquad z = 1.959963984540054.

**Streaming quantiles.**  :class:`StreamingSummary` keeps, per result, a histogram on the
grid :math:`u = \operatorname{asinh}(v/s)` with bins of width :math:`w` (default
:data:`REL_WIDTH` = 1e-4) and the exact minimum and maximum.  The scale :math:`s` is given
(``scales``) or else a hundredth of the smallest non-zero magnitude of the first chunk that
has one (:func:`grid_scale`), so the grid is logarithmic (relative bin width :math:`w`) for
magnitudes above :math:`100 s` and linear (absolute width about :math:`w s`) near zero, and
handles signs and zeros.  A quantile is the interpolation of numpy's default ('linear')
between two order statistics, each taken at the centre of its bin (the minimum and maximum
exactly), so its error is at most :math:`\frac{w}{2}\sqrt{v^2+s^2}\,e^{w}`
(:meth:`StreamingSummary.error_bound` states :math:`w\sqrt{v^2+s^2}`, with margin).  Memory
depends on the spread of the values, not on the number of samples (about 23 000 bins per
decade at 1e-4); beyond ``max_bins`` occupied bins per result the bins are merged in pairs
(bin :math:`i` into :math:`\lfloor i/2 \rfloor`; the width doubles, and so does the bound).

**Merging.**  The bin edges are fixed by the grid (:math:`s`, :math:`w`), not by the order of
the data, and bins are merged in pairs only as far as the range of occupied bins requires.  So
two summaries on the same grid (the same scales, ``rel_width`` and ``max_bins``) merge exactly
(:meth:`StreamingSummary.merge`: counts add, minimum and maximum are exact): the result is the
summary one would have of all the values of both, in any order, and separate processes can
each summarise part of the samples.
"""

from __future__ import annotations

import itertools
import math
import re
from typing import Iterable, Mapping

import numpy as np

from .exceptions import InputError

__all__ = ["vertices", "worst_case", "box_limits", "yield_fraction", "parse_spec", "collect_specs", "check_specs",
           "worst_case_pass", "spec_text", "StreamingSummary", "grid_scale", "GRID", "REL_WIDTH", "Z95",
           "SPEC_UNITS", "RESULTS", "FET_RESULTS", "NOISE_RESULTS", "QUANTILES"]

# The vocabulary of a spread's results, here beside their units (SPEC_UNITS) so that this module
# needs nothing from devmodels.spread (which computes them, imports this module and re-exports
# these names): the import goes one way only.
#: Results of a bipolar spread (magnitudes, except gt_db in dB and k).
RESULTS: tuple[str, ...] = ("av", "avs", "ai", "zin", "zout", "gt_db", "k", "ic", "vce", "power")
#: Results of a FET spread (magnitudes, except gt_db in dB and k; gm in S, ro in ohm).
FET_RESULTS: tuple[str, ...] = ("av", "avs", "ai", "zin", "zout", "gt_db", "k", "gm", "ro")
#: Noise results, added to either list when a spread's setup has ``noise`` set: the noise figure at
#: the source impedance and the minimum noise figure, dB (:mod:`devmodels.noise`).
NOISE_RESULTS: tuple[str, ...] = ("nf_db", "nfmin_db")
#: Statistics reported for each result: name -> percentile.
QUANTILES: dict[str, float] = {"min": 0.0, "p5": 5.0, "p50": 50.0, "p95": 95.0, "max": 100.0}

#: Grid points per limit in each step of the local search.
GRID = 9
#: Default bin width of :class:`StreamingSummary` in asinh units (relative width for large values).
REL_WIDTH = 1e-4
#: The 97.5 % point of the standard normal distribution (two-sided 95 %).
Z95 = 1.959963984540054
#: Units of the results that have one (for values in specifications).
SPEC_UNITS: dict[str, str] = {"zin": "Ohm", "zout": "Ohm", "f_low": "Hz", "bandwidth": "Hz", "ic": "A",
                              "vce": "V", "power": "W", "gm": "S", "ro": "Ohm"}
_OPS = (">=", "<=", ">", "<")
_EDGE_FRACTIONS = tuple(np.arange(1, 8) / 8.0)
#: Random points tried around the current point in each search step, per limit.
_RANDOM_PER_DIM = 8
_MONO_RTOL = 1e-9


# --- worst case ---------------------------------------------------------------------------------
def vertices(limits: Mapping[str, tuple[float, float]]) -> dict[str, np.ndarray]:
    """Every corner of a box of limits, as one array per limit.

    Parameters
    ----------
    limits : mapping of str -> (lo, hi)
        The box.  A limit with ``lo == hi`` is a single value (it does not double the corners).

    Returns
    -------
    dict of str -> ndarray (2**m,)
        The corners, ``m`` the number of limits with ``lo < hi``; the first such limit varies
        slowest (the order of :func:`itertools.product`).  With every limit fixed, one point.
    """
    names = list(limits)
    for n in names:
        lo, hi = limits[n]
        if not (math.isfinite(lo) and math.isfinite(hi)) or lo > hi:
            raise InputError(f"{n}: expected finite limits lo <= hi, got {lo!r}, {hi!r}")
    wide = [n for n in names if limits[n][0] < limits[n][1]]
    # explicit shape: with every limit fixed there is one corner of zero width (reshape(-1, 0) fails)
    corners = np.array(list(itertools.product((0, 1), repeat=len(wide))), dtype=float).reshape(2 ** len(wide),
                                                                                              len(wide))
    out = {}
    for n in names:
        lo, hi = (float(x) for x in limits[n])
        if n in wide:
            out[n] = lo + corners[:, wide.index(n)] * (hi - lo)
        else:
            out[n] = np.full(corners.shape[0], lo)
    return out


def box_limits(setup, ranges) -> dict[str, tuple[float, float]]:
    """The box of a spread's limits: ``setup.limits(ranges)`` (each setup names its own limits).

    Parameters
    ----------
    setup : devmodels.spread.SpreadSetup or devmodels.spread.FetSpreadSetup
        The fixed part; it names its limits (:meth:`~devmodels.spread.SpreadSetup.limits`).
    ranges : devmodels.spread.SpreadRanges or devmodels.spread.FetSpreadRanges
        The limits.

    Returns
    -------
    dict of str -> (float, float)
        Bipolar: ``beta`` (at the reference temperature), ``temp`` (K) and, with a tolerance, a
        multiplier ``(1 - tol, 1 + tol)`` for every resistor of ``setup.resistors``.  FET: the
        keys of :meth:`devmodels.spread.FetSpreadSetup.limits` (``idss``, ``vp`` or ``kn`` /
        ``vov``, ``lambda``, resistor multipliers).
    """
    return setup.limits(ranges)


def _evaluate(setup, points: Mapping[str, np.ndarray]) -> dict:
    """Every result of ``setup`` at the points (one array per limit): ``setup.evaluate_points``."""
    return setup.evaluate_points(dict(points))


def _monotone(seq: np.ndarray) -> np.ndarray:
    """Whether each row of ``seq`` (rows of ordered points) is monotonic, within a tolerance."""
    if seq.shape[1] < 2:
        return np.ones(seq.shape[0], dtype=bool)
    d = np.diff(seq, axis=1)
    tol = _MONO_RTOL * np.max(np.abs(seq), axis=1, keepdims=True)
    up = np.all(d >= -tol, axis=1)
    down = np.all(d <= tol, axis=1)
    return (up | down) & np.all(np.isfinite(seq), axis=1)


def _setting(name: str, t: float, lo: float, hi: float, nominal: dict) -> str | float:
    if lo == hi:
        return float(lo * nominal.get(name, 1.0))
    if t <= 0.0:
        return "low"
    if t >= 1.0:
        return "high"
    return float((lo + t * (hi - lo)) * nominal.get(name, 1.0))


def worst_case(setup, ranges, *, results: Iterable[str] | None = None, grid: int = GRID,
               max_steps: int = 400) -> dict[str, dict]:
    """Extremes of every result over the box of limits (method in the module docstring).

    Parameters
    ----------
    setup : devmodels.spread.SpreadSetup or devmodels.spread.FetSpreadSetup
        The fixed part of the stage: it names its limits (``setup.limits``, through
        :func:`box_limits`) and evaluates points of the box (``setup.evaluate_points``).
    ranges : devmodels.spread.SpreadRanges or devmodels.spread.FetSpreadRanges
        The limits (``samples``, ``seed`` and ``beta_typ`` are not used).
    results : iterable of str, optional
        Results to report (default every one of ``setup.results``).
    grid : int
        Grid points per limit in each step of the local search (>= 3).
    max_steps : int
        Bound on the search steps (each one evaluation call).

    Returns
    -------
    dict of str -> dict
        For each result: ``worst_min``, ``worst_max`` (floats, or ``None`` where the result exists
        at no evaluated point), ``worst_min_at``, ``worst_max_at`` (dicts limit -> ``'low'``,
        ``'high'`` or the value inside the limits: beta, K, ohm for a resistor, F for a capacitor),
        ``method`` (``'vertices'`` or ``'vertices+search'``) and ``undefined_vertices`` (how many
        vertices have no value: saturation, cutoff or no small-signal model there).
    """
    known = tuple(setup.results)
    names_r = list(known if results is None else results)
    for r in names_r:
        if r not in known:
            raise InputError(f"results: {r!r} is not a result; expected one of {', '.join(known)}")
    if isinstance(grid, bool) or not isinstance(grid, int) or grid < 3:
        raise InputError(f"grid: expected a whole number >= 3, got {grid!r}")
    limits = box_limits(setup, ranges)
    nominal = dict(setup.resistors) | dict(getattr(setup, "capacitors", {}))  # multiplier limits -> ohm, F
    dims = list(limits)
    lo = np.array([limits[d][0] for d in dims])
    hi = np.array([limits[d][1] for d in dims])
    wide = [i for i, d in enumerate(dims) if lo[i] < hi[i]]
    nv = 2 ** len(wide)

    # normalised coordinates t in [0, 1]^n: vertices, points inside every edge, the centre
    corners = np.array(list(itertools.product((0.0, 1.0), repeat=len(wide)))).reshape(nv, len(wide))
    t_vert = np.zeros((nv, len(dims)))
    t_vert[:, wide] = corners
    edge_rows = []  # (dim position in wide, vertex index at the low end, vertex index at the high end)
    t_edges = []
    for j in range(len(wide)):
        low_ends = np.nonzero(corners[:, j] == 0.0)[0]
        for a in low_ends:
            b = int(a) + 2 ** (len(wide) - 1 - j)  # the same corner with limit j high (product order)
            edge_rows.append((j, int(a), b))
            for f in _EDGE_FRACTIONS:
                t = t_vert[a].copy()
                t[wide[j]] = f
                t_edges.append(t)
    t_centre = np.full((1, len(dims)), 0.5)
    t_all = np.vstack([t_vert] + ([np.array(t_edges)] if t_edges else []) + [t_centre])

    def points(t: np.ndarray) -> dict[str, np.ndarray]:
        x = lo + t * (hi - lo)
        return {d: x[:, i] for i, d in enumerate(dims)}

    val = _evaluate(setup, points(t_all))
    nf = len(_EDGE_FRACTIONS)
    out: dict[str, dict] = {}
    searches = []
    for r in names_r:
        v = np.asarray(val[r], dtype=float)
        vv = v[:nv]
        fin = np.isfinite(vv)
        entry: dict = {"undefined_vertices": int(nv - fin.sum())}
        if edge_rows:
            seq = np.empty((len(edge_rows), nf + 2))
            for e, (j, a, b) in enumerate(edge_rows):
                seq[e, 0] = vv[a]
                seq[e, 1:nf + 1] = v[nv + e * nf: nv + (e + 1) * nf]
                seq[e, -1] = vv[b]
            mono = bool(np.all(_monotone(seq)))
        else:
            mono = bool(np.all(fin))
        centre = v[-1]
        if fin.any():
            mono = mono and fin.all() and vv.min() - _MONO_RTOL * abs(vv.min()) <= centre <= vv.max() + \
                _MONO_RTOL * abs(vv.max())
        entry["method"] = "vertices" if mono else "vertices+search"
        allfin = np.isfinite(v)
        if not allfin.any():  # the result exists nowhere (an open impedance, no active point)
            entry.update(worst_min=None, worst_max=None, worst_min_at=None, worst_max_at=None, method="vertices")
            out[r] = entry
            continue
        for sense, key in ((1.0, "min"), (-1.0, "max")):
            pool = v if not mono else np.where(np.arange(v.size) < nv, v, np.nan)
            score = np.where(np.isfinite(pool), sense * pool, np.inf)
            k = int(np.argmin(score))
            entry[f"worst_{key}"] = float(v[k])
            entry[f"_t_{key}"] = t_all[k].copy()
            if not mono:
                searches.append({"r": r, "sense": sense, "key": key, "t": t_all[k].copy(),
                                 "best": float(score[k]), "h": None})
        out[r] = entry

    # bounded coordinate search for the results that are not monotonic (all searches in lockstep)
    g = np.linspace(-1.0, 1.0, grid)
    rand = np.random.default_rng(20270101)  # fixed: the same limits give the same answer
    steps = 0
    active = [s for s in searches]
    while active and steps < max_steps and wide:
        steps += 1
        blocks = []
        for s in active:
            cand = []
            for j in wide:
                line = np.linspace(0.0, 1.0, grid) if s["h"] is None else np.clip(s["t"][j] + s["h"] * g, 0.0, 1.0)
                t = np.repeat(s["t"][None, :], grid, axis=0)
                t[:, j] = line
                cand.append(t)
            # random points around it (the whole box at first): a way off ridges and
            # constraint edges where a move along one limit at a time cannot improve
            k = _RANDOM_PER_DIM * len(wide)
            t = np.repeat(s["t"][None, :], k, axis=0)
            half = 1.0 if s["h"] is None else s["h"]
            t[:, wide] = np.clip(t[:, wide] + half * rand.uniform(-1.0, 1.0, (k, len(wide))), 0.0, 1.0)
            cand.append(t)
            blocks.append(np.vstack(cand))
        tt = np.vstack(blocks)
        res = _evaluate(setup, points(tt))
        pos = 0
        still = []
        for s, blk in zip(active, blocks):
            v = np.asarray(res[s["r"]][pos:pos + blk.shape[0]], dtype=float)
            pos += blk.shape[0]
            score = np.where(np.isfinite(v), s["sense"] * v, np.inf)
            k = int(np.argmin(score))
            if score[k] < s["best"] - 1e-15 * abs(s["best"]):
                s["best"], s["t"] = float(score[k]), blk[k].copy()
            else:
                s["h"] = (2.0 / (grid - 1)) if s["h"] is None else s["h"] / 4.0
            if s["h"] is None or s["h"] >= 1e-10:
                still.append(s)
        active = still
    for s in searches:
        e = out[s["r"]]
        e[f"worst_{s['key']}"] = s["sense"] * s["best"]
        e[f"_t_{s['key']}"] = s["t"]
    for r, e in out.items():
        for key in ("min", "max"):
            t = e.pop(f"_t_{key}", None)
            if t is not None:
                e[f"worst_{key}_at"] = {d: _setting(d, float(t[i]), float(lo[i]), float(hi[i]), nominal)
                                        for i, d in enumerate(dims)}
        out[r] = {k: e[k] for k in ("worst_min", "worst_max", "worst_min_at", "worst_max_at", "method",
                                     "undefined_vertices")}
    return out


# --- yield --------------------------------------------------------------------------------------
def yield_fraction(passed_count: int, n: int, z: float = Z95) -> tuple[float, tuple[float, float]]:
    """The fraction passed and its Wilson score interval (Wilson 1927; formula in the module docstring).

    Parameters
    ----------
    passed_count : int
        Samples meeting every specification.
    n : int
        Samples drawn (>= 1).
    z : float
        Normal quantile of the interval (default 1.96: 95 %).

    Returns
    -------
    (float, (float, float))
        ``passed_count / n`` and the interval ``(lo, hi)`` within [0, 1].
    """
    for name, v in (("passed_count", passed_count), ("n", n)):
        if isinstance(v, bool) or not isinstance(v, (int, np.integer)):
            raise InputError(f"{name}: expected a whole number, got {v!r}")
    if n < 1:
        raise InputError(f"n: expected at least one sample, got {n}")
    if not 0 <= passed_count <= n:
        raise InputError(f"passed_count: expected 0 to n = {n}, got {passed_count}")
    p = passed_count / n
    z2 = z * z
    denom = 1.0 + z2 / n
    centre = (p + z2 / (2 * n)) / denom
    half = z / denom * math.sqrt(p * (1 - p) / n + z2 / (4 * n * n))
    lo = 0.0 if passed_count == 0 else max(0.0, centre - half)  # exact ends: no rounding residue
    hi = 1.0 if passed_count == n else min(1.0, centre + half)
    return p, (lo, hi)


_SPEC = re.compile(r"^\s*([A-Za-z_][A-Za-z0-9_]*)\s*([<>=!]*)\s*(.*?)\s*$", re.S)


def parse_spec(text: str, results: Iterable[str] | None = None, *, label: str = "spec") -> tuple[str, str, float]:
    """Read a specification ``RESULT OP VALUE`` (``av>=40``, ``zin >= 1k``, ``f_low<20Hz``).

    The one reader of a specification: ``--spec`` texts and the bias file's ``[spec]`` table
    (:func:`collect_specs`) both come here.

    Parameters
    ----------
    text : str
        The specification.  OP is one of ``>=``, ``<=``, ``>``, ``<``.  VALUE is a number with an
        optional SI prefix and the result's unit where it has one (:data:`SPEC_UNITS`: ohm for
        ``zin``/``zout``/``ro``, S for ``gm``, Hz for ``f_low``/``bandwidth``, A, V, W for ``ic``,
        ``vce``, ``power``);
        ``gt_db``, ``nf_db`` and ``nfmin_db`` take an optional ``dB``.
    results : iterable of str, optional
        The names a specification may use (default :data:`RESULTS`, a bipolar spread's).
    label : str
        The name error messages start with (``spec``; ``spec.av`` for the ``[spec]`` table's key
        ``av``).

    Returns
    -------
    (str, str, float)
        Result name, operator, value in SI units.
    """
    from .units import parse_quantity, shown

    names = tuple(RESULTS if results is None else results)
    if not isinstance(text, str):
        raise InputError(f"{label}: expected text such as 'av>=40', got {text!r}")
    m = _SPEC.match(text)
    if not m or not m.group(1):
        raise InputError(f"{label}: cannot read {shown(text)}; expected RESULT>=VALUE or RESULT<=VALUE (e.g. av>=40)")
    name, op, rest = m.groups()
    if name not in names:
        from .schema import nearest

        near = nearest(name, names)
        raise InputError(f"{label}: {name!r} is not a result; expected one of {', '.join(names)}"
                         + (f" (did you mean {near}?)" if near else ""))
    if op not in _OPS:
        raise InputError(f"{label}: {shown(text)} has the operator {op!r}; expected one of "
                         f"{', '.join(_OPS)} (e.g. {name}>=...)" if op else
                         f"{label}: {shown(text)} has no comparison; expected one of {', '.join(_OPS)} "
                         f"(e.g. {name}>=...)")
    if rest.endswith("dB") and name in _DB_RESULTS:
        rest = rest[:-2].rstrip()
    value = parse_quantity(rest, SPEC_UNITS.get(name, ""), f"spec {name}" if label == "spec" else label)
    return name, op, value


#: Results in dB: a value in a specification may end in ``dB``.
_DB_RESULTS = ("gt_db", "nf_db", "nfmin_db")


def collect_specs(options: Iterable = (), table: Mapping | None = None,
                  results: Iterable[str] | None = None) -> list[tuple[str, str, float]]:
    """The specifications of a run: a bias file's ``[spec]`` table and the ``--spec`` texts.

    The table maps a result name to a comparison and a value, or to a list of them::

        [spec]
        av = ">=40"
        zin = ">=1k"
        nf_db = "<=3dB"
        ic = [">=0.8mA", "<=1.2mA"]

    Each entry is read as the text ``NAME`` + ``COMPARISON`` by :func:`parse_spec` (the one
    reader), so the table accepts exactly what ``--spec`` accepts.  **Rule of the merge:** an
    option adds to the table, except that it *replaces* the table's limits on the same result
    in the same direction (a lower limit ``>=``/``>`` replaces the table's lower limits of that
    result, an upper limit ``<=``/``<`` its upper limits).  The table's remaining limits come
    first, then the options, in the order given.

    Parameters
    ----------
    options : iterable of str or (name, op, value)
        Specifications as ``--spec`` gives them (``"av>=40"``) or already read.
    table : mapping of str -> str or list of str, optional
        The ``[spec]`` table (:func:`devmodels.biasfile.load_bias_file`), result name -> text.
    results : iterable of str, optional
        The names a specification may use (default :data:`RESULTS`, a bipolar spread's).

    Returns
    -------
    list of (str, str, float)
        Result name, operator, value in SI units.

    Raises
    ------
    InputError
        A name that is not a result, a bad comparison or value; the message starts with
        ``spec.NAME`` for a table entry and ``spec`` for an option.
    """
    from .units import shown

    names = None if results is None else tuple(results)
    from_table = []
    for key, value in (table or {}).items():
        label = f"spec.{key}"
        texts = value if isinstance(value, (list, tuple)) else [value]
        if not texts:
            raise InputError(f"{label}: expected a comparison and a value such as '>=40', got an empty list")
        for text in texts:
            if not isinstance(text, str):
                raise InputError(f"{label}: expected text such as '>=40' (or a list of them), got {text!r}")
            body = text.strip()
            if not body or body[0] not in "<>=!":
                raise InputError(f"{label}: expected a comparison and a value such as '>=40' (the key names the "
                                 f"result), got {shown(text)}")
            from_table.append(parse_spec(key + body, names, label=label))
    given = []
    for sp in options:
        if isinstance(sp, str):
            given.append(parse_spec(sp, names))
        elif isinstance(sp, (tuple, list)) and len(sp) == 3:
            given.append((sp[0], sp[1], float(sp[2])))
        else:
            raise InputError(f"spec: expected text such as 'av>=40' or (name, op, value), got {sp!r}")

    def side(op: str) -> str:
        return "lower" if op in (">=", ">") else "upper"

    replaced = {(name, side(op)) for name, op, _ in given}
    return [sp for sp in from_table if (sp[0], side(sp[1])) not in replaced] + given


def spec_text(spec: tuple[str, str, float]) -> str:
    """A parsed specification as text (``'av>=40'``).

    Parameters
    ----------
    spec : (str, str, float)
        Result name, operator and value in SI units, as :func:`parse_spec` returns.
    """
    name, op, value = spec
    return f"{name}{op}{value:.12g}"


def _compare(v: np.ndarray, op: str, x: float) -> np.ndarray:
    with np.errstate(invalid="ignore"):
        if op == ">=":
            return v >= x
        if op == "<=":
            return v <= x
        if op == ">":
            return v > x
        if op == "<":
            return v < x
    raise InputError(f"spec: unknown operator {op!r}; expected one of {', '.join(_OPS)}")


def check_specs(values: Mapping[str, np.ndarray], specs) -> tuple[np.ndarray, tuple[str, int] | None]:
    """Which samples meet every specification.

    Parameters
    ----------
    values : mapping of str -> ndarray (N,)
        Per-sample results (as :attr:`devmodels.spread.SpreadResult.values`).  A NaN (no value:
        the sample has no small-signal point) fails every specification on that result.
    specs : iterable of str or (name, op, value)
        Specifications (:func:`parse_spec`).

    Returns
    -------
    mask : ndarray of bool (N,)
        True where a sample meets them all.
    most_failing : (str, int) or None
        The specification that fails most often (as :func:`spec_text`) and how often; ``None``
        when every sample passes (or there are no specifications).
    """
    parsed = []
    for s in specs:
        if isinstance(s, str):
            s = parse_spec(s, results=tuple(values))
        name, op, x = s
        if name not in values:
            raise InputError(f"spec: {name!r} is not a result; expected one of {', '.join(values)}")
        parsed.append((name, op, float(x)))
    n = len(next(iter(values.values()))) if values else 0
    mask = np.ones(n, dtype=bool)
    worst, count = None, 0
    for spec in parsed:
        ok = _compare(np.asarray(values[spec[0]], dtype=float), spec[1], spec[2])
        mask &= ok
        fails = int(ok.size - np.count_nonzero(ok))
        if fails > count:
            worst, count = spec_text(spec), fails
    return mask, (None if worst is None else (worst, count))


def worst_case_pass(worst: Mapping[str, Mapping], specs) -> bool:
    """Whether every specification holds over the whole box of limits.

    A lower limit (``>=``, ``>``) is checked against ``worst_min``, an upper one against
    ``worst_max`` (from :func:`worst_case`); a result without a worst value fails.

    Parameters
    ----------
    worst : mapping of str -> dict
        As :func:`worst_case` returns.
    specs : iterable of str or (name, op, value)
    """
    for s in specs:
        name, op, x = parse_spec(s, results=tuple(worst)) if isinstance(s, str) else s
        if name not in worst:
            raise InputError(f"spec: {name!r} is not a result; expected one of {', '.join(worst)}")
        w = worst[name].get("worst_min" if op in (">=", ">") else "worst_max")
        if w is None or not math.isfinite(w) or not bool(_compare(np.asarray(w, dtype=float), op, float(x))):
            return False
    return True


# --- streaming quantiles ------------------------------------------------------------------------
def grid_scale(values) -> float | None:
    """The scale of :class:`StreamingSummary`'s grid set by some values: a hundredth of their
    smallest non-zero finite magnitude (module docstring).

    Parameters
    ----------
    values : array_like
        Values in the result's unit (NaN and infinities are ignored).

    Returns
    -------
    float or None
        The scale, in the values' unit; ``None`` when there is no non-zero finite value.
    """
    v = np.abs(np.asarray(values, dtype=float).ravel())
    v = v[np.isfinite(v) & (v != 0)]
    return 0.01 * float(v.min()) if v.size else None


def _halve(counts: np.ndarray, offset: int) -> tuple[np.ndarray, int]:
    """Bins merged in pairs: bin ``i`` (absolute index) goes to ``i // 2``, so merging depends on
    the grid alone (a bin of width 2w is the same pair of width-w bins whoever merges it)."""
    if not counts.size:
        return counts, offset
    new = (np.arange(counts.size, dtype=np.int64) + offset) // 2
    base = int(new[0])
    return np.bincount(new - base, weights=counts, minlength=1).astype(np.int64), base


class _Hist:
    """Histogram of one result on the asinh grid (see the module docstring)."""

    __slots__ = ("w", "s", "counts", "offset", "n", "nan", "vmin", "vmax", "_cum", "max_bins")

    def __init__(self, w: float, max_bins: int, s: float | None = None):
        self.w = w
        self.s: float | None = s
        self.counts = np.zeros(0, dtype=np.int64)
        self.offset = 0
        self.n = 0
        self.nan = 0
        self.vmin = math.inf
        self.vmax = -math.inf
        self._cum = None
        self.max_bins = max_bins

    def _index(self, v: np.ndarray) -> np.ndarray:
        if self.s is None:
            return np.zeros(v.size, dtype=np.int64)  # only zeros so far: u = 0 on any scale
        return np.floor(np.arcsinh(v / self.s) / self.w).astype(np.int64)

    def _coarsen(self) -> None:
        self.counts, self.offset = _halve(self.counts, self.offset)
        self.w *= 2.0

    def _occupied(self) -> tuple[int, int] | None:
        """First and last bin holding a count (the kept range may have empty bins at its ends)."""
        nz = np.flatnonzero(self.counts)
        return (self.offset + int(nz[0]), self.offset + int(nz[-1])) if nz.size else None

    def _add(self, counts: np.ndarray, offset: int) -> None:
        """Add counts of bins ``offset ..`` (the same bin width), growing the kept range as needed
        (with a margin, so that a range growing chunk by chunk is not copied every time)."""
        lo, hi = offset, offset + counts.size - 1
        if not self.counts.size:
            self.counts, self.offset = counts.copy(), offset
            return
        if lo < self.offset or hi >= self.offset + self.counts.size:
            occ = self._occupied()
            if occ is not None:
                a, b = occ[0] - self.offset, occ[1] - self.offset + 1
                self.counts, self.offset = self.counts[a:b], occ[0]
            lo, hi = min(lo, self.offset), max(hi, self.offset + self.counts.size - 1)
            span = hi - lo + 1
            margin = min(span // 4, max(0, self.max_bins - span))
            new_lo = lo - (margin // 2 if lo < self.offset else 0)
            new_hi = hi + (margin - margin // 2 if hi >= self.offset + self.counts.size else 0)
            grown = np.zeros(new_hi - new_lo + 1, dtype=np.int64)
            grown[self.offset - new_lo: self.offset - new_lo + self.counts.size] = self.counts
            self.counts, self.offset = grown, new_lo
        self.counts[offset - self.offset: offset - self.offset + counts.size] += counts

    def _span(self, lo: int, hi: int) -> int:
        """Bins from ``lo`` to ``hi`` together with the occupied ones (not the empty margins, so that
        when bins are merged depends on the values alone, not on the order they came in)."""
        if self.counts.size:
            kept = (min(lo, self.offset), max(hi, self.offset + self.counts.size - 1))
            if kept[1] - kept[0] + 1 <= self.max_bins:
                return kept[1] - kept[0] + 1
            occ = self._occupied()
            if occ is not None:
                lo, hi = min(lo, occ[0]), max(hi, occ[1])
        return hi - lo + 1

    def update(self, v: np.ndarray) -> None:
        v = np.asarray(v, dtype=float).ravel()
        fin = np.isfinite(v)
        self.nan += int(v.size - fin.sum())
        v = v[fin]
        if v.size == 0:
            return
        self._cum = None
        self.vmin = min(self.vmin, float(v.min()))
        self.vmax = max(self.vmax, float(v.max()))
        if self.s is None:
            self.s = grid_scale(v)
        while True:
            idx = self._index(v)
            lo, hi = int(idx.min()), int(idx.max())
            if self._span(lo, hi) <= self.max_bins:
                break
            self._coarsen()
        self._add(np.bincount(idx - lo), lo)
        self.n += int(v.size)

    def merge(self, other: "_Hist") -> None:
        """Add ``other`` (a histogram on the same grid) to this one, exactly."""
        if other.s is not None:
            if self.s is None:
                self.s = other.s  # this one holds only zeros (bin 0 on any scale) or nothing
            elif self.s != other.s:
                raise InputError(f"scales: the summaries are on different grids (scale {self.s!r} and "
                                 f"{other.s!r}); give both the same scales")
        self._cum = None
        self.n += other.n
        self.nan += other.nan
        self.vmin, self.vmax = min(self.vmin, other.vmin), max(self.vmax, other.vmax)
        counts, offset, w = other.counts, other.offset, other.w
        occ = other._occupied()
        if occ is None:
            counts = counts[:0]
        else:  # without its empty margins
            counts, offset = counts[occ[0] - offset: occ[1] - offset + 1], occ[0]
        while self.w < w:
            self._coarsen()
        while w < self.w:
            counts, offset = _halve(counts, offset)
            w *= 2.0
        while counts.size and self._span(offset, offset + counts.size - 1) > self.max_bins:
            self._coarsen()
            counts, offset = _halve(counts, offset)
        if counts.size:
            self._add(counts, offset)

    def order_stat(self, k: np.ndarray) -> np.ndarray:
        """Estimates of the k-th smallest values (0-based)."""
        if self._cum is None:
            self._cum = np.cumsum(self.counts)
        b = np.searchsorted(self._cum, k + 1, side="left")
        u = (b + self.offset + 0.5) * self.w
        est = np.zeros(k.shape) if self.s is None else self.s * np.sinh(u)  # only zeros: 0
        est = np.clip(est, self.vmin, self.vmax)
        est = np.where(k == 0, self.vmin, est)
        return np.where(k == self.n - 1, self.vmax, est)


class StreamingSummary:
    """Quantiles of each result over many chunks of samples in bounded memory (module docstring).

    Parameters
    ----------
    results : iterable of str, optional
        Names summarised (default: the keys of the first chunk).
    rel_width : float
        Bin width on the asinh grid: the relative width of the bins for values well away from
        zero (default 1e-4).
    max_bins : int
        Most bins kept per result; beyond it bins are merged in pairs.
    scales : mapping of str -> float, optional
        The grid's scale of some results, in each result's unit (> 0), fixed before any
        sample; the others take it from the first chunk with a non-zero value
        (:func:`grid_scale`).  Summaries to be merged need the same scales.

    Examples
    --------
    >>> s = StreamingSummary(["av"])
    >>> s.update({"av": np.array([10.0, 20.0, 30.0])})
    >>> float(s.quantile("av", 0.0)), float(s.quantile("av", 1.0))
    (10.0, 30.0)
    """

    def __init__(self, results: Iterable[str] | None = None, rel_width: float = REL_WIDTH,
                 max_bins: int = 1 << 20, scales: Mapping[str, float] | None = None):
        if not (math.isfinite(rel_width) and 0 < rel_width <= 0.1):
            raise InputError(f"rel_width: expected a bin width in (0, 0.1], got {rel_width!r}")
        if isinstance(max_bins, bool) or not isinstance(max_bins, int) or max_bins < 16:
            raise InputError(f"max_bins: expected a whole number >= 16, got {max_bins!r}")
        self._scales = dict(scales or {})
        for name, sc in self._scales.items():
            if isinstance(sc, bool) or not isinstance(sc, (int, float)) or not (math.isfinite(sc) and sc > 0):
                raise InputError(f"scales: the scale of {name!r} must be a positive number, got {sc!r}")
        self.rel_width = float(rel_width)
        self.max_bins = max_bins
        self._h: dict[str, _Hist] = {}
        if results is not None:
            for r in results:
                self._h[r] = self._new(r)

    def _new(self, name: str) -> _Hist:
        sc = self._scales.get(name)
        return _Hist(self.rel_width, self.max_bins, None if sc is None else float(sc))

    @property
    def results(self) -> tuple[str, ...]:
        """The names summarised."""
        return tuple(self._h)

    @property
    def scales(self) -> dict[str, float | None]:
        """The scale of each result's grid (its unit; ``None`` while it has seen no non-zero value)."""
        return {r: h.s for r, h in self._h.items()}

    def update(self, values: Mapping[str, np.ndarray]) -> None:
        """Add one chunk of samples.

        Parameters
        ----------
        values : mapping of str -> ndarray
            Result name -> the chunk's samples (NaN or infinite: no value, counted by
            :meth:`missing`).
        """
        if not self._h:
            for r in values:
                self._h[r] = self._new(r)
        for r, h in self._h.items():
            if r in values:
                h.update(values[r])

    def merge(self, other: "StreamingSummary") -> None:
        """Add another summary's samples to this one.

        Exact and independent of the order: the merged summary is the one of all the samples of
        both, as if one summary had seen them (module docstring).

        Parameters
        ----------
        other : StreamingSummary
            A summary of the same results on the same grid (``rel_width``, ``max_bins``, and
            the same scale for every result that has one in both).
        """
        if not isinstance(other, StreamingSummary):
            raise InputError(f"other: expected a StreamingSummary, got {type(other).__name__}")
        if (other.rel_width, other.max_bins) != (self.rel_width, self.max_bins):
            raise InputError(f"other: its grid (rel_width {other.rel_width!r}, max_bins {other.max_bins}) differs "
                             f"from this summary's ({self.rel_width!r}, {self.max_bins})")
        if self._h and other._h and set(other._h) != set(self._h):
            raise InputError(f"other: it summarises {', '.join(other._h)}; expected {', '.join(self._h)}")
        for r, h in other._h.items():
            if r not in self._h:
                self._h[r] = self._new(r)
            self._h[r].merge(h)

    def _get(self, name: str) -> _Hist:
        try:
            return self._h[name]
        except KeyError:
            raise InputError(f"result: {name!r} is not summarised; expected one of {', '.join(self._h)}") from None

    def count(self, name: str) -> int:
        """Samples with a finite value of the result ``name``.

        Parameters
        ----------
        name : str
            A summarised result.
        """
        return self._get(name).n

    def missing(self, name: str) -> int:
        """Samples without a value (NaN or infinite) of the result ``name``.

        Parameters
        ----------
        name : str
            A summarised result.
        """
        return self._get(name).nan

    def quantile(self, name: str, q):
        """Quantile(s) of a result, as numpy's default ('linear') method would give them.

        Parameters
        ----------
        name : str
            A summarised result.
        q : float or array_like
            Quantiles as fractions from 0 to 1 (0 and 1 give the exact minimum and maximum).

        Returns
        -------
        float or ndarray
            The estimates (NaN when no finite value was seen); error at most
            :meth:`error_bound`.
        """
        h = self._get(name)
        qa = np.asarray(q, dtype=float)
        if np.any(~np.isfinite(qa)) or np.any((qa < 0) | (qa > 1)):
            raise InputError(f"q: expected quantiles from 0 to 1, got {q!r}")
        if h.n == 0:
            out = np.full(qa.shape, np.nan)
        else:
            pos = qa * (h.n - 1)
            k = np.floor(pos).astype(np.int64)
            frac = pos - k
            a = h.order_stat(k)
            b = h.order_stat(np.minimum(k + 1, h.n - 1))
            out = a + frac * (b - a)
        return float(out) if out.ndim == 0 else out

    def error_bound(self, name: str, value) -> float:
        """Bound on the error of a quantile near ``value``: ``w * sqrt(value**2 + s**2)``.

        Parameters
        ----------
        name : str
            A summarised result.
        value : float
            The quantile (or a value near it), in the result's unit.

        Returns
        -------
        float
            ``w`` is the current bin width (``rel_width``, doubled by each merge of bins) and
            ``s`` the scale of the grid; 0 while only zeros were seen (then exact).
        """
        h = self._get(name)
        if h.s is None:
            return 0.0
        return h.w * math.hypot(float(value), h.s)

    def stats(self) -> dict[str, dict | None]:
        """``{"min", "p5", "p50", "p95", "max"}`` per result (``None`` with no finite value)."""
        out = {}
        for r, h in self._h.items():
            if h.n == 0:
                out[r] = None
                continue
            q = self.quantile(r, np.array(list(QUANTILES.values())) / 100.0)
            out[r] = {k: float(x) for k, x in zip(QUANTILES, q)}
        return out

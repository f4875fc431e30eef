"""Cross-check of every conversion against scikit-rf's own functions.

For a two-port, every kind that exists is computed by devmodels; then every
(source, target) pair is recomputed by scikit-rf through its S-parameter functions
(``skrf.network.z2s``, ``s2h``, ...; power-wave definition, real reference
resistance) and compared.  The deviation of a point is normwise: the largest
element difference over the largest element, after scaling each element to be
dimensionless with the reference resistance (ohm entries divided by z0, siemens
entries multiplied by it).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .constants import KINDS
from .exceptions import SingularParameterError
from .twoport import TwoPort

__all__ = ["CrossCheck", "crosscheck", "DEFAULT_TOLERANCE"]

#: Default tolerance on the worst normwise relative deviation.
DEFAULT_TOLERANCE = 1e-9

# Unit exponent of each element in ohm (z: +1, y: -1, ...), for scaling by z0.
_OHM_POWER = {
    "z": ((1, 1), (1, 1)),
    "y": ((-1, -1), (-1, -1)),
    "h": ((1, 0), (0, -1)),
    "g": ((-1, 0), (0, 1)),
    "abcd": ((0, 1), (-1, 0)),
    "s": ((0, 0), (0, 0)),
}


@dataclass(frozen=True, slots=True)
class CrossCheck:
    """Result of :func:`crosscheck`.

    Attributes
    ----------
    max_rel_error : float
        Worst normwise relative deviation over all pairs and points.
    tolerance : float
        The tolerance it was compared with.
    checked : int
        Number of (source kind, target kind) pairs compared.
    worst : tuple of str
        The pair with the worst deviation.
    skipped : tuple of str
        Kinds that do not exist for this network and were left out.
    unchecked : tuple of str
        Pairs whose scikit-rf route fails although both kinds exist (scikit-rf goes
        through Z or S, which may not exist), so they could not be compared.
    pairs : dict
        Worst deviation of each pair, keyed ``"src->dst"``.
    """

    max_rel_error: float
    tolerance: float
    checked: int
    worst: tuple[str, str] | None
    skipped: tuple[str, ...] = ()
    unchecked: tuple[str, ...] = ()
    pairs: dict = field(default_factory=dict)

    @property
    def ok(self) -> bool:
        """True when at least one conversion was checked and the worst deviation is within tolerance."""
        return self.max_rel_error <= self.tolerance and self.checked > 0


def _scale(kind: str, data: np.ndarray, r: float) -> np.ndarray:
    p = np.array(_OHM_POWER[kind], dtype=float)
    return data * (r ** -p)


def _skrf_funcs():
    import skrf.network as rn

    to_s = {"z": rn.z2s, "y": rn.y2s, "h": rn.h2s, "g": rn.g2s, "abcd": rn.a2s}
    from_s = {"z": rn.s2z, "y": rn.s2y, "h": rn.s2h, "g": rn.s2g, "abcd": rn.s2a}
    return to_s, from_s


def crosscheck(tp: TwoPort, tolerance: float = DEFAULT_TOLERANCE) -> CrossCheck:
    """Recompute every conversion of ``tp`` with scikit-rf and report the worst deviation.

    Parameters
    ----------
    tp : TwoPort
        Any two-port; its reference resistances are used for S.
    tolerance : float
        Largest acceptable normwise relative deviation.
    """
    to_s, from_s = _skrf_funcs()
    z0 = np.array(tp.z0, dtype=float)
    r = float(np.sqrt(z0[0] * z0[1]))
    sets: dict[str, np.ndarray] = {}
    skipped = []
    for k in KINDS:
        try:
            sets[k] = tp.to(k).data
        except SingularParameterError:
            skipped.append(k)
    pairs: dict[str, float] = {}
    unchecked: list[str] = []
    worst, worst_pair = 0.0, None
    for src, data in sets.items():
        for dst in sets:
            if dst == src:
                continue
            ref = _reference(to_s, from_s, data, src, dst, z0)
            if ref is None:  # scikit-rf's route (through Z or S) does not exist here
                unchecked.append(f"{src}->{dst}")
                continue
            mine = _scale(dst, _own(data, src, dst, tp.z0), r)
            ref = _scale(dst, ref, r)
            num = np.abs(mine - ref).reshape(len(mine), -1).max(axis=1)
            den = np.abs(ref).reshape(len(ref), -1).max(axis=1)
            rel = num / np.where(den > 0, den, 1.0)
            e = float(rel.max()) if rel.size else 0.0
            pairs[f"{src}->{dst}"] = e
            if worst_pair is None or e > worst:
                worst, worst_pair = e, (src, dst)
    return CrossCheck(max_rel_error=worst, tolerance=tolerance, checked=len(pairs),
                      worst=worst_pair, skipped=tuple(skipped), unchecked=tuple(unchecked), pairs=pairs)


def _reference(to_s, from_s, data, src, dst, z0):
    """scikit-rf's value of the src -> dst conversion, or None where its route fails."""
    import warnings

    with warnings.catch_warnings(), np.errstate(all="ignore"):
        warnings.simplefilter("ignore")
        try:
            s_ref = data if src == "s" else to_s[src](data, z0)
            ref = s_ref if dst == "s" else from_s[dst](s_ref, z0)
        except (np.linalg.LinAlgError, ZeroDivisionError, FloatingPointError, ValueError):
            return None
    if not np.all(np.isfinite(ref)):
        return None
    return ref


def _own(data: np.ndarray, src: str, dst: str, z0) -> np.ndarray:
    from .conversions import convert

    return convert(data, src, dst, z0)

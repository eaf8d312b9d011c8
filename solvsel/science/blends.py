"""The blend optimiser: exact best fractions of 1- to 4-liquid blends for a target.

For every combination of ``k`` liquids (k = 1..4) from a pool, the volume
fractions that bring the blend's HSP closest to a target are found exactly, for
all combinations of one size at once.  The blend HSP is the volume-fraction
average of the components (Hansen [1]_), so in the scaled coordinates
``(2 dD, dP, dH)`` (where Euclidean distance is Ra) the blend is the point
``sum_i x_i p_i`` and the problem is the projection of the target on the
bounded convex hull of the combination:

.. math::
    \\min_x \\; \\Big\\lVert \\sum_i x_i p_i - t \\Big\\rVert^2
    \\quad \\text{s.t.} \\quad \\sum_i x_i = 1, \\; l_i \\le x_i \\le u_i

a convex quadratic programme with at most four unknowns.  It is solved by
enumerating its faces: each fraction is either free or held at one of its
bounds; for each such pattern the equality-constrained problem on the free
fractions is a least-squares problem of at most 3 unknowns (differences of the
free points), solved in closed form for all combinations at once (batched
Cramer / adjugate solves).  The optimum of a convex QP is attained at a basic
solution (a vertex of the set of optimal ``x``), whose free points are
affinely independent, so the smallest objective over all primal-feasible
candidates of all patterns is the exact optimum.  Degenerate faces (free
points affinely dependent: collinear, coplanar or repeated liquids) are
skipped; their optimum is attained on a lower face that is enumerated anyway.

Tie-break (non-unique optimum, e.g. three collinear liquids): the candidate
with the fewest free fractions (the lowest face) wins, then the first face in
enumeration order; the result is deterministic.

On top of the numerical core, :func:`optimise_blends` applies the pool filters
(use, jurisdiction, include/exclude, hazard class, boiling window, flash
point), per-liquid fraction bounds, the one-phase check, selectivity against
reject solutes and a Pareto front, and gathers the properties of each blend.

References
----------
.. [1] Hansen, C. M. *Hansen Solubility Parameters: A User's Handbook*, 2nd ed.
   CRC Press, 2007. ISBN 978-0-8493-7248-3.
.. [2] Nocedal, J.; Wright, S. J. *Numerical Optimization*, 2nd ed., ch. 16
   (active-set methods for convex QP). Springer, 2006.
   DOI 10.1007/978-0-387-40065-5.
"""

from __future__ import annotations

import itertools
import math
from dataclasses import dataclass
from math import comb

import numpy as np

from ..errors import InputError
from .hansen import SCALE, as_hsp

__all__ = [
    "MAX_COMPONENTS",
    "FractionBatch",
    "best_fractions",
    "combinations_array",
    "kkt_violation",
    "search_blends",
    "SearchCancelled",
    "pareto_front",
]

#: Largest blend the optimiser builds (4 points in 3-D already span the space).
MAX_COMPONENTS = 4

#: Tolerance on fractions when a candidate is tested against its bounds.
_FEAS_TOL = 1e-9
#: Relative determinant below which a face's free points count as affinely dependent.
_DET_TOL = 1e-10
#: Two objectives (Ra^2, [MPa]) closer than this are a tie.
_TIE_TOL = 1e-10


@dataclass(frozen=True)
class FractionBatch:
    """Exact best fractions for a batch of combinations of the same size.

    Attributes
    ----------
    fractions : ndarray, shape (n, k)
        volume fractions [-] of each combination's liquids (rows sum to 1);
        NaN where the bounds cannot be met
    ra : ndarray, shape (n,)
        Hansen distance of the best blend to the target [MPa^0.5]; inf where infeasible
    hsp : ndarray, shape (n, 3)
        blend dD, dP, dH [MPa^0.5]
    feasible : ndarray of bool, shape (n,)
        False where no fractions meet the bounds and sum to 1
    n_free : ndarray of int, shape (n,)
        number of fractions strictly between their bounds at the optimum
    """

    fractions: np.ndarray
    ra: np.ndarray
    hsp: np.ndarray
    feasible: np.ndarray
    n_free: np.ndarray

    def to_dict(self) -> dict:
        return {
            "fractions": self.fractions,
            "ra": self.ra,
            "dD": self.hsp[:, 0],
            "dP": self.hsp[:, 1],
            "dH": self.hsp[:, 2],
            "feasible": self.feasible,
            "n_free": self.n_free,
        }


def _solve_gram(G, b):
    """Solve ``G z = b`` for a batch of symmetric PSD matrices of size 0..3.

    ``G[i][j]`` and ``b[i]`` are 1-D arrays over the batch (coordinate-major,
    so every operation is a contiguous vector operation).  Closed form
    (Cramer / adjugate), so no batch fails as a whole on one singular matrix.
    Returns the list of ``z[i]`` and a mask of well-conditioned rows: the
    determinant relative to the product of the diagonal (the squared volume of
    the face's simplex relative to its edges) above ``_DET_TOL``.
    """
    m = len(b)
    if m == 0:
        return [], None
    if m == 1:
        det = G[0][0]
        ok = det > 0
        return [b[0] / np.where(ok, det, 1.0)], ok
    diag_prod = G[0][0] * G[1][1]
    if m == 2:
        a, c, d = G[0][0], G[0][1], G[1][1]
        det = a * d - c * c
        ok = (diag_prod > 0) & (det > _DET_TOL * diag_prod)
        inv = 1.0 / np.where(ok, det, 1.0)
        return [(d * b[0] - c * b[1]) * inv, (a * b[1] - c * b[0]) * inv], ok
    if m == 3:
        g = G
        diag_prod = diag_prod * g[2][2]
        c00 = g[1][1] * g[2][2] - g[1][2] * g[1][2]
        c01 = g[1][2] * g[0][2] - g[0][1] * g[2][2]
        c02 = g[0][1] * g[1][2] - g[1][1] * g[0][2]
        c11 = g[0][0] * g[2][2] - g[0][2] * g[0][2]
        c12 = g[0][1] * g[0][2] - g[0][0] * g[1][2]
        c22 = g[0][0] * g[1][1] - g[0][1] * g[0][1]
        det = g[0][0] * c00 + g[0][1] * c01 + g[0][2] * c02
        ok = (diag_prod > 0) & (det > _DET_TOL * diag_prod)
        inv = 1.0 / np.where(ok, det, 1.0)
        # G is symmetric, so its adjugate is the (symmetric) cofactor matrix
        return [
            (c00 * b[0] + c01 * b[1] + c02 * b[2]) * inv,
            (c01 * b[0] + c11 * b[1] + c12 * b[2]) * inv,
            (c02 * b[0] + c12 * b[1] + c22 * b[2]) * inv,
        ], ok
    raise InputError(f"at most {MAX_COMPONENTS} components per blend, got {m + 1}")


def _patterns(k: int, with_upper: bool):
    """Faces of the bounded simplex: a state per fraction (0 free, 1 at lower, 2 at upper).

    Ordered by number of free fractions (ascending), which implements the
    tie-break "lowest face first".
    """
    states = (0, 1, 2) if with_upper else (0, 1)
    pats = [p for p in itertools.product(states, repeat=k)]
    pats.sort(key=lambda p: (sum(1 for s in p if s == 0), p))
    return pats


def _broadcast_bounds(bound, n, k, default, name):
    if bound is None:
        return np.full((n, k), default)
    arr = np.asarray(bound, dtype=float)
    try:
        arr = np.broadcast_to(arr, (n, k))
    except ValueError:
        raise InputError(f"{name}: expected one bound per liquid ({k}) or per combination, got shape {arr.shape}") from None
    if np.any(np.isnan(arr)):
        raise InputError(f"{name}: bounds must be numbers between 0 and 1")
    return arr


def best_fractions(hsp, target, lower=None, upper=None) -> FractionBatch:
    r"""Exact volume fractions minimising Ra to a target, for a batch of combinations.

    .. math::
        \min_x R_a\Big(\sum_i x_i \delta_i,\; \delta_t\Big)
        \quad \text{s.t.} \quad \sum_i x_i = 1,\; l_i \le x_i \le u_i

    with the blend HSP the volume-fraction average of the components [1]_.

    Parameters
    ----------
    hsp : array_like, shape (n, k, 3) or (k, 3)
        dD, dP, dH of the k liquids of each of n combinations [MPa^0.5], k <= 4
    target : array_like, shape (3,) or (n, 3)
        dD, dP, dH of the target [MPa^0.5]
    lower, upper : array_like, shape (k,) or (n, k), optional
        bounds on each volume fraction [-] (default 0 and 1)

    Returns
    -------
    FractionBatch
        fractions, Ra [MPa^0.5], blend HSP, feasibility and the face of the optimum

    Examples
    --------
    A target made as 70/30 (by volume) ethanol/water, with the Hansen (2007)
    Appendix A values of ethanol (15.8, 8.8, 19.4) and water (15.5, 16.0, 42.3),
    is matched exactly (Ra = 0) by the fractions it was made from:

    >>> ethanol, water = [15.8, 8.8, 19.4], [15.5, 16.0, 42.3]
    >>> t = 0.7 * np.array(ethanol) + 0.3 * np.array(water)
    >>> res = best_fractions([ethanol, water], t)
    >>> np.round(res.fractions, 6).tolist(), round(float(res.ra[0]), 9)
    ([[0.7, 0.3]], 0.0)

    With ethanol capped at 0.5 the optimum sits on the bound:

    >>> res = best_fractions([ethanol, water], t, upper=[0.5, 1.0])
    >>> np.round(res.fractions, 6).tolist()
    [[0.5, 0.5]]
    """
    P = as_hsp(hsp, "hsp")
    if P.ndim == 2:
        P = P[None]
    if P.ndim != 3:
        raise InputError(f"hsp: expected shape (n, k, 3) or (k, 3), got {np.shape(hsp)}")
    n, k, _ = P.shape
    if not 1 <= k <= MAX_COMPONENTS:
        raise InputError(f"blends of 1 to {MAX_COMPONENTS} liquids only, got {k}")
    T = np.broadcast_to(as_hsp(target, "target"), (n, 3))
    lo = _broadcast_bounds(lower, n, k, 0.0, "lower")
    hi = _broadcast_bounds(upper, n, k, 1.0, "upper")
    if np.any(lo < -_FEAS_TOL) or np.any(hi > 1 + _FEAS_TOL) or np.any(lo > hi + _FEAS_TOL):
        raise InputError("fraction bounds must satisfy 0 <= lower <= upper <= 1")

    # Scaled coordinates centred on the target (the objective is |y|^2), laid
    # out coordinate-major: Qc[i][c] is coordinate c of liquid i over the batch.
    Q = (P - T[:, None, :]) * SCALE
    Qc = np.ascontiguousarray(Q.transpose(1, 2, 0))
    loc = np.ascontiguousarray(lo.T)
    hic = np.ascontiguousarray(hi.T)
    # Tighten bounds by the simplex: x_i <= 1 - sum_{j!=i} lo_j.
    hi_eff = np.minimum(hi, 1.0 - (lo.sum(1, keepdims=True) - lo))
    feasible = (lo.sum(1) <= 1 + _FEAS_TOL) & (hi.sum(1) >= 1 - _FEAS_TOL)
    # A fraction needs an "at upper bound" state only where that bound binds.
    upper_binds = (hi_eff < 1.0 - _FEAS_TOL) & feasible[:, None]
    with_upper = bool(np.any(upper_binds))
    all_feasible = bool(np.all(feasible))
    rows_feasible = np.flatnonzero(feasible)

    best_obj = np.full(n, np.inf)
    best_x = np.full((k, n), np.nan)
    best_free = np.zeros(n, dtype=int)
    for pat in _patterns(k, with_upper):
        free = [i for i, st in enumerate(pat) if st == 0]
        fixed = [i for i, st in enumerate(pat) if st != 0]
        at_hi = [i for i, st in enumerate(pat) if st == 2]
        if at_hi:
            rows = rows_feasible[np.all(upper_binds[rows_feasible][:, at_hi], axis=1)]
        elif all_feasible:
            rows = None  # every row: no copies
        else:
            rows = rows_feasible
        if rows is not None and rows.size == 0:
            continue
        if rows is None:
            q, lo_r, hi_r = Qc, loc, hic
        else:
            q, lo_r, hi_r = Qc[:, :, rows], loc[:, rows], hic[:, rows]
        x = [None] * k
        for i in fixed:
            x[i] = hi_r[i] if pat[i] == 2 else lo_r[i]
        s = 1.0 - sum(x[i] for i in fixed) if fixed else 1.0
        y = [sum(x[i] * q[i][c] for i in fixed) if fixed else 0.0 for c in range(3)]
        if free:
            f0 = free[0]
            y = [y[c] + s * q[f0][c] for c in range(3)]
            E = [[q[j][c] - q[f0][c] for c in range(3)] for j in free[1:]]
            G = [[E[a][0] * E[b][0] + E[a][1] * E[b][1] + E[a][2] * E[b][2]
                  for b in range(len(E))] for a in range(len(E))]
            rhs = [-(E[a][0] * y[0] + E[a][1] * y[1] + E[a][2] * y[2]) for a in range(len(E))]
            z, ok = _solve_gram(G, rhs)
            x[f0] = s - sum(z) if z else s + 0.0 * q[f0][0]
            for j, zj in zip(free[1:], z):
                x[j] = zj
            for zj, Ej in zip(z, E):
                y = [y[c] + zj * Ej[c] for c in range(3)]
            if ok is None:
                ok = np.ones(q.shape[2], dtype=bool)
        else:
            ok = np.abs(s) <= _FEAS_TOL
        for i in free:
            ok &= (x[i] >= lo_r[i] - _FEAS_TOL) & (x[i] <= hi_r[i] + _FEAS_TOL)
        obj = y[0] * y[0] + y[1] * y[1] + y[2] * y[2]
        if rows is None:
            better = ok & (obj < best_obj - _TIE_TOL)
            r = better
        else:
            better = ok & (obj < best_obj[rows] - _TIE_TOL)
            r = rows[better]
        if np.any(better):
            best_obj[r] = obj[better]
            for i in range(k):
                best_x[i][r] = x[i][better]
            best_free[r] = len(free)
    best_x = best_x.T

    found = np.isfinite(best_obj)
    best_x = np.where(found[:, None], np.clip(best_x, lo, hi), np.nan)
    blend = np.einsum("nk,nkc->nc", np.nan_to_num(best_x), P)
    # Ra from the final fractions (not the face's objective), so it is what a user recomputes.
    ra = np.where(found, np.sqrt(np.sum(((blend - T) * SCALE) ** 2, axis=1)), np.inf)
    blend = np.where(found[:, None], blend, np.nan)
    return FractionBatch(fractions=best_x, ra=ra, hsp=blend, feasible=found, n_free=best_free)


def kkt_violation(hsp, target, fractions, lower=None, upper=None) -> np.ndarray:
    """Largest violation of the optimality (KKT) conditions of each blend [MPa].

    For the objective ``f = |sum x_i p_i - t|^2`` (scaled space) with gradient
    ``g_i = 2 p_i . (y - t)``: fractions strictly inside their bounds must share
    one value of ``g_i`` (the multiplier of ``sum x = 1``), fractions at the lower
    bound must have ``g_i`` at least that value and fractions at the upper bound
    at most.  Used by the tests to certify the face enumeration; 0 means optimal.
    """
    P = as_hsp(hsp, "hsp")
    if P.ndim == 2:
        P = P[None]
    n, k, _ = P.shape
    T = np.broadcast_to(as_hsp(target, "target"), (n, 3))
    x = np.asarray(fractions, dtype=float).reshape(n, k)
    lo = _broadcast_bounds(lower, n, k, 0.0, "lower")
    hi = _broadcast_bounds(upper, n, k, 1.0, "upper")
    Q = (P - T[:, None, :]) * SCALE
    y = np.einsum("nk,nkc->nc", x, Q)
    g = 2 * np.einsum("nkc,nc->nk", Q, y)
    tol = 1e-7
    at_lo = x <= lo + tol
    at_hi = x >= hi - tol
    free = ~(at_lo | at_hi)
    out = np.zeros(n)
    for r in range(n):
        gf = g[r, free[r]]
        # admissible interval for the multiplier -lambda = common gradient value
        lo_mu = np.max(g[r, at_hi[r] & ~at_lo[r]], initial=-np.inf)
        hi_mu = np.min(g[r, at_lo[r] & ~at_hi[r]], initial=np.inf)
        if gf.size:
            mu = gf.mean()
            v = max(float(np.max(np.abs(gf - mu))), lo_mu - mu, mu - hi_mu)
        else:  # every fraction on a bound: some multiplier must fit between them
            v = lo_mu - hi_mu if np.isfinite(lo_mu) and np.isfinite(hi_mu) else 0.0
        out[r] = max(v, 0.0)
    return out


def combinations_array(m: int, k: int, required=()) -> np.ndarray:
    """All combinations of ``k`` of ``m`` pool indices as an int array (n, k), lexicographic.

    ``required`` indices must be in every combination (liquids with a lower
    fraction bound above zero).
    """
    if k > m:
        return np.empty((0, k), dtype=np.int32)
    required = sorted(set(int(i) for i in required))
    if len(required) > k:
        return np.empty((0, k), dtype=np.int32)
    count = comb(m, k)
    flat = np.fromiter(
        itertools.chain.from_iterable(itertools.combinations(range(m), k)),
        dtype=np.int32,
        count=count * k,
    )
    out = flat.reshape(count, k)
    for i in required:
        out = out[np.any(out == i, axis=1)]
    return out


class SearchCancelled(Exception):
    """Raised inside :func:`search_blends` when the progress callback asks to stop."""


def _chunks(n: int, size: int):
    for start in range(0, n, size):
        yield slice(start, min(n, start + size))


def search_blends(pool_hsp, target, max_components: int = 3, lower=None, upper=None,
                  sizes=None, chunk: int = 1 << 16, progress=None):
    """Exact best fractions of every combination of 1..``max_components`` liquids of a pool.

    Parameters
    ----------
    pool_hsp : array_like, shape (m, 3)
        dD, dP, dH of the pool's liquids [MPa^0.5]
    target : array_like, shape (3,)
        target dD, dP, dH [MPa^0.5]
    max_components : int
        largest blend, 1..4
    lower, upper : array_like, shape (m,), optional
        volume-fraction bounds per pool liquid [-]; a lower bound above zero makes
        the liquid required in every blend
    sizes : iterable of int, optional
        blend sizes to search (default 1..max_components)
    chunk : int
        combinations solved per batch (memory bound)
    progress : callable, optional
        ``progress(done, total)`` after each batch (combinations); returning
        False stops the search (:class:`SearchCancelled` is raised)

    Yields
    ------
    (k, combos, FractionBatch)
        for each size k: the pool indices (n, k) and the batch result
    """
    H = as_hsp(pool_hsp, "pool_hsp")
    if H.ndim != 2:
        raise InputError(f"pool_hsp: expected shape (m, 3), got {H.shape}")
    m = H.shape[0]
    if not 1 <= int(max_components) <= MAX_COMPONENTS:
        raise InputError(f"max_components: expected 1 to {MAX_COMPONENTS}, got {max_components}")
    lo = np.zeros(m) if lower is None else np.asarray(lower, dtype=float)
    hi = np.ones(m) if upper is None else np.asarray(upper, dtype=float)
    if lo.shape != (m,) or hi.shape != (m,):
        raise InputError(f"lower/upper: expected one bound per pool liquid ({m})")
    required = np.flatnonzero(lo > 0)
    sizes = list(sizes or range(1, int(max_components) + 1))
    total = sum(comb(m - len(required), k - len(required)) if k >= len(required) else 0 for k in sizes)
    done = 0
    for k in sizes:
        combos = combinations_array(m, k, required)
        if combos.shape[0] == 0:
            continue
        parts = []
        for sl in _chunks(combos.shape[0], chunk):
            parts.append(best_fractions(H[combos[sl]], target, lo[combos[sl]], hi[combos[sl]]))
            done += sl.stop - sl.start
            if progress is not None and progress(done, total) is False:
                raise SearchCancelled(f"search stopped after {done} of {total} combinations")
        if len(parts) == 1:
            res = parts[0]
        else:
            res = FractionBatch(*(np.concatenate([getattr(p, f) for p in parts])
                                  for f in ("fractions", "ra", "hsp", "feasible", "n_free")))
        yield k, combos, res


def pareto_front(objectives) -> np.ndarray:
    """Mask of the non-dominated rows of an (n, m) array of objectives, all minimised.

    A row is dominated if another row is no worse in every objective and
    strictly better in one. NaN counts as worst.

    >>> pareto_front([[1, 2], [2, 1], [2, 2], [1, 2]]).tolist()
    [True, True, False, True]
    """
    F = np.asarray(objectives, dtype=float)
    if F.ndim != 2:
        raise InputError("objectives: expected a 2-D array (rows = candidates)")
    F = np.where(np.isnan(F), np.inf, F)
    n = F.shape[0]
    keep = np.ones(n, dtype=bool)
    for i in range(n):
        if not keep[i]:
            continue
        le = np.all(F <= F[i], axis=1)
        lt = np.any(F < F[i], axis=1)
        dominated_by = le & lt
        if np.any(dominated_by):
            keep[i] = False
            continue
        # i dominates those it is no worse than everywhere and better somewhere
        dom = np.all(F[i] <= F, axis=1) & np.any(F[i] < F, axis=1)
        keep &= ~dom
    return keep


# ============================================================================ catalog level
#
# Everything below works on catalog records: it builds the pool from the
# user's constraints, runs the exact search, and checks and describes the best
# blends.  The checks that belong to other modules (one phase: miscibility;
# hazard class, food status, cautions and dose limits: compliance) are called
# through the small adapters at the end of this file.

__all__ += [
    "BlendComponent",
    "RejectDistance",
    "Blend",
    "DroppedBlend",
    "ExcludedLiquid",
    "BlendSearch",
    "FractionBound",
    "optimise_blends",
    "USES",
]

#: Intended uses a pool can be restricted to (the ``roles`` of the solvents table).
USES = ("carrier", "extraction", "bench")

#: Blends checked one by one (one phase, dose) at most, best first.
_SCAN_LIMIT = 20000
#: Dropped blends listed individually (the rest are counted).
_DROPPED_LISTED = 30

_GENERAL_CAUTION = (
    "Screening estimate from Hansen solubility parameters (blend HSP by volume-fraction average): "
    "confirm solubility, phase behaviour and stability at the bench; measured data win."
)


@dataclass(frozen=True)
class FractionBound:
    """A bound on one liquid's volume fraction in every blend, e.g. ``ethanol <= 0.3``.

    A lower bound above zero means the liquid must be in every blend.
    """

    name: str
    lower: float = 0.0
    upper: float = 1.0

    def to_dict(self) -> dict:
        return {"name": self.name, "lower": self.lower, "upper": self.upper}


@dataclass(frozen=True)
class BlendComponent:
    """One liquid of a blend."""

    name: str
    cas: str
    volume_fraction: float
    mass_fraction: float | None
    origin: str = "bundled"

    def to_dict(self) -> dict:
        return {"name": self.name, "cas": self.cas, "volume_fraction": self.volume_fraction,
                "mass_fraction": self.mass_fraction, "origin": self.origin}


@dataclass(frozen=True)
class RejectDistance:
    """How far a blend keeps a solute to reject (RED > 1: outside its sphere)."""

    name: str
    ra: float
    red: float | None

    def to_dict(self) -> dict:
        return {"name": self.name, "ra": self.ra, "red": self.red}


@dataclass(frozen=True)
class Blend:
    """A ranked blend with its properties and cautions.

    ``ra`` [MPa^0.5] is the Hansen distance of the blend's HSP (dD, dP, dH,
    volume-fraction average, at the search temperature) to the target; ``red``
    is ``ra / R0`` (None if the target has no radius).  ``worst_reject_ra`` is
    the smallest Ra to a reject solute (the one the blend dissolves best) and
    ``worst_reject_red`` the lowest RED among them (None unless every reject has
    a radius).  ``selectivity`` is the margin by which the nearest reject is
    further than the target: ``worst_reject_red - red`` when the target and all
    rejects have radii (``selectivity_basis`` "RED"), else
    ``worst_reject_ra - ra`` [MPa^0.5] (basis "Ra").
    """

    components: tuple[BlendComponent, ...]
    dD: float
    dP: float
    dH: float
    ra: float
    red: float | None
    one_phase: bool | None
    phase_basis: str
    phase_note: str
    bp_min_C: float | None
    bp_max_C: float | None
    bp_complete: bool
    lowest_flash_C: float | None
    hazard: str
    hazard_rank: int
    cost: float | None
    rejects: tuple[RejectDistance, ...] = ()
    worst_reject_ra: float | None = None
    worst_reject_red: float | None = None
    selectivity: float | None = None
    selectivity_basis: str | None = None
    solubility: dict | None = None
    regulations: tuple[dict, ...] = ()
    cautions: tuple[str, ...] = ()
    pareto: bool = False
    rank: int = 0
    dose_check: dict | None = None
    #: other blends with the same fractions of liquids of the same HSP (e.g. one
    #: vegetable oil for another): the same answer of the model, folded into
    #: this one; their names, in the order of ``components``.  Cost, hazard and
    #: food-law status of those liquids may differ: see each liquid.
    alternatives: tuple[tuple[str, ...], ...] = ()

    @property
    def names(self) -> tuple[str, ...]:
        return tuple(c.name for c in self.components)

    @property
    def swapped_in(self) -> tuple[str, ...]:
        """The liquids the :attr:`alternatives` put in place of one of this blend's, sorted."""
        return tuple(sorted({n for alt in self.alternatives for n, m in zip(alt, self.names) if n != m}))

    @property
    def label(self) -> str:
        """``"ethanol 0.62 + water 0.38"`` (volume fractions); the user's own liquids marked "(yours)"."""
        return " + ".join(
            f"{c.name}{' (yours)' if c.origin.startswith('user') else ''} {c.volume_fraction:.2f}"
            for c in self.components
        )

    def to_dict(self) -> dict:
        return {
            "rank": self.rank,
            "components": [c.to_dict() for c in self.components],
            "n_components": len(self.components),
            "dD": self.dD, "dP": self.dP, "dH": self.dH,
            "ra": self.ra, "red": self.red,
            "one_phase": self.one_phase, "phase_basis": self.phase_basis, "phase_note": self.phase_note,
            "bp_min_C": self.bp_min_C, "bp_max_C": self.bp_max_C, "bp_complete": self.bp_complete,
            "lowest_flash_C": self.lowest_flash_C,
            "hazard": self.hazard, "hazard_rank": self.hazard_rank,
            "cost": self.cost,
            "rejects": [r.to_dict() for r in self.rejects],
            "worst_reject_ra": self.worst_reject_ra,
            "worst_reject_red": self.worst_reject_red,
            "selectivity": self.selectivity,
            "selectivity_basis": self.selectivity_basis,
            "solubility": self.solubility,
            "regulations": list(self.regulations),
            "pareto": self.pareto,
            "dose_check": self.dose_check,
            "alternatives": [list(a) for a in self.alternatives],
            "cautions": list(self.cautions),
        }


@dataclass(frozen=True)
class DroppedBlend:
    """A blend that ranked among the best but was left out, and why."""

    names: tuple[str, ...]
    volume_fractions: tuple[float, ...]
    ra: float
    reason: str

    def to_dict(self) -> dict:
        return {"components": [{"name": n, "volume_fraction": x} for n, x in zip(self.names, self.volume_fractions)],
                "ra": self.ra, "reason": self.reason}


@dataclass(frozen=True)
class ExcludedLiquid:
    """A liquid of the table left out of the pool, and why."""

    name: str
    reason: str

    def to_dict(self) -> dict:
        return {"name": self.name, "reason": self.reason}


@dataclass(frozen=True)
class BlendSearch:
    """Result of :func:`optimise_blends`.

    ``results`` best first; ``pareto`` the non-dominated blends among those
    that passed every check (target RED or Ra, worst reject RED, cost, hazard,
    number of components); ``dropped`` the blends that would have ranked above
    the last shown one but failed a check; ``counts`` how many combinations
    were searched and why the others went; ``success`` False (with
    ``message``) when no blend meets the constraints.
    """

    target: dict
    results: tuple[Blend, ...]
    pareto: tuple[Blend, ...]
    dropped: tuple[DroppedBlend, ...]
    excluded: tuple[ExcludedLiquid, ...]
    counts: dict
    constraints: dict
    cautions: tuple[str, ...]
    success: bool
    message: str

    def to_dict(self) -> dict:
        return {
            "target": self.target,
            "results": [b.to_dict() for b in self.results],
            "pareto": [b.to_dict() for b in self.pareto],
            "dropped": [d.to_dict() for d in self.dropped],
            "excluded": [e.to_dict() for e in self.excluded],
            "counts": self.counts,
            "constraints": self.constraints,
            "cautions": list(self.cautions),
            "success": self.success,
            "message": self.message,
        }


def _as_target(target):
    """(name, hsp array, r0, solute record or None, dict for output) from a Target, a record or numbers."""
    if hasattr(target, "dD"):
        name = getattr(target, "name", "target")
        hsp = np.array([target.dD, target.dP, target.dH], dtype=float)
        r0 = getattr(target, "r0", None)
        solute = getattr(target, "solute", None)
        if solute is None and hasattr(target, "dHfus_kJ_mol"):
            solute = target  # a Solute record itself
        info = target.to_dict() if hasattr(target, "to_dict") else {"name": name}
    else:
        vals = [float(v) for v in np.ravel(target)]
        if len(vals) not in (3, 4):
            raise InputError(f"target: expected dD, dP, dH[, R0] in MPa^0.5, got {len(vals)} numbers")
        name, hsp, r0, solute = "typed target", np.array(vals[:3]), (vals[3] if len(vals) == 4 else None), None
        info = {"name": name}
    hsp = as_hsp(hsp, "target")
    if r0 is not None and not (math.isfinite(float(r0)) and float(r0) > 0):
        raise InputError(f"target R0 must be a positive number of MPa^0.5, got {r0}")
    keep = {k: v for k, v in info.items() if k not in ("solute",)}
    keep.update({"name": name, "dD": float(hsp[0]), "dP": float(hsp[1]), "dH": float(hsp[2]),
                 "r0": None if r0 is None else float(r0)})
    return name, hsp, (None if r0 is None else float(r0)), solute, keep


def _as_rejects(rejects):
    out = []
    for r in rejects or ():
        if hasattr(r, "dD"):
            name, hsp, r0 = getattr(r, "name", "reject"), [r.dD, r.dP, r.dH], getattr(r, "r0", None)
        else:
            try:
                name, hsp, r0 = r
            except (TypeError, ValueError):
                raise InputError(f"reject: expected a solute record or (name, (dD, dP, dH), R0), got {r!r}") from None
        if r0 is not None and not (math.isfinite(float(r0)) and float(r0) > 0):
            raise InputError(f"reject '{name}': R0 must be a positive number of MPa^0.5, got {r0}")
        out.append((str(name), as_hsp(hsp, f"reject '{name}'"), None if r0 is None else float(r0)))
    return out


def _same(rec, other) -> bool:
    if rec.cas and other.cas:
        return rec.cas == other.cas
    return rec.name == other.name


def property_reason(rec, bp_min_C=None, bp_max_C=None, min_flash_C=None, max_cost=None) -> str | None:
    """Why a liquid fails the property limits of a pool (cost class, boiling window, lowest
    flash point), or None if it passes.  Shared by the blend search and the single-liquid
    ranking so both apply a limit the same way; a value not on record fails its limit.

    >>> from solvsel.data.catalog import load_catalog
    >>> property_reason(load_catalog().solvent("ethanol"), min_flash_C=60)
    'flash point 12 C, below 60 C'
    """
    if max_cost is not None and rec.cost_class is not None and rec.cost_class > int(max_cost):
        return f"cost class {rec.cost_class} above {int(max_cost)}"
    if bp_min_C is not None or bp_max_C is not None:
        if rec.bp_C is None:
            return "boiling point not on record"
        if bp_min_C is not None and rec.bp_C < bp_min_C:
            return f"boils at {rec.bp_C:g} C, below {bp_min_C:g} C"
        if bp_max_C is not None and rec.bp_C > bp_max_C:
            return f"boils at {rec.bp_C:g} C, above {bp_max_C:g} C"
    if min_flash_C is not None and rec.flammable:
        if rec.flash_C is None:
            return "flammable, flash point not on record"
        if rec.flash_C < min_flash_C:
            return f"flash point {rec.flash_C:g} C, below {min_flash_C:g} C"
    return None


def optimise_blends(
    cat,
    target,
    *,
    max_components: int = 3,
    only=None,
    exclude=None,
    use: str | None = None,
    jurisdiction: str | None = None,
    worst_flammable_category=None,
    bp_min_C: float | None = None,
    bp_max_C: float | None = None,
    min_flash_C: float | None = None,
    max_cost: int | None = None,
    bounds=(),
    temp_C: float = 25.0,
    rejects=(),
    sort: str | None = None,
    one_phase_only: bool = True,
    min_fraction: float = 0.05,
    top: int = 10,
    pareto_pool: int | None = None,
    pool=None,
    dose=None,
    category: str | None = None,
    chain: str | None = None,
    already=None,
    keep_over: bool = False,
    progress=None,
) -> BlendSearch:
    r"""Best blends of 1 to ``max_components`` liquids for a target, under constraints.

    The pool is the solvents table (or ``only`` / ``pool``) less the liquids the
    constraints leave out (each with its reason, in ``excluded``).  For every
    combination the volume fractions minimising Ra to the target are exact
    (:func:`best_fractions`); blends whose fractions put a liquid under
    ``min_fraction`` are the same as a smaller blend and are counted, not
    listed.  The best are then checked one by one, best first: one phase at
    those fractions (the miscibility module: measured pairs first, prediction
    otherwise) and the legal status for the use and jurisdiction.

    .. math::
        \delta_\mathrm{blend} = \sum_i \phi_i \delta_i,\qquad
        \mathrm{RED} = R_a(\delta_\mathrm{blend}, \delta_t) / R_0

    Parameters
    ----------
    cat : Catalog
        the catalog (solvents table and the tables the checks need)
    target : Target, Solute or sequence
        the target: a :class:`solvsel.science.target.Target`, a solute record, or
        ``(dD, dP, dH[, R0])`` [MPa^0.5]
    max_components : int
        largest blend, 1 to 4
    only, exclude : iterable of str, optional
        names (or CAS) the pool is restricted to / leaves out
    use : {"carrier", "extraction", "bench"}, optional
        intended use: keeps liquids of the table listed for that use
    jurisdiction : str, optional
        e.g. "EU", "US": leaves out liquids not permitted for ``use`` there
    worst_flammable_category : int or "none", optional
        most hazardous GHS flammable-liquid category allowed (1..4); "none"
        keeps only non-flammable liquids
    bp_min_C, bp_max_C : float, optional
        window for the normal boiling point of every liquid [C]
    min_flash_C : float, optional
        lowest closed-cup flash point allowed for any flammable liquid [C]
    max_cost : int, optional
        dearest cost class allowed (1 cheap .. 5 dear)
    bounds : iterable of FractionBound or str
        per-liquid volume-fraction bounds (``"ethanol<=0.3"``, ``"water>=0.1"``)
    temp_C : float
        temperature [C]: liquids' HSP shifted by Hansen-Beerbower (the
        target is kept at its tabulated values)
    rejects : iterable
        solutes to keep out of solution: records or ``(name, (dD, dP, dH), R0)``
    sort : {"fit", "selectivity", "cost"}, optional
        ranking: best fit (Ra); selectivity (the default with rejects): the
        checked blends are sorted into non-dominated layers on (fit, distance
        of the nearest reject), first layer first, by fit within a layer, so
        the trade-off front leads without any weighting of the two; or lowest
        cost, then fit
    one_phase_only : bool
        drop blends predicted or measured to split into two phases
    min_fraction : float
        smallest volume fraction [-] of a liquid that counts as a component
    top : int
        number of blends returned
    pareto_pool : int, optional
        number of checked blends the Pareto front is taken over (default 5 x top, at least 50)
    pool : list of Solvent, optional
        the records to search instead of the solvents table (e.g. the user's own)
    dose : str or float, optional
        dose of the blend (as a flavour carrier) in the food, "0.15%", "1500ppm"
        or a mass fraction; with ``jurisdiction`` and ``category`` every blend is
        checked against the carrier limits of the food as consumed (the
        compliance module) and dropped when over one
    category : str, optional
        food category of the food as consumed (for ``dose``)
    chain : str, optional
        dilution chain from the blend to the food (syntax of the compliance module)
    already : mapping, optional
        what other ingredients already bring to the food, ``{substance: mg/kg}``
    keep_over : bool
        keep (flagged) blends over a limit at ``dose`` instead of dropping them
    progress : callable, optional
        ``progress(done, total)`` during the exact search (combinations); return
        False to cancel, which gives a result with ``success`` False

    Returns
    -------
    BlendSearch

    Examples
    --------
    Nitrocellulose (sphere 15.4, 14.7, 8.8 with R0 11.5 MPa^0.5, from memory
    of the polymer table of [1]_) is dissolved by neither diethyl ether nor
    ethanol (RED > 1) but by their blend, the classic collodion solvent:

    >>> from solvsel.data.catalog import load_catalog
    >>> res = optimise_blends(load_catalog(), (15.4, 14.7, 8.8, 11.5), max_components=2,
    ...                       only=["diethyl ether", "ethanol"])
    >>> [(b.label, round(b.red, 2)) for b in res.results]
    [('diethyl ether 0.48 + ethanol 0.52', 0.82), ('ethanol 1.00', 1.06), ('diethyl ether 1.00', 1.1)]
    """
    from .hansen import shift_temperature

    name, t_hsp, r0, solute, t_info = _as_target(target)
    if not 1 <= int(max_components) <= MAX_COMPONENTS:
        raise InputError(f"--max-components: expected 1 to {MAX_COMPONENTS}, got {max_components}")
    if use is not None and use not in USES:
        raise InputError(f"--use: expected one of {', '.join(USES)}, got '{use}'")
    if int(top) < 1:
        raise InputError(f"--top: expected a positive number of blends, got {top}")
    if not 0 <= float(min_fraction) < 0.5:
        raise InputError(f"--min-fraction: expected a volume fraction between 0 and 0.5, got {min_fraction}")
    if worst_flammable_category is not None and worst_flammable_category != "none":
        try:
            worst_flammable_category = int(worst_flammable_category)
        except (TypeError, ValueError):
            worst_flammable_category = -1
        if worst_flammable_category not in (1, 2, 3, 4):
            raise InputError("--worst-hazard: expected a GHS flammable-liquid category 1, 2, 3 or 4, or 'none'")
    if max_cost is not None and int(max_cost) not in (1, 2, 3, 4, 5):
        raise InputError(f"--max-cost: expected a cost class 1 (cheap) to 5 (dear), got {max_cost}")
    if bp_min_C is not None and bp_max_C is not None and bp_min_C > bp_max_C:
        raise InputError(f"--bp-range: lowest boiling point {bp_min_C:g} C is above the highest {bp_max_C:g} C")
    rej = _as_rejects(rejects)
    if sort is None:
        sort = "selectivity" if rej else "fit"
    if sort not in ("fit", "selectivity", "cost"):
        raise InputError(f"--sort: expected fit, selectivity or cost, got '{sort}'")
    if sort == "selectivity" and not rej:
        raise InputError("--sort selectivity needs at least one --reject solute")
    red_basis = bool(rej) and r0 is not None and all(rr is not None for _, _, rr in rej)
    if dose is not None and (jurisdiction is None or category is None):
        raise InputError("--dose needs --jurisdiction and --category (the food the blend ends up in)")
    bounds = list(bounds or ())
    if not all(isinstance(b, FractionBound) for b in bounds):
        raise InputError("each fraction bound must be a FractionBound (parse text with solvsel.jobs.parse.parse_fraction_bound)", param="bounds")
    from ..errors import OutOfRangeError
    from .hansen import T_WINDOW_C

    temp_C = float(temp_C)
    if not math.isfinite(temp_C):
        raise InputError(f"--temp: expected a temperature in C, got {temp_C}")
    if not T_WINDOW_C[0] <= temp_C <= T_WINDOW_C[1]:
        raise OutOfRangeError(
            f"--temp: {temp_C:g} C is outside {T_WINDOW_C[0]:g} to {T_WINDOW_C[1]:g} C, the range of the "
            "Hansen-Beerbower temperature rules"
        )

    # ------------------------------------------------------------------ pool
    if pool is not None:
        records = list(pool)
    elif only:
        records = [cat.solvent(n) for n in only]
    else:
        records = list(cat.solvent_records())
    unique = []
    for rec in records:
        if not any(_same(rec, u) for u in unique):
            unique.append(rec)
    records = unique
    excluded: list[ExcludedLiquid] = []
    drop_recs = [cat.solvent(n) for n in (exclude or ())]

    kept, kept_hsp, hazards = [], [], []
    for rec in records:
        reason = None
        if any(_same(rec, d) for d in drop_recs):
            reason = "excluded by you"
        elif use is not None and use not in rec.roles:
            reason = f"not listed for use as {use} (listed: {', '.join(rec.roles) or 'none'})"
        else:
            reason = property_reason(rec, bp_min_C=bp_min_C, bp_max_C=bp_max_C, min_flash_C=min_flash_C,
                                     max_cost=max_cost)
        hz_label, hz_rank, hz_cat, hz_flammable = _hazard_of(rec)
        if reason is None and worst_flammable_category is not None:
            if worst_flammable_category == "none" and hz_flammable:
                reason = f"flammable ({hz_label})"
            elif worst_flammable_category != "none" and hz_cat is not None and hz_cat < worst_flammable_category:
                reason = f"{hz_label}, more hazardous than category {worst_flammable_category}"
        if reason is None and jurisdiction is not None:
            reason = _not_permitted(cat, rec, use, jurisdiction)
        h = rec.hsp
        if reason is None and abs(temp_C - 25.0) > 1e-9:
            if rec.alpha_1_K is None:
                reason = f"no thermal expansion coefficient on record to shift its HSP to {temp_C:g} C"
            else:
                try:
                    bp = rec.bp_C if (rec.bp_C is not None and rec.bp_C > 25.0) else None
                    h = shift_temperature(h, rec.alpha_1_K, temp_C, mp_C=rec.mp_C, bp_C=bp)
                except InputError as exc:  # frozen or boiling at temp_C
                    reason = str(exc)
        if reason is not None:
            excluded.append(ExcludedLiquid(rec.name, reason))
            continue
        kept.append(rec)
        kept_hsp.append(np.asarray(h, dtype=float))
        hazards.append((hz_label, hz_rank))

    constraints = {
        "max_components": int(max_components), "use": use, "jurisdiction": jurisdiction,
        "only": list(only) if only else None, "exclude": list(exclude) if exclude else None,
        "worst_flammable_category": worst_flammable_category, "bp_min_C": bp_min_C, "bp_max_C": bp_max_C,
        "min_flash_C": min_flash_C, "max_cost": max_cost, "bounds": [b.to_dict() for b in bounds],
        "temp_C": temp_C, "rejects": [r[0] for r in rej], "sort": sort, "one_phase_only": bool(one_phase_only),
        "min_fraction": float(min_fraction), "top": int(top),
        "dose": dose, "category": category, "chain": chain, "already": dict(already) if already else None,
        "keep_over": bool(keep_over),
    }
    t_info["temp_C"] = temp_C
    from ..rules.cautions import DEFER

    cautions = [_GENERAL_CAUTION, DEFER]
    if jurisdiction is not None and use is None:
        cautions.append(f"No use given: the {jurisdiction} food-law filter took each liquid as a flavour carrier.")
    if abs(temp_C - 25.0) > 1e-9:
        cautions.append(
            f"Liquids' HSP shifted from 25 C to {temp_C:g} C (Hansen-Beerbower); the target's are its tabulated values."
        )
    counts = {"liquids": len(kept), "excluded_liquids": len(excluded), "combinations": 0,
              "bounds_not_met": 0, "same_as_smaller_blend": 0, "checked": 0, "two_phase": 0,
              "over_limit": 0, "alike": 0, "kept": 0}

    def finish(results, pareto, dropped, success, message):
        return BlendSearch(t_info, tuple(results), tuple(pareto), tuple(dropped), tuple(excluded), counts,
                           constraints, tuple(cautions), success, message)

    # ------------------------------------------------------------------ bounds
    m = len(kept)
    lo, hi = np.zeros(m), np.ones(m)
    for b in bounds:
        ref = cat.solvent(b.name)
        hit = [i for i, rec in enumerate(kept) if _same(rec, ref)]
        if not hit:
            if b.lower > 0:
                why = next((e.reason for e in excluded if e.name == ref.name), "not in the pool")
                raise InputError(
                    f"--fraction {b.name}>={b.lower:g}: {ref.name} must then be in every blend, but it is "
                    f"left out ({why})"
                )
            continue
        lo[hit[0]] = max(lo[hit[0]], b.lower)
        hi[hit[0]] = min(hi[hit[0]], b.upper)
        if lo[hit[0]] > hi[hit[0]]:
            raise InputError(f"--fraction: the bounds given for {ref.name} contradict each other")
    n_required = int(np.count_nonzero(lo > 0))
    if n_required > int(max_components):
        raise InputError(f"{n_required} liquids must be in every blend (lower bounds), more than --max-components {max_components}")
    if lo.sum() > 1 + 1e-12:
        raise InputError(f"the lower bounds add up to {lo.sum():g}, more than the whole blend")
    if m == 0:
        return finish([], [], [], False, "no liquid is left in the pool under these constraints (see excluded)")

    # ------------------------------------------------------------------ exact search
    H = np.array(kept_hsp).reshape(m, 3)
    # Keep only the candidates of each size as it is solved (most combinations
    # of 3-4 liquids put a liquid under the minimum fraction), so memory stays
    # that of the candidates, not of every combination.
    idx_parts, x_parts, ra_parts = [], [], []
    lo_pad_all = np.append(lo, 0.0)
    try:
        for k, combos, res in search_blends(H, t_hsp, min(int(max_components), m), lower=lo, upper=hi,
                                            progress=progress):
            n_k = combos.shape[0]
            counts["combinations"] += int(n_k)
            feas = res.feasible
            counts["bounds_not_met"] += int(np.count_nonzero(~feas))
            xk = np.nan_to_num(res.fractions)
            # a liquid under the minimum fraction makes the blend the same as the
            # smaller one, unless its lower bound puts it there (a required liquid)
            if k > 1:
                reduced = feas & np.any((xk < float(min_fraction)) & (lo_pad_all[combos] <= 0), axis=1)
            else:
                reduced = np.zeros(n_k, dtype=bool)
            counts["same_as_smaller_blend"] += int(np.count_nonzero(reduced))
            keep_k = np.flatnonzero(feas & ~reduced)
            pad = np.full((keep_k.size, MAX_COMPONENTS), -1, dtype=np.int32)
            pad[:, :k] = combos[keep_k]
            xs = np.zeros((keep_k.size, MAX_COMPONENTS))
            xs[:, :k] = xk[keep_k]
            idx_parts.append(pad)
            x_parts.append(xs)
            ra_parts.append(res.ra[keep_k])
    except SearchCancelled as exc:
        return finish([], [], [], False, f"cancelled: {exc}")
    if not idx_parts or sum(p.shape[0] for p in idx_parts) == 0:
        return finish([], [], [], False, "no combination of the pool meets the fraction bounds")
    IDX = np.concatenate(idx_parts)
    X = np.concatenate(x_parts)
    RA = np.concatenate(ra_parts)
    K = (IDX >= 0).sum(1)
    cand = np.arange(IDX.shape[0])

    # blend HSP and scores of every candidate
    Hpad = np.vstack([H, np.zeros((1, 3))])
    BH = np.einsum("nk,nkc->nc", X[cand], Hpad[IDX[cand]])
    ra_c = RA[cand]
    red_c = ra_c / r0 if r0 else None
    if rej:
        # distance of the nearest reject, in RED if every radius is known, else in Ra
        rej_d = np.stack([np.sqrt(np.sum(((BH - rh) * SCALE) ** 2, axis=1)) / (rr if red_basis else 1.0)
                          for _, rh, rr in rej], axis=1)
        worst_c = rej_d.min(axis=1)
        fit_c = red_c if red_basis else ra_c
    else:
        worst_c = None
    cost_vec = np.array([np.nan if r.cost_class is None else float(r.cost_class) for r in kept] + [0.0])
    cost_c = np.einsum("nk,nk->n", X[cand], cost_vec[IDX[cand]])
    if sort == "cost":
        order = np.lexsort((ra_c, np.nan_to_num(cost_c, nan=np.inf)))
    else:  # fit, and the pool that selectivity re-ranks
        order = np.lexsort((K[cand], ra_c))

    # ------------------------------------------------------------------ checks, best first
    want = int(top)
    pool_n = max(5 * want, 200 if rej else 50) if pareto_pool is None else max(int(pareto_pool), want)
    dropped: list[DroppedBlend] = []
    kept_rows: list[tuple[int, object]] = []
    # one-phase screen of every candidate at once (pairwise windows, measured
    # pairs first); the full check with its reasons runs on the blends shown
    screen_ok = _screen(cat, kept, IDX[cand], X[cand], temp_C)
    if screen_ok is not None:
        counts["two_phase"] = int(np.count_nonzero(~screen_ok))

    def members_of(j):
        row = cand[j]
        members = [int(i) for i in IDX[row] if i >= 0]
        return row, [kept[i] for i in members], X[row, : len(members)]

    def hsp_key(i):
        return tuple(np.round(H[int(i)], 6))

    def signature(j):
        # liquids of the same HSP at the same fractions give the same blend to the model
        row = cand[j]
        return tuple(sorted((hsp_key(i), round(float(x), 4)) for i, x in zip(IDX[row], X[row]) if i >= 0))

    phase_of: dict = {}  # candidate -> _phase result, so a blend is tested once

    def phase(j, recs, xs):
        if j not in phase_of:
            phase_of[j] = (True, "single liquid", "") if len(recs) == 1 else _phase(cat, recs, xs, temp_C)
        return phase_of[j]

    seen: dict = {}  # signature -> candidate kept first
    alike: dict = {}  # that candidate -> the candidates folded into it
    seen_dropped: set = set()

    def drop(j, recs, xs, reason):
        sig = signature(j)
        if sig in seen_dropped:
            return
        seen_dropped.add(sig)
        dropped.append(DroppedBlend(tuple(r.name for r in recs), tuple(float(v) for v in xs), float(RA[cand[j]]),
                                    reason))

    def drop_two_phase(j, recs, xs, ph):
        drop(j, recs, xs, f"two phases at these fractions ({ph[1]}): {ph[2]}")

    for j in order[:_SCAN_LIMIT]:
        counts["checked"] += 1
        if one_phase_only and screen_ok is not None and not screen_ok[j]:
            if len(kept_rows) < want and len(dropped) < _DROPPED_LISTED:
                row, recs, xs = members_of(j)
                drop_two_phase(j, recs, xs, phase(j, recs, xs))
            continue
        if one_phase_only and K[cand[j]] >= 3:
            # the pairwise screen passed: test the blend as a whole (tangent plane)
            row, recs, xs = members_of(j)
            ph = phase(j, recs, xs)
            if ph[0] is False:
                counts["two_phase"] += 1
                if len(kept_rows) < want and len(dropped) < _DROPPED_LISTED:
                    drop_two_phase(j, recs, xs, ph)
                continue
        dose_info = None
        if dose is not None:
            row, recs, xs = members_of(j)
            dose_info = _dose_check(cat, recs, xs, dose, jurisdiction, category, chain, already)
            if dose_info["ok"] is False and not keep_over:
                counts["over_limit"] += 1
                if len(kept_rows) < want and len(dropped) < _DROPPED_LISTED:
                    drop(j, recs, xs, dose_info["message"])
                continue
        sig = signature(j) if K[cand[j]] > 1 else None
        if sig is not None and sig in seen:
            counts["alike"] += 1
            alike.setdefault(seen[sig], []).append(j)
            continue
        if sig is not None:
            seen[sig] = j
        kept_rows.append((j, dose_info))
        if len(kept_rows) >= pool_n:
            break
    counts["kept"] = len(kept_rows)
    if not kept_rows:
        return finish([], [], dropped, False, "no blend passed the checks (see dropped)")
    if sort == "selectivity":
        js = np.array([j for j, _ in kept_rows])
        layer = _pareto_layers(np.column_stack([fit_c[js], -worst_c[js]]))
        new = np.lexsort((ra_c[js], layer))
        kept_rows = [kept_rows[i] for i in new]

    # ------------------------------------------------------------------ describe
    def describe(j, dose_info, rank):
        row, recs, xs = members_of(j)
        members = [int(i) for i in IDX[row] if i >= 0]
        xs = xs.copy()  # members: indices into the pool, for the hazards
        b = _describe_blend(
            cat, recs, xs, BH[j], float(ra_c[j]), r0, phase(j, recs, xs), [hazards[i] for i in members],
            None if np.isnan(cost_c[j]) else float(cost_c[j]),
            rej, red_basis, solute, t_hsp, temp_C, use, jurisdiction, rank,
        )
        if dose_info is not None:
            b = _with(b, dose_check=dose_info, cautions=tuple(dict.fromkeys(b.cautions + tuple(dose_info["cautions"]))))
        return b

    def with_alike(b, j):
        # the folded blends' names, in the order of b's components (matched by HSP and fraction)
        if j not in alike:
            return b
        row = cand[j]
        rep = [(hsp_key(i), float(x)) for i, x in zip(IDX[row], X[row]) if i >= 0]
        out = []
        for jj in alike[j]:
            r2 = cand[jj]
            free = [(hsp_key(i), float(x), kept[int(i)].name)
                    for i, x in zip(IDX[r2], X[r2]) if i >= 0]
            names = []
            for h, x in rep:
                hit = min((p for p in free if p[0] == h), key=lambda p: abs(p[1] - x))
                free.remove(hit)
                names.append(hit[2])
            out.append(tuple(names))
        return _with(b, alternatives=tuple(out))

    F = [ra_c[[j for j, _ in kept_rows]]]
    if rej:
        F.append(-worst_c[[j for j, _ in kept_rows]])
    F.append(np.nan_to_num(cost_c[[j for j, _ in kept_rows]], nan=np.inf))
    F.append(np.array([max(hazards[int(i)][1] for i in IDX[cand[j]] if i >= 0) for j, _ in kept_rows], float))
    F.append(K[[cand[j] for j, _ in kept_rows]].astype(float))
    front = pareto_front(np.column_stack(F))

    described = {}
    results = []
    for rank, ((j, dose_info), on_front) in enumerate(zip(kept_rows[:want], front[:want]), start=1):
        b = describe(j, dose_info, rank)
        b = with_alike(_with(b, pareto=bool(on_front)), j)
        described[j] = b
        results.append(b)
    pareto = []
    for pos, ((j, dose_info), on_front) in enumerate(zip(kept_rows, front)):
        if on_front:
            pareto.append(described.get(j) or with_alike(_with(describe(j, dose_info, pos + 1), pareto=True), j))
    msg = f"{len(results)} blend(s) from {m} liquids; {counts['combinations']} combinations searched"
    return finish(results, pareto, dropped, True, msg)


def _pareto_layers(objectives) -> np.ndarray:
    """Non-dominated sorting: layer 0 is the Pareto front, layer 1 the front of the rest, ..."""
    F = np.asarray(objectives, dtype=float)
    layer = np.full(F.shape[0], -1)
    left = np.arange(F.shape[0])
    level = 0
    while left.size:
        front = pareto_front(F[left])
        layer[left[front]] = level
        left = left[~front]
        level += 1
    return layer


def _with(blend: Blend, **changes) -> Blend:
    from dataclasses import replace

    return replace(blend, **changes)


def _describe_blend(cat, recs, xs, bh, ra_value, r0, phase, hazards, cost, rej, red_basis, solute, t_hsp,
                    temp_C, use, jurisdiction, rank) -> Blend:
    from .hansen import convert_fractions

    xs = np.clip(xs, 0.0, 1.0)
    xs = xs / xs.sum()
    dens = [r.density_g_cm3 for r in recs]
    mass = [None] * len(recs)
    if all(d is not None and d > 0 for d in dens):
        mass = [float(v) for v in convert_fractions(xs, "volume", "mass", density_g_cm3=dens)]
    comps = tuple(
        BlendComponent(r.name, r.cas, float(x), w, r.origin) for r, x, w in zip(recs, xs, mass)
    )
    bps = [r.bp_C for r in recs if r.bp_C is not None]
    flashes = [r.flash_C for r in recs if r.flammable and r.flash_C is not None]
    worst = max(hazards, key=lambda h: h[1])
    rdist = tuple(
        RejectDistance(n, v, None if rr is None else v / rr)
        for (n, rh, rr), v in ((r, float(np.sqrt(np.sum(((bh - r[1]) * SCALE) ** 2)))) for r in rej)
    )
    red_value = None if r0 is None else ra_value / r0
    worst_ra = min((r.ra for r in rdist), default=None)
    worst_rej = min((r.red for r in rdist), default=None) if red_basis else None
    if not rdist:
        selectivity, basis = None, None
    elif red_basis:
        selectivity, basis = worst_rej - red_value, "RED"
    else:
        selectivity, basis = worst_ra - ra_value, "Ra"
    cautions = []
    regs = []
    for r in recs:
        cautions.extend(_solvent_cautions(r, use))
        regs.extend(_regulations(cat, r, use, jurisdiction))
    if len(recs) > 1 and flashes:
        cautions.append(
            f"Lowest flash point of a component {min(flashes):g} C: the blend's flash point is not the average "
            "and must be measured (closed cup)."
        )
    if phase[1] == "predicted":
        cautions.append("One phase is predicted from HSP, not measured: check the blend at the bench and in the cold.")
    return Blend(
        components=comps,
        dD=float(bh[0]), dP=float(bh[1]), dH=float(bh[2]),
        ra=ra_value, red=red_value,
        one_phase=phase[0] if len(recs) > 1 else True,
        phase_basis=phase[1], phase_note=phase[2],
        bp_min_C=min(bps) if bps else None, bp_max_C=max(bps) if bps else None,
        bp_complete=len(bps) == len(recs),
        lowest_flash_C=min(flashes) if flashes else None,
        hazard=worst[0], hazard_rank=int(worst[1]),
        cost=cost,
        rejects=rdist, worst_reject_ra=worst_ra, worst_reject_red=worst_rej,
        selectivity=selectivity, selectivity_basis=basis,
        solubility=_solubility(solute, t_hsp, recs, xs, bh, temp_C),
        regulations=tuple(regs),
        cautions=tuple(dict.fromkeys(c for c in cautions if c)),
        rank=rank,
    )


# ---------------------------------------------------------------- adapters to other engines

def _solubility(solute, t_hsp, recs, xs, bh, temp_C):
    """Solid solubility estimate of the target in the blend, where its data allow."""
    if solute is None:
        return None
    need = (getattr(solute, "mp_C", None), getattr(solute, "dHfus_kJ_mol", None),
            getattr(solute, "mw_g_mol", None), getattr(solute, "vm_cm3_mol", None))
    if any(v is None for v in need):
        return None
    if any(r.mw_g_mol is None or r.vm_cm3_mol is None or r.density_g_cm3 is None for r in recs):
        return None
    from ..errors import SolvselError
    from .hansen import convert_fractions, solid_solubility

    try:
        xm = convert_fractions(xs, "volume", "mole", density_g_cm3=[r.density_g_cm3 for r in recs],
                               mw_g_mol=[r.mw_g_mol for r in recs])
        vm1 = float(np.dot(xm, [r.vm_cm3_mol for r in recs]))
        mw1 = float(np.dot(xm, [r.mw_g_mol for r in recs]))
        est = solid_solubility(t_hsp, need[3], need[2], need[0], need[1], bh, vm1, mw1, temp_C=temp_C)
    except SolvselError:
        return None
    return est.to_dict()


def _hazard_of(rec):
    """(label, rank, GHS category, flammable) of a liquid, from the compliance module.

    rank orders hazard for the Pareto front: 0 not flammable, 1 gas under
    pressure (not flammable) or flammable-liquid category 4, 2 category 3,
    3 category 2, 4 category 1 (or flammable with no flash point on record),
    5 flammable gas.
    """
    from ..rules.hazards import hazard_class

    hz = hazard_class(rec.flash_C, rec.bp_C, flammable=rec.flammable)
    if hz is None:
        return "not flammable", 0, None, False
    if hz.kind == "gas under pressure":
        return "gas under pressure, not flammable", 1, None, False
    if hz.kind == "flammable gas":
        return "flammable gas", 5, 1, True
    if hz.category is None:
        return "flammable liquid, category not determined", 4, 1, True
    return f"flammable liquid, GHS category {hz.category}", 5 - hz.category, hz.category, True


def _not_permitted(cat, rec, use, jurisdiction):
    """Reason a liquid is left out under a jurisdiction's food law for the use, or None."""
    if use == "bench":
        return None  # bench tests are not a food use: no food-law filter
    from ..rules.regulations import food_status

    st = food_status(cat, rec, use=use or "carrier", jurisdiction=jurisdiction)
    if st.allowed:
        return None
    return f"{st.status} as {use or 'carrier'} in {jurisdiction}: {st.message}"


def _regulations(cat, rec, use, jurisdiction):
    if use is None and jurisdiction is None:
        return []
    if use == "bench":
        return [{"name": rec.name, "use": "bench", "status": "bench only",
                 "message": f"{rec.name}: bench tests only, not a food use"}]
    from ..rules.regulations import food_status

    st = food_status(cat, rec, use=use or "carrier", jurisdiction=jurisdiction)
    d = st.to_dict()
    return [{k: d[k] for k in ("name", "cas", "use", "jurisdiction", "status", "allowed", "conditions", "message",
                               "flagged", "per_jurisdiction")}]


def _dose_check(cat, recs, xs, dose, jurisdiction, category, chain, already=None):
    """Carrier limits of the food at ``dose`` for a blend (compliance.carrier_dose_check), as a dict."""
    from ..rules.regulations import carrier_dose_check
    from .hansen import convert_fractions

    dens = [r.density_g_cm3 for r in recs]
    if not all(d is not None and d > 0 for d in dens):
        return {"ok": None, "complete": False, "max_dose": None, "max_dose_unit": None, "binding": None,
                "message": "a density is missing, so the blend's mass fractions and its dose limits are unknown",
                "cautions": []}
    w = convert_fractions(np.clip(xs, 0, 1) / np.sum(np.clip(xs, 0, 1)), "volume", "mass", density_g_cm3=dens)
    chk = carrier_dose_check(cat, [(r.name, float(v)) for r, v in zip(recs, w)], dose, jurisdiction, category,
                             chain=chain, already=already)
    binding = None
    if chk.binding is not None:
        b = chk.binding
        binding = {"rule": b.rule, "substance": b.substance, "level": b.level, "limit": b.limit, "unit": b.unit,
                   "confidence": b.confidence}
    if chk.ok:
        msg = "within the limits at this dose" + ("" if chk.complete else " (some substances have no data: not a permission)")
    else:
        msg = "over a limit at this dose"
        if binding:
            msg += (f": {binding['substance']} at {binding['level']:.4g} {binding['unit']} against "
                    f"{binding['limit']:.4g} ({binding['rule']})")
    return {"ok": bool(chk.ok), "complete": bool(chk.complete), "max_dose": chk.max_dose,
            "max_dose_unit": chk.max_dose_unit, "binding": binding, "no_data": list(chk.no_data),
            "message": msg, "cautions": list(chk.cautions)}


def _solvent_cautions(rec, use):
    from ..rules.cautions import solvent_cautions

    return solvent_cautions(rec, use=use)


def _screen(cat, recs, idx, fractions, temp_C):
    """Pairwise one-phase screen of many blends (miscibility.pair_matrix), or None if unavailable."""
    try:
        from .miscibility import pair_matrix
    except ModuleNotFoundError as exc:
        if exc.name == "solvsel.science.miscibility":
            return None
        raise
    m = pair_matrix(cat, [r.name for r in recs], temp_C)
    return m.screen(np.where(idx < 0, 0, idx), fractions)


def _phase(cat, recs, xs, temp_C):
    """(one_phase True/False/None, basis, reason) of a blend at its fractions (miscibility.blend_phase)."""
    try:
        from .miscibility import blend_phase
    except ModuleNotFoundError as exc:
        if exc.name == "solvsel.science.miscibility":
            return None, "not checked", "the miscibility check is not available"
        raise
    res = blend_phase(cat, [r.name for r in recs], [float(v) for v in xs], temp_C)
    text = res.reason if not res.one_phase else res.note
    if not res.one_phase and res.note:
        text = f"{res.reason}; {res.note}"
    return bool(res.one_phase), str(res.basis), str(text)

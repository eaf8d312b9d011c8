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

from .errors import InputError
from .hansen import SCALE, as_hsp

__all__ = [
    "MAX_COMPONENTS",
    "FractionBatch",
    "best_fractions",
    "combinations_array",
    "kkt_violation",
    "search_blends",
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


def _chunks(n: int, size: int):
    for start in range(0, n, size):
        yield slice(start, min(n, start + size))


def search_blends(pool_hsp, target, max_components: int = 3, lower=None, upper=None,
                  sizes=None, chunk: int = 1 << 16):
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
    for k in sizes or range(1, int(max_components) + 1):
        combos = combinations_array(m, k, required)
        if combos.shape[0] == 0:
            continue
        parts = [best_fractions(H[combos[sl]], target, lo[combos[sl]], hi[combos[sl]])
                 for sl in _chunks(combos.shape[0], chunk)]
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

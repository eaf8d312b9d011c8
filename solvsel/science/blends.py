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

Above the numerical core, :func:`exact_candidates` keeps the blends of a pool
that count (meeting the bounds, no liquid under the component minimum), found
part by part (:func:`stream_candidates`) and, where only the best are wanted,
kept in a running list (:class:`BestCandidates`), so memory does not grow with
the pool.  With the default bounds only the all-free face of a combination is
solved: an optimum on a lower face has a liquid at 0, so that blend is the same
as a smaller one, searched anyway (a liquid whose bounds bind gets every face).
:func:`search_blends` gives every combination's optimum (every face solved).
:func:`one_phase_screen` / :func:`one_phase` test blends for one phase through
:mod:`solvsel.science.miscibility`; the ``blend`` job (:mod:`solvsel.jobs.blend`)
builds the pool, checks each blend and ranks them.

References
----------
.. [1] Hansen, C. M. *Hansen Solubility Parameters: A User's Handbook*, 2nd ed.
   CRC Press, 2007. ISBN 978-0-8493-7248-3.
.. [2] Nocedal, J.; Wright, S. J. *Numerical Optimization*, 2nd ed., ch. 16
   (active-set methods for convex QP). Springer, 2006.
   DOI 10.1007/978-0-387-40065-5.
"""

from __future__ import annotations

import functools
import itertools
from dataclasses import dataclass, replace
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
    raise InputError(f"at most {MAX_COMPONENTS} components per blend, got {m + 1}", param="max_components")


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
        raise InputError(f"expected one bound per liquid ({k}) or per combination, got shape {arr.shape}",
                         param=name) from None
    if np.any(np.isnan(arr)):
        raise InputError("bounds must be numbers between 0 and 1", param=name)
    return arr


def _solve_face(pat, q, lo_r, hi_r):
    """The best point of one face of the bounded simplex, for a batch of combinations.

    ``pat`` gives each fraction's state (0 free, 1 at its lower bound, 2 at its
    upper); ``q[i][c]`` is coordinate c of liquid i (scaled, centred on the
    target) over the batch.  The free fractions solve a least-squares problem
    on the differences of their points (:func:`_solve_gram`).  Returns the
    fractions ``x`` (one array per liquid), the blend point ``y`` (one array per
    coordinate) and where the solution is well-conditioned and within the bounds.
    """
    k = len(pat)
    free = [i for i, st in enumerate(pat) if st == 0]
    fixed = [i for i, st in enumerate(pat) if st != 0]
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
    return x, y, ok


def _batch(hsp, target, lower, upper):
    """The checked arrays of a batch: HSP ``(n, k, 3)``, target ``(n, 3)``, bounds ``(n, k)``."""
    P = as_hsp(hsp, "hsp")
    if P.ndim == 2:
        P = P[None]
    if P.ndim != 3:
        raise InputError(f"expected shape (n, k, 3) or (k, 3), got {np.shape(hsp)}", param="hsp")
    n, k, _ = P.shape
    if not 1 <= k <= MAX_COMPONENTS:
        raise InputError(f"blends of 1 to {MAX_COMPONENTS} liquids only, got {k}", param="hsp")
    T = np.broadcast_to(as_hsp(target, "target"), (n, 3))
    lo = _broadcast_bounds(lower, n, k, 0.0, "lower")
    hi = _broadcast_bounds(upper, n, k, 1.0, "upper")
    if np.any(lo < -_FEAS_TOL) or np.any(hi > 1 + _FEAS_TOL) or np.any(lo > hi + _FEAS_TOL):
        raise InputError("fraction bounds must satisfy 0 <= lower <= upper <= 1", param="lower")
    return P, T, lo, hi


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
    P, T, lo, hi = _batch(hsp, target, lower, upper)
    n, k, _ = P.shape

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
        n_free = sum(1 for st in pat if st == 0)
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
        x, y, ok = _solve_face(pat, q, lo_r, hi_r)
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
            best_free[r] = n_free
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
    """Exact best fractions of every combination of 1..``max_components`` liquids of a pool
    (every face of each; all of one size at once: for the blends that count, with bounded memory,
    see :func:`stream_candidates`).

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
        raise InputError(f"expected shape (m, 3), got {H.shape}", param="pool_hsp")
    m = H.shape[0]
    lo, hi = _search_bounds(m, max_components, lower, upper)
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
        raise InputError("expected a 2-D array (rows = candidates)", param="objectives")
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


# ============================================================================ blends of liquids
#
# What the exact search gives a caller that works on liquids: the candidate
# blends of a pool (each blend's liquids, fractions and Ra, those under the
# component minimum counted apart), the one-phase screen and test of a blend
# through the miscibility module, the solubility estimate in a blend, and the
# records a result is made of.  Which liquids make up the pool, and the legal
# and hazard checks, belong to the ``blend`` job (:mod:`solvsel.jobs.blend`).

__all__ += [
    "FractionBound",
    "BlendComponent",
    "RejectDistance",
    "Blend",
    "DroppedBlend",
    "Candidates",
    "BestCandidates",
    "exact_candidates",
    "stream_candidates",
    "pareto_layers",
    "one_phase_screen",
    "one_phase",
    "blend_solubility",
]


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
    #: how the liquids' values at the search temperature were taken, where it matters
    #: (e.g. "ethyl X: no expansion coefficient: HSP kept at 25 C")
    notes: tuple[str, ...] = ()

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
            "notes": list(self.notes),
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
class Candidates:
    """The blends an exact search keeps, one row each (liquids under the component minimum are
    the same as a smaller blend: counted, not kept).

    Attributes
    ----------
    idx : ndarray of int, shape (n, 4)
        pool indices of each blend's liquids, -1 after the last
    fractions : ndarray, shape (n, 4)
        their volume fractions [-] (0 after the last)
    ra : ndarray, shape (n,)
        Hansen distance of the blend to the target [MPa^0.5]
    size : ndarray of int, shape (n,)
        number of liquids
    hsp : ndarray, shape (n, 3)
        blend dD, dP, dH [MPa^0.5]
    combinations, bounds_not_met, same_as_smaller_blend : int
        combinations searched; of them, those that cannot meet the fraction
        bounds, and those with a liquid under the component minimum
    seq : ndarray of int, shape (n,), optional
        each blend's place in the search (sizes ascending, combinations of one
        size in lexicographic order of their pool indices): the order of equals
    """

    idx: np.ndarray
    fractions: np.ndarray
    ra: np.ndarray
    size: np.ndarray
    hsp: np.ndarray
    combinations: int
    bounds_not_met: int
    same_as_smaller_blend: int
    seq: np.ndarray | None = None

    def __len__(self) -> int:
        return int(self.idx.shape[0])

    def members(self, j: int) -> tuple[list[int], np.ndarray]:
        """Pool indices and volume fractions of blend ``j``."""
        k = int(self.size[j])
        return [int(i) for i in self.idx[j, :k]], self.fractions[j, :k]

    def take(self, rows) -> "Candidates":
        """The blends at ``rows`` (the counts unchanged)."""
        seq = None if self.seq is None else self.seq[rows]
        return replace(self, idx=self.idx[rows], fractions=self.fractions[rows], ra=self.ra[rows],
                       size=self.size[rows], hsp=self.hsp[rows], seq=seq)


_ROWS = ("idx", "fractions", "ra", "size", "hsp", "seq")


def _joined(parts: list[Candidates]) -> Candidates:
    """One Candidates of several parts (rows in the order of the parts, counts added)."""
    if not parts:
        return Candidates(np.empty((0, MAX_COMPONENTS), dtype=np.int32), np.empty((0, MAX_COMPONENTS)), np.empty(0),
                          np.empty(0, dtype=int), np.empty((0, 3)), 0, 0, 0, np.empty(0, dtype=np.int64))
    rows = {f: np.concatenate([getattr(p, f) for p in parts]) for f in _ROWS}
    return Candidates(**rows, combinations=sum(p.combinations for p in parts),
                      bounds_not_met=sum(p.bounds_not_met for p in parts),
                      same_as_smaller_blend=sum(p.same_as_smaller_blend for p in parts))


# ---------------------------------------------------------------------------- the streaming search
#
# The combinations of one size are taken in lexicographic order, a block per first liquid ``a``
# (the others: the combinations of the liquids after it, a slice of one table).  Where none of a
# block's liquids has a bound that binds (lower bound 0, upper bound 1) and the component minimum
# is above 0, only the all-free face is solved: an optimum on a lower face puts a liquid at 0,
# under the minimum, so the blend is the same as a smaller one, which is searched anyway.  That
# face is solved with exactly the arithmetic of :func:`_solve_face` (the same fractions to the
# last bit), from the Gram matrix of the differences to liquid ``a`` computed once per block.
# Blends with a liquid whose bounds bind get the full face search (:func:`best_fractions`).


@functools.lru_cache(maxsize=8)
def _lex_table(m: int, k: int) -> np.ndarray:
    """All k-combinations of range(m) in lexicographic order, (C(m, k), k) intp (read-only)."""
    if k == 0:
        out = np.zeros((1, 0), dtype=np.intp)
    elif k == 1:
        out = np.arange(m, dtype=np.intp)[:, None]
    else:
        sub = _lex_table(m, k - 1)
        n_sub = sub.shape[0]
        firsts = np.arange(m - k + 1)
        counts = np.array([comb(m - a - 1, k - 1) for a in firsts], dtype=np.intp)
        starts = n_sub - np.array([comb(m - a - 1, k - 1) for a in firsts], dtype=np.intp)
        rows = np.concatenate([np.arange(s, n_sub) for s in starts]) if len(firsts) else np.empty(0, np.intp)
        out = np.column_stack([np.repeat(firsts, counts), sub[rows]]) if rows.size else np.empty((0, k), np.intp)
    out = np.ascontiguousarray(out, dtype=np.intp)
    out.setflags(write=False)
    return out


@dataclass
class _Stream:
    """What every block of one search shares: the pool, target, bounds and minimum."""

    H: np.ndarray  # (m, 3) pool HSP
    T: np.ndarray  # (3,) target
    lo: np.ndarray
    hi: np.ndarray
    min_fraction: float
    Q: list  # scaled coordinates centred on the target, one (m,) array per coordinate
    bound: np.ndarray  # (m,) bool: a bound of this liquid binds (full face search)
    any_bound: bool

    @classmethod
    def of(cls, H, T, lo, hi, min_fraction) -> "_Stream":
        Q = (H - T[None, :]) * SCALE
        bound = (lo > 0) | (hi < 1.0 - _FEAS_TOL) if min_fraction > 0 else np.ones(len(H), dtype=bool)
        return cls(H, T, lo, hi, float(min_fraction), [np.ascontiguousarray(Q[:, c]) for c in range(3)], bound,
                   bool(bound.any()))

    def part(self, k: int, combos: np.ndarray, x: np.ndarray, seq: np.ndarray, counts) -> Candidates:
        """The kept blends of size k (pool indices, fractions) as Candidates, with Ra and blend HSP."""
        n = combos.shape[0]
        P = self.H[combos]
        blend = np.einsum("nk,nkc->nc", x, P)
        # Ra from the final fractions, as best_fractions computes it
        ra = np.sqrt(np.sum(((blend - self.T) * SCALE) ** 2, axis=1))
        idx = np.full((n, MAX_COMPONENTS), -1, dtype=np.int32)
        idx[:, :k] = combos
        xs = np.zeros((n, MAX_COMPONENTS))
        xs[:, :k] = x
        Hpad = np.vstack([self.H, np.zeros((1, 3))])
        bh = np.einsum("nk,nkc->nc", xs, Hpad[idx]) if n else np.empty((0, 3))
        return Candidates(idx, xs, ra, np.full(n, k), bh, *counts, seq=np.asarray(seq, dtype=np.int64))

    def interior(self, first, rest: np.ndarray) -> tuple[np.ndarray, list]:
        """Blends of liquid(s) ``first`` (one index, or one per row) with the rows of ``rest`` whose
        all-free face has its optimum with every fraction at or above the minimum: (rows kept,
        fractions of the kept rows, one array per liquid).  The arithmetic of :func:`_solve_face`."""
        q = self.Q
        q0 = [qc[first] for qc in q]
        E = [[qc.take(rest[:, j]) - q0c for qc, q0c in zip(q, q0)] for j in range(rest.shape[1])]
        gram = [[None] * len(E) for _ in E]
        for u in range(len(E)):
            for v in range(u, len(E)):
                gram[u][v] = gram[v][u] = E[u][0] * E[v][0] + E[u][1] * E[v][1] + E[u][2] * E[v][2]
        z, ok = _solve_gram(gram, [-(e[0] * q0[0] + e[1] * q0[1] + e[2] * q0[2]) for e in E])
        x0 = 1.0 - sum(z)
        keep = ok & (x0 >= self.min_fraction)
        for zz in z:
            keep &= zz >= self.min_fraction
        rows = np.flatnonzero(keep)
        return rows, [x0[rows]] + [zz[rows] for zz in z]

    def full(self, combos: np.ndarray) -> tuple[np.ndarray, np.ndarray, int, int]:
        """Every face of each combination (:func:`best_fractions`): (rows kept, their fractions,
        combinations that cannot meet the bounds, combinations with a liquid under the minimum)."""
        res = best_fractions(self.H[combos], self.T, self.lo[combos], self.hi[combos])
        x = np.nan_to_num(res.fractions)
        feas = res.feasible
        reduced = np.zeros(len(x), dtype=bool)
        if combos.shape[1] > 1:
            reduced = feas & np.any((x < self.min_fraction) & (self.lo[combos] <= 0), axis=1)
        rows = np.flatnonzero(feas & ~reduced)
        return rows, x[rows], int(np.count_nonzero(~feas)), int(np.count_nonzero(reduced))

    def block(self, k: int, first, rest: np.ndarray, seq0: int) -> Candidates:
        """The kept blends of liquid(s) ``first`` (one index, or one per row) with the rows of
        ``rest`` (the liquids after it)."""
        n = rest.shape[0]
        firsts = np.broadcast_to(np.asarray(first, dtype=np.intp), (n,))
        general = self.bound[firsts] | np.any(self.bound[rest], axis=1) if self.any_bound else np.zeros(n, bool)
        rows, xs = np.empty(0, dtype=np.intp), np.empty((0, k))
        not_met = reduced = 0
        if not general.all():
            rows, x = self.interior(first, rest)
            rows_ok = ~general[rows]
            rows, xs = rows[rows_ok], np.column_stack([xx[rows_ok] for xx in x])
            reduced = n - int(np.count_nonzero(general)) - rows.size
        if general.any():
            g = np.flatnonzero(general)
            g_rows, g_x, not_met, g_reduced = self.full(np.column_stack([firsts[g], rest[g]]))
            reduced += g_reduced
            rows = np.concatenate([rows, g[g_rows]])
            xs = np.concatenate([xs, g_x])
            order = np.argsort(rows, kind="stable")
            rows, xs = rows[order], xs[order]
        return self.part(k, np.column_stack([firsts[rows], rest[rows]]), xs, seq0 + rows, (n, not_met, reduced))


#: Combinations solved at once: arrays of this many numbers (64 kB) stay in the processor's cache,
#: and the allocator reuses their memory (at 128 kB each new array was fresh memory from the system:
#: the search took twice as long).
_BLOCK_ROWS = 1 << 13


def _size_blocks(m: int, k: int, required):
    """The k-combinations of range(m) that contain every index of ``required``, in lexicographic
    order, in blocks ``(first, rest, start)`` of at most :data:`_BLOCK_ROWS` rows: ``first`` the
    first liquid (one index, or one per row), ``rest`` (n, k-1) the others, ascending, ``start`` the
    place of the block's first row in that order.  Blends of the largest size are taken a first
    liquid at a time (the others a slice of the table of one size less), so no table holds more
    than the combinations of three liquids.  With required liquids, ``first`` is None and ``rest``
    holds whole combinations (k = 1 too)."""
    required = sorted(int(i) for i in required)
    if required:
        if k < len(required):
            return
        free = np.array([i for i in range(m) if i not in set(required)], dtype=np.intp)
        for first, rest, start in _size_blocks(len(free), k - len(required), ()):
            sub = rest if first is None else np.column_stack([np.broadcast_to(first, rest.shape[:1]), rest])
            combos = np.sort(np.column_stack([free[sub], np.tile(required, (sub.shape[0], 1))]), axis=1)
            yield None, combos, start
        return
    if k <= 1:
        yield None, np.arange(m, dtype=np.intp)[:, None] if k else np.zeros((1, 0), dtype=np.intp), 0
        return
    if k < MAX_COMPONENTS:
        table = _lex_table(m, k)
        for lo_row in range(0, table.shape[0], _BLOCK_ROWS):
            block = table[lo_row:lo_row + _BLOCK_ROWS]
            yield block[:, 0], block[:, 1:], lo_row
        return
    table = _lex_table(m, k - 1)
    n_table, start = table.shape[0], 0
    for a in range(m - k + 1):
        n_a = comb(m - a - 1, k - 1)
        suffix = table[n_table - n_a:]
        for lo_row in range(0, n_a, _BLOCK_ROWS):
            yield a, suffix[lo_row:lo_row + _BLOCK_ROWS], start + lo_row
        start += n_a


def stream_candidates(pool_hsp, target, max_components: int, lower=None, upper=None, min_fraction: float = 0.05,
                      chunk: int = 1 << 16, progress=None):
    """The blends of :func:`exact_candidates`, in parts of about ``chunk`` combinations each.

    Yields :class:`Candidates` (each with its share of the counts and ``seq``), in the order of
    the search; memory is that of one part, whatever the pool.  ``progress(done, total)`` is
    called after each part (combinations); returning False stops the search
    (:class:`SearchCancelled`).
    """
    H = as_hsp(pool_hsp, "pool_hsp").reshape(-1, 3)
    m = H.shape[0]
    lo, hi = _search_bounds(m, max_components, lower, upper)
    s = _Stream.of(H, as_hsp(target, "target").reshape(3), lo, hi, min_fraction)
    required = np.flatnonzero(lo > 0)
    r = len(required)
    sizes = range(1, int(max_components) + 1)
    total = sum(comb(m - r, k - r) if k >= r else 0 for k in sizes)
    done, base, pending = 0, 0, []
    for k in sizes:
        for first, rest, start in _size_blocks(m, k, required):
            if first is None:
                rows, x, not_met, reduced = s.full(rest)
                pending.append(s.part(k, rest[rows], x, base + start + rows, (rest.shape[0], not_met, reduced)))
            else:
                pending.append(s.block(k, first, rest, base + start))
            if sum(p.combinations for p in pending) >= chunk:
                done += sum(p.combinations for p in pending)
                yield _joined(pending)
                pending = []
                if progress is not None and progress(done, total) is False:
                    raise SearchCancelled(f"search stopped after {done} of {total} combinations")
        base += comb(m - r, k - r) if k >= r else 0
    if pending:
        done += sum(p.combinations for p in pending)
        yield _joined(pending)
        if progress is not None and progress(done, total) is False:
            raise SearchCancelled(f"search stopped after {done} of {total} combinations")


class BestCandidates:
    """The best ``keep`` blends of a stream of :class:`Candidates` parts, by a key; memory is that
    of about twice ``keep`` blends, whatever the stream.

    ``add(part, key)`` takes the part's sort keys, most significant first (default: Ra, then the
    number of liquids); equal keys keep the order of the search (``seq``).  :meth:`result` gives
    the blends kept, in the order of the search, with the counts of every part.
    """

    def __init__(self, keep: int | None = None):
        self.keep = keep
        self._parts: list[Candidates] = []
        self._keys: list[tuple] = []
        self._rows = 0
        self._counts = [0, 0, 0]

    def add(self, part: Candidates, key: tuple | None = None) -> None:
        self._counts = [self._counts[0] + part.combinations, self._counts[1] + part.bounds_not_met,
                        self._counts[2] + part.same_as_smaller_blend]
        if not len(part):
            return
        self._parts.append(part)
        self._keys.append(tuple(key) if key is not None else (part.ra, part.size))
        self._rows += len(part)
        if self.keep is not None and self._rows > 2 * self.keep + (1 << 14):
            self._cut()

    def _cut(self) -> None:
        c = _joined(self._parts)
        keys = [np.concatenate(col) for col in zip(*self._keys)]
        if self.keep is not None and len(c) > self.keep:
            best = np.sort(np.lexsort([c.seq] + keys[::-1])[:self.keep])
            c, keys = c.take(best), [kk[best] for kk in keys]
        self._parts, self._keys, self._rows = [c], [tuple(keys)], len(c)

    def result(self) -> Candidates:
        self._cut()
        c = self._parts[0]
        return replace(c, combinations=self._counts[0], bounds_not_met=self._counts[1],
                       same_as_smaller_blend=self._counts[2])


def exact_candidates(pool_hsp, target, max_components: int, lower, upper, min_fraction: float = 0.05,
                     progress=None, keep: int | None = None) -> Candidates:
    """Every blend of 1..``max_components`` liquids of a pool at its exact best fractions, less
    those that cannot meet the bounds and those with a liquid under ``min_fraction`` [-] that its
    lower bound does not put there (the same as a smaller blend); with ``keep``, only the best
    ``keep`` by Ra (then fewer liquids, then the order of the search).

    The fractions are those of :func:`best_fractions` (the same to the last bit); the search runs
    in parts (:func:`stream_candidates`), so memory is bounded by ``keep`` and the part size
    whatever the pool.  Raises :class:`SearchCancelled` when ``progress(done, total)`` returns
    False.

    Ethanol and water (Hansen 2007 Appendix A values) for a target made as 70/30 by
    volume: the two single liquids, then the blend at the fractions it was made from.

    >>> c = exact_candidates([[15.8, 8.8, 19.4], [15.5, 16.0, 42.3]], [15.71, 10.96, 26.27], 2, [0, 0], [1, 1])
    >>> len(c), c.combinations, c.members(2)[0], np.round(c.members(2)[1], 6).tolist()
    (3, 3, [0, 1], [0.7, 0.3])
    """
    best = BestCandidates(keep)
    for part in stream_candidates(pool_hsp, target, max_components, lower, upper, min_fraction, progress=progress):
        best.add(part)
    return best.result()


def pareto_layers(objectives) -> np.ndarray:
    """Non-dominated sorting: layer 0 is the Pareto front, layer 1 the front of the rest, ...

    >>> pareto_layers([[1, 2], [2, 1], [2, 2], [3, 3]]).tolist()
    [0, 0, 1, 2]
    """
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


def one_phase_screen(matrix, idx, fractions) -> np.ndarray:
    """Pairwise one-phase screen of many blends of the liquids of ``matrix`` (measured pairs first,
    a prediction otherwise; :func:`solvsel.science.miscibility.pair_matrix` of the pool at the
    search's temperature): True where every pair of a blend is in its one-phase window at its
    proportion.

    ``idx`` (n, 4) indexes the matrix's ``names`` (-1 after a blend's last liquid), ``fractions``
    (n, 4) are volume fractions [-].
    """
    idx = np.asarray(idx)
    return matrix.screen(np.where(idx < 0, 0, idx), fractions)


def one_phase(cat, names, fractions, temp_C: float, matrix=None) -> tuple[bool, str, str]:
    """(one phase, basis "measured" / "predicted", reason or note) of one blend at its volume
    fractions [-] and ``temp_C`` [C] (:func:`solvsel.science.miscibility.blend_phase`: pairs, then a
    blend of three or four liquids as a whole by the tangent-plane test); the pairs' verdicts are
    read from ``matrix`` (the pool's pair matrix at ``temp_C``) where given."""
    from .miscibility import blend_phase

    res = blend_phase(cat, list(names), [float(v) for v in fractions], temp_C, matrix=matrix)
    text = res.reason if not res.one_phase else res.note
    if not res.one_phase and res.note:
        text = f"{res.reason}; {res.note}"
    return bool(res.one_phase), str(res.basis), str(text)


def blend_solubility(solute, t_hsp, recs, xs, bh, temp_C: float) -> dict | None:
    """Solid solubility estimate of a solute in a blend, where its data allow (else None).

    ``recs`` are the blend's liquid records, ``xs`` their volume fractions [-], ``bh`` the blend's
    HSP [MPa^0.5] at ``temp_C`` [C]; the blend's molar volume and mass are mole-fraction averages
    (:func:`solvsel.science.hansen.solid_solubility`).
    """
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


def _search_bounds(m: int, max_components, lower, upper) -> tuple[np.ndarray, np.ndarray]:
    """The lower and upper volume-fraction bounds of a search over ``m`` liquids (0 and 1 where not
    given), after checking ``max_components`` and the bounds' shapes."""
    if not 1 <= int(max_components) <= MAX_COMPONENTS:
        raise InputError(f"expected 1 to {MAX_COMPONENTS}, got {max_components}", param="max_components")
    lo = np.zeros(m) if lower is None else np.asarray(lower, dtype=float)
    hi = np.ones(m) if upper is None else np.asarray(upper, dtype=float)
    if lo.shape != (m,) or hi.shape != (m,):
        raise InputError(f"expected one bound per pool liquid ({m})", param="lower")
    return lo, hi

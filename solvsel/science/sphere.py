r"""Fit a solute's Hansen sphere from bench solubility results.

A solute (an extract, an oleoresin, a gum, a new active) is shaken with 15-40
liquids and each result is scored good or bad (or on a graded scale).  This
module turns those scores into a sphere: a centre (dD, dP, dH) and an
interaction radius R0 such that good liquids lie inside (RED < 1) and bad ones
outside.  It says how well the scores are explained, which liquids sit on the
wrong side, whether the good liquids surround the centre at all, how sure the
answer is, and which untested liquids would narrow it most.

Method.  Hansen's desirability [1]_ scores each liquid ``A_i = 1`` on the right
side and ``A_i = exp(-v_i)`` on the wrong side, ``v_i`` its distance from the
surface [MPa^0.5]; the fit maximises the (weighted) geometric mean of the
``A_i``.  Taking logarithms, that is minimising the weighted sum of wrong-side
distances

.. math::
    V(c, R_0) = \sum_{good} w_i \max(0, R_{a,i} - R_0)
              + \sum_{bad} w_i \max(0, R_0 - R_{a,i})

For a fixed centre ``V`` is convex and piecewise linear in ``R0`` with breaks
at the liquids' distances, so the best R0 is found exactly among them (all at
once, by sorting).  The centre is searched by multi-start local optimisation
inside physical bounds.  An optional floor ``lapse`` on each liquid's score,
``A_i = lapse + (1 - lapse) exp(-v_i)``, keeps one gross bench error (a
mislabelled vial) from dragging the sphere; the best R0 still lies at a
liquid's distance (each wrong-side loss is then concave in R0).

Choosing one sphere.  When every result can be explained (checked exactly by
a linear programme in the lifted coordinates (c, R0^2 - |c|^2)), a whole region
of spheres fits; the classic choice is the smallest R0, which is biased low.
The default rule (``"margin"``, our choice) takes the sphere whose nearest
good and bad liquids are farthest from its surface in RED units, each liquid's
required margin scaled by its grading weight.  When no sphere explains every
result, its smooth analogue is used: the sphere with a soft surface,
``P(good) = lapse + (1 - 2 lapse) / (1 + exp((Ra - R0)/s))``, fitted by maximum
likelihood from the best Hansen spheres as starting points.  Both rules are
compared in ``bench/bench_sphere.py`` and ``tests/test_sphere.py``.

Uncertainty.  Reading the (floored) desirability as a likelihood, a profile
interval holds every value of a parameter for which some sphere has
``V <= V_min + chi2_1(level)/2`` (1.353 at 90 %); the level is nominal under
that model, and the intervals are wide where the liquids tested leave the
sphere open.

Next tests.  :func:`suggest_tests` is a heuristic, and says so: untested
liquids with RED nearest 1 under the current fit, spread over directions.

References
----------
.. [1] Hansen, C. M. *Hansen Solubility Parameters: A User's Handbook*, 2nd ed.
   CRC Press, 2007, ch. 1 (the sphere-fitting desirability function).
   ISBN 978-0-8493-7248-3.
.. [2] Vebber, G. C.; Pranke, P.; Pereira, C. N. *J. Appl. Polym. Sci.* 131
   (2014) 39696 (classic fits bias the radius; solvent-set coverage).
   DOI: 10.1002/app.39696.
.. [3] Pawitan, Y. *In All Likelihood: Statistical Modelling and Inference
   Using Likelihood*. Oxford University Press, 2001, ch. 2-3 (profile
   likelihood intervals).
"""

from __future__ import annotations

import math
from contextlib import contextmanager
from dataclasses import dataclass

import numpy as np

from ..errors import InputError
from .hansen import SCALE, as_hsp, ra, scaled

__all__ = [
    "DEFAULT_BOUNDS",
    "RULES",
    "SphereFit",
    "WrongSide",
    "SuggestedTest",
    "fit_sphere",
    "fit_two_spheres",
    "TwoSphereFit",
    "desirability",
    "grading_weights",
    "suggest_tests",
    "GradedFit",
    "fit_graded",
    "score_boundary",
]

#: Search bounds of the centre [MPa^0.5]: (dD, dP, dH) low/high.  They span
#: the food and pharmaceutical solutes of the handbook's tables with room to
#: spare (common practice); the fit flags a centre that ends on a bound.
DEFAULT_BOUNDS = ((12.0, 25.0), (0.0, 30.0), (0.0, 40.0))

#: Ways to choose one sphere among those that fit equally well.
RULES = ("margin", "classic")

_MIN_LIQUIDS = 5
_R0_MAX = 60.0  # [MPa^0.5], far beyond any tabulated sphere


# --------------------------------------------------------------------------
# results


@dataclass(frozen=True)
class WrongSide:
    """A liquid whose result the fitted sphere does not explain."""

    name: str
    good: bool
    red: float
    weight: float
    dD: float
    dP: float
    dH: float

    def to_dict(self) -> dict:
        return {
            "name": self.name,
            "result": "good" if self.good else "bad",
            "red": self.red,
            "weight": self.weight,
            "dD": self.dD,
            "dP": self.dP,
            "dH": self.dH,
        }


@dataclass(frozen=True)
class SphereFit:
    """A fitted Hansen sphere with its fit quality and uncertainty.

    Attributes
    ----------
    dD, dP, dH : float
        centre [MPa^0.5]
    r0 : float
        interaction radius [MPa^0.5]
    fit : float
        Hansen's desirability, the weighted geometric mean of the liquids'
        scores (1 when every result is explained) [-]
    explained : float
        weighted fraction of liquids on the right side [-]
    wrong_side : tuple of WrongSide
        liquids not explained, farthest from the surface first
    interval : dict
        ``{"dD": (lo, hi), "dP": ..., "dH": ..., "r0": ..., "level", "method"}``
    open : bool
        True when the good liquids do not surround the centre (the sphere is
        bounded by bad liquids on one side only)
    open_direction : tuple of float or None
        unit vector (dD, dP, dH) pointing to where no good liquid was tested
    open_note : str
        the same in words
    rule : str
        "margin" or "classic"
    separable : bool
        True when some sphere explains every result
    margin : float
        for separable results, the RED margin ``(Ra_bad - Ra_good)/(Ra_bad + Ra_good)``
        of the nearest bad and good liquids [-]; 0 otherwise
    objective : float
        the (floored) desirability objective V at the reported sphere [-]
    names, good, weights, red : tuple
        per liquid: name, result used, weight, RED under the fit
    at_bound : tuple of str
        parameters whose value ended on a search bound
    success, message : bool, str
        whether the searches converged, and what to know about the fit
    surface_width : float or None
        width ``s`` of the soft surface [MPa^0.5] (margin rule, results not
        all explainable); None otherwise
    """

    dD: float
    dP: float
    dH: float
    r0: float
    fit: float
    explained: float
    wrong_side: tuple
    interval: dict
    open: bool
    open_direction: tuple | None
    open_note: str
    rule: str
    separable: bool
    margin: float
    objective: float
    names: tuple
    good: tuple
    weights: tuple
    red: tuple
    at_bound: tuple
    success: bool
    message: str
    n_evaluations: int = 0
    surface_width: float | None = None

    @property
    def hsp(self) -> np.ndarray:
        """Centre as an array (dD, dP, dH) [MPa^0.5]."""
        return np.array([self.dD, self.dP, self.dH])

    @property
    def n_liquids(self) -> int:
        return len(self.names)

    @property
    def n_good(self) -> int:
        return int(sum(self.good))

    def to_dict(self) -> dict:
        iv = {k: (list(v) if isinstance(v, tuple) else v) for k, v in self.interval.items()}
        return {
            "dD": self.dD,
            "dP": self.dP,
            "dH": self.dH,
            "r0": self.r0,
            "fit": self.fit,
            "explained": self.explained,
            "wrong_side": [w.to_dict() for w in self.wrong_side],
            "interval": iv,
            "open": self.open,
            "open_direction": list(self.open_direction) if self.open_direction else None,
            "open_note": self.open_note,
            "rule": self.rule,
            "separable": self.separable,
            "margin": self.margin,
            "n_liquids": self.n_liquids,
            "n_good": self.n_good,
            "at_bound": list(self.at_bound),
            "liquids": [
                {"name": n, "result": "good" if g else "bad", "weight": w, "red": r}
                for n, g, w, r in zip(self.names, self.good, self.weights, self.red)
            ],
            "surface_width": self.surface_width,
            "success": self.success,
            "message": self.message,
        }


@dataclass(frozen=True)
class SuggestedTest:
    """An untested liquid proposed for the next bench round (a heuristic)."""

    name: str
    red: float
    dD: float
    dP: float
    dH: float
    direction: tuple
    why: str

    def to_dict(self) -> dict:
        return {
            "name": self.name,
            "red": self.red,
            "dD": self.dD,
            "dP": self.dP,
            "dH": self.dH,
            "direction": list(self.direction),
            "why": self.why,
        }


# --------------------------------------------------------------------------
# inputs


def grading_weights(scores, good_at_most: float | None = None, good_at_least: float | None = None):
    """Classify graded scores and weight each by its distance from the cut-off.

    A score on the good side of the cut-off is good.  The weight of a result is
    its distance from the midpoint between the cut-off and the next score of
    the scale (the scale's step is the smallest gap between distinct scores,
    at most 1), so a 1 on a 1-6 scale cut at 2 weighs 3 times a 2 or a 3.
    Weights are scaled to a mean of 1.

    Parameters
    ----------
    scores : array_like of float
        one score per liquid [-]
    good_at_most : float, optional
        scores at or below this are good (scales where low is best, e.g. 1-6)
    good_at_least : float, optional
        scores at or above this are good (scales where high is best, e.g. 0-5)

    Returns
    -------
    good : ndarray of bool
    weights : ndarray of float

    Examples
    --------
    The 1 (dissolved) ... 6 (no effect) scale cut at 2 (common practice):

    >>> g, w = grading_weights([1, 2, 3, 6], good_at_most=2)
    >>> g.tolist(), np.round(w, 3).tolist()   # distances 1.5, .5, .5, 3.5 over their mean 1.5
    ([True, True, False, False], [1.0, 0.333, 0.333, 2.333])
    """
    s = np.asarray(scores, dtype=float)
    if s.ndim != 1 or s.size == 0:
        raise InputError("expected one number per liquid", param="scores", expected="one score per liquid")
    if not np.all(np.isfinite(s)):
        raise InputError("every score must be a finite number", param="scores", expected="finite numbers")
    if (good_at_most is None) == (good_at_least is None):
        raise InputError(
            "graded scores need exactly one cut-off: good at most N (low is best, e.g. 1-6) "
            "or good at least N (high is best, e.g. 0-5)", param="good_at_least" if good_at_most is not None
            else "good_at_most", expected="one cut-off")
    mid, step = score_boundary(s, good_at_most, good_at_least)
    good = s <= good_at_most if good_at_most is not None else s >= good_at_least
    w = np.abs(s - mid)
    w = np.maximum(w, step / 2)
    return good, w / w.mean()


def score_boundary(scores, good_at_most: float | None = None, good_at_least: float | None = None):
    """The score halfway between a scale's cut-off and the next score, and the scale's step.

    The step is the smallest gap between distinct scores, at most 1.

    >>> score_boundary([1, 2, 3, 6], good_at_most=2)
    (2.5, 1.0)
    """
    uniq = np.unique(np.asarray(scores, dtype=float))
    step = min(float(np.min(np.diff(uniq))) if uniq.size > 1 else 1.0, 1.0)
    if good_at_most is not None:
        return float(good_at_most) + step / 2, step
    return float(good_at_least) - step / 2, step


def _prepare(hsp, good, weights, names, good_at_most, good_at_least):
    X = as_hsp(hsp, "hsp")
    if X.ndim != 2:
        raise InputError(f"expected one row of dD, dP, dH per liquid, got shape {X.shape}", param="hsp")
    n = X.shape[0]
    g_in = np.asarray(good)
    if g_in.shape != (n,):
        raise InputError(f"expected {n} results (one per liquid), got shape {g_in.shape}", param="good")
    if g_in.dtype == bool:
        if good_at_most is not None or good_at_least is not None:
            raise InputError("a score cut-off applies to numeric scores, not to good/bad results",
                             param="good_at_most" if good_at_most is not None else "good_at_least")
        g = g_in.astype(bool)
        w = np.ones(n)
    else:
        try:
            g, w = grading_weights(g_in.astype(float), good_at_most, good_at_least)
        except (TypeError, ValueError) as exc:
            if isinstance(exc, InputError):
                raise
            raise InputError("expected booleans or numeric scores", param="good") from None
    if weights is not None:
        extra = np.asarray(weights, dtype=float)
        if extra.shape != (n,) or not np.all(np.isfinite(extra)) or np.any(extra <= 0):
            raise InputError(f"expected {n} positive numbers (one per liquid)", param="weights")
        w = w * extra
    if names is None:
        names = tuple(f"liquid {i + 1}" for i in range(n))
    else:
        names = tuple(str(x) for x in names)
        if len(names) != n:
            raise InputError(f"expected {n} names, got {len(names)}", param="names")
        seen = {}
        for i, nm in enumerate(names):
            key = nm.strip().lower()
            if key in seen:
                raise InputError(f"liquid '{nm}' is listed twice (entries {seen[key] + 1} and {i + 1}); "
                                 "keep one result per liquid", param="names", value=nm)
            seen[key] = i
    if n < _MIN_LIQUIDS:
        raise InputError(
            f"only {n} liquids: a sphere has 4 unknowns, test at least {_MIN_LIQUIDS} liquids "
            "(15-30 spread over Hansen space is usual practice)", param="hsp",
            expected=f"at least {_MIN_LIQUIDS} liquids"
        )
    ng = int(g.sum())
    if ng == n:
        raise InputError(
            f"all {n} liquids are good: nothing bounds the sphere; test liquids that do not "
            "dissolve the solute (far from the good ones)", param="good"
        )
    if ng == 0:
        raise InputError(
            f"all {n} liquids are bad: nothing locates the sphere; test liquids of other "
            "kinds until at least one dissolves the solute", param="good"
        )
    return X, g, w, names


def _check_bounds(bounds):
    b = np.asarray(DEFAULT_BOUNDS if bounds is None else bounds, dtype=float)
    if b.shape != (3, 2) or not np.all(np.isfinite(b)) or np.any(b[:, 0] >= b[:, 1]):
        raise InputError("expected ((dD_lo, dD_hi), (dP_lo, dP_hi), (dH_lo, dH_hi)) with lo < hi", param="bounds")
    return b


# --------------------------------------------------------------------------
# the objective


def _distances(Xs, C):
    """Distances [MPa^0.5] from centres C (m, 3) to liquids Xs (n, 3), both scaled."""
    diff = C[:, None, :] - Xs[None, :, :]
    return np.sqrt(np.einsum("mnk,mnk->mn", diff, diff))


def _loss(v, lapse: float):
    """Negative log of a liquid's desirability for wrong-side distance v >= 0.

    ``-log(lapse + (1 - lapse) exp(-v))``: Hansen's ``v`` when lapse = 0,
    and at most ``-log(lapse)`` otherwise.
    """
    if lapse <= 0.0:
        return v
    return -np.log(lapse + (1.0 - lapse) * np.exp(-v))


def _best_r0(d, wg, wb, lapse: float = 0.0):
    """Exact optimum of V over R0 for each row of distances ``d`` (m, n).

    Between two consecutive distances the set of wrong-side liquids is fixed
    and each one's loss is a concave function of R0 (linear when lapse = 0),
    so the optimum lies at one of the distances.  With lapse = 0 all breaks
    are evaluated at once by sorting and prefix sums (O(n log n) a centre),
    otherwise on the full (n x n) table.  Returns V_min (m,), and the lowest
    and highest R0 reaching it (m,).
    """
    if lapse > 0.0:
        # f[m, k] = sum_i loss(violation of liquid i when R0 = d[m, k]), in
        # chunks of centres so that the (m, n, n) table stays small
        n = d.shape[1]
        step = max(1, 2_000_000 // (n * n))
        f = np.empty_like(d)
        for a in range(0, d.shape[0], step):
            dc = d[a:a + step]
            gap = dc[:, None, :] - dc[:, :, None]  # d_i - R0, R0 = d_k on axis 1
            # a good liquid is wrong beyond R0 (gap > 0), a bad one inside (gap < 0)
            f[a:a + step] = (np.where(gap > 0.0, wg, wb) * _loss(np.abs(gap), lapse)).sum(axis=2)
        ds = d
    else:
        order = np.argsort(d, axis=1)
        ds = np.take_along_axis(d, order, axis=1)
        WG = wg[order]
        WB = wb[order]
        # good liquids farther than the break: sum w (d_j - d_k)
        sg = np.cumsum(WG[:, ::-1], axis=1)[:, ::-1] - WG
        sgd = np.cumsum((WG * ds)[:, ::-1], axis=1)[:, ::-1] - WG * ds
        # bad liquids nearer than the break: sum w (d_k - d_j)
        pb = np.cumsum(WB, axis=1) - WB
        pbd = np.cumsum(WB * ds, axis=1) - WB * ds
        f = (sgd - ds * sg) + (ds * pb - pbd)
    fmin = f.min(axis=1)
    near = f <= (fmin + 1e-9 * (1.0 + fmin))[:, None]
    r_lo = np.where(near, ds, np.inf).min(axis=1)
    r_hi = np.where(near, ds, -np.inf).max(axis=1)
    return np.maximum(fmin, 0.0), r_lo, r_hi


def _violations(d, good, r0):
    return np.where(good, np.maximum(d - r0, 0.0), np.maximum(r0 - d, 0.0))


def desirability(hsp, good, r0, solvents_hsp, weights=None) -> float:
    r"""Hansen's desirability of a sphere for a set of bench results.

    .. math::
        \mathrm{fit} = \Big(\prod_i A_i^{w_i}\Big)^{1/\sum w_i},\quad
        A_i = e^{-v_i} \text{ on the wrong side, else } 1

    ``v_i`` is the liquid's distance from the sphere's surface.

    Parameters
    ----------
    hsp : array_like, shape (3,)
        centre dD, dP, dH [MPa^0.5]
    good : array_like of bool, shape (n,)
        bench result of each liquid
    r0 : float
        radius [MPa^0.5]
    solvents_hsp : array_like, shape (n, 3)
        dD, dP, dH of the liquids [MPa^0.5]
    weights : array_like, shape (n,), optional
        weight of each result [-]

    Examples
    --------
    Toluene (18.0, 1.4, 2.0; Hansen (2007) Appendix A [1]_) is good but lies
    at Ra = sqrt(4*1.7**2 + 1.5**2 + 0.7**2) = 3.782 from a made-up sphere at
    (19.7, 2.9, 2.7) with R0 = 3.5, so it scores exp(-0.282); ethanol
    (15.8, 8.8, 19.4), bad and far outside, scores 1; the geometric mean of
    the two is exp(-0.1408) = 0.8687:

    >>> round(desirability([19.7, 2.9, 2.7], [True, False], 3.5,
    ...                    [[18.0, 1.4, 2.0], [15.8, 8.8, 19.4]]), 4)
    0.8687
    """
    X = as_hsp(solvents_hsp, "solvents_hsp")
    g = np.asarray(good, dtype=bool)
    w = np.ones(len(g)) if weights is None else np.asarray(weights, dtype=float)
    d = ra(X, as_hsp(hsp))
    v = _violations(d, g, float(r0))
    return float(np.exp(-np.sum(w * v) / np.sum(w)))


# --------------------------------------------------------------------------
# searches


def _lp_lifted_margin(Xs, g, w, lo, hi):
    """Largest margin in squared distance (a linear program in the lifted space).

    ``|x - c|^2 = |x|^2 - 2 x.c + |c|^2`` is linear in (c, s = R^2 - |c|^2),
    so the widest band of squared distances separating good from bad liquids
    is exact and global.  Returns (centre, t); t > 0 means the results can be
    explained perfectly.
    """
    from scipy.optimize import linprog

    sq = np.sum(Xs * Xs, axis=1)
    sign = np.where(g, 1.0, -1.0)
    # good: sq - 2x.c - s + w t <= 0 ; bad: -sq + 2x.c + s + w t <= 0
    A = np.column_stack([-2.0 * Xs * sign[:, None], -sign, w])
    b = -sq * sign
    cost = np.array([0, 0, 0, 0, -1.0])
    bounds = [(lo[k], hi[k]) for k in range(3)] + [(None, None), (None, None)]
    res = linprog(cost, A_ub=A, b_ub=b, bounds=bounds, method="highs")
    if res.status != 0:
        return None, -np.inf
    return res.x[:3], float(res.x[4])


def _slsqp_margin(Xs, g, w, c0, lo, hi, classic: bool):
    """Largest (weighted) margin in RED, or the classic smallest radius, among perfect fits.

    Margin rule: maximise m subject to ``Ra_i <= R0 (1 - w_i m)`` (good) and
    ``Ra_i >= R0 (1 + w_i m)`` (bad).  A margin in RED (relative to R0), not in
    MPa^0.5, so that a sphere cannot gain margin by growing without bound
    toward a side where no liquid was tested.
    """
    from scipy.optimize import minimize

    sign = np.where(g, 1.0, -1.0)  # good: R - d - w m R >= 0 ; bad: d - R - w m R >= 0
    wt = np.zeros_like(w) if classic else w

    def parts(z):
        diff = z[:3] - Xs
        d = np.sqrt(np.sum(diff * diff, axis=1))
        return diff, np.maximum(d, 1e-12)

    def cons(z):
        _, d = parts(z)
        return sign * (z[3] - d) - wt * z[4] * z[3]

    def cons_jac(z):
        diff, d = parts(z)
        J = np.empty((len(d), 5))
        J[:, :3] = -sign[:, None] * diff / d[:, None]
        J[:, 3] = sign - wt * z[4]
        J[:, 4] = -wt * z[3]
        return J

    if classic:
        def obj(z):
            return z[3]

        grad = np.array([0, 0, 0, 1.0, 0])
    else:
        def obj(z):
            return -z[4]

        grad = np.array([0, 0, 0, 0, -1.0])

    d0 = np.sqrt(np.sum((c0 - Xs) ** 2, axis=1))
    if classic:
        r_init = float(d0[g].max())
        t_init = 0.0
    else:
        r_init = 0.5 * (float(d0[g].max()) + float(d0[~g].min()))
        t_init = 0.0
    z0 = np.array([*c0, r_init, t_init])
    bnds = [(lo[k], hi[k]) for k in range(3)] + [(0.0, _R0_MAX), (None, None) if not classic else (0.0, 0.0)]
    res = minimize(
        obj, z0, jac=lambda z: grad, method="SLSQP", bounds=bnds,
        constraints=[{"type": "ineq", "fun": cons, "jac": cons_jac}],
        options={"maxiter": 200, "ftol": 1e-10},
    )
    z = res.x
    ok = bool(np.all(cons(z) >= -1e-7))
    return z[:3], z, ok, res.nit


def _hansen_search(Xs, wg, wb, lo, hi, rng, n_starts, lapse, xatol=1e-4, m=800, polish=True):
    """Minimise V over the centre: vectorised coarse pass, then Nelder-Mead.

    Returns the best centre, its V, the number of evaluations and the
    starting points used (best first).
    """
    from scipy.optimize import minimize

    C = lo + (hi - lo) * rng.random((m, 3))
    good_pts = Xs[wg > 0]
    cen = np.average(Xs, axis=0, weights=wg)
    C = np.vstack([C, good_pts, cen[None]])
    C = np.clip(C, lo, hi)
    V, _, _ = _best_r0(_distances(Xs, C), wg, wb, lapse)
    order = np.argsort(V)
    starts = []
    for i in order:
        if all(np.linalg.norm(C[i] - s) > 1.0 for s in starts):
            starts.append(C[i])
        if len(starts) >= n_starts:
            break
    count = [len(C)]

    def fun(c):
        count[0] += 1
        return float(_best_r0(_distances(Xs, c[None]), wg, wb, lapse)[0][0])

    if not polish:
        return starts[0], float(V[order[0]]), count[0], starts
    found = []
    for s in starts:
        res = minimize(fun, s, method="Nelder-Mead", bounds=list(zip(lo, hi)),
                       options={"xatol": xatol, "fatol": 1e-9, "maxfev": 2000,
                                "initial_simplex": s + 0.8 * np.vstack([np.zeros(3), np.eye(3)])})
        found.append((float(res.fun), np.asarray(res.x)))
    found.sort(key=lambda t: t[0])
    return found[0][1], found[0][0], count[0], [f[1] for f in found]


def _logistic_fit(Xs, g, w, starts, lo, hi, lapse):
    """Sphere with a soft surface: maximum likelihood of the bench results.

    ``P(good) = lapse + (1 - 2 lapse) / (1 + exp((Ra - R0)/s))``: the smooth
    analogue of the largest margin when no sphere explains every result
    (liquids near the surface on the right side count as weak evidence, so
    the sphere is centred among them instead of resting on the nearest ones).
    Returns (centre, R0, s, negative log-likelihood).
    """
    from scipy.optimize import minimize

    y = g.astype(float)
    lam = max(lapse, 1e-3)

    def nll(z):
        diff = z[:3] - Xs
        d = np.maximum(np.sqrt(np.sum(diff * diff, axis=1)), 1e-12)
        s = math.exp(z[4])
        a = (z[3] - d) / s
        sig = 0.5 * (1.0 + np.tanh(0.5 * a))
        p = lam + (1.0 - 2.0 * lam) * sig
        f = -np.sum(w * (y * np.log(p) + (1.0 - y) * np.log1p(-p)))
        dfdp = -w * (y / p - (1.0 - y) / (1.0 - p))
        dfda = dfdp * (1.0 - 2.0 * lam) * sig * (1.0 - sig)
        grad = np.empty(5)
        grad[:3] = -(dfda[:, None] * diff / d[:, None]).sum(axis=0) / s
        grad[3] = dfda.sum() / s
        grad[4] = -(dfda * a).sum()
        return f, grad

    bnds = [(lo[k], hi[k]) for k in range(3)] + [(0.5, _R0_MAX), (math.log(0.05), math.log(5.0))]
    best = None
    nit = 0
    for c0, r0 in starts:
        res = minimize(nll, np.array([*c0, r0, 0.0]), jac=True, method="L-BFGS-B", bounds=bnds,
                       options={"ftol": 1e-8, "gtol": 1e-4})
        nit += res.nit
        if np.all(np.isfinite(res.x)) and (best is None or res.fun < best.fun):
            best = res
    if best is None:
        return None, None, None, None, nit
    return best.x[:3], float(best.x[3]), float(math.exp(best.x[4])), float(best.fun), nit


def _softplus(x, beta):
    return np.logaddexp(0.0, beta * x) / beta


def _profile_interval(Xs, g, w, c_hat, r_hat, budget, lo, hi, lapse, beta=30.0):
    """Range of each parameter over spheres with V <= budget (8 small SLSQP runs).

    The hinge ``max(0, v)`` in V is replaced by the softplus
    ``log(1 + exp(beta v))/beta`` (above the hinge by at most ln 2/beta =
    0.023 MPa^0.5 a liquid, and only near the surface), which makes the
    constraint smooth in the 4 unknowns; the budget is raised by the same
    excess at the estimate so that the estimate stays inside.
    """
    from scipy.optimize import minimize

    sign = np.where(g, 1.0, -1.0)

    def viol(z):
        diff = z[:3] - Xs
        d = np.maximum(np.sqrt(np.sum(diff * diff, axis=1)), 1e-12)
        return diff, d, sign * (d - z[3])

    def dloss(u):  # derivative of _loss at u >= 0
        if lapse <= 0.0:
            return np.ones_like(u)
        e = (1.0 - lapse) * np.exp(-u)
        return e / (lapse + e)

    _, _, v_hat = viol(np.concatenate([c_hat, [r_hat]]))
    excess = float(np.sum(w * (_loss(_softplus(v_hat, beta), lapse) - _loss(np.maximum(v_hat, 0.0), lapse))))
    cap = budget + excess

    def cons(z):
        return np.array([cap - np.dot(w, _loss(_softplus(viol(z)[2], beta), lapse))])

    def cons_jac(z):
        diff, d, v = viol(z)
        # w * sign * loss'(softplus) * sigmoid(beta v)
        s = w * sign * dloss(_softplus(v, beta)) * 0.5 * (1.0 + np.tanh(0.5 * beta * v))
        J = np.empty((1, 4))
        J[0, :3] = -(s[:, None] * diff / d[:, None]).sum(axis=0)
        J[0, 3] = np.sum(s)
        return J

    z0 = np.concatenate([c_hat, [r_hat]])
    bnds = [(lo[k], hi[k]) for k in range(3)] + [(1e-3, _R0_MAX)]
    out = []
    ok_all = True
    for k in range(4):
        ends = []
        for s in (1.0, -1.0):
            grad = np.zeros(4)
            grad[k] = s
            res = minimize(lambda z, k=k, s=s: s * z[k], z0, jac=lambda z, gr=grad: gr, method="SLSQP",
                           bounds=bnds, constraints=[{"type": "ineq", "fun": cons, "jac": cons_jac}],
                           options={"maxiter": 100, "ftol": 1e-6})
            z = res.x
            if np.all(np.isfinite(z)) and cons(z)[0] >= -1e-6:
                ends.append(float(z[k]))
            else:
                ok_all = False
                ends.append(float(z0[k]))
        out.append((min(ends[0], z0[k]), max(ends[1], z0[k])))
    return out, ok_all


def _open_check(Xs, g, c):
    """Is the centre outside the hull of the good liquids?  Returns (open, u_scaled)."""
    from scipy.optimize import linprog

    P = Xs[g] - c
    # maximise t subject to u . p_i >= t for all good, -1 <= u <= 1
    A = np.column_stack([-P, np.ones(len(P))])
    res = linprog(np.array([0, 0, 0, -1.0]), A_ub=A, b_ub=np.zeros(len(P)),
                  bounds=[(-1, 1)] * 3 + [(None, 1.0)], method="highs")
    if res.status != 0:
        return False, None
    t = float(res.x[3])
    if t <= 1e-6:
        return False, None
    u = -res.x[:3]  # direction from the centre in which no good liquid lies
    return True, u / np.linalg.norm(u)


_AXES = ("dD", "dP", "dH")


def _describe_direction(vec) -> str:
    parts = []
    for k, comp in enumerate(vec):
        if abs(comp) >= 0.35:
            parts.append(("higher " if comp > 0 else "lower ") + _AXES[k])
    return " and ".join(parts) if parts else "no single direction"


# --------------------------------------------------------------------------
# the fit


def fit_sphere(hsp, good, weights=None, *, names=None, good_at_most: float | None = None,
               good_at_least: float | None = None, rule: str = "margin", lapse: float = 0.05, bounds=None,
               interval: bool = True, level: float = 0.90, n_starts: int = 4, seed: int = 0) -> SphereFit:
    r"""Fit a solute's Hansen sphere to bench solubility results.

    Maximises Hansen's desirability [1]_ (minimises the weighted sum of
    wrong-side distances ``V``, see the module text); R0 is exact for each
    centre, the centre is found by multi-start local optimisation within
    ``bounds``.  Among equally good spheres ``rule`` picks one:

    - ``"margin"`` (default): the largest margin ``m`` in RED between the
      surface and the nearest liquids, each liquid's margin scaled by its
      weight, :math:`R_{a,i} \le R_0 (1 - w_i m)` (good),
      :math:`R_{a,i} \ge R_0 (1 + w_i m)` (bad); when no sphere explains every
      result, the maximum-likelihood sphere with a soft surface (module text);
    - ``"classic"``: the best desirability with the smallest R0 (biased low,
      kept for comparison with published fits; use ``lapse=0`` for the
      handbook's function exactly).

    Parameters
    ----------
    hsp : array_like, shape (n, 3)
        dD, dP, dH of the liquids tested [MPa^0.5]
    good : array_like, shape (n,)
        bool (True = dissolves) or numeric scores with ``good_at_most`` /
        ``good_at_least``; scores are weighted by their distance from the
        cut-off (:func:`grading_weights`) [-]
    weights : array_like, shape (n,), optional
        extra weight of each result, e.g. 0.5 for a partial result [-]
    names : sequence of str, optional
        liquid names for the report; duplicates are refused
    good_at_most, good_at_least : float, optional
        cut-off of a numeric scale [-]
    rule : {"margin", "classic"}
        choice among spheres that fit equally well
    lapse : float
        floor of a wrong-side liquid's desirability, for gross bench errors
        (a mislabelled tube, a contaminated sample), 0 <= lapse < 1: each
        liquid scores ``lapse + (1 - lapse) exp(-v)``, so one result far on
        the wrong side cannot drag the sphere.  0 gives the handbook's
        function exactly [1]_; the default 0.05 (one gross error in twenty
        results) is our choice [-]
    bounds : ((lo, hi), (lo, hi), (lo, hi)), optional
        search bounds of dD, dP, dH [MPa^0.5], default :data:`DEFAULT_BOUNDS`
    interval : bool
        compute profile intervals (8 small optimisations)
    level : float
        level of the profile intervals, 0 < level < 1 [-]
    n_starts : int
        local searches when the results cannot all be explained [-]
    seed : int
        seed of the random starting points (the fit is reproducible) [-]

    Returns
    -------
    SphereFit

    Examples
    --------
    Twelve liquids scored against a made-up sphere at (17, 8, 10), R0 = 7
    (Appendix A solvent values of Hansen (2007) [1]_): the fit explains all
    of them and its 90 % profile interval holds the true centre.

    >>> liquids = {"n-hexane": (14.9, 0.0, 0.0), "toluene": (18.0, 1.4, 2.0),
    ...   "acetone": (15.5, 10.4, 7.0), "ethanol": (15.8, 8.8, 19.4),
    ...   "water": (15.5, 16.0, 42.3), "ethyl acetate": (15.8, 5.3, 7.2),
    ...   "methanol": (14.7, 12.3, 22.3), "2-butanone": (16.0, 9.0, 5.1),
    ...   "dichloromethane": (17.0, 7.3, 7.1), "1-butanol": (16.0, 5.7, 15.8),
    ...   "tetrahydrofuran": (16.8, 5.7, 8.0), "acetonitrile": (15.3, 18.0, 6.1)}
    >>> X = np.array(list(liquids.values()))
    >>> good = ra(X, [17.0, 8.0, 10.0]) < 7.0
    >>> f = fit_sphere(X, good, names=list(liquids))
    >>> f.fit, len(f.wrong_side)
    (1.0, 0)
    >>> all(f.interval[k][0] <= t <= f.interval[k][1] for k, t in zip(("dD", "dP", "dH"), (17, 8, 10)))
    True
    """
    try:
        from threadpoolctl import threadpool_limits
    except ImportError:  # pragma: no cover - optional: only a speed matter
        threadpool_limits = None
    if threadpool_limits is None:  # pragma: no cover
        return _fit(hsp, good, weights, names, good_at_most, good_at_least, rule, lapse, bounds,
                    interval, level, n_starts, seed)
    # the optimisers make many tiny BLAS calls: threads only add waiting (on a busy machine, seconds).
    # The limit reaches only the BLAS libraries loaded when it is set, and scipy brings its own:
    # load the optimisers first.
    import scipy.optimize  # noqa: F401

    with threadpool_limits(limits=1, user_api="blas"):
        return _fit(hsp, good, weights, names, good_at_most, good_at_least, rule, lapse, bounds,
                    interval, level, n_starts, seed)


def _fit(hsp, good, weights, names, good_at_most, good_at_least, rule, lapse, bounds,
         interval, level, n_starts, seed) -> SphereFit:
    lapse, level = _check_options(rule, lapse, level)
    X, g, w, names = _prepare(hsp, good, weights, names, good_at_most, good_at_least)
    b = _check_bounds(bounds)
    lo, hi = b[:, 0] * SCALE, b[:, 1] * SCALE
    Xs = scaled(X)
    wg = np.where(g, w, 0.0)
    wb = np.where(g, 0.0, w)
    messages: list[str] = []
    c_lp, t_lp = _lp_lifted_margin(Xs, g, w, lo, hi)
    separable = bool(c_lp is not None and t_lp > 1e-7)
    if separable:
        c, n_eval = _perfect_centre(Xs, g, w, wg, wb, c_lp, lo, hi, rule, lapse, messages)
        V_min, r_soft, width, success = 0.0, None, None, True
    else:
        c, V_min, r_soft, width, n_eval, success = _imperfect_centre(
            Xs, g, w, wg, wb, lo, hi, np.random.default_rng(seed), n_starts, rule, lapse, messages)
    d = _distances(Xs, c[None])[0]
    r0, margin = _radius(d, g, w, wg, wb, rule, lapse, separable, r_soft)
    V = float(np.sum(w * _loss(_violations(d, g, r0), lapse)))
    redv = d / r0
    wrong = _wrong_side(X, g, w, names, redv)
    explained = 1.0 - float(np.sum(w[[names.index(x.name) for x in wrong]])) / float(np.sum(w)) if wrong else 1.0
    # the trade's number: Hansen's desirability itself (no floor)
    fit = float(np.exp(-np.sum(w * _violations(d, g, r0)) / np.sum(w)))
    centre = c / SCALE
    at_bound = tuple(
        _AXES[k] for k in range(3) if min(abs(centre[k] - b[k, 0]), abs(centre[k] - b[k, 1])) < 1e-3
    )
    if at_bound:
        messages.append("centre on the search bound of " + ", ".join(at_bound) + ": the data do not bound it there")
    is_open, open_dir, open_note = _openness(Xs, g, c)
    iv = _intervals(Xs, g, w, c, r0, min(V_min, V), V, lo, hi, lapse, level, interval, messages)
    if not messages:
        messages.append("every result explained" if not wrong else f"{len(wrong)} result(s) on the wrong side")
    return SphereFit(
        dD=float(centre[0]), dP=float(centre[1]), dH=float(centre[2]), r0=r0,
        fit=fit, explained=explained, wrong_side=tuple(wrong), interval=iv,
        open=is_open, open_direction=open_dir, open_note=open_note, rule=rule,
        separable=separable, margin=float(margin), objective=V, names=names,
        good=tuple(bool(x) for x in g), weights=tuple(float(x) for x in w),
        red=tuple(float(x) for x in redv), at_bound=at_bound,
        success=success, message="; ".join(messages), n_evaluations=int(n_eval),
        surface_width=width,
    )


def _check_options(rule, lapse, level) -> tuple[float, float]:
    if rule not in RULES:
        raise InputError(f"expected one of {', '.join(RULES)}, got '{rule}'", param="rule", value=rule,
                         expected=", ".join(RULES))
    if not (0.0 <= float(lapse) < 1.0):
        raise InputError(f"expected a number from 0 up to (not including) 1, got {lapse}", param="lapse", value=lapse)
    if not (0.0 < float(level) < 1.0):
        raise InputError(f"expected a number between 0 and 1, got {level}", param="level", value=level)
    return float(lapse), level


def _perfect_centre(Xs, g, w, wg, wb, c_lp, lo, hi, rule, lapse, messages):
    """Every result can be explained: the centre of the chosen perfect fit, and the evaluations used."""
    cands = []
    n_eval = 0
    for c0 in (c_lp, np.average(Xs, axis=0, weights=wg)):
        c0 = np.clip(c0, lo, hi)
        c, z, ok, nit = _slsqp_margin(Xs, g, w, c0, lo, hi, classic=(rule == "classic"))
        n_eval += nit
        if ok:
            cands.append((z[3] if rule == "classic" else -z[4], c))
    if not cands:
        # keep the exact linear-programme sphere: it explains every result
        messages.append("local refinement failed; kept the linear-programme sphere")
        return c_lp, n_eval
    c = min(cands, key=lambda t: t[0])[1]
    # the refinement must not lose the perfect fit found by the LP
    if _best_r0(_distances(Xs, c[None]), wg, wb, lapse)[0][0] > 1e-9:
        c = c_lp
    return c, n_eval


def _imperfect_centre(Xs, g, w, wg, wb, lo, hi, rng, n_starts, rule, lapse, messages):
    """No sphere explains every result: ``(centre, V_min, R0 of the soft fit, surface width, evaluations, ok)``."""
    if rule == "classic":
        c, V_min, n_eval, _ = _hansen_search(Xs, wg, wb, lo, hi, rng, n_starts, lapse)
        return c, V_min, None, None, n_eval, True
    # the Hansen optimum only seeds the soft-surface fit: a looser search
    # (the plain linear penalty is cheaper to scan and good enough for seeds)
    _, _, n_eval, found = _hansen_search(Xs, wg, wb, lo, hi, rng, 6, 0.0, polish=False)
    starts = []
    V_min = np.inf
    for c0 in found:
        vm, rl, rh = _best_r0(_distances(Xs, c0[None]), wg, wb, lapse)
        V_min = min(V_min, float(vm[0]))
        starts.append((c0, 0.5 * float(rl[0] + rh[0])))
    c, r_soft, width, _, ne = _logistic_fit(Xs, g, w, starts, lo, hi, lapse)
    n_eval += ne
    if c is None:  # no finite soft-surface fit: keep the best Hansen sphere
        c, r_soft = starts[0]
        messages.append("the soft-surface fit failed; kept the best Hansen sphere of the scan")
        return c, V_min, r_soft, width, n_eval, False
    return c, V_min, r_soft, width, n_eval, True


def _radius(d, g, w, wg, wb, rule, lapse, separable, r_soft) -> tuple[float, float]:
    """R0 of the chosen sphere around a centre at distances ``d``, and the margin in RED (0 if not separable)."""
    if separable:
        dg, db = float(d[g].max()), float(d[~g].min())
        # classic: the smallest radius; margin: the R0 that balances the weighted margins of the nearest liquids
        r0 = dg if rule == "classic" else _balance_r0(d, g, w)
        return float(r0), (db - dg) / (db + dg)  # in RED: nearest liquids at 1 -/+ margin (unweighted)
    if rule == "classic":
        # the lowest R0 of the optimal flat interval of the desirability
        return float(_best_r0(d[None], wg, wb, lapse)[1][0]), 0.0
    return float(r_soft), 0.0


def _wrong_side(X, g, w, names, redv) -> list[WrongSide]:
    """Liquids the sphere does not explain, farthest from the surface first."""
    tol = 1e-6
    wrong = []
    for i in np.argsort(-np.abs(redv - 1.0)):
        if (g[i] and redv[i] > 1 + tol) or (not g[i] and redv[i] < 1 - tol):
            wrong.append(WrongSide(names[i], bool(g[i]), float(redv[i]), float(w[i]), *map(float, X[i])))
    return wrong


def _openness(Xs, g, c) -> tuple[bool, tuple | None, str]:
    """Whether the good liquids surround the centre; the open direction (dD, dP, dH) and the note in words."""
    is_open, u = _open_check(Xs, g, c)
    if not is_open:
        return False, None, "the good liquids surround the centre"
    vec = u / SCALE
    vec = vec / np.linalg.norm(vec)
    note = ("open sphere: no good liquid lies on the side of " + _describe_direction(vec)
            + " from the centre; test liquids there to close it")
    return True, tuple(float(x) for x in vec), note


def _intervals(Xs, g, w, c, r0, V_best, V, lo, hi, lapse, level, interval, messages) -> dict:
    """Profile intervals of dD, dP, dH and R0 at ``level`` (or none when ``interval`` is False)."""
    iv = {"level": float(level), "method": "profile"}
    if not interval:
        for key in ("dD", "dP", "dH", "r0"):
            iv[key] = (None, None)
        iv["method"] = "none"
        return iv
    from statistics import NormalDist

    # region of spheres whose (floored) desirability is within the level of the best; the
    # chi-square quantile of one degree of freedom is the square of the normal quantile at
    # (1 + level) / 2 (closed form; scipy.stats's chi2.ppf agrees within 3e-14 relative)
    chi2_1 = NormalDist().inv_cdf(0.5 + 0.5 * level) ** 2
    budget = max(V_best + chi2_1 / 2.0, V)
    ranges, ok = _profile_interval(Xs, g, w, c, r0, budget, lo, hi, lapse)
    for k, key in enumerate(("dD", "dP", "dH")):
        iv[key] = (round(ranges[k][0] / SCALE[k], 4), round(ranges[k][1] / SCALE[k], 4))
    iv["r0"] = (round(ranges[3][0], 4), round(ranges[3][1], 4))
    if not ok:
        messages.append("some interval searches did not converge; those ends are kept at the estimate")
    return iv


def _balance_r0(d, g, w) -> float:
    """R0 maximising min(min_good (R - d)/w, min_bad (d - R)/w) for fixed distances.

    Both terms are linear in R, so the optimum is where the tightest good and
    the tightest bad liquid cross; found exactly over all pairs.
    """
    dg, wg_ = d[g], w[g]
    db, wb_ = d[~g], w[~g]
    # candidate R for each (good i, bad j): (R - dg_i)/wg_i = (db_j - R)/wb_j
    R = (dg[:, None] * wb_[None, :] + db[None, :] * wg_[:, None]) / (wg_[:, None] + wb_[None, :])
    R = R.ravel()
    m = np.minimum(((R[:, None] - dg[None, :]) / wg_[None, :]).min(axis=1),
                   ((db[None, :] - R[:, None]) / wb_[None, :]).min(axis=1))
    return float(R[np.argmax(m)])


# --------------------------------------------------------------------------
# next tests


def suggest_tests(fit: SphereFit, hsp, names, k: int = 5, exclude=()) -> list[SuggestedTest]:
    """Untested liquids whose result would most narrow the sphere (a heuristic).

    Heuristic, not an optimal design: liquids whose RED under the current fit
    is nearest 1 decide the surface, so they are ranked by ``|RED - 1|``;
    to spread them over directions, each pick after the first adds a penalty
    ``0.5 max cos(angle)`` to the candidates pointing the same way from the
    centre as a liquid already picked, and liquids lying where the sphere is
    open get a bonus of 0.25.

    Parameters
    ----------
    fit : SphereFit
    hsp : array_like, shape (m, 3)
        dD, dP, dH of the candidate liquids [MPa^0.5]
    names : sequence of str
        their names; names already tested in ``fit`` (and ``exclude``) are skipped
    k : int
        how many to propose [-]
    """
    X = as_hsp(hsp, "hsp")
    if X.ndim != 2 or len(names) != len(X):
        raise InputError("expected one name per row of dD, dP, dH", param="names")
    if k < 1:
        raise InputError(f"expected a positive number of liquids, got {k}", param="k", value=k)
    tested = {n.strip().lower() for n in fit.names} | {n.strip().lower() for n in exclude}
    keep = [i for i, n in enumerate(names) if str(n).strip().lower() not in tested]
    if not keep:
        return []
    X = X[keep]
    nm = [names[i] for i in keep]
    d = ra(X, fit.hsp)
    redv = d / fit.r0
    u = scaled(X) - scaled(fit.hsp)
    norm = np.linalg.norm(u, axis=1)
    u = u / np.where(norm > 0, norm, 1.0)[:, None]
    cost = np.abs(redv - 1.0)
    toward_open = np.zeros(len(X))
    if fit.open and fit.open_direction is not None:
        od = np.asarray(fit.open_direction) * SCALE
        od = od / np.linalg.norm(od)
        toward_open = np.clip(u @ od, 0.0, None)
        cost = cost - 0.25 * toward_open
    picked: list[int] = []
    out = []
    for _ in range(min(k, len(nm))):
        c = cost.copy()
        if picked:
            c = c + 0.5 * np.clip(u @ u[picked].T, 0.0, None).max(axis=1)
        c[picked] = np.inf
        j = int(np.argmin(c))
        picked.append(j)
        vec = u[j] / SCALE
        vec = vec / (np.linalg.norm(vec) or 1.0)
        if abs(redv[j] - 1.0) <= 0.15:
            where = "near the surface"
        elif toward_open[j] > 0.5:
            where = "on the open side"
        else:
            where = "a direction not yet covered"
        why = f"RED {redv[j]:.2f}: {where}, toward " + _describe_direction(vec)
        out.append(SuggestedTest(str(nm[j]), float(redv[j]), *map(float, X[j]), tuple(float(x) for x in vec), why))
    return out


# --------------------------------------------------------------------------
# two populations


@dataclass(frozen=True)
class TwoSphereFit:
    """Two spheres whose union explains the results (a solute of two populations).

    A liquid is predicted good when it lies inside either sphere.  ``fit`` is
    Hansen's desirability of the union (a good liquid outside both scores by
    its distance to the nearer surface; a bad liquid by its depth in each
    sphere it is inside); ``one_sphere_fit`` is that of the single sphere, for
    comparison.
    """

    spheres: tuple
    members: tuple  # per liquid: 0 or 1, the sphere a good liquid belongs to; -1 for bad
    fit: float
    one_sphere_fit: float
    wrong_side: tuple
    message: str

    def to_dict(self) -> dict:
        return {
            "spheres": [{"dD": f.dD, "dP": f.dP, "dH": f.dH, "r0": f.r0,
                         "good": [n for n, m in zip(f.names, self.members) if m == i]}
                        for i, f in enumerate(self.spheres)],
            "fit": self.fit,
            "one_sphere_fit": self.one_sphere_fit,
            "wrong_side": [w.to_dict() for w in self.wrong_side],
            "message": self.message,
        }


def _union_violations(X, g, spheres):
    d = np.stack([ra(X, f.hsp) for f in spheres])  # (2, n)
    r = np.array([f.r0 for f in spheres])[:, None]
    out_good = np.maximum(d - r, 0.0).min(axis=0)
    in_bad = np.maximum(r - d, 0.0).sum(axis=0)
    return np.where(g, out_good, in_bad), d / r


def fit_two_spheres(hsp, good, weights=None, *, names=None, n_starts: int = 6, seed: int = 0,
                    max_rounds: int = 12, **kw) -> TwoSphereFit:
    """Fit two spheres when the good liquids form two groups (a heuristic search).

    Alternates two steps from several splits of the good liquids: fit each
    sphere (:func:`fit_sphere`) to its good liquids and all the bad ones, then
    move each good liquid to the sphere in which its RED is lower; keeps the
    split with the best desirability of the union.  Each group needs at least
    2 good liquids.  Worth it only when the union explains clearly more than
    one sphere (compare ``fit`` with ``one_sphere_fit``).

    Parameters
    ----------
    hsp, good, weights, names
        as for :func:`fit_sphere` (``good`` boolean here) [MPa^0.5, -]
    n_starts : int
        splits tried: a split by the farthest pair of good liquids, then random
        pairs of seeds [-]
    **kw
        passed to :func:`fit_sphere` (``rule``, ``lapse``, ``bounds``)
    """
    X, g, w, names = _prepare(hsp, np.asarray(good, dtype=bool), weights, names, None, None)
    gi = np.flatnonzero(g)
    if len(gi) < 4:
        raise InputError(f"two spheres need at least 4 good liquids (2 a sphere), got {len(gi)}", param="good")
    kw = dict(kw)
    kw["interval"] = False
    one = fit_sphere(X, g, w, names=names, **kw)
    Xs = scaled(X)
    rng = np.random.default_rng(seed)
    D = np.linalg.norm(Xs[gi][:, None] - Xs[gi][None], axis=2)
    seeds = [np.unravel_index(np.argmax(D), D.shape)]
    for _ in range(n_starts - 1):
        seeds.append(tuple(rng.choice(len(gi), size=2, replace=False)))
    best = None
    for a, b in seeds:
        member = np.where(D[:, a] <= D[:, b], 0, 1)
        for _ in range(max_rounds):
            if min(np.sum(member == 0), np.sum(member == 1)) < 2:
                break
            fits = []
            for k in (0, 1):
                mask = ~g.copy()
                mask[gi[member == k]] = True
                sub = np.flatnonzero(mask)
                fits.append(fit_sphere(X[sub], g[sub], w[sub], names=[names[i] for i in sub], **kw))
            redk = np.stack([ra(X[gi], f.hsp) / f.r0 for f in fits])
            new = np.argmin(redk, axis=0)
            v, _ = _union_violations(X, g, fits)
            score = float(np.sum(w * v))
            if best is None or score < best[0] - 1e-12:
                best = (score, fits, member.copy())
            if np.array_equal(new, member):
                break
            member = new
    if best is None:
        raise InputError("no split of the good liquids into two groups of at least 2 could be fitted", param="good")
    score, fits, member = best
    v, redu = _union_violations(X, g, fits)
    members = np.full(len(X), -1)
    members[gi] = member
    wrong = []
    for i in np.argsort(-v):
        if v[i] > 1e-6:
            wrong.append(WrongSide(names[i], bool(g[i]), float(redu[:, i].min()), float(w[i]), *map(float, X[i])))
    fit = float(np.exp(-score / np.sum(w)))
    msg = ("the two spheres explain the results better than one" if fit > one.fit + 1e-9
           else "two spheres explain no more than one: keep the single sphere")
    full = tuple(
        SphereFit(**{**f.__dict__, "names": names, "good": tuple(bool(x) for x in g),
                     "weights": tuple(float(x) for x in w),
                     "red": tuple(float(x) for x in ra(X, f.hsp) / f.r0)})
        for f in fits
    )
    return TwoSphereFit(full, tuple(int(m) for m in members), fit, one.fit, tuple(wrong), msg)


# --------------------------------------------------------------------------
# bench files (the edge: a user's CSV in, a solute row out)

@dataclass(frozen=True)
class BenchRow:
    """One liquid of a bench file with its HSP (a blend's by volume-fraction average).

    ``weight`` includes the weight of a partial result; the other fields are
    those of :class:`solvsel.data.bench.BenchEntry`.
    """

    row: int
    label: str
    key: str
    dD: float
    dP: float
    dH: float
    result: str
    score: float | None
    weight: float
    basis: str


@dataclass(frozen=True)
class BenchData:
    """The rows of a bench file, ready for :func:`fit_sphere`."""

    path: str
    rows: tuple
    scale: str  # "words" or "numbers"

    @property
    def hsp(self) -> np.ndarray:
        return np.array([[r.dD, r.dP, r.dH] for r in self.rows])

    @property
    def names(self) -> list[str]:
        return [r.label for r in self.rows]

    def good(self, partial: str = "good") -> np.ndarray:
        """The good/bad result of each row of a words file, a partial one counted as ``partial`` says."""
        return np.array([r.result == "good" or (r.result == "partial" and partial == "good") for r in self.rows])


def bench_liquids(bench, partial: str = "good", partial_weight: float = 0.5) -> BenchData:
    """The liquids of a bench file (:func:`solvsel.data.bench.read_bench`) with their HSP.

    A blend's HSP are the volume-fraction average of its liquids' (Hansen 2007,
    ch. 1); a partial result's weight is multiplied by ``partial_weight``.

    Parameters
    ----------
    bench : BenchFile
        the rows read from the file
    partial : {"good", "bad"}
        how a partial result counts (kept for the fit: see :func:`fit_bench`)
    partial_weight : float
        weight of a partial result, > 0 [-]
    """
    from .hansen import mix

    if partial not in ("good", "bad"):
        raise InputError(f"expected good or bad, got '{partial}'", param="partial", value=partial,
                         expected="good or bad")
    if not (partial_weight > 0 and math.isfinite(partial_weight)):
        raise InputError(f"expected a positive number, got {partial_weight}", param="partial_weight",
                         value=partial_weight, expected="a positive number")
    rows = []
    for e in bench.entries:
        if e.blend:
            hsp = mix(np.array([r.hsp for r, _ in e.blend]), np.array([f for _, f in e.blend]))
        else:
            hsp = e.hsp
        weight = e.weight * partial_weight if e.result == "partial" else e.weight
        rows.append(BenchRow(e.row, e.label, e.key, *map(float, hsp), e.result, e.score, weight, e.basis))
    return BenchData(bench.path, tuple(rows), bench.scale)


def fit_bench(data: BenchData, *, partial: str = "good", good_at_most=None, good_at_least=None, **kw) -> SphereFit:
    """Fit a sphere to a :class:`BenchData` (see :func:`fit_sphere` for ``kw``).

    Words are good or bad (a partial result as ``partial`` says); numbers need
    exactly one cut-off, ``good_at_most`` or ``good_at_least``.  An error about
    the set of results (too few liquids, all good, all bad) names the file
    (``param="path"``).
    """
    w = np.array([r.weight for r in data.rows])
    if data.scale == "words":
        if good_at_most is not None or good_at_least is not None:
            raise InputError("a score cut-off applies to numeric scores; this file has good/partial/bad",
                             param="good_at_most" if good_at_most is not None else "good_at_least",
                             value=good_at_most if good_at_most is not None else good_at_least,
                             expected="no cut-off for good/partial/bad results")
        return _fit_file(data, data.good(partial), w, **kw)
    if good_at_most is None and good_at_least is None:
        raise InputError(
            f"the results in {data.path} are numbers; say where good ends: good at most N (low is best, "
            "e.g. 1-6) or good at least N (high is best)", param="good_at_most",
            expected="the score at which good ends")
    scores = np.array([r.score for r in data.rows])
    return _fit_file(data, scores, w, good_at_most=good_at_most, good_at_least=good_at_least, **kw)


#: Inputs of :func:`fit_sphere` that a bench file supplies: an error about them is an error of the file.
_FILE_PARAMS = ("hsp", "good", "weights", "names")


def _fit_file(data: BenchData, good, w, **kw) -> SphereFit:
    with _errors_of_the_file(data):
        return fit_sphere(data.hsp, good, w, names=data.names, **kw)


@contextmanager
def _errors_of_the_file(data: BenchData):
    """Re-raise an error about the liquids or results as one of the bench file (``param="path"``)."""
    try:
        yield
    except InputError as exc:
        if exc.param not in _FILE_PARAMS:
            raise
        raise InputError(exc.message, param="path", value=data.path, path=data.path) from None


def fit_bench_two_spheres(data: BenchData, *, partial: str = "good", **kw) -> TwoSphereFit:
    """Two spheres whose union explains a words file (:func:`fit_two_spheres`; ``kw``: rule, lapse)."""
    if data.scale != "words":
        raise InputError("two spheres take good/partial/bad results, not numeric scores", param="two_spheres",
                         value=True, expected="a file of good/partial/bad results")
    with _errors_of_the_file(data):
        return fit_two_spheres(data.hsp, data.good(partial), np.array([r.weight for r in data.rows]),
                               names=data.names, **kw)


def solute_row(fit: SphereFit, name: str, source: str, category: str = "other") -> dict:
    """A row of the solutes table (its column names) holding a fitted sphere."""
    iv = fit.interval
    method = (f"bench fit ({fit.rule} rule) of {fit.n_liquids} liquids, {fit.n_good} good, "
              f"desirability {fit.fit:.3f}")
    if iv.get("method") == "profile":
        method += "; {:.0f} % profile interval dD {:.1f}-{:.1f}, dP {:.1f}-{:.1f}, dH {:.1f}-{:.1f}, R0 {:.1f}-{:.1f}".format(
            100 * iv["level"], *iv["dD"], *iv["dP"], *iv["dH"], *iv["r0"])
    note = fit.open_note if fit.open else ""
    if fit.wrong_side:
        note = (note + "; " if note else "") + "wrong side: " + ", ".join(f"{w.name} (RED {w.red:.2f})" for w in fit.wrong_side)
    return {
        "name": name, "synonyms": "", "cas": "", "category": category,
        "dD_MPa05": f"{fit.dD:.2f}", "dP_MPa05": f"{fit.dP:.2f}", "dH_MPa05": f"{fit.dH:.2f}",
        "r0_MPa05": f"{fit.r0:.2f}", "hsp_basis": "fitted", "hsp_method": method,
        "hsp_source": source, "mw_g_mol": "", "mp_C": "", "dHfus_kJ_mol": "", "vm_cm3_mol": "",
        "smiles": "", "props_source": source, "note": note,
    }


def save_solute(row: dict, path, tables_dir=None) -> str:
    """Append ``row`` to the user's solutes CSV at ``path`` (created if missing).

    The user's other rows are kept byte for byte: the new file is written
    beside the old one, validated as a solutes table, and only then moved in
    place.  A name already in the file is refused.  Returns "created" or
    "appended".
    """
    import csv
    import io
    import os
    import tempfile
    from pathlib import Path

    from ..data.catalog import TABLES_DIR, normalize_name, read_table, spreadsheet_safe
    from ..errors import TableError

    cells = {k: spreadsheet_safe(v) for k, v in row.items()}  # a name like =1+1 stays text in a spreadsheet
    tdir = Path(tables_dir) if tables_dir is not None else TABLES_DIR
    p = Path(path)
    if p.exists() and not p.is_file():
        raise InputError(f"{p} is not a file", param="into", value=str(p))
    if p.exists():
        old = p.read_bytes()
        try:
            text = old.decode("utf-8-sig")
        except UnicodeDecodeError:
            raise TableError(p, "not a UTF-8 text file; nothing was written", param="into") from None
        lines = text.splitlines()
        if not lines:
            raise TableError(p, "the file is empty (no header); delete it or save into another file; "
                             "nothing was written", param="into")
        header = next(csv.reader([lines[0]]))
        # the sphere itself must fit; descriptive columns are written where the file has them
        essential = ("name", "category", "dD_MPa05", "dP_MPa05", "dH_MPa05", "r0_MPa05", "hsp_basis")
        missing = [c for c in essential if c not in header]
        if missing:
            raise TableError(p, f"the file has no column {missing[0]!r} for the fitted sphere; nothing was written",
                             row=1, param="into")
        for i, rec in enumerate(csv.DictReader(io.StringIO(text)), start=2):
            if normalize_name(rec.get("name") or "") == normalize_name(row["name"]):
                raise InputError(f"{p} already has a solute of that name, {row['name']!r} (row {i}); "
                                 "choose another name; nothing was written", param="save_as", value=row["name"])
        buf = io.StringIO()
        csv.DictWriter(buf, fieldnames=header, lineterminator="\n", extrasaction="ignore").writerow(cells)
        sep = b"" if old.endswith(b"\n") or not old else b"\n"
        new = old + sep + buf.getvalue().encode("utf-8")
        what = "appended"
    else:
        from ..data.catalog import _load_schema

        header = [s.column for s in _load_schema(tdir)["solutes"]]
        buf = io.StringIO()
        w = csv.DictWriter(buf, fieldnames=header, lineterminator="\n", extrasaction="ignore")
        w.writeheader()
        w.writerow(cells)
        new = buf.getvalue().encode("utf-8")
        what = "created"
    parent = p.resolve().parent
    if not parent.is_dir():
        raise InputError(f"the folder {parent} does not exist", param="into", value=str(p))
    fd, tmp = tempfile.mkstemp(prefix=".solvsel-", suffix=".csv", dir=parent)
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(new)
        try:
            read_table(tmp, "solutes", tables_dir=tdir, user=True)
        except TableError as exc:
            raise TableError(p, f"the file would not be a valid solutes table ({exc.message}); nothing was written",
                             row=exc.row, column=exc.column, param="into") from None
        if p.exists():
            os.chmod(tmp, p.stat().st_mode & 0o777)
        else:
            mask = os.umask(0)
            os.umask(mask)
            os.chmod(tmp, 0o666 & ~mask)
        os.replace(tmp, p)
    finally:
        if os.path.exists(tmp):
            os.unlink(tmp)
    return what


# --------------------------------------------------------------------------
# graded results: the scores themselves, not only good/bad


@dataclass(frozen=True)
class GradedFit:
    r"""A sphere fitted to graded results (a score or a measured solubility per liquid).

    The scores get worse with the squared Hansen distance from the centre, as the regular-solution
    term of the activity coefficient does (:math:`\ln\gamma_2 \propto V_2 R_a^2/4RT`, Hansen 2007,
    ch. 2): ``score = intercept + slope * Ra^2`` with the slope's sign fixed by the scale (negative
    where high is best), fitted by least squares over the centre (the intercept and slope are exact
    for each centre).  The radius is where the fitted score crosses the boundary of good results.
    Scores, intercept, slope and boundary are in the user's units.

    Attributes
    ----------
    dD, dP, dH : float
        centre [MPa^0.5]
    r0 : float or None
        radius where the fitted score equals ``cut`` [MPa^0.5]; None when no liquid reaches the cut
    intercept : float
        fitted score at the centre [score units]
    slope : float
        change of the score per unit of Ra^2 [score units / MPa]
    cut : float
        the score at the boundary between good and bad results [score units]
    higher_is_better : bool
        the orientation of the scale
    residual_sd : float
        root mean square of the residuals [score units]
    r2 : float
        fraction of the scores' variance explained [-]
    n : int
        liquids
    at_bound : tuple of str
        parameters whose value ended on a search bound (the data push the centre there)
    prior : dict or None
        the structure estimate offered as a prior and whether the data agree with it: ``dD``, ``dP``,
        ``dH``, ``sd`` (per parameter, MPa^0.5), ``ra_to_fit`` (MPa^0.5), ``lr`` (likelihood-ratio
        statistic of the centre at the prior against the free fit, chi-square with 3 degrees of
        freedom), ``p_value`` and ``agree`` (p >= 0.05)
    free : tuple
        centre of the fit without the prior (dD, dP, dH) [MPa^0.5]
    message : str
    """

    dD: float
    dP: float
    dH: float
    r0: float | None
    intercept: float
    slope: float
    cut: float
    higher_is_better: bool
    residual_sd: float
    r2: float
    n: int
    at_bound: tuple
    prior: dict | None
    free: tuple
    message: str

    @property
    def hsp(self) -> np.ndarray:
        return np.array([self.dD, self.dP, self.dH])

    def predict(self, hsp) -> np.ndarray:
        """Fitted score of liquids at ``hsp`` (n, 3) [score units]."""
        return self.intercept + self.slope * ra(as_hsp(hsp), self.hsp) ** 2

    def good(self, hsp) -> np.ndarray:
        """Whether the fitted score of liquids at ``hsp`` (n, 3) is on the good side of the boundary."""
        p = self.predict(hsp)
        return p >= self.cut if self.higher_is_better else p <= self.cut

    def to_dict(self) -> dict:
        return {
            "dD": self.dD, "dP": self.dP, "dH": self.dH, "r0": self.r0, "intercept": self.intercept,
            "slope": self.slope, "cut": self.cut, "higher_is_better": self.higher_is_better, "residual_sd": self.residual_sd, "r2": self.r2, "n": self.n,
            "at_bound": list(self.at_bound), "prior": None if self.prior is None else dict(self.prior),
            "free": list(self.free), "message": self.message,
        }


def _chi2_3_sf(x: float) -> float:
    """Upper tail of the chi-square distribution with 3 degrees of freedom (closed form)."""
    if x <= 0:
        return 1.0
    return float(math.erfc(math.sqrt(x / 2.0)) + math.sqrt(2.0 * x / math.pi) * math.exp(-x / 2.0))


def _graded_sse(Cs, Xs, y):
    """Least-squares fit of ``y = a - b |x - c|^2`` (b >= 0) for each scaled centre in ``Cs`` (m, 3):
    returns (sse, a, b), each (m,)."""
    z = np.einsum("mnk,mnk->mn", Cs[:, None, :] - Xs[None], Cs[:, None, :] - Xs[None])
    zc = z - z.mean(axis=1, keepdims=True)
    yc = y - y.mean()
    var = np.einsum("mn,mn->m", zc, zc)
    b = np.maximum(-(zc @ yc) / np.maximum(var, 1e-12), 0.0)
    a = y.mean() + b * z.mean(axis=1)
    res = y[None] - a[:, None] + b[:, None] * z
    return np.einsum("mn,mn->m", res, res), a, b


def _graded_centre(Xs, y, lo, hi, penalty):
    """The scaled centre minimising sse + penalty(c): a grid over the bounds, then Nelder-Mead."""
    from scipy.optimize import minimize

    axes = [np.linspace(lo[k], hi[k], n) for k, n in enumerate((9, 11, 13))]
    grid = np.stack(np.meshgrid(*axes, indexing="ij"), -1).reshape(-1, 3)
    J = _graded_sse(grid, Xs, y)[0] + penalty(grid)
    best = None
    for i in np.argsort(J)[:2]:
        res = minimize(lambda c: float(_graded_sse(np.clip(c, lo, hi)[None], Xs, y)[0][0]
                                       + penalty(np.clip(c, lo, hi)[None])[0]),
                       grid[i], method="Nelder-Mead",
                       options={"xatol": 1e-4, "fatol": 1e-10, "maxfev": 3000,
                                "initial_simplex": grid[i] + 0.8 * np.vstack([np.zeros(3), np.eye(3)])})
        if best is None or res.fun < best.fun:
            best = res
    return np.clip(best.x, lo, hi)


def fit_graded(hsp, scores, *, cut: float, higher_is_better: bool = True, prior=None, prior_sd=None,
               bounds=None) -> GradedFit:
    r"""Fit a sphere to graded results: ``score = intercept - slope * Ra^2`` (see :class:`GradedFit`).

    Parameters
    ----------
    hsp : array_like, shape (n, 3)
        dD, dP, dH of the liquids [MPa^0.5]
    scores : array_like, shape (n,)
        one score per liquid: a measured solubility (log10 of the mole fraction, say) or a bench score
    cut : float
        the score at the boundary between good and bad (the radius is where the fitted score crosses
        it; :func:`score_boundary` gives it for a scale's cut-off)
    higher_is_better : bool
        False for scales where low is best (1 dissolved .. 6 no effect): the scores are negated
    prior : array_like (3,), optional
        a centre expected beforehand, e.g. the structure estimate [MPa^0.5]
    prior_sd : array_like (3,), optional
        its uncertainty per parameter [MPa^0.5] (default 1.5, 3, 3); the prior adds
        ``s^2 sum((c - prior)/sd)^2`` to the sum of squares, ``s^2`` the residual variance of the
        free fit (a Gaussian prior on the centre, maximum a posteriori)
    bounds : ((lo, hi), (lo, hi), (lo, hi)), optional
        search bounds of dD, dP, dH [MPa^0.5], default :data:`DEFAULT_BOUNDS`

    Examples
    --------
    Twelve liquids of Hansen's Appendix A [1]_ scored by a made-up law
    ``score = 3 - 0.02 Ra^2`` around (17, 8, 10): the centre is found again.

    >>> liquids = np.array([(14.9, 0.0, 0.0), (18.0, 1.4, 2.0), (15.5, 10.4, 7.0), (15.8, 8.8, 19.4),
    ...     (15.5, 16.0, 42.3), (15.8, 5.3, 7.2), (14.7, 12.3, 22.3), (16.0, 9.0, 5.1),
    ...     (17.0, 7.3, 7.1), (16.0, 5.7, 15.8), (16.8, 5.7, 8.0), (15.3, 18.0, 6.1)])
    >>> s = 3.0 - 0.02 * ra(liquids, [17.0, 8.0, 10.0]) ** 2
    >>> g = fit_graded(liquids, s, cut=2.0)
    >>> [round(v, 2) for v in (g.dD, g.dP, g.dH, g.r0)]
    [17.0, 8.0, 10.0, 7.07]
    """
    X = as_hsp(hsp, "hsp")
    y = np.asarray(scores, dtype=float)
    if X.ndim != 2 or y.shape != (len(X),) or not np.all(np.isfinite(y)):
        raise InputError("expected one finite score per liquid", param="scores")
    if len(y) < _MIN_LIQUIDS + 1:
        raise InputError(f"only {len(y)} liquids: a graded fit has 5 unknowns, test at least {_MIN_LIQUIDS + 1}",
                         param="hsp", expected=f"at least {_MIN_LIQUIDS + 1} liquids")
    if np.ptp(y) == 0:
        raise InputError("every liquid has the same score: nothing locates the sphere", param="scores")
    sign = 1.0 if higher_is_better else -1.0
    y, cut = sign * y, sign * float(cut)
    b = _check_bounds(bounds)
    lo, hi = b[:, 0] * SCALE, b[:, 1] * SCALE
    Xs = scaled(X)
    free = _graded_centre(Xs, y, lo, hi, lambda C: np.zeros(len(C)))
    sse_free = float(_graded_sse(free[None], Xs, y)[0][0])
    c, prior_info = free, None
    if prior is not None:
        c, prior_info = _with_prior(Xs, y, lo, hi, free, sse_free, prior, prior_sd)
    sse, a, slope = (float(v[0]) for v in _graded_sse(c[None], Xs, y))
    centre = c / SCALE
    at_bound = tuple(_AXES[k] for k in range(3) if min(abs(centre[k] - b[k, 0]), abs(centre[k] - b[k, 1])) < 1e-3)
    r0 = math.sqrt((a - cut) / slope) if slope > 0 and a > cut else None
    msgs = []
    if at_bound:
        msgs.append("centre on the search bound of " + ", ".join(at_bound)
                    + ": the scores keep rising that way, the data do not bound the centre there")
    if slope == 0:
        msgs.append("the scores do not worsen with distance from any centre: no sphere describes them")
    if prior_info is not None:
        free_bound = [_AXES[k] for k in range(3) if min(abs(free[k] - lo[k]), abs(free[k] - hi[k])) < 1e-3 * SCALE[k]]
        msgs.append(("the results agree with the structure estimate" if prior_info["agree"] else
                     "the results disagree with the structure estimate") + f" (p = {prior_info['p_value']:.2g})"
                    + (f"; without it the centre runs to the search bound of {', '.join(free_bound)}" if free_bound else ""))
    return GradedFit(
        float(centre[0]), float(centre[1]), float(centre[2]), r0, sign * a, -sign * slope, sign * cut,
        higher_is_better, math.sqrt(sse / len(y)),
        1.0 - sse / float(np.sum((y - y.mean()) ** 2)), len(y), at_bound, prior_info,
        tuple(float(v) for v in free / SCALE), "; ".join(msgs) or "graded fit")


def _with_prior(Xs, y, lo, hi, free, sse_free, prior, prior_sd):
    """The centre with the prior, and what the data say of the prior (likelihood ratio, 3 degrees of freedom)."""
    p = as_hsp(prior, "prior")
    sd = np.array([1.5, 3.0, 3.0]) if prior_sd is None else np.asarray(prior_sd, dtype=float)
    if sd.shape != (3,) or np.any(~(sd > 0)):
        raise InputError("expected three positive numbers (dD, dP, dH) [MPa^0.5]", param="prior_sd")
    n = len(y)
    s2 = sse_free / max(n - 5, 1)
    ps, sds = p * SCALE, sd * SCALE
    c = _graded_centre(Xs, y, lo, hi, lambda C: s2 * np.sum(((C - ps) / sds) ** 2, axis=1))
    sse_prior = float(_graded_sse(np.clip(ps, lo, hi)[None], Xs, y)[0][0])
    lr = n * math.log(max(sse_prior, 1e-300) / max(sse_free, 1e-300))
    pv = _chi2_3_sf(lr)
    info = {"dD": float(p[0]), "dP": float(p[1]), "dH": float(p[2]), "sd": [float(v) for v in sd],
            "ra_to_fit": float(ra(p, free / SCALE)), "lr": lr, "p_value": pv, "agree": bool(pv >= 0.05)}
    return c, info

"""Tests of the blend optimiser (solvsel.blends) and of ``solvsel blend``.

Outside references used here:
- scipy.optimize SLSQP, a general constrained optimiser, on the same problems
  (optimality of the exact face enumeration);
- HSP of liquids from the ``chemicals`` library dataset MANUEL_RUBEN_2022
  (Diaz de los Rios & Murcia Belmonte, SN Appl. Sci. 4, 185, 2022);
- Hansen, Hansen Solubility Parameters: A User's Handbook, 2nd ed. (2007) for the
  blend rule (volume-fraction average) and the two-non-solvent effect.
"""

from __future__ import annotations

import itertools

import numpy as np
import pytest

from solvsel.blends import (
    best_fractions,
    combinations_array,
    kkt_violation,
    pareto_front,
    search_blends,
)
from solvsel.errors import InputError
from solvsel.hansen import ra

SLSQP_STARTS = 6


def _random_hsp(rng, n):
    # ranges of food and bench liquids: hexane (14.9, 0, 0) to water (15.5, 16, 42.3)
    return np.column_stack([rng.uniform(14, 20, n), rng.uniform(0, 20, n), rng.uniform(0, 42, n)])


def _slsqp_best(P, t, lo, hi, rng, starts=SLSQP_STARTS):
    """Best Ra over several SLSQP starts (a general optimiser, not ours); inf if none feasible."""
    from scipy.optimize import minimize

    P = np.asarray(P, float)
    k = len(P)
    S = P * [2.0, 1.0, 1.0]
    ts = np.asarray(t, float) * [2.0, 1.0, 1.0]

    def f(x):
        d = x @ S - ts
        return d @ d

    def jac(x):
        return 2 * S @ (x @ S - ts)

    best, best_x = np.inf, None
    for _ in range(starts):
        x0 = np.clip(rng.dirichlet(np.ones(k)), lo, hi)
        r = minimize(f, x0, jac=jac, method="SLSQP", bounds=list(zip(lo, hi)),
                     constraints=[{"type": "eq", "fun": lambda x: x.sum() - 1.0, "jac": lambda x: np.ones(k)}],
                     options={"ftol": 1e-15, "maxiter": 500})
        # judge SLSQP's point exactly on the simplex (its equality holds only to ~1e-10)
        x = np.clip(r.x, lo, hi)
        x = x / x.sum()
        if np.all(x >= lo - 1e-8) and np.all(x <= hi + 1e-8) and abs(x.sum() - 1) < 1e-8:
            v = float(np.sqrt(max(f(x), 0.0)))
            if v < best:
                best, best_x = v, x
    return best, best_x


# ---------------------------------------------------------------- numerical core

def test_matches_slsqp_on_random_problems():
    # Optimality check against a general constrained optimiser (scipy SLSQP,
    # several starts): same Ra within 1e-6 MPa^0.5 (the tolerance; both
    # solve a convex QP, SLSQP to ftol 1e-15 on Ra^2).
    rng = np.random.default_rng(20261201)
    for trial in range(160):
        k = int(rng.integers(1, 5))
        P = _random_hsp(rng, k)
        t = _random_hsp(rng, 1)[0]
        if trial % 2:
            lo = rng.choice([0.0, 0.05, 0.1], k)
            hi = rng.choice([1.0, 0.3, 0.6], k)
        else:
            lo, hi = np.zeros(k), np.ones(k)
        res = best_fractions(P, t, lo, hi)
        ref, _ = _slsqp_best(P, t, lo, hi, rng)
        if not res.feasible[0]:
            assert lo.sum() > 1 or hi.sum() < 1
            assert not np.isfinite(ref)
            continue
        x = res.fractions[0]
        assert abs(x.sum() - 1) < 1e-9
        assert np.all(x >= lo - 1e-12) and np.all(x <= hi + 1e-12)
        # SLSQP may sit ~1e-8 outside a bound, so "ours not worse" holds to 1e-6 too
        assert abs(res.ra[0] - ref) < 1e-6, (trial, res.ra[0], ref)
        # Ra of the reported blend is the Hansen distance of the reported HSP
        assert float(ra(res.hsp[0], t)) == pytest.approx(res.ra[0], abs=1e-12)


def test_whole_search_matches_slsqp_over_same_combinations():
    # Best blend of up to 3 liquids from a pool of 8 (92 combinations): the
    # search's optimum equals the best SLSQP optimum over the same combinations.
    rng = np.random.default_rng(7)
    pool = _random_hsp(rng, 8)
    t = np.array([17.0, 6.0, 10.0])
    best_ours = np.inf
    best_ref = np.inf
    for k, combos, res in search_blends(pool, t, max_components=3):
        best_ours = min(best_ours, float(res.ra.min()))
        for c, r in zip(combos, res.ra):
            ref, _ = _slsqp_best(pool[c], t, np.zeros(k), np.ones(k), rng, starts=3)
            assert abs(r - ref) < 1e-6
            best_ref = min(best_ref, ref)
    assert abs(best_ours - best_ref) < 1e-6


def test_kkt_conditions_hold_at_the_optimum():
    # First-order optimality (Nocedal & Wright 2006, ch. 16) of every returned
    # blend, with and without binding bounds: violation ~ round-off only.
    rng = np.random.default_rng(3)
    for k in (2, 3, 4):
        P = _random_hsp(rng, 400 * k).reshape(400, k, 3)
        t = _random_hsp(rng, 1)[0]
        lo = np.full(k, 0.02)
        hi = np.full(k, 0.7)
        res = best_fractions(P, t, lo, hi)
        assert res.feasible.all()
        v = kkt_violation(P, t, res.fractions, lo, hi)
        assert v.max() < 1e-6


def test_round_trip_library_liquids():
    # A target made as 55/30/15 (by volume) ethanol/water/propylene glycol, HSP
    # from chemicals' MANUEL_RUBEN_2022, blended by the volume-fraction rule of
    # Hansen (2007): the search over a pool of 8 liquids finds that triple again
    # with its fractions within 0.01 (the tolerance).
    from chemicals.solubility import hansen_delta_d, hansen_delta_h, hansen_delta_p

    cas = {
        "ethanol": "64-17-5", "water": "7732-18-5", "propylene glycol": "57-55-6",
        "diethyl ether": "60-29-7", "triacetin": "102-76-1", "ethyl acetate": "141-78-6",
        "acetone": "67-64-1", "n-hexane": "110-54-3",
    }
    names = list(cas)
    pool = np.array([[f(cas[n], method="MANUEL_RUBEN_2022") / 1000.0
                      for f in (hansen_delta_d, hansen_delta_p, hansen_delta_h)] for n in names])
    made = {"ethanol": 0.55, "water": 0.30, "propylene glycol": 0.15}
    t = sum(v * pool[names.index(n)] for n, v in made.items())
    best = None
    for k, combos, res in search_blends(pool, t, max_components=3):
        i = int(np.argmin(res.ra))
        if best is None or res.ra[i] < best[0] - 1e-9:
            best = (res.ra[i], combos[i], res.fractions[i])
    assert best[0] < 1e-6
    found = {names[j]: x for j, x in zip(best[1], best[2])}
    assert set(found) == set(made)
    for n, x in made.items():
        assert abs(found[n] - x) < 0.01


def test_two_non_solvents_make_a_solvent():
    # Nitrocellulose is insoluble in diethyl ether and in ethanol alone but
    # dissolves in their mixture (collodion; the two-non-solvent effect of
    # Hansen 2007, ch. 1). Nitrocellulose sphere (15.4, 14.7, 8.8), R0 = 11.5:
    # from memory of the handbook's polymer table. Liquids: MANUEL_RUBEN_2022.
    nc, r0 = np.array([15.4, 14.7, 8.8]), 11.5
    ether, ethanol = np.array([14.5, 2.9, 4.6]), np.array([15.8, 8.8, 19.4])
    assert ra(ether, nc) / r0 > 1 and ra(ethanol, nc) / r0 > 1
    res = best_fractions([ether, ethanol], nc)
    assert res.ra[0] / r0 < 0.9
    x_ether = res.fractions[0, 0]
    assert 0.3 < x_ether < 0.7  # both liquids needed


def test_bounds_bind_and_required_liquids():
    # common practice: "ethanol at most 0.3 by volume, water at least 0.1"
    ethanol, water, pg = [15.8, 8.8, 19.4], [15.5, 16.0, 42.3], [16.8, 10.4, 21.3]
    t = [15.8, 8.8, 19.4]  # pure ethanol would be ideal
    res = best_fractions([ethanol, water, pg], t, lower=[0, 0.1, 0], upper=[0.3, 1, 1])
    x = res.fractions[0]
    assert x[0] == pytest.approx(0.3, abs=1e-12) and x[1] == pytest.approx(0.1, abs=1e-12)
    assert x[2] == pytest.approx(0.6, abs=1e-12)
    # bounds that cannot sum to 1 are infeasible, not an error
    res = best_fractions([ethanol, water], t, upper=[0.3, 0.3])
    assert not res.feasible[0] and np.isinf(res.ra[0]) and np.isnan(res.fractions[0]).all()
    # a liquid with a positive lower bound is in every searched combination
    pool = np.array([ethanol, water, pg, [16.5, 4.5, 9.1]])
    for k, combos, _ in search_blends(pool, t, 3, lower=[0, 0.1, 0, 0]):
        assert np.all(np.any(combos == 1, axis=1))


def test_degenerate_faces_pick_fewest_components():
    # Three collinear liquids (B is the 50/50 blend of A and C) and a target on
    # the line: the optimum (Ra = 0) is not unique; the tie-break keeps the
    # lowest face, here the single liquid B.
    A, C = np.array([15.0, 2.0, 4.0]), np.array([17.0, 10.0, 20.0])
    B = 0.5 * (A + C)
    res = best_fractions([A, B, C], B)
    assert res.ra[0] < 1e-12
    assert res.fractions[0].tolist() == [0.0, 1.0, 0.0]
    assert res.n_free[0] == 1
    # the same liquid twice is a degenerate face too
    res = best_fractions([A, A, C], 0.25 * A + 0.75 * C)
    assert res.ra[0] < 1e-12 and np.count_nonzero(res.fractions[0]) == 2


def test_four_components_reach_inside_the_tetrahedron():
    # A target inside the hull of 4 liquids is matched exactly by its
    # barycentric coordinates (unique: 4 affinely independent points).
    P = np.array([[15.0, 0.0, 0.0], [18.0, 2.0, 3.0], [15.5, 16.0, 42.3], [16.0, 12.0, 5.0]])
    w = np.array([0.1, 0.4, 0.2, 0.3])
    res = best_fractions(P, w @ P)
    assert res.ra[0] < 1e-9
    np.testing.assert_allclose(res.fractions[0], w, atol=1e-9)


def test_combinations_array():
    for m, k in [(5, 1), (6, 3), (7, 4)]:
        c = combinations_array(m, k)
        assert c.tolist() == [list(t) for t in itertools.combinations(range(m), k)]
    assert combinations_array(3, 4).shape == (0, 4)
    assert combinations_array(6, 2, required=[1, 4]).tolist() == [[1, 4]]


def test_pareto_front_against_brute_force():
    rng = np.random.default_rng(11)
    F = rng.integers(0, 5, size=(60, 3)).astype(float)
    mask = pareto_front(F)
    for i in range(len(F)):
        dominated = any(np.all(F[j] <= F[i]) and np.any(F[j] < F[i]) for j in range(len(F)))
        assert mask[i] == (not dominated)


def test_bad_input_raises_input_error():
    with pytest.raises(InputError):
        best_fractions(np.zeros((1, 5, 3)) + 15, [15, 1, 1])
    with pytest.raises(InputError):
        best_fractions([[15, 1]], [15, 1, 1])
    with pytest.raises(InputError):
        best_fractions([[15, 1, 1], [16, 2, 2]], [15, 1, 1], lower=[0.5, 0.2], upper=[0.4, 1])
    with pytest.raises(InputError):
        list(search_blends([[15, 1, 1]], [15, 1, 1], max_components=5))

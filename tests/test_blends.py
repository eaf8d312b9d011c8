"""Tests of the blend optimiser (solvsel.science.blends), the ``blend`` job and ``solvsel blend``.

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

from solvsel.science.blends import (
    best_fractions,
    combinations_array,
    kkt_violation,
    pareto_front,
    search_blends,
)
from solvsel.errors import InputError
from solvsel.science.hansen import ra

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
    # several starts): same Ra within 1e-6 MPa^0.5 (both solve the same convex
    # QP, SLSQP to ftol 1e-15 on Ra^2; tables give HSP to 0.1 MPa^0.5, so 1e-6
    # is pure numerical agreement).
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


def test_order_of_liquids_does_not_matter():
    # Property (common practice for an exact solver): permuting the liquids of
    # each combination permutes the fractions and leaves Ra unchanged.
    rng = np.random.default_rng(5)
    P = _random_hsp(rng, 4 * 300).reshape(300, 4, 3)
    t = _random_hsp(rng, 1)[0]
    lo, hi = np.array([0.0, 0.05, 0.0, 0.1]), np.array([0.8, 1.0, 0.5, 1.0])
    a = best_fractions(P, t, lo, hi)
    perm = np.array([2, 0, 3, 1])
    b = best_fractions(P[:, perm], t, lo[perm], hi[perm])
    np.testing.assert_allclose(b.ra, a.ra, atol=1e-9)
    np.testing.assert_allclose(b.fractions, a.fractions[:, perm], atol=1e-7)


def test_round_trip_library_liquids():
    # A target made as 55/30/15 (by volume) ethanol/water/propylene glycol, HSP
    # from chemicals' MANUEL_RUBEN_2022, blended by the volume-fraction rule of
    # Hansen (2007): the search over a pool of 8 liquids finds that triple again
    # with its fractions within 0.01 (a blend is made up to about 1 % at the bench).
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


# ---------------------------------------------------------------- catalog level

from solvsel.jobs.blend import blend  # noqa: E402
from solvsel.jobs.parse import parse_fraction_bound  # noqa: E402
from solvsel.science.blends import FractionBound  # noqa: E402
from solvsel.errors import UnknownNameError  # noqa: E402


def _blend(cat, target, **fields):
    """The ``blend`` job for a target given as typed HSP (dD, dP, dH[, R0]) or by a solute's name."""
    if isinstance(target, str):
        return blend(solute=target, catalog=cat, **fields)
    return blend(hsp=tuple(float(v) for v in np.ravel(target)), catalog=cat, **fields)


@pytest.fixture(scope="module")
def cat():
    from solvsel.data.catalog import load_catalog

    return load_catalog()


CARRIERS = ["ethanol", "water", "glycerol", "propylene glycol", "triacetin", "triethyl citrate",
            "benzyl alcohol", "medium-chain triglycerides", "ethyl acetate", "d-limonene"]


def test_round_trip_table_liquids(cat):
    # A target made as 50/30/20 (by volume) ethanol/water/glycerol from the
    # table's own HSP (MANUEL_RUBEN_2022 values), blended by Hansen's
    # volume-fraction rule, is found again from a pool of 10 carriers: same
    # three liquids, fractions within 0.01 (a blend is made up to about 1 % at the bench).
    made = {"ethanol": 0.5, "water": 0.3, "glycerol": 0.2}
    t = sum(x * cat.solvent(n).hsp for n, x in made.items())
    res = _blend(cat, t, max_components=3, only=CARRIERS)
    best = res.results[0]
    assert best.ra < 1e-6
    found = {c.name: c.volume_fraction for c in best.components}
    assert set(found) == set(made)
    for n, x in made.items():
        assert abs(found[n] - x) < 0.01
    assert best.one_phase is True and best.phase_basis == "measured"  # all three pairs are tabulated miscible


def test_two_non_solvents_found_from_the_table(cat):
    # Collodion: nitrocellulose dissolves in diethyl ether + ethanol though in
    # neither alone (Hansen 2007, ch. 1, two-non-solvent effect). Sphere
    # (15.4, 14.7, 8.8), R0 11.5 from memory of the handbook's polymer table.
    res = _blend(cat, (15.4, 14.7, 8.8, 11.5), max_components=2, only=["diethyl ether", "ethanol"])
    singles = {b.names[0]: b.red for b in res.results if len(b.components) == 1}
    assert singles["diethyl ether"] > 1 and singles["ethanol"] > 1
    best = res.results[0]
    assert set(best.names) == {"diethyl ether", "ethanol"} and best.red < 0.9


def test_fraction_bounds_are_met(cat):
    # common practice: "ethanol at most 0.3 by volume, water at least 0.1"
    t = (15.8, 8.8, 19.4)  # ethanol's own HSP: pure ethanol would be best
    res = _blend(cat, t, max_components=3, only=CARRIERS,
                          bounds=[parse_fraction_bound("ethanol<=0.3"), FractionBound("water", lower=0.1)])
    assert res.results
    for b in res.results:
        x = {c.name: c.volume_fraction for c in b.components}
        assert x.get("ethanol", 0.0) <= 0.3 + 1e-9
        assert x["water"] >= 0.1 - 1e-9
        assert abs(sum(x.values()) - 1) < 1e-9
    assert res.counts["combinations"] > 0


def test_pool_constraints_leave_liquids_out_with_reasons(cat):
    t = (16.5, 6.0, 12.0)
    res = _blend(cat, t, max_components=2, use="carrier", worst_flammable_category="none",
                          bp_min_C=150, max_cost=3)
    reasons = {e.name: e.reason for e in res.excluded}
    assert "not listed for use as carrier" in reasons["n-hexane"]
    assert "flammable" in reasons["ethanol"] or "boils" in reasons["ethanol"]
    for b in res.results:
        for c in b.components:
            rec = cat.solvent(c.name)
            assert "carrier" in rec.roles and rec.bp_C >= 150 and rec.cost_class <= 3
        assert b.hazard_rank == 0
    res = _blend(cat, t, max_components=2, only=CARRIERS, min_flash_C=60)
    names = {c.name for b in res.results for c in b.components}
    assert "ethanol" not in names and "ethyl acetate" not in names
    assert any("flash point" in e.reason for e in res.excluded)


def test_jurisdiction_filters_by_food_law(cat):
    # Directive 2009/32/EC Annex I (bundled regulations table): ethanol is a GMP
    # extraction solvent; a liquid absent from the positive list is left out.
    res = _blend(cat, (17.8, 3.9, 9.9), max_components=2, use="extraction", jurisdiction="EU")
    names = {c.name for b in res.results for c in b.components}
    excluded = {e.name: e.reason for e in res.excluded}
    assert "n-heptane" in excluded and "not permitted" in excluded["n-heptane"]
    assert "n-heptane" not in names
    assert all(r["allowed"] for b in res.results for r in b.regulations)


def test_two_phase_blends_are_dropped_with_reason(cat):
    # Water and triacetin are only partly miscible (measured pair of the
    # miscibility table): the fit-optimal water/triacetin blend is dropped.
    t = 0.3 * cat.solvent("water").hsp + 0.7 * cat.solvent("triacetin").hsp
    res = _blend(cat, t, max_components=3, only=["ethanol", "water", "triacetin"])
    dropped = {tuple(sorted(d.names)): d.reason for d in res.dropped}
    assert ("triacetin", "water") in dropped and "two phases" in dropped[("triacetin", "water")]
    assert all(b.one_phase for b in res.results)
    assert res.counts["two_phase"] >= 1
    kept = _blend(cat, t, max_components=3, only=["ethanol", "water", "triacetin"], one_phase_only=False)
    flagged = [b for b in kept.results if set(b.names) == {"water", "triacetin"}]
    assert flagged and flagged[0].one_phase is False


def test_mass_fractions_and_properties(cat):
    res = _blend(cat, (16.0, 12.0, 30.0), max_components=2, only=["ethanol", "water"])
    b = next(b for b in res.results if len(b.components) == 2)
    rho = {"ethanol": 0.7852, "water": 0.9971}  # table densities at 25 C
    m = {c.name: c.volume_fraction * rho[c.name] for c in b.components}
    tot = sum(m.values())
    for c in b.components:
        assert c.mass_fraction == pytest.approx(m[c.name] / tot, abs=1e-9)
    assert b.bp_min_C == 78.4 and b.bp_max_C == 100.0 and b.lowest_flash_C == 12.0
    # blend HSP is the volume-fraction average (Hansen 2007)
    avg = sum(c.volume_fraction * cat.solvent(c.name).hsp for c in b.components)
    np.testing.assert_allclose([b.dD, b.dP, b.dH], avg, atol=1e-12)
    assert float(ra(avg, [16.0, 12.0, 30.0])) == pytest.approx(b.ra, abs=1e-9)
    assert any("flash point" in c for c in b.cautions)
    assert any("not a safety" in c and "defer" in c for c in res.cautions)


def test_temperature_shift(cat):
    # Liquids' HSP at 60 C by the Hansen-Beerbower rules of the Hansen engine
    from solvsel.science.hansen import shift_temperature

    res = _blend(cat, (16.0, 9.0, 18.0), max_components=1, only=["ethanol", "propylene glycol"], temp_C=60)
    for b in res.results:
        rec = cat.solvent(b.names[0])
        np.testing.assert_allclose([b.dD, b.dP, b.dH], shift_temperature(rec.hsp, rec.alpha_1_K, 60.0), atol=1e-12)
    # water freezes at -40 C: left out with the reason
    res = _blend(cat, (16.0, 9.0, 18.0), max_components=2, only=["ethanol", "water"], temp_C=-40)
    assert [e.name for e in res.excluded] == ["water"]


def test_selectivity_ranks_the_trade_off_front_first(cat):
    # Typed target and reject spheres (RED basis): every result dissolves the
    # target better than the nearest reject, and the first is non-dominated.
    target = (17.8, 3.9, 9.9, 6.0)
    rejects = [(17.0, 18.5, 30.0, 8.0), (16.0, 1.2, 2.4, 4.0)]  # sugar-like, wax-like
    res = _blend(cat, target, max_components=2, only=CARRIERS, reject_hsp=rejects)
    assert res.results and res.results[0].pareto
    for b in res.results:
        assert b.selectivity_basis == "RED"
        assert b.worst_reject_red == pytest.approx(min(r.red for r in b.rejects))
        assert b.selectivity == pytest.approx(b.worst_reject_red - b.red)
    # the Pareto list: no member dominated; every result off the front dominated by a member
    def objectives(b):
        return np.array([b.red, -b.worst_reject_red, b.cost, b.hazard_rank, len(b.components)])

    def dominates(a, b):
        return np.all(objectives(a) <= objectives(b)) and np.any(objectives(a) < objectives(b))

    assert res.pareto
    for p in res.pareto:
        assert not any(dominates(q, p) for q in list(res.pareto) + list(res.results))
    for b in res.results:
        assert b.pareto == any(b.names == p.names for p in res.pareto)
        if not b.pareto:
            assert any(dominates(p, b) for p in res.pareto)
    # rejects without radius: Ra basis
    res = _blend(cat, (17.8, 3.9, 9.9), max_components=2, only=CARRIERS, rejects=["sucrose"])
    assert res.results[0].selectivity_basis == "Ra" and res.results[0].worst_reject_red is None


def test_parse_fraction_bound():
    assert parse_fraction_bound("water>=10%") == FractionBound("water", 0.1, 1.0)
    assert parse_fraction_bound("triacetin=0.25") == FractionBound("triacetin", 0.25, 0.25)
    assert parse_fraction_bound("0.2 <= medium-chain triglycerides <= 0.6").name == "medium-chain triglycerides"
    for bad in ("ethanol<0.3", "ethanol<=1.5", "0.3>=ethanol", "ethanol<=abc", "0.6<=water<=0.2"):
        with pytest.raises(InputError):
            parse_fraction_bound(bad)


def test_user_mistakes_raise_solvsel_errors(cat):
    with pytest.raises(UnknownNameError):
        _blend(cat, (16, 5, 10), only=["ethanool"])
    with pytest.raises(InputError):
        _blend(cat, (16, 5, 10), max_components=5)
    with pytest.raises(InputError):  # water required but excluded
        _blend(cat, (16, 5, 10), exclude=["water"], bounds=[parse_fraction_bound("water>=0.1")])
    with pytest.raises(InputError):
        _blend(cat, (16, 5, 10), use="cleaning")
    with pytest.raises(InputError):
        _blend(cat, (16, 5, 10), bounds=[parse_fraction_bound("water>=0.6"), parse_fraction_bound("ethanol>=0.6")])


def test_no_blend_is_data_not_an_error(cat):
    res = _blend(cat, (16, 5, 10), only=["ethanol", "water"], bounds=[parse_fraction_bound("ethanol<=0.2"), parse_fraction_bound("water<=0.2")],
                          max_components=2)
    assert not res.success and not res.results and res.message


# ---------------------------------------------------------------- command line

def _run_cli(capsys, *argv):
    from solvsel.cli import main

    code = main(["blend", *argv])
    out = capsys.readouterr()
    return code, out.out, out.err


def test_cli_json_contract(capsys):
    import json

    # target = 30/70 water/triacetin (table HSP): the exact match is two-phase
    code, out, _ = _run_cli(capsys, "--hsp", "16.2,7.95,19.06", "--max-components", "3",
                            "--only", "ethanol,water,triacetin", "--json")
    assert code == 0
    doc = json.loads(out)
    assert {"dD", "dP", "dH"} <= set(doc["target"])
    assert doc["results"]
    for r in doc["results"]:
        assert {"components", "dD", "dP", "dH", "ra", "red", "one_phase", "cautions"} <= set(r)
        for c in r["components"]:
            assert {"name", "cas", "volume_fraction", "mass_fraction"} <= set(c)
            assert 0 <= c["volume_fraction"] <= 1
    ras = [r["ra"] for r in doc["results"]]
    assert ras == sorted(ras)  # best first
    assert any("two phases" in d["reason"] for d in doc["dropped"])


def test_cli_text_and_bad_input(capsys):
    code, out, _ = _run_cli(capsys, "--solute", "cannabidiol", "--use", "extraction", "--jurisdiction", "EU",
                            "--reject", "chlorophyll a", "--max-components", "2", "--top", "3")
    assert code == 0
    assert "blend (volume fractions)" in out and "Cautions:" in out and "Dropped:" in out
    code, _, err = _run_cli(capsys, "--hsp", "17.5,6.0,10.0", "--fraction", "ethanol<0.3")
    assert code == 2 and "--fraction" in err
    code, _, err = _run_cli(capsys, "--hsp", "17.5,6.0,10.0", "--only", "ethanool,water")
    assert code == 2 and "ethanol" in err


def test_engine_does_not_import_textual():
    import subprocess
    import sys

    code = "import sys, solvsel.science.blends; sys.exit(1 if 'textual' in sys.modules else 0)"
    assert subprocess.run([sys.executable, "-c", code], cwd=str(__import__("pathlib").Path(__file__).parents[1])).returncode == 0


def test_dose_limits_drop_carriers_over_the_limit(cat):
    # EU carrier limit of 1 g/L in beverages for propylene glycol (Reg. (EC)
    # No 1333/2008 Annex III Part 4, bundled regulations table; secondary
    # source, verify): a flavour of pure PG at 0.15 % in a drink is over it,
    # ethanol (a food, no carrier limit) is not.
    res = _blend(cat, (16.8, 10.4, 21.3), max_components=2, only=["propylene glycol", "ethanol"],
                          dose="0.15%", jurisdiction="EU", category="flavoured drinks")
    dropped = {d.names: d.reason for d in res.dropped}
    assert ("propylene glycol",) in dropped and "over a limit" in dropped[("propylene glycol",)]
    assert res.counts["over_limit"] >= 1
    for b in res.results:
        assert b.dose_check["ok"] is True
    with pytest.raises(InputError):
        _blend(cat, (16.8, 10.4, 21.3), only=["ethanol"], dose="0.15%")


def test_progress_and_cancel(cat):
    seen = []
    res = _blend(cat, (16, 5, 10), max_components=3, progress=lambda d, t: seen.append((d, t)))
    assert res.success and seen and seen[-1][0] == seen[-1][1] == res.counts["combinations"]
    res = _blend(cat, (16, 5, 10), max_components=3, progress=lambda d, t: False)
    assert not res.success and "cancelled" in res.message


def test_required_liquid_below_the_component_minimum_is_kept(cat):
    # water >= 0.02 forces 2 % water, under the 5 % component minimum: such
    # blends are still the answer (the smaller blend without water is not allowed)
    res = _blend(cat, (15.8, 8.8, 19.4), max_components=2, only=["ethanol", "water", "propylene glycol"],
                          bounds=[parse_fraction_bound("water>=0.02")])
    assert res.results
    best = {c.name: c.volume_fraction for c in res.results[0].components}
    assert best == pytest.approx({"ethanol": 0.98, "water": 0.02})


def test_users_own_liquids_are_marked(tmp_path):
    # a user's row (same columns as the bundled table) is searched and shown as theirs
    from pathlib import Path

    from solvsel.data.catalog import load_catalog

    import csv

    table = Path(__file__).parents[1] / "tables" / "solvents.csv"
    with open(table, newline="", encoding="utf-8") as fh:
        rows = list(csv.DictReader(fh))
    row = dict(next(r for r in rows if r["name"] == "triacetin"), name="my carrier X", synonyms="", cas="")
    own = tmp_path / "own.csv"
    with open(own, "w", newline="", encoding="utf-8") as fh:
        w = csv.DictWriter(fh, fieldnames=list(rows[0]))
        w.writeheader()
        w.writerow(row)
    cat = load_catalog(own={"solvents": [str(own)]})
    res = _blend(cat, (16.5, 4.5, 9.1), max_components=2, only=["my carrier X", "ethanol"])
    best = res.results[0]
    assert best.names == ("my carrier X",) and best.ra < 1e-9
    assert best.components[0].origin.startswith("user") and "(yours)" in best.label


def test_liquids_of_the_same_hsp_fold_into_one_blend(cat):
    # The five vegetable oils of the table carry one set of HSP (MANUEL_RUBEN_2022
    # lists them alike) and benzyl alcohol is miscible with fatty oils (European
    # Pharmacopoeia monograph, from memory): the blends that differ only in the oil
    # are one answer of the model, shown once with the others as alternatives.
    res = _blend(cat, "cannabidiol", max_components=2, use="carrier", jurisdiction="EU", top=10)
    oils = {"sunflower oil", "olive oil", "rapeseed oil", "soybean oil", "corn oil"}
    hsp = {tuple(cat.solvent(o).hsp) for o in oils}
    assert len(hsp) == 1
    with_oil = [b for b in res.results if oils & set(b.names) and "benzyl alcohol" in b.names]
    assert len(with_oil) == 1
    b = with_oil[0]
    assert len(b.alternatives) == 4
    used = {n for n in b.names if n in oils}
    swapped = {n for alt in b.alternatives for n in alt if n in oils}
    assert used | swapped == oils and not used & swapped
    # each alternative keeps benzyl alcohol in its place in the component order
    pos = b.names.index("benzyl alcohol")
    assert all(alt[pos] == "benzyl alcohol" for alt in b.alternatives)
    assert res.counts["alike"] >= 4
    assert b.to_dict()["alternatives"] == [list(a) for a in b.alternatives]
    # no two results are the same blend of the model
    sigs = [tuple(sorted((tuple(cat.solvent(c.name).hsp), round(c.volume_fraction, 4)) for c in r.components))
            for r in res.results]
    assert len(sigs) == len(set(sigs))

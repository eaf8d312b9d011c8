"""Sphere fit from bench results: round trips on the table's liquids, graded and
flipped results, exactness of the inner radius, degenerate input, next tests.

Outside references used here: the liquids' HSP of the bundled solvents table
(each row sourced in tables/sources.csv, cross-checked against the reference
library ``chemicals`` by the table tests), Hansen's definition of the
desirability (Hansen, *Hansen Solubility Parameters: A User's Handbook*, 2nd ed.,
2007, ch. 1) and brute-force scans computed here independently of the fitter.
"""

from __future__ import annotations

import numpy as np
import pytest

from solvsel.catalog import load_catalog
from solvsel.errors import InputError
from solvsel.hansen import ra
from solvsel.sphere import _best_r0, _distances, desirability, fit_sphere, grading_weights, suggest_tests
from solvsel.hansen import scaled

KEYS = ("dD", "dP", "dH", "r0")


@pytest.fixture(scope="module")
def liquids():
    recs = load_catalog().solvent_records()
    return np.array([r.hsp for r in recs]), [r.name for r in recs]


def random_truths(X, n, seed, min_each=5):
    """Random spheres in the region where food solutes sit, each with at least
    ``min_each`` good and bad liquids among ``X``."""
    rng = np.random.default_rng(seed)
    out = []
    while len(out) < n:
        c = np.array([rng.uniform(15.5, 19.5), rng.uniform(2.0, 14.0), rng.uniform(3.0, 18.0)])
        r = rng.uniform(5.0, 10.0)
        g = ra(X, c) < r
        if g.sum() >= min_each and (~g).sum() >= min_each:
            out.append((c, r, g, rng))
    return out


def worst_error(f, c, r):
    return float(np.max(np.abs(np.r_[f.hsp - c, f.r0 - r])))


# ---------------------------------------------------------------- round trip


@pytest.fixture(scope="module")
def round_trip(liquids):
    X, names = liquids
    rows = []
    for c, r, g, _ in random_truths(X, 24, seed=20261201):
        fm = fit_sphere(X, g, names=names)
        fc = fit_sphere(X, g, names=names, rule="classic", interval=False)
        rows.append((c, r, g, fm, fc))
    return rows


def test_round_trip_explains_every_result(round_trip, liquids):
    # Truth: spheres drawn at random, results classified with Hansen's Ra
    # on the table's liquids; a noise-free set is always explainable.
    X, _ = liquids
    for c, r, g, fm, fc in round_trip:
        assert fm.separable and fc.separable
        assert fm.wrong_side == () and fc.wrong_side == ()
        assert fm.fit == 1.0 and fm.explained == 1.0
        # the reported REDs are Hansen's distance from the fitted centre over R0
        np.testing.assert_allclose(fm.red, ra(X, fm.hsp) / fm.r0, rtol=1e-9)
        assert np.all((np.array(fm.red) < 1) == g)


def test_round_trip_interval_coverage(round_trip):
    # The 90 % profile interval must hold the true centre and R0 (all four
    # at once) in at least 85 % of the trials (issue 6 acceptance figure).
    hits = []
    for c, r, g, fm, _ in round_trip:
        iv = fm.interval
        assert iv["method"] == "profile" and iv["level"] == 0.9
        hits.append(all(iv[k][0] - 1e-9 <= t <= iv[k][1] + 1e-9 for k, t in zip(KEYS, (*c, r))))
    assert np.mean(hits) >= 0.85


def test_margin_rule_beats_smallest_radius(round_trip, liquids):
    # Same trials, worst coordinate error: the classic smallest-R0 rule is
    # biased low (issue 6 measured a median 1.2); ours must be >= 30 % closer.
    em = np.median([worst_error(fm, c, r) for c, r, g, fm, fc in round_trip])
    ec = np.median([worst_error(fc, c, r) for c, r, g, fm, fc in round_trip])
    assert em <= 0.7 * ec
    # the classic R0 rests on the farthest good liquid, and is biased low
    X = liquids[0]
    for c, r, g, fm, fc in round_trip:
        assert fc.r0 == pytest.approx(float(ra(X[g], fc.hsp).max()), rel=1e-9)
    assert np.median([fc.r0 - r for c, r, g, fm, fc in round_trip]) < 0


# ---------------------------------------------------------------- graded


def test_graded_scores_at_least_as_close_as_binary(liquids):
    # Scores 1 (dissolved) ... 6 (no effect) by RED bands, the graded scale of
    # Hansen (2007) as cited in PRACTICE.md (scale convention: from memory);
    # cut at 3.  The grading must not make the fit worse than the same data
    # made binary (median worst-coordinate error over the trials).
    X, _ = liquids
    eg, eb = [], []
    for c, r, g, _ in random_truths(X, 16, seed=7):
        red = ra(X, c) / r
        score = np.digitize(red, [0.5, 0.75, 1.0, 1.25, 1.6]) + 1
        fg = fit_sphere(X, score, good_at_most=3, interval=False)
        fb = fit_sphere(X, score <= 3, interval=False)
        assert fg.wrong_side == ()
        eg.append(worst_error(fg, c, r))
        eb.append(worst_error(fb, c, r))
    assert np.median(eg) <= np.median(eb)


def test_grading_weights_distance_from_cutoff():
    # 0 (no change) ... 5 (dissolved) scale, good at 4 or more (common practice)
    g, w = grading_weights([0, 3, 4, 5], good_at_least=4)
    assert g.tolist() == [False, False, True, True]
    np.testing.assert_allclose(w / w[1], [7.0, 1.0, 1.0, 3.0])  # |s - 3.5|
    with pytest.raises(InputError, match="exactly one cut-off"):
        grading_weights([1, 2, 3])


# ---------------------------------------------------------------- flipped


def test_ten_percent_flipped(liquids):
    # 10 % of the results flipped at random (issue 6 acceptance figures):
    # >= 80 % of the flipped liquids reported wrong-side, over all trials,
    # and the centre within 1.5 MPa^0.5 of the truth (median of the worst
    # coordinate over the trials: single trials can miss by more, since a
    # flip near the surface is indistinguishable from a slightly other sphere).
    X, names = liquids
    found, errs = [], []
    for c, r, g, rng in random_truths(X, 16, seed=99, min_each=8):
        flip = rng.choice(len(X), size=round(0.1 * len(X)), replace=False)
        g2 = g.copy()
        g2[flip] = ~g2[flip]
        f = fit_sphere(X, g2, names=names, interval=False)
        wrong = {w.name for w in f.wrong_side}
        found += [names[i] in wrong for i in flip]
        errs.append(float(np.max(np.abs(f.hsp - c))))
    assert np.mean(found) >= 0.80
    assert np.median(errs) <= 1.5


# ---------------------------------------------------------------- exactness


def test_inner_radius_is_exact_against_a_dense_scan(liquids):
    # For a fixed centre V(R0) is minimised exactly at a liquid distance:
    # compare with a dense scan of R0 in 0.001 steps (brute force here).
    X, _ = liquids
    rng = np.random.default_rng(3)
    Xs = scaled(X)
    for lapse in (0.0, 0.05):
        for _ in range(5):
            g = rng.random(len(X)) < 0.4
            w = rng.uniform(0.5, 2.0, len(X))
            c = scaled([rng.uniform(15, 20), rng.uniform(2, 14), rng.uniform(3, 18)])
            d = _distances(Xs, c[None])[0]
            v, r_lo, _ = _best_r0(d[None], np.where(g, w, 0), np.where(g, 0, w), lapse)
            R = np.arange(0.0, d.max() + 1, 0.001)
            gap = d[None, :] - R[:, None]
            viol = np.where(g, np.maximum(gap, 0), np.maximum(-gap, 0))
            loss = viol if lapse == 0 else -np.log(lapse + (1 - lapse) * np.exp(-viol))
            scan = (w * loss).sum(axis=1)
            assert v[0] <= scan.min() + 1e-9
            assert scan.min() - v[0] < 0.05  # scan step 0.001 x total weight
            assert np.any(np.isclose(d, r_lo[0]))


def test_desirability_matches_hansen_definition():
    # Hansen (2007) ch. 1: A = exp(-(Ra - R0)) for a good liquid outside,
    # exp(-(R0 - Ra)) for a bad one inside, 1 otherwise; fit = geometric mean.
    X = np.array([[18.0, 1.4, 2.0], [15.8, 8.8, 19.4], [17.8, 3.1, 5.7]])  # Appendix A values
    c, r0 = np.array([17.5, 3.0, 4.0]), 3.0
    d = ra(X, c)
    good = np.array([True, False, False])
    a = [np.exp(-max(d[0] - r0, 0)), np.exp(-max(r0 - d[1], 0)), np.exp(-max(r0 - d[2], 0))]
    assert desirability(c, good, r0, X) == pytest.approx(np.prod(a) ** (1 / 3), rel=1e-12)


# ---------------------------------------------------------------- open sphere


def test_open_sphere_is_flagged_with_direction(liquids):
    # A sphere centred beyond every liquid in dP (truth dP = 24): the good
    # liquids lie on its low-dP side only.
    X, names = liquids
    c, r = np.array([17.0, 24.0, 12.0]), 12.0
    g = ra(X, c) < r
    assert 5 <= g.sum() < len(X) - 5
    f = fit_sphere(X, g, names=names, interval=False)
    assert f.open
    assert f.open_direction[1] > 0.5  # toward higher dP
    assert "higher dP" in f.open_note


def test_closed_sphere_is_not_flagged(liquids):
    X, names = liquids
    c, r = np.array([17.0, 8.0, 9.0]), 8.0
    f = fit_sphere(X, ra(X, c) < r, names=names, interval=False)
    assert not f.open and f.open_direction is None


# ---------------------------------------------------------------- degenerate


@pytest.fixture
def five():
    X = np.array([[15.8, 8.8, 19.4], [18.0, 1.4, 2.0], [15.5, 10.4, 7.0], [14.9, 0.0, 0.0], [15.5, 16.0, 42.3]])
    return X, ["ethanol", "toluene", "acetone", "n-hexane", "water"]


def test_degenerate_inputs(five):
    X, names = five
    with pytest.raises(InputError, match="all 5 liquids are good"):
        fit_sphere(X, [True] * 5)
    with pytest.raises(InputError, match="all 5 liquids are bad"):
        fit_sphere(X, [False] * 5)
    with pytest.raises(InputError, match="only 4 liquids"):
        fit_sphere(X[:4], [True, True, False, False])
    with pytest.raises(InputError, match="listed twice"):
        fit_sphere(X, [True, True, False, False, False], names=["ethanol", "toluene", "Ethanol", "a", "b"])
    with pytest.raises(InputError, match="expected 5 results"):
        fit_sphere(X, [True, False])
    with pytest.raises(InputError, match="dD, dP, dH"):
        fit_sphere(X[:, :2], [True, False, True, False, False])
    with pytest.raises(InputError, match="rule"):
        fit_sphere(X, [True, True, False, False, False], rule="smallest")
    with pytest.raises(InputError, match="weights"):
        fit_sphere(X, [True, True, False, False, False], weights=[1, 1, 0, 1, 1])


def test_minimal_set_fits(five):
    X, names = five
    f = fit_sphere(X, [True, False, True, False, False], names=names)
    assert f.success and f.wrong_side == ()
    d = f.to_dict()
    for key in ("dD", "dP", "dH", "r0", "fit", "wrong_side", "interval"):
        assert key in d


# ---------------------------------------------------------------- next tests


def test_next_tests_heuristic(liquids):
    X, names = liquids
    c, r = np.array([17.0, 8.0, 9.0]), 8.0
    tested = list(range(0, len(X), 3))
    g = ra(X[tested], c) < r
    f = fit_sphere(X[tested], g, names=[names[i] for i in tested], interval=False)
    sug = suggest_tests(f, X, names, k=4)
    assert len(sug) == 4
    picked = {s.name for s in sug}
    assert not picked & set(f.names)  # only untested liquids
    # the first pick is the untested liquid nearest the surface
    untested = [i for i in range(len(X)) if i not in tested]
    redv = ra(X[untested], f.hsp) / f.r0
    assert sug[0].name == names[untested[int(np.argmin(np.abs(redv - 1)))]]
    # the picks point in different directions from the centre
    u = np.array([np.array(s.direction) for s in sug])
    cos = u @ u.T
    assert np.all(cos[np.triu_indices(4, 1)] < 0.99)

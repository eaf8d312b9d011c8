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

from solvsel.data.catalog import load_catalog
from solvsel.errors import InputError
from solvsel.science.hansen import ra
from solvsel.science.sphere import _best_r0, _distances, desirability, fit_sphere, grading_weights, suggest_tests
from solvsel.science.hansen import scaled

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


def test_centre_against_a_brute_force_grid(liquids):
    # Issue 6: the optimum of the classic fit equals that of a brute-force grid
    # in 0.1 MPa^0.5 steps within 0.1.  Here on noisy problems (10 % flipped),
    # over a grid 2 MPa^0.5 around our centre (the bench scans the whole box):
    # no grid point scores better than our centre, and the best grid point,
    # refined by a local search on the same objective (the objective has kinks,
    # so the raw grid point can sit a step or more away), lands within 0.1.
    from scipy.optimize import minimize

    X, _ = liquids
    Xs = scaled(X)
    rng = np.random.default_rng(11)
    done = 0
    while done < 2:
        c = np.array([rng.uniform(16, 19), rng.uniform(3, 12), rng.uniform(4, 15)])
        r = rng.uniform(5, 9)
        g = ra(X, c) < r
        if g.sum() < 8 or (~g).sum() < 8:
            continue
        flip = rng.choice(len(X), size=round(0.1 * len(X)), replace=False)
        g[flip] = ~g[flip]
        f = fit_sphere(X, g, rule="classic", lapse=0.0, interval=False)
        w = np.ones(len(X))
        wg, wb = np.where(g, w, 0.0), np.where(g, 0.0, w)

        def V(centres):
            return _best_r0(_distances(Xs, scaled(np.atleast_2d(centres))), wg, wb, 0.0)[0]

        axes = [np.round(f.hsp[k] + np.arange(-2.0, 2.05, 0.1), 1) for k in range(3)]
        C = np.stack(np.meshgrid(*axes, indexing="ij"), -1).reshape(-1, 3)
        v = V(C)
        assert v.min() >= f.objective - 1e-9
        best = C[np.argmin(v)]
        ref = minimize(lambda z: float(V(z)[0]), best, method="Nelder-Mead",
                       options={"xatol": 1e-4, "fatol": 1e-10,
                                "initial_simplex": best + 0.1 * np.vstack([np.zeros(3), np.eye(3)])})
        assert ref.fun >= f.objective - 1e-6
        assert np.max(np.abs(ref.x - f.hsp)) <= 0.1
        done += 1


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


# ---------------------------------------------------------------- published data set

DATA = __import__("pathlib").Path(__file__).parent / "data"


def test_c60_fullerene_memory_set_classic_rule():
    # Data: C60 solubility in 40 liquids, Ruoff et al., J. Phys. Chem. 97
    # (1993) 3379 -- FROM MEMORY (tests/data/bench_c60_memory.csv); good =
    # at least 1 mg/mL.  Published sphere, Hansen & Smith, Carbon 42 (2004)
    # 1591, also FROM MEMORY: 19.7, 2.9, 2.7, R0 4.0.  The classic fit (plain
    # desirability, smallest R0) with the library's liquid HSP lands within
    # 0.7 of it on every parameter (dP within 0.1); the 0.3 is NOT
    # reached with these recalled data, and the last checks say why: the
    # published sphere itself puts 7 of the 40 recalled results on the wrong
    # side, so the recalled list and scores are not the authors' (their table
    # is needed to check the 0.3), while our search finds a sphere Hansen's
    # desirability rates higher on the same data.
    import csv

    rows = list(csv.DictReader(ln for ln in (DATA / "bench_c60_memory.csv").open(encoding="utf-8")
                               if not ln.startswith("#")))
    X = np.array([[float(r["dD"]), float(r["dP"]), float(r["dH"])] for r in rows])
    good = np.array([float(r["result"]) >= 1.0 for r in rows])
    # the liquids' HSP in the file are those of the chemicals library data sets
    import chemicals.solubility as s

    for r, x in zip(rows, X):
        cas = r["note"].split(";")[0].replace("CAS", "").strip()
        key = r["note"].split("HSP")[1].strip()
        assert s.hansen_delta_d(cas, method=key) / 1000 == pytest.approx(x[0], abs=0.051)
        assert s.hansen_delta_p(cas, method=key) / 1000 == pytest.approx(x[1], abs=0.051)
        assert s.hansen_delta_h(cas, method=key) / 1000 == pytest.approx(x[2], abs=0.051)
    f = fit_sphere(X, good, rule="classic", lapse=0.0, interval=False)
    published = np.array([19.7, 2.9, 2.7, 4.0])
    got = np.array([f.dD, f.dP, f.dH, f.r0])
    assert np.max(np.abs(got - published)) <= 1.0
    # regression pin of this fit (so a change of the search is seen)
    np.testing.assert_allclose(got, [19.00, 2.82, 3.14, 4.48], atol=0.02)
    # why 0.3 is out of reach with these data: the published sphere misplaces
    # 7 recalled results, ours 3, and Hansen's desirability prefers ours
    d_pub = ra(X, published[:3])
    assert int(np.sum(np.where(good, d_pub > 4.0, d_pub < 4.0))) == 7
    assert len(f.wrong_side) == 3
    assert desirability(f.hsp, good, f.r0, X) > desirability(published[:3], good, 4.0, X)


# ---------------------------------------------------------------- bench files and the command


from solvsel.cli import main  # noqa: E402
from solvsel.errors import TableError  # noqa: E402
from solvsel.data.bench import read_bench  # noqa: E402
from solvsel.science.sphere import bench_liquids  # noqa: E402

EXAMPLES = __import__("pathlib").Path(__file__).parent.parent / "examples"


def write(tmp_path, text, name="bench.csv"):
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return p


GOOD_SET = """liquid,result
triacetin,good
ethyl acetate,good
acetone,good
d-limonene,good
tetrahydrofuran,good
ethanol,bad
water,bad
glycerol,bad
n-hexane,bad
methanol,bad
"""


def test_read_bench_names_cas_blends_and_own_liquids(tmp_path):
    cat = load_catalog()
    p = write(tmp_path, "# a comment line\nliquid,result,dD,dP,dH,weight\n"
              "64-17-5,bad,,,,\nethanol:water=70:30,bad,,,,\nmy oil,good,16.5,3.0,4.0,\nacetone,partial,,,,2\n")
    b = bench_liquids(read_bench(p, cat))
    assert [r.row for r in b.rows] == [3, 4, 5, 6]  # file lines, comments counted
    assert b.rows[0].label == "64-17-5" and b.rows[0].dH == pytest.approx(19.4)  # ethanol by CAS
    # 70:30 by volume: volume-fraction average (Hansen 2007, ch. 1)
    np.testing.assert_allclose([b.rows[1].dD, b.rows[1].dP, b.rows[1].dH],
                               0.7 * np.array([15.8, 8.8, 19.4]) + 0.3 * np.array([15.5, 16.0, 42.3]), atol=1e-9)
    assert b.rows[2].basis == "your values" and b.rows[2].dD == 16.5
    assert b.rows[3].weight == pytest.approx(1.0)  # partial: 0.5 x the row's weight 2


@pytest.mark.parametrize("text, what", [
    ("liquid,result\nethanol,good\nethanoll,bad\n", "row 3, column 'liquid': no liquid named 'ethanoll'; closest: 'ethanol'"),
    ("liquid,result\nethanol,good\nEthanol,bad\n", "row 3, column 'liquid': 'Ethanol' is the same liquid as row 2"),
    ("liquid,result\nethanol,good\n64-17-5,bad\n", "same liquid as row 2"),
    ("liquid,result\nethanol,maybe\n", "row 2, column 'result': 'maybe' is not a result"),
    ("liquid,result\nethanol,good\nwater,3\n", "mix words"),
    ("liquid,outcome\nethanol,good\n", "unknown column 'outcome'"),
    ("liquid\nethanol\n", "missing column 'result'"),
    ("liquid,result,dD,dP,dH\nmine,good,17,3,\n", "row 2, column 'dH': give all three"),
    ("liquid,result,dD,dP,dH\nmine,good,37,3,4\n", "dD = 37 is outside"),
    ("liquid,result\nethanol:water=70,bad\n", "a blend is written"),
    ("liquid,result\nethanol,good,extra\n", "expected 2 fields, found 3"),
    ("liquid,result,weight\nethanol,good,-1\n", "not a positive number"),
    ("", "the file is empty"),
])
def test_read_bench_errors_name_file_row_column(tmp_path, text, what):
    p = write(tmp_path, text)
    with pytest.raises(TableError) as exc:
        read_bench(p, load_catalog())
    assert what in str(exc.value) and str(p) in str(exc.value)


def test_cli_json_contract_and_exit_codes(tmp_path, capsys):
    import json

    p = write(tmp_path, GOOD_SET)
    assert main(["fit", str(p), "--json", "--next", "3"]) == 0
    out = json.loads(capsys.readouterr().out)
    for key in ("dD", "dP", "dH", "r0", "fit", "wrong_side", "interval"):
        assert key in out
    assert out["wrong_side"] == [] and out["fit"] == 1.0
    assert set(out["interval"]) >= {"dD", "dP", "dH", "r0", "level", "method"}
    assert len(out["next_tests"]["liquids"]) == 3 and "heuristic" in out["next_tests"]["method"]
    assert out["cautions"][-1].startswith("Estimates for planning bench work")
    # the fitted centre explains the results it was given (Hansen's Ra)
    X = np.array([[li["dD"], li["dP"], li["dH"]] for li in out["liquids"]])
    red = ra(X, [out["dD"], out["dP"], out["dH"]]) / out["r0"]
    assert np.all((red < 1) == np.array([li["result"] == "good" for li in out["liquids"]]))
    # bad input: exit code 2 and one paragraph on stderr, no traceback
    assert main(["fit", str(write(tmp_path, "liquid,result\nethanol,good\nwater,bad\n", "few.csv"))]) == 2
    err = capsys.readouterr().err
    assert "only 2 liquids" in err and "Traceback" not in err
    assert main(["fit", str(tmp_path / "missing.csv")]) == 2
    assert "no such file" in capsys.readouterr().err
    allgood = GOOD_SET.replace(",bad", ",good")
    assert main(["fit", str(write(tmp_path, allgood, "allgood.csv"))]) == 2
    assert "all 10 liquids are good" in capsys.readouterr().err
    assert main(["fit", str(write(tmp_path, GOOD_SET.replace(",good", ",bad"), "allbad.csv"))]) == 2
    assert "all 10 liquids are bad" in capsys.readouterr().err


def test_cli_numeric_scores_need_a_cutoff(capsys):
    assert main(["fit", str(EXAMPLES / "bench_graded.csv")]) == 2
    assert "--good-at-most" in capsys.readouterr().err
    assert main(["fit", str(EXAMPLES / "bench_graded.csv"), "--good-at-most", "2", "--next", "0"]) == 0
    text = capsys.readouterr().out
    assert "profile intervals" in text and "Cautions:" in text


def test_cli_example_file_text_output(capsys):
    assert main(["fit", str(EXAMPLES / "bench_extract.csv")]) == 0
    text = capsys.readouterr().out
    assert "Sphere fitted to 25 liquids" in text and "Worth testing next" in text
    assert "flammable" in text  # the proposed liquids carry their cautions


def test_save_as_solute_and_use_as_target(tmp_path, capsys):
    import json

    p = write(tmp_path, GOOD_SET)
    mine = tmp_path / "my_solutes.csv"
    assert main(["fit", str(p), "--save-as", "bench extract A", "--into", str(mine), "--next", "0"]) == 0
    capsys.readouterr()
    first = mine.read_bytes()
    # a second sphere is appended; the first row is kept byte for byte
    assert main(["fit", str(p), "--rule", "classic", "--save-as", "bench extract B", "--into", str(mine), "--json"]) == 0
    saved = json.loads(capsys.readouterr().out)["saved"]
    assert saved == {"name": "bench extract B", "file": str(mine), "action": "appended"}
    assert mine.read_bytes().startswith(first)
    # the same name again is refused, and the file is untouched
    before = mine.read_bytes()
    assert main(["fit", str(p), "--save-as", "Bench Extract A", "--into", str(mine)]) == 2
    assert "already has a solute of that name" in capsys.readouterr().err
    assert mine.read_bytes() == before
    # --save-as needs --into
    assert main(["fit", str(p), "--save-as", "x"]) == 2
    capsys.readouterr()
    # the saved sphere is a target for rank through --own-solutes
    cat = load_catalog(own={"solutes": [str(mine)]})
    s = cat.solute("bench extract A")
    assert s.hsp_basis == "fitted" and s.r0 is not None and s.is_user
    assert main(["--own-solutes", str(mine), "rank", "--solute", "bench extract A", "--json", "--top", "3"]) == 0
    ranked = json.loads(capsys.readouterr().out)
    assert ranked["target"]["r0"] == pytest.approx(s.r0)


def test_save_keeps_a_users_other_rows(tmp_path, capsys):
    mine = tmp_path / "mine.csv"
    mine.write_text("name,category,dD_MPa05,dP_MPa05,dH_MPa05,r0_MPa05,hsp_basis,hsp_source,props_source\n"
                    "my resin,other,18.0,5.0,6.0,,measured,my lab notebook,my lab notebook", encoding="utf-8")
    before = mine.read_bytes()
    p = write(tmp_path, GOOD_SET)
    assert main(["fit", str(p), "--save-as", "extract C", "--into", str(mine), "--next", "0"]) == 0
    after = mine.read_bytes()
    assert after.startswith(before) and after.count(b"\n") == 3  # a newline was added before the new row
    cat = load_catalog(own={"solutes": [str(mine)]})
    assert cat.solute("my resin").dD == 18.0 and cat.solute("extract C").hsp_basis == "fitted"
    # a file whose columns cannot hold the sphere is refused, untouched
    narrow = tmp_path / "narrow.csv"
    narrow.write_text("name,category,dD_MPa05,dP_MPa05,dH_MPa05,hsp_basis\nx,other,18,5,6,measured\n", encoding="utf-8")
    before = narrow.read_bytes()
    assert main(["fit", str(p), "--save-as", "extract D", "--into", str(narrow)]) == 2
    assert "no column" in capsys.readouterr().err and narrow.read_bytes() == before


# ---------------------------------------------------------------- two populations


def test_two_spheres_recover_two_populations(liquids, capsys):
    # Truth: a low-polarity sphere (16.0, 3.0, 4.0; R0 4.5) and a
    # hydrogen-bonding one (16.5, 9.0, 20.0; R0 5.0), results classified with
    # Hansen's Ra on the table's liquids (made-up spheres, common practice).
    from solvsel.science.sphere import fit_two_spheres

    X, names = liquids
    truths = [(np.array([16.0, 3.0, 4.0]), 4.5), (np.array([16.5, 9.0, 20.0]), 5.0)]
    g = np.zeros(len(X), dtype=bool)
    for c, r in truths:
        g |= ra(X, c) < r
    two = fit_two_spheres(X, g, names=names)
    assert two.fit == 1.0 and two.wrong_side == ()
    assert two.one_sphere_fit < 0.9  # one sphere cannot explain both groups
    for c, r in truths:  # each true sphere has a fitted one near it
        err = min(float(np.max(np.abs(np.r_[f.hsp - c, f.r0 - r]))) for f in two.spheres)
        assert err <= 1.5
    with pytest.raises(InputError, match="at least 4 good"):
        fit_two_spheres(X[:8], np.array([True, True, True] + [False] * 5))


def test_cli_two_spheres_json(capsys):
    import json

    assert main(["fit", str(EXAMPLES / "bench_extract.csv"), "--two-spheres", "--next", "0", "--json"]) == 0
    two = json.loads(capsys.readouterr().out)["two_spheres"]
    assert len(two["spheres"]) == 2 and two["fit"] >= two["one_sphere_fit"] - 1e-9
    assert main(["fit", str(EXAMPLES / "bench_graded.csv"), "--good-at-most", "2", "--two-spheres"]) == 2
    assert "good/partial/bad" in capsys.readouterr().err


def test_order_of_the_rows_does_not_matter(liquids):
    # A bench file listed in another order is the same experiment (common practice).
    X, _ = liquids
    rng = np.random.default_rng(5)
    for c, r, g, _ in random_truths(X, 3, seed=31):
        g = g.copy()
        flip = rng.choice(len(X), size=5, replace=False)
        g[flip] = ~g[flip]
        for gg in (ra(X, c) < r, g):
            a = fit_sphere(X, gg, interval=False)
            p = rng.permutation(len(X))
            b = fit_sphere(X[p], gg[p], interval=False)
            np.testing.assert_allclose(np.r_[a.hsp, a.r0], np.r_[b.hsp, b.r0], atol=1e-3)


def test_the_fit_needs_neither_rdkit_nor_scikit_learn():
    # RDKit and scikit-learn are the optional "structure" extra: the sphere fit (numpy and scipy) must run
    # without them, through the library and the command line.
    import subprocess
    import sys

    code = (
        "import sys\n"
        "class Block:\n"
        "    def find_spec(self, name, path=None, target=None):\n"
        "        if name.split('.')[0] in ('rdkit', 'sklearn'):\n"
        "            raise ImportError('blocked: ' + name)\n"
        "sys.meta_path.insert(0, Block())\n"
        "from solvsel.jobs.fit import fit\n"
        f"r = fit(path={str(EXAMPLES / 'bench_extract.csv')!r}, next_tests=2)\n"
        "from solvsel.cli import main\n"
        f"assert main(['fit', {str(EXAMPLES / 'bench_graded.csv')!r}, '--good-at-most', '2', '--json']) == 0\n"
        "assert not [m for m in sys.modules if m.split('.')[0] in ('rdkit', 'sklearn')]\n"
        "print(round(r.sphere.r0, 2))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=120)
    assert out.returncode == 0, out.stderr
    assert out.stdout.strip().splitlines()[-1] == "8.44"  # the R0 of `solvsel fit examples/bench_extract.csv`


# ---------------------------------------------------------------- graded results (the scores themselves)

from solvsel.science.sphere import fit_graded, score_boundary  # noqa: E402


def test_graded_fit_recovers_a_regular_solution_law(liquids):
    # scores made by log10 x = -0.5 - V Ra^2 / (4 RT ln 10) with V = 150 cm3/mol (the regular-solution
    # term of Hansen 2007, ch. 2) around random centres, with noise of 0.1: the centre is found within
    # 0.6 MPa^0.5 and the radius is where the law crosses the cut
    X, _ = liquids
    rng = np.random.default_rng(7)
    slope = 150.0 / (4 * 8.314462618 * 298.15 * np.log(10))
    for c, _, _, _ in random_truths(X, 4, seed=11):
        y = -0.5 - slope * ra(X, c) ** 2 + rng.normal(0.0, 0.1, len(X))
        g = fit_graded(X, y, cut=-2.0)
        assert float(np.max(np.abs(g.hsp - c))) < 0.6
        assert g.slope == pytest.approx(-slope, rel=0.1)
        assert g.r0 == pytest.approx(np.sqrt(1.5 / slope), rel=0.1)
        assert not g.at_bound and g.r2 > 0.9


def test_graded_fit_low_is_best_scale_and_boundary(liquids):
    X, _ = liquids
    c = np.array([17.0, 8.0, 10.0])
    scores = np.clip(np.round(1 + ra(X, c) / 3.0), 1, 6)  # 1 dissolved .. 6 no effect
    mid, step = score_boundary(scores, good_at_most=2)
    assert (mid, step) == (2.5, 1.0)
    g = fit_graded(X, scores, cut=mid, higher_is_better=False)
    assert g.slope > 0 and not g.higher_is_better
    good = g.good(X)
    # the fitted boundary agrees with the scores' own good/bad on most liquids
    assert np.mean(good == (scores <= 2)) > 0.85


def test_graded_prior_agrees_or_disagrees_with_the_data(liquids):
    # a bench of 24 liquids with noisy scores: a prior 0.5 MPa^0.5 off is consistent with them, one
    # 20 MPa^0.5 off is not
    X, _ = liquids
    rng = np.random.default_rng(3)
    X = X[rng.choice(len(X), 24, replace=False)]
    c = np.array([18.0, 6.0, 9.0])
    y = 1.0 - 0.01 * ra(X, c) ** 2 + rng.normal(0.0, 0.3, len(X))
    near = fit_graded(X, y, cut=0.0, prior=c + [0.2, 0.3, -0.3])
    far = fit_graded(X, y, cut=0.0, prior=[16.0, 16.0, 25.0])
    assert near.prior["agree"] and not far.prior["agree"]
    assert far.prior["p_value"] < 0.01 and near.prior["p_value"] > 0.05
    assert "disagree with the structure estimate" in far.message


def test_graded_centre_on_a_bound_is_said(liquids):
    # scores that keep rising toward high dD: the centre ends on the bound, and the fit says so
    X, _ = liquids
    y = X[:, 0] * 0.5
    g = fit_graded(X, y, cut=float(np.median(y)))
    assert "dD" in g.at_bound and "search bound" in g.message
    # a prior keeps it off the bound
    assert not fit_graded(X, y, cut=float(np.median(y)), prior=[18.0, 5.0, 5.0]).at_bound


def test_graded_fit_refuses_constant_scores():
    X = np.array([[15.0, 0, 0], [18, 1.4, 2], [15.5, 10.4, 7], [15.8, 8.8, 19.4], [15.5, 16, 42.3], [17, 7, 7]])
    with pytest.raises(InputError):
        fit_graded(X, np.ones(6), cut=0.5)

"""How sure an answer is: the target sampled within its uncertainty.

Checks: a target with no uncertainty (typed HSP) keeps every answer "stable" in rank and blend;
on the demo's cannabidiol (a recalled table value) the answers that move in or out of the top
three are named; the shares agree with an independent Monte Carlo written here (another seed,
more samples, a plain loop over the samples and a sort) within the sampling error; the spread of
an estimate is its stated error converted to a standard deviation (sqrt(pi/2) x mean absolute
error, the ratio for a normal error) and that of an interval its width over twice the normal
quantile of scipy.stats.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest

from solvsel.data.catalog import load_catalog
from solvsel.jobs.blend import blend
from solvsel.jobs.rank import rank
from solvsel.science.robustness import RECALLED_SD, STABLE_SHARE, Spread, how_sure, spread_from_interval, target_spread
from solvsel.science.target import Target, target_from_hsp, target_from_smiles

DEMO = dict(solute="cannabidiol", use="carrier", jurisdiction="EU")  # tables/demo_scenario.json, "carrier"


def test_no_uncertainty_every_answer_stable():
    r = rank(hsp=(17.0, 3.0, 8.0, 8.0), top=10)
    assert [x.how_sure["verdict"] for x in r.results] == ["stable"] * 10
    assert r.how_sure["verdict"] == "stable" and r.how_sure["spread"] is None
    b = blend(hsp=(17.0, 3.0, 8.0, 8.0), use="carrier", top=6).to_dict()
    assert [x["how_sure"]["verdict"] for x in b["results"]] == ["stable"] * len(b["results"])
    assert b["how_sure"]["verdict"] == "stable"


def _independent_shares(target, hsp, sd, n=4000, seed=12345):
    rng = np.random.default_rng(seed)
    counts = np.zeros(len(hsp))
    for t in target + rng.normal(size=(n, 3)) * sd:
        ra = [math.sqrt(4 * (h[0] - t[0]) ** 2 + (h[1] - t[1]) ** 2 + (h[2] - t[2]) ** 2) for h in hsp]
        for i in sorted(range(len(hsp)), key=ra.__getitem__)[:3]:
            counts[i] += 1
    return counts / n


def test_demo_cannabidiol_names_the_answers_that_move():
    cat = load_catalog()
    r = rank(**DEMO, all=True)
    assert r.how_sure["spread"]["sd"] == dict(zip(("dD", "dP", "dH"), RECALLED_SD))
    moving = r.how_sure["moving"]
    assert moving, "some of the top answers should move under a recalled value's uncertainty"
    for name in moving:
        assert name in r.how_sure["summary"]
    sensitive = [x.name for x in r.results if x.how_sure["verdict"] == "sensitive"]
    assert sensitive == list(moving)
    # the shares agree with an independent computation within the sampling error (500 samples: sd <= 0.023)
    hsp = np.array([[x.dD, x.dP, x.dH] for x in r.results])
    want = _independent_shares(np.array([r.target.dD, r.target.dP, r.target.dH]), hsp, np.array(RECALLED_SD))
    got = np.array([x.how_sure["in_top_three"] for x in r.results])
    assert np.max(np.abs(got - want)) < 0.08
    # the verdicts follow the documented threshold
    for i, x in enumerate(r.results):
        share = x.how_sure["in_top_three"]
        stable = share >= STABLE_SHARE if i < 3 else share <= 1 - STABLE_SHARE
        assert x.how_sure["verdict"] == ("stable" if stable else "sensitive")
    assert target_spread(r.target, cat) is not None


def test_demo_cannabidiol_blends_name_the_answers_that_move():
    b = blend(**DEMO, top=8).to_dict()
    assert all(x["how_sure"] is not None for x in b["results"])
    labels = {x["rank"]: x for x in b["results"]}
    moving = b["how_sure"]["moving"]
    assert moving and all(m in b["how_sure"]["summary"] for m in moving)
    assert "fixed fractions" in b["how_sure"]["scope"]
    assert {x["how_sure"]["verdict"] for x in labels.values()} <= {"stable", "sensitive"}


def test_the_same_request_gives_the_same_answer():
    a, b = rank(**DEMO, top=6).to_dict(), rank(**DEMO, top=6).to_dict()
    assert [x["how_sure"] for x in a["results"]] == [x["how_sure"] for x in b["results"]]


def test_an_estimate_carries_its_stated_error():
    t = target_from_smiles("CCCCO")
    sp = target_spread(t)
    want = tuple(round(math.sqrt(math.pi / 2) * t.uncertainty[k], 3) for k in ("dD", "dP", "dH"))
    assert sp.sd == want and "estimate from structure" in sp.basis
    assert target_spread(target_from_hsp((17.0, 3.0, 8.0))) is None


def test_a_fitted_interval_gives_its_spread():
    from scipy.stats import norm

    z = norm.ppf(0.95)
    interval = {"dD": [16.0, 18.0], "dP": [4.0, 10.0], "dH": [6.0, 9.0]}
    assert spread_from_interval(interval, 0.90) == tuple(round((hi - lo) / (2 * z), 3) for lo, hi in interval.values())
    t = Target("bench fit", 17.0, 7.0, 7.5, 6.0, "fitted", uncertainty={**interval, "level": 0.90, "kind": "interval"})
    assert target_spread(t).sd == spread_from_interval(interval, 0.90)


def test_far_answers_stay_and_near_ties_move():
    # two liquids at the same distance from the target share the third place: both move
    hsp = [[17, 5, 8], [17, 5, 9], [17, 5, 11], [17, 5, 5], [14, 20, 25]]
    h = how_sure([17, 5, 8], Spread((0.3, 1.0, 1.0), "test"), hsp, list("abcde"))
    assert h.verdicts[:2] == ("stable", "stable")
    assert set(h.moving) == {"c", "d"}


def test_the_command_line_gives_the_library_answer(capsys):
    from solvsel.cli import main

    assert main(["rank", "--solute", "cannabidiol", "--use", "carrier", "--jurisdiction", "EU", "--top", "6",
                 "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    want = rank(**DEMO, top=6).to_dict()
    assert [x["how_sure"] for x in doc["results"]] == [x["how_sure"] for x in want["results"]]
    assert doc["how_sure"] == want["how_sure"]
    assert main(["rank", "--solute", "cannabidiol", "--use", "carrier", "--jurisdiction", "EU", "--top", "6"]) == 0
    assert "How sure: sensitive" in capsys.readouterr().out


def test_a_fitted_sphere_carries_its_intervals_as_the_targets_uncertainty():
    # The sphere's 90 % profile intervals become the spread the target is sampled within:
    # sd = width / (2 z), z the normal quantile of the level (1.645 at 90 %).
    import solvsel
    from solvsel.science.robustness import target_spread

    fit = solvsel.fit(path="examples/bench_extract.csv")
    t = fit.target
    iv = fit.sphere.interval
    spread = target_spread(t)
    assert spread is not None
    for k, sd in zip(("dD", "dP", "dH"), spread.sd):
        lo, hi = iv[k]
        assert sd == pytest.approx((hi - lo) / (2 * 1.6448536), abs=2e-3)

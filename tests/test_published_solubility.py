"""The tool's answers against measured solubilities it was not built from.

Data: Vermeire, F.; Chung, Y.; Green, W. H. "Predicting Solubility Limits of Organic Solutes for a
Wide Range of Solvents and Temperatures", J. Am. Chem. Soc. 144 (2022) 10785-10797 (CombiSolu-Exp,
SolProp v1.2), read from ``../shared/data/external/solubility_combisolu/`` by
``bench/_published_data.py`` (the protocol is written there); the tests skip when the folder is absent.

Each figure of ``bench/bench_published.py`` is held within what was measured when the code was
written plus the stated margin (``MARGIN``), so a change that makes an answer worse against the
measurements fails here.  Settings were chosen on the ``dev`` solutes only; the ``heldout`` figures
are checked the same way (to keep them reproducible), never used to choose anything.  The sphere
figures (leave-one-out fits, a minute for a split) are tested on the first 3 ``dev`` solutes only.
"""

from __future__ import annotations

import sys
from pathlib import Path

import pytest

BENCH = Path(__file__).resolve().parent.parent / "bench"
sys.path.insert(0, str(BENCH))

import _published_data as data  # noqa: E402

pytestmark = pytest.mark.skipif(not data.available(), reason=f"published data not in {data.EXTERNAL}")

#: How far a figure may move from what was measured (median Spearman, RMS in log10 x, accuracy).
MARGIN = 0.03

#: Measured with the code of this change (structure estimates of 31 dev and 15 heldout solutes).
RANKING = {
    # predictor: (dev, heldout) median Spearman between measured log10 x and the predictor
    "ra": (0.394, 0.683),
    "hildebrand": (0.214, -0.067),
    "blind": (0.584, 0.611),
    "ra_same": (0.393, 0.683),
    "estimate": (0.438, 0.567),
    "estimate_hb_split": (0.226, 0.417),
    # solubility by UNIFAC with the Hansen estimate where it has no groups or parameters: modified UNIFAC
    # (Dortmund, 2016 table); the same with original UNIFAC before the Hansen estimate; modified UNIFAC 2.0
    # (table completed by machine learning); modified UNIFAC (NIST 2015).  "_alone": on the solutes with at
    # least 5 liquids covered, those liquids only; "_hansen_same": the Hansen estimate on the same liquids
    "unifac": (0.424, 0.567), "unifac_alone": (0.473, 0.450), "unifac_hansen_same": (0.417, 0.382),
    "unifac_original": (0.411, 0.622), "unifac_original_alone": (0.405, 0.525),
    "unifac_original_hansen_same": (0.472, 0.371),
    "unifac2": (0.491, 0.622), "unifac2_alone": (0.548, 0.445), "unifac2_hansen_same": (0.438, 0.371),
    "unifac_nist": (0.411, 0.622), "unifac_nist_alone": (0.409, 0.690), "unifac_nist_hansen_same": (0.503, 0.934),
}
#: Median RMS error in log10 x of the solubility estimate: (dev, heldout) and number of solutes.
ERRORS = {"measured": ((0.248, 4), (0.350, 2)), "walden": ((0.660, 22), (0.574, 12)),
          "hb_split": ((0.581, 26), (0.617, 14)),
          "unifac_measured": ((0.282, 4), (0.350, 2)), "unifac_walden": ((0.660, 22), (0.574, 12)),
          "unifac_alone": ((0.374, 11), (0.860, 3)), "unifac_hansen_same": ((0.394, 11), (0.706, 3)),
          "unifac_original_measured": ((0.268, 4), (0.447, 2)), "unifac_original_walden": ((0.660, 22), (0.574, 12)),
          "unifac_original_alone": ((0.365, 12), (0.643, 4)), "unifac_original_hansen_same": ((0.380, 12), (0.455, 4)),
          "unifac2_measured": ((0.262, 4), (0.787, 2)), "unifac2_walden": ((0.618, 22), (0.411, 12)),
          "unifac2_alone": ((0.569, 18), (0.411, 6)), "unifac2_hansen_same": ((0.621, 18), (0.587, 6)),
          "unifac_nist_measured": ((0.248, 4), (0.350, 2)), "unifac_nist_walden": ((0.660, 22), (0.628, 12)),
          "unifac_nist_alone": ((0.525, 5), (0.685, 3)), "unifac_nist_hansen_same": ((0.743, 5), (0.553, 3))}
#: What each UNIFAC table covers: solutes with groups, liquids with groups, pairs with groups and every
#: interaction parameter (of the rows of each split: dev, heldout).
COVERAGE = {"dortmund": (("19 of 31", "66 of 67", "178 of 534"), ("6 of 15", "67 of 67", "67 of 346")),
            "dortmund2": (("19 of 31", "66 of 67", "351 of 534"), ("6 of 15", "67 of 67", "146 of 346")),
            "nist": (("22 of 31", "66 of 67", "72 of 534"), ("7 of 15", "67 of 67", "68 of 346"))}
#: Sphere fits on the first 3 dev solutes (41 liquids): leave-one-out accuracy at the top-third split.
SPHERES = {"binary": 0.805, "graded_prior": 0.732}
MAJORITY_FIRST3 = 0.659


@pytest.fixture(scope="session")
def bench():
    import bench_published

    return bench_published


def test_solutes_merged_by_inchikey_and_split_as_published():
    # 46 solutes in split.csv, each with at least 8 liquids near 25 C (PROVENANCE.md)
    m = data.table(None)
    per = m.groupby("solute")["solvent"].nunique()
    assert len(per) == 46 and per.min() >= 8
    assert set(m["split"]) == {"dev", "heldout"}
    # paracetamol in water and toluene, 298 K, converted from g/kg: 14.90 and 0.37 g/kg (Granberg and
    # Rasmuson 1999, as the PROVENANCE spot check says) give x = 1.77e-3 and 2.26e-4
    assert data.mole_fraction(14.90, "g/kg(solvent)", 151.165, 18.015, 997.0) == pytest.approx(1.774e-3, rel=2e-3)
    assert data.mole_fraction(0.37, "g/kg(solvent)", 151.165, 92.141, 864.66) == pytest.approx(2.255e-4, rel=2e-3)


@pytest.mark.parametrize("split", ["dev", "heldout"])
@pytest.mark.parametrize("predictor", sorted(RANKING))
def test_ranking_figures(bench, split, predictor):
    got = bench.median(bench.ranking(split)[predictor])
    want = RANKING[predictor][0 if split == "dev" else 1]
    assert got == pytest.approx(want, abs=MARGIN)


@pytest.mark.parametrize("split", ["dev", "heldout"])
@pytest.mark.parametrize("kind", sorted(ERRORS))
def test_solubility_estimate_errors(bench, split, kind):
    d = bench.errors(split)[kind]
    want, n = ERRORS[kind][0 if split == "dev" else 1]
    assert len(d) == n
    assert bench.median(d) == pytest.approx(want, abs=MARGIN)


def test_estimate_ranks_better_than_ra_but_not_than_the_solute_blind_baseline(bench):
    # on dev the estimate (ideal x Flory-Huggins + Hansen) ranks a little better than -Ra, but below the
    # solute-blind ranking: the goal of 0.70 is not reached (the bench prints the numbers)
    r = bench.ranking("dev")
    assert bench.median(r["estimate"]) > bench.median(r["ra"])
    assert bench.median(r["estimate"]) < bench.median(r["blind"])


@pytest.mark.parametrize("split", ["dev", "heldout"])
@pytest.mark.parametrize("model", sorted(COVERAGE))
def test_unifac_coverage(bench, split, model):
    c = bench.unifac_coverage(split, model)
    assert (c["solutes"], c["liquids"], c["pairs"]) == COVERAGE[model][0 if split == "dev" else 1]


def test_unifac_does_not_reach_the_goal_on_dev(bench):
    # the goal (median Spearman >= 0.70 on dev, above the solute-blind ranking) is met by none of the UNIFAC
    # tables; the best, modified UNIFAC 2.0, ranks better than the Hansen estimate (alone on the liquids it
    # covers, and with the Hansen estimate elsewhere) but below the solute-blind ranking
    r = bench.ranking("dev")
    blind = bench.median(r["blind"])
    for name in bench.UNIFAC_CHAINS:
        assert bench.median(r[name]) < min(0.70, blind)
    assert bench.median(r["unifac2"]) > bench.median(r["estimate"])
    assert bench.median(r["unifac2_alone"]) > bench.median(r["unifac2_hansen_same"])


@pytest.mark.parametrize("kind", sorted(SPHERES))
def test_sphere_leave_one_out_on_the_first_three_dev_solutes(bench, kind):
    f = bench.spheres("dev", kind, 3)
    assert f["majority"] == pytest.approx(MAJORITY_FIRST3, abs=1e-3)
    assert f["loo"] == pytest.approx(SPHERES[kind], abs=MARGIN)
    if kind == "graded_prior":
        assert f["at_bound"] == 0  # the prior keeps every centre off the search bounds


@pytest.mark.parametrize("split, share", [("dev", 0.403), ("heldout", 0.292)])
def test_share_of_liquids_near_the_top_third_cut(bench, split, share):
    # why a sphere's leave-one-out accuracy stays under 0.80: two liquids in five on dev (three in ten on
    # heldout) lie within 0.1 decade (26 % in solubility) of their solute's top-third cut, so a sphere must
    # place them right on differences that small; measured with the code of this change
    assert bench.near_the_cut(split) == pytest.approx(share, abs=0.005)

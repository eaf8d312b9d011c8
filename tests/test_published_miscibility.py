"""Miscibility verdicts against the published chart in ../shared/data/external/miscibility_chart/.

The chart: a solvent supplier's published 32 x 32 miscibility chart as transcribed in the public
repository sustainable-processes/KG4DT (app/data/solvent_miscibility_table.csv, commit ccac3b63,
CC BY-NC 4.0); the six doubtful cells of its PROVENANCE.md left out, "partial" scored as not
miscible.  The figures are those measured with ``bench/published_miscibility.py`` once the
prediction used UNIFAC from the liquids' structures (the order of the parameter sets and the
decisive-"no" level chosen on tables/miscibility.csv, never on the chart), each kept within a
small margin so a change of the model or the tables shows here.  The goals of the
published-data issue (accuracy 0.95 with 85 % of the immiscible pairs found) are reached by the
prediction alone; Flory-Huggins from HSP alone, the baseline, does not reach them.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from _scripts import load_script

ROOT = Path(__file__).resolve().parents[1]
CHART = ROOT.parent / "shared" / "data" / "external" / "miscibility_chart" / "solvent_miscibility_table.csv"

pytestmark = pytest.mark.skipif(not CHART.is_file(), reason="the published miscibility chart is not in ../shared")

#: Measured on 490 pairs (41 immiscible); margins: 0.01 on a share, 1 on a count.
MEASURED = {
    "prediction": {"accuracy": 0.965, "immiscible_found": 1.000, "immiscible_answered_no": 0.463,
                   "miscible_answered_no": 0, "answered_no": 19},
    "final": {"accuracy": 0.967, "immiscible_found": 1.000, "immiscible_answered_no": 0.390,
              "miscible_answered_no": 0, "answered_no": 16},
    "hansen": {"accuracy": 0.847, "immiscible_found": 1.000, "immiscible_answered_no": 0.268,
               "miscible_answered_no": 0, "answered_no": 11},
}
#: The issue's goals for the prediction alone.
GOALS = {"accuracy": 0.95, "immiscible_found": 0.85}


@pytest.fixture(scope="module")
def figures():
    return load_script("bench/published_miscibility.py").miscibility_figures(CHART.parent)


def test_the_chart_as_scored(figures):
    # 32 liquids: 496 pairs, 6 doubtful cells out; 47 immiscible cells, all 6 doubtful ones among them
    assert figures["pairs"] == 490 and figures["immiscible"] == 41
    assert figures["always_miscible"] == pytest.approx(449 / 490)


@pytest.mark.parametrize("answer", ["prediction", "final", "hansen"])
def test_figures_stay_where_they_were_measured(figures, answer):
    got, want = figures[answer], MEASURED[answer]
    for key, value in want.items():
        margin = 1 if isinstance(value, int) else 0.01
        assert abs(got[key] - value) <= margin, (answer, key, got[key], value)


def test_the_decisive_no_is_said_and_rarely_wrong(figures):
    # before the decisive "no" the prediction never said "no" on the chart (the measurement)
    p = figures["prediction"]
    assert p["answered_no"] >= 10
    assert p["miscible_answered_no"] <= 0.1 * p["answered_no"]


def test_the_prediction_alone_meets_the_goals_and_beats_both_baselines(figures):
    p, h = figures["prediction"], figures["hansen"]
    assert p["accuracy"] >= GOALS["accuracy"] and p["immiscible_found"] >= GOALS["immiscible_found"]
    assert p["accuracy"] > figures["always_miscible"] and p["accuracy"] > h["accuracy"]
    # UNIFAC answers nearly every pair of the chart (pure liquids); Flory-Huggins only where no
    # parameter set covers both structures
    assert figures["models"].get("Flory-Huggins from HSP", 0) <= 10

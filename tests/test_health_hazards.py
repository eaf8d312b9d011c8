"""Health hazards beyond fire: the harmonised statements of every liquid, shown in rank and blend,
in the cautions and as a limit of the pool.

Published values checked here (tables/sources.csv has the addresses, read 2026-12-05):
- dichloromethane: Carc. 2, H351 (Regulation (EC) No 1272/2008 Annex VI, index 602-004-00-3;
  confirmed in the GisChem compilation, source ``health_gischem_dcm``);
- methanol: Acute Tox. 3 H301, H311, H331 and STOT SE 1 H370 (Annex VI, index 603-001-00-X;
  GisChem, source ``health_gischem_methanol``);
- chloroform: H302 H315 H319 H331 H351 H361d H372 (Annex VI, index 602-006-00-4, as amended by
  Regulation (EU) No 944/2013; University of Hamburg list, source ``health_claks_chloroform``);
- n-hexane: H304 H315 H336 H361f H373 (Annex VI, index 601-037-00-0; GisChem, ``health_gischem_hexane``;
  INRS sheet n° 113, ``health_inrs_hexane``);
- toluene: H304 H315 H336 H361d H373 (Annex VI, index 601-021-00-3; GisChem, ``health_gischem_toluene``;
  INRS sheet n° 74, ``health_inrs_toluene``).
- diethyl ether: H302 H336 (Annex VI, index 603-022-00-4, nothing added; GisChem, ``health_gischem_diethyl_ether``);
- tetrahydrofuran: H319 H335 H351 (Annex VI as amended by Regulation (EU) No 618/2012; University of Hamburg
  list, ``health_claks_thf``; GisChem adds H302 and H336 from suppliers' data, ``health_gischem_thf``);
- methyl isobutyl ketone: H319 H332 H335 (Annex VI, index 606-004-00-4; GisChem, ``health_gischem_mibk``);
- acetone: H319 H336 (Annex VI, index 606-001-00-8; secondary compilation of the ECHA data,
  ``health_annexvi_acetone_secondary``);
- ethanol: no health hazard class (Annex VI, index 603-002-00-5: Flam. Liq. 2 only; ECHA C&L Inventory,
  ``health_echa_ethanol``).
- cyclohexane: H304 H315 H336 (Annex VI, index 601-017-00-1; INRS substance sheet n° 17, ``health_inrs_cyclohexane``);
- acetonitrile: H302 H312 H319 H332 (Annex VI, index 608-001-00-3; INRS substance sheet n° 104,
  ``health_inrs_acetonitrile``);
- 1-butanol: H302 H315 H318 H335 H336 (Annex VI, index 603-004-00-6; INRS substance sheet n° 80,
  ``health_inrs_1_butanol``);
- ethyl acetate: H319 H336 (Annex VI, index 607-022-00-5; INRS sheet n° 18, ``health_inrs_ethyl_acetate``);
- isopropanol: H319 H336 (Annex VI, index 603-117-00-0; INRS sheet n° 66, ``health_inrs_isopropanol``);
- methyl ethyl ketone: H319 H336 (Annex VI, index 606-002-00-3; INRS sheet n° 14, ``health_inrs_mek``);
- acetic acid: H314 (Annex VI, index 607-002-00-6, Skin Corr. 1A; quoted on the agency's registration pages,
  ``health_echa_acetic_acid``);
- N,N-dimethylformamide: H312 H319 H332 H360D (CLP statements listed by the INRS exposure tool, a safety data
  compilation, ``health_inrs_dmf``);
- ethylene glycol: H302 (Annex VI, index 603-027-00-1; INRS sheet n° 25, ``health_inrs_ethylene_glycol``);
- p-xylene: H312 H315 H332 (Annex VI, index 601-022-00-9; INRS sheet n° 77, ``health_inrs_xylenes``).
Exposure limits and carcinogen listings are compared with the reference library ``chemicals``.
"""

from __future__ import annotations

import csv
import json
from pathlib import Path

import pytest

from solvsel.data.catalog import load_catalog
from solvsel.errors import InputError
from solvsel.jobs.blend import blend
from solvsel.jobs.rank import rank
from solvsel.rules.cautions import solvent_cautions
from solvsel.rules.hazards import HEALTH_LEVELS, health_hazard, health_level

TABLES = Path(__file__).resolve().parents[1] / "tables"

PUBLISHED = {
    "dichloromethane": {"H351"},
    "methanol": {"H301", "H311", "H331", "H370"},
    "chloroform": {"H302", "H315", "H319", "H331", "H351", "H361d", "H372"},
    "n-hexane": {"H304", "H315", "H336", "H361f", "H373"},
    "toluene": {"H304", "H315", "H336", "H361d", "H373"},
    "diethyl ether": {"H302", "H336"},
    "tetrahydrofuran": {"H319", "H335", "H351"},
    "methyl isobutyl ketone": {"H319", "H332", "H335"},
    "acetone": {"H319", "H336"},
    "ethanol": set(),
    "cyclohexane": {"H304", "H315", "H336"},  # INRS sheet n° 17 (health_inrs_cyclohexane)
    "acetonitrile": {"H302", "H312", "H319", "H332"},  # INRS sheet n° 104 (health_inrs_acetonitrile)
    "1-butanol": {"H302", "H315", "H318", "H335", "H336"},  # INRS sheet n° 80 (health_inrs_1_butanol)
    "ethyl acetate": {"H319", "H336"},  # INRS sheet n° 18 (health_inrs_ethyl_acetate)
    "isopropanol": {"H319", "H336"},  # INRS sheet n° 66 (health_inrs_isopropanol)
    "methyl ethyl ketone": {"H319", "H336"},  # INRS sheet n° 14 (health_inrs_mek)
    "acetic acid": {"H314"},  # agency's registration pages quoting Annex VI (health_echa_acetic_acid)
    "ethylene glycol": {"H302"},  # INRS sheet n° 25 (health_inrs_ethylene_glycol)
    "p-xylene": {"H312", "H315", "H332"},  # INRS sheet n° 77 (health_inrs_xylenes)
}

#: Statements read in a safety data compilation that does not say they are the Annex VI entry.
COMPILED = {
    "N,N-dimethylformamide": {"H312", "H319", "H332", "H360D"},  # INRS exposure tool (health_inrs_dmf)
}


@pytest.fixture(scope="module")
def cat():
    return load_catalog()


def test_every_liquid_has_its_health_row():
    with open(TABLES / "solvents.csv", encoding="utf-8") as fh:
        liquids = {r["name"]: r["cas"] for r in csv.DictReader(fh)}
    with open(TABLES / "health_hazards.csv", encoding="utf-8") as fh:
        rows = {r["name"]: r for r in csv.DictReader(fh)}
    assert set(rows) == set(liquids)
    for name, row in rows.items():
        assert row["cas"] == liquids[name]
        codes = [c for c in row["statements"].split(";") if c]
        assert all(c[:2] == "H3" for c in codes), name  # health statements only
        if row["basis"] == "none harmonised":
            assert not codes, name


@pytest.mark.parametrize("name", sorted(PUBLISHED))
def test_published_statements(cat, name):
    hh = health_hazard(cat, cat.solvent(name))
    assert set(hh.statements) == PUBLISHED[name]
    assert hh.basis == "harmonised" and hh.confidence == "checked"


@pytest.mark.parametrize("name", sorted(COMPILED))
def test_statements_from_a_safety_data_compilation(cat, name):
    hh = health_hazard(cat, cat.solvent(name))
    assert set(hh.statements) == COMPILED[name]
    assert hh.basis == "safety data compilation" and hh.confidence == "checked"


def test_dichloromethane_shows_its_carcinogenicity_in_rank_and_blend(cat):
    r = rank(hsp=(18.2, 6.3, 6.1), only=("dichloromethane", "ethyl acetate"), use="bench")
    row = next(x for x in r.results if x.name == "dichloromethane")
    assert "H351" in row.health_hazard["statements"] and row.health_hazard["category"] == "suspected CMR"
    assert "suspected of causing cancer" in row.health_hazard["texts"]["H351"]
    assert any("H351 suspected of causing cancer" in c for c in r.cautions)
    b = blend(hsp=(18.2, 6.3, 6.1), only=("dichloromethane",), max_components=1, use="bench").to_dict()
    assert b["results"][0]["health_hazard"]["category"] == "suspected CMR"
    assert "H351" in b["results"][0]["health_hazard"]["liquids"]["dichloromethane"]


def test_methanol_shows_its_toxicity_in_the_cautions(cat):
    cautions = solvent_cautions(cat.solvent("methanol"), cat=cat)
    line = next(c for c in cautions if "health hazard" in c)
    for code in ("H301", "H311", "H331", "H370"):
        assert code in line
    assert "toxic or corrosive" in line


def test_exposure_limits_and_carcinogen_listings_come_from_the_reference_library(cat):
    from chemicals import safety

    hh = health_hazard(cat, cat.solvent("methanol"))
    assert hh.exposure_limits["TWA"] == list(safety.TWA("67-56-1"))
    assert hh.exposure_limits["source"] == safety.TWA_methods("67-56-1")[0]
    dcm = health_hazard(cat, cat.solvent("dichloromethane"))
    want = {k: v for k, v in safety.Carcinogen("75-09-2").items() if v != "Unlisted"}
    assert dcm.carcinogen_listings == want and want


def test_the_scale_orders_the_statements():
    assert [health_level(s) for s in ([], ["H315"], ["H302"], ["H301"], ["H351"], ["H350"])] == [0, 1, 2, 3, 4, 5]
    assert HEALTH_LEVELS[health_level(["H361d", "H304"])] == "suspected CMR"


def test_the_pool_keeps_only_liquids_within_the_worst_health_hazard(cat):
    r = rank(hsp=(17.0, 6.0, 8.0), all=True, max_health_hazard="harmful")
    names = {x.name for x in r.results}
    assert not names & {"dichloromethane", "methanol", "chloroform", "n-hexane", "toluene"}
    assert all(x.health_hazard["level"] <= 2 for x in r.results)
    left = {d.name: d.reason for d in r.dropped if d.filter == "hazard"}
    assert "H351" in left["dichloromethane"] and "worse than 'harmful'" in left["dichloromethane"]
    b = blend(hsp=(17.0, 6.0, 8.0), max_health_hazard="irritant", top=5)
    assert all(x["health_hazard"]["level"] <= 1 for x in b.to_dict()["results"])


def test_the_command_line_gives_the_library_answer_and_names_its_option(capsys):
    from solvsel.cli import main

    assert main(["rank", "--hsp", "17,6,8", "--max-health-hazard", "harmful", "--top", "5", "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    want = rank(hsp=(17.0, 6.0, 8.0), max_health_hazard="harmful", top=5).to_dict()
    assert [(x["name"], x["health_hazard"]) for x in doc["results"]] == \
        [(x["name"], x["health_hazard"]) for x in want["results"]]
    assert main(["blend", "--hsp", "17,6,8", "--max-health-hazard", "worst", "--json"]) == 2
    err = json.loads(capsys.readouterr().out)["error"]
    assert err["param"] == "--max-health-hazard" and "suspected CMR" in err["expected"]


def test_a_bad_level_is_refused_by_the_request():
    with pytest.raises(InputError) as exc:
        rank(hsp=(17.0, 6.0, 8.0), max_health_hazard="deadly")
    assert exc.value.param == "max_health_hazard"

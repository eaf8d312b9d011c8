"""Measured pairs of tables/miscibility.csv against the published texts they were read from.

Each expected value below was taken from the text named beside it (read on 2026-12-05; the address is in the
source's citation in tables/sources.csv).  The table is read with the csv module, so these checks stand apart from
the code that uses the rows; the last checks run the library (the pair verdict, the load job and the blend phase
check) to show the rows are what the answers rest on.
"""

from __future__ import annotations

import csv

import pytest

import solvsel
from solvsel.data.catalog import TABLES_DIR, load_catalog
from solvsel.science import miscibility as M

PAIRS = list(csv.DictReader(open(TABLES_DIR / "miscibility.csv", encoding="utf-8")))
SOURCES = {r["id"]: r for r in csv.DictReader(open(TABLES_DIR / "sources.csv", encoding="utf-8"))}


def _row(a: str, b: str, temp_C: float) -> dict:
    hits = [r for r in PAIRS if {r["liquid_a"], r["liquid_b"]} == {a, b} and float(r["temp_C"]) == temp_C]
    assert len(hits) == 1, (a, b, temp_C, hits)
    return hits[0]


def _sources(r: dict) -> set[str]:
    return set(r["source"].split(";"))


#: (liquid a, liquid b, temperature [C]) -> (one_phase, source id), as the cited text says.
STATEMENTS = {
    # HSDB, as quoted on the supplier's page (pairs_hsdb_benzyl_alcohol): "miscible with absolute and 94 % alcohol,
    # ether, chloroform"
    ("benzyl alcohol", "diethyl ether", 25.0): ("full", "pairs_hsdb_benzyl_alcohol"),
    ("benzyl alcohol", "chloroform", 25.0): ("full", "pairs_hsdb_benzyl_alcohol"),
    # The Merck Index, Olive oil (misc_merck_olive_oil): "slightly soluble in alcohol"
    ("ethanol", "olive oil", 25.0): ("partial", "misc_merck_olive_oil"),
    # J. Chem. Eng. Data 53 (2008) 359 abstract (pairs_jced2008_soybean_ethanol): "when the temperature increases to
    # 343.15 K, the soybean oil + ethanol mixture becomes a homogeneous phase"
    ("ethanol", "soybean oil", 70.0): ("full", "pairs_jced2008_soybean_ethanol"),
    # J. Chem. Eng. Data 55 (2010) 2750 abstract (pairs_jced2010_oils_ethanol): liquid-liquid equilibrium of soybean
    # oil + anhydrous ethanol determined from 298.15 to 333.15 K, so two liquid phases at 333.15 K
    ("ethanol", "soybean oil", 60.0): ("partial", "pairs_jced2010_oils_ethanol"),
}


@pytest.mark.parametrize("key", sorted(STATEMENTS), ids=lambda k: f"{k[0]}+{k[1]}@{k[2]:g}C")
def test_pair_says_what_its_text_says(key):
    one_phase, source = STATEMENTS[key]
    r = _row(*key)
    assert r["one_phase"] == one_phase
    assert source in _sources(r)
    assert r["b_in_a_wt"] == r["a_in_b_wt"] == ""  # the texts give no compositions


def test_olive_oil_in_absolute_ethanol_as_villavecchia_gives_it():
    # Villavecchia, Treatise on Applied Analytical Chemistry (1918), Olive oil (misc_villavecchia_olive_ethanol):
    # "about 15 grams of the oil dissolve in 1000 c.c. of absolute alcohol at 13-15 C"; absolute ethanol weighs
    # 0.790 to 0.800 g/cm3 at those temperatures, so 15 g in 1000 cm3 is 1.84 to 1.86 wt %
    r = _row("ethanol", "olive oil", 14.0)
    low, high = (100 * 15 / (15 + 1000 * rho) for rho in (0.800, 0.790))
    assert r["liquid_a"] == "ethanol" and low <= float(r["b_in_a_wt"]) <= high
    # Kaparthi and Chari 1959 (misc_kaparthi1959): less than 10 g of oil in 100 g of absolute ethanol at ordinary
    # temperatures, i.e. below 100 * 10 / 110 = 9.1 wt %
    assert float(r["b_in_a_wt"]) < 100 * 10 / 110


#: Mutual solubilities with water from the IUPAC-NIST Solubility Data Series 69 (Skrzecz, Shaw and Maczynski 1999,
#: critical evaluations in the IUPAC-NIST Solubility Database): (liquid, temperature [C]) -> (mole fraction of the
#: liquid in its own phase, in the water-rich phase, molar mass [g/mol], source id).  Benzyl alcohol's entry is a
#: compiled measurement given as mass fractions there (Susarev and Gorbunov 1963): 0.9080 and 0.0420.
IUPAC_NIST_WATER = {
    ("1-butanol", 25.0): (0.488, 0.0191, 74.12, "pairs_sds69_1butanol"),
    ("1-octanol", 25.0): (0.742, 7.5e-5, 130.23, "pairs_sds69_1octanol"),
    ("2-butanol", 30.0): (0.318, 0.0491, 74.12, "pairs_sds69_2butanol"),
}


def _mass_pct(x: float, mw: float, mw_water: float = 18.015) -> float:
    return 100.0 * x * mw / (x * mw + (1.0 - x) * mw_water)


@pytest.mark.parametrize("key", sorted(IUPAC_NIST_WATER), ids=lambda k: k[0])
def test_water_pairs_from_the_iupac_nist_evaluations(key):
    x_own, x_water, mw, src = IUPAC_NIST_WATER[key]
    r = _row(key[0], "water", key[1])
    assert src in _sources(r)
    # water in the liquid, the liquid in water [wt %]; three significant figures as the table holds them
    assert float(r["b_in_a_wt"]) == pytest.approx(100.0 - _mass_pct(x_own, mw), rel=5e-3)
    assert float(r["a_in_b_wt"]) == pytest.approx(_mass_pct(x_water, mw), rel=5e-3)


def test_benzyl_alcohol_with_water_as_compiled():
    # IUPAC-NIST Solubility Database, benzyl alcohol + toluene + water, binary ends at 20 C (pairs_sds69_benzyl_alcohol)
    r = _row("benzyl alcohol", "water", 20.0)
    assert float(r["b_in_a_wt"]) == pytest.approx(100.0 * (1.0 - 0.9080))
    assert float(r["a_in_b_wt"]) == pytest.approx(100.0 * 0.0420)


def test_sources_of_the_pairs_carry_their_address_and_date_read():
    ids = {s for r in PAIRS for s in _sources(r) if s.startswith("pairs_")} | {
        s for s in SOURCES if s.startswith("pairs_")}
    assert ids, "no pair read from a published text"
    for s in ids:
        row = SOURCES[s]
        assert row["url"].startswith("http") and "read 2026-12-05" in row["citation"], s


# ----------------------------------------------------------------------------- what the answers rest on


@pytest.fixture(scope="module")
def cat():
    return load_catalog()


def test_oil_in_ethanol_at_two_temperatures_within_the_published_figures(cat):
    # 14 C: olive oil in absolute ethanol 1.84-1.86 wt % (Villavecchia 1918, 15 g per litre at 13-15 C)
    cold = M.pair(cat, "ethanol", "olive oil", 14.0)
    assert cold.basis == "measured" and cold.one_phase == "partial"
    assert 0.0184 <= cold.window["b_in_a_max"] <= 0.0186
    # 70 C: soybean oil and ethanol one phase at 343.15 K (J. Chem. Eng. Data 2008), two phases at 333.15 K (2010)
    hot = M.pair(cat, "ethanol", "soybean oil", 70.0)
    assert hot.basis == "measured" and hot.one_phase == "yes"
    warm = M.pair(cat, "soybean oil", "ethanol", 60.0)  # either order
    assert warm.basis == "measured" and warm.one_phase == "partial"


def test_the_load_job_reads_the_measured_oil_rows():
    # 1 % olive oil dissolves at 14 C, 5 % does not (the limit 1.85 wt %, Villavecchia 1918)
    ok = solvsel.load(solute="olive oil", carrier=("ethanol",), load=0.01, storage_C=(14, 14))
    too_much = solvsel.load(solute="olive oil", carrier=("ethanol",), load=0.05, storage_C=(14, 14))
    assert (ok.verdict, too_much.verdict) == ("yes", "no")
    assert ok.largest_load == pytest.approx(0.0185) and ok.check.basis == "measured pair"
    # half soybean oil in ethanol at 70 C: one phase, as measured (J. Chem. Eng. Data 2008)
    hot = solvsel.load(solute="soybean oil", carrier=("ethanol",), load=0.5, storage_C=(70, 70))
    assert hot.verdict == "yes" and "pairs_jced2008_soybean_ethanol" in hot.check.points[0].sources


def test_the_blend_phase_check_reads_the_measured_oil_rows(cat):
    at70 = M.blend_phase(cat, ["ethanol", "soybean oil"], [0.5, 0.5], 70.0)
    at60 = M.blend_phase(cat, ["ethanol", "soybean oil"], [0.5, 0.5], 60.0)
    assert (at70.one_phase, at70.basis, at60.one_phase, at60.basis) == (True, "measured", False, "measured")
    little = M.blend_phase(cat, ["ethanol", "olive oil"], [0.99, 0.01], 14.0)
    more = M.blend_phase(cat, ["ethanol", "olive oil"], [0.95, 0.05], 14.0)
    assert little.one_phase and not more.one_phase and more.basis == "measured"

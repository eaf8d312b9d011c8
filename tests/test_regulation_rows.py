"""The legal rows of tables/regulations.csv against the texts they were read from.

Each expected value below was taken from the text named beside it (read on 2026-12-05); the
tests read the CSV with the csv module only, so they stand apart from the code that uses the rows.
A row added, dropped or changed in the table without the text saying so fails here.
"""

from __future__ import annotations

import csv

import pytest

from solvsel.data.catalog import TABLES_DIR

ROWS = list(csv.DictReader(open(TABLES_DIR / "regulations.csv", encoding="utf-8")))
PURPOSES = {r["id"] for r in csv.DictReader(open(TABLES_DIR / "purposes.csv", encoding="utf-8"))}


def _limit(value: str):
    return None if value == "" else float(value)


def _key(r: dict) -> tuple:
    return (r["substance"], r["rule"], r["purposes"], r["food_category"])


def _value(r: dict) -> tuple:
    return (_limit(r["limit"]), r["unit"], r["applies_to"])


def _purposes(r: dict) -> set[str]:
    return set(r["purposes"].split(";")) if r["purposes"] else set()


# ----------------------------------------------------------------------------- Directive 2009/32/EC Annex I
# Parts I and II: Scottish SSI 2013/266 Schedule 6 Tables 2-3 (https://legislation.gov.uk/ssi/2013/266/schedule/6/data.html)
# and the German ElmV Anlage 2 as amended for Directive (EU) 2023/175
# (https://www.gesetze-im-internet.de/elv/BJNR021000991.html, http://www.gesetze-im-internet.de/elv/anlage_2.html).
# Part III: ElmV Anlage 3 (https://gesetze.legal/bund/elmv/anlage_3 and a current copy with 2-methyloxolane) and the
# French arrêté of 27 August 2009 (https://juriblio.fr/arretes/arrete-du-27-aout-2009/155247505/annexe).
P1, P2, P3 = "Dir. 2009/32/EC Annex I Part I", "Dir. 2009/32/EC Annex I Part II", "Dir. 2009/32/EC Annex I Part III"
P2_DME = P2 + " (added by Dir. 2010/59/EU)"
P2_MEOX, P3_MEOX = P2 + " (added by Dir. (EU) 2023/175)", P3 + " (added by Dir. (EU) 2023/175)"
GMP = (None, "", "status")


def _res(limit: float) -> tuple:
    return (limit, "mg/kg", "food residue")


ANNEX_I = {
    # Part I: good manufacturing practice for all uses (acetone: not for refining olive-pomace oil)
    **{(s, P1, "all", "food"): GMP for s in ("propane", "butane", "ethyl acetate", "ethanol", "carbon dioxide",
                                             "acetone", "nitrous oxide")},
    # Part II: named uses and maximum residues in the extracted food
    ("hexane", P2, "fats_oils", "fats and oils"): _res(1),
    ("hexane", P2, "defatted_protein", "defatted protein products and flours"): _res(10),
    ("hexane", P2, "defatted_protein", "defatted soya products"): _res(30),
    ("hexane", P2, "defatted_cereal_germ", "defatted cereal germs"): _res(5),
    ("2-methyloxolane", P2_MEOX, "fats_oils", "fats and oils"): _res(1),
    ("2-methyloxolane", P2_MEOX, "defatted_protein", "defatted protein products and flours"): _res(10),
    ("2-methyloxolane", P2_MEOX, "defatted_protein", "defatted soya products"): _res(30),
    ("2-methyloxolane", P2_MEOX, "defatted_cereal_germ", "defatted cereal germs"): _res(5),
    ("methyl acetate", P2, "decaffeination", "coffee"): _res(20),
    ("methyl acetate", P2, "decaffeination", "tea"): _res(20),
    ("methyl acetate", P2, "sugar", "sugar"): _res(1),
    ("ethyl methyl ketone", P2, "fats_oils", "fats and oils"): _res(5),
    ("ethyl methyl ketone", P2, "decaffeination", "coffee"): _res(20),
    ("ethyl methyl ketone", P2, "decaffeination", "tea"): _res(20),
    # footnote: n-hexane in ethyl methyl ketone at most 50 mg/kg, for every use of the solvent
    ("ethyl methyl ketone", P2, "fats_oils;decaffeination;natural_flavouring", "food"): GMP,
    ("dichloromethane", P2, "decaffeination", "coffee"): _res(2),  # in the roasted coffee
    ("dichloromethane", P2, "decaffeination", "tea"): _res(5),
    ("methanol", P2, "all", "food"): _res(10),
    ("propan-2-ol", P2, "all", "food"): _res(10),
    ("dimethyl ether", P2_DME, "defatted_protein", "defatted animal protein products"): _res(0.009),
    ("dimethyl ether", P2_DME, "collagen", "collagen"): _res(3),
    # Part III: flavourings from natural flavouring materials, residue in the flavoured food
    **{(s, P3, "natural_flavouring", "food"): _res(v) for s, v in (
        ("diethyl ether", 2), ("hexane", 1), ("cyclohexane", 1), ("methyl acetate", 1), ("butan-1-ol", 1),
        ("butan-2-ol", 1), ("ethyl methyl ketone", 1), ("dichloromethane", 0.02), ("propan-1-ol", 1),
        ("propan-2-ol", 1), ("methanol", 1.5), ("1,1,1,2-tetrafluoroethane", 0.02))},
    ("2-methyloxolane", P3_MEOX, "natural_flavouring", "food"): _res(1),
}
ANNEX_I_ROWS = [r for r in ROWS if r["rule"].startswith("Dir. 2009/32/EC Annex I")]


@pytest.mark.parametrize("row", ANNEX_I_ROWS, ids=lambda r: f"{r['substance']}|{r['rule'][15:]}|{r['purposes']}|{r['food_category']}")
def test_annex_i_row_matches_the_text(row):
    assert row["jurisdiction"] == "EU" and row["use"] == "extraction"
    assert _key(row) in ANNEX_I, "row not in Directive 2009/32/EC Annex I as read"
    assert _value(row) == ANNEX_I[_key(row)]
    assert row["status"] == ("GMP" if _key(row)[1] == P1 else "limit")


def test_every_annex_i_entry_has_its_row():
    assert sorted(ANNEX_I) == sorted(_key(r) for r in ANNEX_I_ROWS)


def _eu_extraction_purposes() -> dict[str, set[str]]:
    """Purposes each liquid is authorised for as an EU extraction solvent (Annex I and food solvents)."""
    out: dict[str, set[str]] = {}
    for r in ROWS:
        if r["jurisdiction"] == "EU" and r["use"] == "extraction" and r["status"] in ("GMP", "limit"):
            out.setdefault(r["substance"], set()).update(_purposes(r))
    return out


def test_each_annex_i_solvent_is_allowed_for_its_listed_purposes_only():
    # union over the solvent's rows of Parts I-III: the uses the Directive names for it, no others
    got = _eu_extraction_purposes()
    assert got["dichloromethane"] == {"decaffeination", "natural_flavouring"}  # Part II coffee/tea; Part III
    assert got["hexane"] == {"fats_oils", "defatted_protein", "defatted_cereal_germ", "natural_flavouring"}
    assert got["2-methyloxolane"] == {"fats_oils", "defatted_protein", "defatted_cereal_germ", "natural_flavouring"}
    assert got["methyl acetate"] == {"decaffeination", "sugar", "natural_flavouring"}
    assert got["ethyl methyl ketone"] == {"fats_oils", "decaffeination", "natural_flavouring"}
    assert got["dimethyl ether"] == {"defatted_protein", "collagen"}
    for part_iii_only in ("diethyl ether", "butan-1-ol", "butan-2-ol", "cyclohexane", "propan-1-ol",
                          "1,1,1,2-tetrafluoroethane"):
        assert got[part_iii_only] == {"natural_flavouring"}, part_iii_only
    for part_i in ("propane", "butane", "ethyl acetate", "ethanol", "carbon dioxide", "acetone", "nitrous oxide"):
        assert got[part_i] == {"all"}, part_i


def test_cannabinoid_extract_for_food_eu():
    # A botanical extract for food (purpose food_ingredient): Part I solvents (and Part II "all uses" methanol and
    # propan-2-ol, 10 mg/kg) are authorised; the solvents of restricted Part II uses and of Part III are not.
    allowed = {s for s, p in _eu_extraction_purposes().items() if "all" in p or "food_ingredient" in p}
    for s in ("ethanol", "ethyl acetate", "acetone", "carbon dioxide", "propane", "butane"):
        assert s in allowed, s
    for s in ("dichloromethane", "butan-1-ol", "butan-2-ol", "diethyl ether", "hexane", "methyl acetate",
              "2-methyloxolane", "cyclohexane"):
        assert s not in allowed, s
    # the same liquids for a flavouring from natural source materials (Part III): 1-butanol at most 1 mg/kg
    butanol = [r for r in ANNEX_I_ROWS if r["substance"] == "butan-1-ol" and "natural_flavouring" in _purposes(r)]
    assert [(_limit(r["limit"]), r["unit"], r["applies_to"]) for r in butanol] == [(1.0, "mg/kg", "food residue")]


def test_water_and_edible_oils_are_eu_extraction_solvents():
    # NISR 2013/220 reg. 11 (transposing Directive 2009/32/EC): water and food substances with solvent
    # properties are permitted besides Annex I
    got = _eu_extraction_purposes()
    for s in ("water", "sunflower oil", "olive oil", "rapeseed oil", "soybean oil", "corn oil", "medium-chain triglycerides"):
        assert got[s] == {"all"}, s


# ----------------------------------------------------------------------------- 21 CFR 173 Subpart C
# FDA CFR pages (current as of 22 Dec 2023): 173.210, 173.220, 173.228
# (https://www.accessdata.fda.gov/scripts/cdrh/cfdocs/cfcfr/CFRSearch.cfm?CFRPart=173&showFR=1&subpartNode=21:3.0.1.1.4.3),
# 173.240 (...CFRSearch.cfm?fr=173.240), 173.290 (...CFRSearch.cfm?fr=173.290); 173.255 GPO 2001 edition
# (https://webarchive.library.unt.edu/eot2008/20090113152126/http://edocket.access.gpo.gov/cfr_2001/aprqtr/21cfr173.255.htm);
# 173.230 (https://lexbuild.dev/ecfr/title-21/chapter-I/part-173/section-173.230), 173.270 and 173.280
# (https://qualomics.com/ecfr/?node=21%3A3.0.1.1.4.3.1.8 and ...1.10), 173.250 (copy of the section text).
def _ext(limit: float, unit: str = "ppm") -> tuple:
    return (limit, unit, "extract residue")


def _food(limit: float) -> tuple:
    return (limit, "ppm", "food residue")


CFR_173 = {
    ("acetone", "21 CFR 173.210", "spice_oleoresin", "food"): _ext(30),
    ("1,3-butylene glycol", "21 CFR 173.220", "flavouring;carrier_flavouring", "food"): GMP,
    ("ethyl acetate", "21 CFR 173.228", "decaffeination", "food"): GMP,
    ("ethylene dichloride", "21 CFR 173.230", "spice_oleoresin", "food"): _ext(30),
    ("isopropyl alcohol", "21 CFR 173.240", "spice_oleoresin", "food"): _ext(50),
    ("isopropyl alcohol", "21 CFR 173.240", "lemon_oil", "food"): (6.0, "ppm", "flavouring residue"),
    ("isopropyl alcohol", "21 CFR 173.240", "hop_extract", "food"): _ext(2.0, "%w/w"),
    ("methyl alcohol", "21 CFR 173.250", "spice_oleoresin", "food"): _ext(50),
    ("methyl alcohol", "21 CFR 173.250", "hop_extract", "food"): _ext(2.2, "%w/w"),
    ("methylene chloride", "21 CFR 173.255", "spice_oleoresin", "food"): _ext(30),
    ("methylene chloride", "21 CFR 173.255", "hop_extract", "food"): _ext(2.2, "%w/w"),
    ("methylene chloride", "21 CFR 173.255", "decaffeination", "coffee"): _food(10),
    ("hexane", "21 CFR 173.270", "spice_oleoresin", "food"): _ext(25),
    ("hexane", "21 CFR 173.270", "hop_extract", "food"): _ext(2.2, "%w/w"),
    ("n-octyl alcohol", "21 CFR 173.280", "citric_acid", "citric acid"): _food(16),
    ("synthetic isoparaffinic petroleum hydrocarbons", "21 CFR 173.280", "citric_acid", "citric acid"): _food(0.47),
    ("tridodecylamine", "21 CFR 173.280", "citric_acid", "citric acid"): _food(0.1),  # 100 parts per billion
    ("trichloroethylene", "21 CFR 173.290", "decaffeination", "coffee"): None,  # two rows: 25 and 10 ppm
    ("trichloroethylene", "21 CFR 173.290", "spice_oleoresin", "food"): _ext(30),
}
TCE_COFFEE = [_food(25), _food(10)]  # 173.290: decaffeinated ground coffee; soluble (instant) coffee extract
CFR_173_ROWS = [r for r in ROWS if r["rule"].startswith("21 CFR 173.")]


@pytest.mark.parametrize("row", CFR_173_ROWS, ids=lambda r: f"{r['substance']}|{r['rule']}|{r['purposes']}|{r['limit']}")
def test_cfr_173_row_matches_the_text(row):
    assert row["jurisdiction"] == "US"
    assert _key(row) in CFR_173, "row not in 21 CFR 173 Subpart C as read"
    want = CFR_173[_key(row)]
    assert _value(row) in TCE_COFFEE if want is None else _value(row) == want


def test_every_cfr_173_entry_has_its_row():
    keys = [_key(r) for r in CFR_173_ROWS]
    assert set(keys) == set(CFR_173)
    assert sorted(_value(r) for r in CFR_173_ROWS if _key(r)[0] == "trichloroethylene" and _key(r)[3] == "coffee") == sorted(TCE_COFFEE)
    # 1,3-butylene glycol has a carrier and an extraction row; every other key is one row
    assert len(keys) == len(CFR_173) + 2


def test_us_hexane_oleoresin_limit_is_for_spice_oleoresins_only():
    # 21 CFR 173.270(a): 25 ppm in spice oleoresins; (b) 2.2 % in hops extract; no other purpose
    hexane = [r for r in ROWS if r["jurisdiction"] == "US" and r["substance"] == "hexane"]
    assert {r["purposes"] for r in hexane} == {"spice_oleoresin", "hop_extract"}
    assert not any(_purposes(r) & {"all", "flavouring", "natural_flavouring", "food_ingredient"} for r in hexane)


def test_chlorinated_oleoresin_solvents_share_one_total():
    # 173.230, 173.255(a), 173.290: all chlorinated solvent residues together at most 30 ppm in spice oleoresins
    grouped = {r["substance"] for r in CFR_173_ROWS if r["group"] == "us_173_chlorinated_oleoresin"}
    assert grouped == {"ethylene dichloride", "methylene chloride", "trichloroethylene"}


def test_us_edible_oils_are_allowed_with_their_basis():
    # no CFR section names them: foods, generally recognised as safe through common use
    for use in ("carrier", "extraction"):
        for s in ("sunflower oil", "olive oil", "rapeseed oil", "soybean oil", "corn oil", "medium-chain triglycerides"):
            rows = [r for r in ROWS if r["jurisdiction"] == "US" and r["substance"] == s and r["use"] == use]
            assert [(r["status"], r["purposes"]) for r in rows] == [("GMP", "all")], (s, use)
            assert "common use" in rows[0]["note"] and rows[0]["confidence"] != "checked"


# ----------------------------------------------------------------------------- Reg. (EC) No 1333/2008 Annex III
# Annex III Part 1 footnote a (as substituted by Reg. (EU) No 1130/2011), all-sources limits:
# https://legislation.gov.uk/eur/2008/1333/annex/III/part/1/2011-12-02/data.xht?view=snippet&wrap=true
# 3 000 mg/kg from all sources, E 1520 alone or with E 1505, E 1517, E 1518; in beverages (not cream liqueurs)
# E 1520 at most 1 000 mg/l from all sources.
A3 = "Reg. (EC) No 1333/2008 Annex III Part 4"


def test_annex_iii_group_limit_names_exactly_the_four_carriers():
    rows = [r for r in ROWS if r["rule"] == A3 and r["unit"] == "mg/kg" and r["limit"] == "3000"]
    assert {r["ins"] for r in rows} == {"E 1505", "E 1517", "E 1518", "E 1520"}
    assert {r["group"] for r in rows} == {"eu_1333_annex3_carriers"}


def test_annex_iii_beverage_limit_names_propylene_glycol_only():
    rows = [r for r in ROWS if r["rule"] == A3 and r["unit"] == "mg/L" and r["limit"] == "1000"]
    assert [(r["ins"], r["food_category"], r["group"]) for r in rows] == [("E 1520", "beverages", "")]
    # cream liqueurs are outside the beverage limit: only the group limit there
    cream = [r for r in ROWS if r["rule"] == A3 and r["food_category"] == "cream liqueurs"]
    assert [(r["ins"], r["limit"], r["unit"]) for r in cream] == [("E 1520", "3000", "mg/kg")]


# ----------------------------------------------------------------------------- the purposes column


def test_purposes_are_known_ids_and_empty_where_nothing_is_authorised():
    for r in ROWS:
        got = _purposes(r)
        assert got <= PURPOSES | {"all"}, r
        assert "all" not in got or got == {"all"}, r
        if r["jurisdiction"] == "ICH" or r["status"] in ("not permitted", "revoked"):
            assert not got, r
        else:
            assert got, r


def test_checked_rows_carry_the_date_read():
    for r in ROWS:
        if r["checked_on"]:
            assert r["confidence"] == "checked" and r["checked_on"] == "2026-12-05", r


# ----------------------------------------------------------------------------- ICH Q3C, read from published copies
# Option 1 of the guideline (USP <467>, copy at https://www.pharmacalculation.com/2022/12/limit-of-residual-solvents.html,
# source ich_q3c_option1_usp467): concentration limit (ppm) = 1000 x PDE (mg/day) / 10 g/day; Class 3 general 5000 ppm.
def _option1(pde_mg_day: float) -> float:
    return 1000.0 * pde_mg_day / 10.0


#: substance -> (class status, limit ppm, the source id of the text it was read from)
ICH_READ = {
    # Class 3 list of USP <467> on a laboratory's page (http://www.caslab.com/Class-3-Residual-Solvents/)
    **{s: ("class 3", 5000.0, "ich_q3c_class3_list_lab") for s in (
        "acetic acid", "heptane", "1-butanol", "1-propanol", "butyl acetate", "methyl acetate", "pentane")},
    # Class 2 list with limits (https://pharmaspecialists.com/2022/01/impurities-guideline-for-residual-solvent.html):
    # "Chloroform (60 ppm)"
    "chloroform": ("class 2", 60.0, "ich_q3c_class2_list_edu"),
    # Q3C(R6) as reported by a GMP publisher: methylisobutylketone Class 2, PDE 45 mg/day
    "methyl isobutyl ketone": ("class 2", _option1(45), "ich_q3c_r6_mibk_gmp"),
    # Q3C(R8) as reported by a GMP publisher: CPME Class 2 15 mg/day, tert-butanol Class 2 35 mg/day,
    # 2-methyltetrahydrofuran Class 3 50 mg/day
    "cyclopentyl methyl ether": ("class 2", _option1(15), "ich_q3c_r8_pdes_gmp"),
    "tert-butyl alcohol": ("class 2", _option1(35), "ich_q3c_r8_pdes_gmp"),
    "2-methyltetrahydrofuran": ("class 3", _option1(50), "ich_q3c_r8_pdes_gmp"),
}


def test_ich_rows_read_from_published_copies_say_what_the_copies_say():
    ich = {r["substance"]: r for r in ROWS if r["jurisdiction"] == "ICH" and r["rule"].startswith("ICH Q3C (R8/R9)")}
    for substance, (status, limit, source) in ICH_READ.items():
        r = ich[substance]
        assert (r["status"], _limit(r["limit"]), r["unit"], r["applies_to"]) == (status, limit, "ppm", "extract residue")
        assert source in r["source"].split(";") and "reg_ich_q3c_memory" not in r["source"], substance
        # read from secondary copies: shown with the flag to verify against the guideline
        assert r["confidence"] == "secondary, verify" and r["checked_on"] == "", substance
    # the Class 3 general limit is the Option 1 figure for the Class 3 PDE of 50 mg/day
    assert _option1(50) == 5000.0
